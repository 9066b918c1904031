//! A bounded soak: hundreds of mixed saves into one watched folder by several writers at
//! once (in-place writes in pauses, atomic renames, sidecar-only saves, broken saves that
//! are mended, deletions and re-creations, a slow mesh that keeps the watcher busy), while
//! an observer reads every result file as often as it can.
//!
//! Afterwards every result must equal a fresh `wetload calc` of the final content, and
//! every result ever observed, and every `computed` line, must be the closed-form load of
//! a complete content that was written: never of a half-written file.
//!
//! About 540 saves take under half a minute here, so it is part of the normal run
//! (`cargo test --test watch soak` alone). `WETLOAD_SOAK_SAVES` sets the number of saves
//! per writer (default 100; the slow mesh's writer makes a quarter of them);
//! `WETLOAD_SOAK_SEED` repeats a run's choices (the seed is printed).

use std::collections::BTreeMap;
use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::thread;
use std::time::Duration;

use serde_json::Value;

use crate::support::*;

/// Level of every sidecar, m: above every box, so a box's load depends on its height.
const LEVEL: f64 = 2.0;

/// A content a writer put in full into a mesh: `n` boxes of height `h` (the boxes at
/// x = 3i, 2 × 1 m in plan).
#[derive(Clone, Copy, Debug)]
struct MeshContent {
    n: usize,
    h: f64,
}

/// Closed form for `c` in a liquid of density `rho` up to [`LEVEL`] (above the boxes):
/// V = n · 2 · h, F = (0, 0, ρ g V) (Archimedes), and about the origin the centre of
/// buoyancy (x̄, 0.5, h/2) with x̄ = 1 + 3 (n − 1) / 2 gives M = (0.5 F, −x̄ F, 0).
fn closed_form(c: MeshContent, rho: f64) -> [f64; 4] {
    let v = c.n as f64 * BOX_X * BOX_Y * c.h;
    let f = rho * G * v;
    let xbar = 1.0 + 3.0 * (c.n as f64 - 1.0) / 2.0;
    [f, 0.5 * BOX_Y * f, -xbar * f, v]
}

/// (Fz, Mx, My, V) of the first case of a result document or `computed` line.
fn loads(doc: &Value) -> Option<[f64; 4]> {
    let c = &doc["cases"][0];
    Some([
        c["force"][2].as_f64()?,
        c["moment"][0].as_f64()?,
        c["moment"][1].as_f64()?,
        c["submerged_volume"].as_f64()?,
    ])
}

fn same(a: [f64; 4], b: [f64; 4]) -> bool {
    (0..4).all(|k| (a[k] - b[k]).abs() <= 1e-9 * (a[k].abs() + b[k].abs() + 1.0))
}

fn obj_text(c: MeshContent) -> String {
    let mut s = String::new();
    for i in 0..c.n {
        s.push_str(&obj_box_group(i, c.h));
    }
    s
}

fn soak_sidecar(rho: f64) -> String {
    serde_json::json!({"units": "m", "liquid": {"level": LEVEL, "density": rho}}).to_string()
}

/// A result seen on disk: the mesh's stem and its (Fz, Mx, My, V).
type Observed = (String, [f64; 4]);

/// Everything complete that was written into one mesh's files.
#[derive(Default)]
struct Written {
    meshes: Vec<MeshContent>,
    densities: Vec<f64>,
}

impl Written {
    fn matches(&self, got: [f64; 4]) -> bool {
        self.meshes.iter().any(|&c| {
            self.densities
                .iter()
                .any(|&rho| same(got, closed_form(c, rho)))
        })
    }
}

