//! Aggregation algebraic multigrid, used as a preconditioner of conjugate
//! gradients.
//!
//! Method: smoothed aggregation (Vaněk, Mandel & Brezina 1996, "Algebraic
//! multigrid by smoothed aggregation for second and fourth order elliptic
//! problems", Computing 56:179–196), or plain (unsmoothed) aggregation when
//! [`AmgOptions::smooth_prolongator`] is off.
//!
//! Setup of one level with matrix `A` (diagonal `D`):
//! 1. strong couplings `|aᵢⱼ| ≥ θ √(aᵢᵢ aⱼⱼ)` (θ = [`AmgOptions::strength_threshold`]);
//! 2. greedy aggregation in three passes (Vaněk et al. 1996): roots whose
//!    strong neighbourhood is still free form aggregates with it; left-over
//!    nodes join the aggregate of their strongest aggregated neighbour; the
//!    rest form aggregates with their free strong neighbours. The passes run
//!    in index order, so the aggregates are deterministic;
//! 3. tentative prolongator `P₀` = aggregate indicator (the constant vector
//!    spans the near-null space of a graph Laplacian);
//! 4. smoothed prolongator `P = (I − ω D_F⁻¹ A_F) P₀` with the filtered
//!    matrix `A_F` (weak couplings dropped and added to the diagonal, which
//!    keeps row sums) and `ω = 4/(3ρ)`, `ρ` the Gershgorin bound of
//!    `ρ(D_F⁻¹ A_F)`;
//! 5. Galerkin coarse matrix `A_c = Pᵀ A P`.
//!
//! The cycle is a V-cycle with damped Jacobi smoothing (`ω = 4/(3ρ)`, `ρ`
//! the Gershgorin bound of `ρ(D⁻¹A)`), the same number of sweeps before and
//! after the coarse correction, and a dense Cholesky solve on the coarsest
//! level. Jacobi smoothing is symmetric, so the cycle is a symmetric positive
//! definite preconditioner as CG requires.

use rayon::prelude::*;

use super::sparse::{Csr, FineOperator, LinOp, spgemm};
use crate::numeric::CHUNK;

/// Options of the algebraic multigrid preconditioner.
#[derive(Clone, Debug, PartialEq)]
pub struct AmgOptions {
    /// Strength-of-connection threshold θ: `aᵢⱼ` is a strong coupling when
    /// `|aᵢⱼ| ≥ θ √(aᵢᵢ aⱼⱼ)`. Default 0.08 (common practice for smoothed
    /// aggregation); range `[0, 1)`.
    pub strength_threshold: f64,
    /// Smooth the tentative prolongator (smoothed aggregation, default) or
    /// use it as it is (plain aggregation: cheaper setup, more iterations).
    pub smooth_prolongator: bool,
    /// Jacobi sweeps before and after each coarse correction. Default 1.
    pub sweeps: usize,
    /// Stop coarsening when a level has at most this many unknowns
    /// (solved there by dense Cholesky). Default 400.
    pub max_coarse: usize,
    /// Maximum number of levels. Default 20.
    pub max_levels: usize,
}

impl Default for AmgOptions {
    fn default() -> Self {
        AmgOptions {
            strength_threshold: 0.08,
            smooth_prolongator: true,
            sweeps: 1,
            max_coarse: 400,
            max_levels: 20,
        }
    }
}

/// A coarsest level larger than this is smoothed instead of factorised.
const DENSE_LIMIT: usize = 2000;
/// Jacobi sweeps used on a coarsest level too large to factorise.
const COARSE_SWEEPS: usize = 20;

/// Transfer between level `k` and level `k + 1`.
#[derive(Debug)]
struct Transfer {
    /// Prolongator, `n_k × n_{k+1}`.
    p: Csr,
    /// Restriction `Pᵀ`.
    r: Csr,
}

/// Work vectors of one level.
#[derive(Debug)]
struct Work {
    x: Vec<f64>,
    b: Vec<f64>,
    t: Vec<f64>,
}

impl Work {
    fn new(n: usize) -> Work {
        Work {
            x: vec![0.0; n],
            b: vec![0.0; n],
            t: vec![0.0; n],
        }
    }
}

