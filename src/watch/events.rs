//! From file-system events to what the schedule takes: which meshes an event concerns
//! (a mesh itself, the meshes of a sidecar, the links to either), whether it completes a
//! save ([`super::complete`]), and the folder's names looked at again after renames (links,
//! meshes that share a stem).
//!
//! It computes and writes no result; `mod.rs` runs the loop and the recomputations.

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::{Path, PathBuf};
use std::time::Instant;

use notify::event::{AccessKind, AccessMode, EventKind, MetadataKind, ModifyKind, RenameMode};

use super::{Signal, Touch, Watch, complete, file_name, is_temp_name, scan};

/// How long a renamed-in OBJ waits before it is computed (see [`Signal::Settle`]).
pub(super) const OBJ_SETTLE: std::time::Duration = std::time::Duration::from_millis(40);

/// Whether `p` names an OBJ.
fn is_obj(p: &Path) -> bool {
    p.extension().is_some_and(|e| e.eq_ignore_ascii_case("obj"))
}
use crate::pipeline::{self, outputs};
use crate::results;

/// Events that can mean new content (not the tool's own reads). The poll watcher reports
/// a changed file as a new modification time.
pub(super) fn is_write(kind: &EventKind) -> bool {
    matches!(
        kind,
        EventKind::Create(_)
            | EventKind::Remove(_)
            | EventKind::Modify(
                ModifyKind::Data(_)
                    | ModifyKind::Name(_)
                    | ModifyKind::Any
                    | ModifyKind::Metadata(MetadataKind::WriteTime)
            )
            | EventKind::Access(AccessKind::Close(AccessMode::Write))
            | EventKind::Any
    )
}

/// Events after which the folder may hold other names (so links and shared stems are
/// looked at again).
fn renames(kind: &EventKind) -> bool {
    matches!(
        kind,
        EventKind::Create(_)
            | EventKind::Remove(_)
            | EventKind::Modify(ModifyKind::Name(_))
            | EventKind::Any
    )
}

/// The links among the meshes and sidecars of `dir` (canonical) that lead to a file
/// directly in `dir`: target → links.
pub(super) fn link_map(dir: &Path) -> BTreeMap<PathBuf, BTreeSet<PathBuf>> {
    let mut map: BTreeMap<PathBuf, BTreeSet<PathBuf>> = BTreeMap::new();
    let Ok(rd) = fs::read_dir(dir) else {
        return map;
    };
    for e in rd.filter_map(Result::ok) {
        let p = e.path();
        let relevant = crate::mesh::is_mesh_path(&p)
            || p.extension()
                .is_some_and(|x| x.eq_ignore_ascii_case("json"));
        if !relevant || !e.file_type().is_ok_and(|t| t.is_symlink()) {
            continue;
        }
        if let Ok(target) = fs::canonicalize(&p)
            && target.parent() == Some(dir)
            && target != p
        {
            map.entry(target).or_default().insert(p);
        }
    }
    map
}

