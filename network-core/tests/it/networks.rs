//! Small hand-built test networks shared by every area: lattices with
//! seeded radii (flow tests) and chains of given elements (displacement
//! tests).

use network_core::geometry::G_CIRCLE;
use network_core::numeric::unit_hash;
use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

/// A simple-cubic lattice of `n[0] × n[1] × n[2]` pores with spacing
/// `spacing` (m), circular pores and throats, inlet/outlet tags on the first
/// and last layer along `flow_axis`.
pub struct Lattice {
    /// Pores along x, y, z.
    pub n: [usize; 3],
    /// Pore spacing, m.
    pub spacing: f64,
    /// Axis of the inlet/outlet tags.
    pub flow_axis: Axis,
    /// Wrap-around throats in the two directions normal to `flow_axis`.
    pub periodic: bool,
    /// Conduit part inside each pore as a fraction of the spacing.
    pub conduit_fraction: f64,
    /// Pore radius, m.
    pub pore_radius: f64,
    /// Clay volume of each throat, m³.
    pub throat_clay: f64,
}

impl Lattice {
    /// A cube of `n³` pores along z with no pore-body resistance.
    pub fn cube(n: usize, spacing: f64) -> Lattice {
        Lattice {
            n: [n, n, n],
            spacing,
            flow_axis: Axis::Z,
            periodic: false,
            conduit_fraction: 0.0,
            pore_radius: 0.3 * spacing,
            throat_clay: 0.0,
        }
    }

    /// Pore index of lattice site `(i, j, k)`.
    pub fn index(&self, i: usize, j: usize, k: usize) -> usize {
        i + self.n[0] * (j + self.n[1] * k)
    }

    /// Builds the network with throat radius `radius(t)` for throat `t`
    /// (throats are numbered in construction order: for each pore, its +x,
    /// +y, +z bonds).
    pub fn build(&self, radius: impl Fn(usize) -> f64) -> Network {
        let [nx, ny, nz] = self.n;
        let s = self.spacing;
        let a = self.flow_axis.index();
        let mut pores = Pores::with_capacity(nx * ny * nz);
        for k in 0..nz {
            for j in 0..ny {
                for i in 0..nx {
                    let c = [i, j, k];
                    pores.x.push(i as f64 * s);
                    pores.y.push(j as f64 * s);
                    pores.z.push(k as f64 * s);
                    pores.radius.push(self.pore_radius);
                    pores.shape_factor.push(G_CIRCLE);
                    pores
                        .volume
                        .push(4.0 / 3.0 * std::f64::consts::PI * self.pore_radius.powi(3));
                    pores.clay_volume.push(0.0);
                    pores.boundary.push(if c[a] == 0 {
                        Boundary::Inlet
                    } else if c[a] == self.n[a] - 1 {
                        Boundary::Outlet
                    } else {
                        Boundary::Interior
                    });
                }
            }
        }
        let mut throats = Throats::with_capacity(3 * nx * ny * nz);
        for k in 0..nz {
            for j in 0..ny {
                for i in 0..nx {
                    let c = [i, j, k];
                    for d in 0..3 {
                        let mut e = c;
                        if c[d] + 1 < self.n[d] {
                            e[d] += 1;
                        } else if self.periodic && d != a && self.n[d] > 2 {
                            e[d] = 0;
                        } else {
                            continue;
                        }
                        let t = throats.len();
                        let r = radius(t);
                        throats.pores.push([
                            self.index(c[0], c[1], c[2]) as u32,
                            self.index(e[0], e[1], e[2]) as u32,
                        ]);
                        throats.radius.push(r);
                        throats.shape_factor.push(G_CIRCLE);
                        throats.length.push(s);
                        throats.conduit_a.push(self.conduit_fraction * s);
                        throats.conduit_b.push(self.conduit_fraction * s);
                        let lt = s * (1.0 - 2.0 * self.conduit_fraction);
                        throats.volume.push(std::f64::consts::PI * r * r * lt);
                        throats.clay_volume.push(self.throat_clay);
                    }
                }
            }
        }
        let ext = [nx as f64 * s, ny as f64 * s, nz as f64 * s];
        let info = NetworkInfo {
            name: "test lattice".into(),
            flow_axis: self.flow_axis,
            length_m: (self.n[a] - 1) as f64 * s,
            area_m2: ext[(a + 1) % 3] * ext[(a + 2) % 3],
            bulk_volume_m3: ext[0] * ext[1] * ext[2],
            extent_m: Some(ext),
            description: None,
        };
        Network::new(info, pores, throats).expect("test lattice is valid")
    }
}

/// A seeded uniform number in `[lo, hi)` for throat `t`.
pub fn uniform(seed: u64, t: usize, lo: f64, hi: f64) -> f64 {
    lo + (hi - lo) * unit_hash(seed, 17, t as u64)
}

/// Log-uniform throat radius in `[r_min, 10 r_min)` for throat `t`.
pub fn log_uniform_radius(seed: u64, t: usize, r_min: f64) -> f64 {
    r_min * 10f64.powf(unit_hash(seed, 23, t as u64))
}

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

/// N parallel circular tubes of radius `radii[i]` and length `length`
/// between the x = 0 and x = length faces: face pore i – throat i – face
/// pore N + i, no cross-links. The face pores are wider than any tube and
/// hold no volume and no conduit length, so each tube is just its throat
/// (a circular capillary of radius `radii[i]` and length `length`) and the
/// pore space is the tubes alone.
pub fn bundle(radii: &[f64], length: f64) -> Network {
    let n = radii.len();
    let info = NetworkInfo {
        name: "bundle of tubes".into(),
        flow_axis: Axis::X,
        length_m: length,
        area_m2: n as f64 * 1e-8,
        bulk_volume_m3: n as f64 * 1e-8 * length,
        extent_m: None,
        description: None,
    };
    let mut p = Pores::with_capacity(2 * n);
    for i in 0..2 * n {
        p.x.push(if i < n { 0.0 } else { length });
        p.y.push((i % n) as f64 * 1e-4);
        p.z.push(0.0);
        p.radius.push(1e-4);
        p.shape_factor.push(G_CIRCLE);
        p.volume.push(0.0);
        p.clay_volume.push(0.0);
        p.boundary.push(if i < n {
            Boundary::Inlet
        } else {
            Boundary::Outlet
        });
    }
    let mut t = Throats::with_capacity(n);
    for (i, &r) in radii.iter().enumerate() {
        t.pores.push([i as u32, (n + i) as u32]);
        t.radius.push(r);
        t.shape_factor.push(G_CIRCLE);
        t.volume.push(std::f64::consts::PI * r * r * length);
        t.clay_volume.push(0.0);
        t.length.push(length);
        t.conduit_a.push(0.0);
        t.conduit_b.push(0.0);
    }
    Network::new(info, p, t).expect("valid bundle")
}
