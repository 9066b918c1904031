//! `wetload compare MESH A B`: two iterations side by side. Loads come from the change
//! log's lines (exactly the figures logged when each was computed); the loads of each part
//! (a mesh of several parts) and the geometry (facets, surface area, volume, bounding box,
//! per part, in metres by the units of that iteration's sidecar) from each iteration's
//! exact inputs in the snapshot store, computed again.

use std::fmt::Write as _;

use serde_json::{Map, Value, json};

use super::{History, HistoryError, local_time};
use crate::check;
use crate::pipeline::record::marker;
use crate::report::units::{Unit, UnitSystem, Units};

/// The quantities compared per case, in the order shown.
pub const QUANTITIES: [&str; 6] = [
    "force",
    "moment",
    "uplift",
    "downthrust",
    "wetted_area",
    "submerged_volume",
];

/// `to − from`: numbers subtract, arrays of numbers component-wise; null where either is
/// null or missing.
pub fn change(from: &Value, to: &Value) -> Value {
    match (from, to) {
        (Value::Number(a), Value::Number(b)) => match (a.as_f64(), b.as_f64()) {
            (Some(a), Some(b)) => json!(b - a),
            _ => Value::Null,
        },
        (Value::Array(a), Value::Array(b)) if a.len() == b.len() => {
            let parts: Vec<Value> = a.iter().zip(b).map(|(x, y)| change(x, y)).collect();
            if parts.iter().any(Value::is_null) {
                Value::Null
            } else {
                Value::Array(parts)
            }
        }
        _ => Value::Null,
    }
}

/// The size of a value: |x| of a number, the length of a vector.
fn magnitude(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => n.as_f64().map(f64::abs),
        Value::Array(a) => a
            .iter()
            .try_fold(0.0f64, |s, x| x.as_f64().map(|x| s.hypot(x))),
        _ => None,
    }
}

/// The change of the size as a percentage of the size before (null when that is 0).
fn percent(from: &Value, to: &Value) -> Value {
    match (magnitude(from), magnitude(to)) {
        (Some(a), Some(b)) if a > 0.0 => json!(100.0 * (b - a) / a),
        _ => Value::Null,
    }
}

/// One case's `from`, `to`, `change` and `percent` (the last beside the pinned fields).
fn case_entry(name: &str, from: Option<&Value>, to: Option<&Value>) -> Value {
    let pick = |c: Option<&Value>| {
        c.map_or(Value::Null, |c| {
            let m: Map<String, Value> = QUANTITIES
                .iter()
                .map(|q| ((*q).to_owned(), c[*q].clone()))
                .collect();
            Value::Object(m)
        })
    };
    let (f, t) = (pick(from), pick(to));
    let (mut ch, mut pc) = (Map::new(), Map::new());
    for q in QUANTITIES {
        ch.insert(q.to_owned(), change(&f[q], &t[q]));
        pc.insert(q.to_owned(), percent(&f[q], &t[q]));
    }
    let (ch, pc) = if f.is_null() || t.is_null() {
        (Value::Null, Value::Null)
    } else {
        (Value::Object(ch), Value::Object(pc))
    };
    json!({"name": name, "from": f, "to": t, "change": ch, "percent": pc})
}

