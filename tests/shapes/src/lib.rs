//! Tessellations of analytic shapes, and small transforms of triangle lists.
//!
//! Owns pure functions that turn a shape description (rectangle, disc, cylinder patch, box,
//! box tube, spheres, torus) into a list of triangles, plus transforms that tests use for
//! invariance checks (translation, rotation, scaling, winding reversal, splitting, seeded
//! noise). The encoders in [`encode`] turn such lists into STL and OBJ bytes. Tests,
//! benchmarks and the demo generator (`examples/demo_meshes.rs`) build their meshes here.
//!
//! It does not read files, compute loads or check topology; that is wetload's own work,
//! and this crate never depends on it.
//!
//! # Conventions shared by every function here
//!
//! * A triangle is three vertices `[[x, y, z]; 3]` in any length unit (the caller's); the
//!   functions never scale on their own.
//! * Orientation is the right-hand rule over the vertex order: the facet normal is
//!   `(b − a) × (c − a)`. Each function says where its normals point; closed solids are
//!   wound outward (positive enclosed volume).
//! * Vertices that two facets share are computed once and copied, so they are equal bit for
//!   bit: a closed solid here has every undirected edge used by exactly two facets in
//!   opposite directions, even when vertices are compared by their exact bit patterns.
//! * Grid coordinates are interpolated as `(a·(n − i) + b·i) / n`, which gives both ends
//!   exactly; angles that are whole quarter turns use exact cosines and sines (`0`, `±1`),
//!   so a disc's axis points or a hemisphere's rim lie exactly where expected.
//! * A subdivision count of 0 is treated as 1 (3 for counts around a full circle). Memory
//!   grows with the counts; [`icosphere`] caps its subdivisions because its growth is
//!   exponential. No function panics; degenerate input (a zero direction) yields NaN
//!   coordinates, as documented per function.

pub mod encode;

use std::f64::consts::TAU;

/// A point or vector `[x, y, z]`, in the caller's length unit.
pub type Point = [f64; 3];

/// A triangle as three vertices; its normal follows the right-hand rule over the order.
pub type Triangle = [Point; 3];

/// The largest `subdivisions` [`icosphere`] honours: 20 · 4⁸ = 1 310 720 facets.
pub const ICOSPHERE_MAX_SUBDIVISIONS: u32 = 8;

// ---------------------------------------------------------------------------------------
// Small vector arithmetic on arrays (kept private: the core has its own nalgebra types).

