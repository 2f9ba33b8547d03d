//! Seeded statistical pore networks on a simple-cubic lattice.
//!
//! [`generate`] builds a [`Network`] from a [`LatticeSpec`]: pores on the
//! sites of an `nx × ny × nz` simple-cubic lattice of spacing `s`, throats on
//! (a random subset of) its bonds, with inscribed radii drawn from truncated
//! Weibull distributions and shape factors drawn from a mix of triangles,
//! squares and circles. A fully regular mode ([`RegularSpec`]) gives identical
//! elements and every lattice bond, for analytic checks.
//!
//! # Lattice
//! Pore `(i, j, k)` (0-based) has index `i + nx (j + ny k)` and centre
//! `((i + ½) s, (j + ½) s, (k + ½) s)`. Along the flow axis the first layer
//! of pores is tagged [`Boundary::Inlet`] and the last [`Boundary::Outlet`].
//! The sample values are
//! - `length_m = (n_axis − 1) s` (between the centres of the inlet and the
//!   outlet layer, where the pressures are imposed);
//! - `area_m2 = n_u n_v s²` (the two other dimensions);
//! - `bulk_volume_m3 = nx ny nz s³`, `extent_m = [nx s, ny s, nz s]`.
//!
//! Throats are listed in increasing order of `3 p + d`, where `p` is the
//! lower pore of the bond and `d = 0, 1, 2` its direction (+x, +y, +z).
//!
//! # Coordination: random dilution that keeps every pore connected
//! The mean coordination number is `z = 2 n_throats / n_pores`; the target
//! fixes `n_throats = round(z N / 2)` (so the result is within `1/N` of the
//! target). The `M` lattice bonds are shuffled (Fisher–Yates in Durstenfeld's
//! form, 1964, Commun. ACM 7(7):420, as implemented by `rand`) and scanned in
//! that order with a union–find structure (Kruskal 1956, Proc. Amer. Math.
//! Soc. 7:48–50; path halving and union by size, Tarjan & van Leeuwen 1984,
//! J. ACM 31:245–281):
//! - a bond joining two different clusters is always kept (it is a bond of
//!   a random spanning tree);
//! - a bond inside one cluster is kept while fewer than
//!   `n_throats − (N − 1)` such bonds have been kept.
//!
//! Equivalently: the first `m` bonds of the shuffle are all kept — a
//! uniformly random bond-percolation configuration with occupation `m/M` —
//! and after them only the bonds that join two still separate clusters, the
//! fewest needed to connect every pore into one cluster. Every pore is
//! therefore connected to every other one (the network spans, no isolated
//! pores, no dead clusters). When `m/M` is well above the bond percolation
//! threshold (0.2488 on the simple-cubic lattice, Lorenz & Ziff 1998, Phys.
//! Rev. E 57:230–236; `z_c = 6 p_c ≈ 1.5`), e.g. for targets of 3 and more,
//! few bonds are added after the first `m` and the result is close to a
//! uniform random dilution; near the lower bound `z ≈ 2` it is close to a
//! random spanning tree instead. Targets below `2 (1 − 1/N)` (a spanning tree) or above `2M/N`
//! (every bond; slightly below 6 because of the faces) are rejected with
//! [`GenerateError::CoordinationOutOfRange`].
//!
//! # Radii: truncated Weibull
//! The Weibull distribution (Weibull 1951, J. Appl. Mech. 18:293–297) is
//! the usual choice for network radii (common practice). With the reduced
//! radius `x = (r − r_min)/(r_max − r_min) ∈ [0, 1]`, shape `δ > 0` and scale
//! `η > 0`, its CDF is `F(x) = 1 − exp[−(x/η)^δ]`. Truncated to `[0, 1]` the
//! CDF is `F(x)/F(1)`; setting it to a uniform `u ∈ [0, 1)` and solving
//! (inverse-CDF sampling) gives
//!
//! $$x = \eta\,\big[-\ln\big(1 - u\,F(1)\big)\big]^{1/\delta},\qquad
//!   F(1) = 1 - e^{-(1/\eta)^{\delta}},\qquad r = r_{\min} + x\,(r_{\max} - r_{\min}).$$
//!
//! `F(1)` is evaluated as `−expm1(−η^{−δ})` and the logarithm as
//! `log1p(−u F(1))`, so that large `η` (nearly uniform `x`) loses no digits.
//!
//! Throat radii are drawn the same way and then limited by the aspect-ratio
//! rule `r_t ≤ min(r_a, r_b) / a_min` against the two pores joined (`a_min =`
//! [`LatticeSpec::throat_aspect_min`] `≥ 1`; `1` means a throat is never
//! wider than its smaller pore). The rule is applied after sampling by
//! capping, so throats that hit it carry exactly `min(r_a, r_b)/a_min` and
//! the throat-radius distribution is no longer a pure truncated Weibull.
//!
//! # Shapes
//! For each element a class is drawn with the given fractions; shape
//! factors are: triangle uniform on `(g_min, g_max] ⊆ (0, √3/36]`, square
//! `1/16`, circle `1/(4π)` — so [`Shape::from_shape_factor`] classifies each
//! element as drawn.
//!
//! # Volumes and conduit lengths (prism model)
//! With `A = r²/(4G)` (exact for the circle and for polygons with an
//! incircle, see [`crate::geometry`]):
//! - a pore is a prism of cross-section `A_p` and length `2 r_p`:
//!   `V_p = 2 r_p A_p = r_p³/(2 G_p)` (a cube of side `2r` for a square, a
//!   cylinder of height `2r` for a circle);
//! - the conduit of a throat runs from pore centre to pore centre, total
//!   length `s`, of which `r_a` lies inside pore a and `r_b` inside pore b;
//!   the throat proper has length `L_t = s − r_a − r_b` and volume
//!   `V_t = A_t L_t`.
//!
//! `L_t > 0` is guaranteed by requiring `2 r_max < s` for the pore radius
//! range (or the regular pore radius) at validation; otherwise
//! [`GenerateError::SpacingTooSmall`] is returned (radii are never silently
//! capped).
//!
//! # Clay
//! With a clay volume fraction `f ∈ [0, 1)` each element (pore and throat)
//! receives `V_clay = f/(1 − f) · V`, so that `V_clay/(V_clay + V) = f` for
//! every element and for the sample. With `clay_fraction_spread > 0` each
//! element draws its own fraction around `f`, optionally tied to its size
//! ([`clay`]); the sample's fraction is then a volume-weighted mean.
//!
//! # Determinism
//! One `ChaCha8Rng` seeded with `seed_from_u64(seed)` supplies independent
//! streams (ChaCha nonces): stream 0 shuffles the bonds (sequentially); the
//! other streams give pore radii, pore shapes, throat radii and throat
//! shapes. Each element consumes a fixed number of 64-bit words at a fixed
//! position of its stream (element `i` of a stream with `k` draws per
//! element uses draws `k i .. k i + k`), so chunks are filled in parallel by
//! seeking the stream ([`ChaCha8Rng::set_word_pos`]) and the result does not
//! depend on the number of threads. Logarithms, powers and exponentials use
//! the pure-Rust `libm` crate rather than the platform's C library, whose
//! last bits differ between systems, so the same seed gives bit-identical
//! networks on any machine. (The mapping from a seed to a network is tied to
//! the versions of `rand`/`rand_chacha` pinned in `Cargo.lock`.)

