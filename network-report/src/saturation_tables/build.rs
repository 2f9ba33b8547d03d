//! The monotone table builder: a simulated curve checked, sorted, merged at
//! equal Sw, made monotone, given its end points and resampled (the steps
//! of the [module docs](super)).

use super::isotonic::{isotonic_non_decreasing, isotonic_non_increasing};
use super::{Adjustment, Curve, Process, SatTable, TableOptions, TableReport, TableRows};
use crate::error::TableError;

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
    // Pc of the first sample of each knot in process order (the stable
    // sort keeps process order within equal Sw).
    let mut first_pc: Vec<f64> = Vec::new();
    let mut knot_of = vec![0usize; n];
    for &i in &order {
        let s = curve.sw[i];
        if knot_sw.last() != Some(&s) {
            knot_sw.push(s);
            knot_w.push(0.0);
            sums.push([0.0; 3]);
            first_pc.push(curve.pc_pa[i]);
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
    let pc = if opts.rows_at_samples {
        let mut pc = first_pc;
        if let Some(p) = opts.pc_at_max_sw {
            pc[m - 1] = p;
        }
        for k in 1..m {
            pc[k] = pc[k].min(pc[k - 1]);
        }
        pc
    } else {
        let mut means = mean(2);
        if let Some(p) = opts.pc_at_max_sw {
            means[m - 1] = p;
        }
        isotonic_non_increasing(&means, &knot_w)
    };
    if let Some(p) = opts.pc_at_max_sw
        && !p.is_finite()
    {
        return Err(TableError::BadOption {
            name: "pc_at_max_sw",
            detail: format!("{p} is not finite"),
        });
    }
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

    let (lo, hi) = (knot_sw[0], knot_sw[m - 1]);
    let np = opts.n_points;
    if opts.rows_at_samples {
        // The knots nearest to np evenly spaced Sw, ends included.
        let mut picked: Vec<usize> = (0..np)
            .map(|j| {
                let t = lo + (hi - lo) * j as f64 / (np - 1) as f64;
                let k = knot_sw.partition_point(|&v| v < t).min(m - 1);
                if k > 0 && (t - knot_sw[k - 1]) <= (knot_sw[k] - t) {
                    k - 1
                } else {
                    k
                }
            })
            .collect();
        picked[0] = 0;
        picked[np - 1] = m - 1;
        picked.dedup();
        let mut rows = TableRows {
            sw: picked.iter().map(|&k| knot_sw[k]).collect(),
            krw: picked.iter().map(|&k| krw[k]).collect(),
            krn: picked.iter().map(|&k| krn[k]).collect(),
            pc_pa: picked.iter().map(|&k| pc[k]).collect(),
        };
        extend_to_one(&mut rows, opts);
        return Ok(SatTable {
            process: curve.process,
            rows,
            report,
        });
    }
    // Resample on an even grid with exact end points.
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
    let mut rows = TableRows {
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
    extend_to_one(&mut rows, opts);
    Ok(SatTable {
        process: curve.process,
        rows,
        report,
    })
}

/// The row at Sw = 1 of [`TableOptions::extend_to_sw_one`]. A last Sw
/// within 1e-9 of 1 (a drainage start, off by summation round-off) is set
/// to 1 instead.
fn extend_to_one(rows: &mut TableRows, opts: &TableOptions) {
    let last = rows.len() - 1;
    if !opts.extend_to_sw_one {
        return;
    }
    if rows.sw[last] >= 1.0 - 1e-9 {
        rows.sw[last] = 1.0;
    } else {
        rows.sw.push(1.0);
        rows.krw.push(rows.krw[last]);
        rows.krn.push(0.0);
        rows.pc_pa.push(rows.pc_pa[last]);
    }
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
