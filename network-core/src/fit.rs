//! Closed-form saturation-function models and their least-squares fits:
//! Corey, Brooks–Corey, modified Corey, LET, Land trapping and Archie.
//!
//! Pure mathematics: no I/O, no global state, deterministic. Every fit
//! checks its input (empty, unequal lengths, NaN or infinite values, values
//! outside the model's domain) and returns a [`FitError`] rather than
//! panicking.
//!
//! ## Conventions
//! - Saturations are fractions of the pore volume, in `[0, 1]`.
//! - Normalised water saturation ([`Normalisation`]):
//!   $S_{wn} = (S_w - S_{wi})/(1 - S_{wi} - S_{or})$. The Brooks–Corey
//!   effective saturation $S_e$ is the special case $S_{or} = 0$.
//! - Relative permeabilities are dimensionless fractions of a reference
//!   permeability; `kr_max` is the end-point value of the phase.
//! - Capillary pressure `Pc = Po − Pw` in pascals.
//! - Fit errors: `rmse` is the root-mean-square residual in the data's own
//!   units; `rmse_ln` is the RMS of `ln(model) − ln(data)` over points where
//!   both are positive (the error a log-scale plot shows).
//!
//! ## Methods
//! Non-linear fits use a small Levenberg–Marquardt solver (private module
//! `lm`) on parameters that must be positive, transformed to their
//! logarithms so that every step stays feasible. The starting point comes
//! from a log–log straight-line fit; the LET fit also tries a fixed grid of
//! starts, keeps the best, and confines `L`, `E`, `T` to boxes (flagging a
//! fit that ends on a bound). Parameter standard errors are the linearised
//! estimates $s\sqrt{[(J^T J)^{-1}]_{jj}}$ with $s^2 = \mathrm{SSE}/(m - p)$,
//! mapped back to the natural parameters.

mod lm;

use serde::Serialize;
use thiserror::Error;

use lm::{LmOptions, LmOutcome, minimise};

/// Why a fit could not be made.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum FitError {
    /// An input array is empty.
    #[error("{what}: no data")]
    Empty {
        /// Which input.
        what: &'static str,
    },
    /// Two arrays that pair up have different lengths.
    #[error("{x} has {x_len} values but {y} has {y_len}")]
    LengthMismatch {
        /// Name of the first array.
        x: &'static str,
        /// Name of the second array.
        y: &'static str,
        /// Length of the first array.
        x_len: usize,
        /// Length of the second array.
        y_len: usize,
    },
    /// A value is NaN or infinite.
    #[error("{what}[{index}] = {value} is not finite")]
    NotFinite {
        /// Which input.
        what: &'static str,
        /// Index of the value.
        index: usize,
        /// The value.
        value: f64,
    },
    /// A value lies outside the model's domain.
    #[error("{what}[{index}] = {value} is outside {allowed}")]
    OutOfRange {
        /// Which input.
        what: &'static str,
        /// Index of the value.
        index: usize,
        /// The value.
        value: f64,
        /// The allowed range.
        allowed: &'static str,
    },
    /// Too few points inside the model's domain for the free parameters.
    #[error("{what}: {n_used} usable points, at least {n_required} needed")]
    TooFewPoints {
        /// Which fit.
        what: &'static str,
        /// Points inside the model's domain.
        n_used: usize,
        /// Points the fit needs.
        n_required: usize,
    },
    /// A parameter given by the caller is invalid.
    #[error("parameter {name} = {value} is outside {allowed}")]
    InvalidParameter {
        /// Parameter name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// The allowed range.
        allowed: &'static str,
    },
    /// The data do not determine the parameters (e.g. all abscissae equal).
    #[error("{what}: {detail}")]
    Degenerate {
        /// Which fit.
        what: &'static str,
        /// What is missing.
        detail: String,
    },
    /// The non-linear solver stopped at its iteration cap.
    #[error("{model} fit did not converge in {iterations} iterations (rms residual {rmse})")]
    NoConvergence {
        /// Which model.
        model: &'static str,
        /// Iterations used.
        iterations: usize,
        /// RMS residual at the best point found.
        rmse: f64,
    },
}

/// The phase a relative-permeability curve belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Phase {
    /// The wetting phase (water): curves rise with `S_wn`.
    Wetting,
    /// The non-wetting phase (oil or gas): curves fall with `S_wn`.
    NonWetting,
}

impl Phase {
    /// The phase's own normalised saturation: `S_wn` for the wetting phase,
    /// `1 − S_wn` for the non-wetting phase.
    #[inline]
    pub fn own_saturation(self, swn: f64) -> f64 {
        match self {
            Phase::Wetting => swn,
            Phase::NonWetting => 1.0 - swn,
        }
    }
}

/// End-point normalisation of the water saturation,
/// $S_{wn} = (S_w - S_{wi})/(1 - S_{wi} - S_{or})$.
///
/// `swi` is the irreducible (connate) water saturation and `sor` the
/// residual non-wetting saturation, both fractions of the pore volume.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Normalisation {
    swi: f64,
    sor: f64,
}

impl Normalisation {
    /// No normalisation: `S_wn = S_w`.
    pub const NONE: Normalisation = Normalisation { swi: 0.0, sor: 0.0 };

