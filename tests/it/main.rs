//! Workspace-level integration tests, one binary: relative permeability
//! against analytic bundles of tubes, the bundled sample networks and demo
//! studies, sweep determinism, and the layering of the crates' modules.

mod keys;
mod layering;
mod relperm;
mod samples;
mod sweeps;
