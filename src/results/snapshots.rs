//! The snapshot store `results/.snapshots/`: the exact bytes of the mesh and the sidecar
//! of every computed iteration, kept by content so that an old result can be traced to
//! its geometry and its inputs extracted again.
//!
//! # Layout and invariants
//!
//! A blob is stored once, at `.snapshots/<first two hex digits>/<hash>`, where `<hash>` is
//! the BLAKE3 hash of its bytes in lower-case hex: the `mesh_hash` and `sidecar_hash` of
//! the change log's lines. A hundred saves of the same sidecar cost one copy.
//!
//! A blob is written to a temporary file `.snapshots/.wetload-<pid>-*.tmp`, flushed to
//! disk, and only then renamed to its name, so a listed blob is always whole: a process
//! killed during a write leaves at most a temporary file, which the next run removes
//! ([`super::clean_orphans`]). Blobs are checked against their name when read.
//!
//! # The cap
//!
//! When the store holds more than its cap (default [`DEFAULT_CAP`], 1 GiB; the caller
//! reads the override, `WETLOAD_SNAPSHOT_CAP`), [`prune`] removes blobs until it fits:
//! first those no iteration refers to (left by a computation that failed or was killed
//! before its line was logged), then the ones whose most recent use is oldest. A blob
//! marked protected (the baseline's and the latest iteration's of every mesh) is never
//! removed, even when the protected ones alone exceed the cap.
//!
//! Owns: the store's places, its writes and its pruning. It does not decide which
//! iterations matter (the caller passes their uses) nor read the change log.

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

use super::write::{TEMP_PREFIX, WriteError};

/// Name of the store's folder inside `results/`.
pub const DIR_NAME: &str = ".snapshots";

/// The store's size cap when none is given, bytes (1 GiB).
pub const DEFAULT_CAP: u64 = 1 << 30;

/// Whether `hash` looks like a BLAKE3 hex digest (64 lower-case hex digits), so that it
/// can name a file without leaving the store.
pub fn is_hash(hash: &str) -> bool {
    hash.len() == 64
        && hash
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

/// The place of the blob `hash` in the store at `store` (`results/.snapshots`).
pub fn blob_path(store: &Path, hash: &str) -> PathBuf {
    store.join(&hash[..2.min(hash.len())]).join(hash)
}

/// The BLAKE3 hash of `bytes`, lower-case hex.
pub fn hash_of(bytes: &[u8]) -> String {
    blake3::hash(bytes).to_hex().to_string()
}

/// Whether the blob `hash` is in the store.
pub fn has(store: &Path, hash: &str) -> bool {
    is_hash(hash) && blob_path(store, hash).is_file()
}

/// Stores `bytes` under their hash `hash` unless a blob of that name is there already;
/// returns whether it wrote one. Refuses (an error) bytes whose hash is not `hash`.
pub fn store(store: &Path, hash: &str, bytes: &[u8]) -> Result<bool, WriteError> {
    let path = blob_path(store, hash);
    let wrong = || WriteError {
        path: path.clone(),
        source: io::Error::other("the bytes do not have the hash they are stored under"),
    };
    if !is_hash(hash) {
        return Err(wrong());
    }
    // A blob is named by its content: one already there holds these bytes (checked when
    // it is read back), so they are hashed again only when a blob is written.
    if path.is_file() {
        return Ok(false);
    }
    if hash_of(bytes) != hash {
        return Err(wrong());
    }
    put(store, &path, |f| {
        f.write_all(bytes).map_err(|source| WriteError {
            path: path.clone(),
            source,
        })?;
        Ok(true)
    })
}

/// Stores the file at `from` under `hash`, copying it a block at a time (a large mesh is
/// never held whole), unless the blob is there already. Returns `Ok(None)` when the
/// file's bytes no longer have that hash (it changed since it was read): nothing is
/// stored then. Otherwise whether it wrote one.
pub fn store_file(store: &Path, hash: &str, from: &Path) -> Result<Option<bool>, WriteError> {
    let path = blob_path(store, hash);
    if !is_hash(hash) {
        return Err(WriteError {
            path,
            source: io::Error::other("not a content hash"),
        });
    }
    if path.is_file() {
        return Ok(Some(false));
    }
    let read_err = |source| WriteError {
        path: from.to_owned(),
        source,
    };
    let mut src = fs::File::open(from).map_err(read_err)?;
    let written = put(store, &path, |f| {
        let mut hasher = blake3::Hasher::new();
        let mut buf = vec![0u8; 1 << 20];
        loop {
            let n = src.read(&mut buf).map_err(read_err)?;
            if n == 0 {
                break;
            }
            hasher.update(&buf[..n]);
            f.write_all(&buf[..n]).map_err(|source| WriteError {
                path: path.clone(),
                source,
            })?;
        }
        Ok(hasher.finalize().to_hex().as_str() == hash)
    })?;
    Ok(written.then_some(true))
}

/// Writes the blob at `path` with what `fill` writes into a temporary file at the top of
/// the store (where `clean_orphans` looks), then syncs it and renames it into place, so
/// no half-written blob is ever listed. `fill` returns `false` to give it up: nothing is
/// stored, and `false` is returned.
fn put(
    store: &Path,
    path: &Path,
    fill: impl FnOnce(&mut fs::File) -> Result<bool, WriteError>,
) -> Result<bool, WriteError> {
    let err = |source| WriteError {
        path: path.to_owned(),
        source,
    };
    let folder = path.parent().unwrap_or(store);
    for dir in [store, folder] {
        match fs::create_dir(dir) {
            Ok(()) => {}
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {}
            Err(e) => return Err(err(e)),
        }
    }
    let mut tmp = tempfile::Builder::new()
        .prefix(&format!("{TEMP_PREFIX}{}-", std::process::id()))
        .suffix(".tmp")
        .tempfile_in(store)
        .map_err(err)?;
    if !fill(tmp.as_file_mut())? {
        return Ok(false);
    }
    shareable(tmp.as_file()).map_err(err)?;
    tmp.as_file().sync_all().map_err(err)?;
    tmp.persist(path).map_err(|e| err(e.error))?;
    if let Ok(d) = fs::File::open(folder) {
        let _ = d.sync_all();
    }
    Ok(true)
}

/// Temporary files are created private (0600); snapshots are shared like results.
fn shareable(f: &fs::File) -> io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        f.set_permissions(fs::Permissions::from_mode(0o644))?;
    }
    #[cfg(not(unix))]
    let _ = f;
    Ok(())
}

