//! Study files: what to run on a network, parsed from TOML and validated.
//!
//! A study names the network, the fluids, the wettability, the boundary
//! rule and an ordered list of displacement processes. Parsing refuses
//! unknown keys and out-of-range values with the key's name and line.
//! This module parses text; reading the file is the caller's job.
//!
//! ```toml
//! network = "../sample-networks/tiny-lattice"   # CSV folder or binary file, relative to this file
//! seed = 1
//! [fluids]
//! interfacial_tension_n_per_m = 0.030
//! water_viscosity_pa_s = 1.0e-3
//! nonaqueous_viscosity_pa_s = 2.0e-3
//! nonaqueous_label = "oil"
//! [wettability]
//! receding_contact_angle_deg = [0.0, 20.0]
//! advancing_contact_angle_deg = [30.0, 50.0]
//! [[process]]
//! kind = "drainage"
//! until_pc_pa = 2.0e4
//! pc_steps = 40
//! [[process]]
//! kind = "imbibition"
//! until_pc_pa = -2.0e4
//! ```

use std::fmt;
use std::ops::Range;

use serde::Deserialize;
use toml::Spanned;

/// A study-file error: the key path, the 1-based line and what is wrong.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct StudyError {
    /// Dotted key path (`fluids.interfacial_tension_n_per_m`,
    /// `process[2].until_sw`), empty for syntax errors.
    pub key: String,
    /// 1-based line of the key, when known.
    pub line: Option<usize>,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for StudyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.line, self.key.is_empty()) {
            (Some(l), false) => write!(f, "line {l}: key `{}`: {}", self.key, self.message),
            (Some(l), true) => write!(f, "line {l}: {}", self.message),
            (None, false) => write!(f, "key `{}`: {}", self.key, self.message),
            (None, true) => write!(f, "{}", self.message),
        }
    }
}

/// All errors of one study file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct StudyErrors(pub Vec<StudyError>);

impl fmt::Display for StudyErrors {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, e) in self.0.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{e}")?;
        }
        Ok(())
    }
}

impl std::error::Error for StudyErrors {}

