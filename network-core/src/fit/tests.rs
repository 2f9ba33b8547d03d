//! Tests of the model fits. Check values come from synthetic data generated
//! with the published model equations (parameters chosen here), so a fit
//! must return the parameters it was generated with; noisy tests compare
//! against the a-priori linearised standard error computed from the analytic
//! Jacobian at the true parameters (independent of the solver).

use super::*;
use crate::numeric::unit_hash;

/// Relative difference.
fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Standard normal deviate for `(seed, i)` by the Box–Muller transform
/// (Box & Muller 1958, Ann. Math. Stat. 29:610–611).
fn normal(seed: u64, i: u64) -> f64 {
    let u1 = 1.0 - unit_hash(seed, 1, i); // (0, 1]
    let u2 = unit_hash(seed, 2, i);
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

/// `n` water saturations evenly spaced on `[lo, hi]`.
fn grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
        .collect()
}

fn opts(phase: Phase, norm: Normalisation, kr_max: KrMax, objective: Objective) -> KrFitOptions {
    KrFitOptions {
        phase,
        normalisation: norm,
        kr_max,
        objective,
    }
}

// --- Corey (1954) and Brooks–Corey (1964) --------------------------------

#[test]
fn corey_1954_values_by_hand() {
    // Corey (1954), Producers Monthly 19:38–41: krw = Se⁴, krn = (1−Se)²(1−Se²).
    // At Se = 0.5 (hand computation): krw = 1/16, krn = 0.25 · 0.75 = 0.1875.
    let (w, n) = corey_1954(0.5);
    assert!((w - 0.0625).abs() < 1e-15);
    assert!((n - 0.1875).abs() < 1e-15);
    // End points: krw(0) = 0, krn(0) = 1; krw(1) = 1, krn(1) = 0 (analytic).
    assert_eq!(corey_1954(0.0), (0.0, 1.0));
    assert_eq!(corey_1954(1.0), (1.0, 0.0));
}

#[test]
fn brooks_corey_with_lambda_two_is_corey_1954() {
    // Brooks & Corey (1964), Hydrology Paper 3: with λ = 2 the exponents
    // (2 + 3λ)/λ = 4 and (2 + λ)/λ = 2 give Corey's (1954) equations
    // (analytic substitution).
    for i in 0..=20 {
        let se = i as f64 / 20.0;
        let (w, n) = corey_1954(se);
        assert!((brooks_corey_krw(se, 2.0) - w).abs() < 1e-14);
        assert!((brooks_corey_krn(se, 2.0) - n).abs() < 1e-14);
    }
}

#[test]
fn brooks_corey_kr_fit_recovers_lambda_two_from_corey_1954_curves() {
    // Source: Corey (1954) curves = Brooks & Corey (1964) at λ = 2 (above).
    let norm = Normalisation::new(0.2, 0.0).unwrap();
    let sw = grid(0.2, 1.0, 33);
    let (krw, krn): (Vec<f64>, Vec<f64>) = sw.iter().map(|&s| corey_1954(norm.swn(s))).unzip();
    for objective in [Objective::Linear, Objective::Log] {
        let fit = fit_brooks_corey_kr(&sw, Some(&krw), Some(&krn), norm, objective).unwrap();
        assert!(rel(fit.lambda, 2.0) < 1e-3, "{objective:?}: {fit:?}");
        assert!(fit.quality.rmse < 1e-8, "{fit:?}");
    }
}

#[test]
fn brooks_corey_kr_fit_recovers_lambda_from_one_phase() {
    // Synthetic Brooks & Corey (1964) curves with λ = 0.8.
    let lambda = 0.8;
    let norm = Normalisation::new(0.1, 0.0).unwrap();
    let sw = grid(0.05, 1.0, 40); // the first points lie below S_r: excluded
    let krw: Vec<f64> = sw
        .iter()
        .map(|&s| brooks_corey_krw(norm.swn(s), lambda))
        .collect();
    let krn: Vec<f64> = sw
        .iter()
        .map(|&s| brooks_corey_krn(norm.swn(s), lambda))
        .collect();
    let w = fit_brooks_corey_kr(&sw, Some(&krw), None, norm, Objective::Log).unwrap();
    assert!(rel(w.lambda, lambda) < 1e-3, "{w:?}");
    let n = fit_brooks_corey_kr(&sw, None, Some(&krn), norm, Objective::Linear).unwrap();
    assert!(rel(n.lambda, lambda) < 1e-3, "{n:?}");
    // Points with S_w < S_r = 0.1 lie outside the model (S_w = 0.05,
    // 0.0744 and 0.0987 on this grid of step 0.95/39: three points, by hand).
    assert_eq!(n.quality.n_excluded, 3);
}

