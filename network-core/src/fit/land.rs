//! Land (1968) trapping: the trapping constant and the residual saturation,
//! by linearised estimators ([`fit_land`]) or by least squares in `S_nr`
//! with a shape diagnostic ([`fit_land_least_squares`]).

use serde::Serialize;

use super::FitError;
use super::common::check_pair;

/// How [`fit_land`] estimates Land's constant: linearised estimators in
/// `1/S_nr`. A trapping curve is better fitted in `S_nr` itself by
/// [`fit_land_least_squares`], which sweeps use.
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
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LandNormalisation {
    /// Saturations as given: fractions of the pore volume.
    #[default]
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

impl LandNormalisation {
    /// The factor that turns pore-volume fractions into this convention.
    fn scale(self) -> Result<f64, FitError> {
        match self {
            LandNormalisation::PoreVolume => Ok(1.0),
            LandNormalisation::HydrocarbonPoreVolume { swc } => {
                if !(swc.is_finite() && (0.0..1.0).contains(&swc)) {
                    return Err(FitError::InvalidParameter {
                        name: "swc",
                        value: swc,
                        allowed: "[0, 1)",
                    });
                }
                Ok(1.0 / (1.0 - swc))
            }
        }
    }
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
    let scale = normalisation.scale()?;
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

/// Options of [`fit_land_least_squares`].
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct LandLsqOptions<'a> {
    /// Fit only the points with `lo ≤ S_ni ≤ hi` (`S_ni` as given, before
    /// any normalisation); `None`: every point.
    pub sni_range: Option<(f64, f64)>,
    /// Replicate labels, one per point: points with the same label were
    /// made at the same target (the realisations of one initial saturation
    /// of a sweep). Their spread about their own mean is the pure error the
    /// shape diagnostic compares the fit with. `None`: points with equal
    /// `S_ni` are replicates.
    pub levels: Option<&'a [usize]>,
    /// Saturation convention.
    pub normalisation: LandNormalisation,
}

/// One reason why data are not Land-shaped (see [`fit_land_least_squares`]).
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum LandShapeIssue {
    /// Every fitted point has the same initial saturation: `C` rests on one
    /// `S_ni` and the shape of the curve is not tested.
    SingleLevel {
        /// The (mean) initial saturation.
        sni: f64,
    },
    /// The fit misses the points by much more than the points scatter
    /// between replicates: `rmse > 3 s_pe` and `rmse > 0.01`.
    ResidualsExceedScatter {
        /// RMS residual of the fit in `S_nr`.
        rmse: f64,
        /// Pure-error standard deviation between replicates.
        pure_error_sd: f64,
    },
    /// The mean residual saturation of the highest initial saturation lies
    /// below that of a lower one by more than `max(0.005, 2 se)`: Land's
    /// curve always rises.
    FallsAtHighEnd {
        /// Initial saturation with the highest mean `S_nr` below the top.
        sni_peak: f64,
        /// Its mean `S_nr`.
        snr_peak: f64,
        /// The highest initial saturation.
        sni_top: f64,
        /// Its mean `S_nr`.
        snr_top: f64,
    },
    /// The mean residuals of six or more initial saturations, in order of
    /// `S_ni`, change sign at most once (and `rmse > 0.01`): the data curve
    /// differently from Land's form.
    ResidualTrend {
        /// Initial-saturation levels.
        levels: usize,
        /// Runs of equal sign among their mean residuals.
        runs: usize,
    },
}

impl std::fmt::Display for LandShapeIssue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LandShapeIssue::SingleLevel { sni } => write!(
                f,
                "every point has Sni ≈ {sni:.3}, so C rests on one initial saturation and the \
                 Land shape is not tested"
            ),
            LandShapeIssue::ResidualsExceedScatter {
                rmse,
                pure_error_sd,
            } => write!(
                f,
                "the fit misses the points by rmse {rmse:.3} in Snr, {:.1} times their scatter \
                 between realisations ({pure_error_sd:.4})",
                rmse / pure_error_sd
            ),
            LandShapeIssue::FallsAtHighEnd {
                sni_peak,
                snr_peak,
                sni_top,
                snr_top,
            } => write!(
                f,
                "Snr falls from {snr_peak:.3} at Sni {sni_peak:.3} to {snr_top:.3} at Sni \
                 {sni_top:.3}, where Land's curve rises"
            ),
            LandShapeIssue::ResidualTrend { levels, runs } => write!(
                f,
                "the mean residuals of {levels} initial saturations form only {runs} run(s) of \
                 one sign: a systematic trend"
            ),
        }
    }
}

