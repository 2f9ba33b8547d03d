//! Single-phase flow and electrical conduction through the network.
//!
//! Pipeline:
//! 1. per-element conductances ([`element_hydraulic_conductances`],
//!    [`element_electrical_conductances`]) in "conductance × length" units;
//! 2. per-throat conduit conductances by the series rule
//!    ([`conduit_conductances`]);
//! 3. a Kirchhoff solve on the pores of the flowing set with fixed inlet
//!    and outlet pressures ([`PressureSystem::solve`]);
//! 4. Darcy permeability and formation factor ([`permeability`]).
//!
//! Multiphase code reuses steps 2 and 3 with phase conductances and the
//! mask of the phase's spanning cluster; [`PressureSystem`] keeps the
//! pattern, work vectors and multigrid hierarchy between such calls.
//!
//! No file or terminal I/O happens here.
//!
//! ## Invariants
//! - Results do not depend on the number of rayon threads (fixed chunking of
//!   every floating-point reduction, sequential graph searches and
//!   aggregation).
//! - A solve returns either pressures meeting the requested relative
//!   residual or a typed [`SolveError`]; never NaN pressures inside the
//!   flowing set.
//!
//! ## Example
//! ```
//! use network_core::{Network, NetworkInfo, Pores, Throats, Boundary, Axis};
//! use network_core::flow::{permeability, PermOptions};
//!
//! let info = NetworkInfo {
//!     name: "chain".into(),
//!     flow_axis: Axis::X,
//!     length_m: 2e-4,
//!     area_m2: 1e-8,
//!     bulk_volume_m3: 2e-12,
//!     extent_m: None,
//!     description: None,
//! };
//! let mut pores = Pores::with_capacity(3);
//! for (i, b) in [Boundary::Inlet, Boundary::Interior, Boundary::Outlet].into_iter().enumerate() {
//!     pores.x.push(i as f64 * 1e-4);
//!     pores.y.push(0.0);
//!     pores.z.push(0.0);
//!     pores.radius.push(2e-5);
//!     pores.shape_factor.push(0.04);
//!     pores.volume.push(1e-13);
//!     pores.clay_volume.push(0.0);
//!     pores.boundary.push(b);
//! }
//! let mut throats = Throats::with_capacity(2);
//! for t in 0..2u32 {
//!     throats.pores.push([t, t + 1]);
//!     throats.radius.push(1e-5);
//!     throats.shape_factor.push(1.0 / (4.0 * std::f64::consts::PI));
//!     throats.volume.push(1e-14);
//!     throats.clay_volume.push(0.0);
//!     throats.length.push(1e-4);
//!     throats.conduit_a.push(2e-5);
//!     throats.conduit_b.push(2e-5);
//! }
//! let network = Network::new(info, pores, throats).expect("valid");
//! let report = permeability(&network, Axis::X, &PermOptions::default()).expect("spans");
//! assert!(report.permeability_m2 > 0.0);
//! assert!(report.flow_imbalance < 1e-8);
//! ```

mod amg;
pub mod conductance;
mod permeability;
pub mod solver;
mod sparse;

use thiserror::Error;

use crate::Axis;

pub use conductance::{
    conduit_conductances, element_clay_areas, element_electrical_conductances,
    element_hydraulic_conductances, hydraulic_conductance,
};
pub use permeability::{
    M2_PER_MILLIDARCY, PRESSURE_DROP_PA, PermOptions, PermeabilityReport, VISCOSITY_PA_S,
    permeability,
};
pub(crate) use permeability::{UnitReferences, permeability_with_fields};
pub use solver::{
    AmgOptions, FlowSolution, KeptHierarchy, Method, Preconditioner, PressureSystem, Smoother,
    SolveError, SolveInput, SolveOptions,
};

/// Why a flow computation failed.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum FlowError {
    /// No cluster of pores touches both faces along the axis.
    #[error(
        "no pore cluster connects the inlet and outlet faces along {} \
         ({n_inlet} inlet pores, {n_outlet} outlet pores, {n_components} clusters)",
        .axis.as_str()
    )]
    NoSpanningCluster {
        /// Axis of the requested flow.
        axis: Axis,
        /// Pores on the inlet face.
        n_inlet: usize,
        /// Pores on the outlet face.
        n_outlet: usize,
        /// Connected clusters of the network.
        n_components: usize,
    },
    /// The sample length or area along the axis is not positive.
    #[error(
        "sample along {} has length {length_m:e} m and area {area_m2:e} m²; \
         both must be positive",
        .axis.as_str()
    )]
    DegenerateSample {
        /// Axis of the requested flow.
        axis: Axis,
        /// Sample length, m.
        length_m: f64,
        /// Sample cross-section, m².
        area_m2: f64,
    },
    /// The hydraulic pressure solve failed.
    #[error("pressure solve failed: {0}")]
    Hydraulic(#[source] SolveError),
    /// The electrical potential solve failed.
    #[error("electrical solve failed: {0}")]
    Electrical(#[source] SolveError),
    /// An input slice has the wrong length.
    #[error("{what} has {found} entries, expected {expected}")]
    LengthMismatch {
        /// Which input.
        what: &'static str,
        /// Expected length.
        expected: usize,
        /// Length given.
        found: usize,
    },
    /// An option is out of range.
    #[error("option {name} = {value} is invalid: expected {expected}")]
    InvalidOption {
        /// Option name.
        name: &'static str,
        /// Value given.
        value: f64,
        /// What is allowed.
        expected: &'static str,
    },
}