    /// A normalisation with `0 ≤ swi`, `0 ≤ sor` and `swi + sor < 1`.
    pub fn new(swi: f64, sor: f64) -> Result<Normalisation, FitError> {
        if !(swi.is_finite() && (0.0..1.0).contains(&swi)) {
            return Err(FitError::InvalidParameter {
                name: "swi",
                value: swi,
                allowed: "[0, 1)",
            });
        }
        if !(sor.is_finite() && (0.0..1.0).contains(&sor)) || swi + sor >= 1.0 {
            return Err(FitError::InvalidParameter {
                name: "sor",
                value: sor,
                allowed: "[0, 1 − swi)",
            });
        }
        Ok(Normalisation { swi, sor })
    }

    /// Irreducible water saturation `S_wi`.
    pub fn swi(&self) -> f64 {
        self.swi
    }

    /// Residual non-wetting saturation `S_or`.
    pub fn sor(&self) -> f64 {
        self.sor
    }

    /// Normalised saturation `S_wn` of a water saturation `sw` (not clamped).
    #[inline]
    pub fn swn(&self, sw: f64) -> f64 {
        (sw - self.swi) / (1.0 - self.swi - self.sor)
    }

    /// Water saturation of a normalised saturation `swn`.
    #[inline]
    pub fn sw(&self, swn: f64) -> f64 {
        self.swi + swn * (1.0 - self.swi - self.sor)
    }
}

/// How the end-point relative permeability `kr_max` is treated in a fit.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum KrMax {
    /// Held at the given value (> 0).
    Fixed(f64),
    /// Fitted together with the shape parameters.
    Fit,
}

/// The space in which kr residuals are measured.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Objective {
    /// Residuals `model − data`: weights the high-kr part of a curve.
    Linear,
    /// Residuals `ln model − ln data` over points with `data > 0`: weights
    /// every decade equally, as a log plot does.
    Log,
}

/// Options of the relative-permeability fits [`fit_corey`] and [`fit_let`].
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct KrFitOptions {
    /// Which phase the data belong to.
    pub phase: Phase,
    /// End-point normalisation of `S_w`; points with `S_wn` outside `[0, 1]`
    /// are left out of the fit (and counted in [`FitQuality::n_excluded`]).
    pub normalisation: Normalisation,
    /// End-point relative permeability: fixed or fitted.
    pub kr_max: KrMax,
    /// Residual space.
    pub objective: Objective,
}

/// How well a model fits its data.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct FitQuality {
    /// Points used in the fit.
    pub n_used: usize,
    /// Points left out because they lie outside the model's domain (e.g.
    /// `S_wn ∉ [0, 1]`, or a non-positive value in a log-space fit).
    pub n_excluded: usize,
    /// RMS of `model − data` over the used points, in the data's units.
    pub rmse: f64,
    /// RMS of `ln model − ln data` over used points where both are positive;
    /// `None` if there is no such point.
    pub rmse_ln: Option<f64>,
    /// Solver iterations (0 for closed-form fits).
    pub iterations: usize,
}

// ---------------------------------------------------------------------------
// Models
// ---------------------------------------------------------------------------

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

/// Brooks & Corey (1964, "Hydraulic properties of porous media", Hydrology
/// Paper 3, Colorado State University) capillary pressure:
///
/// $P_c = P_e S_e^{-1/\lambda}$ for $0 < S_e \le 1$.
///
/// `se`: effective saturation; `pe_pa`: entry (displacement) pressure in Pa;
/// `lambda`: pore-size distribution index (> 0, dimensionless). Returns Pa;
/// `+∞` for `se ≤ 0`. Above `se = 1` the model is undefined; the entry
/// pressure is returned.
pub fn brooks_corey_pc(se: f64, pe_pa: f64, lambda: f64) -> f64 {
    if se <= 0.0 {
        f64::INFINITY
    } else {
        pe_pa * se.min(1.0).powf(-1.0 / lambda)
    }
}

/// Brooks & Corey (1964) wetting relative permeability,
/// $k_{rw} = S_e^{(2 + 3\lambda)/\lambda}$ (`se` clamped to `[0, 1]`,
/// `lambda > 0`).
pub fn brooks_corey_krw(se: f64, lambda: f64) -> f64 {
    clamp01(se).powf((2.0 + 3.0 * lambda) / lambda)
}

/// Brooks & Corey (1964) non-wetting relative permeability,
/// $k_{rn} = (1 - S_e)^2 [1 - S_e^{(2 + \lambda)/\lambda}]$ (`se` clamped to
/// `[0, 1]`, `lambda > 0`).
pub fn brooks_corey_krn(se: f64, lambda: f64) -> f64 {
    let s = clamp01(se);
    (1.0 - s).powi(2) * (1.0 - s.powf((2.0 + lambda) / lambda))
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

// ---------------------------------------------------------------------------
// Relative-permeability fits
// ---------------------------------------------------------------------------

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

/// A fitted Brooks–Corey pore-size distribution index from kr data.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct BrooksCoreyKrFit {
    /// Pore-size distribution index `λ` (> 0).
    pub lambda: f64,
    /// Standard error of `λ`; `None` without degrees of freedom.
    pub lambda_std_error: Option<f64>,
    /// Fit error over all used points of both phases.
    pub quality: FitQuality,
}