#[test]
fn brooks_corey_pc_fit_recovers_entry_pressure_and_lambda() {
    // Synthetic Brooks & Corey (1964) Pc: Pe = 4 kPa, λ = 1.6, S_r = 0.12,
    // with a plateau point below the entry pressure and a zero Pc, which
    // lie outside the model.
    let (pe, lambda, swr) = (4000.0, 1.6, 0.12);
    let mut sw = grid(0.15, 1.0, 30);
    let mut pc: Vec<f64> = sw
        .iter()
        .map(|&s| brooks_corey_pc((s - swr) / (1.0 - swr), pe, lambda))
        .collect();
    sw.push(1.0);
    pc.push(0.0);
    let fixed = fit_brooks_corey_pc(&sw, &pc, ResidualSaturation::Fixed(swr)).unwrap();
    assert!(rel(fixed.pe_pa, pe) < 1e-9, "{fixed:?}");
    assert!(rel(fixed.lambda, lambda) < 1e-9, "{fixed:?}");
    assert_eq!(fixed.quality.n_excluded, 1);
    let fitted = fit_brooks_corey_pc(&sw, &pc, ResidualSaturation::Fit).unwrap();
    assert!(rel(fitted.swr, swr) < 1e-3, "{fitted:?}");
    assert!(rel(fitted.pe_pa, pe) < 1e-3, "{fitted:?}");
    assert!(rel(fitted.lambda, lambda) < 1e-3, "{fitted:?}");
    assert!(fitted.quality.rmse_ln.unwrap() < 1e-6);
}

// --- Modified Corey --------------------------------------------------------

#[test]
fn corey_fit_recovers_exponents_and_end_points() {
    // Modified Corey (common practice generalisation of Corey 1954):
    // krw = 0.35 Swn^2.5, kro = 0.85 (1 − Swn)^1.8, Swi = 0.2, Sor = 0.25.
    let norm = Normalisation::new(0.2, 0.25).unwrap();
    let sw = grid(0.1, 0.9, 41); // points outside [0.2, 0.75] are excluded
    let water = CoreyParams {
        kr_max: 0.35,
        exponent: 2.5,
    };
    let oil = CoreyParams {
        kr_max: 0.85,
        exponent: 1.8,
    };
    for (phase, truth) in [(Phase::Wetting, water), (Phase::NonWetting, oil)] {
        let kr: Vec<f64> = sw.iter().map(|&s| truth.kr(norm.swn(s), phase)).collect();
        for objective in [Objective::Linear, Objective::Log] {
            let fit = fit_corey(&sw, &kr, &opts(phase, norm, KrMax::Fit, objective)).unwrap();
            assert!(
                rel(fit.params.exponent, truth.exponent) < 1e-3,
                "{phase:?} {objective:?} {fit:?}"
            );
            assert!(rel(fit.params.kr_max, truth.kr_max) < 1e-3, "{fit:?}");
            let fixed = KrMax::Fixed(truth.kr_max);
            let fit = fit_corey(&sw, &kr, &opts(phase, norm, fixed, objective)).unwrap();
            assert!(rel(fit.params.exponent, truth.exponent) < 1e-3, "{fit:?}");
            assert_eq!(fit.params.kr_max, truth.kr_max);
        }
        // Grid spacing 0.02: Sw = 0.1…0.18 (5 points) and 0.76…0.9 (8) lie
        // outside [0.2, 0.75] (by hand).
        let fit = fit_corey(&sw, &kr, &opts(phase, norm, KrMax::Fit, Objective::Linear)).unwrap();
        assert_eq!(fit.quality.n_excluded, 13);
        assert_eq!(fit.quality.n_used, 28);
    }
}

#[test]
fn corey_fit_of_noisy_data_is_within_four_standard_errors() {
    // krw = 0.5 Swn³ plus seeded Gaussian noise of σ = 0.005. The tolerance
    // is four a-priori standard errors of the linearised least-squares
    // estimate, σ √[(JᵀJ)⁻¹]_jj, with the analytic Jacobian at the true
    // parameters (∂kr/∂n = k x^n ln x, ∂kr/∂k = x^n); a correct estimator
    // misses it with probability ≈ 6e-5 for any seed.
    let (k, n, sigma) = (0.5, 3.0, 0.005);
    let x = grid(0.0, 1.0, 41);
    let kr: Vec<f64> = x
        .iter()
        .enumerate()
        .map(|(i, &s)| k * s.powf(n) + sigma * normal(2024, i as u64))
        .collect();
    let fit = fit_corey(
        &x,
        &kr,
        &opts(
            Phase::Wetting,
            Normalisation::NONE,
            KrMax::Fit,
            Objective::Linear,
        ),
    )
    .unwrap();
    // a-priori covariance: (JᵀJ)⁻¹ of the 2×2 normal matrix in (n, k).
    let (mut a11, mut a12, mut a22) = (0.0, 0.0, 0.0);
    for &s in &x {
        let dn = if s > 0.0 { k * s.powf(n) * s.ln() } else { 0.0 };
        let dk = s.powf(n);
        a11 += dn * dn;
        a12 += dn * dk;
        a22 += dk * dk;
    }
    let det = a11 * a22 - a12 * a12;
    let se_n = sigma * (a22 / det).sqrt();
    let se_k = sigma * (a11 / det).sqrt();
    assert!(
        (fit.params.exponent - n).abs() < 4.0 * se_n,
        "{fit:?} se_n {se_n}"
    );
    assert!(
        (fit.params.kr_max - k).abs() < 4.0 * se_k,
        "{fit:?} se_k {se_k}"
    );
    // The reported standard errors estimate the same quantities from the
    // residuals: within a factor 2 for 39 degrees of freedom.
    let se = fit.std_error.unwrap();
    assert!(
        se.exponent / se_n > 0.5 && se.exponent / se_n < 2.0,
        "{se:?} {se_n}"
    );
    assert!(
        se.kr_max / se_k > 0.5 && se.kr_max / se_k < 2.0,
        "{se:?} {se_k}"
    );
    // And the RMS residual estimates σ (within 30 % for 41 points).
    assert!(rel(fit.quality.rmse, sigma) < 0.3, "{:?}", fit.quality);
}

