//! Single-phase flow: conductances, the pressure solve, permeability and
//! formation factor against analytic and published values.

use std::f64::consts::PI;

use crate::networks::{Lattice, log_uniform_radius, uniform};
use network_core::flow::{
    AmgOptions, FlowError, Method, PermOptions, Preconditioner, PressureSystem, Smoother,
    SolveError, SolveInput, SolveOptions, conduit_conductances, element_hydraulic_conductances,
    hydraulic_conductance, permeability,
};
use network_core::geometry::{G_CIRCLE, G_EQUILATERAL, G_SQUARE};
use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

const MU: f64 = 1e-3;

fn jacobi() -> SolveOptions {
    SolveOptions {
        preconditioner: Preconditioner::Jacobi,
        ..SolveOptions::default()
    }
}

fn faces(network: &Network) -> (Vec<bool>, Vec<bool>) {
    let b = &network.pores().boundary;
    (
        b.iter().map(|&x| x == Boundary::Inlet).collect(),
        b.iter().map(|&x| x == Boundary::Outlet).collect(),
    )
}

#[test]
fn conductance_factors_match_shah_london_poiseuille_numbers() {
    // Source: Shah & London (1978), Laminar Flow Forced Convection in Ducts,
    // Academic Press: fully developed laminar Fanning f·Re (D_h = 4A/P) is
    // 16 (circle), 14.227 (square), 13.333 (equilateral triangle).
    //
    // Derivation (analytic): the wall stress τ_w = f ρ U²/2 balances the
    // pressure gradient, τ_w P = A (−dp/dx), so −dp/dx = 2 f ρ U²/D_h, and
    // with Re = ρ U D_h/μ:  f·Re = (−dp/dx) D_h² / (2 μ U).
    // An element of conductance g passes Q = g (−dp/dx), U = Q/A, hence
    //     f·Re = D_h² A / (2 μ g).
    // (With g = k A² G/μ and D_h² = 16 A G this is 8/k.) Here A, P and D_h are
    // computed from each shape's own geometry, not from A = R²/(4G).
    let r = 1e-5;
    let cases = [
        // (shape factor, area, perimeter, Shah & London f·Re)
        (G_CIRCLE, PI * r * r, 2.0 * PI * r, 16.0),
        // square of side 2R
        (G_SQUARE, 4.0 * r * r, 8.0 * r, 14.227),
        // equilateral triangle with inradius R: side 2√3 R
        (
            G_EQUILATERAL,
            3f64.sqrt() / 4.0 * (2.0 * 3f64.sqrt() * r).powi(2),
            3.0 * 2.0 * 3f64.sqrt() * r,
            13.333,
        ),
    ];
    for (g_shape, area, perimeter, f_re_handbook) in cases {
        // The geometric shape factor agrees with the named constant.
        assert!((area / (perimeter * perimeter) - g_shape).abs() < 1e-12 * g_shape);
        let g = hydraulic_conductance(r, g_shape, MU);
        let d_h = 4.0 * area / perimeter;
        let f_re = d_h * d_h * area / (2.0 * MU * g);
        let rel = (f_re - f_re_handbook).abs() / f_re_handbook;
        assert!(rel < 2e-3, "G={g_shape}: f·Re {f_re} vs {f_re_handbook}");
    }
}

#[test]
fn square_conductance_matches_exact_series_solution() {
    // Source: exact Poiseuille flow in a square duct of side s (series
    // solution of ∇²u = −(1/μ)(−dp/dx); e.g. Shah & London 1978):
    // Q = (s⁴/12μ)[1 − (192/π⁵) Σ_{n odd} tanh(nπ/2)/n⁵] (−dp/dx).
    let r: f64 = 1e-5;
    let s = 2.0 * r;
    let mut sum = 0.0;
    let mut n: f64 = 1.0;
    while n < 200.0 {
        sum += (n * PI / 2.0).tanh() / n.powi(5);
        n += 2.0;
    }
    let g_exact = s.powi(4) / (12.0 * MU) * (1.0 - 192.0 / PI.powi(5) * sum);
    let g = hydraulic_conductance(r, G_SQUARE, MU);
    assert!((g - g_exact).abs() / g_exact < 1e-3, "{g} vs {g_exact}");
}

