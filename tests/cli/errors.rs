//! Bad inputs: every one gets exit status 1, one message on stderr that names the file
//! (and, for a sidecar, the line and the key), no panic, and no result file.

use std::path::Path;
use std::time::{Duration, Instant};

use crate::{Folder, ascii_stl, binary_stl, box_tris, line_of, mentions_line, obj, plate_tris};

/// Runs `wetload calc MESH` in `f` and checks what every refused input must get: exit
/// status 1, exactly one non-empty line on stderr naming `file`, no panic, no result
/// file for the mesh and no temporary file left in `results/`. Returns stderr.
fn refused(f: &Folder, mesh: &str, file: &str) -> String {
    let run = f.calc(&[mesh]);
    run.expect_code(1);
    let err = run.stderr.clone();
    assert!(!err.contains("panicked"), "the program panicked:\n{err}");
    let lines: Vec<&str> = err.lines().filter(|l| !l.trim().is_empty()).collect();
    assert_eq!(
        lines.len(),
        1,
        "expected one message on stderr, got:\n{err}"
    );
    assert!(
        err.contains(file),
        "the message does not name {file}:\n{err}"
    );
    let stem = Path::new(mesh)
        .file_stem()
        .expect("test meshes have a stem")
        .to_string_lossy();
    assert!(
        !f.result_path(&stem).exists(),
        "a result was written for the refused {mesh}; stderr:\n{err}"
    );
    let leftovers: Vec<String> = f
        .results_listing()
        .into_iter()
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "temporary files left: {leftovers:?}");
    err
}

/// A valid closed box `tank.stl` with the sidecar `text`; checks the refusal names
/// `tank.json`, mentions every word of `words`, and (when given) the line.
fn sidecar_refused(text: &str, line: Option<usize>, words: &[&str]) -> String {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", text);
    let err = refused(&f, "tank.stl", "tank.json");
    if let Some(n) = line {
        assert!(
            mentions_line(&err, n),
            "the message does not give line {n}:\n{err}"
        );
    }
    for w in words {
        assert!(err.contains(w), "the message does not mention {w}:\n{err}");
    }
    err
}

/// `tank.<ext>` with `contents` and a valid sidecar; checks the refusal names the mesh
/// file and (when given) the line.
fn mesh_refused(ext: &str, contents: impl AsRef<[u8]>, line: Option<usize>) -> String {
    let f = Folder::new();
    let mesh = format!("tank.{ext}");
    f.write(&mesh, contents);
    f.write("tank.json", crate::BOX_SIDECAR);
    let err = refused(&f, &mesh, &mesh);
    if let Some(n) = line {
        assert!(
            mentions_line(&err, n),
            "the message does not give line {n}:\n{err}"
        );
    }
    err
}

// ---------------------------------------------------------------------------------------
// Sidecars.

#[test]
fn missing_units() {
    sidecar_refused(
        r#"{
  "liquid": {"level": -0.5, "density": 1000}
}
"#,
        None,
        &["units"],
    );
}

#[test]
fn unknown_units() {
    sidecar_refused(
        r#"{
  "units": "furlong",
  "liquid": {"level": -0.5, "density": 1000}
}
"#,
        Some(2),
        &["units", "furlong"],
    );
}

#[test]
fn json_syntax_error_gives_the_line() {
    // The comma after the level is missing.
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {"level": -0.5 "density": 1000}
}
"#,
        Some(3),
        &[],
    );
}

#[test]
fn unknown_key_is_named_with_its_line() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": -0.5,
    "densty": 1000
  }
}
"#,
        Some(5),
        &["densty"],
    );
}

#[test]
fn wrong_type_for_a_key() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": "high",
    "density": 1000
  }
}
"#,
        Some(4),
        &["level"],
    );
}

#[test]
fn wrong_type_for_a_top_level_key() {
    sidecar_refused(
        r#"{
  "units": "m",
  "gravity": "9.81",
  "liquid": {"level": -0.5, "density": 1000}
}
"#,
        Some(3),
        &["gravity"],
    );
}

#[test]
fn negative_density() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": -0.5,
    "density": -1000
  }
}
"#,
        Some(5),
        &["density", "-1000"],
    );
}

#[test]
fn zero_density() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": -0.5,
    "density": 0
  }
}
"#,
        Some(5),
        &["density"],
    );
}

#[test]
fn zero_gravity() {
    sidecar_refused(
        r#"{
  "units": "m",
  "gravity": 0,
  "liquid": {"level": -0.5, "density": 1000}
}
"#,
        Some(3),
        &["gravity"],
    );
}

#[test]
fn layers_out_of_order() {
    // down_to must decrease from top to bottom; -1.0 lies above -2.0.
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": -0.5,
    "layers": [{"density": 880, "down_to": -2.0}, {"density": 1000, "down_to": -1.0}, {"density": 1200}]
  }
}
"#,
        Some(5),
        &["layers"],
    );
}

#[test]
fn duplicate_case_names() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {"level": -0.5, "density": 1000},
  "cases": [
    {"name": "flood", "level": 0.5},
    {"name": "flood", "level": 1.0}
  ]
}
"#,
        Some(6),
        &["flood"],
    );
}

