//! The cross-section of one element as the capillary functions see it.

use std::f64::consts::{FRAC_PI_2, PI};

use crate::geometry::Corners;

/// Largest number of corners the capillary functions read (squares have 4).
pub const MAX_CORNERS: usize = 4;

/// One element's cross-section: inscribed radius `R` (m), shape factor `G`
/// and corner half-angles `β_i` (rad).
///
/// The section is the polygon with an incircle of radius `R` whose area is
/// `A = R²/(4G)` and perimeter `P = 2A/R = R/(2G)` (the relation `A = RP/2`
/// of Mason & Morrow 1991, J. Colloid Interface Sci. 141:262–274). For a
/// triangle or square with `G = 1/(4 Σ cot β_i)` this is the exact polygon;
/// for an element classed as a square with `G < 1/16` the balance uses the
/// element's own area and perimeter with right-angled corners (a common
/// idealisation). `corners` is empty for circles; at most [`MAX_CORNERS`]
/// corners are read.
///
/// A `Section` borrows the angles: with [`crate::geometry::Geometry`] bind
/// the corners first, `let c = geometry.corners(e);` then
/// `Section::from_corners(geometry.radius[e], geometry.shape_factor[e], &c)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Section<'a> {
    /// Inscribed radius `R`, m.
    pub radius: f64,
    /// Shape factor `G = A/P²`.
    pub shape_factor: f64,
    /// Corner half-angles `β_i`, rad, in order around the perimeter (empty
    /// for circles).
    pub corners: &'a [f64],
}

/// Why a [`Section`] cannot be used.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum InvalidSection {
    /// The inscribed radius is not positive and finite.
    #[error("inscribed radius {radius} m is not positive and finite")]
    Radius {
        /// The offending radius, m.
        radius: f64,
    },
    /// The shape factor is not in `(0, 1/(4π)]`.
    #[error("shape factor {shape_factor} is not in (0, 1/(4π)]")]
    ShapeFactor {
        /// The offending shape factor.
        shape_factor: f64,
    },
    /// More corners than [`MAX_CORNERS`], or fewer than 3 (but not 0).
    #[error("{n_corners} corners given; expected 0 (circle), 3 or 4")]
    CornerCount {
        /// Number of corners given.
        n_corners: usize,
    },
    /// A half-angle is not in `(0, π/2)`.
    #[error("corner {corner_idx} has half-angle {beta} rad, not in (0, π/2)")]
    HalfAngle {
        /// Index of the corner.
        corner_idx: usize,
        /// The offending half-angle, rad.
        beta: f64,
    },
    /// The half-angles do not close a polygon: `Σ β_i ≠ (n − 2) π/2`.
    #[error("half-angles sum to {sum} rad, a polygon with {n_corners} corners needs {expected}")]
    AngleSum {
        /// Number of corners.
        n_corners: usize,
        /// Sum of the half-angles, rad.
        sum: f64,
        /// Required sum, rad.
        expected: f64,
    },
}

