//! A measured mercury-injection curve from a CSV file.
//!
//! # Format
//!
//! Lines starting with `#` and blank lines are skipped. The first other
//! line is the header and names two columns, in this order:
//!
//! | column | meaning |
//! |---|---|
//! | `pressure_pa` or `pressure_psi` | injection pressure, in the unit the header names (> 0, strictly increasing) |
//! | `mercury_saturation` | mercury saturation, fraction of the pore volume, in [0, 1] |
//!
//! Pressures are converted to pascals (1 psi = 6894.757 Pa). At least two
//! rows are required. Every problem is reported with the file and the
//! 1-based line.

use std::path::{Path, PathBuf};

use crate::run::micp::{MeasuredMicp, PA_PER_PSI};

/// Why a measured curve could not be read.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum LabCurveError {
    /// The file could not be read.
    #[error("cannot read {}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// A line of the file is not what the format asks for.
    #[error("{}, line {line}: {message}", path.display())]
    Invalid {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// What is wrong.
        message: String,
    },
}

/// Reads a measured mercury-injection curve (see the module documentation
/// for the format).
pub fn read_measured_micp(path: &Path) -> Result<MeasuredMicp, LabCurveError> {
    let text = std::fs::read_to_string(path).map_err(|source| LabCurveError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    parse_measured_micp(&text, path)
}

/// Parses the text of a measured curve; `path` names it in errors.
pub fn parse_measured_micp(text: &str, path: &Path) -> Result<MeasuredMicp, LabCurveError> {
    let bad = |line: usize, message: String| LabCurveError::Invalid {
        path: path.to_path_buf(),
        line,
        message,
    };
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut scale = None;
    let mut pressure_pa = Vec::new();
    let mut saturation = Vec::new();
    let mut last_line = 0;
    for (i, raw) in text.lines().enumerate() {
        let line = i + 1;
        last_line = line;
        let l = raw.trim();
        if l.is_empty() || l.starts_with('#') {
            continue;
        }
        let fields: Vec<&str> = l.split(',').map(|f| f.trim().trim_matches('"')).collect();
        let Some(unit) = scale else {
            if fields.len() != 2 {
                return Err(bad(
                    line,
                    format!(
                        "the header `{l}` must name two columns: `pressure_pa` or `pressure_psi`, then `mercury_saturation`"
                    ),
                ));
            }
            scale = Some(match fields[0] {
                "pressure_pa" => 1.0,
                "pressure_psi" => PA_PER_PSI,
                other => {
                    return Err(bad(
                        line,
                        format!("first column `{other}`: expected `pressure_pa` or `pressure_psi`"),
                    ));
                }
            });
            if fields[1] != "mercury_saturation" {
                return Err(bad(
                    line,
                    format!(
                        "second column `{}`: expected `mercury_saturation` (a fraction of the pore volume)",
                        fields[1]
                    ),
                ));
            }
            continue;
        };
        if fields.len() != 2 {
            return Err(bad(line, format!("{} fields, expected 2", fields.len())));
        }
        let num = |s: &str, what: &str| -> Result<f64, LabCurveError> {
            s.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| bad(line, format!("{what} `{s}` is not a finite number")))
        };
        let p = num(fields[0], "pressure")?;
        let s = num(fields[1], "mercury_saturation")?;
        if p <= 0.0 {
            return Err(bad(line, format!("pressure {p} must be > 0")));
        }
        if !(0.0..=1.0).contains(&s) {
            return Err(bad(
                line,
                format!("mercury_saturation {s} must lie in [0, 1] (a fraction, not a percentage)"),
            ));
        }
        let p = p * unit;
        if let Some(&prev) = pressure_pa.last()
            && p <= prev
        {
            return Err(bad(
                line,
                format!(
                    "pressure {} Pa is not above the previous row's {prev} Pa",
                    p
                ),
            ));
        }
        pressure_pa.push(p);
        saturation.push(s);
    }
    if scale.is_none() {
        return Err(bad(last_line.max(1), "no header line".into()));
    }
    if pressure_pa.len() < 2 {
        return Err(bad(
            last_line.max(1),
            format!("{} data row(s); at least 2 are needed", pressure_pa.len()),
        ));
    }
    Ok(MeasuredMicp {
        pressure_pa,
        mercury_saturation: saturation,
    })
}

/// A lab-data file (TOML) for `ganglion calibrate`:
///
/// ```toml
/// porosity = 0.21            # fraction (helium or summation porosity)
/// permeability_md = 150.0    # absolute permeability, mD
/// micp_curve = "plug7.csv"   # measured MICP curve, relative to this file
///
/// [waterflood]                            # optional: fit the advancing angles
/// initial_water_saturation = 0.22         # Swi before the flood
/// residual_nonwetting_saturation = 0.31   # measured after the flood
/// amott_water_index = 0.55                # and/or the Amott water index
/// receding_contact_angle_deg = [0.0, 0.0] # default [0, 0]
/// advancing_range_width_deg = 20.0        # default 20
/// advancing_search_deg = [0.0, 180.0]     # default [0, 180]
/// ```
///
/// Unknown keys are refused with their line.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct LabFile {
    porosity: f64,
    permeability_md: f64,
    micp_curve: String,
    waterflood: Option<WaterfloodFile>,
}

