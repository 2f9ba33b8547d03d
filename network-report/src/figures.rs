//! The standard figures of a study run, as [`PlotSpec`]s ready for
//! [`crate::plot::render_svg`] or [`crate::plot::render_png`].
//!
//! | stem | content | axes |
//! |---|---|---|
//! | `pc-sw` | capillary pressure of every process | Sw linear, Pc (kPa) linear |
//! | `pc-sw-zoom` | the same, Pc axis zoomed to the capillary plateaus (see [`plateau_range`]) | Sw linear, Pc (kPa) linear |
//! | `kr-sw` | `k_rw` and `k_rn` of every process at the computed points | linear |
//! | `kr-sw-log` | the same | Sw linear, kr log |
//! | `fw-sw` | fractional flow of water of the first imbibition with kr, the Welge tangent and the shock front | linear |
//! | `ri-sw` | resistivity index of every process, Archie line | log–log |
//! | `ganglion-sizes` | trapped ganglia per pore-count bin | pores log, count linear |
//! | `sw-profile` | water saturation of each slab along the flow axis, up to nine steps per process | position (mm) linear, Sw linear |
//!
//! A figure without data is left out: the kr figures when no process has
//! computed relative permeabilities, `fw-sw` when no waterflood was
//! computed, `ri-sw` when no point has a finite
//! resistivity index, `ganglion-sizes` when no imbibition ran or nothing
//! was trapped, `sw-profile` when the run recorded no profiles.
//!
//! Each process keeps one colour of [`PALETTE`] across the figures
//! (process `k` takes colour `k`). In the kr figures the water curve is a
//! solid line with markers and the non-aqueous curve a dashed line with
//! markers; markers sit only at the points where the flow was solved. The
//! ganglion figure has one unlabelled series and no legend. In the profile
//! figure the steps of a process share its colour, lighter for earlier
//! steps; only the last step of each process is in the legend.

use network_core::run::RunResults;
use network_core::run::end_points::Fitted;
use network_core::run::fractional_flow::{Waterflood, fractional_flow};
use network_core::run::process::ProcessOutcome;
use network_core::study::ProcessKind;

use crate::plot::{PALETTE, PlotSpec, Scale, Series, SeriesStyle};

/// One standard figure of a run.
#[derive(Clone, Debug, PartialEq)]
pub struct Figure {
    /// File stem, e.g. `"pc-sw"` (see the [module docs](self)).
    pub name: &'static str,
    /// Short title (the chart carries it too).
    pub title: String,
    /// One or two sentences for a report saying what is drawn.
    pub caption: String,
    /// What to draw.
    pub spec: PlotSpec,
}

/// Water-saturation axis label.
pub const SW_LABEL: &str = "Water saturation S_{w} (fraction of pore volume)";

/// The standard figures of `results` (see the [module docs](self)), in the
/// order of the table there.
pub fn run_figures(results: &RunResults) -> Vec<Figure> {
    let label = &results.study.fluids.nonaqueous_label;
    let mut out = Vec::new();
    if !results.outcomes.is_empty() {
        let full = pc_figure(results);
        let zoom = plateau_zoom(&full, "pc-sw-zoom");
        out.push(full);
        out.extend(zoom);
    }
    let has_kr = results
        .outcomes
        .iter()
        .any(|o| o.points.iter().any(|p| p.flow.is_some()));
    if has_kr {
        out.push(kr_figure(results, label, Scale::Linear));
        out.push(kr_figure(results, label, Scale::Log));
    }
    if let Some(Fitted::Ok(w)) = &results.waterflood {
        out.push(fw_figure(results, w));
    }
    let has_ri = results.outcomes.iter().any(|o| {
        o.points
            .iter()
            .any(|p| p.flow.is_some_and(|f| f.ri.is_finite() && f.ri > 0.0))
    });
    if has_ri {
        out.push(ri_figure(results));
    }
    if let Some(stats) = &results.ganglion_stats
        && stats.pores_histogram.iter().any(|&c| c > 0)
    {
        out.push(ganglion_figure(&stats.pores_histogram, label));
    }
    if let Some(f) = profile_figure(results) {
        out.push(f);
    }
    out
}

