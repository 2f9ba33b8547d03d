//! Figures, tables, HTML report and 3-D states of one real small run
//! (a seeded 6×6×6 lattice, primary drainage, imbibition with a partly
//! oil-wet network, secondary drainage), checked by reading them back.

use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;
use std::sync::LazyLock;

use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::end_points::Fitted;
use network_core::run::{RunResults, run_study};
use network_core::study::Study;
use network_report::html::{CAUTION_TEXT, escape, number};
use network_report::plot::{Series, render_svg};
use network_report::run_files::{curves_csv, profiles_csv};
use network_report::saturation_tables::parse_csv;
use network_report::saturation_tables::parse_keyword_columns;
use network_report::vtk::{VtkEncoding, VtkError, VtkOptions};
use network_report::{
    ArtifactOptions, ReportError, run_figures, run_report, saturation_tables, write_run_artifacts,
    write_vtp,
};

/// A network name that needs escaping everywhere it is printed.
const NAME: &str = "lattice <6x6x6> & \"seed 3\"";

const STUDY: &str = r#"
network = "unused"
seed = 2
[fluids]
nonaqueous_label = "CO2"
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [40.0, 60.0]
oil_wet_fraction = 0.3
oil_wet_advancing_contact_angle_deg = [110.0, 140.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
pc_steps = 30
kr_points = 10
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
pc_steps = 30
kr_points = 10
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
pc_steps = 30
kr_points = 10
"#;

struct Run {
    network: Network,
    results: RunResults,
}

static RUN: LazyLock<Run> = LazyLock::new(|| {
    let spec = LatticeSpec {
        nx: 6,
        ny: 6,
        nz: 6,
        seed: 3,
        ..LatticeSpec::default()
    };
    let (mut info, pores, throats) = generate(&spec, &Silent).expect("lattice").into_parts();
    info.name = NAME.to_string();
    let network = Network::new(info, pores, throats).expect("valid");
    let study = Study::parse(STUDY).expect("study");
    let mut results = run_study(&network, &study, &Silent);
    results.network.hash = network_core::io::network_hash(&network);
    Run { network, results }
});

fn series<'a>(s: &'a [Series], label: &str) -> &'a Series {
    s.iter()
        .find(|x| x.label == label)
        .unwrap_or_else(|| panic!("no series {label:?} in {:?}", labels(s)))
}

fn labels(s: &[Series]) -> Vec<&str> {
    s.iter().map(|x| x.label.as_str()).collect()
}

#[test]
fn the_run_exercises_every_report_part() {
    // The fixture must hold what the other tests check: three processes
    // with kr points, trapped ganglia, oil layers, a finite Archie n.
    let r = &RUN.results;
    assert_eq!(r.outcomes.len(), 3);
    for o in &r.outcomes {
        assert!(o.points.iter().filter(|p| p.flow.is_some()).count() >= 5);
    }
    assert!(!r.ganglia.is_empty());
    assert!(r.end_states[1].layers.iter().any(|&l| l != 0));
    assert!(matches!(
        r.archie.as_ref().map(|a| &a.saturation_n),
        Some(Fitted::Ok(_))
    ));
}

