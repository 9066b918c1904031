//! The STL reader on arbitrary bytes, binary and ASCII.
//!
//! The first byte chooses how the rest is used: odd → as the whole file (mostly ASCII or
//! refused); even → as the records of a binary STL whose header count is set to match the
//! length, so the binary path is reached on most inputs instead of almost never.
//! Checks: no panic; an error names the file; a mesh has finite coordinates, parts that
//! tile the facets in order, and one stored normal per facet.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use wetload::mesh::{Format, read_mesh};

const NAME: &str = "fuzz.stl";

fuzz_target!(|data: &[u8]| {
    let Some((&mode, rest)) = data.split_first() else {
        return;
    };
    let bytes = if mode % 2 == 1 {
        rest.to_vec()
    } else {
        let count = rest.len() / 50;
        let mut b = vec![0u8; 80];
        // Some headers start with "solid": the reader must still take the file as binary.
        if mode % 4 == 0 {
            b[..6].copy_from_slice(b"solid ");
        }
        b.extend_from_slice(&(count as u32).to_le_bytes());
        b.extend_from_slice(&rest[..count * 50]);
        b
    };
    match read_mesh(Path::new(NAME), &bytes) {
        Err(e) => assert!(e.to_string().contains(NAME), "{e}"),
        Ok(m) => {
            assert!(m.format == Format::StlBinary || m.format == Format::StlAscii);
            if mode % 2 == 0 {
                assert_eq!(m.format, Format::StlBinary);
                assert_eq!(m.facets.len(), (bytes.len() - 84) / 50);
            }
            check(&m);
        }
    }
});

fn check(m: &wetload::mesh::Mesh) {
    assert!(!m.facets.is_empty() && !m.parts.is_empty());
    let mut next = 0;
    for p in &m.parts {
        assert_eq!(p.facets.start, next);
        assert!(p.facets.end > p.facets.start);
        next = p.facets.end;
    }
    assert_eq!(next, m.facets.len());
    assert!(m.facets.iter().flatten().flatten().all(|c| c.is_finite()));
    assert_eq!(
        m.normal_stale.as_ref().map(Vec::len),
        Some(m.facets.len())
    );
}
