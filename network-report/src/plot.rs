//! Line plots rendered to SVG text or PNG bytes with the `plotters` crate.
//!
//! A [`PlotSpec`] describes one chart: title, axis labels (with units),
//! linear or logarithmic scales, optional fixed ranges, and a list of
//! [`Series`], each a line, a dashed line, markers or both, optionally with
//! an uncertainty band. [`render_svg`] and [`render_png`] draw it.
//!
//! ## Styling
//! White background, thin dark-grey axes, a faint grid at the major ticks,
//! a legend box in the corner with the fewest data points, text in DejaVu
//! Sans (embedded in the crate, so PNG output needs no system font; SVG
//! output names the generic `sans-serif` family and leaves the choice to
//! the viewer). Series colours
//! cycle through [`PALETTE`], seven colours of the colour-blind-safe set of
//! Okabe & Ito (2008, "Color Universal Design (CUD)", web publication),
//! yellow left out for contrast on white, in our own order.
//!
//! ## Data handling
//! - Non-finite points are skipped; on a log axis so are points whose value
//!   on that axis is `≤ 0`. Lines break at skipped points rather than
//!   bridging them. Each skip is counted in a note (see [`plot_notes`])
//!   printed in small type under the chart.
//! - Without a fixed range an axis spans the plottable data (linear: padded
//!   by 5 %; log: widened to whole decades).
//! - Lines are clipped to the plotting rectangle; markers outside it are
//!   left out; bands are clamped to it.

use std::sync::OnceLock;

use plotters::coord::Shift;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::element::{Circle, DashedPathElement, EmptyElement, PathElement, Polygon};
use plotters::prelude::{
    BitMapBackend, ChartBuilder, DrawingArea, DrawingBackend, IntoDrawingArea, IntoLogRange,
    SVGBackend, SeriesLabelPosition,
};
use plotters::style::{
    Color, FontStyle, IntoFont, RGBColor, ShapeStyle, TRANSPARENT, TextStyle, WHITE,
};
use thiserror::Error;

/// Default SVG canvas of [`render_svg`], in pixels (width, height).
pub const DEFAULT_SIZE: (u32, u32) = (800, 560);

/// Series colours: Okabe & Ito (2008) blue, vermillion, bluish green,
/// reddish purple, orange, sky blue and black (yellow omitted).
pub const PALETTE: [(u8, u8, u8); 7] = [
    (0x00, 0x72, 0xB2),
    (0xD5, 0x5E, 0x00),
    (0x00, 0x9E, 0x73),
    (0xCC, 0x79, 0xA7),
    (0xE6, 0x9F, 0x00),
    (0x56, 0xB4, 0xE9),
    (0x00, 0x00, 0x00),
];

/// The font family name under which the embedded font is registered.
const FONT: &str = "sans-serif";
/// DejaVu Sans 2.37 (Bitstream Vera licence, see `fonts/LICENSE-DejaVu.txt`).
static FONT_BYTES: &[u8] = include_bytes!("../fonts/DejaVuSans.ttf");

const AXIS_COLOUR: RGBColor = RGBColor(0x33, 0x33, 0x33);
const GRID_COLOUR: RGBColor = RGBColor(0xE4, 0xE4, 0xE4);
const NOTE_COLOUR: RGBColor = RGBColor(0x55, 0x55, 0x55);

/// Why a plot could not be rendered.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum PlotError {
    /// A series has different numbers of x and y values.
    #[error("series {series:?}: {x_len} x values but {y_len} y values")]
    LengthMismatch {
        /// Series label.
        series: String,
        /// Number of x values.
        x_len: usize,
        /// Number of y values.
        y_len: usize,
    },
    /// A band's bounds do not match the series length.
    #[error(
        "series {series:?}: band has {lower_len} lower and {upper_len} upper values for {x_len} points"
    )]
    BandLengthMismatch {
        /// Series label.
        series: String,
        /// Number of x values.
        x_len: usize,
        /// Number of lower bounds.
        lower_len: usize,
        /// Number of upper bounds.
        upper_len: usize,
    },
    /// A fixed axis range is empty, non-finite, or not positive on a log axis.
    #[error("{axis} range [{min}, {max}] is invalid: {reason}")]
    InvalidRange {
        /// `"x"` or `"y"`.
        axis: &'static str,
        /// Range start.
        min: f64,
        /// Range end.
        max: f64,
        /// What is wrong.
        reason: &'static str,
    },
    /// The canvas is too small to draw on.
    #[error("canvas {width}×{height} px is too small (at least 64×64)")]
    InvalidSize {
        /// Width in pixels.
        width: u32,
        /// Height in pixels.
        height: u32,
    },
    /// The embedded font could not be loaded.
    #[error("the embedded font could not be registered")]
    Font,
    /// The drawing backend failed.
    #[error("drawing failed: {0}")]
    Render(String),
    /// PNG encoding failed.
    #[error("PNG encoding failed: {0}")]
    Encode(String),
}

