//! Design iterations end to end: `calc` logs and numbers every computation, the snapshot
//! store keeps its inputs (once per content, under a cap, consistent after a kill), and
//! `history`, `compare`, `--extract`, `init` and `check` with a sidecar answer from them.

use std::collections::BTreeSet;
use std::fs;
use std::path::PathBuf;

use serde_json::Value;

use super::*;

/// The change log's lines.
fn log(f: &Folder) -> Vec<Value> {
    fs::read_to_string(f.path("results/changes.jsonl"))
        .unwrap_or_default()
        .lines()
        .map(|l| serde_json::from_str(l).expect("every log line is JSON"))
        .collect()
}

/// A sidecar for the test box with the free surface at `level`.
fn box_sidecar(level: f64) -> String {
    format!(r#"{{"units": "m", "liquid": {{"level": {level}, "density": 1000}}}}"#)
}

/// The test box scaled by `k` about the origin.
fn box_stl(k: f64) -> Vec<u8> {
    binary_stl(&shapes::scale(&box_tris(), k))
}

/// Every blob in the store: (name, bytes).
fn blobs(f: &Folder) -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    let Ok(top) = fs::read_dir(f.path("results/.snapshots")) else {
        return out;
    };
    for sub in top.map(|e| e.expect("entry")) {
        if !sub.file_type().expect("type").is_dir() {
            continue;
        }
        for e in fs::read_dir(sub.path()).expect("sub folder") {
            let e = e.expect("entry");
            out.push((
                e.file_name().to_string_lossy().into_owned(),
                fs::read(e.path()).expect("blob"),
            ));
        }
    }
    out.sort();
    out
}

fn hex(bytes: &[u8]) -> String {
    blake3::hash(bytes).to_hex().to_string()
}

#[test]
fn calc_logs_every_computation_and_numbering_continues_across_calc_and_watch() {
    let f = Folder::new();
    f.write("tank.stl", box_stl(1.0));
    f.write("tank.json", box_sidecar(-0.5));
    f.calc(&["tank.stl"]).expect_code(0);
    f.calc(&["tank.stl"]).expect_code(0);
    f.write("tank.json", box_sidecar(0.0));
    f.calc(&["tank.stl"]).expect_code(0);
    let after_calc = f.result("tank");
    // The watcher carries on from calc's lines: the same content is unchanged, a new
    // one is the next iteration; calc then carries on from the watcher's.
    let watch_once = || Run::from(f.wetload().args(["watch", ".", "--once"]).output());
    watch_once().expect_code(0);
    f.write("tank.json", box_sidecar(0.25));
    watch_once().expect_code(0);
    f.write("tank.stl", box_stl(1.5));
    f.calc(&["tank.stl"]).expect_code(0);
    let lines = log(&f);
    let seen: Vec<(String, u64)> = lines
        .iter()
        .map(|l| {
            (
                l["event"].as_str().expect("event").to_owned(),
                l["iteration"].as_u64().expect("iteration"),
            )
        })
        .collect();
    let expect = [
        ("computed", 1),
        ("unchanged", 1),
        ("computed", 2),
        ("unchanged", 2),
        ("computed", 3),
        ("computed", 4),
    ];
    assert_eq!(
        seen,
        expect.map(|(e, n)| (e.to_owned(), n)).to_vec(),
        "{lines:#?}"
    );
    for l in &lines {
        assert_eq!(l["mesh"], "tank.stl");
        assert!(l["time"].as_str().is_some_and(|t| t.ends_with('Z')), "{l}");
    }
    // The logged figures are those of the result document written at the time.
    assert_eq!(
        lines[2]["cases"][0]["force"],
        after_calc["cases"][0]["force"]
    );
    assert_eq!(
        lines[5]["cases"][0]["force"],
        f.result("tank")["cases"][0]["force"]
    );
    // The hashes are those of the files computed from.
    assert_eq!(lines[5]["mesh_hash"], hex(&box_stl(1.5)));
    assert_eq!(lines[5]["sidecar_hash"], hex(box_sidecar(0.25).as_bytes()));
}

