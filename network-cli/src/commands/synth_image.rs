//! `ganglion synth-image`: a seeded synthetic rock image.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use network_core::image::Labels;
use network_core::image::synth::{GrainPackSpec, grain_pack};
use network_core::io::image::{write_npy, write_raw, write_tiff};

use crate::progress::Bars;

/// Make a synthetic rock image: overlapping spherical grains of random
/// radii, added one by one at random positions until the pore fraction
/// reaches the target porosity. Seeded: the same flags give the same
/// image. Labels: solid 0, pore 1.
///
/// The output format follows the extension: `.npy` (NumPy), `.tif` or
/// `.tiff` (TIFF stack), anything else raw samples with a sidecar
/// OUT.toml.
///
/// Examples:
///   ganglion synth-image -o rock.npy --size 120 --porosity 0.22 --seed 3
///   ganglion synth-image -o rock.raw --size 200x200x300 --grain-radius 6,14
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Output image.
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Size in voxels: N (a cube) or NXxNYxNZ.
    #[arg(long, default_value = "120")]
    pub size: String,
    /// Target porosity, in (0, 1).
    #[arg(long, default_value_t = 0.22)]
    pub porosity: f64,
    /// Grain radii MIN,MAX in voxels, drawn uniformly.
    #[arg(long, default_value = "5,11", value_name = "MIN,MAX")]
    pub grain_radius: String,
    /// Voxel edge in metres (written to the sidecar; for .npy and TIFF,
    /// pass it again to `extract`).
    #[arg(long, default_value_t = 3e-6, value_name = "M")]
    pub voxel_size_m: f64,
    /// Seed of the random draws.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
}

fn parse_size(text: &str) -> Result<[usize; 3]> {
    let parts: Vec<&str> = text.split(['x', 'X']).collect();
    let nums: Vec<usize> = parts
        .iter()
        .map(|p| p.trim().parse::<usize>())
        .collect::<Result<_, _>>()
        .with_context(|| format!("--size `{text}`: expected N or NXxNYxNZ"))?;
    match nums.as_slice() {
        [n] => Ok([*n; 3]),
        [a, b, c] => Ok([*a, *b, *c]),
        _ => bail!("--size `{text}`: expected N or NXxNYxNZ"),
    }
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    let dims = parse_size(&args.size)?;
    let radii: Vec<f64> = args
        .grain_radius
        .split(',')
        .map(|p| p.trim().parse::<f64>())
        .collect::<Result<_, _>>()
        .with_context(|| format!("--grain-radius `{}`: expected MIN,MAX", args.grain_radius))?;
    let [rmin, rmax] = radii[..] else {
        bail!("--grain-radius `{}`: expected MIN,MAX", args.grain_radius);
    };
    let spec = GrainPackSpec {
        dims,
        voxel_size_m: args.voxel_size_m,
        porosity: args.porosity,
        radius_min: rmin,
        radius_max: rmax,
        seed: args.seed,
    };
    let (vol, n_grains) = grain_pack(&spec, Path::new("the command line"))?;
    let ext = args
        .output
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase());
    match ext.as_deref() {
        Some("npy") => write_npy(&vol, &args.output)?,
        Some("tif") | Some("tiff") => write_tiff(&vol, &args.output)?,
        _ => write_raw(&vol, Labels::default(), &args.output)?,
    }
    let n_pore = vol.values().iter().filter(|&&v| v == 1).count();
    println!(
        "image      {} × {} × {} voxels of {:e} m",
        dims[0], dims[1], dims[2], args.voxel_size_m
    );
    println!("grains     {n_grains}");
    println!("porosity   {:.4}", n_pore as f64 / vol.len() as f64);
    println!("written    {}", args.output.display());
    progress.note("labels: solid 0, pore 1");
    Ok(())
}
