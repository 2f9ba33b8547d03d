//! Algebraic multigrid (AMG), used as a preconditioner of conjugate
//! gradients.
//!
//! Three ways to build the hierarchy ([`Method`]):
//! - **classical** (the default): Ruge–Stüben C/F splitting with direct
//!   interpolation (Ruge & Stüben 1987, "Algebraic multigrid", in Multigrid
//!   Methods, SIAM Frontiers in Applied Mathematics 3:73–130; Stüben 2001,
//!   "A review of algebraic multigrid", J. Comput. Appl. Math.
//!   128:281–309). Pressure matrices of pore networks are M-matrices with
//!   conductances spread over orders of magnitude; interpolation weighted
//!   by the couplings themselves keeps the convergence nearly independent
//!   of that spread, and it measured fastest (see the solver benchmark);
//! - **smoothed aggregation** (Vaněk, Mandel & Brezina 1996, "Algebraic
//!   multigrid by smoothed aggregation for second and fourth order elliptic
//!   problems", Computing 56:179–196);
//! - **plain aggregation**: the tentative prolongator of the former,
//!   unsmoothed.
//!
//! Aggregation on one level with matrix `A` (diagonal `D`):
//! 1. strong couplings `|aᵢⱼ| ≥ θₗ √(aᵢᵢ aⱼⱼ)`, `θₗ = θ/2ˡ` on level `l`
//!    (θ = [`AmgOptions::strength_threshold`]);
//! 2. greedy aggregation in three passes (Vaněk et al. 1996): roots whose
//!    strong neighbourhood is still free form aggregates with it; left-over
//!    nodes join the aggregate of their strongest aggregated neighbour; the
//!    rest form aggregates with their free strong neighbours. Nodes with no
//!    strong coupling and a dominant diagonal stay out. The passes run in
//!    index order, so the aggregates are deterministic;
//! 3. tentative prolongator `P₀` = aggregate indicator (the constant vector
//!    spans the near-null space of a graph Laplacian);
//! 4. smoothed aggregation only: `P = (I − ω D_F⁻¹ A_F) P₀` with the
//!    filtered matrix `A_F` (weak couplings dropped and added to the
//!    diagonal, which keeps row sums) and `ω = 4/(3ρ)`, `ρ` the Gershgorin
//!    bound of `ρ(D_F⁻¹ A_F)`.
//!
//! Every method then forms the Galerkin coarse matrix `A_c = Pᵀ A P`.
//!
//! The cycle is a V-cycle with the same number of smoothing sweeps before
//! and after the coarse correction ([`Smoother`]: damped Jacobi, or hybrid
//! Gauss–Seidel forward before and backward after) and a dense Cholesky
//! solve on the coarsest level, so it is a symmetric positive definite
//! preconditioner as CG requires.

use rayon::prelude::*;

use super::sparse::{Csr, FineOperator, LinOp, build_rows, galerkin};
use crate::numeric::CHUNK;

/// Options of the algebraic multigrid preconditioner.
#[derive(Clone, Debug, PartialEq)]
pub struct AmgOptions {
    /// Strength threshold θ of the aggregation methods: `aᵢⱼ` is a strong
    /// coupling when `|aᵢⱼ| ≥ θ √(aᵢᵢ aⱼⱼ)` (halved on each coarser level).
    /// Default 0.08 (common practice for smoothed aggregation; it gave the
    /// fewest iterations among 0–0.25 on the benchmark); range `[0, 1)`.
    pub strength_threshold: f64,
    /// Coarsening and interpolation (default [`Method::Classical`]).
    pub method: Method,
    /// Strength threshold of [`Method::Classical`]: `j` strongly influences
    /// `i` when `−aᵢⱼ ≥ θ_c maxₖ(−aᵢₖ)`. Default 0.4: fastest of 0.1–0.6 on
    /// the solver benchmark (28 against 32 iterations for the usual 0.25 of
    /// Ruge & Stüben 1987 on 10⁶ pores); range `[0, 1]`.
    pub classical_threshold: f64,
    /// Smoother of every level (default [`Smoother::Jacobi`]).
    pub smoother: Smoother,
    /// Smoothing sweeps before and after each coarse correction. Default 1.
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
            method: Method::Classical,
            classical_threshold: 0.4,
            smoother: Smoother::Jacobi,
            sweeps: 1,
            max_coarse: 400,
            max_levels: 20,
        }
    }
}