/// Why a blob cannot be read back.
#[derive(Debug, thiserror::Error)]
pub enum ReadError {
    #[error("the snapshot {} is not in the store (pruned by the size cap, or never kept)", path.display())]
    Missing { path: PathBuf },
    #[error("cannot read the snapshot {}: {source}", path.display())]
    Io { path: PathBuf, source: io::Error },
    #[error("the snapshot {} is damaged: its bytes no longer have the hash it is named by", path.display())]
    Damaged { path: PathBuf },
}

/// The bytes of the blob `hash`, checked against it.
pub fn read(store: &Path, hash: &str) -> Result<Vec<u8>, ReadError> {
    let path = blob_path(store, hash);
    if !is_hash(hash) {
        return Err(ReadError::Missing { path });
    }
    let mut bytes = Vec::new();
    match fs::File::open(&path).and_then(|mut f| f.read_to_end(&mut bytes)) {
        Ok(_) => {}
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Err(ReadError::Missing { path }),
        Err(source) => return Err(ReadError::Io { path, source }),
    }
    if hash_of(&bytes) != hash {
        return Err(ReadError::Damaged { path });
    }
    Ok(bytes)
}

/// Every blob in the store with its size, bytes.
fn blobs(store: &Path) -> BTreeMap<String, u64> {
    let mut out = BTreeMap::new();
    let Ok(top) = fs::read_dir(store) else {
        return out;
    };
    for sub in top.filter_map(Result::ok) {
        if !sub.file_type().is_ok_and(|t| t.is_dir()) {
            continue;
        }
        let Ok(rd) = fs::read_dir(sub.path()) else {
            continue;
        };
        for e in rd.filter_map(Result::ok) {
            let name = e.file_name().to_string_lossy().into_owned();
            if is_hash(&name)
                && let Ok(m) = e.metadata()
                && m.is_file()
            {
                out.insert(name, m.len());
            }
        }
    }
    out
}

/// The total size of the store's blobs, bytes.
pub fn size(store: &Path) -> u64 {
    blobs(store).values().sum()
}

/// One use of a blob by a logged iteration, oldest first in the slice given to [`prune`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Use {
    pub hash: String,
    /// The baseline's or the latest iteration's inputs: never removed.
    pub protected: bool,
}

