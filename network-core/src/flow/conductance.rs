//! Hydraulic and electrical conductances of elements and conduits.
//!
//! ## Two forms and their units
//! - An **element conductance** `g` is a conductance per inverse length: the
//!   flow through a piece of the element of length `l` under a drop `Δp` is
//!   `Q = (g/l) Δp`. Hydraulic: m⁴/(Pa·s) (= m³·m/(Pa·s)). Electrical:
//!   S·m (σ·A).
//! - A **conduit conductance** `G` joins the centres of two pores through a
//!   throat, `Q = G (p_a − p_b)`. Hydraulic: m³/(Pa·s). Electrical: S.
//!
//! [`conduit_conductances`] turns per-element values (pores first, then
//! throats, see [`crate::Element`]) into per-throat conduit values. It does
//! not care what the element values are, so multiphase code passes the
//! conductance of one phase in each element (bulk, corner films and layers
//! added in parallel) and reuses the same series rule.

use rayon::prelude::*;

use super::FlowError;
use crate::geometry::{Shape, area};
use crate::network::{Element, Network};

/// Single-phase hydraulic conductance of a straight prism of inscribed
/// radius `radius` (m) and shape factor `shape_factor` (dimensionless)
/// filled by a fluid of viscosity `viscosity` (Pa·s):
///
/// $$g = \frac{k\,A^2\,G}{\mu},\qquad A = \frac{R^2}{4G},$$
///
/// in m⁴/(Pa·s), so that a length `l` passes `Q = (g/l) Δp`. The factor `k`
/// depends on the shape class ([`Shape::from_shape_factor`]): 1/2 for the
/// circle (exact, Hagen–Poiseuille), 0.5623 for the square, 3/5 for
/// triangles (exact for the equilateral one, an approximation for others)
/// (Patzek & Silin 2001, J. Colloid Interface Sci. 236:295–304). The
/// element's own `G` and `A` are used.
///
/// Valid for laminar (creeping) flow of a Newtonian fluid filling the whole
/// cross-section.
#[inline]
pub fn hydraulic_conductance(radius: f64, shape_factor: f64, viscosity: f64) -> f64 {
    let k = Shape::from_shape_factor(shape_factor).conductance_factor();
    crate::capillary::bulk_conductance(k, area(radius, shape_factor), shape_factor, viscosity)
}

/// [`hydraulic_conductance`] of every element (pores first, then throats),
/// m⁴/(Pa·s).
pub fn element_hydraulic_conductances(network: &Network, viscosity: f64) -> Vec<f64> {
    let p = network.pores();
    let t = network.throats();
    let mut g = Vec::with_capacity(network.n_elements());
    g.par_extend(
        p.radius
            .par_iter()
            .zip(&p.shape_factor)
            .map(|(&r, &s)| hydraulic_conductance(r, s, viscosity)),
    );
    g.par_extend(
        t.radius
            .par_iter()
            .zip(&t.shape_factor)
            .map(|(&r, &s)| hydraulic_conductance(r, s, viscosity)),
    );
    g
}

/// Cross-section area, m², that the clay (micro-porosity) volume of each
/// element adds as a water-filled conductor in parallel with the element.
///
/// Rule (ours, a simple documented choice): the clay volume is spread evenly
/// along the element, `A_clay = V_clay / l`. For a throat `l` is the length
/// of the throat proper ([`crate::Throats::throat_length`]); for a pore it
/// is the total length of the conduit parts it lends to its throats,
/// `Λ_p = Σ_t L_{p,t}` (its "arms"). An element of zero length adds nothing
/// (it takes no part in any conduit).
pub fn element_clay_areas(network: &Network) -> Vec<f64> {
    let n_p = network.n_pores();
    let p = network.pores();
    let t = network.throats();
    let adj = network.adjacency();
    let mut out = Vec::with_capacity(network.n_elements());
    out.par_extend((0..n_p).into_par_iter().map(|i| {
        let v = p.clay_volume[i];
        if v <= 0.0 {
            return 0.0;
        }
        let arms: f64 = adj
            .throats_of(i)
            .iter()
            .map(|&th| {
                let th = th as usize;
                if t.pores[th][0] as usize == i {
                    t.conduit_a[th]
                } else {
                    t.conduit_b[th]
                }
            })
            .sum();
        if arms > 0.0 { v / arms } else { 0.0 }
    }));
    out.par_extend((0..t.len()).into_par_iter().map(|th| {
        let v = t.clay_volume[th];
        let l = t.throat_length(th);
        if v > 0.0 && l > 0.0 { v / l } else { 0.0 }
    }));
    out
}

