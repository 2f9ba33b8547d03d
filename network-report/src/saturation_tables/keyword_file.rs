//! Tables as a water–oil saturation-function keyword table for black-oil
//! reservoir simulators: `--` comments, the keyword, rows
//! `Sw krw krow Pc[bar]`, and `/`.

use std::fmt::Write as _;

use super::file_rows::{check_rows, parse_number, parse_plain};
use super::{PA_PER_BAR, Process, TableRows};
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
}

impl Default for KeywordTableOptions {
    fn default() -> Self {
        KeywordTableOptions {
            keyword: "SWOF".to_string(),
            source_run: String::new(),
            process: None,
            comments: Vec::new(),
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
/// lines (`--`) naming the columns, units and source run, the keyword, one
/// row per line `Sw krw krow Pc[bar]`, and a terminating `/`.
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
    let one_line = |s: &str| s.replace(['\n', '\r'], " ");
    let mut out = String::new();
    let _ = writeln!(out, "-- Water-oil saturation functions written by Ganglion");
    if !opts.source_run.is_empty() {
        let _ = writeln!(out, "-- Source run: {}", one_line(&opts.source_run));
    }
    if let Some(p) = opts.process {
        let _ = writeln!(out, "-- Process: {}", p.as_str());
    }
    for c in &opts.comments {
        let _ = writeln!(out, "-- {}", one_line(c));
    }
    let _ = writeln!(
        out,
        "-- Columns: Sw (fraction of pore volume), krw (-), krow (-), Pc = Po - Pw (bar)"
    );
    let _ = writeln!(out, "-- {} rows", rows.len());
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
            rows.pc_pa[i] / PA_PER_BAR
        );
    }
    let _ = writeln!(out, "/");
    Ok(out)
}

/// Reads one keyword table: `--` comments (whole lines or trailing) and
/// blank lines are skipped; the first word is the keyword; then numbers in
/// groups of four (`Sw krw krow Pc[bar]`, any line breaks) up to `/`.
/// Pc is converted to Pa.
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
    let mut rows = TableRows::default();
    for chunk in values.chunks(4) {
        rows.sw.push(chunk[0].0);
        rows.krw.push(chunk[1].0);
        rows.krn.push(chunk[2].0);
        rows.pc_pa.push(chunk[3].0 * PA_PER_BAR);
    }
    Ok(KeywordTable { keyword, rows })
}
