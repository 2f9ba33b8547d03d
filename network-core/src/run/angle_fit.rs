//! Fitting the advancing contact-angle range of a (calibrated) network to a
//! measured residual non-wetting saturation and/or Amott water index.
//!
//! # The simulated test
//!
//! For one advancing range `[c − w/2, c + w/2]` (centre `c`, fixed width
//! `w`), the network, fully water-saturated, is drained with the receding
//! angles of the lab data from every face (a plug surrounded by the
//! non-aqueous phase, as in a porous-plate or centrifuge primary drainage)
//! down to the measured initial water saturation `S_wi`; the contacted
//! elements then take advancing angles drawn uniformly from the range
//! (`wettability::ContactAngles::alter`, no oil-wet fraction), and water
//! imbibes from both faces along the flow axis (a plug surrounded by
//! water, as in the Amott test) to `P_c = −20 σ / r_min`, ten times the
//! entry pressure `2σ/r_min` of the smallest element were it circular
//! (Young–Laplace): the waterflood to residual. (Ending at `−200 σ /
//! r_min` instead gave the same residual saturations, to four digits, on
//! the 10³ test lattice at advancing centres 100–170°.)
//!
//! - The residual non-wetting saturation `S_nr` is the non-aqueous
//!   saturation left at the end (trapped or still connected in layers),
//!   what a lab measures after a flood.
//! - The Amott water index is `I_w = (S_w(P_c = 0) − S_wi)/(S_w,end −
//!   S_wi)` (Amott 1959, Trans. AIME 216:156–162), with the spontaneous
//!   part read at the level `P_c = 0` that every process records
//!   ([`crate::run::indices::amott_water`]).
//!
//! Saturations do not depend on σ (every threshold is ∝ σ), so the study's
//! default σ is used.
//!
//! # The search
//!
//! The misfit of a centre is `J(c) = Σ ((sim − meas)/scale)²` over the data
//! given, with scales [`SNR_SCALE`] and [`AMOTT_SCALE`] (typical
//! repeatabilities of these measurements, common practice). In the model
//! the residual saturation changes little through the water-wet range,
//! peaks near 100° and falls through the oil-wet range (measured on a 10³ lattice: 0.47–0.51 up to 80°, 0.56 at 100°,
//! 0.21 at 180°; cf. the dependence on the advancing angle in Blunt 1998,
//! J. Pet. Sci. Eng. 20:117–125); the Amott water index is 1 while every
//! advancing angle is below 90° and falls to a few per cent beyond 120°.
//! Neither is monotone over the whole range, so `J` is first scanned on
//! [`SCAN_POINTS`] evenly spaced centres over the allowed range and then
//! refined by golden-section search between the neighbours of the best
//! scan point. The draws are fixed per element, so a small change of `c`
//! changes no filling order until one threshold crosses another; corner
//! menisci and layers move continuously with the angle. On the test
//! networks the refinement recovered a centre within 0.05°. Where the
//! data barely depend on the angle (a residual saturation alone in the
//! water-wet range), the fitted centre is poorly determined:
//! `angle-scan.csv` shows how flat `J` is.
//!
//! # Refusal
//!
//! A measured value outside the range the scan produced, widened by its
//! acceptance limit ([`MAX_SNR_MISFIT`], [`MAX_AMOTT_MISFIT`]), is refused
//! with the value and that range; so is a fit that leaves a misfit above
//! its limit.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::engine::{Engine, Setup};
use crate::geometry::Geometry;
use crate::network::Network;
use crate::params::{
    DrainageFaces, ImbibitionFaces, MechanismOptions, OutletRule, ProcessKind, StopAt,
    WettabilitySpec,
};
use crate::progress::Silent;
use crate::run::indices::amott_water;
use crate::run::process::run_process;
use crate::wettability::ContactAngles;

