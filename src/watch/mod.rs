//! `wetload watch DIR`: compute every mesh in a folder, then recompute on every save.
//!
//! The watcher adds only events and state to [`crate::pipeline`]: it watches the folder
//! itself (not each file: an atomic replace silently ends a per-file watch), non-recursively
//! (so the tool's own `results/` never triggers anything), reacts only to write-type
//! events (the tool's own reads fire access events too), holds each touched path in a
//! [`Schedule`] until its save is known to be complete (renamed into place, or closed by
//! its writer and whole by its format: `complete.rs`) or it has been quiet for the
//! debounce window, skips content it has
//! already computed (BLAKE3 of mesh and sidecar bytes), and rescans when notify says
//! events were lost.
//!
//! A broken input never replaces a result: the last good result is kept and marked
//! `stale` with the reason, the change log records `failed`, and the watcher goes on.
//! A file that is still being written (its size changes while it is read, or it fails to
//! parse right after a save) is retried after another quiet window before it counts as
//! broken. Only a folder that cannot be watched, or a change log that cannot be written,
//! ends the watcher.
//!
//! A recomputation that runs long gets a progress bar on stderr ([`crate::bar`], when
//! [`WatchOptions::progress`] allows it), from the parse of the mesh to its files written.
//! The bar is dropped, and so cleared, before the watcher says anything about that mesh, so
//! its line never mixes with the watcher's lines; quick recomputations draw none.
//!
//! File-system policy (README "Hostile input and file-system policy"):
//! * Results, exports, the page and the change log are only ever written inside
//!   `DIR/results/`, and only when that is a real folder: a `results` that is a symbolic
//!   link ends the watcher at start with a message (nothing is written through it).
//! * Symbolic links in the folder are not followed out of it: a mesh or sidecar that is a
//!   link to a file outside `DIR` is refused with a message (recorded as `failed`); links
//!   that stay inside `DIR` are read like files. Only regular files are read (a FIFO or
//!   device named like a mesh is refused, never opened).
//! * A result that cannot be written (read-only or full `results/`) is reported once, and
//!   retried every [`WRITE_RETRY`] until it succeeds; the watcher keeps running.
//! * A mesh that disappears between the event and the read is looked at again after the
//!   quiet window (and then noted as removed); one that changes while it is read is read
//!   again.

mod complete;
mod events;
pub mod schedule;
mod state;

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant, SystemTime};

use notify::{RecursiveMode, Watcher};
use serde_json::{Value, json};
use thiserror::Error;

use crate::bar::Bar;
use crate::hydro::{Progress, Stage};
use crate::pipeline::{self, RunError, iterations, outputs, record};
use crate::results::changelog::{ChangeLog, LogError};
use crate::results::{self, Layout};
use state::{MeshState, restore};

/// How often a result that could not be written is tried again.
pub const WRITE_RETRY: Duration = Duration::from_secs(2);
pub use schedule::{Schedule, Signal, Touch};

/// Settings of a watch run.
#[derive(Clone, Debug)]
pub struct WatchOptions {
    /// The folder with meshes and sidecars.
    pub dir: PathBuf,
    /// How long a file must be quiet before it is computed.
    pub debounce: Duration,
    /// Compute everything once and return.
    pub once: bool,
    /// Poll the folder at this interval instead of using OS events (network drives).
    pub poll: Option<Duration>,
    /// Print every component and every warning.
    pub verbose: bool,
    /// How many times a file that looks half-written is retried before it counts as broken.
    pub retries: u32,
    /// The units of the terminal lines, the page and the pressure diagrams (result files
    /// are SI either way).
    pub units: crate::report::units::UnitSystem,
    /// The progress bar of a long recomputation (off by default; see [`crate::bar`]).
    pub progress: crate::bar::Settings,
}

impl WatchOptions {
    /// Defaults: 500 ms debounce, OS events, 2 retries.
    pub fn new(dir: PathBuf) -> WatchOptions {
        WatchOptions {
            dir,
            debounce: Duration::from_millis(500),
            once: false,
            poll: None,
            verbose: false,
            retries: 2,
            units: crate::report::units::UnitSystem::Si,
            progress: crate::bar::Settings::OFF,
        }
    }
}

