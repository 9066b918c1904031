//! Helpers for the watcher tests: a `wetload watch` process with its output captured,
//! box meshes whose loads have a closed form, saves the way CAD tools and editors do them,
//! change-log readers, and polling with a deadline.
//!
//! Nothing here sleeps for a fixed time to wait for a result: every wait polls for the
//! expected state until [`DEADLINE`] and fails with the watcher's output when it passes.

use std::fs::{self, OpenOptions};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::{Arc, Mutex};
use std::thread;
use std::time::{Duration, Instant};

use serde_json::Value;
use tempfile::TempDir;

/// Debounce window given to every watcher in these tests (short, to keep them fast).
pub const DEBOUNCE_MS: u64 = 150;
/// How long any expected state may take to appear.
pub const DEADLINE: Duration = Duration::from_secs(10);
/// Density of the test liquid, kg/m³.
pub const RHO: f64 = 1000.0;
/// Standard gravity, the contract's default `gravity`, m/s².
pub const G: f64 = 9.80665;
/// Footprint of every test box, m: `[0, BOX_X] × [0, BOX_Y]`, bottom at z = 0.
pub const BOX_X: f64 = 2.0;
pub const BOX_Y: f64 = 1.0;

/// A running `wetload watch` with its stdout and stderr collected by reader threads.
/// Dropping it kills the process (SIGKILL), so a failing test leaves nothing behind.
pub struct Watcher {
    child: Child,
    stdout: Arc<Mutex<String>>,
    stderr: Arc<Mutex<String>>,
}

fn collect(mut pipe: impl Read + Send + 'static) -> Arc<Mutex<String>> {
    let text = Arc::new(Mutex::new(String::new()));
    let sink = text.clone();
    thread::spawn(move || {
        let mut buf = [0u8; 4096];
        while let Ok(n) = pipe.read(&mut buf) {
            if n == 0 {
                break;
            }
            sink.lock()
                .expect("reader lock")
                .push_str(&String::from_utf8_lossy(&buf[..n]));
        }
    });
    text
}

impl Watcher {
    /// Spawns `wetload watch DIR --debounce-ms 150 EXTRA...` without waiting for anything.
    pub fn spawn(dir: &Path, extra: &[&str]) -> Watcher {
        Watcher::spawn_with_window(dir, DEBOUNCE_MS, extra)
    }

    /// Spawns `wetload watch DIR --debounce-ms WINDOW EXTRA...` without waiting.
    pub fn spawn_with_window(dir: &Path, window_ms: u64, extra: &[&str]) -> Watcher {
        let mut child = Command::new(assert_cmd::cargo::cargo_bin("wetload"))
            .arg("watch")
            .arg(dir)
            .args(["--debounce-ms", &window_ms.to_string()])
            .args(extra)
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("spawn wetload watch");
        let stdout = collect(child.stdout.take().expect("piped stdout"));
        let stderr = collect(child.stderr.take().expect("piped stderr"));
        Watcher {
            child,
            stdout,
            stderr,
        }
    }

    /// Spawns a watcher and waits until its first pass is done and it is watching.
    pub fn start(dir: &Path) -> Watcher {
        let w = Watcher::spawn(dir, &[]);
        w.wait_for("the watcher to say it is watching", || {
            w.stdout().contains("watching ").then_some(())
        });
        w
    }

    pub fn stdout(&self) -> String {
        self.stdout.lock().expect("stdout lock").clone()
    }

    pub fn stderr(&self) -> String {
        self.stderr.lock().expect("stderr lock").clone()
    }

    /// Polls `f` every 20 ms until it returns `Some`, or fails after [`DEADLINE`] with the
    /// watcher's output.
    pub fn wait_for<T>(&self, what: &str, f: impl FnMut() -> Option<T>) -> T {
        self.wait_for_within(DEADLINE, what, f)
    }

    pub fn wait_for_within<T>(
        &self,
        deadline: Duration,
        what: &str,
        mut f: impl FnMut() -> Option<T>,
    ) -> T {
        let end = Instant::now() + deadline;
        loop {
            if let Some(v) = f() {
                return v;
            }
            if Instant::now() > end {
                panic!(
                    "timed out after {deadline:?} waiting for {what}\n--- watcher stdout ---\n{}\n--- watcher stderr ---\n{}",
                    self.stdout(),
                    self.stderr()
                );
            }
            thread::sleep(Duration::from_millis(20));
        }
    }

    /// Waits for the process to exit on its own.
    pub fn wait_exit(&mut self) -> ExitStatus {
        let end = Instant::now() + DEADLINE;
        loop {
            if let Some(status) = self.child.try_wait().expect("try_wait") {
                // Let the reader threads take the last bytes.
                thread::sleep(Duration::from_millis(50));
                return status;
            }
            if Instant::now() > end {
                panic!(
                    "the watcher did not exit within {DEADLINE:?}\n--- stdout ---\n{}\n--- stderr ---\n{}",
                    self.stdout(),
                    self.stderr()
                );
            }
            thread::sleep(Duration::from_millis(20));
        }
    }

