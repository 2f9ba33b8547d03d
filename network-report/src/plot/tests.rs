use plotters::prelude::SeriesLabelPosition;
use plotters::style::RGBColor;

use super::axis::Axis;
use super::clip::clip_polyline;
use super::legend::legend_corner;
use super::prepare::prepare;
use super::ticks::tick_label;
use super::*;

fn kr_spec() -> PlotSpec {
    let sw: Vec<f64> = (0..=20).map(|i| 0.2 + 0.03 * i as f64).collect();
    let swn = |s: f64| (s - 0.2) / 0.6;
    let krw: Vec<f64> = sw.iter().map(|&s| 0.4 * swn(s).powi(3)).collect();
    let mut krn: Vec<f64> = sw.iter().map(|&s| 0.9 * (1.0 - swn(s)).powi(2)).collect();
    krn[20] = 0.0; // exactly zero at the end point, whatever the rounding of Sw
    let mut krw = krw;
    krw[0] = 0.0;
    let lo: Vec<f64> = krw.iter().map(|v| 0.8 * v).collect();
    let hi: Vec<f64> = krw.iter().map(|v| 1.2 * v).collect();
    PlotSpec {
        title: "Relative permeability, primary drainage".into(),
        x_label: "Water saturation Sw (fraction)".into(),
        y_label: "Relative permeability kr (fraction)".into(),
        series: vec![
            Series::line("water krw", sw.clone(), krw).with_band(lo, hi),
            Series::line("oil krn", sw.clone(), krn.clone()).with_style(SeriesStyle::Dashed),
            Series::line("oil samples", sw, krn).with_style(SeriesStyle::Markers),
        ],
        ..PlotSpec::default()
    }
}

#[test]
fn svg_contains_title_axis_labels_and_every_series_label() {
    let spec = kr_spec();
    let svg = render_svg(&spec).unwrap();
    assert!(svg.starts_with("<svg"), "{}", &svg[..80.min(svg.len())]);
    assert!(svg.trim_end().ends_with("</svg>"));
    for text in [
        "Relative permeability, primary drainage",
        "Water saturation Sw (fraction)",
        "Relative permeability kr (fraction)",
        "water krw",
        "oil krn",
        "oil samples",
    ] {
        assert!(svg.contains(text), "missing {text:?}");
    }
    // The series colours of the palette appear (band, line, markers).
    assert!(svg.to_ascii_uppercase().contains("#0072B2"));
    assert!(svg.to_ascii_uppercase().contains("#D55E00"));
    assert!(plot_notes(&spec).unwrap().is_empty());
}

#[test]
fn log_axes_with_zeros_render_and_note_the_skipped_points() {
    let mut spec = kr_spec();
    spec.y_scale = Scale::Log;
    spec.x_scale = Scale::Log;
    // krw starts at exactly 0 (Swn = 0); add a negative value and a NaN.
    spec.series[0].y[1] = -1e-9;
    spec.series[1].y[5] = f64::NAN;
    let notes = plot_notes(&spec).unwrap();
    // Series 0: krw(0) = 0 and the −1e-9 → 2 points with y ≤ 0; its band
    // lower/upper also start at 0 (skipped silently in the band). Series 1:
    // krn(Sw = 0.8) = 0 → 1 point, plus one NaN. Series 2: the same zero.
    assert!(notes.contains(&"water krw: 2 points with y ≤ 0 not shown on the log axis".into()));
    assert!(notes.contains(&"oil krn: 1 non-finite point not shown".into()));
    assert!(notes.contains(&"oil krn: 1 point with y ≤ 0 not shown on the log axis".into()));
    let svg = render_svg(&spec).unwrap();
    assert!(svg.contains("water krw") && svg.contains("Note: "));
    let png = render_png(&spec, 640, 480).unwrap();
    assert!(png.starts_with(&[0x89, b'P', b'N', b'G']));
}