/// Solver of the coarsest level.
#[derive(Debug)]
enum Coarsest {
    /// Dense Cholesky factor of the present rows.
    Dense {
        /// Row of the level for each compressed index.
        rows: Vec<usize>,
        /// Lower-triangular factor, row-major `m × m`; a zero inverse pivot
        /// marks a (numerically) singular direction that is left at zero.
        l: Vec<f64>,
        /// Inverse pivots.
        inv_pivot: Vec<f64>,
    },
    /// Damped Jacobi sweeps (a symmetric polynomial preconditioner).
    Sweeps,
}

/// An aggregation multigrid hierarchy.
#[derive(Debug)]
pub(crate) struct Amg {
    transfers: Vec<Transfer>,
    /// Matrices of levels `1..n_levels`.
    coarse: Vec<Csr>,
    /// Jacobi weights `ω/aᵢᵢ` of levels `1..n_levels`.
    coarse_smoother: Vec<Vec<f64>>,
    /// Jacobi weights of level 0 (refreshed from the current fine values).
    fine_smoother: Vec<f64>,
    coarsest: Coarsest,
    work: Vec<Work>,
    sweeps: usize,
    /// Stored entries of all levels over those of level 0.
    operator_complexity: f64,
}

impl Amg {
    /// Builds the hierarchy for the current values of `fine`.
    pub fn build(fine: &FineOperator, opts: &AmgOptions) -> Amg {
        let a0 = fine.to_csr();
        let nnz0 = a0.nnz().max(1);
        let mut nnz_total = a0.nnz();
        let mut transfers = Vec::new();
        let mut coarse: Vec<Csr> = Vec::new();
        let mut sizes = vec![a0.n_rows];
        let theta = opts.strength_threshold.clamp(0.0, 0.999);
        let mut current = a0;
        let mut level = 0;
        loop {
            let d = current.diagonal();
            let n_present = d.iter().filter(|&&x| x > 0.0).count();
            if n_present <= opts.max_coarse || level + 1 >= opts.max_levels.max(1) {
                break;
            }
            let (agg, n_agg) = aggregate(&current, &d, theta);
            if n_agg == 0 || n_agg as f64 > 0.9 * n_present as f64 {
                break;
            }
            let p = if opts.smooth_prolongator {
                smoothed_prolongator(&current, &d, &agg, n_agg, theta)
            } else {
                tentative_prolongator(&agg, n_agg)
            };
            let ap = spgemm(&current, &p);
            let r = p.transpose();
            let ac = spgemm(&r, &ap);
            drop(ap);
            nnz_total += ac.nnz();
            sizes.push(ac.n_rows);
            transfers.push(Transfer { p, r });
            let prev = std::mem::replace(&mut current, ac);
            if level > 0 {
                coarse.push(prev);
            }
            level += 1;
        }
        // `current` is the coarsest level.
        let coarsest = build_coarsest(&current);
        if !transfers.is_empty() {
            coarse.push(current);
        }
        let coarse_smoother = coarse.iter().map(jacobi_weights_csr).collect();
        let work = sizes.iter().map(|&n| Work::new(n)).collect();
        let mut amg = Amg {
            transfers,
            coarse,
            coarse_smoother,
            fine_smoother: Vec::new(),
            coarsest,
            work,
            sweeps: opts.sweeps.max(1),
            operator_complexity: nnz_total as f64 / nnz0 as f64,
        };
        amg.refresh_fine(fine);
        amg
    }

    /// Number of levels.
    pub fn n_levels(&self) -> usize {
        self.transfers.len() + 1
    }

    /// Stored entries of all levels over those of the finest.
    pub fn operator_complexity(&self) -> f64 {
        self.operator_complexity
    }

    /// Recomputes the finest-level smoother from the current fine values
    /// (the coarse levels are kept as they are).
    pub fn refresh_fine(&mut self, fine: &FineOperator) {
        self.fine_smoother = jacobi_weights_fine(fine);
    }

