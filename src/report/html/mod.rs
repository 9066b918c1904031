//! The folder's page `results/report.html`: one self-contained HTML document with every
//! mesh's latest results, read back from the result files and the change log.
//!
//! Owns the rendering of a [`FolderPage`] into bytes. It reads no file (the caller hands
//! it the result documents, each case's 3D view file and the log's lines as JSON values)
//! and fetches nothing: no external scripts, web fonts, style sheets or images (a
//! Content-Security-Policy forbids them); the style is inline, the charts are inline SVG
//! from [`crate::report::svg`], and the one inline script draws the 3D views
//! (`view3d.rs`). The views' data reach the page through `results/<name>[.<case>].view.json`
//! ([`crate::report::view`]), written with the other exports at compute time and read by
//! the pipeline with the result documents, so the watcher's kept sections hold them too.
//!
//! # What the page holds
//!
//! A heading with the folder and the time the page was written, the caution, an overview
//! table (one row per mesh and case), then a section per mesh: its state (iteration, last
//! event, a stale mark with its reason when the last good result is being kept), the
//! inputs echoed (format, units, up axis, g, wet side, liquids per case with their levels
//! and densities, parts and how each was treated), the mesh-health warnings, per case the
//! loads of the whole mesh and of every part, the line of action, centres, axis moments and
//! the flotation check, the change since the previous save and since the baseline (from
//! the change log), and the charts (load history; loads against level when there is a
//! sweep, with a table of the governing value of each quantity and its level). A mesh
//! that only ever failed appears with its last error.
//!
//! Forces are shown with a prefix chosen per table (N, kN, MN, GN; moments N·m …), lengths
//! in m, areas in m², volumes in m³, pressures in kPa; the files stay SI. A page written by
//! the watcher reloads itself every 2 seconds (`<meta http-equiv="refresh">`); a page
//! written by `calc` does not. `@media print` drops the reloading note and backgrounds,
//! and keeps tables and charts whole on a page.
//!
//! # Where each part is written
//!
//! - this file: the page's frame (head, heading, caution, footer) and the overview table;
//! - `mesh.rs`: one mesh's section: its state, warnings, charts and the sweep's governing
//!   values, calling the files below for the rest;
//! - `inputs.rs`: the inputs echoed (mesh, units, liquids per case, parts);
//! - `case.rs`: one case's loads, line of action, centres, axis moments and flotation;
//! - `changes.rs`: the change since the previous save and since the baseline;
//! - `view3d.rs`: a case's 3D view (canvas, embedded data, legend) and the page's script;
//! - `format.rs`: escaping, anchors, and numbers with a prefix chosen per table;
//! - `style.rs`: the inline style sheet.

mod case;
mod changes;
mod diagram;
mod format;
mod inputs;
mod mesh;
mod style;
mod view3d;

use std::fmt::Write;

use serde_json::Value;

use format::{Scale, anchor, esc, f, v3};
use mesh::mesh_section;
use style::STYLE;

use crate::report::units::Units;
use crate::sidecar::Project;

/// One mesh known to the folder: a result file, or only lines in the change log.
#[derive(Clone, Debug, PartialEq)]
pub struct MeshEntry {
    /// Stem of `results/<stem>.json`.
    pub stem: String,
    /// The mesh's file name (as in the result document and the change log).
    pub mesh: String,
    /// The result document as read back, with its `stale` mark if any; `None` when the
    /// mesh never computed.
    pub result: Option<Value>,
    /// The 3D view file of each case (`crate::report::view`), in the order of the
    /// result's cases; `None` where it could not be read.
    pub views: Vec<Option<Value>>,
    /// The pressure diagram of each case (`crate::report::svg::section_svg`), in the order
    /// of the result's cases: its file name and its text, `None` where there is no file.
    pub diagrams: Vec<(String, Option<String>)>,
}

/// Everything the page shows.
#[derive(Clone, Debug)]
pub struct FolderPage<'a> {
    /// The watched folder, as shown in the heading.
    pub folder: &'a str,
    /// When the page was written (RFC 3339 or any text for people).
    pub generated: &'a str,
    /// Written by the watcher: the page reloads itself every 2 s.
    pub live: bool,
    pub meshes: &'a [MeshEntry],
    /// Every line of `results/changes.jsonl`, in order.
    pub log: &'a [Value],
    /// The caution printed with every result.
    pub caution: &'a str,
    /// The units every quantity is shown in (the result files stay SI).
    pub units: Units,
    /// The calculation sheet's header (project, job number, names, revision), if the
    /// folder has one.
    pub project: Option<&'a Project>,
}

