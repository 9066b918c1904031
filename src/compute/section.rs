//! Vertical sections through a case's pressure field: the plane chosen for the pressure
//! diagram, the mesh's outline in it, and the wetted runs with their pressures, in the
//! plane's own 2D coordinates.
//!
//! Pure: reads a [`Field`] (mesh axes, metres) and the case's result, and returns
//! polylines; `crate::report::svg` draws them. Nothing here formats a value.
//!
//! # The plane
//!
//! Every section is a vertical plane: it holds `up` (the mesh's up axis; for a floating
//! case the normal of its solved free surface, so that levels stay level in the drawing).
//! A point `x` of the plane has the 2D coordinates `s = along · (x − point)` and
//! `z = up · x`, so `z` is the elevation the result document's levels are written in, and
//! `along × up = normal`.
//!
//! - The default section ([`PlaneChoice::Resultant`]) is the plane through the case's line
//!   of action that holds the horizontal part of its force: the plane square to the wall
//!   that takes the horizontal force, `s` increasing in the direction the force pushes.
//! - When the horizontal force is negligible (at most [`HORIZONTAL_REL`] of the force, or
//!   of the largest pressure times the wetted area when that is larger: a pure uplift), the
//!   plane holds the longer of the two horizontal mesh axes of the bounding box instead
//!   ([`PlaneChoice::LongerExtent`]), through the line of action, or through the bounding
//!   box's centre when there is none.
//! - A section named in the sidecar's `sections` ([`PlaneChoice::Named`]) is the plane
//!   through its point with its normal; for a floating case the normal is turned, about
//!   the plane's horizontal line, to be square to the free surface's normal.
//!
//! # The cut
//!
//! Each field piece is a convex planar polygon with linear pressure; the plane cuts it in
//! at most one segment, whose ends are interpolated along the piece's edges (vertices on
//! the plane count as on its positive side, so an edge lying in the plane is cut once, by
//! the facet behind it). Segments are joined end to end where their ends are within
//! `1e-9` of the bounding box's diagonal: all of them into the outline, the wetted ones,
//! part by part, into runs. A run keeps the pressure at every point and, for each of its
//! segments, the unit normal in the plane on the liquid's side; points where nothing
//! changes (straight on and the same pressure gradient) are dropped.

use super::{CaseResult, Field, Inputs};
use crate::hydro::Vec3;
use crate::sidecar::NamedSection;

/// The horizontal force below which a case counts as without one, relative to the
/// larger of |F| and (largest pressure × wetted area).
pub const HORIZONTAL_REL: f64 = 1e-6;

/// The turn (degrees) from which a point of a run is a corner and labelled.
pub const CORNER_DEG: f64 = 15.0;

/// How a section's plane was chosen.
#[derive(Clone, Debug, PartialEq)]
pub enum PlaneChoice {
    /// Through the line of action, holding the horizontal force.
    Resultant,
    /// The horizontal force is negligible: through the line of action (or the bounding
    /// box's centre), along the longer horizontal extent of the mesh.
    LongerExtent,
    /// Named in the sidecar's `sections`.
    Named(String),
}

/// A vertical plane and its 2D coordinates (see the module doc). Mesh axes, metres.
#[derive(Clone, Debug, PartialEq)]
pub struct SectionPlane {
    pub choice: PlaneChoice,
    /// The point `s = 0`, m.
    pub point: [f64; 3],
    /// Unit normal, horizontal.
    pub normal: [f64; 3],
    /// Unit, horizontal: the direction of increasing `s`.
    pub along: [f64; 3],
    /// Unit: the direction of increasing `z`.
    pub up: [f64; 3],
}

/// A point of a wetted run.
#[derive(Clone, Debug, PartialEq)]
pub struct RunPoint {
    /// `(s, z)`, m.
    pub at: [f64; 2],
    /// Gauge pressure, Pa.
    pub pressure_pa: f64,
    /// A corner of the outline (a turn of at least [`CORNER_DEG`]) or a change of the
    /// pressure's gradient with depth (a layer interface); a run's ends are not marked.
    pub kink: bool,
}

