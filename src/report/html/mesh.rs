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
use super::format::{Scale, anchor, elevation, esc, f, num, show};
use super::inputs::inputs;
use super::view3d;
use crate::report::svg::{self, SweepPoint};
use crate::report::units::Units;

/// The `computed` lines of one mesh, in order.
fn computed_lines<'a>(log: &'a [Value], mesh: &str) -> Vec<&'a Value> {
    log.iter()
        .filter(|l| l["mesh"] == mesh && l["event"] == "computed")
        .collect()
}

fn last_event<'a>(log: &'a [Value], mesh: &str) -> Option<&'a Value> {
    log.iter().rev().find(|l| l["mesh"] == mesh)
}

pub(super) fn mesh_section(s: &mut String, m: &MeshEntry, log: &[Value], units: &Units) {
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

    // Levels shown in the project datum when the sidecar gives one.
    let origin = r["inputs"]["datum"]["mesh_origin_elevation"]
        .as_f64()
        .unwrap_or(0.0);
    let u = &units.with_datum(origin);
    inputs(s, r, u);
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

    let parts = r["inputs"]["parts"]
        .as_array()
        .map_or(&[][..], Vec::as_slice);
    let several_parts = parts.len() > 1;
    let contained = !parts.is_empty() && parts.iter().all(|p| p["wet_side"] == "inside");
    for (i, c) in r["cases"].as_array().into_iter().flatten().enumerate() {
        case_block(s, &m.mesh, c, several_parts, contained, u);
        let view = m.views.get(i).and_then(Option::as_ref);
        view3d::view_block(s, &format!("{}-view-{i}", anchor(&m.stem)), view, u);
        if let Some((file, svg)) = m.diagrams.get(i) {
            super::diagram::diagram_block(s, svg.as_deref(), file);
        }
    }

    changes(s, &lines, u);

    let history = svg::history_chart(&m.mesh, log, r["inputs"]["up"].as_str(), u);
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
    // A sweep that is the same in every case (the cases differ only in the swept level)
    // is shown once.
    let cases = r["cases"].as_array().map_or(&[][..], Vec::as_slice);
    let shared = cases.len() > 1
        && cases[0].get("sweep").is_some()
        && cases.iter().all(|c| {
            c.get("sweep") == cases[0].get("sweep")
                && c.get("sweep_governing") == cases[0].get("sweep_governing")
        });
    for c in if shared { &cases[..1] } else { cases } {
        let Some(sweep) = c["sweep"].as_array() else {
            continue;
        };
        let steps: Vec<SweepPoint> = sweep.iter().filter_map(SweepPoint::from_json).collect();
        let name = c["name"].as_str().unwrap_or("?");
        let swept = c["sweep_governing"]["liquid"].as_str();
        let level = c["liquids"]
            .as_array()
            .into_iter()
            .flatten()
            .find(|l| swept.is_some() && l["name"].as_str() == swept)
            .and_then(|l| l["level"].as_f64())
            .filter(|_| !shared);
        let marks = svg::SweepMarks {
            case_level: level,
            required_factor: c["flotation"]["required_factor"].as_f64(),
            limit_level: c["sweep_governing"]["flotation_limit"]["level"].as_f64(),
        };
        let chart = svg::sweep_chart(
            &m.mesh,
            if shared { "every case" } else { name },
            swept,
            &steps,
            &marks,
            u,
        );
        let title = if shared {
            "every case (the same sweep)".to_owned()
        } else {
            format!("case {}", esc(name))
        };
        let _ = write!(s, "<h3>Loads against level · {title}</h3>\n<figure>");
        s.push_str(&String::from_utf8_lossy(&svg::render(&chart)));
        let _ = writeln!(
            s,
            "<figcaption>{} levels from {} {l} to {} {l}, {}.</figcaption></figure>",
            steps.len(),
            elevation(u, steps.first().map(|p| p.level)),
            elevation(u, steps.last().map(|p| p.level)),
            if shared {
                "the same in every case".to_owned()
            } else {
                format!("the other inputs as in case {}", esc(name))
            },
            l = u.length.name
        );
        governing_table(s, &c["sweep_governing"], u);
    }
    s.push_str("</section>\n");
}

/// The governing values of a sweep (`sweep_governing`), if the result has them.
fn governing_table(s: &mut String, g: &Value, u: &Units) {
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
    let scale = Scale::of(
        u.force,
        forces.iter().filter_map(|k| f(&g.get(*k)?["value"])),
    );
    let axes = g.get("axis_moments").and_then(Value::as_object);
    let moments = Scale::above(
        u.moment,
        axes.into_iter()
            .flatten()
            .filter_map(|(_, e)| f(&e["value"])),
        scale.moment_noise(),
    );
    let _ = writeln!(
        s,
        "<div class=\"wide\"><table>\n<tr><th>governing over the sweep</th><th>largest magnitude</th><th>at level <span class=\"unit\">{}</span></th></tr>",
        u.length.name
    );
    let mut row = |label: &str, e: &Value, value: String| {
        let _ = writeln!(
            s,
            "<tr><td>{}</td><td>{value}</td><td>{}</td></tr>",
            esc(label),
            elevation(u, f(&e["level"]))
        );
    };
    let p = scale.unit();
    for (key, label) in forces
        .iter()
        .zip(["Fx", "Fy", "Fz", "|F|", "uplift", "downthrust"])
    {
        if let Some(e) = g.get(*key) {
            let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| scale.show(x));
            row(label, e, format!("{v} {p}"));
        }
    }
    if let Some(e) = g.get("submerged_volume") {
        let v = show(u.volume, f(&e["value"]));
        row("submerged volume", e, format!("{v} {}", u.volume.name));
    }
    for (name, e) in axes.into_iter().flatten() {
        let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| moments.show(x));
        row(
            &format!("moment about {name}"),
            e,
            format!("{v} {}", moments.unit()),
        );
    }
    // The flotation factor governs at its lowest, not its largest.
    if let Some(e) = g.get("flotation_factor").filter(|e| e.is_object()) {
        let v = f(&e["value"]).map_or_else(|| "—".to_owned(), |x| num(x, 3));
        row("flotation factor (lowest)", e, v);
    }
    if let Some(l) = g.get("flotation_limit").filter(|l| l.is_object()) {
        let v = f(&l["required_factor"]).map_or_else(|| "—".to_owned(), |x| num(x, 3));
        row("flotation factor falls to the required", l, v);
    }
    s.push_str("</table></div>\n");
}