#[test]
fn snapshots_are_stored_once_per_content() {
    let f = Folder::new();
    f.write("tank.stl", box_stl(1.0));
    // A hundred saves alternating between two sidecars, computed each time.
    for i in 0..100 {
        f.write(
            "tank.json",
            box_sidecar(if i % 2 == 0 { -0.5 } else { 0.0 }),
        );
        f.calc(&["tank.stl", "--json"]).expect_code(0);
    }
    let stored = blobs(&f);
    let names: BTreeSet<&str> = stored.iter().map(|(n, _)| n.as_str()).collect();
    let expected: BTreeSet<String> = [
        hex(&box_stl(1.0)),
        hex(box_sidecar(-0.5).as_bytes()),
        hex(box_sidecar(0.0).as_bytes()),
    ]
    .into();
    assert_eq!(
        names,
        expected.iter().map(String::as_str).collect::<BTreeSet<_>>()
    );
    // Each blob holds exactly the bytes its name hashes.
    for (name, bytes) in &stored {
        assert_eq!(&hex(bytes), name);
    }
    let computed = log(&f).iter().filter(|l| l["event"] == "computed").count();
    assert_eq!(computed, 100, "every save changed the sidecar");
}

#[test]
fn the_cap_prunes_the_oldest_but_keeps_the_baseline_and_the_latest() {
    let f = Folder::new();
    f.write("tank.json", box_sidecar(-0.5));
    let meshes: Vec<Vec<u8>> = (1..=4).map(|k| box_stl(1.0 + 0.1 * k as f64)).collect();
    for m in &meshes {
        f.write("tank.stl", m);
        let run = Run::from(
            f.wetload()
                .env("WETLOAD_SNAPSHOT_CAP", "1")
                .args(["calc", "tank.stl"])
                .output(),
        );
        run.expect_code(0);
    }
    let names: BTreeSet<String> = blobs(&f).into_iter().map(|(n, _)| n).collect();
    let want: BTreeSet<String> = [
        hex(&meshes[0]),
        hex(&meshes[3]),
        hex(box_sidecar(-0.5).as_bytes()),
    ]
    .into();
    assert_eq!(names, want);
    let h = Run::from(f.wetload().args(["history", "tank.stl", "--json"]).output());
    h.expect_code(0);
    let kept: Vec<bool> = h
        .stdout_json()
        .as_array()
        .expect("array")
        .iter()
        .map(|e| e["snapshot"].as_bool().expect("bool"))
        .collect();
    assert_eq!(kept, [true, false, false, true]);
    let out = tempfile::tempdir().expect("temp dir");
    let run = Run::from(
        f.wetload()
            .args(["history", "tank.stl", "--extract", "2"])
            .arg(out.path())
            .output(),
    );
    run.expect_code(1);
    assert!(
        run.stderr.contains("tank.stl") && run.stderr.contains("pruned"),
        "{}",
        run.stderr
    );
    // A cap that is no size is a usage error, before any work.
    let bad = Run::from(
        f.wetload()
            .env("WETLOAD_SNAPSHOT_CAP", "lots")
            .args(["calc", "tank.stl"])
            .output(),
    );
    bad.expect_code(2);
    assert!(
        bad.stderr.contains("WETLOAD_SNAPSHOT_CAP"),
        "{}",
        bad.stderr
    );
}