/// What ends a watcher (everything else is reported and survived).
#[derive(Debug, Error)]
pub enum WatchError {
    #[error("{} is not a folder that can be read: {source}", dir.display())]
    Folder {
        dir: PathBuf,
        source: std::io::Error,
    },
    #[error("cannot watch {}: {source}", dir.display())]
    Notify { dir: PathBuf, source: notify::Error },
    #[error(transparent)]
    Log(#[from] LogError),
    #[error(
        "{} is a symbolic link: wetload writes results only into a real results folder inside the watched folder; replace the link with a folder",
        path.display()
    )]
    ResultsLink { path: PathBuf },
    #[error(
        "the watched folder {} was moved or deleted; wetload stopped watching it and writes nothing more there or at its old place; start wetload watch again on the folder where it is now",
        dir.display()
    )]
    FolderGone { dir: PathBuf },
}

/// How a run ended: whether every mesh computed in the last pass (for `--once`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Outcome {
    pub failures: usize,
}

struct Watch<'a> {
    opts: &'a WatchOptions,
    /// The watched folder, canonical, so event paths compare equal to scanned ones.
    dir: PathBuf,
    /// Device and inode of the watched folder when the watcher started.
    folder_id: Option<(u64, u64)>,
    log: ChangeLog,
    /// The page, with the change log's lines and the results in memory, and the layout.
    page: outputs::Page,
    meshes: BTreeMap<PathBuf, MeshState>,
    /// Links in the folder to files in the folder: target → links.
    links: BTreeMap<PathBuf, BTreeSet<PathBuf>>,
    out: Box<dyn Write + 'a>,
    /// Meshes whose result could not be written before the schedule existed (first pass).
    write_retry: Vec<PathBuf>,
    /// The last note about the folder's page, so an identical one is not repeated.
    page_note: Option<String>,
    /// Meshes whose last event completed a save: the mesh's and sidecar's size and
    /// modification time then. A mesh released for it is computed only if both are still
    /// so; a write that began after the completion, its events not yet read, sends it back
    /// to the quiet window instead.
    completed: BTreeMap<PathBuf, SaveState>,
}

/// The size and modification time of a mesh and of its sidecar (`None` where missing).
type SaveState = [Option<(u64, Option<SystemTime>)>; 2];

/// Device and inode of a file or folder.
fn identity(meta: &fs::Metadata) -> Option<(u64, u64)> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        Some((meta.dev(), meta.ino()))
    }
    #[cfg(not(unix))]
    {
        let _ = meta;
        None
    }
}

/// One file-system event or error, with the instant it arrived.
type Arrival = (Instant, notify::Result<notify::Event>);

