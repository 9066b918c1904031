//! Closed forms and published worked examples for the floating solver. Every expected
//! value is written beside its check with its formula or source.

use approx::assert_relative_eq;

use super::*;
use crate::hydro::{Tri, Vec3};

fn tris(t: &[shapes::Triangle]) -> Vec<Tri> {
    t.iter()
        .map(|f| f.map(|p| Vec3::new(p[0], p[1], p[2])))
        .collect()
}

fn hull(t: &[shapes::Triangle]) -> Hull {
    let t = tris(t);
    Hull::new(&t, &vec![1; t.len()]).expect("a closed solid")
}

/// A box barge `l × b × d` with its keel at z = 0, centred on x = y = 0.
fn barge(l: f64, b: f64, d: f64) -> Hull {
    hull(&shapes::box_solid(
        [-l / 2.0, -b / 2.0, 0.0],
        [l / 2.0, b / 2.0, d],
        2,
    ))
}

fn body(mass_kg: f64, g: [f64; 3], rho: f64) -> Body {
    Body {
        mass_kg,
        centre_of_gravity: Vec3::new(g[0], g[1], g[2]),
        density_kg_m3: rho,
        length_axis: Vec3::x(),
    }
}

/// Wall-sided formula: GZ = sin φ (GM + ½ BM tan² φ).
fn wall_sided(gm: f64, bm: f64, phi_deg: f64) -> f64 {
    let p = phi_deg.to_radians();
    p.sin() * (gm + 0.5 * bm * p.tan().powi(2))
}

#[test]
fn a_box_cut_level_has_the_closed_form_volume_centroid_and_waterplane() {
    let (l, b, t) = (20.0, 6.0, 1.3);
    let h = barge(l, b, 3.0);
    let s = h.section(&Vec3::z(), t, &Vec3::x());
    // V = L B T; B at half the draft; A = L B; I about the length axis L B³/12, about
    // the transverse axis B L³/12; the draft is T.
    assert_relative_eq!(s.volume_m3, l * b * t, max_relative = 1e-13);
    assert_relative_eq!(s.centre_of_buoyancy.z, t / 2.0, max_relative = 1e-13);
    assert!(s.centre_of_buoyancy.xy().norm() < 1e-13);
    assert_relative_eq!(s.waterplane_area_m2, l * b, max_relative = 1e-13);
    assert_relative_eq!(s.i_e_m4, l * b.powi(3) / 12.0, max_relative = 1e-13);
    assert_relative_eq!(s.i_f_m4, b * l.powi(3) / 12.0, max_relative = 1e-13);
    assert!(s.i_ef_m4.abs() < 1e-10);
    assert_relative_eq!(s.draft_m, t, max_relative = 1e-13);
    assert_relative_eq!(s.centre_of_flotation.z, t, max_relative = 1e-13);
}

#[test]
fn a_cube_cut_through_its_centre_in_any_direction_keeps_half_its_volume() {
    // Central symmetry: any plane through the centre halves the volume, and the section
    // of a cube by a plane normal to a body diagonal through its centre is the regular
    // hexagon of side a/√2, area (3√3/2)(a²/2).
    let a = 2.0;
    let h = hull(&shapes::box_solid([-1.0; 3], [1.0; 3], 3));
    for n in [
        Vec3::new(0.3, -0.2, 0.9),
        Vec3::new(1.0, 1.0, 1.0),
        Vec3::new(-0.7, 0.1, 0.2),
    ] {
        let n = n.normalize();
        let e = n.cross(&Vec3::z()).normalize();
        let s = h.section(&n, 0.0, &e);
        assert_relative_eq!(s.volume_m3, 4.0, max_relative = 1e-13);
    }
    let n = Vec3::new(1.0, 1.0, 1.0).normalize();
    let e = n.cross(&Vec3::z()).normalize();
    let s = h.section(&n, 0.0, &e);
    let side = a / 2f64.sqrt();
    assert_relative_eq!(
        s.waterplane_area_m2,
        1.5 * 3f64.sqrt() * side * side,
        max_relative = 1e-13
    );
    // The hexagon's centroid is the cube's centre; its second moment is the same about
    // every axis in its plane (regular polygon): (5√3/16) side⁴.
    assert!(s.centre_of_flotation.norm() < 1e-13);
    let i = 5.0 * 3f64.sqrt() / 16.0 * side.powi(4);
    assert_relative_eq!(s.i_e_m4, i, max_relative = 1e-12);
    assert_relative_eq!(s.i_f_m4, i, max_relative = 1e-12);
}