#[test]
fn duplicate_top_level_key() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {"level": -0.5, "density": 1000},
  "units": "mm"
}
"#,
        Some(4),
        &["units"],
    );
}

#[test]
fn duplicate_key_inside_liquid() {
    sidecar_refused(
        r#"{
  "units": "m",
  "liquid": {
    "level": -0.5,
    "density": 1000,
    "density": 900
  }
}
"#,
        Some(6),
        &["density"],
    );
}

#[test]
fn duplicate_liquid_name() {
    // A map keyed by name: a plain map would keep the second silently.
    sidecar_refused(
        r#"{
  "units": "m",
  "liquids": {
    "headwater": {"level": -0.5, "density": 1000},
    "headwater": {"level": 0.5, "density": 1000}
  }
}
"#,
        Some(5),
        &["headwater"],
    );
}

// ---------------------------------------------------------------------------------------
// Non-finite coordinates.

#[test]
fn nan_in_ascii_stl() {
    let mut tris = box_tris();
    tris[3][1][0] = f64::NAN;
    let text = ascii_stl("tank", &tris);
    // The facet's normal is written as 0 0 0 (not finite), so the first NaN is the vertex.
    let line = line_of(&text, "NaN");
    let err = mesh_refused("stl", &text, Some(line));
    assert!(err.contains("NaN"), "the bad value is not quoted:\n{err}");
}

#[test]
fn lowercase_nan_and_inf_in_ascii_stl() {
    for bad in ["nan", "inf", "-inf", "1e999"] {
        let text = ascii_stl("tank", &box_tris());
        // The fourth vertex line: the first vertex of the second facet.
        let target = text
            .lines()
            .enumerate()
            .filter(|(_, l)| l.trim_start().starts_with("vertex"))
            .nth(3)
            .map(|(i, _)| i + 1)
            .expect("the box has 12 facets");
        let edited: Vec<String> = text
            .lines()
            .enumerate()
            .map(|(i, l)| {
                if i + 1 == target {
                    format!("      vertex 1 {bad} -3")
                } else {
                    l.to_owned()
                }
            })
            .collect();
        let edited = edited.join("\n") + "\n";
        assert!(
            edited
                .lines()
                .nth(target - 1)
                .is_some_and(|l| l.contains(bad))
        );
        let err = mesh_refused("stl", &edited, Some(target));
        assert!(
            err.contains(bad),
            "the bad value {bad} is not quoted:\n{err}"
        );
    }
}

/// The test box as OBJ with line `line` replaced by `replacement`.
fn obj_with_line(line: usize, replacement: &str) -> String {
    let text = obj("tank", &box_tris());
    let lines: Vec<&str> = text
        .lines()
        .enumerate()
        .map(|(i, l)| if i + 1 == line { replacement } else { l })
        .collect();
    lines.join("\n") + "\n"
}

#[test]
fn nan_and_inf_in_obj() {
    for (bad, value) in [
        ("v nan 0 0", "nan"),
        ("v 0 inf 0", "inf"),
        ("v 0 0 -inf", "-inf"),
    ] {
        let text = obj_with_line(2, bad);
        assert!(text.lines().nth(1) == Some(bad) && text.contains("\nf "));
        let err = mesh_refused("obj", &text, Some(2));
        assert!(
            err.contains(value),
            "the bad value {value} is not quoted:\n{err}"
        );
    }
}

/// Byte offset of coordinate `axis` of vertex `vertex` of facet `facet` in a binary STL:
/// 84 bytes of header and count, 50 per facet, 12 for the normal, 12 per vertex.
fn binary_coordinate(facet: usize, vertex: usize, axis: usize) -> usize {
    84 + 50 * facet + 12 + 12 * vertex + 4 * axis
}

#[test]
fn nan_and_inf_in_binary_stl() {
    for (bad, name) in [(f32::NAN, "nan"), (f32::INFINITY, "inf")] {
        let mut bytes = binary_stl(&box_tris());
        let at = binary_coordinate(4, 1, 1);
        bytes[at..at + 4].copy_from_slice(&bad.to_le_bytes());
        let err = mesh_refused("stl", &bytes, None);
        assert!(
            err.to_lowercase().contains(name),
            "the bad value {name} is not quoted:\n{err}"
        );
    }
}

// ---------------------------------------------------------------------------------------
// Truncated, lying and empty files.

#[test]
fn truncated_binary_stl() {
    let bytes = binary_stl(&box_tris());
    mesh_refused("stl", &bytes[..bytes.len() - 25], None);
}

#[test]
fn truncated_binary_stl_whose_header_starts_with_solid() {
    // Some CAD systems write `solid` into a binary header; cut short, it is neither format.
    let bytes = shapes::encode::stl_binary(&box_tris(), "solid exported by a CAD");
    mesh_refused("stl", &bytes[..bytes.len() - 25], None);
}

#[test]
fn binary_stl_shorter_than_its_header() {
    let bytes = binary_stl(&box_tris());
    mesh_refused("stl", &bytes[..50], None);
}

