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
use crate::network::validate::{Rule, Target, Violation, Warning};

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
    /// `n` values that are cheap to allocate (zero pages); every cell is
    /// overwritten by the parse or by a placeholder.
    fn zeroed(kind: Kind, n: usize) -> Column {
        match kind {
            Kind::Id => Column::Ids(vec![0; n]),
            Kind::Float => Column::Floats(vec![0.0; n]),
            Kind::PoreRef => Column::Refs(vec![0; n]),
            Kind::Tag => Column::Tags(vec![Boundary::Interior; n]),
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

    fn as_mut(&mut self) -> ColumnMut<'_> {
        match self {
            Column::Ids(v) => ColumnMut::Ids(v),
            Column::Floats(v) => ColumnMut::Floats(v),
            Column::Refs(v) => ColumnMut::Refs(v),
            Column::Tags(v) => ColumnMut::Tags(v),
        }
    }

    fn copy_within(&mut self, src: std::ops::Range<usize>, dest: usize) {
        match self {
            Column::Ids(v) => v.copy_within(src, dest),
            Column::Floats(v) => v.copy_within(src, dest),
            Column::Refs(v) => v.copy_within(src, dest),
            Column::Tags(v) => v.copy_within(src, dest),
        }
    }

    fn truncate(&mut self, n: usize) {
        match self {
            Column::Ids(v) => v.truncate(n),
            Column::Floats(v) => v.truncate(n),
            Column::Refs(v) => v.truncate(n),
            Column::Tags(v) => v.truncate(n),
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

/// A mutable window of a [`Column`], handed to one chunk of the parse.
#[derive(Debug)]
enum ColumnMut<'a> {
    Ids(&'a mut [u64]),
    Floats(&'a mut [f64]),
    Refs(&'a mut [u32]),
    Tags(&'a mut [Boundary]),
}

impl<'a> ColumnMut<'a> {
    /// Writes the placeholder of an unusable or empty cell into `row`.
    fn set_placeholder(&mut self, row: usize) {
        match self {
            ColumnMut::Ids(v) => v[row] = u64::MAX,
            ColumnMut::Floats(v) => v[row] = f64::NAN,
            ColumnMut::Refs(v) => v[row] = u32::MAX,
            ColumnMut::Tags(v) => v[row] = Boundary::Interior,
        }
    }

    /// Splits off the first `n` values (an empty window for an absent column).
    fn split_front(&mut self, n: usize) -> ColumnMut<'a> {
        fn split<'a, T>(v: &mut &'a mut [T], n: usize) -> &'a mut [T] {
            let n = n.min(v.len());
            let (front, back) = std::mem::take(v).split_at_mut(n);
            *v = back;
            front
        }
        match self {
            ColumnMut::Ids(v) => ColumnMut::Ids(split(v, n)),
            ColumnMut::Floats(v) => ColumnMut::Floats(split(v, n)),
            ColumnMut::Refs(v) => ColumnMut::Refs(split(v, n)),
            ColumnMut::Tags(v) => ColumnMut::Tags(split(v, n)),
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
    let stats: Vec<(usize, bool)> = bounds.par_iter().map(|&(s, e)| scan(&data[s..e])).collect();
    let quoted = stats.iter().any(|s| s.1);
    let base_line = 1 + count_newlines(&bytes[..data_start.min(bytes.len())]);
    // (start, end, first line, most rows the chunk can hold)
    let mut chunks = Vec::with_capacity(bounds.len());
    if quoted {
        chunks.push((0, data.len(), base_line, scan(data).0));
    } else {
        let mut line = base_line;
        for (&(s, e), &(cap, _)) in bounds.iter().zip(&stats) {
            chunks.push((s, e, line, cap));
            line += count_newlines(&data[s..e]);
        }
    }
    let ctx = Ctx {
        spec,
        field_of: &field_of,
        n_fields,
        file,
    };

    // Every chunk parses straight into its own slice of the final columns;
    // gaps left by blank lines are closed afterwards.
    let capacity: usize = chunks.iter().map(|c| c.3).sum();
    let mut columns: Vec<Column> = spec
        .iter()
        .zip(&field_of)
        .map(|(s, f)| Column::zeroed(s.kind, if f.is_some() { capacity } else { 0 }))
        .collect();
    let mut lines = vec![0u64; capacity];
    let parts: Vec<Part> = {
        let mut rest_cols: Vec<ColumnMut<'_>> = columns.iter_mut().map(Column::as_mut).collect();
        let mut rest_lines: &mut [u64] = &mut lines;
        let mut tasks = Vec::with_capacity(chunks.len());
        for &(s, e, line, cap) in &chunks {
            let (mine, rest) = std::mem::take(&mut rest_lines).split_at_mut(cap);
            rest_lines = rest;
            let cols: Vec<ColumnMut<'_>> =
                rest_cols.iter_mut().map(|c| c.split_front(cap)).collect();
            tasks.push((&data[s..e], line, mine, cols));
        }
        tasks
            .into_par_iter()
            .map(|(chunk, line, out_lines, out_cols)| {
                parse_chunk(&ctx, chunk, line, out_lines, out_cols)
            })
            .collect()
    };

    // Close the gaps, in chunk order.
    let mut write = 0usize;
    let mut read = 0usize;
    for (part, chunk) in parts.into_iter().zip(&chunks) {
        let n = part.n_rows;
        if read != write {
            lines.copy_within(read..read + n, write);
            for (col, f) in columns.iter_mut().zip(&field_of) {
                if f.is_some() {
                    col.copy_within(read..read + n, write);
                }
            }
        }
        for (r, m) in part.bad {
            *table.bad.entry(write + r as usize).or_insert(0) |= m;
        }
        for (r, m) in part.empty {
            *table.empty.entry(write + r as usize).or_insert(0) |= m;
        }
        table.violations.extend(part.violations);
        write += n;
        read += chunk.3;
    }
    lines.truncate(write);
    for (c, col) in columns.iter_mut().enumerate() {
        if field_of[c].is_some() {
            col.truncate(write);
        } else {
            *col = Column::filled(spec[c].kind, write);
        }
    }
    table.lines = lines;
    table.columns = columns;
    table
}

/// An upper bound of the records in `bytes` and whether it holds a double
/// quote. The bound counts line terminators (`\n`, `\r\n` or a lone `\r`,
/// as the `csv` reader does), plus one when `bytes` does not end with one.
fn scan(bytes: &[u8]) -> (usize, bool) {
    let mut lf = 0usize;
    let mut quote = false;
    let mut cr = false;
    for block in bytes.chunks(1 << 12) {
        let (mut n, mut q, mut r) = (0u32, false, false);
        for &b in block {
            n += u32::from(b == b'\n');
            q |= b == b'"';
            r |= b == b'\r';
        }
        lf += n as usize;
        quote |= q;
        cr |= r;
    }
    let lone_cr = if cr {
        bytes
            .iter()
            .enumerate()
            .filter(|&(i, &b)| b == b'\r' && bytes.get(i + 1) != Some(&b'\n'))
            .count()
    } else {
        0
    };
    let open_end = !matches!(bytes.last(), None | Some(b'\n') | Some(b'\r'));
    (lf + lone_cr + usize::from(open_end), quote)
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
    first_line + pos.line().saturating_sub(1) + skipped
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
    n_rows: usize,
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

fn parse_chunk(
    ctx: &Ctx<'_>,
    bytes: &[u8],
    first_line: u64,
    lines: &mut [u64],
    mut columns: Vec<ColumnMut<'_>>,
) -> Part {
    let spec = ctx.spec;
    let mut part = Part {
        n_rows: 0,
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
                let line = e
                    .position()
                    .map(|p| first_line + p.line().saturating_sub(1));
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
        let row = part.n_rows;
        let Some(slot) = lines.get_mut(row) else {
            // Cannot happen: `max_records` bounds the records of a chunk.
            part.violations.push(located(
                Violation::new(
                    Rule::MalformedRow,
                    Target::Network,
                    None,
                    "more records than line ends (reader bound exceeded)",
                ),
                ctx.file,
                Some(line),
            ));
            break;
        };
        *slot = line;
        part.n_rows += 1;
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
            for (c, col) in columns.iter_mut().enumerate() {
                if ctx.field_of[c].is_some() {
                    col.set_placeholder(row);
                }
            }
            part.bad.push((row as u32, u16::MAX));
            continue;
        }
        let mut bad = 0u16;
        let mut empty = 0u16;
        for (c, col) in columns.iter_mut().enumerate() {
            let Some(f) = ctx.field_of[c] else {
                continue;
            };
            let field = rec[f].trim_ascii();
            match parse_cell(col, row, field, spec[c].required) {
                Cell::Ok => {}
                Cell::Empty => {
                    col.set_placeholder(row);
                    empty |= 1 << c;
                }
                Cell::Bad(rule, detail) => {
                    col.set_placeholder(row);
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
            part.bad.push((row as u32, bad));
        }
        if empty != 0 {
            part.empty.push((row as u32, empty));
        }
    }
    part
}

/// Parses one field into `row` of its column; the caller writes the
/// placeholder when the cell is empty or bad.
fn parse_cell(col: &mut ColumnMut<'_>, row: usize, field: &[u8], required: bool) -> Cell {
    if field.is_empty() {
        return match col {
            ColumnMut::Tags(v) => {
                v[row] = Boundary::Interior;
                Cell::Ok
            }
            _ if required => Cell::Bad(Rule::MalformedValue, "empty field".to_owned()),
            _ => Cell::Empty,
        };
    }
    let text = std::str::from_utf8(field).ok();
    match col {
        ColumnMut::Floats(v) => match text.and_then(|t| t.parse::<f64>().ok()) {
            Some(x) => {
                v[row] = x;
                Cell::Ok
            }
            None => Cell::Bad(
                Rule::MalformedValue,
                format!("`{}` is not a number", show(field)),
            ),
        },
        ColumnMut::Ids(v) => match text.and_then(|t| t.parse::<u64>().ok()) {
            Some(x) => {
                v[row] = x;
                Cell::Ok
            }
            None => Cell::Bad(
                Rule::MalformedValue,
                format!("`{}` is not a non-negative integer id", show(field)),
            ),
        },
        ColumnMut::Refs(v) => match text.and_then(|t| t.parse::<u64>().ok()) {
            Some(x) if x <= u32::MAX as u64 => {
                v[row] = x as u32;
                Cell::Ok
            }
            Some(x) => Cell::Bad(Rule::MissingPore, format!("pore {x} does not exist")),
            None => Cell::Bad(
                Rule::MalformedValue,
                format!("`{}` is not a non-negative integer pore id", show(field)),
            ),
        },
        ColumnMut::Tags(v) => {
            if field.eq_ignore_ascii_case(b"inlet") {
                v[row] = Boundary::Inlet;
                Cell::Ok
            } else if field.eq_ignore_ascii_case(b"outlet") {
                v[row] = Boundary::Outlet;
                Cell::Ok
            } else {
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
    fn lone_carriage_returns_end_records() {
        let text = b"id,v\r0,1.5\r1,2.5\r\r2,3.5";
        let t = parse_table(text, SPEC, "t.csv");
        assert!(t.violations.is_empty(), "{:?}", t.violations);
        assert_eq!(floats(&t, 1), vec![1.5, 2.5, 3.5]);
        assert_eq!(scan(b"a\rb\r\nc\nd"), (4, false));
        assert_eq!(scan(b"\"a\"\n"), (1, true));
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
