//! The weld: every corner of the soup gets a vertex id, corners within the tolerance of a
//! cluster's first corner sharing one, numbered in order of first appearance.
//!
//! Topology only: no coordinate is moved, and nothing here looks at edges, facets or
//! shells beyond the corners they are made of.

use super::{Tris, UnionFind, Vec3};

/// Cells per axis of the weld grid fit in this many bits of a packed key.
const CELL_BITS: u32 = 20;

/// Slots of the weld's cache of exact corner positions (a power of two).
const EXACT_SLOTS: usize = 1 << 14;

/// Gives every corner a vertex id: a corner within `tol` of a cluster's first corner
/// joins that cluster (the same clusters as joining every pair within `tol` whenever
/// clusters are far apart compared with `tol`, as in any mesh not degenerate at that
/// scale); ids are numbered in order of each cluster's first corner. Returns the ids per
/// facet, the number of vertices and the facets' volume sums ([`Welded`]).
///
/// In a triangle soup every vertex is stored once per facet that uses it, bit for bit the
/// same, usually a few facets apart. So, first, a small direct-mapped cache of exact
/// positions sends each repeat to the corner it repeats; the corners it misses (the
/// candidates, about one per vertex, plus the few repeats it forgot) go on. Second, each
/// candidate's grid cell, 256 × `tol` wide, is marked in a small table: a candidate
/// alone in its cell and more than 2 × `tol` from its faces (most of them: cells are far
/// smaller than facets) is a vertex by itself. The others are sorted by cell and
/// clustered cell by cell: the first candidate of a cluster is its representative, later
/// ones within `tol` of it join it, and representatives within `tol` of a cell face are
/// joined with those of the neighbour cells within `tol` (union-find).
/// The sort, not a hash map, keeps every step in cache-friendly order; the result does
/// not depend on the number of threads.
pub(super) fn weld<T: Tris + ?Sized>(tris: &T, tol: f64, bbox: (Vec3, Vec3)) -> Welded {
    weld_with(tris, tol, bbox, weld_block(tris.count()), None)
}

/// Facets per block of the weld's first step for a mesh of `facets`: [`WELD_BLOCK`], or
/// for a smaller mesh a quarter of it (whole volume blocks), so that its blocks still
/// share the threads. The weld's result does not depend on the blocks.
fn weld_block(facets: usize) -> usize {
    (facets / 4)
        .next_multiple_of(VOLUME_BLOCK)
        .clamp(VOLUME_BLOCK, WELD_BLOCK)
}

/// What [`weld`] gives: every facet's vertex ids, whether two of them are one (the facet
/// is degenerate), the number of vertices, and the sums of [`six_volume`] over every
/// [`VOLUME_BLOCK`] facets (the weld reads every facet, so the shells' volumes need no
/// pass of their own).
pub(super) struct Welded {
    pub(super) ids: Vec<[u32; 3]>,
    pub(super) degenerate: Vec<bool>,
    pub(super) vertices: usize,
    pub(super) volume_sums: Vec<f64>,
}

/// Facets per sum of [`Welded::volume_sums`] (a constant, so the sums do not depend on the
/// number of threads).
pub(super) const VOLUME_BLOCK: usize = 1 << 12;

/// Six times the signed volume of the tetrahedron of facet `t` and the box centre `c`.
#[inline]
pub(super) fn six_volume(t: &[Vec3; 3], c: &Vec3) -> f64 {
    let (a, b, d) = (t[0] - c, t[1] - c, t[2] - c);
    a.dot(&b.cross(&d))
}

/// Facets per block of the weld's first step at most (the blocks depend on the mesh alone,
/// never on the number of threads).
const WELD_BLOCK: usize = 1 << 18;

