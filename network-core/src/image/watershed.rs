//! Markers on the distance map and the marker-based watershed that splits
//! the pore space into regions, one per pore.
//!
//! The idea of partitioning the pore space by a watershed of its distance
//! map, with one region per pore body, follows Gostick, J. T. (2017),
//! "Versatile and efficient pore network extraction method using
//! marker-based watershed segmentation", *Physical Review E* 96:023307.
//! The steps here:
//!
//! 1. **Candidates**: pore voxels whose squared distance is at least that
//!    of every pore neighbour in the 26-neighbourhood (local maxima,
//!    plateaus included), found in parallel over z slabs; of these, only
//!    regional maxima are kept (plateaus with no higher voxel next to them).
//! 2. **Suppression**: candidates are visited from the largest distance down
//!    (ties by storage index). A candidate becomes a marker unless it lies
//!    strictly inside the inscribed sphere of a marker already taken
//!    (`|p − c|² < d²(c)`); each new marker blanks its own inscribed sphere.
//!    This removes the many maxima of a plateau and the shallow bumps that
//!    voxelisation puts on a pore's ridge, and keeps one marker for a pore
//!    body whose centre is a clear maximum. A sphere holds no solid voxel by
//!    construction, so suppression never crosses a grain.
//! 3. **Flooding** (Meyer 1994, "Topographic distance and watershed lines",
//!    Signal Processing 38:113): regions grow from the markers through
//!    face neighbours, from high distance to low, with a bucket queue whose
//!    levels are the integer squared distances and whose buckets are first
//!    in, first out. A voxel joins the region that reaches it first.
//!
//! 4. **Shoulders**: a region whose highest distance is no higher than the
//!    pass (the largest distance along its shared faces) to a neighbour
//!    with a higher peak is a shoulder of that neighbour, not a pore body
//!    of its own, and is merged into it. Regions of equal peaks, as along a
//!    straight tube, stay apart.
//!
//! Suppression, flooding and merging are sequential, so the regions depend on the
//! image only, never on the thread count.

use rayon::prelude::*;

use super::distance::FAR;

/// The partition of the pore space.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Regions {
    /// Region of every voxel: 0 for solid, `1..=count` in the pore space.
    pub labels: Vec<u32>,
    /// Number of regions.
    pub count: usize,
    /// Storage index of each region's marker (`markers[r − 1]` for region
    /// `r`).
    pub markers: Vec<u32>,
}

/// Local maxima of the squared distance over the 26-neighbourhood, in
/// storage order.
pub fn candidates(pore: &[bool], d2: &[u32], dims: [usize; 3]) -> Vec<u32> {
    let [nx, ny, nz] = dims;
    let slab = nx * ny;
    let per_slab: Vec<Vec<u32>> = (0..nz)
        .into_par_iter()
        .map(|z| {
            let mut out = Vec::new();
            for y in 0..ny {
                for x in 0..nx {
                    let i = x + nx * y + slab * z;
                    if !pore[i] {
                        continue;
                    }
                    let v = d2[i];
                    let mut is_max = true;
                    'n: for dz in -1i64..=1 {
                        for dy in -1i64..=1 {
                            for dx in -1i64..=1 {
                                let (xx, yy, zz) = (x as i64 + dx, y as i64 + dy, z as i64 + dz);
                                if xx < 0
                                    || yy < 0
                                    || zz < 0
                                    || xx >= nx as i64
                                    || yy >= ny as i64
                                    || zz >= nz as i64
                                {
                                    continue;
                                }
                                let j = xx as usize + nx * yy as usize + slab * zz as usize;
                                if pore[j] && d2[j] > v {
                                    is_max = false;
                                    break 'n;
                                }
                            }
                        }
                    }
                    if is_max {
                        out.push(i as u32);
                    }
                }
            }
            out
        })
        .collect();
    per_slab.concat()
}

