//! The equilibrium attitude and the trim-free branch at constant displacement (see the
//! module doc of [`super`] for the axes, the branch and the rule that picks the root).

use super::super::{Tally, Vec3};
use super::section::{Hull, Section};
use super::{EQUILIBRIUM_REL, FloatError};

/// Newton steps on `(c, ϑ)` at one heel before the trim scan takes over.
const MAX_BRANCH_ITER: usize = 60;
/// Halvings of one Newton step when it does not reduce the residual.
const MAX_BACKTRACK: usize = 8;
/// Safeguarded Newton–bisection steps on `c` for the displacement alone.
const MAX_VOLUME_ITER: usize = 200;
/// Steps of the heel refinement inside a bracket.
const MAX_HEEL_ITER: usize = 100;
/// Largest trim step of one Newton iteration, degrees.
const MAX_TRIM_STEP_DEG: f64 = 10.0;
/// The trim parameter stays within ±89°, where the branch's normal is well defined.
const TRIM_LIMIT_DEG: f64 = 89.0;
/// Trim scan spacing (fallback), degrees.
const TRIM_SCAN_DEG: f64 = 2.0;

/// The body's weight and where it acts, and the liquid it floats in.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Body {
    /// Mass of the whole floating body, kg (> 0).
    pub mass_kg: f64,
    /// Centre of gravity, internal frame, m.
    pub centre_of_gravity: Vec3,
    /// Density of the (uniform) liquid, kg/m³ (> 0).
    pub density_kg_m3: f64,
    /// Unit length axis, horizontal, internal frame.
    pub length_axis: Vec3,
}

/// The body at one attitude: the plane, its section and the levers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Attitude {
    /// Unit normal of the free surface in body (internal) axes, pointing up.
    pub normal: Vec3,
    /// `c` of the plane `n·x = c`, internal frame, m.
    pub elevation_m: f64,
    /// Heel `atan2(n·t, n·u)`, degrees.
    pub heel_deg: f64,
    /// Trim `atan2(−n·l, n·u)`, degrees; `None` at ±90° of heel where it is undefined.
    pub trim_deg: Option<f64>,
    /// The branch's own trim parameter `ϑ`, radians (continuation only).
    pub trim_param_rad: f64,
    /// Volume, buoyancy and waterplane at this plane.
    pub section: Section,
    /// `e`, the horizontal unit vector closest to the length axis.
    pub e: Vec3,
    /// Heeling moment per unit weight `((B − G) × n)·e`, m (> 0 turns towards more heel).
    pub heeling_lever_m: f64,
    /// Trimming moment per unit weight `((B − G) × n)·f`, m.
    pub trimming_lever_m: f64,
    /// `I_e / V`, m.
    pub bm_t_m: f64,
    /// `I_f / V`, m.
    pub bm_l_m: f64,
    /// `I_e / V − (G − B)·n`, m.
    pub gm_t_m: f64,
    /// `I_f / V − (G − B)·n`, m.
    pub gm_l_m: f64,
}

impl Attitude {
    /// The righting lever GZ at this point of the branch: `−m` for heel ≥ 0, `+m` below.
    pub fn righting_lever_m(&self) -> f64 {
        if self.heel_deg >= 0.0 {
            -self.heeling_lever_m
        } else {
            self.heeling_lever_m
        }
    }

    /// Stable in both directions (CONTRACT.md: GM_T > 0 and GM_L > 0).
    pub fn stable(&self) -> bool {
        self.gm_t_m > 0.0 && self.gm_l_m > 0.0
    }
}

/// Everything solved for one floating body.
#[derive(Clone, Debug, PartialEq)]
pub struct Solution {
    /// The whole enclosed volume, m³.
    pub volume_total_m3: f64,
    /// The displacement the mass needs, `mass / ρ`, m³.
    pub displacement_m3: f64,
    /// The mass beyond what the whole volume can float, kg, when the body sinks.
    pub sinks_kg: Option<f64>,
    /// The equilibrium by the contract's rule (`None` when the body sinks).
    pub equilibrium: Option<Attitude>,
    /// The upright point of the trim-free branch (`None` when the body sinks).
    pub upright: Option<Attitude>,
    /// One branch point per requested heel angle, in the order given.
    pub listed: Vec<Attitude>,
    /// The branch at 0°, 1°, …, 90° (empty when the body sinks).
    pub grid: Vec<Attitude>,
    /// Number of times the body was cut by a plane.
    pub evaluations: usize,
}

