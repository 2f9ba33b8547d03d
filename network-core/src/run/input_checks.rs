//! Warnings about inputs that run to the end but probably do not say what
//! the user meant: a drainage stopped below the lowest entry pressure
//! (a target in kPa written as Pa), an imbibition or a later drainage whose
//! target lies on the wrong side of its starting pressure, a process that
//! changed nothing, sample lengths that look like micrometres written as
//! metres, and fluid properties outside their usual ranges. Each check
//! returns its warning text (or nothing); the run collects them into its
//! `warnings`. Values that cannot be physical are refused when the study is
//! parsed ([`crate::study`]); these are the ones that may be meant.
//!
//! Model limits (states the model cannot represent well) are in
//! [`super::model_limits`].

use crate::capillary;
use crate::engine::Engine;
use crate::network::{Boundary, Network};
use crate::params::{DrainageFaces, Fluids, ProcessKind, StopAt, Study};

/// Water viscosities outside this range, Pa·s, are warned about: water and
/// brines at reservoir temperatures lie at about 0.2–2 mPa·s (common
/// practice); polymer solutions reach beyond.
pub const WATER_VISCOSITY_USUAL_PA_S: [f64; 2] = [1.0e-4, 1.0e-2];

/// Non-aqueous viscosities outside this range, Pa·s, are warned about:
/// gases and supercritical CO2 lie at about 1e-5–1e-4 Pa·s, light to heavy
/// oils at about 1e-4–1 Pa·s (common practice).
pub const NONAQUEOUS_VISCOSITY_USUAL_PA_S: [f64; 2] = [1.0e-5, 1.0];

/// Interfacial tensions outside this range, N/m, are warned about:
/// water–oil about 0.01–0.05, water–CO2 at storage conditions about
/// 0.025–0.04, water–gas up to 0.072 (common practice).
pub const TENSION_USUAL_N_PER_M: [f64; 2] = [1.0e-3, 0.1];

/// A process whose water saturation moved less than this "changed nothing".
pub const UNCHANGED_SW: f64 = 1.0e-6;

/// Ratio between the sample length and the extent of the pore centres along
/// the flow axis beyond which the length is called inconsistent (a factor
/// 1e6 is a length in µm written as m; real samples extend by at most a few
/// pore spacings beyond their pore centres).
pub const LENGTH_RATIO_LIMIT: f64 = 100.0;

/// Porosity below which the network is called suspicious: rocks below 1e-3
/// hold no measurable pore space (common practice); a generator spacing in
/// µm written as m gives such values.
pub const LOW_POROSITY: f64 = 1.0e-3;

/// Warnings for fluid properties outside their usual ranges.
pub fn fluids(f: &Fluids) -> Vec<String> {
    let mut out = Vec::new();
    let outside = |x: f64, r: [f64; 2]| x < r[0] || x > r[1];
    if outside(f.water_viscosity_pa_s, WATER_VISCOSITY_USUAL_PA_S) {
        out.push(format!(
            "fluids.water_viscosity_pa_s = {} Pa·s ({} cP) is outside the usual {}–{} Pa·s of \
             water and brines (common practice); a value in cP or mPa·s given as Pa·s?",
            f.water_viscosity_pa_s,
            f.water_viscosity_pa_s * 1e3,
            WATER_VISCOSITY_USUAL_PA_S[0],
            WATER_VISCOSITY_USUAL_PA_S[1]
        ));
    }
    if outside(f.nonaqueous_viscosity_pa_s, NONAQUEOUS_VISCOSITY_USUAL_PA_S) {
        out.push(format!(
            "fluids.nonaqueous_viscosity_pa_s = {} Pa·s ({} cP) is outside the usual {}–{} Pa·s \
             of gases, CO2 and oils (common practice); a value in cP or mPa·s given as Pa·s?",
            f.nonaqueous_viscosity_pa_s,
            f.nonaqueous_viscosity_pa_s * 1e3,
            NONAQUEOUS_VISCOSITY_USUAL_PA_S[0],
            NONAQUEOUS_VISCOSITY_USUAL_PA_S[1]
        ));
    }
    if outside(f.interfacial_tension_n_per_m, TENSION_USUAL_N_PER_M) {
        out.push(format!(
            "fluids.interfacial_tension_n_per_m = {} N/m is outside the usual {}–{} N/m of \
             water–oil, water–gas and water–CO2 pairs (common practice); a value in mN/m \
             (dyn/cm) given as N/m?",
            f.interfacial_tension_n_per_m, TENSION_USUAL_N_PER_M[0], TENSION_USUAL_N_PER_M[1]
        ));
    }
    out
}