#[test]
fn log_axis_without_any_positive_value_still_renders() {
    let spec = PlotSpec {
        title: "No flow".into(),
        x_label: "Sw (fraction)".into(),
        y_label: "kr (fraction)".into(),
        y_scale: Scale::Log,
        series: vec![Series::line("krn", vec![0.1, 0.5, 0.9], vec![0.0; 3])],
        ..PlotSpec::default()
    };
    let svg = render_svg(&spec).unwrap();
    assert!(svg.contains("krn"));
    assert!(
        plot_notes(&spec)
            .unwrap()
            .contains(&"no plottable data".to_string())
    );
}

#[test]
fn png_has_requested_size_and_text_drawn_with_the_embedded_font() {
    let spec = kr_spec();
    let (w, h) = (480, 360);
    let bytes = render_png(&spec, w, h).unwrap();
    let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (w, h));
    assert_eq!(info.color_type, png::ColorType::Rgb);
    // The title band (top 8 % of the image, above the plotting area) holds
    // only the title text: some dark pixels mean glyphs were rasterised.
    let row = w as usize * 3;
    let band = &buf[..row * (h as usize * 8 / 100)];
    let dark = band
        .chunks(3)
        .filter(|p| p.iter().all(|&c| c < 128))
        .count();
    assert!(dark > 50, "only {dark} dark pixels in the title band");
    // The background is white.
    assert_eq!(&buf[..3], &[255, 255, 255]);
}

#[test]
fn bad_specs_give_typed_errors() {
    let mut spec = kr_spec();
    spec.series[1].y.pop();
    assert!(matches!(
        render_svg(&spec),
        Err(PlotError::LengthMismatch {
            x_len: 21,
            y_len: 20,
            ..
        })
    ));
    let mut spec = kr_spec();
    spec.series[0].band.as_mut().unwrap().0.pop();
    assert!(matches!(
        render_svg(&spec),
        Err(PlotError::BandLengthMismatch { .. })
    ));
    let mut spec = kr_spec();
    spec.y_scale = Scale::Log;
    spec.y_range = Some((0.0, 1.0));
    assert!(matches!(
        render_svg(&spec),
        Err(PlotError::InvalidRange { axis: "y", .. })
    ));
    spec.y_range = Some((1.0, 1.0));
    assert!(matches!(
        render_svg(&spec),
        Err(PlotError::InvalidRange { .. })
    ));
    spec.y_range = Some((f64::NAN, 1.0));
    assert!(matches!(
        render_svg(&spec),
        Err(PlotError::InvalidRange { .. })
    ));
    assert!(matches!(
        render_png(&kr_spec(), 10, 480),
        Err(PlotError::InvalidSize { .. })
    ));
    // An empty spec is a blank chart, not an error.
    assert!(render_svg(&PlotSpec::default()).is_ok());
}

#[test]
fn lines_are_clipped_at_the_range_boundary() {
    // Segment (0, 0)–(2, 2) in the box [0, 1]²: clipped at (1, 1)
    // (analytic: the line y = x leaves the box at its corner).
    let x = Axis {
        scale: Scale::Linear,
        min: 0.0,
        max: 1.0,
    };
    let out = clip_polyline(&[(0.0, 0.0), (2.0, 2.0)], x, x);
    assert_eq!(out, vec![vec![(0.0, 0.0), (1.0, 1.0)]]);
    // A polyline leaving and re-entering splits in two: (0, 0.5) → (2, 0.5)
    // → (2, 0.8) → (0.5, 0.8); the box edge x = 1 cuts both horizontal runs.
    let out = clip_polyline(&[(0.0, 0.5), (2.0, 0.5), (2.0, 0.8), (0.5, 0.8)], x, x);
    assert_eq!(
        out,
        vec![vec![(0.0, 0.5), (1.0, 0.5)], vec![(1.0, 0.8), (0.5, 0.8)]]
    );
    // On a log axis the clip point is exact in log space: y from 1e-3 to
    // 1e1 on [1e-2, 1] (x linear from 0 to 4): log10 y = −3 + x, so the
    // line enters at x = 1 and leaves at x = 3.
    let xl = Axis {
        scale: Scale::Linear,
        min: 0.0,
        max: 4.0,
    };
    let yl = Axis {
        scale: Scale::Log,
        min: 1e-2,
        max: 1.0,
    };
    let out = clip_polyline(&[(0.0, 1e-3), (4.0, 10.0)], xl, yl);
    assert_eq!(out.len(), 1);
    let (a, b) = (out[0][0], out[0][1]);
    assert!((a.0 - 1.0).abs() < 1e-12 && (a.1 - 1e-2).abs() < 1e-14);
    assert!((b.0 - 3.0).abs() < 1e-12 && (b.1 - 1.0).abs() < 1e-12);
}

