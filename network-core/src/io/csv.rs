//! The CSV network folder: `pores.csv`, `throats.csv` and `network.toml`.
//!
//! See the [module docs](super) for the layout. Reading collects every
//! problem of the three files at once and reports each at its file, 1-based
//! line and column; writing formats every f64 with the shortest digits that
//! read back to the same bits (Ryū, Adams 2018, PLDI), so
//! write → read is exact.

use std::fs;
use std::io::{self, Write};
use std::path::Path;

use rayon::prelude::*;

use super::atomic::{AtomicFile, parent_dir, sync_dir, temp_sibling};
use super::sample::{parse_sample, write_sample};
use super::table::{ColumnSpec, Kind, Table, parse_table};
use super::{Loaded, ReadError, WriteError, network_warnings, sort_violations};
use crate::network::validate::{Rule, Target, Violation};
use crate::network::{Network, Pores, Throats};

/// File name of the pore table.
pub const PORES_FILE: &str = "pores.csv";
/// File name of the throat table.
pub const THROATS_FILE: &str = "throats.csv";
/// File name of the sample description.
pub const SAMPLE_FILE: &str = "network.toml";

const fn col(name: &'static str, kind: Kind, required: bool) -> ColumnSpec {
    ColumnSpec {
        name,
        kind,
        required,
    }
}

const P_X: usize = 1;
const P_Y: usize = 2;
const P_Z: usize = 3;
const P_RADIUS: usize = 4;
const P_VOLUME: usize = 5;
const P_G: usize = 6;
const P_CLAY: usize = 7;
const P_BOUNDARY: usize = 8;
const P_OIL_WET: usize = 9;

/// Columns of `pores.csv`, in the order they are written (`oil_wet`, the
/// last, only when the network carries wettability marks).
static PORE_SPEC: [ColumnSpec; 10] = [
    col("id", Kind::Id, true),
    col("x_m", Kind::Float, true),
    col("y_m", Kind::Float, true),
    col("z_m", Kind::Float, true),
    col("radius_m", Kind::Float, true),
    col("volume_m3", Kind::Float, true),
    col("shape_factor", Kind::Float, true),
    col("clay_volume_m3", Kind::Float, false),
    col("boundary", Kind::Tag, false),
    col("oil_wet", Kind::Float, false),
];

const T_A: usize = 1;
const T_B: usize = 2;
const T_RADIUS: usize = 3;
const T_G: usize = 4;
const T_LENGTH: usize = 5;
const T_VOLUME: usize = 6;
const T_CLAY: usize = 7;
const T_CA: usize = 8;
const T_CB: usize = 9;
const T_OIL_WET: usize = 10;

/// Columns of `throats.csv`, in the order they are written (`oil_wet`, the
/// last, only when the network carries wettability marks).
static THROAT_SPEC: [ColumnSpec; 11] = [
    col("id", Kind::Id, true),
    col("pore_a", Kind::PoreRef, true),
    col("pore_b", Kind::PoreRef, true),
    col("radius_m", Kind::Float, true),
    col("shape_factor", Kind::Float, true),
    col("length_m", Kind::Float, true),
    col("volume_m3", Kind::Float, true),
    col("clay_volume_m3", Kind::Float, false),
    col("conduit_a_m", Kind::Float, false),
    col("conduit_b_m", Kind::Float, false),
    col("oil_wet", Kind::Float, false),
];

/// Fraction of the throat length used for a missing conduit part.
pub const DEFAULT_CONDUIT_FRACTION: f64 = 0.45;

/// The default pore part of a conduit when `conduit_a_m` / `conduit_b_m` is
/// absent or empty: `min(R_pore, 0.45 L)`, with `R_pore` the inscribed radius
/// of the pore at that end (m) and `L` the total conduit length `length_m`
/// (m). The cap keeps at least 10 % of the length for the throat proper.
pub fn default_conduit(pore_radius_m: f64, length_m: f64) -> f64 {
    pore_radius_m.min(DEFAULT_CONDUIT_FRACTION * length_m)
}

fn read_file(path: &Path) -> Result<Vec<u8>, ReadError> {
    fs::read(path).map_err(|source| ReadError::Io {
        path: path.to_path_buf(),
        source,
    })
}

