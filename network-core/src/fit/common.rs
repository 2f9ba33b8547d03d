//! Shared machinery of the fits: input checks, kr data points, fit quality,
//! starting values, straight lines, the Levenberg–Marquardt driver, standard
//! errors and a one-dimensional minimiser.

use super::lm::{LmOptions, LmOutcome, minimise};
use super::{FitError, FitQuality, KrFitOptions, KrMax, Objective, Phase};

#[inline]
pub(super) fn clamp01(x: f64) -> f64 {
    x.clamp(0.0, 1.0)
}

pub(super) fn check_pair(
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

pub(super) fn check_range(
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

pub(super) fn check_open(
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

pub(super) fn check_positive(what: &'static str, x: &[f64]) -> Result<(), FitError> {
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

pub(super) fn fixed_kr_max(k: KrMax) -> Result<Option<f64>, FitError> {
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
pub(super) struct KrPoints {
    pub(super) x: Vec<f64>,
    pub(super) y: Vec<f64>,
    pub(super) phase: Vec<Phase>,
    pub(super) n_excluded: usize,
}

impl KrPoints {
    /// Indices the objective can use (all, or `y > 0` in log space).
    fn used(&self, objective: Objective) -> Vec<usize> {
        (0..self.x.len())
            .filter(|&i| objective == Objective::Linear || self.y[i] > 0.0)
            .collect()
    }

    pub(super) fn n_used(&self, objective: Objective) -> usize {
        self.used(objective).len()
    }

    pub(super) fn quality(
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

pub(super) fn kr_points(
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

pub(super) fn require(p: &KrPoints, n_par: usize, what: &'static str) -> Result<(), FitError> {
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
pub(super) fn power_law_guess(x: &[f64], y: &[f64], fixed: Option<f64>) -> (f64, f64) {
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
pub(super) fn linear_regression(x: &[f64], y: &[f64]) -> Option<(f64, f64, f64)> {
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
pub(super) fn run_lm(
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
pub(super) fn param_std_errors(out: &LmOutcome, m: usize) -> Option<Vec<f64>> {
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
pub(super) fn golden_min(f: impl Fn(f64) -> f64, lo: f64, hi: f64, n_scan: usize) -> f64 {
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
