//! The sidecar as JSON text: permissive serde mirrors of its objects, the reader that keeps
//! the key path of the first problem, and the locator that finds a key path's line again.
//!
//! Permissive means that every key may be missing (so the validation in the parent module
//! can say what is missing and how to add it); it does not mean lax. The mirrors refuse
//! unknown keys, duplicate keys, `null` where a value is expected, an array where an object
//! is expected, and keywords that are not in the list. No value is checked against a rule
//! here: that is the parent's single conversion.

use std::fmt;
use std::marker::PhantomData;

use serde::Deserialize;
use serde::de::value::MapAccessDeserializer;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_path_to_error::Segment as PathSegment;

use super::{FieldExports, LengthUnit};
use crate::hydro::{UpAxis, WetSide};

/// The whole sidecar document.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawSidecar {
    #[serde(default, deserialize_with = "keyword")]
    pub units: Option<LengthUnit>,
    #[serde(default, deserialize_with = "keyword")]
    pub up: Option<UpAxis>,
    #[serde(default, deserialize_with = "some")]
    pub gravity: Option<f64>,
    #[serde(default, deserialize_with = "keyword")]
    pub wet_side: Option<WetSide>,
    #[serde(default, deserialize_with = "some")]
    pub liquid: Option<RawLiquid>,
    #[serde(default, deserialize_with = "some")]
    pub liquids: Option<Named<RawLiquid>>,
    #[serde(default, deserialize_with = "some")]
    pub parts: Option<Named<RawPart>>,
    #[serde(default, deserialize_with = "some")]
    pub moment_about: Option<Triple>,
    #[serde(default, deserialize_with = "some")]
    pub axes: Option<Named<RawAxis>>,
    #[serde(default, deserialize_with = "some")]
    pub cases: Option<Vec<RawCase>>,
    #[serde(default, deserialize_with = "some")]
    pub sweep: Option<RawSweep>,
    #[serde(default, deserialize_with = "some")]
    pub flotation: Option<RawFlotation>,
    #[serde(default, deserialize_with = "some")]
    pub floating: Option<RawFloating>,
    #[serde(default, deserialize_with = "keyword")]
    pub field_exports: Option<FieldExports>,
    #[serde(default, deserialize_with = "keyword")]
    pub sidecar_units: Option<LengthUnit>,
    #[serde(default, deserialize_with = "some")]
    pub datum: Option<RawDatum>,
    #[serde(default, deserialize_with = "some")]
    pub sections: Option<Named<RawSection>>,
}

/// The `datum` object: where the mesh's origin sits in the project's elevations.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawDatum {
    #[serde(default, deserialize_with = "some")]
    pub name: Option<String>,
    #[serde(default, deserialize_with = "some")]
    pub mesh_origin_elevation: Option<f64>,
}

/// A liquid as written under `liquid`, `liquids.<name>` or `cases[].liquids.<name>`.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawLiquid {
    #[serde(default, deserialize_with = "some")]
    pub level: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub density: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub layers: Option<Vec<RawLayer>>,
    #[serde(default, deserialize_with = "some")]
    pub surface_pressure: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub preset: Option<String>,
}

/// One entry of `layers`.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawLayer {
    pub density: f64,
    #[serde(default, deserialize_with = "some")]
    pub down_to: Option<f64>,
}

/// One entry of `parts`.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawPart {
    /// Missing: not stated; `Some(None)`: `null`, the part is dry; `Some(Some(name))`.
    #[serde(default, deserialize_with = "nullable")]
    pub liquid: Option<Option<String>>,
    #[serde(default, deserialize_with = "keyword")]
    pub wet_side: Option<WetSide>,
}

/// One entry of `axes`.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawAxis {
    pub point: Triple,
    pub direction: Triple,
}

/// One entry of `sections`: a vertical plane for the pressure diagram.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawSection {
    pub point: Triple,
    pub normal: Triple,
}

/// One entry of `cases`: the keys of a liquid, a name, and per-liquid overrides.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawCase {
    #[serde(default, deserialize_with = "some")]
    pub name: Option<String>,
    #[serde(default, deserialize_with = "some")]
    pub level: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub density: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub layers: Option<Vec<RawLayer>>,
    #[serde(default, deserialize_with = "some")]
    pub surface_pressure: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub preset: Option<String>,
    #[serde(default, deserialize_with = "some")]
    pub liquids: Option<Named<RawLiquid>>,
    #[serde(default, deserialize_with = "some")]
    pub floating: Option<RawFloating>,
}

