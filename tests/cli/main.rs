//! End-to-end tests of the `wetload` binary: one test binary, a module per concern.
//!
//! Every test gets a fresh temporary folder, writes its meshes and sidecars there with the
//! helpers below, runs the real executable with `assert_cmd`, and looks at the exit
//! status, stdout, stderr and the files under `results/`. The numeric core has its own
//! unit tests; here only what a user of the command line sees is checked.

mod calc;
mod determinism;
mod errors;
mod iterations;
mod presentation;
mod progress;
mod section;
mod traps;

use std::fs;
use std::path::{Path, PathBuf};
use std::process::Output;

use assert_cmd::cargo::cargo_bin_cmd;
use shapes::{self, Triangle, encode};
use tempfile::TempDir;

/// Standard gravity, the sidecar's default, m/s².
const G: f64 = 9.80665;

/// A temporary folder that holds one test's meshes, sidecars and `results/`.
struct Folder {
    dir: TempDir,
}

impl Folder {
    fn new() -> Folder {
        Folder {
            dir: tempfile::Builder::new()
                .prefix("wetload-cli-")
                .tempdir()
                .expect("the system temp folder is writable"),
        }
    }

    /// The folder itself.
    fn root(&self) -> &Path {
        self.dir.path()
    }

    /// A path inside the folder.
    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Writes a file into the folder and returns its path.
    fn write(&self, name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path(name);
        fs::write(&p, contents).expect("the temp folder is writable");
        p
    }

    /// `results/<stem>.json` of a mesh in this folder.
    fn result_path(&self, stem: &str) -> PathBuf {
        self.path("results").join(format!("{stem}.json"))
    }

    /// The result document of `stem`, parsed.
    fn result(&self, stem: &str) -> serde_json::Value {
        let p = self.result_path(stem);
        let text =
            fs::read_to_string(&p).unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()));
        serde_json::from_str(&text)
            .unwrap_or_else(|e| panic!("{} is not JSON: {e}\n{text}", p.display()))
    }

    /// Names of the entries of `results/` (empty when the folder does not exist), sorted.
    fn results_listing(&self) -> Vec<String> {
        let Ok(entries) = fs::read_dir(self.path("results")) else {
            return Vec::new();
        };
        let mut names: Vec<String> = entries
            .map(|e| {
                e.expect("a readable folder entry")
                    .file_name()
                    .to_string_lossy()
                    .into_owned()
            })
            .collect();
        names.sort();
        names
    }

    /// A `wetload` command that runs in this folder, so relative mesh names work.
    fn wetload(&self) -> assert_cmd::Command {
        let mut cmd = cargo_bin_cmd!("wetload");
        cmd.current_dir(self.root());
        cmd
    }

    /// Runs `wetload calc ARGS...` in this folder.
    fn calc(&self, args: &[&str]) -> Run {
        Run::from(self.wetload().arg("calc").args(args).output())
    }
}

/// What one run of the binary did.
struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
}

impl Run {
    fn from(out: std::io::Result<Output>) -> Run {
        let out = out.expect("the wetload binary starts");
        Run {
            code: out.status.code(),
            stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        }
    }

    /// Panics with the whole run shown unless the exit status is `code`.
    fn expect_code(&self, code: i32) -> &Run {
        assert_eq!(
            self.code,
            Some(code),
            "expected exit status {code}\n--- stdout\n{}\n--- stderr\n{}",
            self.stdout,
            self.stderr
        );
        self
    }

    /// stdout parsed as JSON.
    fn stdout_json(&self) -> serde_json::Value {
        serde_json::from_str(&self.stdout)
            .unwrap_or_else(|e| panic!("stdout is not JSON: {e}\n{}", self.stdout))
    }
}

/// True when `text` contains `line N` not followed by another digit (`line 5` but not
/// `line 50`).
fn mentions_line(text: &str, n: usize) -> bool {
    let needle = format!("line {n}");
    text.match_indices(&needle).any(|(i, _)| {
        !text[i + needle.len()..]
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_digit())
    })
}

/// The 1-based number of the first line of `text` that contains `needle`.
fn line_of(text: &str, needle: &str) -> usize {
    text.lines()
        .position(|l| l.contains(needle))
        .unwrap_or_else(|| panic!("`{needle}` is not in\n{text}"))
        + 1
}

// ---------------------------------------------------------------------------------------
// Meshes and sidecars used by several modules.

/// Corners of the test box: 2 m (x) × 3 m (y) × 4 m (z), every coordinate exact in f32.
const BOX_MIN: [f64; 3] = [1.0, -2.0, -3.0];
const BOX_MAX: [f64; 3] = [3.0, 1.0, 1.0];

/// The closed test box, wound outward, 12 facets.
fn box_tris() -> Vec<Triangle> {
    shapes::box_solid(BOX_MIN, BOX_MAX, 1)
}

/// An open 2 m × 3 m plate in the plane z = 0, normals along +z.
fn plate_tris() -> Vec<Triangle> {
    shapes::rectangle([0.0; 3], [2.0, 0.0, 0.0], [0.0, 3.0, 0.0], 2, 2)
}

/// A binary STL of `tris`.
fn binary_stl(tris: &[Triangle]) -> Vec<u8> {
    encode::stl_binary(tris, "wetload cli test")
}

/// An ASCII STL with one solid named `name`.
fn ascii_stl(name: &str, tris: &[Triangle]) -> String {
    encode::stl_ascii(&[(name, tris)])
}

/// An OBJ file with one group named `name`.
fn obj(name: &str, tris: &[Triangle]) -> String {
    encode::obj(&[(name, tris)])
}

/// Fresh water 1.5 m below the top of the test box, so 2.5 m of its 4 m height is under.
const BOX_SIDECAR: &str = r#"{
  "units": "m",
  "liquid": {"level": -0.5, "density": 1000}
}
"#;

/// Writes `<stem>.stl` (binary, the test box) and `<stem>.json` with [`BOX_SIDECAR`].
fn write_box(f: &Folder, stem: &str) {
    f.write(&format!("{stem}.stl"), binary_stl(&box_tris()));
    f.write(&format!("{stem}.json"), BOX_SIDECAR);
}
