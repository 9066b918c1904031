//! Level sweeps: the loads of many levels of one liquid for about the cost of one
//! integration, with the same results as integrating every level on its own.
//!
//! Owns the bucketing of facets by elevation and the closed forms that make most facets
//! independent of the level; knows nothing of files, part names or output units. Works in
//! the internal frame about the local origin, like [`crate::hydro::integrate`].
//!
//! # Why most facets need no clipping
//!
//! Below the free surface the pressure is `p(z; L) = p_s + W(L) − W(z)`, where
//! `W(z) = g ∫₀^z ρ(ζ) dζ` is the weight of the column, a fixed piecewise-linear function
//! of elevation (the layers' interfaces are absolute elevations; a lower level only
//! removes the layers above it). So the pressure separates into a part that depends on
//! the level only, `c(L) = p_s + W(L)`, and a part that depends on the point only. For a
//! facet lying wholly below the surface, with `s = ±1` its wet side and `a` its area
//! vector:
//!
//! * force `F = −s ∫ p dA⃗ = c(L) · (−s a) + s ∫ W dA⃗`,
//! * moment about the origin `M = c(L) · (−s (R/3) × a) + s ∫ W r × dA⃗` (`R = Σ rᵢ`),
//! * its contribution to the submerged volume below `L`, by the formulas of
//!   [`crate::hydro::integrate`] expanded in `L`: `V = Σ s_v a_z Z/3 − L Σ s_v a_z`,
//!   `∫x dV = Σ s_v a_z (Σ xᵢzᵢ + X Z)/12 − L Σ s_v a_z X/3` (same for `y`),
//!   `∫z dV = Σ s_v a_z (Σ zᵢ² + Z²)/24 − L²/2 · Σ s_v a_z`,
//!
//! all affine (or quadratic) in the level with coefficients that are sums over facets. A
//! facet wholly above the surface carries the gas pressure `p_s` alone. Only the facets
//! that the free surface of a given level cuts need the clipping of a single calculation.
//!
//! # The algorithm
//!
//! With the levels sorted, each facet `[z_min, z_max]` is *deep* from the first level
//! whose safe depth `b_k` reaches `z_max`, *high* up to the last level below `z_min`, and
//! *cut* in between (usually one or two levels). One parallel pass puts each facet's
//! coefficients into the bucket of the level where it becomes deep (and where it stops
//! being high) and records it in the cut lists of the levels in between; running sums over
//! the buckets then give every level's deep and high totals, and only the cut facets are
//! integrated level by level, with exactly the code a single calculation uses. The cost is
//! one pass over the mesh plus the cut facets, instead of one pass per level. The lists of
//! cut facets are built for a batch of levels at a time, so memory stays bounded even when
//! tall facets cross thousands of levels.
//!
//! `b_k` is the level itself when `p_s ≥ 0`. With a negative gas pressure, facets just
//! below the surface can carry a negative mean pressure, which would change which of
//! uplift or downthrust their vertical force counts in; `b_k` is then the elevation where
//! the pressure is zero, so every deep facet has a non-negative pressure.
//!
//! Results agree with [`crate::hydro::integrate`] at each level up to round-off (the sums
//! are taken in a different order), and are the same bits on any number of threads.

use std::ops::Range;

use rayon::prelude::*;

use super::clip::slab_pieces;
use super::integrate::{CHUNK, PartAccum, facet_loads, part_planes};
use super::{Liquid, LiquidError, Profile, Tally, Tri, Tris, Vec3, Wetting};

/// What the sweep needs to know about one part.
#[derive(Clone, Debug)]
pub struct SweepPart {
    /// The part's facets, a range into the triangle array.
    pub facets: Range<usize>,
    /// The swept liquid wets the part (the facets' [`Wetting`] says on which side).
    pub wet: bool,
    /// The part's volume is measured below the swept liquid's level.
    pub volume: bool,
}

/// The liquid whose level is swept.
#[derive(Clone, Copy, Debug)]
pub struct SweptLiquid<'a> {
    /// The liquid as the case gives it, in absolute elevations (m); its `level_m` is
    /// replaced by each level of the sweep.
    pub liquid: &'a Liquid,
    /// m/s².
    pub g_m_s2: f64,
    /// Elevation of the local origin (m), subtracted from every elevation, as
    /// [`Profile::shifted`] does.
    pub origin_z: f64,
}

