//! The consistent nodal forces of one case as CSV (`results/<stem>[.<case>].nodal.csv`),
//! for a finite-element model built on the same vertices: the loads at its nodes.
//!
//! Owns the rendering of a [`Field`]'s nodal loads into bytes; it computes nothing and
//! writes no file.
//!
//! # Layout
//!
//! RFC 4180 CSV, UTF-8, `\n` line ends, one header row, then one row per vertex that
//! carries load, by vertex number:
//!
//! ```text
//! vertex,x_m,y_m,z_m,fx_n,fy_n,fz_n
//! 17,0.0,1.5,-0.25,0.0,306.4578125,0.0
//! ```
//!
//! * `vertex`: an OBJ file's 1-based vertex number (its node number), or for an STL the
//!   1-based number of the distinct vertex position (identical coordinates are one vertex)
//!   in order of first appearance.
//! * `x_m, y_m, z_m`: the vertex, m, mesh axes.
//! * `fx_n, fy_n, fz_n`: f_i = −∫ N_i p n dA over the facets around the vertex (N_i its
//!   linear shape function on each facet), N, mesh axes; exact for the piecewise-linear
//!   pressure. The rows sum to the case's `force`, and their moments to its `moment`.
//!
//! Numbers are in the shortest form that reads back to the same f64.

use std::fmt::Write;

use crate::compute::Field;

/// The header row (pinned by the interface: units in the names).
pub const HEADER: &str = "vertex,x_m,y_m,z_m,fx_n,fy_n,fz_n";

/// Renders one row per loaded vertex of `field` under [`HEADER`].
pub fn render(field: &Field) -> Vec<u8> {
    let mut s = String::with_capacity(120 * (field.nodes.len() + 1));
    s.push_str(HEADER);
    s.push('\n');
    for n in &field.nodes {
        let _ = write!(s, "{}", n.vertex);
        for x in n.position.iter().chain(&n.force) {
            let _ = write!(s, ",{x:?}");
        }
        s.push('\n');
    }
    s.into_bytes()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::NodalLoad;

    #[test]
    fn one_row_a_loaded_vertex_under_the_pinned_header() {
        let field = Field {
            pieces: Vec::new(),
            facets: Vec::new(),
            parts: Vec::new(),
            nodes: vec![
                NodalLoad {
                    vertex: 3,
                    position: [0.0, 1.5, -0.25],
                    force: [0.0, 306.4578125, 0.0],
                },
                NodalLoad {
                    vertex: 17,
                    position: [0.1, 0.2, 0.3],
                    force: [-1e-300, 2.5, 1e300],
                },
            ],
        };
        let text = String::from_utf8(render(&field)).expect("utf-8");
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "vertex,x_m,y_m,z_m,fx_n,fy_n,fz_n");
        assert_eq!(lines[1], "3,0.0,1.5,-0.25,0.0,306.4578125,0.0");
        // Every number reads back to the same f64.
        let back: Vec<f64> = lines[2]
            .split(',')
            .skip(1)
            .map(|x| x.parse().expect("number"))
            .collect();
        assert_eq!(back, [0.1, 0.2, 0.3, -1e-300, 2.5, 1e300]);
    }
}
