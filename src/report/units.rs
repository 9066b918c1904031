//! How quantities are shown to people: one unit and one number of decimals per quantity,
//! in SI or US customary units, shared by the terminal summary, the watcher's lines and
//! the page, so a figure looks the same wherever it appears.
//!
//! Result files stay SI whatever is shown. This module only converts and formats; it
//! decides nothing about which quantities a report shows.

/// The unit system quantities are shown in.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum UnitSystem {
    /// kN, kN·m, m, m², m³, kPa, kg/m³, m/s².
    #[default]
    Si,
    /// kip, kip·ft, ft, ft², ft³, psi, lb/ft³, ft/s² (exact conversions: 1 ft = 0.3048 m,
    /// 1 lb = 0.45359237 kg, 1 lbf = 4.4482216152605 N, 1 kip = 1000 lbf).
    Us,
}

/// Feet in metres (exact by definition).
pub const FT_M: f64 = 0.3048;
/// Pound-force in newtons (exact by definition: 0.45359237 kg × 9.80665 m/s²).
pub const LBF_N: f64 = 4.448_221_615_260_5;
/// Pound (mass) in kilograms (exact by definition).
pub const LB_KG: f64 = 0.453_592_37;

/// One quantity's unit: its name, the factor from SI (shown = SI × factor) and the
/// number of decimals it is always shown with.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Unit {
    pub name: &'static str,
    pub factor: f64,
    pub decimals: usize,
}

impl Unit {
    /// `si` (in SI units) converted and formatted with this unit's decimals, no unit name.
    pub fn fmt(&self, si: f64) -> String {
        num(si * self.factor, self.decimals)
    }

    /// Like [`Unit::fmt`], with the unit name after a space (degrees without one).
    pub fn with_name(&self, si: f64) -> String {
        if self.name == "°" {
            format!("{}°", self.fmt(si))
        } else {
            format!("{} {}", self.fmt(si), self.name)
        }
    }
}

/// The unit of every quantity a report shows, in one unit system.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Units {
    pub system: UnitSystem,
    pub force: Unit,
    pub moment: Unit,
    pub length: Unit,
    /// Small lengths (deviations, misses): mm or in.
    pub small: Unit,
    pub area: Unit,
    pub volume: Unit,
    pub pressure: Unit,
    pub density: Unit,
    pub acceleration: Unit,
    /// Masses (a floating body's mass and displacement): t or lb.
    pub mass: Unit,
    /// Angles (heel, trim), degrees in both systems.
    pub angle: Unit,
    /// Areas under the righting-lever curve: m·rad or ft·rad.
    pub lever_area: Unit,
    /// Added to the mesh's own elevations to show them in the project datum, m (0 when the
    /// sidecar gives no datum).
    pub elevation_origin_m: f64,
}

impl Units {
    /// The units of `system`.
    pub fn of(system: UnitSystem) -> Units {
        let u = |name, factor, decimals| Unit {
            name,
            factor,
            decimals,
        };
        match system {
            UnitSystem::Si => Units {
                system,
                force: u("kN", 1e-3, 2),
                moment: u("kN·m", 1e-3, 2),
                length: u("m", 1.0, 3),
                small: u("mm", 1e3, 1),
                area: u("m²", 1.0, 3),
                volume: u("m³", 1.0, 3),
                pressure: u("kPa", 1e-3, 2),
                density: u("kg/m³", 1.0, 0),
                acceleration: u("m/s²", 1.0, 3),
                mass: u("t", 1e-3, 1),
                angle: u("°", 1.0, 1),
                lever_area: u("m·rad", 1.0, 4),
                elevation_origin_m: 0.0,
            },
            UnitSystem::Us => Units {
                system,
                force: u("kip", 1.0 / (1000.0 * LBF_N), 2),
                moment: u("kip·ft", 1.0 / (1000.0 * LBF_N * FT_M), 2),
                length: u("ft", 1.0 / FT_M, 3),
                small: u("in", 1.0 / 0.0254, 2),
                area: u("ft²", 1.0 / (FT_M * FT_M), 3),
                volume: u("ft³", 1.0 / (FT_M * FT_M * FT_M), 3),
                pressure: u("psi", 0.0254 * 0.0254 / LBF_N, 3),
                density: u("lb/ft³", FT_M * FT_M * FT_M / LB_KG, 2),
                acceleration: u("ft/s²", 1.0 / FT_M, 3),
                mass: u("lb", 1.0 / LB_KG, 0),
                angle: u("°", 1.0, 1),
                lever_area: u("ft·rad", 1.0 / FT_M, 4),
                elevation_origin_m: 0.0,
            },
        }
    }