/// Fits `λ` of the Brooks & Corey (1964) relative permeabilities
/// ([`brooks_corey_krw`], [`brooks_corey_krn`]) to wetting and/or
/// non-wetting data at water saturations `sw`; both phases share `λ` and
/// are fitted jointly when both are given.
///
/// `normalisation` defines `S_e` (Brooks & Corey use `S_or = 0`:
/// `S_e = (S_w − S_r)/(1 − S_r)`). Started from the log–log slope `ε` of
/// `krw`, `λ = 2/(ε − 3)`.
pub fn fit_brooks_corey_kr(
    sw: &[f64],
    krw: Option<&[f64]>,
    krn: Option<&[f64]>,
    normalisation: Normalisation,
    objective: Objective,
) -> Result<BrooksCoreyKrFit, FitError> {
    if krw.is_none() && krn.is_none() {
        return Err(FitError::Empty { what: "krw, krn" });
    }
    let mut pts = KrPoints::default();
    for (data, name, phase) in [
        (krw, "krw", Phase::Wetting),
        (krn, "krn", Phase::NonWetting),
    ] {
        if let Some(kr) = data {
            let opts = KrFitOptions {
                phase,
                normalisation,
                kr_max: KrMax::Fit,
                objective,
            };
            let p = kr_points(sw, kr, name, &opts)?;
            // Store the effective saturation S_e itself; the phase decides
            // the model (x = S_e for both).
            for (i, &x) in p.x.iter().enumerate() {
                pts.x.push(phase.own_saturation(x));
                pts.y.push(p.y[i]);
                pts.phase.push(phase);
            }
            pts.n_excluded += p.n_excluded;
        }
    }
    require(&pts, 1, "Brooks–Corey kr fit")?;
    // Starting λ from the wetting log–log slope when available.
    let wet: Vec<(f64, f64)> = pts
        .x
        .iter()
        .zip(&pts.y)
        .zip(&pts.phase)
        .filter(|(_, ph)| **ph == Phase::Wetting)
        .map(|((x, y), _)| (*x, *y))
        .collect();
    let lambda0 = if wet.is_empty() {
        2.0
    } else {
        let (xs, ys): (Vec<f64>, Vec<f64>) = wet.into_iter().unzip();
        let (eps, _) = power_law_guess(&xs, &ys, Some(1.0));
        if eps > 3.05 { 2.0 / (eps - 3.0) } else { 2.0 }
    };
    let bc = |lambda: f64, x: f64, ph: Phase| match ph {
        Phase::Wetting => brooks_corey_krw(x, lambda),
        Phase::NonWetting => brooks_corey_krn(x, lambda),
    };
    let model = |q: &[f64], x: f64, ph: Phase| bc(q[0].exp(), x, ph);
    let out = run_lm(&pts, objective, &[lambda0.ln()], &model, "Brooks–Corey kr")?;
    let lambda = out.params[0].exp();
    let se = param_std_errors(&out, pts.n_used(objective)).map(|s| lambda * s[0]);
    let quality = pts.quality(|x, ph| bc(lambda, x, ph), objective, &out);
    Ok(BrooksCoreyKrFit {
        lambda,
        lambda_std_error: se,
        quality,
    })
}

// ---------------------------------------------------------------------------
// Brooks–Corey capillary pressure
// ---------------------------------------------------------------------------

/// How the residual wetting saturation `S_r` of the Brooks–Corey `S_e` is
/// chosen.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ResidualSaturation {
    /// Held at the given value in `[0, 1)`.
    Fixed(f64),
    /// Chosen to make `ln Pc` against `ln S_e` most nearly straight (the
    /// procedure of Brooks & Corey 1964), searched in
    /// `[0, min S_w of the used points)`.
    Fit,
}

/// A fitted Brooks–Corey capillary-pressure curve.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct BrooksCoreyPcFit {
    /// Entry pressure `P_e` in Pa.
    pub pe_pa: f64,
    /// Pore-size distribution index `λ` (> 0).
    pub lambda: f64,
    /// Residual wetting saturation `S_r` used (given or fitted).
    pub swr: f64,
    /// Fit error: `rmse` in Pa, `rmse_ln` in `ln Pc`.
    pub quality: FitQuality,
}