// --- LET -------------------------------------------------------------------

#[test]
fn let_fit_recovers_parameters_of_both_phases() {
    // Lomeland, Ebeltoft & Thomas (2005), SCA2005-32: synthetic LET curves.
    let norm = Normalisation::new(0.15, 0.2).unwrap();
    let sw = grid(0.15, 0.8, 41);
    let water = LetParams {
        kr_max: 0.4,
        l: 2.5,
        e: 1.8,
        t: 1.2,
    };
    let oil = LetParams {
        kr_max: 0.9,
        l: 3.0,
        e: 0.6,
        t: 2.2,
    };
    for (phase, truth) in [(Phase::Wetting, water), (Phase::NonWetting, oil)] {
        let kr: Vec<f64> = sw.iter().map(|&s| truth.kr(norm.swn(s), phase)).collect();
        let fit = fit_let(&sw, &kr, &opts(phase, norm, KrMax::Fit, Objective::Linear)).unwrap();
        let p = fit.params;
        for (got, want) in [
            (p.kr_max, truth.kr_max),
            (p.l, truth.l),
            (p.e, truth.e),
            (p.t, truth.t),
        ] {
            assert!(rel(got, want) < 1e-3, "{phase:?}: {fit:?}");
        }
        assert!(fit.quality.rmse < 1e-9, "{fit:?}");
        let fixed = fit_let(
            &sw,
            &kr,
            &opts(phase, norm, KrMax::Fixed(truth.kr_max), Objective::Log),
        )
        .unwrap();
        assert!(rel(fixed.params.l, truth.l) < 1e-3, "{fixed:?}");
        assert!(rel(fixed.params.e, truth.e) < 1e-3, "{fixed:?}");
        assert!(rel(fixed.params.t, truth.t) < 1e-3, "{fixed:?}");
    }
}

#[test]
fn let_with_unit_shape_parameters_is_a_corey_curve() {
    // Lomeland et al. (2005) LET form with L = E = T = 1:
    // kr = kmax x/(x + (1 − x)) = kmax x (analytic).
    let p = LetParams {
        kr_max: 0.7,
        l: 1.0,
        e: 1.0,
        t: 1.0,
    };
    for i in 0..=10 {
        let x = i as f64 / 10.0;
        assert!((p.kr(x, Phase::Wetting) - 0.7 * x).abs() < 1e-15);
        assert!((p.kr(x, Phase::NonWetting) - 0.7 * (1.0 - x)).abs() < 1e-15);
    }
}

// --- Land ------------------------------------------------------------------

#[test]
fn land_fit_recovers_constant_by_every_method() {
    // Land (1968), SPE J 8(2):149–156: S_nr = S_ni/(1 + C S_ni), C = 1.7.
    let c = 1.7;
    let sni = grid(0.1, 0.85, 16);
    let snr: Vec<f64> = sni.iter().map(|&s| s / (1.0 + c * s)).collect();
    for method in [
        LandMethod::EndPoint,
        LandMethod::Unweighted,
        LandMethod::Weighted,
    ] {
        let fit = fit_land(&sni, &snr, method, LandNormalisation::PoreVolume).unwrap();
        assert!(rel(fit.c, c) < 1e-6, "{method:?}: {fit:?}");
        assert!(fit.rmse_snr < 1e-12 && fit.rmse_inverse < 1e-9, "{fit:?}");
    }
}

