//! Cross-section geometry of every pore and throat, derived from the
//! network's inscribed radii and shape factors.
//!
//! Every element (pores first, then throats; see [`crate::Element`]) is
//! idealised as a straight prism whose cross-section is a circle, a square or
//! a triangle with the element's shape factor `G = A/P²`; the single-section
//! formulas live in [`crate::shape`].

use rayon::prelude::*;
use std::f64::consts::FRAC_PI_4;

use crate::Network;
use crate::numeric::unit_hash;
pub use crate::shape::{
    G_CIRCLE, G_EQUILATERAL, G_SQUARE, Shape, area, beta2_bounds, triangle_half_angles,
    triangle_shape_factor,
};

/// Random stream used for the triangle corner draw (see [`unit_hash`]).
const STREAM_TRIANGLE: u64 = 0x7472_6961_6e67_6c65;

/// Derived cross-section geometry of every element, indexed like
/// [`crate::Element`] (pores first, then throats).
///
/// Invariants: `shape[e]` agrees with [`Shape::from_shape_factor`] of the
/// element's shape factor; for triangles `half_angles[e]` sums to π/2 and is
/// sorted ascending; for squares it is `[π/4; 3]` (the fourth corner equals
/// the others); for circles it is `[0; 3]` and unused.
#[derive(Clone, Debug, PartialEq)]
pub struct Geometry {
    /// Shape class per element.
    pub shape: Vec<Shape>,
    /// Inscribed radius per element, m.
    pub radius: Vec<f64>,
    /// Shape factor per element.
    pub shape_factor: Vec<f64>,
    /// Corner half-angles per element, rad (see the type's invariants).
    pub half_angles: Vec<[f64; 3]>,
}

impl Geometry {
    /// Derives the geometry of every element; the middle triangle angle β₂
    /// is drawn uniformly between its bounds from a counter-based generator
    /// keyed by `seed` and the element index, so the result does not depend
    /// on the thread count.
    pub fn new(network: &Network, seed: u64) -> Geometry {
        let n_p = network.n_pores();
        let n_e = network.n_elements();
        let pores = network.pores();
        let throats = network.throats();
        let mut radius = Vec::with_capacity(n_e);
        radius.extend_from_slice(&pores.radius);
        radius.extend_from_slice(&throats.radius);
        let mut shape_factor = Vec::with_capacity(n_e);
        shape_factor.extend_from_slice(&pores.shape_factor);
        shape_factor.extend_from_slice(&throats.shape_factor);
        let shape: Vec<Shape> = shape_factor
            .par_iter()
            .map(|&g| Shape::from_shape_factor(g))
            .collect();
        let half_angles: Vec<[f64; 3]> = (0..n_e)
            .into_par_iter()
            .map(|e| match shape[e] {
                Shape::Triangle => {
                    let u = unit_hash(seed, STREAM_TRIANGLE, e as u64);
                    triangle_half_angles(shape_factor[e], u)
                }
                Shape::Square => [FRAC_PI_4; 3],
                Shape::Circle => [0.0; 3],
            })
            .collect();
        debug_assert_eq!(shape.len(), n_p + network.n_throats());
        Geometry {
            shape,
            radius,
            shape_factor,
            half_angles,
        }
    }

    /// Number of elements.
    pub fn len(&self) -> usize {
        self.shape.len()
    }

    /// True when there are no elements.
    pub fn is_empty(&self) -> bool {
        self.shape.is_empty()
    }

    /// Cross-section area of element `e`, m².
    #[inline]
    pub fn area(&self, e: usize) -> f64 {
        area(self.radius[e], self.shape_factor[e])
    }

    /// Corner half-angles of element `e` (empty for circles, 3 for triangles,
    /// 4 for squares).
    #[inline]
    pub fn corners(&self, e: usize) -> Corners {
        Corners::of(self.shape[e], &self.half_angles[e])
    }
}

/// The corner half-angles of one element, as a small fixed-size list.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Corners {
    angles: [f64; 4],
    n: usize,
}

impl Corners {
    /// Corners of a shape with the stored half-angles.
    pub fn of(shape: Shape, half_angles: &[f64; 3]) -> Corners {
        match shape {
            Shape::Triangle => Corners {
                angles: [half_angles[0], half_angles[1], half_angles[2], 0.0],
                n: 3,
            },
            Shape::Square => Corners {
                angles: [FRAC_PI_4; 4],
                n: 4,
            },
            Shape::Circle => Corners {
                angles: [0.0; 4],
                n: 0,
            },
        }
    }

    /// The half-angles, rad.
    pub fn as_slice(&self) -> &[f64] {
        &self.angles[..self.n]
    }

