//! One mesh's section of the page: its heading and state (iteration, last event, a stale
//! mark with its reason), its mesh-health warnings, then per case the inputs, loads and
//! changes, the load history chart, and per sweep the chart of loads against level with
//! its table of governing values; or the last error of a mesh that never computed.
//!
//! The tables of inputs, loads and changes are written by their own files; the charts are
//! drawn by [`crate::report::svg`].

use std::fmt::Write;

use serde_json::Value;

use super::MeshEntry;
use super::case::case_block;
use super::changes::changes;
use super::format::{Scale, anchor, esc, f, num};
use super::inputs::inputs;
use crate::report::svg::{self, SweepPoint};

/// The `computed` lines of one mesh, in order.
fn computed_lines<'a>(log: &'a [Value], mesh: &str) -> Vec<&'a Value> {
    log.iter()
        .filter(|l| l["mesh"] == mesh && l["event"] == "computed")
        .collect()
}

fn last_event<'a>(log: &'a [Value], mesh: &str) -> Option<&'a Value> {
    log.iter().rev().find(|l| l["mesh"] == mesh)
}

pub(super) fn mesh_section(s: &mut String, m: &MeshEntry, log: &[Value]) {
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
