//! `ganglion inspect`: what a network is.

use std::path::PathBuf;

use anyhow::Result;
use network_core::stats::NetworkReport;

use crate::progress::Bars;

/// Describe a network: counts, porosity, coordination, radii, shape
/// factors, shape classes, connectivity and validation warnings.
///
/// Examples:
///   ganglion inspect sample-networks/tiny-lattice
///   ganglion inspect big.gnet --json
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Network: a CSV folder or a binary `.gnet` file.
    pub network: PathBuf,
    /// Print one JSON object instead of a table.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let loaded = super::load(&args.network, progress)?;
    if args.json {
        let warnings: Vec<String> = loaded.warnings.iter().map(|w| w.to_string()).collect();
        let v = network_core::stats::inspect_json(&loaded.network, &warnings)?;
        println!("{}", serde_json::to_string_pretty(&v)?);
        return Ok(());
    }
    let r = NetworkReport::of(&loaded.network);
    println!("network            {}", r.name);
    println!("pores / throats    {} / {}", r.pores, r.throats);
    println!(
        "inlet / outlet     {} / {} pores (flow axis {})",
        r.inlet_pores, r.outlet_pores, r.flow_axis
    );
    println!("porosity           {:.4}", r.porosity);
    println!(
        "pore volume        {:.4e} m3 (bulk {:.4e} m3)",
        r.pore_volume_m3, r.bulk_volume_m3
    );
    println!("mean coordination  {:.3}", r.mean_coordination);
    let hist: Vec<String> = r
        .coordination_histogram
        .iter()
        .enumerate()
        .filter(|(_, n)| **n > 0)
        .map(|(z, n)| format!("{z}:{n}"))
        .collect();
    println!("coordination       {}", hist.join(" "));
    println!(
        "connectivity       {} ({} clusters, {} isolated pores, {} pores off the spanning cluster)",
        if r.spanning {
            "spanning"
        } else {
            "NOT spanning"
        },
        r.clusters,
        r.isolated_pores,
        r.non_spanning_pores
    );
    for (kind, s) in [("pores", &r.pore_stats), ("throats", &r.throat_stats)] {
        println!("{kind}");
        println!(
            "  radius (um)      min {:.3}  median {:.3}  mean {:.3}  max {:.3}",
            s.radius_m.min * 1e6,
            s.radius_m.median * 1e6,
            s.radius_m.mean * 1e6,
            s.radius_m.max * 1e6
        );
        println!(
            "  shape factor     min {:.4}  median {:.4}  mean {:.4}  max {:.4}",
            s.shape_factor.min, s.shape_factor.median, s.shape_factor.mean, s.shape_factor.max
        );
        println!(
            "  shapes           triangle {:.3}  square {:.3}  circle {:.3}",
            s.shapes.triangle, s.shapes.square, s.shapes.circle
        );
        println!("  clay volume      {:.4e} m3", s.clay_volume_m3);
    }
    if loaded.warnings.is_empty() {
        println!("warnings           none");
    } else {
        println!("warnings           {}", loaded.warnings.len());
        for w in &loaded.warnings {
            println!("  {w}");
        }
    }
    Ok(())
}