/// Budget for the per-chunk buckets, bytes: bounds memory for long sweeps by using fewer,
/// longer chunks (a function of the sizes only, never of the thread count).
const BUCKET_BUDGET: usize = 64 << 20;

/// Most (level, facet) pairs listed at once for the cut facets (8 bytes each); a sweep
/// with more is integrated in batches of levels.
const CUT_BUDGET: usize = 8 << 20;

/// The loads of `parts` at every level of `levels_m` (absolute elevations, m), one
/// accumulator per level in the order given: the sum over the parts, as merging the
/// accumulators of [`crate::hydro::integrate`] with each part's `profile` set to the swept
/// liquid at that level when `wet`, and its `volume_level` to that level when `volume`.
///
/// `tris`, `wetting` and `vol_sign` are as for [`crate::hydro::integrate`]. Fails like
/// [`Profile::new`] when the liquid at some level is not valid.
pub fn sweep<T: Tris + ?Sized>(
    tris: &T,
    parts: &[SweepPart],
    wetting: &[Wetting],
    vol_sign: &[i8],
    swept: &SweptLiquid<'_>,
    levels_m: &[f64],
) -> Result<Vec<PartAccum>, LiquidError> {
    sweep_with(
        tris,
        parts,
        wetting,
        vol_sign,
        swept,
        levels_m,
        &Tally::quiet(),
    )
}

/// [`sweep`], counting the levels done on `tally` (its total is the number of levels; the
/// count rises as levels are finished, in any order, and never changes a sum).
pub fn sweep_with<T: Tris + ?Sized>(
    tris: &T,
    parts: &[SweepPart],
    wetting: &[Wetting],
    vol_sign: &[i8],
    swept: &SweptLiquid<'_>,
    levels_m: &[f64],
    tally: &Tally<'_>,
) -> Result<Vec<PartAccum>, LiquidError> {
    sweep_in_batches(
        tris, parts, wetting, vol_sign, swept, levels_m, CUT_BUDGET, tally,
    )
}

