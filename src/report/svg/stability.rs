//! The righting-lever chart of a floating case (on the page): built from the result's
//! `floating` into the chart model of [`super`], which draws it.

use serde_json::Value;

use super::{Chart, Panel, Series};
use crate::report::units::Units;

/// The righting-lever curve of a floating case from its result (`floating` as the result
/// document holds it), in the units of `u`: GZ at the listed heels, the curve the criteria
/// see when a free-surface rise is given (GZ − rise · sin φ), the tangent GM_T · φ at
/// upright, a criterion's least lever from its angle on as a level line, the areas the
/// criteria measure shaded (0°–30°, 30°–40°), and the angle of the largest GZ and the
/// vanishing angle marked. `None` when the body sinks or no lever is listed.
pub fn stability_chart(mesh: &str, case: &str, floating: &Value, u: &Units) -> Option<Chart> {
    let levers: Vec<(f64, f64)> = floating["righting_lever"]
        .as_array()?
        .iter()
        .filter_map(|p| Some((p["heel"].as_f64()?, p["gz"].as_f64()?)))
        .collect();
    let gm = floating["equilibrium"]["metacentric_height"]["transverse"].as_f64()?;
    if levers.is_empty() {
        return None;
    }
    let lu = u.length.name;
    let mut series = vec![Series {
        label: "GZ".to_owned(),
        points: levers.clone(),
    }];
    let rise = floating["free_surface_rise"].as_f64().unwrap_or(0.0);
    if rise > 0.0 {
        series.push(Series {
            label: "GZ less free surface".to_owned(),
            points: levers
                .iter()
                .map(|&(a, g)| (a, g - rise * a.abs().to_radians().sin()))
                .collect(),
        });
    }
    // The initial slope: GZ ≈ GM_T · φ (φ in radians) near upright, drawn to one radian.
    let one_rad = 1.0f64.to_degrees();
    series.push(Series {
        label: "GM_T · φ at upright".to_owned(),
        points: vec![(0.0, 0.0), (one_rad, gm)],
    });
    let mut areas = Vec::new();
    let criteria = floating["criteria"]["checks"].as_array();
    for c in criteria.into_iter().flatten() {
        let what = c["what"].as_str().unwrap_or("");
        let Some(required) = c["required"].as_f64() else {
            continue;
        };
        if what.starts_with("GZ at a heel of 30") {
            series.push(Series {
                label: format!("least GZ from 30° ({} {lu})", u.length.fmt(required)),
                points: vec![(30.0, required), (90.0, required)],
            });
        }
    }
    if floating["stability"].is_object() {
        areas.push((0.0, 30.0, "area 0–30°".to_owned()));
        areas.push((30.0, 40.0, "30–40°".to_owned()));
    }
    let mut marks = Vec::new();
    if let Some(a) = floating["stability"]["angle_of_max_gz"].as_f64() {
        marks.push((a, "max GZ".to_owned()));
    }
    if let Some(a) = floating["stability"]["vanishing_angle"].as_f64() {
        marks.push((a, "vanishing".to_owned()));
    }
    let noise = 1e-9 * levers.iter().map(|p| p.1.abs()).fold(gm.abs(), f64::max);
    let mut panel = Panel {
        title: "Righting lever at constant displacement, trim free".to_owned(),
        x_label: "heel (°)".to_owned(),
        y_label: format!("GZ ({lu})"),
        series: Vec::new(),
        marks,
        areas,
        integer_x: false,
        include_zero: true,
        noise,
    };
    // Lengths only: no series is left out for being zero (a GZ of 0 is a finding).
    for mut s in series {
        for p in &mut s.points {
            p.1 *= u.length.factor;
        }
        panel.series.push(s);
    }
    panel.noise *= u.length.factor;
    Some(Chart {
        title: format!("{mesh} · {case} · stability"),
        panels: vec![panel],
    })
}
