//! Watcher benchmark: time from a save to the new result on disk.
//!
//! Run with `cargo bench --bench latency`. The bench writes a closed torus of 100,000
//! facets (binary STL, 5 MB) and its sidecar into a temporary folder, starts the release
//! `wetload watch` on it with the default 500 ms debounce window, and waits for the first
//! pass. Each iteration then rewrites the sidecar in place (the level alternates between
//! two values, so every save changes the result) and polls `results/<stem>.json` every
//! 2 ms until its content differs; the iteration's time is save → new content.
//!
//! Criterion reports the per-iteration time; the bench also prints the median of all the
//! iterations it ran (warm-up included) and the part above the debounce window, which is
//! what the watcher itself adds (event delivery, read, hash, compute, atomic write with
//! fsync, change-log append). Target: debounce + under 100 ms.
//!
//! Two more set-ups measure what grows with the folder and with its history:
//!
//! * `save_to_result_1000_meshes`: 1,000 small closed boxes (48 facets each) with their
//!   sidecars in the folder; each save rewrites one box's sidecar, in turn.
//! * `save_to_result_100k_log`: 20 boxes and a change log of 100,000 lines about them
//!   (written before the watcher starts); each save rewrites one box's sidecar.
//!
//! For both, the bench also times save → the folder's page `report.html` rewritten (the
//! page follows the result) and reads the watcher's resident memory (`VmRSS`, and the peak
//! `VmHWM`) after the first pass and at the end, to show whether memory stays flat.
//! Target: within the window + 150 ms.
//!
//! * `save_by_rename_100k_stl` / `_obj`: the 100,000-facet torus as binary STL and as OBJ,
//!   saved by atomic rename (a finished temporary file renamed over the mesh) with two
//!   contents in turn; save → new result. A completed save is computed at once, without
//!   the quiet window. Target: a median of 150 ms.
//!
//! `WETLOAD_LATENCY=torus|meshes|log|rename` runs one set-up only (default: all four).

use std::fs;
use std::io::{BufRead, BufReader};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::thread;
use std::time::{Duration, Instant};

use criterion::{Criterion, SamplingMode, criterion_group, criterion_main};

/// The watcher's default debounce window (`--debounce-ms`), which the bench keeps.
const DEBOUNCE: Duration = Duration::from_millis(500);

fn sidecar(level: f64) -> String {
    format!(r#"{{"units": "m", "liquid": {{"level": {level:?}, "density": 1000}}}}"#)
}

/// Kills the watcher however the bench ends.
struct Running(Child);

impl Drop for Running {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

/// Starts `wetload watch DIR` and waits until it says it is watching.
fn start(dir: &Path) -> Running {
    let mut child = Command::new(env!("CARGO_BIN_EXE_wetload"))
        .arg("watch")
        .arg(dir)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::inherit())
        .spawn()
        .expect("start wetload watch");
    let ready = Arc::new(AtomicBool::new(false));
    let flag = ready.clone();
    let out = child.stdout.take().expect("piped stdout");
    // Keep draining stdout for the whole run so the watcher never blocks on a full pipe.
    thread::spawn(move || {
        for line in BufReader::new(out).lines() {
            let Ok(line) = line else { break };
            if line.contains("watching ") {
                flag.store(true, Ordering::SeqCst);
            }
        }
    });
    let running = Running(child);
    let end = Instant::now() + Duration::from_secs(60);
    while !ready.load(Ordering::SeqCst) {
        assert!(
            Instant::now() < end,
            "the watcher did not start within 60 s"
        );
        thread::sleep(Duration::from_millis(10));
    }
    running
}

/// Polls `result` every millisecond until its content differs from `before` (a missing
/// file is an atomic rename in progress: look again); panics 10 s after `t0`.
fn wait_for_new(result: &Path, before: &[u8], t0: Instant) {
    loop {
        thread::sleep(Duration::from_millis(1));
        if fs::read(result).is_ok_and(|now| now != before) {
            return;
        }
        assert!(
            t0.elapsed() < Duration::from_secs(10),
            "no new result 10 s after a save"
        );
    }
}

fn median(v: &mut [Duration]) -> Duration {
    v.sort();
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2
    }
}

