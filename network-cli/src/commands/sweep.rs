//! `ganglion sweep` and `ganglion collect`: many cases of one study, in
//! parallel, resumable, with statistics.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use network_core::sweep::{
    self, CaseList, Collected, Shard, SweepRun, SweepStudy, compact_ranges, describe,
};
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
/// skips the cases already finished. The [sweep] keys are listed in
/// docs/keys.md.
///
/// On a cluster, each job runs part of the cases and `collect OUT` merges
/// them at the end: `--case LIST` runs the listed cases (`3`, `2-5`,
/// `0,4,7-9`), `--shard I/N` the I-th of N groups of contiguous cases
/// (I counts from 0; the N groups hold every case once and differ in size
/// by at most one). Cases of a job that already finished in OUT are kept,
/// so a job run again only redoes the missing ones. Many jobs may write
/// into the same OUT at once. `ganglion batch-script` writes the job
/// scripts.
///
/// Examples:
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --list-cases
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --count-cases
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --case 3
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --case 0-3,8
///   ganglion sweep studies/kestrel-trapping.toml -o out/trapping --shard 2/4
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Study file with a [sweep] table.
    pub study: PathBuf,
    /// Output folder.
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Print the cases (those of --case or --shard, if given) and exit.
    #[arg(long)]
    pub list_cases: bool,
    /// Print the number of cases of the sweep (one integer) and exit.
    #[arg(long, conflicts_with_all = ["list_cases", "case", "shard"])]
    pub count_cases: bool,
    /// Run only these cases, e.g. 3, 2-5 or 0,4,7-9 (no merge).
    #[arg(long, value_name = "LIST", conflicts_with = "shard")]
    pub case: Option<String>,
    /// Run only the I-th of N groups of contiguous cases, I from 0 (no
    /// merge).
    #[arg(long, value_name = "I/N")]
    pub shard: Option<String>,
}

/// Merge the finished cases of a sweep folder into its summary.
///
/// Every case of the sweep's case list must have finished: otherwise the
/// missing cases are listed by number (e.g. `4-7,12`, a list `sweep
/// --case` reads back), nothing is written and the exit code is 1.
/// `--allow-missing` merges the finished cases anyway (a partial summary,
/// with a warning).
///
/// Example:
///   ganglion collect out/trapping
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct CollectArgs {
    /// The sweep's output folder.
    pub output: PathBuf,
    /// Merge the finished cases even when some are missing.
    #[arg(long)]
    pub allow_missing: bool,
}

/// The sweep of a study file, refused with every problem listed.
pub fn read_sweep(study: &Path) -> Result<SweepStudy> {
    let text = std::fs::read_to_string(study)
        .with_context(|| format!("cannot read study {}", study.display()))?;
    SweepStudy::parse(&text).map_err(|e| {
        let lines: Vec<String> =
            e.0.iter()
                .map(|x| format!("{}: {x}", study.display()))
                .collect();
        anyhow::anyhow!("the sweep was refused:\n  {}", lines.join("\n  "))
    })
}

/// The cases chosen by `--case` or `--shard` (`None`: every case), checked
/// against a sweep of `n_cases` cases; the error names the flag and value.
fn selection(args: &Args, n_cases: usize) -> Result<Option<Vec<usize>>> {
    if let Some(text) = &args.case {
        let list = CaseList::parse(text)
            .and_then(|l| l.cases(n_cases))
            .map_err(|e| anyhow::anyhow!("--case {e}"))?;
        return Ok(Some(list));
    }
    if let Some(text) = &args.shard {
        let shard = Shard::parse(text).map_err(|e| anyhow::anyhow!("--shard {e}"))?;
        return Ok(Some(shard.cases(n_cases).collect()));
    }
    Ok(None)
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let sweep = read_sweep(&args.study)?;
    let cases = sweep.cases();
    if args.count_cases {
        println!("{}", cases.len());
        return Ok(());
    }
    // Every flag is checked before anything is written.
    let selected = selection(args, cases.len())?;
    if args.list_cases {
        let all: Vec<usize> = (0..cases.len()).collect();
        for &k in selected.as_deref().unwrap_or(&all) {
            println!("{:>5}  {}", k, describe(&cases[k]));
        }
        return Ok(());
    }
    let Some(selected) = selected else {
        let prepared = SweepRun::prepare(&args.study, &sweep, &args.output)
            .with_context(|| format!("cannot prepare {}", args.output.display()))?;
        let (n, todo) = (prepared.cases().len(), prepared.todo().len());
        progress.note(&format!(
            "{n} cases, {} already finished, {todo} to run",
            n - todo
        ));
        prepared.run_unfinished(progress)?;
        return collect_into(&args.output, false, progress);
    };
    let prepared = SweepRun::prepare_selection(&args.study, &sweep, &args.output, &selected)
        .with_context(|| format!("cannot prepare {}", args.output.display()))?;
    let todo = prepared.todo().len();
    let which = if selected.is_empty() {
        "no case".to_string()
    } else {
        format!("cases {}", compact_ranges(&selected))
    };
    progress.note(&format!(
        "{which} of {}: {} already finished, {todo} to run",
        cases.len(),
        selected.len() - todo
    ));
    prepared.run_unfinished(progress)?;
    if let [k] = selected[..] {
        progress.note(&format!("case {k} done: {}", describe(&cases[k])));
    } else {
        progress.note(&format!("{which} done; merge with `ganglion collect`"));
    }
    Ok(())
}

pub fn collect(args: &CollectArgs, progress: &Bars) -> Result<()> {
    collect_into(&args.output, args.allow_missing, progress)
}

fn collect_into(out: &Path, allow_missing: bool, progress: &Bars) -> Result<()> {
    let Collected {
        cases,
        results,
        missing,
        summary,
    } = sweep::collect(out)?;
    if !missing.is_empty() && !allow_missing {
        anyhow::bail!(
            "{} of {} cases missing in {}: {} (nothing written; run them with \
             `ganglion sweep STUDY -o {} --case {}`, then collect again, or merge the \
             finished ones with `collect --allow-missing`)",
            missing.len(),
            cases.len(),
            out.display(),
            compact_ranges(&missing),
            out.display(),
            compact_ranges(&missing),
        );
    }
    let title = network_report::sweep_title(&results);
    network_report::write_sweep_set(&title, &summary, &results, out, true)
        .with_context(|| format!("cannot write the sweep results to {}", out.display()))?;
    if !missing.is_empty() {
        progress.warn(&format!(
            "{} of {} cases missing, merged without them: {}",
            missing.len(),
            cases.len(),
            compact_ranges(&missing)
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
