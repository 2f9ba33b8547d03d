//! A sweep's folder on disk: the case list (`sweep-cases.json`) and one
//! result file per finished case (`cases/case-NNNNN.json`), each written
//! atomically. The files hold whatever serialisable types the caller gives
//! ([`crate::sweep`] decides what counts as a finished case), so this
//! module knows files, not sweeps.

use std::path::{Path, PathBuf};

use super::WriteError;
use super::atomic::write_atomic;
use serde::Serialize;
use serde::de::DeserializeOwned;

/// Why a sweep folder could not be read.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// A file could not be read.
    #[error("cannot read {}", path.display())]
    Read {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
    /// The case list is not what a sweep writes.
    #[error("{} is not a sweep case list", path.display())]
    NotACaseList {
        /// The file.
        path: PathBuf,
        /// The parse error.
        source: serde_json::Error,
    },
    /// A file could not be written.
    #[error(transparent)]
    Write(#[from] WriteError),
    /// A result could not be serialised.
    #[error("cannot serialise {what}")]
    Serialise {
        /// What was being serialised.
        what: &'static str,
        /// The underlying error.
        source: serde_json::Error,
    },
}

/// The case list of a sweep folder.
pub fn case_list_path(out: &Path) -> PathBuf {
    out.join("sweep-cases.json")
}

/// The result file of case `k`.
pub fn case_path(out: &Path, k: usize) -> PathBuf {
    out.join("cases").join(format!("case-{k:05}.json"))
}

/// Writes the case list (creating the folder and `cases/`). A file that
/// already holds the same text is left alone, so that many jobs starting
/// at once on one folder do not rewrite it; otherwise it is replaced
/// atomically.
pub fn write_case_list<T: Serialize>(out: &Path, cases: &[T]) -> Result<(), StoreError> {
    let dir = out.join("cases");
    std::fs::create_dir_all(&dir).map_err(|source| {
        StoreError::Write(WriteError::Io {
            path: dir.clone(),
            source,
        })
    })?;
    let text = serde_json::to_string_pretty(cases).map_err(|source| StoreError::Serialise {
        what: "the case list",
        source,
    })? + "\n";
    if std::fs::read(case_list_path(out)).is_ok_and(|old| old == text.as_bytes()) {
        return Ok(());
    }
    write_atomic(&case_list_path(out), text.as_bytes()).map_err(|source| {
        StoreError::Write(WriteError::Io {
            path: case_list_path(out),
            source,
        })
    })
}

/// Reads the case list of a sweep folder.
pub fn read_case_list<T: DeserializeOwned>(out: &Path) -> Result<Vec<T>, StoreError> {
    let path = case_list_path(out);
    let text = std::fs::read_to_string(&path).map_err(|source| StoreError::Read {
        path: path.clone(),
        source,
    })?;
    serde_json::from_str(&text).map_err(|source| StoreError::NotACaseList { path, source })
}

/// The result file of case `k`, if it exists and parses as a `T`.
pub fn read_case<T: DeserializeOwned>(out: &Path, k: usize) -> Option<T> {
    let text = std::fs::read_to_string(case_path(out, k)).ok()?;
    serde_json::from_str(&text).ok()
}

/// Writes the result of one case atomically.
pub fn write_case<T: Serialize>(out: &Path, k: usize, result: &T) -> Result<(), StoreError> {
    let text = serde_json::to_string(result).map_err(|source| StoreError::Serialise {
        what: "a case result",
        source,
    })? + "\n";
    let path = case_path(out, k);
    write_atomic(&path, text.as_bytes())
        .map_err(|source| StoreError::Write(WriteError::Io { path, source }))
}