/// Per case, the loads of every part of a computed line's iteration, computed again from
/// its exact inputs in the snapshot store (the change log holds figures per case only):
/// case name → [(part, {force, moment, uplift, downthrust, wetted_area, submerged_volume})].
/// Empty when the inputs are no longer there or do not compute.
fn part_loads(h: &History, line: &Value) -> Vec<(String, Vec<(String, Value)>)> {
    let Ok((mesh_bytes, side_bytes)) = h.inputs(line) else {
        return Vec::new();
    };
    let name = line["mesh"].as_str().unwrap_or_default();
    let path = h.mesh.with_file_name(name);
    let side_path = crate::pipeline::sidecar_path(&path);
    let Ok(text) = String::from_utf8(side_bytes) else {
        return Vec::new();
    };
    let (Ok(sidecar), Ok(mesh)) = (
        crate::sidecar::parse_sidecar(&side_path, &text),
        crate::mesh::read_mesh(&path, &mesh_bytes),
    ) else {
        return Vec::new();
    };
    let Ok(result) = crate::compute::compute(name, &mesh, &sidecar) else {
        return Vec::new();
    };
    result
        .cases
        .iter()
        .map(|c| {
            let parts = c
                .parts
                .iter()
                .map(|p| {
                    let v = serde_json::to_value(p).unwrap_or(Value::Null);
                    let m: Map<String, Value> = QUANTITIES
                        .iter()
                        .map(|q| ((*q).to_owned(), v[*q].clone()))
                        .collect();
                    (p.name.clone(), Value::Object(m))
                })
                .collect();
            (c.name.clone(), parts)
        })
        .collect()
}

/// The parts' entries of case `name` (as [`case_entry`] makes them), for the parts of
/// either iteration; none for a mesh of one part.
fn part_entries(
    name: &str,
    from: &[(String, Vec<(String, Value)>)],
    to: &[(String, Vec<(String, Value)>)],
) -> Vec<Value> {
    let of = |all: &[(String, Vec<(String, Value)>)]| {
        all.iter()
            .find(|(c, _)| c == name)
            .map(|(_, p)| p.clone())
            .unwrap_or_default()
    };
    let (f, t) = (of(from), of(to));
    let mut names: Vec<&String> = t.iter().map(|(n, _)| n).collect();
    for (n, _) in &f {
        if !names.contains(&n) {
            names.push(n);
        }
    }
    if names.len() < 2 {
        return Vec::new();
    }
    let find =
        |ps: &[(String, Value)], n: &str| ps.iter().find(|(p, _)| p == n).map(|(_, v)| v.clone());
    names
        .iter()
        .map(|n| case_entry(n, find(&f, n).as_ref(), find(&t, n).as_ref()))
        .collect()
}

/// The geometry of a computed line's mesh from the snapshot store, or null with the
/// reason when its inputs are no longer there.
fn geometry(h: &History, line: &Value) -> Value {
    let (mesh_bytes, side_bytes) = match h.inputs(line) {
        Ok(b) => b,
        Err(e) => return json!({"unavailable": e.to_string()}),
    };
    let name = line["mesh"].as_str().unwrap_or_default();
    let path = h.mesh.with_file_name(name);
    let mesh = match crate::mesh::read_mesh(&path, &mesh_bytes) {
        Ok(m) => m,
        Err(e) => return json!({"unavailable": e.to_string()}),
    };
    let scale = String::from_utf8(side_bytes)
        .ok()
        .and_then(|t| crate::sidecar::parse_sidecar(&crate::pipeline::sidecar_path(&path), &t).ok())
        .map(|s| s.units.metres());
    let health = check::check(name, &mesh, scale);
    let parts: Vec<Value> = health
        .parts
        .iter()
        .map(|p| {
            json!({"name": p.name, "facets": p.facets, "surface_area": p.surface_area,
                   "volume": p.volume, "bounding_box": p.bounding_box, "closed": p.closed})
        })
        .collect();
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in &health.parts {
        for k in 0..3 {
            lo[k] = lo[k].min(p.bounding_box[0][k]);
            hi[k] = hi[k].max(p.bounding_box[1][k]);
        }
    }
    let volume: Option<f64> = health.parts.iter().map(|p| p.volume).sum();
    json!({
        "facets": health.parts.iter().map(|p| p.facets).sum::<usize>(),
        "surface_area": health.parts.iter().map(|p| p.surface_area).sum::<f64>(),
        "volume": volume,
        "bounding_box": [lo, hi],
        "closed": health.closed,
        "length_unit": health.length_unit,
        "parts": parts,
    })
}