/// One writer: saves its mesh (OBJ or binary STL) and sidecar `saves` times in every way
/// a user's tools do, recording each complete content before it starts to write it.
#[allow(clippy::too_many_arguments)]
fn writer(
    dir: PathBuf,
    stem: &'static str,
    stl: bool,
    slow_cells: Option<usize>,
    saves: u64,
    seed: u64,
    ids: Arc<AtomicU64>,
    written: Arc<Mutex<Written>>,
) -> thread::JoinHandle<()> {
    thread::spawn(move || {
        let mut rng = Rng(seed | 1);
        let ext = if stl { "stl" } else { "obj" };
        let mesh = dir.join(format!("{stem}.{ext}"));
        let side = dir.join(format!("{stem}.json"));
        for _ in 0..saves {
            // Every content unique: its height comes from a counter shared by all writers.
            let id = ids.fetch_add(1, Ordering::SeqCst);
            let h = 0.25 + id as f64 / 2048.0;
            let n = if stl { 1 } else { 1 + rng.below(6) as usize };
            let content = MeshContent { n, h };
            let bytes = if stl {
                let cells = slow_cells.unwrap_or(2);
                let tris = shapes::box_solid([0.0, 0.0, 0.0], [BOX_X, BOX_Y, h], cells);
                shapes::encode::stl_binary(&tris, "soak")
            } else {
                obj_text(content).into_bytes()
            };
            match rng.below(7) {
                // In place, in chunks with pauses inside the window.
                0 | 1 => {
                    written.lock().expect("lock").meshes.push(content);
                    let mut f = OpenOptions::new()
                        .create(true)
                        .write(true)
                        .truncate(true)
                        .open(&mesh)
                        .expect("open");
                    let chunks = 1 + rng.below(4) as usize;
                    for (i, chunk) in bytes.chunks(bytes.len().div_ceil(chunks)).enumerate() {
                        if i > 0 {
                            thread::sleep(Duration::from_millis(rng.below(50)));
                        }
                        f.write_all(chunk).expect("write");
                        f.flush().expect("flush");
                    }
                }
                // Atomic rename.
                2 | 3 => {
                    written.lock().expect("lock").meshes.push(content);
                    save_by_rename(&mesh, &bytes);
                }
                // Sidecar only: a new density.
                4 => {
                    let rho = 900.0 + id as f64;
                    written.lock().expect("lock").densities.push(rho);
                    save(&side, soak_sidecar(rho));
                }
                // A broken save, mended a moment later.
                5 => {
                    if rng.below(2) == 0 {
                        save(&side, "{\"units\": \"m\", \"liquid\": {\"lev");
                        thread::sleep(Duration::from_millis(50 + rng.below(400)));
                        let rho = 900.0 + id as f64;
                        written.lock().expect("lock").densities.push(rho);
                        save(&side, soak_sidecar(rho));
                    } else {
                        // Half the file; an OBJ cut at a group's end could be a valid
                        // mesh of its own, so a non-finite vertex makes sure it is not.
                        let mut half = bytes[..bytes.len() / 2].to_vec();
                        if !stl {
                            half.extend_from_slice(b"\nv nan 0 0\n");
                        }
                        save(&mesh, &half);
                        thread::sleep(Duration::from_millis(50 + rng.below(400)));
                        written.lock().expect("lock").meshes.push(content);
                        save_by_rename(&mesh, &bytes);
                    }
                }
                // Deleted, then written again.
                _ => {
                    let _ = fs::remove_file(&mesh);
                    thread::sleep(Duration::from_millis(rng.below(300)));
                    written.lock().expect("lock").meshes.push(content);
                    save(&mesh, &bytes);
                }
            }
            thread::sleep(Duration::from_millis(rng.below(250)));
        }
        // The final content: always complete and good.
        let id = ids.fetch_add(1, Ordering::SeqCst);
        let content = MeshContent {
            n: if stl { 1 } else { 3 },
            h: 0.25 + id as f64 / 2048.0,
        };
        let bytes = if stl {
            let tris = shapes::box_solid(
                [0.0, 0.0, 0.0],
                [BOX_X, BOX_Y, content.h],
                slow_cells.unwrap_or(2),
            );
            shapes::encode::stl_binary(&tris, "soak")
        } else {
            obj_text(content).into_bytes()
        };
        let rho = 900.0 + id as f64;
        {
            let mut w = written.lock().expect("lock");
            w.meshes.push(content);
            w.densities.push(rho);
        }
        save_by_rename(&mesh, &bytes);
        save(&side, soak_sidecar(rho));
    })
}

