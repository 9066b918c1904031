//! The result document as JSON (`results/<stem>.json`, `calc --json`).
//!
//! The layout is [`crate::compute::MeshResult`]'s, pretty-printed with two-space indents,
//! numbers in the shortest form that reads back to the same f64, and a final newline.

use crate::compute::MeshResult;

/// One result document as pretty JSON with a trailing newline.
pub fn render(result: &MeshResult) -> Vec<u8> {
    let mut out =
        serde_json::to_vec_pretty(result).expect("plain structs with string keys always serialize");
    out.push(b'\n');
    out
}

/// Several documents as a JSON array (what `calc --json` prints for several meshes).
pub fn render_many(results: &[MeshResult]) -> Vec<u8> {
    let mut out = serde_json::to_vec_pretty(results)
        .expect("plain structs with string keys always serialize");
    out.push(b'\n');
    out
}