/// The steps of a process drawn in the profile figure: nine evenly spaced
/// point indices from the first to the last (all when there are fewer).
pub fn profile_steps(n_points: usize) -> Vec<usize> {
    const LINES: usize = 9;
    if n_points <= LINES {
        return (0..n_points).collect();
    }
    let mut v: Vec<usize> = (0..LINES)
        .map(|k| ((k * (n_points - 1)) as f64 / (LINES - 1) as f64).round() as usize)
        .collect();
    v.dedup();
    v
}

/// `colour` mixed with white: `t = 1` the colour itself, `t = 0` white.
fn tint((r, g, b): (u8, u8, u8), t: f64) -> (u8, u8, u8) {
    let mix = |c: u8| (255.0 - (255.0 - c as f64) * t).round().clamp(0.0, 255.0) as u8;
    (mix(r), mix(g), mix(b))
}

fn profile_figure(results: &RunResults) -> Option<Figure> {
    let layout = results.profile_layout.as_ref()?;
    let kinds = kinds(results);
    let edges = &layout.slab_edges_m;
    if edges[edges.len() - 1].partial_cmp(&edges[0]) != Some(std::cmp::Ordering::Greater) {
        return None;
    }
    let centres_mm: Vec<f64> = edges
        .windows(2)
        .map(|w| 0.5 * (w[0] + w[1]) * 1.0e3)
        .collect();
    let mut series = Vec::new();
    for (i, o) in results.outcomes.iter().enumerate() {
        let Some(profiles) = results.profiles.get(i) else {
            continue;
        };
        let steps = profile_steps(profiles.len().min(o.points.len()));
        for (j, &k) in steps.iter().enumerate() {
            let last = j + 1 == steps.len();
            let t = 0.25 + 0.75 * (j + 1) as f64 / steps.len() as f64;
            let label = if last {
                format!(
                    "{}, end: S_{{w}} = {:.3}",
                    process_label(&kinds, i),
                    o.points[k].saturation.sw
                )
            } else {
                String::new()
            };
            let style = if last {
                SeriesStyle::LineMarkers
            } else {
                SeriesStyle::Line
            };
            series.push(
                Series::line(label, centres_mm.clone(), profiles[k].slab_sw.clone())
                    .with_style(style)
                    .with_colour(tint(process_colour(i), t)),
            );
        }
    }
    if series.is_empty() {
        return None;
    }
    let title = "Saturation profile along the flow axis".to_string();
    let axis = layout.axis.as_str();
    let window = match layout.window_m() {
        Some([a, b]) => format!(
            " The interior window runs from {:.3} to {:.3} mm.",
            a * 1.0e3,
            b * 1.0e3
        ),
        None => String::new(),
    };
    Some(Figure {
        name: "sw-profile",
        title: title.clone(),
        caption: format!(
            "Water saturation of each of {} equal slabs along the flow axis ({axis}, inlet              on the left; drawn at slab centres) at up to nine steps of each process, one              colour per process, lighter for earlier steps; saturations that differ near              the faces from the rest of the sample are end effects.{window}",
            layout.slabs()
        ),
        spec: PlotSpec {
            title,
            x_label: format!("Position along the flow axis {axis} (mm)"),
            y_label: SW_LABEL.into(),
            x_range: Some((edges[0] * 1.0e3, edges[edges.len() - 1] * 1.0e3)),
            y_range: Some((0.0, 1.0)),
            series,
            ..PlotSpec::default()
        },
    })
}