    /// These units, with elevations shown in a project datum whose mesh origin is at
    /// `origin_m` (m).
    pub fn with_datum(self, origin_m: f64) -> Units {
        Units {
            elevation_origin_m: origin_m,
            ..self
        }
    }

    /// An elevation of the mesh's own frame (m, along up) as shown: in the project datum
    /// when there is one, in lengths, without the unit name.
    pub fn elevation(&self, z_m: f64) -> String {
        self.length.fmt(z_m + self.elevation_origin_m)
    }

    /// A point `(x, y, z)` in lengths, without the unit name.
    pub fn point(&self, p: [f64; 3]) -> String {
        format!(
            "({}, {}, {})",
            self.length.fmt(p[0]),
            self.length.fmt(p[1]),
            self.length.fmt(p[2])
        )
    }
}

/// `x` with `digits` decimals, without the minus sign of a value that rounds to zero.
pub fn num(x: f64, digits: usize) -> String {
    let s = format!("{x:.digits$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
        _ => s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn us_factors_are_the_exact_definitions() {
        let u = Units::of(UnitSystem::Us);
        // 1 kip = 4448.2216152605 N; 1 psi = 6894.757 Pa; 1 ft³ = 0.028316846592 m³;
        // 1 kip·ft = 1355.8179483314 N·m; 1 lb/ft³ = 16.018463373960 kg/m³;
        // 1 ft/s² = 0.3048 m/s² (all from the exact definitions of the foot and pound).
        assert!((4_448.221_615_260_5 * u.force.factor - 1.0).abs() < 1e-15);
        assert!((6_894.757_293_168 * u.pressure.factor - 1.0).abs() < 1e-12);
        assert!((0.028_316_846_592 * u.volume.factor - 1.0).abs() < 1e-14);
        assert!((1_355.817_948_331_400_4 * u.moment.factor - 1.0).abs() < 1e-14);
        assert!((16.018_463_373_960_14 * u.density.factor - 1.0).abs() < 1e-14);
        assert!((0.3048 * u.acceleration.factor - 1.0).abs() < 1e-15);
        // 1 lb = 0.45359237 kg exactly, so 1000 kg = 2204.62 lb.
        assert!((0.453_592_37 * u.mass.factor - 1.0).abs() < 1e-15);
        assert_eq!(u.mass.with_name(1000.0), "2205 lb");
        // Fresh water: 1000 kg/m³ = 62.43 lb/ft³; standard gravity = 32.174 ft/s².
        assert_eq!(u.density.with_name(1000.0), "62.43 lb/ft³");
        assert_eq!(u.acceleration.with_name(9.80665), "32.174 ft/s²");
    }

    #[test]
    fn rounding_to_zero_drops_the_sign() {
        assert_eq!(num(-0.0001, 2), "0.00");
        assert_eq!(num(-0.01, 2), "-0.01");
    }

    #[test]
    fn every_quantity_has_one_unit_and_one_number_of_decimals() {
        let si = Units::of(UnitSystem::Si);
        // Whatever the size, the unit and the decimals stay: no kN here and MN there.
        assert_eq!(si.force.with_name(1.5e3), "1.50 kN");
        assert_eq!(si.force.with_name(2.5e7), "25000.00 kN");
        assert_eq!(si.moment.with_name(-364_000.0), "-364.00 kN·m");
    }
}
