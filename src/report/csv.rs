//! The load on every facet of one case as CSV (`results/<stem>[.<case>].csv`), for
//! transferring hydrostatic loads to a finite-element model or a spreadsheet.
//!
//! Owns the rendering of a [`Field`]'s facet rows into bytes; it computes nothing and
//! writes no file.
//!
//! # Layout
//!
//! RFC 4180 CSV, UTF-8, `\n` line ends, one header row, then one row per facet in mesh
//! order (parts are contiguous):
//!
//! ```text
//! part,facet,cx_m,cy_m,cz_m,nx,ny,nz,area_m2,mean_pressure_pa,fx_n,fy_n,fz_n
//! skin,0,1.5,0.0,-0.25,0.0,-1.0,0.0,0.125,2451.6625,0.0,306.4578125,0.0
//! ```
//!
//! * `part`: the part's name (quoted when it holds a comma, a quote or a line break);
//!   `facet`: the facet's index within its part, from 0.
//! * `cx_m, cy_m, cz_m`: the facet's centroid, m, mesh axes.
//! * `nx, ny, nz`: unit normal pointing into the liquid (the stored right-hand-rule
//!   normal on a facet no liquid reaches).
//! * `area_m2`: the whole facet's area, m².
//! * `mean_pressure_pa`: |force| / area over the whole facet, Pa (0 when dry).
//! * `fx_n, fy_n, fz_n`: the force of the liquid on the facet, N, mesh axes; the rows sum
//!   to the case's `force`.
//!
//! Numbers are in the shortest form that reads back to the same f64.

use std::fmt::Write;

use crate::compute::Field;

/// The header row (units in the names).
pub const HEADER: &str =
    "part,facet,cx_m,cy_m,cz_m,nx,ny,nz,area_m2,mean_pressure_pa,fx_n,fy_n,fz_n";

/// Renders one row per facet of `field` under [`HEADER`].
pub fn render(field: &Field) -> Vec<u8> {
    let mut s = String::with_capacity(160 * (field.facets.len() + 1));
    s.push_str(HEADER);
    s.push('\n');
    for row in &field.facets {
        let part = field.parts.get(row.part).map_or("", String::as_str);
        s.push_str(&quote(part));
        let _ = write!(s, ",{}", row.index);
        let numbers = row
            .centroid
            .iter()
            .chain(&row.normal)
            .chain([&row.area, &row.mean_pressure])
            .chain(&row.force);
        for x in numbers {
            let _ = write!(s, ",{x:?}");
        }
        s.push('\n');
    }
    s.into_bytes()
}

/// A field as RFC 4180 wants it: quoted, with quotes doubled, when it needs to be.
fn quote(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) || text.starts_with(' ') || text.ends_with(' ') {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_owned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::{compute, field};
    use crate::mesh::{Format, Mesh, Part};

    use crate::sidecar::parse_sidecar;
    use approx::assert_relative_eq;
    use std::path::Path;

    /// Splits one CSV line into fields (enough of RFC 4180 for these tests).
    fn fields(line: &str) -> Vec<String> {
        let mut out = Vec::new();
        let mut cur = String::new();
        let mut quoted = false;
        let mut chars = line.chars().peekable();
        while let Some(c) = chars.next() {
            match (c, quoted) {
                ('"', true) if chars.peek() == Some(&'"') => {
                    cur.push('"');
                    chars.next();
                }
                ('"', _) => quoted = !quoted,
                (',', false) => out.push(std::mem::take(&mut cur)),
                (c, _) => cur.push(c),
            }
        }
        out.push(cur);
        out
    }

    #[test]
    fn the_rows_sum_to_the_case_force() {
        // Two parts, one of them a closed box half under water, with a name that needs
        // quoting, and a sloped plate; both loaded by the same liquid.
        let hull = shapes::perturb(
            &shapes::box_solid([0.0, 0.0, 0.0], [2.0, 3.0, 2.0], 3),
            0.01,
            3,
        );
        let mut facets = hull.clone();
        facets.extend(shapes::translate(&hull, [5.0, 0.0, 0.0]));
        let m = Mesh {
            parts: vec![
                Part {
                    name: "hull, \"port\"".to_owned(),
                    facets: 0..hull.len(),
                },
                Part {
                    name: "starboard".to_owned(),
                    facets: hull.len()..facets.len(),
                },
            ],
            facets: facets.into(),
            normal_stale: None,
            vertex_ids: None,
            format: Format::Obj,
            extremes: None,
        };
        let s = parse_sidecar(
            Path::new("t.json"),
            r#"{"units": "m", "liquid": {"level": 1.1, "density": 1000}}"#,
        )
        .expect("valid sidecar");
        let r = compute("t.obj", &m, &s).expect("computes");
        let text = String::from_utf8(render(&field(&m, &s, 0).expect("computes"))).expect("utf-8");
        let mut lines = text.lines();
        assert_eq!(lines.next(), Some(HEADER));
        let mut sum = [0.0; 3];
        let mut rows = 0;
        let mut ports = 0;
        for line in lines {
            let f = fields(line);
            assert_eq!(f.len(), 13, "{line}");
            if f[0] == "hull, \"port\"" {
                ports += 1;
            }
            for k in 0..3 {
                sum[k] += f[10 + k].parse::<f64>().expect("a number");
            }
            rows += 1;
        }
        assert_eq!(rows, m.facets.len());
        assert_eq!(ports, hull.len());
        // The sum of the facet forces is the case force (the same integrals, summed in
        // another order, so equal to round-off).
        let total = r.cases[0].loads.force;
        let scale = r.cases[0].loads.uplift;
        for k in 0..3 {
            assert_relative_eq!(sum[k], total[k], epsilon = 1e-9 * scale);
        }
        // Archimedes, as a check from outside: two boxes each 2 × 3 × 1.1 m under water
        // (the perturbation moves vertices by at most 1 cm, so within 3 %).
        assert_relative_eq!(sum[2], 2.0 * 1000.0 * 9.80665 * 6.6, max_relative = 0.03);
    }

    #[test]
    fn fields_are_quoted_only_when_needed() {
        assert_eq!(quote("skin"), "skin");
        assert_eq!(quote("a,b"), "\"a,b\"");
        assert_eq!(quote("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(quote("two\nlines"), "\"two\nlines\"");
    }
}
