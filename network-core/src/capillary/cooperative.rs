//! Cooperative pore-body filling (`I_n` events) in imbibition.

use std::f64::consts::FRAC_PI_2;

use super::piston::piston_imbibition_pc;
use super::section::Section;

/// Default cooperative-filling weights `A_2, …, A_6` (1/m) for a network
/// whose mean throat radius is `mean_throat_radius` (m): all equal to
/// `1/r̄_t`.
///
/// This is Ganglion's own default, chosen to be "of order 1/(throat
/// radius)" as the parametric model asks (Blunt 1998, J. Pet. Sci. Eng.
/// 20:117–125). Published choices differ and are quoted **from memory, not
/// verified here**: Blunt (1998) used weights of this order; later work
/// (Blunt, Jackson, Piri & Valvatne 2002, Adv. Water Resour. 25:1069–1089)
/// used weights growing with `n`, roughly `(0.5, 1, 2, 5, 10)/r̄_t` for
/// `i = 2..6`. Keep the weights configurable.
pub fn default_cooperative_weights(mean_throat_radius: f64) -> [f64; 5] {
    [1.0 / mean_throat_radius; 5]
}

/// Threshold capillary pressure (Pa) for imbibition into an oil-filled
/// pore body of radius `pore_radius` (m) with `n_oil_throats` of its
/// `n_throats` throats still holding oil (an `I_n` event; Lenormand,
/// Zarcone & Sarr 1983, J. Fluid Mech. 135:337–353), with the parametric
/// model of Blunt (1998, J. Pet. Sci. Eng. 20:117–125):
///
/// $$P_c(I_n) = \frac{2\sigma\cos\theta_a}{R_p} - \sigma\sum_{i=1}^{n} A_i x_i,\qquad A_1 = 0,$$
///
/// - `weights[k]` is `A_{k+2}` in 1/m (so `weights[0] = A_2`); for `i`
///   beyond the slice the last weight repeats (none given: all zero). See
///   [`default_cooperative_weights`].
/// - `draws[k]` is `x_{k+2}` in `[0, 1)` (uniform, drawn by the caller from
///   a seeded generator so the run is reproducible); missing draws count as
///   1/2, their mean.
/// - `n ≤ 1` gives the piston-like form `2σ cos θa / R_p` (`I_1`, and `I_0`).
/// - `θa ≥ π/2`: no cooperative term, the threshold is `2σ cos θa / R_p`
///   (use [`pore_imbibition_pc`] to get the corner-aware piston-like
///   threshold of the pore's section instead; common practice).
/// - `n_oil_throats ≥ n_throats` (no water-filled throat next to the pore,
///   so no invading meniscus): `f64::NEG_INFINITY`, the event cannot occur
///   (snap-off still can).
///
/// Valid for quasi-static imbibition with `θa < π/2`; the `A_i` are model
/// parameters, not derived quantities.
pub fn cooperative_fill_pc(
    pore_radius: f64,
    theta_a: f64,
    sigma: f64,
    n_oil_throats: usize,
    n_throats: usize,
    weights: &[f64],
    draws: &[f64],
) -> f64 {
    if n_oil_throats >= n_throats {
        return f64::NEG_INFINITY;
    }
    let base = 2.0 * sigma * theta_a.cos() / pore_radius;
    if theta_a >= FRAC_PI_2 || weights.is_empty() {
        return base;
    }
    let mut sum = 0.0;
    for i in 2..=n_oil_throats {
        let k = i - 2;
        let a = weights[k.min(weights.len() - 1)];
        let x = draws.get(k).copied().unwrap_or(0.5);
        sum += a * x;
    }
    base - sigma * sum
}

