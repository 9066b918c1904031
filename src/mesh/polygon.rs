//! Triangulation of one polygon (an OBJ face, an ASCII STL facet loop) by ear clipping.
//!
//! Owns the choice of triangles for a polygon given as a ring of 3-D points; does not
//! parse, validate coordinates or know about parts.
//!
//! Method: the polygon is projected onto its best-fit plane, the plane through its first
//! vertex perpendicular to the Newell normal `N = Σ (pᵢ − p₀) × (pᵢ₊₁ − p₀)` (twice the
//! vector area; it points along the right-hand rule over the vertex order). In the basis
//! `(u, v)` with `u × v = N/|N|` the ring runs counter-clockwise, and ears are clipped:
//! a convex vertex whose triangle with its two neighbours contains no other non-convex
//! vertex (inside or on the boundary, vertices at the same position as a corner excepted).
//! Every triangle lists its vertices in ring order, so it keeps the polygon's winding.
//! A simple polygon, convex or not, is cut into `n − 2` triangles that cover it exactly.
//! A convex polygon comes out as the fan `(0, i, i+1)`.
//!
//! Degenerate input is finished without failing, with the same number of triangles: a
//! polygon whose Newell normal is zero or not finite (all vertices on a line, or a figure
//! eight whose lobes cancel) is cut as a fan; a self-intersecting polygon that runs out of
//! ears has its rest cut as a fan. Their areas are then whatever the winding says.
//!
//! Cost: `O(n · r)` for `n` vertices of which `r` are not convex, so a convex polygon of any
//! size is linear. Polygons with `n · r >` [`MAX_POLYGON_WORK`] are refused rather than
//! allowed to take quadratic time (a face line of absurd length must not stall a watcher).

use super::Problem;

/// Largest `vertices × non-convex vertices` of a polygon we triangulate (about 0.1 s).
pub(crate) const MAX_POLYGON_WORK: u64 = 20_000_000;

/// How many times a full re-scan for ears is tried before the rest is cut as a fan. Only
/// rounding in nearly degenerate polygons can leave ears unseen by the local updates.
const MAX_RESCANS: usize = 4;

/// Reusable buffers for [`Triangulator::triangulate`], so a file of many quads does not
/// allocate per face.
#[derive(Default)]
pub(crate) struct Triangulator {
    pts: Vec<[f64; 2]>,
    prev: Vec<usize>,
    next: Vec<usize>,
    alive: Vec<bool>,
    convex: Vec<bool>,
    ear: Vec<bool>,
    non_convex: Vec<usize>,
    stack: Vec<usize>,
}

impl Triangulator {
    /// Appends to `out` the triangles of the polygon `points` as index triples into
    /// `points`, `n − 2` of them for `n ≥ 3` vertices (none for fewer).
    pub(crate) fn triangulate(
        &mut self,
        points: &[[f64; 3]],
        out: &mut Vec<[usize; 3]>,
    ) -> Result<(), Problem> {
        let n = points.len();
        if n < 3 {
            return Ok(());
        }
        if n == 3 {
            out.push([0, 1, 2]);
            return Ok(());
        }
        if let [a, b, c, d] = points {
            // Quads are most of the polygons in CAD output; pick their diagonal directly.
            if let Some(pair) = quad(*a, *b, *c, *d) {
                out.extend_from_slice(&pair);
                return Ok(());
            }
        }
        let Some((u, v)) = plane_basis(points) else {
            fan(n, out);
            return Ok(());
        };
        let o = points[0];
        self.pts.clear();
        self.pts.extend(points.iter().map(|p| {
            let d = sub(*p, o);
            [dot(d, u), dot(d, v)]
        }));
        self.prev.clear();
        self.prev.extend((0..n).map(|i| (i + n - 1) % n));
        self.next.clear();
        self.next.extend((0..n).map(|i| (i + 1) % n));
        self.alive.clear();
        self.alive.resize(n, true);
        self.convex.clear();
        self.convex.resize(n, false);
        for i in 0..n {
            self.convex[i] = self.is_convex(i);
        }
        self.non_convex.clear();
        self.non_convex.extend((0..n).filter(|&i| !self.convex[i]));

        let work = n as u64 * self.non_convex.len() as u64;
        if work > MAX_POLYGON_WORK {
            return Err(Problem::PolygonTooComplex {
                vertices: n,
                non_convex: self.non_convex.len(),
                limit: MAX_POLYGON_WORK,
            });
        }

        self.ear.clear();
        self.ear.resize(n, false);
        self.stack.clear();
        self.scan_for_ears();

        let mut remaining = n;
        let mut rescans = 0;
        while remaining > 3 {
            let Some(w) = self.stack.pop() else {
                if rescans < MAX_RESCANS && self.scan_for_ears() {
                    rescans += 1;
                    continue;
                }
                self.fan_rest(out);
                return Ok(());
            };
            if !self.alive[w] || !self.ear[w] {
                continue; // a stale entry: clipped already, or no longer an ear
            }
            let (p, q) = (self.prev[w], self.next[w]);
            out.push([p, w, q]);
            self.alive[w] = false;
            self.next[p] = q;
            self.prev[q] = p;
            remaining -= 1;
            if remaining == 3 {
                break;
            }
            // Clipping an ear changes the angle, and so the ear status, of its two
            // neighbours only. Pushing `q` last makes a convex polygon come out as a fan.
            for x in [p, q] {
                self.convex[x] = self.is_convex(x);
                self.ear[x] = self.convex[x] && self.is_ear(x);
                if self.ear[x] {
                    self.stack.push(x);
                }
            }
        }
        self.fan_rest(out);
        Ok(())
    }