/// Saturation scale of the objective for `S_nr`.
pub const SNR_SCALE: f64 = 0.02;
/// Scale of the objective for the Amott water index.
pub const AMOTT_SCALE: f64 = 0.05;
/// Largest accepted `|S_nr,sim − S_nr,meas|` after the fit.
pub const MAX_SNR_MISFIT: f64 = 0.03;
/// Largest accepted `|I_w,sim − I_w,meas|` after the fit.
pub const MAX_AMOTT_MISFIT: f64 = 0.1;
/// Number of centres of the scan.
pub const SCAN_POINTS: usize = 17;
/// Golden-section iterations after the scan.
const GOLDEN_ITERATIONS: usize = 12;
/// Interfacial tension of the simulated test, N/m (saturations do not
/// depend on it).
const SIGMA: f64 = 0.030;
/// Pressure steps of each process.
const PC_STEPS: usize = 40;

/// Measured waterflood / Amott data of a plug (table `[waterflood]` of the
/// lab-data file).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WaterfloodData {
    /// Initial water saturation before the waterflood (end of primary
    /// drainage), fraction.
    pub initial_water_saturation: f64,
    /// Measured residual non-wetting saturation after the waterflood.
    pub residual_nonwetting_saturation: Option<f64>,
    /// Measured Amott water index.
    pub amott_water_index: Option<f64>,
    /// Receding (drainage) contact-angle range, degrees through water.
    pub receding_contact_angle_deg: [f64; 2],
    /// Width of the fitted advancing range, degrees.
    pub advancing_range_width_deg: f64,
    /// Bounds within which the fitted advancing range must lie, degrees.
    pub advancing_search_deg: [f64; 2],
}

impl WaterfloodData {
    /// Default receding range, degrees.
    pub const DEFAULT_RECEDING: [f64; 2] = [0.0, 0.0];
    /// Default width of the advancing range, degrees.
    pub const DEFAULT_WIDTH: f64 = 20.0;
    /// Default bounds of the advancing range, degrees.
    pub const DEFAULT_SEARCH: [f64; 2] = [0.0, 180.0];

    /// Checks the values; the error gives the key and a message naming the
    /// value.
    pub fn validate(&self) -> Result<(), (&'static str, String)> {
        let frac = |k: &'static str, v: f64| {
            if v.is_finite() && (0.0..=1.0).contains(&v) {
                Ok(())
            } else {
                Err((
                    k,
                    format!("{k} = {v}: expected a fraction in [0, 1], not a percentage"),
                ))
            }
        };
        frac("initial_water_saturation", self.initial_water_saturation)?;
        if self.initial_water_saturation >= 1.0 {
            return Err((
                "initial_water_saturation",
                format!(
                    "initial_water_saturation = {}: must be below 1 (some non-aqueous phase must enter)",
                    self.initial_water_saturation
                ),
            ));
        }
        if let Some(v) = self.residual_nonwetting_saturation {
            frac("residual_nonwetting_saturation", v)?;
        }
        if let Some(v) = self.amott_water_index {
            frac("amott_water_index", v)?;
        }
        if self.residual_nonwetting_saturation.is_none() && self.amott_water_index.is_none() {
            return Err((
                "waterflood",
                "[waterflood] gives neither residual_nonwetting_saturation nor amott_water_index: nothing to fit".into(),
            ));
        }
        let [r0, r1] = self.receding_contact_angle_deg;
        if !(r0.is_finite() && r1.is_finite() && 0.0 <= r0 && r0 <= r1 && r1 <= 180.0) {
            return Err((
                "receding_contact_angle_deg",
                format!("receding_contact_angle_deg = [{r0}, {r1}]: expected 0 ≤ low ≤ high ≤ 180"),
            ));
        }
        let [s0, s1] = self.advancing_search_deg;
        if !(s0.is_finite() && s1.is_finite() && 0.0 <= s0 && s0 < s1 && s1 <= 180.0) {
            return Err((
                "advancing_search_deg",
                format!("advancing_search_deg = [{s0}, {s1}]: expected 0 ≤ low < high ≤ 180"),
            ));
        }
        let w = self.advancing_range_width_deg;
        if !(w.is_finite() && w >= 0.0 && w <= s1 - s0) {
            return Err((
                "advancing_range_width_deg",
                format!(
                    "advancing_range_width_deg = {w}: expected 0 ≤ width ≤ {} (the span of advancing_search_deg)",
                    s1 - s0
                ),
            ));
        }
        Ok(())
    }
}