#[test]
fn soak_hundreds_of_mixed_saves_publish_only_complete_contents() {
    let saves: u64 = std::env::var("WETLOAD_SOAK_SAVES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(100);
    let seed: u64 = std::env::var("WETLOAD_SOAK_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(7, |d| d.as_nanos() as u64)
        });
    eprintln!("soak: {saves} saves per writer, WETLOAD_SOAK_SEED={seed}");

    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path().to_owned();
    // (stem, binary STL?, cells of a slow STL)
    let meshes: [(&'static str, bool, Option<usize>); 6] = [
        ("alpha", false, None),
        ("beta", false, None),
        ("gamma", false, None),
        ("delta", true, None),
        ("slow", true, Some(60)),
        ("omega", false, None),
    ];
    let ids = Arc::new(AtomicU64::new(0));
    let mut record: BTreeMap<&'static str, Arc<Mutex<Written>>> = BTreeMap::new();
    for (stem, stl, cells) in meshes {
        let id = ids.fetch_add(1, Ordering::SeqCst);
        let content = MeshContent {
            n: 1,
            h: 0.25 + id as f64 / 2048.0,
        };
        let ext = if stl { "stl" } else { "obj" };
        let bytes = if stl {
            let tris = shapes::box_solid(
                [0.0, 0.0, 0.0],
                [BOX_X, BOX_Y, content.h],
                cells.unwrap_or(2),
            );
            shapes::encode::stl_binary(&tris, "soak")
        } else {
            obj_text(content).into_bytes()
        };
        fs::write(p.join(format!("{stem}.{ext}")), bytes).expect("mesh");
        fs::write(p.join(format!("{stem}.json")), soak_sidecar(1000.0)).expect("sidecar");
        record.insert(
            stem,
            Arc::new(Mutex::new(Written {
                meshes: vec![content],
                densities: vec![1000.0],
            })),
        );
    }
    let mut w = Watcher::start(&p);

    // The observer: every result document it can read, as often as it can.
    let stop = Arc::new(AtomicBool::new(false));
    let seen: Arc<Mutex<Vec<Observed>>> = Arc::default();
    let observer = {
        let (stop, seen, p) = (stop.clone(), seen.clone(), p.clone());
        thread::spawn(move || {
            while !stop.load(Ordering::SeqCst) {
                for (stem, _, _) in meshes {
                    if let Some(doc) = result(&p, stem)
                        && stale(&doc).is_none()
                        && let Some(l) = loads(&doc)
                    {
                        let mut s = seen.lock().expect("lock");
                        if !s.iter().any(|(m, x)| m == stem && *x == l) {
                            s.push((stem.to_owned(), l));
                        }
                    }
                }
                thread::sleep(Duration::from_millis(5));
            }
        })
    };
    let writers: Vec<_> = meshes
        .iter()
        .enumerate()
        .map(|(k, &(stem, stl, cells))| {
            // The slow mesh is saved less often.
            let n = if cells.is_some() { saves / 4 } else { saves };
            writer(
                p.clone(),
                stem,
                stl,
                cells,
                n,
                seed.wrapping_add(k as u64 * 0x9e37_79b9),
                ids.clone(),
                record[stem].clone(),
            )
        })
        .collect();
    for t in writers {
        t.join().expect("writer");
    }

    // Quiet: wait until every result is the final content's and stays so.
    for (stem, _, _) in meshes {
        let written = record[stem].lock().expect("lock");
        let last = *written.meshes.last().expect("a final content");
        let rho = *written.densities.last().expect("a final density");
        drop(written);
        w.wait_for_within(
            Duration::from_secs(60),
            &format!("{stem}'s result for its final content"),
            || {
                result(&p, stem).filter(|d| {
                    stale(d).is_none() && loads(d).is_some_and(|l| same(l, closed_form(last, rho)))
                })
            },
        );
    }
    settle();
    stop.store(true, Ordering::SeqCst);
    observer.join().expect("observer");
    assert!(w.is_running(), "the watcher stopped:\n{}", w.stderr());
    w.kill();

    // Every result equals a fresh calc of the final content.
    for (stem, stl, _) in meshes {
        let ext = if stl { "stl" } else { "obj" };
        let out = calc_ok(&["--json".into(), p.join(format!("{stem}.{ext}"))]);
        let fresh: Value = serde_json::from_slice(&out.stdout).expect("calc --json");
        let doc = result(&p, stem).expect("result");
        assert_eq!(
            doc["cases"], fresh["cases"],
            "{stem}: the watcher's result is not calc's"
        );
    }

    // Everything ever observed or logged is a complete content.
    let lines = check_log(&p);
    let computed: usize = lines.iter().filter(|l| l["event"] == "computed").count();
    let seen = seen.lock().expect("lock");
    eprintln!(
        "soak: {} saves, {computed} computations, {} distinct results observed",
        ids.load(Ordering::SeqCst),
        seen.len()
    );
    for (stem, l) in seen.iter() {
        assert!(
            record[stem.as_str()].lock().expect("lock").matches(*l),
            "{stem}: a result was published that no complete content gives: {l:?}"
        );
    }
    for line in lines.iter().filter(|l| l["event"] == "computed") {
        let mesh = line["mesh"].as_str().expect("mesh");
        let stem = Path::new(mesh)
            .file_stem()
            .expect("stem")
            .to_string_lossy()
            .into_owned();
        let got = loads(line).expect("loads");
        assert!(
            record[stem.as_str()].lock().expect("lock").matches(got),
            "a computed line of no complete content: {line}"
        );
    }
    assert_results_parse(&p);
    let leftovers: Vec<_> = fs::read_dir(results(&p))
        .expect("results")
        .filter_map(Result::ok)
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}
