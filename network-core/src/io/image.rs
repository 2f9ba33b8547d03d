//! Image files: opening segmented volumes and writing synthetic ones.
//!
//! [`read_image`] recognises the format by its first bytes, not its
//! extension: `II*\0` or `MM\0*` is a TIFF stack, `\x93NUMPY` a NumPy array;
//! anything else is a raw volume, which needs its sidecar (the image path
//! with `.toml` appended; see [`crate::image::read_raw`]). The values a
//! caller gives in [`ImageOptions`] (the command-line flags, named like
//! the sidecar keys) take precedence over the sidecar's.

use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};

use crate::image::read_raw::{ByteOrder, RawSpec, parse_sidecar, read_raw};
use crate::image::{ImageError, Labels, Volume, encode, read_npy, read_tiff};

/// What the caller says about an image, each field overriding the sidecar.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ImageOptions {
    /// Voxel edge, m (`voxel_size_m`); required for TIFF and `.npy`.
    pub voxel_size_m: Option<f64>,
    /// `solid_label`.
    pub solid_label: Option<u16>,
    /// `pore_label`.
    pub pore_label: Option<u16>,
    /// `water_label`.
    pub water_label: Option<u16>,
    /// `oil_label`.
    pub oil_label: Option<u16>,
}

impl ImageOptions {
    fn labels(&self, base: Labels) -> Labels {
        Labels {
            solid: self.solid_label.or(base.solid),
            pore: self.pore_label.or(base.pore),
            water: self.water_label.or(base.water),
            oil: self.oil_label.or(base.oil),
        }
    }
}

/// The format of an image file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ImageFormat {
    /// Raw samples with a TOML sidecar.
    Raw,
    /// Multi-page TIFF.
    Tiff,
    /// NumPy `.npy`.
    Npy,
}

/// An image read from disk: the volume, what its labels mean, its format.
#[derive(Clone, Debug)]
pub struct LoadedImage {
    /// The voxels.
    pub volume: Volume,
    /// The label table (sidecar, then caller overrides).
    pub labels: Labels,
    /// The file format found.
    pub format: ImageFormat,
}

/// The sidecar path of a raw image: the image path with `.toml` appended.
pub fn sidecar_path(image: &Path) -> PathBuf {
    let mut s = image.as_os_str().to_owned();
    s.push(".toml");
    PathBuf::from(s)
}

fn io_err(path: &Path) -> impl Fn(std::io::Error) -> ImageError + '_ {
    move |e| ImageError::Io {
        path: path.to_path_buf(),
        source: e,
    }
}

/// Reads an image file (see the [module docs](self)).
pub fn read_image(path: &Path, opts: &ImageOptions) -> Result<LoadedImage, ImageError> {
    let mut file = File::open(path).map_err(io_err(path))?;
    let mut magic = Vec::with_capacity(6);
    (&mut file)
        .take(6)
        .read_to_end(&mut magic)
        .map_err(io_err(path))?;
    let format = if magic.starts_with(b"II*\0") || magic.starts_with(b"MM\0*") {
        ImageFormat::Tiff
    } else if magic.starts_with(b"\x93NUMPY") {
        ImageFormat::Npy
    } else {
        ImageFormat::Raw
    };
    let file = File::open(path).map_err(io_err(path))?;
    let reader = BufReader::with_capacity(1 << 20, file);
    let (volume, base) = match format {
        ImageFormat::Raw => {
            let side = sidecar_path(path);
            let text = std::fs::read_to_string(&side).map_err(|e| {
                ImageError::bad_field(
                    path,
                    "sidecar",
                    side.display(),
                    format!(
                        "a readable TOML sidecar describing this raw image ({e}); a file that \
                         is not TIFF or .npy is read as raw samples"
                    ),
                )
            })?;
            let mut spec = parse_sidecar(&text, &side)?;
            if let Some(v) = opts.voxel_size_m {
                spec.voxel_size_m = v;
            }
            let labels = spec.labels;
            (read_raw(reader, &spec, path)?, labels)
        }
        ImageFormat::Tiff | ImageFormat::Npy => {
            let Some(v) = opts.voxel_size_m else {
                return Err(ImageError::bad_field(
                    path,
                    "voxel_size_m",
                    "not given",
                    "a voxel size in metres (--voxel-size-m); TIFF and .npy files do not carry one",
                ));
            };
            crate::image::volume::check_voxel_size(v, path)?;
            let vol = if format == ImageFormat::Tiff {
                read_tiff::read_tiff(reader, v, path)?
            } else {
                read_npy::read_npy(reader, v, path)?
            };
            (vol, Labels::default())
        }
    };
    let labels = opts.labels(base);
    labels.validate(path)?;
    Ok(LoadedImage {
        volume,
        labels,
        format,
    })
}

/// Writes `volume` as a `.npy` file (atomically).
pub fn write_npy(volume: &Volume, path: &Path) -> Result<(), ImageError> {
    super::atomic::write_atomic(path, &encode::npy_bytes(volume)).map_err(io_err(path))
}

/// Writes `volume` as raw samples at `path` and its sidecar (with `labels`)
/// beside it, each atomically.
pub fn write_raw(volume: &Volume, labels: Labels, path: &Path) -> Result<(), ImageError> {
    let spec = RawSpec {
        dims: volume.dims(),
        voxel_size_m: volume.voxel_size_m(),
        sample_type: encode::narrowest(volume),
        byte_order: ByteOrder::Little,
        header_bytes: 0,
        labels,
    };
    super::atomic::write_atomic(path, &encode::raw_bytes(volume, &spec)).map_err(io_err(path))?;
    let side = sidecar_path(path);
    super::atomic::write_atomic(&side, spec.to_toml().as_bytes()).map_err(io_err(&side))
}

/// Writes `volume` as an uncompressed TIFF stack (little-endian).
pub fn write_tiff(volume: &Volume, path: &Path) -> Result<(), ImageError> {
    let bytes = encode::tiff_bytes(volume, encode::narrowest(volume), ByteOrder::Little);
    super::atomic::write_atomic(path, &bytes).map_err(io_err(path))
}
