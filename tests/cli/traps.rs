//! Inputs that are valid but almost certainly a mistake: each is refused with a message
//! that names the likely mistake, or computed with a warning that does; and the keys that
//! let a sidecar state levels as a project does (`sidecar_units`, `datum`).

use super::*;

/// A vertical wall 2 × 3 (width × height) in the mesh's unit `per_m` per metre, sill at
/// z = 0, facing +x, as one part named `wall`; returns nothing (the sidecar is the test's).
fn wall_in(f: &Folder, units_per_m: f64) {
    let s = units_per_m;
    let tris = shapes::rectangle(
        [0.0, 0.0, 0.0],
        [0.0, 2.0 * s, 0.0],
        [0.0, 0.0, 3.0 * s],
        2,
        3,
    );
    f.write("wall.stl", encode::stl_ascii(&[("wall", &tris[..])]));
}

/// Closed form of a rectangular wall of width 2 m under a head of `h` m of water:
/// F = ½ ρ g h² w.
fn wall_force(h: f64) -> f64 {
    0.5 * 1000.0 * G * h * h * 2.0
}

fn warnings(f: &Folder) -> Vec<String> {
    f.result("wall")["warnings"]
        .as_array()
        .expect("warnings")
        .iter()
        .map(|w| w.as_str().expect("text").to_owned())
        .collect()
}

#[test]
fn a_parts_entry_that_names_no_part_is_an_error_listing_the_parts() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    f.write(
        "wall.json",
        r#"{"units": "m", "liquid": {"level": 3.0, "density": 1000},
            "parts": {"wall_face": {"wet_side": "front"}, "*": {"wet_side": "front"}}}"#,
    );
    let run = f.calc(&["wall.stl"]);
    run.expect_code(1);
    assert!(
        run.stderr
            .contains("parts.\"wall_face\" names no part of the mesh (its parts are \"wall\")"),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("wall.stl"), "{}", run.stderr);
}

#[test]
fn levels_in_metres_on_a_millimetre_mesh_are_warned_and_sidecar_units_fix_them() {
    let f = Folder::new();
    wall_in(&f, 1000.0);
    f.write(
        "wall.json",
        r#"{"units": "mm", "wet_side": "front", "liquid": {"level": 3000, "density": 1000}}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    let w = warnings(&f);
    assert!(
        w.iter()
            .any(|w| w.contains("m above the top of the structure")
                && w.contains("add \"sidecar_units\": \"mm\"")),
        "{w:?}"
    );
    // The same numbers read in millimetres: a 3 m head on the wall, no warning.
    f.write(
        "wall.json",
        r#"{"units": "mm", "sidecar_units": "mm", "wet_side": "front",
            "liquid": {"level": 3000, "density": 1000}}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    assert_eq!(warnings(&f), Vec::<String>::new());
    let r = f.result("wall");
    let fx = r["cases"][0]["force"][0].as_f64().expect("Fx");
    assert!(
        (fx.abs() - wall_force(3.0)).abs() < 1e-9 * wall_force(3.0),
        "{fx}"
    );
    assert_eq!(r["inputs"]["sidecar_units"], "mm");
}

#[test]
fn levels_stated_as_project_elevations_with_a_datum() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    // The wall's sill (the mesh origin) stands at +102.50 in the site datum; the water at
    // +104.75 gives a 2.25 m head on it; the sweep runs over 102.5 … 105.5.
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front",
            "datum": {"name": "site datum", "mesh_origin_elevation": 102.5},
            "liquid": {"level": 104.75, "density": 1000},
            "sweep": {"from": 102.5, "to": 105.5, "step": 0.75}}"#,
    );
    let run = f.calc(&["wall.stl"]);
    run.expect_code(0);
    let r = f.result("wall");
    let fx = r["cases"][0]["force"][0].as_f64().expect("Fx");
    assert!(
        (fx.abs() - wall_force(2.25)).abs() < 1e-9 * wall_force(2.25),
        "{fx}"
    );
    // The document keeps the mesh's own elevations and says where the datum is.
    assert_eq!(r["inputs"]["datum"]["mesh_origin_elevation"], 102.5);
    let last = &r["cases"][0]["sweep"][4];
    assert!((last["level"].as_f64().expect("level") - 3.0).abs() < 1e-12);
    let top = last["force"][0].as_f64().expect("Fx").abs();
    assert!((top - wall_force(3.0)).abs() < 1e-9 * wall_force(3.0));
    // The terminal shows the project elevations the user wrote.
    let out = &run.stdout;
    assert!(out.contains("levels are elevations in site datum"), "{out}");
    assert!(out.contains("level 104.750 m"), "{out}");
    assert!(out.contains("from 102.500 to 105.500 m"), "{out}");
    assert_eq!(warnings(&f), Vec::<String>::new());
}

#[test]
fn a_free_surface_below_the_whole_structure_is_warned() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": -0.5, "density": 1000}}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    let w = warnings(&f);
    assert!(
        w.iter()
            .any(|w| w.contains("below the whole structure")
                && w.contains("every load of it is zero")),
        "{w:?}"
    );
}

#[test]
fn a_density_in_the_wrong_unit_is_warned_with_the_likely_one() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    for (rho, hint) in [
        ("1.0", "if it is in t/m³ or a specific gravity, write 1000"),
        ("62.4", "if it is in lb/ft³, write 1000"),
    ] {
        f.write(
            "wall.json",
            format!(
                r#"{{"units": "m", "wet_side": "front", "liquid": {{"level": 3.0, "density": {rho}}}}}"#
            ),
        );
        f.calc(&["wall.stl"]).expect_code(0);
        let w = warnings(&f);
        assert!(w.iter().any(|w| w.contains(hint)), "{rho}: {w:?}");
    }
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1025}}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    assert_eq!(warnings(&f), Vec::<String>::new());
}

#[test]
fn a_layer_interface_above_the_free_surface_is_warned() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front",
            "liquid": {"level": 2.0, "layers": [{"density": 880, "down_to": 2.5}, {"density": 1000}]}}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    let w = warnings(&f);
    assert!(
        w.iter()
            .any(|w| w.contains("layer 1 reaches down to 2.500 m") && w.contains("holds no liquid")),
        "{w:?}"
    );
}

#[test]
fn an_open_surface_with_its_wet_side_stated_gets_no_warning() {
    let f = Folder::new();
    wall_in(&f, 1.0);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1000}}"#,
    );
    let run = f.calc(&["wall.stl"]);
    run.expect_code(0);
    assert_eq!(warnings(&f), Vec::<String>::new());
    assert!(!run.stdout.contains("warning"), "{}", run.stdout);
    assert!(
        run.stdout.contains("open surface, wet on its front"),
        "{}",
        run.stdout
    );
}