/// Removes blobs until the store holds at most `cap` bytes (see the module doc for the
/// order); `uses` lists every iteration's use of a blob, oldest first. Returns the hashes
/// removed. Called only while the store is over its cap, it reads `uses` lazily.
pub fn prune(store: &Path, cap: u64, uses: impl FnOnce() -> Vec<Use>) -> Vec<String> {
    let on_disk = blobs(store);
    let mut total: u64 = on_disk.values().sum();
    if total <= cap {
        return Vec::new();
    }
    let uses = uses();
    let protected: BTreeSet<&str> = uses
        .iter()
        .filter(|u| u.protected)
        .map(|u| u.hash.as_str())
        .collect();
    // The position of each blob's most recent use.
    let mut last: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, u) in uses.iter().enumerate() {
        last.insert(u.hash.as_str(), i);
    }
    let mut order: Vec<(Option<usize>, &String)> = on_disk
        .keys()
        .filter(|h| !protected.contains(h.as_str()))
        .map(|h| (last.get(h.as_str()).copied(), h))
        .collect();
    // Unused blobs (None) first, then by most recent use.
    order.sort();
    let mut removed = Vec::new();
    for (_, h) in order {
        if total <= cap {
            break;
        }
        if fs::remove_file(blob_path(store, h)).is_ok() {
            total -= on_disk[h];
            removed.push(h.clone());
        }
    }
    removed
}

#[cfg(test)]
mod tests {
    use super::*;

    fn blob(n: usize, fill: u8) -> (String, Vec<u8>) {
        let bytes = vec![fill; n];
        (hash_of(&bytes), bytes)
    }

    #[test]
    fn the_same_bytes_are_stored_once_and_read_back_checked() {
        let top = tempfile::tempdir().expect("temp dir");
        let s = top.path().join(DIR_NAME);
        let (h, b) = blob(100, 7);
        assert!(store(&s, &h, &b).expect("stored"));
        for _ in 0..100 {
            assert!(!store(&s, &h, &b).expect("already there"));
        }
        assert_eq!(size(&s), 100);
        assert_eq!(read(&s, &h).expect("read"), b);
        // Bytes under a hash that is not theirs are refused.
        let (other, _) = blob(5, 1);
        assert!(store(&s, &other, &b).is_err());
        // A damaged blob is not handed out.
        fs::write(blob_path(&s, &h), b"tampered").expect("write");
        assert!(matches!(read(&s, &h), Err(ReadError::Damaged { .. })));
        assert!(matches!(read(&s, &other), Err(ReadError::Missing { .. })));
        assert!(matches!(read(&s, "../x"), Err(ReadError::Missing { .. })));
        // A file is copied under its hash, and not when it no longer has it.
        let file = top.path().join("m.stl");
        let (h2, b2) = blob(3_000_000, 9);
        fs::write(&file, &b2).expect("write");
        assert_eq!(store_file(&s, &h2, &file).expect("copied"), Some(true));
        assert_eq!(read(&s, &h2).expect("read"), b2);
        let (h3, _) = blob(10, 3);
        assert_eq!(store_file(&s, &h3, &file).expect("checked"), None);
        assert!(!has(&s, &h3));
    }

    #[test]
    fn the_cap_removes_unused_then_oldest_blobs_but_never_protected_ones() {
        let top = tempfile::tempdir().expect("temp dir");
        let s = top.path().join(DIR_NAME);
        let all: Vec<(String, Vec<u8>)> = (0..5).map(|i| blob(1000, i as u8)).collect();
        for (h, b) in &all {
            store(&s, h, b).expect("stored");
        }
        let used = |i: usize, protected: bool| Use {
            hash: all[i].0.clone(),
            protected,
        };
        // Iterations use blobs 0 (baseline), 1, 2, 1 again, 3 (latest); blob 4 is unused.
        let uses = vec![
            used(0, true),
            used(1, false),
            used(2, false),
            used(1, false),
            used(3, true),
        ];
        // Within the cap: nothing goes, and the uses are not even asked for.
        assert!(prune(&s, 5000, || panic!("not needed")).is_empty());
        // 2000 bytes must go: the unused blob, then blob 2 (its last use is older than 1's).
        let removed = prune(&s, 3000, || uses.clone());
        assert_eq!(removed, [all[4].0.clone(), all[2].0.clone()]);
        assert_eq!(size(&s), 3000);
        // A cap below the protected ones: everything else goes, they stay.
        let removed = prune(&s, 1, || uses.clone());
        assert_eq!(removed, [all[1].0.clone()]);
        assert!(has(&s, &all[0].0) && has(&s, &all[3].0));
        assert_eq!(size(&s), 2000);
    }
}
