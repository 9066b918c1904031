//! The righting-lever curve's summary on the 0°…90° grid and the evaluation of stability
//! criteria on it (CONTRACT.md `stability` and `criteria`).
//!
//! Pure arithmetic on the grid values; the criteria's names, sources and wording live
//! with the presets outside the core.

/// The summary of a righting-lever curve given at 0°, 1°, …, 90°.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Summary {
    /// Largest grid value, m.
    pub max_gz_m: f64,
    /// Its angle (the first on a tie), degrees.
    pub angle_of_max_gz_deg: f64,
    /// Where GZ first falls from > 0 to ≤ 0 beyond the angle of the maximum, linear
    /// between the two grid points around it; `None` if it does not.
    pub vanishing_angle_deg: Option<f64>,
    /// Trapezoid areas on the grid, m·rad.
    pub area_0_30_m_rad: f64,
    pub area_0_40_m_rad: f64,
    pub area_30_40_m_rad: f64,
}

/// One criterion on the curve or on GM, with its threshold.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Criterion {
    /// Area under GZ between two heels ≥ `min_m_rad`.
    AreaMin {
        from_deg: f64,
        to_deg: f64,
        min_m_rad: f64,
    },
    /// GZ at some grid heel ≥ `from_deg` at least `min_m` (the largest such value counts).
    LeverMinFrom { from_deg: f64, min_m: f64 },
    /// The angle of the maximum GZ at least `min_deg`.
    AngleOfMaxMin { min_deg: f64 },
    /// The initial metacentric height (corrected for free surface when given) ≥ `min_m`.
    MetacentricHeightMin { min_m: f64 },
}

/// A criterion's outcome: the threshold, the value found and whether it is met.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CriterionCheck {
    pub required: f64,
    pub actual: f64,
    pub pass: bool,
}

const STEP_RAD: f64 = std::f64::consts::PI / 180.0;

/// GZ interpolated linearly on the 1° grid (clamped to its ends).
fn at(gz: &[f64], deg: f64) -> f64 {
    let last = gz.len().saturating_sub(1);
    if gz.is_empty() {
        return 0.0;
    }
    let x = deg.clamp(0.0, last as f64);
    let k = (x.floor() as usize).min(last.saturating_sub(1));
    if last == 0 {
        return gz[0];
    }
    let w = x - k as f64;
    gz[k] * (1.0 - w) + gz[k + 1] * w
}

/// Trapezoid area between two heels on the 1° grid, m·rad (exact for the piecewise-linear
/// curve through the grid points, so whole-degree bounds give the plain trapezoid rule).
pub fn area(gz: &[f64], from_deg: f64, to_deg: f64) -> f64 {
    let (a, b) = (from_deg.min(to_deg), from_deg.max(to_deg));
    let mut sum = 0.0;
    let mut x = a;
    while x < b {
        let next = (x.floor() + 1.0).min(b);
        sum += 0.5 * (at(gz, x) + at(gz, next)) * (next - x) * STEP_RAD;
        x = next;
    }
    if from_deg <= to_deg { sum } else { -sum }
}

/// The summary of the curve `gz[k]` at `k` degrees, `k = 0 … 90`.
pub fn summarise(gz: &[f64]) -> Summary {
    let mut k_max = 0;
    for (k, g) in gz.iter().enumerate() {
        if *g > gz[k_max] {
            k_max = k;
        }
    }
    let mut vanishing = None;
    for k in k_max + 1..gz.len() {
        let (a, b) = (gz[k - 1], gz[k]);
        if a > 0.0 && b <= 0.0 {
            vanishing = Some((k - 1) as f64 + a / (a - b));
            break;
        }
    }
    Summary {
        max_gz_m: gz.get(k_max).copied().unwrap_or(0.0),
        angle_of_max_gz_deg: k_max as f64,
        vanishing_angle_deg: vanishing,
        area_0_30_m_rad: area(gz, 0.0, 30.0),
        area_0_40_m_rad: area(gz, 0.0, 40.0),
        area_30_40_m_rad: area(gz, 30.0, 40.0),
    }
}

/// Evaluates each criterion on the grid curve `gz` (0°…90°) and the metacentric height.
pub fn evaluate(criteria: &[Criterion], gz: &[f64], gm_m: f64) -> Vec<CriterionCheck> {
    let summary = summarise(gz);
    criteria
        .iter()
        .map(|c| {
            let (required, actual) = match *c {
                Criterion::AreaMin {
                    from_deg,
                    to_deg,
                    min_m_rad,
                } => (min_m_rad, area(gz, from_deg, to_deg)),
                Criterion::LeverMinFrom { from_deg, min_m } => {
                    let best = gz
                        .iter()
                        .enumerate()
                        .filter(|(k, _)| *k as f64 >= from_deg)
                        .map(|(_, g)| *g)
                        .fold(f64::NEG_INFINITY, f64::max);
                    (min_m, best)
                }
                Criterion::AngleOfMaxMin { min_deg } => (min_deg, summary.angle_of_max_gz_deg),
                Criterion::MetacentricHeightMin { min_m } => (min_m, gm_m),
            };
            CriterionCheck {
                required,
                actual,
                pass: actual >= required,
            }
        })
        .collect()
}
