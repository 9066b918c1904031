//! The `results/` folder beside the meshes: the one place that knows where every output
//! goes, what it is called, and how it is written.
//!
//! ```text
//! <folder>/                       the meshes and their sidecars (never written here)
//! └── results/                    [`DIR_NAME`]; only ever a real folder, never a link
//!     ├── <name>.json             result document of one mesh (`report::json`)
//!     ├── <name>[.<case>].vtp     pressure field, VTK XML PolyData (`report::vtk`)
//!     ├── <name>[.<case>].csv     load per facet (`report::csv`)
//!     ├── <name>[.<case>].nodal.csv  consistent nodal forces (`report::nodal`)
//!     ├── <name>[.<case>].sweep.svg  loads against level, with a sweep (`report::svg`)
//!     ├── <name>[.<case>].view.json  the page's 3D view of the case (`report::view`)
//!     ├── <name>[.<case>].section.svg  the case's pressure diagram (`report::svg`)
//!     ├── <name>.history.svg      headline loads at every computation in the change log
//!     ├── <name>.edges.obj        open and non-manifold edges found by `wetload check`
//!     ├── report.html             the folder's page (`report::html`)
//!     ├── changes.jsonl           the change log, one line per recomputation ([`changelog`])
//!     ├── changes.jsonl.torn      torn last lines of interrupted runs, moved aside
//!     ├── .wetload.lock           held by the watcher that writes the change log
//!     ├── .snapshots/             the exact inputs of computed iterations ([`snapshots`])
//!     │   ├── <h[0..2]>/<h>       one blob: the bytes whose BLAKE3 hash is <h> (hex)
//!     │   └── .wetload-<pid>-*.tmp   a blob being written; never listed
//!     └── .wetload-<pid>-*.tmp    an atomic write in progress ([`write_atomic`]); those
//!                                 of a process that no longer runs are removed when a
//!                                 watcher starts ([`clean_orphans`])
//! ```
//!
//! `<name>` is the mesh's file stem (`gate.stl` → `gate`) when no other mesh in the folder
//! has the same stem. When two or more do (`gate.stl` and `gate.obj`), each of them is
//! named by its whole file name instead (`gate.stl.json`, `gate.obj.json`,
//! `gate.obj.flood.csv`, …), so that no mesh's files overwrite another's. The rule depends
//! only on which meshes are in the folder, not on their order or history; it lives in
//! [`Layout::name`] and nowhere else.
//!
//! `<case>` appears when the sidecar has several cases ([`case_parts`]); names that come
//! from files and sidecars pass through [`file_part`] before they become part of a path,
//! so no name can leave `results/` or make a hidden file.
//!
//! Owns: the names and places above ([`Layout`]), atomic writes and removals, the
//! change log with its lock, and the snapshot store. It does not decide *what* is written (that is
//! `pipeline::outputs`) nor render anything (that is `report`).

pub mod changelog;
pub mod snapshots;
mod write;

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

pub use write::{
    Batch, ExportsDropped, TEMP_PREFIX, WriteError, clean_orphans, remove_if_present, write_atomic,
    write_atomic_unsynced,
};

/// Name of the folder, beside the meshes, that receives every output.
pub const DIR_NAME: &str = "results";

/// File name of the folder's page inside `results/`.
pub const PAGE_NAME: &str = "report.html";

/// The longest a sanitised name may be in a file name, bytes (file systems allow 255 for
/// the whole name, which also holds the mesh's stem and the extension).
pub const MAX_FILE_PART_BYTES: usize = 100;

/// The results folder of a mesh: `results/` beside it.
pub fn dir_of(mesh: &Path) -> PathBuf {
    mesh.parent()
        .map_or_else(|| PathBuf::from(DIR_NAME), |d| d.join(DIR_NAME))
}

/// The file stem of a path as text (lossy for names that are not UTF-8).
pub fn stem(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// The places of the files in one `results/` folder (see the module doc for the tree).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Layout {
    dir: PathBuf,
    /// How many meshes of the folder have each file stem.
    stems: BTreeMap<String, usize>,
}

impl Layout {
    /// The layout of the results folder at `dir` (a `results/` folder itself), for a
    /// folder whose meshes are not known (every mesh is named by its stem until
    /// [`Layout::set_meshes`] says otherwise).
    pub fn new(dir: PathBuf) -> Layout {
        Layout {
            dir,
            stems: BTreeMap::new(),
        }
    }

