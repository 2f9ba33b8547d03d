//! Corner menisci: areas, lengths and hinging contact lines.
//!
//! A corner of half-angle `β` holding water behind a circular arc of signed
//! radius `r` that meets both walls at contact angle `θ` (through water)
//! has, with `x = π/2 − θ − β` (Ma, Mason & Morrow 1996, Colloids Surf. A
//! 117:273–291; Hui & Blunt 2000, J. Phys. Chem. B 104:3833–3845):
//!
//! $$b = r\,\frac{\cos(\theta+\beta)}{\sin\beta},\qquad
//!   L_{arc} = 2 r x,\qquad
//!   A_c = r^2\Big[\frac{\cos\theta\cos(\theta+\beta)}{\sin\beta} - x\Big].$$
//!
//! `r > 0` (water at the lower pressure) bows the arc towards the apex and
//! needs `θ < π/2 − β` (Concus & Finn 1969, PNAS 63:292–299); `r < 0` is a
//! meniscus bulging into the oil, reached only by hinging (below). The same
//! quantities written with `b` instead of `r` (the `*_b` functions) stay
//! regular at the flat meniscus `x = 0`, where `r` is infinite:
//!
//! $$A_c = b^2\sin\beta\Big[\cos\beta - \sin\beta\,\frac{2x - \sin 2x}{2\sin^2 x}\Big],\qquad
//!   L_{arc} = 2 b \sin\beta\,\frac{x}{\sin x}.$$
//!
//! (triangle apex–contacts minus the circular segment between chord and arc).

use std::f64::consts::FRAC_PI_2;

use super::section::Section;

/// Area of water in one corner, m², from the signed arc radius `r` (m),
/// the contact angle `theta` (rad, through water) and the corner half-angle
/// `beta` (rad):
///
/// $$A_c = r^2\Big[\frac{\cos\theta\cos(\theta+\beta)}{\sin\beta} - \Big(\frac{\pi}{2} - \theta - \beta\Big)\Big]$$
///
/// (Ma, Mason & Morrow 1996, Colloids Surf. A 117:273–291). Valid for finite
/// `r`: for `r > 0` with `θ < π/2 − β`, for `r < 0` with `θ > π/2 − β`
/// (bulging hinged meniscus). Use [`corner_area_b`] near the flat meniscus.
#[inline]
pub fn corner_area(r: f64, theta: f64, beta: f64) -> f64 {
    r * r * (theta.cos() * (theta + beta).cos() / beta.sin() - (FRAC_PI_2 - theta - beta))
}

/// `(2x − sin 2x)/(2 sin² x)`, with its series `(2x/3)(1 + 2x²/15 + 2x⁴/105)`
/// for `|x| < 10⁻²` (avoids the cancellation near the flat meniscus).
#[inline]
pub(crate) fn segment_factor(x: f64) -> f64 {
    if x.abs() < 1e-2 {
        let x2 = x * x;
        (2.0 * x / 3.0) * (1.0 + x2 * (2.0 / 15.0 + x2 * (2.0 / 105.0)))
    } else {
        let s = x.sin();
        (2.0 * x - (2.0 * x).sin()) / (2.0 * s * s)
    }
}

/// `x / sin x`, with its series for `|x| < 10⁻²`.
#[inline]
pub(crate) fn x_over_sin(x: f64) -> f64 {
    if x.abs() < 1e-2 {
        let x2 = x * x;
        1.0 + x2 * (1.0 / 6.0 + x2 * (7.0 / 360.0))
    } else {
        x / x.sin()
    }
}

/// [`segment_factor`] given `sin x` and `cos x`: `(x − sin x cos x)/sin² x`.
#[inline]
pub(crate) fn segment_factor_sc(x: f64, sin_x: f64, cos_x: f64) -> f64 {
    if x.abs() < 1e-2 {
        segment_factor(x)
    } else {
        (x - sin_x * cos_x) / (sin_x * sin_x)
    }
}

