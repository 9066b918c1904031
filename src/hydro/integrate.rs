//! Exact integration of pressure, force, moment and submerged volume over triangles.
//!
//! Owns the per-facet formulas and their deterministic parallel accumulation. Works in
//! the internal frame about the local origin (see the module doc of [`crate::hydro`]);
//! knows nothing of files, parts' names or output units.
//!
//! # Formulas (exact for a linear pressure on a flat piece)
//!
//! For a triangle with vertices `r_i`, area vector `a = ½ (r₁ − r₀) × (r₂ − r₀)` (stored
//! winding), pressures `p_i` at the vertices, `P = Σ p_i`, `R = Σ r_i` and `s = ±1` the
//! side of the liquid (`+1` when it is on the side `a` points to):
//!
//! * force `F = −s · (P/3) · a` (the mean of a linear field is its centroid value);
//! * moment about the origin `M = −s · (1/12) · (Σ p_i r_i + P R) × a`, from the exact
//!   rule `∫ f g dA = A/12 · (Σ f_i g_i + Σ f_i · Σ g_i)` for linear `f`, `g`.
//!
//! The submerged volume of a closed, outward-oriented surface below the level `L` is, by
//! the divergence theorem with the fields `(z − L) e_z`, `x (z − L) e_z`, `½ (z − L)² e_z`
//! (all zero on the waterplane, so no cap is needed), with `d_i = z_i − L`, `D = Σ d_i`:
//!
//! * `V = Σ a_z · D/3`,  `∫x dV = Σ a_z/12 · (Σ x_i d_i + X D)` (same for `y`),
//! * `∫(z − L) dV = Σ a_z/24 · (Σ d_i² + D²)`, to which `L·V` is added to give `∫z dV`,
//!
//! summed over the pieces below the level.

use std::ops::Range;

use rayon::prelude::*;

use super::clip::{Piece, slab_pieces};
use super::{Profile, Tri, Tris, Vec3, Wetting};

/// Facets per parallel work item. A constant, never derived from the thread count, so
/// the order of every sum, and with it every bit of the result, is the same on any
/// number of threads.
pub const CHUNK: usize = 4096;

/// What the integrator needs to know about one part.
#[derive(Clone, Debug)]
pub struct PartInput<'a> {
    /// The part's facets, a range into the triangle array.
    pub facets: Range<usize>,
    /// The liquid acting on the part (shifted to the local origin), or `None` if dry.
    pub profile: Option<&'a Profile>,
    /// Elevation (local frame) below which the enclosed volume is measured, or `None` to
    /// skip volumes. When `profile` is given this should be its level.
    pub volume_level: Option<f64>,
}

/// Sums over a set of facets, in the internal frame about the local origin.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PartAccum {
    /// Force of the liquid, N.
    pub force: Vec3,
    /// Moment of the liquid about the local origin, N·m.
    pub moment: Vec3,
    /// Area at or below the free surface of facets the liquid reaches, m².
    pub wetted_area: f64,
    /// Σ over facets of the upward part of each facet's vertical force, N.
    pub uplift: f64,
    /// Σ over facets of the downward part of each facet's vertical force, N.
    pub downthrust: f64,
    /// Σ over facets of |facet force|, N (scale for the zero-force test).
    pub abs_force: f64,
    /// Largest pressure on a loaded facet, Pa (−∞ when nothing is loaded).
    pub max_pressure: f64,
    /// Enclosed volume below `volume_level`, m³ (outward orientation, cavities excluded).
    pub volume: f64,
    /// `∫x dV`, `∫y dV`, `∫z dV` over that volume (local frame), m⁴.
    pub volume_moment: Vec3,
    /// Number of facets with a loaded piece.
    pub loaded_facets: usize,
}

impl Default for PartAccum {
    fn default() -> Self {
        PartAccum {
            force: Vec3::zeros(),
            moment: Vec3::zeros(),
            wetted_area: 0.0,
            uplift: 0.0,
            downthrust: 0.0,
            abs_force: 0.0,
            max_pressure: f64::NEG_INFINITY,
            volume: 0.0,
            volume_moment: Vec3::zeros(),
            loaded_facets: 0,
        }
    }
}

