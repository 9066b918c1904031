//! Pictures and exports beside the result document: per mesh the pressure field (`.vtp`),
//! the facet loads (`.csv`) and the sweep charts (`.sweep.svg`); per folder the page
//! `report.html` and each mesh's load history (`.history.svg`).
//!
//! Owns the file names and which writer runs for which file; the writers themselves live
//! in [`crate::report`] and render bytes, and every file is written through
//! [`pipeline::write_atomic`]. It computes nothing of its own beyond asking
//! [`Model::field`] for the pressure field.
//!
//! # File names (all under `results/` beside the mesh)
//!
//! | file | what |
//! |---|---|
//! | `<stem>.vtp` | pressure field, VTK XML PolyData ([`crate::report::vtk`]) |
//! | `<stem>.csv` | load per facet ([`crate::report::csv`]) |
//! | `<stem>.sweep.svg` | loads against level, when the sidecar has a `sweep` ([`crate::report::svg`]) |
//! | `<stem>.history.svg` | headline loads at every computation in the change log |
//! | `report.html` | the folder's page ([`crate::report::html`]) |
//!
//! The `.vtp` and `.csv` are written for meshes of at most
//! [`crate::sidecar::AUTO_FIELD_EXPORT_FACETS`] facets unless the sidecar's
//! `field_exports` says `always` or `never`; when they are not written, those of an earlier
//! iteration are removed so that no export disagrees with the result beside it.
//!
//! When the sidecar has several cases, the per-case files carry the case name before the
//! extension: `radial_gate.flood.vtp`, `radial_gate.flood.sweep.svg`. Names from files and
//! sidecars pass through [`file_part`] before they become part of a path, so no name can
//! leave `results/` or make a hidden file.

use std::fs;
use std::path::{Path, PathBuf};

use serde_json::Value;

use crate::compute::{self, MeshResult, Model};
use crate::pipeline::{self, RunError};
use crate::report::{csv, html, svg, vtk};
use crate::sidecar::Sidecar;
use crate::watch::changelog::LOG_NAME;

/// File name of the folder's page inside `results/`.
pub const PAGE_NAME: &str = "report.html";

/// The longest a sanitised name may be in a file name, bytes (file systems allow 255 for
/// the whole name, which also holds the mesh's stem and the extension).
pub const MAX_FILE_PART_BYTES: usize = 100;

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

/// The name part of each case in file names: `None` for a sidecar with one case, else the
/// sanitised case names, made unique with `-2`, `-3` … should two sanitise alike.
fn case_parts(result: &MeshResult) -> Vec<Option<String>> {
    if result.cases.len() <= 1 {
        return vec![None; result.cases.len()];
    }
    let mut seen: Vec<String> = Vec::new();
    result
        .cases
        .iter()
        .map(|c| {
            let base = file_part(&c.name);
            let mut name = base.clone();
            let mut n = 1;
            while seen.contains(&name) {
                n += 1;
                name = format!("{base}-{n}");
            }
            seen.push(name.clone());
            Some(name)
        })
        .collect()
}

/// Writes the pressure field, the facet loads and the sweep charts of every case of a
/// computed mesh under `results/` beside it; returns the paths written.
///
/// `model` and `sidecar` must be the ones `result` was computed from.
pub fn write_outputs(
    mesh_path: &Path,
    model: &Model,
    sidecar: &Sidecar,
    result: &MeshResult,
) -> Result<Vec<PathBuf>, RunError> {
    let dir = pipeline::results_dir(mesh_path);
    let stem = file_part(&pipeline::stem(mesh_path));
    let mut written = Vec::new();
    for (i, (case, part)) in result.cases.iter().zip(case_parts(result)).enumerate() {
        let base = match &part {
            Some(p) => format!("{stem}.{p}"),
            None => stem.clone(),
        };
        let vtp = dir.join(format!("{base}.vtp"));
        let csv_path = dir.join(format!("{base}.csv"));
        if sidecar.field_exports.writes(model.facets()) {
            let field = model
                .field(sidecar, i)
                .map_err(|source| RunError::Compute {
                    mesh: mesh_path.to_owned(),
                    sidecar: pipeline::sidecar_path(mesh_path),
                    source: Box::new(source),
                })?;
            pipeline::write_atomic(&vtp, &vtk::render(&field, &result.mesh, &case.name))?;
            written.push(vtp);
            pipeline::write_atomic(&csv_path, &csv::render(&field))?;
            written.push(csv_path);
        } else {
            // Exports of an earlier iteration would no longer match the result: remove them.
            for stale in [vtp, csv_path] {
                match fs::remove_file(&stale) {
                    Ok(()) => {}
                    Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
                    Err(source) => {
                        return Err(RunError::Write {
                            path: stale,
                            source,
                        });
                    }
                }
            }
        }
        if let Some(steps) = &case.sweep {
            let points: Vec<svg::SweepPoint> =
                steps.iter().map(svg::SweepPoint::from_step).collect();
            let swept = sidecar
                .sweep
                .as_ref()
                .and_then(|s| sidecar.liquids.get(s.liquid))
                .map(|l| l.name.as_str());
            let chart = svg::sweep_chart(&result.mesh, &case.name, swept, &points);
            let path = dir.join(format!("{base}.sweep.svg"));
            pipeline::write_atomic(&path, &svg::render(&chart))?;
            written.push(path);
        }
    }
    Ok(written)
}

