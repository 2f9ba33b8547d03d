//! Where the legend goes: the box of the plotting area with the fewest
//! drawn points.

use plotters::prelude::SeriesLabelPosition;

use super::axis::Axis;
use super::prepare::Prepared;

/// The place of the legend in the plotting area: the one of six boxes
/// (35 % of the width, 30 % of the height: the four corners, then the
/// middle of the top and of the bottom edge) holding the fewest drawn
/// points; ties go to upper right, upper left, lower right, lower left,
/// upper middle, lower middle.
pub(super) fn legend_corner(p: &Prepared) -> SeriesLabelPosition {
    let frac = |v: f64, a: Axis| (a.value_to_axis(v) - a.lo()) / (a.hi() - a.lo());
    let mut counts = [0usize; 6];
    let mut points: Vec<(f64, f64)> = Vec::new();
    for s in &p.series {
        points.extend(s.markers.iter().copied());
        points.extend(s.bands.iter().flatten().copied());
        // Lines count by 8 samples per segment, in axis space, so a long
        // segment crossing a corner counts there.
        for line in &s.lines {
            points.extend(line.first().copied());
            for w in line.windows(2) {
                let (a, b) = (w[0], w[1]);
                for k in 1..=8 {
                    let t = k as f64 / 8.0;
                    let u = p.x.value_to_axis(a.0)
                        + t * (p.x.value_to_axis(b.0) - p.x.value_to_axis(a.0));
                    let v = p.y.value_to_axis(a.1)
                        + t * (p.y.value_to_axis(b.1) - p.y.value_to_axis(a.1));
                    points.push((p.x.axis_to_value(u), p.y.axis_to_value(v)));
                }
            }
        }
    }
    for (x, y) in points {
        let (u, v) = (frac(x, p.x), frac(y, p.y));
        let (right, left, top, bottom) = (u >= 0.65, u <= 0.35, v >= 0.7, v <= 0.3);
        let middle = (0.325..=0.675).contains(&u);
        for (k, inside) in [
            right && top,
            left && top,
            right && bottom,
            left && bottom,
            middle && top,
            middle && bottom,
        ]
        .into_iter()
        .enumerate()
        {
            if inside {
                counts[k] += 1;
            }
        }
    }
    let best = (0..6).min_by_key(|&k| (counts[k], k)).unwrap_or(0);
    match best {
        0 => SeriesLabelPosition::UpperRight,
        1 => SeriesLabelPosition::UpperLeft,
        2 => SeriesLabelPosition::LowerRight,
        3 => SeriesLabelPosition::LowerLeft,
        4 => SeriesLabelPosition::UpperMiddle,
        _ => SeriesLabelPosition::LowerMiddle,
    }
}
