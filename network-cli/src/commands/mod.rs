//! One module per command; each validates its flags, calls the library and
//! prints or writes the result.

pub mod batch;
pub mod calibrate;
pub mod convert;
pub mod extract;
pub mod ganglia_image;
pub mod generate;
pub mod inspect;
pub mod micp;
pub mod perm;
pub mod run;
pub mod sweep;
pub mod synth_image;
pub mod template;
pub mod verify;

use std::path::Path;

use anyhow::{Context, Result};
use network_core::io::{self, Loaded};

use crate::progress::Bars;

/// Loads a network (CSV folder or binary file) and prints its warnings.
pub fn load(path: &Path, progress: &Bars) -> Result<Loaded> {
    let loaded = io::read_network(path)
        .with_context(|| format!("cannot load network {}", path.display()))?;
    for w in &loaded.warnings {
        progress.warn(&w.to_string());
    }
    Ok(loaded)
}

/// The network of a study (loaded, or generated with the realisation's
/// seed), its warnings printed. Returns the network and its content hash.
pub fn study_network(
    study_path: &Path,
    study: &network_core::study::Study,
    realisation: usize,
    progress: &Bars,
) -> Result<(network_core::Network, String)> {
    let net = network_core::io::study::study_network(study_path, study, realisation)?;
    for w in &net.warnings {
        progress.warn(&w.to_string());
    }
    Ok((net.network, net.hash))
}

/// Refuses a command whose memory estimate exceeds what the machine has
/// (see `network_core::memory`), before it allocates.
pub fn check_memory(
    what: &str,
    estimate: network_core::memory::Estimate,
    hint: &str,
) -> Result<()> {
    network_core::memory::check(
        what,
        estimate,
        network_core::io::memory::available_bytes(),
        hint,
    )?;
    Ok(())
}
