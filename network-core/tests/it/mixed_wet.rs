//! Mixed wettability on a generated network with pore–throat size
//! correlation: trends of the wettability indices, residual oil and water
//! flow with the oil-wet fraction, and the spanning check of the oil-wet
//! regions.

use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::model_limits::oil_wet_spans;
use network_core::run::{RunResults, run_study};
use network_core::study::Study;
use network_core::{Boundary, Network};

use crate::networks::{Elem, chain};

/// Sandstone-like lattice (invented) whose throats are at most half the
/// radius of the smaller of their pores (an aspect ratio ≥ 2: throat size
/// follows pore size).
fn correlated(n: usize, seed: u64) -> Network {
    let spec = LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        throat_aspect_min: 2.0,
        seed,
        ..LatticeSpec::default()
    };
    generate(&spec, &Silent).expect("lattice")
}

/// Drainage to 100 kPa, forced imbibition to −100 kPa, secondary drainage
/// to 100 kPa; the largest `fraction` of the contacted pores turn oil-wet.
fn mixed_wet(net: &Network, fraction: f64, relperm: bool) -> RunResults {
    let study = Study::parse(&format!(
        r#"
network = "unused"
seed = 3
[boundary]
imbibition_faces = "both"
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [40.0, 60.0]
oil_wet_fraction = {fraction}
oil_wet_selection = "largest"
oil_wet_advancing_contact_angle_deg = [110.0, 150.0]
oil_wet_receding_contact_angle_deg = [90.0, 130.0]
[flow]
relative_permeability = {relperm}
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
kr_points = 6
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
kr_points = 6
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
kr_points = 4
"#
    ))
    .expect("study");
    run_study(net, &study, &Silent)
}

fn size() -> usize {
    if cfg!(debug_assertions) { 10 } else { 16 }
}

#[test]
fn amott_harvey_index_falls_as_the_oil_wet_fraction_rises() {
    // Amott (1959, Trans AIME 216:156–162): the index runs from +1 for
    // water-wet to −1 for oil-wet rock; altering more of the contacted
    // surface to oil-wet lowers it (common practice). Allow 0.05 of noise
    // between neighbouring fractions, and require the whole range to fall
    // by more than 1.
    let net = correlated(size(), 8);
    let ah: Vec<f64> = [0.0, 0.25, 0.5, 0.75, 1.0]
        .iter()
        .map(|&f| {
            mixed_wet(&net, f, false)
                .wettability_indices
                .expect("indices")
                .amott_harvey
        })
        .collect();
    for w in ah.windows(2) {
        assert!(w[1] <= w[0] + 0.05, "Amott–Harvey {ah:?}");
    }
    assert!(ah[0] - ah[4] > 1.0, "Amott–Harvey {ah:?}");
}

#[test]
fn mixed_wet_large_keeps_residual_oil_low_and_water_flowing() {
    // Salathiel (1973, J. Pet. Technol. 25:1216–1224): when the large pores
    // turn oil-wet along continuous paths, residual oil is low and water
    // flows freely at the end of a waterflood. Check: with half the
    // contacted pores oil-wet (largest), residual oil no more than 0.1
    // above the water-wet case, and k_rw at the end of forced imbibition
    // above 1e-3 (the threshold named in the project's issue; common
    // practice for "water flows").
    let net = correlated(size(), 8);
    let water_wet = mixed_wet(&net, 0.0, false).snr.unwrap();
    let r = mixed_wet(&net, 0.5, true);
    let snr = r.snr.unwrap();
    assert!(snr <= water_wet + 0.1, "Snr {snr} vs water-wet {water_wet}");
    let krw = r.end_points.krw_at_snr.expect("krw at Snr");
    assert!(krw > 1e-3, "krw(Snr) = {krw}");
    assert!(
        r.warnings
            .iter()
            .all(|w| !w.contains("oil-wet elements form no"))
    );
}

#[test]
fn oil_wet_span_needs_an_unbroken_oil_wet_path() {
    // Direct graph check on a chain inlet–throat–pore–throat–outlet: all
    // oil-wet spans; one water-wet throat breaks the path.
    let p = Elem {
        radius: 1e-5,
        g: 0.04,
    };
    let t = Elem {
        radius: 4e-6,
        g: 0.04,
    };
    let net = chain(&[p, p, p], &[t, t], 1e-4);
    assert_eq!(net.pores().boundary[0], Boundary::Inlet);
    let mut marks = vec![true; net.n_elements()];
    assert!(oil_wet_spans(&net, &marks));
    marks[net.n_pores() + 1] = false;
    assert!(!oil_wet_spans(&net, &marks));
}

#[test]
fn wettability_marks_of_the_network_files_replace_the_selection() {
    // Amott (1959): with every contacted element oil-wet the rock barely
    // imbibes spontaneously; marks in the network files must give that even
    // though the study's oil-wet fraction is 0, and the run says the
    // fraction was not used.
    let net = correlated(size(), 8);
    let (info, mut pores, mut throats) = net.clone().into_parts();
    pores.oil_wet = Some(vec![true; pores.len()]);
    throats.oil_wet = Some(vec![true; throats.len()]);
    let marked = Network::new(info, pores, throats).expect("valid");
    let plain = mixed_wet(&net, 0.0, false);
    let r = mixed_wet(&marked, 0.0, false);
    let iw_plain = plain.wettability_indices.unwrap().amott_water;
    let iw = r.wettability_indices.unwrap().amott_water;
    assert!(iw_plain > 0.9 && iw < 0.2, "Amott water {iw_plain} -> {iw}");
    let r = mixed_wet(&marked, 0.5, false);
    assert!(
        r.warnings.iter().any(|w| w.contains("oil_wet column")),
        "{:?}",
        r.warnings
    );
}
