//! Figures and the HTML report of a sweep: the initial–residual trapping
//! curve with its Land fit per parameter group, and the capillary-pressure,
//! relative-permeability and resistivity curves with their spread over the
//! realisations (mean and 5–95 % band on a common saturation grid).

use std::path::{Path, PathBuf};

use network_core::study::ProcessKind;
use network_core::sweep::{CaseResult, Spread, SweepSummary};

use crate::artifacts::{Writer, put_figure};
use crate::error::ReportError;
use crate::figures::{Figure, SW_LABEL, process_colour};
use crate::html::{self, Html, Page};
use crate::plot::{PlotSpec, Scale, Series, SeriesStyle, render_svg};

/// Points of the common saturation grid of a band.
const GRID: usize = 41;

/// Colour of reference lines (the 1:1 line of the trapping curve).
const REFERENCE_GREY: (u8, u8, u8) = (0xB0, 0xB0, 0xB0);

/// `value ± se` rounded to the precision of the standard error: two
/// significant figures of `se` and `value` to the same decimal place
/// (common practice). Without a usable `se`, three significant figures.
pub(crate) fn value_pm(value: f64, se: f64) -> String {
    if !(se.is_finite() && se > 0.0 && value.is_finite()) {
        return html::number(value, 3);
    }
    let decimals = (1 - se.log10().floor() as i32).clamp(0, 12) as usize;
    let fmt = |v: f64| {
        let t = format!("{v:.decimals$}");
        // No "-0.00" from rounding a tiny negative value.
        if t.trim_start_matches('-')
            .chars()
            .all(|ch| ch == '0' || ch == '.')
        {
            t.trim_start_matches('-').to_string()
        } else {
            t
        }
    };
    format!("{} ± {}", fmt(value), fmt(se))
}

/// The Land fit of a group in one sentence (HTML text, not escaped yet).
fn land_sentence(g: &network_core::sweep::GroupSummary) -> String {
    match (
        g.land_coefficient,
        g.land_coefficient_se,
        g.land_rmse_snr,
        g.land_sni_range,
    ) {
        (Some(c), Some(se), Some(rmse), Some([lo, hi])) => format!(
            "Land (1968) coefficient by least squares in S_{{nr}} over {} cases with S_{{ni}} {}–{}: \
             C = {} (± one standard error), rmse {} in S_{{nr}}.",
            g.land_points,
            html::number(lo, 3),
            html::number(hi, 3),
            value_pm(c, se),
            html::number(rmse, 2)
        ),
        _ => "No Land coefficient.".into(),
    }
}

/// Linear interpolation of `y(x)` at `x0` on a curve sorted by `x`
/// (`None` outside its range).
fn interpolate(xs: &[f64], ys: &[f64], x0: f64) -> Option<f64> {
    if xs.is_empty() || x0 < xs[0] || x0 > xs[xs.len() - 1] {
        return None;
    }
    let k = xs.partition_point(|&x| x < x0);
    if k == 0 {
        return Some(ys[0]);
    }
    if k >= xs.len() {
        return Some(ys[xs.len() - 1]);
    }
    let (x1, x2) = (xs[k - 1], xs[k]);
    if x2 == x1 {
        return Some(ys[k]);
    }
    Some(ys[k - 1] + (x0 - x1) / (x2 - x1) * (ys[k] - ys[k - 1]))
}

/// A band: grid, mean, 5th and 95th percentiles.
struct Band {
    x: Vec<f64>,
    mean: Vec<f64>,
    p05: Vec<f64>,
    p95: Vec<f64>,
}

