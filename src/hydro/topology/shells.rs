//! Shells and winding: the connected pieces over the manifold edges, numbered, and every
//! facet read as stored or reversed so that each piece is consistently wound (by disjoint
//! sets on all threads, or by a flood fill where a piece cannot be wound consistently);
//! pieces joined at non-manifold edges become one shell; sums per shell that do not
//! depend on the number of threads.
//!
//! Turning closed shells outward (by the sign of their volume) is done by the caller from
//! these sums; nesting is `nest.rs`'s.

use std::ops::Range;

use super::edges::{NO_NEIGHBOUR, Neighbours};
use super::weld::VOLUME_BLOCK;
use super::{NO_SHELL, ShellInfo, UnionFind};

/// Shells and winding in one flood fill over the manifold edges: the facets it reaches
/// from the lowest facet not yet reached are one piece (numbered in that order), and a
/// neighbour across an edge traversed in the same direction must be read reversed
/// relative to this facet. Returns each facet's piece ([`NO_SHELL`] if degenerate), whether
/// it is read reversed, and the pieces; with `duplicates` (for a mesh whose every edge is
/// manifold), also the facets that repeat an earlier facet's vertices, in facet order:
/// those whose three neighbours are one earlier facet (two facets with the same three
/// vertices share all three edges, and each is then the other's only neighbour).
pub(super) fn flood(
    degenerate: &[bool],
    adj: &Neighbours,
    bad_facet: &[bool],
    duplicates: bool,
) -> Flooded {
    let parts = if degenerate.len() < 1 << 14 {
        1
    } else {
        rayon::current_num_threads().max(1)
    };
    flood_by_sets(degenerate, adj, bad_facet, duplicates, parts)
        .unwrap_or_else(|| flood_by_waves(degenerate, adj, bad_facet, duplicates))
}

/// What [`flood`] gives: each facet's piece ([`NO_SHELL`] if degenerate), whether it is
/// read reversed, the pieces, and the facets that repeat an earlier one.
pub(super) type Flooded = (Vec<u32>, Vec<bool>, Vec<ShellInfo>, Vec<u32>);

/// A piece whose lowest facet is `f`, before any facet is counted.
fn piece_from(f: usize) -> ShellInfo {
    ShellInfo {
        facets: 0,
        facet_span: (f, f),
        closed: true,
        orientable: true,
        volume: 0.0,
        inverted: false,
        flipped_facets: 0,
        depth: 0,
        children: 0,
    }
}

/// Whether facet `c`, with neighbours `around`, repeats an earlier facet's vertices: its
/// three neighbours are one earlier facet (in a mesh whose every edge is manifold).
fn repeats_earlier(c: usize, around: &[u32; 3]) -> bool {
    let g = around[0] >> 1;
    (g as usize) < c && around.iter().all(|&x| x != NO_NEIGHBOUR && x >> 1 == g)
}

/// A facet's link in [`flood_by_sets`]: its parent (a lower facet, or itself for a root)
/// << 1 | whether it is read reversed relative to the parent (facet indices stay below
/// 2^28, `limits::FACETS_CEILING`).
type Link = u32;

/// Facet `x`'s root and whether `x` is read reversed relative to it, halving the path on
/// the way (facet `base + i` at `link[i]`: every link on the way lies in it).
fn find(link: &mut [Link], base: usize, mut x: usize) -> (usize, bool) {
    let mut reversed = 0;
    loop {
        let l = link[x - base];
        let p = (l >> 1) as usize;
        if p == x {
            return (x, reversed == 1);
        }
        let lp = link[p - base];
        // x to its grandparent (the root, if p is one: then lp is p << 1).
        let to = l & 1 ^ lp & 1;
        link[x - base] = lp & !1 | to;
        reversed ^= to;
        x = (lp >> 1) as usize;
    }
}

/// [`find`] without shortening any path (for reading the links from several threads).
fn walk(link: &[Link], mut x: usize) -> (usize, bool) {
    let mut reversed = 0;
    loop {
        let l = link[x];
        let p = (l >> 1) as usize;
        if p == x {
            return (x, reversed == 1);
        }
        reversed ^= l & 1;
        x = p;
    }
}

