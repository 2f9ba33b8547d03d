//! Saturation profiles along the flow axis, the interior window and
//! drainage from every face (end effects, issue 12).

use crate::networks::Lattice;
use network_core::Network;
use network_core::engine::Engine;
use network_core::generate::{LatticeSpec, generate};
use network_core::geometry::Geometry;
use network_core::progress::Silent;
use network_core::run::process::run_process;
use network_core::run::profiles::ProfileLayout;
use network_core::run::{RunResults, run_study};
use network_core::study::{DrainageFaces, ProcessKind, StopAt, Study};

/// Sandstone-like generated lattice (the generator's defaults).
fn sandstone_like(n: usize, seed: u64) -> Network {
    let spec = LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        seed,
        ..LatticeSpec::default()
    };
    generate(&spec, &Silent).expect("lattice")
}

/// Water-wet drainage (stop line given) then imbibition to −100 kPa, with
/// `extra` lines in `[boundary]` and `[output]`.
fn study(drainage_stop: &str, boundary: &str, output: &str, kr: bool) -> Study {
    Study::parse(&format!(
        r#"
network = "unused"
seed = 4
[boundary]
imbibition_faces = "both"
{boundary}
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[flow]
relative_permeability = {kr}
[output]
{output}
[[process]]
kind = "drainage"
{drainage_stop}
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
"#
    ))
    .expect("study")
}

/// Pore-volume-weighted mean of the slab saturations of point `k` of
/// process `i`.
fn integrated_sw(r: &RunResults, i: usize, k: usize) -> f64 {
    let layout = r.profile_layout.as_ref().expect("layout");
    let p = &r.profiles[i][k];
    let pv = &layout.slab_pore_volume_m3;
    let w: f64 = p.slab_sw.iter().zip(pv).map(|(s, v)| s * v).sum();
    w / pv.iter().sum::<f64>()
}

#[test]
fn profile_integrates_to_the_reported_saturation_at_every_point() {
    // Analytic derivation: the slabs partition the elements, so the
    // pore-volume-weighted mean of the slab saturations is Σ water / Σ pore
    // volume, the whole-sample Sw. The reported Sw is the engine's
    // incremental sum, equal to the element-by-element sum to 1e-11 (the
    // tolerance of the accounting tests); slab pore volumes sum to the
    // network's pore volume to round-off.
    let net = sandstone_like(10, 3);
    for kr in [false, true] {
        let s = study("until_sw = 0.8", "", "interior_window = [0.1, 0.9]", kr);
        let r = run_study(&net, &s, &Silent);
        let layout = r.profile_layout.as_ref().unwrap();
        let pv: f64 = layout.slab_pore_volume_m3.iter().sum();
        assert!((pv / net.pore_volume() - 1.0).abs() < 1e-12);
        assert_eq!(r.profiles.len(), r.outcomes.len());
        for (i, o) in r.outcomes.iter().enumerate() {
            assert_eq!(r.profiles[i].len(), o.points.len(), "process {i}");
            for (k, p) in o.points.iter().enumerate() {
                assert_eq!(r.profiles[i][k].slab_sw.len(), 10);
                let sw = integrated_sw(&r, i, k);
                assert!(
                    (sw - p.saturation.sw).abs() < 1e-11,
                    "kr {kr}, process {i} point {k}: profile {sw} vs reported {}",
                    p.saturation.sw
                );
            }
        }
    }
}

#[test]
fn profile_matches_the_engine_full_sum_to_round_off() {
    // Analytic derivation as above, against the element-by-element
    // reference `saturation_full` at the same state: the same per-element
    // volumes summed in another grouping, so equal to round-off.
    let net = sandstone_like(10, 5);
    let s = study("until_sw = 0.6", "", "profile_slabs = 7", false);
    let geom = Geometry::new(&net, s.seed);
    let mut eng = Engine::for_study(&net, &geom, &s);
    run_process(
        &mut eng,
        ProcessKind::Drainage,
        StopAt::Sw(0.6),
        20,
        &Silent,
    );
    let layout = ProfileLayout::new(&net, net.info().flow_axis, &s.output);
    let (slabs, _) = layout.slab_volumes(&eng);
    let water: f64 = slabs.iter().map(|s| s.water).sum();
    let pore: f64 = slabs.iter().map(|s| s.pore).sum();
    let full = eng.saturation_full().sw;
    assert!(
        (water / pore - full).abs() < 1e-14,
        "{} vs {full}",
        water / pore
    );
    assert!(full < 0.61 && full > 0.5);
}

