//! Regions → pores, shared interfaces → throats: a [`Network`] from a
//! partitioned pore space.
//!
//! Every pore-space voxel belongs to exactly one region ([`super::watershed`]),
//! and every region becomes one pore, so the pore volumes add up to the
//! image's pore volume: `V_pore = n_voxels × a³` for each region of
//! `n_voxels` voxels of edge `a`, and throats carry no volume of their own.
//!
//! Pore properties (a region of `N` voxels):
//! - centre: the centroid of its voxel centres;
//! - inscribed radius `r = √(d²_max) a`: `d²_max` is the largest squared
//!   distance in the region from a voxel centre to the nearest solid voxel
//!   centre. Two voxelisation errors of opposite sign meet here: the solid
//!   centre lies up to half a voxel behind the wall (too large), and the
//!   deepest voxel centre may sit up to half a voxel diagonal off the true
//!   centre of the inscribed sphere (too small); no correction is applied,
//!   and the tests bound the result within one voxel;
//! - shape factor `G = (1/4π) (r / r_eq)²`, capped at `1/4π`, with
//!   `r_eq = (3N/4π)^{1/3} a` the radius of the sphere of the same volume:
//!   a near-spherical region counts as circular, and the more its inscribed
//!   sphere falls short of its volume (corners, elongation), the more angular
//!   its cross-section. This is our own estimate, not a measured section.
//!
//! Throat properties (two regions sharing at least one voxel face):
//! - inscribed radius: the largest over the shared faces of the smaller
//!   distance of the two voxels (as for pores, `√d² a`), at most the
//!   radius of either pore;
//! - cross-section area `A = n_faces a²`;
//! - perimeter `P = (π/4) n_edges a`, where `n_edges` counts the edges of
//!   shared faces that border solid: the staircase perimeter of a digital
//!   curve overestimates an isotropic curve's length by `4/π` on average
//!   (for a disc of radius `R`, `8R` against `2πR`), which the factor
//!   undoes; for an axis-aligned square section it underestimates by `π/4`;
//! - shape factor `G = A/P²`, capped at `1/4π`; `1/4π` when the interface
//!   touches no solid (it lies in open pore space or on the image's faces);
//! - length: the distance `L` between the two pore centres; the conduit
//!   parts inside the pores are the pore radii capped at `0.45 L`, as the
//!   network files' default, so the throat proper keeps at least 10 % of `L`.
//!
//! Inlet and outlet: regions with a voxel on the first (last) slice along
//! the flow axis. The sample length between the planes where the pressures
//! are imposed is the distance along the axis between the mean inlet and
//! the mean outlet pore centre; the cross-section is the image's.

use std::collections::HashMap;
use std::f64::consts::PI;
use std::path::{Path, PathBuf};

use serde::Serialize;

use super::distance::{FAR, squared_distance};
use super::watershed::{Regions, watershed};
use super::{ImageError, Labels, Volume};
use crate::network::{Axis, Boundary, InvalidNetwork, Network, NetworkInfo, Pores, Throats};
use crate::shape::G_CIRCLE;

/// Options of an extraction.
#[derive(Clone, Debug, PartialEq)]
pub struct ExtractOptions {
    /// The axis whose first and last slices hold the inlet and outlet pores.
    pub flow_axis: Axis,
    /// Name of the network (`network.toml`).
    pub name: String,
    /// Free text for the network's description.
    pub description: Option<String>,
}

impl Default for ExtractOptions {
    fn default() -> ExtractOptions {
        ExtractOptions {
            flow_axis: Axis::Z,
            name: "extracted".into(),
            description: None,
        }
    }
}

