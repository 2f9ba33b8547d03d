//! The result files of a simulated mercury injection: `micp.csv`,
//! `micp.svg` (capillary pressure against mercury saturation, with a
//! measured curve overlaid when given) and `pore-throat-sizes.svg` (the
//! Washburn-radius distribution `dS/dlog₁₀r`). Each file is written
//! atomically.

use std::fmt::Write as _;
use std::path::Path;

use network_core::io::atomic::write_atomic;
use network_core::run::angle_fit::{AngleFit, AngleTrial};
use network_core::run::micp::{MeasuredMicp, MicpCurve, PA_PER_PSI};

use crate::ReportError;
use crate::plot::{PALETTE, PlotSpec, Scale, Series, SeriesStyle, render_svg};

/// The `micp.csv` text: one row per pressure step, columns `pressure_pa`,
/// `pressure_psi`, `mercury_saturation` (fraction of the pore volume),
/// `throat_radius_m` (Washburn radius `2σ|cos θ|/P`) and `ds_dlog10_r`
/// (mercury entered since the previous row per decade of radius, fraction
/// of the pore volume; 0 on the first row). A comment header gives the
/// constants used.
pub fn micp_csv(curve: &MicpCurve) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# simulated mercury injection: sigma {} N/m, contact angle {} deg through mercury, porosity {}",
        curve.spec.sigma_n_per_m, curve.spec.contact_angle_deg, curve.porosity
    );
    s.push_str("pressure_pa,pressure_psi,mercury_saturation,throat_radius_m,ds_dlog10_r\n");
    for p in &curve.points {
        let _ = writeln!(
            s,
            "{},{},{},{},{}",
            p.pressure_pa,
            p.pressure_pa / PA_PER_PSI,
            p.mercury_saturation,
            p.throat_radius_m,
            p.ds_dlog10_r
        );
    }
    s
}

/// The capillary-pressure chart: pressure (psi, log scale) against mercury
/// saturation, the simulated curve as a line and the measured one, if
/// given, as markers.
pub fn micp_chart(curve: &MicpCurve, measured: Option<&MeasuredMicp>, title: &str) -> PlotSpec {
    let mut series = vec![
        Series::line(
            "simulated",
            curve.points.iter().map(|p| p.mercury_saturation).collect(),
            curve
                .points
                .iter()
                .map(|p| p.pressure_pa / PA_PER_PSI)
                .collect(),
        )
        .with_colour(PALETTE[0]),
    ];
    if let Some(m) = measured {
        series.push(
            Series::line(
                "measured",
                m.mercury_saturation.clone(),
                m.pressure_pa.iter().map(|p| p / PA_PER_PSI).collect(),
            )
            .with_style(SeriesStyle::Markers)
            .with_colour(PALETTE[1]),
        );
    }
    PlotSpec {
        title: title.into(),
        x_label: "Mercury saturation S_{Hg} (fraction of pore volume)".into(),
        y_label: "Injection pressure (psi)".into(),
        y_scale: Scale::Log,
        x_range: Some((0.0, 1.0)),
        series,
        ..PlotSpec::default()
    }
}

/// The pore-throat size chart: `dS/dlog₁₀r` against the Washburn radius
/// (µm, log scale).
pub fn size_chart(curve: &MicpCurve) -> PlotSpec {
    let pts: Vec<_> = curve.points.iter().skip(1).collect();
    PlotSpec {
        title: "Pore-throat size distribution (mercury injection)".into(),
        x_label: "Pore-throat radius r = 2σ|cos θ|/P (µm)".into(),
        y_label: "dS_{Hg}/dlog_{10}r (fraction of pore volume per decade)".into(),
        x_scale: Scale::Log,
        series: vec![
            Series::line(
                "simulated",
                pts.iter().map(|p| p.throat_radius_m * 1e6).collect(),
                pts.iter().map(|p| p.ds_dlog10_r).collect(),
            )
            .with_colour(PALETTE[0]),
        ],
        ..PlotSpec::default()
    }
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), ReportError> {
    let path = dir.join(name);
    write_atomic(&path, bytes).map_err(|source| ReportError::Io { path, source })
}

/// Writes `micp.csv`, `micp.svg` and `pore-throat-sizes.svg` into `dir`
/// (created if missing).
pub fn write_micp_files(
    dir: &Path,
    curve: &MicpCurve,
    measured: Option<&MeasuredMicp>,
) -> Result<(), ReportError> {
    std::fs::create_dir_all(dir).map_err(|source| ReportError::Io {
        path: dir.to_path_buf(),
        source,
    })?;
    write(dir, "micp.csv", micp_csv(curve).as_bytes())?;
    let svg = |name: &str, spec: &PlotSpec| {
        render_svg(spec).map_err(|source| ReportError::Plot {
            file: name.into(),
            source,
        })
    };
    let chart = micp_chart(curve, measured, "Mercury injection capillary pressure");
    write(dir, "micp.svg", svg("micp.svg", &chart)?.as_bytes())?;
    let sizes = size_chart(curve);
    write(
        dir,
        "pore-throat-sizes.svg",
        svg("pore-throat-sizes.svg", &sizes)?.as_bytes(),
    )?;
    Ok(())
}

