//! Result sets written as one unit: a folder of result files that a reader
//! sees either whole or not at all, never mixed with an earlier run's files.
//!
//! # Two mechanisms, each where it fits
//!
//! - **A staging folder swapped into place** ([`StagedSet`]) for a folder
//!   that one command writes from scratch (`ganglion run`). The files go
//!   into a hidden sibling of the target, `.<name>.staging-<pid>-<n>`; the
//!   manifest is written last; then the staging folder takes the target's
//!   place in one `rename(2)` (a fresh or empty target) or one atomic
//!   exchange (`renameat2(RENAME_EXCHANGE)` on Linux, replacing our own
//!   earlier set when the caller was told to overwrite), and the earlier
//!   set, now in the sibling, is removed. At every instant the target holds
//!   the previous complete set or the new complete set. Staging was chosen
//!   over writing in place with a manifest alone because a manifest can
//!   only *mark* a half-replaced folder as incomplete, while the swap never
//!   shows one.
//! - **A manifest written last** ([`unseal`] then [`seal`]) for a folder that
//!   keeps files across commands (a sweep folder keeps its case list and
//!   case files, for resume): the old manifest is removed before the merged
//!   outputs are rewritten, and the new one is written after them, so a
//!   folder whose manifest is missing or does not match is incomplete.
//!
//! # The manifest
//!
//! `ganglion-manifest.json` lists every file of the set (relative path,
//! size in bytes, CRC-32 of the content) and, for a sweep, the source files
//! the merged outputs were made from. CRC-32 detects a truncated, replaced
//! or foreign file; it is not a defence against deliberate tampering.
//! [`verify`] reads a folder and says whether it holds a complete set.
//!
//! # Cost
//!
//! Measured with `cargo bench -p ganglion-benches --bench run_report --
//! set_large` and `… -- run_set` (2-core shared machine, ext4): on the two
//! binary 3-D states of a 10⁶-pore run (192 MB), the manifest and the swap
//! (reading every file back for its CRC-32, removing the replaced set) took
//! 0.125 s against 0.112 s for writing the files, i.e. about 0.05 % of the
//! 230 s the run itself takes; on the whole set of an 8000-pore run
//! (figures, tables, report, states) staged and plain writes took 85.4 ms
//! and 84.9 ms (ratio 1.01).
//!
//! # What a target may hold
//!
//! [`StagedSet::begin`] accepts a missing or empty target; a folder holding
//! our own set (it has a manifest of ours) only with `overwrite`; a
//! non-empty folder that is not ours never. Staging folders left by a killed
//! process (its pid no longer running) are removed when the next set is
//! staged beside the same target.

use std::collections::BTreeSet;
use std::fs;
use std::io;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use serde::{Deserialize, Serialize};

use super::atomic::{parent_dir, process_alive, sync_dir, write_atomic};

/// File name of the manifest inside a result folder.
pub const MANIFEST_NAME: &str = "ganglion-manifest.json";

/// The `format` field of every manifest Ganglion writes.
pub const MANIFEST_FORMAT: &str = "ganglion result set";

/// One file of a result set.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct ManifestEntry {
    /// Path relative to the folder, with `/` separators.
    pub path: String,
    /// Size in bytes.
    pub bytes: u64,
    /// CRC-32 (IEEE) of the content, 8 lower-case hex digits.
    pub crc32: String,
}

/// The manifest of a result set: written last, it marks the set complete.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Manifest {
    /// Always [`MANIFEST_FORMAT`].
    pub format: String,
    /// Manifest layout version (1).
    pub version: u32,
    /// What wrote the set: `"run"` or `"sweep"`.
    pub kind: String,
    /// `true`: every file of the set was written before the manifest.
    pub complete: bool,
    /// The files of the set, sorted by path.
    pub files: Vec<ManifestEntry>,
    /// Files the set was made from and that stay in the folder (a sweep's
    /// case list and case files), sorted by path; empty for a run.
    #[serde(default)]
    pub sources: Vec<ManifestEntry>,
}