/// Axis scale.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Scale {
    /// Linear axis.
    #[default]
    Linear,
    /// Base-10 logarithmic axis; non-positive values are not shown.
    Log,
}

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum SeriesStyle {
    /// Solid line through the points in the given order.
    #[default]
    Line,
    /// Dashed line through the points in the given order.
    Dashed,
    /// Filled circular markers only.
    Markers,
    /// Solid line with markers.
    LineMarkers,
    /// Dashed line with markers.
    DashedMarkers,
}

/// One data series of a plot.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Series {
    /// Legend label.
    pub label: String,
    /// Abscissae.
    pub x: Vec<f64>,
    /// Ordinates (same length as `x`).
    pub y: Vec<f64>,
    /// Line, dashed line or markers.
    pub style: SeriesStyle,
    /// Optional uncertainty band `(lower, upper)`, each the length of `x`,
    /// drawn as a translucent fill in the series colour.
    pub band: Option<(Vec<f64>, Vec<f64>)>,
    /// Colour `(r, g, b)`; `None` takes the next colour of [`PALETTE`] by
    /// the series' position.
    pub colour: Option<(u8, u8, u8)>,
}

impl Series {
    /// A solid-line series.
    pub fn line(label: impl Into<String>, x: Vec<f64>, y: Vec<f64>) -> Series {
        Series {
            label: label.into(),
            x,
            y,
            style: SeriesStyle::Line,
            band: None,
            colour: None,
        }
    }

    /// The same series drawn with `style`.
    pub fn with_style(mut self, style: SeriesStyle) -> Series {
        self.style = style;
        self
    }

    /// The same series drawn in colour `(r, g, b)`.
    pub fn with_colour(mut self, colour: (u8, u8, u8)) -> Series {
        self.colour = Some(colour);
        self
    }

    /// The same series with an uncertainty band.
    pub fn with_band(mut self, lower: Vec<f64>, upper: Vec<f64>) -> Series {
        self.band = Some((lower, upper));
        self
    }
}

/// A chart: labels, scales, ranges and series.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PlotSpec {
    /// Title above the chart.
    pub title: String,
    /// x-axis label, with units, e.g. `"Water saturation Sw (–)"`.
    pub x_label: String,
    /// y-axis label, with units, e.g. `"Capillary pressure Pc (kPa)"`.
    pub y_label: String,
    /// x-axis scale.
    pub x_scale: Scale,
    /// y-axis scale.
    pub y_scale: Scale,
    /// Fixed x range `(min, max)`; `None` spans the data.
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range `(min, max)`; `None` spans the data.
    pub y_range: Option<(f64, f64)>,
    /// The series, drawn in order (later ones on top).
    pub series: Vec<Series>,
}

/// Renders `spec` as an SVG document of [`DEFAULT_SIZE`].
pub fn render_svg(spec: &PlotSpec) -> Result<String, PlotError> {
    render_svg_sized(spec, DEFAULT_SIZE.0, DEFAULT_SIZE.1)
}

/// Renders `spec` as an SVG document of `width × height` pixels.
pub fn render_svg_sized(spec: &PlotSpec, width: u32, height: u32) -> Result<String, PlotError> {
    check_size(width, height)?;
    let prepared = prepare(spec)?;
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (width, height)).into_drawing_area();
        draw(&root, spec, &prepared)?;
        root.present().map_err(render_err)?;
    }
    Ok(out)
}

/// Renders `spec` as a PNG image (8-bit RGB) of `width × height` pixels.
pub fn render_png(spec: &PlotSpec, width: u32, height: u32) -> Result<Vec<u8>, PlotError> {
    check_size(width, height)?;
    let prepared = prepare(spec)?;
    let mut pixels = vec![0u8; width as usize * height as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut pixels, (width, height)).into_drawing_area();
        draw(&root, spec, &prepared)?;
        root.present().map_err(render_err)?;
    }
    let mut png_bytes = Vec::new();
    {
        let mut encoder = png::Encoder::new(&mut png_bytes, width, height);
        encoder.set_color(png::ColorType::Rgb);
        encoder.set_depth(png::BitDepth::Eight);
        let mut writer = encoder
            .write_header()
            .map_err(|e| PlotError::Encode(e.to_string()))?;
        writer
            .write_image_data(&pixels)
            .map_err(|e| PlotError::Encode(e.to_string()))?;
        writer
            .finish()
            .map_err(|e| PlotError::Encode(e.to_string()))?;
    }
    Ok(png_bytes)
}

