//! Displacement benchmarks: primary drainage, imbibition (with the
//! trapping-search cost on its own), full runs with relative permeability,
//! and a trapping sweep, on generated lattices (coordination 5).
//!
//! Run with `cargo bench -p ganglion-benches --bench displacement`; pick
//! parts and lattice edges with arguments, e.g. `-- drainage 22 46 100`,
//! `-- kr 46 100`, `-- kr-accuracy 30`, `-- sweep 46`, `-- memory 100`. Setup (generation, geometry) is not
//! timed. Prints seconds (median of the repeats), the cost-growth exponent
//! between the smallest and largest size, and peak resident memory
//! (VmHWM, reset before each measurement).

use std::time::Instant;

use ganglion_benches::{peak_rss_bytes, reset_peak_rss};
use network_core::Network;
use network_core::engine::{Engine, Setup};
use network_core::generate::{LatticeSpec, generate};
use network_core::geometry::Geometry;
use network_core::params::ImbibitionFaces;
use network_core::progress::Silent;
use network_core::run::process::run_process;
use network_core::run::run_study;
use network_core::study::{ProcessKind, StopAt, Study};
use network_core::sweep::{CaseResult, SweepStudy, summarise};
use network_core::wettability::ContactAngles;
use rayon::prelude::*;

const STUDY: &str = r#"
network = "generated"
seed = 3
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[boundary]
imbibition_faces = "both"
[mechanisms]
cooperative_weights = [2.0, 5.0, 10.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
kr_points = 20
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
kr_points = 20
"#;

fn lattice(n: usize) -> Network {
    let spec = LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        target_coordination: 5.0,
        seed: 1,
        ..LatticeSpec::default()
    };
    generate(&spec, &Silent).expect("lattice")
}

