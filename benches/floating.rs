//! Floating benchmark: the equilibrium and the whole righting-lever curve of a hull of
//! about 100k facets, and the cost per heel angle.
//!
//! Run with `cargo bench --bench floating`. The hull is an ellipsoid 30 × 10 × 8 m
//! (semi-axes 15, 5, 4 m about the origin, a latitude–longitude sphere of 320 meridians
//! and 160 bands stretched: 101,760 facets), 644 t in sea water (about half its volume),
//! G 1 m below its centre, so it floats upright and stable. Benchmarks:
//! * `section_1`: one cut of the hull by a tilted plane (`Hull::section`), the unit of
//!   work of every solver step;
//! * `solve_curve`: `float::solve` with no listed heel: the equilibrium by the contract's
//!   rule and the 0°…90° grid (91 points) with trim free;
//! * `solve_curve_33`: the same with the default 33 listed heels (−80° … 80°);
//!   (`solve_curve_33` − `solve_curve`) / 33 is the cost of one more heel angle;
//! * `compute_floating`: `compute::compute` of a floating sidecar end to end (frame,
//!   topology, the solver with the default heels, the loads integrated on the solved free
//!   surface), the figure a user waits for; the target is ≤ 1 s.
//!
//! The setup prints the number of plane cuts of one solve.

use std::hint::black_box;
use std::path::Path;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use wetload::compute;
use wetload::hydro::float::{self, Body, Hull};
use wetload::hydro::{Tri, Vec3};
use wetload::mesh::{Format, Mesh};
use wetload::sidecar::parse_sidecar;

fn floating(c: &mut Criterion) {
    let hull_tris: Vec<[[f64; 3]; 3]> = shapes::uv_sphere([0.0; 3], 1.0, 320, 160)
        .iter()
        .map(|t| t.map(|p| [15.0 * p[0], 5.0 * p[1], 4.0 * p[2]]))
        .collect();
    let facets = hull_tris.len();
    let tris: Vec<Tri> = hull_tris
        .iter()
        .map(|t| t.map(|p| Vec3::new(p[0], p[1], p[2])))
        .collect();
    let hull = Hull::new(&tris, &vec![1; facets]).expect("a closed hull");
    let body = Body {
        mass_kg: 644_000.0,
        centre_of_gravity: Vec3::new(0.0, 0.0, -1.0),
        density_kg_m3: 1025.0,
        length_axis: Vec3::x(),
    };
    let listed: Vec<f64> = (-16..=16).map(|k| f64::from(k) * 5.0).collect();
    let one = float::solve(&hull, &body, &[]).expect("solves");
    let all = float::solve(&hull, &body, &listed).expect("solves");
    let e = one.equilibrium.expect("floats");
    println!(
        "{facets} facets: heel {:.3}°, GM_T {:.3} m; plane cuts: {} (curve), {} (with 33 heels)",
        e.heel_deg, e.gm_t_m, one.evaluations, all.evaluations
    );

    let mesh = Mesh::from_parts(vec![("hull", hull_tris)], Format::StlBinary);
    let side = parse_sidecar(
        Path::new("h.json"),
        r#"{"units": "m", "liquid": {"density": 1025},
            "floating": {"mass": 644000, "centre_of_gravity": [0, 0, -1]}}"#,
    )
    .expect("valid sidecar");
    let r = compute::compute("h.stl", &mesh, &side).expect("computes");
    let f = r.cases[0].floating.as_ref().expect("floating");
    assert!(f.equilibrium.is_some());
    println!("compute: {} plane cuts", f.evaluations);

    let mut group = c.benchmark_group("floating_102k");
    group
        .throughput(Throughput::Elements(facets as u64))
        .sample_size(10)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(8));
    let n = Vec3::new(0.1, -0.3, 1.0).normalize();
    let ax = n.cross(&Vec3::y()).normalize();
    group.bench_function("section_1", |b| {
        b.iter(|| black_box(&hull).section(&n, 0.2, &ax))
    });
    group.bench_function("solve_curve", |b| {
        b.iter(|| float::solve(black_box(&hull), &body, &[]))
    });
    group.bench_function("solve_curve_33", |b| {
        b.iter(|| float::solve(black_box(&hull), &body, &listed))
    });
    group.bench_function("compute_floating", |b| {
        b.iter(|| compute::compute("h.stl", black_box(&mesh), &side))
    });
    group.finish();
}

criterion_group!(benches, floating);
criterion_main!(benches);
