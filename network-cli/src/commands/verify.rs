//! `ganglion verify`: is a result folder a complete set?

use std::path::PathBuf;

use anyhow::{Result, bail};
use network_core::io::result_set::{MANIFEST_NAME, verify};

/// Check that a result folder (of `run`, or the merged outputs of a
/// `sweep`/`collect`) holds a complete result set: its manifest
/// (ganglion-manifest.json, written last) is present and every file it
/// lists is there with its size and CRC-32, and no other file is. Exits 0
/// for a complete set, 1 for an interrupted, damaged or foreign folder,
/// naming each problem.
///
/// Example:
///   ganglion verify out/
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The result folder.
    pub folder: PathBuf,
}

pub fn run(args: &Args) -> Result<()> {
    let v = verify(&args.folder)?;
    let Some(m) = &v.manifest else {
        bail!(
            "{}: no {MANIFEST_NAME}: not a complete Ganglion result set (interrupted, still being written, or not ours)",
            args.folder.display()
        );
    };
    if v.is_complete() {
        println!(
            "{}: complete {} result set, {} files{}",
            args.folder.display(),
            m.kind,
            m.files.len(),
            if m.sources.is_empty() {
                String::new()
            } else {
                format!(" made from {} source files", m.sources.len())
            }
        );
        return Ok(());
    }
    let mut lines: Vec<String> = v.damaged.clone();
    lines.extend(
        v.unlisted
            .iter()
            .map(|f| format!("{f}: not part of the set")),
    );
    bail!(
        "{}: not a complete result set ({} problem(s)):\n  {}",
        args.folder.display(),
        lines.len(),
        lines.join("\n  ")
    )
}
