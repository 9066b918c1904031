//! `wetload calc`: result files, `--json`, the summary, several meshes, usage errors.

use std::fs;

use serde_json::Value;

use crate::{BOX_SIDECAR, Folder, G, binary_stl, box_tris, obj, write_box};

/// `a` within `tol` of `b`, with the quantity named in the failure.
fn close(what: &str, a: f64, b: f64, tol: f64) {
    assert!(
        (a - b).abs() <= tol,
        "{what}: got {a}, expected {b} (± {tol})"
    );
}

/// A JSON number, or a failure naming `what`.
fn num(v: &Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {v}"))
}

/// A JSON `[x, y, z]`.
fn vec3(v: &Value, what: &str) -> [f64; 3] {
    let a = v
        .as_array()
        .unwrap_or_else(|| panic!("{what} is not an array: {v}"));
    assert_eq!(a.len(), 3, "{what} has not 3 components: {v}");
    [num(&a[0], what), num(&a[1], what), num(&a[2], what)]
}

fn close3(what: &str, a: [f64; 3], b: [f64; 3], tol: f64) {
    for k in 0..3 {
        close(&format!("{what}[{k}]"), a[k], b[k], tol);
    }
}

/// Whitespace runs collapsed to one space (the summary wraps long lines).
fn squash(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Checks the loads of the test box (2 × 3 × 4 m, corners (1, −2, −3) and (3, 1, 1))
/// under fresh water at z = −0.5, moments about the origin.
fn check_box_loads(loads: &Value, what: &str) {
    // Closed form: the box is 2.5 m deep, V = 2 · 3 · 2.5 = 15 m³, buoyancy ρgV straight
    // up through the centroid of the submerged block, (2, −0.5, −1.75).
    let rho = 1000.0;
    let v = 2.0 * 3.0 * 2.5;
    let fz = rho * G * v;
    let tol = 1e-9 * fz;
    let cob = [2.0, -0.5, -1.75];
    close3(
        &format!("{what}.force"),
        vec3(&loads["force"], "force"),
        [0.0, 0.0, fz],
        tol,
    );
    // M = r × F with r = cob and F = (0, 0, Fz): (r_y·Fz, −r_x·Fz, 0).
    close3(
        &format!("{what}.moment"),
        vec3(&loads["moment"], "moment"),
        [cob[1] * fz, -cob[0] * fz, 0.0],
        tol * 10.0,
    );
    close3(
        &format!("{what}.moment_about"),
        vec3(&loads["moment_about"], "moment_about"),
        [0.0; 3],
        0.0,
    );
    // Bottom 2 · 3 plus the four sides to 2.5 m: 6 + 2 · (3 · 2.5) + 2 · (2 · 2.5) = 31 m².
    close(
        &format!("{what}.wetted_area"),
        num(&loads["wetted_area"], "wetted_area"),
        31.0,
        1e-12 * 31.0,
    );
    // All of it acts on the bottom, at depth 2.5 m: ρg · 2.5 · 6 = ρgV.
    close(
        &format!("{what}.uplift"),
        num(&loads["uplift"], "uplift"),
        fz,
        tol,
    );
    close(
        &format!("{what}.downthrust"),
        num(&loads["downthrust"], "downthrust"),
        0.0,
        tol,
    );
    close(
        &format!("{what}.submerged_volume"),
        num(&loads["submerged_volume"], "submerged_volume"),
        v,
        1e-12 * v,
    );
    close3(
        &format!("{what}.centre_of_buoyancy"),
        vec3(&loads["centre_of_buoyancy"], "centre_of_buoyancy"),
        cob,
        1e-12,
    );
    let line = &loads["line_of_action"];
    // The vertical through the centre of buoyancy; its point nearest the origin is z = 0.
    close3(
        &format!("{what}.line_of_action.point"),
        vec3(&line["point"], "line_of_action.point"),
        [cob[0], cob[1], 0.0],
        1e-9,
    );
    close3(
        &format!("{what}.line_of_action.direction"),
        vec3(&line["direction"], "line_of_action.direction"),
        [0.0, 0.0, 1.0],
        1e-12,
    );
    close(
        &format!("{what}.line_of_action.couple"),
        num(&line["couple"], "line_of_action.couple"),
        0.0,
        tol,
    );
    // A box is not planar.
    assert_eq!(loads["centre_of_pressure"], Value::Null, "{what}");
}

#[test]
fn closed_box_under_water() {
    let f = Folder::new();
    write_box(&f, "tank");
    f.calc(&["tank.stl"]).expect_code(0);
    let doc = f.result("tank");
    assert_eq!(doc["schema"], 1);
    assert_eq!(doc["mesh"], "tank.stl");
    assert!(doc["warnings"].is_array(), "warnings: {}", doc["warnings"]);
    let cases = doc["cases"].as_array().expect("cases is an array");
    assert_eq!(cases.len(), 1);
    let case = &cases[0];
    assert_eq!(case["name"], "default");
    for key in [
        "force",
        "moment",
        "moment_about",
        "wetted_area",
        "uplift",
        "downthrust",
        "submerged_volume",
        "centre_of_buoyancy",
        "line_of_action",
        "centre_of_pressure",
        "parts",
    ] {
        assert!(
            case.as_object().is_some_and(|o| o.contains_key(key)),
            "cases[0] has no {key}"
        );
    }
    check_box_loads(case, "cases[0]");
    let parts = case["parts"].as_array().expect("parts is an array");
    assert_eq!(parts.len(), 1, "one part in a binary STL");
    // A binary STL is one part named after the file's stem.
    assert_eq!(parts[0]["name"], "tank");
    check_box_loads(&parts[0], "cases[0].parts[0]");
}

#[test]
fn same_box_as_obj_and_ascii_stl() {
    let f = Folder::new();
    f.write("a.obj", obj("hull", &box_tris()));
    f.write("a.json", BOX_SIDECAR);
    f.write("b.stl", crate::ascii_stl("hull", &box_tris()));
    f.write("b.json", BOX_SIDECAR);
    f.calc(&["a.obj", "b.stl"]).expect_code(0);
    for stem in ["a", "b"] {
        let doc = f.result(stem);
        check_box_loads(&doc["cases"][0], stem);
        assert_eq!(doc["cases"][0]["parts"][0]["name"], "hull", "{stem}");
    }
}

#[test]
fn upper_case_extension() {
    let f = Folder::new();
    f.write("Tank.STL", binary_stl(&box_tris()));
    f.write("Tank.json", BOX_SIDECAR);
    f.calc(&["Tank.STL"]).expect_code(0);
    let doc = f.result("Tank");
    assert_eq!(doc["mesh"], "Tank.STL");
    check_box_loads(&doc["cases"][0], "Tank");
}

#[test]
fn stored_stl_normals_are_ignored() {
    // The contract takes the side from the winding, never from stored normals; NaN
    // normals (as some exporters write for slivers) are not coordinates.
    let mut bytes = binary_stl(&box_tris());
    for facet in 0..12 {
        let at = 84 + 50 * facet;
        for k in 0..3 {
            bytes[at + 4 * k..at + 4 * k + 4].copy_from_slice(&f32::NAN.to_le_bytes());
        }
    }
    let f = Folder::new();
    f.write("tank.stl", &bytes);
    f.write("tank.json", BOX_SIDECAR);
    f.calc(&["tank.stl"]).expect_code(0);
    check_box_loads(&f.result("tank")["cases"][0], "tank");
}

#[test]
fn stale_stl_normals_are_reported_and_change_nothing() {
    // Five facets store the opposite of their winding's normal.
    let tris = box_tris();
    let mut bytes = binary_stl(&tris);
    for (facet, t) in tris.iter().enumerate().take(5) {
        let (a, b, c) = (t[0], t[1], t[2]);
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let n = [
            u[1] * v[2] - u[2] * v[1],
            u[2] * v[0] - u[0] * v[2],
            u[0] * v[1] - u[1] * v[0],
        ];
        let at = 84 + 50 * facet;
        for k in 0..3 {
            bytes[at + 4 * k..at + 4 * k + 4].copy_from_slice(&(-n[k] as f32).to_le_bytes());
        }
    }
    let f = Folder::new();
    f.write("tank.stl", &bytes);
    f.write("tank.json", BOX_SIDECAR);
    f.calc(&["tank.stl"]).expect_code(0);
    let result = f.result("tank");
    check_box_loads(&result["cases"][0], "tank");
    let warnings = result["warnings"].to_string();
    assert!(warnings.contains("5 stored STL normal(s)"), "{warnings}");
}

#[test]
fn json_flag_prints_exactly_the_result_document() {
    let f = Folder::new();
    write_box(&f, "tank");
    let run = f.calc(&["tank.stl", "--json"]);
    run.expect_code(0);
    let printed = run.stdout_json();
    assert!(
        printed.is_object(),
        "one mesh prints one document, not {printed}"
    );
    assert_eq!(printed, f.result("tank"));
}

#[test]
fn json_flag_with_two_meshes_prints_an_array() {
    let f = Folder::new();
    write_box(&f, "first");
    f.write("second.obj", obj("hull", &box_tris()));
    f.write(
        "second.json",
        r#"{"units": "m", "liquid": {"level": -2.0, "density": 1025}}"#,
    );
    let run = f.calc(&["first.stl", "second.obj", "--json"]);
    run.expect_code(0);
    let printed = run.stdout_json();
    let docs = printed.as_array().expect("an array for two meshes");
    assert_eq!(docs.len(), 2);
    assert_eq!(docs[0], f.result("first"));
    assert_eq!(docs[1], f.result("second"));
    assert_eq!(docs[1]["mesh"], "second.obj");
    // Closed form: 1 m deep, V = 2 · 3 · 1 m³, F = ρgV.
    let fz = num(&docs[1]["cases"][0]["force"][2], "force z");
    close("second force z", fz, 1025.0 * G * 6.0, 1e-9 * fz);
}

#[test]
fn a_bad_mesh_does_not_stop_the_others() {
    let f = Folder::new();
    write_box(&f, "good");
    let bytes = binary_stl(&box_tris());
    f.write("bad.stl", &bytes[..bytes.len() - 7]);
    f.write("bad.json", BOX_SIDECAR);

    // The bad one first, so the good one runs after a failure.
    let run = f.calc(&["bad.stl", "good.stl"]);
    run.expect_code(1);
    assert!(f.result_path("good").exists());
    assert!(!f.result_path("bad").exists());
    assert!(run.stdout.contains("good.stl"), "stdout:\n{}", run.stdout);
    assert!(run.stderr.contains("bad.stl"), "stderr:\n{}", run.stderr);
    assert!(!run.stderr.contains("good.stl"), "stderr:\n{}", run.stderr);
    assert!(!run.stderr.contains("panicked"), "stderr:\n{}", run.stderr);

    fs::remove_dir_all(f.path("results")).expect("results/ can be removed");
    let run = f.calc(&["good.stl", "bad.stl", "--json"]);
    run.expect_code(1);
    assert!(run.stderr.contains("bad.stl"), "stderr:\n{}", run.stderr);
    let printed = run.stdout_json();
    let docs = printed.as_array().expect("an array for two meshes asked");
    assert_eq!(docs.len(), 1, "only the good one has a result");
    assert_eq!(docs[0], f.result("good"));
    assert!(!f.result_path("bad").exists());

    // One mesh asked and it failed: nothing on stdout, the reason on stderr.
    let run = f.calc(&["bad.stl", "--json"]);
    run.expect_code(1);
    assert_eq!(run.stdout, "");
    assert!(
        run.stderr.contains("bad.stl"),
        "stderr:
{}",
        run.stderr
    );
}

const TWO_CASES: &str = r#"{
  "units": "m",
  "liquid": {"level": -0.5, "density": 1000},
  "cases": [
    {"name": "normal"},
    {"name": "flood", "level": 0.5}
  ]
}
"#;