/// How a level is coarsened and interpolated.
#[non_exhaustive]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Smoothed aggregation (Vaněk, Mandel & Brezina 1996).
    SmoothedAggregation,
    /// Plain aggregation: the tentative prolongator unsmoothed (cheaper
    /// setup and cycle, more iterations).
    PlainAggregation,
    /// Classical coarsening and direct interpolation (Ruge & Stüben 1987,
    /// "Algebraic multigrid", in Multigrid Methods, SIAM Frontiers in
    /// Applied Mathematics 3:73–130; Stüben 2001, J. Comput. Appl. Math.
    /// 128:281–309): C/F splitting by the first Ruge–Stüben pass, F-points
    /// interpolated from their strongly influencing C-points.
    Classical,
}

/// The smoother of the multigrid cycle. Both keep the cycle symmetric.
#[non_exhaustive]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Smoother {
    /// Damped Jacobi, `ω = 4/(3ρ)` with `ρ` the Gershgorin bound of
    /// `ρ(D⁻¹A)`.
    Jacobi,
    /// Hybrid ℓ¹ Gauss–Seidel (Baker, Falgout, Kolev & Yang 2011, "Multigrid
    /// smoothers for ultraparallel computing", SIAM J. Sci. Comput.
    /// 33:2864–2887): Gauss–Seidel inside fixed row blocks, Jacobi between
    /// them, with the couplings leaving the block added in absolute value to
    /// the diagonal, which makes it convergent for any SPD matrix. Forward
    /// before the coarse correction, backward after it.
    GaussSeidel,
}

/// Value type of the kept hierarchy (prolongators, restrictions, coarse
/// matrices).
type Stored = f32;

/// A coarsest level larger than this is smoothed instead of factorised.
const DENSE_LIMIT: usize = 2000;
/// Jacobi sweeps used on a coarsest level too large to factorise.
const COARSE_SWEEPS: usize = 20;

