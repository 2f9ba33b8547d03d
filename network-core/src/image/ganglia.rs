//! The imaged non-aqueous phase: saturations and every connected ganglion.
//!
//! From an image whose labels separate solid, water and the non-aqueous
//! phase ("oil"), each connected set of oil voxels ([`super::label`], 6- or
//! 26-connectivity as asked) is a ganglion. Per ganglion: voxel count,
//! volume `n a³`, bounding box, centroid, equivalent diameter (of the sphere
//! of equal volume, `(6V/π)^{1/3}`), and whether it touches a face of the
//! image (then it may continue outside the imaged field and its size is a
//! lower bound). The size distribution comes as a histogram in powers of
//! two of voxels and as a power-law tail fitted by maximum likelihood
//! ([`crate::fit::fit_power_law`], on voxel counts as integers, all
//! ganglia).

use std::f64::consts::PI;
use std::path::Path;

use serde::Serialize;

use super::label::{Connectivity, components};
use super::volume::Phase;
use super::{ImageError, Labels, Volume};
use crate::fit::{PowerLawFit, fit_power_law};

/// One ganglion.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ImagedGanglion {
    /// Number, 0-based, in order of the first voxel (storage order).
    pub id: usize,
    /// Voxels.
    pub n_voxels: u64,
    /// Volume, m³.
    pub volume_m3: f64,
    /// Diameter of the sphere of the same volume, m.
    pub equivalent_diameter_m: f64,
    /// Centroid (voxel centres), m.
    pub centroid_m: [f64; 3],
    /// Smallest voxel coordinates `[x, y, z]`.
    pub bbox_min: [usize; 3],
    /// Largest voxel coordinates `[x, y, z]`.
    pub bbox_max: [usize; 3],
    /// True when a voxel lies on a face of the image.
    pub touches_face: bool,
}

/// One bin of the size histogram: ganglia of `lo ≤ n_voxels < hi`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SizeBin {
    /// Lower end, voxels (inclusive).
    pub lo_voxels: u64,
    /// Upper end, voxels (exclusive).
    pub hi_voxels: u64,
    /// Ganglia in the bin.
    pub count: usize,
    /// Their share of the oil volume.
    pub volume_fraction: f64,
}

/// The analysis of one image.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ImageGanglia {
    /// 6 or 26.
    pub connectivity: usize,
    /// Voxel edge, m.
    pub voxel_size_m: f64,
    /// Pore-space voxels (pore, water and oil labels).
    pub n_pore_space_voxels: u64,
    /// Water voxels.
    pub n_water_voxels: u64,
    /// Oil voxels.
    pub n_oil_voxels: u64,
    /// Pore voxels of unassigned phase (the `pore_label`).
    pub n_unassigned_voxels: u64,
    /// Porosity of the image.
    pub porosity: f64,
    /// Oil over pore-space voxels.
    pub oil_saturation: f64,
    /// Water over pore-space voxels.
    pub water_saturation: f64,
    /// Ganglia touching a face of the image.
    pub n_touching_face: usize,
    /// Size histogram in powers of two.
    pub histogram: Vec<SizeBin>,
    /// The power-law tail, when at least [`crate::fit::MIN_TAIL`] ganglia
    /// allow one.
    pub size_fit: Option<PowerLawFit>,
    /// Every ganglion.
    pub ganglia: Vec<ImagedGanglion>,
}

