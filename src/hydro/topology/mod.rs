//! Topology of a triangle soup: welding, edges, shells, orientation and nesting.
//!
//! Owns the pinned definitions of CONTRACT.md: vertices closer than
//! [`WELD_TOLERANCE_REL`] × the bounding-box diagonal are one vertex *for topology only*
//! (geometry is never moved); a facet with a repeated vertex is ignored for topology; a
//! shell is closed when every edge is shared by exactly two facets that traverse it in
//! opposite directions after orientation. Winding is made consistent within each shell
//! by a flood fill over manifold edges, and closed shells are turned outward by the sign
//! of their enclosed volume. Shells sealed inside other closed shells get a nesting depth.
//!
//! It does not decide what the liquid does with any of this; the caller maps shells and
//! wet sides to per-facet wetting.
//!
//! This file holds the public types and [`Topology::build_in_box`], which runs the steps
//! in order and turns closed shells outward; the steps live beside it:
//!
//! - `weld.rs`: every corner given a vertex id within the weld tolerance;
//! - `edges.rs`: the facets around every vertex, every edge and what it says (open,
//!   non-manifold, inconsistent), each facet's neighbours, and duplicate facets;
//! - `shells.rs`: the flood fill that finds shells and makes winding consistent, the
//!   joining of pieces at non-manifold edges, and sums per shell;
//! - `nest.rs`: which closed shells are sealed inside which.

mod edges;
mod nest;
mod shells;
mod weld;

use super::{Tri, Tris, Vec3};
use edges::{EdgeFindings, duplicate_facet_list, find_edges};
use nest::nest;
use shells::{flood, join_pieces, shell_flipped, shell_volumes};
use weld::{Welded, six_volume, weld};

/// Weld tolerance for topology, relative to the bounding-box diagonal (pinned).
pub const WELD_TOLERANCE_REL: f64 = 1e-7;

/// Marks a facet that belongs to no shell (it has a repeated vertex after welding).
pub const NO_SHELL: u32 = u32::MAX;

/// One connected set of facets.
#[derive(Clone, Debug, PartialEq)]
pub struct ShellInfo {
    /// Number of facets.
    pub facets: usize,
    /// Lowest and highest facet index in the shell.
    pub facet_span: (usize, usize),
    /// Every edge shared by exactly two facets of opposite direction after orientation.
    pub closed: bool,
    /// Winding could be made consistent over every manifold edge.
    pub orientable: bool,
    /// Enclosed volume after orientation (≥ 0 for a closed shell), in the input's units³.
    pub volume: f64,
    /// The shell was closed and wound inward as stored (by the majority winding).
    pub inverted: bool,
    /// Facets whose winding orientation reversed relative to storage.
    pub flipped_facets: usize,
    /// Number of closed shells that enclose this one (0 for an outer shell).
    pub depth: u32,
    /// Number of closed shells directly inside this one.
    pub children: u32,
}

/// The topology of a whole mesh (across parts).
#[derive(Clone, Debug, Default)]
pub struct Topology {
    /// Weld tolerance used, in the input's units.
    pub tolerance: f64,
    /// Number of distinct vertices after welding.
    pub vertices: usize,
    /// Shell of each facet, or [`NO_SHELL`] for a degenerate one.
    pub facet_shell: Vec<u32>,
    /// Whether each facet is to be read reversed: consistent within its shell, and
    /// outward for closed shells.
    pub flip: Vec<bool>,
    /// The shells.
    pub shells: Vec<ShellInfo>,
    /// Edges used by one facet only.
    pub open_edges: usize,
    /// Edges used by more than two facets.
    pub non_manifold_edges: usize,
    /// Manifold edges whose two facets, as stored, traverse them in the same direction.
    pub inconsistent_edges: usize,
    /// Facets with a repeated vertex after welding.
    pub degenerate_facets: usize,
    /// Facets with the same three vertices as an earlier facet (any order or winding).
    pub duplicate_facets: usize,
    /// Every finding with the facet it is charged to (an edge's lowest facet), so callers
    /// can count per part.
    pub defects: Vec<(Defect, u32)>,
    /// Where the open and non-manifold edges are, in order of edge (none for a clean
    /// closed mesh), so that a report can show the holes.
    pub edge_faults: Vec<EdgeFault>,
}

