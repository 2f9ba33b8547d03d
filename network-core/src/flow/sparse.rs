//! Sparse matrices and vector kernels of the pressure solver.
//!
//! Every floating-point reduction uses a grouping fixed by
//! [`crate::numeric::CHUNK`] (partial sums of fixed chunks, added in chunk
//! order), and every row of a matrix product is computed by one thread in a
//! fixed order, so the results do not depend on the number of rayon threads.

use rayon::prelude::*;

use crate::numeric::CHUNK;

/// Rows per parallel block of the sparse matrix–matrix product.
const SPGEMM_BLOCK: usize = 1024;

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

/// A square linear operator `y = A x`.
pub(crate) trait LinOp: Sync {
    /// `y = A x`.
    fn apply(&self, x: &[f64], y: &mut [f64]);
    /// `r = b − A x`.
    fn residual(&self, b: &[f64], x: &[f64], r: &mut [f64]);
}

/// A compressed-sparse-row matrix with `u32` column indices.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Csr {
    /// Number of rows.
    pub n_rows: usize,
    /// Number of columns.
    pub n_cols: usize,
    /// Row `i` occupies `ptr[i]..ptr[i + 1]` of `col` and `val`.
    pub ptr: Vec<usize>,
    /// Column indices.
    pub col: Vec<u32>,
    /// Values.
    pub val: Vec<f64>,
}

impl Csr {
    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.col.len()
    }

    /// Column indices and values of row `i`.
    #[inline]
    pub fn row(&self, i: usize) -> (&[u32], &[f64]) {
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
                        d += a;
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
                    s += a * x[j as usize];
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
                    s += a * x[j as usize];
                }
                *yi += s;
            }
        });
    }

    /// The transpose, with the entries of each row in increasing column
    /// order of the original (a stable counting sort).
    pub fn transpose(&self) -> Csr {
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
        let mut val = vec![0.0; self.nnz()];
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
        8 * self.ptr.capacity() + 4 * self.col.capacity() + 8 * self.val.capacity()
    }
}

impl LinOp for Csr {
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
                    s += a * x[j as usize];
                }
                *ri = b[i] - s;
            }
        });
    }
}

/// Sparse product `C = A B`. Each row of `C` lists its columns in order of
/// first appearance while scanning row `i` of `A` and the matching rows of
/// `B`, so the result (and every sum in it) is independent of threading.
pub(crate) fn spgemm(a: &Csr, b: &Csr) -> Csr {
    debug_assert_eq!(a.n_cols, b.n_rows);
    let n_blocks = a.n_rows.div_ceil(SPGEMM_BLOCK);
    let blocks: Vec<(Vec<usize>, Vec<u32>, Vec<f64>)> = (0..n_blocks)
        .into_par_iter()
        .map_init(
            || vec![u32::MAX; b.n_cols],
            |pos, blk| {
                let start = blk * SPGEMM_BLOCK;
                let end = (start + SPGEMM_BLOCK).min(a.n_rows);
                let mut lens = Vec::with_capacity(end - start);
                let mut col: Vec<u32> = Vec::new();
                let mut val: Vec<f64> = Vec::new();
                for i in start..end {
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
                    lens.push(col.len() - row_start);
                }
                (lens, col, val)
            },
        )
        .collect();
    let nnz: usize = blocks.iter().map(|b| b.1.len()).sum();
    let mut ptr = Vec::with_capacity(a.n_rows + 1);
    let mut col = Vec::with_capacity(nnz);
    let mut val = Vec::with_capacity(nnz);
    ptr.push(0);
    for (lens, c, v) in blocks {
        for l in lens {
            let last = *ptr.last().unwrap_or(&0);
            ptr.push(last + l);
        }
        col.extend_from_slice(&c);
        val.extend_from_slice(&v);
    }
    Csr {
        n_rows: a.n_rows,
        n_cols: b.n_cols,
        ptr,
        col,
        val,
    }
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
    /// (diagonal first); the other rows are empty.
    pub fn to_csr(&self) -> Csr {
        let n = self.diag.len();
        let mut ptr = Vec::with_capacity(n + 1);
        let mut col = Vec::new();
        let mut val = Vec::new();
        ptr.push(0);
        for i in 0..n {
            if self.unknown[i] {
                col.push(i as u32);
                val.push(self.diag[i]);
                for k in self.range(i) {
                    if self.off[k] != 0.0 {
                        col.push(self.nbr[k]);
                        val.push(self.off[k]);
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
}
