//! `ganglion run`: every process of a study file on its network.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::io;
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
/// appended data, or text with --vtk-ascii). Every
/// file is written atomically.
///
/// Examples:
///   ganglion run studies/kestrel-waterflood.toml -o out/
///   ganglion run study.toml -o out/ --threads 2 --quiet
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Study file (TOML).
    pub study: PathBuf,
    /// Output folder (created if missing).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
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
    /// Rows of each saturation-function table.
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

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    if args.table_points < 2 {
        anyhow::bail!("--table-points {}: must be at least 2", args.table_points);
    }
    let study = io::study::read_study(&args.study)?;
    let (network, hash) = super::study_network(&args.study, &study, 0, progress)?;
    let mut results = run_study(&network, &study, progress);
    results.network.hash = hash;
    network_report::write_run_results(&results, &args.output)
        .with_context(|| format!("cannot write results to {}", args.output.display()))?;
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
    network_report::write_run_artifacts(&results, &network, &args.output, &opts)
        .with_context(|| format!("cannot write the report files to {}", args.output.display()))?;
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