/// Solves the equilibrium, the listed heel angles and the 0°…90° grid.
///
/// `heel_angles_deg` must lie in [−90°, 90°] (the caller validates). A body heavier than
/// its whole volume of liquid sinks: `sinks_kg` is set and nothing else is solved.
pub fn solve(hull: &Hull, body: &Body, heel_angles_deg: &[f64]) -> Result<Solution, FloatError> {
    solve_with(hull, body, heel_angles_deg, &Tally::quiet())
}

/// [`solve`], counting the heel angles solved on `tally` (the grid's and the listed ones,
/// each once); the equilibrium found from them comes after the last.
pub fn solve_with(
    hull: &Hull,
    body: &Body,
    heel_angles_deg: &[f64],
    tally: &Tally<'_>,
) -> Result<Solution, FloatError> {
    let finite = body.mass_kg.is_finite()
        && body.density_kg_m3.is_finite()
        && body.centre_of_gravity.iter().all(|x| x.is_finite())
        && body.length_axis.iter().all(|x| x.is_finite());
    if !finite || body.mass_kg <= 0.0 || body.density_kg_m3 <= 0.0 {
        return Err(FloatError::NonFinite);
    }
    let total = hull.volume_m3();
    let v0 = body.mass_kg / body.density_kg_m3;
    let mut out = Solution {
        volume_total_m3: total,
        displacement_m3: v0,
        sinks_kg: None,
        equilibrium: None,
        upright: None,
        listed: Vec::new(),
        grid: Vec::new(),
        evaluations: 0,
    };
    if v0 > total {
        out.sinks_kg = Some(body.mass_kg - body.density_kg_m3 * total);
        return Ok(out);
    }
    let mut s = Solver::new(hull, body, v0);

    // The positive side: the grid and the listed angles ≥ 0, marched outwards from 0°.
    let mut positive: Vec<f64> = (0..=90).map(f64::from).collect();
    positive.extend(heel_angles_deg.iter().copied().filter(|a| *a >= 0.0));
    positive.sort_by(f64::total_cmp);
    positive.dedup();
    let mut negative: Vec<f64> = heel_angles_deg
        .iter()
        .copied()
        .filter(|a| *a < 0.0)
        .collect();
    negative.sort_by(|a, b| b.total_cmp(a));
    negative.dedup();
    tally.begin((positive.len() + negative.len()) as u64);
    let mut solved: Vec<(f64, Attitude)> = Vec::new();
    let mut prev: Option<Attitude> = None;
    for phi in positive {
        let a = s.branch(phi, prev.as_ref())?;
        solved.push((phi, a));
        prev = Some(a);
        tally.add(1);
    }
    let upright = solved[0].1;
    let mut prev = upright;
    for phi in negative {
        let a = s.branch(phi, Some(&prev))?;
        solved.push((phi, a));
        prev = a;
        tally.add(1);
    }
    let find = |phi: f64| solved.iter().find(|(p, _)| *p == phi).map(|(_, a)| *a);
    out.grid = (0..=90).filter_map(|k| find(f64::from(k))).collect();
    out.listed = heel_angles_deg.iter().filter_map(|p| find(*p)).collect();
    out.upright = Some(upright);
    out.equilibrium = Some(s.equilibrium(&upright, &out.grid)?);
    out.evaluations = s.evaluations;
    Ok(out)
}

struct Solver<'a> {
    hull: &'a Hull,
    g: Vec3,
    v0: f64,
    tol_v: f64,
    tol_m: f64,
    diag: f64,
    u: Vec3,
    l: Vec3,
    t: Vec3,
    evaluations: usize,
}

