//! A mesh's design iterations as the change log and the snapshot store keep them:
//! `wetload history` (one line per logged computation, `--json`, `--extract N DIR`) and
//! `wetload compare` ([`compare`]).
//!
//! Everything here reads: the change log's lines of one mesh (its `mesh` field is the
//! mesh's file name) and the blobs of `results/.snapshots/`. Nothing is computed again:
//! loads come from the log lines, geometry from the snapshot's mesh bytes.

pub mod compare;

use std::fmt::Write as _;
use std::fs;
use std::io;
use std::path::{Path, PathBuf};

use serde_json::{Value, json};
use thiserror::Error;

use crate::mesh;
use crate::pipeline::record::marker;
use crate::report::units::{UnitSystem, Units};
use crate::results::snapshots;
use crate::results::{Layout, changelog};

/// Why a history question cannot be answered. Every message names the file.
#[derive(Debug, Error)]
pub enum HistoryError {
    #[error(
        "{}: no computation of it is in the change log {}; compute it first (wetload calc {})",
        mesh.display(), log.display(), mesh.display()
    )]
    Empty { mesh: PathBuf, log: PathBuf },
    #[error(
        "{}: no iteration {wanted} in the change log {} (it has {})",
        mesh.display(), log.display(), if *last == 0 { "none".to_owned() } else { format!("1 to {last}") }
    )]
    NoIteration {
        mesh: PathBuf,
        log: PathBuf,
        wanted: String,
        last: u64,
    },
    #[error("{}: iteration {iteration}: {source}", mesh.display())]
    Snapshot {
        mesh: PathBuf,
        iteration: u64,
        source: snapshots::ReadError,
    },
    #[error(
        "{} exists already; wetload never overwrites a file when it extracts an iteration: choose an empty folder",
        path.display()
    )]
    Exists { path: PathBuf },
    #[error("cannot write {}: {source}", path.display())]
    Write { path: PathBuf, source: io::Error },
}

/// The change log's lines of one mesh, oldest first.
pub struct History {
    pub mesh: PathBuf,
    pub layout: Layout,
    pub lines: Vec<Value>,
}

impl History {
    /// Reads the lines of `mesh` from the change log of its results folder.
    pub fn read(mesh: &Path) -> History {
        let layout = Layout::of_mesh(mesh, mesh::is_mesh_path);
        let name = file_name(mesh);
        let lines = changelog::read_lines(layout.dir())
            .into_iter()
            .filter(|l| l["mesh"] == name.as_str())
            .collect();
        History {
            mesh: mesh.to_owned(),
            layout,
            lines,
        }
    }

    /// The `computed` lines, oldest first.
    pub fn computed(&self) -> impl Iterator<Item = &Value> {
        self.lines.iter().filter(|l| l["event"] == "computed")
    }

    /// The last iteration number (0 when there is none).
    pub fn last(&self) -> u64 {
        self.computed()
            .filter_map(|l| l["iteration"].as_u64())
            .max()
            .unwrap_or(0)
    }

    /// The computed line of iteration `wanted`: a number, `baseline`, `previous` (the one
    /// before the latest) or `latest`.
    pub fn iteration(&self, wanted: &str) -> Result<&Value, HistoryError> {
        let last = self.last();
        let number = match wanted.trim().to_ascii_lowercase().as_str() {
            "baseline" => self.computed().find_map(|l| l["iteration"].as_u64()),
            "latest" => Some(last).filter(|&n| n > 0),
            "previous" => last.checked_sub(1).filter(|&n| n > 0),
            n => n.parse::<u64>().ok(),
        };
        number
            .and_then(|n| self.computed().find(|l| l["iteration"] == n))
            .ok_or_else(|| HistoryError::NoIteration {
                mesh: self.mesh.clone(),
                log: self.layout.change_log(),
                wanted: wanted.to_owned(),
                last,
            })
    }

    /// Whether both inputs of a computed line are still in the snapshot store.
    pub fn has_snapshot(&self, line: &Value) -> bool {
        let store = self.layout.snapshots();
        ["mesh_hash", "sidecar_hash"]
            .iter()
            .all(|k| line[*k].as_str().is_some_and(|h| snapshots::has(&store, h)))
    }

