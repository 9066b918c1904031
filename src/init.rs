//! `wetload init MESH --units U`: a starter sidecar built from what the mesh shows.
//!
//! It reads the mesh, runs the same topology as `calc` (closed or open, parts, extent),
//! chooses each value with a plain reason printed on the terminal, checks that `calc`
//! accepts the result by computing it, and only then writes `<stem>.json` (never over an
//! existing file). Units are never guessed: without `--units` it explains which unit the
//! extent suggests and writes nothing.

use std::fmt::Write as _;
use std::fs;
use std::io::Write as _;
use std::path::Path;
use std::process::ExitCode;

use serde_json::json;

use crate::check;
use crate::pipeline;
use crate::sidecar::LengthUnit;

/// The unit keywords a sidecar accepts, with metres per unit.
const UNITS: [(&str, LengthUnit); 5] = [
    ("m", LengthUnit::M),
    ("cm", LengthUnit::Cm),
    ("mm", LengthUnit::Mm),
    ("in", LengthUnit::In),
    ("ft", LengthUnit::Ft),
];

/// The sizes, m, between which a hydraulic structure is plausible (as `calc`'s warning).
const PLAUSIBLE_M: (f64, f64) = (0.05, 2000.0);

/// The unit the largest extent `extent` (file units) suggests, and why, in words.
/// Metres win when they give a plausible size; millimetres next (the usual CAD unit);
/// the extent cannot tell cm, in or ft from those, which the text says.
pub fn suggest(extent: f64) -> (&'static str, String) {
    let plausible = |unit: f64| (PLAUSIBLE_M.0..=PLAUSIBLE_M.1).contains(&(extent * unit));
    let as_m = extent;
    let as_mm = extent * 1e-3;
    let (unit, why) = if plausible(1.0) && as_m >= 0.5 {
        (
            "m",
            format!(
                "as metres the mesh is {as_m:.3} m across, a plausible size for a hydraulic structure; as millimetres it would be {:.4} m",
                as_mm
            ),
        )
    } else if plausible(1e-3) {
        (
            "mm",
            format!(
                "as metres the mesh would be {as_m:.3} m across, {} for a hydraulic structure; as millimetres it is {as_mm:.3} m, and CAD tools export millimetres by default",
                if as_m > PLAUSIBLE_M.1 {
                    "implausibly large"
                } else {
                    "small"
                }
            ),
        )
    } else if plausible(1.0) {
        (
            "m",
            format!(
                "as metres the mesh is {as_m:.3} m across; as millimetres it would be {as_mm:.5} m, too small for a structure"
            ),
        )
    } else {
        (
            "m",
            format!(
                "no unit gives a usual size: as metres it is {as_m:.4} m across, as millimetres {as_mm:.6} m; check the export"
            ),
        )
    };
    (unit, why)
}

fn fail(text: &str, code: u8) -> ExitCode {
    eprintln!("error: {text}");
    ExitCode::from(code)
}