/// A process's name for legends and tables: its 1-based number and kind,
/// `"1 primary drainage"`, `"2 imbibition"`, `"3 secondary drainage"`;
/// later ones count on (`"5 drainage no. 3"`).
pub fn process_label(outcomes_kinds: &[ProcessKind], index: usize) -> String {
    let kind = outcomes_kinds[index];
    let nth = outcomes_kinds[..=index]
        .iter()
        .filter(|&&k| k == kind)
        .count();
    let name = match (kind, nth) {
        (ProcessKind::Drainage, 1) => "primary drainage".to_string(),
        (ProcessKind::Drainage, 2) => "secondary drainage".to_string(),
        (ProcessKind::Imbibition, 1) => "imbibition".to_string(),
        (ProcessKind::Imbibition, 2) => "second imbibition".to_string(),
        (k, n) => format!("{} no. {n}", k.as_str()),
    };
    format!("{} {name}", index + 1)
}

/// The colour of process `index` in every figure.
pub fn process_colour(index: usize) -> (u8, u8, u8) {
    PALETTE[index % PALETTE.len()]
}

fn kinds(results: &RunResults) -> Vec<ProcessKind> {
    results.outcomes.iter().map(|o| o.kind).collect()
}

fn pc_figure(results: &RunResults) -> Figure {
    let kinds = kinds(results);
    let series = results
        .outcomes
        .iter()
        .enumerate()
        .map(|(i, o)| {
            let (sw, pc): (Vec<f64>, Vec<f64>) = o
                .points
                .iter()
                .map(|p| (p.saturation.sw, p.pc_pa / 1.0e3))
                .unzip();
            Series::line(process_label(&kinds, i), sw, pc).with_colour(process_colour(i))
        })
        .collect();
    let title = "Capillary pressure".to_string();
    Figure {
        name: "pc-sw",
        title: title.clone(),
        caption: "Capillary pressure P_{c} = P_{n} − P_{w} against water saturation at every \
                  recorded point of each process; negative P_{c} is forced displacement of the \
                  non-aqueous phase."
            .into(),
        spec: PlotSpec {
            title,
            x_label: SW_LABEL.into(),
            y_label: "Capillary pressure P_{c} = P_{n} − P_{w} (kPa)".into(),
            x_range: Some((0.0, 1.0)),
            series,
            ..PlotSpec::default()
        },
    }
}

/// Fraction of a process's saturation span cut at each end when looking
/// for its plateau (the steep ends are left out).
const PLATEAU_TRIM: f64 = 0.03;

/// The Pc range (kPa) of the capillary plateaus of `series` (Sw, Pc):
/// the 2nd to 98th percentile of the Pc values at the points of each
/// series whose Sw lies inside its own span with [`PLATEAU_TRIM`] of the
/// span cut at each end (the steep ends of drainage and forced
/// imbibition are left out), widened to include Pc = 0 and padded by 15 %.
/// `None` when no point qualifies or when the plateaus fill more than a
/// third of the full range `full` (the full figure shows them already).
pub fn plateau_range(series: &[Series], full: (f64, f64)) -> Option<(f64, f64)> {
    let mut pc: Vec<f64> = Vec::new();
    for s in series {
        let (lo, hi) =
            s.x.iter()
                .filter(|v| v.is_finite())
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                    (a.min(v), b.max(v))
                });
        if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
            continue;
        }
        let cut = PLATEAU_TRIM * (hi - lo);
        pc.extend(
            s.x.iter()
                .zip(&s.y)
                .filter(|(x, y)| **x > lo + cut && **x < hi - cut && y.is_finite())
                .map(|(_, y)| *y),
        );
    }
    if pc.is_empty() {
        return None;
    }
    pc.sort_by(f64::total_cmp);
    let at = |q: f64| pc[((pc.len() - 1) as f64 * q).round() as usize];
    let (lo, hi) = (at(0.02).min(0.0), at(0.98).max(0.0));
    let pad = 0.15 * (hi - lo).max(1e-9);
    let (lo, hi) = (if lo < 0.0 { lo - pad } else { lo }, hi + pad);
    let full_span = full.1 - full.0;
    if full_span.is_nan() || full_span <= 0.0 || (hi - lo) > full_span / 3.0 {
        return None;
    }
    Some((lo, hi))
}