#[test]
fn summary_names_mesh_and_cases_and_ends_with_the_caution() {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", TWO_CASES);
    let run = f.calc(&["tank.stl"]);
    run.expect_code(0);
    let out = &run.stdout;
    for word in ["tank.stl", "normal", "flood"] {
        assert!(
            out.contains(word),
            "the summary does not name {word}:\n{out}"
        );
    }
    let last = out
        .trim_end()
        .rsplit("\n\n")
        .next()
        .expect("rsplit yields at least one piece");
    assert!(
        squash(last).contains("licensed engineer"),
        "the summary does not end with the caution:\n{out}"
    );
    assert_eq!(f.result("tank")["cases"][1]["name"], "flood");
}

#[test]
fn summary_of_two_meshes_has_one_caution_at_the_end() {
    let f = Folder::new();
    write_box(&f, "first");
    f.write("second.stl", binary_stl(&box_tris()));
    f.write("second.json", TWO_CASES);
    let run = f.calc(&["first.stl", "second.stl"]);
    run.expect_code(0);
    let out = squash(&run.stdout);
    assert_eq!(
        out.matches("licensed engineer").count(),
        1,
        "{}",
        run.stdout
    );
    let caution = out.find("licensed engineer").expect("counted above");
    let first = out.find("first.stl").expect("first.stl is named");
    let second = out.find("second.stl").expect("second.stl is named");
    assert!(first < second && second < caution, "{}", run.stdout);
}