impl PartAccum {
    /// Adds another accumulator (used in a fixed order, so results are reproducible).
    pub fn merge(mut self, o: &PartAccum) -> PartAccum {
        self.force += o.force;
        self.moment += o.moment;
        self.wetted_area += o.wetted_area;
        self.uplift += o.uplift;
        self.downthrust += o.downthrust;
        self.abs_force += o.abs_force;
        self.max_pressure = self.max_pressure.max(o.max_pressure);
        self.volume += o.volume;
        self.volume_moment += o.volume_moment;
        self.loaded_facets += o.loaded_facets;
        self
    }

    /// Adds one facet's loads: its force to the uplift or the downthrust by the sign of
    /// its vertical component, and so on (the order of calls is the order of the sums).
    pub fn add_facet(&mut self, f: &FacetLoads) {
        self.force += f.force;
        self.moment += f.moment;
        self.wetted_area += f.wetted_area;
        if f.force.z > 0.0 {
            self.uplift += f.force.z;
        } else {
            self.downthrust -= f.force.z;
        }
        self.abs_force += f.force.norm();
        self.max_pressure = self.max_pressure.max(f.max_pressure);
        self.volume += f.volume;
        self.volume_moment += f.volume_moment;
        if f.loaded {
            self.loaded_facets += 1;
        }
    }
}

/// The loads on one facet (all its pieces together).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FacetLoads {
    /// Force of the liquid, N.
    pub force: Vec3,
    /// Moment about the local origin, N·m.
    pub moment: Vec3,
    /// Area at or below the free surface, m² (0 for a dry facet).
    pub wetted_area: f64,
    /// Largest vertex pressure on a loaded piece, Pa (−∞ if none).
    pub max_pressure: f64,
    /// Contribution to the enclosed volume, m³.
    pub volume: f64,
    /// Contribution to `∫x dV`, `∫y dV`, `∫z dV` (local frame).
    pub volume_moment: Vec3,
    /// Whether any pressure acts on the facet.
    pub loaded: bool,
}

impl FacetLoads {
    /// No load: every sum zero, the maximum pressure −∞.
    pub fn none() -> FacetLoads {
        FacetLoads {
            force: Vec3::zeros(),
            moment: Vec3::zeros(),
            wetted_area: 0.0,
            max_pressure: f64::NEG_INFINITY,
            volume: 0.0,
            volume_moment: Vec3::zeros(),
            loaded: false,
        }
    }
}

/// Integrates one facet.
///
/// `planes` must be the cut elevations (descending) of `profile` merged with
/// `volume_level`; `vol_sign` is `+1` when the stored winding points out of the enclosed
/// volume, `−1` when it points in, `0` to leave the facet out of volumes.
#[inline]
pub fn facet_loads(
    t: &Tri,
    planes: &[f64],
    profile: Option<&Profile>,
    wetting: Wetting,
    volume_level: Option<f64>,
    vol_sign: i8,
) -> FacetLoads {
    let mut out = FacetLoads::none();
    let Some(on) = Acting::new(profile, wetting, volume_level, vol_sign) else {
        return out;
    };
    let (lo, hi) = (
        t[0].z.min(t[1].z).min(t[2].z),
        t[0].z.max(t[1].z).max(t[2].z),
    );
    // Wholly above the free surface and the volume level, under no surface pressure: every
    // piece would add only zeros (which leave every sum's bits as they are) and its
    // pressure, 0, to the maximum.
    if lo > on.level
        && on.volume_level.is_none_or(|l| lo > l)
        && on.profile.is_none_or(|p| p.surface_pressure() == 0.0)
    {
        if let Some(p) = on.profile {
            out.max_pressure = p.surface_pressure();
        }
        return out;
    }
    // A facet that no plane cuts is its own only piece.
    if planes.iter().all(|&h| h >= hi || h <= lo) {
        on.add(&mut out, t);
    } else {
        slab_pieces(t, planes, |piece: &Piece, _slab| {
            on.add(&mut out, piece.vertices())
        });
    }
    out
}

