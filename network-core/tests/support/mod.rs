//! Small hand-built networks for the displacement tests.
#![allow(dead_code)]

use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

/// One element: inscribed radius (m) and shape factor.
#[derive(Clone, Copy, Debug)]
pub struct Elem {
    pub radius: f64,
    pub g: f64,
}

/// A straight chain along x: pores[0] is the inlet, the last pore the
/// outlet, throats[i] joins pores i and i+1. Prism volumes: pore A·2R,
/// throat A·(spacing − R_a − R_b).
pub fn chain(pores: &[Elem], throats: &[Elem], spacing: f64) -> Network {
    assert_eq!(pores.len(), throats.len() + 1);
    let n = pores.len();
    let info = NetworkInfo {
        name: "chain".into(),
        flow_axis: Axis::X,
        length_m: spacing * (n - 1) as f64,
        area_m2: spacing * spacing,
        bulk_volume_m3: spacing.powi(3) * n as f64,
        extent_m: None,
        description: None,
    };
    let mut p = Pores::with_capacity(n);
    for (i, e) in pores.iter().enumerate() {
        p.x.push(i as f64 * spacing);
        p.y.push(0.0);
        p.z.push(0.0);
        p.radius.push(e.radius);
        p.shape_factor.push(e.g);
        p.volume
            .push(network_core::geometry::area(e.radius, e.g) * 2.0 * e.radius);
        p.clay_volume.push(0.0);
        p.boundary.push(if i == 0 {
            Boundary::Inlet
        } else if i == n - 1 {
            Boundary::Outlet
        } else {
            Boundary::Interior
        });
    }
    let mut t = Throats::with_capacity(n - 1);
    for (i, e) in throats.iter().enumerate() {
        let (ra, rb) = (pores[i].radius, pores[i + 1].radius);
        t.pores.push([i as u32, i as u32 + 1]);
        t.radius.push(e.radius);
        t.shape_factor.push(e.g);
        t.length.push(spacing);
        t.conduit_a.push(ra);
        t.conduit_b.push(rb);
        t.volume
            .push(network_core::geometry::area(e.radius, e.g) * (spacing - ra - rb));
        t.clay_volume.push(0.0);
    }
    Network::new(info, p, t).expect("valid chain")
}
