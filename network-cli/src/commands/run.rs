//! `ganglion run`: every process of a study file on its network.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::io;
use network_core::io::result_set::{self, StagedSet};
use network_core::run::run_study;
use network_report::key_results::fixed;

use crate::progress::Bars;

/// Run a study: drainage, imbibition and any later processes on a network,
/// writing the results to a folder.
///
/// OUT receives summary.json (inputs echoed, network hash, program version,
/// per-process results, end points, fits), curves.csv (one row per recorded
/// point, with krw, krn and RI where computed, and the interior-window
/// saturations when [output] interior_window is set), profiles.csv (water
/// saturation of each slab along the flow axis at every recorded point),
/// ganglia.csv (trapped clusters of the non-aqueous phase), the figures (SVG and PNG), the
/// saturation-function tables for drainage and imbibition (CSV and a
/// simulator include file), report.html (one self-contained file) and the
/// end state of every process as VTK PolyData (state-K-KIND.vtp; binary
/// appended data, or text with --vtk-ascii), and last
/// ganglion-manifest.json (every file with its size and CRC-32). The set
/// is written as one unit: into a hidden staging folder beside OUT that
/// takes OUT's place only when complete, so OUT holds either the previous
/// complete set or the new one, never a mix. OUT must be missing, empty,
/// or hold an earlier Ganglion result set (replaced only with
/// --overwrite); a non-empty folder of other files is refused. Check a
/// folder with `ganglion verify OUT`.
///
/// Examples:
///   ganglion run studies/kestrel-waterflood.toml -o out/
///   ganglion run study.toml -o out/ --threads 2 --quiet
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Study file (TOML).
    pub study: PathBuf,
    /// Output folder (created if missing; must be empty or hold an earlier
    /// Ganglion result set).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Replace the result set already in OUT (as a whole, only when the
    /// new set is complete). Without it a folder holding results is
    /// refused.
    #[arg(long)]
    pub overwrite: bool,
    /// Skip the PNG copies of the figures.
    #[arg(long)]
    pub no_png: bool,
    /// Skip the VTK files of the end states.
    #[arg(long)]
    pub no_vtk: bool,
    /// Write the VTK files as ASCII text (readable and diffable, about 2.4
    /// times larger) instead of binary appended data.
    #[arg(long, conflicts_with = "no_vtk")]
    pub vtk_ascii: bool,
    /// Rows of each saturation-function table (2 to 10000).
    #[arg(long, default_value_t = 21, value_name = "N")]
    pub table_points: usize,
    /// Unit of capillary pressure in the keyword tables (.inc): bar (the
    /// METRIC deck unit system), kpa, or psi (FIELD); stated in each file's
    /// header. The CSV tables always hold Pa.
    #[arg(long, default_value = "bar", value_name = "UNIT", value_parser = parse_table_units)]
    pub table_units: network_report::saturation_tables::TableUnits,
}

fn parse_table_units(s: &str) -> Result<network_report::saturation_tables::TableUnits, String> {
    network_report::saturation_tables::TableUnits::parse(s)
        .ok_or_else(|| format!("{s:?} is not a table unit: use bar, kpa or psi"))
}

/// Largest `--table-points`: a table of more rows than this resolves
/// nothing a simulator can use and only costs memory and disk.
pub const MAX_TABLE_POINTS: usize = 10_000;

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    if !(2..=MAX_TABLE_POINTS).contains(&args.table_points) {
        anyhow::bail!(
            "--table-points {}: must be from 2 to {MAX_TABLE_POINTS} (rows of each saturation-function table)",
            args.table_points
        );
    }
    let study = io::study::read_study(&args.study)?;
    // Refuse the folder before spending the run on it (no side effects).
    result_set::check_target(&args.output, args.overwrite)?;
    let (network, hash) = super::study_network(&args.study, &study, 0, progress)?;
    super::check_memory(
        &format!(
            "a run on {} pores and {} throats",
            network.n_pores(),
            network.n_throats()
        ),
        network_core::memory::for_run(network.n_pores() as u64, network.n_throats() as u64),
        "use a machine with more memory or a smaller network",
    )?;
    // Every input accepted: only now does anything appear on disk.
    let set = StagedSet::begin(&args.output, "run", args.overwrite)?;
    let mut results = run_study(&network, &study, progress);
    results.network.hash = hash;
    let opts = network_report::ArtifactOptions {
        png: !args.no_png,
        vtk: !args.no_vtk,
        vtk_encoding: if args.vtk_ascii {
            network_report::vtk::VtkEncoding::Ascii
        } else {
            network_report::vtk::VtkEncoding::Binary
        },
        table_points: args.table_points,
        table_units: args.table_units,
    };
    network_report::write_run_set(&results, &network, set, &opts)
        .with_context(|| format!("cannot write results to {}", args.output.display()))?;
    for (i, p) in results.processes.iter().enumerate() {
        progress.note(&format!(
            "process {} {:<11} final Pc {:>12} Pa   Sw {}   trapped Sn {}",
            i + 1,
            p.kind.as_str(),
            fixed(Some(p.final_pc_pa), 1),
            fixed(Some(p.final_sw), 4),
            fixed(Some(p.final_sn_trapped), 4)
        ));
    }
    for w in &results.warnings {
        progress.warn(w);
    }
    print!(
        "{}",
        network_report::key_results::key_results_text(&results)
    );
    progress.note(&format!("results in {}", args.output.display()));
    Ok(())
}
