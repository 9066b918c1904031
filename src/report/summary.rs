//! The terminal summary of a result: a compact block per case, parts as a table.
//!
//! Layout (plain text, 2-space indents, mesh axes; every quantity in the one unit and
//! number of decimals that [`super::units`] gives it, SI or US customary):
//!
//! ```text
//! radial_gate.stl · binary STL · 256 facets · 1 part · open surface
//!   units mm, up +z, g 9.807 m/s², moments about (0.000, 0.000, 4.500) m
//!   size 2.031 × 4.000 × 6.000 m (mesh axes)
//!
//!   case normal · liquid level 5.000 m, 1000 kg/m³
//!     force        Fx 490.33  Fy 0  Fz 288.10 kN   |F| 568.71 kN
//!     …
//! ```
//! A floating case adds its block after the loads:
//!
//! ```text
//!     floating     mass 150.0 t, G (0.000, 0.000, 1.800) m, in liquid, length axis +x
//!                  draft 1.220 m, heel 0.0°, trim 0.0°, displacement 146.341 m³ (150.0 t)
//!                  GM_T 1.875 m, GM_L 26.753 m, reserve buoyancy 59.3%
//!                  GZ max … at …, vanishing angle …, areas 0-30° … 0-40° … 30-40° … m·rad
//!                  criteria "…": PASS as numbers only, no compliance implied
//! ```
//! It ends with the warnings and, unless left out, the caution. The JSON result stays SI
//! whatever the presentation.

use std::fmt::Write;

use super::units::{Units, num};
use crate::compute::{
    CaseResult, Extreme, FloatingResult, FlotationCheck, Governing, Loads, MeshResult, SweepStep,
};

pub use super::units::UnitSystem;

/// Options of the summary.
#[derive(Clone, Copy, Debug, Default)]
pub struct SummaryOptions {
    /// Leave out the caution (when several meshes are printed, it is printed once).
    pub no_caution: bool,
    /// The unit system shown.
    pub units: UnitSystem,
}

/// Renders the summary of one mesh.
pub fn render(r: &MeshResult, opts: SummaryOptions) -> String {
    let origin = r
        .inputs
        .datum
        .as_ref()
        .map_or(0.0, |d| d.mesh_origin_elevation);
    let u = Units::of(opts.units).with_datum(origin);
    let mut s = String::new();
    let i = &r.inputs;
    let surface = if i.closed {
        format!("closed ({} shell{})", i.shells, plural(i.shells))
    } else {
        let sides: Vec<&str> = r.inputs.parts.iter().map(|p| p.wet_side).collect();
        match sides.first() {
            Some(first) if sides.iter().all(|s| s == first) => {
                format!("open surface, wet on its {first}")
            }
            _ => "open surface".to_owned(),
        }
    };
    let _ = writeln!(
        s,
        "{} · {} · {} facets · {} part{} · {}",
        r.mesh,
        format_name(i.format),
        i.facets,
        i.parts.len(),
        plural(i.parts.len()),
        surface
    );
    let about = r
        .cases
        .first()
        .map(|c| c.loads.moment_about)
        .unwrap_or_default();
    let _ = writeln!(
        s,
        "  units {}, up {}, g {}, moments about {} {}",
        i.units,
        i.up,
        u.acceleration.with_name(i.gravity),
        u.point(about),
        u.length.name
    );
    let bb = i.bounding_box;
    let _ = writeln!(
        s,
        "  size {} × {} × {} {} (mesh axes)",
        u.length.fmt(bb[1][0] - bb[0][0]),
        u.length.fmt(bb[1][1] - bb[0][1]),
        u.length.fmt(bb[1][2] - bb[0][2]),
        u.length.name
    );
    if let Some(d) = &i.datum {
        let _ = writeln!(
            s,
            "  levels are elevations in {}: the mesh's origin is at {} {}",
            d.name.as_deref().unwrap_or("the project datum"),
            u.length.fmt(d.mesh_origin_elevation),
            u.length.name
        );
    }
    // A sweep that comes out the same in every case (the cases differ only in the swept
    // level) is shown once, after the cases.
    let shared = shared_sweep(r);
    // A tank's contents: the volume and its centroid are the liquid's.
    let contained = !i.parts.is_empty() && i.parts.iter().all(|p| p.wet_side == "inside");
    for c in &r.cases {
        s.push('\n');
        case_block(
            &mut s,
            c,
            i.parts.len() > 1,
            shared.is_none(),
            contained,
            &u,
        );
    }
    if let Some(c) = shared {
        s.push('\n');
        let _ = writeln!(s, "  every case");
        if let Some(sw) = &c.sweep {
            sweep_block(&mut s, sw, c.sweep_governing.as_ref(), &u, true);
        }
    }
    if !r.warnings.is_empty() {
        s.push('\n');
        for w in &r.warnings {
            let _ = writeln!(s, "  warning: {w}");
        }
    }
    if !opts.no_caution {
        s.push('\n');
        let _ = writeln!(s, "{}", caution_text(r.caution));
        if let Some(f) = r.cases.iter().find_map(|c| c.floating.as_ref()) {
            let _ = writeln!(s, "{}", caution_text(f.caution));
        }
    }
    s
}