/// [`sweep_with`] listing at most `cut_budget` (level, facet) pairs at once (but always at
/// least one level).
#[allow(clippy::too_many_arguments)] // those of `sweep_with`, and the budget tests lower
fn sweep_in_batches<T: Tris + ?Sized>(
    tris: &T,
    parts: &[SweepPart],
    wetting: &[Wetting],
    vol_sign: &[i8],
    swept: &SweptLiquid<'_>,
    levels_m: &[f64],
    cut_budget: usize,
    tally: &Tally<'_>,
) -> Result<Vec<PartAccum>, LiquidError> {
    tally.begin(levels_m.len() as u64);
    // Every level's profile, exactly as a single calculation builds it.
    let mut order: Vec<usize> = (0..levels_m.len()).collect();
    order.sort_by(|&a, &b| levels_m[a].total_cmp(&levels_m[b]));
    let mut profiles = Vec::with_capacity(order.len());
    for &i in &order {
        let mut liquid = swept.liquid.clone();
        liquid.level_m = levels_m[i];
        profiles.push(Profile::new(&liquid, swept.g_m_s2)?.shifted(swept.origin_z));
    }
    let n = profiles.len();
    if n == 0 {
        return Ok(Vec::new());
    }
    let column = Column::new(swept.liquid, swept.g_m_s2, swept.origin_z);
    let p_s = swept.liquid.surface_pressure_pa;
    let levels: Vec<f64> = profiles.iter().map(Profile::level).collect();
    let mut safe = Vec::with_capacity(n);
    for (k, &l) in levels.iter().enumerate() {
        let b = if p_s >= 0.0 {
            l
        } else {
            column.depth_of(column.w(l) + p_s).min(l)
        };
        // Kept non-decreasing so that "deep from this level on" is one bucket.
        let b = if k > 0 { b.max(safe[k - 1]) } else { b };
        safe.push(b);
    }

    let total: usize = parts.iter().map(|p| p.facets.len()).sum();
    let per_chunk = (n + 1) * (std::mem::size_of::<Deep>() + std::mem::size_of::<High>());
    let chunk = CHUNK.max((total * per_chunk).div_ceil(BUCKET_BUDGET));

    // One pass: each chunk's buckets and cut lists, in part and chunk order.
    let mut outs: Vec<ChunkOut> = Vec::new();
    for (pi, part) in parts.iter().enumerate() {
        if !part.wet && !part.volume {
            continue;
        }
        let (start, end) = (part.facets.start, part.facets.end);
        let chunk_outs: Vec<ChunkOut> = (0..part.facets.len().div_ceil(chunk))
            .into_par_iter()
            .map(|c| {
                let mut out = ChunkOut::new(n);
                for f in start + c * chunk..(start + (c + 1) * chunk).min(end) {
                    let side = match wetting[f] {
                        Wetting::Front if part.wet => 1.0,
                        Wetting::Back if part.wet => -1.0,
                        _ => 0.0,
                    };
                    let vsign = if part.volume {
                        f64::from(vol_sign[f])
                    } else {
                        0.0
                    };
                    if side == 0.0 && vsign == 0.0 {
                        continue;
                    }
                    let t = &tris.tri(f);
                    let (lo, hi) = z_range(t);
                    // Deep from level kd on, high below level kh, cut in between.
                    let kd = safe.partition_point(|&b| b < hi);
                    let kh = levels.partition_point(|&l| l < lo);
                    if kd < n {
                        out.deep[kd].add(&deep_terms(t, &column, side, vsign));
                    }
                    if kh > 0 && side != 0.0 {
                        out.high[kh].add(&high_terms(t, side));
                    }
                    if kh < kd {
                        out.cut.push(Cut {
                            facet: f as u32,
                            part: pi as u32,
                            from: kh as u32,
                            to: kd as u32,
                        });
                    }
                }
                out
            })
            .collect();
        outs.extend(chunk_outs);
    }

    // Running sums over the buckets: deep totals upward, high totals downward.
    let mut deep = vec![Deep::default(); n];
    let mut high = vec![High::default(); n + 1];
    for o in &outs {
        for k in 0..n {
            deep[k].add(&o.deep[k]);
            high[k].add(&o.high[k]);
        }
        high[n].add(&o.high[n]);
    }
    for k in 1..n {
        let prev = deep[k - 1];
        deep[k].add(&prev);
    }
    // high[k] so far holds the facets high below level k; level k sees those of k+1..=n.
    let mut above = High::default();
    let mut high_at = vec![High::default(); n];
    for k in (0..n).rev() {
        above.add(&high[k + 1]);
        high_at[k] = above;
    }

    // The cut facets of each level, built for a batch of levels at a time so that tall
    // facets crossing thousands of levels cannot exhaust memory.
    let cuts: Vec<&Cut> = outs.iter().flat_map(|o| &o.cut).collect();
    // How many facets each level cuts: +1 where a facet's range starts, −1 past its end.
    let mut starts = vec![0usize; n + 1];
    let mut ends = vec![0usize; n + 1];
    for c in &cuts {
        starts[c.from as usize] += 1;
        ends[c.to as usize] += 1;
    }
    let mut per_level = vec![0usize; n];
    let mut running = 0usize;
    for k in 0..n {
        running = running + starts[k] - ends[k];
        per_level[k] = running;
    }
    let mut sorted: Vec<PartAccum> = Vec::with_capacity(n);
    let mut k0 = 0;
    while k0 < n {
        let mut k1 = k0 + 1;
        let mut pairs = per_level[k0];
        while k1 < n && pairs + per_level[k1] <= cut_budget {
            pairs += per_level[k1];
            k1 += 1;
        }
        let mut lists: Vec<Vec<(u32, u32)>> = vec![Vec::new(); k1 - k0];
        for c in &cuts {
            let (from, to) = (c.from as usize, c.to as usize);
            for k in from.max(k0)..to.min(k1) {
                lists[k - k0].push((c.facet, c.part));
            }
        }
        let batch: Vec<PartAccum> = (k0..k1)
            .into_par_iter()
            .map(|k| {
                let prof = &profiles[k];
                let l = levels[k];
                let mut acc = combine(&deep[k], &high_at[k], column.w(l) + p_s, p_s, l, &column);
                let planes = [
                    part_planes(Some(prof), Some(l)),
                    part_planes(Some(prof), None),
                    part_planes(None, Some(l)),
                ];
                for &(f, p) in &lists[k - k0] {
                    let (f, part) = (f as usize, &parts[p as usize]);
                    let planes = match (part.wet, part.volume) {
                        (true, true) => &planes[0],
                        (true, false) => &planes[1],
                        _ => &planes[2],
                    };
                    let loads = facet_loads(
                        &tris.tri(f),
                        planes,
                        part.wet.then_some(prof),
                        wetting[f],
                        part.volume.then_some(l),
                        vol_sign[f],
                    );
                    acc.add_facet(&loads);
                }
                // One report a level (not a facet): the lock is nothing next to the level.
                tally.add(1);
                acc
            })
            .collect();
        sorted.extend(batch);
        k0 = k1;
    }
    let mut out = vec![PartAccum::default(); n];
    for (k, &i) in order.iter().enumerate() {
        out[i] = sorted[k];
    }
    Ok(out)
}