#[test]
fn lines_break_at_skipped_points() {
    let spec = PlotSpec {
        series: vec![Series::line(
            "gap",
            vec![0.0, 1.0, 2.0, 3.0, 4.0],
            vec![1.0, 2.0, f64::NAN, 2.0, 1.0],
        )],
        ..PlotSpec::default()
    };
    let p = prepare(&spec).unwrap();
    assert_eq!(p.series[0].lines.len(), 2);
    // Auto range: data span [1, 2] padded by 5 % each side.
    assert!((p.y.min - 0.95).abs() < 1e-12 && (p.y.max - 2.05).abs() < 1e-12);
}

#[test]
fn tick_labels_are_plain_numbers_and_decades() {
    assert_eq!(tick_label(1e-3, Scale::Log), "10⁻³");
    assert_eq!(tick_label(100.0, Scale::Log), "10²");
    assert_eq!(tick_label(1.0, Scale::Log), "1");
    assert_eq!(tick_label(0.25, Scale::Linear), "0.25");
    assert_eq!(tick_label(20000.0, Scale::Linear), "20000");
    assert_eq!(tick_label(250000.0, Scale::Linear), "2.5e5");
    assert_eq!(tick_label(0.0, Scale::Linear), "0");
}

#[test]
fn legend_goes_to_the_emptiest_corner() {
    // A rising line y = x crosses the lower-left and upper-right corners,
    // leaving the upper left empty (first in tie order after upper right).
    let rising = PlotSpec {
        series: vec![Series::line("rising", vec![0.0, 1.0], vec![0.0, 1.0])],
        ..PlotSpec::default()
    };
    let p = prepare(&rising).unwrap();
    assert!(matches!(legend_corner(&p), SeriesLabelPosition::UpperLeft));
    // A falling line leaves the upper right empty.
    let falling = PlotSpec {
        series: vec![Series::line("falling", vec![0.0, 1.0], vec![1.0, 0.0])],
        ..PlotSpec::default()
    };
    let p = prepare(&falling).unwrap();
    assert!(matches!(legend_corner(&p), SeriesLabelPosition::UpperRight));
    // Relative-permeability-like curves, x² rising and (1 − x)² falling,
    // fill all four corners; the top middle stays empty (y ≤ 0.3 there).
    let x: Vec<f64> = (0..=20).map(|i| i as f64 / 20.0).collect();
    let crossing = PlotSpec {
        series: vec![
            Series::line("w", x.clone(), x.iter().map(|v| v * v).collect()),
            Series::line(
                "n",
                x.clone(),
                x.iter().map(|v| (1.0 - v) * (1.0 - v)).collect(),
            )
            .with_style(SeriesStyle::DashedMarkers),
        ],
        ..PlotSpec::default()
    };
    let p = prepare(&crossing).unwrap();
    assert!(matches!(
        legend_corner(&p),
        SeriesLabelPosition::UpperMiddle
    ));
}