/// Why a result set could not be staged, sealed or read.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum SetError {
    /// The target holds files that are not a Ganglion result set.
    #[error(
        "{} is not empty and holds no Ganglion result set ({n_entries} entries, no {MANIFEST_NAME}); \
         refusing to write beside files that are not ours: choose a new folder or empty this one",
        path.display()
    )]
    NotOurs {
        /// The target folder.
        path: PathBuf,
        /// Number of entries found in it.
        n_entries: usize,
    },
    /// The target holds an earlier result set and overwriting was not asked.
    #[error(
        "{} already holds a result set ({} files); pass --overwrite to replace it",
        path.display(),
        n_files
    )]
    Exists {
        /// The target folder.
        path: PathBuf,
        /// Number of files in the earlier set.
        n_files: usize,
    },
    /// The target is a file, not a folder.
    #[error("{} is a file, not a folder", path.display())]
    NotAFolder {
        /// The path.
        path: PathBuf,
    },
    /// A file system operation failed.
    #[error("{what} {}", path.display())]
    Io {
        /// What was being done ("cannot write", …).
        what: &'static str,
        /// The path.
        path: PathBuf,
        /// The underlying error.
        source: io::Error,
    },
    /// The manifest is not one Ganglion writes.
    #[error("{} is not a Ganglion manifest: {reason}", path.display())]
    BadManifest {
        /// The manifest file.
        path: PathBuf,
        /// What is wrong.
        reason: String,
    },
}

fn io_err<'a>(what: &'static str, path: &'a Path) -> impl FnOnce(io::Error) -> SetError + 'a {
    move |source| SetError::Io {
        what,
        path: path.to_path_buf(),
        source,
    }
}

/// What a folder holds, as seen by a writer about to replace it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum FolderState {
    /// Nothing at the path.
    Absent,
    /// An empty folder.
    Empty,
    /// A folder with a Ganglion manifest (its set may or may not verify).
    Ours(Manifest),
    /// A non-empty folder without a Ganglion manifest.
    Foreign {
        /// Number of entries in it.
        n_entries: usize,
    },
}

/// Looks at `dir` without changing it.
pub fn folder_state(dir: &Path) -> Result<FolderState, SetError> {
    let meta = match fs::metadata(dir) {
        Ok(m) => m,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(FolderState::Absent),
        Err(e) => return Err(io_err("cannot read", dir)(e)),
    };
    if !meta.is_dir() {
        return Err(SetError::NotAFolder {
            path: dir.to_path_buf(),
        });
    }
    let n_entries = fs::read_dir(dir)
        .map_err(io_err("cannot read", dir))?
        .count();
    if n_entries == 0 {
        return Ok(FolderState::Empty);
    }
    match read_manifest(dir) {
        Ok(Some(m)) => Ok(FolderState::Ours(m)),
        Ok(None) | Err(SetError::BadManifest { .. }) => Ok(FolderState::Foreign { n_entries }),
        Err(e) => Err(e),
    }
}

/// Reads the manifest of `dir`: `None` when there is none.
pub fn read_manifest(dir: &Path) -> Result<Option<Manifest>, SetError> {
    let path = dir.join(MANIFEST_NAME);
    let text = match fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(io_err("cannot read", &path)(e)),
    };
    let m: Manifest = serde_json::from_str(&text).map_err(|e| SetError::BadManifest {
        path: path.clone(),
        reason: e.to_string(),
    })?;
    if m.format != MANIFEST_FORMAT {
        return Err(SetError::BadManifest {
            path,
            reason: format!("format {:?}", m.format),
        });
    }
    Ok(Some(m))
}