use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::geometry::{G_CIRCLE, G_EQUILATERAL, G_SQUARE};
use crate::network::{Axis, Boundary, InvalidNetwork, Network, NetworkInfo, Pores, Throats};
use crate::progress::Progress;

#[cfg(doc)]
use crate::geometry::Shape;

pub mod clay;
pub mod irregular;
pub use irregular::IrregularSpec;

/// True for 0 (fields left out of a serialised spec at their default).
fn is_zero(x: &f64) -> bool {
    *x == 0.0
}

/// Stream of the bond shuffle.
const STREAM_BONDS: u64 = 0;
/// Stream of the pore radii (one draw per pore).
const STREAM_PORE_RADIUS: u64 = 1;
/// Stream of the pore shapes (two draws per pore: class, shape factor).
const STREAM_PORE_SHAPE: u64 = 2;
/// Stream of the throat radii (one draw per throat).
const STREAM_THROAT_RADIUS: u64 = 3;
/// Stream of the throat shapes (two draws per throat).
const STREAM_THROAT_SHAPE: u64 = 4;

/// Elements per parallel chunk of the per-element passes.
const CHUNK: usize = 8192;

/// Largest lattice accepted: the compressed adjacency stores `2 n_throats ≤
/// 6 n_pores` entries as `u32`.
pub const MAX_PORES: u64 = (u32::MAX / 6) as u64;

/// A generator file with every key set to its default, commented
/// (`ganglion template generator`); docs/keys.md documents the same keys.
pub const TEMPLATE: &str = include_str!("templates/generator.toml");

/// Largest lattice spacing accepted, m: pores of rock lie micrometres to
/// about a millimetre apart, glass-bead packs a few millimetres (common
/// practice); a spacing of a centimetre or more is a length in µm written
/// in m, which would otherwise give a network of porosity near zero.
pub const MAX_SPACING_M: f64 = 0.01;

/// A truncated Weibull distribution of an inscribed radius (see the module
/// documentation for the sampling formula).
///
/// All four fields are required when the table is given in a parameter file.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WeibullRange {
    /// Smallest radius `r_min`, m; must be positive.
    pub min_m: f64,
    /// Largest radius `r_max`, m; must exceed `min_m`.
    pub max_m: f64,
    /// Weibull shape `δ` (dimensionless, > 0): small values skew the reduced
    /// radius towards 0, large values concentrate it near `η`.
    pub shape: f64,
    /// Weibull scale `η` of the reduced radius (dimensionless, > 0): the
    /// reduced radius `x ∈ [0, 1]` is typically of order `η`; large `η`
    /// makes `x` nearly uniform.
    pub scale: f64,
}

impl WeibullRange {
    /// The radius, m, for a uniform number `u ∈ [0, 1)`, by inverting the
    /// truncated CDF: `r = r_min + (r_max − r_min) η [−ln(1 − u F(1))]^{1/δ}`
    /// with `F(1) = 1 − exp(−η^{−δ})`. The result lies in `[r_min, r_max]`
    /// and increases with `u`.
    pub fn radius_from_uniform(&self, u: f64) -> f64 {
        WeibullSampler::new(self).radius(u)
    }

    fn validate(&self, name: &str) -> Result<(), GenerateError> {
        let bad = |field: &str, value: f64, expected: &str| GenerateError::InvalidParameter {
            name: format!("{name}.{field}"),
            value,
            expected: expected.to_owned(),
        };
        if !(self.min_m.is_finite() && self.min_m > 0.0) {
            return Err(bad("min_m", self.min_m, "a positive finite radius in m"));
        }
        if !(self.max_m.is_finite() && self.max_m > self.min_m) {
            return Err(bad(
                "max_m",
                self.max_m,
                "a finite radius in m larger than `min_m`",
            ));
        }
        if !(self.shape.is_finite() && self.shape > 0.0) {
            return Err(bad("shape", self.shape, "a positive finite number"));
        }
        if !(self.scale.is_finite() && self.scale > 0.0) {
            return Err(bad("scale", self.scale, "a positive finite number"));
        }
        // F(1) must be representable and positive for the inversion.
        let f1 = -libm::expm1(-libm::pow(1.0 / self.scale, self.shape));
        if !(f1 > 0.0 && f1.is_finite()) {
            return Err(bad(
                "scale",
                self.scale,
                "a value for which F(1) = 1 − exp(−scale^(−shape)) is positive",
            ));
        }
        Ok(())
    }
}

/// Precomputed constants of a [`WeibullRange`].
#[derive(Clone, Copy, Debug)]
struct WeibullSampler {
    min: f64,
    span: f64,
    scale: f64,
    inv_shape: f64,
    f1: f64,
}

impl WeibullSampler {
    fn new(w: &WeibullRange) -> WeibullSampler {
        WeibullSampler {
            min: w.min_m,
            span: w.max_m - w.min_m,
            scale: w.scale,
            inv_shape: 1.0 / w.shape,
            f1: -libm::expm1(-libm::pow(1.0 / w.scale, w.shape)),
        }
    }