/// A chain inlet – interior – outlet of three circular pores (radii
/// `rp`) and two circular throats (radii `rt`, total length `l`, pore
/// parts `la`, `lb`).
fn chain(rp: [f64; 3], rt: [f64; 2], l: [f64; 2], la: [f64; 2], lb: [f64; 2]) -> Network {
    let info = NetworkInfo {
        name: "chain".into(),
        flow_axis: Axis::X,
        length_m: l[0] + l[1],
        area_m2: 1e-8,
        bulk_volume_m3: 1e-8 * (l[0] + l[1]),
        extent_m: None,
        description: None,
    };
    let mut pores = Pores::with_capacity(3);
    let xs = [0.0, l[0], l[0] + l[1]];
    for (i, b) in [Boundary::Inlet, Boundary::Interior, Boundary::Outlet]
        .into_iter()
        .enumerate()
    {
        pores.x.push(xs[i]);
        pores.y.push(0.0);
        pores.z.push(0.0);
        pores.radius.push(rp[i]);
        pores.shape_factor.push(G_CIRCLE);
        pores.volume.push(4.0 * rp[i].powi(3));
        pores.clay_volume.push(0.0);
        pores.boundary.push(b);
    }
    let mut throats = Throats::with_capacity(2);
    for t in 0..2 {
        throats.pores.push([t as u32, t as u32 + 1]);
        throats.radius.push(rt[t]);
        throats.shape_factor.push(G_CIRCLE);
        throats.volume.push(PI * rt[t] * rt[t] * l[t]);
        throats.clay_volume.push(0.0);
        throats.length.push(l[t]);
        throats.conduit_a.push(la[t]);
        throats.conduit_b.push(lb[t]);
    }
    Network::new(info, pores, throats).expect("valid chain")
}

#[test]
fn pore_throat_pore_chain_equals_series_formula() {
    // Source: Hagen–Poiseuille g = π R⁴/(8μ) for each circular part, parts in
    // series (analytic): Q = Δp / Σ L_part/g_part over all five parts.
    let rp = [3e-5, 2e-5, 4e-5];
    let rt = [1e-5, 6e-6];
    let l = [1.2e-4, 0.9e-4];
    let la = [3e-5, 2e-5];
    let lb = [1.5e-5, 3.5e-5];
    let net = chain(rp, rt, l, la, lb);
    let hp = |r: f64| PI * r.powi(4) / (8.0 * MU);
    let resistance = la[0] / hp(rp[0])
        + (l[0] - la[0] - lb[0]) / hp(rt[0])
        + lb[0] / hp(rp[1])
        + la[1] / hp(rp[1])
        + (l[1] - la[1] - lb[1]) / hp(rt[1])
        + lb[1] / hp(rp[2]);
    let dp = 1.0;
    let q_expected = dp / resistance;
    let k_expected = MU * q_expected * (l[0] + l[1]) / (1e-8 * dp);
    for opts in [jacobi(), SolveOptions::default()] {
        let report = permeability(
            &net,
            Axis::X,
            &PermOptions {
                solve: opts,
                ..PermOptions::default()
            },
        )
        .unwrap();
        let rel = (report.inflow_m3_per_s - q_expected).abs() / q_expected;
        assert!(rel < 1e-12, "Q {} vs {q_expected}", report.inflow_m3_per_s);
        assert!((report.permeability_m2 - k_expected).abs() / k_expected < 1e-12);
        assert!(report.flow_imbalance < 1e-8);
        assert_eq!(report.n_excluded_pores, 0);
    }
}

#[test]
fn conduit_with_zero_length_parts_skips_them() {
    // Analytic: with L_a = L_b = 0 the conduit is the throat alone,
    // G = g_t / L_t, whatever the pore conductance (even zero).
    let net = chain([3e-5; 3], [1e-5, 1e-5], [1e-4, 1e-4], [0.0; 2], [0.0; 2]);
    let mut g = element_hydraulic_conductances(&net, MU);
    g[0] = 0.0;
    g[1] = 0.0;
    let mut out = vec![0.0; 2];
    conduit_conductances(&net, &g, &mut out).unwrap();
    let hp = PI * 1e-20 / (8.0 * MU);
    for v in out {
        assert!((v - hp / 1e-4).abs() / (hp / 1e-4) < 1e-14);
    }
    let err = conduit_conductances(&net, &g[..3], &mut [0.0; 2]).unwrap_err();
    assert!(matches!(err, FlowError::LengthMismatch { .. }));
}

