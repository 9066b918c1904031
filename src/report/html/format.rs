//! How text and numbers appear on the page: HTML escaping, anchor ids, reading numbers
//! out of the JSON values, and a display scale per table (a prefix and decimals that give
//! five significant digits, with round-off shown as zero).
//!
//! It writes no markup of its own; the sections compose it.

use serde_json::Value;

use crate::report::svg;

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

/// Display scale for a set of values of one kind: a prefix and decimals that give five
/// significant digits on the largest.
#[derive(Clone, Copy, Debug)]
pub(super) struct Scale {
    factor: f64,
    pub(super) prefix: &'static str,
    decimals: usize,
    /// Magnitudes at or below this are round-off, shown as 0.
    pub(super) noise: f64,
    /// The largest magnitude (SI).
    max: f64,
}

impl Scale {
    pub(super) fn of(values: impl Iterator<Item = f64>) -> Scale {
        Scale::above(values, 0.0)
    }

    /// The scale of the values above `noise` (moments that are zero up to round-off
    /// would otherwise be shown as 0.0000 with a prefix chosen from the noise).
    pub(super) fn above(values: impl Iterator<Item = f64>, noise: f64) -> Scale {
        let max = values
            .filter(|x| x.is_finite() && x.abs() > noise)
            .map(f64::abs)
            .fold(0.0, f64::max);
        let (factor, prefix) = svg::prefix(max);
        Scale {
            factor,
            prefix,
            decimals: decimals_for(max / factor),
            noise,
            max,
        }
    }

    pub(super) fn show(&self, x: f64) -> String {
        let x = if x.abs() <= self.noise { 0.0 } else { x };
        num(x / self.factor, self.decimals)
    }

    /// The round-off level of moments next to these forces: 1e-9 × the largest × 1 m.
    pub(super) fn moment_noise(&self) -> f64 {
        1e-9 * self.max
    }
}

/// Decimals for five significant digits on `max` (0 to 4).
fn decimals_for(max: f64) -> usize {
    if !(max.is_finite() && max > 0.0) {
        return 2;
    }
    let digits = max.log10().floor() as i64 + 1;
    (5 - digits).clamp(0, 4) as usize
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

pub(super) fn point(p: [f64; 3]) -> String {
    format!("({}, {}, {})", num(p[0], 3), num(p[1], 3), num(p[2], 3))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_keep_five_significant_digits_under_the_chosen_prefix() {
        let sc = Scale::of([490_332.5, -12.0].into_iter());
        assert_eq!(
            (sc.prefix, sc.show(490_332.5), sc.show(-12.0)),
            ("k", "490.33".to_owned(), "−0.01".to_owned())
        );
        let sc = Scale::of([2.5e7].into_iter());
        assert_eq!((sc.prefix, sc.show(2.5e7)), ("M", "25.000".to_owned()));
        // Moments that are round-off next to 1 MN are zero, shown without a prefix.
        let forces = Scale::of([1.0e6].into_iter());
        let m = Scale::above([3e-7, -1e-6].into_iter(), forces.moment_noise());
        assert_eq!((m.prefix, m.show(-1e-6)), ("", "0.00".to_owned()));
        assert_eq!(num(-0.0001, 2), "0.00");
        assert_eq!(anchor("a b/c"), "mesh-a_b_c");
    }
}