/// A fully water-saturated engine for the benchmark study (imbibition from
/// both faces).
fn engine<'a>(net: &'a Network, geom: &'a Geometry, study: &Study) -> Engine<'a> {
    let angles = ContactAngles::intrinsic(&study.wettability, net.n_elements(), study.seed);
    let setup = Setup {
        imbibition_faces: ImbibitionFaces::Both,
        ..Setup::of_study(net, geom, study)
    };
    Engine::new(setup, angles)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

struct Timing {
    n_pores: usize,
    drainage_s: f64,
    imbibition_s: f64,
    trapping_visits: u64,
    trapping_searches: u64,
    events: u64,
    peak_bytes_per_pore: f64,
}

fn displacement(n: usize, repeats: usize) -> Timing {
    let net = lattice(n);
    let study = Study::parse(STUDY).unwrap();
    let geom = Geometry::new(&net, study.seed);
    let mut dr = Vec::new();
    let mut im = Vec::new();
    let mut visits = (0, 0);
    let mut events = 0;
    let mut peak = 0.0;
    for _ in 0..repeats {
        reset_peak_rss();
        let base = peak_rss_bytes();
        let mut eng = engine(&net, &geom, &study);
        let t = Instant::now();
        let d = run_process(
            &mut eng,
            ProcessKind::Drainage,
            StopAt::Pc(1e5),
            40,
            &Silent,
        );
        dr.push(t.elapsed().as_secs_f64());
        eng.alter_wettability(&study.wettability);
        let before = eng.trapping_cost();
        let t = Instant::now();
        let i = run_process(
            &mut eng,
            ProcessKind::Imbibition,
            StopAt::Pc(-1e5),
            40,
            &Silent,
        );
        im.push(t.elapsed().as_secs_f64());
        let after = eng.trapping_cost();
        visits = (after.0 - before.0, after.1 - before.1);
        events = d.points.last().unwrap().events + i.points.last().unwrap().events;
        peak = (peak_rss_bytes().saturating_sub(base)) as f64 / net.n_pores() as f64;
    }
    Timing {
        n_pores: net.n_pores(),
        drainage_s: median(dr),
        imbibition_s: median(im),
        trapping_visits: visits.0,
        trapping_searches: visits.1,
        events,
        peak_bytes_per_pore: peak,
    }
}

/// Drainage and imbibition times per size; the trapping search is shown by
/// its own cost counter (elements visited by all split searches).
fn run_displacement(sizes: &[usize]) {
    println!("== drainage and imbibition (coordination 5, 40 pressure steps, Pc to ±1e5 Pa)");
    println!(
        "{:>9} {:>12} {:>13} {:>10} {:>14} {:>12} {:>14}",
        "pores", "drainage s", "imbibition s", "events", "trap visits", "searches", "peak B/pore"
    );
    let mut rows = Vec::new();
    for &n in sizes {
        let t = displacement(n, if n >= 80 { 1 } else { 3 });
        println!(
            "{:>9} {:>12.3} {:>13.3} {:>10} {:>14} {:>12} {:>14.0}",
            t.n_pores,
            t.drainage_s,
            t.imbibition_s,
            t.events,
            t.trapping_visits,
            t.trapping_searches,
            t.peak_bytes_per_pore
        );
        rows.push(t);
    }
    if rows.len() >= 2 {
        let (a, b) = (&rows[0], &rows[rows.len() - 1]);
        let r = (b.n_pores as f64 / a.n_pores as f64).ln();
        println!(
            "growth exponent {}→{} pores: drainage {:.3}, imbibition {:.3}, trapping visits {:.3}",
            a.n_pores,
            b.n_pores,
            (b.drainage_s / a.drainage_s).ln() / r,
            (b.imbibition_s / a.imbibition_s).ln() / r,
            (b.trapping_visits.max(1) as f64 / a.trapping_visits.max(1) as f64).ln() / r
        );
    }
}

fn run_kr(sizes: &[usize]) {
    println!("== full run: drainage + imbibition with 20 kr points each");
    println!(
        "{:>9} {:>10} {:>14} {:>12} {:>16}",
        "pores", "total s", "flow solves s", "solve share", "peak MB"
    );
    for &n in sizes {
        let net = lattice(n);
        let study = Study::parse(STUDY).unwrap();
        reset_peak_rss();
        let base = peak_rss_bytes();
        let t = Instant::now();
        let r = run_study(&net, &study, &Silent);
        let total = t.elapsed().as_secs_f64();
        println!(
            "{:>9} {:>10.2} {:>14.2} {:>11.0}% {:>16.0}",
            net.n_pores(),
            total,
            r.flow_solve_seconds,
            100.0 * r.flow_solve_seconds / total,
            (peak_rss_bytes().saturating_sub(base)) as f64 / 1e6
        );
        println!("  solves {:?}", r.flow_solve_stats);
        if !r.warnings.is_empty() {
            println!("  warnings: {:?}", r.warnings);
        }
    }
}

/// Largest differences of k_rw, k_rn and RI between runs at the default
/// solver tolerance and at 10⁻¹² (the justification of the default).
fn run_kr_accuracy(sizes: &[usize]) {
    println!("== kr accuracy: default solver tolerance against 1e-12");
    println!(
        "{:>9} {:>10} {:>12} {:>12} {:>12} {:>12} {:>9} {:>9}",
        "pores",
        "tolerance",
        "max |Δkrw|",
        "max |Δkrn|",
        "max rel Δkr",
        "max rel ΔRI",
        "its",
        "its 1e-12"
    );
    for &n in sizes {
        let net = lattice(n);
        let study = Study::parse(STUDY).unwrap();
        let mut tight = study.clone();
        tight.flow.solver_tolerance = 1e-12;
        let a = run_study(&net, &study, &Silent);
        let b = run_study(&net, &tight, &Silent);
        let (mut dw, mut dn, mut rel, mut rel_ri) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        for (oa, ob) in a.outcomes.iter().zip(&b.outcomes) {
            for (pa, pb) in oa.points.iter().zip(&ob.points) {
                let (Some(fa), Some(fb)) = (pa.flow, pb.flow) else {
                    continue;
                };
                dw = dw.max((fa.krw - fb.krw).abs());
                dn = dn.max((fa.krn - fb.krn).abs());
                for (x, y) in [(fa.krw, fb.krw), (fa.krn, fb.krn)] {
                    if y > 0.0 {
                        rel = rel.max((x - y).abs() / y);
                    }
                }
                if fb.ri.is_finite() {
                    rel_ri = rel_ri.max((fa.ri - fb.ri).abs() / fb.ri);
                }
            }
        }
        println!(
            "{:>9} {:>10.0e} {:>12.2e} {:>12.2e} {:>12.2e} {:>12.2e} {:>9} {:>9}",
            net.n_pores(),
            study.flow.solver_tolerance,
            dw,
            dn,
            rel,
            rel_ri,
            a.flow_solve_stats.iterations,
            b.flow_solve_stats.iterations
        );
    }
}

/// Resident memory, stage by stage, of a full run's pieces (MB above the
/// network): the engine, its drainage end state, the snapshot a kr pass
/// keeps, the flow solver and one kr point (peak during the solves).
fn run_memory(n: usize) {
    use network_core::run::relperm::RelpermSolver;
    let net = lattice(n);
    let study = Study::parse(STUDY).unwrap();
    let mb = |b: u64, base: u64| b.saturating_sub(base) as f64 / 1e6;
    println!(
        "== memory stages on {} pores (MB above the generated network)",
        net.n_pores()
    );
    reset_peak_rss();
    let base = ganglion_benches::rss_bytes();
    let geom = Geometry::new(&net, study.seed);
    println!(
        "  geometry              {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base)
    );
    let mut eng = engine(&net, &geom, &study);
    println!(
        "  + engine              {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base)
    );
    run_process(
        &mut eng,
        ProcessKind::Drainage,
        StopAt::Pc(1e5),
        40,
        &Silent,
    );
    println!(
        "  + drainage done       {:>8.0}   peak {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base),
        mb(peak_rss_bytes(), base)
    );
    let snap = eng.snapshot();
    println!(
        "  + snapshot            {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base)
    );
    drop(snap);
    let axis = net.info().flow_axis;
    let opts = network_core::flow::SolveOptions {
        tolerance: study.flow.solver_tolerance,
        ..Default::default()
    };
    let mut rp = RelpermSolver::new(&net, axis, opts, 1.0).unwrap();
    println!(
        "  + flow solver         {:>8.0}   peak {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base),
        mb(peak_rss_bytes(), base)
    );
    reset_peak_rss();
    rp.point(&eng).unwrap();
    println!(
        "  + one kr point        {:>8.0}   peak {:>8.0}",
        mb(ganglion_benches::rss_bytes(), base),
        mb(peak_rss_bytes(), base)
    );
}

fn run_sweep(n: usize) {
    let net = lattice(n);
    let text = format!(
        "{STUDY}\n[sweep]\ninitial_water_saturations = [0.95, 0.9, 0.8, 0.7, 0.6, 0.5, 0.4, 0.3, 0.2, 0.1]\nrealisations = 4\n"
    );
    let sweep = SweepStudy::parse(&text).unwrap();
    let cases = sweep.cases();
    let t = Instant::now();
    let full = run_study(&net, &Study::parse(STUDY).unwrap(), &Silent);
    let t_full = t.elapsed().as_secs_f64();
    let threads = rayon::current_num_threads();
    let t = Instant::now();
    let mut results = Vec::new();
    for chunk in cases.chunks(threads) {
        let part: Vec<CaseResult> = chunk
            .par_iter()
            .map(|c| CaseResult::from_run(c.clone(), &run_study(&net, &c.study(), &Silent)))
            .collect();
        results.extend(part);
    }
    let t_sweep = t.elapsed().as_secs_f64();
    let s = summarise(cases.len(), &results);
    println!(
        "== sweep: 10 initial saturations × 4 realisations on {} pores ({threads} threads)",
        net.n_pores()
    );
    println!(
        "one full run (kr included) {t_full:.2} s; sweep of {} cases {t_sweep:.2} s wall = {:.2}× one full run ({:.2}× per core); Land C {:?}",
        cases.len(),
        t_sweep / t_full,
        t_sweep * threads as f64 / t_full,
        s.land_coefficient
    );
    assert!(full.snr.is_some());
}

fn main() {
    let args: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with('-'))
        .collect();
    let part = args.first().map(String::as_str).unwrap_or("all");
    let sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    let pick = |d: &[usize]| {
        if sizes.is_empty() {
            d.to_vec()
        } else {
            sizes.clone()
        }
    };
    match part {
        "drainage" | "imbibition" | "displacement" => run_displacement(&pick(&[22, 46, 100])),
        "kr" => run_kr(&pick(&[46, 100])),
        "kr-accuracy" => run_kr_accuracy(&pick(&[30])),
        "sweep" => run_sweep(pick(&[46])[0]),
        "memory" => run_memory(pick(&[46])[0]),
        _ => {
            run_displacement(&pick(&[22, 46, 100]));
            run_kr(&pick(&[46, 100]));
            run_sweep(46);
        }
    }
}
