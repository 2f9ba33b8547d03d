//! Model fits (network-core::fit) and report rendering (network-report).
//! Run with `cargo bench -p ganglion-benches --bench fit_report`.

use divan::black_box;
use network_core::fit::{
    KrFitOptions, KrMax, LetParams, Normalisation, Objective, Phase, fit_corey, fit_let,
};
use network_report::plot::{PlotSpec, Scale, Series, SeriesStyle, render_png, render_svg};
use network_report::saturation_tables::{Curve, Process, TableOptions, build_table};

fn main() {
    divan::main();
}

/// 101 points of a LET water curve (L = 2.5, E = 1.8, T = 1.2).
fn let_data() -> (Vec<f64>, Vec<f64>, KrFitOptions) {
    let norm = Normalisation::new(0.15, 0.2).unwrap();
    let truth = LetParams {
        kr_max: 0.4,
        l: 2.5,
        e: 1.8,
        t: 1.2,
    };
    let sw: Vec<f64> = (0..=100).map(|i| 0.15 + 0.0065 * i as f64).collect();
    let kr = sw
        .iter()
        .map(|&s| truth.kr(norm.swn(s), Phase::Wetting))
        .collect();
    let opts = KrFitOptions {
        phase: Phase::Wetting,
        normalisation: norm,
        kr_max: KrMax::Fit,
        objective: Objective::Linear,
    };
    (sw, kr, opts)
}

#[divan::bench]
fn fit_let_101_points(bencher: divan::Bencher) {
    let (sw, kr, opts) = let_data();
    bencher.bench(|| fit_let(black_box(&sw), black_box(&kr), &opts).unwrap());
}

#[divan::bench]
fn fit_corey_101_points(bencher: divan::Bencher) {
    let (sw, kr, opts) = let_data();
    bencher.bench(|| fit_corey(black_box(&sw), black_box(&kr), &opts).unwrap());
}

fn curve_data(n: usize) -> [Vec<f64>; 4] {
    let sw: Vec<f64> = (0..n)
        .map(|i| 1.0 - 0.75 * i as f64 / (n - 1) as f64)
        .collect();
    let swn: Vec<f64> = sw.iter().map(|s| (s - 0.25) / 0.75).collect();
    // Deterministic small wiggle to give the isotonic regression work.
    let wiggle = |i: usize| 1e-3 * ((i * 7919) % 13) as f64 / 13.0;
    [
        sw.clone(),
        swn.iter()
            .enumerate()
            .map(|(i, x)| x.powi(3) + wiggle(i))
            .collect(),
        swn.iter()
            .enumerate()
            .map(|(i, x)| 0.8 * (1.0 - x).powi(2) + wiggle(i + 5))
            .collect(),
        swn.iter().map(|x| 2000.0 / x.max(0.02).sqrt()).collect(),
    ]
}

#[divan::bench]
fn build_table_10k_samples_to_51_rows(bencher: divan::Bencher) {
    let [sw, krw, krn, pc] = curve_data(10_000);
    let curve = Curve {
        process: Process::Drainage,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let opts = TableOptions {
        n_points: 51,
        ..TableOptions::default()
    };
    bencher.bench(|| build_table(black_box(&curve), &opts).unwrap());
}

fn plot_spec() -> PlotSpec {
    let [sw, krw, krn, _] = curve_data(200);
    PlotSpec {
        title: "Relative permeability".into(),
        x_label: "Water saturation Sw (fraction)".into(),
        y_label: "kr (fraction)".into(),
        y_scale: Scale::Log,
        series: vec![
            Series::line("krw", sw.clone(), krw),
            Series::line("krn", sw, krn).with_style(SeriesStyle::LineMarkers),
        ],
        ..PlotSpec::default()
    }
}

#[divan::bench]
fn render_svg_two_series_200_points(bencher: divan::Bencher) {
    let spec = plot_spec();
    bencher.bench(|| render_svg(black_box(&spec)).unwrap());
}

#[divan::bench]
fn render_png_800x560_two_series_200_points(bencher: divan::Bencher) {
    let spec = plot_spec();
    bencher.bench(|| render_png(black_box(&spec), 800, 560).unwrap());
}