/// Table `[waterflood]` of a lab-data file.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct WaterfloodFile {
    initial_water_saturation: f64,
    residual_nonwetting_saturation: Option<f64>,
    amott_water_index: Option<f64>,
    receding_contact_angle_deg: Option<[f64; 2]>,
    advancing_range_width_deg: Option<f64>,
    advancing_search_deg: Option<[f64; 2]>,
}

/// Reads a lab-data file and the MICP curve it names.
pub fn read_lab_data(path: &Path) -> Result<crate::run::calibrate::LabData, LabCurveError> {
    let text = std::fs::read_to_string(path).map_err(|source| LabCurveError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let file: LabFile = toml::from_str(&text).map_err(|e| {
        let line = e
            .span()
            .map(|s| text[..s.start.min(text.len())].lines().count().max(1))
            .unwrap_or(1);
        LabCurveError::Invalid {
            path: path.to_path_buf(),
            line,
            message: e.message().to_string(),
        }
    })?;
    let key_line = |key: &str| {
        text.lines()
            .position(|l| l.trim_start().starts_with(key))
            .map_or(1, |i| i + 1)
    };
    if !(file.porosity.is_finite() && file.porosity > 0.0 && file.porosity < 1.0) {
        return Err(LabCurveError::Invalid {
            path: path.to_path_buf(),
            line: key_line("porosity"),
            message: format!(
                "porosity = {}: expected a fraction in (0, 1), not a percentage",
                file.porosity
            ),
        });
    }
    if !(file.permeability_md.is_finite() && file.permeability_md > 0.0) {
        return Err(LabCurveError::Invalid {
            path: path.to_path_buf(),
            line: key_line("permeability_md"),
            message: format!(
                "permeability_md = {}: expected > 0 mD",
                file.permeability_md
            ),
        });
    }
    let curve = path
        .parent()
        .unwrap_or_else(|| Path::new("."))
        .join(&file.micp_curve);
    let micp = read_measured_micp(&curve)?;
    let waterflood = match file.waterflood {
        None => None,
        Some(w) => {
            use crate::run::angle_fit::WaterfloodData as W;
            let data = W {
                initial_water_saturation: w.initial_water_saturation,
                residual_nonwetting_saturation: w.residual_nonwetting_saturation,
                amott_water_index: w.amott_water_index,
                receding_contact_angle_deg: w
                    .receding_contact_angle_deg
                    .unwrap_or(W::DEFAULT_RECEDING),
                advancing_range_width_deg: w.advancing_range_width_deg.unwrap_or(W::DEFAULT_WIDTH),
                advancing_search_deg: w.advancing_search_deg.unwrap_or(W::DEFAULT_SEARCH),
            };
            data.validate()
                .map_err(|(key, message)| LabCurveError::Invalid {
                    path: path.to_path_buf(),
                    line: if key == "waterflood" {
                        text.lines()
                            .position(|l| l.trim_start().starts_with("[waterflood]"))
                            .map_or(1, |i| i + 1)
                    } else {
                        key_line(key)
                    },
                    message: format!("[waterflood] {message}"),
                })?;
            Some(data)
        }
    };
    Ok(crate::run::calibrate::LabData {
        porosity: file.porosity,
        permeability_md: file.permeability_md,
        micp,
        waterflood,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_psi_and_converts_to_pascal() {
        let m = parse_measured_micp(
            "# plug 7\npressure_psi,mercury_saturation\n1,0\n10,0.5\n",
            Path::new("m.csv"),
        )
        .unwrap();
        // 1 psi = 0.45359237 kg × 9.80665 m/s² / (0.0254 m)² (exact
        // definitions) = 6894.757293168… Pa.
        assert!((m.pressure_pa[0] - 6894.757293168361).abs() < 1e-9);
        assert_eq!(m.mercury_saturation, vec![0.0, 0.5]);
    }

    #[test]
    fn names_file_and_line_of_a_bad_value() {
        let e = parse_measured_micp(
            "pressure_pa,mercury_saturation\n1e4,0\n2e4,45\n",
            Path::new("m.csv"),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("m.csv, line 3") && e.contains("45"), "{e}");
        let e = parse_measured_micp("pressure_bar,mercury_saturation\n", Path::new("m.csv"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 1") && e.contains("pressure_bar"), "{e}");
        let e = parse_measured_micp(
            "pressure_pa,mercury_saturation\n2e4,0\n1e4,0.1\n",
            Path::new("m.csv"),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("line 3") && e.contains("not above"), "{e}");
    }
}