/// The candidates that belong to a regional maximum: a plateau (26-connected
/// voxels of equal squared distance) none of whose voxels has a pore
/// neighbour with a larger distance. A plateau on the flank of a larger
/// peak — common on a digital distance map, whose values are integers — is
/// dropped whole.
pub fn regional_maxima(
    candidates: &[u32],
    pore: &[bool],
    d2: &[u32],
    dims: [usize; 3],
) -> Vec<u32> {
    let [nx, ny, nz] = dims;
    let mut seen = vec![false; d2.len()];
    let mut keep = vec![false; d2.len()];
    let mut plateau = Vec::new();
    let mut stack = Vec::new();
    for &c in candidates {
        let c = c as usize;
        if seen[c] {
            continue;
        }
        let v = d2[c];
        plateau.clear();
        stack.push(c);
        seen[c] = true;
        let mut is_max = true;
        while let Some(i) = stack.pop() {
            plateau.push(i);
            let (x, y, z) = (
                (i % nx) as i64,
                ((i / nx) % ny) as i64,
                (i / (nx * ny)) as i64,
            );
            for dz in -1i64..=1 {
                for dy in -1i64..=1 {
                    for dx in -1i64..=1 {
                        let (xx, yy, zz) = (x + dx, y + dy, z + dz);
                        if xx < 0
                            || yy < 0
                            || zz < 0
                            || xx >= nx as i64
                            || yy >= ny as i64
                            || zz >= nz as i64
                        {
                            continue;
                        }
                        let j = xx as usize + nx * (yy as usize + ny * zz as usize);
                        if !pore[j] {
                            continue;
                        }
                        if d2[j] > v {
                            is_max = false;
                        } else if d2[j] == v && !seen[j] {
                            seen[j] = true;
                            stack.push(j);
                        }
                    }
                }
            }
        }
        if is_max {
            for &i in &plateau {
                keep[i] = true;
            }
        }
    }
    candidates
        .iter()
        .copied()
        .filter(|&c| keep[c as usize])
        .collect()
}

/// Markers from the candidates by inscribed-sphere suppression (step 2 of
/// the [module docs](self)), in order of acceptance.
pub fn markers(candidates: &[u32], d2: &[u32], dims: [usize; 3]) -> Vec<u32> {
    let [nx, ny, nz] = dims;
    let mut order: Vec<u32> = candidates.to_vec();
    order.sort_unstable_by(|&a, &b| d2[b as usize].cmp(&d2[a as usize]).then(a.cmp(&b)));
    let mut blank = vec![false; d2.len()];
    let mut out = Vec::new();
    for &c in &order {
        let c = c as usize;
        if blank[c] {
            continue;
        }
        out.push(c as u32);
        let r2 = d2[c];
        if r2 == FAR {
            // No solid anywhere: one marker is enough for the whole image.
            blank.fill(true);
            continue;
        }
        let r = (f64::from(r2)).sqrt().ceil() as i64;
        let (cx, cy, cz) = (
            (c % nx) as i64,
            ((c / nx) % ny) as i64,
            (c / (nx * ny)) as i64,
        );
        for z in (cz - r).max(0)..=(cz + r).min(nz as i64 - 1) {
            for y in (cy - r).max(0)..=(cy + r).min(ny as i64 - 1) {
                for x in (cx - r).max(0)..=(cx + r).min(nx as i64 - 1) {
                    let dd = (x - cx).pow(2) + (y - cy).pow(2) + (z - cz).pow(2);
                    if dd < i64::from(r2) {
                        blank[x as usize + nx * (y as usize + ny * z as usize)] = true;
                    }
                }
            }
        }
    }
    out
}

