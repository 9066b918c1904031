//! The validated sidecar: [`Sidecar`] and the types it holds, with every default applied
//! and every name resolved to an index, and the few questions they answer (a part's liquid
//! and wet side, a sweep's levels, whether the field exports are written).
//!
//! Values of these types are made only by `validate.rs`; nothing here reads text or
//! checks a rule of the file.

use thiserror::Error;

use super::error::quoted_list;
use super::{FactorPreset, MAX_SWEEP_STEPS};
use crate::hydro::{Liquid, UpAxis, WetSide};

/// Length unit of the mesh coordinates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LengthUnit {
    M,
    Cm,
    Mm,
    In,
    Ft,
}

impl LengthUnit {
    /// Metres per unit, exact by definition (the inch and foot since 1959).
    pub fn metres(self) -> f64 {
        match self {
            LengthUnit::M => 1.0,
            LengthUnit::Cm => 0.01,
            LengthUnit::Mm => 0.001,
            LengthUnit::In => 0.0254,
            LengthUnit::Ft => 0.3048,
        }
    }

    /// The keyword used in sidecars (`"mm"` …).
    pub fn as_str(self) -> &'static str {
        match self {
            LengthUnit::M => "m",
            LengthUnit::Cm => "cm",
            LengthUnit::Mm => "mm",
            LengthUnit::In => "in",
            LengthUnit::Ft => "ft",
        }
    }
}

/// A validated sidecar: every default applied, every name resolved to an index.
#[derive(Clone, Debug, PartialEq)]
pub struct Sidecar {
    /// Length unit of the mesh coordinates (required in the file).
    pub units: LengthUnit,
    /// The mesh axis that points up; default `+z`.
    pub up: UpAxis,
    /// m/s², > 0; default [`DEFAULT_GRAVITY_M_S2`](super::DEFAULT_GRAVITY_M_S2).
    pub gravity_m_s2: f64,
    /// The top-level `wet_side` as given; `None` when the file does not state it (the
    /// caller then applies `outside` to a closed mesh and refuses an open one).
    pub wet_side: Option<WetSide>,
    /// The base liquids in file order; `liquid` alone is one liquid named
    /// [`SHORTHAND_LIQUID_NAME`](super::SHORTHAND_LIQUID_NAME). Never empty. Indices into
    /// it are used everywhere else.
    pub liquids: Vec<NamedLiquid>,
    /// Per-part settings.
    pub parts: PartRules,
    /// Point for moments, m, mesh axes; default `[0, 0, 0]`.
    pub moment_about_m: [f64; 3],
    /// Named axes for moments, in file order.
    pub axes: Vec<NamedAxis>,
    /// Named vertical planes of the pressure diagram (besides the default one), in file
    /// order.
    pub sections: Vec<NamedSection>,
    /// The load cases, never empty; each holds every liquid fully resolved.
    pub cases: Vec<Case>,
    /// A level sweep, if asked for.
    pub sweep: Option<Sweep>,
    /// A flotation check, if asked for.
    pub flotation: Option<Flotation>,
    /// Whether the per-facet field exports (`.vtp`, `.csv`) are written; default `auto`.
    pub field_exports: FieldExports,
    /// The unit the sidecar's own lengths were written in (levels, `down_to`, sweeps,
    /// points); default metres. Every length above is already converted to metres.
    pub sidecar_units: LengthUnit,
    /// Where the mesh's origin sits in the project's elevations, when stated. The levels
    /// above are already converted to the mesh's own elevations.
    pub datum: Option<Datum>,
}

/// The sidecar key `datum`: the project elevation of the mesh's origin.
#[derive(Clone, Debug, PartialEq)]
pub struct Datum {
    /// The datum's name as the user gave it (for reports).
    pub name: Option<String>,
    /// Elevation of the mesh's origin in the project datum, m.
    pub mesh_origin_elevation_m: f64,
}

impl Sidecar {
    /// An elevation in the mesh's own frame (m, along `up`) as the user states it: in the
    /// project datum when there is one, in [`Sidecar::sidecar_units`].
    pub fn stated_elevation(&self, z_m: f64) -> f64 {
        let origin = self
            .datum
            .as_ref()
            .map_or(0.0, |d| d.mesh_origin_elevation_m);
        (z_m + origin) / self.sidecar_units.metres()
    }

    /// [`Sidecar::stated_elevation`] with three decimals.
    pub fn shown_elevation(&self, z_m: f64) -> String {
        // Three decimals, and no minus sign on a value that rounds to zero.
        let s = format!("{:.3}", self.stated_elevation(z_m));
        match s.strip_prefix('-') {
            Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
            _ => s,
        }
    }