    /// `z = M⁻¹ r`: one V-cycle from a zero initial guess.
    pub fn apply(&mut self, fine: &FineOperator, r: &[f64], z: &mut [f64]) {
        let n_transfers = self.transfers.len();
        let sweeps = self.sweeps;
        self.work[0].b.copy_from_slice(r);
        for k in 0..n_transfers {
            let op: &dyn LinOp = if k == 0 { fine } else { &self.coarse[k - 1] };
            let s: &[f64] = if k == 0 {
                &self.fine_smoother
            } else {
                &self.coarse_smoother[k - 1]
            };
            let (lo, hi) = self.work.split_at_mut(k + 1);
            let w = &mut lo[k];
            scaled_copy(s, &w.b, &mut w.x);
            for _ in 1..sweeps {
                op.residual(&w.b, &w.x, &mut w.t);
                add_scaled(s, &w.t, &mut w.x);
            }
            op.residual(&w.b, &w.x, &mut w.t);
            self.transfers[k].r.mul(&w.t, &mut hi[0].b);
        }
        // Coarsest level.
        {
            let k = n_transfers;
            let w = &mut self.work[k];
            match &self.coarsest {
                Coarsest::Dense { rows, l, inv_pivot } => {
                    dense_solve(rows, l, inv_pivot, &w.b, &mut w.x);
                }
                Coarsest::Sweeps => {
                    let op: &dyn LinOp = if k == 0 { fine } else { &self.coarse[k - 1] };
                    let s: &[f64] = if k == 0 {
                        &self.fine_smoother
                    } else {
                        &self.coarse_smoother[k - 1]
                    };
                    scaled_copy(s, &w.b, &mut w.x);
                    for _ in 1..COARSE_SWEEPS {
                        op.residual(&w.b, &w.x, &mut w.t);
                        add_scaled(s, &w.t, &mut w.x);
                    }
                }
            }
        }
        for k in (0..n_transfers).rev() {
            let op: &dyn LinOp = if k == 0 { fine } else { &self.coarse[k - 1] };
            let s: &[f64] = if k == 0 {
                &self.fine_smoother
            } else {
                &self.coarse_smoother[k - 1]
            };
            let (lo, hi) = self.work.split_at_mut(k + 1);
            let w = &mut lo[k];
            self.transfers[k].p.mul_add(&hi[0].x, &mut w.x);
            for _ in 0..sweeps {
                op.residual(&w.b, &w.x, &mut w.t);
                add_scaled(s, &w.t, &mut w.x);
            }
        }
        z.copy_from_slice(&self.work[0].x);
    }

    /// Bytes held by the hierarchy.
    pub fn heap_bytes(&self) -> usize {
        let t: usize = self
            .transfers
            .iter()
            .map(|t| t.p.heap_bytes() + t.r.heap_bytes())
            .sum();
        let c: usize = self.coarse.iter().map(Csr::heap_bytes).sum();
        let w: usize = self.work.iter().map(|w| 24 * w.x.capacity()).sum();
        let d = match &self.coarsest {
            Coarsest::Dense { l, .. } => 8 * l.capacity(),
            Coarsest::Sweeps => 0,
        };
        t + c + w + d
    }
}

/// `x = s ⊙ b`.
fn scaled_copy(s: &[f64], b: &[f64], x: &mut [f64]) {
    x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
        let o = c * CHUNK;
        for (k, xi) in xs.iter_mut().enumerate() {
            *xi = s[o + k] * b[o + k];
        }
    });
}

/// `x += s ⊙ t`.
fn add_scaled(s: &[f64], t: &[f64], x: &mut [f64]) {
    x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
        let o = c * CHUNK;
        for (k, xi) in xs.iter_mut().enumerate() {
            *xi += s[o + k] * t[o + k];
        }
    });
}

/// Damped-Jacobi weights `ω/aᵢᵢ`, `ω = 4/(3ρ)` with `ρ` the Gershgorin
/// bound `maxᵢ Σⱼ|aᵢⱼ|/aᵢᵢ` of `ρ(D⁻¹A)`; zero on rows without a positive
/// diagonal.
fn jacobi_weights_csr(a: &Csr) -> Vec<f64> {
    let d = a.diagonal();
    let rho = (0..a.n_rows)
        .into_par_iter()
        .map(|i| {
            if d[i] <= 0.0 {
                return 0.0;
            }
            let (_, v) = a.row(i);
            v.iter().map(|x| x.abs()).sum::<f64>() / d[i]
        })
        .reduce(|| 0.0, f64::max);
    let omega = if rho > 0.0 { 4.0 / (3.0 * rho) } else { 0.0 };
    d.iter()
        .map(|&x| if x > 0.0 { omega / x } else { 0.0 })
        .collect()
}

