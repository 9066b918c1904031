//! Mesh health: what `wetload check` reports, per part, about a mesh's topology.
//!
//! Pure: a read [`Mesh`] (and the metres per mesh unit, when a sidecar says it) in, a
//! [`Health`] report out. It runs the same topology as `calc` (weld within 1e-7 of the
//! bounding-box diagonal, edges, shells, winding, nesting) and counts every finding per
//! part. It repairs nothing itself; `calc` makes the winding consistent and turns closed
//! shells outward, and says so in its warnings.

use std::collections::BTreeSet;

use serde::Serialize;

use crate::hydro::{Defect, NO_SHELL, Topology, Tris};
use crate::mesh::Mesh;
pub use crate::mesh::STALE_NORMAL_DEG;
use crate::report::units::{UnitSystem, Units};

/// The health report of one mesh (`check --json`).
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Health {
    pub mesh: String,
    /// The length unit of `bounding_box`, `surface_area`, `volume`: `"m"` when a sidecar
    /// gave the mesh's units, else `"file units"`.
    pub length_unit: String,
    pub closed: bool,
    pub parts: Vec<PartHealth>,
    pub warnings: Vec<String>,
    /// Every open and non-manifold edge: where the holes and seams are.
    pub edges: Vec<FaultyEdge>,
    /// The mesh judged with its sidecar, when it has one: whether `calc` accepts the pair.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub with_sidecar: Option<SidecarVerdict>,
    /// Whether `calc` can use the mesh as it is (no repair, no defect).
    #[serde(skip)]
    pub usable_as_is: bool,
    /// Metres per mesh unit (1 when unknown), for showing edge positions.
    #[serde(skip)]
    pub scale: f64,
}

/// Whether `calc` would compute a mesh with its sidecar, and why not.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SidecarVerdict {
    /// The sidecar's path.
    pub sidecar: String,
    pub accepted: bool,
    /// `calc`'s refusal, naming the file and the fix, when not accepted.
    pub reason: Option<String>,
}

/// An open or non-manifold edge, with its end points in the mesh's own axes and units (as
/// in the file, so it lies exactly on the CAD model).
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct FaultyEdge {
    /// `"open"` (one facet uses it: a hole's rim or the border of a surface) or
    /// `"non-manifold"` (more than two facets use it).
    pub kind: &'static str,
    /// The part of its first facet.
    pub part: String,
    pub from: [f64; 3],
    pub to: [f64; 3],
}

/// Findings for one part.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct PartHealth {
    pub name: String,
    pub facets: usize,
    pub shells: usize,
    pub closed: bool,
    pub open_edges: usize,
    pub non_manifold_edges: usize,
    pub inconsistent_edges: usize,
    pub degenerate_facets: usize,
    pub duplicate_facets: usize,
    pub inverted_shells: usize,
    pub stale_normals: usize,
    /// `[min, max]`, mesh axes.
    pub bounding_box: [[f64; 3]; 2],
    pub surface_area: f64,
    /// Enclosed volume (outer shells minus sealed cavities) when the part is closed by
    /// itself, else null.
    pub volume: Option<f64>,
}