/// A Pc figure again, named `name`, with its Pc axis zoomed to the
/// plateaus, when they are small against the full range (see
/// [`plateau_range`]).
pub(crate) fn plateau_zoom(full: &Figure, name: &'static str) -> Option<Figure> {
    let (lo, hi) = full
        .spec
        .series
        .iter()
        .flat_map(|s| s.y.iter().copied())
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    let range = plateau_range(&full.spec.series, (lo, hi))?;
    let title = format!("{}, plateaus", full.title);
    let mut spec = full.spec.clone();
    spec.title = title.clone();
    spec.y_range = Some(range);
    Some(Figure {
        name,
        title,
        caption: format!(
            "{} With the P_{{c}} axis zoomed to {:.1} … {:.1} kPa, where the displacements \
             happen; the steep ends run off the axis (full range {:.1} … {:.1} kPa in {}).",
            full.caption, range.0, range.1, lo, hi, full.name
        ),
        spec,
    })
}

/// `(sw, krw, krn, ri)` at the points where the flow was solved, in
/// process order.
fn flow_points(o: &ProcessOutcome) -> (Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut cols = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for p in &o.points {
        if let Some(f) = p.flow {
            cols.0.push(p.saturation.sw);
            cols.1.push(f.krw);
            cols.2.push(f.krn);
            cols.3.push(f.ri);
        }
    }
    cols
}

fn kr_figure(results: &RunResults, label: &str, y_scale: Scale) -> Figure {
    let kinds = kinds(results);
    let mut series = Vec::new();
    for (i, o) in results.outcomes.iter().enumerate() {
        let (sw, krw, krn, _) = flow_points(o);
        if sw.is_empty() {
            continue;
        }
        let name = process_label(&kinds, i);
        let c = process_colour(i);
        series.push(
            Series::line(format!("k_{{rw}}, {name}"), sw.clone(), krw)
                .with_style(SeriesStyle::LineMarkers)
                .with_colour(c),
        );
        series.push(
            Series::line(format!("k_{{r,{label}}}, {name}"), sw, krn)
                .with_style(SeriesStyle::DashedMarkers)
                .with_colour(c),
        );
    }
    let (name, title, y_range) = match y_scale {
        Scale::Linear => ("kr-sw", "Relative permeability", Some((0.0, 1.0))),
        Scale::Log => ("kr-sw-log", "Relative permeability (log scale)", None),
    };
    let caption = format!(
        "Relative permeability of water (solid lines) and {label} (dashed lines) at the \
         points where the flow was solved (markers), one colour per process{}.",
        match y_scale {
            Scale::Linear => "",
            Scale::Log => "; zero values cannot be shown on the log axis",
        }
    );
    Figure {
        name,
        title: title.into(),
        caption,
        spec: PlotSpec {
            title: title.into(),
            x_label: SW_LABEL.into(),
            y_label: "Relative permeability k_{r} (fraction)".into(),
            y_scale,
            x_range: Some((0.0, 1.0)),
            y_range,
            series,
            ..PlotSpec::default()
        },
    }
}

