//! A parallel reader of one CSV table with a fixed column schema.
//!
//! The whole file is held in memory and cut into chunks of about
//! [`CHUNK_BYTES`] at line ends; chunks are parsed in parallel with the
//! `csv` crate and merged in chunk order, so the result does not depend on
//! the number of threads. A file holding a double quote anywhere is parsed
//! as a single chunk, because a quoted field may span a line end.
//!
//! Every problem found (malformed number, wrong field count, missing or
//! duplicated column, bad ids) becomes a [`Violation`] with file, 1-based
//! line and column name; cells that could not be read are remembered so the
//! later range checks do not report them a second time.

use std::collections::BTreeMap;

use rayon::prelude::*;

use crate::network::Boundary;
use crate::validate::{Rule, Target, Violation, Warning};

/// Target chunk size of the parallel parse, bytes.
pub(crate) const CHUNK_BYTES: usize = 1 << 20;

/// What a column holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Kind {
    /// The 0-based row id.
    Id,
    /// A floating-point value.
    Float,
    /// A pore id referenced by a throat.
    PoreRef,
    /// A face tag (`inlet`, `outlet` or empty).
    Tag,
}

/// One column of a table schema.
#[derive(Clone, Copy, Debug)]
pub(crate) struct ColumnSpec {
    pub name: &'static str,
    pub kind: Kind,
    pub required: bool,
}

/// Values of one column, one per row.
#[derive(Clone, Debug)]
pub(crate) enum Column {
    Ids(Vec<u64>),
    Floats(Vec<f64>),
    Refs(Vec<u32>),
    Tags(Vec<Boundary>),
}

impl Column {
    fn empty(kind: Kind, cap: usize) -> Column {
        match kind {
            Kind::Id => Column::Ids(Vec::with_capacity(cap)),
            Kind::Float => Column::Floats(Vec::with_capacity(cap)),
            Kind::PoreRef => Column::Refs(Vec::with_capacity(cap)),
            Kind::Tag => Column::Tags(Vec::with_capacity(cap)),
        }
    }

    fn filled(kind: Kind, n: usize) -> Column {
        match kind {
            Kind::Id => Column::Ids(vec![u64::MAX; n]),
            Kind::Float => Column::Floats(vec![f64::NAN; n]),
            Kind::PoreRef => Column::Refs(vec![u32::MAX; n]),
            Kind::Tag => Column::Tags(vec![Boundary::Interior; n]),
        }
    }

    fn push_placeholder(&mut self) {
        match self {
            Column::Ids(v) => v.push(u64::MAX),
            Column::Floats(v) => v.push(f64::NAN),
            Column::Refs(v) => v.push(u32::MAX),
            Column::Tags(v) => v.push(Boundary::Interior),
        }
    }

    fn append(&mut self, other: Column) {
        match (self, other) {
            (Column::Ids(a), Column::Ids(b)) => a.extend_from_slice(&b),
            (Column::Floats(a), Column::Floats(b)) => a.extend_from_slice(&b),
            (Column::Refs(a), Column::Refs(b)) => a.extend_from_slice(&b),
            (Column::Tags(a), Column::Tags(b)) => a.extend_from_slice(&b),
            _ => unreachable!("columns of one schema entry share a kind"),
        }
    }

    fn gather(&self, order: &[u32]) -> Column {
        fn g<T: Copy + Send + Sync>(v: &[T], order: &[u32]) -> Vec<T> {
            order.par_iter().map(|&r| v[r as usize]).collect()
        }
        match self {
            Column::Ids(v) => Column::Ids(g(v, order)),
            Column::Floats(v) => Column::Floats(g(v, order)),
            Column::Refs(v) => Column::Refs(g(v, order)),
            Column::Tags(v) => Column::Tags(g(v, order)),
        }
    }
}

/// A parsed table: one [`Column`] per schema entry (placeholders where a
/// column is absent or a cell unreadable), with the file line of each row.
#[derive(Debug)]
pub(crate) struct Table {
    /// File name used in violations.
    pub file: String,
    /// Schema the table was read with.
    pub spec: &'static [ColumnSpec],
    /// 1-based line of each row.
    pub lines: Vec<u64>,
    /// One column per schema entry, each `n_rows` long.
    pub columns: Vec<Column>,
    /// Whether each schema column was found in the header.
    pub present: Vec<bool>,
    /// Row → mask of schema columns whose value could not be used (already
    /// reported).
    pub bad: BTreeMap<usize, u16>,
    /// Row → mask of optional schema columns left empty.
    pub empty: BTreeMap<usize, u16>,
    /// Whether the file had a header line at all.
    pub has_header: bool,
    /// Problems found while parsing.
    pub violations: Vec<Violation>,
    /// Suspicious features found while parsing.
    pub warnings: Vec<Warning>,
}