    /// The layout of the results folder beside `mesh`, knowing the other meshes there
    /// (the files of its folder for which `is_mesh` holds).
    pub fn of_mesh(mesh: &Path, is_mesh: impl Fn(&Path) -> bool) -> Layout {
        let mut layout = Layout::new(dir_of(mesh));
        let folder = mesh
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let siblings: Vec<PathBuf> = fs::read_dir(folder)
            .map(|rd| {
                rd.filter_map(Result::ok)
                    .map(|e| e.path())
                    .filter(|p| is_mesh(p))
                    .collect()
            })
            .unwrap_or_default();
        layout.set_meshes(siblings.iter().map(PathBuf::as_path).chain([mesh]));
        layout
    }

    /// Tells the layout which meshes are in the folder (each path once; `mesh` may be
    /// among them). Returns the stems shared by more than one mesh that were not shared
    /// before, so a caller can say so once.
    pub fn set_meshes<'a>(&mut self, meshes: impl IntoIterator<Item = &'a Path>) -> Vec<String> {
        // Each file name once, however the paths are written.
        let names: std::collections::BTreeSet<&std::ffi::OsStr> =
            meshes.into_iter().filter_map(Path::file_name).collect();
        let mut stems: BTreeMap<String, usize> = BTreeMap::new();
        for m in names {
            *stems.entry(stem(Path::new(m))).or_default() += 1;
        }
        let newly: Vec<String> = stems
            .iter()
            .filter(|(s, n)| **n > 1 && self.stems.get(*s).is_none_or(|old| *old < 2))
            .map(|(s, _)| s.clone())
            .collect();
        self.stems = stems;
        newly
    }

    /// Whether another mesh of the folder has the stem of `mesh`.
    pub fn is_shared(&self, mesh: &Path) -> bool {
        self.stems.get(&stem(mesh)).is_some_and(|n| *n > 1)
    }

    /// The name every file of `mesh` starts with: its stem, or its whole file name when
    /// another mesh of the folder has the same stem (see the module doc). Sanitised.
    pub fn name(&self, mesh: &Path) -> String {
        file_part(&self.raw_name(mesh))
    }

    /// [`Layout::name`] before sanitising (the result document keeps the stem as it is,
    /// as it always has).
    fn raw_name(&self, mesh: &Path) -> String {
        if self.is_shared(mesh) {
            mesh.file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default()
        } else {
            stem(mesh)
        }
    }

    /// The `results/` folder itself.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// `<name>.json`: the result document of `mesh`.
    pub fn result(&self, mesh: &Path) -> PathBuf {
        self.dir.join(format!("{}.json", self.raw_name(mesh)))
    }

    /// The exports of one case of `mesh`; `case` is its name part from [`case_parts`].
    pub fn exports(&self, mesh: &Path, case: Option<&str>) -> Exports {
        let name = self.name(mesh);
        let base = match case {
            Some(c) => format!("{name}.{c}"),
            None => name,
        };
        Exports {
            field: self.dir.join(format!("{base}.vtp")),
            facet_loads: self.dir.join(format!("{base}.csv")),
            nodal_loads: self.dir.join(format!("{base}.nodal.csv")),
            sweep_chart: self.dir.join(format!("{base}.sweep.svg")),
            view: self.dir.join(format!("{base}.view.json")),
            section: self.dir.join(format!("{base}.section.svg")),
        }
    }

    /// `<name>[.<case>].section.svg` for the result document `<name>.json` (`name` as
    /// [`Layout::name`] gave it, `case` a part from [`case_parts`]).
    pub fn section_of(&self, name: &str, case: Option<&str>) -> PathBuf {
        match case {
            Some(c) => self.dir.join(format!("{name}.{c}.section.svg")),
            None => self.dir.join(format!("{name}.section.svg")),
        }
    }

    /// `<name>[.<case>].view.json` for the result document `<name>.json` (`name` as
    /// [`Layout::name`] gave it, `case` a part from [`case_parts`]).
    pub fn view_of(&self, name: &str, case: Option<&str>) -> PathBuf {
        match case {
            Some(c) => self.dir.join(format!("{name}.{c}.view.json")),
            None => self.dir.join(format!("{name}.view.json")),
        }
    }

    /// `<name>.edges.obj`: the open and non-manifold edges `wetload check` found.
    pub fn edges(&self, mesh: &Path) -> PathBuf {
        self.dir.join(format!("{}.edges.obj", self.name(mesh)))
    }

    /// `<name>.history.svg` for `mesh`.
    pub fn history_of(&self, mesh: &Path) -> PathBuf {
        self.dir.join(format!("{}.history.svg", self.name(mesh)))
    }

    /// `<name>.history.svg` for a result document named `<name>.json`.
    pub fn history_chart(&self, stem: &str) -> PathBuf {
        self.dir.join(format!("{}.history.svg", file_part(stem)))
    }

    /// `report.html`.
    pub fn page(&self) -> PathBuf {
        self.dir.join(PAGE_NAME)
    }

    /// `changes.jsonl`.
    pub fn change_log(&self) -> PathBuf {
        self.dir.join(changelog::LOG_NAME)
    }

    /// `changes.jsonl.torn`.
    pub fn torn_lines(&self) -> PathBuf {
        self.dir.join(format!("{}.torn", changelog::LOG_NAME))
    }

    /// `.wetload.lock`.
    pub fn lock(&self) -> PathBuf {
        self.dir.join(changelog::LOCK_NAME)
    }

    /// `.snapshots/`: the store of the exact inputs of computed iterations.
    pub fn snapshots(&self) -> PathBuf {
        self.dir.join(snapshots::DIR_NAME)
    }

    /// `.snapshots/<h[0..2]>/<h>`: the blob with the BLAKE3 hash `hash` (hex).
    pub fn snapshot(&self, hash: &str) -> PathBuf {
        snapshots::blob_path(&self.snapshots(), hash)
    }
}

