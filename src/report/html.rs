//! The folder's page `results/report.html`: one self-contained HTML document with every
//! mesh's latest results, read back from the result files and the change log.
//!
//! Owns the rendering of a [`FolderPage`] into bytes. It reads no file (the caller hands
//! it the result documents and the log's lines as JSON values) and fetches nothing: no
//! scripts, no web fonts, no external style sheets or images; the style is inline and the
//! charts are inline SVG from [`crate::report::svg`].
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

use std::fmt::Write;

use serde_json::Value;

use crate::report::svg::{self, SweepPoint};

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
}

/// Renders the page as UTF-8 bytes.
pub fn render(page: &FolderPage) -> Vec<u8> {
    let mut s = String::with_capacity(64 * 1024);
    s.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    s.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    if page.live {
        s.push_str("<meta http-equiv=\"refresh\" content=\"2\">\n");
    }
    let _ = writeln!(
        s,
        "<title>Hydrostatic loads · {}</title>\n<style>\n{STYLE}</style>\n</head>\n<body>",
        esc(page.folder)
    );

    s.push_str("<header class=\"head\">\n");
    let _ = writeln!(
        s,
        "<div class=\"kicker\">wetload · hydrostatic load calculation</div>\n<h1>{}</h1>",
        esc(page.folder)
    );
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
    for m in page.meshes {
        mesh_section(&mut s, m, page.log);
    }
    s.push_str(
        "<footer>Sign conventions: forces are the force of the liquid on the surface, in the mesh's \
own axes; moments follow the right-hand rule about the stated point or axis; vertical is \
positive up; pressures are gauge. Values in the result files are SI (N, N·m, m, m², m³, Pa); \
this page shows them with the prefix named in each table heading.</footer>\n",
    );
    s.push_str("</main>\n</body>\n</html>\n");
    s.into_bytes()
}

