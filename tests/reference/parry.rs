//! parry3d-f64 0.31.1 as an independent reference for closed meshes.
//!
//! parry is a collision-detection library with its own mass-properties code
//! (`MassProperties::from_trimesh`: volume and centre of mass of a triangle mesh) and its
//! own plane split with capping (`TriMesh::canonical_split` on an `ORIENTED` mesh). For a
//! body fully submerged, wetload's `submerged_volume` and `centre_of_buoyancy` must equal
//! parry's volume and centre of mass; partly submerged, those of the piece parry cuts off
//! below the level. Archimedes then fixes the loads: the force is ρ g V straight up, and
//! its line of action passes through the centre of buoyancy.
//!
//! Tolerances: relative 1e-9 on volumes and forces, 1e-9 × the body's size on points
//! (parry sums about a different reference point and caps the cut with its own
//! triangulation, so agreement is to round-off of a different computation).

use parry3d_f64::mass_properties::MassProperties;
use parry3d_f64::math::Vector;
use parry3d_f64::query::SplitResult;
use parry3d_f64::shape::{TriMesh, TriMeshFlags};
use rustc_hash::FxHashMap;
use shapes::{self, Triangle};

use crate::support::*;

const TOL: f64 = 1e-9;

/// Shared vertices (equal bit patterns, as the tessellators make them) and index triples,
/// as parry wants them (the floating checks use it too).
pub(crate) fn indexed(tris: &[Triangle]) -> (Vec<Vector>, Vec<[u32; 3]>) {
    let mut map: FxHashMap<[u64; 3], u32> = FxHashMap::default();
    let mut vertices = Vec::new();
    let indices = tris
        .iter()
        .map(|t| {
            t.map(|p| {
                *map.entry(p.map(|c| (c + 0.0).to_bits()))
                    .or_insert_with(|| {
                        vertices.push(Vector::new(p[0], p[1], p[2]));
                        (vertices.len() - 1) as u32
                    })
            })
        })
        .collect();
    (vertices, indices)
}

fn v3(v: Vector) -> V3 {
    [v.x, v.y, v.z]
}

/// parry's volume and centre of mass of the closed mesh.
fn parry_whole(tris: &[Triangle]) -> (f64, V3) {
    let (v, i) = indexed(tris);
    let mp = MassProperties::from_trimesh(1.0, &v, &i);
    (mp.mass(), v3(mp.local_com))
}

/// parry's volume and centre of mass of the part below `z = level`, cut and capped by
/// `canonical_split` on an oriented mesh.
fn parry_below(tris: &[Triangle], level: f64) -> (f64, V3) {
    let (v, i) = indexed(tris);
    let mesh = TriMesh::with_flags(v, i, TriMeshFlags::ORIENTED).expect("a valid mesh");
    match mesh.canonical_split(2, level, 1e-12) {
        SplitResult::Pair(below, _above) => {
            let mp = MassProperties::from_trimesh(1.0, below.vertices(), below.indices());
            (mp.mass(), v3(mp.local_com))
        }
        _ => panic!("the level {level} does not cut the body"),
    }
}

fn bodies() -> Vec<(&'static str, Vec<Triangle>, f64)> {
    vec![
        (
            // 2304 facets, tilted 0.5 rad so a horizontal plane cuts it unevenly.
            "tilted torus",
            shapes::translate(
                &rotate_about_x(&shapes::torus([0.0; 3], 2.0, 0.6, 48, 24), 0.5),
                [0.7, -0.4, -3.0],
            ),
            5.2,
        ),
        (
            // 5120 facets, every vertex moved by up to 1 cm (edges ≈ 10 cm).
            "perturbed icosphere",
            shapes::perturb(&shapes::icosphere([0.2, 0.1, -2.0], 1.5, 4), 0.01, 42),
            3.0,
        ),
        (
            // 192 facets, turned about z and tilted about x.
            "tilted box",
            rotate_about_x(
                &shapes::rotate_about_z(
                    &shapes::box_solid([-1.0, -0.6, -2.4], [1.4, 0.9, -1.2], 4),
                    0.4,
                ),
                0.3,
            ),
            3.2,
        ),
    ]
}

/// Checks one computation against parry's volume `vol` and centre `com`.
fn check(label: &str, json: &str, tris: &[Triangle], size: f64, vol: f64, com: V3) {
    let r = run(&single(tris.to_vec()), json);
    let l = loads(&r);
    rel(
        &format!("{label}: submerged volume vs parry"),
        l.submerged_volume.expect("closed"),
        vol,
        TOL,
    );
    abs3(
        &format!("{label}: centre of buoyancy vs parry"),
        l.centre_of_buoyancy.expect("volume > 0"),
        com,
        TOL * size,
    );
    // Archimedes: F = ρ g V straight up (ρ = 1025 in these sidecars).
    let f = 1025.0 * G * vol;
    rel(&format!("{label}: F_z = ρ g V_parry"), l.force[2], f, TOL);
    at_most(
        &format!("{label}: |F_h| / F_z"),
        l.horizontal_force / f,
        TOL,
    );
    let line = l.line_of_action.expect("nonzero force");
    let off = sub(com, line.point);
    let horizontal = cross(off, line.direction);
    at_most(
        &format!("{label}: line of action's distance from parry's centre / size"),
        norm(horizontal) / size,
        TOL,
    );
}

#[test]
fn fully_submerged_bodies_match_parry() {
    for (name, tris, size) in bodies() {
        let (vol, com) = parry_whole(&tris);
        let json = r#"{"units": "m", "liquid": {"level": 10.0, "density": 1025}}"#;
        check(
            &format!("parry {name} submerged"),
            json,
            &tris,
            size,
            vol,
            com,
        );
    }
}

#[test]
fn partly_submerged_bodies_match_parry_split() {
    // Levels chosen off every vertex plane of the tessellations.
    let levels = [-2.713, -1.6123, -1.7371];
    for ((name, tris, size), level) in bodies().into_iter().zip(levels) {
        let (vol, com) = parry_below(&tris, level);
        let (whole, _) = parry_whole(&tris);
        assert!(
            vol > 0.1 * whole && vol < 0.9 * whole,
            "{name}: the cut is partial"
        );
        let json = format!(r#"{{"units": "m", "liquid": {{"level": {level}, "density": 1025}}}}"#);
        check(
            &format!("parry {name} at {level}"),
            &json,
            &tris,
            size,
            vol,
            com,
        );
    }
}
