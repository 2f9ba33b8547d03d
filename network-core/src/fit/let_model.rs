//! The LET relative-permeability correlation (Lomeland, Ebeltoft & Thomas
//! 2005) and its bounded fit.

use serde::Serialize;

use super::common::{clamp01, fixed_kr_max, kr_points, param_std_errors, require, run_lm};
use super::lm::LmOutcome;
use super::{FitError, FitQuality, KrFitOptions, Phase};

/// Parameters of the LET correlation (Lomeland, Ebeltoft & Thomas 2005, "A
/// new versatile relative permeability correlation", SCA2005-32):
///
/// $k_{rw} = k_{rw,\max} \dfrac{S_{wn}^{L_w}}{S_{wn}^{L_w} + E_w (1 -
/// S_{wn})^{T_w}}$, $\quad k_{ro} = k_{ro,\max} \dfrac{(1 - S_{wn})^{L_o}}{(1
/// - S_{wn})^{L_o} + E_o S_{wn}^{T_o}}$.
///
/// `L` shapes the low-saturation end, `T` the high end and `E` the middle
/// (elevation); all are positive and dimensionless.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct LetParams {
    /// End-point relative permeability (> 0).
    pub kr_max: f64,
    /// `L` (> 0).
    pub l: f64,
    /// `E` (> 0).
    pub e: f64,
    /// `T` (> 0).
    pub t: f64,
}

impl LetParams {
    /// Relative permeability of `phase` at normalised water saturation `swn`
    /// (clamped to `[0, 1]`).
    pub fn kr(&self, swn: f64, phase: Phase) -> f64 {
        let x = phase.own_saturation(clamp01(swn));
        let num = x.powf(self.l);
        let den = num + self.e * (1.0 - x).powf(self.t);
        if den > 0.0 {
            self.kr_max * num / den
        } else {
            0.0
        }
    }
}

/// A fitted LET curve.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct LetFit {
    /// Fitted parameters.
    pub params: LetParams,
    /// Standard errors of the parameters (0 for a fixed `kr_max`); `None`
    /// without degrees of freedom or when `JᵀJ` is singular.
    pub std_error: Option<LetParams>,
    /// Whether `L`, `E` or `T` ended at a bound of its box
    /// ([`LET_L_BOUNDS`], [`LET_E_BOUNDS`], [`LET_T_BOUNDS`]): the data do
    /// not determine the LET shape; read the parameters with care or prefer
    /// a Corey fit.
    pub at_bound: bool,
    /// Fit error.
    pub quality: FitQuality,
}

