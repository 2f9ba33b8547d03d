//! `ganglion generate`: a seeded simple-cubic lattice or irregular network.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use network_core::generate::{GenerateError, IrregularSpec, LatticeSpec, generate};
use network_core::{Axis, io};

use crate::progress::Bars;

/// Generate a lattice or irregular network with random radii and shapes.
///
/// Parameters come from a generator file (`--spec`, TOML; every key
/// optional, see docs/keys.md or `ganglion template generator`) and the
/// flags below, which override it. Flags carry the names of the file's keys
/// and the same units (metres). Defaults are invented sandstone-like demo
/// values. The output is a CSV folder, or a binary network file when the
/// name ends in `.gnet`.
///
/// Examples:
///   ganglion generate -o net/ --size 30x30x30 --target-coordination 4.5 --seed 7
///   ganglion generate -o net/ --size 30x30x30 --spacing-m 85e-6
///   ganglion generate -o big.gnet --size 100x100x100 --target-coordination 5
///   ganglion generate -o net/ --spec lattice.toml
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment, allow_negative_numbers = true)]
pub struct Args {
    /// Output: a folder (CSV) or a `.gnet` file (binary).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Generator file (TOML) with any keys of the lattice specification.
    #[arg(long, value_name = "FILE")]
    pub spec: Option<PathBuf>,
    #[arg(long, allow_hyphen_values = true, value_name = "NXxNYxNZ", help = help_default(
        "Lattice size as NXxNYxNZ (keys nx, ny, nz), e.g. 30x30x30.",
        { let d = LatticeSpec::default(); format!("{}x{}x{}", d.nx, d.ny, d.nz) }))]
    pub size: Option<String>,
    #[arg(long, allow_hyphen_values = true, value_name = "M", help = help_default(
        "Pore spacing (centre to centre), m; 85 µm is 85e-6.",
        LatticeSpec::default().spacing_m))]
    pub spacing_m: Option<f64>,
    /// Renamed: use --spacing-m (metres, like the generator file's key).
    #[arg(long, value_name = "UM", hide = true)]
    pub spacing_um: Option<f64>,
    #[arg(long, allow_hyphen_values = true, value_name = "Z", visible_alias = "coordination", help = help_default(
        "Target mean coordination number.",
        LatticeSpec::default().target_coordination))]
    pub target_coordination: Option<f64>,
    #[arg(long, value_name = "AXIS", visible_alias = "axis", help = help_default(
        "Flow axis (x, y or z): the inlet and outlet faces are normal to it.",
        LatticeSpec::default().flow_axis.as_str()))]
    pub flow_axis: Option<String>,
    #[arg(long, allow_hyphen_values = true, value_name = "F", help = help_default(
        "Fraction of each element's volume that is clay (microporosity), in [0, 1).",
        LatticeSpec::default().clay_fraction))]
    pub clay_fraction: Option<f64>,
    #[arg(long, value_name = "W", allow_hyphen_values = true, help = help_default(
        "Per-element clay fractions: each element draws its fraction uniformly from [F − W, F + W] (F = --clay-fraction), inside [0, 1); 0 gives every element F.",
        LatticeSpec::default().clay_fraction_spread))]
    pub clay_fraction_spread: Option<f64>,
    #[arg(long, value_name = "RHO", allow_negative_numbers = true, help = help_default(
        "Tie of the clay fraction to element size, in [−1, 1] (a Gaussian copula on the radius rank): > 0 puts more clay in smaller elements; needs --clay-fraction-spread > 0.",
        LatticeSpec::default().clay_size_correlation))]
    pub clay_size_correlation: Option<f64>,
    #[arg(long, allow_hyphen_values = true, value_parser = parse_seed, help = help_default("Seed of the random draws.", LatticeSpec::default().seed))]
    pub seed: Option<u64>,
    /// Name written into network.toml.
    #[arg(long)]
    pub name: Option<String>,
    /// Irregular network (table `[irregular]`): random pore positions in
    /// the NX·s × NY·s × NZ·s box, a thinned nearest-neighbour graph,
    /// throats tied to their pores. Implied by any flag below.
    #[arg(long)]
    pub irregular: bool,
    #[arg(long, value_name = "F", help = help_default(
        "Irregular: hard-core distance between pore centres as a fraction of the spacing, in (0, 0.85] (key irregular.min_distance_fraction).",
        IrregularSpec::default().min_distance_fraction))]
    pub min_distance_fraction: Option<f64>,
    #[arg(long, value_name = "W", help = help_default(
        "Irregular: spread of the log-normal coordination law, in (0, 2] (key irregular.coordination_spread).",
        IrregularSpec::default().coordination_spread))]
    pub coordination_spread: Option<f64>,
    #[arg(long, value_name = "Z", help = help_default(
        "Irregular: largest coordination number, 4–40 (key irregular.coordination_max).",
        IrregularSpec::default().coordination_max))]
    pub coordination_max: Option<u32>,
    #[arg(long, value_name = "LO,HI", help = help_default(
        "Irregular: range of throat radius / smaller pore radius, 0 < LO ≤ HI ≤ 1 (key irregular.throat_to_pore_ratio).",
        { let [a, b] = IrregularSpec::default().throat_to_pore_ratio; format!("{a},{b}") }))]
    pub throat_to_pore_ratio: Option<String>,
    #[arg(long, value_name = "M", help = help_default(
        "Irregular: correlation length of pore sizes, m; 0 for none, at most 4 spacings (key irregular.correlation_length_m).",
        IrregularSpec::default().correlation_length_m))]
    pub correlation_length_m: Option<f64>,
}