#[test]
fn land_fit_with_connate_water_normalisation() {
    // Land (1968) normalised saturations by 1 − S_wc. Generate normalised
    // data with C = 2.3, convert to pore-volume fractions with S_wc = 0.15,
    // and fit with the normalisation: C = 2.3 again. In pore-volume
    // fractions the same data follow C' = C/(1 − S_wc) (analytic: 1/S scales
    // by 1/(1 − S_wc)).
    let (c, swc) = (2.3, 0.15);
    let star = grid(0.2, 1.0, 9);
    let sni: Vec<f64> = star.iter().map(|s| s * (1.0 - swc)).collect();
    let snr: Vec<f64> = star
        .iter()
        .map(|&s| s / (1.0 + c * s) * (1.0 - swc))
        .collect();
    let norm = LandNormalisation::HydrocarbonPoreVolume { swc };
    let fit = fit_land(&sni, &snr, LandMethod::Unweighted, norm).unwrap();
    assert!(rel(fit.c, c) < 1e-6, "{fit:?}");
    let pv = fit_land(
        &sni,
        &snr,
        LandMethod::EndPoint,
        LandNormalisation::PoreVolume,
    )
    .unwrap();
    assert!(rel(pv.c, c / (1.0 - swc)) < 1e-6, "{pv:?}");
    // Land (1968): a fully saturated start traps 1/(1 + C).
    assert!((land_residual(1.0, c) - 1.0 / (1.0 + c)).abs() < 1e-15);
}

#[test]
fn land_weighted_fit_of_noisy_residuals_is_within_four_standard_errors() {
    // S_nr = S_ni/(1 + C S_ni) with C = 1.5 plus seeded Gaussian noise of
    // σ = 0.004 in S_nr. A-priori standard error of the weighted estimate
    // (delta method, w_i = S_nr,i⁴/σ²): se(C) = σ/√(Σ S_nr,i⁴).
    // Tolerance: four standard errors.
    let (c, sigma) = (1.5, 0.004);
    let sni = grid(0.3, 0.9, 31);
    let truth: Vec<f64> = sni.iter().map(|&s| s / (1.0 + c * s)).collect();
    let snr: Vec<f64> = truth
        .iter()
        .enumerate()
        .map(|(i, s)| s + sigma * normal(77, i as u64))
        .collect();
    let se = sigma / truth.iter().map(|s| s.powi(4)).sum::<f64>().sqrt();
    let fit = fit_land(
        &sni,
        &snr,
        LandMethod::Weighted,
        LandNormalisation::PoreVolume,
    )
    .unwrap();
    assert!((fit.c - c).abs() < 4.0 * se, "{fit:?} se {se}");
    // The residual RMS in S_nr estimates σ (within 35 % for 31 points).
    assert!(rel(fit.rmse_snr, sigma) < 0.35, "{fit:?}");
}

// --- Land by least squares in S_nr -------------------------------------------

/// Land (1968), SPE J 8(2):149–156: `S_nr = S_ni/(1 + C S_ni)` at `levels`
/// initial saturations evenly spaced on `[lo, hi]`, `reps` replicates each
/// with seeded Gaussian noise of `sigma` in `S_nr`. Returns
/// `(sni, snr, level labels, truth)`.
fn land_data(
    c: f64,
    (lo, hi): (f64, f64),
    levels: usize,
    reps: usize,
    sigma: f64,
    seed: u64,
) -> (Vec<f64>, Vec<f64>, Vec<usize>, Vec<f64>) {
    let (mut sni, mut snr, mut lab, mut truth) = (vec![], vec![], vec![], vec![]);
    for (l, s) in grid(lo, hi, levels).into_iter().enumerate() {
        for r in 0..reps {
            let t = s / (1.0 + c * s);
            sni.push(s);
            truth.push(t);
            snr.push(t + sigma * normal(seed, (l * reps + r) as u64));
            lab.push(l);
        }
    }
    (sni, snr, lab, truth)
}

/// A-priori linearised standard error of C for noise `sigma` in `S_nr`:
/// `σ/√(Σ J_i²)`, `J_i = −S_ni²/(1 + C S_ni)²` (analytic derivative of
/// Land's form at the true C; independent of the solver).
fn land_se_apriori(c: f64, sni: &[f64], sigma: f64) -> f64 {
    let jj: f64 = sni
        .iter()
        .map(|s| (s * s / (1.0 + c * s).powi(2)).powi(2))
        .sum();
    sigma / jj.sqrt()
}

/// Independent least squares for the tests: golden-section search
/// (Kiefer 1953, Proc. AMS 4:502–506) of `Σ (S_nr − S_ni/(1 + C S_ni))²`
/// over `C ∈ [0, 20]` to a bracket of 1e-13.
fn land_golden(sni: &[f64], snr: &[f64]) -> f64 {
    let f = |c: f64| -> f64 {
        sni.iter()
            .zip(snr)
            .map(|(a, b)| (b - a / (1.0 + c * a)).powi(2))
            .sum()
    };
    let r = (5f64.sqrt() - 1.0) / 2.0;
    let (mut a, mut b) = (0.0, 20.0);
    while b - a > 1e-13 {
        let (x1, x2) = (b - r * (b - a), a + r * (b - a));
        if f(x1) < f(x2) {
            b = x2;
        } else {
            a = x1;
        }
    }
    0.5 * (a + b)
}