/// What [`verify`] found in a folder.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Verified {
    /// The manifest, if the folder has one.
    pub manifest: Option<Manifest>,
    /// Files listed by the manifest that are missing or differ (size or
    /// checksum), one line each.
    pub damaged: Vec<String>,
    /// Files in the folder that the manifest does not list.
    pub unlisted: Vec<String>,
}

impl Verified {
    /// `true` when the folder holds exactly the complete set its manifest
    /// lists.
    pub fn is_complete(&self) -> bool {
        self.manifest.as_ref().is_some_and(|m| m.complete)
            && self.damaged.is_empty()
            && self.unlisted.is_empty()
    }
}

/// Checks a result folder against its manifest: every listed file present
/// with its size and checksum, no file the manifest does not list (hidden
/// files included). A folder without a manifest is not complete.
pub fn verify(dir: &Path) -> Result<Verified, SetError> {
    let manifest = read_manifest(dir)?;
    let mut on_disk: BTreeSet<String> = list_files(dir)?.into_iter().collect();
    on_disk.remove(MANIFEST_NAME);
    let mut damaged = Vec::new();
    if let Some(m) = &manifest {
        for e in m.files.iter().chain(&m.sources) {
            on_disk.remove(&e.path);
            if !inside(&e.path) {
                damaged.push(format!("{}: not a path inside the folder", e.path));
                continue;
            }
            match entry_for(dir, &e.path) {
                Ok(now) if now == *e => {}
                Ok(now) if now.bytes != e.bytes => damaged.push(format!(
                    "{}: {} bytes, the manifest says {}",
                    e.path, now.bytes, e.bytes
                )),
                Ok(_) => damaged.push(format!("{}: content differs from the manifest", e.path)),
                Err(err) if err.kind() == io::ErrorKind::NotFound => {
                    damaged.push(format!("{}: missing", e.path))
                }
                Err(err) => damaged.push(format!("{}: {err}", e.path)),
            }
        }
    }
    Ok(Verified {
        manifest,
        damaged,
        unlisted: on_disk.into_iter().collect(),
    })
}

/// `true` for a relative path that stays inside its folder (no root, no
/// `..`): a manifest never makes us read or remove anything outside it.
fn inside(rel: &str) -> bool {
    !rel.is_empty()
        && Path::new(rel)
            .components()
            .all(|c| matches!(c, std::path::Component::Normal(_)))
}

/// Every regular file under `dir`, as relative paths with `/`, sorted.
pub fn list_files(dir: &Path) -> Result<Vec<String>, SetError> {
    let mut out = Vec::new();
    walk(dir, "", &mut out)?;
    out.sort();
    Ok(out)
}

fn walk(dir: &Path, prefix: &str, out: &mut Vec<String>) -> Result<(), SetError> {
    for e in fs::read_dir(dir).map_err(io_err("cannot read", dir))? {
        let e = e.map_err(io_err("cannot read", dir))?;
        let name = e.file_name().to_string_lossy().into_owned();
        let rel = if prefix.is_empty() {
            name
        } else {
            format!("{prefix}/{name}")
        };
        let ty = e.file_type().map_err(io_err("cannot read", &e.path()))?;
        if ty.is_dir() {
            walk(&e.path(), &rel, out)?;
        } else {
            out.push(rel);
        }
    }
    Ok(())
}

/// The manifest entry of one file as it is on disk now.
fn entry_for(dir: &Path, rel: &str) -> io::Result<ManifestEntry> {
    let bytes = fs::read(dir.join(rel))?;
    Ok(ManifestEntry {
        path: rel.to_owned(),
        bytes: bytes.len() as u64,
        crc32: format!("{:08x}", crc32fast::hash(&bytes)),
    })
}

fn entries(dir: &Path, rels: &[String]) -> Result<Vec<ManifestEntry>, SetError> {
    let mut v = Vec::with_capacity(rels.len());
    for r in rels {
        let path = dir.join(r);
        v.push(entry_for(dir, r).map_err(io_err("cannot read", &path))?);
    }
    v.sort_by(|a, b| a.path.cmp(&b.path));
    Ok(v)
}

