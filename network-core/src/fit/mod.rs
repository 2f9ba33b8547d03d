//! Closed-form saturation-function models and their least-squares fits:
//! Corey, Brooks–Corey, modified Corey, LET, Land trapping and Archie; and
//! power-law tails of size distributions by maximum likelihood.
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
//! mapped back to the natural parameters. The one-parameter Land fit in
//! `S_nr` ([`fit_land_least_squares`]) needs no solver: a fixed scan and a
//! safeguarded Newton iteration find its minimum.

mod archie;
mod brooks_corey;
mod common;
mod corey;
mod land;
mod let_model;
mod lm;
mod power_law;

use serde::Serialize;
use thiserror::Error;

pub use archie::{ArchieFit, Prefactor, fit_archie_m, fit_archie_n};
pub use brooks_corey::{
    BrooksCoreyKrFit, BrooksCoreyPcFit, ResidualSaturation, brooks_corey_krn, brooks_corey_krw,
    brooks_corey_pc, fit_brooks_corey_kr, fit_brooks_corey_pc,
};
pub use corey::{CoreyFit, CoreyParams, corey_1954, fit_corey};
pub use land::{
    LandFit, LandLsqFit, LandLsqOptions, LandMethod, LandNormalisation, LandShapeIssue, fit_land,
    fit_land_least_squares, land_residual,
};
pub use let_model::{LET_E_BOUNDS, LET_L_BOUNDS, LET_T_BOUNDS, LetFit, LetParams, fit_let};
pub use power_law::{MIN_TAIL, PowerLawFit, fit_power_law};

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

#[cfg(test)]
mod tests;
