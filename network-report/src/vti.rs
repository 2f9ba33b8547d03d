//! The regions of an extracted image as a VTK XML ImageData file (`.vti`)
//! for a 3-D viewer.
//!
//! One cell per voxel; the cell array `region` (UInt32) holds the region of
//! each voxel: 0 for solid, `k ≥ 1` for the pore `k − 1` of the extracted
//! network (the network's pore ids are 0-based). Origin at 0, spacing the
//! voxel size in metres, so the file overlays the network's `.vtp` output.
//! The data are raw little-endian bytes in one appended block with a
//! UInt64 byte count (VTK XML file format, Kitware, "VTK File Formats").

use std::fmt::Write as _;

use crate::error::VtkError;

/// The `.vti` bytes for `regions` (storage order x fastest) of an image of
/// `dims` voxels with edge `voxel_size_m`. The bytes depend only on the
/// inputs.
pub fn regions_vti(
    dims: [usize; 3],
    voxel_size_m: f64,
    regions: &[u32],
) -> Result<Vec<u8>, VtkError> {
    let n = dims[0] * dims[1] * dims[2];
    if regions.len() != n {
        return Err(VtkError::LengthMismatch {
            what: "region labels",
            expected: n,
            found: regions.len(),
        });
    }
    let [nx, ny, nz] = dims;
    let a = voxel_size_m;
    let mut head = String::new();
    let _ = write!(
        head,
        "<?xml version=\"1.0\"?>\n<VTKFile type=\"ImageData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n\
<ImageData WholeExtent=\"0 {nx} 0 {ny} 0 {nz}\" Origin=\"0 0 0\" Spacing=\"{a:e} {a:e} {a:e}\">\n\
<Piece Extent=\"0 {nx} 0 {ny} 0 {nz}\">\n<CellData Scalars=\"region\">\n\
<DataArray type=\"UInt32\" Name=\"region\" NumberOfComponents=\"1\" format=\"appended\" offset=\"0\"/>\n\
</CellData>\n</Piece>\n</ImageData>\n<AppendedData encoding=\"raw\">\n_"
    );
    const TAIL: &[u8] = b"\n</AppendedData>\n</VTKFile>\n";
    let mut out = Vec::with_capacity(head.len() + 8 + 4 * n + TAIL.len());
    out.extend_from_slice(head.as_bytes());
    out.extend_from_slice(&((4 * n) as u64).to_le_bytes());
    for &r in regions {
        out.extend_from_slice(&r.to_le_bytes());
    }
    out.extend_from_slice(TAIL);
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_extent_and_block_length_match_the_image() {
        // A 3 × 2 × 1 image: point extent 0..3, 0..2, 0..1 and 6 cells of
        // 4 bytes (VTK XML format: extents count points, cells are voxels).
        let bytes = regions_vti([3, 2, 1], 2e-6, &[0, 1, 1, 2, 2, 0]).unwrap();
        let text = String::from_utf8_lossy(&bytes);
        assert!(text.contains("WholeExtent=\"0 3 0 2 0 1\""));
        assert!(text.contains("Spacing=\"2e-6 2e-6 2e-6\""));
        let mark = b"encoding=\"raw\">\n_";
        let at = bytes.windows(mark.len()).position(|w| w == mark).unwrap() + mark.len();
        let len = u64::from_le_bytes(bytes[at..at + 8].try_into().unwrap());
        assert_eq!(len, 24);
        assert_eq!(
            u32::from_le_bytes(bytes[at + 8 + 12..at + 8 + 16].try_into().unwrap()),
            2
        );
        assert!(regions_vti([3, 2, 1], 2e-6, &[0; 5]).is_err());
    }
}