/// 80 header bytes, a count of 4 000 000 000 facets, and 16 bytes of one facet: 100 bytes.
fn lying_header() -> Vec<u8> {
    let mut bytes = vec![b' '; 80];
    bytes[..9].copy_from_slice(b"wetload x");
    bytes.extend_from_slice(&4_000_000_000u32.to_le_bytes());
    bytes.extend_from_slice(&[0u8; 16]);
    assert_eq!(bytes.len(), 100);
    bytes
}

#[test]
fn header_claiming_four_billion_facets_is_refused_fast() {
    let f = Folder::new();
    f.write("tank.stl", lying_header());
    f.write("tank.json", crate::BOX_SIDECAR);
    let start = Instant::now();
    refused(&f, "tank.stl", "tank.stl");
    // Trusting the count would mean reading (or allocating for) 200 GB.
    assert!(
        start.elapsed() < Duration::from_secs(10),
        "took {:?}",
        start.elapsed()
    );
}

#[cfg(unix)]
#[test]
fn header_claiming_four_billion_facets_needs_little_memory() {
    // Under a 1 GiB address-space limit an allocation sized from the header would abort.
    let f = Folder::new();
    f.write("tank.stl", lying_header());
    f.write("tank.json", crate::BOX_SIDECAR);
    let exe = assert_cmd::cargo::cargo_bin!("wetload");
    let out = std::process::Command::new("sh")
        .arg("-c")
        .arg("ulimit -v 1048576 && exec \"$0\" calc tank.stl")
        .arg(exe)
        .current_dir(f.root())
        .output()
        .expect("sh starts");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "stderr:\n{err}");
    assert!(
        err.contains("tank.stl") && !err.contains("panicked"),
        "{err}"
    );
    assert!(!f.result_path("tank").exists());
}

#[test]
fn empty_ascii_stl() {
    mesh_refused("stl", "solid x\nendsolid x\n", None);
}

#[test]
fn empty_binary_stl() {
    mesh_refused("stl", binary_stl(&[]), None);
}

#[test]
fn obj_without_faces() {
    mesh_refused("obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\n", None);
}

// ---------------------------------------------------------------------------------------
// OBJ face indices.

/// Four vertices and one good face, then `face` on line 6.
fn obj_with_face(face: &str) -> String {
    format!("v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 3 2\n{face}\n")
}

#[test]
fn obj_face_index_out_of_range() {
    mesh_refused("obj", obj_with_face("f 1 2 5"), Some(6));
}

#[test]
fn obj_face_index_zero() {
    mesh_refused("obj", obj_with_face("f 0 2 3"), Some(6));
}

#[test]
fn obj_negative_face_index_too_far_back() {
    // Four vertices are defined, so -5 points before the first.
    mesh_refused("obj", obj_with_face("f -1 -2 -5"), Some(6));
}

// ---------------------------------------------------------------------------------------
// Open meshes and the wet side.

fn plate_refused(sidecar: &str) -> String {
    let f = Folder::new();
    f.write("plate.stl", binary_stl(&plate_tris()));
    f.write("plate.json", sidecar);
    refused(&f, "plate.stl", "plate.stl")
}

#[test]
fn open_mesh_without_wet_side() {
    let err = plate_refused(
        r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000}}
"#,
    );
    assert!(err.contains("wet_side"), "no hint at wet_side:\n{err}");
}

#[test]
fn outside_on_an_open_mesh() {
    let err = plate_refused(
        r#"{"units": "m", "wet_side": "outside", "liquid": {"level": 1.0, "density": 1000}}
"#,
    );
    assert!(err.contains("outside"), "{err}");
}

#[test]
fn inside_on_an_open_mesh() {
    let err = plate_refused(
        r#"{"units": "m", "wet_side": "inside", "liquid": {"level": 1.0, "density": 1000}}
"#,
    );
    assert!(err.contains("inside"), "{err}");
}

// ---------------------------------------------------------------------------------------
// Files that are missing, unreadable or not meshes.

#[test]
fn missing_sidecar() {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    let err = refused(&f, "tank.stl", "tank.stl");
    assert!(
        err.contains("tank.json"),
        "the missing sidecar is not named:\n{err}"
    );
}

#[test]
fn mesh_that_does_not_exist() {
    let f = Folder::new();
    f.write("ghost.json", crate::BOX_SIDECAR);
    refused(&f, "ghost.stl", "ghost.stl");
}

#[test]
fn mesh_path_that_is_a_folder() {
    let f = Folder::new();
    std::fs::create_dir(f.path("folder.stl")).expect("the temp folder is writable");
    f.write("folder.json", crate::BOX_SIDECAR);
    refused(&f, "folder.stl", "folder.stl");
}

#[test]
fn unknown_extension_passed_explicitly() {
    let f = Folder::new();
    f.write("tank.ply", binary_stl(&box_tris()));
    f.write("tank.json", crate::BOX_SIDECAR);
    refused(&f, "tank.ply", "tank.ply");
}
