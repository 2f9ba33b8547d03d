//! # network-report: Ganglion results rendered for people
//!
//! Plain inputs in (slices and small structs, or a
//! [`network_core::run::RunResults`]), text and bytes out; no
//! terminal. Only [`artifacts`], [`sweep_report`](mod@sweep_report), [`run_files`] and
//! [`sweep_files`] write files; every other module
//! returns strings and bytes for the caller to write where it likes.
//!
//! ## Code map
//! Each module uses only modules listed above it (and `network_core`). The
//! crate reads results, never the engine: no module may use
//! `network_core::engine` or the flow solver.
//!
//! - [`error`]: every error type of the crate; uses no other module.
//! - [`plot`]: line plots (linear or log axes, bands, markers) as SVG text
//!   or PNG bytes, drawn with `plotters` and an embedded DejaVu Sans font.
//! - [`image_ganglia`]: the imaged non-aqueous phase (`imaged-ganglia.csv`,
//!   `imaged-phase.json`).
//! - [`vti`]: the regions of an extracted image as VTK XML ImageData (`.vti`).
//! - [`vtk`]: a network and an end state as VTK XML PolyData (`.vtp`),
//!   binary appended data or ASCII, with the meaning of every array.
//! - [`figures`]: the standard figures of a study run (Pc, kr linear and
//!   log, resistivity index with the Archie line, ganglion sizes, saturation
//!   profile along the flow axis).
//! - [`saturation_tables`](mod@saturation_tables): monotone, resampled saturation-function tables
//!   from a simulated curve, written as CSV or as water–oil (`SWOF`) or
//!   gas–water (`SWFN`/`SGFN`) keyword tables for black-oil reservoir
//!   simulators, Pc in bar, kPa or psi,
//!   with parsers for both; [`saturation_tables::from_run`] makes the tables
//!   of a run, with comment headers naming units, source and end points.
//! - [`key_results`]: the handful of numbers read first (k, φ, F, Swi,
//!   Sni, Snr, krw(Snr), krn(Swi), Land C, wettability indices), for the
//!   report's top box and the terminal, rounded without float noise.
//! - [`html`]: the page builder, and the self-contained HTML report of a
//!   run made with it.
//! - [`artifacts`]: all of the above for one run, written into a folder,
//!   each file atomically; [`write_run_set`] writes the whole set as one
//!   unit (staged, sealed with a manifest, moved into place; see
//!   `network_core::io::result_set`).
//! - [`sweep_report`](mod@sweep_report): the figures and the HTML report of a sweep, written
//!   the same way.
//! - [`micp_files`]: the files of a simulated mercury injection
//!   (`micp.csv`, the Pc–S_Hg chart with an optional measured overlay, the
//!   pore-throat size chart), each written atomically.
//! - [`run_files`] and [`sweep_files`]: the result data files of a run
//!   (`summary.json`, `curves.csv`, `ganglia.csv`, `profiles.csv`) and of a sweep
//!   (`summary.json`, `trapping-curve.csv`, `cases.csv`), each written
//!   atomically.
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
pub mod error;
pub mod figures;
pub mod html;
pub mod image_ganglia;
pub mod key_results;
pub mod micp_files;
pub mod plot;
pub mod run_files;
pub mod saturation_tables;
pub mod sweep_files;
pub mod sweep_report;
pub mod vti;
pub mod vtk;

pub use artifacts::{ArtifactOptions, write_run_artifacts, write_run_set};
pub use error::ReportError;
pub use figures::{Figure, run_figures};
pub use html::run_report;
pub use run_files::write_run_results;
pub use saturation_tables::from_run::saturation_tables;
pub use sweep_files::{write_sweep_results, write_sweep_set};
pub use sweep_report::{sweep_figures, sweep_report, sweep_title, write_sweep_artifacts};
pub use vtk::write_vtp;
