//! Tests of the statistical lattice generator (`network_core::generate`).

use network_core::connectivity::Components;
use network_core::generate::{
    GenerateError, LatticeSpec, RegularSpec, ShapeMix, WeibullRange, generate,
};
use network_core::geometry::{G_CIRCLE, G_EQUILATERAL, G_SQUARE, Shape};
use network_core::network::validate::volume_warnings;
use network_core::progress::Silent;
use network_core::{Axis, Boundary, Network};

fn cube(n: usize) -> LatticeSpec {
    LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        ..LatticeSpec::default()
    }
}

fn bits(v: &[f64]) -> Vec<u64> {
    v.iter().map(|x| x.to_bits()).collect()
}

/// Compares every column of two networks bit for bit.
fn assert_identical(a: &Network, b: &Network) {
    assert_eq!(a.info(), b.info());
    let (pa, pb) = (a.pores(), b.pores());
    for (name, x, y) in [
        ("x", &pa.x, &pb.x),
        ("y", &pa.y, &pb.y),
        ("z", &pa.z, &pb.z),
        ("pore radius", &pa.radius, &pb.radius),
        ("pore shape factor", &pa.shape_factor, &pb.shape_factor),
        ("pore volume", &pa.volume, &pb.volume),
        ("pore clay", &pa.clay_volume, &pb.clay_volume),
    ] {
        assert_eq!(bits(x), bits(y), "column {name} differs");
    }
    assert_eq!(pa.boundary, pb.boundary);
    let (ta, tb) = (a.throats(), b.throats());
    assert_eq!(ta.pores, tb.pores);
    for (name, x, y) in [
        ("throat radius", &ta.radius, &tb.radius),
        ("throat shape factor", &ta.shape_factor, &tb.shape_factor),
        ("throat volume", &ta.volume, &tb.volume),
        ("throat clay", &ta.clay_volume, &tb.clay_volume),
        ("length", &ta.length, &tb.length),
        ("conduit a", &ta.conduit_a, &tb.conduit_a),
        ("conduit b", &ta.conduit_b, &tb.conduit_b),
    ] {
        assert_eq!(bits(x), bits(y), "column {name} differs");
    }
}

fn in_pool<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("thread pool")
        .install(f)
}

fn coordination(net: &Network) -> f64 {
    2.0 * net.n_throats() as f64 / net.n_pores() as f64
}

#[test]
fn same_seed_gives_identical_networks_on_one_and_two_threads() {
    let spec = LatticeSpec {
        clay_fraction: 0.1,
        ..cube(30)
    };
    let one = in_pool(1, || generate(&spec, &Silent)).expect("valid spec");
    let two = in_pool(2, || generate(&spec, &Silent)).expect("valid spec");
    assert_identical(&one, &two);
    let again = in_pool(2, || generate(&spec, &Silent)).expect("valid spec");
    assert_identical(&one, &again);
}

#[test]
fn different_seeds_give_different_networks() {
    let a = generate(&cube(12), &Silent).unwrap();
    let b = generate(
        &LatticeSpec {
            seed: 2,
            ..cube(12)
        },
        &Silent,
    )
    .unwrap();
    assert_eq!(a.n_throats(), b.n_throats());
    assert_ne!(a.throats().pores, b.throats().pores);
    assert_ne!(bits(&a.pores().radius), bits(&b.pores().radius));
    assert_ne!(bits(&a.throats().radius), bits(&b.throats().radius));
}

