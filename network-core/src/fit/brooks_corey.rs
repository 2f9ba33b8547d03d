//! Brooks & Corey (1964): capillary pressure and relative permeabilities,
//! with their fits.

use serde::Serialize;

use super::common::{
    KrPoints, check_pair, check_range, clamp01, golden_min, kr_points, linear_regression,
    param_std_errors, power_law_guess, require, run_lm,
};
use super::{FitError, FitQuality, KrFitOptions, KrMax, Normalisation, Objective, Phase};

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
        detail: "fewer than two usable points with distinct Sw (Pc > 0, 0 < Se ≤ 1)".into(),
    })?;
    if line.slope >= 0.0 {
        return Err(FitError::Degenerate {
            what: WHAT,
            detail: format!(
                "Pc does not fall with Sw (log–log slope {:.4}); no positive λ",
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
