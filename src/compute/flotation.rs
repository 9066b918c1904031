//! The flotation check: the resisting loads the sidecar names over the net uplift of the
//! liquid, against the required factor, with the formula written out for a checker.
//!
//! It reads the loads already computed for a case or a sweep step and integrates nothing;
//! it does not move or float the body.

use super::{FlotationCheck, Loads, PresetEcho};
use crate::sidecar::Flotation;

/// The flotation check of a case: every resisting term over the net uplift of the liquid.
///
/// FS = Σ resisting / (uplift − downthrust). When the mesh's top is under the liquid its
/// downthrust is the weight of the liquid above it (the W_G of the USACE form
/// FS_f = (W_S + W_C + S) / (U − W_G)), so it is subtracted, not counted as resisting.
///
/// A net uplift at most `noise` (N) is round-off and counts as none.
pub(super) fn flotation_check(f: &Flotation, loads: &Loads, noise: f64) -> FlotationCheck {
    let uplift = loads.vertical_force.max(0.0);
    let uplift = if uplift <= noise { 0.0 } else { uplift };
    let resisting: f64 = f.resisting.iter().map(|(_, v)| v).sum();
    let factor = (uplift > 0.0).then(|| resisting / uplift);
    let terms: Vec<String> = f
        .resisting
        .iter()
        .map(|(n, v)| format!("{n} {v:.0} N"))
        .collect();
    let required = match &f.preset {
        None => format!("{} as stated in the sidecar", f.required_factor),
        Some(p) => {
            let value = match p.partial_factors {
                Some((dst, stb)) => {
                    format!("γ_dst / γ_stb = {dst} / {stb} = {:.3}", f.required_factor)
                }
                None => format!("{}", f.required_factor),
            };
            format!(
                "{value} by preset \"{}\": {} ({}); a preset copies a number, no code compliance is implied",
                p.name,
                p.source,
                if p.from_memory() {
                    "value from memory"
                } else {
                    "value seen in a copy of the document, not checked against the official edition"
                }
            )
        }
    };
    let formula = match factor {
        Some(fs) => format!(
            "FS = Σ resisting / (uplift − downthrust) = ({}) / ({:.0} N − {:.0} N) = {resisting:.0} N / {uplift:.0} N = {fs:.3}; required {required}",
            terms.join(" + "),
            loads.uplift,
            loads.downthrust,
        ),
        None => format!(
            "net uplift is 0 N (the liquid pushes down or not at all), so flotation cannot occur; resisting {resisting:.0} N; required {required}"
        ),
    };
    FlotationCheck {
        uplift,
        resisting,
        resisting_terms: f.resisting.iter().cloned().collect(),
        factor,
        required_factor: f.required_factor,
        pass: factor.is_none_or(|fs| fs >= f.required_factor),
        formula,
        factor_preset: f.preset.as_ref().map(|p| PresetEcho {
            name: p.name.clone(),
            source: p.source.clone(),
            checked: p.checked.clone(),
            from_memory: p.from_memory(),
        }),
    }
}