/// Analyses the oil phase of `volume` (see the [module docs](self)).
/// `labels` must declare `oil_label`.
pub fn analyse(
    volume: &Volume,
    labels: &Labels,
    connectivity: Connectivity,
    source: &Path,
) -> Result<ImageGanglia, ImageError> {
    if labels.oil.is_none() {
        return Err(ImageError::bad_field(
            source,
            "oil_label",
            "not given",
            "the label of the non-aqueous phase (--oil-label or the sidecar key)",
        ));
    }
    let phases = labels.phases(volume, source)?;
    let dims = volume.dims();
    let a = volume.voxel_size_m();
    let count = |p: Phase| phases.iter().filter(|&&x| x == p as u8).count() as u64;
    let (n_water, n_oil, n_unassigned) =
        (count(Phase::Water), count(Phase::Oil), count(Phase::Pore));
    let n_space = n_water + n_oil + n_unassigned;
    let oil: Vec<bool> = phases.iter().map(|&p| p == Phase::Oil as u8).collect();
    drop(phases);
    let comps = components(&oil, dims, connectivity);
    drop(oil);
    let n = comps.count;
    let mut n_vox = vec![0u64; n];
    let mut sum = vec![[0u64; 3]; n];
    let mut lo = vec![[usize::MAX; 3]; n];
    let mut hi = vec![[0usize; 3]; n];
    for (i, &l) in comps.labels.iter().enumerate() {
        if l == 0 {
            continue;
        }
        let g = (l - 1) as usize;
        let c = volume.coords(i);
        n_vox[g] += 1;
        for k in 0..3 {
            sum[g][k] += c[k] as u64;
            lo[g][k] = lo[g][k].min(c[k]);
            hi[g][k] = hi[g][k].max(c[k]);
        }
    }
    let ganglia: Vec<ImagedGanglion> = (0..n)
        .map(|g| {
            let v = n_vox[g] as f64 * a * a * a;
            ImagedGanglion {
                id: g,
                n_voxels: n_vox[g],
                volume_m3: v,
                equivalent_diameter_m: (6.0 * v / PI).cbrt(),
                centroid_m: [0, 1, 2].map(|k| (sum[g][k] as f64 / n_vox[g] as f64 + 0.5) * a),
                bbox_min: lo[g],
                bbox_max: hi[g],
                touches_face: (0..3).any(|k| lo[g][k] == 0 || hi[g][k] + 1 == dims[k]),
            }
        })
        .collect();
    let mut histogram: Vec<SizeBin> = Vec::new();
    let max = n_vox.iter().copied().max().unwrap_or(0);
    let mut b = 1u64;
    while b <= max {
        let in_bin = |x: &u64| *x >= b && *x < 2 * b;
        let count = n_vox.iter().filter(|x| in_bin(x)).count();
        let vol: u64 = n_vox.iter().filter(|x| in_bin(x)).sum();
        histogram.push(SizeBin {
            lo_voxels: b,
            hi_voxels: 2 * b,
            count,
            volume_fraction: if n_oil > 0 {
                vol as f64 / n_oil as f64
            } else {
                0.0
            },
        });
        b *= 2;
    }
    let sizes: Vec<f64> = n_vox.iter().map(|&x| x as f64).collect();
    let size_fit = fit_power_law(&sizes, true).ok();
    let frac = |x: u64| {
        if n_space > 0 {
            x as f64 / n_space as f64
        } else {
            0.0
        }
    };
    Ok(ImageGanglia {
        connectivity: connectivity.count(),
        voxel_size_m: a,
        n_pore_space_voxels: n_space,
        n_water_voxels: n_water,
        n_oil_voxels: n_oil,
        n_unassigned_voxels: n_unassigned,
        porosity: n_space as f64 / volume.len() as f64,
        oil_saturation: frac(n_oil),
        water_saturation: frac(n_water),
        n_touching_face: ganglia.iter().filter(|g| g.touches_face).count(),
        histogram,
        size_fit,
        ganglia,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blobs_of_known_size_and_contact_are_counted_per_connectivity() {
        // Labels: 0 solid, 2 water, 3 oil. A 2×2×2 oil cube (8 voxels) at
        // the origin corner, a single oil voxel touching the cube along an
        // edge only, and a 1×1×3 bar apart. By the definitions of the
        // neighbourhoods: 6-connectivity sees 3 ganglia (8, 1, 3 voxels),
        // 26-connectivity 2 (9, 3). Saturation: 12 oil voxels over the pore
        // space (oil + water), here every non-oil voxel is water.
        let dims = [8, 8, 8];
        let mut values = vec![2u16; 512];
        let idx = |x: usize, y: usize, z: usize| x + 8 * (y + 8 * z);
        for z in 0..2 {
            for y in 0..2 {
                for x in 0..2 {
                    values[idx(x, y, z)] = 3;
                }
            }
        }
        values[idx(2, 2, 1)] = 3; // shares only the edge x=2,y=2 with the cube
        for z in 4..7 {
            values[idx(5, 5, z)] = 3;
        }
        values[idx(7, 0, 7)] = 0;
        let vol = Volume::new(dims, 1e-6, values, Path::new("g")).unwrap();
        let labels = Labels {
            solid: Some(0),
            pore: None,
            water: Some(2),
            oil: Some(3),
        };
        let six = analyse(&vol, &labels, Connectivity::Faces, Path::new("g")).unwrap();
        let sizes: Vec<u64> = six.ganglia.iter().map(|g| g.n_voxels).collect();
        assert_eq!(sizes, vec![8, 1, 3]);
        let corners = analyse(&vol, &labels, Connectivity::Corners, Path::new("g")).unwrap();
        let sizes: Vec<u64> = corners.ganglia.iter().map(|g| g.n_voxels).collect();
        assert_eq!(sizes, vec![9, 3]);
        assert_eq!(six.n_oil_voxels, 12);
        assert!((six.oil_saturation - 12.0 / 511.0).abs() < 1e-15);
        assert_eq!(six.ganglia[2].bbox_min, [5, 5, 4]);
        assert_eq!(six.ganglia[2].bbox_max, [5, 5, 6]);
        assert!(six.ganglia[0].touches_face && !six.ganglia[2].touches_face);
        // Equivalent diameter of 8 voxels of 1 µm: (6·8/π)^{1/3} µm (sphere
        // of equal volume).
        let d = (48.0 / PI).cbrt() * 1e-6;
        assert!((six.ganglia[0].equivalent_diameter_m - d).abs() < 1e-18);
        let e = analyse(
            &vol,
            &Labels::default(),
            Connectivity::Faces,
            Path::new("g"),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("oil_label"), "{e}");
    }
}