#[test]
fn figures_hold_every_process_series_with_the_run_data() {
    let r = &RUN.results;
    let figs = run_figures(r);
    let names: Vec<&str> = figs.iter().map(|f| f.name).collect();
    assert_eq!(
        names,
        [
            "pc-sw",
            "pc-sw-zoom",
            "kr-sw",
            "kr-sw-log",
            "fw-sw",
            "ri-sw",
            "ganglion-sizes",
            "sw-profile"
        ]
    );
    let procs = ["1 primary drainage", "2 imbibition", "3 secondary drainage"];

    // (a) Pc in kPa at every recorded point.
    let pc = &figs[0].spec;
    assert!(pc.y_label.contains("(kPa)"), "{}", pc.y_label);
    assert_eq!(labels(&pc.series), procs);
    for (s, o) in pc.series.iter().zip(&r.outcomes) {
        assert_eq!(s.x.len(), o.points.len());
        for ((x, y), p) in s.x.iter().zip(&s.y).zip(&o.points) {
            assert_eq!(*x, p.saturation.sw);
            // kPa = Pa / 1000 (unit definition).
            assert!((y * 1e3 - p.pc_pa).abs() <= 1e-9 * p.pc_pa.abs().max(1.0));
        }
    }

    // (a') The same series on a zoomed Pc axis that keeps Pc = 0 and
    // stops well short of the full range (the imposed ±100 kPa ends).
    let zoom = &figs[1].spec;
    assert_eq!(zoom.series, pc.series);
    let (lo, hi) = zoom.y_range.expect("zoomed range");
    let top = pc
        .series
        .iter()
        .flat_map(|s| s.y.iter().copied())
        .fold(f64::NEG_INFINITY, f64::max);
    assert!(
        lo <= 0.0 && hi > 0.0 && hi < top / 3.0,
        "{lo} … {hi} of {top}"
    );

    // (b), (c) krw and k_r,CO2 per process at the solved points only.
    for f in &figs[2..4] {
        for (i, name) in procs.iter().enumerate() {
            let pts: Vec<_> = r.outcomes[i]
                .points
                .iter()
                .filter_map(|p| p.flow.map(|fl| (p.saturation.sw, fl)))
                .collect();
            let w = series(&f.spec.series, &format!("k_{{rw}}, {name}"));
            let n = series(&f.spec.series, &format!("k_{{r,CO2}}, {name}"));
            assert_eq!(w.x, pts.iter().map(|p| p.0).collect::<Vec<_>>());
            assert_eq!(w.y, pts.iter().map(|p| p.1.krw).collect::<Vec<_>>());
            assert_eq!(n.y, pts.iter().map(|p| p.1.krn).collect::<Vec<_>>());
            // Same colour for both phases of one process.
            assert_eq!(w.colour, n.colour);
        }
    }
    assert_eq!(figs[2].spec.y_scale, network_report::plot::Scale::Linear);
    assert_eq!(figs[3].spec.y_scale, network_report::plot::Scale::Log);

    // (d) RI per process and the Archie line RI = Sw^(−n).
    // (c) Fractional flow: the markers are fw = (krw/μw)/(krw/μw + krn/μn)
    // at the imbibition's kr points (definition, Buckley & Leverett 1942),
    // and the Welge tangent passes through the shock-front marker.
    let fw = &figs[4].spec;
    let (mu_w, mu_n) = (
        r.study.fluids.water_viscosity_pa_s,
        r.study.fluids.nonaqueous_viscosity_pa_s,
    );
    let mut expected = Vec::new();
    for p in &r.outcomes[1].points {
        if let Some(f) = p.flow {
            let (a, b) = (f.krw / mu_w, f.krn / mu_n);
            if a + b > 0.0 {
                expected.push((p.saturation.sw, a / (a + b)));
            }
        }
    }
    assert_eq!(fw.series[1].x.len(), expected.len());
    for ((x, y), (s, f)) in fw.series[1].x.iter().zip(&fw.series[1].y).zip(&expected) {
        assert_eq!(x, s);
        assert!((y - f).abs() < 1e-12, "{y} vs {f}");
    }
    let (t, front) = (&fw.series[2], &fw.series[3]);
    let slope = (t.y[1] - t.y[0]) / (t.x[1] - t.x[0]);
    let on_line = t.y[0] + slope * (front.x[0] - t.x[0]);
    assert!((on_line - front.y[0]).abs() < 1e-9);
    assert!(
        front.x[0] > t.x[0] && front.y[0] > 0.0 && front.y[0] <= 1.0,
        "{:?} {:?}",
        t,
        front
    );

    let ri = &figs[5].spec;
    for name in procs {
        series(&ri.series, name);
    }
    let Some(Fitted::Ok(n_fit)) = r.archie.as_ref().map(|a| &a.saturation_n) else {
        unreachable!("checked by the_run_exercises_every_report_part")
    };
    let archie = ri
        .series
        .iter()
        .find(|s| s.label.starts_with("Archie"))
        .expect("Archie line");
    assert!(archie.label.contains(&format!("{:.3}", n_fit.exponent)));
    // Archie (1942) with b = 1: RI(1) = 1 and RI(Sw) = Sw^(−n) at every sample.
    assert_eq!(*archie.x.last().unwrap(), 1.0);
    assert!((archie.y.last().unwrap() - 1.0).abs() < 1e-12);
    for (s, v) in archie.x.iter().zip(&archie.y) {
        let expect = (-n_fit.exponent * s.ln()).exp();
        assert!((v - expect).abs() <= 1e-9 * expect, "{s} {v} {expect}");
    }

    // (e) Ganglion sizes: the bins add up to the number of ganglia.
    let g = &figs[6].spec;
    assert_eq!(g.series.len(), 1);
    let total: f64 = g.series[0].y.iter().sum();
    assert_eq!(total as usize, r.ganglia.len());
    // Bin k starts at 2^k pores.
    assert_eq!(g.series[0].x[..3], [1.0, 2.0, 4.0]);

    // Every figure renders, and every legend label reaches the SVG.
    for f in &figs {
        let svg = render_svg(&f.spec).expect("renders");
        for s in f.spec.series.iter().filter(|s| !s.label.is_empty()) {
            // Subscript markup is drawn as separate text runs.
            for piece in s.label.split(['_', '{', '}']).filter(|p| !p.is_empty()) {
                assert!(svg.contains(&escape(piece)), "{}: {}", f.name, s.label);
            }
        }
    }
}

fn element_text(n: roxmltree::Node<'_, '_>) -> String {
    n.descendants()
        .filter(|d| d.is_text())
        .map(|d| d.text().unwrap_or(""))
        .collect()
}

