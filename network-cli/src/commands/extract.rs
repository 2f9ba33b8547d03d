//! `ganglion extract`: a pore network from a segmented 3-D image.

use std::path::{Path, PathBuf};
use std::time::Instant;

use anyhow::{Context, Result};
use network_core::flow::{PermOptions, permeability};
use network_core::image::distance::squared_distance;
use network_core::image::extract::{ExtractOptions, assemble, check_phases};
use network_core::image::watershed::watershed;
use network_core::io::image::{ImageOptions, read_image};
use network_core::{Axis, io};

use crate::progress::Bars;

/// Extract a pore network from a segmented image: an exact Euclidean
/// distance transform of the pore space, a marker-based watershed that
/// splits it into one region per pore, and the regions' shared faces as
/// throats. Pores on the first and last slice along the flow axis are the
/// inlet and outlet.
///
/// The image is a multi-page TIFF (one page per z slice), a NumPy `.npy`
/// array (shape nz, ny, nx) or raw samples with a TOML sidecar
/// IMAGE.toml (keys in docs/keys.md). The format is recognised from the
/// file's first bytes. Flags named like the sidecar keys override it;
/// TIFF and .npy need --voxel-size-m. Every label value in the image must
/// be declared (defaults: solid 0, pore 1); water and non-aqueous voxels
/// count as pore space.
///
/// Output: the network (a CSV folder, or a binary file when the name ends
/// in `.gnet`) and the regions as VTK ImageData (NET.regions.vti by
/// default). Results are model estimates of the imaged rock.
///
/// Examples:
///   ganglion extract rock.npy --voxel-size-m 3e-6 -o rock-net/
///   ganglion extract scan.raw -o scan.gnet --flow-axis x
///   ganglion extract stack.tif --voxel-size-m 2.5e-6 --pore-label 255 -o net/
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Segmented image: TIFF stack, `.npy` array, or raw samples with a sidecar.
    pub image: PathBuf,
    /// Output network: a folder (CSV) or a `.gnet` file (binary).
    #[arg(short, long, value_name = "NET")]
    pub output: PathBuf,
    #[command(flatten)]
    pub labels: LabelArgs,
    /// Axis whose first and last slices hold the inlet and outlet pores.
    #[arg(long, default_value = "z", value_name = "x|y|z")]
    pub flow_axis: String,
    /// Where to write the regions (`.vti`); default NET.regions.vti.
    #[arg(long, value_name = "FILE")]
    pub regions: Option<PathBuf>,
    /// Do not write the regions file.
    #[arg(long, conflicts_with = "regions")]
    pub no_regions: bool,
    /// Name of the network (default: the image's file stem).
    #[arg(long)]
    pub name: Option<String>,
    /// Skip the single-phase permeability solve of the summary.
    #[arg(long)]
    pub no_perm: bool,
    /// Print the summary as one JSON object.
    #[arg(long)]
    pub json: bool,
}

/// The image flags shared by the image commands, named like the sidecar
/// keys.
#[derive(clap::Args, Debug)]
pub struct LabelArgs {
    /// Voxel edge in metres (sidecar key voxel_size_m); required for TIFF and .npy.
    #[arg(long, value_name = "M")]
    pub voxel_size_m: Option<f64>,
    /// Value of solid voxels (solid_label; default 0).
    #[arg(long, value_name = "N")]
    pub solid_label: Option<u16>,
    /// Value of pore voxels (pore_label; default 1).
    #[arg(long, value_name = "N")]
    pub pore_label: Option<u16>,
    /// Value of water-filled pore voxels (water_label).
    #[arg(long, value_name = "N")]
    pub water_label: Option<u16>,
    /// Value of voxels holding the non-aqueous phase (oil_label).
    #[arg(long, value_name = "N")]
    pub oil_label: Option<u16>,
}

impl LabelArgs {
    /// The options of the image reader.
    pub fn options(&self) -> Result<ImageOptions> {
        if let Some(v) = self.voxel_size_m
            && !(v.is_finite() && v > 0.0)
        {
            anyhow::bail!("--voxel-size-m {v}: must be a finite length > 0 in metres");
        }
        Ok(ImageOptions {
            voxel_size_m: self.voxel_size_m,
            solid_label: self.solid_label,
            pore_label: self.pore_label,
            water_label: self.water_label,
            oil_label: self.oil_label,
        })
    }
}

