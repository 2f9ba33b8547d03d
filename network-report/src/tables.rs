//! Saturation-function tables: a simulated curve made monotone and
//! resampled, written as CSV or as a water–oil saturation-function keyword
//! table, and read back.
//!
//! ## From a simulated curve to a table ([`build_table`])
//! A [`Curve`] holds `(Sw, krw, krn, Pc)` samples in process order
//! (drainage: Sw falling; imbibition: Sw rising). Simulated curves can be
//! slightly noisy or non-monotone (finite networks, trapping events), while
//! a reservoir simulator needs monotone tables. The steps, in order:
//!
//! 1. **Check** lengths (all equal, at least 2), finite values, `Sw ∈ [0, 1]`.
//! 2. **Sort** by increasing Sw (tables always run in increasing Sw; the
//!    process is kept only as a label). Steps of Sw against the process
//!    direction are counted in [`TableReport::n_sw_reversals`].
//! 3. **Merge** samples with equal Sw into one knot carrying their mean
//!    values and weight equal to their count.
//! 4. **Make monotone** by weighted isotonic regression, the
//!    pool-adjacent-violators algorithm ([`isotonic_non_decreasing`];
//!    Ayer et al. 1955, Ann. Math. Stat. 26:641–647; Barlow et al. 1972,
//!    *Statistical Inference under Order Restrictions*, Wiley): `krw`
//!    non-decreasing in Sw, `krn` and `Pc` non-increasing in Sw. It is the
//!    least-squares closest monotone sequence, so it changes only the
//!    violating stretches. Negative kr (solver round-off) are then raised to
//!    0, which keeps monotonicity.
//! 5. **End points.** The table spans exactly the sampled Sw range:
//!    `Sw_min` (drainage: Swc, the lowest Sw reached; imbibition: Swi, the
//!    start) to `Sw_max` (drainage: the starting Sw, normally 1; imbibition:
//!    1 − Snr, the highest Sw reached). Both are copied bit for bit from the
//!    data. Values at the ends are the monotone values there, no
//!    extrapolation, except:
//!    - `krn(Sw_max) = 0` when [`TableOptions::krn_zero_at_max_sw`] (default
//!      `true`): at the top of the table the non-wetting phase is residual
//!      (1 − Snr) or absent (Sw = 1) and does not flow.
//!    - `krw(Sw_min) = 0` when [`TableOptions::krw_zero_at_min_sw`] (default
//!      `false`: in angular pores the wetting phase at Swc stays connected
//!      through corner films and keeps a small conductance; set it when the
//!      wetting phase is disconnected there).
//!
//!    Both keep the columns monotone.
//! 6. **Resample** at `n_points` Sw values evenly spaced between the ends,
//!    by linear interpolation of the monotone knots (which preserves
//!    monotonicity).
//!
//! How much each step changed the data is reported in [`TableReport`],
//! measured at the original samples.
//!
//! ## Files
//! - CSV ([`write_csv`], [`parse_csv`]): header `sw,krw,krn,pc_pa`, numbers
//!   in shortest round-trip form (read back bit-exact).
//! - Keyword table ([`write_keyword_table`], [`parse_keyword_table`]): the
//!   four-column layout black-oil reservoir simulators read as a water–oil
//!   saturation function (keyword `SWOF` by default): columns Sw, krw, krow
//!   (oil relative permeability in the presence of water, here `krn`) and
//!   `Pc = Po − Pw` in bar, comment lines starting with `--`, the table
//!   ended by `/`. Sw with 6 decimals, the others with 7 significant digits.

use std::fmt::Write as _;

use thiserror::Error;

/// Pascals per bar.
pub const PA_PER_BAR: f64 = 1.0e5;

