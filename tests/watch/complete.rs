//! Saves known to be complete are computed at once, not after the quiet window: a file
//! renamed into place, or closed by its writer when its format shows it is whole. A file
//! closed while half-written still waits.
//!
//! The watcher here runs with a 4 s window, so a result that comes well before it can only
//! have been released by the completion of the save.

use std::fs::OpenOptions;
use std::io::Write;
use std::thread;
use std::time::{Duration, Instant};

use crate::support::*;

/// The quiet window of these tests, ms.
const LONG_WINDOW_MS: u64 = 4000;

/// Well inside the window, with room for a busy machine.
const EARLY: Duration = Duration::from_millis(2500);

fn start_long(dir: &std::path::Path) -> Watcher {
    let w = Watcher::spawn_with_window(dir, LONG_WINDOW_MS, &[]);
    w.wait_for("the watcher to say it is watching", || {
        w.stdout().contains("watching ").then_some(())
    });
    w
}

#[test]
fn a_save_renamed_into_place_is_computed_before_the_window() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = start_long(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    let before = log(p).len();
    let saved = Instant::now();
    save_by_rename(&p.join("box.stl"), &box_stl(1.5));
    w.wait_for_within(EARLY, "the renamed-in save's result", || {
        result(p, "box").filter(|d| doc_matches(d, &expected(1.5, 0.5)))
    });
    assert!(saved.elapsed() < Duration::from_millis(LONG_WINDOW_MS));
    // One save, one line: the rename's several events do not compute it twice.
    thread::sleep(Duration::from_millis(LONG_WINDOW_MS + 500));
    let lines = log(p);
    let events: Vec<&str> = lines[before..]
        .iter()
        .filter(|l| l["mesh"] == "box.stl")
        .filter_map(|l| l["event"].as_str())
        .collect();
    assert_eq!(events, ["computed"], "{lines:?}");
}

#[test]
fn an_obj_renamed_into_place_is_computed_before_the_window() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let obj = |h: f64| {
        let tris = shapes::box_solid([0.0, 0.0, 0.0], [BOX_X, BOX_Y, h], 2);
        shapes::encode::obj(&[("b", &tris[..])])
    };
    std::fs::write(p.join("box.obj"), obj(1.0)).expect("obj");
    std::fs::write(p.join("box.json"), sidecar(0.5)).expect("sidecar");
    let w = start_long(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    // Its writer finished it under another name: whole, though an OBJ shows no end.
    save_by_rename(&p.join("box.obj"), obj(0.375).as_bytes());
    w.wait_for_within(EARLY, "the renamed-in OBJ's result", || {
        result(p, "box").filter(|d| doc_matches(d, &expected(0.375, 0.5)))
    });
}

#[test]
fn a_sidecar_saved_in_place_is_computed_before_the_window() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = start_long(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    save(&p.join("box.json"), sidecar(0.25));
    w.wait_for_within(EARLY, "the new level's result", || {
        result(p, "box").filter(|d| doc_matches(d, &expected(1.0, 0.25)))
    });
}

#[test]
fn a_writer_that_closes_half_way_and_reopens_never_publishes_the_half() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    let w = start_long(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    let before = log(p).len();

    // Binary: the header states every facet; half of them are written, the file closed,
    // then reopened 400 ms later and finished.
    let bytes = box_stl_cells(1.25, 6);
    let half = 84 + 50 * ((bytes.len() - 84) / 50 / 2);
    let path = p.join("box.stl");
    std::fs::write(&path, &bytes[..half]).expect("first half");
    thread::sleep(Duration::from_millis(400));
    let mut f = OpenOptions::new().append(true).open(&path).expect("reopen");
    f.write_all(&bytes[half..]).expect("second half");
    drop(f);
    w.wait_for("the whole file's result", || {
        result(p, "box").filter(|d| doc_matches(d, &expected(1.25, 0.5)))
    });

    // ASCII: no `endsolid` yet after the first close.
    let tris = shapes::box_solid([0.0, 0.0, 0.0], [BOX_X, BOX_Y, 0.875], 6);
    let text = shapes::encode::stl_ascii(&[("box", &tris[..])]);
    let cut = text[..text.len() / 2]
        .rfind("endfacet")
        .expect("a facet end")
        + "endfacet\n".len();
    std::fs::write(&path, &text[..cut]).expect("first half");
    thread::sleep(Duration::from_millis(400));
    let mut f = OpenOptions::new().append(true).open(&path).expect("reopen");
    f.write_all(&text.as_bytes()[cut..]).expect("second half");
    drop(f);
    w.wait_for("the whole ASCII file's result", || {
        result(p, "box").filter(|d| doc_matches(d, &expected(0.875, 0.5)))
    });
    settle();
    let lines = check_log(p);
    for l in events(&lines[before..], "box.stl", "computed") {
        assert!(
            doc_matches(l, &expected(1.25, 0.5)) || doc_matches(l, &expected(0.875, 0.5)),
            "a half-written save was computed: {l}"
        );
    }
}
