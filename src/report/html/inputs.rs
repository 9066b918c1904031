//! The inputs a mesh's numbers depend on, as the result document echoes them: the mesh
//! (format, facets, closed or open), units, up axis, g, wet side, size, the liquids of
//! every case, and how each part was treated.
//!
//! It shows what the result says and checks none of it.

use std::fmt::Write;

use serde_json::Value;

use super::format::{esc, f, num, point, v3};

pub(super) fn inputs(s: &mut String, r: &Value) {
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
