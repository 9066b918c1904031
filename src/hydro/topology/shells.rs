//! Shells and winding: one flood fill over the manifold edges that numbers the connected
//! pieces and reads every facet as stored or reversed so that each piece is consistently
//! wound; pieces joined at non-manifold edges become one shell; sums per shell that do
//! not depend on the number of threads.
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
) -> (Vec<u32>, Vec<bool>, Vec<ShellInfo>, Vec<u32>) {
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
            let around = adj.of(c);
            if duplicates {
                let g = around[0] >> 1;
                if (g as usize) < c && around.iter().all(|&x| x != NO_NEIGHBOUR && x >> 1 == g) {
                    repeats.push(c as u32);
                }
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
