//! Times the statistical lattice generator: 100³ (10⁶ pores, coordination 5,
//! 2.5·10⁶ throats) and 30³, median of 3 runs each, plus the share of
//! `Network::new` (validation and adjacency) in the 100³ case.
//!
//! Run with `cargo bench -p ganglion-benches --bench generate`.

use std::sync::Mutex;
use std::time::Instant;

use network_core::Network;
use network_core::generate::{LatticeSpec, generate};
use network_core::progress::{Progress, Silent};

/// Records the wall time of each progress stage.
struct StageTimer {
    stages: Mutex<Vec<(String, Instant, Option<Instant>)>>,
}

impl Progress for StageTimer {
    fn start(&self, stage: &str, _total: u64) {
        let mut s = self.stages.lock().expect("not poisoned");
        s.push((stage.to_owned(), Instant::now(), None));
    }
    fn advance(&self, _delta: u64) {}
    fn finish(&self) {
        let mut s = self.stages.lock().expect("not poisoned");
        if let Some(last) = s.last_mut() {
            last.2 = Some(Instant::now());
        }
    }
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn time_generate(n: usize, runs: usize) -> (f64, Network) {
    let spec = LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        target_coordination: 5.0,
        ..LatticeSpec::default()
    };
    let mut times = Vec::with_capacity(runs);
    let mut last = None;
    for _ in 0..runs {
        let start = Instant::now();
        let net = generate(&spec, &Silent).expect("valid spec");
        times.push(start.elapsed().as_secs_f64());
        last = Some(net);
    }
    (median(times), last.expect("at least one run"))
}

fn main() {
    println!(
        "generate: {} hardware threads (machine may be shared)",
        std::thread::available_parallelism().map_or(1, |n| n.get())
    );
    for n in [30, 100] {
        let (secs, net) = time_generate(n, 3);
        println!(
            "generate {n}^3: median of 3 = {secs:.3} s; {} pores, {} throats, \
             coordination {:.4}, heap {:.1} bytes/pore",
            net.n_pores(),
            net.n_throats(),
            2.0 * net.n_throats() as f64 / net.n_pores() as f64,
            net.heap_bytes() as f64 / net.n_pores() as f64,
        );
        if n == 100 {
            let timer = StageTimer {
                stages: Mutex::new(Vec::new()),
            };
            let spec = LatticeSpec {
                nx: n,
                ny: n,
                nz: n,
                target_coordination: 5.0,
                ..LatticeSpec::default()
            };
            generate(&spec, &timer).expect("valid spec");
            let stages = timer.stages.into_inner().expect("not poisoned");
            let line: Vec<String> = stages
                .iter()
                .map(|(name, a, b)| {
                    let secs = b.map_or(0.0, |b| (b - *a).as_secs_f64());
                    format!("{name} {secs:.3} s")
                })
                .collect();
            println!("  stages of one more run: {}", line.join(", "));
            let (info, pores, throats) = net.into_parts();
            let start = Instant::now();
            let net = Network::new(info, pores, throats).expect("valid network");
            let secs_new = start.elapsed().as_secs_f64();
            println!(
                "  of which Network::new (validation + adjacency): {secs_new:.3} s ({} pores)",
                net.n_pores()
            );
        }
    }
}