/// A Land coefficient fitted by least squares in `Snr`
/// ([`fit_land_least_squares`]).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LandLsqFit {
    /// Land's constant `C` (≥ 0) in the chosen saturation convention.
    pub c: f64,
    /// Linearised standard error of `c`: $\sqrt{s^2/\sum_i J_i^2}$ with
    /// $s^2 = \mathrm{RSS}/(n-1)$ and $J_i = \partial \hat S_{nr,i}/\partial C
    /// = -S_{ni,i}^2/(1 + C S_{ni,i})^2$.
    pub c_se: f64,
    /// The saturation convention of `c`.
    pub normalisation: LandNormalisation,
    /// Points fitted.
    pub n_points: usize,
    /// Points left out by the `Sni` range.
    pub n_outside_range: usize,
    /// Smallest and largest `Sni` of the fitted points (as given).
    pub sni_range: (f64, f64),
    /// RMS of `Ŝ_nr − Snr` over the fitted points (normalised saturations).
    pub rmse_snr: f64,
    /// Distinct replicate levels among the fitted points.
    pub levels: usize,
    /// Pure-error standard deviation: the spread of the residuals about
    /// their level means, $\sqrt{\sum (r_i - \bar r_l)^2/(n - k)}$ for `k`
    /// levels (`None` without replicates).
    pub pure_error_sd: Option<f64>,
    /// Residuals `Snr − Ŝ_nr` of the fitted points, in input order.
    pub residuals: Vec<f64>,
    /// Why the data may not be Land-shaped (empty: no sign of it).
    pub shape_issues: Vec<LandShapeIssue>,
    /// Newton and bisection steps after the starting scan.
    pub iterations: usize,
}

impl LandLsqFit {
    /// The shape diagnostic as one sentence (`None` when there is no issue).
    pub fn warning(&self) -> Option<String> {
        if self.shape_issues.is_empty() {
            return None;
        }
        let shape = self
            .shape_issues
            .iter()
            .any(|i| !matches!(i, LandShapeIssue::SingleLevel { .. }));
        let issues: Vec<String> = self.shape_issues.iter().map(|i| i.to_string()).collect();
        let head = if shape {
            format!(
                "data not Land-shaped over this range (Sni {:.3}–{:.3}): ",
                self.sni_range.0, self.sni_range.1
            )
        } else {
            String::new()
        };
        Some(head + &issues.join("; "))
    }
}

/// RMS residual below which no shape issue is raised (saturation units): a
/// curve that misses by less than a saturation unit in a hundred is as good
/// as a core measurement (common practice).
const SHAPE_RMSE_FLOOR: f64 = 0.01;
/// Ratio of the rmse to the pure-error standard deviation above which the
/// fit is said to miss the points (ours).
const SHAPE_SCATTER_RATIO: f64 = 3.0;
/// Smallest fall of the mean `S_nr` at the top that counts (ours).
const SHAPE_FALL_FLOOR: f64 = 0.005;
/// Grid of the starting scan: `C = t/(1 − t)`, `t = k/SCAN`, `k < SCAN`.
const SCAN: usize = 1000;

