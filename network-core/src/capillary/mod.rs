//! Capillary physics of one element: entry, corner menisci, snap-off,
//! cooperative filling, oil layers and corner-film conductance.
//!
//! Every function here is a pure function of one element's cross-section
//! ([`Section`]), its contact angles, the interfacial tension and the
//! capillary pressure. Nothing here allocates, does I/O or panics; the
//! displacement engine calls these functions to rank events and to account
//! for saturations and conductances.
//!
//! ## Conventions
//! - Contact angles are measured through water, in radians: `theta_r`
//!   receding (drainage), `theta_a` advancing (imbibition).
//! - `Pc = Po − Pw` in Pa; `sigma` is the oil–water tension in N/m.
//! - A corner meniscus is a circular arc of signed radius `r = σ/Pc`
//!   (m): positive when it curves towards the corner apex (water at lower
//!   pressure), negative when it bulges into the oil (`Pc < 0`).
//! - `b` is the distance from the corner apex to the contact line along
//!   each wall, m.
//! - `pc_max` is the highest capillary pressure the element saw while
//!   filled with oil; it fixes where the corner contact lines were pinned.
//!
//! ## Mechanisms (one file each)
//! - [`section`]: the cross-section ([`Section`]) and its checks.
//! - [`drainage`]: Mayer–Stowe–Princen entry pressure.
//! - [`corner`]: corner areas, hinging menisci ([`CornerMeniscus`]).
//! - [`piston`]: piston-like imbibition threshold with hinged corners.
//! - [`snapoff`]: snap-off thresholds (spontaneous and forced).
//! - [`cooperative`]: cooperative pore-body filling (`I_n` events).
//! - [`layers`]: oil layers sandwiched between corner and centre water.
//! - [`corner_flow`]: hydraulic and electrical conductances of corner
//!   films and of the bulk phase in the centre.
//!
//! ## Example
//! ```
//! use network_core::capillary::{Section, drainage_entry_pc, piston_imbibition_pc, snap_off_pc};
//! use std::f64::consts::FRAC_PI_4;
//!
//! let corners = [FRAC_PI_4; 4];
//! let square = Section { radius: 1e-5, shape_factor: 1.0 / 16.0, corners: &corners };
//! let sigma = 0.03;
//! let pc_entry = drainage_entry_pc(&square, 0.0, sigma);
//! // Mason & Morrow (1991): Pc·R/σ = 1 + √π/2 for a square at θ = 0.
//! assert!((pc_entry * 1e-5 / sigma - (1.0 + std::f64::consts::PI.sqrt() / 2.0)).abs() < 1e-12);
//! let pc_max = 2.0 * pc_entry;
//! let theta_a = 0.5;
//! let piston = piston_imbibition_pc(&square, 0.0, theta_a, pc_max, sigma);
//! let snap = snap_off_pc(&square, 0.0, theta_a, pc_max, sigma).unwrap();
//! assert!(snap < piston && piston < pc_entry);
//! ```

pub mod cooperative;
pub mod corner;
pub mod corner_flow;
pub mod drainage;
pub mod layers;
pub mod piston;
pub mod section;
pub mod snapoff;

#[cfg(test)]
mod testgeom;

pub use cooperative::{cooperative_fill_pc, pore_imbibition_pc};
pub use corner::{
    CornerMeniscus, corner_arc_length_b, corner_area, corner_area_b, drainage_corner_water_area,
    hinged_corner, imbibition_corner_water_area, pinned_corner_area, pinned_distance,
    reversed_corner, reversed_corner_area,
};
pub use corner_flow::{
    bulk_conductance, corner_conductance, corner_conductance_b, electrical_conductance,
};
pub use drainage::drainage_entry_pc;
pub use layers::{
    LayerAreas, LayerState, element_layer_areas, layer_area, layer_can_form, layer_collapse_pc,
    layer_state,
};
pub use piston::{PistonThreshold, piston_imbibition, piston_imbibition_pc};
pub use section::{InvalidSection, MAX_CORNERS, Section};
pub use snapoff::snap_off_pc;
