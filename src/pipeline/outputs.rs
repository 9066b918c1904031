//! Pictures and exports beside the result document: per mesh the pressure field (`.vtp`),
//! the facet loads (`.csv`), the pressure diagrams (`.section.svg`) and the sweep charts
//! (`.sweep.svg`); per folder the page
//! `report.html` and each mesh's load history (`.history.svg`).
//!
//! Owns which writer runs for which file, and when an export is written or removed. The
//! names and places of the files are [`crate::results`]'s (its module doc draws the tree),
//! and so is writing them (a result and its exports together through [`results::Batch`],
//! the page and charts through [`results::write_atomic_unsynced`]); the writers themselves live in
//! [`crate::report`] and render bytes. It computes nothing of its own beyond asking
//! [`Model::field`] for the pressure field.
//!
//! The `.vtp` and `.csv` are written for meshes of at most
//! [`crate::sidecar::AUTO_FIELD_EXPORT_FACETS`] facets unless the sidecar's
//! `field_exports` says `always` or `never`; when they are not written, those of an earlier
//! iteration are removed so that no export disagrees with the result beside it.

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::{Path, PathBuf};

use serde_json::Value;

use super::{RunError, sidecar_path};
use crate::compute::{self, CaseResult, MeshResult, Model, SweepStep};
use crate::report::units::{UnitSystem, Units};
use crate::report::{csv, html, nodal, svg, view, vtk};
use crate::results::{self, Batch, Layout, changelog};
use crate::sidecar::Sidecar;

/// The export files a result of `mesh` computed with `sidecar` may have, for a mesh of
/// `facets` facets: the `.vtp` and `.csv` of every case when field exports are written,
/// and with a sweep the `.sweep.svg` of every case and the one drawn for all cases when
/// their sweeps are the same. The list a change of names removes by.
pub fn export_files(
    layout: &Layout,
    mesh_path: &Path,
    sidecar: &Sidecar,
    facets: usize,
) -> Vec<PathBuf> {
    let (fields, sweeps) = exports_by_kind(layout, mesh_path, sidecar, facets);
    let mut files = fields;
    if let Some((cases, whole)) = sweeps {
        files.extend(cases);
        files.extend(whole);
    }
    files
}

/// Per-case sweep charts, and the one for every case when there are several cases.
type SweepCharts = (Vec<PathBuf>, Option<PathBuf>);

/// The field exports, and with a sweep its charts as the alternatives they are.
fn exports_by_kind(
    layout: &Layout,
    mesh_path: &Path,
    sidecar: &Sidecar,
    facets: usize,
) -> (Vec<PathBuf>, Option<SweepCharts>) {
    let parts = results::case_parts(sidecar.cases.iter().map(|c| c.name.as_str()));
    let mut fields = Vec::new();
    let mut cases = Vec::new();
    for part in &parts {
        let e = layout.exports(mesh_path, part.as_deref());
        if sidecar.field_exports.writes(facets) {
            fields.push(e.field);
            fields.push(e.facet_loads);
            fields.push(e.nodal_loads);
            fields.push(e.view);
            fields.push(e.section);
        }
        cases.push(e.sweep_chart);
    }
    let whole = (parts.len() > 1).then(|| layout.exports(mesh_path, None).sweep_chart);
    (fields, sidecar.sweep.is_some().then_some((cases, whole)))
}

/// The files of a computed mesh (its result and exports) that are not on disk. Sweep
/// charts count as present when either the per-case charts or the one for every case are.
pub fn missing_files(
    layout: &Layout,
    mesh_path: &Path,
    sidecar: &Sidecar,
    facets: usize,
) -> Vec<PathBuf> {
    let (fields, sweeps) = exports_by_kind(layout, mesh_path, sidecar, facets);
    let mut missing: Vec<PathBuf> = std::iter::once(layout.result(mesh_path))
        .chain(fields)
        .filter(|p| !p.is_file())
        .collect();
    if let Some((cases, whole)) = sweeps {
        let cases_there = cases.iter().all(|p| p.is_file());
        let whole_there = whole.as_ref().is_some_and(|p| p.is_file());
        if !cases_there && !whole_there {
            missing.extend(cases.into_iter().filter(|p| !p.is_file()));
        }
    }
    missing
}

