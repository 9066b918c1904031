//! Consistent nodal forces (`results/<stem>[.<case>].nodal.csv`) against the loads they
//! must add up to: Σ f_i = F and Σ (x_i − O) × f_i = M, exact for the piecewise-linear
//! pressure (Σ_i N_i = 1 and Σ_i N_i x_i = x on every facet), so they agree with the
//! case's force and moment to round-off: 1e-12 of Σ |f_i| (and of Σ |x_i − O| |f_i|).

use std::path::Path;

use wetload::compute::{self, Field, MeshResult};
use wetload::mesh::{self, Mesh};
use wetload::sidecar::parse_sidecar;

use crate::support::parts;

/// Checks every case of `mesh` with the sidecar `json`; returns the number of loaded
/// vertices of the first case.
fn sums_match(label: &str, mesh: &Mesh, json: &str) -> usize {
    let side = parse_sidecar(Path::new("n.json"), json).expect("sidecar");
    let r: MeshResult = compute::compute("n.stl", mesh, &side).expect("computes");
    let mut first = 0;
    for (c, case) in r.cases.iter().enumerate() {
        let f: Field = compute::field(mesh, &side, c).expect("field");
        if c == 0 {
            first = f.nodes.len();
        }
        let o = case.loads.moment_about;
        let mut force = [0.0; 3];
        let mut moment = [0.0; 3];
        let (mut scale_f, mut scale_m) = (0.0f64, 0.0f64);
        for n in &f.nodes {
            let r = [0, 1, 2].map(|k| n.position[k] - o[k]);
            let m = [
                r[1] * n.force[2] - r[2] * n.force[1],
                r[2] * n.force[0] - r[0] * n.force[2],
                r[0] * n.force[1] - r[1] * n.force[0],
            ];
            let fa = n.force.iter().map(|x| x * x).sum::<f64>().sqrt();
            let ra = r.iter().map(|x| x * x).sum::<f64>().sqrt();
            scale_f += fa;
            scale_m += fa * ra;
            for k in 0..3 {
                force[k] += n.force[k];
                moment[k] += m[k];
            }
        }
        for k in 0..3 {
            let (ef, em) = (
                (force[k] - case.loads.force[k]).abs(),
                (moment[k] - case.loads.moment[k]).abs(),
            );
            println!(
                "REF nodal {label} case {} k={k}: |ΣF − F| {ef:.3e} (tol {:.3e}), |ΣM − M| {em:.3e} (tol {:.3e})",
                case.name,
                1e-12 * scale_f,
                1e-12 * scale_m
            );
            assert!(
                ef <= 1e-12 * scale_f.max(1.0),
                "{label} {}: force {k}: {force:?} vs {:?}",
                case.name,
                case.loads.force
            );
            assert!(
                em <= 1e-12 * scale_m.max(1.0),
                "{label} {}: moment {k}: {moment:?} vs {:?}",
                case.name,
                case.loads.moment
            );
        }
    }
    first
}

#[test]
fn nodal_forces_sum_to_the_force_and_moment_of_every_demo_case() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("meshes");
    let mut seen = 0;
    for entry in std::fs::read_dir(&demo).expect("meshes/") {
        let path = entry.expect("entry").path();
        if !mesh::is_mesh_path(&path) {
            continue;
        }
        let bytes = std::fs::read(&path).expect("mesh");
        let m = mesh::read_mesh(&path, &bytes).expect("reads");
        let json = std::fs::read_to_string(path.with_extension("json")).expect("sidecar");
        let loaded = sums_match(&path.display().to_string(), &m, &json);
        assert!(loaded > 0, "{}: no loaded vertex", path.display());
        seen += 1;
    }
    assert_eq!(seen, 6, "the six demo meshes");
}

#[test]
fn nodal_forces_sum_on_open_closed_layered_and_clipped_surfaces() {
    // Open: a plate cut by the free surface and by a layer interface, far from the origin.
    let plate = shapes::translate(
        &shapes::rectangle([0.0, 0.0, -4.0], [3.0, 0.0, 0.0], [0.0, 0.5, 4.5], 7, 9),
        [1200.0, -350.0, 40.0],
    );
    sums_match(
        "plate",
        &parts(vec![("plate", plate)]),
        r#"{"units": "m", "wet_side": "front", "moment_about": [1201, -349, 38],
            "liquid": {"level": 40.3, "layers": [{"density": 880, "down_to": 38.1}, {"density": 1025}],
                       "surface_pressure": 1500}}"#,
    );
    // Closed: a perturbed torus half under water, with a second case fully under.
    let torus = shapes::perturb(&shapes::torus([0.0, 0.0, 0.0], 3.0, 1.0, 24, 12), 0.02, 3);
    sums_match(
        "torus",
        &parts(vec![("ring", torus)]),
        r#"{"units": "m", "liquid": {"level": 0.2, "density": 1000},
            "cases": [{"name": "half"}, {"name": "under", "level": 5.0}]}"#,
    );
    // Two parts, two liquids, millimetres and +y up.
    let skin = shapes::rectangle(
        [0.0, 0.0, 0.0],
        [0.0, 3000.0, 0.0],
        [0.0, 0.0, 2000.0],
        4,
        5,
    );
    let back = shapes::reverse_winding(&shapes::translate(&skin, [300.0, 0.0, 0.0]));
    sums_match(
        "two liquids",
        &parts(vec![("up", skin), ("down", back)]),
        r#"{"units": "mm", "up": "+y",
            "liquids": {"head": {"level": 2.6, "density": 1000}, "tail": {"level": 0.9, "density": 1000}},
            "parts": {"up": {"liquid": "head", "wet_side": "front"}, "down": {"liquid": "tail", "wet_side": "front"}}}"#,
    );
}

#[test]
fn an_obj_keeps_its_vertex_numbers() {
    // A quad given as one polygon after two unused vertices: the loaded vertices are the
    // file's 3, 4, 5 and 6, whatever the triangulation.
    let obj = "v 9 9 9\nv 8 8 8\nv 0 0 -2\nv 2 0 -2\nv 2 0 0\nv 0 0 0\nf 3 4 5 6\n";
    let m = mesh::read_mesh(Path::new("q.obj"), obj.as_bytes()).expect("reads");
    let json = r#"{"units": "m", "wet_side": "back", "liquid": {"level": 0.5, "density": 1000}}"#;
    let side = parse_sidecar(Path::new("q.json"), json).expect("sidecar");
    let f = compute::field(&m, &side, 0).expect("field");
    let numbers: Vec<u64> = f.nodes.iter().map(|n| n.vertex).collect();
    assert_eq!(numbers, [3, 4, 5, 6]);
    assert_eq!(f.nodes[0].position, [0.0, 0.0, -2.0]);
    sums_match("quad", &m, json);
}
