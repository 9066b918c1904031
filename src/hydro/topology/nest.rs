//! Nesting: how many closed shells enclose each closed shell, and how many each encloses
//! directly, by the winding number of a probe point.
//!
//! It expects the shells wound consistently and outward already, and changes neither
//! winding nor membership.

use super::{NO_SHELL, ShellInfo, Tri, Tris, Vec3};

/// Sets the nesting depth of every closed shell: how many other closed shells enclose it.
///
/// A shell A lies inside a closed shell B when B's box contains A's box and a point of A
/// has winding number ≈ 1 with respect to B (sum of signed solid angles / 4π).
pub(super) fn nest<T: Tris + ?Sized>(
    tris: &T,
    facet_shell: &[u32],
    flip: &[bool],
    shells: &mut [ShellInfo],
) {
    let closed: Vec<usize> = (0..shells.len()).filter(|&s| shells[s].closed).collect();
    if closed.len() < 2 {
        return;
    }
    // A probe point per shell: the centroid of its first facet.
    let mut probe = vec![None; shells.len()];
    for (f, &s) in facet_shell.iter().enumerate() {
        if s != NO_SHELL && probe[s as usize].is_none() {
            let t = tris.tri(f);
            probe[s as usize] = Some((t[0] + t[1] + t[2]) / 3.0);
        }
    }
    let mut bbox =
        vec![(Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY)); shells.len()];
    for (f, &s) in facet_shell.iter().enumerate() {
        if s != NO_SHELL {
            let b = &mut bbox[s as usize];
            for p in &tris.tri(f) {
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
            let t = &tris.tri(f);
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
