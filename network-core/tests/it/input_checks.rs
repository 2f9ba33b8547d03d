//! Each input-sanity warning of a run (`run::input_checks`) triggered by
//! its case, and not by a sound study on the same network.

use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::run_study;
use network_core::study::Study;

fn lattice(spacing_m: f64) -> Network {
    let spec = LatticeSpec {
        nx: 5,
        ny: 5,
        nz: 6,
        spacing_m,
        seed: 5,
        // Connate water held in clay, so that the cycle starts from a
        // reservoir-like Sw and no model-limit warning mixes in.
        clay_fraction: 0.15,
        ..LatticeSpec::default()
    };
    generate(&spec, &Silent).unwrap()
}

fn study(extra: &str, processes: &[(&str, f64)]) -> Study {
    let mut t = format!("network = \"n\"\n{extra}\n[flow]\nrelative_permeability = false\n");
    for (kind, pc) in processes {
        t.push_str(&format!(
            "[[process]]\nkind = \"{kind}\"\nuntil_pc_pa = {pc:e}\npc_steps = 5\n"
        ));
    }
    Study::parse(&t).unwrap()
}

/// The run's warnings about its inputs: the end-effect warning of an
/// inlet-only drainage (a model limit, tested in `model_limits`) is left
/// out.
fn warnings(net: &Network, s: &Study) -> Vec<String> {
    run_study(net, s, &Silent)
        .warnings
        .into_iter()
        .filter(|w| !w.contains("not uniform along the flow axis"))
        .collect()
}

const CYCLE: &[(&str, f64)] = &[
    ("drainage", 1.0e5),
    ("imbibition", -1.0e5),
    ("drainage", 1.0e5),
];

#[test]
fn a_sound_cycle_raises_no_input_warning() {
    let w = warnings(&lattice(100e-6), &study("", CYCLE));
    assert!(w.is_empty(), "{w:?}");
}

#[test]
fn drainage_target_written_in_kpa_as_pa_is_warned_with_the_entry_pressure() {
    // until_pc_pa = 100 meant as 100 kPa. The widest pore of the default
    // lattice has r = 40 µm; with σ = 0.03 N/m and θ = 0 its entry pressure
    // is at least σ/r = 750 Pa (the Young–Laplace bound for a slit, the
    // lowest of any shape; analytic derivation), well above 100 Pa.
    let r = run_study(
        &lattice(100e-6),
        &study("", &[("drainage", 100.0), ("imbibition", -1.0e5)]),
        &Silent,
    );
    // No oil entered (bookkeeping noise aside).
    assert!(r.sni.unwrap() < 1e-12, "{:?}", r.sni);
    let w: Vec<_> = r
        .warnings
        .iter()
        .filter(|w| w.contains("below the lowest entry pressure"))
        .collect();
    assert_eq!(w.len(), 1, "{:?}", r.warnings);
    assert!(w[0].contains("process 1 (drainage)"), "{}", w[0]);
    let lowest: f64 = w[0]
        .split("enters from, ")
        .nth(1)
        .and_then(|x| x.split(" Pa").next())
        .and_then(|x| x.parse().ok())
        .unwrap();
    assert!(lowest > 750.0, "{lowest}");
}

#[test]
fn imbibition_target_above_its_start_is_warned() {
    let w = warnings(
        &lattice(100e-6),
        &study("", &[("drainage", 1.0e4), ("imbibition", 2.0e4)]),
    );
    assert!(
        w.iter()
            .any(|w| w.contains("process 2 (imbibition)") && w.contains("does nothing")),
        "{w:?}"
    );
}

#[test]
fn a_process_that_changed_nothing_is_warned() {
    // A secondary drainage from −100 kPa to −50 kPa on a water-wet rock:
    // oil needs a positive Pc to enter water-wet elements, so nothing moves.
    let w = warnings(
        &lattice(100e-6),
        &study(
            "",
            &[
                ("drainage", 1.0e5),
                ("imbibition", -1.0e5),
                ("drainage", -5.0e4),
            ],
        ),
    );
    assert!(
        w.iter()
            .any(|w| w.contains("process 3 (drainage) changed nothing")),
        "{w:?}"
    );
}

#[test]
fn unusual_fluids_are_warned_in_the_run() {
    let w = warnings(
        &lattice(100e-6),
        &study("[fluids]\nwater_viscosity_pa_s = 0.6", CYCLE),
    );
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("water_viscosity_pa_s = 0.6"), "{}", w[0]);
}

#[test]
fn lengths_in_micrometres_given_in_metres_are_warned() {
    // A 5 mm spacing (accepted: below 1 cm) with 5–40 µm pores: porosity
    // about 1e-5 of a 100 µm lattice's, far below 1e-3.
    let w = warnings(&lattice(5e-3), &study("", CYCLE));
    assert!(w.iter().any(|w| w.contains("porosity")), "{w:?}");
    // A length_m 300 times the pore extent: warned (beyond 100), loaded.
    let (mut info, pores, throats) = lattice(100e-6).into_parts();
    info.length_m *= 300.0;
    let net = Network::new(info, pores, throats).unwrap();
    let w = warnings(&net, &study("", CYCLE));
    assert!(w.iter().any(|w| w.contains("length_m")), "{w:?}");
    // A µm value written in m (a factor 1e6) is refused when the network
    // is built (issue 18: refused beyond a factor 1000).
    let (mut info, pores, throats) = lattice(100e-6).into_parts();
    info.length_m *= 1e6;
    let err = Network::new(info, pores, throats).unwrap_err().to_string();
    assert!(
        err.contains("length_m") || err.contains("unphysical"),
        "{err}"
    );
}
