//! One self-contained HTML report of a study run, and the small page
//! builder it is made with.
//!
//! ## The report ([`run_report`])
//! A single file: inline CSS, every figure as inline SVG, no scripts, no
//! web fonts, no images or style sheets fetched from anywhere (the only
//! links are `#section` anchors inside the page). It opens with a caution
//! box and holds, in order: inputs, network, process results, end points
//! and fitted models, wettability indices, trapped ganglia, figures and
//! warnings. Missing values (`None`, NaN) read "n/a".
//!
//! ## The builder ([`Page`], [`Html`])
//! [`Html`] is markup that is safe to insert: its constructors escape every
//! piece of text (`& < > " '`, and control characters that XML forbids), so
//! names such as `a<b & c` print as written. [`Page`] collects titled
//! sections and writes the document with a table of contents; [`table`],
//! [`key_values`], [`figure`], [`paragraph`], [`list`] and [`caution`] make
//! the usual blocks. A sweep report can reuse all of it, with figures whose
//! series carry uncertainty bands ([`crate::plot::Series::with_band`]).
//!
//! The markup is also well-formed XML (void elements are self-closed, no
//! named entities other than XML's five), so an XML parser can check it.
//!
//! ## Style
//! Our own plain style: system sans-serif text on white, a narrow column,
//! thin rules under headings, tables with light row separators and
//! right-aligned numbers, the caution box on a pale amber ground with a
//! dark amber rule on the left.

use std::fmt::Write as _;

use network_core::engine::EventCounts;
use network_core::fit::FitQuality;
use network_core::run::RunResults;
use network_core::run::end_points::Fitted;
use network_core::study::{ProcessKind, StopAt};

use crate::figures::{Figure, process_label};
use crate::plot::render_svg;

/// Markup safe to insert into a page (see the [module docs](self)).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Html(String);

impl Html {
    /// Empty markup.
    pub fn new() -> Html {
        Html(String::new())
    }

    /// Text, escaped.
    pub fn text(text: &str) -> Html {
        Html(escape(text))
    }

    /// `<tag class="class">inner</tag>`; `tag` and `class` are fixed names
    /// of the caller (letters, digits and `-` only; anything else is
    /// dropped).
    pub fn element(tag: &str, class: Option<&str>, inner: Html) -> Html {
        let tag = name_only(tag);
        let mut s = format!("<{tag}");
        if let Some(c) = class {
            let _ = write!(s, " class=\"{}\"", name_only(c));
        }
        let _ = write!(s, ">{}</{tag}>", inner.0);
        Html(s)
    }

    /// Appends `other`.
    pub fn push(&mut self, other: Html) {
        self.0.push_str(&other.0);
    }

    /// Appends escaped text.
    pub fn push_text(&mut self, text: &str) {
        self.0.push_str(&escape(text));
    }

    /// The markup.
    pub fn as_str(&self) -> &str {
        &self.0
    }

    /// The markup, owned.
    pub fn into_string(self) -> String {
        self.0
    }
}

impl FromIterator<Html> for Html {
    fn from_iter<I: IntoIterator<Item = Html>>(iter: I) -> Html {
        let mut out = Html::new();
        for h in iter {
            out.push(h);
        }
        out
    }
}

/// Escapes text for HTML and XML content and attribute values: `&`, `<`,
/// `>`, `"` and `'` become character references; control characters other
/// than tab, line feed and carriage return (forbidden in XML) become U+FFFD.
pub fn escape(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&#39;"),
            '\t' | '\n' | '\r' => s.push(c),
            c if c.is_control() => s.push('\u{FFFD}'),
            c => s.push(c),
        }
    }
    s
}

fn name_only(s: &str) -> String {
    s.chars()
        .filter(|c| c.is_ascii_alphanumeric() || *c == '-')
        .collect()
}

/// A document of titled sections.
#[derive(Clone, Debug, Default)]
pub struct Page {
    title: String,
    subtitle: Option<String>,
    lead: Html,
    sections: Vec<(String, Html)>,
    footer: Option<String>,
}

impl Page {
    /// An empty page with a title (shown as the heading and in the
    /// browser tab).
    pub fn new(title: &str) -> Page {
        Page {
            title: title.to_string(),
            ..Page::default()
        }
    }

