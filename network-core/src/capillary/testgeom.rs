//! Independent plane geometry for the capillary tests: polygons built from
//! coordinates, corner arcs built from contact points, areas by the
//! shoelace formula, contact angles measured from tangents. Nothing here
//! uses the closed forms under test.

use std::f64::consts::PI;

/// Shoelace area of a closed polygon (absolute value).
pub fn shoelace_area(p: &[[f64; 2]]) -> f64 {
    let n = p.len();
    let mut s = 0.0;
    for i in 0..n {
        let a = p[i];
        let b = p[(i + 1) % n];
        s += a[0] * b[1] - a[1] * b[0];
    }
    0.5 * s.abs()
}

/// Vertices of the polygon with an incircle of radius `radius` centred at
/// the origin and corner half-angles `betas` (vertex k lies on its
/// bisector at distance R/sin β_k; the angle at the centre between
/// adjacent vertices is π − β_k − β_{k+1}).
pub fn polygon_vertices(radius: f64, betas: &[f64]) -> Vec<[f64; 2]> {
    let mut phi: f64 = 0.0;
    let mut v = Vec::with_capacity(betas.len());
    for k in 0..betas.len() {
        let d = radius / betas[k].sin();
        v.push([d * phi.cos(), d * phi.sin()]);
        phi += PI - betas[k] - betas[(k + 1) % betas.len()];
    }
    v
}

/// Perimeter of a closed polygon.
pub fn polygon_perimeter(p: &[[f64; 2]]) -> f64 {
    (0..p.len()).map(|i| dist(p[i], p[(i + 1) % p.len()])).sum()
}

/// Euclidean distance.
pub fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
}

/// A circular arc in one corner, in the corner frame: apex at the origin,
/// bisector along +x, walls along (cos β, ±sin β). The arc centre lies on
/// the bisector at x = `d`; the water is on the apex side of the arc.
#[derive(Clone, Copy, Debug)]
pub struct CornerArc {
    /// Half-angle, rad.
    pub beta: f64,
    /// Centre position on the bisector.
    pub d: f64,
    /// Arc radius (positive).
    pub rho: f64,
    /// True when the arc bulges away from the apex (centre on the apex side).
    pub bulge: bool,
    /// Apex-to-contact distance along each wall.
    pub b: f64,
}

impl CornerArc {
    /// The arc of radius `rho` through the wall points at distance `b`
    /// from the apex, bowing towards the apex (`bulge = false`) or away.
    pub fn through_contacts(b: f64, beta: f64, rho: f64, bulge: bool) -> CornerArc {
        let disc = (rho * rho - (b * beta.sin()).powi(2)).max(0.0).sqrt();
        let d = if bulge {
            b * beta.cos() - disc
        } else {
            b * beta.cos() + disc
        };
        CornerArc {
            beta,
            d,
            rho,
            bulge,
            b,
        }
    }