#[test]
fn html_report_is_one_well_formed_file_with_every_figure_and_the_caution() {
    let r = &RUN.results;
    let figs = run_figures(r);
    let html = run_report(r, &figs);

    // One <svg> element per figure, balanced.
    assert_eq!(html.matches("<svg").count(), figs.len());
    assert_eq!(html.matches("</svg>").count(), figs.len());
    // Nothing fetched from anywhere: no web address at all, no scripts,
    // no external resources.
    for bad in [
        "http://", "https://", "<script", "src=", "@import", "url(", "<link",
    ] {
        assert!(!html.contains(bad), "report contains {bad:?}");
    }
    for t in CAUTION_TEXT {
        assert!(html.contains(&escape(t)), "caution sentence missing: {t}");
    }
    assert!(html.contains("special core analysis"));
    // The network name is escaped wherever it appears, never raw.
    assert!(!html.contains(NAME));
    assert!(html.contains(&escape(NAME)));

    // The markup is well-formed XML, so a strict parser reads it.
    let doc = roxmltree::Document::parse_with_options(
        &html,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..Default::default()
        },
    )
    .expect("well-formed");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "html");
    // Every link is an anchor to a section of the page.
    let ids: BTreeSet<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("id"))
        .collect();
    let hrefs: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("href"))
        .collect();
    assert!(!hrefs.is_empty());
    for h in hrefs {
        let target = h.strip_prefix('#').expect("in-page link");
        assert!(ids.contains(target), "{h}");
    }
    let headings: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("h2"))
        .map(element_text)
        .collect();
    for h in [
        "Inputs",
        "Network",
        "Process results",
        "End points and fitted models",
        "Wettability indices",
        "Trapped ganglia",
        "Figures",
        "Warnings",
    ] {
        assert!(
            headings.iter().any(|x| x == h),
            "section {h} in {headings:?}"
        );
    }
    // The key-results box comes first: after the caution, before the
    // contents, holding Swi and Snr as the end points give them.
    let key = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("key-results"))
        .expect("key-results box");
    let nav = doc
        .descendants()
        .find(|n| n.has_tag_name("nav"))
        .expect("nav");
    assert!(key.range().start < nav.range().start);
    let key_rows: BTreeMap<String, String> = key
        .descendants()
        .filter(|n| n.has_tag_name("tr"))
        .filter_map(|tr| {
            let th = tr.children().find(|c| c.has_tag_name("th"))?;
            let td = tr.children().find(|c| c.has_tag_name("td"))?;
            Some((element_text(th), element_text(td)))
        })
        .collect();
    let fixed = network_report::key_results::fixed;
    assert_eq!(
        key_rows["Swi (end of primary drainage)"],
        fixed(r.end_points.swi, 4)
    );
    assert_eq!(
        key_rows["Snr (trapped, end of imbibition)"],
        fixed(r.end_points.snr, 4)
    );
    // Subscripts are markup, never raw underscores or braces.
    assert!(html.contains("S<sub>wi</sub>"));
    assert!(!html.contains("_{"), "raw subscript markup in the report");

    // Rows of the two-column tables: name → value.
    let kv: BTreeMap<String, String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("tr"))
        .filter_map(|tr| {
            let th = tr.children().find(|c| c.has_tag_name("th"))?;
            let td = tr.children().find(|c| c.has_tag_name("td"))?;
            Some((element_text(th), element_text(td)))
        })
        .collect();
    let w = r.wettability_indices.as_ref().expect("indices");
    // NaN prints as n/a; the oil index is 0 or NaN depending on the curve.
    let expect = |v: f64| {
        if v.is_nan() {
            "n/a".to_string()
        } else {
            number(v, 4)
        }
    };
    assert_eq!(kv["USBM index log10(A1/A2)"], expect(w.usbm));
    assert_eq!(kv["Amott oil index Io"], expect(w.amott_oil));
    assert_eq!(kv["Pores"], "216");
    assert_eq!(kv["Name"], NAME);
    let perm = r
        .single_phase
        .as_ref()
        .expect("permeability")
        .permeability_md;
    assert_eq!(kv["Permeability (mD)"], number(perm, 4));
    assert_eq!(kv["Number of trapped ganglia"], r.ganglia.len().to_string());
    // Each figure has its caption.
    let captions: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("figcaption"))
        .map(element_text)
        .collect();
    assert_eq!(captions.len(), figs.len());
    for (k, (c, f)) in captions.iter().zip(&figs).enumerate() {
        assert!(c.starts_with(&format!("Figure {}. ", k + 1)), "{c}");
        assert!(
            c.contains(&network_report::plot::plain(&f.caption))
                && c.contains(&format!("{}.svg", f.name)),
            "{c}"
        );
    }
}

#[test]
fn number_prints_missing_values_as_na() {
    assert_eq!(number(f64::NAN, 4), "n/a");
    assert_eq!(number(0.25, 3), "0.250");
    assert_eq!(number(131.647, 4), "131.6");
    assert_eq!(number(1.5e-7, 3), "1.50e-7");
}

/// The values of one array of a parsed `.vtp` file.
#[derive(Clone, Debug)]
enum Data {
    Ints(Vec<i64>),
    Floats(Vec<f64>),
    Strings(Vec<String>),
}

/// One parsed `.vtp` file: piece counts and arrays by section and name.
struct Vtp {
    points: usize,
    lines: usize,
    /// The `format` of every array (all the same).
    format: String,
    /// `(section, name)` → (type, components, values).
    arrays: BTreeMap<(String, String), (String, usize, Data)>,
}

fn find(haystack: &[u8], needle: &[u8]) -> Option<usize> {
    haystack.windows(needle.len()).position(|w| w == needle)
}

/// Decodes `count` little-endian values of VTK type `ty` from `raw`.
fn decode_raw(ty: &str, raw: &[u8]) -> Data {
    let size = match ty {
        "Int8" | "String" => 1,
        "Int32" => 4,
        "Int64" | "Float64" => 8,
        other => panic!("unexpected type {other}"),
    };
    assert_eq!(raw.len() % size, 0, "{ty}: {} bytes", raw.len());
    let words = raw.chunks_exact(size);
    match ty {
        "Int8" => Data::Ints(raw.iter().map(|&b| b as i8 as i64).collect()),
        "Int32" => Data::Ints(
            words
                .map(|w| i32::from_le_bytes(w.try_into().unwrap()) as i64)
                .collect(),
        ),
        "Int64" => Data::Ints(
            words
                .map(|w| i64::from_le_bytes(w.try_into().unwrap()))
                .collect(),
        ),
        "Float64" => Data::Floats(
            words
                .map(|w| f64::from_le_bytes(w.try_into().unwrap()))
                .collect(),
        ),
        _ => Data::Strings(split_strings(raw)),
    }
}

/// Strings stored back to back, each ended by a zero byte.
fn split_strings(bytes: &[u8]) -> Vec<String> {
    assert_eq!(bytes.last(), Some(&0), "strings end with a zero byte");
    bytes[..bytes.len() - 1]
        .split(|&b| b == 0)
        .map(|s| String::from_utf8(s.to_vec()).expect("UTF-8"))
        .collect()
}