/// [`jacobi_weights_csr`] for the fine operator (identity rows get 0).
fn jacobi_weights_fine(f: &FineOperator) -> Vec<f64> {
    let n = f.diag.len();
    let rho = (0..n)
        .into_par_iter()
        .map(|i| {
            if !f.unknown[i] {
                return 0.0;
            }
            let s: f64 = f.range(i).map(|h| f.off[h].abs()).sum();
            (f.diag[i] + s) / f.diag[i]
        })
        .reduce(|| 0.0, f64::max);
    let omega = if rho > 0.0 { 4.0 / (3.0 * rho) } else { 0.0 };
    (0..n)
        .map(|i| if f.unknown[i] { omega / f.diag[i] } else { 0.0 })
        .collect()
}

/// Whether the off-diagonal `a` between rows with diagonals `di`, `dj` is a
/// strong coupling.
#[inline]
fn is_strong(a: f64, di: f64, dj: f64, theta: f64) -> bool {
    a.abs() >= theta * (di * dj).abs().sqrt() && a != 0.0
}

const FREE: u32 = u32::MAX;

/// Greedy three-pass aggregation (Vaněk et al. 1996). Rows without a
/// positive diagonal are not aggregated (label [`u32::MAX`]).
fn aggregate(a: &Csr, d: &[f64], theta: f64) -> (Vec<u32>, usize) {
    let n = a.n_rows;
    let mut agg = vec![FREE; n];
    let mut n_agg = 0u32;
    let strong = |i: usize| {
        let (c, v) = a.row(i);
        c.iter().zip(v).filter_map(move |(&j, &x)| {
            let j = j as usize;
            (j != i && d[j] > 0.0 && is_strong(x, d[i], d[j], theta)).then_some(j)
        })
    };
    // Pass 1: roots with an entirely free strong neighbourhood.
    for i in 0..n {
        if d[i] <= 0.0 || agg[i] != FREE {
            continue;
        }
        if strong(i).all(|j| agg[j] == FREE) {
            agg[i] = n_agg;
            for j in strong(i) {
                agg[j] = n_agg;
            }
            n_agg += 1;
        }
    }
    // Pass 2: join the aggregate of the strongest pass-1 neighbour.
    let pass1 = agg.clone();
    for i in 0..n {
        if d[i] <= 0.0 || agg[i] != FREE {
            continue;
        }
        let (c, v) = a.row(i);
        let mut best: Option<(f64, u32)> = None;
        for (&j, &x) in c.iter().zip(v) {
            let j = j as usize;
            if j == i || d[j] <= 0.0 || pass1[j] == FREE || !is_strong(x, d[i], d[j], theta) {
                continue;
            }
            let s = x.abs() / (d[i] * d[j]).sqrt();
            if best.is_none_or(|(b, _)| s > b) {
                best = Some((s, pass1[j]));
            }
        }
        if let Some((_, g)) = best {
            agg[i] = g;
        }
    }
    // Pass 3: the rest with their free strong neighbours.
    for i in 0..n {
        if d[i] <= 0.0 || agg[i] != FREE {
            continue;
        }
        agg[i] = n_agg;
        for j in strong(i).collect::<Vec<_>>() {
            if agg[j] == FREE {
                agg[j] = n_agg;
            }
        }
        n_agg += 1;
    }
    (agg, n_agg as usize)
}

/// The aggregate indicator `P₀` (`n × n_agg`).
fn tentative_prolongator(agg: &[u32], n_agg: usize) -> Csr {
    let mut ptr = Vec::with_capacity(agg.len() + 1);
    let mut col = Vec::with_capacity(agg.len());
    ptr.push(0);
    for &g in agg {
        if g != FREE {
            col.push(g);
        }
        ptr.push(col.len());
    }
    let val = vec![1.0; col.len()];
    Csr {
        n_rows: agg.len(),
        n_cols: n_agg,
        ptr,
        col,
        val,
    }
}