const STYLE: &str = r#"
:root { --ink: #1f2933; --muted: #5f6b76; --rule: #cfd6dd; --band: #f3f5f7; --accent: #1d4e89;
        --warn-bg: #fff6e0; --warn: #8a5a00; --bad-bg: #fdecec; --bad: #9b1c1c; --ok: #24613a; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
.head { padding: 22px 32px 16px; border-bottom: 3px solid var(--accent); background: var(--band); }
.kicker { text-transform: uppercase; letter-spacing: .08em; font-size: 12px; color: var(--muted); }
h1 { margin: 4px 0 6px; font-size: 24px; font-weight: 650; word-break: break-all; }
h2 { font-size: 20px; margin: 0 0 10px; }
h3 { font-size: 16px; margin: 22px 0 8px; padding-bottom: 3px; border-bottom: 1px solid var(--rule); }
h4 { font-size: 14px; margin: 14px 0 6px; color: var(--muted); font-weight: 600; }
.meta { margin: 0; color: var(--muted); font-size: 13px; }
.live { color: var(--accent); }
main { padding: 18px 32px 40px; max-width: 1180px; }
.caution { border: 1px solid var(--rule); border-left: 4px solid var(--warn); background: var(--warn-bg);
           padding: 10px 14px; font-size: 13px; margin: 0 0 22px; }
section.mesh { border-top: 2px solid var(--ink); margin-top: 30px; padding-top: 12px; }
.mesh-head { display: flex; flex-wrap: wrap; align-items: baseline; gap: 6px 14px; }
.mesh-head h2 { margin: 0; word-break: break-all; }
.tag { display: inline-block; font-size: 12px; padding: 1px 8px; border-radius: 3px;
       border: 1px solid var(--rule); color: var(--muted); }
.tag.stale, .tag.fail { border-color: var(--bad); color: var(--bad); font-weight: 700; }
.tag.pass { border-color: var(--ok); color: var(--ok); font-weight: 700; }
.notice { padding: 8px 12px; margin: 10px 0; font-size: 14px; }
.notice.stale, .notice.fail { background: var(--bad-bg); border-left: 4px solid var(--bad); }
.notice.warn { background: var(--warn-bg); border-left: 4px solid var(--warn); }
.notice ul { margin: 4px 0 0; padding-left: 20px; }
table { border-collapse: collapse; margin: 6px 0 10px; font-size: 13.5px; }
th, td { padding: 4px 10px; border-bottom: 1px solid var(--rule); text-align: right; vertical-align: top; }
th { font-weight: 600; background: var(--band); border-bottom: 1px solid var(--muted); }
th:first-child, td:first-child { text-align: left; }
td { font-variant-numeric: tabular-nums; }
td.text, th.text { text-align: left; }
tr.total td { font-weight: 650; }
.unit { font-weight: 400; color: var(--muted); }
.wide { overflow-x: auto; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 16px; margin: 6px 0 10px; font-size: 14px; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; font-variant-numeric: tabular-nums; }
.up { color: var(--bad); } .down { color: var(--accent); }
figure { margin: 12px 0; }
figure svg { max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { font-size: 13px; color: var(--muted); }
.muted { color: var(--muted); }
footer { margin-top: 36px; padding-top: 10px; border-top: 1px solid var(--rule); font-size: 12.5px; color: var(--muted); }
code { font-size: 92%; }
@media print {
  body { font-size: 11pt; }
  .head { background: none; padding: 0 0 8px; }
  .live { display: none; }
  main { padding: 8px 0; max-width: none; }
  th { background: none; }
  .caution, .notice { background: none; }
  section.mesh { break-before: page; border-top: none; }
  table, figure, dl.facts, .notice { break-inside: avoid; }
  figure svg { border: none; }
  a { color: inherit; text-decoration: none; }
}
"#;

/// HTML text escaping (element content and attribute values).
fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// An anchor id from a stem: only ASCII letters, digits, `-` and `_`.
fn anchor(stem: &str) -> String {
    let mut id = String::from("mesh-");
    for c in stem.chars() {
        id.push(if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
            c
        } else {
            '_'
        });
    }
    id
}

fn f(v: &Value) -> Option<f64> {
    v.as_f64()
}

fn v3(v: &Value) -> Option<[f64; 3]> {
    let a = v.as_array()?;
    (a.len() == 3).then_some(())?;
    Some([a[0].as_f64()?, a[1].as_f64()?, a[2].as_f64()?])
}

/// Display scale for a set of values of one kind: a prefix and decimals that give five
/// significant digits on the largest.
#[derive(Clone, Copy, Debug)]
struct Scale {
    factor: f64,
    prefix: &'static str,
    decimals: usize,
    /// Magnitudes at or below this are round-off, shown as 0.
    noise: f64,
    /// The largest magnitude (SI).
    max: f64,
}

impl Scale {
    fn of(values: impl Iterator<Item = f64>) -> Scale {
        Scale::above(values, 0.0)
    }

    /// The scale of the values above `noise` (moments that are zero up to round-off
    /// would otherwise be shown as 0.0000 with a prefix chosen from the noise).
    fn above(values: impl Iterator<Item = f64>, noise: f64) -> Scale {
        let max = values
            .filter(|x| x.is_finite() && x.abs() > noise)
            .map(f64::abs)
            .fold(0.0, f64::max);
        let (factor, prefix) = svg::prefix(max);
        Scale {
            factor,
            prefix,
            decimals: decimals_for(max / factor),
            noise,
            max,
        }
    }

    fn show(&self, x: f64) -> String {
        let x = if x.abs() <= self.noise { 0.0 } else { x };
        num(x / self.factor, self.decimals)
    }

    /// The round-off level of moments next to these forces: 1e-9 × the largest × 1 m.
    fn moment_noise(&self) -> f64 {
        1e-9 * self.max
    }
}

/// Decimals for five significant digits on `max` (0 to 4).
fn decimals_for(max: f64) -> usize {
    if !(max.is_finite() && max > 0.0) {
        return 2;
    }
    let digits = max.log10().floor() as i64 + 1;
    (5 - digits).clamp(0, 4) as usize
}

/// `x` with `d` decimals, a real minus sign, and no sign on a value that rounds to zero.
fn num(x: f64, d: usize) -> String {
    if !x.is_finite() {
        return "—".to_owned();
    }
    let s = format!("{x:.d$}");
    match s.strip_prefix('-') {
        Some(r) if r.chars().all(|c| c == '0' || c == '.') => r.to_owned(),
        Some(r) => format!("−{r}"),
        None => s,
    }
}

fn point(p: [f64; 3]) -> String {
    format!("({}, {}, {})", num(p[0], 3), num(p[1], 3), num(p[2], 3))
}

/// The `computed` lines of one mesh, in order.
fn computed_lines<'a>(log: &'a [Value], mesh: &str) -> Vec<&'a Value> {
    log.iter()
        .filter(|l| l["mesh"] == mesh && l["event"] == "computed")
        .collect()
}

fn last_event<'a>(log: &'a [Value], mesh: &str) -> Option<&'a Value> {
    log.iter().rev().find(|l| l["mesh"] == mesh)
}

