//! The file side of a study: reading and validating a study file, and
//! getting its network — loaded from a CSV folder or `.gnet` file, or
//! generated from a parameter file — so that the CLI, a sweep and a library
//! user all make the same choice.

use std::path::{Path, PathBuf};

use crate::Network;
use crate::generate::{GenerateError, LatticeSpec, generate};
use crate::params::Study;
use crate::progress::Silent;
use crate::study::StudyErrors;

use super::{ReadError, network_hash, read_network};

/// Why a study or its network could not be had.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum StudyInputError {
    /// The study file could not be read.
    #[error("cannot read study {}", path.display())]
    Read {
        /// The study file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
    /// The study file was read but refused; every problem with key and
    /// line.
    #[error("the study was refused:\n  {}", refused_lines(path, errors))]
    Refused {
        /// The study file.
        path: PathBuf,
        /// The problems found.
        errors: StudyErrors,
    },
    /// The network files could not be loaded.
    #[error("cannot load network {}{}", path.display(), origin)]
    Network {
        /// The network path, as resolved against the study file.
        path: PathBuf,
        /// Where the path came from: the study file and line, and whether
        /// it was resolved relative to the study file's folder.
        origin: String,
        /// The underlying error.
        source: ReadError,
    },
    /// A generator parameter file could not be read or parsed.
    #[error("{}{}: {message}", path.display(), line.map_or(String::new(), |l| format!(":{l}")))]
    Spec {
        /// The parameter file.
        path: PathBuf,
        /// 1-based line of the problem, where known.
        line: Option<usize>,
        /// What is wrong.
        message: String,
    },
    /// The generator refused its parameters.
    #[error("cannot generate the network of {}{}", path.display(), origin)]
    Generate {
        /// The parameter file.
        path: PathBuf,
        /// Where the path came from (see [`StudyInputError::Network`]).
        origin: String,
        /// The underlying error.
        source: GenerateError,
    },
}

fn refused_lines(path: &Path, errors: &StudyErrors) -> String {
    let lines: Vec<String> = errors
        .0
        .iter()
        .map(|x| format!("{}: {x}", path.display()))
        .collect();
    lines.join("\n  ")
}

