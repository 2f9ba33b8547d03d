//! Cross-section shapes of one element and their closed-form geometry:
//! the shape-factor constants, the shape classes, `A = R²/(4G)` and Patzek's
//! (2001) triangle construction. Pure functions of numbers; nothing here
//! knows a network (so the network's validation and the per-element
//! [`crate::geometry::Geometry`] can both use it).
//!
//! For a circle and for any polygon with an incircle of radius `R` (every
//! triangle, the square), `A = R P / 2`, hence `A = R²/(4G)`.
//!
//! The shape class follows the usual convention of the network-modelling
//! literature (Øren, Bakke & Arntzen 1998, SPE J 3(4):324–336; Valvatne &
//! Blunt 2004, Water Resour. Res. 40:W07406): triangle for `G ≤ √3/36`,
//! square for `√3/36 < G ≤ 0.07`, circle above. The square class reaches
//! a little past the ideal square's `1/16 = 0.0625` because measured shape
//! factors of near-square sections scatter around it; elements in that band
//! keep their measured `G` (area, conductance) and the square's corners.

use serde::{Deserialize, Serialize};
use std::f64::consts::{FRAC_PI_2, PI};

/// Shape factor of a circle, `1/(4π)`.
pub const G_CIRCLE: f64 = 1.0 / (4.0 * PI);
/// Shape factor of a square, `1/16`.
pub const G_SQUARE: f64 = 1.0 / 16.0;
/// Shape factor of an equilateral triangle, `√3/36`.
pub const G_EQUILATERAL: f64 = 0.048_112_522_432_468_82;
/// Upper shape factor of the square class, 0.07 (Øren, Bakke & Arntzen
/// 1998, SPE J 3(4):324–336; Valvatne & Blunt 2004, Water Resour. Res.
/// 40:W07406 — the cut-off value as we recall it from these papers, from
/// memory). Above it an element is a circle.
pub const G_SQUARE_CUTOFF: f64 = 0.07;

/// Cross-section class of an element.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[repr(u8)]
pub enum Shape {
    /// Scalene (or equilateral) triangle with three corners.
    Triangle = 0,
    /// Square with four corners of half-angle π/4.
    Square = 1,
    /// Circle: no corners, cannot hold corner water.
    Circle = 2,
}

impl Shape {
    /// Classifies a shape factor (Øren et al. 1998; Valvatne & Blunt 2004):
    /// triangle for `G ≤ √3/36`, square for `G ≤` [`G_SQUARE_CUTOFF`]
    /// (0.07), else circle.
    pub fn from_shape_factor(g: f64) -> Shape {
        if g <= G_EQUILATERAL {
            Shape::Triangle
        } else if g <= G_SQUARE_CUTOFF {
            Shape::Square
        } else {
            Shape::Circle
        }
    }

    /// Number of corners: 3, 4 or 0.
    pub fn n_corners(self) -> usize {
        match self {
            Shape::Triangle => 3,
            Shape::Square => 4,
            Shape::Circle => 0,
        }
    }

    /// Lower-case name.
    pub fn as_str(self) -> &'static str {
        match self {
            Shape::Triangle => "triangle",
            Shape::Square => "square",
            Shape::Circle => "circle",
        }
    }

    /// Poiseuille conductance factor `k` of `g = k A² G / μ` (Patzek & Silin
    /// 2001, J. Colloid Interface Sci. 236:295–304): 1/2 for the circle
    /// (exact), 0.5623 for the square, 3/5 for the triangle (exact for the
    /// equilateral one, an approximation for others).
    pub fn conductance_factor(self) -> f64 {
        match self {
            Shape::Circle => 0.5,
            Shape::Square => 0.5623,
            Shape::Triangle => 0.6,
        }
    }
}

/// Cross-section area from inscribed radius and shape factor, `A = R²/(4G)`.
#[inline]
pub fn area(radius: f64, shape_factor: f64) -> f64 {
    radius * radius / (4.0 * shape_factor)
}

/// Bounds of the middle corner half-angle β₂ of a triangle with shape factor
/// `g`, after Patzek (2001, SPE J 6(2):144–156):
///
/// $$\beta_{2,\min} = \arctan\Big[\tfrac{2}{\sqrt3}\cos\Big(\tfrac{\arccos(-12\sqrt3 G)}{3} + \tfrac{4\pi}{3}\Big)\Big],\quad
///   \beta_{2,\max} = \arctan\Big[\tfrac{2}{\sqrt3}\cos\Big(\tfrac{\arccos(-12\sqrt3 G)}{3}\Big)\Big]$$
///
/// Valid for `0 < G ≤ √3/36`; larger `G` is clamped to the equilateral value.
pub fn beta2_bounds(g: f64) -> (f64, f64) {
    let c = (-12.0 * 3f64.sqrt() * g).clamp(-1.0, 1.0);
    let phi = c.acos() / 3.0;
    let k = 2.0 / 3f64.sqrt();
    let lo = (k * (phi + 4.0 * PI / 3.0).cos()).atan();
    let hi = (k * phi.cos()).atan();
    (lo.min(hi), hi.max(lo))
}

/// The three corner half-angles `β₁ ≤ β₂ ≤ β₃` of a triangle with shape
/// factor `g`, with `β₂ = β₂,min + u (β₂,max − β₂,min)` for `u ∈ [0, 1]`
/// (Patzek 2001, SPE J 6(2):144–156):
///
/// $$\beta_1 = -\tfrac{\beta_2}{2} + \tfrac12 \arcsin\Big[\frac{(\tan\beta_2 + 4G)\sin\beta_2}{\tan\beta_2 - 4G}\Big],\qquad
///   \beta_3 = \tfrac{\pi}{2} - \beta_1 - \beta_2.$$
///
/// The result satisfies `Σβ = π/2` and `G = 1/(4 Σ cot βᵢ)`.
pub fn triangle_half_angles(g: f64, u: f64) -> [f64; 3] {
    let g = g.min(G_EQUILATERAL);
    let (lo, hi) = beta2_bounds(g);
    let b2 = lo + u.clamp(0.0, 1.0) * (hi - lo);
    let t = b2.tan();
    let s = ((t + 4.0 * g) * b2.sin() / (t - 4.0 * g)).clamp(-1.0, 1.0);
    let b1 = -0.5 * b2 + 0.5 * s.asin();
    let b3 = FRAC_PI_2 - b1 - b2;
    let mut b = [b1, b2, b3];
    b.sort_by(f64::total_cmp);
    b
}

/// Shape factor of a triangle from its half-angles, `G = 1/(4 Σ cot βᵢ)`
/// (Mason & Morrow 1991, J. Colloid Interface Sci. 141:262–274).
pub fn triangle_shape_factor(half_angles: &[f64; 3]) -> f64 {
    1.0 / (4.0 * half_angles.iter().map(|b| 1.0 / b.tan()).sum::<f64>())
}
