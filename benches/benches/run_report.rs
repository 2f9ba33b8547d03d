//! Reports of a whole run (network-report): the standard figures, the
//! HTML report and the VTK state of a 20×20×20 lattice (8000 pores, 16 000
//! throats). The run itself is set-up, untimed.
//! Run with `cargo bench -p ganglion-benches --bench run_report`; only the
//! VTK writers with `… --bench run_report -- vtp`, which first prints the
//! file size per pore of both encodings and the median write times
//! (binary vs ASCII, 15 writes each). `… -- vtp_large` instead writes one
//! state of a 100³ lattice (10⁶ pores, a synthetic occupancy) in both
//! encodings and prints size, time and the peak memory added by the write.

use std::sync::LazyLock;
use std::time::Instant;

use divan::black_box;
use ganglion_benches::{peak_rss_bytes, reset_peak_rss};
use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::{EndState, RunResults, run_study};
use network_core::study::Study;
use network_report::vtk::{VtkEncoding, VtkOptions};
use network_report::{run_figures, run_report, saturation_tables, write_vtp};

fn main() {
    let filters: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with('-'))
        .collect();
    if filters.iter().any(|f| f == "vtp_large") {
        vtp_large();
        return;
    }
    if filters.is_empty()
        || filters
            .iter()
            .any(|f| "vtp".contains(f.as_str()) || f.contains("vtp"))
    {
        vtp_sizes();
    }
    divan::main();
}

/// One `.vtp` of the first imbibition's end state (angles and pressure, as
/// `ganglion run` writes it).
fn vtp(encoding: VtkEncoding) -> Vec<u8> {
    let (n, r) = &*RUN;
    let state = &r.end_states[1];
    let opts = VtkOptions {
        encoding,
        description: "benchmark".into(),
    };
    write_vtp(
        black_box(n),
        state,
        r.angles.as_ref(),
        state.water_pressure.as_deref(),
        &opts,
    )
    .unwrap()
}

/// One state of a 10⁶-pore lattice in both encodings: size, time and
/// the peak resident memory the write adds (the file's own buffer
/// included).
fn vtp_large() {
    let spec = LatticeSpec {
        nx: 100,
        ny: 100,
        nz: 100,
        seed: 5,
        ..LatticeSpec::default()
    };
    let n = generate(&spec, &Silent).expect("lattice");
    let n_e = n.n_pores() + n.n_throats();
    // A synthetic occupancy: every third element filled with oil, every
    // fifth with layers, every seventh in one of 1000 ganglia; every
    // eleventh pressure missing.
    let state = EndState {
        oil: (0..n_e).map(|e| e % 3 == 0).collect(),
        layers: (0..n_e).map(|e| u8::from(e % 5 == 0)).collect(),
        ganglion: (0..n_e)
            .map(|e| {
                if e % 7 == 0 {
                    (e % 1000) as u32
                } else {
                    u32::MAX
                }
            })
            .collect(),
        water_trapped: vec![false; n_e],
        water_saturation: (0..n_e)
            .map(|e| if e % 3 == 0 { 0.2 } else { 1.0 })
            .collect(),
        water_pressure: Some(
            (0..n.n_pores())
                .map(|i| {
                    if i % 11 == 0 {
                        f64::NAN
                    } else {
                        i as f64 / n.n_pores() as f64
                    }
                })
                .collect(),
        ),
    };
    for encoding in [VtkEncoding::Binary, VtkEncoding::Ascii] {
        reset_peak_rss();
        let base = peak_rss_bytes();
        let start = Instant::now();
        let bytes = write_vtp(
            black_box(&n),
            &state,
            None,
            state.water_pressure.as_deref(),
            &VtkOptions {
                encoding,
                ..VtkOptions::default()
            },
        )
        .unwrap();
        let t = start.elapsed().as_secs_f64();
        let peak = peak_rss_bytes().saturating_sub(base);
        println!(
            "vtp {encoding:?}, {} pores, {} throats, no angles: {} B ({:.1} B/pore), {:.2} s, peak memory added {:.0} MB ({:.2} × the file)",
            n.n_pores(),
            n.n_throats(),
            bytes.len(),
            bytes.len() as f64 / n.n_pores() as f64,
            t,
            peak as f64 / 1e6,
            peak as f64 / bytes.len() as f64
        );
        drop(black_box(bytes));
    }
}

/// Prints bytes per pore of both encodings and the median write times.
fn vtp_sizes() {
    let (n, _) = &*RUN;
    let median = |encoding| {
        let mut t: Vec<f64> = (0..15)
            .map(|_| {
                let start = Instant::now();
                black_box(vtp(encoding));
                start.elapsed().as_secs_f64()
            })
            .collect();
        t.sort_by(f64::total_cmp);
        t[t.len() / 2]
    };
    let (b, a) = (
        vtp(VtkEncoding::Binary).len(),
        vtp(VtkEncoding::Ascii).len(),
    );
    let (tb, ta) = (median(VtkEncoding::Binary), median(VtkEncoding::Ascii));
    let per_pore = |bytes: usize| bytes as f64 / n.n_pores() as f64;
    println!(
        "vtp, {} pores, {} throats: binary {b} B ({:.1} B/pore, {:.2} ms), ascii {a} B ({:.1} B/pore, {:.2} ms); ascii/binary size {:.2}, time {:.1}",
        n.n_pores(),
        n.n_throats(),
        per_pore(b),
        tb * 1e3,
        per_pore(a),
        ta * 1e3,
        a as f64 / b as f64,
        ta / tb
    );
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
fn vtp_binary_8000_pores(bencher: divan::Bencher) {
    LazyLock::force(&RUN);
    bencher.bench(|| vtp(VtkEncoding::Binary));
}

#[divan::bench]
fn vtp_ascii_8000_pores(bencher: divan::Bencher) {
    LazyLock::force(&RUN);
    bencher.bench(|| vtp(VtkEncoding::Ascii));
}
