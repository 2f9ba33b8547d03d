//! Reports of a whole run (network-report): the standard figures, the
//! HTML report and the VTK state of a 20×20×20 lattice (8000 pores, 16 000
//! throats). The run itself is set-up, untimed.
//! Run with `cargo bench -p ganglion-benches --bench run_report`.

use std::sync::LazyLock;

use divan::black_box;
use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::{RunResults, run_study};
use network_core::study::Study;
use network_report::{run_figures, run_report, saturation_tables, write_vtp};

fn main() {
    divan::main();
}

static RUN: LazyLock<(Network, RunResults)> = LazyLock::new(|| {
    let spec = LatticeSpec {
        nx: 20,
        ny: 20,
        nz: 20,
        seed: 5,
        ..LatticeSpec::default()
    };
    let network = generate(&spec, &Silent).expect("lattice");
    let study = Study::parse(
        r#"
network = "unused"
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [40.0, 60.0]
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
kr_points = 10
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
kr_points = 10
"#,
    )
    .expect("study");
    let results = run_study(&network, &study, &Silent);
    (network, results)
});

#[divan::bench]
fn html_report_with_figures(bencher: divan::Bencher) {
    let (_, r) = &*RUN;
    bencher.bench(|| run_report(black_box(r), &run_figures(r)));
}

#[divan::bench]
fn saturation_tables_21_rows(bencher: divan::Bencher) {
    let (_, r) = &*RUN;
    bencher.bench(|| saturation_tables(black_box(r), 21, Default::default()).unwrap());
}

#[divan::bench]
fn vtp_8000_pores(bencher: divan::Bencher) {
    let (n, r) = &*RUN;
    bencher.bench(|| write_vtp(black_box(n), &r.end_states[1], r.angles.as_ref(), None).unwrap());
}