/// An open or non-manifold edge: the facet it is charged to (its first) and which of that
/// facet's edges it is, from corner `slot` to corner `(slot + 1) % 3`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct EdgeFault {
    pub kind: Defect,
    pub facet: u32,
    pub slot: u8,
}

impl EdgeFault {
    /// The edge's two end points, from the facets it was built on.
    pub fn ends<T: Tris + ?Sized>(&self, tris: &T) -> [Vec3; 2] {
        let t = tris.tri(self.facet as usize);
        let s = self.slot as usize % 3;
        [t[s], t[(s + 1) % 3]]
    }
}

/// A topological finding, charged to one facet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Defect {
    /// An edge used by one facet only.
    OpenEdge,
    /// An edge used by more than two facets.
    NonManifoldEdge,
    /// A manifold edge whose two facets traverse it in the same direction as stored.
    InconsistentEdge,
    /// A facet with a repeated vertex after welding.
    Degenerate,
    /// A facet with the same three vertices as an earlier one.
    Duplicate,
}

impl Topology {
    /// Whether every shell is closed (and there is at least one).
    pub fn closed(&self) -> bool {
        !self.shells.is_empty() && self.shells.iter().all(|s| s.closed)
    }

    /// Whether the facets `range` form closed shells by themselves: every shell they
    /// touch is closed and lies wholly inside the range.
    pub fn closed_within(&self, range: std::ops::Range<usize>) -> bool {
        use rayon::prelude::*;
        let facets = self.facet_shell[range.clone()]
            .par_iter()
            .with_min_len(1 << 12);
        let inside = facets.clone().all(|&s| {
            let Some(sh) = self.shells.get(s as usize) else {
                return s == NO_SHELL;
            };
            sh.closed && sh.facet_span.0 >= range.start && sh.facet_span.1 < range.end
        });
        inside && facets.any(|&s| s != NO_SHELL)
    }

    /// Builds the topology of `tris`.
    pub fn build<T: Tris + ?Sized>(tris: &T) -> Topology {
        let (lo, hi) = bounding_box((0..tris.count()).flat_map(|f| tris.tri(f)));
        Topology::build_in_box(tris, (lo, hi))
    }

