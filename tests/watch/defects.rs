//! Ways the watcher was defeated in an adversarial run, one test each: polling, a file
//! still being written while another computes, a FIFO swapped in behind a link, the change
//! log and lock removed under a running watcher, deleted results, exports that disagree
//! with their result, meshes that share a stem, a watched folder moved or deleted, links
//! inside the folder, history charts rewritten for every mesh, and orphaned temporary files.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::Path;
use std::process::Command;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread;
use std::time::Duration;

use serde_json::Value;

use crate::support::*;

/// A folder with `big.stl`, whose sidecar has 8 load cases (so that a 200k-facet save of
/// it computes for a while), and `b.obj`, one box.
fn busy_folder() -> tempfile::TempDir {
    let dir = folder(&[("b", 1.0, 0.5)]);
    let p = dir.path();
    let cases: Vec<Value> = (0..8)
        .map(|k| serde_json::json!({"name": format!("c{k}"), "level": 0.01 * f64::from(k)}))
        .collect();
    let slow =
        serde_json::json!({"units": "m", "liquid": {"level": 0.5, "density": RHO}, "cases": cases});
    fs::write(p.join("big.json"), slow.to_string()).expect("sidecar");
    fs::write(p.join("big.stl"), box_stl(1.0)).expect("small first");
    fs::remove_file(p.join("b.stl")).expect("no stl");
    fs::write(p.join("b.obj"), obj_box_group(0, 1.0)).expect("obj");
    dir
}

/// Closed form for `n` such boxes of height `h` in liquid up to `level`: submerged volume
/// V = n · 2 · 1 · clamp(level, 0, h) and force (0, 0, ρ g V) (Archimedes).
fn boxes_force_and_volume(n: usize, h: f64, level: f64) -> (f64, f64) {
    let v = n as f64 * BOX_X * BOX_Y * level.clamp(0.0, h);
    (RHO * G * v, v)
}

fn force_z(doc: &Value) -> Option<f64> {
    doc["cases"][0]["force"][2].as_f64()
}

fn near(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * (a.abs() + b.abs() + 1.0)
}

/// The sum of the `fz_n` column of a facet-loads CSV (the last column).
fn csv_force_z(text: &str) -> f64 {
    text.lines()
        .skip(1)
        .filter_map(|l| l.rsplit(',').next()?.parse::<f64>().ok())
        .sum()
}

// 2b -----------------------------------------------------------------------------------
#[test]
fn a_save_completed_before_a_new_write_began_is_not_computed_from_the_new_write() {
    // While a slow mesh computes, b.obj is renamed into place (a complete save) and at once
    // rewritten in place, a closed group at a time: the rename's completion is read only
    // after the slow computation, when the file already holds part of the next save. It
    // must not be computed from that part.
    let dir = busy_folder();
    let p = dir.path();
    let w = Watcher::start(p);
    let big_done = |n: usize| events(&log(p), "big.stl", "computed").len() >= n;
    w.wait_for("big's first result", || big_done(1).then_some(()));
    let before = log(p).len();

    save_by_rename(&p.join("big.stl"), &box_stl_cells(0.75, 130));
    thread::sleep(Duration::from_millis(100));
    // The complete save: two boxes.
    let two: String = (0..2).map(|i| obj_box_group(i, 1.0)).collect();
    save_by_rename(&p.join("b.obj"), two.as_bytes());
    // At once, the next save in place, one group every 60 ms, until big is done and three
    // groups more.
    let mut f = OpenOptions::new()
        .write(true)
        .truncate(true)
        .open(p.join("b.obj"))
        .expect("open b.obj");
    let mut groups = 0;
    let mut after_big = None;
    while after_big.is_none_or(|n| groups < n + 3) && groups < 200 {
        f.write_all(obj_box_group(groups, 1.0).as_bytes())
            .expect("write");
        f.flush().expect("flush");
        groups += 1;
        if after_big.is_none() && big_done(2) {
            after_big = Some(groups);
        }
        thread::sleep(Duration::from_millis(60));
    }
    drop(f);
    let (fz, _) = boxes_force_and_volume(groups, 1.0, 0.5);
    w.wait_for("b.obj's result for the whole file", || {
        result(p, "b").filter(|d| force_z(d).is_some_and(|f| near(f, fz)))
    });
    settle();
    let (two_fz, _) = boxes_force_and_volume(2, 1.0, 0.5);
    for l in events(&check_log(p)[before..], "b.obj", "computed") {
        let got = l["cases"][0]["force"][2].as_f64().unwrap_or(f64::NAN);
        assert!(
            near(got, fz) || near(got, two_fz),
            "b.obj was computed from a save in progress ({} boxes): {l}",
            (got / boxes_force_and_volume(1, 1.0, 0.5).0).round()
        );
    }
}

