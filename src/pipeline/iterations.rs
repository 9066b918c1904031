//! The iterations of a mesh: the exact inputs of each computation kept in the snapshot
//! store (`results::snapshots`), the store held under its cap, and `calc`'s line in the
//! change log, numbered after every earlier line of the mesh, the watcher's included.

use std::path::Path;

use serde_json::Value;

use crate::compute::MeshResult;
use crate::results::changelog::{self, LogError};
use crate::results::snapshots::{self, Use};
use crate::results::{Layout, WriteError};

use super::record::Lineage;

/// The store's cap: `WETLOAD_SNAPSHOT_CAP`, else 1 GiB (a bad value is refused by the
/// binary before any work).
pub fn snapshot_cap() -> u64 {
    crate::limits::snapshot_cap()
        .ok()
        .flatten()
        .unwrap_or(snapshots::DEFAULT_CAP)
}

/// Keeps a mesh's and a sidecar's bytes held in memory (the watcher's) under `hashes`.
pub fn keep_bytes(
    layout: &Layout,
    hashes: &(String, String),
    mesh: &[u8],
    sidecar: &[u8],
) -> Result<(), WriteError> {
    let store = layout.snapshots();
    snapshots::store(&store, &hashes.0, mesh)?;
    snapshots::store(&store, &hashes.1, sidecar)?;
    Ok(())
}

/// Keeps the mesh file (copied a block at a time and checked against its hash) and the
/// sidecar's bytes; returns notes for what could not be kept (the computation stands).
pub fn keep_file(
    layout: &Layout,
    mesh_path: &Path,
    hashes: &(String, String),
    sidecar: &[u8],
) -> Vec<String> {
    let store = layout.snapshots();
    let mut notes = Vec::new();
    match snapshots::store_file(&store, &hashes.0, mesh_path) {
        Ok(Some(_)) => {}
        Ok(None) => notes.push(format!(
            "{} changed while it was computed; the snapshot of this iteration's mesh was not kept (compute it again to keep one)",
            mesh_path.display()
        )),
        Err(e) => notes.push(format!("the inputs were not kept as a snapshot: {e}")),
    }
    if let Err(e) = snapshots::store(&store, &hashes.1, sidecar) {
        notes.push(format!("the inputs were not kept as a snapshot: {e}"));
    }
    notes
}

/// Every computed line's uses of blobs, oldest first; the baseline's and the latest
/// iteration's of each mesh are protected.
pub fn uses(lines: &[Value]) -> Vec<Use> {
    use std::collections::BTreeMap;
    let computed: Vec<&Value> = lines.iter().filter(|l| l["event"] == "computed").collect();
    let mut first: BTreeMap<&str, usize> = BTreeMap::new();
    let mut last: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, l) in computed.iter().enumerate() {
        let m = l["mesh"].as_str().unwrap_or_default();
        first.entry(m).or_insert(i);
        last.insert(m, i);
    }
    let mut out = Vec::new();
    for (i, l) in computed.iter().enumerate() {
        let m = l["mesh"].as_str().unwrap_or_default();
        let protected = first.get(m) == Some(&i) || last.get(m) == Some(&i);
        for key in ["mesh_hash", "sidecar_hash"] {
            if let Some(h) = l[key].as_str() {
                out.push(Use {
                    hash: h.to_owned(),
                    protected,
                });
            }
        }
    }
    out
}

/// Prunes the store of `layout` to its cap, reading the log only when it is over.
pub fn prune(layout: &Layout) -> Vec<String> {
    snapshots::prune(&layout.snapshots(), snapshot_cap(), || {
        uses(&changelog::read_lines(layout.dir()))
    })
}

/// Appends `calc`'s line for `r` computed from inputs with `hashes` (mesh, sidecar) to
/// the change log of `layout` through the append lock (it waits for a watcher that is
/// appending, never for one that merely runs), then prunes the store. The line is
/// `computed` with the mesh's next iteration, or `unchanged` when the hashes are those
/// of its last computed iteration. `beside` is called with the line on another thread
/// while the line is written and flushed (the folder page is drawn meanwhile).
pub fn log_calc<R: Send>(
    layout: &Layout,
    r: &MeshResult,
    hashes: (String, String),
    beside: impl FnOnce(&Value) -> R + Send,
) -> Result<(Value, Vec<String>, R), LogError> {
    let time = now_rfc3339();
    let (line, notes, beside) = changelog::append_once(
        layout.dir(),
        |lines| Some(Lineage::of(&r.mesh, lines).line(&time, r, hashes)),
        |line| beside(line.unwrap_or(&Value::Null)),
    )?;
    // Temporary files of a run killed while it wrote a snapshot.
    crate::results::clean_orphans(&layout.snapshots());
    let _ = prune(layout);
    Ok((line.unwrap_or(Value::Null), notes, beside))
}

/// Now, RFC 3339 in UTC to the millisecond, as every log line's `time`.
pub fn now_rfc3339() -> String {
    jiff::Timestamp::now()
        .round(jiff::Unit::Millisecond)
        .map_or_else(|_| jiff::Timestamp::now().to_string(), |t| t.to_string())
}
