//! Pressure-solve benchmark: random-radius lattices of ~10⁵ and ~10⁶ pores.
//!
//! Run with `cargo bench -p ganglion-benches --bench solver` (both sizes) or
//! append `-- 47` / `-- 100` for one lattice edge, and solver-name prefixes
//! (`-- 100 rs-amg`) to run only those. Prints, per
//! preconditioner: cold-solve iterations, residual and time; a warm re-solve
//! after changing 1% of the conduit conductances (random factor in
//! [0.5, 2]) against a cold solve of the same changed system; the heap of
//! the pressure system; the peak resident memory (VmHWM) of the process
//! right after the cold solve ("HWM MB"; for the first solver of a size
//! this is network + one system + setup transients; later rows carry the
//! peak of earlier ones, when two systems were alive for the comparison).

use std::f64::consts::PI;
use std::time::Instant;

use network_core::connectivity::Components;
use network_core::flow::{
    AmgOptions, FlowSolution, Method, Preconditioner, PressureSystem, Smoother, SolveInput,
    SolveOptions, conduit_conductances, element_hydraulic_conductances,
};
use network_core::geometry::{G_CIRCLE, G_SQUARE};
use network_core::numeric::unit_hash;
use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

/// A simple-cubic lattice of `n³` pores (spacing 100 µm) with 1/6 of the
/// bonds removed at random (mean coordination 5) and log-uniform throat
/// radii between 2 and 20 µm; flow along z.
fn lattice(n: usize, seed: u64) -> Network {
    let s = 1e-4;
    let idx = |i: usize, j: usize, k: usize| (i + n * (j + n * k)) as u32;
    let mut pores = Pores::with_capacity(n * n * n);
    for k in 0..n {
        for j in 0..n {
            for i in 0..n {
                let r = 2.5e-5 + 1.5e-5 * unit_hash(seed, 1, idx(i, j, k) as u64);
                pores.x.push(i as f64 * s);
                pores.y.push(j as f64 * s);
                pores.z.push(k as f64 * s);
                pores.radius.push(r);
                pores.shape_factor.push(G_CIRCLE);
                pores.volume.push(4.0 / 3.0 * PI * r * r * r);
                pores.clay_volume.push(0.0);
                pores.boundary.push(if k == 0 {
                    Boundary::Inlet
                } else if k == n - 1 {
                    Boundary::Outlet
                } else {
                    Boundary::Interior
                });
            }
        }
    }
    let mut throats = Throats::with_capacity(3 * n * n * n);
    let mut bond = 0u64;
    for k in 0..n {
        for j in 0..n {
            for i in 0..n {
                let c = [i, j, k];
                for d in 0..3 {
                    if c[d] + 1 >= n {
                        continue;
                    }
                    bond += 1;
                    if unit_hash(seed, 2, bond) < 1.0 / 6.0 {
                        continue;
                    }
                    let mut e = c;
                    e[d] += 1;
                    let a = idx(c[0], c[1], c[2]);
                    let b = idx(e[0], e[1], e[2]);
                    let r = 2e-6 * 10f64.powf(unit_hash(seed, 3, bond));
                    let g = if unit_hash(seed, 4, bond) < 0.5 {
                        G_CIRCLE
                    } else {
                        G_SQUARE
                    };
                    let la = 0.8 * pores.radius[a as usize];
                    let lb = 0.8 * pores.radius[b as usize];
                    throats.pores.push([a, b]);
                    throats.radius.push(r);
                    throats.shape_factor.push(g);
                    throats.volume.push(r * r / (4.0 * g) * (s - la - lb));
                    throats.clay_volume.push(0.0);
                    throats.length.push(s);
                    throats.conduit_a.push(la);
                    throats.conduit_b.push(lb);
                }
            }
        }
    }
    let e = n as f64 * s;
    let info = NetworkInfo {
        name: format!("bench lattice {n}^3"),
        flow_axis: Axis::Z,
        length_m: (n - 1) as f64 * s,
        area_m2: e * e,
        bulk_volume_m3: e * e * e,
        extent_m: Some([e, e, e]),
        description: None,
    };
    Network::new(info, pores, throats).expect("valid bench lattice")
}

/// Peak resident set size of this process, MB (VmHWM of /proc/self/status).
fn peak_rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines().find(|l| l.starts_with("VmHWM:")).and_then(|l| {
                l.split_whitespace()
                    .nth(1)
                    .and_then(|v| v.parse::<f64>().ok())
            })
        })
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

