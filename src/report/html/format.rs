//! How text and numbers appear on the page: HTML escaping, anchor ids, reading numbers
//! out of the JSON values, and every quantity in its one unit and number of decimals
//! (those of [`crate::report::units`], SI or US), with round-off shown as zero.
//!
//! It writes no markup of its own; the sections compose it.

use serde_json::Value;

use crate::report::units::{Unit, Units};

/// HTML text escaping (element content and attribute values).
pub(super) fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// An anchor id from a stem: only ASCII letters, digits, `-` and `_`.
pub(super) fn anchor(stem: &str) -> String {
    let mut id = String::from("mesh-");
    for c in stem.chars() {
        id.push(if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
            c
        } else {
            '_'
        });
    }
    id
}

pub(super) fn f(v: &Value) -> Option<f64> {
    v.as_f64()
}

pub(super) fn v3(v: &Value) -> Option<[f64; 3]> {
    let a = v.as_array()?;
    (a.len() == 3).then_some(())?;
    Some([a[0].as_f64()?, a[1].as_f64()?, a[2].as_f64()?])
}

/// How one kind of value is shown in a table: its one unit and number of decimals (from
/// [`crate::report::units`], the same on every table and the terminal), with round-off
/// shown as zero.
#[derive(Clone, Copy, Debug)]
pub(super) struct Scale {
    unit: Unit,
    /// Magnitudes at or below this (SI) are round-off, shown as 0.
    pub(super) noise: f64,
    /// The largest magnitude (SI).
    max: f64,
}

impl Scale {
    pub(super) fn of(unit: Unit, values: impl Iterator<Item = f64>) -> Scale {
        Scale::above(unit, values, 0.0)
    }

    /// The scale of the values above `noise` (moments that are zero up to round-off are
    /// shown as 0).
    pub(super) fn above(unit: Unit, values: impl Iterator<Item = f64>, noise: f64) -> Scale {
        let max = values
            .filter(|x| x.is_finite() && x.abs() > noise)
            .map(f64::abs)
            .fold(0.0, f64::max);
        Scale { unit, noise, max }
    }

    pub(super) fn show(&self, x: f64) -> String {
        let x = if x.abs() <= self.noise { 0.0 } else { x };
        num(x * self.unit.factor, self.unit.decimals)
    }

    /// The unit's name (`kN`, `kip·ft` …).
    pub(super) fn unit(&self) -> &'static str {
        self.unit.name
    }

    /// The round-off level of moments next to these forces: 1e-9 × the largest × 1 m.
    pub(super) fn moment_noise(&self) -> f64 {
        1e-9 * self.max
    }
}

/// A value in one unit, with a real minus sign (`—` when missing).
pub(super) fn show(unit: Unit, x: Option<f64>) -> String {
    x.map_or_else(|| "—".to_owned(), |x| num(x * unit.factor, unit.decimals))
}

/// `x` with `d` decimals, a real minus sign, and no sign on a value that rounds to zero.
pub(super) fn num(x: f64, d: usize) -> String {
    if !x.is_finite() {
        return "—".to_owned();
    }
    let s = format!("{x:.d$}");
    match s.strip_prefix('-') {
        Some(r) if r.chars().all(|c| c == '0' || c == '.') => r.to_owned(),
        Some(r) => format!("−{r}"),
        None => s,
    }
}

/// A point in lengths, without the unit's name.
pub(super) fn point(u: &Units, p: [f64; 3]) -> String {
    let l = u.length;
    format!(
        "({}, {}, {})",
        num(p[0] * l.factor, l.decimals),
        num(p[1] * l.factor, l.decimals),
        num(p[2] * l.factor, l.decimals)
    )
}

/// An elevation of the mesh's frame as shown (in the project datum when there is one).
pub(super) fn elevation(u: &Units, z: Option<f64>) -> String {
    show(u.length, z.map(|z| z + u.elevation_origin_m))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_table_shows_a_quantity_in_one_unit() {
        let si = Units::of(crate::report::units::UnitSystem::Si);
        // The same unit and decimals for a kilonewton and for tens of meganewtons.
        let sc = Scale::of(si.force, [490_332.5, -12.0, 2.5e7].into_iter());
        assert_eq!(
            (
                sc.unit(),
                sc.show(490_332.5),
                sc.show(-12.0),
                sc.show(2.5e7)
            ),
            (
                "kN",
                "490.33".to_owned(),
                "−0.01".to_owned(),
                "25000.00".to_owned()
            )
        );
        // Moments that are round-off next to 1 MN are zero.
        let forces = Scale::of(si.force, [1.0e6].into_iter());
        let m = Scale::above(si.moment, [3e-7, -1e-6].into_iter(), forces.moment_noise());
        assert_eq!((m.unit(), m.show(-1e-6)), ("kN·m", "0.00".to_owned()));
        // US: 1 kip = 4448.2216152605 N exactly.
        let us = Units::of(crate::report::units::UnitSystem::Us);
        assert_eq!(
            Scale::of(us.force, [].into_iter()).show(4_448.221_615_260_5),
            "1.00"
        );
        assert_eq!(num(-0.0001, 2), "0.00");
        assert_eq!(anchor("a b/c"), "mesh-a_b_c");
        let datum = si.with_datum(100.0);
        assert_eq!(elevation(&datum, Some(2.5)), "102.500");
    }
}