impl Table {
    /// Number of data rows.
    pub fn n_rows(&self) -> usize {
        self.lines.len()
    }

    /// Index of the schema column called `name`.
    pub fn col(&self, name: &str) -> Option<usize> {
        self.spec.iter().position(|c| c.name == name)
    }

    /// True when the value of schema column `col` in `row` is unusable and
    /// was already reported (or the whole required column is missing).
    pub fn unusable(&self, row: usize, col: usize) -> bool {
        (!self.present[col] && self.spec[col].required)
            || self.bad.get(&row).is_some_and(|m| m & (1 << col) != 0)
    }

    /// Moves a float column out (leaving an empty one).
    pub fn take_floats(&mut self, col: usize) -> Vec<f64> {
        match std::mem::replace(&mut self.columns[col], Column::Floats(Vec::new())) {
            Column::Floats(v) => v,
            _ => unreachable!("schema column {col} is not a float column"),
        }
    }

    /// Moves a pore-reference column out.
    pub fn take_refs(&mut self, col: usize) -> Vec<u32> {
        match std::mem::replace(&mut self.columns[col], Column::Refs(Vec::new())) {
            Column::Refs(v) => v,
            _ => unreachable!("schema column {col} is not a pore-reference column"),
        }
    }

    /// Moves a tag column out.
    pub fn take_tags(&mut self, col: usize) -> Vec<Boundary> {
        match std::mem::replace(&mut self.columns[col], Column::Tags(Vec::new())) {
            Column::Tags(v) => v,
            _ => unreachable!("schema column {col} is not a tag column"),
        }
    }

    /// Checks that the ids are `0..n_rows` (each exactly once) and, when they
    /// are, reorders every row into id order. Adds a violation per duplicate
    /// or out-of-range id and one listing missing ids. Returns whether the
    /// rows are now in id order.
    pub fn order_by_id(&mut self) -> bool {
        let n = self.n_rows();
        let Some(id_col) = self.spec.iter().position(|c| c.kind == Kind::Id) else {
            return true;
        };
        if !self.present[id_col] {
            return false;
        }
        let ids = match &self.columns[id_col] {
            Column::Ids(v) => v,
            _ => unreachable!("id column holds ids"),
        };
        let mut row_of = vec![u32::MAX; n];
        let mut ok = true;
        let mut unreadable = false;
        let mut found = Vec::new();
        for (r, &id) in ids.iter().enumerate() {
            if self.unusable(r, id_col) {
                ok = false;
                unreadable = true;
                continue;
            }
            if id >= n as u64 {
                ok = false;
                found.push(self.at(
                    Violation::new(
                        Rule::NonContiguousIds,
                        Target::Network,
                        Some("id"),
                        format!(
                            "id {id} is out of range: {n} row(s) need the ids 0..={} \
                             (ids are 0-based and contiguous)",
                            n.saturating_sub(1)
                        ),
                    ),
                    r,
                ));
                continue;
            }
            let first = row_of[id as usize];
            if first != u32::MAX {
                ok = false;
                let first_line = self.lines[first as usize];
                found.push(self.at(
                    Violation::new(
                        Rule::DuplicateId,
                        Target::Network,
                        Some("id"),
                        format!("id {id} already appears on line {first_line}"),
                    ),
                    r,
                ));
                continue;
            }
            row_of[id as usize] = r as u32;
        }
        if !ok && !unreadable {
            let missing: Vec<usize> = (0..n).filter(|&i| row_of[i] == u32::MAX).collect();
            if !missing.is_empty() {
                let shown: Vec<String> = missing.iter().take(10).map(|i| i.to_string()).collect();
                let more = if missing.len() > 10 {
                    format!(" and {} more", missing.len() - 10)
                } else {
                    String::new()
                };
                let mut v = Violation::new(
                    Rule::NonContiguousIds,
                    Target::Network,
                    Some("id"),
                    format!(
                        "id(s) {}{more} missing: {n} row(s) need the ids 0..={} \
                         (ids are 0-based and contiguous)",
                        shown.join(", "),
                        n - 1
                    ),
                );
                v.file = Some(self.file.clone());
                found.push(v);
            }
        }
        self.violations.extend(found);
        if !ok {
            return false;
        }
        if row_of.iter().enumerate().all(|(i, &r)| r as usize == i) {
            return true;
        }
        // Permute every column into id order.
        for c in 0..self.columns.len() {
            self.columns[c] = self.columns[c].gather(&row_of);
        }
        self.lines = row_of
            .iter()
            .map(|&r| self.lines[r as usize])
            .collect::<Vec<u64>>();
        let mut new_of_old = vec![0u32; n];
        for (i, &r) in row_of.iter().enumerate() {
            new_of_old[r as usize] = i as u32;
        }
        let remap = |m: &BTreeMap<usize, u16>| -> BTreeMap<usize, u16> {
            m.iter()
                .map(|(&r, &mask)| (new_of_old[r] as usize, mask))
                .collect()
        };
        self.bad = remap(&self.bad);
        self.empty = remap(&self.empty);
        true
    }