    /// [`Topology::build`] for a caller that already has the bounding box of `tris`.
    pub fn build_in_box<T: Tris + ?Sized>(tris: &T, (lo, hi): (Vec3, Vec3)) -> Topology {
        let n = tris.count();
        let diag = if n == 0 { 0.0 } else { (hi - lo).norm() };
        let tolerance = WELD_TOLERANCE_REL * diag;
        let centre = (lo + hi) / 2.0;

        let Welded {
            ids,
            degenerate,
            vertices,
            volume_sums,
        } = weld(tris, tolerance, (lo, hi));
        let mut defects: Vec<(Defect, u32)> = Vec::new();
        for (f, d) in degenerate.iter().enumerate() {
            if *d {
                defects.push((Defect::Degenerate, f as u32));
            }
        }
        let degenerate_facets = defects.len();

        // The facets under every vertex (a counting sort, in facet order, by runs of
        // facets), then each vertex's edges to higher vertices grouped by that vertex (in
        // ranges of vertices), both on all threads, a window of vertices at a time.
        let edges = find_edges(&ids, &degenerate, vertices);
        let EdgeFindings {
            open_edges,
            non_manifold_edges,
            inconsistent_edges,
            findings: groups,
            bad,
            joins,
            places,
        } = edges.findings;
        let edge_faults: Vec<EdgeFault> = places
            .into_vec()
            .into_iter()
            .map(|(kind, facet, slot)| EdgeFault { kind, facet, slot })
            .collect();
        let adj = edges.neighbours;
        let mut bad_facet = vec![false; n]; // touches an open or non-manifold edge
        for &f in bad.iter() {
            bad_facet[f as usize] = true;
        }
        drop(bad);

        // Shells and winding over the manifold edges (`flood`: disjoint sets, or a flood
        // fill where a piece cannot be wound consistently); pieces joined at non-manifold
        // edges are one shell. Duplicate facets: found by `flood` from the neighbours when
        // every edge is manifold; otherwise by comparing the sorted vertex triples of all
        // facets. The ids are freed before `flood`'s lists are made.
        let manifold = non_manifold_edges == 0;
        let listed = (!manifold).then(|| duplicate_facet_list(&ids, &degenerate));
        drop(ids);
        let (mut facet_shell, mut flip, mut shells, repeats) =
            flood(&degenerate, &adj, &bad_facet, manifold);
        let duplicates = listed.unwrap_or(repeats);
        let duplicate_facets = duplicates.len();
        defects.reserve_exact(duplicates.len() + groups.len());
        defects.extend(duplicates.into_iter().map(|f| (Defect::Duplicate, f)));
        // Edge findings follow, ordered by edge as found (lower vertex, then higher).
        for block in groups.0 {
            defects.extend(block);
        }
        drop((adj, bad_facet));
        if !joins.is_empty() {
            shells = join_pieces(shells, &joins.into_vec(), &mut facet_shell);
        }

        // Signed volume per shell about the box centre (no cancellation far from origin),
        // mostly from the weld's sums.
        let vol: Vec<f64> = shell_volumes(&facet_shell, &flip, shells.len(), &volume_sums, |f| {
            six_volume(&tris.tri(f), &centre)
        })
        .into_iter()
        .map(|six| six / 6.0)
        .collect();
        for (s, sh) in shells.iter_mut().enumerate() {
            sh.volume = vol[s];
            if sh.closed && vol[s] < 0.0 {
                sh.volume = -vol[s];
            }
        }
        let turn: Vec<bool> = vol
            .iter()
            .zip(&shells)
            .map(|(v, s)| s.closed && *v < 0.0)
            .collect();
        if turn.contains(&true) {
            use rayon::prelude::*;
            flip.par_iter_mut()
                .zip(&facet_shell)
                .filter(|(_, s)| **s != NO_SHELL && turn[**s as usize])
                .for_each(|(f, _)| *f = !*f);
        }
        let flipped = shell_flipped(&facet_shell, &flip, shells.len());
        for (sh, flipped) in shells.iter_mut().zip(flipped) {
            sh.flipped_facets = flipped;
        }
        for sh in shells.iter_mut() {
            // Inverted as stored: most of its area would have to be reversed.
            sh.inverted = sh.closed && 2 * sh.flipped_facets > sh.facets;
        }

        nest(tris, &facet_shell, &flip, &mut shells);

        Topology {
            tolerance,
            vertices,
            facet_shell,
            flip,
            shells,
            open_edges,
            non_manifold_edges,
            inconsistent_edges,
            degenerate_facets,
            duplicate_facets,
            defects,
            edge_faults,
        }
    }
}

