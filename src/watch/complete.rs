//! Whether a file that a writer has just closed or renamed into place holds a whole save,
//! judged by its format, so the watcher can compute it at once instead of waiting for the
//! quiet window.
//!
//! A binary STL is whole when its size is 84 + 50 n bytes for the n its header states; an
//! ASCII STL when its last non-blank line starts with `endsolid`; a sidecar when its text
//! is one complete JSON value. An OBJ has no end marker, so a closed OBJ is never judged
//! whole here (a renamed-in one is: the writer finished it under another name). Anything
//! that cannot be read, or is not a regular file, is not whole. It decides nothing else;
//! the file is read again, in full, when it is computed.

use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

/// The most of a file's end read to find `endsolid`.
const TAIL_BYTES: u64 = 4096;

/// Whether the file at `path` holds a whole save by its format (see the module doc).
pub fn whole(path: &Path) -> bool {
    let Some(ext) = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
    else {
        return false;
    };
    match ext.as_str() {
        "stl" => whole_stl(path),
        "json" => crate::limits::read_capped(path, crate::limits::MAX_SIDECAR_BYTES)
            .is_ok_and(|bytes| serde_json::from_slice::<serde::de::IgnoredAny>(&bytes).is_ok()),
        _ => false,
    }
}

fn whole_stl(path: &Path) -> bool {
    let Ok((mut file, len)) = crate::limits::open_capped(path, u64::MAX) else {
        return false;
    };
    let mut head = [0u8; 84];
    let got = file.read(&mut head).unwrap_or(0);
    if got == 84 {
        let n = u32::from_le_bytes([head[80], head[81], head[82], head[83]]);
        if len == 84 + 50 * u64::from(n) {
            return true;
        }
    }
    if !head[..got].trim_ascii_start().starts_with(b"solid") {
        return false;
    }
    let from = len.saturating_sub(TAIL_BYTES);
    let mut tail = Vec::new();
    if file.seek(SeekFrom::Start(from)).is_err() || file.read_to_end(&mut tail).is_err() {
        return false;
    }
    tail.trim_ascii_end()
        .rsplit(|&b| b == b'\n')
        .next()
        .is_some_and(|line| line.trim_ascii_start().starts_with(b"endsolid"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use shapes::encode;

    #[test]
    fn whole_and_partial_saves_are_told_apart() {
        let dir = tempfile::tempdir().expect("temp dir");
        let tris = shapes::box_solid([0.0; 3], [1.0; 3], 2);
        let cases: Vec<(&str, Vec<u8>, bool)> = {
            let bin = encode::stl_binary(&tris, "box");
            let ascii = encode::stl_ascii(&[("box", &tris[..])]).into_bytes();
            let cut = ascii.len() / 2;
            vec![
                ("whole.stl", bin.clone(), true),
                // The header states every facet, half of them are there yet.
                (
                    "half.stl",
                    bin[..84 + 50 * (tris.len() / 2)].to_vec(),
                    false,
                ),
                ("ascii.stl", ascii.clone(), true),
                ("ascii_half.stl", ascii[..cut].to_vec(), false),
                (
                    "box.obj",
                    encode::obj(&[("box", &tris[..])]).into_bytes(),
                    false,
                ),
                (
                    "side.json",
                    br#"{"units": "m", "liquid": {"level": 1}}"#.to_vec(),
                    true,
                ),
                ("half.json", br#"{"units": "m", "liq"#.to_vec(), false),
                ("empty.stl", Vec::new(), false),
            ]
        };
        for (name, bytes, want) in cases {
            let p = dir.path().join(name);
            std::fs::write(&p, &bytes).expect("write");
            assert_eq!(whole(&p), want, "{name}");
        }
        assert!(!whole(&dir.path().join("missing.stl")));
    }
}
