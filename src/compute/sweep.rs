//! Level sweeps: the steps of a sweep in one case (the parts the swept liquid reaches go
//! through the core's sweep in one pass, the others keep the case's sums), and the
//! governing value of each headline quantity over the steps.
//!
//! The levels themselves come from the sidecar ([`crate::sidecar::Sweep::levels`]); the
//! sums per level are the core's ([`hydro::sweep`]).

use serde::Serialize;

use super::cases::loads_of;
use super::flotation::flotation_check;
use super::{ComputeError, Loads, Prepared, SweepStep};
use crate::hydro::{self, PartAccum, Tally, Vec3};
use crate::sidecar::{Case, Sidecar, Sweep};

/// The steps of a level sweep in one case: the parts the swept liquid does not reach
/// keep the case's sums (`accs`), the others go through [`hydro::sweep`] in one pass.
pub(super) fn sweep_steps(
    prep: &Prepared,
    sidecar: &Sidecar,
    case: &Case,
    sw: &Sweep,
    accs: &[PartAccum],
    tally: &Tally<'_>,
) -> Result<Vec<SweepStep>, ComputeError> {
    let levels = sw.levels();
    let loads = loads_at(prep, sidecar, case, sw, accs, &levels, tally)?;
    // A net uplift within round-off of the sweep's largest loads counts as none (at a level
    // through a body's base the sums cancel to a few ulps, which would give FS ≈ 1e16).
    let noise = uplift_noise(&loads);
    Ok(levels
        .iter()
        .zip(loads)
        .map(|(&level, l)| SweepStep {
            level,
            force: l.force,
            moment: l.moment,
            uplift: l.uplift,
            downthrust: l.downthrust,
            wetted_area: l.wetted_area,
            submerged_volume: l.submerged_volume,
            flotation_factor: sidecar
                .flotation
                .as_ref()
                .map(|f| flotation_check(f, &l, noise).factor),
            axis_moments: l.axis_moments,
        })
        .collect())
}

/// Round-off of a net uplift among these loads: 1e-12 of their largest uplift + downthrust.
fn uplift_noise(loads: &[Loads]) -> f64 {
    1e-12
        * loads
            .iter()
            .map(|l| l.uplift + l.downthrust)
            .fold(0.0, f64::max)
}

/// The case's loads with the swept liquid at each of `levels` (m): the parts it does not
/// reach keep the case's sums (`accs`), the others go through [`hydro::sweep`] in one pass.
fn loads_at(
    prep: &Prepared,
    sidecar: &Sidecar,
    case: &Case,
    sw: &Sweep,
    accs: &[PartAccum],
    levels: &[f64],
    tally: &Tally<'_>,
) -> Result<Vec<Loads>, ComputeError> {
    let closed = prep.wet.closed;
    let mut fixed = PartAccum::default();
    let mut parts = Vec::new();
    for (i, (p, (liquid, _))) in prep.parts.iter().zip(&prep.wet.part_setup).enumerate() {
        let wet = *liquid == Some(sw.liquid);
        // Volumes are measured below the part's own liquid, or the first one (see `run`).
        let volume = closed && liquid.unwrap_or(0) == sw.liquid;
        if wet || volume {
            parts.push(hydro::SweepPart {
                facets: p.facets.clone(),
                wet,
                volume,
            });
        } else {
            fixed = fixed.merge(&accs[i]);
        }
    }
    let swept = hydro::SweptLiquid {
        liquid: &case.liquids[sw.liquid],
        g_m_s2: sidecar.gravity_m_s2,
        origin_z: prep.centre.z,
    };
    let sums = hydro::sweep_with(
        &prep.tris,
        &parts,
        &prep.wet.wetting,
        &prep.wet.vol_sign,
        &swept,
        levels,
        tally,
    )
    .map_err(|source| ComputeError::Liquid {
        case: case.name.clone(),
        liquid: sidecar.liquids[sw.liquid].name.clone(),
        source,
    })?;
    Ok(sums
        .iter()
        .map(|acc| {
            loads_of(
                prep,
                &fixed.merge(acc),
                closed,
                prep.mesh_plane.as_ref(),
                Vec3::z(),
            )
        })
        .collect())
}