/// Stages the pressure field, the facet loads and the sweep charts of every case of a
/// computed mesh into `batch` (see [`results::Batch`]), and the removal of field exports
/// an earlier result had when this one has none.
///
/// `model` and `sidecar` must be the ones `result` was computed from; the pressure
/// diagrams show their values in `units` (the other exports are SI whatever it is).
pub fn stage_outputs(
    batch: &mut Batch,
    layout: &Layout,
    mesh_path: &Path,
    model: &Model,
    sidecar: &Sidecar,
    result: &MeshResult,
    units: UnitSystem,
) -> Result<(), RunError> {
    let parts = results::case_parts(result.cases.iter().map(|c| c.name.as_str()));
    let shared = crate::report::summary::shared_sweep(result);
    // One mesh's views share the budget, so the page grows with meshes, not cases.
    let view_budget = view::VIEW_MAX_TRIANGLES / result.cases.len().max(1);
    let diagram_units = Units::of(units).with_datum(datum_origin(result));
    for (i, (case, part)) in result.cases.iter().zip(parts).enumerate() {
        let files = layout.exports(mesh_path, part.as_deref());
        // The field, its exports and the page's 3D view go together: for meshes of at most
        // AUTO_FIELD_EXPORT_FACETS facets, or when the sidecar asks for them. Building the
        // view costs about as much as the exports, which would otherwise multiply the time
        // of a large mesh's every recomputation.
        if sidecar.field_exports.writes(model.facets()) {
            let field = model
                .field(sidecar, i)
                .map_err(|source| RunError::Compute {
                    mesh: mesh_path.to_owned(),
                    sidecar: sidecar_path(mesh_path),
                    source: Box::new(source),
                })?;
            // Every case, decimated for display within its share of the budget.
            let marks = view::CaseMarks::of(case);
            batch.put(
                &files.view,
                &view::render(&field, sidecar.up, &marks, view_budget),
            )?;
            batch.put(&files.field, &vtk::render(&field, &result.mesh, &case.name))?;
            batch.put(&files.facet_loads, &csv::render(&field))?;
            batch.put(&files.nodal_loads, &nodal::render(&field))?;
            let sections = compute::sections(&field, &result.inputs, case, &sidecar.sections);
            let title = format!("{} · case {} · pressure diagram", result.mesh, case.name);
            batch.put(
                &files.section,
                &svg::section_svg(&title, &sections, &diagram_units),
            )?;
        } else {
            // Exports of an earlier iteration would no longer match the result: remove them.
            batch.remove(files.view);
            batch.remove(files.field);
            batch.remove(files.facet_loads);
            batch.remove(files.nodal_loads);
            batch.remove(files.section);
        }
        // A sweep the same in every case is drawn once, as `<name>.sweep.svg`.
        match case.sweep.as_ref().filter(|_| shared.is_none()) {
            Some(steps) => {
                let chart = sweep_chart(result, sidecar, case, &case.name, steps);
                batch.put(&files.sweep_chart, &svg::render(&chart))?;
            }
            None => batch.remove(files.sweep_chart),
        }
    }
    if result.cases.len() > 1 {
        let whole = layout.exports(mesh_path, None).sweep_chart;
        match shared.and_then(|case| case.sweep.as_ref().map(|steps| (case, steps))) {
            Some((case, steps)) => {
                let chart = sweep_chart(result, sidecar, case, "every case", steps);
                batch.put(&whole, &svg::render(&chart))?;
            }
            None => batch.remove(whole),
        }
    }
    // Exports of cases the previous result had and this one has not (a case renamed or
    // removed, one default case become several): they would describe loads no longer
    // computed. The previous result document says which cases those were.
    let mut current: Vec<PathBuf> =
        results::case_parts(result.cases.iter().map(|c| c.name.as_str()))
            .iter()
            .flat_map(|part| layout.exports(mesh_path, part.as_deref()).all())
            .collect();
    current.push(layout.exports(mesh_path, None).sweep_chart);
    for stale in previous_exports(layout, mesh_path) {
        if !current.contains(&stale) {
            batch.remove(stale);
        }
    }
    Ok(())
}

