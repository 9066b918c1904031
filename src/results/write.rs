//! Writing into `results/`: whole files replaced atomically, files removed, a result and
//! its exports replaced together ([`Batch`]), and the temporary files of killed runs
//! cleaned up ([`clean_orphans`]).
//!
//! Owns the one way a file under `results/` is written, so that a reader (a viewer, a
//! script, the page) sees the old file or the new one, never a part. It does not know
//! which file is which; [`super::Layout`] names them.
//!
//! Only the `results/` folder itself is ever created, never the folder it sits in: a
//! watched folder that was moved or deleted is not brought back by a write.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;
use thiserror::Error;

/// A file under `results/` that could not be written or removed.
#[derive(Debug, Error)]
#[error("cannot write {}: {source}", path.display())]
pub struct WriteError {
    pub path: PathBuf,
    pub source: io::Error,
}

/// The start of every temporary file name under `results/`; the writing process's id
/// follows (`.wetload-<pid>-XXXXXX.tmp`), so a later run can tell orphans from writes in
/// progress.
pub const TEMP_PREFIX: &str = ".wetload-";
const TEMP_SUFFIX: &str = ".tmp";

/// Writes `bytes` to `path` so that readers see the old file or the new one, never a
/// part: a temporary file in the same folder, flushed to disk, renamed over the target,
/// then the folder flushed. Creates the `results/` folder if needed (not its parent).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    let tmp = stage(path, bytes, true)?;
    persist(tmp, path, true)
}

/// [`write_atomic`] without flushing to disk: for files derived from others and written
/// again on the next change (the page and the history charts). Readers still see the
/// old file or the new one; only a power cut may lose the newest.
pub fn write_atomic_unsynced(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    let tmp = stage(path, bytes, false)?;
    persist(tmp, path, false)
}

/// The folder of `path`, checked to be no link and created when missing (the folder only:
/// its parent must exist).
fn ready_folder(path: &Path) -> Result<&Path, WriteError> {
    let err = |source| WriteError {
        path: path.to_owned(),
        source,
    };
    let dir = path.parent().unwrap_or(Path::new("."));
    // Never write through a link: results stay inside the folder they belong to.
    if fs::symlink_metadata(dir).is_ok_and(|m| m.file_type().is_symlink()) {
        return Err(err(io::Error::other(
            "the folder is a symbolic link, and wetload writes results only into a real folder; replace the link with a folder",
        )));
    }
    match fs::create_dir(dir) {
        Ok(()) => Ok(dir),
        Err(e) if e.kind() == io::ErrorKind::AlreadyExists => Ok(dir),
        Err(e) => Err(err(e)),
    }
}

/// Writes `bytes` into a temporary file beside `path` (flushed to disk when `sync`).
fn stage(path: &Path, bytes: &[u8], sync: bool) -> Result<NamedTempFile, WriteError> {
    let err = |source| WriteError {
        path: path.to_owned(),
        source,
    };
    let dir = ready_folder(path)?;
    let mut tmp = tempfile::Builder::new()
        .prefix(&format!("{TEMP_PREFIX}{}-", std::process::id()))
        .suffix(TEMP_SUFFIX)
        .tempfile_in(dir)
        .map_err(err)?;
    tmp.write_all(bytes).map_err(err)?;
    // Temporary files are created private (0600); results are meant to be shared.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(fs::Permissions::from_mode(0o644))
            .map_err(err)?;
    }
    if sync {
        tmp.as_file().sync_all().map_err(err)?;
    }
    Ok(tmp)
}

/// Renames a staged file over `path` (and flushes the folder when `sync`).
fn persist(tmp: NamedTempFile, path: &Path, sync: bool) -> Result<(), WriteError> {
    tmp.persist(path).map_err(|e| WriteError {
        path: path.to_owned(),
        source: e.error,
    })?;
    // Make the rename itself durable; a folder that cannot be opened for this is no error.
    if sync && let Ok(d) = fs::File::open(path.parent().unwrap_or(Path::new("."))) {
        let _ = d.sync_all();
    }
    Ok(())
}