    /// Locates a violation at `row` of this file.
    pub fn at(&self, mut v: Violation, row: usize) -> Violation {
        v.file = Some(self.file.clone());
        v.line = self.lines.get(row).copied();
        v
    }
}

/// Reads the table in `bytes` with schema `spec`; `file` names the file in
/// violations and warnings.
pub(crate) fn parse_table(bytes: &[u8], spec: &'static [ColumnSpec], file: &str) -> Table {
    parse_table_chunked(bytes, spec, file, CHUNK_BYTES)
}

fn parse_table_chunked(
    bytes: &[u8],
    spec: &'static [ColumnSpec],
    file: &str,
    chunk_bytes: usize,
) -> Table {
    debug_assert!(spec.len() <= 16, "masks hold 16 columns");
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let mut table = Table {
        file: file.to_owned(),
        spec,
        lines: Vec::new(),
        columns: Vec::new(),
        present: vec![false; spec.len()],
        bad: BTreeMap::new(),
        empty: BTreeMap::new(),
        has_header: false,
        violations: Vec::new(),
        warnings: Vec::new(),
    };

    // Header.
    let mut reader = csv_reader(bytes);
    let mut header = ::csv::ByteRecord::new();
    let header_line = match reader.read_byte_record(&mut header) {
        Ok(true) => record_line(bytes, &header, 1),
        _ => {
            let names: Vec<&str> = spec.iter().filter(|c| c.required).map(|c| c.name).collect();
            table.violations.push(located(
                Violation::new(
                    Rule::MissingColumn,
                    Target::Network,
                    None,
                    format!(
                        "the file is empty; expected a header line with the columns {}",
                        names.join(",")
                    ),
                ),
                file,
                Some(1),
            ));
            table.columns = spec.iter().map(|c| Column::filled(c.kind, 0)).collect();
            return table;
        }
    };
    table.has_header = true;
    let data_start = reader.position().byte() as usize;
    let n_fields = header.len();
    let mut field_of: Vec<Option<usize>> = vec![None; spec.len()];
    for (f, raw) in header.iter().enumerate() {
        let name = String::from_utf8_lossy(raw.trim_ascii());
        match spec.iter().position(|c| c.name == name) {
            Some(c) => match field_of[c] {
                Some(first) => table.violations.push(located(
                    Violation::new(
                        Rule::DuplicateColumn,
                        Target::Network,
                        Some(spec[c].name),
                        format!(
                            "column appears twice in the header (fields {} and {})",
                            first + 1,
                            f + 1
                        ),
                    ),
                    file,
                    Some(header_line),
                )),
                None => field_of[c] = Some(f),
            },
            None => table.warnings.push(Warning {
                code: "unknown-column",
                target: Target::Network,
                file: Some(file.to_owned()),
                line: Some(header_line),
                detail: format!("column `{name}` is not part of the format and is ignored"),
            }),
        }
    }
    for (c, spec_c) in spec.iter().enumerate() {
        table.present[c] = field_of[c].is_some();
        if spec_c.required && field_of[c].is_none() {
            table.violations.push(located(
                Violation::new(
                    Rule::MissingColumn,
                    Target::Network,
                    Some(spec_c.name),
                    "required column is missing from the header",
                ),
                file,
                Some(header_line),
            ));
        }
    }

    // Chunks at line ends, with the 1-based line of each chunk start.
    let data = &bytes[data_start.min(bytes.len())..];
    let mut bounds = Vec::new();
    let mut start = 0;
    while start < data.len() {
        let mut end = (start + chunk_bytes.max(1)).min(data.len());
        if end < data.len() {
            end = match data[end..].iter().position(|&b| b == b'\n') {
                Some(p) => end + p + 1,
                None => data.len(),
            };
        }
        bounds.push((start, end));
        start = end;
    }
    let stats: Vec<(u64, bool)> = bounds
        .par_iter()
        .map(|&(s, e)| {
            let chunk = &data[s..e];
            (count_newlines(chunk), chunk.contains(&b'"'))
        })
        .collect();
    let quoted = stats.iter().any(|s| s.1);
    let base_line = 1 + count_newlines(&bytes[..data_start.min(bytes.len())]);
    let mut chunks = Vec::with_capacity(bounds.len());
    if quoted {
        chunks.push((0, data.len(), base_line));
    } else {
        let mut line = base_line;
        for (&(s, e), &(nl, _)) in bounds.iter().zip(&stats) {
            chunks.push((s, e, line));
            line += nl;
        }
    }
    let ctx = Ctx {
        spec,
        field_of: &field_of,
        n_fields,
        file,
    };
    let parts: Vec<Part> = chunks
        .par_iter()
        .map(|&(s, e, line)| parse_chunk(&ctx, &data[s..e], line))
        .collect();

    // Merge in chunk order.
    let n_rows: usize = parts.iter().map(|p| p.lines.len()).sum();
    table.lines.reserve_exact(n_rows);
    table.columns = spec
        .iter()
        .enumerate()
        .map(|(c, s)| {
            if field_of[c].is_some() {
                Column::empty(s.kind, n_rows)
            } else {
                Column::filled(s.kind, n_rows)
            }
        })
        .collect();
    for part in parts {
        let offset = table.lines.len();
        table.lines.extend_from_slice(&part.lines);
        for (c, col) in part.columns.into_iter().enumerate() {
            if let Some(col) = col {
                table.columns[c].append(col);
            }
        }
        for (r, m) in part.bad {
            *table.bad.entry(offset + r as usize).or_insert(0) |= m;
        }
        for (r, m) in part.empty {
            *table.empty.entry(offset + r as usize).or_insert(0) |= m;
        }
        table.violations.extend(part.violations);
    }
    table
}