/// Reads a `.vtp` file independently of the writer: the XML with
/// `roxmltree` (for a binary file, the part before `<AppendedData`), then
/// each array from its text or from the raw block at its offset (a UInt64
/// byte count, then the little-endian values).
fn parse_vtp(bytes: &[u8]) -> Vtp {
    let (xml, raw) = match find(bytes, b"<AppendedData") {
        Some(at) => {
            let mut xml = std::str::from_utf8(&bytes[..at])
                .expect("ASCII header")
                .to_string();
            xml.push_str("</VTKFile>");
            let open = b"<AppendedData encoding=\"raw\">\n_";
            assert_eq!(&bytes[at..at + open.len()], open);
            (xml, Some(&bytes[at + open.len()..]))
        }
        None => (std::str::from_utf8(bytes).expect("text").to_string(), None),
    };
    let doc = roxmltree::Document::parse(&xml).expect("well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "VTKFile");
    assert_eq!(root.attribute("type"), Some("PolyData"));
    assert_eq!(root.attribute("byte_order"), Some("LittleEndian"));
    assert_eq!(root.attribute("header_type"), Some("UInt64"));
    let pieces: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("Piece"))
        .collect();
    assert_eq!(pieces.len(), 1);
    let piece = pieces[0];
    let count = |a: &str| -> usize { piece.attribute(a).expect(a).parse().expect(a) };
    assert_eq!(count("NumberOfVerts"), 0);
    assert_eq!(count("NumberOfPolys"), 0);
    let mut arrays = BTreeMap::new();
    let mut formats = BTreeSet::new();
    // The end of the last array read from the raw block: arrays tile it.
    let mut raw_end = 0usize;
    for a in doc
        .descendants()
        .filter(|n| n.has_tag_name("DataArray") || n.has_tag_name("Array"))
    {
        let format = a.attribute("format").expect("format").to_string();
        let section = a.parent_element().unwrap().tag_name().name().to_string();
        let name = a.attribute("Name").expect("named array").to_string();
        let ty = a.attribute("type").unwrap().to_string();
        assert_eq!(a.has_tag_name("Array"), ty == "String", "{name}");
        let comps = a
            .attribute("NumberOfComponents")
            .map_or(1, |c| c.parse().unwrap());
        let data = match format.as_str() {
            "ascii" => {
                let words = a.text().unwrap_or("").split_whitespace();
                match ty.as_str() {
                    "Float64" => Data::Floats(words.map(|w| w.parse().expect("float")).collect()),
                    "String" => {
                        let bytes: Vec<u8> = words
                            .map(|w| w.parse::<i8>().expect("signed char") as u8)
                            .collect();
                        Data::Strings(split_strings(&bytes))
                    }
                    _ => Data::Ints(words.map(|w| w.parse().expect("integer")).collect()),
                }
            }
            "appended" => {
                let raw = raw.expect("an appended block");
                let offset: usize = a.attribute("offset").expect("offset").parse().unwrap();
                assert_eq!(offset, raw_end, "{name}: arrays follow each other");
                let n = u64::from_le_bytes(raw[offset..offset + 8].try_into().unwrap()) as usize;
                raw_end = offset + 8 + n;
                decode_raw(&ty, &raw[offset + 8..raw_end])
            }
            other => panic!("unexpected format {other}"),
        };
        if let Data::Strings(s) = &data {
            let tuples: usize = a.attribute("NumberOfTuples").unwrap().parse().unwrap();
            assert_eq!(s.len(), tuples, "{name}");
        }
        formats.insert(format);
        let old = arrays.insert((section, name), (ty, comps, data));
        assert!(old.is_none(), "array written twice");
    }
    if let Some(raw) = raw {
        assert_eq!(&raw[raw_end..], b"\n</AppendedData>\n</VTKFile>\n");
    }
    assert_eq!(formats.len(), 1, "one format per file: {formats:?}");
    Vtp {
        points: count("NumberOfPoints"),
        lines: count("NumberOfLines"),
        format: formats.into_iter().next().unwrap(),
        arrays,
    }
}

impl Vtp {
    fn get(&self, section: &str, name: &str) -> &(String, usize, Data) {
        self.arrays
            .get(&(section.to_string(), name.to_string()))
            .unwrap_or_else(|| panic!("no {section}/{name}"))
    }

    fn len(&self, section: &str, name: &str) -> usize {
        match &self.get(section, name).2 {
            Data::Ints(v) => v.len(),
            Data::Floats(v) => v.len(),
            Data::Strings(v) => v.len(),
        }
    }

    fn f64s(&self, section: &str, name: &str) -> Vec<f64> {
        match self.get(section, name) {
            (ty, _, Data::Floats(v)) if ty == "Float64" => v.clone(),
            other => panic!("{section}/{name} is not Float64: {other:?}"),
        }
    }

    fn ints(&self, section: &str, name: &str) -> Vec<i64> {
        match &self.get(section, name).2 {
            Data::Ints(v) => v.clone(),
            other => panic!("{section}/{name} is not integer: {other:?}"),
        }
    }

    fn strings(&self, name: &str) -> Vec<String> {
        match self.get("FieldData", name) {
            (ty, _, Data::Strings(v)) if ty == "String" => v.clone(),
            other => panic!("FieldData/{name} is not String: {other:?}"),
        }
    }

    /// Every array with its values as bits (NaN compared by bits too).
    fn bits(&self) -> BTreeMap<(String, String), Bits> {
        self.arrays
            .iter()
            .map(|(k, (ty, comps, d))| {
                let (bits, strings) = match d {
                    Data::Ints(v) => (v.iter().map(|&x| x as u64).collect(), Vec::new()),
                    Data::Floats(v) => (v.iter().map(|x| x.to_bits()).collect(), Vec::new()),
                    Data::Strings(s) => (Vec::new(), s.clone()),
                };
                (k.clone(), (ty.clone(), *comps, bits, strings))
            })
            .collect()
    }
}