/// Fits `P_e` and `λ` of the Brooks & Corey (1964) capillary pressure
/// [`brooks_corey_pc`] to drainage data `(sw, pc_pa)`.
///
/// Straight-line least squares of `ln Pc = ln P_e − (1/λ) ln S_e` with
/// `S_e = (S_w − S_r)/(1 − S_r)`, over points with `Pc > 0` and
/// `0 < S_e ≤ 1` (others are counted as excluded: the plateau below the
/// entry pressure is outside the model). With [`ResidualSaturation::Fit`],
/// `S_r` is found by a 101-point scan and golden-section refinement of the
/// straight-line residual. Needs at least two usable points with distinct
/// `S_w`.
pub fn fit_brooks_corey_pc(
    sw: &[f64],
    pc_pa: &[f64],
    swr: ResidualSaturation,
) -> Result<BrooksCoreyPcFit, FitError> {
    check_pair("sw", sw, "pc_pa", pc_pa)?;
    check_range("sw", sw, 0.0, 1.0, "[0, 1]")?;
    const WHAT: &str = "Brooks–Corey Pc fit";
    let swr = match swr {
        ResidualSaturation::Fixed(s) => {
            if !(s.is_finite() && (0.0..1.0).contains(&s)) {
                return Err(FitError::InvalidParameter {
                    name: "swr",
                    value: s,
                    allowed: "[0, 1)",
                });
            }
            s
        }
        ResidualSaturation::Fit => {
            let s_min = sw
                .iter()
                .zip(pc_pa)
                .filter(|(_, p)| **p > 0.0)
                .map(|(s, _)| *s)
                .fold(f64::INFINITY, f64::min);
            if !s_min.is_finite() || s_min <= 0.0 {
                // No positive Pc, or a point at S_w = 0: S_r must be 0.
                0.0
            } else {
                let upper = s_min * (1.0 - 1e-9);
                let objective = |s: f64| bc_line(sw, pc_pa, s).map_or(f64::INFINITY, |l| l.sse);
                golden_min(objective, 0.0, upper, 100)
            }
        }
    };
    let line = bc_line(sw, pc_pa, swr).ok_or(FitError::Degenerate {
        what: WHAT,
        detail: "fewer than two usable points with distinct S_w (Pc > 0, 0 < S_e ≤ 1)".into(),
    })?;
    if line.slope >= 0.0 {
        return Err(FitError::Degenerate {
            what: WHAT,
            detail: format!(
                "Pc does not fall with S_w (log–log slope {:.4}); no positive λ",
                line.slope
            ),
        });
    }
    let pe_pa = line.intercept.exp();
    let lambda = -1.0 / line.slope;
    let mut sq = 0.0;
    let mut sq_ln = 0.0;
    for &i in &line.used {
        let se = (sw[i] - swr) / (1.0 - swr);
        let model = brooks_corey_pc(se, pe_pa, lambda);
        sq += (model - pc_pa[i]).powi(2);
        sq_ln += (model.ln() - pc_pa[i].ln()).powi(2);
    }
    let n = line.used.len();
    Ok(BrooksCoreyPcFit {
        pe_pa,
        lambda,
        swr,
        quality: FitQuality {
            n_used: n,
            n_excluded: sw.len() - n,
            rmse: (sq / n as f64).sqrt(),
            rmse_ln: Some((sq_ln / n as f64).sqrt()),
            iterations: 0,
        },
    })
}

struct Line {
    intercept: f64,
    slope: f64,
    sse: f64,
    used: Vec<usize>,
}

/// Straight line `ln pc = a + b ln S_e` for a given `S_r`.
fn bc_line(sw: &[f64], pc: &[f64], swr: f64) -> Option<Line> {
    let mut x = Vec::new();
    let mut y = Vec::new();
    let mut used = Vec::new();
    for (i, (&s, &p)) in sw.iter().zip(pc).enumerate() {
        let se = (s - swr) / (1.0 - swr);
        if p > 0.0 && se > 0.0 && se <= 1.0 {
            x.push(se.ln());
            y.push(p.ln());
            used.push(i);
        }
    }
    let (a, b, sse) = linear_regression(&x, &y)?;
    Some(Line {
        intercept: a,
        slope: b,
        sse,
        used,
    })
}

// ---------------------------------------------------------------------------
// Land trapping
// ---------------------------------------------------------------------------

/// How Land's constant is estimated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LandMethod {
    /// From the pair with the largest initial saturation,
    /// $C = 1/S_{nr} - 1/S_{ni}$ there (Land 1968). Ties: the first such pair.
    EndPoint,
    /// Least squares of $1/S_{nr}$ on $1/S_{ni}$ with the slope fixed at 1:
    /// minimising $\sum_i (1/S_{nr,i} - 1/S_{ni,i} - C)^2$ gives the plain
    /// mean $C = \overline{d}$, $d_i = 1/S_{nr,i} - 1/S_{ni,i}$. Appropriate
    /// when the scatter is uniform in $1/S_{nr}$.
    Unweighted,
    /// The same line with weights for scatter that is uniform in $S_{nr}$
    /// itself (the usual case: saturations are what is measured). By the
    /// delta method $\mathrm{Var}(1/S_{nr}) \approx \sigma^2 / S_{nr}^4$, so
    /// the inverse-variance weights are $w_i = \hat S_{nr,i}^4$ and
    /// $C = \sum_i w_i d_i / \sum_i w_i$. The weights use the model values
    /// $\hat S_{nr,i} = S_{ni,i}/(1 + C S_{ni,i})$ (not the noisy data), so
    /// `C` is iterated to a fixed point from the unweighted mean (at most 100
    /// iterations, stop at relative change `1e-15`).
    Weighted,
}