/// Checks `mesh`; `scale` converts mesh units to metres when known.
pub fn check(name: &str, mesh: &Mesh, scale: Option<f64>) -> Health {
    let s = scale.unwrap_or(1.0);
    // The topology in the file's units (its tolerance is relative to the size, so the
    // scale does not matter to it), read in place; sizes are scaled when reported.
    let tris = &mesh.facets;
    let topo = Topology::build(tris);
    let mut parts = Vec::with_capacity(mesh.parts.len());
    for part in &mesh.parts {
        let range = part.facets.clone();
        let count = |d: Defect| {
            topo.defects
                .iter()
                .filter(|(k, f)| *k == d && range.contains(&(*f as usize)))
                .count()
        };
        let shells: BTreeSet<u32> = topo.facet_shell[range.clone()]
            .iter()
            .copied()
            .filter(|&s| s != NO_SHELL)
            .collect();
        let inverted_shells = shells
            .iter()
            .filter(|&&s| topo.shells[s as usize].inverted)
            .count();
        let closed = topo.closed_within(range.clone());
        let volume = closed.then(|| {
            shells
                .iter()
                .map(|&s| {
                    let sh = &topo.shells[s as usize];
                    if sh.depth.is_multiple_of(2) {
                        sh.volume
                    } else {
                        -sh.volume
                    }
                })
                .sum::<f64>()
                * s
                * s
                * s
        });
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        let mut area = 0.0;
        let stale = mesh.stale_normals(range.clone());
        for f in range.clone() {
            let t = &tris.tri(f);
            for p in t {
                for k in 0..3 {
                    lo[k] = lo[k].min(p[k]);
                    hi[k] = hi[k].max(p[k]);
                }
            }
            let a = (t[1] - t[0]).cross(&(t[2] - t[0]));
            area += 0.5 * a.norm();
        }
        let (lo, hi, area) = (lo.map(|v| v * s), hi.map(|v| v * s), area * s * s);
        parts.push(PartHealth {
            name: part.name.clone(),
            facets: range.len(),
            shells: shells.len(),
            closed,
            open_edges: count(Defect::OpenEdge),
            non_manifold_edges: count(Defect::NonManifoldEdge),
            inconsistent_edges: count(Defect::InconsistentEdge),
            degenerate_facets: count(Defect::Degenerate),
            duplicate_facets: count(Defect::Duplicate),
            inverted_shells,
            stale_normals: stale,
            bounding_box: [lo, hi],
            surface_area: area,
            volume,
        });
    }

    let mut warnings = Vec::new();
    let closed = topo.closed();
    if !closed {
        warnings.push(format!(
            "the mesh is open ({} open edges, {} non-manifold edges): it has no volume, and calc needs \"wet_side\": \"front\" or \"back\" (the side the right-hand-rule normals point to, or the other)",
            topo.open_edges, topo.non_manifold_edges
        ));
    }
    if topo.inconsistent_edges > 0 {
        warnings.push(format!(
            "{} edge(s) join facets wound in opposite senses: calc makes the winding consistent within each closed shell",
            topo.inconsistent_edges
        ));
    }
    let open_alone: Vec<&str> = parts
        .iter()
        .filter(|p| !p.closed)
        .map(|p| p.name.as_str())
        .collect();
    if closed && !open_alone.is_empty() {
        warnings.push(format!(
            "the parts {} are open by themselves and close the hull only together: calc treats the whole mesh as one closed body, and reports no volume for those parts alone",
            quoted(&open_alone)
        ));
    }
    let inverted: usize = parts.iter().map(|p| p.inverted_shells).sum();
    if inverted > 0 {
        warnings.push(format!(
            "{inverted} closed shell(s) are wound inward (negative volume): calc turns them outward"
        ));
    }
    let stale: usize = parts.iter().map(|p| p.stale_normals).sum();
    if stale > 0 {
        warnings.push(format!(
            "{stale} stored STL normal(s) disagree with their facet's winding by more than {STALE_NORMAL_DEG}°: wetload ignores stored normals, but other tools may not"
        ));
    }
    if topo.duplicate_facets > 0 {
        warnings.push(format!(
            "{} duplicate facet(s): loads on them would be counted twice",
            topo.duplicate_facets
        ));
    }
    if topo.degenerate_facets > 0 {
        warnings.push(format!(
            "{} degenerate facet(s) (zero or near-zero area)",
            topo.degenerate_facets
        ));
    }
    let edges: Vec<FaultyEdge> = topo
        .edge_faults
        .iter()
        .map(|e| {
            let [a, b] = e.ends(tris);
            let part = mesh
                .parts
                .iter()
                .find(|p| p.facets.contains(&(e.facet as usize)))
                .map_or_else(String::new, |p| p.name.clone());
            FaultyEdge {
                kind: if e.kind == Defect::OpenEdge {
                    "open"
                } else {
                    "non-manifold"
                },
                part,
                from: [a.x, a.y, a.z],
                to: [b.x, b.y, b.z],
            }
        })
        .collect();
    let usable_as_is = topo.non_manifold_edges == 0
        && topo.inconsistent_edges == 0
        && inverted == 0
        && topo.duplicate_facets == 0
        && topo.degenerate_facets == 0
        && !tris.is_empty();
    Health {
        mesh: name.to_owned(),
        length_unit: if scale.is_some() { "m" } else { "file units" }.to_owned(),
        closed,
        parts,
        warnings,
        edges,
        with_sidecar: None,
        usable_as_is,
        scale: s,
    }
}

