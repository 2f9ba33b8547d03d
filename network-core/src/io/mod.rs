//! Network files: the CSV folder and the native binary file.
//!
//! This is the only module of `network-core` that touches the file system.
//! [`read_network`] reads either format (a directory is a CSV folder, a file
//! is a binary file, recognised by its magic bytes, not its extension);
//! [`write_csv`] and [`write_binary`] write them, never leaving a half-written
//! output. Both formats carry every f64 with its exact bits, so
//! CSV → binary → CSV and binary → CSV → binary are lossless.
//!
//! # The CSV folder
//!
//! A network is a folder holding three files. All values are SI units.
//!
//! `pores.csv`, one row per pore:
//!
//! | column           | required | meaning                                          |
//! |------------------|----------|--------------------------------------------------|
//! | `id`             | yes      | pore id, 0-based                                 |
//! | `x_m,y_m,z_m`    | yes      | centre coordinates, m                            |
//! | `radius_m`       | yes      | inscribed radius, m (> 0)                        |
//! | `volume_m3`      | yes      | resolved pore volume, m³ (≥ 0)                   |
//! | `shape_factor`   | yes      | G = A/P², in (0, 1/(4π)]                          |
//! | `clay_volume_m3` | no       | clay (micro-porosity) volume, m³ (default 0)      |
//! | `boundary`       | no       | `inlet`, `outlet` or empty (interior; default)   |
//!
//! `throats.csv`, one row per throat:
//!
//! | column           | required | meaning                                          |
//! |------------------|----------|--------------------------------------------------|
//! | `id`             | yes      | throat id, 0-based                               |
//! | `pore_a,pore_b`  | yes      | ids of the two pores joined (distinct)           |
//! | `radius_m`       | yes      | inscribed radius, m (> 0)                        |
//! | `shape_factor`   | yes      | G = A/P², in (0, 1/(4π)]                          |
//! | `length_m`       | yes      | conduit length, centre of pore a to centre of pore b, m (> 0) |
//! | `volume_m3`      | yes      | throat volume, m³ (≥ 0)                          |
//! | `clay_volume_m3` | no       | clay volume, m³ (default 0)                      |
//! | `conduit_a_m`    | no       | part of `length_m` inside pore a, m              |
//! | `conduit_b_m`    | no       | part of `length_m` inside pore b, m              |
//!
//! When `conduit_a_m` (or `conduit_b_m`) is absent or a field is empty, it
//! defaults to `min(R_a, 0.45 L)`: the inscribed radius of pore a, capped at
//! 45 % of the conduit length `L = length_m` so the throat proper keeps at
//! least 10 % of it ([`csv::default_conduit`]).
//!
//! `network.toml`: `name` (string), `flow_axis` (`"x"`, `"y"` or `"z"`),
//! `length_m` (distance between the planes where the inlet and outlet
//! pressures are imposed, m), `area_m2` (cross-section normal to the flow
//! axis, m²), optional `bulk_volume_m3` (default `length_m × area_m2`),
//! optional `extent_m = [lx, ly, lz]` (m), optional `description`.
//!
//! Rules: a header line names the columns, in any order; unknown columns
//! and unknown keys are ignored with a warning; rows may come in any order
//! and are sorted by id; ids must be 0-based and contiguous (each of
//! `0..n` exactly once). Numbers are anything Rust's `f64` parser accepts
//! (`1e-5`, `0.25`, `-3`); `NaN` and `inf` parse but are rejected as not
//! finite. Blank lines are skipped, a UTF-8 byte-order mark and CRLF line
//! ends are accepted, and fields may be quoted.
//!
//! Every problem of the three files is reported at once, each with its file,
//! 1-based line and column (or key): see [`ReadError::Invalid`] and
//! [`crate::network::validate::Rule`].
//!
//! # The binary file
//!
//! A `.gnet` file holds magic bytes, a format version, a postcard-encoded
//! payload and a CRC-32 of the payload; see [`binary`] for the layout. It
//! loads an order of magnitude faster than the CSV folder.
//!
//! # Atomic output
//!
//! Binary files are written to a temporary file in the target directory and
//! renamed into place ([`atomic`]). A CSV folder that does not exist yet is
//! written into a temporary sibling folder which is renamed into place once
//! all three files are on disk; into an existing folder, each of the three
//! files is written to a temporary file beside it and the three are renamed
//! over the old ones only after all are complete (other files in the folder
//! are left alone).
//!
//! # Example
//! ```
//! # use network_core::{Network, NetworkInfo, Pores, Throats, Boundary, Axis};
//! # let info = NetworkInfo { name: "pair".into(), flow_axis: Axis::X, length_m: 1e-4,
//! #     area_m2: 1e-8, bulk_volume_m3: 1e-12, extent_m: None, description: None };
//! # let mut pores = Pores::with_capacity(2);
//! # for (i, b) in [Boundary::Inlet, Boundary::Outlet].into_iter().enumerate() {
//! #     pores.x.push(i as f64 * 1e-4); pores.y.push(0.0); pores.z.push(0.0);
//! #     pores.radius.push(2e-5); pores.shape_factor.push(0.04); pores.volume.push(1e-13);
//! #     pores.clay_volume.push(0.0); pores.boundary.push(b);
//! # }
//! # let mut throats = Throats::with_capacity(1);
//! # throats.pores.push([0, 1]); throats.radius.push(1e-5); throats.shape_factor.push(0.0625);
//! # throats.volume.push(1e-14); throats.clay_volume.push(0.0); throats.length.push(1e-4);
//! # throats.conduit_a.push(2e-5); throats.conduit_b.push(2e-5);
//! # let network = Network::new(info, pores, throats).unwrap();
//! use network_core::io;
//!
//! let dir = std::env::temp_dir().join(format!("ganglion-doc-io-{}", std::process::id()));
//! # let _ = std::fs::remove_dir_all(&dir);
//! std::fs::create_dir_all(&dir).unwrap();
//! io::write_csv(&network, &dir.join("pair")).unwrap();
//! io::write_binary(&network, &dir.join("pair.gnet")).unwrap();
//! let from_csv = io::read_network(&dir.join("pair")).unwrap();
//! let from_bin = io::read_network(&dir.join("pair.gnet")).unwrap();
//! assert_eq!(from_csv.network, from_bin.network);
//! assert_eq!(io::network_hash(&from_csv.network), io::network_hash(&network));
//! std::fs::remove_dir_all(&dir).unwrap();
//! ```