/// A chain of wetted segments of one part: the surface the pressure acts on.
#[derive(Clone, Debug, PartialEq)]
pub struct Run {
    pub points: Vec<RunPoint>,
    /// One per segment (`points.len() − 1`, or `points.len()` when closed, the last one
    /// from the last point back to the first): the unit normal `(s, z)` in the plane,
    /// square to the segment, on the liquid's side. The pressure acts against it.
    pub normals: Vec<[f64; 2]>,
    /// The run closes on itself (a body cut all round under the free surface).
    pub closed: bool,
}

/// A free surface in the section.
#[derive(Clone, Debug, PartialEq)]
pub struct Level {
    pub liquid: String,
    /// m, as `z`.
    pub z: f64,
    /// The layer interfaces of the liquid below it, m, as `z`.
    pub interfaces: Vec<f64>,
}

/// One section of a case's pressure field.
#[derive(Clone, Debug, PartialEq)]
pub struct Section {
    pub plane: SectionPlane,
    /// Polylines `(s, z)` of the whole cut, wet and dry, m.
    pub outline: Vec<Vec<[f64; 2]>>,
    pub runs: Vec<Run>,
    pub levels: Vec<Level>,
}

impl Section {
    /// The largest |pressure| over the runs, Pa (0 without runs).
    pub fn max_pressure(&self) -> f64 {
        self.runs
            .iter()
            .flat_map(|r| &r.points)
            .fold(0.0, |m, p| m.max(p.pressure_pa.abs()))
    }
}

/// The sections of one case: the default one first, then those the sidecar names.
pub fn sections(
    field: &Field,
    inputs: &Inputs,
    case: &CaseResult,
    named: &[NamedSection],
) -> Vec<Section> {
    let up = case_up(inputs, case);
    let mut planes = vec![default_plane(inputs, case, up)];
    for n in named {
        let m = unit(sub(n.normal, scale(up, dot(n.normal, up))));
        let Some(normal) = m else { continue };
        planes.push(SectionPlane {
            choice: PlaneChoice::Named(n.name.clone()),
            point: n.point_m,
            normal,
            along: cross(up, normal),
            up,
        });
    }
    let diagonal = norm(sub(inputs.bounding_box[1], inputs.bounding_box[0]));
    planes
        .into_iter()
        .map(|plane| cut(field, case, plane, diagonal))
        .collect()
}

/// The case's up: the mesh's, or a floating case's free-surface normal.
fn case_up(inputs: &Inputs, case: &CaseResult) -> [f64; 3] {
    let mesh_up = crate::hydro::UpAxis::from_keyword(inputs.up).map_or([0.0, 0.0, 1.0], |u| {
        let v = u.unit();
        [v.x, v.y, v.z]
    });
    case.floating
        .as_ref()
        .and_then(|f| f.equilibrium.as_ref())
        .and_then(|e| unit(e.normal))
        .unwrap_or(mesh_up)
}

/// The default plane of a case (see the module doc).
fn default_plane(inputs: &Inputs, case: &CaseResult, up: [f64; 3]) -> SectionPlane {
    let l = &case.loads;
    let [lo, hi] = inputs.bounding_box;
    let point = l
        .line_of_action
        .map(|line| line.point)
        .unwrap_or([0, 1, 2].map(|k| 0.5 * (lo[k] + hi[k])));
    let f = l.force;
    let horizontal = sub(f, scale(up, dot(f, up)));
    let size = norm(f).max(l.max_pressure * l.wetted_area);
    let (choice, along) = match unit(horizontal) {
        Some(h) if norm(horizontal) > HORIZONTAL_REL * size => (PlaneChoice::Resultant, h),
        _ => {
            // The longer of the horizontal mesh axes, made square to up.
            let mut axes: Vec<(f64, [f64; 3])> = (0..3)
                .map(|k| {
                    let mut e = [0.0; 3];
                    e[k] = 1.0;
                    (hi[k] - lo[k], e)
                })
                .filter(|(_, e)| dot(*e, up).abs() < 0.5)
                .collect();
            axes.sort_by(|a, b| b.0.total_cmp(&a.0));
            let along = axes
                .iter()
                .find_map(|(_, e)| unit(sub(*e, scale(up, dot(*e, up)))))
                .unwrap_or([1.0, 0.0, 0.0]);
            (PlaneChoice::LongerExtent, along)
        }
    };
    SectionPlane {
        choice,
        point,
        normal: cross(along, up),
        along,
        up,
    }
}