/// Threshold capillary pressure (Pa) for filling an oil-filled pore body by
/// a throat meniscus: the cooperative model ([`cooperative_fill_pc`] with
/// `R_p = s.radius`) for `θa < π/2`, and the corner-aware piston-like
/// threshold of the pore's section ([`piston_imbibition_pc`]) for
/// `θa ≥ π/2` (common practice). `f64::NEG_INFINITY` when no adjacent
/// throat holds water.
#[allow(clippy::too_many_arguments)]
pub fn pore_imbibition_pc(
    s: &Section,
    theta_r: f64,
    theta_a: f64,
    pc_max: f64,
    sigma: f64,
    n_oil_throats: usize,
    n_throats: usize,
    weights: &[f64],
    draws: &[f64],
) -> f64 {
    if n_oil_throats >= n_throats {
        return f64::NEG_INFINITY;
    }
    if theta_a >= FRAC_PI_2 {
        piston_imbibition_pc(s, theta_r, theta_a, pc_max, sigma)
    } else {
        cooperative_fill_pc(
            s.radius,
            theta_a,
            sigma,
            n_oil_throats,
            n_throats,
            weights,
            draws,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::unit_hash;
    use std::f64::consts::FRAC_PI_4;

    #[test]
    fn one_oil_throat_fills_like_a_piston() {
        // Blunt (1998): A_1 = 0, so I_1 (and I_0) fill at 2σ cos θa/R_p.
        let w = default_cooperative_weights(1e-5);
        for n in 0..=1 {
            let pc = cooperative_fill_pc(2e-5, 0.5, 0.03, n, 6, &w, &[0.9; 5]);
            assert!((pc - 2.0 * 0.03 * 0.5f64.cos() / 2e-5).abs() < 1e-9);
        }
    }

    #[test]
    fn more_oil_throats_make_filling_harder() {
        // Lenormand, Zarcone & Sarr (1983): I_n with larger n needs a lower
        // Pc; with non-negative weights the model is non-increasing in n.
        let w = [0.5e5, 1e5, 2e5, 5e5, 10e5];
        let draws: Vec<f64> = (0..5).map(|k| unit_hash(11, 3, k)).collect();
        let mut last = f64::INFINITY;
        for n in 0..8 {
            let pc = cooperative_fill_pc(2e-5, 0.3, 0.03, n, 8, &w, &draws);
            assert!(pc <= last);
            last = pc;
        }
    }

    #[test]
    fn mean_over_draws_is_half_the_weight_sum() {
        // x_i ~ U(0,1) has mean 1/2 (analytic), so E[Pc(I_n)] =
        // 2σ cos θ/R_p − (σ/2) Σ_{i=2..n} A_i; Monte Carlo with a seeded
        // counter-based generator, 5 standard errors.
        let (r, t, s) = (2e-5, 0.4, 0.03);
        let w = [1e5, 2e5, 3e5];
        let n = 4; // terms A_2, A_3, A_4
        let m = 20_000;
        let mut sum = 0.0;
        let mut sum2 = 0.0;
        for j in 0..m {
            let d: Vec<f64> = (0..3).map(|k| unit_hash(5, j, k)).collect();
            let pc = cooperative_fill_pc(r, t, s, n, 6, &w, &d);
            sum += pc;
            sum2 += pc * pc;
        }
        let mean = sum / m as f64;
        let sd = (sum2 / m as f64 - mean * mean).sqrt();
        let expect = 2.0 * s * t.cos() / r - 0.5 * s * (1e5 + 2e5 + 3e5);
        assert!((mean - expect).abs() < 5.0 * sd / (m as f64).sqrt());
    }

    #[test]
    fn oil_wet_pores_use_the_piston_threshold() {
        // θa ≥ π/2: no cooperative term (common practice).
        let corners = [FRAC_PI_4; 4];
        let s = Section::new(2e-5, 1.0 / 16.0, &corners);
        let w = [1e5; 5];
        let pc = pore_imbibition_pc(&s, 0.2, 2.0, 5000.0, 0.03, 3, 5, &w, &[0.3; 5]);
        assert_eq!(pc, piston_imbibition_pc(&s, 0.2, 2.0, 5000.0, 0.03));
        let c = cooperative_fill_pc(2e-5, 2.0, 0.03, 3, 5, &w, &[0.3; 5]);
        assert!((c - 2.0 * 0.03 * 2f64.cos() / 2e-5).abs() < 1e-9);
    }

    #[test]
    fn no_water_throat_means_no_event() {
        assert_eq!(
            cooperative_fill_pc(2e-5, 0.3, 0.03, 4, 4, &[1e5], &[0.5]),
            f64::NEG_INFINITY
        );
    }
}
