//! Workspace-level integration tests of Ganglion: relative permeability
//! against analytic bundles of tubes, the bundled sample networks and demo
//! studies, and sweep determinism. The tests live in the files named in
//! `Cargo.toml`; this library is empty.
