//! Inputs that are valid but almost certainly a mistake: each becomes a warning that names
//! the likely mistake and its fix, so that no zero load and no thousandfold load passes
//! without a word.
//!
//! Owns the judgement of levels against the structure (a free surface below all of it, or
//! implausibly far above it), of densities against the liquids of the trade, and of layer
//! interfaces that lie above the free surface. It refuses nothing: what is certainly
//! wrong is refused by the sidecar's validation or by [`super::ComputeError`].

use crate::hydro::Liquid;
use crate::sidecar::Sidecar;

/// Densities outside this range (kg/m³) are unlike any liquid a structure retains: liquefied
/// gas is about 450, oils 700–950, water 1000, sea water 1025, brines to 1300, drilling
/// muds and fresh concrete (as a liquid on formwork) to about 2500 (common practice).
pub const PLAUSIBLE_DENSITY_KG_M3: (f64, f64) = (300.0, 3000.0);

/// A free surface more than this far above the top of the structure is beyond the head on
/// any civil or marine structure (the deepest dam outlets and subsea works are far below
/// it, common practice), so a unit or datum mistake is likelier: m.
pub const IMPLAUSIBLE_HEAD_M: f64 = 1000.0;

/// Warnings about the liquids of every case that wet some part (`used[i]`: liquid `i` of
/// the sidecar wets a part). `z_range_m` is the structure's lowest and highest elevation,
/// m, in the mesh's own elevations (the frame the levels are in once the sidecar's units
/// and datum are applied).
pub fn warnings(sidecar: &Sidecar, used: &[bool], z_range_m: (f64, f64), w: &mut Vec<String>) {
    let (bottom, top) = z_range_m;
    let height = top - bottom;
    let shown = |z: f64| sidecar.shown_elevation(z);
    let unit = sidecar.sidecar_units.as_str();
    let mut densities_said: Vec<f64> = Vec::new();
    for case in &sidecar.cases {
        for (i, liquid) in case.liquids.iter().enumerate() {
            if !used.get(i).copied().unwrap_or(false) {
                continue;
            }
            // A floating body's liquid has no given level to judge (its free surface is
            // solved, and it is uniform); its density is still judged.
            let floats_in = case.floating.as_ref().is_some_and(|f| f.liquid == i);
            let name = &sidecar.liquids[i].name;
            let which = if sidecar.cases.len() > 1 {
                format!("case \"{}\", liquid \"{name}\"", case.name)
            } else {
                format!("liquid \"{name}\"")
            };
            if !floats_in {
                level_warnings(sidecar, liquid, &which, (bottom, top, height), w);
            }
            for (k, layer) in liquid.layers.iter().enumerate() {
                if !floats_in
                    && let Some(d) = layer.down_to_m
                    && d >= liquid.level_m
                    && k + 1 < liquid.layers.len()
                {
                    w.push(format!(
                        "{which}: layer {} reaches down to {} {unit}, at or above the free surface ({} {unit}), so it holds no liquid; check its \"down_to\" or the level",
                        k + 1,
                        shown(d),
                        shown(liquid.level_m)
                    ));
                }
                let rho = layer.density_kg_m3;
                if !densities_said.contains(&rho)
                    && let Some(hint) = density_hint(rho)
                {
                    densities_said.push(rho);
                    w.push(format!("{which}: density {rho} kg/m³ {hint}"));
                }
            }
        }
    }
}

/// The free surface below the whole structure, or implausibly far above it.
fn level_warnings(
    sidecar: &Sidecar,
    liquid: &Liquid,
    which: &str,
    (bottom, top, height): (f64, f64, f64),
    w: &mut Vec<String>,
) {
    let unit = sidecar.sidecar_units.as_str();
    let shown = |z: f64| sidecar.shown_elevation(z);
    let level = liquid.level_m;
    if level < bottom {
        w.push(format!(
            "{which}: the free surface ({} {unit}) is below the whole structure (its lowest point is at {} {unit}), so nothing is wetted and every load of it is zero; check the level{}",
            shown(level),
            shown(bottom),
            datum_hint(sidecar)
        ));
        return;
    }
    let head = level - top;
    if head > IMPLAUSIBLE_HEAD_M && head > 10.0 * height {
        // The same number read in the mesh's own unit, for a hint when that lands near
        // the structure (the usual mistake: levels written in millimetres).
        let mesh_unit = sidecar.units;
        let per = sidecar.sidecar_units.metres();
        let as_mesh_units = |z_m: f64| z_m / per * mesh_unit.metres();
        let stated = shown(level);
        let reread = as_mesh_units(level);
        let near = reread >= bottom - height && reread <= top + 10.0 * height.max(1.0);
        let fix = if near && mesh_unit != sidecar.sidecar_units {
            format!(
                "; if the levels are in the mesh's unit, add \"sidecar_units\": \"{}\"",
                mesh_unit.as_str()
            )
        } else {
            datum_hint(sidecar)
        };
        w.push(format!(
            "{which}: the free surface ({stated} {unit}) is {:.0} m above the top of the structure, which is {:.3} m tall: levels are read in {}{fix}",
            head,
            height,
            match sidecar.sidecar_units.as_str() {
                "m" => "metres".to_owned(),
                u => format!("\"{u}\""),
            }
        ));
    }
}

/// How a datum could explain a level that misses the structure.
fn datum_hint(sidecar: &Sidecar) -> String {
    match &sidecar.datum {
        Some(d) => format!(
            " and the datum (the mesh's origin is at elevation {} {})",
            sidecar.shown_elevation(0.0),
            d.name.as_deref().unwrap_or("in the project datum")
        ),
        None => {
            "; if the levels are project elevations, give the mesh origin's elevation with \"datum\": {\"mesh_origin_elevation\": ...}".to_owned()
        }
    }
}

/// What a density outside [`PLAUSIBLE_DENSITY_KG_M3`] probably was meant as, or `None`
/// when it is plausible.
fn density_hint(rho: f64) -> Option<String> {
    let (lo, hi) = PLAUSIBLE_DENSITY_KG_M3;
    if (lo..=hi).contains(&rho) {
        return None;
    }
    // 1 lb/ft³ = 16.018463 kg/m³ (exact definitions of the pound and the foot).
    const LB_FT3: f64 = 16.018_463_373_960_14;
    Some(if rho <= 30.0 {
        format!(
            "is unlike any liquid: if it is in t/m³ or a specific gravity, write {} (kg/m³)",
            rho * 1000.0
        )
    } else if rho < lo {
        format!(
            "is unlike any liquid: if it is in lb/ft³, write {:.0} (kg/m³)",
            rho * LB_FT3
        )
    } else {
        format!(
            "is heavier than the liquids structures retain (to about {hi} kg/m³): check its unit (kg/m³)"
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn densities_of_the_trade_pass_and_unit_mistakes_are_named() {
        for rho in [450.0, 880.0, 1000.0, 1025.0, 1200.0, 2400.0] {
            assert_eq!(density_hint(rho), None, "{rho}");
        }
        assert!(density_hint(1.0).expect("warned").contains("write 1000"));
        assert!(density_hint(1.025).expect("warned").contains("write 1025"));
        // 62.4 lb/ft³ × 16.018463 = 999.55 kg/m³.
        assert!(density_hint(62.4).expect("warned").contains("write 1000"));
        assert!(density_hint(1.0e6).expect("warned").contains("heavier"));
    }
}
