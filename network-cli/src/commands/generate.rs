//! `ganglion generate`: a seeded simple-cubic lattice network.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use network_core::generate::{LatticeSpec, generate};
use network_core::{Axis, io};

use crate::progress::Bars;

/// Generate a lattice network with random radii and shapes.
///
/// Parameters come from a TOML parameter file (`--spec`; every field
/// optional, defaults are invented sandstone-like demo values) and the flags
/// below, which override it. The output is a CSV folder, or a binary network
/// file when the name ends in `.gnet`.
///
/// Examples:
///   ganglion generate -o net/ --size 30x30x30 --coordination 4.5 --seed 7
///   ganglion generate -o big.gnet --size 100x100x100 --coordination 5
///   ganglion generate -o net/ --spec lattice.toml
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Output: a folder (CSV) or a `.gnet` file (binary).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Parameter file (TOML) with any fields of the lattice specification.
    #[arg(long, value_name = "FILE")]
    pub spec: Option<PathBuf>,
    /// Lattice size as NXxNYxNZ, e.g. 30x30x30.
    #[arg(long, value_name = "NXxNYxNZ")]
    pub size: Option<String>,
    /// Pore spacing in micrometres.
    #[arg(long, value_name = "UM")]
    pub spacing_um: Option<f64>,
    /// Target mean coordination number.
    #[arg(long, value_name = "Z")]
    pub coordination: Option<f64>,
    /// Flow axis (x, y or z): the inlet and outlet faces are normal to it.
    #[arg(long, value_name = "AXIS")]
    pub axis: Option<String>,
    /// Fraction of each element's volume that is clay (micro-porosity).
    #[arg(long, value_name = "F")]
    pub clay_fraction: Option<f64>,
    /// Seed of the random draws.
    #[arg(long)]
    pub seed: Option<u64>,
    /// Name written into network.toml.
    #[arg(long)]
    pub name: Option<String>,
}

fn parse_size(s: &str) -> Result<(usize, usize, usize)> {
    let parts: Vec<&str> = s.split(['x', 'X', ',']).collect();
    if parts.len() != 3 {
        bail!("--size `{s}`: expected NXxNYxNZ, e.g. 30x30x30");
    }
    let mut v = [0usize; 3];
    for (i, p) in parts.iter().enumerate() {
        v[i] = p
            .trim()
            .parse()
            .with_context(|| format!("--size `{s}`: `{p}` is not a whole number"))?;
    }
    Ok((v[0], v[1], v[2]))
}

/// Reads a lattice specification file.
pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let mut spec = match &args.spec {
        Some(p) => network_core::io::study::read_lattice_spec(p)?,
        None => LatticeSpec::default(),
    };
    if let Some(s) = &args.size {
        (spec.nx, spec.ny, spec.nz) = parse_size(s)?;
    }
    if let Some(s) = args.spacing_um {
        spec.spacing_m = s / 1e6;
    }
    if let Some(z) = args.coordination {
        spec.target_coordination = z;
    }
    if let Some(a) = &args.axis {
        spec.flow_axis =
            Axis::parse(a).with_context(|| format!("--axis `{a}`: expected x, y or z"))?;
    }
    if let Some(f) = args.clay_fraction {
        spec.clay_fraction = f;
    }
    if let Some(s) = args.seed {
        spec.seed = s;
    }
    let network = generate(&spec, progress).context("cannot generate the network")?;
    let network = rename(network, args, &spec);
    write_network(&network, &args.output)?;
    progress.note(&format!(
        "wrote {} pores and {} throats to {}",
        network.n_pores(),
        network.n_throats(),
        args.output.display()
    ));
    Ok(())
}

fn rename(
    network: network_core::Network,
    args: &Args,
    spec: &LatticeSpec,
) -> network_core::Network {
    let (mut info, pores, throats) = network.into_parts();
    if let Some(n) = &args.name {
        info.name = n.clone();
    }
    info.description = Some(format!(
        "generated lattice {}x{}x{}, spacing {} m, target coordination {}, seed {}",
        spec.nx, spec.ny, spec.nz, spec.spacing_m, spec.target_coordination, spec.seed
    ));
    network_core::Network::new(info, pores, throats).expect("a generated network stays valid")
}

/// Writes a network as CSV (folder) or binary (`.gnet`).
pub fn write_network(network: &network_core::Network, out: &Path) -> Result<()> {
    let binary = out
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("gnet"));
    if binary {
        io::write_binary(network, out)
    } else {
        io::write_csv(network, out)
    }
    .with_context(|| format!("cannot write {}", out.display()))
}