#[test]
fn uniform_lattice_permeability_and_formation_factor_are_analytic() {
    // Source (analytic; docs/physics.md §9): simple-cubic lattice of
    // n³ pores, spacing L, identical circular throats of radius r and length
    // L, no pore-body resistance (conduit_a = conduit_b = 0). By symmetry each
    // layer normal to the axis is at one pressure, so only the n² columns of
    // n − 1 throats parallel to the gradient carry flow:
    //   Q = n² (π r⁴/(8μ L)) Δp/(n − 1).
    // With sample length (n − 1)L between the face-layer centres and area
    // n² L², K = μ Q (n−1)L/(n² L² Δp) = π r⁴/(8 L²).
    // Electrical analogue, throat conductance σ_w π r²/L:
    //   σ_eff = I (n−1)L/(n² L² ΔV) = σ_w π r²/L², so F = L²/(π r²).
    let (n, spacing, r) = (7, 1e-4, 2e-5);
    let net = Lattice::cube(n, spacing).build(|_| r);
    let k_exact = PI * r.powi(4) / (8.0 * spacing * spacing);
    let f_exact = spacing * spacing / (PI * r * r);
    for axis in [Axis::X, Axis::Y, Axis::Z] {
        for opts in [jacobi(), SolveOptions::default()] {
            let rep = permeability(
                &net,
                axis,
                &PermOptions {
                    solve: opts,
                    ..PermOptions::default()
                },
            )
            .unwrap();
            let rel_k = (rep.permeability_m2 - k_exact).abs() / k_exact;
            assert!(
                rel_k < 1e-6,
                "{axis:?}: K {} vs {k_exact}",
                rep.permeability_m2
            );
            let rel_f = (rep.formation_factor - f_exact).abs() / f_exact;
            assert!(
                rel_f < 1e-6,
                "{axis:?}: F {} vs {f_exact}",
                rep.formation_factor
            );
            assert!(rep.flow_imbalance < 1e-8, "{}", rep.flow_imbalance);
            assert!(rep.current_imbalance < 1e-8);
            assert!(rep.solver_residual <= 1e-10);
            assert!(
                (rep.permeability_md - k_exact / 9.869233e-16).abs() / rep.permeability_md < 1e-6
            );
        }
    }
}

#[test]
fn clay_adds_parallel_conductor_to_formation_factor() {
    // Analytic, with the documented clay rule A_clay = V_clay / L_throat in
    // parallel, scaled by 1/τ: throat conductance σ_w (π r² + V_c/(τ L))/L,
    // so F = L² / (π r² + V_c/(τ L)) on the uniform lattice (same column
    // argument as above). Clay leaves K unchanged (no hydraulic role).
    let (n, spacing, r) = (5, 1e-4, 2e-5);
    let v_clay = 0.5 * PI * r * r * spacing;
    let mut lat = Lattice::cube(n, spacing);
    lat.throat_clay = v_clay;
    let net = lat.build(|_| r);
    let tau = 2.0;
    let rep = permeability(
        &net,
        Axis::Z,
        &PermOptions {
            clay_tortuosity: tau,
            ..PermOptions::default()
        },
    )
    .unwrap();
    let f_exact = spacing * spacing / (PI * r * r + v_clay / (tau * spacing));
    assert!((rep.formation_factor - f_exact).abs() / f_exact < 1e-6);
    let k_exact = PI * r.powi(4) / (8.0 * spacing * spacing);
    assert!((rep.permeability_m2 - k_exact).abs() / k_exact < 1e-6);
}