/// Runs the watcher until `stop` is set (or once, with `opts.once`).
pub fn run(
    opts: &WatchOptions,
    stop: Arc<AtomicBool>,
    out: Box<dyn Write + '_>,
) -> Result<Outcome, WatchError> {
    let folder_err = |source| WatchError::Folder {
        dir: opts.dir.clone(),
        source,
    };
    let dir = fs::canonicalize(&opts.dir).map_err(folder_err)?;
    fs::read_dir(&dir).map_err(folder_err)?;
    let folder_id = fs::metadata(&dir).ok().as_ref().and_then(identity);
    let layout = Layout::new(dir.join(results::DIR_NAME));
    if fs::symlink_metadata(layout.dir()).is_ok_and(|m| m.file_type().is_symlink()) {
        return Err(WatchError::ResultsLink {
            path: layout.dir().to_owned(),
        });
    }
    // The change log is read once, a line at a time, into the meshes' state and the page.
    let mut page = outputs::Page::load(layout, Vec::new(), opts.units);
    let mut meshes = BTreeMap::new();
    let (log, recovered) = ChangeLog::open(page.layout().dir().to_owned().as_path(), |line| {
        restore(&dir, &mut meshes, &line);
        page.record(line);
    })?;
    let mut w = Watch {
        opts,
        dir: dir.clone(),
        folder_id,
        log,
        page,
        meshes,
        links: BTreeMap::new(),
        out,
        write_retry: Vec::new(),
        page_note: None,
        completed: BTreeMap::new(),
    };
    for note in &recovered.notes {
        w.say(&format!("note: {note}\n"));
    }

    // Start watching before the first scan, so a save during the scan is not lost. Each
    // event is stamped with the instant it arrives.
    let (tx, rx) = mpsc::channel::<Arrival>();
    let handler = move |res| {
        let _ = tx.send((Instant::now(), res));
    };
    let mut watcher: Box<dyn Watcher> = if opts.once {
        Box::new(notify::NullWatcher)
    } else if let Some(interval) = opts.poll {
        // Modification times are compared in whole seconds: the contents are compared
        // too, so two saves within one second are both seen.
        let config = notify::Config::default()
            .with_poll_interval(interval)
            .with_compare_contents(true);
        Box::new(notify::PollWatcher::new(handler, config).map_err(|source| {
            WatchError::Notify {
                dir: dir.clone(),
                source,
            }
        })?)
    } else {
        Box::new(
            notify::recommended_watcher(handler).map_err(|source| WatchError::Notify {
                dir: dir.clone(),
                source,
            })?,
        )
    };
    if !opts.once {
        watcher
            .watch(&dir, RecursiveMode::NonRecursive)
            .map_err(|source| WatchError::Notify {
                dir: dir.clone(),
                source,
            })?;
    }

    let mut failures = 0;
    w.refresh_names(Instant::now());
    for mesh in scan(&dir) {
        if !w.process(&mesh, None, None)? {
            failures += 1;
        }
    }
    w.refresh_page(!opts.once, true);
    if opts.once {
        return Ok(Outcome { failures });
    }
    w.say(&format!(
        "watching {} (debounce {} ms); Ctrl-C to stop\n",
        dir.display(),
        opts.debounce.as_millis()
    ));

    let mut schedule = Schedule::new(opts.debounce);
    for mesh in std::mem::take(&mut w.write_retry) {
        schedule.retry(mesh, Instant::now() + WRITE_RETRY);
    }
    let mut unread: Vec<Touch> = Vec::new();
    let mut page_due = false;
    while !stop.load(Ordering::SeqCst) {
        if w.folder_gone() {
            return Err(WatchError::FolderGone { dir });
        }
        // Everything that has arrived counts before anything is released.
        loop {
            match rx.try_recv() {
                Ok((at, res)) => unread.extend(w.touches(at, res)),
                Err(mpsc::TryRecvError::Empty) => break,
                Err(mpsc::TryRecvError::Disconnected) => return Ok(Outcome { failures: 0 }),
            }
        }
        if let Some((mesh, last)) = schedule.next_due_since(unread.drain(..), Instant::now()) {
            if let Some(then) = w.completed.remove(&mesh)
                && (then != w.save_state(&mesh) || !w.still_whole(&mesh))
            {
                // Written again since its save completed: wait for the new save.
                schedule.touch(mesh, Instant::now());
                continue;
            }
            w.process(&mesh, Some(&mut schedule), Some(last))?;
            page_due = true;
            continue;
        }
        if page_due {
            w.refresh_page(true, false);
            page_due = false;
            continue;
        }
        let wait = schedule
            .next_in(Instant::now())
            .unwrap_or(Duration::from_millis(200))
            .min(Duration::from_millis(200));
        match rx.recv_timeout(wait) {
            Ok((at, res)) => unread.extend(w.touches(at, res)),
            Err(mpsc::RecvTimeoutError::Timeout) => {}
            Err(mpsc::RecvTimeoutError::Disconnected) => break,
        }
    }
    drop(watcher);
    // Stopped: the page no longer needs to reload itself.
    if !w.folder_gone() {
        w.refresh_page(false, false);
    }
    Ok(Outcome { failures: 0 })
}

