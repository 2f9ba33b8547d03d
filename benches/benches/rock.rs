//! Times the rock-matching tools: irregular generation (wall time and peak
//! resident memory), simulated mercury injection on the generated network,
//! and a calibration to porosity, permeability and a MICP curve.
//!
//! Run with `cargo bench -p ganglion-benches --bench rock -- [N_GEN] [N_CAL]`:
//! `N_GEN³` pores for generation and MICP (default 100, i.e. 10⁶ pores),
//! `N_CAL³` pores for the calibration (default 46, about 10⁵ pores). One
//! run each (these are long); setup is untimed.

use std::time::Instant;

use ganglion_benches::{peak_rss_bytes, reset_peak_rss, rss_bytes};
use network_core::flow::{PermOptions, permeability};
use network_core::generate::{IrregularSpec, LatticeSpec, generate};
use network_core::progress::Silent;
use network_core::run::calibrate::{LabData, calibrate, scale_network};
use network_core::run::micp::{MeasuredMicp, MicpSpec, simulate_micp};

fn spec(n: usize) -> LatticeSpec {
    LatticeSpec {
        nx: n,
        ny: n,
        nz: n,
        irregular: Some(IrregularSpec::default()),
        ..LatticeSpec::default()
    }
}

fn mib(b: u64) -> f64 {
    b as f64 / (1024.0 * 1024.0)
}

fn main() {
    let args: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let n_gen = args.first().copied().unwrap_or(100);
    let n_cal = args.get(1).copied().unwrap_or(46);
    println!(
        "rock: {} hardware threads (machine may be shared)",
        std::thread::available_parallelism().map_or(1, |n| n.get())
    );

    let before = rss_bytes();
    reset_peak_rss();
    let t = Instant::now();
    let net = generate(&spec(n_gen), &Silent).expect("valid spec");
    let gen_s = t.elapsed().as_secs_f64();
    let peak = peak_rss_bytes();
    println!(
        "irregular generation {n_gen}^3: {gen_s:.2} s, peak RSS {:.0} MiB ({:.0} MiB before); \
         {} pores, {} throats, mean coordination {:.3}",
        mib(peak),
        mib(before),
        net.n_pores(),
        net.n_throats(),
        2.0 * net.n_throats() as f64 / net.n_pores() as f64
    );

    reset_peak_rss();
    let t = Instant::now();
    let curve = simulate_micp(&net, &MicpSpec::default()).expect("micp");
    let micp_s = t.elapsed().as_secs_f64();
    println!(
        "MICP on it ({} steps): {micp_s:.2} s, peak RSS {:.0} MiB; S_Hg at the last step {:.4}",
        curve.points.len(),
        mib(peak_rss_bytes()),
        curve.points.last().map_or(0.0, |p| p.mercury_saturation)
    );
    drop(net);

    // Calibration data made by the tool from known factors (setup, untimed).
    let base = generate(&spec(n_cal), &Silent).expect("valid spec");
    let truth = scale_network(&base, 1.1, 0.8).expect("scaled");
    let sim = simulate_micp(&truth, &MicpSpec::default()).expect("micp");
    let pts: Vec<_> = sim.points.iter().step_by(4).collect();
    let lab = LabData {
        porosity: truth.porosity(),
        permeability_md: permeability(&truth, truth.info().flow_axis, &PermOptions::default())
            .expect("solve")
            .permeability_md,
        micp: MeasuredMicp {
            pressure_pa: pts.iter().map(|p| p.pressure_pa).collect(),
            mercury_saturation: pts.iter().map(|p| p.mercury_saturation).collect(),
        },
        waterflood: None,
    };
    reset_peak_rss();
    let t = Instant::now();
    let (cal, _) = calibrate(&base, &lab, 1).expect("calibration");
    let cal_s = t.elapsed().as_secs_f64();
    println!(
        "calibration {n_cal}^3 ({} pores): {cal_s:.2} s, peak RSS {:.0} MiB; radius factor {:.6} \
         (true 1.1), length factor {:.4} (true 0.8), MICP misfit {:.4}, accepted {}",
        base.n_pores(),
        mib(peak_rss_bytes()),
        cal.radius_factor,
        cal.length_factor,
        cal.micp_rms_misfit,
        cal.accepted
    );
}
