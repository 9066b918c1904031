//! The pure computational core: pressure model, clipping, exact integration, topology.
//!
//! Nothing here touches the file system, the clock, the environment or JSON; every
//! function is a pure function of its arguments, so the core is easy to test and fuzz.
//!
//! # Frame and sign conventions (referred to from everywhere else)
//!
//! * The core works in an *internal frame*: metres, right-handed, `z` is elevation (up,
//!   against gravity). [`Frame`] maps the mesh's own axes (after unit scaling) into it by a
//!   proper rotation (a signed axis permutation), so vectors and moments map back unchanged
//!   in meaning.
//! * All integration is done about a *local origin* (the centre of the mesh's bounding
//!   box): coordinates are shifted before any product is formed, so meshes far from the
//!   global origin lose no digits to cancellation. Moments are carried to the requested
//!   point afterwards with `M_O = M_c + (c − O) × F`.
//! * Gauge pressure: `p(z) = p_s + g ∫_z^level ρ dζ` below the free surface, `p = p_s` above.
//! * The force of the liquid on a surface is `F = −∫ p n dA`, with `n` the unit normal that
//!   points from the surface into the liquid. The moment about `O` is `M = ∫ (r − O) × dF`.
//! * A triangle's *stored* orientation is the right-hand rule over its vertex order. Each
//!   facet carries a [`Wetting`] that says whether the liquid is on that side, on the other
//!   side, or nowhere (dry).

mod clip;
pub mod float;
mod integrate;
mod loads;
mod pressure;
pub mod progress;
mod sweep;
mod topology;

pub use clip::{Piece, clip_polygon, slab_pieces};
pub use integrate::{
    CHUNK, FacetLoads, Integration, PartAccum, PartInput, facet_loads, integrate, part_planes,
};
pub use loads::{
    Extremes, LineOfAction, PLANAR_REL, Plane, ZERO_FORCE_REL, line_of_action, plane_of,
    plane_of_given,
};
pub use pressure::{Layer, Liquid, LiquidError, Profile};
pub use progress::{Progress, Quiet, Stage, Tally};
pub use sweep::{SweepPart, SweptLiquid, sweep, sweep_with};
pub use topology::{
    Defect, EdgeFault, NO_SHELL, ShellInfo, Topology, WELD_TOLERANCE_REL, bounding_box,
};

use nalgebra::Vector3;

/// A 3-vector of f64 in whatever frame the surrounding code states.
pub type Vec3 = Vector3<f64>;

/// A triangle as three vertices, in the order stored in the file.
pub type Tri = [Vec3; 3];

/// Triangles the core reads one at a time by index: a slice of [`Tri`], or a mesh's
/// facets as they were read (f32 from a binary STL), each mapped into the frame the
/// caller states when it is read. The core never needs them all in f64 at once.
pub trait Tris: Sync {
    /// Number of triangles.
    fn count(&self) -> usize;
    /// Triangle `i` (panics when `i` is out of range, like slice indexing).
    fn tri(&self, i: usize) -> Tri;
    /// Corner `k` of triangle `i`.
    fn corner(&self, i: usize, k: usize) -> Vec3 {
        self.tri(i)[k]
    }
}

impl Tris for [Tri] {
    fn count(&self) -> usize {
        self.len()
    }
    fn tri(&self, i: usize) -> Tri {
        self[i]
    }
    fn corner(&self, i: usize, k: usize) -> Vec3 {
        self[i][k]
    }
}

/// A `Vec<Tri>` or anything else that derefs to a slice of them.
impl<D: std::ops::Deref<Target = [Tri]> + Sync> Tris for D {
    fn count(&self) -> usize {
        self.deref().count()
    }
    fn tri(&self, i: usize) -> Tri {
        self.deref().tri(i)
    }
    fn corner(&self, i: usize, k: usize) -> Vec3 {
        self.deref().corner(i, k)
    }
}

/// On which side of a facet the liquid acts, resolved per facet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Wetting {
    /// The liquid is on the side the stored (right-hand-rule) normal points to.
    Front,
    /// The liquid is on the opposite side.
    Back,
    /// No liquid reaches this facet (a sealed cavity, or a part declared dry).
    Dry,
}

