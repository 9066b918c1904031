//! Free floating: the attitude a closed body takes in still liquid, and its stability.
//!
//! Owns the pure solver: the body cut by a plane in any attitude ([`Hull`], [`Section`]),
//! the equilibrium in sinkage, heel and trim, the righting-lever curve at constant
//! displacement with trim free, its summary on the 0°…90° grid, and the evaluation of
//! stability criteria on it. It knows nothing of files, sidecars, presets or output
//! formats; the caller maps its results to mesh axes.
//!
//! # Axes and angles (CONTRACT.md, "Pinned extension: floating bodies")
//!
//! Everything is in the internal frame of [`crate::hydro`] (metres, `z` up), which is a
//! proper rotation of the mesh axes, so every definition below holds in either. `u` is up
//! (`+z`), `l` the length axis (unit, horizontal), `t = u × l`. The free surface seen from
//! the body is the plane `n·x = c`, `n` pointing into the air. Heel `φ = atan2(n·t, n·u)`,
//! trim `θ = atan2(−n·l, n·u)`. With `e` the unit vector along `l − (l·n) n` and
//! `f = n × e`, the heeling moment per unit weight is `m = ((B − G) × n)·e = (B − G)·f`
//! (> 0 turns the body towards larger heel) and the trimming one `((B − G) × n)·f =
//! −(B − G)·e`. `GM_T = I_e/V − (G − B)·n`, `GM_L = I_f/V − (G − B)·n`.
//!
//! # The solver
//!
//! Points of the *trim-free branch* are solved at a given heel: the normal is
//! `n = cos ϑ (u cos φ + t sin φ) − sin ϑ l`, for which `e = cos ϑ l + sin ϑ (u cos φ +
//! t sin φ)` in closed form and the contract's trim is `atan2(sin ϑ, cos ϑ cos φ)`
//! (`ϑ` itself where `φ = 0`; undefined at `φ = ±90°`, where it is reported as `None`).
//! Two unknowns `(c, ϑ)`, two residuals `(V − V₀, trimming moment)`, and a Newton iteration
//! whose Jacobian is exact from the waterplane: `∂V/∂c = A`, `∂V/∂ϑ = A e·F`,
//! `∂m_f/∂c = −A e·(F − B)/V`, `∂m_f/∂ϑ = −(I_f + A e·(F − B) e·F)/V − (B − G)·n`
//! (its Schur complement is `−GM_L`). Steps are limited and backtracked, the volume is
//! re-solved by safeguarded Newton–bisection on `c` whenever the plane leaves the body,
//! and a scan of trims is the fallback when Newton does not reach a stable trim.
//!
//! The equilibrium follows the contract's rule: the upright branch point, if its heeling
//! moment is within tolerance and it is stable; otherwise the branch is marched in 1°
//! steps towards the side the moment turns the body, and the first stable root of `m` is
//! refined by Newton on `φ` (`dm/dφ = −GM_T`) inside its bracket. Every loop is bounded.

mod curve;
mod section;
mod solve;

pub use curve::{Criterion, CriterionCheck, Summary, evaluate, summarise};
pub use section::{Hull, Section};
pub use solve::{Attitude, Body, Solution, solve, solve_with};

use nalgebra::Matrix3;
use thiserror::Error;

use super::Vec3;

/// Relative tolerance of the equilibrium (CONTRACT.md): on the displaced mass, relative to
/// the mass; on `|(B − G) × n|`, relative to the bounding-box diagonal.
pub const EQUILIBRIUM_REL: f64 = 1e-9;

/// Why a floating body could not be solved.
#[derive(Debug, Error, PartialEq)]
pub enum FloatError {
    #[error("the body has no positive enclosed volume to float on")]
    NoVolume,
    #[error("the centre of gravity or the mass is not finite")]
    NonFinite,
    #[error(
        "at {heel_deg}° of heel the displacement could not be matched to {tolerance:e} of the mass within {iterations} iterations (residual {residual_m3:e} m³)"
    )]
    Volume {
        heel_deg: f64,
        iterations: usize,
        residual_m3: f64,
        tolerance: f64,
    },
    #[error(
        "at {heel_deg}° of heel no trim with positive longitudinal metacentric height balances the body (trim searched from -89° to 89°)"
    )]
    NoTrim { heel_deg: f64 },
    #[error(
        "the heel of equilibrium could not be refined between {from_deg}° and {to_deg}° within {iterations} iterations (heeling lever {residual_m:e} m)"
    )]
    Heel {
        from_deg: f64,
        to_deg: f64,
        iterations: usize,
        residual_m: f64,
    },
    #[error(
        "no stable floating attitude was found within 180° of heel from upright (the body may be neutrally stable in heel, such as a body of revolution about the length axis with its centre of gravity on that axis)"
    )]
    NoStableAttitude,
}

/// A proper rotation that takes the unit vector `n` to `+z`: the frame in which the free
/// surface `n·x = c` is the horizontal plane `z = c`, so the core's horizontal clipping and
/// exact integrals apply unchanged. Rotating about the local origin keeps every moment
/// about it; map vectors back with the transpose.
///
/// The least rotation (about `n × z`, Rodrigues: `R = I + [v]× + [v]×² / (1 + n·z)` with
/// `v = n × z`) when `n·z > −½`; otherwise a half turn about `x` first, so the division
/// never comes near zero. `n` must be a unit vector.
pub fn levelling(n: Vec3) -> Matrix3<f64> {
    let half_turn = Matrix3::new(1.0, 0.0, 0.0, 0.0, -1.0, 0.0, 0.0, 0.0, -1.0);
    let (pre, m) = if n.z > -0.5 {
        (Matrix3::identity(), n)
    } else {
        (half_turn, half_turn * n)
    };
    let z = Vec3::z();
    let v = m.cross(&z);
    let k = v.cross_matrix();
    (Matrix3::identity() + k + k * k / (1.0 + m.dot(&z))) * pre
}

#[cfg(test)]
mod tests;
