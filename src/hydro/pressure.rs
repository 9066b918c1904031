//! The pressure model: gauge pressure as a piecewise-linear function of elevation.
//!
//! Owns the liquid column (free surface, layers, gas pressure) and its evaluation; knows
//! nothing of meshes. Elevations are in the internal frame (metres, `z` up), possibly
//! shifted to a local origin with [`Profile::shifted`].

use thiserror::Error;

/// One layer of a stratified liquid, listed top to bottom.
#[derive(Clone, Debug, PartialEq)]
pub struct Layer {
    /// Density in kg/m³, finite and > 0.
    pub density_kg_m3: f64,
    /// Absolute elevation (m) down to which the layer reaches; `None` only for the last
    /// layer, which reaches down without limit. The last layer continues below its
    /// `down_to` if one is given.
    pub down_to_m: Option<f64>,
}

/// A liquid at rest: its free surface, its layers and the gas pressure above it.
#[derive(Clone, Debug, PartialEq)]
pub struct Liquid {
    /// Elevation of the free surface, m.
    pub level_m: f64,
    /// Gauge pressure of the gas on the free surface, Pa (acts above the level too).
    pub surface_pressure_pa: f64,
    /// Layers top to bottom; one layer without `down_to` for a uniform liquid.
    pub layers: Vec<Layer>,
}

impl Liquid {
    /// A uniform liquid of one density with no gas pressure.
    pub fn uniform(level_m: f64, density_kg_m3: f64) -> Liquid {
        Liquid {
            level_m,
            surface_pressure_pa: 0.0,
            layers: vec![Layer {
                density_kg_m3,
                down_to_m: None,
            }],
        }
    }
}

/// Why a [`Liquid`] cannot be turned into a [`Profile`].
#[derive(Debug, Error, PartialEq)]
pub enum LiquidError {
    #[error("the level {0} is not a finite number")]
    Level(f64),
    #[error("the surface pressure {0} is not a finite number")]
    SurfacePressure(f64),
    #[error("gravity must be a finite number > 0, got {0}")]
    Gravity(f64),
    #[error("a liquid needs at least one layer")]
    NoLayers,
    #[error("layer {index}: density must be a finite number > 0 kg/m³, got {value}")]
    Density { index: usize, value: f64 },
    #[error("layer {index}: down_to must be a finite elevation, got {value}")]
    DownTo { index: usize, value: f64 },
    #[error("layer {index}: only the last layer may omit down_to")]
    MissingDownTo { index: usize },
    #[error(
        "layer {index}: down_to {value} m must lie below the layer above it ({above} m); list layers top to bottom"
    )]
    LayersOutOfOrder {
        index: usize,
        value: f64,
        above: f64,
    },
}

/// One linear piece of the pressure profile: `p(z) = p_top + rho_g · (z_top − z)` for
/// `z_bottom ≤ z ≤ z_top`.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Segment {
    z_top: f64,
    p_top: f64,
    rho_g: f64,
}

/// Gauge pressure `p(z)` of a liquid at rest, ready to evaluate.
///
/// `p(z) = p_s` above the free surface and `p_s + g ∫_z^level ρ dζ` below it; piecewise
/// linear, continuous, with kinks at the free surface and at every layer interface that
/// lies below the free surface (the [`planes`](Profile::planes)).
#[derive(Clone, Debug, PartialEq)]
pub struct Profile {
    level: f64,
    surface_pressure: f64,
    /// Active segments, top to bottom; the first starts at the free surface and the last
    /// reaches down without limit.
    segments: Vec<Segment>,
    /// The kink elevations, top to bottom: the level, then the interfaces below it.
    planes: Vec<f64>,
}

impl Profile {
    /// Builds the profile of `liquid` under gravity `g_m_s2`, validating every value.
    pub fn new(liquid: &Liquid, g_m_s2: f64) -> Result<Profile, LiquidError> {
        if !liquid.level_m.is_finite() {
            return Err(LiquidError::Level(liquid.level_m));
        }
        if !liquid.surface_pressure_pa.is_finite() {
            return Err(LiquidError::SurfacePressure(liquid.surface_pressure_pa));
        }
        if !(g_m_s2.is_finite() && g_m_s2 > 0.0) {
            return Err(LiquidError::Gravity(g_m_s2));
        }
        if liquid.layers.is_empty() {
            return Err(LiquidError::NoLayers);
        }
        let last = liquid.layers.len() - 1;
        let mut above = f64::INFINITY;
        for (index, layer) in liquid.layers.iter().enumerate() {
            let value = layer.density_kg_m3;
            if !(value.is_finite() && value > 0.0) {
                return Err(LiquidError::Density { index, value });
            }
            match layer.down_to_m {
                None if index != last => return Err(LiquidError::MissingDownTo { index }),
                None => {}
                Some(value) if !value.is_finite() => {
                    return Err(LiquidError::DownTo { index, value });
                }
                Some(value) if value >= above => {
                    return Err(LiquidError::LayersOutOfOrder {
                        index,
                        value,
                        above,
                    });
                }
                Some(value) => above = value,
            }
        }

        let level = liquid.level_m;
        let mut segments = Vec::with_capacity(liquid.layers.len());
        let mut planes = vec![level];
        let mut z_top = level;
        let mut p_top = liquid.surface_pressure_pa;
        for (index, layer) in liquid.layers.iter().enumerate() {
            let rho_g = layer.density_kg_m3 * g_m_s2;
            let bottom = if index == last { None } else { layer.down_to_m };
            match bottom {
                // The part of a layer above the free surface holds no liquid.
                Some(b) if b >= z_top => continue,
                Some(b) => {
                    segments.push(Segment {
                        z_top,
                        p_top,
                        rho_g,
                    });
                    p_top += rho_g * (z_top - b);
                    z_top = b;
                    planes.push(b);
                }
                None => {
                    segments.push(Segment {
                        z_top,
                        p_top,
                        rho_g,
                    });
                }
            }
        }
        Ok(Profile {
            level,
            surface_pressure: liquid.surface_pressure_pa,
            segments,
            planes,
        })
    }

