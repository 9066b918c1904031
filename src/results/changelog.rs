//! The change log `results/changes.jsonl`: one JSON object per line, appended, never
//! rewritten, and the folder lock that keeps two watchers from writing it at once.
//!
//! # Line format
//!
//! Every line has `time` (RFC 3339, UTC), `mesh` (file name) and `event`:
//!
//! * `"computed"`: also `iteration` (1, 2, … per mesh), `mesh_hash` and `sidecar_hash`
//!   (BLAKE3 of the bytes computed from, hex), `facets`, `warnings` (count), and `cases`:
//!   `[{name, force, moment, vertical_force, uplift, downthrust, wetted_area,
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
    /// Held for the life of the log: the advisory lock lives as long as the handle.
    _lock: File,
}

/// What was in the log when it was opened.
#[derive(Debug, Default)]
pub struct Recovered {
    /// Every complete line that parsed, in order.
    pub lines: Vec<Value>,
    /// What was repaired or skipped, for the terminal.
    pub notes: Vec<String>,
}

impl ChangeLog {
    /// Opens (creating) `dir/changes.jsonl` for appending, takes the folder lock, repairs
    /// a torn last line and returns the complete lines.
    pub fn open(dir: &Path) -> Result<(ChangeLog, Recovered), LogError> {
        let layout = Layout::new(dir.to_owned());
        let path = layout.change_log();
        let io_err = |source| LogError::Io {
            path: path.clone(),
            source,
        };
        fs::create_dir_all(dir).map_err(io_err)?;
        let lock_path = layout.lock();
        let lock = OpenOptions::new()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&lock_path)
            .map_err(io_err)?;
        match lock.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) => return Err(LogError::Locked { path }),
            Err(fs::TryLockError::Error(e)) => return Err(io_err(e)),
        }

        let mut file = OpenOptions::new()
            .create(true)
            .read(true)
            .append(true)
            .open(&path)
            .map_err(io_err)?;
        let mut bytes = Vec::new();
        file.read_to_end(&mut bytes).map_err(io_err)?;
        let mut recovered = Recovered::default();
        let complete = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
        if complete < bytes.len() {
            let torn = &bytes[complete..];
            let aside = layout.torn_lines();
            let mut f = OpenOptions::new()
                .create(true)
                .append(true)
                .open(&aside)
                .map_err(io_err)?;
            f.write_all(torn)
                .and_then(|()| f.write_all(b"\n"))
                .map_err(io_err)?;
            f.sync_all().map_err(io_err)?;
            file.set_len(complete as u64).map_err(io_err)?;
            file.sync_all().map_err(io_err)?;
            recovered.notes.push(format!(
                "the last line of {} was incomplete ({} bytes, from an interrupted run); it was moved to {}",
                path.display(),
                torn.len(),
                aside.display()
            ));
        }
        file.seek(SeekFrom::End(0)).map_err(io_err)?;
        for (i, line) in bytes[..complete].split(|&b| b == b'\n').enumerate() {
            if line.iter().all(u8::is_ascii_whitespace) {
                continue;
            }
            match serde_json::from_slice::<Value>(line) {
                Ok(v) => recovered.lines.push(v),
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
                _lock: lock,
            },
            recovered,
        ))
    }

    /// Appends one line and flushes it to disk.
    pub fn append(&mut self, line: &Value) -> Result<(), LogError> {
        let mut bytes = serde_json::to_vec(line).expect("a JSON value always serializes");
        bytes.push(b'\n');
        let err = |source| LogError::Io {
            path: self.path.clone(),
            source,
        };
        self.file.write_all(&bytes).map_err(err)?;
        self.file.sync_data().map_err(err)
    }

    /// The log's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
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
        let dir = tempfile::tempdir().expect("temp dir");
        fs::write(
            dir.path().join(LOG_NAME),
            "{\"event\":\"computed\",\"mesh\":\"a.stl\"}\n{\"event\":\"comp",
        )
        .expect("write");
        let (mut log, rec) = ChangeLog::open(dir.path()).expect("open");
        assert_eq!(rec.lines.len(), 1);
        assert_eq!(rec.notes.len(), 1);
        log.append(&json!({"event": "removed"})).expect("append");
        drop(log);
        let text = fs::read_to_string(dir.path().join(LOG_NAME)).expect("read");
        assert_eq!(
            text,
            "{\"event\":\"computed\",\"mesh\":\"a.stl\"}\n{\"event\":\"removed\"}\n"
        );
        let torn = fs::read_to_string(dir.path().join("changes.jsonl.torn")).expect("torn");
        assert_eq!(torn, "{\"event\":\"comp\n");
    }

    #[test]
    fn a_second_log_on_the_same_folder_is_refused() {
        let dir = tempfile::tempdir().expect("temp dir");
        let (_first, _) = ChangeLog::open(dir.path()).expect("open");
        match ChangeLog::open(dir.path()) {
            Err(LogError::Locked { .. }) => {}
            other => panic!("expected Locked, got {other:?}"),
        }
    }
}