#[test]
fn dead_end_cluster_is_excluded_and_counted() {
    // Analytic: a cluster attached only to the inlet carries no flow, and an
    // isolated cluster none either; K equals the uniform-lattice value.
    // Build a 5×5×5 lattice and cut the throats of a 1×1 column of pores at
    // x = 0, y = 0 from the rest except at the inlet pore, making it a dead
    // end (the column's top pore is an outlet pore, so cut its last bond too).
    let (n, spacing, r) = (5, 1e-4, 2e-5);
    let lat = Lattice::cube(n, spacing);
    let net = lat.build(|_| r);
    let mut g = element_hydraulic_conductances(&net, MU);
    let n_p = net.n_pores();
    let mut conduit = vec![0.0; net.n_throats()];
    conduit_conductances(&net, &g, &mut conduit).unwrap();
    // Column pores (0, 0, k).
    let col: Vec<usize> = (0..n).map(|k| lat.index(0, 0, k)).collect();
    for (t, &[a, b]) in net.throats().pores.iter().enumerate() {
        let (ia, ib) = (col.contains(&(a as usize)), col.contains(&(b as usize)));
        // Cut bonds leaving the column sideways.
        if ia != ib {
            conduit[t] = 0.0;
        }
        // Cut the vertical bond into the column's outlet pore.
        if ia && ib && (a as usize == col[n - 1] || b as usize == col[n - 1]) {
            conduit[t] = 0.0;
        }
    }
    g.clear();
    let (inlet, outlet) = faces(&net);
    let active = vec![true; n_p];
    let mut sys = PressureSystem::new(&net);
    let sol = sys
        .solve(
            &SolveInput {
                conduit_g: &conduit,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &SolveOptions::default(),
        )
        .unwrap();
    // The column's outlet pore is isolated and the rest of the column is a
    // dead end hanging from one inlet pore: all n pores are excluded.
    assert_eq!(sol.n_excluded, n);
    for &p in &col {
        assert!(!sol.flowing[p]);
        assert!(sol.pressure[p].is_nan());
    }
    // Columns left: n² − 1, each n − 1 throats in series (analytic).
    let gt = PI * r.powi(4) / (8.0 * MU * spacing);
    let q_exact = (n * n - 1) as f64 * gt / (n - 1) as f64;
    assert!(
        (sol.inflow - q_exact).abs() / q_exact < 1e-9,
        "{} {q_exact}",
        sol.inflow
    );
    assert!(sol.imbalance < 1e-8);
}

#[test]
fn network_without_spanning_cluster_gives_typed_error() {
    // Two disconnected halves: inlet layer side and outlet layer side of a
    // lattice with every throat of the middle layer removed (Network::new
    // with those throats left out).
    let lat = Lattice::cube(4, 1e-4);
    let full = lat.build(|_| 1e-5);
    let (info, pores, throats) = full.into_parts();
    let mut kept = Throats::with_capacity(throats.len());
    for t in 0..throats.len() {
        let [a, b] = throats.pores[t];
        let za = pores.z[a as usize];
        let zb = pores.z[b as usize];
        // Drop bonds between layer 1 and layer 2.
        if (za - zb).abs() > 1e-9 && za.min(zb) > 0.5e-4 && za.min(zb) < 1.5e-4 {
            continue;
        }
        kept.pores.push(throats.pores[t]);
        kept.radius.push(throats.radius[t]);
        kept.shape_factor.push(throats.shape_factor[t]);
        kept.volume.push(throats.volume[t]);
        kept.clay_volume.push(throats.clay_volume[t]);
        kept.length.push(throats.length[t]);
        kept.conduit_a.push(throats.conduit_a[t]);
        kept.conduit_b.push(throats.conduit_b[t]);
    }
    let net = Network::new(info, pores, kept).unwrap();
    let err = permeability(&net, Axis::Z, &PermOptions::default()).unwrap_err();
    assert!(
        matches!(err, FlowError::NoSpanningCluster { axis: Axis::Z, .. }),
        "{err}"
    );
    assert!(err.to_string().contains("no pore cluster"));
    // The solver alone says the same when every conductance is zero.
    let mut sys = PressureSystem::new(&full_lattice());
    let n_p = sys.n_pores();
    let net2 = full_lattice();
    let (inlet, outlet) = faces(&net2);
    let zero = vec![0.0; net2.n_throats()];
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &zero,
                active: &vec![true; n_p],
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &SolveOptions::default(),
        )
        .unwrap_err();
    assert!(matches!(e, SolveError::NoSpanningCluster { .. }), "{e}");
}

fn full_lattice() -> Network {
    Lattice::cube(4, 1e-4).build(|_| 1e-5)
}

