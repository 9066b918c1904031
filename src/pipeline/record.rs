//! What one recomputation adds to the change log and prints: headline figures per case,
//! their change since the previous save and since the baseline, and a mesh's lineage
//! (iteration, previous and baseline figures, last hashes) as the log's lines rebuild it.
//! Pure; `calc` and the watcher both use it, so their lines are the same.

use serde_json::{Map, Value, json};

use crate::compute::{CaseResult, MeshResult};
use crate::report::units::{Unit, Units};

/// The headline figures of one case, as written to the change log (absolute SI values).
pub fn headline(c: &CaseResult) -> Value {
    let l = &c.loads;
    let axes: Map<String, Value> = l
        .axis_moments
        .iter()
        .map(|(k, a)| (k.clone(), json!(a.moment)))
        .collect();
    let mut h = json!({
        "name": c.name,
        "force": l.force,
        "moment": l.moment,
        "horizontal_force": l.horizontal_force,
        "vertical_force": l.vertical_force,
        "uplift": l.uplift,
        "downthrust": l.downthrust,
        "wetted_area": l.wetted_area,
        "submerged_volume": l.submerged_volume,
        "axis_moments": axes,
        "flotation_factor": c.flotation.as_ref().and_then(|f| f.factor),
    });
    // A floating case adds its attitude (m, degrees, m; null when the body sinks).
    if let (Some(f), Value::Object(m)) = (&c.floating, &mut h) {
        let e = f.equilibrium.as_ref();
        m.insert("draft".into(), json!(e.map(|e| e.draft)));
        m.insert("heel".into(), json!(e.map(|e| e.heel)));
        m.insert("trim".into(), json!(e.and_then(|e| e.trim)));
        m.insert(
            "gm_t".into(),
            json!(e.map(|e| e.metacentric_height.transverse)),
        );
    }
    h
}

/// What the change log says about one mesh so far: fed its lines in order
/// ([`Lineage::feed`]), it knows the number the next `computed` line takes.
#[derive(Clone, Debug, Default)]
pub struct Lineage {
    /// The last iteration (0 before the first).
    pub iteration: u64,
    /// `cases` of the previous and of the first `computed` line.
    pub previous: Option<Value>,
    pub baseline: Option<Value>,
    /// Mesh and sidecar hashes of the last computed line, unless a failure or a removal
    /// came after it (the next save must then compute even if the content is the same).
    pub hashes: Option<(String, String)>,
    /// Facets of the last computed mesh.
    pub facets: Option<usize>,
}

impl Lineage {
    /// Takes one line of the log (any mesh's lines may be fed: the caller filters).
    pub fn feed(&mut self, line: &Value) {
        match line["event"].as_str() {
            Some("computed") => {
                self.iteration = line["iteration"].as_u64().unwrap_or(self.iteration + 1);
                self.previous = Some(line["cases"].clone());
                if self.baseline.is_none() {
                    self.baseline = Some(line["cases"].clone());
                }
                self.facets = line["facets"]
                    .as_u64()
                    .and_then(|f| usize::try_from(f).ok());
                if let (Some(m), Some(s)) =
                    (line["mesh_hash"].as_str(), line["sidecar_hash"].as_str())
                {
                    self.hashes = Some((m.to_owned(), s.to_owned()));
                }
            }
            Some("removed" | "failed") => self.hashes = None,
            _ => {}
        }
    }

    /// The lineage of the mesh named `mesh` (its file name) in the log's `lines`.
    pub fn of(mesh: &str, lines: &[Value]) -> Lineage {
        let mut l = Lineage::default();
        for line in lines.iter().filter(|l| l["mesh"] == mesh) {
            l.feed(line);
        }
        l
    }

