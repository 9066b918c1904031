//! Edges, found from the welded vertex ids: the facets under every vertex, every edge
//! with its uses in facet order and what it says (open, non-manifold, or traversed the
//! same way by its two facets), each facet's neighbour across each edge, and the facets
//! that repeat another's vertices.
//!
//! It groups no facets into shells and turns none; the flood fill in `shells.rs` reads
//! the neighbours found here.

use std::ops::Range;
use std::sync::atomic::{AtomicU32, Ordering};

use super::Defect;

/// No neighbour across a facet's edge (an open or non-manifold edge).
pub(super) const NO_NEIGHBOUR: u32 = u32::MAX;

/// Parts to split `items` (vertices or facets) into for the threads: one a thread, or
/// one for a few.
fn parts_for(items: usize) -> usize {
    if items < 1 << 14 {
        1
    } else {
        rayon::current_num_threads().max(1)
    }
}

/// Vertex ranges, one per thread, covering `window`, for finding the edges of each
/// range's vertices. The results do not depend on the split.
fn vertex_ranges(window: Range<u32>) -> Vec<Range<u32>> {
    let vertices = window.len();
    let parts = parts_for(vertices);
    let step = vertices.div_ceil(parts).max(1);
    let at = |i: usize| window.start + (i * step).min(vertices) as u32;
    (0..parts).map(|i| at(i)..at(i + 1)).collect()
}

/// Meshes of more vertices than this find their edges in [`WINDOWS`] windows of vertices
/// one after the other, so the facets under the vertices (4 bytes for each of a facet's
/// two lower corners) are held for one window at a time, for a second read of part of
/// the ids.
const WINDOWED_FROM: usize = 1 << 17;

/// Windows of vertices for a mesh of more than [`WINDOWED_FROM`] vertices (a constant,
/// so the cost per facet does not grow with the mesh).
const WINDOWS: usize = 4;

/// Every edge of the welded facets `ids` (`degenerate` ones left out) and each facet's
/// neighbours, found from the facets under each vertex (those that hold an edge from it
/// to a higher vertex) a window of vertices at a time.
/// The result does not depend on the windows or the thread count: findings come in order
/// of (lower, higher) vertex, and every neighbour is written once.
pub(super) fn find_edges(ids: &[[u32; 3]], degenerate: &[bool], vertices: usize) -> Edges {
    let windows = if vertices > WINDOWED_FROM { WINDOWS } else { 1 };
    find_edges_in(ids, degenerate, vertices, windows)
}

/// [`find_edges`] in `windows` windows of vertices.
fn find_edges_in(ids: &[[u32; 3]], degenerate: &[bool], vertices: usize, windows: usize) -> Edges {
    // Zeroed by the allocator (pages the system hands out zeroed), each entry written
    // once below unless its edge is open or non-manifold.
    let neighbours = Neighbours(bytemuck::zeroed_vec(3 * ids.len()));
    let step = vertices.div_ceil(windows.max(1)).max(1);
    // The first vertex of every window after the first.
    let later: Vec<u32> = (step..vertices).step_by(step).map(|w| w as u32).collect();
    // Past the last facet that lists a vertex of each later window, found as the first
    // window's lists are counted (that pass reads every facet): vertices are numbered in
    // order of first appearance, so most of a window's facets are near each other, and
    // the later windows' passes stop there instead of at the last facet.
    let mut until: Vec<usize> = Vec::new();
    let mut parts = Vec::new();
    // The first facet that can use a vertex of the window: no facet before it uses one
    // as high as the window's first (it only moves forward as the windows rise).
    let mut from = 0;
    for (i, w) in (0..vertices).step_by(step).enumerate() {
        let window = w as u32..(w + step).min(vertices) as u32;
        while from < ids.len() && ids[from].iter().all(|&v| v < window.start) {
            from += 1;
        }
        let to = match i {
            0 => ids.len(),
            _ => until[i - 1].max(from),
        };
        let runs = parts_for(to - from);
        let under = if i == 0 {
            let (under, found) =
                Incidence::of_window_finding_later(ids, degenerate, from..to, window, runs, &later);
            until = found;
            under
        } else {
            Incidence::of_window(ids, degenerate, from..to, window, runs)
        };
        parts.extend(under.edges(ids, &neighbours));
    }
    Edges {
        findings: EdgeFindings::concat(parts),
        neighbours,
    }
}