/// Writes the files of a calibration into `dir`: `calibration.json` (the
/// fitted factors, the misfit per data set, the thresholds' verdict and
/// the refusals), `calibration.svg` (measured against simulated MICP),
/// with waterflood data `angle-scan.csv` and `angle-fit.svg` (the
/// contact-angle fit), and,
/// from the calibrated network's MICP, `micp.csv` and
/// `pore-throat-sizes.svg`.
pub fn write_calibration_files(
    dir: &Path,
    cal: &network_core::run::calibrate::Calibration,
    measured: &MeasuredMicp,
) -> Result<(), ReportError> {
    std::fs::create_dir_all(dir).map_err(|source| ReportError::Io {
        path: dir.to_path_buf(),
        source,
    })?;
    let mut summary = serde_json::to_value(cal).unwrap_or(serde_json::Value::Null);
    if let Some(m) = summary.as_object_mut() {
        // The curve is in micp.csv, the angles tried in angle-scan.csv.
        m.remove("micp");
        if let Some(w) = m.get_mut("wettability").and_then(|w| w.as_object_mut()) {
            w.remove("trials");
        }
    }
    let json = serde_json::to_string_pretty(&summary).unwrap_or_default() + "\n";
    write(dir, "calibration.json", json.as_bytes())?;
    write(dir, "micp.csv", micp_csv(&cal.micp).as_bytes())?;
    let chart = micp_chart(
        &cal.micp,
        Some(measured),
        "Calibrated network against the measured MICP curve",
    );
    let svg = render_svg(&chart).map_err(|source| ReportError::Plot {
        file: "calibration.svg".into(),
        source,
    })?;
    write(dir, "calibration.svg", svg.as_bytes())?;
    let sizes = render_svg(&size_chart(&cal.micp)).map_err(|source| ReportError::Plot {
        file: "pore-throat-sizes.svg".into(),
        source,
    })?;
    write(dir, "pore-throat-sizes.svg", sizes.as_bytes())?;
    if let Some(fit) = &cal.wettability {
        write(dir, "angle-scan.csv", angle_scan_csv(fit).as_bytes())?;
        let svg = render_svg(&angle_chart(fit)).map_err(|source| ReportError::Plot {
            file: "angle-fit.svg".into(),
            source,
        })?;
        write(dir, "angle-fit.svg", svg.as_bytes())?;
    }
    Ok(())
}

/// The `angle-scan.csv` text of a contact-angle fit: one row per advancing
/// centre tried, sorted by centre, with the simulated residual non-wetting
/// saturation (and its trapped part), the Amott water index and the
/// objective; `fitted` is 1 on the row kept.
pub fn angle_scan_csv(fit: &AngleFit) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# advancing range width {} deg, receding range [{}, {}] deg, Swi {}",
        fit.advancing_contact_angle_deg[1] - fit.advancing_contact_angle_deg[0],
        fit.receding_contact_angle_deg[0],
        fit.receding_contact_angle_deg[1],
        fit.initial_water_saturation
    );
    s.push_str(
        "advancing_centre_deg,advancing_min_deg,advancing_max_deg,residual_nonwetting_saturation,trapped_nonwetting_saturation,amott_water_index,objective,fitted\n",
    );
    let half = 0.5 * (fit.advancing_contact_angle_deg[1] - fit.advancing_contact_angle_deg[0]);
    let centre = fit.advancing_centre_deg;
    for t in sorted_trials(fit) {
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{}",
            t.advancing_centre_deg,
            t.advancing_centre_deg - half,
            t.advancing_centre_deg + half,
            t.residual_nonwetting_saturation,
            t.trapped_nonwetting_saturation,
            t.amott_water_index,
            t.objective,
            u8::from(t.advancing_centre_deg == centre)
        );
    }
    s
}

fn sorted_trials(fit: &AngleFit) -> Vec<AngleTrial> {
    let mut v = fit.trials.clone();
    v.sort_by(|a, b| a.advancing_centre_deg.total_cmp(&b.advancing_centre_deg));
    v.dedup_by(|a, b| a.advancing_centre_deg == b.advancing_centre_deg);
    v
}