fn overview(s: &mut String, page: &FolderPage) {
    s.push_str("<section class=\"overview\">\n<h2>Overview</h2>\n");
    if page.meshes.is_empty() {
        s.push_str("<p class=\"muted\">No results yet: put a mesh (<code>.stl</code> or <code>.obj</code>) and its sidecar <code>.json</code> in the folder.</p>\n</section>\n");
        return;
    }
    // One prefix per mesh: a folder may hold a lab model next to a dam.
    s.push_str("<div class=\"wide\"><table>\n<tr><th>mesh</th><th class=\"text\">case</th><th>|F|</th><th>horizontal</th><th>vertical, + up</th><th>uplift</th><th class=\"text\">unit</th><th class=\"text\">state</th></tr>\n");
    for m in page.meshes {
        let link = format!("<a href=\"#{}\">{}</a>", anchor(&m.stem), esc(&m.mesh));
        let Some(r) = &m.result else {
            let _ = writeln!(
                s,
                "<tr><td>{link}</td><td class=\"text\">—</td><td>—</td><td>—</td><td>—</td><td>—</td><td></td><td class=\"text\"><span class=\"tag fail\">no result</span></td></tr>"
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
            cases
                .iter()
                .flat_map(|c| [norm(c), f(&c["uplift"])])
                .flatten(),
        );
        let show = |x: Option<f64>| x.map_or_else(|| "—".to_owned(), |x| sc.show(x));
        for c in cases {
            let _ = writeln!(
                s,
                "<tr><td>{link}</td><td class=\"text\">{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"text\">{}N</td><td class=\"text\">{state}</td></tr>",
                esc(c["name"].as_str().unwrap_or("?")),
                show(norm(c)),
                show(f(&c["horizontal_force"])),
                show(f(&c["vertical_force"])),
                show(f(&c["uplift"])),
                sc.prefix,
            );
        }
    }
    s.push_str("</table></div>\n</section>\n");
}

fn mesh_section(s: &mut String, m: &MeshEntry, log: &[Value]) {
    let lines = computed_lines(log, &m.mesh);
    let last = last_event(log, &m.mesh);
    let _ = writeln!(
        s,
        "<section class=\"mesh\" id=\"{}\">\n<div class=\"mesh-head\"><h2>{}</h2>",
        anchor(&m.stem),
        esc(&m.mesh)
    );
    let stale = m
        .result
        .as_ref()
        .and_then(|r| r.get("stale"))
        .filter(|x| !x.is_null());
    if stale.is_some() {
        s.push_str("<span class=\"tag stale\">stale</span>");
    }
    if let Some(l) = lines.last() {
        let _ = write!(
            s,
            "<span class=\"muted\">iteration {} · computed {}</span>",
            l["iteration"].as_u64().unwrap_or(lines.len() as u64),
            esc(l["time"].as_str().unwrap_or("?"))
        );
    }
    if let Some(l) = last
        && l["event"] == "unchanged"
    {
        let _ = write!(
            s,
            "<span class=\"muted\">· last save unchanged ({})</span>",
            esc(l["time"].as_str().unwrap_or("?"))
        );
    }
    s.push_str("</div>\n");

    if let Some(st) = stale {
        let _ = writeln!(
            s,
            "<div class=\"notice stale\"><strong>Stale since {}:</strong> {}<br>The results below are the last good ones; they do not describe the files as they are now.</div>",
            esc(st["since"].as_str().unwrap_or("?")),
            esc(st["reason"].as_str().unwrap_or("?"))
        );
    }
    let Some(r) = &m.result else {
        let error = last
            .filter(|l| l["event"] == "failed")
            .and_then(|l| l["error"].as_str())
            .unwrap_or("the mesh has not been computed");
        let _ = writeln!(
            s,
            "<div class=\"notice fail\"><strong>No result.</strong> {}</div>\n</section>",
            esc(error)
        );
        return;
    };

    inputs(s, r);
    let warnings: Vec<&str> = r["warnings"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(Value::as_str)
        .collect();
    if warnings.is_empty() {
        s.push_str("<p class=\"muted\">Mesh health: no warnings.</p>\n");
    } else {
        s.push_str("<div class=\"notice warn\"><strong>Mesh health warnings</strong><ul>");
        for w in warnings {
            let _ = write!(s, "<li>{}</li>", esc(w));
        }
        s.push_str("</ul></div>\n");
    }

    let several_parts = r["inputs"]["parts"].as_array().is_some_and(|p| p.len() > 1);
    for c in r["cases"].as_array().into_iter().flatten() {
        case_block(s, c, several_parts);
    }

    changes(s, &lines);

    let history = svg::history_chart(&m.mesh, log);
    match history {
        Some(chart) if lines.len() >= 2 => {
            s.push_str("<h3>Load history</h3>\n<figure>");
            s.push_str(&String::from_utf8_lossy(&svg::render(&chart)));
            let _ = writeln!(
                s,
                "<figcaption>Headline loads at every computation of {} (also <code>{}.history.svg</code>); the dashed grey line marks the baseline, the first computation in the change log.</figcaption></figure>",
                esc(&m.mesh),
                esc(&m.stem)
            );
        }
        _ => s.push_str(
            "<p class=\"muted\">The load history chart appears once the change log holds two computations of this mesh.</p>\n",
        ),
    }
    for c in r["cases"].as_array().into_iter().flatten() {
        let Some(sweep) = c["sweep"].as_array() else {
            continue;
        };
        let steps: Vec<SweepPoint> = sweep.iter().filter_map(SweepPoint::from_json).collect();
        let name = c["name"].as_str().unwrap_or("?");
        let chart = svg::sweep_chart(&m.mesh, name, None, &steps);
        let _ = write!(
            s,
            "<h3>Loads against level · case {}</h3>\n<figure>",
            esc(name)
        );
        s.push_str(&String::from_utf8_lossy(&svg::render(&chart)));
        let _ = writeln!(
            s,
            "<figcaption>{} levels from {} m to {} m, the other inputs as in case {}.</figcaption></figure>",
            steps.len(),
            steps
                .first()
                .map_or_else(|| "—".to_owned(), |p| num(p.level, 3)),
            steps
                .last()
                .map_or_else(|| "—".to_owned(), |p| num(p.level, 3)),
            esc(name)
        );
        governing_table(s, &c["sweep_governing"]);
    }
    s.push_str("</section>\n");
}

/// The governing values of a sweep (`sweep_governing`), if the result has them.
fn governing_table(s: &mut String, g: &Value) {
    let Some(g) = g.as_object() else {
        return;
    };
    let forces = [
        "force_x",
        "force_y",
        "force_z",
        "force_magnitude",
        "uplift",
        "downthrust",
    ];
    let scale = Scale::of(forces.iter().filter_map(|k| f(&g.get(*k)?["value"])));
    let axes = g.get("axis_moments").and_then(Value::as_object);
    let moments = Scale::above(
        axes.into_iter()
            .flatten()
            .filter_map(|(_, e)| f(&e["value"])),
        scale.moment_noise(),
    );
    s.push_str("<div class=\"wide\"><table>\n<tr><th>governing over the sweep</th><th>largest magnitude</th><th>at level <span class=\"unit\">m</span></th></tr>\n");
    let mut row = |label: &str, e: &Value, value: String| {
        let _ = writeln!(
            s,
            "<tr><td>{}</td><td>{value}</td><td>{}</td></tr>",
            esc(label),
            f(&e["level"]).map_or_else(|| "—".to_owned(), |x| num(x, 3))
        );
    };
    let p = scale.prefix;
    for (key, label) in forces
        .iter()
        .zip(["Fx", "Fy", "Fz", "|F|", "uplift", "downthrust"])
    {
        if let Some(e) = g.get(*key) {
            let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| scale.show(x));
            row(label, e, format!("{v} {p}N"));
        }
    }
    if let Some(e) = g.get("submerged_volume") {
        let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| num(x, 3));
        row("submerged volume", e, format!("{v} m³"));
    }
    for (name, e) in axes.into_iter().flatten() {
        let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| moments.show(x));
        row(
            &format!("moment about {name}"),
            e,
            format!("{v} {}N·m", moments.prefix),
        );
    }
    // The flotation factor governs at its lowest, not its largest.
    if let Some(e) = g.get("flotation_factor").filter(|e| e.is_object()) {
        let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| num(x, 3));
        row("flotation factor (lowest)", e, v);
    }
    s.push_str("</table></div>\n");
}

