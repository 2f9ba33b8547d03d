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
//! ## Subscripts
//! Every text of a chart may hold the markup `_{…}` (`S_{nr}`,
//! `k_{r,oil}`): it is drawn as a subscript (see `rich`); [`plain`] strips
//! it for places that cannot draw it.
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
//!
//! ## Files
//! This file holds the chart description and the SVG and PNG entry points.
//! The work behind them, in order: `prepare` (validation, skipped points,
//! notes) with `axis` (ranges, data to axis space) and `clip` (lines and
//! bands cut to the plotting rectangle); then `draw` (the chart on a
//! `plotters` backend) with `legend` (where the legend goes), `ticks` (tick
//! labels) and `style` (embedded font, colours).

use plotters::prelude::{BitMapBackend, IntoDrawingArea, SVGBackend};

pub use crate::error::PlotError;

use self::draw::{check_size, draw, render_err};
use self::prepare::prepare;
use self::rich::Rich;
pub use self::rich::plain;

mod axis;
mod clip;
mod draw;
mod legend;
mod prepare;
mod rich;
mod style;
mod ticks;

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
        let root = Rich(SVGBackend::with_string(&mut out, (width, height))).into_drawing_area();
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
        let root =
            Rich(BitMapBackend::with_buffer(&mut pixels, (width, height))).into_drawing_area();
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

#[cfg(test)]
mod tests;