    #[inline]
    fn radius(&self, u: f64) -> f64 {
        let t = (-libm::log1p(-u * self.f1)).max(0.0);
        let x = (self.scale * libm::pow(t, self.inv_shape)).min(1.0);
        self.min + x * self.span
    }
}

/// Fractions of triangles, squares and circles and the range of triangle
/// shape factors.
///
/// All five fields are required when the table is given in a parameter file.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ShapeMix {
    /// Fraction of triangular elements, in `[0, 1]`.
    pub triangle: f64,
    /// Fraction of square elements (shape factor 1/16), in `[0, 1]`.
    pub square: f64,
    /// Fraction of circular elements (shape factor 1/(4π)), in `[0, 1]`.
    /// The three fractions must sum to 1 (within 1e-9).
    pub circle: f64,
    /// Lower bound of the triangle shape factor (exclusive), in `(0, √3/36]`;
    /// small values give slit-like triangles with sharp corners.
    pub triangle_g_min: f64,
    /// Upper bound of the triangle shape factor (inclusive), in
    /// `[triangle_g_min, √3/36]`; `√3/36` is the equilateral triangle.
    pub triangle_g_max: f64,
}

impl Default for ShapeMix {
    /// Demo values (invented, sandstone-like): 70 % triangles with `G`
    /// in `(0.02, √3/36]`, 20 % squares, 10 % circles.
    fn default() -> Self {
        ShapeMix {
            triangle: 0.7,
            square: 0.2,
            circle: 0.1,
            triangle_g_min: 0.02,
            triangle_g_max: G_EQUILATERAL,
        }
    }
}

impl ShapeMix {
    /// The shape factor for two uniform numbers in `[0, 1)`: `u_class`
    /// picks the class with the mix's fractions (triangle below
    /// `triangle`, square below `triangle + square`, circle above), `u_g`
    /// places a triangle's shape factor at `g_max − u_g (g_max − g_min)`,
    /// i.e. uniformly on `(g_min, g_max]`.
    pub fn shape_factor_from_uniforms(&self, u_class: f64, u_g: f64) -> f64 {
        let x = u_class * (self.triangle + self.square + self.circle);
        let only_triangles = self.square == 0.0 && self.circle == 0.0;
        if x < self.triangle || only_triangles {
            self.triangle_g_max - u_g * (self.triangle_g_max - self.triangle_g_min)
        } else if x < self.triangle + self.square || self.circle == 0.0 {
            G_SQUARE
        } else {
            G_CIRCLE
        }
    }

    fn validate(&self, name: &str) -> Result<(), GenerateError> {
        let bad = |field: &str, value: f64, expected: &str| GenerateError::InvalidParameter {
            name: format!("{name}.{field}"),
            value,
            expected: expected.to_owned(),
        };
        for (field, v) in [
            ("triangle", self.triangle),
            ("square", self.square),
            ("circle", self.circle),
        ] {
            if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
                return Err(bad(field, v, "a fraction in [0, 1]"));
            }
        }
        let sum = self.triangle + self.square + self.circle;
        if (sum - 1.0).abs() > 1e-9 {
            return Err(bad(
                "triangle + square + circle",
                sum,
                "fractions summing to 1 (within 1e-9)",
            ));
        }
        let g_lo = self.triangle_g_min;
        if !(g_lo.is_finite() && g_lo > 0.0 && g_lo <= G_EQUILATERAL) {
            return Err(bad(
                "triangle_g_min",
                g_lo,
                "a triangle shape factor in (0, √3/36]",
            ));
        }
        let g_hi = self.triangle_g_max;
        if !(g_hi.is_finite() && g_hi >= g_lo && g_hi <= G_EQUILATERAL) {
            return Err(bad(
                "triangle_g_max",
                g_hi,
                "a triangle shape factor in [triangle_g_min, √3/36]",
            ));
        }
        Ok(())
    }
}

/// Identical elements on every lattice bond (coordination 6 in the
/// interior), with no randomness: for analytic tests.
///
/// All four fields are required when the table is given in a parameter file.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegularSpec {
    /// Inscribed radius of every pore, m; `2 × pore_radius_m` must be below
    /// the spacing.
    pub pore_radius_m: f64,
    /// Inscribed radius of every throat, m; must not exceed
    /// `pore_radius_m / throat_aspect_min`.
    pub throat_radius_m: f64,
    /// Shape factor of every pore, in `(0, 1/(4π)]`.
    pub pore_shape_factor: f64,
    /// Shape factor of every throat, in `(0, 1/(4π)]`.
    pub throat_shape_factor: f64,
}