/// The saturation convention of a Land fit.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LandNormalisation {
    /// Saturations as given: fractions of the pore volume.
    PoreVolume,
    /// Saturations divided by `1 − S_wc` (fractions of the hydrocarbon pore
    /// volume), as Land (1968) normalised them; `S_wc ∈ [0, 1)`.
    HydrocarbonPoreVolume {
        /// Connate water saturation `S_wc`.
        swc: f64,
    },
}

/// A fitted Land trapping constant.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct LandFit {
    /// Land's constant `C` (≥ 0) in the chosen saturation convention.
    pub c: f64,
    /// The estimator used.
    pub method: LandMethod,
    /// The saturation convention of `c`.
    pub normalisation: LandNormalisation,
    /// Number of `(S_ni, S_nr)` pairs.
    pub n_points: usize,
    /// RMS of `Ŝ_nr − S_nr` (normalised saturations), `Ŝ_nr = S_ni/(1 + C S_ni)`.
    pub rmse_snr: f64,
    /// RMS of `(1/S_nr − 1/S_ni) − C`, the residual in the linearised space.
    pub rmse_inverse: f64,
}

/// Land (1968, "Calculation of imbibition relative permeability for two-
/// and three-phase flow from rock properties", SPE J 8(2):149–156) trapping
/// constant from pairs of initial and residual non-wetting saturations:
///
/// $1/S_{nr} - 1/S_{ni} = C$, i.e. $S_{nr} = S_{ni}/(1 + C S_{ni})$.
///
/// `sni`, `snr`: fractions of the pore volume with
/// `0 < snr ≤ sni ≤ 1` (after normalisation). A pair with `snr = 0` means no
/// trapping (`C = ∞`) and is rejected as out of range; so is `snr > sni`,
/// which would need `C < 0`.
pub fn fit_land(
    sni: &[f64],
    snr: &[f64],
    method: LandMethod,
    normalisation: LandNormalisation,
) -> Result<LandFit, FitError> {
    check_pair("sni", sni, "snr", snr)?;
    let scale = match normalisation {
        LandNormalisation::PoreVolume => 1.0,
        LandNormalisation::HydrocarbonPoreVolume { swc } => {
            if !(swc.is_finite() && (0.0..1.0).contains(&swc)) {
                return Err(FitError::InvalidParameter {
                    name: "swc",
                    value: swc,
                    allowed: "[0, 1)",
                });
            }
            1.0 / (1.0 - swc)
        }
    };
    let ni: Vec<f64> = sni.iter().map(|s| s * scale).collect();
    let nr: Vec<f64> = snr.iter().map(|s| s * scale).collect();
    for i in 0..ni.len() {
        if !(ni[i] > 0.0 && ni[i] <= 1.0) {
            return Err(FitError::OutOfRange {
                what: "sni (normalised)",
                index: i,
                value: ni[i],
                allowed: "(0, 1]",
            });
        }
        if !(nr[i] > 0.0 && nr[i] <= ni[i]) {
            return Err(FitError::OutOfRange {
                what: "snr (normalised)",
                index: i,
                value: nr[i],
                allowed: "(0, sni]",
            });
        }
    }
    let d: Vec<f64> = ni.iter().zip(&nr).map(|(a, b)| 1.0 / b - 1.0 / a).collect();
    let n = d.len();
    let mean = d.iter().sum::<f64>() / n as f64;
    let c = match method {
        LandMethod::EndPoint => {
            let mut best = 0;
            for i in 1..n {
                if ni[i] > ni[best] {
                    best = i;
                }
            }
            d[best]
        }
        LandMethod::Unweighted => mean,
        LandMethod::Weighted => {
            let mut c = mean;
            for _ in 0..100 {
                let (mut sw, mut swd) = (0.0, 0.0);
                for i in 0..n {
                    let w = (ni[i] / (1.0 + c * ni[i])).powi(4);
                    sw += w;
                    swd += w * d[i];
                }
                let next = swd / sw;
                let done = (next - c).abs() <= 1e-15 * next.abs().max(1e-300);
                c = next;
                if done {
                    break;
                }
            }
            c
        }
    };
    let rmse_snr = (ni
        .iter()
        .zip(&nr)
        .map(|(a, b)| (a / (1.0 + c * a) - b).powi(2))
        .sum::<f64>()
        / n as f64)
        .sqrt();
    let rmse_inverse = (d.iter().map(|v| (v - c).powi(2)).sum::<f64>() / n as f64).sqrt();
    Ok(LandFit {
        c,
        method,
        normalisation,
        n_points: n,
        rmse_snr,
        rmse_inverse,
    })
}

/// Land's residual saturation $S_{nr} = S_{ni}/(1 + C S_{ni})$ (Land 1968),
/// in the same saturation convention as `c`.
pub fn land_residual(sni: f64, c: f64) -> f64 {
    sni / (1.0 + c * sni)
}

// ---------------------------------------------------------------------------
// Archie
// ---------------------------------------------------------------------------

/// How the prefactor of an Archie law is treated.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Prefactor {
    /// Held at the given value (> 0): `a = 1` in Archie's formation-factor
    /// law, `b = 1` (the line through `RI = 1` at `S_w = 1`) in the
    /// resistivity-index law.
    Fixed(f64),
    /// Fitted as the intercept of the log–log line.
    Free,
}