/// [`x_over_sin`] given `sin x`.
#[inline]
pub(crate) fn x_over_sin_s(x: f64, sin_x: f64) -> f64 {
    if x.abs() < 1e-2 {
        x_over_sin(x)
    } else {
        x / sin_x
    }
}

/// Area of water in one corner, m², from the apex-to-contact distance `b`
/// (m), contact angle `theta` and half-angle `beta` (rad):
///
/// $$A_c = b^2\sin\beta\Big[\cos\beta - \sin\beta\,\frac{2x - \sin 2x}{2\sin^2 x}\Big],\quad x = \frac{\pi}{2} - \theta - \beta,$$
///
/// i.e. the triangle apex–contacts `b² sin β cos β` minus the signed
/// circular segment between chord and arc. Equal to [`corner_area`] with
/// `r = b sin β / sin x`, and regular at the flat meniscus (`x = 0`,
/// `A_c = b² sin β cos β`). Valid for `−π/2 ≤ x < π/2`.
#[inline]
pub fn corner_area_b(b: f64, theta: f64, beta: f64) -> f64 {
    let x = FRAC_PI_2 - theta - beta;
    let sb = beta.sin();
    b * b * sb * (beta.cos() - sb * segment_factor(x))
}

/// Length of the corner arc, m, from `b`, `theta` and `beta`:
/// `L = 2 b sin β · x/sin x` with `x = π/2 − θ − β` (the chord `2 b sin β`
/// at the flat meniscus). Equals `2 r x` for finite `r`.
#[inline]
pub fn corner_arc_length_b(b: f64, theta: f64, beta: f64) -> f64 {
    let x = FRAC_PI_2 - theta - beta;
    2.0 * b * beta.sin() * x_over_sin(x)
}

/// Apex-to-contact distance at which a corner's contact line was pinned by
/// drainage to `pc_max` (Pa) with receding angle `theta_r`, m:
///
/// $$b_{pd} = \frac{\sigma}{P_{c,\max}}\,\frac{\cos(\theta_r+\beta)}{\sin\beta}$$
///
/// (Ma et al. 1996; Øren, Bakke & Arntzen 1998, SPE J 3(4):324–336).
/// Zero when the corner holds no water (`θr ≥ π/2 − β`) or `pc_max ≤ 0`.
#[inline]
pub fn pinned_distance(pc_max: f64, theta_r: f64, beta: f64, sigma: f64) -> f64 {
    let cr = (theta_r + beta).cos();
    if theta_r + beta < FRAC_PI_2 && pc_max > 0.0 {
        sigma / pc_max * cr / beta.sin()
    } else {
        0.0
    }
}

/// Water area of one corner, m², when the capillary pressure rises again
/// after an imbibition that reached `pc_min` (Pa): the contact line stays
/// where `pc_min` left it, at `b*` of [`hinged_corner`]`(pc_min, …)` (the
/// drainage position `b_pd`, or further out if it advanced at `θa`), and the
/// angle hinges back,
///
/// $$\cos(\theta_h+\beta) = \frac{P_c\,b^*\sin\beta}{\sigma},$$
///
/// until it reaches `θr`, after which the meniscus recedes as in drainage
/// (`r = σ/Pc`). The same pinning rule as the imbibition hinging of Ma,
/// Mason & Morrow (1996), applied to the reversal (common practice in
/// hysteresis modelling; cf. Valvatne & Blunt 2004). At `pc = pc_min` it
/// equals the imbibition state. Zero when no arc existed at `pc_min`.
#[inline]
pub fn reversed_corner_area(
    pc: f64,
    pc_min: f64,
    pc_max: f64,
    theta_r: f64,
    theta_a: f64,
    beta: f64,
    sigma: f64,
) -> f64 {
    reversed_corner(pc, pc_min, pc_max, theta_r, theta_a, beta, sigma).map_or(0.0, |m| m.area(beta))
}

