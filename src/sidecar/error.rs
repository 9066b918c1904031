//! What can be wrong with a sidecar and how it is told: [`SidecarError`] (the file, the
//! line and column, the key path) and [`SidecarErrorKind`], the rule-breaking `Problem`
//! before its place in the text is known, and the helpers that shape messages (serde's
//! wording, quoted lists, the scan for strings too long to copy).
//!
//! It checks no rule itself; the rules live in `validate.rs` and `liquids.rs`.

use std::fmt;
use std::path::PathBuf;

use thiserror::Error;

use super::MAX_SWEEP_STEPS;
use super::raw::KeyPath;
use crate::hydro::LiquidError;

/// A sidecar that cannot be used: the file, where in it, and what is wrong.
#[derive(Debug, Error)]
#[error("sidecar {}{}: {kind}", .path.display(), Position::of(.line, .column, .key))]
pub struct SidecarError {
    pub path: PathBuf,
    /// From 1; `None` when the problem has no place in the text.
    pub line: Option<usize>,
    /// From 1.
    pub column: Option<usize>,
    /// Key path such as `cases[1].layers[2].down_to`; empty for the whole document.
    pub key: String,
    /// Boxed to keep `Result<_, SidecarError>` small on the success path.
    pub kind: Box<SidecarErrorKind>,
}

/// `, line 4, column 12, at liquid.density`, leaving out what is not known.
struct Position<'a> {
    line: Option<usize>,
    column: Option<usize>,
    key: &'a str,
}

impl<'a> Position<'a> {
    fn of(line: &Option<usize>, column: &Option<usize>, key: &'a str) -> Position<'a> {
        Position {
            line: *line,
            column: *column,
            key,
        }
    }
}

impl fmt::Display for Position<'_> {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        if let Some(line) = self.line {
            write!(f, ", line {line}")?;
        }
        if let Some(column) = self.column {
            write!(f, ", column {column}")?;
        }
        if !self.key.is_empty() {
            write!(f, ", at {}", self.key)?;
        }
        Ok(())
    }
}

/// What is wrong with a sidecar.
#[derive(Debug, Error, PartialEq)]
pub enum SidecarErrorKind {
    /// Not JSON, or not the sidecar's shape: a syntax error, a wrong type, an unknown or
    /// repeated key, a number out of range, an unknown keyword.
    #[error("{0}")]
    Json(String),
    #[error(
        "units is missing: add \"units\": \"mm\" (or \"m\", \"cm\", \"in\", \"ft\"); STL and OBJ files do not store their length unit, so wetload never guesses it"
    )]
    MissingUnits,
    #[error(
        "gravity must be a number > 0 m/s², got {0}; leave it out for standard gravity 9.80665"
    )]
    Gravity(f64),
    #[error(
        "no liquid: add \"liquid\": {{\"level\": <elevation in m>, \"density\": <kg/m³>}}, or named \"liquids\""
    )]
    NoLiquid,
    #[error(
        "\"liquid\" and \"liquids\" are both given: use \"liquid\" for one liquid or \"liquids\" for several, not both"
    )]
    LiquidAndLiquids,
    #[error("{what} is empty: {hint}")]
    Empty {
        what: &'static str,
        hint: &'static str,
    },
    #[error("{what} is missing: {hint}")]
    Missing { what: &'static str, hint: String },
    #[error(
        "{keys} are given together, which is ambiguous: give only one of \"density\", \"layers\" and \"preset\""
    )]
    Ambiguous { keys: String },
    #[error("unknown liquid \"{name}\": the sidecar's liquids are {known}")]
    UnknownLiquid { name: String, known: String },
    #[error("unknown preset \"{name}\": the presets are {known} (see config/liquids.json)")]
    UnknownPreset { name: String, known: String },
    /// A liquid the core refuses (density ≤ 0, layers out of order …).
    #[error("{0}")]
    Liquid(LiquidError),
    #[error(
        "case \"{case}\" leaves liquid \"{liquid}\" without a {missing}: add it to the liquid or to the case"
    )]
    Incomplete {
        case: String,
        liquid: String,
        missing: &'static str,
    },
    #[error(
        "\"{key}\" on a case is ambiguous with several liquids ({liquids}): set it per liquid, e.g. \"liquids\": {{\"{first}\": {{\"{key}\": ...}}}}"
    )]
    CaseKeyWithSeveralLiquids {
        key: &'static str,
        liquids: String,
        first: String,
    },
    #[error(
        "a case sets its liquid both with case-level keys and under \"liquids\": use one of the two"
    )]
    CaseKeysAndLiquids,
    #[error("case {index} has no name: add \"name\": \"...\"")]
    CaseWithoutName { index: usize },
    #[error(
        "case name \"{name}\" cannot be used: a name must be non-empty and contain no '/', '\\' or control characters (it becomes part of file names)"
    )]
    BadCaseName { name: String },
    #[error("case name \"{name}\" is already used by case {first}: names must be unique")]
    DuplicateCase { name: String, first: usize },
    #[error("direction {0:?} has no length: give a non-zero vector along the axis")]
    ZeroDirection([f64; 3]),
    #[error(
        "normal {0:?} has no length: give a non-zero horizontal vector square to the section's plane, e.g. [1, 0, 0]"
    )]
    ZeroNormal([f64; 3]),
    #[error(
        "normal {normal:?} is not horizontal (up is \"{up}\"): a section is a vertical plane, so its normal has no component along up; e.g. [1, 0, 0] cuts along the mesh's y axis"
    )]
    SectionNotVertical { normal: [f64; 3], up: &'static str },
    #[error("the sweep has several liquids to choose from ({0}): add \"liquid\": \"<name>\"")]
    SweepLiquid(String),
    #[error("step must be a number > 0 m, got {0}")]
    SweepStep(f64),
    #[error("to ({to}) is below from ({from}): the sweep runs upward, so swap them")]
    SweepOrder { from: f64, to: f64 },
    #[error(
        "a sweep from {from} to {to} in steps of {step} would take more than {MAX_SWEEP_STEPS} steps: use a larger step"
    )]
    SweepTooLong { from: f64, to: f64, step: f64 },
    #[error("resisting load \"{name}\" must be a number ≥ 0 N, got {value}")]
    ResistingLoad { name: String, value: f64 },
    #[error("required_factor must be a number > 0, got {0}")]
    RequiredFactor(f64),
    #[error(
        "\"required_factor\" and \"factor_preset\" are both given, which is ambiguous: give the number or the preset, not both"
    )]
    FactorAndPreset,
    #[error(
        "unknown factor_preset \"{name}\": the flotation presets are {known} (see config/flotation.json), or give \"required_factor\": <number>"
    )]
    UnknownFactorPreset { name: String, known: String },
    /// A rule of the `floating` key; the message says which and how to fix it.
    #[error("{0}")]
    Floating(String),
    #[error(
        "a string of {len} bytes is longer than the {limit} bytes a sidecar string may have; keys, names and keywords are short"
    )]
    StringTooLong { len: usize, limit: usize },
}

