//! Tables as CSV: header `sw,krw,krn,pc_pa`, numbers in shortest
//! round-trip form, `#` comment lines skipped when reading.

use super::TableRows;
use super::file_rows::{check_rows, parse_number, shortest};
use crate::error::TableError;

/// The CSV header of [`write_csv`].
pub const CSV_HEADER: [&str; 4] = ["sw", "krw", "krn", "pc_pa"];

/// Writes rows as CSV text with header `sw,krw,krn,pc_pa` (Pc in Pa).
/// Numbers use the shortest form that reads back to the same `f64`.
pub fn write_csv(rows: &TableRows) -> Result<String, TableError> {
    check_rows(rows)?;
    let mut w = csv::Writer::from_writer(Vec::new());
    let csv_err = |e: csv::Error| TableError::Parse {
        line: 0,
        detail: e.to_string(),
    };
    w.write_record(CSV_HEADER).map_err(csv_err)?;
    for i in 0..rows.len() {
        w.write_record([
            shortest(rows.sw[i]),
            shortest(rows.krw[i]),
            shortest(rows.krn[i]),
            shortest(rows.pc_pa[i]),
        ])
        .map_err(csv_err)?;
    }
    let bytes = w.into_inner().map_err(|e| TableError::Parse {
        line: 0,
        detail: e.to_string(),
    })?;
    String::from_utf8(bytes).map_err(|e| TableError::Parse {
        line: 0,
        detail: e.to_string(),
    })
}

/// Reads CSV text written by [`write_csv`] (header `sw,krw,krn,pc_pa`,
/// surrounding spaces allowed, lines starting with `#` ignored).
pub fn parse_csv(text: &str) -> Result<TableRows, TableError> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let header = reader.headers().map_err(|e| TableError::Parse {
        line: 1,
        detail: e.to_string(),
    })?;
    let names: Vec<&str> = header.iter().collect();
    if names != CSV_HEADER {
        return Err(TableError::Parse {
            line: 1,
            detail: format!(
                "header is {:?}, expected {:?}",
                names.join(","),
                CSV_HEADER.join(",")
            ),
        });
    }
    let mut rows = TableRows::default();
    for record in reader.records() {
        let record = record.map_err(|e| TableError::Parse {
            line: e.position().map_or(0, |p| p.line() as usize),
            detail: e.to_string(),
        })?;
        let line = record.position().map_or(0, |p| p.line() as usize);
        if record.len() != 4 {
            return Err(TableError::Parse {
                line,
                detail: format!("{} fields, expected 4", record.len()),
            });
        }
        let mut v = [0.0; 4];
        for (k, field) in record.iter().enumerate() {
            v[k] = parse_number(field, line)?;
        }
        rows.sw.push(v[0]);
        rows.krw.push(v[1]);
        rows.krn.push(v[2]);
        rows.pc_pa.push(v[3]);
    }
    Ok(rows)
}
