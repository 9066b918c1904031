//! The pressure diagram (`results/<stem>[.<case>].section.svg`): written per case with the
//! field exports, removed with its case, its named sections, their errors, and its units.

use std::fs;

use super::{Folder, G, mentions_line, obj};

/// A 2 m wide wall in the plane x = 0 from z = −3 to 0, its front (+x) towards the liquid.
fn wall(f: &Folder) {
    let tris = shapes::rectangle([0.0, 0.0, -3.0], [0.0, 2.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
    f.write("wall.obj", obj("wall", &tris));
}

fn svg(f: &Folder, name: &str) -> String {
    let p = f.path("results").join(name);
    fs::read_to_string(&p).unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()))
}

#[test]
fn each_case_gets_its_diagram_and_loses_it_with_the_case() {
    let f = Folder::new();
    wall(&f);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
  "cases": [{"name": "normal", "level": -1.0}, {"name": "flood", "density": 1025}],
  "sections": {"quarter": {"point": [0, 0.5, 0], "normal": [0, 1, 0]}}}"#,
    );
    f.calc(&["wall.obj"]).expect_code(0);
    let listing = f.results_listing();
    for name in ["wall.normal.section.svg", "wall.flood.section.svg"] {
        assert!(listing.contains(&name.to_owned()), "{listing:?}");
    }
    // Closed form: p = ρ g h at the foot of the wall, h = 2 m and 3 m below the surface.
    let normal = svg(&f, "wall.normal.section.svg");
    let flood = svg(&f, "wall.flood.section.svg");
    assert!(normal.contains(&format!(">{:.2} kPa<", 1000.0 * G * 2.0 / 1000.0)));
    assert!(flood.contains(&format!(">{:.2} kPa<", 1025.0 * G * 3.0 / 1000.0)));
    for text in [&normal, &flood] {
        assert!(text.contains("Section through the resultant"));
        assert!(text.contains("Section \u{201c}quarter\u{201d}"));
        assert!(text.contains("Hydrostatic pressure only"));
    }
    let page = svg(&f, "report.html");
    assert_eq!(page.matches("<figure class=\"diagram\">").count(), 2);

    // One case left: its diagram is `wall.section.svg`, the per-case ones go.
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
    );
    f.calc(&["wall.obj"]).expect_code(0);
    let listing = f.results_listing();
    let diagrams: Vec<&String> = listing
        .iter()
        .filter(|n| n.ends_with(".section.svg"))
        .collect();
    assert_eq!(diagrams, ["wall.section.svg"]);
    assert!(!svg(&f, "wall.section.svg").contains("quarter"));

    // No field exports: no diagram either.
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
  "field_exports": "never"}"#,
    );
    f.calc(&["wall.obj"]).expect_code(0);
    assert!(
        !f.results_listing()
            .iter()
            .any(|n| n.ends_with(".section.svg"))
    );
}

#[test]
fn the_diagram_follows_the_units_option() {
    let f = Folder::new();
    wall(&f);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
    );
    f.calc(&["--units", "us", "wall.obj"]).expect_code(0);
    let text = svg(&f, "wall.section.svg");
    // 1 psi = 6894.757 Pa (the pound-force and the inch by definition).
    let psi = 1000.0 * G * 3.0 / 6_894.757_293_168;
    assert!(text.contains(&format!(">{psi:.3} psi<")), "{psi:.3} psi");
    assert!(!text.contains("kPa"));
}

#[test]
fn a_section_that_is_not_vertical_names_the_file_line_and_key() {
    let f = Folder::new();
    wall(&f);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
  "sections": {
    "slant": {"point": [0, 1, 0],
              "normal": [1, 0, 1]}}}"#,
    );
    let run = f.calc(&["wall.obj"]);
    run.expect_code(1);
    let e = &run.stderr;
    assert!(e.contains("wall.json"), "{e}");
    assert!(mentions_line(e, 4), "{e}");
    assert!(e.contains("sections.slant.normal"), "{e}");
    assert!(e.contains("not horizontal"), "{e}");
    assert!(
        !f.results_listing()
            .iter()
            .any(|n| n.ends_with(".section.svg"))
    );
}
