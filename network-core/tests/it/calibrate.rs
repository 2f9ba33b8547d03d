//! Calibration to porosity, permeability and a MICP curve.

use network_core::Network;
use network_core::flow::{PermOptions, permeability};
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::calibrate::{LabData, calibrate, scale_network};
use network_core::run::micp::{MeasuredMicp, MicpSpec, simulate_micp};

fn base() -> Network {
    generate(
        &LatticeSpec {
            nx: 9,
            ny: 9,
            nz: 9,
            ..LatticeSpec::default()
        },
        &Silent,
    )
    .expect("lattice")
}

fn perm_md(net: &Network) -> f64 {
    permeability(net, net.info().flow_axis, &PermOptions::default())
        .expect("solve")
        .permeability_md
}

#[test]
fn permeability_scales_as_the_square_of_the_length_factor() {
    // Analytic: scale every length (radii, conduit lengths, coordinates,
    // sample length and area) by λ. A conduit's Poiseuille-type
    // conductance is g = k A² G/(μ l) with A ∝ r² and G unchanged, so
    // g ∝ λ⁴/λ = λ³; with the same pressure drop the flow Q ∝ λ³, and
    // K = μ Q L/(A Δp) ∝ λ³ · λ / λ² = λ². The solver stops at a relative
    // residual of 1e-6 (PermOptions default), so K carries a relative error
    // of that order; tolerance 1e-5.
    let net = base();
    let k1 = perm_md(&net);
    for l in [0.5, 2.0, 7.3] {
        let k = perm_md(&scale_network(&net, 1.0, l).unwrap());
        assert!(
            (k / (l * l * k1) - 1.0).abs() < 1e-5,
            "λ {l}: K {k} vs λ²K {}",
            l * l * k1
        );
        // Porosity does not change under a uniform length scale (volumes
        // and bulk volume both scale as λ³).
        let phi = scale_network(&net, 1.0, l).unwrap().porosity();
        assert!((phi / net.porosity() - 1.0).abs() < 1e-12);
    }
    // Scaling the radii alone is not a length scale: K changes by more
    // than α² (conductance ∝ r⁴ at fixed length).
    let k2 = perm_md(&scale_network(&net, 1.2, 1.0).unwrap());
    assert!(k2 / k1 > 1.2f64.powi(3), "{}", k2 / k1);
}

fn lab_from(truth: &Network) -> LabData {
    let curve = simulate_micp(truth, &MicpSpec::default()).unwrap();
    // Every fourth step of a lab-like range, as a lab would report them.
    let pts: Vec<_> = curve.points.iter().step_by(4).collect();
    LabData {
        porosity: truth.porosity(),
        permeability_md: perm_md(truth),
        micp: MeasuredMicp {
            pressure_pa: pts.iter().map(|p| p.pressure_pa).collect(),
            mercury_saturation: pts.iter().map(|p| p.mercury_saturation).collect(),
        },
        waterflood: None,
    }
}

#[test]
fn calibration_recovers_the_factors_of_data_it_made_itself() {
    // Data made by the tool from the base network scaled by known factors;
    // the calibration must find them again. Porosity fixes α by bisection
    // (to round-off); λ comes from the MICP curve (simulated on a different
    // pressure grid and interpolated in log P, an error of a fraction of a
    // grid step, 1/80 decade ≈ 3 %) and the permeability (exact), so λ is
    // asked within 1 % and α within 1e-6.
    let net = base();
    for (alpha, lambda) in [(1.15, 0.6), (0.85, 2.5)] {
        let truth = scale_network(&net, alpha, lambda).unwrap();
        let lab = lab_from(&truth);
        let (cal, fitted) = calibrate(&net, &lab, 1).unwrap();
        assert!(cal.accepted, "{:?}", cal.refusals);
        assert!(
            (cal.radius_factor / alpha - 1.0).abs() < 1e-6,
            "α {} vs {alpha}",
            cal.radius_factor
        );
        assert!(
            (cal.length_factor / lambda - 1.0).abs() < 0.01,
            "λ {} vs {lambda}",
            cal.length_factor
        );
        assert!(cal.micp_rms_misfit < 0.02, "{}", cal.micp_rms_misfit);
        assert!((fitted.porosity() - lab.porosity).abs() < 1e-9);
    }
}

#[test]
fn calibration_refuses_data_it_cannot_match() {
    // A measured curve whose shape no scaling of this network gives: 90 %
    // of the pore space entered at one pressure and nothing more over
    // four decades, with a permeability 1000 times the network's.
    let net = base();
    let truth = scale_network(&net, 1.0, 1.0).unwrap();
    let mut lab = lab_from(&truth);
    lab.micp.mercury_saturation = lab
        .micp
        .pressure_pa
        .iter()
        .map(|&p| if p < 3e4 { 0.0 } else { 0.9 })
        .collect();
    lab.permeability_md *= 1000.0;
    let (cal, _) = calibrate(&net, &lab, 1).unwrap();
    assert!(!cal.accepted);
    let all = cal.refusals.join("\n");
    assert!(all.contains("MICP misfit"), "{all}");
    assert!(cal.micp_rms_misfit > 0.08, "{}", cal.micp_rms_misfit);
    // A porosity out of reach.
    let mut lab = lab_from(&truth);
    lab.porosity = 1e-7;
    let (cal, _) = calibrate(&net, &lab, 1).unwrap();
    assert!(!cal.accepted);
    assert!(
        cal.refusals[0].contains("porosity 0.0000001"),
        "{:?}",
        cal.refusals
    );
}

#[test]
fn pore_shape_calibration_finds_the_spread_the_data_were_made_with() {
    // Data made by the tool from an irregular network generated with pore
    // Weibull shape 2.5 and scaled by α = 1.1, λ = 0.7. Starting from the
    // same generator file with shape 1.0, the search over the candidate
    // shapes must pick 2.5 (one of the candidates, so its network matches
    // the data up to the scale factors) and recover α within 1e-6 and λ
    // within 1 % (the reasons are those of the test above).
    use network_core::generate::IrregularSpec;
    use network_core::run::calibrate::{PORE_SHAPE_CANDIDATES, calibrate_pore_shape};
    let mut spec = LatticeSpec {
        nx: 9,
        ny: 9,
        nz: 9,
        irregular: Some(IrregularSpec::default()),
        ..LatticeSpec::default()
    };
    spec.pore_radius.shape = 2.5;
    let truth_base = generate(&spec, &Silent).unwrap();
    let lab = lab_from(&scale_network(&truth_base, 1.1, 0.7).unwrap());
    spec.pore_radius.shape = 1.0;
    let (cands, best, net) = calibrate_pore_shape(&spec, &PORE_SHAPE_CANDIDATES, &lab, 1).unwrap();
    assert_eq!(cands.len(), PORE_SHAPE_CANDIDATES.len());
    let b = &cands[best];
    assert_eq!(b.pore_radius_shape, 2.5);
    assert!(b.calibration.accepted);
    assert!((b.calibration.radius_factor / 1.1 - 1.0).abs() < 1e-6);
    assert!((b.calibration.length_factor / 0.7 - 1.0).abs() < 0.01);
    assert!((net.porosity() - lab.porosity).abs() < 1e-9);
    // The wrong spreads fit worse.
    for c in &cands {
        if c.pore_radius_shape != 2.5 {
            assert!(c.calibration.objective() > b.calibration.objective());
        }
    }
}
