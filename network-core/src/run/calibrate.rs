//! Calibration of a network to routine core-analysis data: porosity,
//! permeability and a mercury-injection (MICP) curve.
//!
//! # Parameters
//!
//! Two factors act on a base network ([`scale_network`]):
//! - the **radius factor** `α` multiplies every inscribed radius (pores and
//!   throats) and the pore parts of the conduits (each capped at 45 % of its
//!   conduit, so a throat keeps at least 10 % of its length); pore volumes
//!   scale by `α³` (prism of length `2r`), throat volumes by `α²` times the
//!   change of the throat's own length. It sets the porosity.
//! - the **length factor** `λ` multiplies every length: coordinates,
//!   conduit lengths, radii, and the sample's length, area (`λ²`) and bulk
//!   volume (`λ³`); volumes scale by `λ³`. Porosity does not change; every
//!   entry pressure scales as `1/λ` (Young–Laplace, MS-P), so the MICP curve
//!   moves along `log P` unchanged in shape, `S_λ(P) = S_1(λ P)`; and the
//!   permeability scales as `λ²` (Poiseuille conductance `∝ r⁴/l ∝ λ³`, flow
//!   over area `λ²` across length `λ`).
//!
//! # Procedure
//!
//! 1. `α` by bisection on `ln α` so that the network's porosity equals the
//!    measured one (porosity rises with `α`).
//! 2. One simulated MICP of the `α`-scaled network over a wide pressure
//!    range; `S_λ(P) = S_1(λ P)` then gives the curve for any `λ` without
//!    another simulation.
//! 3. `λ` minimises `J(λ) = (e_S / 0.05)² + (e_k / log₁₀ 2)²`, where `e_S`
//!    is the RMS difference of mercury saturation at the measured pressures
//!    and `e_k = log₁₀(K_sim / K_meas)` with `K_sim = λ² K_α` (one
//!    permeability solve). The scale 0.05 is a typical repeatability of
//!    MICP saturations and a factor 2 that of plug permeabilities (common
//!    practice); `J` is minimised by a scan of `log λ` followed by
//!    golden-section refinement.
//!
//! # Optionally: the spread of the pore sizes
//!
//! [`calibrate_pore_shape`] repeats the procedure on networks generated
//! with several pore-radius Weibull shapes `δ` (same seed and other
//! parameters) and keeps the best, so the slope of the MICP curve can be
//! matched too.
//!
//! # Optionally: the advancing contact angles
//!
//! With waterflood data ([`LabData::waterflood`]: a measured residual
//! non-wetting saturation and/or Amott water index at a given initial
//! water saturation), the centre of the advancing contact-angle range is
//! fitted last, on the calibrated network ([`crate::run::angle_fit`]); its
//! refusals join the others.
//!
//! # Refusal
//!
//! The data are refused ([`Calibration::accepted`] false, with the reasons)
//! when the porosity cannot be reached with `α ∈ [0.1, 10]`, or after the
//! fit `e_S` exceeds [`MAX_MICP_RMS`] or `|e_k|` exceeds
//! [`MAX_LOG10_PERM_MISFIT`] (a factor 3).

use serde::{Deserialize, Serialize};

use crate::flow::{PermOptions, permeability};
use crate::network::{InvalidNetwork, Network, NetworkInfo, Pores, Throats};
use crate::run::angle_fit::{AngleFit, AngleFitError, WaterfloodData, fit_advancing_angles};
use crate::run::micp::{MeasuredMicp, MicpCurve, MicpError, MicpSpec, simulate_micp};

/// Largest accepted RMS difference of mercury saturation after the fit.
pub const MAX_MICP_RMS: f64 = 0.08;
/// Largest accepted `|log₁₀(K_sim/K_meas)|` after the fit (a factor 3).
pub const MAX_LOG10_PERM_MISFIT: f64 = 0.477_121_254_719_662_4;
/// Largest accepted porosity difference after the fit.
pub const MAX_POROSITY_MISFIT: f64 = 0.002;
/// Saturation scale of the objective (see the module documentation).
const SAT_SCALE: f64 = 0.05;
/// Permeability scale of the objective, `log₁₀ 2`.
const PERM_SCALE: f64 = std::f64::consts::LOG10_2;
/// Fraction of a conduit that a pore part may take at most.
const CONDUIT_FRACTION: f64 = 0.45;

