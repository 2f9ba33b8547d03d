//! The imaged non-aqueous phase as files: `imaged-ganglia.csv` (one row per
//! ganglion) and `imaged-phase.json` (saturations, counts, histogram,
//! power-law tail; without the ganglion list).
//!
//! `imaged-ganglia.csv` columns: `id`, `voxels`, `volume_m3`,
//! `equivalent_diameter_m`, `x_m,y_m,z_m` (centroid), `x_min,y_min,z_min`,
//! `x_max,y_max,z_max` (bounding box, voxel indices, inclusive),
//! `touches_face` (`true` or `false`). Numbers are written with the
//! shortest text that reads back to the same bits.

use std::fmt::Write as _;
use std::path::Path;

use network_core::image::ganglia::ImageGanglia;
use network_core::io::atomic::write_atomic;

use crate::error::ReportError;

/// The CSV text of the ganglia.
pub fn ganglia_csv(g: &ImageGanglia) -> String {
    let mut s = String::from(
        "id,voxels,volume_m3,equivalent_diameter_m,x_m,y_m,z_m,x_min,y_min,z_min,x_max,y_max,z_max,touches_face\n",
    );
    for r in &g.ganglia {
        let _ = writeln!(
            s,
            "{},{},{:?},{:?},{:?},{:?},{:?},{},{},{},{},{},{},{}",
            r.id,
            r.n_voxels,
            r.volume_m3,
            r.equivalent_diameter_m,
            r.centroid_m[0],
            r.centroid_m[1],
            r.centroid_m[2],
            r.bbox_min[0],
            r.bbox_min[1],
            r.bbox_min[2],
            r.bbox_max[0],
            r.bbox_max[1],
            r.bbox_max[2],
            r.touches_face
        );
    }
    s
}

/// The JSON summary (everything but the ganglion list).
pub fn phase_json(g: &ImageGanglia) -> Result<String, serde_json::Error> {
    let mut v = serde_json::to_value(g)?;
    if let Some(obj) = v.as_object_mut() {
        obj.remove("ganglia");
        obj.insert("n_ganglia".into(), g.ganglia.len().into());
    }
    serde_json::to_string_pretty(&v)
}

/// Writes both files into the folder `dir` (created if missing), each
/// atomically.
pub fn write_image_ganglia(dir: &Path, g: &ImageGanglia) -> Result<(), ReportError> {
    let io = |path: &Path| {
        let path = path.to_path_buf();
        move |source| ReportError::Io { path, source }
    };
    std::fs::create_dir_all(dir).map_err(io(dir))?;
    let csv = dir.join("imaged-ganglia.csv");
    write_atomic(&csv, ganglia_csv(g).as_bytes()).map_err(io(&csv))?;
    let json = dir.join("imaged-phase.json");
    let text = phase_json(g).map_err(|e| ReportError::Io {
        path: json.clone(),
        source: std::io::Error::other(e),
    })?;
    write_atomic(&json, text.as_bytes()).map_err(io(&json))?;
    Ok(())
}