    /// Every length of the sidecar moved from how it was written (in
    /// [`Sidecar::sidecar_units`], elevations in the project datum) into metres in the
    /// mesh's own frame: levels, `down_to` and sweep ends less the origin's elevation, and
    /// everything scaled. With neither key stated nothing changes, bit for bit.
    pub(super) fn into_mesh_frame(mut self) -> Sidecar {
        let scale = self.sidecar_units.metres();
        let origin = self
            .datum
            .as_ref()
            .map_or(0.0, |d| d.mesh_origin_elevation_m);
        if scale == 1.0 && origin == 0.0 {
            return self;
        }
        let z = |v: f64| v * scale - origin;
        for case in &mut self.cases {
            for l in &mut case.liquids {
                l.level_m = z(l.level_m);
                for layer in &mut l.layers {
                    layer.down_to_m = layer.down_to_m.map(z);
                }
            }
        }
        if let Some(s) = &mut self.sweep {
            s.from_m = z(s.from_m);
            s.to_m = z(s.to_m);
            s.step_m *= scale;
        }
        self.moment_about_m = self.moment_about_m.map(|v| v * scale);
        for a in &mut self.axes {
            a.point_m = a.point_m.map(|v| v * scale);
        }
        for c in &mut self.sections {
            c.point_m = c.point_m.map(|v| v * scale);
        }
        self
    }
}

/// Most facets for which `"field_exports": "auto"` writes the per-facet exports. They are
/// about 550 bytes of text a facet and cost some 20 times the computation itself (0.85 s
/// against 0.05 s for 100,000 facets, `benches/end_to_end.sh`), so above this size a
/// recomputation writes them only when asked for with `"always"`.
pub const AUTO_FIELD_EXPORT_FACETS: usize = 50_000;

/// The sidecar key `field_exports`: when the per-facet exports are written.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum FieldExports {
    /// For meshes of at most [`AUTO_FIELD_EXPORT_FACETS`] facets.
    #[default]
    Auto,
    Always,
    Never,
}

impl FieldExports {
    /// The keyword used in sidecars.
    pub fn as_str(self) -> &'static str {
        match self {
            FieldExports::Auto => "auto",
            FieldExports::Always => "always",
            FieldExports::Never => "never",
        }
    }

    /// Whether a mesh of `facets` facets gets its field exports.
    pub fn writes(self, facets: usize) -> bool {
        match self {
            FieldExports::Auto => facets <= AUTO_FIELD_EXPORT_FACETS,
            FieldExports::Always => true,
            FieldExports::Never => false,
        }
    }
}

/// A base liquid's name, and the preset it was given by, if any (for reports).
#[derive(Clone, Debug, PartialEq)]
pub struct NamedLiquid {
    pub name: String,
    pub preset: Option<String>,
}

/// One load case: one resolved liquid per base liquid, in the order of
/// [`Sidecar::liquids`]. Every liquid builds a [`Profile`](crate::hydro::Profile) under the
/// sidecar's gravity.
#[derive(Clone, Debug, PartialEq)]
pub struct Case {
    pub name: String,
    pub liquids: Vec<Liquid>,
    /// The floating body of this case (the top-level `floating` with the case's own
    /// keys over it), when the mesh floats freely.
    pub floating: Option<Floating>,
}

/// A freely floating body (CONTRACT.md, "Pinned extension: floating bodies").
#[derive(Clone, Debug, PartialEq)]
pub struct Floating {
    /// kg, > 0.
    pub mass_kg: f64,
    /// m, mesh axes after unit scaling.
    pub centre_of_gravity_m: [f64; 3],
    /// Index into the sidecar's liquids (one uniform density).
    pub liquid: usize,
    /// The axis the body heels about; `None`: the horizontal axis of the larger
    /// bounding-box extent, chosen when the mesh is known.
    pub length_axis: Option<UpAxis>,
    /// Degrees, each in [−90, 90].
    pub heel_angles_deg: Vec<f64>,
    /// A named set of criteria from `config/stability.json`.
    pub criteria: Option<super::stability::CriteriaSet>,
    /// Slack tanks: name, second moment of the free surface (m⁴), liquid density (kg/m³).
    pub free_surface: Vec<(String, f64, f64)>,
}

/// Which liquid wets a part.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LiquidChoice {
    /// Not stated.
    #[default]
    Default,
    /// `"liquid": null`: no liquid reaches the part.
    Dry,
    /// An index into [`Sidecar::liquids`].
    Named(usize),
}

/// The settings of one part, as stated.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct PartRule {
    pub liquid: LiquidChoice,
    pub wet_side: Option<WetSide>,
}

/// Per-part settings: the `"*"` entry (or nothing stated) and the named parts in file order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PartRules {
    pub default: PartRule,
    pub named: Vec<(String, PartRule)>,
}

