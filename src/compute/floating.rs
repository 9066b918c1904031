//! The floating body of a case: the mesh's closed outer skin as a [`Hull`], the solver of
//! [`crate::hydro::float`], and its results mapped to mesh axes as the contract's
//! `floating` field (plus our extras: the upright point, the free-surface correction and
//! the solver's effort).

use serde::Serialize;

use super::surface::Surface;
use super::{ComputeError, Prepared};
use crate::hydro::float::{self, Attitude, Body, Hull};
use crate::hydro::{Tally, UpAxis, Vec3, WetSide};
use crate::sidecar::{Floating, Sidecar};

/// The caution written with every floating result.
pub const FLOATING_CAUTION: &str = "Hydrostatics only: still liquid, rigid body, solid weights \
(free surface by the user's tank moments, on GM and, as a virtual rise of G times sin(heel), on \
the curve the criteria use). Towing, float-out and installation need more: wind heel, waves, \
dynamic and mooring effects, the angle of flooding and the local rules. Criteria are evaluated \
as numbers only; no compliance implied. Have a licensed engineer review any use.";

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct FloatingResult {
    pub mass: f64,
    pub centre_of_gravity: [f64; 3],
    pub liquid: String,
    pub length_axis: &'static str,
    pub equilibrium: Option<EquilibriumOut>,
    pub sinks: Option<f64>,
    pub righting_lever: Vec<LeverOut>,
    pub stability: Option<StabilityOut>,
    pub criteria: Option<CriteriaOut>,
    /// Extra: the upright point of the trim-free branch (why the body lists or lolls).
    pub upright: Option<UprightOut>,
    /// Extra: Σ ρ_t i_t of the slack tanks, kg·m, and the virtual rise of G it gives, m.
    pub free_surface_moment: f64,
    pub free_surface_rise: f64,
    /// Extra: how many times the body was cut by a plane.
    pub evaluations: usize,
    pub caution: &'static str,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Pair {
    pub transverse: f64,
    pub longitudinal: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct EquilibriumOut {
    pub normal: [f64; 3],
    pub elevation: f64,
    pub heel: f64,
    pub trim: Option<f64>,
    pub displacement: f64,
    pub centre_of_buoyancy: [f64; 3],
    pub draft: f64,
    pub reserve_buoyancy: f64,
    pub waterplane_area: f64,
    pub centre_of_flotation: [f64; 3],
    pub metacentric_radius: Pair,
    pub metacentric_height: Pair,
    /// Extra: GM less the free-surface rise (equal to `metacentric_height` without tanks).
    pub metacentric_height_corrected: Pair,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct LeverOut {
    pub heel: f64,
    pub gz: f64,
    pub trim: Option<f64>,
    pub displacement_check: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct StabilityOut {
    pub max_gz: f64,
    pub angle_of_max_gz: f64,
    pub vanishing_angle: Option<f64>,
    pub area_0_30: f64,
    pub area_0_40: f64,
    pub area_30_40: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct CheckOut {
    pub what: String,
    pub required: f64,
    pub actual: f64,
    pub pass: bool,
    pub checked: String,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct CriteriaOut {
    pub name: String,
    pub source: String,
    pub from_memory: bool,
    pub checks: Vec<CheckOut>,
    pub pass: bool,
    pub free_surface_corrected: bool,
    pub note: String,
    pub compliance: &'static str,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct UprightOut {
    pub heeling_lever: f64,
    pub metacentric_height: Pair,
}

/// The default length axis: the horizontal mesh axis of the larger bounding-box extent
/// (x before y before z on a tie), signed +.
fn default_length_axis(up: UpAxis, extent: [f64; 3]) -> UpAxis {
    let u = up.unit();
    let mut best: Option<(usize, f64)> = None;
    for k in 0..3 {
        if u[k] != 0.0 {
            continue;
        }
        if best.is_none_or(|(_, e)| extent[k] > e) {
            best = Some((k, extent[k]));
        }
    }
    match best.map_or(0, |b| b.0) {
        0 => UpAxis::PosX,
        1 => UpAxis::PosY,
        _ => UpAxis::PosZ,
    }
}

/// Solves the case's floating body: its result, the free surface the case's loads are
/// integrated on (the solved plane; when the body sinks, a level at its top, upright), and
/// warnings for the result.
pub(super) fn floating(
    prep: &Prepared,
    sidecar: &Sidecar,
    case: &str,
    f: &Floating,
    density_kg_m3: f64,
    tally: &Tally<'_>,
) -> Result<(FloatingResult, Surface, Vec<String>), ComputeError> {
    let outside = sidecar.wet_side.is_none_or(|w| w == WetSide::Outside);
    if !prep.wet.closed || !outside {
        return Err(ComputeError::Floating {
            message: "only a closed mesh with the liquid outside can float (an open mesh, \"inside\", or a mesh with cavities open to the liquid cannot)".to_owned(),
        });
    }
    let hull = Hull::new(&prep.tris, &prep.wet.vol_sign).ok_or(ComputeError::Floating {
        message: "the mesh encloses no positive volume to float on".to_owned(),
    })?;
    let frame = prep.frame;
    let c = prep.centre;
    let (lo, hi) = prep.local_box;
    let ext = frame.vector_out(hi - lo).map(f64::abs);
    let axis = f
        .length_axis
        .unwrap_or_else(|| default_length_axis(sidecar.up, ext));
    let a = axis.unit();
    let body = Body {
        mass_kg: f.mass_kg,
        centre_of_gravity: frame.vector_in(f.centre_of_gravity_m) - c,
        density_kg_m3,
        length_axis: frame.vector_in([a.x, a.y, a.z]),
    };
    let sol = float::solve_with(&hull, &body, &f.heel_angles_deg, tally).map_err(|e| {
        ComputeError::Floating {
            message: e.to_string(),
        }
    })?;
    let out = |v: Vec3| frame.vector_out(v);
    let point = |v: Vec3| frame.vector_out(v + c);
    let mut warnings = Vec::new();
    let surface = match &sol.equilibrium {
        Some(e) => Surface::new(e.normal, e.elevation_m + e.normal.dot(&c), f.liquid),
        None => {
            warnings.push(format!(
                "case \"{case}\": the floating body sinks, so its loads are computed wholly submerged, upright, with the free surface at its top"
            ));
            Surface::new(Vec3::z(), hi.z + c.z, f.liquid)
        }
    };
    let balanced_only = sol
        .listed
        .iter()
        .chain(&sol.grid)
        .filter(|a| a.gm_l_m < -float::EQUILIBRIUM_REL * (hi - lo).norm())
        .count();
    if balanced_only > 0 {
        warnings.push(format!(
            "case \"{case}\": at {balanced_only} heel angle(s) of the righting-lever curve no trim with positive longitudinal metacentric height exists within ±89°; there the curve uses the balance of least |trim|"
        ));
    }
    let fsm: f64 = f.free_surface.iter().map(|(_, i, rho)| i * rho).sum();
    let rise = fsm / f.mass_kg;
    let total = sol.volume_total_m3;
    let equilibrium = sol.equilibrium.as_ref().map(|e: &Attitude| {
        let s = &e.section;
        EquilibriumOut {
            normal: out(e.normal),
            elevation: e.elevation_m + e.normal.dot(&c),
            heel: e.heel_deg,
            trim: e.trim_deg,
            displacement: s.volume_m3,
            centre_of_buoyancy: point(s.centre_of_buoyancy),
            draft: s.draft_m,
            reserve_buoyancy: (total - s.volume_m3) / total,
            waterplane_area: s.waterplane_area_m2,
            centre_of_flotation: point(s.centre_of_flotation),
            metacentric_radius: Pair {
                transverse: e.bm_t_m,
                longitudinal: e.bm_l_m,
            },
            metacentric_height: Pair {
                transverse: e.gm_t_m,
                longitudinal: e.gm_l_m,
            },
            metacentric_height_corrected: Pair {
                transverse: e.gm_t_m - rise,
                longitudinal: e.gm_l_m - rise,
            },
        }
    });
    let v0 = sol.displacement_m3;
    let righting_lever = sol
        .listed
        .iter()
        .zip(&f.heel_angles_deg)
        .map(|(a, phi)| LeverOut {
            heel: *phi,
            gz: a.righting_lever_m(),
            trim: a.trim_deg,
            displacement_check: a.section.volume_m3 - v0,
        })
        .collect();
    let grid: Vec<f64> = sol.grid.iter().map(Attitude::righting_lever_m).collect();
    let stability = (!grid.is_empty()).then(|| {
        let s = float::summarise(&grid);
        StabilityOut {
            max_gz: s.max_gz_m,
            angle_of_max_gz: s.angle_of_max_gz_deg,
            vanishing_angle: s.vanishing_angle_deg,
            area_0_30: s.area_0_30_m_rad,
            area_0_40: s.area_0_40_m_rad,
            area_30_40: s.area_30_40_m_rad,
        }
    });
    let criteria = match (&f.criteria, &sol.equilibrium) {
        (Some(set), Some(eq)) => {
            // The curve the criteria see: GZ less the virtual rise of G times sin φ.
            let corrected: Vec<f64> = grid
                .iter()
                .enumerate()
                .map(|(k, g)| g - rise * (k as f64).to_radians().sin())
                .collect();
            let list: Vec<_> = set.checks.iter().map(|c| c.criterion).collect();
            let checks: Vec<CheckOut> = float::evaluate(&list, &corrected, eq.gm_t_m - rise)
                .into_iter()
                .zip(&set.checks)
                .map(|(r, c)| CheckOut {
                    what: c.what.clone(),
                    required: r.required,
                    actual: r.actual,
                    pass: r.pass,
                    checked: c.checked.clone(),
                })
                .collect();
            Some(CriteriaOut {
                name: set.name.clone(),
                source: set.source.clone(),
                from_memory: set.checks.iter().any(|c| c.from_memory()),
                pass: checks.iter().all(|c| c.pass),
                checks,
                free_surface_corrected: fsm > 0.0,
                note: set.note.clone(),
                compliance: "no compliance implied",
            })
        }
        _ => None,
    };
    let result = FloatingResult {
        mass: f.mass_kg,
        centre_of_gravity: f.centre_of_gravity_m,
        liquid: sidecar.liquids[f.liquid].name.clone(),
        length_axis: axis.as_str(),
        equilibrium,
        sinks: sol.sinks_kg,
        righting_lever,
        stability,
        criteria,
        upright: sol.upright.as_ref().map(|u| UprightOut {
            heeling_lever: u.heeling_lever_m,
            metacentric_height: Pair {
                transverse: u.gm_t_m,
                longitudinal: u.gm_l_m,
            },
        }),
        free_surface_moment: fsm,
        free_surface_rise: rise,
        evaluations: sol.evaluations,
        caution: FLOATING_CAUTION,
    };
    Ok((result, surface, warnings))
}

#[cfg(test)]
mod tests {
    use super::super::compute;
    use super::super::tests::{mesh, side};
    use approx::assert_relative_eq;

    #[test]
    fn a_box_floats_per_case_and_sinks_when_overloaded() {
        // Box 20 × 6 × 3 m in sea water: T = m/(ρ L B), GM = T/2 + B²/(12 T) − KG.
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 1);
        let s = side(
            r#"{"units": "m", "liquid": {"level": 1.0, "density": 1025},
                "floating": {"mass": 150000, "centre_of_gravity": [0, 0, 1.8]},
                "cases": [{"name": "light"}, {"name": "heavy", "floating": {"mass": 4.0e5}}]}"#,
        );
        let r = compute("b", &mesh(vec![("b", hull)]), &s).expect("computes");
        let f = r.cases[0].floating.as_ref().expect("floating");
        assert_eq!(f.length_axis, "+x");
        let t = 150_000.0 / (1025.0 * 120.0);
        let e = f.equilibrium.as_ref().expect("floats");
        assert_relative_eq!(e.draft, t, max_relative = 1e-9);
        assert_relative_eq!(
            e.metacentric_height.transverse,
            t / 2.0 + 36.0 / (12.0 * t) - 1.8,
            max_relative = 1e-9
        );
        assert_eq!(f.righting_lever.len(), 33);
        // 4e5 kg > ρ V = 1025 · 360 = 369 000 kg: sinks by the difference.
        let h = r.cases[1].floating.as_ref().expect("floating");
        assert_relative_eq!(
            h.sinks.expect("sinks"),
            4.0e5 - 369_000.0,
            max_relative = 1e-12
        );
        assert!(h.equilibrium.is_none() && h.righting_lever.is_empty());
    }

    #[test]
    fn a_heel_angle_out_of_range_is_refused_at_its_key() {
        let err = crate::sidecar::parse_sidecar(
            std::path::Path::new("p.json"),
            r#"{"units": "m", "liquid": {"level": 1.0, "density": 1025},
  "floating": {"mass": 1, "centre_of_gravity": [0, 0, 0], "heel_angles": [0, 95]}}"#,
        )
        .expect_err("refused");
        let m = err.to_string();
        assert!(
            m.contains("p.json") && m.contains("heel_angles[1]") && m.contains("95"),
            "{m}"
        );
    }

    const G: f64 = 9.80665;

    /// Distance from `p` to the line of action of `l`.
    fn miss(l: &crate::compute::LineOut, p: [f64; 3]) -> f64 {
        let d = nalgebra::Vector3::from(l.direction).normalize();
        let w = nalgebra::Vector3::from(p) - nalgebra::Vector3::from(l.point);
        w.cross(&d).norm()
    }

    #[test]
    fn a_floating_box_carries_its_weight_vertically_through_g_without_a_level() {
        // Archimedes at equilibrium: F = m g along up, through G (and B); the displaced
        // volume is m/ρ and the wetted area the bottom plus the walls up to T = m/(ρ L B).
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 2);
        let s = side(
            r#"{"units": "m", "liquid": {"density": 1025},
                "floating": {"mass": 150000, "centre_of_gravity": [0.5, 0, 1.8]}}"#,
        );
        let r = compute("b", &mesh(vec![("b", hull)]), &s).expect("computes");
        let l = &r.cases[0].loads;
        let w = 150_000.0 * G;
        assert_relative_eq!(l.vertical_force, w, max_relative = 1e-9);
        assert!(l.horizontal_force <= 1e-9 * w, "{}", l.horizontal_force);
        let line = l.line_of_action.as_ref().expect("non-zero");
        assert!(
            miss(line, [0.5, 0.0, 1.8]) < 1e-8,
            "{}",
            miss(line, [0.5, 0.0, 1.8])
        );
        let b = l.centre_of_buoyancy.expect("closed");
        assert!(miss(line, b) < 1e-8);
        assert_relative_eq!(
            l.submerged_volume.expect("closed"),
            150_000.0 / 1025.0,
            max_relative = 1e-9
        );
        // G 0.5 m off the middle: the body trims, and the force is along the trimmed n
        // (vertical in the world), not along the mesh's up axis.
        let n = r.cases[0]
            .floating
            .as_ref()
            .and_then(|f| f.equilibrium.as_ref())
            .expect("floats")
            .normal;
        assert!(n[0].abs() > 1e-4, "it trims: {n:?}");
        for (f, n) in l.force.iter().zip(n) {
            assert_relative_eq!(*f, w * n, epsilon = 1e-9 * w);
        }
    }

    #[test]
    fn a_heeled_box_gets_m_g_along_the_solved_normal_and_no_moment_about_g() {
        // G 0.6 m off the centre line: the box lists. The liquid's force must be m g along
        // the solved free-surface normal n and its moment about G zero (a free body in
        // equilibrium under weight and buoyancy alone).
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 2);
        let g = [0.0, 0.6, 2.0];
        let s = side(
            r#"{"units": "m", "moment_about": [0, 0.6, 2.0], "liquid": {"level": 99, "density": 1025},
                "floating": {"mass": 200000, "centre_of_gravity": [0, 0.6, 2.0]}}"#,
        );
        let m = mesh(vec![("b", hull)]);
        let r = compute("b", &m, &s).expect("computes");
        let c = &r.cases[0];
        let e = c
            .floating
            .as_ref()
            .and_then(|f| f.equilibrium.as_ref())
            .expect("floats");
        assert!(e.heel.abs() > 1.0, "it lists: {}", e.heel);
        let w = 200_000.0 * G;
        let diag = (20.0f64 * 20.0 + 36.0 + 9.0).sqrt();
        for k in 0..3 {
            assert_relative_eq!(c.loads.force[k], w * e.normal[k], epsilon = 1e-9 * w);
            assert!(
                c.loads.moment[k].abs() <= 1e-8 * w * diag,
                "{:?}",
                c.loads.moment
            );
        }
        assert_relative_eq!(c.loads.vertical_force, w, max_relative = 1e-9);
        assert!(c.loads.horizontal_force <= 1e-9 * w);
        let line = c.loads.line_of_action.as_ref().expect("non-zero");
        assert!(miss(line, g) < 1e-8 * diag);
        // The echoed level of the liquid is the solved free surface, not the 99 given.
        assert_relative_eq!(c.liquids[0].level, e.elevation, max_relative = 1e-15);
        // The per-facet field is on the same surface: its rows sum to the case force.
        let f = crate::compute::field(&m, &s, 0).expect("field");
        let mut sum = [0.0; 3];
        for row in &f.facets {
            for (s, x) in sum.iter_mut().zip(row.force) {
                *s += x;
            }
        }
        for (s, x) in sum.iter().zip(c.loads.force) {
            assert_relative_eq!(*s, x, epsilon = 1e-9 * w);
        }
        let wet: f64 = f.pieces.iter().filter(|p| p.wetted).map(|p| p.area).sum();
        assert_relative_eq!(wet, c.loads.wetted_area, max_relative = 1e-12);
        // Consistent nodal forces: at the mesh's own vertices, Σ f_i = F and
        // Σ (x_i − O) × f_i = M about the moment point O = G (both zero-moment here).
        let mut total = nalgebra::Vector3::zeros();
        let mut moment = nalgebra::Vector3::zeros();
        for node in &f.nodes {
            let x = nalgebra::Vector3::from(node.position);
            let on_box = (0..3).any(|k| {
                let (lo, hi) = ([-10.0, -3.0, 0.0][k], [10.0, 3.0, 3.0][k]);
                x[k] == lo || x[k] == hi
            });
            assert!(on_box, "a mesh vertex: {x:?}");
            let fi = nalgebra::Vector3::from(node.force);
            total += fi;
            moment += (x - nalgebra::Vector3::from(g)).cross(&fi);
        }
        for k in 0..3 {
            assert_relative_eq!(total[k], c.loads.force[k], epsilon = 1e-9 * w);
            assert!(moment[k].abs() <= 1e-8 * w * diag, "{moment:?}");
        }
    }

    #[test]
    fn an_upright_floating_body_has_the_loads_of_a_fixed_one_at_its_draft() {
        // G on the centre line and GM > 0: it floats upright at T = m/(ρ L B); every load
        // must equal the non-floating calculation at level T (parts and all).
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 2);
        let t = 150_000.0 / (1025.0 * 120.0);
        let fl = side(
            r#"{"units": "m", "moment_about": [1, 2, 3], "liquid": {"density": 1025},
                "floating": {"mass": 150000, "centre_of_gravity": [0, 0, 1.0]}}"#,
        );
        let fixed = side(&format!(
            r#"{{"units": "m", "moment_about": [1, 2, 3], "liquid": {{"level": {t}, "density": 1025}}}}"#
        ));
        let m = mesh(vec![("b", hull)]);
        let a = compute("b", &m, &fl).expect("computes");
        let b = compute("b", &m, &fixed).expect("computes");
        let (a, b) = (&a.cases[0].loads, &b.cases[0].loads);
        let w = b.vertical_force;
        for k in 0..3 {
            assert_relative_eq!(a.force[k], b.force[k], epsilon = 1e-9 * w);
            assert_relative_eq!(a.moment[k], b.moment[k], epsilon = 1e-9 * w * 21.0);
        }
        assert_relative_eq!(a.uplift, b.uplift, max_relative = 1e-9);
        assert_relative_eq!(a.downthrust, b.downthrust, epsilon = 1e-9 * w);
        assert_relative_eq!(a.wetted_area, b.wetted_area, max_relative = 1e-9);
        assert_relative_eq!(a.max_pressure, b.max_pressure, max_relative = 1e-9);
        let (va, vb) = (
            a.submerged_volume.expect("v"),
            b.submerged_volume.expect("v"),
        );
        assert_relative_eq!(va, vb, max_relative = 1e-9);
    }

    #[test]
    fn a_sinking_body_is_loaded_wholly_submerged_and_says_so() {
        // 4e5 kg > ρ V = 369 000 kg: the loads are the buoyancy of the whole box, ρ g V.
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 1);
        let s = side(
            r#"{"units": "m", "liquid": {"density": 1025},
                "floating": {"mass": 4.0e5, "centre_of_gravity": [0, 0, 1]}}"#,
        );
        let r = compute("b", &mesh(vec![("b", hull)]), &s).expect("computes");
        assert_relative_eq!(
            r.cases[0].loads.vertical_force,
            1025.0 * G * 360.0,
            max_relative = 1e-12
        );
        assert!(
            r.warnings.iter().any(|w| w.contains("sinks")),
            "{:?}",
            r.warnings
        );
    }

    #[test]
    fn only_the_floating_liquid_may_leave_out_its_level() {
        let err = crate::sidecar::parse_sidecar(
            std::path::Path::new("p.json"),
            r#"{"units": "m", "liquids": {"sea": {"density": 1025}, "tank": {"density": 1000}},
  "parts": {"*": {"liquid": "sea"}},
  "floating": {"mass": 1, "centre_of_gravity": [0, 0, 0], "liquid": "sea"}}"#,
        )
        .expect_err("the tank has no level");
        let m = err.to_string();
        assert!(
            m.contains("p.json") && m.contains("level") && m.contains("tank"),
            "{m}"
        );
    }

    #[test]
    fn the_floating_liquid_gets_density_warnings_but_no_level_warnings() {
        // No level is given (0 stands in, below this box at z 1…4): no warning about the
        // free surface, but 1.025 kg/m³ (t/m³ written for kg/m³) is still flagged.
        let hull = shapes::box_solid([-10.0, -3.0, 1.0], [10.0, 3.0, 4.0], 1);
        let s = side(
            r#"{"units": "m", "liquid": {"density": 1.025},
                "floating": {"mass": 100, "centre_of_gravity": [0, 0, 2]}}"#,
        );
        let r = compute("b", &mesh(vec![("b", hull)]), &s).expect("computes");
        assert!(
            r.warnings.iter().any(|w| w.contains("density 1.025")),
            "{:?}",
            r.warnings
        );
        assert!(
            !r.warnings.iter().any(|w| w.contains("free surface (")),
            "{:?}",
            r.warnings
        );
    }
}