fn z_range(t: &Tri) -> (f64, f64) {
    let lo = t[0].z.min(t[1].z).min(t[2].z);
    let hi = t[0].z.max(t[1].z).max(t[2].z);
    (lo, hi)
}

/// One chunk's share: buckets indexed by level (plus one past the last) and its facets
/// that the surface cuts at some level.
struct ChunkOut {
    deep: Vec<Deep>,
    high: Vec<High>,
    cut: Vec<Cut>,
}

/// A facet the free surface cuts at the levels `from..to` (sorted indices).
struct Cut {
    facet: u32,
    part: u32,
    from: u32,
    to: u32,
}

impl ChunkOut {
    fn new(n: usize) -> ChunkOut {
        ChunkOut {
            deep: vec![Deep::default(); n],
            high: vec![High::default(); n + 1],
            cut: Vec::new(),
        }
    }
}

/// Sums over facets wholly below the surface: the coefficients of the closed forms in the
/// module doc. `a…` multiply `c(L)`, `b…` do not; `up`/`down` split by the sign of the
/// facet's `−s a_z`, which fixes whether its vertical force is uplift or downthrust.
#[derive(Clone, Copy, Debug, Default)]
struct Deep {
    a: Vec3,
    b: Vec3,
    am: Vec3,
    bm: Vec3,
    az_up: f64,
    bz_up: f64,
    az_down: f64,
    bz_down: f64,
    /// Σ |a| of wet facets (wetted area; `c · area − w_area` is Σ |facet force|).
    area: f64,
    /// Σ ∫ W dA of wet facets.
    w_area: f64,
    /// Lowest vertex of a wet facet (+∞ when none), for the largest pressure.
    z_low: Option<f64>,
    wet: usize,
    v1: f64,
    vz: f64,
    mx0: f64,
    my0: f64,
    mx1: f64,
    my1: f64,
    mz0: f64,
}

impl Deep {
    fn add(&mut self, o: &Deep) {
        self.a += o.a;
        self.b += o.b;
        self.am += o.am;
        self.bm += o.bm;
        self.az_up += o.az_up;
        self.bz_up += o.bz_up;
        self.az_down += o.az_down;
        self.bz_down += o.bz_down;
        self.area += o.area;
        self.w_area += o.w_area;
        self.z_low = match (self.z_low, o.z_low) {
            (Some(x), Some(y)) => Some(x.min(y)),
            (x, y) => x.or(y),
        };
        self.wet += o.wet;
        self.v1 += o.v1;
        self.vz += o.vz;
        self.mx0 += o.mx0;
        self.my0 += o.my0;
        self.mx1 += o.mx1;
        self.my1 += o.my1;
        self.mz0 += o.mz0;
    }
}

/// Sums over wet facets wholly above the surface, which carry the gas pressure only.
#[derive(Clone, Copy, Debug, Default)]
struct High {
    a: Vec3,
    am: Vec3,
    az_up: f64,
    az_down: f64,
    area: f64,
    wet: usize,
}

impl High {
    fn add(&mut self, o: &High) {
        self.a += o.a;
        self.am += o.am;
        self.az_up += o.az_up;
        self.az_down += o.az_down;
        self.area += o.area;
        self.wet += o.wet;
    }
}

/// The column weight `W(z) = g ∫₀^z ρ dζ` (local frame), piecewise linear.
struct Column {
    /// The interfaces (every layer's `down_to` but the last's), local, descending.
    interfaces: Vec<f64>,
    /// Per layer, top to bottom: ρg, and a point `(z, W(z))` of its line.
    lines: Vec<(f64, f64, f64)>,
}