/// Counts of an extraction (plain data; printed by the CLI).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ExtractSummary {
    /// `[nx, ny, nz]`.
    pub dims: [usize; 3],
    /// Voxel edge, m.
    pub voxel_size_m: f64,
    /// Voxels in the image.
    pub n_voxels: u64,
    /// Voxels of the pore space.
    pub n_pore_voxels: u64,
    /// Pore-space voxels over all voxels.
    pub porosity: f64,
    /// Pores (regions).
    pub n_pores: usize,
    /// Throats (pairs of regions sharing a face).
    pub n_throats: usize,
    /// Pores on the inlet face.
    pub n_inlet: usize,
    /// Pores on the outlet face.
    pub n_outlet: usize,
    /// Pores without any throat.
    pub n_isolated: usize,
}

/// The result of an extraction.
#[derive(Clone, Debug)]
pub struct Extraction {
    /// The network.
    pub network: Network,
    /// The partition of the pore space (region `k` is pore `k − 1`).
    pub regions: Regions,
    /// Counts.
    pub summary: ExtractSummary,
}

/// Why an extraction failed; every variant names the image.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ExtractError {
    /// The image or its labels were refused.
    #[error(transparent)]
    Image(#[from] ImageError),
    /// No voxel belongs to the pore space.
    #[error("{}: no voxel belongs to the pore space (check pore_label)", path.display())]
    NoPoreSpace {
        /// The image.
        path: PathBuf,
    },
    /// No voxel is solid: the image is not a rock.
    #[error("{}: no voxel is solid (check solid_label)", path.display())]
    NoSolid {
        /// The image.
        path: PathBuf,
    },
    /// A single region touches both faces.
    #[error(
        "{}: pore {pore} (voxel x={}, y={}, z={}) touches both the inlet and the outlet face along {axis}: the image is too short along the flow axis for a network",
        path.display(), voxel[0], voxel[1], voxel[2]
    )]
    SpansSample {
        /// The image.
        path: PathBuf,
        /// The pore (0-based).
        pore: usize,
        /// Its marker voxel.
        voxel: [usize; 3],
        /// The flow axis.
        axis: &'static str,
    },
    /// No pore on a face, or no length between the faces.
    #[error("{}: {what}", path.display())]
    NoFlowPath {
        /// The image.
        path: PathBuf,
        /// What is missing.
        what: String,
    },
    /// The assembled network broke a network rule (a bug if it happens).
    #[error("{}: extracted network is invalid: {source}", path.display())]
    Invalid {
        /// The image.
        path: PathBuf,
        /// The violations.
        source: InvalidNetwork,
    },
}

/// The whole extraction: pore space, distance transform, watershed,
/// assembly. `source` names the image in errors.
pub fn extract(
    volume: &Volume,
    labels: &Labels,
    opts: &ExtractOptions,
    source: &Path,
) -> Result<Extraction, ExtractError> {
    let pore = labels.pore_space(volume, source)?;
    let dims = volume.dims();
    check_phases(&pore, source)?;
    let d2 = squared_distance(&pore, dims);
    let regions = watershed(&pore, &d2, dims);
    let (network, summary) = assemble(
        &pore,
        &d2,
        &regions,
        dims,
        volume.voxel_size_m(),
        opts,
        source,
    )?;
    Ok(Extraction {
        network,
        regions,
        summary,
    })
}

/// Refuses a pore space that is empty or the whole image.
pub fn check_phases(pore: &[bool], source: &Path) -> Result<(), ExtractError> {
    if !pore.iter().any(|&p| p) {
        return Err(ExtractError::NoPoreSpace {
            path: source.to_path_buf(),
        });
    }
    if pore.iter().all(|&p| p) {
        return Err(ExtractError::NoSolid {
            path: source.to_path_buf(),
        });
    }
    Ok(())
}

#[derive(Clone, Copy, Default)]
struct RegionSums {
    n: u64,
    sum: [u64; 3],
    d2_max: u32,
    inlet: bool,
    outlet: bool,
}

#[derive(Clone, Copy, Default)]
struct FaceSums {
    n_faces: u64,
    n_edges: u64,
    d2_max: u32,
}