/// Mean and 5–95 % band of several curves `y(x)` on a common grid spanning
/// the range all curves share (`None` when they share none). Points that
/// are not finite are dropped; each curve is sorted by `x`.
fn band(curves: &[(Vec<f64>, Vec<f64>)]) -> Option<Band> {
    let mut sorted = Vec::new();
    for (x, y) in curves {
        let mut pts: Vec<(f64, f64)> = x
            .iter()
            .zip(y)
            .filter(|(a, b)| a.is_finite() && b.is_finite())
            .map(|(a, b)| (*a, *b))
            .collect();
        if pts.len() < 2 {
            continue;
        }
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        let (xs, ys): (Vec<f64>, Vec<f64>) = pts.into_iter().unzip();
        sorted.push((xs, ys));
    }
    if sorted.is_empty() {
        return None;
    }
    let lo = sorted
        .iter()
        .map(|(x, _)| x[0])
        .fold(f64::NEG_INFINITY, f64::max);
    let hi = sorted
        .iter()
        .map(|(x, _)| x[x.len() - 1])
        .fold(f64::INFINITY, f64::min);
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        return None;
    }
    let (mut gx, mut mean, mut p05, mut p95) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for k in 0..GRID {
        let x0 = lo + (hi - lo) * k as f64 / (GRID - 1) as f64;
        let vals: Vec<f64> = sorted
            .iter()
            .filter_map(|(x, y)| interpolate(x, y, x0))
            .collect();
        if let Some(s) = Spread::of(&vals) {
            gx.push(x0);
            mean.push(s.mean);
            p05.push(s.p05);
            p95.push(s.p95);
        }
    }
    Some(Band {
        x: gx,
        mean,
        p05,
        p95,
    })
}

fn process_name(kind: ProcessKind, index: usize) -> String {
    match (kind, index) {
        (ProcessKind::Drainage, 0) => "primary drainage".into(),
        (ProcessKind::Drainage, _) => "secondary drainage".into(),
        (ProcessKind::Imbibition, _) => "imbibition".into(),
    }
}

/// The cases of `group` with the highest initial saturation (the lowest
/// target water saturation), one per realisation.
fn deepest_cases(results: &[CaseResult], group: usize) -> Vec<&CaseResult> {
    let g: Vec<&CaseResult> = results.iter().filter(|r| r.case.group == group).collect();
    let lowest = g
        .iter()
        .map(|r| r.case.initial_water_saturation.unwrap_or(0.0))
        .fold(f64::INFINITY, f64::min);
    g.into_iter()
        .filter(|r| r.case.initial_water_saturation.unwrap_or(0.0) == lowest)
        .collect()
}

/// Which cases a band shows: their mean initial saturation and how many
/// realisations, e.g. `S_{ni} = 0.846, 5 realisations`.
fn which_cases(cases: &[&CaseResult]) -> String {
    let sni: Vec<f64> = cases.iter().filter_map(|r| r.sni).collect();
    let mean = if sni.is_empty() {
        "n/a".to_string()
    } else {
        html::number(sni.iter().sum::<f64>() / sni.len() as f64, 3)
    };
    match cases.len() {
        1 => format!("S_{{ni}} = {mean}, 1 realisation"),
        n => format!("S_{{ni}} = {mean} (mean), {n} realisations"),
    }
}

