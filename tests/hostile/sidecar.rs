//! Hostile sidecars: every wrong type for every key, absurd nesting, duplicate keys,
//! numbers beyond f64, invalid UTF-8, strings and files of absurd size.
//!
//! The keys are those of CONTRACT.md ("Sidecar keys", "Pinned extensions") as mirrored in
//! `src/sidecar/raw.rs`; a test reads that file and fails when a key is added there
//! without being added to [`KEYS`].

use serde_json::{Value, json};

use crate::*;

/// The JSON type a key takes.
#[derive(Clone, Copy, Debug)]
enum Kind {
    Number,
    /// A string or a keyword.
    Text,
    /// A string, or `null` (a part's liquid).
    TextOrNull,
    /// An object with fixed keys.
    Object,
    /// An object of user-named entries.
    Named,
    /// An array of objects.
    Array,
    /// `[x, y, z]`.
    Triple,
    /// An array of numbers.
    Numbers,
}

impl Kind {
    /// Values of every JSON type this kind does not take (and near misses).
    fn wrong_values(self) -> Vec<Value> {
        let mut v = match self {
            Kind::Number => vec![json!("1.5"), json!(true), json!([1.5]), json!({})],
            Kind::Text | Kind::TextOrNull => {
                vec![json!(1), json!(false), json!(["m"]), json!({"m": 1})]
            }
            Kind::Object | Kind::Named => {
                vec![json!(1), json!("x"), json!(true), json!([]), json!([1, 2])]
            }
            Kind::Array => vec![
                json!(1),
                json!("x"),
                json!(true),
                json!({}),
                json!([1]),
                json!(["x"]),
                json!([null]),
                json!([[]]),
            ],
            Kind::Numbers => vec![
                json!(1),
                json!("x"),
                json!(true),
                json!({}),
                json!(["x"]),
                json!([null]),
                json!([[]]),
            ],
            Kind::Triple => vec![
                json!(1),
                json!("x"),
                json!(true),
                json!({}),
                json!([]),
                json!([1, 2]),
                json!([1, 2, 3, 4]),
                json!(["a", "b", "c"]),
                json!([1, null, 3]),
                json!([[1], 2, 3]),
            ],
        };
        if !matches!(self, Kind::TextOrNull) {
            v.push(Value::Null);
        }
        v
    }
}

/// Which valid sidecar a key is tried in (`liquid` and `liquids` exclude each other).
#[derive(Clone, Copy, Debug)]
enum Base {
    Shorthand,
    Named,
}