/// The corners of the non-degenerate facets whose vertex lies in a window of vertices
/// and is not the facet's highest.
#[derive(Clone, Copy)]
struct WindowCorners<'a> {
    ids: &'a [[u32; 3]],
    degenerate: &'a [bool],
    window: (u32, u32),
}

impl WindowCorners<'_> {
    /// Calls `take(facet, vertex - window start)` for each such corner of facets `run`,
    /// and `other(facet, vertex)` for each corner that is not its facet's highest but lies
    /// outside the window.
    fn each(
        &self,
        run: Range<usize>,
        mut take: impl FnMut(u32, usize),
        mut other: impl FnMut(u32, u32),
    ) {
        let (lo, hi) = self.window;
        let facets = self.ids[run.clone()]
            .iter()
            .zip(&self.degenerate[run.clone()]);
        for (f, (t, d)) in run.zip(facets) {
            if *d {
                continue;
            }
            let top = t[0].max(t[1]).max(t[2]);
            for &v in t {
                if v == top {
                    continue;
                }
                if (lo..hi).contains(&v) {
                    take(f as u32, (v - lo) as usize);
                } else {
                    other(f as u32, v);
                }
            }
        }
    }
}

/// For every vertex of a window of vertices, in facet order, the non-degenerate facets in
/// which it is not the highest of the three vertices: the facets that hold an edge from
/// it to a higher vertex (a facet is listed under its two lower vertices only).
struct Incidence {
    /// The window's first vertex.
    base: u32,
    /// Where each vertex's facets end in `facets` (and the next vertex's begin), from the
    /// window's first vertex.
    end: Vec<u32>,
    /// The lists one after the other. The runs of facets fill their own places of it side
    /// by side; atomics (relaxed: plain loads and stores) let them share it.
    facets: Vec<AtomicU32>,
    /// Ranges of the window's vertices, one a thread, for finding their edges.
    ranges: Vec<Range<u32>>,
}

impl Incidence {
    /// A counting sort by vertex of the corners of `facets` that fall in `window`, the
    /// facets split into `parts` consecutive runs, each counted and placed on a thread of
    /// its own: a run's facets of a vertex follow those of the runs before it, so every
    /// split gives the same lists. No facet outside `facets` may list a vertex of the
    /// window.
    fn of_window(
        ids: &[[u32; 3]],
        degenerate: &[bool],
        facets: Range<usize>,
        window: Range<u32>,
        parts: usize,
    ) -> Incidence {
        Incidence::of_window_finding_later(ids, degenerate, facets, window, parts, &[]).0
    }

    /// [`Incidence::of_window`], and for each later window, given by its first vertex
    /// (`later`, rising, all above `window`), one past the last facet of `facets` that
    /// lists a vertex of it (`facets.start` when none does).
    fn of_window_finding_later(
        ids: &[[u32; 3]],
        degenerate: &[bool],
        facets: Range<usize>,
        window: Range<u32>,
        parts: usize,
        later: &[u32],
    ) -> (Incidence, Vec<usize>) {
        use rayon::prelude::*;
        let base = window.start;
        let size = window.len();
        let step = facets.len().div_ceil(parts.max(1)).max(1);
        let runs: Vec<Range<usize>> = facets
            .clone()
            .step_by(step)
            .map(|a| a..(a + step).min(facets.end))
            .collect();
        let corners = WindowCorners {
            ids,
            degenerate,
            window: (window.start, window.end),
        };
        // Facets per vertex, per run, and the last facet of the run listing each later
        // window's vertices (facets rise through a run, so the last one seen).
        let (mut counts, lasts): (Vec<Vec<u32>>, Vec<Vec<Option<u32>>>) = runs
            .par_iter()
            .map(|run| {
                let mut count: Vec<u32> = super::written_zeros(size);
                let mut last = vec![None; later.len()];
                corners.each(
                    run.clone(),
                    |_, v| count[v] += 1,
                    |f, v| {
                        // The later window holding v, if any (none are asked for: none).
                        let w = later.partition_point(|&start| start <= v);
                        if w > 0 {
                            last[w - 1] = Some(f);
                        }
                    },
                );
                (count, last)
            })
            .unzip();
        let until = (0..later.len())
            .map(|w| {
                lasts
                    .iter()
                    .filter_map(|last| last[w])
                    .max()
                    .map_or(facets.start, |f| f as usize + 1)
            })
            .collect();
        // Where each run's facets of each vertex start (the counts become cursors), and
        // where each vertex's end.
        let mut end = vec![0u32; size];
        let mut total = 0u32;
        for (v, e) in end.iter_mut().enumerate() {
            for count in counts.iter_mut() {
                let c = count[v];
                count[v] = total;
                total += c;
            }
            *e = total;
        }
        // Every place is written below.
        let facets: Vec<AtomicU32> = bytemuck::zeroed_vec(total as usize);
        runs.par_iter().zip(&mut counts).for_each(|(run, cursor)| {
            corners.each(
                run.clone(),
                |f, v| {
                    facets[cursor[v] as usize].store(f, Ordering::Relaxed);
                    cursor[v] += 1;
                },
                |_, _| {},
            );
        });
        let incidence = Incidence {
            base,
            end,
            facets,
            ranges: vertex_ranges(window),
        };
        (incidence, until)
    }

