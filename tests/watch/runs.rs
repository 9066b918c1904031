//! Whole runs: the folder lock, `--once` and its exit status, the change-log line format,
//! and the repair of a torn last line.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::time::Duration;

use crate::support::*;

#[test]
fn a_second_watcher_on_the_same_folder_exits_1_about_the_lock() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let mut first = Watcher::start(p);
    let log_before = log_bytes(p);

    let mut second = Watcher::spawn(p, &[]);
    let status = second.wait_exit();
    assert_eq!(status.code(), Some(1), "stderr: {}", second.stderr());
    let msg = second.stderr();
    assert!(
        msg.contains("another wetload watch is already writing") && msg.contains("changes.jsonl"),
        "message: {msg}"
    );
    assert_eq!(log_bytes(p), log_before, "the second watcher wrote the log");

    // The first one is unaffected.
    assert!(first.is_running());
    save(&p.join("box.json"), sidecar(0.9));
    wait_result(&first, p, "box", expected(1.0, 0.9));
    check_log(p);
}

fn once(dir: &std::path::Path) -> std::process::Output {
    assert_cmd::Command::new(assert_cmd::cargo::cargo_bin("wetload"))
        .args(["watch", "--once"])
        .arg(dir)
        .timeout(Duration::from_secs(30))
        .output()
        .expect("run wetload watch --once")
}

#[test]
fn once_computes_everything_and_exits_0_or_1_when_a_mesh_is_broken() {
    let dir = folder(&[("box", 1.0, 0.5), ("tall", 2.0, 10.0)]);
    let p = dir.path();

    let out = once(p);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(0),
        "stdout: {stdout}\nstderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!stdout.contains("watching"), "{stdout}");
    assert!(doc_matches(
        &result(p, "box").expect("box"),
        &expected(1.0, 0.5)
    ));
    assert!(doc_matches(
        &result(p, "tall").expect("tall"),
        &expected(2.0, 10.0)
    ));
    let lines = check_log(p);
    assert_eq!(events(&lines, "box.stl", "computed").len(), 1);
    assert_eq!(events(&lines, "tall.stl", "computed").len(), 1);

    // tall.stl cut short: status 1, a message naming it, box still fine.
    let bytes = box_stl(2.0);
    save(&p.join("tall.stl"), &bytes[..bytes.len() - 7]);
    let out = once(p);
    let all = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(out.status.code(), Some(1), "{all}");
    assert!(all.contains("tall.stl"), "names the broken mesh: {all}");
    let lines = check_log(p);
    assert_eq!(events(&lines, "tall.stl", "failed").len(), 1, "{lines:#?}");
    let tall = result(p, "tall").expect("tall kept");
    assert!(stale(&tall).is_some(), "{tall}");
    assert!(doc_matches(&tall, &expected(2.0, 10.0)));
    let box_doc = result(p, "box").expect("box");
    assert!(doc_matches(&box_doc, &expected(1.0, 0.5)) && stale(&box_doc).is_none());
}

