//! Saves of every kind into a watched folder, each checked against the closed-form loads
//! of the content that was saved.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::thread;
use std::time::Duration;

use crate::support::*;

#[test]
fn an_atomic_rename_save_computes_the_new_content() {
    let dir = folder(&[("box", 1.0, 10.0)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 10.0));

    save_by_rename(&p.join("box.stl"), &box_stl(1.5));
    wait_result(&w, p, "box", expected(1.5, 10.0));

    let lines = check_log(p);
    let computed = events(&lines, "box.stl", "computed");
    assert_eq!(computed.len(), 2, "one line per save: {lines:#?}");
    assert!(doc_matches(computed[1], &expected(1.5, 10.0)));
    assert!(
        lines.iter().all(|l| l["mesh"] == "box.stl"),
        "the temporary name never counts as a mesh: {lines:#?}"
    );
}

#[test]
fn a_chunked_in_place_write_computes_only_the_final_content() {
    let dir = folder(&[("box", 1.0, 10.0)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 10.0));
    let before = log(p).len();

    // 192 facets, 9684 bytes: three chunks of 3228 bytes, 100 ms apart (inside the
    // 150 ms window), after a truncation. Every intermediate state is a truncated STL.
    let new = box_stl_cells(1.75, 4);
    let mut f = OpenOptions::new()
        .write(true)
        .truncate(true)
        .open(p.join("box.stl"))
        .expect("open for writing");
    for (i, chunk) in new.chunks(new.len().div_ceil(3)).enumerate() {
        if i > 0 {
            thread::sleep(Duration::from_millis(100));
        }
        f.write_all(chunk).expect("chunk");
        f.flush().expect("flush");
    }
    drop(f);

    wait_result(&w, p, "box", expected(1.75, 10.0));
    settle();
    let lines = check_log(p);
    let after = &lines[before..];
    let failed = events(after, "box.stl", "failed");
    assert!(
        failed.is_empty(),
        "intermediate states of one save were reported as failures: {failed:#?}\n--- stdout ---\n{}",
        w.stdout()
    );
    let computed = events(after, "box.stl", "computed");
    assert!(!computed.is_empty());
    for c in &computed {
        assert!(
            doc_matches(c, &expected(1.75, 10.0)),
            "a computed line matches no saved content: {c}"
        );
    }
    let last = result(p, "box").expect("result");
    assert!(doc_matches(&last, &expected(1.75, 10.0)) && stale(&last).is_none());
}

#[test]
fn a_burst_of_fifty_saves_ends_with_the_last_content() {
    let dir = folder(&[("box", 1.0, 0.1)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.1));
    let before = log(p).len();

    // Levels 0.20, 0.21, … 0.69, 5 ms apart. Each save is whole when its writer closes
    // it, so the watcher may compute any of them as it keeps up; but never a content that
    // was not saved, never one save twice, and the last one last.
    let level = |i: u32| 0.2 + 0.01 * f64::from(i);
    for i in 0..50 {
        save(&p.join("box.json"), sidecar(level(i)));
        thread::sleep(Duration::from_millis(5));
    }
    let last = expected(1.0, level(49));
    wait_result(&w, p, "box", last);
    settle();

    let doc = result(p, "box").expect("result");
    assert!(
        doc_matches(&doc, &last) && stale(&doc).is_none(),
        "a stale result replaced the last one: {doc}"
    );
    let lines = check_log(p);
    let computed = events(&lines[before..], "box.stl", "computed");
    assert!(
        !computed.is_empty() && computed.len() <= 50,
        "expected at most one computation a save, got {}",
        computed.len()
    );
    let newest = computed.last().expect("a computed line");
    assert!(doc_matches(newest, &last), "last computed line: {newest}");
    for c in &computed {
        let saved = (0..50).any(|i| doc_matches(c, &expected(1.0, level(i))));
        assert!(saved, "a computed line matches no saved content: {c}");
    }
}

