//! `network.toml`: the sample-level description of a CSV network folder.
//!
//! Keys (SI units): `name` (string), `flow_axis` (`"x"`, `"y"` or `"z"`),
//! `length_m` and `area_m2` (numbers), optional `bulk_volume_m3` (number,
//! default `length_m × area_m2`), optional `extent_m` (array of three
//! numbers), optional `description` (string). Unknown keys give a warning;
//! a missing required key, a value of the wrong type and a syntax error are
//! violations naming the key and its line. Range checks (positive, finite)
//! are done by [`crate::network::validate::check_columns`] and located here through
//! [`Sample::key_lines`].

use std::collections::BTreeMap;
use std::fmt::Write as _;

use crate::network::validate::{Rule, Target, Violation, Warning};
use crate::network::{Axis, NetworkInfo};

/// Keys of `network.toml`, in the order they are written.
pub(crate) const KEYS: [&str; 7] = [
    "name",
    "flow_axis",
    "length_m",
    "area_m2",
    "bulk_volume_m3",
    "extent_m",
    "description",
];

/// The parsed sample description.
#[derive(Debug)]
pub(crate) struct Sample {
    /// Values read (placeholders where a value is missing or unusable).
    pub info: NetworkInfo,
    /// 1-based line of each key present.
    pub key_lines: Vec<(&'static str, u64)>,
    /// Keys whose range violations must not be reported: already reported as
    /// missing or of the wrong type, or derived (`bulk_volume_m3` by default).
    pub quiet: Vec<&'static str>,
    /// Problems found.
    pub violations: Vec<Violation>,
    /// Unknown keys.
    pub warnings: Vec<Warning>,
}

impl Sample {
    /// Line of `key`, when present.
    pub fn line_of(&self, key: &str) -> Option<u64> {
        self.key_lines
            .iter()
            .find(|(k, _)| *k == key)
            .map(|&(_, l)| l)
    }
}

fn line_at(text: &str, offset: usize) -> u64 {
    crate::text::line_at(text, offset) as u64
}

/// Parses `network.toml`; `file` names it in violations.
pub(crate) fn parse_sample(bytes: &[u8], file: &str) -> Sample {
    let mut s = Sample {
        info: NetworkInfo {
            name: String::new(),
            flow_axis: Axis::Z,
            length_m: f64::NAN,
            area_m2: f64::NAN,
            bulk_volume_m3: f64::NAN,
            extent_m: None,
            description: None,
        },
        key_lines: Vec::new(),
        quiet: Vec::new(),
        violations: Vec::new(),
        warnings: Vec::new(),
    };
    let bad = |key: Option<&str>, line: Option<u64>, detail: String| {
        let mut v = Violation::new(Rule::BadSampleValue, Target::Network, key, detail);
        v.file = Some(file.to_owned());
        v.line = line;
        v
    };
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t.strip_prefix('\u{feff}').unwrap_or(t),
        Err(e) => {
            s.violations.push(bad(
                None,
                None,
                format!("the file is not valid UTF-8 text ({e})"),
            ));
            s.quiet.extend(KEYS);
            return s;
        }
    };
    let table: BTreeMap<String, toml::Spanned<toml::Value>> = match toml::from_str(text) {
        Ok(t) => t,
        Err(e) => {
            let line = e.span().map(|sp| line_at(text, sp.start));
            s.violations.push(bad(
                None,
                line,
                format!("not valid TOML: {}", e.message().trim()),
            ));
            s.quiet.extend(KEYS);
            return s;
        }
    };
    for (key, value) in &table {
        let line = line_at(text, value.span().start);
        match KEYS.iter().find(|k| **k == key.as_str()) {
            Some(&k) => s.key_lines.push((k, line)),
            None => s.warnings.push(Warning {
                code: "unknown-key",
                target: Target::Network,
                file: Some(file.to_owned()),
                line: Some(line),
                detail: format!("key `{key}` is not part of the format and is ignored"),
            }),
        }
    }
    let get = |k: &str| table.get(k).map(|v| v.get_ref());
    let missing = |k: &str| {
        let mut v = Violation::new(
            Rule::MissingColumn,
            Target::Network,
            Some(k),
            "required key is missing",
        );
        v.file = Some(file.to_owned());
        v
    };

    // Strings.
    for key in ["name", "description"] {
        match get(key) {
            None if key == "name" => {
                s.violations.push(missing(key));
                s.quiet.push("name");
            }
            None => {}
            Some(toml::Value::String(text)) => {
                if key == "name" {
                    s.info.name = text.clone();
                } else {
                    s.info.description = Some(text.clone());
                }
            }
            Some(other) => {
                s.violations.push(bad(
                    Some(key),
                    s.line_of(key),
                    format!("expected a string, found a {}", other.type_str()),
                ));
                s.quiet
                    .push(if key == "name" { "name" } else { "description" });
            }
        }
    }