use std::fs::{self, File};
use std::io::Read;
use std::path::{Path, PathBuf};

use crate::Network;
use crate::connectivity::Components;
use crate::network::validate::{self, Target, Violation, Warning};

pub mod atomic;
pub mod binary;
pub mod csv;
pub mod image;
pub mod lab_curve;
pub mod memory;
pub mod result_set;
mod sample;
pub mod study;
pub mod sweep_store;
mod table;

/// A network read from files, with the warnings found while reading.
#[derive(Clone, Debug)]
pub struct Loaded {
    /// The validated network.
    pub network: Network,
    /// Suspicious but loadable features (unknown columns or keys, pores cut
    /// off from the faces, small volumes), summarised: never one warning per
    /// element for a whole network.
    pub warnings: Vec<Warning>,
}

/// Why a network could not be read.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum ReadError {
    /// A file or folder could not be opened or read.
    #[error("cannot read {}", path.display())]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The files were read but hold an invalid network: every violation
    /// found, in file and line order, each with file, line and column where
    /// known.
    #[error("{}", format_invalid(path, violations))]
    Invalid {
        /// The folder or binary file read.
        path: PathBuf,
        /// All violations found.
        violations: Vec<Violation>,
    },
}

impl ReadError {
    /// The violations, for an [`ReadError::Invalid`] network (empty otherwise).
    pub fn violations(&self) -> &[Violation] {
        match self {
            ReadError::Invalid { violations, .. } => violations,
            ReadError::Io { .. } => &[],
        }
    }
}

fn format_invalid(path: &Path, violations: &[Violation]) -> String {
    let mut s = format!(
        "{}: invalid network, {} problem(s):",
        path.display(),
        violations.len()
    );
    for v in violations {
        s.push_str("\n  ");
        s.push_str(&v.to_string());
    }
    s
}

/// Why a network could not be written.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    /// Creating, writing, syncing or renaming a file failed.
    #[error("cannot write {}", path.display())]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// A result could not be encoded.
    #[error("cannot encode {}: {message}", path.display())]
    Encode {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// The CSV output path exists and is not a folder.
    #[error("cannot write a CSV network to {}: it exists and is not a folder", path.display())]
    NotADirectory {
        /// The path.
        path: PathBuf,
    },
}

/// Reads a network: a directory is a CSV folder, a file a binary network
/// (recognised by its magic bytes).
pub fn read_network(path: &Path) -> Result<Loaded, ReadError> {
    let io_err = |source| ReadError::Io {
        path: path.to_path_buf(),
        source,
    };
    let meta = fs::metadata(path).map_err(io_err)?;
    if meta.is_dir() {
        return csv::read_folder(path);
    }
    let mut file = File::open(path).map_err(io_err)?;
    let mut bytes = Vec::with_capacity(binary::MAGIC.len());
    (&mut file)
        .take(binary::MAGIC.len() as u64)
        .read_to_end(&mut bytes)
        .map_err(io_err)?;
    if binary::has_magic(&bytes) {
        bytes.reserve_exact((meta.len() as usize).saturating_sub(bytes.len()));
        file.read_to_end(&mut bytes).map_err(io_err)?;
    }
    binary::decode(&bytes, path)
}