fn csv_reader(bytes: &[u8]) -> ::csv::Reader<&[u8]> {
    ::csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(bytes)
}

/// The 1-based line on which `rec` starts, in a reader over `bytes` whose
/// first byte lies on line `first_line`.
///
/// The reader's position of a record is where it started scanning, before
/// any blank lines it skipped; those are counted here.
fn record_line(bytes: &[u8], rec: &::csv::ByteRecord, first_line: u64) -> u64 {
    let Some(pos) = rec.position() else {
        return first_line;
    };
    let scan = (pos.byte() as usize).min(bytes.len());
    let skipped = bytes[scan..]
        .iter()
        .take_while(|&&b| b == b'\r' || b == b'\n')
        .filter(|&&b| b == b'\n')
        .count() as u64;
    first_line + pos.line() - 1 + skipped
}

fn count_newlines(bytes: &[u8]) -> u64 {
    bytes.iter().filter(|&&b| b == b'\n').count() as u64
}

fn located(mut v: Violation, file: &str, line: Option<u64>) -> Violation {
    v.file = Some(file.to_owned());
    v.line = line;
    v
}

struct Ctx<'a> {
    spec: &'static [ColumnSpec],
    field_of: &'a [Option<usize>],
    n_fields: usize,
    file: &'a str,
}

struct Part {
    lines: Vec<u64>,
    columns: Vec<Option<Column>>,
    bad: Vec<(u32, u16)>,
    empty: Vec<(u32, u16)>,
    violations: Vec<Violation>,
}

/// Shows a field in a message: lossy UTF-8, at most 40 characters.
fn show(field: &[u8]) -> String {
    let s = String::from_utf8_lossy(field);
    if s.chars().count() > 40 {
        let cut: String = s.chars().take(40).collect();
        format!("{cut}…")
    } else {
        s.into_owned()
    }
}

enum Cell {
    Ok,
    Empty,
    Bad(Rule, String),
}

