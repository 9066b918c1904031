//! A closed body cut by a plane in any attitude: the volume below the plane, its centroid,
//! and the waterplane (the body's section by the plane) with its centroid and second
//! moments.
//!
//! Owns the exact integrals only; it knows nothing of masses, equilibrium or angles.
//!
//! # Formulas
//!
//! The plane is `n·x = c` with `n` a unit normal pointing up (into the air); `d = n·x − c`
//! is the signed height above it. The body's facets are wound outward. Each facet is
//! clipped to its part with `d < 0` (a triangle or a quadrilateral; new vertices get
//! `d = 0` exactly), and by the divergence theorem with fields that vanish on the plane
//! (so no cap is needed), for each piece with area vector `a` and vertex heights `d_i`,
//! `D = Σ d_i`, `R = Σ r_i`:
//!
//! * `V = Σ (n·a) D/3` (field `d n`, divergence 1);
//! * `∫ P r dV = P Σ (n·a)/12 (Σ r_i d_i + R D)` with `P = I − n nᵀ` (field `(P r)_j d n`,
//!   divergence `(P r)_j`), from the exact rule `∫ f g dA = A/12 (Σ f_i g_i + Σ f_i Σ g_i)`;
//! * `∫ d dV = Σ (n·a)/24 (Σ d_i² + D²)` (field `½ d² n`), so `∫ n·r dV = ∫ d dV + c V`.
//!
//! The waterplane is never assembled into polygons: every facet that crosses the plane
//! contributes one directed segment of its boundary (from where its boundary enters the
//! liquid to where it leaves, which is the cap's own outward winding), and Green's theorem
//! turns area, first and second moments into sums over those segments in the plane's
//! coordinates `x = e·r`, `y = f·r` (`e × f = n`). Several hulls, holes and chines need no
//! special care, and a crossing point is computed from the edge's below and above ends in
//! a fixed order, so the two facets of an edge give it the same bits and the boundary
//! closes exactly.
//!
//! Coordinates are taken about the hull's bounding-box centre (see [`crate::hydro`]).

use rayon::prelude::*;

use super::super::{CHUNK, Tri, Tris, Vec3};

/// A closed body prepared for cutting: outward-wound facets about a local origin.
#[derive(Clone, Debug)]
pub struct Hull {
    /// Facets relative to `origin`, wound outward.
    tris: Vec<Tri>,
    /// The local origin (bounding-box centre), internal frame, m.
    origin: Vec3,
    /// Half the bounding-box diagonal: every vertex lies within it of `origin`, m.
    radius_m: f64,
    /// The whole enclosed volume, m³.
    volume_m3: f64,
    /// The centroid of the whole volume, internal frame, m.
    centroid: Vec3,
}

/// What the plane cuts off: the volume below it and the waterplane.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Section {
    /// Volume of the body below the plane, m³.
    pub volume_m3: f64,
    /// Its centroid (internal frame, m); meaningless when the volume is 0.
    pub centre_of_buoyancy: Vec3,
    /// Area of the body's section by the plane, m².
    pub waterplane_area_m2: f64,
    /// Centroid of that section (internal frame, m, on the plane); meaningless when the
    /// area is 0.
    pub centre_of_flotation: Vec3,
    /// Second moment of the section about the line through its centroid along `e`, m⁴.
    pub i_e_m4: f64,
    /// Second moment about the line through its centroid along `f = n × e`, m⁴.
    pub i_f_m4: f64,
    /// Product moment `∫ x y dA` about the centroid (`x` along `e`, `y` along `f`), m⁴.
    pub i_ef_m4: f64,
    /// Largest depth of any vertex below the plane, m (0 when none is below).
    pub draft_m: f64,
}

/// Running sums over facets (about the local origin).
#[derive(Clone, Copy, Debug, Default)]
struct Sums {
    vol: f64,
    s1: Vec3,
    sd: f64,
    a2: f64,
    sx: f64,
    sy: f64,
    sxx: f64,
    syy: f64,
    sxy: f64,
    draft: f64,
}

impl Sums {
    fn merge(mut self, o: &Sums) -> Sums {
        self.vol += o.vol;
        self.s1 += o.s1;
        self.sd += o.sd;
        self.a2 += o.a2;
        self.sx += o.sx;
        self.sy += o.sy;
        self.sxx += o.sxx;
        self.syy += o.syy;
        self.sxy += o.sxy;
        self.draft = self.draft.max(o.draft);
        self
    }

