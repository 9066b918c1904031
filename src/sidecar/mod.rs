//! The sidecar: the JSON file beside a mesh that says its units, its up axis and its liquids.
//!
//! Owns reading the sidecar text into a validated [`Sidecar`]: the private `raw` module
//! mirrors the JSON permissively, and [`parse_sidecar`] converts it in one function, where every rule of
//! CONTRACT.md ("Sidecar keys", "Pinned definitions", "Pinned extensions") is checked and
//! every default applied. A problem is reported once, with the file, the key path and the
//! line. Also owns the liquid presets (`config/liquids.json`), the water density formula
//! and the flotation factor presets (`config/flotation.json`).
//!
//! It does not read files (the caller passes the text), does not know the mesh (whether it
//! is closed, its part names), and computes nothing: liquids are validated by building the
//! core's [`Profile`](crate::hydro::Profile), so the liquid rules live in one place.
//! Lengths are metres in the mesh's own axes (after unit scaling), as CONTRACT.md says.
//!
//! Beyond CONTRACT.md's keys, `sections` is ours: named vertical planes for the pressure
//! diagram, `{"<name>": {"point": [x, y, z], "normal": [nx, ny, nz]}}`, the point in
//! `sidecar_units` and mesh axes, the normal of any length > 0 with no component along
//! `up` (a tilt of up to a micro-radian is taken out); see [`NamedSection`]. A sidecar
//! without it has only the default section through the resultant.
//!
//! The files, one concern each:
//!
//! - this file: the limits and defaults, and [`parse_sidecar`], the entry point that
//!   attaches the file, line and column to whatever went wrong;
//! - `types.rs`: the validated types ([`Sidecar`] and what it holds);
//! - `error.rs`: [`SidecarError`], its kinds and how positions and messages are written;
//! - `validate.rs`: the one conversion from the raw mirror to a [`Sidecar`];
//! - `liquids.rs`: liquids as written (on a liquid or a case) checked and resolved into
//!   every case's liquids;
//! - `raw.rs`: the permissive mirror of the JSON and the key paths into it;
//! - `water.rs` and `flotation.rs`: the liquid and flotation factor presets.

mod error;
mod floating;
mod flotation;
mod liquids;
mod project;
mod raw;
mod stability;
mod types;
mod validate;
mod water;

pub use error::{SidecarError, SidecarErrorKind, quoted_list};
pub use flotation::{FactorPreset, factor_presets};
pub use project::{PROJECT_FILE, Project, ProjectError, parse_project};
pub use stability::{CriteriaSet, CriterionPreset, criteria_sets, find_criteria};
pub use types::{
    AUTO_FIELD_EXPORT_FACETS, Case, Datum, FieldExports, Floating, Flotation, LengthUnit,
    LiquidChoice, NamedAxis, NamedLiquid, NamedSection, PartRule, PartRules, Sidecar, Sweep,
    UnassignedPart,
};
pub use water::{LiquidPreset, liquid_presets, water_density_cipm};

use std::path::Path;

use error::{json_message, long_string};
use validate::validate;

/// Standard acceleration of gravity g_n, m/s², the default of `gravity`: adopted by the
/// 3rd CGPM (1901), exact by definition.
pub const DEFAULT_GRAVITY_M_S2: f64 = 9.80665;

/// The name of the one case a sidecar without `cases` has.
pub const DEFAULT_CASE_NAME: &str = "default";

/// The name of the liquid given by the shorthand `liquid` key.
pub const SHORTHAND_LIQUID_NAME: &str = "liquid";

/// The most steps a sweep may take (it then has one level more).
pub const MAX_SWEEP_STEPS: usize = 10_000;

/// The longest string (key, name or keyword) a sidecar may hold, in bytes as written.
/// Names end up in results, pages and file names, and in messages: one of absurd length
/// is refused before anything copies it.
pub const MAX_STRING_BYTES: usize = 1024;