    /// The line of a computation of `r` from inputs with `hashes` (mesh, sidecar): a new
    /// `computed` iteration, or `unchanged` when the hashes are the last computed ones.
    /// Advances the lineage as feeding the line back would.
    pub fn line(&mut self, time: &str, r: &MeshResult, hashes: (String, String)) -> Value {
        if self.hashes.as_ref() == Some(&hashes) {
            return json!({
                "time": time, "mesh": r.mesh, "event": "unchanged",
                "iteration": self.iteration, "mesh_hash": hashes.0, "sidecar_hash": hashes.1,
            });
        }
        let cases = Value::Array(cases_with_changes(
            r,
            self.previous.as_ref(),
            self.baseline.as_ref(),
        ));
        let line = json!({
            "time": time, "mesh": r.mesh, "event": "computed", "iteration": self.iteration + 1,
            "mesh_hash": hashes.0, "sidecar_hash": hashes.1, "facets": r.inputs.facets,
            "warnings": r.warnings.len(), "cases": cases,
        });
        self.feed(&line);
        line
    }
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

/// A compact terminal block for one recomputation, in the units of `u`.
///
/// ```text
/// 14:02:07 radial_gate.stl · iteration 3 · 256 facets
///   normal     horizontal 490.33 kN ▲ grows 1.2%   vertical +288.10 kN ▲ grows 0.8%   uplift 288.24 kN =   |F| 568.71 kN   |M| 0.69 kN·m
/// ```
/// The horizontal force leads (the headline figure of a gate). Markers compare
/// magnitudes (see `marker`), so a moment that goes from −364 to −399 kN·m *grows*.
/// With `verbose`, every force and moment component and the warnings follow.
pub fn block(
    clock: &str,
    r: &MeshResult,
    iteration: u64,
    cases: &[Value],
    verbose: bool,
    u: &Units,
) -> String {
    let mut s = format!(
        "{clock} {} · iteration {iteration} · {} facets\n",
        r.mesh, r.inputs.facets
    );
    let (fu, mu) = (u.force.name, u.moment.name);
    for (c, line) in r.cases.iter().zip(cases) {
        let l = &c.loads;
        let norm = |v: [f64; 3]| v[0].hypot(v[1]).hypot(v[2]);
        let change = &line["change"];
        // Logged beside the force since the line has it (older lines: no marker).
        let dh = change["horizontal_force"].as_f64();
        let dv = change["vertical_force"].as_f64();
        let du = change["uplift"].as_f64();
        let _ = std::fmt::Write::write_fmt(
            &mut s,
            format_args!(
                "  {:<10} horizontal {} {fu}{}   vertical {}{} {fu}{}   uplift {} {fu}{}   |F| {} {fu}   |M| {} {mu}\n",
                c.name,
                u.force.fmt(l.horizontal_force),
                marker(dh, l.horizontal_force),
                if l.vertical_force > 0.0 { "+" } else { "" },
                u.force.fmt(l.vertical_force),
                marker(dv, l.vertical_force),
                u.force.fmt(l.uplift),
                marker(du, l.uplift),
                u.force.fmt(norm(l.force)),
                u.moment.fmt(norm(l.moment)),
            ),
        );
        for (name, a) in &l.axis_moments {
            let d = change["axis_moments"][name].as_f64();
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} axis {name}: {}{} {mu}{}\n",
                    "",
                    if a.moment > 0.0 { "+" } else { "" },
                    u.moment.fmt(a.moment),
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
        if let Some(e) = c.floating.as_ref().and_then(|f| f.equilibrium.as_ref()) {
            let trim = e
                .trim
                .map_or_else(|| "—".to_owned(), |t| u.angle.with_name(t));
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} floating draft {}{}   heel {}{}   trim {trim}   GM_T {}{}\n",
                    "",
                    u.length.with_name(e.draft),
                    marker(line["change"]["draft"].as_f64(), e.draft),
                    u.angle.with_name(e.heel),
                    marker(line["change"]["heel"].as_f64(), e.heel),
                    u.length.with_name(e.metacentric_height.transverse),
                    marker(
                        line["change"]["gm_t"].as_f64(),
                        e.metacentric_height.transverse
                    ),
                ),
            );
        } else if c.floating.as_ref().is_some_and(|f| f.sinks.is_some()) {
            let _ =
                std::fmt::Write::write_fmt(&mut s, format_args!("  {:<10} floating: SINKS\n", ""));
        }
        if verbose {
            let _ = std::fmt::Write::write_fmt(
                &mut s,
                format_args!(
                    "  {:<10} F {} {fu}   M {} {mu}\n",
                    "",
                    triple(&u.force, l.force),
                    triple(&u.moment, l.moment),
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

/// `(a, b, c)` in one unit, without its name.
fn triple(unit: &Unit, v: [f64; 3]) -> String {
    format!(
        "({}, {}, {})",
        unit.fmt(v[0]),
        unit.fmt(v[1]),
        unit.fmt(v[2])
    )
}

/// How a value changed by `d` to `now`, judged by its magnitude: ` ▲ grows 9.6%` when
/// |now| > |old|, ` ▼ eases 3.2%` when it fell, ` ⇅ reverses` when the sign flipped,
/// ` ▲ new` from zero, ` =` when unchanged (within 1e-9 relative); empty without a
/// previous value. The value itself is printed with its sign beside the marker.
pub fn marker(d: Option<f64>, now: f64) -> String {
    let Some(d) = d else {
        return String::new();
    };
    let old = now - d;
    let scale = now.abs().max(old.abs());
    if d.abs() <= 1e-9 * scale.max(1e-30) {
        return " =".to_owned();
    }
    if old.abs() <= 1e-12 * scale {
        return " ▲ new".to_owned();
    }
    if now.abs() > 1e-12 * scale && now.signum() != old.signum() {
        return " ⇅ reverses".to_owned();
    }
    let rel = 100.0 * (now.abs() - old.abs()) / old.abs();
    if rel >= 0.0 {
        format!(" ▲ grows {rel:.1}%")
    } else {
        format!(" ▼ eases {:.1}%", -rel)
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
    fn markers_judge_by_magnitude() {
        assert_eq!(marker(Some(10.0), 110.0), " ▲ grows 10.0%");
        assert_eq!(marker(Some(-10.0), 90.0), " ▼ eases 10.0%");
        // A moment going from −364 to −399 kN·m grows by 9.6 %, though its value fell.
        assert_eq!(marker(Some(-35.0), -399.0), " ▲ grows 9.6%");
        assert_eq!(marker(Some(35.0), -364.0), " ▼ eases 8.8%");
        assert_eq!(marker(Some(-20.0), -10.0), " ⇅ reverses");
        assert_eq!(marker(Some(0.0), 90.0), " =");
        assert_eq!(marker(None, 90.0), "");
        assert_eq!(marker(Some(5.0), 5.0), " ▲ new");
    }

    #[test]
    fn up_axes_give_their_unit_vectors() {
        use crate::hydro::UpAxis;
        let unit = |k: &str| UpAxis::from_keyword(k).map(|a| a.unit().into());
        assert_eq!(unit("+z"), Some([0.0, 0.0, 1.0]));
        assert_eq!(unit("-y"), Some([0.0, -1.0, 0.0]));
        assert_eq!(unit("+x"), Some([1.0, 0.0, 0.0]));
        assert_eq!(UpAxis::from_keyword("-y").map(UpAxis::index), Some(1));
        assert_eq!(UpAxis::from_keyword("up"), None);
    }
}