/// Parameters of a generated lattice network.
///
/// Every field has a default ([`LatticeSpec::default`]); the defaults are
/// invented demo values of sandstone-like magnitude, not a calibrated rock.
/// In a parameter file (TOML or JSON) missing fields take their defaults;
/// unknown fields are rejected.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct LatticeSpec {
    /// Number of pores along x (≥ 1; ≥ 2 along the flow axis). Default 20.
    pub nx: usize,
    /// Number of pores along y. Default 20.
    pub ny: usize,
    /// Number of pores along z. Default 20.
    pub nz: usize,
    /// Lattice spacing (pore centre to pore centre, the total conduit length
    /// of every throat), m. Default 100 µm.
    pub spacing_m: f64,
    /// Flow axis: its first pore layer is the inlet, its last the outlet.
    /// Default z.
    pub flow_axis: Axis,
    /// Target mean coordination number `2 n_throats / n_pores`, in
    /// `[2(1 − 1/N), 2M/N]` (M lattice bonds, N pores). Ignored in regular
    /// mode. Default 4.0.
    pub target_coordination: f64,
    /// Distribution of pore inscribed radii. Default `5–40 µm`, shape 1.8,
    /// scale 0.3.
    pub pore_radius: WeibullRange,
    /// Distribution of throat inscribed radii before the aspect-ratio cap.
    /// Default `2–20 µm`, shape 1.5, scale 0.3.
    pub throat_radius: WeibullRange,
    /// Minimum pore-to-throat radius ratio `a_min ≥ 1`: each throat radius
    /// is capped at `min(r_a, r_b)/a_min`. Default 1.0 (a throat is never
    /// wider than its smaller pore).
    pub throat_aspect_min: f64,
    /// Shape mix of the pores. Default [`ShapeMix::default`].
    pub pore_shapes: ShapeMix,
    /// Shape mix of the throats. Default [`ShapeMix::default`].
    pub throat_shapes: ShapeMix,
    /// Clay (micro-porosity) volume fraction `f ∈ [0, 1)` of every element:
    /// `V_clay = f/(1 − f) V`; with a spread, the mean of the per-element
    /// fractions. Default 0.
    pub clay_fraction: f64,
    /// Half-width `w` of the per-element clay fractions: each element draws
    /// its fraction uniformly from `[f − w, f + w]`, which must lie in
    /// `[0, 1)` ([`clay`]). Default 0 (every element has `f`).
    #[serde(skip_serializing_if = "is_zero")]
    pub clay_fraction_spread: f64,
    /// Rank correlation strength `ρ ∈ [−1, 1]` between an element's clay
    /// fraction and its smallness (a Gaussian copula on the radius rank,
    /// [`clay`]); `ρ > 0` puts more clay in smaller elements. Needs
    /// `clay_fraction_spread > 0`. Default 0 (independent of size).
    #[serde(skip_serializing_if = "is_zero")]
    pub clay_size_correlation: f64,
    /// Seed of the random streams; the same seed gives the same network.
    /// Ignored in regular mode. Default 1.
    pub seed: u64,
    /// When given, a regular lattice of identical elements on every bond;
    /// `target_coordination`, the radius distributions, the shape mixes and
    /// `seed` are then ignored (and not validated). Default none.
    pub regular: Option<RegularSpec>,
    /// When given, an irregular network (random pore positions, a thinned
    /// nearest-neighbour graph, throats tied to their pores; see
    /// [`irregular`]) instead of the lattice; `throat_radius`,
    /// `throat_aspect_min` and `regular` are then not used. Default none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub irregular: Option<IrregularSpec>,
}

impl Default for LatticeSpec {
    fn default() -> Self {
        LatticeSpec {
            nx: 20,
            ny: 20,
            nz: 20,
            spacing_m: 100e-6,
            flow_axis: Axis::Z,
            target_coordination: 4.0,
            pore_radius: WeibullRange {
                min_m: 5e-6,
                max_m: 40e-6,
                shape: 1.8,
                scale: 0.3,
            },
            throat_radius: WeibullRange {
                min_m: 2e-6,
                max_m: 20e-6,
                shape: 1.5,
                scale: 0.3,
            },
            throat_aspect_min: 1.0,
            pore_shapes: ShapeMix::default(),
            throat_shapes: ShapeMix::default(),
            clay_fraction: 0.0,
            clay_fraction_spread: 0.0,
            clay_size_correlation: 0.0,
            seed: 1,
            regular: None,
            irregular: None,
        }
    }
}

impl LatticeSpec {
    /// Number of pores `nx ny nz` (saturating).
    pub fn n_pores(&self) -> u64 {
        (self.nx as u64)
            .saturating_mul(self.ny as u64)
            .saturating_mul(self.nz as u64)
    }

    /// Number of bonds of the full lattice,
    /// `(nx−1) ny nz + nx (ny−1) nz + nx ny (nz−1)` (saturating).
    pub fn n_lattice_bonds(&self) -> u64 {
        let [x, y, z] = [self.nx as u64, self.ny as u64, self.nz as u64];
        let m = |a: u64, b: u64, c: u64| a.saturating_sub(1).saturating_mul(b).saturating_mul(c);
        m(x, y, z)
            .saturating_add(m(y, x, z))
            .saturating_add(m(z, x, y))
    }

    /// The range `[2(1 − 1/N), 2M/N]` of attainable mean coordination
    /// numbers of a connected network on this lattice.
    pub fn coordination_range(&self) -> (f64, f64) {
        let n = self.n_pores() as f64;
        (2.0 * (n - 1.0) / n, 2.0 * self.n_lattice_bonds() as f64 / n)
    }

