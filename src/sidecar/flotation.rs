//! Required factors of safety against flotation that a sidecar can name: the presets of
//! `config/flotation.json`, embedded in the program.
//!
//! A preset is a number with its published source and a statement of how far that number
//! was checked; it is applied only when a sidecar names it (`"factor_preset"` under
//! `"flotation"`), never by default. It does not check anything else a document asks for
//! (load categories, which loads may resist, friction), so no code compliance is implied.

use std::sync::LazyLock;

use serde::Deserialize;

use super::raw::Named;

/// A named required factor of safety against flotation.
#[derive(Clone, Debug, PartialEq)]
pub struct FactorPreset {
    /// The name a sidecar gives in `"factor_preset"`.
    pub name: String,
    /// Resisting / uplift must reach this. For a partial-factor format it is
    /// γ_dst / γ_stb (from `partial_factors`).
    pub required_factor: f64,
    /// `(γ_dst, γ_stb)` when the document states partial factors rather than one factor.
    pub partial_factors: Option<(f64, f64)>,
    /// The document, its edition and the clause.
    pub source: String,
    /// How far the value was checked ("from memory: …" where it was recalled).
    pub checked: String,
    /// Conditions of use.
    pub note: String,
}

impl FactorPreset {
    /// Whether the value was recalled rather than read in the document.
    pub fn from_memory(&self) -> bool {
        self.checked.starts_with("from memory")
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PresetFile {
    #[serde(rename = "description")]
    _description: String,
    presets: Named<PresetEntry>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PresetEntry {
    required_factor: Option<f64>,
    partial_factors: Option<PartialFactors>,
    source: String,
    checked: String,
    note: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PartialFactors {
    destabilising_permanent: f64,
    stabilising_permanent: f64,
}

const FLOTATION_JSON: &str = include_str!("../../config/flotation.json");

fn parse_presets(text: &str) -> Result<Vec<FactorPreset>, String> {
    let file: PresetFile = serde_json::from_str(text).map_err(|e| e.to_string())?;
    file.presets
        .0
        .into_iter()
        .map(|(name, e)| {
            let (required_factor, partial_factors) = match (e.required_factor, e.partial_factors) {
                (Some(f), None) => (f, None),
                (None, Some(p)) => (
                    p.destabilising_permanent / p.stabilising_permanent,
                    Some((p.destabilising_permanent, p.stabilising_permanent)),
                ),
                _ => {
                    return Err(format!(
                        "preset \"{name}\": give exactly one of required_factor and partial_factors"
                    ));
                }
            };
            Ok(FactorPreset {
                name,
                required_factor,
                partial_factors,
                source: e.source,
                checked: e.checked,
                note: e.note,
            })
        })
        .collect()
}

static PRESETS: LazyLock<Vec<FactorPreset>> = LazyLock::new(|| {
    parse_presets(FLOTATION_JSON)
        .expect("config/flotation.json is embedded at build time and a unit test reads it")
});

/// Every flotation preset, in the order of `config/flotation.json`.
pub fn factor_presets() -> &'static [FactorPreset] {
    &PRESETS
}

/// The preset called `name`, if there is one.
pub(super) fn find_factor_preset(name: &str) -> Option<&'static FactorPreset> {
    factor_presets().iter().find(|p| p.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_presets_file_parses_and_every_preset_says_where_it_comes_from() {
        let presets = parse_presets(FLOTATION_JSON).expect("config/flotation.json parses");
        assert_eq!(presets, factor_presets());
        for p in &presets {
            assert!(
                p.required_factor.is_finite() && p.required_factor >= 1.0,
                "{p:?}"
            );
            assert!(!p.source.is_empty() && !p.note.is_empty(), "{p:?}");
            // Every value says whether it was recalled or read, and where.
            assert!(
                p.from_memory() || p.checked.starts_with("seen in"),
                "{}: {}",
                p.name,
                p.checked
            );
        }
    }

    #[test]
    fn the_values_are_those_of_the_team_research_notes() {
        // Trade notes §2.1: EM 1110-2-2100 Table 3-4 usual/unusual/extreme 1.3/1.2/1.1
        // (from memory there too); UFC 3-320-05A 2.0; EN 1997-1 Table A.15 recommended
        // 1.0/0.9 (from memory), UK National Annex 1.1/0.9.
        let get = |n: &str| find_factor_preset(n).expect(n).required_factor;
        assert_eq!(get("usace-em-1110-2-2100-usual"), 1.3);
        assert_eq!(get("usace-em-1110-2-2100-unusual"), 1.2);
        assert_eq!(get("usace-em-1110-2-2100-extreme"), 1.1);
        assert_eq!(get("ufc-3-320-05a"), 2.0);
        assert_eq!(get("en-1997-1-upl-recommended"), 1.0 / 0.9);
        assert_eq!(get("en-1997-1-upl-uk-na"), 1.1 / 0.9);
        assert!(find_factor_preset("usace-em-1110-2-2100-usual").is_some_and(|p| p.from_memory()));
        assert!(find_factor_preset("usual").is_none());
    }

    #[test]
    fn a_preset_with_both_or_neither_form_is_refused() {
        let both = r#"{"description": "", "presets": {"x": {"required_factor": 1.5,
            "partial_factors": {"destabilising_permanent": 1.0, "stabilising_permanent": 0.9},
            "source": "s", "checked": "from memory", "note": "n"}}}"#;
        assert!(parse_presets(both).is_err());
        let neither = r#"{"description": "", "presets": {"x": {
            "source": "s", "checked": "from memory", "note": "n"}}}"#;
        assert!(parse_presets(neither).is_err());
    }
}
