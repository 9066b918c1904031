//! `calc` benchmark: each stage of one recomputation, on closed meshes of 10 k, 100 k and
//! 1 M facets.
//!
//! Run with `cargo bench --bench calc`. The meshes are the perturbed tori of
//! `examples/genmesh.rs` (seed 1), written into a temporary folder with their sidecars
//! (free surface through the middle, so about half of the facets are clipped or wet), and
//! removed afterwards. Stages, per size:
//! * `read`: `mesh::read_mesh` on the STL bytes already in memory;
//! * `topology`: `hydro::Topology::build` on the facets in the local frame;
//! * `integrate`: `hydro::integrate` with the wetting and volume signs `compute` derives
//!   (the bench checks it gives `compute`'s force and wetted area bit for bit);
//! * `compute`: `compute::compute` as a whole (frame, topology, wetting, planes,
//!   integration, assembly);
//! * `write`: `report::json::render` and `pipeline::write_atomic` of the result;
//! * `calc_file`: `pipeline::calc_file` end to end (read the files, parse, compute, write).

use std::fs;
use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use wetload::hydro::{
    self, Frame, Liquid, PartAccum, PartInput, Profile, Topology, Tri, UpAxis, Vec3, Wetting,
};
use wetload::mesh::{self, Mesh};
use wetload::{compute, pipeline, report, sidecar};

#[path = "../examples/genmesh.rs"]
#[allow(dead_code)] // its `main` and argument parsing are the example's, unused here
mod genmesh;

/// Gravity of the generated sidecars (the default), m/s².
const G: f64 = 9.80665;

/// The facets in the internal frame about the bounding-box centre, as `compute` forms
/// them (units m and `+z` up, so the frame is the identity); and that centre.
fn local_tris(mesh: &Mesh) -> (Vec<Tri>, Vec3) {
    let frame = Frame {
        scale_m: 1.0,
        up: UpAxis::PosZ,
    };
    let points: Vec<Vec3> = mesh
        .facets
        .iter()
        .flat_map(|t| t.iter().map(|&p| frame.point_in(p)))
        .collect();
    let (lo, hi) = hydro::bounding_box(points.iter());
    let centre = (lo + hi) / 2.0;
    let tris = mesh
        .facets
        .iter()
        .map(|t| t.map(|p| frame.point_in(p) - centre))
        .collect();
    (tris, centre)
}

/// What `hydro::integrate` needs for a closed mesh wetted from outside, as `compute`
/// derives it: every facet outward (its flip read from the topology) and in the volume.
fn wetting_of(topology: &Topology) -> (Vec<Wetting>, Vec<i8>) {
    assert!(topology.closed(), "the generated torus is closed");
    assert!(topology.shells.iter().all(|s| s.depth == 0));
    let wetting = topology
        .flip
        .iter()
        .map(|&f| if f { Wetting::Back } else { Wetting::Front })
        .collect();
    let vol_sign = topology
        .flip
        .iter()
        .map(|&f| if f { -1 } else { 1 })
        .collect();
    (wetting, vol_sign)
}

fn integrate(tris: &[Tri], profile: &Profile, wetting: &[Wetting], vol_sign: &[i8]) -> PartAccum {
    let part = PartInput {
        facets: 0..tris.len(),
        profile: Some(profile),
        volume_level: Some(profile.level()),
    };
    hydro::integrate(tris, &[part], wetting, vol_sign)[0]
}

fn stages(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("a temporary folder");
    for (label, facets) in [("10k", 10_000), ("100k", 100_000), ("1M", 1_000_000)] {
        let g = genmesh::generate(facets, false, 1);
        let path = dir.path().join(format!("torus_{label}.stl"));
        let side = pipeline::sidecar_path(&path);
        fs::write(&path, &g.stl).expect("writable temporary folder");
        fs::write(&side, &g.sidecar).expect("writable temporary folder");

        let mesh = mesh::read_mesh(&path, &g.stl).expect("a valid binary STL");
        let sidecar = sidecar::parse_sidecar(&side, &g.sidecar).expect("a valid sidecar");
        let (tris, centre) = local_tris(&mesh);
        let topology = Topology::build(&tris);
        let (wetting, vol_sign) = wetting_of(&topology);
        let profile = Profile::new(&Liquid::uniform(0.0, 1000.0), G)
            .expect("valid liquid")
            .shifted(centre.z);
        let name = format!("torus_{label}.stl");
        let result = compute::compute(&name, &mesh, &sidecar).expect("computable");
        let acc = integrate(&tris, &profile, &wetting, &vol_sign);
        let case = &result.cases[0].loads;
        // The stage measured alone is the work compute does, not a look-alike.
        assert_eq!(acc.force, Vec3::from(case.force));
        assert_eq!(acc.wetted_area, case.wetted_area);
        assert!(result.inputs.closed);
        // Partly submerged: some facets dry, some wet.
        assert!(acc.loaded_facets > g.facets / 4 && acc.loaded_facets < g.facets * 3 / 4);
        let out = pipeline::results_dir(&path).join(format!("torus_{label}.json"));

        let mut group = c.benchmark_group(format!("calc_{label}"));
        group.throughput(Throughput::Elements(g.facets as u64));
        if facets >= 1_000_000 {
            // One iteration per sample: a stage takes up to about a second here.
            group
                .sampling_mode(SamplingMode::Flat)
                .sample_size(10)
                .warm_up_time(Duration::from_secs(1))
                .measurement_time(Duration::from_secs(5));
        } else {
            group
                .sample_size(20)
                .warm_up_time(Duration::from_secs(1))
                .measurement_time(Duration::from_secs(3));
        }
        group.bench_function("read", |b| {
            b.iter(|| mesh::read_mesh(black_box(&path), black_box(&g.stl)))
        });
        group.bench_function("topology", |b| b.iter(|| Topology::build(black_box(&tris))));
        group.bench_function("integrate", |b| {
            b.iter(|| integrate(black_box(&tris), &profile, &wetting, &vol_sign))
        });
        group.bench_function("compute", |b| {
            b.iter(|| compute::compute(&name, black_box(&mesh), &sidecar))
        });
        group.bench_function("write", |b| {
            b.iter(|| {
                let bytes = report::json::render(black_box(&result));
                pipeline::write_atomic(&out, &bytes)
            })
        });
        group.bench_function("calc_file", |b| {
            b.iter(|| pipeline::calc_file(black_box(&path)))
        });
        group.finish();
    }
}

criterion_group!(benches, stages);
criterion_main!(benches);