    /// Checks every parameter the chosen mode uses; the first problem found
    /// is returned, naming the parameter.
    pub fn validate(&self) -> Result<(), GenerateError> {
        let bad = |name: &str, value: f64, expected: &str| GenerateError::InvalidParameter {
            name: name.to_owned(),
            value,
            expected: expected.to_owned(),
        };
        if self.regular.is_some() && self.irregular.is_some() {
            return Err(bad(
                "irregular",
                f64::NAN,
                "either a `regular` or an `irregular` table, not both",
            ));
        }
        let axis = self.flow_axis.index();
        for (i, (name, n)) in [("nx", self.nx), ("ny", self.ny), ("nz", self.nz)]
            .into_iter()
            .enumerate()
        {
            if n == 0 {
                return Err(bad(name, 0.0, "at least 1 pore"));
            }
            if i == axis && n < 2 {
                return Err(bad(
                    name,
                    n as f64,
                    "at least 2 pores along the flow axis (an inlet and an outlet layer)",
                ));
            }
        }
        let n_pores = self.n_pores();
        if n_pores > MAX_PORES {
            return Err(GenerateError::TooLarge {
                n_pores,
                max: MAX_PORES,
            });
        }
        let s = self.spacing_m;
        if !(s.is_finite() && s > 0.0) {
            return Err(bad("spacing_m", s, "a positive finite length in m"));
        }
        if s >= MAX_SPACING_M {
            return Err(bad(
                "spacing_m",
                s,
                &format!(
                    "a spacing in metres below {MAX_SPACING_M} m (pores of rock lie micrometres \
                     to a millimetre apart); a value in µm given in m? {s} µm is {:e} m",
                    s / 1e6
                ),
            ));
        }
        let a = self.throat_aspect_min;
        if !(a.is_finite() && a >= 1.0) {
            return Err(bad(
                "throat_aspect_min",
                a,
                "a finite ratio ≥ 1 (a throat no wider than its smaller pore)",
            ));
        }
        let f = self.clay_fraction;
        if !(f.is_finite() && (0.0..1.0).contains(&f)) {
            return Err(bad("clay_fraction", f, "a fraction in [0, 1)"));
        }
        let w = self.clay_fraction_spread;
        if !(w.is_finite() && w >= 0.0 && w <= f && f + w < 1.0) {
            return Err(bad(
                "clay_fraction_spread",
                w,
                &format!(
                    "a half-width ≥ 0 with [clay_fraction − w, clay_fraction + w] inside [0, 1): at most {f} (clay_fraction) and below {}",
                    1.0 - f
                ),
            ));
        }
        let rho = self.clay_size_correlation;
        if !(rho.is_finite() && (-1.0..=1.0).contains(&rho)) {
            return Err(bad("clay_size_correlation", rho, "a number in [−1, 1]"));
        }
        if rho != 0.0 && w == 0.0 {
            return Err(bad(
                "clay_size_correlation",
                rho,
                "0 while clay_fraction_spread is 0 (with one clay fraction for every element there is nothing to tie to size)",
            ));
        }
        let pore_r_max = match &self.regular {
            Some(reg) => {
                let g_ok = |g: f64| g.is_finite() && g > 0.0 && g <= G_CIRCLE;
                if !(reg.pore_radius_m.is_finite() && reg.pore_radius_m > 0.0) {
                    return Err(bad(
                        "regular.pore_radius_m",
                        reg.pore_radius_m,
                        "a positive finite radius in m",
                    ));
                }
                if !(reg.throat_radius_m.is_finite() && reg.throat_radius_m > 0.0) {
                    return Err(bad(
                        "regular.throat_radius_m",
                        reg.throat_radius_m,
                        "a positive finite radius in m",
                    ));
                }
                if reg.throat_radius_m > reg.pore_radius_m / a {
                    return Err(bad(
                        "regular.throat_radius_m",
                        reg.throat_radius_m,
                        "a radius ≤ regular.pore_radius_m / throat_aspect_min",
                    ));
                }
                if !g_ok(reg.pore_shape_factor) {
                    return Err(bad(
                        "regular.pore_shape_factor",
                        reg.pore_shape_factor,
                        "a shape factor in (0, 1/(4π)]",
                    ));
                }
                if !g_ok(reg.throat_shape_factor) {
                    return Err(bad(
                        "regular.throat_shape_factor",
                        reg.throat_shape_factor,
                        "a shape factor in (0, 1/(4π)]",
                    ));
                }
                reg.pore_radius_m
            }
            None => {
                self.pore_radius.validate("pore_radius")?;
                self.throat_radius.validate("throat_radius")?;
                self.pore_shapes.validate("pore_shapes")?;
                self.throat_shapes.validate("throat_shapes")?;
                let z = self.target_coordination;
                let (min, max) = self.coordination_range();
                if let Some(irr) = &self.irregular {
                    irr.validate(self)?;
                } else if !(z.is_finite() && z >= min * (1.0 - 1e-12) && z <= max * (1.0 + 1e-12)) {
                    return Err(GenerateError::CoordinationOutOfRange {
                        target: z,
                        min,
                        max,
                    });
                }
                self.pore_radius.max_m
            }
        };
        if 2.0 * pore_r_max >= s {
            return Err(GenerateError::SpacingTooSmall {
                spacing_m: s,
                pore_radius_max_m: pore_r_max,
            });
        }
        Ok(())
    }
}

/// Why a network could not be generated.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum GenerateError {
    /// A parameter is outside its allowed range.
    #[error("parameter `{name}` = {value}: expected {expected}")]
    InvalidParameter {
        /// Dotted name of the parameter (e.g. `pore_radius.max_m`).
        name: String,
        /// The offending value (for integer parameters, as a float).
        value: f64,
        /// What is allowed.
        expected: String,
    },
    /// The target coordination cannot be reached by a connected network on
    /// this lattice.
    #[error(
        "parameter `target_coordination` = {target}: a connected network on this lattice \
         has a mean coordination in [{min}, {max}] (spanning tree to every lattice bond)"
    )]
    CoordinationOutOfRange {
        /// The requested mean coordination number.
        target: f64,
        /// Smallest attainable value, `2(1 − 1/N)`.
        min: f64,
        /// Largest attainable value, `2M/N`.
        max: f64,
    },
    /// Two pores of the largest radius would overlap: no room for a throat.
    #[error(
        "parameter `spacing_m` = {spacing_m}: two pores of radius {pore_radius_max_m} m leave \
         no throat between them; need 2 × largest pore radius < spacing"
    )]
    SpacingTooSmall {
        /// The lattice spacing, m.
        spacing_m: f64,
        /// The largest pore radius, m.
        pore_radius_max_m: f64,
    },
    /// The lattice has too many pores for the index types.
    #[error("a lattice of {n_pores} pores is too large (at most {max})")]
    TooLarge {
        /// Requested number of pores.
        n_pores: u64,
        /// Largest supported number of pores.
        max: u64,
    },
    /// The generated columns failed network validation (a bug: parameters
    /// are checked beforehand).
    #[error("the generated network is invalid: {0}")]
    InvalidNetwork(#[from] InvalidNetwork),
}

/// Generates the network described by `spec`.
///
/// Validates `spec` ([`LatticeSpec::validate`]), builds the bonds, draws
/// pore and throat properties in parallel (deterministically, see the module
/// documentation) and validates the result through [`Network::new`].
/// Progress stages: `lattice bonds`, `pores`, `throats`, `validation`.
pub fn generate(spec: &LatticeSpec, progress: &dyn Progress) -> Result<Network, GenerateError> {
    spec.validate()?;
    if let Some(irr) = &spec.irregular {
        return irregular::generate_irregular(spec, irr, progress);
    }
    let lattice = Lattice::new(spec);
    let rng = ChaCha8Rng::seed_from_u64(spec.seed);

    let n_bonds = spec.n_lattice_bonds();
    progress.start("lattice bonds", n_bonds);
    let ends = match &spec.regular {
        Some(_) => lattice.all_bonds(),
        None => {
            let n = lattice.n as f64;
            let n_target = (spec.target_coordination * n / 2.0).round() as u64;
            let n_target = n_target.clamp(lattice.n as u64 - 1, n_bonds) as usize;
            lattice.diluted_bonds(n_target, rng.clone())
        }
    };
    progress.advance(n_bonds);
    progress.finish();

    progress.start("pores", lattice.n as u64);
    let mut pores = build_pores(spec, &lattice, &rng, progress);
    progress.finish();

    progress.start("throats", ends.len() as u64);
    let mut throats = build_throats(spec, &pores.radius, ends, &rng, progress);
    progress.finish();
    clay::spread_clay(spec, &mut pores, &mut throats);

    progress.start("validation", 1);
    let info = lattice.info(spec);
    let network = Network::new(info, pores, throats)?;
    progress.advance(1);
    progress.finish();
    Ok(network)
}