/// The per-case export files of one mesh.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Exports {
    /// `.vtp`: the pressure field.
    pub field: PathBuf,
    /// `.csv`: the load per facet.
    pub facet_loads: PathBuf,
    /// `.nodal.csv`: the consistent nodal forces.
    pub nodal_loads: PathBuf,
    /// `.sweep.svg`: loads against level.
    pub sweep_chart: PathBuf,
    /// `.view.json`: the data of the page's 3D view (see `crate::report::view`).
    pub view: PathBuf,
    /// `.section.svg`: the pressure diagram (see `crate::report::svg::section_svg`).
    pub section: PathBuf,
}

impl Exports {
    /// Every one of these files, in a fixed order.
    pub fn all(self) -> [PathBuf; 6] {
        [
            self.field,
            self.facet_loads,
            self.nodal_loads,
            self.sweep_chart,
            self.view,
            self.section,
        ]
    }
}

/// `name` made safe as one component of a file name: path separators, characters that
/// Windows refuses (`< > : " | ? *`) and control characters become `_`, a leading `.`
/// becomes `_` (no hidden files, no `..`), an empty name becomes `_`, and a long name is
/// cut to [`MAX_FILE_PART_BYTES`] (at a character boundary). Everything else, spaces and
/// non-ASCII letters included, is kept.
pub fn file_part(name: &str) -> String {
    let mut out: String = name
        .char_indices()
        .take_while(|(i, c)| i + c.len_utf8() <= MAX_FILE_PART_BYTES)
        .map(|(_, c)| c)
        .map(|c| match c {
            '/' | '\\' | '<' | '>' | ':' | '"' | '|' | '?' | '*' => '_',
            c if c.is_control() => '_',
            c => c,
        })
        .collect();
    if out.starts_with('.') {
        out.replace_range(0..1, "_");
    }
    if out.is_empty() {
        out.push('_');
    }
    out
}

