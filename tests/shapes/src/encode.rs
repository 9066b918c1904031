//! Encoders of triangle lists into STL (binary and ASCII) and OBJ bytes.
//!
//! Owns the byte layout of the meshes that tests and the demo generator write. Every
//! function is pure: it returns the file's contents and leaves writing it to the caller.
//! It does not read meshes (the readers live elsewhere) and does not check topology.
//!
//! Numbers in the text formats are written in the shortest form that reads back to the
//! same `f64` (Rust's `{}` for magnitudes in `[1e-5, 1e16)` and zero, `{:e}` otherwise),
//! so an ASCII STL or OBJ written here carries the full f64 precision. Non-finite values
//! are written as Rust prints them (`NaN`, `inf`, `-inf`), which lets tests produce files
//! that a reader must refuse.

use std::collections::HashMap;
use std::fmt::Write as _;

use super::{Triangle, facet_normal};

/// Appends `v` in its shortest round-trip form (see the module doc).
fn push_number(out: &mut String, v: f64) {
    let a = v.abs();
    let written = if v == 0.0 || (1e-5..1e16).contains(&a) {
        write!(out, "{v}")
    } else {
        write!(out, "{v:e}")
    };
    written.expect("formatting into a String cannot fail");
}

fn push_triple(out: &mut String, p: [f64; 3]) {
    for (k, c) in p.into_iter().enumerate() {
        if k > 0 {
            out.push(' ');
        }
        push_number(out, c);
    }
}

/// A binary STL file: the 80-byte header, the little-endian `u32` facet count, then per
/// facet 50 bytes: normal, three vertices (12 little-endian `f32` in all) and a zero `u16`
/// attribute.
///
/// The header holds the first 80 bytes of `header`, padded with zero bytes (a header that
/// begins with `solid` is written as given, which is how some CAD systems confuse naive
/// readers). Coordinates are rounded to the nearest `f32`. Each normal is the unit
/// right-hand-rule normal computed in f64 from the vertices (`[0, 0, 0]` for a degenerate
/// facet), not anything stored. Size: `84 + 50·n` bytes; beyond `u32::MAX` facets the rest
/// are dropped so the file stays consistent.
pub fn stl_binary(tris: &[Triangle], header: &str) -> Vec<u8> {
    let count = u32::try_from(tris.len()).unwrap_or(u32::MAX);
    let tris = &tris[..count as usize];
    let mut out = Vec::with_capacity(tris.len().saturating_mul(50).saturating_add(84));
    let mut head = [0u8; 80];
    let bytes = header.as_bytes();
    let n = bytes.len().min(80);
    head[..n].copy_from_slice(&bytes[..n]);
    out.extend_from_slice(&head);
    out.extend_from_slice(&count.to_le_bytes());
    for t in tris {
        let normal = facet_normal(t);
        for p in std::iter::once(&normal).chain(t.iter()) {
            for c in p {
                out.extend_from_slice(&(*c as f32).to_le_bytes());
            }
        }
        out.extend_from_slice(&0u16.to_le_bytes());
    }
    out
}

/// An ASCII STL file with one `solid` block per `(name, triangles)` entry, in order.
///
/// Layout per facet: `facet normal nx ny nz`, `outer loop`, three `vertex x y z` lines,
/// `endloop`, `endfacet` (indented by two spaces per level). Each block ends with
/// `endsolid name`. An empty name writes a bare `solid` / `endsolid` line. The normal is
/// the unit right-hand-rule normal computed from the vertices (`0 0 0` when degenerate).
/// Numbers are full f64 precision (see the module doc). The text ends with a newline.
pub fn stl_ascii(solids: &[(&str, &[Triangle])]) -> String {
    let mut out = String::new();
    for (name, tris) in solids {
        let line = |keyword: &str| {
            if name.is_empty() {
                format!("{keyword}\n")
            } else {
                format!("{keyword} {name}\n")
            }
        };
        out.push_str(&line("solid"));
        for t in tris.iter() {
            out.push_str("  facet normal ");
            push_triple(&mut out, facet_normal(t));
            out.push_str("\n    outer loop\n");
            for p in t {
                out.push_str("      vertex ");
                push_triple(&mut out, *p);
                out.push('\n');
            }
            out.push_str("    endloop\n  endfacet\n");
        }
        out.push_str(&line("endsolid"));
    }
    out
}