/// Names in `results/` that look like the writer's temporary files.
fn temp_files(f: &Folder) -> Vec<String> {
    f.results_listing()
        .into_iter()
        .filter(|n| n.starts_with(".wetload-") || n.ends_with(".tmp"))
        .collect()
}

#[test]
fn no_temporary_files_left_after_success_or_failure() {
    let f = Folder::new();
    write_box(&f, "tank");
    f.calc(&["tank.stl"]).expect_code(0);
    assert!(f.results_listing().contains(&"tank.json".to_owned()));
    assert!(temp_files(&f).is_empty());

    // A failing input next to it.
    f.write("broken.stl", "solid broken\nendsolid broken\n");
    f.write("broken.json", BOX_SIDECAR);
    f.calc(&["broken.stl", "tank.stl"]).expect_code(1);
    let listing = f.results_listing();
    assert!(listing.contains(&"tank.json".to_owned()));
    assert!(
        !listing.iter().any(|n| n.starts_with("broken")),
        "{listing:?}"
    );
    assert!(temp_files(&f).is_empty());
}

#[test]
fn a_result_that_cannot_be_written_is_an_error_and_leaves_no_temp_file() {
    let f = Folder::new();
    write_box(&f, "tank");
    // A folder where the result file should go: the final rename must fail.
    fs::create_dir_all(f.path("results").join("tank.json")).expect("temp folder writable");
    let run = f.calc(&["tank.stl"]);
    run.expect_code(1);
    assert!(run.stderr.contains("tank.json"), "stderr:\n{}", run.stderr);
    assert!(!run.stderr.contains("panicked"), "stderr:\n{}", run.stderr);
    assert!(temp_files(&f).is_empty(), "left: {:?}", temp_files(&f));
}

