//! The HTML report of a study run: the page and its sections, in order.
//! The sections are built in `inputs` (inputs and network), `results`
//! (process results, end effects, wettability indices, trapped ganglia), `fits` (end
//! points and fitted models) and `waterflood` (the Buckley–Leverett waterflood); figures and warnings are here.
//!
//! The types the report reads from `network_core` are imported here, once,
//! for all its sections.

use network_core::fit::FitQuality;
use network_core::run::EventCounts;
use network_core::run::RunResults;
use network_core::run::end_points::Fitted;
use network_core::study::{ProcessKind, StopAt};

use super::{Html, Page, caution, figure, input_number, key_values, list, note, number, paragraph};
use crate::figures::{Figure, process_label};
use crate::plot::render_svg;

use self::fits::fits;
use self::inputs::{inputs, network};
use self::results::{end_effects, ganglia, processes, wettability};
use self::waterflood::waterflood;

mod fits;
mod inputs;
mod results;
mod waterflood;

fn opt(v: Option<f64>, sig: usize) -> String {
    v.map_or_else(|| "n/a".to_string(), |x| number(x, sig))
}

fn kpa(v: f64) -> String {
    number(v / 1.0e3, 4)
}

fn yes_no(b: bool) -> String {
    if b { "yes" } else { "no" }.to_string()
}

fn angle_range(r: [f64; 2]) -> String {
    format!("{}–{}°", input_number(r[0]), input_number(r[1]))
}

/// The HTML report of a run (see the [module docs](super)), with every
/// figure of `figures` drawn inline as SVG. A figure that cannot be drawn
/// is replaced by a visible note with the reason.
pub fn run_report(results: &RunResults, figures: &[Figure]) -> String {
    let r = results;
    let title = match &r.study.title {
        Some(t) if !t.trim().is_empty() => t.clone(),
        _ => format!("Pore-network study: {}", r.network.name),
    };
    let mut page = Page::new(&title);
    page.subtitle(&format!(
        "Network {} · {} {} · seed {}",
        r.network.name, r.program.name, r.program.version, r.study.seed
    ));
    page.lead(caution());
    page.lead(key_box(r));
    page.section("Inputs", inputs(r));
    page.section("Network", network(r));
    page.section("Process results", processes(r));
    page.section("End points and fitted models", fits(r));
    page.section("End effects", end_effects(r));
    page.section("Wettability indices", wettability(r));
    page.section("Trapped ganglia", ganglia(r));
    page.section("Waterflood (Buckley–Leverett)", waterflood(r));
    page.section("Figures", figures_html(figures));
    page.section("Warnings", warnings(r));
    page.footer(&format!(
        "Written by {} {} from network \"{}\" (hash {}). Model estimates; see the caution at the top.",
        r.program.name,
        r.program.version,
        r.network.name,
        if r.network.hash.is_empty() {
            "not recorded"
        } else {
            &r.network.hash
        }
    ));
    page.render()
}

/// The key results (see [`crate::key_results`]) in a box above the
/// contents, with the Sni range reminder a single run needs.
fn key_box(r: &RunResults) -> Html {
    let rows = crate::key_results::key_results(r);
    let refs: Vec<(&str, String)> = rows.iter().map(|(k, v)| (k.as_str(), v.clone())).collect();
    let mut inner = Html::element("h2", None, Html::text("Key results"));
    inner.push(key_values(&refs));
    inner.push(note(
        "Model estimates of this one network and study; the sections below give every \
         value with its definition, and the warnings at the end say what to check.",
    ));
    Html::element("aside", Some("key-results"), inner)
}

fn figures_html(figures: &[Figure]) -> Html {
    if figures.is_empty() {
        return paragraph("No figures: the run recorded no curves.");
    }
    figures
        .iter()
        .enumerate()
        .map(|(k, f)| match render_svg(&f.spec) {
            Ok(svg) => figure(
                &svg,
                &format!("Figure {}. {} ({}.svg)", k + 1, f.caption, f.name),
            ),
            Err(e) => Html::element(
                "p",
                Some("warning"),
                Html::text(&format!("Figure \"{}\" could not be drawn: {e}", f.title)),
            ),
        })
        .collect()
}

fn warnings(r: &RunResults) -> Html {
    if r.warnings.is_empty() {
        return paragraph("No warnings.");
    }
    let mut h = list(&r.warnings);
    h.0 = h.0.replacen("<ul>", "<ul class=\"warnings\">", 1);
    h
}
