//! A whole computation on an arbitrary mesh: reader, unit scaling, frame, topology (weld,
//! edges, shells, winding, nesting), wetting, integration and the pressure field for the
//! exports, under one of a few fixed sidecars.
//!
//! The first byte picks the format (bit 0: STL or OBJ) and the sidecar (bits 1–3); the
//! rest is the mesh file. Checks: no panic; an error names the mesh (and the computation
//! errors say what to change); an accepted mesh gives finite forces, moments, areas and
//! pressures in every case and part, and a field with one row per facet.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use wetload::compute::{Loads, compute_model};
use wetload::mesh::read_mesh;
use wetload::sidecar::parse_sidecar;

const SIDECARS: [&str; 8] = [
    r#"{"units": "m", "liquid": {"level": 0.5, "density": 1000}}"#,
    r#"{"units": "mm", "wet_side": "front", "liquid": {"level": 0.25, "density": 1025}}"#,
    r#"{"units": "m", "wet_side": "back", "up": "+y", "liquid": {"level": -0.5, "density": 1000, "surface_pressure": 2e3}}"#,
    r#"{"units": "m", "wet_side": "inside", "liquid": {"level": 0.3, "layers": [{"density": 880, "down_to": 0.1}, {"density": 1000}]}}"#,
    r#"{"units": "in", "wet_side": "front", "liquid": {"level": 1, "density": 1000}, "cases": [{"name": "low", "level": -1}, {"name": "high", "level": 10}], "axes": {"hinge": {"point": [0, 0, 0], "direction": [0, 1, 0]}}}"#,
    r#"{"units": "m", "liquid": {"level": 0.5, "density": 1000}, "sweep": {"from": -1, "to": 1, "step": 0.5}, "flotation": {"resisting": {"w": 1e3}, "required_factor": 1.2}}"#,
    r#"{"units": "ft", "up": "-z", "wet_side": "front", "liquid": {"level": 0, "density": 1000}, "moment_about": [1e3, -2e3, 5]}"#,
    r#"{"units": "m", "wet_side": "outside", "liquids": {"a": {"level": 1, "density": 1000}, "b": {"level": 0, "density": 1000}}, "parts": {"*": {"liquid": "a"}, "b": {"liquid": "b", "wet_side": "back"}, "dry": {"liquid": null}}}"#,
];

fn finite_loads(l: &Loads) {
    let vals = l.force.iter().chain(&l.moment).chain([
        &l.wetted_area,
        &l.uplift,
        &l.downthrust,
        &l.horizontal_force,
        &l.vertical_force,
    ]);
    for v in vals {
        assert!(v.is_finite(), "{l:?}");
    }
    assert!(
        l.wetted_area >= 0.0 && l.uplift >= 0.0 && l.downthrust >= 0.0,
        "{l:?}"
    );
    if let Some(v) = l.submerged_volume {
        assert!(v.is_finite(), "{l:?}");
    }
}

fuzz_target!(|data: &[u8]| {
    let Some((&pick, mesh_bytes)) = data.split_first() else {
        return;
    };
    let name = if pick & 1 == 0 {
        "fuzz.stl"
    } else {
        "fuzz.obj"
    };
    let sidecar = parse_sidecar(Path::new("fuzz.json"), SIDECARS[usize::from(pick >> 1) % 8])
        .expect("the fixed sidecars are valid");
    let mesh = match read_mesh(Path::new(name), mesh_bytes) {
        Ok(m) => m,
        Err(e) => {
            assert!(e.to_string().contains(name), "{e}");
            return;
        }
    };
    let facets = mesh.facets.len();
    match compute_model(name, mesh, &sidecar) {
        Err(e) => assert!(!e.to_string().is_empty()),
        Ok((result, model)) => {
            assert_eq!(result.cases.len(), sidecar.cases.len());
            for case in &result.cases {
                finite_loads(&case.loads);
                for part in &case.parts {
                    finite_loads(&part.loads);
                }
            }
            for i in 0..sidecar.cases.len() {
                let field = model
                    .field(&sidecar, i)
                    .expect("a computed model gives its field");
                assert_eq!(field.facets.len(), facets);
                for row in &field.facets {
                    assert!(
                        row.area.is_finite() && row.mean_pressure.is_finite(),
                        "{row:?}"
                    );
                    assert!(row.force.iter().all(|c| c.is_finite()), "{row:?}");
                }
            }
        }
    }
});