#[test]
fn land_least_squares_is_exact_on_noise_free_data() {
    // Land (1968): data generated with C = 1.3 are fitted exactly.
    let (sni, snr, lab, _) = land_data(1.3, (0.1, 0.9), 9, 1, 0.0, 1);
    let o = LandLsqOptions {
        levels: Some(&lab),
        ..LandLsqOptions::default()
    };
    let fit = fit_land_least_squares(&sni, &snr, &o).unwrap();
    assert!(rel(fit.c, 1.3) < 1e-12, "{fit:?}");
    assert!(fit.rmse_snr < 1e-15 && fit.c_se < 1e-12, "{fit:?}");
    assert_eq!((fit.n_points, fit.n_outside_range, fit.levels), (9, 0, 9));
    assert_eq!(fit.sni_range, (0.1, 0.9));
    assert!(
        fit.shape_issues.is_empty() && fit.warning().is_none(),
        "{fit:?}"
    );
    // Small and large C, and a point with no trapping at all in a set that
    // traps: still exact where the data are exact.
    for c in [0.05, 8.0] {
        let (sni, snr, _, _) = land_data(c, (0.05, 1.0), 12, 1, 0.0, 1);
        let fit = fit_land_least_squares(&sni, &snr, &LandLsqOptions::default()).unwrap();
        assert!(rel(fit.c, c) < 1e-12, "{c}: {fit:?}");
    }
}

#[test]
fn land_least_squares_of_noisy_data_is_within_two_standard_errors() {
    // Land (1968) with C = 0.9, five initial saturations × four
    // realisations, seeded noise σ = 0.004 in S_nr. Check values: the
    // a-priori standard error (analytic Jacobian at the true C) and an
    // independent golden-section least squares written here.
    let (c, sigma) = (0.9, 0.004);
    let (sni, snr, lab, _) = land_data(c, (0.2, 0.85), 5, 4, sigma, 31);
    let o = LandLsqOptions {
        levels: Some(&lab),
        ..LandLsqOptions::default()
    };
    let fit = fit_land_least_squares(&sni, &snr, &o).unwrap();
    let se = land_se_apriori(c, &sni, sigma);
    assert!((fit.c - c).abs() < 2.0 * se, "{fit:?} a-priori se {se}");
    assert!((fit.c - c).abs() < 2.0 * fit.c_se, "{fit:?}");
    // The reported se estimates the a-priori one (s estimates σ; within
    // 40 % for 20 points).
    assert!(rel(fit.c_se, se) < 0.4, "{fit:?} a-priori se {se}");
    // Same minimum as an independent solver.
    let g = land_golden(&sni, &snr);
    assert!((fit.c - g).abs() < 1e-9, "{} vs golden {g}", fit.c);
    // Land-shaped data with realistic scatter raise no warning; the pure
    // error estimates σ.
    assert!(fit.shape_issues.is_empty(), "{:?}", fit.warning());
    assert!(rel(fit.pure_error_sd.unwrap(), sigma) < 0.4, "{fit:?}");
    assert_eq!(fit.levels, 5);
    assert_eq!(fit.residuals.len(), 20);
}

#[test]
fn land_least_squares_standard_error_shrinks_with_more_points() {
    // Analytic: se = s/√(Σ J²) falls as 1/√n for replicated designs;
    // sixteen times the realisations quarter it (within the scatter of s).
    let (c, sigma) = (1.4, 0.005);
    let se = |reps: usize| {
        let (sni, snr, lab, _) = land_data(c, (0.2, 0.8), 4, reps, sigma, 5);
        let o = LandLsqOptions {
            levels: Some(&lab),
            ..LandLsqOptions::default()
        };
        fit_land_least_squares(&sni, &snr, &o).unwrap().c_se
    };
    let (few, many) = (se(4), se(64));
    assert!(many < 0.4 * few && many > 0.15 * few, "{few} → {many}");
}

#[test]
fn land_least_squares_range_filters_points_and_warns_outside_land_shape() {
    // Land-shaped (C = 1.2) up to S_ni = 0.6, then S_nr falling, as a
    // network can give at high S_ni. Over every point the fit warns that
    // S_nr falls at the high end; restricted to [0.1, 0.6] it is exact and
    // quiet (analytic derivation: the restricted data are Land's form).
    let c = 1.2;
    let sni = grid(0.1, 0.9, 9);
    let snr: Vec<f64> = sni
        .iter()
        .map(|&s| {
            let top = 0.6 / (1.0 + c * 0.6);
            if s <= 0.6 + 1e-12 {
                s / (1.0 + c * s)
            } else {
                top - 0.3 * (s - 0.6)
            }
        })
        .collect();
    let all = fit_land_least_squares(&sni, &snr, &LandLsqOptions::default()).unwrap();
    assert!(
        all.shape_issues
            .iter()
            .any(|i| matches!(i, LandShapeIssue::FallsAtHighEnd { .. })),
        "{all:?}"
    );
    assert!(all.warning().unwrap().contains("not Land-shaped"));
    let o = LandLsqOptions {
        sni_range: Some((0.1, 0.6 + 1e-9)),
        ..LandLsqOptions::default()
    };
    let cut = fit_land_least_squares(&sni, &snr, &o).unwrap();
    assert_eq!((cut.n_points, cut.n_outside_range), (6, 3));
    assert!((cut.sni_range.1 - 0.6).abs() < 1e-12);
    assert!(rel(cut.c, c) < 1e-12, "{cut:?}");
    assert!(cut.warning().is_none(), "{cut:?}");
}

