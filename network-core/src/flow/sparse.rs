//! Sparse matrices and vector kernels of the pressure solver.
//!
//! Every floating-point reduction uses a grouping fixed by
//! [`crate::numeric::CHUNK`] (partial sums of fixed chunks, added in chunk
//! order), and every row of a matrix product is computed by one thread in a
//! fixed order, so the results do not depend on the number of rayon threads.

use rayon::prelude::*;

use crate::numeric::CHUNK;

/// `Σ aᵢ bᵢ` with thread-count-independent grouping.
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    debug_assert_eq!(a.len(), b.len());
    let partial: Vec<f64> = a
        .par_chunks(CHUNK)
        .zip(b.par_chunks(CHUNK))
        .map(|(x, y)| {
            let mut s = 0.0;
            for (p, q) in x.iter().zip(y) {
                s += p * q;
            }
            s
        })
        .collect();
    partial.iter().sum()
}

/// A stored matrix value: `f64` during setup, `f32` for the kept
/// multigrid hierarchy (half the memory traffic; all arithmetic is `f64`).
pub(crate) trait Value: Copy + Default + Send + Sync + Into<f64> + 'static {
    /// Rounds an `f64` to this type.
    fn from_f64(x: f64) -> Self;
}

impl Value for f64 {
    #[inline]
    fn from_f64(x: f64) -> Self {
        x
    }
}

impl Value for f32 {
    #[inline]
    fn from_f64(x: f64) -> Self {
        x as f32
    }
}

/// A square linear operator `y = A x`.
pub(crate) trait LinOp: Sync {
    /// `y = A x`.
    fn apply(&self, x: &[f64], y: &mut [f64]);
    /// `r = b − A x`.
    fn residual(&self, b: &[f64], x: &[f64], r: &mut [f64]);
    /// One damped Jacobi step into `out`: `outᵢ = xᵢ + sᵢ (bᵢ − (A x)ᵢ)`.
    fn jacobi_step(&self, b: &[f64], x: &[f64], s: &[f64], out: &mut [f64]);
    /// Inverse ℓ¹ diagonal of the hybrid Gauss–Seidel sweep,
    /// `1/(aᵢᵢ + Σ_{j outside i's block} |aᵢⱼ|)` (0 on rows without a
    /// positive diagonal); blocks are the fixed row chunks of [`CHUNK`].
    fn l1_inverse_diagonal(&self) -> Vec<f64>;
    /// One hybrid Gauss–Seidel sweep `xᵢ += (bᵢ − (A x)ᵢ) · w1ᵢ`: rows
    /// of a block in order (`forward`) or reverse, using the newest values
    /// inside the block and those from before the sweep elsewhere (copied to
    /// `x_old`). Blocks run in parallel; the result does not depend on the
    /// thread count.
    /// With `from_zero` the sweep starts from `x = 0` whatever `x` holds
    /// (forward only): it then reads only the rows of the block already
    /// updated and skips the copy.
    fn gs_sweep(
        &self,
        b: &[f64],
        x: &mut [f64],
        x_old: &mut [f64],
        w1: &[f64],
        forward: bool,
        from_zero: bool,
    );
}

/// Shared body of [`LinOp::gs_sweep`]: `row(i)` gives the diagonal value
/// not stored in the slices (0 when it is), and the columns and values of
/// row `i`; `None` for rows to skip.
#[allow(clippy::too_many_arguments)]
fn hybrid_gs<'a, V: Value, R>(
    row: R,
    b: &[f64],
    x: &mut [f64],
    x_old: &mut [f64],
    w1: &[f64],
    forward: bool,
    from_zero: bool,
) where
    R: Fn(usize) -> Option<(f64, &'a [u32], &'a [V])> + Sync,
{
    if from_zero {
        x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
            let lo = c * CHUNK;
            for i in lo..lo + xs.len() {
                let mut v = 0.0;
                if w1[i] != 0.0
                    && let Some((_, cols, vals)) = row(i)
                {
                    let mut ax = 0.0;
                    for (&j, &a) in cols.iter().zip(vals) {
                        let j = j as usize;
                        if j >= lo && j < i {
                            ax += a.into() * xs[j - lo];
                        }
                    }
                    v = (b[i] - ax) * w1[i];
                }
                xs[i - lo] = v;
            }
        });
        return;
    }
    x_old.copy_from_slice(x);
    let x_old: &[f64] = x_old;
    x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
        let lo = c * CHUNK;
        let hi = lo + xs.len();
        let visit = |i: usize, xs: &mut [f64]| {
            if w1[i] == 0.0 {
                return;
            }
            let Some((d, cols, vals)) = row(i) else {
                return;
            };
            let mut ax = d * xs[i - lo];
            for (&j, &a) in cols.iter().zip(vals) {
                let j = j as usize;
                let xj = if j >= lo && j < hi {
                    xs[j - lo]
                } else {
                    x_old[j]
                };
                ax += a.into() * xj;
            }
            xs[i - lo] += (b[i] - ax) * w1[i];
        };
        if forward {
            for i in lo..hi {
                visit(i, xs);
            }
        } else {
            for i in (lo..hi).rev() {
                visit(i, xs);
            }
        }
    });
}

