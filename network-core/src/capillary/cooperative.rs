//! Cooperative pore-body filling (`I_n` events) in imbibition.
//!
//! One base for every `n`: the pore's own piston-like threshold `P_c(I_1)`
//! (the corner-aware value of [`super::piston_imbibition_pc`]), lowered by
//! a cooperative term for each further oil-filled throat. See
//! `docs/physics.md` §5.4.

use std::f64::consts::FRAC_PI_2;

use super::piston::piston_imbibition_pc;
use super::section::Section;

/// Threshold capillary pressure (Pa) for imbibition into an oil-filled
/// pore body with `n_oil_throats` of its `n_throats` connections still
/// holding oil (an `I_n` event; Lenormand, Zarcone & Sarr 1983, J. Fluid
/// Mech. 135:337–353), in the additive parametric form of Blunt (1998,
/// J. Pet. Sci. Eng. 20:117–125) with the pore's piston-like threshold as
/// the base:
///
/// $$P_c(I_n) = P_c(I_1) - \sigma\sum_{i=2}^{n} A_i x_i,$$
///
/// - `piston_pc` is `P_c(I_1)`, the piston-like threshold of the pore's
///   section with its current corner menisci;
/// - `weights[k]` is `A_{k+2}` in 1/m; for `i` beyond the slice the last
///   weight repeats (an empty slice: no cooperative term);
/// - `draws[k]` is `x_{k+2}`, in `(0, 1]`, drawn by the caller from a seeded
///   generator; missing draws count as 1/2, their mean;
/// - `n ≤ 1` gives `P_c(I_1)`; with positive weights and draws the threshold
///   falls strictly with `n` (filling with more oil-filled throats is
///   harder);
/// - `θa ≥ π/2`: no cooperative term, every `n` fills at `piston_pc`
///   (common practice);
/// - `n_oil_throats ≥ n_throats` (no water-filled connection, so no
///   invading meniscus): `f64::NEG_INFINITY`, the event cannot occur
///   (snap-off still can).
///
/// Blunt's (1998) original base is `2σ cos θa / R_p`, which exceeds the
/// corner-aware `P_c(I_1)` of an angular pore; using `P_c(I_1)` keeps `I_1`
/// equal to piston-like filling and the sequence monotone (our choice). The
/// `A_i` are model parameters, not derived quantities.
pub fn cooperative_fill_pc(
    piston_pc: f64,
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
    if theta_a >= FRAC_PI_2 || weights.is_empty() {
        return piston_pc;
    }
    let mut sum = 0.0;
    for i in 2..=n_oil_throats {
        let k = i - 2;
        let a = weights[k.min(weights.len() - 1)];
        let x = draws.get(k).copied().unwrap_or(0.5);
        sum += a * x;
    }
    piston_pc - sigma * sum
}