/// Which side of the surface the liquid is on, as the user states it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WetSide {
    /// Closed mesh, liquid around the body.
    Outside,
    /// Closed mesh, liquid contained in the body.
    Inside,
    /// Liquid on the side the stored right-hand-rule normals point to.
    Front,
    /// Liquid on the other side.
    Back,
}

impl WetSide {
    /// The keyword used in sidecars and results.
    pub fn as_str(self) -> &'static str {
        match self {
            WetSide::Outside => "outside",
            WetSide::Inside => "inside",
            WetSide::Front => "front",
            WetSide::Back => "back",
        }
    }
}

/// The mesh axis that points up, against gravity.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum UpAxis {
    PosX,
    NegX,
    PosY,
    NegY,
    PosZ,
    NegZ,
}

impl UpAxis {
    /// The keyword used in sidecars and results (`"+z"` …).
    pub fn as_str(self) -> &'static str {
        match self {
            UpAxis::PosX => "+x",
            UpAxis::NegX => "-x",
            UpAxis::PosY => "+y",
            UpAxis::NegY => "-y",
            UpAxis::PosZ => "+z",
            UpAxis::NegZ => "-z",
        }
    }

    /// Every axis, in the order of the enum.
    pub const ALL: [UpAxis; 6] = [
        UpAxis::PosX,
        UpAxis::NegX,
        UpAxis::PosY,
        UpAxis::NegY,
        UpAxis::PosZ,
        UpAxis::NegZ,
    ];

    /// The axis named by its keyword (`"+z"` …, as [`UpAxis::as_str`] writes it).
    pub fn from_keyword(keyword: &str) -> Option<UpAxis> {
        UpAxis::ALL.into_iter().find(|a| a.as_str() == keyword)
    }

    /// The index (0, 1, 2 for x, y, z) of the mesh axis along up.
    pub fn index(self) -> usize {
        match self {
            UpAxis::PosX | UpAxis::NegX => 0,
            UpAxis::PosY | UpAxis::NegY => 1,
            UpAxis::PosZ | UpAxis::NegZ => 2,
        }
    }

    /// The unit vector of the up direction in mesh axes.
    pub fn unit(self) -> Vec3 {
        match self {
            UpAxis::PosX => Vec3::new(1.0, 0.0, 0.0),
            UpAxis::NegX => Vec3::new(-1.0, 0.0, 0.0),
            UpAxis::PosY => Vec3::new(0.0, 1.0, 0.0),
            UpAxis::NegY => Vec3::new(0.0, -1.0, 0.0),
            UpAxis::PosZ => Vec3::new(0.0, 0.0, 1.0),
            UpAxis::NegZ => Vec3::new(0.0, 0.0, -1.0),
        }
    }
}

/// The map from mesh axes (in file units) to the internal frame (metres, `z` up).
///
/// `internal = rotation · (scale · mesh)`, where `rotation` is a proper signed permutation,
/// so it is exact in floating point apart from the unit scaling.
#[derive(Clone, Copy, Debug)]
pub struct Frame {
    /// Metres per mesh unit.
    pub scale_m: f64,
    /// The up axis of the mesh.
    pub up: UpAxis,
}

/// Mesh coordinates (file units) to the internal frame: see [`Frame::point_map`].
#[derive(Clone, Copy, Debug)]
pub struct PointMap {
    axes: [usize; 3],
    factors: [f64; 3],
}

impl PointMap {
    /// The point `p` (mesh axes, file units) in the internal frame, less `origin`.
    #[inline]
    pub fn apply(&self, p: [f64; 3], origin: &Vec3) -> Vec3 {
        Vec3::new(
            self.factors[0] * p[self.axes[0]] - origin.x,
            self.factors[1] * p[self.axes[1]] - origin.y,
            self.factors[2] * p[self.axes[2]] - origin.z,
        )
    }
}

