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

fn median(v: &mut [Duration]) -> Duration {
    v.sort();
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2
    }
}

fn latency(c: &mut Criterion) {
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
                loop {
                    thread::sleep(Duration::from_millis(2));
                    // A missing file is the atomic rename in progress: look again.
                    if fs::read(&result).is_ok_and(|now| now != before) {
                        break;
                    }
                    assert!(
                        t0.elapsed() < Duration::from_secs(10),
                        "no new result 10 s after a save"
                    );
                }
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

criterion_group!(benches, latency);
criterion_main!(benches);
