//! Load times and memory of network files on a large lattice.
//!
//! Builds a deterministic cubic lattice of `n³` pores (default `n = 100`,
//! set `GANGLION_IO_BENCH_N` to change it) with about 84 % of the
//! nearest-neighbour throats kept (about 2.5·10⁶ for `n = 100`), writes it
//! as a CSV folder and a binary file in a temporary folder, and prints the
//! median load time of each, the file sizes, and the memory of a loaded
//! network per pore: the change of resident memory (`VmRSS`) across a load,
//! the peak during it (`VmHWM`, reset before the load through
//! `/proc/self/clear_refs`), and `Network::heap_bytes()`.
//!
//! Targets: binary load < 1 s, CSV load < 10 s, < 300 bytes per pore.
//! Run with `cargo bench -p ganglion-benches --bench io`.

use std::path::Path;
use std::time::{Duration, Instant};

use network_core::io;
use network_core::numeric::unit_hash;
use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

const SPACING_M: f64 = 1e-4;
const SEED: u64 = 20_240_611;

/// A deterministic lattice with random-looking full-precision values
/// (every f64 needs ~17 digits in text, the worst case for the CSV size).
fn lattice(n: usize) -> Network {
    let idx = |i: usize, j: usize, k: usize| (k * n + j) * n + i;
    let n_p = n * n * n;
    let mut pores = Pores::with_capacity(n_p);
    for k in 0..n {
        for j in 0..n {
            for i in 0..n {
                let p = idx(i, j, k) as u64;
                let u = |s: u64| unit_hash(SEED, s, p);
                let r = 5e-6 + 1.5e-5 * u(1);
                pores.x.push(i as f64 * SPACING_M + 1e-6 * (u(2) - 0.5));
                pores.y.push(j as f64 * SPACING_M + 1e-6 * (u(3) - 0.5));
                pores.z.push(k as f64 * SPACING_M);
                pores.radius.push(r);
                pores.shape_factor.push(0.02 + 0.059 * u(4));
                pores
                    .volume
                    .push(4.0 / 3.0 * std::f64::consts::PI * r * r * r * (1.5 + u(5)));
                pores.clay_volume.push(1e-16 * u(6));
                pores.boundary.push(if k == 0 {
                    Boundary::Inlet
                } else if k == n - 1 {
                    Boundary::Outlet
                } else {
                    Boundary::Interior
                });
            }
        }
    }
    let mut throats = Throats::with_capacity(3 * n_p);
    let mut t = 0u64;
    for k in 0..n {
        for j in 0..n {
            for i in 0..n {
                let a = idx(i, j, k);
                for (di, dj, dk) in [(1, 0, 0), (0, 1, 0), (0, 0, 1)] {
                    let (bi, bj, bk) = (i + di, j + dj, k + dk);
                    if bi >= n || bj >= n || bk >= n {
                        continue;
                    }
                    t += 1;
                    if unit_hash(SEED, 100, t) < 0.16 {
                        continue; // drop ~16 % of the bonds
                    }
                    let b = idx(bi, bj, bk);
                    let u = |s: u64| unit_hash(SEED, s, t);
                    let (ra, rb) = (pores.radius[a], pores.radius[b]);
                    let r = ra.min(rb) * (0.3 + 0.6 * u(101));
                    let g = 0.02 + 0.059 * u(102);
                    let length = SPACING_M * (1.0 + 0.01 * (u(103) - 0.5));
                    throats.pores.push([a as u32, b as u32]);
                    throats.radius.push(r);
                    throats.shape_factor.push(g);
                    throats.length.push(length);
                    throats.conduit_a.push(ra);
                    throats.conduit_b.push(rb);
                    let area = r * r / (4.0 * g);
                    throats
                        .volume
                        .push(area * (length - ra - rb) * (1.0 + u(104)));
                    throats.clay_volume.push(1e-17 * u(105));
                }
            }
        }
    }
    let side = (n - 1) as f64 * SPACING_M;
    let info = NetworkInfo {
        name: format!("bench lattice {n}^3"),
        flow_axis: Axis::Z,
        length_m: side,
        area_m2: (n as f64 * SPACING_M).powi(2),
        bulk_volume_m3: side * (n as f64 * SPACING_M).powi(2),
        extent_m: None,
        description: Some("deterministic benchmark lattice".into()),
    };
    Network::new(info, pores, throats).expect("lattice is valid")
}

