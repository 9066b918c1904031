//! Hostile inputs against the real binary: every case runs `wetload calc` on a small
//! generated file in a fresh folder and must exit 1 with one message on stderr that names
//! the file at fault, with no panic, no result written and no temporary file left, while
//! the process runs under a 1 GiB address-space limit (`ulimit -v`), so an allocation
//! sized from untrusted data aborts the run instead of passing.
//!
//! Some cases repeat `tests/cli/errors.rs` on purpose: this suite is the one list of
//! hostile inputs (issue 8), kept complete on its own.

mod files;
mod mesh;
mod sidecar;

use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

use shapes::{self, Triangle, encode};
use tempfile::TempDir;

/// Address-space limit of every run, KiB.
const MEMORY_LIMIT_KIB: u64 = 1 << 20;

/// Wall-time limit of every run, s (generous: a refusal takes milliseconds).
const TIME_LIMIT_S: u64 = 60;

/// A fresh folder for one case.
struct Folder {
    dir: TempDir,
}

impl Folder {
    fn new() -> Folder {
        Folder {
            dir: tempfile::Builder::new()
                .prefix("wetload-hostile-")
                .tempdir()
                .expect("the system temp folder is writable"),
        }
    }

    fn root(&self) -> &Path {
        self.dir.path()
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    fn write(&self, name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path(name);
        fs::write(&p, contents).expect("the temp folder is writable");
        p
    }

    /// Runs `wetload calc ARGS` here under the memory limit, with extra environment.
    fn calc_env(&self, args: &[&str], env: &[(&str, &str)]) -> Run {
        let exe = assert_cmd::cargo::cargo_bin!("wetload");
        let mut cmd = Command::new("sh");
        cmd.arg("-c")
            // `timeout` (coreutils) where present, so a run that hangs fails the case
            // (status 124) instead of the suite.
            .arg(format!(
                "ulimit -v {MEMORY_LIMIT_KIB} || exit 99; \
                 if command -v timeout >/dev/null; then exec timeout {TIME_LIMIT_S} \"$0\" calc \"$@\"; \
                 else exec \"$0\" calc \"$@\"; fi"
            ))
            .arg(exe)
            .args(args)
            .current_dir(self.root());
        for (k, v) in env {
            cmd.env(k, v);
        }
        let out = cmd.output().expect("sh starts");
        Run {
            code: out.status.code(),
            stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        }
    }

    /// Names in `results/` (none when it does not exist).
    fn results_listing(&self) -> Vec<String> {
        let Ok(rd) = fs::read_dir(self.path("results")) else {
            return Vec::new();
        };
        rd.map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .collect()
    }
}

struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
}

/// Why a refused run did not look right, or `None` when it did: exit status 1, one
/// non-empty line on stderr naming `file` and containing every word of `words`, no panic,
/// no result for `mesh` and no temporary file in `results/`.
fn refusal_problem(
    f: &Folder,
    mesh: &str,
    file: &str,
    words: &[&str],
    run: &Run,
) -> Option<String> {
    let err = &run.stderr;
    let shown = || {
        format!(
            "exit {:?}\n--- stderr ({} bytes)\n{}\n--- stdout\n{}",
            run.code,
            err.len(),
            cut(err),
            cut(&run.stdout)
        )
    };
    if run.code != Some(1) {
        return Some(format!("expected exit status 1: {}", shown()));
    }
    if err.contains("panicked") {
        return Some(format!("the program panicked: {}", shown()));
    }
    let lines = err.lines().filter(|l| !l.trim().is_empty()).count();
    if lines != 1 {
        return Some(format!("expected one message line: {}", shown()));
    }
    if !err.contains(file) {
        return Some(format!("the message does not name {file}: {}", shown()));
    }
    if let Some(w) = words.iter().find(|w| !err.contains(*w)) {
        return Some(format!("the message does not mention {w:?}: {}", shown()));
    }
    let stem = Path::new(mesh)
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned());
    let listing = f.results_listing();
    if let Some(stem) = stem
        && listing.contains(&format!("{stem}.json"))
    {
        return Some(format!("a result was written for {mesh}: {listing:?}"));
    }
    if listing.iter().any(|n| n.ends_with(".tmp")) {
        return Some(format!("temporary files left: {listing:?}"));
    }
    None
}

/// At most 2000 characters of `text`, for messages.
fn cut(text: &str) -> String {
    if text.chars().count() <= 2000 {
        text.to_owned()
    } else {
        let mut s: String = text.chars().take(2000).collect();
        s.push_str("… (cut)");
        s
    }
}

/// Runs `wetload calc MESH` in `f` and panics unless it is refused as described in
/// [`refusal_problem`]; returns stderr.
fn refused(f: &Folder, mesh: &str, file: &str, words: &[&str]) -> String {
    refused_env(f, mesh, file, words, &[])
}

fn refused_env(f: &Folder, mesh: &str, file: &str, words: &[&str], env: &[(&str, &str)]) -> String {
    let run = f.calc_env(&[mesh], env);
    if let Some(problem) = refusal_problem(f, mesh, file, words, &run) {
        panic!("{mesh}: {problem}");
    }
    run.stderr
}

// ---------------------------------------------------------------------------------------
// Valid inputs the cases start from.

/// Corners of the test box, m; every coordinate exact in f32.
const BOX_MIN: [f64; 3] = [1.0, -2.0, -3.0];
const BOX_MAX: [f64; 3] = [3.0, 1.0, 1.0];

/// The closed test box, wound outward, 12 facets.
fn box_tris() -> Vec<Triangle> {
    shapes::box_solid(BOX_MIN, BOX_MAX, 1)
}

fn binary_stl(tris: &[Triangle]) -> Vec<u8> {
    encode::stl_binary(tris, "wetload hostile test")
}

fn ascii_stl(name: &str, tris: &[Triangle]) -> String {
    encode::stl_ascii(&[(name, tris)])
}

fn obj(name: &str, tris: &[Triangle]) -> String {
    encode::obj(&[(name, tris)])
}

/// A valid sidecar for the box: metres, water 1.5 m below its top.
const SIDECAR: &str = r#"{
  "units": "m",
  "liquid": {"level": -0.5, "density": 1000}
}
"#;

/// `tank.<ext>` with `contents` and the valid sidecar; must be refused naming the mesh
/// and the given words.
fn mesh_refused(ext: &str, contents: impl AsRef<[u8]>, words: &[&str]) -> String {
    let f = Folder::new();
    let mesh = format!("tank.{ext}");
    f.write(&mesh, contents);
    f.write("tank.json", SIDECAR);
    refused(&f, &mesh, &mesh, words)
}

#[test]
fn the_valid_inputs_compute() {
    // The starting points of every case are themselves accepted, so each refusal below
    // is caused by what the case changes.
    for (mesh, bytes) in [
        ("tank.stl", binary_stl(&box_tris())),
        ("tank.stl", ascii_stl("hull", &box_tris()).into_bytes()),
        ("tank.obj", obj("hull", &box_tris()).into_bytes()),
    ] {
        let f = Folder::new();
        f.write(mesh, bytes);
        f.write("tank.json", SIDECAR);
        let run = f.calc_env(&[mesh], &[]);
        assert_eq!(run.code, Some(0), "{}", run.stderr);
    }
}
