//! One module per command; each validates its flags, calls the library and
//! prints or writes the result.

pub mod convert;
pub mod generate;
pub mod inspect;
pub mod perm;
pub mod run;

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