impl Column {
    /// The column of a valid liquid (checked by [`Profile::new`] before).
    fn new(liquid: &Liquid, g: f64, origin_z: f64) -> Column {
        let last = liquid.layers.len() - 1;
        let interfaces: Vec<f64> = liquid.layers[..last]
            .iter()
            .map(|l| l.down_to_m.unwrap_or(f64::NEG_INFINITY) - origin_z)
            .collect();
        let rho_g: Vec<f64> = liquid.layers.iter().map(|l| l.density_kg_m3 * g).collect();
        // Anchor W(0) = 0 in the layer holding the local origin, then walk out from it.
        let home = interfaces.iter().filter(|&&z| z > 0.0).count();
        let mut lines = vec![(0.0, 0.0, 0.0); rho_g.len()];
        lines[home] = (rho_g[home], 0.0, 0.0);
        for i in (0..home).rev() {
            let z = interfaces[i];
            let (r, z0, w0) = lines[i + 1];
            lines[i] = (rho_g[i], z, w0 + r * (z - z0));
        }
        for i in home + 1..rho_g.len() {
            let z = interfaces[i - 1];
            let (r, z0, w0) = lines[i - 1];
            lines[i] = (rho_g[i], z, w0 + r * (z - z0));
        }
        Column { interfaces, lines }
    }

    /// The layer holding `z` (an interface belongs to the layer above it).
    fn layer(&self, z: f64) -> usize {
        self.interfaces.iter().filter(|&&i| i > z).count()
    }

    fn w_in(&self, layer: usize, z: f64) -> f64 {
        let (r, z0, w0) = self.lines[layer];
        w0 + r * (z - z0)
    }

    fn w(&self, z: f64) -> f64 {
        self.w_in(self.layer(z), z)
    }

    /// The elevation where `W` equals `w` (W is increasing).
    fn depth_of(&self, w: f64) -> f64 {
        let layer = self.interfaces.iter().filter(|&&i| self.w(i) > w).count();
        let (r, z0, w0) = self.lines[layer];
        z0 + (w - w0) / r
    }
}

/// The level-free coefficients of one facet (see [`Deep`]); `side` is its wet side (0
/// when the swept liquid does not wet it), `vsign` its volume sign (0 when not counted).
fn deep_terms(t: &Tri, column: &Column, side: f64, vsign: f64) -> Deep {
    let mut d = Deep::default();
    let a = 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0]));
    if side != 0.0 {
        let r = t[0] + t[1] + t[2];
        d.a = -side * a;
        d.am = -side * (r / 3.0).cross(&a);
        let mut b = Vec3::zeros();
        let mut bm = Vec3::zeros();
        let mut w_area = 0.0;
        let mut fan = |v: &[Vec3], layer: usize| {
            for i in 1..v.len() - 1 {
                let (r0, r1, r2) = (v[0], v[i], v[i + 1]);
                let ai = 0.5 * (r1 - r0).cross(&(r2 - r0));
                let (w0, w1, w2) = (
                    column.w_in(layer, r0.z),
                    column.w_in(layer, r1.z),
                    column.w_in(layer, r2.z),
                );
                let sw = w0 + w1 + w2;
                b += (sw / 3.0) * ai;
                let first = w0 * r0 + w1 * r1 + w2 * r2 + sw * (r0 + r1 + r2);
                bm += first.cross(&ai) / 12.0;
                w_area += sw / 3.0 * ai.norm();
            }
        };
        if column.interfaces.is_empty() {
            fan(t, 0);
        } else {
            // W has a kink at each interface: integrate it layer by layer.
            slab_pieces(t, &column.interfaces, |piece, slab| {
                fan(piece.vertices(), slab)
            });
        }
        d.b = side * b;
        d.bm = side * bm;
        if d.a.z > 0.0 {
            d.az_up = d.a.z;
            d.bz_up = d.b.z;
        } else {
            d.az_down = d.a.z;
            d.bz_down = d.b.z;
        }
        d.area = a.norm();
        d.w_area = w_area;
        d.z_low = Some(z_range(t).0);
        d.wet = 1;
    }
    if vsign != 0.0 {
        let s = vsign * a.z;
        let (x, y, z) = (
            t[0].x + t[1].x + t[2].x,
            t[0].y + t[1].y + t[2].y,
            t[0].z + t[1].z + t[2].z,
        );
        let xz = t[0].x * t[0].z + t[1].x * t[1].z + t[2].x * t[2].z;
        let yz = t[0].y * t[0].z + t[1].y * t[1].z + t[2].y * t[2].z;
        let zz = t[0].z * t[0].z + t[1].z * t[1].z + t[2].z * t[2].z;
        d.v1 = s;
        d.vz = s * z / 3.0;
        d.mx0 = s * (xz + x * z) / 12.0;
        d.my0 = s * (yz + y * z) / 12.0;
        d.mx1 = s * x / 3.0;
        d.my1 = s * y / 3.0;
        d.mz0 = s * (zz + z * z) / 24.0;
    }
    d
}

