//! The data of one case's 3D view on the page: `results/<name>[.<case>].view.json`,
//! written with the other exports and read back when the page is drawn (the page is
//! drawn from files, and the pressure field is not in the result document).
//!
//! The view is a picture, never a source of numbers: every figure on the page comes from
//! the result document. The surface shown is the case's [`Field`] pieces, fanned into
//! triangles, in a display frame with `z` up (mesh axes turned by the mesh's up axis,
//! metres, not moved). A field with more triangles than the budget is decimated for the
//! display only, by clustering vertices on a uniform grid (sized from the budget, wetted
//! and dry vertices never merged, so the waterline stays sharp); a
//! triangle left after clustering carries the area-weighted mean pressure of the
//! triangles merged into it.
//!
//! # Format
//!
//! One JSON object:
//!
//! - `view`: 1, the format's version;
//! - `case`: the case's name;
//! - `triangles_source`, `triangles`: triangles in the field and in the view;
//! - `box`: `[[x, y, z], [x, y, z]]`, the display frame's box of the view's vertices, m;
//! - `pressure_max`: the largest gauge pressure on a wetted piece of the full field, Pa
//!   (the colour scale runs from 0 to it);
//! - `levels`: the free-surface elevations of the case's liquids, m, display frame;
//! - `arrow`: `{"point", "direction"}` in the display frame: a point of the resultant's
//!   line of action and the unit direction of the force, or `null`;
//! - `data`: base64 of 20 bytes per triangle, little-endian `u16`: the three vertices'
//!   x, y, z quantised over `box` (0 → low corner, 65535 → high corner), then the
//!   pressure code: 0 when no liquid touches the triangle, else
//!   1 + round(p / pressure_max · 65534) for its mean gauge pressure p.

use rustc_hash::FxHashMap;
use serde_json::{Value, json};

use crate::compute::{CaseResult, Field};

use crate::hydro::{Frame, UpAxis};

/// The triangles of one mesh's views at most, shared by its cases (about 2.7 MB of page
/// per mesh).
pub const VIEW_MAX_TRIANGLES: usize = 100_000;

/// Bytes per triangle in `data` before base64.
pub const BYTES_PER_TRIANGLE: usize = 20;

/// One display triangle: vertices (display frame, m), mean gauge pressure (Pa), wetted.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tri {
    pub v: [[f64; 3]; 3],
    pub pressure: f64,
    pub wetted: bool,
}

/// The view of one case, before encoding.
#[derive(Clone, Debug, PartialEq)]
pub struct View {
    pub triangles_source: usize,
    pub tris: Vec<Tri>,
    pub pressure_max: f64,
}