/// The notes a rendering of `spec` prints under the chart: points skipped
/// because they are not finite or not positive on a log axis.
pub fn plot_notes(spec: &PlotSpec) -> Result<Vec<String>, PlotError> {
    Ok(prepare(spec)?.notes)
}

// ---------------------------------------------------------------------------
// Preparation: validation, skipping, ranges, clipping (no drawing)
// ---------------------------------------------------------------------------

/// One axis after range selection: the scale and the range in data units.
#[derive(Clone, Copy, Debug)]
struct Axis {
    scale: Scale,
    min: f64,
    max: f64,
}

impl Axis {
    /// Data value to axis space (identity or log10).
    fn value_to_axis(self, v: f64) -> f64 {
        match self.scale {
            Scale::Linear => v,
            Scale::Log => v.log10(),
        }
    }

    /// Axis space back to data value.
    fn axis_to_value(self, u: f64) -> f64 {
        match self.scale {
            Scale::Linear => u,
            Scale::Log => 10f64.powf(u),
        }
    }

    fn lo(self) -> f64 {
        self.value_to_axis(self.min)
    }

    fn hi(self) -> f64 {
        self.value_to_axis(self.max)
    }
}

#[derive(Debug)]
struct PreparedSeries {
    colour: RGBColor,
    /// Polylines in data units, already clipped.
    lines: Vec<Vec<(f64, f64)>>,
    /// Markers inside the range.
    markers: Vec<(f64, f64)>,
    /// Band polygons in data units, clamped to the range.
    bands: Vec<Vec<(f64, f64)>>,
}

#[derive(Debug)]
struct Prepared {
    x: Axis,
    y: Axis,
    series: Vec<PreparedSeries>,
    notes: Vec<String>,
}

fn plottable(v: f64, scale: Scale) -> bool {
    v.is_finite() && (scale == Scale::Linear || v > 0.0)
}

fn prepare(spec: &PlotSpec) -> Result<Prepared, PlotError> {
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

fn inside(v: f64, axis: Axis) -> bool {
    let (lo, hi) = (axis.min.min(axis.max), axis.min.max(axis.max));
    lo <= v && v <= hi
}

/// The range of one axis: the fixed one (validated) or one spanning the
/// plottable values.
fn axis_range(
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
                let a = lo.log10().floor();
                let mut b = hi.log10().ceil();
                if b <= a {
                    b = a + 1.0;
                }
                (10f64.powf(a), 10f64.powf(b))
            }
        }
    };
    Ok(Axis { scale, min, max })
}

/// Clips a polyline (data units, all points plottable) to the rectangle of
/// the axes, in axis space (Liang & Barsky 1984, ACM Trans. Graph. 3:1–22).
fn clip_polyline(pts: &[(f64, f64)], x: Axis, y: Axis) -> Vec<Vec<(f64, f64)>> {
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
fn band_polygons(xs: &[f64], lo: &[f64], hi: &[f64], x: Axis, y: Axis) -> Vec<Vec<(f64, f64)>> {
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

// ---------------------------------------------------------------------------
// Drawing
// ---------------------------------------------------------------------------

fn check_size(width: u32, height: u32) -> Result<(), PlotError> {
    if width < 64 || height < 64 || width > 16_384 || height > 16_384 {
        return Err(PlotError::InvalidSize { width, height });
    }
    Ok(())
}

fn render_err<E: std::fmt::Display>(e: E) -> PlotError {
    PlotError::Render(e.to_string())
}

/// Registers the embedded font once per process.
fn ensure_font() -> Result<(), PlotError> {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    let ok = *REGISTERED.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, FONT_BYTES).is_ok()
    });
    if ok { Ok(()) } else { Err(PlotError::Font) }
}

fn text(size: f64, colour: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(colour)
}

fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    spec: &PlotSpec,
    prepared: &Prepared,
) -> Result<(), PlotError>
where
    DB::ErrorType: 'static,
{
    ensure_font()?;
    root.fill(&WHITE).map_err(render_err)?;
    let (_, height) = root.dim_in_pixel();
    let scale = (height as f64 / DEFAULT_SIZE.1 as f64).clamp(0.5, 4.0);
    let note_line = (14.0 * scale).round() as u32;
    let n_notes = prepared.notes.len().min(4) as u32;
    let (chart_area, note_area) = if n_notes > 0 {
        let (a, b) = root.split_vertically(height.saturating_sub(n_notes * note_line + 6));
        (a, Some(b))
    } else {
        (root.clone(), None)
    };
    let (x, y) = (prepared.x, prepared.y);
    match (x.scale, y.scale) {
        (Scale::Linear, Scale::Linear) => draw_chart(
            &chart_area,
            spec,
            prepared,
            x.min..x.max,
            y.min..y.max,
            scale,
        )?,
        (Scale::Linear, Scale::Log) => draw_chart(
            &chart_area,
            spec,
            prepared,
            x.min..x.max,
            (y.min..y.max).log_scale(),
            scale,
        )?,
        (Scale::Log, Scale::Linear) => draw_chart(
            &chart_area,
            spec,
            prepared,
            (x.min..x.max).log_scale(),
            y.min..y.max,
            scale,
        )?,
        (Scale::Log, Scale::Log) => draw_chart(
            &chart_area,
            spec,
            prepared,
            (x.min..x.max).log_scale(),
            (y.min..y.max).log_scale(),
            scale,
        )?,
    }
    if let Some(area) = note_area {
        let style = text(11.0 * scale, &NOTE_COLOUR);
        let mut notes: Vec<String> = prepared.notes.iter().take(4).cloned().collect();
        if prepared.notes.len() > 4 {
            let extra = prepared.notes.len() - 3;
            notes[3] = format!("… and {extra} more notes");
        }
        for (k, note) in notes.iter().enumerate() {
            area.draw_text(
                &format!("Note: {note}"),
                &style,
                ((10.0 * scale) as i32, (k as u32 * note_line) as i32),
            )
            .map_err(render_err)?;
        }
    }
    Ok(())
}