fn parse_chunk(ctx: &Ctx<'_>, bytes: &[u8], first_line: u64) -> Part {
    let spec = ctx.spec;
    let estimate = bytes.len() / 64 + 1;
    let mut part = Part {
        lines: Vec::with_capacity(estimate),
        columns: spec
            .iter()
            .zip(ctx.field_of)
            .map(|(s, f)| f.map(|_| Column::empty(s.kind, estimate)))
            .collect(),
        bad: Vec::new(),
        empty: Vec::new(),
        violations: Vec::new(),
    };
    let mut reader = csv_reader(bytes);
    let mut rec = ::csv::ByteRecord::new();
    loop {
        match reader.read_byte_record(&mut rec) {
            Ok(true) => {}
            Ok(false) => break,
            Err(e) => {
                let line = e.position().map(|p| first_line + p.line() - 1);
                part.violations.push(located(
                    Violation::new(Rule::MalformedRow, Target::Network, None, e.to_string()),
                    ctx.file,
                    line,
                ));
                break;
            }
        }
        if rec.len() == 1 && rec[0].trim_ascii().is_empty() {
            continue; // a blank line
        }
        let line = record_line(bytes, &rec, first_line);
        let row = part.lines.len() as u32;
        part.lines.push(line);
        if rec.len() != ctx.n_fields {
            part.violations.push(located(
                Violation::new(
                    Rule::MalformedRow,
                    Target::Network,
                    None,
                    format!(
                        "expected {} fields (as in the header), found {}",
                        ctx.n_fields,
                        rec.len()
                    ),
                ),
                ctx.file,
                Some(line),
            ));
            for col in part.columns.iter_mut().flatten() {
                col.push_placeholder();
            }
            part.bad.push((row, u16::MAX));
            continue;
        }
        let mut bad = 0u16;
        let mut empty = 0u16;
        for (c, col) in part.columns.iter_mut().enumerate() {
            let (Some(col), Some(f)) = (col.as_mut(), ctx.field_of[c]) else {
                continue;
            };
            let field = rec[f].trim_ascii();
            let cell = parse_cell(col, field, spec[c].required);
            match cell {
                Cell::Ok => {}
                Cell::Empty => empty |= 1 << c,
                Cell::Bad(rule, detail) => {
                    bad |= 1 << c;
                    part.violations.push(located(
                        Violation::new(rule, Target::Network, Some(spec[c].name), detail),
                        ctx.file,
                        Some(line),
                    ));
                }
            }
        }
        if bad != 0 {
            part.bad.push((row, bad));
        }
        if empty != 0 {
            part.empty.push((row, empty));
        }
    }
    part
}