#[test]
fn history_json_has_the_pinned_shape() {
    let f = Folder::new();
    f.write("tank.stl", box_stl(1.0));
    f.write("tank.json", box_sidecar(-0.5));
    f.calc(&["tank.stl"]).expect_code(0);
    f.calc(&["tank.stl"]).expect_code(0);
    f.write("tank.json", box_sidecar(0.0));
    f.calc(&["tank.stl"]).expect_code(0);
    f.write("tank.stl", box_stl(1.2));
    f.calc(&["tank.stl"]).expect_code(0);
    f.write("tank.stl", box_stl(1.3));
    f.write("tank.json", box_sidecar(0.5));
    f.calc(&["tank.stl"]).expect_code(0);
    // A failure, logged by the watcher.
    f.write("tank.json", "{ not json");
    Run::from(f.wetload().args(["watch", ".", "--once"]).output()).expect_code(1);
    let run = Run::from(f.wetload().args(["history", "tank.stl", "--json"]).output());
    run.expect_code(0);
    let v = run.stdout_json();
    let entries = v.as_array().expect("an array");
    let events: Vec<&str> = entries
        .iter()
        .map(|e| e["event"].as_str().expect("event"))
        .collect();
    assert_eq!(
        events,
        [
            "computed",
            "unchanged",
            "computed",
            "computed",
            "computed",
            "failed"
        ]
    );
    let iterations: Vec<Value> = entries.iter().map(|e| e["iteration"].clone()).collect();
    assert_eq!(
        iterations,
        [
            1.into(),
            Value::Null,
            2.into(),
            3.into(),
            4.into(),
            Value::Null
        ]
    );
    let changed: Vec<&str> = entries
        .iter()
        .filter_map(|e| e["changed"].as_str())
        .collect();
    assert_eq!(changed, ["baseline", "sidecar", "mesh", "both"]);
    let lines = log(&f);
    for (e, l) in entries.iter().zip(&lines) {
        assert_eq!(e["time"], l["time"]);
        assert!(e["snapshot"].is_boolean());
        let cases = e["cases"].as_array().expect("cases");
        if e["event"] == "computed" {
            assert_eq!(e["snapshot"], true);
            assert_eq!(cases.len(), 1);
            assert_eq!(cases[0]["name"], "default");
            assert_eq!(cases[0]["force"], l["cases"][0]["force"]);
            assert_eq!(cases[0]["moment"], l["cases"][0]["moment"]);
        } else {
            assert_eq!(e["snapshot"], false);
            assert!(cases.is_empty());
        }
    }
    // The listing names every iteration and what changed.
    let text = Run::from(f.wetload().args(["history", "tank.stl"]).output());
    text.expect_code(0);
    for word in ["baseline", "sidecar", "mesh", "both", "failed", "unchanged"] {
        assert!(text.stdout.contains(word), "{word}:\n{}", text.stdout);
    }
    // A mesh never computed: exit 1, naming it.
    f.write("other.stl", box_stl(1.0));
    let none = Run::from(f.wetload().args(["history", "other.stl"]).output());
    none.expect_code(1);
    assert!(none.stderr.contains("other.stl"), "{}", none.stderr);
}

#[test]
fn an_extracted_iteration_recomputes_to_its_logged_figures_bit_for_bit() {
    let f = Folder::new();
    let (mesh1, side1) = (box_stl(1.0), box_sidecar(-0.5));
    f.write("tank.stl", &mesh1);
    f.write("tank.json", &side1);
    f.calc(&["tank.stl"]).expect_code(0);
    f.write("tank.stl", box_stl(1.25));
    f.write("tank.json", box_sidecar(0.3));
    f.calc(&["tank.stl"]).expect_code(0);
    let out = tempfile::tempdir().expect("temp dir");
    let dir: PathBuf = out.path().join("morning");
    let run = Run::from(
        f.wetload()
            .args(["history", "tank.stl", "--extract", "baseline"])
            .arg(&dir)
            .output(),
    );
    run.expect_code(0);
    assert_eq!(fs::read(dir.join("tank.stl")).expect("mesh"), mesh1);
    assert_eq!(
        fs::read_to_string(dir.join("tank.json")).expect("sidecar"),
        side1
    );
    // Computed again where it was extracted: the figures logged for iteration 1.
    let again = Run::from(
        assert_cmd::Command::cargo_bin("wetload")
            .expect("binary")
            .current_dir(&dir)
            .args(["calc", "tank.stl", "--json"])
            .output(),
    );
    again.expect_code(0);
    let doc = again.stdout_json();
    let logged = &log(&f)[0]["cases"][0];
    for key in [
        "force",
        "moment",
        "uplift",
        "downthrust",
        "wetted_area",
        "submerged_volume",
    ] {
        assert_eq!(doc["cases"][0][key], logged[key], "{key}");
    }
    // Never over a file: the second extraction is refused and the files stay.
    fs::write(dir.join("tank.json"), "mine").expect("write");
    let twice = Run::from(
        f.wetload()
            .args(["history", "tank.stl", "--extract", "1"])
            .arg(&dir)
            .output(),
    );
    twice.expect_code(1);
    assert!(twice.stderr.contains("tank.stl"), "{}", twice.stderr);
    assert_eq!(
        fs::read_to_string(dir.join("tank.json")).expect("kept"),
        "mine"
    );
}

/// `to − from` of two JSON values as the test computes it (numbers, or vectors).
fn minus(to: &Value, from: &Value) -> Value {
    match (to, from) {
        (Value::Array(a), Value::Array(b)) => a.iter().zip(b).map(|(x, y)| minus(x, y)).collect(),
        (Value::Number(_), Value::Number(_)) => {
            (to.as_f64().expect("f64") - from.as_f64().expect("f64")).into()
        }
        _ => Value::Null,
    }
}