/// The coefficients of one wet facet above the surface, under the gas pressure alone.
fn high_terms(t: &Tri, side: f64) -> High {
    let a = 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0]));
    let r = t[0] + t[1] + t[2];
    let az = -side * a.z;
    High {
        a: -side * a,
        am: -side * (r / 3.0).cross(&a),
        az_up: if az > 0.0 { az } else { 0.0 },
        az_down: if az > 0.0 { 0.0 } else { az },
        area: a.norm(),
        wet: 1,
    }
}

/// The accumulator of the deep and high facets at one level: `c = p_s + W(L)` multiplies
/// the deep coefficients, `p_s` the high ones, `l` is the level (local).
fn combine(d: &Deep, h: &High, c: f64, p_s: f64, l: f64, column: &Column) -> PartAccum {
    // Gas pressure on a facet above the surface pushes it one way or the other by its sign.
    let (high_up, high_down) = if p_s >= 0.0 {
        (p_s * h.az_up, -p_s * h.az_down)
    } else {
        (p_s * h.az_down, -p_s * h.az_up)
    };
    let mut max_pressure = f64::NEG_INFINITY;
    if let Some(z) = d.z_low {
        max_pressure = c - column.w(z);
    }
    if h.wet > 0 {
        max_pressure = max_pressure.max(p_s);
    }
    PartAccum {
        force: c * d.a + d.b + p_s * h.a,
        moment: c * d.am + d.bm + p_s * h.am,
        wetted_area: d.area,
        uplift: (c * d.az_up + d.bz_up) + high_up,
        downthrust: -(c * d.az_down + d.bz_down) + high_down,
        abs_force: (c * d.area - d.w_area) + p_s.abs() * h.area,
        max_pressure,
        volume: d.vz - l * d.v1,
        volume_moment: Vec3::new(
            d.mx0 - l * d.mx1,
            d.my0 - l * d.my1,
            d.mz0 - 0.5 * l * l * d.v1,
        ),
        loaded_facets: d.wet + if p_s != 0.0 { h.wet } else { 0 },
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::{Layer, PartInput, integrate};

    const G: f64 = 9.80665;

    fn tris_of(t: &[shapes::Triangle]) -> Vec<Tri> {
        t.iter()
            .map(|f| f.map(|p| Vec3::new(p[0], p[1], p[2])))
            .collect()
    }

    /// Checks `sweep` against `integrate` at each level, every field, to round-off
    /// relative to the sweep's own scales (the largest Σ|facet force|, the extent, the
    /// total area and the bounding volume).
    fn check(
        tris: &[Tri],
        parts: &[SweepPart],
        wetting: &[Wetting],
        vol_sign: &[i8],
        liquid: &Liquid,
        origin_z: f64,
        levels: &[f64],
    ) {
        let swept = SweptLiquid {
            liquid,
            g_m_s2: G,
            origin_z,
        };
        let got = sweep(tris, parts, wetting, vol_sign, &swept, levels).expect("valid");
        let (lo, hi) = crate::hydro::bounding_box(tris.iter().flat_map(|t| t.iter()));
        let extent = (hi - lo).norm();
        let area: f64 = tris
            .iter()
            .map(|t| 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0])).norm())
            .sum();
        let bulk = (hi - lo).x.max(1e-3) * (hi - lo).y.max(1e-3) * (hi - lo).z.max(1e-3);
        let mut want = Vec::new();
        for &level in levels {
            let mut l = liquid.clone();
            l.level_m = level;
            let prof = Profile::new(&l, G).expect("valid").shifted(origin_z);
            let inputs: Vec<PartInput<'_>> = parts
                .iter()
                .map(|p| PartInput {
                    facets: p.facets.clone(),
                    profile: p.wet.then_some(&prof),
                    volume_level: p.volume.then_some(prof.level()),
                })
                .collect();
            let accs = integrate(tris, &inputs, wetting, vol_sign);
            want.push(accs.iter().fold(PartAccum::default(), |a, b| a.merge(b)));
        }
        let f_scale = want.iter().map(|w| w.abs_force).fold(1e-300, f64::max);
        let p_scale = want
            .iter()
            .map(|w| w.max_pressure.abs())
            .filter(|p| p.is_finite())
            .fold(1e-300, f64::max);
        let tol = 1e-12;
        for (k, (g, w)) in got.iter().zip(&want).enumerate() {
            let at = format!("level {} (step {k})", levels[k]);
            let close = |what: &str, a: f64, b: f64, scale: f64| {
                assert!(
                    (a - b).abs() <= tol * scale,
                    "{what} at {at}: sweep {a}, single {b}, difference {} > {tol} × {scale}",
                    (a - b).abs()
                );
            };
            for i in 0..3 {
                close("force", g.force[i], w.force[i], f_scale);
                close("moment", g.moment[i], w.moment[i], f_scale * extent);
                close(
                    "volume moment",
                    g.volume_moment[i],
                    w.volume_moment[i],
                    bulk * extent,
                );
            }
            close("uplift", g.uplift, w.uplift, f_scale);
            close("downthrust", g.downthrust, w.downthrust, f_scale);
            close("abs force", g.abs_force, w.abs_force, f_scale);
            close("wetted area", g.wetted_area, w.wetted_area, area);
            close("volume", g.volume, w.volume, bulk);
            if w.max_pressure.is_finite() || g.max_pressure.is_finite() {
                close("max pressure", g.max_pressure, w.max_pressure, p_scale);
            }
            assert_eq!(g.loaded_facets, w.loaded_facets, "loaded facets at {at}");
        }
    }

    fn closed_outward(n: usize) -> (Vec<Wetting>, Vec<i8>) {
        (vec![Wetting::Front; n], vec![1; n])
    }

    fn layered(level: f64, p_s: f64, layers: &[(f64, Option<f64>)]) -> Liquid {
        Liquid {
            level_m: level,
            surface_pressure_pa: p_s,
            layers: layers
                .iter()
                .map(|&(density_kg_m3, down_to_m)| Layer {
                    density_kg_m3,
                    down_to_m,
                })
                .collect(),
        }
    }

    fn steps(from: f64, to: f64, n: usize) -> Vec<f64> {
        (0..=n)
            .map(|i| from + (to - from) * i as f64 / n as f64)
            .collect()
    }

    #[test]
    fn a_sphere_in_one_liquid_matches_single_levels() {
        // Levels from below the keel to above the top, 0.05 m apart on a 1 m sphere.
        let t = tris_of(&shapes::icosphere([0.3, -0.2, 0.1], 1.0, 3));
        let (w, v) = closed_outward(t.len());
        let parts = [SweepPart {
            facets: 0..t.len(),
            wet: true,
            volume: true,
        }];
        let levels = steps(-1.2, 1.3, 50);
        check(
            &t,
            &parts,
            &w,
            &v,
            &Liquid::uniform(0.0, 1025.0),
            0.1,
            &levels,
        );
    }

    #[test]
    fn layers_gas_and_levels_on_facet_edges_match_single_levels() {
        // A box with its grid lines, the interfaces and many levels at the same
        // elevations (0.5 m apart), so facets touch the surface and interfaces exactly.
        let t = tris_of(&shapes::box_solid([-1.0, -1.5, 0.0], [1.0, 1.5, 3.0], 6));
        let (w, v) = closed_outward(t.len());
        let parts = [SweepPart {
            facets: 0..t.len(),
            wet: true,
            volume: true,
        }];
        let liquid = layered(
            0.0,
            5000.0,
            &[(850.0, Some(2.0)), (1000.0, Some(1.0)), (1200.0, None)],
        );
        let levels = steps(-0.5, 3.5, 16);
        check(&t, &parts, &w, &v, &liquid, 1.5, &levels);
    }

    #[test]
    fn a_negative_gas_pressure_on_a_wavy_wall_matches_single_levels() {
        // Below-atmospheric gas: near the surface the pressure is negative, so those
        // facets pull instead of push (the uplift/downthrust split must follow).
        let wall = shapes::rectangle([0.0, 0.0, -2.0], [3.0, 0.0, 0.0], [0.0, 0.0, 4.0], 12, 16);
        let t = tris_of(&shapes::perturb(&wall, 0.05, 3));
        let n = t.len();
        let parts = [SweepPart {
            facets: 0..n,
            wet: true,
            volume: false,
        }];
        let liquid = layered(0.0, -8000.0, &[(900.0, Some(-0.7)), (1030.0, None)]);
        let levels = steps(-2.5, 2.5, 40);
        check(
            &t,
            &parts,
            &vec![Wetting::Back; n],
            &vec![0; n],
            &liquid,
            -0.3,
            &levels,
        );
    }

    #[test]
    fn dry_parts_and_parts_left_out_match_single_levels() {
        // Part 0 wet and counted in volumes; part 1 dry but counted (its volume is
        // measured below the swept level); part 2 not swept at all.
        let mut all = shapes::icosphere([0.0, 0.0, 0.0], 1.0, 2);
        let n0 = all.len();
        all.extend(shapes::box_solid([3.0, 0.0, -1.0], [4.0, 1.0, 1.0], 2));
        let n1 = all.len();
        all.extend(shapes::box_solid([6.0, 0.0, -1.0], [7.0, 1.0, 1.0], 1));
        let t = tris_of(&all);
        let mut wetting = vec![Wetting::Front; t.len()];
        for w in &mut wetting[n0..n1] {
            *w = Wetting::Dry;
        }
        let parts = [
            SweepPart {
                facets: 0..n0,
                wet: true,
                volume: true,
            },
            SweepPart {
                facets: n0..n1,
                wet: false,
                volume: true,
            },
            SweepPart {
                facets: n1..t.len(),
                wet: false,
                volume: false,
            },
        ];
        let levels = steps(-1.1, 1.1, 22);
        check(
            &t,
            &parts,
            &wetting,
            &vec![1; t.len()],
            &Liquid::uniform(0.0, 1000.0),
            0.0,
            &levels,
        );
    }

    #[test]
    fn levels_in_any_order_and_on_any_thread_count_give_the_same_bits() {
        let t = tris_of(&shapes::perturb(
            &shapes::icosphere([0.0, 0.0, 0.0], 2.0, 4),
            0.01,
            9,
        ));
        let (w, v) = closed_outward(t.len());
        let parts = [SweepPart {
            facets: 0..t.len(),
            wet: true,
            volume: true,
        }];
        let liquid = layered(0.0, 0.0, &[(880.0, Some(0.5)), (1000.0, None)]);
        let swept = SweptLiquid {
            liquid: &liquid,
            g_m_s2: G,
            origin_z: 0.0,
        };
        let up = steps(-2.0, 2.0, 8);
        let mut down = up.clone();
        down.reverse();
        let run = |threads: usize, levels: &[f64]| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("pool")
                .install(|| sweep(&t, &parts, &w, &v, &swept, levels).expect("valid"))
        };
        let a = run(1, &up);
        let b = run(2, &up);
        assert_eq!(a, b);
        // One level per batch of cut facets: the same sums in the same order.
        let one_by_one =
            sweep_in_batches(&t, &parts, &w, &v, &swept, &up, 1, &Tally::quiet()).expect("valid");
        assert_eq!(a, one_by_one);
        let mut c = run(2, &down);
        c.reverse();
        assert_eq!(a, c);
    }

    #[test]
    fn an_invalid_liquid_is_refused() {
        let t = tris_of(&shapes::icosphere([0.0, 0.0, 0.0], 1.0, 0));
        let (w, v) = closed_outward(t.len());
        let parts = [SweepPart {
            facets: 0..t.len(),
            wet: true,
            volume: true,
        }];
        let swept = SweptLiquid {
            liquid: &Liquid::uniform(0.0, 1000.0),
            g_m_s2: G,
            origin_z: 0.0,
        };
        assert!(sweep(&t, &parts, &w, &v, &swept, &[0.0, f64::NAN]).is_err());
        assert!(
            sweep(&t, &parts, &w, &v, &swept, &[])
                .expect("nothing to do")
                .is_empty()
        );
    }
}
