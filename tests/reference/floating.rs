//! Floating bodies against outside references: parry3d-f64's plane split and mass
//! properties for the volume below a tilted plane (the core's `Section`), and physical
//! invariance of the equilibrium and the righting-lever curve under units, up axis and a
//! quarter turn about the vertical.
//!
//! parry (0.31.1) cuts an oriented triangle mesh by any plane and caps the cut
//! (`TriMesh::local_split`), and computes the volume and centre of mass of the piece
//! (`MassProperties::from_trimesh`); its cap's triangles lie on the plane, so their area and
//! centroid are the waterplane's. None of that shares code with wetload.

use nalgebra::Vector3;
use parry3d_f64::mass_properties::MassProperties;
use parry3d_f64::math::Vector;
use parry3d_f64::query::SplitResult;
use parry3d_f64::shape::{TriMesh, TriMeshFlags};
use shapes::Triangle;
use wetload::compute::MeshResult;
use wetload::hydro::float::Hull;

use crate::parry::indexed;
use crate::support::*;

/// parry's piece below the plane n·x = c: volume, centre of mass, and the area and
/// centroid of its cap (the triangles whose corners all lie on the plane).
fn parry_below(tris: &[Triangle], n: V3, c: f64) -> (f64, V3, f64, V3) {
    let (v, i) = indexed(tris);
    let mesh = TriMesh::with_flags(v, i, TriMeshFlags::ORIENTED).expect("a valid mesh");
    let axis = Vector::new(n[0], n[1], n[2]);
    let below = match mesh.local_split(axis, c, 1e-12) {
        SplitResult::Pair(below, _above) => below,
        _ => panic!("the plane does not cut the body"),
    };
    let mp = MassProperties::from_trimesh(1.0, below.vertices(), below.indices());
    let com = mp.local_com;
    let (mut area, mut moment) = (0.0, [0.0; 3]);
    let verts = below.vertices();
    for t in below.indices() {
        let p = t.map(|k| verts[k as usize]);
        if p.iter().all(|q| (q.dot(axis) - c).abs() < 1e-9) {
            let a = 0.5 * (p[1] - p[0]).cross(p[2] - p[0]).length();
            let g = (p[0] + p[1] + p[2]) / 3.0;
            area += a;
            moment = add(moment, mul([g.x, g.y, g.z], a));
        }
    }
    (
        mp.mass(),
        [com.x, com.y, com.z],
        area,
        mul(moment, 1.0 / area),
    )
}

fn hulls() -> Vec<(&'static str, Vec<Triangle>)> {
    vec![
        (
            "box",
            shapes::box_solid([-6.0, -2.5, 0.0], [6.0, 2.5, 3.0], 3),
        ),
        ("icosphere", shapes::icosphere([0.3, -0.2, 1.0], 2.0, 3)),
        // A 24-sided prism lying along x: a pipe float.
        (
            "cylinder",
            shapes::cylinder_solid([-4.0, 0.0, 1.0], 0, 1.2, 8.0, 24),
        ),
    ]
}

#[test]
fn volumes_and_centroids_below_tilted_planes_match_parry() {
    // Planes tilted about both horizontal axes, through a point inside each body.
    let normals: [V3; 3] = [[0.0, 0.3, 1.0], [-0.25, 0.2, 1.0], [0.4, -0.5, 0.8]];
    for (name, tris) in hulls() {
        let hull = Hull::new(
            &tris
                .iter()
                .map(|t| t.map(|p| Vector3::new(p[0], p[1], p[2])))
                .collect::<Vec<_>>(),
            &vec![1; tris.len()],
        )
        .expect("a closed body");
        let (v_all, centre) = volume_and_centroid(&tris, [0.0; 3]);
        let size = hull.diagonal_m();
        for n in normals {
            let n = mul(n, 1.0 / norm(n));
            let c = dot(n, centre) + 0.1 * size * n[2];
            let (vol, com, area, cof) = parry_below(&tris, n, c);
            assert!(
                vol > 0.05 * v_all && vol < 0.95 * v_all,
                "{name}: a real cut"
            );
            let nv = Vector3::from(n);
            // e: any unit vector in the plane (the section's area and centroid do not
            // depend on it).
            let e = nv.cross(&Vector3::x()).normalize();
            let s = hull.section(&nv, c, &e);
            let label = format!("{name}, n = {n:?}");
            rel(
                &format!("{label}: volume below vs parry"),
                s.volume_m3,
                vol,
                1e-9,
            );
            let b = s.centre_of_buoyancy;
            abs3(
                &format!("{label}: centroid below vs parry"),
                [b.x, b.y, b.z],
                com,
                1e-9 * size,
            );
            rel(
                &format!("{label}: waterplane area vs parry's cap"),
                s.waterplane_area_m2,
                area,
                1e-9,
            );
            let f = s.centre_of_flotation;
            abs3(
                &format!("{label}: centre of flotation vs parry's cap"),
                [f.x, f.y, f.z],
                cof,
                1e-9 * size,
            );
        }
    }
}