/// Reads a CSV network folder.
pub(crate) fn read_folder(dir: &Path) -> Result<Loaded, ReadError> {
    let sample_path = dir.join(SAMPLE_FILE);
    let pores_path = dir.join(PORES_FILE);
    let throats_path = dir.join(THROATS_FILE);
    let sample_name = sample_path.display().to_string();
    let pores_name = pores_path.display().to_string();
    let throats_name = throats_path.display().to_string();

    let sample_bytes = read_file(&sample_path)?;
    let (pores_table, throats_table) = rayon::join(
        || read_file(&pores_path).map(|b| parse_table(&b, &PORE_SPEC, &pores_name)),
        || read_file(&throats_path).map(|b| parse_table(&b, &THROAT_SPEC, &throats_name)),
    );
    let mut pt = pores_table?;
    let mut tt = throats_table?;
    let sample = parse_sample(&sample_bytes, &sample_name);
    drop(sample_bytes);

    pt.order_by_id();
    tt.order_by_id();

    // Pores.
    let mut clay = pt.take_floats(P_CLAY);
    default_blanks(&pt, P_CLAY, &mut clay, |_| 0.0);
    let mut marks_bad = Vec::new();
    let pore_marks = oil_wet_marks(&mut pt, P_OIL_WET, &mut marks_bad, Target::Pore);
    let pores = Pores {
        x: pt.take_floats(P_X),
        y: pt.take_floats(P_Y),
        z: pt.take_floats(P_Z),
        radius: pt.take_floats(P_RADIUS),
        shape_factor: pt.take_floats(P_G),
        volume: pt.take_floats(P_VOLUME),
        clay_volume: clay,
        boundary: pt.take_tags(P_BOUNDARY),
        oil_wet: pore_marks,
    };

    // Throats, with the default conduit parts.
    let ends_a = tt.take_refs(T_A);
    let ends_b = tt.take_refs(T_B);
    let length = tt.take_floats(T_LENGTH);
    let pore_radius = |p: u32| pores.radius.get(p as usize).copied().unwrap_or(f64::NAN);
    let mut clay = tt.take_floats(T_CLAY);
    default_blanks(&tt, T_CLAY, &mut clay, |_| 0.0);
    let mut conduit_a = tt.take_floats(T_CA);
    default_blanks(&tt, T_CA, &mut conduit_a, |t| {
        default_conduit(pore_radius(ends_a[t]), length[t])
    });
    let mut conduit_b = tt.take_floats(T_CB);
    default_blanks(&tt, T_CB, &mut conduit_b, |t| {
        default_conduit(pore_radius(ends_b[t]), length[t])
    });
    // A default computed from unusable inputs is unusable too; its inputs
    // are reported on their own.
    for (c, values) in [(T_CA, &conduit_a), (T_CB, &conduit_b)] {
        let bad_rows: Vec<usize> = if tt.present[c] {
            tt.empty
                .iter()
                .filter(|(_, m)| *m & (1 << c) != 0)
                .map(|(&r, _)| r)
                .filter(|&r| !(values[r] >= 0.0 && values[r].is_finite()))
                .collect()
        } else {
            (0..values.len())
                .filter(|&r| !(values[r] >= 0.0 && values[r].is_finite()))
                .collect()
        };
        for r in bad_rows {
            *tt.bad.entry(r).or_insert(0) |= 1 << c;
        }
    }
    let throat_marks = oil_wet_marks(&mut tt, T_OIL_WET, &mut marks_bad, Target::Throat);
    let throats = Throats {
        pores: ends_a.iter().zip(&ends_b).map(|(&a, &b)| [a, b]).collect(),
        radius: tt.take_floats(T_RADIUS),
        shape_factor: tt.take_floats(T_G),
        volume: tt.take_floats(T_VOLUME),
        clay_volume: clay,
        length,
        conduit_a,
        conduit_b,
        oil_wet: throat_marks,
    };
    drop(ends_a);
    drop(ends_b);

    let mut violations = Vec::new();
    violations.extend(sample.violations.iter().cloned());
    violations.append(&mut pt.violations);
    violations.append(&mut tt.violations);
    for v in marks_bad {
        if let Some(v) = locate_violation(
            v,
            &pt,
            &tt,
            &sample,
            &[
                sample_name.as_str(),
                pores_name.as_str(),
                throats_name.as_str(),
            ],
        ) {
            violations.push(v);
        }
    }

    let files = [
        sample_name.as_str(),
        pores_name.as_str(),
        throats_name.as_str(),
    ];
    match Network::new(sample.info.clone(), pores, throats) {
        Ok(network) if violations.is_empty() => {
            let mut warnings = sample.warnings;
            warnings.append(&mut pt.warnings);
            warnings.append(&mut tt.warnings);
            let locate = |t: Target| match t {
                Target::Pore(i) => (Some(pores_name.clone()), pt.lines.get(i as usize).copied()),
                Target::Throat(i) => (
                    Some(throats_name.clone()),
                    tt.lines.get(i as usize).copied(),
                ),
                Target::Network => (None, None),
            };
            warnings.extend(network_warnings(&network, &locate));
            Ok(Loaded { network, warnings })
        }
        Ok(_) => {
            sort_violations(&mut violations, &files);
            Err(ReadError::Invalid {
                path: dir.to_path_buf(),
                violations,
            })
        }
        Err(invalid) => {
            for v in invalid.violations {
                if let Some(v) = locate_violation(v, &pt, &tt, &sample, &files) {
                    violations.push(v);
                }
            }
            sort_violations(&mut violations, &files);
            cut_missing_pore_cascade(&mut violations, &pores_name);
            Err(ReadError::Invalid {
                path: dir.to_path_buf(),
                violations,
            })
        }
    }
}