    // Flow axis.
    match get("flow_axis") {
        None => {
            s.violations.push(missing("flow_axis"));
            s.quiet.push("flow_axis");
        }
        Some(v) => match v.as_str().and_then(Axis::parse) {
            Some(axis) => s.info.flow_axis = axis,
            None => {
                s.violations.push(bad(
                    Some("flow_axis"),
                    s.line_of("flow_axis"),
                    format!("expected \"x\", \"y\" or \"z\", found {v}"),
                ));
                s.quiet.push("flow_axis");
            }
        },
    }

    // Numbers.
    let number = |v: &toml::Value| match v {
        toml::Value::Float(f) => Some(*f),
        toml::Value::Integer(i) => Some(*i as f64),
        _ => None,
    };
    for key in ["length_m", "area_m2", "bulk_volume_m3"] {
        let value = match get(key) {
            None if key == "bulk_volume_m3" => {
                // Derived: its range follows from length_m and area_m2.
                s.quiet.push("bulk_volume_m3");
                continue;
            }
            None => {
                s.violations.push(missing(key));
                s.quiet.push(if key == "length_m" {
                    "length_m"
                } else {
                    "area_m2"
                });
                continue;
            }
            Some(v) => v,
        };
        match number(value) {
            Some(x) => match key {
                "length_m" => s.info.length_m = x,
                "area_m2" => s.info.area_m2 = x,
                _ => s.info.bulk_volume_m3 = x,
            },
            None => {
                s.violations.push(bad(
                    Some(key),
                    s.line_of(key),
                    format!("expected a number, found a {}", value.type_str()),
                ));
                s.quiet.push(match key {
                    "length_m" => "length_m",
                    "area_m2" => "area_m2",
                    _ => "bulk_volume_m3",
                });
            }
        }
    }
    if get("bulk_volume_m3").is_none() {
        s.info.bulk_volume_m3 = s.info.length_m * s.info.area_m2;
    }

    // Extent.
    if let Some(v) = get("extent_m") {
        let values: Option<Vec<f64>> = v
            .as_array()
            .and_then(|a| a.iter().map(number).collect::<Option<Vec<f64>>>());
        match values.as_deref() {
            Some(&[lx, ly, lz]) => s.info.extent_m = Some([lx, ly, lz]),
            _ => {
                s.violations.push(bad(
                    Some("extent_m"),
                    s.line_of("extent_m"),
                    format!("expected an array of three numbers [lx, ly, lz], found {v}"),
                ));
                s.quiet.push("extent_m");
            }
        }
    }
    s
}

/// Formats an f64 as a TOML float with the shortest digits that read back
/// to the same bits.
fn toml_float(x: f64) -> String {
    if x.is_nan() {
        "nan".to_owned()
    } else if x.is_infinite() {
        if x > 0.0 { "inf" } else { "-inf" }.to_owned()
    } else {
        ryu::Buffer::new().format_finite(x).to_owned()
    }
}

/// The text of `network.toml` for `info`; every value is written, so a
/// read gives back the same bits.
pub(crate) fn write_sample(info: &NetworkInfo) -> String {
    let mut out = String::from("# Ganglion network: sample description (SI units)\n");
    let quote = |s: &str| toml::Value::String(s.to_owned()).to_string();
    let _ = writeln!(out, "name = {}", quote(&info.name));
    let _ = writeln!(out, "flow_axis = \"{}\"", info.flow_axis.as_str());
    let _ = writeln!(out, "length_m = {}", toml_float(info.length_m));
    let _ = writeln!(out, "area_m2 = {}", toml_float(info.area_m2));
    let _ = writeln!(out, "bulk_volume_m3 = {}", toml_float(info.bulk_volume_m3));
    if let Some([lx, ly, lz]) = info.extent_m {
        let _ = writeln!(
            out,
            "extent_m = [{}, {}, {}]",
            toml_float(lx),
            toml_float(ly),
            toml_float(lz)
        );
    }
    if let Some(d) = &info.description {
        let _ = writeln!(out, "description = {}", quote(d));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sample_round_trips_awkward_values_and_strings() {
        let info = NetworkInfo {
            name: "quote \" and\nnewline ✓".into(),
            flow_axis: Axis::Y,
            length_m: 0.1,
            area_m2: 1e-300,
            bulk_volume_m3: 1.234_567_890_123_456_7e-7,
            extent_m: Some([5e-324, 1e21, 0.3]),
            description: Some("multi\nline\t'x'".into()),
        };
        let text = write_sample(&info);
        let s = parse_sample(text.as_bytes(), "network.toml");
        assert!(s.violations.is_empty(), "{:?}\n{text}", s.violations);
        assert!(s.warnings.is_empty());
        assert_eq!(s.info, info);
        assert_eq!(
            s.info.extent_m.unwrap()[0].to_bits(),
            5e-324f64.to_bits(),
            "subnormal survives"
        );
    }

    #[test]
    fn bulk_volume_defaults_to_length_times_area() {
        let text = "name = \"a\"\nflow_axis = \"X\"\nlength_m = 2\narea_m2 = 3.0\n";
        let s = parse_sample(text.as_bytes(), "network.toml");
        assert!(s.violations.is_empty());
        assert_eq!(s.info.bulk_volume_m3, 6.0);
        assert_eq!(s.info.flow_axis, Axis::X);
        assert!(s.quiet.contains(&"bulk_volume_m3"));
    }
}