/// Electrical conductance of every element fully saturated with brine of
/// conductivity `brine_conductivity` (S/m), in S·m:
///
/// $$g_e = \sigma_w \left(A + \frac{A_\text{clay}}{\tau_\text{clay}}\right),$$
///
/// with `A = R²/(4G)` the open cross-section, `A_clay` from
/// [`element_clay_areas`], and `τ_clay ≥ 1` (`clay_tortuosity`) a
/// dimensionless factor by which the micro-porosity conducts worse than an
/// equal area of free brine (1: clay water conducts like free brine; set it
/// to the clay's own formation factor times its porosity to model the clay
/// as a porous medium). The electrical analogue of Poiseuille flow: current
/// `I = (g_e/l) ΔV` over length `l` (common practice). Surface conduction
/// is neglected.
pub fn element_electrical_conductances(
    network: &Network,
    brine_conductivity: f64,
    clay_tortuosity: f64,
) -> Vec<f64> {
    let clay = element_clay_areas(network);
    let elements = network.elements();
    let p = network.pores();
    let t = network.throats();
    (0..elements.len())
        .into_par_iter()
        .map(|e| {
            let a = match elements.kind(e) {
                Element::Pore(i) => area(p.radius[i], p.shape_factor[i]),
                Element::Throat(i) => area(t.radius[i], t.shape_factor[i]),
            };
            brine_conductivity * (a + clay[e] / clay_tortuosity)
        })
        .collect()
}

/// Conduit conductance of every throat from per-element conductances, by
/// the series rule (Øren, Bakke & Arntzen 1998, SPE J. 3(4):324–336;
/// Valvatne & Blunt 2004, Water Resour. Res. 40:W07406):
///
/// $$\frac{1}{G_t} = \frac{L_a}{g_a} + \frac{L_t}{g_t} + \frac{L_b}{g_b},$$
///
/// `L_a`, `L_b` the conduit parts inside pores a and b
/// ([`crate::Throats::conduit_a`], [`crate::Throats::conduit_b`]), `L_t` the
/// throat proper ([`crate::Throats::throat_length`]), `g` the element values
/// (indexed pores first, then throats) in "conductance × length" units
/// (m⁴/(Pa·s) or S·m). A part of zero length is skipped (it adds no
/// resistance even where its `g` is zero); a part with `g = 0` and positive
/// length gives `G = 0` (no conduit); `g = +∞` means no resistance. Result
/// in m³/(Pa·s) or S.
///
/// Errors with [`FlowError::LengthMismatch`] when `element_g` does not have
/// one value per element or `out` one per throat.
pub fn conduit_conductances(
    network: &Network,
    element_g: &[f64],
    out: &mut [f64],
) -> Result<(), FlowError> {
    if element_g.len() != network.n_elements() {
        return Err(FlowError::LengthMismatch {
            what: "element conductances",
            expected: network.n_elements(),
            found: element_g.len(),
        });
    }
    if out.len() != network.n_throats() {
        return Err(FlowError::LengthMismatch {
            what: "conduit conductances",
            expected: network.n_throats(),
            found: out.len(),
        });
    }
    let elements = network.elements();
    let t = network.throats();
    out.par_iter_mut().enumerate().for_each(|(th, o)| {
        let [a, b] = t.pores[th];
        let mut resistance = 0.0;
        for (l, g) in [
            (t.conduit_a[th], element_g[a as usize]),
            (t.throat_length(th), element_g[elements.of_throat(th)]),
            (t.conduit_b[th], element_g[b as usize]),
        ] {
            if l > 0.0 {
                resistance += l / g;
            }
        }
        *o = if resistance > 0.0 {
            1.0 / resistance
        } else {
            f64::INFINITY
        };
    });
    Ok(())
}