/// Most "missing pore" problems listed one by one when the pore table
/// itself read cleanly; the rest are summarised in one line.
pub const MISSING_PORE_LISTED: usize = 5;

/// Cuts a cascade to its first cause. When `pores.csv` has problems of its
/// own (a malformed row swallows the rows after it), every throat end that
/// names a pore lost that way follows from them: the "missing pore" problems
/// become one summary line. Otherwise the first [`MISSING_PORE_LISTED`] are
/// kept and the rest summarised. `violations` must be sorted.
fn cut_missing_pore_cascade(violations: &mut Vec<Violation>, pores_name: &str) {
    let pores_broken = violations
        .iter()
        .any(|v| v.file.as_deref() == Some(pores_name));
    let missing: Vec<usize> = (0..violations.len())
        .filter(|&i| violations[i].rule == Rule::MissingPore)
        .collect();
    if pores_broken {
        for v in violations.iter_mut() {
            if matches!(v.rule, Rule::NoInlet | Rule::NoOutlet) {
                v.detail += " among the rows read before the problems of this file";
            }
        }
    }
    let keep = if pores_broken { 0 } else { MISSING_PORE_LISTED };
    if missing.len() <= keep.max(1) {
        return;
    }
    let first = violations[missing[keep]].clone();
    let n_cut = missing.len() - keep;
    let mut summary = first.clone();
    summary.detail = if pores_broken {
        format!(
            "{n_cut} throat ends name pores that are not in the pore table, from line {} on \
             (first: {}); they follow from the problems in {pores_name} above: fix those first",
            first.line.map_or("?".to_owned(), |l| l.to_string()),
            first.detail
        )
    } else {
        format!(
            "{n_cut} more throat ends name pores that do not exist, from line {} on (first: {})",
            first.line.map_or("?".to_owned(), |l| l.to_string()),
            first.detail
        )
    };
    let cut: std::collections::HashSet<usize> = missing[keep..].iter().copied().collect();
    let mut k = 0;
    violations.retain(|_| {
        let drop = cut.contains(&k);
        k += 1;
        !drop
    });
    let at = violations
        .iter()
        .position(|v| v.line > summary.line && v.file == summary.file)
        .unwrap_or(violations.len());
    violations.insert(at, summary);
}

/// The optional `oil_wet` column as marks: `None` when absent; blank cells
/// are water-wet (0); any value other than 0 or 1 is a violation.
fn oil_wet_marks(
    table: &mut Table,
    c: usize,
    bad: &mut Vec<Violation>,
    target: fn(u32) -> Target,
) -> Option<Vec<bool>> {
    if !table.present[c] {
        return None;
    }
    let mut values = table.take_floats(c);
    default_blanks(table, c, &mut values, |_| 0.0);
    let mut marks = Vec::with_capacity(values.len());
    for (r, &v) in values.iter().enumerate() {
        if v != 0.0 && v != 1.0 && !table.unusable(r, c) {
            bad.push(Violation::new(
                Rule::MalformedValue,
                target(r as u32),
                Some("oil_wet"),
                format!("value {v} must be 1 (turns oil-wet where oil contacts it), 0 or empty"),
            ));
        }
        marks.push(v == 1.0);
    }
    Some(marks)
}

/// Fills the blank cells of optional column `c` with `default(row)`.
fn default_blanks(table: &Table, c: usize, values: &mut [f64], default: impl Fn(usize) -> f64) {
    if table.present[c] {
        for (&r, &m) in &table.empty {
            if m & (1 << c) != 0 {
                values[r] = default(r);
            }
        }
    } else {
        for (r, v) in values.iter_mut().enumerate() {
            *v = default(r);
        }
    }
}