/// Joins a facet `f` to a lower facet `g` across their edge, whose facets are read the
/// same way unless `same` is 1 (both traverse it the same way as stored), the higher root
/// linked under the lower; `at` is `f`'s root and reading relative to it, kept up to
/// date. `false` when they are one set already and the edge asks for the other reading.
fn join(link: &mut [Link], base: usize, at: &mut (usize, u32), g: usize, same: u32) -> bool {
    let (rf, of) = *at;
    let (rg, og) = find(link, base, g);
    let odd = of ^ u32::from(og) ^ same;
    if rf == rg {
        return odd == 0;
    }
    if rf > rg {
        link[rf - base] = (rg as u32) << 1 | odd;
        *at = (rg, of ^ odd);
    } else {
        link[rg - base] = (rf as u32) << 1 | odd;
    }
    true
}

/// [`flood`] without a fill, in `parts` ranges of facets on the threads: each facet is
/// joined to its lower neighbours into disjoint sets whose root is the set's lowest facet,
/// each facet keeping whether it is read reversed relative to its parent. These are the
/// fill's pieces and winding: a piece is a connected set numbered by its lowest facet,
/// and where a piece can be wound consistently, every facet's reading relative to the
/// lowest one is fixed by any path between them. `None` when some piece cannot be (a
/// cycle of edges asks for a facet both ways): there the fill's reading depends on the
/// order in which it reaches the facets, and only [`flood_by_waves`] gives it.
///
/// Each range joins the edges within it on its own thread (reading its neighbours in
/// order, where the fill jumps about the mesh); the edges to earlier ranges are joined
/// after, in order; then each facet's root is read, range by range on the threads, and
/// the roots are numbered in order. The result does not depend on the ranges.
fn flood_by_sets(
    degenerate: &[bool],
    adj: &Neighbours,
    bad_facet: &[bool],
    duplicates: bool,
    parts: usize,
) -> Option<Flooded> {
    use rayon::prelude::*;
    let n = degenerate.len();
    let step = n.div_ceil(parts.max(1)).max(1);
    let mut link: Vec<Link> = (0..n as u32).into_par_iter().map(|f| f << 1).collect();
    // 1. Within each range; the edges to earlier ranges (facet, neighbour entry) kept.
    let crossing: Vec<Option<Vec<(u32, u32)>>> = link
        .par_chunks_mut(step)
        .enumerate()
        .map(|(i, link)| {
            let base = i * step;
            let mut crossing = Vec::new();
            for f in (base..base + link.len()).filter(|&f| !degenerate[f]) {
                // f is a root until joined here.
                let mut at = (f, 0);
                for a in adj.of(f) {
                    let g = (a >> 1) as usize;
                    if a == NO_NEIGHBOUR || g > f {
                        continue; // none, or joined from the other side
                    }
                    if g < base {
                        crossing.push((f as u32, a));
                    } else if !join(link, base, &mut at, g, a & 1) {
                        return None;
                    }
                }
            }
            Some(crossing)
        })
        .collect();
    // 2. Across the ranges, in order.
    for (f, a) in crossing
        .into_iter()
        .collect::<Option<Vec<_>>>()?
        .into_iter()
        .flatten()
    {
        let (rf, of) = find(&mut link, 0, f as usize);
        if !join(
            &mut link,
            0,
            &mut (rf, u32::from(of)),
            (a >> 1) as usize,
            a & 1,
        ) {
            return None;
        }
    }
    // 3. Every facet's root (as a facet for now) and reading, from its parent's when that
    // is in the range (lower, so found already), else by following the links.
    let mut facet_shell = vec![NO_SHELL; n];
    let mut flip = vec![false; n];
    facet_shell
        .par_chunks_mut(step)
        .zip(flip.par_chunks_mut(step))
        .enumerate()
        .for_each(|(i, (shell, flip))| {
            let base = i * step;
            for k in (0..shell.len()).filter(|&k| !degenerate[base + k]) {
                let l = link[base + k];
                let p = (l >> 1) as usize;
                let (root, reversed) = if p >= base && p < base + k {
                    (shell[p - base] as usize, flip[p - base])
                } else {
                    walk(&link, p)
                };
                (shell[k], flip[k]) = (root as u32, reversed ^ (l & 1 == 1));
            }
        });
    // 4. The roots numbered in order, each number kept in its root's link.
    let mut shells: Vec<ShellInfo> = Vec::new();
    for (f, &s) in facet_shell.iter().enumerate() {
        if s as usize == f {
            link[f] = shells.len() as u32;
            shells.push(piece_from(f));
        }
    }
    // 5. Each facet's piece, and per range the pieces' facets (runs of one piece counted
    // at once) and repeats.
    let counted: Vec<(Vec<Run>, Vec<u32>)> = facet_shell
        .par_chunks_mut(step)
        .enumerate()
        .map(|(i, shell)| {
            let base = i * step;
            let mut runs: Vec<Run> = Vec::new();
            let mut repeats = Vec::new();
            for (k, s) in shell.iter_mut().enumerate() {
                if *s == NO_SHELL {
                    continue;
                }
                let f = base + k;
                *s = link[*s as usize];
                match runs.last_mut() {
                    Some((piece, count, last, bad)) if *piece == *s => {
                        *count += 1;
                        *last = f;
                        *bad |= bad_facet[f];
                    }
                    _ => runs.push((*s, 1, f, bad_facet[f])),
                }
                if duplicates && repeats_earlier(f, &adj.of(f)) {
                    repeats.push(f as u32);
                }
            }
            (runs, repeats)
        })
        .collect();
    let mut repeats = Vec::new();
    for (runs, r) in counted {
        for (piece, count, last, bad) in runs {
            let sh = &mut shells[piece as usize];
            sh.facets += count;
            sh.facet_span.1 = sh.facet_span.1.max(last);
            sh.closed &= !bad;
        }
        repeats.extend(r);
    }
    Some((facet_shell, flip, shells, repeats))
}

