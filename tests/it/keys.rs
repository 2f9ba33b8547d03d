//! The templates (`ganglion template …`) against the library and
//! `docs/keys.md`: they parse, state the library's defaults, hold every
//! parameter of the library, and every key in them is documented under its
//! table, so that the three cannot drift apart.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use network_core::generate::{self, LatticeSpec, RegularSpec};
use network_core::params::{
    FlowSpec, Fluids, MechanismOptions, Microporosity, OutputSpec, WettabilitySpec,
};
use network_core::study::Study;
use network_core::sweep::{self, SweepStudy};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .unwrap()
        .to_path_buf()
}

/// The template with its commented-out keys (`# key = value`) switched on.
fn uncommented(template: &str) -> String {
    template
        .lines()
        .map(|l| {
            let t = l.trim_start_matches('#').trim_start();
            let is_key = l.starts_with('#')
                && t.split_once(" = ").is_some_and(|(k, _)| {
                    !k.is_empty() && k.chars().all(|c| c.is_ascii_lowercase() || c == '_')
                });
            if is_key { t } else { l }
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Dotted key paths of a TOML table (`sweep.parameters` kept whole; the
/// processes' keys under `process`).
fn keys(table: &toml::Table, prefix: &str, out: &mut BTreeSet<String>) {
    for (k, v) in table {
        let path = if prefix.is_empty() {
            k.clone()
        } else {
            format!("{prefix}.{k}")
        };
        match v {
            toml::Value::Table(t) if path != "sweep.parameters" => keys(t, &path, out),
            toml::Value::Array(a) if a.iter().all(|x| x.is_table()) && !a.is_empty() => {
                for x in a {
                    keys(x.as_table().unwrap(), &path, out);
                }
            }
            _ => {
                out.insert(path);
            }
        }
    }
}

fn template_keys(template: &str) -> BTreeSet<String> {
    let t: toml::Table = uncommented(template)
        .parse()
        .unwrap_or_else(|e| panic!("{e}"));
    let mut out = BTreeSet::new();
    keys(&t, "", &mut out);
    out
}

/// The rows `| \`key\` |` of the section of docs/keys.md whose heading
/// holds `heading`.
fn documented(doc: &str, heading: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    let mut inside = false;
    for l in doc.lines() {
        if l.starts_with('#') {
            inside = l.contains(heading);
            continue;
        }
        if inside && let Some(rest) = l.strip_prefix("| `") {
            out.insert(rest.split('`').next().unwrap().to_string());
        }
    }
    out
}

const STUDY_TABLES: &[&str] = &[
    "fluids",
    "wettability",
    "boundary",
    "mechanisms",
    "microporosity",
    "flow",
    "output",
    "process",
    "sweep",
];

fn check_documented(doc: &str, keys: &BTreeSet<String>, generator: bool) {
    for k in keys {
        let (heading, key) = match k.split_once('.') {
            _ if generator => ("Generator files".to_string(), k.as_str()),
            Some((t, rest)) if STUDY_TABLES.contains(&t) => {
                let h = if t == "process" {
                    "`[[process]]`".to_string()
                } else {
                    format!("`[{t}]`")
                };
                (h, rest)
            }
            _ => ("Top level".to_string(), k.as_str()),
        };
        assert!(
            documented(doc, &heading).contains(key),
            "docs/keys.md lacks `{key}` under the heading {heading}"
        );
    }
}

#[test]
fn every_template_key_is_documented_under_its_table() {
    let doc = std::fs::read_to_string(root().join("docs/keys.md")).unwrap();
    check_documented(&doc, &template_keys(network_core::study::TEMPLATE), false);
    check_documented(&doc, &template_keys(sweep::TEMPLATE), false);
    check_documented(&doc, &template_keys(generate::TEMPLATE), true);
}

#[test]
fn the_templates_parse_and_state_the_library_defaults() {
    let s = Study::parse(network_core::study::TEMPLATE).unwrap();
    assert_eq!(s.seed, 1);
    assert_eq!(s.fluids, Fluids::default());
    assert_eq!(s.wettability, WettabilitySpec::default());
    assert_eq!(s.mechanisms, MechanismOptions::default());
    assert_eq!(s.flow, FlowSpec::default());
    assert_eq!(s.microporosity, Microporosity::default());
    assert_eq!(s.output, OutputSpec::default());
    assert_eq!(
        (s.outlet, s.imbibition_faces, s.drainage_faces),
        Default::default()
    );
    // pc_steps and kr_points as written equal the parser's defaults.
    let bare =
        Study::parse("network = \"n\"\n[[process]]\nkind = \"drainage\"\nuntil_pc_pa = 1.0e5\n")
            .unwrap();
    assert_eq!(s.processes[0], bare.processes[0]);
    let with_sweep = format!("{}\n{}", network_core::study::TEMPLATE, sweep::TEMPLATE);
    let sw = SweepStudy::parse(&with_sweep).unwrap();
    assert_eq!(sw.spec.realisations, 1);
    assert!(!sw.spec.relative_permeability);
    let g: LatticeSpec = toml::from_str(generate::TEMPLATE).unwrap();
    assert_eq!(g, LatticeSpec::default());
    // The commented-out optional keys parse as well.
    let g: LatticeSpec = toml::from_str(&uncommented(generate::TEMPLATE)).unwrap();
    assert!(g.regular.is_some());
    assert_eq!(
        g.irregular,
        Some(network_core::generate::IrregularSpec::default())
    );
}

/// Keys of a serialised parameter struct.
fn fields<T: serde::Serialize>(v: &T) -> Vec<String> {
    match serde_json::to_value(v).unwrap() {
        serde_json::Value::Object(m) => m.keys().cloned().collect(),
        _ => panic!("not a struct"),
    }
}

#[test]
fn every_library_parameter_is_in_a_template() {
    let study = template_keys(network_core::study::TEMPLATE);
    let s = Study::parse(network_core::study::TEMPLATE).unwrap();
    let mut want: Vec<String> = Vec::new();
    for (table, f) in [
        ("fluids", fields(&s.fluids)),
        ("wettability", fields(&s.wettability)),
        ("mechanisms", fields(&s.mechanisms)),
        ("flow", fields(&s.flow)),
        ("microporosity", fields(&s.microporosity)),
        ("output", fields(&s.output)),
    ] {
        want.extend(f.into_iter().map(|k| format!("{table}.{k}")));
    }
    for k in fields(&s) {
        want.push(match k.as_str() {
            "outlet" | "imbibition_faces" | "drainage_faces" => format!("boundary.{k}"),
            "fluids" | "wettability" | "mechanisms" | "flow" | "microporosity" | "output" => {
                continue;
            }
            "processes" => continue,
            _ => k,
        });
    }
    for k in fields(&s.processes[0]) {
        match k.as_str() {
            "stop" => {
                want.push("process.until_pc_pa".into());
                want.push("process.until_sw".into());
            }
            _ => want.push(format!("process.{k}")),
        }
    }
    for k in &want {
        assert!(study.contains(k), "the study template lacks {k}");
    }
    let sweep_keys = template_keys(sweep::TEMPLATE);
    for k in fields(&sweep::SweepSpec::default()) {
        let k = match k.as_str() {
            "initial_water_saturations" => {
                assert!(sweep_keys.contains("sweep.initial_saturation_points"));
                k
            }
            _ => k,
        };
        assert!(
            sweep_keys.contains(&format!("sweep.{k}")),
            "the sweep template lacks {k}"
        );
    }
    let gen_keys = template_keys(generate::TEMPLATE);
    let spec = LatticeSpec {
        regular: Some(RegularSpec {
            pore_radius_m: 1e-5,
            throat_radius_m: 1e-5,
            pore_shape_factor: 0.05,
            throat_shape_factor: 0.05,
        }),
        irregular: Some(network_core::generate::IrregularSpec::default()),
        ..LatticeSpec::default()
    };
    let v = serde_json::to_value(&spec).unwrap();
    for (k, x) in v.as_object().unwrap() {
        match x.as_object() {
            Some(inner) => {
                for k2 in inner.keys() {
                    assert!(gen_keys.contains(&format!("{k}.{k2}")), "{k}.{k2}");
                }
            }
            None => assert!(gen_keys.contains(k), "the generator template lacks {k}"),
        }
    }
}
