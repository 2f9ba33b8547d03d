use network_core::generate::{LatticeSpec, generate, WeibullRange};
use network_core::progress::Silent;
use network_core::simulation::run_study;
use network_core::study::Study;

fn study(adv: f64, extra: &str) -> Study {
    Study::parse(&format!(r#"
network = "x"
[wettability]
receding_contact_angle_deg = [0.0, 0.0]
advancing_contact_angle_deg = [{adv}, {adv}]
{extra}
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
"#)).unwrap()
}

#[test]
fn smoke() {
    let base = LatticeSpec { nx: 20, ny: 20, nz: 20, ..LatticeSpec::default() };
    let cases = vec![
        ("z4", base.clone()),
        ("z5", LatticeSpec { target_coordination: 5.0, ..base.clone() }),
        ("z5.8", LatticeSpec { target_coordination: 5.6, ..base.clone() }),
        ("z4 narrow-aspect", LatticeSpec { throat_radius: WeibullRange { min_m: 4e-6, max_m: 30e-6, shape: 1.5, scale: 0.3 }, ..base.clone() }),
        ("z5 narrow-aspect", LatticeSpec { target_coordination: 5.0, throat_radius: WeibullRange { min_m: 4e-6, max_m: 30e-6, shape: 1.5, scale: 0.3 }, ..base.clone() }),
    ];
    for (name, spec) in cases {
        let net = generate(&spec, &Silent).unwrap();
        for (lab, extra) in [("", "")] {
            let r = run_study(&net, &study(30.0, extra), &Silent);
            eprintln!("{name} {lab} θa30: sni {:.3} snr {:.3}", r.sni.unwrap(), r.snr.unwrap());
        }
    }
}
