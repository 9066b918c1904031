//! Level sweeps against separate single calculations and closed forms.
//!
//! A sweep computes its levels in one pass (`hydro::sweep`), not level by level; every step
//! must equal a single calculation at that level, whose own results the other modules check
//! against outside references, to round-off. "Round-off" is measured against each
//! quantity's scale over the sweep (the largest Σ|facet force| for forces, times the
//! extent for moments, the bounding volume for volumes), since a component that is zero
//! in exact arithmetic (the horizontal force on a closed body) has no relative error.

use serde_json::Value;
use wetload::compute::{MeshResult, SweepStep};
use wetload::mesh::Mesh;

use crate::support::{G, abs, parts, rel, run, single};

/// Relative round-off allowed between a sweep step and a single calculation.
const ROUND_OFF: f64 = 1e-12;

/// The sidecar `json` with the sweep removed and the swept liquid's level set to `level`.
fn at_level(json: &str, liquid: &str, level: f64) -> String {
    let mut v: Value = serde_json::from_str(json).expect("test sidecar is JSON");
    let o = v.as_object_mut().expect("object");
    o.remove("sweep");
    if let Some(ls) = o.get_mut("liquids") {
        ls[liquid]["level"] = level.into();
    } else {
        o.get_mut("liquid").expect("liquid")["level"] = level.into();
    }
    v.to_string()
}

/// Compares every step of the sweep of `json` on `mesh` with a single calculation.
fn sweep_equals_single_calcs(label: &str, mesh: &Mesh, json: &str, liquid: &str) -> MeshResult {
    let r = run(mesh, json);
    let steps: &[SweepStep] = r.cases[0].sweep.as_deref().expect("a sweep");
    assert!(steps.len() > 10, "{label}: a real sweep");
    let singles: Vec<MeshResult> = steps
        .iter()
        .map(|s| run(mesh, &at_level(json, liquid, s.level)))
        .collect();
    let bb = r.inputs.bounding_box;
    let size: Vec<f64> = (0..3).map(|k| bb[1][k] - bb[0][k]).collect();
    let extent = size.iter().map(|x| x * x).sum::<f64>().sqrt();
    let bulk: f64 = size.iter().map(|x| x.max(1e-3)).product();
    let f_scale = singles
        .iter()
        .map(|s| s.cases[0].loads.uplift + s.cases[0].loads.downthrust)
        .chain(singles.iter().map(|s| {
            let f = s.cases[0].loads.force;
            f.iter().map(|x| x.abs()).sum()
        }))
        .fold(1.0, f64::max);
    let area = singles
        .iter()
        .map(|s| s.cases[0].loads.wetted_area)
        .fold(1e-9, f64::max);
    let mut worst = [0.0f64; 5];
    for (s, single) in steps.iter().zip(&singles) {
        let l = &single.cases[0].loads;
        let mut note = |i: usize, a: f64, b: f64, scale: f64| {
            worst[i] = worst[i].max((a - b).abs() / scale);
        };
        for k in 0..3 {
            note(0, s.force[k], l.force[k], f_scale);
            note(1, s.moment[k], l.moment[k], f_scale * extent);
        }
        note(0, s.uplift, l.uplift, f_scale);
        note(0, s.downthrust, l.downthrust, f_scale);
        note(2, s.wetted_area, l.wetted_area, area);
        match (s.submerged_volume, l.submerged_volume) {
            (Some(a), Some(b)) => note(3, a, b, bulk),
            (None, None) => {}
            other => panic!("{label}: volumes differ in kind at {}: {other:?}", s.level),
        }
        for (name, a) in &s.axis_moments {
            let b = &l.axis_moments[name];
            note(1, a.moment, b.moment, f_scale * extent);
            match (a.miss_distance, b.miss_distance) {
                (Some(x), Some(y)) => {
                    // The miss distance is a ratio of sums: it inherits their relative
                    // error over |F|, which is small only while |F| is not.
                    let f = l.force.iter().map(|x| x * x).sum::<f64>().sqrt();
                    if f > 1e-6 * f_scale {
                        note(4, x, y, extent * f_scale / f);
                    }
                }
                (None, None) => {}
                other => panic!("{label}: miss distances differ at {}: {other:?}", s.level),
            }
        }
    }
    for (i, what) in [
        "forces",
        "moments",
        "wetted area",
        "submerged volume",
        "miss distance",
    ]
    .iter()
    .enumerate()
    {
        abs(
            &format!("{label}: sweep vs single calcs, {what} (over scale)"),
            worst[i],
            0.0,
            ROUND_OFF,
        );
    }
    r
}

#[test]
fn sweep_of_a_closed_body_in_layers_under_gas_equals_single_calcs() {
    // A wobbly sphere (closed, submerged volume reported) through oil over water over
    // brine, with 3 kPa of gas: levels from below its keel to above its top.
    let body = shapes::perturb(&shapes::icosphere([1.0, -2.0, 5.0], 1.5, 4), 0.02, 11);
    let json = r#"{"units": "m", "moment_about": [0.5, 0.0, 4.0],
        "liquid": {"level": 5.0, "surface_pressure": 3000,
                   "layers": [{"density": 880, "down_to": 5.4},
                              {"density": 1000, "down_to": 4.2},
                              {"density": 1180}]},
        "axes": {"keel": {"point": [1.0, 0.0, 3.5], "direction": [1.0, 1.0, 0.0]}},
        "sweep": {"from": 3.0, "to": 7.0, "step": 0.1}}"#;
    let r = sweep_equals_single_calcs("sphere in layers", &single(body), json, "liquid");
    assert_eq!(r.cases[0].sweep.as_ref().map(Vec::len), Some(41));
}

