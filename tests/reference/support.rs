//! Shared helpers of the reference checks: building a `Mesh` and a `Sidecar` in memory,
//! running one computation, small vector arithmetic, and comparisons that print what they
//! compare.
//!
//! Also holds the few independent calculations several modules use (divergence-theorem
//! volumes, the second moment of a regular polygon, an exact integrator for the straight
//! strips of a cylindrical patch). They are written here from their formulas and share no
//! code with the library, so agreement with it means something.
//!
//! Every comparison prints one line `REF <label> err=<e> tol=<t>` before asserting, so
//! `cargo test --test reference -- --nocapture` lists the worst error of every check.

use std::path::Path;

use shapes::Triangle;
use wetload::compute::{self, ComputeError, Loads, MeshResult};
use wetload::mesh::{Format, Mesh};
use wetload::sidecar::parse_sidecar;

/// Standard gravity, m/s² (exact by definition, 3rd CGPM 1901).
pub const G: f64 = 9.80665;

pub type V3 = [f64; 3];

pub fn add(a: V3, b: V3) -> V3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

pub fn sub(a: V3, b: V3) -> V3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

pub fn mul(a: V3, s: f64) -> V3 {
    [a[0] * s, a[1] * s, a[2] * s]
}

pub fn dot(a: V3, b: V3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

pub fn cross(a: V3, b: V3) -> V3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

pub fn norm(a: V3) -> f64 {
    dot(a, a).sqrt()
}

/// A mesh of one part named `body`, as a binary STL would give it.
pub fn single(tris: Vec<Triangle>) -> Mesh {
    parts(vec![("body", tris)])
}

/// A mesh of several named parts, in order (as an ASCII STL with several solids).
pub fn parts(list: Vec<(&str, Vec<Triangle>)>) -> Mesh {
    Mesh::from_parts(list, Format::StlAscii)
}

/// Computes `mesh` with the sidecar text `json`; panics with the error if either is refused.
pub fn run(mesh: &Mesh, json: &str) -> MeshResult {
    try_run(mesh, json).unwrap_or_else(|e| panic!("computation refused: {e}\nsidecar: {json}"))
}

pub fn try_run(mesh: &Mesh, json: &str) -> Result<MeshResult, ComputeError> {
    let sidecar = parse_sidecar(Path::new("reference.json"), json)
        .unwrap_or_else(|e| panic!("sidecar refused: {e}\n{json}"));
    compute::compute("reference.stl", mesh, &sidecar)
}

/// The loads of the first (or only) case.
pub fn loads(r: &MeshResult) -> &Loads {
    &r.cases[0].loads
}

/// The loads of the case named `name`.
pub fn case<'a>(r: &'a MeshResult, name: &str) -> &'a Loads {
    &r.cases
        .iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no case {name}"))
        .loads
}

/// Asserts `|got − want| ≤ tol·|want|` and prints the relative error.
#[track_caller]
pub fn rel(label: &str, got: f64, want: f64, tol: f64) {
    let err = if want == 0.0 {
        got.abs()
    } else {
        ((got - want) / want).abs()
    };
    println!(
        "REF {label} err={err:.3e} tol={tol:.1e} (relative; got {got:.10e}, want {want:.10e})"
    );
    assert!(
        err <= tol,
        "{label}: got {got:.12e}, want {want:.12e}, relative error {err:.3e} > {tol:.1e}"
    );
}

/// Asserts `|got − want| ≤ tol` and prints the absolute error.
#[track_caller]
pub fn abs(label: &str, got: f64, want: f64, tol: f64) {
    let err = (got - want).abs();
    println!(
        "REF {label} err={err:.3e} tol={tol:.1e} (absolute; got {got:.10e}, want {want:.10e})"
    );
    assert!(
        err <= tol,
        "{label}: got {got:.12e}, want {want:.12e}, error {err:.3e} > {tol:.1e}"
    );
}

