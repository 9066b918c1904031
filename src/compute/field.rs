//! The pressure field of one case, facet by facet: every piece of the surface as clipped
//! at the free surface and the layer interfaces with its pressures, and one row of load
//! per facet, for the pictures and the finite-element exports.
//!
//! It reads a [`Model`] again and formats nothing: `crate::report` turns a [`Field`] into
//! the `.vtp` and `.csv` exports, and the pipeline writes them.

use super::cases::profiles_of;
use super::{ComputeError, Model, compute_model};
use crate::hydro::{self, Profile, Tris, Vec3, Wetting};
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
    /// The consistent nodal force of every vertex that carries load, by vertex number.
    pub nodes: Vec<NodalLoad>,
}

/// The consistent nodal force at one vertex: f_i = −∫ N_i p n dA over the facets around it
/// (N_i the linear shape function of the vertex on each facet), exact for the piecewise-
/// linear pressure, clipped pieces included. The loads of all vertices sum to the case's
/// force, and their moments to its moment.
#[derive(Clone, Debug, PartialEq)]
pub struct NodalLoad {
    /// OBJ: the file's 1-based vertex number; STL: the 1-based number of the distinct
    /// vertex position (identical coordinates are one vertex) in order of first appearance.
    pub vertex: u64,
    /// m, mesh axes.
    pub position: [f64; 3],
    /// N, mesh axes.
    pub force: [f64; 3],
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
    pub fn field(&self, sidecar: &Sidecar, index: usize) -> Result<Field, ComputeError> {
        let prep = &self.prep;
        let Some(case) = sidecar.cases.get(index) else {
            return Ok(Field {
                pieces: Vec::new(),
                facets: Vec::new(),
                parts: Vec::new(),
                nodes: Vec::new(),
            });
        };
        // A floating case's field is on its solved free surface: facets turned so that it
        // is level, and every vector and point turned back (see surface.rs).
        let surface = self.surfaces.get(index).and_then(Option::as_ref);
        let profiles = match surface {
            Some(s) => s.profiles(sidecar, &case.name, &case.liquids, prep.centre)?,
            None => profiles_of(sidecar, &case.name, &case.liquids, prep.centre.z)?,
        };
        let out = |v: Vec3| prep.frame.vector_out(surface.map_or(v, |s| s.back(v)));
        let at = |p: Vec3| {
            prep.frame
                .vector_out(surface.map_or(p, |s| s.back(p)) + prep.centre)
        };
        let mut pieces = Vec::new();
        // Per facet corner, its share of the facet's load (internal frame).
        let mut corner = vec![[Vec3::zeros(); 3]; prep.tris.count()];
        let mut facets = Vec::with_capacity(prep.tris.count());
        for (pi, (part, (liquid, _))) in prep.parts.iter().zip(&prep.wet.part_setup).enumerate() {
            let profile = liquid.map(|i| &profiles[i]);
            let planes = hydro::part_planes(profile, None);
            for f in part.facets.clone() {
                let local = prep.tris.tri(f);
                let turned = surface.map(|s| s.turn(&local));
                let t = turned.as_ref().unwrap_or(&local);
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
                let level = prof.map_or(f64::NEG_INFINITY, Profile::level);
                let unit = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                let shares = &mut corner[f];
                hydro::slab_pieces(t, &planes, |piece, _| {
                    let v = piece.vertices();
                    let pressure: Vec<f64> = v
                        .iter()
                        .map(|p| prof.map_or(0.0, |pr| pr.pressure(p.z)))
                        .collect();
                    if prof.is_some() {
                        for (i, share) in consistent_shares(t, v, &pressure).iter().enumerate() {
                            shares[i] -= *share * unit;
                        }
                    }
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
                        vertices: v.iter().map(|p| at(*p)).collect(),
                        pressure,
                        traction: out(-mean * n),
                        area: pa,
                    });
                });
                let loads = hydro::facet_loads(t, &planes, prof, wet, None, 0);
                let n = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                facets.push(FacetRow {
                    part: pi,
                    index: f - part.facets.start,
                    centroid: at((t[0] + t[1] + t[2]) / 3.0),
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
        let nodes = number_nodes(prep, &corner, &out);
        Ok(Field {
            pieces,
            facets,
            parts: prep.parts.iter().map(|p| p.name.clone()).collect(),
            nodes,
        })
    }
}

/// ∫ N_i p dA over a convex piece `v` of facet `t` (N_i the facet's linear shape
/// functions, p linear on the piece with the values `p` at its vertices), i = 0, 1, 2.
///
/// Over each fan triangle of the piece, for linear f and g with vertex values f_j, g_j:
/// ∫ f g dA = A/12 · (Σ_j f_j g_j + Σ_j f_j · Σ_j g_j), exact; N_i at a point is its
/// barycentric coordinate in the facet.
fn consistent_shares(t: &[Vec3; 3], v: &[Vec3], p: &[f64]) -> [f64; 3] {
    let a = 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0]));
    let aa = a.dot(&a);
    let mut out = [0.0; 3];
    if aa <= 0.0 || v.len() < 3 {
        return out;
    }
    let bary = |q: &Vec3| {
        [0, 1, 2].map(|i| 0.5 * (t[(i + 1) % 3] - q).cross(&(t[(i + 2) % 3] - q)).dot(&a) / aa)
    };
    let n0 = bary(&v[0]);
    for k in 1..v.len() - 1 {
        let area = 0.5 * (v[k] - v[0]).cross(&(v[k + 1] - v[0])).norm();
        let (nk, nk1) = (bary(&v[k]), bary(&v[k + 1]));
        let ps = [p[0], p[k], p[k + 1]];
        let sum_p: f64 = ps.iter().sum();
        for (i, o) in out.iter_mut().enumerate() {
            let ns = [n0[i], nk[i], nk1[i]];
            let dot: f64 = ns.iter().zip(&ps).map(|(n, p)| n * p).sum();
            let sum_n: f64 = ns.iter().sum();
            *o += area / 12.0 * (dot + sum_n * sum_p);
        }
    }
    out
}

