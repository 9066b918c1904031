//! Reader benchmark: our binary STL and OBJ readers against `stl_io` and `tobj`.
//!
//! Run with `cargo bench --bench read`. The inputs are generated in memory (a torus), so no
//! large file is kept in the repository:
//! * a binary STL of 1,000,000 facets (50 MB), read by `stl_io`'s streaming iterator
//!   (`create_stl_reader` on a `Cursor`, widened into the same f64 facet and normal vectors
//!   we produce) and by `wetload::mesh::read_mesh`;
//! * an OBJ of 100,000 quads (200,000 facets after triangulation) in two groups, read by
//!   `tobj::load_obj_buf` (f64, triangulate, points and lines ignored, no materials) and by
//!   `wetload::mesh::read_mesh`.

use std::f64::consts::TAU;
use std::fmt::Write as _;
use std::hint::black_box;
use std::io::Cursor;
use std::path::Path;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};

/// Point `(i, j)` of a torus with radii 3 and 1 sampled on an `nu × nv` grid.
fn torus_point(i: usize, j: usize, nu: usize, nv: usize) -> [f64; 3] {
    let (u, v) = (
        TAU * (i % nu) as f64 / nu as f64,
        TAU * (j % nv) as f64 / nv as f64,
    );
    let r = 3.0 + v.cos();
    [r * u.cos(), r * u.sin(), v.sin()]
}

/// A binary STL of `2 · nu · nv` torus facets; the header does not start with `solid`, so
/// `stl_io`'s format sniffing picks binary.
fn binary_stl(nu: usize, nv: usize) -> Vec<u8> {
    let n = 2 * nu * nv;
    let mut b = Vec::with_capacity(84 + 50 * n);
    b.extend_from_slice(&[b'#'; 80]);
    b.extend_from_slice(&(n as u32).to_le_bytes());
    for i in 0..nu {
        for j in 0..nv {
            let p = |a, c| torus_point(a, c, nu, nv);
            let (p00, p10, p11, p01) = (p(i, j), p(i + 1, j), p(i + 1, j + 1), p(i, j + 1));
            for tri in [[p00, p10, p11], [p00, p11, p01]] {
                b.extend_from_slice(&[0u8; 12]); // normal: unused
                for v in tri {
                    for c in v {
                        b.extend_from_slice(&(c as f32).to_le_bytes());
                    }
                }
                b.extend_from_slice(&[0, 0]);
            }
        }
    }
    b
}

/// An OBJ of `nu · nv` torus quads, the two halves of the torus in groups `a` and `b`.
fn obj_text(nu: usize, nv: usize) -> Vec<u8> {
    let mut s = String::with_capacity(60 * nu * nv);
    for i in 0..nu {
        for j in 0..nv {
            let p = torus_point(i, j, nu, nv);
            writeln!(s, "v {:.9} {:.9} {:.9}", p[0], p[1], p[2]).expect("writing to a String");
        }
    }
    let idx = |i: usize, j: usize| (i % nu) * nv + (j % nv) + 1;
    for i in 0..nu {
        if i == 0 || i == nu / 2 {
            writeln!(s, "g {}", if i == 0 { "a" } else { "b" }).expect("writing to a String");
        }
        for j in 0..nv {
            writeln!(
                s,
                "f {} {} {} {}",
                idx(i, j),
                idx(i + 1, j),
                idx(i + 1, j + 1),
                idx(i, j + 1)
            )
            .expect("writing to a String");
        }
    }
    s.into_bytes()
}

fn stl_io_to_facets(bytes: &[u8]) -> (Vec<[[f64; 3]; 3]>, Vec<[f32; 3]>) {
    let mut cursor = Cursor::new(bytes);
    let reader = stl_io::create_stl_reader(&mut cursor).expect("a binary STL");
    let mut facets = Vec::new();
    let mut normals = Vec::new();
    for t in reader {
        let t = t.expect("a complete file");
        facets.push(t.vertices.map(|v| v.0.map(f64::from)));
        normals.push(t.normal.0);
    }
    (facets, normals)
}

fn tobj_load(bytes: &[u8]) -> Vec<tobj::Model> {
    let opts = tobj::LoadOptions {
        triangulate: true,
        ignore_points: true,
        ignore_lines: true,
        ..Default::default()
    };
    let (models, _) = tobj::load_obj_buf(&mut Cursor::new(bytes), &opts, |_| {
        Ok((Vec::new(), Default::default()))
    })
    .expect("a valid OBJ");
    models
}

fn readers(c: &mut Criterion) {
    let stl = binary_stl(1000, 500);
    let stl_facets = 1_000_000u64;
    let ours = wetload::mesh::read_mesh(Path::new("torus.stl"), &stl).expect("valid");
    assert_eq!(ours.facets.len() as u64, stl_facets);
    assert_eq!(
        stl_io_to_facets(&stl).0,
        ours.facets.to_vec(),
        "both readers agree"
    );

    let mut g = c.benchmark_group("binary_stl_1M");
    g.sample_size(20)
        .warm_up_time(Duration::from_secs(2))
        .measurement_time(Duration::from_secs(10))
        .throughput(Throughput::Elements(stl_facets));
    g.bench_function("stl_io_stream", |b| {
        b.iter(|| stl_io_to_facets(black_box(&stl)))
    });
    g.bench_function("wetload", |b| {
        b.iter(|| wetload::mesh::read_mesh(Path::new("torus.stl"), black_box(&stl)))
    });
    g.finish();
    drop(stl);

    let obj = obj_text(400, 250);
    let ours = wetload::mesh::read_mesh(Path::new("torus.obj"), &obj).expect("valid");
    let obj_facets = ours.facets.len() as u64;
    assert_eq!(obj_facets, 200_000);
    let theirs: usize = tobj_load(&obj)
        .iter()
        .map(|m| m.mesh.indices.len() / 3)
        .sum();
    assert_eq!(theirs as u64, obj_facets);

    let mut g = c.benchmark_group("obj_200k");
    g.sample_size(20)
        .warm_up_time(Duration::from_secs(2))
        .measurement_time(Duration::from_secs(10))
        .throughput(Throughput::Elements(obj_facets));
    g.bench_function("tobj", |b| b.iter(|| tobj_load(black_box(&obj))));
    g.bench_function("wetload", |b| {
        b.iter(|| wetload::mesh::read_mesh(Path::new("torus.obj"), black_box(&obj)))
    });
    g.finish();
}

criterion_group!(benches, readers);
criterion_main!(benches);
