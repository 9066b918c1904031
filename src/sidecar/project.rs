//! The calculation sheet's header: the optional file [`PROJECT_FILE`] in a folder of
//! meshes, naming the project, the job, who prepared and who checked the calculation, and
//! the revision. The page shows it at the top and every result document of the folder
//! carries it, so a printed page or a filed result says what it belongs to.
//!
//! It reads no file: the pipeline hands it the text.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::error::plain;

/// The file name of the header, beside the meshes.
pub const PROJECT_FILE: &str = "wetload-project.json";

/// The header of a calculation sheet, from the folder's `wetload-project.json`: every
/// entry optional, shown in this order.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Project {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub project: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub job_number: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub client: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub prepared_by: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub checked_by: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub revision: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub date: Option<String>,
}

impl Project {
    /// The entries that are given, as (label, value), in the order of the sheet.
    pub fn entries(&self) -> Vec<(&'static str, &str)> {
        [
            ("project", &self.project),
            ("job number", &self.job_number),
            ("client", &self.client),
            ("prepared by", &self.prepared_by),
            ("checked by", &self.checked_by),
            ("revision", &self.revision),
            ("date", &self.date),
        ]
        .into_iter()
        .filter_map(|(label, v)| v.as_deref().map(|v| (label, v)))
        .collect()
    }
}

/// A header file that cannot be read as one.
#[derive(Debug, Error)]
#[error("project file {}, line {line}: {message}; its keys are \"project\", \"job_number\", \"client\", \"prepared_by\", \"checked_by\", \"revision\" and \"date\", each text", path.display())]
pub struct ProjectError {
    pub path: PathBuf,
    pub line: usize,
    pub message: String,
}

/// Reads the header from its text; `path` names the file in errors.
pub fn parse_project(path: &Path, text: &str) -> Result<Project, ProjectError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    serde_json::from_str(text).map_err(|e| {
        let full = e.to_string();
        let position = format!(" at line {} column {}", e.line(), e.column());
        let message = full.strip_suffix(&position).unwrap_or(&full);
        ProjectError {
            path: path.to_owned(),
            line: e.line(),
            message: plain(&message.replace('`', "\"")),
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_header_reads_and_a_wrong_key_names_the_file_and_line() {
        let p = parse_project(
            Path::new("wetload-project.json"),
            r#"{"project": "Weir 3", "job_number": "J-118", "revision": "B"}"#,
        )
        .expect("valid");
        assert_eq!(
            p.entries(),
            [
                ("project", "Weir 3"),
                ("job number", "J-118"),
                ("revision", "B")
            ]
        );
        let e = parse_project(
            Path::new("wetload-project.json"),
            "{\n  \"project\": \"Weir 3\",\n  \"checker\": \"A. N.\"\n}",
        )
        .expect_err("unknown key");
        let text = e.to_string();
        assert!(
            text.starts_with("project file wetload-project.json, line 3: unknown key \"checker\""),
            "{text}"
        );
    }
}