/// Every export file the result now on disk for `mesh_path` could have had: the field
/// exports and sweep chart of each of its cases, and the chart for every case. Empty when
/// there is no readable previous result.
fn previous_exports(layout: &Layout, mesh_path: &Path) -> Vec<PathBuf> {
    let Ok(bytes) = fs::read(layout.result(mesh_path)) else {
        return Vec::new();
    };
    let Ok(doc) = serde_json::from_slice::<Value>(&bytes) else {
        return Vec::new();
    };
    let names: Vec<&str> = doc["cases"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|c| c["name"].as_str())
        .collect();
    let mut files: Vec<PathBuf> = results::case_parts(names.into_iter())
        .iter()
        .flat_map(|part| layout.exports(mesh_path, part.as_deref()).all())
        .collect();
    files.push(layout.exports(mesh_path, None).sweep_chart);
    files
}

/// The chart of a case's sweep (SI units; levels in the sidecar's datum), the case's own
/// level of the swept liquid marked.
fn sweep_chart(
    result: &MeshResult,
    sidecar: &Sidecar,
    case: &CaseResult,
    title: &str,
    steps: &[SweepStep],
) -> svg::Chart {
    let points: Vec<svg::SweepPoint> = steps.iter().map(svg::SweepPoint::from_step).collect();
    let swept = sidecar
        .sweep
        .as_ref()
        .and_then(|s| sidecar.liquids.get(s.liquid))
        .map(|l| l.name.as_str());
    let marks = svg::SweepMarks {
        case_level: swept
            .and_then(|name| case.liquids.iter().find(|l| l.name == name))
            .map(|l| l.level),
        required_factor: case.flotation.as_ref().map(|f| f.required_factor),
        limit_level: case
            .sweep_governing
            .as_ref()
            .and_then(|g| g.flotation_limit.flatten())
            .map(|l| l.level),
    };
    let units = Units::of(UnitSystem::Si).with_datum(datum_origin(result));
    svg::sweep_chart(&result.mesh, title, swept, &points, &marks, &units)
}

/// The project elevation of the mesh's origin, m (0 without a datum).
fn datum_origin(result: &MeshResult) -> f64 {
    result
        .inputs
        .datum
        .as_ref()
        .map_or(0.0, |d| d.mesh_origin_elevation)
}

/// Writes `report.html` and every mesh's `<stem>.history.svg` in `results_dir`, from the
/// result documents there and the change log; returns the paths written.
///
/// `live`: the page is being kept up to date by a running watcher and reloads itself.
/// Result files that cannot be read or are not result documents are left out; lines of
/// the change log that are not JSON are skipped.
pub fn write_folder_page(
    results_dir: &Path,
    live: bool,
    units: UnitSystem,
) -> Result<Vec<PathBuf>, RunError> {
    let mut page = Page::load(
        Layout::new(results_dir.to_owned()),
        changelog::read_lines(results_dir),
        units,
    );
    page.write(true, live)
}

/// The folder's page as a watcher keeps it: the change log read once and kept, each
/// mesh's lines apart (as their JSON text, parsed only when that mesh's section or chart is
/// drawn again), the result documents, and every mesh's rendered section. A save costs the
/// drawing of its own mesh's section and history chart and the assembling of the page;
/// the other meshes' sections are reused, and nothing is read again from disk but the one
/// result document written.
pub struct Page {
    layout: Layout,
    units: UnitSystem,
    /// Each mesh's change-log lines, by mesh file name.
    history: BTreeMap<String, Vec<Box<str>>>,
    /// Whether each mesh's last line is a failure.
    last_failed: BTreeMap<String, bool>,
    /// By mesh file name.
    meshes: BTreeMap<String, html::MeshEntry>,
    /// Each mesh's section as last drawn.
    sections: BTreeMap<String, String>,
    /// Meshes whose section (and history chart) is to be drawn again.
    dirty: BTreeSet<String>,
}

impl Page {
    /// Reads the result documents in the layout's folder; `log` is the change log's lines;
    /// the page shows its numbers in `units`.
    pub fn load(layout: Layout, log: Vec<Value>, units: UnitSystem) -> Page {
        let meshes = read_results(layout.dir())
            .into_iter()
            .map(|m| (m.mesh.clone(), m))
            .collect();
        let mut page = Page {
            layout,
            units,
            history: BTreeMap::new(),
            last_failed: BTreeMap::new(),
            meshes,
            sections: BTreeMap::new(),
            dirty: BTreeSet::new(),
        };
        for line in log {
            page.record(line);
        }
        page
    }