/// Why a table could not be built, written or read.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum TableError {
    /// A column's length differs from the Sw column's.
    #[error("column {column} has {found} values, Sw has {expected}")]
    LengthMismatch {
        /// Column name.
        column: &'static str,
        /// Length of Sw.
        expected: usize,
        /// Length of this column.
        found: usize,
    },
    /// Fewer points than needed.
    #[error("{what}: {found} points, at least {needed} needed")]
    TooFewPoints {
        /// What was being built or read.
        what: &'static str,
        /// Points found.
        found: usize,
        /// Points needed.
        needed: usize,
    },
    /// A value is NaN or infinite.
    #[error("{column}[{index}] = {value} is not finite")]
    NotFinite {
        /// Column name.
        column: &'static str,
        /// Row index (0-based).
        index: usize,
        /// The value.
        value: f64,
    },
    /// A value is outside its allowed range.
    #[error("{column}[{index}] = {value} is outside {allowed}")]
    OutOfRange {
        /// Column name.
        column: &'static str,
        /// Row index (0-based).
        index: usize,
        /// The value.
        value: f64,
        /// The allowed range.
        allowed: &'static str,
    },
    /// Every sample has the same Sw: no table can span it.
    #[error("all samples have Sw = {sw}: the table has no Sw range")]
    NoSwRange {
        /// The common Sw.
        sw: f64,
    },
    /// Sw does not increase strictly from row to row (after formatting, for
    /// writers).
    #[error("Sw does not increase strictly at row {index} (Sw = {sw})")]
    SwNotIncreasing {
        /// Row index (0-based).
        index: usize,
        /// The offending Sw.
        sw: f64,
    },
    /// An option is invalid.
    #[error("option {name}: {detail}")]
    BadOption {
        /// Option name.
        name: &'static str,
        /// What is wrong.
        detail: String,
    },
    /// A file does not parse.
    #[error("line {line}: {detail}")]
    Parse {
        /// 1-based line number.
        line: usize,
        /// What is wrong.
        detail: String,
    },
}

/// The displacement process a curve comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Process {
    /// Drainage: the non-wetting phase invades, Sw falls.
    Drainage,
    /// Imbibition: the wetting phase invades, Sw rises.
    Imbibition,
}

impl Process {
    /// Lower-case name.
    pub fn as_str(self) -> &'static str {
        match self {
            Process::Drainage => "drainage",
            Process::Imbibition => "imbibition",
        }
    }
}

/// A simulated saturation-function curve, samples in process order.
#[derive(Clone, Copy, Debug)]
pub struct Curve<'a> {
    /// The process, which fixes the expected direction of Sw.
    pub process: Process,
    /// Water (wetting) saturation, fraction of pore volume.
    pub sw: &'a [f64],
    /// Wetting relative permeability (–).
    pub krw: &'a [f64],
    /// Non-wetting relative permeability (–).
    pub krn: &'a [f64],
    /// Capillary pressure `Po − Pw` (Pa).
    pub pc_pa: &'a [f64],
}

/// Options of [`build_table`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TableOptions {
    /// Number of table rows (≥ 2). Default 21.
    pub n_points: usize,
    /// Set `krw = 0` at the lowest Sw. Default `false`.
    pub krw_zero_at_min_sw: bool,
    /// Set `krn = 0` at the highest Sw. Default `true`.
    pub krn_zero_at_max_sw: bool,
}

impl Default for TableOptions {
    fn default() -> Self {
        TableOptions {
            n_points: 21,
            krw_zero_at_min_sw: false,
            krn_zero_at_max_sw: true,
        }
    }
}

/// Rows of a saturation-function table, increasing in Sw.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct TableRows {
    /// Water saturation (fraction), strictly increasing.
    pub sw: Vec<f64>,
    /// Wetting relative permeability (–), non-decreasing.
    pub krw: Vec<f64>,
    /// Non-wetting relative permeability (–), non-increasing.
    pub krn: Vec<f64>,
    /// Capillary pressure (Pa), non-increasing.
    pub pc_pa: Vec<f64>,
}

impl TableRows {
    /// Number of rows.
    pub fn len(&self) -> usize {
        self.sw.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.sw.is_empty()
    }
}

/// How much one column was changed, measured at the original samples
/// (final monotone value, before resampling, minus the input value).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Adjustment {
    /// Samples whose value changed.
    pub n_changed: usize,
    /// Largest absolute change.
    pub max_abs_change: f64,
    /// Root-mean-square change over all samples.
    pub rms_change: f64,
}

/// What [`build_table`] did to the data.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct TableReport {
    /// Steps of Sw against the process direction in the input.
    pub n_sw_reversals: usize,
    /// Samples merged into an equal-Sw neighbour.
    pub n_merged: usize,
    /// Change of krw (isotonic regression, clamping, end point).
    pub krw: Adjustment,
    /// Change of krn (isotonic regression, clamping, end point).
    pub krn: Adjustment,
    /// Change of Pc (isotonic regression), in Pa.
    pub pc_pa: Adjustment,
}