/// The simulated test at one advancing centre.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct AngleTrial {
    /// Centre of the advancing range, degrees.
    pub advancing_centre_deg: f64,
    /// Residual non-wetting saturation at the end of the imbibition.
    pub residual_nonwetting_saturation: f64,
    /// Its trapped part.
    pub trapped_nonwetting_saturation: f64,
    /// Amott water index.
    pub amott_water_index: f64,
    /// Objective `J`.
    pub objective: f64,
}

/// The fitted advancing range and its misfits.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AngleFit {
    /// Receding range used, degrees.
    pub receding_contact_angle_deg: [f64; 2],
    /// Fitted centre of the advancing range, degrees.
    pub advancing_centre_deg: f64,
    /// Fitted advancing range, degrees.
    pub advancing_contact_angle_deg: [f64; 2],
    /// Water saturation reached by the primary drainage.
    pub initial_water_saturation: f64,
    /// Measured residual non-wetting saturation (if given).
    pub measured_residual_nonwetting_saturation: Option<f64>,
    /// Simulated residual non-wetting saturation at the fit.
    pub residual_nonwetting_saturation: f64,
    /// Simulated − measured `S_nr` (if measured).
    pub residual_nonwetting_misfit: Option<f64>,
    /// Measured Amott water index (if given).
    pub measured_amott_water_index: Option<f64>,
    /// Simulated Amott water index at the fit.
    pub amott_water_index: f64,
    /// Simulated − measured `I_w` (if measured).
    pub amott_water_misfit: Option<f64>,
    /// Range of `S_nr` over the scan `[min, max]`.
    pub residual_nonwetting_scan_range: [f64; 2],
    /// Range of `I_w` over the scan `[min, max]`.
    pub amott_water_scan_range: [f64; 2],
    /// Every centre tried, in the order tried (scan first).
    pub trials: Vec<AngleTrial>,
    /// True when every misfit is within its limit.
    pub accepted: bool,
    /// Why the data were refused (empty when accepted).
    pub refusals: Vec<String>,
}

/// Why the fit could not run.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum AngleFitError {
    /// A lab value is outside its range.
    #[error("lab data [waterflood]: {0}")]
    BadData(String),
}

/// The drained engine and the imbibition end pressure, shared by every
/// trial.
struct Drained<'a> {
    engine: Engine<'a>,
    swi: f64,
    end_pc: f64,
}

fn drain<'a>(
    network: &'a Network,
    geometry: &'a Geometry,
    data: &WaterfloodData,
    seed: u64,
) -> Drained<'a> {
    let spec = WettabilitySpec {
        receding_contact_angle_deg: data.receding_contact_angle_deg,
        advancing_contact_angle_deg: data.receding_contact_angle_deg,
        ..WettabilitySpec::default()
    };
    let angles = ContactAngles::intrinsic(&spec, network.n_elements(), seed);
    let setup = Setup {
        network,
        geometry,
        sigma: SIGMA,
        outlet: OutletRule::Open,
        imbibition_faces: ImbibitionFaces::Both,
        mechanisms: MechanismOptions::default(),
        seed,
    };
    let mut engine = Engine::new(setup, angles);
    engine.set_drainage_faces(DrainageFaces::All);
    let out = run_process(
        &mut engine,
        ProcessKind::Drainage,
        StopAt::Sw(data.initial_water_saturation),
        PC_STEPS,
        &Silent,
    );
    let r_min = network
        .pores()
        .radius
        .iter()
        .chain(network.throats().radius.iter())
        .copied()
        .filter(|r| *r > 0.0)
        .fold(f64::INFINITY, f64::min);
    let end_pc = if r_min.is_finite() {
        -20.0 * SIGMA / r_min
    } else {
        -1.0e9
    };
    Drained {
        engine,
        swi: out.final_saturation.sw,
        end_pc,
    }
}

