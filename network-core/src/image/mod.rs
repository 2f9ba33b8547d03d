//! Segmented 3-D images: reading them, and turning their pore space into a
//! pore network.
//!
//! The stages, one file each:
//! - [`volume`]: [`Volume`], the 3-D array of labels with its voxel size, and
//!   [`Labels`], the meaning of each label value (solid, pore, water,
//!   non-aqueous);
//! - [`read_raw`], [`read_tiff`], [`read_npy`]: decoders of raw binary
//!   volumes (with a TOML sidecar), multi-page TIFF stacks and NumPy `.npy`
//!   arrays, reading from any byte source; [`encode`] writes the same
//!   formats back (for synthetic images and round trips). Opening files is
//!   the job of [`crate::io::image`];
//! - [`distance`]: the exact Euclidean distance transform of the pore space;
//! - [`label`]: connected components with 6- or 26-connectivity;
//! - [`watershed`]: markers on the distance map and the marker-based
//!   watershed that splits the pore space into regions;
//! - [`extract`]: regions → pores, shared interfaces → throats, faces →
//!   inlet and outlet pores: a [`crate::Network`];
//! - [`ganglia`]: the imaged non-aqueous phase: saturations, ganglia, size
//!   distribution;
//! - [`synth`]: seeded synthetic rock images (overlapping polydisperse
//!   grains).
//!
//! Voxels are stored x fastest, then y, then z: the voxel `(x, y, z)` of a
//! volume of dimensions `[nx, ny, nz]` is at index `x + nx (y + ny z)`.
//! A TIFF page is one z slice; a C-order `.npy` array of shape
//! `(nz, ny, nx)` has the same layout.
//!
//! No function here panics on bad input: every decoder returns an
//! [`ImageError`] naming the source and the offending value.

pub mod distance;
pub mod encode;
pub mod extract;
pub mod ganglia;
pub mod label;
pub mod read_npy;
pub mod read_raw;
pub mod read_tiff;
pub mod synth;
pub mod volume;
pub mod watershed;

use std::path::PathBuf;

pub use volume::{Labels, Phase, Volume};

/// A problem with an image or its description. Every variant names the
/// source (a file path, or a name given by the caller).
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ImageError {
    /// The source could not be read.
    #[error("{}: cannot read: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The operating-system error.
        source: std::io::Error,
    },
    /// The source ended before the data its header announces.
    #[error("{}: truncated: expected {expected} bytes of {what}, found {found}", path.display())]
    Truncated {
        /// The file.
        path: PathBuf,
        /// What was being read.
        what: String,
        /// Bytes expected.
        expected: u64,
        /// Bytes present.
        found: u64,
    },
    /// A header or sidecar field has a value the reader refuses.
    #[error("{}: {field} = {value}: {expected}", path.display())]
    BadField {
        /// The file.
        path: PathBuf,
        /// The field or key (with a line number where the format has lines).
        field: String,
        /// The value found.
        value: String,
        /// What was expected instead.
        expected: String,
    },
    /// A voxel holds a value that the label table does not declare.
    #[error(
        "{}: voxel (x={}, y={}, z={}) holds label {value}, which is not declared (declared: {declared})",
        path.display(), voxel[0], voxel[1], voxel[2]
    )]
    UnknownLabel {
        /// The file.
        path: PathBuf,
        /// The undeclared value.
        value: i64,
        /// Its voxel coordinates (the first such voxel in storage order).
        voxel: [usize; 3],
        /// The declared labels, as text.
        declared: String,
    },
}

impl ImageError {
    /// Shorthand for [`ImageError::BadField`].
    pub fn bad_field(
        path: impl Into<PathBuf>,
        field: impl Into<String>,
        value: impl ToString,
        expected: impl Into<String>,
    ) -> ImageError {
        ImageError::BadField {
            path: path.into(),
            field: field.into(),
            value: value.to_string(),
            expected: expected.into(),
        }
    }
}