/// Land (1968, "Calculation of imbibition relative permeability for two-
/// and three-phase flow from rock properties", SPE J 8(2):149–156) trapping
/// constant by least squares in the residual saturation itself: the `C ≥ 0`
/// that minimises
///
/// $\sum_i \left(S_{nr,i} - \frac{S_{ni,i}}{1 + C S_{ni,i}}\right)^2$
///
/// over every point (every realisation) with `S_ni` in the optional range.
/// Unlike the linearised estimators of [`fit_land`], the scatter counts in
/// the units saturations are measured in, so the points of small `S_ni`
/// (where `1/S_nr` is large and noisy) do not dominate, and a point with
/// `S_nr = 0` is usable.
///
/// Method (ours): a scan of `C = t/(1 − t)` over `t = 0, 0.001, …, 0.999`
/// (`C` up to 999) finds the lowest sum of squares; Newton's method on the
/// gradient, safeguarded by bisection inside the two neighbouring scan
/// points, refines it to a relative step of `1e-15`. The standard error is
/// the linearised one of one-parameter non-linear least squares (e.g.
/// Bates & Watts 1988, *Nonlinear Regression Analysis and Its
/// Applications*, Wiley): $se = \sqrt{s^2/\sum_i J_i^2}$,
/// $s^2 = \mathrm{RSS}/(n - 1)$.
///
/// Shape diagnostic ([`LandShapeIssue`]): replicate points (same level)
/// give a pure-error spread, the classical lack-of-fit comparison (Draper
/// & Smith 1998, *Applied Regression Analysis*, 3rd ed., Wiley); the
/// thresholds are ours: the fit misses when `rmse > 3 s_pe` and
/// `rmse > 0.01`; the curve falls at the top when the mean `S_nr` of the
/// highest `S_ni` lies below that of a lower `S_ni` by more than
/// `max(0.005, 2 s_pe √(1/n_a + 1/n_b))`; a trend when six or more levels
/// have mean residuals of at most two sign runs and `rmse > 0.01`.
///
/// Input: `0 < S_ni ≤ 1` and `0 ≤ S_nr ≤ S_ni` after normalisation (others
/// are refused with [`FitError::OutOfRange`]); at least two points inside
/// the range. Errors: [`FitError::InvalidParameter`] for a bad range,
/// [`FitError::TooFewPoints`], and [`FitError::Degenerate`] when the
/// points trap so little that `C` exceeds 999.
pub fn fit_land_least_squares(
    sni: &[f64],
    snr: &[f64],
    options: &LandLsqOptions,
) -> Result<LandLsqFit, FitError> {
    check_pair("sni", sni, "snr", snr)?;
    let scale = options.normalisation.scale()?;
    if let Some(levels) = options.levels
        && levels.len() != sni.len()
    {
        return Err(FitError::LengthMismatch {
            x: "sni",
            y: "levels",
            x_len: sni.len(),
            y_len: levels.len(),
        });
    }
    if let Some((lo, hi)) = options.sni_range
        && !(lo.is_finite() && hi.is_finite() && lo < hi)
    {
        return Err(FitError::InvalidParameter {
            name: "sni_range",
            value: if lo.is_finite() { hi } else { lo },
            allowed: "lo < hi, both finite",
        });
    }
    for i in 0..sni.len() {
        let (ni, nr) = (sni[i] * scale, snr[i] * scale);
        if !(ni > 0.0 && ni <= 1.0) {
            return Err(FitError::OutOfRange {
                what: "sni (normalised)",
                index: i,
                value: ni,
                allowed: "(0, 1]",
            });
        }
        if !(nr >= 0.0 && nr <= ni) {
            return Err(FitError::OutOfRange {
                what: "snr (normalised)",
                index: i,
                value: nr,
                allowed: "[0, sni]",
            });
        }
    }
    let keep: Vec<usize> = (0..sni.len())
        .filter(|&i| {
            options
                .sni_range
                .is_none_or(|(lo, hi)| lo <= sni[i] && sni[i] <= hi)
        })
        .collect();
    let n = keep.len();
    if n < 2 {
        return Err(FitError::TooFewPoints {
            what: "Land least squares",
            n_used: n,
            n_required: 2,
        });
    }
    let x: Vec<f64> = keep.iter().map(|&i| sni[i] * scale).collect();
    let y: Vec<f64> = keep.iter().map(|&i| snr[i] * scale).collect();
    let sum_sq = |c: f64| -> f64 {
        x.iter()
            .zip(&y)
            .map(|(a, b)| (a / (1.0 + c * a) - b).powi(2))
            .sum()
    };
    // Starting scan.
    let c_of = |k: usize| {
        let t = k as f64 / SCAN as f64;
        t / (1.0 - t)
    };
    let mut best = (0, sum_sq(0.0));
    for k in 1..SCAN {
        let s = sum_sq(c_of(k));
        if s < best.1 {
            best = (k, s);
        }
    }
    if best.0 == SCAN - 1 {
        return Err(FitError::Degenerate {
            what: "Land least squares",
            detail: format!(
                "the points trap too little for Land's form (C above {:.0})",
                c_of(SCAN - 1)
            ),
        });
    }
    // Gradient g = Σ J r and its derivative g' = Σ (J² + r ∂J/∂C), with
    // r = Ŝ − S and J = ∂Ŝ/∂C = −S_ni²/(1 + C S_ni)² (analytic).
    let grad = |c: f64| -> (f64, f64) {
        let (mut g, mut gp) = (0.0, 0.0);
        for (a, b) in x.iter().zip(&y) {
            let d = 1.0 + c * a;
            let r = a / d - b;
            let j = -a * a / (d * d);
            g += j * r;
            gp += j * j + r * 2.0 * a * a * a / (d * d * d);
        }
        (g, gp)
    };
    let mut c = c_of(best.0);
    let mut iterations = 0;
    if best.0 > 0 {
        let (mut lo, mut hi) = (c_of(best.0 - 1), c_of(best.0 + 1));
        for _ in 0..200 {
            iterations += 1;
            let (g, gp) = grad(c);
            if g == 0.0 {
                break;
            }
            if g < 0.0 {
                lo = c;
            } else {
                hi = c;
            }
            let newton = c - g / gp;
            let next = if gp > 0.0 && newton > lo && newton < hi {
                newton
            } else {
                0.5 * (lo + hi)
            };
            let step = (next - c).abs();
            c = next;
            if step <= 1e-15 * c.max(1e-3) || hi - lo <= 4.0 * f64::EPSILON * hi {
                break;
            }
        }
        if sum_sq(c) > best.1 {
            c = c_of(best.0);
        }
    }
    let residuals: Vec<f64> = x
        .iter()
        .zip(&y)
        .map(|(a, b)| b - land_residual(*a, c))
        .collect();
    let rss: f64 = residuals.iter().map(|r| r * r).sum();
    let jj: f64 = x
        .iter()
        .map(|a| (a * a / (1.0 + c * a).powi(2)).powi(2))
        .sum();
    let c_se = (rss / (n - 1) as f64 / jj).sqrt();
    let rmse_snr = (rss / n as f64).sqrt();

    // Replicate levels, in order of their mean S_ni.
    let label = |k: usize| -> u64 {
        match options.levels {
            Some(l) => l[keep[k]] as u64,
            None => x[k].to_bits(),
        }
    };
    let mut by_level: std::collections::BTreeMap<u64, Vec<usize>> = Default::default();
    for k in 0..n {
        by_level.entry(label(k)).or_default().push(k);
    }
    struct Level {
        n: usize,
        sni: f64,
        snr: f64,
        residual: f64,
    }
    let mut levels: Vec<Level> = by_level
        .values()
        .map(|ks| {
            let m = ks.len() as f64;
            Level {
                n: ks.len(),
                sni: ks.iter().map(|&k| sni[keep[k]]).sum::<f64>() / m,
                snr: ks.iter().map(|&k| y[k]).sum::<f64>() / m,
                residual: ks.iter().map(|&k| residuals[k]).sum::<f64>() / m,
            }
        })
        .collect();
    let pure_df = n - levels.len();
    let pure_error_sd = (pure_df > 0).then(|| {
        let ss: f64 = by_level
            .values()
            .map(|ks| {
                let m = ks.iter().map(|&k| residuals[k]).sum::<f64>() / ks.len() as f64;
                ks.iter().map(|&k| (residuals[k] - m).powi(2)).sum::<f64>()
            })
            .sum();
        (ss / pure_df as f64).sqrt()
    });
    levels.sort_by(|a, b| a.sni.total_cmp(&b.sni));

    let mut shape_issues = Vec::new();
    if levels.len() == 1 {
        shape_issues.push(LandShapeIssue::SingleLevel { sni: levels[0].sni });
    }
    if let Some(spe) = pure_error_sd
        && levels.len() >= 2
        && rmse_snr > SHAPE_RMSE_FLOOR
        && rmse_snr > SHAPE_SCATTER_RATIO * spe
    {
        shape_issues.push(LandShapeIssue::ResidualsExceedScatter {
            rmse: rmse_snr,
            pure_error_sd: spe,
        });
    }
    if let Some((top, below)) = levels.split_last()
        && let Some(peak) = below.iter().max_by(|a, b| a.snr.total_cmp(&b.snr))
    {
        let se = pure_error_sd.map_or(0.0, |s| {
            s * (1.0 / top.n as f64 + 1.0 / peak.n as f64).sqrt()
        });
        if peak.snr - top.snr > SHAPE_FALL_FLOOR.max(2.0 * se) {
            shape_issues.push(LandShapeIssue::FallsAtHighEnd {
                sni_peak: peak.sni,
                snr_peak: peak.snr / scale,
                sni_top: top.sni,
                snr_top: top.snr / scale,
            });
        }
    }
    if levels.len() >= 6 && rmse_snr > SHAPE_RMSE_FLOOR {
        let signs: Vec<bool> = levels
            .iter()
            .filter(|l| l.residual != 0.0)
            .map(|l| l.residual > 0.0)
            .collect();
        let runs = 1 + signs.windows(2).filter(|w| w[0] != w[1]).count();
        if runs <= 2 {
            shape_issues.push(LandShapeIssue::ResidualTrend {
                levels: levels.len(),
                runs,
            });
        }
    }
    let lo = keep.iter().map(|&i| sni[i]).fold(f64::INFINITY, f64::min);
    let hi = keep
        .iter()
        .map(|&i| sni[i])
        .fold(f64::NEG_INFINITY, f64::max);
    Ok(LandLsqFit {
        c,
        c_se,
        normalisation: options.normalisation,
        n_points: n,
        n_outside_range: sni.len() - n,
        sni_range: (lo, hi),
        rmse_snr,
        levels: levels.len(),
        pure_error_sd,
        residuals,
        shape_issues,
        iterations,
    })
}