/// Every key of the sidecar, at a path that exists in its base, with its kind. Paths use
/// the key-path notation of the error messages.
const KEYS: &[(Base, &str, Kind)] = &[
    (Base::Shorthand, "units", Kind::Text),
    (Base::Shorthand, "up", Kind::Text),
    (Base::Shorthand, "gravity", Kind::Number),
    (Base::Shorthand, "wet_side", Kind::Text),
    (Base::Shorthand, "liquid", Kind::Object),
    (Base::Shorthand, "liquid.level", Kind::Number),
    (Base::Shorthand, "liquid.density", Kind::Number),
    (Base::Shorthand, "liquid.layers", Kind::Array),
    (Base::Shorthand, "liquid.layers[0]", Kind::Object),
    (Base::Shorthand, "liquid.layers[0].density", Kind::Number),
    (Base::Shorthand, "liquid.layers[0].down_to", Kind::Number),
    (Base::Shorthand, "liquid.surface_pressure", Kind::Number),
    (Base::Shorthand, "liquid.preset", Kind::Text),
    (Base::Shorthand, "parts", Kind::Named),
    (Base::Shorthand, "parts.*", Kind::Object),
    (Base::Shorthand, "parts.*.liquid", Kind::TextOrNull),
    (Base::Shorthand, "parts.*.wet_side", Kind::Text),
    (Base::Shorthand, "moment_about", Kind::Triple),
    (Base::Shorthand, "axes", Kind::Named),
    (Base::Shorthand, "axes.hinge", Kind::Object),
    (Base::Shorthand, "axes.hinge.point", Kind::Triple),
    (Base::Shorthand, "axes.hinge.direction", Kind::Triple),
    (Base::Shorthand, "sections", Kind::Named),
    (Base::Shorthand, "sections.middle", Kind::Object),
    (Base::Shorthand, "sections.middle.point", Kind::Triple),
    (Base::Shorthand, "sections.middle.normal", Kind::Triple),
    (Base::Shorthand, "cases", Kind::Array),
    (Base::Shorthand, "cases[0]", Kind::Object),
    (Base::Shorthand, "cases[0].name", Kind::Text),
    (Base::Shorthand, "cases[0].level", Kind::Number),
    (Base::Shorthand, "cases[0].density", Kind::Number),
    (Base::Shorthand, "cases[0].layers", Kind::Array),
    (Base::Shorthand, "cases[0].surface_pressure", Kind::Number),
    (Base::Shorthand, "cases[0].preset", Kind::Text),
    (Base::Shorthand, "sweep", Kind::Object),
    (Base::Shorthand, "sweep.liquid", Kind::Text),
    (Base::Shorthand, "sweep.from", Kind::Number),
    (Base::Shorthand, "sweep.to", Kind::Number),
    (Base::Shorthand, "sweep.step", Kind::Number),
    (Base::Shorthand, "flotation", Kind::Object),
    (Base::Shorthand, "flotation.resisting", Kind::Named),
    (Base::Shorthand, "flotation.resisting.weight", Kind::Number),
    (Base::Shorthand, "flotation.required_factor", Kind::Number),
    (Base::Shorthand, "flotation.factor_preset", Kind::Text),
    (Base::Shorthand, "field_exports", Kind::Text),
    (Base::Shorthand, "sidecar_units", Kind::Text),
    (Base::Shorthand, "datum", Kind::Object),
    (Base::Shorthand, "datum.name", Kind::Text),
    (Base::Shorthand, "datum.mesh_origin_elevation", Kind::Number),
    (Base::Shorthand, "floating", Kind::Object),
    (Base::Shorthand, "floating.mass", Kind::Number),
    (Base::Shorthand, "floating.centre_of_gravity", Kind::Triple),
    (Base::Shorthand, "floating.liquid", Kind::Text),
    (Base::Shorthand, "floating.length_axis", Kind::Text),
    (Base::Shorthand, "floating.heel_angles", Kind::Numbers),
    (Base::Shorthand, "floating.criteria", Kind::Text),
    (
        Base::Shorthand,
        "floating.free_surface_moments",
        Kind::Named,
    ),
    (
        Base::Shorthand,
        "floating.free_surface_moments.tank",
        Kind::Object,
    ),
    (
        Base::Shorthand,
        "floating.free_surface_moments.tank.moment_m4",
        Kind::Number,
    ),
    (
        Base::Shorthand,
        "floating.free_surface_moments.tank.density",
        Kind::Number,
    ),
    (Base::Shorthand, "cases[0].floating", Kind::Object),
    (Base::Named, "liquids", Kind::Named),
    (Base::Named, "liquids.water", Kind::Object),
    (Base::Named, "liquids.water.level", Kind::Number),
    (Base::Named, "liquids.water.density", Kind::Number),
    (Base::Named, "liquids.water.layers", Kind::Array),
    (Base::Named, "liquids.water.surface_pressure", Kind::Number),
    (Base::Named, "liquids.water.preset", Kind::Text),
    (Base::Named, "cases[0].liquids", Kind::Named),
    (Base::Named, "cases[0].liquids.water", Kind::Object),
    (Base::Named, "cases[0].liquids.water.level", Kind::Number),
];