/// Maps a violation of [`crate::network::validate::check_columns`] (pore / throat
/// index) to its file, line and column; `None` when it only repeats a
/// problem already reported while parsing.
fn locate_violation(
    mut v: Violation,
    pt: &Table,
    tt: &Table,
    sample: &super::sample::Sample,
    names: &[&str; 3],
) -> Option<Violation> {
    let (pores_name, throats_name) = (names[1], names[2]);
    let column = v.column.clone().unwrap_or_default();
    match v.target {
        Target::Pore(i) => {
            let i = i as usize;
            if let Some(c) = pt.col(&column)
                && pt.unusable(i, c)
            {
                return None;
            }
            v.file = Some(pores_name.to_owned());
            v.line = pt.lines.get(i).copied();
        }
        Target::Throat(i) => {
            let i = i as usize;
            if let Some(c) = tt.col(&column)
                && tt.unusable(i, c)
            {
                return None;
            }
            if v.rule == Rule::SelfLoop && (tt.unusable(i, T_A) || tt.unusable(i, T_B)) {
                return None;
            }
            v.file = Some(throats_name.to_owned());
            v.line = tt.lines.get(i).copied();
        }
        Target::Network => {
            if super::sample::KEYS.contains(&column.as_str()) {
                if sample.quiet.iter().any(|k| *k == column) {
                    return None;
                }
                v.line = sample.line_of(&column);
                v.file = Some(names[0].to_owned());
            } else {
                // Faces and emptiness concern the pore table.
                if !pt.has_header {
                    return None;
                }
                v.file = Some(pores_name.to_owned());
            }
        }
    }
    Some(v)
}

// ---------------------------------------------------------------- writing

/// Rows per formatting task of the parallel writer.
const WRITE_ROWS: usize = 8192;
/// Tasks formatted before their output is written.
const WRITE_BATCH: usize = 32;

fn push_f64(buf: &mut Vec<u8>, x: f64) {
    let mut b = ryu::Buffer::new();
    buf.extend_from_slice(b.format(x).as_bytes());
}

fn push_u64(buf: &mut Vec<u8>, mut x: u64) {
    let mut digits = [0u8; 20];
    let mut i = digits.len();
    loop {
        i -= 1;
        digits[i] = b'0' + (x % 10) as u8;
        x /= 10;
        if x == 0 {
            break;
        }
    }
    buf.extend_from_slice(&digits[i..]);
}

/// Writes `header` then rows `0..n` formatted by `row`, formatting fixed
/// groups of rows in parallel and writing them in order.
fn write_rows<W: Write>(
    out: &mut W,
    header: &str,
    n: usize,
    row: impl Fn(usize, &mut Vec<u8>) + Sync,
) -> io::Result<()> {
    out.write_all(header.as_bytes())?;
    let n_tasks = n.div_ceil(WRITE_ROWS);
    let mut task = 0;
    while task < n_tasks {
        let end = (task + WRITE_BATCH).min(n_tasks);
        let bufs: Vec<Vec<u8>> = (task..end)
            .into_par_iter()
            .map(|k| {
                let mut buf = Vec::with_capacity(WRITE_ROWS * 192);
                for i in k * WRITE_ROWS..((k + 1) * WRITE_ROWS).min(n) {
                    row(i, &mut buf);
                }
                buf
            })
            .collect();
        for b in &bufs {
            out.write_all(b)?;
        }
        task = end;
    }
    Ok(())
}

fn header_of(spec: &[ColumnSpec]) -> String {
    let names: Vec<&str> = spec.iter().map(|c| c.name).collect();
    format!("{}\n", names.join(","))
}

fn write_pores<W: Write>(network: &Network, out: &mut W) -> io::Result<()> {
    let p = network.pores();
    let marks = p.oil_wet.as_deref();
    let spec = if marks.is_some() {
        &PORE_SPEC[..]
    } else {
        &PORE_SPEC[..P_OIL_WET]
    };
    write_rows(out, &header_of(spec), p.len(), |i, b| {
        push_u64(b, i as u64);
        for x in [
            p.x[i],
            p.y[i],
            p.z[i],
            p.radius[i],
            p.volume[i],
            p.shape_factor[i],
            p.clay_volume[i],
        ] {
            b.push(b',');
            push_f64(b, x);
        }
        b.push(b',');
        b.extend_from_slice(p.boundary[i].as_str().as_bytes());
        if let Some(m) = marks {
            b.extend_from_slice(if m[i] { b",1" } else { b",0" });
        }
        b.push(b'\n');
    })
}