/// Laboratory data of one plug.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LabData {
    /// Porosity, fraction.
    pub porosity: f64,
    /// Absolute (gas or brine) permeability, mD.
    pub permeability_md: f64,
    /// Measured mercury-injection curve.
    pub micp: MeasuredMicp,
    /// Measured residual saturation and/or Amott water index after a
    /// waterflood, to fit the advancing contact angles to (optional).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub waterflood: Option<WaterfloodData>,
}

/// Fitted parameters and misfits.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Calibration {
    /// Radius factor `α`.
    pub radius_factor: f64,
    /// Length factor `λ`.
    pub length_factor: f64,
    /// Porosity of the calibrated network.
    pub porosity: f64,
    /// Porosity misfit, simulated − measured.
    pub porosity_misfit: f64,
    /// Permeability of the calibrated network, mD.
    pub permeability_md: f64,
    /// `log₁₀(K_sim/K_meas)`.
    pub permeability_log10_misfit: f64,
    /// RMS difference of mercury saturation at the measured pressures.
    pub micp_rms_misfit: f64,
    /// Measured points compared (inside the simulated range).
    pub micp_points_compared: usize,
    /// The simulated MICP of the calibrated network.
    pub micp: MicpCurve,
    /// The advancing contact-angle range fitted to the waterflood data
    /// (when the lab data give them), with its misfits.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wettability: Option<AngleFit>,
    /// True when every misfit is within its threshold.
    pub accepted: bool,
    /// Why the data were refused (empty when accepted).
    pub refusals: Vec<String>,
}