/// The corners' shares gathered per vertex and numbered (see [`NodalLoad::vertex`]);
/// vertices whose load is exactly zero are left out.
fn number_nodes(
    prep: &super::Prepared,
    corner: &[[Vec3; 3]],
    out: &dyn Fn(Vec3) -> [f64; 3],
) -> Vec<NodalLoad> {
    use std::collections::BTreeMap;
    let mut by_number: BTreeMap<u64, (Vec3, Vec3)> = BTreeMap::new();
    let mut seen: rustc_hash::FxHashMap<[u64; 3], u64> = Default::default();
    for (f, shares) in corner.iter().enumerate() {
        let t = &prep.tris.tri(f);
        for i in 0..3 {
            let number = match &prep.vertex_ids {
                Some(ids) => u64::from(ids[f][i]),
                None => {
                    // Identical coordinates in the file are identical here too.
                    let key = [t[i].x.to_bits(), t[i].y.to_bits(), t[i].z.to_bits()];
                    let next = seen.len() as u64 + 1;
                    *seen.entry(key).or_insert(next)
                }
            };
            let slot = by_number.entry(number).or_insert((t[i], Vec3::zeros()));
            slot.1 += shares[i];
        }
    }
    by_number
        .into_iter()
        .filter(|(_, (_, force))| *force != Vec3::zeros())
        .map(|(vertex, (p, force))| NodalLoad {
            vertex,
            // From the facets as stored (never turned), so only the frame maps it back.
            position: prep.frame.vector_out(p + prep.centre),
            force: out(force),
        })
        .collect()
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

    #[test]
    fn a_triangle_under_linear_pressure_takes_the_textbook_nodal_forces() {
        // A right triangle in the plane y = 0, corners at depths 3, 1 and 3 m below a free
        // surface at z = 0 (so the pressure is linear over it); its front (the side of the
        // right-hand-rule normal) faces −y and is wetted.
        // Consistent nodal forces of a linear triangle under linear pressure p:
        // f_i = −n A/12 (2 p_i + p_j + p_k) (the standard consistent load vector of a
        // three-node element; Zienkiewicz, Taylor & Zhu, The Finite Element Method: Its
        // Basis and Fundamentals, from memory).
        let tri = [[0.0, 0.0, -3.0], [2.0, 0.0, -3.0], [0.0, 0.0, -1.0]];
        let m = Mesh::from_parts(vec![("t", vec![tri])], crate::mesh::Format::StlAscii);
        let s = side(
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
        );
        let f = field(&m, &s, 0).expect("computes");
        let g = 9.80665;
        let p = [3.0 * 1000.0 * g, 3.0 * 1000.0 * g, 1000.0 * g];
        let area = 2.0;
        // n = (b − a) × (c − a) / |…| = (2,0,0) × (0,0,2) = (0,−4,0): into the liquid.
        let n = [0.0, -1.0, 0.0];
        assert_eq!(f.nodes.len(), 3);
        for (i, node) in f.nodes.iter().enumerate() {
            assert_eq!(node.vertex, i as u64 + 1);
            assert_eq!(node.position, tri[i]);
            let (j, k) = ((i + 1) % 3, (i + 2) % 3);
            let want = area / 12.0 * (2.0 * p[i] + p[j] + p[k]);
            for (got, n) in node.force.iter().zip(n) {
                assert_relative_eq!(*got, -n * want, max_relative = 1e-13, epsilon = 1e-9);
            }
        }
    }
}
