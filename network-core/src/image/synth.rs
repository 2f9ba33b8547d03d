//! Seeded synthetic rock images: a pack of overlapping spherical grains of
//! random radii.
//!
//! Grains are added one at a time by random sequential addition (Widom
//! 1966, "Random sequential addition of hard spheres to a volume", J. Chem.
//! Phys. 44:3888), here without the hard-core rejection, so grains overlap
//! freely (a Boolean model of spheres, as in Torquato 2002, *Random
//! Heterogeneous Materials*, Springer, ch. 3 — from memory): centres
//! uniform in the image extended by the largest radius on every side (so
//! the faces are no different from the interior), radii uniform in
//! `[radius_min, radius_max]` voxels. Addition stops at the first grain
//! that brings the pore fraction to the target or below it. Grain `k`'s
//! centre and radius come from counter-based draws
//! ([`crate::numeric::unit_hash`]) of `(seed, k)`, so the image depends only
//! on the spec.

use std::path::Path;

use super::{ImageError, Volume};
use crate::numeric::unit_hash;

/// Labels of the synthetic images: solid 0, pore 1.
pub const SOLID: u16 = 0;
/// See [`SOLID`].
pub const PORE: u16 = 1;

/// A synthetic image of overlapping spherical grains.
#[derive(Clone, Debug, PartialEq)]
pub struct GrainPackSpec {
    /// `[nx, ny, nz]`, voxels.
    pub dims: [usize; 3],
    /// Voxel edge, m.
    pub voxel_size_m: f64,
    /// Target porosity in (0, 1): grains are added until the pore fraction
    /// is at or below it.
    pub porosity: f64,
    /// Smallest grain radius, voxels (> 0).
    pub radius_min: f64,
    /// Largest grain radius, voxels (≥ `radius_min`).
    pub radius_max: f64,
    /// Seed of the draws.
    pub seed: u64,
}

impl GrainPackSpec {
    /// Checks the ranges; errors name the field (`source` names the origin
    /// of the spec, a file or the command line).
    pub fn validate(&self, source: &Path) -> Result<(), ImageError> {
        super::volume::check_dims(self.dims, source)?;
        super::volume::check_voxel_size(self.voxel_size_m, source)?;
        if !(self.porosity > 0.0 && self.porosity < 1.0) {
            return Err(ImageError::bad_field(
                source,
                "porosity",
                self.porosity,
                "in (0, 1)",
            ));
        }
        if !(self.radius_min.is_finite() && self.radius_min > 0.0) {
            return Err(ImageError::bad_field(
                source,
                "radius_min",
                self.radius_min,
                "a finite radius > 0 in voxels",
            ));
        }
        if !(self.radius_max.is_finite() && self.radius_max >= self.radius_min) {
            return Err(ImageError::bad_field(
                source,
                "radius_max",
                self.radius_max,
                format!("a finite radius >= radius_min = {}", self.radius_min),
            ));
        }
        Ok(())
    }
}

/// The image of `spec` and the number of grains placed.
pub fn grain_pack(spec: &GrainPackSpec, source: &Path) -> Result<(Volume, usize), ImageError> {
    spec.validate(source)?;
    let [nx, ny, nz] = spec.dims;
    let n = nx * ny * nz;
    let mut values = vec![PORE; n];
    let target = (spec.porosity * n as f64).floor() as usize;
    let mut n_pore = n;
    let span = spec.radius_max;
    let max_grains: u64 = 1 << 32;
    let mut k = 0u64;
    while n_pore > target {
        if k >= max_grains {
            return Err(ImageError::bad_field(
                source,
                "porosity",
                spec.porosity,
                format!("a porosity reached within {max_grains} grains"),
            ));
        }
        let u = |s: u64| unit_hash(spec.seed, s, k);
        let r = spec.radius_min + (spec.radius_max - spec.radius_min) * u(0);
        let c = [
            -span + u(1) * (nx as f64 + 2.0 * span),
            -span + u(2) * (ny as f64 + 2.0 * span),
            -span + u(3) * (nz as f64 + 2.0 * span),
        ];
        k += 1;
        // Voxel centres at integer + ½ within distance r of c.
        let lo = |d: usize| ((c[d] - r - 0.5).floor().max(0.0)) as usize;
        let hi =
            |d: usize, m: usize| ((c[d] + r - 0.5).ceil().min(m as f64 - 1.0)).max(-1.0) as i64;
        let (x1, y1, z1) = (hi(0, nx), hi(1, ny), hi(2, nz));
        if x1 < 0 || y1 < 0 || z1 < 0 {
            continue;
        }
        let r2 = r * r;
        for z in lo(2)..=z1 as usize {
            let dz = z as f64 + 0.5 - c[2];
            for y in lo(1)..=y1 as usize {
                let dy = y as f64 + 0.5 - c[1];
                let row = nx * (y + ny * z);
                for x in lo(0)..=x1 as usize {
                    let dx = x as f64 + 0.5 - c[0];
                    if dx * dx + dy * dy + dz * dz <= r2 && values[row + x] == PORE {
                        values[row + x] = SOLID;
                        n_pore -= 1;
                    }
                }
            }
        }
    }
    Ok((
        Volume::new(spec.dims, spec.voxel_size_m, values, source)?,
        k as usize,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn porosity_lands_just_below_target_and_is_seeded() {
        let spec = GrainPackSpec {
            dims: [40, 30, 20],
            voxel_size_m: 1e-6,
            porosity: 0.3,
            radius_min: 2.0,
            radius_max: 4.0,
            seed: 5,
        };
        let (v, n) = grain_pack(&spec, Path::new("spec")).unwrap();
        let phi = v.values().iter().filter(|&&x| x == PORE).count() as f64 / v.len() as f64;
        // The last grain covers at most (4/3)π 4.5³ ≈ 382 voxels (a ball of
        // radius r_max + ½ holds every voxel centre within r_max), i.e.
        // 382/24000 = 0.016 of the image (geometry).
        assert!(phi <= 0.3 && phi > 0.3 - 0.016, "{phi}");
        assert!(n > 10);
        let (again, _) = grain_pack(&spec, Path::new("spec")).unwrap();
        assert_eq!(v, again);
        let other = GrainPackSpec { seed: 6, ..spec };
        assert_ne!(grain_pack(&other, Path::new("spec")).unwrap().0, v);
    }

    #[test]
    fn bad_spec_is_refused() {
        let spec = GrainPackSpec {
            dims: [4, 4, 4],
            voxel_size_m: 1e-6,
            porosity: 1.2,
            radius_min: 2.0,
            radius_max: 1.0,
            seed: 5,
        };
        let e = grain_pack(&spec, Path::new("cli")).unwrap_err().to_string();
        assert!(e.contains("porosity = 1.2"), "{e}");
    }
}
