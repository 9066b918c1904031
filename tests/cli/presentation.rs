//! What the reports show: one unit and one number of decimals per quantity, the unit
//! system chosen on the command line for every report, the horizontal force first in the
//! watcher's line.

use super::*;

/// A vertical wall 2 m wide and 3 m high, sill at z = 0, facing +x (front), with the
/// liquid up to its top: F = ½ ρ g H² w = ½ · 1000 · 9.80665 · 9 · 2 = 88 259.85 N
/// horizontally (closed form of a rectangular wall).
fn wall(f: &Folder) -> f64 {
    let tris = shapes::rectangle([0.0, 0.0, 0.0], [0.0, 2.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
    f.write("wall.stl", encode::stl_ascii(&[("wall", &tris[..])]));
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1000}}"#,
    );
    0.5 * 1000.0 * G * 9.0 * 2.0
}

/// Newtons in kips (1 kip = 1000 lbf = 4448.2216152605 N, exact by definition).
fn kip(n: f64) -> f64 {
    n / 4_448.221_615_260_5
}

#[test]
fn calc_in_us_units_shows_density_and_gravity_in_us_units_too() {
    let f = Folder::new();
    let force = wall(&f);
    for flag in ["us", "US", "Us"] {
        let run = f.calc(&["wall.stl", "--units", flag]);
        run.expect_code(0);
        let out = &run.stdout;
        // 1000 kg/m³ = 62.43 lb/ft³; 9.80665 m/s² = 32.174 ft/s² (exact definitions).
        assert!(out.contains("62.43 lb/ft³"), "{out}");
        assert!(out.contains("32.174 ft/s²"), "{out}");
        assert!(out.contains(&format!("{:.2} kip", kip(force))), "{out}");
        assert!(!out.contains("kg/m³") && !out.contains(" kN"), "{out}");
    }
}

#[test]
fn the_watch_line_leads_with_the_horizontal_force_in_the_chosen_units() {
    let f = Folder::new();
    let force = wall(&f);
    let run = Run::from(
        f.wetload()
            .args(["watch", ".", "--once", "--units", "US"])
            .output(),
    );
    run.expect_code(0);
    let line = run
        .stdout
        .lines()
        .find(|l| l.trim_start().starts_with("default"))
        .unwrap_or_else(|| panic!("no case line:\n{}", run.stdout));
    assert!(
        line.contains(&format!("horizontal {:.2} kip", kip(force))),
        "{line}"
    );
    assert!(line.find("horizontal") < line.find("vertical"), "{line}");

    let g = Folder::new();
    wall(&g);
    let run = Run::from(g.wetload().args(["watch", ".", "--once"]).output());
    run.expect_code(0);
    assert!(
        run.stdout
            .contains(&format!("horizontal {:.2} kN", force / 1e3)),
        "{}",
        run.stdout
    );
}

#[test]
fn a_moment_that_grows_in_magnitude_is_marked_as_growth_with_its_sign() {
    let f = Folder::new();
    // Moments about the sill line (the y axis) of the wall above: the liquid on its +x
    // face pushes it towards −x at heights z > 0, so (z ẑ) × (−F x̂) = −z F ŷ: the moment
    // about +y is −ρ g w H³ / 6, and its magnitude grows with the level (H = 2 m, then 3 m).
    wall(&f);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 2.0, "density": 1000},
            "axes": {"sill": {"point": [0, 0, 0], "direction": [0, 1, 0]}}}"#,
    );
    Run::from(f.wetload().args(["watch", ".", "--once"]).output()).expect_code(0);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1000},
            "axes": {"sill": {"point": [0, 0, 0], "direction": [0, 1, 0]}}}"#,
    );
    let run = Run::from(f.wetload().args(["watch", ".", "--once"]).output());
    run.expect_code(0);
    let axis = run
        .stdout
        .lines()
        .find(|l| l.contains("axis sill"))
        .unwrap_or_else(|| panic!("no axis line:\n{}", run.stdout));
    // |M| = ρ g w H³ / 6: 2 → 3 m multiplies it by 27/8, a growth of 237.5 %.
    let m3 = 1000.0 * G * 2.0 * 27.0 / 6.0;
    assert!(
        axis.contains(&format!("-{:.2} kN·m ▲ grows 237.5%", m3 / 1e3)),
        "{axis}"
    );
}

