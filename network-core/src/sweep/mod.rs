//! Sweeps: many independent cases from one study — initial water
//! saturations (the initial–residual trapping curve), lists of any study
//! parameter, and realisations — and their statistics.
//!
//! A study with a `[sweep]` table:
//! ```toml
//! [sweep]
//! initial_water_saturations = [0.8, 0.6, 0.4, 0.2]   # or: initial_saturation_points = 6
//! realisations = 4
//! relative_permeability = false                     # kr per case (slower)
//! land_fit_sni_range = [0.1, 0.8]                   # optional: Sni fitted by Land
//! [sweep.parameters]
//! "wettability.advancing_contact_angle_deg" = [[20.0, 40.0], [50.0, 70.0]]
//! "fluids.interfacial_tension_n_per_m" = [0.02, 0.03]
//! ```
//! Cases are the Cartesian product of parameter values × initial water
//! saturations × realisations, numbered in that nesting order (realisation
//! fastest). Each case is a complete study (the base study with the values
//! set at their dotted paths, parsed and validated like any study), so a
//! case runs on its own and its result does not depend on which other
//! cases run or in what order. Realisation `r` uses seed `seed + r` for
//! every random draw of the run (contact angles, triangle shapes,
//! cooperative draws) and, for a generated network, for the network.
//!
//! `land_fit_sni_range = [lo, hi]` (`0 < lo < hi ≤ 1`) restricts the
//! least-squares Land fit of each group to the cases with
//! `lo ≤ S_ni ≤ hi` (fractions of the pore volume, within
//! [`LAND_RANGE_SLACK`] = 0.001, since drainage overshoots its target
//! saturation by a fraction of one element); the cases themselves do not
//! change, so finished cases are kept when only the range changes.
//! Without it every case is fitted.

use serde::{Deserialize, Serialize};

#[cfg(test)]
use crate::params::StopAt;
use crate::params::Study;
use crate::study::{StudyError, StudyErrors};

mod runner;
mod selection;
mod summary;

pub use runner::{Collected, SweepError, SweepRun, collect, run_case};
pub use selection::{ArrayPlan, CaseList, SelectionError, Shard, compact_ranges};
pub use summary::{
    CaseCurve, CaseResult, GroupSummary, LAND_RANGE_SLACK, Spread, SweepSummary, TrappingPoint,
    summarise, summarise_with,
};

/// Most cases a sweep may have. Each case is expanded and validated when
/// the sweep is read (about 1–2 kB per case); 10⁵ cases of a few seconds
/// each are already days of computing on one machine.
pub const MAX_CASES: usize = 100_000;

/// The `[sweep]` table with every key, commented (`ganglion template
/// sweep`); docs/keys.md documents the same keys.
pub const TEMPLATE: &str = include_str!("../templates/sweep.toml");

/// The `[sweep]` table.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct SweepSpec {
    /// Initial water saturations at which primary drainage stops (empty: as
    /// the study says).
    pub initial_water_saturations: Vec<f64>,
    /// Parameter lists by dotted path, in path order.
    pub parameters: Vec<(String, Vec<toml::Value>)>,
    /// Number of realisations (≥ 1).
    pub realisations: usize,
    /// Compute relative permeability in every case.
    pub relative_permeability: bool,
    /// `S_ni` range `[lo, hi]` of the Land fit (`None`: every point).
    pub land_fit_sni_range: Option<[f64; 2]>,
}

/// One case of a sweep.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Case {
    /// Case number.
    pub index: usize,
    /// Parameter values set (path, value as TOML text).
    pub parameters: Vec<(String, String)>,
    /// Initial water saturation of the primary drainage, if swept.
    pub initial_water_saturation: Option<f64>,
    /// Realisation number.
    pub realisation: usize,
    /// Index of the parameter combination (cases sharing it differ only in
    /// initial saturation and realisation).
    pub group: usize,
    /// The case's study, as TOML text.
    pub study_text: String,
    /// A hash of `study_text` (identifies finished results on resume).
    pub study_hash: String,
    /// The sweep's `land_fit_sni_range` (the same in every case; kept here
    /// so that `collect` finds it in the case list).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub land_fit_sni_range: Option<[f64; 2]>,
}