    /// The exact mesh and sidecar bytes of a computed line, checked against their hashes.
    pub fn inputs(&self, line: &Value) -> Result<(Vec<u8>, Vec<u8>), HistoryError> {
        let store = self.layout.snapshots();
        let iteration = line["iteration"].as_u64().unwrap_or(0);
        let get = |key: &str| {
            snapshots::read(&store, line[key].as_str().unwrap_or_default()).map_err(|source| {
                HistoryError::Snapshot {
                    mesh: self.mesh.clone(),
                    iteration,
                    source,
                }
            })
        };
        Ok((get("mesh_hash")?, get("sidecar_hash")?))
    }
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// What changed in a computed line against the computed line before it: `"baseline"`,
/// `"mesh"`, `"sidecar"`, `"both"`, or `"neither"` (the same inputs computed again, after
/// a failure or a removal).
pub fn what_changed(line: &Value, before: Option<&Value>) -> &'static str {
    let Some(b) = before else {
        return "baseline";
    };
    let mesh = line["mesh_hash"] != b["mesh_hash"];
    let side = line["sidecar_hash"] != b["sidecar_hash"];
    match (mesh, side) {
        (true, true) => "both",
        (true, false) => "mesh",
        (false, true) => "sidecar",
        (false, false) => "neither",
    }
}

/// `history --json`: every line of the mesh, oldest first, as the contract pins it, with
/// `changed`, `mesh_hash`, `sidecar_hash` and (for failures) `error` beside.
pub fn to_json(h: &History) -> Value {
    let mut before: Option<&Value> = None;
    let out: Vec<Value> = h
        .lines
        .iter()
        .map(|l| {
            let computed = l["event"] == "computed";
            let mut v = json!({
                "iteration": if computed { l["iteration"].clone() } else { Value::Null },
                "time": l["time"],
                "event": l["event"],
                "cases": if computed { strip_changes(&l["cases"]) } else { json!([]) },
                "snapshot": computed && h.has_snapshot(l),
            });
            if computed {
                v["changed"] = json!(what_changed(l, before));
                v["mesh_hash"] = l["mesh_hash"].clone();
                v["sidecar_hash"] = l["sidecar_hash"].clone();
                before = Some(l);
            } else if l["event"] == "unchanged" {
                v["same_as"] = l["iteration"].clone();
            }
            if let Some(e) = l.get("error") {
                v["error"] = e.clone();
            }
            v
        })
        .collect();
    Value::Array(out)
}

/// A log line's cases without their `change` and `since_baseline` (history lists values).
fn strip_changes(cases: &Value) -> Value {
    let mut cases = cases.clone();
    if let Some(a) = cases.as_array_mut() {
        for c in a.iter_mut().filter_map(Value::as_object_mut) {
            c.remove("change");
            c.remove("since_baseline");
        }
    }
    cases
}

/// The log's `time` (RFC 3339, UTC) as local date and time, `YYYY-MM-DD HH:MM:SS`.
pub fn local_time(time: &Value) -> String {
    time.as_str()
        .and_then(|t| t.parse::<jiff::Timestamp>().ok())
        .map(|t| {
            t.to_zoned(jiff::tz::TimeZone::system())
                .strftime("%Y-%m-%d %H:%M:%S")
                .to_string()
        })
        .unwrap_or_else(|| "(no time)".to_owned())
}

fn norm(v: &Value) -> Option<f64> {
    let a = v.as_array()?;
    let mut s = 0.0f64;
    for x in a {
        s = s.hypot(x.as_f64()?);
    }
    Some(s)
}