#[test]
fn land_least_squares_flags_data_the_curve_misses() {
    // Analytic derivation: S_nr = 0.6 S_ni is a straight line, which
    // Land's form (concave, slope 1 at the origin) cannot follow over
    // 0.2–0.8; with replicate scatter of 0.002 the misfit is many times
    // the scatter.
    let sni_levels = grid(0.2, 0.8, 4);
    let (mut sni, mut snr, mut lab) = (vec![], vec![], vec![]);
    for (l, &s) in sni_levels.iter().enumerate() {
        for r in 0..4 {
            sni.push(s);
            snr.push(0.6 * s + 0.002 * normal(9, (4 * l + r) as u64));
            lab.push(l);
        }
    }
    let o = LandLsqOptions {
        levels: Some(&lab),
        ..LandLsqOptions::default()
    };
    let fit = fit_land_least_squares(&sni, &snr, &o).unwrap();
    assert!(
        fit.shape_issues
            .iter()
            .any(|i| matches!(i, LandShapeIssue::ResidualsExceedScatter { .. })),
        "{fit:?}"
    );
    // The same straight line at eight levels without replicates: the mean
    // residuals change sign once (negative at low S_ni, positive at high).
    let sni = grid(0.1, 0.9, 8);
    let snr: Vec<f64> = sni.iter().map(|s| 0.6 * s).collect();
    let fit = fit_land_least_squares(&sni, &snr, &LandLsqOptions::default()).unwrap();
    assert!(
        fit.shape_issues
            .iter()
            .any(|i| matches!(i, LandShapeIssue::ResidualTrend { runs: 2, .. })),
        "{fit:?}"
    );
    // One initial saturation only: said so.
    let fit = fit_land_least_squares(
        &[0.5, 0.5, 0.5],
        &[0.31, 0.3, 0.32],
        &LandLsqOptions::default(),
    )
    .unwrap();
    assert_eq!(fit.shape_issues.len(), 1);
    assert!(matches!(
        fit.shape_issues[0],
        LandShapeIssue::SingleLevel { .. }
    ));
}

#[test]
fn land_least_squares_refuses_bad_input() {
    let d = LandLsqOptions::default();
    assert!(matches!(
        fit_land_least_squares(&[0.5, 0.3], &[0.2, 0.4], &d),
        Err(FitError::OutOfRange {
            what: "snr (normalised)",
            index: 1,
            ..
        })
    ));
    assert!(matches!(
        fit_land_least_squares(&[0.5], &[0.2], &d),
        Err(FitError::TooFewPoints { n_used: 1, .. })
    ));
    assert!(matches!(
        fit_land_least_squares(&[0.5, 0.6], &[0.0, 0.0], &d),
        Err(FitError::Degenerate { .. })
    ));
    let o = LandLsqOptions {
        sni_range: Some((0.6, 0.4)),
        ..d
    };
    assert!(matches!(
        fit_land_least_squares(&[0.5, 0.6], &[0.3, 0.3], &o),
        Err(FitError::InvalidParameter {
            name: "sni_range",
            ..
        })
    ));
    let o = LandLsqOptions {
        sni_range: Some((0.7, 0.9)),
        ..d
    };
    assert!(matches!(
        fit_land_least_squares(&[0.5, 0.6], &[0.3, 0.3], &o),
        Err(FitError::TooFewPoints { n_used: 0, .. })
    ));
    let o = LandLsqOptions {
        levels: Some(&[0]),
        ..d
    };
    assert!(matches!(
        fit_land_least_squares(&[0.5, 0.6], &[0.3, 0.3], &o),
        Err(FitError::LengthMismatch { .. })
    ));
}

// --- Archie ----------------------------------------------------------------

