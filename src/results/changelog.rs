//! The change log `results/changes.jsonl`: one JSON object per line, appended, never
//! rewritten, and the folder lock that keeps two watchers from writing it at once.
//!
//! # Line format
//!
//! Every line has `time` (RFC 3339, UTC), `mesh` (file name) and `event`:
//!
//! * `"computed"`: also `iteration` (1, 2, … per mesh), `mesh_hash` and `sidecar_hash`
//!   (BLAKE3 of the bytes computed from, hex), `facets`, `warnings` (count), and `cases`:
//!   `[{name, force, moment, horizontal_force, vertical_force, uplift, downthrust, wetted_area,
//!   submerged_volume, axis_moments: {axis: N·m}, flotation_factor, change,
//!   since_baseline}]` — absolute SI values as in the result document; `change` holds the
//!   differences against the previous `computed` line of the same mesh and case, and
//!   `since_baseline` against the first one (the baseline); both null when there is none.
//! * `"unchanged"`: a save whose mesh and sidecar hashes equal the last computed ones;
//!   also `iteration` (the unchanged one) and the two hashes.
//! * `"failed"`: also `error` (the message); the last good result was kept and marked stale.
//! * `"removed"`: the mesh file disappeared; its result was kept and marked stale.
//!
//! Each line is written with one `write` of the whole line and flushed to disk before the
//! next, so a crash can only tear the last line; [`ChangeLog::open`] moves a torn tail
//! aside into `changes.jsonl.torn` and says so.
//!
//! # Appending from several processes
//!
//! `wetload calc` appends its line too, also while a watcher runs on the folder (which
//! holds the folder lock below for its whole life). Every writer therefore appends under
//! a second, short lock: an exclusive advisory lock on the log file itself, taken just
//! for reading what is new, building the line and writing it ([`ChangeLog::append_with`]
//! for the watcher, [`append_once`] for `calc`, which waits for it: a writer holds it
//! only for one append). Under it, a writer first reads the lines appended since it last
//! looked, so iteration numbers continue across `calc` and `watch` and are never given
//! twice, and lines never interleave. A torn last line is moved aside under the same
//! lock by whoever meets it first.
//!
//! # Locks, and a log or lock removed under a running watcher
//!
//! Two locks are held for as long as the log is open: an advisory lock on the watched
//! folder itself (the folder that holds `results/`), which no deletion inside it can
//! defeat, and the lock file `results/.wetload.lock` as before. A second watcher of the
//! same folder is refused by the first.
//!
//! Before every line, [`ChangeLog::append`] compares the file it has open with what the
//! path holds now (device and inode), for the log and the lock file. When the log was
//! deleted (alone or with all of `results/`) or replaced by another file, the log is
//! written again at its path from the open file, which still holds every line, and
//! appending goes on there: no line is lost and no iteration numbered twice. A file that
//! took the log's place is first moved aside to `changes.jsonl.replaced-<time>`. A lock
//! file that went is created and locked again. Each repair is returned as a note for the
//! terminal.

use std::fs::{self, File, OpenOptions};
use std::io::{self, Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

use serde_json::Value;
use thiserror::Error;

use super::Layout;

/// File name of the change log inside `results/`.
pub const LOG_NAME: &str = "changes.jsonl";
/// File name of the lock inside `results/`.
pub const LOCK_NAME: &str = ".wetload.lock";

/// Why the change log cannot be used (the watcher cannot run without it).
#[derive(Debug, Error)]
pub enum LogError {
    #[error("cannot use the change log {}: {source}", path.display())]
    Io { path: PathBuf, source: io::Error },
    #[error(
        "another wetload watch is already writing {}; stop it first (two watchers would interleave the change log)",
        path.display()
    )]
    Locked { path: PathBuf },
}

/// An open, locked change log.
#[derive(Debug)]
pub struct ChangeLog {
    path: PathBuf,
    file: File,
    /// The lock file, locked; replaced when it is deleted.
    lock: File,
    /// The watched folder, locked for the life of the log: the advisory lock lives as
    /// long as the handle.
    _folder: File,
    /// Bytes of the log read so far: lines after them were appended by someone else.
    seen: u64,
}

