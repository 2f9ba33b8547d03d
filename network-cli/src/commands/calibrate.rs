//! `ganglion calibrate`: scale a network to a plug's porosity,
//! permeability and mercury-injection curve.

use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use network_core::io::lab_curve::read_lab_data;
use network_core::run::calibrate::{
    MAX_LOG10_PERM_MISFIT, MAX_MICP_RMS, MAX_POROSITY_MISFIT, PORE_SHAPE_CANDIDATES, calibrate,
    calibrate_pore_shape,
};

use crate::progress::Bars;

/// Calibrate a network to lab data: the radii are scaled to the measured
/// porosity, then every length to the measured MICP curve and
/// permeability together.
///
/// The lab-data file (TOML):
///   porosity = 0.21            # fraction
///   permeability_md = 150.0    # mD
///   micp_curve = "plug7.csv"   # relative to the lab-data file; header
///                              # pressure_pa|pressure_psi,mercury_saturation
///
/// Writes OUT/calibration.json (factors, misfit per data set, verdict),
/// OUT/calibration.svg (measured against simulated MICP), OUT/micp.csv and
/// OUT/pore-throat-sizes.svg, and, when the data are matched,
/// OUT/network.gnet (the calibrated network). Data are refused (exit 1,
/// no network written) when the porosity misfit exceeds 0.002, the RMS
/// mercury-saturation misfit 0.08, or the permeability is off by more than
/// a factor 3.
///
/// Examples:
///   ganglion generate -o base.gnet --size 40x40x40 --irregular
///   ganglion calibrate base.gnet --lab plug7.toml -o plug7-cal
///   ganglion calibrate --spec gen.toml --fit-pore-shape --lab plug7.toml -o plug7-cal
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Base network: a CSV folder or a binary `.gnet` file (or give
    /// --spec instead).
    pub network: Option<PathBuf>,
    /// Generator file (TOML) of the base network, instead of NETWORK.
    #[arg(long, value_name = "GEN.toml")]
    pub spec: Option<PathBuf>,
    /// With --spec: also fit the spread of the pore sizes, trying the
    /// pore-radius Weibull shapes 0.7, 1, 1.4, 1.8, 2.5, 3.5 and 5 and
    /// keeping the best (OUT/pore-shape-candidates.csv lists them all).
    #[arg(long, requires = "spec")]
    pub fit_pore_shape: bool,
    /// Lab-data file (TOML, see above).
    #[arg(long, value_name = "FILE.toml")]
    pub lab: PathBuf,
    /// Output folder (created if missing).
    #[arg(long, short)]
    pub output: PathBuf,
    /// Seed of the triangle shapes of the MICP geometry.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let lab = read_lab_data(&args.lab)?;
    let (cal, net) = match (&args.network, &args.spec) {
        (Some(_), Some(_)) => bail!("give either NETWORK or --spec, not both"),
        (None, None) => bail!("give the base network: NETWORK or --spec GEN.toml"),
        (Some(path), None) => {
            let loaded = super::load(path, progress)?;
            calibrate(&loaded.network, &lab, args.seed)?
        }
        (None, Some(spec_path)) => {
            let spec = network_core::io::study::read_lattice_spec(spec_path)?;
            if args.fit_pore_shape {
                let (cands, best, net) =
                    calibrate_pore_shape(&spec, &PORE_SHAPE_CANDIDATES, &lab, args.seed)?;
                network_report::micp_files::write_shape_candidates(&args.output, &cands, best)
                    .with_context(|| {
                        format!("cannot write the results into {}", args.output.display())
                    })?;
                println!(
                    "pore-radius shape        {} (best of {} tried; pore-shape-candidates.csv)",
                    cands[best].pore_radius_shape,
                    cands.len()
                );
                (cands[best].calibration.clone(), net)
            } else {
                let base = network_core::generate::generate(&spec, progress)
                    .context("cannot generate the base network")?;
                calibrate(&base, &lab, args.seed)?
            }
        }
    };
    network_report::micp_files::write_calibration_files(&args.output, &cal, &lab.micp)
        .with_context(|| format!("cannot write the results into {}", args.output.display()))?;
    println!("radius factor            {:.6}", cal.radius_factor);
    println!("length factor            {:.6}", cal.length_factor);
    println!(
        "porosity                 {:.4} (measured {:.4}, misfit {:+.4}; limit {MAX_POROSITY_MISFIT})",
        cal.porosity, lab.porosity, cal.porosity_misfit
    );
    println!(
        "permeability             {:.4} mD (measured {} mD, log10 misfit {:+.3}; limit {:.3})",
        cal.permeability_md,
        lab.permeability_md,
        cal.permeability_log10_misfit,
        MAX_LOG10_PERM_MISFIT
    );
    println!(
        "MICP misfit              {:.4} (RMS of S_Hg over {} points; limit {MAX_MICP_RMS})",
        cal.micp_rms_misfit, cal.micp_points_compared
    );
    if !cal.accepted {
        bail!(
            "the lab data cannot be matched by scaling this network (see {}/calibration.svg):\n  {}",
            args.output.display(),
            cal.refusals.join("\n  ")
        );
    }
    let out = args.output.join("network.gnet");
    super::generate::write_network(&net, &out)?;
    println!("calibrated network       {}", out.display());
    Ok(())
}
