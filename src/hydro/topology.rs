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

use std::sync::atomic::{AtomicU32, Ordering};

use super::{Tri, Vec3};

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
        let mut any = false;
        for &s in &self.facet_shell[range.clone()] {
            if s == NO_SHELL {
                continue;
            }
            let sh = &self.shells[s as usize];
            if !sh.closed || sh.facet_span.0 < range.start || sh.facet_span.1 >= range.end {
                return false;
            }
            any = true;
        }
        any
    }

    /// Builds the topology of `tris`.
    pub fn build(tris: &[Tri]) -> Topology {
        let (lo, hi) = bounding_box(tris.iter().flat_map(|t| t.iter()));
        Topology::build_in_box(tris, (lo, hi))
    }

    /// [`Topology::build`] for a caller that already has the bounding box of `tris`.
    pub fn build_in_box(tris: &[Tri], (lo, hi): (Vec3, Vec3)) -> Topology {
        let n = tris.len();
        let diag = if n == 0 { 0.0 } else { (hi - lo).norm() };
        let tolerance = WELD_TOLERANCE_REL * diag;
        let centre = (lo + hi) / 2.0;

        let (ids, vertices) = weld(tris, tolerance, (lo, hi));
        let degenerate: Vec<bool> = ids
            .iter()
            .map(|[a, b, c]| a == b || b == c || a == c)
            .collect();
        let mut defects: Vec<(Defect, u32)> = Vec::new();
        for (f, d) in degenerate.iter().enumerate() {
            if *d {
                defects.push((Defect::Degenerate, f as u32));
            }
        }
        let degenerate_facets = defects.len();

        // The facets around every vertex (a counting sort, in facet order), then each
        // vertex's edges to higher vertices grouped by that vertex: both in ranges of
        // vertices on all threads.
        let around = Incidence::new(&ids, &degenerate, vertices);
        let edges = around.edges(&ids);
        drop(around);
        let EdgeFindings {
            open_edges,
            non_manifold_edges,
            inconsistent_edges,
            findings: groups,
            bad,
            joins,
        } = edges.findings;
        let adj = edges.neighbours;
        let mut bad_facet = vec![false; n]; // touches an open or non-manifold edge
        for &f in bad.iter() {
            bad_facet[f as usize] = true;
        }
        drop(bad);

        // Duplicate facets. Two facets with the same three vertices share all three edges:
        // when every edge is manifold, they are each other's only neighbours; otherwise
        // compare the sorted vertex triples of all facets.
        let duplicates = if non_manifold_edges == 0 {
            use rayon::prelude::*;
            (0..n)
                .into_par_iter()
                .filter(|&f| {
                    let a = adj.of(f);
                    let g = a[0] >> 1;
                    (g as usize) < f && a.iter().all(|&x| x != NO_NEIGHBOUR && x >> 1 == g)
                })
                .map(|f| f as u32)
                .collect()
        } else {
            duplicate_facet_list(&ids, &degenerate)
        };
        drop(ids);
        let duplicate_facets = duplicates.len();
        defects.reserve_exact(duplicates.len() + groups.len());
        defects.extend(duplicates.into_iter().map(|f| (Defect::Duplicate, f)));
        // Edge findings follow, ordered by edge as found (lower vertex, then higher).
        for block in groups.0 {
            defects.extend(block);
        }

        // Shells and winding in one flood fill over the manifold edges; pieces joined at
        // non-manifold edges are one shell.
        let (mut facet_shell, mut flip, mut shells) = flood(&degenerate, &adj, &bad_facet);
        drop((adj, bad_facet));
        if !joins.is_empty() {
            shells = join_pieces(shells, &joins.into_vec(), &mut facet_shell);
        }

        // Signed volume per shell about the box centre (no cancellation far from origin).
        let vol = shell_sums(&facet_shell, shells.len(), |f| {
            let [a, b, c] = tris[f].map(|p| p - centre);
            let v6 = a.dot(&b.cross(&c));
            (if flip[f] { -v6 } else { v6 }) / 6.0
        });
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
        let flipped = shell_sums(&facet_shell, shells.len(), |f| usize::from(flip[f]));
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
        }
    }
}