    /// One triangle (or a fan piece) below the plane, vertices with their heights `d`.
    #[inline]
    fn piece(&mut self, n: &Vec3, r: [&Vec3; 3], d: [f64; 3]) {
        let a = 0.5 * (r[1] - r[0]).cross(&(r[2] - r[0]));
        let na = n.dot(&a);
        let dd = d[0] + d[1] + d[2];
        self.vol += na * dd / 3.0;
        let rd = r[0] * d[0] + r[1] * d[1] + r[2] * d[2] + (r[0] + r[1] + r[2]) * dd;
        self.s1 += rd * (na / 12.0);
        self.sd += na / 24.0 * (d[0] * d[0] + d[1] * d[1] + d[2] * d[2] + dd * dd);
    }

    /// One directed segment of the waterplane's boundary, in plane coordinates.
    #[inline]
    fn segment(&mut self, (xp, yp): (f64, f64), (xq, yq): (f64, f64)) {
        let cr = xp * yq - xq * yp;
        self.a2 += cr;
        self.sx += (xp + xq) * cr;
        self.sy += (yp + yq) * cr;
        self.sxx += (xp * xp + xp * xq + xq * xq) * cr;
        self.syy += (yp * yp + yp * yq + yq * yq) * cr;
        self.sxy += (xp * yq + 2.0 * xp * yp + 2.0 * xq * yq + xq * yp) * cr;
    }

    /// Adds one outward-wound facet cut by `n·r = c` (local coordinates).
    #[inline]
    fn facet(&mut self, t: &Tri, n: &Vec3, c: f64, e: &Vec3, f: &Vec3) {
        let d = [n.dot(&t[0]) - c, n.dot(&t[1]) - c, n.dot(&t[2]) - c];
        let below = [d[0] < 0.0, d[1] < 0.0, d[2] < 0.0];
        let count = below.iter().filter(|b| **b).count();
        if count == 0 {
            return;
        }
        for k in 0..3 {
            if below[k] {
                self.draft = self.draft.max(-d[k]);
            }
        }
        if count == 3 {
            self.piece(n, [&t[0], &t[1], &t[2]], d);
            return;
        }
        // The part below: at most four vertices, walked in the facet's winding.
        let mut poly = [(Vec3::zeros(), 0.0); 4];
        let mut len = 0;
        let (mut p_in, mut p_out) = (Vec3::zeros(), Vec3::zeros());
        for i in 0..3 {
            let j = (i + 1) % 3;
            if below[i] {
                poly[len] = (t[i], d[i]);
                len += 1;
            }
            if below[i] != below[j] {
                // Always from the below end to the above end, so both facets of the edge
                // compute the same point; the ratio lies in (0, 1].
                let (bv, bd, av, ad) = if below[i] {
                    (t[i], d[i], t[j], d[j])
                } else {
                    (t[j], d[j], t[i], d[i])
                };
                let p = bv + (av - bv) * (bd / (bd - ad));
                poly[len] = (p, 0.0);
                len += 1;
                if below[i] {
                    p_out = p;
                } else {
                    p_in = p;
                }
            }
        }
        for k in 1..len - 1 {
            self.piece(
                n,
                [&poly[0].0, &poly[k].0, &poly[k + 1].0],
                [poly[0].1, poly[k].1, poly[k + 1].1],
            );
        }
        // The cap runs against the submerged piece's cut edge (p_out → p_in).
        self.segment((e.dot(&p_in), f.dot(&p_in)), (e.dot(&p_out), f.dot(&p_out)));
    }
}