/// Device and inode of an open file.
fn identity(meta: &fs::Metadata) -> (u64, u64) {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        (meta.dev(), meta.ino())
    }
    #[cfg(not(unix))]
    {
        let _ = meta;
        (0, 0)
    }
}

/// Whether `path` now holds the file open as `file` (false when it is gone or another).
fn same_file(path: &Path, file: &File) -> bool {
    match (fs::metadata(path), file.metadata()) {
        (Ok(a), Ok(b)) => identity(&a) == identity(&b),
        _ => false,
    }
}

/// Opens and locks the lock file at `path`.
fn take_lock(path: &Path, log: &Path) -> Result<File, LogError> {
    let io_err = |source| LogError::Io {
        path: path.to_owned(),
        source,
    };
    let lock = OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(path)
        .map_err(io_err)?;
    match lock.try_lock() {
        Ok(()) => Ok(lock),
        Err(fs::TryLockError::WouldBlock) => Err(LogError::Locked {
            path: log.to_owned(),
        }),
        Err(fs::TryLockError::Error(e)) => Err(io_err(e)),
    }
}

/// What was in the log when it was opened, besides its lines.
#[derive(Debug, Default)]
pub struct Recovered {
    /// What was repaired or skipped, for the terminal.
    pub notes: Vec<String>,
}

