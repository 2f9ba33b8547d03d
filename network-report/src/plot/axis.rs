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

/// Lowest and highest decade of an automatic log axis: 10^-307 and 10^308
/// are the extreme powers of ten that are normal finite doubles.
const MIN_DECADE: f64 = -307.0;
const MAX_DECADE: f64 = 308.0;
/// Most decades a log axis spans: max/min must stay a finite double
/// (below 1.8 × 10^308) for the tick generation to be bounded.
pub(super) const MAX_LOG_SPAN: f64 = 300.0;

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
        if scale == Scale::Log && (max / min).log10() > MAX_LOG_SPAN {
            return Err(bad("a log axis spans at most 300 decades"));
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
                // Whole decades, kept inside the normal finite doubles
                // (10^-307 … 10^308): 10^309 is infinite and an infinite
                // bound made the tick generation run without end.
                let mut a = lo.log10().floor().clamp(MIN_DECADE, MAX_DECADE - 1.0);
                let mut b = hi.log10().ceil().clamp(MIN_DECADE + 1.0, MAX_DECADE);
                if b <= a {
                    b = a + 1.0;
                }
                // The tick generator divides max by min: more than
                // MAX_LOG_SPAN decades would overflow and never end. Keep
                // the top decades (the smaller values are clipped, with a
                // note).
                if b - a > MAX_LOG_SPAN {
                    a = b - MAX_LOG_SPAN;
                }
                (10f64.powf(a), 10f64.powf(b))
            }
        }
    };
    Ok(Axis { scale, min, max })
}
