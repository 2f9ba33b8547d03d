//! Archie (1942): cementation and saturation exponents.

use serde::Serialize;

use super::FitError;
use super::common::{check_open, check_pair, check_positive, linear_regression};

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
