//! OBJ reader: vertices, faces and groups of a Wavefront OBJ file, from its bytes.
//!
//! Owns the subset of OBJ that describes a surface and its errors; never opens other files
//! (`mtllib` is ignored), and ignores texture coordinates, normals, materials, smoothing
//! groups, lines, points and free-form geometry.
//!
//! Why not `tobj`: it fan-triangulates concave polygons wrongly, splits a repeated group
//! into separate models, accepts NaN and reports errors without a line number. It remains a
//! cross-check in the tests and the benchmark.
//!
//! The statements read, one per line (`#` starts a comment; CRLF, tabs and a UTF-8
//! byte-order mark are fine):
//! * `v x y z [more]`: a vertex; numbers parsed as f64 and required to be finite; a fourth
//!   value (weight) or vertex colours after the third are ignored.
//! * `f i j k …`: a face of 3 or more vertices, each `v`, `v/vt`, `v//vn` or `v/vt/vn`; only
//!   `v` is used. Positive indices count from 1 over the vertices defined so far, negative
//!   ones backwards from the last of them (`-1`). Index 0 or one out of range is an error.
//!   Polygons are triangulated by ear clipping in their best-fit plane, keeping their winding
//!   (see `polygon`), so concave faces come out right.
//! * `g name…` and `o name…` both start a part named by the rest of the line (words joined by
//!   one space); a name seen before continues that part, so the facets of a part keep their
//!   file order but a part's facets may come from several places in the file. A `g`/`o`
//!   without a name, and faces before any `g`/`o`, belong to the part named after the file's
//!   stem. `g a b` makes one part named `a b`: membership of several groups is not modelled.
//!
//! Any other statement is ignored, as OBJ readers conventionally do. Work is linear in the
//! file size whatever the line lengths, apart from triangulating concave polygons, which is
//! bounded (see `polygon`).

use std::path::Path;

use super::polygon::Triangulator;
use super::{
    Format, LineError, Mesh, MeshError, PartsBuilder, Problem, parse_coordinate, quote, stem_name,
};

/// Reads an OBJ file from its bytes; `path` names the file in messages and gives the name
/// of the part that holds faces before any `g`/`o` (its stem).
pub fn read_obj(path: &Path, bytes: &[u8]) -> Result<Mesh, MeshError> {
    read_obj_with(path, bytes, crate::limits::DEFAULT_MAX_FACETS)
}

/// Like [`read_obj`], with at most `max_facets` facets.
pub fn read_obj_with(path: &Path, bytes: &[u8], max_facets: usize) -> Result<Mesh, MeshError> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let mut reader = Reader {
        vertices: Vec::new(),
        parts: PartsBuilder::new(stem_name(path), false)
            .with_max_facets(max_facets)
            .with_vertex_ids(),
        face: Vec::new(),
        ring: Vec::new(),
        triangles: Vec::new(),
        triangulator: Triangulator::default(),
    };
    for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
        reader
            .statement(raw)
            .map_err(|problem| LineError::new(i + 1, problem).with_path(path))?;
    }
    reader
        .parts
        .finish(Format::Obj)
        .ok_or_else(|| MeshError::Empty {
            path: path.to_path_buf(),
            format: Format::Obj,
        })
}

struct Reader {
    vertices: Vec<[f64; 3]>,
    parts: PartsBuilder,
    /// Scratch buffers reused from face to face.
    face: Vec<usize>,
    ring: Vec<[f64; 3]>,
    triangles: Vec<[usize; 3]>,
    triangulator: Triangulator,
}

