//! `ganglion perm`: absolute permeability and formation factor.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::Axis;
use network_core::flow::solver::SolveOptions;
use network_core::flow::{PermOptions, permeability};

use crate::progress::Bars;

/// Single-phase flow: absolute permeability, porosity and formation factor
/// along an axis, from one pressure solve and one electrical solve over the
/// spanning cluster.
///
/// Examples:
///   ganglion perm sample-networks/tiny-lattice
///   ganglion perm big.gnet --axis x --json
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Network: a CSV folder or a binary `.gnet` file.
    pub network: PathBuf,
    /// Flow axis (x, y or z; default: the network's own).
    #[arg(long)]
    pub axis: Option<String>,
    /// Relative residual at which the solver stops.
    #[arg(long, default_value_t = 1e-10)]
    pub tolerance: f64,
    /// Print one JSON object.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let loaded = super::load(&args.network, progress)?;
    let net = &loaded.network;
    super::check_memory(
        &format!("the pressure solve of {} pores", net.n_pores()),
        network_core::memory::for_perm(net.n_pores() as u64, net.n_throats() as u64),
        "use a machine with more memory or a smaller sub-volume of the network",
    )?;
    let axis = match &args.axis {
        Some(a) => Axis::parse(a).with_context(|| format!("--axis `{a}`: expected x, y or z"))?,
        None => net.info().flow_axis,
    };
    if !(args.tolerance > 0.0 && args.tolerance < 1.0) {
        anyhow::bail!("--tolerance {}: must lie in (0, 1)", args.tolerance);
    }
    let opts = PermOptions {
        solve: SolveOptions {
            tolerance: args.tolerance,
            ..SolveOptions::default()
        },
        ..PermOptions::default()
    };
    let r = permeability(net, axis, &opts).context("single-phase solve failed")?;
    if args.json {
        println!("{}", serde_json::to_string_pretty(&r)?);
        return Ok(());
    }
    println!("axis               {}", r.axis.as_str());
    println!(
        "permeability       {:.6e} m2  ({:.4} mD)",
        r.permeability_m2, r.permeability_md
    );
    println!("porosity           {:.4}", r.porosity);
    println!("formation factor   {:.4}", r.formation_factor);
    println!(
        "flow in / out      {:.6e} / {:.6e} m3/s (imbalance {:.2e})",
        r.inflow_m3_per_s, r.outflow_m3_per_s, r.flow_imbalance
    );
    println!(
        "solver             {} iterations, residual {:.2e}, {} levels; electrical {} iterations",
        r.solver_iterations, r.solver_residual, r.solver_levels, r.electrical_iterations
    );
    println!(
        "pores              {} flowing, {} excluded (not on a spanning cluster)",
        r.n_flowing_pores, r.n_excluded_pores
    );
    Ok(())
}
