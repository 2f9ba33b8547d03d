//! Tables as saturation-function keyword tables for black-oil reservoir
//! simulators: `--` comments, the keyword, rows, and `/`. Water–oil:
//! one table `Sw krw krow Pc` (keyword `SWOF`); gas–water: two tables,
//! `SWFN` (`Sw krw Pc`) and `SGFN` (`Sg krg Pc`, Pc 0), the layout of the
//! common open deck format. Pc in the unit of [`TableUnits`], named in a
//! `-- Pc unit: …` comment line that [`parse_keyword_table`] honours.

use std::fmt::Write as _;

use super::file_rows::{check_rows, parse_number, parse_plain};
use super::{Process, TableRows, TableUnits};
use crate::error::TableError;

/// Options of [`write_keyword_table`].
#[derive(Clone, Debug, PartialEq)]
pub struct KeywordTableOptions {
    /// Keyword opening the table: 1–8 upper-case ASCII letters or digits,
    /// starting with a letter. Default `SWOF`.
    pub keyword: String,
    /// Name of the run the table comes from, written in a comment.
    pub source_run: String,
    /// Process of the curve, written in a comment when given.
    pub process: Option<Process>,
    /// Further comment lines (newlines are replaced by spaces).
    pub comments: Vec<String>,
    /// Unit of Pc. Default bar.
    pub units: TableUnits,
}

impl Default for KeywordTableOptions {
    fn default() -> Self {
        KeywordTableOptions {
            keyword: "SWOF".to_string(),
            source_run: String::new(),
            process: None,
            comments: Vec::new(),
            units: TableUnits::Bar,
        }
    }
}

/// A keyword table read back by [`parse_keyword_table`].
#[derive(Clone, Debug, PartialEq)]
pub struct KeywordTable {
    /// The keyword.
    pub keyword: String,
    /// The rows (Pc converted back to Pa).
    pub rows: TableRows,
}

/// Writes rows as a water–oil saturation-function keyword table: comment
/// lines (`--`) naming the columns, units, row count and source run, the
/// keyword, one row per line `Sw krw krow Pc` (Pc in `opts.units`), and a
/// terminating `/`.
///
/// Sw is written with 6 decimals and must stay strictly increasing at that
/// precision; kr and Pc are written with 7 significant digits.
pub fn write_keyword_table(
    rows: &TableRows,
    opts: &KeywordTableOptions,
) -> Result<String, TableError> {
    check_rows(rows)?;
    let kw = &opts.keyword;
    let valid_kw = (1..=8).contains(&kw.len())
        && kw.starts_with(|c: char| c.is_ascii_uppercase())
        && kw
            .chars()
            .all(|c| c.is_ascii_uppercase() || c.is_ascii_digit());
    if !valid_kw {
        return Err(TableError::BadOption {
            name: "keyword",
            detail: format!("{kw:?} is not 1–8 upper-case letters or digits"),
        });
    }
    let sw_text: Vec<String> = rows.sw.iter().map(|v| format!("{v:.6}")).collect();
    for i in 1..sw_text.len() {
        let (a, b) = (parse_plain(&sw_text[i - 1]), parse_plain(&sw_text[i]));
        if b <= a {
            return Err(TableError::SwNotIncreasing {
                index: i,
                sw: rows.sw[i],
            });
        }
    }
    let mut out = header("Water-oil", rows.len(), opts);
    let u = opts.units;
    let _ = writeln!(
        out,
        "-- Columns: Sw (fraction of pore volume), krw (-), krow (-), Pc = Po - Pw ({})",
        u.as_str()
    );
    let _ = writeln!(out, "{kw}");
    let _ = writeln!(
        out,
        "-- {:>9} {:>15} {:>15} {:>15}",
        "Sw", "krw", "krow", "Pc"
    );
    for (i, sw) in sw_text.iter().enumerate() {
        let _ = writeln!(
            out,
            "   {:>9} {:>15.6e} {:>15.6e} {:>15.6e}",
            sw,
            rows.krw[i],
            rows.krn[i],
            rows.pc_pa[i] / u.pa_per_unit()
        );
    }
    let _ = writeln!(out, "/");
    Ok(out)
}