/// Writes `network` as a CSV folder `dir` (created when missing; its parent
/// must exist). See the [module docs](self#atomic-output) for how partial
/// output is avoided.
pub fn write_csv(network: &Network, dir: &Path) -> Result<(), WriteError> {
    csv::write_folder(network, dir)
}

/// Writes `network` as a binary file at `path` (atomically; the parent
/// folder must exist).
///
/// The binary format has no wettability column: a network whose files
/// carried `oil_wet` marks is refused rather than written without them.
pub fn write_binary(network: &Network, path: &Path) -> Result<(), WriteError> {
    if network.oil_wet_marks().is_some() {
        return Err(WriteError::Encode {
            path: path.to_path_buf(),
            message: "the network carries an oil_wet column, which the binary format does not \
                      hold; keep it as a CSV folder"
                .into(),
        });
    }
    binary::write_file(network, path)
}

/// A stable digest of the network's content, as 16 lower-case hex digits.
///
/// It is a 64-bit hash (see the digest in [`binary`]) of the canonical
/// binary payload of format version 1, so it covers every value, tag and
/// name bit for bit and does not depend on how the network was read. It
/// identifies content; it is not a cryptographic signature.
///
/// Wettability marks (the optional `oil_wet` column), which the binary
/// payload does not hold, are mixed in when present, so editing them
/// changes the hash; networks without marks keep the hash of the payload.
pub fn network_hash(network: &Network) -> String {
    let mut h = binary::payload_digest(network);
    if let Some(marks) = network.oil_wet_marks() {
        // FNV-1a over the marks, folded into the payload digest.
        h ^= 0xcbf2_9ce4_8422_2325;
        for m in marks {
            h ^= m as u64 + 1;
            h = h.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
    format!("{h:016x}")
}

/// How many elements of one kind are listed individually in warnings
/// before the rest is summarised.
const LISTED: usize = 3;

/// Warnings of a loaded network: pores cut off from a face and small
/// volumes, summarised. `locate` gives file and line of an element.
pub(crate) fn network_warnings(
    network: &Network,
    locate: &dyn Fn(Target) -> (Option<String>, Option<u64>),
) -> Vec<Warning> {
    let mut out = Vec::new();
    let comps = Components::of(network);
    if !comps.spans() {
        out.push(Warning {
            code: "not-spanning",
            target: Target::Network,
            file: None,
            line: None,
            detail: "no connected path of pores joins the inlet face to the outlet face; \
                     flow properties cannot be computed"
                .to_owned(),
        });
    }
    let cut_off = comps.non_spanning_pores();
    if cut_off > 0 {
        let (mut inlet_only, mut outlet_only, mut neither) = (0usize, 0usize, 0usize);
        for c in 0..comps.len() {
            match (comps.touches_inlet[c], comps.touches_outlet[c]) {
                (true, true) => {}
                (true, false) => inlet_only += comps.size[c] as usize,
                (false, true) => outlet_only += comps.size[c] as usize,
                (false, false) => neither += comps.size[c] as usize,
            }
        }
        let n_comps = (0..comps.len())
            .filter(|&c| !(comps.touches_inlet[c] && comps.touches_outlet[c]))
            .count();
        out.push(Warning {
            code: "disconnected-pores",
            target: Target::Network,
            file: None,
            line: None,
            detail: format!(
                "{cut_off} of {} pores lie in {n_comps} component(s) that do not join inlet \
                 and outlet ({inlet_only} touch only the inlet, {outlet_only} only the outlet, \
                 {neither} neither; {} isolated pores); they are kept but carry no flow",
                network.n_pores(),
                comps.isolated_pores(network)
            ),
        });
    }
    let (listed, count) = validate::volume_warnings(network, LISTED);
    let n_listed = listed.len();
    for mut w in listed {
        let (file, line) = locate(w.target);
        w.file = file;
        w.line = line;
        out.push(w);
    }
    if count > n_listed {
        out.push(Warning {
            code: "small-volume",
            target: Target::Network,
            file: None,
            line: None,
            detail: format!(
                "{} more element(s) have a volume below what their cross-section implies \
                 ({count} in all)",
                count - n_listed
            ),
        });
    }
    out
}

/// Sorts violations by file (in the order of `files`) then line, keeping
/// the order of equal keys; violations without a line come last in their
/// file.
pub(crate) fn sort_violations(violations: &mut [Violation], files: &[&str]) {
    violations.sort_by_key(|v| {
        let rank = v
            .file
            .as_deref()
            .and_then(|f| files.iter().position(|x| *x == f))
            .unwrap_or(files.len());
        (rank, v.line.unwrap_or(u64::MAX))
    });
}
