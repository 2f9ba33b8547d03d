//! Connected components of a voxel set.
//!
//! Union–find over voxel indices (Tarjan 1975, "Efficiency of a good but
//! not linear set union algorithm", J. ACM 22:215), with every root the
//! smallest index of its set and path halving. One sequential scan joins
//! each voxel with its already-visited neighbours; a second numbers the
//! components 1, 2, … in the order of their first voxel in storage order
//! (x fastest), so the numbering depends only on the image.

/// Which voxels count as neighbours.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Connectivity {
    /// Voxels sharing a face (6 neighbours).
    #[default]
    Faces,
    /// Voxels sharing a face, an edge or a corner (26 neighbours).
    Corners,
}

impl Connectivity {
    /// 6 or 26.
    pub fn count(self) -> usize {
        match self {
            Connectivity::Faces => 6,
            Connectivity::Corners => 26,
        }
    }

    /// Parses `6` or `26`.
    pub fn parse(text: &str) -> Option<Connectivity> {
        match text.trim() {
            "6" => Some(Connectivity::Faces),
            "26" => Some(Connectivity::Corners),
            _ => None,
        }
    }

    /// The neighbour offsets that precede a voxel in storage order.
    fn backward(self) -> Vec<[i64; 3]> {
        let mut out = Vec::new();
        for dz in -1i64..=0 {
            for dy in -1i64..=1 {
                for dx in -1i64..=1 {
                    let before = dz < 0 || (dz == 0 && (dy < 0 || (dy == 0 && dx < 0)));
                    let faces = dx.abs() + dy.abs() + dz.abs() == 1;
                    if before && (faces || self == Connectivity::Corners) {
                        out.push([dx, dy, dz]);
                    }
                }
            }
        }
        out
    }
}

/// Components of a voxel set: `labels[i]` is 0 outside the set, else the
/// component number `1..=count`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Components {
    /// Component number of every voxel (0: not in the set).
    pub labels: Vec<u32>,
    /// Number of components.
    pub count: usize,
}

const NONE: u32 = u32::MAX;

fn find(parent: &mut [u32], mut i: u32) -> u32 {
    while parent[i as usize] != i {
        let p = parent[i as usize];
        parent[i as usize] = parent[p as usize];
        i = parent[i as usize];
    }
    i
}

/// Labels the connected components of `set` (storage order x fastest in a
/// volume of `dims`). A `set` whose length is not the product of `dims`
/// gives no components.
pub fn components(set: &[bool], dims: [usize; 3], connectivity: Connectivity) -> Components {
    let [nx, ny, nz] = dims;
    if set.len() != nx * ny * nz || set.len() >= NONE as usize {
        return Components {
            labels: vec![0; set.len()],
            count: 0,
        };
    }
    let offsets = connectivity.backward();
    let mut parent: Vec<u32> = vec![NONE; set.len()];
    let mut i = 0usize;
    for z in 0..nz {
        for y in 0..ny {
            for x in 0..nx {
                if set[i] {
                    parent[i] = i as u32;
                    for &[dx, dy, dz] in &offsets {
                        let (xx, yy, zz) = (x as i64 + dx, y as i64 + dy, z as i64 + dz);
                        if xx < 0 || yy < 0 || zz < 0 || xx >= nx as i64 || yy >= ny as i64 {
                            continue;
                        }
                        let j = (xx as usize) + nx * ((yy as usize) + ny * (zz as usize));
                        if !set[j] {
                            continue;
                        }
                        let (a, b) = (find(&mut parent, i as u32), find(&mut parent, j as u32));
                        if a != b {
                            // The larger root goes under the smaller.
                            let (lo, hi) = if a < b { (a, b) } else { (b, a) };
                            parent[hi as usize] = lo;
                        }
                    }
                }
                i += 1;
            }
        }
    }
    // Every pointer goes to a smaller index of the same set, and a root is
    // the smallest index of its set, so one increasing pass meets each root
    // before its members.
    let mut count = 0u32;
    for i in 0..parent.len() {
        let p = parent[i];
        if p == NONE {
            parent[i] = 0;
        } else if p as usize == i {
            count += 1;
            parent[i] = count;
        } else {
            // p < i was converted already: a root's entry and a member's
            // entry both hold the number of their component.
            parent[i] = parent[p as usize];
        }
    }
    Components {
        labels: parent,
        count: count as usize,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn image(dims: [usize; 3], voxels: &[[usize; 3]]) -> Vec<bool> {
        let mut set = vec![false; dims[0] * dims[1] * dims[2]];
        for &[x, y, z] in voxels {
            set[x + dims[0] * (y + dims[1] * z)] = true;
        }
        set
    }

    #[test]
    fn edge_and_corner_contacts_join_only_with_26_connectivity() {
        // Three single voxels: (0,0,0) and (1,1,0) share an edge, (1,1,0)
        // and (2,2,1) share a corner only; (4,4,4) is apart. By definition
        // of the neighbourhoods: 6-connectivity sees 4 components,
        // 26-connectivity sees 2.
        let dims = [5, 5, 5];
        let set = image(dims, &[[0, 0, 0], [1, 1, 0], [2, 2, 1], [4, 4, 4]]);
        assert_eq!(components(&set, dims, Connectivity::Faces).count, 4);
        let c = components(&set, dims, Connectivity::Corners);
        assert_eq!(c.count, 2);
        assert_eq!(c.labels[0], 1);
        assert_eq!(c.labels[2 + 5 * (2 + 5)], 1);
        assert_eq!(c.labels[124], 2);
    }

    #[test]
    fn numbering_follows_first_voxel_order() {
        // A U shape whose arms meet only at the far end: the right arm is
        // reached first in storage order at z = 0 but belongs to the
        // component that starts at x = 0 (definition of the numbering).
        let dims = [3, 1, 3];
        let set = image(
            dims,
            &[
                [0, 0, 0],
                [2, 0, 0],
                [0, 0, 1],
                [2, 0, 1],
                [0, 0, 2],
                [1, 0, 2],
                [2, 0, 2],
            ],
        );
        let c = components(&set, dims, Connectivity::Faces);
        assert_eq!(c.count, 1);
        assert!(c.labels.iter().zip(&set).all(|(&l, &s)| (l == 1) == s));
    }
}