/// Whether the set-up `name` is to run (`WETLOAD_LATENCY`, default all).
fn wanted(name: &str) -> bool {
    std::env::var("WETLOAD_LATENCY").map_or(true, |v| v.split(',').any(|x| x == name))
}

/// `VmRSS` and `VmHWM` of a process, MB (0 where `/proc` has no answer).
fn memory_mb(pid: u32) -> (f64, f64) {
    let status = fs::read_to_string(format!("/proc/{pid}/status")).unwrap_or_default();
    let field = |key: &str| {
        status
            .lines()
            .find(|l| l.starts_with(key))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|kb| kb.parse::<f64>().ok())
            .map_or(0.0, |kb| kb / 1024.0)
    };
    (field("VmRSS:"), field("VmHWM:"))
}

/// A closed box 2 × 1 × `h` m (48 facets) as a binary STL.
fn small_box(h: f64) -> Vec<u8> {
    let tris = shapes::box_solid([0.0, 0.0, 0.0], [2.0, 1.0, h], 2);
    shapes::encode::stl_binary(&tris, "wetload latency bench box")
}

/// Times `saves` saves of the sidecars of `stems` in turn (levels alternating), each from
/// the save to the new result and to the rewritten page; prints medians and memory.
fn saves_in_a_folder(c: &mut Criterion, label: &str, dir: &Path, stems: &[String]) {
    let watcher = start(dir);
    let pid = watcher.0.id();
    let first = memory_mb(pid);
    let page = dir.join("results").join("report.html");
    let mut to_result = Vec::new();
    let mut to_page = Vec::new();
    let mut k = 0usize;
    let mut g = c.benchmark_group("watch");
    g.sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(8));
    g.bench_function(label, |b| {
        b.iter_custom(|iters| {
            let mut total = Duration::ZERO;
            for _ in 0..iters {
                let stem = &stems[k % stems.len()];
                k += 1;
                let result = dir.join("results").join(format!("{stem}.json"));
                let before = fs::read(&result).expect("read result");
                let page_before = fs::read(&page).unwrap_or_default();
                let level = if (k / stems.len()).is_multiple_of(2) {
                    0.5
                } else {
                    0.25
                };
                let t0 = Instant::now();
                fs::write(dir.join(format!("{stem}.json")), sidecar(level)).expect("save");
                let mut got_result = None;
                loop {
                    thread::sleep(Duration::from_millis(2));
                    if got_result.is_none() && fs::read(&result).is_ok_and(|now| now != before) {
                        got_result = Some(t0.elapsed());
                    }
                    if got_result.is_some() && fs::read(&page).is_ok_and(|now| now != page_before) {
                        break;
                    }
                    assert!(
                        t0.elapsed() < Duration::from_secs(30),
                        "no new result and page 30 s after a save"
                    );
                }
                let dr = got_result.expect("result seen");
                to_result.push(dr);
                to_page.push(t0.elapsed());
                total += dr;
            }
            total
        })
    });
    g.finish();
    let last = memory_mb(pid);
    let (mr, mp) = (median(&mut to_result), median(&mut to_page));
    println!(
        "{label}: over {} saves (warm-up included): save → result median {:.1} ms (debounce {} ms + {:.1} ms), save → page median {:.1} ms; \
         watcher memory after the first pass {:.1} MB (peak {:.1} MB), at the end {:.1} MB (peak {:.1} MB)",
        to_result.len(),
        mr.as_secs_f64() * 1e3,
        DEBOUNCE.as_millis(),
        mr.saturating_sub(DEBOUNCE).as_secs_f64() * 1e3,
        mp.as_secs_f64() * 1e3,
        first.0,
        first.1,
        last.0,
        last.1,
    );
}

