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
    Verify(commands::verify::Args),
    Extract(commands::extract::Args),
    SynthImage(commands::synth_image::Args),
    GangliaImage(commands::ganglia_image::Args),
}

/// Most worker threads per core `--threads` may ask for: more only adds
/// start-up time and memory (each thread has its own stack), never speed.
const MAX_THREADS_PER_CORE: usize = 4;

fn main() -> ExitCode {
    let cli = Cli::parse();
    let progress = progress::Bars::new(cli.quiet);
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let threads = cli.threads.map(|n| {
        let cap = MAX_THREADS_PER_CORE * cores;
        if n > cap {
            progress.warn(&format!(
                "--threads {n}: capped at {cap} ({MAX_THREADS_PER_CORE} per core on {cores} cores)"
            ));
            cap
        } else {
            n
        }
    });
    if let Some(n) = threads
        && let Err(e) = rayon::ThreadPoolBuilder::new()
            .num_threads(n.max(1))
            .build_global()
    {
        eprintln!("error: could not start {n} threads: {e}");
        return ExitCode::from(1);
    }
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
        Command::Verify(a) => commands::verify::run(a),
        Command::Extract(a) => commands::extract::run(a, &progress),
        Command::SynthImage(a) => commands::synth_image::run(a, &progress),
        Command::GangliaImage(a) => commands::ganglia_image::run(a, &progress),
    };
    // For measuring the memory estimates against the real peak (tests).
    if std::env::var_os("GANGLION_PRINT_PEAK_MEMORY").is_some()
        && let Some(peak) = network_core::io::memory::peak_resident_bytes()
    {
        eprintln!("peak resident memory: {peak} bytes");
    }
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