#[test]
fn every_change_log_line_has_the_pinned_fields() {
    let dir = folder(&[("box", 1.0, 0.5), ("other", 0.5, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    let mut skip = log(p).len();
    let mut step = |what: &dyn Fn(), event: &str| {
        what();
        wait_event(&w, p, skip, "box.stl", event);
        skip = log(p).len();
    };
    step(
        &|| save(&p.join("box.stl"), box_stl(1.0)),
        "unchanged", // same bytes
    );
    step(&|| save(&p.join("box.json"), "{"), "failed");
    step(&|| save(&p.join("box.json"), sidecar(0.3)), "computed");
    step(
        &|| fs::remove_file(p.join("box.stl")).expect("delete"),
        "removed",
    );

    let lines = check_log(p);
    for event in ["computed", "unchanged", "failed", "removed"] {
        assert!(
            lines.iter().any(|l| l["event"] == event),
            "no {event} line: {lines:#?}"
        );
    }
    assert!(doc_matches(
        events(&lines, "other.stl", "computed")[0],
        &expected(0.5, 0.25)
    ));
}

#[test]
fn a_torn_last_line_is_moved_aside_on_the_next_start() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    assert_eq!(once(p).status.code(), Some(0));
    let complete = log_bytes(p);
    assert!(complete.ends_with(b"\n") && !complete.is_empty());

    let half = br#"{"time":"2026-01-01T00:00:00.000Z","mesh":"box.stl","event":"comp"#;
    let mut f = OpenOptions::new()
        .append(true)
        .open(log_path(p))
        .expect("open log");
    f.write_all(half).expect("append half a line");
    drop(f);

    let w = Watcher::start(p);
    let out = w.stdout();
    assert!(
        out.contains("note:") && out.contains("incomplete") && out.contains("changes.jsonl.torn"),
        "stdout: {out}"
    );
    let torn = fs::read(results(p).join("changes.jsonl.torn")).expect("torn file");
    assert!(torn.starts_with(half), "{}", String::from_utf8_lossy(&torn));
    let now = log_bytes(p);
    assert!(now.starts_with(&complete), "complete lines were rewritten");
    check_log(p);

    // The log goes on from the repaired end.
    save(&p.join("box.json"), sidecar(0.7));
    wait_result(&w, p, "box", expected(1.0, 0.7));
    let lines = check_log(p);
    assert!(doc_matches(
        events(&lines, "box.stl", "computed")
            .last()
            .expect("computed"),
        &expected(1.0, 0.7)
    ));
}

#[test]
fn calc_beside_a_running_watcher_logs_through_the_append_lock_and_numbering_continues() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let mut w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    // A one-shot calc of a new content while the watcher holds the folder lock: it does
    // not wait for the watcher to stop, and its line is iteration 2.
    fs::write(p.join("box.json"), sidecar(0.6)).expect("sidecar");
    calc_ok(&[p.join("box.stl")]);
    // The watcher hears that save too; whatever it logs for it, the next new content is
    // numbered after calc's iteration.
    std::thread::sleep(Duration::from_millis(600));
    save(&p.join("box.json"), sidecar(0.7));
    wait_result(&w, p, "box", expected(1.0, 0.7));
    w.wait_for("the watcher to log iteration 3", || {
        let lines = check_log(p);
        events(&lines, "box.stl", "computed")
            .iter()
            .any(|l| l["iteration"] == 3)
            .then_some(())
    });
    w.kill();
    let lines = check_log(p);
    let computed: Vec<u64> = events(&lines, "box.stl", "computed")
        .iter()
        .map(|l| l["iteration"].as_u64().expect("iteration"))
        .collect();
    assert_eq!(computed, [1, 2, 3], "{lines:#?}");
    // Iteration 2 is calc's content, iteration 3 the watcher's.
    let second = events(&lines, "box.stl", "computed")[1];
    assert_eq!(
        second["sidecar_hash"],
        blake3::hash(sidecar(0.6).as_bytes()).to_hex().to_string()
    );
}

#[test]
fn a_floating_sidecar_gives_the_floating_result_and_log_fields() {
    // The 2 × 1 × 1 m box floating freely with m = 1000 kg in ρ = 1000 kg/m³ and G on its
    // centre line at 0.2 m: T = m/(ρ L B) = 0.5 m (so the loads are those of level 0.5),
    // upright, GM_T = T/2 + B²/(12 T) − KG = 0.25 + 1/6 − 0.2 m (closed forms).
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    fs::write(p.join("float.stl"), box_stl(1.0)).expect("mesh");
    let side = serde_json::json!({"units": "m", "liquid": {"density": RHO},
        "floating": {"mass": 1000.0, "centre_of_gravity": [1.0, 0.5, 0.2]}});
    fs::write(p.join("float.json"), side.to_string()).expect("sidecar");
    let out = once(p);
    assert_eq!(
        out.status.code(),
        Some(0),
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc = result(p, "float").expect("result");
    assert!(doc_matches(&doc, &expected(1.0, 0.5)), "{doc}");
    let e = &doc["cases"][0]["floating"]["equilibrium"];
    let gm = 0.25 + 1.0 / 6.0 - 0.2;
    let near =
        |v: &serde_json::Value, want: f64| v.as_f64().is_some_and(|x| (x - want).abs() < 1e-9);
    assert!(near(&e["draft"], 0.5) && near(&e["heel"], 0.0), "{e}");
    assert!(near(&e["metacentric_height"]["transverse"], gm), "{e}");
    let lines = check_log(p);
    let computed = events(&lines, "float.stl", "computed");
    assert_eq!(computed.len(), 1);
    let case = &computed[0]["cases"][0];
    assert!(near(&case["draft"], 0.5), "{case}");
    assert!(
        near(&case["heel"], 0.0) && near(&case["trim"], 0.0),
        "{case}"
    );
    assert!(near(&case["gm_t"], gm), "{case}");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("floating draft 0.500 m"), "{stdout}");
}