    /// A line under the title.
    pub fn subtitle(&mut self, text: &str) -> &mut Page {
        self.subtitle = Some(text.to_string());
        self
    }

    /// Markup shown between the title and the table of contents (e.g. the
    /// [`caution`] box); called again, appends.
    pub fn lead(&mut self, html: Html) -> &mut Page {
        self.lead.push(html);
        self
    }

    /// Appends a section with a heading, listed in the table of contents.
    pub fn section(&mut self, title: &str, html: Html) -> &mut Page {
        self.sections.push((title.to_string(), html));
        self
    }

    /// Small print at the end of the page.
    pub fn footer(&mut self, text: &str) -> &mut Page {
        self.footer = Some(text.to_string());
        self
    }

    /// The complete HTML document.
    pub fn render(&self) -> String {
        let mut s = String::with_capacity(
            4096 + self
                .sections
                .iter()
                .map(|(_, h)| h.as_str().len())
                .sum::<usize>(),
        );
        s.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n");
        s.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n");
        let _ = writeln!(s, "<title>{}</title>", escape(&self.title));
        let _ = writeln!(s, "<style>{CSS}</style>\n</head>\n<body>\n<main>");
        let _ = writeln!(s, "<header>\n<h1>{}</h1>", escape(&self.title));
        if let Some(sub) = &self.subtitle {
            let _ = writeln!(s, "<p class=\"subtitle\">{}</p>", escape(sub));
        }
        s.push_str("</header>\n");
        s.push_str(self.lead.as_str());
        if !self.sections.is_empty() {
            s.push_str("\n<nav><h2>Contents</h2>\n<ol>\n");
            for (i, (t, _)) in self.sections.iter().enumerate() {
                let _ = writeln!(
                    s,
                    "<li><a href=\"#section-{}\">{}</a></li>",
                    i + 1,
                    escape(t)
                );
            }
            s.push_str("</ol>\n</nav>\n");
        }
        for (i, (t, h)) in self.sections.iter().enumerate() {
            let _ = writeln!(
                s,
                "<section id=\"section-{}\">\n<h2>{}</h2>\n{}\n</section>",
                i + 1,
                escape(t),
                h.as_str()
            );
        }
        if let Some(f) = &self.footer {
            let _ = writeln!(s, "<footer>{}</footer>", escape(f));
        }
        s.push_str("</main>\n</body>\n</html>\n");
        s
    }
}

