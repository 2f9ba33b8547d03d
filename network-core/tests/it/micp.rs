//! Simulated mercury injection against analytic cases.

use network_core::run::micp::{MicpSpec, simulate_micp};

use crate::networks::bundle;

fn radii() -> Vec<f64> {
    // 30 radii between 1 and 40 µm, in scrambled order.
    (0..30)
        .map(|i| 1e-6 * (1.0 + 39.0 * ((i * 17) % 30) as f64 / 29.0))
        .collect()
}

#[test]
fn micp_of_a_bundle_of_tubes_follows_washburn_exactly() {
    // Washburn (1921, Phys. Rev. 17:273–283), derived here: in a circular
    // tube of radius r the mercury meniscus is a spherical cap meeting the
    // wall at θ_Hg (through mercury), so its radius of curvature is
    // R = r/|cos θ_Hg| and Young–Laplace gives the pressure across it,
    // P = 2σ/R = 2σ|cos θ_Hg|/r. Below that pressure the tube stays empty;
    // above it the tube fills from end to end (its radius is uniform). With
    // equal lengths a tube's volume is ∝ r², so at pressure P
    //   S_Hg(P) = Σ_{r_i ≥ 2σ|cos θ_Hg|/P} r_i² / Σ r_i².
    // The face pores hold no volume and enter below the smallest tube
    // pressure. Both the lab constants (σ = 0.485 N/m, θ = 140°) and a
    // second angle check that the angle enters as |cos θ_Hg|.
    let r = radii();
    let net = bundle(&r, 5e-4);
    let s2: f64 = r.iter().map(|x| x * x).sum();
    for theta in [140.0f64, 130.0] {
        let spec = MicpSpec {
            contact_angle_deg: theta,
            steps: 200,
            ..MicpSpec::default()
        };
        let curve = simulate_micp(&net, &spec).expect("micp");
        let cos = theta.to_radians().cos().abs();
        let mut jumps = 0;
        for (k, p) in curve.points.iter().enumerate() {
            let want: f64 = r
                .iter()
                .filter(|&&x| 2.0 * spec.sigma_n_per_m * cos / x <= p.pressure_pa)
                .map(|x| x * x)
                .sum::<f64>()
                / s2;
            assert!(
                (p.mercury_saturation - want).abs() < 1e-12,
                "θ {theta}: S_Hg {} vs Washburn {want} at {} Pa",
                p.mercury_saturation,
                p.pressure_pa
            );
            // The reported radius is the Washburn radius of the step, and
            // the tubes entered since the previous step lie between the
            // radii of the two steps.
            assert!((p.throat_radius_m * p.pressure_pa - 2.0 * 0.485 * cos).abs() < 1e-12);
            if k > 0 && p.ds_dlog10_r > 0.0 {
                jumps += 1;
                let prev = &curve.points[k - 1];
                let entered: f64 = r
                    .iter()
                    .filter(|&&x| x >= p.throat_radius_m && x < prev.throat_radius_m)
                    .map(|x| x * x)
                    .sum::<f64>()
                    / s2;
                let dlog = (prev.throat_radius_m / p.throat_radius_m).log10();
                assert!((p.ds_dlog10_r * dlog - entered).abs() < 1e-12);
            }
        }
        assert!(jumps >= 10, "only {jumps} steps entered tubes");
        assert_eq!(curve.points.last().unwrap().mercury_saturation, 1.0);
    }
}

fn circles() -> network_core::generate::ShapeMix {
    network_core::generate::ShapeMix {
        triangle: 0.0,
        square: 0.0,
        circle: 1.0,
        ..Default::default()
    }
}

#[test]
fn micp_leaves_no_defending_phase_trapped_in_a_lattice() {
    // An evacuated sample holds nothing back: at a pressure above every
    // entry pressure mercury fills every element of circular section
    // (no corners keep the defending phase). Analytic: S_Hg = 1 − clay
    // fraction, here with no clay, S_Hg = 1.
    let spec_lattice = network_core::generate::LatticeSpec {
        nx: 6,
        ny: 6,
        nz: 6,
        pore_shapes: circles(),
        throat_shapes: circles(),
        ..Default::default()
    };
    let net = network_core::generate::generate(&spec_lattice, &network_core::progress::Silent)
        .expect("lattice");
    let curve = simulate_micp(&net, &MicpSpec::default()).expect("micp");
    let last = curve.points.last().unwrap();
    assert_eq!(last.mercury_saturation, 1.0);
    // Saturation never decreases with pressure.
    for w in curve.points.windows(2) {
        assert!(w[1].mercury_saturation >= w[0].mercury_saturation);
    }
}

#[test]
fn micp_refuses_a_wetting_mercury_angle() {
    let spec = MicpSpec {
        contact_angle_deg: 40.0,
        ..MicpSpec::default()
    };
    let err = simulate_micp(&bundle(&radii(), 1e-4), &spec).unwrap_err();
    assert!(err.to_string().contains("contact_angle_deg = 40"), "{err}");
}

#[test]
fn micp_and_calibration_give_the_same_bits_on_one_and_two_threads() {
    use network_core::generate::IrregularSpec;
    use network_core::run::calibrate::{LabData, calibrate, scale_network};
    use network_core::run::micp::MeasuredMicp;
    let spec = network_core::generate::LatticeSpec {
        nx: 10,
        ny: 10,
        nz: 10,
        irregular: Some(IrregularSpec::default()),
        ..Default::default()
    };
    let net = network_core::generate::generate(&spec, &network_core::progress::Silent).unwrap();
    let run = || {
        let curve = simulate_micp(&net, &MicpSpec::default()).unwrap();
        let truth = scale_network(&net, 1.05, 0.9).unwrap();
        let sim = simulate_micp(&truth, &MicpSpec::default()).unwrap();
        let lab = LabData {
            porosity: truth.porosity(),
            permeability_md: 50.0,
            micp: MeasuredMicp {
                pressure_pa: sim.points.iter().map(|p| p.pressure_pa).collect(),
                mercury_saturation: sim.points.iter().map(|p| p.mercury_saturation).collect(),
            },
            waterflood: None,
        };
        let (cal, _) = calibrate(&net, &lab, 1).unwrap();
        let bits: Vec<u64> = curve
            .points
            .iter()
            .flat_map(|p| [p.mercury_saturation.to_bits(), p.ds_dlog10_r.to_bits()])
            .chain([cal.radius_factor.to_bits(), cal.length_factor.to_bits()])
            .collect();
        bits
    };
    let pool = |n| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
    };
    let one = pool(1).install(run);
    let two = pool(2).install(run);
    assert_eq!(one, two);
}
