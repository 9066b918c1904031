//! Writing into `results/`: whole files replaced atomically, and files removed.
//!
//! Owns the one way a file under `results/` is written, so that a reader (a viewer, a
//! script, the page) sees the old file or the new one, never a part. It does not know
//! which file is which; [`super::Layout`] names them.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use thiserror::Error;

/// A file under `results/` that could not be written or removed.
#[derive(Debug, Error)]
#[error("cannot write {}: {source}", path.display())]
pub struct WriteError {
    pub path: PathBuf,
    pub source: io::Error,
}

/// Writes `bytes` to `path` so that readers see the old file or the new one, never a
/// part: a temporary file in the same folder, flushed to disk, renamed over the target,
/// then the folder flushed. Creates the folder if needed.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
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
    fs::create_dir_all(dir).map_err(err)?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".wetload-")
        .suffix(".tmp")
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
    tmp.as_file().sync_all().map_err(err)?;
    tmp.persist(path).map_err(|e| err(e.error))?;
    // Make the rename itself durable; a folder that cannot be opened for this is no error.
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
    Ok(())
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
}