/// A valid sidecar for the test box that uses every key except `liquids`.
fn shorthand() -> Value {
    json!({
        "units": "m",
        "up": "+z",
        "gravity": 9.80665,
        "wet_side": "outside",
        "liquid": {
            "level": -0.5,
            "layers": [{"density": 880, "down_to": -1.0}, {"density": 1000}],
            "surface_pressure": 0
        },
        "parts": {"*": {"liquid": "liquid", "wet_side": "outside"}},
        "moment_about": [0, 0, 0],
        "axes": {"hinge": {"point": [0, 0, 0], "direction": [1, 0, 0]}},
        "sections": {"middle": {"point": [0, 0, 0], "normal": [0, 1, 0]}},
        "cases": [
            {"name": "flood", "level": 0.0, "surface_pressure": 10, "density": 1000,
             "floating": {"mass": 2000}},
            {"name": "sea", "preset": "sea_water"}
        ],
        "sweep": {"liquid": "liquid", "from": -2, "to": 0, "step": 0.5},
        "flotation": {"resisting": {"weight": 1000}, "required_factor": 1.3},
        "field_exports": "auto",
        "sidecar_units": "m",
        "datum": {"name": "site datum", "mesh_origin_elevation": 0.0},
        "floating": {"mass": 12000, "centre_of_gravity": [2, -0.5, -2.5], "liquid": "liquid",
            "length_axis": "+x", "heel_angles": [0, 10], "criteria": "imo-2008-is-code-general",
            "free_surface_moments": {"tank": {"moment_m4": 1.0, "density": 1000}}}
    })
}

/// A valid sidecar with named `liquids` and a case that overrides one.
fn named() -> Value {
    json!({
        "units": "m",
        "liquids": {"water": {"level": -0.5, "density": 1000}},
        "parts": {"*": {"liquid": "water"}},
        "cases": [{"name": "flood", "liquids": {"water": {"level": 0.0}}}]
    })
}

fn base(b: Base) -> Value {
    match b {
        Base::Shorthand => shorthand(),
        Base::Named => named(),
    }
}

/// Sets the value at `path` (`a.b[0].c`), creating the last key if needed.
fn set(doc: &mut Value, path: &str, value: Value) {
    let mut segments: Vec<String> = Vec::new();
    for part in path.split('.') {
        match part.split_once('[') {
            Some((key, index)) => {
                segments.push(key.to_owned());
                segments.push(index.trim_end_matches(']').to_owned());
            }
            None => segments.push(part.to_owned()),
        }
    }
    let (last, parents) = segments.split_last().expect("a path");
    let mut at = doc;
    for s in parents {
        at = match at {
            Value::Array(a) => &mut a[s.parse::<usize>().expect("index")],
            Value::Object(m) => m.get_mut(s).unwrap_or_else(|| panic!("{path}: no {s}")),
            _ => panic!("{path}: {s} is not a container"),
        };
    }
    match at {
        Value::Array(a) => a[last.parse::<usize>().expect("index")] = value,
        Value::Object(m) => {
            m.insert(last.clone(), value);
        }
        _ => panic!("{path}: not a container"),
    }
}

/// A folder with the test box and the sidecar `text`.
fn with_sidecar(text: impl AsRef<[u8]>) -> Folder {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", text);
    f
}

fn sidecar_refused(text: impl AsRef<[u8]>, words: &[&str]) -> String {
    let f = with_sidecar(text);
    refused(&f, "tank.stl", "tank.json", words)
}

#[test]
fn both_bases_compute() {
    for b in [Base::Shorthand, Base::Named] {
        let f = with_sidecar(serde_json::to_string_pretty(&base(b)).expect("JSON"));
        let run = f.calc_env(&["tank.stl"], &[]);
        assert_eq!(run.code, Some(0), "{b:?}: {}", run.stderr);
    }
}

