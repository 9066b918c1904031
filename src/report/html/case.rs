//! One case's loads: the force and moment tables of the whole mesh and of each part, then
//! the line of action, the centres of pressure and buoyancy, the moments about named axes
//! and the flotation check.
//!
//! Values are shown as the result document holds them, scaled for reading; nothing is
//! recomputed.

use std::fmt::Write;

use serde_json::Value;

use super::format::{Scale, esc, f, num, point, v3};

pub(super) fn case_block(s: &mut String, c: &Value, several_parts: bool) {
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