    /// Vertex `v`'s facets (`v` in the window).
    fn under(&self, v: u32) -> impl Iterator<Item = u32> + '_ {
        let i = (v - self.base) as usize;
        let from = if i == 0 { 0 } else { self.end[i - 1] };
        self.facets[from as usize..self.end[i] as usize]
            .iter()
            .map(|f| f.load(Ordering::Relaxed))
    }

    /// Every edge whose lower vertex is in the window, found with the uses in facet
    /// order: the findings of each range in order of (lower, higher) vertex; the manifold
    /// neighbours written into `neighbours`.
    fn edges(&self, ids: &[[u32; 3]], neighbours: &Neighbours) -> Vec<EdgeFindings> {
        use rayon::prelude::*;
        self.ranges
            .par_iter()
            .map(|r| {
                let mut out = EdgeFindings::default();
                let mut uses: Vec<EdgeUse> = Vec::new();
                for u in r.clone() {
                    uses.clear();
                    for f in self.under(u) {
                        let t = ids[f as usize];
                        let c = t.iter().position(|&v| v == u).unwrap_or(0);
                        let (next, prev) = (t[(c + 1) % 3], t[(c + 2) % 3]);
                        if next > u {
                            uses.push(EdgeUse::new(next, f, c, true));
                        }
                        if prev > u {
                            uses.push(EdgeUse::new(prev, f, (c + 2) % 3, false));
                        }
                    }
                    // Stable, so the uses of an edge stay in facet order. Usually about
                    // six uses; a vertex shared by many facets still costs O(k log k).
                    uses.sort_by_key(|e| e.hi);
                    for group in uses.chunk_by(|a, b| a.hi == b.hi) {
                        out.visit(group, neighbours);
                    }
                }
                out
            })
            .collect()
    }
}

/// One facet's use of an edge, seen from the edge's lower vertex.
#[derive(Clone, Copy)]
struct EdgeUse {
    /// The higher vertex.
    hi: u32,
    facet: u32,
    /// Which of the facet's edges: from its corner `slot` to the next corner.
    slot: u8,
    /// The facet runs from the lower vertex to the higher.
    forward: bool,
}

impl EdgeUse {
    fn new(hi: u32, facet: u32, slot: usize, forward: bool) -> EdgeUse {
        EdgeUse {
            hi,
            facet,
            slot: slot as u8,
            forward,
        }
    }
}

/// What the edges say, for a range of lower vertices or for all.
#[derive(Default)]
pub(super) struct EdgeFindings {
    pub(super) open_edges: usize,
    pub(super) non_manifold_edges: usize,
    pub(super) inconsistent_edges: usize,
    /// Each finding with the edge's first facet, in order of edge.
    pub(super) findings: Blocks<(Defect, u32)>,
    /// Facets on an open or non-manifold edge.
    pub(super) bad: Blocks<u32>,
    /// Pairs of facets joined at a non-manifold edge.
    pub(super) joins: Blocks<(u32, u32)>,
    /// Where each open and non-manifold edge is: its kind, its first facet and which of
    /// that facet's edges it is (from corner `slot` to the next), in order of edge.
    pub(super) places: Blocks<(Defect, u32, u8)>,
}