/// Asserts `|got − want| ≤ tol` for a vector (Euclidean distance).
#[track_caller]
pub fn abs3(label: &str, got: V3, want: V3, tol: f64) {
    let err = norm(sub(got, want));
    println!(
        "REF {label} err={err:.3e} tol={tol:.1e} (absolute, vector; got {got:?}, want {want:?})"
    );
    assert!(
        err <= tol,
        "{label}: got {got:?}, want {want:?}, distance {err:.3e} > {tol:.1e}"
    );
}

/// Asserts `value ≤ bound` (a quantity that must vanish or stay inside a bound).
#[track_caller]
pub fn at_most(label: &str, value: f64, bound: f64) {
    println!("REF {label} err={value:.3e} tol={bound:.1e} (bound)");
    assert!(value <= bound, "{label}: {value:.6e} exceeds {bound:.6e}");
}

/// Asserts that every entry of `seq` is smaller than the one before it by at least the
/// factor `min_ratio` (≥ 1), and prints the ratios.
#[track_caller]
pub fn decreasing(label: &str, seq: &[f64], min_ratio: f64) {
    let ratios: Vec<f64> = seq.windows(2).map(|w| w[0] / w[1]).collect();
    let shown: Vec<String> = seq.iter().map(|x| format!("{x:.3e}")).collect();
    println!(
        "REF {label} sequence=[{}] ratios={ratios:.2?} (each ≥ {min_ratio})",
        shown.join(", ")
    );
    for (i, r) in ratios.iter().enumerate() {
        assert!(
            *r >= min_ratio,
            "{label}: step {i} → {}: {:.3e} → {:.3e}, ratio {r:.3} < {min_ratio}",
            i + 1,
            seq[i],
            seq[i + 1]
        );
    }
}

/// Signed volume and volume centroid of a closed triangle surface by the divergence
/// theorem: `V = Σ (a · (b × c)) / 6` over tetrahedra from `origin`, centroid
/// `Σ V_t (o + a + b + c)/4 / V`. Positive for outward winding.
pub fn volume_and_centroid(tris: &[Triangle], origin: V3) -> (f64, V3) {
    let mut v = 0.0;
    let mut m = [0.0; 3];
    for t in tris {
        let (a, b, c) = (sub(t[0], origin), sub(t[1], origin), sub(t[2], origin));
        let vt = dot(a, cross(b, c)) / 6.0;
        v += vt;
        m = add(m, mul(add(add(a, b), c), vt / 4.0));
    }
    (v, add(origin, mul(m, 1.0 / v)))
}

/// Total area of a triangle list.
pub fn area(tris: &[Triangle]) -> f64 {
    tris.iter()
        .map(|t| 0.5 * norm(cross(sub(t[1], t[0]), sub(t[2], t[0]))))
        .sum()
}

/// Second moment of area of the regular `n`-gon of circumradius `r` about any axis in its
/// plane through its centre: `I = n r⁴ sin θ (2 + cos θ) / 24`, θ = 2π/n.
///
/// Derivation: the polar moment of the triangle (centre, P, Q) about the centre is
/// `(A/6)(|P|² + |Q|² + P·Q)` with `A = ½ r² sin θ`; n of them give
/// `J = n r⁴ sin θ (2 + cos θ) / 12`, and a regular polygon (n ≥ 3) has an isotropic
/// second-moment tensor, so `I = J/2`. Tends to `π r⁴ / 4` as n grows.
pub fn polygon_second_moment(r: f64, n: usize) -> f64 {
    let t = std::f64::consts::TAU / n as f64;
    n as f64 * r.powi(4) * t.sin() * (2.0 + t.cos()) / 24.0
}

/// Area of the regular `n`-gon of circumradius `r`: `½ n r² sin(2π/n)`.
pub fn polygon_area(r: f64, n: usize) -> f64 {
    0.5 * n as f64 * r * r * (std::f64::consts::TAU / n as f64).sin()
}

/// Loads per unit width of a liquid on a polyline in the vertical `(x, z)` plane, the
/// cross-section of a surface swept straight along `y` (a faceted cylinder patch): each
/// segment is a flat strip, so this is the exact value for the polyhedral surface.
#[derive(Clone, Copy, Debug)]
pub struct Section {
    pub fx: f64,
    pub fz: f64,
    /// Moment about the axis through `about` along `+y` (right-hand rule), per unit width.
    pub my: f64,
    /// Wetted length (at or below the level).
    pub wetted: f64,
}

