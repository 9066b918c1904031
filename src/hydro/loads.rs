//! What a force and a moment say together: the line of action, the centre of pressure on
//! a plane, and the planarity test of a set of triangles.
//!
//! Pure vector algebra; frame-agnostic (every argument in one frame, results in it too).

use super::{Tri, Vec3};

/// Tolerance of the zero-force test: `|F| ≤ ZERO_FORCE_REL × Σ |facet force|` is zero.
pub const ZERO_FORCE_REL: f64 = 1e-9;

/// Tolerance of the planarity test, relative to the bounding-box diagonal.
pub const PLANAR_REL: f64 = 1e-6;

/// The central axis of a force system (a wrench): the line along which the resultant acts,
/// with the couple that remains about it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LineOfAction {
    /// The point of the axis nearest to the moment centre, m.
    pub point: Vec3,
    /// Unit vector along the force.
    pub direction: Vec3,
    /// Moment component along `direction`, N·m (0 for parallel forces, such as pressure
    /// on a plane or pure buoyancy).
    pub couple: f64,
}

/// The central axis of the force `force` with moment `moment` about `centre`.
///
/// Returns `None` when `|force| ≤ ZERO_FORCE_REL × abs_force_sum`. The axis point is
/// `centre + F × M / |F|²` (Poinsot's central axis), the couple `M · F / |F|`.
pub fn line_of_action(
    force: Vec3,
    moment: Vec3,
    centre: Vec3,
    abs_force_sum: f64,
) -> Option<LineOfAction> {
    let f2 = force.norm_squared();
    let f = f2.sqrt();
    if f.is_nan() || f <= ZERO_FORCE_REL * abs_force_sum || f == 0.0 {
        return None;
    }
    let direction = force / f;
    Some(LineOfAction {
        point: centre + force.cross(&moment) / f2,
        direction,
        couple: moment.dot(&direction),
    })
}

/// A plane through `point` with unit normal `normal`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Plane {
    /// A point of the plane (the area-weighted centroid of the triangles).
    pub point: Vec3,
    /// Unit normal (sign arbitrary).
    pub normal: Vec3,
}

impl Plane {
    /// Where a line meets the plane, or `None` if it runs parallel to it.
    pub fn meet(&self, line: &LineOfAction) -> Option<Vec3> {
        let denom = self.normal.dot(&line.direction);
        if denom.abs() < 1e-12 {
            return None;
        }
        let t = self.normal.dot(&(self.point - line.point)) / denom;
        Some(line.point + t * line.direction)
    }
}

/// The area-weighted plane of a set of triangles, if they all lie in it.
///
/// The normal is the sum of the area vectors, each turned to agree with the largest
/// facet's (so mixed winding does not cancel it); the point is the area-weighted centroid.
/// The set is planar when every vertex lies within `PLANAR_REL ×` the bounding-box
/// diagonal of that plane. Returns `None` for an empty, degenerate or non-planar set.
pub fn plane_of(tris: impl Iterator<Item = Tri> + Clone) -> Option<Plane> {
    let mut e = Extremes::none();
    for p in tris.clone().flatten() {
        e.take(p);
    }
    plane_of_given(tris, &e)
}

/// The bounding box of a set of points and six of its points, which [`plane_of_given`]
/// tries first as the corners of a tetrahedron too large for a plane.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Extremes {
    pub lo: Vec3,
    pub hi: Vec3,
    /// The first point lowest and highest along x, then y, then z.
    pub at: [Vec3; 6],
}

impl Extremes {
    /// Of no point: an empty box.
    pub fn none() -> Extremes {
        Extremes {
            lo: Vec3::repeat(f64::INFINITY),
            hi: Vec3::repeat(f64::NEG_INFINITY),
            at: [Vec3::zeros(); 6],
        }
    }

    /// The extremes of both sets: `b`'s point along an axis only where it is strictly
    /// beyond `a`'s, so the first of equal points is kept when `a` comes first.
    pub fn join(a: Extremes, b: Extremes) -> Extremes {
        let mut e = a;
        for k in 0..3 {
            if b.lo[k] < e.lo[k] {
                e.lo[k] = b.lo[k];
                e.at[2 * k] = b.at[2 * k];
            }
            if b.hi[k] > e.hi[k] {
                e.hi[k] = b.hi[k];
                e.at[2 * k + 1] = b.at[2 * k + 1];
            }
        }
        e
    }