/// Floods the pore space from `markers` (region `k + 1` starts at
/// `markers[k]`) by step 3 of the [module docs](self). Pore voxels that no
/// marker reaches (a component without a marker) each get a new region,
/// seeded at their first voxel in storage order.
pub fn flood(pore: &[bool], d2: &[u32], dims: [usize; 3], markers: &[u32]) -> Regions {
    let [nx, ny, nz] = dims;
    let n = pore.len();
    let top = d2
        .iter()
        .zip(pore)
        .filter(|&(&v, &p)| p && v != FAR)
        .map(|(&v, _)| v)
        .max()
        .unwrap_or(0) as usize
        + 1;
    let level = |i: usize| -> usize {
        let v = d2[i];
        if v == FAR { top } else { v as usize }
    };
    let mut labels = vec![0u32; n];
    let mut seeds: Vec<u32> = markers.to_vec();
    let mut buckets: Vec<Vec<u32>> = vec![Vec::new(); top + 1];
    let mut next_scan = 0usize;
    let mut start = 0usize;
    loop {
        let mut cur = 0usize;
        for (k, &m) in seeds.iter().enumerate().skip(start) {
            let m = m as usize;
            if m < n && pore[m] && labels[m] == 0 {
                labels[m] = (k + 1) as u32;
                let l = level(m);
                buckets[l].push(m as u32);
                cur = cur.max(l);
            }
        }
        loop {
            let mut read = 0;
            while read < buckets[cur].len() {
                let i = buckets[cur][read] as usize;
                read += 1;
                let lab = labels[i];
                let (x, y, z) = (i % nx, (i / nx) % ny, i / (nx * ny));
                let mut visit = |j: usize, buckets: &mut Vec<Vec<u32>>| {
                    if pore[j] && labels[j] == 0 {
                        labels[j] = lab;
                        let l = level(j).min(cur);
                        buckets[l].push(j as u32);
                    }
                };
                if x > 0 {
                    visit(i - 1, &mut buckets);
                }
                if x + 1 < nx {
                    visit(i + 1, &mut buckets);
                }
                if y > 0 {
                    visit(i - nx, &mut buckets);
                }
                if y + 1 < ny {
                    visit(i + nx, &mut buckets);
                }
                if z > 0 {
                    visit(i - nx * ny, &mut buckets);
                }
                if z + 1 < nz {
                    visit(i + nx * ny, &mut buckets);
                }
            }
            buckets[cur] = Vec::new();
            if cur == 0 {
                break;
            }
            cur -= 1;
        }
        // Any pore voxel left over starts a region of its own.
        start = seeds.len();
        while next_scan < n && !(pore[next_scan] && labels[next_scan] == 0) {
            next_scan += 1;
        }
        if next_scan == n {
            break;
        }
        seeds.push(next_scan as u32);
    }
    Regions {
        count: seeds.len(),
        labels,
        markers: seeds,
    }
}

/// The whole partition: candidates, markers, flooding.
pub fn watershed(pore: &[bool], d2: &[u32], dims: [usize; 3]) -> Regions {
    let c = candidates(pore, d2, dims);
    let c = regional_maxima(&c, pore, d2, dims);
    let m = markers(&c, d2, dims);
    let flooded = flood(pore, d2, dims, &m);
    merge_shoulders(flooded, d2, dims)
}