/// The contact-angle chart: simulated residual non-wetting saturation and
/// Amott water index against the centre of the advancing range (every
/// centre tried), the measured values as dashed horizontal lines and the
/// fitted centre as markers.
pub fn angle_chart(fit: &AngleFit) -> PlotSpec {
    let trials = sorted_trials(fit);
    let x: Vec<f64> = trials.iter().map(|t| t.advancing_centre_deg).collect();
    let (x0, x1) = (
        x.first().copied().unwrap_or(0.0),
        x.last().copied().unwrap_or(180.0),
    );
    let c = fit.advancing_centre_deg;
    let mut series = vec![
        Series::line(
            "S_{nr} simulated",
            x.clone(),
            trials
                .iter()
                .map(|t| t.residual_nonwetting_saturation)
                .collect(),
        )
        .with_colour(PALETTE[0]),
        Series::line(
            "I_{w} simulated",
            x,
            trials.iter().map(|t| t.amott_water_index).collect(),
        )
        .with_colour(PALETTE[1]),
    ];
    if let Some(m) = fit.measured_residual_nonwetting_saturation {
        series.push(
            Series::line("S_{nr} measured", vec![x0, x1], vec![m, m])
                .with_style(SeriesStyle::Dashed)
                .with_colour(PALETTE[0]),
        );
    }
    if let Some(m) = fit.measured_amott_water_index {
        series.push(
            Series::line("I_{w} measured", vec![x0, x1], vec![m, m])
                .with_style(SeriesStyle::Dashed)
                .with_colour(PALETTE[1]),
        );
    }
    series.push(
        Series::line(
            "fitted",
            vec![c, c],
            vec![fit.residual_nonwetting_saturation, fit.amott_water_index],
        )
        .with_style(SeriesStyle::Markers)
        .with_colour(PALETTE[2]),
    );
    PlotSpec {
        title: "Advancing contact angle fitted to the waterflood data".into(),
        x_label: "Centre of the advancing contact-angle range (degrees, through water)".into(),
        y_label: "S_{nr} or I_{w} (fraction)".into(),
        y_range: Some((0.0, 1.0)),
        series,
        ..PlotSpec::default()
    }
}

/// The `pore-shape-candidates.csv` text of a pore-shape calibration: one
/// row per Weibull shape tried, with its factors, misfits, objective and
/// verdict; `best` is 1 on the row kept.
pub fn shape_candidates_csv(
    cands: &[network_core::run::calibrate::ShapeCandidate],
    best: usize,
) -> String {
    let mut s = String::from(
        "pore_radius_shape,radius_factor,length_factor,porosity_misfit,permeability_log10_misfit,micp_rms_misfit,objective,accepted,best\n",
    );
    for (i, c) in cands.iter().enumerate() {
        let k = &c.calibration;
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{}",
            c.pore_radius_shape,
            k.radius_factor,
            k.length_factor,
            k.porosity_misfit,
            k.permeability_log10_misfit,
            k.micp_rms_misfit,
            k.objective(),
            k.accepted,
            u8::from(i == best)
        );
    }
    s
}

/// Writes `pore-shape-candidates.csv` into `dir` (created if missing).
pub fn write_shape_candidates(
    dir: &Path,
    cands: &[network_core::run::calibrate::ShapeCandidate],
    best: usize,
) -> Result<(), ReportError> {
    std::fs::create_dir_all(dir).map_err(|source| ReportError::Io {
        path: dir.to_path_buf(),
        source,
    })?;
    write(
        dir,
        "pore-shape-candidates.csv",
        shape_candidates_csv(cands, best).as_bytes(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use network_core::run::micp::{MicpPoint, MicpSpec};

    fn curve() -> MicpCurve {
        MicpCurve {
            spec: MicpSpec::default(),
            points: vec![
                MicpPoint {
                    pressure_pa: 1e4,
                    mercury_saturation: 0.0,
                    throat_radius_m: 7.4e-5,
                    ds_dlog10_r: 0.0,
                },
                MicpPoint {
                    pressure_pa: 1e5,
                    mercury_saturation: 0.5,
                    throat_radius_m: 7.4e-6,
                    ds_dlog10_r: 0.5,
                },
            ],
            porosity: 0.2,
            first_entry_pa: Some(2e4),
        }
    }

    #[test]
    fn csv_has_one_row_per_step_and_psi_column() {
        let text = micp_csv(&curve());
        let rows: Vec<&str> = text.lines().filter(|l| !l.starts_with('#')).collect();
        assert_eq!(rows.len(), 3);
        // 1e5 Pa / 6894.757 Pa/psi = 14.5038 psi.
        let psi: f64 = rows[2].split(',').nth(1).unwrap().parse().unwrap();
        assert!((psi - 14.503_773_8).abs() < 1e-6, "{psi}");
    }

    #[test]
    fn chart_overlays_the_measured_curve() {
        let m = MeasuredMicp {
            pressure_pa: vec![2e4, 5e4],
            mercury_saturation: vec![0.1, 0.4],
        };
        let spec = micp_chart(&curve(), Some(&m), "t");
        assert_eq!(spec.series.len(), 2);
        assert_eq!(spec.series[1].label, "measured");
        let svg = render_svg(&spec).unwrap();
        assert!(svg.contains("measured"));
    }
}