    /// Whether the process is still running.
    pub fn is_running(&mut self) -> bool {
        self.child.try_wait().expect("try_wait").is_none()
    }

    /// SIGKILL (what `Child::kill` sends on Unix) and reap.
    pub fn kill(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

impl Drop for Watcher {
    fn drop(&mut self) {
        self.kill();
    }
}

// ---------------------------------------------------------------------------------------
// Test meshes with closed-form loads.

/// A closed box `[0, 2] × [0, 1] × [0, height]` m (each face 2 × 2 cells, 48 facets) as a
/// binary STL. Heights that are multiples of 1/64 are exact in f32.
pub fn box_stl(height: f64) -> Vec<u8> {
    box_stl_cells(height, 2)
}

/// The same box with each face cut into `cells × cells` squares (`12·cells²` facets).
pub fn box_stl_cells(height: f64, cells: usize) -> Vec<u8> {
    let tris = shapes::box_solid([0.0, 0.0, 0.0], [BOX_X, BOX_Y, height], cells);
    shapes::encode::stl_binary(&tris, "wetload watch test box")
}

/// One closed box `[3i, 3i + 2] × [0, 1] × [0, h]` m as an OBJ group of its own (vertices
/// addressed relatively, so every group is a complete OBJ fragment), outward winding.
pub fn obj_box_group(i: usize, h: f64) -> String {
    let x0 = 3.0 * i as f64;
    let x1 = x0 + BOX_X;
    let mut s = format!("g part{i}\n");
    for (x, y, z) in [
        (x0, 0.0, 0.0),
        (x1, 0.0, 0.0),
        (x1, BOX_Y, 0.0),
        (x0, BOX_Y, 0.0),
        (x0, 0.0, h),
        (x1, 0.0, h),
        (x1, BOX_Y, h),
        (x0, BOX_Y, h),
    ] {
        s.push_str(&format!("v {x} {y} {z}\n"));
    }
    // Corners 1..8 of this group as -8..-1.
    let quads = [
        [1, 4, 3, 2], // bottom, normal −z
        [5, 6, 7, 8], // top, +z
        [1, 2, 6, 5], // y = 0, −y
        [3, 4, 8, 7], // y = 1, +y
        [1, 5, 8, 4], // x = x0, −x
        [2, 3, 7, 6], // x = x1, +x
    ];
    for q in quads {
        let r = |k: i32| k - 9;
        s.push_str(&format!("f {} {} {}\n", r(q[0]), r(q[1]), r(q[2])));
        s.push_str(&format!("f {} {} {}\n", r(q[0]), r(q[2]), r(q[3])));
    }
    s
}

/// A sidecar: metres, one liquid of 1000 kg/m³ with its free surface at `level`.
pub fn sidecar(level: f64) -> String {
    serde_json::json!({"units": "m", "liquid": {"level": level, "density": RHO}}).to_string()
}

/// Loads on the test box (outside wetted, default gravity, moments about the origin).
#[derive(Clone, Copy, Debug)]
pub struct Expected {
    pub force: [f64; 3],
    pub moment: [f64; 3],
    pub volume: f64,
}

/// Closed form for the box of [`box_stl`] in liquid up to `level`:
/// V = 2 · 1 · clamp(level, 0, height) (the part of the box below the free surface);
/// F = (0, 0, ρ g V) (Archimedes: the resultant of the pressure on a closed body);
/// M = r_B × F about the origin with the centre of buoyancy r_B = (1, 0.5, ·), i.e.
/// (0.5 F, −1.0 F, 0).
pub fn expected(height: f64, level: f64) -> Expected {
    let volume = BOX_X * BOX_Y * level.clamp(0.0, height);
    let f = RHO * G * volume;
    Expected {
        force: [0.0, 0.0, f],
        moment: [0.5 * BOX_Y * f, -0.5 * BOX_X * f, 0.0],
        volume,
    }
}

fn close(got: &Value, want: f64, scale: f64) -> bool {
    got.as_f64()
        .is_some_and(|g| (g - want).abs() <= 1e-9 * (scale + 1.0))
}

fn close3(got: &Value, want: [f64; 3], scale: f64) -> bool {
    got.as_array()
        .is_some_and(|a| a.len() == 3 && (0..3).all(|k| close(&a[k], want[k], scale)))
}

/// Whether a case object (of a result document or a `computed` line) carries the
/// expected force, moment and submerged volume.
pub fn case_matches(case: &Value, e: &Expected) -> bool {
    let scale = e.force[2].abs();
    close3(&case["force"], e.force, scale)
        && close3(&case["moment"], e.moment, scale)
        && close(&case["submerged_volume"], e.volume, e.volume)
}

/// Whether a result document or a `computed` line has exactly one case matching `e`.
pub fn doc_matches(doc: &Value, e: &Expected) -> bool {
    doc["cases"]
        .as_array()
        .is_some_and(|c| c.len() == 1 && case_matches(&c[0], e))
}

// ---------------------------------------------------------------------------------------
// Folders and saves.

/// A temporary folder with one box mesh and its sidecar per `(stem, height, level)`.
pub fn folder(meshes: &[(&str, f64, f64)]) -> TempDir {
    let dir = tempfile::tempdir().expect("temp dir");
    for (stem, height, level) in meshes {
        fs::write(dir.path().join(format!("{stem}.stl")), box_stl(*height)).expect("mesh");
        fs::write(dir.path().join(format!("{stem}.json")), sidecar(*level)).expect("sidecar");
    }
    dir
}

/// An in-place save: truncate and write (what `fs::write` does).
pub fn save(path: &Path, bytes: impl AsRef<[u8]>) {
    fs::write(path, bytes).expect("save");
}

/// An atomic save as CAD tools do it: write `.NAME.tmp-123` beside the file, then rename it
/// over the file.
pub fn save_by_rename(path: &Path, bytes: &[u8]) {
    let name = path
        .file_name()
        .expect("file name")
        .to_string_lossy()
        .into_owned();
    let tmp = path.with_file_name(format!(".{name}.tmp-123"));
    let mut f = OpenOptions::new()
        .create(true)
        .truncate(true)
        .write(true)
        .open(&tmp)
        .expect("temp file");
    f.write_all(bytes).expect("write temp");
    f.sync_all().expect("sync temp");
    drop(f);
    fs::rename(&tmp, path).expect("rename over");
}

pub fn results(dir: &Path) -> PathBuf {
    dir.join("results")
}

/// `results/<stem>.json`, parsed; `None` while it is missing (or unparsable, which the
/// atomic writes should make impossible; [`assert_results_parse`] checks that).
pub fn result(dir: &Path, stem: &str) -> Option<Value> {
    let bytes = fs::read(results(dir).join(format!("{stem}.json"))).ok()?;
    serde_json::from_slice(&bytes).ok()
}

/// Every `results/*.json` parses as JSON.
pub fn assert_results_parse(dir: &Path) {
    let Ok(rd) = fs::read_dir(results(dir)) else {
        return;
    };
    for e in rd {
        let p = e.expect("dir entry").path();
        let is_json = p.extension().is_some_and(|x| x == "json");
        let name = p.file_name().expect("name").to_string_lossy().into_owned();
        if is_json && !name.starts_with('.') {
            let bytes = fs::read(&p).expect("read result");
            if let Err(e) = serde_json::from_slice::<Value>(&bytes) {
                panic!("{} does not parse: {e}", p.display());
            }
        }
    }
}

pub fn log_path(dir: &Path) -> PathBuf {
    results(dir).join("changes.jsonl")
}

/// The change log's bytes (empty when it does not exist yet).
pub fn log_bytes(dir: &Path) -> Vec<u8> {
    fs::read(log_path(dir)).unwrap_or_default()
}

/// The complete lines of the change log, parsed; panics on a complete line that is not
/// JSON. An unterminated tail is left out.
pub fn log(dir: &Path) -> Vec<Value> {
    let bytes = log_bytes(dir);
    parse_complete_lines(&bytes)
}

/// The lines before the last newline of `bytes`, each parsed (panics with the line when
/// one is not JSON).
pub fn parse_complete_lines(bytes: &[u8]) -> Vec<Value> {
    let complete = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
    bytes[..complete]
        .split(|&b| b == b'\n')
        .filter(|l| !l.is_empty())
        .enumerate()
        .map(|(i, l)| {
            serde_json::from_slice(l).unwrap_or_else(|e| {
                panic!(
                    "change log line {} is not JSON ({e}): {:?}",
                    i + 1,
                    String::from_utf8_lossy(l)
                )
            })
        })
        .collect()
}

/// The lines of `lines` about `mesh` with `event`.
pub fn events<'a>(lines: &'a [Value], mesh: &str, event: &str) -> Vec<&'a Value> {
    lines
        .iter()
        .filter(|l| l["mesh"] == mesh && l["event"] == event)
        .collect()
}