/// An array as (type, components, numbers as bits, strings).
type Bits = (String, usize, Vec<u64>, Vec<String>);

/// The location word of the field data `array_meanings` for a section.
fn location(section: &str) -> &'static str {
    match section {
        "FieldData" => "field data",
        "PointData" => "point data",
        "CellData" => "cell data",
        "Points" => "points",
        "Lines" => "lines",
        other => panic!("unexpected section {other}"),
    }
}

fn vtk_options(encoding: VtkEncoding, description: &str) -> VtkOptions {
    VtkOptions {
        encoding,
        description: description.to_string(),
    }
}

#[test]
fn vtp_parses_back_with_the_network_counts_and_values_in_both_encodings() {
    let Run { network, results } = &*RUN;
    let n_p = network.n_pores();
    let angles = results.angles.as_ref().expect("angles");
    // A pressure field with missing values (NaN, ∞) written as NaN.
    let mut pressure: Vec<f64> = (0..n_p).map(|i| 100.0 * i as f64).collect();
    pressure[3] = f64::NAN;
    pressure[7] = f64::INFINITY;
    let description = "state <2> & \"imbibition\"\0end";
    for (k, state) in results.end_states.iter().enumerate() {
        let write = |encoding| {
            write_vtp(
                network,
                state,
                Some(angles),
                Some(&pressure),
                &vtk_options(encoding, description),
            )
            .expect("writes")
        };
        let binary = write(VtkEncoding::Binary);
        let ascii = write(VtkEncoding::Ascii);
        assert_eq!(binary, write(VtkEncoding::Binary), "deterministic");
        assert!(binary.len() < ascii.len());
        let vb = parse_vtp(&binary);
        let va = parse_vtp(&ascii);
        assert_eq!(
            (vb.format.as_str(), va.format.as_str()),
            ("appended", "ascii")
        );
        // The same arrays, types and numbers, bit for bit, in both encodings.
        assert_eq!(vb.bits(), va.bits(), "state {k}");
        for v in [&vb, &va] {
            check_state_file(v, network, results, k, &pressure);
            assert_eq!(v.strings("description"), ["state <2> & \"imbibition\" end"]);
        }
    }
    // Without angles, pressure and description those arrays are left out,
    // and array_meanings names only what is there.
    let v = parse_vtp(
        &write_vtp(
            network,
            &results.end_states[1],
            None,
            None,
            &VtkOptions::default(),
        )
        .unwrap(),
    );
    assert_eq!(v.format, "appended", "binary by default");
    assert!(
        !v.arrays.keys().any(|(_, n)| n.starts_with("pressure")
            || n.starts_with("contact")
            || n == "description")
    );
    check_meanings(&v);
    // The first imbibition's state has oil layers (code 2).
    let mut occ = v.ints("PointData", "occupancy");
    occ.extend(v.ints("CellData", "occupancy"));
    assert!(occ.contains(&2) && occ.contains(&1) && occ.contains(&0));
}

/// `array_meanings` holds one line per array present, in file order:
/// name, location, unit, meaning, codes.
fn check_meanings(v: &Vtp) {
    let lines = v.strings("array_meanings");
    let present: BTreeSet<(String, String)> = v
        .arrays
        .keys()
        .map(|(s, n)| (location(s).to_string(), n.clone()))
        .collect();
    let named: BTreeSet<(String, String)> = lines
        .iter()
        .map(|l| {
            let f: Vec<&str> = l.split(" | ").collect();
            assert_eq!(f.len(), 5, "{l}");
            assert!(f.iter().all(|x| !x.is_empty()), "{l}");
            (f[1].to_string(), f[0].to_string())
        })
        .collect();
    assert_eq!(named.len(), lines.len(), "one line per array");
    assert_eq!(named, present);
    // The codes are stated where there are codes.
    for l in &lines {
        if l.starts_with("occupancy") {
            assert!(l.contains("0 water, 1 non-aqueous phase in the centre, 2 water"));
        }
        if l.starts_with("pressure") {
            assert!(l.ends_with("| NaN where the water does not flow"));
        }
        if l.starts_with("boundary") {
            assert!(l.ends_with("| 0 interior, 1 inlet, 2 outlet"));
        }
    }
}