/// Threshold capillary pressure (Pa) for filling an oil-filled pore body of
/// section `s` by a throat meniscus: [`cooperative_fill_pc`] on the base of
/// the section's piston-like threshold ([`piston_imbibition_pc`]).
/// `f64::NEG_INFINITY` when no adjacent throat holds water.
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
    let base = piston_imbibition_pc(s, theta_r, theta_a, pc_max, sigma);
    cooperative_fill_pc(
        base,
        theta_a,
        sigma,
        n_oil_throats,
        n_throats,
        weights,
        draws,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::unit_hash;
    use std::f64::consts::FRAC_PI_4;

    const SQUARE: [f64; 4] = [FRAC_PI_4; 4];

    fn square() -> Section<'static> {
        Section::new(2e-5, 1.0 / 16.0, &SQUARE)
    }

    #[test]
    fn one_oil_throat_fills_like_a_piston() {
        // Lenormand, Zarcone & Sarr (1983): I_1 is piston-like filling, so
        // the threshold equals the section's piston-like value (§5.2 of the
        // project's physics notes), independent of the weights.
        let s = square();
        let piston = piston_imbibition_pc(&s, 0.1, 0.5, 8000.0, 0.03);
        for n in 0..=1 {
            let pc = pore_imbibition_pc(&s, 0.1, 0.5, 8000.0, 0.03, n, 6, &[1e5; 5], &[0.9; 5]);
            assert_eq!(pc, piston);
        }
    }

    #[test]
    fn thresholds_fall_strictly_with_the_number_of_oil_filled_throats() {
        // Lenormand, Zarcone & Sarr (1983): I_n with larger n needs a lower
        // Pc. With positive weights and draws in (0, 1] every added term is
        // positive (analytic), so the sequence falls strictly.
        let s = square();
        let w = [0.5e5, 1e5, 2e5, 5e5, 10e5];
        let draws: Vec<f64> = (0..7).map(|k| 1.0 - unit_hash(11, 3, k)).collect();
        let mut last = pore_imbibition_pc(&s, 0.1, 0.4, 8000.0, 0.03, 1, 8, &w, &draws);
        for n in 2..8 {
            let pc = pore_imbibition_pc(&s, 0.1, 0.4, 8000.0, 0.03, n, 8, &w, &draws);
            assert!(pc < last, "I_{n} = {pc} not below {last}");
            last = pc;
        }
    }

    #[test]
    fn cooperative_term_is_the_weighted_sum_of_draws() {
        // Direct evaluation of Blunt's (1998) additive form: with weights
        // (1, 2, 3)·1e5 1/m and draws (0.2, 0.5, 1.0), I_4 lies
        // σ·(0.2 + 1.0 + 3.0)·1e5 = 0.03·4.2e5 = 12 600 Pa below I_1.
        let base = 1234.0;
        let pc = cooperative_fill_pc(base, 0.3, 0.03, 4, 6, &[1e5, 2e5, 3e5], &[0.2, 0.5, 1.0]);
        assert!((pc - (base - 12_600.0)).abs() < 1e-9);
    }

    #[test]
    fn mean_over_draws_is_half_the_weight_sum() {
        // x_i ~ U(0,1] has mean 1/2 (analytic), so E[Pc(I_n)] =
        // Pc(I_1) − (σ/2) Σ_{i=2..n} A_i; Monte Carlo with a seeded
        // counter-based generator, 5 standard errors.
        let (base, t, s) = (2500.0, 0.4, 0.03);
        let w = [1e5, 2e5, 3e5];
        let n = 4; // terms A_2, A_3, A_4
        let m = 20_000;
        let mut sum = 0.0;
        let mut sum2 = 0.0;
        for j in 0..m {
            let d: Vec<f64> = (0..3).map(|k| 1.0 - unit_hash(5, j, k)).collect();
            let pc = cooperative_fill_pc(base, t, s, n, 6, &w, &d);
            sum += pc;
            sum2 += pc * pc;
        }
        let mean = sum / m as f64;
        let sd = (sum2 / m as f64 - mean * mean).sqrt();
        let expect = base - 0.5 * s * (1e5 + 2e5 + 3e5);
        assert!((mean - expect).abs() < 5.0 * sd / (m as f64).sqrt());
    }

    #[test]
    fn oil_wet_pores_use_the_piston_threshold() {
        // θa ≥ π/2: no cooperative term (common practice).
        let s = square();
        let w = [1e5; 5];
        let pc = pore_imbibition_pc(&s, 0.2, 2.0, 5000.0, 0.03, 3, 5, &w, &[0.3; 5]);
        assert_eq!(pc, piston_imbibition_pc(&s, 0.2, 2.0, 5000.0, 0.03));
    }

    #[test]
    fn no_water_throat_means_no_event() {
        assert_eq!(
            cooperative_fill_pc(1000.0, 0.3, 0.03, 4, 4, &[1e5], &[0.5]),
            f64::NEG_INFINITY
        );
    }
}