impl<'a> Section<'a> {
    /// A section from its parts (no checks; see [`Section::check`]).
    #[inline]
    pub fn new(radius: f64, shape_factor: f64, corners: &'a [f64]) -> Section<'a> {
        Section {
            radius,
            shape_factor,
            corners,
        }
    }

    /// A section from the geometry module's [`Corners`].
    #[inline]
    pub fn from_corners(radius: f64, shape_factor: f64, corners: &'a Corners) -> Section<'a> {
        Section {
            radius,
            shape_factor,
            corners: corners.as_slice(),
        }
    }

    /// Checks the invariants the capillary functions assume: `R > 0`,
    /// `0 < G ≤ 1/(4π)`, 0, 3 or 4 corners with `0 < β < π/2` and
    /// `Σβ = (n − 2)π/2` (to 1e-9 rad).
    pub fn check(&self) -> Result<(), InvalidSection> {
        if !(self.radius.is_finite() && self.radius > 0.0) {
            return Err(InvalidSection::Radius {
                radius: self.radius,
            });
        }
        let g = self.shape_factor;
        if !(g.is_finite() && g > 0.0 && g <= 1.0 / (4.0 * PI) * (1.0 + 1e-12)) {
            return Err(InvalidSection::ShapeFactor { shape_factor: g });
        }
        let n = self.corners.len();
        if n == 0 {
            return Ok(());
        }
        if !(3..=MAX_CORNERS).contains(&n) {
            return Err(InvalidSection::CornerCount { n_corners: n });
        }
        for (corner_idx, &beta) in self.corners.iter().enumerate() {
            if !(beta > 0.0 && beta < FRAC_PI_2) {
                return Err(InvalidSection::HalfAngle { corner_idx, beta });
            }
        }
        let sum: f64 = self.corners.iter().sum();
        let expected = (n as f64 - 2.0) * FRAC_PI_2;
        if (sum - expected).abs() > 1e-9 {
            return Err(InvalidSection::AngleSum {
                n_corners: n,
                sum,
                expected,
            });
        }
        Ok(())
    }

    /// True when the section has no corners.
    #[inline]
    pub fn is_circle(&self) -> bool {
        self.corners.is_empty()
    }

    /// The corners actually read (at most [`MAX_CORNERS`]).
    #[inline]
    pub fn corner_slice(&self) -> &'a [f64] {
        &self.corners[..self.corners.len().min(MAX_CORNERS)]
    }

    /// Cross-section area `A = R²/(4G)`, m².
    #[inline]
    pub fn area(&self) -> f64 {
        self.radius * self.radius / (4.0 * self.shape_factor)
    }

    /// Perimeter `P = 2A/R = R/(2G)`, m.
    #[inline]
    pub fn perimeter(&self) -> f64 {
        self.radius / (2.0 * self.shape_factor)
    }

    /// Length of the side between corners `i` and `i + 1` (cyclic),
    /// `R (cot β_i + cot β_{i+1})`, m (the incircle touches every side);
    /// zero for a circle.
    #[inline]
    pub fn side_length(&self, i: usize) -> f64 {
        let c = self.corner_slice();
        let n = c.len();
        if n == 0 {
            return 0.0;
        }
        self.radius * (1.0 / c[i % n].tan() + 1.0 / c[(i + 1) % n].tan())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::{G_EQUILATERAL, G_SQUARE, Shape, triangle_half_angles};
    use std::f64::consts::FRAC_PI_4;

    #[test]
    fn square_section_has_side_2r_and_area_4r2() {
        // Square of inscribed radius R: side 2R, A = 4R², P = 8R (analytic).
        let c = Corners::of(Shape::Square, &[FRAC_PI_4; 3]);
        let s = Section::from_corners(0.5, G_SQUARE, &c);
        assert!(s.check().is_ok());
        assert!((s.area() - 1.0).abs() < 1e-15);
        assert!((s.perimeter() - 4.0).abs() < 1e-15);
        assert!((s.side_length(3) - 1.0).abs() < 1e-15);
    }

    #[test]
    fn triangle_sides_add_up_to_perimeter() {
        // Tangent lengths R cot β: Σ sides = 2R Σ cot β = R/(2G) (Mason & Morrow 1991).
        let b = triangle_half_angles(0.03, 0.3);
        let s = Section::new(2.0, 0.03, &b);
        assert!(s.check().is_ok());
        let sum: f64 = (0..3).map(|i| s.side_length(i)).sum();
        assert!((sum - s.perimeter()).abs() < 1e-12 * sum);
    }

    #[test]
    fn bad_sections_are_reported() {
        let b = [0.3, 0.4, 0.5];
        assert!(matches!(
            Section::new(1.0, 0.03, &b).check(),
            Err(InvalidSection::AngleSum { .. })
        ));
        assert!(matches!(
            Section::new(-1.0, 0.03, &[]).check(),
            Err(InvalidSection::Radius { .. })
        ));
        assert!(matches!(
            Section::new(1.0, 0.2, &[]).check(),
            Err(InvalidSection::ShapeFactor { .. })
        ));
        assert!(matches!(
            Section::new(1.0, G_EQUILATERAL, &[0.5, 0.5]).check(),
            Err(InvalidSection::CornerCount { n_corners: 2 })
        ));
        assert!(matches!(
            Section::new(1.0, G_EQUILATERAL, &[0.0, 0.5, 1.0707963267948966]).check(),
            Err(InvalidSection::HalfAngle { corner_idx: 0, .. })
        ));
    }
}
