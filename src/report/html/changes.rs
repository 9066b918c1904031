//! The change table of a mesh: per case, every headline quantity now, its change since
//! the previous save and since the baseline, as the change log's last `computed` line
//! records them.
//!
//! It reads the changes the watcher logged and computes no difference itself, beyond the
//! percentage shown beside each.

use std::fmt::Write;

use serde_json::Value;

use super::format::{Scale, esc, f, num};
use crate::report::units::{Unit, Units};

/// What a row of the change table measures, for its scale and unit.
#[derive(Clone, Copy, PartialEq)]
enum Kind {
    Force,
    Moment,
    /// Shown in the given unit.
    Other(Unit),
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
pub(super) fn changes(s: &mut String, lines: &[&Value], u: &Units) {
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
        let factor = Unit {
            name: "",
            factor: 1.0,
            decimals: 3,
        };
        for (key, label, unit) in [
            ("wetted_area", "wetted area", u.area),
            ("submerged_volume", "submerged volume", u.volume),
            ("flotation_factor", "flotation factor", factor),
            ("draft", "draft", u.length),
            ("heel", "heel", u.angle),
            ("trim", "trim", u.angle),
            ("gm_t", "GM_T", u.length),
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
            u.force,
            rows.iter()
                .filter(|r| r.kind == Kind::Force)
                .map(|r| r.value),
        );
        let ms = Scale::above(
            u.moment,
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
                    fs.unit().to_owned(),
                    fs.moment_noise(),
                ),
                Kind::Moment => (
                    Box::new(move |x| ms.show(x)),
                    ms.unit().to_owned(),
                    ms.noise,
                ),
                Kind::Other(unit) => (
                    Box::new(move |x| num(x * unit.factor, unit.decimals)),
                    unit.name.to_owned(),
                    1e-9 * v.abs(),
                ),
            };
            let delta = |d: Option<f64>| match d {
                None => "—".to_owned(),
                Some(d) if d.abs() <= noise => show(0.0),
                Some(d) => {
                    // Judged by magnitude: a moment from −364 to −399 grows, though its
                    // value falls; the change keeps its sign.
                    let old = v - d;
                    let (class, words) = if old.abs() <= noise {
                        ("up", "new".to_owned())
                    } else if v.abs() > noise && v.signum() != old.signum() {
                        ("up", "reverses".to_owned())
                    } else {
                        let rel = 100.0 * (v.abs() - old.abs()) / old.abs();
                        if rel >= 0.0 {
                            ("up", format!("grows {}%", num(rel, 1)))
                        } else {
                            ("down", format!("eases {}%", num(-rel, 1)))
                        }
                    };
                    let sign = if d > 0.0 { "+" } else { "" };
                    format!("<span class=\"{class}\">{sign}{} ({words})</span>", show(d))
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
