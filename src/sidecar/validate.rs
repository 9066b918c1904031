//! The one validation step: the raw mirror of the JSON converted into a [`Sidecar`], every
//! rule of CONTRACT.md checked in the order of the keys and every default applied.
//!
//! It reads no text (that is `raw.rs`) and attaches no line numbers (that is
//! [`super::parse_sidecar`]); a broken rule comes back as a `Problem` at its key path.

use super::error::{Problem, problem, quoted_list};
use super::floating;
use super::liquids::{Partial, Resolver, Spec, partial};
use super::raw::{KeyPath, RawLiquid, RawSidecar};
use super::types::sweep_steps;
use super::{
    Case, DEFAULT_CASE_NAME, DEFAULT_GRAVITY_M_S2, Flotation, LiquidChoice, NamedAxis, NamedLiquid,
    NamedSection, PartRule, PartRules, SHORTHAND_LIQUID_NAME, Sidecar, SidecarErrorKind, Sweep,
    factor_presets, flotation,
};
use crate::hydro::UpAxis;

/// The one conversion from the raw mirror to a [`Sidecar`]: all validation lives here.
pub(super) fn validate(raw: RawSidecar) -> Result<Sidecar, Problem> {
    use SidecarErrorKind as K;
    let root = KeyPath::root();

    let units = raw
        .units
        .ok_or_else(|| problem(root.key("units"), K::MissingUnits))?;
    let up = raw.up.unwrap_or(UpAxis::PosZ);
    let g = raw.gravity.unwrap_or(DEFAULT_GRAVITY_M_S2);
    if !(g.is_finite() && g > 0.0) {
        return Err(problem(root.key("gravity"), K::Gravity(g)));
    }

    let written: Vec<(String, KeyPath, &RawLiquid)> = match (&raw.liquid, &raw.liquids) {
        (Some(_), Some(_)) => return Err(problem(root.key("liquids"), K::LiquidAndLiquids)),
        (None, None) => return Err(problem(root.key("liquid"), K::NoLiquid)),
        (Some(liquid), None) => {
            vec![(SHORTHAND_LIQUID_NAME.to_owned(), root.key("liquid"), liquid)]
        }
        (None, Some(named)) if named.0.is_empty() => {
            return Err(problem(
                root.key("liquids"),
                K::Empty {
                    what: "liquids",
                    hint: "name at least one liquid, e.g. \"liquids\": {\"headwater\": {\"level\": 8.0, \"density\": 1000}}",
                },
            ));
        }
        (None, Some(named)) => named
            .0
            .iter()
            .map(|(name, l)| (name.clone(), root.key("liquids").key(name), l))
            .collect(),
    };
    let names: Vec<String> = written.iter().map(|(n, _, _)| n.clone()).collect();
    let base_keys: Vec<KeyPath> = written.iter().map(|(_, k, _)| k.clone()).collect();
    let bases = written
        .iter()
        .map(|(_, key, l)| partial(Spec::of_liquid(l), key, g))
        .collect::<Result<Vec<_>, _>>()?;
    let resolver = Resolver {
        names: &names,
        base_keys: &base_keys,
        bases: &bases,
        g,
    };
    let liquids = written
        .iter()
        .map(|(name, _, l)| NamedLiquid {
            name: name.clone(),
            preset: l.preset.clone(),
        })
        .collect();

    let mut parts = PartRules::default();
    for (name, part) in raw.parts.iter().flat_map(|p| &p.0) {
        let key = root.key("parts").key(name);
        let liquid = match &part.liquid {
            None => LiquidChoice::Default,
            Some(None) => LiquidChoice::Dry,
            Some(Some(l)) => LiquidChoice::Named(resolver.index(l, key.key("liquid"))?),
        };
        let rule = PartRule {
            liquid,
            wet_side: part.wet_side,
        };
        if name == "*" {
            parts.default = rule;
        } else {
            parts.named.push((name.clone(), rule));
        }
    }

    let mut axes = Vec::new();
    for (name, axis) in raw.axes.iter().flat_map(|a| &a.0) {
        let direction = unit_vector(axis.direction.0).ok_or_else(|| {
            problem(
                root.key("axes").key(name).key("direction"),
                K::ZeroDirection(axis.direction.0),
            )
        })?;
        axes.push(NamedAxis {
            name: name.clone(),
            point_m: axis.point.0,
            direction,
        });
    }

    let mut sections = Vec::new();
    for (name, section) in raw.sections.iter().flat_map(|c| &c.0) {
        let key = root.key("sections").key(name).key("normal");
        let given = section.normal.0;
        let n = unit_vector(given).ok_or_else(|| problem(key.clone(), K::ZeroNormal(given)))?;
        // Vertical up to a tilt of a micro-radian; the rest is written-out round-off and is
        // taken out, so the plane holds the vertical exactly.
        let u = up.unit();
        let along_up = n[0] * u.x + n[1] * u.y + n[2] * u.z;
        if along_up.abs() > SECTION_TILT {
            return Err(problem(
                key,
                K::SectionNotVertical {
                    normal: given,
                    up: up.as_str(),
                },
            ));
        }
        let flat = [
            n[0] - along_up * u.x,
            n[1] - along_up * u.y,
            n[2] - along_up * u.z,
        ];
        sections.push(NamedSection {
            name: name.clone(),
            point_m: section.point.0,
            normal: unit_vector(flat).unwrap_or(n),
        });
    }

    let no_overrides = vec![Partial::default(); names.len()];
    let cases = match &raw.cases {
        None => {
            let floats_in = raw
                .floating
                .as_ref()
                .and_then(|f| floating::liquid_of(f, &names));
            let liquids = resolver.resolve(&no_overrides, None, floats_in)?;
            let floating = match &raw.floating {
                None => None,
                Some(f) => Some(floating::validate_floating(
                    f,
                    &root.key("floating"),
                    &names,
                    &liquids,
                    up,
                )?),
            };
            vec![Case {
                name: DEFAULT_CASE_NAME.to_owned(),
                liquids,
                floating,
            }]
        }
        Some(list) if list.is_empty() => {
            return Err(problem(
                root.key("cases"),
                K::Empty {
                    what: "cases",
                    hint: "remove \"cases\" for one default case, or add {\"name\": \"...\", ...}",
                },
            ));
        }
        Some(list) => {
            let mut cases: Vec<Case> = Vec::with_capacity(list.len());
            for (index, c) in list.iter().enumerate() {
                let key = root.key("cases").index(index);
                let name = c
                    .name
                    .as_deref()
                    .ok_or_else(|| problem(key.clone(), K::CaseWithoutName { index }))?;
                if name.is_empty()
                    || name
                        .chars()
                        .any(|ch| ch == '/' || ch == '\\' || ch.is_control())
                {
                    return Err(problem(
                        key.key("name"),
                        K::BadCaseName {
                            name: name.to_owned(),
                        },
                    ));
                }
                if let Some(first) = cases.iter().position(|seen| seen.name == name) {
                    return Err(problem(
                        key.key("name"),
                        K::DuplicateCase {
                            name: name.to_owned(),
                            first,
                        },
                    ));
                }
                let mut overrides = no_overrides.clone();
                let spec = Spec::of_case(c);
                if let Some(first_key) = spec.first_key() {
                    if c.liquids.is_some() {
                        return Err(problem(key.key("liquids"), K::CaseKeysAndLiquids));
                    }
                    if names.len() > 1 {
                        return Err(problem(
                            key.key(first_key),
                            K::CaseKeyWithSeveralLiquids {
                                key: first_key,
                                liquids: quoted_list(names.iter().map(String::as_str)),
                                first: names[0].clone(),
                            },
                        ));
                    }
                    overrides[0] = partial(spec, &key, g)?;
                }
                for (liquid, l) in c.liquids.iter().flat_map(|n| &n.0) {
                    let at = key.key("liquids").key(liquid);
                    let i = resolver.index(liquid, at.clone())?;
                    overrides[i] = partial(Spec::of_liquid(l), &at, g)?;
                }
                let merged = floating::merge(raw.floating.as_ref(), c.floating.as_ref());
                let floats_in = merged.as_ref().and_then(|f| floating::liquid_of(f, &names));
                let liquids = resolver.resolve(&overrides, Some((name, &key)), floats_in)?;
                let at = if c.floating.is_some() {
                    key.key("floating")
                } else {
                    root.key("floating")
                };
                let floating = match merged {
                    None => None,
                    Some(f) => Some(floating::validate_floating(&f, &at, &names, &liquids, up)?),
                };
                cases.push(Case {
                    name: name.to_owned(),
                    liquids,
                    floating,
                });
            }
            cases
        }
    };

    let sweep = match &raw.sweep {
        None => None,
        Some(s) => {
            let key = root.key("sweep");
            let liquid = match &s.liquid {
                Some(name) => resolver.index(name, key.key("liquid"))?,
                None if names.len() == 1 => 0,
                None => {
                    return Err(problem(
                        key.key("liquid"),
                        K::SweepLiquid(quoted_list(names.iter().map(String::as_str))),
                    ));
                }
            };
            if !(s.step.is_finite() && s.step > 0.0) {
                return Err(problem(key.key("step"), K::SweepStep(s.step)));
            }
            if s.to < s.from {
                return Err(problem(
                    key.key("to"),
                    K::SweepOrder {
                        from: s.from,
                        to: s.to,
                    },
                ));
            }
            if sweep_steps(s.from, s.to, s.step).is_none() {
                return Err(problem(
                    key.key("step"),
                    K::SweepTooLong {
                        from: s.from,
                        to: s.to,
                        step: s.step,
                    },
                ));
            }
            Some(Sweep {
                liquid,
                from_m: s.from,
                to_m: s.to,
                step_m: s.step,
            })
        }
    };

    let flotation = match &raw.flotation {
        None => None,
        Some(f) => {
            let key = root.key("flotation");
            if f.resisting.0.is_empty() {
                return Err(problem(
                    key.key("resisting"),
                    K::Empty {
                        what: "resisting",
                        hint: "name the downward loads that hold the structure down, in N, e.g. {\"self_weight\": 1.2e6}",
                    },
                ));
            }
            for (name, value) in &f.resisting.0 {
                if !(value.is_finite() && *value >= 0.0) {
                    return Err(problem(
                        key.key("resisting").key(name),
                        K::ResistingLoad {
                            name: name.clone(),
                            value: *value,
                        },
                    ));
                }
            }
            let (required_factor, preset) = match (f.required_factor, &f.factor_preset) {
                (Some(_), Some(_)) => {
                    return Err(problem(key.key("factor_preset"), K::FactorAndPreset));
                }
                (None, None) => {
                    return Err(problem(
                        key.key("required_factor"),
                        K::Missing {
                            what: "required_factor",
                            hint: format!(
                                "give the factor of safety your code requires, e.g. \"required_factor\": 1.3, or name a preset with \"factor_preset\" (one of {})",
                                quoted_list(factor_presets().iter().map(|p| p.name.as_str()))
                            ),
                        },
                    ));
                }
                (Some(r), None) => {
                    if !(r.is_finite() && r > 0.0) {
                        return Err(problem(key.key("required_factor"), K::RequiredFactor(r)));
                    }
                    (r, None)
                }
                (None, Some(name)) => {
                    let p = flotation::find_factor_preset(name).ok_or_else(|| {
                        problem(
                            key.key("factor_preset"),
                            K::UnknownFactorPreset {
                                name: name.clone(),
                                known: quoted_list(
                                    factor_presets().iter().map(|p| p.name.as_str()),
                                ),
                            },
                        )
                    })?;
                    (p.required_factor, Some(p.clone()))
                }
            };
            Some(Flotation {
                resisting: f.resisting.0.clone(),
                required_factor,
                preset,
            })
        }
    };

    let sidecar_units = raw.sidecar_units.unwrap_or(super::LengthUnit::M);
    let datum = match &raw.datum {
        None => None,
        Some(d) => {
            let key = root.key("datum");
            let z = d.mesh_origin_elevation.ok_or_else(|| {
                problem(
                    key.key("mesh_origin_elevation"),
                    K::Missing {
                        what: "mesh_origin_elevation",
                        hint: "give the project elevation of the mesh's origin, in the sidecar's units, e.g. \"datum\": {\"mesh_origin_elevation\": 102.5}".to_owned(),
                    },
                )
            })?;
            Some(super::Datum {
                name: d.name.clone(),
                mesh_origin_elevation_m: z * sidecar_units.metres(),
            })
        }
    };

    Ok(Sidecar {
        units,
        up,
        gravity_m_s2: g,
        wet_side: raw.wet_side,
        liquids,
        parts,
        moment_about_m: raw.moment_about.map_or([0.0; 3], |t| t.0),
        axes,
        sections,
        cases,
        sweep,
        flotation,
        field_exports: raw.field_exports.unwrap_or_default(),
        sidecar_units,
        datum,
    }
    .into_mesh_frame())
}

/// The largest component along up (of the unit normal) a section's normal may have: the
/// sine of a micro-radian's tilt.
const SECTION_TILT: f64 = 1e-6;

/// `v` scaled to length 1, or `None` when it has no length. Divides by the largest
/// component first, so neither huge nor tiny components overflow or underflow.
fn unit_vector(v: [f64; 3]) -> Option<[f64; 3]> {
    let largest = v.iter().fold(0.0f64, |m, c| m.max(c.abs()));
    if !(largest > 0.0 && largest.is_finite()) {
        return None;
    }
    let s = v.map(|c| c / largest);
    let norm = (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]).sqrt();
    Some(s.map(|c| c / norm))
}