impl Watch<'_> {
    /// Looks at the folder's names again: links to files in it, and meshes that share a
    /// stem (said once; the meshes whose file names change are computed again).
    pub(super) fn refresh_names(&mut self, at: Instant) -> Vec<(PathBuf, Instant)> {
        self.links = link_map(&self.dir);
        let meshes = scan(&self.dir);
        let before = self.layout().clone();
        let newly = self
            .page
            .layout_mut()
            .set_meshes(meshes.iter().map(PathBuf::as_path));
        for stem in newly {
            let sharing: Vec<&PathBuf> =
                meshes.iter().filter(|m| results::stem(m) == stem).collect();
            let names: Vec<String> = sharing.iter().map(|m| file_name(m)).collect();
            let files: Vec<String> = sharing
                .iter()
                .map(|m| format!("results/{}", file_name(&self.layout().result(m))))
                .collect();
            let text = format!(
                "note: {} share the stem {stem:?}: their results are {} (exports and charts are named the same way)\n",
                names.join(" and "),
                files.join(" and ")
            );
            self.say(&text);
        }
        let mut touched = Vec::new();
        for m in &meshes {
            if before.name(m) != self.layout().name(m) {
                // Its files have a new name: remove those under the old one (nobody's now,
                // and no longer kept up to date) and write them under the new.
                let facets = self.meshes.get(m).and_then(|st| st.lin.facets);
                let mut old = vec![before.result(m), before.history_of(m)];
                let side = pipeline::sidecar_path(m);
                if let (Ok(text), Some(f)) = (fs::read_to_string(&side), facets)
                    && let Ok(sc) = crate::sidecar::parse_sidecar(&side, &text)
                {
                    old.extend(outputs::export_files(&before, m, &sc, f));
                }
                let removed: Vec<String> = old
                    .iter()
                    .filter(|p| p.is_file() && results::remove_if_present(p).is_ok())
                    .map(|p| file_name(p))
                    .collect();
                if !removed.is_empty() {
                    self.say(&format!(
                        "note: {}'s results are now named {}; removed under the old name: {}\n",
                        file_name(m),
                        self.layout().name(m),
                        removed.join(", ")
                    ));
                }
                if let Some(st) = self.meshes.get_mut(m) {
                    st.lin.hashes = None;
                }
                touched.push((m.clone(), at));
            }
        }
        touched
    }

    /// The meshes an event concerns, each with the instant it arrived.
    pub(super) fn touches(
        &mut self,
        at: Instant,
        res: notify::Result<notify::Event>,
    ) -> Vec<Touch> {
        let event = match res {
            Ok(event) => event,
            Err(e) => {
                self.say(&format!("note: file-system event error: {e}; rescanning\n"));
                return scan(&self.dir)
                    .into_iter()
                    .map(|m| Touch::progress(m, at))
                    .collect();
            }
        };
        let mut out: Vec<Touch> = Vec::new();
        if event.need_rescan() {
            out.extend(
                self.refresh_names(at)
                    .into_iter()
                    .chain(scan(&self.dir).into_iter().map(|m| (m, at)))
                    .map(|(m, at)| Touch::progress(m, at)),
            );
        }
        // A rename within the folder comes as `From`, `To` and then `Both` with the two
        // paths; `To` has already said everything `Both` says about the new name, and a
        // second signal for one save, read after its computation began, would compute the
        // same content again and log it `unchanged`. The old name has its `From`.
        let echo = matches!(
            event.kind,
            EventKind::Modify(ModifyKind::Name(RenameMode::Both))
        );
        if is_write(&event.kind) && !echo {
            if renames(&event.kind) {
                out.extend(
                    self.refresh_names(at)
                        .into_iter()
                        .map(|(m, at)| Touch::progress(m, at)),
                );
            }
            // A writer closed the file, or a finished file was renamed into place: the
            // save is complete if its format says it is whole (see `complete`).
            let renamed_in = matches!(
                event.kind,
                EventKind::Modify(ModifyKind::Name(RenameMode::To))
            );
            let closed = matches!(
                event.kind,
                EventKind::Access(AccessKind::Close(AccessMode::Write))
            );
            for p in &event.paths {
                let target = renamed_in || closed;
                for m in self.meshes_for(p) {
                    let whole = target && self.save_is_whole(p, &m, renamed_in);
                    // What the completed save left, to compare with when it is released.
                    if whole {
                        let state = self.save_state(&m);
                        self.completed.insert(m.clone(), state);
                    } else {
                        self.completed.remove(&m);
                    }
                    // An OBJ is whole by its writer's word only: a short settle lets
                    // the events of a write that began at once arrive first.
                    let signal = match (whole, renamed_in && is_obj(&m)) {
                        (false, _) => Signal::Progress,
                        (true, true) => Signal::Settle(OBJ_SETTLE),
                        (true, false) => Signal::Complete,
                    };
                    out.push(Touch {
                        path: m,
                        at,
                        signal,
                    });
                }
            }
        }
        out
    }

    /// Whether a save of `p` that a writer has finished leaves mesh `m` ready to compute:
    /// `p` is whole by its format (an OBJ renamed into place counts, its writer finished
    /// it under another name), and when `p` is `m`'s sidecar, `m` is a whole STL too (an
    /// OBJ that is not itself being saved has no end marker to show it is not half-written,
    /// so it waits for the quiet window).
    fn save_is_whole(&self, p: &Path, m: &Path, renamed_in: bool) -> bool {
        let obj = |q: &Path| q.extension().is_some_and(|e| e.eq_ignore_ascii_case("obj"));
        let p_whole = (renamed_in && obj(p)) || complete::whole(p);
        p_whole && (p == m || (!obj(m) && complete::whole(m)))
    }

    /// The meshes a changed path concerns: itself if it is a mesh, the meshes with its
    /// stem if it is a sidecar, and the same for every link in the folder to it; nothing
    /// for anything else.
    pub(super) fn meshes_for(&self, p: &Path) -> Vec<PathBuf> {
        // Only direct children of the folder count: never anything inside results/.
        if is_temp_name(p) || p.parent() != Some(self.dir.as_path()) {
            return Vec::new();
        }
        let mut out: BTreeSet<PathBuf> = BTreeSet::new();
        let links = self.links.get(p).into_iter().flatten();
        for q in std::iter::once(p).chain(links.map(PathBuf::as_path)) {
            out.extend(self.direct_meshes_for(q));
        }
        out.into_iter().collect()
    }

    fn direct_meshes_for(&self, p: &Path) -> Vec<PathBuf> {
        if crate::mesh::is_mesh_path(p) {
            return vec![p.to_owned()];
        }
        let is_json = p
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("json"));
        if !is_json {
            return Vec::new();
        }
        let stem = results::stem(p);
        let mut out: BTreeSet<PathBuf> = scan(&self.dir)
            .into_iter()
            .filter(|m| results::stem(m) == stem)
            .collect();
        // A mesh that was known but has gone is still worth a look (it will be noted).
        out.extend(
            self.meshes
                .keys()
                .filter(|m| results::stem(m) == stem)
                .cloned(),
        );
        out.into_iter().collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_write_type_events_count() {
        use notify::event::CreateKind;
        assert!(is_write(&EventKind::Create(CreateKind::File)));
        assert!(is_write(&EventKind::Access(AccessKind::Close(
            AccessMode::Write
        ))));
        assert!(!is_write(&EventKind::Access(AccessKind::Open(
            AccessMode::Any
        ))));
        assert!(!is_write(&EventKind::Access(AccessKind::Close(
            AccessMode::Read
        ))));
    }
}