/// Transfer between level `k` and level `k + 1`.
#[derive(Debug)]
struct Transfer {
    /// Prolongator, `n_k × n_{k+1}`.
    p: Csr<Stored>,
    /// Restriction `Pᵀ`.
    r: Csr<Stored>,
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
    /// Matrices of levels `1..n_levels` (exactly symmetric, stored in
    /// single precision: the preconditioner needs no more, and the cycle
    /// moves a third less memory; all arithmetic is double precision).
    coarse: Vec<Csr<Stored>>,
    /// Jacobi weights `ω/aᵢᵢ` of levels `1..n_levels`.
    coarse_smoother: Vec<Vec<f64>>,
    /// Jacobi weights of level 0 (refreshed from the current fine values).
    fine_smoother: Vec<f64>,
    coarsest: Coarsest,
    work: Vec<Work>,
    sweeps: usize,
    smoother: Smoother,
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
        // Coarse levels are rounded to single precision as soon as the
        // next level is built from them, to bound the peak memory.
        let mut coarse: Vec<Csr<Stored>> = Vec::new();
        let mut coarse_smoother: Vec<Vec<f64>> = Vec::new();
        let weights = |a: &Csr| match opts.smoother {
            Smoother::Jacobi => jacobi_weights_csr(a),
            Smoother::GaussSeidel => a.l1_inverse_diagonal(),
        };
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
            let p = match opts.method {
                Method::Classical => {
                    classical_prolongator(&current, &d, opts.classical_threshold.clamp(0.0, 1.0))
                }
                Method::SmoothedAggregation | Method::PlainAggregation => {
                    // θ is halved on each coarser level (Vaněk et al. 1996).
                    let theta = theta * 0.5f64.powi(level as i32);
                    let (agg, n_agg) = aggregate(&current, &d, theta);
                    if opts.method == Method::SmoothedAggregation {
                        smoothed_prolongator(&current, &d, &agg, n_agg, theta)
                    } else {
                        tentative_prolongator(&agg, n_agg)
                    }
                }
            };
            if p.n_cols == 0 || p.n_cols as f64 > 0.9 * n_present as f64 {
                break;
            }
            let (ac, r) = galerkin(&current, &p);
            nnz_total += ac.nnz();
            sizes.push(ac.n_rows);
            transfers.push(Transfer {
                p: p.convert(),
                r: r.convert(),
            });
            drop((p, r));
            let prev = std::mem::replace(&mut current, ac);
            if level > 0 {
                coarse_smoother.push(weights(&prev));
                coarse.push(prev.convert());
            }
            drop(prev);
            level += 1;
        }
        // `current` is the coarsest level.
        let coarsest = build_coarsest(&current);
        if !transfers.is_empty() {
            coarse_smoother.push(weights(&current));
            coarse.push(current.convert());
        }
        drop(current);
        let work = sizes.iter().map(|&n| Work::new(n)).collect();
        let mut amg = Amg {
            transfers,
            coarse,
            coarse_smoother,
            fine_smoother: Vec::new(),
            coarsest,
            work,
            sweeps: opts.sweeps.max(1),
            smoother: opts.smoother,
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
        self.fine_smoother = match self.smoother {
            Smoother::Jacobi => jacobi_weights_fine(fine),
            Smoother::GaussSeidel => fine.l1_inverse_diagonal(),
        };
    }

    /// `z = M⁻¹ r`: one V-cycle from a zero initial guess.
    pub fn apply(&mut self, fine: &FineOperator, r: &[f64], z: &mut [f64]) {
        let n_transfers = self.transfers.len();
        let (sweeps, kind) = (self.sweeps, self.smoother);
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
            smooth(op, kind, s, sweeps, true, w);
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
                    smooth(op, kind, s, COARSE_SWEEPS, true, w);
                    smooth(op, kind, s, COARSE_SWEEPS, false, w);
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
            smooth(op, kind, s, sweeps, false, w);
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
        let c: usize = self.coarse.iter().map(Csr::<Stored>::heap_bytes).sum();
        let w: usize = self.work.iter().map(|w| 24 * w.x.capacity()).sum();
        let d = match &self.coarsest {
            Coarsest::Dense { l, .. } => 8 * l.capacity(),
            Coarsest::Sweeps => 0,
        };
        t + c + w + d
    }
}