/// The axis-aligned bounding box of some points ((+∞, −∞) when there are none).
pub fn bounding_box<P: std::borrow::Borrow<Vec3>>(points: impl Iterator<Item = P>) -> (Vec3, Vec3) {
    let mut lo = Vec3::repeat(f64::INFINITY);
    let mut hi = Vec3::repeat(f64::NEG_INFINITY);
    for p in points {
        let p = p.borrow();
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    (lo, hi)
}

/// `n` zeros written out, for a list that is read before it is written (counts, marks).
/// The allocator's zeroed memory (`vec![0; n]`) is fresh pages the system zeroes on first
/// touch: read first, each page is mapped to the shared zero page and faults again when
/// written, and that second fault flushes the page from every core's TLB. Written out,
/// each page faults once. (The fill value is hidden from the compiler, which would
/// otherwise turn the writes back into a zeroed allocation.)
pub(super) fn written_zeros<T: Copy + Default>(n: usize) -> Vec<T> {
    let mut v = Vec::with_capacity(n);
    v.resize(n, std::hint::black_box(T::default()));
    v
}

/// Disjoint sets of indices whose root is always the lowest index of its set (the weld
/// and the joining of pieces number their results in that order).
pub(super) struct UnionFind {
    parent: Vec<u32>,
}

impl UnionFind {
    pub(super) fn new(n: usize) -> Self {
        UnionFind {
            parent: (0..n as u32).collect(),
        }
    }
    pub(super) fn find(&mut self, mut x: usize) -> usize {
        while self.parent[x] as usize != x {
            let p = self.parent[x] as usize;
            self.parent[x] = self.parent[p];
            x = p;
        }
        x
    }
    /// Numbers the sets in order of their lowest element: each element's set number, and
    /// the number of sets. In place: every element's parent is at or below it (a union
    /// hangs the higher root under the lower, and path halving only moves a parent
    /// lower), so when the elements are taken in order, a parent's entry already holds
    /// its set's number.
    pub(super) fn into_numbers(self) -> (Vec<u32>, usize) {
        let mut number = self.parent;
        let mut sets = 0u32;
        for i in 0..number.len() {
            let p = number[i] as usize;
            number[i] = if p == i {
                sets += 1;
                sets - 1
            } else {
                number[p]
            };
        }
        (number, sets as usize)
    }

    pub(super) fn union(&mut self, a: usize, b: usize) {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra != rb {
            let (lo, hi) = (ra.min(rb), ra.max(rb));
            self.parent[hi] = lo as u32;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::weld::{weld, weld_with};
    use super::*;

    pub(super) fn tris(t: Vec<shapes::Triangle>) -> Vec<Tri> {
        t.into_iter()
            .map(|f| f.map(|p| Vec3::new(p[0], p[1], p[2])))
            .collect()
    }

    fn unit_box() -> Vec<Tri> {
        tris(shapes::box_solid([0.0, 0.0, 0.0], [2.0, 3.0, 4.0], 2))
    }

    #[test]
    fn written_zeros_are_zeros_of_the_length_asked() {
        for n in [0, 1, 4095, 1 << 20] {
            let bytes: Vec<u8> = written_zeros(n);
            let words: Vec<u64> = written_zeros(n);
            assert!(bytes.len() == n && bytes.iter().all(|&b| b == 0));
            assert!(words.len() == n && words.iter().all(|&w| w == 0));
        }
    }

    #[test]
    fn sets_are_numbered_in_order_of_their_lowest_element() {
        let mut seed = 11u64;
        let mut next = |n: usize| {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 33) as usize % n
        };
        for n in [1, 2, 10, 1000] {
            let mut uf = UnionFind::new(n);
            for _ in 0..n / 2 {
                let (a, b) = (next(n), next(n));
                uf.union(a, b);
                let _ = uf.find(next(n)); // halves some paths
            }
            // By finds: the sets' roots numbered as they first come.
            let mut by_root = std::collections::HashMap::new();
            let want: Vec<u32> = (0..n)
                .map(|i| {
                    let r = uf.find(i);
                    let k = by_root.len() as u32;
                    *by_root.entry(r).or_insert(k)
                })
                .collect();
            assert_eq!(uf.into_numbers(), (want, by_root.len()));
        }
    }

    #[test]
    fn a_clean_box_is_one_closed_outward_shell() {
        let t = Topology::build(&unit_box());
        assert!(t.closed());
        assert_eq!(t.shells.len(), 1);
        assert!(t.defects.is_empty());
        assert_eq!(t.shells[0].flipped_facets, 0);
        // Exact polyhedron volume 2 × 3 × 4.
        assert!((t.shells[0].volume - 24.0).abs() < 1e-12);
    }

    #[test]
    fn volumes_of_shells_over_many_blocks_and_read_both_ways_are_exact() {
        // Two finely cut boxes (10,800 facets each: several of the weld's volume blocks),
        // the second stored inward, and a stretch of the first's facets reversed so that
        // blocks mix both ways. Exact polyhedron volumes: 2 × 3 × 4 and 1 × 1 × 2.
        let mut m = tris(shapes::box_solid([0.0, 0.0, 0.0], [2.0, 3.0, 4.0], 30));
        let first = m.len();
        for t in &mut m[5000..5300] {
            t.swap(1, 2);
        }
        m.extend(
            tris(shapes::box_solid([5.0, 0.0, 0.0], [6.0, 1.0, 2.0], 30))
                .into_iter()
                .map(|[a, b, c]| [a, c, b]),
        );
        assert!(m.len() > 4 * super::weld::VOLUME_BLOCK);
        let t = Topology::build(&m);
        assert!(t.closed());
        assert_eq!(t.shells.len(), 2);
        assert_eq!(t.shells[0].facets, first);
        assert_eq!(t.shells[0].flipped_facets, 300);
        assert!(t.shells[1].inverted);
        assert!((t.shells[0].volume - 24.0).abs() < 1e-12 * 24.0);
        assert!((t.shells[1].volume - 2.0).abs() < 1e-12 * 2.0);
    }

    #[test]
    fn a_reversed_box_is_turned_outward_and_flagged() {
        let rev: Vec<Tri> = unit_box().into_iter().map(|[a, b, c]| [a, c, b]).collect();
        let t = Topology::build(&rev);
        assert!(t.closed());
        assert!(t.shells[0].inverted);
        assert_eq!(t.shells[0].flipped_facets, rev.len());
        assert!((t.shells[0].volume - 24.0).abs() < 1e-12);
    }

    #[test]
    fn mixed_winding_is_made_consistent() {
        let mut m = unit_box();
        let n = m.len();
        for (i, f) in m.iter_mut().enumerate() {
            if i % 3 == 0 {
                f.swap(1, 2);
            }
        }
        let t = Topology::build(&m);
        assert!(t.closed());
        assert_eq!(t.shells[0].flipped_facets, n.div_ceil(3));
        assert!(t.inconsistent_edges > 0);
        assert!((t.shells[0].volume - 24.0).abs() < 1e-12);
    }

    #[test]
    fn defects_are_counted_exactly() {
        // One facet removed: its three edges become open.
        let mut m = unit_box();
        m.pop();
        let t = Topology::build(&m);
        assert!(!t.closed());
        assert_eq!(t.open_edges, 3);

        // One facet doubled: its three edges are used three times, one duplicate.
        let mut m = unit_box();
        m.push(m[0]);
        let t = Topology::build(&m);
        assert_eq!(t.duplicate_facets, 1);
        assert_eq!(t.non_manifold_edges, 3);
        assert!(!t.closed());

        // A lone facet stored twice: every edge is used by exactly the two copies.
        let a = [
            Vec3::zeros(),
            Vec3::new(1.0, 0.0, 0.0),
            Vec3::new(0.0, 1.0, 0.0),
        ];
        let t = Topology::build(&[a, a][..]);
        assert_eq!(
            (
                t.duplicate_facets,
                t.inconsistent_edges,
                t.non_manifold_edges
            ),
            (1, 3, 0)
        );
        assert_eq!(t.defects[0], (Defect::Duplicate, 1));
        let t = Topology::build(&[a, [a[0], a[2], a[1]]][..]);
        assert_eq!(
            (t.duplicate_facets, t.inconsistent_edges, t.open_edges),
            (1, 0, 0)
        );
        // Two such pairs stored interleaved, (0, 3) and (1, 2): the duplicates in facet
        // order, whatever order the pieces are walked in.
        let b = a.map(|p| p + Vec3::new(5.0, 0.0, 0.0));
        let t = Topology::build(&[a, b, b, a][..]);
        assert_eq!(t.non_manifold_edges, 0);
        let dups: Vec<u32> = t
            .defects
            .iter()
            .filter(|d| d.0 == Defect::Duplicate)
            .map(|d| d.1)
            .collect();
        assert_eq!(dups, vec![2, 3]);

        // A sliver whose vertices collapse within the weld tolerance.
        let mut m = unit_box();
        let p = m[0][0];
        m.push([p, p + Vec3::new(1e-12, 0.0, 0.0), Vec3::new(1.0, 1.0, 1.0)]);
        let t = Topology::build(&m);
        assert_eq!(t.degenerate_facets, 1);
        assert!(t.closed(), "a degenerate facet is ignored for topology");
    }

    #[test]
    fn float_noise_below_the_tolerance_does_not_open_the_mesh() {
        let m: Vec<Tri> = unit_box()
            .into_iter()
            .enumerate()
            .map(|(i, f)| f.map(|p| p + Vec3::repeat(if i % 2 == 0 { 1e-13 } else { 0.0 })))
            .collect();
        assert!(Topology::build(&m).closed());
    }

    /// Edge findings counted the plain way: a map from undirected edge to its uses.
    fn naive_edge_counts(ids: &[[u32; 3]]) -> (usize, usize, usize) {
        let mut uses: std::collections::BTreeMap<(u32, u32), Vec<bool>> = Default::default();
        for [a, b, c] in ids {
            if a == b || b == c || a == c {
                continue;
            }
            for (u, v) in [(*a, *b), (*b, *c), (*c, *a)] {
                uses.entry((u.min(v), u.max(v))).or_default().push(u < v);
            }
        }
        let open = uses.values().filter(|u| u.len() == 1).count();
        let non_manifold = uses.values().filter(|u| u.len() > 2).count();
        let inconsistent = uses
            .values()
            .filter(|u| u.len() == 2 && u[0] == u[1])
            .count();
        (open, non_manifold, inconsistent)
    }

    proptest::proptest! {
        /// Soups drawn from a few well-separated points, each corner jittered by well under
        /// the weld tolerance: the weld must give every corner the id of its point (checked
        /// as a partition), and the edge findings must match a plain count.
        #[test]
        fn weld_and_edges_match_a_plain_count(
            faces in proptest::collection::vec((0u32..12, 0u32..12, 0u32..12, 0u8..4), 1..60),
            jitter in proptest::collection::vec(-1.0f64..1.0, 540),
        ) {
            let pool: Vec<Vec3> = (0..12)
                .map(|i| {
                    let i = f64::from(i);
                    Vec3::new(i.sin() * 3.0, (1.7 * i).cos() * 2.0, 0.37 * i)
                })
                .collect();
            // A first facet across the pool, so that the box diagonal (and the tolerance
            // with it) is never set by the jitter alone.
            let mut tris = vec![[pool[0], pool[5], pool[11]]];
            let mut point_ids = vec![[0u32, 5, 11]];
            for (f, &(a, b, c, j)) in faces.iter().enumerate() {
                let corner = |k: usize, id: u32| {
                    // A twentieth of the tolerance at most (the box diagonal is over 4).
                    let e = if j == 0 { 0.0 } else { 2e-8 };
                    pool[id as usize] + Vec3::new(
                        e * jitter[(9 * f + 3 * k) % 540],
                        e * jitter[(9 * f + 3 * k + 1) % 540],
                        e * jitter[(9 * f + 3 * k + 2) % 540],
                    )
                };
                tris.push([corner(0, a), corner(1, b), corner(2, c)]);
                point_ids.push([a, b, c]);
            }
            let (lo, hi) = bounding_box(tris.iter().flat_map(|t| t.iter()));
            let tol = WELD_TOLERANCE_REL * (hi - lo).norm();
            let w = weld(&tris, tol, (lo, hi));
            let (ids, vertices) = (w.ids, w.vertices);
            let mut seen: std::collections::BTreeMap<u32, u32> = Default::default();
            for (got, want) in ids.iter().flatten().zip(point_ids.iter().flatten()) {
                proptest::prop_assert_eq!(*seen.entry(*want).or_insert(*got), *got);
            }
            let distinct: std::collections::BTreeSet<u32> = ids.iter().flatten().copied().collect();
            proptest::prop_assert_eq!(distinct.len(), seen.len());
            proptest::prop_assert_eq!(vertices, seen.len());
            // The same clusters as the plain pairwise reading, numbered alike.
            let (plain, plain_vertices) = plain_weld(&tris, tol);
            proptest::prop_assert_eq!(&ids, &plain);
            proptest::prop_assert_eq!(plain_vertices, vertices);
            let w = weld_with(&tris, tol, (lo, hi), 3, None);
            proptest::prop_assert_eq!((w.ids, w.vertices), (ids.clone(), vertices));

            let t = Topology::build(&tris);
            let (open, non_manifold, inconsistent) = naive_edge_counts(&point_ids);
            proptest::prop_assert_eq!(t.open_edges, open);
            proptest::prop_assert_eq!(t.non_manifold_edges, non_manifold);
            proptest::prop_assert_eq!(t.inconsistent_edges, inconsistent);
            // Every open and non-manifold edge is placed once, on a facet that has it.
            proptest::prop_assert_eq!(t.edge_faults.len(), open + non_manifold);
            let mut uses: std::collections::HashMap<(u32, u32), usize> = Default::default();
            for f in point_ids.iter().filter(|[a, b, c]| a != b && b != c && a != c) {
                for k in 0..3 {
                    let (p, q) = (f[k], f[(k + 1) % 3]);
                    *uses.entry((p.min(q), p.max(q))).or_default() += 1;
                }
            }
            for e in &t.edge_faults {
                let f = &point_ids[e.facet as usize];
                let (p, q) = (f[e.slot as usize], f[(e.slot as usize + 1) % 3]);
                let n = uses.get(&(p.min(q), p.max(q))).copied().unwrap_or(0);
                match e.kind {
                    Defect::OpenEdge => proptest::prop_assert_eq!(n, 1),
                    _ => proptest::prop_assert!(n > 2),
                }
            }
            let mut sorted: Vec<[u32; 3]> = point_ids
                .iter()
                .filter(|[a, b, c]| a != b && b != c && a != c)
                .map(|t| { let mut k = *t; k.sort_unstable(); k })
                .collect();
            let all = sorted.len();
            sorted.sort_unstable();
            sorted.dedup();
            proptest::prop_assert_eq!(t.duplicate_facets, all - sorted.len());

            // Shells: facets sharing an edge, numbered by first facet; after the flips,
            // the two uses of every manifold edge of an orientable shell run opposite ways.
            let (shell_of, uses) = plain_shells(&point_ids);
            proptest::prop_assert_eq!(&t.facet_shell, &shell_of);
            for u in uses.values().filter(|u| u.len() == 2) {
                let ((f, a), (g, b)) = (u[0], u[1]);
                if t.shells[t.facet_shell[f] as usize].orientable {
                    proptest::prop_assert_ne!(a ^ t.flip[f], b ^ t.flip[g]);
                }
            }
            for sh in &t.shells {
                proptest::prop_assert!(!sh.closed || (sh.orientable && sh.volume >= 0.0));
            }
        }
    }

    /// Shells by definition: non-degenerate facets sharing an (undirected) edge are in
    /// one shell, numbered by first facet; with every edge's uses (facet, runs from lower
    /// to higher vertex) in facet order.
    #[allow(clippy::type_complexity)]
    fn plain_shells(
        ids: &[[u32; 3]],
    ) -> (
        Vec<u32>,
        std::collections::BTreeMap<(u32, u32), Vec<(usize, bool)>>,
    ) {
        let mut uses: std::collections::BTreeMap<(u32, u32), Vec<(usize, bool)>> =
            Default::default();
        let ok = |[a, b, c]: &[u32; 3]| a != b && b != c && a != c;
        for (f, t) in ids.iter().enumerate().filter(|(_, t)| ok(t)) {
            for (u, v) in [(t[0], t[1]), (t[1], t[2]), (t[2], t[0])] {
                uses.entry((u.min(v), u.max(v)))
                    .or_default()
                    .push((f, u < v));
            }
        }
        let mut uf = UnionFind::new(ids.len());
        for u in uses.values() {
            for &(g, _) in &u[1..] {
                uf.union(u[0].0, g);
            }
        }
        let mut number = vec![NO_SHELL; ids.len()];
        let mut next = 0;
        let mut shell_of = vec![NO_SHELL; ids.len()];
        for (f, t) in ids.iter().enumerate() {
            if ok(t) {
                let r = uf.find(f);
                if number[r] == NO_SHELL {
                    number[r] = next;
                    next += 1;
                }
                shell_of[f] = number[r];
            }
        }
        (shell_of, uses)
    }

    /// The weld by definition, in quadratic time: corners within `tol` of each other are
    /// joined, clusters numbered by their first corner.
    pub(super) fn plain_weld(tris: &[Tri], tol: f64) -> (Vec<[u32; 3]>, usize) {
        let corners: Vec<Vec3> = tris.iter().flatten().copied().collect();
        let mut uf = UnionFind::new(corners.len());
        for i in 0..corners.len() {
            for j in 0..i {
                if (corners[i] - corners[j]).norm_squared() <= tol * tol {
                    uf.union(i, j);
                }
            }
        }
        let mut number = vec![u32::MAX; corners.len()];
        let mut next = 0;
        let mut ids = Vec::new();
        for f in 0..tris.len() {
            let mut t = [0; 3];
            for (k, id) in t.iter_mut().enumerate() {
                let r = uf.find(3 * f + k);
                if number[r] == u32::MAX {
                    number[r] = next;
                    next += 1;
                }
                *id = number[r];
            }
            ids.push(t);
        }
        (ids, next as usize)
    }

    #[test]
    fn a_sealed_inner_shell_is_a_cavity() {
        let mut m = tris(shapes::box_solid([0.0, 0.0, 0.0], [4.0, 4.0, 4.0], 1));
        m.extend(tris(shapes::box_solid([1.0, 1.0, 1.0], [2.0, 2.0, 2.0], 1)));
        m.extend(tris(shapes::box_solid([6.0, 0.0, 0.0], [7.0, 1.0, 1.0], 1)));
        let t = Topology::build(&m);
        assert!(t.closed());
        let depths: Vec<u32> = t.shells.iter().map(|s| s.depth).collect();
        assert_eq!(depths, vec![0, 1, 0]);
        assert_eq!(t.shells[0].children, 1);
        assert_eq!(t.shells[2].children, 0);
        assert!(t.closed_within(0..12));
        assert!(!t.closed_within(0..11));
    }

    #[test]
    fn a_range_is_closed_when_it_holds_whole_closed_shells_only() {
        // A closed box (12 facets), an open one (its lid taken off: 10), a facet of no
        // area, and a closed box of 8,192 facets, so that the range is read in pieces.
        let mut m = tris(shapes::box_solid([0.0; 3], [1.0; 3], 1));
        let mut open = tris(shapes::box_solid([3.0, 0.0, 0.0], [4.0, 1.0, 1.0], 1));
        open.retain(|f| f.iter().any(|p| p.z < 0.5));
        assert_eq!(open.len(), 10);
        m.extend(open);
        let p = Vec3::new(9.0, 9.0, 9.0);
        m.push([p, p, Vec3::new(10.0, 9.0, 9.0)]);
        let big = tris(shapes::box_solid([0.0, 3.0, 0.0], [1.0, 4.0, 1.0], 64));
        assert!(big.len() > 8_000);
        m.extend(big);
        let n = m.len();
        let t = Topology::build(&m);
        assert_eq!(t.degenerate_facets, 1);
        assert!(t.closed_within(0..12));
        assert!(!t.closed_within(12..22), "an open shell");
        assert!(!t.closed_within(0..22));
        assert!(!t.closed_within(22..23), "no shell at all");
        assert!(
            t.closed_within(22..n),
            "a degenerate facet beside a closed shell"
        );
        assert!(t.closed_within(23..n));
        assert!(!t.closed_within(23..n - 1), "part of a shell");
        assert!(!t.closed_within(24..n), "part of a shell");
    }
}