/// `compare --json`: the pinned document for iterations `a` and `b` of `h`.
pub fn compare(h: &History, a: &str, b: &str) -> Result<Value, HistoryError> {
    let (from, to) = (h.iteration(a)?, h.iteration(b)?);
    let cases_of = |l: &Value| l["cases"].as_array().cloned().unwrap_or_default();
    let (fc, tc) = (cases_of(from), cases_of(to));
    let find = |cs: &[Value], n: &str| cs.iter().find(|c| c["name"] == n).cloned();
    let mut names: Vec<String> = tc
        .iter()
        .filter_map(|c| c["name"].as_str().map(str::to_owned))
        .collect();
    for c in &fc {
        if let Some(n) = c["name"].as_str()
            && !names.iter().any(|m| m == n)
        {
            names.push(n.to_owned());
        }
    }
    let (fp, tp) = (part_loads(h, from), part_loads(h, to));
    let cases: Vec<Value> = names
        .iter()
        .map(|n| {
            let mut entry = case_entry(n, find(&fc, n).as_ref(), find(&tc, n).as_ref());
            let parts = part_entries(n, &fp, &tp);
            if !parts.is_empty() {
                entry["parts"] = Value::Array(parts);
            }
            entry
        })
        .collect();
    Ok(json!({
        "mesh": from["mesh"],
        "from": from["iteration"],
        "to": to["iteration"],
        "from_time": from["time"],
        "to_time": to["time"],
        "cases": cases,
        "geometry": {"from": geometry(h, from), "to": geometry(h, to)},
    }))
}

/// One row: a label, then from, to, change and percentage in `unit` (a number, or a
/// vector's length with its components below when `components`).
fn row(s: &mut String, label: &str, f: &Value, t: &Value, unit: &Unit) {
    let show = |v: &Value| match v {
        Value::Number(n) => n.as_f64().map_or_else(|| "—".to_owned(), |x| unit.fmt(x)),
        _ => "—".to_owned(),
    };
    let d = change(f, t);
    // Values that print as zero in their unit (round-off such as 1e-12 N·m) get no
    // percentage, which would only magnify noise.
    let shown_zero = |v: &Value| {
        v.as_f64()
            .is_some_and(|x| (x * unit.factor).abs() < 0.5 * 10f64.powi(-(unit.decimals as i32)))
    };
    let noise = shown_zero(f) && shown_zero(t);
    let mark = match (d.as_f64(), t.as_f64()) {
        (Some(_), Some(_)) if noise => " =".to_owned(),
        (Some(d), Some(now)) => marker(Some(d), now),
        _ => String::new(),
    };
    let pc = percent(f, t)
        .as_f64()
        .filter(|_| !noise)
        .map_or_else(String::new, |p| format!("{p:+.2}%"));
    let label = if unit.name.is_empty() {
        label.to_owned()
    } else {
        format!("{label} ({})", unit.name)
    };
    let _ = writeln!(
        s,
        "    {:<18} {:>14} {:>14} {:>14} {:>9}{}",
        label,
        show(f),
        show(t),
        if d.is_null() {
            "—".to_owned()
        } else {
            show(&d)
        },
        pc,
        mark
    );
}

/// A vector as its length and its components, each a [`row`].
fn vector_rows(s: &mut String, label: &str, f: &Value, t: &Value, unit: &Unit) {
    let len = |v: &Value| magnitude(v).map_or(Value::Null, |x| json!(x));
    row(s, &format!("|{label}|"), &len(f), &len(t), unit);
    for (k, axis) in ["x", "y", "z"].iter().enumerate() {
        row(s, &format!("{label}{axis}"), &f[k], &t[k], unit);
    }
}