/// Lattice dimensions and index arithmetic.
struct Lattice {
    dims: [usize; 3],
    n: usize,
    strides: [usize; 3],
}

impl Lattice {
    fn new(spec: &LatticeSpec) -> Lattice {
        let dims = [spec.nx, spec.ny, spec.nz];
        Lattice {
            dims,
            n: dims[0] * dims[1] * dims[2],
            strides: [1, dims[0], dims[0] * dims[1]],
        }
    }

    /// Lattice coordinates of pore `p`.
    #[inline]
    fn coords(&self, p: usize) -> [usize; 3] {
        let i = p % self.dims[0];
        let jk = p / self.dims[0];
        [i, jk % self.dims[1], jk / self.dims[1]]
    }

    /// Codes `3p + d` of every lattice bond, in increasing order.
    fn bond_codes(&self) -> Vec<u32> {
        let mut codes = Vec::with_capacity(3 * self.n);
        for p in 0..self.n {
            let c = self.coords(p);
            for (d, (&cd, &nd)) in c.iter().zip(&self.dims).enumerate() {
                if cd + 1 < nd {
                    codes.push((3 * p + d) as u32);
                }
            }
        }
        codes
    }

    #[inline]
    fn ends_of(&self, code: u32) -> [u32; 2] {
        let p = code as usize / 3;
        let d = code as usize % 3;
        [p as u32, (p + self.strides[d]) as u32]
    }

    fn all_bonds(&self) -> Vec<[u32; 2]> {
        self.bond_codes()
            .into_iter()
            .map(|c| self.ends_of(c))
            .collect()
    }

    /// `n_target ≥ n − 1` bonds that connect every pore (module docs).
    fn diluted_bonds(&self, n_target: usize, mut rng: ChaCha8Rng) -> Vec<[u32; 2]> {
        rng.set_stream(STREAM_BONDS);
        let mut codes = self.bond_codes();
        codes.shuffle(&mut rng);
        let n_tree = self.n - 1;
        let n_extra = n_target - n_tree;
        let mut keep = vec![false; 3 * self.n];
        let mut forest = UnionFind::new(self.n);
        let (mut tree, mut extra) = (0usize, 0usize);
        for &code in &codes {
            if tree == n_tree {
                if extra == n_extra {
                    break;
                }
                // Every remaining bond closes a cycle.
                keep[code as usize] = true;
                extra += 1;
                continue;
            }
            let [a, b] = self.ends_of(code);
            if forest.union(a, b) {
                keep[code as usize] = true;
                tree += 1;
            } else if extra < n_extra {
                keep[code as usize] = true;
                extra += 1;
            }
        }
        // The full lattice is connected, so the scan completes the tree.
        debug_assert_eq!(tree, n_tree);
        debug_assert_eq!(extra, n_extra);
        let mut ends = Vec::with_capacity(n_target);
        for (code, &k) in keep.iter().enumerate() {
            if k {
                ends.push(self.ends_of(code as u32));
            }
        }
        ends
    }

    fn info(&self, spec: &LatticeSpec) -> NetworkInfo {
        let s = spec.spacing_m;
        let axis = spec.flow_axis.index();
        let d = self.dims;
        let others = (d[(axis + 1) % 3] * d[(axis + 2) % 3]) as f64;
        let name = match spec.regular {
            Some(_) => format!("regular lattice {}x{}x{}", d[0], d[1], d[2]),
            None => format!("lattice {}x{}x{} seed {}", d[0], d[1], d[2], spec.seed),
        };
        let description = match spec.regular {
            Some(_) => "generated regular simple-cubic lattice, coordination 6".to_owned(),
            None => format!(
                "generated simple-cubic lattice, target coordination {}",
                spec.target_coordination
            ),
        };
        NetworkInfo {
            name,
            flow_axis: spec.flow_axis,
            length_m: (d[axis] - 1) as f64 * s,
            area_m2: others * s * s,
            bulk_volume_m3: self.n as f64 * s * s * s,
            extent_m: Some([d[0] as f64 * s, d[1] as f64 * s, d[2] as f64 * s]),
            description: Some(description),
        }
    }
}

/// Disjoint sets with path halving and union by size (Tarjan & van
/// Leeuwen 1984).
struct UnionFind {
    parent: Vec<u32>,
    size: Vec<u32>,
}

impl UnionFind {
    fn new(n: usize) -> UnionFind {
        UnionFind {
            parent: (0..n as u32).collect(),
            size: vec![1; n],
        }
    }

    #[inline]
    fn find(&mut self, mut x: u32) -> u32 {
        loop {
            let p = self.parent[x as usize];
            if p == x {
                return x;
            }
            let gp = self.parent[p as usize];
            self.parent[x as usize] = gp;
            x = gp;
        }
    }

    /// Joins the sets of `a` and `b`; false when they were already one.
    #[inline]
    fn union(&mut self, a: u32, b: u32) -> bool {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra == rb {
            return false;
        }
        let (big, small) = if self.size[ra as usize] >= self.size[rb as usize] {
            (ra, rb)
        } else {
            (rb, ra)
        };
        self.parent[small as usize] = big;
        self.size[big as usize] += self.size[small as usize];
        true
    }
}

/// The stream `stream` of `base`, positioned at its 64-bit draw `draw`.
fn stream_at(base: &ChaCha8Rng, stream: u64, draw: usize) -> ChaCha8Rng {
    let mut rng = base.clone();
    rng.set_stream(stream);
    // A 64-bit draw is two 32-bit words.
    rng.set_word_pos(2 * draw as u128);
    rng
}

/// 53 random bits as a uniform number in `[0, 1)`.
#[inline]
fn unit(rng: &mut ChaCha8Rng) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

