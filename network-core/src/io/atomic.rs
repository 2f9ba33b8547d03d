//! Atomic file output: write to a temporary file in the target's directory,
//! flush it to disk, then rename it over the target.
//!
//! A reader of `path` sees either the old complete file or the new complete
//! file, never a partial one: `rename(2)` within one file system replaces the
//! directory entry in one step. The temporary file lives in the same
//! directory as the target so the rename never crosses a file system.
//!
//! Sequence of [`AtomicFile::commit`]: flush the buffer, `fsync` the
//! temporary file, rename it to the target, then `fsync` the directory (on
//! Unix) so the rename itself survives a crash. An [`AtomicFile`] dropped
//! without `commit` (an error path, a panic) removes its temporary file.

use std::fs::{self, File, OpenOptions};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Writes `bytes` to `path` atomically (see the [module docs](self)).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut file = AtomicFile::create(path)?;
    file.write_all(bytes)?;
    file.commit()
}

/// A file being written atomically: it appears at its target path only on
/// [`AtomicFile::commit`].
///
/// ```
/// use std::io::Write;
/// use network_core::io::atomic::AtomicFile;
///
/// let dir = std::env::temp_dir().join(format!("ganglion-doc-atomic-{}", std::process::id()));
/// std::fs::create_dir_all(&dir).unwrap();
/// let path = dir.join("out.txt");
/// let mut file = AtomicFile::create(&path).unwrap();
/// writeln!(file, "hello").unwrap();
/// assert!(!path.exists()); // nothing visible before the commit
/// file.commit().unwrap();
/// assert_eq!(std::fs::read_to_string(&path).unwrap(), "hello\n");
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
#[derive(Debug)]
pub struct AtomicFile {
    target: PathBuf,
    temp: PathBuf,
    writer: Option<BufWriter<File>>,
}

impl AtomicFile {
    /// Creates a new temporary file beside `path` (same directory).
    ///
    /// Fails when the directory does not exist or is not writable.
    pub fn create(path: &Path) -> io::Result<AtomicFile> {
        let (temp, file) = create_temp_file(path)?;
        Ok(AtomicFile {
            target: path.to_path_buf(),
            temp,
            writer: Some(BufWriter::with_capacity(1 << 20, file)),
        })
    }

    /// The final path of the file.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// The temporary path being written.
    pub fn temp_path(&self) -> &Path {
        &self.temp
    }

    /// Flushes and syncs the data, then renames the temporary file onto the
    /// target and syncs the directory. On error the temporary file is removed
    /// and the target is left as it was.
    pub fn commit(mut self) -> io::Result<()> {
        let result = self.finish_and_rename();
        if result.is_err() {
            let _ = fs::remove_file(&self.temp);
        }
        result
    }

    fn finish_and_rename(&mut self) -> io::Result<()> {
        let writer = self
            .writer
            .take()
            .ok_or_else(|| io::Error::other("atomic file already finished"))?;
        let file = writer.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        drop(file);
        fs::rename(&self.temp, &self.target)?;
        sync_dir(parent_dir(&self.target))
    }

    fn writer(&mut self) -> io::Result<&mut BufWriter<File>> {
        self.writer
            .as_mut()
            .ok_or_else(|| io::Error::other("atomic file already finished"))
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.writer()?.write(buf)
    }

    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        self.writer()?.write_all(buf)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.writer()?.flush()
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        if let Some(writer) = self.writer.take() {
            // Not committed: discard the data and the temporary file.
            drop(writer.into_parts());
            let _ = fs::remove_file(&self.temp);
        }
    }
}

/// The directory holding `path` (`.` for a bare file name).
pub(crate) fn parent_dir(path: &Path) -> &Path {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    }
}

/// Syncs a directory so that renames inside it are durable (Unix only; a
/// no-op elsewhere, where directories cannot be opened as files).
pub(crate) fn sync_dir(dir: &Path) -> io::Result<()> {
    #[cfg(unix)]
    {
        File::open(dir)?.sync_all()
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
        Ok(())
    }
}

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// A name for a temporary sibling of `path`: `.<name>.<pid>-<n>.tmp`.
pub(crate) fn temp_sibling(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".to_owned());
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    parent_dir(path).join(format!(".{name}.{}-{n}.tmp", std::process::id()))
}