/// Writes `report.html` and every mesh's `<stem>.history.svg` in `results_dir`, from the
/// result documents there and the change log; returns the paths written.
///
/// `live`: the page is being kept up to date by a running watcher and reloads itself.
/// Result files that cannot be read or are not result documents are left out; lines of
/// the change log that are not JSON are skipped.
pub fn write_folder_page(results_dir: &Path, live: bool) -> Result<Vec<PathBuf>, RunError> {
    let log = read_log(results_dir);
    let mut meshes = read_results(results_dir);
    // Meshes that never computed but are in the log (their last event failed).
    let mut only_logged: Vec<&str> = Vec::new();
    for line in &log {
        let Some(name) = line["mesh"].as_str() else {
            continue;
        };
        if !meshes.iter().any(|m| m.mesh == name) && !only_logged.contains(&name) {
            only_logged.push(name);
        }
    }
    for name in only_logged {
        let last = log.iter().rev().find(|l| l["mesh"] == name);
        if last.is_some_and(|l| l["event"] == "failed") {
            meshes.push(html::MeshEntry {
                stem: pipeline::stem(Path::new(name)),
                mesh: name.to_owned(),
                result: None,
            });
        }
    }
    meshes.sort_by(|a, b| a.mesh.cmp(&b.mesh));

    let mut written = Vec::new();
    for m in &meshes {
        if let Some(chart) = svg::history_chart(&m.mesh, &log) {
            let path = results_dir.join(format!("{}.history.svg", file_part(&m.stem)));
            pipeline::write_atomic(&path, &svg::render(&chart))?;
            written.push(path);
        }
    }
    let folder = results_dir
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let folder = fs::canonicalize(folder).unwrap_or_else(|_| folder.to_owned());
    let generated = jiff::Zoned::now()
        .strftime("%Y-%m-%d %H:%M:%S %:z")
        .to_string();
    let page = html::FolderPage {
        folder: &folder.display().to_string(),
        generated: &generated,
        live,
        meshes: &meshes,
        log: &log,
        caution: compute::CAUTION,
    };
    let path = results_dir.join(PAGE_NAME);
    pipeline::write_atomic(&path, &html::render(&page))?;
    written.push(path);
    Ok(written)
}

/// The result documents in `dir`: `*.json` files with `schema`, `mesh` and `cases`.
fn read_results(dir: &Path) -> Vec<html::MeshEntry> {
    let Ok(entries) = fs::read_dir(dir) else {
        return Vec::new();
    };
    entries
        .filter_map(Result::ok)
        .map(|e| e.path())
        .filter(|p| {
            p.extension().is_some_and(|e| e == "json")
                && !p
                    .file_name()
                    .is_some_and(|n| n.to_string_lossy().starts_with('.'))
        })
        .filter_map(|p| {
            let doc: Value = serde_json::from_slice(&fs::read(&p).ok()?).ok()?;
            let mesh = doc.get("mesh")?.as_str()?.to_owned();
            (doc.get("schema").is_some() && doc["cases"].is_array()).then(|| html::MeshEntry {
                stem: pipeline::stem(&p),
                mesh,
                result: Some(doc),
            })
        })
        .collect()
}

/// The complete, parseable lines of the change log (none when there is no log).
fn read_log(dir: &Path) -> Vec<Value> {
    let Ok(bytes) = fs::read(dir.join(LOG_NAME)) else {
        return Vec::new();
    };
    bytes
        .split(|&b| b == b'\n')
        .filter_map(|line| serde_json::from_slice(line).ok())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use shapes::encode;

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

    fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
        let p = dir.join(name);
        fs::write(&p, bytes).expect("write");
        p
    }

    #[test]
    fn calc_writes_every_output_with_case_names_in_file_names() {
        let tmp = tempfile::tempdir().expect("temp dir");
        let plate = shapes::rectangle([0.0, 0.0, -3.0], [2.0, 0.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
        let mesh = write(
            tmp.path(),
            "wall.stl",
            encode::stl_ascii(&[("wall", &plate)]).as_bytes(),
        );
        write(
            tmp.path(),
            "wall.json",
            br#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
                "cases": [{"name": "normal", "level": -1.0}, {"name": "..:flood", "level": 0.0}],
                "sweep": {"liquid": "liquid", "from": -3.0, "to": 0.0, "step": 1.0}}"#,
        );
        pipeline::calc_file(&mesh).expect("computes");
        let results = tmp.path().join("results");
        let mut names: Vec<String> = fs::read_dir(&results)
            .expect("results")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        assert_eq!(
            names,
            [
                "report.html",
                "wall._._flood.csv",
                "wall._._flood.sweep.svg",
                "wall._._flood.vtp",
                "wall.json",
                "wall.normal.csv",
                "wall.normal.sweep.svg",
                "wall.normal.vtp",
            ]
        );
        let page = fs::read_to_string(results.join(PAGE_NAME)).expect("page");
        assert!(page.contains("wall.stl") && page.contains("Case ..:flood"));
        assert!(!page.contains("http-equiv=\"refresh\""));
        let sweep = fs::read_to_string(results.join("wall.normal.sweep.svg")).expect("svg");
        assert!(sweep.contains("level of liquid (m)"));
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
        write(&results, LOG_NAME, log.as_bytes());
        write(
            &results,
            "a.json",
            br#"{"schema": 1, "mesh": "a.stl", "cases": []}"#,
        );
        write(&results, "notes.json", br#"{"something": "else"}"#);
        let written = write_folder_page(&results, true).expect("writes");
        let names: Vec<String> = written
            .iter()
            .map(|p| p.file_name().expect("name").to_string_lossy().into_owned())
            .collect();
        assert_eq!(names, ["a.history.svg", "report.html"]);
        let page = fs::read_to_string(results.join(PAGE_NAME)).expect("page");
        assert!(page.contains("http-equiv=\"refresh\""));
        assert!(page.contains("b.obj: no facets"));
        let svg = fs::read_to_string(results.join("a.history.svg")).expect("svg");
        assert!(svg.contains("a.stl · load history"));
    }
}
