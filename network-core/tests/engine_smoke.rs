use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::simulation::run_study;
use network_core::study::Study;

#[test]
fn smoke() {
    let spec = LatticeSpec { nx: 15, ny: 15, nz: 15, target_coordination: 4.0, ..LatticeSpec::default() };
    let net = generate(&spec, &Silent).unwrap();
    let study = Study::parse(r#"
network = "x"
[wettability]
receding_contact_angle_deg = [0.0, 20.0]
advancing_contact_angle_deg = [30.0, 50.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
"#).unwrap();
    let t = std::time::Instant::now();
    let r = run_study(&net, &study, &Silent);
    eprintln!("time {:?}", t.elapsed());
    eprintln!("{}", serde_json::to_string_pretty(&r).unwrap());
    for o in &r.outcomes {
        for p in &o.points { eprintln!("{:?} {:.1} {:.4} {:.4} ev {}", o.kind, p.pc_pa, p.saturation.sw, p.saturation.sn_trapped, p.events); }
    }
}