/// Fractional flow of water with the Welge tangent (Welge 1952, Trans.
/// AIME 195:91): the interpolated curve, the simulated points, the tangent
/// from the initial state through the shock front up to `f_w = 1`, and the
/// shock front itself.
fn fw_figure(results: &RunResults, w: &Waterflood) -> Figure {
    let kinds = kinds(results);
    let i = w.process - 1;
    let name = process_label(&kinds, i);
    let c = process_colour(i);
    let (sw, krw, krn, _) = flow_points(&results.outcomes[i]);
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    for k in 0..sw.len() {
        if let Some(f) = fractional_flow(
            krw[k],
            krn[k],
            w.water_viscosity_pa_s,
            w.nonaqueous_viscosity_pa_s,
        ) {
            xs.push(sw[k]);
            ys.push(f);
        }
    }
    let (curve_x, curve_y): (Vec<f64>, Vec<f64>) = w.fw_curve.iter().map(|p| (p[0], p[1])).unzip();
    let f0 = curve_y.first().copied().unwrap_or(0.0);
    let slope = 1.0 / w.breakthrough_pv;
    let s_end = (w.initial_sw + (1.0 - f0) / slope).min(1.0);
    let black = PALETTE[PALETTE.len() - 1];
    let series = vec![
        Series::line(format!("f_{{w}}, {name} (interpolated)"), curve_x, curve_y).with_colour(c),
        Series::line("f_{w} at the simulated points", xs, ys)
            .with_style(SeriesStyle::Markers)
            .with_colour(c),
        Series::line(
            format!("Welge tangent, breakthrough at {:.3} PV", w.breakthrough_pv),
            vec![w.initial_sw, s_end],
            vec![f0, f0 + slope * (s_end - w.initial_sw)],
        )
        .with_style(SeriesStyle::Dashed)
        .with_colour(black),
        Series::line(
            format!("shock front S_{{w}} = {:.3}", w.shock_front_sw),
            vec![w.shock_front_sw],
            vec![w.shock_front_fw],
        )
        .with_style(SeriesStyle::Markers)
        .with_colour(black),
    ];
    let title = "Fractional flow of water".to_string();
    Figure {
        name: "fw-sw",
        title: title.clone(),
        caption: format!(
            "Fractional flow of water fw = 1/(1 + krn·μw/(krw·μn)) of process {name} with \
             μw = {} mPa·s and μn = {} mPa·s (capillary pressure and gravity neglected): the \
             monotone interpolation of the relative permeabilities (line), the simulated \
             points (markers), and the Welge tangent from the initial state, which touches \
             the curve at the shock front of a Buckley–Leverett waterflood.",
            w.water_viscosity_pa_s * 1.0e3,
            w.nonaqueous_viscosity_pa_s * 1.0e3
        ),
        spec: PlotSpec {
            title,
            x_label: SW_LABEL.into(),
            y_label: "Fractional flow of water f_{w} (fraction)".into(),
            x_range: Some((0.0, 1.0)),
            y_range: Some((0.0, 1.0)),
            series,
            ..PlotSpec::default()
        },
    }
}

fn ri_figure(results: &RunResults) -> Figure {
    let kinds = kinds(results);
    let mut series = Vec::new();
    let mut sw_min = f64::INFINITY;
    for (i, o) in results.outcomes.iter().enumerate() {
        let (sw, _, _, ri) = flow_points(o);
        if sw.is_empty() {
            continue;
        }
        for (&s, &r) in sw.iter().zip(&ri) {
            if s > 0.0 && r.is_finite() && r > 0.0 {
                sw_min = sw_min.min(s);
            }
        }
        series.push(
            Series::line(process_label(&kinds, i), sw, ri)
                .with_style(SeriesStyle::LineMarkers)
                .with_colour(process_colour(i)),
        );
    }
    if let Some(a) = &results.archie
        && let Fitted::Ok(fit) = &a.saturation_n
        && sw_min.is_finite()
        && sw_min < 1.0
    {
        // RI = b Sw^(−n) (b = 1 unless fitted), sampled evenly in log Sw.
        let n_samples = 41;
        let (lo, hi) = (sw_min.log10(), 0.0);
        let sw: Vec<f64> = (0..n_samples)
            .map(|k| 10f64.powf(lo + (hi - lo) * k as f64 / (n_samples - 1) as f64))
            .collect();
        let ri: Vec<f64> = sw
            .iter()
            .map(|s| fit.prefactor * s.powf(-fit.exponent))
            .collect();
        series.push(
            Series::line(
                format!("Archie fit RI = S_{{w}}^(−n), n = {:.3}", fit.exponent),
                sw,
                ri,
            )
            .with_style(SeriesStyle::Dashed)
            .with_colour(PALETTE[PALETTE.len() - 1]),
        );
    }
    let title = "Resistivity index".to_string();
    Figure {
        name: "ri-sw",
        title: title.clone(),
        caption: "Resistivity index RI = Rt/Ro against water saturation at the points where \
                  the flow was solved, one colour per process; dashed black: Archie's law \
                  fitted to the primary-drainage points, where the fit succeeded. Points \
                  where the water does not span the sample (infinite RI) are not shown."
            .into(),
        spec: PlotSpec {
            title,
            x_label: SW_LABEL.into(),
            y_label: "Resistivity index RI = R_{t}/R_{o} (–)".into(),
            x_scale: Scale::Log,
            y_scale: Scale::Log,
            series,
            ..PlotSpec::default()
        },
    }
}