fn write_manifest(dir: &Path, m: &Manifest) -> Result<(), SetError> {
    let text = serde_json::to_string_pretty(m).map_err(|e| SetError::BadManifest {
        path: dir.join(MANIFEST_NAME),
        reason: e.to_string(),
    })? + "\n";
    let path = dir.join(MANIFEST_NAME);
    write_atomic(&path, text.as_bytes()).map_err(io_err("cannot write", &path))
}

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// A result set being written into a staging folder beside its target
/// (see the [module docs](self)). Dropped without [`StagedSet::commit`], it
/// removes the staging folder and leaves the target as it was.
#[derive(Debug)]
pub struct StagedSet {
    target: PathBuf,
    staging: PathBuf,
    kind: String,
    overwrite: bool,
    done: bool,
}

impl StagedSet {
    /// Checks `target` (see [`FolderState`]: a missing or empty folder is
    /// accepted, our own set only with `overwrite`, anything else refused),
    /// removes stale staging folders of dead processes beside it, and
    /// creates a fresh staging folder. `kind` goes into the manifest.
    pub fn begin(target: &Path, kind: &str, overwrite: bool) -> Result<StagedSet, SetError> {
        check_target(target, overwrite)?;
        let parent = parent_dir(target);
        fs::create_dir_all(parent).map_err(io_err("cannot create", parent))?;
        remove_stale_siblings(target);
        let staging = loop {
            let n = COUNTER.fetch_add(1, Ordering::Relaxed);
            let p = sibling(target, "staging", n);
            match fs::create_dir(&p) {
                Ok(()) => break p,
                Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
                Err(e) => return Err(io_err("cannot create", &p)(e)),
            }
        };
        Ok(StagedSet {
            target: target.to_path_buf(),
            staging,
            kind: kind.to_owned(),
            overwrite,
            done: false,
        })
    }

    /// The staging folder: write every file of the set here.
    pub fn dir(&self) -> &Path {
        &self.staging
    }

    /// The folder the set will appear at.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Lists every file of the staging folder in the manifest (written
    /// last), then moves the set into place in one step and removes the
    /// earlier set. Returns the manifest.
    pub fn commit(mut self) -> Result<Manifest, SetError> {
        let rels: Vec<String> = list_files(&self.staging)?
            .into_iter()
            .filter(|r| r != MANIFEST_NAME)
            .collect();
        let manifest = Manifest {
            format: MANIFEST_FORMAT.to_owned(),
            version: 1,
            kind: self.kind.clone(),
            complete: true,
            files: entries(&self.staging, &rels)?,
            sources: Vec::new(),
        };
        write_manifest(&self.staging, &manifest)?;
        sync_dir(&self.staging).map_err(io_err("cannot sync", &self.staging))?;
        // The target may have changed while the run computed.
        let replace = !matches!(
            check_target(&self.target, self.overwrite)?,
            FolderState::Absent | FolderState::Empty
        );
        if replace {
            exchange(&self.staging, &self.target)?;
            // The staging path now holds the earlier set.
            fs::remove_dir_all(&self.staging).map_err(io_err("cannot remove", &self.staging))?;
        } else {
            if self.target.is_dir() {
                // An empty folder: rename(2) replaces it.
                let _ = fs::remove_dir(&self.target);
            }
            fs::rename(&self.staging, &self.target)
                .map_err(io_err("cannot move into place", &self.target))?;
        }
        self.done = true;
        let parent = parent_dir(&self.target);
        sync_dir(parent).map_err(io_err("cannot sync", parent))?;
        Ok(manifest)
    }
}

impl Drop for StagedSet {
    fn drop(&mut self) {
        if !self.done {
            let _ = fs::remove_dir_all(&self.staging);
        }
    }
}

