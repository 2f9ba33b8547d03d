//! The 3-D label array and the meaning of its labels.

use std::path::Path;

use super::ImageError;

/// The largest number of voxels a volume may hold (2³²−1, so that voxel
/// indices fit in `u32`).
pub const MAX_VOXELS: usize = u32::MAX as usize;

/// A segmented 3-D image: one label value per voxel, x fastest, then y,
/// then z (see the [module docs](super)).
#[derive(Clone, Debug, PartialEq)]
pub struct Volume {
    dims: [usize; 3],
    voxel_size_m: f64,
    values: Vec<u16>,
}

impl Volume {
    /// A volume of dimensions `[nx, ny, nz]` with edge length `voxel_size_m`
    /// (m) holding `values` in storage order. `source` names the image in
    /// errors.
    pub fn new(
        dims: [usize; 3],
        voxel_size_m: f64,
        values: Vec<u16>,
        source: &Path,
    ) -> Result<Volume, ImageError> {
        let n = check_dims(dims, source)?;
        check_voxel_size(voxel_size_m, source)?;
        if values.len() != n {
            return Err(ImageError::bad_field(
                source,
                "voxel count",
                values.len(),
                format!("{n} (= {} × {} × {})", dims[0], dims[1], dims[2]),
            ));
        }
        Ok(Volume {
            dims,
            voxel_size_m,
            values,
        })
    }

    /// Dimensions `[nx, ny, nz]` in voxels.
    pub fn dims(&self) -> [usize; 3] {
        self.dims
    }

    /// Edge length of a voxel, m.
    pub fn voxel_size_m(&self) -> f64 {
        self.voxel_size_m
    }

    /// The label values in storage order.
    pub fn values(&self) -> &[u16] {
        &self.values
    }

    /// Number of voxels.
    pub fn len(&self) -> usize {
        self.values.len()
    }

    /// Always false: a volume holds at least one voxel.
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// Storage index of voxel `(x, y, z)`.
    #[inline]
    pub fn index(&self, x: usize, y: usize, z: usize) -> usize {
        x + self.dims[0] * (y + self.dims[1] * z)
    }

    /// Coordinates `[x, y, z]` of storage index `i`.
    #[inline]
    pub fn coords(&self, i: usize) -> [usize; 3] {
        coords(self.dims, i)
    }
}

/// Coordinates `[x, y, z]` of storage index `i` in a volume of `dims`.
#[inline]
pub fn coords(dims: [usize; 3], i: usize) -> [usize; 3] {
    let x = i % dims[0];
    let r = i / dims[0];
    [x, r % dims[1], r / dims[1]]
}

/// Checks dimensions (each ≥ 1, product ≤ [`MAX_VOXELS`]) and returns the
/// voxel count.
pub fn check_dims(dims: [usize; 3], source: &Path) -> Result<usize, ImageError> {
    let text = format!("[{}, {}, {}]", dims[0], dims[1], dims[2]);
    if dims.contains(&0) {
        return Err(ImageError::bad_field(
            source,
            "dimensions",
            text,
            "every dimension at least 1",
        ));
    }
    match dims[0]
        .checked_mul(dims[1])
        .and_then(|p| p.checked_mul(dims[2]))
    {
        Some(n) if n <= MAX_VOXELS => Ok(n),
        _ => Err(ImageError::bad_field(
            source,
            "dimensions",
            text,
            format!("at most {MAX_VOXELS} voxels in all"),
        )),
    }
}

/// Checks a voxel size: finite and positive.
pub fn check_voxel_size(voxel_size_m: f64, source: &Path) -> Result<(), ImageError> {
    if voxel_size_m.is_finite() && voxel_size_m > 0.0 {
        Ok(())
    } else {
        Err(ImageError::bad_field(
            source,
            "voxel_size_m",
            voxel_size_m,
            "a finite length > 0 in metres",
        ))
    }
}

/// What a voxel holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[repr(u8)]
pub enum Phase {
    /// Rock (grain).
    Solid = 0,
    /// Pore space of an image segmented into pore and solid only.
    Pore = 1,
    /// Pore space holding the aqueous phase.
    Water = 2,
    /// Pore space holding the non-aqueous phase (oil, gas, CO2).
    Oil = 3,
}

/// The meaning of each label value. A label left `None` does not occur in
/// the image; a voxel holding a value not listed here is an error
/// ([`ImageError::UnknownLabel`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Labels {
    /// Value of solid voxels (`solid_label`).
    pub solid: Option<u16>,
    /// Value of pore voxels (`pore_label`).
    pub pore: Option<u16>,
    /// Value of water-filled pore voxels (`water_label`).
    pub water: Option<u16>,
    /// Value of voxels filled with the non-aqueous phase (`oil_label`).
    pub oil: Option<u16>,
}