#[test]
fn recorded_volumes_match_the_full_sum_after_imbibition_too() {
    // region_volumes and element_water_saturations take the water of fast
    // and frozen (trapped) elements from the running records; after an
    // imbibition with trapping both must still agree with the element-by-
    // element reference `saturation_full` (same volumes, other grouping;
    // the per-element values are single precision, 2^-24 relative).
    let net = sandstone_like(10, 5);
    let s = study("until_sw = 0.3", "", "profile_slabs = 7", false);
    let geom = Geometry::new(&net, s.seed);
    let mut eng = Engine::for_study(&net, &geom, &s);
    run_process(
        &mut eng,
        ProcessKind::Drainage,
        StopAt::Sw(0.3),
        20,
        &Silent,
    );
    run_process(
        &mut eng,
        ProcessKind::Imbibition,
        StopAt::Pc(-1.0e5),
        20,
        &Silent,
    );
    let full = eng.saturation_full();
    assert!(
        full.sn_trapped > 0.01,
        "the test needs trapped oil: {full:?}"
    );
    let layout = ProfileLayout::new(&net, net.info().flow_axis, &s.output);
    let (slabs, _) = layout.slab_volumes(&eng);
    let water: f64 = slabs.iter().map(|s| s.water).sum();
    let pore: f64 = slabs.iter().map(|s| s.pore).sum();
    assert!(
        (water / pore - full.sw).abs() < 1e-13,
        "{} vs {}",
        water / pore,
        full.sw
    );
    let per = eng.element_water_saturations();
    assert_eq!(per.len(), net.n_elements());
    let (mut w, mut pv) = (0.0, 0.0);
    for (e, &sw) in per.iter().enumerate() {
        let v = eng.element_volumes(e);
        w += f64::from(sw) * (v.water + v.oil);
        pv += v.water + v.oil;
    }
    assert!((w / pv - full.sw).abs() < 1e-6, "{} vs {}", w / pv, full.sw);
}

#[test]
fn interior_window_differs_from_whole_sample_under_an_inlet_end_effect() {
    // Common practice (the capillary end effect of core floods, Hassler &
    // Brunner 1945): a drainage from the inlet stopped at Sw = 0.8 is below
    // the percolation threshold of the sample, so the invaded region hangs
    // from the inlet face: the inlet slab holds much more of the
    // non-aqueous phase than the outlet slab, and leaving out the end
    // slabs changes Sni. Where there is no end effect (the fully
    // water-saturated start) both are 1 (analytic).
    let net = sandstone_like(14, 2);
    let s = study("until_sw = 0.8", "", "interior_window = [0.1, 0.9]", false);
    let r = run_study(&net, &s, &Silent);
    let first = r.profiles[0][0].interior.unwrap();
    assert_eq!(first.sw, 1.0);
    assert!((r.outcomes[0].points[0].saturation.sw - 1.0).abs() < 1e-12);
    let last = r.profiles[0].last().unwrap();
    let (inlet, outlet) = (last.slab_sw[0], last.slab_sw[9]);
    assert!(
        inlet + 0.2 < outlet,
        "inlet slab {inlet}, outlet slab {outlet}"
    );
    let e = &r.end_effects;
    let (whole, interior) = (
        e.whole_sample.sni.unwrap(),
        e.interior.unwrap().sni.unwrap(),
    );
    assert!(
        (whole - interior).abs() > 0.02,
        "whole Sni {whole}, interior {interior}"
    );
    assert_eq!(e.interior_window.as_ref().unwrap().fraction, [0.1, 0.9]);
    assert_eq!(e.drainage_faces, DrainageFaces::Inlet);
}

/// A 6³ lattice of identical square pores and throats (R = 20 µm, G =
/// 1/16), no clay.
fn uniform_square_lattice() -> Network {
    let mut l = Lattice::cube(6, 100e-6);
    l.pore_radius = 20e-6;
    let net = l.build(|_| 20e-6);
    let (info, mut pores, mut throats) = net.into_parts();
    let g = 1.0 / 16.0;
    let area = 4.0 * 20e-6 * 20e-6; // A = R²/(4G) of a square
    pores.shape_factor.iter_mut().for_each(|x| *x = g);
    pores.volume.iter_mut().for_each(|v| *v = area * 40e-6);
    throats.shape_factor.iter_mut().for_each(|x| *x = g);
    throats.volume.iter_mut().for_each(|v| *v = area * 60e-6);
    Network::new(info, pores, throats).expect("valid")
}

