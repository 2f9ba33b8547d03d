//! `ganglion`: quasi-static two-phase displacement on pore networks.
//!
//! Exit codes: 0 success; 1 bad input (a file, a study or a value was
//! refused; the message names it); 2 usage error (unknown command or
//! option, printed by the argument parser).

mod commands;
mod progress;

use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Computes capillary pressure, residual trapping, relative permeability
/// and resistivity index of rock by quasi-static drainage and imbibition on
/// pore networks.
///
/// Results go to standard output (a short key-results block; the full
/// results are files in the output folder); progress and warnings go to
/// standard error. Study-file keys: docs/keys.md and `ganglion template`.
#[derive(Parser, Debug)]
#[command(name = "ganglion", version, propagate_version = true)]
pub struct Cli {
    /// No progress bars or progress lines; results, warnings and errors are
    /// still printed.
    #[arg(long, short, global = true)]
    pub quiet: bool,
    /// Number of worker threads (default: all cores). Results do not depend
    /// on it.
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    Generate(commands::generate::Args),
    Inspect(commands::inspect::Args),
    Convert(commands::convert::Args),
    Perm(commands::perm::Args),
    Micp(commands::micp::Args),
    Calibrate(commands::calibrate::Args),
    Run(commands::run::Args),
    Sweep(commands::sweep::Args),
    Collect(commands::sweep::CollectArgs),
    BatchScript(commands::batch::Args),
    Template(commands::template::Args),
    Extract(commands::extract::Args),
    SynthImage(commands::synth_image::Args),
    GangliaImage(commands::ganglia_image::Args),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    if let Some(n) = cli.threads
        && let Err(e) = rayon::ThreadPoolBuilder::new()
            .num_threads(n.max(1))
            .build_global()
    {
        eprintln!("error: could not start {n} threads: {e}");
        return ExitCode::from(1);
    }
    let progress = progress::Bars::new(cli.quiet);
    let result = match &cli.command {
        Command::Generate(a) => commands::generate::run(a, &progress),
        Command::Inspect(a) => commands::inspect::run(a, &progress),
        Command::Convert(a) => commands::convert::run(a, &progress),
        Command::Perm(a) => commands::perm::run(a, &progress),
        Command::Micp(a) => commands::micp::run(a, &progress),
        Command::Calibrate(a) => commands::calibrate::run(a, &progress),
        Command::Run(a) => commands::run::run(a, &progress),
        Command::Sweep(a) => commands::sweep::run(a, &progress),
        Command::Collect(a) => commands::sweep::collect(a, &progress),
        Command::BatchScript(a) => commands::batch::run(a, &progress),
        Command::Template(a) => commands::template::run(a),
        Command::Extract(a) => commands::extract::run(a, &progress),
        Command::SynthImage(a) => commands::synth_image::run(a, &progress),
        Command::GangliaImage(a) => commands::ganglia_image::run(a, &progress),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            for cause in e.chain().skip(1) {
                eprintln!("  caused by: {cause}");
            }
            ExitCode::from(1)
        }
    }
}
