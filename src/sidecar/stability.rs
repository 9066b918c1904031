//! Stability criteria that a sidecar can name under `floating.criteria`: the sets of
//! `config/stability.json`, embedded in the program.
//!
//! A set is a list of thresholds with the published source of each and how far it was
//! checked; it is evaluated only when a sidecar names it, never by default, and no
//! compliance is implied (see the file's description).

use std::sync::LazyLock;

use serde::Deserialize;

use super::raw::Named;
use crate::hydro::float::Criterion;

/// One threshold of a set, with its wording and how it was checked.
#[derive(Clone, Debug, PartialEq)]
pub struct CriterionPreset {
    pub criterion: Criterion,
    pub what: String,
    pub checked: String,
}

impl CriterionPreset {
    /// Whether the number was recalled rather than read in any source.
    pub fn from_memory(&self) -> bool {
        self.checked.starts_with("from memory")
    }
}

/// A named set of stability criteria.
#[derive(Clone, Debug, PartialEq)]
pub struct CriteriaSet {
    pub name: String,
    pub source: String,
    pub note: String,
    pub checks: Vec<CriterionPreset>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    #[serde(rename = "description")]
    _description: String,
    sets: Named<SetEntry>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SetEntry {
    source: String,
    note: String,
    checks: Vec<CheckEntry>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CheckEntry {
    kind: String,
    from_deg: Option<f64>,
    to_deg: Option<f64>,
    min: f64,
    what: String,
    checked: String,
}

const STABILITY_JSON: &str = include_str!("../../config/stability.json");

fn parse(text: &str) -> Result<Vec<CriteriaSet>, String> {
    let file: File = serde_json::from_str(text).map_err(|e| e.to_string())?;
    file.sets
        .0
        .into_iter()
        .map(|(name, set)| {
            let checks = set
                .checks
                .into_iter()
                .map(|c| {
                    let criterion = match (c.kind.as_str(), c.from_deg, c.to_deg) {
                        ("area", Some(from_deg), Some(to_deg)) => Criterion::AreaMin {
                            from_deg,
                            to_deg,
                            min_m_rad: c.min,
                        },
                        ("lever_from", Some(from_deg), None) => Criterion::LeverMinFrom {
                            from_deg,
                            min_m: c.min,
                        },
                        ("angle_of_max", None, None) => Criterion::AngleOfMaxMin { min_deg: c.min },
                        ("gm", None, None) => Criterion::MetacentricHeightMin { min_m: c.min },
                        _ => return Err(format!("set {name}: bad check \"{}\"", c.kind)),
                    };
                    Ok(CriterionPreset {
                        criterion,
                        what: c.what,
                        checked: c.checked,
                    })
                })
                .collect::<Result<Vec<_>, String>>()?;
            Ok(CriteriaSet {
                name,
                source: set.source,
                note: set.note,
                checks,
            })
        })
        .collect()
}

static SETS: LazyLock<Vec<CriteriaSet>> = LazyLock::new(|| {
    parse(STABILITY_JSON).unwrap_or_else(|_| {
        // A unit test parses the embedded file, so this branch is never taken in a build
        // that passed its tests; an empty list would only make every name unknown.
        Vec::new()
    })
});

/// Every criteria set, in the order of `config/stability.json`.
pub fn criteria_sets() -> &'static [CriteriaSet] {
    &SETS
}

/// The set of that name.
pub fn find_criteria(name: &str) -> Option<&'static CriteriaSet> {
    SETS.iter().find(|s| s.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_embedded_file_parses_and_names_its_sources() {
        let sets = parse(STABILITY_JSON).expect("config/stability.json parses");
        assert_eq!(sets.len(), 2);
        let imo = &sets[0];
        assert_eq!(imo.checks.len(), 6);
        assert!(imo.source.contains("MSC.267(85)"));
        // The research note: numbers confirmed in secondary sources, none from memory.
        assert!(imo.checks.iter().all(|c| !c.from_memory()));
        assert_eq!(
            imo.checks[0].criterion,
            Criterion::AreaMin {
                from_deg: 0.0,
                to_deg: 30.0,
                min_m_rad: 0.055
            }
        );
        assert!(find_criteria("46-cfr-174-040").is_some());
    }
}
