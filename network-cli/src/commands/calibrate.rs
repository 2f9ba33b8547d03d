//! `ganglion calibrate`: scale a network to a plug's porosity,
//! permeability and mercury-injection curve.

use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use network_core::io::lab_curve::read_lab_data;
use network_core::run::angle_fit::{MAX_AMOTT_MISFIT, MAX_SNR_MISFIT};
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
///   [waterflood]               # optional: fit the advancing contact angles
///   initial_water_saturation = 0.22        # Swi before the flood
///   residual_nonwetting_saturation = 0.31  # measured after the flood, and/or
///   amott_water_index = 0.55               # the Amott water index
///   receding_contact_angle_deg = [0, 0]    # default [0, 0]
///   advancing_range_width_deg = 20         # default 20
///   advancing_search_deg = [0, 180]        # default [0, 180]
///
/// With [waterflood], the centre of an advancing contact-angle range of the
/// given width is fitted last, on the calibrated network: drainage from
/// every face to Swi, then imbibition from both faces to a strongly
/// negative Pc, for 17 centres across the search range, refined by golden
/// section. Refused when the measured value lies outside what the scan
/// gives (widened by the limit) or the misfit stays above 0.03 (Snr) or
/// 0.1 (Amott index). Adds OUT/angle-scan.csv and OUT/angle-fit.svg.
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
    if let Some(w) = &cal.wettability {
        let a = w.advancing_contact_angle_deg;
        println!(
            "advancing angles         [{:.2}, {:.2}] deg (receding [{}, {}]; Swi {:.4})",
            a[0],
            a[1],
            w.receding_contact_angle_deg[0],
            w.receding_contact_angle_deg[1],
            w.initial_water_saturation
        );
        if let (Some(m), Some(e)) = (
            w.measured_residual_nonwetting_saturation,
            w.residual_nonwetting_misfit,
        ) {
            println!(
                "residual saturation      {:.4} (measured {m}, misfit {e:+.4}; limit {MAX_SNR_MISFIT})",
                w.residual_nonwetting_saturation
            );
        }
        if let (Some(m), Some(e)) = (w.measured_amott_water_index, w.amott_water_misfit) {
            println!(
                "Amott water index        {:.4} (measured {m}, misfit {e:+.4}; limit {MAX_AMOTT_MISFIT})",
                w.amott_water_index
            );
        }
    }
    if !cal.accepted {
        bail!(
            "the lab data cannot be matched by this network (see {}/calibration.svg{}):\n  {}",
            args.output.display(),
            if cal.wettability.is_some() {
                " and angle-fit.svg"
            } else {
                ""
            },
            cal.refusals.join("\n  ")
        );
    }
    let out = args.output.join("network.gnet");
    super::generate::write_network(&net, &out)?;
    println!("calibrated network       {}", out.display());
    if let Some(w) = &cal.wettability {
        let (r, a) = (w.receding_contact_angle_deg, w.advancing_contact_angle_deg);
        println!(
            "for a study file         [wettability] receding_contact_angle_deg = [{}, {}], advancing_contact_angle_deg = [{:.2}, {:.2}]",
            r[0], r[1], a[0], a[1]
        );
    }
    Ok(())
}
