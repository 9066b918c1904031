//! The terminal summary of a result: a compact block per case, parts as a table.
//!
//! Layout (plain text, 2-space indents, kN / kN·m / m² / m³ / kPa, mesh axes):
//!
//! ```text
//! radial_gate.stl · binary STL · 256 facets · 1 part · open surface
//!   units mm, up +z, g 9.80665 m/s², moments about (0.000, 0.000, 4.500) m
//!
//!   case normal · liquid level 5.000 m, 1000 kg/m³
//!     force         Fx −490.33  Fy 0.00  Fz 288.23 kN   |F| 568.84 kN
//!     …
//! ```
//! It ends with the warnings and the caution.

use std::fmt::Write;

use crate::compute::{CaseResult, Loads, MeshResult};

/// Options of the summary.
#[derive(Clone, Copy, Debug, Default)]
pub struct SummaryOptions {
    /// Leave out the caution (when several meshes are printed, it is printed once).
    pub no_caution: bool,
}

/// Renders the summary of one mesh.
pub fn render(r: &MeshResult, opts: SummaryOptions) -> String {
    let mut s = String::new();
    let i = &r.inputs;
    let surface = if i.closed {
        format!("closed ({} shell{})", i.shells, plural(i.shells))
    } else {
        "open surface".to_owned()
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
        "  units {}, up {}, g {} m/s², moments about {} m",
        i.units,
        i.up,
        i.gravity,
        point(about)
    );
    let bb = i.bounding_box;
    let _ = writeln!(
        s,
        "  size {:.3} × {:.3} × {:.3} m (mesh axes)",
        bb[1][0] - bb[0][0],
        bb[1][1] - bb[0][1],
        bb[1][2] - bb[0][2]
    );
    for c in &r.cases {
        s.push('\n');
        case_block(&mut s, c, i.parts.len() > 1);
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

fn case_block(s: &mut String, c: &CaseResult, several_parts: bool) {
    let liquids: Vec<String> = c
        .liquids
        .iter()
        .map(|l| {
            let dens: Vec<String> = l.layers.iter().map(|(d, _)| format!("{d}")).collect();
            let gas = if l.surface_pressure != 0.0 {
                format!(", gas {:.2} kPa", l.surface_pressure / 1000.0)
            } else {
                String::new()
            };
            format!(
                "{} level {:.3} m, {} kg/m³{gas}",
                l.name,
                l.level,
                dens.join("/")
            )
        })
        .collect();
    let _ = writeln!(s, "  case {} · {}", c.name, liquids.join("; "));
    loads_block(s, &c.loads, "    ");
    if several_parts {
        let _ = writeln!(
            s,
            "    {:<20} {:>11} {:>11} {:>11} {:>11} {:>11} {:>10}",
            "part", "Fx kN", "Fy kN", "Fz kN", "uplift kN", "area m²", "volume m³"
        );
        for p in &c.parts {
            let l = &p.loads;
            let vol = l
                .submerged_volume
                .map_or_else(|| "—".to_owned(), |v| format!("{v:.3}"));
            let _ = writeln!(
                s,
                "    {:<20} {:>11} {:>11} {:>11} {:>11.2} {:>11.3} {:>10}",
                truncate(&p.name, 20),
                num(l.force[0] / 1e3, 2),
                num(l.force[1] / 1e3, 2),
                num(l.force[2] / 1e3, 2),
                l.uplift / 1e3,
                l.wetted_area,
                vol
            );
        }
    }
    if let Some(sw) = &c.sweep {
        let _ = writeln!(
            s,
            "    sweep of {} levels from {:.3} to {:.3} m (table in the result file)",
            sw.len(),
            sw.first().map_or(0.0, |x| x.level),
            sw.last().map_or(0.0, |x| x.level)
        );
    }
    if let Some(f) = &c.flotation {
        let verdict = if f.pass { "PASS" } else { "FAIL" };
        let _ = writeln!(s, "    flotation    {verdict}: {}", f.formula);
    }
}

fn loads_block(s: &mut String, l: &Loads, ind: &str) {
    let f = l.force;
    let mag = (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt();
    let _ = writeln!(
        s,
        "{ind}force        Fx {}  Fy {}  Fz {} kN   |F| {:.2} kN",
        num(f[0] / 1e3, 2),
        num(f[1] / 1e3, 2),
        num(f[2] / 1e3, 2),
        mag / 1e3
    );
    let _ = writeln!(
        s,
        "{ind}components   horizontal {:.2} kN, vertical {} kN (+ up)",
        l.horizontal_force / 1e3,
        num(l.vertical_force / 1e3, 2)
    );
    let m = l.moment;
    let _ = writeln!(
        s,
        "{ind}moment       Mx {}  My {}  Mz {} kN·m about {} m",
        num(m[0] / 1e3, 2),
        num(m[1] / 1e3, 2),
        num(m[2] / 1e3, 2),
        point(l.moment_about)
    );
    let _ = writeln!(
        s,
        "{ind}uplift       {:.2} kN   downthrust {:.2} kN   wetted area {:.3} m²   max pressure {:.2} kPa",
        l.uplift / 1e3,
        l.downthrust / 1e3,
        l.wetted_area,
        l.max_pressure / 1e3
    );
    match &l.line_of_action {
        Some(line) => {
            let _ = writeln!(
                s,
                "{ind}line of action through {} m along {}{}",
                point(line.point),
                direction(line.direction),
                if line.couple.abs() > 1e-6 * mag.max(1.0) {
                    format!(", couple {:.3} kN·m", line.couple / 1e3)
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
        let _ = writeln!(s, "{ind}centre of pressure {} m", point(cp));
    }
    if let Some(v) = l.submerged_volume {
        let cob = l
            .centre_of_buoyancy
            .map_or_else(|| "—".to_owned(), |c| format!("{} m", point(c)));
        let _ = writeln!(
            s,
            "{ind}submerged volume {v:.3} m³, centre of buoyancy {cob}"
        );
    }
    for (name, a) in &l.axis_moments {
        let miss = a
            .miss_distance
            .map_or_else(|| "—".to_owned(), |d| format!("{:.1} mm", d * 1e3));
        let _ = writeln!(
            s,
            "{ind}axis {name}: moment {} kN·m, line of action misses it by {miss}",
            num(a.moment / 1e3, 3)
        );
    }
}

fn point(p: [f64; 3]) -> String {
    format!("({}, {}, {})", num(p[0], 3), num(p[1], 3), num(p[2], 3))
}

fn direction(p: [f64; 3]) -> String {
    format!("({}, {}, {})", num(p[0], 4), num(p[1], 4), num(p[2], 4))
}

/// `x` with `digits` decimals, without the minus sign of a value that rounds to zero.
fn num(x: f64, digits: usize) -> String {
    let s = format!("{x:.digits$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
        _ => s,
    }
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