/// A study with its sweep: the base TOML and the sweep specification.
#[derive(Clone, Debug)]
pub struct SweepStudy {
    base: toml::Table,
    /// The sweep table.
    pub spec: SweepSpec,
    /// The base study (validated).
    pub study: Study,
}

fn line_of(text: &str, key: &str) -> Option<usize> {
    text.lines()
        .position(|l| l.trim_start().starts_with(key) || l.contains(&format!("\"{key}\"")))
        .map(|i| i + 1)
}

fn err(text: &str, key: &str, message: impl Into<String>) -> StudyErrors {
    let short = key.rsplit('.').next().unwrap_or(key);
    StudyErrors(vec![StudyError {
        key: key.into(),
        line: line_of(text, short),
        message: message.into(),
    }])
}

/// Sets `value` at a dotted `path` of a TOML table (tables are created as
/// needed; `process[2].until_sw` addresses the second `[[process]]`).
fn set_path(table: &mut toml::Table, path: &str, value: toml::Value) -> Result<(), String> {
    let parts: Vec<&str> = path.split('.').collect();
    let mut cur = table;
    for (k, part) in parts.iter().enumerate() {
        let last = k + 1 == parts.len();
        let (name, index) = match part.find('[') {
            Some(i) if part.ends_with(']') => {
                let n: usize = part[i + 1..part.len() - 1]
                    .parse()
                    .map_err(|_| format!("`{part}`: index must be a whole number"))?;
                (&part[..i], Some(n))
            }
            _ => (*part, None),
        };
        match index {
            Some(n) => {
                let arr = cur
                    .get_mut(name)
                    .and_then(|v| v.as_array_mut())
                    .ok_or_else(|| format!("`{name}` is not a list of tables"))?;
                let item = arr
                    .get_mut(n.wrapping_sub(1))
                    .ok_or_else(|| format!("`{name}[{n}]` does not exist (1-based)"))?;
                let t = item
                    .as_table_mut()
                    .ok_or_else(|| format!("`{name}[{n}]` is not a table"))?;
                if last {
                    return Err(format!("`{path}` names a table, not a value"));
                }
                cur = t;
            }
            None if last => {
                cur.insert(name.to_string(), value);
                return Ok(());
            }
            None => {
                let entry = cur
                    .entry(name.to_string())
                    .or_insert_with(|| toml::Value::Table(toml::Table::new()));
                cur = entry
                    .as_table_mut()
                    .ok_or_else(|| format!("`{name}` is a value, not a table"))?;
            }
        }
    }
    Ok(())
}

fn hash_text(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h = crate::numeric::splitmix64(h ^ b as u64);
    }
    format!("{h:016x}")
}