/// The caution, wrapped for a terminal.
pub fn caution_text(caution: &str) -> String {
    let mut out = String::from("Caution:");
    let mut col = out.chars().count();
    for word in caution.split_whitespace() {
        let len = word.chars().count();
        if col + len + 1 > 92 {
            out.push_str("\n ");
            col = 1;
        }
        out.push(' ');
        out.push_str(word);
        col += len + 1;
    }
    out
}

fn format_name(f: &str) -> &str {
    match f {
        "stl-binary" => "binary STL",
        "stl-ascii" => "ASCII STL",
        "obj" => "OBJ",
        other => other,
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}

/// The case whose sweep stands for every case, when there are several cases and their
/// sweeps (steps and governing values) are all equal.
pub fn shared_sweep(r: &MeshResult) -> Option<&CaseResult> {
    let first = r.cases.first()?;
    (r.cases.len() > 1
        && first.sweep.is_some()
        && r.cases
            .iter()
            .all(|c| c.sweep == first.sweep && c.sweep_governing == first.sweep_governing))
    .then_some(first)
}

fn case_block(
    s: &mut String,
    c: &CaseResult,
    several_parts: bool,
    sweep: bool,
    contained: bool,
    u: &Units,
) {
    let liquids: Vec<String> = c
        .liquids
        .iter()
        .map(|l| {
            let dens: Vec<String> = l.layers.iter().map(|(d, _)| u.density.fmt(*d)).collect();
            let gas = if l.surface_pressure != 0.0 {
                format!(
                    ", gas {} {}",
                    u.pressure.fmt(l.surface_pressure),
                    u.pressure.name
                )
            } else {
                String::new()
            };
            // A floating body's liquid: its free surface is solved, not given.
            let level = if c.floating.as_ref().is_some_and(|f| f.liquid == l.name) {
                "free surface solved".to_owned()
            } else {
                format!("level {} {}", u.elevation(l.level), u.length.name)
            };
            format!(
                "{} {level}, {} {}{gas}",
                l.name,
                dens.join("/"),
                u.density.name
            )
        })
        .collect();
    let _ = writeln!(s, "  case {} · {}", c.name, liquids.join("; "));
    loads_block(s, &c.loads, "    ", contained, u);
    if several_parts {
        let _ = writeln!(
            s,
            "    {:<20} {:>11} {:>11} {:>11} {:>11} {:>11} {:>11}",
            "part",
            format!("Fx {}", u.force.name),
            format!("Fy {}", u.force.name),
            format!("Fz {}", u.force.name),
            format!("uplift {}", u.force.name),
            format!("area {}", u.area.name),
            format!("volume {}", u.volume.name)
        );
        for p in &c.parts {
            let l = &p.loads;
            let vol = l
                .submerged_volume
                .map_or_else(|| "—".to_owned(), |v| u.volume.fmt(v));
            let _ = writeln!(
                s,
                "    {:<20} {:>11} {:>11} {:>11} {:>11} {:>11} {:>11}",
                truncate(&p.name, 20),
                u.force.fmt(l.force[0]),
                u.force.fmt(l.force[1]),
                u.force.fmt(l.force[2]),
                u.force.fmt(l.uplift),
                u.area.fmt(l.wetted_area),
                vol
            );
        }
    }
    if let Some(sw) = c.sweep.as_ref().filter(|_| sweep) {
        sweep_block(s, sw, c.sweep_governing.as_ref(), u, false);
    }
    if let Some(f) = &c.flotation {
        flotation_block(s, f, &c.loads, u);
    }
    if let Some(f) = &c.floating {
        floating_block(s, f, u);
    }
}

/// A floating body's equilibrium and stability, in the chosen units (criteria in the
/// units of their source, as the preset states them).
fn floating_block(s: &mut String, f: &FloatingResult, u: &Units) {
    let (l, a) = (&u.length, &u.angle);
    let _ = writeln!(
        s,
        "    floating     mass {}, G {} {}, in {}, length axis {}",
        u.mass.with_name(f.mass),
        u.point(f.centre_of_gravity),
        l.name,
        f.liquid,
        f.length_axis
    );
    let ind = "                 ";
    let Some(e) = &f.equilibrium else {
        let _ = writeln!(
            s,
            "{ind}SINKS: the mass exceeds what the whole volume can carry by {}",
            u.mass.with_name(f.sinks.unwrap_or(0.0))
        );
        return;
    };
    let trim = e.trim.map_or_else(|| "—".to_owned(), |t| a.with_name(t));
    let _ = writeln!(
        s,
        "{ind}draft {}, heel {}, trim {}, displacement {} ({})",
        l.with_name(e.draft),
        a.with_name(e.heel),
        trim,
        u.volume.with_name(e.displacement),
        u.mass.with_name(f.mass)
    );
    let gm = &e.metacentric_height;
    let corrected = &e.metacentric_height_corrected;
    let fs = if f.free_surface_moment > 0.0 {
        format!(
            " (corrected for free surface {} and {} {})",
            l.fmt(corrected.transverse),
            l.fmt(corrected.longitudinal),
            l.name
        )
    } else {
        String::new()
    };
    let _ = writeln!(
        s,
        "{ind}GM_T {}, GM_L {}{fs}, reserve buoyancy {}%",
        l.with_name(gm.transverse),
        l.with_name(gm.longitudinal),
        num(100.0 * e.reserve_buoyancy, 1)
    );
    if let Some(st) = &f.stability {
        let vanish = st
            .vanishing_angle
            .map_or_else(|| "none up to 90°".to_owned(), |v| a.with_name(v));
        let _ = writeln!(
            s,
            "{ind}GZ max {} at {}, vanishing angle {vanish}, areas 0-30° {} 0-40° {} 30-40° {} {}",
            l.with_name(st.max_gz),
            a.with_name(st.angle_of_max_gz),
            u.lever_area.fmt(st.area_0_30),
            u.lever_area.fmt(st.area_0_40),
            u.lever_area.fmt(st.area_30_40),
            u.lever_area.name
        );
    }
    if let Some(c) = &f.criteria {
        let verdict = if c.pass { "PASS" } else { "FAIL" };
        let _ = writeln!(
            s,
            "{ind}criteria \"{}\": {verdict} as numbers only, {}{}{}",
            c.name,
            c.compliance,
            if c.free_surface_corrected {
                ", on the curve corrected for free surface"
            } else {
                ""
            },
            if c.from_memory {
                " (some values from memory)"
            } else {
                ""
            }
        );
        for k in &c.checks {
            let _ = writeln!(
                s,
                "{ind}  {} {}: {} (required {})",
                if k.pass { "pass" } else { "FAIL" },
                k.what,
                num(k.actual, 4),
                num(k.required, 4)
            );
        }
    }
}

/// The flotation check with every term, in the chosen units (the result file keeps the
/// SI formula).
fn flotation_block(s: &mut String, f: &FlotationCheck, l: &Loads, u: &Units) {
    let fu = u.force.name;
    let verdict = if f.pass { "PASS" } else { "FAIL" };
    let fs = f
        .factor
        .map_or_else(|| "—".to_owned(), |x| format!("{x:.3}"));
    let _ = writeln!(
        s,
        "    flotation    {verdict}: FS {fs}, required {}",
        num(f.required_factor, 3)
    );
    let terms: Vec<String> = f
        .resisting_terms
        .iter()
        .map(|(n, v)| format!("{n} {}", u.force.fmt(*v)))
        .collect();
    match f.factor {
        Some(_) => {
            let _ = writeln!(
                s,
                "                 FS = Σ resisting / (uplift − downthrust) = ({}) / ({} − {}) {fu} = {} / {} {fu}",
                terms.join(" + "),
                u.force.fmt(l.uplift),
                u.force.fmt(l.downthrust),
                u.force.fmt(f.resisting),
                u.force.fmt(f.uplift)
            );
        }
        None => {
            let _ = writeln!(
                s,
                "                 the net uplift is 0 (the liquid pushes down or not at all), so it cannot float; resisting {} {fu}",
                u.force.fmt(f.resisting)
            );
        }
    }
    match &f.factor_preset {
        Some(p) => {
            let _ = writeln!(
                s,
                "                 required factor from preset \"{}\": {}{}; no code compliance is implied",
                p.name,
                p.source,
                if p.from_memory {
                    " (value from memory)"
                } else {
                    ""
                }
            );
        }
        None => {
            let _ = writeln!(
                s,
                "                 required factor as stated in the sidecar"
            );
        }
    }
}

/// Sweeps with at most this many levels are printed step by step; longer ones only in
/// the result file.
const SWEEP_ROWS: usize = 30;

fn sweep_block(
    s: &mut String,
    sw: &[SweepStep],
    g: Option<&Governing>,
    u: &Units,
    every_case: bool,
) {
    let (fu, mu, lu) = (u.force.name, u.moment.name, u.length.name);
    let liquid = g.map_or("the liquid", |g| g.liquid.as_str());
    let _ = writeln!(
        s,
        "    sweep of {liquid}: {} levels from {} to {} {lu}, {}",
        sw.len(),
        u.elevation(sw.first().map_or(0.0, |x| x.level)),
        u.elevation(sw.last().map_or(0.0, |x| x.level)),
        if every_case {
            "the same in every case"
        } else {
            "the other inputs as in this case"
        }
    );
    let axes: Vec<&String> = sw
        .first()
        .map(|x| x.axis_moments.keys().collect())
        .unwrap_or_default();
    let volumes = sw.first().is_some_and(|x| x.submerged_volume.is_some());
    if sw.len() <= SWEEP_ROWS {
        let mut head = format!(
            "      {:>9} {:>10} {:>10} {:>10} {:>10} {:>10}",
            format!("level {lu}"),
            format!("Fx {fu}"),
            format!("Fy {fu}"),
            format!("Fz {fu}"),
            format!("|F| {fu}"),
            format!("uplift {fu}")
        );
        if volumes {
            let _ = write!(head, " {:>10}", format!("V {}", u.volume.name));
        }
        for a in &axes {
            let _ = write!(head, " {:>16}", format!("{} {mu}", truncate(a, 10)));
        }
        let factors = sw.first().is_some_and(|x| x.flotation_factor.is_some());
        if factors {
            let _ = write!(head, " {:>8}", "FS");
        }
        let _ = writeln!(s, "{head}");
        for x in sw {
            let f = x.force;
            let mag = (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt();
            let mut row = format!(
                "      {:>9} {:>10} {:>10} {:>10} {:>10} {:>10}",
                u.elevation(x.level),
                u.force.fmt(f[0]),
                u.force.fmt(f[1]),
                u.force.fmt(f[2]),
                u.force.fmt(mag),
                u.force.fmt(x.uplift)
            );
            if let Some(v) = x.submerged_volume {
                let _ = write!(row, " {:>10}", u.volume.fmt(v));
            }
            for a in &axes {
                let m = x.axis_moments.get(*a).map_or(0.0, |m| m.moment);
                let _ = write!(row, " {:>16}", u.moment.fmt(m));
            }
            if let Some(fs) = x.flotation_factor {
                let fs = fs.map_or_else(|| "—".to_owned(), |f| format!("{f:.3}"));
                let _ = write!(row, " {fs:>8}");
            }
            let _ = writeln!(s, "{row}");
        }
    } else {
        let _ = writeln!(
            s,
            "      (more than {SWEEP_ROWS} levels: every step is in the result file under \"sweep\")"
        );
    }
    let Some(g) = g else { return };
    let _ = writeln!(
        s,
        "    governing over the sweep (largest magnitude, and the lowest level where it occurs)"
    );
    let mut line = |what: &str, e: &Extreme, value: String, unit: &str| {
        let _ = writeln!(
            s,
            "      {:<24} {:>12} {:<7} at {} {lu}",
            truncate(what, 24),
            value,
            unit,
            u.elevation(e.level)
        );
    };
    line("Fx", &g.force_x, u.force.fmt(g.force_x.value), fu);
    line("Fy", &g.force_y, u.force.fmt(g.force_y.value), fu);
    line("Fz", &g.force_z, u.force.fmt(g.force_z.value), fu);
    line(
        "|F|",
        &g.force_magnitude,
        u.force.fmt(g.force_magnitude.value),
        fu,
    );
    line("uplift", &g.uplift, u.force.fmt(g.uplift.value), fu);
    line(
        "downthrust",
        &g.downthrust,
        u.force.fmt(g.downthrust.value),
        fu,
    );
    if let Some(v) = &g.submerged_volume {
        line("submerged volume", v, u.volume.fmt(v.value), u.volume.name);
    }
    for (name, e) in &g.axis_moments {
        line(
            &format!("moment about {name}"),
            e,
            u.moment.fmt(e.value),
            mu,
        );
    }
    match &g.flotation_factor {
        Some(Some(e)) => line("flotation FS (lowest)", e, format!("{:.3}", e.value), ""),
        Some(None) => {
            let _ = writeln!(
                s,
                "      flotation FS (lowest)    no level gives a net uplift: it cannot float"
            );
        }
        None => {}
    }
    match &g.flotation_limit {
        Some(Some(l)) if l.between[0] == l.between[1] => {
            let _ = writeln!(
                s,
                "      flotation FS < required {:.3} from the first level, {} {}",
                l.required_factor,
                u.elevation(l.level),
                u.length.name
            );
        }
        Some(Some(l)) => {
            let _ = writeln!(
                s,
                "      flotation FS falls to the required {:.3} at level {} {} (between the steps at {} and {} {})",
                l.required_factor,
                u.elevation(l.level),
                u.length.name,
                u.elevation(l.between[0]),
                u.elevation(l.between[1]),
                u.length.name
            );
        }
        Some(None) => {
            let _ = writeln!(
                s,
                "      flotation FS stays at or above the required factor over the whole sweep"
            );
        }
        None => {}
    }
}

fn loads_block(s: &mut String, l: &Loads, ind: &str, contained: bool, u: &Units) {
    let f = l.force;
    let mag = (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt();
    let (fu, mu, lu) = (u.force.name, u.moment.name, u.length.name);
    let _ = writeln!(
        s,
        "{ind}force        Fx {}  Fy {}  Fz {} {fu}   |F| {} {fu}",
        u.force.fmt(f[0]),
        u.force.fmt(f[1]),
        u.force.fmt(f[2]),
        u.force.fmt(mag)
    );
    let _ = writeln!(
        s,
        "{ind}components   horizontal {} {fu}, vertical {} {fu} (+ up)",
        u.force.fmt(l.horizontal_force),
        u.force.fmt(l.vertical_force)
    );
    let m = l.moment;
    let _ = writeln!(
        s,
        "{ind}moment       Mx {}  My {}  Mz {} {mu} about {} {lu}",
        u.moment.fmt(m[0]),
        u.moment.fmt(m[1]),
        u.moment.fmt(m[2]),
        u.point(l.moment_about)
    );
    let _ = writeln!(
        s,
        "{ind}uplift       {} {fu}   downthrust {} {fu}   wetted area {} {}   max pressure {} {}",
        u.force.fmt(l.uplift),
        u.force.fmt(l.downthrust),
        u.area.fmt(l.wetted_area),
        u.area.name,
        u.pressure.fmt(l.max_pressure),
        u.pressure.name
    );
    match &l.line_of_action {
        Some(line) => {
            let _ = writeln!(
                s,
                "{ind}line of action through {} {lu} along {}{}",
                u.point(line.point),
                direction(line.direction),
                if line.couple.abs() > 1e-6 * mag.max(1.0) {
                    format!(", couple {} {mu}", u.moment.fmt(line.couple))
                } else {
                    String::new()
                }
            );
        }
        None => {
            let _ = writeln!(s, "{ind}line of action: none (the net force is zero)");
        }
    }
    if let Some(cp) = l.centre_of_pressure {
        let _ = writeln!(s, "{ind}centre of pressure {} {lu}", u.point(cp));
    }
    if let Some(v) = l.submerged_volume {
        let cob = l
            .centre_of_buoyancy
            .map_or_else(|| "—".to_owned(), |c| format!("{} {lu}", u.point(c)));
        let (volume, centre) = if contained {
            ("liquid inside", "its centroid")
        } else {
            ("submerged volume", "centre of buoyancy")
        };
        let _ = writeln!(
            s,
            "{ind}{volume} {} {}, {centre} {cob}",
            u.volume.fmt(v),
            u.volume.name
        );
    }
    for (name, a) in &l.axis_moments {
        let miss = a.miss_distance.map_or_else(
            || "—".to_owned(),
            |d| format!("{} {}", u.small.fmt(d), u.small.name),
        );
        let _ = writeln!(
            s,
            "{ind}axis {name}: moment {} {mu}, line of action misses it by {miss}",
            u.moment.fmt(a.moment)
        );
    }
}

fn direction(p: [f64; 3]) -> String {
    format!("({}, {}, {})", num(p[0], 4), num(p[1], 4), num(p[2], 4))
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_owned()
    } else {
        let mut t: String = s.chars().take(n - 1).collect();
        t.push('…');
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_sweep_the_same_in_every_case_is_shown_once() {
        use crate::mesh::{Format, Mesh};
        use std::path::Path;
        let plate = shapes::rectangle([0.0, 0.0, 0.0], [0.0, 0.0, 3.0], [0.0, 2.0, 0.0], 3, 2);
        let mesh = Mesh::from_parts(vec![("plate", plate)], Format::Obj);
        let sweep = r#""sweep": {"from": 0.0, "to": 3.0, "step": 0.5}"#;
        let sidecar = |cases: &str| {
            crate::sidecar::parse_sidecar(
                Path::new("p.json"),
                &format!(
                    r#"{{"units": "m", "wet_side": "front", "liquid": {{"level": 1.0, "density": 1000}},
                        {sweep}, "cases": [{cases}]}}"#
                ),
            )
            .expect("valid")
        };
        // Two cases that differ only in the swept level: the same sweep, shown once.
        let same = sidecar(r#"{"name": "low", "level": 1.0}, {"name": "high", "level": 2.5}"#);
        let r = crate::compute::compute("p.obj", &mesh, &same).expect("computes");
        let text = render(&r, SummaryOptions::default());
        assert_eq!(text.matches("sweep of liquid").count(), 1, "{text}");
        assert!(text.contains("the same in every case"), "{text}");
        // Two cases of different densities: two sweeps.
        let differ =
            sidecar(r#"{"name": "fresh", "density": 1000}, {"name": "sea", "density": 1025}"#);
        let r = crate::compute::compute("p.obj", &mesh, &differ).expect("computes");
        let text = render(&r, SummaryOptions::default());
        assert_eq!(text.matches("sweep of liquid").count(), 2, "{text}");
        assert!(!text.contains("the same in every case"), "{text}");
    }

    #[test]
    fn a_sweep_prints_its_steps_and_governing_values_in_si_and_us() {
        use crate::mesh::{Format, Mesh};
        use std::path::Path;
        // A vertical plate 2 m wide, sill at 0, top at 3 m; the level swept 0 → 3 m.
        // Closed form at the top level: F = ½ρgH²w = ½·1000·9.80665·9·2 = 88.25985 kN,
        // moment about the sill line ρgwH³/6 = 88.25985 kN·m.
        let plate = shapes::rectangle([0.0, 0.0, 0.0], [0.0, 0.0, 3.0], [0.0, 2.0, 0.0], 3, 2);
        let mesh = Mesh::from_parts(vec![("plate", plate)], Format::Obj);
        let side = crate::sidecar::parse_sidecar(
            Path::new("p.json"),
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 1.0, "density": 1000},
                "axes": {"sill": {"point": [0, 0, 0], "direction": [0, 1, 0]}},
                "sweep": {"from": 0.0, "to": 3.0, "step": 0.5}}"#,
        )
        .expect("valid");
        let r = crate::compute::compute("p.obj", &mesh, &side).expect("computes");
        let si = render(&r, SummaryOptions::default());
        assert!(
            si.contains("sweep of liquid: 7 levels from 0.000 to 3.000 m"),
            "{si}"
        );
        assert!(
            si.contains("Fx                              88.26 kN      at 3.000 m"),
            "{si}"
        );
        assert!(si.contains("moment about sill"), "{si}");
        let us = render(
            &r,
            SummaryOptions {
                units: UnitSystem::Us,
                ..SummaryOptions::default()
            },
        );
        // 88 259.85 N / 4448.2216 N per kip = 19.84 kip at 3 m = 9.843 ft.
        assert!(
            us.contains("Fx                              19.84 kip     at 9.843 ft"),
            "{us}"
        );
    }

    #[test]
    fn a_floating_case_shows_its_draft_gm_and_curve_in_si_and_us() {
        // Box 20 × 6 × 3 m, 150 t in sea water: T = m/(ρ L B) and
        // GM_T = T/2 + B²/(12 T) − KG (closed forms), shown in m and in ft (1 ft = 0.3048 m).
        let r = crate::compute::tests::floating_box();
        let t = 150_000.0 / (1025.0 * 120.0);
        let gm = t / 2.0 + 36.0 / (12.0 * t) - 1.8;
        let si = render(&r, SummaryOptions::default());
        for want in [
            format!("draft {t:.3} m"),
            "heel 0.0°".to_owned(),
            format!("GM_T {gm:.3} m"),
            "mass 150.0 t".to_owned(),
            "no compliance implied".to_owned(),
            "GZ max".to_owned(),
            "Towing".to_owned(),
        ] {
            assert!(si.contains(&want), "{want} in\n{si}");
        }
        let us = render(
            &r,
            SummaryOptions {
                units: UnitSystem::Us,
                ..SummaryOptions::default()
            },
        );
        let (t_ft, gm_ft) = (t / 0.3048, gm / 0.3048);
        for want in [format!("draft {t_ft:.3} ft"), format!("GM_T {gm_ft:.3} ft")] {
            assert!(us.contains(&want), "{want} in\n{us}");
        }
    }
}