/// A table with a header row; every cell is text (escaped). Cells that
/// read as numbers (or "n/a") are right-aligned.
pub fn table(headers: &[&str], rows: &[Vec<String>]) -> Html {
    let mut s = String::from("<div class=\"table-wrap\"><table>\n<thead><tr>");
    for h in headers {
        let _ = write!(s, "<th>{}</th>", escape(h));
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    for row in rows {
        s.push_str("<tr>");
        for cell in row {
            if looks_numeric(cell) {
                let _ = write!(s, "<td class=\"num\">{}</td>", escape(cell));
            } else {
                let _ = write!(s, "<td>{}</td>", escape(cell));
            }
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table></div>");
    Html(s)
}

/// A two-column table of names and values (text, escaped), all
/// left-aligned.
pub fn key_values(rows: &[(&str, String)]) -> Html {
    let mut s = String::from("<div class=\"table-wrap\"><table class=\"kv\">\n<tbody>\n");
    for (k, v) in rows {
        let _ = writeln!(
            s,
            "<tr><th scope=\"row\">{}</th><td>{}</td></tr>",
            escape(k),
            escape(v)
        );
    }
    s.push_str("</tbody>\n</table></div>");
    Html(s)
}

/// A paragraph of text.
pub fn paragraph(text: &str) -> Html {
    Html(format!("<p>{}</p>", escape(text)))
}

/// A paragraph in small grey type.
pub fn note(text: &str) -> Html {
    Html(format!("<p class=\"note\">{}</p>", escape(text)))
}

/// A heading inside a section.
pub fn subheading(text: &str) -> Html {
    Html(format!("<h3>{}</h3>", escape(text)))
}

/// A bulleted list of text items.
pub fn list(items: &[String]) -> Html {
    let mut s = String::from("<ul>\n");
    for i in items {
        let _ = writeln!(s, "<li>{}</li>", escape(i));
    }
    s.push_str("</ul>");
    Html(s)
}

/// A figure: an SVG document (as returned by [`crate::plot::render_svg`],
/// whose text is escaped by the renderer) inlined with a caption.
///
/// An XML declaration and the SVG namespace attribute are removed (HTML
/// places `<svg>` in that namespace by itself), and the element is made to
/// scale with the page through its `viewBox`. `svg` must be a single
/// well-formed `<svg>` element from a trusted renderer: it is inserted as
/// markup, not escaped.
pub fn figure(svg: &str, caption: &str) -> Html {
    let mut body = svg.trim();
    if body.starts_with("<?xml")
        && let Some(end) = body.find("?>")
    {
        body = body[end + 2..].trim_start();
    }
    let body = body.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    let body = match body.strip_prefix("<svg ") {
        Some(rest) => format!(
            "<svg role=\"img\" aria-label=\"{}\" {rest}",
            escape(caption)
        ),
        None => body,
    };
    Html(format!(
        "<figure>\n{body}\n<figcaption>{}</figcaption>\n</figure>",
        escape(caption)
    ))
}

/// The caution box every run report carries: the results are model
/// estimates from a pore network; they complement and do not replace
/// laboratory special core analysis; reserve, injectivity and
/// storage-security decisions follow local regulation and licensed
/// professional practice.
pub fn caution() -> Html {
    Html(CAUTION_HTML.to_string())
}

/// Plain-text sentences of the [`caution`] box (for other outputs).
pub const CAUTION_TEXT: [&str; 3] = [
    "These results are model estimates computed on a pore network, an idealised picture of \
     the rock's pore space; they depend on the network and on the model's assumptions.",
    "They complement, and do not replace, laboratory special core analysis on samples of the \
     rock in question.",
    "Decisions on reserves, injectivity or the security of storage must follow local \
     regulation and licensed professional practice.",
];

const CAUTION_HTML: &str = "<aside class=\"caution\" role=\"note\">\n<p class=\"caution-title\">Caution: model estimates</p>\n<ul>\n<li>These results are model estimates computed on a pore network, an idealised picture of the rock&#39;s pore space; they depend on the network and on the model&#39;s assumptions.</li>\n<li>They complement, and do not replace, laboratory special core analysis on samples of the rock in question.</li>\n<li>Decisions on reserves, injectivity or the security of storage must follow local regulation and licensed professional practice.</li>\n</ul>\n</aside>\n";

fn looks_numeric(s: &str) -> bool {
    let t = s.trim();
    t == "n/a"
        || (!t.is_empty()
            && t.chars().all(|c| {
                c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E' | '−' | ' ' | '%')
            })
            && t.chars().any(|c| c.is_ascii_digit()))
}

/// Our own plain style (see the [module docs](self)). No `<` or `&`, so the
/// style sheet is also valid XML text.
const CSS: &str = "
:root { color-scheme: light; }
body { margin: 0; background: #ffffff; color: #1f2328;
  font-family: system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif;
  font-size: 15px; line-height: 1.45; }
main { max-width: 980px; margin: 0 auto; padding: 24px 28px 48px; }
header h1 { font-size: 26px; margin: 8px 0 2px; font-weight: 600; }
.subtitle { margin: 0 0 16px; color: #59636e; font-size: 14px; }
h2 { font-size: 19px; font-weight: 600; margin: 32px 0 10px; padding-bottom: 4px;
  border-bottom: 1px solid #d6dbe0; }
h3 { font-size: 15px; font-weight: 600; margin: 18px 0 6px; }
nav h2 { font-size: 15px; border: none; margin: 18px 0 4px; }
nav ol { margin: 0; padding-left: 22px; columns: 2; }
nav a { color: #1f4f82; text-decoration: none; }
nav a:hover { text-decoration: underline; }
.table-wrap { overflow-x: auto; margin: 6px 0 12px; }
table { border-collapse: collapse; font-size: 14px; }
th, td { padding: 4px 12px 4px 0; text-align: left; vertical-align: top;
  border-bottom: 1px solid #e3e7eb; }
thead th { border-bottom: 1.5px solid #9aa4ae; font-weight: 600; }
table.kv th { font-weight: normal; color: #3d454d; padding-right: 28px; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tbody tr:nth-child(even) td, tbody tr:nth-child(even) th { background: #f7f8fa; }
table.kv td { text-align: left; }
figure { margin: 18px 0 26px; break-inside: avoid; }
figure svg { display: block; width: 100%; height: auto;
  border: 1px solid #e3e7eb; }
figcaption { font-size: 13px; color: #3d454d; margin-top: 4px; }
.note { font-size: 13px; color: #59636e; }
.caution { margin: 14px 0 10px; padding: 10px 16px 10px 14px; background: #fff6e5;
  border-left: 6px solid #a85b00; border-radius: 2px; }
.caution-title { margin: 0 0 4px; font-weight: 700; color: #6b3900; }
.caution ul { margin: 0; padding-left: 20px; }
.warnings li { color: #7a2e0e; }
footer { margin-top: 40px; padding-top: 8px; border-top: 1px solid #d6dbe0;
  font-size: 12px; color: #59636e; }
@media print { nav { display: none; } main { max-width: none; } }
";

// ---------------------------------------------------------------------------
// The run report
// ---------------------------------------------------------------------------

/// A number with `sig` significant digits; "n/a" for NaN, "∞"/"−∞" for
/// infinities; scientific notation outside `[1e-3, 1e6)`.
pub fn number(v: f64, sig: usize) -> String {
    if v.is_nan() {
        return "n/a".into();
    }
    if v.is_infinite() {
        return if v > 0.0 {
            "∞".into()
        } else {
            "−∞".into()
        };
    }
    if v == 0.0 {
        return "0".into();
    }
    let sig = sig.clamp(1, 12);
    let a = v.abs();
    if !(1e-3..1e6).contains(&a) {
        return format!("{:.*e}", sig - 1, v);
    }
    let decimals = (sig as i32 - 1 - a.log10().floor() as i32).max(0) as usize;
    format!("{v:.decimals$}")
}

/// An input value as written: the shortest text that reads back to the
/// same number (scientific notation outside `[1e-4, 1e7)`); "n/a" for NaN.
pub fn input_number(v: f64) -> String {
    if v.is_nan() {
        return "n/a".into();
    }
    let a = v.abs();
    if v == 0.0 || !v.is_finite() || (1e-4..1e7).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

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

/// The HTML report of a run (see the [module docs](self)), with every
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
    page.section("Inputs", inputs(r));
    page.section("Network", network(r));
    page.section("Process results", processes(r));
    page.section("End points and fitted models", fits(r));
    page.section("Wettability indices", wettability(r));
    page.section("Trapped ganglia", ganglia(r));
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

fn inputs(r: &RunResults) -> Html {
    let s = &r.study;
    let f = &s.fluids;
    let w = &s.wettability;
    let m = &s.mechanisms;
    let mut h = Html::new();
    h.push(subheading("Fluids"));
    h.push(key_values(&[
        (
            "Interfacial tension σ (N/m)",
            input_number(f.interfacial_tension_n_per_m),
        ),
        (
            "Water viscosity (Pa·s)",
            input_number(f.water_viscosity_pa_s),
        ),
        (
            "Non-aqueous phase",
            f.nonaqueous_label.clone(), // escaped by key_values
        ),
        (
            "Non-aqueous viscosity (Pa·s)",
            input_number(f.nonaqueous_viscosity_pa_s),
        ),
        (
            "Brine conductivity (S/m)",
            input_number(f.water_conductivity_s_per_m),
        ),
    ]));
    h.push(subheading("Wettability"));
    h.push(key_values(&[
        (
            "Receding contact angle (drainage)",
            angle_range(w.receding_contact_angle_deg),
        ),
        (
            "Advancing contact angle, water-wet",
            angle_range(w.advancing_contact_angle_deg),
        ),
        (
            "Oil-wet fraction of contacted elements",
            input_number(w.oil_wet_fraction),
        ),
        (
            "Oil-wet selection",
            format!("{:?}", w.oil_wet_selection).to_lowercase(),
        ),
        (
            "Advancing contact angle, oil-wet",
            angle_range(w.oil_wet_advancing_contact_angle_deg),
        ),
        (
            "Receding contact angle, oil-wet",
            angle_range(w.oil_wet_receding_contact_angle_deg),
        ),
    ]));
    h.push(subheading("Boundaries, mechanisms and flow"));
    h.push(key_values(&[
        ("Outlet", format!("{:?}", s.outlet).to_lowercase()),
        (
            "Faces open to the displaced phase in imbibition",
            format!("{:?}", s.imbibition_faces).to_lowercase(),
        ),
        ("Snap-off", yes_no(m.snap_off)),
        ("Oil layers", yes_no(m.oil_layers)),
        (
            "Cooperative-filling weights a₂, a₃, …",
            m.cooperative_weights
                .iter()
                .map(|x| input_number(*x))
                .collect::<Vec<_>>()
                .join(", "),
        ),
        (
            "Relative permeability and resistivity",
            yes_no(s.flow.relative_permeability),
        ),
        (
            "Flow axis",
            s.flow.axis.map_or("network's flow axis".to_string(), |a| {
                a.as_str().to_string()
            }),
        ),
        (
            "Clay tortuosity factor",
            input_number(s.flow.clay_tortuosity),
        ),
        ("Solver tolerance", input_number(s.flow.solver_tolerance)),
        ("Seed", s.seed.to_string()),
    ]));
    h.push(subheading("Processes"));
    let kinds: Vec<ProcessKind> = s.processes.iter().map(|p| p.kind).collect();
    let rows: Vec<Vec<String>> = s
        .processes
        .iter()
        .enumerate()
        .map(|(i, p)| {
            vec![
                process_label(&kinds, i),
                match p.stop {
                    StopAt::Pc(pc) => format!("Pc = {} kPa", kpa(pc)),
                    StopAt::Sw(sw) => format!("Sw = {}", input_number(sw)),
                },
                p.pc_steps.to_string(),
                p.kr_points.to_string(),
            ]
        })
        .collect();
    h.push(table(
        &["Process", "Stops at", "Pressure steps", "kr points"],
        &rows,
    ));
    h
}

fn network(r: &RunResults) -> Html {
    let n = &r.network;
    let mut rows = vec![
        ("Name", n.name.clone()),
        (
            "Hash",
            if n.hash.is_empty() {
                "not recorded".to_string()
            } else {
                n.hash.clone()
            },
        ),
        ("Pores", n.pores.to_string()),
        ("Throats", n.throats.to_string()),
        ("Pore volume (m³)", number(n.pore_volume_m3, 4)),
        ("Porosity (fraction)", number(n.porosity, 4)),
    ];
    match &r.single_phase {
        Some(p) => {
            rows.push(("Flow axis", p.axis.as_str().to_string()));
            rows.push(("Permeability (mD)", number(p.permeability_md, 4)));
            rows.push(("Permeability (m²)", number(p.permeability_m2, 4)));
            rows.push(("Formation factor F (–)", number(p.formation_factor, 4)));
        }
        None => {
            rows.push(("Permeability (mD)", "n/a".into()));
            rows.push(("Formation factor F (–)", "n/a".into()));
        }
    }
    key_values(&rows)
}

fn event_rows(counts: &[&EventCounts]) -> Vec<Vec<String>> {
    type Getter = fn(&EventCounts) -> u64;
    let fixed: [(&str, Getter); 11] = [
        ("Pores invaded in drainage", |c| c.drainage_pores),
        ("Throats invaded in drainage", |c| c.drainage_throats),
        ("Piston-like filling, pores", |c| c.piston_pores),
        ("Piston-like filling, throats", |c| c.piston_throats),
        ("Snap-off, pores", |c| c.snap_off_pores),
        ("Snap-off, throats", |c| c.snap_off_throats),
        ("Oil layers formed", |c| c.layers_formed),
        ("Oil-layer collapses", |c| c.layer_collapses),
        ("Non-aqueous clusters trapped", |c| c.trapped_oil_clusters),
        ("Water clusters trapped", |c| c.trapped_water_clusters),
        ("Trapped clusters reconnected", |c| c.reconnections),
    ];
    let mut rows: Vec<Vec<String>> = Vec::new();
    for (name, get) in fixed.iter().take(6) {
        let mut row = vec![name.to_string()];
        row.extend(counts.iter().map(|c| get(c).to_string()));
        rows.push(row);
    }
    let max_n = counts
        .iter()
        .map(|c| c.cooperative.len())
        .max()
        .unwrap_or(0);
    for n in 2..max_n {
        if counts
            .iter()
            .all(|c| c.cooperative.get(n).copied().unwrap_or(0) == 0)
        {
            continue;
        }
        let mut row = vec![format!("Cooperative pore filling I{n}")];
        row.extend(
            counts
                .iter()
                .map(|c| c.cooperative.get(n).copied().unwrap_or(0).to_string()),
        );
        rows.push(row);
    }
    for (name, get) in fixed.iter().skip(6) {
        let mut row = vec![name.to_string()];
        row.extend(counts.iter().map(|c| get(c).to_string()));
        rows.push(row);
    }
    rows
}

fn processes(r: &RunResults) -> Html {
    let kinds: Vec<ProcessKind> = r.processes.iter().map(|p| p.kind).collect();
    let rows: Vec<Vec<String>> = r
        .processes
        .iter()
        .enumerate()
        .map(|(i, p)| {
            vec![
                process_label(&kinds, i),
                kpa(p.final_pc_pa),
                number(p.final_sw, 4),
                number(p.final_sn_trapped, 4),
                p.breakthrough_pc_pa.map_or("n/a".to_string(), kpa),
                p.points.to_string(),
                if p.target_unreached {
                    "not reached".to_string()
                } else {
                    "reached".to_string()
                },
            ]
        })
        .collect();
    let mut h = table(
        &[
            "Process",
            "Final Pc (kPa)",
            "Final Sw",
            "Trapped Sn",
            "Breakthrough Pc (kPa)",
            "Points",
            "Stop",
        ],
        &rows,
    );
    h.push(subheading("Events by mechanism"));
    let counts: Vec<&EventCounts> = r.processes.iter().map(|p| &p.events).collect();
    let labels: Vec<String> = (0..kinds.len()).map(|i| process_label(&kinds, i)).collect();
    let mut headers: Vec<&str> = vec!["Mechanism"];
    headers.extend(labels.iter().map(|s| s.as_str()));
    h.push(table(&headers, &event_rows(&counts)));
    h
}

fn quality(q: &FitQuality) -> (String, String) {
    (number(q.rmse, 3), opt(q.rmse_ln, 3))
}

fn fits(r: &RunResults) -> Html {
    let e = &r.end_points;
    let label = &r.study.fluids.nonaqueous_label;
    let mut h = key_values(&[
        (
            "Swi, water saturation after primary drainage",
            opt(e.swi, 4),
        ),
        (
            "Sni, non-aqueous saturation after primary drainage",
            opt(r.sni, 4),
        ),
        ("Snr, trapped after the first imbibition", opt(e.snr, 4)),
        (
            "Non-aqueous saturation left after the first imbibition",
            opt(r.sn_end_imbibition, 4),
        ),
        (
            "krw at the end of the first imbibition",
            opt(e.krw_at_snr, 4),
        ),
        ("krn at the end of primary drainage", opt(e.krn_at_swi, 4)),
        (
            "Land coefficient C = 1/Snr − 1/Sni (Land 1968)",
            opt(e.land_coefficient, 4),
        ),
    ]);
    let kinds: Vec<ProcessKind> = r.outcomes.iter().map(|o| o.kind).collect();
    if r.fits.is_empty() {
        h.push(subheading("Relative-permeability fits"));
        h.push(paragraph(
            "No process has enough computed relative-permeability points for a fit.",
        ));
    }
    for pf in &r.fits {
        let name = if pf.process >= 1 && pf.process <= kinds.len() {
            process_label(&kinds, pf.process - 1)
        } else {
            format!("{} {}", pf.process, pf.kind.as_str())
        };
        h.push(subheading(&format!(
            "Relative-permeability fits, {name} (Swi {}, Sor {})",
            number(pf.swi, 3),
            number(pf.sor, 3)
        )));
        let mut rows: Vec<Vec<String>> = Vec::new();
        for (phase, corey, let_fit) in [
            ("water", &pf.corey_water, &pf.let_water),
            (label.as_str(), &pf.corey_nonaqueous, &pf.let_nonaqueous),
        ] {
            rows.push(match corey {
                Fitted::Ok(c) => {
                    let (rmse, rmse_ln) = quality(&c.quality);
                    vec![
                        phase.to_string(),
                        "Corey".into(),
                        format!(
                            "kr_max {}, exponent {}",
                            number(c.params.kr_max, 4),
                            number(c.params.exponent, 4)
                        ),
                        rmse,
                        rmse_ln,
                    ]
                }
                Fitted::Failed { error } => vec![
                    phase.to_string(),
                    "Corey".into(),
                    format!("not fitted: {error}"),
                    "n/a".into(),
                    "n/a".into(),
                ],
            });
            rows.push(match let_fit {
                Fitted::Ok(l) => {
                    let (rmse, rmse_ln) = quality(&l.quality);
                    let mut p = format!(
                        "kr_max {}, L {}, E {}, T {}",
                        number(l.params.kr_max, 4),
                        number(l.params.l, 4),
                        number(l.params.e, 4),
                        number(l.params.t, 4)
                    );
                    if l.at_bound {
                        p.push_str(" (a parameter at its bound)");
                    }
                    vec![phase.to_string(), "LET".into(), p, rmse, rmse_ln]
                }
                Fitted::Failed { error } => vec![
                    phase.to_string(),
                    "LET".into(),
                    format!("not fitted: {error}"),
                    "n/a".into(),
                    "n/a".into(),
                ],
            });
        }
        h.push(table(
            &[
                "Phase",
                "Model",
                "Parameters",
                "RMSE of kr",
                "RMSE of ln kr",
            ],
            &rows,
        ));
    }
    if !r.fits.is_empty() {
        h.push(note(
            "Modified Corey power law (Corey 1954) and LET correlation (Lomeland, Ebeltoft \
             & Thomas 2005), least squares in kr, on the normalised saturation \
             Swn = (Sw − Swi)/(1 − Swi − Sor).",
        ));
    }
    h.push(subheading("Archie exponents"));
    let archie_row = |name: &str, f: Option<&Fitted<network_core::fit::ArchieFit>>| match f {
        Some(Fitted::Ok(a)) => vec![
            name.to_string(),
            number(a.exponent, 4),
            number(a.prefactor, 4),
            a.n_points.to_string(),
            number(a.rmse_ln, 3),
        ],
        Some(Fitted::Failed { error }) => vec![
            name.to_string(),
            format!("not fitted: {error}"),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
        ],
        None => vec![
            name.to_string(),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
        ],
    };
    let a = r.archie.as_ref();
    h.push(table(
        &["Exponent", "Value", "Prefactor", "Points", "RMSE ln"],
        &[
            archie_row("cementation m, F = a φ^(−m)", a.map(|a| &a.cementation_m)),
            archie_row(
                "saturation n, RI = b Sw^(−n), primary drainage",
                a.map(|a| &a.saturation_n),
            ),
        ],
    ));
    h
}

fn wettability(r: &RunResults) -> Html {
    match &r.wettability_indices {
        Some(w) => {
            let mut h = key_values(&[
                ("Amott water index Iw", number(w.amott_water, 4)),
                ("Amott oil index Io", number(w.amott_oil, 4)),
                ("Amott–Harvey index Iw − Io", number(w.amott_harvey, 4)),
                ("USBM index log10(A1/A2)", number(w.usbm, 4)),
            ]);
            h.push(note(
                "Computed from the simulated imbibition and secondary-drainage curves; \
                 n/a where a curve or an area is missing.",
            ));
            h
        }
        None => paragraph("n/a: no imbibition was run."),
    }
}

fn ganglia(r: &RunResults) -> Html {
    let label = &r.study.fluids.nonaqueous_label;
    let Some(g) = &r.ganglion_stats else {
        return paragraph("n/a: no imbibition was run.");
    };
    let pv = r.pore_volume_m3;
    let mut h = key_values(&[
        ("Number of trapped ganglia", g.count.to_string()),
        ("Total trapped volume (m³)", number(g.total_volume_m3, 4)),
        (
            "Total trapped volume (fraction of pore volume)",
            if pv > 0.0 {
                number(g.total_volume_m3 / pv, 4)
            } else {
                "n/a".into()
            },
        ),
        ("Mean volume (m³)", number(g.mean_volume_m3, 4)),
        ("Largest volume (m³)", number(g.max_volume_m3, 4)),
    ]);
    if !g.pores_histogram.is_empty() {
        let rows: Vec<Vec<String>> = g
            .pores_histogram
            .iter()
            .enumerate()
            .map(|(k, c)| {
                let lo = 1u64 << k;
                let hi = (1u64 << (k + 1)) - 1;
                let range = if k == 0 {
                    "0–1".to_string()
                } else {
                    format!("{lo}–{hi}")
                };
                vec![range, c.to_string()]
            })
            .collect();
        h.push(subheading("Ganglia by number of pores"));
        h.push(table(&["Pores", "Ganglia"], &rows));
        h.push(note(&format!(
            "Trapped clusters of {label} at the end of the first imbibition; the first bin \
             also holds ganglia held in throats only."
        )));
    }
    h
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escape_covers_markup_quotes_and_control_characters() {
        assert_eq!(
            escape("a<b & \"c\" 'd'>"),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;"
        );
        // Tab and line breaks stay; other C0 controls (invalid in XML) go.
        assert_eq!(escape("x\ty\nz\u{1}\u{7f}"), "x\ty\nz\u{FFFD}\u{FFFD}");
    }

    #[test]
    fn page_lists_sections_with_matching_anchors_and_escapes_titles() {
        let mut p = Page::new("Run <1>");
        p.subtitle("a & b")
            .lead(caution())
            .section("First & only", paragraph("x < y"))
            .section(
                "Second",
                table(&["k", "v"], &[vec!["a".into(), "1.5".into()]]),
            )
            .footer("end");
        let html = p.render();
        assert!(html.starts_with("<!DOCTYPE html>"));
        assert!(html.contains("<title>Run &lt;1&gt;</title>"));
        assert!(html.contains("<a href=\"#section-1\">First &amp; only</a>"));
        assert!(html.contains("<section id=\"section-2\">"));
        assert!(html.contains("<p>x &lt; y</p>"));
        // Numbers are right-aligned, text is not.
        assert!(html.contains("<td>a</td><td class=\"num\">1.5</td>"));
        assert!(html.contains("class=\"caution\""));
        assert_eq!(html.matches("<main>").count(), 1);
        assert!(html.trim_end().ends_with("</html>"));
    }

    #[test]
    fn figure_inlines_svg_without_declaration_or_namespace_address() {
        let svg = "<?xml version=\"1.0\"?>\n<svg width=\"10\" height=\"10\" viewBox=\"0 0 10 10\" xmlns=\"http://www.w3.org/2000/svg\"><rect/></svg>";
        let h = figure(svg, "A & B");
        let s = h.as_str();
        assert!(!s.contains("<?xml") && !s.contains("http"));
        assert!(s.contains("<svg role=\"img\" aria-label=\"A &amp; B\" width=\"10\""));
        assert!(s.contains("<figcaption>A &amp; B</figcaption>"));
    }

    #[test]
    fn element_names_are_restricted_to_safe_characters() {
        let h = Html::element("p onclick=\"x\"", Some("a\"b"), Html::text("<t>"));
        assert_eq!(h.as_str(), "<ponclickx class=\"ab\">&lt;t&gt;</ponclickx>");
    }

    #[test]
    fn numbers_print_with_significant_digits_and_inputs_as_written() {
        assert_eq!(number(0.006113, 4), "0.006113");
        assert_eq!(number(115.23, 4), "115.2");
        assert_eq!(number(-100.0, 4), "-100.0");
        assert_eq!(number(f64::INFINITY, 4), "∞");
        assert_eq!(input_number(0.03), "0.03");
        assert_eq!(input_number(1e-9), "1e-9");
        assert_eq!(input_number(f64::NAN), "n/a");
    }
}