/// Fits the LET correlation ([`LetParams`], Lomeland, Ebeltoft & Thomas
/// 2005, SCA2005-32) to relative permeabilities `kr` at water saturations
/// `sw` (fractions).
///
/// Least squares on `L`, `E`, `T` (each confined to a box, see
/// [`LET_L_BOUNDS`], through a smooth map of its logarithm) and `ln kr_max`,
/// from a fixed grid of 27 starting points (`L ∈ {1, 2, 4}`, `E ∈ {0.1, 1, 10}`, `T ∈ {0.5, 1.5, 4}`,
/// `kr_max` from the largest datum); the best converged result is kept, so
/// the fit is deterministic. Needs at least as many points with
/// `S_wn ∈ [0, 1]` as free parameters (3 or 4); LET has more freedom than
/// most data sets constrain, so read the standard errors.
pub fn fit_let(sw: &[f64], kr: &[f64], opts: &KrFitOptions) -> Result<LetFit, FitError> {
    let pts = kr_points(sw, kr, "kr", opts)?;
    let fixed = fixed_kr_max(opts.kr_max)?;
    let n_par = if fixed.is_some() { 3 } else { 4 };
    require(&pts, n_par, "LET fit")?;
    let boxes = [
        LogBox::new(LET_L_BOUNDS),
        LogBox::new(LET_E_BOUNDS),
        LogBox::new(LET_T_BOUNDS),
    ];
    let from_q = move |q: &[f64]| LetParams {
        l: boxes[0].value(q[0]),
        e: boxes[1].value(q[1]),
        t: boxes[2].value(q[2]),
        kr_max: fixed.unwrap_or_else(|| q[3].exp()),
    };
    // x is the phase's own normalised saturation: the wetting form serves both.
    let model = |q: &[f64], x: f64, _: Phase| from_q(q).kr(x, Phase::Wetting);
    let k0 = pts
        .y
        .iter()
        .copied()
        .fold(0.0, f64::max)
        .max(f64::MIN_POSITIVE);
    let mut best: Option<LmOutcome> = None;
    let mut last_err = None;
    for l0 in [1.0f64, 2.0, 4.0] {
        for e0 in [0.1f64, 1.0, 10.0] {
            for t0 in [0.5f64, 1.5, 4.0] {
                let mut p0 = vec![boxes[0].start(l0), boxes[1].start(e0), boxes[2].start(t0)];
                if fixed.is_none() {
                    p0.push(k0.ln());
                }
                match run_lm(&pts, opts.objective, &p0, &model, "LET") {
                    Ok(out) => {
                        if best.as_ref().is_none_or(|b| out.sum_sq < b.sum_sq) {
                            best = Some(out);
                        }
                    }
                    Err(e) => last_err = Some(e),
                }
            }
        }
    }
    let Some(out) = best else {
        return Err(last_err.unwrap_or(FitError::Degenerate {
            what: "LET fit",
            detail: "no start converged".into(),
        }));
    };
    let q = &out.params;
    let params = from_q(q);
    let se = param_std_errors(&out, pts.n_used(opts.objective)).map(|s| LetParams {
        l: boxes[0].derivative(q[0]) * s[0],
        e: boxes[1].derivative(q[1]) * s[1],
        t: boxes[2].derivative(q[2]) * s[2],
        kr_max: if fixed.is_some() {
            0.0
        } else {
            params.kr_max * s[3]
        },
    });
    let at_bound = (0..3).any(|j| boxes[j].at_bound(q[j]));
    let quality = pts.quality(|x, _| params.kr(x, Phase::Wetting), opts.objective, &out);
    Ok(LetFit {
        params,
        std_error: se,
        at_bound,
        quality,
    })
}

/// Bounds `(min, max)` of the LET `L` in [`fit_let`]. The three boxes are
/// our choice, not part of the LET correlation: they keep the fit away from
/// degenerate shapes that noisy data can otherwise reach.
pub const LET_L_BOUNDS: (f64, f64) = (0.1, 50.0);
/// Bounds `(min, max)` of the LET `E` in [`fit_let`].
pub const LET_E_BOUNDS: (f64, f64) = (1e-4, 1e4);
/// Bounds `(min, max)` of the LET `T` in [`fit_let`]. `T > 0` keeps
/// `kr(end) = kr_max`: at `T = 0` the end point would be `kr_max/(1 + E)`.
pub const LET_T_BOUNDS: (f64, f64) = (0.1, 50.0);

/// A parameter confined to `[a, b]` through `ln θ = m + h tanh q` (`m`, `h`:
/// centre and half-width of `[ln a, ln b]`), so that every solver step is
/// feasible and the map is smooth.
#[derive(Clone, Copy)]
struct LogBox {
    mid: f64,
    half: f64,
}

impl LogBox {
    fn new((a, b): (f64, f64)) -> LogBox {
        LogBox {
            mid: 0.5 * (a.ln() + b.ln()),
            half: 0.5 * (b.ln() - a.ln()),
        }
    }

    fn value(self, q: f64) -> f64 {
        (self.mid + self.half * q.tanh()).exp()
    }

    /// Solver coordinate of a value inside the box.
    fn start(self, v: f64) -> f64 {
        ((v.ln() - self.mid) / self.half)
            .clamp(-0.999_999, 0.999_999)
            .atanh()
    }

    /// `dθ/dq`, for the delta-method standard error.
    fn derivative(self, q: f64) -> f64 {
        let t = q.tanh();
        self.value(q) * self.half * (1.0 - t * t)
    }

    /// Whether `q` maps to within a relative `1e-6` of a bound.
    fn at_bound(self, q: f64) -> bool {
        (1.0 - q.tanh().abs()) * self.half < 1e-6
    }
}