fn inputs(s: &mut String, r: &Value) {
    let i = &r["inputs"];
    let text = |v: &Value| esc(v.as_str().unwrap_or("—"));
    s.push_str("<h3>Inputs</h3>\n<dl class=\"facts\">");
    let closed = if i["closed"].as_bool() == Some(true) {
        format!(
            "closed, {} shell{}",
            i["shells"].as_u64().unwrap_or(0),
            if i["shells"].as_u64() == Some(1) {
                ""
            } else {
                "s"
            }
        )
    } else {
        "open surface".to_owned()
    };
    let format = match i["format"].as_str() {
        Some("stl-binary") => "binary STL".to_owned(),
        Some("stl-ascii") => "ASCII STL".to_owned(),
        Some("obj") => "OBJ".to_owned(),
        _ => text(&i["format"]),
    };
    let _ = write!(
        s,
        "<dt>mesh</dt><dd>{format} · {} facets · {}</dd>",
        i["facets"].as_u64().unwrap_or(0),
        closed
    );
    let _ = write!(
        s,
        "<dt>units</dt><dd>{} (coordinates scaled to m)</dd><dt>up axis</dt><dd>{}</dd><dt>g</dt><dd>{} m/s²</dd>",
        text(&i["units"]),
        text(&i["up"]),
        f(&i["gravity"]).map_or_else(|| "—".to_owned(), |g| format!("{g}"))
    );
    if let Some(w) = i["wet_side"].as_str() {
        let _ = write!(s, "<dt>wet side</dt><dd>{}</dd>", esc(w));
    }
    if let (Some(lo), Some(hi)) = (v3(&i["bounding_box"][0]), v3(&i["bounding_box"][1])) {
        let _ = write!(
            s,
            "<dt>size</dt><dd>{} × {} × {} m (mesh axes), from {} to {} m</dd>",
            num(hi[0] - lo[0], 3),
            num(hi[1] - lo[1], 3),
            num(hi[2] - lo[2], 3),
            point(lo),
            point(hi)
        );
    }
    if let Some(about) = r["cases"][0].get("moment_about").and_then(v3) {
        let _ = write!(s, "<dt>moments about</dt><dd>{} m</dd>", point(about));
    }
    s.push_str("</dl>\n");

    // Liquids per case: level, densities (top to bottom, with interfaces), gas pressure.
    s.push_str("<div class=\"wide\"><table>\n<tr><th>case</th><th class=\"text\">liquid</th><th>level <span class=\"unit\">m</span></th><th class=\"text\">density <span class=\"unit\">kg/m³</span>, top to bottom</th><th>gas pressure <span class=\"unit\">kPa</span></th></tr>\n");
    for c in r["cases"].as_array().into_iter().flatten() {
        for l in c["liquids"].as_array().into_iter().flatten() {
            let layers: Vec<String> = l["layers"]
                .as_array()
                .into_iter()
                .flatten()
                .map(|y| {
                    let d = f(&y[0]).map_or_else(|| "—".to_owned(), |d| format!("{d}"));
                    match f(&y[1]) {
                        Some(z) => format!("{d} down to {} m", num(z, 3)),
                        None => d,
                    }
                })
                .collect();
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td class=\"text\">{}</td><td>{}</td><td class=\"text\">{}</td><td>{}</td></tr>",
                esc(c["name"].as_str().unwrap_or("?")),
                esc(l["name"].as_str().unwrap_or("?")),
                f(&l["level"]).map_or_else(|| "—".to_owned(), |x| num(x, 3)),
                esc(&layers.join("; ")),
                f(&l["surface_pressure"]).map_or_else(|| "—".to_owned(), |x| num(x / 1e3, 3)),
            );
        }
    }
    s.push_str("</table></div>\n");

    let parts = i["parts"].as_array().map_or(&[][..], Vec::as_slice);
    if parts.len() > 1 {
        s.push_str("<h4>Parts</h4><div class=\"wide\"><table>\n<tr><th>part</th><th>facets</th><th class=\"text\">liquid</th><th class=\"text\">wet side</th><th class=\"text\">closed by itself</th></tr>\n");
        for p in parts {
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td>{}</td><td class=\"text\">{}</td><td class=\"text\">{}</td><td class=\"text\">{}</td></tr>",
                esc(p["name"].as_str().unwrap_or("?")),
                p["facets"].as_u64().unwrap_or(0),
                p["liquid"].as_str().map_or_else(|| "dry".to_owned(), esc),
                esc(p["wet_side"].as_str().unwrap_or("—")),
                if p["closed"].as_bool() == Some(true) {
                    "yes"
                } else {
                    "no"
                }
            );
        }
        s.push_str("</table></div>\n");
    }
}

