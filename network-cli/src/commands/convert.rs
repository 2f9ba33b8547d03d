//! `ganglion convert`: CSV folder ↔ binary network file.

use std::path::PathBuf;

use anyhow::Result;

use crate::progress::Bars;

/// Convert a network between the CSV folder and the binary `.gnet` file.
/// Every value round-trips bit for bit.
///
/// Examples:
///   ganglion convert net/ -o net.gnet
///   ganglion convert net.gnet -o net-csv/
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Input network (CSV folder or `.gnet` file).
    pub network: PathBuf,
    /// Output: a folder (CSV) or a `.gnet` file (binary).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let loaded = super::load(&args.network, progress)?;
    super::generate::write_network(&loaded.network, &args.output)?;
    progress.note(&format!("wrote {}", args.output.display()));
    Ok(())
}