/// The `floating` object (top level, or a case's override of any of its keys).
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawFloating {
    #[serde(default, deserialize_with = "some")]
    pub mass: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub centre_of_gravity: Option<Triple>,
    #[serde(default, deserialize_with = "some")]
    pub liquid: Option<String>,
    #[serde(default, deserialize_with = "keyword")]
    pub length_axis: Option<UpAxis>,
    #[serde(default, deserialize_with = "some")]
    pub heel_angles: Option<Vec<f64>>,
    #[serde(default, deserialize_with = "some")]
    pub criteria: Option<String>,
    #[serde(default, deserialize_with = "some")]
    pub free_surface_moments: Option<Named<RawTank>>,
}

/// One slack tank under `floating.free_surface_moments`.
#[derive(Clone, Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawTank {
    pub moment_m4: f64,
    pub density: f64,
}

/// The `sweep` object.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawSweep {
    #[serde(default, deserialize_with = "some")]
    pub liquid: Option<String>,
    pub from: f64,
    pub to: f64,
    pub step: f64,
}

/// The `flotation` object.
#[derive(Debug, Deserialize)]
#[serde(remote = "Self", deny_unknown_fields)]
pub(super) struct RawFlotation {
    pub resisting: Named<f64>,
    #[serde(default, deserialize_with = "some")]
    pub required_factor: Option<f64>,
    #[serde(default, deserialize_with = "some")]
    pub factor_preset: Option<String>,
}

// serde's derived structs also accept a JSON array, matched to the fields by position, so
// `"liquid": [10, 1000]` would read as a level and a density. `remote = "Self"` turns the
// derived code into an inherent function, and this impl lets it see objects only.
macro_rules! object_only {
    ($($ty:ident: $what:literal),* $(,)?) => {$(
        impl<'de> Deserialize<'de> for $ty {
            fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
                struct ObjectVisitor;
                impl<'de> Visitor<'de> for ObjectVisitor {
                    type Value = $ty;
                    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                        f.write_str($what)
                    }
                    fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<$ty, A::Error> {
                        $ty::deserialize(MapAccessDeserializer::new(map))
                    }
                }
                deserializer.deserialize_map(ObjectVisitor)
            }
        }
    )*};
}

object_only!(
    RawSidecar: "a JSON object with the sidecar keys",
    RawLiquid: "a liquid object such as {\"level\": 5.0, \"density\": 1000}",
    RawLayer: "a layer object such as {\"density\": 1000, \"down_to\": 2.0}",
    RawPart: "a part object such as {\"liquid\": \"headwater\", \"wet_side\": \"front\"}",
    RawAxis: "an axis object such as {\"point\": [0, 0, 0], \"direction\": [1, 0, 0]}",
    RawSection: "a section object such as {\"point\": [0, 2.5, 0], \"normal\": [0, 1, 0]}",
    RawCase: "a case object such as {\"name\": \"flood\", \"level\": 9.0}",
    RawSweep: "a sweep object such as {\"from\": 2.0, \"to\": 8.0, \"step\": 0.25}",
    RawFlotation: "a flotation object such as {\"resisting\": {\"weight\": 1.0e6}, \"required_factor\": 1.3}",
    RawDatum: "a datum object such as {\"name\": \"site datum\", \"mesh_origin_elevation\": 102.5}",
    RawFloating: "a floating object such as {\"mass\": 1.5e5, \"centre_of_gravity\": [0, 0, 1.8]}",
    RawTank: "a tank object such as {\"moment_m4\": 12.5, \"density\": 1025}",
);

/// A JSON object whose keys are names chosen by the user, in the order of the file.
///
/// Unlike a map type it refuses a repeated name instead of keeping the last one.
#[derive(Clone, Debug)]
pub(super) struct Named<T>(pub Vec<(String, T)>);

impl<'de, T: Deserialize<'de>> Deserialize<'de> for Named<T> {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct NamedVisitor<T>(PhantomData<T>);
        impl<'de, T: Deserialize<'de>> Visitor<'de> for NamedVisitor<T> {
            type Value = Named<T>;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a JSON object of named entries")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Named<T>, A::Error> {
                let mut entries: Vec<(String, T)> = Vec::new();
                while let Some(name) = map.next_key::<String>()? {
                    if entries.iter().any(|(n, _)| *n == name) {
                        return Err(de::Error::custom(format_args!(
                            "duplicate key \"{name}\": each name may appear once"
                        )));
                    }
                    let value = map.next_value()?;
                    entries.push((name, value));
                }
                Ok(Named(entries))
            }
        }
        deserializer.deserialize_map(NamedVisitor(PhantomData))
    }
}

