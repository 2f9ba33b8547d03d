//! Clipping to the plotting rectangle: polylines cut at its edges, band
//! polygons clamped to it.

use super::axis::{Axis, plottable};

/// Clips a polyline (data units, all points plottable) to the rectangle of
/// the axes, in axis space (Liang & Barsky 1984, ACM Trans. Graph. 3:1–22).
pub(super) fn clip_polyline(pts: &[(f64, f64)], x: Axis, y: Axis) -> Vec<Vec<(f64, f64)>> {
    let (xl, xh) = (x.lo().min(x.hi()), x.lo().max(x.hi()));
    let (yl, yh) = (y.lo().min(y.hi()), y.lo().max(y.hi()));
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    let to_data = |(u, v): (f64, f64)| (x.axis_to_value(u), y.axis_to_value(v));
    if pts.len() == 1 {
        let (u, v) = (x.value_to_axis(pts[0].0), y.value_to_axis(pts[0].1));
        if (xl..=xh).contains(&u) && (yl..=yh).contains(&v) {
            out.push(vec![pts[0]]);
        }
        return out;
    }
    for w in pts.windows(2) {
        let a = (x.value_to_axis(w[0].0), y.value_to_axis(w[0].1));
        let b = (x.value_to_axis(w[1].0), y.value_to_axis(w[1].1));
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let mut t0 = 0.0f64;
        let mut t1 = 1.0f64;
        let mut visible = true;
        for (p, q) in [
            (-dx, a.0 - xl),
            (dx, xh - a.0),
            (-dy, a.1 - yl),
            (dy, yh - a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    visible = false;
                    break;
                }
            } else {
                let r = q / p;
                if p < 0.0 {
                    t0 = t0.max(r);
                } else {
                    t1 = t1.min(r);
                }
            }
        }
        if !visible || t0 > t1 {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            continue;
        }
        let start = if t0 == 0.0 {
            w[0]
        } else {
            to_data((a.0 + t0 * dx, a.1 + t0 * dy))
        };
        let end = if t1 == 1.0 {
            w[1]
        } else {
            to_data((a.0 + t1 * dx, a.1 + t1 * dy))
        };
        if cur.is_empty() || t0 > 0.0 {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            cur.push(start);
        }
        cur.push(end);
        if t1 < 1.0 {
            out.push(std::mem::take(&mut cur));
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// Band polygons over runs of points where x, lower and upper are all
/// plottable, clamped to the axis ranges.
pub(super) fn band_polygons(
    xs: &[f64],
    lo: &[f64],
    hi: &[f64],
    x: Axis,
    y: Axis,
) -> Vec<Vec<(f64, f64)>> {
    let clamp = |v: f64, a: Axis| v.clamp(a.min.min(a.max), a.min.max(a.max));
    let ok = |i: usize| {
        plottable(xs[i], x.scale) && plottable(lo[i], y.scale) && plottable(hi[i], y.scale)
    };
    let mut out = Vec::new();
    let mut i = 0;
    while i < xs.len() {
        if !ok(i) {
            i += 1;
            continue;
        }
        let start = i;
        while i < xs.len() && ok(i) {
            i += 1;
        }
        if i - start >= 2 {
            let mut poly: Vec<(f64, f64)> = (start..i)
                .map(|k| (clamp(xs[k], x), clamp(hi[k], y)))
                .collect();
            poly.extend((start..i).rev().map(|k| (clamp(xs[k], x), clamp(lo[k], y))));
            out.push(poly);
        }
    }
    out
}
