//! Reports of a whole run (network-report): the standard figures, the
//! HTML report and the VTK state of a 20×20×20 lattice (8000 pores, 16 000
//! throats). The run itself is set-up, untimed.
//! Run with `cargo bench -p ganglion-benches --bench run_report`; only the
//! VTK writers with `… --bench run_report -- vtp`, which first prints the
//! file size per pore of both encodings and the median write times
//! (binary vs ASCII, 15 writes each). `… -- vtp_large` instead writes one
//! state of a 100³ lattice (10⁶ pores, a synthetic occupancy) in both
//! encodings and prints size, time and the peak memory added by the write.
//! `… -- set_large` measures the cost of writing a result set as one unit
//! (staging folder, manifest with CRC-32 of every file, swap into place)
//! against the plain write, on the two 3-D states of a 10⁶-pore run (its
//! largest outputs); the divan benches `run_set_*` compare the same on the
//! whole result set of the 8000-pore run.

use std::sync::LazyLock;
use std::time::Instant;

use divan::black_box;
use ganglion_benches::{peak_rss_bytes, reset_peak_rss};
use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::io::atomic::write_atomic;
use network_core::io::result_set::StagedSet;
use network_core::progress::Silent;
use network_core::run::{EndState, RunResults, run_study};
use network_core::study::Study;
use network_report::vtk::{VtkEncoding, VtkOptions};
use network_report::{
    ArtifactOptions, run_figures, run_report, saturation_tables, write_run_artifacts,
    write_run_results, write_run_set, write_vtp,
};

fn main() {
    let filters: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with('-'))
        .collect();
    if filters.iter().any(|f| f == "vtp_large") {
        vtp_large();
        return;
    }
    if filters.iter().any(|f| f == "set_large") {
        set_large();
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

/// A 100³ lattice (10⁶ pores) and a synthetic end state of it.
fn large_state() -> (Network, EndState) {
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
    (n, state)
}

/// One state of a 10⁶-pore lattice in both encodings: size, time and
/// the peak resident memory the write adds (the file's own buffer
/// included).
fn vtp_large() {
    let (n, state) = large_state();
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

/// The cost of writing as one unit on a 10⁶-pore run's largest outputs:
/// the two `.vtp` states (binary), written each atomically into a folder
/// (the plain write), against the same files written into a staging
/// folder and committed (manifest with CRC-32 of every file, swap over the
/// previous set, removal of that set). Median of 5 of each; the encoding of
/// the files is done once, outside the timing.
fn set_large() {
    let (n, state) = large_state();
    let bytes = write_vtp(
        &n,
        &state,
        None,
        state.water_pressure.as_deref(),
        &VtkOptions::default(),
    )
    .unwrap();
    let root = std::env::temp_dir().join(format!("ganglion-bench-set-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    std::fs::create_dir_all(&root).unwrap();
    let names = ["state-1-drainage.vtp", "state-2-imbibition.vtp"];
    let plain_dir = root.join("plain");
    std::fs::create_dir_all(&plain_dir).unwrap();
    let staged_dir = root.join("staged");
    let median = |mut t: Vec<f64>| {
        t.sort_by(f64::total_cmp);
        t[t.len() / 2]
    };
    let mut plain = Vec::new();
    let mut write_part = Vec::new();
    let mut commit_part = Vec::new();
    for _ in 0..5 {
        let start = Instant::now();
        for name in names {
            write_atomic(&plain_dir.join(name), &bytes).unwrap();
        }
        plain.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        let set = StagedSet::begin(&staged_dir, "run", true).unwrap();
        for name in names {
            write_atomic(&set.dir().join(name), &bytes).unwrap();
        }
        let written = Instant::now();
        set.commit().unwrap();
        write_part.push((written - start).as_secs_f64());
        commit_part.push(written.elapsed().as_secs_f64());
    }
    let (tp, tw, tc) = (median(plain), median(write_part), median(commit_part));
    println!(
        "result set of a {}-pore run's 3-D states ({} files, {:.1} MB): plain write {:.3} s; staged write {:.3} s + manifest and swap {:.3} s; (staged total)/(plain) {:.2}, (manifest and swap)/(plain) {:.2}",
        n.n_pores(),
        names.len(),
        2.0 * bytes.len() as f64 / 1e6,
        tp,
        tw,
        tc,
        (tw + tc) / tp,
        tc / tp
    );
    let _ = std::fs::remove_dir_all(&root);
}

fn bench_root(name: &str) -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("ganglion-bench-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Every file of the 8000-pore run written into one folder, each file
/// atomically, no staging or manifest (the write itself).
#[divan::bench(sample_count = 10)]
fn run_set_plain_write_8000_pores(bencher: divan::Bencher) {
    let (n, r) = &*RUN;
    let dir = bench_root("plain");
    bencher.bench(|| {
        write_run_results(r, &dir).unwrap();
        write_run_artifacts(r, n, &dir, &ArtifactOptions::default()).unwrap()
    });
    let _ = std::fs::remove_dir_all(&dir);
}

/// The same files written as one unit: staged, sealed with the manifest,
/// swapped over the previous set, which is then removed.
#[divan::bench(sample_count = 10)]
fn run_set_staged_8000_pores(bencher: divan::Bencher) {
    let (n, r) = &*RUN;
    let root = bench_root("staged");
    let out = root.join("out");
    bencher.bench(|| {
        let set = StagedSet::begin(&out, "run", true).unwrap();
        write_run_set(r, n, set, &ArtifactOptions::default()).unwrap()
    });
    let _ = std::fs::remove_dir_all(&root);
}