/// `path` with `suffix` appended to its last component.
pub fn with_suffix(path: &Path, suffix: &str) -> PathBuf {
    let trimmed = path
        .to_string_lossy()
        .trim_end_matches(['/', '\\'])
        .to_string();
    PathBuf::from(format!("{trimmed}{suffix}"))
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let axis = Axis::parse(&args.flow_axis)
        .with_context(|| format!("--flow-axis `{}`: expected x, y or z", args.flow_axis))?;
    let opts = args.labels.options()?;
    let clock = Instant::now();
    let img = read_image(&args.image, &opts)?;
    let path = args.image.as_path();
    let vol = &img.volume;
    let dims = vol.dims();
    progress.note(&format!(
        "read {} × {} × {} voxels ({:?}) in {:.2} s",
        dims[0],
        dims[1],
        dims[2],
        img.format,
        clock.elapsed().as_secs_f64()
    ));
    let pore = img.labels.pore_space(vol, path)?;
    check_phases(&pore, path)?;
    let t = Instant::now();
    let d2 = squared_distance(&pore, dims);
    progress.note(&format!(
        "distance transform {:.2} s",
        t.elapsed().as_secs_f64()
    ));
    let t = Instant::now();
    let regions = watershed(&pore, &d2, dims);
    progress.note(&format!("watershed {:.2} s", t.elapsed().as_secs_f64()));
    let t = Instant::now();
    let name = args.name.clone().unwrap_or_else(|| {
        path.file_stem()
            .map_or("extracted".into(), |s| s.to_string_lossy().into_owned())
    });
    let ex_opts = ExtractOptions {
        flow_axis: axis,
        name,
        description: Some(format!(
            "extracted from {} ({} × {} × {} voxels of {:e} m)",
            path.file_name().map_or(path.display().to_string(), |f| f
                .to_string_lossy()
                .into_owned()),
            dims[0],
            dims[1],
            dims[2],
            vol.voxel_size_m()
        )),
    };
    let (network, summary) = assemble(
        &pore,
        &d2,
        &regions,
        dims,
        vol.voxel_size_m(),
        &ex_opts,
        path,
    )?;
    drop(d2);
    drop(pore);
    progress.note(&format!(
        "network assembly {:.2} s",
        t.elapsed().as_secs_f64()
    ));
    super::generate::write_network(&network, &args.output)?;
    if !args.no_regions {
        let out = args
            .regions
            .clone()
            .unwrap_or_else(|| with_suffix(&args.output, ".regions.vti"));
        let bytes = network_report::vti::regions_vti(dims, vol.voxel_size_m(), &regions.labels)?;
        io::atomic::write_atomic(&out, &bytes)
            .with_context(|| format!("cannot write {}", out.display()))?;
        progress.note(&format!("wrote {}", out.display()));
    }
    let perm = if args.no_perm {
        None
    } else {
        match permeability(&network, axis, &PermOptions::default()) {
            Ok(r) => Some(r),
            Err(e) => {
                progress.warn(&format!("no permeability: {e}"));
                None
            }
        }
    };
    if args.json {
        let obj = serde_json::json!({
            "extraction": summary,
            "permeability_m2": perm.as_ref().map(|r| r.permeability_m2),
            "permeability_md": perm.as_ref().map(|r| r.permeability_md),
            "formation_factor": perm.as_ref().map(|r| r.formation_factor),
        });
        println!("{}", serde_json::to_string_pretty(&obj)?);
        return Ok(());
    }
    println!(
        "image              {} × {} × {} voxels of {:e} m",
        dims[0], dims[1], dims[2], summary.voxel_size_m
    );
    println!("porosity           {:.4} (image)", summary.porosity);
    println!(
        "pores              {} ({} inlet, {} outlet, {} without throats)",
        summary.n_pores, summary.n_inlet, summary.n_outlet, summary.n_isolated
    );
    println!("throats            {}", summary.n_throats);
    if let Some(r) = perm {
        println!(
            "permeability       {:.4e} m2  ({:.4} mD) along {}, network estimate",
            r.permeability_m2,
            r.permeability_md,
            axis.as_str()
        );
        println!("formation factor   {:.4}", r.formation_factor);
    }
    println!("network            {}", args.output.display());
    Ok(())
}