#[test]
fn every_wrong_type_for_every_key() {
    let mut failures = Vec::new();
    let mut cases = 0;
    for &(b, path, kind) in KEYS {
        for wrong in kind.wrong_values() {
            let mut doc = base(b);
            set(&mut doc, path, wrong.clone());
            let text = serde_json::to_string_pretty(&doc).expect("JSON");
            let f = with_sidecar(&text);
            let run = f.calc_env(&["tank.stl"], &[]);
            cases += 1;
            // The key path, and a line of the file.
            let key = format!("at {path}");
            if let Some(p) = refusal_problem(&f, "tank.stl", "tank.json", &[&key, "line "], &run) {
                failures.push(format!("{path} = {wrong}: {p}"));
            }
        }
    }
    assert!(cases > 250, "{cases}");
    assert!(
        failures.is_empty(),
        "{} of {cases} cases:\n{}",
        failures.len(),
        failures.join("\n\n")
    );
}

#[test]
fn the_key_list_covers_every_key_the_reader_knows() {
    // Every `pub name:` field of the Raw… mirrors in src/sidecar/raw.rs.
    let source =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("src/sidecar/raw.rs"))
            .expect("raw.rs");
    let mut fields = Vec::new();
    let mut in_raw = false;
    for line in source.lines() {
        let t = line.trim();
        if t.starts_with("pub(super) struct Raw") && t.ends_with('{') {
            in_raw = true;
        } else if in_raw && t == "}" {
            in_raw = false;
        } else if in_raw && let Some(rest) = t.strip_prefix("pub ") {
            fields.push(rest.split(':').next().expect("a field").to_owned());
        }
    }
    assert!(fields.len() >= 30, "{fields:?}");
    let last_segments: Vec<&str> = KEYS
        .iter()
        .map(|(_, p, _)| p.rsplit('.').next().expect("segment"))
        .map(|s| s.split('[').next().expect("key"))
        .collect();
    let missing: Vec<&String> = fields
        .iter()
        .filter(|f| !last_segments.contains(&f.as_str()))
        .collect();
    assert!(
        missing.is_empty(),
        "keys not tried with wrong types: {missing:?}"
    );
}