#[test]
fn coordination_target_is_hit_and_the_network_spans() {
    // Requirement: within ±0.05 of the target on 30³, spanning. Every pore
    // must also be connected (one component), as the scheme guarantees.
    let spec = cube(30);
    let (min, max) = spec.coordination_range();
    for target in [min, 2.5, 3.0, 4.0, 5.0, 5.5, max] {
        let net = generate(
            &LatticeSpec {
                target_coordination: target,
                ..spec.clone()
            },
            &Silent,
        )
        .unwrap();
        let z = coordination(&net);
        assert!((z - target).abs() <= 0.05, "target {target} got {z}");
        let comps = Components::of(&net);
        assert!(comps.spans(), "target {target}: no spanning cluster");
        assert_eq!(comps.len(), 1, "target {target}: pores left unconnected");
        // No duplicate bonds.
        let mut ends = net.throats().pores.clone();
        ends.sort_unstable();
        ends.dedup();
        assert_eq!(ends.len(), net.n_throats());
    }
}

#[test]
fn lowest_coordination_is_a_spanning_tree() {
    // A connected graph of N nodes with N − 1 edges is a tree (graph theory).
    let spec = LatticeSpec {
        target_coordination: cube(10).coordination_range().0,
        ..cube(10)
    };
    let net = generate(&spec, &Silent).unwrap();
    assert_eq!(net.n_throats(), net.n_pores() - 1);
    assert_eq!(Components::of(&net).len(), 1);
}

#[test]
fn radii_stay_in_bounds_and_throats_obey_the_aspect_rule() {
    for aspect in [1.0, 1.5] {
        let spec = LatticeSpec {
            throat_aspect_min: aspect,
            // Throat range overlapping the pores' so that the cap is active.
            throat_radius: WeibullRange {
                min_m: 4e-6,
                max_m: 30e-6,
                shape: 1.5,
                scale: 0.5,
            },
            ..cube(30)
        };
        let net = generate(&spec, &Silent).unwrap();
        let p = net.pores();
        let (lo, hi) = (spec.pore_radius.min_m, spec.pore_radius.max_m);
        assert!(p.radius.iter().all(|&r| (lo..=hi).contains(&r)));
        let t = net.throats();
        let mut capped = 0usize;
        for i in 0..t.len() {
            let [a, b] = t.pores[i];
            let r_small = p.radius[a as usize].min(p.radius[b as usize]);
            let r = t.radius[i];
            assert!(
                r <= r_small / aspect,
                "throat {i}: {r} > {r_small}/{aspect}"
            );
            assert!(r >= spec.throat_radius.min_m.min(r_small / aspect));
            assert!(r <= spec.throat_radius.max_m);
            if r == r_small / aspect {
                capped += 1;
            }
            // Conduit parts are the pore radii; throat proper stays positive.
            assert_eq!(t.conduit_a[i], p.radius[a as usize]);
            assert_eq!(t.conduit_b[i], p.radius[b as usize]);
            assert!(t.throat_length(i) > 0.0);
        }
        assert!(
            capped > 0,
            "the cap was never active: the test checks nothing"
        );
    }
}