impl EdgeFindings {
    /// Takes in one edge: its uses in facet order.
    fn visit(&mut self, group: &[EdgeUse], neighbours: &Neighbours) {
        let first = group[0].facet;
        match group {
            [_] => {
                self.open_edges += 1;
                self.findings.push((Defect::OpenEdge, first));
                self.places.push((Defect::OpenEdge, first, group[0].slot));
                self.bad.push(first);
            }
            [a, b] => {
                // Distinct facets: a facet's three edges join three different vertices.
                let same = a.forward == b.forward;
                if same {
                    self.inconsistent_edges += 1;
                    self.findings.push((Defect::InconsistentEdge, first));
                }
                neighbours.set(a, b.facet, same);
                neighbours.set(b, a.facet, same);
            }
            _ => {
                self.non_manifold_edges += 1;
                self.findings.push((Defect::NonManifoldEdge, first));
                self.places
                    .push((Defect::NonManifoldEdge, first, group[0].slot));
                for e in group {
                    self.bad.push(e.facet);
                    self.joins.push((first, e.facet));
                }
            }
        }
    }

    /// The findings of consecutive ranges as one (their blocks in order, none copied).
    fn concat(parts: Vec<EdgeFindings>) -> EdgeFindings {
        let mut all = EdgeFindings::default();
        for p in parts {
            all.open_edges += p.open_edges;
            all.non_manifold_edges += p.non_manifold_edges;
            all.inconsistent_edges += p.inconsistent_edges;
            all.findings.0.extend(p.findings.0);
            all.bad.0.extend(p.bad.0);
            all.joins.0.extend(p.joins.0);
            all.places.0.extend(p.places.0);
        }
        all
    }
}

/// A list grown in blocks of a fixed size: it never copies or frees a block as it grows,
/// so a mesh with many findings leaves no trail of outgrown buffers behind.
pub(super) struct Blocks<T>(pub(super) Vec<Vec<T>>);

impl<T> Default for Blocks<T> {
    fn default() -> Self {
        Blocks(Vec::new())
    }
}

impl<T> Blocks<T> {
    const SIZE: usize = 1 << 14;

    fn push(&mut self, value: T) {
        match self.0.last_mut() {
            Some(block) if block.len() < Self::SIZE => block.push(value),
            _ => {
                let mut block = Vec::with_capacity(Self::SIZE);
                block.push(value);
                self.0.push(block);
            }
        }
    }

    /// Every value in order, in one vector of exactly their number.
    pub(super) fn into_vec(self) -> Vec<T> {
        let mut all = Vec::with_capacity(self.len());
        for block in self.0 {
            all.extend(block);
        }
        all
    }

    pub(super) fn len(&self) -> usize {
        self.0.iter().map(Vec::len).sum()
    }

    pub(super) fn is_empty(&self) -> bool {
        self.len() == 0
    }

    pub(super) fn iter(&self) -> impl Iterator<Item = &T> {
        self.0.iter().flatten()
    }
}

pub(super) struct Edges {
    pub(super) findings: EdgeFindings,
    pub(super) neighbours: Neighbours,
}

/// Each facet's neighbour across each of its edges (edge k runs from corner k to the
/// next), as [`Neighbours::of`] gives it. Every entry is written once, by the range of
/// vertices that holds the edge's lower vertex; atomics let the ranges share the array.
/// Stored one higher, so that an entry never written (zero, as allocated) reads as
/// [`NO_NEIGHBOUR`].
pub(super) struct Neighbours(Vec<AtomicU32>);

impl Neighbours {
    fn set(&self, from: &EdgeUse, to: u32, same: bool) {
        let at = 3 * from.facet as usize + usize::from(from.slot);
        // No overflow: facet indices stay below 2^28 (`limits::FACETS_CEILING`).
        self.0[at].store(((to << 1) | u32::from(same)) + 1, Ordering::Relaxed);
    }

    /// Facet `f`'s neighbours: the other facet << 1 | 1 when both traverse the edge in
    /// the same direction as stored, or [`NO_NEIGHBOUR`].
    pub(super) fn of(&self, f: usize) -> [u32; 3] {
        [0, 1, 2].map(|k| self.0[3 * f + k].load(Ordering::Relaxed).wrapping_sub(1))
    }
}

