//! # network-report: Ganglion results rendered for people
//!
//! Plain inputs in (slices and small structs of this crate), text and bytes
//! out; no terminal, no file system (callers write the returned strings and
//! bytes where they like).
//!
//! - [`plot`]: line plots (linear or log axes, bands, markers) as SVG text
//!   or PNG bytes, drawn with `plotters` and an embedded DejaVu Sans font.
//! - [`tables`]: monotone, resampled saturation-function tables from a
//!   simulated curve, written as CSV or as a water–oil saturation-function
//!   keyword table for black-oil reservoir simulators, with parsers for both.
//!
//! ## Example
//! ```
//! use network_report::plot::{render_svg, PlotSpec, Scale, Series, SeriesStyle};
//!
//! let sw: Vec<f64> = (0..=10).map(|i| 0.2 + 0.06 * i as f64).collect();
//! let krw: Vec<f64> = sw.iter().map(|s| ((s - 0.2) / 0.6_f64).powi(3)).collect();
//! let spec = PlotSpec {
//!     title: "Relative permeability".into(),
//!     x_label: "Water saturation Sw (–)".into(),
//!     y_label: "krw (–)".into(),
//!     y_scale: Scale::Log,
//!     series: vec![Series::line("krw", sw, krw).with_style(SeriesStyle::LineMarkers)],
//!     ..PlotSpec::default()
//! };
//! let svg = render_svg(&spec).expect("renders");
//! assert!(svg.contains("Water saturation Sw"));
//! ```

#![warn(missing_docs)]

pub mod plot;
pub mod tables;