/// The meshes in `dir`, sorted (links to files are listed like files, and refused when
/// they lead out of the folder; see the module doc).
pub fn scan(dir: &Path) -> Vec<PathBuf> {
    let mut out: Vec<PathBuf> = fs::read_dir(dir)
        .map(|rd| {
            rd.filter_map(Result::ok)
                .map(|e| e.path())
                .filter(|p| p.is_file() && crate::mesh::is_mesh_path(p) && !is_temp_name(p))
                .collect()
        })
        .unwrap_or_default();
    out.sort();
    out
}

/// Names that editors and exporters use for files in the middle of a save.
fn is_temp_name(p: &Path) -> bool {
    let name = p
        .file_name()
        .map(|n| n.to_string_lossy())
        .unwrap_or_default();
    name.starts_with('.')
        || name.ends_with('~')
        || [".tmp", ".part", ".swp", ".bak"]
            .iter()
            .any(|s| name.to_ascii_lowercase().ends_with(s))
}

/// Whether `p` is a symbolic link that leads out of `dir` (canonical). A dangling link does
/// not count: reading it fails on its own.
fn leads_outside(dir: &Path, p: &Path) -> bool {
    fs::symlink_metadata(p).is_ok_and(|m| m.file_type().is_symlink())
        && fs::canonicalize(p).is_ok_and(|target| !target.starts_with(dir))
}

fn hash(bytes: &[u8]) -> String {
    blake3::hash(bytes).to_hex().to_string()
}

use iterations::now_rfc3339;