#[test]
fn a_second_run_overwrites_the_result() {
    let f = Folder::new();
    write_box(&f, "tank");
    f.calc(&["tank.stl"]).expect_code(0);
    check_box_loads(&f.result("tank")["cases"][0], "first run");

    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -2.0, "density": 1000}}"#,
    );
    f.calc(&["tank.stl"]).expect_code(0);
    let case = &f.result("tank")["cases"][0];
    // Closed form: now 1 m deep, V = 2 · 3 · 1 = 6 m³.
    close(
        "volume",
        num(&case["submerged_volume"], "volume"),
        6.0,
        1e-12,
    );
    let fz = num(&case["force"][2], "force z");
    close("force z", fz, 1000.0 * G * 6.0, 1e-9 * fz);
    assert!(temp_files(&f).is_empty(), "left: {:?}", temp_files(&f));
}

#[test]
fn usage_errors_exit_with_status_2() {
    let f = Folder::new();
    write_box(&f, "tank");
    let runs: [(&str, Vec<&str>); 4] = [
        ("no command", vec![]),
        ("calc without a mesh", vec!["calc"]),
        ("unknown flag", vec!["calc", "--frobnicate", "tank.stl"]),
        ("unknown command", vec!["frobnicate", "tank.stl"]),
    ];
    for (what, args) in runs {
        let out = f.wetload().args(&args).output().expect("wetload starts");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{what}: stderr:\n{err}");
        assert!(!err.trim().is_empty(), "{what}: no usage message");
        assert!(!err.contains("panicked"), "{what}: {err}");
    }
    assert!(
        !f.path("results").exists(),
        "a usage error computed something"
    );
}

