//! The sidecar parser on arbitrary text.
//!
//! Checks: no panic; an error names the file and, when it gives a line, a line that
//! exists; a sidecar that parses obeys the rules the rest of the program relies on
//! (positive finite gravity, at least one liquid and one case, every case with one liquid
//! per base liquid, every liquid valid for the pressure model).
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use wetload::hydro::Profile;
use wetload::sidecar::parse_sidecar;

const NAME: &str = "fuzz.json";

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match parse_sidecar(Path::new(NAME), text) {
        Err(e) => {
            let msg = e.to_string();
            assert!(msg.contains(NAME), "{msg}");
            if let Some(line) = e.line {
                assert!(line >= 1 && line <= text.split('\n').count(), "{msg}");
            }
        }
        Ok(s) => {
            assert!(s.gravity_m_s2.is_finite() && s.gravity_m_s2 > 0.0);
            assert!(!s.liquids.is_empty() && !s.cases.is_empty());
            for case in &s.cases {
                assert_eq!(case.liquids.len(), s.liquids.len());
                for l in &case.liquids {
                    assert!(Profile::new(l, s.gravity_m_s2).is_ok(), "{l:?}");
                }
            }
            assert!(s.moment_about_m.iter().all(|c| c.is_finite()));
            if let Some(sweep) = &s.sweep {
                let levels = sweep.levels();
                assert!(levels.len() <= wetload::sidecar::MAX_SWEEP_STEPS + 1);
                assert!(levels.iter().all(|z| z.is_finite()));
            }
        }
    }
});