#[test]
fn shape_fractions_match_within_binomial_error() {
    // Each element's class is a Bernoulli draw: the count fraction has
    // standard error sqrt(p(1 − p)/n) (binomial); we allow 4 of them.
    let mix_p = ShapeMix {
        triangle: 0.5,
        square: 0.3,
        circle: 0.2,
        triangle_g_min: 0.01,
        triangle_g_max: 0.04,
    };
    let mix_t = ShapeMix {
        triangle: 0.2,
        square: 0.0,
        circle: 0.8,
        triangle_g_min: 0.03,
        triangle_g_max: G_EQUILATERAL,
    };
    let spec = LatticeSpec {
        pore_shapes: mix_p,
        throat_shapes: mix_t,
        ..cube(30)
    };
    let net = generate(&spec, &Silent).unwrap();
    let check = |g: &[f64], mix: &ShapeMix, what: &str| {
        let n = g.len() as f64;
        let count = |s: Shape| {
            g.iter()
                .filter(|&&x| Shape::from_shape_factor(x) == s)
                .count()
        };
        for (shape, p) in [
            (Shape::Triangle, mix.triangle),
            (Shape::Square, mix.square),
            (Shape::Circle, mix.circle),
        ] {
            let frac = count(shape) as f64 / n;
            let se = (p * (1.0 - p) / n).sqrt();
            assert!(
                (frac - p).abs() <= 4.0 * se,
                "{what} {shape:?}: fraction {frac}, expected {p} ± 4×{se}"
            );
        }
        for &x in g {
            match Shape::from_shape_factor(x) {
                Shape::Triangle => {
                    assert!(x > mix.triangle_g_min && x <= mix.triangle_g_max, "{x}")
                }
                Shape::Square => assert_eq!(x, G_SQUARE),
                Shape::Circle => assert_eq!(x, G_CIRCLE),
            }
        }
        // Triangle G is uniform on (g_min, g_max]: mean (g_min + g_max)/2,
        // standard error (g_max − g_min)/sqrt(12 n) (uniform distribution).
        let tri: Vec<f64> = g.iter().copied().filter(|&x| x <= G_EQUILATERAL).collect();
        let mean = tri.iter().sum::<f64>() / tri.len() as f64;
        let width = mix.triangle_g_max - mix.triangle_g_min;
        let se = width / (12.0 * tri.len() as f64).sqrt();
        let expect = 0.5 * (mix.triangle_g_min + mix.triangle_g_max);
        assert!((mean - expect).abs() <= 4.0 * se, "{what}: mean G {mean}");
    };
    check(&net.pores().shape_factor, &mix_p, "pores");
    check(&net.throats().shape_factor, &mix_t, "throats");
}

/// Mean and variance of the reduced radius x ∈ [0, 1] of a Weibull(δ, η)
/// truncated to [0, 1], by composite Simpson quadrature of the untruncated
/// pdf w(x) = (δ/η)(x/η)^(δ−1) exp(−(x/η)^δ) (Weibull 1951), normalised by
/// its own integral over [0, 1].
fn truncated_weibull_moments(shape: f64, scale: f64) -> (f64, f64) {
    let w = |x: f64| {
        if x <= 0.0 {
            return if shape > 1.0 { 0.0 } else { shape / scale };
        }
        shape / scale * (x / scale).powf(shape - 1.0) * (-(x / scale).powf(shape)).exp()
    };
    let n = 200_000;
    let h = 1.0 / n as f64;
    let (mut m0, mut m1, mut m2) = (0.0, 0.0, 0.0);
    for i in 0..=n {
        let x = i as f64 * h;
        let c = if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        let f = c * w(x);
        m0 += f;
        m1 += f * x;
        m2 += f * x * x;
    }
    let mean = m1 / m0;
    (mean, m2 / m0 - mean * mean)
}

#[test]
fn quadrature_moments_match_truncated_exponential() {
    // δ = 1 is the exponential truncated to [0, 1], rate λ = 1/η: mean
    // 1/λ − 1/(e^λ − 1) (analytic); guards the quadrature used below.
    let (mean, _) = truncated_weibull_moments(1.0, 0.5);
    let lambda = 2.0f64;
    let exact = 1.0 / lambda - 1.0 / (lambda.exp() - 1.0);
    assert!((mean - exact).abs() < 1e-9, "{mean} vs {exact}");
}

#[test]
fn sampled_radii_follow_the_truncated_weibull_mean() {
    // Sample mean of n radii vs. quadrature mean; tolerance 4 standard
    // errors σ/√n with σ from the same quadrature.
    let pore = WeibullRange {
        min_m: 5e-6,
        max_m: 40e-6,
        shape: 1.8,
        scale: 0.3,
    };
    // Throat maximum below the pore minimum: the aspect cap never acts, so
    // throat radii are pure truncated Weibull too.
    let throat = WeibullRange {
        min_m: 1e-6,
        max_m: 5e-6,
        shape: 3.0,
        scale: 0.8,
    };
    let spec = LatticeSpec {
        pore_radius: pore,
        throat_radius: throat,
        target_coordination: 5.0,
        ..cube(30)
    };
    let net = generate(&spec, &Silent).unwrap();
    for (what, w, r) in [
        ("pore", pore, &net.pores().radius),
        ("throat", throat, &net.throats().radius),
    ] {
        let span = w.max_m - w.min_m;
        let n = r.len() as f64;
        let mean_x = r.iter().map(|&v| (v - w.min_m) / span).sum::<f64>() / n;
        let (mean, var) = truncated_weibull_moments(w.shape, w.scale);
        let se = (var / n).sqrt();
        assert!(
            (mean_x - mean).abs() <= 4.0 * se,
            "{what}: sample mean {mean_x}, truncated Weibull mean {mean} ± 4×{se}"
        );
    }
}

