//! Land (1968) trapping: the trapping constant and the residual saturation.

use serde::Serialize;

use super::FitError;
use super::common::check_pair;

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
