//! Cutting triangles into pieces at horizontal planes.
//!
//! Owns the geometry of slicing only: a convex polygon split by a plane `z = h`, and a
//! triangle cut into the slabs between a descending list of planes. Knows nothing of
//! pressure; the integrator decides what each piece carries.

use super::Vec3;

/// Largest number of vertices a piece can have: a triangle cut by two parallel planes is
/// at most a pentagon; one more plane inside a slab cannot occur because slabs are cut
/// one plane at a time from the top.
const MAX_VERTS: usize = 6;

/// A convex planar polygon with a small fixed capacity (no allocation).
#[derive(Clone, Copy, Debug)]
pub struct Piece {
    verts: [Vec3; MAX_VERTS],
    len: usize,
}

impl Piece {
    /// The triangle as a piece.
    pub fn triangle(t: &[Vec3; 3]) -> Piece {
        let mut verts = [Vec3::zeros(); MAX_VERTS];
        verts[..3].copy_from_slice(t);
        Piece { verts, len: 3 }
    }

    /// The vertices, in the winding of the triangle the piece came from.
    pub fn vertices(&self) -> &[Vec3] {
        &self.verts[..self.len]
    }

    fn push(&mut self, v: Vec3) {
        // A convex polygon cut by one plane gains at most one vertex; MAX_VERTS leaves room.
        if self.len < MAX_VERTS {
            self.verts[self.len] = v;
            self.len += 1;
        }
    }

    fn z_range(&self) -> (f64, f64) {
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for v in self.vertices() {
            lo = lo.min(v.z);
            hi = hi.max(v.z);
        }
        (lo, hi)
    }

    /// Splits the piece by the plane `z = h` into the part at or above it and the part at
    /// or below it. Vertices on the plane go to both; new vertices lie exactly on it.
    pub fn split(&self, h: f64) -> (Piece, Piece) {
        let empty = Piece {
            verts: [Vec3::zeros(); MAX_VERTS],
            len: 0,
        };
        let (mut above, mut below) = (empty, empty);
        let n = self.len;
        for i in 0..n {
            let a = self.verts[i];
            let b = self.verts[(i + 1) % n];
            let da = a.z - h;
            let db = b.z - h;
            if da >= 0.0 {
                above.push(a);
            }
            if da <= 0.0 {
                below.push(a);
            }
            if (da > 0.0 && db < 0.0) || (da < 0.0 && db > 0.0) {
                let t = da / (da - db);
                let mut p = a + (b - a) * t;
                p.z = h;
                above.push(p);
                below.push(p);
            }
        }
        (above, below)
    }
}

/// Calls `emit(piece, slab)` for every piece of triangle `t` cut at the `planes`.
///
/// `planes` are elevations in strictly descending order. Slab 0 lies above `planes[0]`,
/// slab `k` between `planes[k-1]` and `planes[k]`, slab `planes.len()` below the last.
/// A piece lying exactly in a plane belongs to the slab below it. A triangle that only
/// touches a plane with a vertex or an edge is not cut there, so no sliver is emitted.
#[inline]
pub fn slab_pieces(t: &[Vec3; 3], planes: &[f64], mut emit: impl FnMut(&Piece, usize)) {
    let mut rest = Piece::triangle(t);
    let (mut lo, mut hi) = rest.z_range();
    for (k, &h) in planes.iter().enumerate() {
        if h >= hi {
            continue;
        }
        if h <= lo {
            emit(&rest, k);
            return;
        }
        let (above, below) = rest.split(h);
        if above.len >= 3 {
            emit(&above, k);
        }
        rest = below;
        if rest.len < 3 {
            return;
        }
        (lo, hi) = rest.z_range();
    }
    emit(&rest, planes.len());
}

/// Clips a triangle to the part at or below `h` (for callers that need only one cut).
pub fn clip_polygon(t: &[Vec3; 3], h: f64) -> Piece {
    Piece::triangle(t).split(h).1
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn area(p: &Piece) -> f64 {
        let v = p.vertices();
        let mut a = Vec3::zeros();
        for i in 1..v.len().saturating_sub(1) {
            a += (v[i] - v[0]).cross(&(v[i + 1] - v[0]));
        }
        0.5 * a.norm()
    }

    fn tri_area(t: &[Vec3; 3]) -> f64 {
        0.5 * (t[1] - t[0]).cross(&(t[2] - t[0])).norm()
    }

    #[test]
    fn a_triangle_across_two_planes_gives_three_pieces() {
        let t = [
            Vec3::new(0.0, 0.0, 0.0),
            Vec3::new(1.0, 0.0, 3.0),
            Vec3::new(2.0, 0.0, 0.0),
        ];
        let mut pieces = Vec::new();
        slab_pieces(&t, &[2.0, 1.0], |p, k| pieces.push((area(p), k)));
        let slabs: Vec<usize> = pieces.iter().map(|p| p.1).collect();
        assert_eq!(slabs, vec![0, 1, 2]);
        // Similar triangles: the part above z = 2 has (1/3)² of the area, above z = 1 (2/3)².
        assert!((pieces[0].0 - 3.0 / 9.0).abs() < 1e-15);
        assert!((pieces[1].0 - (4.0 - 1.0) * 3.0 / 9.0).abs() < 1e-15);
        assert!((pieces[2].0 - (9.0 - 4.0) * 3.0 / 9.0).abs() < 1e-15);
    }

    #[test]
    fn a_triangle_in_a_plane_belongs_below_it() {
        let t = [
            Vec3::new(0.0, 0.0, 1.0),
            Vec3::new(1.0, 0.0, 1.0),
            Vec3::new(0.0, 1.0, 1.0),
        ];
        let mut slabs = Vec::new();
        slab_pieces(&t, &[1.0], |_, k| slabs.push(k));
        assert_eq!(slabs, vec![1]);
    }

    fn coord() -> impl Strategy<Value = f64> {
        -10.0f64..10.0
    }

    proptest! {
        // Invariant: cutting never creates or loses area, whatever the planes.
        #[test]
        fn clipping_conserves_area(
            c in proptest::array::uniform9(coord()),
            mut planes in proptest::collection::vec(-12.0f64..12.0, 0..5),
        ) {
            planes.sort_by(|a, b| b.total_cmp(a));
            planes.dedup();
            let t = [
                Vec3::new(c[0], c[1], c[2]),
                Vec3::new(c[3], c[4], c[5]),
                Vec3::new(c[6], c[7], c[8]),
            ];
            let mut sum = 0.0;
            let mut last_slab = 0;
            slab_pieces(&t, &planes, |p, k| {
                sum += area(p);
                assert!(k >= last_slab, "pieces come top to bottom");
                last_slab = k;
                let (lo, hi) = p.z_range();
                if k > 0 { assert!(hi <= planes[k - 1] + 1e-12); }
                if k < planes.len() { assert!(lo >= planes[k] - 1e-12); }
            });
            let whole = tri_area(&t);
            prop_assert!((sum - whole).abs() <= 1e-12 * (1.0 + whole), "{sum} vs {whole}");
        }
    }
}