/// Why a calibration could not run.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum CalibrationError {
    /// A lab value is outside its range.
    #[error("lab data: {name} = {value} is outside the allowed range ({expected})")]
    BadLabValue {
        /// Key.
        name: &'static str,
        /// Value.
        value: f64,
        /// Allowed range.
        expected: &'static str,
    },
    /// A factor is outside its range.
    #[error("scale factor {name} = {value} must be positive and finite")]
    BadFactor {
        /// Which factor.
        name: &'static str,
        /// Value.
        value: f64,
    },
    /// The mercury injection failed.
    #[error(transparent)]
    Micp(#[from] MicpError),
    /// The scaled network is invalid.
    #[error("the scaled network is invalid: {0}")]
    Network(#[from] InvalidNetwork),
    /// The permeability solve failed.
    #[error("permeability solve failed: {0}")]
    Flow(String),
    /// The contact-angle fit could not run.
    #[error(transparent)]
    AngleFit(#[from] AngleFitError),
    /// A base network could not be generated.
    #[error("cannot generate a base network: {0}")]
    Generate(String),
}

/// The network with radii scaled by `radius_factor` and every length by
/// `length_factor` (module documentation).
pub fn scale_network(
    net: &Network,
    radius_factor: f64,
    length_factor: f64,
) -> Result<Network, CalibrationError> {
    let (info, pores, throats) = scale_columns(net, radius_factor, length_factor)?;
    Ok(Network::new(info, pores, throats)?)
}

/// Porosity of the network scaled by `radius_factor` (lengths unchanged),
/// without validating it: the bisection of [`calibrate`] passes through
/// factors whose porosity exceeds 1, which a network may not have.
fn scaled_porosity(net: &Network, radius_factor: f64) -> Result<f64, CalibrationError> {
    use crate::numeric::ordered_sum;
    let (info, p, t) = scale_columns(net, radius_factor, 1.0)?;
    let pv = ordered_sum(&p.volume)
        + ordered_sum(&t.volume)
        + ordered_sum(&p.clay_volume)
        + ordered_sum(&t.clay_volume);
    Ok(pv / info.bulk_volume_m3)
}

/// The scaled columns of [`scale_network`], not yet validated.
fn scale_columns(
    net: &Network,
    radius_factor: f64,
    length_factor: f64,
) -> Result<(NetworkInfo, Pores, Throats), CalibrationError> {
    for (name, v) in [
        ("radius_factor", radius_factor),
        ("length_factor", length_factor),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(CalibrationError::BadFactor { name, value: v });
        }
    }
    let (a, l) = (radius_factor, length_factor);
    let l3 = l * l * l;
    let mut info = net.info().clone();
    let mut pores = net.pores().clone();
    let mut throats = net.throats().clone();
    info.length_m *= l;
    info.area_m2 *= l * l;
    info.bulk_volume_m3 *= l3;
    if let Some(e) = info.extent_m.as_mut() {
        e.iter_mut().for_each(|x| *x *= l);
    }
    for c in [&mut pores.x, &mut pores.y, &mut pores.z] {
        c.iter_mut().for_each(|x| *x *= l);
    }
    let pv = a * a * a * l3;
    for i in 0..pores.radius.len() {
        pores.radius[i] *= a * l;
        pores.volume[i] *= pv;
        pores.clay_volume[i] *= pv;
    }
    for t in 0..throats.radius.len() {
        let len = throats.length[t];
        let old_lt = (len - throats.conduit_a[t] - throats.conduit_b[t]).max(0.0);
        let ca = (throats.conduit_a[t] * a).min(CONDUIT_FRACTION * len);
        let cb = (throats.conduit_b[t] * a).min(CONDUIT_FRACTION * len);
        let new_lt = len - ca - cb;
        let along = if old_lt > 0.0 { new_lt / old_lt } else { 1.0 };
        let f = a * a * along * l3;
        throats.radius[t] *= a * l;
        throats.volume[t] *= f;
        throats.clay_volume[t] *= f;
        throats.length[t] = len * l;
        throats.conduit_a[t] = ca * l;
        throats.conduit_b[t] = cb * l;
    }
    Ok((info, pores, throats))
}

fn perm_md(net: &Network) -> Result<f64, CalibrationError> {
    let opts = PermOptions::default();
    permeability(net, net.info().flow_axis, &opts)
        .map(|r| r.permeability_md)
        .map_err(|e| CalibrationError::Flow(e.to_string()))
}

/// RMS saturation misfit of `lab` against `base` shifted by `λ`
/// (`S_λ(P) = S_1(λ P)`), and the number of points compared.
fn micp_misfit(lab: &MeasuredMicp, base: &MicpCurve, lambda: f64) -> (f64, usize) {
    let (lo, hi) = (
        base.points[0].pressure_pa,
        base.points[base.points.len() - 1].pressure_pa,
    );
    let mut sum = 0.0;
    let mut n = 0;
    for (&p, &s) in lab.pressure_pa.iter().zip(&lab.mercury_saturation) {
        let q = p * lambda;
        if q >= lo && q <= hi {
            let d = base.saturation_at(q) - s;
            sum += d * d;
            n += 1;
        }
    }
    if n == 0 {
        (f64::INFINITY, 0)
    } else {
        ((sum / n as f64).sqrt(), n)
    }
}

/// Calibrates `base` to `lab` (module documentation). `seed` sets the
/// triangle shapes of the MICP geometry and of the waterflood, and the
/// contact-angle draws. When `lab.waterflood` is given, the advancing
/// contact-angle range is fitted on the calibrated network afterwards
/// ([`fit_wettability`]).
pub fn calibrate(
    base: &Network,
    lab: &LabData,
    seed: u64,
) -> Result<(Calibration, Network), CalibrationError> {
    let (mut cal, net) = calibrate_scaling(base, lab, seed)?;
    fit_wettability(&mut cal, &net, lab, seed)?;
    Ok((cal, net))
}

/// Fits the advancing contact-angle range of the calibrated network `net`
/// to `lab.waterflood` ([`crate::run::angle_fit`]) and records it in `cal`;
/// its refusals join those of `cal`. Does nothing without waterflood data.
pub fn fit_wettability(
    cal: &mut Calibration,
    net: &Network,
    lab: &LabData,
    seed: u64,
) -> Result<(), CalibrationError> {
    let Some(w) = &lab.waterflood else {
        return Ok(());
    };
    let fit = fit_advancing_angles(net, w, seed)?;
    cal.refusals.extend(fit.refusals.iter().cloned());
    cal.accepted = cal.refusals.is_empty();
    cal.wettability = Some(fit);
    Ok(())
}

/// Porosity, MICP and permeability part of [`calibrate`].
fn calibrate_scaling(
    base: &Network,
    lab: &LabData,
    seed: u64,
) -> Result<(Calibration, Network), CalibrationError> {
    let bad = |name, value, expected| CalibrationError::BadLabValue {
        name,
        value,
        expected,
    };
    if !(lab.porosity.is_finite() && lab.porosity > 0.0 && lab.porosity < 1.0) {
        return Err(bad("porosity", lab.porosity, "a fraction in (0, 1)"));
    }
    if !(lab.permeability_md.is_finite() && lab.permeability_md > 0.0) {
        return Err(bad("permeability_md", lab.permeability_md, "> 0 mD"));
    }
    let mut refusals = Vec::new();
    // 1. Radius factor from porosity.
    let phi = |a: f64| scaled_porosity(base, a);
    let (mut lo, mut hi) = (0.1f64.ln(), 10.0f64.ln());
    let (phi_lo, phi_hi) = (phi(lo.exp()), phi(hi.exp()));
    let alpha = match (phi_lo, phi_hi) {
        (Ok(pl), Ok(ph)) if lab.porosity >= pl && lab.porosity <= ph => {
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if phi(mid.exp())? < lab.porosity {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            (0.5 * (lo + hi)).exp()
        }
        (Ok(pl), Ok(ph)) => {
            refusals.push(format!(
                "porosity {} cannot be reached by scaling the radii of this network by 0.1–10 (porosity {pl:.4}–{ph:.4})",
                lab.porosity
            ));
            if lab.porosity < pl { 0.1 } else { 10.0 }
        }
        (Err(e), _) | (_, Err(e)) => return Err(e),
    };
    let net_a = scale_network(base, alpha, 1.0)?;
    // 2. One MICP over a wide range.
    let spec = MicpSpec {
        pressure_min_pa: 1.0,
        pressure_max_pa: 1.0e11,
        steps: 881,
        seed,
        ..MicpSpec::default()
    };
    let curve_a = simulate_micp(&net_a, &spec)?;
    let k_a = perm_md(&net_a)?;
    // 3. Length factor.
    let objective = |ln_l: f64| {
        let l = ln_l.exp();
        let (e_s, _) = micp_misfit(&lab.micp, &curve_a, l);
        let e_k = (l * l * k_a / lab.permeability_md).log10();
        (e_s / SAT_SCALE).powi(2) + (e_k / PERM_SCALE).powi(2)
    };
    let (scan_lo, scan_hi) = (1e-4f64.ln(), 1e4f64.ln());
    let n_scan = 321;
    let mut best = (f64::INFINITY, 0.0);
    for i in 0..n_scan {
        let x = scan_lo + (scan_hi - scan_lo) * i as f64 / (n_scan - 1) as f64;
        let j = objective(x);
        if j < best.0 {
            best = (j, x);
        }
    }
    let step = (scan_hi - scan_lo) / (n_scan - 1) as f64;
    let (mut a, mut b) = (best.1 - step, best.1 + step);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..80 {
        let c = b - g * (b - a);
        let d = a + g * (b - a);
        if objective(c) < objective(d) {
            b = d;
        } else {
            a = c;
        }
    }
    let lambda = (0.5 * (a + b)).exp();
    let net = scale_network(base, alpha, lambda)?;
    let (e_s, n_cmp) = micp_misfit(&lab.micp, &curve_a, lambda);
    let k = lambda * lambda * k_a;
    let e_k = (k / lab.permeability_md).log10();
    let por = net.porosity();
    let e_phi = por - lab.porosity;
    if refusals.is_empty() && e_phi.abs() > MAX_POROSITY_MISFIT {
        refusals.push(format!(
            "porosity misfit {e_phi:.4} exceeds {MAX_POROSITY_MISFIT}"
        ));
    }
    if n_cmp == 0 {
        refusals.push("no measured MICP pressure falls inside the simulated range".into());
    } else if e_s > MAX_MICP_RMS {
        refusals.push(format!(
            "MICP misfit {e_s:.3} (RMS of mercury saturation) exceeds {MAX_MICP_RMS}: this network's pore-throat size distribution cannot match the measured curve by scaling"
        ));
    }
    if e_k.abs() > MAX_LOG10_PERM_MISFIT {
        refusals.push(format!(
            "permeability {k:.4} mD is a factor {:.2} from the measured {} mD (more than 3): the MICP curve and the permeability disagree for this network",
            10f64.powf(e_k.abs()),
            lab.permeability_md
        ));
    }
    // The MICP of the calibrated network, on the default lab range.
    let micp = simulate_micp(
        &net,
        &MicpSpec {
            seed,
            ..MicpSpec::default()
        },
    )?;
    Ok((
        Calibration {
            radius_factor: alpha,
            length_factor: lambda,
            porosity: por,
            porosity_misfit: e_phi,
            permeability_md: k,
            permeability_log10_misfit: e_k,
            micp_rms_misfit: e_s,
            micp_points_compared: n_cmp,
            micp,
            wettability: None,
            accepted: refusals.is_empty(),
            refusals,
        },
        net,
    ))
}

impl Calibration {
    /// The fitted objective `(e_S/0.05)² + (e_k/log₁₀ 2)²` (module
    /// documentation); infinite when no MICP point was compared.
    pub fn objective(&self) -> f64 {
        (self.micp_rms_misfit / SAT_SCALE).powi(2)
            + (self.permeability_log10_misfit / PERM_SCALE).powi(2)
    }
}

/// Default candidates of the pore-radius Weibull shape `δ` tried by
/// [`calibrate_pore_shape`].
pub const PORE_SHAPE_CANDIDATES: [f64; 7] = [0.7, 1.0, 1.4, 1.8, 2.5, 3.5, 5.0];

/// One candidate of [`calibrate_pore_shape`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ShapeCandidate {
    /// Pore-radius Weibull shape `δ` of the generated base network.
    pub pore_radius_shape: f64,
    /// Its calibration.
    pub calibration: Calibration,
}

/// Calibrates networks generated from `spec` with each pore-radius Weibull
/// shape of `shapes` (the other generator parameters and the seed kept)
/// and returns every candidate, the index of the best (accepted first,
/// then the smallest [`Calibration::objective`]) and its calibrated
/// network. The contact angles, when the lab data ask for them, are fitted
/// on the best candidate only. The shape changes the spread of the pore sizes and so the
/// slope of the MICP curve, which scaling alone cannot change.
pub fn calibrate_pore_shape(
    spec: &crate::generate::LatticeSpec,
    shapes: &[f64],
    lab: &LabData,
    seed: u64,
) -> Result<(Vec<ShapeCandidate>, usize, Network), CalibrationError> {
    let mut out: Vec<ShapeCandidate> = Vec::with_capacity(shapes.len());
    let mut best: Option<(usize, Network)> = None;
    for &shape in shapes {
        let mut s = spec.clone();
        s.pore_radius.shape = shape;
        let base = crate::generate::generate(&s, &crate::progress::Silent)
            .map_err(|e| CalibrationError::Generate(e.to_string()))?;
        let (cal, net) = calibrate_scaling(&base, lab, seed)?;
        let better = match &best {
            None => true,
            Some((i, _)) => {
                let b = &out[*i].calibration;
                (cal.accepted && !b.accepted)
                    || (cal.accepted == b.accepted && cal.objective() < b.objective())
            }
        };
        out.push(ShapeCandidate {
            pore_radius_shape: shape,
            calibration: cal,
        });
        if better {
            best = Some((out.len() - 1, net));
        }
    }
    match best {
        Some((i, net)) => {
            fit_wettability(&mut out[i].calibration, &net, lab, seed)?;
            Ok((out, i, net))
        }
        None => Err(CalibrationError::Generate(
            "no pore-radius shape to try".into(),
        )),
    }
}