/// CPU time (user + system, all threads) of this process, s, from
/// /proc/self/stat (clock ticks of 1/100 s).
fn cpu_seconds() -> f64 {
    std::fs::read_to_string("/proc/self/stat")
        .ok()
        .and_then(|s| {
            let rest = s.rsplit_once(')')?.1;
            let f: Vec<&str> = rest.split_whitespace().collect();
            let u: f64 = f.get(11)?.parse().ok()?;
            let k: f64 = f.get(12)?.parse().ok()?;
            Some((u + k) / 100.0)
        })
        .unwrap_or(f64::NAN)
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    let filters: Vec<String> = args
        .iter()
        .filter(|a| a.parse::<usize>().is_err() && !a.starts_with('-'))
        .cloned()
        .collect();
    if sizes.is_empty() {
        sizes = vec![47, 100];
    }
    println!("threads: {}", rayon::current_num_threads());
    for n in sizes {
        let t = Instant::now();
        let net = lattice(n, 42);
        let mut conduit = vec![0.0; net.n_throats()];
        conduit_conductances(
            &net,
            &element_hydraulic_conductances(&net, 1e-3),
            &mut conduit,
        )
        .expect("sizes match");
        let active = Components::of(&net).spanning_mask();
        let b = &net.pores().boundary;
        let inlet: Vec<bool> = b.iter().map(|&x| x == Boundary::Inlet).collect();
        let outlet: Vec<bool> = b.iter().map(|&x| x == Boundary::Outlet).collect();
        // 1% of the conduits changed by a factor in [0.5, 2].
        let mut changed = conduit.clone();
        let mut n_changed = 0;
        for (th, g) in changed.iter_mut().enumerate() {
            if unit_hash(7, 5, th as u64) < 0.01 {
                *g *= 0.5 * 4f64.powf(unit_hash(7, 6, th as u64));
                n_changed += 1;
            }
        }
        println!(
            "\n== lattice {n}^3: {} pores, {} throats (mean coordination {:.2}), setup {:.2} s, {} conduits changed",
            net.n_pores(),
            net.n_throats(),
            2.0 * net.n_throats() as f64 / net.n_pores() as f64,
            t.elapsed().as_secs_f64(),
            n_changed
        );
        let amg = |method: Method, smoother: Smoother| {
            Preconditioner::Amg(AmgOptions {
                method,
                smoother,
                ..AmgOptions::default()
            })
        };
        let mut cases: Vec<(&str, Preconditioner)> = vec![
            ("jacobi-cg", Preconditioner::Jacobi),
            (
                "sa-amg(gs)-cg",
                amg(Method::SmoothedAggregation, Smoother::GaussSeidel),
            ),
            (
                "sa-amg(jacobi)-cg",
                amg(Method::SmoothedAggregation, Smoother::Jacobi),
            ),
            (
                "pa-amg(gs)-cg",
                amg(Method::PlainAggregation, Smoother::GaussSeidel),
            ),
            (
                "pa-amg(jacobi)-cg",
                amg(Method::PlainAggregation, Smoother::Jacobi),
            ),
            (
                "rs-amg(gs)-cg",
                amg(Method::Classical, Smoother::GaussSeidel),
            ),
            (
                "rs-amg(jacobi)-cg",
                amg(Method::Classical, Smoother::Jacobi),
            ),
        ];
        if !filters.is_empty() {
            cases.retain(|c| filters.iter().any(|f| c.0.starts_with(f.as_str())));
        }
        println!(
            "{:<18} {:>5} {:>8} {:>6} {:>5} | {:>13} | {:>5} {:>13} | {:>5} {:>13} {:>7} | {:>6} {:>7}",
            "solver",
            "iters",
            "resid",
            "levels",
            "opc",
            "cold wall/cpu",
            "c2 it",
            "cold2 wall/cpu",
            "w it",
            "warm wall/cpu",
            "speedup",
            "sys MB",
            "HWM MB"
        );
        let timed = |f: &mut dyn FnMut() -> FlowSolution| {
            let (t, c) = (Instant::now(), cpu_seconds());
            let sol = f();
            (sol, t.elapsed().as_secs_f64(), cpu_seconds() - c)
        };
        for (name, pre) in cases {
            let opts = SolveOptions {
                preconditioner: pre,
                ..SolveOptions::default()
            };
            let mut sys = PressureSystem::new(&net);
            let (cold, t_cold, c_cold) = timed(&mut || {
                sys.solve(
                    &SolveInput {
                        conduit_g: &conduit,
                        active: &active,
                        inlet: &inlet,
                        outlet: &outlet,
                        p_in: 1.0,
                        p_out: 0.0,
                        warm_start: None,
                    },
                    &opts,
                )
                .expect("cold solve")
            });
            let sys_mb = sys.heap_bytes() as f64 / 1e6;
            let hwm_one = peak_rss_mb();
            let (warm, t_warm, c_warm) = timed(&mut || {
                sys.solve(
                    &SolveInput {
                        conduit_g: &changed,
                        active: &active,
                        inlet: &inlet,
                        outlet: &outlet,
                        p_in: 1.0,
                        p_out: 0.0,
                        warm_start: Some(&cold.pressure),
                    },
                    &opts,
                )
                .expect("warm solve")
            });
            let mut sys2 = PressureSystem::new(&net);
            let (cold2, t_cold2, c_cold2) = timed(&mut || {
                sys2.solve(
                    &SolveInput {
                        conduit_g: &changed,
                        active: &active,
                        inlet: &inlet,
                        outlet: &outlet,
                        p_in: 1.0,
                        p_out: 0.0,
                        warm_start: None,
                    },
                    &opts,
                )
                .expect("cold solve of the changed system")
            });
            drop(sys2);
            assert!(cold.imbalance < 1e-8 && warm.imbalance < 1e-8);
            assert!((warm.inflow - cold2.inflow).abs() <= 1e-8 * cold2.inflow);
            println!(
                "{name:<18} {:>5} {:>8.1e} {:>6} {:>5.2} | {:>6.3}/{:<6.2} | {:>5} {:>6.3}/{:<6.2} | {:>5} {:>6.3}/{:<6.2} {:>7.2} | {:>6.0} {:>7.0}",
                cold.iterations,
                cold.relative_residual,
                cold.amg_levels,
                cold.operator_complexity,
                t_cold,
                c_cold,
                cold2.iterations,
                t_cold2,
                c_cold2,
                warm.iterations,
                t_warm,
                c_warm,
                t_cold2 / t_warm,
                sys_mb,
                hwm_one
            );
        }
        println!(
            "network {:.0} MB; peak resident memory so far (VmHWM): {:.0} MB",
            net.heap_bytes() as f64 / 1e6,
            peak_rss_mb()
        );
    }
}