#[test]
fn sampled_radii_follow_the_truncated_weibull_cdf() {
    // Fraction below x vs. the quadrature CDF ∫₀ˣ w / ∫₀¹ w; binomial
    // standard error sqrt(P(1 − P)/n), 4 of them.
    let w = WeibullRange {
        min_m: 1e-6,
        max_m: 2e-6,
        shape: 1.3,
        scale: 0.4,
    };
    let spec = LatticeSpec {
        pore_radius: w,
        ..cube(30)
    };
    let net = generate(&spec, &Silent).unwrap();
    let xs: Vec<f64> = net
        .pores()
        .radius
        .iter()
        .map(|&r| (r - w.min_m) / (w.max_m - w.min_m))
        .collect();
    let pdf = |x: f64| {
        w.shape / w.scale * (x / w.scale).powf(w.shape - 1.0) * (-(x / w.scale).powf(w.shape)).exp()
    };
    // Midpoint rule on a fine grid (pdf ~ x^0.3 near 0 is integrable).
    let n_grid = 100_000;
    let h = 1.0 / n_grid as f64;
    let cum: Vec<f64> = (0..n_grid)
        .scan(0.0, |acc, i| {
            *acc += pdf((i as f64 + 0.5) * h) * h;
            Some(*acc)
        })
        .collect();
    let total = cum[n_grid - 1];
    let n = xs.len() as f64;
    for q in [0.1, 0.2, 0.35, 0.5, 0.7, 0.9] {
        let p = cum[(q * n_grid as f64) as usize - 1] / total;
        let frac = xs.iter().filter(|&&x| x < q).count() as f64 / n;
        let se = (p * (1.0 - p) / n).sqrt();
        assert!((frac - p).abs() <= 4.0 * se, "x<{q}: {frac} vs {p}");
    }
}

#[test]
fn regular_mode_gives_identical_elements_and_full_coordination() {
    let (rp, rt, s) = (20e-6, 8e-6, 100e-6);
    let spec = LatticeSpec {
        nx: 6,
        ny: 5,
        nz: 4,
        spacing_m: s,
        regular: Some(RegularSpec {
            pore_radius_m: rp,
            throat_radius_m: rt,
            pore_shape_factor: G_SQUARE,
            throat_shape_factor: G_SQUARE,
        }),
        ..LatticeSpec::default()
    };
    let net = generate(&spec, &Silent).unwrap();
    // Bonds of a 6×5×4 simple-cubic lattice: 5·5·4 + 6·4·4 + 6·5·3 = 286.
    assert_eq!(net.n_pores(), 120);
    assert_eq!(net.n_throats(), 286);
    let adj = net.adjacency();
    let p = net.pores();
    let mut interior = 0;
    for i in 0..net.n_pores() {
        let c = [p.x[i], p.y[i], p.z[i]];
        let dims = [6.0, 5.0, 4.0];
        let on_face = (0..3).any(|d| c[d] < s || c[d] > (dims[d] - 1.0) * s);
        if !on_face {
            assert_eq!(adj.degree(i), 6, "interior pore {i}");
            interior += 1;
        }
    }
    assert_eq!(interior, 4 * 3 * 2);
    // A square pore of inscribed radius r and length 2r is a cube of side
    // 2r: V = 8r³; a square throat of side 2r_t and length s − 2r_p has
    // V = 4r_t²(s − 2r_p) (direct geometry).
    for i in 0..net.n_pores() {
        assert_eq!(p.radius[i], rp);
        assert_eq!(p.shape_factor[i], G_SQUARE);
        assert!((p.volume[i] - 8.0 * rp * rp * rp).abs() <= 1e-15 * p.volume[i]);
    }
    let t = net.throats();
    for i in 0..net.n_throats() {
        assert_eq!(t.radius[i], rt);
        assert_eq!(t.length[i], s);
        let v = 4.0 * rt * rt * (s - 2.0 * rp);
        assert!((t.volume[i] - v).abs() <= 1e-14 * v);
        let [a, b] = t.pores[i];
        let d = (0..3)
            .map(|k| (p.centre(a as usize)[k] - p.centre(b as usize)[k]).powi(2))
            .sum::<f64>()
            .sqrt();
        // The conduit length equals the centre-to-centre distance.
        assert!((d - s).abs() <= 1e-12 * s);
    }
    // Seed plays no part in regular mode.
    let other = generate(
        &LatticeSpec {
            seed: 99,
            ..spec.clone()
        },
        &Silent,
    )
    .unwrap();
    assert_identical(&net, &other);
}

