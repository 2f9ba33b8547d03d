//! Workspace-level integration tests of Ganglion. The tests live in
//! `it/` (one binary, one module per area); this library is empty.