fn clock() -> String {
    jiff::Zoned::now().strftime("%H:%M:%S").to_string()
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Size and modification time of a file, to tell whether it changed while it was read.
fn fingerprint(p: &Path) -> Option<(u64, Option<SystemTime>)> {
    fs::metadata(p).ok().map(|m| (m.len(), m.modified().ok()))
}

impl Watch<'_> {
    /// Whether an STL released for a completed save is still whole by its format (a write
    /// that began after the completion, its events not yet read, makes it not); an OBJ has
    /// no end marker and counts as whole.
    fn still_whole(&self, mesh: &Path) -> bool {
        let stl = mesh
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("stl"));
        !stl || complete::whole(mesh)
    }

    /// The size and modification time of `mesh` and of its sidecar, now.
    fn save_state(&self, mesh: &Path) -> SaveState {
        [
            fingerprint(mesh),
            fingerprint(&pipeline::sidecar_path(mesh)),
        ]
    }

    /// `text` with the watched folder's own path left out of the paths it names, so that
    /// files are named as `calc` run in the folder names them (`gate.json`,
    /// `results/gate.json`), not by the canonical path the watcher holds.
    fn in_folder(&self, text: &str) -> String {
        let prefix = format!("{}{}", self.dir.display(), std::path::MAIN_SEPARATOR);
        text.replace(&prefix, "")
    }

    fn say(&mut self, text: &str) {
        let _ = self.out.write_all(text.as_bytes());
        let _ = self.out.flush();
    }

    fn layout(&self) -> &Layout {
        self.page.layout()
    }

    /// Whether the watched folder is no longer where it was (moved, deleted, or another
    /// folder now has its name).
    fn folder_gone(&self) -> bool {
        match fs::metadata(&self.dir) {
            Ok(m) => identity(&m) != self.folder_id,
            Err(_) => true,
        }
    }

    /// Appends a line to the change log, says loudly what had to be repaired first, and
    /// keeps the line for the page.
    fn append(&mut self, line: Value) -> Result<(), WatchError> {
        self.append_made(|_| line).map(|_| ())
    }

    /// Appends the line `make` builds from the meshes' state, after taking in the lines
    /// another process (`calc`) appended meanwhile, so numbering continues from them.
    fn append_made(
        &mut self,
        make: impl FnOnce(&mut BTreeMap<PathBuf, MeshState>) -> Value,
    ) -> Result<Value, WatchError> {
        let dir = self.dir.clone();
        let mut state = (&mut self.meshes, &mut self.page);
        let (line, notes) = self.log.append_with(
            &mut state,
            |(meshes, page), line| {
                restore(&dir, meshes, &line);
                if line["event"] == "computed"
                    && let Some(m) = line["mesh"].as_str()
                {
                    page.reload(&dir.join(m));
                }
                page.record(line);
            },
            |(meshes, _)| make(meshes),
        )?;
        for note in notes {
            self.say(&format!("WARNING: {note}\n"));
        }
        self.page.record(line.clone());
        Ok(line)
    }

    /// Computes one mesh and records the outcome; returns false when it failed.
    /// With a schedule, a file that looks half-written is handed back for a retry.
    /// `released`: when the last event that released the mesh arrived (`None` in the
    /// first pass).
    fn process(
        &mut self,
        mesh: &Path,
        schedule: Option<&mut Schedule>,
        released: Option<Instant>,
    ) -> Result<bool, WatchError> {
        let name = file_name(mesh);
        if !mesh.exists() {
            // Not a removal when the whole folder went (or moved).
            if self.folder_gone() {
                return Err(WatchError::FolderGone {
                    dir: self.dir.clone(),
                });
            }
            let known = self
                .meshes
                .get(mesh)
                .is_some_and(|s| s.lin.hashes.is_some());
            if known {
                self.meshes.entry(mesh.to_owned()).or_default().lin.hashes = None;
                self.mark_stale(mesh, "the mesh file was deleted");
                self.append(json!({
                    "time": now_rfc3339(), "mesh": name, "event": "removed",
                }))?;
                self.say(&format!(
                    "{} {name} · removed; its last result is kept, marked stale\n",
                    clock()
                ));
            }
            return Ok(true);
        }
        let side = pipeline::sidecar_path(mesh);
        if let Some(link) = [mesh, side.as_path()]
            .into_iter()
            .find(|p| leads_outside(&self.dir, p))
        {
            let e = RunError::Read {
                path: link.to_owned(),
                source: std::io::Error::other(
                    "it is a symbolic link to a file outside the watched folder, and wetload does not follow links out of it; copy the file into the folder",
                ),
            };
            return self.failed(mesh, &name, &e, None);
        }
        let before = fingerprint(mesh);
        let read_at = Instant::now();
        let previous_read = self
            .meshes
            .entry(mesh.to_owned())
            .or_default()
            .read_at
            .replace(read_at);
        let inputs = match pipeline::read_inputs(mesh) {
            Ok(i) => i,
            Err(e) => return self.failed(mesh, &name, &e, schedule),
        };
        // A file that changed while we read it is half-written: look again later.
        let after = fingerprint(mesh);
        let settled =
            before == after && after.is_some_and(|(len, _)| len == inputs.mesh_bytes.len() as u64);
        if !settled && let Some(s) = schedule {
            s.retry(mesh.to_owned(), Instant::now());
            return Ok(true);
        }
        let hashes = (
            hash(&inputs.mesh_bytes),
            hash(inputs.sidecar_text.as_bytes()),
        );
        let st = self.meshes.entry(mesh.to_owned()).or_default();
        let mut rewrite = Vec::new();
        if st.lin.hashes.as_ref() == Some(&hashes) {
            // The same content: nothing to compute, unless files of its result are gone.
            let facets = st.lin.facets;
            rewrite = match (
                crate::sidecar::parse_sidecar(&side, &inputs.sidecar_text),
                facets,
            ) {
                (Ok(sc), Some(f)) => outputs::missing_files(self.layout(), mesh, &sc, f),
                _ => vec![self.layout().result(mesh)]
                    .into_iter()
                    .filter(|p| !p.is_file())
                    .collect(),
            };
            if rewrite.is_empty() {
                let st = self.meshes.entry(mesh.to_owned()).or_default();
                let iteration = st.lin.iteration;
                st.retries = 0;
                // Released for events that arrived before the last read began (a sidecar
                // and its mesh saved together each complete the save): that read saw
                // this content, so there is nothing new to say or log.
                if let (Some(read), Some(last)) = (previous_read, released)
                    && last <= read
                {
                    return Ok(true);
                }
                self.append(json!({
                    "time": now_rfc3339(), "mesh": name, "event": "unchanged",
                    "iteration": iteration, "mesh_hash": hashes.0, "sidecar_hash": hashes.1,
                }))?;
                self.say(&format!(
                    "{} {name} · unchanged (iteration {iteration})\n",
                    clock()
                ));
                return Ok(true);
            }
        }
        let kept = iterations::keep_bytes(
            self.layout(),
            &hashes,
            &inputs.mesh_bytes,
            inputs.sidecar_text.as_bytes(),
        );
        if let Err(e) = kept {
            let e = self.in_folder(&e.to_string());
            self.say(&format!(
                "{} {name} · note: no snapshot kept: {e}\n",
                clock()
            ));
        }
        // A long recomputation's bar (stderr), gone before the next line is said.
        let bar = Bar::start(self.opts.progress, &name);
        let layout = self.layout().clone();
        // On a thread of the pool, as in `calc`.
        let done = rayon::scope(|_| pipeline::compute_parsed_with(mesh, inputs, &bar)).map(|c| {
            bar.report(Stage::Writing, 0, 1);
            let written = pipeline::write_computed(&layout, mesh, &c, self.opts.units);
            (c, written)
        });
        drop(bar);
        let (computed, written) = match done {
            Ok(d) => d,
            Err(e) => return self.failed(mesh, &name, &e, schedule),
        };
        let dropped = match written {
            Ok(d) => d,
            Err(e) => {
                // A full or read-only results folder: say so once, keep running, try
                // again every WRITE_RETRY (and on the next save). Nothing was replaced.
                let st = self.meshes.entry(mesh.to_owned()).or_default();
                let first = !st.write_failing;
                st.write_failing = true;
                match schedule {
                    Some(s) => s.retry(mesh.to_owned(), Instant::now() + WRITE_RETRY),
                    None if !self.opts.once => self.write_retry.push(mesh.to_owned()),
                    None => {}
                }
                if first {
                    let again = if self.opts.once {
                        String::new()
                    } else {
                        format!("; trying again every {} s", WRITE_RETRY.as_secs())
                    };
                    let e = self.in_folder(&e.to_string());
                    self.say(&format!("{} {name} · error: {e}{again}\n", clock()));
                }
                return Ok(false);
            }
        };
        if let Some(d) = dropped {
            self.say(&format!(
                "{} {name} · note: {}; the exports were not written, and {} export(s) of the earlier result were removed so that none disagrees with the result\n",
                clock(),
                d.error,
                d.removed.len()
            ));
        }
        self.page.reload(mesh);
        let result = computed.result;
        let st = self.meshes.entry(mesh.to_owned()).or_default();
        st.retries = 0;
        st.lin.facets = Some(result.inputs.facets);
        let recovered = std::mem::take(&mut st.write_failing);
        if !rewrite.is_empty() {
            let iteration = st.lin.iteration;
            let files: Vec<String> = rewrite.iter().map(|p| file_name(p)).collect();
            self.append(json!({
                "time": now_rfc3339(), "mesh": name, "event": "unchanged",
                "iteration": iteration, "mesh_hash": hashes.0, "sidecar_hash": hashes.1,
                "rewritten": files,
            }))?;
            self.say(&format!(
                "{} {name} · unchanged (iteration {iteration}); missing result files written again: {}\n",
                clock(),
                files.join(", ")
            ));
            return Ok(true);
        }
        let time = now_rfc3339();
        let key = mesh.to_owned();
        let line = self.append_made(|meshes| {
            let lin = &mut meshes.entry(key).or_default().lin;
            // Computed on purpose (new content, or after a failure): a new iteration,
            // unless a `calc` of the same content was logged meanwhile.
            lin.line(&time, &result, hashes)
        })?;
        let _ = iterations::prune(self.layout());
        let Some(iteration) = line["iteration"].as_u64() else {
            return Ok(true);
        };
        if line["event"] != "computed" {
            self.say(&format!(
                "{} {name} · unchanged (iteration {iteration}, computed meanwhile by calc)\n",
                clock()
            ));
            return Ok(true);
        }
        let cases = line["cases"].clone();
        let block = record::block(
            &clock(),
            &result,
            iteration,
            cases.as_array().map_or(&[][..], Vec::as_slice),
            self.opts.verbose,
            &crate::report::units::Units::of(self.opts.units),
        );
        if recovered {
            self.say(&format!("{} {name} · results written again\n", clock()));
        }
        self.say(&block);
        Ok(true)
    }

    fn failed(
        &mut self,
        mesh: &Path,
        name: &str,
        e: &RunError,
        schedule: Option<&mut Schedule>,
    ) -> Result<bool, WatchError> {
        if self.folder_gone() {
            return Err(WatchError::FolderGone {
                dir: self.dir.clone(),
            });
        }
        let st = self.meshes.entry(mesh.to_owned()).or_default();
        // Deleted between the event and the read: look again (it will be noted removed).
        let vanished = !mesh.exists();
        let fresh = [mesh.to_owned(), pipeline::sidecar_path(mesh)]
            .iter()
            .filter_map(|p| fs::metadata(p).and_then(|m| m.modified()).ok())
            .any(|t| {
                SystemTime::now().duration_since(t).unwrap_or_default() < 4 * self.opts.debounce
            });
        if let Some(s) = schedule
            && (fresh || vanished)
            && st.retries < self.opts.retries
        {
            st.retries += 1;
            s.retry(mesh.to_owned(), Instant::now());
            return Ok(true);
        }
        st.retries = 0;
        // The next good save must compute even if it restores the last good content.
        st.lin.hashes = None;
        let message = self.in_folder(&e.to_string());
        let kept = self.mark_stale(mesh, &message);
        self.append(json!({
            "time": now_rfc3339(), "mesh": name, "event": "failed", "error": message,
        }))?;
        let tail = if kept {
            "the last good result is kept, marked stale"
        } else {
            "no result yet"
        };
        self.say(&format!(
            "{} {name} · error: {message}\n  ({tail})\n",
            clock()
        ));
        Ok(false)
    }

    /// Writes the folder's page (`live`: it reloads itself) and the history charts of the
    /// meshes changed since the last time (`all`: of every mesh); a failure is only
    /// reported.
    fn refresh_page(&mut self, live: bool, all: bool) {
        match self.page.write(all, live) {
            Ok(_) => self.page_note = None,
            Err(e) => {
                // Said once while it keeps failing the same way.
                let note = format!("note: {}\n", self.in_folder(&e.to_string()));
                if self.page_note.as_ref() != Some(&note) {
                    self.say(&note);
                    self.page_note = Some(note);
                }
            }
        }
    }

    /// Marks the result of `mesh` stale with a reason; returns whether one existed.
    fn mark_stale(&mut self, mesh: &Path, reason: &str) -> bool {
        let path = self.layout().result(mesh);
        let Ok(bytes) = fs::read(&path) else {
            return false;
        };
        let Ok(mut doc) = serde_json::from_slice::<Value>(&bytes) else {
            return false;
        };
        if let Value::Object(m) = &mut doc {
            m.insert(
                "stale".into(),
                json!({"since": now_rfc3339(), "reason": reason}),
            );
        }
        let mut text = serde_json::to_vec_pretty(&doc).expect("a JSON value always serializes");
        text.push(b'\n');
        if let Err(e) = results::write_atomic(&path, &text) {
            self.say(&format!("note: {e}\n"));
        }
        self.page.reload(mesh);
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn temporary_names_are_ignored() {
        for n in [
            ".gate.stl.swp",
            "gate.stl~",
            "gate.stl.tmp",
            ".wetload-x.tmp",
            "a.part",
        ] {
            assert!(is_temp_name(Path::new(n)), "{n}");
        }
        assert!(!is_temp_name(Path::new("gate.stl")));
    }
}