    /// The layout the page writes into.
    pub fn layout(&self) -> &Layout {
        &self.layout
    }

    /// The layout, to keep it current (the watcher tells it the folder's meshes).
    pub fn layout_mut(&mut self) -> &mut Layout {
        &mut self.layout
    }

    /// A line appended to the change log.
    pub fn record(&mut self, line: Value) {
        let Some(name) = line["mesh"].as_str().map(str::to_owned) else {
            return;
        };
        self.last_failed
            .insert(name.clone(), line["event"] == "failed");
        self.history
            .entry(name.clone())
            .or_default()
            .push(line.to_string().into_boxed_str());
        self.dirty.insert(name);
    }

    /// Reads the result document of `mesh` again (after it was written or marked).
    pub fn reload(&mut self, mesh_path: &Path) {
        let name = file_name(mesh_path);
        let doc = fs::read(self.layout.result(mesh_path))
            .ok()
            .and_then(|b| serde_json::from_slice::<Value>(&b).ok());
        match doc {
            Some(doc) => {
                self.meshes.insert(
                    name.clone(),
                    html::MeshEntry {
                        stem: self.layout.name(mesh_path),
                        mesh: name.clone(),
                        views: read_views(&self.layout, &self.layout.name(mesh_path), &doc),
                        diagrams: read_diagrams(&self.layout, &self.layout.name(mesh_path), &doc),
                        result: Some(doc),
                    },
                );
            }
            None => {
                self.meshes.remove(&name);
            }
        }
        self.dirty.insert(name);
    }

    /// The change-log lines of one mesh, parsed.
    fn lines_of(&self, mesh: &str) -> Vec<Value> {
        self.history
            .get(mesh)
            .into_iter()
            .flatten()
            .filter_map(|l| serde_json::from_str(l).ok())
            .collect()
    }