/// A compressed-sparse-row matrix with `u32` column indices.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Csr<V = f64> {
    /// Number of rows.
    pub n_rows: usize,
    /// Number of columns.
    pub n_cols: usize,
    /// Row `i` occupies `ptr[i]..ptr[i + 1]` of `col` and `val`.
    pub ptr: Vec<usize>,
    /// Column indices.
    pub col: Vec<u32>,
    /// Values.
    pub val: Vec<V>,
}

impl<V: Value> Csr<V> {
    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.col.len()
    }

    /// Column indices and values of row `i`.
    #[inline]
    pub fn row(&self, i: usize) -> (&[u32], &[V]) {
        let (s, e) = (self.ptr[i], self.ptr[i + 1]);
        (&self.col[s..e], &self.val[s..e])
    }

    /// The diagonal (zero where no diagonal entry is stored); duplicate
    /// diagonal entries are added.
    pub fn diagonal(&self) -> Vec<f64> {
        (0..self.n_rows)
            .into_par_iter()
            .map(|i| {
                let (c, v) = self.row(i);
                let mut d = 0.0;
                for (&j, &a) in c.iter().zip(v) {
                    if j as usize == i {
                        d += a.into();
                    }
                }
                d
            })
            .collect()
    }

    /// `y = A x` for a rectangular matrix (`x` has `n_cols`, `y` `n_rows`
    /// entries).
    pub fn mul(&self, x: &[f64], y: &mut [f64]) {
        debug_assert_eq!(x.len(), self.n_cols);
        debug_assert_eq!(y.len(), self.n_rows);
        y.par_chunks_mut(CHUNK).enumerate().for_each(|(c, ys)| {
            let start = c * CHUNK;
            for (k, yi) in ys.iter_mut().enumerate() {
                let (cols, vals) = self.row(start + k);
                let mut s = 0.0;
                for (&j, &a) in cols.iter().zip(vals) {
                    s += a.into() * x[j as usize];
                }
                *yi = s;
            }
        });
    }

    /// `y += A x` for a rectangular matrix.
    pub fn mul_add(&self, x: &[f64], y: &mut [f64]) {
        debug_assert_eq!(x.len(), self.n_cols);
        debug_assert_eq!(y.len(), self.n_rows);
        y.par_chunks_mut(CHUNK).enumerate().for_each(|(c, ys)| {
            let start = c * CHUNK;
            for (k, yi) in ys.iter_mut().enumerate() {
                let (cols, vals) = self.row(start + k);
                let mut s = 0.0;
                for (&j, &a) in cols.iter().zip(vals) {
                    s += a.into() * x[j as usize];
                }
                *yi += s;
            }
        });
    }

    /// The transpose, with the entries of each row in increasing column
    /// order of the original (a stable counting sort).
    pub fn transpose(&self) -> Csr<V> {
        let mut counts = vec![0usize; self.n_cols + 1];
        for &j in &self.col {
            counts[j as usize + 1] += 1;
        }
        for j in 0..self.n_cols {
            counts[j + 1] += counts[j];
        }
        let ptr = counts;
        let mut cursor = ptr[..self.n_cols].to_vec();
        let mut col = vec![0u32; self.nnz()];
        let mut val = vec![V::default(); self.nnz()];
        for i in 0..self.n_rows {
            let (c, v) = self.row(i);
            for (&j, &a) in c.iter().zip(v) {
                let slot = cursor[j as usize];
                col[slot] = i as u32;
                val[slot] = a;
                cursor[j as usize] += 1;
            }
        }
        Csr {
            n_rows: self.n_cols,
            n_cols: self.n_rows,
            ptr,
            col,
            val,
        }
    }

    /// Bytes held by the arrays.
    pub fn heap_bytes(&self) -> usize {
        8 * self.ptr.capacity()
            + 4 * self.col.capacity()
            + std::mem::size_of::<V>() * self.val.capacity()
    }

    /// The same matrix with values rounded to `W`.
    pub fn convert<W: Value>(&self) -> Csr<W> {
        Csr {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            ptr: self.ptr.clone(),
            col: self.col.clone(),
            val: self.val.iter().map(|&v| W::from_f64(v.into())).collect(),
        }
    }
}