impl ChangeLog {
    /// Opens (creating) `dir/changes.jsonl` for appending, takes the folder lock, repairs
    /// a torn last line, and hands every complete line that parses to `each`, in order (one
    /// at a time: the lines are never all held parsed at once).
    pub fn open(
        dir: &Path,
        mut each: impl FnMut(Value),
    ) -> Result<(ChangeLog, Recovered), LogError> {
        let layout = Layout::new(dir.to_owned());
        let path = layout.change_log();
        let io_err = |source| LogError::Io {
            path: path.clone(),
            source,
        };
        // The folder that holds results/ is locked first: deleting results/ or the lock
        // file cannot defeat this one.
        let folder_path = dir
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let folder = File::open(folder_path).map_err(io_err)?;
        match folder.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) => return Err(LogError::Locked { path }),
            Err(fs::TryLockError::Error(e)) => return Err(io_err(e)),
        }
        match fs::create_dir(dir) {
            Ok(()) => {}
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {}
            Err(e) => return Err(io_err(e)),
        }
        let lock = take_lock(&layout.lock(), &path)?;

        let mut file = OpenOptions::new()
            .create(true)
            .read(true)
            .append(true)
            .open(&path)
            .map_err(io_err)?;
        // The append lock, while the log is read and a torn tail repaired (a `calc` may be
        // appending).
        file.lock().map_err(io_err)?;
        let mut bytes = Vec::new();
        file.read_to_end(&mut bytes).map_err(io_err)?;
        let mut recovered = Recovered::default();
        let complete = repair_torn_tail(&mut file, &bytes, &layout).map_err(io_err)?;
        recovered.notes.extend(complete.1);
        let complete = complete.0;
        let _ = file.unlock();
        file.seek(SeekFrom::End(0)).map_err(io_err)?;
        let mut orphans = super::clean_orphans(dir);
        orphans.extend(super::clean_orphans(&layout.snapshots()));
        if !orphans.is_empty() {
            recovered.notes.push(format!(
                "removed {} temporary file(s) in {} left by an interrupted run",
                orphans.len(),
                dir.display()
            ));
        }
        for (i, line) in bytes[..complete].split(|&b| b == b'\n').enumerate() {
            if line.iter().all(u8::is_ascii_whitespace) {
                continue;
            }
            match serde_json::from_slice::<Value>(line) {
                Ok(v) => each(v),
                Err(e) => recovered.notes.push(format!(
                    "{} line {}: not JSON ({e}); left as it is and ignored",
                    path.display(),
                    i + 1
                )),
            }
        }
        Ok((
            ChangeLog {
                path,
                file,
                lock,
                _folder: folder,
                seen: complete as u64,
            },
            recovered,
        ))
    }

    /// Appends one line and flushes it to disk; first repairs a log or lock file that was
    /// removed or replaced (see the module doc) and returns what it repaired.
    pub fn append(&mut self, line: &Value) -> Result<Vec<String>, LogError> {
        let line = line.clone();
        self.append_with(&mut (), |(), _| {}, |()| line)
            .map(|(_, notes)| notes)
    }

    /// Appends the line `make` builds, under the append lock (see "Appending from
    /// several processes" in the module doc): lines others appended since this log last
    /// read are first handed to `foreign`, in order, so that `make` numbers from them.
    /// Returns the line written and the repairs made.
    pub fn append_with<S: ?Sized>(
        &mut self,
        state: &mut S,
        mut foreign: impl FnMut(&mut S, Value),
        make: impl FnOnce(&mut S) -> Value,
    ) -> Result<(Value, Vec<String>), LogError> {
        let mut notes = self.repair()?;
        let path = self.path.clone();
        let err = |source| LogError::Io {
            path: path.clone(),
            source,
        };
        self.file.lock().map_err(err)?;
        let written = (|| {
            let mut tail = Vec::new();
            let len = self.file.metadata().map_err(err)?.len();
            let from = self.seen.min(len);
            self.file.seek(SeekFrom::Start(from)).map_err(err)?;
            self.file.read_to_end(&mut tail).map_err(err)?;
            let layout = Layout::new(self.path.parent().unwrap_or(Path::new(".")).to_owned());
            let (complete, torn) = repair_torn_tail(&mut self.file, &tail, &layout).map_err(err)?;
            notes.extend(torn);
            for line in tail[..complete].split(|&b| b == b'\n') {
                if let Ok(v) = serde_json::from_slice::<Value>(line) {
                    foreign(state, v);
                }
            }
            let line = make(state);
            let mut bytes = serde_json::to_vec(&line).expect("a JSON value always serializes");
            bytes.push(b'\n');
            self.file.write_all(&bytes).map_err(err)?;
            self.file.sync_data().map_err(err)?;
            self.seen = from + complete as u64 + bytes.len() as u64;
            Ok(line)
        })();
        let _ = self.file.unlock();
        written.map(|line| (line, notes))
    }

    /// Puts the log and the lock file back at their paths when they are not there.
    fn repair(&mut self) -> Result<Vec<String>, LogError> {
        let mut notes = Vec::new();
        let io_err = |path: &Path| {
            let path = path.to_owned();
            move |source| LogError::Io { path, source }
        };
        let dir = self.path.parent().unwrap_or(Path::new(".")).to_owned();
        let layout = Layout::new(dir.clone());
        if !dir.is_dir() {
            fs::create_dir(&dir).map_err(io_err(&dir))?;
            notes.push(format!(
                "the results folder {} was deleted while wetload watched; it was created again",
                dir.display()
            ));
        }
        let lock_path = layout.lock();
        if !same_file(&lock_path, &self.lock) {
            // The folder lock is still held, so no other watcher can hold a new lock file.
            self.lock = take_lock(&lock_path, &self.path)?;
            notes.push(format!(
                "the lock file {} was deleted or replaced while wetload watched; it was created and locked again",
                lock_path.display()
            ));
        }
        if !same_file(&self.path, &self.file) {
            let path = self.path.clone();
            let replaced = path.exists();
            if replaced {
                let aside = dir.join(format!(
                    "{LOG_NAME}.replaced-{}",
                    jiff::Timestamp::now().strftime("%Y%m%dT%H%M%S%.3fZ")
                ));
                fs::rename(&path, &aside).map_err(io_err(&path))?;
                notes.push(format!(
                    "another file took the place of the change log {}; it was moved to {}",
                    path.display(),
                    aside.display()
                ));
            }
            // The open file still holds every line: write it again at the path.
            let mut old = Vec::new();
            self.file.seek(SeekFrom::Start(0)).map_err(io_err(&path))?;
            self.file.read_to_end(&mut old).map_err(io_err(&path))?;
            let mut fresh = OpenOptions::new()
                .create_new(true)
                .read(true)
                .append(true)
                .open(&path)
                .map_err(io_err(&path))?;
            fresh.write_all(&old).map_err(io_err(&path))?;
            fresh.sync_all().map_err(io_err(&path))?;
            if let Ok(d) = File::open(&dir) {
                let _ = d.sync_all();
            }
            self.file = fresh;
            let lines = old.iter().filter(|&&b| b == b'\n').count();
            notes.push(format!(
                "the change log {} was {} while wetload watched; it was written again with its {lines} line(s) from the open file, and logging goes on there",
                path.display(),
                if replaced { "replaced" } else { "deleted" }
            ));
        }
        Ok(notes)
    }

    /// The log's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

