//! The validation of `floating` (top level and per case): the case's keys laid over the
//! top-level ones, then every rule checked once, with the key path of the first broken one.

use super::Floating;
use super::SidecarErrorKind as K;
use super::error::{Problem, problem, quoted_list};
use super::raw::{KeyPath, RawFloating};
use super::stability::{criteria_sets, find_criteria};
use crate::hydro::{Liquid, UpAxis};

/// Default heel angles: −80° … 80° in steps of 5°.
pub(super) fn default_heel_angles() -> Vec<f64> {
    (-16..=16).map(|k| f64::from(k) * 5.0).collect()
}

/// The case's `floating` keys over the top-level ones.
pub(super) fn merge(base: Option<&RawFloating>, case: Option<&RawFloating>) -> Option<RawFloating> {
    match (base, case) {
        (None, None) => None,
        (Some(b), None) => Some(b.clone()),
        (None, Some(c)) => Some(c.clone()),
        (Some(b), Some(c)) => Some(RawFloating {
            mass: c.mass.or(b.mass),
            centre_of_gravity: c.centre_of_gravity.clone().or(b.centre_of_gravity.clone()),
            liquid: c.liquid.clone().or(b.liquid.clone()),
            length_axis: c.length_axis.or(b.length_axis),
            heel_angles: c.heel_angles.clone().or(b.heel_angles.clone()),
            criteria: c.criteria.clone().or(b.criteria.clone()),
            free_surface_moments: c
                .free_surface_moments
                .clone()
                .or(b.free_surface_moments.clone()),
        }),
    }
}

/// The liquid a `floating` names (or the only one), when it names one that exists; the
/// errors are [`validate_floating`]'s.
pub(super) fn liquid_of(raw: &RawFloating, names: &[String]) -> Option<usize> {
    match &raw.liquid {
        Some(name) => names.iter().position(|n| n == name),
        None => (names.len() == 1).then_some(0),
    }
}

fn bad(key: KeyPath, message: String) -> Problem {
    problem(key, K::Floating(message))
}

/// Validates the merged `floating` of one case. `key` is where a missing key is reported
/// (the case's `floating` when it has one, else the top level's).
pub(super) fn validate_floating(
    raw: &RawFloating,
    key: &KeyPath,
    names: &[String],
    liquids: &[Liquid],
    up: UpAxis,
) -> Result<Floating, Problem> {
    let mass = raw.mass.ok_or_else(|| {
        bad(
            key.key("mass"),
            "floating.mass is missing: give the mass of the whole floating body in kg, e.g. \"mass\": 150000".to_owned(),
        )
    })?;
    if !(mass.is_finite() && mass > 0.0) {
        return Err(bad(
            key.key("mass"),
            format!("floating.mass must be a number > 0 kg, got {mass}"),
        ));
    }
    let g = raw.centre_of_gravity.as_ref().ok_or_else(|| {
        bad(
            key.key("centre_of_gravity"),
            "floating.centre_of_gravity is missing: give [x, y, z] in metres in the mesh's axes (after unit scaling)".to_owned(),
        )
    })?;
    if g.0.iter().any(|c| !c.is_finite()) {
        return Err(bad(
            key.key("centre_of_gravity"),
            "floating.centre_of_gravity must be three finite numbers".to_owned(),
        ));
    }
    let liquid = match &raw.liquid {
        Some(name) => names.iter().position(|n| n == name).ok_or_else(|| {
            bad(
                key.key("liquid"),
                format!("floating.liquid \"{name}\" is not a liquid of this sidecar: the liquids are {}", quoted_list(names.iter().map(String::as_str))),
            )
        })?,
        None if names.len() == 1 => 0,
        None => {
            return Err(bad(
                key.key("liquid"),
                format!("floating.liquid is missing and the sidecar has several liquids ({}): name the one the body floats in", quoted_list(names.iter().map(String::as_str))),
            ));
        }
    };
    if liquids.get(liquid).is_some_and(|l| l.layers.len() != 1) {
        return Err(bad(
            key.key("liquid"),
            format!(
                "liquid \"{}\" is layered: a floating body needs one uniform \"density\"",
                names[liquid]
            ),
        ));
    }
    if let Some(axis) = raw.length_axis {
        let (a, u) = (axis.unit(), up.unit());
        if a.dot(&u) != 0.0 {
            return Err(bad(
                key.key("length_axis"),
                format!(
                    "floating.length_axis \"{}\" is not horizontal with \"up\": \"{}\": name a horizontal mesh axis",
                    axis.as_str(),
                    up.as_str()
                ),
            ));
        }
    }
    let heel = raw.heel_angles.clone().unwrap_or_else(default_heel_angles);
    if heel.len() > 721 {
        return Err(bad(
            key.key("heel_angles"),
            format!(
                "floating.heel_angles has {} angles; at most 721 are accepted",
                heel.len()
            ),
        ));
    }
    for (i, a) in heel.iter().enumerate() {
        if !(a.is_finite() && (-90.0..=90.0).contains(a)) {
            return Err(bad(
                key.key("heel_angles").index(i),
                format!("heel angle {a} is outside [-90, 90] degrees"),
            ));
        }
    }
    let criteria = match &raw.criteria {
        None => None,
        Some(name) => Some(find_criteria(name).cloned().ok_or_else(|| {
            bad(
                key.key("criteria"),
                format!(
                    "unknown criteria \"{name}\": the sets are {} (see config/stability.json)",
                    quoted_list(criteria_sets().iter().map(|s| s.name.as_str()))
                ),
            )
        })?),
    };
    let mut free_surface = Vec::new();
    for (name, t) in raw.free_surface_moments.iter().flat_map(|n| &n.0) {
        let at = key.key("free_surface_moments").key(name);
        if !(t.moment_m4.is_finite() && t.moment_m4 >= 0.0) {
            return Err(bad(
                at.key("moment_m4"),
                format!(
                    "tank \"{name}\": moment_m4 must be a number >= 0 m4, got {}",
                    t.moment_m4
                ),
            ));
        }
        if !(t.density.is_finite() && t.density > 0.0) {
            return Err(bad(
                at.key("density"),
                format!(
                    "tank \"{name}\": density must be a number > 0 kg/m3, got {}",
                    t.density
                ),
            ));
        }
        free_surface.push((name.clone(), t.moment_m4, t.density));
    }
    Ok(Floating {
        mass_kg: mass,
        centre_of_gravity_m: g.0,
        liquid,
        length_axis: raw.length_axis,
        heel_angles_deg: heel,
        criteria,
        free_surface,
    })
}
