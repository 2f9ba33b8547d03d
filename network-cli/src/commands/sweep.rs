//! `ganglion sweep` and `ganglion collect`: many cases of one study, in
//! parallel, resumable, with statistics.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

use anyhow::{Context, Result, bail};
use network_core::io::atomic::write_atomic;
use network_core::progress::{Progress, Silent};
use network_core::run::run_study;
use network_core::sweep::{Case, CaseResult, SweepStudy, SweepSummary, describe, summarise};
use rayon::prelude::*;

use crate::progress::Bars;

/// Run every case of a study's `[sweep]`: initial water saturations,
/// parameter lists and realisations, in parallel.
///
/// OUT receives sweep-cases.json (every case and its study), cases/
/// (one result file per finished case, written atomically), summary.json
/// (statistics per parameter combination with the Land coefficient),
/// trapping-curve.csv, cases.csv, the figures (trapping curve with its Land
/// fit, curves with their spread over realisations) and report.html. A sweep started again with the same
/// study and OUT skips the cases already finished. `--case K` runs one
/// case only (for a cluster's job scheduler); `collect OUT` then merges.
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

fn case_path(out: &Path, k: usize) -> PathBuf {
    out.join("cases").join(format!("case-{k:05}.json"))
}

fn read_case(out: &Path, case: &Case) -> Option<CaseResult> {
    let text = std::fs::read_to_string(case_path(out, case.index)).ok()?;
    let r: CaseResult = serde_json::from_str(&text).ok()?;
    (r.case.study_hash == case.study_hash).then_some(r)
}

fn run_case(study_path: &Path, out: &Path, case: &Case) -> Result<()> {
    let study = case.study();
    let quiet = Bars::new(true);
    let (network, hash) = super::study_network(study_path, &study, case.realisation, &quiet)?;
    let mut r = run_study(&network, &study, &Silent);
    r.network.hash = hash;
    let res = CaseResult::from_run(case.clone(), &r);
    let text = serde_json::to_string(&res)? + "\n";
    let p = case_path(out, case.index);
    write_atomic(&p, text.as_bytes()).with_context(|| format!("cannot write {}", p.display()))?;
    Ok(())
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
    let cases = sweep.cases();
    if args.list_cases {
        for c in &cases {
            println!("{:>5}  {}", c.index, describe(c));
        }
        return Ok(());
    }
    std::fs::create_dir_all(args.output.join("cases"))
        .with_context(|| format!("cannot create {}", args.output.display()))?;
    let listing = serde_json::to_string_pretty(&cases)? + "\n";
    let lp = args.output.join("sweep-cases.json");
    write_atomic(&lp, listing.as_bytes())
        .with_context(|| format!("cannot write {}", lp.display()))?;
    if let Some(k) = args.case {
        let Some(c) = cases.get(k) else {
            bail!("--case {k}: the sweep has cases 0 to {}", cases.len() - 1);
        };
        run_case(&args.study, &args.output, c)?;
        progress.note(&format!("case {k} done: {}", describe(c)));
        return Ok(());
    }
    let todo: Vec<&Case> = cases
        .iter()
        .filter(|c| read_case(&args.output, c).is_none())
        .collect();
    progress.note(&format!(
        "{} cases, {} already finished, {} to run",
        cases.len(),
        cases.len() - todo.len(),
        todo.len()
    ));
    progress.start("sweep", todo.len() as u64);
    let threads = rayon::current_num_threads().max(1);
    let failures = Mutex::new(Vec::new());
    // A few cases at a time keeps memory bounded.
    for chunk in todo.chunks(threads) {
        chunk.par_iter().for_each(|c| {
            if let Err(e) = run_case(&args.study, &args.output, c) {
                failures
                    .lock()
                    .expect("lock")
                    .push(format!("case {}: {e:#}", c.index));
            }
            progress.advance(1);
        });
    }
    progress.finish();
    let failures = failures.into_inner().expect("lock");
    if let Some(f) = failures.first() {
        bail!("{} case(s) failed; first: {f}", failures.len());
    }
    collect_into(&args.output, progress)
}