fn area(v: &[[f64; 3]; 3]) -> f64 {
    let a = [0, 1, 2].map(|i| v[1][i] - v[0][i]);
    let b = [0, 1, 2].map(|i| v[2][i] - v[0][i]);
    let c = [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ];
    0.5 * (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt()
}

/// The field's pieces as display triangles (fans), and the view within `max_triangles`.
pub fn build(field: &Field, up: UpAxis, max_triangles: usize) -> View {
    let frame = Frame { scale_m: 1.0, up };
    let to = |p: &[f64; 3]| {
        let q = frame.vector_in(*p);
        [q.x, q.y, q.z]
    };
    let mut tris = Vec::new();
    let mut pressure_max: f64 = 0.0;
    for piece in &field.pieces {
        let v = &piece.vertices;
        if v.len() < 3 || piece.pressure.len() != v.len() {
            continue;
        }
        if piece.wetted {
            for p in &piece.pressure {
                if p.is_finite() {
                    pressure_max = pressure_max.max(*p);
                }
            }
        }
        for k in 1..v.len() - 1 {
            let p = (piece.pressure[0] + piece.pressure[k] + piece.pressure[k + 1]) / 3.0;
            tris.push(Tri {
                v: [to(&v[0]), to(&v[k]), to(&v[k + 1])],
                pressure: if p.is_finite() { p } else { 0.0 },
                wetted: piece.wetted,
            });
        }
    }
    let triangles_source = tris.len();
    let tris = if tris.len() > max_triangles {
        decimate(&tris, max_triangles)
    } else {
        tris
    };
    View {
        triangles_source,
        tris,
        pressure_max,
    }
}

/// The bounding box of the triangles' vertices (zeros when there are none).
fn bounds(tris: &[Tri]) -> ([f64; 3], [f64; 3]) {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for t in tris {
        for v in &t.v {
            for i in 0..3 {
                lo[i] = lo[i].min(v[i]);
                hi[i] = hi[i].max(v[i]);
            }
        }
    }
    if tris.is_empty() {
        ([0.0; 3], [0.0; 3])
    } else {
        (lo, hi)
    }
}

/// Grid cell of `v` for a grid of cell size `h` from `lo`; the wetted flag keeps the two
/// sides of the waterline apart.
fn cell(v: &[f64; 3], lo: &[f64; 3], h: f64, wetted: bool) -> [i64; 4] {
    let c = |i: usize| ((v[i] - lo[i]) / h).floor() as i64;
    [c(0), c(1), c(2), i64::from(wetted)]
}

/// The triangles left by clustering on a grid of `n` cells along the longest side: each
/// triangle's cells, with repeats (collapsed triangles) dropped and duplicates merged.
fn clustered(tris: &[Tri], lo: &[f64; 3], h: f64) -> FxHashMap<[[i64; 4]; 3], usize> {
    let mut out: FxHashMap<[[i64; 4]; 3], usize> = FxHashMap::default();
    for (i, t) in tris.iter().enumerate() {
        let c = t.v.map(|v| cell(&v, lo, h, t.wetted));
        if c[0] == c[1] || c[1] == c[2] || c[0] == c[2] {
            continue;
        }
        let mut key = c;
        key.sort_unstable();
        out.entry(key).or_insert(i);
    }
    out
}

/// Vertex clustering on a uniform grid that leaves at most `max` triangles.
fn decimate(tris: &[Tri], max: usize) -> Vec<Tri> {
    let (lo, hi) = bounds(tris);
    let extent = (0..3).map(|i| hi[i] - lo[i]).fold(0.0, f64::max);
    if extent <= 0.0 || !extent.is_finite() || max == 0 {
        return Vec::new();
    }
    // On a surface of area A, a grid of cell h leaves about 2 A / h² triangles: start
    // there, and coarsen by a tenth until the budget is met (usually at once).
    let total: f64 = tris.iter().map(|t| area(&t.v)).sum();
    let mut h = (2.0 * total / max as f64).sqrt();
    if !(h.is_finite() && h > 0.0) {
        h = extent;
    }
    h = h.max(extent / 65536.0);
    let mut kept = clustered(tris, &lo, h);
    while kept.len() > max && h < 2.0 * extent {
        h *= 1.1;
        kept = clustered(tris, &lo, h);
    }
    // Each cell's vertex: the mean of the vertices that fell in it.
    let mut sums: FxHashMap<[i64; 4], ([f64; 3], f64)> = FxHashMap::default();
    for t in tris {
        for v in &t.v {
            let e = sums.entry(cell(v, &lo, h, t.wetted)).or_default();
            for (s, x) in e.0.iter_mut().zip(v) {
                *s += x;
            }
            e.1 += 1.0;
        }
    }
    let at = |c: &[i64; 4]| {
        let (s, n) = sums.get(c).copied().unwrap_or_default();
        s.map(|x| if n > 0.0 { x / n } else { 0.0 })
    };
    // Area-weighted pressure of every source triangle merged into each kept one.
    let mut weights: FxHashMap<[[i64; 4]; 3], (f64, f64)> = FxHashMap::default();
    for t in tris {
        let c = t.v.map(|v| cell(&v, &lo, h, t.wetted));
        let mut key = c;
        key.sort_unstable();
        if let Some(w) = kept
            .contains_key(&key)
            .then(|| weights.entry(key).or_default())
        {
            let a = area(&t.v);
            w.0 += a * t.pressure;
            w.1 += a;
        }
    }
    let mut out: Vec<(usize, Tri)> = kept
        .iter()
        .map(|(key, &first)| {
            let t = &tris[first];
            let c = t.v.map(|v| cell(&v, &lo, h, t.wetted));
            let (pa, a) = weights.get(key).copied().unwrap_or_default();
            let pressure = if a > 0.0 { pa / a } else { t.pressure };
            (
                first,
                Tri {
                    v: c.map(|c| at(&c)),
                    pressure,
                    wetted: t.wetted,
                },
            )
        })
        .collect();
    // File order of the first source triangle: the output does not depend on hashing.
    out.sort_unstable_by_key(|(first, _)| *first);
    out.into_iter().map(|(_, t)| t).collect()
}

/// The pressure code of a triangle (see the module doc).
pub fn pressure_code(t: &Tri, pressure_max: f64) -> u16 {
    if !t.wetted {
        return 0;
    }
    let r = if pressure_max > 0.0 {
        (t.pressure / pressure_max).clamp(0.0, 1.0)
    } else {
        0.0
    };
    1 + (r * 65534.0).round() as u16
}

/// Standard base64 with padding.
pub fn base64(bytes: &[u8]) -> String {
    const A: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut s = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for c in bytes.chunks(3) {
        let b = [c[0], *c.get(1).unwrap_or(&0), *c.get(2).unwrap_or(&0)];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for k in 0..4 {
            if k <= c.len() {
                s.push(char::from(A[((n >> (18 - 6 * k)) & 63) as usize]));
            } else {
                s.push('=');
            }
        }
    }
    s
}

/// What the view shows of a case beside its field: name, levels (m, along up, mesh
/// origin), force (N, mesh axes) and a point of the line of action (m, mesh axes).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CaseMarks {
    pub name: String,
    pub levels: Vec<f64>,
    pub force: [f64; 3],
    pub point: Option<[f64; 3]>,
}