fn ganglion_figure(histogram: &[usize], label: &str) -> Figure {
    let x: Vec<f64> = (0..histogram.len()).map(|k| 2f64.powi(k as i32)).collect();
    let y: Vec<f64> = histogram.iter().map(|&c| c as f64).collect();
    let title = format!("Trapped {label} ganglia by size");
    let y_max = y.iter().copied().fold(0.0, f64::max);
    // Half a bin of room either side on the log axis.
    let x_max = 2f64.powi(histogram.len() as i32 - 1);
    Figure {
        name: "ganglion-sizes",
        title: title.clone(),
        caption: format!(
            "Number of trapped {label} ganglia at the end of the first imbibition in bins of \
             pore count: bin k holds ganglia of 2^k to 2^(k+1) − 1 pores and is drawn at 2^k; \
             the first bin also holds ganglia held in throats only."
        ),
        spec: PlotSpec {
            title,
            x_label: "Pores per ganglion (bins from 2^k to 2^(k+1) − 1, at 2^k)".into(),
            y_label: "Number of ganglia".into(),
            x_scale: Scale::Log,
            x_range: Some((0.7, x_max * 1.4)),
            y_range: Some((0.0, (y_max * 1.1).max(1.0))),
            // One series: no legend (empty label); the caption says it.
            series: vec![
                Series::line("", x, y)
                    .with_style(SeriesStyle::LineMarkers)
                    .with_colour(PALETTE[0]),
            ],
            ..PlotSpec::default()
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A drainage curve built by hand: Pc = 0 at Sw = 1, a plateau rising
    /// from 5 to 8 kPa between Sw = 0.95 and 0.3, then a steep end to
    /// 100 kPa at Sw = 0.2.
    fn drainage() -> Series {
        let mut sw = vec![1.0, 0.98];
        let mut pc = vec![0.0, 4.0];
        for k in 0..=65 {
            let s = 0.95 - 0.01 * k as f64;
            sw.push(s);
            pc.push(5.0 + 3.0 * (0.95 - s) / 0.65);
        }
        for (s, p) in [(0.25, 20.0), (0.22, 50.0), (0.2, 100.0)] {
            sw.push(s);
            pc.push(p);
        }
        Series::line("d", sw, pc)
    }

    #[test]
    fn plateau_range_spans_the_plateau_and_leaves_the_steep_end_out() {
        // Worked by hand: the span is 0.2–1.0, 3 % of it (0.024) is cut
        // at each end, so Sw = 1.0, 0.98 and 0.22, 0.2 drop out; kept are
        // the 66 plateau values (5 … 8 kPa) and 20 kPa at Sw = 0.25. The
        // 98th percentile of 67 sorted values is index round(66 · 0.98) =
        // 65, the plateau top 8 kPa; the 2nd is 5 kPa, widened to 0. With
        // 15 % padding above: (0, 9.2) kPa, under a third of the 100 kPa
        // axis, so a zoom is made.
        let s = drainage();
        let (lo, hi) = plateau_range(std::slice::from_ref(&s), (0.0, 100.0)).expect("range");
        assert_eq!(lo, 0.0);
        assert!((hi - 9.2).abs() < 1e-12, "{hi}");
    }

    #[test]
    fn no_zoom_when_the_plateau_fills_the_axis() {
        // Pc 0 … 10 kPa along the whole span: the plateau is the full range.
        let sw: Vec<f64> = (0..=20).map(|k| 1.0 - 0.04 * k as f64).collect();
        let pc: Vec<f64> = (0..=20).map(|k| 0.5 * k as f64).collect();
        let s = Series::line("flat", sw, pc);
        assert_eq!(plateau_range(&[s], (0.0, 10.0)), None);
        assert_eq!(plateau_range(&[], (0.0, 10.0)), None);
    }
}