#[test]
fn series_colour_overrides_the_palette() {
    let spec = PlotSpec {
        series: vec![
            Series::line("a", vec![0.0, 1.0], vec![0.0, 1.0]).with_colour((0x12, 0x34, 0x56)),
            Series::line("b", vec![0.0, 1.0], vec![1.0, 0.0]),
        ],
        ..PlotSpec::default()
    };
    let p = prepare(&spec).unwrap();
    assert_eq!(p.series[0].colour, RGBColor(0x12, 0x34, 0x56));
    // The second series keeps the palette colour of its position.
    let (r, g, b) = PALETTE[1];
    assert_eq!(p.series[1].colour, RGBColor(r, g, b));
    let svg = render_svg(&spec).unwrap().to_ascii_uppercase();
    assert!(svg.contains("#123456"));
}

/// `(text, font-size, x, y)` of every `<text>` element of an SVG.
fn svg_texts(svg: &str) -> Vec<(String, f64, f64, f64)> {
    let doc = roxmltree::Document::parse(svg).expect("well-formed SVG");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| {
            let num = |a: &str| {
                n.attribute(a)
                    .and_then(|v| v.parse().ok())
                    .unwrap_or(f64::NAN)
            };
            (
                n.text().unwrap_or("").trim_matches('\n').to_string(),
                num("font-size"),
                num("x"),
                num("y"),
            )
        })
        .collect()
}

#[test]
fn subscript_markup_is_drawn_smaller_lower_and_after_its_base() {
    let mut spec = kr_spec();
    spec.x_label = "Water saturation S_{w} (fraction)".into();
    spec.series[0].label = "k_{rw}, drainage".into();
    let svg = render_svg(&spec).unwrap();
    assert!(!svg.contains("_{"), "markup must not reach the drawing");
    let texts = svg_texts(&svg);
    let find = |t: &str| {
        texts
            .iter()
            .find(|x| x.0 == t)
            .unwrap_or_else(|| panic!("no text {t:?} in {texts:?}"))
            .clone()
    };
    // Legend label: "k" then subscript "rw" then ", drainage".
    let (k, w, rest) = (find("k"), find("rw"), find(", drainage"));
    assert!(w.1 < k.1, "subscript font {} not below {}", w.1, k.1);
    assert!(
        w.2 > k.2 && rest.2 > w.2,
        "runs out of order: {k:?} {w:?} {rest:?}"
    );
    assert!(w.3 > k.3, "subscript not lowered: {k:?} {w:?}");
    assert_eq!(rest.1, k.1);
    // Axis label: "Water saturation S", "w", " (fraction)".
    let (base, sub) = (find("Water saturation S"), find("w"));
    assert!(sub.1 < base.1 && sub.2 > base.2);
    // A PNG of the same spec renders too.
    assert!(render_png(&spec, 400, 300).is_ok());
}

/// Renders `spec` on a helper thread and fails if it takes longer than
/// `secs` (a hang must fail the test, not stall the suite).
fn renders_within(spec: PlotSpec, secs: u64) -> Result<String, PlotError> {
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        let _ = tx.send(render_svg(&spec));
    });
    rx.recv_timeout(std::time::Duration::from_secs(secs))
        .expect("rendering finished in time")
}

#[test]
fn issue_18_log_axis_of_values_near_the_largest_double_renders_in_bounded_time() {
    // A pore volume of 1e308 m³ made the ganglion-size axis span up to
    // 10^309, which is not a finite double.
    for (lo, hi) in [
        (1e-12, 1e308),
        (1e300, f64::MAX),
        (f64::MIN_POSITIVE, 1.0),
        (5e-324, 1e308),
    ] {
        let spec = PlotSpec {
            title: "extreme".into(),
            x_label: "x".into(),
            y_label: "y".into(),
            x_scale: Scale::Log,
            y_scale: Scale::Log,
            series: vec![Series::line("s", vec![lo, hi], vec![lo, hi])],
            ..PlotSpec::default()
        };
        let p = prepare(&spec).unwrap();
        for a in [p.x, p.y] {
            assert!(
                a.min.is_finite() && a.max.is_finite() && 0.0 < a.min && a.min < a.max,
                "{a:?}"
            );
        }
        let svg = renders_within(spec, 20).unwrap();
        assert!(svg.trim_end().ends_with("</svg>"));
    }
}
