//! One recomputation: read a mesh and its sidecar, compute, write the result file.
//!
//! `calc`, `watch --once` and the watcher all call [`calc_file`]; the watcher adds only
//! events and state. This is the only layer that reads inputs and writes results.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use thiserror::Error;

use crate::compute::{self, ComputeError, MeshResult, Model};
use crate::mesh::{self, Mesh, MeshError};
use crate::outputs;
use crate::report;
use crate::sidecar::{self, Sidecar, SidecarError};

/// Name of the folder, beside the meshes, that receives every output.
pub const RESULTS_DIR: &str = "results";

/// Why one mesh could not be computed. Every message names the file.
#[derive(Debug, Error)]
pub enum RunError {
    #[error("cannot read {}: {source}", path.display())]
    Read { path: PathBuf, source: io::Error },
    #[error(transparent)]
    Mesh(#[from] MeshError),
    #[error(transparent)]
    Sidecar(#[from] SidecarError),
    #[error(
        "{}: no sidecar {} beside it; create it with at least {{\"units\": \"mm\", \"liquid\": {{\"level\": 5.0, \"density\": 1000}}}}",
        mesh.display(),
        sidecar.display()
    )]
    NoSidecar { mesh: PathBuf, sidecar: PathBuf },
    #[error("{} (with {}): {source}", mesh.display(), sidecar.display())]
    Compute {
        mesh: PathBuf,
        sidecar: PathBuf,
        source: Box<ComputeError>,
    },
    #[error("cannot write {}: {source}", path.display())]
    Write { path: PathBuf, source: io::Error },
    #[error(
        "{}: the file is {}, more than the {} wetload reads{}",
        path.display(),
        crate::limits::human_bytes(*len),
        crate::limits::human_bytes(*limit),
        if *sidecar { "; a sidecar holds settings only" } else { "; if the mesh is genuine, raise the limit with the environment variable WETLOAD_MAX_FILE_SIZE (e.g. 8G)" }
    )]
    TooLarge {
        path: PathBuf,
        len: u64,
        limit: u64,
        sidecar: bool,
    },
}

/// Reads a file of at most `limit` bytes (see [`crate::limits::read_capped`]).
fn read_file(path: &Path, limit: u64, sidecar: bool) -> Result<Vec<u8>, RunError> {
    crate::limits::read_capped(path, limit).map_err(|e| match e {
        crate::limits::ReadError::Io(source) => RunError::Read {
            path: path.to_owned(),
            source,
        },
        crate::limits::ReadError::TooLarge { len, limit } => RunError::TooLarge {
            path: path.to_owned(),
            len,
            limit,
            sidecar,
        },
    })
}

/// The sidecar of a mesh: `<stem>.json` beside it.
pub fn sidecar_path(mesh: &Path) -> PathBuf {
    mesh.with_extension("json")
}

/// The results folder of a mesh: `results/` beside it.
pub fn results_dir(mesh: &Path) -> PathBuf {
    mesh.parent()
        .map_or_else(|| PathBuf::from(RESULTS_DIR), |d| d.join(RESULTS_DIR))
}

/// The file stem of a path as text (lossy for names that are not UTF-8).
pub fn stem(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// The inputs of one computation as read from disk.
pub struct Inputs {
    pub mesh_bytes: Vec<u8>,
    pub sidecar_text: String,
}

/// Reads a mesh and its sidecar, each refused unread when larger than its cap (the
/// mesh's from [`crate::limits::current`], the sidecar's [`crate::limits::MAX_SIDECAR_BYTES`]).
pub fn read_inputs(mesh_path: &Path) -> Result<Inputs, RunError> {
    let mesh_bytes = read_file(mesh_path, crate::limits::current().max_file_bytes, false)?;
    let side = sidecar_path(mesh_path);
    let sidecar_text = match read_file(&side, crate::limits::MAX_SIDECAR_BYTES, true) {
        Ok(bytes) => String::from_utf8(bytes).map_err(|e| RunError::Read {
            path: side.clone(),
            source: io::Error::new(
                io::ErrorKind::InvalidData,
                format!("not UTF-8 text (byte {})", e.utf8_error().valid_up_to()),
            ),
        })?,
        Err(RunError::Read { source, .. }) if source.kind() == io::ErrorKind::NotFound => {
            return Err(RunError::NoSidecar {
                mesh: mesh_path.to_owned(),
                sidecar: side,
            });
        }
        Err(e) => return Err(e),
    };
    Ok(Inputs {
        mesh_bytes,
        sidecar_text,
    })
}

/// Reads and parses a mesh file alone, under the limits of [`crate::limits::current`].
pub fn read_mesh_file(path: &Path) -> Result<Mesh, RunError> {
    let limits = crate::limits::current();
    let bytes = read_file(path, limits.max_file_bytes, false)?;
    Ok(mesh::read_mesh_with(path, &bytes, &limits)?)
}

/// Parses and computes inputs already read (no file system access).
pub fn compute_inputs(mesh_path: &Path, inputs: Inputs) -> Result<MeshResult, RunError> {
    compute_parsed(mesh_path, inputs).map(|c| c.result)
}

/// A computed mesh with what the exports need: the model it was computed on and the
/// parsed sidecar.
pub struct Computed {
    pub model: Model,
    pub sidecar: Sidecar,
    pub result: MeshResult,
}

/// Like [`compute_inputs`], keeping the model and the sidecar. The file's bytes are
/// dropped as soon as the mesh is read, and the mesh is given up to the computation, so
/// no two copies of a large mesh are held at once.
pub fn compute_parsed(mesh_path: &Path, inputs: Inputs) -> Result<Computed, RunError> {
    let side = sidecar_path(mesh_path);
    let sidecar = sidecar::parse_sidecar(&side, &inputs.sidecar_text)?;
    let mesh = mesh::read_mesh_with(mesh_path, &inputs.mesh_bytes, &crate::limits::current())?;
    drop(inputs);
    let name = mesh_path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let (result, model) =
        compute::compute_model(&name, mesh, &sidecar).map_err(|source| RunError::Compute {
            mesh: mesh_path.to_owned(),
            sidecar: side,
            source: Box::new(source),
        })?;
    Ok(Computed {
        model,
        sidecar,
        result,
    })
}

/// Reads, computes and writes `results/<stem>.json`, the exports and the folder's page;
/// returns the result.
pub fn calc_file(mesh_path: &Path) -> Result<MeshResult, RunError> {
    let inputs = read_inputs(mesh_path)?;
    let computed = compute_parsed(mesh_path, inputs)?;
    let dir = results_dir(mesh_path);
    let out = dir.join(format!("{}.json", stem(mesh_path)));
    write_atomic(&out, &report::json::render(&computed.result))?;
    outputs::write_outputs(
        mesh_path,
        &computed.model,
        &computed.sidecar,
        &computed.result,
    )?;
    outputs::write_folder_page(&dir, false)?;
    Ok(computed.result)
}

/// Writes `bytes` to `path` so that readers see the old file or the new one, never a
/// part: a temporary file in the same folder, flushed to disk, renamed over the target,
/// then the folder flushed. Creates the folder if needed.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), RunError> {
    let err = |source| RunError::Write {
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