fn thousand_meshes(c: &mut Criterion) {
    if !wanted("meshes") {
        return;
    }
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let stems: Vec<String> = (0..1000).map(|i| format!("m{i:04}")).collect();
    for s in &stems {
        fs::write(p.join(format!("{s}.stl")), small_box(1.0)).expect("mesh");
        fs::write(p.join(format!("{s}.json")), sidecar(0.25)).expect("sidecar");
    }
    // Saves spread over the folder, every one a different mesh.
    let picked: Vec<String> = stems.iter().step_by(37).cloned().collect();
    saves_in_a_folder(c, "save_to_result_1000_meshes", p, &picked);
}

fn long_log(c: &mut Criterion) {
    if !wanted("log") {
        return;
    }
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let stems: Vec<String> = (0..20).map(|i| format!("m{i:02}")).collect();
    for s in &stems {
        fs::write(p.join(format!("{s}.stl")), small_box(1.0)).expect("mesh");
        fs::write(p.join(format!("{s}.json")), sidecar(0.25)).expect("sidecar");
    }
    // 100,000 `computed` lines, 5,000 a mesh, in the change log's format (the hashes are
    // of no content, so the first pass computes every mesh once more).
    fs::create_dir(p.join("results")).expect("results");
    let mut log = String::with_capacity(100_000 * 700);
    for i in 0..100_000usize {
        let stem = &stems[i % 20];
        let it = i / 20 + 1;
        let f = 9806.65 * (0.25 + (it % 7) as f64 * 0.01) * 2.0;
        log.push_str(&format!(
            concat!(
                "{{\"time\":\"2026-01-01T00:00:00.000Z\",\"mesh\":\"{}.stl\",\"event\":\"computed\",",
                "\"iteration\":{},\"mesh_hash\":\"{:064x}\",\"sidecar_hash\":\"{:064x}\",\"facets\":48,\"warnings\":0,",
                "\"cases\":[{{\"name\":\"default\",\"force\":[0.0,0.0,{}],\"moment\":[{},{},0.0],",
                "\"vertical_force\":{},\"uplift\":{},\"downthrust\":0.0,\"wetted_area\":5.0,",
                "\"submerged_volume\":0.5,\"axis_moments\":{{}},\"flotation_factor\":null,",
                "\"change\":null,\"since_baseline\":null}}]}}\n"
            ),
            stem, it, i, i, f, 0.5 * f, -f, f, f
        ));
    }
    fs::write(p.join("results").join("changes.jsonl"), log).expect("log");
    saves_in_a_folder(c, "save_to_result_100k_log", p, &stems);
}

fn latency(c: &mut Criterion) {
    if !wanted("torus") {
        return;
    }
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    // 250 × 200 quads: 100,000 facets, closed, wound outward.
    let tris = shapes::torus([0.0, 0.0, 0.0], 3.0, 1.0, 250, 200);
    assert_eq!(tris.len(), 100_000);
    fs::write(
        p.join("ring.stl"),
        shapes::encode::stl_binary(&tris, "wetload latency bench torus"),
    )
    .expect("write mesh");
    fs::write(p.join("ring.json"), sidecar(0.25)).expect("write sidecar");
    let result = p.join("results").join("ring.json");
    let _watcher = start(p);
    assert!(result.exists(), "the first pass wrote no result");

    let all: Arc<Mutex<Vec<Duration>>> = Arc::default();
    let mut saves = 0u64;
    let mut g = c.benchmark_group("watch");
    g.sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(8));
    g.bench_function("save_to_result_100k_facets", |b| {
        b.iter_custom(|iters| {
            let mut total = Duration::ZERO;
            for _ in 0..iters {
                let before = fs::read(&result).expect("read result");
                saves += 1;
                let level = if saves.is_multiple_of(2) { 0.25 } else { 0.5 };
                let t0 = Instant::now();
                fs::write(p.join("ring.json"), sidecar(level)).expect("save sidecar");
                wait_for_new(&result, &before, t0);
                let dt = t0.elapsed();
                all.lock().expect("latency list").push(dt);
                total += dt;
            }
            total
        })
    });
    g.finish();

    let mut v = all.lock().expect("latency list").clone();
    let (min, max) = (
        v.iter().min().copied().unwrap_or_default(),
        v.iter().max().copied().unwrap_or_default(),
    );
    let med = median(&mut v);
    println!(
        "save-to-result latency over {} saves (warm-up included): median {:.1} ms \
         (debounce {} ms + {:.1} ms), min {:.1} ms, max {:.1} ms",
        v.len(),
        med.as_secs_f64() * 1e3,
        DEBOUNCE.as_millis(),
        med.saturating_sub(DEBOUNCE).as_secs_f64() * 1e3,
        min.as_secs_f64() * 1e3,
        max.as_secs_f64() * 1e3,
    );
}