/// What acts on one facet, as [`facet_loads`] resolves it: the liquid (on the wet side
/// only), `side` ±1 the wet side, `level` the liquid's level (−∞ without one), and the
/// volume level with the facet's sign (`None` when the facet bounds no measured volume).
#[derive(Clone, Copy)]
struct Acting<'a> {
    profile: Option<&'a Profile>,
    side: f64,
    level: f64,
    volume_level: Option<f64>,
    vol_sign: i8,
}

impl<'a> Acting<'a> {
    /// `None` when nothing acts: no liquid on a wet side and no volume to measure.
    fn new(
        profile: Option<&'a Profile>,
        wetting: Wetting,
        volume_level: Option<f64>,
        vol_sign: i8,
    ) -> Option<Acting<'a>> {
        let side = match wetting {
            Wetting::Front => 1.0,
            Wetting::Back => -1.0,
            Wetting::Dry => 0.0,
        };
        let profile = if side == 0.0 { None } else { profile };
        let volume_level = if vol_sign == 0 { None } else { volume_level };
        (profile.is_some() || volume_level.is_some()).then(|| Acting {
            profile,
            side,
            level: profile.map_or(f64::NEG_INFINITY, Profile::level),
            volume_level,
            vol_sign,
        })
    }

    /// Adds the loads of one piece `v` (a convex polygon lying in one slab) to `out`.
    #[inline]
    fn add(&self, out: &mut FacetLoads, v: &[Vec3]) {
        let Acting {
            profile,
            side,
            level,
            volume_level,
            vol_sign,
        } = *self;
        // Every piece lies on one side of each plane, so its centroid classifies it.
        let zc = v.iter().map(|p| p.z).sum::<f64>() / v.len() as f64;
        for i in 1..v.len() - 1 {
            let (r0, r1, r2) = (v[0], v[i], v[i + 1]);
            let a = 0.5 * (r1 - r0).cross(&(r2 - r0));
            if let Some(prof) = profile {
                let (p0, p1, p2) = (
                    prof.pressure(r0.z),
                    prof.pressure(r1.z),
                    prof.pressure(r2.z),
                );
                let sum_p = p0 + p1 + p2;
                out.force -= side * (sum_p / 3.0) * a;
                let first = p0 * r0 + p1 * r1 + p2 * r2 + sum_p * (r0 + r1 + r2);
                out.moment -= side / 12.0 * first.cross(&a);
                if zc <= level {
                    out.wetted_area += a.norm();
                }
                out.max_pressure = out.max_pressure.max(p0.max(p1).max(p2));
                if sum_p != 0.0 || zc <= level {
                    out.loaded = true;
                }
            }
            if let Some(l) = volume_level
                && zc <= l
            {
                let s = f64::from(vol_sign) * a.z;
                let (d0, d1, d2) = (r0.z - l, r1.z - l, r2.z - l);
                let sd = d0 + d1 + d2;
                out.volume += s * sd / 3.0;
                let mx = r0.x * d0 + r1.x * d1 + r2.x * d2 + (r0.x + r1.x + r2.x) * sd;
                let my = r0.y * d0 + r1.y * d1 + r2.y * d2 + (r0.y + r1.y + r2.y) * sd;
                let mz = d0 * d0 + d1 * d1 + d2 * d2 + sd * sd;
                // ∫z dV = ∫(z − L) dV + L·V, so sums over different levels still add up.
                let vol = s * sd / 3.0;
                out.volume_moment +=
                    Vec3::new(s * mx / 12.0, s * my / 12.0, s * mz / 24.0 + l * vol);
            }
        }
    }
}