/// The comment lines opening a keyword file: what it is, source run,
/// process, further comments, the Pc unit (with the deck unit system that
/// uses it) and the row count for the table-dimension settings.
fn header(family: &str, n_rows: usize, opts: &KeywordTableOptions) -> String {
    let one_line = |s: &str| s.replace(['\n', '\r'], " ");
    let mut out = String::new();
    let _ = writeln!(out, "-- {family} saturation functions written by Ganglion");
    if !opts.source_run.is_empty() {
        let _ = writeln!(out, "-- Source run: {}", one_line(&opts.source_run));
    }
    if let Some(p) = opts.process {
        let _ = writeln!(out, "-- Process: {}", p.as_str());
    }
    for c in &opts.comments {
        let _ = writeln!(out, "-- {}", one_line(c));
    }
    let u = opts.units;
    let _ = writeln!(out, "-- Pc unit: {}", u.as_str());
    let _ = writeln!(
        out,
        "-- {}",
        match u.deck_unit_system() {
            Some(sys) => format!("Pc in {} matches the {sys} deck unit system", u.as_str()),
            None => format!(
                "Pc in {}: no common deck unit system uses it; convert before including \
                 (METRIC: bar, FIELD: psi)",
                u.as_str()
            ),
        }
    );
    let _ = writeln!(
        out,
        "-- {n_rows} rows per table: the table-dimension setting (maximum saturation \
         nodes per table) must be at least {n_rows}"
    );
    out
}

/// Writes rows as the gas–water pair of keyword tables: `SWFN` (`Sw krw
/// Pc`, Pc = Pg − Pw in `opts.units`) and `SGFN` (`Sg krg Pc`, Sg = 1 − Sw
/// increasing, krg the non-aqueous relative permeability, Pc 0 because
/// the whole gas–water capillary pressure is in `SWFN`). `opts.keyword`
/// is not used.
pub fn write_gas_water_tables(
    rows: &TableRows,
    opts: &KeywordTableOptions,
) -> Result<String, TableError> {
    check_rows(rows)?;
    let n = rows.len();
    let sw_text: Vec<String> = rows.sw.iter().map(|v| format!("{v:.6}")).collect();
    let sg_text: Vec<String> = rows.sw.iter().map(|v| format!("{:.6}", 1.0 - v)).collect();
    for i in 1..n {
        if parse_plain(&sw_text[i]) <= parse_plain(&sw_text[i - 1])
            || parse_plain(&sg_text[i]) >= parse_plain(&sg_text[i - 1])
        {
            return Err(TableError::SwNotIncreasing {
                index: i,
                sw: rows.sw[i],
            });
        }
    }
    let u = opts.units;
    let mut out = header("Gas-water", n, opts);
    let _ = writeln!(
        out,
        "-- SWFN columns: Sw (fraction of pore volume), krw (-), Pc = Pg - Pw ({})",
        u.as_str()
    );
    let _ = writeln!(out, "SWFN");
    let _ = writeln!(out, "-- {:>9} {:>15} {:>15}", "Sw", "krw", "Pc");
    for (i, sw) in sw_text.iter().enumerate() {
        let _ = writeln!(
            out,
            "   {:>9} {:>15.6e} {:>15.6e}",
            sw,
            rows.krw[i],
            rows.pc_pa[i] / u.pa_per_unit()
        );
    }
    let _ = writeln!(out, "/");
    let _ = writeln!(
        out,
        "-- SGFN columns: Sg = 1 - Sw (fraction of pore volume), krg (-), Pc ({}), 0: \
         the gas-water Pc is in SWFN",
        u.as_str()
    );
    let _ = writeln!(out, "SGFN");
    let _ = writeln!(out, "-- {:>9} {:>15} {:>15}", "Sg", "krg", "Pc");
    for i in (0..n).rev() {
        let _ = writeln!(
            out,
            "   {:>9} {:>15.6e} {:>15.6e}",
            sg_text[i], rows.krn[i], 0.0
        );
    }
    let _ = writeln!(out, "/");
    Ok(out)
}

/// A keyword table as raw numbers: the keyword and its rows.
pub type RawTable = (String, Vec<Vec<f64>>);