/// A point or vector `[x, y, z]`.
#[derive(Clone, Debug)]
pub(super) struct Triple(pub [f64; 3]);

impl<'de> Deserialize<'de> for Triple {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct TripleVisitor;
        impl<'de> Visitor<'de> for TripleVisitor {
            type Value = Triple;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("an array of 3 numbers [x, y, z]")
            }
            // serde's own [f64; 3] stops after three elements and leaves serde_json to
            // complain about "trailing characters"; counting them gives a clearer message.
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Triple, A::Error> {
                let mut xyz = [0.0; 3];
                let mut count = 0;
                while let Some(value) = seq.next_element::<f64>()? {
                    if let Some(slot) = xyz.get_mut(count) {
                        *slot = value;
                    }
                    count += 1;
                }
                if count == 3 {
                    Ok(Triple(xyz))
                } else {
                    Err(de::Error::invalid_length(count, &self))
                }
            }
        }
        deserializer.deserialize_seq(TripleVisitor)
    }
}

/// A present value; `null` is refused (serde's `Option` would read it as missing).
fn some<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<Option<T>, D::Error> {
    T::deserialize(d).map(Some)
}

/// A present value that may be `null`.
fn nullable<'de, D: Deserializer<'de>, T: Deserialize<'de>>(
    d: D,
) -> Result<Option<Option<T>>, D::Error> {
    Option::<T>::deserialize(d).map(Some)
}

/// A closed set of string keywords (`"mm"`, `"+z"`, `"front"` …).
pub(super) trait Keyword: Copy + 'static {
    /// What the keyword names, for messages ("unit").
    const WHAT: &'static str;
    /// Every value, in the order the messages list them.
    const ALL: &'static [Self];
    fn keyword(self) -> &'static str;
}

macro_rules! keyword {
    ($ty:ident, $what:literal, [$($value:ident),* $(,)?]) => {
        impl Keyword for $ty {
            const WHAT: &'static str = $what;
            const ALL: &'static [Self] = &[$($ty::$value),*];
            fn keyword(self) -> &'static str {
                self.as_str()
            }
        }
    };
}

keyword!(LengthUnit, "unit", [M, Cm, Mm, In, Ft]);
keyword!(UpAxis, "up axis", [PosX, NegX, PosY, NegY, PosZ, NegZ]);
keyword!(WetSide, "wet side", [Outside, Inside, Front, Back]);
keyword!(FieldExports, "field export setting", [Auto, Always, Never]);

/// `"a", "b", "c"`: the keywords of `T` quoted, for messages.
pub(super) fn keyword_list<T: Keyword>() -> String {
    let quoted: Vec<String> = T::ALL
        .iter()
        .map(|k| format!("\"{}\"", k.keyword()))
        .collect();
    quoted.join(", ")
}

/// A present keyword of `T`, read from a JSON string.
fn keyword<'de, D: Deserializer<'de>, T: Keyword>(d: D) -> Result<Option<T>, D::Error> {
    struct KeywordVisitor<T>(PhantomData<T>);
    impl<T: Keyword> Visitor<'_> for KeywordVisitor<T> {
        type Value = T;
        fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
            write!(f, "a string, one of {}", keyword_list::<T>())
        }
        fn visit_str<E: de::Error>(self, v: &str) -> Result<T, E> {
            T::ALL
                .iter()
                .copied()
                .find(|k| k.keyword() == v)
                .ok_or_else(|| {
                    E::custom(format_args!(
                        "unknown {} \"{v}\", expected one of {}",
                        T::WHAT,
                        keyword_list::<T>()
                    ))
                })
        }
    }
    d.deserialize_str(KeywordVisitor(PhantomData)).map(Some)
}

/// Why the text could not be read into a [`RawSidecar`].
#[derive(Debug)]
pub(super) struct ReadError {
    /// Key path of the value being read (`liquid.density`), empty for the document itself.
    pub key: String,
    pub error: serde_json::Error,
}

