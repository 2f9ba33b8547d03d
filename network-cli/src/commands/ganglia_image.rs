//! `ganglion ganglia-image`: saturations and ganglia of an imaged residual
//! phase.

use std::path::PathBuf;

use anyhow::{Context, Result};
use network_core::image::ganglia::analyse;
use network_core::image::label::Connectivity;
use network_core::io::image::read_image;

use super::extract::LabelArgs;
use crate::progress::Bars;

/// Measure the non-aqueous phase of a segmented image: saturations, every
/// connected ganglion (volume, bounding box, equivalent diameter, whether
/// it touches a face), the size histogram and a power-law tail fitted by
/// maximum likelihood.
///
/// The image needs an oil label (--oil-label or the sidecar's oil_label)
/// and usually a water label; formats as for `extract`. Writes
/// OUT/imaged-ganglia.csv and OUT/imaged-phase.json.
///
/// Examples:
///   ganglion ganglia-image residual.raw -o residual-out/
///   ganglion ganglia-image scan.tif --voxel-size-m 4e-6 --solid-label 0 \
///       --water-label 1 --oil-label 2 --connectivity 26 -o out/
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Segmented image with solid, water and non-aqueous labels.
    pub image: PathBuf,
    /// Output folder.
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    #[command(flatten)]
    pub labels: LabelArgs,
    /// Voxels sharing a face (6) or also an edge or a corner (26) join one
    /// ganglion.
    #[arg(long, default_value = "6", value_name = "6|26")]
    pub connectivity: String,
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let conn = Connectivity::parse(&args.connectivity)
        .with_context(|| format!("--connectivity `{}`: expected 6 or 26", args.connectivity))?;
    let img = read_image(&args.image, &args.labels.options()?)?;
    let g = analyse(&img.volume, &img.labels, conn, &args.image)?;
    network_report::image_ganglia::write_image_ganglia(&args.output, &g)?;
    println!("connectivity       {}", g.connectivity);
    println!("porosity           {:.4}", g.porosity);
    println!("oil saturation     {:.4}", g.oil_saturation);
    println!("water saturation   {:.4}", g.water_saturation);
    println!(
        "ganglia            {} ({} touch a face of the image)",
        g.ganglia.len(),
        g.n_touching_face
    );
    match &g.size_fit {
        Some(f) => println!(
            "size tail          p(V) ∝ V^-{:.3} ± {:.3} above {} voxels ({} ganglia, KS distance {:.3})",
            f.alpha, f.alpha_std_error, f.x_min, f.n_tail, f.ks_distance
        ),
        None => println!("size tail          too few ganglia for a fit"),
    }
    progress.note(&format!("wrote {}", args.output.display()));
    Ok(())
}