#[test]
fn a_box_barge_floats_at_the_closed_form_draft_with_kb_bm_and_bm_l() {
    // Box barge 20 × 6 × 3 m in sea water, 150 t, KG 1.8 m.
    // T = m / (ρ L B); KB = T/2; BM = B²/(12 T); BM_L = L²/(12 T); GM = KB + BM − KG.
    let (l, b, d, rho, m, kg) = (20.0, 6.0, 3.0, 1025.0, 150_000.0, 1.8);
    let h = barge(l, b, d);
    let sol = solve(&h, &body(m, [0.0, 0.0, kg], rho), &[]).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    let t = m / (rho * l * b);
    assert_relative_eq!(eq.section.draft_m, t, max_relative = 1e-9);
    assert_relative_eq!(eq.elevation_m, t, max_relative = 1e-9);
    assert!(eq.heel_deg.abs() < 1e-9 && eq.trim_deg.expect("defined").abs() < 1e-9);
    assert_relative_eq!(
        eq.section.centre_of_buoyancy.z,
        t / 2.0,
        max_relative = 1e-9
    );
    assert_relative_eq!(eq.bm_t_m, b * b / (12.0 * t), max_relative = 1e-9);
    assert_relative_eq!(eq.bm_l_m, l * l / (12.0 * t), max_relative = 1e-9);
    assert_relative_eq!(
        eq.gm_t_m,
        t / 2.0 + b * b / (12.0 * t) - kg,
        max_relative = 1e-9
    );
    assert_relative_eq!(
        eq.gm_l_m,
        t / 2.0 + l * l / (12.0 * t) - kg,
        max_relative = 1e-9
    );
    assert_relative_eq!(eq.section.waterplane_area_m2, l * b, max_relative = 1e-12);
    assert!(sol.sinks_kg.is_none());
}

