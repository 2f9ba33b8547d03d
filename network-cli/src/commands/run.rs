//! `ganglion run`: every process of a study file on its network.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::io;
use network_core::run::run_study;

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
    print!("{}", key_results(&results));
    progress.note(&format!("results in {}", args.output.display()));
    Ok(())
}

/// `x` with `decimals` decimals, "n/a" when missing or not finite; a value
/// that rounds to zero prints as 0 (never `-0.0000`).
pub fn fixed(x: Option<f64>, decimals: usize) -> String {
    match x.filter(|v| v.is_finite()) {
        None => "n/a".to_string(),
        Some(v) => {
            let s = format!("{v:.decimals$}");
            if s.trim_start_matches('-')
                .chars()
                .all(|c| c == '0' || c == '.')
            {
                format!("{:.decimals$}", 0.0)
            } else {
                s
            }
        }
    }
}

/// The key results of a run, one per line, for standard output.
fn key_results(r: &network_core::run::RunResults) -> String {
    let sp = r.single_phase.as_ref();
    let e = &r.end_points;
    let label = &r.study.fluids.nonaqueous_label;
    let n = if label.eq_ignore_ascii_case("oil") {
        "o"
    } else {
        "n"
    };
    let mut rows: Vec<(String, String)> = vec![
        (
            "permeability k".into(),
            match sp {
                Some(p) => format!(
                    "{} mD ({:.4e} m²)",
                    fixed(Some(p.permeability_md), 1),
                    p.permeability_m2
                ),
                None => "n/a".into(),
            },
        ),
        (
            "porosity φ".into(),
            fixed(sp.map(|p| p.porosity).or(Some(r.network.porosity)), 4),
        ),
        (
            "formation factor F".into(),
            fixed(sp.map(|p| p.formation_factor), 2),
        ),
        ("Swi (end of primary drainage)".into(), fixed(e.swi, 4)),
        (format!("Sni ({label})"), fixed(r.sni, 4)),
        ("Snr (trapped, end of imbibition)".into(), fixed(e.snr, 4)),
        ("krw(Snr)".into(), fixed(e.krw_at_snr, 4)),
        (format!("kr{n}(Swi)"), fixed(e.krn_at_swi, 4)),
        (
            "Land C (single point: 1/Snr − 1/Sni)".into(),
            fixed(e.land_coefficient, 3),
        ),
    ];
    if let Some(w) = &r.wettability_indices {
        rows.push(("Amott–Harvey index".into(), fixed(Some(w.amott_harvey), 3)));
        let usbm = if w.usbm.is_finite() {
            fixed(Some(w.usbm), 3)
        } else {
            "n/a (an area under the imbibition or secondary-drainage curve vanishes)".into()
        };
        rows.push(("USBM index".into(), usbm));
    }
    let width = rows
        .iter()
        .map(|(k, _)| k.chars().count())
        .max()
        .unwrap_or(0);
    let mut out = String::from("key results (model estimates; all results in the output folder)\n");
    for (k, v) in rows {
        let pad = width - k.chars().count();
        out.push_str(&format!("  {k}{}  {v}\n", " ".repeat(pad)));
    }
    out
}
