//! Sweep benchmark: a 100-step level sweep against a single calculation, on closed
//! icospheres of 81,920 and 1,310,720 facets (`shapes::icosphere`, 6 and 8 subdivisions).
//!
//! Run with `cargo bench --bench sweep`. The sphere has radius 5 m about the origin, is
//! wetted from outside by fresh water, and the sweep steps the level from −5 to +5 m in
//! 100 steps of 0.1 m (101 levels), from below the bottom to the top. Per size:
//! * `integrate_1`: `hydro::integrate` at one level (the single calculation's own
//!   integration, level 0);
//! * `sweep_101`: `hydro::sweep` of the 101 levels (the sweep's whole integration);
//! * `integrate_101`: `hydro::integrate` called at each of the 101 levels, as the sweep
//!   was computed before `hydro::sweep` (81,920 facets only: at 1.3 M it takes seconds);
//! * `compute_single`: `compute::compute` of the sidecar without a sweep (frame,
//!   topology, wetting, one integration, assembly);
//! * `compute_sweep_101`: `compute::compute` of the same sidecar with the sweep.
//!
//! The setup checks that the sweep's steps equal single integrations at a few levels.

use std::hint::black_box;
use std::path::Path;
use std::time::Duration;

use criterion::{Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use wetload::compute;
use wetload::hydro::{
    self, Liquid, PartAccum, PartInput, Profile, SweepPart, SweptLiquid, Topology, Tri, Vec3,
    Wetting,
};
use wetload::mesh::{Format, Mesh};
use wetload::sidecar::parse_sidecar;

const G: f64 = 9.80665;

fn levels() -> Vec<f64> {
    (0..=100).map(|i| -5.0 + 0.1 * f64::from(i)).collect()
}

fn single(
    tris: &[Tri],
    level: f64,
    wetting: &[Wetting],
    vol_sign: &[i8],
    liquid: &Liquid,
) -> PartAccum {
    let mut l = liquid.clone();
    l.level_m = level;
    let profile = Profile::new(&l, G).expect("valid liquid");
    let part = PartInput {
        facets: 0..tris.len(),
        profile: Some(&profile),
        volume_level: Some(profile.level()),
    };
    hydro::integrate(tris, &[part], wetting, vol_sign)[0]
}

fn sweeps(c: &mut Criterion) {
    let liquid = Liquid::uniform(0.0, 1000.0);
    let levels = levels();
    for (label, subdivisions) in [("82k", 6), ("1.3M", 8)] {
        let sphere = shapes::icosphere([0.0, 0.0, 0.0], 5.0, subdivisions);
        let facets = sphere.len();
        // The sphere is centred on the origin, so the local frame is the mesh's own.
        let tris: Vec<Tri> = sphere
            .iter()
            .map(|t| t.map(|p| Vec3::new(p[0], p[1], p[2])))
            .collect();
        let topology = Topology::build(&tris);
        assert!(topology.closed());
        let wetting: Vec<Wetting> = topology
            .flip
            .iter()
            .map(|&f| if f { Wetting::Back } else { Wetting::Front })
            .collect();
        let vol_sign: Vec<i8> = topology
            .flip
            .iter()
            .map(|&f| if f { -1 } else { 1 })
            .collect();
        let parts = [SweepPart {
            facets: 0..facets,
            wet: true,
            volume: true,
        }];
        let swept = SweptLiquid {
            liquid: &liquid,
            g_m_s2: G,
            origin_z: 0.0,
        };
        let sums = hydro::sweep(&tris, &parts, &wetting, &vol_sign, &swept, &levels)
            .expect("valid liquid");
        for k in [0, 37, 50, 100] {
            let one = single(&tris, levels[k], &wetting, &vol_sign, &liquid);
            let scale = 1000.0 * G * 10.0 * 100.0;
            assert!(
                (sums[k].force - one.force).norm() <= 1e-12 * scale,
                "level {k}"
            );
        }

        let mesh = Mesh::from_parts(vec![("sphere", sphere)], Format::StlBinary);
        let plain = r#"{"units": "m", "liquid": {"level": 0.0, "density": 1000}}"#;
        let with_sweep = r#"{"units": "m", "liquid": {"level": 0.0, "density": 1000},
            "sweep": {"from": -5.0, "to": 5.0, "step": 0.1}}"#;
        let plain = parse_sidecar(Path::new("s.json"), plain).expect("valid sidecar");
        let with_sweep = parse_sidecar(Path::new("s.json"), with_sweep).expect("valid sidecar");
        let r = compute::compute("s.stl", &mesh, &with_sweep).expect("computable");
        assert_eq!(r.cases[0].sweep.as_ref().map(Vec::len), Some(101));

        let mut group = c.benchmark_group(format!("sweep_{label}"));
        group.throughput(Throughput::Elements(facets as u64));
        if facets > 1_000_000 {
            group
                .sampling_mode(SamplingMode::Flat)
                .sample_size(10)
                .warm_up_time(Duration::from_secs(1))
                .measurement_time(Duration::from_secs(8));
        } else {
            group
                .sample_size(20)
                .warm_up_time(Duration::from_secs(1))
                .measurement_time(Duration::from_secs(3));
        }
        group.bench_function("integrate_1", |b| {
            b.iter(|| single(black_box(&tris), 0.0, &wetting, &vol_sign, &liquid))
        });
        group.bench_function("sweep_101", |b| {
            b.iter(|| {
                hydro::sweep(
                    black_box(&tris),
                    &parts,
                    &wetting,
                    &vol_sign,
                    &swept,
                    &levels,
                )
            })
        });
        if facets < 1_000_000 {
            group.bench_function("integrate_101", |b| {
                b.iter(|| {
                    levels
                        .iter()
                        .map(|&l| single(black_box(&tris), l, &wetting, &vol_sign, &liquid))
                        .collect::<Vec<_>>()
                })
            });
        }
        group.bench_function("compute_single", |b| {
            b.iter(|| compute::compute("s.stl", black_box(&mesh), &plain))
        });
        group.bench_function("compute_sweep_101", |b| {
            b.iter(|| compute::compute("s.stl", black_box(&mesh), &with_sweep))
        });
        group.finish();
    }
}

criterion_group!(benches, sweeps);
criterion_main!(benches);
