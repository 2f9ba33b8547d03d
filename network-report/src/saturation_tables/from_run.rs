//! Saturation-function tables of a study run: the first drainage and the
//! first imbibition with computed relative permeabilities, made monotone
//! and resampled by [`build_table`], as CSV and as a keyword include file.
//!
//! Files (names fixed): `table-drainage.csv`, `table-drainage.inc`,
//! `table-imbibition.csv`, `table-imbibition.inc`. Each opens with comment
//! lines (`#` in CSV, `--` in the include file) naming the columns and
//! units, the row count, the source run (network name and hash, study
//! seed, program and version) and how the end points and monotonicity were
//! handled; both parsers of [`saturation_tables`](mod@crate::saturation_tables)
//! skip them. The include file is the water–oil table (`SWOF`) for an oil
//! run, the gas–water pair (`SWFN`, `SGFN`) when the non-aqueous label is
//! `gas` or `CO2` ([`is_gas`]); Pc in the unit asked for (bar, kPa, psi),
//! named in its header. The CSV always holds Pa.
//!
//! The tables follow the conventions of [`TableOptions::for_simulators`]
//! (common practice for simulator input): rows at simulated points from
//! the lowest simulated Sw (connate water for drainage, the start for
//! imbibition), where `krw = 0` exactly, to Sw = 1 (a last row with `krw` at
//! its end point, `krn = 0` and Pc held, when the curve ends below, as
//! imbibition does at 1 − Snr); every Pc a simulated value; the drainage
//! table keeps the entry pressure at Sw = 1.
//!
//! The samples of a process are its recorded points where the flow was
//! solved: `(Sw, krw, krn, Pc)`. A process with fewer than two such points
//! at distinct water saturations gives no table (there is no Sw range to
//! span); it is left out rather than reported as an error.

use network_core::run::RunResults;
use network_core::study::ProcessKind;

use super::{
    Curve, KeywordTableOptions, Process, SatTable, TableOptions, TableUnits, build_table,
    write_csv, write_gas_water_tables, write_keyword_table,
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
    units: TableUnits,
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
        // The drainage entry pressure: the Pc of the first recorded point
        // where the non-aqueous phase had entered (Sw below the start).
        let entry_pc = match process {
            Process::Drainage => o
                .points
                .iter()
                .find(|p| p.saturation.sw < o.points[0].saturation.sw)
                .map(|p| p.pc_pa),
            Process::Imbibition => None,
        };
        let opts = TableOptions::for_simulators(n_points, entry_pc);
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
            extended: cols[0].iter().all(|&s| s < 1.0 - 1e-9),
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
        let kw_opts = KeywordTableOptions {
            source_run: description.source_run(),
            process: Some(process),
            comments,
            units,
            ..KeywordTableOptions::default()
        };
        let inc = if is_gas(label) {
            write_gas_water_tables(&table.rows, &kw_opts)
        } else {
            write_keyword_table(&table.rows, &kw_opts)
        }
        .map_err(|source| ReportError::Table {
            file: inc_name.clone(),
            source,
        })?;
        out.push((csv_name, csv));
        out.push((inc_name, inc));
    }
    Ok(out)
}

/// Whether a non-aqueous label names a gas (`gas`, `CO2`, any case), whose
/// tables are written as the gas–water family.
pub fn is_gas(label: &str) -> bool {
    matches!(label.trim().to_ascii_lowercase().as_str(), "gas" | "co2")
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
    /// The last row is the added row at Sw = 1.
    extended: bool,
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
        let lo = rows.sw[0];
        let top = if self.extended {
            rows.sw[rows.len() - 2]
        } else {
            rows.sw[rows.len() - 1]
        };
        let mut v = vec![
            format!(
                "saturation functions of process {} from a pore-network model",
                self.process_name
            ),
            format!("source run: {}", self.source_run()),
            columns.to_string(),
            format!(
                "{} rows (row count for the table-dimension setting) at simulated points: the \
                 kr points nearest to {} evenly spaced Sw of {} simulated points{}; no \
                 interpolation, every Pc a simulated value",
                rows.len(),
                self.opts.n_points,
                self.n_samples,
                if self.extended {
                    ", and a row at Sw = 1"
                } else {
                    ""
                }
            ),
            format!(
                "end points: Sw from {lo} (the lowest simulated Sw; krw set to 0 there) to {top} \
                 (the highest simulated Sw; krn set to 0 there){}; Pc at the highest Sw: {}",
                if self.extended {
                    format!(
                        ", then to Sw = 1 with krw held at its end point {}, krn = 0 and Pc \
                         held",
                        rows.krw[rows.len() - 1]
                    )
                } else {
                    String::new()
                },
                match self.opts.pc_at_max_sw {
                    Some(p) => format!(
                        "the entry pressure {p} Pa (the first recorded Pc at which the \
                         non-aqueous phase entered)"
                    ),
                    None => "the Pc at which that Sw was first reached".to_string(),
                }
            ),
            format!(
                "made monotone: krw rising and krn falling in Sw by weighted isotonic \
                 regression, Pc falling by a running minimum from low Sw (values stay \
                 simulated ones); changed krw at {} (max {:.3e}), krn at {} (max {:.3e}), Pc \
                 at {} (max {:.3e} Pa) of {} samples; {} equal-Sw samples merged (kr: mean; \
                 Pc: the first in process order)",
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