/// [`weld`], its first step in blocks of `block` facets, with a cell table of
/// 2^`table_bits` marks (tests give small ones, so that many cells share a mark); `None`
/// sizes it by the number of candidates.
pub(super) fn weld_with<T: Tris + ?Sized>(
    tris: &T,
    tol: f64,
    (origin, top): (Vec3, Vec3),
    block: usize,
    table_bits: Option<u32>,
) -> Welded {
    use rayon::prelude::*;

    // Every candidate's cell (found in step 1, used in step 2). With tol = 1e-7 × the diagonal every axis spans at most
    // 4e4 cells (< 2^20, so the packed keys of real cells never collide).
    let cell = if tol > 0.0 { 256.0 * tol } else { 1.0 };
    // Positions are relative to the box's lowest corner, so never negative, and the cast
    // (which truncates) is the floor without a call to `floor`.
    // A point in cells (each coordinate scaled by the cells per unit length), and its cell.
    let per_cell = 1.0 / cell;
    let in_cells = |q: &Vec3| -> [f64; 3] { [q.x * per_cell, q.y * per_cell, q.z * per_cell] };
    let key = |s: &[f64; 3]| -> [i64; 3] { [s[0] as i64, s[1] as i64, s[2] as i64] };
    // Whether a point `s` (in cells) lies within `d` of a face of its cell `k` along
    // axis `ax`: -1 (the lower face), 1 (the upper one) or 0.
    let near_face_within = |s: &[f64; 3], k: &[i64; 3], ax: usize, d: f64| -> i64 {
        let inside = s[ax] - k[ax] as f64; // position inside the cell, [0, 1)
        if inside * cell < d {
            -1
        } else if (1.0 - inside) * cell <= d {
            1
        } else {
            0
        }
    };
    let near_face = |s: &[f64; 3], k: &[i64; 3], ax: usize| near_face_within(s, k, ax, tol);
    // A point's packed cell, with [`NEAR_FACE`] and [`NEAR_TWICE`] set as it lies that
    // close to a face of the cell.
    let cell_of = |q: &Vec3| -> u64 {
        let s = in_cells(q);
        let k = key(&s);
        let near = (0..3).any(|ax| near_face(&s, &k, ax) != 0);
        let twice = near || (0..3).any(|ax| near_face_within(&s, &k, ax, 2.0 * tol) != 0);
        pack(k) | if near { NEAR_FACE } else { 0 } | if twice { NEAR_TWICE } else { 0 }
    };

    // 1. Exact repeats, block by block on both threads, each block with its own cache; the
    // candidates of a block follow those of the blocks before it, so they stay in order
    // of first appearance (a point repeated across blocks is one candidate per block, and
    // step 3 joins them). `ids` holds candidate indices until step 4.
    let block = block.max(1);
    let mut ids: Vec<[u32; 3]> = vec![[0; 3]; tris.count()];
    // Each candidate's corner (3 × facet + corner), relative to `origin` its position.
    let corner = |c: u32| tris.corner(c as usize / 3, c as usize % 3) - origin;
    let centre = (origin + top) / 2.0;
    // Each block's candidates (their corners) and their cells go to the block's own
    // stretch of two lists with room for every corner: untouched room costs no memory, and
    // one list each, freed whole, goes back to the system (see the end).
    let mut corner_list: Vec<u32> = vec![0; 3 * ids.len()];
    let mut cell_list: Vec<u64> = vec![0; 3 * ids.len()];
    // Per block: its number of candidates, and its sums of six volumes per volume block
    // it meets.
    let found: Vec<(usize, Vec<(usize, f64)>)> = ids
        .par_chunks_mut(block)
        .zip(corner_list.par_chunks_mut(3 * block))
        .zip(cell_list.par_chunks_mut(3 * block))
        .enumerate()
        .map(|(b, ((ids, candidates), cells))| {
            let mut exact: Vec<([u64; 3], u32)> = vec![([u64::MAX; 3], u32::MAX); EXACT_SLOTS];
            let mut len = 0usize;
            let mut volumes: Vec<(usize, f64)> = Vec::new();
            // In pieces that end where a volume block ends.
            let mut f = 0;
            while f < ids.len() {
                let g = b * block + f;
                let end = (f + VOLUME_BLOCK - g % VOLUME_BLOCK).min(ids.len());
                let mut sum = 0.0;
                for (f, c) in (f..end).zip(&mut ids[f..end]) {
                    let t = tris.tri(b * block + f);
                    sum += six_volume(&t, &centre);
                    for k in 0..3 {
                        let p = &t[k];
                        let bits = [p.x.to_bits(), p.y.to_bits(), p.z.to_bits()];
                        let slot = exact_slot(&bits);
                        c[k] = if exact[slot].0 == bits {
                            exact[slot].1
                        } else {
                            let i = len as u32;
                            candidates[len] = (3 * (b * block + f) + k) as u32;
                            cells[len] = cell_of(&(p - origin));
                            len += 1;
                            exact[slot] = (bits, i);
                            i
                        };
                    }
                }
                volumes.push((g / VOLUME_BLOCK, sum));
                f = end;
            }
            (len, volumes)
        })
        .collect();
    // A volume block met by two blocks of this step (only with blocks that are not a
    // multiple of it, as in tests) is summed in order.
    let mut volume_sums = vec![0.0; ids.len().div_ceil(VOLUME_BLOCK)];
    for (_, volumes) in &found {
        for &(v, sum) in volumes {
            volume_sums[v] += sum;
        }
    }
    // Each block's candidates and their cells.
    let blocks: Vec<&[u32]> = corner_list
        .chunks(3 * block)
        .zip(&found)
        .map(|(c, (len, _))| &c[..*len])
        .collect();
    let cells: Vec<&[u64]> = cell_list
        .chunks(3 * block)
        .zip(&found)
        .map(|(c, (len, _))| &c[..*len])
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
    let table_bits = table_bits.unwrap_or_else(|| self::table_bits(count));

    // 2. The candidates that need the sort.
    // A table of cells, each marked once it holds a candidate and again once it holds
    // two (by a hash of the cell, so two cells may share a mark: that only sends more
    // candidates to the sort). A candidate alone in its cell and farther than 2 × `tol`
    // from every face of it is a cluster by itself: no point of another cell is within
    // `tol` of it, and no later step needs it. Most candidates are such.
    let mut table = CellTable::new(table_bits);
    for &c in cells.iter().copied().flatten() {
        table.mark(c & CELL_MASK);
    }
    // The others, (cell, candidate, corner with [`NEAR_CORNER`] set as above), sorted by
    // cell; the candidate breaks ties, so the order is unique.
    let sorted = |k: u64| k & NEAR_TWICE != 0 || table.shared(k & CELL_MASK);
    let mut order: Vec<(u64, u32, u32)> = Vec::with_capacity(
        cells
            .iter()
            .copied()
            .flatten()
            .filter(|&&k| sorted(k))
            .count(),
    );
    let mut j = 0usize;
    for (b, cells) in blocks.iter().zip(&cells) {
        for (&c, &k) in b.iter().zip(cells.iter()) {
            if sorted(k) {
                let near = if k & NEAR_FACE != 0 { NEAR_CORNER } else { 0 };
                order.push((k & CELL_MASK, j as u32, c | near));
            }
            j += 1;
        }
    }
    order.par_sort_unstable();
    // The position of the candidate at `a` in `order`.
    let at = |a: usize| corner(order[a].2 & !NEAR_CORNER);

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
                if c & NEAR_CORNER == 0 {
                    continue; // nothing in another cell is within `tol`
                }
                let q = at(a as usize);
                // Neighbour cells worth visiting along each axis.
                let s = in_cells(&q);
                let k = key(&s);
                let mut offs = [[0i64; 2]; 3];
                let mut counts = [1usize; 3];
                for ax in 0..3 {
                    let side = near_face(&s, &k, ax);
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
                            if !table.holds(other) {
                                continue; // an empty cell
                            }
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
    let (vertex, vertices) = uf.into_numbers();
    // Freed last, though unused since step 2: glibc's allocator raises its threshold for
    // mapping a block of its own to the size of the largest mapped block freed, so freeing
    // these early sent the union-find and the lists after it to the heap, where freed
    // memory stays resident (the peak under the edges was 1.5 MB higher for a 1.3 M mesh).
    drop((corner_list, cell_list));
    // Each facet's vertices, and whether two of them are one.
    let mut degenerate = vec![false; ids.len()];
    ids.par_iter_mut().zip(&mut degenerate).for_each(|(t, d)| {
        let [a, b, c] = t.map(|i| vertex[i as usize]);
        *t = [a, b, c];
        *d = a == b || b == c || a == c;
    });
    Welded {
        ids,
        degenerate,
        vertices,
        volume_sums,
    }
}

/// Marks a corner index in the weld's sort: the point lies within the tolerance of a
/// face of its cell. Corner indices stay below 3 × [`crate::limits::FACETS_CEILING`] < 2^30.
const NEAR_CORNER: u32 = 1 << 31;

/// Marks a packed cell: the point lies within the tolerance of a face of its cell.
const NEAR_FACE: u64 = 1 << 63;

/// Marks a packed cell: the point lies within twice the tolerance of a face of its cell.
const NEAR_TWICE: u64 = 1 << 62;

/// The bits of a packed cell that name the cell.
const CELL_MASK: u64 = (1 << (3 * CELL_BITS)) - 1;

/// Which cells hold a candidate, and which hold two or more, by a hash of the cell into
/// two bit sets: a cell reported empty holds none, a cell reported alone holds one.
struct CellTable {
    once: Vec<u64>,
    twice: Vec<u64>,
    shift: u32,
}

impl CellTable {
    /// A table of 2^`bits` marks (at least 64).
    fn new(bits: u32) -> CellTable {
        let bits = bits.max(6);
        CellTable {
            once: super::written_zeros(1 << (bits - 6)),
            twice: super::written_zeros(1 << (bits - 6)),
            shift: 64 - bits,
        }
    }

    fn place(&self, cell: u64) -> (usize, u64) {
        const K: u64 = 0x9E37_79B9_7F4A_7C15;
        let h = (cell.wrapping_mul(K) >> self.shift) as usize;
        (h / 64, 1 << (h % 64))
    }

    fn mark(&mut self, cell: u64) {
        let (w, bit) = self.place(cell);
        if self.once[w] & bit != 0 {
            self.twice[w] |= bit;
        }
        self.once[w] |= bit;
    }

    /// Whether the cell may hold a candidate.
    fn holds(&self, cell: u64) -> bool {
        let (w, bit) = self.place(cell);
        self.once[w] & bit != 0
    }

    /// Whether the cell may hold two candidates or more.
    fn shared(&self, cell: u64) -> bool {
        let (w, bit) = self.place(cell);
        self.twice[w] & bit != 0
    }
}

/// Marks of the weld's cell table for `count` candidates: four to eight a candidate, so
/// that few lone candidates share a mark (one in five to one in eight), in two bit sets
/// of at most a bit a facet each.
fn table_bits(count: usize) -> u32 {
    (usize::BITS - (4 * count.max(1)).leading_zeros()).clamp(10, 28)
}

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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::topology::tests::{plain_weld, tris};
    use crate::hydro::topology::{WELD_TOLERANCE_REL, bounding_box};

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
            let mut mesh: Vec<crate::hydro::Tri> = mesh
                .iter()
                .enumerate()
                .map(|(i, t)| {
                    let e = if i % 5 == 0 { 1e-8 } else { 0.0 };
                    t.map(|p| p + Vec3::new(e, -e, e))
                })
                .collect();
            mesh.push(mesh[0]);
            // A facet two of whose corners are within the tolerance: degenerate.
            let t = mesh[1];
            mesh.push([t[0], t[0] + Vec3::new(1e-9, 0.0, 0.0), t[2]]);
            let bbox = bounding_box(mesh.iter().flat_map(|t| t.iter()));
            let tol = WELD_TOLERANCE_REL * (bbox.1 - bbox.0).norm();
            let Welded {
                ids,
                vertices: n,
                degenerate,
                ..
            } = weld(&mesh, tol, bbox);
            assert_eq!((ids.clone(), n), plain_weld(&mesh, tol));
            let repeats = |t: &[u32; 3]| t[0] == t[1] || t[1] == t[2] || t[0] == t[2];
            assert_eq!(degenerate, ids.iter().map(repeats).collect::<Vec<_>>());
            assert_eq!(degenerate.iter().filter(|&&d| d).count(), 1);
            // In blocks of a few facets: points repeated across blocks are joined again.
            for block in [1, 7, 100] {
                let w = weld_with(&mesh, tol, bbox, block, None);
                assert_eq!((w.ids, w.vertices), (ids.clone(), n));
            }
            // A cell table of a few marks: most cells share one, so most candidates go
            // through the sort, and empty neighbour cells are visited.
            for bits in [0, 4, 9] {
                let w = weld_with(&mesh, tol, bbox, WELD_BLOCK, Some(bits));
                assert_eq!((w.ids, w.vertices), (ids.clone(), n));
            }
            assert_eq!(n, 24 * 12, "every torus vertex once");
        }
    }
}
