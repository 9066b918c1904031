//! One recomputation: read a mesh and its sidecar, compute, write the result file.
//!
//! `calc`, `watch --once` and the watcher all call into here; the watcher adds only
//! events and state. This is the only layer that reads inputs; what it writes goes
//! through [`outputs`] (which writer for which file) into the places that
//! [`crate::results`] names.
//!
//! It does not parse, integrate or render: the mesh readers, the sidecar's validation,
//! [`crate::compute`] and [`crate::report`] do.

pub mod iterations;
pub mod outputs;
pub mod record;

use std::fs;
use std::io::{self, Read};
use std::path::{Path, PathBuf};

use thiserror::Error;

use crate::compute::{self, ComputeError, MeshResult, Model};
use crate::hydro::{Progress, Quiet, Stage, Tally};
use crate::mesh::{self, BinaryStl, Mesh, MeshError};
use crate::report;
use crate::report::units::UnitSystem;
use crate::results::{self, Layout, WriteError};
use crate::sidecar::{self, Project, ProjectError, Sidecar, SidecarError};

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
    #[error(transparent)]
    Write(#[from] WriteError),
    #[error(transparent)]
    Log(#[from] results::changelog::LogError),
    #[error(transparent)]
    Project(#[from] ProjectError),
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
    crate::limits::read_capped(path, limit).map_err(|e| read_error(path, e, sidecar))
}

/// Opens a mesh file as [`crate::limits::read_capped`] would read it: a regular file of at
/// most `limit` bytes. Returns the file and its size.
fn open_capped(path: &Path, limit: u64) -> Result<(fs::File, u64), RunError> {
    crate::limits::open_capped(path, limit).map_err(|e| read_error(path, e, false))
}

/// A capped read's failure as the error of a run, naming the file.
fn read_error(path: &Path, e: crate::limits::ReadError, sidecar: bool) -> RunError {
    match e {
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
    }
}

/// The sidecar of a mesh: `<stem>.json` beside it.
pub fn sidecar_path(mesh: &Path) -> PathBuf {
    mesh.with_extension("json")
}

/// The calculation sheet's header of the folder that holds `mesh`: its
/// [`sidecar::PROJECT_FILE`], or `None` when there is none.
pub fn read_project(mesh: &Path) -> Result<Option<Project>, RunError> {
    let path = mesh.parent().map_or_else(
        || PathBuf::from(sidecar::PROJECT_FILE),
        |d| d.join(sidecar::PROJECT_FILE),
    );
    match read_file(&path, crate::limits::MAX_SIDECAR_BYTES, true) {
        Ok(bytes) => {
            let text = String::from_utf8_lossy(&bytes);
            Ok(Some(sidecar::parse_project(&path, &text)?))
        }
        Err(RunError::Read { source, .. }) if source.kind() == io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(e),
    }
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
    let sidecar_text = read_sidecar_text(mesh_path)?;
    Ok(Inputs {
        mesh_bytes,
        sidecar_text,
    })
}

/// The text of a mesh's sidecar, or [`RunError::NoSidecar`].
fn read_sidecar_text(mesh_path: &Path) -> Result<String, RunError> {
    let side = sidecar_path(mesh_path);
    match read_file(&side, crate::limits::MAX_SIDECAR_BYTES, true) {
        Ok(bytes) => String::from_utf8(bytes).map_err(|e| RunError::Read {
            path: side.clone(),
            source: io::Error::new(
                io::ErrorKind::InvalidData,
                format!("not UTF-8 text (byte {})", e.utf8_error().valid_up_to()),
            ),
        }),
        Err(RunError::Read { source, .. }) if source.kind() == io::ErrorKind::NotFound => {
            Err(RunError::NoSidecar {
                mesh: mesh_path.to_owned(),
                sidecar: side,
            })
        }
        Err(e) => Err(e),
    }
}

/// Bytes of binary STL records read at a time by [`read_mesh_streamed`] (16,384 facets).
const STREAM_BLOCK: usize = 16_384 * BinaryStl::RECORD;

/// Reads a mesh file that has been opened (`file`, of `len` bytes, within the size cap).
///
/// A binary STL (by its size, as [`mesh::read_stl`] decides) is converted a block at a
/// time, so its bytes are never held whole: for a million facets that is 50 MB less to
/// allocate and touch. Any other file is read whole and parsed as usual. `progress` hears
/// the bytes read ([`Stage::ReadingMesh`]) after every block, or before and after the
/// whole read and parse of another file.
fn read_mesh_streamed(
    path: &Path,
    mut file: fs::File,
    len: u64,
    hasher: &mut blake3::Hasher,
    progress: &dyn Progress,
) -> Result<Mesh, RunError> {
    let limits = crate::limits::current();
    let io_err = |source| RunError::Read {
        path: path.to_owned(),
        source,
    };
    let is_stl = mesh::is_stl_path(path);
    let header_len = BinaryStl::HEADER as u64;
    let mut header = [0u8; BinaryStl::HEADER];
    if is_stl && len >= header_len {
        file.read_exact(&mut header).map_err(io_err)?;
        if let Some(mut builder) = BinaryStl::for_file(path, &header, len, limits.max_facets)? {
            // Two blocks: the next is read while the last is converted.
            let mut left = (len - header_len) as usize;
            let mut next = vec![0u8; left.min(STREAM_BLOCK)];
            let mut last = vec![0u8; left.min(STREAM_BLOCK)];
            let mut read = |buf: &mut Vec<u8>, left: &mut usize| {
                let n = (*left).min(STREAM_BLOCK);
                buf.truncate(n);
                *left -= n;
                // A file cut short while it is read fails here, naming the file.
                file.read_exact(buf)
            };
            hasher.update(&header);
            let total = (len - header_len) as usize;
            progress.report(Stage::ReadingMesh, 0, len);
            read(&mut next, &mut left).map_err(io_err)?;
            while !next.is_empty() {
                std::mem::swap(&mut next, &mut last);
                // Hashing (one thread) beside the conversion (in chunks, any thread).
                let (got, ()) = rayon::join(
                    || read(&mut next, &mut left),
                    || {
                        rayon::join(|| hasher.update(&last), || builder.push(&last));
                    },
                );
                got.map_err(io_err)?;
                // The blocks converted so far (one block stays read ahead).
                let done = header_len + (total - left - next.len()) as u64;
                progress.report(Stage::ReadingMesh, done, len);
            }
            return Ok(builder.finish(path)?);
        }
    }
    // Not a binary STL by its size: the whole file, within the cap even if it grows.
    progress.report(Stage::ReadingMesh, 0, len);
    let read = if is_stl && len >= header_len {
        header.to_vec()
    } else {
        Vec::new()
    };
    let bytes = crate::limits::read_rest_capped(file, len, limits.max_file_bytes, read)
        .map_err(|e| read_error(path, e, false))?;
    hasher.update(&bytes);
    let mesh = mesh::read_mesh_with(path, &bytes, &limits)?;
    progress.report(Stage::ReadingMesh, len, len);
    Ok(mesh)
}

/// Reads and parses a mesh file alone, under the limits of [`crate::limits::current`]
/// (a binary STL a block at a time, as in [`calc_file`]).
pub fn read_mesh_file(path: &Path) -> Result<Mesh, RunError> {
    let (file, len) = open_capped(path, crate::limits::current().max_file_bytes)?;
    read_mesh_streamed(path, file, len, &mut blake3::Hasher::new(), &Quiet)
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
    compute_parsed_with(mesh_path, inputs, &Quiet)
}

/// [`compute_parsed`], telling `progress` how far it has got (the parse of the mesh's
/// bytes as [`Stage::ReadingMesh`], then the stages of [`compute::compute_model_with`]).
pub fn compute_parsed_with(
    mesh_path: &Path,
    inputs: Inputs,
    progress: &dyn Progress,
) -> Result<Computed, RunError> {
    let sidecar = sidecar::parse_sidecar(&sidecar_path(mesh_path), &inputs.sidecar_text)?;
    let project = read_project(mesh_path)?;
    let len = inputs.mesh_bytes.len() as u64;
    progress.report(Stage::ReadingMesh, 0, len);
    let mesh = mesh::read_mesh_with(mesh_path, &inputs.mesh_bytes, &crate::limits::current())?;
    progress.report(Stage::ReadingMesh, len, len);
    drop(inputs);
    let mut computed = compute_mesh(mesh_path, mesh, sidecar, progress)?;
    computed.result.project = project;
    Ok(computed)
}

/// Computes a parsed mesh with its sidecar.
fn compute_mesh(
    mesh_path: &Path,
    mesh: Mesh,
    sidecar: Sidecar,
    progress: &dyn Progress,
) -> Result<Computed, RunError> {
    let name = mesh_path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let (result, model) =
        compute::compute_model_with(&name, mesh, &sidecar, progress).map_err(|source| {
            RunError::Compute {
                mesh: mesh_path.to_owned(),
                sidecar: sidecar_path(mesh_path),
                source: Box::new(source),
            }
        })?;
    Ok(Computed {
        model,
        sidecar,
        result,
    })
}

/// Reads, computes and writes `results/<stem>.json`, the exports and the folder's page;
/// returns the result.
///
/// In the order of [`read_inputs`] and [`compute_parsed`]: the mesh file is opened (and
/// checked against the size cap), the sidecar read and parsed, then the mesh read and
/// parsed (a binary STL a block at a time) and computed.
pub fn calc_file(mesh_path: &Path) -> Result<MeshResult, RunError> {
    calc_file_in(mesh_path, UnitSystem::Si)
}

/// [`calc_file`], with the folder's page in `units`.
pub fn calc_file_in(mesh_path: &Path, units: UnitSystem) -> Result<MeshResult, RunError> {
    calc_logged(mesh_path, units).map(|c| c.result)
}

/// What [`calc_logged`] did besides computing.
pub struct Logged {
    pub result: MeshResult,
    /// The change-log line written (`computed` or `unchanged`).
    pub line: serde_json::Value,
    /// Things worth a note on the terminal (a snapshot not kept, a torn log line moved).
    pub notes: Vec<String>,
}

/// [`calc_file_in`], returning the change-log line it appended: reads (hashing the bytes
/// as they are read), computes, writes the result and its exports, keeps the inputs in
/// the snapshot store, appends the line (see [`iterations::log_calc`]) and writes the
/// folder's page.
pub fn calc_logged(mesh_path: &Path, units: UnitSystem) -> Result<Logged, RunError> {
    calc_logged_with(mesh_path, units, &Quiet)
}

/// Steps of [`Stage::Writing`] in [`calc_logged_with`]: the result with its exports, the
/// snapshot, the change log's line, the folder's page.
const WRITING_STEPS: u64 = 4;

/// [`calc_logged`], telling `progress` how far it has got: the bytes of the mesh read,
/// the stages of [`compute::compute_model_with`], then the steps of writing.
pub fn calc_logged_with(
    mesh_path: &Path,
    units: UnitSystem,
    progress: &dyn Progress,
) -> Result<Logged, RunError> {
    let (file, len) = open_capped(mesh_path, crate::limits::current().max_file_bytes)?;
    let sidecar_text = read_sidecar_text(mesh_path)?;
    let sidecar = sidecar::parse_sidecar(&sidecar_path(mesh_path), &sidecar_text)?;
    let project = read_project(mesh_path)?;
    let mut hasher = blake3::Hasher::new();
    let mesh = read_mesh_streamed(mesh_path, file, len, &mut hasher, progress)?;
    let hashes = (
        hasher.finalize().to_hex().to_string(),
        results::snapshots::hash_of(sidecar_text.as_bytes()),
    );
    let mut computed = compute_mesh(mesh_path, mesh, sidecar, progress)?;
    computed.result.project = project;
    let layout = Layout::of_mesh(mesh_path, mesh::is_mesh_path);
    let writing = Tally::new(progress, Stage::Writing);
    writing.begin(WRITING_STEPS);
    // While the result is written and flushed to disk, the other thread reads what the
    // folder's page needs besides: the change log as it stands, the other meshes' result
    // documents and the local time zone. This mesh's document and line are taken in after.
    let (written, mut page) = rayon::join(
        || write_computed(&layout, mesh_path, &computed, units),
        || {
            let _ = jiff::tz::TimeZone::system();
            let dir = layout.dir();
            outputs::Page::load(
                Layout::new(dir.to_owned()),
                results::changelog::read_lines(dir),
                units,
            )
        },
    );
    if let Some(dropped) = written? {
        return Err(dropped.error.into());
    }
    writing.add(1);
    let mut notes = iterations::keep_file(&layout, mesh_path, &hashes, sidecar_text.as_bytes());
    writing.add(1);
    page.reload(mesh_path);
    // The page is drawn while the log line is flushed (a page a line ahead of the log
    // after a crash is drawn again from the log by the next run). Only this mesh's
    // history chart is drawn again: the others' lines are as they were.
    let (line, more, paged) = iterations::log_calc(&layout, &computed.result, hashes, |line| {
        page.record(line.clone());
        page.write(false, false)
    })?;
    notes.extend(more);
    writing.add(1);
    paged?;
    writing.add(1);
    Ok(Logged {
        result: computed.result,
        line,
        notes,
    })
}

/// Writes the result document of a computed mesh and its exports together (see
/// [`results::Batch`]): `Err` when nothing could be written (the old files stay, and
/// agree with each other); `Ok(Some(..))` when the result was written but its exports
/// could not be, and were removed. The pressure diagrams show their values in `units`.
pub fn write_computed(
    layout: &Layout,
    mesh_path: &Path,
    computed: &Computed,
    units: UnitSystem,
) -> Result<Option<results::ExportsDropped>, RunError> {
    let mut batch = results::Batch::new();
    batch.put_result(
        &layout.result(mesh_path),
        &report::json::render(&computed.result),
    )?;
    outputs::stage_outputs(
        &mut batch,
        layout,
        mesh_path,
        &computed.model,
        &computed.sidecar,
        &computed.result,
        units,
    )?;
    Ok(batch.commit()?)
}

#[cfg(test)]
mod tests {
    use super::*;
    use shapes::encode;

    /// Reads `bytes`, written to a file named `name`, both ways.
    fn both_ways(name: &str, bytes: &[u8]) -> (Result<Mesh, String>, Result<Mesh, String>) {
        let dir = tempfile::tempdir().expect("a temporary folder");
        let path = dir.path().join(name);
        fs::write(&path, bytes).expect("writable");
        let (file, len) = open_capped(&path, u64::MAX).expect("opens");
        let mut hasher = blake3::Hasher::new();
        let streamed =
            read_mesh_streamed(&path, file, len, &mut hasher, &Quiet).map_err(|e| e.to_string());
        // The bytes are hashed as they are read: the hash of the whole file.
        if streamed.is_ok() {
            assert_eq!(hasher.finalize(), blake3::hash(bytes));
        }
        let whole = mesh::read_mesh(&path, bytes).map_err(|e| e.to_string());
        (streamed, whole)
    }

    #[test]
    fn a_binary_stl_read_a_block_at_a_time_is_the_same_mesh() {
        // Three blocks and a bit: 40,000 facets of a torus.
        let tris = shapes::torus([0.0; 3], 3.0, 1.0, 250, 80);
        assert!(tris.len() * BinaryStl::RECORD > 2 * STREAM_BLOCK);
        let bytes = encode::stl_binary(&tris, "torus");
        let (streamed, whole) = both_ways("t.stl", &bytes);
        let (streamed, whole) = (streamed.expect("reads"), whole.expect("reads"));
        assert_eq!(streamed.facets, whole.facets);
        // The box and extremes found while converting, block by block or at once, are
        // those of a pass of their own.
        let own = whole.facets.extremes(0..whole.facets.len());
        assert_eq!((streamed.extremes, whole.extremes), (Some(own), Some(own)));
        assert_eq!(streamed.normal_stale, whole.normal_stale);
        assert_eq!(streamed.parts, whole.parts);

        // Non-finite values in two blocks: the first is reported, as by the whole read.
        let mut bad = bytes.clone();
        for facet in [35_000usize, 20_000] {
            let at = BinaryStl::HEADER + facet * BinaryStl::RECORD + 12;
            bad[at..at + 4].copy_from_slice(&f32::NAN.to_le_bytes());
        }
        let (streamed, whole) = both_ways("t.stl", &bad);
        let message = streamed.expect_err("refused");
        assert_eq!(Err(message.clone()), whole.map(|_| ()));
        assert!(message.contains("20001"), "{message}");

        // Not binary by its size (one byte short): the text reader's verdict, both ways.
        let (streamed, whole) = both_ways("t.stl", &bytes[..bytes.len() - 1]);
        assert_eq!(streamed.map(|_| ()), whole.map(|_| ()));
    }

    #[test]
    fn other_meshes_are_read_whole_and_alike() {
        let tris = shapes::box_solid([0.0; 3], [1.0, 2.0, 3.0], 2);
        for (name, bytes) in [
            ("b.stl", encode::stl_ascii(&[("b", &tris[..])]).into_bytes()),
            ("b.obj", encode::obj(&[("b", &tris[..])]).into_bytes()),
            ("tiny.stl", b"solid".to_vec()),
        ] {
            let (streamed, whole) = both_ways(name, &bytes);
            match (streamed, whole) {
                (Ok(a), Ok(b)) => assert_eq!(a.facets, b.facets, "{name}"),
                (a, b) => assert_eq!(a.map(|_| ()), b.map(|_| ()), "{name}"),
            }
        }
    }

    #[test]
    fn reading_a_binary_stl_reports_the_bytes_converted_a_block_at_a_time() {
        use crate::hydro::progress::tests::{Recorder, assert_counts_up_to};
        // Three blocks and a bit, as above.
        let tris = shapes::torus([0.0; 3], 3.0, 1.0, 250, 80);
        let bytes = encode::stl_binary(&tris, "torus");
        let dir = tempfile::tempdir().expect("a temporary folder");
        let path = dir.path().join("t.stl");
        fs::write(&path, &bytes).expect("writable");
        let (file, len) = open_capped(&path, u64::MAX).expect("opens");
        let sink = Recorder::default();
        let mut hasher = blake3::Hasher::new();
        read_mesh_streamed(&path, file, len, &mut hasher, &sink).expect("reads");
        let got = sink.of(Stage::ReadingMesh);
        assert_counts_up_to(&got, bytes.len() as u64);
        // 0, then one report per block converted: the header and whole blocks, then all.
        let (header, block, len) = (
            BinaryStl::HEADER as u64,
            STREAM_BLOCK as u64,
            bytes.len() as u64,
        );
        let mut want = vec![0];
        want.extend((1..).map(|k| header + k * block).take_while(|&at| at < len));
        want.push(len);
        assert!(want.len() >= 4, "three blocks: {want:?}");
        assert_eq!(got.iter().map(|r| r.0).collect::<Vec<_>>(), want);
    }

    #[test]
    fn the_page_calc_writes_is_the_page_drawn_afresh_from_the_folder() {
        // calc reads the page's other inputs while its result is written and takes its
        // own document and line in after; a page drawn from what is on disk afterwards
        // must be the same, byte for byte but for the time it was drawn.
        let dir = tempfile::tempdir().expect("a temporary folder");
        let box_at = |name: &str, x: f64| {
            let tris = shapes::box_solid([x, 0.0, 0.0], [x + 1.0, 2.0, 3.0], 2);
            let mesh = dir.path().join(name);
            fs::write(&mesh, encode::stl_binary(&tris, "b")).expect("writable");
            mesh
        };
        let side = |level: f64| {
            format!(r#"{{"units": "m", "liquid": {{"level": {level}, "density": 1000}}}}"#)
        };
        let (a, b) = (box_at("a.stl", 0.0), box_at("b.stl", 5.0));
        fs::write(sidecar_path(&b), side(2.0)).expect("writable");
        calc_logged(&b, UnitSystem::Si).expect("computes");
        let results = dir.path().join("results");
        let drawn = |name: &str| {
            let text = fs::read_to_string(results.join(name)).expect("written");
            // The line that says when the page was written.
            let lines: Vec<&str> = text
                .lines()
                .filter(|l| !l.contains("Page written"))
                .collect();
            // Exactly one in the page, none in a chart.
            let page = usize::from(name == "report.html");
            assert_eq!(lines.len() + page, text.lines().count(), "{name}");
            lines.join("\n")
        };
        for level in [1.0, 1.5, 1.5, 2.5] {
            // New iterations, an unchanged one and another mesh beside.
            fs::write(sidecar_path(&a), side(level)).expect("writable");
            if level > 2.0 {
                // The other mesh's chart lost: drawn again, though its lines did not change.
                fs::remove_file(results.join("b.history.svg")).expect("there");
            }
            calc_logged(&a, UnitSystem::Si).expect("computes");
            let written = ["report.html", "a.history.svg", "b.history.svg"].map(drawn);
            assert!(written[0].contains("a.stl") && written[0].contains("b.stl"));
            outputs::write_folder_page(&results, false, UnitSystem::Si).expect("drawn");
            let afresh = ["report.html", "a.history.svg", "b.history.svg"].map(drawn);
            assert_eq!(written, afresh, "level {level}");
        }
        let log = results::changelog::read_lines(&results);
        assert_eq!(log.len(), 5, "one line a calc");
    }

    #[test]
    fn calc_reports_reading_the_topology_the_case_and_the_writing_and_computes_the_same() {
        use crate::hydro::progress::tests::{Recorder, assert_counts_up_to};
        let tris = shapes::box_solid([0.0; 3], [1.0, 2.0, 3.0], 2);
        let stl = encode::stl_binary(&tris, "b");
        let side = r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000}}"#;
        let mut docs = Vec::new();
        for with in [false, true] {
            // The same file name in two folders: the same document.
            let dir = tempfile::tempdir().expect("a temporary folder");
            let mesh = dir.path().join("b.stl");
            fs::write(&mesh, &stl).expect("writable");
            fs::write(sidecar_path(&mesh), side).expect("writable");
            let sink = Recorder::default();
            let logged = if with {
                calc_logged_with(&mesh, UnitSystem::Si, &sink)
            } else {
                calc_logged(&mesh, UnitSystem::Si)
            };
            let r = logged.expect("computes").result;
            docs.push(String::from_utf8(report::json::render(&r)).expect("UTF-8"));
            if with {
                assert_counts_up_to(&sink.of(Stage::ReadingMesh), stl.len() as u64);
                assert_eq!(sink.of(Stage::Topology), vec![(0, 1), (1, 1)]);
                assert_counts_up_to(&sink.of(Stage::Writing), WRITING_STEPS);
                // Writing comes last.
                let last = sink.0.lock().expect("not poisoned").last().map(|r| r.0);
                assert_eq!(last, Some(Stage::Writing));
            } else {
                assert!(sink.0.lock().expect("not poisoned").is_empty());
            }
        }
        assert!(docs[0] == docs[1], "{} / {}", docs[0], docs[1]);
    }
}