impl PartRules {
    /// The settings of part `name`: what its own entry states, else what `"*"` states.
    pub fn rule_for(&self, name: &str) -> PartRule {
        let own = self
            .named
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, rule)| *rule)
            .unwrap_or_default();
        PartRule {
            liquid: match own.liquid {
                LiquidChoice::Default => self.default.liquid,
                stated => stated,
            },
            wet_side: own.wet_side.or(self.default.wet_side),
        }
    }
}

/// A part that several liquids could wet and no setting assigns.
#[derive(Clone, Debug, Error, PartialEq)]
#[error(
    "part \"{part}\" has no liquid and the sidecar has several ({liquids}): add \"parts\": {{\"{part}\": {{\"liquid\": \"{first}\"}}}}, or a \"*\" entry for every part not named"
)]
pub struct UnassignedPart {
    pub part: String,
    /// The liquid names, quoted and comma-separated.
    pub liquids: String,
    pub first: String,
}

impl Sidecar {
    /// The liquid that wets part `name`: an index into [`Sidecar::liquids`], `None` when
    /// the part is dry. A part nobody assigns takes the only liquid; with several it is an
    /// error, since guessing would silently load the wrong face.
    pub fn part_liquid(&self, name: &str) -> Result<Option<usize>, UnassignedPart> {
        match self.parts.rule_for(name).liquid {
            LiquidChoice::Named(index) => Ok(Some(index)),
            LiquidChoice::Dry => Ok(None),
            LiquidChoice::Default if self.liquids.len() == 1 => Ok(Some(0)),
            LiquidChoice::Default => Err(UnassignedPart {
                part: name.to_owned(),
                liquids: quoted_list(self.liquids.iter().map(|l| l.name.as_str())),
                first: self
                    .liquids
                    .first()
                    .map(|l| l.name.clone())
                    .unwrap_or_default(),
            }),
        }
    }

    /// The wet side of part `name` as stated: its entry, else `"*"`, else the top level.
    pub fn part_wet_side(&self, name: &str) -> Option<WetSide> {
        self.parts.rule_for(name).wet_side.or(self.wet_side)
    }
}

/// A named axis for moments (m, mesh axes).
#[derive(Clone, Debug, PartialEq)]
pub struct NamedAxis {
    pub name: String,
    pub point_m: [f64; 3],
    /// Unit vector (normalised from the file's direction, which may have any length > 0).
    pub direction: [f64; 3],
}

/// The sidecar key `sections`: a named vertical plane the pressure diagram is drawn in.
#[derive(Clone, Debug, PartialEq)]
pub struct NamedSection {
    pub name: String,
    /// A point of the plane, m, mesh axes.
    pub point_m: [f64; 3],
    /// The plane's unit normal, mesh axes, perpendicular to `up` (normalised from the
    /// file's, which may have any length > 0).
    pub normal: [f64; 3],
}

/// The level of one liquid stepped from `from_m` to `to_m` inclusive.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// Index into [`Sidecar::liquids`].
    pub liquid: usize,
    pub from_m: f64,
    /// ≥ `from_m`.
    pub to_m: f64,
    /// > 0.
    pub step_m: f64,
}

impl Sweep {
    /// The levels, m: `from + i·step` for i = 0, 1, … while it does not pass `to` by more
    /// than round-off (a relative 1e-9 of a step), so `to` is included when the range is a
    /// whole number of steps. Computed, never accumulated, so no error builds up.
    pub fn levels(&self) -> Vec<f64> {
        let count = sweep_steps(self.from_m, self.to_m, self.step_m).map_or(0, |n| n + 1);
        (0..count)
            .map(|i| self.from_m + i as f64 * self.step_m)
            .collect()
    }
}

/// The number of whole steps from `from` to `to`, or `None` when it is not a number in
/// 0 ..= [`MAX_SWEEP_STEPS`].
pub(super) fn sweep_steps(from: f64, to: f64, step: f64) -> Option<usize> {
    let q = (to - from) / step;
    if !(0.0..=MAX_SWEEP_STEPS as f64).contains(&q) {
        return None;
    }
    // (to − from)/step carries round-off: 0.3/0.1 is 2.9999999999999996.
    let steps = (q + 1e-9 * q.max(1.0)).floor() as usize;
    Some(steps.min(MAX_SWEEP_STEPS))
}

/// The flotation check's inputs.
#[derive(Clone, Debug, PartialEq)]
pub struct Flotation {
    /// Resisting downward loads, N, each ≥ 0, named by the user, in file order.
    pub resisting: Vec<(String, f64)>,
    /// The factor of safety the user's code requires, > 0: as stated, or the preset's.
    pub required_factor: f64,
    /// The preset named by `factor_preset`, when the factor came from one.
    pub preset: Option<FactorPreset>,
}
