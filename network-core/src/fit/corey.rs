//! Corey (1954) relative permeabilities and the modified Corey power law
//! with its fit.

use serde::Serialize;

use super::common::{
    clamp01, fixed_kr_max, kr_points, param_std_errors, power_law_guess, require, run_lm,
};
use super::{FitError, FitQuality, KrFitOptions, Phase};

/// Corey (1954, "The interrelation between gas and oil relative
/// permeabilities", Producers Monthly 19(1):38–41) relative permeabilities:
///
/// $k_{rw} = S_e^4$, $\quad k_{rn} = (1 - S_e)^2 (1 - S_e^2)$.
///
/// `se` is the effective wetting saturation (dimensionless, clamped to
/// `[0, 1]`). Returns `(krw, krn)`. Derived for drainage of well-sorted
/// consolidated sands; it is the Brooks–Corey model with `λ = 2`.
pub fn corey_1954(se: f64) -> (f64, f64) {
    let s = clamp01(se);
    (s.powi(4), (1.0 - s).powi(2) * (1.0 - s * s))
}

/// Parameters of the modified Corey power law (common practice; a
/// generalisation of Corey 1954 with end points):
///
/// $k_{rw} = k_{rw,\max} S_{wn}^{n_w}$, $\quad k_{ro} = k_{ro,\max}
/// (1 - S_{wn})^{n_o}$.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CoreyParams {
    /// End-point relative permeability (dimensionless, > 0).
    pub kr_max: f64,
    /// Corey exponent (dimensionless, > 0).
    pub exponent: f64,
}

impl CoreyParams {
    /// Relative permeability of `phase` at normalised water saturation `swn`
    /// (clamped to `[0, 1]`).
    pub fn kr(&self, swn: f64, phase: Phase) -> f64 {
        self.kr_max * phase.own_saturation(clamp01(swn)).powf(self.exponent)
    }
}

/// A fitted modified Corey curve.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CoreyFit {
    /// Fitted parameters.
    pub params: CoreyParams,
    /// Standard errors of the parameters (0 for a fixed `kr_max`); `None`
    /// without degrees of freedom.
    pub std_error: Option<CoreyParams>,
    /// Fit error.
    pub quality: FitQuality,
}

/// Fits the modified Corey power law ([`CoreyParams`]) to relative
/// permeabilities `kr` at water saturations `sw` (fractions).
///
/// Least squares in the space of `opts.objective`, on `ln n` (and
/// `ln kr_max`), started from the log–log straight line
/// `ln kr = ln kr_max + n ln x` with `x` the phase's own normalised
/// saturation. Needs at least as many points with `S_wn ∈ [0, 1]` as free
/// parameters.
pub fn fit_corey(sw: &[f64], kr: &[f64], opts: &KrFitOptions) -> Result<CoreyFit, FitError> {
    let pts = kr_points(sw, kr, "kr", opts)?;
    let fixed = fixed_kr_max(opts.kr_max)?;
    let n_par = if fixed.is_some() { 1 } else { 2 };
    require(&pts, n_par, "Corey fit")?;
    let (n0, k0) = power_law_guess(&pts.x, &pts.y, fixed);
    // x is the phase's own normalised saturation, so one power law serves
    // both phases.
    let model = |q: &[f64], x: f64, _: Phase| {
        let kmax = fixed.unwrap_or_else(|| q[1].exp());
        kmax * x.powf(q[0].exp())
    };
    let mut p0 = vec![n0.ln()];
    if fixed.is_none() {
        p0.push(k0.ln());
    }
    let out = run_lm(&pts, opts.objective, &p0, &model, "Corey")?;
    let q = &out.params;
    let params = CoreyParams {
        kr_max: fixed.unwrap_or_else(|| q[1].exp()),
        exponent: q[0].exp(),
    };
    let se = param_std_errors(&out, pts.n_used(opts.objective)).map(|s| CoreyParams {
        exponent: params.exponent * s[0],
        kr_max: if fixed.is_some() {
            0.0
        } else {
            params.kr_max * s[1]
        },
    });
    let quality = pts.quality(
        |x, _| params.kr_max * x.powf(params.exponent),
        opts.objective,
        &out,
    );
    Ok(CoreyFit {
        params,
        std_error: se,
        quality,
    })
}