/// A result document and its exports, replaced together.
///
/// Every file is first written in full to a temporary file and flushed ([`Batch::put`]);
/// a failure there (a full disk) drops them all and changes nothing, so the old result
/// and the old exports stay, still agreeing with each other. [`Batch::commit`] then
/// renames the result first and the exports after it; an export that cannot be put in
/// place is removed with every other export of the batch, so that no export beside the
/// new result shows the loads of an earlier one. Exports the new result no longer has
/// are removed ([`Batch::remove`]).
pub struct Batch {
    result: Option<(NamedTempFile, PathBuf)>,
    exports: Vec<(NamedTempFile, PathBuf)>,
    removals: Vec<PathBuf>,
}

/// What [`Batch::commit`] did when the result was written but some export was not.
#[derive(Debug)]
pub struct ExportsDropped {
    /// The export that failed, and why.
    pub error: WriteError,
    /// The exports removed so that none disagrees with the result.
    pub removed: Vec<PathBuf>,
}

impl Batch {
    /// An empty batch.
    pub fn new() -> Batch {
        Batch {
            result: None,
            exports: Vec::new(),
            removals: Vec::new(),
        }
    }

    /// Stages the result document (renamed first on commit).
    pub fn put_result(&mut self, path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
        self.result = Some((stage(path, bytes, true)?, path.to_owned()));
        Ok(())
    }

    /// Stages one export.
    pub fn put(&mut self, path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
        self.exports
            .push((stage(path, bytes, true)?, path.to_owned()));
        Ok(())
    }

    /// Marks an export of an earlier result for removal.
    pub fn remove(&mut self, path: PathBuf) {
        self.removals.push(path);
    }

    /// Puts everything in place: `Err` when the result itself could not be (nothing has
    /// changed then); `Ok(Some(..))` when the result was written but the exports were
    /// dropped; `Ok(None)` when all went in.
    pub fn commit(self) -> Result<Option<ExportsDropped>, WriteError> {
        if let Some((tmp, path)) = self.result {
            persist(tmp, &path, true)?;
        }
        let targets: Vec<PathBuf> = self
            .exports
            .iter()
            .map(|(_, p)| p.clone())
            .chain(self.removals.iter().cloned())
            .collect();
        let mut failed = None;
        for (tmp, path) in self.exports {
            if failed.is_some() {
                break;
            }
            if let Err(e) = persist(tmp, &path, false) {
                failed = Some(e);
            }
        }
        let mut removed = Vec::new();
        let mut removal_failed = None;
        let to_remove = if failed.is_some() {
            &targets[..]
        } else {
            &self.removals[..]
        };
        for p in to_remove {
            let existed = p.exists();
            match remove_if_present(p) {
                Ok(()) if existed => removed.push(p.clone()),
                Ok(()) => {}
                Err(e) => removal_failed = removal_failed.or(Some(e)),
            }
        }
        if let Some(d) = targets.first().and_then(|p| p.parent())
            && let Ok(d) = fs::File::open(d)
        {
            let _ = d.sync_all();
        }
        match failed.or(removal_failed) {
            Some(error) => Ok(Some(ExportsDropped { error, removed })),
            None => Ok(None),
        }
    }
}

impl Default for Batch {
    fn default() -> Batch {
        Batch::new()
    }
}

/// Removes the temporary files in `dir` left by processes that no longer run (a run
/// killed in the middle of a write); returns what was removed. Temporary files of a
/// running process, this one included, are left alone.
pub fn clean_orphans(dir: &Path) -> Vec<PathBuf> {
    let Ok(rd) = fs::read_dir(dir) else {
        return Vec::new();
    };
    let mut removed = Vec::new();
    for e in rd.filter_map(Result::ok) {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(rest) = name.strip_prefix(TEMP_PREFIX) else {
            continue;
        };
        if !name.ends_with(TEMP_SUFFIX) || !e.file_type().is_ok_and(|t| t.is_file()) {
            continue;
        }
        // `<pid>-XXXXXX.tmp`; a name without a process id is from an older version.
        let pid = rest
            .split_once('-')
            .and_then(|(pid, _)| pid.parse::<u32>().ok());
        if pid.is_some_and(process_runs) {
            continue;
        }
        if fs::remove_file(e.path()).is_ok() {
            removed.push(e.path());
        }
    }
    removed.sort();
    removed
}

