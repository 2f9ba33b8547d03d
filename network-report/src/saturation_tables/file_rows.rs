//! What the CSV and keyword-table files share: the checks on rows before
//! writing, and number text (shortest round-trip form, parsing with line
//! numbers in errors).

use super::TableRows;
use crate::error::TableError;

/// Rows to write: equal lengths, at least one row, finite values, Sw
/// strictly increasing.
pub(super) fn check_rows(rows: &TableRows) -> Result<(), TableError> {
    let n = rows.sw.len();
    for (column, data) in [
        ("krw", &rows.krw),
        ("krn", &rows.krn),
        ("pc_pa", &rows.pc_pa),
    ] {
        if data.len() != n {
            return Err(TableError::LengthMismatch {
                column,
                expected: n,
                found: data.len(),
            });
        }
    }
    if n == 0 {
        return Err(TableError::TooFewPoints {
            what: "table",
            found: 0,
            needed: 1,
        });
    }
    for (column, data) in [
        ("sw", &rows.sw),
        ("krw", &rows.krw),
        ("krn", &rows.krn),
        ("pc_pa", &rows.pc_pa),
    ] {
        if let Some((index, &value)) = data.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(TableError::NotFinite {
                column,
                index,
                value,
            });
        }
    }
    if let Some(i) = (1..n).find(|&i| rows.sw[i] <= rows.sw[i - 1]) {
        return Err(TableError::SwNotIncreasing {
            index: i,
            sw: rows.sw[i],
        });
    }
    Ok(())
}

/// Shortest round-trip text of `v`: plain for `1e-4 ≤ |v| < 1e7` (and 0),
/// else exponent form.
pub(super) fn shortest(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 || (1e-4..1e7).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

pub(super) fn parse_plain(s: &str) -> f64 {
    s.parse().unwrap_or(f64::NAN)
}

pub(super) fn parse_number(s: &str, line: usize) -> Result<f64, TableError> {
    // Accept Fortran-style exponents (1.0D-3) as reservoir decks may use.
    let normalised = s.replace(['D', 'd'], "e");
    match normalised.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(TableError::Parse {
            line,
            detail: format!("{s:?} is not a finite number"),
        }),
    }
}