/// Reads every keyword table of a text as raw numbers: `(keyword, rows of
/// `ncols` numbers)` per table, in order (`--` comments skipped; each
/// table ended by `/`). Errors name the line.
pub fn parse_keyword_columns(text: &str, ncols: usize) -> Result<Vec<RawTable>, TableError> {
    let mut out: Vec<RawTable> = Vec::new();
    let mut open: Option<(String, Vec<f64>, usize)> = None;
    for (idx, raw) in text.lines().enumerate() {
        let line_no = idx + 1;
        let body = raw.split("--").next().unwrap_or("").trim();
        let mut rest = body;
        while !rest.is_empty() {
            let (data, slash) = match rest.find('/') {
                Some(p) => (&rest[..p], Some(p)),
                None => (rest, None),
            };
            let mut tokens = data.split_whitespace();
            if open.is_none() {
                match tokens.next() {
                    Some(t) if t.starts_with(|c: char| c.is_ascii_alphabetic()) => {
                        open = Some((t.to_string(), Vec::new(), line_no));
                    }
                    Some(t) => {
                        return Err(TableError::Parse {
                            line: line_no,
                            detail: format!("expected a keyword, found {t:?}"),
                        });
                    }
                    None => {
                        return Err(TableError::Parse {
                            line: line_no,
                            detail: "'/' before a keyword".into(),
                        });
                    }
                }
            }
            let table = open.as_mut().expect("opened above");
            for t in tokens {
                table.1.push(parse_number(t, line_no)?);
            }
            match slash {
                Some(p) => {
                    let (kw, values, _) = open.take().expect("opened above");
                    if !values.len().is_multiple_of(ncols) {
                        return Err(TableError::Parse {
                            line: line_no,
                            detail: format!(
                                "{kw}: {} numbers is not a whole number of {ncols}-column rows",
                                values.len()
                            ),
                        });
                    }
                    out.push((kw, values.chunks(ncols).map(<[f64]>::to_vec).collect()));
                    rest = rest[p + 1..].trim();
                }
                None => rest = "",
            }
        }
    }
    if let Some((kw, _, line)) = open {
        return Err(TableError::Parse {
            line,
            detail: format!("table {kw} not terminated by '/'"),
        });
    }
    Ok(out)
}

/// The Pc unit named by a `-- Pc unit: …` comment line, bar without one.
pub fn declared_units(text: &str) -> Result<TableUnits, TableError> {
    for (idx, raw) in text.lines().enumerate() {
        if let Some(u) = raw.trim().strip_prefix("-- Pc unit:") {
            return TableUnits::parse(u.trim()).ok_or_else(|| TableError::Parse {
                line: idx + 1,
                detail: format!("unknown Pc unit {:?} (bar, kPa or psi)", u.trim()),
            });
        }
    }
    Ok(TableUnits::Bar)
}

/// Reads one keyword table: `--` comments (whole lines or trailing) and
/// blank lines are skipped; the first word is the keyword; then numbers in
/// groups of four (`Sw krw krow Pc`, any line breaks) up to `/`.
/// Pc is converted to Pa from the unit of a `-- Pc unit: …` line (bar
/// without one).
pub fn parse_keyword_table(text: &str) -> Result<KeywordTable, TableError> {
    let mut keyword: Option<String> = None;
    let mut values: Vec<(f64, usize)> = Vec::new();
    let mut ended = false;
    for (idx, raw) in text.lines().enumerate() {
        let line_no = idx + 1;
        let body = raw.split("--").next().unwrap_or("").trim();
        if body.is_empty() {
            continue;
        }
        if ended {
            return Err(TableError::Parse {
                line: line_no,
                detail: format!("text after the terminating '/': {body:?}"),
            });
        }
        let (data, slash) = match body.find('/') {
            Some(p) => (&body[..p], true),
            None => (body, false),
        };
        let mut tokens = data.split_whitespace();
        if keyword.is_none() {
            let Some(first) = tokens.next() else {
                return Err(TableError::Parse {
                    line: line_no,
                    detail: "'/' before the keyword".into(),
                });
            };
            if !first.starts_with(|c: char| c.is_ascii_alphabetic()) {
                return Err(TableError::Parse {
                    line: line_no,
                    detail: format!("expected a keyword, found {first:?}"),
                });
            }
            keyword = Some(first.to_string());
        }
        for t in tokens {
            values.push((parse_number(t, line_no)?, line_no));
        }
        if slash {
            ended = true;
            let rest = body[body.find('/').map_or(body.len(), |p| p + 1)..].trim();
            if !rest.is_empty() {
                return Err(TableError::Parse {
                    line: line_no,
                    detail: format!("text after the terminating '/': {rest:?}"),
                });
            }
        }
    }
    let last_line = text.lines().count();
    let Some(keyword) = keyword else {
        return Err(TableError::Parse {
            line: last_line,
            detail: "no keyword found".into(),
        });
    };
    if !ended {
        return Err(TableError::Parse {
            line: last_line,
            detail: "table not terminated by '/'".into(),
        });
    }
    if !values.len().is_multiple_of(4) {
        return Err(TableError::Parse {
            line: values.last().map_or(last_line, |v| v.1),
            detail: format!(
                "{} numbers is not a whole number of 4-column rows",
                values.len()
            ),
        });
    }
    let pa = declared_units(text)?.pa_per_unit();
    let mut rows = TableRows::default();
    for chunk in values.chunks(4) {
        rows.sw.push(chunk[0].0);
        rows.krw.push(chunk[1].0);
        rows.krn.push(chunk[2].0);
        rows.pc_pa.push(chunk[3].0 * pa);
    }
    Ok(KeywordTable { keyword, rows })
}