fn add(a: Point, b: Point) -> Point {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn mul(a: Point, s: f64) -> Point {
    [a[0] * s, a[1] * s, a[2] * s]
}

fn dot(a: Point, b: Point) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: Point, b: Point) -> Point {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn norm(a: Point) -> f64 {
    dot(a, a).sqrt()
}

/// `a / |a|`; NaN components for a zero vector.
fn normalize(a: Point) -> Point {
    mul(a, 1.0 / norm(a))
}

/// The midpoint of two points. `a + b` is commutative in IEEE arithmetic, so both facets
/// that share an edge get the same bits whichever way round they traverse it.
fn midpoint(a: Point, b: Point) -> Point {
    [
        (a[0] + b[0]) * 0.5,
        (a[1] + b[1]) * 0.5,
        (a[2] + b[2]) * 0.5,
    ]
}

/// The unit normal `(b − a) × (c − a) / |…|` of a triangle, or `[0, 0, 0]` when the
/// triangle is degenerate or not finite.
fn facet_normal(t: &Triangle) -> Point {
    let n = cross(sub(t[1], t[0]), sub(t[2], t[0]));
    let len = norm(n);
    if len > 0.0 && len.is_finite() {
        mul(n, 1.0 / len)
    } else {
        [0.0; 3]
    }
}

/// Grid coordinate `i` of `n` between `a` and `b`: `(a·(n − i) + b·i) / n`, exactly `a`
/// at `i = 0` and exactly `b` at `i = n`.
fn lerp(a: f64, b: f64, i: usize, n: usize) -> f64 {
    if i == 0 {
        a
    } else if i >= n {
        b
    } else {
        (a * (n - i) as f64 + b * i as f64) / n as f64
    }
}

/// `(cos, sin)` of the angle `i/n` of a full turn; exact at whole quarter turns.
fn unit_circle(i: usize, n: usize) -> (f64, f64) {
    let n = n.max(1);
    let i = i % n;
    let (i128_, n128) = (i as u128, n as u128);
    if (4 * i128_) % n128 == 0 {
        match (4 * i128_) / n128 {
            0 => (1.0, 0.0),
            1 => (0.0, 1.0),
            2 => (-1.0, 0.0),
            _ => (0.0, -1.0),
        }
    } else {
        let angle = TAU * (i as f64 / n as f64);
        (angle.cos(), angle.sin())
    }
}

/// A right-handed orthonormal basis `(u, v, w)` with `w` along `normal` (so `u × v = w`).
///
/// `u` is the projection of the coordinate axis least aligned with `normal` (the first of
/// x, y, z on a tie), so for `normal = +z` the basis is exactly `(+x, +y, +z)` and for
/// `+x` it is `(+y, +z, +x)`. A zero `normal` gives NaN.
fn basis(normal: Point) -> (Point, Point, Point) {
    let w = normalize(normal);
    let mut axis = 0;
    for k in 1..3 {
        if w[k].abs() < w[axis].abs() {
            axis = k;
        }
    }
    let mut e = [0.0; 3];
    e[axis] = 1.0;
    let u = normalize(sub(e, mul(w, w[axis])));
    let v = cross(w, u);
    (u, v, w)
}

/// Pushes the quad `p00, p10, p11, p01` as two triangles. Unflipped, the normal points
/// along `(p10 − p00) × (p01 − p00)`; flipped, the opposite way.
fn push_quad(out: &mut Vec<Triangle>, p00: Point, p10: Point, p11: Point, p01: Point, flip: bool) {
    if flip {
        out.push([p00, p11, p10]);
        out.push([p00, p01, p11]);
    } else {
        out.push([p00, p10, p11]);
        out.push([p00, p11, p01]);
    }
}

// ---------------------------------------------------------------------------------------
// Planar shapes.

/// A planar parallelogram subdivided into `nu × nv` cells of two triangles each.
///
/// Vertices are `corner + s·edge_u + t·edge_v` for `s = i/nu`, `t = j/nv`; the facet
/// normals point along `edge_u × edge_v`. Facets: `2·nu·nv`. Area: `|edge_u × edge_v|`.
pub fn rectangle(
    corner: Point,
    edge_u: Point,
    edge_v: Point,
    nu: usize,
    nv: usize,
) -> Vec<Triangle> {
    let (nu, nv) = (nu.max(1), nv.max(1));
    let at = |i: usize, j: usize| {
        let s = lerp(0.0, 1.0, i, nu);
        let t = lerp(0.0, 1.0, j, nv);
        add(corner, add(mul(edge_u, s), mul(edge_v, t)))
    };
    let mut out = Vec::new();
    for i in 0..nu {
        for j in 0..nv {
            push_quad(
                &mut out,
                at(i, j),
                at(i + 1, j),
                at(i + 1, j + 1),
                at(i, j + 1),
                false,
            );
        }
    }
    out
}

/// Area of the regular polygon with `segments` vertices inscribed in a circle of
/// `radius`: `A = ½ · segments · radius² · sin(2π / segments)` (segments < 3 count as 3).
///
/// This is the exact area of [`disc`] and of the rim polygon of [`hemisphere_shell`]; it
/// falls short of `π·radius²` by about `(2π³/3) · radius² / segments²`.
pub fn polygon_area(radius: f64, segments: usize) -> f64 {
    let n = segments.max(3);
    let (_, sin) = unit_circle(1, n);
    0.5 * n as f64 * radius * radius * sin
}

/// A flat disc: the regular `segments`-gon inscribed in the circle of `radius` about
/// `centre`, in the plane perpendicular to `normal`, split into `rings` concentric bands.
///
/// Its area is [`polygon_area`]`(radius, segments)`, not `π·radius²`: every vertex lies on
/// the circle (or a concentric one), so the polygon is inscribed. The facet normals point
/// along `normal`. In-plane axes: `u`, `v` with `u × v = normal/|normal|`, `u` along the
/// coordinate axis least aligned with `normal` (for `+z`: `u = +x`, `v = +y`); vertex `j`
/// of each ring sits at angle `2πj/segments` from `u` towards `v`. Facets:
/// `segments · (2·rings − 1)` (segments < 3 count as 3). A zero `normal` gives NaN.
pub fn disc(
    centre: Point,
    normal: Point,
    radius: f64,
    segments: usize,
    rings: usize,
) -> Vec<Triangle> {
    let (n, rings) = (segments.max(3), rings.max(1));
    let (u, v, _) = basis(normal);
    let at = |k: usize, j: usize| {
        let r = lerp(0.0, radius, k, rings);
        let (c, s) = unit_circle(j, n);
        add(centre, add(mul(u, r * c), mul(v, r * s)))
    };
    let mut out = Vec::new();
    for j in 0..n {
        out.push([centre, at(1, j), at(1, j + 1)]);
    }
    for k in 1..rings {
        for j in 0..n {
            push_quad(
                &mut out,
                at(k, j),
                at(k + 1, j),
                at(k + 1, j + 1),
                at(k, j + 1),
                false,
            );
        }
    }
    out
}

// ---------------------------------------------------------------------------------------
// Open curved shapes.

/// An open patch of a circular cylinder: an arc of the circle of `radius` about the axis,
/// swept `width` along it.
///
/// The axis passes through `axis_point` along `axis_dir` (any length). Angles are in
/// radians, measured about `axis_dir` by the right-hand rule from `reference_dir` projected
/// perpendicular to the axis (if `reference_dir` is parallel to the axis, the coordinate
/// axis least aligned with `axis_dir` is used instead). A vertex at angle `θ` and axial
/// distance `t ∈ [0, width]` is `axis_point + t·â + radius·(cos θ·ê₁ + sin θ·ê₂)` with
/// `ê₂ = â × ê₁`: it lies on the cylinder up to the round-off of one multiply-add.
///
/// The facet normals point away from the axis (the convex side) whatever the signs of
/// `angle_to − angle_from` and `width`. Facets: `2·n_arc·n_width`. Its vector area
/// `Σ n dA` is `width·radius·(r̂(θ_to) − r̂(θ_from)) × â` exactly for any `n_arc`. A zero
/// `axis_dir` gives NaN.
#[allow(clippy::too_many_arguments)]
pub fn cylinder_patch(
    axis_point: Point,
    axis_dir: Point,
    radius: f64,
    angle_from: f64,
    angle_to: f64,
    reference_dir: Point,
    width: f64,
    n_arc: usize,
    n_width: usize,
) -> Vec<Triangle> {
    let (n_arc, n_width) = (n_arc.max(1), n_width.max(1));
    let a = normalize(axis_dir);
    let projected = sub(reference_dir, mul(a, dot(reference_dir, a)));
    let len = norm(projected);
    let e1 = if len > 1e-12 * norm(reference_dir) && len.is_finite() {
        mul(projected, 1.0 / len)
    } else {
        basis(a).0
    };
    let e2 = cross(a, e1);
    let at = |i: usize, j: usize| {
        let theta = lerp(angle_from, angle_to, i, n_arc);
        let t = lerp(0.0, width, j, n_width);
        let radial = add(mul(e1, theta.cos()), mul(e2, theta.sin()));
        add(axis_point, add(mul(a, t), mul(radial, radius)))
    };
    // ∂θ × ∂t = radius · r̂: outward when the angle and the width both increase.
    let flip = (angle_to - angle_from) * width < 0.0;
    let mut out = Vec::new();
    for i in 0..n_arc {
        for j in 0..n_width {
            push_quad(
                &mut out,
                at(i, j),
                at(i + 1, j),
                at(i + 1, j + 1),
                at(i, j + 1),
                flip,
            );
        }
    }
    out
}

/// An open hemispherical shell of `radius` about `centre`, bulging towards `pole`.
///
/// The rim is the regular `n_lon`-gon on the great circle perpendicular to `pole`; it lies
/// exactly in that plane when `pole` is a coordinate axis. Latitude rings are at polar
/// angles `(π/2)·i/n_lat` from the pole; the in-plane axes are those of [`disc`]. Every
/// vertex lies on the sphere up to round-off. The facet normals point away from `centre`
/// (the convex side). Facets: `n_lon · (2·n_lat − 1)` (n_lon < 3 counts as 3). The
/// projection of the shell on the rim plane is the rim polygon, so
/// `Σ (n · p̂) dA = `[`polygon_area`]`(radius, n_lon)` exactly. A zero `pole` gives NaN.
pub fn hemisphere_shell(
    centre: Point,
    pole: Point,
    radius: f64,
    n_lon: usize,
    n_lat: usize,
) -> Vec<Triangle> {
    let (n_lon, n_lat) = (n_lon.max(3), n_lat.max(1));
    let frame = basis(pole);
    let top = add(centre, mul(frame.2, radius));
    let at = |i: usize, j: usize| sphere_point(centre, radius, frame, i, 4 * n_lat, j, n_lon);
    let mut out = Vec::new();
    for j in 0..n_lon {
        out.push([top, at(1, j), at(1, j + 1)]);
    }
    for i in 1..n_lat {
        for j in 0..n_lon {
            push_quad(
                &mut out,
                at(i, j),
                at(i + 1, j),
                at(i + 1, j + 1),
                at(i, j + 1),
                false,
            );
        }
    }
    out
}

/// The point at polar angle `i/n_polar` of a full turn from `w` and azimuth `j/n_azimuth`
/// of a full turn from `u` towards `v`.
fn sphere_point(
    centre: Point,
    radius: f64,
    (u, v, w): (Point, Point, Point),
    i: usize,
    n_polar: usize,
    j: usize,
    n_azimuth: usize,
) -> Point {
    let (cos_p, sin_p) = unit_circle(i, n_polar);
    let (cos_a, sin_a) = unit_circle(j, n_azimuth);
    let dir = add(mul(add(mul(u, cos_a), mul(v, sin_a)), sin_p), mul(w, cos_p));
    add(centre, mul(dir, radius))
}

// ---------------------------------------------------------------------------------------
// Closed solids (wound outward).

/// A closed axis-aligned box, each face subdivided into `n × n` cells (`12·n²` facets),
/// wound outward.
///
/// The corners are the per-axis minima and maxima of `min` and `max` (given the other
/// way round they are swapped). Surface area `2(ab + bc + ca)`, volume `abc` for the
/// edge lengths `a, b, c`.
pub fn box_solid(min: Point, max: Point, n: usize) -> Vec<Triangle> {
    let n = n.max(1);
    let lo = [min[0].min(max[0]), min[1].min(max[1]), min[2].min(max[2])];
    let hi = [min[0].max(max[0]), min[1].max(max[1]), min[2].max(max[2])];
    let mut out = Vec::new();
    for k in 0..3 {
        // (a, b, k) is a cyclic permutation of (x, y, z), so ê_a × ê_b = ê_k.
        let (a, b) = ((k + 1) % 3, (k + 2) % 3);
        for (plane, flip) in [(lo[k], true), (hi[k], false)] {
            let at = |i: usize, j: usize| {
                let mut p = [0.0; 3];
                p[k] = plane;
                p[a] = lerp(lo[a], hi[a], i, n);
                p[b] = lerp(lo[b], hi[b], j, n);
                p
            };
            for i in 0..n {
                for j in 0..n {
                    push_quad(
                        &mut out,
                        at(i, j),
                        at(i + 1, j),
                        at(i + 1, j + 1),
                        at(i, j + 1),
                        flip,
                    );
                }
            }
        }
    }
    out
}

/// A closed right prism on a regular `segments`-gon (a faceted solid cylinder) along the
/// coordinate axis `axis` (0 = x, 1 = y, 2 = z; larger counts as z), wound outward.
///
/// The base polygon is centred on `base`, inscribed in the circle of `radius`, vertex `j`
/// at the angle `2πj/segments` from the next coordinate axis after `axis` (for `axis` = z:
/// from +x towards +y); the prism runs `length` along `+axis` (a negative length runs the
/// other way and stays outward). The end faces are fans about their centres: `4·segments`
/// facets. Volume: [`polygon_area`]`(radius, segments) · |length|`.
pub fn cylinder_solid(
    base: Point,
    axis: usize,
    radius: f64,
    length: f64,
    segments: usize,
) -> Vec<Triangle> {
    let n = segments.max(3);
    let k = axis.min(2);
    let (a, b) = ((k + 1) % 3, (k + 2) % 3);
    let ring = |j: usize, h: f64| {
        let (c, s) = unit_circle(j, n);
        let mut p = base;
        p[k] += h;
        p[a] += radius * c;
        p[b] += radius * s;
        p
    };
    let mut top_c = base;
    top_c[k] += length;
    let flip = length < 0.0;
    let mut out = Vec::new();
    for j in 0..n {
        let (b0, b1) = (ring(j, 0.0), ring(j + 1, 0.0));
        let (t0, t1) = (ring(j, length), ring(j + 1, length));
        push_quad(&mut out, b0, b1, t1, t0, flip);
        if flip {
            out.push([top_c, t1, t0]);
            out.push([base, b0, b1]);
        } else {
            out.push([top_c, t0, t1]);
            out.push([base, b1, b0]);
        }
    }
    out
}

/// A closed straight tube of rectangular cross-section along `x` (a box culvert barrel or
/// a hollow section), as one shell of genus 1, wound outward (away from the material,
/// so the bore's facets face the tube's axis).
///
/// The section lies in the `(y, z)` plane: the material fills the rectangle
/// `outer_min..outer_max` minus `inner_min..inner_max` (each `[y, z]`); the inner
/// rectangle must lie strictly inside the outer one, or the shell intersects itself. The
/// tube runs from `x_from` to `x_to` (either order) in `n_length` segments. The section is
/// cut by the lines of both rectangles into 8 cells; each end face has 16 facets and each
/// of the 16 boundary strips `2·n_length` facets: `32 + 32·n_length` in all. Volume:
/// `(outer area − inner area) · length`.
pub fn rectangular_tube(
    x_from: f64,
    x_to: f64,
    outer_min: [f64; 2],
    outer_max: [f64; 2],
    inner_min: [f64; 2],
    inner_max: [f64; 2],
    n_length: usize,
) -> Vec<Triangle> {
    let n = n_length.max(1);
    let (x0, x1) = (x_from.min(x_to), x_from.max(x_to));
    let ys = [outer_min[0], inner_min[0], inner_max[0], outer_max[0]];
    let zs = [outer_min[1], inner_min[1], inner_max[1], outer_max[1]];
    let xs: Vec<f64> = (0..=n).map(|k| lerp(x0, x1, k, n)).collect();
    let p = |x: f64, ia: usize, ib: usize| [x, ys[ia], zs[ib]];
    // Section cells (a, b) with a along y, b along z; (1, 1) is the bore.
    let solid = |a: isize, b: isize| (0..3).contains(&a) && (0..3).contains(&b) && (a, b) != (1, 1);
    let mut out = Vec::new();
    for a in 0..3usize {
        for b in 0..3usize {
            if !solid(a as isize, b as isize) {
                continue;
            }
            // End faces: ê_y × ê_z = +x at x1, reversed at x0.
            for (x, flip) in [(x0, true), (x1, false)] {
                push_quad(
                    &mut out,
                    p(x, a, b),
                    p(x, a + 1, b),
                    p(x, a + 1, b + 1),
                    p(x, a, b + 1),
                    flip,
                );
            }
            let (ai, bi) = (a as isize, b as isize);
            for k in 0..n {
                let (xa, xb) = (xs[k], xs[k + 1]);
                // Side faces where the neighbouring cell is empty (outside or the bore).
                // ê_z × ê_x = +y and ê_x × ê_y = +z give the unflipped orders below.
                if !solid(ai + 1, bi) {
                    let c = a + 1;
                    push_quad(
                        &mut out,
                        p(xa, c, b),
                        p(xa, c, b + 1),
                        p(xb, c, b + 1),
                        p(xb, c, b),
                        false,
                    );
                }
                if !solid(ai - 1, bi) {
                    push_quad(
                        &mut out,
                        p(xa, a, b),
                        p(xa, a, b + 1),
                        p(xb, a, b + 1),
                        p(xb, a, b),
                        true,
                    );
                }
                if !solid(ai, bi + 1) {
                    let c = b + 1;
                    push_quad(
                        &mut out,
                        p(xa, a, c),
                        p(xb, a, c),
                        p(xb, a + 1, c),
                        p(xa, a + 1, c),
                        false,
                    );
                }
                if !solid(ai, bi - 1) {
                    push_quad(
                        &mut out,
                        p(xa, a, b),
                        p(xb, a, b),
                        p(xb, a + 1, b),
                        p(xa, a + 1, b),
                        true,
                    );
                }
            }
        }
    }
    out
}

/// A closed icosphere: the regular icosahedron inscribed in the sphere of `radius` about
/// `centre`, each facet split `subdivisions` times into 4 with the new vertices pushed
/// onto the sphere. Wound outward; `20·4^subdivisions` facets.
///
/// Every vertex lies on the sphere to about 1e-15 relative. `subdivisions` above
/// [`ICOSPHERE_MAX_SUBDIVISIONS`] is capped there. At 0 the volume is exactly the
/// icosahedron's, `(5/12)(3 + √5)·a³` with edge `a = 4R / √(10 + 2√5)`.
pub fn icosphere(centre: Point, radius: f64, subdivisions: u32) -> Vec<Triangle> {
    // Icosahedron vertices (0, ±1, ±φ) and cyclic permutations, on the unit sphere.
    let phi = (1.0 + 5.0_f64.sqrt()) / 2.0;
    let raw = [
        [-1.0, phi, 0.0],
        [1.0, phi, 0.0],
        [-1.0, -phi, 0.0],
        [1.0, -phi, 0.0],
        [0.0, -1.0, phi],
        [0.0, 1.0, phi],
        [0.0, -1.0, -phi],
        [0.0, 1.0, -phi],
        [phi, 0.0, -1.0],
        [phi, 0.0, 1.0],
        [-phi, 0.0, -1.0],
        [-phi, 0.0, 1.0],
    ];
    let v = raw.map(normalize);
    let faces: [[usize; 3]; 20] = [
        [0, 11, 5],
        [0, 5, 1],
        [0, 1, 7],
        [0, 7, 10],
        [0, 10, 11],
        [1, 5, 9],
        [5, 11, 4],
        [11, 10, 2],
        [10, 7, 6],
        [7, 1, 8],
        [3, 9, 4],
        [3, 4, 2],
        [3, 2, 6],
        [3, 6, 8],
        [3, 8, 9],
        [4, 9, 5],
        [2, 4, 11],
        [6, 2, 10],
        [8, 6, 7],
        [9, 8, 1],
    ];
    let mut unit: Vec<Triangle> = faces
        .iter()
        .map(|f| {
            let t = [v[f[0]], v[f[1]], v[f[2]]];
            // The face list is wound outward; this keeps that true whatever its order.
            if dot(cross(sub(t[1], t[0]), sub(t[2], t[0])), t[0]) < 0.0 {
                [t[0], t[2], t[1]]
            } else {
                t
            }
        })
        .collect();
    for _ in 0..subdivisions.min(ICOSPHERE_MAX_SUBDIVISIONS) {
        let mut next = Vec::with_capacity(unit.len() * 4);
        for [a, b, c] in unit {
            let ab = normalize(midpoint(a, b));
            let bc = normalize(midpoint(b, c));
            let ca = normalize(midpoint(c, a));
            next.extend([[a, ab, ca], [ab, b, bc], [ca, bc, c], [ab, bc, ca]]);
        }
        unit = next;
    }
    unit.iter()
        .map(|t| t.map(|p| add(centre, mul(p, radius))))
        .collect()
}

/// A closed latitude–longitude sphere of `radius` about `centre` with poles on `±z`:
/// `n_lon` meridians (at least 3) and `n_lat` bands from pole to pole (at least 2), fans
/// at the poles. Wound outward; `2·n_lon·(n_lat − 1)` facets; vertices on the sphere up
/// to round-off (the equator exactly at `centre.z` when `n_lat` is even).
pub fn uv_sphere(centre: Point, radius: f64, n_lon: usize, n_lat: usize) -> Vec<Triangle> {
    let (n_lon, n_lat) = (n_lon.max(3), n_lat.max(2));
    let frame = ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]);
    let north = add(centre, [0.0, 0.0, radius]);
    let south = add(centre, [0.0, 0.0, -radius]);
    let at = |i: usize, j: usize| sphere_point(centre, radius, frame, i, 2 * n_lat, j, n_lon);
    let mut out = Vec::new();
    for j in 0..n_lon {
        out.push([north, at(1, j), at(1, j + 1)]);
        out.push([south, at(n_lat - 1, j + 1), at(n_lat - 1, j)]);
    }
    // ∂(polar) × ∂(azimuth) points outward.
    for i in 1..n_lat - 1 {
        for j in 0..n_lon {
            push_quad(
                &mut out,
                at(i, j),
                at(i + 1, j),
                at(i + 1, j + 1),
                at(i, j + 1),
                false,
            );
        }
    }
    out
}