impl Frame {
    /// Rows of the rotation matrix from mesh axes to the internal frame.
    fn rows(self) -> [(usize, f64); 3] {
        // Each row picks one mesh axis with a sign; the third row is the up axis, and the
        // first two are chosen so that the determinant is +1 (row1 × row2 = row3).
        match self.up {
            UpAxis::PosZ => [(0, 1.0), (1, 1.0), (2, 1.0)],
            UpAxis::NegZ => [(0, 1.0), (1, -1.0), (2, -1.0)],
            UpAxis::PosY => [(2, 1.0), (0, 1.0), (1, 1.0)],
            UpAxis::NegY => [(0, 1.0), (2, 1.0), (1, -1.0)],
            UpAxis::PosX => [(1, 1.0), (2, 1.0), (0, 1.0)],
            UpAxis::NegX => [(2, 1.0), (1, 1.0), (0, -1.0)],
        }
    }

    /// A point given in mesh axes and file units, in the internal frame (metres).
    pub fn point_in(self, p: [f64; 3]) -> Vec3 {
        let r = self.rows();
        Vec3::new(
            r[0].1 * p[r[0].0] * self.scale_m,
            r[1].1 * p[r[1].0] * self.scale_m,
            r[2].1 * p[r[2].0] * self.scale_m,
        )
    }

    /// [`Frame::point_in`] made ready for many points: each internal axis as one mesh
    /// axis times one factor (the row's sign times the scale). A sign of ±1 and rounding
    /// to nearest commute, so it gives the same bits as `point_in`.
    pub fn point_map(self) -> PointMap {
        let r = self.rows();
        PointMap {
            axes: r.map(|(k, _)| k),
            factors: r.map(|(_, sign)| sign * self.scale_m),
        }
    }

    /// A point or vector given in mesh axes but already in metres, in the internal frame.
    pub fn vector_in(self, v: [f64; 3]) -> Vec3 {
        let r = self.rows();
        Vec3::new(r[0].1 * v[r[0].0], r[1].1 * v[r[1].0], r[2].1 * v[r[2].0])
    }

    /// An internal-frame vector (metres or any SI quantity) back in mesh axes.
    pub fn vector_out(self, v: Vec3) -> [f64; 3] {
        let r = self.rows();
        let mut out = [0.0; 3];
        for (i, (axis, sign)) in r.iter().enumerate() {
            out[*axis] = sign * v[i];
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_frame_is_a_proper_rotation_with_z_up() {
        for up in UpAxis::ALL {
            let f = Frame { scale_m: 1.0, up };
            let ex = f.vector_in([1.0, 0.0, 0.0]);
            let ey = f.vector_in([0.0, 1.0, 0.0]);
            let ez = f.vector_in([0.0, 0.0, 1.0]);
            let m = nalgebra::Matrix3::from_columns(&[ex, ey, ez]);
            assert_eq!(m.determinant(), 1.0, "{up:?}");
            let u = up.unit();
            assert_eq!(
                f.vector_in([u.x, u.y, u.z]),
                Vec3::new(0.0, 0.0, 1.0),
                "{up:?}"
            );
            let v = [0.3, -1.7, 2.9];
            let back = f.vector_out(f.vector_in(v));
            assert_eq!(back, v, "{up:?}");
        }
    }

    #[test]
    fn the_point_map_gives_the_bits_of_point_in() {
        // Scales that round (0.3048, 0.0254, 1e-3) and awkward values, signs and zeros.
        let values = [
            0.1,
            -0.1,
            1e-300,
            -0.0,
            0.0,
            123456.789,
            -7.3e12,
            2.0f64.sqrt(),
        ];
        let origin = Vec3::new(0.7, -3.1, 1e5);
        for up in UpAxis::ALL {
            for scale_m in [1.0, 0.3048, 0.0254, 1e-3] {
                let f = Frame { scale_m, up };
                let map = f.point_map();
                for (i, &a) in values.iter().enumerate() {
                    let p = [a, values[(i + 3) % 8], values[(i + 5) % 8]];
                    let want = f.point_in(p) - origin;
                    let got = map.apply(p, &origin);
                    for k in 0..3 {
                        assert_eq!(
                            got[k].to_bits(),
                            want[k].to_bits(),
                            "{up:?} {scale_m} {p:?}"
                        );
                    }
                }
            }
        }
    }
}