/// Warnings for a network whose sample length disagrees with its pore
/// positions, or whose porosity is near zero (lengths in µm given as m).
pub fn network(network: &Network) -> Vec<String> {
    let mut out = Vec::new();
    let info = network.info();
    if let Some((ratio, extent)) =
        crate::network::validate::length_extent_ratio(info, network.pores())
        && !(1.0 / LENGTH_RATIO_LIMIT..=LENGTH_RATIO_LIMIT).contains(&ratio)
    {
        out.push(format!(
            "network length_m = {} m but the pore centres span {extent:.3e} m along the flow \
             axis (ratio {ratio:.3e}); a length in µm given in m? permeability and formation \
             factor use length_m",
            info.length_m
        ));
    }
    let phi = network.porosity();
    if phi < LOW_POROSITY {
        out.push(format!(
            "the network's porosity is {phi:.3e}: pore volumes are tiny against the bulk volume \
             (a generator spacing_m or bulk_volume_m3 in µm or mm given as m?)"
        ));
    }
    out
}

/// The lowest capillary pressure, Pa, at which the non-aqueous phase can
/// enter any of the pores it is offered at the start of a primary drainage
/// (the inlet pores; every pore with `DrainageFaces::All`, a lower bound on
/// the face pores). `None` for a network without such pores.
pub fn lowest_entry_pressure(engine: &Engine<'_>, faces: DrainageFaces, sigma: f64) -> Option<f64> {
    let mut lowest: Option<f64> = None;
    for p in 0..engine.n_pores() {
        let offered = match faces {
            DrainageFaces::Inlet => engine.boundary(p) == Boundary::Inlet,
            DrainageFaces::All => true,
        };
        if !offered {
            continue;
        }
        let pc = capillary::drainage_entry_pc(&engine.section(p), engine.angles.receding[p], sigma);
        if pc.is_finite() {
            lowest = Some(lowest.map_or(pc, |l: f64| l.min(pc)));
        }
    }
    lowest
}

/// Warning for a primary drainage stopped (at `target_pa`) below the
/// lowest entry pressure of the pores it is offered: no non-aqueous phase
/// enters.
pub fn drainage_below_entry(
    process: usize,
    target_pa: f64,
    lowest_pa: f64,
    phase: &str,
) -> Option<String> {
    (target_pa < lowest_pa).then(|| {
        format!(
            "process {process} (drainage): until_pc_pa = {target_pa} Pa is below the lowest entry \
             pressure of the pores it enters from, {lowest_pa:.1} Pa ({:.3} kPa): no {phase} \
             enters; \
             a target meant in kPa or bar given in Pa?",
            lowest_pa / 1e3
        )
    })
}

/// Warning for a process whose pressure target lies on the side of its
/// starting pressure where it does nothing: an imbibition stopped at or
/// above the Pc it starts from, a drainage at or below it.
pub fn target_behind_start(
    process: usize,
    kind: ProcessKind,
    target_pa: f64,
    start_pa: f64,
) -> Option<String> {
    let behind = match kind {
        ProcessKind::Imbibition => target_pa >= start_pa,
        ProcessKind::Drainage => target_pa <= start_pa,
    };
    behind.then(|| {
        let (dir, way) = match kind {
            ProcessKind::Imbibition => ("above", "falls"),
            ProcessKind::Drainage => ("below", "rises"),
        };
        format!(
            "process {process} ({}): until_pc_pa = {target_pa} Pa is at or {dir} the capillary \
             pressure it starts from, {start_pa} Pa; Pc {way} during a {}, so the process does \
             nothing",
            kind.as_str(),
            kind.as_str()
        )
    })
}