fn build_pores(
    spec: &LatticeSpec,
    lattice: &Lattice,
    base: &ChaCha8Rng,
    progress: &dyn Progress,
) -> Pores {
    let n = lattice.n;
    let s = spec.spacing_m;
    let axis = spec.flow_axis.index();
    let n_axis = lattice.dims[axis];
    let clay = spec.clay_fraction / (1.0 - spec.clay_fraction);
    let sampler = WeibullSampler::new(&spec.pore_radius);
    let mix = spec.pore_shapes;
    let regular = spec.regular;

    let mut pores = Pores {
        x: vec![0.0; n],
        y: vec![0.0; n],
        z: vec![0.0; n],
        radius: vec![0.0; n],
        shape_factor: vec![0.0; n],
        volume: vec![0.0; n],
        clay_volume: vec![0.0; n],
        boundary: vec![Boundary::Interior; n],
        oil_wet: None,
    };
    (
        pores.x.par_chunks_mut(CHUNK),
        pores.y.par_chunks_mut(CHUNK),
        pores.z.par_chunks_mut(CHUNK),
        pores.radius.par_chunks_mut(CHUNK),
        pores.shape_factor.par_chunks_mut(CHUNK),
        pores.volume.par_chunks_mut(CHUNK),
        pores.clay_volume.par_chunks_mut(CHUNK),
        pores.boundary.par_chunks_mut(CHUNK),
    )
        .into_par_iter()
        .enumerate()
        .for_each(|(chunk, (x, y, z, r, g, v, cl, b))| {
            let start = chunk * CHUNK;
            let mut rng_r = stream_at(base, STREAM_PORE_RADIUS, start);
            let mut rng_g = stream_at(base, STREAM_PORE_SHAPE, 2 * start);
            for k in 0..x.len() {
                let c = lattice.coords(start + k);
                x[k] = (c[0] as f64 + 0.5) * s;
                y[k] = (c[1] as f64 + 0.5) * s;
                z[k] = (c[2] as f64 + 0.5) * s;
                b[k] = if c[axis] == 0 {
                    Boundary::Inlet
                } else if c[axis] + 1 == n_axis {
                    Boundary::Outlet
                } else {
                    Boundary::Interior
                };
                let (radius, shape_factor) = match &regular {
                    Some(reg) => (reg.pore_radius_m, reg.pore_shape_factor),
                    None => {
                        let radius = sampler.radius(unit(&mut rng_r));
                        let (u_class, u_g) = (unit(&mut rng_g), unit(&mut rng_g));
                        (radius, mix.shape_factor_from_uniforms(u_class, u_g))
                    }
                };
                r[k] = radius;
                g[k] = shape_factor;
                // Prism of cross-section r²/(4G) and length 2r.
                v[k] = radius * radius * radius / (2.0 * shape_factor);
                cl[k] = clay * v[k];
            }
            progress.advance(x.len() as u64);
        });
    pores
}