fn trial(d: &Drained<'_>, data: &WaterfloodData, centre: f64) -> AngleTrial {
    let w = data.advancing_range_width_deg;
    let spec = WettabilitySpec {
        receding_contact_angle_deg: data.receding_contact_angle_deg,
        advancing_contact_angle_deg: [centre - 0.5 * w, centre + 0.5 * w],
        ..WettabilitySpec::default()
    };
    let mut engine = d.engine.clone();
    engine.alter_wettability(&spec);
    let out = run_process(
        &mut engine,
        ProcessKind::Imbibition,
        StopAt::Pc(d.end_pc),
        PC_STEPS,
        &Silent,
    );
    let pc: Vec<f64> = out.points.iter().map(|p| p.pc_pa).collect();
    let sw: Vec<f64> = out.points.iter().map(|p| p.saturation.sw).collect();
    let end = out.final_saturation;
    let iw = amott_water(&pc, &sw);
    let mut t = AngleTrial {
        advancing_centre_deg: centre,
        residual_nonwetting_saturation: end.sn,
        trapped_nonwetting_saturation: end.sn_trapped,
        amott_water_index: if iw.is_finite() { iw } else { 0.0 },
        objective: 0.0,
    };
    t.objective = objective(&t, data);
    t
}

fn objective(t: &AngleTrial, data: &WaterfloodData) -> f64 {
    let mut j = 0.0;
    if let Some(m) = data.residual_nonwetting_saturation {
        j += ((t.residual_nonwetting_saturation - m) / SNR_SCALE).powi(2);
    }
    if let Some(m) = data.amott_water_index {
        j += ((t.amott_water_index - m) / AMOTT_SCALE).powi(2);
    }
    j
}

/// The simulated residual saturation and Amott water index of `network`
/// for one advancing range centred at `centre_deg` (module documentation);
/// used to make test data and to inspect the model.
pub fn simulate_waterflood(
    network: &Network,
    data: &WaterfloodData,
    centre_deg: f64,
    seed: u64,
) -> AngleTrial {
    let geometry = Geometry::new(network, seed);
    let d = drain(network, &geometry, data, seed);
    trial(&d, data, centre_deg)
}