/// Smoothing of `A x = b` on one level: before the coarse correction
/// (`pre`, from a zero guess) or after it. Jacobi: `sweeps` damped sweeps.
/// Gauss–Seidel: forward sweeps before, backward after, so that the
/// post-smoother is the adjoint of the pre-smoother.
fn smooth(op: &dyn LinOp, kind: Smoother, s: &[f64], sweeps: usize, pre: bool, w: &mut Work) {
    match kind {
        Smoother::Jacobi => {
            let mut done = 0;
            if pre {
                scaled_copy(s, &w.b, &mut w.x);
                done = 1;
            }
            for _ in done..sweeps {
                op.jacobi_step(&w.b, &w.x, s, &mut w.t);
                std::mem::swap(&mut w.x, &mut w.t);
            }
        }
        Smoother::GaussSeidel => {
            for k in 0..sweeps {
                op.gs_sweep(&w.b, &mut w.x, &mut w.t, s, pre, pre && k == 0);
            }
        }
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
    // Nodes without strong couplings are left out (the smoother handles
    // them; Vaněk et al. 1996).
    let isolated: Vec<bool> = (0..n)
        .map(|i| d[i] > 0.0 && strong(i).next().is_none())
        .collect();
    // Pass 1: roots with an entirely free strong neighbourhood.
    for i in 0..n {
        if d[i] <= 0.0 || agg[i] != FREE || isolated[i] {
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
        if d[i] <= 0.0 || agg[i] != FREE || isolated[i] {
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
        if d[i] <= 0.0 || agg[i] != FREE || isolated[i] {
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
    build_rows(
        n,
        n_agg,
        Vec::new,
        |out: &mut Vec<(u32, f64)>, i, col, val| {
            out.clear();
            if agg[i] == FREE {
                return;
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
            for &(c, v) in out.iter() {
                if v != 0.0 {
                    col.push(c);
                    val.push(v);
                }
            }
        },
    )
}

/// Classical C/F splitting (first Ruge–Stüben pass) and direct
/// interpolation; returns `P` (`n × n_C`, identity on C-points).
///
/// `j` strongly influences `i` when `−aᵢⱼ ≥ θ maxₖ(−aᵢₖ)` (negative
/// couplings only). The splitting repeatedly makes the undecided point
/// with the largest measure `λ` a C-point and the undecided points it
/// strongly influences F-points. `λ` starts as the number of points a point
/// strongly influences; when `i` becomes an F-point, every undecided point
/// that strongly influences `i` gains 1, and when `j` becomes a C-point,
/// every undecided point influencing `j` loses 1 (Ruge & Stüben 1987). Ties
/// go to the most recently bucketed point, which is deterministic. Points
/// that influence and depend on nothing strongly are F-points with no
/// interpolation (the smoother resolves them).
///
/// Direct interpolation (Stüben 2001), with
/// positive off-diagonals added to the diagonal:
///
/// $$P_{ij} = -\alpha_i \frac{a_{ij}}{a_{ii} + \sum_k a_{ik}^+},\qquad
///   \alpha_i = \frac{\sum_{k \ne i} a_{ik}^-}{\sum_{k \in C_i} a_{ik}^-},$$
///
/// `Cᵢ` the strongly influencing C-points of F-point `i`, `a⁻ = min(a, 0)`,
/// `a⁺ = max(a, 0)`.
fn classical_prolongator(a: &Csr, d: &[f64], theta: f64) -> Csr {
    let n = a.n_rows;
    // Strong dependencies S_i (row i: the j that strongly influence i).
    let s = build_rows(
        n,
        n,
        || (),
        |_, i, col, _val| {
            if d[i] <= 0.0 {
                return;
            }
            let (c, v) = a.row(i);
            let mut m = 0.0f64;
            for (&j, &x) in c.iter().zip(v) {
                if j as usize != i && d[j as usize] > 0.0 {
                    m = m.max(-x);
                }
            }
            if m <= 0.0 {
                return;
            }
            // Rows hold each column once (`FineOperator::to_csr` merges
            // parallel conduits, `galerkin` builds merged rows).
            for (&j, &x) in c.iter().zip(v) {
                if j as usize != i && d[j as usize] > 0.0 && -x >= theta * m {
                    col.push(j);
                }
            }
        },
    );
    // Transpose pattern S^T (row j: the i that j strongly influences).
    let st = {
        let mut counts = vec![0usize; n + 1];
        for &j in &s.col {
            counts[j as usize + 1] += 1;
        }
        for j in 0..n {
            counts[j + 1] += counts[j];
        }
        let mut cursor = counts[..n].to_vec();
        let mut col = vec![0u32; s.col.len()];
        for i in 0..n {
            for &j in &s.col[s.ptr[i]..s.ptr[i + 1]] {
                col[cursor[j as usize]] = i as u32;
                cursor[j as usize] += 1;
            }
        }
        (counts, col)
    };
    let s_of = |i: usize| &s.col[s.ptr[i]..s.ptr[i + 1]];
    let st_of = |j: usize| &st.1[st.0[j]..st.0[j + 1]];

    const U: u8 = 0;
    const C: u8 = 1;
    const F: u8 = 2;
    let mut state = vec![U; n];
    let mut lam = vec![0usize; n];
    let mut max_lam = 0;
    for i in 0..n {
        if d[i] <= 0.0 || (s_of(i).is_empty() && st_of(i).is_empty()) {
            state[i] = F;
        } else {
            lam[i] = st_of(i).len();
            max_lam = max_lam.max(lam[i]);
        }
    }
    // Bucket queue with doubly linked lists; λ only grows by F updates, at
    // most once per strong dependency, so 2·max + row length bounds it.
    let max_row = (0..n).map(|i| s_of(i).len()).max().unwrap_or(0);
    let n_buckets = 2 * max_lam + max_row + 2;
    const NIL: usize = usize::MAX;
    let mut head = vec![NIL; n_buckets];
    let mut next = vec![NIL; n];
    let mut prev = vec![NIL; n];
    let insert =
        |i: usize, lam: &[usize], head: &mut [usize], next: &mut [usize], prev: &mut [usize]| {
            let b = lam[i];
            next[i] = head[b];
            prev[i] = NIL;
            if head[b] != NIL {
                prev[head[b]] = i;
            }
            head[b] = i;
        };
    let remove =
        |i: usize, lam: &[usize], head: &mut [usize], next: &mut [usize], prev: &mut [usize]| {
            let b = lam[i];
            if prev[i] != NIL {
                next[prev[i]] = next[i];
            } else {
                head[b] = next[i];
            }
            if next[i] != NIL {
                prev[next[i]] = prev[i];
            }
        };
    for (i, &st) in state.iter().enumerate() {
        if st == U {
            insert(i, &lam, &mut head, &mut next, &mut prev);
        }
    }
    let mut top = n_buckets - 1;
    loop {
        while top > 0 && head[top] == NIL {
            top -= 1;
        }
        let j = head[top];
        if j == NIL {
            break;
        }
        remove(j, &lam, &mut head, &mut next, &mut prev);
        state[j] = C;
        for &i in st_of(j) {
            let i = i as usize;
            if state[i] != U {
                continue;
            }
            remove(i, &lam, &mut head, &mut next, &mut prev);
            state[i] = F;
            for &k in s_of(i) {
                let k = k as usize;
                if state[k] == U && lam[k] + 1 < n_buckets {
                    remove(k, &lam, &mut head, &mut next, &mut prev);
                    lam[k] += 1;
                    insert(k, &lam, &mut head, &mut next, &mut prev);
                    top = top.max(lam[k]);
                }
            }
        }
        for &k in s_of(j) {
            let k = k as usize;
            if state[k] == U && lam[k] > 0 {
                remove(k, &lam, &mut head, &mut next, &mut prev);
                lam[k] -= 1;
                insert(k, &lam, &mut head, &mut next, &mut prev);
            }
        }
    }
    // Coarse numbering.
    let mut cidx = vec![u32::MAX; n];
    let mut n_c = 0u32;
    for i in 0..n {
        if state[i] == C {
            cidx[i] = n_c;
            n_c += 1;
        }
    }
    // Interpolation rows.
    build_rows(
        n,
        n_c as usize,
        || (),
        |_, i, col, val| {
            if d[i] <= 0.0 {
                return;
            }
            if state[i] == C {
                col.push(cidx[i]);
                val.push(1.0);
                return;
            }
            let (c, v) = a.row(i);
            // The strong dependencies of row i, as in `s` (each column once).
            let mut m = 0.0f64;
            for (&j, &x) in c.iter().zip(v) {
                if j as usize != i && d[j as usize] > 0.0 {
                    m = m.max(-x);
                }
            }
            let strong_c = |j: usize, x: f64| {
                j != i && state[j] == C && d[j] > 0.0 && m > 0.0 && -x >= theta * m
            };
            let (mut neg_all, mut neg_c, mut pos) = (0.0, 0.0, 0.0);
            for (&j, &x) in c.iter().zip(v) {
                let j = j as usize;
                if j == i {
                    continue;
                }
                if x < 0.0 {
                    neg_all += x;
                    if strong_c(j, x) {
                        neg_c += x;
                    }
                } else {
                    pos += x;
                }
            }
            if neg_c >= 0.0 {
                return;
            }
            let alpha = neg_all / neg_c;
            let dd = d[i] + pos;
            for (&j, &x) in c.iter().zip(v) {
                let j = j as usize;
                if x < 0.0 && strong_c(j, x) {
                    col.push(cidx[j]);
                    val.push(-alpha * x / dd);
                }
            }
        },
    )
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
    // Lᵀ x = y by columns of Lᵀ, i.e. contiguous rows of L.
    for i in (0..m).rev() {
        y[i] *= inv_pivot[i];
        let yi = y[i];
        let row = &l[i * m..i * m + i];
        for (yk, &lik) in y[..i].iter_mut().zip(row) {
            *yk -= lik * yi;
        }
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
        let methods = [
            Method::Classical,
            Method::SmoothedAggregation,
            Method::PlainAggregation,
        ];
        for (method, smoother) in methods
            .into_iter()
            .flat_map(|m| [(m, Smoother::Jacobi), (m, Smoother::GaussSeidel)])
        {
            let opts = AmgOptions {
                max_coarse: 10,
                method,
                smoother,
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