/// A field of /proc/self/status, in bytes.
fn status_bytes(field: &str) -> Option<u64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with(field))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

fn reset_peak() -> bool {
    std::fs::write("/proc/self/clear_refs", "5").is_ok()
}

fn dir_size(path: &Path) -> u64 {
    if path.is_dir() {
        std::fs::read_dir(path)
            .unwrap()
            .map(|e| e.unwrap().metadata().unwrap().len())
            .sum()
    } else {
        std::fs::metadata(path).unwrap().len()
    }
}

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

fn timed<T>(f: impl FnOnce() -> T) -> (T, Duration) {
    let start = Instant::now();
    let out = f();
    (out, start.elapsed())
}

fn main() {
    let n: usize = std::env::var("GANGLION_IO_BENCH_N")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(100);
    let dir = std::env::temp_dir().join(format!("ganglion-io-bench-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let csv_dir = dir.join("lattice");
    let bin_path = dir.join("lattice.gnet");

    let (network, t_build) = timed(|| lattice(n));
    let (n_p, n_t) = (network.n_pores(), network.n_throats());
    let (hash, t_hash) = timed(|| io::network_hash(&network));
    println!(
        "io bench: {n_p} pores, {n_t} throats ({} rayon threads)",
        rayon_threads()
    );
    println!(
        "  build lattice            {:>8.3} s",
        t_build.as_secs_f64()
    );
    println!(
        "  network_hash             {:>8.3} s  ({hash})",
        t_hash.as_secs_f64()
    );
    let ((), t) = timed(|| io::write_csv(&network, &csv_dir).unwrap());
    println!(
        "  write CSV                {:>8.3} s  {:>7.1} MB",
        t.as_secs_f64(),
        dir_size(&csv_dir) as f64 / 1e6
    );
    let ((), t) = timed(|| io::write_binary(&network, &bin_path).unwrap());
    println!(
        "  write binary             {:>8.3} s  {:>7.1} MB",
        t.as_secs_f64(),
        dir_size(&bin_path) as f64 / 1e6
    );
    let heap = network.heap_bytes();
    drop(network);

    // Memory of one loaded network (binary load, then CSV load).
    for (label, path) in [("binary", &bin_path), ("CSV", &csv_dir)] {
        let before = status_bytes("VmRSS:").unwrap_or(0);
        let peak_ok = reset_peak();
        let loaded = io::read_network(path).unwrap();
        let after = status_bytes("VmRSS:").unwrap_or(0);
        let peak = status_bytes("VmHWM:").unwrap_or(0);
        assert_eq!(
            io::network_hash(&loaded.network),
            hash,
            "{label} round trip"
        );
        let per = |b: u64| b as f64 / n_p as f64;
        println!(
            "  {label:<6} loaded: resident +{:.0} B/pore, peak during load {}, heap_bytes {:.0} B/pore",
            per(after.saturating_sub(before)),
            if peak_ok {
                format!("+{:.0} B/pore", per(peak.saturating_sub(before)))
            } else {
                "n/a".to_owned()
            },
            per(loaded.network.heap_bytes() as u64),
        );
        drop(loaded);
    }
    println!(
        "  heap_bytes of the built network: {:.0} B/pore",
        heap as f64 / n_p as f64
    );

    let runs = |path: &Path, k: usize| -> Duration {
        median(
            (0..k)
                .map(|_| timed(|| io::read_network(path).unwrap()).1)
                .collect(),
        )
    };
    let t_bin = runs(&bin_path, 5);
    println!(
        "  load binary (median of 5) {:>7.3} s   target < 1 s",
        t_bin.as_secs_f64()
    );
    let t_csv = runs(&csv_dir, 3);
    println!(
        "  load CSV (median of 3)    {:>7.3} s   target < 10 s",
        t_csv.as_secs_f64()
    );
    // The `inspect` report of the loaded network (load not timed).
    let loaded = io::read_network(&bin_path).unwrap();
    let t_inspect = median(
        (0..3)
            .map(|_| timed(|| network_core::stats::NetworkReport::of(&loaded.network)).1)
            .collect(),
    );
    println!(
        "  inspect report (median 3) {:>7.3} s   target < 2 s",
        t_inspect.as_secs_f64()
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

fn rayon_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}
