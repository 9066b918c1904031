//! The `results/` folder beside the meshes: the one place that knows where every output
//! goes, what it is called, and how it is written.
//!
//! ```text
//! <folder>/                       the meshes and their sidecars (never written here)
//! └── results/                    [`DIR_NAME`]; only ever a real folder, never a link
//!     ├── <stem>.json             result document of one mesh (`report::json`)
//!     ├── <stem>[.<case>].vtp     pressure field, VTK XML PolyData (`report::vtk`)
//!     ├── <stem>[.<case>].csv     load per facet (`report::csv`)
//!     ├── <stem>[.<case>].sweep.svg  loads against level, with a sweep (`report::svg`)
//!     ├── <stem>.history.svg      headline loads at every computation in the change log
//!     ├── <stem>.edges.obj        open and non-manifold edges found by `wetload check`
//!     ├── report.html             the folder's page (`report::html`)
//!     ├── changes.jsonl           the change log, one line per recomputation ([`changelog`])
//!     ├── changes.jsonl.torn      torn last lines of interrupted runs, moved aside
//!     ├── .wetload.lock           held by the watcher that writes the change log
//!     └── .wetload-*.tmp          an atomic write in progress ([`write_atomic`])
//! ```
//!
//! `<case>` appears when the sidecar has several cases ([`case_parts`]); names that come
//! from files and sidecars pass through [`file_part`] before they become part of a path,
//! so no name can leave `results/` or make a hidden file.
//!
//! Owns: the names and places above ([`Layout`]), atomic writes and removals, and the
//! change log with its lock. It does not decide *what* is written (that is
//! `pipeline::outputs`) nor render anything (that is `report`).

pub mod changelog;
mod write;

use std::path::{Path, PathBuf};

pub use write::{WriteError, remove_if_present, write_atomic};

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
}

impl Layout {
    /// The layout of the results folder at `dir` (a `results/` folder itself).
    pub fn new(dir: PathBuf) -> Layout {
        Layout { dir }
    }

    /// The layout of the results folder beside `mesh`.
    pub fn of_mesh(mesh: &Path) -> Layout {
        Layout::new(dir_of(mesh))
    }

    /// The `results/` folder itself.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// `<stem>.json`: the result document of `mesh`.
    pub fn result(&self, mesh: &Path) -> PathBuf {
        self.dir.join(format!("{}.json", stem(mesh)))
    }

    /// The exports of one case of `mesh`; `case` is its name part from [`case_parts`].
    pub fn exports(&self, mesh: &Path, case: Option<&str>) -> Exports {
        let stem = file_part(&stem(mesh));
        let base = match case {
            Some(c) => format!("{stem}.{c}"),
            None => stem,
        };
        Exports {
            field: self.dir.join(format!("{base}.vtp")),
            facet_loads: self.dir.join(format!("{base}.csv")),
            sweep_chart: self.dir.join(format!("{base}.sweep.svg")),
        }
    }

    /// `<stem>.edges.obj`: the open and non-manifold edges `wetload check` found.
    pub fn edges(&self, mesh: &Path) -> PathBuf {
        self.dir
            .join(format!("{}.edges.obj", file_part(&stem(mesh))))
    }

    /// `<stem>.history.svg` for a mesh whose file stem is `stem`.
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
}

/// The per-case export files of one mesh.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Exports {
    /// `.vtp`: the pressure field.
    pub field: PathBuf,
    /// `.csv`: the load per facet.
    pub facet_loads: PathBuf,
    /// `.sweep.svg`: loads against level.
    pub sweep_chart: PathBuf,
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
        let layout = Layout::of_mesh(Path::new("/p/gate.stl"));
        assert_eq!(layout.dir(), Path::new("/p/results"));
        assert_eq!(
            layout.result(Path::new("/p/gate.stl")),
            Path::new("/p/results/gate.json")
        );
        let e = layout.exports(Path::new("/p/gate.stl"), Some("flood"));
        assert_eq!(e.field, Path::new("/p/results/gate.flood.vtp"));
        assert_eq!(e.facet_loads, Path::new("/p/results/gate.flood.csv"));
        assert_eq!(e.sweep_chart, Path::new("/p/results/gate.flood.sweep.svg"));
        assert_eq!(
            layout.history_chart("gate"),
            Path::new("/p/results/gate.history.svg")
        );
        assert_eq!(layout.page(), Path::new("/p/results/report.html"));
        assert_eq!(layout.change_log(), Path::new("/p/results/changes.jsonl"));
        assert_eq!(layout.lock(), Path::new("/p/results/.wetload.lock"));
        assert_eq!(dir_of(Path::new("gate.stl")), Path::new("results"));
    }
}