/// The refusal rules of [`StagedSet::begin`], without side effects.
pub fn check_target(target: &Path, overwrite: bool) -> Result<FolderState, SetError> {
    let state = folder_state(target)?;
    match &state {
        FolderState::Absent | FolderState::Empty => {}
        FolderState::Ours(_) if overwrite => {}
        FolderState::Ours(m) => {
            return Err(SetError::Exists {
                path: target.to_path_buf(),
                n_files: m.files.len(),
            });
        }
        // A set written before manifests existed: ours, by its summary.
        FolderState::Foreign { .. } if overwrite && is_unsealed_run_set(target) => {}
        FolderState::Foreign { n_entries } if is_unsealed_run_set(target) => {
            return Err(SetError::Exists {
                path: target.to_path_buf(),
                n_files: *n_entries,
            });
        }
        FolderState::Foreign { n_entries } => {
            return Err(SetError::NotOurs {
                path: target.to_path_buf(),
                n_entries: *n_entries,
            });
        }
    }
    Ok(state)
}

/// True when `dir` holds a run's result set written by a Ganglion version
/// without manifests: a `summary.json` naming the program `ganglion`
/// beside a `curves.csv`. Such a folder is replaced with `overwrite`, like
/// a sealed set.
fn is_unsealed_run_set(dir: &Path) -> bool {
    if !dir.join("curves.csv").is_file() {
        return false;
    }
    let Ok(text) = fs::read_to_string(dir.join("summary.json")) else {
        return false;
    };
    serde_json::from_str::<serde_json::Value>(&text)
        .is_ok_and(|v| v["program"]["name"] == "ganglion")
}

/// Swaps two folders. On Linux one atomic `renameat2(RENAME_EXCHANGE)`;
/// where that is unavailable, two renames (the target is briefly absent,
/// never mixed).
fn exchange(a: &Path, b: &Path) -> Result<(), SetError> {
    #[cfg(target_os = "linux")]
    {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        let ca =
            CString::new(a.as_os_str().as_bytes()).map_err(|e| io_err("bad path", a)(e.into()))?;
        let cb =
            CString::new(b.as_os_str().as_bytes()).map_err(|e| io_err("bad path", b)(e.into()))?;
        // SAFETY: both pointers are valid NUL-terminated strings that live
        // across the call; AT_FDCWD resolves relative paths as rename does.
        let rc = unsafe {
            libc::renameat2(
                libc::AT_FDCWD,
                ca.as_ptr(),
                libc::AT_FDCWD,
                cb.as_ptr(),
                libc::RENAME_EXCHANGE,
            )
        };
        if rc == 0 {
            return Ok(());
        }
        let err = io::Error::last_os_error();
        match err.raw_os_error() {
            Some(libc::EINVAL) | Some(libc::ENOSYS) => {}
            _ => return Err(io_err("cannot swap into place", b)(err)),
        }
    }
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let old = sibling(b, "old", n);
    fs::rename(b, &old).map_err(io_err("cannot move aside", b))?;
    fs::rename(a, b).map_err(io_err("cannot move into place", b))?;
    fs::rename(&old, a).map_err(io_err("cannot move", &old))
}

/// `.<name>.<what>-<pid>-<n>` beside `target`.
fn sibling(target: &Path, what: &str, n: u64) -> PathBuf {
    parent_dir(target).join(format!(
        ".{}.{what}-{}-{n}",
        target_name(target),
        std::process::id()
    ))
}

fn target_name(target: &Path) -> String {
    target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".to_owned())
}