#[test]
fn interior_window_agrees_with_whole_sample_in_a_uniform_state() {
    // Analytic derivation: after drainage to 20 kPa every element of a
    // lattice of identical squares (R = 20 µm, θr = 0, entry pressure
    // (σ/R)(1 + 2√(πG)) ≈ 2.8 kPa, Mayer–Stowe–Princen) is invaded, its corner water connected by films (θ < π/4)
    // and receding to r = σ/Pc; in the prism model each element then holds
    // the same water fraction of its volume (it depends on r/R, G, β and θ
    // only), so every slab and the window have the same Sw as the whole
    // sample, while the fully water-saturated start has Sw = 1 everywhere.
    let net = uniform_square_lattice();
    let s = Study::parse(
        r#"
network = "unused"
[flow]
relative_permeability = false
[output]
interior_window = [0.2, 0.7]
[[process]]
kind = "drainage"
until_pc_pa = 2.0e4
"#,
    )
    .unwrap();
    let r = run_study(&net, &s, &Silent);
    let end = r.profiles[0].last().unwrap();
    let whole = r.outcomes[0].final_saturation.sw;
    assert!(whole > 0.0 && whole < 0.2, "drained: Sw = {whole}");
    let interior = end.interior.unwrap().sw;
    assert!((interior - whole).abs() < 1e-12, "{interior} vs {whole}");
    for &sw in &end.slab_sw {
        assert!((sw - whole).abs() < 1e-12, "slab {sw} vs {whole}");
    }
    assert_eq!(r.end_effects.interior.unwrap().swi, Some(interior));
}

#[test]
fn drainage_from_all_faces_enters_by_every_face_pore() {
    // Analytic count: on a 6³ lattice of circular pores (R = 30 µm) joined
    // by circular throats (5 µm), a Pc between the pore entry 2σ/R = 2 kPa
    // and the throat entry 2σ/r = 12 kPa invades exactly the pores the
    // non-aqueous phase reaches directly: the 36 inlet pores, or the
    // 6³ − 4³ = 152 pores of the six faces.
    let net = Lattice::cube(6, 100e-6).build(|_| 5e-6);
    for (faces, expected) in [("inlet", 36), ("all", 152)] {
        let s = Study::parse(&format!(
            r#"
network = "unused"
[boundary]
drainage_faces = "{faces}"
[[process]]
kind = "drainage"
until_pc_pa = 5.0e3
"#
        ))
        .unwrap();
        let geom = Geometry::new(&net, s.seed);
        let mut eng = Engine::for_study(&net, &geom, &s);
        run_process(
            &mut eng,
            ProcessKind::Drainage,
            StopAt::Pc(5.0e3),
            5,
            &Silent,
        );
        let invaded = eng.state().oil.iter().filter(|&&o| o).count();
        assert_eq!(invaded, expected, "drainage_faces = {faces}");
    }
}

#[test]
fn drainage_from_all_faces_removes_the_inlet_to_outlet_gradient() {
    // Common practice: a sample surrounded by the non-aqueous phase drains
    // symmetrically, so at Sw = 0.8 the two end slabs along the flow axis
    // hold similar saturations (both below the interior's), unlike a
    // drainage from the inlet.
    let net = sandstone_like(14, 2);
    let s = study("until_sw = 0.8", "drainage_faces = \"all\"", "", false);
    let r = run_study(&net, &s, &Silent);
    let last = r.profiles[0].last().unwrap();
    let (a, b) = (last.slab_sw[0], last.slab_sw[9]);
    let mid = last.slab_sw[4..6].iter().sum::<f64>() / 2.0;
    assert!((a - b).abs() < 0.15, "end slabs {a} and {b}");
    assert!(a < mid && b < mid, "ends {a}, {b}; middle {mid}");
    assert_eq!(r.end_effects.drainage_faces, DrainageFaces::All);
    assert!(r.end_effects.interior.is_none());
    assert_eq!(r.processes[0].breakthrough_pc_pa, None);
}

#[test]
fn profiles_are_identical_with_one_and_two_threads() {
    let net = sandstone_like(16, 8);
    let s = study(
        "until_sw = 0.5",
        "drainage_faces = \"all\"",
        "interior_window = [0.25, 0.75]",
        false,
    );
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                let r = run_study(&net, &s, &Silent);
                serde_json::to_string(&(&r.profiles, &r.end_effects)).unwrap()
            })
    };
    assert_eq!(run(1), run(2));
}
