//! Relative permeability and resistivity index against analytic cases.

use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::run_study;
use network_core::study::Study;

use crate::networks::bundle;

const SIGMA: f64 = 0.03;

fn drainage_study(extra: &str, stop: &str, kr_points: usize) -> Study {
    Study::parse(&format!(
        r#"
network = "unused"
[fluids]
interfacial_tension_n_per_m = {SIGMA}
{extra}
[[process]]
kind = "drainage"
{stop}
pc_steps = 60
kr_points = {kr_points}
"#
    ))
    .expect("study")
}

#[test]
fn bundle_of_tubes_matches_the_capillary_bundle_model() {
    // Purcell (1949) / Burdine (1953) capillary bundle, derived here: tubes
    // of radius r_i, equal length, drain largest first (tube i is filled
    // once Pc ≥ 2σ/r_i, Young–Laplace, θ = 0). Poiseuille: a tube conducts
    // ∝ r⁴; its volume ∝ r². So with W the set of water-filled tubes
    //   S_w = Σ_W r² / Σ r²,  k_rw = Σ_W r⁴ / Σ r⁴,  k_rn = 1 − k_rw,
    // and the brine conducts ∝ r², so RI = Σ r² / Σ_W r² = 1/S_w.
    let radii: Vec<f64> = (0..40)
        .map(|i| 2e-6 + 18e-6 * ((i * 7919) % 40) as f64 / 39.0)
        .collect();
    let net = bundle(&radii, 5e-4);
    let study = drainage_study(
        "[boundary]\noutlet = \"semi-permeable\"",
        "until_pc_pa = 4.0e4",
        25,
    );
    let r = run_study(&net, &study, &Silent);
    let pts: Vec<_> = r.outcomes[0]
        .points
        .iter()
        .filter(|p| p.flow.is_some())
        .collect();
    assert!(pts.len() >= 10, "only {} flow points", pts.len());
    let s2: f64 = radii.iter().map(|r| r * r).sum();
    let s4: f64 = radii.iter().map(|r| r.powi(4)).sum();
    for p in pts {
        let f = p.flow.unwrap();
        let water: Vec<f64> = radii
            .iter()
            .copied()
            .filter(|&r| 2.0 * SIGMA / r > p.pc_pa)
            .collect();
        let sw = water.iter().map(|r| r * r).sum::<f64>() / s2;
        let krw = water.iter().map(|r| r.powi(4)).sum::<f64>() / s4;
        assert!(
            (p.saturation.sw - sw).abs() < 1e-12,
            "Sw {} vs {sw}",
            p.saturation.sw
        );
        assert!(
            (f.krw - krw).abs() < 1e-7,
            "krw {} vs {krw} at Sw {sw}",
            f.krw
        );
        assert!(
            (f.krn - (1.0 - krw)).abs() < 1e-7,
            "krn {} vs {}",
            f.krn,
            1.0 - krw
        );
        if sw > 0.0 {
            assert!(
                (f.ri - 1.0 / sw).abs() < 1e-6 / sw,
                "RI {} vs {}",
                f.ri,
                1.0 / sw
            );
        }
    }
}

#[test]
fn single_phase_limits_give_unit_relative_permeability() {
    // Common practice (definition): at S_w = 1 water flows as in the
    // single-phase solve, k_rw = 1, k_rn = 0, RI = 1. A bundle of circular
    // tubes drained past its narrowest tube holds no water (circles have
    // no corners), so the non-aqueous phase flows alone: k_rn = 1, k_rw = 0.
    let radii: Vec<f64> = (0..12).map(|i| 3e-6 + 1e-6 * i as f64).collect();
    let net = bundle(&radii, 5e-4);
    let study = drainage_study(
        "[boundary]\noutlet = \"semi-permeable\"",
        "until_pc_pa = 1.0e5",
        5,
    );
    let r = run_study(&net, &study, &Silent);
    let o = &r.outcomes[0];
    let first = o.points[0].flow.unwrap();
    assert!(
        (first.krw - 1.0).abs() < 1e-9 && first.krn == 0.0 && (first.ri - 1.0).abs() < 1e-9,
        "{first:?}"
    );
    let last = o.points.last().unwrap();
    assert_eq!(last.saturation.sw, 0.0, "water left {}", last.saturation.sw);
    let f = last.flow.unwrap();
    assert!((f.krn - 1.0).abs() < 1e-9 && f.krw == 0.0, "{f:?}");
}

fn water_wet_run(n: usize) -> (Network, network_core::run::RunResults) {
    let spec = LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        seed: 8,
        ..LatticeSpec::default()
    };
    let net = generate(&spec, &Silent).unwrap();
    let study = Study::parse(
        r#"
network = "unused"
seed = 2
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[mechanisms]
cooperative_weights = [2.0, 5.0, 10.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
kr_points = 15
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
kr_points = 15
"#,
    )
    .unwrap();
    let r = run_study(&net, &study, &Silent);
    (net, r)
}