// 1 ------------------------------------------------------------------------------------

#[test]
fn a_save_is_recomputed_when_polling() {
    let dir = folder(&[("box", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::spawn(p, &["--poll-ms", "100"]);
    w.wait_for("the watcher to say it is watching", || {
        w.stdout().contains("watching ").then_some(())
    });
    wait_result(&w, p, "box", expected(1.0, 0.25));
    // Two in-place saves within the same second: a change of content must count even
    // when the modification time, in whole seconds, does not move.
    save(&p.join("box.json"), sidecar(0.5));
    wait_result(&w, p, "box", expected(1.0, 0.5));
    save(&p.join("box.stl"), box_stl(0.375));
    wait_result(&w, p, "box", expected(0.375, 0.5));
}

// 2 ------------------------------------------------------------------------------------

#[test]
fn a_file_written_while_another_computes_is_never_published_half_written() {
    let dir = busy_folder();
    let p = dir.path();
    let w = Watcher::start(p);
    let big_done = |n: usize| events(&log(p), "big.stl", "computed").len() >= n;
    w.wait_for("big's first result", || big_done(1).then_some(()));
    let before = log(p).len();

    // b.obj written in place one closed group at a time, 60 ms apart (well inside the
    // 150 ms window), while big.stl computes; the writer goes on until big's new result
    // is out and three groups more.
    let big = box_stl_cells(0.75, 130);
    let mut f = OpenOptions::new()
        .write(true)
        .truncate(true)
        .open(p.join("b.obj"))
        .expect("open b.obj");
    f.write_all(obj_box_group(0, 1.0).as_bytes())
        .expect("write");
    save_by_rename(&p.join("big.stl"), &big);
    let mut groups = 1;
    let mut after_big = None;
    while after_big.is_none_or(|n| groups < n + 3) && groups < 200 {
        thread::sleep(Duration::from_millis(60));
        f.write_all(obj_box_group(groups, 1.0).as_bytes())
            .expect("write");
        f.flush().expect("flush");
        groups += 1;
        if after_big.is_none() && big_done(2) {
            after_big = Some(groups);
        }
    }
    drop(f);
    let (fz, v) = boxes_force_and_volume(groups, 1.0, 0.5);
    w.wait_for("b.obj's result for the whole file", || {
        result(p, "b").filter(|d| {
            force_z(d).is_some_and(|f| near(f, fz))
                && d["cases"][0]["submerged_volume"]
                    .as_f64()
                    .is_some_and(|x| near(x, v))
        })
    });
    settle();
    let lines = check_log(p);
    for l in events(&lines[before..], "b.obj", "computed") {
        let got = l["cases"][0]["force"][2].as_f64().unwrap_or(f64::NAN);
        assert!(
            near(got, fz),
            "b.obj was published with {} of its {groups} groups: {l}",
            (got / boxes_force_and_volume(1, 1.0, 0.5).0).round()
        );
    }
}

// 3 ------------------------------------------------------------------------------------

#[test]
fn a_fifo_swapped_in_behind_a_link_never_hangs_the_watcher() {
    let dir = folder(&[]);
    let p = dir.path();
    fs::create_dir(p.join("parts")).expect("mkdir");
    let target = p.join("parts/inner.stl");
    fs::write(&target, box_stl(1.0)).expect("mesh");
    // Sixteen links to it: sixteen reads racing the swaps after every round of saves.
    const LINKS: usize = 16;
    for k in 0..LINKS {
        std::os::unix::fs::symlink(&target, p.join(format!("near{k}.stl"))).expect("symlink");
        fs::write(p.join(format!("near{k}.json")), sidecar(0.25)).expect("sidecar");
    }
    let w = Watcher::start(p);
    wait_result(&w, p, "near0", expected(1.0, 0.25));

    // The link's target is replaced, by renames, by a FIFO and a regular file in turn
    // (inside parts/, which is not watched, so the swaps themselves raise no event),
    // while the sidecars are saved every 250 ms.
    let stop = Arc::new(AtomicBool::new(false));
    let fifo = p.join("parts/master.fifo");
    let made = Command::new("mkfifo").arg(&fifo).status();
    if !made.is_ok_and(|s| s.success()) {
        eprintln!("skipped: mkfifo is not available");
        return;
    }
    let reg = p.join("parts/master.reg");
    fs::write(&reg, box_stl(1.0)).expect("regular twin");
    let swapper = {
        let stop = stop.clone();
        let parts = p.join("parts");
        let target = target.clone();
        thread::spawn(move || {
            // Hard links of the two masters, each renamed over the target in turn.
            while !stop.load(Ordering::SeqCst) {
                for (master, name) in [(&fifo, "swap.fifo"), (&reg, "swap.reg")] {
                    let swap = parts.join(name);
                    if fs::hard_link(master, &swap).is_ok() {
                        let _ = fs::rename(&swap, &target);
                    }
                }
            }
        })
    };
    for round in 0..16 {
        for k in 0..LINKS {
            let level = 0.25 + 0.01 * f64::from(round % 2);
            save(&p.join(format!("near{k}.json")), sidecar(level));
        }
        thread::sleep(Duration::from_millis(250));
    }
    stop.store(true, Ordering::SeqCst);
    swapper.join().expect("swapper");
    fs::write(p.join("parts/final.stl"), box_stl(0.5)).expect("final");
    fs::rename(p.join("parts/final.stl"), &target).expect("rename");
    for k in 0..LINKS {
        save(&p.join(format!("near{k}.json")), sidecar(0.375));
    }
    // A hung watcher never gets there; a busy machine may take a while.
    let want = expected(0.5, 0.375);
    w.wait_for_within(Duration::from_secs(40), "every link's final result", || {
        (0..LINKS)
            .all(|k| {
                result(p, &format!("near{k}"))
                    .is_some_and(|d| doc_matches(&d, &want) && stale(&d).is_none())
            })
            .then_some(())
    });
}

// 4 ------------------------------------------------------------------------------------

/// The `computed` iterations of `mesh` in the log, in order.
fn iterations(lines: &[Value], mesh: &str) -> Vec<u64> {
    events(lines, mesh, "computed")
        .iter()
        .filter_map(|l| l["iteration"].as_u64())
        .collect()
}

#[test]
fn a_change_log_deleted_while_watching_is_recreated_with_every_line() {
    let dir = folder(&[("box", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.25));
    save(&p.join("box.json"), sidecar(0.5));
    wait_result(&w, p, "box", expected(1.0, 0.5));
    fs::remove_file(log_path(p)).expect("delete the log");
    save(&p.join("box.json"), sidecar(0.75));
    wait_result(&w, p, "box", expected(1.0, 0.75));
    let lines = check_log(p);
    assert_eq!(iterations(&lines, "box.stl"), [1, 2, 3], "{lines:#?}");
    w.wait_for("the terminal to say what happened", || {
        let out = w.stdout();
        (out.contains("WARNING") && out.contains("change log") && out.contains("deleted"))
            .then_some(())
    });
    // The next start continues the numbering.
    drop(w);
    let w = Watcher::start(p);
    save(&p.join("box.json"), sidecar(0.125));
    wait_result(&w, p, "box", expected(1.0, 0.125));
    assert_eq!(iterations(&check_log(p), "box.stl"), [1, 2, 3, 4]);
}

#[test]
fn a_results_folder_deleted_while_watching_keeps_the_log_and_the_lock() {
    let dir = folder(&[("box", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.25));
    fs::remove_dir_all(results(p)).expect("delete results/");
    // A second watcher must still be refused.
    let mut second = Watcher::spawn(p, &[]);
    let status = second.wait_exit();
    assert_eq!(status.code(), Some(1), "{}", second.stdout());
    assert!(
        second.stderr().contains("another wetload watch"),
        "{}",
        second.stderr()
    );
    save(&p.join("box.json"), sidecar(0.5));
    wait_result(&w, p, "box", expected(1.0, 0.5));
    let lines = check_log(p);
    assert_eq!(iterations(&lines, "box.stl"), [1, 2], "{lines:#?}");
    w.wait_for("the terminal to say what happened", || {
        let out = w.stdout();
        (out.contains("WARNING") && out.contains("deleted")).then_some(())
    });
}

#[test]
fn a_deleted_lock_file_does_not_let_a_second_watcher_start() {
    let dir = folder(&[("box", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.25));
    fs::remove_file(results(p).join(".wetload.lock")).expect("delete the lock");
    let mut second = Watcher::spawn(p, &[]);
    let status = second.wait_exit();
    assert_eq!(status.code(), Some(1), "{}", second.stdout());
    save(&p.join("box.json"), sidecar(0.5));
    wait_result(&w, p, "box", expected(1.0, 0.5));
    settle();
    let lines = check_log(p);
    assert_eq!(iterations(&lines, "box.stl"), [1, 2], "{lines:#?}");
}

// 5 ------------------------------------------------------------------------------------

fn once(dir: &Path) -> std::process::Output {
    Command::new(assert_cmd::cargo::cargo_bin("wetload"))
        .arg("watch")
        .arg(dir)
        .arg("--once")
        .output()
        .expect("run wetload watch --once")
}

#[test]
fn a_deleted_result_is_written_again_by_the_next_run() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    assert!(once(p).status.success());
    let doc = result(p, "box").expect("result");
    assert!(doc_matches(&doc, &expected(1.0, 0.5)));
    fs::remove_file(results(p).join("box.json")).expect("delete");
    fs::remove_file(results(p).join("box.csv")).expect("delete");
    let out = once(p);
    assert!(out.status.success());
    let doc = result(p, "box").expect("the result is written again");
    assert!(doc_matches(&doc, &expected(1.0, 0.5)), "{doc}");
    assert!(results(p).join("box.csv").exists(), "and its exports");
    // Same content: no new iteration.
    assert_eq!(iterations(&check_log(p), "box.stl"), [1]);
}

// 6 ------------------------------------------------------------------------------------

#[test]
fn exports_never_disagree_with_the_result_beside_them() {
    let dir = folder(&[("box", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.25));
    let csv = results(p).join("box.csv");
    let text = fs::read_to_string(&csv).expect("csv");
    assert!(near(csv_force_z(&text), expected(1.0, 0.25).force[2]));
    // The field export can no longer be replaced (a non-empty folder took its name).
    let vtp = results(p).join("box.vtp");
    fs::remove_file(&vtp).expect("remove vtp");
    fs::create_dir_all(vtp.join("inside")).expect("block vtp");
    save(&p.join("box.json"), sidecar(0.75));
    w.wait_for("the new result or a write error", || {
        let doc = result(p, "box")?;
        (doc_matches(&doc, &expected(1.0, 0.75)) || w.stdout().contains("cannot write"))
            .then_some(())
    });
    settle();
    let doc = result(p, "box").expect("result");
    let fz = force_z(&doc).expect("force");
    if let Ok(text) = fs::read_to_string(&csv) {
        assert!(
            near(csv_force_z(&text), fz),
            "box.csv sums to {} N but box.json says {fz} N",
            csv_force_z(&text)
        );
    }
}

// 7 ------------------------------------------------------------------------------------

#[test]
fn meshes_sharing_a_stem_get_results_of_their_own() {
    let dir = folder(&[("gate", 1.0, 1.5)]);
    let p = dir.path();
    // A result of gate.stl from a run when it was alone: it no longer belongs to anyone.
    let mut earlier = Watcher::spawn(p, &["--once"]);
    assert!(earlier.wait_exit().success());
    assert!(results(p).join("gate.json").exists());
    let tall = shapes::box_solid([0.0, 0.0, 0.0], [BOX_X, BOX_Y, 2.0], 2);
    fs::write(
        p.join("gate.obj"),
        shapes::encode::obj(&[("gate", &tall[..])]),
    )
    .expect("obj");
    let w = Watcher::start(p);
    let read = |name: &str| -> Option<Value> {
        serde_json::from_slice(&fs::read(results(p).join(name)).ok()?).ok()
    };
    w.wait_for("a result of each mesh", || {
        let s = read("gate.stl.json")?;
        let o = read("gate.obj.json")?;
        (doc_matches(&s, &expected(1.0, 1.5)) && doc_matches(&o, &expected(2.0, 1.5))).then_some(())
    });
    assert!(!results(p).join("gate.json").exists());
    assert!(results(p).join("gate.stl.csv").exists() && results(p).join("gate.obj.csv").exists());
    assert_eq!(
        w.stdout().matches("share the stem").count(),
        1,
        "{}",
        w.stdout()
    );
    // A one-shot calc of one of them names its result the same way.
    let out = Command::new(assert_cmd::cargo::cargo_bin("wetload"))
        .arg("calc")
        .arg(p.join("gate.obj"))
        .output()
        .expect("calc");
    assert!(out.status.success());
    assert!(!results(p).join("gate.json").exists());
}

// 8 ------------------------------------------------------------------------------------

#[test]
fn a_renamed_watched_folder_stops_the_watcher_without_writing_at_the_old_path() {
    let top = tempfile::tempdir().expect("temp dir");
    let old = top.path().join("project");
    fs::create_dir(&old).expect("mkdir");
    fs::write(old.join("box.stl"), box_stl(1.0)).expect("mesh");
    fs::write(old.join("box.json"), sidecar(0.5)).expect("sidecar");
    let mut w = Watcher::start(&old);
    wait_result(&w, &old, "box", expected(1.0, 0.5));
    let new = top.path().join("project-renamed");
    fs::rename(&old, &new).expect("rename the folder");
    save(&new.join("box.json"), sidecar(0.75));
    let status = w.wait_exit();
    assert!(!status.success());
    assert!(
        w.stderr().contains("moved or deleted") && w.stderr().contains("project"),
        "{}",
        w.stderr()
    );
    assert!(!old.exists(), "the old path was recreated");
    assert!(
        !events(&check_log(&new), "box.stl", "removed")
            .iter()
            .any(|_| true),
        "a save in the moved folder was logged as a removal"
    );
}

#[test]
fn a_deleted_watched_folder_stops_the_watcher() {
    let top = tempfile::tempdir().expect("temp dir");
    let d = top.path().join("project");
    fs::create_dir(&d).expect("mkdir");
    fs::write(d.join("box.stl"), box_stl(1.0)).expect("mesh");
    fs::write(d.join("box.json"), sidecar(0.5)).expect("sidecar");
    let mut w = Watcher::start(&d);
    wait_result(&w, &d, "box", expected(1.0, 0.5));
    fs::remove_dir_all(&d).expect("delete the folder");
    let status = w.wait_exit();
    assert!(!status.success());
    assert!(w.stderr().contains("moved or deleted"), "{}", w.stderr());
    assert!(!d.exists(), "the folder was recreated");
}

// 9 ------------------------------------------------------------------------------------

#[test]
fn saving_a_linked_mesh_recomputes_the_link() {
    let dir = folder(&[("c", 1.0, 0.5)]);
    let p = dir.path();
    std::os::unix::fs::symlink(p.join("c.stl"), p.join("d.stl")).expect("symlink");
    fs::write(p.join("d.json"), sidecar(0.25)).expect("sidecar");
    let w = Watcher::start(p);
    wait_result(&w, p, "d", expected(1.0, 0.25));
    save_by_rename(&p.join("c.stl"), &box_stl(0.125));
    wait_result(&w, p, "c", expected(0.125, 0.5));
    wait_result(&w, p, "d", expected(0.125, 0.25));
    // An in-place save too.
    save(&p.join("c.stl"), box_stl(0.1875));
    wait_result(&w, p, "d", expected(0.1875, 0.25));
}

// 10 -----------------------------------------------------------------------------------

#[test]
fn a_save_rewrites_only_its_own_history_chart() {
    use std::os::unix::fs::MetadataExt;
    let dir = folder(&[("a", 1.0, 0.25), ("b", 1.0, 0.25)]);
    let p = dir.path();
    let w = Watcher::start(p);
    wait_result(&w, p, "a", expected(1.0, 0.25));
    wait_result(&w, p, "b", expected(1.0, 0.25));
    for stem in ["a", "b"] {
        save(&p.join(format!("{stem}.json")), sidecar(0.5));
        wait_result(&w, p, stem, expected(1.0, 0.5));
    }
    let chart = |stem: &str| results(p).join(format!("{stem}.history.svg"));
    w.wait_for("both history charts", || {
        (chart("a").exists() && chart("b").exists()).then_some(())
    });
    settle();
    let b_before = fs::metadata(chart("b")).expect("b chart").ino();
    let a_before = fs::metadata(chart("a")).expect("a chart").ino();
    save(&p.join("a.json"), sidecar(0.75));
    wait_result(&w, p, "a", expected(1.0, 0.75));
    w.wait_for("a's chart rewritten", || {
        (fs::metadata(chart("a")).ok()?.ino() != a_before).then_some(())
    });
    settle();
    assert_eq!(
        fs::metadata(chart("b")).expect("b chart").ino(),
        b_before,
        "b's history chart was rewritten though b did not change"
    );
}

// 11 -----------------------------------------------------------------------------------

#[test]
fn temporary_files_left_by_a_killed_run_are_removed_on_start() {
    let dir = folder(&[("box", 1.0, 0.5)]);
    let p = dir.path();
    fs::create_dir(results(p)).expect("results");
    // What an atomic write leaves when its process is killed before the rename.
    let orphan = results(p).join(".wetload-Xq3kZ9.tmp");
    fs::write(&orphan, b"{\"schema\": 1, \"cases\": [").expect("orphan");
    let w = Watcher::start(p);
    wait_result(&w, p, "box", expected(1.0, 0.5));
    assert!(
        !orphan.exists(),
        "an orphaned temporary file was left in results/"
    );
    assert!(w.stdout().contains("temporary"), "{}", w.stdout());
}