#[test]
fn one_hundred_thousand_nested_arrays_and_objects() {
    let deep = 100_000;
    let arrays = format!("{}{}", "[".repeat(deep), "]".repeat(deep));
    let objects = format!("{}1{}", "{\"a\":".repeat(deep), "}".repeat(deep));
    for text in [
        arrays.clone(),
        objects.clone(),
        format!(r#"{{"units": "m", "liquid": {arrays}}}"#),
        format!(r#"{{"units": "m", "liquid": {{"level": 1, "layers": {arrays}}}}}"#),
        format!(r#"{{"units": "m", "moment_about": {arrays}}}"#),
        format!(r#"{{"units": "m", "parts": {objects}}}"#),
        format!(r#"{{"units": "m", "flotation": {{"resisting": {objects}}}}}"#),
        format!(r#"{{"units": "m", "cases": [{{"liquids": {objects}}}]}}"#),
    ] {
        sidecar_refused(text, &["line 1"]);
    }
}

#[test]
fn duplicate_keys_at_every_level() {
    for (text, line) in [
        (
            "{\n\"units\": \"m\",\n\"units\": \"mm\",\n\"liquid\": {\"level\": 1, \"density\": 1000}}",
            3,
        ),
        (
            "{\"units\": \"m\",\n\"liquid\": {\"level\": 1,\n\"level\": 2, \"density\": 1000}}",
            3,
        ),
        (
            "{\"units\": \"m\",\n\"liquids\": {\"a\": {\"level\": 1, \"density\": 1000},\n\"a\": {\"level\": 2, \"density\": 1000}}}",
            3,
        ),
        (
            "{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n\"parts\": {\"p\": {}, \"p\": {}}}",
            2,
        ),
        (
            "{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n\"axes\": {\"h\": {\"point\": [0,0,0], \"direction\": [1,0,0]},\n\"h\": {\"point\": [0,0,0], \"direction\": [0,1,0]}}}",
            3,
        ),
        (
            "{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n\"flotation\": {\"resisting\": {\"w\": 1, \"w\": 2}, \"required_factor\": 1}}",
            2,
        ),
        (
            "{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n\"cases\": [{\"name\": \"a\",\n\"name\": \"b\"}]}",
            3,
        ),
        (
            "{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n\"cases\": [{\"name\": \"a\"}, {\"name\": \"a\"}]}",
            2,
        ),
    ] {
        let err = sidecar_refused(text, &[&format!("line {line}")]);
        assert!(
            err.contains("duplicate") || err.contains("already used"),
            "{err}"
        );
    }
}

#[test]
fn numbers_beyond_f64_and_json_without_numbers_for_them() {
    for (value, words) in [
        ("1e400", &["out of range", "line 3"][..]),
        ("-1e400", &["out of range", "line 3"]),
        (
            &format!("1{}", "0".repeat(400)),
            &["out of range", "line 3"],
        ),
        ("NaN", &["line 3"]),
        ("Infinity", &["line 3"]),
        ("-Infinity", &["line 3"]),
        ("0x10", &["line 3"]),
        ("1e", &["line 3"]),
    ] {
        let text = format!(
            "{{\n  \"units\": \"m\",\n  \"liquid\": {{\"level\": {value}, \"density\": 1000}}\n}}\n"
        );
        sidecar_refused(text, words);
    }
    // Finite, but the pressure it implies is not: refused, never inf or null in a result.
    for (key, value) in [("density", "1e308"), ("level", "1e307")] {
        let mut doc = json!({"units": "m", "liquid": {"level": -0.5, "density": 1000}});
        doc["liquid"][key] = serde_json::from_str(value).expect("number");
        let f = with_sidecar(serde_json::to_string_pretty(&doc).expect("JSON"));
        let err = refused(&f, "tank.stl", "tank.json", &["non-finite"]);
        assert!(err.contains("tank.stl"), "{err}");
    }
    sidecar_refused(
        "{\"units\": \"m\",\n \"gravity\": 1e400,\n \"liquid\": {\"level\": 1, \"density\": 1000}}",
        &["line 2", "out of range"],
    );
}

#[test]
fn invalid_utf8_and_not_text() {
    let mut text = b"{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000},\n \"cases\": [{\"name\": \"flood\"}]}".to_vec();
    let at = text.windows(5).position(|w| w == b"flood").expect("name");
    text[at + 2] = 0xFF;
    sidecar_refused(&text, &["UTF-8"]);
    sidecar_refused([0xFFu8, 0xFE, 0x7B, 0x00].repeat(100), &["UTF-8"]);
    sidecar_refused(b"\x00\x01\x02", &["line 1"]);
    sidecar_refused(b"", &[]);
    sidecar_refused(b"   \n\n", &[]);
}

#[test]
fn strings_and_files_of_absurd_size() {
    let ten_mb = "x".repeat(10 * 1024 * 1024);
    for text in [
        format!(
            "{{\"units\": \"m\", \"liquid\": {{\"level\": 1, \"density\": 1000}},\n\"cases\": [{{\"name\": \"{ten_mb}\"}}]}}"
        ),
        format!("{{\"units\": \"m\",\n\"{ten_mb}\": 1}}"),
        format!("{{\"units\": \"m\", \"liquid\": {{\"level\": 1,\n\"preset\": \"{ten_mb}\"}}}}"),
    ] {
        let err = sidecar_refused(text, &["line 2", "1024 bytes"]);
        assert!(err.len() < 1000, "the message does not copy the string");
    }
    // A sidecar over 16 MiB is refused unread.
    let mut big = String::from("{\"units\": \"m\", \"liquid\": {\"level\": 1, \"density\": 1000}}");
    big.push_str(&" ".repeat(17 << 20));
    sidecar_refused(big, &["16 MiB"]);
}