fn draw_chart<DB, XS, YS>(
    area: &DrawingArea<DB, Shift>,
    spec: &PlotSpec,
    prepared: &Prepared,
    x_spec: XS,
    y_spec: YS,
    scale: f64,
) -> Result<(), PlotError>
where
    DB: DrawingBackend,
    DB::ErrorType: 'static,
    XS: AsRangedCoord<Value = f64>,
    YS: AsRangedCoord<Value = f64>,
    XS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    YS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let px = |v: f64| (v * scale).round() as u32;
    let mut chart = ChartBuilder::on(area)
        .caption(&spec.title, text(18.0 * scale, &AXIS_COLOUR))
        .margin(px(14.0))
        .x_label_area_size(px(46.0))
        .y_label_area_size(px(70.0))
        .build_cartesian_2d(x_spec, y_spec)
        .map_err(render_err)?;
    let x_scale = prepared.x.scale;
    let y_scale = prepared.y.scale;
    let fx = move |v: &f64| tick_label(*v, x_scale);
    let fy = move |v: &f64| tick_label(*v, y_scale);
    // Faint grid at the major ticks only, thin dark axes.
    chart
        .configure_mesh()
        .max_light_lines(0)
        .light_line_style(TRANSPARENT)
        .bold_line_style(GRID_COLOUR.stroke_width(1))
        .axis_style(AXIS_COLOUR.stroke_width(1))
        .x_desc(spec.x_label.as_str())
        .y_desc(spec.y_label.as_str())
        .axis_desc_style(text(14.0 * scale, &AXIS_COLOUR))
        .label_style(text(12.0 * scale, &AXIS_COLOUR))
        .x_label_formatter(&fx)
        .y_label_formatter(&fy)
        .x_labels(8)
        .y_labels(8)
        .draw()
        .map_err(render_err)?;

    let line_w = px(2.0).max(1);
    let marker_r = px(3.5).max(2);
    let sample_len = px(28.0).max(14) as i32;
    let mut any_label = false;
    for (s, p) in spec.series.iter().zip(&prepared.series) {
        let colour = p.colour;
        // Bands first, translucent, without a legend entry.
        let fill = colour.mix(0.2).filled();
        chart
            .draw_series(p.bands.iter().map(|poly| Polygon::new(poly.clone(), fill)))
            .map_err(render_err)?;
        let stroke = ShapeStyle::from(&colour).stroke_width(line_w);
        let style = s.style;
        // Legend sample: a 28-px line (solid, or two dashes) and a dot for
        // the marker styles, relative to the legend anchor. With markers the
        // dashes are short, so the gaps beside the dot stay visible.
        let legend = move |c: (i32, i32)| {
            let line = ShapeStyle::from(&colour).stroke_width(line_w);
            let none = ShapeStyle::from(&TRANSPARENT);
            let (first, dash, second) = match style {
                SeriesStyle::Line | SeriesStyle::LineMarkers => (line, sample_len / 2, line),
                SeriesStyle::Dashed => (line, sample_len * 2 / 5, line),
                SeriesStyle::DashedMarkers => (line, sample_len / 5, line),
                SeriesStyle::Markers => (none, 0, none),
            };
            let dot = match style {
                SeriesStyle::Markers | SeriesStyle::LineMarkers | SeriesStyle::DashedMarkers => {
                    colour.filled()
                }
                _ => none,
            };
            EmptyElement::at(c)
                + PathElement::new(vec![(0, 0), (dash, 0)], first)
                + PathElement::new(vec![(sample_len - dash, 0), (sample_len, 0)], second)
                + Circle::new((sample_len / 2, 0), marker_r, dot)
        };
        let anno = match s.style {
            SeriesStyle::Dashed | SeriesStyle::DashedMarkers => chart
                .draw_series(p.lines.iter().map(|l| {
                    DashedPathElement::new(l.clone(), px(7.0).max(2), px(5.0).max(2), stroke)
                }))
                .map_err(render_err)?,
            SeriesStyle::Line | SeriesStyle::LineMarkers => chart
                .draw_series(p.lines.iter().map(|l| PathElement::new(l.clone(), stroke)))
                .map_err(render_err)?,
            SeriesStyle::Markers => chart
                .draw_series(std::iter::empty::<PathElement<(f64, f64)>>())
                .map_err(render_err)?,
        };
        if !s.label.is_empty() {
            any_label = true;
            anno.label(s.label.as_str()).legend(legend);
        }
        if !p.markers.is_empty() {
            chart
                .draw_series(
                    p.markers
                        .iter()
                        .map(|&pt| Circle::new(pt, marker_r, colour.filled())),
                )
                .map_err(render_err)?;
        }
    }
    if any_label {
        chart
            .configure_series_labels()
            .position(legend_corner(prepared))
            .margin(px(10.0))
            .legend_area_size(px(40.0))
            .background_style(WHITE.mix(0.9))
            .border_style(AXIS_COLOUR.stroke_width(1))
            .label_font(text(12.0 * scale, &AXIS_COLOUR))
            .draw()
            .map_err(render_err)?;
    }
    Ok(())
}

/// The place of the legend in the plotting area: the one of six boxes
/// (35 % of the width, 30 % of the height: the four corners, then the
/// middle of the top and of the bottom edge) holding the fewest drawn
/// points; ties go to upper right, upper left, lower right, lower left,
/// upper middle, lower middle.
fn legend_corner(p: &Prepared) -> SeriesLabelPosition {
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

/// Tick label: decades on a log axis as `10ⁿ`, other values with up to four
/// significant digits (scientific notation outside `[1e-3, 1e5)`).
fn tick_label(v: f64, scale: Scale) -> String {
    if scale == Scale::Log && v > 0.0 {
        let e = v.log10();
        if (e - e.round()).abs() < 1e-9 {
            let k = e.round() as i32;
            return match k {
                0 => "1".to_string(),
                1 => "10".to_string(),
                _ => format!("10{}", superscript(k)),
            };
        }
    }
    format_number(v)
}

fn superscript(k: i32) -> String {
    let digits = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if k < 0 {
        s.push('⁻');
    }
    for c in k.unsigned_abs().to_string().chars() {
        s.push(digits[c.to_digit(10).unwrap_or(0) as usize]);
    }
    s
}

/// Up to four significant digits, trailing zeros trimmed.
fn format_number(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return if v == 0.0 {
            "0".to_string()
        } else {
            v.to_string()
        };
    }
    let a = v.abs();
    if !(1e-3..1e5).contains(&a) {
        let s = format!("{v:.3e}");
        // Trim the mantissa: "2.500e4" → "2.5e4".
        if let Some((m, e)) = s.split_once('e') {
            let m = trim_zeros(m);
            return format!("{m}e{e}");
        }
        return s;
    }
    let decimals = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
    trim_zeros(&format!("{v:.decimals$}")).to_string()
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}

#[cfg(test)]
mod tests;