/// The terminal listing: one line per computation (number, local time, what changed,
/// then per case |F|, |M| and uplift with their change since the previous iteration),
/// one short line per other event.
pub fn render(h: &History, system: UnitSystem) -> String {
    let u = Units::of(system);
    let mut s = String::new();
    let last = h.last();
    let kept = h.computed().filter(|l| h.has_snapshot(l)).count();
    let _ = writeln!(
        s,
        "{} · {} iteration(s), {} with their inputs kept · {}",
        file_name(&h.mesh),
        last,
        kept,
        h.layout.change_log().display()
    );
    let width = h
        .computed()
        .flat_map(|l| l["cases"].as_array().into_iter().flatten())
        .filter_map(|c| c["name"].as_str().map(|n| n.chars().count()))
        .max()
        .unwrap_or(7)
        .max(4);
    let _ = writeln!(
        s,
        "  {:>4}  {:<19}  {:<8}  {:<width$}  {:<26}  {:<26}  uplift",
        "#", "time", "changed", "case", "|F|", "|M|"
    );
    let mut before: Option<&Value> = None;
    for l in &h.lines {
        let time = local_time(&l["time"]);
        match l["event"].as_str() {
            Some("computed") => {
                let n = l["iteration"].as_u64().unwrap_or(0);
                let changed = what_changed(l, before);
                let snap = if h.has_snapshot(l) {
                    ""
                } else {
                    " (inputs pruned)"
                };
                let cases = l["cases"].as_array().cloned().unwrap_or_default();
                for (i, c) in cases.iter().enumerate() {
                    let ch = &c["change"];
                    let fig = |now: Option<f64>,
                               old_d: Option<f64>,
                               unit: &crate::report::units::Unit| {
                        now.map_or_else(
                            || "—".to_owned(),
                            |x| format!("{} {}{}", unit.fmt(x), unit.name, marker(old_d, x)),
                        )
                    };
                    let f = norm(&c["force"]);
                    let m = norm(&c["moment"]);
                    // The previous magnitude from the change of the components.
                    let prev = |key: &str| -> Option<f64> {
                        let now = c[key].as_array()?;
                        let d = ch[key].as_array()?;
                        let mut s = 0.0f64;
                        for (a, b) in now.iter().zip(d) {
                            s = s.hypot(a.as_f64()? - b.as_f64()?);
                        }
                        Some(s)
                    };
                    let df = f.zip(prev("force")).map(|(a, b)| a - b);
                    let dm = m.zip(prev("moment")).map(|(a, b)| a - b);
                    let (head, when, what) = if i == 0 {
                        (n.to_string(), time.clone(), changed)
                    } else {
                        (String::new(), String::new(), "")
                    };
                    let _ = writeln!(
                        s,
                        "  {:>4}  {:<19}  {:<8}  {:<width$}  {:<26}  {:<26}  {}{}",
                        head,
                        when,
                        what,
                        c["name"].as_str().unwrap_or(""),
                        fig(f, df, &u.force),
                        fig(m, dm, &u.moment),
                        fig(c["uplift"].as_f64(), ch["uplift"].as_f64(), &u.force),
                        if i == 0 { snap } else { "" },
                    );
                }
                before = Some(l);
            }
            Some("unchanged") => {
                let _ = writeln!(
                    s,
                    "  {:>4}  {:<19}  saved again, unchanged (same inputs as iteration {})",
                    "",
                    time,
                    l["iteration"].as_u64().unwrap_or(0)
                );
            }
            Some("failed") => {
                let _ = writeln!(
                    s,
                    "  {:>4}  {:<19}  failed: {}",
                    "",
                    time,
                    l["error"].as_str().unwrap_or("")
                );
            }
            Some("removed") => {
                let _ = writeln!(s, "  {:>4}  {:<19}  the mesh file was removed", "", time);
            }
            _ => {}
        }
    }
    s
}

/// Writes iteration `wanted`'s exact mesh and sidecar bytes into `dir` (created when
/// missing) under their original names, refusing to overwrite either. Returns the two
/// paths written.
pub fn extract(h: &History, wanted: &str, dir: &Path) -> Result<[PathBuf; 2], HistoryError> {
    let line = h.iteration(wanted)?;
    let (mesh_bytes, side_bytes) = h.inputs(line)?;
    let name = line["mesh"].as_str().unwrap_or_default();
    let mesh_path = dir.join(name);
    let side_path = crate::pipeline::sidecar_path(&mesh_path);
    let werr = |path: &Path| {
        let path = path.to_owned();
        move |source| HistoryError::Write { path, source }
    };
    fs::create_dir_all(dir).map_err(werr(dir))?;
    for p in [&mesh_path, &side_path] {
        if fs::symlink_metadata(p).is_ok() {
            return Err(HistoryError::Exists { path: p.clone() });
        }
    }
    for (p, bytes) in [(&mesh_path, &mesh_bytes), (&side_path, &side_bytes)] {
        use std::io::Write;
        let mut f = fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(p)
            .map_err(|e| {
                if e.kind() == io::ErrorKind::AlreadyExists {
                    HistoryError::Exists { path: p.clone() }
                } else {
                    HistoryError::Write {
                        path: p.clone(),
                        source: e,
                    }
                }
            })?;
        f.write_all(bytes)
            .and_then(|()| f.sync_all())
            .map_err(werr(p))?;
    }
    Ok([mesh_path, side_path])
}