/// Checks the pinned fields of every change-log line (CONTRACT.md, "Files"): the file
/// ends with a newline; every line is a JSON object with `time` (RFC 3339), `mesh` (a file
/// name) and `event` (one of four); `computed` lines carry `cases` with `name`, `force`
/// and `moment` (three finite numbers each); `failed` lines carry `error`.
pub fn check_log(dir: &Path) -> Vec<Value> {
    let bytes = log_bytes(dir);
    assert!(
        bytes.is_empty() || bytes.ends_with(b"\n"),
        "the change log does not end with a newline: {:?}",
        String::from_utf8_lossy(&bytes[bytes.len().saturating_sub(200)..])
    );
    let lines = parse_complete_lines(&bytes);
    for l in &lines {
        check_line(l);
    }
    lines
}

/// The pinned fields of one change-log line (see [`check_log`]).
pub fn check_line(l: &Value) {
    assert!(l.is_object(), "not an object: {l}");
    let time = l["time"].as_str().unwrap_or_else(|| panic!("no time: {l}"));
    if let Err(e) = time.parse::<jiff::Timestamp>() {
        panic!("time {time:?} is not RFC 3339 ({e}): {l}");
    }
    let mesh = l["mesh"].as_str().unwrap_or_else(|| panic!("no mesh: {l}"));
    assert!(
        !mesh.is_empty() && !mesh.contains('/') && !mesh.contains('\\'),
        "mesh is not a file name: {l}"
    );
    let event = l["event"]
        .as_str()
        .unwrap_or_else(|| panic!("no event: {l}"));
    match event {
        "computed" => {
            let cases = l["cases"]
                .as_array()
                .unwrap_or_else(|| panic!("computed without cases: {l}"));
            assert!(!cases.is_empty(), "computed with no case: {l}");
            for c in cases {
                assert!(c["name"].is_string(), "case without name: {l}");
                for key in ["force", "moment"] {
                    let v = c[key]
                        .as_array()
                        .unwrap_or_else(|| panic!("case without {key}: {l}"));
                    assert!(
                        v.len() == 3 && v.iter().all(|x| x.as_f64().is_some_and(f64::is_finite)),
                        "{key} is not three finite numbers: {l}"
                    );
                }
            }
        }
        "failed" => assert!(
            l["error"].as_str().is_some_and(|e| !e.is_empty()),
            "failed without error: {l}"
        ),
        "unchanged" | "removed" => {}
        other => panic!("unknown event {other:?}: {l}"),
    }
}