#[test]
fn sample_values_and_faces_follow_the_flow_axis() {
    let s = 50e-6;
    let spec = LatticeSpec {
        nx: 7,
        ny: 4,
        nz: 3,
        spacing_m: s,
        flow_axis: Axis::X,
        pore_radius: WeibullRange {
            min_m: 2e-6,
            max_m: 20e-6,
            shape: 1.8,
            scale: 0.3,
        },
        ..LatticeSpec::default()
    };
    let net = generate(&spec, &Silent).unwrap();
    let info = net.info();
    assert_eq!(info.flow_axis, Axis::X);
    // Inlet/outlet layer centres at 0.5s and 6.5s: 6s apart.
    assert!((info.length_m - 6.0 * s).abs() <= 1e-15);
    assert!((info.area_m2 - 12.0 * s * s).abs() <= 1e-24);
    assert!((info.bulk_volume_m3 - 84.0 * s * s * s).abs() <= 1e-28);
    assert_eq!(info.extent_m, Some([7.0 * s, 4.0 * s, 3.0 * s]));
    let p = net.pores();
    for i in 0..net.n_pores() {
        let expect = if (p.x[i] - 0.5 * s).abs() < 1e-12 {
            Boundary::Inlet
        } else if (p.x[i] - 6.5 * s).abs() < 1e-12 {
            Boundary::Outlet
        } else {
            Boundary::Interior
        };
        assert_eq!(p.boundary[i], expect, "pore {i} at x = {}", p.x[i]);
    }
    assert_eq!(
        p.boundary.iter().filter(|&&b| b == Boundary::Inlet).count(),
        12
    );
}

#[test]
fn volumes_are_consistent_with_the_prism_model() {
    let net = generate(&cube(15), &Silent).unwrap();
    // Pore prism of length 2r holds its inscribed sphere; throat volume is
    // cross-section × throat-proper length: no volume warnings.
    let (_, count) = volume_warnings(&net, 0);
    assert_eq!(count, 0);
    let p = net.pores();
    for i in 0..net.n_pores() {
        let a = p.radius[i] * p.radius[i] / (4.0 * p.shape_factor[i]);
        assert!((p.volume[i] - 2.0 * p.radius[i] * a).abs() <= 1e-14 * p.volume[i]);
    }
}

#[test]
fn clay_fraction_is_the_clay_share_of_each_element() {
    // V_clay/(V_clay + V) = f by construction of V_clay = f/(1 − f) V.
    let f = 0.15;
    let net = generate(
        &LatticeSpec {
            clay_fraction: f,
            ..cube(10)
        },
        &Silent,
    )
    .unwrap();
    let (p, t) = (net.pores(), net.throats());
    for (v, c) in p.volume.iter().zip(&p.clay_volume) {
        assert!((c / (c + v) - f).abs() < 1e-12);
    }
    for (v, c) in t.volume.iter().zip(&t.clay_volume) {
        assert!((c / (c + v) - f).abs() < 1e-12);
    }
    let clay: f64 = p.clay_volume.iter().sum::<f64>() + t.clay_volume.iter().sum::<f64>();
    assert!((clay / net.pore_volume() - f).abs() < 1e-12);
}

