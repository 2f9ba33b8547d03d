//! End points and fitted models of the recorded curves: Corey and LET
//! relative permeabilities per process and phase, Archie exponents, and the
//! Land coefficient of a run.

use serde::Serialize;

use super::process::ProcessOutcome;
use crate::fit::{
    self, ArchieFit, CoreyFit, FitError, KrFitOptions, KrMax, LandMethod, LandNormalisation,
    LetFit, Normalisation, Objective, Phase, Prefactor,
};
use crate::params::ProcessKind;

/// A fit or the reason it could not be made.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum Fitted<T> {
    /// The fitted model.
    Ok(T),
    /// Why not (too few points, degenerate data).
    Failed {
        /// The error text.
        error: String,
    },
}

impl<T> From<Result<T, FitError>> for Fitted<T> {
    fn from(r: Result<T, FitError>) -> Self {
        match r {
            Ok(t) => Fitted::Ok(t),
            Err(e) => Fitted::Failed {
                error: e.to_string(),
            },
        }
    }
}

/// Fitted relative-permeability models of one process.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProcessFits {
    /// Process index (1-based) and kind.
    pub process: usize,
    /// Process kind.
    pub kind: ProcessKind,
    /// Irreducible (initial, for imbibition) water saturation used in the
    /// normalisation `S_wn = (S_w − S_wi)/(1 − S_wi − S_or)`.
    pub swi: f64,
    /// Residual non-aqueous saturation of the normalisation (0 for drainage).
    pub sor: f64,
    /// Modified Corey fit of `k_rw` (Corey 1954; exponent and end point).
    pub corey_water: Fitted<CoreyFit>,
    /// Modified Corey fit of `k_rn`.
    pub corey_nonaqueous: Fitted<CoreyFit>,
    /// LET fit of `k_rw` (Lomeland, Ebeltoft & Thomas 2005).
    pub let_water: Fitted<LetFit>,
    /// LET fit of `k_rn`.
    pub let_nonaqueous: Fitted<LetFit>,
}

/// Archie exponents of a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ArchieSummary {
    /// Cementation exponent `m` from `F = φ^(−m)` (a = 1; Archie 1942).
    pub cementation_m: Fitted<ArchieFit>,
    /// Saturation exponent `n` from `RI = S_w^(−n)` over the primary
    /// drainage points (line through RI = 1 at S_w = 1).
    pub saturation_n: Fitted<ArchieFit>,
}

/// End points of a run.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct EndPoints {
    /// Water saturation at the end of primary drainage.
    pub swi: Option<f64>,
    /// Trapped non-aqueous saturation at the end of the first imbibition.
    pub snr: Option<f64>,
    /// `k_rw` at the end of the first imbibition.
    pub krw_at_snr: Option<f64>,
    /// `k_rn` at the end of primary drainage.
    pub krn_at_swi: Option<f64>,
    /// Single-point Land coefficient `C = 1/S_nr − 1/S_ni` from this run's
    /// one `(S_ni, S_nr)` pair (Land 1968); a sweep over initial saturations
    /// fits `C` to a whole trapping curve.
    pub land_coefficient: Option<f64>,
}

fn flow_series(o: &ProcessOutcome) -> (Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut sw = Vec::new();
    let mut krw = Vec::new();
    let mut krn = Vec::new();
    let mut ri = Vec::new();
    for p in &o.points {
        if let Some(f) = p.flow {
            sw.push(p.saturation.sw);
            krw.push(f.krw);
            krn.push(f.krn);
            ri.push(f.ri);
        }
    }
    (sw, krw, krn, ri)
}

/// Corey and LET fits of every process with relative permeabilities.
pub fn process_fits(outcomes: &[ProcessOutcome]) -> Vec<ProcessFits> {
    let mut out = Vec::new();
    for (i, o) in outcomes.iter().enumerate() {
        let (sw, krw, krn, _) = flow_series(o);
        if sw.len() < 3 {
            continue;
        }
        let s_lo = sw.iter().copied().fold(f64::INFINITY, f64::min);
        let s_hi = sw.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let (swi, sor) = (
            s_lo.clamp(0.0, 0.99),
            (1.0 - s_hi).clamp(0.0, 0.99 - s_lo.clamp(0.0, 0.99)),
        );
        let norm = match Normalisation::new(swi, sor) {
            Ok(n) => n,
            Err(_) => continue,
        };
        let opts = |phase| KrFitOptions {
            phase,
            normalisation: norm,
            kr_max: KrMax::Fit,
            objective: Objective::Linear,
        };
        out.push(ProcessFits {
            process: i + 1,
            kind: o.kind,
            swi,
            sor,
            corey_water: fit::fit_corey(&sw, &krw, &opts(Phase::Wetting)).into(),
            corey_nonaqueous: fit::fit_corey(&sw, &krn, &opts(Phase::NonWetting)).into(),
            let_water: fit::fit_let(&sw, &krw, &opts(Phase::Wetting)).into(),
            let_nonaqueous: fit::fit_let(&sw, &krn, &opts(Phase::NonWetting)).into(),
        });
    }
    out
}

/// Archie exponents from the formation factor and the primary-drainage
/// resistivity index.
pub fn archie(porosity: f64, formation_factor: f64, outcomes: &[ProcessOutcome]) -> ArchieSummary {
    let m = fit::fit_archie_m(&[porosity], &[formation_factor], Prefactor::Fixed(1.0)).into();
    let n = match outcomes.first() {
        Some(o) => {
            let (sw, _, _, ri) = flow_series(o);
            let (s, r): (Vec<f64>, Vec<f64>) = sw
                .iter()
                .zip(&ri)
                .filter(|(s, r)| r.is_finite() && **s > 0.0 && **s < 1.0)
                .map(|(s, r)| (*s, *r))
                .unzip();
            fit::fit_archie_n(&s, &r, Prefactor::Fixed(1.0)).into()
        }
        None => Fitted::Failed {
            error: "no drainage".into(),
        },
    };
    ArchieSummary {
        cementation_m: m,
        saturation_n: n,
    }
}

/// End points of the primary drainage and first imbibition.
pub fn end_points(outcomes: &[ProcessOutcome]) -> EndPoints {
    let mut e = EndPoints::default();
    if let Some(d) = outcomes.first() {
        e.swi = Some(d.final_saturation.sw);
        e.krn_at_swi = d.points.last().and_then(|p| p.flow).map(|f| f.krn);
    }
    if let Some(i) = outcomes.get(1) {
        e.snr = Some(i.final_saturation.sn_trapped);
        e.krw_at_snr = i.points.last().and_then(|p| p.flow).map(|f| f.krw);
        let sni = outcomes[0].final_saturation.sn;
        let snr = i.final_saturation.sn_trapped;
        if snr > 0.0 && snr <= sni {
            e.land_coefficient = fit::fit_land(
                &[sni],
                &[snr],
                LandMethod::EndPoint,
                LandNormalisation::PoreVolume,
            )
            .ok()
            .map(|f| f.c);
        }
    }
    e
}