fn write_throats<W: Write>(network: &Network, out: &mut W) -> io::Result<()> {
    let t = network.throats();
    let marks = t.oil_wet.as_deref();
    let spec = if marks.is_some() {
        &THROAT_SPEC[..]
    } else {
        &THROAT_SPEC[..T_OIL_WET]
    };
    write_rows(out, &header_of(spec), t.len(), |i, b| {
        push_u64(b, i as u64);
        let [a, c] = t.pores[i];
        b.push(b',');
        push_u64(b, a as u64);
        b.push(b',');
        push_u64(b, c as u64);
        for x in [
            t.radius[i],
            t.shape_factor[i],
            t.length[i],
            t.volume[i],
            t.clay_volume[i],
            t.conduit_a[i],
            t.conduit_b[i],
        ] {
            b.push(b',');
            push_f64(b, x);
        }
        if let Some(m) = marks {
            b.extend_from_slice(if m[i] { b",1" } else { b",0" });
        }
        b.push(b'\n');
    })
}

fn io_err(path: &Path) -> impl FnOnce(io::Error) -> WriteError + '_ {
    move |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// Writes the three files into `dir` (see [`super::write_csv`]).
pub(crate) fn write_folder(network: &Network, dir: &Path) -> Result<(), WriteError> {
    match fs::metadata(dir) {
        Ok(m) if !m.is_dir() => {
            return Err(WriteError::NotADirectory {
                path: dir.to_path_buf(),
            });
        }
        Ok(_) => return write_in_place(network, dir),
        Err(e) if e.kind() == io::ErrorKind::NotFound => {}
        Err(e) => return Err(io_err(dir)(e)),
    }
    // A new folder: fill a temporary sibling, then rename it into place.
    let temp = temp_sibling(dir);
    fs::create_dir(&temp).map_err(io_err(&temp))?;
    let result = (|| {
        for (name, kind) in [(PORES_FILE, 0), (THROATS_FILE, 1), (SAMPLE_FILE, 2)] {
            let path = temp.join(name);
            let file = fs::File::create(&path).map_err(io_err(&path))?;
            let mut out = io::BufWriter::with_capacity(1 << 20, file);
            write_one(network, kind, &mut out).map_err(io_err(&path))?;
            let file = out
                .into_inner()
                .map_err(|e| io_err(&path)(e.into_error()))?;
            file.sync_all().map_err(io_err(&path))?;
        }
        sync_dir(&temp).map_err(io_err(&temp))?;
        fs::rename(&temp, dir).map_err(io_err(dir))?;
        sync_dir(parent_dir(dir)).map_err(io_err(dir))
    })();
    if result.is_err() {
        let _ = fs::remove_dir_all(&temp);
    }
    result
}

fn write_one<W: Write>(network: &Network, kind: usize, out: &mut W) -> io::Result<()> {
    match kind {
        0 => write_pores(network, out),
        1 => write_throats(network, out),
        _ => out.write_all(write_sample(network.info()).as_bytes()),
    }
}

/// An existing folder: write all three files to temporary files beside
/// their targets, then rename them into place one after the other.
fn write_in_place(network: &Network, dir: &Path) -> Result<(), WriteError> {
    let mut files = Vec::with_capacity(3);
    for (name, kind) in [(PORES_FILE, 0), (THROATS_FILE, 1), (SAMPLE_FILE, 2)] {
        let path = dir.join(name);
        let mut file = AtomicFile::create(&path).map_err(io_err(&path))?;
        write_one(network, kind, &mut file).map_err(io_err(&path))?;
        files.push((path, file));
    }
    for (path, file) in files {
        file.commit().map_err(io_err(&path))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn push_u64_writes_decimal() {
        let mut b = Vec::new();
        for x in [0u64, 7, 10, 4_294_967_295, u64::MAX] {
            b.clear();
            push_u64(&mut b, x);
            assert_eq!(String::from_utf8(b.clone()).unwrap(), x.to_string());
        }
    }

    #[test]
    fn default_conduit_is_pore_radius_capped_at_045_length() {
        // Rule of the format: min(R_pore, 0.45 L).
        assert_eq!(default_conduit(2e-5, 1e-4), 2e-5);
        assert_eq!(default_conduit(8e-5, 1e-4), 0.45 * 1e-4);
    }
}