/// Removes the temporary files of [`AtomicFile`]s (`.<name>.<pid>-<n>.tmp`)
/// in `dir` whose process no longer runs: a process killed mid-write
/// cannot remove its own. Temporaries of running processes are kept.
/// Returns how many were removed.
pub fn remove_stale_temporaries(dir: &Path) -> usize {
    let Ok(rd) = fs::read_dir(dir) else {
        return 0;
    };
    let mut removed = 0;
    for e in rd.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(pid) = temp_owner(&name) else {
            continue;
        };
        let is_file = e.file_type().is_ok_and(|t| t.is_file());
        if is_file && !process_alive(pid) && fs::remove_file(e.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// `true` when process `pid` is running (Linux: `/proc/<pid>` exists).
/// Without `/proc` every other process is taken as gone.
pub(crate) fn process_alive(pid: u32) -> bool {
    pid == std::process::id() || Path::new("/proc").join(pid.to_string()).exists()
}

/// The pid in a temporary name of ours, `.<name>.<pid>-<n>.tmp`.
fn temp_owner(file_name: &str) -> Option<u32> {
    let inner = file_name.strip_prefix('.')?.strip_suffix(".tmp")?;
    let (_, tag) = inner.rsplit_once('.')?;
    let (pid, n) = tag.split_once('-')?;
    n.parse::<u64>().ok()?;
    pid.parse().ok()
}

fn create_temp_file(path: &Path) -> io::Result<(PathBuf, File)> {
    loop {
        let temp = temp_sibling(path);
        match OpenOptions::new().write(true).create_new(true).open(&temp) {
            Ok(file) => return Ok((temp, file)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
}

/// A fresh, empty folder under the system's temporary folder, unique to
/// this process and call (unit tests of the `io` modules).
#[cfg(test)]
pub(crate) fn scratch_dir(prefix: &str, name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "ganglion-{prefix}-{name}-{}-{}",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::Relaxed)
    ));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).unwrap();
    dir
}

/// The names of the entries of `dir`, sorted (unit tests of the `io`
/// modules).
#[cfg(test)]
pub(crate) fn sorted_names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        scratch_dir("atomic", name)
    }

    fn entries(dir: &Path) -> Vec<String> {
        sorted_names(dir)
    }

    #[test]
    fn write_atomic_replaces_existing_file_and_leaves_no_temp() {
        let dir = scratch("replace");
        let path = dir.join("a.txt");
        fs::write(&path, "old").unwrap();
        write_atomic(&path, b"new content").unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "new content");
        assert_eq!(entries(&dir), vec!["a.txt".to_owned()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn dropped_atomic_file_removes_temp_and_keeps_old_target() {
        let dir = scratch("drop");
        let path = dir.join("b.txt");
        fs::write(&path, "old").unwrap();
        {
            let mut f = AtomicFile::create(&path).unwrap();
            f.write_all(b"half-writ").unwrap();
            assert!(f.temp_path().exists());
        }
        assert_eq!(fs::read_to_string(&path).unwrap(), "old");
        assert_eq!(entries(&dir), vec!["b.txt".to_owned()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn stale_temporaries_of_dead_processes_are_removed_and_others_kept() {
        let dir = scratch("stale");
        // pid 0 is never a user process: its temporary is stale.
        fs::write(dir.join(".summary.json.0-3.tmp"), "half").unwrap();
        let live = temp_sibling(&dir.join("curves.csv"));
        fs::write(&live, "being written").unwrap();
        fs::write(dir.join(".notes.tmp"), "not ours").unwrap();
        fs::write(dir.join("summary.json"), "{}").unwrap();
        assert_eq!(remove_stale_temporaries(&dir), 1);
        let live_name = live.file_name().unwrap().to_string_lossy().into_owned();
        let mut want = vec![
            ".notes.tmp".to_owned(),
            live_name,
            "summary.json".to_owned(),
        ];
        want.sort();
        assert_eq!(entries(&dir), want);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn create_in_missing_directory_fails_cleanly() {
        let dir = scratch("missing");
        let path = dir.join("no-such-dir").join("c.txt");
        assert!(AtomicFile::create(&path).is_err());
        assert!(write_atomic(&path, b"x").is_err());
        fs::remove_dir_all(&dir).unwrap();
    }
}