/// Parses one field into its column (always pushing exactly one value).
fn parse_cell(col: &mut Column, field: &[u8], required: bool) -> Cell {
    if field.is_empty() {
        col.push_placeholder();
        return match col {
            Column::Tags(_) => Cell::Ok,
            _ if required => Cell::Bad(Rule::MalformedValue, "empty field".to_owned()),
            _ => Cell::Empty,
        };
    }
    let text = std::str::from_utf8(field).ok();
    match col {
        Column::Floats(v) => match text.and_then(|t| t.parse::<f64>().ok()) {
            Some(x) => {
                v.push(x);
                Cell::Ok
            }
            None => {
                v.push(f64::NAN);
                Cell::Bad(
                    Rule::MalformedValue,
                    format!("`{}` is not a number", show(field)),
                )
            }
        },
        Column::Ids(v) => match text.and_then(|t| t.parse::<u64>().ok()) {
            Some(x) => {
                v.push(x);
                Cell::Ok
            }
            None => {
                v.push(u64::MAX);
                Cell::Bad(
                    Rule::MalformedValue,
                    format!("`{}` is not a non-negative integer id", show(field)),
                )
            }
        },
        Column::Refs(v) => match text.and_then(|t| t.parse::<u64>().ok()) {
            Some(x) if x <= u32::MAX as u64 => {
                v.push(x as u32);
                Cell::Ok
            }
            Some(x) => {
                v.push(u32::MAX);
                Cell::Bad(Rule::MissingPore, format!("pore {x} does not exist"))
            }
            None => {
                v.push(u32::MAX);
                Cell::Bad(
                    Rule::MalformedValue,
                    format!("`{}` is not a non-negative integer pore id", show(field)),
                )
            }
        },
        Column::Tags(v) => {
            let tag = if field.eq_ignore_ascii_case(b"inlet") {
                Some(Boundary::Inlet)
            } else if field.eq_ignore_ascii_case(b"outlet") {
                Some(Boundary::Outlet)
            } else {
                None
            };
            match tag {
                Some(b) => {
                    v.push(b);
                    Cell::Ok
                }
                None => {
                    v.push(Boundary::Interior);
                    Cell::Bad(
                        Rule::MalformedValue,
                        format!(
                            "`{}` is not a face tag (expected `inlet`, `outlet` or an empty field)",
                            show(field)
                        ),
                    )
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const SPEC: &[ColumnSpec] = &[
        ColumnSpec {
            name: "id",
            kind: Kind::Id,
            required: true,
        },
        ColumnSpec {
            name: "v",
            kind: Kind::Float,
            required: true,
        },
        ColumnSpec {
            name: "w",
            kind: Kind::Float,
            required: false,
        },
    ];

    fn floats(t: &Table, c: usize) -> Vec<f64> {
        match &t.columns[c] {
            Column::Floats(v) => v.clone(),
            _ => panic!("not floats"),
        }
    }

    #[test]
    fn lines_are_counted_across_blank_lines_and_crlf() {
        let text = b"id,v\r\n\r\n0,1.5\r\n1,2.5\r\n\r\n2,3.5\r\n";
        let t = parse_table(text, SPEC, "t.csv");
        assert!(t.violations.is_empty(), "{:?}", t.violations);
        assert_eq!(t.lines, vec![3, 4, 6]);
        assert_eq!(floats(&t, 1), vec![1.5, 2.5, 3.5]);
    }

    #[test]
    fn chunked_parse_matches_single_chunk_and_counts_lines() {
        let n = 500;
        let mut text = String::from("v,id,extra\n");
        for i in 0..n {
            text.push_str(&format!("{}.25,{},x\n", i, n - 1 - i));
            if i % 7 == 0 {
                text.push('\n'); // blank lines shift the line numbers
            }
        }
        text.push_str("oops,1\n");
        let parse = |chunk| {
            let mut t = parse_table_chunked(text.as_bytes(), SPEC, "t.csv", chunk);
            t.order_by_id();
            t
        };
        let one = parse(usize::MAX);
        for chunk in [1, 13, 64, 1000] {
            let t = parse(chunk);
            assert_eq!(t.lines, one.lines, "chunk {chunk}");
            let bits = |t: &Table| floats(t, 1).iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&t), bits(&one), "chunk {chunk}");
            assert_eq!(t.violations, one.violations, "chunk {chunk}");
            assert_eq!(t.bad, one.bad, "chunk {chunk}");
        }
        assert_eq!(one.n_rows(), n + 1);
        assert_eq!(one.warnings.len(), 1, "the extra column is reported once");
        // Row i sits on line 2 + i + (number of blank lines before it).
        let line_of_row = |i: usize| 2 + i as u64 + (i as u64).div_ceil(7);
        assert_eq!(one.lines[0], line_of_row(0));
        assert_eq!(one.lines[n - 1], line_of_row(n - 1));
        assert_eq!(one.lines[n], line_of_row(n));
        // The last row has 2 fields instead of 3.
        assert_eq!(one.violations.len(), 1);
        assert_eq!(one.violations[0].rule, Rule::MalformedRow);
        assert_eq!(one.violations[0].line, Some(line_of_row(n)));
    }

    #[test]
    fn quoted_field_spanning_lines_keeps_line_numbers() {
        let text = b"id,v,w\n0,1,\"a\nb\"\n1,x,2\n";
        let t = parse_table(text, SPEC, "t.csv");
        assert_eq!(t.violations.len(), 2, "{:?}", t.violations);
        // w of row 0 (`a\nb`) is not a number, on line 2.
        assert_eq!(t.violations[0].line, Some(2));
        assert_eq!(t.violations[0].column.as_deref(), Some("w"));
        // v of row 1 is not a number, on line 4.
        assert_eq!(t.violations[1].line, Some(4));
        assert_eq!(t.violations[1].column.as_deref(), Some("v"));
    }

    #[test]
    fn quoted_fields_are_parsed() {
        let text = b"id,v\n\"0\",\"1e-3\"\n";
        let t = parse_table(text, SPEC, "t.csv");
        assert!(t.violations.is_empty());
        assert_eq!(floats(&t, 1), vec![1e-3]);
    }

    #[test]
    fn wrong_field_count_marks_the_whole_row() {
        let text = b"id,v,w\n0,1,2\n1,2\n";
        let t = parse_table(text, SPEC, "t.csv");
        assert_eq!(t.violations.len(), 1);
        assert_eq!(t.violations[0].rule, Rule::MalformedRow);
        assert_eq!(t.violations[0].line, Some(3));
        assert!(t.unusable(1, 1));
        assert!(!t.unusable(0, 1));
    }
}
