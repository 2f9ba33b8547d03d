//! Axis ranges: a fixed range checked, or one spanning the plottable data
//! (linear: padded by 5 %; log: widened to whole decades), and the map
//! between data values and axis space.

use super::{PlotSpec, Scale, Series};
use crate::error::PlotError;

/// One axis after range selection: the scale and the range in data units.
#[derive(Clone, Copy, Debug)]
pub(super) struct Axis {
    pub(super) scale: Scale,
    pub(super) min: f64,
    pub(super) max: f64,
}

impl Axis {
    /// Data value to axis space (identity or log10).
    pub(super) fn value_to_axis(self, v: f64) -> f64 {
        match self.scale {
            Scale::Linear => v,
            Scale::Log => v.log10(),
        }
    }

    /// Axis space back to data value.
    pub(super) fn axis_to_value(self, u: f64) -> f64 {
        match self.scale {
            Scale::Linear => u,
            Scale::Log => 10f64.powf(u),
        }
    }

    pub(super) fn lo(self) -> f64 {
        self.value_to_axis(self.min)
    }

    pub(super) fn hi(self) -> f64 {
        self.value_to_axis(self.max)
    }
}

pub(super) fn plottable(v: f64, scale: Scale) -> bool {
    v.is_finite() && (scale == Scale::Linear || v > 0.0)
}

pub(super) fn inside(v: f64, axis: Axis) -> bool {
    let (lo, hi) = (axis.min.min(axis.max), axis.min.max(axis.max));
    lo <= v && v <= hi
}

/// The range of one axis: the fixed one (validated) or one spanning the
/// plottable values.
pub(super) fn axis_range(
    name: &'static str,
    scale: Scale,
    fixed: Option<(f64, f64)>,
    spec: &PlotSpec,
    values: impl Fn(&Series) -> Vec<f64>,
) -> Result<Axis, PlotError> {
    if let Some((min, max)) = fixed {
        let bad = |reason| PlotError::InvalidRange {
            axis: name,
            min,
            max,
            reason,
        };
        if !(min.is_finite() && max.is_finite()) {
            return Err(bad("bounds must be finite"));
        }
        if min >= max {
            return Err(bad("min must be below max"));
        }
        if scale == Scale::Log && min <= 0.0 {
            return Err(bad("a log axis needs min > 0"));
        }
        return Ok(Axis { scale, min, max });
    }
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for s in &spec.series {
        for v in values(s) {
            if plottable(v, scale) {
                lo = lo.min(v);
                hi = hi.max(v);
            }
        }
    }
    let (min, max) = match scale {
        Scale::Linear => {
            if !lo.is_finite() {
                (0.0, 1.0)
            } else if lo == hi {
                let w = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
                (lo - w, hi + w)
            } else {
                let pad = 0.05 * (hi - lo);
                (lo - pad, hi + pad)
            }
        }
        Scale::Log => {
            if !lo.is_finite() {
                (1.0, 10.0)
            } else {
                let a = lo.log10().floor();
                let mut b = hi.log10().ceil();
                if b <= a {
                    b = a + 1.0;
                }
                (10f64.powf(a), 10f64.powf(b))
            }
        }
    };
    Ok(Axis { scale, min, max })
}
