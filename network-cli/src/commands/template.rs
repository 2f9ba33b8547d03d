//! `ganglion template`: a file with every key at its default, commented.

use anyhow::Result;

/// Print a file with every key set to its default, each commented: a study
/// file, the [sweep] table of a sweep study, or a generator file. Every key
/// is described in docs/keys.md.
///
/// Examples:
///   ganglion template study > my-study.toml
///   ganglion template sweep >> my-study.toml
///   ganglion template generator > lattice.toml
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Which file.
    #[arg(value_enum, default_value_t = Kind::Study)]
    pub kind: Kind,
}

/// The files with a template.
#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum Kind {
    /// A study file (`ganglion run`).
    Study,
    /// The [sweep] table to append to a study (`ganglion sweep`).
    Sweep,
    /// A generator file (`ganglion generate --spec`, or a study's network).
    Generator,
}

pub fn run(args: &Args) -> Result<()> {
    print!(
        "{}",
        match args.kind {
            Kind::Study => network_core::study::TEMPLATE,
            Kind::Sweep => network_core::sweep::TEMPLATE,
            Kind::Generator => network_core::generate::TEMPLATE,
        }
    );
    Ok(())
}
