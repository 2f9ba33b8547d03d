//! The exact Euclidean distance transform of the pore space.
//!
//! Method: Felzenszwalb, P. F. & Huttenlocher, D. P. (2012), "Distance
//! transforms of sampled functions", *Theory of Computing* 8:415–428. The
//! squared distance in 3-D separates into three 1-D passes (along x, then y,
//! then z); each pass computes, for every voxel of a line, the lower
//! envelope of the parabolas `(q − p)² + f(p)` rooted at the line's voxels,
//! in time linear in the line length. The result is exact: squared
//! distances are integers (in voxel units²) computed in integer arithmetic;
//! only the crossing points of parabolas are compared as floating-point
//! numbers, and two integer-rooted parabolas cross at least `1/(2n)` away
//! from any integer unless they cross exactly on one, where both give the
//! same value — so rounding cannot change a result.
//!
//! Each pass is parallel over lines; lines are independent and the values
//! are integers, so the output has the same bits for any thread count.
//!
//! Boundary rule: only solid voxels of the image count; the space outside
//! the image is not solid (a pore cut by a face keeps its full distance
//! rather than seeing a wall at the face).

use rayon::prelude::*;

/// The squared distance of a voxel with no solid voxel anywhere in the
/// image.
pub const FAR: u32 = u32::MAX;

const INF: u64 = u64::MAX;

/// The lower envelope of parabolas over one line (Felzenszwalb &
/// Huttenlocher 2012, algorithm DT(f)): `d[q] = min_p (q − p)² + f[p]`,
/// with `f[p] = INF` for points that carry no parabola.
fn envelope(f: &[u64], d: &mut [u64], v: &mut Vec<usize>, z: &mut Vec<f64>) {
    let n = f.len();
    v.clear();
    z.clear();
    for q in 0..n {
        if f[q] == INF {
            continue;
        }
        let fq = f[q] as f64 + (q * q) as f64;
        loop {
            match v.last() {
                None => {
                    v.push(q);
                    z.push(f64::NEG_INFINITY);
                    break;
                }
                Some(&p) => {
                    let fp = f[p] as f64 + (p * p) as f64;
                    let s = (fq - fp) / (2.0 * (q - p) as f64);
                    if s <= *z.last().unwrap_or(&f64::NEG_INFINITY) {
                        v.pop();
                        z.pop();
                        continue;
                    }
                    v.push(q);
                    z.push(s);
                    break;
                }
            }
        }
    }
    if v.is_empty() {
        d.fill(INF);
        return;
    }
    let mut k = 0;
    for (q, dq) in d.iter_mut().enumerate() {
        while k + 1 < v.len() && z[k + 1] < q as f64 {
            k += 1;
        }
        let p = v[k];
        let dx = q.abs_diff(p) as u64;
        *dq = dx.saturating_mul(dx).saturating_add(f[p]);
    }
}

fn to_u32(v: u64) -> u32 {
    if v == INF {
        FAR
    } else {
        v.min(u64::from(FAR - 1)) as u32
    }
}

fn to_u64(v: u32) -> u64 {
    if v == FAR { INF } else { u64::from(v) }
}