/// Inscribed radius in voxel units from a squared distance (at least
/// half a voxel).
fn radius_voxels(d2: u32) -> f64 {
    f64::from(d2).sqrt().max(0.5)
}

/// Builds the network from a partition (the last stage of [`extract`]).
pub fn assemble(
    pore: &[bool],
    d2: &[u32],
    regions: &Regions,
    dims: [usize; 3],
    voxel_size_m: f64,
    opts: &ExtractOptions,
    source: &Path,
) -> Result<(Network, ExtractSummary), ExtractError> {
    let [nx, ny, nz] = dims;
    let a = voxel_size_m;
    let axis = opts.flow_axis.index();
    let n_reg = regions.count;
    let lab = &regions.labels;
    if d2.contains(&FAR) {
        return Err(ExtractError::NoSolid {
            path: source.to_path_buf(),
        });
    }
    let mut sums = vec![RegionSums::default(); n_reg];
    let mut faces: HashMap<(u32, u32), FaceSums> = HashMap::new();
    let stride = [1, nx, nx * ny];
    let extent = [nx, ny, nz];
    let mut i = 0usize;
    for z in 0..nz {
        for y in 0..ny {
            for x in 0..nx {
                let r = lab[i];
                if r == 0 {
                    i += 1;
                    continue;
                }
                let c = [x, y, z];
                let s = &mut sums[(r - 1) as usize];
                s.n += 1;
                for k in 0..3 {
                    s.sum[k] += c[k] as u64;
                }
                s.d2_max = s.d2_max.max(d2[i]);
                s.inlet |= c[axis] == 0;
                s.outlet |= c[axis] + 1 == extent[axis];
                for ax in 0..3 {
                    if c[ax] + 1 >= extent[ax] {
                        continue;
                    }
                    let j = i + stride[ax];
                    let q = lab[j];
                    if q == 0 || q == r {
                        continue;
                    }
                    // Edges of this face that border solid: the in-plane
                    // neighbours of both voxels along the two other axes.
                    let mut edges = 0;
                    for u in (0..3).filter(|&u| u != ax) {
                        if c[u] > 0 && (!pore[i - stride[u]] || !pore[j - stride[u]]) {
                            edges += 1;
                        }
                        if c[u] + 1 < extent[u] && (!pore[i + stride[u]] || !pore[j + stride[u]]) {
                            edges += 1;
                        }
                    }
                    let f = faces.entry((r.min(q), r.max(q))).or_default();
                    f.n_faces += 1;
                    f.n_edges += edges;
                    f.d2_max = f.d2_max.max(d2[i].min(d2[j]));
                }
                i += 1;
            }
        }
    }
    let _ = pore.len();
    let mut keys: Vec<(u32, u32)> = faces.keys().copied().collect();
    keys.sort_unstable();

    // Pores.
    let mut pores = Pores::with_capacity(n_reg);
    let mut radius_vox = Vec::with_capacity(n_reg);
    let (mut in_sum, mut in_n, mut out_sum, mut out_n) = (0.0, 0usize, 0.0, 0usize);
    for (k, s) in sums.iter().enumerate() {
        let centre: Vec<f64> = (0..3)
            .map(|d| (s.sum[d] as f64 / s.n as f64 + 0.5) * a)
            .collect();
        let r = radius_voxels(s.d2_max);
        let r_eq = (3.0 * s.n as f64 / (4.0 * PI)).cbrt();
        let g = (G_CIRCLE * (r / r_eq).powi(2)).min(G_CIRCLE);
        let boundary = match (s.inlet, s.outlet) {
            (true, true) => {
                let m = regions.markers[k] as usize;
                return Err(ExtractError::SpansSample {
                    path: source.to_path_buf(),
                    pore: k,
                    voxel: super::volume::coords(dims, m),
                    axis: opts.flow_axis.as_str(),
                });
            }
            (true, false) => {
                in_sum += centre[axis];
                in_n += 1;
                Boundary::Inlet
            }
            (false, true) => {
                out_sum += centre[axis];
                out_n += 1;
                Boundary::Outlet
            }
            (false, false) => Boundary::Interior,
        };
        pores.x.push(centre[0]);
        pores.y.push(centre[1]);
        pores.z.push(centre[2]);
        pores.radius.push(r * a);
        pores.shape_factor.push(g);
        pores.volume.push(s.n as f64 * a * a * a);
        pores.clay_volume.push(0.0);
        pores.boundary.push(boundary);
        radius_vox.push(r);
    }
    if in_n == 0 || out_n == 0 {
        return Err(ExtractError::NoFlowPath {
            path: source.to_path_buf(),
            what: format!(
                "no pore touches the {} face along {}",
                if in_n == 0 {
                    "inlet (first)"
                } else {
                    "outlet (last)"
                },
                opts.flow_axis.as_str()
            ),
        });
    }
    let length_m = out_sum / out_n as f64 - in_sum / in_n as f64;
    if length_m.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Err(ExtractError::NoFlowPath {
            path: source.to_path_buf(),
            what: format!(
                "the mean outlet pore centre does not lie beyond the mean inlet pore centre along {}",
                opts.flow_axis.as_str()
            ),
        });
    }

    // Throats.
    let mut throats = Throats::with_capacity(keys.len());
    for &(p, q) in &keys {
        let f = faces[&(p, q)];
        let (ia, ib) = ((p - 1) as usize, (q - 1) as usize);
        let r = radius_voxels(f.d2_max)
            .min(radius_vox[ia])
            .min(radius_vox[ib]);
        let area = f.n_faces as f64;
        let perimeter = PI / 4.0 * f.n_edges as f64;
        let g = if f.n_edges == 0 {
            G_CIRCLE
        } else {
            (area / (perimeter * perimeter)).min(G_CIRCLE)
        };
        let ca = pores.centre(ia);
        let cb = pores.centre(ib);
        let dist =
            ((ca[0] - cb[0]).powi(2) + (ca[1] - cb[1]).powi(2) + (ca[2] - cb[2]).powi(2)).sqrt();
        // Two regions sharing a face have centres at least apart by a
        // voxel in practice; never let the length vanish.
        let length = dist.max(0.5 * a);
        throats.pores.push([ia as u32, ib as u32]);
        throats.radius.push(r * a);
        throats.shape_factor.push(g);
        throats.volume.push(0.0);
        throats.clay_volume.push(0.0);
        throats.length.push(length);
        throats.conduit_a.push(pores.radius[ia].min(0.45 * length));
        throats.conduit_b.push(pores.radius[ib].min(0.45 * length));
    }

    let n_pore_voxels: u64 = sums.iter().map(|s| s.n).sum();
    let n_voxels = (nx * ny * nz) as u64;
    let mut degree = vec![0usize; n_reg];
    for &[p, q] in &throats.pores {
        degree[p as usize] += 1;
        degree[q as usize] += 1;
    }
    let lengths = [nx as f64 * a, ny as f64 * a, nz as f64 * a];
    let area_m2 = lengths.iter().product::<f64>() / lengths[axis];
    let info = NetworkInfo {
        name: opts.name.clone(),
        flow_axis: opts.flow_axis,
        length_m,
        area_m2,
        bulk_volume_m3: lengths.iter().product(),
        extent_m: Some(lengths),
        description: opts.description.clone(),
    };
    let summary = ExtractSummary {
        dims,
        voxel_size_m,
        n_voxels,
        n_pore_voxels,
        porosity: n_pore_voxels as f64 / n_voxels as f64,
        n_pores: n_reg,
        n_throats: keys.len(),
        n_inlet: in_n,
        n_outlet: out_n,
        n_isolated: degree.iter().filter(|&&d| d == 0).count(),
    };
    let network = Network::new(info, pores, throats).map_err(|e| ExtractError::Invalid {
        path: source.to_path_buf(),
        source: e,
    })?;
    Ok((network, summary))
}