/// One segment of the cut: its ends `(s, z)`, their pressures, the part and whether it is
/// wetted, and its normal on the liquid's side.
struct Segment {
    ends: [[f64; 2]; 2],
    pressure: [f64; 2],
    part: usize,
    wetted: bool,
    normal: [f64; 2],
}

/// The section of `field` in `plane`.
fn cut(field: &Field, case: &CaseResult, plane: SectionPlane, diagonal: f64) -> Section {
    let mut segments = Vec::new();
    for piece in &field.pieces {
        let Some((ends, pressure)) = cut_piece(&piece.vertices, &piece.pressure, &plane) else {
            continue;
        };
        let d = sub2(ends[1], ends[0]);
        if d == [0.0, 0.0] {
            continue;
        }
        // Square to the segment, on the side the facet's liquid-side normal points to.
        let liquid = field
            .facets
            .get(piece.facet)
            .map_or([0.0; 3], |row| row.normal);
        let seen = [dot(liquid, plane.along), dot(liquid, plane.up)];
        let mut normal = unit2([-d[1], d[0]]).unwrap_or([0.0, 0.0]);
        if normal[0] * seen[0] + normal[1] * seen[1] < 0.0 {
            normal = [-normal[0], -normal[1]];
        }
        segments.push(Segment {
            ends,
            pressure,
            part: piece.part,
            wetted: piece.wetted,
            normal,
        });
    }
    let tol = 1e-9 * diagonal.max(f64::MIN_POSITIVE);
    let outline = chains(&segments, |_| true, |_| 0, tol)
        .into_iter()
        .map(|(chain, closed)| {
            let mut pts: Vec<[f64; 2]> = chain.iter().map(|(p, _, _)| *p).collect();
            if closed && let Some(first) = pts.first().copied() {
                pts.push(first);
            }
            pts
        })
        .collect();
    let runs = chains(&segments, |s| s.wetted, |s| s.part, tol)
        .into_iter()
        .map(|(chain, closed)| run_of(&chain, closed))
        .collect();
    let levels = case
        .liquids
        .iter()
        .map(|l| Level {
            liquid: l.name.clone(),
            z: l.level,
            interfaces: l
                .layers
                .iter()
                .filter_map(|(_, down_to)| *down_to)
                .collect(),
        })
        .collect();
    Section {
        plane,
        outline,
        runs,
        levels,
    }
}

/// The segment in which `plane` cuts the convex polygon `v` (pressures `p`), as `(s, z)`
/// ends and their pressures; `None` when it does not cross the plane.
fn cut_piece(v: &[[f64; 3]], p: &[f64], plane: &SectionPlane) -> Option<([[f64; 2]; 2], [f64; 2])> {
    let d: Vec<f64> = v
        .iter()
        .map(|x| dot(sub(*x, plane.point), plane.normal))
        .collect();
    let mut found: Vec<([f64; 2], f64)> = Vec::with_capacity(2);
    for i in 0..v.len() {
        let j = (i + 1) % v.len();
        if (d[i] >= 0.0) == (d[j] >= 0.0) {
            continue;
        }
        // From the end behind the plane, so both facets of a shared edge find one point.
        let (a, b) = if d[i] < 0.0 { (i, j) } else { (j, i) };
        let t = d[a] / (d[a] - d[b]);
        let x = add(v[a], scale(sub(v[b], v[a]), t));
        let pr = p.get(a).copied().unwrap_or(0.0)
            + t * (p.get(b).copied().unwrap_or(0.0) - p.get(a).copied().unwrap_or(0.0));
        found.push((
            [dot(sub(x, plane.point), plane.along), dot(x, plane.up)],
            pr,
        ));
    }
    match found.as_slice() {
        [a, b, ..] => Some(([a.0, b.0], [a.1, b.1])),
        _ => None,
    }
}

/// A point of a chain: position, pressure, and the normal of the segment that reaches it
/// (the first point's is the first segment's).
type ChainPoint = ([f64; 2], f64, [f64; 2]);