/// Every array of the file written for end state `k` against the network,
/// the state and the pressure given.
fn check_state_file(v: &Vtp, network: &Network, results: &RunResults, k: usize, pressure: &[f64]) {
    let (n_p, n_t) = (network.n_pores(), network.n_throats());
    let state = &results.end_states[k];
    assert_eq!(v.points, n_p);
    assert_eq!(v.lines, n_t);
    check_meanings(v);
    assert_eq!(v.strings("ganglion_version"), [env!("CARGO_PKG_VERSION")]);
    // Types: small codes signed (mapped through colour maps), ids 32-bit,
    // indices 32-bit while they fit.
    for (sec, name, ty) in [
        ("PointData", "radius_m", "Float64"),
        ("PointData", "occupancy", "Int8"),
        ("CellData", "occupancy", "Int8"),
        ("PointData", "boundary", "Int8"),
        ("PointData", "ganglion_id", "Int32"),
        ("CellData", "ganglion_id", "Int32"),
        ("PointData", "pressure", "Float64"),
        ("Lines", "connectivity", "Int32"),
        ("Lines", "offsets", "Int32"),
        ("Points", "coordinates_m", "Float64"),
    ] {
        assert_eq!(v.get(sec, name).0, ty, "{sec}/{name}");
    }
    // Lengths: one value per pore / throat (three per point).
    assert_eq!(v.get("Points", "coordinates_m").1, 3);
    assert_eq!(v.len("Points", "coordinates_m"), 3 * n_p);
    for (s, n) in [("PointData", n_p), ("CellData", n_t)] {
        for name in ["radius_m", "occupancy", "ganglion_id", "contact_angle_deg"] {
            assert_eq!(v.len(s, name), n, "{s}/{name}");
        }
    }
    assert_eq!(v.len("PointData", "pressure"), n_p);
    assert_eq!(v.len("PointData", "boundary"), n_p);
    assert_eq!(v.len("Lines", "connectivity"), 2 * n_t);
    assert_eq!(v.len("Lines", "offsets"), n_t);
    // Values read back bit for bit, radii positive.
    let rp = v.f64s("PointData", "radius_m");
    let rt = v.f64s("CellData", "radius_m");
    assert_eq!(rp, network.pores().radius);
    assert_eq!(rt, network.throats().radius);
    assert!(rp.iter().chain(&rt).all(|&r| r > 0.0));
    let coords = v.f64s("Points", "coordinates_m");
    for i in 0..n_p {
        assert_eq!(coords[3 * i..3 * i + 3], network.pores().centre(i));
    }
    let conn = v.ints("Lines", "connectivity");
    for (t, ends) in network.throats().pores.iter().enumerate() {
        assert_eq!(conn[2 * t..2 * t + 2], [ends[0] as i64, ends[1] as i64]);
    }
    let offsets = v.ints("Lines", "offsets");
    assert_eq!(offsets, (1..=n_t as i64).map(|k| 2 * k).collect::<Vec<_>>());
    // Occupancy codes matching the state.
    let mut occ = v.ints("PointData", "occupancy");
    occ.extend(v.ints("CellData", "occupancy"));
    for (e, &o) in occ.iter().enumerate() {
        let expect = if state.oil[e] {
            1
        } else if state.layers[e] != 0 {
            2
        } else {
            0
        };
        assert_eq!(o, expect, "element {e}");
    }
    // Angles: the run's advancing angles in degrees.
    let mut angle = v.f64s("PointData", "contact_angle_deg");
    angle.extend(v.f64s("CellData", "contact_angle_deg"));
    let advancing = &results.angles.as_ref().unwrap().advancing;
    for (a, r) in angle.iter().zip(advancing) {
        assert_eq!(*a, r.to_degrees());
    }
    assert!(angle.iter().all(|a| (0.0..=180.0).contains(a)));
    let boundary = v.ints("PointData", "boundary");
    for (b, expect) in boundary.iter().zip(&network.pores().boundary) {
        assert_eq!(*b, *expect as u8 as i64);
    }
    assert!(boundary.contains(&1) && boundary.contains(&2));
    // Missing pressures (NaN, ∞ given) are NaN; the others as given.
    let p = v.f64s("PointData", "pressure");
    for (i, (&got, &given)) in p.iter().zip(pressure).enumerate() {
        if given.is_finite() {
            assert_eq!(got, given, "pore {i}");
        } else {
            assert!(got.is_nan(), "pore {i}: {got}");
        }
    }
    assert_eq!(p.iter().filter(|x| x.is_nan()).count(), 2);
    // Ganglion ids: -1 or 0..count, and for the first imbibition exactly
    // the run's ganglia, with their pore and throat counts.
    let mut gid = v.ints("PointData", "ganglion_id");
    gid.extend(v.ints("CellData", "ganglion_id"));
    for (e, &g) in gid.iter().enumerate() {
        assert_eq!(g == -1, state.ganglion[e] == u32::MAX, "element {e}");
    }
    let distinct: BTreeSet<i64> = gid.iter().copied().filter(|&g| g >= 0).collect();
    assert!(gid.iter().all(|&g| g >= -1));
    // Ids are dense from 0.
    assert_eq!(
        distinct.iter().copied().collect::<Vec<_>>(),
        (0..distinct.len() as i64).collect::<Vec<_>>()
    );
    if k == 1 {
        assert_eq!(distinct.len(), results.ganglia.len());
        for g in &results.ganglia {
            let pores = gid[..n_p].iter().filter(|&&x| x == g.id as i64).count();
            let throats = gid[n_p..].iter().filter(|&&x| x == g.id as i64).count();
            assert_eq!((pores, throats), (g.pores, g.throats), "ganglion {}", g.id);
        }
    }
}

#[test]
fn vtp_refuses_columns_of_the_wrong_length() {
    let Run { network, results } = &*RUN;
    let opts = VtkOptions::default();
    let short = vec![0.0; network.n_pores() - 1];
    let e = write_vtp(network, &results.end_states[0], None, Some(&short), &opts).unwrap_err();
    assert_eq!(
        e,
        VtkError::LengthMismatch {
            what: "pressure",
            expected: network.n_pores(),
            found: network.n_pores() - 1
        }
    );
    let mut state = results.end_states[0].clone();
    state.oil.pop();
    assert!(matches!(
        write_vtp(network, &state, None, None, &opts),
        Err(VtkError::LengthMismatch {
            what: "state.oil",
            ..
        })
    ));
}

