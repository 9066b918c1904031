//! `calc` benchmark: each stage of one recomputation and the whole of it, on generated
//! meshes of 10 k, 100 k, 1 M and 4 M facets, closed and open.
//!
//! Run with `cargo bench --bench calc` (all sizes, about ten minutes on 2 cores), or choose
//! sizes with `WETLOAD_BENCH_SIZES=10k,100k,1M cargo bench --bench calc`. The meshes are
//! those of `examples/genmesh.rs` (seed 1), written into a temporary folder with their
//! sidecars and removed afterwards: a perturbed closed torus (`torus`) and a perturbed open
//! cylinder patch wetted on its front (`patch`), each with the free surface through its
//! middle, so about half of the facets are clipped or wet. Stages, per mesh:
//! * `cat`: `fs::read` of the STL file (page cache warm): the cost of merely reading it;
//! * `read`: `mesh::read_mesh` on the STL bytes already in memory;
//! * `topology`: `hydro::Topology::build` on the facets in the local frame: the weld, the
//!   edge counts, shells and orientation, i.e. every mesh check `calc` makes;
//! * `integrate`: `hydro::integrate` with the wetting and volume signs `compute` derives
//!   (the bench checks it gives `compute`'s force and wetted area bit for bit);
//! * `write`: `report::json::render` and `results::write_atomic` of the result;
//! * `calc_file`: `pipeline::calc_file` end to end (read the files, parse, compute, write).
//!
//! The bench uses the binary's allocator (the system's), so the stages see the same memory
//! behaviour as `wetload calc`.

use std::fs;
use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use wetload::hydro::{
    self, Frame, Liquid, PartAccum, PartInput, Profile, Topology, Tri, UpAxis, Vec3, Wetting,
};
use wetload::mesh::{self, Mesh};
use wetload::{compute, pipeline, report, results, sidecar};

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
        .flat_map(|t| t.map(|p| frame.point_in(p)))
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

/// What `hydro::integrate` needs, as `compute` derives it: for the closed torus wetted
/// from outside every facet outward (its flip read from the topology) and in the volume;
/// for the open patch (`wet_side` front) every facet as stored and no volume.
fn wetting_of(topology: &Topology, closed: bool) -> (Vec<Wetting>, Vec<i8>) {
    assert_eq!(topology.closed(), closed);
    if !closed {
        return (
            vec![Wetting::Front; topology.flip.len()],
            vec![0; topology.flip.len()],
        );
    }
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

fn integrate(
    tris: &[Tri],
    profile: &Profile,
    closed: bool,
    wetting: &[Wetting],
    vol_sign: &[i8],
) -> PartAccum {
    let part = PartInput {
        facets: 0..tris.len(),
        profile: Some(profile),
        volume_level: closed.then(|| profile.level()),
    };
    hydro::integrate(tris, &[part], wetting, vol_sign)[0]
}

/// The sizes to run: `WETLOAD_BENCH_SIZES` (such as `10k,1M`) or all four.
fn sizes() -> Vec<(String, usize)> {
    let list = std::env::var("WETLOAD_BENCH_SIZES").unwrap_or_else(|_| "10k,100k,1M,4M".into());
    list.split(',')
        .map(|s| {
            let s = s.trim();
            let n = match s.strip_suffix('M') {
                Some(m) => m.parse::<usize>().map(|m| m * 1_000_000),
                None => s.trim_end_matches('k').parse::<usize>().map(|k| k * 1_000),
            }
            .unwrap_or_else(|_| panic!("WETLOAD_BENCH_SIZES: cannot read size {s:?}"));
            (s.to_owned(), n)
        })
        .collect()
}

fn stages(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("a temporary folder");
    for (label, facets) in sizes() {
        for (shape, open) in [("torus", false), ("patch", true)] {
            let g = genmesh::generate(facets, open, 1);
            let name = format!("{shape}_{label}.stl");
            let path = dir.path().join(&name);
            let side = pipeline::sidecar_path(&path);
            fs::write(&path, &g.stl).expect("writable temporary folder");
            fs::write(&side, &g.sidecar).expect("writable temporary folder");

            let mesh = mesh::read_mesh(&path, &g.stl).expect("a valid binary STL");
            let sidecar = sidecar::parse_sidecar(&side, &g.sidecar).expect("a valid sidecar");
            let (tris, centre) = local_tris(&mesh);
            let topology = Topology::build(&tris);
            let (wetting, vol_sign) = wetting_of(&topology, !open);
            let profile = Profile::new(&Liquid::uniform(0.0, 1000.0), G)
                .expect("valid liquid")
                .shifted(centre.z);
            let result = compute::compute(&name, &mesh, &sidecar).expect("computable");
            let acc = integrate(&tris, &profile, !open, &wetting, &vol_sign);
            let case = &result.cases[0].loads;
            // The stage measured alone is the work compute does, not a look-alike.
            assert_eq!(acc.force, Vec3::from(case.force));
            assert_eq!(acc.wetted_area, case.wetted_area);
            assert_eq!(result.inputs.closed, !open);
            // Partly submerged: some facets dry, some wet.
            assert!(acc.loaded_facets > g.facets / 4 && acc.loaded_facets < g.facets * 3 / 4);
            drop(mesh);
            let out = results::dir_of(&path).join(format!("{shape}_{label}.json"));

            let mut group = c.benchmark_group(format!("calc_{shape}_{label}"));
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
            group.bench_function("cat", |b| b.iter(|| fs::read(black_box(&path))));
            group.bench_function("read", |b| {
                b.iter(|| mesh::read_mesh(black_box(&path), black_box(&g.stl)))
            });
            group.bench_function("topology", |b| b.iter(|| Topology::build(black_box(&tris))));
            group.bench_function("integrate", |b| {
                b.iter(|| integrate(black_box(&tris), &profile, !open, &wetting, &vol_sign))
            });
            group.bench_function("write", |b| {
                b.iter(|| {
                    let bytes = report::json::render(black_box(&result));
                    results::write_atomic(&out, &bytes)
                })
            });
            group.bench_function("calc_file", |b| {
                b.iter(|| pipeline::calc_file(black_box(&path)))
            });
            group.finish();
        }
    }
}

criterion_group!(benches, stages);
criterion_main!(benches);