/// Removes `.<name>.staging-<pid>-<n>` and `.<name>.old-<pid>-<n>` beside
/// `target` whose process no longer runs. Returns how many were removed.
pub fn remove_stale_siblings(target: &Path) -> usize {
    let name = target_name(target);
    let Ok(rd) = fs::read_dir(parent_dir(target)) else {
        return 0;
    };
    let mut removed = 0;
    for e in rd.flatten() {
        let file = e.file_name().to_string_lossy().into_owned();
        let Some(rest) = file.strip_prefix(&format!(".{name}.")) else {
            continue;
        };
        let Some(tail) = rest
            .strip_prefix("staging-")
            .or_else(|| rest.strip_prefix("old-"))
        else {
            continue;
        };
        let Some(pid) = tail.split('-').next().and_then(|p| p.parse::<u32>().ok()) else {
            continue;
        };
        if !process_alive(pid) && fs::remove_dir_all(e.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// Marks a folder that is about to be rewritten in place as incomplete by
/// removing its manifest; returns the old manifest (for [`seal`]).
pub fn unseal(dir: &Path) -> Result<Option<Manifest>, SetError> {
    let old = read_manifest(dir).unwrap_or(None);
    let path = dir.join(MANIFEST_NAME);
    match fs::remove_file(&path) {
        Ok(()) => sync_dir(dir).map_err(io_err("cannot sync", dir))?,
        Err(e) if e.kind() == io::ErrorKind::NotFound => {}
        Err(e) => return Err(io_err("cannot remove", &path)(e)),
    }
    Ok(old)
}

/// Writes the manifest of a folder rewritten in place, last: `written` are
/// the files just written (relative paths), `sources` the files kept from
/// before that the set was made from. Files the `old` manifest listed as
/// written that are not written now are removed first, so no output of an
/// earlier merge stays beside the new ones.
pub fn seal(
    dir: &Path,
    kind: &str,
    written: &[String],
    sources: &[String],
    old: Option<&Manifest>,
) -> Result<Manifest, SetError> {
    let now: BTreeSet<&str> = written.iter().chain(sources).map(String::as_str).collect();
    if let Some(old) = old {
        for e in &old.files {
            if !now.contains(e.path.as_str()) && inside(&e.path) {
                let p = dir.join(&e.path);
                match fs::remove_file(&p) {
                    Ok(()) => {}
                    Err(err) if err.kind() == io::ErrorKind::NotFound => {}
                    Err(err) => return Err(io_err("cannot remove", &p)(err)),
                }
            }
        }
    }
    let manifest = Manifest {
        format: MANIFEST_FORMAT.to_owned(),
        version: 1,
        kind: kind.to_owned(),
        complete: true,
        files: entries(dir, written)?,
        sources: entries(dir, sources)?,
    };
    write_manifest(dir, &manifest)?;
    Ok(manifest)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        crate::io::atomic::scratch_dir("set", name)
    }

    fn stage(target: &Path, files: &[(&str, &str)], overwrite: bool) -> Result<Manifest, SetError> {
        let set = StagedSet::begin(target, "run", overwrite)?;
        for (n, body) in files {
            fs::write(set.dir().join(n), body).unwrap();
        }
        set.commit()
    }

    fn siblings(dir: &Path) -> Vec<String> {
        crate::io::atomic::sorted_names(dir)
    }

    #[test]
    fn a_set_of_an_earlier_version_without_manifest_is_replaced_only_with_overwrite() {
        let root = scratch("unsealed");
        let out = root.join("out");
        fs::create_dir_all(&out).unwrap();
        fs::write(
            out.join("summary.json"),
            r#"{"program": {"name": "ganglion", "version": "0.0.9"}}"#,
        )
        .unwrap();
        fs::write(out.join("curves.csv"), "sw\n1\n").unwrap();
        fs::write(out.join("table-imbibition.csv"), "old\n").unwrap();
        let e = stage(&out, &[("a.csv", "new")], false).unwrap_err();
        assert!(matches!(e, SetError::Exists { n_files: 3, .. }), "{e}");
        stage(&out, &[("a.csv", "new")], true).unwrap();
        assert_eq!(list_files(&out).unwrap(), ["a.csv", MANIFEST_NAME]);
        // Another program's summary is not ours, with or without overwrite.
        let other = root.join("other");
        fs::create_dir_all(&other).unwrap();
        fs::write(other.join("summary.json"), r#"{"program": {"name": "x"}}"#).unwrap();
        fs::write(other.join("curves.csv"), "a\n").unwrap();
        let e = stage(&other, &[("a.csv", "new")], true).unwrap_err();
        assert!(matches!(e, SetError::NotOurs { .. }), "{e}");
    }

    #[test]
    fn staged_set_appears_whole_with_a_manifest_that_verifies() {
        let root = scratch("fresh");
        let out = root.join("out");
        let m = stage(
            &out,
            &[("a.csv", "1,2\n"), ("check.txt", "123456789")],
            false,
        )
        .unwrap();
        assert_eq!(m.files.len(), 2);
        // CRC-32 (IEEE 802.3) of the ASCII digits "123456789" is 0xcbf43926,
        // the standard check value of the algorithm (common practice).
        assert_eq!(m.files[1].path, "check.txt");
        assert_eq!(m.files[1].crc32, "cbf43926");
        assert_eq!(m.files[1].bytes, 9);
        let v = verify(&out).unwrap();
        assert!(v.is_complete(), "{v:?}");
        assert_eq!(siblings(&root), vec!["out".to_owned()]);
    }

    #[test]
    fn rerun_refuses_our_set_without_overwrite_and_replaces_it_whole_with_it() {
        let root = scratch("rerun");
        let out = root.join("out");
        stage(
            &out,
            &[("a.csv", "old"), ("table-imbibition.csv", "old")],
            false,
        )
        .unwrap();
        let e = stage(&out, &[("a.csv", "new")], false).unwrap_err();
        assert!(matches!(e, SetError::Exists { n_files: 2, .. }), "{e}");
        assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "old");
        stage(&out, &[("a.csv", "new")], true).unwrap();
        assert_eq!(
            list_files(&out).unwrap(),
            vec!["a.csv".to_owned(), MANIFEST_NAME.to_owned()],
            "the earlier run's table must not stay beside the new set"
        );
        assert!(verify(&out).unwrap().is_complete());
        assert_eq!(siblings(&root), vec!["out".to_owned()]);
    }

    #[test]
    fn non_empty_folder_that_is_not_ours_is_refused_even_with_overwrite() {
        let root = scratch("foreign");
        let out = root.join("out");
        fs::create_dir_all(&out).unwrap();
        fs::write(out.join("thesis.tex"), "precious").unwrap();
        for overwrite in [false, true] {
            let e = stage(&out, &[("a.csv", "x")], overwrite).unwrap_err();
            assert!(matches!(e, SetError::NotOurs { n_entries: 1, .. }), "{e}");
        }
        assert_eq!(siblings(&out), vec!["thesis.tex".to_owned()]);
        assert_eq!(siblings(&root), vec!["out".to_owned()]);
    }

    #[test]
    fn empty_folder_is_accepted_and_dropped_staging_leaves_nothing() {
        let root = scratch("empty");
        let out = root.join("out");
        fs::create_dir_all(&out).unwrap();
        {
            let set = StagedSet::begin(&out, "run", false).unwrap();
            fs::write(set.dir().join("a.csv"), "x").unwrap();
        }
        assert_eq!(siblings(&root), vec!["out".to_owned()]);
        assert!(siblings(&out).is_empty());
        stage(&out, &[("a.csv", "x")], false).unwrap();
        assert!(verify(&out).unwrap().is_complete());
    }

    #[test]
    fn stale_staging_of_a_dead_process_is_removed_by_the_next_set() {
        let root = scratch("stale");
        let out = root.join("out");
        // pid 0 is never a user process, so its staging folder is stale.
        let stale = root.join(".out.staging-0-7");
        fs::create_dir_all(&stale).unwrap();
        fs::write(stale.join("summary.json"), "{").unwrap();
        stage(&out, &[("a.csv", "x")], false).unwrap();
        assert_eq!(siblings(&root), vec!["out".to_owned()]);
    }

    #[test]
    fn verify_names_a_truncated_a_missing_and_an_unlisted_file() {
        let root = scratch("verify");
        let out = root.join("out");
        stage(
            &out,
            &[("a.csv", "12345"), ("b.csv", "x"), ("c.csv", "abc")],
            false,
        )
        .unwrap();
        fs::write(out.join("a.csv"), "12").unwrap();
        fs::remove_file(out.join("b.csv")).unwrap();
        fs::write(out.join("c.csv"), "abd").unwrap();
        fs::write(out.join(".summary.json.9-0.tmp"), "").unwrap();
        let v = verify(&out).unwrap();
        assert!(!v.is_complete());
        assert_eq!(v.damaged.len(), 3, "{:?}", v.damaged);
        assert!(v.damaged[0].contains("a.csv: 2 bytes, the manifest says 5"));
        assert!(v.damaged[1].contains("b.csv: missing"));
        assert!(v.damaged[2].contains("c.csv: content differs"));
        assert_eq!(v.unlisted, vec![".summary.json.9-0.tmp".to_owned()]);
        fs::remove_file(out.join(MANIFEST_NAME)).unwrap();
        assert!(!verify(&out).unwrap().is_complete());
    }

    #[test]
    fn manifest_paths_outside_the_folder_are_neither_read_nor_removed() {
        let root = scratch("outside");
        let dir = root.join("set");
        fs::create_dir_all(&dir).unwrap();
        let victim = root.join("victim.txt");
        fs::write(&victim, "keep").unwrap();
        let abs = victim.to_string_lossy().into_owned();
        let entry = |p: &str| ManifestEntry {
            path: p.to_owned(),
            bytes: 4,
            crc32: "00000000".into(),
        };
        let old = Manifest {
            format: MANIFEST_FORMAT.into(),
            version: 1,
            kind: "sweep".into(),
            complete: true,
            files: vec![entry("../victim.txt"), entry(&abs)],
            sources: Vec::new(),
        };
        write_manifest(&dir, &old).unwrap();
        let v = verify(&dir).unwrap();
        assert_eq!(v.damaged.len(), 2, "{v:?}");
        assert!(v.damaged.iter().all(|d| d.contains("not a path inside")));
        seal(&dir, "sweep", &[], &[], Some(&old)).unwrap();
        assert_eq!(fs::read_to_string(&victim).unwrap(), "keep");
    }

    #[test]
    fn seal_lists_outputs_and_sources_and_drops_outputs_the_new_merge_no_longer_writes() {
        let dir = scratch("seal");
        fs::create_dir_all(dir.join("cases")).unwrap();
        fs::write(dir.join("cases/case-00000.json"), "{}").unwrap();
        fs::write(dir.join("old-figure.svg"), "<svg/>").unwrap();
        fs::write(dir.join("summary.json"), "1").unwrap();
        let src = vec!["cases/case-00000.json".to_owned()];
        let first = seal(
            &dir,
            "sweep",
            &["old-figure.svg".to_owned(), "summary.json".to_owned()],
            &src,
            None,
        )
        .unwrap();
        assert!(verify(&dir).unwrap().is_complete());
        let old = unseal(&dir).unwrap();
        assert_eq!(old.as_ref(), Some(&first));
        assert!(
            !verify(&dir).unwrap().is_complete(),
            "unsealed means incomplete"
        );
        fs::write(dir.join("summary.json"), "2").unwrap();
        seal(
            &dir,
            "sweep",
            &["summary.json".to_owned()],
            &src,
            old.as_ref(),
        )
        .unwrap();
        assert!(!dir.join("old-figure.svg").exists());
        assert!(dir.join("cases/case-00000.json").exists());
        assert!(verify(&dir).unwrap().is_complete());
    }
}
