//! Hostile mesh files: lying headers, non-finite and overflowing coordinates, bad OBJ
//! indices, lines of absurd length, invalid UTF-8, truncation.

use crate::*;

const TEN_MB: usize = 10 * 1024 * 1024;

/// 80 header bytes, a count of 4 000 000 000 facets, and 16 bytes: 100 bytes in all.
fn lying_header(header: &[u8]) -> Vec<u8> {
    let mut b = vec![b' '; 80];
    b[..header.len()].copy_from_slice(header);
    b.extend_from_slice(&4_000_000_000u32.to_le_bytes());
    b.extend_from_slice(&[0u8; 16]);
    assert_eq!(b.len(), 100);
    b
}

#[test]
fn a_100_byte_binary_stl_claiming_four_billion_facets() {
    // Trusting the count would mean allocating 200 GB (or 7.2 GB for the f64 facets);
    // under the 1 GiB limit that aborts.
    for header in [&b"exported"[..], b"solid tank"] {
        let err = mesh_refused("stl", lying_header(header), &["4000000000"]);
        assert!(err.contains("100"), "{err}");
    }
}

/// Byte offset of coordinate `axis` of vertex `vertex` of facet `facet` in a binary STL.
fn binary_coordinate(facet: usize, vertex: usize, axis: usize) -> usize {
    84 + 50 * facet + 12 + 12 * vertex + 4 * axis
}

#[test]
fn non_finite_coordinates_in_binary_stl() {
    for value in [f32::NAN, f32::INFINITY, f32::NEG_INFINITY] {
        let mut bytes = binary_stl(&box_tris());
        let at = binary_coordinate(5, 2, 1);
        bytes[at..at + 4].copy_from_slice(&value.to_le_bytes());
        let err = mesh_refused("stl", bytes, &["facet 6 of 12", "not a finite number"]);
        assert!(err.contains(&value.to_string()), "{err}");
    }
}

/// The ASCII form of the box with the first vertex's y replaced by `token`.
fn ascii_with_coordinate(token: &str) -> String {
    let text = ascii_stl("hull", &box_tris());
    let first = text.find("vertex ").expect("a vertex") + "vertex ".len();
    let line_end = first + text[first..].find('\n').expect("line end");
    let mut coords: Vec<&str> = text[first..line_end].split_whitespace().collect();
    coords[1] = token;
    format!(
        "{}{}{}",
        &text[..first],
        coords.join(" "),
        &text[line_end..]
    )
}

/// The OBJ form of the box with the first vertex's y replaced by `token`.
fn obj_with_coordinate(token: &str) -> String {
    let text = obj("hull", &box_tris());
    let mut out = String::new();
    let mut done = false;
    for line in text.lines() {
        if !done && line.starts_with("v ") {
            let mut parts: Vec<&str> = line.split_whitespace().collect();
            parts[2] = token;
            out += &parts.join(" ");
            done = true;
        } else {
            out += line;
        }
        out.push('\n');
    }
    out
}

#[test]
fn non_finite_and_overflowing_coordinates_in_text_meshes() {
    for token in [
        "nan",
        "NaN",
        "inf",
        "-inf",
        "Infinity",
        "1e400",
        "-1e309",
        "1e99999999",
    ] {
        let err = mesh_refused(
            "stl",
            ascii_with_coordinate(token),
            &["not a finite number"],
        );
        assert!(err.contains("line 4"), "{token}: {err}");
        let err = mesh_refused("obj", obj_with_coordinate(token), &["not a finite number"]);
        assert!(err.contains("line"), "{token}: {err}");
    }
}

#[test]
fn coordinates_near_the_top_of_f64_are_refused_not_turned_into_infinite_loads() {
    // 1e307 is a finite f64, so the file reads; but the box's area (~1e614) and every
    // load overflow f64. Decided: refused with a message, never inf/NaN (or JSON null) in
    // a result. The same in any unit (mm shrinks it 1000-fold, still far beyond range).
    let scale = 1e307;
    let huge = shapes::box_solid(BOX_MIN.map(|c| c * scale), BOX_MAX.map(|c| c * scale), 1);
    for (ext, bytes) in [
        ("stl", ascii_stl("hull", &huge).into_bytes()),
        ("obj", obj("hull", &huge).into_bytes()),
    ] {
        let err = mesh_refused(ext, bytes, &["non-finite"]);
        assert!(err.contains("tank.json"), "names the sidecar too: {err}");
    }
    // One coordinate of 1e308 in an otherwise ordinary box.
    let err = mesh_refused("stl", ascii_with_coordinate("1e308"), &[]);
    assert!(!err.contains("NaN") && !err.contains("inf "), "{err}");
}

