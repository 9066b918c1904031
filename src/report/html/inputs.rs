//! The inputs a mesh's numbers depend on, as the result document echoes them: the mesh
//! (format, facets, closed or open), units, up axis, g, wet side, size, the liquids of
//! every case, and how each part was treated.
//!
//! It shows what the result says and checks none of it.

use std::fmt::Write;

use serde_json::Value;

use super::format::{elevation, esc, f, point, show, v3};
use crate::report::units::Units;

pub(super) fn inputs(s: &mut String, r: &Value, u: &Units) {
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
        "<dt>units</dt><dd>{} (coordinates scaled to m)</dd><dt>up axis</dt><dd>{}</dd><dt>g</dt><dd>{} {}</dd>",
        text(&i["units"]),
        text(&i["up"]),
        show(u.acceleration, f(&i["gravity"])),
        u.acceleration.name
    );
    if let Some(d) = i["datum"].as_object() {
        let _ = write!(
            s,
            "<dt>levels</dt><dd>elevations in {}: the mesh's origin is at {} {}</dd>",
            esc(d
                .get("name")
                .and_then(Value::as_str)
                .unwrap_or("the project datum")),
            show(
                u.length,
                d.get("mesh_origin_elevation").and_then(Value::as_f64)
            ),
            u.length.name
        );
    }
    if let Some(w) = i["wet_side"].as_str() {
        let _ = write!(s, "<dt>wet side</dt><dd>{}</dd>", esc(w));
    }
    if let (Some(lo), Some(hi)) = (v3(&i["bounding_box"][0]), v3(&i["bounding_box"][1])) {
        let _ = write!(
            s,
            "<dt>size</dt><dd>{} × {} × {} {l} (mesh axes), from {} to {} {l}</dd>",
            show(u.length, Some(hi[0] - lo[0])),
            show(u.length, Some(hi[1] - lo[1])),
            show(u.length, Some(hi[2] - lo[2])),
            point(u, lo),
            point(u, hi),
            l = u.length.name
        );
    }
    if let Some(about) = r["cases"][0].get("moment_about").and_then(v3) {
        let _ = write!(
            s,
            "<dt>moments about</dt><dd>{} {}</dd>",
            point(u, about),
            u.length.name
        );
    }
    s.push_str("</dl>\n");

    // Liquids per case: level, densities (top to bottom, with interfaces), gas pressure.
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>case</th><th class=\"text\">liquid</th><th>level <span class=\"unit\">{}</span></th><th class=\"text\">density <span class=\"unit\">{}</span>, top to bottom</th><th>gas pressure <span class=\"unit\">{}</span></th></tr>",
        u.length.name, u.density.name, u.pressure.name
    );
    for c in r["cases"].as_array().into_iter().flatten() {
        for l in c["liquids"].as_array().into_iter().flatten() {
            let layers: Vec<String> = l["layers"]
                .as_array()
                .into_iter()
                .flatten()
                .map(|y| {
                    let d = show(u.density, f(&y[0]));
                    match f(&y[1]) {
                        Some(z) => {
                            format!("{d} down to {} {}", elevation(u, Some(z)), u.length.name)
                        }
                        None => d,
                    }
                })
                .collect();
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td class=\"text\">{}</td><td>{}</td><td class=\"text\">{}</td><td>{}</td></tr>",
                esc(c["name"].as_str().unwrap_or("?")),
                esc(l["name"].as_str().unwrap_or("?")),
                // A floating body's liquid: its free surface is solved, not given.
                if c["floating"]["liquid"] == l["name"] {
                    "solved (floating)".to_owned()
                } else {
                    elevation(u, f(&l["level"]))
                },
                esc(&layers.join("; ")),
                show(u.pressure, f(&l["surface_pressure"])),
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