/// A monotone, resampled saturation-function table.
#[derive(Clone, Debug, PartialEq)]
pub struct SatTable {
    /// The process the curve came from.
    pub process: Process,
    /// The rows.
    pub rows: TableRows,
    /// What was changed to make the rows monotone.
    pub report: TableReport,
}

/// Builds a monotone table of `opts.n_points` rows from `curve` (see the
/// module documentation for each step and the end-point rules).
pub fn build_table(curve: &Curve<'_>, opts: &TableOptions) -> Result<SatTable, TableError> {
    let n = curve.sw.len();
    for (column, data) in [
        ("krw", curve.krw),
        ("krn", curve.krn),
        ("pc_pa", curve.pc_pa),
    ] {
        if data.len() != n {
            return Err(TableError::LengthMismatch {
                column,
                expected: n,
                found: data.len(),
            });
        }
    }
    if n < 2 {
        return Err(TableError::TooFewPoints {
            what: "curve",
            found: n,
            needed: 2,
        });
    }
    if opts.n_points < 2 {
        return Err(TableError::BadOption {
            name: "n_points",
            detail: format!("{} rows requested, at least 2 needed", opts.n_points),
        });
    }
    for (column, data) in [
        ("sw", curve.sw),
        ("krw", curve.krw),
        ("krn", curve.krn),
        ("pc_pa", curve.pc_pa),
    ] {
        if let Some((index, &value)) = data.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(TableError::NotFinite {
                column,
                index,
                value,
            });
        }
    }
    if let Some((index, &value)) = curve
        .sw
        .iter()
        .enumerate()
        .find(|(_, v)| !(0.0..=1.0).contains(*v))
    {
        return Err(TableError::OutOfRange {
            column: "sw",
            index,
            value,
            allowed: "[0, 1]",
        });
    }

    let n_sw_reversals = curve
        .sw
        .windows(2)
        .filter(|w| match curve.process {
            Process::Drainage => w[1] > w[0],
            Process::Imbibition => w[1] < w[0],
        })
        .count();

    // Sort by Sw (stable, so equal Sw keep process order).
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| curve.sw[a].total_cmp(&curve.sw[b]));

    // Merge equal Sw into knots.
    let mut knot_sw: Vec<f64> = Vec::new();
    let mut knot_w: Vec<f64> = Vec::new();
    let mut sums: Vec<[f64; 3]> = Vec::new();
    let mut knot_of = vec![0usize; n];
    for &i in &order {
        let s = curve.sw[i];
        if knot_sw.last() != Some(&s) {
            knot_sw.push(s);
            knot_w.push(0.0);
            sums.push([0.0; 3]);
        }
        let k = knot_sw.len() - 1;
        knot_w[k] += 1.0;
        sums[k][0] += curve.krw[i];
        sums[k][1] += curve.krn[i];
        sums[k][2] += curve.pc_pa[i];
        knot_of[i] = k;
    }
    let m = knot_sw.len();
    if m < 2 {
        return Err(TableError::NoSwRange { sw: knot_sw[0] });
    }
    let mean = |c: usize| -> Vec<f64> { (0..m).map(|k| sums[k][c] / knot_w[k]).collect() };
    let mut krw = isotonic_non_decreasing(&mean(0), &knot_w);
    let mut krn = isotonic_non_increasing(&mean(1), &knot_w);
    let pc = isotonic_non_increasing(&mean(2), &knot_w);
    for v in krw.iter_mut().chain(krn.iter_mut()) {
        *v = v.max(0.0);
    }
    if opts.krw_zero_at_min_sw {
        krw[0] = 0.0;
    }
    if opts.krn_zero_at_max_sw {
        krn[m - 1] = 0.0;
    }

    let adjustment = |input: &[f64], knots: &[f64]| -> Adjustment {
        let mut a = Adjustment::default();
        let mut sq = 0.0;
        for i in 0..n {
            let d = knots[knot_of[i]] - input[i];
            if d != 0.0 {
                a.n_changed += 1;
                a.max_abs_change = a.max_abs_change.max(d.abs());
                sq += d * d;
            }
        }
        a.rms_change = (sq / n as f64).sqrt();
        a
    };
    let report = TableReport {
        n_sw_reversals,
        n_merged: n - m,
        krw: adjustment(curve.krw, &krw),
        krn: adjustment(curve.krn, &krn),
        pc_pa: adjustment(curve.pc_pa, &pc),
    };

    // Resample on an even grid with exact end points.
    let (lo, hi) = (knot_sw[0], knot_sw[m - 1]);
    let np = opts.n_points;
    let grid: Vec<f64> = (0..np)
        .map(|j| {
            if j == 0 {
                lo
            } else if j == np - 1 {
                hi
            } else {
                lo + (hi - lo) * j as f64 / (np - 1) as f64
            }
        })
        .collect();
    if let Some(j) = (1..np).find(|&j| grid[j] <= grid[j - 1]) {
        return Err(TableError::BadOption {
            name: "n_points",
            detail: format!(
                "{np} rows over Sw ∈ [{lo}, {hi}] leave rows {} and {j} with equal Sw",
                j - 1
            ),
        });
    }
    let rows = TableRows {
        krw: grid
            .iter()
            .map(|&s| interpolate(&knot_sw, &krw, s))
            .collect(),
        krn: grid
            .iter()
            .map(|&s| interpolate(&knot_sw, &krn, s))
            .collect(),
        pc_pa: grid
            .iter()
            .map(|&s| interpolate(&knot_sw, &pc, s))
            .collect(),
        sw: grid,
    };
    Ok(SatTable {
        process: curve.process,
        rows,
        report,
    })
}