#[test]
fn the_demo_folder() {
    let demo = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("meshes");
    let f = Folder::new();
    let mut meshes = Vec::new();
    for entry in fs::read_dir(&demo).expect("the demo folder exists") {
        let path = entry.expect("a readable entry").path();
        if !path.is_file() {
            continue; // e.g. a results/ folder left by a local run
        }
        let name = path
            .file_name()
            .expect("entries have names")
            .to_string_lossy()
            .into_owned();
        let copy = f.path(&name);
        fs::copy(&path, &copy).expect("the demo file copies");
        let lower = name.to_lowercase();
        if lower.ends_with(".stl") || lower.ends_with(".obj") {
            meshes.push(copy.to_string_lossy().into_owned());
        }
    }
    meshes.sort();
    assert_eq!(meshes.len(), 6, "the demo has six meshes: {meshes:?}");
    let args: Vec<&str> = meshes.iter().map(String::as_str).collect();
    let run = f.calc(&args);
    run.expect_code(0);
    assert!(!run.stderr.contains("panicked"));
    let listing = f.results_listing();
    let stems = [
        "caisson",
        "culvert",
        "pontoon",
        "radial_gate",
        "stoplog",
        "wet_well",
    ];
    for stem in stems {
        assert!(listing.contains(&format!("{stem}.json")), "{listing:?}");
    }
    for stem in stems {
        let doc = f.result(stem);
        assert_eq!(doc["schema"], 1, "{stem}");
        assert!(
            doc["mesh"].as_str().is_some_and(|m| m.starts_with(stem)),
            "{stem}: mesh {}",
            doc["mesh"]
        );
    }
    // Closed forms (meshes/README.md): the 10 × 6 m caisson of 150 t floats freely in fresh
    // water: the water's force is m g through G, the displacement m/ρ, upright
    // GM_T = T/2 + B²/(12T) − KG with T = m/(ρLB), and with G 0.05 m off the centre line it
    // lists to tan φ (GM_T + ½ BM_T tan² φ) = 0.05 (wall-sided, exact for a box while
    // neither deck edge nor bilge crosses the surface).
    let caisson = f.result("caisson");
    let case = &caisson["cases"][0];
    let force: Vec<f64> = (0..3)
        .map(|k| num(&case["force"][k], "caisson force"))
        .collect();
    let weight = 150_000.0 * G;
    close(
        "caisson |F| = m g",
        force.iter().map(|x| x * x).sum::<f64>().sqrt(),
        weight,
        1e-9 * weight,
    );
    let fl = &case["floating"];
    close(
        "caisson displacement",
        num(&fl["equilibrium"]["displacement"], "displacement"),
        150.0,
        1e-9 * 150.0,
    );
    let (t, kg) = (2.5, 1.9);
    let bm = 36.0 / (12.0 * t);
    let gm = t / 2.0 + bm - kg;
    close(
        "caisson upright GM_T",
        num(
            &fl["upright"]["metacentric_height"]["transverse"],
            "upright GM",
        ),
        gm,
        1e-9,
    );
    // tan φ by bisection on the wall-sided lever, which rises with φ here.
    let (mut lo, mut hi) = (0.0f64, 0.8f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid * (gm + 0.5 * bm * mid * mid) > 0.05 {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    close(
        "caisson list (towards +y: negative heel about +x)",
        num(&fl["equilibrium"]["heel"], "heel"),
        -lo.atan().to_degrees(),
        1e-6,
    );
    // Closed form (meshes/README.md): the 8 × 3 m hull floats 0.45 m deep in sea water,
    // V = 10.8 m³, buoyancy ρgV.
    let fz = num(
        &f.result("pontoon")["cases"][0]["force"][2],
        "pontoon force z",
    );
    close(
        "pontoon buoyancy",
        fz,
        1025.0 * G * 8.0 * 3.0 * 0.45,
        1e-9 * fz,
    );
    // Closed form (meshes/README.md): headwater 2.2 m and tailwater 0.8 m on a 3 m wide
    // stoplog, net F_x = ½ρgw(H₁² − H₂²); the sweep's largest F_x at its top level, 2.5 m.
    let stoplog = f.result("stoplog");
    let fx = num(&stoplog["cases"][0]["force"][0], "stoplog force x");
    close(
        "stoplog net F_x",
        fx,
        0.5 * 1000.0 * G * 3.0 * (2.2f64.powi(2) - 0.64),
        1e-9 * fx,
    );
    let gov = &stoplog["cases"][0]["sweep_governing"]["force_x"];
    let gx = num(&gov["value"], "governing F_x");
    close(
        "stoplog governing F_x",
        gx,
        0.5 * 1000.0 * G * 3.0 * (6.25 - 0.64),
        1e-9 * gx,
    );
    assert_eq!(gov["level"], 2.5);
    // The wet well's required factor comes from the preset it names, and says so.
    let fl = &f.result("wet_well")["cases"][0]["flotation"];
    assert_eq!(fl["required_factor"], 1.3);
    assert_eq!(fl["factor_preset"]["name"], "usace-em-1110-2-2100-usual");
    assert_eq!(fl["factor_preset"]["from_memory"], true);
    assert!(
        fl["formula"]
            .as_str()
            .is_some_and(|t| t.contains("EM 1110-2-2100") && t.contains("no code compliance")),
        "{fl}"
    );
}

#[test]
fn field_exports_can_be_turned_off_and_old_ones_are_removed() {
    let f = Folder::new();
    write_box(&f, "tank");
    f.calc(&["tank.stl"]).expect_code(0);
    let listing = f.results_listing();
    assert!(listing.contains(&"tank.vtp".to_owned()), "{listing:?}");
    assert!(listing.contains(&"tank.csv".to_owned()), "{listing:?}");

    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -0.5, "density": 1000}, "field_exports": "never"}"#,
    );
    f.calc(&["tank.stl"]).expect_code(0);
    let listing = f.results_listing();
    assert!(!listing.contains(&"tank.vtp".to_owned()), "{listing:?}");
    assert!(!listing.contains(&"tank.csv".to_owned()), "{listing:?}");
    // Turned off on purpose: no warning about it, and the loads are unchanged.
    let result = f.result("tank");
    assert_eq!(result["warnings"], serde_json::json!([]));
    check_box_loads(&result["cases"][0], "without exports");

    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -0.5, "density": 1000}, "field_exports": "sometimes"}"#,
    );
    let run = f.calc(&["tank.stl"]);
    run.expect_code(1);
    assert!(
        run.stderr.contains("field_exports") && run.stderr.contains("\"always\""),
        "{}",
        run.stderr
    );
}