#[test]
fn archie_exponents_are_exact_on_synthetic_data() {
    // Archie (1942), Trans AIME 146:54–62: F = a φ^−m, RI = Sw^−n. Synthetic
    // data: the log–log least squares is exact up to round-off.
    let phi = [0.08, 0.12, 0.18, 0.22, 0.3];
    let f: Vec<f64> = phi.iter().map(|p: &f64| p.powf(-2.15)).collect();
    let fit = fit_archie_m(&phi, &f, Prefactor::Fixed(1.0)).unwrap();
    assert!(rel(fit.exponent, 2.15) < 1e-13, "{fit:?}");
    // a ≠ 1 (Winsauer et al. 1952 form): a = 0.81, m = 1.9.
    let f: Vec<f64> = phi.iter().map(|p| 0.81 * p.powf(-1.9)).collect();
    let fit = fit_archie_m(&phi, &f, Prefactor::Free).unwrap();
    assert!(rel(fit.exponent, 1.9) < 1e-13, "{fit:?}");
    assert!(rel(fit.prefactor, 0.81) < 1e-13, "{fit:?}");
    assert!(fit.rmse_ln < 1e-13);

    let sw = [1.0, 0.8, 0.6, 0.45, 0.3, 0.2];
    let ri: Vec<f64> = sw.iter().map(|s: &f64| s.powf(-2.3)).collect();
    let fit = fit_archie_n(&sw, &ri, Prefactor::Fixed(1.0)).unwrap();
    assert!(rel(fit.exponent, 2.3) < 1e-13, "{fit:?}");
    let ri: Vec<f64> = sw.iter().map(|s| 1.1 * s.powf(-2.1)).collect();
    let fit = fit_archie_n(&sw, &ri, Prefactor::Free).unwrap();
    assert!(rel(fit.exponent, 2.1) < 1e-13, "{fit:?}");
    assert!(rel(fit.prefactor, 1.1) < 1e-13, "{fit:?}");
    // Forcing the line through RI = 1 on data with b = 1.1 gives a
    // different n and a non-zero residual.
    let forced = fit_archie_n(&sw, &ri, Prefactor::Fixed(1.0)).unwrap();
    assert!(forced.rmse_ln > 1e-3 && (forced.exponent - 2.1).abs() > 1e-3);
}

// --- Bad input -------------------------------------------------------------

#[test]
fn bad_input_gives_typed_errors() {
    let o = opts(
        Phase::Wetting,
        Normalisation::NONE,
        KrMax::Fit,
        Objective::Linear,
    );
    assert_eq!(
        fit_corey(&[], &[], &o).unwrap_err(),
        FitError::Empty { what: "sw" }
    );
    assert!(matches!(
        fit_corey(&[0.1, 0.2], &[0.1], &o),
        Err(FitError::LengthMismatch {
            x_len: 2,
            y_len: 1,
            ..
        })
    ));
    assert!(matches!(
        fit_let(&[0.1, f64::NAN, 0.5, 0.7], &[0.0, 0.1, 0.2, 0.3], &o),
        Err(FitError::NotFinite {
            what: "sw",
            index: 1,
            ..
        })
    ));
    assert!(matches!(
        fit_corey(&[0.5], &[0.1], &o),
        Err(FitError::TooFewPoints {
            n_used: 1,
            n_required: 2,
            ..
        })
    ));
    assert!(matches!(
        fit_corey(&[0.5, 1.5], &[0.1, 0.2], &o),
        Err(FitError::OutOfRange {
            what: "sw",
            index: 1,
            ..
        })
    ));
    assert!(matches!(
        Normalisation::new(0.6, 0.5),
        Err(FitError::InvalidParameter { name: "sor", .. })
    ));
    assert!(matches!(
        fit_land(
            &[0.5, 0.3],
            &[0.2, 0.4],
            LandMethod::Unweighted,
            LandNormalisation::PoreVolume
        ),
        Err(FitError::OutOfRange {
            what: "snr (normalised)",
            index: 1,
            ..
        })
    ));
    assert!(matches!(
        fit_land(
            &[0.5],
            &[0.0],
            LandMethod::EndPoint,
            LandNormalisation::PoreVolume
        ),
        Err(FitError::OutOfRange { .. })
    ));
    assert!(matches!(
        fit_archie_n(&[1.0, 1.0], &[1.0, 1.2], Prefactor::Fixed(1.0)),
        Err(FitError::Degenerate { .. })
    ));
    assert!(matches!(
        fit_archie_m(&[0.2, 0.2], &[20.0, 25.0], Prefactor::Free),
        Err(FitError::Degenerate { .. })
    ));
    assert!(matches!(
        fit_archie_m(&[0.2, 0.0], &[20.0, 25.0], Prefactor::Free),
        Err(FitError::OutOfRange {
            what: "phi",
            index: 1,
            ..
        })
    ));
    // Pc rising with Sw has no positive λ.
    assert!(matches!(
        fit_brooks_corey_pc(
            &[0.3, 0.6, 0.9],
            &[100.0, 200.0, 300.0],
            ResidualSaturation::Fit
        ),
        Err(FitError::Degenerate { .. })
    ));
    assert!(matches!(
        fit_brooks_corey_pc(&[0.3, 0.6], &[0.0, -1.0], ResidualSaturation::Fixed(0.1)),
        Err(FitError::Degenerate { .. })
    ));
    assert!(matches!(
        fit_brooks_corey_kr(&[0.3], None, None, Normalisation::NONE, Objective::Log),
        Err(FitError::Empty { .. })
    ));
    // Log objective with no positive kr leaves nothing to fit.
    let log = KrFitOptions {
        objective: Objective::Log,
        ..o
    };
    assert!(matches!(
        fit_corey(&[0.2, 0.5, 0.8], &[0.0, 0.0, 0.0], &log),
        Err(FitError::TooFewPoints { n_used: 0, .. })
    ));
}