    /// Number of corners.
    pub fn len(&self) -> usize {
        self.n
    }

    /// True for a circle.
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// `Σ cot βᵢ`; equals `1/(4G)` for polygons with an incircle.
    pub fn sum_cot(&self) -> f64 {
        self.as_slice().iter().map(|b| 1.0 / b.tan()).sum()
    }
}

#[cfg(test)]
mod tests {
    use std::f64::consts::{FRAC_PI_2, PI};

    use super::*;

    #[test]
    fn equilateral_triangle_has_shape_factor_root3_over_36() {
        // Patzek 2001: β₂,min = β₂,max = π/6 at G = √3/36; direct geometry
        // of an equilateral triangle of side a: A = √3a²/4, P = 3a, G = √3/36.
        let a = 1.0;
        let g_direct = (3f64.sqrt() * a * a / 4.0) / (3.0 * a).powi(2);
        assert!((g_direct - G_EQUILATERAL).abs() < 1e-16);
        let b = triangle_half_angles(G_EQUILATERAL, 0.5);
        for x in b {
            assert!((x - PI / 6.0).abs() < 1e-7, "{b:?}");
        }
        assert!((triangle_shape_factor(&b) - G_EQUILATERAL).abs() < 1e-14);
    }

    #[test]
    fn patzek_triangle_recovers_shape_factor_and_angle_sum() {
        // Patzek 2001 construction: Σβ = π/2 and G = 1/(4 Σ cot β) to round-off.
        for i in 1..=400 {
            let g = G_EQUILATERAL * i as f64 / 400.0;
            for &u in &[0.0, 0.25, 0.5, 0.75, 1.0] {
                let b = triangle_half_angles(g, u);
                let sum: f64 = b.iter().sum();
                assert!((sum - FRAC_PI_2).abs() < 1e-12, "G={g} u={u} {b:?}");
                let g_back = triangle_shape_factor(&b);
                assert!((g_back - g).abs() < 1e-12, "G={g} u={u} back {g_back}");
                assert!(b.iter().all(|&x| x > 0.0));
            }
        }
    }

    #[test]
    fn beta2_bounds_give_isosceles_limits() {
        // Patzek 2001: β₂,min gives β₁ = β₂, β₂,max gives β₂ = β₃.
        let g = 0.03;
        let lo = triangle_half_angles(g, 0.0);
        let hi = triangle_half_angles(g, 1.0);
        assert!((lo[0] - lo[1]).abs() < 1e-6, "{lo:?}");
        assert!((hi[1] - hi[2]).abs() < 1e-6, "{hi:?}");
    }

    #[test]
    fn square_corners_recover_square_shape_factor() {
        // Square: four corners of π/4, Σ cot β = 4 → G = 1/16 (analytic).
        let c = Corners::of(Shape::Square, &[FRAC_PI_4; 3]);
        assert!((1.0 / (4.0 * c.sum_cot()) - G_SQUARE).abs() < 1e-15);
    }

    #[test]
    fn shape_classes_follow_shape_factor_cut_offs() {
        assert_eq!(Shape::from_shape_factor(0.02), Shape::Triangle);
        assert_eq!(Shape::from_shape_factor(G_EQUILATERAL), Shape::Triangle);
        assert_eq!(Shape::from_shape_factor(0.055), Shape::Square);
        assert_eq!(Shape::from_shape_factor(G_SQUARE), Shape::Square);
        // The square class reaches G = 0.07 (Øren, Bakke & Arntzen 1998;
        // Valvatne & Blunt 2004; cut-off value from memory): 0.066 and 0.07
        // are squares, just above is a circle.
        assert_eq!(Shape::from_shape_factor(0.066), Shape::Square);
        assert_eq!(Shape::from_shape_factor(0.07), Shape::Square);
        assert_eq!(Shape::from_shape_factor(0.0701), Shape::Circle);
        assert_eq!(Shape::from_shape_factor(G_CIRCLE), Shape::Circle);
    }

    #[test]
    fn area_from_inscribed_radius_matches_direct_geometry() {
        // Square of side 2R: A = 4R², G = 1/16 → R²/(4G) = 4R² (analytic).
        assert!((area(0.5, G_SQUARE) - 1.0).abs() < 1e-15);
        // Circle: A = πR² (analytic).
        assert!((area(2.0, G_CIRCLE) - 4.0 * PI).abs() < 1e-12);
        // Equilateral triangle with inradius R has side 2√3R, A = 3√3R².
        assert!((area(1.0, G_EQUILATERAL) - 3.0 * 3f64.sqrt()).abs() < 1e-12);
    }
}