/// The corner meniscus of [`reversed_corner_area`]: `None` when no arc
/// existed at `pc_min`.
#[inline]
pub fn reversed_corner(
    pc: f64,
    pc_min: f64,
    pc_max: f64,
    theta_r: f64,
    theta_a: f64,
    beta: f64,
    sigma: f64,
) -> Option<CornerMeniscus> {
    let m = hinged_corner(pc_min, pc_max, theta_r, theta_a, beta, sigma)?;
    let receding = |pc: f64| {
        let r = sigma / pc;
        CornerMeniscus {
            r,
            theta_h: theta_r,
            b: r * (theta_r + beta).cos() / beta.sin(),
            advancing: false,
        }
    };
    if pc_min >= pc_max {
        // No reversal: still the receding drainage meniscus.
        return Some(receding(pc));
    }
    let c = pc * m.b * beta.sin() / sigma;
    if c > (theta_r + beta).cos() {
        // Hinged back to θr: the meniscus recedes.
        return Some(receding(pc));
    }
    let theta_h = c.clamp(-1.0, 1.0).acos() - beta;
    Some(CornerMeniscus {
        r: sigma / pc,
        theta_h,
        b: m.b,
        advancing: false,
    })
}

/// Water area of one corner pinned by drainage to `pc_max`, m², at `pc`
/// (`0 < pc ≤ pc_max`, hinging angle between `θr` and `θa`): the same
/// meniscus as [`hinged_corner`] in its pinned regime, from the closed form
/// with `c = (Pc/Pc,max) cos(θr+β)` and `x = π/2 − θh − β = arcsin c`,
///
/// $$A_c = b_{pd}^2 \sin\beta\Big[\cos\beta - \sin\beta\,\frac{x - c\sqrt{1-c^2}}{c^2}\Big],$$
///
/// one arcsine and one square root instead of the general path (used by
/// the saturation bookkeeping; Ma, Mason & Morrow 1996).
#[inline]
pub fn pinned_corner_area(pc: f64, pc_max: f64, theta_r: f64, beta: f64, sigma: f64) -> f64 {
    let a = (theta_r + beta).cos();
    let (sb, cb) = beta.sin_cos();
    let b = sigma / pc_max * a / sb;
    let c = pc / pc_max * a;
    let x = c.asin();
    b * b * sb * (cb - sb * segment_factor_sc(x, c, (1.0 - c * c).sqrt()))
}

/// State of one corner meniscus in imbibition.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CornerMeniscus {
    /// Signed arc radius `σ/Pc`, m (infinite at `Pc = 0`, where the
    /// meniscus is flat; use the `b`-based methods there).
    pub r: f64,
    /// Contact angle now, rad: the hinging angle while pinned, `θa` when
    /// advancing, `θr` when receding above `pc_max`.
    pub theta_h: f64,
    /// Apex-to-contact distance, m (`b_pd` while pinned).
    pub b: f64,
    /// True when the contact line advances at `θa` (no longer pinned).
    pub advancing: bool,
}

impl CornerMeniscus {
    /// Water area in this corner, m² ([`corner_area_b`]).
    #[inline]
    pub fn area(&self, beta: f64) -> f64 {
        corner_area_b(self.b, self.theta_h, beta)
    }

    /// Arc (oil–water interface) length, m ([`corner_arc_length_b`]).
    #[inline]
    pub fn arc_length(&self, beta: f64) -> f64 {
        corner_arc_length_b(self.b, self.theta_h, beta)
    }
}