/// Merges every region that is a shoulder of a higher one (step 4 of the
/// [module docs](self)): a region whose largest squared distance is not
/// above the pass to a neighbour with a larger one has no basin of its own.
/// Regions are visited from the lowest peak up (ties by number); each
/// shoulder joins the neighbour of highest pass (ties: the smaller
/// number). Region numbers are then compacted in order of the smallest
/// surviving original number, so the markers keep their order.
pub fn merge_shoulders(regions: Regions, d2: &[u32], dims: [usize; 3]) -> Regions {
    let [nx, ny, nz] = dims;
    let n_reg = regions.count;
    let lab = &regions.labels;
    let mut peak = vec![0u32; n_reg + 1];
    for (i, &l) in lab.iter().enumerate() {
        if l > 0 {
            peak[l as usize] = peak[l as usize].max(d2[i]);
        }
    }
    // Pass level between neighbouring regions: the largest, over shared
    // voxel faces, of the smaller distance of the two voxels.
    let mut pass: std::collections::BTreeMap<(u32, u32), u32> = std::collections::BTreeMap::new();
    let stride = [1, nx, nx * ny];
    let extent = [nx, ny, nz];
    let mut i = 0;
    for z in 0..nz {
        for y in 0..ny {
            for x in 0..nx {
                let c = [x, y, z];
                let r = lab[i];
                if r > 0 {
                    for ax in 0..3 {
                        if c[ax] + 1 < extent[ax] {
                            let j = i + stride[ax];
                            let q = lab[j];
                            if q > 0 && q != r {
                                let e = pass.entry((r.min(q), r.max(q))).or_insert(0);
                                *e = (*e).max(d2[i].min(d2[j]));
                            }
                        }
                    }
                }
                i += 1;
            }
        }
    }
    let mut neighbours: Vec<Vec<(u32, u32)>> = vec![Vec::new(); n_reg + 1];
    for (&(a, b), &p) in &pass {
        neighbours[a as usize].push((b, p));
        neighbours[b as usize].push((a, p));
    }
    let mut parent: Vec<u32> = (0..=n_reg as u32).collect();
    fn root(parent: &mut [u32], mut r: u32) -> u32 {
        while parent[r as usize] != r {
            parent[r as usize] = parent[parent[r as usize] as usize];
            r = parent[r as usize];
        }
        r
    }
    let mut order: Vec<u32> = (1..=n_reg as u32).collect();
    order.sort_by(|&a, &b| peak[a as usize].cmp(&peak[b as usize]).then(a.cmp(&b)));
    for &r in &order {
        let mut best: Option<(u32, u32)> = None;
        for &(q, p) in &neighbours[r as usize] {
            let rq = root(&mut parent, q);
            if rq == r || peak[rq as usize] <= peak[r as usize] || p < peak[r as usize] {
                continue;
            }
            best = match best {
                Some((bq, bp)) if bp > p || (bp == p && bq < rq) => Some((bq, bp)),
                _ => Some((rq, p)),
            };
        }
        if let Some((q, _)) = best {
            parent[r as usize] = q;
        }
    }
    // Compact: new numbers in order of original number of the survivors.
    let mut new_id = vec![0u32; n_reg + 1];
    let mut markers = Vec::new();
    for r in 1..=n_reg as u32 {
        if root(&mut parent, r) == r {
            markers.push(regions.markers[(r - 1) as usize]);
            new_id[r as usize] = markers.len() as u32;
        }
    }
    let map: Vec<u32> = (0..=n_reg as u32)
        .map(|r| {
            if r == 0 {
                0
            } else {
                new_id[root(&mut parent, r) as usize]
            }
        })
        .collect();
    let labels = regions.labels.iter().map(|&l| map[l as usize]).collect();
    Regions {
        labels,
        count: markers.len(),
        markers,
    }
}

#[cfg(test)]
mod tests {
    use super::super::distance::squared_distance;
    use super::*;

    /// Two balls of radius 6 whose centres are 11 apart overlap in a lens
    /// whose window has radius √(6² − 5.5²) ≈ 2.4 (geometry), far below the
    /// balls' radius: two regions, each holding its own ball centre (the
    /// partition's purpose).
    #[test]
    fn two_overlapping_balls_give_two_regions() {
        let dims = [32, 15, 15];
        let mut pore = vec![false; 32 * 15 * 15];
        for z in 0..15i64 {
            for y in 0..15i64 {
                for x in 0..32i64 {
                    let b1 = (x - 8).pow(2) + (y - 7).pow(2) + (z - 7).pow(2) <= 36;
                    let b2 = (x - 19).pow(2) + (y - 7).pow(2) + (z - 7).pow(2) <= 36;
                    pore[(x + 32 * (y + 15 * z)) as usize] = b1 || b2;
                }
            }
        }
        let d2 = squared_distance(&pore, dims);
        let r = watershed(&pore, &d2, dims);
        assert_eq!(r.count, 2);
        let at = |x: usize| r.labels[x + 32 * (7 + 15 * 7)];
        assert_ne!(at(8), at(19));
        assert!(at(8) > 0 && at(19) > 0);
        assert!(r.labels.iter().zip(&pore).all(|(&l, &p)| (l > 0) == p));
    }

    #[test]
    fn every_component_gets_a_region() {
        // Two separate cubes: at least one region each, no pore voxel left.
        let dims = [10, 4, 4];
        let pore: Vec<bool> = (0..160).map(|i| i % 10 != 4 && i % 10 != 5).collect();
        let d2 = squared_distance(&pore, dims);
        let r = watershed(&pore, &d2, dims);
        assert!(r.count >= 2);
        assert_ne!(r.labels[0], r.labels[9]);
        assert!(r.labels.iter().zip(&pore).all(|(&l, &p)| (l > 0) == p));
    }
}