impl SweepStudy {
    /// Parses a study file with a `[sweep]` table.
    pub fn parse(text: &str) -> Result<SweepStudy, StudyErrors> {
        let mut base: toml::Table = text.parse().map_err(|e: toml::de::Error| {
            StudyErrors(vec![StudyError {
                key: String::new(),
                line: e.span().map(|s| crate::text::line_at(text, s.start)),
                message: e.message().trim().to_string(),
            }])
        })?;
        let sweep = base.remove("sweep");
        let base_text = toml::to_string(&base).map_err(|e| err(text, "", e.to_string()))?;
        let study = Study::parse(&base_text).map_err(|mut es| {
            // Re-point lines at the original text.
            for e in &mut es.0 {
                let short = e.key.rsplit('.').next().unwrap_or(&e.key).to_string();
                e.line = if short.is_empty() {
                    e.line
                } else {
                    line_of(text, &short)
                };
            }
            es
        })?;
        let mut spec = SweepSpec {
            realisations: 1,
            ..SweepSpec::default()
        };
        let Some(sweep) = sweep else {
            return Err(err(text, "sweep", "a sweep study needs a [sweep] table"));
        };
        let Some(sweep) = sweep.as_table() else {
            return Err(err(text, "sweep", "must be a table"));
        };
        for (k, v) in sweep {
            match k.as_str() {
                "initial_water_saturations" => {
                    let arr = v.as_array().ok_or_else(|| {
                        err(text, "sweep.initial_water_saturations", "must be a list")
                    })?;
                    if arr.is_empty() {
                        return Err(err(
                            text,
                            "sweep.initial_water_saturations",
                            "is empty: list at least one saturation in (0, 1), or leave the key \
                             out to run every case to the study's own end point",
                        ));
                    }
                    for x in arr {
                        let f = x.as_float().or_else(|| x.as_integer().map(|i| i as f64));
                        match f {
                            Some(f) if f > 0.0 && f < 1.0 => spec.initial_water_saturations.push(f),
                            _ => {
                                return Err(err(
                                    text,
                                    "sweep.initial_water_saturations",
                                    format!("value {x} must be a saturation in (0, 1)"),
                                ));
                            }
                        }
                    }
                }
                "initial_saturation_points" => {
                    let n = v
                        .as_integer()
                        .filter(|n| (2..=200).contains(n))
                        .ok_or_else(|| {
                            err(
                                text,
                                "sweep.initial_saturation_points",
                                "must be a whole number in [2, 200]",
                            )
                        })?;
                    // Evenly spaced in (0, 1): 0.9 … 0.1 for n = 9.
                    spec.initial_water_saturations =
                        (1..=n).map(|k| 1.0 - k as f64 / (n + 1) as f64).collect();
                }
                "realisations" => {
                    spec.realisations = v
                        .as_integer()
                        .filter(|n| (1..=10_000).contains(n))
                        .ok_or_else(|| {
                            err(
                                text,
                                "sweep.realisations",
                                "must be a whole number in [1, 10000]",
                            )
                        })? as usize;
                }
                "relative_permeability" => {
                    spec.relative_permeability = v.as_bool().ok_or_else(|| {
                        err(text, "sweep.relative_permeability", "must be true or false")
                    })?;
                }
                "land_fit_sni_range" => {
                    let key = "sweep.land_fit_sni_range";
                    let bad = |m: String| err(text, key, m);
                    let arr = v.as_array().filter(|a| a.len() == 2).ok_or_else(|| {
                        bad(format!(
                            "must be a list of two saturations [lo, hi], got {v}"
                        ))
                    })?;
                    let mut lohi = [0.0; 2];
                    for (slot, x) in lohi.iter_mut().zip(arr) {
                        *slot = x
                            .as_float()
                            .or_else(|| x.as_integer().map(|i| i as f64))
                            .filter(|f| *f > 0.0 && *f <= 1.0)
                            .ok_or_else(|| {
                                bad(format!("value {x} must be an initial saturation in (0, 1]"))
                            })?;
                    }
                    if lohi[0] >= lohi[1] {
                        return Err(bad(format!(
                            "lower end {} must be below upper end {}",
                            lohi[0], lohi[1]
                        )));
                    }
                    spec.land_fit_sni_range = Some(lohi);
                }
                "parameters" => {
                    let t = v.as_table().ok_or_else(|| {
                        err(
                            text,
                            "sweep.parameters",
                            "must be a table of path = [values]",
                        )
                    })?;
                    for (path, vals) in t {
                        let list = vals.as_array().filter(|a| !a.is_empty()).ok_or_else(|| {
                            err(
                                text,
                                &format!("sweep.parameters.{path}"),
                                "must be a non-empty list of values",
                            )
                        })?;
                        spec.parameters.push((path.clone(), list.clone()));
                    }
                }
                other => {
                    return Err(err(
                        text,
                        &format!("sweep.{other}"),
                        "unknown key; expected initial_water_saturations, initial_saturation_points, \
                         realisations, relative_permeability, land_fit_sni_range or parameters",
                    ));
                }
            }
        }
        if !spec.initial_water_saturations.is_empty() && study.processes.len() < 2 {
            return Err(err(
                text,
                "sweep.initial_water_saturations",
                "needs a drainage followed by an imbibition in the study",
            ));
        }
        // Count the cases before making any (checked: a product of long
        // lists must not wrap around).
        let n_cases = spec
            .parameters
            .iter()
            .map(|(_, v)| v.len())
            .chain([
                spec.initial_water_saturations.len().max(1),
                spec.realisations,
            ])
            .try_fold(1usize, usize::checked_mul);
        match n_cases {
            Some(n) if n <= MAX_CASES => {}
            _ => {
                let factors: Vec<String> = spec
                    .parameters
                    .iter()
                    .map(|(p, v)| format!("{} values of {p}", v.len()))
                    .chain([
                        format!(
                            "{} initial water saturations",
                            spec.initial_water_saturations.len().max(1)
                        ),
                        format!("{} realisations", spec.realisations),
                    ])
                    .collect();
                return Err(err(
                    text,
                    "sweep",
                    format!(
                        "{} cases ({}) exceed the limit of {MAX_CASES}; split the sweep into \
                         several studies or use fewer values",
                        n_cases.map_or_else(|| "more than 2^64".to_owned(), |n| n.to_string()),
                        factors.join(" × ")
                    ),
                ));
            }
        }
        let s = SweepStudy { base, spec, study };
        // Validate every case up front, so a bad value fails before any run.
        let cases = s.cases_checked(text)?;
        if cases.is_empty() {
            return Err(err(text, "sweep", "the sweep has no cases"));
        }
        Ok(s)
    }