#[test]
fn sweep_of_headwater_on_a_two_sided_wall_equals_single_calcs() {
    // Headwater on the upstream face (swept), tailwater fixed on the downstream face, in
    // millimetres with +y up, so units and the frame are exercised too.
    // Wound towards −x (upstream), as in D2 of closed_form.
    let up = shapes::rectangle(
        [0.0, 0.0, 0.0],
        [0.0, 0.0, 1000.0],
        [0.0, 8000.0, 0.0],
        2,
        16,
    );
    let up = shapes::perturb(&up, 20.0, 4);
    let down = shapes::translate(&up, [400.0, 0.0, 0.0]);
    let json = r#"{"units": "mm", "up": "+y",
        "liquids": {"headwater": {"level": 6.0, "density": 1000},
                    "tailwater": {"level": 2.0, "density": 1000}},
        "parts": {"upstream": {"liquid": "headwater", "wet_side": "front"},
                  "downstream": {"liquid": "tailwater", "wet_side": "back"}},
        "axes": {"toe": {"point": [0.4, 0.0, 0.0], "direction": [0.0, 0.0, 1.0]}},
        "sweep": {"liquid": "headwater", "from": 0.0, "to": 8.5, "step": 0.25}}"#;
    let mesh = parts(vec![("upstream", up), ("downstream", down)]);
    sweep_equals_single_calcs("two-sided wall", &mesh, json, "headwater");
}

#[test]
fn sweep_of_a_box_follows_archimedes_and_governs_at_the_deepest_level() {
    // Closed form: a 2 × 3 × 2 m box with its base at z = 0 displaces V(L) = 6·clamp(L, 0, 2)
    // m³ and carries F_z = ρ g V(L) (uplift ρ g·6·clamp(L) on its base, no downthrust until
    // the top is under, then ρ g·6·(L − 2) on the top).
    let body = shapes::box_solid([-1.0, -1.5, 0.0], [1.0, 1.5, 2.0], 4);
    let json = r#"{"units": "m", "liquid": {"level": 1.0, "density": 1025},
        "sweep": {"from": -0.5, "to": 3.0, "step": 0.125}}"#;
    let r = run(&single(body), json);
    let c = &r.cases[0];
    for s in c.sweep.as_deref().expect("sweep") {
        let v = 6.0 * s.level.clamp(0.0, 2.0);
        let scale = 1025.0 * G * 12.0;
        abs(
            &format!("box sweep L={}: V", s.level),
            s.submerged_volume.expect("closed"),
            v,
            1e-13 * 12.0,
        );
        abs(
            &format!("box sweep L={}: F_z = ρgV", s.level),
            s.force[2],
            1025.0 * G * v,
            1e-13 * scale,
        );
        abs(
            &format!("box sweep L={}: uplift = ρg·6·max(L, 0)", s.level),
            s.uplift,
            1025.0 * G * 6.0 * s.level.max(0.0),
            1e-13 * scale,
        );
    }
    let g = c.sweep_governing.as_ref().expect("governing values");
    // Buoyancy stops growing once the box is under (L = 2 m); the largest value is first
    // reached there, and the uplift on the base keeps growing to the top of the sweep.
    rel("governing F_z", g.force_z.value, 1025.0 * G * 12.0, 1e-13);
    abs("governing F_z level", g.force_z.level, 2.0, 0.0);
    rel("governing uplift", g.uplift.value, 1025.0 * G * 18.0, 1e-13);
    abs("governing uplift level", g.uplift.level, 3.0, 0.0);
    rel(
        "governing volume",
        g.submerged_volume.expect("closed").value,
        12.0,
        1e-13,
    );
}

/// An empty closed box 2 × 3 × 4 m, base at z = 0, held down by 200 kN and required to
/// have 1.5 against flotation, with the water level swept over its height in 0.5 m steps.
/// Closed form: the net uplift is U(z) = ρ g A z (A = 6 m² of base), so FS = R / U falls to
/// 1.5 at z* = R / (1.5 ρ g A) = 200 000 / (1.5 · 1000 · 9.80665 · 6) = 2.26604… m, between
/// the steps at 2.0 and 2.5 m.
#[test]
fn the_level_where_the_flotation_factor_falls_to_the_required_one() {
    let mesh = single(shapes::box_solid([0.0; 3], [2.0, 3.0, 4.0], 3));
    let json = r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000},
        "flotation": {"resisting": {"structure": 200000}, "required_factor": 1.5},
        "sweep": {"from": 0.0, "to": 4.0, "step": 0.5}}"#;
    let r = run(&mesh, json);
    let g = r.cases[0].sweep_governing.as_ref().expect("governing");
    let limit = g
        .flotation_limit
        .expect("a check")
        .expect("the factor falls short");
    let z = 200_000.0 / (1.5 * 1000.0 * G * 6.0);
    abs("limit level", limit.level, z, 1e-9);
    assert_eq!(limit.between, [2.0, 2.5]);
    assert_eq!(limit.required_factor, 1.5);

    // Held down by more than the whole box can lift (ρ g V = 235.4 kN < 1.5 × 1 MN):
    // the factor never falls to the requirement.
    let strong = json.replace("200000", "1000000");
    let r = run(&mesh, &strong);
    let g = r.cases[0].sweep_governing.as_ref().expect("governing");
    assert_eq!(g.flotation_limit, Some(None));
    // Without a flotation check, no limit is reported at all.
    let none = r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000},
        "sweep": {"from": 0.0, "to": 4.0, "step": 0.5}}"#;
    let r = run(&mesh, none);
    assert_eq!(
        r.cases[0]
            .sweep_governing
            .as_ref()
            .expect("governing")
            .flotation_limit,
        None
    );
}