impl Default for Labels {
    /// Solid 0, pore 1 (a binary segmentation).
    fn default() -> Labels {
        Labels {
            solid: Some(0),
            pore: Some(1),
            water: None,
            oil: None,
        }
    }
}

impl Labels {
    fn pairs(&self) -> [(&'static str, Option<u16>, Phase); 4] {
        [
            ("solid_label", self.solid, Phase::Solid),
            ("pore_label", self.pore, Phase::Pore),
            ("water_label", self.water, Phase::Water),
            ("oil_label", self.oil, Phase::Oil),
        ]
    }

    /// Checks that no two phases share a value and at least one pore-space
    /// label is given; `source` names the file in errors.
    pub fn validate(&self, source: &Path) -> Result<(), ImageError> {
        let pairs = self.pairs();
        for (i, (key, v, _)) in pairs.iter().enumerate() {
            for (other, w, _) in &pairs[i + 1..] {
                if let (Some(v), Some(w)) = (v, w)
                    && v == w
                {
                    return Err(ImageError::bad_field(
                        source,
                        *other,
                        w,
                        format!("a value different from {key} = {v}"),
                    ));
                }
            }
        }
        if self.pore.is_none() && self.water.is_none() && self.oil.is_none() {
            return Err(ImageError::bad_field(
                source,
                "pore_label",
                "none",
                "at least one of pore_label, water_label, oil_label",
            ));
        }
        Ok(())
    }

    /// The phase table: `table[v]` is the phase of value `v`, `None` if
    /// undeclared.
    fn table(&self) -> Vec<Option<Phase>> {
        let mut table = vec![None; 1 << 16];
        for (_, v, phase) in self.pairs() {
            if let Some(v) = v {
                table[v as usize] = Some(phase);
            }
        }
        table
    }

    fn declared(&self) -> String {
        let parts: Vec<String> = self
            .pairs()
            .iter()
            .filter_map(|(k, v, _)| v.map(|v| format!("{k} = {v}")))
            .collect();
        parts.join(", ")
    }

    /// The phase of every voxel of `volume` (as `Phase as u8`), or the
    /// first voxel (in storage order) whose value is not declared.
    pub fn phases(&self, volume: &Volume, source: &Path) -> Result<Vec<u8>, ImageError> {
        self.validate(source)?;
        let table = self.table();
        let mut out = Vec::with_capacity(volume.len());
        for (i, &v) in volume.values().iter().enumerate() {
            match table[v as usize] {
                Some(p) => out.push(p as u8),
                None => {
                    return Err(ImageError::UnknownLabel {
                        path: source.to_path_buf(),
                        value: i64::from(v),
                        voxel: volume.coords(i),
                        declared: self.declared(),
                    });
                }
            }
        }
        Ok(out)
    }

    /// The pore space of `volume`: `true` where a voxel holds pore, water or
    /// the non-aqueous phase. Errors as [`Labels::phases`].
    pub fn pore_space(&self, volume: &Volume, source: &Path) -> Result<Vec<bool>, ImageError> {
        Ok(self
            .phases(volume, source)?
            .into_iter()
            .map(|p| p != Phase::Solid as u8)
            .collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn storage_order_is_x_fastest() {
        let v = Volume::new([3, 4, 5], 1e-6, vec![0; 60], Path::new("t")).unwrap();
        assert_eq!(v.index(2, 3, 4), 59);
        assert_eq!(v.coords(v.index(1, 2, 3)), [1, 2, 3]);
    }

    #[test]
    fn undeclared_label_is_located() {
        let mut values = vec![0u16; 24];
        values[2 * (1 + 3 * 3)] = 7; // voxel (0, 1, 3)
        let v = Volume::new([2, 3, 4], 1e-6, values, Path::new("img.raw")).unwrap();
        let e = Labels::default()
            .phases(&v, Path::new("img.raw"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("img.raw") && e.contains("label 7"), "{e}");
        assert!(e.contains("x=0, y=1, z=3"), "{e}");
    }

    #[test]
    fn bad_dims_and_voxel_size_are_refused() {
        assert!(Volume::new([0, 1, 1], 1e-6, vec![], Path::new("a")).is_err());
        assert!(Volume::new([1, 1, 1], -1.0, vec![0], Path::new("a")).is_err());
        assert!(Volume::new([1, 1, 2], 1e-6, vec![0], Path::new("a")).is_err());
        let dup = Labels {
            solid: Some(1),
            ..Labels::default()
        };
        assert!(dup.validate(Path::new("a")).is_err());
    }
}