fn param_name(err: GenerateError) -> String {
    match err {
        GenerateError::InvalidParameter { name, .. } => name,
        other => format!("(not an InvalidParameter: {other:?})"),
    }
}

#[test]
fn bad_parameters_give_typed_errors_naming_the_parameter() {
    let base = cube(5);
    let run = |spec: LatticeSpec| generate(&spec, &Silent).unwrap_err();
    let cases: Vec<(LatticeSpec, &str)> = vec![
        (
            LatticeSpec {
                nx: 0,
                ..base.clone()
            },
            "nx",
        ),
        (
            LatticeSpec {
                nz: 1,
                ..base.clone()
            },
            "nz",
        ),
        (
            LatticeSpec {
                spacing_m: -1.0,
                ..base.clone()
            },
            "spacing_m",
        ),
        (
            LatticeSpec {
                spacing_m: f64::NAN,
                ..base.clone()
            },
            "spacing_m",
        ),
        (
            LatticeSpec {
                throat_aspect_min: 0.5,
                ..base.clone()
            },
            "throat_aspect_min",
        ),
        (
            LatticeSpec {
                clay_fraction: 1.0,
                ..base.clone()
            },
            "clay_fraction",
        ),
        (
            LatticeSpec {
                pore_radius: WeibullRange {
                    min_m: 0.0,
                    ..base.pore_radius
                },
                ..base.clone()
            },
            "pore_radius.min_m",
        ),
        (
            LatticeSpec {
                throat_radius: WeibullRange {
                    max_m: 1e-6,
                    ..base.throat_radius
                },
                ..base.clone()
            },
            "throat_radius.max_m",
        ),
        (
            LatticeSpec {
                pore_radius: WeibullRange {
                    shape: 0.0,
                    ..base.pore_radius
                },
                ..base.clone()
            },
            "pore_radius.shape",
        ),
        (
            LatticeSpec {
                throat_radius: WeibullRange {
                    scale: -2.0,
                    ..base.throat_radius
                },
                ..base.clone()
            },
            "throat_radius.scale",
        ),
        (
            LatticeSpec {
                pore_shapes: ShapeMix {
                    triangle: 0.5,
                    ..base.pore_shapes
                },
                ..base.clone()
            },
            "pore_shapes.triangle + square + circle",
        ),
        (
            LatticeSpec {
                throat_shapes: ShapeMix {
                    triangle_g_min: 0.05,
                    ..base.throat_shapes
                },
                ..base.clone()
            },
            "throat_shapes.triangle_g_min",
        ),
        (
            LatticeSpec {
                regular: Some(RegularSpec {
                    pore_radius_m: 10e-6,
                    throat_radius_m: 12e-6,
                    pore_shape_factor: G_SQUARE,
                    throat_shape_factor: G_SQUARE,
                }),
                ..base.clone()
            },
            "regular.throat_radius_m",
        ),
        (
            LatticeSpec {
                regular: Some(RegularSpec {
                    pore_radius_m: 10e-6,
                    throat_radius_m: 5e-6,
                    pore_shape_factor: 0.09,
                    throat_shape_factor: G_SQUARE,
                }),
                ..base.clone()
            },
            "regular.pore_shape_factor",
        ),
    ];
    for (spec, name) in cases {
        assert_eq!(param_name(run(spec)), name);
    }

    let (min, max) = base.coordination_range();
    for z in [min - 0.01, max + 0.01, f64::NAN] {
        let err = run(LatticeSpec {
            target_coordination: z,
            ..base.clone()
        });
        assert!(
            matches!(err, GenerateError::CoordinationOutOfRange { .. }),
            "{err:?}"
        );
    }
    let err = run(LatticeSpec {
        spacing_m: 70e-6,
        ..base.clone()
    });
    assert_eq!(
        err,
        GenerateError::SpacingTooSmall {
            spacing_m: 70e-6,
            pore_radius_max_m: 40e-6
        }
    );
    let err = run(LatticeSpec {
        nx: 2000,
        ny: 2000,
        nz: 2000,
        ..base.clone()
    });
    assert!(matches!(err, GenerateError::TooLarge { .. }), "{err:?}");
    // The message names the parameter.
    let msg = run(LatticeSpec {
        nx: 0,
        ..base.clone()
    })
    .to_string();
    assert!(msg.contains("`nx`"), "{msg}");
}