/// A Wavefront OBJ file: every distinct vertex once as a `v x y z` line, then per
/// `(name, triangles)` entry a `g name` line and its `f i j k` lines.
///
/// Vertices are shared across all groups when their coordinates are equal bit for bit
/// (so `−0` and `+0` are two vertices), numbered from 1 in order of first use; each face
/// keeps the triangle's vertex order. An empty name writes no `g` line, so its faces join
/// the group before it (or, first in the file, belong to no named group). Numbers are full
/// f64 precision (see the module doc). The text ends with a newline.
pub fn obj(groups: &[(&str, &[Triangle])]) -> String {
    let mut index: HashMap<[u64; 3], usize> = HashMap::new();
    let mut vertices = String::new();
    let mut faces = String::new();
    for (name, tris) in groups {
        if !name.is_empty() {
            faces.push_str("g ");
            faces.push_str(name);
            faces.push('\n');
        }
        for t in tris.iter() {
            faces.push('f');
            for p in t {
                let next = index.len() + 1;
                let i = *index.entry(p.map(f64::to_bits)).or_insert_with(|| {
                    vertices.push_str("v ");
                    push_triple(&mut vertices, *p);
                    vertices.push('\n');
                    next
                });
                write!(faces, " {i}").expect("formatting into a String cannot fail");
            }
            faces.push('\n');
        }
    }
    vertices + &faces
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{box_solid, icosphere, rectangle};

    fn f32_at(bytes: &[u8], at: usize) -> f32 {
        f32::from_le_bytes(bytes[at..at + 4].try_into().expect("4 bytes"))
    }

    /// Decodes a binary STL by its published layout: 80-byte header, u32 count, then
    /// 50 bytes per facet (normal, 3 vertices as f32, u16 attribute).
    /// A decoded binary facet: normal, vertices, attribute.
    type Facet = ([f32; 3], [[f32; 3]; 3], u16);

    fn decode_binary(bytes: &[u8]) -> (Vec<u8>, Vec<Facet>) {
        let count = u32::from_le_bytes(bytes[80..84].try_into().expect("4 bytes")) as usize;
        assert_eq!(bytes.len(), 84 + 50 * count, "size = 84 + 50·count");
        let facets = (0..count)
            .map(|i| {
                let at = 84 + 50 * i;
                let v = |k: usize| {
                    let b = at + 12 * k;
                    [f32_at(bytes, b), f32_at(bytes, b + 4), f32_at(bytes, b + 8)]
                };
                let attr = u16::from_le_bytes([bytes[at + 48], bytes[at + 49]]);
                (v(0), [v(1), v(2), v(3)], attr)
            })
            .collect();
        (bytes[..80].to_vec(), facets)
    }

    fn awkward_triangles() -> Vec<Triangle> {
        vec![
            [
                [0.1, 0.2, 0.3],
                [1e-300, -2.5e17, 123456.789],
                [-0.0, 1.0 / 3.0, 6.02214076e23],
            ],
            [
                [1e-5, 9.99999e-6, 1e16],
                [f64::MAX, f64::MIN_POSITIVE, -7.0],
                [0.0, 0.0, 5e-324],
            ],
        ]
    }

    #[test]
    fn binary_stl_round_trips_through_its_byte_layout() {
        let tris = box_solid([-1.0, 0.0, 2.0], [3.0, 0.5, 2.75], 2);
        let bytes = stl_binary(&tris, "wetload test box");
        let (header, facets) = decode_binary(&bytes);
        assert!(header.starts_with(b"wetload test box"));
        assert!(header[16..].iter().all(|&b| b == 0));
        assert_eq!(facets.len(), tris.len());
        for (t, (normal, vertices, attr)) in tris.iter().zip(&facets) {
            assert_eq!(*attr, 0);
            for (p, q) in t.iter().zip(vertices) {
                // These coordinates are dyadic, so f32 holds them exactly.
                assert_eq!(p.map(|c| c as f32), *q);
            }
            let expected = facet_normal(t).map(|c| c as f32);
            assert_eq!(*normal, expected);
            // An axis-aligned box: the normal is a signed unit axis.
            assert_eq!(normal.iter().map(|c| c.abs()).sum::<f32>(), 1.0);
        }
    }

    #[test]
    fn binary_stl_rounds_to_nearest_f32_and_truncates_long_headers() {
        let tris = vec![[[0.1, 0.2, 0.3], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]];
        let long = "x".repeat(100);
        let bytes = stl_binary(&tris, &long);
        let (header, facets) = decode_binary(&bytes);
        assert_eq!(header, vec![b'x'; 80]);
        assert_eq!(facets[0].1[0], [0.1f32, 0.2f32, 0.3f32]);
        assert_eq!(stl_binary(&[], "").len(), 84);
    }

    fn parse_ascii_stl(text: &str) -> Vec<(String, Vec<Triangle>)> {
        let mut solids = Vec::new();
        let mut current: Option<(String, Vec<Triangle>)> = None;
        let mut loop_points = Vec::new();
        for line in text.lines() {
            let words: Vec<&str> = line.split_whitespace().collect();
            match words.first().copied() {
                Some("solid") => current = Some((words[1..].join(" "), Vec::new())),
                Some("vertex") => {
                    let p: Vec<f64> = words[1..]
                        .iter()
                        .map(|w| w.parse().expect("number"))
                        .collect();
                    loop_points.push([p[0], p[1], p[2]]);
                }
                Some("endloop") => {
                    let t = [loop_points[0], loop_points[1], loop_points[2]];
                    current.as_mut().expect("inside a solid").1.push(t);
                    loop_points.clear();
                }
                Some("endsolid") => solids.push(current.take().expect("inside a solid")),
                _ => {}
            }
        }
        solids
    }

    #[test]
    fn ascii_stl_keeps_full_precision_and_names() {
        let a = awkward_triangles();
        let b = rectangle([0.0; 3], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], 1, 1);
        let text = stl_ascii(&[("hull", &a), ("deck house", &b), ("", &b)]);
        let solids = parse_ascii_stl(&text);
        assert_eq!(solids.len(), 3);
        assert_eq!(solids[0].0, "hull");
        assert_eq!(solids[1].0, "deck house");
        assert_eq!(solids[2].0, "");
        // Bit-exact round trip (compare bits so −0 and +0 are told apart).
        let bits = |tris: &[Triangle]| -> Vec<u64> {
            tris.iter()
                .flatten()
                .flatten()
                .map(|c| c.to_bits())
                .collect()
        };
        assert_eq!(bits(&solids[0].1), bits(&a));
        assert_eq!(bits(&solids[1].1), bits(&b));
        assert!(text.starts_with("solid hull\n  facet normal "));
        assert!(text.contains("\nsolid\n") && text.ends_with("endsolid\n"));
        // The unit square in z = 0 has normal +z.
        assert!(text.contains("facet normal 0 0 1\n"));
    }

    #[test]
    fn numbers_use_plain_or_exponent_form_by_magnitude() {
        let s = |v: f64| {
            let mut out = String::new();
            push_number(&mut out, v);
            out
        };
        assert_eq!(s(0.0), "0");
        assert_eq!(s(-0.0), "-0");
        assert_eq!(s(4500.0), "4500");
        assert_eq!(s(0.1), "0.1");
        assert_eq!(s(1e-6), "1e-6");
        assert_eq!(s(2.5e17), "2.5e17");
        assert_eq!(s(f64::NAN), "NaN");
        assert_eq!(s(f64::NEG_INFINITY), "-inf");
    }

    /// A parsed OBJ group: its name and its faces as 1-based vertex indices.
    type Group = (String, Vec<[usize; 3]>);

    fn parse_obj(text: &str) -> (Vec<[f64; 3]>, Vec<Group>) {
        let mut vertices = Vec::new();
        let mut groups: Vec<(String, Vec<[usize; 3]>)> = Vec::new();
        for line in text.lines() {
            let words: Vec<&str> = line.split_whitespace().collect();
            match words.first().copied() {
                Some("v") => {
                    let p: Vec<f64> = words[1..]
                        .iter()
                        .map(|w| w.parse().expect("number"))
                        .collect();
                    vertices.push([p[0], p[1], p[2]]);
                }
                Some("g") => groups.push((words[1..].join(" "), Vec::new())),
                Some("f") => {
                    let i: Vec<usize> = words[1..]
                        .iter()
                        .map(|w| w.parse().expect("index"))
                        .collect();
                    groups
                        .last_mut()
                        .expect("faces after a g line")
                        .1
                        .push([i[0], i[1], i[2]]);
                }
                other => panic!("unexpected line start {other:?}"),
            }
        }
        (vertices, groups)
    }

    #[test]
    fn obj_shares_vertices_across_groups_and_round_trips() {
        let tris = box_solid([0.0; 3], [3.0, 5.0, 2.5], 2);
        let (bottom, rest): (Vec<Triangle>, Vec<Triangle>) =
            tris.iter().partition(|t| t.iter().all(|p| p[1] == 0.0));
        let text = obj(&[("base_slab", &bottom), ("walls_and_roof", &rest)]);
        let (vertices, groups) = parse_obj(&text);
        // A box with each face split 2×2: 8 corners + 12 edge midpoints + 6 face centres.
        assert_eq!(vertices.len(), 26);
        assert_eq!(groups.len(), 2);
        assert_eq!(groups[0].0, "base_slab");
        assert_eq!(groups[1].0, "walls_and_roof");
        for ((_, faces), source) in groups.iter().zip([&bottom, &rest]) {
            assert_eq!(faces.len(), source.len());
            for (f, t) in faces.iter().zip(source.iter()) {
                for (i, p) in f.iter().zip(t) {
                    assert!(*i >= 1, "1-based");
                    assert_eq!(vertices[i - 1], *p);
                }
            }
        }
    }

    #[test]
    fn obj_keeps_full_precision() {
        let a = awkward_triangles();
        let (vertices, groups) = parse_obj(&obj(&[("odd", &a)]));
        let back: Vec<u64> = groups[0]
            .1
            .iter()
            .flatten()
            .flat_map(|&i| vertices[i - 1])
            .map(f64::to_bits)
            .collect();
        let expected: Vec<u64> = a.iter().flatten().flatten().map(|c| c.to_bits()).collect();
        assert_eq!(back, expected);
        // −0 and +0 are distinct bit patterns, hence distinct vertices.
        let zeros = [[[0.0, 0.0, 0.0], [-0.0, 0.0, 0.0], [1.0, 0.0, 0.0]]];
        assert_eq!(parse_obj(&obj(&[("z", &zeros)])).0.len(), 3);
    }

    #[test]
    fn obj_unnamed_group_writes_no_g_line() {
        let t = icosphere([0.0; 3], 1.0, 0);
        let text = obj(&[("", &t)]);
        assert!(!text.contains("\ng"));
        assert_eq!(text.lines().filter(|l| l.starts_with("f ")).count(), 20);
        assert_eq!(text.lines().filter(|l| l.starts_with("v ")).count(), 12);
    }
}
