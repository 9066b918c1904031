//! Liquid densities a sidecar can name instead of a number: the CIPM formula for fresh
//! water, and the presets of `config/liquids.json`, embedded in the program.
//!
//! It does not model dissolved air (a few g/m³ lighter) or compressibility (about 0.05 %
//! heavier per 100 m of head): both are far below what a hydrostatic load needs.

use std::sync::LazyLock;

use serde::Deserialize;

use super::raw::Named;

/// Density of air-free pure water at 101 325 Pa, kg/m³, by the CIPM 2001 formula.
///
/// ρ(t) = a5 · [1 − (t + a1)² (t + a2) / (a3 (t + a4))], with a1 = −3.983035 °C,
/// a2 = 301.797 °C, a3 = 522 528.9 °C², a4 = 69.34881 °C, a5 = 999.974950 kg/m³
/// (Tanaka et al., Metrologia 38 (2001) 301–309; the coefficients were recalled from memory).
/// Valid from 0 to 40 °C, where it agrees with Kell's 1975 formula to a few g/m³; outside
/// that range it still returns a number, which is not a reference value.
///
/// ```
/// // The maximum, a5, lies at t = −a1.
/// assert_eq!(wetload::sidecar::water_density_cipm(3.983035), 999.974950);
/// ```
pub fn water_density_cipm(t_celsius: f64) -> f64 {
    const A1: f64 = -3.983035;
    const A2: f64 = 301.797;
    const A3: f64 = 522_528.9;
    const A4: f64 = 69.34881;
    const A5: f64 = 999.974950;
    let t = t_celsius;
    A5 * (1.0 - (t + A1) * (t + A1) * (t + A2) / (A3 * (t + A4)))
}

/// A named liquid density from `config/liquids.json`.
#[derive(Clone, Debug, PartialEq)]
pub struct LiquidPreset {
    /// The name a sidecar gives in `"preset"`.
    pub name: String,
    /// kg/m³.
    pub density_kg_m3: f64,
    /// °C, for the fresh-water presets computed with [`water_density_cipm`].
    pub temperature_c: Option<f64>,
    /// Where the value comes from.
    pub source: String,
    /// When to use it, and its limits.
    pub note: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PresetFile {
    // Only people read the description; it is declared so that deny_unknown_fields lets
    // the file carry it.
    #[serde(rename = "description")]
    _description: String,
    presets: Named<PresetEntry>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PresetEntry {
    density: f64,
    temperature_c: Option<f64>,
    source: String,
    note: String,
}

const LIQUIDS_JSON: &str = include_str!("../../config/liquids.json");

fn parse_presets(text: &str) -> Result<Vec<LiquidPreset>, serde_json::Error> {
    let file: PresetFile = serde_json::from_str(text)?;
    Ok(file
        .presets
        .0
        .into_iter()
        .map(|(name, e)| LiquidPreset {
            name,
            density_kg_m3: e.density,
            temperature_c: e.temperature_c,
            source: e.source,
            note: e.note,
        })
        .collect())
}

static PRESETS: LazyLock<Vec<LiquidPreset>> = LazyLock::new(|| {
    parse_presets(LIQUIDS_JSON)
        .expect("config/liquids.json is embedded at build time and a unit test reads it")
});

/// Every liquid preset, in the order of `config/liquids.json`.
pub fn liquid_presets() -> &'static [LiquidPreset] {
    &PRESETS
}

/// The preset called `name`, if there is one.
pub(super) fn find_preset(name: &str) -> Option<&'static LiquidPreset> {
    liquid_presets().iter().find(|p| p.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn maximum_is_a5_at_minus_a1() {
        // Closed form: (t + a1) = 0 at t = −a1 gives ρ = a5 exactly.
        assert_eq!(water_density_cipm(3.983035), 999.974950);
        assert!(water_density_cipm(3.0) < 999.974950);
        assert!(water_density_cipm(5.0) < 999.974950);
    }

    #[test]
    fn matches_kell_1975_within_0_01() {
        // Kell, J. Chem. Eng. Data 20 (1975) 97–105, values from our trade notes §3.2,
        // computed there with Kell's coefficients as quoted by Jones & Harris,
        // J. Res. NIST 97 (1992) 335. The two formulas differ by a few g/m³.
        let kell = [
            (0.0, 999.8395),
            (4.0, 999.9720),
            (10.0, 999.6996),
            (15.0, 999.0996),
            (20.0, 998.2041),
            (25.0, 997.0449),
            (30.0, 995.6473),
            (40.0, 992.2158),
        ];
        for (t, rho) in kell {
            assert_abs_diff_eq!(water_density_cipm(t), rho, epsilon = 0.01);
        }
    }

    #[test]
    fn matches_the_common_table_within_0_01() {
        // The common CRC-style handbook table, as quoted in our trade notes §3.2 (its 40 °C
        // entry, 992.2, has one decimal only, so it is held to half of that last digit).
        let table = [
            (0.0, 999.8395, 0.01),
            (4.0, 999.9720, 0.01),
            (10.0, 999.7026, 0.01),
            (15.0, 999.1026, 0.01),
            (20.0, 998.2071, 0.01),
            (25.0, 997.0479, 0.01),
            (30.0, 995.6502, 0.01),
            (40.0, 992.2, 0.05),
        ];
        for (t, rho, tol) in table {
            assert_abs_diff_eq!(water_density_cipm(t), rho, epsilon = tol);
        }
    }

    #[test]
    fn presets_file_parses_and_every_density_is_positive() {
        let presets = parse_presets(LIQUIDS_JSON).expect("config/liquids.json parses");
        assert_eq!(presets, liquid_presets());
        assert!(presets.len() >= 8);
        for p in &presets {
            assert!(
                p.density_kg_m3 > 0.0 && p.density_kg_m3.is_finite(),
                "{p:?}"
            );
            assert!(!p.source.is_empty() && !p.note.is_empty(), "{p:?}");
        }
    }

    #[test]
    fn fresh_water_presets_equal_the_formula() {
        let temperatures: Vec<f64> = liquid_presets()
            .iter()
            .filter_map(|p| {
                let t = p.temperature_c?;
                assert_abs_diff_eq!(p.density_kg_m3, water_density_cipm(t), epsilon = 0.001);
                Some(t)
            })
            .collect();
        assert_eq!(temperatures, [4.0, 10.0, 15.0, 20.0, 25.0, 30.0]);
    }

    #[test]
    fn other_presets() {
        let sea = find_preset("sea_water").expect("sea water preset");
        // Trade notes §3.3: typical surface sea water, a rounded common value.
        assert_eq!(sea.density_kg_m3, 1025.0);
        let us = find_preset("fresh_water_62.4_lb_ft3").expect("US fresh water preset");
        // Exact by definition: 1 lb = 0.45359237 kg, 1 ft = 0.3048 m.
        assert_abs_diff_eq!(
            us.density_kg_m3,
            62.4 * 0.45359237 / 0.3048f64.powi(3),
            epsilon = 0.001
        );
        assert!(find_preset("fresh water").is_none());
    }
}