mod no_panic {
    use super::*;
    use proptest::prelude::*;

    fn any_value() -> impl Strategy<Value = f64> {
        prop_oneof![
            4 => -0.2f64..1.2,
            1 => Just(0.0),
            1 => Just(1.0),
            1 => Just(f64::NAN),
            1 => Just(f64::INFINITY),
            1 => -1e6f64..1e6,
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

        #[test]
        fn fits_return_results_or_errors_on_arbitrary_input(
            x in prop::collection::vec(any_value(), 0..10),
            y in prop::collection::vec(any_value(), 0..10),
            fixed in any::<bool>(),
            log in any::<bool>(),
        ) {
            let o = KrFitOptions {
                phase: if fixed { Phase::Wetting } else { Phase::NonWetting },
                normalisation: Normalisation::new(0.1, 0.1).unwrap(),
                kr_max: if fixed { KrMax::Fixed(0.5) } else { KrMax::Fit },
                objective: if log { Objective::Log } else { Objective::Linear },
            };
            let _ = fit_corey(&x, &y, &o);
            let _ = fit_let(&x, &y, &o);
            let _ = fit_brooks_corey_kr(&x, Some(&y), Some(&y), o.normalisation, o.objective);
            let _ = fit_brooks_corey_pc(&x, &y, ResidualSaturation::Fit);
            let _ = fit_land(&x, &y, LandMethod::Weighted, LandNormalisation::PoreVolume);
            let _ = fit_land_least_squares(&x, &y, &LandLsqOptions::default());
            let _ = fit_archie_m(&x, &y, Prefactor::Free);
            let _ = fit_archie_n(&x, &y, Prefactor::Fixed(1.0));
        }
    }
}

#[test]
fn let_fit_of_noisy_data_is_within_four_standard_errors() {
    // LET (Lomeland et al. 2005) with E = T = 1 (their logarithms at 0, a
    // hard case for step tests) plus seeded noise σ = 0.003 on 61 points.
    // Tolerance: four a-priori standard errors σ √[(JᵀJ)⁻¹]_jj, with J the
    // Jacobian of the model in (L, E, T, kr_max) at the true parameters
    // (central differences of the closed form, step 1e-6).
    let truth = LetParams {
        kr_max: 0.5,
        l: 2.0,
        e: 1.0,
        t: 1.0,
    };
    let sigma = 0.003;
    let x = grid(0.0, 1.0, 61);
    let kr: Vec<f64> = x
        .iter()
        .enumerate()
        .map(|(i, &s)| truth.kr(s, Phase::Wetting) + sigma * normal(31, i as u64))
        .collect();
    let fit = fit_let(
        &x,
        &kr,
        &opts(
            Phase::Wetting,
            Normalisation::NONE,
            KrMax::Fit,
            Objective::Linear,
        ),
    )
    .unwrap();
    assert!(!fit.at_bound, "{fit:?}");
    let with = |j: usize, v: f64| {
        let mut p = truth;
        match j {
            0 => p.l = v,
            1 => p.e = v,
            2 => p.t = v,
            _ => p.kr_max = v,
        }
        p
    };
    let base = [truth.l, truth.e, truth.t, truth.kr_max];
    let mut jtj = [0.0; 16];
    for &s in &x {
        let g: Vec<f64> = (0..4)
            .map(|j| {
                let h = 1e-6;
                (with(j, base[j] + h).kr(s, Phase::Wetting)
                    - with(j, base[j] - h).kr(s, Phase::Wetting))
                    / (2.0 * h)
            })
            .collect();
        for r in 0..4 {
            for c in 0..4 {
                jtj[r * 4 + c] += g[r] * g[c];
            }
        }
    }
    let got = [fit.params.l, fit.params.e, fit.params.t, fit.params.kr_max];
    for j in 0..4 {
        let mut e = [0.0; 4];
        e[j] = 1.0;
        let col = super::lm::solve(&jtj, &e, 4).unwrap();
        let se = sigma * col[j].sqrt();
        assert!(
            (got[j] - base[j]).abs() < 4.0 * se,
            "param {j}: {fit:?}, se {se}"
        );
    }
    assert!(rel(fit.quality.rmse, sigma) < 0.3, "{fit:?}");
}

#[test]
fn let_fit_flags_parameters_at_their_bounds() {
    // Constant data kr = 0.3 for Swn ∈ [0.05, 1]: the LET form reaches a
    // constant only as E → 0 (analytic: kr → kr_max), so E ends at its
    // lower bound and the fit says so.
    let x = grid(0.05, 1.0, 20);
    let kr = vec![0.3; x.len()];
    let fit = fit_let(
        &x,
        &kr,
        &opts(
            Phase::Wetting,
            Normalisation::NONE,
            KrMax::Fit,
            Objective::Linear,
        ),
    )
    .unwrap();
    assert!(fit.at_bound, "{fit:?}");
    assert!(rel(fit.params.kr_max, 0.3) < 1e-3, "{fit:?}");
}