#[test]
fn the_box_of_the_published_example_follows_the_wall_sided_formula_until_the_deck_edge() {
    // Barrass & Derrett, Ship Stability for Masters and Mates, ch. 15, Example 2 (read):
    // box 65 × 12 × 8 m, KG 4 m, salt water 1.025 t/m³, even keel at 4 m draft:
    // W = 3198 t, KB = 2 m, BM = B²/12d = 3 m, GM = 1 m.
    let (l, b, d, rho) = (65.0, 12.0, 8.0, 1025.0);
    let m = rho * l * b * 4.0;
    assert_relative_eq!(m / 1000.0, 3198.0, max_relative = 1e-12);
    let h = barge(l, b, d);
    let angles = [5.0, 25.0, -25.0];
    let sol = solve(&h, &body(m, [0.0, 0.0, 4.0], rho), &angles).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    assert_relative_eq!(eq.gm_t_m, 1.0, max_relative = 1e-9);
    assert_relative_eq!(eq.bm_t_m, 3.0, max_relative = 1e-9);
    // The book's small-angle GZ at 5°, GM sin 5° = 0.0872 m, omits the tan² term its note
    // allows to drop up to 5°: within 1.2 % of the exact value.
    assert_relative_eq!(
        sol.listed[0].righting_lever_m(),
        0.0872,
        max_relative = 0.012
    );
    // Deck-edge immersion and bottom emergence both at tan φ = 4/6 (33.69°): below it
    // the clipped section is exactly wall-sided.
    for k in 0..=33 {
        let phi = k as f64;
        let gz = sol.grid[k].righting_lever_m();
        assert!((gz - wall_sided(1.0, 3.0, phi)).abs() < 1e-9, "{phi}° {gz}");
    }
    // Symmetric body: GZ(−25°) = GZ(25°), the listed points' trims are zero.
    assert!((sol.listed[1].righting_lever_m() - sol.listed[2].righting_lever_m()).abs() < 1e-9);
    assert!(sol.listed[2].heel_deg < 0.0);
    // Beyond the deck edge, the research note's exact clipped-section values [D]
    // (stability.md §5, E2 table, six decimals).
    for (phi, gz) in [
        (40, 1.133652),
        (50, 1.155850),
        (60, 0.981481),
        (70, 0.701905),
        (80, 0.364191),
    ] {
        assert!(
            (sol.grid[phi].righting_lever_m() - gz).abs() < 2e-6,
            "{phi}°"
        );
    }
    // Areas: closed form A(φ) = GM(1 − cos φ) + (BM/2)(sec φ + cos φ − 2) to 30°; the
    // grid's trapezoid rule is within (h²/12)·30°·max|GZ''| of it.
    let s = summarise(
        &sol.grid
            .iter()
            .map(Attitude::righting_lever_m)
            .collect::<Vec<_>>(),
    );
    let p = 30f64.to_radians();
    let a30 = (1.0 - p.cos()) + 1.5 * (1.0 / p.cos() + p.cos() - 2.0);
    assert!(
        (s.area_0_30_m_rad - a30).abs() < 1e-4,
        "{}",
        s.area_0_30_m_rad
    );
    // The note's derived maximum, 1.17887 m near 45.5°, lies between grid points: the
    // grid's is at 45° or 46°, no larger, and within ½·|GZ''|·(0.5°)² of it.
    assert!(s.max_gz_m <= 1.17887 + 1e-6, "{}", s.max_gz_m);
    assert!(
        (s.max_gz_m - 1.17887).abs() < 5e-4,
        "{} {}",
        s.max_gz_m,
        s.angle_of_max_gz_deg
    );
    assert!(s.angle_of_max_gz_deg == 45.0 || s.angle_of_max_gz_deg == 46.0);
}

#[test]
fn the_published_wall_sided_example_at_25_degrees() {
    // Barrass & Derrett, ch. 15, Example 1 (read): KB 3 m, KM 6 m, KG 5.5 m, 25° of heel:
    // GZ = (0.5 + ½·3·tan²25°) sin 25° = 0.35 m (the book rounds). A box with the same
    // KB and BM: draft 6 m, BM = B²/(12·6) = 3 → B = √216; deep enough that the deck edge
    // stays dry past 25° (depth 14 m: tan φ_limit = 6 / (B/2) → 39°).
    let b = 216f64.sqrt();
    let h = barge(40.0, b, 14.0);
    let m = 1025.0 * 40.0 * b * 6.0;
    let sol = solve(&h, &body(m, [0.0, 0.0, 5.5], 1025.0), &[25.0]).expect("floats");
    let gz = sol.listed[0].righting_lever_m();
    assert!((gz - 0.35).abs() < 0.005, "{gz}");
    assert!((gz - wall_sided(0.5, 3.0, 25.0)).abs() < 1e-9, "{gz}");
}