impl<V: Value> LinOp for Csr<V> {
    fn apply(&self, x: &[f64], y: &mut [f64]) {
        self.mul(x, y);
    }

    fn residual(&self, b: &[f64], x: &[f64], r: &mut [f64]) {
        r.par_chunks_mut(CHUNK).enumerate().for_each(|(c, rs)| {
            let start = c * CHUNK;
            for (k, ri) in rs.iter_mut().enumerate() {
                let i = start + k;
                let (cols, vals) = self.row(i);
                let mut s = 0.0;
                for (&j, &a) in cols.iter().zip(vals) {
                    s += a.into() * x[j as usize];
                }
                *ri = b[i] - s;
            }
        });
    }

    fn jacobi_step(&self, b: &[f64], x: &[f64], s: &[f64], out: &mut [f64]) {
        out.par_chunks_mut(CHUNK).enumerate().for_each(|(c, os)| {
            let start = c * CHUNK;
            for (k, oi) in os.iter_mut().enumerate() {
                let i = start + k;
                let (cols, vals) = self.row(i);
                let mut ax = 0.0;
                for (&j, &a) in cols.iter().zip(vals) {
                    ax += a.into() * x[j as usize];
                }
                *oi = x[i] + s[i] * (b[i] - ax);
            }
        });
    }

    fn l1_inverse_diagonal(&self) -> Vec<f64> {
        (0..self.n_rows)
            .into_par_iter()
            .map(|i| {
                let block = (i / CHUNK) * CHUNK..((i / CHUNK + 1) * CHUNK);
                let (c, v) = self.row(i);
                let (mut d, mut out) = (0.0, 0.0);
                for (&j, &a) in c.iter().zip(v) {
                    let j = j as usize;
                    if j == i {
                        d += a.into();
                    } else if !block.contains(&j) {
                        out += a.into().abs();
                    }
                }
                if d > 0.0 { 1.0 / (d + out) } else { 0.0 }
            })
            .collect()
    }

    fn gs_sweep(
        &self,
        b: &[f64],
        x: &mut [f64],
        x_old: &mut [f64],
        w1: &[f64],
        forward: bool,
        from_zero: bool,
    ) {
        hybrid_gs(
            |i| {
                let (c, v) = self.row(i);
                Some((0.0, c, v))
            },
            b,
            x,
            x_old,
            w1,
            forward,
            from_zero,
        );
    }
}

/// Builds a [`Csr`] of `n_rows` rows from a row kernel: `row(scratch, i,
/// col, val)` appends the entries of row `i`. Rows are computed in parallel
/// over contiguous parts, each with its own `scratch` from `init`; every
/// row is computed by one call in a fixed order, so the result does not
/// depend on the partition or the thread count.
pub(crate) fn build_rows<S, I, R>(n_rows: usize, n_cols: usize, init: I, row: R) -> Csr
where
    I: Fn() -> S + Sync,
    R: Fn(&mut S, usize, &mut Vec<u32>, &mut Vec<f64>) + Sync,
{
    let n_parts = (4 * rayon::current_num_threads()).clamp(1, n_rows.div_ceil(256).max(1));
    let part = n_rows.div_ceil(n_parts).max(1);
    let parts: Vec<(Vec<usize>, Vec<u32>, Vec<f64>)> = (0..n_parts)
        .into_par_iter()
        .map(|p| {
            let start = (p * part).min(n_rows);
            let end = ((p + 1) * part).min(n_rows);
            let mut scratch = init();
            let mut lens = Vec::with_capacity(end - start);
            let mut col: Vec<u32> = Vec::new();
            let mut val: Vec<f64> = Vec::new();
            for i in start..end {
                let before = col.len();
                row(&mut scratch, i, &mut col, &mut val);
                lens.push(col.len() - before);
            }
            (lens, col, val)
        })
        .collect();
    let nnz: usize = parts.iter().map(|b| b.1.len()).sum();
    let mut ptr = Vec::with_capacity(n_rows + 1);
    let mut col = Vec::with_capacity(nnz);
    let mut val = Vec::with_capacity(nnz);
    ptr.push(0);
    let mut last = 0;
    for (lens, c, v) in parts {
        for l in lens {
            last += l;
            ptr.push(last);
        }
        col.extend_from_slice(&c);
        val.extend_from_slice(&v);
    }
    Csr {
        n_rows,
        n_cols,
        ptr,
        col,
        val,
    }
}