/// Whether a process with this id runs on this machine.
fn process_runs(pid: u32) -> bool {
    if pid == std::process::id() {
        return true;
    }
    #[cfg(target_os = "linux")]
    {
        Path::new("/proc").join(pid.to_string()).exists()
    }
    #[cfg(not(target_os = "linux"))]
    {
        // No cheap way to ask: keep the file rather than break a running write.
        true
    }
}

/// Removes `path` if it is there (a missing file is no error).
pub fn remove_if_present(path: &Path) -> Result<(), WriteError> {
    match fs::remove_file(path) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(()),
        Err(source) => Err(WriteError {
            path: path.to_owned(),
            source,
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_write_replaces_the_whole_file_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("results").join("a.json");
        write_atomic(&path, b"first, and longer").expect("writes");
        write_atomic(&path, b"second").expect("writes");
        assert_eq!(fs::read(&path).expect("reads"), b"second");
        let names: Vec<_> = fs::read_dir(path.parent().expect("folder"))
            .expect("lists")
            .map(|e| e.expect("entry").file_name())
            .collect();
        assert_eq!(names, ["a.json"]);
        remove_if_present(&path).expect("removes");
        remove_if_present(&path).expect("a missing file is no error");
        assert!(!path.exists());
    }

    #[test]
    fn a_write_never_creates_the_folder_that_holds_results() {
        let dir = tempfile::tempdir().expect("temp dir");
        let gone = dir.path().join("moved").join("results").join("a.json");
        assert!(write_atomic(&gone, b"x").is_err());
        assert!(!dir.path().join("moved").exists());
    }

    #[test]
    fn orphans_of_dead_processes_are_removed_and_live_writes_kept() {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path();
        let ours = p.join(format!("{TEMP_PREFIX}{}-abc.tmp", std::process::id()));
        // Process ids are below 2^22 on Linux: this one cannot run.
        let dead = p.join(format!("{TEMP_PREFIX}4294967290-abc.tmp"));
        let old_style = p.join(format!("{TEMP_PREFIX}Xq3kZ9.tmp"));
        let result = p.join("a.json");
        for f in [&ours, &dead, &old_style, &result] {
            fs::write(f, b"x").expect("write");
        }
        assert_eq!(clean_orphans(p), {
            let mut v = vec![dead.clone(), old_style.clone()];
            v.sort();
            v
        });
        assert!(ours.exists() && result.exists());
    }

    #[test]
    fn a_batch_whose_export_cannot_be_placed_leaves_no_export_beside_the_result() {
        let dir = tempfile::tempdir().expect("temp dir");
        let r = dir.path().join("results");
        let (json, csv, vtp) = (r.join("a.json"), r.join("a.csv"), r.join("a.vtp"));
        let mut b = Batch::new();
        b.put_result(&json, b"old").expect("stage");
        b.put(&csv, b"old").expect("stage");
        b.put(&vtp, b"old").expect("stage");
        assert!(b.commit().expect("commits").is_none());
        // The field export's name is taken by a non-empty folder: it cannot be replaced.
        fs::remove_file(&vtp).expect("rm");
        fs::create_dir_all(vtp.join("inside")).expect("block");
        let mut b = Batch::new();
        b.put_result(&json, b"new").expect("stage");
        b.put(&csv, b"new").expect("stage");
        b.put(&vtp, b"new").expect("stage");
        let dropped = b
            .commit()
            .expect("the result is written")
            .expect("exports dropped");
        assert_eq!(dropped.error.path, vtp);
        assert_eq!(fs::read(&json).expect("json"), b"new");
        assert!(
            !csv.exists(),
            "an export of the old result stayed beside the new one"
        );
        let left: Vec<_> = fs::read_dir(&r)
            .expect("ls")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .collect();
        assert!(left.iter().all(|n| !n.ends_with(".tmp")), "{left:?}");
    }
}