/// A fitted Archie exponent.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ArchieFit {
    /// The exponent (`m` or `n`).
    pub exponent: f64,
    /// The prefactor (`a` or `b`), given or fitted.
    pub prefactor: f64,
    /// Points used.
    pub n_points: usize,
    /// RMS of `ln(model) − ln(data)`.
    pub rmse_ln: f64,
    /// RMS of `model − data` (dimensionless F or RI).
    pub rmse: f64,
}

/// Cementation exponent `m` of Archie's (1942, "The electrical resistivity
/// log as an aid in determining some reservoir characteristics", Trans AIME
/// 146:54–62) formation-factor law $F = a \phi^{-m}$.
///
/// Least squares of `ln F = ln a − m ln φ` with `a` fixed (Archie: `a = 1`;
/// Winsauer et al. 1952 fitted `a ≠ 1`) or free. `phi ∈ (0, 1)`, `F > 0`.
pub fn fit_archie_m(
    phi: &[f64],
    formation_factor: &[f64],
    a: Prefactor,
) -> Result<ArchieFit, FitError> {
    check_pair("phi", phi, "formation_factor", formation_factor)?;
    check_open("phi", phi, 0.0, 1.0, "(0, 1)")?;
    check_positive("formation_factor", formation_factor)?;
    fit_log_power(phi, formation_factor, a, "Archie m fit")
}

/// Saturation exponent `n` of Archie's (1942) resistivity-index law
/// $RI = b S_w^{-n}$ (Archie: `b = 1`, the line through `RI = 1` at
/// `S_w = 1`).
///
/// Least squares of `ln RI = ln b − n ln S_w` with `b` fixed or free.
/// `sw ∈ (0, 1]`, `RI > 0`.
pub fn fit_archie_n(
    sw: &[f64],
    resistivity_index: &[f64],
    b: Prefactor,
) -> Result<ArchieFit, FitError> {
    check_pair("sw", sw, "resistivity_index", resistivity_index)?;
    for (i, &s) in sw.iter().enumerate() {
        if !(s > 0.0 && s <= 1.0) {
            return Err(FitError::OutOfRange {
                what: "sw",
                index: i,
                value: s,
                allowed: "(0, 1]",
            });
        }
    }
    check_positive("resistivity_index", resistivity_index)?;
    fit_log_power(sw, resistivity_index, b, "Archie n fit")
}

/// `y = c x^{-k}`: least squares in `ln`, `c` fixed or free.
fn fit_log_power(
    x: &[f64],
    y: &[f64],
    prefactor: Prefactor,
    what: &'static str,
) -> Result<ArchieFit, FitError> {
    let lx: Vec<f64> = x.iter().map(|v| v.ln()).collect();
    let ly: Vec<f64> = y.iter().map(|v| v.ln()).collect();
    let (c, k) = match prefactor {
        Prefactor::Fixed(c) => {
            if !(c.is_finite() && c > 0.0) {
                return Err(FitError::InvalidParameter {
                    name: "prefactor",
                    value: c,
                    allowed: "(0, ∞)",
                });
            }
            // min Σ (ly − ln c + k lx)² ⇒ k = −Σ (ly − ln c) lx / Σ lx².
            let lc = c.ln();
            let sxx: f64 = lx.iter().map(|v| v * v).sum();
            if sxx == 0.0 {
                return Err(FitError::Degenerate {
                    what,
                    detail: "every abscissa is 1: the exponent is not determined".into(),
                });
            }
            let sxy: f64 = lx.iter().zip(&ly).map(|(a, b)| a * (b - lc)).sum();
            (c, -sxy / sxx)
        }
        Prefactor::Free => {
            if lx.len() < 2 {
                return Err(FitError::TooFewPoints {
                    what,
                    n_used: lx.len(),
                    n_required: 2,
                });
            }
            let (a, b, _) = linear_regression(&lx, &ly).ok_or(FitError::Degenerate {
                what,
                detail: "all abscissae equal: slope not determined".into(),
            })?;
            (a.exp(), -b)
        }
    };
    let n = x.len();
    let (mut sq, mut sq_ln) = (0.0, 0.0);
    for i in 0..n {
        let model = c * x[i].powf(-k);
        sq += (model - y[i]).powi(2);
        sq_ln += (model.ln() - ly[i]).powi(2);
    }
    Ok(ArchieFit {
        exponent: k,
        prefactor: c,
        n_points: n,
        rmse_ln: (sq_ln / n as f64).sqrt(),
        rmse: (sq / n as f64).sqrt(),
    })
}

// ---------------------------------------------------------------------------
// Shared machinery
// ---------------------------------------------------------------------------

#[inline]
fn clamp01(x: f64) -> f64 {
    x.clamp(0.0, 1.0)
}

fn check_pair(
    x_name: &'static str,
    x: &[f64],
    y_name: &'static str,
    y: &[f64],
) -> Result<(), FitError> {
    for (name, data) in [(x_name, x), (y_name, y)] {
        if data.is_empty() {
            return Err(FitError::Empty { what: name });
        }
    }
    if x.len() != y.len() {
        return Err(FitError::LengthMismatch {
            x: x_name,
            y: y_name,
            x_len: x.len(),
            y_len: y.len(),
        });
    }
    for (name, data) in [(x_name, x), (y_name, y)] {
        if let Some((i, v)) = data.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(FitError::NotFinite {
                what: name,
                index: i,
                value: *v,
            });
        }
    }
    Ok(())
}