/// Sparse product `C = A B`. Each row of `C` lists its columns in order of
/// first appearance while scanning row `i` of `A` and the matching rows of
/// `B`, so the result (and every sum in it) is independent of threading.
pub(crate) fn spgemm(a: &Csr, b: &Csr) -> Csr {
    debug_assert_eq!(a.n_cols, b.n_rows);
    build_rows(
        a.n_rows,
        b.n_cols,
        || vec![u32::MAX; b.n_cols],
        |pos, i, col, val| {
            let row_start = col.len();
            let (ac, av) = a.row(i);
            for (&k, &aik) in ac.iter().zip(av) {
                let (bc, bv) = b.row(k as usize);
                for (&j, &bkj) in bc.iter().zip(bv) {
                    let p = pos[j as usize];
                    if p == u32::MAX {
                        pos[j as usize] = (col.len() - row_start) as u32;
                        col.push(j);
                        val.push(aik * bkj);
                    } else {
                        val[row_start + p as usize] += aik * bkj;
                    }
                }
            }
            for &j in &col[row_start..] {
                pos[j as usize] = u32::MAX;
            }
        },
    )
}

/// The Galerkin coarse matrix `A_c = Pᵀ A P` of a symmetric `A`, exactly
/// symmetric, with each row's columns in increasing order and each column
/// once; returns it with the restriction `R = Pᵀ`.
///
/// Only the upper triangle `J ≥ I` is computed (row `I` of `R (A P)`),
/// and the lower one is its mirror image, so that `A_c` is symmetric to the
/// bit (a preconditioner of conjugate gradients must be symmetric) at half
/// the cost of the second product. Every entry is summed in a fixed order,
/// so the result does not depend on the thread count.
pub(crate) fn galerkin(a: &Csr, p: &Csr) -> (Csr, Csr) {
    let ap = spgemm(a, p);
    let r = p.transpose();
    let n_c = p.n_cols;
    let upper = build_rows(
        n_c,
        n_c,
        || (vec![u32::MAX; n_c], Vec::<(u32, f64)>::new()),
        |(pos, row), ci, col, val| {
            row.clear();
            let (rc, rv) = r.row(ci);
            for (&i, &r_ci) in rc.iter().zip(rv) {
                let (bc, bv) = ap.row(i as usize);
                for (&j, &apv) in bc.iter().zip(bv) {
                    if (j as usize) < ci {
                        continue;
                    }
                    let q = pos[j as usize];
                    if q == u32::MAX {
                        pos[j as usize] = row.len() as u32;
                        row.push((j, r_ci * apv));
                    } else {
                        row[q as usize].1 += r_ci * apv;
                    }
                }
            }
            for e in row.iter() {
                pos[e.0 as usize] = u32::MAX;
            }
            row.sort_unstable_by_key(|e| e.0);
            for &(j, x) in row.iter() {
                col.push(j);
                val.push(x);
            }
        },
    );
    drop(ap);
    // Row K of the result: column K of the strict upper triangle (rows
    // I < K in increasing order, from the transpose), then row K of it.
    let lower = upper.transpose();
    let ac = build_rows(
        n_c,
        n_c,
        || (),
        |_, k, col, val| {
            let (lc, lv) = lower.row(k);
            for (&i, &x) in lc.iter().zip(lv) {
                if (i as usize) < k {
                    col.push(i);
                    val.push(x);
                }
            }
            let (uc, uv) = upper.row(k);
            col.extend_from_slice(uc);
            val.extend_from_slice(uv);
        },
    );
    (ac, r)
}