    /// The concave arc (bowing towards the apex) of radius `rho` whose
    /// measured contact angle is `theta` (needs θ < π/2 − β), found by
    /// bisection on the centre position.
    pub fn with_angle(rho: f64, theta: f64, beta: f64) -> CornerArc {
        let sb = beta.sin();
        let make = |d: f64| {
            let t = d * beta.cos() - (rho * rho - (d * sb).powi(2)).max(0.0).sqrt();
            CornerArc {
                beta,
                d,
                rho,
                bulge: false,
                b: t,
            }
        };
        // d = ρ: contact at the apex (θ = π/2 − β); d = ρ/sin β: tangent (θ = 0).
        let (mut lo, mut hi) = (rho, rho / sb);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if make(mid).contact_angle() > theta {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        make(0.5 * (lo + hi))
    }

    /// Upper contact point.
    pub fn contact(&self) -> [f64; 2] {
        [self.b * self.beta.cos(), self.b * self.beta.sin()]
    }

    /// Contact angle measured through the corner water: the angle at the
    /// upper contact between the wall ray towards the apex and the arc's
    /// tangent ray pointing into the corner interior.
    pub fn contact_angle(&self) -> f64 {
        let p = self.contact();
        let rad = [p[0] - self.d, p[1]];
        let mut t = [-rad[1], rad[0]];
        let n = (t[0] * t[0] + t[1] * t[1]).sqrt();
        t = [t[0] / n, t[1] / n];
        // Inward normal of the upper wall.
        let inward = [self.beta.sin(), -self.beta.cos()];
        if t[0] * inward[0] + t[1] * inward[1] < 0.0 {
            t = [-t[0], -t[1]];
        }
        let to_apex = [-self.beta.cos(), -self.beta.sin()];
        (t[0] * to_apex[0] + t[1] * to_apex[1])
            .clamp(-1.0, 1.0)
            .acos()
    }

    /// Angle of the upper contact seen from the centre.
    fn phi_upper(&self) -> f64 {
        let p = self.contact();
        p[1].atan2(p[0] - self.d)
    }

    /// Angle subtended by the arc at its centre.
    pub fn subtended(&self) -> f64 {
        let phi = self.phi_upper();
        if self.bulge {
            2.0 * phi
        } else {
            2.0 * PI - 2.0 * phi
        }
    }

    /// Arc length, ρ × subtended angle.
    pub fn arc_length(&self) -> f64 {
        self.rho * self.subtended()
    }

    /// Point at parameter `s ∈ [0, 1]` along the arc from the upper to the
    /// lower contact, in the corner frame.
    pub fn point(&self, s: f64) -> [f64; 2] {
        let phi0 = self.phi_upper();
        let phi = if self.bulge {
            phi0 - s * 2.0 * phi0
        } else {
            phi0 + s * (2.0 * PI - 2.0 * phi0)
        };
        [self.d + self.rho * phi.cos(), self.rho * phi.sin()]
    }

    /// The water region apex – upper contact – arc – lower contact as a
    /// polygon with `n` arc points.
    pub fn water_polygon(&self, n: usize) -> Vec<[f64; 2]> {
        let mut v = Vec::with_capacity(n + 2);
        v.push([0.0, 0.0]);
        for k in 0..=n {
            v.push(self.point(k as f64 / n as f64));
        }
        v
    }

    /// Water area from coordinates: the triangle apex–contacts (shoelace)
    /// minus (concave) or plus (bulging) the circular segment cut off by the
    /// chord, ρ²(φ − sin φ)/2 with φ the measured subtended angle.
    pub fn water_area(&self) -> f64 {
        let p = self.contact();
        let tri = shoelace_area(&[[0.0, 0.0], p, [p[0], -p[1]]]);
        let phi = self.subtended();
        let seg = 0.5 * self.rho * self.rho * (phi - phi.sin());
        if self.bulge { tri + seg } else { tri - seg }
    }

    /// Position on the bisector of the arc's point there.
    pub fn bisector_point(&self) -> f64 {
        if self.bulge {
            self.d + self.rho
        } else {
            self.d - self.rho
        }
    }
}

/// Oil-region measures of a polygon whose corners hold the given arcs
/// (`None` for a dry corner): `(A_o, L_ow, L_os)`, plus whether the
/// configuration is valid (arcs of adjacent corners do not overlap).
pub fn oil_region(radius: f64, betas: &[f64], arcs: &[Option<CornerArc>]) -> (f64, f64, f64, bool) {
    let v = polygon_vertices(radius, betas);
    let n = v.len();
    let area = shoelace_area(&v);
    let perim = polygon_perimeter(&v);
    let mut a_w = 0.0;
    let mut l_ow = 0.0;
    let mut sum_b = 0.0;
    for a in arcs.iter().flatten() {
        a_w += a.water_area();
        l_ow += a.arc_length();
        sum_b += 2.0 * a.b;
    }
    let mut valid = area - a_w > 0.0;
    for k in 0..n {
        let side = dist(v[k], v[(k + 1) % n]);
        let bk = arcs[k].map_or(0.0, |a| a.b);
        let bj = arcs[(k + 1) % n].map_or(0.0, |a| a.b);
        if bk + bj > side {
            valid = false;
        }
    }
    (area - a_w, l_ow, perim - sum_b, valid)
}