/// The stale marker of a result document: `(since, reason)` when present.
pub fn stale(doc: &Value) -> Option<(String, String)> {
    let s = doc.get("stale")?;
    Some((
        s["since"].as_str().unwrap_or_default().to_owned(),
        s["reason"].as_str().unwrap_or_default().to_owned(),
    ))
}

/// Waits until `results/<stem>.json` matches `e` and is not marked stale; returns it.
///
/// The watcher writes the result before it appends the change-log line, so this also waits
/// until the mesh's last line in the log is the `computed` line of that result (same
/// forces): callers may read the log right after.
pub fn wait_result(w: &Watcher, dir: &Path, stem: &str, e: Expected) -> Value {
    w.wait_for(
        &format!("results/{stem}.json to match {e:?}, and its log line"),
        || {
            result(dir, stem).filter(|d| {
                doc_matches(d, &e)
                    && stale(d).is_none()
                    // The newest line that computed this mesh: an `unchanged` line after
                    // it (the same inputs heard again) leaves its result as it was.
                    && log(dir)
                        .iter()
                        .rev()
                        .find(|l| l["mesh"] == d["mesh"] && l["event"] != "unchanged")
                        .is_some_and(|l| {
                            l["event"] == "computed"
                                && l["cases"][0]["force"] == d["cases"][0]["force"]
                        })
            })
        },
    )
}

/// Waits until the change log has a line about `mesh` with `event` after the first
/// `skip` lines; returns all lines.
pub fn wait_event(w: &Watcher, dir: &Path, skip: usize, mesh: &str, event: &str) -> Vec<Value> {
    w.wait_for(&format!("a {event:?} line for {mesh}"), || {
        let lines = log(dir);
        let found = lines
            .iter()
            .skip(skip)
            .any(|l| l["mesh"] == mesh && l["event"] == event);
        found.then_some(lines)
    })
}

/// Sleeps long enough for anything a watcher would do about events already delivered to
/// be done (debounce + two retries + slack). Only for checking that something does NOT
/// happen; positive expectations poll instead.
pub fn settle() {
    thread::sleep(Duration::from_millis(5 * DEBOUNCE_MS + 400));
}

/// xorshift64*: pseudo-random choices (what to save, when to kill), repeatable from a
/// seed.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }

    pub fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

/// `wetload calc` with `args`, which must succeed (its stderr otherwise in the panic).
pub fn calc_ok(args: &[std::path::PathBuf]) -> std::process::Output {
    let out = Command::new(assert_cmd::cargo::cargo_bin("wetload"))
        .arg("calc")
        .args(args)
        .output()
        .expect("calc");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    out
}
