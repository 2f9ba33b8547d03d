//! Per-call cost of the single-element capillary functions
//! (`cargo bench -p ganglion-benches --bench capillary`).
//!
//! Each benchmark evaluates one function over a fixed, seeded set of 1024
//! elements (3/4 scalene triangles, 1/4 squares) with varied angles; divan
//! reports the time per element through its item counter. Setup is untimed.

use divan::{Bencher, black_box, counter::ItemsCount};
use network_core::capillary::{
    Section, corner_conductance_b, drainage_entry_pc, hinged_corner, imbibition_corner_water_area,
    layer_collapse_pc, piston_imbibition_pc, snap_off_pc,
};
use network_core::geometry::triangle_half_angles;
use network_core::numeric::unit_hash;
use std::f64::consts::{FRAC_PI_4, PI};

const N: usize = 1024;
const SIGMA: f64 = 0.03;

fn main() {
    divan::main();
}

struct Case {
    corners: [f64; 4],
    n_corners: usize,
    radius: f64,
    shape_factor: f64,
    theta_r: f64,
    theta_a: f64,
    pc_max: f64,
}

impl Case {
    fn section(&self) -> Section<'_> {
        Section::new(
            self.radius,
            self.shape_factor,
            &self.corners[..self.n_corners],
        )
    }
}

fn cases() -> Vec<Case> {
    (0..N as u64)
        .map(|k| {
            let u = |m: u64| unit_hash(42, m, k);
            let (corners, n_corners) = if u(3) < 0.25 {
                ([FRAC_PI_4; 4], 4)
            } else {
                let t = triangle_half_angles(0.005 + 0.043 * u(1), u(2));
                ([t[0], t[1], t[2], 0.0], 3)
            };
            let sum_cot: f64 = corners[..n_corners].iter().map(|b| 1.0 / b.tan()).sum();
            let mut c = Case {
                corners,
                n_corners,
                radius: 1e-6 + 5e-5 * u(4),
                shape_factor: 1.0 / (4.0 * sum_cot),
                theta_r: 1.2 * u(5),
                theta_a: 0.0,
                pc_max: 0.0,
            };
            c.theta_a = c.theta_r + (PI - 1e-3 - c.theta_r) * u(6);
            c.pc_max = drainage_entry_pc(&c.section(), c.theta_r, SIGMA) * (1.0 + 3.0 * u(7));
            c
        })
        .collect()
}

#[divan::bench]
fn drainage_entry(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .map(|c| drainage_entry_pc(black_box(&c.section()), c.theta_r, SIGMA))
            .sum::<f64>()
    });
}

#[divan::bench]
fn piston_imbibition(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .map(|c| {
                piston_imbibition_pc(
                    black_box(&c.section()),
                    c.theta_r,
                    c.theta_a,
                    c.pc_max,
                    SIGMA,
                )
            })
            .sum::<f64>()
    });
}

#[divan::bench]
fn snap_off(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .filter_map(|c| {
                snap_off_pc(
                    black_box(&c.section()),
                    c.theta_r,
                    c.theta_a,
                    c.pc_max,
                    SIGMA,
                )
            })
            .sum::<f64>()
    });
}

#[divan::bench]
fn hinged_corner_state(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .filter_map(|c| {
                hinged_corner(
                    black_box(0.3 * c.pc_max),
                    c.pc_max,
                    c.theta_r,
                    c.theta_a,
                    c.corners[0],
                    SIGMA,
                )
            })
            .map(|m| m.b)
            .sum::<f64>()
    });
}

#[divan::bench]
fn imbibition_water_area(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .map(|c| {
                imbibition_corner_water_area(
                    black_box(&c.section()),
                    c.theta_r,
                    c.theta_a,
                    c.pc_max,
                    SIGMA,
                    0.3 * c.pc_max,
                )
            })
            .sum::<f64>()
    });
}

#[divan::bench]
fn layer_collapse(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .filter_map(|c| {
                layer_collapse_pc(
                    c.theta_r,
                    black_box(c.theta_a),
                    c.corners[0],
                    c.pc_max,
                    SIGMA,
                )
            })
            .sum::<f64>()
    });
}

#[divan::bench]
fn corner_film_conductance(bencher: Bencher) {
    let cs = cases();
    bencher.counter(ItemsCount::new(N)).bench(|| {
        cs.iter()
            .map(|c| {
                corner_conductance_b(black_box(1e-12), c.radius, c.theta_r, c.corners[0], 1e-3)
            })
            .sum::<f64>()
    });
}