#[test]
fn parameter_files_take_defaults_and_reject_unknown_fields() {
    let spec: LatticeSpec = toml::from_str(
        r#"
        nx = 8
        flow_axis = "y"
        seed = 7
        [pore_radius]
        min_m = 3e-6
        max_m = 30e-6
        shape = 2.0
        scale = 0.4
        "#,
    )
    .unwrap();
    let expect = LatticeSpec {
        nx: 8,
        flow_axis: Axis::Y,
        seed: 7,
        pore_radius: WeibullRange {
            min_m: 3e-6,
            max_m: 30e-6,
            shape: 2.0,
            scale: 0.4,
        },
        ..LatticeSpec::default()
    };
    assert_eq!(spec, expect);
    assert!(toml::from_str::<LatticeSpec>("n_x = 8").is_err());
    // A partial radius table is an error, not a silent mix of defaults.
    assert!(toml::from_str::<LatticeSpec>("[pore_radius]\nmin_m = 1e-6").is_err());
    // Round trip through JSON.
    let json = serde_json::to_string(&LatticeSpec::default()).unwrap();
    let back: LatticeSpec = serde_json::from_str(&json).unwrap();
    assert_eq!(back, LatticeSpec::default());
    // The defaults are valid.
    LatticeSpec::default().validate().unwrap();
}

/// CRC-32 of the bit patterns of every column, in a fixed order.
fn checksum(net: &Network) -> u32 {
    let mut h = crc32fast::Hasher::new();
    let p = net.pores();
    for col in [
        &p.x,
        &p.y,
        &p.z,
        &p.radius,
        &p.shape_factor,
        &p.volume,
        &p.clay_volume,
    ] {
        for v in col.iter() {
            h.update(&v.to_bits().to_le_bytes());
        }
    }
    h.update(&p.boundary.iter().map(|&b| b as u8).collect::<Vec<u8>>());
    let t = net.throats();
    for [a, b] in &t.pores {
        h.update(&a.to_le_bytes());
        h.update(&b.to_le_bytes());
    }
    for col in [
        &t.radius,
        &t.shape_factor,
        &t.volume,
        &t.clay_volume,
        &t.length,
        &t.conduit_a,
        &t.conduit_b,
    ] {
        for v in col.iter() {
            h.update(&v.to_bits().to_le_bytes());
        }
    }
    h.finalize()
}

#[test]
fn seed_maps_to_the_same_bits_on_every_machine() {
    // Regression golden, not a physics value: the checksum of a small
    // generated network, recorded when the generator was written. A change
    // means the seed → network mapping changed (a different machine's maths
    // library, a new rand/rand_chacha version, or a change of draw order);
    // update it only with a stated reason.
    let spec = LatticeSpec {
        clay_fraction: 0.05,
        ..cube(6)
    };
    let net = generate(&spec, &Silent).unwrap();
    assert_eq!(
        checksum(&net),
        GOLDEN_6_CUBED,
        "got {:#010x}",
        checksum(&net)
    );
}

const GOLDEN_6_CUBED: u32 = 0x716f_09d1;