#[test]
fn check_shows_where_the_holes_are_and_writes_them_for_a_viewer() {
    let f = Folder::new();
    // A 2 m cube in millimetres with one facet missing, and a sidecar giving the unit.
    let mut tris = shapes::box_solid([0.0; 3], [2000.0; 3], 2);
    let gone = tris.remove(5);
    f.write("tank.stl", encode::stl_ascii(&[("tank", &tris[..])]));
    f.write(
        "tank.json",
        r#"{"units": "mm", "liquid": {"level": 1.0, "density": 1000}}"#,
    );
    // Open, and its sidecar states no wet_side: calc would refuse the pair, so check
    // fails too, and says why.
    let run = Run::from(f.wetload().args(["check", "tank.stl"]).output());
    run.expect_code(1);
    let out = &run.stdout;
    assert!(
        out.contains("calc would refuse it") && out.contains("\"wet_side\": \"front\""),
        "{out}"
    );
    assert!(
        out.contains("where the holes and seams are (m, mesh axes)"),
        "{out}"
    );
    assert_eq!(out.matches("open edge of part tank").count(), 3, "{out}");
    // The missing facet's corners, in metres, are where the rim runs.
    for corner in gone {
        let shown = format!(
            "({:.3}, {:.3}, {:.3})",
            corner[0] / 1000.0,
            corner[1] / 1000.0,
            corner[2] / 1000.0
        );
        assert!(out.contains(&shown), "{shown} missing in {out}");
    }
    let obj = fs::read_to_string(f.path("results").join("tank.edges.obj")).expect("edges file");
    assert_eq!(obj.lines().filter(|l| l.starts_with("l ")).count(), 3);
    // Mended: the file goes.
    f.write(
        "tank.stl",
        encode::stl_ascii(&[("tank", &shapes::box_solid([0.0; 3], [2000.0; 3], 2)[..])]),
    );
    Run::from(f.wetload().args(["check", "tank.stl"]).output()).expect_code(0);
    assert!(!f.path("results").join("tank.edges.obj").exists());
}

#[test]
fn a_project_header_heads_the_page_and_every_result_file() {
    let f = Folder::new();
    let force = wall(&f);
    f.write(
        "wetload-project.json",
        r#"{"project": "Intake 2 stoplogs", "job_number": "J-204", "prepared_by": "M. T.", "revision": "A"}"#,
    );
    f.calc(&["wall.stl", "--units", "us"]).expect_code(0);
    let r = f.result("wall");
    assert_eq!(r["project"]["job_number"], "J-204");
    assert_eq!(r["project"]["revision"], "A");
    let page = fs::read_to_string(f.path("results").join("report.html")).expect("page");
    assert!(page.contains("<h1>Intake 2 stoplogs</h1>"), "title");
    assert!(page.contains("<tr><th>prepared by</th><td>M. T.</td></tr>"));
    // The page in the units asked for: |F| in kip.
    assert!(page.contains(&format!("<td>{:.2}</td>", kip(force))), "kip");

    // A header with a mistake stops the computation with the file and line named.
    f.write(
        "wetload-project.json",
        "{\n  \"project\": \"Intake 2\",\n  \"job\": \"J-204\"\n}",
    );
    let run = f.calc(&["wall.stl"]);
    run.expect_code(1);
    assert!(
        run.stderr
            .contains("project file wetload-project.json, line 3: unknown key \"job\""),
        "{}",
        run.stderr
    );
}