/// The pressure matrix of the pore graph on the network's own adjacency
/// pattern (which never changes); only the values and the set of unknowns
/// change between solves.
///
/// Row `i` of an unknown pore holds `Σⱼ gᵢⱼ` on the diagonal and `−gᵢⱼ` for
/// each conducting neighbour `j` that is also unknown (conduits to fixed
/// pressure pores go to the right-hand side). Every other row is the
/// identity, so those entries of the vectors stay zero throughout CG.
#[derive(Clone, Debug, Default)]
pub(crate) struct FineOperator {
    /// Adjacency offsets (length `n + 1`).
    pub offsets: Vec<u32>,
    /// Neighbouring pore of each half-edge.
    pub nbr: Vec<u32>,
    /// Throat of each half-edge.
    pub thr: Vec<u32>,
    /// Diagonal (1 on rows that are not unknowns).
    pub diag: Vec<f64>,
    /// Off-diagonal value of each half-edge (0 unless both ends are unknown).
    pub off: Vec<f64>,
    /// Whether each pore is an unknown of the system.
    pub unknown: Vec<bool>,
}

impl FineOperator {
    /// Half-edge range of row `i`.
    #[inline]
    pub fn range(&self, i: usize) -> std::ops::Range<usize> {
        self.offsets[i] as usize..self.offsets[i + 1] as usize
    }

    /// Copies the operator into a [`Csr`] holding the unknown rows only
    /// (diagonal first, each column once); the other rows are empty.
    pub fn to_csr(&self) -> Csr {
        let n = self.diag.len();
        let mut ptr = Vec::with_capacity(n + 1);
        let mut col = Vec::new();
        let mut val = Vec::new();
        ptr.push(0);
        for i in 0..n {
            if self.unknown[i] {
                let start = col.len();
                col.push(i as u32);
                val.push(self.diag[i]);
                for k in self.range(i) {
                    if self.off[k] != 0.0 {
                        // Parallel conduits to one neighbour are merged.
                        match col[start..].iter().position(|&c| c == self.nbr[k]) {
                            Some(q) => val[start + q] += self.off[k],
                            None => {
                                col.push(self.nbr[k]);
                                val.push(self.off[k]);
                            }
                        }
                    }
                }
            }
            ptr.push(col.len());
        }
        Csr {
            n_rows: n,
            n_cols: n,
            ptr,
            col,
            val,
        }
    }
}

impl LinOp for FineOperator {
    fn apply(&self, x: &[f64], y: &mut [f64]) {
        y.par_chunks_mut(CHUNK).enumerate().for_each(|(c, ys)| {
            let start = c * CHUNK;
            for (k, yi) in ys.iter_mut().enumerate() {
                let i = start + k;
                if !self.unknown[i] {
                    *yi = x[i];
                    continue;
                }
                let mut s = self.diag[i] * x[i];
                for h in self.range(i) {
                    s += self.off[h] * x[self.nbr[h] as usize];
                }
                *yi = s;
            }
        });
    }

    fn residual(&self, b: &[f64], x: &[f64], r: &mut [f64]) {
        r.par_chunks_mut(CHUNK).enumerate().for_each(|(c, rs)| {
            let start = c * CHUNK;
            for (k, ri) in rs.iter_mut().enumerate() {
                let i = start + k;
                if !self.unknown[i] {
                    *ri = b[i] - x[i];
                    continue;
                }
                let mut s = self.diag[i] * x[i];
                for h in self.range(i) {
                    s += self.off[h] * x[self.nbr[h] as usize];
                }
                *ri = b[i] - s;
            }
        });
    }

    fn jacobi_step(&self, b: &[f64], x: &[f64], s: &[f64], out: &mut [f64]) {
        out.par_chunks_mut(CHUNK).enumerate().for_each(|(c, os)| {
            let start = c * CHUNK;
            for (k, oi) in os.iter_mut().enumerate() {
                let i = start + k;
                if !self.unknown[i] {
                    *oi = x[i];
                    continue;
                }
                let mut ax = self.diag[i] * x[i];
                for h in self.range(i) {
                    ax += self.off[h] * x[self.nbr[h] as usize];
                }
                *oi = x[i] + s[i] * (b[i] - ax);
            }
        });
    }