    /// The same profile with every elevation measured from `origin_z` (z' = z − origin_z).
    pub fn shifted(&self, origin_z: f64) -> Profile {
        Profile {
            level: self.level - origin_z,
            surface_pressure: self.surface_pressure,
            segments: self
                .segments
                .iter()
                .map(|s| Segment {
                    z_top: s.z_top - origin_z,
                    ..*s
                })
                .collect(),
            planes: self.planes.iter().map(|z| z - origin_z).collect(),
        }
    }

    /// Elevation of the free surface.
    pub fn level(&self) -> f64 {
        self.level
    }

    /// Gauge pressure on the free surface, Pa.
    pub fn surface_pressure(&self) -> f64 {
        self.surface_pressure
    }

    /// Elevations where the profile has a kink, top to bottom (the free surface first).
    pub fn planes(&self) -> &[f64] {
        &self.planes
    }

    /// Gauge pressure at elevation `z`, Pa.
    #[inline]
    pub fn pressure(&self, z: f64) -> f64 {
        if z >= self.level {
            return self.surface_pressure;
        }
        // Few segments: a linear scan beats anything cleverer. The last segment has no
        // lower limit, so the loop always returns.
        let n = self.segments.len();
        for (i, s) in self.segments.iter().enumerate() {
            let bottom = if i + 1 < n {
                self.segments[i + 1].z_top
            } else {
                f64::NEG_INFINITY
            };
            if z >= bottom {
                return s.p_top + s.rho_g * (s.z_top - z);
            }
        }
        let s = self.segments[n - 1];
        s.p_top + s.rho_g * (s.z_top - z)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    const G: f64 = 9.80665;

    #[test]
    fn uniform_liquid_is_rho_g_depth() {
        let p = Profile::new(&Liquid::uniform(10.0, 1000.0), G).expect("valid");
        assert_eq!(p.pressure(12.0), 0.0);
        assert_eq!(p.pressure(10.0), 0.0);
        assert_relative_eq!(p.pressure(7.0), 1000.0 * G * 3.0);
        assert_eq!(p.planes(), &[10.0]);
    }

    #[test]
    fn stratified_with_gas_matches_hand_sum() {
        // Gas 5 kPa over 2 m of oil (850) over water (1000): bottom of a 5 m wall.
        let liquid = Liquid {
            level_m: 5.0,
            surface_pressure_pa: 5000.0,
            layers: vec![
                Layer {
                    density_kg_m3: 850.0,
                    down_to_m: Some(3.0),
                },
                Layer {
                    density_kg_m3: 1000.0,
                    down_to_m: None,
                },
            ],
        };
        let p = Profile::new(&liquid, G).expect("valid");
        assert_eq!(p.pressure(6.0), 5000.0);
        assert_relative_eq!(p.pressure(3.0), 5000.0 + 850.0 * G * 2.0);
        // Closed form: p = p_s + g(ρ₁h₁ + ρ₂h₂) = 5000 + 9.80665·(1700 + 3000) = 51 091.3 Pa.
        assert_relative_eq!(p.pressure(0.0), 51_091.255, epsilon = 1e-3);
        assert_eq!(p.planes(), &[5.0, 3.0]);
    }

    #[test]
    fn lowered_level_removes_upper_layers_first() {
        let liquid = Liquid {
            level_m: 2.0,
            surface_pressure_pa: 0.0,
            layers: vec![
                Layer {
                    density_kg_m3: 850.0,
                    down_to_m: Some(3.0),
                },
                Layer {
                    density_kg_m3: 1000.0,
                    down_to_m: None,
                },
            ],
        };
        let p = Profile::new(&liquid, G).expect("valid");
        assert_eq!(p.planes(), &[2.0]);
        assert_relative_eq!(p.pressure(0.0), 1000.0 * G * 2.0);
    }

    #[test]
    fn shifting_the_origin_changes_no_pressure() {
        let p = Profile::new(&Liquid::uniform(10.0, 1025.0), G).expect("valid");
        let s = p.shifted(4.0);
        assert_relative_eq!(s.pressure(1.0), p.pressure(5.0));
        assert_eq!(s.level(), 6.0);
    }

    #[test]
    fn bad_liquids_are_refused() {
        let mut l = Liquid::uniform(1.0, 0.0);
        assert!(matches!(
            Profile::new(&l, G),
            Err(LiquidError::Density { index: 0, .. })
        ));
        l.layers = vec![
            Layer {
                density_kg_m3: 900.0,
                down_to_m: Some(0.0),
            },
            Layer {
                density_kg_m3: 1000.0,
                down_to_m: Some(0.5),
            },
        ];
        assert!(matches!(
            Profile::new(&l, G),
            Err(LiquidError::LayersOutOfOrder { index: 1, .. })
        ));
        assert!(Profile::new(&Liquid::uniform(f64::NAN, 1000.0), G).is_err());
        assert!(Profile::new(&Liquid::uniform(1.0, 1000.0), 0.0).is_err());
    }
}
