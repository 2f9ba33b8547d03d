//! Preparation of a chart, before any drawing: shapes validated, skipped
//! points counted in notes, axis ranges chosen, lines split at skipped
//! points and clipped, markers and bands kept inside the ranges.

use plotters::style::RGBColor;

use super::axis::{Axis, axis_range, inside, plottable};
use super::clip::{band_polygons, clip_polyline};
use super::{PALETTE, PlotSpec, Scale, SeriesStyle};
use crate::error::PlotError;

#[derive(Debug)]
pub(super) struct PreparedSeries {
    pub(super) colour: RGBColor,
    /// Polylines in data units, already clipped.
    pub(super) lines: Vec<Vec<(f64, f64)>>,
    /// Markers inside the range.
    pub(super) markers: Vec<(f64, f64)>,
    /// Band polygons in data units, clamped to the range.
    pub(super) bands: Vec<Vec<(f64, f64)>>,
}

#[derive(Debug)]
pub(super) struct Prepared {
    pub(super) x: Axis,
    pub(super) y: Axis,
    pub(super) series: Vec<PreparedSeries>,
    pub(super) notes: Vec<String>,
}

pub(super) fn prepare(spec: &PlotSpec) -> Result<Prepared, PlotError> {
    let mut notes = Vec::new();
    // Validate shapes and count skipped points.
    for s in &spec.series {
        if s.x.len() != s.y.len() {
            return Err(PlotError::LengthMismatch {
                series: s.label.clone(),
                x_len: s.x.len(),
                y_len: s.y.len(),
            });
        }
        if let Some((lo, hi)) = &s.band
            && (lo.len() != s.x.len() || hi.len() != s.x.len())
        {
            return Err(PlotError::BandLengthMismatch {
                series: s.label.clone(),
                x_len: s.x.len(),
                lower_len: lo.len(),
                upper_len: hi.len(),
            });
        }
        let n_nonfinite =
            s.x.iter()
                .zip(&s.y)
                .filter(|(x, y)| !x.is_finite() || !y.is_finite())
                .count();
        if n_nonfinite > 0 {
            notes.push(format!(
                "{}: {} non-finite point{} not shown",
                s.label,
                n_nonfinite,
                plural(n_nonfinite)
            ));
        }
        for (axis, scale, values) in [("x", spec.x_scale, &s.x), ("y", spec.y_scale, &s.y)] {
            if scale == Scale::Log {
                let n = values
                    .iter()
                    .filter(|v| v.is_finite() && **v <= 0.0)
                    .count();
                if n > 0 {
                    notes.push(format!(
                        "{}: {} point{} with {} ≤ 0 not shown on the log axis",
                        s.label,
                        n,
                        plural(n),
                        axis
                    ));
                }
            }
        }
    }
    let x = axis_range("x", spec.x_scale, spec.x_range, spec, |s| {
        let mut v: Vec<f64> = s.x.clone();
        if s.band.is_some() {
            v.extend(&s.x);
        }
        v
    })?;
    let y = axis_range("y", spec.y_scale, spec.y_range, spec, |s| {
        let mut v = s.y.clone();
        if let Some((lo, hi)) = &s.band {
            v.extend(lo);
            v.extend(hi);
        }
        v
    })?;
    if spec.series.iter().all(|s| {
        !s.x.iter()
            .zip(&s.y)
            .any(|(a, b)| plottable(*a, x.scale) && plottable(*b, y.scale))
    }) {
        notes.push("no plottable data".to_string());
    }

    let series = spec
        .series
        .iter()
        .enumerate()
        .map(|(k, s)| {
            let (r, g, b) = s.colour.unwrap_or(PALETTE[k % PALETTE.len()]);
            let ok = |i: usize| plottable(s.x[i], x.scale) && plottable(s.y[i], y.scale);
            // Runs of consecutive plottable points.
            let mut runs: Vec<Vec<usize>> = Vec::new();
            let mut cur = Vec::new();
            for i in 0..s.x.len() {
                if ok(i) {
                    cur.push(i);
                } else if !cur.is_empty() {
                    runs.push(std::mem::take(&mut cur));
                }
            }
            if !cur.is_empty() {
                runs.push(cur);
            }
            let mut lines = Vec::new();
            if matches!(
                s.style,
                SeriesStyle::Line
                    | SeriesStyle::Dashed
                    | SeriesStyle::LineMarkers
                    | SeriesStyle::DashedMarkers
            ) {
                for run in &runs {
                    let pts: Vec<(f64, f64)> = run.iter().map(|&i| (s.x[i], s.y[i])).collect();
                    lines.extend(clip_polyline(&pts, x, y));
                }
            }
            let markers = if matches!(
                s.style,
                SeriesStyle::Markers | SeriesStyle::LineMarkers | SeriesStyle::DashedMarkers
            ) {
                runs.iter()
                    .flatten()
                    .map(|&i| (s.x[i], s.y[i]))
                    .filter(|&(a, b)| inside(a, x) && inside(b, y))
                    .collect()
            } else {
                Vec::new()
            };
            let bands = match &s.band {
                Some((lo, hi)) => band_polygons(&s.x, lo, hi, x, y),
                None => Vec::new(),
            };
            PreparedSeries {
                colour: RGBColor(r, g, b),
                lines,
                markers,
                bands,
            }
        })
        .collect();
    Ok(Prepared {
        x,
        y,
        series,
        notes,
    })
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}