#[test]
fn a_box_with_an_off_centre_weight_lists_to_the_wall_sided_angle() {
    // Box 20 × 8 × 4 m at 2 m draft, KG 2 m: KB 1, BM = 64/24, GM = 5/3 m. G moved 0.3 m
    // towards +y (= t for l = +x, up +z) lists the box to negative heel, where the
    // wall-sided balance is tan φ (GM + ½ BM tan² φ) = 0.3 (valid below tan φ = 0.5).
    let (gm, bm, off) = (1.0 + 64.0 / 24.0 - 2.0, 64.0 / 24.0, 0.3);
    let h = barge(20.0, 8.0, 4.0);
    let m = 1025.0 * 20.0 * 8.0 * 2.0;
    let sol = solve(&h, &body(m, [0.0, off, 2.0], 1025.0), &[]).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    // Solve the cubic in x = tan φ by bisection (monotone on [0, 0.5]).
    let (mut lo, mut hi) = (0.0f64, 0.5f64);
    for _ in 0..200 {
        let x = 0.5 * (lo + hi);
        if x * (gm + 0.5 * bm * x * x) < off {
            lo = x
        } else {
            hi = x
        }
    }
    let expected = -lo.atan().to_degrees();
    assert!(
        (eq.heel_deg - expected).abs() < 1e-6,
        "{} vs {expected}",
        eq.heel_deg
    );
    assert!(eq.stable());
    // Equilibrium: B on the vertical through G, the displacement kept.
    let bg = eq.section.centre_of_buoyancy - Vec3::new(0.0, off, 2.0);
    assert!(bg.cross(&eq.normal).norm() <= EQUILIBRIUM_REL * h.diagonal_m());
    assert!((eq.section.volume_m3 - m / 1025.0).abs() <= EQUILIBRIUM_REL * m / 1025.0);
}

#[test]
#[allow(clippy::approx_constant)] // KG = 6.28 m is a length, not 2π.
fn a_box_unstable_upright_lolls_to_the_published_angle() {
    // Tupper, Introduction to Naval Architecture, ch. 4 (inputs read): GM = −0.08 m,
    // BM = 5 m; tan φ_loll = √(−2 GM / BM) → ±10.14°. Box 12 m wide, 8 m deep at 2.4 m
    // draft: KB 1.2, BM = 144/28.8 = 5, KG 6.28 gives GM = −0.08; wall-sided to 21.8°.
    let h = barge(30.0, 12.0, 8.0);
    let m = 1025.0 * 30.0 * 12.0 * 2.4;
    let sol = solve(&h, &body(m, [0.0, 0.0, 6.28], 1025.0), &[]).expect("floats");
    let up = sol.upright.expect("floats");
    assert_relative_eq!(up.gm_t_m, -0.08, max_relative = 1e-8);
    let eq = sol.equilibrium.expect("floats");
    let expected = (2.0f64 * 0.08 / 5.0).sqrt().atan().to_degrees();
    // G on the centre line: the contract's rule picks the positive side.
    // The contract's moment tolerance, 1e-9 × diagonal (33 m), over the slope of the
    // lever there (about 0.16 m/rad) allows some 1e-5° of heel.
    assert!((eq.heel_deg - expected).abs() < 5e-5, "{}", eq.heel_deg);
    assert!(eq.stable());
}

#[test]
fn a_box_too_heavy_for_its_volume_sinks_by_the_excess() {
    // Sinks: mass − ρ V_total.
    let h = barge(10.0, 4.0, 2.0);
    let sol = solve(&h, &body(90_000.0, [0.0, 0.0, 1.0], 1000.0), &[0.0]).expect("solved");
    assert_relative_eq!(
        sol.sinks_kg.expect("sinks"),
        90_000.0 - 80_000.0,
        max_relative = 1e-12
    );
    assert!(sol.equilibrium.is_none() && sol.listed.is_empty() && sol.grid.is_empty());
}