    /// Takes in one more point.
    pub fn take(&mut self, p: Vec3) {
        for k in 0..3 {
            if p[k] < self.lo[k] {
                self.lo[k] = p[k];
                self.at[2 * k] = p;
            }
            if p[k] > self.hi[k] {
                self.hi[k] = p[k];
                self.at[2 * k + 1] = p;
            }
        }
    }
}

/// [`plane_of`] of `tris`, whose bounding box is `e.lo`–`e.hi` exactly; `e.at` may be any
/// six of their vertices (the extremes rule most solids out fastest). Any six give the
/// same answer: a tetrahedron of vertices proves only what the full check finds too.
pub fn plane_of_given(tris: impl Iterator<Item = Tri> + Clone, e: &Extremes) -> Option<Plane> {
    // First a cheap test that rules most solids out, on the bounding box and six vertices.
    // Points within `tol` of a plane (a slab 2·tol thick) span tetrahedra of volume at
    // most tol·D², D the box diagonal (the triple product of three differences, each at
    // most D across the slab and 2·tol along its normal, has three terms of at most
    // 2·tol·D² each; divided by 6). A tetrahedron of the given vertices with more than
    // twice that volume proves the set is not planar.
    let (lo, hi, extreme) = (e.lo, e.hi, e.at);
    let d2 = (hi - lo).norm_squared();
    let tol = PLANAR_REL * d2.sqrt();
    let mut six_v = 0.0f64; // the largest tetrahedron, six times its volume
    for a in 0..6 {
        for b in a + 1..6 {
            for c in b + 1..6 {
                for d in c + 1..6 {
                    let [pa, pb, pc, pd] = [a, b, c, d].map(|i| extreme[i]);
                    six_v = six_v.max((pb - pa).dot(&(pc - pa).cross(&(pd - pa))).abs());
                }
            }
        }
    }
    if six_v > 2.0 * 6.0 * tol * d2 {
        return None;
    }

    let mut largest = Vec3::zeros();
    for t in tris.clone() {
        let a = (t[1] - t[0]).cross(&(t[2] - t[0]));
        if a.norm_squared() > largest.norm_squared() {
            largest = a;
        }
    }
    if largest == Vec3::zeros() {
        return None;
    }
    let mut normal = Vec3::zeros();
    let mut centroid = Vec3::zeros();
    let mut area = 0.0;
    for t in tris.clone() {
        let a = (t[1] - t[0]).cross(&(t[2] - t[0]));
        normal += if a.dot(&largest) < 0.0 { -a } else { a };
        let w = a.norm();
        centroid += w * (t[0] + t[1] + t[2]) / 3.0;
        area += w;
    }
    let normal = normal.try_normalize(0.0)?;
    let point = centroid / area;
    let planar = tris
        .flatten()
        .all(|p| normal.dot(&(p - point)).abs() <= tol);
    planar.then_some(Plane { point, normal })
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn central_axis_of_a_force_with_an_offset_moment() {
        // A force (0,0,10) acting through (2,3,0): M about the origin = r × F = (30,−20,0).
        let f = Vec3::new(0.0, 0.0, 10.0);
        let m = Vec3::new(2.0, 3.0, 0.0).cross(&f);
        let l = line_of_action(f, m, Vec3::zeros(), 10.0).expect("non-zero");
        assert_relative_eq!(l.point, Vec3::new(2.0, 3.0, 0.0), epsilon = 1e-15);
        assert_relative_eq!(l.couple, 0.0);
        // A pure torque along the force is a couple of 5 N·m.
        let l = line_of_action(f, m + Vec3::new(0.0, 0.0, 5.0), Vec3::zeros(), 10.0).expect("x");
        assert_relative_eq!(l.couple, 5.0);
        assert!(line_of_action(Vec3::new(1e-12, 0.0, 0.0), m, Vec3::zeros(), 10.0).is_none());
    }

    #[test]
    fn planarity_ignores_winding_and_catches_a_fold() {
        let v = Vec3::new;
        let flat = [
            [v(0.0, 0.0, 0.0), v(1.0, 0.0, 0.0), v(1.0, 1.0, 0.0)],
            [v(0.0, 0.0, 0.0), v(0.0, 1.0, 0.0), v(1.0, 1.0, 0.0)], // reversed winding
        ];
        let p = plane_of(flat.iter().copied()).expect("planar");
        assert_relative_eq!(p.normal.z.abs(), 1.0);
        let folded = [
            flat[0],
            [v(0.0, 0.0, 0.0), v(0.0, 1.0, 0.1), v(1.0, 1.0, 0.0)],
        ];
        assert!(plane_of(folded.iter().copied()).is_none());
    }

    #[test]
    fn a_tilted_plane_with_noise_under_the_tolerance_is_planar_and_over_it_is_not() {
        // A 10 × 10 grid on the plane x + 2y + 3z = 4, every vertex pushed off it along
        // the normal by ±`off` times the planarity tolerance (alternating).
        let n = Vec3::new(1.0, 2.0, 3.0).normalize();
        let u = Vec3::new(2.0, -1.0, 0.0).normalize();
        let v = n.cross(&u);
        let base = n * 4.0 / Vec3::new(1.0, 2.0, 3.0).norm();
        let grid = |off: f64| -> Vec<Tri> {
            let at = |i: usize, j: usize| -> Vec3 {
                let sign = if (i + j).is_multiple_of(2) { 1.0 } else { -1.0 };
                base + u * i as f64 + v * j as f64 + n * sign * off
            };
            let mut t = Vec::new();
            for i in 0..10 {
                for j in 0..10 {
                    t.push([at(i, j), at(i + 1, j), at(i + 1, j + 1)]);
                    t.push([at(i, j), at(i + 1, j + 1), at(i, j + 1)]);
                }
            }
            t
        };
        let flat = grid(0.0);
        let (lo, hi) = flat.iter().flatten().fold(
            (Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY)),
            |(a, b), p| (a.inf(p), b.sup(p)),
        );
        // The pushes change the box by far less than the margins below.
        let tol = PLANAR_REL * (hi - lo).norm();
        let p = plane_of(grid(0.5 * tol).iter().copied()).expect("within the tolerance");
        assert_relative_eq!(p.normal.dot(&n).abs(), 1.0, epsilon = 1e-9);
        assert!(plane_of(grid(3.0 * tol).iter().copied()).is_none());
    }

    #[test]
    fn any_six_vertices_given_with_the_box_give_the_plane_of_the_full_check() {
        // The six given points only try to prove a set non-planar; whichever six vertices
        // they are, the answer is plane_of's own (planar, nearly planar within and beyond
        // the tolerance, and solids).
        let tol = PLANAR_REL * 10.0;
        let plate = |off: f64| -> Vec<Tri> {
            let mut t = Vec::new();
            for i in 0..6 {
                let x = i as f64;
                let z = if i % 2 == 0 { off } else { -off };
                t.push([
                    Vec3::new(x, 0.0, z),
                    Vec3::new(x + 1.0, 0.0, -z),
                    Vec3::new(x, 4.0, z),
                ]);
            }
            t
        };
        let torus: Vec<Tri> = shapes::torus([0.3, -1.0, 2.0], 3.0, 1.0, 12, 8)
            .into_iter()
            .map(|f| f.map(Vec3::from))
            .collect();
        for set in [plate(0.0), plate(0.3 * tol), plate(5.0 * tol), torus] {
            let full = plane_of(set.iter().copied());
            let points: Vec<Vec3> = set.iter().flatten().copied().collect();
            let mut e = Extremes::none();
            points.iter().for_each(|&p| e.take(p));
            for start in [0, 1, 5] {
                let mut given = e;
                given.at = std::array::from_fn(|i| points[(start + 3 * i) % points.len()]);
                assert_eq!(plane_of_given(set.iter().copied(), &given), full);
            }
            assert_eq!(plane_of_given(set.iter().copied(), &e), full);
        }
    }
}
