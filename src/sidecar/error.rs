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
    if message.starts_with("invalid ") {
        message.replace('`', "")
    } else {
        message.replace('`', "\"")
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