/// The last component of the folder's path: the page's title.
fn folder_name(folder: &str) -> &str {
    folder
        .trim_end_matches(['/', '\\'])
        .rsplit(['/', '\\'])
        .next()
        .filter(|n| !n.is_empty())
        .unwrap_or(folder)
}

/// Renders the page as UTF-8 bytes.
pub fn render(page: &FolderPage) -> Vec<u8> {
    let sections: Vec<String> = page
        .meshes
        .iter()
        .map(|m| section(m, page.log, &page.units))
        .collect();
    render_with_sections(page, &sections)
}

/// The section of one mesh, as [`render`] places it; `log` needs to hold only the lines
/// about this mesh (the others are passed over). A caller that keeps the sections of the
/// meshes that did not change renders only the one that did, and assembles the page with
/// [`render_with_sections`].
pub fn section(m: &MeshEntry, log: &[Value], units: &Units) -> String {
    let mut s = String::new();
    mesh_section(&mut s, m, log, units);
    s
}

/// Renders the page with the meshes' sections already rendered by [`section`], one per
/// entry of `page.meshes` and in its order (`page.log` is not read).
pub fn render_with_sections(page: &FolderPage, sections: &[String]) -> Vec<u8> {
    let mut s = String::with_capacity(64 * 1024);
    s.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    s.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    // Nothing is fetched: the page's own inline script and style only.
    s.push_str("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'\">\n");
    if page.live {
        s.push_str("<meta http-equiv=\"refresh\" content=\"2\">\n");
    }
    let title = page
        .project
        .and_then(|p| p.project.as_deref())
        .unwrap_or_else(|| folder_name(page.folder));
    let _ = writeln!(
        s,
        "<title>{} · hydrostatic loads</title>\n<style>\n{STYLE}</style>\n</head>\n<body>",
        esc(folder_name(page.folder))
    );

    s.push_str("<header class=\"head\">\n");
    let _ = writeln!(
        s,
        "<div class=\"kicker\">wetload · hydrostatic load calculation</div>\n<h1>{}</h1>",
        esc(title)
    );
    if let Some(p) = page.project {
        s.push_str("<table class=\"sheet\">");
        for (label, value) in p.entries() {
            let _ = write!(s, "<tr><th>{label}</th><td>{}</td></tr>", esc(value));
        }
        s.push_str("</table>\n");
    }
    let _ = writeln!(s, "<p class=\"meta\">Folder {}</p>", esc(page.folder));
    let computed = page.meshes.iter().filter(|m| m.result.is_some()).count();
    let _ = writeln!(
        s,
        "<p class=\"meta\">Page written {} · {} mesh{} with results{}</p>",
        esc(page.generated),
        computed,
        if computed == 1 { "" } else { "es" },
        if page.live {
            " · <span class=\"live\">updated while <code>wetload watch</code> runs (reloads every 2 s)</span>"
        } else {
            ""
        }
    );
    s.push_str("</header>\n<main>\n");
    let _ = writeln!(
        s,
        "<aside class=\"caution\"><strong>Caution.</strong> {}</aside>",
        esc(page.caution)
    );

    overview(&mut s, page);
    for section in sections {
        s.push_str(section);
    }
    s.push_str(
        "<footer>Sign conventions: forces are the force of the liquid on the surface, in the mesh's \
own axes; moments follow the right-hand rule about the stated point or axis; vertical is \
positive up; pressures are gauge. Values in the result files are SI (N, N·m, m, m², m³, Pa); \
this page shows every quantity in the one unit named in its table heading.</footer>\n",
    );
    s.push_str("</main>\n");
    if sections.iter().any(|x| x.contains("<canvas class=\"v3d\"")) {
        s.push_str(&view3d::script());
    }
    s.push_str("</body>\n</html>\n");
    s.into_bytes()
}