/// A flag's help with the library's default, so the two cannot drift.
fn help_default(text: &str, default: impl std::fmt::Display) -> String {
    format!("{text} [default: {default}, or the --spec file's value]")
}

/// Throats the generator keeps: every lattice bond for a regular lattice,
/// else about `z n / 2` for the target coordination `z`.
fn expected_throats(spec: &LatticeSpec) -> u64 {
    let bonds = spec.n_lattice_bonds();
    if spec.regular.is_some() || !spec.target_coordination.is_finite() {
        return bonds;
    }
    let kept = (spec.target_coordination.max(0.0) * spec.n_pores() as f64 / 2.0).ceil();
    if kept < bonds as f64 {
        kept as u64
    } else {
        bonds
    }
}

/// A seed: any whole number, judged here (not by the flag parser) so a
/// negative one is named with its range.
fn parse_seed(s: &str) -> Result<u64, String> {
    let n: i128 = s
        .trim()
        .parse()
        .map_err(|_| format!("`{s}` is not a whole number"))?;
    u64::try_from(n).map_err(|_| format!("{n} is outside the seed range 0 to {}", u64::MAX))
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
        bail!(
            "--spacing-um was renamed --spacing-m, in metres like the generator file's key \
             spacing_m: write --spacing-m {}",
            format_args!("{s}e-6")
        );
    }
    if let Some(s) = args.spacing_m {
        spec.spacing_m = s;
    }
    if let Some(z) = args.target_coordination {
        spec.target_coordination = z;
    }
    if let Some(a) = &args.flow_axis {
        spec.flow_axis =
            Axis::parse(a).with_context(|| format!("--flow-axis `{a}`: expected x, y or z"))?;
    }
    if let Some(f) = args.clay_fraction {
        spec.clay_fraction = f;
    }
    if let Some(w) = args.clay_fraction_spread {
        spec.clay_fraction_spread = w;
    }
    if let Some(r) = args.clay_size_correlation {
        spec.clay_size_correlation = r;
    }
    if let Some(s) = args.seed {
        spec.seed = s;
    }
    let any_irregular = args.irregular
        || args.min_distance_fraction.is_some()
        || args.coordination_spread.is_some()
        || args.coordination_max.is_some()
        || args.throat_to_pore_ratio.is_some()
        || args.correlation_length_m.is_some();
    if any_irregular {
        let irr = spec.irregular.get_or_insert_with(IrregularSpec::default);
        if let Some(f) = args.min_distance_fraction {
            irr.min_distance_fraction = f;
        }
        if let Some(w) = args.coordination_spread {
            irr.coordination_spread = w;
        }
        if let Some(z) = args.coordination_max {
            irr.coordination_max = z;
        }
        if let Some(r) = &args.throat_to_pore_ratio {
            let parts: Vec<&str> = r.split(',').collect();
            let nums: Vec<f64> = parts.iter().filter_map(|p| p.trim().parse().ok()).collect();
            if parts.len() != 2 || nums.len() != 2 {
                bail!("--throat-to-pore-ratio `{r}`: expected two numbers LO,HI, e.g. 0.3,0.8");
            }
            irr.throat_to_pore_ratio = [nums[0], nums[1]];
        }
        if let Some(l) = args.correlation_length_m {
            irr.correlation_length_m = l;
        }
    }
    super::check_memory(
        &format!("a lattice of {}x{}x{} pores", spec.nx, spec.ny, spec.nz),
        network_core::memory::for_generate(
            spec.n_pores(),
            spec.n_lattice_bonds(),
            expected_throats(&spec),
        ),
        "choose a smaller --size, or generate on a machine with more memory",
    )?;
    let network = generate(&spec, progress).map_err(|e| {
        // A value given by a flag is refused under the flag's name.
        let key = match &e {
            GenerateError::InvalidParameter { name, .. } => Some(name.as_str()),
            GenerateError::CoordinationOutOfRange { .. } => Some("target_coordination"),
            GenerateError::SpacingTooSmall { .. } => Some("spacing_m"),
            _ => None,
        };
        let by_flag = match key {
            Some("spacing_m") => args.spacing_m.is_some(),
            Some("target_coordination") => args.target_coordination.is_some(),
            Some("clay_fraction") => args.clay_fraction.is_some(),
            Some("clay_fraction_spread") => args.clay_fraction_spread.is_some(),
            Some("clay_size_correlation") => args.clay_size_correlation.is_some(),
            Some("nx" | "ny" | "nz") => args.size.is_some(),
            _ => false,
        };
        match key {
            Some(k) if by_flag => {
                let flag = if matches!(k, "nx" | "ny" | "nz") {
                    "size".to_owned()
                } else {
                    k.replace('_', "-")
                };
                anyhow::anyhow!("--{flag}: {e}")
            }
            _ => anyhow::Error::new(e).context("cannot generate the network"),
        }
    })?;
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
    let kind = if spec.irregular.is_some() {
        "irregular network"
    } else {
        "lattice"
    };
    info.description = Some(format!(
        "generated {kind} {}x{}x{}, spacing {} m, target coordination {}, seed {}",
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