/// The corner meniscus at capillary pressure `pc` (Pa) in imbibition after
/// drainage to `pc_max` (Pa), with receding/advancing angles `theta_r`,
/// `theta_a` (rad), half-angle `beta` (rad), tension `sigma` (N/m).
///
/// Hinging (Ma et al. 1996; Øren et al. 1998; Patzek 2001, SPE J
/// 6(2):144–156; Valvatne & Blunt 2004, Water Resour. Res. 40:W07406): the
/// contact line stays at `b_pd` ([`pinned_distance`]) while the angle hinges,
///
/// $$\theta_h = \arccos\Big[\frac{P_c}{P_{c,\max}}\cos(\theta_r+\beta)\Big] - \beta,\qquad \theta_r \le \theta_h \le \theta_a;$$
///
/// once `θh` would exceed `θa` the contact line advances with `θ = θa`,
/// `r = σ/Pc`, `b = r cos(θa+β)/sin β > b_pd`. For `Pc < 0` the pinned arc
/// bulges into the oil; it exists while `(Pc/Pc,max) cos(θr+β) ≥ −1`, i.e.
/// `Pc ≥ −σ/(b_pd sin β)`, and while `θh ≤ θa`.
///
/// `pc ≥ pc_max` gives the receding drainage meniscus (`θ = θr`, `b ≤ b_pd`).
///
/// Returns `None` when the corner holds no water after drainage
/// (`θr ≥ π/2 − β`, or `pc_max ≤ 0`), or when no stable arc exists at `pc`:
/// a pinned bulging arc past `θh = θa` (forced snap-off) or past the
/// semicircle limit, or an advancing arc at `Pc ≤ 0`. Expects `θa ≥ θr`.
#[inline]
pub fn hinged_corner(
    pc: f64,
    pc_max: f64,
    theta_r: f64,
    theta_a: f64,
    beta: f64,
    sigma: f64,
) -> Option<CornerMeniscus> {
    if !(theta_r + beta < FRAC_PI_2 && pc_max > 0.0 && sigma > 0.0) {
        return None;
    }
    let cr = (theta_r + beta).cos();
    let sb = beta.sin();
    if pc >= pc_max {
        let r = sigma / pc;
        return Some(CornerMeniscus {
            r,
            theta_h: theta_r,
            b: r * cr / sb,
            advancing: false,
        });
    }
    let c = pc / pc_max * cr;
    if c < -1.0 {
        return None;
    }
    let theta_h = c.acos() - beta;
    if theta_h <= theta_a {
        return Some(CornerMeniscus {
            r: sigma / pc,
            theta_h,
            b: sigma / pc_max * cr / sb,
            advancing: false,
        });
    }
    // θh > θa: the contact line advances. With Pc > 0 this implies
    // θa + β < π/2, so the advancing arc is a concave one.
    if pc > 0.0 {
        let r = sigma / pc;
        Some(CornerMeniscus {
            r,
            theta_h: theta_a,
            b: r * (theta_a + beta).cos() / sb,
            advancing: true,
        })
    } else {
        None
    }
}

/// Total corner water area of an oil-filled element in drainage at `pc`
/// (Pa), m²: `Σ A_c(σ/Pc, θr, β_i)` over the corners that keep water
/// (`θr < π/2 − β_i`; Concus & Finn 1969), capped at the element area `A`.
///
/// Circles hold none. `pc ≤ 0` returns `A` (no oil-filled state exists
/// there in drainage; the cap is the limit as `Pc → 0⁺`).
pub fn drainage_corner_water_area(s: &Section, theta_r: f64, sigma: f64, pc: f64) -> f64 {
    if s.is_circle() {
        return 0.0;
    }
    let area = s.area();
    if pc <= 0.0 {
        return area;
    }
    let r = sigma / pc;
    let mut sum = 0.0;
    for &beta in s.corner_slice() {
        if theta_r + beta < FRAC_PI_2 {
            sum += corner_area(r, theta_r, beta);
        }
    }
    sum.min(area)
}

