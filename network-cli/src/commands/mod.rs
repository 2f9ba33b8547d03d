//! One module per command; each validates its flags, calls the library and
//! prints or writes the result.

pub mod convert;
pub mod generate;
pub mod inspect;
pub mod perm;
pub mod run;
pub mod sweep;

use std::path::Path;

use anyhow::{Context, Result};
use network_core::io::{self, Loaded};

use crate::progress::Bars;

/// Loads a network (CSV folder or binary file) and prints its warnings.
pub fn load(path: &Path, progress: &Bars) -> Result<Loaded> {
    let loaded = io::read_network(path)
        .with_context(|| format!("cannot load network {}", path.display()))?;
    for w in &loaded.warnings {
        progress.note(&format!("warning: {w}"));
    }
    Ok(loaded)
}

/// The network of a study: loaded from a CSV folder or `.gnet` file, or
/// generated from a parameter file (`.toml`) with its seed plus
/// `realisation`. Returns the network and its content hash.
pub fn study_network(
    study_path: &Path,
    study: &network_core::study::Study,
    realisation: usize,
    progress: &Bars,
) -> Result<(network_core::Network, String)> {
    let path = run::network_path(study_path, study);
    let net = if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
    {
        let mut spec = generate::read_spec(&path)?;
        spec.seed += realisation as u64;
        network_core::generate::generate(&spec, &network_core::progress::Silent)
            .with_context(|| format!("cannot generate the network of {}", path.display()))?
    } else {
        load(&path, progress)?.network
    };
    let hash = io::network_hash(&net);
    Ok((net, hash))
}