/// The byte offset of the opening quote and the length (bytes between the quotes, as
/// written) of the first JSON string in `text` longer than `limit`. A linear scan that
/// knows only strings and escapes; anything else is left to the JSON reader.
pub(super) fn long_string(text: &str, limit: usize) -> Option<(usize, usize)> {
    let b = text.as_bytes();
    let mut i = 0;
    while i < b.len() {
        if b[i] != b'"' {
            i += 1;
            continue;
        }
        let start = i;
        i += 1;
        while i < b.len() && b[i] != b'"' {
            i += if b[i] == b'\\' { 2 } else { 1 };
        }
        let len = i.min(b.len()) - start - 1;
        if len > limit {
            return Some((start, len));
        }
        i += 1;
    }
    None
}

/// serde_json's message without its trailing position (reported separately). serde quotes
/// key names in backticks, which become the JSON quotes the user typed; in "invalid type"
/// messages the backticks surround a number or boolean, which is clearer bare.
pub(super) fn json_message(error: &serde_json::Error) -> String {
    let full = error.to_string();
    let position = format!(" at line {} column {}", error.line(), error.column());
    let message = full.strip_suffix(&position).unwrap_or(&full);
    plain(&message.replace('`', "\""))
}

/// The JSON reader's message in plain words: what was expected and what was found, with
/// the reader's type names (`f64`, `sequence`, `map`, `EOF`) replaced by what a user
/// wrote or should write. A message it does not know is kept as it is.
pub(crate) fn plain(message: &str) -> String {
    for prefix in ["invalid type: ", "invalid value: "] {
        if let Some(rest) = message.strip_prefix(prefix)
            && let Some((found, expected)) = rest.split_once(", expected ")
        {
            return format!(
                "expected {}, found {}",
                expected_words(expected),
                found_words(found)
            );
        }
    }
    if let Some(rest) = message.strip_prefix("invalid length ")
        && let Some((n, expected)) = rest.split_once(", expected ")
    {
        return format!("expected {}, found {n} entries", expected_words(expected));
    }
    if let Some(rest) = message.strip_prefix("unknown field ") {
        return match rest.split_once(", expected one of ") {
            Some((key, keys)) => format!("unknown key {key}; allowed here: {keys}"),
            None => match rest.split_once(", expected ") {
                Some((key, keys)) => format!("unknown key {key}; allowed here: {keys}"),
                None => format!(
                    "unknown key {}",
                    rest.trim_end_matches(", there are no fields")
                ),
            },
        };
    }
    if let Some(rest) = message.strip_prefix("unknown variant ") {
        return match rest.split_once(", expected ") {
            Some((word, words)) => format!("unknown keyword {word}; expected {words}"),
            None => format!("unknown keyword {rest}"),
        };
    }
    if let Some(key) = message.strip_prefix("missing field ") {
        return format!("the key {key} is missing");
    }
    if let Some(key) = message.strip_prefix("duplicate field ") {
        return format!("duplicate key {key}: each key may appear once");
    }
    let syntax = [
        (
            "EOF while parsing",
            "the text ends before the JSON is complete (an unclosed {, [ or \")",
        ),
        (
            "expected value",
            "expected a value here (a number, text in quotes, true, false, null, an object {...} or a list [...])",
        ),
        (
            "expected \",\" or \"}\"",
            "expected , or } here (is a comma missing between two keys?)",
        ),
        (
            "expected \",\" or \"]\"",
            "expected , or ] here (is a comma missing between two entries?)",
        ),
        ("expected \":\"", "expected : after the key"),
        ("key must be a string", "keys must be text in quotes"),
        (
            "trailing comma",
            "a comma before a closing } or ] (JSON allows none there)",
        ),
        (
            "trailing characters",
            "more text after the end of the JSON document",
        ),
        ("invalid number", "not a valid number"),
        (
            "number out of range",
            "a number out of range (too large for a 64-bit float)",
        ),
        (
            "invalid escape",
            "an invalid backslash escape in quotes (write \\\\ for one backslash, e.g. in a Windows path)",
        ),
        (
            "control character",
            "a raw control character (a tab or a line break) inside text in quotes",
        ),
        ("recursion limit exceeded", "nested too deeply"),
        (
            "invalid unicode code point",
            "an invalid \\u escape in quotes",
        ),
        ("lone leading surrogate", "an invalid \\u escape in quotes"),
    ];
    for (reader, words) in syntax {
        if message.starts_with(reader) {
            return words.to_owned();
        }
    }
    message.to_owned()
}