#[test]
fn relative_permeabilities_sum_to_at_most_one_and_vanish_when_oil_is_trapped() {
    // Common practice (quasi-static, no viscous coupling): each phase flows
    // in its own part of the pore space, so k_rw + k_rn ≤ 1. Once every bit
    // of the non-aqueous phase is trapped it cannot flow: k_rn = 0 exactly.
    let (_, r) = water_wet_run(12);
    for o in &r.outcomes {
        for p in &o.points {
            if let Some(f) = p.flow {
                assert!(f.krw >= 0.0 && f.krn >= 0.0, "{f:?}");
                assert!(
                    f.krw + f.krn <= 1.0 + 1e-9,
                    "sum {} at Sw {}",
                    f.krw + f.krn,
                    p.saturation.sw
                );
                if (p.saturation.sn - p.saturation.sn_trapped).abs() < 1e-15
                    && p.saturation.sn > 0.0
                {
                    assert_eq!(f.krn, 0.0, "trapped oil flows at Sw {}", p.saturation.sw);
                }
            }
        }
    }
    let end = r.outcomes[1].points.last().unwrap();
    assert!(end.saturation.sn_trapped > 0.0);
    assert_eq!(end.flow.unwrap().krn, 0.0);
    // Drainage: krw falls, krn rises (common practice).
    let d: Vec<_> = r.outcomes[0].points.iter().filter_map(|p| p.flow).collect();
    assert!(d.first().unwrap().krw > d.last().unwrap().krw);
    assert!(d.first().unwrap().krn < d.last().unwrap().krn);
}

#[test]
fn summary_reports_end_points_and_fits() {
    let (net, r) = water_wet_run(10);
    let e = &r.end_points;
    assert!(e.swi.unwrap() < 0.05);
    assert!(e.krn_at_swi.unwrap() > 0.5);
    assert!(e.krw_at_snr.unwrap() > 0.0 && e.krw_at_snr.unwrap() < 1.0);
    assert!(e.land_coefficient.unwrap() > 0.0);
    assert_eq!(r.fits.len(), 2);
    let json = serde_json::to_value(&r).unwrap();
    for k in [
        "sni",
        "snr",
        "pore_volume_m3",
        "end_points",
        "fits",
        "archie",
        "single_phase",
    ] {
        assert!(!json[k].is_null(), "summary lacks {k}");
    }
    // Archie m from F and φ: F = φ^(-m) (Archie 1942, a = 1).
    let sp = r.single_phase.as_ref().unwrap();
    let m = json["archie"]["cementation_m"]["exponent"]
        .as_f64()
        .unwrap();
    assert!((sp.porosity.powf(-m) - sp.formation_factor).abs() < 1e-9 * sp.formation_factor);
    assert!((net.porosity() - sp.porosity).abs() < 1e-12);
}

#[test]
fn kept_hierarchies_give_the_kr_of_fresh_ones_to_the_solver_tolerance() {
    // A hierarchy kept from the previous point is only a preconditioner:
    // the answer is fixed by the residual test on the new system, so kr and
    // RI with every phase keeping its hierarchy (more than the default) and
    // with none must agree to the accuracy the dissipation gives at the
    // solver tolerance (FlowSolution::dissipation: error quadratic in the
    // pressure error), here 1e-8 relative at a tolerance of 1e-8.
    use network_core::engine::{Engine, Setup};
    use network_core::flow::SolveOptions;
    use network_core::geometry::Geometry;
    use network_core::run::process::run_process_observed;
    use network_core::run::relperm::RelpermSolver;
    use network_core::study::{ProcessKind, StopAt};
    use network_core::wettability::ContactAngles;

    let net = generate(
        &LatticeSpec {
            nx: 12,
            ny: 12,
            nz: 12,
            seed: 8,
            ..LatticeSpec::default()
        },
        &Silent,
    )
    .unwrap();
    let study = drainage_study(
        "[wettability]\nreceding_contact_angle_deg = [0.0, 10.0]\nadvancing_contact_angle_deg = [30.0, 50.0]",
        "until_pc_pa = 1.0e5",
        10,
    );
    let geom = Geometry::new(&net, study.seed);
    let angles = ContactAngles::intrinsic(&study.wettability, net.n_elements(), study.seed);
    let opts = SolveOptions {
        tolerance: 1e-8,
        ..SolveOptions::default()
    };
    let axis = net.info().flow_axis;
    let mut kept = RelpermSolver::new(&net, axis, opts.clone(), 1.0).unwrap();
    kept.set_hierarchy_reuse(true, true, true);
    let mut fresh = RelpermSolver::new(&net, axis, opts, 1.0).unwrap();
    fresh.set_hierarchy_reuse(false, false, false);
    let mut engine = Engine::new(Setup::of_study(&net, &geom, &study), angles);
    let mut pairs = Vec::new();
    run_process_observed(
        &mut engine,
        ProcessKind::Drainage,
        StopAt::Pc(1e5),
        30,
        &Silent,
        &mut |_, eng| pairs.push((kept.point(eng).unwrap(), fresh.point(eng).unwrap())),
    );
    assert!(pairs.len() >= 10, "{} points", pairs.len());
    assert!(kept.stats.hierarchies_reused > 0, "{:?}", kept.stats);
    assert_eq!(fresh.stats.hierarchies_reused, 0);
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-8 * b.abs().max(1e-12) || a == b;
    for (a, b) in &pairs {
        assert!(close(a.krw, b.krw), "{a:?} vs {b:?}");
        assert!(close(a.krn, b.krn), "{a:?} vs {b:?}");
        assert!(close(a.ri, b.ri), "{a:?} vs {b:?}");
    }
}