/// Reads the sidecar text, keeping the key path of the first problem.
///
/// No input can exhaust the stack: the mirrors nest a few levels only, a deeper value is
/// refused as a wrong type or an unknown key the moment it starts, and serde_json's
/// recursion limit (128 levels) backs that up.
pub(super) fn read(text: &str) -> Result<RawSidecar, ReadError> {
    let mut de = serde_json::Deserializer::from_str(text);
    let raw: RawSidecar = serde_path_to_error::deserialize(&mut de).map_err(|e| {
        // A key not read yet (say, after a missing comma) ends the path as `Unknown`; the
        // line and column point there anyway, so the path stops at the enclosing value.
        let mut key = KeyPath::root();
        for segment in e.path().iter() {
            match segment {
                PathSegment::Map { key: name } => key = key.key(name),
                PathSegment::Enum { variant } => key = key.key(variant),
                PathSegment::Seq { index } => key = key.index(*index),
                PathSegment::Unknown => break,
            }
        }
        ReadError {
            key: key.to_string(),
            error: e.into_inner(),
        }
    })?;
    de.end().map_err(|error| ReadError {
        key: String::new(),
        error,
    })?;
    Ok(raw)
}

/// One step of a key path: an object member or an array element.
#[derive(Clone, Debug, PartialEq)]
pub(super) enum Segment {
    Key(String),
    Index(usize),
}

/// Where a value sits in the document, as a chain of keys and indices.
///
/// Displays like serde_path_to_error's paths: `cases[1].layers[2].down_to`.
#[derive(Clone, Debug, Default, PartialEq)]
pub(super) struct KeyPath(Vec<Segment>);

impl KeyPath {
    /// The document itself.
    pub fn root() -> KeyPath {
        KeyPath(Vec::new())
    }

    /// This path extended by an object member.
    pub fn key(&self, key: &str) -> KeyPath {
        let mut next = self.clone();
        next.0.push(Segment::Key(key.to_owned()));
        next
    }

    /// This path extended by an array element.
    pub fn index(&self, index: usize) -> KeyPath {
        let mut next = self.clone();
        next.0.push(Segment::Index(index));
        next
    }
}

impl fmt::Display for KeyPath {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        for (i, segment) in self.0.iter().enumerate() {
            match segment {
                Segment::Key(key) if i == 0 => f.write_str(key)?,
                Segment::Key(key) => write!(f, ".{key}")?,
                Segment::Index(index) => write!(f, "[{index}]")?,
            }
        }
        Ok(())
    }
}

/// Line and column (both from 1; the column counts characters) of the value at `path` in
/// `text`, or of the deepest enclosing value that exists when the path names a missing key.
///
/// `text` is expected to be JSON that has already been read successfully; on anything else
/// the answer is the best position found so far, never a panic. The scan is iterative, so
/// deep nesting cannot exhaust the stack.
pub(super) fn locate(text: &str, path: &KeyPath) -> (usize, usize) {
    // Every offset found lies just after an ASCII byte, so on a character boundary.
    let before = text.get(..value_offset(text, path)).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    (line, column)
}

/// Byte offset of the value at `path`, or of the deepest enclosing value found.
fn value_offset(text: &str, path: &KeyPath) -> usize {
    let b = text.as_bytes();
    let mut at = skip_ws(b, 0);
    for segment in &path.0 {
        let found = match segment {
            Segment::Key(key) => member(text, at, key),
            Segment::Index(index) => element(b, at, *index),
        };
        match found {
            Some(next) => at = next,
            None => break,
        }
    }
    at.min(text.len())
}

/// Offset of the value of member `key` in the object starting at `at`.
fn member(text: &str, at: usize, key: &str) -> Option<usize> {
    let b = text.as_bytes();
    if b.get(at) != Some(&b'{') {
        return None;
    }
    let mut i = at + 1;
    loop {
        i = skip_ws(b, i);
        if b.get(i) != Some(&b'"') {
            return None;
        }
        let end = string_end(b, i)?;
        // Decode escapes the way the reader did, so `"a\u0062"` matches `ab`.
        let name: String = serde_json::from_str(text.get(i..end)?).ok()?;
        i = skip_ws(b, end);
        if b.get(i) != Some(&b':') {
            return None;
        }
        i = skip_ws(b, i + 1);
        if name == key {
            return Some(i);
        }
        i = skip_ws(b, skip_value(b, i)?);
        if b.get(i) != Some(&b',') {
            return None;
        }
        i += 1;
    }
}

