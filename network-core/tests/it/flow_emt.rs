//! Random resistor networks against effective-medium theory.

use crate::networks::{Lattice, uniform};
use network_core::flow::{PressureSystem, SolveInput, SolveOptions};
use network_core::{Boundary, Network};

/// Effective bond conductance of a transverse-periodic simple-cubic lattice
/// with conduit conductances `g(t)`: `Q (n − 1) / (n² Δp)` (the value a
/// uniform lattice of that bond conductance would give).
fn lattice_conductance(n: usize, g: impl Fn(usize) -> f64) -> (f64, f64) {
    let mut lat = Lattice::cube(n, 1e-4);
    lat.periodic = true;
    let net: Network = lat.build(|_| 1e-5);
    let inlet: Vec<bool> = net
        .pores()
        .boundary
        .iter()
        .map(|&b| b == Boundary::Inlet)
        .collect();
    let outlet: Vec<bool> = net
        .pores()
        .boundary
        .iter()
        .map(|&b| b == Boundary::Outlet)
        .collect();
    let conduit: Vec<f64> = (0..net.n_throats()).map(g).collect();
    let sol = PressureSystem::new(&net)
        .solve(
            &SolveInput {
                conduit_g: &conduit,
                active: &vec![true; net.n_pores()],
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &SolveOptions::default(),
        )
        .unwrap();
    (sol.inflow * (n - 1) as f64 / (n * n) as f64, sol.imbalance)
}

/// Root of the EMT condition for z = 6 (Kirkpatrick 1973):
/// Σ wᵢ (g_m − gᵢ)/(gᵢ + 2 g_m) = 0, by bisection (the sum increases with g_m).
fn emt(values: &[(f64, f64)]) -> f64 {
    let f = |gm: f64| -> f64 {
        values
            .iter()
            .map(|&(w, g)| w * (gm - g) / (g + 2.0 * gm))
            .sum()
    };
    let (mut lo, mut hi) = (1e-12, values.iter().map(|v| v.1).fold(0.0, f64::max));
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 { hi = mid } else { lo = mid }
    }
    0.5 * (lo + hi)
}

/// Lattice size. The lattice is periodic across the flow direction, so the
/// only boundary bias is the O(1/n) one of the two fixed-pressure faces
/// (Kirkpatrick 1973, Rev. Mod. Phys. 45:574; docs/physics.md §9). Measured with these seeds (release build):
/// mixture 4.139, 3.975, 4.074, 4.083, 4.033, 4.017 and dilution 0.512,
/// 0.546, 0.532, 0.554, 0.553, 0.552 for n = 8, 12, 16, 24, 32, 40 against
/// EMT 4 and 0.55: from n = 16 on the bias plus sample fluctuation stays
/// below 2% and 3.5%, inside the 3% and 8% tolerances. Debug builds use
/// n = 16 to stay fast.
const N: usize = if cfg!(debug_assertions) { 16 } else { 32 };

#[test]
fn binary_mixture_matches_effective_medium_theory() {
    // Source: Kirkpatrick (1973), Rev. Mod. Phys. 45:574–588: for z = 6,
    // ⟨(g_m − g)/(g + 2 g_m)⟩ = 0; a 50/50 mixture of 1 and 10 gives
    // g_m = 4 (check: 0.5·3/9 − 0.5·6/18 = 0). Tolerance 3% (task).
    let g_m = emt(&[(0.5, 1.0), (0.5, 10.0)]);
    assert!((g_m - 4.0).abs() < 1e-9);
    let (g, imbalance) = lattice_conductance(N, |t| {
        if uniform(1, t, 0.0, 1.0) < 0.5 {
            1.0
        } else {
            10.0
        }
    });
    assert!((g - g_m).abs() / g_m < 0.03, "lattice {g} vs EMT {g_m}");
    assert!(imbalance < 1e-8);
}

#[test]
fn diluted_lattice_matches_effective_medium_theory() {
    // Source: Kirkpatrick (1973), Rev. Mod. Phys. 45:574–588: bonds present
    // with probability p (others zero), z = 6: g_m = g (p − 2/z)/(1 − 2/z);
    // p = 0.7 gives 0.55 g, well above the bond threshold 0.2488 (Lorenz &
    // Ziff 1998, Phys. Rev. E 57:230–236). Tolerance 8% (task). Isolated and
    // dead-end clusters are excluded by the solver.
    let g_m = emt(&[(0.3, 0.0), (0.7, 1.0)]);
    assert!((g_m - (0.7 - 1.0 / 3.0) / (2.0 / 3.0)).abs() < 1e-9);
    let (g, imbalance) = lattice_conductance(N, |t| {
        if uniform(2, t, 0.0, 1.0) < 0.3 {
            0.0
        } else {
            1.0
        }
    });
    assert!((g - g_m).abs() / g_m < 0.08, "lattice {g} vs EMT {g_m}");
    assert!(imbalance < 1e-8);
}
