//! Liquids as written, wherever they are written (a base liquid, a case, a case's named
//! liquid): each spec checked where it stands, with the core's own rules, and every
//! case's liquids resolved as its overrides over the base liquids.
//!
//! It builds a [`Profile`] only to check a liquid and keeps none; the order of the other
//! sidecar rules is `validate.rs`'s.

use super::error::{Problem, problem, quoted_list};
use super::raw::{KeyPath, RawCase, RawLayer, RawLiquid};
use super::water;
use super::{SidecarErrorKind, liquid_presets};
use crate::hydro::{Layer, Liquid, LiquidError, Profile};

/// The keys of a liquid as written, wherever they are written (a liquid or a case).
#[derive(Clone, Copy)]
pub(super) struct Spec<'a> {
    level: Option<f64>,
    density: Option<f64>,
    layers: Option<&'a [RawLayer]>,
    surface_pressure: Option<f64>,
    preset: Option<&'a str>,
}

impl<'a> Spec<'a> {
    pub(super) fn of_liquid(l: &'a RawLiquid) -> Spec<'a> {
        Spec {
            level: l.level,
            density: l.density,
            layers: l.layers.as_deref(),
            surface_pressure: l.surface_pressure,
            preset: l.preset.as_deref(),
        }
    }

    pub(super) fn of_case(c: &'a RawCase) -> Spec<'a> {
        Spec {
            level: c.level,
            density: c.density,
            layers: c.layers.as_deref(),
            surface_pressure: c.surface_pressure,
            preset: c.preset.as_deref(),
        }
    }

    /// The first key that is set, in the order of the table in CONTRACT.md.
    pub(super) fn first_key(&self) -> Option<&'static str> {
        [
            ("level", self.level.is_some()),
            ("density", self.density.is_some()),
            ("layers", self.layers.is_some()),
            ("surface_pressure", self.surface_pressure.is_some()),
            ("preset", self.preset.is_some()),
        ]
        .into_iter()
        .find_map(|(key, set)| set.then_some(key))
    }
}

/// What one spec contributes to a liquid; `None` = inherited.
#[derive(Clone, Default)]
pub(super) struct Partial {
    level: Option<f64>,
    surface_pressure: Option<f64>,
    layers: Option<Vec<Layer>>,
}

/// Where a spec's layers came from, to name the key of a bad density.
#[derive(Clone, Copy)]
enum LayersFrom {
    Density,
    Layers,
    Preset,
}

/// Checks one spec as written at `key` and returns what it contributes.
pub(super) fn partial(spec: Spec, key: &KeyPath, g: f64) -> Result<Partial, Problem> {
    let given: Vec<&str> = [
        ("density", spec.density.is_some()),
        ("layers", spec.layers.is_some()),
        ("preset", spec.preset.is_some()),
    ]
    .into_iter()
    .filter_map(|(k, set)| set.then_some(k))
    .collect();
    if given.len() > 1 {
        return Err(problem(
            key.key(given[1]),
            SidecarErrorKind::Ambiguous {
                keys: quoted_list(given.into_iter()).replace(", ", " and "),
            },
        ));
    }
    let layers = if let Some(density) = spec.density {
        Some((vec![uniform(density)], LayersFrom::Density))
    } else if let Some(layers) = spec.layers {
        let layers = layers
            .iter()
            .map(|l| Layer {
                density_kg_m3: l.density,
                down_to_m: l.down_to,
            })
            .collect();
        Some((layers, LayersFrom::Layers))
    } else if let Some(name) = spec.preset {
        let preset = water::find_preset(name).ok_or_else(|| {
            problem(
                key.key("preset"),
                SidecarErrorKind::UnknownPreset {
                    name: name.to_owned(),
                    known: quoted_list(liquid_presets().iter().map(|p| p.name.as_str())),
                },
            )
        })?;
        Some((vec![uniform(preset.density_kg_m3)], LayersFrom::Preset))
    } else {
        None
    };
    if let Some((layers, from)) = &layers {
        // The core's rules for layers do not depend on the level, so a spec that leaves
        // the level to be inherited is checked here, where it is written, at level 0.
        let probe = Liquid {
            level_m: spec.level.unwrap_or(0.0),
            surface_pressure_pa: spec.surface_pressure.unwrap_or(0.0),
            layers: layers.clone(),
        };
        Profile::new(&probe, g).map_err(|e| liquid_problem(key, *from, e))?;
    }
    Ok(Partial {
        level: spec.level,
        surface_pressure: spec.surface_pressure,
        layers: layers.map(|(layers, _)| layers),
    })
}

fn uniform(density_kg_m3: f64) -> Layer {
    Layer {
        density_kg_m3,
        down_to_m: None,
    }
}

/// The core's complaint about the liquid written at `key`, at the key it is about.
fn liquid_problem(key: &KeyPath, from: LayersFrom, e: LiquidError) -> Problem {
    let at = match &e {
        LiquidError::Level(_) => key.key("level"),
        LiquidError::SurfacePressure(_) => key.key("surface_pressure"),
        LiquidError::Gravity(_) => KeyPath::root().key("gravity"),
        LiquidError::NoLayers => key.key("layers"),
        LiquidError::Density { index, .. } => match from {
            LayersFrom::Density => key.key("density"),
            LayersFrom::Preset => key.key("preset"),
            LayersFrom::Layers => key.key("layers").index(*index).key("density"),
        },
        LiquidError::MissingDownTo { index } => key.key("layers").index(*index),
        LiquidError::DownTo { index, .. } | LiquidError::LayersOutOfOrder { index, .. } => {
            key.key("layers").index(*index).key("down_to")
        }
    };
    problem(at, SidecarErrorKind::Liquid(e))
}

/// The liquids of one case: for each base liquid, its override (if any) over the base.
pub(super) struct Resolver<'a> {
    pub(super) names: &'a [String],
    pub(super) base_keys: &'a [KeyPath],
    pub(super) bases: &'a [Partial],
    pub(super) g: f64,
}

