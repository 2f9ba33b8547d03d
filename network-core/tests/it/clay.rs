//! Per-element clay fractions of the generator: the requested law, the
//! requested tie to element size, the old bits without a spread.

use network_core::Network;
use network_core::generate::{IrregularSpec, LatticeSpec, generate};
use network_core::progress::Silent;

/// Clay fraction `V_clay/(V_clay + V)` of every element (pores, then
/// throats) and its inscribed radius.
fn fractions(net: &Network) -> (Vec<f64>, Vec<f64>) {
    let (p, t) = (net.pores(), net.throats());
    let f = |c: f64, v: f64| c / (c + v);
    let fr = (0..p.radius.len())
        .map(|i| f(p.clay_volume[i], p.volume[i]))
        .chain((0..t.radius.len()).map(|i| f(t.clay_volume[i], t.volume[i])))
        .collect();
    let r = p.radius.iter().chain(t.radius.iter()).copied().collect();
    (fr, r)
}

/// Kolmogorov–Smirnov distance of `x` from the uniform law on `[lo, hi]`.
fn ks_uniform(x: &[f64], lo: f64, hi: f64) -> f64 {
    let mut v = x.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    v.iter()
        .enumerate()
        .map(|(i, &xi)| {
            let c = ((xi - lo) / (hi - lo)).clamp(0.0, 1.0);
            (c - i as f64 / n).abs().max(((i + 1) as f64 / n - c).abs())
        })
        .fold(0.0, f64::max)
}

/// Ranks 0..n (no ties expected).
fn ranks(x: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..x.len()).collect();
    idx.sort_by(|&a, &b| x[a].total_cmp(&x[b]));
    let mut r = vec![0.0; x.len()];
    for (k, &i) in idx.iter().enumerate() {
        r[i] = k as f64;
    }
    r
}

/// Spearman rank correlation of two samples without ties.
fn spearman(a: &[f64], b: &[f64]) -> f64 {
    let (ra, rb) = (ranks(a), ranks(b));
    let n = a.len() as f64;
    let m = (n - 1.0) / 2.0;
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for i in 0..a.len() {
        let (x, y) = (ra[i] - m, rb[i] - m);
        sab += x * y;
        saa += x * x;
        sbb += y * y;
    }
    sab / (saa * sbb).sqrt()
}

fn irregular(spread: f64, rho: f64) -> LatticeSpec {
    LatticeSpec {
        nx: 16,
        ny: 16,
        nz: 16,
        clay_fraction: 0.2,
        clay_fraction_spread: spread,
        clay_size_correlation: rho,
        irregular: Some(IrregularSpec::default()),
        ..LatticeSpec::default()
    }
}

#[test]
fn clay_fractions_follow_the_requested_law_and_size_tie() {
    // Statistical basis: for n independent draws from a continuous law the
    // Kolmogorov–Smirnov distance exceeds 1.95/√n with probability 0.001
    // (asymptotic Kolmogorov distribution); the Spearman correlation of n
    // pairs has a standard error of at most 1/√(n − 1) (exactly that for
    // independent pairs, less under dependence), asked within 4 of them.
    // Under the Gaussian copula with parameter ρ the population Spearman
    // correlation is (6/π) asin(ρ/2) (Kruskal 1958); the fraction falls
    // with the radius, hence the minus sign. The irregular generator gives
    // continuous radii (throat = random ratio × smaller pore), so no ties.
    for rho in [0.0, 0.8, -0.5] {
        let net = generate(&irregular(0.1, rho), &Silent).unwrap();
        let (f, r) = fractions(&net);
        let n = f.len() as f64;
        let d = ks_uniform(&f, 0.1, 0.3);
        assert!(d < 1.95 / n.sqrt(), "ρ {rho}: KS distance {d}, n {n}");
        assert!(f.iter().all(|&x| (0.1 - 1e-12..=0.3 + 1e-12).contains(&x)));
        let s = spearman(&f, &r);
        let want = -(6.0 / std::f64::consts::PI) * (rho / 2.0f64).asin();
        assert!(
            (s - want).abs() < 4.0 / (n - 1.0).sqrt(),
            "ρ {rho}: Spearman {s}, expected {want}"
        );
    }
}

#[test]
fn no_spread_keeps_one_fraction_and_the_old_bits() {
    // Analytic: without a spread every element gets V_clay = f/(1 − f) V,
    // so V_clay/(V_clay + V) = f to round-off; and the spread keys at 0
    // change nothing else (same radii, shapes, volumes).
    for irr in [None, Some(IrregularSpec::default())] {
        let spec = LatticeSpec {
            nx: 8,
            ny: 8,
            nz: 8,
            clay_fraction: 0.15,
            irregular: irr,
            ..LatticeSpec::default()
        };
        let net = generate(&spec, &Silent).unwrap();
        let (f, _) = fractions(&net);
        assert!(f.iter().all(|&x| (x - 0.15).abs() < 1e-14));
        let spread = generate(
            &LatticeSpec {
                clay_fraction_spread: 0.05,
                ..spec.clone()
            },
            &Silent,
        )
        .unwrap();
        assert_eq!(net.pores().radius, spread.pores().radius);
        assert_eq!(net.throats().volume, spread.throats().volume);
        assert_ne!(net.pores().clay_volume, spread.pores().clay_volume);
    }
}

#[test]
fn clay_spread_gives_the_same_bits_on_one_and_two_threads() {
    let pool = |n| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
    };
    for spec in [
        irregular(0.1, 0.7),
        LatticeSpec {
            irregular: None,
            ..irregular(0.1, 0.7)
        },
    ] {
        let run = || {
            let net = generate(&spec, &Silent).unwrap();
            let bits: Vec<u64> = net
                .pores()
                .clay_volume
                .iter()
                .chain(net.throats().clay_volume.iter())
                .map(|x| x.to_bits())
                .collect();
            bits
        };
        assert_eq!(pool(1).install(run), pool(2).install(run));
    }
}

#[test]
fn bad_clay_spread_keys_are_refused_with_their_value() {
    let e = generate(&irregular(0.25, 0.0), &Silent)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("clay_fraction_spread") && e.contains("0.25"),
        "{e}"
    );
    let e = generate(&irregular(0.0, 0.5), &Silent)
        .unwrap_err()
        .to_string();
    assert!(e.contains("clay_size_correlation"), "{e}");
    let e = generate(&irregular(0.1, 1.5), &Silent)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("clay_size_correlation") && e.contains("1.5"),
        "{e}"
    );
}

#[test]
fn inverse_normal_cdf_inverts_the_cdf() {
    // Analytic: Φ⁻¹(Φ(z)) = z; Φ⁻¹(0.975) = 1.959963984540054 (standard
    // tables).
    use network_core::numeric::{inverse_normal_cdf, normal_cdf};
    for z in [-6.0, -2.5, -0.3, 0.0, 0.7, 3.1, 5.5] {
        assert!((inverse_normal_cdf(normal_cdf(z)) - z).abs() < 1e-9, "{z}");
    }
    assert!((inverse_normal_cdf(0.975) - 1.959963984540054).abs() < 1e-12);
}
