//! One case from profiles to result fields: the liquids of a case as profiles in the local
//! frame, the integration of every part, and the sums mapped back to mesh axes as the
//! loads of the whole mesh and of each part (moments about the stated point and axes,
//! line of action, centres).
//!
//! The integration itself is the core's ([`hydro::integrate`]); sweeps and the flotation
//! check are built on these loads elsewhere.

use super::wet::Wet;
use super::{AxisMoment, ComputeError, LineOut, LiquidEcho, Loads, PartResult, Prepared};
use crate::hydro::{self, LineOfAction, Liquid, PartAccum, PartInput, Profile, Vec3};
use crate::mesh::Part;
use crate::sidecar::Sidecar;

pub(super) fn echo(name: &str, l: &Liquid) -> LiquidEcho {
    LiquidEcho {
        name: name.to_owned(),
        level: l.level_m,
        surface_pressure: l.surface_pressure_pa,
        layers: l
            .layers
            .iter()
            .map(|y| (y.density_kg_m3, y.down_to_m))
            .collect(),
    }
}

/// The liquids of a case as profiles in the local frame (elevations relative to the
/// local origin; levels are given in metres along the up axis, as is the frame's `z`).
pub(super) fn profiles_of(
    sidecar: &Sidecar,
    case: &str,
    liquids: &[Liquid],
    origin_z: f64,
) -> Result<Vec<Profile>, ComputeError> {
    liquids
        .iter()
        .zip(&sidecar.liquids)
        .map(|(l, n)| {
            Profile::new(l, sidecar.gravity_m_s2)
                .map(|p| p.shifted(origin_z))
                .map_err(|source| ComputeError::Liquid {
                    case: case.to_owned(),
                    liquid: n.name.clone(),
                    source,
                })
        })
        .collect()
}

pub(super) fn run<T: hydro::Tris + ?Sized>(
    tris: &T,
    parts: &[Part],
    wet: &Wet,
    profiles: &[Profile],
) -> Vec<PartAccum> {
    integration(tris, parts, wet, profiles).run()
}

/// [`run`]'s work, to be shared out by the caller (see [`hydro::Integration`]).
pub(super) fn integration<'a, T: hydro::Tris + ?Sized>(
    tris: &'a T,
    parts: &[Part],
    wet: &'a Wet,
    profiles: &'a [Profile],
) -> hydro::Integration<'a, T> {
    let closed = wet.closed;
    let inputs: Vec<PartInput<'_>> = parts
        .iter()
        .zip(&wet.part_setup)
        .map(|(p, (liquid, _))| {
            let profile = liquid.map(|i| &profiles[i]);
            // Volumes are measured below the part's own liquid, or the first liquid's.
            let level = profile.unwrap_or(&profiles[0]).level();
            PartInput {
                facets: p.facets.clone(),
                profile,
                volume_level: closed.then_some(level),
            }
        })
        .collect();
    hydro::Integration::new(tris, &inputs, &wet.wetting, &wet.vol_sign)
}

fn total_of(accs: &[PartAccum]) -> PartAccum {
    accs.iter().fold(PartAccum::default(), |a, b| a.merge(b))
}

/// The loads of the whole mesh and of each part; `up` is the free surface's unit normal
/// (internal frame), along which `vertical_force` is taken.
pub(super) fn assemble(prep: &Prepared, accs: &[PartAccum], up: Vec3) -> (Loads, Vec<PartResult>) {
    let total = total_of(accs);
    let loads = loads_of(prep, &total, prep.wet.closed, prep.mesh_plane.as_ref(), up);
    let parts = prep
        .parts
        .iter()
        .enumerate()
        .map(|(i, p)| PartResult {
            name: p.name.clone(),
            loads: loads_of(
                prep,
                &accs[i],
                prep.part_closed[i],
                prep.part_plane[i].as_ref(),
                up,
            ),
        })
        .collect();
    (loads, parts)
}

/// Turns local sums into the result fields, in mesh axes. `up` is the free surface's unit
/// normal (internal frame): `vertical_force` is the force along it and `horizontal_force`
/// the rest (`+z` unless the body floats).
pub(super) fn loads_of(
    prep: &Prepared,
    acc: &PartAccum,
    volumes: bool,
    plane: Option<&hydro::Plane>,
    up: Vec3,
) -> Loads {
    let c = prep.centre;
    let o = prep.moment_about;
    let along = acc.force.dot(&up);
    let across = acc.force - along * up;
    // Moment about the requested point: M_O = M_c + (c − O) × F.
    let m_o = acc.moment + (c - o).cross(&acc.force);
    let line = hydro::line_of_action(acc.force, m_o, o, acc.abs_force);
    let out = |v: Vec3| prep.frame.vector_out(v);
    let centre_of_pressure = match (plane, &line) {
        (Some(pl), Some(l)) => {
            let shifted = hydro::Plane {
                point: pl.point + c,
                normal: pl.normal,
            };
            shifted.meet(l).map(out)
        }
        _ => None,
    };
    let (submerged_volume, centre_of_buoyancy) = if volumes {
        let v = acc.volume;
        let cob = (v.abs() > 0.0).then(|| out(c + acc.volume_moment / v));
        (Some(v), cob)
    } else {
        (None, None)
    };
    let axis_moments = prep
        .axes
        .iter()
        .map(|(name, p, d)| {
            let m_p = m_o + (o - p).cross(&acc.force);
            let miss = line.as_ref().map(|l| line_distance(l, *p, *d));
            (
                name.clone(),
                AxisMoment {
                    moment: m_p.dot(d),
                    miss_distance: miss,
                },
            )
        })
        .collect();
    Loads {
        force: out(acc.force),
        moment: out(m_o),
        moment_about: out(o),
        wetted_area: acc.wetted_area,
        uplift: acc.uplift,
        downthrust: acc.downthrust,
        submerged_volume,
        centre_of_buoyancy,
        line_of_action: line.map(|l| LineOut {
            point: out(l.point),
            direction: out(l.direction),
            couple: l.couple,
        }),
        centre_of_pressure,
        // `hypot`: no overflow while the components themselves are finite. With `up` = +z
        // the across part is (Fx, Fy, 0) exactly, so this is hypot(Fx, Fy).
        horizontal_force: across.x.hypot(across.y).hypot(across.z),
        vertical_force: along,
        max_pressure: if acc.max_pressure.is_finite() {
            acc.max_pressure
        } else {
            0.0
        },
        axis_moments,
    }
}

/// Shortest distance between the line of action and the axis through `p` along `d`.
fn line_distance(l: &LineOfAction, p: Vec3, d: Vec3) -> f64 {
    let w = p - l.point;
    let n = l.direction.cross(&d);
    let nn = n.norm();
    if nn < 1e-12 {
        w.cross(&l.direction).norm()
    } else {
        (w.dot(&n) / nn).abs()
    }
}