fn group_label(summary: &SweepSummary, g: usize) -> String {
    let grp = &summary.groups[g];
    if grp.parameters.is_empty() {
        "base study".into()
    } else {
        grp.parameters
            .iter()
            .map(|(p, v)| format!("{} = {v}", p.rsplit('.').next().unwrap_or(p)))
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// The standard figures of a sweep (stems `trapping-curve`, `pc-sw-band`,
/// `kr-sw-band`, `ri-sw-band`, `ganglion-sizes`; those without data are
/// left out).
pub fn sweep_figures(summary: &SweepSummary, results: &[CaseResult]) -> Vec<Figure> {
    let mut out = Vec::new();
    let label = results
        .first()
        .map(|r| r.case.study().fluids.nonaqueous_label)
        .unwrap_or_else(|| "oil".into());
    // Initial–residual curve with the Land fit of each group.
    let mut series = Vec::new();
    let several = summary.groups.len() > 1;
    for (gi, g) in summary.groups.iter().enumerate() {
        let pts: Vec<(f64, Spread)> = g
            .trapping_curve
            .iter()
            .filter_map(|p| Some((p.sni?.mean, p.snr?)))
            .collect();
        if pts.is_empty() {
            continue;
        }
        if series.is_empty() {
            series.push(
                Series::line(
                    "S_{nr} = S_{ni} (everything trapped)",
                    vec![0.0, 1.0],
                    vec![0.0, 1.0],
                )
                .with_style(SeriesStyle::Dashed)
                .with_colour(REFERENCE_GREY),
            );
        }
        let colour = process_colour(gi);
        let x: Vec<f64> = pts.iter().map(|p| p.0).collect();
        let y: Vec<f64> = pts.iter().map(|p| p.1.mean).collect();
        let lo: Vec<f64> = pts.iter().map(|p| p.1.p05).collect();
        let hi: Vec<f64> = pts.iter().map(|p| p.1.p95).collect();
        series.push(
            Series::line(
                format!("S_{{nr}} (mean, 5–95 %), {}", group_label(summary, gi)),
                x,
                y,
            )
            .with_style(SeriesStyle::Markers)
            .with_colour(colour)
            .with_band(lo, hi),
        );
        if let (Some(c), Some(se), Some([_, top])) =
            (g.land_coefficient, g.land_coefficient_se, g.land_sni_range)
        {
            let sx: Vec<f64> = (0..=50).map(|k| top * k as f64 / 50.0).collect();
            let curve = |c: f64| -> Vec<f64> { sx.iter().map(|&s| s / (1.0 + c * s)).collect() };
            let mut label = format!("Land C = {}", value_pm(c, se));
            if several {
                label = format!("{label}, {}", group_label(summary, gi));
            }
            series.push(
                Series::line(label, sx.clone(), curve(c))
                    .with_colour(colour)
                    .with_band(curve(c + se), curve((c - se).max(0.0))),
            );
        }
    }
    if !series.is_empty() {
        out.push(Figure {
            name: "trapping-curve",
            title: "Initial–residual trapping curve".into(),
            caption: format!(
                "Residual (trapped) {label} saturation after imbibition against the initial saturation \
                 reached by drainage: mean over realisations with the 5–95 % band; the Land (1968) \
                 curve S_{{nr}} = S_{{ni}}/(1 + C S_{{ni}}) fitted by least squares in S_{{nr}} to every case of each \
                 group, drawn up to the highest fitted S_{{ni}} with the band of C ± one standard error; \
                 the dashed grey line S_{{nr}} = S_{{ni}} is the limit where everything stays trapped."
            ),
            spec: PlotSpec {
                title: "Initial–residual trapping curve".into(),
                x_label: format!("Initial {label} saturation S_{{ni}} (fraction of pore volume)"),
                y_label: format!("Residual {label} saturation S_{{nr}} (fraction of pore volume)"),
                x_scale: Scale::Linear,
                y_scale: Scale::Linear,
                x_range: Some((0.0, 1.0)),
                y_range: Some((0.0, 1.0)),
                series,
            },
        });
    }
    // Curves of the deepest cases of each group, with bands.
    let curve_figure = |name: &'static str,
                        title: &str,
                        y_label: &str,
                        y_scale: Scale,
                        pick: &dyn Fn(&network_core::sweep::CaseCurve) -> Vec<f64>,
                        scale: f64| {
        let mut series = Vec::new();
        for gi in 0..summary.groups.len().min(4) {
            let cases = deepest_cases(results, summary.groups[gi].group);
            let Some(first) = cases.first() else { continue };
            for (pi, c0) in first.curves.iter().enumerate() {
                let curves: Vec<(Vec<f64>, Vec<f64>)> = cases
                    .iter()
                    .filter_map(|r| r.curves.get(pi))
                    .map(|c| (c.sw.clone(), pick(c).iter().map(|v| v * scale).collect()))
                    .collect();
                if let Some(Band {
                    x,
                    mean: m,
                    p05: lo,
                    p95: hi,
                }) = band(&curves)
                {
                    let mut lbl = format!("{}, {}", process_name(c0.kind, pi), which_cases(&cases));
                    if summary.groups.len() > 1 {
                        lbl = format!("{lbl}, {}", group_label(summary, gi));
                    }
                    series.push(
                        Series::line(lbl, x, m)
                            .with_colour(process_colour(pi + 3 * gi))
                            .with_band(lo, hi),
                    );
                }
            }
        }
        (!series.is_empty()).then(|| Figure {
            name,
            title: title.into(),
            caption: format!(
                "{title} of the cases with the highest initial saturation only (the legend gives \
                 their S_{{ni}} and number of realisations): mean over the realisations and the \
                 5–95 % band on a common saturation grid; other initial saturations are in the \
                 trapping tables."
            ),
            spec: PlotSpec {
                title: title.into(),
                x_label: SW_LABEL.into(),
                y_label: y_label.into(),
                x_scale: Scale::Linear,
                y_scale,
                x_range: Some((0.0, 1.0)),
                y_range: None,
                series,
            },
        })
    };
    let opt = |v: &[Option<f64>]| v.iter().map(|x| x.unwrap_or(f64::NAN)).collect::<Vec<_>>();
    if let Some(f) = curve_figure(
        "pc-sw-band",
        "Capillary pressure",
        "Capillary pressure P_{c} = P_{n} − P_{w} (kPa)",
        Scale::Linear,
        &|c| c.pc_pa.clone(),
        1e-3,
    ) {
        let zoom = crate::figures::plateau_zoom(&f, "pc-sw-band-zoom");
        out.push(f);
        out.extend(zoom);
    }
    if let Some(f) = curve_figure(
        "kr-sw-band",
        "Water relative permeability",
        "k_{rw} (fraction)",
        Scale::Linear,
        &|c| opt(&c.krw),
        1.0,
    ) {
        out.push(f);
    }
    if let Some(f) = curve_figure(
        "krn-sw-band",
        &format!("Relative permeability of {label}"),
        &format!("k_{{r,{label}}} (fraction)"),
        Scale::Linear,
        &|c| opt(&c.krn),
        1.0,
    ) {
        out.push(f);
    }
    if let Some(f) = curve_figure(
        "ri-sw-band",
        "Resistivity index",
        "RI = R_{t}/R_{o}",
        Scale::Log,
        &|c| opt(&c.ri),
        1.0,
    ) {
        out.push(f);
    }
    // Ganglion sizes of the deepest cases of the first group.
    if let Some(g0) = summary.groups.first() {
        let cases = deepest_cases(results, g0.group);
        let bins = cases
            .iter()
            .map(|r| r.ganglion_histogram.len())
            .max()
            .unwrap_or(0);
        if bins > 0 {
            let x: Vec<f64> = (0..bins).map(|k| (1u64 << k) as f64).collect();
            let y: Vec<f64> = (0..bins)
                .map(|k| {
                    let v: Vec<f64> = cases
                        .iter()
                        .map(|r| r.ganglion_histogram.get(k).copied().unwrap_or(0) as f64)
                        .collect();
                    v.iter().sum::<f64>() / v.len() as f64
                })
                .collect();
            out.push(Figure {
                name: "ganglion-sizes",
                title: "Trapped ganglion sizes".into(),
                caption: "Mean number of trapped ganglia per size class (pores per ganglion, \
                          classes doubling from 1) after imbibition from the highest initial \
                          saturation."
                    .into(),
                spec: PlotSpec {
                    title: "Trapped ganglion sizes".into(),
                    x_label: "Pores per ganglion (class lower bound)".into(),
                    y_label: "Ganglia per case".into(),
                    x_scale: Scale::Log,
                    y_scale: Scale::Linear,
                    x_range: None,
                    y_range: None,
                    series: vec![
                        Series::line("mean over realisations", x, y)
                            .with_style(SeriesStyle::LineMarkers),
                    ],
                },
            });
        }
    }
    out
}

fn spread_text(s: Option<Spread>) -> String {
    match s {
        Some(s) if s.n > 1 => format!(
            "{} ± {} (5–95 %: {}–{})",
            html::number(s.mean, 3),
            html::number(s.std, 2),
            html::number(s.p05, 3),
            html::number(s.p95, 3)
        ),
        Some(s) => html::number(s.mean, 3),
        None => "n/a".into(),
    }
}

/// The sweep report: one self-contained HTML page (inline SVG, no scripts,
/// no external resources) with the caution box, the sweep's inputs, the
/// network, every figure, the group statistics and the trapping tables.
pub fn sweep_report(
    title: &str,
    summary: &SweepSummary,
    results: &[CaseResult],
    figures: &[Figure],
) -> String {
    let mut page = Page::new(title);
    page.subtitle(&format!(
        "Sweep of {} cases ({} finished) in {} parameter group(s)",
        summary.cases_total,
        summary.cases_done,
        summary.groups.len()
    ));
    page.lead(html::caution());
    if let Some(r) = results.first() {
        let n = &r.network;
        page.section(
            "Network",
            html::key_values(&[
                ("name", n.name.clone()),
                ("content hash", n.hash.clone()),
                ("pores / throats", format!("{} / {}", n.pores, n.throats)),
                ("porosity", html::number(n.porosity, 4)),
                (
                    "permeability (mD)",
                    r.permeability_md
                        .map_or("n/a".into(), |k| html::number(k, 4)),
                ),
                (
                    "formation factor",
                    r.formation_factor
                        .map_or("n/a".into(), |f| html::number(f, 4)),
                ),
            ]),
        );
        let mut inputs = Html::new();
        inputs.push(html::paragraph(
            "The base study of the sweep, as run for its first case (each case changes the swept values, \
             the stop of the primary drainage and the seed):",
        ));
        inputs.push(Html::element("pre", None, Html::text(&r.case.study_text)));
        page.section("Inputs", inputs);
    }
    let mut figs = Html::new();
    for f in figures {
        if let Ok(svg) = render_svg(&f.spec) {
            figs.push(html::figure(&svg, &f.caption));
        }
    }
    page.section("Figures", figs);
    let rows: Vec<Vec<String>> = summary
        .groups
        .iter()
        .enumerate()
        .map(|(gi, g)| {
            vec![
                gi.to_string(),
                group_label(summary, gi),
                g.cases.to_string(),
                match (g.land_coefficient, g.land_coefficient_se) {
                    (Some(c), Some(se)) => value_pm(c, se),
                    _ => "n/a".into(),
                },
                g.land_rmse_snr.map_or("n/a".into(), |c| html::number(c, 2)),
                g.land_sni_range.map_or("n/a".into(), |[lo, hi]| {
                    format!(
                        "{} ({}–{})",
                        g.land_points,
                        html::number(lo, 3),
                        html::number(hi, 3)
                    )
                }),
                g.land_warning.clone().unwrap_or_else(|| "none".into()),
            ]
        })
        .collect();
    let mut groups = html::table(
        &[
            "group",
            "parameters",
            "cases",
            "Land C ± se",
            "Land fit rmse (S_{nr})",
            "points fitted (S_{ni} range)",
            "Land fit warning",
        ],
        &rows,
    );
    groups.push(html::note(&format!(
        "Land (1968, SPE J 8:149): S_{{nr}} = S_{{ni}}/(1 + C S_{{ni}}), C fitted by least squares in S_{{nr}} over \
         every case of the group{}; the standard error is the linearised one, s/√Σ(∂S_{{nr}}/∂C)². A \
         warning says when the points do not follow Land's form over the fitted range (the fit \
         misses them by more than their scatter between realisations, S_{{nr}} falls at the highest \
         S_{{ni}}, or the residuals trend); C is then a summary, not a property of the rock. \
         Residual saturation, k_{{rw}} at S_{{nr}} and the Amott index are given per initial saturation \
         below, never pooled over different S_{{ni}}.",
        summary
            .land_fit_sni_range
            .map_or(String::new(), |[lo, hi]| format!(
                " with {} ≤ S_{{ni}} ≤ {} (land_fit_sni_range)",
                html::input_number(lo),
                html::input_number(hi)
            ))
    )));
    page.section("Groups", groups);
    let mut tables = Html::new();
    for (gi, g) in summary.groups.iter().enumerate() {
        tables.push(html::subheading(&format!(
            "Group {gi}: {}",
            group_label(summary, gi)
        )));
        tables.push(html::paragraph(&land_sentence(g)));
        if let Some(w) = &g.land_warning {
            tables.push(html::paragraph(&format!("Warning: {w}.")));
        }
        let rows: Vec<Vec<String>> = g
            .trapping_curve
            .iter()
            .map(|p| {
                vec![
                    p.initial_water_saturation
                        .map_or("as in the study".into(), |s| html::number(s, 3)),
                    spread_text(p.sni),
                    spread_text(p.snr),
                    p.land_snr.map_or("n/a".into(), |v| html::number(v, 3)),
                    if p.in_land_fit { "yes" } else { "no" }.into(),
                    spread_text(p.krw_at_snr),
                    spread_text(p.amott_water),
                ]
            })
            .collect();
        tables.push(html::table(
            &[
                "target initial S_{w}",
                "S_{ni}",
                "S_{nr}",
                "Land fit S_{nr}",
                "in the fit",
                "k_{rw} at S_{nr}",
                "Amott water index",
            ],
            &rows,
        ));
    }
    page.section("Trapping tables", tables);
    page.footer(&format!(
        "Made by ganglion {} from {} finished cases. Land (1968): S_{{nr}} = S_{{ni}}/(1 + C S_{{ni}}), \
         saturations as fractions of the pore volume.",
        env!("CARGO_PKG_VERSION"),
        summary.cases_done
    ));
    page.render()
}

/// The title of a sweep's report: the study title of its first finished
/// case, or "Ganglion sweep" (the CLI and the Python package use it).
pub fn sweep_title(results: &[CaseResult]) -> String {
    results
        .first()
        .and_then(|r| r.case.study().title)
        .unwrap_or_else(|| "Ganglion sweep".to_string())
}

/// Writes the sweep's figures (SVG, and PNG when `png`) and `report.html`
/// into `dir`, each atomically.
pub fn write_sweep_artifacts(
    title: &str,
    summary: &SweepSummary,
    results: &[CaseResult],
    dir: &Path,
    png: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    let figures = sweep_figures(summary, results);
    let mut out = Writer::new(dir);
    let mut put = |name: &str, bytes: &[u8]| out.put(name, bytes);
    for f in &figures {
        put_figure(f, png, &mut put)?;
    }
    let page = sweep_report(title, summary, results, &figures);
    put("report.html", page.as_bytes())?;
    Ok(out.written)
}

#[cfg(test)]
mod tests {
    use super::*;
    use network_core::sweep::{GroupSummary, TrappingPoint};

    #[test]
    fn value_with_standard_error_is_rounded_to_the_error() {
        // Common practice: two significant figures of the error, the value
        // to the same decimal place; no float noise, no "-0".
        assert_eq!(
            value_pm(0.927_439_356_964, 0.052_416_739_9),
            "0.927 ± 0.052"
        );
        assert_eq!(value_pm(1.412_345, 0.079_1), "1.412 ± 0.079");
        assert_eq!(value_pm(2.3456, 0.15), "2.35 ± 0.15");
        assert_eq!(value_pm(12.345, 2.3), "12.3 ± 2.3");
        assert_eq!(value_pm(-0.000_01, 0.02), "0.000 ± 0.020");
        assert_eq!(value_pm(1.7, 0.0), "1.70");
        assert_eq!(value_pm(1.7, f64::NAN), "1.70");
    }

    fn point(sni: f64, snr: f64) -> TrappingPoint {
        let one = |m: f64| Spread {
            n: 3,
            mean: m,
            std: 0.01,
            p05: m - 0.01,
            p95: m + 0.01,
        };
        TrappingPoint {
            initial_water_saturation: Some(1.0 - sni),
            sni: Some(one(sni)),
            snr: Some(one(snr)),
            krw_at_snr: None,
            amott_water: None,
            land_snr: Some(sni / (1.0 + 1.2 * sni)),
            in_land_fit: true,
        }
    }

    #[test]
    fn trapping_figure_shows_points_the_land_fit_with_its_error_and_the_one_to_one_line() {
        let g = GroupSummary {
            group: 0,
            parameters: vec![],
            cases: 9,
            trapping_curve: vec![point(0.3, 0.22), point(0.5, 0.31), point(0.7, 0.38)],
            land_coefficient: Some(1.213_333_333),
            land_coefficient_se: Some(0.043_21),
            land_rmse_snr: Some(0.004),
            land_points: 9,
            land_sni_range: Some([0.3, 0.7]),
            land_warning: Some("example warning".into()),
        };
        let summary = SweepSummary {
            cases_total: 9,
            cases_done: 9,
            land_coefficient: g.land_coefficient,
            land_coefficient_se: g.land_coefficient_se,
            land_fit_sni_range: None,
            groups: vec![g],
        };
        let figs = sweep_figures(&summary, &[]);
        let f = figs.iter().find(|f| f.name == "trapping-curve").unwrap();
        let labels: Vec<&str> = f.spec.series.iter().map(|s| s.label.as_str()).collect();
        assert_eq!(labels[0], "S_{nr} = S_{ni} (everything trapped)");
        assert_eq!(f.spec.series[0].y, f.spec.series[0].x);
        assert!(labels[1].starts_with("S_{nr} (mean"), "{labels:?}");
        let land = &f.spec.series[2];
        assert_eq!(land.label, "Land C = 1.213 ± 0.043");
        // The curve is Land's form with the fitted C (Land 1968), drawn to
        // the highest fitted S_ni; the band is C ∓ se.
        let (lo, hi) = land.band.as_ref().unwrap();
        for k in 0..land.x.len() {
            let s = land.x[k];
            assert!((land.y[k] - s / (1.0 + 1.213_333_333 * s)).abs() < 1e-12);
            assert!(lo[k] <= land.y[k] && land.y[k] <= hi[k]);
        }
        assert!((land.x.last().unwrap() - 0.7).abs() < 1e-12);
        let page = sweep_report("t", &summary, &[], &figs);
        assert!(page.contains("C = 1.213 ± 0.043"), "fit sentence missing");
        assert!(
            page.contains("rmse 0.0040 in S<sub>nr</sub>"),
            "rmse missing"
        );
        assert!(page.contains("Warning: example warning."));
    }

    #[test]
    fn interpolation_is_exact_on_a_straight_line_and_none_outside() {
        // Analytic: linear interpolation reproduces y = 2x + 1 exactly.
        let xs = [0.0, 0.25, 0.5, 1.0];
        let ys: Vec<f64> = xs.iter().map(|x| 2.0 * x + 1.0).collect();
        for x0 in [0.0, 0.1, 0.3, 0.75, 1.0] {
            let y = interpolate(&xs, &ys, x0).unwrap();
            assert!((y - (2.0 * x0 + 1.0)).abs() < 1e-12, "{x0}: {y}");
        }
        assert_eq!(interpolate(&xs, &ys, -0.01), None);
        assert_eq!(interpolate(&xs, &ys, 1.01), None);
        assert_eq!(interpolate(&[], &[], 0.5), None);
    }

    #[test]
    fn band_of_two_parallel_lines_spans_the_shared_range_with_the_mean_between() {
        // Analytic: y = x on [0, 1] and y = x + 1 on [0.2, 0.9] (unsorted,
        // with a NaN point) share [0.2, 0.9]; their mean is x + 0.5 there and
        // every percentile of two values lies between them.
        let a = (
            (0..=10).map(|k| k as f64 / 10.0).collect(),
            (0..=10).map(|k| k as f64 / 10.0).collect(),
        );
        let bx = vec![0.9, 0.2, 0.5, 0.7, f64::NAN];
        let by: Vec<f64> = bx.iter().map(|x| x + 1.0).collect();
        let b = band(&[a, (bx, by)]).unwrap();
        assert_eq!(b.x.len(), GRID);
        assert!((b.x[0] - 0.2).abs() < 1e-12 && (b.x[GRID - 1] - 0.9).abs() < 1e-12);
        for k in 0..GRID {
            let x = b.x[k];
            assert!((b.mean[k] - (x + 0.5)).abs() < 1e-12);
            assert!(b.p05[k] >= x - 1e-12 && b.p05[k] <= b.mean[k] + 1e-12);
            assert!(b.p95[k] <= x + 1.0 + 1e-12 && b.p95[k] >= b.mean[k] - 1e-12);
        }
        // Disjoint ranges share nothing.
        let c = (vec![0.0, 0.1], vec![1.0, 1.0]);
        let d = (vec![0.5, 0.6], vec![1.0, 1.0]);
        assert!(band(&[c, d]).is_none());
    }
}