impl Reader {
    fn statement(&mut self, raw: &[u8]) -> Result<(), Problem> {
        let content = match raw.iter().position(|&b| b == b'#') {
            Some(k) => &raw[..k],
            None => raw,
        };
        let mut tokens = content
            .split(|b| b.is_ascii_whitespace())
            .filter(|t| !t.is_empty());
        let Some(keyword) = tokens.next() else {
            return Ok(());
        };
        match keyword {
            b"v" => {
                let mut xyz = [0.0; 3];
                for (k, c) in xyz.iter_mut().enumerate() {
                    let token = tokens
                        .next()
                        .ok_or(Problem::TooFewCoordinates { found: k })?;
                    *c = parse_coordinate(token)?;
                }
                // No face can use more than 3 vertices per facet of the limit.
                let most = self.parts.max_facets().saturating_mul(3);
                if self.vertices.len() >= most {
                    return Err(Problem::TooManyVertices { limit: most });
                }
                self.vertices.push(xyz);
            }
            b"f" => {
                self.face.clear();
                for token in tokens {
                    // A face of n vertices makes n − 2 triangles: stop a face line of
                    // absurd length before it outgrows the facet limit.
                    if self.face.len() >= self.parts.room().saturating_add(2) {
                        return Err(Problem::TooManyFacets {
                            limit: self.parts.max_facets(),
                        });
                    }
                    self.face.push(resolve(token, self.vertices.len())?);
                }
                self.push_face()?;
            }
            b"g" | b"o" => {
                let mut name = String::new();
                for (k, word) in tokens.enumerate() {
                    if k > 0 {
                        name.push(' ');
                    }
                    name.push_str(&String::from_utf8_lossy(word));
                }
                self.parts.select(&name)?;
            }
            _ => {}
        }
        Ok(())
    }

    fn push_face(&mut self) -> Result<(), Problem> {
        let v = &self.vertices;
        match self.face[..] {
            [a, b, c] => self
                .parts
                .push_numbered([v[a], v[b], v[c]], number([a, b, c]))?,
            _ if self.face.len() < 3 => {
                return Err(Problem::TooFewFaceVertices {
                    count: self.face.len(),
                });
            }
            _ => {
                self.ring.clear();
                self.ring.extend(self.face.iter().map(|&i| v[i]));
                self.triangles.clear();
                self.triangulator
                    .triangulate(&self.ring, &mut self.triangles)?;
                for t in &self.triangles {
                    let r = &self.ring;
                    let ids = number([self.face[t[0]], self.face[t[1]], self.face[t[2]]]);
                    self.parts.push_numbered([r[t[0]], r[t[1]], r[t[2]]], ids)?;
                }
            }
        }
        Ok(())
    }
}

/// The file's 1-based vertex numbers of three 0-based indices (the vertex cap keeps them
/// within u32: at most three vertices a facet of a facet limit below 2^28).
fn number(i: [usize; 3]) -> [u32; 3] {
    i.map(|k| u32::try_from(k + 1).unwrap_or(u32::MAX))
}