fn check_range(
    what: &'static str,
    x: &[f64],
    lo: f64,
    hi: f64,
    allowed: &'static str,
) -> Result<(), FitError> {
    match x
        .iter()
        .enumerate()
        .find(|(_, v)| !(lo <= **v && **v <= hi))
    {
        Some((index, &value)) => Err(FitError::OutOfRange {
            what,
            index,
            value,
            allowed,
        }),
        None => Ok(()),
    }
}

fn check_open(
    what: &'static str,
    x: &[f64],
    lo: f64,
    hi: f64,
    allowed: &'static str,
) -> Result<(), FitError> {
    match x.iter().enumerate().find(|(_, v)| !(lo < **v && **v < hi)) {
        Some((index, &value)) => Err(FitError::OutOfRange {
            what,
            index,
            value,
            allowed,
        }),
        None => Ok(()),
    }
}

fn check_positive(what: &'static str, x: &[f64]) -> Result<(), FitError> {
    match x.iter().enumerate().find(|(_, v)| **v <= 0.0) {
        Some((index, &value)) => Err(FitError::OutOfRange {
            what,
            index,
            value,
            allowed: "(0, ∞)",
        }),
        None => Ok(()),
    }
}

fn fixed_kr_max(k: KrMax) -> Result<Option<f64>, FitError> {
    match k {
        KrMax::Fixed(v) if v.is_finite() && v > 0.0 => Ok(Some(v)),
        KrMax::Fixed(v) => Err(FitError::InvalidParameter {
            name: "kr_max",
            value: v,
            allowed: "(0, ∞)",
        }),
        KrMax::Fit => Ok(None),
    }
}

/// kr data mapped to the phase's own normalised saturation `x ∈ [0, 1]`.
#[derive(Default)]
struct KrPoints {
    x: Vec<f64>,
    y: Vec<f64>,
    phase: Vec<Phase>,
    n_excluded: usize,
}

impl KrPoints {
    /// Indices the objective can use (all, or `y > 0` in log space).
    fn used(&self, objective: Objective) -> Vec<usize> {
        (0..self.x.len())
            .filter(|&i| objective == Objective::Linear || self.y[i] > 0.0)
            .collect()
    }

    fn n_used(&self, objective: Objective) -> usize {
        self.used(objective).len()
    }

    fn quality(
        &self,
        model: impl Fn(f64, Phase) -> f64,
        objective: Objective,
        out: &LmOutcome,
    ) -> FitQuality {
        let m: Vec<f64> = self
            .x
            .iter()
            .zip(&self.phase)
            .map(|(&x, &ph)| model(x, ph))
            .collect();
        quality_from(
            &m,
            &self.y,
            &self.used(objective),
            self.n_excluded,
            out.iterations,
        )
    }
}

fn quality_from(
    model: &[f64],
    data: &[f64],
    used: &[usize],
    n_excluded_domain: usize,
    iterations: usize,
) -> FitQuality {
    let n = used.len();
    let mut sq = 0.0;
    let (mut sq_ln, mut n_ln) = (0.0, 0usize);
    for &i in used {
        sq += (model[i] - data[i]).powi(2);
        if model[i] > 0.0 && data[i] > 0.0 {
            sq_ln += (model[i].ln() - data[i].ln()).powi(2);
            n_ln += 1;
        }
    }
    FitQuality {
        n_used: n,
        n_excluded: n_excluded_domain + (data.len() - n),
        rmse: (sq / n.max(1) as f64).sqrt(),
        rmse_ln: (n_ln > 0).then(|| (sq_ln / n_ln as f64).sqrt()),
        iterations,
    }
}

fn kr_points(
    sw: &[f64],
    kr: &[f64],
    kr_name: &'static str,
    opts: &KrFitOptions,
) -> Result<KrPoints, FitError> {
    check_pair("sw", sw, kr_name, kr)?;
    check_range("sw", sw, 0.0, 1.0, "[0, 1]")?;
    let mut p = KrPoints::default();
    for (&s, &k) in sw.iter().zip(kr) {
        let swn = opts.normalisation.swn(s);
        // A tolerance of a few ulps keeps end points that round just past 0 or 1.
        let tol = 4.0 * f64::EPSILON;
        if (-tol..=1.0 + tol).contains(&swn) {
            p.x.push(opts.phase.own_saturation(clamp01(swn)));
            p.y.push(k);
            p.phase.push(opts.phase);
        } else {
            p.n_excluded += 1;
        }
    }
    Ok(p)
}

fn require(p: &KrPoints, n_par: usize, what: &'static str) -> Result<(), FitError> {
    if p.x.len() < n_par {
        return Err(FitError::TooFewPoints {
            what,
            n_used: p.x.len(),
            n_required: n_par,
        });
    }
    Ok(())
}