#[test]
fn a_vertical_solid_cylinder_of_the_published_example() {
    // Worked example (civinnovate.com, Feb 2025, textbook-style problem; read): solid
    // cylinder D 3 m, H 2 m, specific gravity 0.7, fresh water: immersion 1.4 m,
    // GM = 0.1017 m. On the 256-gon prism the closed forms are those of the polygon:
    // A = polygon area, I = n R⁴ sin α (2 + cos α)/24 about a diameter (α = 2π/n),
    // GM = h/2 + I/(A h) − H/2.
    let (r, hh, n) = (1.5, 2.0, 256);
    let h = hull(&shapes::cylinder_solid([0.0, 0.0, 0.0], 2, r, hh, n));
    let area = shapes::polygon_area(r, n);
    let m = 0.7 * 1000.0 * area * hh;
    let sol = solve(&h, &body(m, [0.0, 0.0, 1.0], 1000.0), &[]).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    assert!(eq.heel_deg.abs() < 1e-9);
    assert_relative_eq!(eq.section.draft_m, 1.4, max_relative = 1e-9);
    let alpha = std::f64::consts::TAU / n as f64;
    let i = n as f64 * r.powi(4) * alpha.sin() * (2.0 + alpha.cos()) / 24.0;
    let gm = 0.7 + i / (area * 1.4) - 1.0;
    assert_relative_eq!(eq.gm_t_m, gm, max_relative = 1e-8);
    assert_relative_eq!(eq.gm_l_m, gm, max_relative = 1e-8);
    assert!((eq.gm_t_m - 0.1017).abs() < 2e-4);
}

#[test]
fn a_short_homogeneous_cylinder_is_unstable_upright_and_comes_to_rest_on_its_side() {
    // ceboardexamgenerator.com, "Stability of floating bodies" (read, weak source):
    // homogeneous cylinder SG 0.65, L 1.0 m, D 0.8 m, axis vertical: GM = −0.114 m.
    // Closed form for the prism: GM = h/2 + I/(A h) − L/2, h = 0.65 L. It rolls onto its
    // side, where by symmetry the lever vanishes at 90°.
    let (r, len, n) = (0.4, 1.0, 128);
    let h = hull(&shapes::cylinder_solid([0.0, 0.0, 0.0], 2, r, len, n));
    let area = shapes::polygon_area(r, n);
    let m = 0.65 * 1000.0 * area * len;
    let sol = solve(&h, &body(m, [0.0, 0.0, 0.5], 1000.0), &[]).expect("floats");
    let up = sol.upright.expect("floats");
    let alpha = std::f64::consts::TAU / n as f64;
    let i = n as f64 * r.powi(4) * alpha.sin() * (2.0 + alpha.cos()) / 24.0;
    assert_relative_eq!(
        up.gm_t_m,
        0.325 + i / (area * 0.65) - 0.5,
        max_relative = 1e-8
    );
    assert!((up.gm_t_m + 0.114).abs() < 1e-3);
    let eq = sol.equilibrium.expect("floats");
    assert!((eq.heel_deg - 90.0).abs() < 1e-6, "{}", eq.heel_deg);
    assert!(eq.gm_t_m > 0.0);
}

#[test]
fn a_sphere_has_its_metacentre_at_its_centre() {
    // A sphere's waterplane second moment over its displacement puts M at the centre at
    // every draft: GM = (centre − G)·n, in every direction and at every heel; GZ(φ) =
    // OG sin φ for G a distance OG below the centre. The faceted sphere only approximates
    // this, so the tolerance is the faceting's (icosphere of 5 subdivisions).
    let h = hull(&shapes::icosphere([0.0, 0.0, 0.0], 1.0, 5));
    let m = 0.5 * 1000.0 * h.volume_m3();
    let og = 0.3;
    let sol = solve(&h, &body(m, [0.0, 0.0, -og], 1000.0), &[30.0, 60.0]).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    assert!((eq.gm_t_m - og).abs() < 2e-3, "{}", eq.gm_t_m);
    assert!((eq.gm_l_m - og).abs() < 2e-3, "{}", eq.gm_l_m);
    for a in &sol.listed {
        let expected = og * a.heel_deg.to_radians().sin();
        assert!(
            (a.righting_lever_m() - expected).abs() < 2e-3,
            "{}",
            a.heel_deg
        );
    }
}