    /// Recomputes every live vertex's ear status and stacks the ears, lowest index on top
    /// except that vertex 0 goes to the bottom (so a convex polygon starts its fan at 0).
    /// Returns whether any ear was found.
    fn scan_for_ears(&mut self) -> bool {
        let n = self.pts.len();
        let mut found = false;
        for i in std::iter::once(0).chain((1..n).rev()) {
            if !self.alive[i] {
                continue;
            }
            self.convex[i] = self.is_convex(i);
            self.ear[i] = self.convex[i] && self.is_ear(i);
            if self.ear[i] {
                self.stack.push(i);
                found = true;
            }
        }
        found
    }

    fn is_convex(&self, i: usize) -> bool {
        orient(self.pts[self.prev[i]], self.pts[i], self.pts[self.next[i]]) > 0.0
    }

    /// Whether the triangle at convex vertex `i` holds no other non-convex live vertex.
    /// Convex vertices need no test: if a triangle holds any vertex, it holds a reflex one.
    fn is_ear(&self, i: usize) -> bool {
        let (ip, iq) = (self.prev[i], self.next[i]);
        let (a, b, c) = (self.pts[ip], self.pts[i], self.pts[iq]);
        self.non_convex.iter().all(|&r| {
            if !self.alive[r] || self.convex[r] || r == ip || r == i || r == iq {
                return true;
            }
            let p = self.pts[r];
            // Duplicated positions (a keyhole bridge) touch the triangle only at a corner.
            p == a || p == b || p == c || !in_closed_triangle(p, a, b, c)
        })
    }

    /// Cuts the live ring as a fan from its lowest-numbered vertex.
    fn fan_rest(&self, out: &mut Vec<[usize; 3]>) {
        let Some(a) = self.alive.iter().position(|&x| x) else {
            return;
        };
        let mut b = self.next[a];
        while self.next[b] != a {
            out.push([a, b, self.next[b]]);
            b = self.next[b];
        }
    }
}

/// The two triangles of the quad `abcd`: split along `ac` when both halves face along the
/// quad's Newell normal `N = (b − a) × (c − a) + (c − a) × (d − a)`, else along `bd` when
/// those halves do; `None` (left to ear clipping) when neither does, as for a degenerate or
/// self-intersecting quad. Two triangles on opposite sides of a diagonal, both turning the
/// way of the ring, tile the quad exactly, so this agrees with ear clipping on what is
/// covered; a convex quad gives the fan from vertex 0 like ear clipping does.
fn quad(a: [f64; 3], b: [f64; 3], c: [f64; 3], d: [f64; 3]) -> Option<[[usize; 3]; 2]> {
    let n1 = cross(sub(b, a), sub(c, a));
    let n2 = cross(sub(c, a), sub(d, a));
    let normal = [n1[0] + n2[0], n1[1] + n2[1], n1[2] + n2[2]];
    if dot(n1, normal) > 0.0 && dot(n2, normal) > 0.0 {
        return Some([[0, 1, 2], [0, 2, 3]]);
    }
    let m1 = cross(sub(c, b), sub(d, b));
    let m2 = cross(sub(d, b), sub(a, b));
    if dot(m1, normal) > 0.0 && dot(m2, normal) > 0.0 {
        return Some([[1, 2, 3], [1, 3, 0]]);
    }
    None
}