#[test]
fn the_largest_f32_coordinates_give_finite_loads() {
    // A binary STL cannot hold more than f32::MAX ≈ 3.4e38: every load of such a box
    // (~1e119 N, moments ~1e158 N·m) is within f64, so it computes, and every number in
    // the result is finite (JSON has no inf/NaN; serde would write null).
    let scale = 1e38;
    let big = shapes::box_solid(BOX_MIN.map(|c| c * scale), BOX_MAX.map(|c| c * scale), 1);
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&big));
    f.write("tank.json", SIDECAR);
    let run = f.calc_env(&["--json", "tank.stl"], &[]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON");
    let force = &doc["cases"][0]["force"];
    for k in 0..3 {
        for key in ["force", "moment"] {
            assert!(
                doc["cases"][0][key][k].as_f64().is_some_and(f64::is_finite),
                "{key}: {}",
                doc["cases"][0][key]
            );
        }
    }
    let fz = force[2].as_f64().expect("a finite number");
    // Archimedes, closed form: ρ g V, the box below the level (−0.5 m: its whole lower
    // part at this scale), from the corners as the file stores them (f32).
    let stored = |c: f64| f64::from(c as f32);
    let side = |k: usize| stored(BOX_MAX[k] * scale) - stored(BOX_MIN[k] * scale);
    let v = side(0) * side(1) * (-0.5 - stored(BOX_MIN[2] * scale));
    let want = 1000.0 * 9.80665 * v;
    assert!((fz - want).abs() <= 1e-9 * want, "{fz} vs {want}");
}

#[test]
fn obj_face_indices_zero_and_far_out_of_range() {
    let text = obj("hull", &box_tris());
    // The box's OBJ has 8 vertices; replace the first face.
    for (face, words) in [
        ("f 0 1 2", &["index 0"][..]),
        ("f 1 2 -1000000000", &["-1000000000", "out of range"]),
        ("f 1 2 1000000000", &["1000000000", "out of range"]),
        ("f 1 2 -9223372036854775808", &["out of range"]),
        ("f 1 2 99999999999999999999", &["99999999999999999999"]),
        ("f 1 2 4294967297", &["4294967297"]),
        ("f 1/2/3 x 3", &["`x`"]),
    ] {
        let first = text.find("\nf ").expect("a face") + 1;
        let end = first + text[first..].find('\n').expect("line end");
        let bad = format!("{}{face}{}", &text[..first], &text[end..]);
        let line = text[..first].lines().count() + 1;
        let err = mesh_refused("obj", bad, words);
        assert!(err.contains(&format!("line {line}")), "{face}: {err}");
    }
}

#[test]
fn a_ten_megabyte_single_line() {
    let long_name = "n".repeat(TEN_MB);
    let long_number = "7".repeat(TEN_MB);
    let tris = box_tris();
    // ASCII STL: a solid name (refused as a name), a vertex token (overflows f64), a
    // token that is not a number (quoted short).
    mesh_refused(
        "stl",
        format!("solid {long_name}\n{}", &ascii_stl("", &tris)[6..]),
        &["line 1", "1024 bytes"],
    );
    let err = mesh_refused("stl", ascii_with_coordinate(&long_number), &["line 4"]);
    assert!(err.len() < 1000, "the message quotes the token short");
    let err = mesh_refused(
        "stl",
        ascii_with_coordinate(&format!("{long_number}x")),
        &["line 4"],
    );
    assert!(err.len() < 1000, "the message quotes the token short");
    // OBJ: a group name, a coordinate, a comment with no face anywhere, a face line of
    // absurd length (5 million references: refused at the facet limit, set low here).
    mesh_refused(
        "obj",
        format!("g {long_name}\n{}", obj("hull", &tris)),
        &["line 1", "1024 bytes"],
    );
    mesh_refused("obj", obj_with_coordinate(&long_number), &["line 1"]);
    mesh_refused("obj", format!("#{long_name}\nv 0 0 0\n"), &["no facets"]);
    let f = Folder::new();
    let mut face = String::from("v 0 0 0\nv 1 0 0\nv 0 1 0\nf");
    while face.len() < TEN_MB {
        face.push_str(" 1 2 3");
    }
    f.write("tank.obj", face);
    f.write("tank.json", SIDECAR);
    refused_env(
        &f,
        "tank.obj",
        "tank.obj",
        &["line 4", "1000000 facets"],
        &[("WETLOAD_MAX_FACETS", "1000000")],
    );
    // Ten megabytes of bytes that are no format at all, in one line.
    mesh_refused("stl", vec![0xA5u8; TEN_MB], &["not a complete binary STL"]);
    mesh_refused("obj", vec![b'z'; TEN_MB], &["no facets"]);
}