    /// Writes the page, and the history charts of the meshes that changed since the last
    /// write or have none on disk (`all`: of every mesh); returns the paths written. Both
    /// are derived files, written atomically but not flushed to disk.
    pub fn write(&mut self, all: bool, live: bool) -> Result<Vec<PathBuf>, RunError> {
        let mut meshes: Vec<html::MeshEntry> = self.meshes.values().cloned().collect();
        // Meshes that never computed but are in the log (their last event failed).
        for (name, failed) in &self.last_failed {
            if *failed && !self.meshes.contains_key(name) {
                meshes.push(html::MeshEntry {
                    stem: results::stem(Path::new(name)),
                    mesh: name.clone(),
                    result: None,
                    views: Vec::new(),
                    diagrams: Vec::new(),
                });
            }
        }
        meshes.sort_by(|a, b| a.mesh.cmp(&b.mesh));

        let units = Units::of(self.units);
        let mut written = Vec::new();
        let dirty = std::mem::take(&mut self.dirty);
        for m in &meshes {
            let again = all || dirty.contains(&m.mesh) || !self.sections.contains_key(&m.mesh);
            if !again {
                continue;
            }
            let lines = self.lines_of(&m.mesh);
            let up = m.result.as_ref().and_then(|r| r["inputs"]["up"].as_str());
            let path = self.layout.history_chart(&m.stem);
            if (all || dirty.contains(&m.mesh) || !path.is_file())
                && let Some(chart) = svg::history_chart(&m.mesh, &lines, up, &units)
            {
                results::write_atomic_unsynced(&path, &svg::render(&chart))?;
                written.push(path);
            }
            self.sections
                .insert(m.mesh.clone(), html::section(m, &lines, &units));
        }
        self.sections
            .retain(|name, _| meshes.iter().any(|m| &m.mesh == name));
        let sections: Vec<String> = meshes
            .iter()
            .map(|m| self.sections.get(&m.mesh).cloned().unwrap_or_default())
            .collect();

        let results_dir = self.layout.dir();
        let folder = results_dir
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let folder = fs::canonicalize(folder).unwrap_or_else(|_| folder.to_owned());
        let generated = jiff::Zoned::now()
            .strftime("%Y-%m-%d %H:%M:%S %:z")
            .to_string();
        // A header that cannot be read is reported by every computation; the page goes
        // without it rather than not at all.
        // (`read_project` looks beside the path it is given: the folder that holds results/.)
        let project = super::read_project(results_dir).ok().flatten();
        let page = html::FolderPage {
            units,
            project: project.as_ref(),
            folder: &folder.display().to_string(),
            generated: &generated,
            live,
            meshes: &meshes,
            log: &[],
            caution: compute::CAUTION,
        };
        let path = self.layout.page();
        results::write_atomic_unsynced(&path, &html::render_with_sections(&page, &sections))?;
        written.push(path);
        Ok(written)
    }
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// The file-name part of every case of the result document `doc`, in its cases' order
/// ([`results::case_parts`]).
fn case_parts_of(doc: &Value) -> Vec<Option<String>> {
    let names: Vec<&str> = doc["cases"]
        .as_array()
        .into_iter()
        .flatten()
        .map(|c| c["name"].as_str().unwrap_or(""))
        .collect();
    results::case_parts(names.into_iter())
}

/// The 3D view file of every case of the result document `doc` named `<name>.json`, in
/// its cases' order; `None` for a file that is missing or not JSON (the page says so).
fn read_views(layout: &Layout, name: &str, doc: &Value) -> Vec<Option<Value>> {
    case_parts_of(doc)
        .iter()
        .map(|part| {
            let bytes = fs::read(layout.view_of(name, part.as_deref())).ok()?;
            serde_json::from_slice(&bytes).ok()
        })
        .collect()
}

/// The pressure diagram of every case of the result document `doc` named `<name>.json`,
/// in its cases' order: the file's name and its text (`None` when there is no such file or
/// it is not UTF-8).
fn read_diagrams(layout: &Layout, name: &str, doc: &Value) -> Vec<(String, Option<String>)> {
    case_parts_of(doc)
        .iter()
        .map(|part| {
            let path = layout.section_of(name, part.as_deref());
            (file_name(&path), fs::read_to_string(&path).ok())
        })
        .collect()
}

/// The result documents in `dir`: `*.json` files with `schema`, `mesh` and `cases`.
fn read_results(dir: &Path) -> Vec<html::MeshEntry> {
    let layout = Layout::new(dir.to_owned());
    let Ok(entries) = fs::read_dir(dir) else {
        return Vec::new();
    };
    entries
        .filter_map(Result::ok)
        .map(|e| e.path())
        .filter(|p| {
            p.extension().is_some_and(|e| e == "json")
                && !p.file_name().is_some_and(|n| {
                    let n = n.to_string_lossy();
                    n.starts_with('.') || n.ends_with(".view.json")
                })
        })
        .filter_map(|p| {
            let doc: Value = serde_json::from_slice(&fs::read(&p).ok()?).ok()?;
            let mesh = doc.get("mesh")?.as_str()?.to_owned();
            (doc.get("schema").is_some() && doc["cases"].is_array()).then(|| {
                let stem = results::stem(&p);
                html::MeshEntry {
                    views: read_views(&layout, &stem, &doc),
                    diagrams: read_diagrams(&layout, &stem, &doc),
                    stem,
                    mesh,
                    result: Some(doc),
                }
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use shapes::encode;

    fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
        let p = dir.join(name);
        fs::write(&p, bytes).expect("write");
        p
    }

    /// A 2 × 3 m wall (`wall.stl`, facing +y) with `sidecar`, computed by `calc`: its
    /// folder and the names in its `results/`, sorted.
    fn calc_wall(sidecar: &[u8]) -> (tempfile::TempDir, Vec<String>) {
        let tmp = tempfile::tempdir().expect("temp dir");
        let plate = shapes::rectangle([0.0, 0.0, -3.0], [2.0, 0.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
        let mesh = write(
            tmp.path(),
            "wall.stl",
            encode::stl_ascii(&[("wall", &plate)]).as_bytes(),
        );
        write(tmp.path(), "wall.json", sidecar);
        super::super::calc_file(&mesh).expect("computes");
        let mut names: Vec<String> = fs::read_dir(tmp.path().join("results"))
            .expect("results")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        (tmp, names)
    }

    #[test]
    fn calc_writes_every_output_with_case_names_in_file_names() {
        let (tmp, names) = calc_wall(
            br#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
                "cases": [{"name": "normal", "level": -1.0},
                          {"name": "..:flood", "level": 0.0, "density": 1025}],
                "sweep": {"liquid": "liquid", "from": -3.0, "to": 0.0, "step": 1.0}}"#,
        );
        let results = tmp.path().join("results");
        assert_eq!(
            names,
            [
                // calc logs its computation, keeps its inputs, and the page charts the log.
                ".snapshots",
                "changes.jsonl",
                "report.html",
                "wall._._flood.csv",
                "wall._._flood.nodal.csv",
                "wall._._flood.section.svg",
                "wall._._flood.sweep.svg",
                "wall._._flood.view.json",
                "wall._._flood.vtp",
                "wall.history.svg",
                "wall.json",
                "wall.normal.csv",
                "wall.normal.nodal.csv",
                "wall.normal.section.svg",
                "wall.normal.sweep.svg",
                "wall.normal.view.json",
                "wall.normal.vtp",
            ]
        );
        let page = fs::read_to_string(results.join(results::PAGE_NAME)).expect("page");
        assert!(page.contains("wall.stl") && page.contains("Case ..:flood"));
        // Each case's view is on the page, read back from its view file; one script.
        assert_eq!(page.matches("<canvas class=\"v3d\"").count(), 2);
        assert_eq!(page.matches("<script>").count(), 1);
        assert!(!page.contains("no view file"));
        // And each case's pressure diagram, inline.
        assert_eq!(page.matches("<figure class=\"diagram\"><svg ").count(), 2);
        assert!(!page.contains("http-equiv=\"refresh\""));
        let sweep = fs::read_to_string(results.join("wall.normal.sweep.svg")).expect("svg");
        assert!(sweep.contains("level of liquid (m)"));
        assert!(sweep.contains("case level"));
    }

    #[test]
    fn a_sweep_the_same_in_every_case_is_one_chart() {
        let (tmp, names) = calc_wall(
            br#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
                "cases": [{"name": "normal", "level": -1.0}, {"name": "flood", "level": 0.0}],
                "sweep": {"liquid": "liquid", "from": -3.0, "to": 0.0, "step": 1.0}}"#,
        );
        let results = tmp.path().join("results");
        let charts: Vec<&String> = names.iter().filter(|n| n.ends_with(".sweep.svg")).collect();
        assert_eq!(charts, ["wall.sweep.svg"]);
        let svg = fs::read_to_string(results.join("wall.sweep.svg")).expect("svg");
        assert!(svg.contains("every case"));
    }

    #[test]
    fn the_page_lists_meshes_that_only_failed_and_draws_the_history() {
        let tmp = tempfile::tempdir().expect("temp dir");
        let results = tmp.path().join("results");
        fs::create_dir_all(&results).expect("mkdir");
        let line = |i: u64, fx: f64| {
            format!(
                "{{\"time\":\"t{i}\",\"mesh\":\"a.stl\",\"event\":\"computed\",\"iteration\":{i},\"cases\":[{{\"name\":\"default\",\"force\":[{fx},0.0,0.0],\"moment\":[0.0,0.0,0.0],\"vertical_force\":0.0,\"uplift\":0.0,\"downthrust\":0.0,\"axis_moments\":{{}}}}]}}\n"
            )
        };
        let log = format!(
            "{}{}{{\"time\":\"t\",\"mesh\":\"b.obj\",\"event\":\"failed\",\"error\":\"b.obj: no facets\"}}\nnot json\n{{\"event\":\"comp",
            line(1, 1000.0),
            line(2, 1200.0)
        );
        write(&results, changelog::LOG_NAME, log.as_bytes());
        write(
            &results,
            "a.json",
            br#"{"schema": 1, "mesh": "a.stl", "cases": []}"#,
        );
        write(&results, "notes.json", br#"{"something": "else"}"#);
        let written = write_folder_page(&results, true, UnitSystem::Si).expect("writes");
        let names: Vec<String> = written
            .iter()
            .map(|p| p.file_name().expect("name").to_string_lossy().into_owned())
            .collect();
        assert_eq!(names, ["a.history.svg", "report.html"]);
        let page = fs::read_to_string(results.join(results::PAGE_NAME)).expect("page");
        assert!(page.contains("http-equiv=\"refresh\""));
        assert!(page.contains("b.obj: no facets"));
        let svg = fs::read_to_string(results.join("a.history.svg")).expect("svg");
        assert!(svg.contains("a.stl · load history"));
    }
}