/// Where the factor of safety against flotation falls to the required one as the swept
/// level rises: found exactly between the first two steps that bracket it.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct FlotationLimit {
    /// m: the level at which the net uplift equals Σ resisting / required factor (to a
    /// relative 1e-12 of the bracket), or the sweep's first level when the factor is
    /// already below the requirement there.
    pub level: f64,
    /// The factor the level is solved for.
    pub required_factor: f64,
    /// The sweep's two levels around it (m); equal when the factor is short from the start.
    pub between: [f64; 2],
}

/// The level at which the factor of safety against flotation falls to the required one,
/// or `None` when it stays at or above it over the whole sweep (or there is no check).
///
/// The net uplift U(z) of the case is continuous in the level; between the first pair of
/// steps where FS = R / U goes from ≥ required (or no uplift) to < required, U(z) = R /
/// required is solved by bisection on exact integrations of the case at trial levels
/// (at most 80 halvings, to 1e-12 of the bracket).
pub(super) fn flotation_limit(
    prep: &Prepared,
    sidecar: &Sidecar,
    case: &Case,
    sw: &Sweep,
    accs: &[PartAccum],
    steps: &[SweepStep],
    tally: &Tally<'_>,
) -> Result<Option<FlotationLimit>, ComputeError> {
    let Some(f) = &sidecar.flotation else {
        return Ok(None);
    };
    let required = f.required_factor;
    let short = |s: &SweepStep| s.flotation_factor.flatten().is_some_and(|fs| fs < required);
    let Some(k) = steps.iter().position(short) else {
        return Ok(None);
    };
    if k == 0 {
        let z = steps[0].level;
        return Ok(Some(FlotationLimit {
            level: z,
            required_factor: required,
            between: [z, z],
        }));
    }
    let resisting: f64 = f.resisting.iter().map(|(_, v)| v).sum();
    // The net uplift at which FS equals the requirement.
    let target = resisting / required;
    let (mut lo, mut hi) = (steps[k - 1].level, steps[k].level);
    let width = hi - lo;
    const HALVINGS: u64 = 80;
    tally.begin(HALVINGS);
    for _ in 0..HALVINGS {
        if hi - lo <= 1e-12 * width.max(f64::MIN_POSITIVE) {
            break;
        }
        let mid = 0.5 * (lo + hi);
        let l = &loads_at(prep, sidecar, case, sw, accs, &[mid], &Tally::quiet())?[0];
        if l.vertical_force.max(0.0) > target {
            hi = mid;
        } else {
            lo = mid;
        }
        tally.add(1);
    }
    tally.finish();
    Ok(Some(FlotationLimit {
        level: 0.5 * (lo + hi),
        required_factor: required,
        between: [steps[k - 1].level, steps[k].level],
    }))
}

/// The largest magnitude of one quantity over a sweep, with its sign, and the level.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct Extreme {
    /// The value at that level (signed; its magnitude is the largest), SI.
    pub value: f64,
    /// m; the lowest level where the magnitude comes within a relative 1e-9 of the
    /// largest (values equal in exact arithmetic differ by round-off).
    pub level: f64,
}

/// The governing (largest-magnitude) value of each headline quantity over a sweep
/// (`sweep_governing` in the result; force components in mesh axes, N; moments N·m;
/// volume m³). `submerged_volume` is absent for an open mesh.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Governing {
    /// The liquid whose level the sweep steps.
    pub liquid: String,
    pub force_x: Extreme,
    pub force_y: Extreme,
    pub force_z: Extreme,
    pub force_magnitude: Extreme,
    pub uplift: Extreme,
    pub downthrust: Extreme,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub submerged_volume: Option<Extreme>,
    pub axis_moments: std::collections::BTreeMap<String, Extreme>,
    /// With a flotation check: the *lowest* factor of safety over the levels with a net
    /// uplift, and its level (null when no level has one; absent without a check).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flotation_factor: Option<Option<Extreme>>,
    /// With a flotation check: where the factor falls to the required one (null when it
    /// never does over the sweep; absent without a check).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flotation_limit: Option<Option<FlotationLimit>>,
}