impl Resolver<'_> {
    /// The index of the liquid called `name`, referred to at `key`.
    pub(super) fn index(&self, name: &str, key: KeyPath) -> Result<usize, Problem> {
        self.names.iter().position(|n| n == name).ok_or_else(|| {
            problem(
                key,
                SidecarErrorKind::UnknownLiquid {
                    name: name.to_owned(),
                    known: quoted_list(self.names.iter().map(String::as_str)),
                },
            )
        })
    }

    /// Every liquid of the case named `case` at `case_key` (`None`: the default case).
    /// `floats_in`: the liquid a floating body of the case floats in, whose `level` is not
    /// needed (the computation solves the free surface; 0 stands in when none is given).
    pub(super) fn resolve(
        &self,
        overrides: &[Partial],
        case: Option<(&str, &KeyPath)>,
        floats_in: Option<usize>,
    ) -> Result<Vec<Liquid>, Problem> {
        let mut liquids = Vec::with_capacity(self.bases.len());
        for (i, base) in self.bases.iter().enumerate() {
            let top = &overrides[i];
            let missing = |what: &'static str, hint: &str| match case {
                Some((name, case_key)) => problem(
                    case_key.clone(),
                    SidecarErrorKind::Incomplete {
                        case: name.to_owned(),
                        liquid: self.names[i].clone(),
                        missing: what,
                    },
                ),
                None => problem(
                    self.base_keys[i].key(what),
                    SidecarErrorKind::Missing {
                        what,
                        hint: hint.to_owned(),
                    },
                ),
            };
            let level_m = match top.level.or(base.level) {
                Some(level) => level,
                None if floats_in == Some(i) => 0.0,
                None => Err(missing(
                    "level",
                    "add \"level\": <elevation of the free surface in m>",
                ))?,
            };
            let layers = top.layers.as_ref().or(base.layers.as_ref()).ok_or_else(|| {
                missing(
                    "density",
                    "add \"density\": <kg/m³>, \"layers\": [...] or \"preset\": \"fresh_water_20c\"",
                )
            })?;
            let liquid = Liquid {
                level_m,
                surface_pressure_pa: top
                    .surface_pressure
                    .or(base.surface_pressure)
                    .unwrap_or(0.0),
                layers: layers.clone(),
            };
            // Every piece was checked where it was written; this keeps the promise that a
            // resolved liquid builds a Profile even if the core's rules come to involve the
            // level.
            Profile::new(&liquid, self.g).map_err(|e| {
                let key = case.map_or_else(|| self.base_keys[i].clone(), |(_, k)| k.clone());
                problem(key, SidecarErrorKind::Liquid(e))
            })?;
            liquids.push(liquid);
        }
        Ok(liquids)
    }
}
