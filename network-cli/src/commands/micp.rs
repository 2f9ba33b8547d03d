//! `ganglion micp`: simulated mercury injection.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::io::lab_curve::read_measured_micp;
use network_core::run::micp::{MicpSpec, PA_PER_PSI, simulate_micp};

use crate::progress::Bars;

/// Simulated mercury injection (MICP): mercury invades the evacuated
/// network from every face as the pressure rises (σ = 0.485 N/m, contact
/// angle 140° through mercury), giving the injection pressure against
/// mercury saturation and the pore-throat size distribution
/// (r = 2σ|cos θ|/P, dS/dlog r).
///
/// Writes OUT/micp.csv, OUT/micp.svg (with the measured curve overlaid when
/// --measured is given) and OUT/pore-throat-sizes.svg.
///
/// The measured curve is a CSV file whose header names two columns:
/// `pressure_pa` or `pressure_psi` (the unit), then `mercury_saturation`
/// (fraction of the pore volume); lines starting with `#` are skipped.
///
/// Examples:
///   ganglion micp sample-networks/tiny-lattice -o micp-out
///   ganglion micp rock.gnet -o out --measured plug7-micp.csv
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Network: a CSV folder or a binary `.gnet` file.
    pub network: PathBuf,
    /// Output folder (created if missing).
    #[arg(long, short)]
    pub output: PathBuf,
    /// Measured mercury-injection curve (CSV, see above) to overlay and
    /// compare with.
    #[arg(long, value_name = "FILE.csv")]
    pub measured: Option<PathBuf>,
    /// First pressure step, Pa (default 1 psi).
    #[arg(long, default_value_t = MicpSpec::default().pressure_min_pa)]
    pub pressure_min_pa: f64,
    /// Last pressure step, Pa (default 60 000 psi).
    #[arg(long, default_value_t = MicpSpec::default().pressure_max_pa)]
    pub pressure_max_pa: f64,
    /// Pressure steps, evenly spaced in log P.
    #[arg(long, default_value_t = MicpSpec::default().steps)]
    pub steps: usize,
    /// Mercury–air interfacial tension, N/m.
    #[arg(long, default_value_t = MicpSpec::default().sigma_n_per_m)]
    pub interfacial_tension_n_per_m: f64,
    /// Contact angle measured through mercury, degrees (90, 180].
    #[arg(long, default_value_t = MicpSpec::default().contact_angle_deg)]
    pub contact_angle_deg: f64,
    /// Seed of the triangle shapes of the network's geometry.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let spec = MicpSpec {
        sigma_n_per_m: args.interfacial_tension_n_per_m,
        contact_angle_deg: args.contact_angle_deg,
        pressure_min_pa: args.pressure_min_pa,
        pressure_max_pa: args.pressure_max_pa,
        steps: args.steps,
        seed: args.seed,
    };
    spec.validate()?;
    let measured = match &args.measured {
        Some(p) => Some(read_measured_micp(p)?),
        None => None,
    };
    let loaded = super::load(&args.network, progress)?;
    let curve = simulate_micp(&loaded.network, &spec)?;
    network_report::micp_files::write_micp_files(&args.output, &curve, measured.as_ref())
        .with_context(|| format!("cannot write the results into {}", args.output.display()))?;
    println!("porosity                 {:.4}", curve.porosity);
    match curve.first_entry_pa {
        Some(p) => println!(
            "first entry              {:.6e} Pa ({:.4} psi)",
            p,
            p / PA_PER_PSI
        ),
        None => println!("first entry              none within the pressure range"),
    }
    if let Some(last) = curve.points.last() {
        println!(
            "S_Hg at {:.4e} Pa     {:.4}",
            last.pressure_pa, last.mercury_saturation
        );
    }
    if let Some(m) = &measured {
        match m.rms_misfit(&curve) {
            Some(e) => println!("misfit to measured       {e:.4} (RMS of S_Hg)"),
            None => progress.warn("no measured pressure lies inside the simulated range"),
        }
    }
    println!(
        "files                    {}/micp.csv, micp.svg, pore-throat-sizes.svg",
        args.output.display()
    );
    Ok(())
}