fn case_block(s: &mut String, c: &Value, several_parts: bool) {
    let name = c["name"].as_str().unwrap_or("?");
    let _ = writeln!(s, "<h3>Case {}</h3>", esc(name));
    let mut rows: Vec<(String, &Value, bool)> = vec![("whole mesh".to_owned(), c, true)];
    if several_parts {
        for p in c["parts"].as_array().into_iter().flatten() {
            rows.push((p["name"].as_str().unwrap_or("?").to_owned(), p, false));
        }
    }
    let forces = Scale::of(rows.iter().flat_map(|(_, l, _)| {
        let mut v: Vec<f64> = v3(&l["force"]).map(Vec::from).unwrap_or_default();
        v.extend([f(&l["uplift"]), f(&l["downthrust"])].into_iter().flatten());
        v
    }));
    let moments = Scale::above(
        rows.iter()
            .flat_map(|(_, l, _)| v3(&l["moment"]).map(Vec::from).unwrap_or_default()),
        forces.moment_noise(),
    );
    let p = forces.prefix;
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>force of the liquid</th><th>Fx <span class=\"unit\">{p}N</span></th><th>Fy <span class=\"unit\">{p}N</span></th><th>Fz <span class=\"unit\">{p}N</span></th><th>|F| <span class=\"unit\">{p}N</span></th><th>horizontal <span class=\"unit\">{p}N</span></th><th>vertical, + up <span class=\"unit\">{p}N</span></th><th>uplift <span class=\"unit\">{p}N</span></th><th>downthrust <span class=\"unit\">{p}N</span></th></tr>"
    );
    for (label, l, total) in &rows {
        let fv = v3(&l["force"]).unwrap_or([f64::NAN; 3]);
        let norm = (fv[0] * fv[0] + fv[1] * fv[1] + fv[2] * fv[2]).sqrt();
        let show = |v: &Value| f(v).map_or_else(|| "—".to_owned(), |x| forces.show(x));
        let _ = writeln!(
            s,
            "<tr{}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            if *total { " class=\"total\"" } else { "" },
            esc(label),
            forces.show(fv[0]),
            forces.show(fv[1]),
            forces.show(fv[2]),
            forces.show(norm),
            show(&l["horizontal_force"]),
            show(&l["vertical_force"]),
            show(&l["uplift"]),
            show(&l["downthrust"]),
        );
    }
    s.push_str("</table></div>\n");
    let m = moments.prefix;
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>moment, area, volume</th><th>Mx <span class=\"unit\">{m}N·m</span></th><th>My <span class=\"unit\">{m}N·m</span></th><th>Mz <span class=\"unit\">{m}N·m</span></th><th>wetted area <span class=\"unit\">m²</span></th><th>submerged volume <span class=\"unit\">m³</span></th><th>max pressure <span class=\"unit\">kPa</span></th></tr>"
    );
    for (label, l, total) in &rows {
        let mv = v3(&l["moment"]).unwrap_or([f64::NAN; 3]);
        let _ = writeln!(
            s,
            "<tr{}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            if *total { " class=\"total\"" } else { "" },
            esc(label),
            moments.show(mv[0]),
            moments.show(mv[1]),
            moments.show(mv[2]),
            f(&l["wetted_area"]).map_or_else(|| "—".to_owned(), |x| num(x, 3)),
            f(&l["submerged_volume"]).map_or_else(|| "—".to_owned(), |x| num(x, 3)),
            f(&l["max_pressure"]).map_or_else(|| "—".to_owned(), |x| num(x / 1e3, 2)),
        );
    }
    s.push_str("</table></div>\n<dl class=\"facts\">");
    match &c["line_of_action"] {
        Value::Object(l) => {
            let couple = l
                .get("couple")
                .and_then(Value::as_f64)
                .filter(|c| c.abs() > moments.noise)
                .unwrap_or(0.0);
            let _ = write!(
                s,
                "<dt>line of action</dt><dd>through {} m along {}{}</dd>",
                v3(&l["point"]).map_or_else(|| "—".to_owned(), point),
                v3(&l["direction"]).map_or_else(
                    || "—".to_owned(),
                    |d| format!("({}, {}, {})", num(d[0], 4), num(d[1], 4), num(d[2], 4))
                ),
                if couple.abs() > 0.0 {
                    format!(
                        ", couple about it {} {}N·m",
                        moments.show(couple),
                        moments.prefix
                    )
                } else {
                    String::new()
                }
            );
        }
        _ => s.push_str("<dt>line of action</dt><dd>none: the net force is zero</dd>"),
    }
    if let Some(cp) = v3(&c["centre_of_pressure"]) {
        let _ = write!(s, "<dt>centre of pressure</dt><dd>{} m</dd>", point(cp));
    }
    if let Some(cb) = v3(&c["centre_of_buoyancy"]) {
        let _ = write!(s, "<dt>centre of buoyancy</dt><dd>{} m</dd>", point(cb));
    }
    if let Some(axes) = c["axis_moments"].as_object() {
        for (axis, a) in axes {
            let miss = f(&a["miss_distance"])
                .map_or_else(|| "—".to_owned(), |d| format!("{} mm", num(d * 1e3, 1)));
            let _ = write!(
                s,
                "<dt>about axis {}</dt><dd>{} {}N·m; the line of action misses the axis by {miss}</dd>",
                esc(axis),
                moments.show(f(&a["moment"]).unwrap_or(f64::NAN)),
                moments.prefix
            );
        }
    }
    if let Some(fl) = c["flotation"].as_object() {
        let pass = fl.get("pass").and_then(Value::as_bool) == Some(true);
        let _ = write!(
            s,
            "<dt>flotation</dt><dd><span class=\"tag {}\">{}</span> {}</dd>",
            if pass { "pass" } else { "fail" },
            if pass { "PASS" } else { "FAIL" },
            esc(fl.get("formula").and_then(Value::as_str).unwrap_or(""))
        );
    }
    s.push_str("</dl>\n");
}