#[test]
fn a_broken_save_keeps_the_last_result_marked_stale_until_a_good_one() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    let good = wait_result(&w, p, "box", expected(1.0, 0.5));

    // 1. A sidecar cut short mid-save (invalid JSON).
    let before = log(p).len();
    save(
        &p.join("box.json"),
        r#"{"units": "m", "liquid": {"level": "#,
    );
    let lines = wait_event(&w, p, before, "box.stl", "failed");
    let failed = events(&lines[before..], "box.stl", "failed")[0];
    let error = failed["error"].as_str().expect("error");
    assert!(error.contains("box.json"), "names the sidecar: {error}");
    let doc = w.wait_for("the result to be marked stale", || {
        result(p, "box").filter(|d| stale(d).is_some())
    });
    let (since, reason) = stale(&doc).expect("stale");
    assert!(since.parse::<jiff::Timestamp>().is_ok(), "since: {since:?}");
    assert!(
        reason.contains("box.json"),
        "reason names the file: {reason}"
    );
    assert_eq!(
        doc["cases"], good["cases"],
        "the last good numbers are kept"
    );

    // 2. A good sidecar again: a fresh result without the marker.
    save(&p.join("box.json"), sidecar(0.75));
    wait_result(&w, p, "box", expected(1.0, 0.75));

    // 3. A binary STL cut short (1000 of its 2484 bytes).
    let before = log(p).len();
    save(&p.join("box.stl"), &box_stl(1.0)[..1000]);
    let lines = wait_event(&w, p, before, "box.stl", "failed");
    let failed = events(&lines[before..], "box.stl", "failed")[0];
    let error = failed["error"].as_str().expect("error");
    assert!(error.contains("box.stl"), "names the mesh: {error}");
    let doc = w.wait_for("the result to be marked stale", || {
        result(p, "box").filter(|d| stale(d).is_some())
    });
    let (_, reason) = stale(&doc).expect("stale");
    assert!(
        reason.contains("box.stl"),
        "reason names the file: {reason}"
    );
    assert!(
        doc_matches(&doc, &expected(1.0, 0.75)),
        "numbers kept: {doc}"
    );

    // 4. The last good mesh again, byte for byte (an undo): it must be computed afresh,
    // not taken as unchanged, or the stale marker would stay.
    let before = log(p).len();
    save(&p.join("box.stl"), box_stl(1.0));
    wait_result(&w, p, "box", expected(1.0, 0.75));
    // The result alone cannot tell (its numbers are those of the earlier line): wait for
    // the line, which is appended after the result and the exports are written.
    wait_event(&w, p, before, "box.stl", "computed");
    let lines = check_log(p);
    let computed = events(&lines[before..], "box.stl", "computed");
    assert_eq!(computed.len(), 1, "{:#?}", &lines[before..]);
    assert!(doc_matches(computed[0], &expected(1.0, 0.75)));
}

#[test]
fn a_new_mesh_is_computed() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    save(&p.join("second.json"), sidecar(10.0));
    save(&p.join("second.stl"), box_stl(0.25));
    wait_result(&w, p, "second", expected(0.25, 10.0));
    settle();
    let lines = check_log(p);
    let computed = events(&lines, "second.stl", "computed");
    assert_eq!(computed.len(), 1, "{lines:#?}");
    assert_eq!(computed[0]["iteration"], 1);
    assert!(events(&lines, "second.stl", "failed").is_empty());
    assert!(doc_matches(
        &result(p, "box").expect("box"),
        &expected(1.0, 0.5)
    ));
}

#[test]
fn a_deleted_mesh_is_logged_removed_and_its_result_kept_stale() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    let good = wait_result(&w, p, "box", expected(1.0, 0.5));
    let before = log(p).len();
    fs::remove_file(p.join("box.stl")).expect("delete");
    wait_event(&w, p, before, "box.stl", "removed");
    let doc = w.wait_for("the result to be marked stale", || {
        result(p, "box").filter(|d| stale(d).is_some())
    });
    let (_, reason) = stale(&doc).expect("stale");
    assert!(!reason.is_empty());
    assert_eq!(doc["cases"], good["cases"], "the numbers are kept");
    check_log(p);
}

#[test]
fn a_sidecar_only_change_recomputes() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    save(&p.join("box.json"), sidecar(0.8));
    wait_result(&w, p, "box", expected(1.0, 0.8));
    let lines = check_log(p);
    let computed = events(&lines, "box.stl", "computed");
    assert_eq!(computed.len(), 2);
    assert_eq!(computed[1]["iteration"], 2);
    assert!(doc_matches(computed[1], &expected(1.0, 0.8)));
}

#[test]
fn saves_inside_results_are_ignored() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    let before = log(p).len();

    save(&results(p).join("foo.stl"), box_stl(1.0));
    save(&results(p).join("foo.json"), sidecar(0.5));
    let own = fs::read(results(p).join("box.json")).expect("result");
    save(&results(p).join("box.json"), &own);
    settle();
    assert_eq!(log(p).len(), before, "a save in results/ was reacted to");

    // A save beside the meshes after them: only it shows up.
    save(&p.join("box.json"), sidecar(0.6));
    wait_result(&w, p, "box", expected(1.0, 0.6));
    let lines = check_log(p);
    let new: Vec<_> = lines[before..]
        .iter()
        .map(|l| (l["mesh"].clone(), l["event"].clone()))
        .collect();
    assert_eq!(
        new,
        vec![(serde_json::json!("box.stl"), serde_json::json!("computed"))]
    );
    assert!(!results(p).join("results").exists());
}

#[test]
fn an_unchanged_save_is_logged_without_a_new_iteration() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    let result_bytes = fs::read(results(p).join("box.json")).expect("result");
    let before = log(p).len();

    let mesh = fs::read(p.join("box.stl")).expect("mesh");
    save(&p.join("box.stl"), &mesh);
    wait_event(&w, p, before, "box.stl", "unchanged");
    let mid = log(p).len();
    let side = fs::read(p.join("box.json")).expect("sidecar");
    save(&p.join("box.json"), &side);
    wait_event(&w, p, mid, "box.stl", "unchanged");
    settle();

    let lines = check_log(p);
    let after = &lines[before..];
    assert!(
        events(after, "box.stl", "computed").is_empty(),
        "{after:#?}"
    );
    for u in events(after, "box.stl", "unchanged") {
        assert_eq!(u["iteration"], 1, "{u}");
    }
    assert_eq!(
        fs::read(results(p).join("box.json")).expect("result"),
        result_bytes,
        "the result file was rewritten"
    );
}