/// A closed torus about the `z` axis through `centre`: the circle of radius `minor` whose
/// centre runs round the circle of radius `major`, with `n_major` steps round the axis and
/// `n_minor` round the tube (each at least 3). Wound outward; `2·n_major·n_minor` facets,
/// every quad planar (an isosceles trapezoid).
///
/// Vertex `(i, j)` is `centre + ((R + r cos v) cos u, (R + r cos v) sin u, r sin v)` with
/// `u = 2πi/n_major`, `v = 2πj/n_minor`. The polyhedron's volume is exactly
/// `n_major·sin(2π/n_major) · R · polygon_area(r, n_minor)`, which tends to `2π²Rr²`.
pub fn torus(
    centre: Point,
    major: f64,
    minor: f64,
    n_major: usize,
    n_minor: usize,
) -> Vec<Triangle> {
    let (nu, nv) = (n_major.max(3), n_minor.max(3));
    let at = |i: usize, j: usize| {
        let (cu, su) = unit_circle(i, nu);
        let (cv, sv) = unit_circle(j, nv);
        let rho = major + minor * cv;
        add(centre, [rho * cu, rho * su, minor * sv])
    };
    let mut out = Vec::new();
    // ∂u × ∂v is along (cos v cos u, cos v sin u, sin v): away from the tube's core.
    for i in 0..nu {
        for j in 0..nv {
            push_quad(
                &mut out,
                at(i, j),
                at(i + 1, j),
                at(i + 1, j + 1),
                at(i, j + 1),
                false,
            );
        }
    }
    out
}