/// Moves a torn last line (bytes after the last newline of `bytes`, the log's tail from
/// some offset to its end) aside into `changes.jsonl.torn` and cuts it from the log.
/// Returns how many bytes of `bytes` are complete lines, and a note when it cut.
fn repair_torn_tail(
    file: &mut File,
    bytes: &[u8],
    layout: &Layout,
) -> io::Result<(usize, Option<String>)> {
    let complete = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
    if complete == bytes.len() {
        return Ok((complete, None));
    }
    let torn = &bytes[complete..];
    let aside = layout.torn_lines();
    let mut f = OpenOptions::new().create(true).append(true).open(&aside)?;
    f.write_all(torn)?;
    f.write_all(b"\n")?;
    f.sync_all()?;
    let len = file.metadata()?.len();
    file.set_len(len - torn.len() as u64)?;
    file.sync_all()?;
    Ok((
        complete,
        Some(format!(
            "the last line of {} was incomplete ({} bytes, from an interrupted run); it was moved to {}",
            layout.change_log().display(),
            torn.len(),
            aside.display()
        )),
    ))
}

/// Appends one line to the change log of the results folder `dir` without taking the
/// folder lock (for `calc`, which may run beside a watcher): creates `dir` and the log
/// when missing, takes the append lock (waiting for a writer that holds it: writers hold
/// it only while they append), repairs a torn last line, hands every line to `make`, and
/// writes what it returns (nothing for `None`), calling `beside` with it on another
/// thread while the line is written and flushed. Returns the line written, any note, and
/// what `beside` returned.
pub fn append_once<R: Send>(
    dir: &Path,
    make: impl FnOnce(&[Value]) -> Option<Value>,
    beside: impl FnOnce(Option<&Value>) -> R + Send,
) -> Result<(Option<Value>, Vec<String>, R), LogError> {
    let layout = Layout::new(dir.to_owned());
    let path = layout.change_log();
    let err = |source| LogError::Io {
        path: path.clone(),
        source,
    };
    match fs::create_dir(dir) {
        Ok(()) => {}
        Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {}
        Err(e) => return Err(err(e)),
    }
    let mut file = OpenOptions::new()
        .create(true)
        .read(true)
        .append(true)
        .open(&path)
        .map_err(err)?;
    file.lock().map_err(err)?;
    let mut bytes = Vec::new();
    file.read_to_end(&mut bytes).map_err(err)?;
    let (complete, torn) = repair_torn_tail(&mut file, &bytes, &layout).map_err(err)?;
    let lines: Vec<Value> = bytes[..complete]
        .split(|&b| b == b'\n')
        .filter_map(|l| serde_json::from_slice(l).ok())
        .collect();
    drop(bytes);
    let line = make(&lines);
    let (written, beside) = rayon::join(
        || match &line {
            Some(line) => {
                let mut out = serde_json::to_vec(line).expect("a JSON value always serializes");
                out.push(b'\n');
                file.write_all(&out).and_then(|()| file.sync_data())
            }
            None => Ok(()),
        },
        || beside(line.as_ref()),
    );
    written.map_err(err)?;
    let _ = file.unlock();
    Ok((line, torn.into_iter().collect(), beside))
}