/// Starting values `(n, kr_max)` from `ln y = ln k + n ln x` over points with
/// `0 < x < 1` and `y > 0`; `(2, max y)` if the line is not determined.
fn power_law_guess(x: &[f64], y: &[f64], fixed: Option<f64>) -> (f64, f64) {
    let (lx, ly): (Vec<f64>, Vec<f64>) = x
        .iter()
        .zip(y)
        .filter(|(a, b)| **a > 0.0 && **a < 1.0 && **b > 0.0)
        .map(|(a, b)| (a.ln(), b.ln()))
        .unzip();
    let y_max = y.iter().copied().fold(0.0, f64::max);
    let fallback = (2.0, fixed.unwrap_or(y_max.max(1e-6)));
    let guess = match fixed {
        Some(k) => {
            let sxx: f64 = lx.iter().map(|v| v * v).sum();
            let sxy: f64 = lx.iter().zip(&ly).map(|(a, b)| a * (b - k.ln())).sum();
            (sxx > 0.0).then(|| (sxy / sxx, k))
        }
        None => linear_regression(&lx, &ly).map(|(a, b, _)| (b, a.exp())),
    };
    match guess {
        Some((n, k)) if n.is_finite() && k.is_finite() && n > 1e-3 && n < 1e3 && k > 0.0 => (n, k),
        _ => fallback,
    }
}

/// Least squares `y = a + b x`; `None` with fewer than two points or equal
/// abscissae. Returns `(a, b, SSE)`.
fn linear_regression(x: &[f64], y: &[f64]) -> Option<(f64, f64, f64)> {
    let n = x.len();
    if n < 2 {
        return None;
    }
    let mx = x.iter().sum::<f64>() / n as f64;
    let my = y.iter().sum::<f64>() / n as f64;
    let sxx: f64 = x.iter().map(|v| (v - mx).powi(2)).sum();
    if sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let b = sxy / sxx;
    let a = my - b * mx;
    let sse = x.iter().zip(y).map(|(u, v)| (v - a - b * u).powi(2)).sum();
    Some((a, b, sse))
}

/// Levenberg–Marquardt on kr points with a model `f(q, x)`.
fn run_lm(
    pts: &KrPoints,
    objective: Objective,
    p0: &[f64],
    model: &dyn Fn(&[f64], f64, Phase) -> f64,
    name: &'static str,
) -> Result<LmOutcome, FitError> {
    let used = pts.used(objective);
    if used.len() < p0.len() {
        return Err(FitError::TooFewPoints {
            what: name,
            n_used: used.len(),
            n_required: p0.len(),
        });
    }
    let residuals = (used.len(), |q: &[f64], out: &mut [f64]| {
        for (k, &i) in used.iter().enumerate() {
            let f = model(q, pts.x[i], pts.phase[i]);
            out[k] = match objective {
                Objective::Linear => f - pts.y[i],
                Objective::Log => f.ln() - pts.y[i].ln(),
            };
        }
        true
    });
    let out = minimise(&residuals, p0, LmOptions::default()).ok_or(FitError::Degenerate {
        what: name,
        detail: "model not finite at the starting point".into(),
    })?;
    if !out.converged {
        return Err(FitError::NoConvergence {
            model: name,
            iterations: out.iterations,
            rmse: (out.sum_sq / used.len() as f64).sqrt(),
        });
    }
    Ok(out)
}

/// Standard errors of the solver parameters `q`, `s √[(JᵀJ)⁻¹]_jj` with
/// `s² = SSE/(m − p)`; `None` when `m ≤ p` or `JᵀJ` is singular. For a
/// natural parameter `θ(q)` the standard error is `|dθ/dq|` times the
/// returned value (delta method; `θ` itself for `θ = e^q`).
fn param_std_errors(out: &LmOutcome, m: usize) -> Option<Vec<f64>> {
    let p = out.params.len();
    if m <= p {
        return None;
    }
    let inv = out.jtj_inverse.as_ref()?;
    let s2 = out.sum_sq / (m - p) as f64;
    let se: Vec<f64> = (0..p).map(|j| (s2 * inv[j * p + j]).sqrt()).collect();
    se.iter().all(|v| v.is_finite()).then_some(se)
}

/// Minimum of `f` on `[lo, hi]`: scan `n_scan + 1` points, then golden-section
/// refinement between the neighbours of the best one.
fn golden_min(f: impl Fn(f64) -> f64, lo: f64, hi: f64, n_scan: usize) -> f64 {
    let step = (hi - lo) / n_scan as f64;
    let mut best = (lo, f(lo));
    for k in 1..=n_scan {
        let x = lo + step * k as f64;
        let v = f(x);
        if v < best.1 {
            best = (x, v);
        }
    }
    let mut a = (best.0 - step).max(lo);
    let mut b = (best.0 + step).min(hi);
    let inv_phi = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - inv_phi * (b - a);
    let mut d = a + inv_phi * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..200 {
        if (b - a).abs() <= 1e-14 * (1.0 + best.0.abs()) {
            break;
        }
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - inv_phi * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + inv_phi * (b - a);
            fd = f(d);
        }
    }
    let x = 0.5 * (a + b);
    if f(x) <= best.1 { x } else { best.0 }
}

#[cfg(test)]
mod tests;