#[test]
fn compare_changes_are_the_differences_of_the_two_results() {
    let f = Folder::new();
    f.write("tank.stl", box_stl(1.0));
    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -0.5, "density": 1000},
            "cases": [{"name": "normal"}, {"name": "flood", "level": 0.5}]}"#,
    );
    let first = f.calc(&["tank.stl", "--json"]).stdout_json();
    // Twice the size, in millimetres: the geometry in metres doubles.
    f.write("tank.stl", box_stl(2000.0));
    f.write(
        "tank.json",
        r#"{"units": "mm", "liquid": {"level": -1.0, "density": 1025},
            "cases": [{"name": "normal"}, {"name": "flood", "level": 1.0}]}"#,
    );
    let second = f.calc(&["tank.stl", "--json"]).stdout_json();
    for (a, b) in [("1", "2"), ("baseline", "latest"), ("previous", "latest")] {
        let run = Run::from(
            f.wetload()
                .args(["compare", "tank.stl", a, b, "--json"])
                .output(),
        );
        run.expect_code(0);
        let doc = run.stdout_json();
        assert_eq!(doc["mesh"], "tank.stl");
        assert_eq!(
            (doc["from"].clone(), doc["to"].clone()),
            (1.into(), 2.into())
        );
        let cases = doc["cases"].as_array().expect("cases");
        assert_eq!(cases.len(), 2);
        for (i, c) in cases.iter().enumerate() {
            let (r1, r2) = (&first["cases"][i], &second["cases"][i]);
            assert_eq!(c["name"], r1["name"]);
            for q in [
                "force",
                "moment",
                "uplift",
                "downthrust",
                "wetted_area",
                "submerged_volume",
            ] {
                assert_eq!(c["from"][q], r1[q], "{q}");
                assert_eq!(c["to"][q], r2[q], "{q}");
                assert_eq!(c["change"][q], minus(&r2[q], &r1[q]), "{q}");
            }
        }
        // Geometry from each iteration's mesh: the box 2 × 3 × 4 m, then scaled by 2.
        let (lo, hi) = (BOX_MIN, BOX_MAX);
        for (g, k) in [
            (&doc["geometry"]["from"], 1.0),
            (&doc["geometry"]["to"], 2.0),
        ] {
            let (a, b, c) = (
                k * (hi[0] - lo[0]),
                k * (hi[1] - lo[1]),
                k * (hi[2] - lo[2]),
            );
            assert_eq!(g["facets"], 12);
            let area = g["surface_area"].as_f64().expect("area");
            assert!(
                (area - 2.0 * (a * b + b * c + c * a)).abs() < 1e-9 * area,
                "{g}"
            );
            let vol = g["volume"].as_f64().expect("volume");
            assert!((vol - a * b * c).abs() < 1e-9 * vol, "{g}");
            for j in 0..3 {
                let bb = &g["bounding_box"];
                assert!((bb[0][j].as_f64().expect("min") - k * lo[j]).abs() < 1e-9);
                assert!((bb[1][j].as_f64().expect("max") - k * hi[j]).abs() < 1e-9);
            }
        }
    }
    // The table names each quantity; an unknown iteration is refused naming the mesh.
    let text = Run::from(f.wetload().args(["compare", "tank.stl", "1", "2"]).output());
    text.expect_code(0);
    for word in ["normal", "flood", "uplift", "wetted area", "facets", "%"] {
        assert!(text.stdout.contains(word), "{word}:\n{}", text.stdout);
    }
    let bad = Run::from(f.wetload().args(["compare", "tank.stl", "1", "7"]).output());
    bad.expect_code(1);
    assert!(
        bad.stderr.contains("tank.stl") && bad.stderr.contains('7'),
        "{}",
        bad.stderr
    );
}

