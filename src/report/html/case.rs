//! One case's loads: the force and moment tables of the whole mesh and of each part, then
//! the line of action, the centres of pressure and buoyancy, the moments about named axes
//! and the flotation check; for a floating case its equilibrium, stability and the chart
//! of its righting-lever curve.
//!
//! Values are shown as the result document holds them, scaled for reading; nothing is
//! recomputed.

use std::fmt::Write;

use serde_json::Value;

use super::format::{Scale, esc, f, num, point, show, v3};
use crate::report::svg;
use crate::report::units::Units;

/// `contained`: the liquid is inside the mesh (a tank's contents), so the volume and its
/// centroid are the liquid's, not a displaced volume and a centre of buoyancy.
pub(super) fn case_block(
    s: &mut String,
    mesh: &str,
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
    if c["floating"].is_object() {
        floating_block(s, mesh, name, &c["floating"], u);
    }
}

/// A floating case's equilibrium facts, stability summary, criteria (numbers only, no
/// compliance implied) and the righting-lever chart, from the result's `floating`.
fn floating_block(s: &mut String, mesh: &str, name: &str, fl: &Value, u: &Units) {
    let (l, a) = (&u.length, &u.angle);
    let _ = writeln!(s, "<h4>Floating freely · case {}</h4>", esc(name));
    let e = &fl["equilibrium"];
    s.push_str("<dl class=\"facts\">");
    let _ = write!(
        s,
        "<dt>body</dt><dd>mass {}, centre of gravity {} {}, in {}, length axis {}</dd>",
        show(u.mass, f(&fl["mass"])) + " " + u.mass.name,
        v3(&fl["centre_of_gravity"]).map_or_else(|| "—".to_owned(), |p| point(u, p)),
        l.name,
        esc(fl["liquid"].as_str().unwrap_or("?")),
        esc(fl["length_axis"].as_str().unwrap_or("?"))
    );
    if !e.is_object() {
        let _ = write!(
            s,
            "<dt>equilibrium</dt><dd><span class=\"tag fail\">SINKS</span> the mass exceeds what the whole volume can carry by {} {}</dd></dl>",
            show(u.mass, f(&fl["sinks"])),
            u.mass.name
        );
        return;
    }
    let with =
        |unit: crate::report::units::Unit, v: &Value| format!("{} {}", show(unit, f(v)), unit.name);
    let _ = write!(
        s,
        "<dt>attitude</dt><dd>draft {}, heel {}, trim {}</dd><dt>displacement</dt><dd>{}; reserve buoyancy {}%</dd><dt>waterplane</dt><dd>area {}, centre of flotation {} {}</dd><dt>centre of buoyancy</dt><dd>{} {}</dd><dt>metacentric height</dt><dd>GM_T {}, GM_L {}{}</dd>",
        with(*l, &e["draft"]),
        with(*a, &e["heel"]),
        if e["trim"].is_number() {
            with(*a, &e["trim"])
        } else {
            "—".to_owned()
        },
        with(u.volume, &e["displacement"]),
        f(&e["reserve_buoyancy"]).map_or_else(|| "—".to_owned(), |r| num(100.0 * r, 1)),
        with(u.area, &e["waterplane_area"]),
        v3(&e["centre_of_flotation"]).map_or_else(|| "—".to_owned(), |p| point(u, p)),
        l.name,
        v3(&e["centre_of_buoyancy"]).map_or_else(|| "—".to_owned(), |p| point(u, p)),
        l.name,
        with(*l, &e["metacentric_height"]["transverse"]),
        with(*l, &e["metacentric_height"]["longitudinal"]),
        if f(&fl["free_surface_moment"]).is_some_and(|m| m > 0.0) {
            format!(
                " (corrected for free surface {} and {})",
                with(*l, &e["metacentric_height_corrected"]["transverse"]),
                with(*l, &e["metacentric_height_corrected"]["longitudinal"])
            )
        } else {
            String::new()
        },
    );
    let st = &fl["stability"];
    if st.is_object() {
        let vanishing = if st["vanishing_angle"].is_number() {
            with(*a, &st["vanishing_angle"])
        } else {
            "none up to 90°".to_owned()
        };
        let _ = write!(
            s,
            "<dt>righting lever</dt><dd>largest GZ {} at {}; vanishing angle {vanishing}; areas 0–30° {}, 0–40° {}, 30–40° {}</dd>",
            with(*l, &st["max_gz"]),
            with(*a, &st["angle_of_max_gz"]),
            with(u.lever_area, &st["area_0_30"]),
            with(u.lever_area, &st["area_0_40"]),
            with(u.lever_area, &st["area_30_40"]),
        );
    }
    s.push_str("</dl>\n");
    if let Some(c) = fl["criteria"].as_object() {
        let pass = c.get("pass").and_then(Value::as_bool) == Some(true);
        let _ = writeln!(
            s,
            "<p><span class=\"tag {}\">{}</span> criteria \"{}\", as numbers only: <strong>no compliance implied</strong>. Source: {}.</p>",
            if pass { "pass" } else { "fail" },
            if pass { "PASS" } else { "FAIL" },
            esc(c.get("name").and_then(Value::as_str).unwrap_or("?")),
            esc(c.get("source").and_then(Value::as_str).unwrap_or("?"))
        );
        s.push_str("<table>\n<tr><th>criterion (units of its source)</th><th>required</th><th>found</th><th></th></tr>\n");
        for k in c
            .get("checks")
            .and_then(Value::as_array)
            .into_iter()
            .flatten()
        {
            let ok = k["pass"].as_bool() == Some(true);
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td>{}</td><td>{}</td><td><span class=\"tag {}\">{}</span></td></tr>",
                esc(k["what"].as_str().unwrap_or("?")),
                f(&k["required"]).map_or_else(|| "—".to_owned(), |x| num(x, 4)),
                f(&k["actual"]).map_or_else(|| "—".to_owned(), |x| num(x, 4)),
                if ok { "pass" } else { "fail" },
                if ok { "pass" } else { "FAIL" },
            );
        }
        s.push_str("</table>\n");
    }
    if let Some(chart) = svg::stability_chart(mesh, name, fl, u) {
        s.push_str("<figure>");
        s.push_str(&String::from_utf8_lossy(&svg::render(&chart)));
        s.push_str("<figcaption>Righting lever GZ at the listed heels, each at the displacement of the equilibrium with trim free; the dotted line is GM_T · φ, its slope at upright; shaded: the areas the criteria measure; dashed grey: the angle of the largest GZ and the vanishing angle on the 1° grid.</figcaption></figure>\n");
    }
    let _ = writeln!(
        s,
        "<p class=\"muted\">{}</p>",
        esc(fl["caution"].as_str().unwrap_or(""))
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::units::UnitSystem;

    #[test]
    fn a_floating_case_has_its_equilibrium_criteria_and_curve_on_the_page() {
        // Box 20 × 6 × 3 m, 150 t in sea water, G on the centre line: upright at
        // T = m/(ρ L B) with GM_T = T/2 + B²/(12 T) − KG (closed forms).
        let r = crate::compute::tests::floating_box();
        let doc = serde_json::to_value(&r).expect("serializes");
        let mut s = String::new();
        let u = Units::of(UnitSystem::Si);
        case_block(&mut s, "b.obj", &doc["cases"][0], false, false, &u);
        let t = 150_000.0 / (1025.0 * 120.0);
        let gm = t / 2.0 + 36.0 / (12.0 * t) - 1.8;
        for want in [
            "Floating freely".to_owned(),
            format!("draft {t:.3} m"),
            format!("GM_T {gm:.3} m"),
            "no compliance implied".to_owned(),
            "Towing".to_owned(),
        ] {
            assert!(s.contains(&want), "{want} in {s}");
        }
        assert_eq!(s.matches("<svg").count(), 1, "the GZ chart");
        // Six criteria of the preset, one row each.
        assert_eq!(s.matches("<tr><td>").count(), 6, "{s}");
    }
}
