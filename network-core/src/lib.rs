//! # network-core: the engine of Ganglion
//!
//! A pore network is a graph of pores (nodes) joined by throats (bonds),
//! each an idealised straight prism with a circular, square or triangular
//! cross-section of given inscribed radius and shape factor. This crate
//! holds the network model, its derived geometry, its files, a statistical
//! network generator, and the quasi-static two-phase displacement physics
//! built on them.
//!
//! ## Guide
//! - [`Network`]: immutable struct-of-arrays columns of pores and throats with
//!   a compressed adjacency, validated on construction ([`validate`]).
//! - [`geometry`]: shape classes, corner half-angles (Patzek 2001), areas.
//! - [`connectivity`]: components, the spanning cluster, face masks.
//! - [`capillary`]: one element's capillary physics (entry, hinging corner
//!   menisci, piston-like filling, snap-off, `I_n` filling, oil layers,
//!   corner-film conductance) as pure functions.
//! - [`io`]: the CSV network folder and the binary `.gnet` file (the only
//!   module that touches the file system).
//! - [`flow`]: conductances, the pressure solve, permeability and formation
//!   factor.
//! - [`image`]: segmented 3-D images (raw + sidecar, TIFF, `.npy`), the
//!   exact distance transform, connected components, the marker-based
//!   watershed and the extraction of a [`Network`] from the pore space;
//!   imaged ganglia; seeded synthetic rock images.
//! - [`progress`]: the callback through which long calls report progress.
//! - [`generate`]: seeded statistical lattice networks ([`generate::generate`]).
//! - [`fit`]: Corey, Brooks–Corey, LET, Land and Archie models and their
//!   least-squares fits.
//!
//! Pores and throats are both *elements* of a displacement: one index space,
//! pores first (`0..n_pores`), then throats (`n_pores..n_pores + n_throats`);
//! see [`Elements`].
//!
//! ## Example
//! ```
//! use network_core::{Network, NetworkInfo, Pores, Throats, Boundary, Axis};
//! use network_core::geometry::{Geometry, Shape};
//!
//! let info = NetworkInfo {
//!     name: "two-pore chain".into(),
//!     flow_axis: Axis::X,
//!     length_m: 1e-4,
//!     area_m2: 1e-8,
//!     bulk_volume_m3: 1e-12,
//!     extent_m: None,
//!     description: None,
//! };
//! let mut pores = Pores::with_capacity(2);
//! for (i, b) in [Boundary::Inlet, Boundary::Outlet].into_iter().enumerate() {
//!     pores.x.push(i as f64 * 1e-4);
//!     pores.y.push(0.0);
//!     pores.z.push(0.0);
//!     pores.radius.push(2e-5);
//!     pores.shape_factor.push(0.04);
//!     pores.volume.push(1e-13);
//!     pores.clay_volume.push(0.0);
//!     pores.boundary.push(b);
//! }
//! let mut throats = Throats::with_capacity(1);
//! throats.pores.push([0, 1]);
//! throats.radius.push(1e-5);
//! throats.shape_factor.push(1.0 / 16.0);
//! throats.volume.push(1e-14);
//! throats.clay_volume.push(0.0);
//! throats.length.push(1e-4);
//! throats.conduit_a.push(2e-5);
//! throats.conduit_b.push(2e-5);
//! let network = Network::new(info, pores, throats).expect("valid");
//! let geometry = Geometry::new(&network, 1);
//! assert_eq!(geometry.shape[2], Shape::Square);
//! ```

#![warn(missing_docs)]
// Columns indexed by element are the data model: index loops over several
// parallel arrays read better than zipped iterators.
#![allow(clippy::needless_range_loop)]

pub mod capillary;
pub mod connectivity;
pub mod engine;
pub mod fit;
pub mod flow;
pub mod generate;
pub mod geometry;
pub mod image;
pub mod io;
pub mod memory;
pub mod network;
pub mod numeric;
pub mod params;
pub mod progress;
pub mod run;
pub mod shape;
pub mod stats;
pub mod study;
pub mod sweep;
pub mod text;
pub mod wettability;

pub use network::{
    Adjacency, Axis, Boundary, Element, Elements, InvalidNetwork, Network, NetworkInfo, Pores,
    Throats,
};