/// The name part of each case in file names, given the case names in order: `None` for a
/// sidecar with one case, else the sanitised names, made unique with `-2`, `-3` … should
/// two sanitise alike.
pub fn case_parts<'a>(names: impl ExactSizeIterator<Item = &'a str>) -> Vec<Option<String>> {
    if names.len() <= 1 {
        return vec![None; names.len()];
    }
    let mut seen: Vec<String> = Vec::new();
    names
        .map(|n| {
            let base = file_part(n);
            let mut name = base.clone();
            let mut k = 1;
            while seen.contains(&name) {
                k += 1;
                name = format!("{base}-{k}");
            }
            seen.push(name.clone());
            Some(name)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_never_leave_the_folder() {
        assert_eq!(file_part("flood"), "flood");
        assert_eq!(file_part("high water"), "high water");
        assert_eq!(file_part("../x"), "_._x");
        assert_eq!(file_part(".."), "_.");
        assert_eq!(file_part("a/b\\c:d*e?"), "a_b_c_d_e_");
        assert_eq!(file_part(""), "_");
        assert_eq!(file_part("crue\u{7}"), "crue_");
        // Long names are cut at a character boundary (é is 2 bytes).
        assert_eq!(file_part(&"x".repeat(500)), "x".repeat(MAX_FILE_PART_BYTES));
        let cut = file_part(&format!("a{}", "é".repeat(300)));
        assert_eq!(cut.len(), MAX_FILE_PART_BYTES - 1);
        assert!(cut.ends_with('é'));
        for n in ["..", "../x", "/etc/passwd", ".hidden", "a\\..\\b"] {
            let p = file_part(n);
            assert!(
                !p.contains('/') && !p.contains('\\') && !p.starts_with('.'),
                "{p}"
            );
        }
    }

    #[test]
    fn case_names_in_file_names_are_distinct() {
        assert_eq!(case_parts(["default"].into_iter()), [None]);
        assert_eq!(
            case_parts(["a/b", "a:b", "flood"].into_iter()),
            [
                Some("a_b".to_owned()),
                Some("a_b-2".to_owned()),
                Some("flood".to_owned())
            ]
        );
    }

    #[test]
    fn every_file_of_a_mesh_is_inside_its_results_folder() {
        let layout = Layout::of_mesh(Path::new("/p/gate.stl"), |_| true);
        assert_eq!(layout.dir(), Path::new("/p/results"));
        assert_eq!(
            layout.result(Path::new("/p/gate.stl")),
            Path::new("/p/results/gate.json")
        );
        let e = layout.exports(Path::new("/p/gate.stl"), Some("flood"));
        assert_eq!(e.field, Path::new("/p/results/gate.flood.vtp"));
        assert_eq!(e.facet_loads, Path::new("/p/results/gate.flood.csv"));
        assert_eq!(e.nodal_loads, Path::new("/p/results/gate.flood.nodal.csv"));
        assert_eq!(e.sweep_chart, Path::new("/p/results/gate.flood.sweep.svg"));
        assert_eq!(
            layout.history_chart("gate"),
            Path::new("/p/results/gate.history.svg")
        );
        assert_eq!(layout.page(), Path::new("/p/results/report.html"));
        assert_eq!(layout.change_log(), Path::new("/p/results/changes.jsonl"));
        assert_eq!(layout.lock(), Path::new("/p/results/.wetload.lock"));
        let h = "ab".repeat(32);
        assert_eq!(
            layout.snapshot(&h),
            Path::new("/p/results/.snapshots/ab").join(&h)
        );
        assert_eq!(dir_of(Path::new("gate.stl")), Path::new("results"));
    }

    #[test]
    fn meshes_that_share_a_stem_are_named_by_their_whole_file_name() {
        let mut layout = Layout::new(PathBuf::from("/p/results"));
        let (stl, obj, other) = (
            Path::new("/p/gate.stl"),
            Path::new("/p/gate.obj"),
            Path::new("/p/wall.STL"),
        );
        assert!(layout.set_meshes([stl, other]).is_empty());
        assert_eq!(layout.result(stl), Path::new("/p/results/gate.json"));
        assert_eq!(layout.set_meshes([stl, obj, other]), ["gate"]);
        // Said once: the same folder again reports nothing new; a mesh named twice, by
        // different paths, is one mesh.
        assert!(layout.set_meshes([obj, stl, other]).is_empty());
        assert!(
            Layout::new(PathBuf::from("results"))
                .set_meshes([Path::new("/p/a.stl"), Path::new("a.stl")])
                .is_empty()
        );
        assert_eq!(layout.result(stl), Path::new("/p/results/gate.stl.json"));
        assert_eq!(layout.result(obj), Path::new("/p/results/gate.obj.json"));
        assert_eq!(layout.result(other), Path::new("/p/results/wall.json"));
        let e = layout.exports(obj, Some("flood"));
        assert_eq!(e.facet_loads, Path::new("/p/results/gate.obj.flood.csv"));
        assert_eq!(
            layout.history_of(stl),
            Path::new("/p/results/gate.stl.history.svg")
        );
        // One of them gone: back to the stem.
        layout.set_meshes([stl, other]);
        assert_eq!(layout.result(stl), Path::new("/p/results/gate.json"));
    }
}
