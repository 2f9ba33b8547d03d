//! Every human-facing file of a run written into one folder: figures, the
//! saturation-function tables, the HTML report and the 3-D states. The
//! only module of this crate that touches the file system.

use std::path::{Path, PathBuf};

use network_core::Network;
use network_core::io::atomic::write_atomic;
use network_core::io::result_set::{Manifest, StagedSet};
use network_core::run::RunResults;

pub use crate::error::ReportError;
use crate::figures::{Figure, run_figures};
use crate::html::run_report;
use crate::plot::{render_png, render_svg};
use crate::saturation_tables::TableUnits;
use crate::saturation_tables::from_run::saturation_tables;
use crate::vtk::{VtkEncoding, VtkOptions, write_vtp};

/// PNG size of [`write_run_artifacts`], pixels (1.5 × the SVG size).
pub const PNG_SIZE: (u32, u32) = (1200, 840);

/// What [`write_run_artifacts`] writes besides the SVG figures, the tables
/// and the report.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ArtifactOptions {
    /// Also write each figure as PNG ([`PNG_SIZE`]). Default `true`.
    pub png: bool,
    /// Write the end state of each process as `.vtp`. Default `true`.
    pub vtk: bool,
    /// Encoding of the `.vtp` files. Default [`VtkEncoding::Binary`].
    pub vtk_encoding: VtkEncoding,
    /// Rows of each saturation-function table (≥ 2). Default 21.
    pub table_points: usize,
    /// Unit of Pc in the keyword tables. Default bar.
    pub table_units: TableUnits,
}

impl Default for ArtifactOptions {
    fn default() -> Self {
        ArtifactOptions {
            png: true,
            vtk: true,
            vtk_encoding: VtkEncoding::Binary,
            table_points: 21,
            table_units: TableUnits::Bar,
        }
    }
}

/// Writes into `dir` (created if missing), each file atomically
/// ([`write_atomic`]):
///
/// - `<stem>.svg` for every figure of [`run_figures`], and `<stem>.png`
///   when `opts.png`;
/// - the tables of [`saturation_tables`] (`table-drainage.csv`, …);
/// - `report.html` ([`run_report`]);
/// - `state-<k>-<kind>.vtp` for process `k` (1-based) when `opts.vtk`
///   ([`write_vtp`] in `opts.vtk_encoding`, with the contact angles after
///   the run, the water pressure of the process's last flow solve, for a
///   unit pressure drop, where relative permeability was computed, and a
///   description naming the process and the network).
///
/// Returns the paths written, in that order. `network` must be the network
/// of the run (its sizes are checked against the states).
pub fn write_run_artifacts(
    results: &RunResults,
    network: &Network,
    dir: &Path,
    opts: &ArtifactOptions,
) -> Result<Vec<PathBuf>, ReportError> {
    std::fs::create_dir_all(dir).map_err(|source| ReportError::Io {
        path: dir.to_path_buf(),
        source,
    })?;
    let mut out = Writer::new(dir);
    let mut put = |name: &str, bytes: &[u8]| out.put(name, bytes);
    let figures = run_figures(results);
    for f in &figures {
        put_figure(f, opts.png, &mut put)?;
    }
    for (name, text) in saturation_tables(results, opts.table_points, opts.table_units)? {
        put(&name, text.as_bytes())?;
    }
    put("report.html", run_report(results, &figures).as_bytes())?;
    if opts.vtk {
        let n = results.end_states.len();
        for (k, (state, outcome)) in results.end_states.iter().zip(&results.outcomes).enumerate() {
            let kind = outcome.kind.as_str();
            let file = format!("state-{}-{kind}.vtp", k + 1);
            let vtk = VtkOptions {
                encoding: opts.vtk_encoding,
                description: format!(
                    "end state of process {} of {n} ({kind}); network {}",
                    k + 1,
                    results.network.name
                ),
            };
            let bytes = write_vtp(
                network,
                state,
                results.angles.as_ref(),
                state.water_pressure.as_deref(),
                &vtk,
            )
            .map_err(|source| ReportError::Vtk {
                file: file.clone(),
                source,
            })?;
            put(&file, &bytes)?;
        }
    }
    Ok(out.written)
}

/// Writes a run's whole result set as one unit: the data files
/// ([`crate::write_run_results`]) and the files of [`write_run_artifacts`]
/// go into the staging folder of `set`, which [`StagedSet::commit`] then
/// seals with its manifest and moves into place. On error the staging
/// folder is removed and the target keeps what it held. Returns the
/// manifest.
pub fn write_run_set(
    results: &RunResults,
    network: &Network,
    set: StagedSet,
    opts: &ArtifactOptions,
) -> Result<Manifest, ReportError> {
    crate::write_run_results(results, set.dir())?;
    write_run_artifacts(results, network, set.dir(), opts)?;
    Ok(set.commit()?)
}

/// Writes files into one folder atomically and lists what it wrote.
pub(crate) struct Writer<'a> {
    dir: &'a Path,
    /// Paths written, in order.
    pub(crate) written: Vec<PathBuf>,
}

impl<'a> Writer<'a> {
    pub(crate) fn new(dir: &'a Path) -> Writer<'a> {
        Writer {
            dir,
            written: Vec::new(),
        }
    }

    /// Writes `bytes` to `dir/name` atomically.
    pub(crate) fn put(&mut self, name: &str, bytes: &[u8]) -> Result<(), ReportError> {
        let path = self.dir.join(name);
        write_atomic(&path, bytes).map_err(|source| ReportError::Io {
            path: path.clone(),
            source,
        })?;
        self.written.push(path);
        Ok(())
    }
}

/// Renders figure `f` as `NAME.svg` and, when `png`, `NAME.png`
/// ([`PNG_SIZE`]), handing each file to `put`.
pub(crate) fn put_figure(
    f: &Figure,
    png: bool,
    put: &mut impl FnMut(&str, &[u8]) -> Result<(), ReportError>,
) -> Result<(), ReportError> {
    let file = format!("{}.svg", f.name);
    let svg = render_svg(&f.spec).map_err(|source| ReportError::Plot {
        file: file.clone(),
        source,
    })?;
    put(&file, svg.as_bytes())?;
    if png {
        let file = format!("{}.png", f.name);
        let bytes =
            render_png(&f.spec, PNG_SIZE.0, PNG_SIZE.1).map_err(|source| ReportError::Plot {
                file: file.clone(),
                source,
            })?;
        put(&file, &bytes)?;
    }
    Ok(())
}
