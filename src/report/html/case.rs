//! One case's loads: the force and moment tables of the whole mesh and of each part, then
//! the line of action, the centres of pressure and buoyancy, the moments about named axes
//! and the flotation check.
//!
//! Values are shown as the result document holds them, scaled for reading; nothing is
//! recomputed.

use std::fmt::Write;

use serde_json::Value;

use super::format::{Scale, esc, f, num, point, show, v3};
use crate::report::units::Units;

/// `contained`: the liquid is inside the mesh (a tank's contents), so the volume and its
/// centroid are the liquid's, not a displaced volume and a centre of buoyancy.
pub(super) fn case_block(
    s: &mut String,
    c: &Value,
    several_parts: bool,
    contained: bool,
    u: &Units,
) {
    let name = c["name"].as_str().unwrap_or("?");
    let _ = writeln!(s, "<h3>Case {}</h3>", esc(name));
    let mut rows: Vec<(String, &Value, bool)> = vec![("whole mesh".to_owned(), c, true)];
    if several_parts {
        for p in c["parts"].as_array().into_iter().flatten() {
            rows.push((p["name"].as_str().unwrap_or("?").to_owned(), p, false));
        }
    }
    let forces = Scale::of(
        u.force,
        rows.iter().flat_map(|(_, l, _)| {
            let mut v: Vec<f64> = v3(&l["force"]).map(Vec::from).unwrap_or_default();
            v.extend([f(&l["uplift"]), f(&l["downthrust"])].into_iter().flatten());
            v
        }),
    );
    let moments = Scale::above(
        u.moment,
        rows.iter()
            .flat_map(|(_, l, _)| v3(&l["moment"]).map(Vec::from).unwrap_or_default()),
        forces.moment_noise(),
    );
    let p = forces.unit();
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>force of the liquid</th><th>Fx <span class=\"unit\">{p}</span></th><th>Fy <span class=\"unit\">{p}</span></th><th>Fz <span class=\"unit\">{p}</span></th><th>|F| <span class=\"unit\">{p}</span></th><th>horizontal <span class=\"unit\">{p}</span></th><th>vertical, + up <span class=\"unit\">{p}</span></th><th>uplift <span class=\"unit\">{p}</span></th><th>downthrust <span class=\"unit\">{p}</span></th></tr>"
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
    let m = moments.unit();
    let volume = if contained {
        "liquid inside"
    } else {
        "submerged volume"
    };
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>moment, area, volume</th><th>Mx <span class=\"unit\">{m}</span></th><th>My <span class=\"unit\">{m}</span></th><th>Mz <span class=\"unit\">{m}</span></th><th>wetted area <span class=\"unit\">{}</span></th><th>{volume} <span class=\"unit\">{}</span></th><th>max pressure <span class=\"unit\">{}</span></th></tr>",
        u.area.name, u.volume.name, u.pressure.name
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
            show(u.area, f(&l["wetted_area"])),
            show(u.volume, f(&l["submerged_volume"])),
            show(u.pressure, f(&l["max_pressure"])),
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
                "<dt>line of action</dt><dd>through {} {} along {}{}</dd>",
                v3(&l["point"]).map_or_else(|| "—".to_owned(), |p| point(u, p)),
                u.length.name,
                v3(&l["direction"]).map_or_else(
                    || "—".to_owned(),
                    |d| format!("({}, {}, {})", num(d[0], 4), num(d[1], 4), num(d[2], 4))
                ),
                if couple.abs() > 0.0 {
                    format!(
                        ", couple about it {} {}",
                        moments.show(couple),
                        moments.unit()
                    )
                } else {
                    String::new()
                }
            );
        }
        _ => s.push_str("<dt>line of action</dt><dd>none: the net force is zero</dd>"),
    }
    if let Some(cp) = v3(&c["centre_of_pressure"]) {
        let _ = write!(
            s,
            "<dt>centre of pressure</dt><dd>{} {}</dd>",
            point(u, cp),
            u.length.name
        );
    }
    if let Some(cb) = v3(&c["centre_of_buoyancy"]) {
        let _ = write!(
            s,
            "<dt>{}</dt><dd>{} {}</dd>",
            if contained {
                "centroid of the liquid inside"
            } else {
                "centre of buoyancy"
            },
            point(u, cb),
            u.length.name
        );
    }
    if let Some(axes) = c["axis_moments"].as_object() {
        for (axis, a) in axes {
            let miss = format!("{} {}", show(u.small, f(&a["miss_distance"])), u.small.name);
            let _ = write!(
                s,
                "<dt>about axis {}</dt><dd>{} {}; the line of action misses the axis by {miss}</dd>",
                esc(axis),
                moments.show(f(&a["moment"]).unwrap_or(f64::NAN)),
                moments.unit()
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