impl Hull {
    /// Prepares a body from facets in the internal frame and their orientation.
    ///
    /// `vol_sign[i]` is `+1` when facet `i` is wound outward from the body's volume, `−1`
    /// when inward, `0` to leave it out (a sealed cavity's wall, whose volume belongs to
    /// the body). Returns `None` when no facet is left or the enclosed volume is not
    /// positive and finite.
    pub fn new<T: Tris + ?Sized>(tris: &T, vol_sign: &[i8]) -> Option<Hull> {
        let mut lo = Vec3::repeat(f64::INFINITY);
        let mut hi = Vec3::repeat(f64::NEG_INFINITY);
        let mut kept = Vec::with_capacity(tris.count());
        for (f, s) in vol_sign.iter().enumerate().take(tris.count()) {
            let t = match s {
                1 => tris.tri(f),
                -1 => {
                    let t = tris.tri(f);
                    [t[0], t[2], t[1]]
                }
                _ => continue,
            };
            for v in &t {
                lo = lo.inf(v);
                hi = hi.sup(v);
            }
            kept.push(t);
        }
        if kept.is_empty() {
            return None;
        }
        let origin = 0.5 * (lo + hi);
        for t in &mut kept {
            for v in t.iter_mut() {
                *v -= origin;
            }
        }
        let radius_m = 0.5 * (hi - lo).norm();
        let mut hull = Hull {
            tris: kept,
            origin,
            radius_m,
            volume_m3: 0.0,
            centroid: origin,
        };
        let up = Vec3::new(0.0, 0.0, 1.0);
        let whole = hull.section(&up, origin.z + 2.0 * radius_m + 1.0, &Vec3::x());
        if !(whole.volume_m3 > 0.0 && whole.volume_m3.is_finite() && radius_m.is_finite()) {
            return None;
        }
        hull.volume_m3 = whole.volume_m3;
        hull.centroid = whole.centre_of_buoyancy;
        Some(hull)
    }

    /// The whole enclosed volume, m³.
    pub fn volume_m3(&self) -> f64 {
        self.volume_m3
    }

    /// The centroid of the whole volume, internal frame, m.
    pub fn centroid(&self) -> Vec3 {
        self.centroid
    }

    /// The bounding-box diagonal, m.
    pub fn diagonal_m(&self) -> f64 {
        2.0 * self.radius_m
    }

    /// The bounding-box centre, internal frame, m.
    pub fn origin(&self) -> Vec3 {
        self.origin
    }

    /// Number of facets that bound the volume.
    pub fn facets(&self) -> usize {
        self.tris.len()
    }

    /// Elevations `c` between which the plane `n·x = c` certainly cuts nothing below /
    /// everything below: `n·origin ∓ radius`.
    pub fn plane_bounds(&self, n: &Vec3) -> (f64, f64) {
        let mid = n.dot(&self.origin);
        (mid - self.radius_m, mid + self.radius_m)
    }

    /// Cuts the body by the plane `n·x = c` (internal frame; `n` a unit vector pointing
    /// up, `e` a unit vector perpendicular to it that names the waterplane's first axis).
    ///
    /// Deterministic: fixed chunks of [`CHUNK`] facets summed in order, so the same bits
    /// for any number of threads.
    pub fn section(&self, n: &Vec3, c: f64, e: &Vec3) -> Section {
        let c_local = c - n.dot(&self.origin);
        let f = n.cross(e);
        let partials: Vec<Sums> = self
            .tris
            .par_chunks(CHUNK)
            .map(|chunk| {
                let mut s = Sums::default();
                for t in chunk {
                    s.facet(t, n, c_local, e, &f);
                }
                s
            })
            .collect();
        let s = partials.iter().fold(Sums::default(), |a, p| a.merge(p));
        let vol = s.vol;
        let in_plane = s.s1 - n * n.dot(&s.s1);
        let first = in_plane + n * (s.sd + c_local * vol);
        let b = if vol > 0.0 {
            self.origin + first / vol
        } else {
            self.origin
        };
        let area = 0.5 * s.a2;
        let (xf, yf) = if area > 0.0 {
            (s.sx / 6.0 / area, s.sy / 6.0 / area)
        } else {
            (0.0, 0.0)
        };
        let fc = self.origin + e * xf + f * yf + n * c_local;
        let (ixx, iyy, ixy) = (s.sxx / 12.0, s.syy / 12.0, s.sxy / 24.0);
        Section {
            volume_m3: vol,
            centre_of_buoyancy: b,
            waterplane_area_m2: area,
            centre_of_flotation: fc,
            i_e_m4: iyy - area * yf * yf,
            i_f_m4: ixx - area * xf * xf,
            i_ef_m4: ixy - area * xf * yf,
            draft_m: s.draft,
        }
    }
}