/// What the reader expected, in words.
fn expected_words(expected: &str) -> String {
    match expected {
        "f64" | "f32" => "a number".to_owned(),
        "u8" | "u16" | "u32" | "u64" | "usize" | "i32" | "i64" => "a whole number".to_owned(),
        "a string" => "text in quotes".to_owned(),
        "a boolean" => "true or false".to_owned(),
        "a sequence" => "a list [...]".to_owned(),
        "a map" => "an object {...}".to_owned(),
        other => match other.strip_prefix("a string, ") {
            Some(rest) => rest.to_owned(),
            None => other.to_owned(),
        },
    }
}

/// What the reader found, in words (`string "5"` → `the text "5"`).
fn found_words(found: &str) -> String {
    let words = [
        ("string ", "the text "),
        ("integer ", "the number "),
        ("floating point ", "the number "),
        ("boolean ", ""),
        ("character ", "the text "),
    ];
    for (reader, ours) in words {
        if let Some(value) = found.strip_prefix(reader) {
            return format!("{ours}{value}");
        }
    }
    match found {
        "sequence" => "a list [...]".to_owned(),
        "map" => "an object {...}".to_owned(),
        "null" | "unit value" => "null".to_owned(),
        other => other.to_owned(),
    }
}

/// A rule broken at a key path, before the file name and line are attached.
pub(super) struct Problem {
    pub(super) key: KeyPath,
    pub(super) kind: SidecarErrorKind,
}

pub(super) fn problem(key: KeyPath, kind: SidecarErrorKind) -> Problem {
    Problem { key, kind }
}

/// `"a", "b"`.
pub fn quoted_list<'a>(names: impl Iterator<Item = &'a str>) -> String {
    names
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use super::plain;

    #[test]
    fn the_readers_words_become_plain_ones() {
        for (reader, ours) in [
            (
                r#"invalid type: string "5", expected f64"#,
                r#"expected a number, found the text "5""#,
            ),
            (
                "invalid type: boolean true, expected f64",
                "expected a number, found true",
            ),
            (
                "invalid type: sequence, expected f64",
                "expected a number, found a list [...]",
            ),
            (
                "invalid type: map, expected a string",
                "expected text in quotes, found an object {...}",
            ),
            (
                r#"invalid type: integer 5, expected a string, one of "+x", "-x""#,
                r#"expected one of "+x", "-x", found the number 5"#,
            ),
            (
                "invalid length 2, expected an array of 3 numbers [x, y, z]",
                "expected an array of 3 numbers [x, y, z], found 2 entries",
            ),
            (
                r#"unknown field "levle", expected one of "level", "density""#,
                r#"unknown key "levle"; allowed here: "level", "density""#,
            ),
            (
                r#"duplicate field "units""#,
                r#"duplicate key "units": each key may appear once"#,
            ),
            (
                "EOF while parsing an object",
                "the text ends before the JSON is complete (an unclosed {, [ or \")",
            ),
            (
                "trailing comma",
                "a comma before a closing } or ] (JSON allows none there)",
            ),
            ("something new", "something new"),
        ] {
            assert_eq!(plain(reader), ours);
        }
        // No reader jargon survives in the words for types.
        for jargon in ["f64", "sequence", "map", "EOF", "integer"] {
            assert!(
                !plain(&format!("invalid type: map, expected f64 {jargon}")).contains("found map")
            );
        }
    }
}