/// `(0, i, i + 1)` for `i` in `1..n−1`.
fn fan(n: usize, out: &mut Vec<[usize; 3]>) {
    out.extend((1..n - 1).map(|i| [0, i, i + 1]));
}

/// An orthonormal basis `(u, v)` of the polygon's best-fit plane with `u × v` along the
/// Newell normal; `None` when that normal is zero or not finite.
fn plane_basis(points: &[[f64; 3]]) -> Option<([f64; 3], [f64; 3])> {
    let o = points[0];
    let mut normal = [0.0; 3];
    for (a, b) in points.iter().zip(points.iter().cycle().skip(1)) {
        let c = cross(sub(*a, o), sub(*b, o));
        normal = [normal[0] + c[0], normal[1] + c[1], normal[2] + c[2]];
    }
    let len = dot(normal, normal).sqrt();
    if !(len.is_finite() && len > 0.0) {
        return None;
    }
    let n = [normal[0] / len, normal[1] / len, normal[2] / len];
    // The coordinate axis least aligned with n is far from parallel to it.
    let k = (0..3)
        .min_by(|&i, &j| n[i].abs().total_cmp(&n[j].abs()))
        .unwrap_or(0);
    let mut e = [0.0; 3];
    e[k] = 1.0;
    let u = cross(e, n);
    let ul = dot(u, u).sqrt();
    let u = [u[0] / ul, u[1] / ul, u[2] / ul];
    let v = cross(n, u); // u × (n × u) = n, so (u, v, n) is right-handed
    Some((u, v))
}