/// Exact `−∫ p n ds` and its moment over the polyline `pts` (`(x, z)` pairs), with
/// `p = ρ g (level − z)` below the level and 0 above; `n` is the unit normal of each
/// segment pointing into the liquid: away from the point `centre` when `convex` (liquid on
/// the convex side of an arc about `centre`), towards it otherwise.
///
/// On a segment (clipped at the level) p is linear, so `∫ p ds = L (p_a + p_b)/2` and
/// `∫ p r ds = L (p_a (2a + b) + p_b (a + 2b)) / 6` are exact.
pub fn section(
    pts: &[(f64, f64)],
    centre: (f64, f64),
    convex: bool,
    about: (f64, f64),
    level: f64,
    rho_g: f64,
) -> Section {
    let mut s = Section {
        fx: 0.0,
        fz: 0.0,
        my: 0.0,
        wetted: 0.0,
    };
    for w in pts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let (dx, dz) = (b.0 - a.0, b.1 - a.1);
        let len = dx.hypot(dz);
        let (mut nx, mut nz) = (dz / len, -dx / len);
        let mid = ((a.0 + b.0) / 2.0 - centre.0, (a.1 + b.1) / 2.0 - centre.1);
        if (nx * mid.0 + nz * mid.1 < 0.0) == convex {
            (nx, nz) = (-nx, -nz);
        }
        // Clip to z ≤ level.
        let (a, b) = match (a.1 <= level, b.1 <= level) {
            (false, false) => continue,
            (true, true) => (a, b),
            (ina, _) => {
                let t = (level - a.1) / (b.1 - a.1);
                let cut = (a.0 + t * dx, level);
                if ina { (a, cut) } else { (cut, b) }
            }
        };
        let l = (b.0 - a.0).hypot(b.1 - a.1);
        let (pa, pb) = (rho_g * (level - a.1), rho_g * (level - b.1));
        let ip = l * (pa + pb) / 2.0;
        let ra = (a.0 - about.0, a.1 - about.1);
        let rb = (b.0 - about.0, b.1 - about.1);
        let ipr = (
            l * (pa * (2.0 * ra.0 + rb.0) + pb * (ra.0 + 2.0 * rb.0)) / 6.0,
            l * (pa * (2.0 * ra.1 + rb.1) + pb * (ra.1 + 2.0 * rb.1)) / 6.0,
        );
        s.fx -= ip * nx;
        s.fz -= ip * nz;
        // (r × F)_y = r_z F_x − r_x F_z with dF = −p n ds.
        s.my += -ipr.1 * nx + ipr.0 * nz;
        s.wetted += l;
    }
    s
}

/// The arc vertices `(x, z)` of a circle of radius `r` about `(cx, cz)` at the angles
/// `from + (to − from)·i/n` (i = 0..=n), angle measured from `−x` towards `+z`: the
/// cross-section of the cylinder patches the modules build with axis `+y` and reference
/// direction `−x`.
pub fn arc_points(cx: f64, cz: f64, r: f64, from: f64, to: f64, n: usize) -> Vec<(f64, f64)> {
    (0..=n)
        .map(|i| {
            let t = if i == 0 {
                from
            } else if i == n {
                to
            } else {
                (from * (n - i) as f64 + to * i as f64) / n as f64
            };
            (cx - r * t.cos(), cz + r * t.sin())
        })
        .collect()
}

/// Area of the circular segment cut off by a chord subtending `delta`: `r²(δ − sin δ)/2`.
pub fn segment_area(r: f64, delta: f64) -> f64 {
    r * r * (delta - delta.sin()) / 2.0
}

/// Every vertex rotated by `angle` about the `x` axis through the origin.
pub fn rotate_about_x(tris: &[Triangle], angle: f64) -> Vec<Triangle> {
    let (s, c) = angle.sin_cos();
    tris.iter()
        .map(|t| t.map(|p| [p[0], c * p[1] - s * p[2], s * p[1] + c * p[2]]))
        .collect()
}
