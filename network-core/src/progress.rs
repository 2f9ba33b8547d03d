//! Progress reporting from long library calls, without any terminal code.
//!
//! The library reports through the [`Progress`] trait; the CLI implements it
//! with a progress bar, tests and benchmarks use [`Silent`].

/// Receives progress of a long-running library call.
///
/// Implementations must be cheap: the library calls [`Progress::advance`] at
/// most a few thousand times per stage.
pub trait Progress: Sync {
    /// A new stage starts with `total` units of work (0 when unknown).
    fn start(&self, stage: &str, total: u64);
    /// `delta` more units of the current stage are done.
    fn advance(&self, delta: u64);
    /// The current stage is done.
    fn finish(&self);
}

/// A [`Progress`] that ignores everything.
#[derive(Clone, Copy, Debug, Default)]
pub struct Silent;

impl Progress for Silent {
    fn start(&self, _stage: &str, _total: u64) {}
    fn advance(&self, _delta: u64) {}
    fn finish(&self) {}
}
