//! Workspace-level integration tests, one binary: the bundled sample
//! networks and demo studies, sweep determinism, documented keys, and the
//! layering of the crates' modules.

mod keys;
mod layering;
mod samples;
mod sweeps;