fn overview(s: &mut String, page: &FolderPage) {
    s.push_str("<section class=\"overview\">\n<h2>Overview</h2>\n");
    if page.meshes.is_empty() {
        s.push_str("<p class=\"muted\">No results yet: put a mesh (<code>.stl</code> or <code>.obj</code>) and its sidecar <code>.json</code> in the folder.</p>\n</section>\n");
        return;
    }
    // One unit for the whole table, as for every table of the page.
    let fu = page.units.force.name;
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>mesh</th><th class=\"text\">case</th><th>|F| <span class=\"unit\">{fu}</span></th><th>horizontal <span class=\"unit\">{fu}</span></th><th>vertical, + up <span class=\"unit\">{fu}</span></th><th>uplift <span class=\"unit\">{fu}</span></th><th class=\"text\">state</th></tr>"
    );
    for m in page.meshes {
        let link = format!("<a href=\"#{}\">{}</a>", anchor(&m.stem), esc(&m.mesh));
        let Some(r) = &m.result else {
            let _ = writeln!(
                s,
                "<tr><td>{link}</td><td class=\"text\">—</td><td>—</td><td>—</td><td>—</td><td>—</td><td class=\"text\"><span class=\"tag fail\">no result</span></td></tr>"
            );
            continue;
        };
        let state = if r.get("stale").is_some_and(|x| !x.is_null()) {
            "<span class=\"tag stale\">stale</span>"
        } else {
            "<span class=\"tag\">current</span>"
        };
        let cases = r["cases"].as_array().map_or(&[][..], Vec::as_slice);
        let norm =
            |c: &Value| v3(&c["force"]).map(|x| (x[0] * x[0] + x[1] * x[1] + x[2] * x[2]).sqrt());
        let sc = Scale::of(
            page.units.force,
            cases
                .iter()
                .flat_map(|c| [norm(c), f(&c["uplift"])])
                .flatten(),
        );
        let show = |x: Option<f64>| x.map_or_else(|| "—".to_owned(), |x| sc.show(x));
        for c in cases {
            let _ = writeln!(
                s,
                "<tr data-mesh=\"{}\" data-case=\"{}\"><td>{link}</td><td class=\"text\">{}</td><td data-force=\"{fu}\">{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"text\">{state}</td></tr>",
                esc(&m.mesh),
                esc(c["name"].as_str().unwrap_or("?")),
                esc(c["name"].as_str().unwrap_or("?")),
                show(norm(c)),
                show(f(&c["horizontal_force"])),
                show(f(&c["vertical_force"])),
                show(f(&c["uplift"])),
            );
        }
    }
    s.push_str("</table></div>\n</section>\n");
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn result(stale: bool) -> Value {
        let mut r = json!({
            "schema": 1, "mesh": "gate.stl",
            "inputs": {"format": "stl-binary", "units": "mm", "up": "+z", "gravity": 9.80665,
                       "wet_side": "front", "closed": false, "facets": 64, "shells": 1,
                       "parts": [{"name": "skin", "facets": 60, "liquid": "liquid", "wet_side": "front", "closed": false},
                                 {"name": "<b>rib</b>", "facets": 4, "liquid": null, "wet_side": "front", "closed": false}],
                       "bounding_box": [[0.0, 0.0, 0.0], [2.0, 4.0, 6.0]]},
            "cases": [{
                "name": "normal",
                "liquids": [{"name": "liquid", "level": 5.0, "surface_pressure": 0.0, "layers": [[1000.0, null]]}],
                "force": [490332.5, 0.0, 288100.0], "moment": [0.0, 690.0, 0.0],
                "moment_about": [0.0, 0.0, 4.5], "wetted_area": 20.0, "uplift": 288100.0,
                "downthrust": 0.0, "submerged_volume": null, "centre_of_buoyancy": null,
                "line_of_action": {"point": [0.1, 2.0, 4.4], "direction": [0.86, 0.0, 0.5], "couple": 0.0},
                "centre_of_pressure": null, "horizontal_force": 490332.5, "vertical_force": 288100.0,
                "max_pressure": 49033.25,
                "axis_moments": {"trunnion": {"moment": 690.0, "miss_distance": 0.0012}},
                "parts": [],
                "sweep": [
                    {"level": 1.0, "force": [19613.3, 0.0, 0.0], "moment": [0.0, 1.0, 0.0], "uplift": 0.0,
                     "downthrust": 0.0, "wetted_area": 4.0, "submerged_volume": null, "axis_moments": {"trunnion": {"moment": 1.0, "miss_distance": null}}},
                    {"level": 2.0, "force": [78453.2, 0.0, 0.0], "moment": [0.0, 2.0, 0.0], "uplift": 0.0,
                     "downthrust": 0.0, "wetted_area": 8.0, "submerged_volume": null, "axis_moments": {"trunnion": {"moment": 2.0, "miss_distance": null}}}
                ],
                "sweep_governing": {
                    "liquid": "liquid",
                    "force_x": {"value": 78453.2, "level": 2.0}, "force_y": {"value": 0.0, "level": 1.0},
                    "force_z": {"value": 0.0, "level": 1.0}, "force_magnitude": {"value": 78453.2, "level": 2.0},
                    "uplift": {"value": 0.0, "level": 1.0}, "downthrust": {"value": 0.0, "level": 1.0},
                    "axis_moments": {"trunnion": {"value": 2.0, "level": 2.0}},
                    "flotation_factor": {"value": 1.4567, "level": 2.0}
                }
            }],
            "warnings": ["open surface: the liquid is taken on the \"front\" side"],
            "caution": "c"
        });
        if stale {
            r["stale"] =
                json!({"since": "2026-01-02T10:00:00Z", "reason": "gate.json line 3: <bad>"});
        }
        r
    }

    fn log() -> Vec<Value> {
        let case = |fx: f64, change: Value| {
            json!([{"name": "normal", "force": [fx, 0.0, 288100.0], "moment": [0.0, 690.0, 0.0],
                    "vertical_force": 288100.0, "uplift": 288100.0, "downthrust": 0.0,
                    "wetted_area": 20.0, "submerged_volume": null,
                    "axis_moments": {"trunnion": 690.0}, "flotation_factor": null,
                    "change": change.clone(), "since_baseline": change}])
        };
        vec![
            json!({"time": "2026-01-01T09:00:00Z", "mesh": "gate.stl", "event": "computed", "iteration": 1,
                   "cases": case(480000.0, Value::Null)}),
            json!({"time": "2026-01-01T09:05:00Z", "mesh": "gate.stl", "event": "computed", "iteration": 2,
                   "cases": case(490332.5, json!({"force": [10332.5, 1e-10, 0.0], "uplift": 0.0}))}),
            json!({"time": "2026-01-01T09:06:00Z", "mesh": "broken.obj", "event": "failed",
                   "error": "broken.obj line 7: face index 9 out of range"}),
        ]
    }

    fn page(live: bool, stale: bool) -> String {
        let meshes = vec![
            MeshEntry {
                stem: "gate".into(),
                mesh: "gate.stl".into(),
                result: Some(result(stale)),
                views: Vec::new(),
                diagrams: Vec::new(),
            },
            MeshEntry {
                stem: "broken".into(),
                mesh: "broken.obj".into(),
                result: None,
                views: Vec::new(),
                diagrams: Vec::new(),
            },
        ];
        let log = log();
        let p = FolderPage {
            folder: "/work/<site>",
            generated: "2026-01-01T09:06:01Z",
            live,
            meshes: &meshes,
            log: &log,
            caution: "Hydrostatic loads only.",
            units: Units::of(crate::report::units::UnitSystem::Si),
            project: None,
        };
        String::from_utf8(render(&p)).expect("utf-8")
    }

    #[test]
    fn the_page_is_self_contained_and_escapes_user_text() {
        let html = page(false, false);
        assert!(html.starts_with("<!DOCTYPE html>"));
        assert!(html.trim_end().ends_with("</html>"));
        for external in [
            "http://", "https://", "<script", "<link", "@import", "url(", "src=",
        ] {
            // The SVG namespace is an identifier, not a fetch.
            let hits = html.matches(external).count();
            let ns = html.matches("xmlns=\"http://www.w3.org/2000/svg\"").count();
            let allowed = if external == "http://" { ns } else { 0 };
            assert_eq!(hits, allowed, "{external}");
        }
        assert!(!html.contains("<site>") && html.contains("/work/&lt;site&gt;"));
        assert!(!html.contains("<b>rib</b>") && html.contains("&lt;b&gt;rib&lt;/b&gt;"));
        assert!(!html.contains("http-equiv=\"refresh\""));
        assert!(html.contains("@media print"));
        assert!(html.contains("Hydrostatic loads only."));
    }

    #[test]
    fn the_page_shows_results_changes_charts_and_marks() {
        let html = page(true, true);
        assert!(html.contains("<meta http-equiv=\"refresh\" content=\"2\">"));
        // Stale mark with its (escaped) reason.
        assert!(html.contains("tag stale"));
        assert!(html.contains("gate.json line 3: &lt;bad&gt;"));
        // Inputs echoed.
        for text in [
            "<dd>mm (coordinates scaled to m)</dd>",
            "<dd>+z</dd>",
            "9.807 m/s²",
            "<td>5.000</td>",
            "1000",
        ] {
            assert!(html.contains(text), "{text}");
        }
        // Forces in kN with two decimals on every table: 490332.5 N → 490.33 kN.
        assert!(html.contains("<td>490.33</td>"));
        // Change since the previous save: +10.33 kN, a growth of 2.2 % on 480 kN; the
        // uplift did not change, and Fy changed by round-off only.
        assert!(html.contains("+10.33 (grows 2.2%)"), "change row");
        assert!(html.contains("<tr><td>uplift</td><td>288.10</td><td>0.00</td>"));
        assert!(html.contains("<tr><td>Fy</td><td>0.00</td><td>0.00</td>"));
        // Two charts inline (history with two computations, one sweep).
        assert_eq!(html.matches("<svg").count(), 2);
        assert!(html.contains("Loads against level · case normal"));
        // The governing values under the sweep chart, each with its level.
        assert!(html.contains("<th>governing over the sweep</th>"));
        assert!(html.contains("<tr><td>Fx</td><td>78.45 kN</td><td>2.000</td></tr>"));
        // One unit for moments everywhere: 2 N·m is 0.00 kN·m.
        assert!(
            html.contains(
                "<tr><td>moment about trunnion</td><td>0.00 kN·m</td><td>2.000</td></tr>"
            )
        );
        assert!(
            html.contains(
                "<tr><td>flotation factor (lowest)</td><td>1.457</td><td>2.000</td></tr>"
            )
        );
        // The mesh that only failed shows its error.
        assert!(html.contains("face index 9 out of range"));
        assert!(html.contains("open surface: the liquid is taken on the &quot;front&quot; side"));
        assert!(html.contains("trunnion"));
        // The page is titled by the folder's name.
        assert!(html.contains("<title>&lt;site&gt; · hydrostatic loads</title>"));
        // No prefix chosen per table: no MN or N·m columns next to kN ones.
        assert!(!html.contains(">MN<") && !html.contains("\"unit\">N·m<"));
    }

    #[test]
    fn the_page_in_us_units_with_a_project_header() {
        let meshes = [MeshEntry {
            stem: "gate".into(),
            mesh: "gate.stl".into(),
            result: Some(result(false)),
            views: Vec::new(),
            diagrams: Vec::new(),
        }];
        let project = Project {
            project: Some("North weir <refit>".into()),
            job_number: Some("J-118".into()),
            checked_by: Some("R. K.".into()),
            revision: Some("C".into()),
            ..Project::default()
        };
        let log = log();
        let p = FolderPage {
            folder: "/work/weir",
            generated: "2026-01-01T09:06:01Z",
            live: false,
            meshes: &meshes,
            log: &log,
            caution: "Hydrostatic loads only.",
            units: Units::of(crate::report::units::UnitSystem::Us),
            project: Some(&project),
        };
        let html = String::from_utf8(render(&p)).expect("utf-8");
        // 490 332.5 N = 110.23 kip (1 kip = 4448.2216152605 N); g = 32.174 ft/s².
        assert!(html.contains("<td>110.23</td>"), "kip");
        assert!(html.contains("32.174 ft/s²"));
        assert!(html.contains("\"unit\">kip</span>") && !html.contains("\"unit\">kN</span>"));
        assert!(html.contains("<h1>North weir &lt;refit&gt;</h1>"));
        for row in [
            "<tr><th>job number</th><td>J-118</td></tr>",
            "<tr><th>checked by</th><td>R. K.</td></tr>",
            "<tr><th>revision</th><td>C</td></tr>",
        ] {
            assert!(html.contains(row), "{row}");
        }
    }
}