pub fn collect(args: &CollectArgs, progress: &Bars) -> Result<()> {
    collect_into(&args.output, progress)
}

/// The `trapping-curve.csv` text.
fn trapping_csv(s: &SweepSummary) -> String {
    let mut out = String::from(
        "group,initial_water_saturation,sni_mean,sni_std,snr_mean,snr_std,snr_p05,snr_p95,n\n",
    );
    for g in &s.groups {
        for p in &g.trapping_curve {
            let (Some(i), Some(r)) = (p.sni, p.snr) else {
                continue;
            };
            out += &format!(
                "{},{},{},{},{},{},{},{},{}\n",
                g.group,
                p.initial_water_saturation
                    .map_or(String::new(), |x| x.to_string()),
                i.mean,
                i.std,
                r.mean,
                r.std,
                r.p05,
                r.p95,
                r.n
            );
        }
    }
    out
}

fn cases_csv(results: &[CaseResult]) -> String {
    let mut out = String::from(
        "case,group,realisation,initial_water_saturation,sni,snr,swi,krw_at_snr,amott_water,parameters\n",
    );
    let o = |x: Option<f64>| x.map_or(String::new(), |v| v.to_string());
    for r in results {
        let params: Vec<String> = r
            .case
            .parameters
            .iter()
            .map(|(p, v)| format!("{p}={v}"))
            .collect();
        out += &format!(
            "{},{},{},{},{},{},{},{},{},\"{}\"\n",
            r.case.index,
            r.case.group,
            r.case.realisation,
            o(r.case.initial_water_saturation),
            o(r.sni),
            o(r.snr),
            o(r.swi),
            o(r.krw_at_snr),
            o(r.amott_water),
            params.join("; ").replace('"', "'")
        );
    }
    out
}

fn collect_into(out: &Path, progress: &Bars) -> Result<()> {
    let lp = out.join("sweep-cases.json");
    let text =
        std::fs::read_to_string(&lp).with_context(|| format!("cannot read {}", lp.display()))?;
    let cases: Vec<Case> = serde_json::from_str(&text)
        .with_context(|| format!("{} is not a sweep case list", lp.display()))?;
    let mut results = Vec::new();
    let mut missing = Vec::new();
    for c in &cases {
        match read_case(out, c) {
            Some(r) => results.push(r),
            None => missing.push(c.index),
        }
    }
    let summary = summarise(cases.len(), &results);
    for (name, body) in [
        (
            "summary.json",
            serde_json::to_string_pretty(&summary)? + "\n",
        ),
        ("trapping-curve.csv", trapping_csv(&summary)),
        ("cases.csv", cases_csv(&results)),
    ] {
        let p = out.join(name);
        write_atomic(&p, body.as_bytes())
            .with_context(|| format!("cannot write {}", p.display()))?;
    }
    let title = results
        .first()
        .and_then(|r| r.case.study().title)
        .unwrap_or_else(|| "Ganglion sweep".to_string());
    network_report::write_sweep_artifacts(&title, &summary, &results, out, true)
        .with_context(|| format!("cannot write the sweep report to {}", out.display()))?;
    if !missing.is_empty() {
        progress.note(&format!(
            "{} case(s) not finished yet: {:?}",
            missing.len(),
            missing
        ));
    }
    if !progress.quiet() {
        for g in &summary.groups {
            let params: Vec<String> = g
                .parameters
                .iter()
                .map(|(p, v)| format!("{p} = {v}"))
                .collect();
            eprintln!(
                "group {} ({}): {} cases, Land C {}",
                g.group,
                if params.is_empty() {
                    "base".to_string()
                } else {
                    params.join(", ")
                },
                g.cases,
                g.land_coefficient
                    .map_or("n/a".into(), |c| format!("{c:.3}"))
            );
        }
        eprintln!("results in {}", out.display());
    }
    Ok(())
}