#[test]
fn tables_read_back_equal_monotone_and_spanning_the_simulated_range() {
    let r = &RUN.results;
    let files = saturation_tables(r, 15, Default::default()).expect("tables");
    let names: Vec<&str> = files.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(
        names,
        [
            "table-drainage.csv",
            "table-drainage.inc",
            "table-imbibition.csv",
            "table-imbibition.inc"
        ]
    );
    for (pair, outcome) in files.chunks(2).zip([&r.outcomes[0], &r.outcomes[1]]) {
        let (csv_name, csv) = &pair[0];
        let (_, inc) = &pair[1];
        // Headers name units, the source run and the end-point handling.
        for text in [csv, inc] {
            for needle in [
                "lattice <6x6x6>",
                &r.network.hash,
                &format!("ganglion {}", r.program.version),
                "end points:",
                "CO2",
                "isotonic",
            ] {
                assert!(text.contains(needle), "{csv_name}: {needle:?}");
            }
        }
        assert!(csv.contains("(Pa)") && inc.contains("-- Pc unit: bar"));
        let rows = parse_csv(csv).expect("csv parses");
        let n = rows.len();
        // At most the 15 rows asked for, plus the row at Sw = 1.
        assert!((2..=16).contains(&n), "{n} rows");
        // The row count is stated for the table-dimension setting.
        assert!(
            inc.contains(&format!("-- {n} rows per table")),
            "{csv_name}"
        );
        // A CO2 run: the gas–water pair, SWFN (Sw krw Pc) and SGFN (Sg krg
        // 0), both with every row, Pc in bar.
        let tables = parse_keyword_columns(inc, 3).expect("include parses");
        assert_eq!(tables.len(), 2);
        assert_eq!(
            (tables[0].0.as_str(), tables[1].0.as_str()),
            ("SWFN", "SGFN")
        );
        assert_eq!((tables[0].1.len(), tables[1].1.len()), (n, n));
        for i in 0..n {
            // Sw with 6 decimals, others 7 significant digits (the
            // writer's documented precision).
            let w = &tables[0].1[i];
            let g = &tables[1].1[n - 1 - i];
            assert!((w[0] - rows.sw[i]).abs() <= 5e-7);
            assert!((g[0] - (1.0 - rows.sw[i])).abs() <= 1e-6);
            for (a, b) in [
                (w[1], rows.krw[i]),
                (w[2] * 1e5, rows.pc_pa[i]),
                (g[1], rows.krn[i]),
            ] {
                assert!((a - b).abs() <= 1e-6 * b.abs() + 1e-300, "{a} {b}");
            }
            assert_eq!(g[2], 0.0);
        }
        // Monotone: Sw rising strictly, krw rising, krn and Pc falling.
        for w in 0..n - 1 {
            assert!(rows.sw[w] < rows.sw[w + 1]);
            assert!(rows.krw[w] <= rows.krw[w + 1]);
            assert!(rows.krn[w] >= rows.krn[w + 1]);
            assert!(rows.pc_pa[w] >= rows.pc_pa[w + 1]);
        }
        // Conventions, row by row (common practice for simulator input):
        // the first row at the lowest simulated Sw with krw exactly 0; the
        // last row at Sw = 1 with krn = 0; every other row at a simulated
        // point; every Pc a simulated value.
        let solved: Vec<f64> = outcome
            .points
            .iter()
            .filter(|p| p.flow.is_some())
            .map(|p| p.saturation.sw)
            .collect();
        let lo = solved.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = solved.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        assert_eq!((rows.sw[0], rows.krw[0]), (lo, 0.0));
        assert_eq!((rows.sw[n - 1], rows.krn[n - 1]), (1.0, 0.0));
        for i in 0..n - 1 {
            assert!(solved.contains(&rows.sw[i]), "row {i}: Sw {}", rows.sw[i]);
        }
        let simulated_pc: Vec<f64> = outcome.points.iter().map(|p| p.pc_pa).collect();
        for i in 0..n {
            assert!(
                simulated_pc.contains(&rows.pc_pa[i]),
                "row {i}: Pc {}",
                rows.pc_pa[i]
            );
        }
        if outcome.kind == network_core::study::ProcessKind::Drainage {
            // The entry pressure at Sw = 1: the Pc of the first point where
            // the non-aqueous phase had entered, not the 0 of the start.
            let start = outcome.points[0].saturation.sw;
            let entry = outcome
                .points
                .iter()
                .find(|p| p.saturation.sw < start)
                .unwrap()
                .pc_pa;
            assert!(entry > 0.0);
            assert_eq!(rows.pc_pa[n - 1], entry);
        } else {
            // Imbibition ends at 1 − Snr < 1: a row at Sw = 1 with krw held
            // at its end point.
            assert!(hi < 1.0);
            assert_eq!(rows.sw[n - 2], hi);
            assert_eq!(rows.krw[n - 1], rows.krw[n - 2]);
        }
    }
    // Too few rows requested: the error names the file.
    match saturation_tables(r, 1, Default::default()) {
        Err(ReportError::Table { file, .. }) => assert_eq!(file, "table-drainage.csv"),
        other => panic!("expected a table error, got {other:?}"),
    }
}

#[test]
fn profiles_csv_and_figure_follow_the_recorded_profiles() {
    let r = &RUN.results;
    let layout = r.profile_layout.as_ref().unwrap();
    let n = layout.slabs();
    let csv = profiles_csv(r);
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        "process,kind,step,pc_pa,sw,slab,slab_start_m,slab_end_m,slab_pore_volume_m3,slab_sw,slab_sn_trapped"
    );
    let rows: Vec<Vec<f64>> = lines
        .map(|l| {
            l.split(',')
                .enumerate()
                .filter(|(i, _)| *i != 1)
                .map(|(_, v)| v.parse().unwrap())
                .collect()
        })
        .collect();
    let points: usize = r.outcomes.iter().map(|o| o.points.len()).sum();
    assert_eq!(rows.len(), points * n);
    // Analytic derivation: the slabs partition the pore volume, so the
    // pore-volume-weighted mean of the slab saturations is the point's
    // whole-sample Sw (to the 1e-11 between the engine's incremental and
    // element-by-element sums).
    for chunk in rows.chunks(n) {
        let pv: f64 = chunk.iter().map(|c| c[7]).sum();
        let w: f64 = chunk.iter().map(|c| c[7] * c[8]).sum();
        assert!((w / pv - chunk[0][3]).abs() < 1e-11, "{chunk:?}");
        assert!(chunk.iter().enumerate().all(|(j, c)| c[4] == j as f64));
        assert!(chunk.windows(2).all(|c| c[0][6] == c[1][5]));
    }
    // The figure: the selected steps of every process, the last labelled
    // with the process name and drawn through the last point's profile.
    let figs = run_figures(r);
    let f = figs.iter().find(|f| f.name == "sw-profile").unwrap();
    let expected: usize = r
        .profiles
        .iter()
        .map(|p| network_report::figures::profile_steps(p.len()).len())
        .sum();
    assert_eq!(f.spec.series.len(), expected);
    let labelled: Vec<&Series> = f
        .spec
        .series
        .iter()
        .filter(|s| !s.label.is_empty())
        .collect();
    assert_eq!(labelled.len(), 3);
    assert!(
        labelled[1].label.starts_with("2 imbibition, end"),
        "{}",
        labelled[1].label
    );
    assert_eq!(labelled[1].y, r.profiles[1].last().unwrap().slab_sw);
    assert_eq!(labelled[1].x.len(), n);
}

