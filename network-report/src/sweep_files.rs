//! A sweep's result data files: `summary.json` (statistics per parameter
//! combination), `trapping-curve.csv` (initial and residual saturation with
//! spread per group) and `cases.csv` (one row per finished case).

use std::path::Path;

use network_core::io::atomic::{remove_stale_temporaries, write_atomic};
use network_core::io::result_set::{self, Manifest};
use network_core::sweep::{CaseResult, SweepSummary};

use crate::ReportError;

/// The `trapping-curve.csv` text.
pub fn trapping_csv(s: &SweepSummary) -> String {
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

/// The `cases.csv` text.
pub fn cases_csv(results: &[CaseResult]) -> String {
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

/// Writes `summary.json`, `trapping-curve.csv` and `cases.csv` into `out`,
/// each atomically.
pub fn write_sweep_results(
    summary: &SweepSummary,
    results: &[CaseResult],
    out: &Path,
) -> Result<(), ReportError> {
    let json = serde_json::to_string_pretty(summary).expect("a sweep summary serialises") + "\n";
    for (name, body) in [
        ("summary.json", json),
        ("trapping-curve.csv", trapping_csv(summary)),
        ("cases.csv", cases_csv(results)),
    ] {
        let path = out.join(name);
        write_atomic(&path, body.as_bytes()).map_err(|source| ReportError::Io { path, source })?;
    }
    Ok(())
}

/// Writes a sweep's merged outputs ([`write_sweep_results`] and
/// [`crate::write_sweep_artifacts`]) into its folder `out` as one unit, in
/// place (the folder keeps its case list and case files for resume): the
/// old manifest is removed first ([`result_set::unseal`]), the outputs are
/// written, outputs of an earlier merge that this one does not write are
/// removed, and the manifest, listing the outputs and the case list and
/// case files they were merged from, is written last
/// ([`result_set::seal`]). Temporary files of killed writers in `out` and
/// `out/cases` are removed first. A folder whose manifest is missing or
/// does not verify holds an interrupted merge.
pub fn write_sweep_set(
    title: &str,
    summary: &SweepSummary,
    results: &[CaseResult],
    out: &Path,
    png: bool,
) -> Result<Manifest, ReportError> {
    remove_stale_temporaries(out);
    remove_stale_temporaries(&out.join("cases"));
    let old = result_set::unseal(out)?;
    write_sweep_results(summary, results, out)?;
    let figures = crate::write_sweep_artifacts(title, summary, results, out, png)?;
    let mut written: Vec<String> = ["summary.json", "trapping-curve.csv", "cases.csv"]
        .map(String::from)
        .to_vec();
    for p in &figures {
        if let Some(n) = p.file_name() {
            written.push(n.to_string_lossy().into_owned());
        }
    }
    let sources: Vec<String> = result_set::list_files(out)?
        .into_iter()
        .filter(|f| {
            f == "sweep-cases.json"
                || f.strip_prefix("cases/case-")
                    .is_some_and(|r| r.ends_with(".json") && !r.contains('/'))
        })
        .collect();
    Ok(result_set::seal(
        out,
        "sweep",
        &written,
        &sources,
        old.as_ref(),
    )?)
}