/// A run of consecutive facets of one piece in [`flood_by_sets`]: the piece, its number
/// of facets, its last facet, and whether one touches an open or non-manifold edge.
type Run = (u32, usize, usize, bool);

/// [`flood`] by a fill, breadth first from the lowest facet not yet reached.
fn flood_by_waves(
    degenerate: &[bool],
    adj: &Neighbours,
    bad_facet: &[bool],
    duplicates: bool,
) -> Flooded {
    use rayon::prelude::*;
    let n = degenerate.len();
    let mut facet_shell = vec![NO_SHELL; n];
    // Per facet: not reached yet, reached as stored, or reached reversed (one byte a facet,
    // so the checks of the neighbours stay in cache).
    const UNSEEN: u8 = 0;
    const AS_STORED: u8 = 1;
    const REVERSED: u8 = 2;
    let mut reach: Vec<u8> = super::written_zeros(n); // UNSEEN
    let mut shells: Vec<ShellInfo> = Vec::new();
    let mut queue: Vec<u32> = Vec::new();
    let mut repeats: Vec<u32> = Vec::new();
    for f in 0..n {
        if degenerate[f] || reach[f] != UNSEEN {
            continue;
        }
        let piece = shells.len() as u32;
        let mut sh = piece_from(f);
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
            let around = adj.of(c);
            if duplicates && repeats_earlier(c, &around) {
                repeats.push(c as u32);
            }
            for a in around {
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
    repeats.sort_unstable();
    (facet_shell, flip, shells, repeats)
}

/// Sums of `value(f)` over the facets `f` of each shell: within fixed blocks of
/// [`VOLUME_BLOCK`] facets on all threads, runs of one shell summed in order, then the
/// blocks' sums added in order, so the result does not depend on the number of threads.
/// For a block wholly in one shell, `whole(b, facets)` may give its sum at once.
fn shell_sums<T>(
    facet_shell: &[u32],
    shells: usize,
    whole: impl Fn(usize, Range<usize>) -> Option<T> + Sync,
    value: impl Fn(usize) -> T + Sync,
) -> Vec<T>
where
    T: Copy + Default + Send + std::ops::AddAssign,
{
    use rayon::prelude::*;
    let runs: Vec<Vec<(u32, T)>> = facet_shell
        .par_chunks(VOLUME_BLOCK)
        .enumerate()
        .map(|(b, block)| {
            let (first, s) = (b * VOLUME_BLOCK, block[0]);
            if s != NO_SHELL
                && block.iter().all(|&t| t == s)
                && let Some(sum) = whole(b, first..first + block.len())
            {
                return vec![(s, sum)];
            }
            let mut runs: Vec<(u32, T)> = Vec::new();
            for (i, &s) in block.iter().enumerate().filter(|(_, s)| **s != NO_SHELL) {
                let v = value(first + i);
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

/// Six times the signed volume of each shell, reading each facet reversed where `flip`
/// says: Σ ±`six(f)`, from `block_sums`, the sums of `six(f)` over every
/// [`VOLUME_BLOCK`] facets. A block wholly in one shell and read one way is taken whole;
/// any other block is summed facet by facet ([`shell_sums`]).
pub(super) fn shell_volumes(
    facet_shell: &[u32],
    flip: &[bool],
    shells: usize,
    block_sums: &[f64],
    six: impl Fn(usize) -> f64 + Sync,
) -> Vec<f64> {
    let whole = |b: usize, facets: Range<usize>| {
        let flip = &flip[facets];
        let f = flip[0];
        flip.iter()
            .all(|&g| g == f)
            .then(|| if f { -block_sums[b] } else { block_sums[b] })
    };
    shell_sums(facet_shell, shells, whole, |f| {
        if flip[f] { -six(f) } else { six(f) }
    })
}

/// The facets of each shell read reversed (`flip`); a block wholly in one shell counted
/// at once.
pub(super) fn shell_flipped(facet_shell: &[u32], flip: &[bool], shells: usize) -> Vec<usize> {
    let count = |facets: Range<usize>| flip[facets].iter().filter(|&&f| f).count();
    shell_sums(
        facet_shell,
        shells,
        |_, facets| Some(count(facets)),
        |f| usize::from(flip[f]),
    )
}

/// Pieces (numbered in order of first facet) joined at non-manifold edges become one
/// shell, numbered in order of first facet too; `facet_shell` is renumbered.
pub(super) fn join_pieces(
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::topology::edges::find_edges;

    /// A small generator (SplitMix64), so the meshes are the same on every run.
    struct Draw(u64);

    impl Draw {
        fn next(&mut self, below: usize) -> usize {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) % below as u64) as usize
        }
    }

    /// The facets of a torus grid of `w` × `h` vertices, two a quad, wound alike.
    fn grid_torus(w: u32, h: u32) -> Vec<[u32; 3]> {
        let at = |i: u32, j: u32| (i % w) + w * (j % h);
        let mut ids = Vec::new();
        for j in 0..h {
            for i in 0..w {
                ids.push([at(i, j), at(i + 1, j), at(i + 1, j + 1)]);
                ids.push([at(i, j), at(i + 1, j + 1), at(i, j + 1)]);
            }
        }
        ids
    }

    /// A strip of `n` quads closed with a half twist (vertices 0..2n).
    fn mobius(n: u32) -> Vec<[u32; 3]> {
        (0..n)
            .flat_map(|i| {
                let (a, b) = (i, i + n);
                let (c, e) = if i + 1 < n {
                    (i + 1, i + 1 + n)
                } else {
                    (n, 0)
                };
                [[a, c, e], [a, e, b]]
            })
            .collect()
    }

    /// The fill and the sets over the welded facets `ids`: the same pieces, readings and
    /// repeats for every split into ranges; `None` when the sets gave way to the fill.
    fn compare(ids: &[[u32; 3]], vertices: usize) -> Option<usize> {
        let degenerate: Vec<bool> = ids
            .iter()
            .map(|t| t[0] == t[1] || t[1] == t[2] || t[0] == t[2])
            .collect();
        let edges = find_edges(ids, &degenerate, vertices);
        let mut bad_facet = vec![false; ids.len()];
        for &f in edges.findings.bad.iter() {
            bad_facet[f as usize] = true;
        }
        let manifold = edges.findings.non_manifold_edges == 0;
        let adj = &edges.neighbours;
        let waves = flood_by_waves(&degenerate, adj, &bad_facet, manifold);
        assert_eq!(flood(&degenerate, adj, &bad_facet, manifold), waves);
        let mut given = None;
        for parts in [1, 2, 3, 7] {
            let sets = flood_by_sets(&degenerate, adj, &bad_facet, manifold, parts);
            match (&given, &sets) {
                (None, _) => given = Some(sets.is_some()),
                (Some(g), s) => assert_eq!(*g, s.is_some(), "{parts} ranges"),
            }
            if let Some(sets) = sets {
                assert_eq!(sets, waves, "{parts} ranges");
            }
        }
        given.expect("compared").then_some(waves.2.len())
    }

    #[test]
    fn the_sets_give_the_pieces_and_readings_of_the_fill() {
        // Two tori (12 × 5 and 9 × 4 vertices), the second wound the other way, one facet
        // of the first turned, and the facets in a shuffled order, so ranges meet often
        // and the links run long; then the same with a hole, a repeated facet and a
        // degenerate one.
        let mut d = Draw(7);
        let first = grid_torus(12, 5);
        let second: Vec<[u32; 3]> = grid_torus(9, 4)
            .into_iter()
            .map(|t| [t[0] + 60, t[2] + 60, t[1] + 60])
            .collect();
        let mut ids: Vec<[u32; 3]> = first.iter().chain(&second).copied().collect();
        ids[17].swap(0, 1);
        for i in (1..ids.len()).rev() {
            ids.swap(i, d.next(i + 1));
        }
        assert_eq!(compare(&ids, 96), Some(2), "two shells");
        ids.remove(30);
        ids.push(ids[3]);
        ids.push([5, 5, 6]);
        assert!(compare(&ids, 96).is_some());
        // A strip of quads closed with a half twist: no consistent winding, so the
        // fill decides, and the sets give way to it.
        assert_eq!(compare(&mobius(10), 20), None);
        // Random cases: soups of facets on a few vertices (pieces joined and split every
        // way, non-manifold edges, repeats), tori and twisted strips beside a torus, each
        // with facets turned and removed at random and the facets shuffled.
        let (mut both, mut fill_only) = (0, 0);
        for _ in 0..300 {
            let (mut ids, vertices) = match d.next(3) {
                0 => {
                    let vertices = 4 + d.next(12);
                    let facets = 1 + d.next(40);
                    let ids: Vec<[u32; 3]> = (0..facets)
                        .map(|_| [0; 3].map(|_| d.next(vertices) as u32))
                        .collect();
                    (ids, vertices)
                }
                kind => {
                    let (w, h) = (3 + d.next(6) as u32, 3 + d.next(4) as u32);
                    let mut ids = grid_torus(w, h);
                    if kind == 2 {
                        let n = 3 + d.next(8) as u32;
                        let base = w * h;
                        ids.extend(mobius(n).into_iter().map(|t| t.map(|v| v + base)));
                    }
                    let vertices = ids.iter().flatten().max().map_or(0, |&v| v as usize + 1);
                    (ids, vertices)
                }
            };
            for _ in 0..d.next(4) {
                let f = d.next(ids.len());
                ids[f].swap(1, 2);
            }
            if d.next(3) == 0 && ids.len() > 1 {
                ids.remove(d.next(ids.len()));
            }
            for i in (1..ids.len()).rev() {
                ids.swap(i, d.next(i + 1));
            }
            match compare(&ids, vertices) {
                Some(_) => both += 1,
                None => fill_only += 1,
            }
        }
        assert!(
            both > 100 && fill_only > 50,
            "{both} by sets, {fill_only} by the fill"
        );
    }

    #[test]
    fn shell_volumes_and_flips_from_blocks_agree_with_facet_by_facet_sums() {
        // Blocks wholly in one shell read one way (taken whole, either way), blocks that
        // mix shells, ways and degenerate facets (summed facet by facet), and a short
        // last block; against the plain sum of ±six(f) per shell.
        let n = 7 * VOLUME_BLOCK + 123;
        let six = |f: usize| ((f * 7919) % 1000) as f64 / 7.0 - 60.0;
        let mut facet_shell = vec![0u32; n];
        let mut flip = vec![false; n];
        for f in 0..n {
            let b = f / VOLUME_BLOCK;
            facet_shell[f] = match b {
                0 | 1 => 0,
                2 => 1,
                3 => (f % 3) as u32,
                _ => 2,
            };
            flip[f] = match b {
                1 | 2 => true,
                4 => f % 5 == 0,
                _ => false,
            };
        }
        facet_shell[5 * VOLUME_BLOCK + 9] = NO_SHELL;
        let block_sums: Vec<f64> = (0..n.div_ceil(VOLUME_BLOCK))
            .map(|b| {
                (b * VOLUME_BLOCK..((b + 1) * VOLUME_BLOCK).min(n))
                    .map(six)
                    .sum()
            })
            .collect();
        let got = shell_volumes(&facet_shell, &flip, 3, &block_sums, six);
        let mut want = [0.0f64; 3];
        let mut scale = [0.0f64; 3];
        for f in 0..n {
            if facet_shell[f] != NO_SHELL {
                let s = facet_shell[f] as usize;
                want[s] += if flip[f] { -six(f) } else { six(f) };
                scale[s] += six(f).abs();
            }
        }
        for s in 0..3 {
            assert!(
                (got[s] - want[s]).abs() <= 1e-13 * scale[s],
                "shell {s}: {} against {}",
                got[s],
                want[s]
            );
        }
        // The flipped facets per shell, from the same blocks, against a plain count.
        let mut flipped = vec![0usize; 3];
        for f in (0..n).filter(|&f| facet_shell[f] != NO_SHELL && flip[f]) {
            flipped[facet_shell[f] as usize] += 1;
        }
        assert_eq!(shell_flipped(&facet_shell, &flip, 3), flipped);
        // A degenerate facet's volume is left out, not taken with its block's sum.
        let mut whole = facet_shell.clone();
        whole[5 * VOLUME_BLOCK + 9] = 2;
        let with = shell_volumes(&whole, &flip, 3, &block_sums, six);
        assert!((with[2] - got[2] - six(5 * VOLUME_BLOCK + 9)).abs() <= 1e-13 * scale[2]);
    }
}