/// Facets whose three welded vertices repeat an earlier facet's (any order or winding).
pub(super) fn duplicate_facet_list(ids: &[[u32; 3]], degenerate: &[bool]) -> Vec<u32> {
    let mut keys: Vec<([u32; 3], u32)> = ids
        .iter()
        .zip(degenerate)
        .enumerate()
        .filter(|(_, (_, d))| !**d)
        .map(|(f, (t, _))| {
            let mut k = *t;
            k.sort_unstable();
            (k, f as u32)
        })
        .collect();
    keys.sort_unstable();
    keys.windows(2)
        .filter(|w| w[0].0 == w[1].0)
        .map(|w| w[1].1)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::Vec3;
    use crate::hydro::topology::tests::tris;
    use crate::hydro::topology::weld::weld;
    use crate::hydro::topology::{WELD_TOLERANCE_REL, bounding_box};

    #[test]
    fn blocks_keep_their_order_across_blocks() {
        let mut b = Blocks::default();
        assert!(b.is_empty());
        let n = 2 * Blocks::<u32>::SIZE + 7;
        for i in 0..n as u32 {
            b.push(i);
        }
        assert_eq!(b.0.len(), 3);
        assert!(b.iter().copied().eq(0..n as u32));
        assert_eq!(b.into_vec(), (0..n as u32).collect::<Vec<_>>());
    }

    #[test]
    fn edges_found_in_windows_and_ranges_of_vertices_are_those_found_in_one() {
        // A torus with holes, a duplicate, a fin (non-manifold) and reversed facets.
        let mut t = tris(shapes::torus([0.0; 3], 3.0, 1.0, 48, 24));
        t.retain(|f| f[0].x > -2.5 || f[0].y > 0.0);
        for f in (0..t.len()).step_by(97) {
            t[f].swap(1, 2);
        }
        t.push(t[10]);
        t.push([t[20][0], t[20][1], Vec3::new(9.0, 9.0, 9.0)]);
        let (lo, hi) = bounding_box(t.iter().flatten());
        let w = weld(&t, WELD_TOLERANCE_REL * (hi - lo).norm(), (lo, hi));
        let (ids, vertices) = (w.ids, w.vertices);
        let mut degenerate = vec![false; ids.len()];
        degenerate[5] = true; // left out of every edge
        let one = Incidence::of_window(&ids, &degenerate, 0..ids.len(), 0..vertices as u32, 1);
        let lists = |i: &Incidence| -> (Vec<u32>, Vec<u32>) {
            let facets = i.facets.iter().map(|f| f.load(Ordering::Relaxed)).collect();
            (i.end.clone(), facets)
        };
        let (ref_edges, ref_neighbours) = {
            let e = find_edges_in(&ids, &degenerate, vertices, 1);
            let n: Vec<[u32; 3]> = (0..ids.len()).map(|f| e.neighbours.of(f)).collect();
            (e.findings, n)
        };
        assert!(ref_edges.open_edges > 0 && ref_edges.non_manifold_edges > 0);
        assert!(ref_edges.inconsistent_edges > 0);
        // Every vertex's list: the non-degenerate facets in which it is not the highest,
        // in facet order.
        for v in 0..vertices as u32 {
            let expected: Vec<u32> = (0..ids.len() as u32)
                .filter(|&f| !degenerate[f as usize])
                .filter(|&f| {
                    let t = ids[f as usize];
                    t.contains(&v) && t.iter().any(|&w| w > v)
                })
                .collect();
            assert_eq!(one.under(v).collect::<Vec<_>>(), expected, "vertex {v}");
        }
        for runs in [2, 3, 7] {
            // The facets split into runs: the same lists.
            let split =
                Incidence::of_window(&ids, &degenerate, 0..ids.len(), 0..vertices as u32, runs);
            assert_eq!(lists(&split), lists(&one), "{runs} runs");
        }
        for windows in [2, 3, 7, vertices] {
            // Windows of vertices one after the other: the same edges and neighbours.
            let e = find_edges_in(&ids, &degenerate, vertices, windows);
            let n: Vec<[u32; 3]> = (0..ids.len()).map(|f| e.neighbours.of(f)).collect();
            assert_eq!(n, ref_neighbours, "{windows} windows");
            let f = e.findings;
            assert_eq!(
                (f.open_edges, f.non_manifold_edges, f.inconsistent_edges),
                (
                    ref_edges.open_edges,
                    ref_edges.non_manifold_edges,
                    ref_edges.inconsistent_edges
                )
            );
            fn list<T: Copy>(b: &Blocks<T>) -> Vec<T> {
                b.iter().copied().collect()
            }
            assert_eq!(list(&f.findings), list(&ref_edges.findings));
            assert_eq!(list(&f.bad), list(&ref_edges.bad));
            assert_eq!(f.joins.into_vec(), list(&ref_edges.joins));
        }
    }
}