/// The warning about the pressure target of process `i` (0-based) of
/// `study`, checked against the engine's state before the process:
/// [`drainage_below_entry`] for the primary drainage,
/// [`target_behind_start`] for the later processes (`start_pa`: the Pc at
/// which the previous process ended). Saturation targets are not checked
/// here (a process that cannot move towards its saturation target changes
/// nothing and is caught by [`unchanged`]).
pub fn process_target(
    engine: &Engine<'_>,
    study: &Study,
    i: usize,
    start_pa: Option<f64>,
) -> Option<String> {
    let p = study.processes.get(i)?;
    let StopAt::Pc(target) = p.stop else {
        return None;
    };
    match (i, start_pa) {
        (0, _) => {
            let lowest = lowest_entry_pressure(
                engine,
                study.drainage_faces,
                study.fluids.interfacial_tension_n_per_m,
            )?;
            drainage_below_entry(1, target, lowest, &study.fluids.nonaqueous_label)
        }
        (_, Some(start)) => target_behind_start(i + 1, p.kind, target, start),
        (_, None) => None,
    }
}

/// Warning for a process whose water saturation moved by less than
/// [`UNCHANGED_SW`].
pub fn unchanged(process: usize, kind: ProcessKind, sw_start: f64, sw_end: f64) -> Option<String> {
    ((sw_end - sw_start).abs() < UNCHANGED_SW).then(|| {
        format!(
            "process {process} ({}) changed nothing: Sw stayed at {sw_end:.6}; check its target",
            kind.as_str()
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn usual_fluids_raise_no_warning_and_unit_slips_do() {
        // Water 1 mPa·s, oil 2 mPa·s, 30 mN/m: a usual water–oil pair
        // (common practice).
        assert!(fluids(&Fluids::default()).is_empty());
        // 600 cP water written as 0.6 Pa·s.
        let f = Fluids {
            water_viscosity_pa_s: 0.6,
            ..Fluids::default()
        };
        let w = fluids(&f);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("water_viscosity_pa_s"), "{w:?}");
        // 30 mN/m written as 30e-5 N/m, and a gas at 1e-6 Pa·s.
        let f = Fluids {
            interfacial_tension_n_per_m: 3.0e-4,
            nonaqueous_viscosity_pa_s: 2.0e-6,
            ..Fluids::default()
        };
        let w = fluids(&f);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w.iter().any(|x| x.contains("interfacial_tension")));
        assert!(w.iter().any(|x| x.contains("nonaqueous_viscosity")));
    }

    #[test]
    fn targets_on_the_wrong_side_of_the_start_are_named() {
        let w = target_behind_start(2, ProcessKind::Imbibition, 2.0e4, 1.0e4).unwrap();
        assert!(w.contains("process 2 (imbibition)"), "{w}");
        assert!(target_behind_start(2, ProcessKind::Imbibition, -5.0e3, 1.0e4).is_none());
        assert!(target_behind_start(3, ProcessKind::Drainage, -2.0e4, -1.0e4).is_some());
        assert!(target_behind_start(3, ProcessKind::Drainage, 1.0e4, -1.0e4).is_none());
    }

    #[test]
    fn unchanged_process_is_named_and_a_small_change_is_not() {
        assert!(unchanged(1, ProcessKind::Drainage, 1.0, 1.0 - 1e-7).is_some());
        assert!(unchanged(1, ProcessKind::Drainage, 1.0, 1.0 - 1e-5).is_none());
        let w = drainage_below_entry(1, 100.0, 4.0e3, "oil").unwrap();
        assert!(w.contains("4000.0 Pa") && w.contains("kPa"), "{w}");
        assert!(drainage_below_entry(1, 1.0e5, 4.0e3, "oil").is_none());
    }
}
