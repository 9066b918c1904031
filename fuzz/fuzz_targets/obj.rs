//! The OBJ reader on arbitrary bytes.
//!
//! Checks: no panic; an error names the file; a mesh has finite coordinates and parts
//! that tile the facets in order, with distinct names.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use wetload::mesh::{Format, read_mesh};

const NAME: &str = "fuzz.obj";

fuzz_target!(|data: &[u8]| {
    match read_mesh(Path::new(NAME), data) {
        Err(e) => assert!(e.to_string().contains(NAME), "{e}"),
        Ok(m) => {
            assert_eq!(m.format, Format::Obj);
            assert!(!m.facets.is_empty() && m.normal_stale.is_none());
            let mut next = 0;
            for (i, p) in m.parts.iter().enumerate() {
                assert_eq!(p.facets.start, next);
                assert!(p.facets.end > p.facets.start);
                next = p.facets.end;
                assert!(m.parts[..i].iter().all(|q| q.name != p.name));
            }
            assert_eq!(next, m.facets.len());
            assert!(m.facets.iter().flatten().flatten().all(|c| c.is_finite()));
        }
    }
});
