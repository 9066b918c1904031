//! The pressure field of one case, facet by facet: every piece of the surface as clipped
//! at the free surface and the layer interfaces with its pressures, and one row of load
//! per facet, for the pictures and the finite-element exports.
//!
//! It reads a [`Model`] again and formats nothing: `crate::report` turns a [`Field`] into
//! the `.vtp` and `.csv` exports, and the pipeline writes them.

use super::cases::profiles_of;
use super::{ComputeError, Model, compute_model};
use crate::hydro::{self, Profile, Vec3, Wetting};
use crate::mesh::Mesh;
use crate::sidecar::Sidecar;

/// The pressure field of one case, facet by facet, for pictures and finite-element
/// loads: every loaded or dry piece of the surface as clipped at the free surface and the
/// layer interfaces, and one row per facet. Mesh axes, metres, SI.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// Pieces in facet order (a facet cut by planes gives several).
    pub pieces: Vec<FieldPiece>,
    /// One row per facet, in file order within parts.
    pub facets: Vec<FacetRow>,
    /// Part names, indexed by `part` below.
    pub parts: Vec<String>,
}

/// A convex planar piece of one facet on which the pressure is linear.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldPiece {
    pub facet: usize,
    pub part: usize,
    /// Whether liquid is in contact (the piece is at or below the free surface of a liquid
    /// that reaches the facet); other pieces carry only gas pressure, or nothing when dry.
    pub wetted: bool,
    /// Vertices in the facet's stored winding, mesh axes, m.
    pub vertices: Vec<[f64; 3]>,
    /// Gauge pressure at each vertex, Pa (0 on a dry facet).
    pub pressure: Vec<f64>,
    /// Mean traction (force per area) on the piece, N/m², mesh axes.
    pub traction: [f64; 3],
    /// m².
    pub area: f64,
}

/// The load on one facet, for transfer to a finite-element model.
#[derive(Clone, Debug, PartialEq)]
pub struct FacetRow {
    pub part: usize,
    /// Index of the facet within its part (from 0).
    pub index: usize,
    /// m, mesh axes.
    pub centroid: [f64; 3],
    /// Unit normal pointing into the liquid (the stored normal for a dry facet).
    pub normal: [f64; 3],
    /// m².
    pub area: f64,
    /// |force| / area over the whole facet, Pa (0 when dry).
    pub mean_pressure: f64,
    /// N, mesh axes; the rows sum to the case's force.
    pub force: [f64; 3],
}

/// The pressure field of case `case` (an index into the sidecar's cases).
pub fn field(mesh: &Mesh, sidecar: &Sidecar, case: usize) -> Result<Field, ComputeError> {
    let (_, model) = compute_model("", mesh.clone(), sidecar)?;
    model.field(sidecar, case)
}

impl Model {
    /// The pressure field of case `case` (an index into the sidecar's cases); `sidecar`
    /// must be the one the model was computed with.
    pub fn field(&self, sidecar: &Sidecar, case: usize) -> Result<Field, ComputeError> {
        let prep = &self.prep;
        let Some(case) = sidecar.cases.get(case) else {
            return Ok(Field {
                pieces: Vec::new(),
                facets: Vec::new(),
                parts: Vec::new(),
            });
        };
        let profiles = profiles_of(sidecar, &case.name, &case.liquids, prep.centre.z)?;
        let out = |v: Vec3| prep.frame.vector_out(v);
        let mut pieces = Vec::new();
        let mut facets = Vec::with_capacity(prep.tris.len());
        for (pi, (part, (liquid, _))) in prep.parts.iter().zip(&prep.wet.part_setup).enumerate() {
            let profile = liquid.map(|i| &profiles[i]);
            let planes = hydro::part_planes(profile, None);
            for f in part.facets.clone() {
                let t = &prep.tris[f];
                let wet = prep.wet.wetting[f];
                let side = match wet {
                    Wetting::Front => 1.0,
                    Wetting::Back => -1.0,
                    Wetting::Dry => 0.0,
                };
                let prof = if side == 0.0 { None } else { profile };
                let a = 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0]));
                let area = a.norm();
                let normal = if side == 0.0 { a } else { side * a };
                let loads = hydro::facet_loads(t, &planes, prof, wet, None, 0);
                let level = prof.map_or(f64::NEG_INFINITY, Profile::level);
                hydro::slab_pieces(t, &planes, |piece, _| {
                    let v = piece.vertices();
                    let pressure: Vec<f64> = v
                        .iter()
                        .map(|p| prof.map_or(0.0, |pr| pr.pressure(p.z)))
                        .collect();
                    let mut av = Vec3::zeros();
                    for k in 1..v.len() - 1 {
                        av += 0.5 * (v[k] - v[0]).cross(&(v[k + 1] - v[0]));
                    }
                    let pa = av.norm();
                    // The mean of a linear field over a convex polygon, by its fan triangles.
                    let mut mean = 0.0;
                    for k in 1..v.len() - 1 {
                        let ak = 0.5 * (v[k] - v[0]).cross(&(v[k + 1] - v[0])).norm();
                        mean += ak * (pressure[0] + pressure[k] + pressure[k + 1]) / 3.0;
                    }
                    let mean = if pa > 0.0 { mean / pa } else { 0.0 };
                    let n = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                    let zc = v.iter().map(|p| p.z).sum::<f64>() / v.len() as f64;
                    pieces.push(FieldPiece {
                        facet: f,
                        part: pi,
                        wetted: prof.is_some() && zc <= level,
                        vertices: v.iter().map(|p| out(p + prep.centre)).collect(),
                        pressure,
                        traction: out(-mean * n),
                        area: pa,
                    });
                });
                let n = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                facets.push(FacetRow {
                    part: pi,
                    index: f - part.facets.start,
                    centroid: out((t[0] + t[1] + t[2]) / 3.0 + prep.centre),
                    normal: out(n),
                    area,
                    mean_pressure: if area > 0.0 {
                        // `hypot`: no overflow while the components are finite.
                        let f = loads.force;
                        f.x.hypot(f.y).hypot(f.z) / area
                    } else {
                        0.0
                    },
                    force: out(loads.force),
                });
            }
        }
        Ok(Field {
            pieces,
            facets,
            parts: prep.parts.iter().map(|p| p.name.clone()).collect(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::compute;
    use crate::compute::tests::{block, mesh, side};
    use approx::assert_relative_eq;

    #[test]
    fn the_facet_rows_sum_to_the_case_force() {
        let s = side(r#"{"units": "m", "liquid": {"level": 1.3, "density": 1000}}"#);
        let m = mesh(vec![("b", shapes::perturb(&block(), 0.01, 7))]);
        let r = compute("b", &m, &s).expect("computes");
        let f = field(&m, &s, 0).expect("computes");
        let mut sum = [0.0; 3];
        for row in &f.facets {
            for (s, x) in sum.iter_mut().zip(row.force) {
                *s += x;
            }
        }
        let total = r.cases[0].loads.force;
        for k in 0..3 {
            assert_relative_eq!(sum[k], total[k], epsilon = 1e-9 * r.cases[0].loads.uplift);
        }
        // Pieces tile the surface: their areas add up to the facets'.
        let a1: f64 = f.pieces.iter().map(|p| p.area).sum();
        let a2: f64 = f.facets.iter().map(|p| p.area).sum();
        assert_relative_eq!(a1, a2, max_relative = 1e-12);
        let wet: f64 = f.pieces.iter().filter(|p| p.wetted).map(|p| p.area).sum();
        assert_relative_eq!(wet, r.cases[0].loads.wetted_area, max_relative = 1e-12);
    }
}