/// Weighted isotonic regression (pool-adjacent-violators; Ayer et al.
/// 1955): the non-decreasing sequence `z` minimising `Σ w_i (z_i − y_i)²`.
///
/// `y` and `w` have equal lengths; weights must be positive (a shorter `w`
/// or a non-positive weight is treated as weight 1).
pub fn isotonic_non_decreasing(y: &[f64], w: &[f64]) -> Vec<f64> {
    // Blocks of pooled values: (weighted sum, total weight, count).
    let mut blocks: Vec<(f64, f64, usize)> = Vec::with_capacity(y.len());
    for (i, &v) in y.iter().enumerate() {
        let wi = w.get(i).copied().filter(|x| *x > 0.0).unwrap_or(1.0);
        blocks.push((wi * v, wi, 1));
        while blocks.len() >= 2 {
            let b = blocks[blocks.len() - 1];
            let a = blocks[blocks.len() - 2];
            if a.0 / a.1 > b.0 / b.1 {
                blocks.pop();
                let last = blocks.len() - 1;
                blocks[last] = (a.0 + b.0, a.1 + b.1, a.2 + b.2);
            } else {
                break;
            }
        }
    }
    let mut out = Vec::with_capacity(y.len());
    for (s, wt, c) in blocks {
        out.extend(std::iter::repeat_n(s / wt, c));
    }
    out
}

/// Weighted isotonic regression onto non-increasing sequences (the
/// non-decreasing regression of `−y`, negated).
pub fn isotonic_non_increasing(y: &[f64], w: &[f64]) -> Vec<f64> {
    let neg: Vec<f64> = y.iter().map(|v| -v).collect();
    isotonic_non_decreasing(&neg, w)
        .into_iter()
        .map(|v| -v)
        .collect()
}

/// Linear interpolation of `(xs, ys)` (xs strictly increasing) at `x` within
/// `[xs[0], xs[last]]`; exact knot values at the knots.
fn interpolate(xs: &[f64], ys: &[f64], x: f64) -> f64 {
    let k = xs.partition_point(|&v| v < x);
    if k == 0 {
        return ys[0];
    }
    if k >= xs.len() {
        return ys[xs.len() - 1];
    }
    if xs[k] == x {
        return ys[k];
    }
    let t = (x - xs[k - 1]) / (xs[k] - xs[k - 1]);
    ys[k - 1] + t * (ys[k] - ys[k - 1])
}

// ---------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------
// Keyword table
// ---------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------
// Helpers
// ---------------------------------------------------------------------------

/// Rows to write: equal lengths, at least one row, finite values, Sw
/// strictly increasing.
fn check_rows(rows: &TableRows) -> Result<(), TableError> {
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
fn shortest(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 || (1e-4..1e7).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

fn parse_plain(s: &str) -> f64 {
    s.parse().unwrap_or(f64::NAN)
}

fn parse_number(s: &str, line: usize) -> Result<f64, TableError> {
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

#[cfg(test)]
mod tests;