// ---------------------------------------------------------------------------------------
// Transforms.

/// SplitMix64's finaliser: a bijective mix of 64 bits.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Moves every vertex by a pseudo-random offset with each component in
/// `[−amplitude, amplitude)`, the same offset for the same position.
///
/// The offset is a hash of the vertex's coordinate bit patterns (with `−0` read as `+0`)
/// and `seed`, so vertices that facets share stay shared: a closed mesh stays closed and
/// the output is the same on every run and platform. Facets may fold over if
/// `amplitude` approaches the edge length.
pub fn perturb(tris: &[Triangle], amplitude: f64, seed: u64) -> Vec<Triangle> {
    let moved = |p: Point| {
        // Adding +0 turns −0 into +0, so the two zeros (equal positions) move alike.
        let mut h = mix(seed);
        for c in p {
            h = mix(h ^ (c + 0.0).to_bits());
        }
        let mut out = p;
        for (k, c) in out.iter_mut().enumerate() {
            h = mix(h ^ k as u64);
            let unit = (h >> 11) as f64 / (1u64 << 53) as f64;
            *c += amplitude * (2.0 * unit - 1.0);
        }
        out
    };
    tris.iter().map(|t| t.map(moved)).collect()
}

/// Every vertex moved by `offset`.
pub fn translate(tris: &[Triangle], offset: Point) -> Vec<Triangle> {
    tris.iter().map(|t| t.map(|p| add(p, offset))).collect()
}

