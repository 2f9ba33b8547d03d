//! Network extraction from a synthetic image, stage by stage.
//!
//! `cargo bench -p ganglion-benches --bench extract -- 100 300 500` times,
//! for each edge length N, the extraction of an N³ overlapping-grain image
//! (porosity 0.2, grain radii 5–11 voxels, seed 1; generated untimed):
//! the pore-space mask, the distance transform, the watershed and the
//! network assembly (one run each: the large sizes take seconds), with the
//! peak resident memory of the process during each stage (VmHWM, reset to
//! the current size before the stage) and the growth of each stage's time
//! with the voxel count between the smallest and the largest size.

use std::path::Path;
use std::time::Instant;

use ganglion_benches::{peak_rss_bytes, reset_peak_rss};
use network_core::image::Labels;
use network_core::image::distance::squared_distance;
use network_core::image::extract::{ExtractOptions, assemble};
use network_core::image::synth::{GrainPackSpec, grain_pack};
use network_core::image::watershed::watershed;

const STAGES: [&str; 4] = ["pore space", "distance", "watershed", "assembly"];

fn gib(b: u64) -> f64 {
    b as f64 / (1u64 << 30) as f64
}

fn main() {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let sizes = if sizes.is_empty() { vec![100] } else { sizes };
    println!(
        "extraction of N³ grain-pack images, {} threads",
        rayon::current_num_threads()
    );
    println!(
        "{:>5} {:>12} {:>8} {:>8} | {:>22} {:>22} {:>22} {:>22} | {:>8}",
        "N",
        "voxels",
        "pores",
        "throats",
        "pore space s / GiB",
        "distance s / GiB",
        "watershed s / GiB",
        "assembly s / GiB",
        "total s"
    );
    let mut rows: Vec<(usize, [f64; 4])> = Vec::new();
    for &n in &sizes {
        let spec = GrainPackSpec {
            dims: [n, n, n],
            voxel_size_m: 3e-6,
            porosity: 0.2,
            radius_min: 5.0,
            radius_max: 11.0,
            seed: 1,
        };
        let src = Path::new("bench");
        let (vol, _) = grain_pack(&spec, src).expect("image");
        let mut t = [0.0; 4];
        let mut peak = [0u64; 4];
        let stage = || {
            reset_peak_rss();
            Instant::now()
        };
        let s = stage();
        let pore = Labels::default().pore_space(&vol, src).expect("labels");
        t[0] = s.elapsed().as_secs_f64();
        peak[0] = peak_rss_bytes();
        let s = stage();
        let d2 = squared_distance(&pore, spec.dims);
        t[1] = s.elapsed().as_secs_f64();
        peak[1] = peak_rss_bytes();
        let s = stage();
        let regions = watershed(&pore, &d2, spec.dims);
        t[2] = s.elapsed().as_secs_f64();
        peak[2] = peak_rss_bytes();
        let s = stage();
        let (net, _) = assemble(
            &pore,
            &d2,
            &regions,
            spec.dims,
            spec.voxel_size_m,
            &ExtractOptions::default(),
            src,
        )
        .expect("network");
        t[3] = s.elapsed().as_secs_f64();
        peak[3] = peak_rss_bytes();
        println!(
            "{:>5} {:>12} {:>8} {:>8} | {:>11.2} / {:>8.2} {:>11.2} / {:>8.2} {:>11.2} / {:>8.2} {:>11.2} / {:>8.2} | {:>8.2}",
            n,
            n * n * n,
            net.n_pores(),
            net.n_throats(),
            t[0],
            gib(peak[0]),
            t[1],
            gib(peak[1]),
            t[2],
            gib(peak[2]),
            t[3],
            gib(peak[3]),
            t.iter().sum::<f64>()
        );
        rows.push((n, t));
        drop(net);
        drop(regions);
        drop(d2);
        drop(pore);
        drop(vol);
    }
    if let (Some(a), Some(b)) = (rows.first(), rows.last())
        && b.0 > a.0
    {
        let ratio = ((b.0 as f64) / (a.0 as f64)).powi(3).ln();
        let growth: Vec<String> = (0..4)
            .map(|k| format!("{} {:.2}", STAGES[k], (b.1[k] / a.1[k]).ln() / ratio))
            .collect();
        println!(
            "time growth exponent in the voxel count, {}³ → {}³: {}",
            a.0,
            b.0,
            growth.join(", ")
        );
    }
}