impl CaseMarks {
    pub fn of(case: &CaseResult) -> CaseMarks {
        CaseMarks {
            name: case.name.clone(),
            levels: case.liquids.iter().map(|l| l.level).collect(),
            force: case.loads.force,
            point: case.loads.line_of_action.as_ref().map(|l| l.point),
        }
    }
}

/// The view file of one case (see the module doc).
pub fn render(field: &Field, up: UpAxis, case: &CaseMarks, max_triangles: usize) -> Vec<u8> {
    let view = build(field, up, max_triangles);
    let (lo, hi) = bounds(&view.tris);
    let mut data = Vec::with_capacity(view.tris.len() * BYTES_PER_TRIANGLE);
    for t in &view.tris {
        for v in &t.v {
            for i in 0..3 {
                let span = hi[i] - lo[i];
                let q = if span > 0.0 {
                    ((v[i] - lo[i]) / span * 65535.0)
                        .round()
                        .clamp(0.0, 65535.0) as u16
                } else {
                    0
                };
                data.extend_from_slice(&q.to_le_bytes());
            }
        }
        data.extend_from_slice(&pressure_code(t, view.pressure_max).to_le_bytes());
    }
    let frame = Frame { scale_m: 1.0, up };
    let to = |p: [f64; 3]| {
        let q = frame.vector_in(p);
        [q.x, q.y, q.z]
    };
    let levels: Vec<f64> = case
        .levels
        .iter()
        .copied()
        .filter(|l| l.is_finite())
        .collect();
    let force = case.force;
    let norm = force[0].hypot(force[1]).hypot(force[2]);
    let arrow = case
        .point
        .filter(|_| norm > 0.0 && norm.is_finite())
        .map(|p| json!({"point": to(p), "direction": to(force.map(|x| x / norm))}));
    let doc = json!({
        "view": 1,
        "case": case.name,
        "triangles_source": view.triangles_source,
        "triangles": view.tris.len(),
        "box": [lo, hi],
        "pressure_max": view.pressure_max,
        "levels": levels,
        "arrow": arrow.unwrap_or(Value::Null),
        "data": base64(&data),
    });
    let mut out = serde_json::to_vec(&doc).unwrap_or_default();
    out.push(b'\n');
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::FieldPiece;

    fn piece(v: Vec<[f64; 3]>, p: Vec<f64>, wetted: bool) -> FieldPiece {
        FieldPiece {
            facet: 0,
            part: 0,
            wetted,
            vertices: v,
            pressure: p,
            traction: [0.0; 3],
            area: 0.0,
        }
    }

    /// A vertical wall x ∈ [0, 1], z ∈ [0, 2] cut into n × 2n squares (two triangles
    /// each), water to z = 1.5: p = ρ g (1.5 − z) below it, dry above.
    fn wall(n: usize) -> Field {
        let (rho_g, level) = (1000.0 * 9.80665, 1.5);
        let h = 1.0 / n as f64;
        let mut pieces = Vec::new();
        for i in 0..n {
            for j in 0..2 * n {
                let (x0, z0) = (i as f64 * h, j as f64 * h);
                let q = [
                    [x0, 0.0, z0],
                    [x0 + h, 0.0, z0],
                    [x0 + h, 0.0, z0 + h],
                    [x0, 0.0, z0 + h],
                ];
                for t in [[q[0], q[1], q[2]], [q[0], q[2], q[3]]] {
                    let wet = t.iter().all(|v| v[2] <= level);
                    let p = t
                        .iter()
                        .map(|v| if wet { rho_g * (level - v[2]) } else { 0.0 });
                    pieces.push(piece(t.to_vec(), p.collect(), wet));
                }
            }
        }
        Field {
            pieces,
            facets: Vec::new(),
            parts: Vec::new(),
            nodes: Vec::new(),
        }
    }

    #[test]
    fn a_small_field_is_shown_whole_with_its_pressure_range() {
        let v = build(&wall(4), UpAxis::PosZ, 1000);
        assert_eq!(v.triangles_source, 4 * 8 * 2);
        assert_eq!(v.tris.len(), v.triangles_source);
        // Closed form: the deepest point z = 0 is 1.5 m under the surface: ρ g · 1.5.
        assert!((v.pressure_max - 1000.0 * 9.80665 * 1.5).abs() < 1e-9);
        assert_eq!(v.tris.iter().filter(|t| t.wetted).count(), 4 * 6 * 2);
    }

    #[test]
    fn a_big_field_is_decimated_within_the_budget_keeping_area_and_mean_pressure() {
        let field = wall(60); // 60 × 120 × 2 = 14 400 triangles
        for budget in [5000, 1000] {
            let v = build(&field, UpAxis::PosZ, budget);
            assert_eq!(v.triangles_source, 14_400);
            assert!(
                !v.tris.is_empty() && v.tris.len() <= budget,
                "{}",
                v.tris.len()
            );
            // A plane stays a plane: the wall's 2 m² (1 × 2), less what the edge loses
            // (an edge vertex moves to its cell's mean, up to half a cell inward).
            let total: f64 = v.tris.iter().map(|t| area(&t.v)).sum();
            assert!(total <= 2.0 + 1e-9 && total > 1.7, "{budget}: area {total}");
            // The area-weighted mean pressure on the wet part: ρ g · 1.5 / 2 (a triangle
            // of pressure over depth), within the clustering's smearing.
            let (pa, a) = v
                .tris
                .iter()
                .filter(|t| t.wetted)
                .fold((0.0, 0.0), |(pa, a), t| {
                    (pa + area(&t.v) * t.pressure, a + area(&t.v))
                });
            let expected = 1000.0 * 9.80665 * 1.5 / 2.0;
            assert!((pa / a - expected).abs() < 0.05 * expected, "{budget}");
            // The range is the full field's, not the decimated one's.
            assert_eq!(v.pressure_max, 1000.0 * 9.80665 * 1.5);
        }
        // The encoded size follows the budget: 20 bytes a triangle, base64 × 4/3.
        let case = CaseMarks::default();
        let bytes = render(&field, UpAxis::PosZ, &case, 1000);
        let doc: Value = serde_json::from_slice(&bytes).expect("json");
        let n = doc["triangles"].as_u64().expect("n") as usize;
        assert!(n <= 1000);
        assert_eq!(
            doc["data"].as_str().map(str::len),
            Some((n * 20).div_ceil(3) * 4)
        );
    }

    #[test]
    fn the_up_axis_turns_the_view_so_that_z_is_up() {
        let mut field = wall(2);
        for p in &mut field.pieces {
            // The same wall in a mesh whose up axis is +y.
            for v in &mut p.vertices {
                *v = [v[0], v[2], -v[1]];
            }
        }
        let v = build(&field, UpAxis::PosY, 1000);
        let (lo, hi) = bounds(&v.tris);
        assert_eq!((lo[2], hi[2]), (0.0, 2.0));
    }

    #[test]
    fn pressure_codes_are_monotone_and_dry_is_apart() {
        let t = |p: f64, wetted| Tri {
            v: [[0.0; 3]; 3],
            pressure: p,
            wetted,
        };
        assert_eq!(pressure_code(&t(5.0, false), 10.0), 0);
        assert_eq!(pressure_code(&t(0.0, true), 10.0), 1);
        assert_eq!(pressure_code(&t(10.0, true), 10.0), 65535);
        let mut last = 0;
        for k in 0..=100 {
            let c = pressure_code(&t(k as f64 / 10.0, true), 10.0);
            assert!(c > last || k == 0);
            last = c;
        }
        // A field with no wetted piece: every code is "dry" or the bottom of the scale.
        assert_eq!(pressure_code(&t(0.0, true), 0.0), 1);
    }

    #[test]
    fn base64_matches_the_alphabet_and_padding() {
        // Worked by hand from the 6-bit groups.
        assert_eq!(base64(b""), "");
        assert_eq!(base64(b"f"), "Zg==");
        assert_eq!(base64(b"fo"), "Zm8=");
        assert_eq!(base64(b"foo"), "Zm9v");
        assert_eq!(base64(&[0xff, 0xfe, 0x00, 0x01]), "//4AAQ==");
    }
}
