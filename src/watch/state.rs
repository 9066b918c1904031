//! What the watcher keeps per mesh between saves: the mesh's lineage in the change log
//! (`pipeline::record::Lineage`) and its retries.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde_json::Value;

use crate::pipeline::record::Lineage;

/// Per-mesh state carried between saves.
#[derive(Debug, Default)]
pub(super) struct MeshState {
    /// Iteration, previous and baseline figures, last hashes and facets, as the log says.
    pub lin: Lineage,
    pub retries: u32,
    /// The last result could not be written; it is being retried (reported once).
    pub write_failing: bool,
    /// When this watcher last began to read the mesh and its sidecar: events that arrived
    /// before then describe content that read already saw.
    pub read_at: Option<std::time::Instant>,
}

/// Rebuilds a mesh's lineage from a line of the change log (`dir`: the watched folder),
/// whoever wrote it (this watcher before, or `calc`).
pub(super) fn restore(dir: &Path, meshes: &mut BTreeMap<PathBuf, MeshState>, line: &Value) {
    let Some(mesh) = line["mesh"].as_str() else {
        return;
    };
    meshes.entry(dir.join(mesh)).or_default().lin.feed(line);
}