    /// The parameter combinations, in order.
    fn combinations(&self) -> Vec<Vec<(String, toml::Value)>> {
        let mut combos: Vec<Vec<(String, toml::Value)>> = vec![Vec::new()];
        for (path, values) in &self.spec.parameters {
            let mut next = Vec::new();
            for c in &combos {
                for v in values {
                    let mut c2 = c.clone();
                    c2.push((path.clone(), v.clone()));
                    next.push(c2);
                }
            }
            combos = next;
        }
        combos
    }

    fn cases_checked(&self, original: &str) -> Result<Vec<Case>, StudyErrors> {
        let mut out = Vec::new();
        let swis: Vec<Option<f64>> = if self.spec.initial_water_saturations.is_empty() {
            vec![None]
        } else {
            self.spec
                .initial_water_saturations
                .iter()
                .map(|&s| Some(s))
                .collect()
        };
        let base_seed = self.study.seed;
        for (group, combo) in self.combinations().into_iter().enumerate() {
            for &swi in &swis {
                for r in 0..self.spec.realisations {
                    let mut t = self.base.clone();
                    for (path, v) in &combo {
                        set_path(&mut t, path, v.clone())
                            .map_err(|m| err(original, &format!("sweep.parameters.{path}"), m))?;
                    }
                    if let Some(s) = swi {
                        let p = t
                            .get_mut("process")
                            .and_then(|p| p.as_array_mut())
                            .and_then(|a| a.first_mut())
                            .and_then(|p| p.as_table_mut())
                            .ok_or_else(|| err(original, "process", "no drainage to stop"))?;
                        p.remove("until_pc_pa");
                        p.insert("until_sw".into(), toml::Value::Float(s));
                    }
                    t.insert(
                        "seed".into(),
                        toml::Value::Integer((base_seed + r as u64) as i64),
                    );
                    if !self.spec.relative_permeability {
                        set_path(
                            &mut t,
                            "flow.relative_permeability",
                            toml::Value::Boolean(false),
                        )
                        .map_err(|m| err(original, "flow", m))?;
                    }
                    let study_text =
                        toml::to_string(&t).map_err(|e| err(original, "", e.to_string()))?;
                    Study::parse(&study_text).map_err(|es| {
                        let mut es = es;
                        for e in &mut es.0 {
                            e.message = format!("in sweep case {}: {}", out.len(), e.message);
                            e.line = None;
                        }
                        es
                    })?;
                    out.push(Case {
                        index: out.len(),
                        parameters: combo
                            .iter()
                            .map(|(p, v)| (p.clone(), v.to_string()))
                            .collect(),
                        initial_water_saturation: swi,
                        realisation: r,
                        group,
                        study_hash: hash_text(&study_text),
                        study_text,
                        land_fit_sni_range: self.spec.land_fit_sni_range,
                    });
                }
            }
        }
        Ok(out)
    }

