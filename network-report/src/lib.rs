//! # network-report: Ganglion results rendered for people
//!
//! Plain inputs in (slices and small structs, or a
//! [`network_core::run::RunResults`]), text and bytes out; no
//! terminal. Only [`artifacts`] touches the file system; every other module
//! returns strings and bytes for the caller to write where it likes.
//!
//! - [`plot`]: line plots (linear or log axes, bands, markers) as SVG text
//!   or PNG bytes, drawn with `plotters` and an embedded DejaVu Sans font.
//! - [`tables`]: monotone, resampled saturation-function tables from a
//!   simulated curve, written as CSV or as a water–oil saturation-function
//!   keyword table for black-oil reservoir simulators, with parsers for both.
//! - [`figures`]: the standard figures of a study run (Pc, kr linear and
//!   log, resistivity index with the Archie line, ganglion sizes).
//! - [`run_tables`]: the saturation-function tables of a run, with comment
//!   headers naming units, source and end-point handling.
//! - [`html`]: the self-contained HTML report of a run, and the page
//!   builder it is made with (reusable for other reports).
//! - [`vtk`]: a network and an end state as VTK XML PolyData (`.vtp`).
//! - [`artifacts`]: all of the above written into a folder, atomically.
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

pub mod artifacts;
pub mod figures;
pub mod html;
pub mod plot;
pub mod run_files;
pub mod run_tables;
pub mod sweep_files;
pub mod sweep_report;
pub mod tables;
pub mod vtk;

pub use artifacts::{ArtifactOptions, ReportError, write_run_artifacts};
pub use figures::{Figure, run_figures};
pub use html::run_report;
pub use run_files::write_run_results;
pub use run_tables::saturation_tables;
pub use sweep_files::write_sweep_results;
pub use sweep_report::{sweep_figures, sweep_report, write_sweep_artifacts};
pub use vtk::write_vtp;
