//! `ganglion sweep` and `ganglion collect`: many cases of one study, in
//! parallel, resumable, with statistics.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use network_core::sweep::{self, Collected, SweepError, SweepRun, SweepStudy, describe};
use network_report::key_results::fixed;

use crate::progress::Bars;

/// Run every case of a study's `[sweep]`: initial water saturations,
/// parameter lists and realisations, in parallel.
///
/// OUT receives sweep-cases.json (every case and its study), cases/ (one
/// result file per finished case, written atomically), summary.json
/// (statistics per parameter combination with the least-squares Land
/// coefficient, its standard error and a warning when the points are not
/// Land-shaped), trapping-curve.csv, cases.csv, the figures (trapping
/// curve with its Land fit, curves with their spread over realisations)
/// and report.html. A sweep started again with the same study and OUT
/// skips the cases already finished. `--case K` runs one case only (for a
/// cluster's job scheduler); `collect OUT` then merges. The [sweep] keys
/// are listed in docs/keys.md.
///
/// Examples:
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --list-cases
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --case 3
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Study file with a [sweep] table.
    pub study: PathBuf,
    /// Output folder.
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Print the cases and exit.
    #[arg(long)]
    pub list_cases: bool,
    /// Run only this case (no merge).
    #[arg(long, value_name = "K")]
    pub case: Option<usize>,
}

/// Merge the finished cases of a sweep folder into its summary.
///
/// Example:
///   ganglion collect out/trapping
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct CollectArgs {
    /// The sweep's output folder.
    pub output: PathBuf,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let text = std::fs::read_to_string(&args.study)
        .with_context(|| format!("cannot read study {}", args.study.display()))?;
    let sweep = SweepStudy::parse(&text).map_err(|e| {
        let lines: Vec<String> =
            e.0.iter()
                .map(|x| format!("{}: {x}", args.study.display()))
                .collect();
        anyhow::anyhow!("the sweep was refused:\n  {}", lines.join("\n  "))
    })?;
    if args.list_cases {
        for c in &sweep.cases() {
            println!("{:>5}  {}", c.index, describe(c));
        }
        return Ok(());
    }
    let prepared = SweepRun::prepare(&args.study, &sweep, &args.output)
        .with_context(|| format!("cannot prepare {}", args.output.display()))?;
    if let Some(k) = args.case {
        prepared.run_one(k).map_err(|e| match e {
            SweepError::NoSuchCase { .. } => anyhow::anyhow!("--{e}"),
            e => anyhow::Error::new(e),
        })?;
        progress.note(&format!(
            "case {k} done: {}",
            describe(&prepared.cases()[k])
        ));
        return Ok(());
    }
    let (n, todo) = (prepared.cases().len(), prepared.todo().len());
    progress.note(&format!(
        "{n} cases, {} already finished, {todo} to run",
        n - todo
    ));
    prepared.run_unfinished(progress)?;
    collect_into(&args.output, progress)
}

pub fn collect(args: &CollectArgs, progress: &Bars) -> Result<()> {
    collect_into(&args.output, progress)
}

fn collect_into(out: &Path, progress: &Bars) -> Result<()> {
    let Collected {
        results,
        missing,
        summary,
        ..
    } = sweep::collect(out)?;
    network_report::write_sweep_results(&summary, &results, out)
        .with_context(|| format!("cannot write the sweep results to {}", out.display()))?;
    let title = network_report::sweep_title(&results);
    network_report::write_sweep_artifacts(&title, &summary, &results, out, true)
        .with_context(|| format!("cannot write the sweep report to {}", out.display()))?;
    if !missing.is_empty() {
        progress.warn(&format!(
            "{} case(s) not finished yet: {:?}",
            missing.len(),
            missing
        ));
    }
    println!("Land coefficient per group (least squares on Snr, Land 1968; model estimates)");
    for g in &summary.groups {
        let params: Vec<String> = g
            .parameters
            .iter()
            .map(|(p, v)| format!("{p} = {v}"))
            .collect();
        let land = match (g.land_coefficient, g.land_coefficient_se, g.land_rmse_snr) {
            (Some(c), Some(se), Some(rmse)) => format!(
                "Land C {} ± {} over {} points (rmse {} in Snr)",
                fixed(Some(c), 3),
                fixed(Some(se), 3),
                g.land_points,
                fixed(Some(rmse), 3)
            ),
            _ => format!("Land C n/a ({} points)", g.land_points),
        };
        println!(
            "  group {} ({}): {} cases, {land}",
            g.group,
            if params.is_empty() {
                "base".to_string()
            } else {
                params.join(", ")
            },
            g.cases,
        );
        if let Some(w) = &g.land_warning {
            progress.warn(&format!("group {}: {w}", g.group));
        }
    }
    progress.note(&format!("results in {}", out.display()));
    Ok(())
}