/// The segments for which `keep` holds joined end to end, those of one `group` only; each
/// chain with whether it closes on itself (its first point is then not repeated).
fn chains(
    segments: &[Segment],
    keep: impl Fn(&Segment) -> bool,
    group: impl Fn(&Segment) -> usize,
    tol: f64,
) -> Vec<(Vec<ChainPoint>, bool)> {
    use std::collections::HashMap;
    // Ends welded within `tol`: a grid of cells of `tol`, neighbours looked at too.
    let mut nodes: Vec<[f64; 2]> = Vec::new();
    let mut grid: HashMap<(usize, i64, i64), Vec<usize>> = HashMap::new();
    let cell = |p: [f64; 2]| ((p[0] / tol).floor() as i64, (p[1] / tol).floor() as i64);
    let mut node_of = |g: usize, p: [f64; 2], nodes: &mut Vec<[f64; 2]>| -> usize {
        let (cx, cy) = cell(p);
        for dx in -1..=1 {
            for dy in -1..=1 {
                for &n in grid.get(&(g, cx + dx, cy + dy)).into_iter().flatten() {
                    let q: [f64; 2] = nodes[n];
                    if (q[0] - p[0]).abs() <= tol && (q[1] - p[1]).abs() <= tol {
                        return n;
                    }
                }
            }
        }
        nodes.push(p);
        grid.entry((g, cx, cy)).or_default().push(nodes.len() - 1);
        nodes.len() - 1
    };
    let kept: Vec<&Segment> = segments.iter().filter(|s| keep(s)).collect();
    let mut ends: Vec<[usize; 2]> = Vec::with_capacity(kept.len());
    let mut at: Vec<Vec<usize>> = Vec::new();
    for (i, s) in kept.iter().enumerate() {
        let g = group(s);
        let e = [
            node_of(g, s.ends[0], &mut nodes),
            node_of(g, s.ends[1], &mut nodes),
        ];
        at.resize(nodes.len(), Vec::new());
        if e[0] == e[1] {
            ends.push(e);
            continue;
        }
        at[e[0]].push(i);
        at[e[1]].push(i);
        ends.push(e);
    }
    let mut used = vec![false; kept.len()];
    for (i, e) in ends.iter().enumerate() {
        if e[0] == e[1] {
            used[i] = true;
        }
    }
    let mut out = Vec::new();
    // Open chains from their ends (nodes not met by exactly two segments), then cycles.
    let starts: Vec<usize> = (0..nodes.len())
        .filter(|&n| at[n].len() != 2)
        .chain(0..nodes.len())
        .collect();
    for start in starts {
        while let Some(&first) = at[start].iter().find(|&&s| !used[s]) {
            let mut chain: Vec<ChainPoint> = Vec::new();
            let mut node = start;
            let mut seg = first;
            let open_start = at[start].len() != 2;
            loop {
                used[seg] = true;
                let s = kept[seg];
                let from = usize::from(ends[seg][0] != node);
                if chain.is_empty() {
                    chain.push((s.ends[from], s.pressure[from], s.normal));
                }
                node = ends[seg][1 - from];
                chain.push((s.ends[1 - from], s.pressure[1 - from], s.normal));
                if at[node].len() != 2 {
                    break;
                }
                match at[node].iter().find(|&&t| !used[t]) {
                    Some(&next) => seg = next,
                    None => break,
                }
            }
            let closed = !open_start && node == start && chain.len() > 2;
            if closed {
                // The last point repeats the first: keep the closing segment's normal on
                // the first point's slot instead.
                let last = chain.pop().expect("a closed chain has points");
                chain[0].2 = last.2;
            }
            out.push((chain, closed));
        }
    }
    out
}

