//! The same inputs give the same result file, byte for byte, on every run and for any
//! number of worker threads.

use std::fs;

use crate::{Folder, binary_stl};

/// A stratified liquid and a plain one, so clipping at several planes is exercised.
const SIDECAR: &str = r#"{
  "units": "m",
  "liquid": {"level": 0.35, "density": 1025},
  "moment_about": [0.1, 0.2, -0.3],
  "cases": [
    {"name": "calm"},
    {"name": "layered", "layers": [{"density": 880, "down_to": -0.1}, {"density": 1000, "down_to": -0.6}, {"density": 1030}]}
  ]
}
"#;

/// Runs `calc` on `mesh` in `f` with the environment `env` and returns the result file.
fn result_bytes(f: &Folder, mesh: &str, stem: &str, env: &[(&str, &str)]) -> Vec<u8> {
    let mut cmd = f.wetload();
    cmd.arg("calc").arg(mesh);
    for (k, v) in env {
        cmd.env(k, v);
    }
    let out = cmd.output().expect("wetload starts");
    assert_eq!(
        out.status.code(),
        Some(0),
        "stderr:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    fs::read(f.result_path(stem)).expect("the result was written")
}

#[test]
fn two_runs_give_identical_result_files() {
    let f = Folder::new();
    let tris = shapes::perturb(&shapes::torus([0.2, -0.1, 0.0], 1.0, 0.4, 48, 24), 2e-3, 11);
    f.write("ring.stl", crate::ascii_stl("ring", &tris));
    f.write("ring.json", SIDECAR);
    let first = result_bytes(&f, "ring.stl", "ring", &[]);
    let second = result_bytes(&f, "ring.stl", "ring", &[]);
    assert!(
        first == second,
        "the second run wrote a different result file"
    );
}

#[test]
fn thread_count_does_not_change_the_result_file() {
    // 2 · 250 · (101 − 1) = 50 000 facets, jittered so that no two facets carry equal
    // loads and a change in summation order would show in the last bits.
    let tris = shapes::perturb(&shapes::uv_sphere([0.3, -0.2, 0.1], 1.0, 250, 101), 1e-3, 7);
    assert_eq!(tris.len(), 50_000);
    let f = Folder::new();
    f.write("ball.stl", binary_stl(&tris));
    f.write("ball.json", SIDECAR);
    let one = result_bytes(&f, "ball.stl", "ball", &[("RAYON_NUM_THREADS", "1")]);
    let two = result_bytes(&f, "ball.stl", "ball", &[("RAYON_NUM_THREADS", "2")]);
    assert!(one == two, "1 and 2 threads wrote different result files");
    let doc: serde_json::Value = serde_json::from_slice(&two).expect("the result is JSON");
    assert_eq!(doc["inputs"]["facets"], 50_000, "the whole mesh was read");
}