/// The cut planes for a part: the profile's kinks merged with the volume level.
pub fn part_planes(profile: Option<&Profile>, volume_level: Option<f64>) -> Vec<f64> {
    let mut planes: Vec<f64> = profile.map(|p| p.planes().to_vec()).unwrap_or_default();
    if let Some(l) = volume_level
        && !planes.contains(&l)
    {
        planes.push(l);
    }
    planes.sort_by(|a, b| b.total_cmp(a));
    planes
}

/// Integrates every part; returns one accumulator per part, in order.
///
/// `tris` are in the internal frame about the local origin; `wetting[i]` and
/// `vol_sign[i]` describe facet `i` (see [`facet_loads`]). Deterministic: the same bits
/// for any number of threads.
pub fn integrate<T: Tris + ?Sized>(
    tris: &T,
    parts: &[PartInput<'_>],
    wetting: &[Wetting],
    vol_sign: &[i8],
) -> Vec<PartAccum> {
    Integration::new(tris, parts, wetting, vol_sign).run()
}

/// [`integrate`] as separate pieces of work: every part cut into chunks of [`CHUNK`]
/// facets, each chunk integrated on its own (in any order, on any thread) and the chunks'
/// sums folded per part in order, so the result is the same bits however the chunks were
/// shared out.
pub struct Integration<'a, T: ?Sized> {
    tris: &'a T,
    parts: Vec<(PartInput<'a>, Vec<f64>)>,
    wetting: &'a [Wetting],
    vol_sign: &'a [i8],
    /// Every chunk: its part and its facets, part by part in order.
    chunks: Vec<(usize, Range<usize>)>,
}

impl<'a, T: Tris + ?Sized> Integration<'a, T> {
    /// The work of [`integrate`] with the same arguments.
    pub fn new(
        tris: &'a T,
        parts: &[PartInput<'a>],
        wetting: &'a [Wetting],
        vol_sign: &'a [i8],
    ) -> Self {
        let mut chunks = Vec::new();
        for (k, part) in parts.iter().enumerate() {
            let Range { start, end } = part.facets;
            for c in 0..(end - start).div_ceil(CHUNK) {
                chunks.push((k, start + c * CHUNK..(start + (c + 1) * CHUNK).min(end)));
            }
        }
        Integration {
            tris,
            parts: parts
                .iter()
                .map(|p| (p.clone(), part_planes(p.profile, p.volume_level)))
                .collect(),
            wetting,
            vol_sign,
            chunks,
        }
    }

    /// Every chunk on all threads, folded: [`integrate`]'s result.
    pub fn run(&self) -> Vec<PartAccum> {
        let partials: Vec<PartAccum> = (0..self.chunks())
            .into_par_iter()
            .map(|c| self.chunk(c))
            .collect();
        self.fold(&partials)
    }

    /// Number of chunks.
    pub fn chunks(&self) -> usize {
        self.chunks.len()
    }

    /// The sums over chunk `c`'s facets.
    pub fn chunk(&self, c: usize) -> PartAccum {
        let (k, range) = &self.chunks[c];
        let (part, planes) = &self.parts[*k];
        let mut acc = PartAccum::default();
        for i in range.clone() {
            let t = self.tris.tri(i);
            let f = facet_loads(
                &t,
                planes,
                part.profile,
                self.wetting[i],
                part.volume_level,
                self.vol_sign[i],
            );
            acc.add_facet(&f);
        }
        acc
    }

    /// One accumulator per part: `partials[c]` is [`Self::chunk`]`(c)`.
    pub fn fold(&self, partials: &[PartAccum]) -> Vec<PartAccum> {
        let mut out = vec![PartAccum::default(); self.parts.len()];
        for ((k, _), p) in self.chunks.iter().zip(partials) {
            out[*k] = out[*k].merge(p);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::hydro::{Layer, Liquid};
    use approx::assert_relative_eq;

    const G: f64 = 9.80665;

    fn v(x: f64, y: f64, z: f64) -> Vec3 {
        Vec3::new(x, y, z)
    }

    /// A vertical rectangle in the plane y = 0, x ∈ [0, b], z ∈ [z0, z1], normal −y.
    fn wall(b: f64, z0: f64, z1: f64) -> Vec<Tri> {
        vec![
            [v(0.0, 0.0, z0), v(b, 0.0, z0), v(b, 0.0, z1)],
            [v(0.0, 0.0, z0), v(b, 0.0, z1), v(0.0, 0.0, z1)],
        ]
    }

    fn run(tris: &[Tri], profile: &Profile, wet: Wetting) -> PartAccum {
        let n = tris.len();
        integrate(
            tris,
            &[PartInput {
                facets: 0..n,
                profile: Some(profile),
                volume_level: None,
            }],
            &vec![wet; n],
            &vec![0; n],
        )[0]
    }

    #[test]
    fn facets_taken_whole_give_the_bits_of_their_pieces() {
        // Facets above, across and below the level (and the kink of a two-layer liquid),
        // with and without a volume level, on both wet sides and dry: the shortcuts for a
        // wholly dry facet and for a facet no plane cuts must give exactly what cutting it
        // into pieces and adding them gives (signed zeros included, hence `{:?}`).
        let two = Liquid {
            level_m: 0.5,
            surface_pressure_pa: 0.0,
            layers: vec![
                Layer {
                    density_kg_m3: 900.0,
                    down_to_m: Some(-0.25),
                },
                Layer {
                    density_kg_m3: 1025.0,
                    down_to_m: None,
                },
            ],
        };
        let one = Profile::new(&Liquid::uniform(0.5, 1000.0), G).expect("valid");
        let two = Profile::new(&two, G).expect("valid");
        let mut seed = 7u64;
        let mut next = || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64 * 4.0 - 1.5
        };
        let (mut dry, mut whole) = (0, 0);
        for _ in 0..2000 {
            let t: Tri = [
                v(next(), next(), next()),
                v(next(), next(), next()),
                v(next(), next(), next()),
            ];
            for prof in [&one, &two] {
                for (wetting, vol_sign, volume_level) in [
                    (Wetting::Front, 1, Some(0.5)),
                    (Wetting::Back, -1, Some(0.5)),
                    (Wetting::Front, 0, None),
                    (Wetting::Dry, 1, Some(1.0)),
                    (Wetting::Dry, 0, None),
                ] {
                    let planes = part_planes(Some(prof), volume_level);
                    let quick =
                        facet_loads(&t, &planes, Some(prof), wetting, volume_level, vol_sign);
                    // Every piece added, as `facet_loads` would without its shortcuts.
                    let side = match wetting {
                        Wetting::Front => 1.0,
                        Wetting::Back => -1.0,
                        Wetting::Dry => 0.0,
                    };
                    let profile = (side != 0.0).then_some(prof);
                    let level = profile.map_or(f64::NEG_INFINITY, Profile::level);
                    let volume_level = if vol_sign == 0 { None } else { volume_level };
                    let mut cut = FacetLoads::none();
                    if profile.is_some() || volume_level.is_some() {
                        let on = Acting {
                            profile,
                            side,
                            level,
                            volume_level,
                            vol_sign,
                        };
                        slab_pieces(&t, &planes, |piece: &Piece, _| {
                            on.add(&mut cut, piece.vertices());
                        });
                    }
                    assert_eq!(format!("{quick:?}"), format!("{cut:?}"), "{t:?}");
                    let (lo, hi) = (
                        t.iter().map(|p| p.z).fold(f64::INFINITY, f64::min),
                        t.iter().map(|p| p.z).fold(f64::NEG_INFINITY, f64::max),
                    );
                    if profile.is_some() {
                        if lo > 0.5 {
                            dry += 1;
                        } else if planes.iter().all(|&h| h >= hi || h <= lo) {
                            whole += 1;
                        }
                    }
                }
            }
        }
        assert!(
            dry > 200 && whole > 200,
            "shortcuts taken: {dry} dry, {whole} whole"
        );
    }

    #[test]
    fn vertical_wall_force_and_moment_match_closed_form() {
        // Closed form for a vertical rectangle of width b from depth h1 to h2:
        // F = ρgb(h2² − h1²)/2, moment about the surface line ρgb(h2³ − h1³)/3.
        let (b, rho) = (3.0, 1000.0);
        let tris = wall(b, -3.0, -1.0); // top edge 1 m deep, bottom 3 m deep
        let prof = Profile::new(&Liquid::uniform(0.0, rho), G).expect("valid");
        // Normal of the stored winding is (b,0,0)×(b,0,h) ∝ −y; liquid on the −y side.
        let acc = run(&tris, &prof, Wetting::Front);
        let f = rho * G * b * (9.0 - 1.0) / 2.0;
        assert_relative_eq!(acc.force.y, f, max_relative = 1e-14);
        assert_relative_eq!(acc.force.x, 0.0, epsilon = 1e-9);
        assert_relative_eq!(acc.force.z, 0.0, epsilon = 1e-9);
        // Moment about the x axis through the origin (on the free surface): M_x = ∫ (−z) dF_y.
        let m = rho * G * b * (27.0 - 1.0) / 3.0;
        assert_relative_eq!(acc.moment.x, m, max_relative = 1e-14);
        assert_relative_eq!(acc.wetted_area, 6.0, max_relative = 1e-15);
        assert_relative_eq!(acc.max_pressure, rho * G * 3.0, max_relative = 1e-15);
    }

    #[test]
    fn a_wall_through_the_surface_is_loaded_only_below_it() {
        let tris = wall(2.0, -4.0, 1.5);
        let prof = Profile::new(&Liquid::uniform(0.0, 1000.0), G).expect("valid");
        let acc = run(&tris, &prof, Wetting::Back);
        // F = ρgbH²/2, on the +y side now.
        assert_relative_eq!(
            acc.force.y,
            -1000.0 * G * 2.0 * 16.0 / 2.0,
            max_relative = 1e-14
        );
        assert_relative_eq!(acc.wetted_area, 8.0, max_relative = 1e-14);
    }

    #[test]
    fn two_layers_and_gas_on_a_wall() {
        // Closed form, 1 m wide wall, gas 5 kPa, oil 850 kg/m³ 2 m over water 3 m:
        // F = p_s·2 + g·850·2²/2 + (p_s + g·850·2)·3 + g·1000·3²/2 = 135 815.1 N
        // (the same value is derived independently in the team's trade notes, check D3).
        let liquid = Liquid {
            level_m: 5.0,
            surface_pressure_pa: 5000.0,
            layers: vec![
                Layer {
                    density_kg_m3: 850.0,
                    down_to_m: Some(3.0),
                },
                Layer {
                    density_kg_m3: 1000.0,
                    down_to_m: None,
                },
            ],
        };
        let prof = Profile::new(&liquid, G).expect("valid");
        let acc = run(&wall(1.0, 0.0, 5.0), &prof, Wetting::Front);
        let expected = 5000.0 * 2.0
            + G * 850.0 * 4.0 / 2.0
            + (5000.0 + G * 850.0 * 2.0) * 3.0
            + G * 1000.0 * 9.0 / 2.0;
        assert_relative_eq!(acc.force.y, expected, max_relative = 1e-14);
        assert_relative_eq!(acc.force.y, 135_815.1, epsilon = 0.05);
    }

    #[test]
    fn results_do_not_depend_on_the_thread_count() {
        let mut tris = Vec::new();
        for i in 0..20_000 {
            let x = f64::from(i) * 0.37;
            tris.push([v(x, 0.1, -3.0), v(x + 1.0, 0.4, 0.5), v(x, 1.3, 0.9)]);
        }
        let prof = Profile::new(&Liquid::uniform(0.25, 1025.0), G).expect("valid");
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .expect("pool")
            .install(|| run(&tris, &prof, Wetting::Front));
        let two = rayon::ThreadPoolBuilder::new()
            .num_threads(2)
            .build()
            .expect("pool")
            .install(|| run(&tris, &prof, Wetting::Front));
        assert_eq!(one, two);
    }
}