    /// Every case of the sweep, in order.
    pub fn cases(&self) -> Vec<Case> {
        self.cases_checked("").expect("validated when parsed")
    }
}

impl Case {
    /// The case's study.
    pub fn study(&self) -> Study {
        Study::parse(&self.study_text).expect("validated when the sweep was parsed")
    }
}

/// A one-line description of a case (for listings).
pub fn describe(case: &Case) -> String {
    let mut parts: Vec<String> = case
        .parameters
        .iter()
        .map(|(p, v)| format!("{p} = {v}"))
        .collect();
    if let Some(s) = case.initial_water_saturation {
        parts.push(format!("initial Sw = {s}"));
    }
    parts.push(format!("realisation {}", case.realisation));
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = r#"
network = "net"
seed = 10
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e4
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e4
[sweep]
initial_water_saturations = [0.8, 0.4]
realisations = 3
[sweep.parameters]
"wettability.advancing_contact_angle_deg" = [[20.0, 40.0], [50.0, 70.0]]
"#;

    #[test]
    fn cases_are_the_product_in_nesting_order() {
        let s = SweepStudy::parse(TEXT).unwrap();
        let cases = s.cases();
        assert_eq!(cases.len(), 2 * 2 * 3);
        assert_eq!(cases[0].realisation, 0);
        assert_eq!(cases[1].realisation, 1);
        assert_eq!(cases[3].initial_water_saturation, Some(0.4));
        assert_eq!(cases[6].group, 1);
        let st = cases[7].study();
        assert_eq!(st.seed, 11);
        assert_eq!(st.processes[0].stop, StopAt::Sw(0.8));
        assert_eq!(st.wettability.advancing_contact_angle_deg, [50.0, 70.0]);
        assert!(!st.flow.relative_permeability);
        // Same text, same hash; different cases differ.
        assert_eq!(cases[7].study_hash, s.cases()[7].study_hash);
        assert_ne!(cases[7].study_hash, cases[8].study_hash);
    }

    #[test]
    fn bad_sweep_values_are_refused_with_the_key() {
        let bad = TEXT.replace("[0.8, 0.4]", "[0.8, 1.4]");
        let e = SweepStudy::parse(&bad).unwrap_err();
        assert_eq!(e.0[0].key, "sweep.initial_water_saturations");
        let bad = TEXT.replace("[[20.0, 40.0], [50.0, 70.0]]", "[[20.0, 400.0]]");
        let e = SweepStudy::parse(&bad).unwrap_err();
        assert!(e.to_string().contains("advancing_contact_angle_deg"), "{e}");
    }

    #[test]
    fn issue_18_empty_initial_water_saturations_is_refused_not_run_as_one_case() {
        let bad = TEXT.replace("[0.8, 0.4]", "[]");
        assert_ne!(bad, TEXT);
        let e = SweepStudy::parse(&bad).unwrap_err();
        assert_eq!(e.0[0].key, "sweep.initial_water_saturations");
        assert!(e.0[0].message.contains("is empty"), "{}", e.0[0]);
    }

    #[test]
    fn issue_18_a_sweep_of_ten_million_cases_is_refused_before_any_is_made() {
        // 10 000 realisations × 2 saturations × 25 × 20 values: 10⁷ cases.
        let many: Vec<String> = (0..25).map(|i| format!("{}.0", 30 + i)).collect();
        let seeds: Vec<String> = (0..20).map(|i| i.to_string()).collect();
        let bad = TEXT
            .replace("realisations = 3", "realisations = 10000")
            .replace(
                r#""wettability.advancing_contact_angle_deg" = [[20.0, 40.0], [50.0, 70.0]]"#,
                &format!(
                    "\"fluids.interfacial_tension_n_per_m\" = [{}]\n\"seed\" = [{}]",
                    many.iter()
                        .map(|v| format!("0.0{}", &v[..2]))
                        .collect::<Vec<_>>()
                        .join(", "),
                    seeds.join(", ")
                ),
            );
        let e = SweepStudy::parse(&bad).unwrap_err();
        let msg = e.to_string();
        assert!(
            msg.contains("10000000 cases") && msg.contains("limit"),
            "{msg}"
        );
    }

    #[test]
    fn land_fit_sni_range_is_parsed_and_reaches_every_case() {
        let with = TEXT.replace(
            "realisations = 3\n",
            "realisations = 3\nland_fit_sni_range = [0.1, 0.75]\n",
        );
        let s = SweepStudy::parse(&with).unwrap();
        assert_eq!(s.spec.land_fit_sni_range, Some([0.1, 0.75]));
        assert!(
            s.cases()
                .iter()
                .all(|c| c.land_fit_sni_range == Some([0.1, 0.75]))
        );
        // The range does not change the cases' studies (finished cases stay
        // valid when only the fit range changes).
        let without = SweepStudy::parse(TEXT).unwrap();
        assert_eq!(s.cases()[5].study_hash, without.cases()[5].study_hash);
        assert_eq!(without.spec.land_fit_sni_range, None);
    }

    #[test]
    fn bad_land_fit_sni_range_is_refused_with_key_and_line() {
        // The key sits on line 16 of the text below (TEXT starts with a
        // newline, so its first key is on line 2).
        for (value, says) in [
            ("[0.7, 0.3]", "must be below"),
            ("[0.5, 0.5]", "must be below"),
            ("[0.0, 0.5]", "(0, 1]"),
            ("[0.2, 1.5]", "(0, 1]"),
            ("[0.2]", "two saturations"),
            ("0.5", "two saturations"),
            ("[\"a\", 0.5]", "(0, 1]"),
        ] {
            let bad = TEXT.replace(
                "realisations = 3\n",
                &format!("realisations = 3\nland_fit_sni_range = {value}\n"),
            );
            let e = SweepStudy::parse(&bad).unwrap_err();
            assert_eq!(e.0[0].key, "sweep.land_fit_sni_range", "{value}: {e}");
            assert_eq!(e.0[0].line, Some(16), "{value}: {e}");
            assert!(e.to_string().contains(says), "{value}: {e}");
        }
        // Upper end 1 is allowed.
        let ok = TEXT.replace(
            "realisations = 3\n",
            "realisations = 3\nland_fit_sni_range = [0.2, 1]\n",
        );
        assert!(SweepStudy::parse(&ok).is_ok());
    }

    #[test]
    fn spread_of_known_values() {
        // Direct: mean 2.5, sample std sqrt(5/3), 5th/95th percentiles by
        // linear interpolation between order statistics: 1.15, 3.85.
        let s = Spread::of(&[4.0, 1.0, 3.0, 2.0]).unwrap();
        assert!((s.mean - 2.5).abs() < 1e-15);
        assert!((s.std - (5.0f64 / 3.0).sqrt()).abs() < 1e-15);
        assert!((s.p05 - 1.15).abs() < 1e-12 && (s.p95 - 3.85).abs() < 1e-12);
    }
}