/// Fits the centre of the advancing contact-angle range of `network` to
/// the measured data (module documentation). `seed` sets the element
/// shapes and the angle draws, as a study's seed does.
pub fn fit_advancing_angles(
    network: &Network,
    data: &WaterfloodData,
    seed: u64,
) -> Result<AngleFit, AngleFitError> {
    data.validate()
        .map_err(|(_, m)| AngleFitError::BadData(m))?;
    let geometry = Geometry::new(network, seed);
    let d = drain(network, &geometry, data, seed);
    let w = data.advancing_range_width_deg;
    let (c_lo, c_hi) = (
        data.advancing_search_deg[0] + 0.5 * w,
        data.advancing_search_deg[1] - 0.5 * w,
    );
    let mut trials: Vec<AngleTrial> = Vec::new();
    let n = if c_hi > c_lo { SCAN_POINTS } else { 1 };
    let step = if n > 1 {
        (c_hi - c_lo) / (n - 1) as f64
    } else {
        0.0
    };
    // The scan's trials are independent (each starts from a copy of the
    // drained engine), so they run in parallel; `collect` keeps their
    // order, so the result does not depend on the thread count.
    trials.extend(
        (0..n)
            .into_par_iter()
            .map(|k| trial(&d, data, c_lo + step * k as f64))
            .collect::<Vec<_>>(),
    );
    let range = |f: fn(&AngleTrial) -> f64| {
        trials
            .iter()
            .map(f)
            .fold([f64::INFINITY, f64::NEG_INFINITY], |[a, b], v| {
                [a.min(v), b.max(v)]
            })
    };
    let snr_range = range(|t| t.residual_nonwetting_saturation);
    let iw_range = range(|t| t.amott_water_index);
    // Best scan point (first of equals: lowest centre), then golden section
    // between its neighbours.
    let k_best = (0..n)
        .min_by(|&a, &b| trials[a].objective.total_cmp(&trials[b].objective))
        .unwrap_or(0);
    let mut best = trials[k_best];
    if n > 1 {
        let mut a = (best.advancing_centre_deg - step).max(c_lo);
        let mut b = (best.advancing_centre_deg + step).min(c_hi);
        let g = (5f64.sqrt() - 1.0) / 2.0;
        let mut x1 = b - g * (b - a);
        let mut x2 = a + g * (b - a);
        let mut t1 = trial(&d, data, x1);
        let mut t2 = trial(&d, data, x2);
        trials.push(t1);
        trials.push(t2);
        for _ in 0..GOLDEN_ITERATIONS {
            if t1.objective <= t2.objective {
                b = x2;
                x2 = x1;
                t2 = t1;
                x1 = b - g * (b - a);
                t1 = trial(&d, data, x1);
                trials.push(t1);
            } else {
                a = x1;
                x1 = x2;
                t1 = t2;
                x2 = a + g * (b - a);
                t2 = trial(&d, data, x2);
                trials.push(t2);
            }
        }
        for t in [t1, t2] {
            if t.objective < best.objective {
                best = t;
            }
        }
    }
    let mut refusals = Vec::new();
    let snr_misfit = data
        .residual_nonwetting_saturation
        .map(|m| best.residual_nonwetting_saturation - m);
    let iw_misfit = data.amott_water_index.map(|m| best.amott_water_index - m);
    let (s0, s1) = (data.advancing_search_deg[0], data.advancing_search_deg[1]);
    if let (Some(m), Some(e)) = (data.residual_nonwetting_saturation, snr_misfit) {
        if m < snr_range[0] - MAX_SNR_MISFIT || m > snr_range[1] + MAX_SNR_MISFIT {
            refusals.push(format!(
                "residual_nonwetting_saturation = {m} is outside what advancing ranges {w}° wide within {s0}–{s1}° give on this network ({:.4}–{:.4})",
                snr_range[0], snr_range[1]
            ));
        } else if e.abs() > MAX_SNR_MISFIT {
            refusals.push(format!(
                "residual non-wetting saturation misfit {e:+.4} exceeds {MAX_SNR_MISFIT} (measured {m})"
            ));
        }
    }
    if let (Some(m), Some(e)) = (data.amott_water_index, iw_misfit) {
        if m < iw_range[0] - MAX_AMOTT_MISFIT || m > iw_range[1] + MAX_AMOTT_MISFIT {
            refusals.push(format!(
                "amott_water_index = {m} is outside what advancing ranges {w}° wide within {s0}–{s1}° give on this network ({:.4}–{:.4})",
                iw_range[0], iw_range[1]
            ));
        } else if e.abs() > MAX_AMOTT_MISFIT {
            refusals.push(format!(
                "Amott water index misfit {e:+.4} exceeds {MAX_AMOTT_MISFIT} (measured {m})"
            ));
        }
    }
    let c = best.advancing_centre_deg;
    Ok(AngleFit {
        receding_contact_angle_deg: data.receding_contact_angle_deg,
        advancing_centre_deg: c,
        advancing_contact_angle_deg: [c - 0.5 * w, c + 0.5 * w],
        initial_water_saturation: d.swi,
        measured_residual_nonwetting_saturation: data.residual_nonwetting_saturation,
        residual_nonwetting_saturation: best.residual_nonwetting_saturation,
        residual_nonwetting_misfit: snr_misfit,
        measured_amott_water_index: data.amott_water_index,
        amott_water_index: best.amott_water_index,
        amott_water_misfit: iw_misfit,
        residual_nonwetting_scan_range: snr_range,
        amott_water_scan_range: iw_range,
        trials,
        accepted: refusals.is_empty(),
        refusals,
    })
}