/// A hull that is neither symmetric fore and aft nor wall-sided everywhere: a box
/// 12 × 5 × 3 m with a raked bow (a wedge out to x = 8 m at deck level), wound outward,
/// one cell per box face so the wedge meets the box corner to corner.
fn solid_hull() -> Vec<Triangle> {
    let mut t = shapes::box_solid([-6.0, -2.5, 0.0], [6.0, 2.5, 3.0], 1);
    t.retain(|f| !f.iter().all(|p| p[0] == 6.0));
    let (a, b, c, d) = (
        [6.0, -2.5, 0.0],
        [6.0, 2.5, 0.0],
        [6.0, 2.5, 3.0],
        [6.0, -2.5, 3.0],
    );
    let (e, f) = ([8.0, -2.5, 3.0], [8.0, 2.5, 3.0]);
    // Bottom slope (normal forward and down), deck, the two sides.
    t.extend([
        [a, b, f],
        [a, f, e],
        [d, f, c],
        [d, e, f],
        [a, e, d],
        [b, c, f],
    ]);
    t
}

fn rotate(tris: &[Triangle], r: impl Fn([f64; 3]) -> [f64; 3]) -> Vec<Triangle> {
    tris.iter().map(|t| t.map(&r)).collect()
}

fn sidecar(units: &str, up: &str, axis: &str, g: V3) -> String {
    format!(
        r#"{{"units": "{units}", "up": "{up}", "liquid": {{"density": 1025}},
            "floating": {{"mass": 60000, "centre_of_gravity": [{}, {}, {}],
                          "length_axis": "{axis}", "heel_angles": [-60, -30, -10, 0, 10, 20, 30, 45, 60, 75, 90]}}}}"#,
        g[0], g[1], g[2]
    )
}

/// The figures that must not depend on how the same body is described.
fn figures(r: &MeshResult) -> Vec<(String, f64)> {
    let f = r.cases[0].floating.as_ref().expect("floating");
    let e = f.equilibrium.as_ref().expect("floats");
    let s = f.stability.as_ref().expect("a curve");
    let mut out = vec![
        ("draft".to_owned(), e.draft),
        ("heel".to_owned(), e.heel),
        ("trim".to_owned(), e.trim.unwrap_or(f64::NAN)),
        ("displacement".to_owned(), e.displacement),
        ("GM_T".to_owned(), e.metacentric_height.transverse),
        ("GM_L".to_owned(), e.metacentric_height.longitudinal),
        ("waterplane area".to_owned(), e.waterplane_area),
        ("max GZ".to_owned(), s.max_gz),
        ("angle of max GZ".to_owned(), s.angle_of_max_gz),
        (
            "vanishing angle".to_owned(),
            s.vanishing_angle.unwrap_or(-1.0),
        ),
        ("area 0-40".to_owned(), s.area_0_40),
        ("force along n".to_owned(), r.cases[0].loads.vertical_force),
        ("wetted area".to_owned(), r.cases[0].loads.wetted_area),
    ];
    for p in &f.righting_lever {
        out.push((format!("GZ at {}°", p.heel), p.gz));
        out.push((format!("trim at {}°", p.heel), p.trim.unwrap_or(0.0)));
    }
    out
}

#[test]
fn the_equilibrium_and_curve_do_not_depend_on_units_up_axis_or_a_quarter_turn() {
    // G off the centre line and aft of the middle: the hull lists and trims.
    // Off the origin by amounts that are not exact in binary, so that the mm case is not
    // a mere exact rescaling.
    let offset = [3.217, -1.153, 0.371];
    let base = shapes::translate(&solid_hull(), offset);
    let g = add([0.4, 0.25, 1.9], offset);
    let reference = run(&single(base.clone()), &sidecar("m", "+z", "+x", g));
    let want = figures(&reference);
    let e = reference.cases[0]
        .floating
        .as_ref()
        .and_then(|f| f.equilibrium.as_ref())
        .expect("floats");
    assert!(
        e.heel.abs() > 0.5 && e.trim.expect("defined").abs() > 0.1,
        "it lists and trims"
    );

    // Millimetres: coordinates × 1000, G still in metres (mesh axes after scaling).
    let mm = run(
        &single(shapes::scale(&base, 1000.0)),
        &sidecar("mm", "+z", "+x", g),
    );
    // +y up: the proper rotation (x, y, z) → (x, z, −y) takes +z to +y.
    let y_up = |p: [f64; 3]| [p[0], p[2], -p[1]];
    let yup = run(
        &single(rotate(&base, y_up)),
        &sidecar("m", "+y", "+x", y_up(g)),
    );
    // A quarter turn about the vertical: (x, y, z) → (−y, x, z); the length axis is now +y.
    let turn = |p: [f64; 3]| [-p[1], p[0], p[2]];
    let turned = run(
        &single(rotate(&base, turn)),
        &sidecar("m", "+z", "+y", turn(g)),
    );

    for (what, r) in [("mm", &mm), ("+y up", &yup), ("quarter turn", &turned)] {
        for ((name, a), (_, b)) in figures(r).iter().zip(&want) {
            // Lengths to 1e-7 m, angles to 1e-6°: far below what is printed, far above
            // the solver's tolerance (1e-9 of the 14.6 m diagonal) and round-off.
            let tol = if name.contains("force") || name.contains("area") {
                1e-9 * b.abs().max(1.0)
            } else {
                1e-6
            };
            abs(&format!("floating invariance, {what}: {name}"), *a, *b, tol);
        }
    }
}