#[test]
fn the_contents_of_a_tank_are_named_as_the_liquid_inside() {
    let f = Folder::new();
    // A closed 2 × 2 × 2 m tank holding water 1.5 m deep: 6 m³ of liquid inside.
    let tank = shapes::box_solid([0.0; 3], [2.0; 3], 2);
    f.write("tank.stl", encode::stl_ascii(&[("tank", &tank[..])]));
    f.write(
        "tank.json",
        r#"{"units": "m", "wet_side": "inside", "liquid": {"level": 1.5, "density": 1000}}"#,
    );
    let run = f.calc(&["tank.stl"]);
    run.expect_code(0);
    assert!(
        run.stdout.contains("liquid inside 6.000 m³"),
        "{}",
        run.stdout
    );
    assert!(
        run.stdout.contains("its centroid (1.000, 1.000, 0.750)"),
        "{}",
        run.stdout
    );
    let page = fs::read_to_string(f.path("results").join("report.html")).expect("page");
    assert!(page.contains("centroid of the liquid inside"));
    assert!(!page.contains("centre of buoyancy"));
}

#[test]
fn exports_of_cases_that_no_longer_exist_are_removed() {
    let f = Folder::new();
    wall(&f);
    f.calc(&["wall.stl"]).expect_code(0);
    // The per-case exports (the mesh's history chart, drawn from the change log that calc
    // now writes too, belongs to no case).
    let exports = |f: &Folder| -> Vec<String> {
        f.results_listing()
            .into_iter()
            .filter(|n| {
                (n.ends_with(".vtp") || n.ends_with(".csv") || n.ends_with(".svg"))
                    && !n.ends_with(".nodal.csv")
            })
            .filter(|n| !n.ends_with(".history.svg"))
            .collect()
    };
    assert_eq!(exports(&f), ["wall.csv", "wall.section.svg", "wall.vtp"]);
    // One default case becomes two named ones: the default's files go.
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1000},
            "cases": [{"name": "normal"}, {"name": "flood", "level": 3.5}]}"#,
    );
    f.calc(&["wall.stl"]).expect_code(0);
    assert_eq!(
        exports(&f),
        [
            "wall.flood.csv",
            "wall.flood.section.svg",
            "wall.flood.vtp",
            "wall.normal.csv",
            "wall.normal.section.svg",
            "wall.normal.vtp"
        ]
    );
    // A case renamed: the old name's files go too.
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 3.0, "density": 1000},
            "cases": [{"name": "normal"}, {"name": "extreme", "level": 3.5}]}"#,
    );
    Run::from(f.wetload().args(["watch", ".", "--once"]).output()).expect_code(0);
    assert_eq!(
        exports(&f),
        [
            "wall.extreme.csv",
            "wall.extreme.section.svg",
            "wall.extreme.vtp",
            "wall.normal.csv",
            "wall.normal.section.svg",
            "wall.normal.vtp"
        ]
    );
    // Every remaining export agrees with the result beside it: the CSV rows sum to the
    // case force (closed form for the 3.5 m level on the 3 m wall: ½ρgw(3.5² − 0.5²)).
    let csv = fs::read_to_string(f.path("results").join("wall.extreme.csv")).expect("csv");
    let fx: f64 = csv
        .lines()
        .skip(1)
        .map(|l| {
            l.split(',')
                .nth(10)
                .expect("fx")
                .parse::<f64>()
                .expect("number")
        })
        .sum();
    let want = 0.5 * 1000.0 * G * 2.0 * (3.5 * 3.5 - 0.5 * 0.5);
    assert!((fx.abs() - want).abs() < 1e-9 * want, "{fx} vs {want}");
}

#[test]
fn watch_and_calc_name_files_the_same_way() {
    let f = Folder::new();
    wall(&f);
    f.write(
        "wall.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": "3", "density": 1000}}"#,
    );
    let calc = f.calc(&["wall.stl"]);
    calc.expect_code(1);
    let watch = Run::from(f.wetload().args(["watch", ".", "--once"]).output());
    watch.expect_code(1);
    // calc's one line, word for word in the watcher's output: the file named as given.
    let said = calc
        .stderr
        .lines()
        .find(|l| l.starts_with("error: sidecar wall.json, line 1, column "))
        .unwrap_or_else(|| panic!("{}", calc.stderr));
    assert!(
        said.ends_with("expected a number, found the text \"3\""),
        "{said}"
    );
    assert!(watch.stdout.contains(said), "{}", watch.stdout);
    let root = fs::canonicalize(f.root()).expect("canonical");
    assert!(
        !watch.stdout.contains(&root.display().to_string()),
        "{}",
        watch.stdout
    );
}