/// Reads and validates a study file.
pub fn read_study(path: &Path) -> Result<Study, StudyInputError> {
    let text = std::fs::read_to_string(path).map_err(|source| StudyInputError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    Study::parse(&text).map_err(|errors| StudyInputError::Refused {
        path: path.to_path_buf(),
        errors,
    })
}

/// The network path of a study, relative to the study file.
pub fn network_path(study_path: &Path, study: &Study) -> PathBuf {
    let p = Path::new(&study.network);
    if p.is_absolute() {
        p.to_path_buf()
    } else {
        study_path.parent().unwrap_or(Path::new(".")).join(p)
    }
}

/// Where a study's network path came from, for error messages: the study
/// file, the line of its `network` key, and for a relative path that it is
/// relative to the study file's folder.
pub fn network_origin(study_path: &Path, study: &Study) -> String {
    let line = std::fs::read_to_string(study_path).ok().and_then(|t| {
        t.lines()
            .position(|l| {
                l.split_once('=')
                    .is_some_and(|(k, _)| k.trim().trim_matches('"') == "network")
            })
            .map(|i| i + 1)
    });
    let at = match line {
        Some(l) => format!("{}:{l}", study_path.display()),
        None => study_path.display().to_string(),
    };
    if Path::new(&study.network).is_absolute() {
        format!(" (network = \"{}\" at {at})", study.network)
    } else {
        format!(
            " (network = \"{}\" at {at}; a relative path is taken relative to the folder of \
             the study file, {})",
            study.network,
            study_path
                .parent()
                .filter(|p| !p.as_os_str().is_empty())
                .unwrap_or(Path::new("."))
                .display()
        )
    }
}

/// Reads a generator parameter file (TOML; unknown keys refused, errors
/// with their line).
pub fn read_lattice_spec(path: &Path) -> Result<LatticeSpec, StudyInputError> {
    let text = std::fs::read_to_string(path).map_err(|e| StudyInputError::Spec {
        path: path.to_path_buf(),
        line: None,
        message: format!("cannot read the file: {e}"),
    })?;
    parse_lattice_spec(&text, path)
}

/// Parses and validates generator parameters given as TOML text; `path`
/// names the text in errors (a file, or a label such as `<generator>` for
/// text that has none).
pub fn parse_lattice_spec(text: &str, path: &Path) -> Result<LatticeSpec, StudyInputError> {
    let spec_err = |line, message: String| StudyInputError::Spec {
        path: path.to_path_buf(),
        line,
        message,
    };
    let spec: LatticeSpec = toml::from_str(text).map_err(|e| {
        let line = e.span().map(|s| crate::text::line_at(text, s.start));
        let mut message = crate::text::plain_message(e.message(), LATTICE_FORMS);
        if let Some(key) = line.and_then(|l| crate::text::key_on_line(text, l)) {
            message = format!("key `{key}`: {message}");
        }
        if message.contains("spacing_um") {
            message.push_str(
                "; the file takes spacing_m, in metres (85 µm is spacing_m = 85e-6), as every \
                 length of the file",
            );
        }
        spec_err(line, message)
    })?;
    // Name the line of a parameter the generator refuses.
    spec.validate().map_err(|e| {
        let name = match &e {
            GenerateError::InvalidParameter { name, .. } => name.as_str(),
            GenerateError::CoordinationOutOfRange { .. } => "target_coordination",
            GenerateError::SpacingTooSmall { .. } => "spacing_m",
            _ => "",
        };
        let last = name.rsplit('.').next().unwrap_or(name);
        let line = (!last.is_empty())
            .then(|| {
                text.lines().position(|l| {
                    l.split_once('=')
                        .is_some_and(|(k, _)| k.trim().trim_matches('"') == last)
                })
            })
            .flatten()
            .map(|i| i + 1);
        spec_err(line, e.to_string())
    })?;
    Ok(spec)
}

/// The forms of the generator file's tables, for parser messages.
const LATTICE_FORMS: &[(&str, &str)] = &[
    (
        "WeibullRange",
        "a table {min_m, max_m, shape, scale} (e.g. pore_radius = { min_m = 5e-6, max_m = 4e-5, \
         shape = 1.8, scale = 0.3 })",
    ),
    (
        "ShapeMix",
        "a table {triangle, square, circle, triangle_g_min, triangle_g_max}",
    ),
    (
        "RegularSpec",
        "a table {pore_radius_m, throat_radius_m, pore_shape_factor, throat_shape_factor}",
    ),
    ("LatticeSpec", "a generator file (key = value lines)"),
    ("Axis", "one of \"x\", \"y\", \"z\""),
];

/// A study's network with its content hash and the warnings met while
/// loading it.
#[derive(Clone, Debug)]
pub struct StudyNetwork {
    /// The network.
    pub network: Network,
    /// Its content hash ([`network_hash`]).
    pub hash: String,
    /// Suspicious but loadable features of the network files.
    pub warnings: Vec<String>,
}

/// The network of a study: loaded from a CSV folder or `.gnet` file, or
/// generated from a parameter file (`.toml`) with its seed plus
/// `realisation`.
pub fn study_network(
    study_path: &Path,
    study: &Study,
    realisation: usize,
) -> Result<StudyNetwork, StudyInputError> {
    let path = network_path(study_path, study);
    let (network, warnings) = if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
    {
        let mut spec = match read_lattice_spec(&path) {
            Err(StudyInputError::Spec { message, line, .. })
                if message.starts_with("cannot read the file") =>
            {
                return Err(StudyInputError::Spec {
                    path: path.clone(),
                    line,
                    message: format!("{message}{}", network_origin(study_path, study)),
                });
            }
            r => r?,
        };
        spec.seed += realisation as u64;
        let net = generate(&spec, &Silent).map_err(|source| StudyInputError::Generate {
            path: path.clone(),
            origin: network_origin(study_path, study),
            source,
        })?;
        (net, Vec::new())
    } else {
        let loaded = read_network(&path).map_err(|source| StudyInputError::Network {
            path: path.clone(),
            origin: network_origin(study_path, study),
            source,
        })?;
        let warnings = loaded.warnings.iter().map(ToString::to_string).collect();
        (loaded.network, warnings)
    };
    let hash = network_hash(&network);
    Ok(StudyNetwork {
        network,
        hash,
        warnings,
    })
}