/// The open and non-manifold edges as an OBJ file of line elements, in the mesh's own
/// axes and units, so that it opens over the mesh in CAD or any viewer: one object per
/// kind (`open_edges`, `non_manifold_edges`), each edge a line `l a b` between its two
/// end points. `None` when there are none.
pub fn edges_obj(h: &Health) -> Option<String> {
    use std::fmt::Write;
    if h.edges.is_empty() {
        return None;
    }
    let mut s = format!(
        "# {}: open and non-manifold edges found by wetload check (mesh axes and units)\n",
        h.mesh
    );
    let mut n = 0;
    for (kind, object) in [
        ("open", "open_edges"),
        ("non-manifold", "non_manifold_edges"),
    ] {
        let edges: Vec<&FaultyEdge> = h.edges.iter().filter(|e| e.kind == kind).collect();
        if edges.is_empty() {
            continue;
        }
        let _ = writeln!(s, "o {object}");
        for e in edges {
            for p in [e.from, e.to] {
                let _ = writeln!(s, "v {} {} {}", p[0], p[1], p[2]);
            }
            let _ = writeln!(s, "l {} {}", n + 1, n + 2);
            n += 2;
        }
    }
    Some(s)
}

/// Names in quotes, joined with commas and a final "and".
fn quoted(names: &[&str]) -> String {
    let q: Vec<String> = names.iter().map(|n| format!("\"{n}\"")).collect();
    match q.as_slice() {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// The health report as text for the terminal: sizes in metres with the decimals of
/// [`crate::report::units`] when a sidecar gave the units, else in the file's own units
/// (said so) with the same decimals.
pub fn render(h: &Health) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let verdict = if h.usable_as_is {
        "usable as it is"
    } else {
        "needs attention"
    };
    let _ = writeln!(
        s,
        "{} · {} · {} ({})",
        h.mesh,
        if h.closed { "closed" } else { "open" },
        verdict,
        h.length_unit
    );
    for p in &h.parts {
        let _ = writeln!(
            s,
            "  part {}: {} facets, {} shell(s), {}",
            p.name,
            p.facets,
            p.shells,
            if p.closed { "closed" } else { "open" }
        );
        let _ = writeln!(
            s,
            "    open edges {}, non-manifold {}, inconsistent {}, degenerate {}, duplicate {}, inverted shells {}, stale normals {}",
            p.open_edges,
            p.non_manifold_edges,
            p.inconsistent_edges,
            p.degenerate_facets,
            p.duplicate_facets,
            p.inverted_shells,
            p.stale_normals
        );
        let [lo, hi] = p.bounding_box;
        let si = Units::of(UnitSystem::Si);
        let (l, a, v) = if h.length_unit == "m" {
            (si.length.name, si.area.name, si.volume.name)
        } else {
            ("file units", "file units²", "file units³")
        };
        let vol = p.volume.map_or_else(
            || "— (not closed by itself)".to_owned(),
            |x| format!("{} {v}", si.volume.fmt(x)),
        );
        let _ = writeln!(
            s,
            "    size {} × {} × {} {l}, surface area {} {a}, volume {vol}",
            si.length.fmt(hi[0] - lo[0]),
            si.length.fmt(hi[1] - lo[1]),
            si.length.fmt(hi[2] - lo[2]),
            si.area.fmt(p.surface_area),
        );
    }
    if let Some(v) = &h.with_sidecar {
        match &v.reason {
            None => {
                let _ = writeln!(s, "  with its sidecar {}: calc accepts it", v.sidecar);
            }
            Some(why) => {
                let _ = writeln!(
                    s,
                    "  with its sidecar {}: calc would refuse it: {why}",
                    v.sidecar
                );
            }
        }
    }
    if !h.edges.is_empty() {
        let unit = if h.length_unit == "m" {
            "m"
        } else {
            "file units"
        };
        let si = Units::of(UnitSystem::Si);
        let at = |p: [f64; 3]| {
            format!(
                "({}, {}, {})",
                si.length.fmt(p[0] * h.scale),
                si.length.fmt(p[1] * h.scale),
                si.length.fmt(p[2] * h.scale)
            )
        };
        let _ = writeln!(s, "  where the holes and seams are ({unit}, mesh axes):");
        for e in h.edges.iter().take(SHOWN_EDGES) {
            let _ = writeln!(
                s,
                "    {} edge of part {}: {} to {}",
                e.kind,
                e.part,
                at(e.from),
                at(e.to)
            );
        }
        if h.edges.len() > SHOWN_EDGES {
            let _ = writeln!(
                s,
                "    … and {} more; all of them are in the edges file",
                h.edges.len() - SHOWN_EDGES
            );
        }
    }
    for w in &h.warnings {
        let _ = writeln!(s, "  warning: {w}");
    }
    s
}

/// Open and non-manifold edges listed on the terminal; the rest are in the edges file.
pub const SHOWN_EDGES: usize = 8;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mesh::Format;

    fn mesh(parts: Vec<(&str, Vec<shapes::Triangle>)>, normals: bool) -> Mesh {
        let mut m = Mesh::from_parts(parts, Format::StlAscii);
        if normals {
            m.set_stored_normals(&winding_normals(&m.facets.to_vec()));
        }
        m
    }

    /// The right-hand-rule normal of each facet, as an exporter would store it.
    fn winding_normals(facets: &[[[f64; 3]; 3]]) -> Vec<[f32; 3]> {
        facets
            .iter()
            .map(|t| {
                let u = [t[1][0] - t[0][0], t[1][1] - t[0][1], t[1][2] - t[0][2]];
                let v = [t[2][0] - t[0][0], t[2][1] - t[0][1], t[2][2] - t[0][2]];
                [
                    (u[1] * v[2] - u[2] * v[1]) as f32,
                    (u[2] * v[0] - u[0] * v[2]) as f32,
                    (u[0] * v[1] - u[1] * v[0]) as f32,
                ]
            })
            .collect()
    }

    fn cube(at: f64) -> Vec<shapes::Triangle> {
        shapes::box_solid([at, 0.0, 0.0], [at + 1.0, 1.0, 1.0], 1)
    }

    #[test]
    fn a_clean_cube_is_usable_as_it_is() {
        let h = check("c.stl", &mesh(vec![("c", cube(0.0))], true), Some(1.0));
        assert!(h.usable_as_is && h.closed);
        let p = &h.parts[0];
        assert_eq!((p.shells, p.open_edges, p.stale_normals), (1, 0, 0));
        assert!((p.surface_area - 6.0).abs() < 1e-12);
        assert!((p.volume.expect("closed") - 1.0).abs() < 1e-12);
    }

    #[test]
    fn sizes_are_reported_in_metres_for_a_mesh_in_millimetres() {
        // A 1000 mm cube: 1 m³, 6 m², a box from 0 to 1 m; the same counts as in metres.
        let cube = shapes::box_solid([0.0; 3], [1000.0; 3], 2);
        let h = check("mm.stl", &mesh(vec![("c", cube)], true), Some(1e-3));
        let p = &h.parts[0];
        assert!(h.usable_as_is && p.closed && p.shells == 1);
        assert!((p.volume.expect("closed") - 1.0).abs() < 1e-12);
        assert!((p.surface_area - 6.0).abs() < 1e-12);
        assert_eq!(p.bounding_box, [[0.0; 3], [1.0; 3]]);
    }

    #[test]
    fn each_defect_is_counted_in_its_part() {
        // Part a: one facet missing (3 open edges). Part b: one facet reversed (3
        // inconsistent edges) and its stored normal left as it was (1 stale normal).
        // Part c: a duplicated facet (1 duplicate, 3 non-manifold edges).
        let mut a = cube(0.0);
        a.pop();
        let mut m = mesh(vec![("a", a), ("b", cube(3.0)), ("c", cube(6.0))], false);
        let mut facets = m.facets.to_vec();
        let mut normals = winding_normals(&facets);
        let b0 = m.parts[1].facets.start;
        facets[b0].swap(1, 2);
        let c0 = m.parts[2].facets.start;
        facets.push(facets[c0]);
        m.facets = facets.into();
        normals.push(normals[c0]);
        m.parts[2].facets.end += 1;
        m.set_stored_normals(&normals);
        let h = check("m.stl", &m, None);
        assert!(!h.usable_as_is && !h.closed);
        let counts: Vec<[usize; 6]> = h
            .parts
            .iter()
            .map(|p| {
                [
                    p.open_edges,
                    p.inconsistent_edges,
                    p.stale_normals,
                    p.duplicate_facets,
                    p.non_manifold_edges,
                    usize::from(p.closed),
                ]
            })
            .collect();
        assert_eq!(
            counts,
            vec![[3, 0, 0, 0, 0, 0], [0, 3, 1, 0, 0, 1], [0, 0, 0, 1, 3, 0]]
        );
        assert_eq!(h.length_unit, "file units");
    }

    #[test]
    fn parts_that_close_only_together_are_said_plainly_and_sizes_carry_units() {
        // A 2 × 1 × 1 m box cut into two halves at x = 1 m: each half is an open box (an
        // end and half of each of the four sides), the two together a closed hull.
        let whole = shapes::box_solid([0.0; 3], [2.0, 1.0, 1.0], 2);
        let centroid_x = |t: &shapes::Triangle| (t[0][0] + t[1][0] + t[2][0]) / 3.0;
        let (left, right): (Vec<_>, Vec<_>) = whole.iter().partition(|t| centroid_x(t) < 1.0);
        let h = check(
            "hull.obj",
            &mesh(vec![("left", left), ("right", right)], false),
            Some(1.0),
        );
        assert!(h.closed && h.parts.iter().all(|p| !p.closed));
        let text = render(&h);
        assert!(
            text.contains("the parts \"left\" and \"right\" are open by themselves and close the hull only together"),
            "{text}"
        );
        // Each half: 1 × 1 × 1 m, surface 1 + 4 × 1 = 5 m² (its end and four half-sides).
        assert!(text.contains("size 1.000 × 1.000 × 1.000 m, surface area 5.000 m², volume — (not closed by itself)"), "{text}");
        let h = check(
            "hull.obj",
            &mesh(
                vec![("all", shapes::box_solid([0.0; 3], [2.0, 1.0, 1.0], 2))],
                false,
            ),
            None,
        );
        let text = render(&h);
        assert!(text.contains("size 2.000 × 1.000 × 1.000 file units, surface area 10.000 file units², volume 2.000 file units³"), "{text}");
    }

    #[test]
    fn the_rim_of_a_hole_is_listed_and_written_as_obj_lines() {
        // A unit cube in millimetres (1000 mm) with one facet taken out: a triangular hole
        // whose three edges are open, and no other edge is.
        let mut tris = shapes::box_solid([0.0; 3], [1000.0; 3], 1);
        let gone = tris.pop().expect("a facet");
        let h = check("holed.stl", &mesh(vec![("shell", tris)], false), Some(1e-3));
        assert_eq!(h.edges.len(), 3);
        let mut ends: Vec<[f64; 3]> = h.edges.iter().flat_map(|e| [e.from, e.to]).collect();
        ends.sort_by(|a, b| a.partial_cmp(b).expect("finite"));
        ends.dedup();
        let mut corners = gone.to_vec();
        corners.sort_by(|a, b| a.partial_cmp(b).expect("finite"));
        assert_eq!(
            ends, corners,
            "the hole's rim is the removed facet's outline"
        );
        assert!(
            h.edges
                .iter()
                .all(|e| e.kind == "open" && e.part == "shell")
        );
        let obj = edges_obj(&h).expect("edges to write");
        assert_eq!(obj.lines().filter(|l| l.starts_with("v ")).count(), 6);
        assert_eq!(obj.lines().filter(|l| l.starts_with("l ")).count(), 3);
        assert!(obj.contains("o open_edges"));
        // Coordinates in the file's units (mm), so the file lies on the CAD model.
        assert!(obj.contains("1000"));
        // The terminal shows them in metres.
        let text = render(&h);
        assert!(
            text.contains("where the holes and seams are (m, mesh axes)"),
            "{text}"
        );
        assert!(text.contains("open edge of part shell: ("), "{text}");
        assert!(text.contains("1.000"), "{text}");
        // A clean cube has none, and no file.
        let h = check("c.stl", &mesh(vec![("c", cube(0.0))], false), None);
        assert!(h.edges.is_empty() && edges_obj(&h).is_none());
    }

    #[test]
    fn an_inward_cube_is_flagged() {
        let h = check(
            "i.stl",
            &mesh(vec![("i", shapes::reverse_winding(&cube(0.0)))], false),
            None,
        );
        assert_eq!(h.parts[0].inverted_shells, 1);
        assert!(!h.usable_as_is);
    }
}