    fn l1_inverse_diagonal(&self) -> Vec<f64> {
        (0..self.diag.len())
            .into_par_iter()
            .map(|i| {
                if !self.unknown[i] {
                    return 0.0;
                }
                let block = (i / CHUNK) * CHUNK..((i / CHUNK + 1) * CHUNK);
                let mut out = 0.0;
                for h in self.range(i) {
                    if !block.contains(&(self.nbr[h] as usize)) {
                        out += self.off[h].abs();
                    }
                }
                1.0 / (self.diag[i] + out)
            })
            .collect()
    }

    fn gs_sweep(
        &self,
        b: &[f64],
        x: &mut [f64],
        x_old: &mut [f64],
        w1: &[f64],
        forward: bool,
        from_zero: bool,
    ) {
        hybrid_gs(
            |i| {
                if !self.unknown[i] {
                    return None;
                }
                let r = self.range(i);
                Some((self.diag[i], &self.nbr[r.clone()], &self.off[r]))
            },
            b,
            x,
            x_old,
            w1,
            forward,
            from_zero,
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn small() -> Csr {
        // [[4, -1, 0], [-1, 4, -2], [0, -2, 5]]
        Csr {
            n_rows: 3,
            n_cols: 3,
            ptr: vec![0, 2, 5, 7],
            col: vec![0, 1, 0, 1, 2, 1, 2],
            val: vec![4.0, -1.0, -1.0, 4.0, -2.0, -2.0, 5.0],
        }
    }

    #[test]
    fn spgemm_and_transpose_match_dense_products() {
        // Dense matrix products computed by hand (analytic).
        let a = small();
        let p = Csr {
            n_rows: 3,
            n_cols: 2,
            ptr: vec![0, 1, 3, 4],
            col: vec![0, 0, 1, 1],
            val: vec![1.0, 0.5, 0.5, 1.0],
        };
        let ap = spgemm(&a, &p);
        let mut dense = [[0.0; 2]; 3];
        for (i, row) in dense.iter_mut().enumerate() {
            let (c, v) = ap.row(i);
            for (&j, &x) in c.iter().zip(v) {
                row[j as usize] += x;
            }
        }
        // A·P: row0 = [4 - 0.5, -0.5], row1 = [-1 + 2, 2 - 2], row2 = [-1, -1 + 5]
        assert_eq!(dense, [[3.5, -0.5], [1.0, 0.0], [-1.0, 4.0]]);
        let pt = p.transpose();
        assert_eq!(pt.n_rows, 2);
        assert_eq!(pt.row(0), (&[0u32, 1][..], &[1.0, 0.5][..]));
        assert_eq!(pt.row(1), (&[1u32, 2][..], &[0.5, 1.0][..]));
        assert_eq!(a.diagonal(), vec![4.0, 4.0, 5.0]);
    }

    #[test]
    fn galerkin_product_is_exactly_symmetric_and_equals_pt_a_p() {
        // Pᵀ A P multiplied out by hand (analytic): with
        // P = [[0.3, 0.7], [0.1, 0.9], [0, 1/3]],
        // A P = [[1.1, 1.9], [0.1, 2.9 − 2/3], [−0.2, −1.8 + 5/3]] and
        // Pᵀ A P = [[0.34, 2.38/3], [2.38/3, 29.66/9]].
        let a = small();
        let p = Csr {
            n_rows: 3,
            n_cols: 2,
            ptr: vec![0, 2, 4, 5],
            col: vec![0, 1, 1, 0, 1],
            val: vec![0.3, 0.7, 0.9, 0.1, 1.0 / 3.0],
        };
        let want = [[0.34, 2.38 / 3.0], [2.38 / 3.0, 29.66 / 9.0]];
        let (ac, r) = galerkin(&a, &p);
        assert_eq!(r, p.transpose());
        let mut got = [[0.0f64; 2]; 2];
        for (i, row) in got.iter_mut().enumerate() {
            let (c, v) = ac.row(i);
            // Columns of a row increase and appear once.
            assert!(c.windows(2).all(|w| w[0] < w[1]));
            for (&j, &x) in c.iter().zip(v) {
                row[j as usize] = x;
            }
        }
        assert_eq!(got[0][1].to_bits(), got[1][0].to_bits());
        for i in 0..2 {
            for j in 0..2 {
                assert!(
                    (got[i][j] - want[i][j]).abs() <= 16.0 * f64::EPSILON * want[i][i],
                    "{got:?}"
                );
            }
        }
    }
}