/// A run from a chain: collinear points with an unchanged pressure gradient dropped,
/// corners and interfaces marked.
fn run_of(chain: &[ChainPoint], closed: bool) -> Run {
    let n = chain.len();
    // Normal of the segment from point i to the next.
    let seg_normal = |i: usize| {
        if closed {
            chain[(i + 1) % n].2
        } else {
            chain[i + 1].2
        }
    };
    let segs = if closed { n } else { n.saturating_sub(1) };
    // What changes at point i between the segment before it and the one after it.
    let change = |i: usize| -> (bool, bool) {
        let (prev, next) = match (closed, i) {
            (true, _) => ((i + n - 1) % n, (i + 1) % n),
            (false, i) if i == 0 || i + 1 >= n => return (true, false),
            (false, i) => (i - 1, i + 1),
        };
        let a = sub2(chain[i].0, chain[prev].0);
        let b = sub2(chain[next].0, chain[i].0);
        let (la, lb) = (norm2(a), norm2(b));
        let turn = if la > 0.0 && lb > 0.0 {
            let c = (a[0] * b[1] - a[1] * b[0]) / (la * lb);
            let d = (a[0] * b[0] + a[1] * b[1]) / (la * lb);
            c.atan2(d).abs().to_degrees()
        } else {
            0.0
        };
        let gradient = |from: usize, to: usize| {
            let dz = chain[to].0[1] - chain[from].0[1];
            let l = norm2(sub2(chain[to].0, chain[from].0));
            (dz.abs() > 1e-9 * l).then(|| (chain[to].1 - chain[from].1) / dz)
        };
        let interface = match (gradient(prev, i), gradient(i, next)) {
            (Some(g1), Some(g2)) => (g1 - g2).abs() > 1e-6 * g1.abs().max(g2.abs()),
            _ => false,
        };
        let slope = |from: usize, to: usize| {
            let l = norm2(sub2(chain[to].0, chain[from].0));
            if l > 0.0 {
                (chain[to].1 - chain[from].1) / l
            } else {
                0.0
            }
        };
        let (s1, s2) = (slope(prev, i), slope(i, next));
        let same = turn < 1e-7 && (s1 - s2).abs() <= 1e-9 * s1.abs().max(s2.abs()).max(1.0);
        (!same, turn >= CORNER_DEG || interface)
    };
    let mut points = Vec::new();
    let mut normals = Vec::new();
    for (i, c) in chain.iter().enumerate() {
        let (keep, kink) = change(i);
        if !keep {
            continue;
        }
        points.push(RunPoint {
            at: c.0,
            pressure_pa: c.1,
            kink,
        });
        if i < segs {
            normals.push(seg_normal(i));
        }
    }
    if !closed {
        normals.truncate(points.len().saturating_sub(1));
    }
    Run {
        points,
        normals,
        closed,
    }
}

// Small vector steps on the field's `[f64; 3]` points, through nalgebra.
fn add(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    (Vec3::from(a) + Vec3::from(b)).into()
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    (Vec3::from(a) - Vec3::from(b)).into()
}

fn scale(a: [f64; 3], k: f64) -> [f64; 3] {
    (Vec3::from(a) * k).into()
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    Vec3::from(a).dot(&Vec3::from(b))
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    Vec3::from(a).cross(&Vec3::from(b)).into()
}

fn norm(a: [f64; 3]) -> f64 {
    a[0].hypot(a[1]).hypot(a[2])
}

fn unit(a: [f64; 3]) -> Option<[f64; 3]> {
    let l = norm(a);
    (l > 0.0 && l.is_finite()).then(|| scale(a, 1.0 / l))
}

fn sub2(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [a[0] - b[0], a[1] - b[1]]
}

fn norm2(a: [f64; 2]) -> f64 {
    a[0].hypot(a[1])
}