/// Offset of element `index` of the array starting at `at`.
fn element(b: &[u8], at: usize, index: usize) -> Option<usize> {
    if b.get(at) != Some(&b'[') {
        return None;
    }
    let mut i = skip_ws(b, at + 1);
    for _ in 0..index {
        i = skip_ws(b, skip_value(b, i)?);
        if b.get(i) != Some(&b',') {
            return None;
        }
        i = skip_ws(b, i + 1);
    }
    match b.get(i) {
        Some(b']') | None => None,
        Some(_) => Some(i),
    }
}

fn skip_ws(b: &[u8], mut i: usize) -> usize {
    while matches!(b.get(i), Some(b' ' | b'\t' | b'\n' | b'\r')) {
        i += 1;
    }
    i
}

/// Offset just past the string whose opening quote is at `at`.
fn string_end(b: &[u8], at: usize) -> Option<usize> {
    let mut i = at + 1;
    loop {
        match b.get(i)? {
            b'\\' => i += 2,
            b'"' => return Some(i + 1),
            _ => i += 1,
        }
    }
}

/// Offset just past the value starting at `at`.
fn skip_value(b: &[u8], at: usize) -> Option<usize> {
    match b.get(at)? {
        b'"' => string_end(b, at),
        b'{' | b'[' => {
            let mut depth = 0usize;
            let mut i = at;
            loop {
                match b.get(i)? {
                    b'"' => {
                        i = string_end(b, i)?;
                        continue;
                    }
                    b'{' | b'[' => depth += 1,
                    b'}' | b']' => {
                        depth -= 1;
                        if depth == 0 {
                            return Some(i + 1);
                        }
                    }
                    _ => {}
                }
                i += 1;
            }
        }
        _ => {
            let mut i = at;
            while !matches!(
                b.get(i),
                None | Some(b',' | b'}' | b']' | b' ' | b'\t' | b'\n' | b'\r')
            ) {
                i += 1;
            }
            Some(i)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn path(segments: &[Segment]) -> KeyPath {
        KeyPath(segments.to_vec())
    }

    fn k(s: &str) -> Segment {
        Segment::Key(s.to_owned())
    }

    #[test]
    fn key_paths_display_like_serde_path_to_error() {
        let p = KeyPath::root()
            .key("cases")
            .index(1)
            .key("layers")
            .index(2)
            .key("down_to");
        assert_eq!(p.to_string(), "cases[1].layers[2].down_to");
        assert_eq!(KeyPath::root().to_string(), "");
    }

    const DOC: &str = r#"{
  "units": "mm",
  "liqu\u0069d": {"level": 2.0,
    "layers": [ {"density": 880, "down_to": 1.0},
                {"note": "a \"quoted\" } ] string", "density": 1000} ]},
  "cases": [{"name": "a"}, {"name": "b",
     "level": 3}]
}"#;

    #[test]
    fn locates_keys_indices_and_escaped_names() {
        assert_eq!(locate(DOC, &KeyPath::root()), (1, 1));
        assert_eq!(locate(DOC, &path(&[k("units")])), (2, 12));
        assert_eq!(locate(DOC, &path(&[k("liquid"), k("level")])), (3, 28));
        let second = path(&[k("liquid"), k("layers"), Segment::Index(1), k("density")]);
        assert_eq!(locate(DOC, &second), (5, 64));
        let level = path(&[k("cases"), Segment::Index(1), k("level")]);
        assert_eq!(locate(DOC, &level), (7, 15));
    }

    #[test]
    fn a_missing_key_locates_its_deepest_existing_parent() {
        let missing = path(&[k("cases"), Segment::Index(0), k("level")]);
        assert_eq!(locate(DOC, &missing), (6, 13));
        let beyond = path(&[k("cases"), Segment::Index(5)]);
        assert_eq!(locate(DOC, &beyond), (6, 12));
        assert_eq!(locate(DOC, &path(&[k("nothing")])), (1, 1));
    }

    #[test]
    fn locating_in_broken_or_deep_text_does_not_panic() {
        let deep = "[".repeat(200_000);
        let p = path(&[Segment::Index(0), Segment::Index(3)]);
        assert_eq!(locate(&deep, &p), (1, 2));
        for text in [
            "",
            "{",
            "{\"a\"",
            "{\"a\": [1,",
            "\"open",
            "{\"é\": {\"x\": 1}}",
        ] {
            let _ = locate(text, &path(&[k("a"), Segment::Index(2), k("x")]));
        }
        // Columns count characters, not bytes.
        assert_eq!(locate("{\"é\": 1, \"x\": 2}", &path(&[k("x")])), (1, 15));
    }
}