/// What a row of the change table measures, for its scale and unit.
#[derive(Clone, Copy, PartialEq)]
enum Kind {
    Force,
    Moment,
    /// Shown with three decimals in the given unit.
    Other(&'static str),
}

/// One row of the change table (SI values).
struct ChangeRow {
    label: String,
    kind: Kind,
    value: f64,
    change: Option<f64>,
    since: Option<f64>,
}

fn row(
    label: String,
    kind: Kind,
    value: f64,
    change: Option<f64>,
    since: Option<f64>,
) -> ChangeRow {
    ChangeRow {
        label,
        kind,
        value,
        change,
        since,
    }
}

/// The change since the previous computation and since the baseline, per case, from the
/// last `computed` line of the mesh.
fn changes(s: &mut String, lines: &[&Value]) {
    s.push_str("<h3>Change since the previous save</h3>\n");
    let Some(last) = lines.last() else {
        s.push_str("<p class=\"muted\">The change log has no computation of this mesh yet (the watcher writes it; <code>calc</code> does not).</p>\n");
        return;
    };
    if lines.len() < 2 {
        s.push_str("<p class=\"muted\">First computation in the change log: it is the baseline, and there is no earlier save to compare with.</p>\n");
        return;
    }
    for c in last["cases"].as_array().into_iter().flatten() {
        let name = c["name"].as_str().unwrap_or("?");
        let mut rows: Vec<ChangeRow> = Vec::new();
        let ch = &c["change"];
        let bl = &c["since_baseline"];
        for (k, axis) in ["x", "y", "z"].iter().enumerate() {
            if let Some(v) = f(&c["force"][k]) {
                rows.push(row(
                    format!("F{axis}"),
                    Kind::Force,
                    v,
                    f(&ch["force"][k]),
                    f(&bl["force"][k]),
                ));
            }
        }
        for (key, label) in [
            ("vertical_force", "vertical, + up"),
            ("uplift", "uplift"),
            ("downthrust", "downthrust"),
        ] {
            if let Some(v) = f(&c[key]) {
                rows.push(row(
                    label.to_owned(),
                    Kind::Force,
                    v,
                    f(&ch[key]),
                    f(&bl[key]),
                ));
            }
        }
        for (k, axis) in ["x", "y", "z"].iter().enumerate() {
            if let Some(v) = f(&c["moment"][k]) {
                rows.push(row(
                    format!("M{axis}"),
                    Kind::Moment,
                    v,
                    f(&ch["moment"][k]),
                    f(&bl["moment"][k]),
                ));
            }
        }
        if let Some(axes) = c["axis_moments"].as_object() {
            for (a, v) in axes {
                if let Some(v) = f(v) {
                    rows.push(row(
                        format!("about axis {a}"),
                        Kind::Moment,
                        v,
                        f(&ch["axis_moments"][a]),
                        f(&bl["axis_moments"][a]),
                    ));
                }
            }
        }
        for (key, label, unit) in [
            ("wetted_area", "wetted area", "m²"),
            ("submerged_volume", "submerged volume", "m³"),
            ("flotation_factor", "flotation factor", ""),
        ] {
            if let Some(v) = f(&c[key]) {
                rows.push(row(
                    label.to_owned(),
                    Kind::Other(unit),
                    v,
                    f(&ch[key]),
                    f(&bl[key]),
                ));
            }
        }
        let fs = Scale::of(
            rows.iter()
                .filter(|r| r.kind == Kind::Force)
                .map(|r| r.value),
        );
        let ms = Scale::above(
            rows.iter()
                .filter(|r| r.kind == Kind::Moment)
                .map(|r| r.value),
            fs.moment_noise(),
        );
        let _ = writeln!(
            s,
            "<h4>Case {}</h4><div class=\"wide\"><table>\n<tr><th>quantity</th><th>now</th><th>change since the previous save</th><th>since the baseline</th><th class=\"text\">unit</th></tr>",
            esc(name)
        );
        for ChangeRow {
            label,
            kind,
            value: v,
            change: d,
            since: b,
        } in rows
        {
            // Changes at round-off level are no change (no sign, no percentage).
            let (show, unit, noise): (Box<dyn Fn(f64) -> String>, String, f64) = match kind {
                Kind::Force => (
                    Box::new(move |x| fs.show(x)),
                    format!("{}N", fs.prefix),
                    fs.moment_noise(),
                ),
                Kind::Moment => (
                    Box::new(move |x| ms.show(x)),
                    format!("{}N·m", ms.prefix),
                    ms.noise,
                ),
                Kind::Other(unit) => (Box::new(|x| num(x, 3)), unit.to_owned(), 1e-9 * v.abs()),
            };
            let delta = |d: Option<f64>| match d {
                None => "—".to_owned(),
                Some(d) if d.abs() <= noise => show(0.0),
                Some(d) => {
                    let old = v - d;
                    let pct = if old.abs() > noise {
                        let sign = if d > 0.0 { "+" } else { "" };
                        format!(" ({sign}{}%)", num(100.0 * d / old.abs(), 1))
                    } else {
                        " (new)".to_owned()
                    };
                    let (class, sign) = if d > 0.0 { ("up", "+") } else { ("down", "") };
                    format!("<span class=\"{class}\">{sign}{}{pct}</span>", show(d))
                }
            };
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"text\">{}</td></tr>",
                esc(&label),
                show(v),
                delta(d),
                delta(b),
                esc(&unit)
            );
        }
        s.push_str("</table></div>\n");
    }
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
            },
            MeshEntry {
                stem: "broken".into(),
                mesh: "broken.obj".into(),
                result: None,
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
            "9.80665 m/s²",
            "<td>5.000</td>",
            "1000",
        ] {
            assert!(html.contains(text), "{text}");
        }
        // Forces in kN with five significant digits: 490332.5 N → 490.33 kN.
        assert!(html.contains("<td>490.33</td>"));
        // Change since the previous save: +10.33 kN, +2.2 % of 480 kN; the uplift did not
        // change, and Fy changed by round-off only.
        assert!(html.contains("+10.33 (+2.2%)"), "change row");
        assert!(html.contains("<tr><td>uplift</td><td>288.10</td><td>0.00</td>"));
        assert!(html.contains("<tr><td>Fy</td><td>0.00</td><td>0.00</td>"));
        // Two charts inline (history with two computations, one sweep).
        assert_eq!(html.matches("<svg").count(), 2);
        assert!(html.contains("Loads against level · case normal"));
        // The governing values under the sweep chart, each with its level.
        assert!(html.contains("<th>governing over the sweep</th>"));
        assert!(html.contains("<tr><td>Fx</td><td>78.453 kN</td><td>2.000</td></tr>"));
        assert!(
            html.contains(
                "<tr><td>moment about trunnion</td><td>2.0000 N·m</td><td>2.000</td></tr>"
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
    }

    #[test]
    fn numbers_keep_five_significant_digits_under_the_chosen_prefix() {
        let sc = Scale::of([490_332.5, -12.0].into_iter());
        assert_eq!(
            (sc.prefix, sc.show(490_332.5), sc.show(-12.0)),
            ("k", "490.33".to_owned(), "−0.01".to_owned())
        );
        let sc = Scale::of([2.5e7].into_iter());
        assert_eq!((sc.prefix, sc.show(2.5e7)), ("M", "25.000".to_owned()));
        // Moments that are round-off next to 1 MN are zero, shown without a prefix.
        let forces = Scale::of([1.0e6].into_iter());
        let m = Scale::above([3e-7, -1e-6].into_iter(), forces.moment_noise());
        assert_eq!((m.prefix, m.show(-1e-6)), ("", "0.00".to_owned()));
        assert_eq!(num(-0.0001, 2), "0.00");
        assert_eq!(anchor("a b/c"), "mesh-a_b_c");
    }
}