/// Every vertex rotated by `angle` radians about the `z` axis through the origin
/// (counter-clockwise seen from `+z`).
pub fn rotate_about_z(tris: &[Triangle], angle: f64) -> Vec<Triangle> {
    let (s, c) = angle.sin_cos();
    tris.iter()
        .map(|t| t.map(|p| [c * p[0] - s * p[1], s * p[0] + c * p[1], p[2]]))
        .collect()
}

/// Every vertex scaled by `factor` about the origin (a negative factor also reverses the
/// orientation of closed solids, since it is a reflection).
pub fn scale(tris: &[Triangle], factor: f64) -> Vec<Triangle> {
    tris.iter().map(|t| t.map(|p| mul(p, factor))).collect()
}

/// Every facet with its winding reversed (`[a, b, c]` → `[a, c, b]`): same geometry,
/// opposite normals. Signed volumes and vector areas change sign exactly.
pub fn reverse_winding(tris: &[Triangle]) -> Vec<Triangle> {
    tris.iter().map(|&[a, b, c]| [a, c, b]).collect()
}

/// Every facet split into 4 at its edge midpoints, same winding and same surface.
///
/// Midpoints are computed symmetrically, so an edge shared by two facets gets one
/// midpoint: a closed mesh stays closed.
pub fn split_each(tris: &[Triangle]) -> Vec<Triangle> {
    let mut out = Vec::with_capacity(tris.len().saturating_mul(4));
    for &[a, b, c] in tris {
        let (ab, bc, ca) = (midpoint(a, b), midpoint(b, c), midpoint(c, a));
        out.extend([[a, ab, ca], [ab, b, bc], [ca, bc, c], [ab, bc, ca]]);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::{HashMap, HashSet};
    use std::f64::consts::PI;

    type Key = [u64; 3];

    fn key(p: Point) -> Key {
        p.map(f64::to_bits)
    }

    /// Every undirected edge (vertices compared bit for bit) is used by exactly two facets
    /// in opposite directions.
    fn assert_closed(tris: &[Triangle]) {
        let mut directed: HashMap<(Key, Key), usize> = HashMap::new();
        for t in tris {
            for k in 0..3 {
                *directed
                    .entry((key(t[k]), key(t[(k + 1) % 3])))
                    .or_default() += 1;
            }
        }
        for (&(a, b), &count) in &directed {
            assert_eq!(
                count, 1,
                "edge {a:?} → {b:?} traversed {count} times the same way"
            );
            assert_eq!(
                directed.get(&(b, a)),
                Some(&1),
                "edge {a:?} → {b:?} has no partner"
            );
        }
    }

    /// Vertices, undirected edges and facets, counted by exact bit pattern.
    fn euler_characteristic(tris: &[Triangle]) -> i64 {
        let mut vertices = HashSet::new();
        let mut edges = HashSet::new();
        for t in tris {
            for k in 0..3 {
                let (a, b) = (key(t[k]), key(t[(k + 1) % 3]));
                vertices.insert(a);
                edges.insert(if a < b { (a, b) } else { (b, a) });
            }
        }
        vertices.len() as i64 - edges.len() as i64 + tris.len() as i64
    }

    fn area(tris: &[Triangle]) -> f64 {
        tris.iter()
            .map(|t| 0.5 * norm(cross(sub(t[1], t[0]), sub(t[2], t[0]))))
            .sum()
    }

    fn vector_area(tris: &[Triangle]) -> Point {
        tris.iter().fold([0.0; 3], |acc, t| {
            add(acc, mul(cross(sub(t[1], t[0]), sub(t[2], t[0])), 0.5))
        })
    }

    /// Divergence theorem on a closed polyhedron: `V = (1/6) Σ a · (b × c)`.
    fn signed_volume(tris: &[Triangle]) -> f64 {
        tris.iter()
            .map(|t| dot(t[0], cross(t[1], t[2])))
            .sum::<f64>()
            / 6.0
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * a.abs().max(b.abs()).max(1e-300)
    }

    fn assert_points_close(a: Point, b: Point, tol: f64) {
        assert!(norm(sub(a, b)) <= tol, "{a:?} vs {b:?}");
    }

    #[test]
    fn rectangle_area_normal_and_count() {
        let tris = rectangle([1.0, 2.0, 3.0], [3.0, 0.0, 0.0], [0.0, 0.0, 2.0], 3, 4);
        assert_eq!(tris.len(), 24);
        // Closed form: vector area = edge_u × edge_v = (3,0,0) × (0,0,2) = (0,−6,0).
        assert_points_close(vector_area(&tris), [0.0, -6.0, 0.0], 1e-13);
        assert!(close(area(&tris), 6.0, 1e-14));
        for t in &tris {
            assert_points_close(facet_normal(t), [0.0, -1.0, 0.0], 1e-15);
            for p in t {
                assert_eq!(p[1], 2.0, "every vertex stays in the plane y = 2");
            }
        }
        // Zero counts count as one cell.
        assert_eq!(
            rectangle([0.0; 3], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], 0, 0).len(),
            2
        );
    }

    #[test]
    fn disc_area_is_the_inscribed_polygon_area() {
        let n = [0.3, -0.5, 0.8];
        for (segments, rings) in [(3, 1), (8, 2), (36, 3), (50, 5)] {
            let tris = disc([1.0, -2.0, 0.5], n, 2.0, segments, rings);
            assert_eq!(tris.len(), segments * (2 * rings - 1));
            let expected = polygon_area(2.0, segments);
            assert!(close(area(&tris), expected, 1e-13), "{segments}/{rings}");
            // Every facet's normal is along `normal`.
            let n_hat = normalize(n);
            for t in &tris {
                assert_points_close(facet_normal(t), n_hat, 1e-12);
            }
            assert_points_close(vector_area(&tris), mul(n_hat, expected), 1e-12);
        }
        // Closed form: A = ½·n·R²·sin(2π/n); the square inscribed in R = 1 has area 2.
        assert_eq!(polygon_area(1.0, 4), 2.0);
        assert!(close(polygon_area(1.0, 6), 1.5 * 3.0_f64.sqrt(), 1e-15));
        assert!(close(polygon_area(1.0, 100_000), PI, 1e-8));
    }

    #[test]
    fn disc_about_z_has_exact_axis_points() {
        let tris = disc([0.0, 0.0, 5.0], [0.0, 0.0, 1.0], 2.0, 8, 1);
        let points: HashSet<Key> = tris.iter().flatten().map(|&p| key(p)).collect();
        for p in [
            [2.0, 0.0, 5.0],
            [0.0, 2.0, 5.0],
            [-2.0, 0.0, 5.0],
            [0.0, -2.0, 5.0],
        ] {
            assert!(points.contains(&key(p)), "{p:?} missing");
        }
        assert!(tris.iter().flatten().all(|p| p[2] == 5.0));
    }

    #[test]
    fn cylinder_patch_vertices_on_the_circle_and_normals_outward() {
        let axis_point = [1.0, -2.0, 4.5];
        let axis_dir = [0.0, 2.0, 0.0];
        let r = 6.0;
        for (from, to, width) in [(-0.85, 0.25, 4.0), (0.25, -0.85, 4.0), (-0.85, 0.25, -4.0)] {
            let tris = cylinder_patch(
                axis_point,
                axis_dir,
                r,
                from,
                to,
                [-1.0, 0.3, 0.0],
                width,
                12,
                3,
            );
            assert_eq!(tris.len(), 72);
            for t in &tris {
                for p in t {
                    let d = sub(*p, axis_point);
                    let radial = [d[0], 0.0, d[2]];
                    assert!((norm(radial) - r).abs() < 1e-14 * r, "{p:?} off the circle");
                }
                // The normal points away from the axis.
                let c = mul(add(add(t[0], t[1]), t[2]), 1.0 / 3.0);
                let out = [c[0] - axis_point[0], 0.0, c[2] - axis_point[2]];
                assert!(dot(facet_normal(t), out) > 0.0);
            }
            // Closed form: Σ n dA = |w|·R·(r̂(max θ) − r̂(min θ)) × â with ê₁ = −x, ê₂ = â × ê₁ = +z.
            let (lo, hi) = (from.min(to), from.max(to));
            let rhat = |th: f64| [-f64::cos(th), 0.0, f64::sin(th)];
            let expected = mul(cross(sub(rhat(hi), rhat(lo)), [0.0, 1.0, 0.0]), 4.0 * r);
            assert_points_close(vector_area(&tris), expected, 1e-12);
        }
    }

    #[test]
    fn cylinder_patch_reference_along_the_axis_still_gives_a_circle() {
        let tris = cylinder_patch(
            [0.0; 3],
            [0.0, 0.0, 1.0],
            2.0,
            0.0,
            1.0,
            [0.0, 0.0, 5.0],
            1.0,
            4,
            1,
        );
        for p in tris.iter().flatten() {
            assert!((p[0].hypot(p[1]) - 2.0).abs() < 1e-15);
        }
    }

    #[test]
    fn hemisphere_shell_rim_in_plane_and_projection_exact() {
        let c = [0.5, -1.0, 2.0];
        let r = 2.0;
        let tris = hemisphere_shell(c, [0.0, 0.0, 1.0], r, 24, 6);
        assert_eq!(tris.len(), 24 * 11);
        let mut rim = 0;
        for p in tris.iter().flatten() {
            assert!((norm(sub(*p, c)) - r).abs() < 1e-14 * r);
            assert!(p[2] >= c[2]);
            rim += usize::from(p[2] == c[2]);
        }
        assert!(rim > 0, "the rim lies exactly in z = centre.z");
        // Projection on the rim plane = the inscribed rim polygon (closed form ½nR²sin(2π/n)).
        let projected = vector_area(&tris)[2];
        assert!(close(projected, polygon_area(r, 24), 1e-13));
        // Converges to the curved area 2πR².
        let fine = hemisphere_shell(c, [0.0, 0.0, 1.0], r, 256, 64);
        assert!(close(area(&fine), TAU * r * r, 1e-3));
        // Normals point away from the centre.
        for t in &tris {
            let m = mul(add(add(t[0], t[1]), t[2]), 1.0 / 3.0);
            assert!(dot(facet_normal(t), sub(m, c)) > 0.0);
        }
    }

    #[test]
    fn box_solid_is_closed_with_exact_area_and_volume() {
        for n in [1, 2, 3, 5] {
            let tris = box_solid([-1.0, 0.5, 2.0], [2.0, 2.5, 2.75], n);
            assert_eq!(tris.len(), 12 * n * n);
            assert_closed(&tris);
            assert_eq!(euler_characteristic(&tris), 2);
            // Closed form: a = 3, b = 2, c = 0.75; A = 2(ab + bc + ca) = 19.5, V = abc = 4.5.
            assert!(close(area(&tris), 19.5, 1e-14), "{}", area(&tris));
            assert!(
                close(signed_volume(&tris), 4.5, 1e-14),
                "{}",
                signed_volume(&tris)
            );
            assert_points_close(vector_area(&tris), [0.0; 3], 1e-13);
        }
        // Swapped corners give the same outward box.
        let swapped = box_solid([2.0, 2.5, 2.75], [-1.0, 0.5, 2.0], 2);
        assert!(close(signed_volume(&swapped), 4.5, 1e-14));
    }

    #[test]
    fn rectangular_tube_is_one_closed_shell_of_genus_one() {
        for n in [1, 4] {
            let tris = rectangular_tube(
                0.0,
                6.0,
                [-1.2, 0.0],
                [1.2, 2.0],
                [-1.0, 0.2],
                [1.0, 1.8],
                n,
            );
            assert_eq!(tris.len(), 32 + 32 * n);
            assert_closed(&tris);
            // A torus-like surface: V − E + F = 0.
            assert_eq!(euler_characteristic(&tris), 0);
            // Closed form: (2.4·2.0 − 2.0·1.6)·6 = 9.6.
            assert!(
                close(signed_volume(&tris), 9.6, 1e-14),
                "{}",
                signed_volume(&tris)
            );
            // Closed form: ends 2·1.6 + outer 2(2.4 + 2.0)·6 + bore 2(2.0 + 1.6)·6 = 99.2.
            assert!(close(area(&tris), 99.2, 1e-14), "{}", area(&tris));
        }
    }

    #[test]
    fn rectangular_tube_bore_faces_point_into_the_bore() {
        let tris = rectangular_tube(
            6.0,
            0.0,
            [-1.2, 0.0],
            [1.2, 2.0],
            [-1.0, 0.2],
            [1.0, 1.8],
            2,
        );
        for t in &tris {
            let m = mul(add(add(t[0], t[1]), t[2]), 1.0 / 3.0);
            let in_bore_wall =
                m[1].abs() <= 1.0 && m[2] >= 0.2 && m[2] <= 1.8 && m[0] > 0.0 && m[0] < 6.0;
            if in_bore_wall {
                // Towards the tube's axis (y = 0, z = 1).
                let to_axis = [0.0, -m[1], 1.0 - m[2]];
                assert!(dot(facet_normal(t), to_axis) > 0.0, "{t:?}");
            }
        }
    }

    #[test]
    fn icosahedron_volume_is_exact() {
        let r = 1.7;
        let tris = icosphere([0.3, 0.2, -0.1], r, 0);
        assert_eq!(tris.len(), 20);
        assert_closed(&tris);
        // Closed form: V = (5/12)(3 + √5)a³, circumradius R = (a/4)√(10 + 2√5).
        let s5 = 5.0_f64.sqrt();
        let a = 4.0 * r / (10.0 + 2.0 * s5).sqrt();
        let expected = 5.0 / 12.0 * (3.0 + s5) * a * a * a;
        let shifted = translate(&tris, [-0.3, -0.2, 0.1]);
        assert!(close(signed_volume(&shifted), expected, 1e-13));
    }

    #[test]
    fn icosphere_vertices_on_sphere_closed_and_converging() {
        let c = [10.0, -4.0, 2.5];
        let r = 3.0;
        let exact = 4.0 / 3.0 * PI * r * r * r;
        let mut last_error = f64::INFINITY;
        for s in 0..=4 {
            let tris = icosphere(c, r, s);
            assert_eq!(tris.len(), 20 * 4usize.pow(s));
            assert_closed(&tris);
            assert_eq!(euler_characteristic(&tris), 2);
            for p in tris.iter().flatten() {
                assert!((norm(sub(*p, c)) - r).abs() <= 1e-12 * r);
            }
            let v = signed_volume(&translate(&tris, mul(c, -1.0)));
            // Inscribed polyhedron: below the sphere; the error falls about 4× per level
            // (second order in the edge length).
            let error = (exact - v) / exact;
            assert!(
                error > 0.0 && error < last_error / 3.0,
                "level {s}: {error}"
            );
            last_error = error;
        }
        assert_eq!(
            icosphere(c, r, 40).len(),
            20 * 4usize.pow(ICOSPHERE_MAX_SUBDIVISIONS),
            "capped"
        );
    }

    #[test]
    fn uv_sphere_closed_outward_on_the_sphere() {
        let c = [1.0, 2.0, 3.0];
        let r = 2.0;
        for (n_lon, n_lat) in [(3, 2), (16, 8), (33, 17)] {
            let tris = uv_sphere(c, r, n_lon, n_lat);
            assert_eq!(tris.len(), 2 * n_lon * (n_lat - 1));
            assert_closed(&tris);
            assert_eq!(euler_characteristic(&tris), 2);
            for p in tris.iter().flatten() {
                assert!((norm(sub(*p, c)) - r).abs() <= 1e-14 * r);
            }
            for t in &tris {
                let m = mul(add(add(t[0], t[1]), t[2]), 1.0 / 3.0);
                assert!(dot(facet_normal(t), sub(m, c)) > 0.0);
            }
        }
        let fine = translate(&uv_sphere(c, r, 128, 64), mul(c, -1.0));
        let exact = 4.0 / 3.0 * PI * r * r * r;
        assert!(signed_volume(&fine) < exact && close(signed_volume(&fine), exact, 2e-3));
    }

    #[test]
    fn torus_count_closedness_and_exact_polyhedron_volume() {
        let (big, small) = (3.0, 0.75);
        for (nu, nv) in [(3, 3), (12, 8), (40, 24)] {
            let tris = torus([0.0, 0.0, 0.0], big, small, nu, nv);
            assert_eq!(tris.len(), 2 * nu * nv);
            assert_closed(&tris);
            assert_eq!(euler_characteristic(&tris), 0);
            for p in tris.iter().flatten() {
                let rho = p[0].hypot(p[1]);
                assert!(((rho - big).hypot(p[2]) - small).abs() < 1e-14 * big);
            }
            // Closed form for the faceted torus: each sector is the ruled solid between two
            // copies of the inscribed nv-gon, whose Jacobian is ρ·sin(2π/nu), so
            // V = nu·sin(2π/nu)·R·(½·nv·r²·sin(2π/nv)) (Pappus-like, polygon centroid at ρ = R).
            let expected = nu as f64 * (TAU / nu as f64).sin() * big * polygon_area(small, nv);
            assert!(close(signed_volume(&tris), expected, 1e-13), "{nu}×{nv}");
        }
        // Smooth closed form: V = 2π²Rr².
        let fine = torus([0.0; 3], big, small, 200, 100);
        assert!(close(
            signed_volume(&fine),
            2.0 * PI * PI * big * small * small,
            1e-3
        ));
    }

    #[test]
    fn perturb_is_deterministic_bounded_and_keeps_closedness() {
        let solids = [
            box_solid([0.0; 3], [1.0, 2.0, 3.0], 3),
            icosphere([0.0; 3], 1.0, 2),
            torus([1.0, 0.0, 0.0], 2.0, 0.5, 10, 6),
            rectangular_tube(
                0.0,
                6.0,
                [-1.2, 0.0],
                [1.2, 2.0],
                [-1.0, 0.2],
                [1.0, 1.8],
                3,
            ),
        ];
        for tris in &solids {
            let a = perturb(tris, 1e-3, 7);
            assert_closed(&a);
            assert_eq!(a, perturb(tris, 1e-3, 7), "same seed, same output");
            assert_ne!(a, perturb(tris, 1e-3, 8), "another seed moves differently");
            let mut moved = 0;
            for (t, u) in tris.iter().zip(&a) {
                for (p, q) in t.iter().zip(u) {
                    for k in 0..3 {
                        assert!((p[k] - q[k]).abs() <= 1e-3);
                    }
                    moved += usize::from(p != q);
                }
            }
            assert_eq!(moved, 3 * tris.len(), "every vertex moves");
        }
        // Negative and positive zero are one position and move alike.
        let t = [[[0.0, -0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]];
        let u = [[[0.0, 0.0, 1.0], [1.0, -0.0, 0.0], [-0.0, 1.0, 0.0]]];
        assert_eq!(perturb(&t, 0.1, 3), perturb(&u, 0.1, 3));
    }

    #[test]
    fn transforms_keep_the_geometry() {
        let tris = box_solid([0.0; 3], [1.0, 2.0, 4.0], 2);
        let v = signed_volume(&tris);
        let a = area(&tris);

        let shifted = translate(&tris, [100.0, -50.0, 3.0]);
        assert_closed(&shifted);
        assert!(close(signed_volume(&shifted), v, 1e-12));

        let turned = rotate_about_z(&tris, 0.7);
        assert!(close(signed_volume(&turned), v, 1e-14));
        assert!(close(area(&turned), a, 1e-14));
        let quarter = rotate_about_z(
            &[[[1.0, 0.0, 2.0], [0.0, 1.0, 2.0], [0.0, 0.0, 2.0]]],
            PI / 2.0,
        );
        assert_points_close(quarter[0][0], [0.0, 1.0, 2.0], 1e-15);
        assert_points_close(quarter[0][1], [-1.0, 0.0, 2.0], 1e-15);

        // Scaling by 2 is exact in binary floating point: V × 8, A × 4.
        let bigger = scale(&tris, 2.0);
        assert_eq!(signed_volume(&bigger), 8.0 * v);
        assert_eq!(area(&bigger), 4.0 * a);

        let reversed = reverse_winding(&tris);
        assert_closed(&reversed);
        assert_eq!(signed_volume(&reversed), -v);
        assert_eq!(reverse_winding(&reversed), tris);

        let split = split_each(&tris);
        assert_eq!(split.len(), 4 * tris.len());
        assert_closed(&split);
        assert!(close(signed_volume(&split), v, 1e-14));
        assert!(close(area(&split), a, 1e-14));
        for (t, quad) in tris.iter().zip(split.chunks(4)) {
            for s in quad {
                assert_points_close(facet_normal(s), facet_normal(t), 1e-15);
            }
        }
        let sphere = split_each(&icosphere([0.0; 3], 1.0, 1));
        assert_closed(&sphere);
    }

    #[test]
    fn unit_circle_is_exact_on_quarter_turns() {
        assert_eq!(unit_circle(0, 8), (1.0, 0.0));
        assert_eq!(unit_circle(2, 8), (0.0, 1.0));
        assert_eq!(unit_circle(4, 8), (-1.0, 0.0));
        assert_eq!(unit_circle(6, 8), (0.0, -1.0));
        assert_eq!(unit_circle(8, 8), (1.0, 0.0));
        let (c, s) = unit_circle(1, 8);
        assert!(close(c, 0.5_f64.sqrt(), 1e-15) && close(s, 0.5_f64.sqrt(), 1e-15));
        assert_eq!(unit_circle(3, 0), (1.0, 0.0), "zero steps count as one");
    }

    #[test]
    fn basis_is_right_handed_and_natural_on_axes() {
        let (u, v, w) = basis([0.0, 0.0, 1.0]);
        assert_eq!(
            (u, v, w),
            ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0])
        );
        for n in [
            [0.3, -0.5, 0.8],
            [1.0, 0.0, 0.0],
            [0.0, -2.0, 0.0],
            [1.0, 1.0, 1.0],
        ] {
            let (u, v, w) = basis(n);
            assert_points_close(cross(u, v), w, 1e-15);
            assert!(dot(u, w).abs() < 1e-15 && (norm(u) - 1.0).abs() < 1e-15);
        }
    }
}