/// Total corner water area of an oil-filled element in imbibition at `pc`
/// (Pa), m², with the corners hinging from `pc_max` ([`hinged_corner`]),
/// capped at the element area. Corners with no stable arc (`None`) count
/// zero: at that pressure the element's centre should already have filled
/// with water (snap-off), which the engine decides.
pub fn imbibition_corner_water_area(
    s: &Section,
    theta_r: f64,
    theta_a: f64,
    pc_max: f64,
    sigma: f64,
    pc: f64,
) -> f64 {
    let mut sum = 0.0;
    for &beta in s.corner_slice() {
        if let Some(m) = hinged_corner(pc, pc_max, theta_r, theta_a, beta, sigma) {
            sum += m.area(beta);
        }
    }
    sum.min(s.area())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pinned_closed_form_equals_the_hinged_meniscus() {
        // Identity check of two evaluations of the same pinned arc (Ma et
        // al. 1996): the closed form and the general hinged corner.
        for &(beta, tr, ta) in &[
            (0.3f64, 0.1f64, 0.9f64),
            (0.52, 0.0, 0.6),
            (0.785, 0.2, 0.5),
        ] {
            let pc_max = 2.0e4;
            let p_adv = pc_max * (ta + beta).cos() / (tr + beta).cos();
            for k in 0..50 {
                let pc = p_adv + (pc_max - p_adv) * k as f64 / 49.0;
                let m = hinged_corner(pc, pc_max, tr, ta, beta, 0.03).unwrap();
                let a = pinned_corner_area(pc, pc_max, tr, beta, 0.03);
                assert!(
                    (a - m.area(beta)).abs() <= 1e-12 * a,
                    "{beta} {pc}: {a} vs {}",
                    m.area(beta)
                );
            }
        }
    }

    #[test]
    fn reversed_corner_is_continuous_at_the_turning_point_and_recedes_at_theta_r() {
        // At pc = pc_min the reversal starts from the imbibition state
        // (same contact line and angle, so the same area, by construction
        // of the pinning rule); far above, the contact line has hinged back
        // to θr and the meniscus is the drainage one, r = σ/Pc (Ma et al.
        // 1996).
        let (beta, tr, sigma, pc_max) = (0.5, 0.1, 0.03, 1.0e4);
        // Water-wet (θa = 0.7, turning at positive Pc, advanced and pinned)
        // and oil-wet (θa = 2.0, pinned arc bulging at negative Pc).
        for (ta, pc_min) in [(0.7, 3000.0), (0.7, 500.0), (2.0, -200.0), (2.0, -3000.0)] {
            let imb =
                hinged_corner(pc_min, pc_max, tr, ta, beta, sigma).map_or(0.0, |m| m.area(beta));
            assert!(imb > 0.0, "no arc at {pc_min}");
            let rev = reversed_corner_area(pc_min, pc_min, pc_max, tr, ta, beta, sigma);
            assert!(
                (imb - rev).abs() <= 1e-12 * imb.max(1e-30),
                "{pc_min}: {imb} vs {rev}"
            );
            let high = 50.0 * pc_max;
            let rec = reversed_corner_area(high, pc_min, pc_max, tr, ta, beta, sigma);
            assert!((rec - corner_area(sigma / high, tr, beta)).abs() < 1e-15 * rec.max(1e-30));
            // Rising pressure never adds corner water.
            let mut last = rev;
            for k in 1..200 {
                let pc = pc_min + (high - pc_min) * k as f64 / 200.0;
                let a = reversed_corner_area(pc, pc_min, pc_max, tr, ta, beta, sigma);
                assert!(a <= last * (1.0 + 1e-12), "{pc_min} -> {pc}: {a} > {last}");
                last = a;
            }
        }
    }
    use crate::capillary::testgeom::{CornerArc, shoelace_area};
    use std::f64::consts::PI;

    #[test]
    fn corner_area_matches_polygon_integration_of_arc_geometry() {
        // Ma et al. (1996) corner area against a direct computation: the arc
        // is built from its contact points and radius, the contact angle is
        // measured from the tangent, and the area is the shoelace integral of
        // the region apex–contact–arc–contact (independent geometry).
        for &beta in &[0.2, PI / 6.0, PI / 4.0, 0.9] {
            for &(b, rho, bulge) in &[
                (1.0, 3.0, false),
                (1.0, 1.3, false),
                (0.5, 40.0, false),
                (1.0, 3.0, true),
                (1.0, 1.2, true),
                (2.0, 50.0, true),
            ] {
                // A concave arc with θ ≥ 0 needs ρ ≥ b tan β; any arc needs ρ ≥ b sin β.
                if rho < b * f64::sin(beta) || (!bulge && rho < b * beta.tan()) {
                    continue;
                }
                let arc = CornerArc::through_contacts(b, beta, rho, bulge);
                let theta = arc.contact_angle();
                let poly = arc.water_polygon(20_000);
                let a_geo = shoelace_area(&poly);
                let r = if bulge { -rho } else { rho };
                let a_r = corner_area(r, theta, beta);
                let a_b = corner_area_b(b, theta, beta);
                let tol = 1e-7 * a_geo.abs().max(b * b * 1e-3);
                assert!(
                    (a_r - a_geo).abs() < tol,
                    "β={beta} b={b} ρ={rho} {a_r} vs {a_geo}"
                );
                assert!(
                    (a_b - a_geo).abs() < tol,
                    "β={beta} b={b} ρ={rho} {a_b} vs {a_geo}"
                );
                // Arc length: ρ × subtended angle (direct geometry).
                let l = corner_arc_length_b(b, theta, beta);
                assert!(
                    (l - arc.arc_length()).abs() < 1e-10 * l,
                    "{l} vs {}",
                    arc.arc_length()
                );
                // b = r cos(θ+β)/sin β (Ma et al. 1996).
                assert!((r * (theta + beta).cos() / beta.sin() - b).abs() < 1e-10 * b);
            }
        }
    }

    #[test]
    fn flat_meniscus_area_is_the_apex_triangle() {
        // At θ = π/2 − β the arc is a straight chord: A = b² sin β cos β and
        // L = 2 b sin β (analytic); the b-form must be continuous through it.
        for &beta in &[0.1, 0.5, 1.2] {
            let b = 1.7;
            let theta = FRAC_PI_2 - beta;
            let tri = b * b * beta.sin() * beta.cos();
            assert!((corner_area_b(b, theta, beta) - tri).abs() < 1e-14);
            assert!((corner_arc_length_b(b, theta, beta) - 2.0 * b * beta.sin()).abs() < 1e-14);
            for &dx in &[1e-3, 9.9e-3, 1.01e-2, 3e-2] {
                for sgn in [-1.0, 1.0] {
                    let th = theta - sgn * dx;
                    let r = b * beta.sin() / (sgn * dx).sin();
                    let a_r = corner_area(r, th, beta);
                    let a_b = corner_area_b(b, th, beta);
                    assert!((a_r - a_b).abs() < 1e-9 * tri, "dx={dx} {a_r} {a_b}");
                }
            }
        }
    }

    #[test]
    fn hinging_angle_matches_geometry_of_pinned_arc() {
        // Hinging (Ma et al. 1996; Valvatne & Blunt 2004) against geometry:
        // an arc of radius σ/|Pc| through the pinned contacts at b_pd has a
        // measured contact angle equal to θh.
        let sigma = 0.03;
        for &beta in &[0.25, PI / 6.0, PI / 4.0] {
            let theta_r = 0.2;
            let theta_a = PI - beta - 1e-3; // never advances within the range
            let pc_max = 5000.0;
            let b_pd = pinned_distance(pc_max, theta_r, beta, sigma);
            for k in 0..=40 {
                let pc = pc_max * (1.0 - 2.0 * k as f64 / 40.0) * 0.999;
                if pc.abs() < 1.0 {
                    continue;
                }
                let rho = sigma / pc.abs();
                if rho < b_pd * beta.sin() {
                    assert!(hinged_corner(pc, pc_max, theta_r, theta_a, beta, sigma).is_none());
                    continue;
                }
                let m = hinged_corner(pc, pc_max, theta_r, theta_a, beta, sigma).unwrap();
                assert!(!m.advancing);
                assert!((m.b - b_pd).abs() < 1e-15 * b_pd.max(1e-300));
                let arc = CornerArc::through_contacts(b_pd, beta, rho, pc < 0.0);
                let theta_geo = arc.contact_angle();
                assert!((m.theta_h - theta_geo).abs() < 1e-9, "β={beta} pc={pc}");
                let a_geo = shoelace_area(&arc.water_polygon(20_000));
                assert!((m.area(beta) - a_geo).abs() < 1e-7 * a_geo);
            }
        }
    }

    #[test]
    fn hinging_starts_at_receding_angle_and_advances_past_theta_a() {
        // At Pc = Pc,max the pinned arc is the drainage arc (θh = θr); it
        // advances once θh = θa, at Pc = Pc,max cos(θa+β)/cos(θr+β)
        // (hinging relation, Valvatne & Blunt 2004). The advancing arc
        // measured geometrically has contact angle θa and b > b_pd.
        let (sigma, beta, theta_r, theta_a, pc_max) = (0.025, 0.4, 0.1, 0.8, 8000.0);
        let m0 = hinged_corner(pc_max, pc_max, theta_r, theta_a, beta, sigma).unwrap();
        assert!((m0.theta_h - theta_r).abs() < 1e-12);
        let pc_adv = pc_max * (theta_a + beta).cos() / (theta_r + beta).cos();
        let above = hinged_corner(pc_adv * 1.0001, pc_max, theta_r, theta_a, beta, sigma).unwrap();
        assert!(!above.advancing && above.theta_h < theta_a);
        let pc = pc_adv * 0.5;
        let m = hinged_corner(pc, pc_max, theta_r, theta_a, beta, sigma).unwrap();
        assert!(m.advancing);
        assert!(m.b > pinned_distance(pc_max, theta_r, beta, sigma));
        let arc = CornerArc::through_contacts(m.b, beta, sigma / pc, false);
        assert!((arc.contact_angle() - theta_a).abs() < 1e-9);
        // No advancing concave arc can exist at Pc ≤ 0.
        assert!(hinged_corner(-1.0, pc_max, theta_r, theta_a, beta, sigma).is_none());
    }

    #[test]
    fn dry_corners_hold_no_water() {
        // Concus & Finn (1969): no corner arc when θ ≥ π/2 − β.
        let beta = PI / 4.0;
        assert!(hinged_corner(10.0, 100.0, PI / 4.0, 2.0, beta, 0.03).is_none());
        assert_eq!(pinned_distance(100.0, 0.9, beta, 0.03), 0.0);
        let c = [beta; 4];
        let s = Section::new(1e-5, 1.0 / 16.0, &c);
        assert_eq!(drainage_corner_water_area(&s, 0.8, 0.03, 5000.0), 0.0);
    }

    #[test]
    fn drainage_corner_water_grows_as_pc_falls_and_is_capped() {
        // Monotone in Pc (A_c ∝ 1/Pc², analytic) and never above A.
        let c = [PI / 6.0; 3];
        let s = Section::new(1e-5, crate::geometry::G_EQUILATERAL, &c);
        let (sigma, theta) = (0.03, 0.3);
        let mut last = 0.0;
        for k in (1..200).rev() {
            let pc = 200.0 * k as f64;
            let a = drainage_corner_water_area(&s, theta, sigma, pc);
            assert!(a >= last && a <= s.area());
            last = a;
        }
        assert_eq!(drainage_corner_water_area(&s, theta, sigma, 1e-3), s.area());
        // Corner area scales as r² (analytic): quadrupled at half the Pc.
        let a1 = drainage_corner_water_area(&s, theta, sigma, 2e4);
        let a2 = drainage_corner_water_area(&s, theta, sigma, 1e4);
        assert!((a2 / a1 - 4.0).abs() < 1e-12);
    }

    #[test]
    fn imbibition_area_equals_drainage_area_at_pc_max() {
        // At Pc = Pc,max the hinged state is the drainage state (Ma et al. 1996).
        let b = crate::geometry::triangle_half_angles(0.03, 0.7);
        let s = Section::new(2e-5, 0.03, &b);
        let (sigma, theta_r, pc_max) = (0.03, 0.3, 6000.0);
        let a_d = drainage_corner_water_area(&s, theta_r, sigma, pc_max);
        let a_i = imbibition_corner_water_area(&s, theta_r, 3.0, pc_max, sigma, pc_max);
        assert!((a_d - a_i).abs() < 1e-12 * a_d);
        // Hinged corners hold more water as Pc falls (A_c grows as θh grows);
        // θa = 3 keeps every corner pinned down to −2000 Pa.
        let a_low = imbibition_corner_water_area(&s, theta_r, 3.0, pc_max, sigma, -2000.0);
        assert!(a_low > a_i);
    }
}
