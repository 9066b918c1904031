//! The result document's types: what `results/<stem>.json` and `calc --json` hold, field
//! by field, in the order they are written.
//!
//! Data only: the values are filled in by the computation's steps, and the layout (pinned
//! by CONTRACT.md) is described on [`MeshResult`]. The governing values of a sweep,
//! [`super::Governing`], live with the sweep that computes them.

use serde::Serialize;

use super::Governing;

/// The result document of one mesh (`results/<stem>.json`, `calc --json`).
///
/// Pinned by CONTRACT.md: `schema`, `mesh`, `cases[]` with `name`, `force`, `moment`,
/// `moment_about`, `wetted_area`, `uplift`, `downthrust`, `submerged_volume`,
/// `centre_of_buoyancy`, `line_of_action`, `centre_of_pressure`, `parts`, and the
/// extensions `axis_moments`, `sweep`, `flotation`; and `warnings`. Everything else is
/// ours: `inputs` echoes what the numbers depend on, each load set adds
/// `horizontal_force`, `vertical_force`, `max_pressure`, and `caution` closes it. SI units
/// and mesh axes throughout (vectors in the mesh's own axes, lengths in metres).
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MeshResult {
    pub schema: u32,
    pub mesh: String,
    /// The calculation sheet's header from the folder's `wetload-project.json`, when it
    /// has one (filled in by the pipeline, which reads files; the computation does not).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub project: Option<crate::sidecar::Project>,
    pub inputs: Inputs,
    pub cases: Vec<CaseResult>,
    pub warnings: Vec<String>,
    pub caution: &'static str,
}

/// What the numbers depend on, echoed for a checker.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Inputs {
    pub format: &'static str,
    pub units: &'static str,
    pub up: &'static str,
    pub gravity: f64,
    pub wet_side: Option<&'static str>,
    pub closed: bool,
    pub facets: usize,
    pub shells: usize,
    pub parts: Vec<PartInputs>,
    /// Bounding box in metres, mesh axes: `[min, max]`.
    pub bounding_box: [[f64; 3]; 2],
    /// The unit the sidecar's lengths were written in (`"m"` unless `sidecar_units` says
    /// otherwise). Every length of this document is in metres whatever it is.
    pub sidecar_units: &'static str,
    /// The project datum, when the sidecar gives one. Levels in this document are the
    /// mesh's own elevations (along `up`, m); a project elevation is that plus
    /// `mesh_origin_elevation`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub datum: Option<DatumEcho>,
}

/// The project datum as echoed in the result.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct DatumEcho {
    pub name: Option<String>,
    /// Elevation of the mesh's origin in the project datum, m.
    pub mesh_origin_elevation: f64,
}

/// How one part was treated.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct PartInputs {
    pub name: String,
    pub facets: usize,
    /// The liquid that wets it, or null when dry.
    pub liquid: Option<String>,
    pub wet_side: &'static str,
    pub closed: bool,
}

/// One liquid as a case resolved it.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct LiquidEcho {
    pub name: String,
    pub level: f64,
    pub surface_pressure: f64,
    /// `[[density, down_to or null], …]`, top to bottom.
    pub layers: Vec<(f64, Option<f64>)>,
}

/// The results of one load case.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct CaseResult {
    pub name: String,
    pub liquids: Vec<LiquidEcho>,
    #[serde(flatten)]
    pub loads: Loads,
    pub parts: Vec<PartResult>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sweep: Option<Vec<SweepStep>>,
    /// With a sweep: the largest magnitude of each headline quantity and its level.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sweep_governing: Option<Governing>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flotation: Option<FlotationCheck>,
    /// A freely floating body: equilibrium, righting levers and stability.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub floating: Option<super::FloatingResult>,
}

/// One part's results in a case.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct PartResult {
    pub name: String,
    #[serde(flatten)]
    pub loads: Loads,
}

/// The loads of a case or a part (SI, mesh axes).
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Loads {
    /// N.
    pub force: [f64; 3],
    /// N·m about `moment_about`.
    pub moment: [f64; 3],
    /// m.
    pub moment_about: [f64; 3],
    /// m².
    pub wetted_area: f64,
    /// N ≥ 0.
    pub uplift: f64,
    /// N ≥ 0.
    pub downthrust: f64,
    /// m³, or null for an open surface.
    pub submerged_volume: Option<f64>,
    pub centre_of_buoyancy: Option<[f64; 3]>,
    pub line_of_action: Option<LineOut>,
    pub centre_of_pressure: Option<[f64; 3]>,
    /// Magnitude of the horizontal component of `force`, N.
    pub horizontal_force: f64,
    /// Component of `force` along up, N (positive up; equals uplift − downthrust).
    pub vertical_force: f64,
    /// Largest gauge pressure on the loaded surface, Pa.
    pub max_pressure: f64,
    pub axis_moments: std::collections::BTreeMap<String, AxisMoment>,
}

/// The line of action as written (mesh axes, metres).
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct LineOut {
    pub point: [f64; 3],
    pub direction: [f64; 3],
    pub couple: f64,
}

/// Moment about a named axis and how far the line of action misses it.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct AxisMoment {
    /// N·m, right-hand rule about the axis direction.
    pub moment: f64,
    /// m; null when the force is zero.
    pub miss_distance: Option<f64>,
}

/// One level of a sweep.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SweepStep {
    pub level: f64,
    pub force: [f64; 3],
    pub moment: [f64; 3],
    pub uplift: f64,
    pub downthrust: f64,
    pub wetted_area: f64,
    pub submerged_volume: Option<f64>,
    pub axis_moments: std::collections::BTreeMap<String, AxisMoment>,
    /// With a flotation check: Σ resisting / net uplift at this level, null when the net
    /// uplift is 0 (not written without a flotation check).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flotation_factor: Option<Option<f64>>,
}

/// Safety against flotation: resisting loads over the net uplift.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct FlotationCheck {
    /// Net upward vertical force of the liquid (uplift − downthrust, at least 0), N.
    pub uplift: f64,
    /// Σ of the resisting loads, N.
    pub resisting: f64,
    /// The resisting loads as the user named them, N.
    pub resisting_terms: std::collections::BTreeMap<String, f64>,
    /// resisting / uplift; null when the uplift is 0.
    pub factor: Option<f64>,
    pub required_factor: f64,
    pub pass: bool,
    pub formula: String,
    /// The preset the required factor came from, when the sidecar named one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub factor_preset: Option<PresetEcho>,
}

/// A flotation preset as echoed in the result.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct PresetEcho {
    pub name: String,
    /// The document, edition and clause.
    pub source: String,
    /// How far the value was checked against the document.
    pub checked: String,
    /// The value was recalled, not read in the document.
    pub from_memory: bool,
}