/// Runs `wetload init`: 0 written, 1 a file problem (the sidecar exists, the mesh cannot
/// be read or computed), 2 no or an unknown `--units`.
pub fn run(mesh_path: &Path, units: Option<&str>) -> ExitCode {
    let side = pipeline::sidecar_path(mesh_path);
    if fs::symlink_metadata(&side).is_ok() {
        return fail(
            &format!(
                "{} exists already; wetload init never overwrites a sidecar (edit it, or move it away and run init again)",
                side.display()
            ),
            1,
        );
    }
    let mesh = match pipeline::read_mesh_file(mesh_path) {
        Ok(m) => m,
        Err(e) => return fail(&e.to_string(), 1),
    };
    let name = mesh_path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let raw = check::check(&name, &mesh, None);
    let (lo, hi) = bounds(&raw);
    let extents = [0, 1, 2].map(|k| hi[k] - lo[k]);
    let (axis, extent) = extents
        .iter()
        .enumerate()
        .fold((0, 0.0), |b, (k, &e)| if e > b.1 { (k, e) } else { b });
    let axis = ["x", "y", "z"][axis];
    let (likely, why) = suggest(extent);
    let Some(units) = units else {
        return fail(
            &format!(
                "{}: say the mesh's length unit with --units (m, cm, mm, in or ft); wetload never guesses it. The largest extent is {} file units, along {axis}: {why}. That suggests --units {likely}, but cm, in and ft cannot be told apart from the size alone: take the unit the CAD export was set to",
                mesh_path.display(),
                fmt_num(extent),
            ),
            2,
        );
    };
    let Some(&(unit_word, unit)) = UNITS.iter().find(|(w, _)| *w == units.trim()) else {
        return fail(
            &format!("--units {units:?} is not a length unit: give one of m, cm, mm, in, ft"),
            2,
        );
    };
    let s = unit.metres();
    let health = check::check(&name, &mesh, Some(s));
    let (lo, hi) = bounds(&health);
    let round = |x: f64| (x * 1000.0).round() / 1000.0;
    let level = round(0.5 * (lo[2] + hi[2]));
    let about = [
        round(0.5 * (lo[0] + hi[0])),
        round(0.5 * (lo[1] + hi[1])),
        round(lo[2]),
    ];
    let wet_side = if health.closed { "outside" } else { "front" };
    // Written by hand, so the keys stand in the order a reader edits them.
    let num = |x: f64| serde_json::to_string(&json!(x)).expect("a finite number");
    let text = format!(
        "{{\n  \"units\": \"{unit_word}\",\n  \"up\": \"+z\",\n  \"wet_side\": \"{wet_side}\",\n  \"liquid\": {{\"level\": {}, \"density\": 1000}},\n  \"moment_about\": [{}, {}, {}]\n}}\n",
        num(level),
        num(about[0]),
        num(about[1]),
        num(about[2]),
    );
    // calc must accept it as it is: compute it before writing.
    let sidecar = match crate::sidecar::parse_sidecar(&side, &text) {
        Ok(sc) => sc,
        Err(e) => return fail(&e.to_string(), 1),
    };
    if let Err(e) = crate::compute::compute(&name, &mesh, &sidecar) {
        return fail(
            &format!(
                "{}: the starter sidecar would not compute ({e}); nothing written",
                mesh_path.display()
            ),
            1,
        );
    }
    let written = fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&side)
        .and_then(|mut f| f.write_all(text.as_bytes()).and_then(|()| f.sync_all()));
    if let Err(e) = written {
        return fail(&format!("cannot write {}: {e}", side.display()), 1);
    }
    let mut out = format!("wrote {}:\n{text}\n", side.display());
    let parts: Vec<&str> = health.parts.iter().map(|p| p.name.as_str()).collect();
    let _ = writeln!(
        out,
        "What each value is, and what to edit:\n  units \"{unit_word}\": as you said. The mesh is {} × {} × {} m (x × y × z); {}.",
        fmt_num(hi[0] - lo[0]),
        fmt_num(hi[1] - lo[1]),
        fmt_num(hi[2] - lo[2]),
        if unit_word == likely {
            "the extent agrees".to_owned()
        } else {
            format!("note: the extent suggested \"{likely}\" ({why})")
        }
    );
    let _ = writeln!(
        out,
        "  up \"+z\": the mesh's z axis points up, against gravity. If the model stands on another axis (\"+y\" is common), change it, and the level below with it."
    );
    let _ = writeln!(
        out,
        "  wet_side \"{wet_side}\": {}",
        if health.closed {
            "the mesh is closed, so the liquid is taken to surround the body. For a tank or a well holding the liquid, write \"inside\"."
        } else {
            "the mesh is open (a surface, not a solid), so the side must be said: \"front\" puts the liquid on the side the facet normals point to (right-hand rule of the vertex order). If the loads push the wrong way, write \"back\"."
        }
    );
    let _ = writeln!(
        out,
        "  liquid.level {level} m: half way up the mesh (it spans z = {} to {} m), so part of it is wet. Put the design water level here, in metres in the mesh's axes.",
        fmt_num(lo[2]),
        fmt_num(hi[2])
    );
    let _ = writeln!(
        out,
        "  liquid.density 1000 kg/m³: fresh water. Sea water is about 1025; \"cases\" add more levels."
    );
    let _ = writeln!(
        out,
        "  moment_about [{}, {}, {}] m: the middle of the mesh's base. Put the hinge, trunnion or toe about which moments matter.",
        about[0], about[1], about[2]
    );
    if parts.len() > 1 {
        let _ = writeln!(
            out,
            "  parts: the mesh has {} parts ({}); each gets its own loads. \"parts\" can give one its own liquid or wet_side.",
            parts.len(),
            parts.join(", ")
        );
    }
    let _ = writeln!(
        out,
        "It computes as it is: wetload calc {}",
        mesh_path.display()
    );
    let _ = std::io::stdout().write_all(out.as_bytes());
    ExitCode::SUCCESS
}

/// The bounding box of every part of a health report.
fn bounds(h: &check::Health) -> ([f64; 3], [f64; 3]) {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in &h.parts {
        for k in 0..3 {
            lo[k] = lo[k].min(p.bounding_box[0][k]);
            hi[k] = hi[k].max(p.bounding_box[1][k]);
        }
    }
    if lo[0] > hi[0] {
        return ([0.0; 3], [0.0; 3]);
    }
    (lo, hi)
}

/// A length for reading: up to 4 significant decimals, no trailing zeros.
fn fmt_num(x: f64) -> String {
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_owned()
    } else {
        s.to_owned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_extent_suggests_a_unit_with_its_reason() {
        // A 4,000-unit gate: 4 km as metres, 4 m as millimetres.
        let (u, why) = suggest(4000.0);
        assert_eq!(u, "mm");
        assert!(why.contains("implausibly large"), "{why}");
        // 12 units: a 12 m structure, not a 12 mm one.
        assert_eq!(suggest(12.0).0, "m");
        // 0.2 units: too small as millimetres, plausible as metres.
        assert_eq!(suggest(0.2).0, "m");
    }
}