#[test]
fn bad_inputs_give_typed_errors() {
    let net = full_lattice();
    let (inlet, outlet) = faces(&net);
    let n_p = net.n_pores();
    let active = vec![true; n_p];
    let mut sys = PressureSystem::new(&net);
    let mut g = vec![1e-12; net.n_throats()];
    let o = SolveOptions::default();
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &g[1..],
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &o,
        )
        .unwrap_err();
    assert!(matches!(
        e,
        SolveError::LengthMismatch {
            what: "conduit_g",
            ..
        }
    ));
    g[7] = f64::NAN;
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &g,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &o,
        )
        .unwrap_err();
    assert!(matches!(
        e,
        SolveError::NonFinite {
            what: "conductance",
            index: 7,
            ..
        }
    ));
    g[7] = -1.0;
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &g,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &o,
        )
        .unwrap_err();
    assert!(matches!(
        e,
        SolveError::NegativeConductance { throat: 7, .. }
    ));
    g[7] = 1e-12;
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &g,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: f64::INFINITY,
                p_out: 0.0,
                warm_start: None,
            },
            &o,
        )
        .unwrap_err();
    assert!(matches!(
        e,
        SolveError::NonFinite {
            what: "inlet pressure",
            ..
        }
    ));
    let both = vec![true; n_p];
    let e = sys
        .solve(
            &SolveInput {
                conduit_g: &g,
                active: &active,
                inlet: &both,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &o,
        )
        .unwrap_err();
    assert!(matches!(e, SolveError::FaceOverlap { .. }));
    // An iteration limit too small to converge.
    let few = SolveOptions {
        max_iterations: 1,
        ..jacobi()
    };
    let rnet = Lattice::cube(6, 1e-4).build(|t| log_uniform_radius(3, t, 2e-6));
    let (ri, ro) = faces(&rnet);
    let mut rg = vec![0.0; rnet.n_throats()];
    conduit_conductances(&rnet, &element_hydraulic_conductances(&rnet, MU), &mut rg).unwrap();
    let e = PressureSystem::new(&rnet)
        .solve(
            &SolveInput {
                conduit_g: &rg,
                active: &vec![true; rnet.n_pores()],
                inlet: &ri,
                outlet: &ro,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &few,
        )
        .unwrap_err();
    assert!(
        matches!(e, SolveError::NoConvergence { iterations: 1, .. }),
        "{e}"
    );
}

fn random_lattice(n: usize, seed: u64) -> Network {
    let mut lat = Lattice::cube(n, 1e-4);
    lat.conduit_fraction = 0.25;
    lat.build(|t| log_uniform_radius(seed, t, 2e-6))
}

fn random_conduits(net: &Network) -> Vec<f64> {
    let mut c = vec![0.0; net.n_throats()];
    conduit_conductances(net, &element_hydraulic_conductances(net, MU), &mut c).unwrap();
    c
}

#[test]
fn results_are_identical_with_one_and_two_threads() {
    // Determinism requirement of the project: fixed chunking of every
    // reduction, sequential searches and aggregation.
    // 18³ = 5832 pores: more than one fixed chunk of rows, so the chunked
    // reductions and Gauss–Seidel blocks are exercised.
    let net = random_lattice(18, 5);
    let run = |threads: usize, opts: SolveOptions| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                let rep = permeability(
                    &net,
                    Axis::Z,
                    &PermOptions {
                        solve: opts,
                        ..PermOptions::default()
                    },
                )
                .unwrap();
                let (inlet, outlet) = faces(&net);
                let c = random_conduits(&net);
                let sol = PressureSystem::new(&net)
                    .solve(
                        &SolveInput {
                            conduit_g: &c,
                            active: &vec![true; net.n_pores()],
                            inlet: &inlet,
                            outlet: &outlet,
                            p_in: 2.0,
                            p_out: 1.0,
                            warm_start: None,
                        },
                        &SolveOptions::default(),
                    )
                    .unwrap();
                (rep, sol.pressure)
            })
    };
    let gs = SolveOptions {
        preconditioner: Preconditioner::Amg(AmgOptions {
            smoother: Smoother::GaussSeidel,
            ..AmgOptions::default()
        }),
        ..SolveOptions::default()
    };
    let sa = SolveOptions {
        preconditioner: Preconditioner::Amg(AmgOptions {
            method: Method::SmoothedAggregation,
            ..AmgOptions::default()
        }),
        ..SolveOptions::default()
    };
    for opts in [jacobi(), SolveOptions::default(), gs, sa] {
        let (r1, p1) = run(1, opts.clone());
        let (r2, p2) = run(2, opts);
        assert_eq!(r1.permeability_m2.to_bits(), r2.permeability_m2.to_bits());
        assert_eq!(
            r1.formation_factor.to_bits(),
            r2.formation_factor.to_bits(),
            "{r1:?} {r2:?}"
        );
        assert_eq!(r1.solver_iterations, r2.solver_iterations);
        let b1: Vec<u64> = p1.iter().map(|x| x.to_bits()).collect();
        let b2: Vec<u64> = p2.iter().map(|x| x.to_bits()).collect();
        assert_eq!(b1, b2);
    }
}

