//! The imaged non-aqueous phase as files: `imaged-ganglia.csv` (one row per
//! ganglion) and `imaged-phase.json` (saturations, counts, histogram,
//! power-law tail; without the ganglion list), and the figure that sets the
//! imaged ganglion sizes beside a run's ([`comparison_svg`]).
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

/// Complementary cumulative distribution of `volumes`: for each distinct
/// volume V (ascending), the fraction of ganglia of volume ≥ V.
pub fn volume_ccdf(volumes: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut v: Vec<f64> = volumes.iter().copied().filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    let mut i = 0;
    while i < v.len() {
        xs.push(v[i]);
        ys.push((v.len() - i) as f64 / n);
        let x = v[i];
        while i < v.len() && v[i] == x {
            i += 1;
        }
    }
    (xs, ys)
}

/// The figure `ganglia-imaged-vs-simulated.svg`: the fraction of ganglia at
/// least as large as V against V (log–log), imaged and simulated, with both
/// saturations in the legend. `simulated_volumes_m3` are the trapped
/// ganglia of a run (`ganglia.csv`); `simulated_snr` its residual
/// saturation.
pub fn comparison_svg(
    imaged: &ImageGanglia,
    simulated_volumes_m3: &[f64],
    simulated_snr: Option<f64>,
) -> Result<String, crate::plot::PlotError> {
    use crate::plot::{PlotSpec, Scale, Series, SeriesStyle, render_svg};
    let vols: Vec<f64> = imaged.ganglia.iter().map(|g| g.volume_m3).collect();
    let (xi, yi) = volume_ccdf(&vols);
    let (xs, ys) = volume_ccdf(simulated_volumes_m3);
    let snr = simulated_snr.map_or("n/a".to_string(), |s| format!("{s:.3}"));
    let spec = PlotSpec {
        title: "Ganglion sizes: imaged and simulated".into(),
        x_label: "ganglion volume V (m³)".into(),
        y_label: "fraction of ganglia with volume ≥ V".into(),
        x_scale: Scale::Log,
        y_scale: Scale::Log,
        x_range: None,
        y_range: None,
        series: vec![
            Series::line(
                format!(
                    "imaged, {} ganglia, S_{{o}} = {:.3}",
                    vols.len(),
                    imaged.oil_saturation
                ),
                xi,
                yi,
            )
            .with_style(SeriesStyle::LineMarkers),
            Series::line(
                format!(
                    "simulated, {} ganglia, S_{{nr}} = {snr}",
                    simulated_volumes_m3.len()
                ),
                xs,
                ys,
            )
            .with_style(SeriesStyle::LineMarkers),
        ],
    };
    render_svg(&spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ccdf_counts_ganglia_at_least_as_large() {
        // Definition of the complementary cumulative distribution:
        // volumes 1, 2, 2, 5 give P(V ≥ 1) = 1, P(V ≥ 2) = 3/4, P(V ≥ 5) = 1/4.
        let (x, y) = volume_ccdf(&[2.0, 5.0, 1.0, 2.0]);
        assert_eq!(x, vec![1.0, 2.0, 5.0]);
        assert_eq!(y, vec![1.0, 0.75, 0.25]);
    }
}