#[test]
fn invalid_utf8_where_numbers_belong() {
    let mut stl = ascii_with_coordinate("1.25").into_bytes();
    let at = stl.windows(4).position(|w| w == b"1.25").expect("token");
    stl[at + 1] = 0xFF;
    mesh_refused("stl", stl, &["line 4", "cannot read"]);
    let mut o = obj_with_coordinate("1.25").into_bytes();
    let at = o.windows(4).position(|w| w == b"1.25").expect("token");
    o[at + 1] = 0xC3; // a lead byte with no continuation
    mesh_refused("obj", o, &["cannot read"]);
    // Not text at all, in a file named .obj.
    mesh_refused(
        "obj",
        [0xFFu8, 0xFE, 0x00, 0x66, 0x20, 0x31].repeat(1000),
        &[],
    );
}

#[test]
fn truncated_empty_and_shapeless_files() {
    let whole = binary_stl(&box_tris());
    mesh_refused("stl", &whole[..whole.len() - 7], &["truncated"]);
    mesh_refused("stl", &whole[..50], &["too short"]);
    mesh_refused("stl", b"", &["too short"]);
    mesh_refused("obj", b"", &["no facets"]);
    mesh_refused("stl", "solid x\nendsolid x\n", &["no facets"]);
    let ascii = ascii_stl("hull", &box_tris());
    mesh_refused("stl", &ascii[..ascii.len() / 2], &["line"]);
    let cut = ascii.rfind("endloop").expect("a loop");
    mesh_refused("stl", &ascii[..cut], &["end of file"]);
    let mut zero = binary_stl(&box_tris())[..84].to_vec();
    zero[80..84].copy_from_slice(&0u32.to_le_bytes());
    mesh_refused("stl", zero, &["no facets"]);
}

#[test]
fn a_polygon_too_costly_to_triangulate() {
    // A zig-zag of 20 000 vertices, half of them reflex: quadratic work refused.
    let n = 20_000usize;
    let mut text = String::new();
    for i in 0..n - 2 {
        text += &format!("v {i} {} 0\n", i % 2);
    }
    text += &format!("v {n} 10 0\nv 0 10 0\nf");
    for i in 1..=n {
        text += &format!(" {i}");
    }
    text.push('\n');
    mesh_refused(
        "obj",
        text,
        &["too large to triangulate", &format!("line {}", n + 1)],
    );
}

/// A binary STL of `n` copies of one triangle.
fn copies(n: usize) -> Vec<u8> {
    let tri: Triangle = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]];
    binary_stl(&vec![tri; n])
}

#[test]
fn two_hundred_thousand_coincident_facets() {
    // Every facet shares every edge: edge grouping was quadratic in the uses of a vertex
    // (40 000 copies took 32 s, 200 000 would take over 10 minutes). Refused as an open
    // (non-manifold) mesh without a wet side, within the run's time limit.
    mesh_refused("stl", copies(200_000), &["non-manifold"]);
}

#[test]
fn a_fan_of_one_hundred_thousand_triangles_around_one_vertex_computes() {
    // A flat disc cut as a fan: the hub is used by every facet (a cone's tip or a
    // fan-triangulated cap, at absurd resolution). Legitimate: it computes, within the
    // run's time limit, to the closed form.
    let n = 100_000usize;
    let r = 1.0;
    let depth = 2.0;
    let mut tris: Vec<Triangle> = Vec::with_capacity(n);
    for i in 0..n {
        let a = std::f64::consts::TAU * i as f64 / n as f64;
        let b = std::f64::consts::TAU * (i + 1) as f64 / n as f64;
        tris.push([
            [0.0, 0.0, -depth],
            [r * a.cos(), r * a.sin(), -depth],
            [r * b.cos(), r * b.sin(), -depth],
        ]);
    }
    let f = Folder::new();
    f.write("disc.stl", binary_stl(&tris));
    f.write(
        "disc.json",
        r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
    );
    let run = f.calc_env(&["--json", "disc.stl"], &[]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON");
    let fz = doc["cases"][0]["force"][2].as_f64().expect("a number");
    // Closed form: the liquid on the +z side pushes down with ρ g h · area of the
    // inscribed 100 000-gon, ½ n r² sin(2π/n) (normals point +z, so the force is −z).
    let area = 0.5 * n as f64 * r * r * (std::f64::consts::TAU / n as f64).sin();
    let want = -1000.0 * 9.80665 * depth * area;
    assert!((fz - want).abs() <= 1e-6 * want.abs(), "{fz} vs {want}");
}