/// `P = (I − ω D_F⁻¹ A_F) P₀` (see the module documentation).
fn smoothed_prolongator(a: &Csr, d: &[f64], agg: &[u32], n_agg: usize, theta: f64) -> Csr {
    let n = a.n_rows;
    // Filtered diagonal and Gershgorin bound of D_F⁻¹ A_F.
    let df: Vec<f64> = (0..n)
        .into_par_iter()
        .map(|i| {
            if d[i] <= 0.0 {
                return 0.0;
            }
            let (c, v) = a.row(i);
            let mut dfi = d[i];
            for (&j, &x) in c.iter().zip(v) {
                let j = j as usize;
                if j != i && !(d[j] > 0.0 && is_strong(x, d[i], d[j], theta)) {
                    dfi += x;
                }
            }
            if dfi > 0.0 { dfi } else { d[i] }
        })
        .collect();
    let rho = (0..n)
        .into_par_iter()
        .map(|i| {
            if d[i] <= 0.0 {
                return 0.0;
            }
            let (c, v) = a.row(i);
            let mut s = df[i];
            for (&j, &x) in c.iter().zip(v) {
                let j = j as usize;
                if j != i && d[j] > 0.0 && is_strong(x, d[i], d[j], theta) {
                    s += x.abs();
                }
            }
            s / df[i]
        })
        .reduce(|| 0.0, f64::max);
    let omega = if rho > 0.0 { 4.0 / (3.0 * rho) } else { 0.0 };
    let rows: Vec<Vec<(u32, f64)>> = (0..n)
        .into_par_iter()
        .map(|i| {
            let mut out: Vec<(u32, f64)> = Vec::new();
            if agg[i] == FREE {
                return out;
            }
            out.push((agg[i], 1.0 - omega));
            let (c, v) = a.row(i);
            let w = omega / df[i];
            for (&j, &x) in c.iter().zip(v) {
                let j = j as usize;
                if j == i || agg[j] == FREE || !is_strong(x, d[i], d[j], theta) {
                    continue;
                }
                let g = agg[j];
                match out.iter_mut().find(|e| e.0 == g) {
                    Some(e) => e.1 -= w * x,
                    None => out.push((g, -w * x)),
                }
            }
            out.retain(|e| e.1 != 0.0);
            out
        })
        .collect();
    let nnz: usize = rows.iter().map(Vec::len).sum();
    let mut ptr = Vec::with_capacity(n + 1);
    let mut col = Vec::with_capacity(nnz);
    let mut val = Vec::with_capacity(nnz);
    ptr.push(0);
    for r in rows {
        for (c, v) in r {
            col.push(c);
            val.push(v);
        }
        ptr.push(col.len());
    }
    Csr {
        n_rows: n,
        n_cols: n_agg,
        ptr,
        col,
        val,
    }
}

/// Factorises the present rows of the coarsest level, or falls back to
/// Jacobi sweeps when there are too many.
fn build_coarsest(a: &Csr) -> Coarsest {
    let d = a.diagonal();
    let rows: Vec<usize> = (0..a.n_rows).filter(|&i| d[i] > 0.0).collect();
    let m = rows.len();
    if m > DENSE_LIMIT {
        return Coarsest::Sweeps;
    }
    let mut index = vec![usize::MAX; a.n_rows];
    for (k, &i) in rows.iter().enumerate() {
        index[i] = k;
    }
    let mut l = vec![0.0; m * m];
    for (k, &i) in rows.iter().enumerate() {
        let (c, v) = a.row(i);
        for (&j, &x) in c.iter().zip(v) {
            let kj = index[j as usize];
            if kj != usize::MAX {
                l[k * m + kj] += x;
            }
        }
    }
    // In-place Cholesky (lower triangle), row-major.
    let scale = d.iter().copied().fold(0.0, f64::max);
    let mut inv_pivot = vec![0.0; m];
    for j in 0..m {
        let mut s = l[j * m + j];
        for k in 0..j {
            s -= l[j * m + k] * l[j * m + k];
        }
        if s <= 1e-14 * scale {
            // Singular direction: decouple it.
            inv_pivot[j] = 0.0;
            for i in j..m {
                l[i * m + j] = 0.0;
            }
            continue;
        }
        let piv = s.sqrt();
        l[j * m + j] = piv;
        inv_pivot[j] = 1.0 / piv;
        for i in (j + 1)..m {
            let mut s = l[i * m + j];
            for k in 0..j {
                s -= l[i * m + k] * l[j * m + k];
            }
            l[i * m + j] = s / piv;
        }
    }
    // Clear the upper triangle for clarity.
    for i in 0..m {
        for j in (i + 1)..m {
            l[i * m + j] = 0.0;
        }
    }
    Coarsest::Dense { rows, l, inv_pivot }
}