impl<'a> Solver<'a> {
    fn new(hull: &'a Hull, body: &Body, v0: f64) -> Solver<'a> {
        let u = Vec3::new(0.0, 0.0, 1.0);
        // The caller gives a horizontal unit axis; project and normalise to be safe.
        let mut l = body.length_axis - u * u.dot(&body.length_axis);
        let norm = l.norm();
        l = if norm > 0.0 { l / norm } else { Vec3::x() };
        let diag = hull.diagonal_m();
        Solver {
            hull,
            g: body.centre_of_gravity,
            v0,
            // A quarter of the contract's tolerance each, so the two components of the
            // moment together stay well inside it.
            tol_v: 0.25 * EQUILIBRIUM_REL * v0,
            tol_m: 0.25 * EQUILIBRIUM_REL * diag,
            diag,
            u,
            l,
            t: u.cross(&l),
            evaluations: 0,
        }
    }

    /// The branch's normal and `e` at heel `phi` (degrees) and trim parameter `th` (rad).
    fn plane(&self, phi_deg: f64, th: f64) -> (Vec3, Vec3) {
        let p = phi_deg.to_radians();
        let h = self.u * p.cos() + self.t * p.sin();
        let n = h * th.cos() - self.l * th.sin();
        let e = self.l * th.cos() + h * th.sin();
        (n, e)
    }

    fn cut(&mut self, n: &Vec3, c: f64, e: &Vec3) -> Section {
        self.evaluations += 1;
        self.hull.section(n, c, e)
    }

    fn attitude(&self, n: Vec3, e: Vec3, c: f64, th: f64, sec: Section) -> Attitude {
        let f = n.cross(&e);
        let bg = sec.centre_of_buoyancy - self.g;
        let v = sec.volume_m3;
        let (bm_t, bm_l) = if v > 0.0 {
            (sec.i_e_m4 / v, sec.i_f_m4 / v)
        } else {
            (0.0, 0.0)
        };
        let nu = n.dot(&self.u);
        let trim = (nu.abs() > 1e-12).then(|| (-n.dot(&self.l)).atan2(nu).to_degrees());
        Attitude {
            normal: n,
            elevation_m: c,
            heel_deg: n.dot(&self.t).atan2(nu).to_degrees(),
            trim_deg: trim,
            trim_param_rad: th,
            section: sec,
            e,
            heeling_lever_m: bg.dot(&f),
            trimming_lever_m: -bg.dot(&e),
            bm_t_m: bm_t,
            bm_l_m: bm_l,
            gm_t_m: bm_t + bg.dot(&n),
            gm_l_m: bm_l + bg.dot(&n),
        }
    }

    /// The plane `n·x = c` that displaces `v0`, by safeguarded Newton–bisection on `c`.
    fn volume_at(
        &mut self,
        n: &Vec3,
        e: &Vec3,
        c_guess: f64,
        phi_deg: f64,
    ) -> Result<(f64, Section), FloatError> {
        let (mut lo, mut hi) = self.hull.plane_bounds(n);
        let mut c = if c_guess.is_finite() {
            c_guess.clamp(lo, hi)
        } else {
            0.5 * (lo + hi)
        };
        let mut residual = f64::INFINITY;
        for _ in 0..MAX_VOLUME_ITER {
            let sec = self.cut(n, c, e);
            let r = sec.volume_m3 - self.v0;
            residual = r;
            if r.abs() <= self.tol_v {
                return Ok((c, sec));
            }
            if r > 0.0 {
                hi = c;
            } else {
                lo = c;
            }
            let area = sec.waterplane_area_m2;
            let mut next = if area > 0.0 { c - r / area } else { f64::NAN };
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            if next == c {
                break;
            }
            c = next;
        }
        Err(FloatError::Volume {
            heel_deg: phi_deg,
            iterations: MAX_VOLUME_ITER,
            residual_m3: residual,
            tolerance: EQUILIBRIUM_REL,
        })
    }

    fn merit(&self, a: &Attitude) -> f64 {
        let rv = (a.section.volume_m3 - self.v0) / self.v0;
        let rm = a.trimming_lever_m / self.diag;
        rv * rv + rm * rm
    }

    fn converged(&self, a: &Attitude) -> bool {
        (a.section.volume_m3 - self.v0).abs() <= self.tol_v
            && a.trimming_lever_m.abs() <= self.tol_m
    }

    /// A point of the trim-free branch at heel `phi_deg`, continued from `from`.
    fn branch(&mut self, phi_deg: f64, from: Option<&Attitude>) -> Result<Attitude, FloatError> {
        let mut th = from.map_or(0.0, |a| a.trim_param_rad);
        let (n, e) = self.plane(phi_deg, th);
        // Pivot about the last centre of flotation: the displacement barely changes.
        let guess = from.map_or(n.dot(&self.hull.centroid()), |a| {
            n.dot(&a.section.centre_of_flotation)
        });
        let (mut c, sec) = self.volume_at(&n, &e, guess, phi_deg)?;
        let mut a = self.attitude(n, e, c, th, sec);
        let limit = TRIM_LIMIT_DEG.to_radians();
        for _ in 0..MAX_BRANCH_ITER {
            if self.converged(&a) {
                if a.gm_l_m > -self.tol_m {
                    return Ok(a);
                }
                // Balanced but unstable in trim: look for a stable trim, and keep this
                // one if there is none (a body unstable in every direction upright).
                return Ok(self.trim_scan(phi_deg)?.unwrap_or(a));
            }
            let Some((dc, dth)) = self.newton_step(&a) else {
                break;
            };
            let mut lambda = 1.0;
            let mut accepted = None;
            for _ in 0..MAX_BACKTRACK {
                let th_new = (th + lambda * dth).clamp(-limit, limit);
                let (n, e) = self.plane(phi_deg, th_new);
                let c_new = c + lambda * dc;
                let mut sec = self.cut(&n, c_new, &e);
                let mut c_used = c_new;
                if sec.volume_m3 <= 0.0 || sec.waterplane_area_m2 <= 0.0 {
                    (c_used, sec) = self.volume_at(&n, &e, c_new, phi_deg)?;
                }
                let cand = self.attitude(n, e, c_used, th_new, sec);
                if self.merit(&cand) < self.merit(&a) {
                    accepted = Some((c_used, th_new, cand));
                    break;
                }
                lambda *= 0.5;
            }
            let Some((c_new, th_new, cand)) = accepted else {
                break;
            };
            c = c_new;
            th = th_new;
            a = cand;
        }
        self.trim_scan(phi_deg)?
            .ok_or(FloatError::NoTrim { heel_deg: phi_deg })
    }

    /// The Newton step `(Δc, Δϑ)` from the waterplane (see the module doc).
    fn newton_step(&self, a: &Attitude) -> Option<(f64, f64)> {
        let s = &a.section;
        let (area, v) = (s.waterplane_area_m2, s.volume_m3);
        if area <= 0.0 || v <= 0.0 {
            return None;
        }
        let o = self.hull.origin();
        let n = a.normal;
        let e = a.e;
        let ef = e.dot(&(s.centre_of_flotation - o));
        // The unknown is c itself; about the local origin c_rel = c − n·o moves with ϑ
        // through n, so the Jacobian is written for c_rel and converted below.
        let efb = e.dot(&(s.centre_of_flotation - s.centre_of_buoyancy));
        let bg = s.centre_of_buoyancy - self.g;
        let j11 = area;
        let j12 = area * ef;
        let j21 = -area * efb / v;
        let j22 = -(s.i_f_m4 + area * efb * ef) / v - bg.dot(&n);
        let det = j11 * j22 - j12 * j21;
        if !(det.is_finite() && det.abs() > 0.0) {
            return None;
        }
        let r1 = s.volume_m3 - self.v0;
        let r2 = a.trimming_lever_m;
        let mut dcr = -(j22 * r1 - j12 * r2) / det;
        let mut dth = -(-j21 * r1 + j11 * r2) / det;
        let max = MAX_TRIM_STEP_DEG.to_radians();
        if dth.abs() > max {
            let k = max / dth.abs();
            dcr *= k;
            dth *= k;
        }
        // c = c_rel + n·o, and dn/dϑ = −e.
        let dc = dcr - dth * e.dot(&o);
        (dc.is_finite() && dth.is_finite()).then_some((dc, dth))
    }

    /// The fallback: trims scanned from −89° to 89°, the stable root of least |trim|.
    fn trim_scan(&mut self, phi_deg: f64) -> Result<Option<Attitude>, FloatError> {
        let limit = TRIM_LIMIT_DEG.to_radians();
        let step = TRIM_SCAN_DEG.to_radians();
        let count = (2.0 * limit / step).floor() as usize;
        let mut points: Vec<Attitude> = Vec::with_capacity(count + 1);
        let mut guess = f64::NAN;
        for k in 0..=count {
            let th = (-limit + step * k as f64).min(limit);
            let (n, e) = self.plane(phi_deg, th);
            let (c, sec) = self.volume_at(&n, &e, guess, phi_deg)?;
            guess = c;
            points.push(self.attitude(n, e, c, th, sec));
        }
        // Roots: sign changes of the trimming lever. Stable ones (it falls through zero
        // as ϑ grows, dm/dϑ = −GM_L) first, then the least |trim|; an unstable balance is
        // returned only where no stable one exists (flagged by its GM_L).
        let mut brackets: Vec<(bool, Attitude, Attitude)> = points
            .windows(2)
            .filter_map(|w| {
                let (ga, gb) = (w[0].trimming_lever_m, w[1].trimming_lever_m);
                if ga > 0.0 && gb <= 0.0 {
                    Some((true, w[0], w[1]))
                } else if ga <= 0.0 && gb > 0.0 {
                    Some((false, w[0], w[1]))
                } else {
                    None
                }
            })
            .collect();
        brackets.sort_by(|x, y| {
            let mx = (x.1.trim_param_rad + x.2.trim_param_rad).abs();
            let my = (y.1.trim_param_rad + y.2.trim_param_rad).abs();
            y.0.cmp(&x.0).then(mx.total_cmp(&my))
        });
        for (stable, mut a, mut b) in brackets {
            for _ in 0..MAX_HEEL_ITER {
                let (ma, mb) = (a.trimming_lever_m, b.trimming_lever_m);
                let lo = a.trim_param_rad.min(b.trim_param_rad);
                let hi = a.trim_param_rad.max(b.trim_param_rad);
                let mut th =
                    a.trim_param_rad + (b.trim_param_rad - a.trim_param_rad) * ma / (ma - mb);
                if !(th > lo && th < hi) {
                    th = 0.5 * (lo + hi);
                }
                if !(th > lo && th < hi) {
                    break;
                }
                let (n, e) = self.plane(phi_deg, th);
                let guess = n.dot(&a.section.centre_of_flotation);
                let (c, sec) = self.volume_at(&n, &e, guess, phi_deg)?;
                let p = self.attitude(n, e, c, th, sec);
                if p.trimming_lever_m.abs() <= self.tol_m {
                    if !stable || p.gm_l_m > -self.tol_m {
                        return Ok(Some(p));
                    }
                    break;
                }
                if (p.trimming_lever_m > 0.0) == (a.trimming_lever_m > 0.0) {
                    a = p;
                } else {
                    b = p;
                }
            }
        }
        Ok(None)
    }

    /// The contract's rule: upright if balanced and stable, else the first stable root
    /// of the heeling lever met from upright on the side it turns the body.
    fn equilibrium(
        &mut self,
        upright: &Attitude,
        grid: &[Attitude],
    ) -> Result<Attitude, FloatError> {
        let m0 = upright.heeling_lever_m;
        if m0.abs() <= self.tol_m && upright.stable() {
            return Ok(*upright);
        }
        let side = if m0.abs() <= self.tol_m || m0 > 0.0 {
            1.0
        } else {
            -1.0
        };
        let mut prev = *upright;
        for k in 1..=180u32 {
            let phi = side * f64::from(k);
            let here = match grid.get(k as usize) {
                Some(a) if side > 0.0 => *a,
                _ => self.branch(phi, Some(&prev))?,
            };
            if side * here.heeling_lever_m <= 0.0 {
                let root = self.refine(prev, here, side)?;
                if root.stable() {
                    return Ok(root);
                }
            }
            prev = here;
        }
        Err(FloatError::NoStableAttitude)
    }

    /// Newton on heel (`dm/dφ = −GM_T`) kept inside the bracket `[a, b]`, where
    /// `side·m(a) > 0 ≥ side·m(b)`; bisection when a step would leave it.
    fn refine(&mut self, a: Attitude, b: Attitude, side: f64) -> Result<Attitude, FloatError> {
        let phi_of = |x: &Attitude| {
            // The branch heel, continuous through ±180°.
            let h = x.heel_deg;
            if side > 0.0 && h < -90.0 {
                h + 360.0
            } else if side < 0.0 && h > 90.0 {
                h - 360.0
            } else {
                h
            }
        };
        if b.heeling_lever_m.abs() <= self.tol_m {
            return Ok(b);
        }
        let (mut a, mut b) = (a, b);
        let mut best = b;
        for _ in 0..MAX_HEEL_ITER {
            let (pa, pb) = (phi_of(&a), phi_of(&b));
            let (lo, hi) = (pa.min(pb), pa.max(pb));
            let x = if best.heeling_lever_m.abs() <= a.heeling_lever_m.abs() {
                best
            } else {
                a
            };
            let mut phi = if x.gm_t_m > 0.0 {
                phi_of(&x) + (x.heeling_lever_m / x.gm_t_m).to_degrees()
            } else {
                f64::NAN
            };
            if !(phi > lo && phi < hi) {
                phi = 0.5 * (lo + hi);
            }
            if !(phi > lo && phi < hi) {
                break;
            }
            let p = self.branch(phi, Some(&x))?;
            if p.heeling_lever_m.abs() <= self.tol_m {
                return Ok(p);
            }
            if side * p.heeling_lever_m > 0.0 {
                a = p;
            } else {
                b = p;
            }
            if p.heeling_lever_m.abs() < best.heeling_lever_m.abs() {
                best = p;
            }
        }
        Err(FloatError::Heel {
            from_deg: phi_of(&a),
            to_deg: phi_of(&b),
            iterations: MAX_HEEL_ITER,
            residual_m: best.heeling_lever_m,
        })
    }
}