/// The terminal form of a [`compare`] document, in the units of `system`.
pub fn render(doc: &Value, system: UnitSystem) -> String {
    let u = Units::of(system);
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{} · iteration {} ({}) → iteration {} ({})",
        doc["mesh"].as_str().unwrap_or(""),
        doc["from"],
        local_time(&doc["from_time"]),
        doc["to"],
        local_time(&doc["to_time"]),
    );
    let _ = writeln!(
        s,
        "    {:<18} {:>14} {:>14} {:>14} {:>9}",
        "", "from", "to", "change", "%"
    );
    for c in doc["cases"].as_array().into_iter().flatten() {
        let _ = writeln!(s, "  case {}", c["name"].as_str().unwrap_or(""));
        let (f, t) = (&c["from"], &c["to"]);
        if f.is_null() || t.is_null() {
            let _ = writeln!(
                s,
                "    only in iteration {}",
                if f.is_null() {
                    &doc["to"]
                } else {
                    &doc["from"]
                }
            );
            continue;
        }
        vector_rows(&mut s, "F", &f["force"], &t["force"], &u.force);
        vector_rows(&mut s, "M", &f["moment"], &t["moment"], &u.moment);
        row(&mut s, "uplift", &f["uplift"], &t["uplift"], &u.force);
        row(
            &mut s,
            "downthrust",
            &f["downthrust"],
            &t["downthrust"],
            &u.force,
        );
        row(
            &mut s,
            "wetted area",
            &f["wetted_area"],
            &t["wetted_area"],
            &u.area,
        );
        row(
            &mut s,
            "submerged vol.",
            &f["submerged_volume"],
            &t["submerged_volume"],
            &u.volume,
        );
        for p in c["parts"].as_array().into_iter().flatten() {
            let _ = writeln!(s, "   part {}", p["name"].as_str().unwrap_or(""));
            let (pf, pt) = (&p["from"], &p["to"]);
            if pf.is_null() || pt.is_null() {
                let _ = writeln!(s, "    in one iteration only");
                continue;
            }
            vector_rows(&mut s, "F", &pf["force"], &pt["force"], &u.force);
            row(&mut s, "uplift", &pf["uplift"], &pt["uplift"], &u.force);
            row(
                &mut s,
                "wetted area",
                &pf["wetted_area"],
                &pt["wetted_area"],
                &u.area,
            );
        }
    }
    let (gf, gt) = (&doc["geometry"]["from"], &doc["geometry"]["to"]);
    let _ = writeln!(s, "  geometry");
    for (g, which) in [(gf, &doc["from"]), (gt, &doc["to"])] {
        if let Some(why) = g["unavailable"].as_str() {
            let _ = writeln!(s, "    iteration {which}: {why}");
        }
    }
    let plain = Unit {
        name: "",
        factor: 1.0,
        decimals: 0,
    };
    let geo_rows = |s: &mut String, prefix: &str, f: &Value, t: &Value| {
        row(
            s,
            &format!("{prefix}facets"),
            &f["facets"],
            &t["facets"],
            &plain,
        );
        row(
            s,
            &format!("{prefix}area"),
            &f["surface_area"],
            &t["surface_area"],
            &u.area,
        );
        row(
            s,
            &format!("{prefix}volume"),
            &f["volume"],
            &t["volume"],
            &u.volume,
        );
        for (end, i) in [("min", 0), ("max", 1)] {
            for (k, axis) in ["x", "y", "z"].iter().enumerate() {
                row(
                    s,
                    &format!("{prefix}{end} {axis}"),
                    &f["bounding_box"][i][k],
                    &t["bounding_box"][i][k],
                    &u.length,
                );
            }
        }
    };
    geo_rows(&mut s, "", gf, gt);
    let parts = |g: &Value| -> Vec<Value> { g["parts"].as_array().cloned().unwrap_or_default() };
    let (pf, pt) = (parts(gf), parts(gt));
    if pf.len().max(pt.len()) > 1 {
        for p in &pt {
            let name = p["name"].as_str().unwrap_or("");
            let before = pf
                .iter()
                .find(|q| q["name"] == name)
                .unwrap_or(&Value::Null);
            let _ = writeln!(s, "  part {name}");
            geo_rows(&mut s, "", before, p);
        }
    }
    s
}