#[test]
fn interior_columns_appear_in_curves_only_with_a_window() {
    let r = &RUN.results;
    let curves = curves_csv(r);
    assert!(curves.lines().next().unwrap().ends_with(",krw,krn,ri,fw"));
    assert!(r.end_effects.interior.is_none());
    let study = Study::parse(
        r#"
network = "unused"
[output]
interior_window = [0.2, 0.8]
profile_slabs = 4
[flow]
relative_permeability = false
[[process]]
kind = "drainage"
until_sw = 0.7
"#,
    )
    .unwrap();
    let w = run_study(&RUN.network, &study, &Silent);
    let curves = curves_csv(&w);
    let mut lines = curves.lines();
    assert!(
        lines
            .next()
            .unwrap()
            .ends_with(",ri,fw,sw_interior,sn_interior,sn_trapped_interior")
    );
    for (line, prof) in lines.zip(&w.profiles[0]) {
        let cols: Vec<&str> = line.split(',').collect();
        assert_eq!(cols.len(), 18);
        let sw: f64 = cols[15].parse().unwrap();
        assert_eq!(sw, prof.interior.unwrap().sw);
    }
    let html = run_report(&w, &run_figures(&w));
    assert!(html.contains("Interior window 0.2–0.8"), "no window row");
}

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("ganglion-report-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    d
}

#[test]
fn artifacts_are_all_written_and_listed() {
    let Run { network, results } = &*RUN;
    let dir = temp_dir("artifacts");
    let written = write_run_artifacts(
        results,
        network,
        &dir.join("out"),
        &ArtifactOptions {
            png: true,
            vtk: true,
            table_points: 11,
            ..ArtifactOptions::default()
        },
    )
    .expect("written");
    let mut names: Vec<String> = written
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    names.sort();
    let mut expect: Vec<String> = [
        "pc-sw",
        "pc-sw-zoom",
        "kr-sw",
        "kr-sw-log",
        "fw-sw",
        "ri-sw",
        "ganglion-sizes",
        "sw-profile",
    ]
    .iter()
    .flat_map(|s| [format!("{s}.svg"), format!("{s}.png")])
    .collect();
    expect.extend(
        [
            "table-drainage.csv",
            "table-drainage.inc",
            "table-imbibition.csv",
            "table-imbibition.inc",
            "report.html",
            "state-1-drainage.vtp",
            "state-2-imbibition.vtp",
            "state-3-drainage.vtp",
        ]
        .map(String::from),
    );
    expect.sort();
    assert_eq!(names, expect);
    // Exactly these files in the folder (no temporary files left behind).
    let mut on_disk: Vec<String> = std::fs::read_dir(dir.join("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    on_disk.sort();
    assert_eq!(on_disk, expect);
    let png = std::fs::read(dir.join("out/pc-sw.png")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let html = std::fs::read_to_string(dir.join("out/report.html")).unwrap();
    assert_eq!(html, run_report(results, &run_figures(results)));
    let csv = std::fs::read_to_string(dir.join("out/table-imbibition.csv")).unwrap();
    assert_eq!(parse_csv(&csv).unwrap().len(), 11);
    // The states: binary by default, the same arrays as text with
    // `VtkEncoding::Ascii`, and a description naming process and network.
    let binary = parse_vtp(&std::fs::read(dir.join("out/state-2-imbibition.vtp")).unwrap());
    assert_eq!(binary.format, "appended");
    assert_eq!(
        binary.strings("description"),
        [format!(
            "end state of process 2 of 3 (imbibition); network {NAME}"
        )]
    );
    let ascii_dir = dir.join("ascii");
    write_run_artifacts(
        results,
        network,
        &ascii_dir,
        &ArtifactOptions {
            png: false,
            vtk_encoding: VtkEncoding::Ascii,
            ..ArtifactOptions::default()
        },
    )
    .expect("written");
    for k in ["1-drainage", "2-imbibition", "3-drainage"] {
        let file = format!("state-{k}.vtp");
        let b = parse_vtp(&std::fs::read(dir.join("out").join(&file)).unwrap());
        let a = parse_vtp(&std::fs::read(ascii_dir.join(&file)).unwrap());
        assert_eq!(
            (b.format.as_str(), a.format.as_str()),
            ("appended", "ascii")
        );
        assert_eq!(b.bits(), a.bits(), "{file}");
    }

    // A file where the folder should be: an I/O error naming that path.
    let blocker = dir.join("blocked");
    std::fs::write(&blocker, b"x").unwrap();
    match write_run_artifacts(results, network, &blocker, &ArtifactOptions::default()) {
        Err(ReportError::Io { path, .. }) => assert_eq!(path, blocker),
        other => panic!("expected an I/O error, got {other:?}"),
    }
    std::fs::remove_dir_all(&dir).unwrap();
}