fn build_throats(
    spec: &LatticeSpec,
    pore_radius: &[f64],
    ends: Vec<[u32; 2]>,
    base: &ChaCha8Rng,
    progress: &dyn Progress,
) -> Throats {
    let n = ends.len();
    let s = spec.spacing_m;
    let clay = spec.clay_fraction / (1.0 - spec.clay_fraction);
    let aspect = spec.throat_aspect_min;
    let sampler = WeibullSampler::new(&spec.throat_radius);
    let mix = spec.throat_shapes;
    let regular = spec.regular;

    let mut throats = Throats {
        pores: ends,
        radius: vec![0.0; n],
        shape_factor: vec![0.0; n],
        volume: vec![0.0; n],
        clay_volume: vec![0.0; n],
        length: vec![s; n],
        conduit_a: vec![0.0; n],
        conduit_b: vec![0.0; n],
        oil_wet: None,
    };
    (
        throats.pores.par_chunks(CHUNK),
        throats.radius.par_chunks_mut(CHUNK),
        throats.shape_factor.par_chunks_mut(CHUNK),
        throats.volume.par_chunks_mut(CHUNK),
        throats.clay_volume.par_chunks_mut(CHUNK),
        throats.conduit_a.par_chunks_mut(CHUNK),
        throats.conduit_b.par_chunks_mut(CHUNK),
    )
        .into_par_iter()
        .enumerate()
        .for_each(|(chunk, (ends, r, g, v, cl, la, lb))| {
            let start = chunk * CHUNK;
            let mut rng_r = stream_at(base, STREAM_THROAT_RADIUS, start);
            let mut rng_g = stream_at(base, STREAM_THROAT_SHAPE, 2 * start);
            for k in 0..ends.len() {
                let [a, b] = ends[k];
                let (ra, rb) = (pore_radius[a as usize], pore_radius[b as usize]);
                let (radius, shape_factor) = match &regular {
                    Some(reg) => (reg.throat_radius_m, reg.throat_shape_factor),
                    None => {
                        let drawn = sampler.radius(unit(&mut rng_r));
                        let radius = drawn.min(ra.min(rb) / aspect);
                        let (u_class, u_g) = (unit(&mut rng_g), unit(&mut rng_g));
                        (radius, mix.shape_factor_from_uniforms(u_class, u_g))
                    }
                };
                r[k] = radius;
                g[k] = shape_factor;
                la[k] = ra;
                lb[k] = rb;
                // Throat proper: cross-section r²/(4G), length s − r_a − r_b.
                v[k] = radius * radius / (4.0 * shape_factor) * (s - ra - rb);
                cl[k] = clay * v[k];
            }
            progress.advance(ends.len() as u64);
        });
    throats
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weibull_inverse_hits_the_range_ends() {
        // u = 0 gives x = 0 (r_min); u → 1 gives −ln(1 − F(1)) = η^(−δ), so
        // x → 1 (r_max): analytic limits of the inversion.
        let w = WeibullRange {
            min_m: 1e-6,
            max_m: 3e-6,
            shape: 2.0,
            scale: 0.5,
        };
        assert_eq!(w.radius_from_uniform(0.0), 1e-6);
        let top = w.radius_from_uniform(1.0 - f64::EPSILON);
        assert!(top <= 3e-6 && top > 3e-6 * (1.0 - 1e-6), "{top}");
        let mut last = 0.0;
        for i in 0..1000 {
            let r = w.radius_from_uniform(i as f64 / 1000.0);
            assert!(r >= last, "not monotone at {i}");
            last = r;
        }
    }

    #[test]
    fn weibull_inverse_satisfies_truncated_cdf() {
        // Direct evaluation of the truncated CDF F(x)/F(1) with
        // F(x) = 1 − exp(−(x/η)^δ) (Weibull 1951) at the sampled x must give
        // back u (definition of inverse-CDF sampling).
        let w = WeibullRange {
            min_m: 2.0,
            max_m: 7.0,
            shape: 0.7,
            scale: 1.3,
        };
        let cdf = |x: f64| 1.0 - (-(x / w.scale).powf(w.shape)).exp();
        for i in 1..100 {
            let u = i as f64 / 100.0;
            let x = (w.radius_from_uniform(u) - w.min_m) / (w.max_m - w.min_m);
            assert!((cdf(x) / cdf(1.0) - u).abs() < 1e-12, "u={u} x={x}");
        }
    }

    #[test]
    fn shape_factors_classify_as_drawn() {
        let mix = ShapeMix {
            triangle: 0.5,
            square: 0.3,
            circle: 0.2,
            triangle_g_min: 0.01,
            triangle_g_max: G_EQUILATERAL,
        };
        use crate::geometry::Shape;
        let class = |u: f64| Shape::from_shape_factor(mix.shape_factor_from_uniforms(u, 0.3));
        assert_eq!(class(0.0), Shape::Triangle);
        assert_eq!(class(0.49), Shape::Triangle);
        assert_eq!(class(0.51), Shape::Square);
        assert_eq!(class(0.79), Shape::Square);
        assert_eq!(class(0.81), Shape::Circle);
        assert_eq!(class(0.999), Shape::Circle);
        // Triangle G = g_max − u (g_max − g_min), in (g_min, g_max].
        let g = mix.shape_factor_from_uniforms(0.1, 0.0);
        assert_eq!(g, G_EQUILATERAL);
        let g = mix.shape_factor_from_uniforms(0.1, 1.0 - f64::EPSILON);
        assert!(g > 0.01 && g < 0.0101, "{g}");
    }

    #[test]
    fn zero_fractions_are_never_drawn() {
        let squares_only = ShapeMix {
            triangle: 0.0,
            square: 1.0,
            circle: 0.0,
            ..ShapeMix::default()
        };
        assert_eq!(
            squares_only.shape_factor_from_uniforms(1.0 - f64::EPSILON, 0.5),
            G_SQUARE
        );
        assert_eq!(squares_only.shape_factor_from_uniforms(0.0, 0.5), G_SQUARE);
    }

    #[test]
    fn lattice_bond_count_matches_direct_enumeration() {
        // Count bonds by enumerating neighbour pairs directly.
        let spec = LatticeSpec {
            nx: 3,
            ny: 4,
            nz: 5,
            ..LatticeSpec::default()
        };
        let mut count = 0;
        for i in 0..3i64 {
            for j in 0..4i64 {
                for k in 0..5i64 {
                    for (di, dj, dk) in [(1, 0, 0), (0, 1, 0), (0, 0, 1)] {
                        if i + di < 3 && j + dj < 4 && k + dk < 5 {
                            count += 1;
                        }
                    }
                }
            }
        }
        assert_eq!(spec.n_lattice_bonds(), count);
        let lattice = Lattice::new(&spec);
        assert_eq!(lattice.bond_codes().len() as u64, count);
        for [a, b] in lattice.all_bonds() {
            let (ca, cb) = (lattice.coords(a as usize), lattice.coords(b as usize));
            let dist: usize = (0..3).map(|d| ca[d].abs_diff(cb[d])).sum();
            assert_eq!(dist, 1, "bond {a}-{b} is not between lattice neighbours");
        }
    }

    #[test]
    fn union_find_counts_components() {
        let mut uf = UnionFind::new(6);
        assert!(uf.union(0, 1));
        assert!(uf.union(2, 3));
        assert!(!uf.union(1, 0));
        assert!(uf.union(1, 3));
        assert!(!uf.union(0, 2));
        let roots: std::collections::BTreeSet<u32> = (0..6).map(|i| uf.find(i)).collect();
        assert_eq!(roots.len(), 3);
    }

    #[test]
    fn chunked_draws_equal_one_sequential_stream() {
        // 10 800 pores and ~21 600 throats span several chunks; each column
        // must equal one sequential pass over its stream.
        let spec = LatticeSpec {
            nx: 30,
            ny: 30,
            nz: 12,
            ..LatticeSpec::default()
        };
        let net = generate(&spec, &crate::progress::Silent).unwrap();
        assert!(net.n_pores() > CHUNK && net.n_throats() > 2 * CHUNK);
        let base = ChaCha8Rng::seed_from_u64(spec.seed);
        let sampler = WeibullSampler::new(&spec.pore_radius);
        let mut rng = stream_at(&base, STREAM_PORE_RADIUS, 0);
        for (i, &r) in net.pores().radius.iter().enumerate() {
            let expect = sampler.radius(unit(&mut rng));
            assert_eq!(r.to_bits(), expect.to_bits(), "pore {i}");
        }
        let mut rng = stream_at(&base, STREAM_THROAT_SHAPE, 0);
        for (i, &g) in net.throats().shape_factor.iter().enumerate() {
            let (u_class, u_g) = (unit(&mut rng), unit(&mut rng));
            let expect = spec.throat_shapes.shape_factor_from_uniforms(u_class, u_g);
            assert_eq!(g.to_bits(), expect.to_bits(), "throat {i}");
        }
    }

    #[test]
    fn seeked_stream_equals_sequential_stream() {
        // Chunks seek the stream; the draws must equal a sequential pass.
        let base = ChaCha8Rng::seed_from_u64(42);
        let mut seq = stream_at(&base, STREAM_PORE_SHAPE, 0);
        let all: Vec<u64> = (0..1000).map(|_| seq.next_u64()).collect();
        for start in [0usize, 1, 7, 16, 333, 999] {
            let mut r = stream_at(&base, STREAM_PORE_SHAPE, start);
            assert_eq!(r.next_u64(), all[start], "draw {start}");
        }
        let mut other = stream_at(&base, STREAM_PORE_RADIUS, 0);
        assert_ne!(other.next_u64(), all[0]);
    }
}