#[test]
fn a_kill_during_a_snapshot_write_leaves_the_store_and_the_log_consistent() {
    let f = Folder::new();
    // About 20 MB, so that a kill lands inside the work often.
    let big = encode::stl_binary(&shapes::torus([0.0; 3], 3.0, 1.0, 600, 300), "t");
    f.write("t.stl", &big);
    let mut sizes = Vec::new();
    for round in 0..6u64 {
        f.write(
            "t.json",
            format!(
                r#"{{"units": "m", "liquid": {{"level": {}, "density": 1000}}}}"#,
                0.1 * round as f64
            ),
        );
        // A different mesh each round (one byte of the header), so there is a new blob.
        let mut mesh = big.clone();
        mesh[0] = b'a' + round as u8;
        f.write("t.stl", &mesh);
        sizes.push(mesh.len());
        let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("wetload"))
            .current_dir(f.root())
            .args(["calc", "t.stl", "--json"])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .expect("spawn");
        std::thread::sleep(std::time::Duration::from_millis(150 + 250 * round));
        let _ = child.kill();
        let _ = child.wait();
        // Whatever the moment: every listed blob is whole, every log line complete.
        for (name, bytes) in blobs(&f) {
            assert_eq!(
                hex(&bytes),
                name,
                "round {round}: a listed blob is not whole"
            );
        }
        let text = fs::read_to_string(f.path("results/changes.jsonl")).unwrap_or_default();
        for l in text.lines() {
            serde_json::from_str::<Value>(l).expect("a complete line");
        }
    }
    // The next run carries on: it computes, numbers after the logged iterations, keeps
    // its snapshot, and leaves no temporary file behind.
    let before = log(&f)
        .iter()
        .filter_map(|l| l["iteration"].as_u64())
        .max()
        .unwrap_or(0);
    f.write("t.stl", box_stl(1.0));
    f.write("t.json", box_sidecar(-0.5));
    f.calc(&["t.stl"]).expect_code(0);
    let last = log(&f).pop().expect("a line");
    assert_eq!(last["event"], "computed");
    assert_eq!(last["iteration"], before + 1);
    let store = f.path("results/.snapshots");
    let temps: Vec<String> = fs::read_dir(&store)
        .expect("store")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(temps.is_empty(), "{temps:?}");
    let h = Run::from(f.wetload().args(["history", "t.stl", "--json"]).output());
    h.expect_code(0);
    let entries = h.stdout_json();
    assert_eq!(
        entries.as_array().expect("array").last().expect("one")["snapshot"],
        true
    );
}

#[test]
fn init_writes_a_sidecar_calc_accepts_and_never_guesses_units() {
    let f = Folder::new();
    // A 4,000 × 6,000 mm open plate (the 2 × 3 plate scaled by 2,000): the extent says
    // millimetres.
    let plate = shapes::scale(&plate_tris(), 2000.0);
    f.write("gate.stl", binary_stl(&plate));
    let run = Run::from(f.wetload().args(["init", "gate.stl"]).output());
    run.expect_code(2);
    assert!(run.stderr.contains("--units mm"), "{}", run.stderr);
    assert!(run.stderr.contains("6000"), "{}", run.stderr);
    assert!(!f.path("gate.json").exists());

    let run = Run::from(
        f.wetload()
            .args(["init", "gate.stl", "--units", "mm"])
            .output(),
    );
    run.expect_code(0);
    let side: Value =
        serde_json::from_str(&fs::read_to_string(f.path("gate.json")).expect("written"))
            .expect("JSON");
    assert_eq!(side["units"], "mm");
    assert_eq!(side["wet_side"], "front", "an open mesh must say its side");
    assert!(
        run.stdout.contains("wet_side") && run.stdout.contains("back"),
        "{}",
        run.stdout
    );
    f.calc(&["gate.stl"]).expect_code(0);

    // Never over an existing sidecar.
    let before = fs::read(f.path("gate.json")).expect("sidecar");
    let again = Run::from(
        f.wetload()
            .args(["init", "gate.stl", "--units", "m"])
            .output(),
    );
    again.expect_code(1);
    assert!(again.stderr.contains("gate.json"), "{}", again.stderr);
    assert_eq!(fs::read(f.path("gate.json")).expect("kept"), before);

    // A closed box: liquid outside, and calc accepts it as written.
    f.write("tank.stl", box_stl(1.0));
    Run::from(
        f.wetload()
            .args(["init", "tank.stl", "--units", "m"])
            .output(),
    )
    .expect_code(0);
    let side: Value =
        serde_json::from_str(&fs::read_to_string(f.path("tank.json")).expect("written"))
            .expect("JSON");
    assert_eq!(side["wet_side"], "outside");
    f.calc(&["tank.stl"]).expect_code(0);
    // An unknown unit is a usage error.
    f.write("w.stl", box_stl(1.0));
    Run::from(
        f.wetload()
            .args(["init", "w.stl", "--units", "yards"])
            .output(),
    )
    .expect_code(2);
    assert!(!f.path("w.json").exists());
}

