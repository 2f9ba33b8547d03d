//! Saturation-function tables of a study run: the first drainage and the
//! first imbibition with computed relative permeabilities, made monotone
//! and resampled by [`build_table`], as CSV and as a keyword include file.
//!
//! Files (names fixed): `table-drainage.csv`, `table-drainage.inc`,
//! `table-imbibition.csv`, `table-imbibition.inc`. Each opens with comment
//! lines (`#` in CSV, `--` in the include file) naming the columns and
//! units, the source run (network name and hash, study seed, program and
//! version) and how the end points and monotonicity were handled; both
//! parsers of [`saturation_tables`](mod@crate::saturation_tables) skip
//! them.
//!
//! The samples of a process are its recorded points where the flow was
//! solved: `(Sw, krw, krn, Pc)`. A process with fewer than two such points
//! at distinct water saturations gives no table (there is no Sw range to
//! span); it is left out rather than reported as an error.

use network_core::run::RunResults;
use network_core::study::ProcessKind;

use super::{
    Curve, KeywordTableOptions, Process, SatTable, TableOptions, build_table, write_csv,
    write_keyword_table,
};
use crate::error::ReportError;
use crate::figures::process_label;

/// The tables of `results` with `n_points` rows each, as `(file name,
/// text)` pairs: for each of the first drainage and the first imbibition
/// with at least two computed kr points at distinct Sw, the CSV and then
/// the include file (see the [module docs](self)).
///
/// Errors name the file that could not be built (`n_points < 2`, or
/// non-finite simulated values).
pub fn saturation_tables(
    results: &RunResults,
    n_points: usize,
) -> Result<Vec<(String, String)>, ReportError> {
    let mut out = Vec::new();
    let kinds: Vec<ProcessKind> = results.outcomes.iter().map(|o| o.kind).collect();
    for (kind, process) in [
        (ProcessKind::Drainage, Process::Drainage),
        (ProcessKind::Imbibition, Process::Imbibition),
    ] {
        let Some(index) = results.outcomes.iter().position(|o| {
            o.kind == kind && o.points.iter().filter(|p| p.flow.is_some()).count() >= 2
        }) else {
            continue;
        };
        let o = &results.outcomes[index];
        let mut cols: [Vec<f64>; 4] = Default::default();
        for p in &o.points {
            if let Some(f) = p.flow {
                cols[0].push(p.saturation.sw);
                cols[1].push(f.krw);
                cols[2].push(f.krn);
                cols[3].push(p.pc_pa);
            }
        }
        let distinct = cols[0].iter().any(|&s| s != cols[0][0]);
        if !distinct {
            continue;
        }
        let stem = format!("table-{}", process.as_str());
        let opts = TableOptions {
            n_points,
            ..TableOptions::default()
        };
        let curve = Curve {
            process,
            sw: &cols[0],
            krw: &cols[1],
            krn: &cols[2],
            pc_pa: &cols[3],
        };
        let csv_name = format!("{stem}.csv");
        let table = build_table(&curve, &opts).map_err(|source| ReportError::Table {
            file: csv_name.clone(),
            source,
        })?;
        let label = &results.study.fluids.nonaqueous_label;
        let description = Description {
            results,
            process_name: process_label(&kinds, index),
            table: &table,
            opts: &opts,
            n_samples: cols[0].len(),
        };
        let mut csv = String::new();
        for line in description.lines(&format!(
            "columns: sw = water saturation (fraction of pore volume), krw = water relative \
             permeability (-), krn = {} relative permeability (-), pc_pa = capillary pressure \
             Pn - Pw (Pa)",
            one_line(label)
        )) {
            csv.push_str("# ");
            csv.push_str(&line);
            csv.push('\n');
        }
        csv.push_str(
            &write_csv(&table.rows).map_err(|source| ReportError::Table {
                file: csv_name.clone(),
                source,
            })?,
        );
        let inc_name = format!("{stem}.inc");
        let mut comments = description.lines(&format!(
            "column krow holds the {} (non-aqueous phase) relative permeability",
            one_line(label)
        ));
        // The writer names the run and process itself.
        comments.retain(|c| !c.starts_with("source run:"));
        let inc = write_keyword_table(
            &table.rows,
            &KeywordTableOptions {
                source_run: description.source_run(),
                process: Some(process),
                comments,
                ..KeywordTableOptions::default()
            },
        )
        .map_err(|source| ReportError::Table {
            file: inc_name.clone(),
            source,
        })?;
        out.push((csv_name, csv));
        out.push((inc_name, inc));
    }
    Ok(out)
}

/// Replaces line breaks by spaces (for comment lines).
fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

struct Description<'a> {
    results: &'a RunResults,
    process_name: String,
    table: &'a SatTable,
    opts: &'a TableOptions,
    n_samples: usize,
}

impl Description<'_> {
    fn source_run(&self) -> String {
        let r = self.results;
        let hash = if r.network.hash.is_empty() {
            "not recorded".to_string()
        } else {
            r.network.hash.clone()
        };
        let mut s = format!(
            "network \"{}\" (hash {hash}), study seed {}, {} {}",
            one_line(&r.network.name),
            r.study.seed,
            one_line(&r.program.name),
            one_line(&r.program.version)
        );
        if let Some(t) = &r.study.title {
            s.push_str(&format!(", study \"{}\"", one_line(t)));
        }
        s
    }

    /// The comment lines, the `columns` line given.
    fn lines(&self, columns: &str) -> Vec<String> {
        let rows = &self.table.rows;
        let rep = &self.table.report;
        let (lo, hi) = (rows.sw[0], rows.sw[rows.len() - 1]);
        let mut v = vec![
            format!(
                "saturation functions of process {} from a pore-network model",
                self.process_name
            ),
            format!("source run: {}", self.source_run()),
            columns.to_string(),
            format!(
                "{} rows evenly spaced in Sw by linear interpolation of {} simulated points",
                rows.len(),
                self.n_samples
            ),
            format!(
                "end points: Sw from {lo} to {hi}, exactly the simulated range (no \
                 extrapolation); krn = 0 at the highest Sw: {}; krw at the lowest Sw: {}",
                if self.opts.krn_zero_at_max_sw {
                    "set"
                } else {
                    "as simulated"
                },
                if self.opts.krw_zero_at_min_sw {
                    "set to 0"
                } else {
                    "as simulated (corner water films conduct)"
                }
            ),
            format!(
                "made monotone by weighted isotonic regression (krw rising, krn and Pc falling \
                 in Sw): changed krw at {} (max {:.3e}), krn at {} (max {:.3e}), Pc at {} (max \
                 {:.3e} Pa) of {} samples; {} equal-Sw samples merged",
                rep.krw.n_changed,
                rep.krw.max_abs_change,
                rep.krn.n_changed,
                rep.krn.max_abs_change,
                rep.pc_pa.n_changed,
                rep.pc_pa.max_abs_change,
                self.n_samples,
                rep.n_merged
            ),
            "model estimates: they complement and do not replace laboratory special core \
             analysis"
                .to_string(),
        ];
        for l in &mut v {
            *l = one_line(l);
        }
        v
    }
}