#[test]
fn jacobi_and_multigrid_agree_and_conserve_mass() {
    // Kirchhoff solutions conserve flow (docs/physics.md §9); the two
    // preconditioners solve the same system, so K agrees to the tolerance.
    let net = random_lattice(10, 11);
    let a = permeability(
        &net,
        Axis::Z,
        &PermOptions {
            solve: jacobi(),
            ..PermOptions::default()
        },
    )
    .unwrap();
    let methods = [
        Method::Classical,
        Method::SmoothedAggregation,
        Method::PlainAggregation,
    ];
    for (method, smoother) in methods
        .into_iter()
        .flat_map(|m| [(m, Smoother::Jacobi), (m, Smoother::GaussSeidel)])
    {
        let opts = SolveOptions {
            preconditioner: Preconditioner::Amg(AmgOptions {
                method,
                smoother,
                max_coarse: 20,
                ..AmgOptions::default()
            }),
            ..SolveOptions::default()
        };
        let b = permeability(
            &net,
            Axis::Z,
            &PermOptions {
                solve: opts,
                ..PermOptions::default()
            },
        )
        .unwrap();
        assert!((a.permeability_m2 - b.permeability_m2).abs() / a.permeability_m2 < 1e-8);
        assert!((a.formation_factor - b.formation_factor).abs() / a.formation_factor < 1e-8);
        assert!(b.flow_imbalance < 1e-8 && b.current_imbalance < 1e-8);
        assert!(b.solver_levels >= 2, "levels {}", b.solver_levels);
        assert!(b.solver_iterations < a.solver_iterations);
    }
    assert!(a.flow_imbalance < 1e-8);
}

#[test]
fn warm_start_after_small_change_converges_faster_to_same_answer() {
    // Warm start: the previous pressures as initial guess after changing 1%
    // of the conductances; the answer must equal a cold solve of the new
    // system to the tolerance, with fewer iterations (common practice).
    let net = random_lattice(14, 2);
    let (inlet, outlet) = faces(&net);
    let active = vec![true; net.n_pores()];
    let mut c = random_conduits(&net);
    for opts in [jacobi(), SolveOptions::default()] {
        let mut sys = PressureSystem::new(&net);
        let first = sys
            .solve(
                &SolveInput {
                    conduit_g: &c,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: None,
                },
                &opts,
            )
            .unwrap();
        let mut c2 = c.clone();
        for (t, v) in c2.iter_mut().enumerate() {
            if uniform(9, t, 0.0, 1.0) < 0.01 {
                *v *= uniform(10, t, 0.5, 2.0);
            }
        }
        let warm = sys
            .solve(
                &SolveInput {
                    conduit_g: &c2,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: Some(&first.pressure),
                },
                &opts,
            )
            .unwrap();
        let cold = PressureSystem::new(&net)
            .solve(
                &SolveInput {
                    conduit_g: &c2,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: None,
                },
                &opts,
            )
            .unwrap();
        assert!(
            warm.iterations < cold.iterations,
            "{} vs {}",
            warm.iterations,
            cold.iterations
        );
        assert!((warm.inflow - cold.inflow).abs() / cold.inflow < 1e-8);
        assert!(warm.imbalance < 1e-8 && cold.imbalance < 1e-8);
        c = c2;
    }
}

#[test]
fn random_lattice_is_isotropic_within_15_percent() {
    // Statistical isotropy (common practice): a 20³ lattice with i.i.d.
    // log-uniform throat radii (factor 10) has Kx, Ky, Kz equal up to
    // finite-size fluctuations; 15% is the tolerance of the task.
    let net = random_lattice(20, 7);
    let k: Vec<f64> = [Axis::X, Axis::Y, Axis::Z]
        .into_iter()
        .map(|a| {
            let r = permeability(&net, a, &PermOptions::default()).unwrap();
            assert!(r.flow_imbalance < 1e-8);
            r.permeability_m2
        })
        .collect();
    let mean = k.iter().sum::<f64>() / 3.0;
    for v in &k {
        assert!((v - mean).abs() / mean < 0.15, "{k:?}");
    }
}
