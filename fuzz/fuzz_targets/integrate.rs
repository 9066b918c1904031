//! The integrator on arbitrary finite triangles and liquids.
//!
//! Inputs are bounded to what a mesh and a sidecar can bring after unit scaling
//! (coordinates and elevations within ±1e7 m, densities up to 1e5 kg/m³, gravity up to
//! 1e3 m/s², surface pressure within ±1e9 Pa); anything else is skipped, not clamped.
//! Checks, per facet:
//! * no panic, and every result finite;
//! * clipping conserves area: the wetted area the integrator reports plus the area of the
//!   pieces above the free surface equals the facet's area, to round-off;
//! * the force is no larger than the largest |pressure| on the facet times its area.
#![no_main]

use libfuzzer_sys::arbitrary::{self, Arbitrary};
use libfuzzer_sys::fuzz_target;
use wetload::hydro::{
    Layer, Liquid, Profile, Vec3, Wetting, facet_loads, part_planes, slab_pieces,
};

#[derive(Arbitrary, Debug)]
struct Input {
    tri: [[f64; 3]; 3],
    level: f64,
    surface_pressure: f64,
    gravity: f64,
    /// (density, down_to) of the layers; the down_to values are sorted top to bottom and
    /// the last layer reaches down without limit.
    layers: Vec<(f64, f64)>,
    volume_level: Option<f64>,
    side: u8,
}

const MAX_LENGTH: f64 = 1e7;

fn bounded(x: f64, max: f64) -> Option<f64> {
    (x.is_finite() && x.abs() <= max).then_some(x)
}

/// Euclidean length scaled by the largest component, so squares of tiny components do not
/// underflow (`norm()` squares them, and loses everything below about 1e-154).
fn length(v: &Vec3) -> f64 {
    let s = v.amax();
    if s == 0.0 { 0.0 } else { s * (v / s).norm() }
}

fn area(v: &[Vec3]) -> f64 {
    let mut a = Vec3::zeros();
    for i in 1..v.len().saturating_sub(1) {
        a += (v[i] - v[0]).cross(&(v[i + 1] - v[0]));
    }
    0.5 * length(&a)
}

/// The integrator's areas are plain `norm()`s of cross products: an absolute error of
/// about sqrt(f64::MIN_POSITIVE) ≈ 1.5e-154 m² from underflow, far below any real facet.
const AREA_FLOOR: f64 = 1e-150;

fuzz_target!(|input: Input| {
    let _ = run(input);
});

fn run(input: Input) -> Option<()> {
    let mut t = [Vec3::zeros(); 3];
    for (v, raw) in t.iter_mut().zip(input.tri) {
        *v = Vec3::new(
            bounded(raw[0], MAX_LENGTH)?,
            bounded(raw[1], MAX_LENGTH)?,
            bounded(raw[2], MAX_LENGTH)?,
        );
    }
    let level = bounded(input.level, MAX_LENGTH)?;
    let surface_pressure = bounded(input.surface_pressure, 1e9)?;
    let gravity = bounded(input.gravity, 1e3).filter(|g| *g > 0.0)?;
    let mut downs: Vec<f64> = Vec::new();
    let mut densities: Vec<f64> = Vec::new();
    for &(rho, down) in input.layers.iter().take(8) {
        densities.push(bounded(rho, 1e5).filter(|r| *r > 0.0)?);
        downs.push(bounded(down, MAX_LENGTH)?);
    }
    if densities.is_empty() {
        densities.push(1000.0);
    }
    downs.sort_by(|a, b| b.total_cmp(a));
    downs.dedup();
    let n = densities.len().min(downs.len() + 1);
    let layers: Vec<Layer> = (0..n)
        .map(|i| Layer {
            density_kg_m3: densities[i],
            down_to_m: (i + 1 < n).then(|| downs[i]),
        })
        .collect();
    let liquid = Liquid {
        level_m: level,
        surface_pressure_pa: surface_pressure,
        layers,
    };
    let profile = Profile::new(&liquid, gravity).ok()?;
    let volume_level = match input.volume_level {
        Some(l) => Some(bounded(l, MAX_LENGTH)?),
        None => None,
    };
    let (wetting, vol_sign) = match input.side % 3 {
        0 => (Wetting::Front, 1),
        1 => (Wetting::Back, -1),
        _ => (Wetting::Front, 0),
    };
    let planes = part_planes(Some(&profile), volume_level);
    let f = facet_loads(&t, &planes, Some(&profile), wetting, volume_level, vol_sign);

    assert!(f.force.iter().all(|c| c.is_finite()), "{f:?}");
    assert!(f.moment.iter().all(|c| c.is_finite()), "{f:?}");
    assert!(f.wetted_area.is_finite() && f.wetted_area >= 0.0, "{f:?}");
    assert!(f.max_pressure.is_finite(), "{f:?}");
    assert!(f.volume.is_finite(), "{f:?}");
    assert!(f.volume_moment.iter().all(|c| c.is_finite()), "{f:?}");

    // Area: wetted (from the integrator) + dry (pieces above the level) = facet area.
    let whole = area(&t);
    let mut dry = 0.0;
    let mut pieces = 0.0;
    slab_pieces(&t, &planes, |piece, _| {
        let v = piece.vertices();
        let a = area(v);
        pieces += a;
        let zc = v.iter().map(|p| p.z).sum::<f64>() / v.len() as f64;
        if zc > profile.level() {
            dry += a;
        }
    });
    let edge = length(&(t[1] - t[0]))
        .max(length(&(t[2] - t[1])))
        .max(length(&(t[0] - t[2])));
    let reach = t.iter().map(|v| v.amax()).fold(0.0, f64::max);
    let tol = 64.0 * f64::EPSILON * (edge * edge + edge * reach) + AREA_FLOOR;
    assert!(
        (pieces - whole).abs() <= tol,
        "pieces {pieces} vs facet {whole} (tolerance {tol})"
    );
    assert!(
        (f.wetted_area + dry - whole).abs() <= tol,
        "wetted {} + dry {dry} vs facet {whole} (tolerance {tol})",
        f.wetted_area
    );

    // |F| ≤ max |p| · A: pressure is linear on each piece, so its extremes lie at the
    // facet's vertices or where a plane cuts it.
    let (lo, hi) = t
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v.z), hi.max(v.z))
        });
    let p_max = t
        .iter()
        .map(|v| v.z)
        .chain(planes.iter().copied().filter(|z| (lo..=hi).contains(z)))
        .map(|z| profile.pressure(z).abs())
        .fold(0.0, f64::max);
    let bound = p_max * (whole + tol);
    assert!(
        // 1e-300 N absolute: subnormal results carry few significant bits.
        length(&f.force) <= bound * (1.0 + 1e-9) + 1e-300,
        "|F| {} above max |p| · A = {bound}",
        length(&f.force)
    );
    Some(())
}