#[test]
fn check_judges_a_mesh_with_its_sidecar() {
    let f = Folder::new();
    f.write("plate.stl", binary_stl(&plate_tris()));
    f.write(
        "plate.json",
        r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000}}"#,
    );
    // calc refuses it: so does check, saying why.
    let calc = f.calc(&["plate.stl"]);
    calc.expect_code(1);
    let run = Run::from(f.wetload().args(["check", "plate.stl"]).output());
    run.expect_code(1);
    assert!(
        run.stdout.contains("plate.json") && run.stdout.contains("wet_side"),
        "{}",
        run.stdout
    );
    let json = Run::from(f.wetload().args(["check", "plate.stl", "--json"]).output());
    json.expect_code(1);
    assert_eq!(json.stdout_json()["with_sidecar"]["accepted"], false);
    // `outside` on an open mesh is refused too; `front` is accepted.
    f.write(
        "plate.json",
        r#"{"units": "m", "wet_side": "outside", "liquid": {"level": 1.0, "density": 1000}}"#,
    );
    Run::from(f.wetload().args(["check", "plate.stl"]).output()).expect_code(1);
    f.write(
        "plate.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 1.0, "density": 1000}}"#,
    );
    let ok = Run::from(f.wetload().args(["check", "plate.stl", "--json"]).output());
    assert_eq!(ok.stdout_json()["with_sidecar"]["accepted"], true);
}

#[test]
fn compare_gives_the_loads_of_every_part_as_the_difference_of_the_two_results() {
    let f = Folder::new();
    // Two parts: a wall faced by headwater and one faced by tailwater.
    let skin = shapes::rectangle([0.0, 0.0, 0.0], [0.0, 2.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
    let back = shapes::translate(&skin, [0.3, 0.0, 0.0]);
    f.write(
        "leaf.obj",
        encode::obj(&[
            ("up", &skin[..]),
            ("down", &shapes::reverse_winding(&back)[..]),
        ]),
    );
    let side = |head: f64| {
        format!(
            r#"{{"units": "m",
                "liquids": {{"head": {{"level": {head}, "density": 1000}}, "tail": {{"level": 0.8, "density": 1000}}}},
                "parts": {{"up": {{"liquid": "head", "wet_side": "front"}}, "down": {{"liquid": "tail", "wet_side": "front"}}}}}}"#
        )
    };
    f.write("leaf.json", side(2.2));
    let first = f.calc(&["leaf.obj", "--json"]).stdout_json();
    f.write("leaf.json", side(2.6));
    let second = f.calc(&["leaf.obj", "--json"]).stdout_json();
    let run = Run::from(
        f.wetload()
            .args(["compare", "leaf.obj", "baseline", "latest", "--json"])
            .output(),
    );
    run.expect_code(0);
    let doc = run.stdout_json();
    let parts = doc["cases"][0]["parts"].as_array().expect("parts");
    assert_eq!(parts.len(), 2);
    for p in parts {
        let name = p["name"].as_str().expect("name");
        let of = |r: &serde_json::Value| {
            r["cases"][0]["parts"]
                .as_array()
                .expect("parts")
                .iter()
                .find(|q| q["name"] == name)
                .cloned()
                .expect("the part")
        };
        let (r1, r2) = (of(&first), of(&second));
        for q in ["force", "moment", "uplift", "wetted_area"] {
            assert_eq!(p["from"][q], r1[q], "{name} {q}");
            assert_eq!(p["to"][q], r2[q], "{name} {q}");
            assert_eq!(p["change"][q], minus(&r2[q], &r1[q]), "{name} {q}");
        }
    }
    // Only the headwater's part changed.
    let down = parts.iter().find(|p| p["name"] == "down").expect("down");
    assert_eq!(down["change"]["force"], serde_json::json!([0.0, 0.0, 0.0]));
    let text = Run::from(
        f.wetload()
            .args(["compare", "leaf.obj", "baseline", "latest"])
            .output(),
    );
    assert!(
        text.stdout.contains("   part up") && text.stdout.contains("   part down"),
        "{}",
        text.stdout
    );
}