pub use crate::params::{
    DrainageFaces, FlowSpec, Fluids, ImbibitionFaces, MechanismOptions, Microporosity,
    OilWetSelection, OutletRule, OutputSpec, Process, ProcessKind, StopAt, Study, WettabilitySpec,
};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawStudy {
    network: Option<Spanned<String>>,
    seed: Option<Spanned<i64>>,
    title: Option<String>,
    fluids: Option<RawFluids>,
    wettability: Option<RawWettability>,
    boundary: Option<RawBoundary>,
    mechanisms: Option<RawMechanisms>,
    flow: Option<RawFlow>,
    microporosity: Option<RawMicroporosity>,
    output: Option<RawOutput>,
    process: Option<Vec<Spanned<RawProcess>>>,
    /// Checked by [`crate::sweep::SweepStudy`]; ignored by a single run.
    #[allow(dead_code)]
    sweep: Option<toml::Value>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFlow {
    relative_permeability: Option<bool>,
    axis: Option<crate::network::Axis>,
    clay_tortuosity: Option<Spanned<f64>>,
    solver_tolerance: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMicroporosity {
    entry_pressure_pa: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFluids {
    interfacial_tension_n_per_m: Option<Spanned<f64>>,
    water_viscosity_pa_s: Option<Spanned<f64>>,
    nonaqueous_viscosity_pa_s: Option<Spanned<f64>>,
    nonaqueous_label: Option<Spanned<String>>,
    water_conductivity_s_per_m: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWettability {
    receding_contact_angle_deg: Option<Spanned<Vec<f64>>>,
    advancing_contact_angle_deg: Option<Spanned<Vec<f64>>>,
    oil_wet_fraction: Option<Spanned<f64>>,
    oil_wet_selection: Option<OilWetSelection>,
    oil_wet_advancing_contact_angle_deg: Option<Spanned<Vec<f64>>>,
    oil_wet_receding_contact_angle_deg: Option<Spanned<Vec<f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBoundary {
    outlet: Option<OutletRule>,
    imbibition_faces: Option<ImbibitionFaces>,
    drainage_faces: Option<DrainageFaces>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawOutput {
    profile_slabs: Option<Spanned<i64>>,
    interior_window: Option<Spanned<Vec<f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMechanisms {
    snap_off: Option<bool>,
    oil_layers: Option<bool>,
    cooperative_weights: Option<Spanned<Vec<f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProcess {
    kind: Spanned<ProcessKind>,
    until_pc_pa: Option<Spanned<f64>>,
    until_sw: Option<Spanned<f64>>,
    pc_steps: Option<Spanned<i64>>,
    kr_points: Option<Spanned<i64>>,
}

/// A study file with every key set to its default, commented
/// (`ganglion template study`); docs/keys.md documents the same keys.
pub const TEMPLATE: &str = include_str!("templates/study.toml");

/// Water viscosities accepted, Pa·s: no liquid water lies outside (water
/// is about 1e-3 Pa·s at 20 °C and 0.2e-3 near 150 °C; a thick polymer
/// solution reaches 0.1 Pa·s; common practice); values outside are unit
/// slips. Unusual values inside are warned about at run time
/// (`run::input_checks`).
pub const WATER_VISCOSITY_PA_S: [f64; 2] = [1.0e-6, 10.0];

/// Non-aqueous viscosities accepted, Pa·s: from below the lightest gases
/// (hydrogen and methane about 1e-5 Pa·s) to beyond bitumen at reservoir
/// temperature (about 1e3 Pa·s; common practice). Unusual values inside are
/// warned about at run time.
pub const NONAQUEOUS_VISCOSITY_PA_S: [f64; 2] = [1.0e-6, 1.0e4];

/// The forms of the study file's values, for parser messages.
const STUDY_FORMS: &[(&str, &str)] = &[
    ("Axis", "one of \"x\", \"y\", \"z\""),
    ("RawProcess", "a [[process]] table"),
    ("RawStudy", "a study file"),
];

/// Turns a byte span into a 1-based line.
fn line_of(text: &str, span: Range<usize>) -> usize {
    crate::text::line_at(text, span.start)
}

struct Checker<'a> {
    text: &'a str,
    errors: Vec<StudyError>,
}

impl Checker<'_> {
    fn fail(&mut self, key: &str, span: Option<Range<usize>>, message: impl Into<String>) {
        let line = span.map(|s| line_of(self.text, s));
        self.errors.push(StudyError {
            key: key.into(),
            line,
            message: message.into(),
        });
    }

    fn number(
        &mut self,
        key: &str,
        v: Option<Spanned<f64>>,
        default: f64,
        ok: impl Fn(f64) -> bool,
        rule: &str,
    ) -> f64 {
        match v {
            None => default,
            Some(s) => {
                let x = *s.get_ref();
                if !(x.is_finite() && ok(x)) {
                    self.fail(key, Some(s.span()), format!("value {x} must be {rule}"));
                    default
                } else {
                    x
                }
            }
        }
    }

    fn angle_range(
        &mut self,
        key: &str,
        v: Option<Spanned<Vec<f64>>>,
        default: [f64; 2],
    ) -> [f64; 2] {
        match v {
            None => default,
            Some(s) => {
                let span = s.span();
                let r = s.into_inner();
                if r.len() != 2 {
                    self.fail(
                        key,
                        Some(span),
                        format!("expected [min, max], got {} values", r.len()),
                    );
                    return default;
                }
                let (a, b) = (r[0], r[1]);
                if !(a.is_finite()
                    && b.is_finite()
                    && (0.0..=180.0).contains(&a)
                    && (0.0..=180.0).contains(&b))
                {
                    self.fail(
                        key,
                        Some(span),
                        format!("angles [{a}, {b}] must lie in [0, 180] degrees"),
                    );
                    return default;
                }
                if a > b {
                    self.fail(key, Some(span), format!("range [{a}, {b}] has min > max"));
                    return default;
                }
                [a, b]
            }
        }
    }

    fn count(&mut self, key: &str, v: Option<Spanned<i64>>, default: usize, max: i64) -> usize {
        match v {
            None => default,
            Some(s) => {
                let x = *s.get_ref();
                if !(1..=max).contains(&x) {
                    self.fail(
                        key,
                        Some(s.span()),
                        format!("value {x} must be an integer in [1, {max}]"),
                    );
                    default
                } else {
                    x as usize
                }
            }
        }
    }
}

impl Checker<'_> {
    /// The `[fluids]` table, defaults for what it leaves out.
    fn fluids(&mut self, raw: Option<RawFluids>) -> Fluids {
        let d = Fluids::default();
        match raw {
            None => d,
            Some(f) => Fluids {
                interfacial_tension_n_per_m: self.number(
                    "fluids.interfacial_tension_n_per_m",
                    f.interfacial_tension_n_per_m,
                    d.interfacial_tension_n_per_m,
                    |x| x > 0.0 && x < 1.0,
                    "a positive tension below 1 N/m",
                ),
                water_viscosity_pa_s: self.number(
                    "fluids.water_viscosity_pa_s",
                    f.water_viscosity_pa_s,
                    d.water_viscosity_pa_s,
                    |x| (WATER_VISCOSITY_PA_S[0]..=WATER_VISCOSITY_PA_S[1]).contains(&x),
                    "a viscosity in Pa·s within [1e-6, 10] (water is about 1e-3 Pa·s = 1 cP)",
                ),
                nonaqueous_viscosity_pa_s: self.number(
                    "fluids.nonaqueous_viscosity_pa_s",
                    f.nonaqueous_viscosity_pa_s,
                    d.nonaqueous_viscosity_pa_s,
                    |x| (NONAQUEOUS_VISCOSITY_PA_S[0]..=NONAQUEOUS_VISCOSITY_PA_S[1]).contains(&x),
                    "a viscosity in Pa·s within [1e-6, 1e4] (gases about 1e-5, oils 1e-4 to 1 \
                     Pa·s)",
                ),
                nonaqueous_label: match f.nonaqueous_label {
                    None => d.nonaqueous_label,
                    Some(s) if !s.get_ref().trim().is_empty() && s.get_ref().len() <= 40 => {
                        s.into_inner()
                    }
                    Some(s) => {
                        self.fail(
                            "fluids.nonaqueous_label",
                            Some(s.span()),
                            "must be a short non-empty name such as \"oil\", \"gas\" or \"CO2\"",
                        );
                        d.nonaqueous_label
                    }
                },
                water_conductivity_s_per_m: self.number(
                    "fluids.water_conductivity_s_per_m",
                    f.water_conductivity_s_per_m,
                    d.water_conductivity_s_per_m,
                    |x| x > 0.0,
                    "positive",
                ),
            },
        }
    }

    /// The `[wettability]` table, defaults for what it leaves out.
    fn wettability(&mut self, raw: Option<RawWettability>) -> WettabilitySpec {
        let d = WettabilitySpec::default();
        match raw {
            None => d,
            Some(w) => {
                let span_of = |v: &Option<Spanned<Vec<f64>>>| v.as_ref().map(Spanned::span);
                let adv_span = span_of(&w.advancing_contact_angle_deg);
                let ow_rec_span = span_of(&w.oil_wet_receding_contact_angle_deg);
                let rec = self.angle_range(
                    "wettability.receding_contact_angle_deg",
                    w.receding_contact_angle_deg,
                    d.receding_contact_angle_deg,
                );
                let adv = self.angle_range(
                    "wettability.advancing_contact_angle_deg",
                    w.advancing_contact_angle_deg,
                    rec,
                );
                let ow_adv = self.angle_range(
                    "wettability.oil_wet_advancing_contact_angle_deg",
                    w.oil_wet_advancing_contact_angle_deg,
                    d.oil_wet_advancing_contact_angle_deg,
                );
                let ow_rec = self.angle_range(
                    "wettability.oil_wet_receding_contact_angle_deg",
                    w.oil_wet_receding_contact_angle_deg,
                    ow_adv,
                );
                // Hysteresis runs one way: the advancing angle is at least
                // the receding one (common practice). The engine raises a
                // draw below it to it, so a range entirely on the wrong side
                // would silently mean "no hysteresis" everywhere.
                if adv_span.is_some() && adv[1] < rec[0] {
                    self.fail(
                        "wettability.advancing_contact_angle_deg",
                        adv_span,
                        format!(
                            "advancing range [{}, {}] lies entirely below the receding range \
                             [{}, {}]: advancing angles are at least the receding ones \
                             (were the two keys swapped?)",
                            adv[0], adv[1], rec[0], rec[1]
                        ),
                    );
                }
                if ow_rec_span.is_some() && ow_rec[0] > ow_adv[1] {
                    self.fail(
                        "wettability.oil_wet_receding_contact_angle_deg",
                        ow_rec_span,
                        format!(
                            "oil-wet receding range [{}, {}] lies entirely above the oil-wet \
                             advancing range [{}, {}]: receding angles are at most the \
                             advancing ones (were the two keys swapped?)",
                            ow_rec[0], ow_rec[1], ow_adv[0], ow_adv[1]
                        ),
                    );
                }
                WettabilitySpec {
                    receding_contact_angle_deg: rec,
                    advancing_contact_angle_deg: adv,
                    oil_wet_fraction: self.number(
                        "wettability.oil_wet_fraction",
                        w.oil_wet_fraction,
                        0.0,
                        |x| (0.0..=1.0).contains(&x),
                        "a fraction in [0, 1]",
                    ),
                    oil_wet_selection: w.oil_wet_selection.unwrap_or_default(),
                    oil_wet_advancing_contact_angle_deg: ow_adv,
                    oil_wet_receding_contact_angle_deg: ow_rec,
                }
            }
        }
    }

    /// The `[mechanisms]` table, defaults for what it leaves out.
    fn mechanisms(&mut self, raw: Option<RawMechanisms>) -> MechanismOptions {
        let d = MechanismOptions::default();
        match raw {
            None => d,
            Some(m) => MechanismOptions {
                snap_off: m.snap_off.unwrap_or(d.snap_off),
                oil_layers: m.oil_layers.unwrap_or(d.oil_layers),
                cooperative_weights: match m.cooperative_weights {
                    None => d.cooperative_weights,
                    Some(s) => {
                        let span = s.span();
                        let v = s.into_inner();
                        if v.is_empty() || v.iter().any(|x| !(x.is_finite() && *x >= 0.0)) {
                            self.fail(
                                "mechanisms.cooperative_weights",
                                Some(span),
                                "must be a non-empty list of non-negative numbers",
                            );
                            d.cooperative_weights
                        } else {
                            v
                        }
                    }
                },
            },
        }
    }

    /// The `[flow]` table, defaults for what it leaves out.
    fn flow(&mut self, raw: Option<RawFlow>) -> FlowSpec {
        let d = FlowSpec::default();
        match raw {
            None => d,
            Some(f) => FlowSpec {
                relative_permeability: f.relative_permeability.unwrap_or(d.relative_permeability),
                axis: f.axis,
                clay_tortuosity: self.number(
                    "flow.clay_tortuosity",
                    f.clay_tortuosity,
                    d.clay_tortuosity,
                    |x| x >= 1.0,
                    "at least 1",
                ),
                solver_tolerance: self.number(
                    "flow.solver_tolerance",
                    f.solver_tolerance,
                    d.solver_tolerance,
                    |x| x > 0.0 && x < 1e-2,
                    "in (0, 0.01)",
                ),
            },
        }
    }

    /// The `[microporosity]` table.
    fn microporosity(&mut self, raw: Option<RawMicroporosity>) -> Microporosity {
        let entry = raw.and_then(|m| m.entry_pressure_pa);
        Microporosity {
            entry_pressure_pa: entry.map(|v| {
                self.number(
                    "microporosity.entry_pressure_pa",
                    Some(v),
                    f64::INFINITY,
                    |x| x > 0.0,
                    "a positive pressure in Pa",
                )
            }),
        }
    }

    /// Refuses drainage targets above the microporosity entry pressure:
    /// the model keeps the microporosity water-filled, which holds only
    /// below it.
    fn drainage_within_microporosity(
        &mut self,
        m: &Microporosity,
        raw: &[(usize, Option<Range<usize>>)],
        processes: &[Process],
    ) {
        let Some(entry) = m.entry_pressure_pa else {
            return;
        };
        for &(i, ref span) in raw {
            let p = &processes[i];
            if let (ProcessKind::Drainage, StopAt::Pc(pc)) = (p.kind, p.stop)
                && pc > entry
            {
                self.fail(
                    &format!("process[{}].until_pc_pa", i + 1),
                    span.clone(),
                    format!(
                        "drainage to {pc} Pa exceeds microporosity.entry_pressure_pa = {entry} Pa; \
                         the model keeps the microporosity water-filled, which holds only below \
                         its entry pressure: stop the drainage at or below it"
                    ),
                );
            }
        }
    }

    /// The `[output]` table, defaults for what it leaves out.
    fn output(&mut self, raw: Option<RawOutput>) -> OutputSpec {
        let d = OutputSpec::default();
        let Some(o) = raw else { return d };
        let profile_slabs = self.count(
            "output.profile_slabs",
            o.profile_slabs,
            d.profile_slabs,
            1000,
        );
        let interior_window = match o.interior_window {
            None => None,
            Some(s) => {
                let span = s.span();
                let w = s.into_inner();
                if w.len() != 2 {
                    self.fail(
                        "output.interior_window",
                        Some(span),
                        format!(
                            "expected [start, end] as fractions of the sample length, got {} values",
                            w.len()
                        ),
                    );
                    None
                } else if !(w[0].is_finite()
                    && w[1].is_finite()
                    && 0.0 <= w[0]
                    && w[0] < w[1]
                    && w[1] <= 1.0)
                {
                    self.fail(
                        "output.interior_window",
                        Some(span),
                        format!(
                            "window [{}, {}] must satisfy 0 <= start < end <= 1 (fractions of \
                             the sample length along the flow axis)",
                            w[0], w[1]
                        ),
                    );
                    None
                } else {
                    Some([w[0], w[1]])
                }
            }
        };
        OutputSpec {
            profile_slabs,
            interior_window,
        }
    }

    /// The `[[process]]` list: at least one, alternating from drainage.
    fn processes(&mut self, raw_processes: Vec<Spanned<RawProcess>>) -> Vec<Process> {
        let mut processes = Vec::new();
        if raw_processes.is_empty() {
            self.fail("process", None, "at least one [[process]] is required");
        }
        for (i, p) in raw_processes.into_iter().enumerate() {
            let pspan = p.span();
            let p = p.into_inner();
            let key = |k: &str| format!("process[{}].{k}", i + 1);
            let kind = *p.kind.get_ref();
            let expected = if i % 2 == 0 {
                ProcessKind::Drainage
            } else {
                ProcessKind::Imbibition
            };
            if kind != expected {
                self.fail(
                    &key("kind"),
                    Some(p.kind.span()),
                    format!(
                        "process {} must be `{}`: processes alternate, starting with drainage",
                        i + 1,
                        expected.as_str()
                    ),
                );
            }
            let stop = match (p.until_pc_pa, p.until_sw) {
                (Some(pc), None) => {
                    let x = *pc.get_ref();
                    let ok = x.is_finite()
                        && match kind {
                            ProcessKind::Drainage => x > 0.0 || i > 0,
                            ProcessKind::Imbibition => true,
                        };
                    if !ok {
                        self.fail(
                        &key("until_pc_pa"),
                        Some(pc.span()),
                        format!("value {x} must be a finite pressure (positive for primary drainage)"),
                    );
                    }
                    StopAt::Pc(x)
                }
                (None, Some(sw)) => {
                    let x = *sw.get_ref();
                    if !(x > 0.0 && x < 1.0) {
                        self.fail(
                            &key("until_sw"),
                            Some(sw.span()),
                            format!("value {x} must lie in (0, 1)"),
                        );
                    }
                    StopAt::Sw(x)
                }
                (Some(pc), Some(_)) => {
                    self.fail(
                        &key("until_sw"),
                        Some(pc.span()),
                        "give either until_pc_pa or until_sw, not both",
                    );
                    StopAt::Pc(*pc.get_ref())
                }
                (None, None) => {
                    self.fail(
                        &key("until_pc_pa"),
                        Some(pspan),
                        "one of until_pc_pa or until_sw is required",
                    );
                    StopAt::Pc(0.0)
                }
            };
            let pc_steps = self.count(&key("pc_steps"), p.pc_steps, 40, 100_000);
            let kr_points = self.count(&key("kr_points"), p.kr_points, 20, 10_000);
            processes.push(Process {
                kind,
                stop,
                pc_steps,
                kr_points,
            });
        }
        processes
    }
}

impl Study {
    /// Parses and validates a study from TOML text, reporting every error
    /// found with its key and line.
    pub fn parse(text: &str) -> Result<Study, StudyErrors> {
        let raw: RawStudy = match toml::from_str(text) {
            Ok(r) => r,
            Err(e) => {
                let line = e.span().map(|s| line_of(text, s));
                let message = crate::text::plain_message(e.message(), STUDY_FORMS);
                let key = line
                    .and_then(|l| crate::text::key_on_line(text, l))
                    .unwrap_or_default();
                return Err(StudyErrors(vec![StudyError { key, line, message }]));
            }
        };
        let mut c = Checker {
            text,
            errors: Vec::new(),
        };
        let network = match raw.network {
            Some(s) if !s.get_ref().trim().is_empty() => s.into_inner(),
            Some(s) => {
                c.fail(
                    "network",
                    Some(s.span()),
                    "must name a CSV folder or a binary network file",
                );
                String::new()
            }
            None => {
                c.fail(
                    "network",
                    None,
                    "is required (path to a CSV folder or binary network file)",
                );
                String::new()
            }
        };
        let seed = match raw.seed {
            None => 1,
            Some(s) if *s.get_ref() >= 0 => *s.get_ref() as u64,
            Some(s) => {
                c.fail("seed", Some(s.span()), "must be a non-negative integer");
                1
            }
        };
        let fluids = c.fluids(raw.fluids);
        let wettability = c.wettability(raw.wettability);
        let (outlet, imbibition_faces, drainage_faces) = match raw.boundary {
            Some(b) => (
                b.outlet.unwrap_or_default(),
                b.imbibition_faces.unwrap_or_default(),
                b.drainage_faces.unwrap_or_default(),
            ),
            None => Default::default(),
        };
        let mechanisms = c.mechanisms(raw.mechanisms);
        let flow = c.flow(raw.flow);
        let microporosity = c.microporosity(raw.microporosity);
        let raw_processes = raw.process.unwrap_or_default();
        let pc_spans: Vec<(usize, Option<Range<usize>>)> = raw_processes
            .iter()
            .enumerate()
            .map(|(i, p)| (i, p.get_ref().until_pc_pa.as_ref().map(|v| v.span())))
            .collect();
        let processes = c.processes(raw_processes);
        if processes.len() == pc_spans.len() {
            c.drainage_within_microporosity(&microporosity, &pc_spans, &processes);
        }
        let output = c.output(raw.output);
        if c.errors.is_empty() {
            Ok(Study {
                network,
                seed,
                title: raw.title,
                fluids,
                wettability,
                outlet,
                imbibition_faces,
                drainage_faces,
                mechanisms,
                flow,
                microporosity,
                output,
                processes,
            })
        } else {
            Err(StudyErrors(c.errors))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn drainage_beyond_the_microporosity_entry_pressure_is_refused() {
        let text = |pc: f64| {
            format!(
                "network = \"n\"\n[microporosity]\nentry_pressure_pa = 5.0e5\n\
                 [[process]]\nkind = \"drainage\"\nuntil_pc_pa = {pc:.1}\n"
            )
        };
        let s = Study::parse(&text(1.0e5)).unwrap();
        assert_eq!(s.microporosity.entry_pressure_pa, Some(5.0e5));
        let e = Study::parse(&text(1.0e6)).unwrap_err();
        assert_eq!(e.0[0].key, "process[1].until_pc_pa");
        assert_eq!(e.0[0].line, Some(6));
        assert!(
            e.0[0].message.contains("microporosity"),
            "{}",
            e.0[0].message
        );
        let bad = "network = \"n\"\n[microporosity]\nentry_pressure_pa = -3.0\n\
                   [[process]]\nkind = \"drainage\"\nuntil_pc_pa = 1.0\n";
        let e = Study::parse(bad).unwrap_err();
        assert_eq!(e.0[0].key, "microporosity.entry_pressure_pa");
    }

    const GOOD: &str = r#"
network = "net"
seed = 7
[fluids]
interfacial_tension_n_per_m = 0.030
water_viscosity_pa_s = 1.0e-3
nonaqueous_viscosity_pa_s = 2.0e-3
nonaqueous_label = "oil"
[wettability]
receding_contact_angle_deg = [0.0, 20.0]
advancing_contact_angle_deg = [30.0, 50.0]
[[process]]
kind = "drainage"
until_pc_pa = 2.0e4
pc_steps = 40
[[process]]
kind = "imbibition"
until_sw = 0.9
"#;

    #[test]
    fn good_study_parses_with_defaults() {
        let s = Study::parse(GOOD).unwrap();
        assert_eq!(s.seed, 7);
        assert_eq!(s.processes.len(), 2);
        assert_eq!(s.processes[0].stop, StopAt::Pc(2.0e4));
        assert_eq!(s.processes[1].stop, StopAt::Sw(0.9));
        assert_eq!(s.processes[1].pc_steps, 40);
        assert_eq!(s.wettability.advancing_contact_angle_deg, [30.0, 50.0]);
        assert_eq!(s.outlet, OutletRule::Open);
    }

    fn first_error(text: &str) -> StudyError {
        Study::parse(text).unwrap_err().0.remove(0)
    }

    #[test]
    fn negative_tension_is_refused_with_key_and_line() {
        let e = first_error(&GOOD.replace("0.030", "-0.03"));
        assert_eq!(e.key, "fluids.interfacial_tension_n_per_m");
        assert_eq!(e.line, Some(5));
    }

    #[test]
    fn angle_outside_range_is_refused() {
        let e = first_error(&GOOD.replace("[30.0, 50.0]", "[30.0, 190.0]"));
        assert_eq!(e.key, "wettability.advancing_contact_angle_deg");
        assert_eq!(e.line, Some(11));
        assert!(e.message.contains("[0, 180]"), "{e}");
    }

    #[test]
    fn issue_18_advancing_range_below_receding_range_is_refused_for_both_wettabilities() {
        let e = first_error(&GOOD.replace(
            "receding_contact_angle_deg = [0.0, 20.0]\nadvancing_contact_angle_deg = [30.0, 50.0]",
            "receding_contact_angle_deg = [60.0, 80.0]\nadvancing_contact_angle_deg = [0.0, 5.0]",
        ));
        assert_eq!(e.key, "wettability.advancing_contact_angle_deg");
        assert_eq!(e.line, Some(11));
        assert!(e.message.contains("entirely below"), "{e}");
        let ow = GOOD.replace(
            "advancing_contact_angle_deg = [30.0, 50.0]",
            "advancing_contact_angle_deg = [30.0, 50.0]\noil_wet_advancing_contact_angle_deg = [100.0, 110.0]\noil_wet_receding_contact_angle_deg = [150.0, 170.0]",
        );
        let e = first_error(&ow);
        assert_eq!(e.key, "wettability.oil_wet_receding_contact_angle_deg");
        assert_eq!(e.line, Some(13));
        // Overlapping ranges stay accepted: the engine raises the draws
        // that fall on the wrong side.
        let overlap = GOOD.replace("[30.0, 50.0]", "[10.0, 50.0]");
        assert!(Study::parse(&overlap).is_ok());
    }

    #[test]
    fn sw_target_outside_unit_interval_is_refused() {
        let e = first_error(&GOOD.replace("until_sw = 0.9", "until_sw = 1.5"));
        assert_eq!(e.key, "process[2].until_sw");
        assert_eq!(e.line, Some(18));
    }

    #[test]
    fn unknown_key_is_refused_with_its_name_and_line() {
        let e = first_error(&GOOD.replace("seed = 7", "seed = 7\ncolour = \"red\""));
        assert!(e.message.contains("colour"), "{e}");
        assert_eq!(e.line, Some(4));
    }

    #[test]
    fn processes_must_alternate_from_drainage() {
        let e = first_error(&GOOD.replace("kind = \"drainage\"", "kind = \"imbibition\""));
        assert_eq!(e.key, "process[1].kind");
    }

    #[test]
    fn output_and_drainage_faces_parse_with_defaults() {
        let s = Study::parse(GOOD).unwrap();
        assert_eq!(s.output, OutputSpec::default());
        assert_eq!(s.drainage_faces, DrainageFaces::Inlet);
        let text = GOOD.replace(
            "seed = 7",
            "seed = 7\n[boundary]\ndrainage_faces = \"all\"\n[output]\nprofile_slabs = 5\ninterior_window = [0.1, 0.9]",
        );
        let s = Study::parse(&text).unwrap();
        assert_eq!(s.drainage_faces, DrainageFaces::All);
        assert_eq!(s.output.profile_slabs, 5);
        assert_eq!(s.output.interior_window, Some([0.1, 0.9]));
    }

    #[test]
    fn bad_interior_window_is_refused_with_key_and_line() {
        for w in ["[0.9, 0.1]", "[0.1]", "[-0.1, 0.5]", "[0.2, 1.5]"] {
            let text = GOOD.replace(
                "seed = 7",
                &format!("seed = 7\n[output]\ninterior_window = {w}"),
            );
            let e = first_error(&text);
            assert_eq!(e.key, "output.interior_window", "{w}: {e}");
            assert_eq!(e.line, Some(5), "{w}: {e}");
        }
        let text = GOOD.replace("seed = 7", "seed = 7\n[output]\nprofile_slabs = 0");
        assert_eq!(first_error(&text).key, "output.profile_slabs");
        let text = GOOD.replace("seed = 7", "seed = 7\n[boundary]\ndrainage_faces = \"top\"");
        let e = first_error(&text);
        assert_eq!(e.line, Some(5), "{e}");
        assert!(e.message.contains("top"), "{e}");
    }

    #[test]
    fn viscosities_outside_physical_bounds_are_refused() {
        // 600 cP water is unusual but possible (warned at run time); 600
        // Pa·s water is not water (common practice).
        assert!(Study::parse(&GOOD.replace("1.0e-3", "0.6")).is_ok());
        let e = first_error(&GOOD.replace("1.0e-3", "600.0"));
        assert_eq!(e.key, "fluids.water_viscosity_pa_s");
        assert_eq!(e.line, Some(6));
        assert!(e.message.contains("Pa·s"), "{e}");
        let e = first_error(&GOOD.replace("2.0e-3", "1.0e-7"));
        assert_eq!(e.key, "fluids.nonaqueous_viscosity_pa_s");
    }

    #[test]
    fn type_errors_name_the_key_and_the_form_not_rust_types() {
        for (bad, key) in [
            (
                "[mechanisms]\ncooperative_weights = \"a\"",
                "cooperative_weights",
            ),
            ("fluids = 3", "fluids"),
            ("[flow]\nsolver_tolerance = \"small\"", "solver_tolerance"),
        ] {
            let text = format!(
                "network = \"net\"\n{bad}\n[[process]]\nkind = \"drainage\"\nuntil_pc_pa = 1e4\n"
            );
            let e = first_error(&text);
            assert_eq!(e.key, key, "{e}");
            for rust in ["struct", "f64", "Raw", "usize", "Spanned"] {
                assert!(!e.message.contains(rust), "{bad}: {e}");
            }
        }
    }

    #[test]
    fn all_errors_are_reported_at_once() {
        let bad = GOOD
            .replace("0.030", "-1")
            .replace("until_sw = 0.9", "until_sw = 0.0")
            .replace("2.0e-3", "0.0");
        let errs = Study::parse(&bad).unwrap_err().0;
        assert_eq!(errs.len(), 3, "{errs:?}");
    }
}