/// Twice the signed area of triangle `abc` (> 0 when counter-clockwise).
fn orient(a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

/// Whether `p` lies inside or on the boundary of the counter-clockwise triangle `abc`.
fn in_closed_triangle(p: [f64; 2], a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> bool {
    orient(a, b, p) >= 0.0 && orient(b, c, p) >= 0.0 && orient(c, a, p) >= 0.0
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn run(points: &[[f64; 3]]) -> Vec<[usize; 3]> {
        let mut out = Vec::new();
        Triangulator::default()
            .triangulate(points, &mut out)
            .expect("small polygon");
        out
    }

    fn flat(xy: &[[f64; 2]]) -> Vec<[f64; 3]> {
        xy.iter().map(|p| [p[0], p[1], 0.0]).collect()
    }

    /// Shoelace formula: A = ½ Σ (xᵢ yᵢ₊₁ − xᵢ₊₁ yᵢ), > 0 for counter-clockwise.
    fn shoelace(xy: &[[f64; 2]]) -> f64 {
        let n = xy.len();
        (0..n)
            .map(|i| {
                let (a, b) = (xy[i], xy[(i + 1) % n]);
                a[0] * b[1] - b[0] * a[1]
            })
            .sum::<f64>()
            / 2.0
    }

    /// Even-odd ray crossing test, for points not on the boundary.
    fn inside(p: [f64; 2], xy: &[[f64; 2]]) -> bool {
        let n = xy.len();
        let mut c = false;
        for i in 0..n {
            let (a, b) = (xy[i], xy[(i + 1) % n]);
            if (a[1] > p[1]) != (b[1] > p[1]) {
                let x = a[0] + (p[1] - a[1]) * (b[0] - a[0]) / (b[1] - a[1]);
                if p[0] < x {
                    c = !c;
                }
            }
        }
        c
    }

    /// Checks that the triangles tile the counter-clockwise simple polygon `xy`: n − 2 of
    /// them, each counter-clockwise (winding kept), each centroid inside the polygon, and
    /// areas summing to the shoelace area.
    fn assert_tiles(xy: &[[f64; 2]], tris: &[[usize; 3]], tol: f64) {
        assert_eq!(tris.len(), xy.len() - 2);
        let mut total = 0.0;
        for t in tris {
            let (a, b, c) = (xy[t[0]], xy[t[1]], xy[t[2]]);
            let area = orient(a, b, c) / 2.0;
            assert!(area >= -tol, "triangle {t:?} is reversed: area {area}");
            if area > tol {
                let g = [(a[0] + b[0] + c[0]) / 3.0, (a[1] + b[1] + c[1]) / 3.0];
                assert!(inside(g, xy), "triangle {t:?} lies outside the polygon");
            }
            total += area;
        }
        let expected = shoelace(xy);
        assert!(
            (total - expected).abs() <= tol * expected.abs().max(1.0),
            "area {total} vs shoelace {expected}"
        );
    }

    #[test]
    fn concave_pentagon_is_tiled() {
        // A square with a notch: the vertex (2, 1) is reflex. Closed form: area = 4·4 minus
        // the notch triangle (4,4), (2,1), (0,4) of area ½·4·3 = 6, so 10.
        let xy = [[0.0, 0.0], [4.0, 0.0], [4.0, 4.0], [2.0, 1.0], [0.0, 4.0]];
        assert!((shoelace(&xy) - 10.0).abs() < 1e-12);
        // Every rotation of the ring, so each vertex gets to be vertex 0.
        for k in 0..xy.len() {
            let ring: Vec<[f64; 2]> = (0..xy.len()).map(|i| xy[(i + k) % xy.len()]).collect();
            assert_tiles(&ring, &run(&flat(&ring)), 1e-12);
        }
    }

    #[test]
    fn a_fan_would_leave_the_polygon_but_ear_clipping_does_not() {
        let xy = [[0.0, 4.0], [0.0, 0.0], [4.0, 0.0], [4.0, 4.0], [2.0, 1.0]];
        // The fan triangle (0, 2, 3) covers the notch: its centroid (8/3, 8/3) lies above
        // the edge from (2, 1) to (4, 4), i.e. outside the polygon.
        assert!(!inside([8.0 / 3.0, 8.0 / 3.0], &xy));
        let tris = run(&flat(&xy));
        assert!(!tris.contains(&[0, 2, 3]));
        assert_tiles(&xy, &tris, 1e-12);
    }

    #[test]
    fn convex_polygon_is_a_fan_from_vertex_zero() {
        let n = 7;
        let xy: Vec<[f64; 2]> = (0..n)
            .map(|i| {
                let t = i as f64 * std::f64::consts::TAU / n as f64;
                [t.cos(), t.sin()]
            })
            .collect();
        let tris = run(&flat(&xy));
        let fan: Vec<[usize; 3]> = (1..n - 1).map(|i| [0, i, i + 1]).collect();
        assert_eq!(tris, fan);
    }

    #[test]
    fn clockwise_ring_keeps_its_winding_in_a_tilted_plane() {
        // An L-shaped hexagon, clockwise seen from +z, then tilted about the x axis by 30°.
        let xy = [
            [0.0, 0.0],
            [0.0, 2.0],
            [1.0, 2.0],
            [1.0, 1.0],
            [2.0, 1.0],
            [2.0, 0.0],
        ];
        let (s, c) = (30f64.to_radians().sin(), 30f64.to_radians().cos());
        let pts: Vec<[f64; 3]> = xy
            .iter()
            .map(|p| [p[0] + 10.0, p[1] * c - 5.0, p[1] * s + 3.0])
            .collect();
        let tris = run(&pts);
        assert_eq!(tris.len(), 4);
        // Closed form: the L has area 3; its vector area is 3 × (0, s, −c) for the
        // clockwise ring (the plane normal (0, −s, c) reversed).
        let mut vec_area = [0.0; 3];
        for t in &tris {
            let n = cross(sub(pts[t[1]], pts[t[0]]), sub(pts[t[2]], pts[t[0]]));
            // Every triangle's normal points the same way as the ring's.
            assert!(dot(n, [0.0, s, -c]) > 0.0, "{t:?}");
            for k in 0..3 {
                vec_area[k] += n[k] / 2.0;
            }
        }
        let expected = [0.0, 3.0 * s, -3.0 * c];
        for k in 0..3 {
            assert!((vec_area[k] - expected[k]).abs() < 1e-12, "{vec_area:?}");
        }
    }

    #[test]
    fn concave_quads_use_the_inner_diagonal() {
        // A dart with the reflex vertex (1, 1). Closed form: the triangle (0,0), (0,2), (3,1)
        // of area ½·2·3 = 3 minus the notch (0,0), (1,1), (0,2) of area ½·2·1 = 1, so 2;
        // written clockwise, so reversed before use.
        let dart = [[0.0, 0.0], [1.0, 1.0], [0.0, 2.0], [3.0, 1.0]];
        assert!(
            (shoelace(&dart) + 2.0).abs() < 1e-12,
            "clockwise as written"
        );
        let ccw: Vec<[f64; 2]> = dart.iter().rev().copied().collect();
        for k in 0..4 {
            let ring: Vec<[f64; 2]> = (0..4).map(|i| ccw[(i + k) % 4]).collect();
            assert_tiles(&ring, &run(&flat(&ring)), 1e-12);
        }
    }

    #[test]
    fn collinear_vertices_and_duplicates_are_handled() {
        // A rectangle with extra vertices on two edges (T-junctions from CAD).
        let xy = [
            [0.0, 0.0],
            [1.0, 0.0],
            [2.0, 0.0],
            [2.0, 1.0],
            [1.0, 1.0],
            [0.0, 1.0],
        ];
        assert_tiles(&xy, &run(&flat(&xy)), 1e-12);
    }

    #[test]
    fn degenerate_polygons_do_not_fail() {
        // All on one line: the Newell normal is zero, so a fan of zero-area triangles.
        let line = flat(&[[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [3.0, 0.0]]);
        assert_eq!(run(&line), vec![[0, 1, 2], [0, 2, 3]]);
        // A bow tie: self-intersecting; still n − 2 triangles and no panic.
        let bow = flat(&[[0.0, 0.0], [2.0, 2.0], [2.0, 0.0], [0.0, 2.0]]);
        assert_eq!(run(&bow).len(), 2);
        // Fewer than three points: nothing.
        assert!(run(&line[..2]).is_empty());
    }

    #[test]
    fn huge_concave_polygon_is_refused_quickly() {
        // A comb of 200 000 vertices: every other vertex reflex.
        let n = 200_000;
        let mut xy = Vec::with_capacity(n);
        for i in 0..n / 2 - 1 {
            xy.push([i as f64, if i % 2 == 0 { 0.0 } else { 1.0 }]);
        }
        xy.push([(n / 2) as f64, 10.0]);
        xy.push([0.0, 10.0]);
        let pts = flat(&xy);
        let start = std::time::Instant::now();
        let mut out = Vec::new();
        let err = Triangulator::default()
            .triangulate(&pts, &mut out)
            .expect_err("too large");
        assert!(matches!(err, Problem::PolygonTooComplex { .. }), "{err}");
        assert!(start.elapsed().as_secs_f64() < 2.0);
    }

    #[test]
    fn large_convex_polygon_is_linear() {
        let n = 1_000_000;
        let xy: Vec<[f64; 2]> = (0..n)
            .map(|i| {
                let t = i as f64 * std::f64::consts::TAU / n as f64;
                [t.cos(), t.sin()]
            })
            .collect();
        let mut out = Vec::new();
        Triangulator::default()
            .triangulate(&flat(&xy), &mut out)
            .expect("convex polygons have no limit");
        assert_eq!(out.len(), n - 2);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(200))]

        /// Star-shaped polygons around the origin (angles sorted, radii random) are simple;
        /// ear clipping must tile them exactly and keep their winding.
        #[test]
        fn star_polygons_are_tiled(
            radii in proptest::collection::vec(0.05f64..10.0, 4..40),
            jitter in proptest::collection::vec(0.0f64..0.9, 40),
        ) {
            let n = radii.len();
            let xy: Vec<[f64; 2]> = (0..n)
                .map(|i| {
                    let t = (i as f64 + jitter[i]) * std::f64::consts::TAU / n as f64;
                    [radii[i] * t.cos(), radii[i] * t.sin()]
                })
                .collect();
            let tris = run(&flat(&xy));
            assert_tiles(&xy, &tris, 1e-9);
        }
    }
}
