//! Power-law tails by maximum likelihood.
//!
//! Method: Clauset, A., Shalizi, C. R. & Newman, M. E. J. (2009),
//! "Power-law distributions in empirical data", *SIAM Review* 51:661–703.
//! For a tail `x ≥ x_min` with density `p(x) ∝ x^{−α}` the maximum-likelihood
//! exponent is
//! $$\hat\alpha = 1 + n \Big[\sum_{i=1}^{n} \ln \frac{x_i}{x_{\min}}\Big]^{-1}$$
//! (their eq. 3.1) with standard error $(\hat\alpha - 1)/\sqrt{n}$ (eq. 3.2).
//! Integer data (voxel counts) use their approximation with `x_min − ½` in
//! the logarithm (eq. 3.7; they report it accurate for `x_min ≳ 6` — from
//! memory). `x_min` is chosen among the observed values as the one that
//! minimises the Kolmogorov–Smirnov distance between the tail's empirical
//! distribution and the fitted one (their §3.3), among candidates that leave
//! at least [`MIN_TAIL`] points in the tail (at most [`MAX_CANDIDATES`]
//! candidates, evenly spread in rank).

use serde::Serialize;

use super::FitError;

/// Fewest points a tail may hold for its exponent to be reported.
pub const MIN_TAIL: usize = 10;

/// Most candidate values of `x_min` tried (spread evenly over the distinct
/// values, in rank).
pub const MAX_CANDIDATES: usize = 400;

/// A fitted power-law tail.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PowerLawFit {
    /// Exponent α of `p(x) ∝ x^{−α}`.
    pub alpha: f64,
    /// Its standard error `(α − 1)/√n`.
    pub alpha_std_error: f64,
    /// Lower end of the tail.
    pub x_min: f64,
    /// Points in the tail.
    pub n_tail: usize,
    /// Kolmogorov–Smirnov distance of the fit over the tail.
    pub ks_distance: f64,
    /// True when the data were treated as integers (`x_min − ½` rule).
    pub discrete: bool,
}

/// Exponent and KS distance of the tail `sorted[start..]` (ascending).
fn tail_fit(sorted: &[f64], start: usize, discrete: bool) -> Option<(f64, f64)> {
    let tail = &sorted[start..];
    let n = tail.len() as f64;
    let x_min = tail[0];
    let base = if discrete { x_min - 0.5 } else { x_min };
    if base <= 0.0 {
        return None;
    }
    let s: f64 = tail.iter().map(|&x| (x / base).ln()).sum();
    if s <= 0.0 {
        return None;
    }
    let alpha = 1.0 + n / s;
    // Model CDF: continuous from `base`; a discrete value x covers up to
    // x + ½.
    let cdf = |x: f64| {
        let top = if discrete { x + 0.5 } else { x };
        1.0 - (top / base).powf(1.0 - alpha)
    };
    let mut d: f64 = 0.0;
    let mut i = 0;
    while i < tail.len() {
        let x = tail[i];
        let mut j = i;
        while j < tail.len() && tail[j] == x {
            j += 1;
        }
        let below = i as f64 / n;
        let upto = j as f64 / n;
        let f = cdf(x);
        d = d
            .max((upto - f).abs())
            .max((below - if discrete { cdf(x - 1.0).max(0.0) } else { f }).abs());
        i = j;
    }
    Some((alpha, d))
}

/// Fits a power-law tail to positive `values` by maximum likelihood, with
/// `x_min` chosen by the Kolmogorov–Smirnov distance (Clauset, Shalizi &
/// Newman 2009, SIAM Review 51:661); `discrete` uses their `x_min − ½` rule
/// for integer data.
pub fn fit_power_law(values: &[f64], discrete: bool) -> Result<PowerLawFit, FitError> {
    if values.is_empty() {
        return Err(FitError::Empty { what: "sizes" });
    }
    for (i, &v) in values.iter().enumerate() {
        if !v.is_finite() {
            return Err(FitError::NotFinite {
                what: "sizes",
                index: i,
                value: v,
            });
        }
        if v <= 0.0 || (discrete && v < 1.0) {
            return Err(FitError::OutOfRange {
                what: "sizes",
                index: i,
                value: v,
                allowed: "(0, ∞), and ≥ 1 for integer data",
            });
        }
    }
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    // Candidate tails start at each distinct value; beyond
    // MAX_CANDIDATES of them, every k-th is tried (the scan is quadratic).
    let mut starts = Vec::new();
    let mut start = 0;
    while start + MIN_TAIL <= sorted.len() {
        starts.push(start);
        let x = sorted[start];
        while start < sorted.len() && sorted[start] == x {
            start += 1;
        }
    }
    let step = starts.len().div_ceil(MAX_CANDIDATES).max(1);
    let mut best: Option<PowerLawFit> = None;
    for &start in starts.iter().step_by(step) {
        if let Some((alpha, d)) = tail_fit(&sorted, start, discrete) {
            let n_tail = sorted.len() - start;
            if best.as_ref().is_none_or(|b| d < b.ks_distance) {
                best = Some(PowerLawFit {
                    alpha,
                    alpha_std_error: (alpha - 1.0) / (n_tail as f64).sqrt(),
                    x_min: sorted[start],
                    n_tail,
                    ks_distance: d,
                    discrete,
                });
            }
        }
    }
    best.ok_or(FitError::TooFewPoints {
        what: "power-law tail",
        n_used: values.len(),
        n_required: MIN_TAIL,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::unit_hash;

    #[test]
    fn recovers_the_exponent_of_a_sampled_power_law() {
        // Inverse-transform samples x = x_min (1 − u)^{−1/(α−1)} of a pure
        // power law with α = 2.5, x_min = 1 (definition of the Pareto
        // distribution); the estimate must lie within 4 standard errors
        // (α − 1)/√n of the truth (Clauset et al. 2009, eq. 3.2) and pick
        // x_min near the true lower end.
        let n = 8_000;
        let xs: Vec<f64> = (0..n)
            .map(|i| (1.0 - unit_hash(3, 9, i)).powf(-1.0 / 1.5))
            .collect();
        let f = fit_power_law(&xs, false).unwrap();
        let se = 1.5 / (f.n_tail as f64).sqrt();
        assert!(
            (f.alpha - 2.5).abs() < 4.0 * se.max(f.alpha_std_error),
            "{f:?}"
        );
        assert!(f.n_tail > n as usize / 4, "{f:?}");
    }

    #[test]
    fn bad_sizes_are_refused() {
        assert!(fit_power_law(&[], false).is_err());
        assert!(fit_power_law(&[1.0, f64::NAN], false).is_err());
        assert!(fit_power_law(&[0.5; 20], true).is_err());
        assert!(matches!(
            fit_power_law(&[2.0; 5], true),
            Err(FitError::TooFewPoints { .. })
        ));
    }
}