/// Squared Euclidean distance, in voxel units², from every voxel to the
/// nearest solid voxel (`pore[i] == false`); 0 on solid voxels, [`FAR`]
/// when the image holds no solid voxel. `dims` is `[nx, ny, nz]`, storage x
/// fastest. `pore.len()` must equal the product of `dims` (a caller error
/// returns an empty vector).
pub fn squared_distance(pore: &[bool], dims: [usize; 3]) -> Vec<u32> {
    let [nx, ny, nz] = dims;
    if pore.len() != nx * ny * nz || pore.is_empty() {
        return Vec::new();
    }
    let mut out = vec![0u32; pore.len()];
    // Pass along x: rows are contiguous.
    out.par_chunks_mut(nx)
        .zip(pore.par_chunks(nx))
        .for_each_init(
            || (vec![0u64; nx], vec![0u64; nx], Vec::new(), Vec::new()),
            |(f, d, v, z), (row, p)| {
                for x in 0..nx {
                    f[x] = if p[x] { INF } else { 0 };
                }
                envelope(f, d, v, z);
                for x in 0..nx {
                    row[x] = to_u32(d[x]);
                }
            },
        );
    // Pass along y: within each z slab, columns of stride nx.
    out.par_chunks_mut(nx * ny).for_each_init(
        || (vec![0u64; ny], vec![0u64; ny], Vec::new(), Vec::new()),
        |(f, d, v, z), slab| {
            for x in 0..nx {
                for y in 0..ny {
                    f[y] = to_u64(slab[x + nx * y]);
                }
                envelope(f, d, v, z);
                for y in 0..ny {
                    slab[x + nx * y] = to_u32(d[y]);
                }
            }
        },
    );
    if nz == 1 {
        return out;
    }
    // Pass along z: one task per y row gathers its (x, z) plane, then the
    // results are scattered back slab by slab.
    let planes: Vec<Vec<u32>> = (0..ny)
        .into_par_iter()
        .map_init(
            || (vec![0u64; nz], vec![0u64; nz], Vec::new(), Vec::new()),
            |(f, d, v, z), y| {
                let mut plane = vec![0u32; nx * nz];
                for x in 0..nx {
                    for k in 0..nz {
                        f[k] = to_u64(out[x + nx * (y + ny * k)]);
                    }
                    envelope(f, d, v, z);
                    for k in 0..nz {
                        plane[x * nz + k] = to_u32(d[k]);
                    }
                }
                plane
            },
        )
        .collect();
    out.par_chunks_mut(nx * ny)
        .enumerate()
        .for_each(|(k, slab)| {
            for y in 0..ny {
                for x in 0..nx {
                    slab[x + nx * y] = planes[y][x * nz + k];
                }
            }
        });
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute force: the minimum over every solid voxel of the squared
    /// distance (the definition).
    fn brute(pore: &[bool], dims: [usize; 3]) -> Vec<u32> {
        let [nx, ny, _] = dims;
        let c = |i: usize| [i % nx, (i / nx) % ny, i / (nx * ny)];
        (0..pore.len())
            .map(|i| {
                let a = c(i);
                (0..pore.len())
                    .filter(|&j| !pore[j])
                    .map(|j| {
                        let b = c(j);
                        (0..3)
                            .map(|k| (a[k].abs_diff(b[k]) as u32).pow(2))
                            .sum::<u32>()
                    })
                    .min()
                    .unwrap_or(FAR)
            })
            .collect()
    }

    #[test]
    fn matches_brute_force_on_random_images() {
        for (seed, dims) in [
            (1u64, [7, 5, 6]),
            (2, [9, 1, 4]),
            (3, [4, 8, 3]),
            (4, [1, 1, 5]),
        ] {
            for density in [0.05, 0.3, 0.8] {
                let n = dims[0] * dims[1] * dims[2];
                let pore: Vec<bool> = (0..n)
                    .map(|i| crate::numeric::unit_hash(seed, 11, i as u64) > density)
                    .collect();
                assert_eq!(
                    squared_distance(&pore, dims),
                    brute(&pore, dims),
                    "{dims:?}"
                );
            }
        }
    }

    #[test]
    fn no_solid_gives_far_everywhere() {
        let d = squared_distance(&[true; 8], [2, 2, 2]);
        assert!(d.iter().all(|&v| v == FAR));
    }

    #[test]
    fn same_bits_with_one_and_two_threads() {
        let dims = [40, 30, 20];
        let pore: Vec<bool> = (0..24_000)
            .map(|i| crate::numeric::unit_hash(9, 1, i) > 0.2)
            .collect();
        let run = |t: usize| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(t)
                .build()
                .unwrap()
                .install(|| squared_distance(&pore, dims))
        };
        assert_eq!(run(1), run(2));
    }
}