/// Saves the mesh `name` in `dir` by atomic rename (a finished temporary file renamed over
/// it, as CAD tools save), alternating between two contents, and times each save to the
/// new result. Prints the median.
fn mesh_saves_by_rename(
    c: &mut Criterion,
    label: &str,
    dir: &Path,
    name: &str,
    contents: &[Vec<u8>; 2],
) {
    let stem = name.rsplit_once('.').map_or(name, |(s, _)| s);
    let result = dir.join("results").join(format!("{stem}.json"));
    let _watcher = start(dir);
    assert!(result.exists(), "the first pass wrote no result");
    let mut all = Vec::new();
    let mut saves = 0usize;
    let mut g = c.benchmark_group("watch");
    g.sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(6));
    g.bench_function(label, |b| {
        b.iter_custom(|iters| {
            let mut total = Duration::ZERO;
            for _ in 0..iters {
                let before = fs::read(&result).expect("read result");
                saves += 1;
                let bytes = &contents[saves % 2];
                let tmp = dir.join(format!(".{name}.tmp"));
                let t0 = Instant::now();
                fs::write(&tmp, bytes).expect("write the temporary file");
                fs::rename(&tmp, dir.join(name)).expect("rename it over the mesh");
                wait_for_new(&result, &before, t0);
                let dt = t0.elapsed();
                all.push(dt);
                total += dt;
            }
            total
        })
    });
    g.finish();
    let n = all.len();
    let med = median(&mut all);
    println!(
        "{label}: save by rename → result, median {:.1} ms over {n} saves (warm-up included; debounce window {} ms)",
        med.as_secs_f64() * 1e3,
        DEBOUNCE.as_millis()
    );
}

/// A 100,000-facet torus saved by rename as binary STL and as OBJ: completed saves are
/// computed at once, not after the quiet window.
fn renamed_saves(c: &mut Criterion) {
    if !wanted("rename") {
        return;
    }
    let ring = |r: f64| shapes::torus([0.0, 0.0, 0.0], r, 1.0, 250, 200);
    for (label, name, encode) in [
        (
            "save_by_rename_100k_stl",
            "ring.stl",
            (|t: &[shapes::Triangle]| shapes::encode::stl_binary(t, "wetload latency bench torus"))
                as fn(&[shapes::Triangle]) -> Vec<u8>,
        ),
        (
            "save_by_rename_100k_obj",
            "ring.obj",
            |t: &[shapes::Triangle]| shapes::encode::obj(&[("ring", t)]).into_bytes(),
        ),
    ] {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path();
        let contents = [encode(&ring(3.0)), encode(&ring(3.25))];
        fs::write(p.join(name), &contents[0]).expect("write mesh");
        fs::write(p.join("ring.json"), sidecar(0.25)).expect("write sidecar");
        mesh_saves_by_rename(c, label, p, name, &contents);
    }
}

criterion_group!(benches, latency, thousand_meshes, long_log, renamed_saves);
criterion_main!(benches);
