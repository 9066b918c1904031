//! SIGKILL at random moments while large meshes are being recomputed: the change log
//! must only ever grow by complete lines (a torn last line at most), the result files must
//! always parse, and the next start must move a torn tail aside.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread;
use std::time::{Duration, Instant};

use crate::support::*;

const MESHES: [&str; 3] = ["ring_a", "ring_b", "ring_c"];
const ROUNDS: usize = 8;

/// The seed of the kill moments: `WETLOAD_CRASH_SEED` to repeat a run, else the clock.
fn seed() -> u64 {
    std::env::var("WETLOAD_CRASH_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(1, |d| d.as_nanos() as u64)
        })
        | 1
}

/// Rewrites the sidecars in turn every 150 ms with changing levels until `stop`.
fn keep_saving(dir: &Path, stop: Arc<AtomicBool>, start: u64) -> thread::JoinHandle<()> {
    let dir = dir.to_owned();
    thread::spawn(move || {
        let mut k = start;
        while !stop.load(Ordering::SeqCst) {
            let name = MESHES[(k % 3) as usize];
            let level = 0.25 * (k % 7) as f64 - 0.75;
            save(&dir.join(format!("{name}.json")), sidecar(level));
            k += 1;
            thread::sleep(Duration::from_millis(150));
        }
    })
}

/// The part of `bytes` up to and including the last newline.
fn complete_part(bytes: &[u8]) -> &[u8] {
    let end = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
    &bytes[..end]
}

/// Starts a watcher on a log with a torn tail `tail` and checks the repair: a note, the
/// tail in `changes.jsonl.torn`, the complete lines untouched, the log ending with a
/// newline.
fn expect_repair(dir: &Path, complete: &[u8], tail: &[u8]) -> Watcher {
    let w = Watcher::spawn(dir, &[]);
    w.wait_for("a note about the incomplete last line", || {
        w.stdout().contains("incomplete").then_some(())
    });
    let out = w.stdout();
    assert!(
        out.contains("note:") && out.contains("changes.jsonl.torn"),
        "{out}"
    );
    let torn = fs::read(results(dir).join("changes.jsonl.torn")).expect("torn file");
    assert!(
        torn.windows(tail.len()).any(|x| x == tail),
        "the torn tail {:?} is not in changes.jsonl.torn",
        String::from_utf8_lossy(tail)
    );
    let now = log_bytes(dir);
    assert!(now.starts_with(complete), "complete lines were rewritten");
    assert!(
        now.ends_with(b"\n"),
        "the repaired log does not end with a newline"
    );
    for l in parse_complete_lines(&now) {
        check_line(&l);
    }
    w
}

#[test]
fn sigkill_at_random_moments_leaves_complete_lines_and_the_next_start_repairs_the_tail() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    // 400 × 250 quads: 200,000 facets, a 10 MB binary STL each.
    let tris = shapes::torus([0.0, 0.0, 0.0], 3.0, 1.0, 400, 250);
    assert_eq!(tris.len(), 200_000);
    let bytes = shapes::encode::stl_binary(&tris, "wetload crash test torus");
    for name in MESHES {
        fs::write(p.join(format!("{name}.stl")), &bytes).expect("mesh");
        fs::write(p.join(format!("{name}.json")), sidecar(0.0)).expect("sidecar");
    }
    let seed = seed();
    eprintln!("crash test: seed {seed} (set WETLOAD_CRASH_SEED={seed} to repeat)");
    let mut rng = Rng(seed);

    // The complete part of the log after the previous kill.
    let mut complete: Vec<u8> = Vec::new();
    let mut saves = 0;
    for round in 0..ROUNDS {
        let before = log_bytes(p);
        let tail = before[complete.len()..].to_vec();
        let w = if tail.is_empty() {
            Watcher::spawn(p, &[])
        } else {
            expect_repair(p, &complete, &tail)
        };
        let mut w = w;
        let stop = Arc::new(AtomicBool::new(false));
        let saver = keep_saving(p, stop.clone(), saves);
        saves += 20;

        // Even rounds: anywhere in the first 2 s (mostly mid-computation). Odd rounds:
        // within 1 s after a new line, so the log keeps growing and kills land around
        // appends too.
        let delay = if round % 2 == 0 {
            Duration::from_millis(100 + rng.below(1900))
        } else {
            let n = log(p).len();
            w.wait_for_within(Duration::from_secs(40), "a new change-log line", || {
                (log(p).len() > n).then_some(())
            });
            Duration::from_millis(rng.below(1000))
        };
        let kill_at = Instant::now() + delay;
        while Instant::now() < kill_at {
            thread::sleep(Duration::from_millis(5));
        }
        w.kill();
        stop.store(true, Ordering::SeqCst);
        saver.join().expect("saver thread");

        let now = log_bytes(p);
        assert!(
            now.starts_with(&complete),
            "round {round}: earlier complete lines changed (seed {seed})"
        );
        for l in parse_complete_lines(&now) {
            check_line(&l);
        }
        assert_results_parse(p);
        complete = complete_part(&now).to_vec();
        eprintln!(
            "crash test round {round}: killed after {delay:?}; log {} lines, torn tail {} bytes",
            parse_complete_lines(&now).len(),
            now.len() - complete.len()
        );
    }
    let lines = parse_complete_lines(&log_bytes(p));
    assert!(
        lines.len() >= ROUNDS / 2,
        "the kills left too few lines to have tested anything: {}",
        lines.len()
    );

    // A torn tail made by hand (on top of one left by a kill, if any).
    let mut f = OpenOptions::new()
        .append(true)
        .open(log_path(p))
        .expect("open log");
    let half = br#"{"time":"2026-01-01T00:00:00.000Z","mesh":"ring_a.stl","ev"#;
    f.write_all(half).expect("append half a line");
    drop(f);
    let now = log_bytes(p);
    let tail = now[complete.len()..].to_vec();
    let mut w = expect_repair(p, &complete, &tail);
    w.kill();
}
