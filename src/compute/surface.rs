//! The free surface a floating case is integrated on: the solved plane `n·x = c` (or, when
//! the body sinks, a level at its top), the facets turned so that plane is horizontal, the
//! case's liquids as profiles in that levelled frame, and the sums turned back.
//!
//! CONTRACT.md ("Pinned extension: floating bodies"): every other result of a floating
//! case is computed on the solved free surface, in mesh axes. The core integrates below
//! horizontal planes only, so the local facets are rotated about the local origin by a
//! proper rotation `R` taking `n` to `+z` ([`float::levelling`]); the plane becomes
//! `z = c`, and force, moment and the volume's first moment come back by `Rᵀ`. Scalars
//! (areas, volumes, pressures) are unchanged by a rotation; `uplift` and `downthrust` are
//! summed along `n` in the levelled frame, so they are relative to the free-surface normal,
//! as is the case's `vertical_force`.
//!
//! Any other liquid of the case keeps its level, read as the elevation of a plane normal
//! to `n` measured from the mesh origin (the upright meaning when `n` is up).

use nalgebra::Matrix3;
use rayon::prelude::*;

use super::ComputeError;
use super::cases::profiles_of;
use crate::hydro::float;
use crate::hydro::{Liquid, PartAccum, Profile, Tri, Tris, Vec3};
use crate::sidecar::Sidecar;

/// The free surface of a floating case, internal frame.
#[derive(Clone, Debug)]
pub(super) struct Surface {
    /// Internal frame → levelled frame (`rotation · normal = +z`).
    rotation: Matrix3<f64>,
    /// `n`, unit, internal frame, pointing into the air.
    pub(super) normal: Vec3,
    /// `c` of `n·x = c` for internal (not local) coordinates, m.
    pub(super) elevation_m: f64,
    /// The liquid the body floats in (index into the sidecar's liquids).
    liquid: usize,
}

impl Surface {
    /// The plane `n·x = c`, `c` for internal coordinates; `n` unit.
    pub(super) fn new(normal: Vec3, elevation_m: f64, liquid: usize) -> Surface {
        Surface {
            rotation: float::levelling(normal),
            normal,
            elevation_m,
            liquid,
        }
    }

    /// The local facets turned into the levelled frame (about the local origin).
    pub(super) fn tris<T: Tris + ?Sized>(&self, tris: &T) -> Vec<Tri> {
        (0..tris.count())
            .into_par_iter()
            .map(|f| self.turn(&tris.tri(f)))
            .collect()
    }

    /// One local facet turned into the levelled frame.
    pub(super) fn turn(&self, t: &Tri) -> Tri {
        let r = self.rotation;
        [r * t[0], r * t[1], r * t[2]]
    }

    /// One local vector or point of the levelled frame back in the internal frame.
    pub(super) fn back(&self, v: Vec3) -> Vec3 {
        self.rotation.transpose() * v
    }

    /// The case's liquids with the floating one's level set to this surface's elevation.
    pub(super) fn liquids(&self, liquids: &[Liquid]) -> Vec<Liquid> {
        let mut out = liquids.to_vec();
        if let Some(l) = out.get_mut(self.liquid) {
            l.level_m = self.elevation_m;
        }
        out
    }

    /// The case's liquids as profiles in the levelled frame about the local origin
    /// `centre` (internal): a point's levelled `z` is `n·(x − centre)`.
    pub(super) fn profiles(
        &self,
        sidecar: &Sidecar,
        case: &str,
        liquids: &[Liquid],
        centre: Vec3,
    ) -> Result<Vec<Profile>, ComputeError> {
        profiles_of(
            sidecar,
            case,
            &self.liquids(liquids),
            self.normal.dot(&centre),
        )
    }

    /// Sums of the levelled frame back in the internal frame (about the same origin).
    pub(super) fn accum_back(&self, a: PartAccum) -> PartAccum {
        PartAccum {
            force: self.back(a.force),
            moment: self.back(a.moment),
            volume_moment: self.back(a.volume_moment),
            ..a
        }
    }
}
