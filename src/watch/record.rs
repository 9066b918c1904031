//! What one recomputation adds to the change log and prints: headline figures per case,
//! their change since the previous save and since the baseline. Pure.

use serde_json::{Map, Value, json};

use crate::compute::{CaseResult, MeshResult};

/// The headline figures of one case, as written to the change log (absolute SI values).
pub fn headline(c: &CaseResult) -> Value {
    let l = &c.loads;
    let axes: Map<String, Value> = l
        .axis_moments
        .iter()
        .map(|(k, a)| (k.clone(), json!(a.moment)))
        .collect();
    json!({
        "name": c.name,
        "force": l.force,
        "moment": l.moment,
        "vertical_force": l.vertical_force,
        "uplift": l.uplift,
        "downthrust": l.downthrust,
        "wetted_area": l.wetted_area,
        "submerged_volume": l.submerged_volume,
        "axis_moments": axes,
        "flotation_factor": c.flotation.as_ref().and_then(|f| f.factor),
    })
}

/// `new − old` for every number (and every array or object of numbers) the two share;
/// fields missing or null on either side are left out.
pub fn difference(new: &Value, old: &Value) -> Value {
    match (new, old) {
        (Value::Number(a), Value::Number(b)) => match (a.as_f64(), b.as_f64()) {
            (Some(a), Some(b)) => json!(a - b),
            _ => Value::Null,
        },
        (Value::Array(a), Value::Array(b)) if a.len() == b.len() => {
            Value::Array(a.iter().zip(b).map(|(x, y)| difference(x, y)).collect())
        }
        (Value::Object(a), Value::Object(b)) => {
            let mut out = Map::new();
            for (k, v) in a {
                if k == "name" || k == "change" || k == "since_baseline" {
                    continue;
                }
                if let Some(w) = b.get(k) {
                    let d = difference(v, w);
                    if !d.is_null() {
                        out.insert(k.clone(), d);
                    }
                }
            }
            Value::Object(out)
        }
        _ => Value::Null,
    }
}

/// The cases of a `computed` line: headlines with `change` against `previous` and
/// `since_baseline` against `baseline` (each the `cases` array of an earlier line).
pub fn cases_with_changes(
    r: &MeshResult,
    previous: Option<&Value>,
    baseline: Option<&Value>,
) -> Vec<Value> {
    r.cases
        .iter()
        .map(|c| {
            let mut h = headline(c);
            let find = |cases: Option<&Value>| {
                cases
                    .and_then(Value::as_array)
                    .and_then(|a| a.iter().find(|x| x["name"] == json!(c.name)))
                    .map(|old| difference(&h, old))
                    .unwrap_or(Value::Null)
            };
            let change = find(previous);
            let since = find(baseline);
            if let Value::Object(m) = &mut h {
                m.insert("change".into(), change);
                m.insert("since_baseline".into(), since);
            }
            h
        })
        .collect()
}

/// A compact terminal block for one recomputation.
///
/// ```text
/// 14:02:07 radial_gate.stl · iteration 3 · 256 facets
///   normal   |F| 568.71 kN ▲ +1.2%   Fz +288.10 kN ▲ +0.8%   uplift 288.24 kN   M 0.69 kN·m
/// ```
/// With `verbose`, every force and moment component and the warnings follow.
pub fn block(
    clock: &str,
    r: &MeshResult,
    iteration: u64,
    cases: &[Value],
    verbose: bool,
) -> String {
    let mut s = format!(
        "{clock} {} · iteration {iteration} · {} facets\n",
        r.mesh, r.inputs.facets
    );
    for (c, line) in r.cases.iter().zip(cases) {
        let l = &c.loads;
        let norm = |v: [f64; 3]| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        let change = &line["change"];
        let dmag = change["force"].as_array().map(|d| {
            let old = [0, 1, 2].map(|k| l.force[k] - d[k].as_f64().unwrap_or(0.0));
            norm(l.force) - norm(old)
        });
        let dv = change["vertical_force"].as_f64();
        let du = change["uplift"].as_f64();
        let _ = std::fmt::Write::write_fmt(
            &mut s,
            format_args!(
                "  {:<10} |F| {:>10.2} kN{}   vertical {:>+10.2} kN{}   uplift {:.2} kN{}   |M| {:.2} kN·m\n",
                c.name,
                norm(l.force) / 1e3,
                marker(dmag, norm(l.force)),
                l.vertical_force / 1e3,
                marker(dv, l.vertical_force),
                l.uplift / 1e3,
                marker(du, l.uplift),
                norm(l.moment) / 1e3,
            ),
        );
        for (name, a) in &l.axis_moments {
            let d = change["axis_moments"][name].as_f64();
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} axis {name}: {:+.3} kN·m{}\n",
                    "",
                    a.moment / 1e3,
                    marker(d, a.moment)
                ),
            );
        }
        if let Some(f) = &c.flotation {
            let verdict = if f.pass { "PASS" } else { "FAIL" };
            let fs = f
                .factor
                .map_or_else(|| "—".to_owned(), |x| format!("{x:.3}"));
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} flotation FS {fs} (required {}) {verdict}\n",
                    "", f.required_factor
                ),
            );
        }
        if verbose {
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} F ({:.2}, {:.2}, {:.2}) kN   M ({:.2}, {:.2}, {:.2}) kN·m\n",
                    "",
                    l.force[0] / 1e3,
                    l.force[1] / 1e3,
                    l.force[2] / 1e3,
                    l.moment[0] / 1e3,
                    l.moment[1] / 1e3,
                    l.moment[2] / 1e3
                ),
            );
        }
    }
    let shown = if verbose {
        r.warnings.len()
    } else {
        r.warnings.len().min(2)
    };
    for w in &r.warnings[..shown] {
        s.push_str(&format!("  warning: {w}\n"));
    }
    if r.warnings.len() > shown {
        s.push_str(&format!(
            "  ({} more warnings in the result file; --verbose shows them)\n",
            r.warnings.len() - shown
        ));
    }
    s
}

/// ` ▲ +1.2%` / ` ▼ −0.4%` / ` = ` for a change `d` of a value now `now`; empty without one.
fn marker(d: Option<f64>, now: f64) -> String {
    let Some(d) = d else {
        return String::new();
    };
    let old = now - d;
    let scale = now.abs().max(old.abs());
    if d.abs() <= 1e-9 * scale.max(1e-30) {
        return " =".to_owned();
    }
    let arrow = if d > 0.0 { "▲" } else { "▼" };
    if old.abs() > 1e-12 * scale {
        format!(" {arrow} {:+.1}%", 100.0 * d / old.abs())
    } else {
        format!(" {arrow} new")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn differences_follow_the_shape_of_the_values() {
        let new = json!({"name": "a", "force": [3.0, 2.0, 1.0], "uplift": 5.0, "v": null});
        let old = json!({"name": "a", "force": [1.0, 2.0, 4.0], "uplift": 7.5, "v": 1.0});
        assert_eq!(
            difference(&new, &old),
            json!({"force": [2.0, 0.0, -3.0], "uplift": -2.5})
        );
    }

    #[test]
    fn markers_show_direction_and_percentage() {
        assert_eq!(marker(Some(10.0), 110.0), " ▲ +10.0%");
        assert_eq!(marker(Some(-10.0), 90.0), " ▼ -10.0%");
        assert_eq!(marker(Some(0.0), 90.0), " =");
        assert_eq!(marker(None, 90.0), "");
        assert_eq!(marker(Some(5.0), 5.0), " ▲ new");
    }
}