/// The 0-based vertex index of a face token `v`, `v/vt`, `v//vn` or `v/vt/vn`, given the
/// number of vertices defined so far.
fn resolve(token: &[u8], defined: usize) -> Result<usize, Problem> {
    let index_part = token.split(|&b| b == b'/').next().unwrap_or(token);
    let index: i64 = std::str::from_utf8(index_part)
        .ok()
        .and_then(|s| s.parse().ok())
        .ok_or_else(|| Problem::BadIndex {
            token: quote(token),
        })?;
    let out_of_range = Problem::IndexOutOfRange { index, defined };
    if index == 0 {
        return Err(Problem::IndexZero);
    }
    let back = index.unsigned_abs();
    let Ok(back) = usize::try_from(back) else {
        return Err(out_of_range);
    };
    if index > 0 {
        if back <= defined {
            Ok(back - 1)
        } else {
            Err(out_of_range)
        }
    } else if back <= defined {
        Ok(defined - back)
    } else {
        Err(out_of_range)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mesh::{Facet, read_mesh};

    fn read(text: &str) -> Mesh {
        read_obj(Path::new("models/gate.obj"), text.as_bytes()).expect("valid obj")
    }

    fn err(text: &str) -> MeshError {
        read_obj(Path::new("models/bad_gate.obj"), text.as_bytes()).expect_err("must be refused")
    }

    fn names(m: &Mesh) -> Vec<&str> {
        m.parts.iter().map(|p| p.name.as_str()).collect()
    }

    const SQUARE: &str = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\n";

    #[test]
    fn faces_before_any_group_take_the_stem() {
        let m = read(&format!("{SQUARE}f 1 2 3\nf 1 3 4\n"));
        assert_eq!(m.format, Format::Obj);
        assert_eq!(names(&m), ["gate"]);
        assert_eq!(m.facets.len(), 2);
        assert_eq!(
            m.facets.get(1),
            [[0.0, 0.0, 0.0], [1.0, 1.0, 0.0], [0.0, 1.0, 0.0]]
        );
        assert!(m.normal_stale.is_none());
    }

    #[test]
    fn g_and_o_start_parts_and_repeated_names_continue() {
        let text = format!(
            "{SQUARE}f 1 2 3\ng skin\nf 1 2 4\no frame beam\nf 2 3 4\ng skin\nf 1 3 4\ng\nf 4 3 2\n"
        );
        let m = read(&text);
        assert_eq!(names(&m), ["gate", "skin", "frame beam"]);
        assert_eq!(m.part_facets(0).len(), 2); // before any group, and after a bare `g`
        assert_eq!(m.part_facets(1).len(), 2);
        assert_eq!(m.part_facets(2).len(), 1);
        // Facet order within a part is the file order.
        assert_eq!(m.part_facets(1)[0][2], [0.0, 1.0, 0.0]);
        assert_eq!(m.part_facets(1)[1][1], [1.0, 1.0, 0.0]);
        assert_eq!(m.part_facets(0)[1][0], [0.0, 1.0, 0.0]);
    }

    #[test]
    fn empty_groups_are_dropped() {
        let m = read(&format!("{SQUARE}o ship\ng hull\nf 1 2 3\ng deck\n"));
        assert_eq!(names(&m), ["hull"]);
    }

    #[test]
    fn index_forms_and_negative_indices() {
        let text = format!(
            "{SQUARE}vt 0 0\nvn 0 0 1\nf 1/1 2/1/1 3//1\nf -4 -2 -1\nv 5 5 5\nf -5/1 -1 -2\n"
        );
        let m = read(&text);
        assert_eq!(
            m.facets.get(0),
            [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [1.0, 1.0, 0.0]]
        );
        assert_eq!(
            m.facets.get(1),
            [[0.0, 0.0, 0.0], [1.0, 1.0, 0.0], [0.0, 1.0, 0.0]]
        );
        // -1 now means the fifth vertex.
        assert_eq!(
            m.facets.get(2),
            [[0.0, 0.0, 0.0], [5.0, 5.0, 5.0], [0.0, 1.0, 0.0]]
        );
    }

    #[test]
    fn ignored_statements_and_comments() {
        let text = format!(
            "# exported\r\nmtllib ../../etc/passwd.mtl\r\n{}usemtl steel\r\ns 1\r\nl 1 2\r\np 3\r\nvp 0.5\r\nf 1 2 3 # tail comment\r\n",
            SQUARE.replace('\n', "\r\n")
        );
        let m = read(&text);
        assert_eq!(m.facets.len(), 1);
        // A weight or vertex colours after x y z are ignored.
        let m = read("v 0 0 0 1\nv 1 0 0 0.5 0.5 0.5\nv 0\t1 0\nf 1 2 3\n");
        assert_eq!(m.facets.get(0)[2], [0.0, 1.0, 0.0]);
    }

    #[test]
    fn f64_precision_is_kept() {
        let m = read("v 0.1 0.2 0.3\nv 1e-17 0 0\nv 0 0 1\nf 1 2 3\n");
        assert_eq!(m.facets.get(0)[0], [0.1, 0.2, 0.3]);
        assert_eq!(m.facets.get(0)[1][0], 1e-17);
    }

    /// Twice the vector area of a facet: (b − a) × (c − a).
    fn area2(f: &Facet) -> [f64; 3] {
        let u = [f[1][0] - f[0][0], f[1][1] - f[0][1], f[1][2] - f[0][2]];
        let v = [f[2][0] - f[0][0], f[2][1] - f[0][1], f[2][2] - f[0][2]];
        [
            u[1] * v[2] - u[2] * v[1],
            u[2] * v[0] - u[0] * v[2],
            u[0] * v[1] - u[1] * v[0],
        ]
    }

    #[test]
    fn quads_are_split_in_two_keeping_winding() {
        let m = read(&format!("{SQUARE}f 1 2 3 4\nf 4 3 2 1\n"));
        assert_eq!(m.facets.len(), 4);
        for (k, f) in m.facets.iter().enumerate() {
            // Closed form: each half of the unit square has area ½, normal ±z.
            let z = if k < 2 { 1.0 } else { -1.0 };
            assert_eq!(area2(&f), [0.0, 0.0, z], "{f:?}");
        }
    }

    #[test]
    fn concave_pentagon_face_is_tiled() {
        // A square of side 4 with a notch down to (2, 1), written starting at (0, 4) so a
        // fan from the first vertex would cover the notch. Closed form (shoelace):
        // 16 − ½·4·3 = 10.
        let text = "v 0 4 7\nv 0 0 7\nv 4 0 7\nv 4 4 7\nv 2 1 7\nf 1 2 3 4 5\n";
        let m = read(text);
        assert_eq!(m.facets.len(), 3);
        let mut area = 0.0;
        for f in m.facets.iter() {
            let a = area2(&f);
            assert!(
                a[2] > 0.0 && a[0] == 0.0 && a[1] == 0.0,
                "winding kept: {f:?}"
            );
            area += a[2] / 2.0;
            // No triangle covers the notch: its centroid is not above both notch edges.
            let g = [
                (f[0][0] + f[1][0] + f[2][0]) / 3.0,
                (f[0][1] + f[1][1] + f[2][1]) / 3.0,
            ];
            let above_right = g[1] > 1.0 + 1.5 * (g[0] - 2.0);
            let above_left = g[1] > 1.0 - 1.5 * (g[0] - 2.0);
            assert!(!(above_right && above_left), "triangle in the notch: {f:?}");
        }
        assert_eq!(area, 10.0);
    }

    fn assert_line_error(text: &str, line: usize, check: impl Fn(&Problem) -> bool) {
        let e = err(text);
        let msg = e.to_string();
        assert!(msg.contains("bad_gate.obj"), "{msg}");
        assert!(msg.contains(&format!("line {line}:")), "{msg}");
        match &e {
            MeshError::Text { problem, .. } => assert!(check(problem), "{msg}"),
            other => panic!("expected a line error, got {other}"),
        }
    }

    #[test]
    fn index_errors_name_the_line() {
        assert_line_error(&format!("{SQUARE}f 1 2 3\nf 0 1 2\n"), 6, |p| {
            *p == Problem::IndexZero
        });
        assert_line_error(&format!("{SQUARE}f 1 2 5\n"), 5, |p| {
            *p == Problem::IndexOutOfRange {
                index: 5,
                defined: 4,
            }
        });
        assert_line_error(&format!("{SQUARE}f -5 1 2\n"), 5, |p| {
            *p == Problem::IndexOutOfRange {
                index: -5,
                defined: 4,
            }
        });
        // A forward reference: vertex 4 is not yet defined on line 4.
        assert_line_error("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 4\nv 1 1 1\n", 4, |p| {
            matches!(
                p,
                Problem::IndexOutOfRange {
                    index: 4,
                    defined: 3
                }
            )
        });
        assert_line_error(
            &format!("{SQUARE}f 1 2 99999999999999999999999\n"),
            5,
            |p| matches!(p, Problem::BadIndex { .. }),
        );
        assert_line_error(&format!("{SQUARE}f 1 x 3\n"), 5, |p| {
            matches!(p, Problem::BadIndex { .. })
        });
        assert_line_error(&format!("{SQUARE}f 1 2\n"), 5, |p| {
            *p == Problem::TooFewFaceVertices { count: 2 }
        });
        assert_line_error(&format!("{SQUARE}f\n"), 5, |p| {
            *p == Problem::TooFewFaceVertices { count: 0 }
        });
    }

    #[test]
    fn coordinate_errors_name_the_line() {
        assert_line_error("v 0 0 0\nv 1 nan 0\n", 2, |p| {
            matches!(p, Problem::NonFinite { .. })
        });
        assert_line_error("v 0 0 0\r\nv 1 0 1e400\r\n", 2, |p| {
            matches!(p, Problem::NonFinite { .. })
        });
        assert_line_error("\n\nv 1 0 -inf\n", 3, |p| {
            matches!(p, Problem::NonFinite { .. })
        });
        assert_line_error("v 1 0,5 0\n", 1, |p| matches!(p, Problem::BadNumber { .. }));
        assert_line_error("v 1 2\n", 1, |p| {
            *p == Problem::TooFewCoordinates { found: 2 }
        });
    }

    #[test]
    fn empty_obj_is_refused() {
        for text in ["", "# nothing\n", "v 0 0 0\nv 1 0 0\nv 0 1 0\ng a\n"] {
            let e = err(text);
            assert!(matches!(
                e,
                MeshError::Empty {
                    format: Format::Obj,
                    ..
                }
            ));
            assert!(e.to_string().contains("bad_gate.obj"));
        }
    }

    #[test]
    fn absurd_line_lengths_are_linear() {
        // A face of half a million vertices (convex) and a 20 MB comment.
        let n = 500_000usize;
        let mut text = String::with_capacity(40 * n);
        for i in 0..n {
            let t = i as f64 * std::f64::consts::TAU / n as f64;
            text += &format!("v {} {} 0\n", t.cos(), t.sin());
        }
        text.push('#');
        text.extend(std::iter::repeat_n('c', 20_000_000));
        text += "\nf";
        for i in 1..=n {
            text += &format!(" {i}");
        }
        text.push('\n');
        let start = std::time::Instant::now();
        let m = read(&text);
        assert_eq!(m.facets.len(), n - 2);
        assert!(start.elapsed().as_secs_f64() < 20.0);
    }

    #[test]
    fn huge_concave_face_is_refused_with_its_line() {
        // A zig-zag of 100 000 vertices: half of them reflex.
        let n = 100_000usize;
        let mut text = String::new();
        for i in 0..n - 2 {
            text += &format!("v {i} {} 0\n", i % 2);
        }
        text += &format!("v {} 10 0\nv 0 10 0\nf", n);
        for i in 1..=n {
            text += &format!(" {i}");
        }
        let line = n + 1;
        assert_line_error(&text, line, |p| {
            matches!(p, Problem::PolygonTooComplex { .. })
        });
    }

    /// Our reader agrees with tobj on what tobj handles right: triangles and convex
    /// polygons (fan), distinct groups, relative indices.
    #[test]
    fn agrees_with_tobj_on_convex_faces() {
        let mut text = String::from("o first\n");
        let mut k = 0;
        for g in 0..3 {
            if g > 0 {
                text += &format!("g group{g}\n");
            }
            for j in 0..20 {
                let (x, y) = (j as f64 * 0.37, g as f64 * 1.1);
                for (dx, dy) in [(0.0, 0.0), (1.0, 0.1), (1.2, 1.0), (0.1, 0.9)] {
                    text += &format!("v {} {} {}\n", x + dx, y + dy, 0.01 * (j * j) as f64);
                }
                k += 4;
                if j % 2 == 0 {
                    text += &format!("f {} {} {} {}\n", k - 3, k - 2, k - 1, k);
                } else {
                    text += "f -4 -3 -2\nf -4 -2 -1\n";
                }
            }
        }
        let ours = read_mesh(Path::new("cross.obj"), text.as_bytes()).expect("valid");
        let opts = tobj::LoadOptions {
            triangulate: true,
            ignore_points: true,
            ignore_lines: true,
            ..Default::default()
        };
        let (models, _) = tobj::load_obj_buf(&mut text.as_bytes(), &opts, |_| {
            Ok((Vec::new(), Default::default()))
        })
        .expect("tobj reads it");
        assert_eq!(models.len(), ours.parts.len());
        for (model, part) in models.iter().zip(&ours.parts) {
            assert_eq!(model.name, part.name);
            let m = &model.mesh;
            let theirs: Vec<Facet> = m
                .indices
                .chunks(3)
                .map(|t| {
                    let p = |i: u32| {
                        let i = 3 * i as usize;
                        [m.positions[i], m.positions[i + 1], m.positions[i + 2]]
                    };
                    [p(t[0]), p(t[1]), p(t[2])]
                })
                .collect();
            assert_eq!(theirs, ours.facets.to_vec()[part.facets.clone()]);
        }
    }
}
