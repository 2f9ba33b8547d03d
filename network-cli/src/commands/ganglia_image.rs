//! `ganglion ganglia-image`: saturations and ganglia of an imaged residual
//! phase.

use std::path::{Path, PathBuf};

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
/// OUT/imaged-ganglia.csv and OUT/imaged-phase.json; with --compare RUN_OUT
/// also OUT/ganglia-imaged-vs-simulated.svg, the imaged and the simulated
/// ganglion sizes side by side (fraction of ganglia at least as large as V).
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
    /// Output folder of a `ganglion run` whose trapped ganglia
    /// (ganglia.csv) and residual saturation (summary.json) to draw beside
    /// the imaged ones in OUT/ganglia-imaged-vs-simulated.svg.
    #[arg(long, value_name = "RUN_OUT")]
    pub compare: Option<PathBuf>,
}

/// The `volume_m3` column of a run's `ganglia.csv`; errors name file and
/// line.
fn simulated_volumes(path: &Path) -> Result<Vec<f64>> {
    let text =
        std::fs::read_to_string(path).with_context(|| format!("cannot read {}", path.display()))?;
    let mut lines = text.lines();
    let header = lines.next().unwrap_or("");
    let col = header
        .split(',')
        .position(|h| h.trim() == "volume_m3")
        .with_context(|| format!("{}:1: no volume_m3 column", path.display()))?;
    let mut out = Vec::new();
    for (k, line) in lines.enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let field = line.split(',').nth(col).unwrap_or("");
        let v: f64 = field
            .trim()
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite() && *v > 0.0)
            .with_context(|| {
                format!(
                    "{}:{}: volume_m3 = `{field}`: expected a volume > 0",
                    path.display(),
                    k + 2
                )
            })?;
        out.push(v);
    }
    Ok(out)
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
    if let Some(run) = &args.compare {
        let vols = simulated_volumes(&run.join("ganglia.csv"))?;
        let summary = run.join("summary.json");
        let snr = std::fs::read_to_string(&summary)
            .ok()
            .and_then(|t| serde_json::from_str::<serde_json::Value>(&t).ok())
            .and_then(|v| v["snr"].as_f64());
        if snr.is_none() {
            progress.warn(&format!(
                "no snr in {}; the figure shows n/a",
                summary.display()
            ));
        }
        let svg = network_report::image_ganglia::comparison_svg(&g, &vols, snr)?;
        let out = args.output.join("ganglia-imaged-vs-simulated.svg");
        network_core::io::atomic::write_atomic(&out, svg.as_bytes())
            .with_context(|| format!("cannot write {}", out.display()))?;
        println!(
            "simulated          {} trapped ganglia, Snr {}",
            vols.len(),
            snr.map_or("n/a".into(), |s| format!("{s:.4}"))
        );
    }
    progress.note(&format!("wrote {}", args.output.display()));
    Ok(())
}