/// Reads and validates the sidecar `text` of the file `path`.
///
/// `path` is used in messages only. A leading byte-order mark is ignored (some Windows
/// editors write one). Lengths stay in metres in mesh axes; the unit of `units` applies
/// to the mesh coordinates only.
pub fn parse_sidecar(path: &Path, text: &str) -> Result<Sidecar, SidecarError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if let Some((offset, len)) = long_string(text, MAX_STRING_BYTES) {
        let before = &text[..offset];
        let line = before.matches('\n').count() + 1;
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        return Err(SidecarError {
            path: path.to_owned(),
            line: Some(line),
            column: Some(before[line_start..].chars().count() + 1),
            key: String::new(),
            kind: Box::new(SidecarErrorKind::StringTooLong {
                len,
                limit: MAX_STRING_BYTES,
            }),
        });
    }
    let raw = raw::read(text).map_err(|e| {
        // serde_json counts columns from 1 but says 0 before the first character of a line.
        let (line, column) = match e.error.line() {
            0 => (None, None),
            line => (Some(line), Some(e.error.column().max(1))),
        };
        SidecarError {
            path: path.to_owned(),
            line,
            column,
            key: e.key,
            kind: Box::new(SidecarErrorKind::Json(json_message(&e.error))),
        }
    })?;
    validate(raw).map_err(|problem| {
        let (line, column) = raw::locate(text, &problem.key);
        SidecarError {
            path: path.to_owned(),
            line: Some(line),
            column: Some(column),
            key: problem.key.to_string(),
            kind: Box::new(problem.kind),
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::{Layer, Liquid, LiquidError, UpAxis, WetSide};

    fn parse(text: &str) -> Result<Sidecar, SidecarError> {
        parse_sidecar(Path::new("gate.json"), text)
    }

    fn ok(text: &str) -> Sidecar {
        parse(text).unwrap_or_else(|e| panic!("refused: {e}\n{text}"))
    }

    fn err(text: &str) -> SidecarError {
        match parse(text) {
            Ok(s) => panic!("accepted: {s:?}\n{text}"),
            Err(e) => e,
        }
    }

    /// A valid sidecar with `extra` members added at the top level.
    fn with(extra: &str) -> String {
        format!(r#"{{"units": "m", "liquid": {{"level": 5.0, "density": 1000}}, {extra}}}"#)
    }

    /// A sidecar with `liquid` replaced by `liquid_json`.
    fn liquid(liquid_json: &str) -> String {
        format!(r#"{{"units": "m", "liquid": {liquid_json}}}"#)
    }

    const TWO_SIDED: &str = r#"{
  "units": "mm",
  "liquids": {
    "headwater": {"level": 8.0, "density": 1000},
    "tailwater": {"level": 2.5, "preset": "fresh_water_15c"}
  },
  "parts": {
    "upstream_skin": {"liquid": "headwater", "wet_side": "front"},
    "downstream_face": {"liquid": "tailwater", "wet_side": "back"},
    "deck": {"liquid": null},
    "*": {"liquid": "headwater"}
  },
  "cases": [
    {"name": "normal"},
    {"name": "flood", "liquids": {"headwater": {"level": 9.0}, "tailwater": {"level": 4.0, "surface_pressure": 100}}}
  ]
}"#;

    #[test]
    fn minimal_sidecar_gets_every_default() {
        let s = ok(r#"{"units": "mm", "liquid": {"level": 5.0, "density": 1000}}"#);
        assert_eq!(s.units, LengthUnit::Mm);
        assert_eq!(s.up, UpAxis::PosZ);
        assert_eq!(s.gravity_m_s2, 9.80665);
        assert_eq!(s.wet_side, None);
        assert_eq!(
            s.liquids,
            [NamedLiquid {
                name: "liquid".into(),
                preset: None
            }]
        );
        assert_eq!(s.parts, PartRules::default());
        assert_eq!(s.parts.default.liquid, LiquidChoice::Default);
        assert_eq!(s.moment_about_m, [0.0; 3]);
        assert!(s.axes.is_empty());
        assert_eq!(
            s.cases,
            [Case {
                name: "default".into(),
                liquids: vec![Liquid::uniform(5.0, 1000.0)],
                floating: None,
            }]
        );
        assert_eq!(s.cases[0].liquids[0].surface_pressure_pa, 0.0);
        assert_eq!(s.sweep, None);
        assert_eq!(s.flotation, None);
    }

    #[test]
    fn defaults_json_documents_the_defaults_in_use() {
        let doc: serde_json::Value =
            serde_json::from_str(include_str!("../../config/defaults.json"))
                .expect("config/defaults.json parses");
        let d = &doc["defaults"];
        let s = ok(r#"{"units": "m", "liquid": {"level": 1, "density": 1000}}"#);
        assert!(d["units"]["default"].is_null());
        assert_eq!(d["up"]["default"], s.up.as_str());
        assert_eq!(d["gravity"]["default"], s.gravity_m_s2);
        assert_eq!(d["wet_side"]["default"], WetSide::Outside.as_str());
        assert_eq!(
            d["liquid.surface_pressure"]["default"].as_f64(),
            Some(s.cases[0].liquids[0].surface_pressure_pa)
        );
        let about: Vec<f64> = serde_json::from_value(d["moment_about"]["default"].clone())
            .expect("moment_about default is three numbers");
        assert_eq!(about, s.moment_about_m);
        assert_eq!(d["cases"]["default"][0]["name"], s.cases[0].name.as_str());
        assert_eq!(s.cases.len(), 1);
    }

    #[test]
    fn units_are_exact_by_definition() {
        // 1 in = 0.0254 m and 1 ft = 0.3048 m exactly (international yard and pound, 1959).
        for (keyword, metres) in [
            ("m", 1.0),
            ("cm", 0.01),
            ("mm", 0.001),
            ("in", 0.0254),
            ("ft", 0.3048),
        ] {
            let s = ok(&format!(
                r#"{{"units": "{keyword}", "liquid": {{"level": 1, "density": 1000}}}}"#
            ));
            assert_eq!(s.units.metres(), metres, "{keyword}");
            assert_eq!(s.units.as_str(), keyword);
        }
    }

    #[test]
    fn missing_units_says_how_to_add_them() {
        let e = err(r#"{"liquid": {"level": 1, "density": 1000}}"#);
        assert_eq!(*e.kind, SidecarErrorKind::MissingUnits);
        assert_eq!(e.key, "units");
        let message = e.to_string();
        assert!(
            message.starts_with("sidecar gate.json, line 1"),
            "{message}"
        );
        assert!(message.contains(r#"add "units": "mm""#), "{message}");
    }

    #[test]
    fn unknown_keywords_list_the_accepted_ones() {
        let e = err(r#"{"units": "meters", "liquid": {"level": 1, "density": 1000}}"#);
        assert_eq!(e.key, "units");
        assert_eq!(
            e.kind.to_string(),
            r#"unknown unit "meters", expected one of "m", "cm", "mm", "in", "ft""#
        );
        let e = err(&with(r#""up": "z""#));
        assert_eq!(e.key, "up");
        assert!(
            e.to_string()
                .contains(r#""+x", "-x", "+y", "-y", "+z", "-z""#),
            "{e}"
        );
        let e = err(&with(r#""wet_side": "wet""#));
        assert_eq!(e.key, "wet_side");
        assert!(
            e.to_string()
                .contains(r#""outside", "inside", "front", "back""#),
            "{e}"
        );
        let e = err(&with(r#""parts": {"p": {"wet_side": "Front"}}"#));
        assert_eq!(e.key, "parts.p.wet_side");
    }

    #[test]
    fn field_exports_default_to_auto_with_a_size_limit() {
        let s = ok(&liquid(r#"{"level": 5.0, "density": 1000}"#));
        assert_eq!(s.field_exports, FieldExports::Auto);
        assert!(s.field_exports.writes(AUTO_FIELD_EXPORT_FACETS));
        assert!(!s.field_exports.writes(AUTO_FIELD_EXPORT_FACETS + 1));
        let s = ok(&with(r#""field_exports": "always""#));
        assert!(s.field_exports.writes(usize::MAX));
        let s = ok(&with(r#""field_exports": "never""#));
        assert!(!s.field_exports.writes(1));
        let e = err(&with(r#""field_exports": true"#));
        assert_eq!(e.key, "field_exports");
    }

    #[test]
    fn every_up_axis_and_wet_side_keyword_is_read() {
        // The keyword lists of CONTRACT.md, "Sidecar keys".
        for keyword in ["+x", "-x", "+y", "-y", "+z", "-z"] {
            let s = ok(&with(&format!(r#""up": "{keyword}""#)));
            assert_eq!(s.up.as_str(), keyword);
        }
        for keyword in ["outside", "inside", "front", "back"] {
            let s = ok(&with(&format!(r#""wet_side": "{keyword}""#)));
            assert_eq!(s.wet_side.map(WetSide::as_str), Some(keyword));
        }
    }

    #[test]
    fn gravity_is_used_and_must_be_positive() {
        let s = ok(&with(r#""gravity": 9.81"#));
        assert_eq!(s.gravity_m_s2, 9.81);
        for bad in ["0", "-9.81", "0.0"] {
            let e = err(&with(&format!(r#""gravity": {bad}"#)));
            assert_eq!(e.key, "gravity");
            assert!(matches!(*e.kind, SidecarErrorKind::Gravity(_)), "{e}");
        }
    }

    #[test]
    fn wrong_types_are_refused_at_their_key() {
        // (member(s) added to or replacing a valid sidecar, key path of the error)
        let cases: &[(&str, &str)] = &[
            (
                r#"{"units": 3, "liquid": {"level": 1, "density": 1}}"#,
                "units",
            ),
            (
                r#"{"units": null, "liquid": {"level": 1, "density": 1}}"#,
                "units",
            ),
            (&with(r#""up": true"#), "up"),
            (&with(r#""gravity": "9.8""#), "gravity"),
            (&with(r#""gravity": null"#), "gravity"),
            (&with(r#""wet_side": 1"#), "wet_side"),
            (&liquid("[10, 1000]"), "liquid"),
            (&liquid("null"), "liquid"),
            (&liquid(r#"{"level": "1", "density": 1}"#), "liquid.level"),
            (
                &liquid(r#"{"level": 1, "density": null}"#),
                "liquid.density",
            ),
            (
                &liquid(r#"{"level": 1, "density": [1000]}"#),
                "liquid.density",
            ),
            (&liquid(r#"{"level": 1, "layers": {}}"#), "liquid.layers"),
            (
                &liquid(r#"{"level": 1, "layers": [5]}"#),
                "liquid.layers[0]",
            ),
            (
                &liquid(r#"{"level": 1, "layers": [{"density": "x"}]}"#),
                "liquid.layers[0].density",
            ),
            (
                &liquid(
                    r#"{"level": 1, "layers": [{"density": 1, "down_to": []}, {"density": 2}]}"#,
                ),
                "liquid.layers[0].down_to",
            ),
            (
                &liquid(r#"{"level": 1, "density": 1, "surface_pressure": false}"#),
                "liquid.surface_pressure",
            ),
            (&liquid(r#"{"level": 1, "preset": 4}"#), "liquid.preset"),
            (r#"{"units": "m", "liquids": []}"#, "liquids"),
            (r#"{"units": "m", "liquids": {"a": 3}}"#, "liquids.a"),
            (
                r#"{"units": "m", "liquids": {"a": {"level": {}}}}"#,
                "liquids.a.level",
            ),
            (&with(r#""parts": []"#), "parts"),
            (&with(r#""parts": {"p": "liquid"}"#), "parts.p"),
            (&with(r#""parts": {"p": {"liquid": 3}}"#), "parts.p.liquid"),
            (
                &with(r#""parts": {"p": {"wet_side": null}}"#),
                "parts.p.wet_side",
            ),
            (&with(r#""moment_about": "0""#), "moment_about"),
            (&with(r#""moment_about": [1, 2]"#), "moment_about"),
            (&with(r#""moment_about": [1, 2, 3, 4]"#), "moment_about"),
            (&with(r#""moment_about": [1, "2", 3]"#), "moment_about[1]"),
            (&with(r#""axes": []"#), "axes"),
            (&with(r#""axes": {"a": [0, 0, 0]}"#), "axes.a"),
            (
                &with(r#""axes": {"a": {"point": [0, 0], "direction": [1, 0, 0]}}"#),
                "axes.a.point",
            ),
            (
                &with(r#""axes": {"a": {"point": [0, 0, 0], "direction": "x"}}"#),
                "axes.a.direction",
            ),
            (&with(r#""cases": {}"#), "cases"),
            (&with(r#""cases": ["flood"]"#), "cases[0]"),
            (&with(r#""cases": [{"name": 1}]"#), "cases[0].name"),
            (
                &with(r#""cases": [{"name": "a", "level": "9"}]"#),
                "cases[0].level",
            ),
            (
                &with(r#""cases": [{"name": "a", "liquids": []}]"#),
                "cases[0].liquids",
            ),
            (
                &with(r#""cases": [{"name": "a", "liquids": {"liquid": {"density": true}}}]"#),
                "cases[0].liquids.liquid.density",
            ),
            (
                &with(r#""cases": [{"name": "a", "density": "1"}]"#),
                "cases[0].density",
            ),
            (
                &with(r#""cases": [{"name": "a", "layers": 1}]"#),
                "cases[0].layers",
            ),
            (
                &with(r#""cases": [{"name": "a", "surface_pressure": [0]}]"#),
                "cases[0].surface_pressure",
            ),
            (
                &with(r#""cases": [{"name": "a", "preset": {}}]"#),
                "cases[0].preset",
            ),
            (&with(r#""sweep": 1"#), "sweep"),
            (
                &with(r#""sweep": {"from": 2, "to": "8", "step": 1}"#),
                "sweep.to",
            ),
            (
                &with(r#""sweep": {"from": "2", "to": 8, "step": 1}"#),
                "sweep.from",
            ),
            (
                &with(r#""sweep": {"liquid": 1, "from": 2, "to": 8, "step": 1}"#),
                "sweep.liquid",
            ),
            (
                &with(r#""sweep": {"from": 2, "to": 8, "step": null}"#),
                "sweep.step",
            ),
            (&with(r#""flotation": []"#), "flotation"),
            (
                &with(r#""flotation": {"resisting": [1], "required_factor": 1.3}"#),
                "flotation.resisting",
            ),
            (
                &with(r#""flotation": {"resisting": {"w": "1"}, "required_factor": 1.3}"#),
                "flotation.resisting.w",
            ),
            (
                &with(r#""flotation": {"resisting": {"w": 1}, "required_factor": null}"#),
                "flotation.required_factor",
            ),
        ];
        for (text, key) in cases {
            let e = err(text);
            assert_eq!(e.key, *key, "{e}\n{text}");
            let SidecarErrorKind::Json(message) = &*e.kind else {
                panic!("not a type error: {e}");
            };
            assert!(message.starts_with("expected "), "{e}");
            assert_eq!(e.line, Some(1), "{e}");
        }
    }

    #[test]
    fn unknown_top_level_key_names_it_and_its_line() {
        let e = err(
            "{\n  \"units\": \"m\",\n  \"liquid\": {\"level\": 1, \"density\": 1},\n  \"unit\": \"mm\"\n}",
        );
        assert_eq!(e.key, "unit");
        assert_eq!(e.line, Some(4));
        let message = e.to_string();
        assert!(
            message.contains(r#"unknown key "unit"; allowed here: "units", "up", "gravity""#),
            "{message}"
        );
        assert!(message.contains(r#""flotation""#), "{message}");
    }

    #[test]
    fn unknown_nested_key_names_it_its_line_and_the_expected_keys() {
        let text = "{\n  \"units\": \"mm\",\n  \"liquid\": {\n    \"denisty\": 1000,\n    \"level\": 2\n  }\n}";
        let e = err(text);
        assert_eq!(e.line, Some(4));
        // The key spans columns 5 to 13 of line 4.
        let column = e.column.expect("a column");
        assert!((5..=13).contains(&column), "{e}");
        assert_eq!(
            e.to_string(),
            format!(
                "sidecar gate.json, line 4, column {column}, at liquid.denisty: unknown key \"denisty\"; allowed here: \"level\", \"density\", \"layers\", \"surface_pressure\", \"preset\""
            )
        );
        for (text, key) in [
            (
                liquid(r#"{"level": 1, "layers": [{"density": 1, "downto": 0}]}"#),
                "liquid.layers[0].downto",
            ),
            (
                with(r#""cases": [{"name": "a", "lvl": 2}]"#),
                "cases[0].lvl",
            ),
            (with(r#""parts": {"p": {"side": "front"}}"#), "parts.p.side"),
            (
                with(r#""axes": {"a": {"point": [0, 0, 0], "dir": [1, 0, 0]}}"#),
                "axes.a.dir",
            ),
            (
                with(r#""sweep": {"from": 1, "to": 2, "by": 1}"#),
                "sweep.by",
            ),
            (
                with(r#""flotation": {"resisting": {}, "factor": 1}"#),
                "flotation.factor",
            ),
        ] {
            let e = err(&text);
            assert_eq!(e.key, key, "{e}");
            assert!(e.to_string().contains("unknown key"), "{e}");
            assert!(e.to_string().contains("allowed here:"), "{e}");
        }
    }

    #[test]
    fn syntax_errors_give_the_line() {
        let e = err("{\n  \"units\": \"m\"\n  \"liquid\": {}\n}");
        assert_eq!(e.line, Some(3));
        assert_eq!(e.key, "");
        assert!(
            e.to_string()
                .starts_with("sidecar gate.json, line 3, column "),
            "{e}"
        );
        let e = err("");
        assert!(
            e.to_string()
                .contains("the text ends before the JSON is complete"),
            "{e}"
        );
        let e = err(&format!("{} {{}}", with(r#""up": "+z""#)));
        assert!(
            e.to_string()
                .contains("more text after the end of the JSON document"),
            "{e}"
        );
    }

    #[test]
    fn a_byte_order_mark_is_ignored() {
        let s = ok(&format!("\u{feff}{}", with(r#""up": "-y""#)));
        assert_eq!(s.up, UpAxis::NegY);
    }

    #[test]
    fn duplicate_keys_are_refused() {
        let e = err(r#"{"units": "m", "units": "mm", "liquid": {"level": 1, "density": 1}}"#);
        assert!(e.to_string().contains(r#"duplicate key "units""#), "{e}");
        let e = err(&liquid(r#"{"level": 1, "level": 2, "density": 1}"#));
        assert_eq!(e.key, "liquid");
        assert!(e.to_string().contains(r#"duplicate key "level""#), "{e}");
        for (text, name) in [
            (r#"{"units": "m", "liquids": {"a": {"level": 1, "density": 1}, "a": {"level": 1, "density": 1}}}"#.to_owned(), "a"),
            (with(r#""parts": {"p": {}, "p": {}}"#), "p"),
            (with(r#""axes": {"h": {"point": [0,0,0], "direction": [1,0,0]}, "h": {"point": [0,0,0], "direction": [1,0,0]}}"#), "h"),
            (with(r#""flotation": {"resisting": {"w": 1, "w": 2}, "required_factor": 1}"#), "w"),
            (with(r#""cases": [{"name": "c", "liquids": {"liquid": {"level": 1}, "liquid": {"level": 2}}}]"#), "liquid"),
        ] {
            let e = err(&text);
            assert!(e.to_string().contains(&format!("duplicate key \"{name}\"")), "{e}");
            assert_eq!(e.line, Some(1));
        }
    }

    #[test]
    fn numbers_out_of_range_are_refused() {
        // JSON has no NaN or infinity; serde_json refuses a literal that overflows f64, so
        // every number that reaches validation is finite.
        for text in [
            with(r#""gravity": 1e400"#),
            liquid(r#"{"level": -1e999, "density": 1}"#),
        ] {
            let e = err(&text);
            assert!(e.to_string().contains("number out of range"), "{e}");
        }
    }

    #[test]
    fn density_must_be_positive() {
        for bad in ["0", "-1000", "-0.0"] {
            let e = err(&liquid(&format!(r#"{{"level": 1, "density": {bad}}}"#)));
            assert_eq!(e.key, "liquid.density");
            assert!(
                matches!(
                    *e.kind,
                    SidecarErrorKind::Liquid(LiquidError::Density { .. })
                ),
                "{e}"
            );
            assert!(
                e.to_string()
                    .contains("density must be a finite number > 0"),
                "{e}"
            );
        }
        let e = err(&liquid(
            r#"{"level": 1, "layers": [{"density": 900, "down_to": 0}, {"density": 0}]}"#,
        ));
        assert_eq!(e.key, "liquid.layers[1].density");
        let e = err(&with(r#""cases": [{"name": "c", "density": -1}]"#));
        assert_eq!(e.key, "cases[0].density");
        let e = err(&with(
            r#""cases": [{"name": "c", "liquids": {"liquid": {"density": 0}}}]"#,
        ));
        assert_eq!(e.key, "cases[0].liquids.liquid.density");
    }

    #[test]
    fn layers_out_of_order_name_the_key_and_line() {
        let text = r#"{
  "units": "m",
  "liquid": {"level": 12.0, "density": 1000},
  "cases": [
    {"name": "low", "level": 3.0},
    {"name": "oily", "layers": [
      {"density": 880, "down_to": 11.0},
      {"density": 950, "down_to": 9.0},
      {"density": 1000, "down_to": 10.0},
      {"density": 1200}
    ]}
  ]
}"#;
        let e = err(text);
        assert_eq!(e.key, "cases[1].layers[2].down_to");
        assert_eq!(e.line, Some(9));
        assert!(matches!(
            *e.kind,
            SidecarErrorKind::Liquid(LiquidError::LayersOutOfOrder { index: 2, .. })
        ));
        assert!(e.to_string().contains("list layers top to bottom"), "{e}");

        let e = err(&liquid(
            r#"{"level": 1, "layers": [{"density": 900}, {"density": 1000}]}"#,
        ));
        assert_eq!(e.key, "liquid.layers[0]");
        let e = err(&liquid(
            r#"{"level": 1, "layers": [{"density": 900, "down_to": 1}, {"density": 1000, "down_to": 1}]}"#,
        ));
        assert_eq!(e.key, "liquid.layers[1].down_to");
        let e = err(&liquid(r#"{"level": 1, "layers": []}"#));
        assert_eq!(e.key, "liquid.layers");
        assert_eq!(*e.kind, SidecarErrorKind::Liquid(LiquidError::NoLayers));
    }

    fn layer(density_kg_m3: f64, down_to_m: Option<f64>) -> Layer {
        Layer {
            density_kg_m3,
            down_to_m,
        }
    }

    #[test]
    fn cases_override_the_base_liquid() {
        let s = ok(r#"{
  "units": "m",
  "liquid": {"level": 12.0, "layers": [{"density": 880, "down_to": 11.0}, {"density": 1000}], "surface_pressure": 50},
  "cases": [
    {"name": "as_given"},
    {"name": "high", "level": 14.0},
    {"name": "flushed", "density": 1010},
    {"name": "vented", "surface_pressure": 0},
    {"name": "sea", "preset": "sea_water"}
  ]
}"#);
        let stratified = vec![layer(880.0, Some(11.0)), layer(1000.0, None)];
        let names: Vec<&str> = s.cases.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["as_given", "high", "flushed", "vented", "sea"]);
        let l: Vec<&Liquid> = s.cases.iter().map(|c| &c.liquids[0]).collect();
        assert_eq!(
            *l[0],
            Liquid {
                level_m: 12.0,
                surface_pressure_pa: 50.0,
                layers: stratified.clone()
            }
        );
        assert_eq!(
            *l[1],
            Liquid {
                level_m: 14.0,
                surface_pressure_pa: 50.0,
                layers: stratified.clone()
            }
        );
        // A case's density replaces the inherited layers.
        assert_eq!(
            *l[2],
            Liquid {
                level_m: 12.0,
                surface_pressure_pa: 50.0,
                layers: vec![layer(1010.0, None)]
            }
        );
        assert_eq!(l[3].surface_pressure_pa, 0.0);
        assert_eq!(l[3].layers, stratified);
        assert_eq!(l[4].layers, [layer(1025.0, None)]);

        // And a case's layers replace an inherited density.
        let s = ok(&with(
            r#""cases": [{"name": "oil", "layers": [{"density": 880, "down_to": 4.0}, {"density": 1000}]}]"#,
        ));
        assert_eq!(
            s.cases[0].liquids[0].layers,
            [layer(880.0, Some(4.0)), layer(1000.0, None)]
        );
        assert_eq!(s.cases[0].liquids[0].level_m, 5.0);
    }

    #[test]
    fn case_names_are_required_unique_and_usable_in_file_names() {
        let e = err(&with(r#""cases": [{"name": "a"}, {"level": 3}]"#));
        assert_eq!(e.key, "cases[1]");
        assert_eq!(*e.kind, SidecarErrorKind::CaseWithoutName { index: 1 });
        let e = err(&with(
            "\"cases\": [{\"name\": \"a\"},\n {\"name\": \"b\"},\n {\"name\": \"a\", \"level\": 3}]",
        ));
        assert_eq!(e.key, "cases[2].name");
        assert_eq!(e.line, Some(3));
        assert_eq!(
            *e.kind,
            SidecarErrorKind::DuplicateCase {
                name: "a".into(),
                first: 0
            }
        );
        for bad in ["", "../up", "a\\b", "tab\there"] {
            let e = err(&with(&format!(
                r#""cases": [{{"name": {}}}]"#,
                serde_json::json!(bad)
            )));
            assert_eq!(e.key, "cases[0].name", "{e}");
            assert!(
                matches!(*e.kind, SidecarErrorKind::BadCaseName { .. }),
                "{e}"
            );
        }
        let e = err(&with(r#""cases": []"#));
        assert_eq!(e.key, "cases");
        assert!(e.to_string().contains("cases is empty"), "{e}");
    }

    #[test]
    fn a_missing_level_or_density_is_named() {
        let e = err("{\"units\": \"m\",\n \"liquid\": {\"density\": 1000}}");
        assert_eq!(e.key, "liquid.level");
        assert_eq!(e.line, Some(2));
        assert!(
            e.to_string().contains("level is missing: add \"level\""),
            "{e}"
        );
        let e = err(&liquid(r#"{"level": 3}"#));
        assert_eq!(e.key, "liquid.density");
        assert!(e.to_string().contains("\"preset\""), "{e}");

        // The base may leave the level to the cases, as long as every case sets one.
        let s = ok(
            r#"{"units": "m", "liquid": {"density": 1000}, "cases": [{"name": "low", "level": 1}, {"name": "high", "level": 4}]}"#,
        );
        assert_eq!(s.cases[1].liquids[0].level_m, 4.0);
        let e = err(
            r#"{"units": "m", "liquid": {"density": 1000}, "cases": [{"name": "low", "level": 1}, {"name": "high"}]}"#,
        );
        assert_eq!(e.key, "cases[1]");
        assert_eq!(
            *e.kind,
            SidecarErrorKind::Incomplete {
                case: "high".into(),
                liquid: "liquid".into(),
                missing: "level"
            }
        );
    }

    #[test]
    fn two_liquids_parts_and_per_case_overrides() {
        let s = ok(TWO_SIDED);
        let names: Vec<&str> = s.liquids.iter().map(|l| l.name.as_str()).collect();
        assert_eq!(names, ["headwater", "tailwater"]);
        assert_eq!(s.liquids[1].preset.as_deref(), Some("fresh_water_15c"));
        assert_eq!(
            s.parts.default,
            PartRule {
                liquid: LiquidChoice::Named(0),
                wet_side: None
            }
        );
        assert_eq!(
            s.parts.named,
            [
                (
                    "upstream_skin".to_owned(),
                    PartRule {
                        liquid: LiquidChoice::Named(0),
                        wet_side: Some(WetSide::Front)
                    }
                ),
                (
                    "downstream_face".to_owned(),
                    PartRule {
                        liquid: LiquidChoice::Named(1),
                        wet_side: Some(WetSide::Back)
                    }
                ),
                (
                    "deck".to_owned(),
                    PartRule {
                        liquid: LiquidChoice::Dry,
                        wet_side: None
                    }
                ),
            ]
        );
        let tail_density = water_density_cipm(15.0);
        let normal = &s.cases[0];
        assert_eq!(normal.name, "normal");
        assert_eq!(
            normal.liquids,
            [
                Liquid::uniform(8.0, 1000.0),
                Liquid::uniform(
                    2.5,
                    water::find_preset("fresh_water_15c")
                        .expect("preset")
                        .density_kg_m3
                )
            ]
        );
        approx::assert_abs_diff_eq!(
            normal.liquids[1].layers[0].density_kg_m3,
            tail_density,
            epsilon = 0.001
        );
        let flood = &s.cases[1];
        assert_eq!(flood.liquids[0], Liquid::uniform(9.0, 1000.0));
        assert_eq!(flood.liquids[1].level_m, 4.0);
        assert_eq!(flood.liquids[1].surface_pressure_pa, 100.0);
        assert_eq!(flood.liquids[1].layers, normal.liquids[1].layers);

        assert_eq!(s.part_liquid("upstream_skin"), Ok(Some(0)));
        assert_eq!(s.part_liquid("downstream_face"), Ok(Some(1)));
        assert_eq!(s.part_liquid("deck"), Ok(None));
        assert_eq!(s.part_liquid("anything_else"), Ok(Some(0)));
        assert_eq!(s.part_wet_side("downstream_face"), Some(WetSide::Back));
        assert_eq!(s.part_wet_side("deck"), None);
    }

    #[test]
    fn part_rules_merge_named_over_star_over_top_level() {
        let s = ok(r#"{
  "units": "m", "wet_side": "outside",
  "liquids": {"a": {"level": 1, "density": 1000}, "b": {"level": 2, "density": 1000}},
  "parts": {"p": {"wet_side": "front"}, "q": {"liquid": "b"}}
}"#);
        assert_eq!(
            s.parts.rule_for("p"),
            PartRule {
                liquid: LiquidChoice::Default,
                wet_side: Some(WetSide::Front)
            }
        );
        assert_eq!(s.part_liquid("q"), Ok(Some(1)));
        assert_eq!(s.part_wet_side("q"), Some(WetSide::Outside));
        let e = s
            .part_liquid("p")
            .expect_err("two liquids and nothing assigns one");
        assert_eq!(
            e.to_string(),
            r#"part "p" has no liquid and the sidecar has several ("a", "b"): add "parts": {"p": {"liquid": "a"}}, or a "*" entry for every part not named"#
        );
        let s = ok(&with(r#""parts": {"*": {"wet_side": "back"}}"#));
        assert_eq!(s.part_liquid("any"), Ok(Some(0)));
        assert_eq!(s.part_wet_side("any"), Some(WetSide::Back));
    }

    #[test]
    fn unknown_liquid_names_are_named_wherever_they_appear() {
        for (from, to, key) in [
            (
                r#""liquid": "headwater""#,
                r#""liquid": "headwatr""#,
                "parts.upstream_skin.liquid",
            ),
            (
                r#""liquids": {"headwater": {"level": 9.0}"#,
                r#""liquids": {"tail": {"level": 9.0}"#,
                "cases[1].liquids.tail",
            ),
        ] {
            let text = TWO_SIDED.replacen(from, to, 1);
            let e = err(&text);
            assert_eq!(e.key, key, "{e}");
            let SidecarErrorKind::UnknownLiquid { name, known } = &*e.kind else {
                panic!("{e}");
            };
            assert!(to.contains(name.as_str()));
            assert_eq!(known, r#""headwater", "tailwater""#);
        }
        let text = TWO_SIDED.replacen(
            "\"cases\"",
            "\"sweep\": {\"liquid\": \"river\", \"from\": 1, \"to\": 2, \"step\": 1},\n  \"cases\"",
            1,
        );
        let e = err(&text);
        assert_eq!(e.key, "sweep.liquid");
        assert!(e.to_string().contains(r#"unknown liquid "river""#), "{e}");
        assert_eq!(e.line, Some(13));
    }

    #[test]
    fn liquid_forms_that_cannot_be_read_one_way_are_refused() {
        let e = err(
            r#"{"units": "m", "liquid": {"level": 1, "density": 1}, "liquids": {"a": {"level": 1, "density": 1}}}"#,
        );
        assert_eq!(*e.kind, SidecarErrorKind::LiquidAndLiquids);
        let e = err(r#"{"units": "m"}"#);
        assert_eq!(*e.kind, SidecarErrorKind::NoLiquid);
        let e = err(r#"{"units": "m", "liquids": {}}"#);
        assert_eq!(e.key, "liquids");
        let text = TWO_SIDED.replacen(
            r#"{"name": "normal"}"#,
            r#"{"name": "normal", "level": 3}"#,
            1,
        );
        let e = err(&text);
        assert_eq!(e.key, "cases[0].level");
        assert!(
            e.to_string()
                .contains(r#"set it per liquid, e.g. "liquids": {"headwater": {"level": ...}}"#),
            "{e}"
        );
        let e = err(&with(
            r#""cases": [{"name": "c", "level": 2, "liquids": {"liquid": {"density": 1}}}]"#,
        ));
        assert_eq!(*e.kind, SidecarErrorKind::CaseKeysAndLiquids);
        // With one liquid, both ways of overriding it work.
        let a = ok(&with(r#""cases": [{"name": "c", "level": 2}]"#));
        let b = ok(&with(
            r#""cases": [{"name": "c", "liquids": {"liquid": {"level": 2}}}]"#,
        ));
        assert_eq!(a, b);
    }

    #[test]
    fn density_layers_and_preset_exclude_each_other() {
        for (body, keys) in [
            (
                r#""density": 1, "layers": [{"density": 1}]"#,
                r#""density" and "layers""#,
            ),
            (
                r#""density": 1, "preset": "sea_water""#,
                r#""density" and "preset""#,
            ),
            (
                r#""layers": [{"density": 1}], "preset": "sea_water""#,
                r#""layers" and "preset""#,
            ),
        ] {
            let e = err(&liquid(&format!(r#"{{"level": 1, {body}}}"#)));
            assert_eq!(
                *e.kind,
                SidecarErrorKind::Ambiguous { keys: keys.into() },
                "{e}"
            );
            assert!(e.to_string().contains("ambiguous"), "{e}");
        }
    }

    #[test]
    fn presets_supply_the_density() {
        let s = ok(&liquid(r#"{"level": 2, "preset": "fresh_water_4c"}"#));
        assert_eq!(s.liquids[0].preset.as_deref(), Some("fresh_water_4c"));
        // CIPM 2001 at 4 °C, Tanaka et al. (2001) (coefficients from memory): 999.9749 kg/m³.
        approx::assert_abs_diff_eq!(
            s.cases[0].liquids[0].layers[0].density_kg_m3,
            999.9749,
            epsilon = 0.0001
        );
        let s = ok(&liquid(r#"{"level": 2, "preset": "sea_water"}"#));
        assert_eq!(s.cases[0].liquids[0], Liquid::uniform(2.0, 1025.0));
        let e = err(&liquid(r#"{"level": 2, "preset": "brine"}"#));
        assert_eq!(e.key, "liquid.preset");
        assert!(
            e.to_string()
                .contains(r#"unknown preset "brine": the presets are "fresh_water_4c""#),
            "{e}"
        );
    }

    #[test]
    fn sections_are_vertical_planes_in_the_sidecars_units() {
        // No key: no named section, as every sidecar written before the key.
        assert!(ok(&with(r#""gravity": 9.81"#)).sections.is_empty());
        let s = ok(r#"{"units": "mm", "sidecar_units": "mm", "up": "+y",
            "liquid": {"level": 5000, "density": 1000},
            "sections": {"gate centre": {"point": [1000, 0, 2500], "normal": [3, 0, 4]}}}"#);
        assert_eq!(s.sections.len(), 1);
        assert_eq!(s.sections[0].name, "gate centre");
        // Sidecar lengths in mm become metres, like the axes' points.
        assert_eq!(s.sections[0].point_m, [1.0, 0.0, 2.5]);
        // Closed form: (3, 0, 4)/5, horizontal for up = +y.
        approx::assert_abs_diff_eq!(s.sections[0].normal[0], 0.6, epsilon = 1e-15);
        approx::assert_abs_diff_eq!(s.sections[0].normal[2], 0.8, epsilon = 1e-15);

        let text = "{\"units\": \"m\", \"liquid\": {\"level\": 5, \"density\": 1000},\n\"sections\": {\"a\": {\"point\": [0, 0, 0],\n\"normal\": [1, 0, 1]}}}";
        let e = err(text);
        assert_eq!(e.key, "sections.a.normal");
        assert_eq!(e.line, Some(3));
        let shown = e.to_string();
        assert!(shown.starts_with("sidecar gate.json, line 3"), "{shown}");
        assert!(shown.contains("not horizontal"), "{shown}");
        assert!(shown.contains("at sections.a.normal"), "{shown}");

        let e = err(&with(
            r#""sections": {"a": {"point": [0, 0, 0], "normal": [0, 0, 0]}}"#,
        ));
        assert_eq!(e.key, "sections.a.normal");
        assert_eq!(*e.kind, SidecarErrorKind::ZeroNormal([0.0; 3]));
        let e = err(&with(
            r#""sections": {"a": {"point": [0, 0], "normal": [1, 0, 0]}}"#,
        ));
        assert_eq!(e.key, "sections.a.point");
        let e = err(&with(r#""sections": {"a": {"point": [0, 0, 0]}}"#));
        assert!(e.to_string().contains("\"normal\""), "{e}");
        let e = err(&with(
            r#""sections": [{"point": [0, 0, 0], "normal": [1, 0, 0]}]"#,
        ));
        assert_eq!(e.key, "sections");
    }

    #[test]
    fn axes_are_normalised() {
        let s = ok(&with(
            r#""axes": {"trunnion": {"point": [1, 2, 3], "direction": [0, 3, 4]}, "hinge": {"point": [0, 0, 0], "direction": [-2, 0, 0]}}"#,
        ));
        assert_eq!(s.axes[0].name, "trunnion");
        assert_eq!(s.axes[0].point_m, [1.0, 2.0, 3.0]);
        // Closed form: (0, 3, 4)/5.
        approx::assert_abs_diff_eq!(s.axes[0].direction[1], 0.6, epsilon = 1e-15);
        approx::assert_abs_diff_eq!(s.axes[0].direction[2], 0.8, epsilon = 1e-15);
        assert_eq!(s.axes[1].direction, [-1.0, 0.0, 0.0]);
        let e = err(&with(
            r#""axes": {"h": {"point": [0, 0, 0], "direction": [0, 0, 0]}}"#,
        ));
        assert_eq!(e.key, "axes.h.direction");
        assert_eq!(*e.kind, SidecarErrorKind::ZeroDirection([0.0; 3]));
        let s = ok(&with(
            r#""axes": {"h": {"point": [0, 0, 0], "direction": [1e308, 1e308, 0]}, "t": {"point": [0, 0, 0], "direction": [0, 0, 1e-320]}}"#,
        ));
        approx::assert_abs_diff_eq!(
            s.axes[0].direction[0],
            std::f64::consts::FRAC_1_SQRT_2,
            epsilon = 1e-15
        );
        assert_eq!(s.axes[1].direction, [0.0, 0.0, 1.0]);
    }

    #[test]
    fn moment_about_is_read() {
        let s = ok(&with(r#""moment_about": [1.5, -2, 3e3]"#));
        assert_eq!(s.moment_about_m, [1.5, -2.0, 3000.0]);
    }

    fn sweep(from: f64, to: f64, step: f64) -> Sweep {
        Sweep {
            liquid: 0,
            from_m: from,
            to_m: to,
            step_m: step,
        }
    }

    #[test]
    fn sweep_levels_include_the_end() {
        let s = ok(&with(r#""sweep": {"from": 2.0, "to": 8.0, "step": 0.25}"#));
        let sw = s.sweep.expect("sweep");
        assert_eq!(sw.liquid, 0);
        let levels = sw.levels();
        // Closed form: (8 − 2)/0.25 + 1 = 25 levels, level i = 2 + 0.25·i.
        assert_eq!(levels.len(), 25);
        for (i, z) in levels.iter().enumerate() {
            assert_eq!(*z, 2.0 + 0.25 * i as f64);
        }
        assert_eq!(levels[24], 8.0);
        // 0.3/0.1 is 2.9999999999999996 in f64: the end still counts.
        let levels = sweep(0.0, 0.3, 0.1).levels();
        assert_eq!(levels.len(), 4);
        approx::assert_abs_diff_eq!(levels[3], 0.3, epsilon = 1e-15);
        // A range that is not a whole number of steps stops below the end.
        assert_eq!(sweep(0.0, 1.0, 0.3).levels().len(), 4);
        assert_eq!(sweep(5.0, 5.0, 1.0).levels(), [5.0]);
        assert_eq!(
            sweep(0.0, MAX_SWEEP_STEPS as f64, 1.0).levels().len(),
            MAX_SWEEP_STEPS + 1
        );
    }

    #[test]
    fn bad_sweeps_are_refused() {
        for (body, key) in [
            (r#""from": 2, "to": 8, "step": 0"#, "sweep.step"),
            (r#""from": 2, "to": 8, "step": -0.5"#, "sweep.step"),
            (r#""from": 8, "to": 2, "step": 0.5"#, "sweep.to"),
            (r#""from": 0, "to": 8, "step": 1e-6"#, "sweep.step"),
            (
                r#""from": -1e300, "to": 1e300, "step": 1e-300"#,
                "sweep.step",
            ),
            (r#""to": 8, "step": 1"#, "sweep"),
        ] {
            let e = err(&with(&format!(r#""sweep": {{{body}}}"#)));
            assert_eq!(e.key, key, "{e}");
        }
        let e = err(&with(r#""sweep": {"from": 0, "to": 8, "step": 1e-6}"#));
        assert!(
            e.to_string()
                .contains("more than 10000 steps: use a larger step"),
            "{e}"
        );
        let text = TWO_SIDED.replacen(
            "\"cases\"",
            "\"sweep\": {\"from\": 1, \"to\": 2, \"step\": 1},\n  \"cases\"",
            1,
        );
        let e = err(&text);
        assert_eq!(e.key, "sweep.liquid");
        assert!(e.to_string().contains(r#"add "liquid": "<name>""#), "{e}");
        let text = TWO_SIDED.replacen("\"cases\"", "\"sweep\": {\"liquid\": \"tailwater\", \"from\": 1, \"to\": 2, \"step\": 1},\n  \"cases\"", 1);
        assert_eq!(ok(&text).sweep.map(|s| s.liquid), Some(1));
    }

    #[test]
    fn flotation_is_read_and_checked() {
        let s = ok(&with(
            r#""flotation": {"resisting": {"structure": 1.2e6, "soil_above": 3.0e5}, "required_factor": 1.3}"#,
        ));
        assert_eq!(
            s.flotation,
            Some(Flotation {
                resisting: vec![("structure".into(), 1.2e6), ("soil_above".into(), 3.0e5)],
                required_factor: 1.3,
                preset: None,
            })
        );
        for (body, key) in [
            (
                r#""resisting": {"w": -1}, "required_factor": 1.3"#,
                "flotation.resisting.w",
            ),
            (
                r#""resisting": {}, "required_factor": 1.3"#,
                "flotation.resisting",
            ),
            (
                r#""resisting": {"w": 1}, "required_factor": 0"#,
                "flotation.required_factor",
            ),
            (r#""resisting": {"w": 1}"#, "flotation.required_factor"),
        ] {
            let e = err(&with(&format!(r#""flotation": {{{body}}}"#)));
            assert_eq!(e.key, key, "{e}");
        }
        assert!(
            ok(&with(
                r#""flotation": {"resisting": {"w": 0}, "required_factor": 1}"#
            ))
            .flotation
            .is_some()
        );
    }

    #[test]
    fn strings_of_absurd_length_are_refused_with_their_line() {
        let long = "x".repeat(MAX_STRING_BYTES + 1);
        let at_cap = "x".repeat(MAX_STRING_BYTES);
        for text in [
            with(&format!("\"cases\": [{{\"name\": \"{long}\"}}]")),
            format!("{{\n \"{long}\": 1}}"),
            with(&format!(
                "\"liquid\": {{\"level\": 1, \"preset\": \"{long}\"}}"
            )),
        ] {
            let e = err(&text);
            // Where the string's opening quote is (the texts are ASCII).
            let quote = text.find(&long).expect("present") - 1;
            let line = text[..quote].matches('\n').count() + 1;
            let column = quote - text[..quote].rfind('\n').map_or(0, |i| i + 1) + 1;
            assert_eq!((e.line, e.column), (Some(line), Some(column)), "{e}");
            assert_eq!(
                *e.kind,
                SidecarErrorKind::StringTooLong {
                    len: MAX_STRING_BYTES + 1,
                    limit: MAX_STRING_BYTES
                }
            );
            assert!(e.to_string().len() < 400, "{e}");
        }
        // Escapes count as written; a string at the cap is read.
        let escaped = "\\\"".repeat(MAX_STRING_BYTES / 2);
        let e = err(&with(&format!("\"cases\": [{{\"name\": \"{escaped}x\"}}]")));
        assert!(
            matches!(*e.kind, SidecarErrorKind::StringTooLong { .. }),
            "{e}"
        );
        let s = ok(&with(&format!("\"cases\": [{{\"name\": \"{at_cap}\"}}]")));
        assert_eq!(s.cases[0].name, at_cap);
        assert_eq!(long_string("\"open", 3), Some((0, 4)));
        assert_eq!(long_string("\"ab\\", 3), None);
    }

    #[test]
    fn absurd_nesting_is_an_error_not_a_stack_overflow() {
        let deep = 100_000;
        let arrays = format!("{}{}", "[".repeat(deep), "]".repeat(deep));
        let objects = format!("{}{}", "{\"a\":".repeat(deep), "}".repeat(deep));
        for text in [
            arrays.clone(),
            format!(r#"{{"units": "m", "liquid": {arrays}}}"#),
            format!(r#"{{"units": "m", "liquid": {{"level": 1, "layers": {arrays}}}}}"#),
            with(&format!(r#""moment_about": {arrays}"#)),
            with(&format!(r#""parts": {objects}"#)),
            objects.clone(),
        ] {
            let e = err(&text);
            assert_eq!(e.line, Some(1), "{e}");
        }
    }

    #[test]
    fn a_flotation_factor_comes_from_a_number_or_a_named_preset_never_both() {
        let s = ok(&with(
            r#""flotation": {"resisting": {"w": 1e6}, "factor_preset": "ufc-3-320-05a"}"#,
        ));
        let f = s.flotation.expect("flotation");
        assert_eq!(f.required_factor, 2.0);
        assert_eq!(f.preset.map(|p| p.name), Some("ufc-3-320-05a".to_owned()));
        let s = ok(&with(
            r#""flotation": {"resisting": {"w": 1e6}, "required_factor": 1.5}"#,
        ));
        assert_eq!(s.flotation.expect("flotation").preset, None);

        // An unknown name: the file, the line of the key, and every known name.
        let text = "{\"units\": \"m\", \"liquid\": {\"level\": 5.0, \"density\": 1000},\n  \"flotation\": {\"resisting\": {\"w\": 1},\n    \"factor_preset\": \"usace-normal\"}}";
        let e = err(text);
        assert_eq!(
            (e.line, e.key.as_str()),
            (Some(3), "flotation.factor_preset")
        );
        let message = e.to_string();
        assert!(
            message.starts_with("sidecar gate.json, line 3"),
            "{message}"
        );
        for p in factor_presets() {
            assert!(message.contains(&format!("\"{}\"", p.name)), "{message}");
        }
        let e = err(&with(
            r#""flotation": {"resisting": {"w": 1}, "required_factor": 1.3, "factor_preset": "ufc-3-320-05a"}"#,
        ));
        assert_eq!(*e.kind, SidecarErrorKind::FactorAndPreset);
        let e = err(&with(r#""flotation": {"resisting": {"w": 1}}"#));
        assert!(e.to_string().contains("factor_preset"), "{e}");
        let e = err(&with(
            r#""flotation": {"resisting": {"w": 1}, "factor_preset": 1.3}"#,
        ));
        assert_eq!(e.key, "flotation.factor_preset");
    }
}