/// The complete, parseable lines of the change log in the results folder `dir` (none when
/// there is no log); lines that are not JSON, and a torn last line, are skipped. For
/// readers such as the page; the watcher's own reading is [`ChangeLog::open`].
pub fn read_lines(dir: &Path) -> Vec<Value> {
    let Ok(bytes) = fs::read(Layout::new(dir.to_owned()).change_log()) else {
        return Vec::new();
    };
    bytes
        .split(|&b| b == b'\n')
        .filter_map(|line| serde_json::from_slice(line).ok())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn a_torn_tail_is_moved_aside_and_complete_lines_survive() {
        let top = tempfile::tempdir().expect("temp dir");
        let dir = &top.path().join("results");
        fs::create_dir(dir).expect("results");
        fs::write(
            dir.join(LOG_NAME),
            "{\"event\":\"computed\",\"mesh\":\"a.stl\"}\n{\"event\":\"comp",
        )
        .expect("write");
        let mut lines = 0;
        let (mut log, rec) = ChangeLog::open(dir, |_| lines += 1).expect("open");
        assert_eq!(lines, 1);
        assert_eq!(rec.notes.len(), 1);
        log.append(&json!({"event": "removed"})).expect("append");
        drop(log);
        let text = fs::read_to_string(dir.join(LOG_NAME)).expect("read");
        assert_eq!(
            text,
            "{\"event\":\"computed\",\"mesh\":\"a.stl\"}\n{\"event\":\"removed\"}\n"
        );
        let torn = fs::read_to_string(dir.join("changes.jsonl.torn")).expect("torn");
        assert_eq!(torn, "{\"event\":\"comp\n");
    }

    #[test]
    fn a_second_log_on_the_same_folder_is_refused() {
        let top = tempfile::tempdir().expect("temp dir");
        let dir = top.path().join("results");
        let (_first, _) = ChangeLog::open(&dir, |_| {}).expect("open");
        match ChangeLog::open(&dir, |_| {}) {
            Err(LogError::Locked { .. }) => {}
            other => panic!("expected Locked, got {other:?}"),
        }
        // Neither deleting the lock file nor the whole results folder lets a second in.
        fs::remove_file(dir.join(LOCK_NAME)).expect("rm lock");
        assert!(matches!(
            ChangeLog::open(&dir, |_| {}),
            Err(LogError::Locked { .. })
        ));
        fs::remove_dir_all(&dir).expect("rm results");
        assert!(matches!(
            ChangeLog::open(&dir, |_| {}),
            Err(LogError::Locked { .. })
        ));
    }

    #[test]
    fn a_deleted_or_replaced_log_is_written_again_with_every_line() {
        let top = tempfile::tempdir().expect("temp dir");
        let dir = top.path().join("results");
        let (mut log, _) = ChangeLog::open(&dir, |_| {}).expect("open");
        assert!(log.append(&json!({"n": 1})).expect("append").is_empty());
        fs::remove_file(dir.join(LOG_NAME)).expect("rm log");
        let notes = log.append(&json!({"n": 2})).expect("append");
        assert!(notes.iter().any(|n| n.contains("deleted")), "{notes:?}");
        fs::remove_dir_all(&dir).expect("rm results");
        let notes = log.append(&json!({"n": 3})).expect("append");
        assert_eq!(notes.len(), 3, "{notes:?}");
        assert!(dir.join(LOCK_NAME).exists());
        // Another file renamed over the log.
        fs::write(dir.join("other"), "{\"foreign\":true}\n").expect("write");
        fs::rename(dir.join("other"), dir.join(LOG_NAME)).expect("replace");
        let notes = log.append(&json!({"n": 4})).expect("append");
        assert!(notes.iter().any(|n| n.contains("moved to")), "{notes:?}");
        let text = fs::read_to_string(dir.join(LOG_NAME)).expect("read");
        assert_eq!(text, "{\"n\":1}\n{\"n\":2}\n{\"n\":3}\n{\"n\":4}\n");
    }
}