/// The governing values of a sweep's steps; `extent_m` (the mesh's size) scales the
/// round-off of moments.
///
/// A quantity whose largest magnitude is round-off (at most 1e-12 of the largest
/// uplift + downthrust + |F| of the sweep, times `extent_m` for moments), such as the
/// horizontal force on a closed body, governs as 0 at the first level.
pub fn governing(liquid: &str, steps: &[SweepStep], extent_m: f64) -> Governing {
    let force_scale = steps
        .iter()
        .map(|s| s.uplift + s.downthrust + s.force.iter().map(|x| x.abs()).sum::<f64>())
        .fold(0.0, f64::max);
    let pick_above = |f: &dyn Fn(&SweepStep) -> f64, noise: f64| {
        let largest = steps.iter().map(|s| f(s).abs()).fold(0.0, f64::max);
        let first = steps.first().map_or(0.0, |s| s.level);
        if largest <= noise {
            return Extreme {
                value: 0.0,
                level: first,
            };
        }
        // Equal values (a plateau, as buoyancy once a body is under) differ by round-off:
        // the first level within 1e-9 of the largest governs, not the noisiest.
        steps
            .iter()
            .find(|s| f(s).abs() >= largest * (1.0 - 1e-9))
            .map_or(
                Extreme {
                    value: 0.0,
                    level: first,
                },
                |s| Extreme {
                    value: f(s),
                    level: s.level,
                },
            )
    };
    let pick = |f: &dyn Fn(&SweepStep) -> f64| pick_above(f, 1e-12 * force_scale);
    let pick_moment = |f: &dyn Fn(&SweepStep) -> f64| pick_above(f, 1e-12 * force_scale * extent_m);
    let axes = steps
        .first()
        .map(|s| s.axis_moments.keys().cloned().collect::<Vec<_>>())
        .unwrap_or_default();
    Governing {
        liquid: liquid.to_owned(),
        force_x: pick(&|s| s.force[0]),
        force_y: pick(&|s| s.force[1]),
        force_z: pick(&|s| s.force[2]),
        force_magnitude: pick(&|s| s.force.iter().map(|x| x * x).sum::<f64>().sqrt()),
        uplift: pick(&|s| s.uplift),
        downthrust: pick(&|s| s.downthrust),
        submerged_volume: steps
            .first()
            .and_then(|s| s.submerged_volume)
            .map(|_| pick_above(&|s| s.submerged_volume.unwrap_or(0.0), 0.0)),
        axis_moments: axes
            .into_iter()
            .map(|name| {
                let e = pick_moment(&|s| s.axis_moments.get(&name).map_or(0.0, |a| a.moment));
                (name, e)
            })
            .collect(),
        flotation_factor: steps.first().and_then(|s| s.flotation_factor).map(|_| {
            let factors = || {
                steps
                    .iter()
                    .filter_map(|s| Some((s.flotation_factor??, s.level)))
            };
            let lowest = factors().map(|(fs, _)| fs).reduce(f64::min)?;
            // As above: the first level within round-off of the lowest governs.
            factors()
                .find(|&(fs, _)| fs <= lowest * (1.0 + 1e-9))
                .map(|(value, level)| Extreme { value, level })
        }),
        flotation_limit: None,
    }
}

/// The diagonal of the mesh's bounding box, m.
pub(super) fn diagonal(prep: &Prepared) -> f64 {
    let (lo, hi) = prep.local_box;
    (hi - lo).norm()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::AxisMoment;

    #[test]
    fn governing_values_take_the_largest_magnitude_and_ignore_round_off() {
        let step = |level: f64, fx: f64, fz: f64, m: f64| SweepStep {
            level,
            force: [fx, 1e-9 * level, fz],
            moment: [0.0; 3],
            uplift: fz.max(0.0),
            downthrust: (-fz).max(0.0),
            wetted_area: 0.0,
            submerged_volume: Some(fz / 1e4),
            flotation_factor: None,
            axis_moments: [(
                "hinge".to_owned(),
                AxisMoment {
                    moment: m,
                    miss_distance: None,
                },
            )]
            .into(),
        };
        // F_x peaks negative in the middle; F_z reaches a plateau (equal up to round-off)
        // at 2 m; F_y is round-off only.
        let steps = [
            step(1.0, -10.0, 5e4, 3.0),
            step(2.0, -30.0, 1e5, -7.0),
            step(3.0, -20.0, 1e5 * (1.0 + 1e-15), 6.0),
        ];
        let g = governing("river", &steps, 10.0);
        assert_eq!(g.liquid, "river");
        assert_eq!((g.force_x.value, g.force_x.level), (-30.0, 2.0));
        assert_eq!(g.force_z.level, 2.0);
        assert_eq!((g.force_y.value, g.force_y.level), (0.0, 1.0));
        assert_eq!(g.axis_moments["hinge"].value, -7.0);
        assert_eq!(g.submerged_volume.map(|v| v.level), Some(2.0));
        assert_eq!(g.downthrust.value, 0.0);
    }
}