fn unit2(a: [f64; 2]) -> Option<[f64; 2]> {
    let l = norm2(a);
    (l > 0.0 && l.is_finite()).then(|| [a[0] / l, a[1] / l])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::tests::{mesh, side};
    use crate::compute::{compute, field};
    use approx::assert_relative_eq;

    const G: f64 = 9.80665;

    /// The sections of case 0 of `tris` (one part) under `sidecar`.
    fn sections_of(tris: Vec<shapes::Triangle>, sidecar: &str) -> Vec<Section> {
        let s = side(sidecar);
        let m = mesh(vec![("p", tris)]);
        let r = compute("p", &m, &s).expect("computes");
        let f = field(&m, &s, 0).expect("computes");
        sections(&f, &r.inputs, &r.cases[0], &s.sections)
    }

    /// A point `(s, z)` of `plane` in mesh axes.
    fn at3(plane: &SectionPlane, p: [f64; 2]) -> [f64; 3] {
        let z0 = dot(plane.point, plane.up);
        add(
            add(plane.point, scale(plane.along, p[0])),
            scale(plane.up, p[1] - z0),
        )
    }

    /// A 2 m wide wall in the plane x = 0 from z = −3 to 0, its front (+x) wetted.
    fn wall() -> Vec<shapes::Triangle> {
        shapes::rectangle([0.0, 0.0, -3.0], [0.0, 2.0, 0.0], [0.0, 0.0, 3.0], 2, 3)
    }

    #[test]
    fn a_vertical_wall_shows_the_pressure_triangle() {
        let s = sections_of(
            wall(),
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
        );
        assert_eq!(s.len(), 1);
        let sec = &s[0];
        // The liquid pushes the wall towards −x: the plane holds x and z, through the
        // line of action (y = 1 by symmetry, on a line of vertices of the mesh).
        assert_eq!(sec.plane.choice, PlaneChoice::Resultant);
        assert_relative_eq!(sec.plane.along[0], -1.0, epsilon = 1e-12);
        assert_relative_eq!(sec.plane.normal[1].abs(), 1.0, epsilon = 1e-12);
        assert_relative_eq!(sec.plane.point[1], 1.0, epsilon = 1e-12);
        assert_eq!(sec.runs.len(), 1);
        let run = &sec.runs[0];
        assert!(!run.closed);
        // Closed form: p = ρ g h, a straight line from 0 at the free surface to the base.
        assert_eq!(run.points.len(), 2, "{run:?}");
        let (top, base) = if run.points[0].at[1] > run.points[1].at[1] {
            (&run.points[0], &run.points[1])
        } else {
            (&run.points[1], &run.points[0])
        };
        assert_relative_eq!(top.at[1], 0.0, epsilon = 1e-12);
        assert_relative_eq!(top.pressure_pa, 0.0, epsilon = 1e-9);
        assert_relative_eq!(base.at[1], -3.0, epsilon = 1e-12);
        assert_relative_eq!(base.pressure_pa, 1000.0 * G * 3.0, max_relative = 1e-12);
        // The liquid is on the +x side of the wall.
        assert_eq!(run.normals.len(), 1);
        let n = run.normals[0];
        let n3 = add(scale(sec.plane.along, n[0]), scale(sec.plane.up, n[1]));
        assert_relative_eq!(n3[0], 1.0, epsilon = 1e-12);
        // The outline is the wall's one straight line, wet from top to bottom.
        assert_eq!(sec.outline.len(), 1);
        let zs: Vec<f64> = sec.outline[0].iter().map(|p| p[1]).collect();
        assert_relative_eq!(zs.iter().copied().fold(f64::MIN, f64::max), 0.0);
        assert_relative_eq!(zs.iter().copied().fold(f64::MAX, f64::min), -3.0);
        assert_eq!(sec.levels.len(), 1);
        assert_eq!(sec.levels[0].z, 0.0);
    }

    #[test]
    fn two_layers_kink_at_their_interface() {
        // Oil 880 kg/m³ over 1.2 m, water 1000 kg/m³ below, on the 3 m wall.
        let s = sections_of(
            wall(),
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0,
                "layers": [{"density": 880, "down_to": -1.2}, {"density": 1000}]}}"#,
        );
        let run = &s[0].runs[0];
        let mut pts = run.points.clone();
        pts.sort_by(|a, b| b.at[1].total_cmp(&a.at[1]));
        assert_eq!(pts.len(), 3, "{pts:?}");
        // Closed form: p = ρ1 g h1 at the interface, ρ1 g h1 + ρ2 g h2 at the base.
        let p1 = 880.0 * G * 1.2;
        assert!(!pts[0].kink && pts[1].kink && !pts[2].kink);
        assert_relative_eq!(pts[1].at[1], -1.2, epsilon = 1e-12);
        assert_relative_eq!(pts[1].pressure_pa, p1, max_relative = 1e-12);
        assert_relative_eq!(
            pts[2].pressure_pa,
            p1 + 1000.0 * G * 1.8,
            max_relative = 1e-12
        );
        assert_eq!(s[0].levels[0].interfaces, [-1.2]);
    }

    #[test]
    fn a_curved_gate_takes_the_pressure_of_its_depth_normal_to_it() {
        // A quarter cylinder of radius 2 about the y axis, from (2, y, 0) at the free
        // surface down to (0, y, −2), wetted on its convex side.
        let r = 2.0;
        let tris = shapes::cylinder_patch(
            [0.0, 0.0, 0.0],
            [0.0, 1.0, 0.0],
            r,
            0.0,
            std::f64::consts::FRAC_PI_2,
            [1.0, 0.0, 0.0],
            3.0,
            16,
            2,
        );
        let s = sections_of(
            tris,
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1025}}"#,
        );
        let sec = &s[0];
        assert_eq!(sec.plane.choice, PlaneChoice::Resultant);
        assert_eq!(sec.runs.len(), 1);
        let run = &sec.runs[0];
        // Every point of the tessellated arc stays; none is a corner (16 turns of 5.6°).
        assert_eq!(run.points.len(), 17);
        assert!(run.points.iter().all(|p| !p.kink));
        for p in &run.points {
            // Closed form: p = ρ g × depth below the free surface at z = 0.
            assert_relative_eq!(p.pressure_pa, 1025.0 * G * -p.at[1], epsilon = 1e-9);
            // On the circle: the cut is the arc itself.
            let x = at3(&sec.plane, p.at);
            assert_relative_eq!(x[0].hypot(x[2]), r, max_relative = 1e-12);
        }
        let depths: Vec<f64> = [0, 16].iter().map(|&i| -run.points[i].at[1]).collect();
        let (shallow, deep) = (depths[0].min(depths[1]), depths[0].max(depths[1]));
        assert_relative_eq!(shallow, 0.0, epsilon = 1e-12);
        assert_relative_eq!(deep, r, max_relative = 1e-12);
        // Each segment's normal is square to it and points away from the axis (the
        // liquid's side), so the pressure acts towards the axis.
        for (k, n) in run.normals.iter().enumerate() {
            let (a, b) = (run.points[k].at, run.points[k + 1].at);
            let d = sub2(b, a);
            assert_relative_eq!(n[0] * d[0] + n[1] * d[1], 0.0, epsilon = 1e-12);
            let mid = at3(&sec.plane, [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0]);
            let n3 = add(scale(sec.plane.along, n[0]), scale(sec.plane.up, n[1]));
            let radial = (n3[0] * mid[0] + n3[2] * mid[2]) / mid[0].hypot(mid[2]);
            assert_relative_eq!(radial, 1.0, max_relative = 1e-3);
        }
    }

    #[test]
    fn a_body_under_water_without_horizontal_force_is_cut_along_its_length() {
        // A closed box 2 × 3 × 2 m, its top 1 m under the free surface: buoyancy only.
        let tris = shapes::box_solid([-1.0, -1.5, 0.0], [1.0, 1.5, 2.0], 3);
        let s = sections_of(
            tris,
            r#"{"units": "m", "liquid": {"level": 3.0, "density": 1000}}"#,
        );
        let sec = &s[0];
        assert_eq!(sec.plane.choice, PlaneChoice::LongerExtent);
        // The longer horizontal extent is y (3 m against 2 m).
        assert_relative_eq!(sec.plane.along[1].abs(), 1.0, epsilon = 1e-12);
        assert_eq!(sec.runs.len(), 1);
        let run = &sec.runs[0];
        assert!(run.closed);
        assert_eq!(run.points.len(), 4, "{run:?}");
        assert_eq!(run.normals.len(), 4);
        for p in &run.points {
            assert!(p.kink);
            // Closed form: ρ g (3 − z).
            assert_relative_eq!(p.pressure_pa, 1000.0 * G * (3.0 - p.at[1]), epsilon = 1e-9);
        }
        // The liquid is outside: every normal points away from the box's centre.
        for (k, n) in run.normals.iter().enumerate() {
            let (a, b) = (run.points[k].at, run.points[(k + 1) % 4].at);
            let mid = [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0 - 1.0];
            assert!(n[0] * mid[0] + n[1] * mid[1] > 0.0, "{n:?} at {mid:?}");
        }
    }

    #[test]
    fn named_sections_follow_the_default_one() {
        let s = sections_of(
            wall(),
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000},
                "sections": {"edge": {"point": [0, 0.25, 0], "normal": [0, 2, 0]},
                             "missing": {"point": [0, 5, 0], "normal": [0, 1, 0]}}}"#,
        );
        assert_eq!(s.len(), 3);
        assert_eq!(s[1].plane.choice, PlaneChoice::Named("edge".into()));
        assert_eq!(s[1].runs.len(), 1);
        assert_relative_eq!(s[1].max_pressure(), 1000.0 * G * 3.0, max_relative = 1e-12);
        // A plane that misses the mesh has nothing in it.
        assert!(s[2].outline.is_empty() && s[2].runs.is_empty());
    }
}