/// Solves `L Lᵀ x = b` on the present rows; other rows get 0.
fn dense_solve(rows: &[usize], l: &[f64], inv_pivot: &[f64], b: &[f64], x: &mut [f64]) {
    let m = rows.len();
    x.iter_mut().for_each(|v| *v = 0.0);
    let mut y: Vec<f64> = rows.iter().map(|&i| b[i]).collect();
    for i in 0..m {
        let mut s = y[i];
        for k in 0..i {
            s -= l[i * m + k] * y[k];
        }
        y[i] = s * inv_pivot[i];
    }
    for i in (0..m).rev() {
        let mut s = y[i];
        for k in (i + 1)..m {
            s -= l[k * m + i] * y[k];
        }
        y[i] = s * inv_pivot[i];
    }
    for (k, &i) in rows.iter().enumerate() {
        x[i] = y[k];
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::unit_hash;

    /// A 2-D grid Laplacian with random bond conductances and a Dirichlet
    /// column on the left (its bonds add to the diagonal only).
    #[allow(clippy::needless_range_loop)]
    fn grid(m: usize) -> FineOperator {
        let n = m * m;
        let mut offsets = vec![0u32];
        let (mut nbr, mut thr, mut off) = (Vec::new(), Vec::new(), Vec::new());
        let mut diag = vec![0.0; n];
        let bond = |a: usize, b: usize| {
            let (lo, hi) = (a.min(b) as u64, a.max(b) as u64);
            10f64.powf(3.0 * unit_hash(1, lo, hi))
        };
        for i in 0..n {
            let (x, y) = (i % m, i / m);
            let mut nb = Vec::new();
            if x > 0 {
                nb.push(i - 1);
            }
            if x + 1 < m {
                nb.push(i + 1);
            }
            if y > 0 {
                nb.push(i - m);
            }
            if y + 1 < m {
                nb.push(i + m);
            }
            for j in nb {
                let g = bond(i, j);
                nbr.push(j as u32);
                thr.push(0);
                off.push(-g);
                diag[i] += g;
            }
            if x == 0 {
                diag[i] += bond(i, n + i);
            }
            offsets.push(nbr.len() as u32);
        }
        FineOperator {
            offsets,
            nbr,
            thr,
            diag,
            off,
            unknown: vec![true; n],
        }
    }

    #[test]
    fn v_cycle_is_a_symmetric_positive_definite_operator() {
        // CG requires a symmetric positive definite preconditioner
        // (Hestenes & Stiefel 1952); the V-cycle with equal pre- and
        // post-smoothing by Jacobi and a Galerkin coarse operator is one
        // (analytic property; checked here as uᵀM⁻¹v = vᵀM⁻¹u, uᵀM⁻¹u > 0).
        let f = grid(30);
        let n = f.diag.len();
        for smooth in [true, false] {
            let opts = AmgOptions {
                max_coarse: 10,
                smooth_prolongator: smooth,
                ..AmgOptions::default()
            };
            let mut amg = Amg::build(&f, &opts);
            assert!(amg.n_levels() >= 3);
            let u: Vec<f64> = (0..n).map(|i| unit_hash(2, 0, i as u64) - 0.5).collect();
            let v: Vec<f64> = (0..n).map(|i| unit_hash(3, 0, i as u64) - 0.5).collect();
            let (mut mu, mut mv) = (vec![0.0; n], vec![0.0; n]);
            amg.apply(&f, &u, &mut mu);
            amg.apply(&f, &v, &mut mv);
            let a = super::super::sparse::dot(&v, &mu);
            let b = super::super::sparse::dot(&u, &mv);
            assert!((a - b).abs() <= 1e-10 * a.abs().max(b.abs()), "{a} vs {b}");
            assert!(super::super::sparse::dot(&u, &mu) > 0.0);
        }
    }
}