/// The axis-aligned bounding box of some points ((+∞, −∞) when there are none).
pub fn bounding_box<'a>(points: impl Iterator<Item = &'a Vec3>) -> (Vec3, Vec3) {
    let mut lo = Vec3::repeat(f64::INFINITY);
    let mut hi = Vec3::repeat(f64::NEG_INFINITY);
    for p in points {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    (lo, hi)
}

/// Cells per axis of the weld grid fit in this many bits of a packed key.
const CELL_BITS: u32 = 21;

/// Slots of the weld's cache of exact corner positions (a power of two).
const EXACT_SLOTS: usize = 1 << 14;

/// Gives every corner a vertex id: a corner within `tol` of a cluster's first corner
/// joins that cluster (the same clusters as joining every pair within `tol` whenever
/// clusters are far apart compared with `tol`, as in any mesh not degenerate at that
/// scale); ids are numbered in order of each cluster's first corner. Returns the ids per facet and the number of vertices.
///
/// In a triangle soup every vertex is stored once per facet that uses it, bit for bit the
/// same, usually a few facets apart. So, first, a small direct-mapped cache of exact
/// positions sends each repeat to the corner it repeats; the corners it misses (the
/// candidates, about one per vertex, plus the few repeats it forgot) go on. Second, the
/// candidates are sorted by a grid cell 64 × `tol` wide and clustered cell by cell: the
/// first candidate of a cluster is its representative, later ones within `tol` of it
/// join it, and representatives within `tol` of a cell face (one in ten) are joined with
/// those of the neighbour cells within `tol` (union-find).
/// The sort, not a hash map, keeps every step in cache-friendly order; the result does
/// not depend on the number of threads.
fn weld(tris: &[Tri], tol: f64, bbox: (Vec3, Vec3)) -> (Vec<[u32; 3]>, usize) {
    weld_in_blocks(tris, tol, bbox, WELD_BLOCK)
}

/// Facets per block of the weld's first step (a constant, so that nothing depends on the
/// number of threads).
const WELD_BLOCK: usize = 1 << 18;

/// [`weld`], its first step in blocks of `block` facets.
fn weld_in_blocks(
    tris: &[Tri],
    tol: f64,
    (origin, _): (Vec3, Vec3),
    block: usize,
) -> (Vec<[u32; 3]>, usize) {
    use rayon::prelude::*;

    // 1. Exact repeats, block by block on both threads, each block with its own cache; the
    // candidates of a block follow those of the blocks before it, so they stay in order
    // of first appearance (a point repeated across blocks is one candidate per block, and
    // step 3 joins them). `ids` holds candidate indices until step 4.
    let block = block.max(1);
    let mut ids: Vec<[u32; 3]> = vec![[0; 3]; tris.len()];
    // Each candidate's corner (3 × facet + corner), relative to `origin` its position.
    let corner = |c: u32| tris[c as usize / 3][c as usize % 3] - origin;
    let blocks: Vec<Vec<u32>> = tris
        .par_chunks(block)
        .zip(ids.par_chunks_mut(block))
        .enumerate()
        .map(|(b, (tris, ids))| {
            let mut exact: Vec<([u64; 3], u32)> = vec![([u64::MAX; 3], u32::MAX); EXACT_SLOTS];
            let mut candidates: Vec<u32> = Vec::with_capacity(tris.len() / 2 + 16);
            for (f, (t, c)) in tris.iter().zip(ids).enumerate() {
                for k in 0..3 {
                    let p = &t[k];
                    let bits = [p.x.to_bits(), p.y.to_bits(), p.z.to_bits()];
                    let slot = exact_slot(&bits);
                    c[k] = if exact[slot].0 == bits {
                        exact[slot].1
                    } else {
                        let i = candidates.len() as u32;
                        candidates.push((3 * (b * block + f) + k) as u32);
                        exact[slot] = (bits, i);
                        i
                    };
                }
            }
            candidates
        })
        .collect();
    // Block-local candidate indices become global ones.
    let mut offsets = Vec::with_capacity(blocks.len());
    let mut total = 0u32;
    for b in &blocks {
        offsets.push(total);
        total += b.len() as u32;
    }
    ids.par_chunks_mut(block)
        .zip(&offsets)
        .filter(|(_, o)| **o > 0)
        .for_each(|(ids, &o)| ids.iter_mut().for_each(|t| *t = t.map(|i| i + o)));
    let count = total as usize;

    // 2. Candidates sorted by cell. With tol = 1e-7 × the diagonal every axis spans at
    // most 1.6e5 cells (< 2^21, so the packed keys of real cells never collide).
    let cell = if tol > 0.0 { 64.0 * tol } else { 1.0 };
    // Positions are relative to the box's lowest corner, so never negative, and the cast
    // (which truncates) is the floor without a call to `floor`.
    let key = |q: &Vec3| -> [i64; 3] {
        [
            (q.x / cell) as i64,
            (q.y / cell) as i64,
            (q.z / cell) as i64,
        ]
    };
    // Whether a point lies within `tol` of a face of its cell `k` along axis `ax`: -1
    // (the lower face), 1 (the upper one) or 0.
    let near_face = |q: &Vec3, k: &[i64; 3], ax: usize| -> i64 {
        let inside = q[ax] / cell - k[ax] as f64; // position inside the cell, [0, 1)
        if inside * cell < tol {
            -1
        } else if (1.0 - inside) * cell <= tol {
            1
        } else {
            0
        }
    };
    // (cell, candidate, its corner with [`NEAR_FACE`] set when the point lies that close
    // to a face of its cell): the candidate breaks ties, so the order is unique.
    let mut order: Vec<(u64, u32, u32)> = blocks
        .par_iter()
        .zip(&offsets)
        .flat_map_iter(|(b, &o)| {
            b.iter().enumerate().map(move |(i, &c)| {
                let q = corner(c);
                let k = key(&q);
                let near = (0..3).any(|ax| near_face(&q, &k, ax) != 0);
                (pack(k), o + i as u32, c | if near { NEAR_FACE } else { 0 })
            })
        })
        .collect();
    drop(blocks);
    order.par_sort_unstable();
    // The position of the candidate at `a` in `order`.
    let at = |a: usize| corner(order[a].2 & !NEAR_FACE);

    // 3. Clusters. Within a cell, in candidate order, the first candidate of a cluster is
    // its representative and every later one within `tol` of a representative joins it;
    // then representatives within `tol` of a cell face are joined with those of the
    // neighbour cells within `tol`. Comparing with representatives only keeps a cell
    // that holds the same point many times (evicted from the cache) linear.
    let tol2 = tol * tol;
    let mut uf = UnionFind::new(count);
    // Positions (in `order`) of the representatives, grouped by cell in key order.
    let mut reps: Vec<u32> = Vec::with_capacity(order.len());
    // The positions of the current cell's representatives.
    let mut cell_reps: Vec<(Vec3, u32)> = Vec::new();
    let mut start = 0;
    while start < order.len() {
        let mut end = start + 1;
        while end < order.len() && order[end].0 == order[start].0 {
            end += 1;
        }
        if end == start + 1 {
            // Alone in its cell (the rule): a representative, its position not needed.
            reps.push(start as u32);
            start = end;
            continue;
        }
        cell_reps.clear();
        for a in start..end {
            let q = at(a);
            match cell_reps
                .iter()
                .find(|(p, _)| (p - q).norm_squared() <= tol2)
            {
                Some(&(_, r)) => uf.union(order[a].1 as usize, order[r as usize].1 as usize),
                None => {
                    reps.push(a as u32);
                    cell_reps.push((q, a as u32));
                }
            }
        }
        start = end;
    }
    // The representatives' keys side by side, for the searches below.
    let rep_keys: Vec<u64> = reps.iter().map(|&r| order[r as usize].0).collect();
    // Representatives near a face, in blocks on both threads; the pairs found are joined
    // after (the clusters do not depend on the order of the joins).
    let joins: Vec<(u32, u32)> = reps
        .par_chunks(1 << 12)
        .flat_map_iter(|block| {
            let mut found = Vec::new();
            for &a in block {
                let (_, i, c) = order[a as usize];
                if c & NEAR_FACE == 0 {
                    continue; // nothing in another cell is within `tol`
                }
                let q = at(a as usize);
                // Neighbour cells worth visiting along each axis.
                let k = key(&q);
                let mut offs = [[0i64; 2]; 3];
                let mut counts = [1usize; 3];
                for ax in 0..3 {
                    let side = near_face(&q, &k, ax);
                    if side != 0 {
                        offs[ax][1] = side;
                        counts[ax] = 2;
                    }
                }
                for ia in 0..counts[0] {
                    for ib in 0..counts[1] {
                        for ic in 0..counts[2] {
                            if ia + ib + ic == 0 {
                                continue; // its own cell, done above
                            }
                            let other =
                                pack([k[0] + offs[0][ia], k[1] + offs[1][ib], k[2] + offs[2][ic]]);
                            let from = rep_keys.partition_point(|&k| k < other);
                            for (&r, &key_r) in reps[from..].iter().zip(&rep_keys[from..]) {
                                if key_r != other {
                                    break;
                                }
                                if (at(r as usize) - q).norm_squared() <= tol2 {
                                    found.push((i, order[r as usize].1));
                                }
                            }
                        }
                    }
                }
            }
            found
        })
        .collect();
    for (i, j) in joins {
        uf.union(i as usize, j as usize);
    }
    drop((order, reps, rep_keys));

    // 4. Number the clusters in order of their first candidate (the union-find keeps the
    // lowest index as the root, and candidates are in order of first appearance).
    let mut vertex = vec![u32::MAX; count];
    let mut vertices = 0u32;
    for i in 0..count {
        let r = uf.find(i);
        if vertex[r] == u32::MAX {
            vertex[r] = vertices;
            vertices += 1;
        }
        vertex[i] = vertex[r];
    }
    ids.par_iter_mut()
        .for_each(|t| *t = t.map(|i| vertex[i as usize]));
    (ids, vertices as usize)
}

/// Marks a corner index in the weld's sort: the point lies within the tolerance of a
/// face of its cell. Corner indices stay below 3 × [`crate::limits::FACETS_CEILING`] < 2^30.
const NEAR_FACE: u32 = 1 << 31;

/// A cell's three indices packed into one key, [`CELL_BITS`] bits each.
fn pack(k: [i64; 3]) -> u64 {
    let m = (1u64 << CELL_BITS) - 1;
    (k[0] as u64 & m) | ((k[1] as u64 & m) << CELL_BITS) | ((k[2] as u64 & m) << (2 * CELL_BITS))
}

/// The cache slot of an exact position: a multiplicative hash of its bit patterns.
fn exact_slot(bits: &[u64; 3]) -> usize {
    const K: u64 = 0x9E37_79B9_7F4A_7C15;
    let h = (bits[0].wrapping_mul(K) ^ bits[1]).wrapping_mul(K) ^ bits[2];
    (h.wrapping_mul(K) >> (64 - EXACT_SLOTS.trailing_zeros())) as usize
}

/// No neighbour across a facet's edge (an open or non-manifold edge).
const NO_NEIGHBOUR: u32 = u32::MAX;

/// Vertex ranges, one per thread, for the steps whose every range reads all the facets
/// and writes only its own vertices' part. The results do not depend on the split.
fn vertex_ranges(vertices: usize) -> Vec<std::ops::Range<u32>> {
    let parts = if vertices < 1 << 14 {
        1
    } else {
        rayon::current_num_threads().max(1)
    };
    let step = vertices.div_ceil(parts).max(1);
    (0..parts)
        .map(|i| ((i * step).min(vertices) as u32)..(((i + 1) * step).min(vertices) as u32))
        .collect()
}

/// `s` cut into consecutive pieces of the given lengths (which sum to its length).
fn split_lengths<T>(mut s: &mut [T], lengths: impl Iterator<Item = usize>) -> Vec<&mut [T]> {
    let mut out = Vec::new();
    for len in lengths {
        let (head, tail) = std::mem::take(&mut s).split_at_mut(len);
        out.push(head);
        s = tail;
    }
    out
}

/// The non-degenerate facets around every vertex, each vertex's in facet order.
struct Incidence {
    /// Where each vertex's facets end in `facets` (and the next vertex's begin).
    end: Vec<u32>,
    facets: Vec<u32>,
    ranges: Vec<std::ops::Range<u32>>,
}

impl Incidence {
    /// A counting sort of the facets' corners by vertex, each range of vertices on a
    /// thread of its own.
    fn new(ids: &[[u32; 3]], degenerate: &[bool], vertices: usize) -> Incidence {
        Incidence::in_ranges(ids, degenerate, vertices, vertex_ranges(vertices))
    }

    /// [`Incidence::new`] with the vertices split into `ranges` (consecutive, covering
    /// `0..vertices`).
    fn in_ranges(
        ids: &[[u32; 3]],
        degenerate: &[bool],
        vertices: usize,
        ranges: Vec<std::ops::Range<u32>>,
    ) -> Incidence {
        use rayon::prelude::*;
        let lengths = || ranges.iter().map(|r| r.len());
        let corners = || {
            ids.iter()
                .zip(degenerate)
                .enumerate()
                .filter(|(_, (_, d))| !**d)
                .map(|(f, (t, _))| (f as u32, t))
        };
        // Facets per vertex.
        let mut end = vec![0u32; vertices];
        split_lengths(&mut end, lengths())
            .into_par_iter()
            .zip(&ranges)
            .for_each(|(count, r)| {
                for (_, t) in corners() {
                    for &v in t {
                        if r.contains(&v) {
                            count[(v - r.start) as usize] += 1;
                        }
                    }
                }
            });
        // Where each vertex's facets start.
        let mut total = 0u32;
        for e in end.iter_mut() {
            let count = *e;
            *e = total;
            total += count;
        }
        let first = |r: &std::ops::Range<u32>| end.get(r.start as usize).map_or(total, |&s| s);
        let bounds: Vec<u32> = ranges.iter().map(first).chain([total]).collect();
        // Each range fills its own part of `facets`, moving its vertices' starts to ends.
        let mut facets = vec![0u32; total as usize];
        let parts = split_lengths(
            &mut facets,
            bounds.windows(2).map(|w| (w[1] - w[0]) as usize),
        );
        split_lengths(&mut end, lengths())
            .into_par_iter()
            .zip(parts)
            .zip(&ranges)
            .zip(&bounds)
            .for_each(|(((cursor, out), r), &base)| {
                for (f, t) in corners() {
                    for &v in t {
                        if r.contains(&v) {
                            let c = &mut cursor[(v - r.start) as usize];
                            out[(*c - base) as usize] = f;
                            *c += 1;
                        }
                    }
                }
            });
        Incidence {
            end,
            facets,
            ranges,
        }
    }

    /// Vertex `v`'s facets.
    fn around(&self, v: u32) -> &[u32] {
        let from = if v == 0 { 0 } else { self.end[v as usize - 1] };
        &self.facets[from as usize..self.end[v as usize] as usize]
    }

    /// Every edge, found from its lower vertex with the uses in facet order: the findings
    /// in order of (lower, higher) vertex, and the manifold neighbours.
    fn edges(&self, ids: &[[u32; 3]]) -> Edges {
        use rayon::prelude::*;
        let neighbours = Neighbours(
            (0..3 * ids.len())
                .into_par_iter()
                .map(|_| AtomicU32::new(NO_NEIGHBOUR))
                .collect(),
        );
        let found: Vec<EdgeFindings> = self
            .ranges
            .par_iter()
            .map(|r| {
                let mut out = EdgeFindings::default();
                let mut uses: Vec<EdgeUse> = Vec::new();
                for u in r.clone() {
                    uses.clear();
                    for &f in self.around(u) {
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
                        out.visit(group, &neighbours);
                    }
                }
                out
            })
            .collect();
        let findings = EdgeFindings::concat(found);
        Edges {
            findings,
            neighbours,
        }
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
struct EdgeFindings {
    open_edges: usize,
    non_manifold_edges: usize,
    inconsistent_edges: usize,
    /// Each finding with the edge's first facet, in order of edge.
    findings: Blocks<(Defect, u32)>,
    /// Facets on an open or non-manifold edge.
    bad: Blocks<u32>,
    /// Pairs of facets joined at a non-manifold edge.
    joins: Blocks<(u32, u32)>,
}

impl EdgeFindings {
    /// Takes in one edge: its uses in facet order.
    fn visit(&mut self, group: &[EdgeUse], neighbours: &Neighbours) {
        let first = group[0].facet;
        match group {
            [_] => {
                self.open_edges += 1;
                self.findings.push((Defect::OpenEdge, first));
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
        }
        all
    }
}

/// A list grown in blocks of a fixed size: it never copies or frees a block as it grows,
/// so a mesh with many findings leaves no trail of outgrown buffers behind.
struct Blocks<T>(Vec<Vec<T>>);

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
    fn into_vec(self) -> Vec<T> {
        let mut all = Vec::with_capacity(self.len());
        for block in self.0 {
            all.extend(block);
        }
        all
    }

    fn len(&self) -> usize {
        self.0.iter().map(Vec::len).sum()
    }

    fn is_empty(&self) -> bool {
        self.len() == 0
    }

    fn iter(&self) -> impl Iterator<Item = &T> {
        self.0.iter().flatten()
    }
}

struct Edges {
    findings: EdgeFindings,
    neighbours: Neighbours,
}

/// Each facet's neighbour across each of its edges (edge k runs from corner k to the
/// next): the other facet << 1 | 1 when both traverse the edge in the same direction as
/// stored, or [`NO_NEIGHBOUR`]. Every entry is written once, by the range of vertices
/// that holds the edge's lower vertex; atomics let the ranges share the array.
struct Neighbours(Vec<AtomicU32>);

impl Neighbours {
    fn set(&self, from: &EdgeUse, to: u32, same: bool) {
        let at = 3 * from.facet as usize + usize::from(from.slot);
        self.0[at].store((to << 1) | u32::from(same), Ordering::Relaxed);
    }

    fn of(&self, f: usize) -> [u32; 3] {
        [0, 1, 2].map(|k| self.0[3 * f + k].load(Ordering::Relaxed))
    }
}

/// Shells and winding in one flood fill over the manifold edges: the facets it reaches
/// from the lowest facet not yet reached are one piece (numbered in that order), and a
/// neighbour across an edge traversed in the same direction must be read reversed
/// relative to this facet. Returns each facet's piece ([`NO_SHELL`] if degenerate), whether
/// it is read reversed, and the pieces.
fn flood(
    degenerate: &[bool],
    adj: &Neighbours,
    bad_facet: &[bool],
) -> (Vec<u32>, Vec<bool>, Vec<ShellInfo>) {
    use rayon::prelude::*;
    let n = degenerate.len();
    let mut facet_shell = vec![NO_SHELL; n];
    // Per facet: not reached yet, reached as stored, or reached reversed (one byte a facet,
    // so the checks of the neighbours stay in cache).
    const UNSEEN: u8 = 0;
    const AS_STORED: u8 = 1;
    const REVERSED: u8 = 2;
    let mut reach = vec![UNSEEN; n];
    let mut shells: Vec<ShellInfo> = Vec::new();
    let mut queue: Vec<u32> = Vec::new();
    for f in 0..n {
        if degenerate[f] || reach[f] != UNSEEN {
            continue;
        }
        let piece = shells.len() as u32;
        let mut sh = ShellInfo {
            facets: 0,
            facet_span: (f, f),
            closed: true,
            orientable: true,
            volume: 0.0,
            inverted: false,
            flipped_facets: 0,
            depth: 0,
            children: 0,
        };
        facet_shell[f] = piece;
        reach[f] = AS_STORED;
        queue.clear();
        queue.push(f as u32);
        let mut head = 0;
        while head < queue.len() {
            let c = queue[head] as usize;
            head += 1;
            sh.facets += 1;
            sh.facet_span.1 = sh.facet_span.1.max(c);
            if bad_facet[c] {
                sh.closed = false;
            }
            let reversed = reach[c] == REVERSED;
            for a in adj.of(c) {
                if a == NO_NEIGHBOUR {
                    continue;
                }
                let (g, same) = ((a >> 1) as usize, a & 1 == 1);
                let want = if reversed ^ same { REVERSED } else { AS_STORED };
                if reach[g] == UNSEEN {
                    reach[g] = want;
                    facet_shell[g] = piece;
                    queue.push(g as u32);
                } else if reach[g] != want {
                    sh.orientable = false;
                    sh.closed = false;
                }
            }
        }
        shells.push(sh);
    }
    let flip = reach.par_iter().map(|&r| r == REVERSED).collect();
    (facet_shell, flip, shells)
}

/// Sums of `value(f)` over the facets `f` of each shell: within fixed blocks of facets on
/// all threads, runs of one shell summed in order, then the blocks' sums added in order,
/// so the result does not depend on the number of threads.
fn shell_sums<T>(facet_shell: &[u32], shells: usize, value: impl Fn(usize) -> T + Sync) -> Vec<T>
where
    T: Copy + Default + Send + std::ops::AddAssign,
{
    use rayon::prelude::*;
    const BLOCK: usize = 1 << 16;
    let runs: Vec<Vec<(u32, T)>> = facet_shell
        .par_chunks(BLOCK)
        .enumerate()
        .map(|(b, block)| {
            let mut runs: Vec<(u32, T)> = Vec::new();
            for (i, &s) in block.iter().enumerate().filter(|(_, s)| **s != NO_SHELL) {
                let v = value(b * BLOCK + i);
                match runs.last_mut() {
                    Some((last, sum)) if *last == s => *sum += v,
                    _ => runs.push((s, v)),
                }
            }
            runs
        })
        .collect();
    let mut sums = vec![T::default(); shells];
    for (s, v) in runs.into_iter().flatten() {
        sums[s as usize] += v;
    }
    sums
}

/// Pieces (numbered in order of first facet) joined at non-manifold edges become one
/// shell, numbered in order of first facet too; `facet_shell` is renumbered.
fn join_pieces(
    pieces: Vec<ShellInfo>,
    joins: &[(u32, u32)],
    facet_shell: &mut [u32],
) -> Vec<ShellInfo> {
    let mut uf = UnionFind::new(pieces.len());
    for &(a, b) in joins {
        uf.union(
            facet_shell[a as usize] as usize,
            facet_shell[b as usize] as usize,
        );
    }
    // The union keeps the lowest piece as the root, so roots come first in order.
    let mut number = vec![NO_SHELL; pieces.len()];
    let mut shells: Vec<ShellInfo> = Vec::new();
    for (p, piece) in pieces.into_iter().enumerate() {
        let r = uf.find(p);
        if r == p {
            number[p] = shells.len() as u32;
            shells.push(piece);
            continue;
        }
        number[p] = number[r];
        let sh = &mut shells[number[r] as usize];
        sh.facets += piece.facets;
        sh.facet_span = (
            sh.facet_span.0.min(piece.facet_span.0),
            sh.facet_span.1.max(piece.facet_span.1),
        );
        sh.closed &= piece.closed;
        sh.orientable &= piece.orientable;
    }
    for s in facet_shell.iter_mut().filter(|s| **s != NO_SHELL) {
        *s = number[*s as usize];
    }
    shells
}

/// Facets whose three welded vertices repeat an earlier facet's (any order or winding).
fn duplicate_facet_list(ids: &[[u32; 3]], degenerate: &[bool]) -> Vec<u32> {
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

/// Sets the nesting depth of every closed shell: how many other closed shells enclose it.
///
/// A shell A lies inside a closed shell B when B's box contains A's box and a point of A
/// has winding number ≈ 1 with respect to B (sum of signed solid angles / 4π).
fn nest(tris: &[Tri], facet_shell: &[u32], flip: &[bool], shells: &mut [ShellInfo]) {
    let closed: Vec<usize> = (0..shells.len()).filter(|&s| shells[s].closed).collect();
    if closed.len() < 2 {
        return;
    }
    // A probe point per shell: the centroid of its first facet.
    let mut probe = vec![None; shells.len()];
    for (f, &s) in facet_shell.iter().enumerate() {
        if s != NO_SHELL && probe[s as usize].is_none() {
            let t = &tris[f];
            probe[s as usize] = Some((t[0] + t[1] + t[2]) / 3.0);
        }
    }
    let mut bbox =
        vec![(Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY)); shells.len()];
    for (f, &s) in facet_shell.iter().enumerate() {
        if s != NO_SHELL {
            let b = &mut bbox[s as usize];
            for p in &tris[f] {
                b.0 = b.0.inf(p);
                b.1 = b.1.sup(p);
            }
        }
    }
    let inside_box = |a: usize, b: usize| {
        let (a, b) = (&bbox[a], &bbox[b]);
        (0..3).all(|k| a.0[k] >= b.0[k] && a.1[k] <= b.1[k])
    };
    let mut encloses: Vec<(usize, usize)> = Vec::new(); // (outer, inner)
    for &b in &closed {
        let candidates: Vec<usize> = closed
            .iter()
            .copied()
            .filter(|&a| a != b && inside_box(a, b))
            .collect();
        if candidates.is_empty() {
            continue;
        }
        let mut wind = vec![0.0; candidates.len()];
        for (f, &s) in facet_shell.iter().enumerate() {
            if s as usize != b {
                continue;
            }
            let t = &tris[f];
            for (w, &a) in wind.iter_mut().zip(&candidates) {
                if let Some(p) = probe[a] {
                    let omega = solid_angle(t, p);
                    *w += if flip[f] { -omega } else { omega };
                }
            }
        }
        for (w, &a) in wind.iter().zip(&candidates) {
            if (w / (4.0 * std::f64::consts::PI)) > 0.5 {
                encloses.push((b, a));
            }
        }
    }
    for &(_, inner) in &encloses {
        shells[inner].depth += 1;
    }
    // Direct children: inner shells one level deeper than the outer one.
    for &(outer, inner) in &encloses {
        if shells[inner].depth == shells[outer].depth + 1 {
            shells[outer].children += 1;
        }
    }
}

/// Signed solid angle of triangle `t` seen from `p` (Van Oosterom and Strackee, 1983).
fn solid_angle(t: &Tri, p: Vec3) -> f64 {
    let (a, b, c) = (t[0] - p, t[1] - p, t[2] - p);
    let (la, lb, lc) = (a.norm(), b.norm(), c.norm());
    let num = a.dot(&b.cross(&c));
    let den = la * lb * lc + a.dot(&b) * lc + a.dot(&c) * lb + b.dot(&c) * la;
    2.0 * num.atan2(den)
}

struct UnionFind {
    parent: Vec<u32>,
}

impl UnionFind {
    fn new(n: usize) -> Self {
        UnionFind {
            parent: (0..n as u32).collect(),
        }
    }
    fn find(&mut self, mut x: usize) -> usize {
        while self.parent[x] as usize != x {
            let p = self.parent[x] as usize;
            self.parent[x] = self.parent[p];
            x = p;
        }
        x
    }
    fn union(&mut self, a: usize, b: usize) {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra != rb {
            let (lo, hi) = (ra.min(rb), ra.max(rb));
            self.parent[hi] = lo as u32;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tris(t: Vec<shapes::Triangle>) -> Vec<Tri> {
        t.into_iter()
            .map(|f| f.map(|p| Vec3::new(p[0], p[1], p[2])))
            .collect()
    }

    fn unit_box() -> Vec<Tri> {
        tris(shapes::box_solid([0.0, 0.0, 0.0], [2.0, 3.0, 4.0], 2))
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
        let t = Topology::build(&[a, a]);
        assert_eq!(
            (
                t.duplicate_facets,
                t.inconsistent_edges,
                t.non_manifold_edges
            ),
            (1, 3, 0)
        );
        assert_eq!(t.defects[0], (Defect::Duplicate, 1));
        let t = Topology::build(&[a, [a[0], a[2], a[1]]]);
        assert_eq!(
            (t.duplicate_facets, t.inconsistent_edges, t.open_edges),
            (1, 0, 0)
        );

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
            let (ids, vertices) = weld(&tris, tol, (lo, hi));
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
            proptest::prop_assert_eq!(weld_in_blocks(&tris, tol, (lo, hi), 3), (ids.clone(), vertices));

            let t = Topology::build(&tris);
            let (open, non_manifold, inconsistent) = naive_edge_counts(&point_ids);
            proptest::prop_assert_eq!(t.open_edges, open);
            proptest::prop_assert_eq!(t.non_manifold_edges, non_manifold);
            proptest::prop_assert_eq!(t.inconsistent_edges, inconsistent);
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
    fn edges_found_in_ranges_of_vertices_are_those_found_in_one() {
        // A torus with holes, a duplicate, a fin (non-manifold) and reversed facets.
        let mut t = tris(shapes::torus([0.0; 3], 3.0, 1.0, 48, 24));
        t.retain(|f| f[0].x > -2.5 || f[0].y > 0.0);
        for f in (0..t.len()).step_by(97) {
            t[f].swap(1, 2);
        }
        t.push(t[10]);
        t.push([t[20][0], t[20][1], Vec3::new(9.0, 9.0, 9.0)]);
        let (lo, hi) = bounding_box(t.iter().flatten());
        let (ids, vertices) = weld(&t, WELD_TOLERANCE_REL * (hi - lo).norm(), (lo, hi));
        let degenerate = vec![false; ids.len()];
        let whole = std::iter::once(0..vertices as u32).collect();
        let one = Incidence::in_ranges(&ids, &degenerate, vertices, whole);
        let (ref_edges, ref_neighbours) = {
            let e = one.edges(&ids);
            let n: Vec<[u32; 3]> = (0..ids.len()).map(|f| e.neighbours.of(f)).collect();
            (e.findings, n)
        };
        assert!(ref_edges.open_edges > 0 && ref_edges.non_manifold_edges > 0);
        assert!(ref_edges.inconsistent_edges > 0);
        for parts in [2u32, 3, 7] {
            let v = vertices as u32;
            let ranges = (0..parts)
                .map(|i| i * v / parts..(i + 1) * v / parts)
                .collect();
            let split = Incidence::in_ranges(&ids, &degenerate, vertices, ranges);
            assert_eq!((&split.end, &split.facets), (&one.end, &one.facets));
            let e = split.edges(&ids);
            let n: Vec<[u32; 3]> = (0..ids.len()).map(|f| e.neighbours.of(f)).collect();
            assert_eq!(n, ref_neighbours, "{parts} ranges");
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

    /// The weld by definition, in quadratic time: corners within `tol` of each other are
    /// joined, clusters numbered by their first corner.
    fn plain_weld(tris: &[Tri], tol: f64) -> (Vec<[u32; 3]>, usize) {
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
    fn the_weld_finds_the_clusters_of_the_definition() {
        // Vertices on cell faces (the torus is centred on the origin, a cell corner), the
        // same torus with every vertex moved a little, and in both some corners nudged by
        // less than the tolerance and a facet repeated, so exact repeats, near misses and
        // neighbour cells are all exercised.
        let plain = tris(shapes::torus([0.0; 3], 3.0, 1.0, 24, 12));
        let noisy = tris(shapes::perturb(
            &shapes::torus([0.0; 3], 3.0, 1.0, 24, 12),
            1e-3,
            7,
        ));
        for mesh in [plain, noisy] {
            let mut mesh: Vec<Tri> = mesh
                .iter()
                .enumerate()
                .map(|(i, t)| {
                    let e = if i % 5 == 0 { 1e-8 } else { 0.0 };
                    t.map(|p| p + Vec3::new(e, -e, e))
                })
                .collect();
            mesh.push(mesh[0]);
            let bbox = bounding_box(mesh.iter().flat_map(|t| t.iter()));
            let tol = WELD_TOLERANCE_REL * (bbox.1 - bbox.0).norm();
            let (ids, n) = weld(&mesh, tol, bbox);
            assert_eq!((ids.clone(), n), plain_weld(&mesh, tol));
            // In blocks of a few facets: points repeated across blocks are joined again.
            for block in [1, 7, 100] {
                assert_eq!(weld_in_blocks(&mesh, tol, bbox, block), (ids.clone(), n));
            }
            assert_eq!(n, 24 * 12, "every torus vertex once");
        }
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
}
