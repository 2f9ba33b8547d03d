//! Sweep determinism: thread count and case order do not change results.

use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::run_study;
use network_core::sweep::{CaseResult, SweepStudy, summarise};

const TEXT: &str = r#"
network = "unused"
seed = 5
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[boundary]
imbibition_faces = "both"
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
[sweep]
initial_water_saturations = [0.7, 0.4]
realisations = 2
[sweep.parameters]
"wettability.advancing_contact_angle_deg" = [[30.0, 50.0], [60.0, 80.0]]
"#;

fn run_all(order: &[usize], threads: usize) -> String {
    let net = generate(
        &LatticeSpec {
            nx: 8,
            ny: 8,
            nz: 8,
            ..LatticeSpec::default()
        },
        &Silent,
    )
    .unwrap();
    let sweep = SweepStudy::parse(TEXT).unwrap();
    let cases = sweep.cases();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    let results: Vec<CaseResult> = pool.install(|| {
        order
            .iter()
            .map(|&k| {
                CaseResult::from_run(
                    cases[k].clone(),
                    &run_study(&net, &cases[k].study(), &Silent),
                )
            })
            .collect()
    });
    serde_json::to_string(&summarise(cases.len(), &results)).unwrap()
}

#[test]
fn sweep_summary_is_identical_for_any_thread_count_and_case_order() {
    let n = SweepStudy::parse(TEXT).unwrap().cases().len();
    assert_eq!(n, 8);
    let forward: Vec<usize> = (0..n).collect();
    let backward: Vec<usize> = (0..n).rev().collect();
    let a = run_all(&forward, 1);
    assert_eq!(a, run_all(&forward, 2));
    assert_eq!(a, run_all(&backward, 2));
}