#[test]
fn a_horizontal_cylinder_has_its_metacentre_on_its_axis() {
    // A horizontal circular cylinder floating with its axis along l: M lies on the axis,
    // so GM_T = distance of G below the axis (here 0.2 m), within the 256-gon's faceting.
    let (r, len) = (1.0, 8.0);
    let h = hull(&shapes::cylinder_solid(
        [-len / 2.0, 0.0, 0.0],
        0,
        r,
        len,
        256,
    ));
    let m = 0.4 * 1025.0 * h.volume_m3();
    let sol = solve(&h, &body(m, [0.0, 0.0, -0.2], 1025.0), &[10.0]).expect("floats");
    let eq = sol.equilibrium.expect("floats");
    assert!((eq.gm_t_m - 0.2).abs() < 1e-3, "{}", eq.gm_t_m);
    // GZ(φ) = 0.2 sin φ (M fixed on the axis at every heel).
    assert!((sol.listed[0].righting_lever_m() - 0.2 * 10f64.to_radians().sin()).abs() < 1e-3);
}

#[test]
fn the_solution_does_not_depend_on_the_thread_count() {
    let h = barge(20.0, 6.0, 3.0);
    let b = body(150_000.0, [0.5, -0.2, 2.0], 1025.0);
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool")
            .install(|| solve(&h, &b, &[10.0]).expect("floats"))
    };
    assert_eq!(run(1), run(2));
}

#[test]
fn criteria_are_evaluated_on_the_grid() {
    // A linear curve GZ = k·φ(rad): area 0–30° = k (π/6)²/2, exactly by the trapezoid rule.
    let k = 0.5;
    let gz: Vec<f64> = (0..=90).map(|d| k * f64::from(d).to_radians()).collect();
    let c = [
        Criterion::AreaMin {
            from_deg: 0.0,
            to_deg: 30.0,
            min_m_rad: 0.055,
        },
        Criterion::LeverMinFrom {
            from_deg: 30.0,
            min_m: 0.2,
        },
        Criterion::AngleOfMaxMin { min_deg: 25.0 },
        Criterion::MetacentricHeightMin { min_m: 0.15 },
    ];
    let out = evaluate(&c, &gz, 0.1);
    let p6 = std::f64::consts::PI / 6.0;
    assert_relative_eq!(out[0].actual, k * p6 * p6 / 2.0, max_relative = 1e-12);
    assert!(out[0].pass);
    assert_relative_eq!(
        out[1].actual,
        k * std::f64::consts::FRAC_PI_2,
        max_relative = 1e-12
    );
    assert_eq!(out[2].actual, 90.0);
    assert!(!out[3].pass);
    let s = summarise(&gz);
    assert_eq!(s.vanishing_angle_deg, None);
    // A curve falling through zero between 60° and 61° at 60.25°.
    let gz: Vec<f64> = (0..=90)
        .map(|d| 60.25 - f64::from(d))
        .map(|x| x.min(10.0))
        .collect();
    assert_relative_eq!(
        summarise(&gz).vanishing_angle_deg.expect("vanishes"),
        60.25,
        max_relative = 1e-12
    );
}

#[test]
fn levelling_is_a_proper_rotation_taking_the_normal_to_up() {
    // R n = z, Rᵀ R = I and det R = +1, for normals all round the sphere (poles included).
    let mut normals = vec![Vec3::z(), -Vec3::z(), Vec3::x(), -Vec3::y()];
    for k in 0..40 {
        let a = f64::from(k) * 0.37;
        let b = f64::from(k) * 0.23 - 4.0;
        normals.push(Vec3::new(a.cos() * b.sin(), a.sin() * b.sin(), b.cos()));
    }
    for n in normals {
        let r = levelling(n);
        let rn = r * n;
        assert_relative_eq!(rn, Vec3::z(), epsilon = 1e-14);
        assert_relative_eq!(
            r.transpose() * r,
            nalgebra::Matrix3::identity(),
            epsilon = 1e-14
        );
        assert_relative_eq!(r.determinant(), 1.0, epsilon = 1e-14);
    }
}
