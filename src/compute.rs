//! One computation: a read mesh and a validated sidecar in, the result document out.
//!
//! Pure (no files, clock or environment): it maps units and the up axis into the core's
//! frame, works out topology and which side of every facet the liquid is on, integrates
//! every case (and sweep step), and maps the sums back to mesh axes as the result fields
//! pinned by CONTRACT.md. The document's layout is specified on [`MeshResult`].

use rayon::prelude::*;
use serde::Serialize;
use thiserror::Error;

use crate::hydro::{
    self, Frame, LineOfAction, Liquid, LiquidError, NO_SHELL, PartAccum, PartInput, Profile,
    Topology, Tri, Vec3, WetSide, Wetting,
};
use crate::mesh::{Format, Mesh, Part, STALE_NORMAL_DEG};
use crate::sidecar::{
    AUTO_FIELD_EXPORT_FACETS, Case, FieldExports, Flotation, Sidecar, Sweep, UnassignedPart,
};

/// Version of the result document's layout.
pub const SCHEMA: u32 = 1;

/// The caution printed with every result.
pub const CAUTION: &str = "Hydrostatic loads only: static liquid pressure on rigid surfaces. \
Not included: waves, surge, seiche, currents, seismic or sloshing effects, wind, ice, debris, \
impact, soil pressure, seepage or any dynamic effect. Results are only as good as the mesh, \
units, levels and densities given. Check them against the codes that apply where the \
structure is built, and have a licensed engineer review any design that relies on them.";

/// Why a mesh and its sidecar cannot be computed together.
#[derive(Debug, Error)]
pub enum ComputeError {
    #[error(
        "the mesh is open ({open} open edges, {non_manifold} non-manifold edges), so \"outside\"/\"inside\" have no meaning for part \"{part}\": set \"wet_side\": \"front\" (liquid on the side the right-hand-rule normals point to) or \"back\""
    )]
    OpenWithClosedSide {
        part: String,
        open: usize,
        non_manifold: usize,
    },
    #[error(
        "the mesh is open ({open} open edges, {non_manifold} non-manifold edges) and no wet_side is given for part \"{part}\": add \"wet_side\": \"front\" (liquid on the side the right-hand-rule facet normals point to) or \"back\""
    )]
    OpenWithoutSide {
        part: String,
        open: usize,
        non_manifold: usize,
    },
    #[error(transparent)]
    Unassigned(#[from] UnassignedPart),
    #[error("case \"{case}\", liquid \"{liquid}\": {source}")]
    Liquid {
        case: String,
        liquid: String,
        source: LiquidError,
    },
    #[error("the mesh has no facets")]
    Empty,
    #[error(
        "the mesh has {facets} facets, more than the {} the topology can number",
        crate::limits::FACETS_CEILING
    )]
    TooManyFacets { facets: usize },
    #[error("a result came out non-finite ({what}); check the mesh coordinates and sidecar values")]
    NonFinite { what: String },
}

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

/// Everything about the mesh that does not change between cases.
struct Prepared {
    /// The mesh's parts (facet ranges into `tris`) and format.
    parts: Vec<Part>,
    format: Format,
    frame: Frame,
    /// Local origin (bounding-box centre), internal frame.
    centre: Vec3,
    tris: Vec<Tri>,
    /// Bounding box of `tris`.
    local_box: (Vec3, Vec3),
    topology: Topology,
    /// Which side of every part and facet is wet.
    wet: Wet,
    /// Per part: closed by itself (volumes reported).
    part_closed: Vec<bool>,
    /// Per part and for the whole mesh: the plane, when planar (internal, local).
    part_plane: Vec<Option<hydro::Plane>>,
    mesh_plane: Option<hydro::Plane>,
    moment_about: Vec3,
    axes: Vec<(String, Vec3, Vec3)>,
}

/// Computes every case of `sidecar` on `mesh`; `mesh_name` is the file name to report.
///
/// Works on a copy of the facets; [`compute_model`] takes the mesh and keeps what the
/// exports need.
pub fn compute(
    mesh_name: &str,
    mesh: &Mesh,
    sidecar: &Sidecar,
) -> Result<MeshResult, ComputeError> {
    compute_model(mesh_name, mesh.clone(), sidecar).map(|(result, _)| result)
}

/// A mesh taken into the computation: its facets moved into the internal frame in place
/// (the mesh's own copy is not kept), its topology, and which side of every facet is wet.
/// Everything that does not change between cases; [`Model::field`] reads it again.
pub struct Model {
    prep: Prepared,
}

impl Model {
    /// Number of facets.
    pub fn facets(&self) -> usize {
        self.prep.tris.len()
    }
}

/// [`compute`] on a mesh given up to it, returning the [`Model`] beside the result. The
/// mesh's facet storage is reused for the internal frame, so no second copy is made.
pub fn compute_model(
    mesh_name: &str,
    mesh: Mesh,
    sidecar: &Sidecar,
) -> Result<(MeshResult, Model), ComputeError> {
    if mesh.facets.is_empty() {
        return Err(ComputeError::Empty);
    }
    // The readers refuse such meshes first (their cap is at most this); a mesh built in
    // code is checked here.
    if mesh.facets.len() > crate::limits::FACETS_CEILING {
        return Err(ComputeError::TooManyFacets {
            facets: mesh.facets.len(),
        });
    }
    let mut warnings = Vec::new();
    let (prep, early) = prepare(mesh, sidecar, &mut warnings)?;
    let facets = prep.tris.len();
    if sidecar.field_exports == FieldExports::Auto && !sidecar.field_exports.writes(facets) {
        warnings.push(format!(
            "per-facet exports (.vtp, .csv) not written: the mesh has {facets} facets, over the {AUTO_FIELD_EXPORT_FACETS} for which \"field_exports\": \"auto\" writes them; set \"field_exports\": \"always\" in the sidecar to write them (about 550 bytes of text a facet)"
        ));
    }

    let mut cases = Vec::with_capacity(sidecar.cases.len());
    let ahead = early.profiles.into_iter().zip(early.accs);
    for (case, (profiles, ahead)) in sidecar.cases.iter().zip(ahead) {
        let profiles = profiles?;
        let accs = match ahead {
            Some(accs) => accs,
            None => run(&prep.tris, &prep.parts, &prep.wet, &profiles),
        };
        let (loads, parts) = assemble(&prep, &accs);
        let sweep = match &sidecar.sweep {
            None => None,
            Some(sw) => Some(sweep_steps(&prep, sidecar, case, sw, &accs)?),
        };
        let sweep_governing = sweep
            .as_deref()
            .zip(sidecar.sweep.as_ref())
            .map(|(steps, sw)| governing(&sidecar.liquids[sw.liquid].name, steps, diagonal(&prep)));
        let flotation = sidecar
            .flotation
            .as_ref()
            .map(|f| flotation_check(f, &loads, 1e-12 * (loads.uplift + loads.downthrust)));
        cases.push(CaseResult {
            name: case.name.clone(),
            liquids: sidecar
                .liquids
                .iter()
                .zip(&case.liquids)
                .map(|(n, l)| echo(&n.name, l))
                .collect(),
            loads,
            parts,
            sweep,
            sweep_governing,
            flotation,
        });
    }

    let (lo, hi) = prep.local_box;
    let (lo, hi) = (lo + prep.centre, hi + prep.centre);
    let a = prep.frame.vector_out(lo);
    let b = prep.frame.vector_out(hi);
    let bounding_box = [
        [a[0].min(b[0]), a[1].min(b[1]), a[2].min(b[2])],
        [a[0].max(b[0]), a[1].max(b[1]), a[2].max(b[2])],
    ];
    let result = MeshResult {
        schema: SCHEMA,
        mesh: mesh_name.to_owned(),
        inputs: Inputs {
            format: prep.format.as_str(),
            units: sidecar.units.as_str(),
            up: sidecar.up.as_str(),
            gravity: sidecar.gravity_m_s2,
            wet_side: sidecar.wet_side.map(WetSide::as_str),
            closed: prep.wet.closed,
            facets: prep.tris.len(),
            shells: prep.topology.shells.len(),
            parts: prep
                .parts
                .iter()
                .zip(&prep.wet.part_setup)
                .zip(&prep.part_closed)
                .map(|((p, (liquid, side)), closed)| PartInputs {
                    name: p.name.clone(),
                    facets: p.facets.len(),
                    liquid: liquid.map(|i| sidecar.liquids[i].name.clone()),
                    wet_side: side.as_str(),
                    closed: *closed,
                })
                .collect(),
            bounding_box,
        },
        cases,
        warnings,
        caution: CAUTION,
    };
    check_finite(&result)?;
    Ok((result, Model { prep }))
}

/// The flotation check of a case: every resisting term over the net uplift of the liquid.
///
/// FS = Σ resisting / (uplift − downthrust). When the mesh's top is under the liquid its
/// downthrust is the weight of the liquid above it (the W_G of the USACE form
/// FS_f = (W_S + W_C + S) / (U − W_G)), so it is subtracted, not counted as resisting.
///
/// A net uplift at most `noise` (N) is round-off and counts as none.
fn flotation_check(f: &Flotation, loads: &Loads, noise: f64) -> FlotationCheck {
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

fn echo(name: &str, l: &Liquid) -> LiquidEcho {
    LiquidEcho {
        name: name.to_owned(),
        level: l.level_m,
        surface_pressure: l.surface_pressure_pa,
        layers: l
            .layers
            .iter()
            .map(|y| (y.density_kg_m3, y.down_to_m))
            .collect(),
    }
}

/// The liquids of a case as profiles in the local frame (elevations relative to the
/// local origin; levels are given in metres along the up axis, as is the frame's `z`).
fn profiles_of(
    sidecar: &Sidecar,
    case: &str,
    liquids: &[Liquid],
    origin_z: f64,
) -> Result<Vec<Profile>, ComputeError> {
    liquids
        .iter()
        .zip(&sidecar.liquids)
        .map(|(l, n)| {
            Profile::new(l, sidecar.gravity_m_s2)
                .map(|p| p.shifted(origin_z))
                .map_err(|source| ComputeError::Liquid {
                    case: case.to_owned(),
                    liquid: n.name.clone(),
                    source,
                })
        })
        .collect()
}

/// What [`prepare`] finds for the cases before their loop: each case's liquid profiles
/// (or the error to report when the case comes), and the loads of the cases it could
/// compute while the topology was being built (see [`Wet::clean_guess`]).
struct Early {
    profiles: Vec<Result<Vec<Profile>, ComputeError>>,
    accs: Vec<Option<Vec<PartAccum>>>,
}

fn prepare(
    mesh: Mesh,
    sidecar: &Sidecar,
    warnings: &mut Vec<String>,
) -> Result<(Prepared, Early), ComputeError> {
    let frame = Frame {
        scale_m: sidecar.units.metres(),
        up: sidecar.up,
    };
    // Stored normals play no part in the loads, but their disagreement with the winding
    // (judged as the file was read) is reported.
    let stale = mesh.stale_normals(0..mesh.facets.len());
    let Mesh {
        mut facets,
        parts,
        format,
        normal_stale: _,
    } = mesh;
    // Min and max are exact, so this parallel pass gives the same bits on any thread count.
    let (lo, hi) = facets
        .par_iter()
        .fold(
            || ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]),
            |(mut lo, mut hi), t| {
                for p in t {
                    for k in 0..3 {
                        lo[k] = lo[k].min(p[k]);
                        hi[k] = hi[k].max(p[k]);
                    }
                }
                (lo, hi)
            },
        )
        .reduce(
            || ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]),
            |(a, b), (c, d)| {
                (
                    [a[0].min(c[0]), a[1].min(c[1]), a[2].min(c[2])],
                    [b[0].max(d[0]), b[1].max(d[1]), b[2].max(d[2])],
                )
            },
        );
    if stale > 0 {
        warnings.push(format!(
            "{stale} stored STL normal(s) disagree with their facet's winding by more than {STALE_NORMAL_DEG}°: wetload ignores stored normals and uses the vertex order, but other tools may not"
        ));
    }
    check_extent(&lo, &hi, sidecar.units.metres())?;
    let mid = [
        (lo[0] + hi[0]) / 2.0,
        (lo[1] + hi[1]) / 2.0,
        (lo[2] + hi[2]) / 2.0,
    ];
    let centre = frame.point_in(mid);
    // Into the internal frame about the local origin, in place; then the same storage is
    // read as `Tri`s (three f64 a vertex either way, so the cast cannot fail).
    facets.par_iter_mut().for_each(|t| {
        for p in t.iter_mut() {
            let q = frame.point_in(*p) - centre;
            *p = [q.x, q.y, q.z];
        }
    });
    let tris: Vec<Tri> = bytemuck::cast_vec(facets);
    // The box of `tris`, from the mesh's box: each internal coordinate is one mesh
    // coordinate times ±1 and the (positive) scale, less the centre, and each of those steps
    // keeps the order of values under rounding, so the corners map to corners exactly.
    let local_box = {
        let (a, b) = (frame.point_in(lo) - centre, frame.point_in(hi) - centre);
        (a.inf(&b), a.sup(&b))
    };
    let profiles: Vec<_> = sidecar
        .cases
        .iter()
        .map(|c| profiles_of(sidecar, &c.name, &c.liquids, centre.z))
        .collect();
    // The topology is mostly one thread's work. Meanwhile the other thread finds the
    // planes of the parts, which need only the facets, and computes the cases on the guess
    // that the mesh is clean; the guess is kept only if the topology confirms it exactly.
    let (topology, (part_plane, mesh_plane, guess)) = rayon::join(
        || Topology::build_in_box(&tris, local_box),
        || {
            let part_plane: Vec<Option<hydro::Plane>> = parts
                .iter()
                .map(|p| hydro::plane_of(tris[p.facets.clone()].iter()))
                .collect();
            let mesh_plane = match &part_plane[..] {
                [one] if parts.len() == 1 => *one,
                _ => hydro::plane_of(tris.iter()),
            };
            let guess = Wet::clean_guess(&parts, sidecar, tris.len()).map(|wet| {
                let accs: Vec<Option<Vec<PartAccum>>> = profiles
                    .iter()
                    .map(|p| p.as_ref().ok().map(|p| run(&tris, &parts, &wet, p)))
                    .collect();
                (wet, accs)
            });
            (part_plane, mesh_plane, guess)
        },
    );
    let wet = Wet::of(&parts, sidecar, &topology)?;
    let accs = match guess {
        Some((guessed, accs)) if guessed == wet => accs,
        _ => vec![None; sidecar.cases.len()],
    };
    let closed = wet.closed;

    let part_closed: Vec<bool> = parts
        .iter()
        .map(|p| closed && topology.closed_within(p.facets.clone()))
        .collect();
    describe_topology(&topology, &wet.part_setup, closed, warnings);
    units_hint(sidecar, &lo, &hi, warnings);

    let axes = sidecar
        .axes
        .iter()
        .map(|a| {
            (
                a.name.clone(),
                frame.vector_in(a.point_m),
                frame.vector_in(a.direction),
            )
        })
        .collect();
    let prepared = Prepared {
        parts,
        format,
        frame,
        centre,
        tris,
        local_box,
        moment_about: frame.vector_in(sidecar.moment_about_m),
        topology,
        wet,
        part_closed,
        part_plane,
        mesh_plane,
        axes,
    };
    Ok((prepared, Early { profiles, accs }))
}

/// Which side of every part and facet is wet: all the integration needs to know of the
/// topology. Equal values give the same loads, bit for bit.
#[derive(Debug, PartialEq)]
struct Wet {
    /// Every shell closed: volumes are measured.
    closed: bool,
    /// Per part: liquid index (None = dry) and resolved wet side.
    part_setup: Vec<(Option<usize>, WetSide)>,
    wetting: Vec<Wetting>,
    /// +1 or −1 for a facet that bounds the measured volume (by its winding), else 0.
    vol_sign: Vec<i8>,
}

/// A facet's place in the topology, as far as the wetting needs it.
#[derive(Clone, Copy)]
struct Place {
    /// Its shell, if it has one: (enclosed by no other shell, encloses no other shell).
    shell: Option<(bool, bool)>,
    /// Read reversed to face outward (or consistently, for an open shell).
    flip: bool,
}

impl Wet {
    /// The wetting the topology gives.
    fn of(parts: &[Part], sidecar: &Sidecar, topology: &Topology) -> Result<Wet, ComputeError> {
        let closed = topology.closed();
        let open = (topology.open_edges, topology.non_manifold_edges);
        let part_setup = resolve_sides(parts, sidecar, closed, open)?;
        let place = |f: usize| {
            let s = topology.facet_shell[f];
            Place {
                shell: (s != NO_SHELL).then(|| {
                    let sh = &topology.shells[s as usize];
                    (sh.depth == 0, sh.children == 0)
                }),
                flip: topology.flip[f],
            }
        };
        let facets = topology.facet_shell.len();
        Ok(Wet::with(parts, sidecar, closed, part_setup, facets, place))
    }

    /// The wetting of a clean mesh, before its topology is known: every facet in a shell
    /// of its own nesting level, wound outward; closed unless every part states a wet side
    /// of an open surface (front or back). `None` when the sidecar does not fit the guess.
    fn clean_guess(parts: &[Part], sidecar: &Sidecar, facets: usize) -> Option<Wet> {
        let closed = parts.iter().all(|p| {
            !matches!(
                sidecar.part_wet_side(&p.name),
                Some(WetSide::Front | WetSide::Back)
            )
        });
        let part_setup = resolve_sides(parts, sidecar, closed, (0, 0)).ok()?;
        let clean = Place {
            shell: Some((true, true)),
            flip: false,
        };
        Some(Wet::with(
            parts,
            sidecar,
            closed,
            part_setup,
            facets,
            |_| clean,
        ))
    }

    fn with(
        parts: &[Part],
        sidecar: &Sidecar,
        closed: bool,
        part_setup: Vec<(Option<usize>, WetSide)>,
        facets: usize,
        place: impl Fn(usize) -> Place,
    ) -> Wet {
        // Volumes follow the mesh-level reading: the liquid's space for "inside", else
        // the body.
        let volume_inside = sidecar.wet_side == Some(WetSide::Inside);
        let mut wetting = vec![Wetting::Dry; facets];
        let mut vol_sign = vec![0i8; facets];
        for (part, (liquid, side)) in parts.iter().zip(&part_setup) {
            for f in part.facets.clone() {
                let Place { shell, flip } = place(f);
                let (outward, inward) = if flip {
                    (Wetting::Back, Wetting::Front)
                } else {
                    (Wetting::Front, Wetting::Back)
                };
                if closed && let Some((outermost, innermost)) = shell {
                    let counts = if volume_inside { innermost } else { outermost };
                    if counts {
                        vol_sign[f] = if flip { -1 } else { 1 };
                    }
                }
                if liquid.is_none() {
                    continue;
                }
                wetting[f] = match side {
                    WetSide::Front => Wetting::Front,
                    WetSide::Back => Wetting::Back,
                    WetSide::Outside => match shell {
                        Some((true, _)) => outward,
                        _ => Wetting::Dry,
                    },
                    WetSide::Inside => match shell {
                        Some((_, true)) => inward,
                        _ => Wetting::Dry,
                    },
                };
            }
        }
        Wet {
            closed,
            part_setup,
            wetting,
            vol_sign,
        }
    }
}

/// The wet side and liquid of every part. An open mesh needs a stated front or back;
/// `open` is its count of (open, non-manifold) edges, for the message.
fn resolve_sides(
    parts: &[Part],
    sidecar: &Sidecar,
    closed: bool,
    (open, non_manifold): (usize, usize),
) -> Result<Vec<(Option<usize>, WetSide)>, ComputeError> {
    parts
        .iter()
        .map(|part| {
            let liquid = sidecar.part_liquid(&part.name)?;
            let side = match (sidecar.part_wet_side(&part.name), closed) {
                (Some(WetSide::Outside | WetSide::Inside), false) => {
                    return Err(ComputeError::OpenWithClosedSide {
                        part: part.name.clone(),
                        open,
                        non_manifold,
                    });
                }
                (Some(s), _) => s,
                (None, true) => WetSide::Outside,
                (None, false) => {
                    return Err(ComputeError::OpenWithoutSide {
                        part: part.name.clone(),
                        open,
                        non_manifold,
                    });
                }
            };
            Ok((liquid, side))
        })
        .collect()
}

fn describe_topology(
    t: &Topology,
    setup: &[(Option<usize>, WetSide)],
    closed: bool,
    w: &mut Vec<String>,
) {
    let uses_shells = setup
        .iter()
        .any(|(_, s)| matches!(s, WetSide::Outside | WetSide::Inside));
    if uses_shells {
        let flipped: usize = t.shells.iter().map(|s| s.flipped_facets).sum();
        let inverted = t.shells.iter().filter(|s| s.inverted).count();
        if inverted > 0 {
            w.push(format!(
                "{inverted} closed shell(s) were wound inward as stored; they were turned outward for the computation (the file is unchanged)"
            ));
        }
        if flipped > 0 {
            w.push(format!(
                "winding repaired: {flipped} facet(s) are read reversed so that every closed shell is consistently wound and faces outward"
            ));
        }
    } else if !closed && setup.iter().any(|(l, _)| l.is_some()) {
        let side = setup
            .iter()
            .find(|(l, _)| l.is_some())
            .map_or("front", |(_, s)| s.as_str());
        w.push(format!(
            "open surface: the liquid is taken on the \"{side}\" side, i.e. the side {} the right-hand-rule normals (vertex order) point to; if the loads act the wrong way, set \"wet_side\": \"{}\"",
            if side == "front" { "that" } else { "opposite to the one" },
            if side == "front" { "back" } else { "front" }
        ));
        if t.inconsistent_edges > 0 {
            w.push(format!(
                "{} edge(s) join facets wound in opposite senses: with front/back the winding is used as stored, so parts of the surface may be loaded from the wrong side; fix the export or close the mesh",
                t.inconsistent_edges
            ));
        }
    }
    let cavities = t.shells.iter().filter(|s| s.closed && s.depth > 0).count();
    if closed && cavities > 0 {
        w.push(format!(
            "{cavities} closed shell(s) lie sealed inside another: with \"outside\" they are dry cavities and their volume belongs to the enclosing body"
        ));
    }
    if t.degenerate_facets > 0 {
        w.push(format!(
            "{} degenerate facet(s) (a repeated vertex within the weld tolerance) were ignored for topology",
            t.degenerate_facets
        ));
    }
    if t.duplicate_facets > 0 {
        w.push(format!(
            "{} duplicate facet(s): each carries load again, so the loads on them are counted twice",
            t.duplicate_facets
        ));
    }
    if !closed && t.non_manifold_edges > 0 {
        w.push(format!(
            "{} non-manifold edge(s) (shared by more than two facets)",
            t.non_manifold_edges
        ));
    }
}

/// Warns when the mesh's size in metres suggests a different unit was meant.
fn units_hint(sidecar: &Sidecar, lo: &[f64; 3], hi: &[f64; 3], w: &mut Vec<String>) {
    let extent = (0..3).map(|k| hi[k] - lo[k]).fold(0.0, f64::max) * sidecar.units.metres();
    let unit = sidecar.units.as_str();
    if extent > 2000.0 {
        let likely = if unit == "m" { "mm" } else { "a smaller unit" };
        w.push(format!(
            "the mesh is {:.0} m across in \"{unit}\": for a hydraulic structure that is implausibly large; is \"units\" really \"{unit}\"? (perhaps \"{likely}\")",
            extent
        ));
    } else if extent > 0.0 && extent < 0.05 {
        let likely = if unit == "mm" { "m" } else { "a larger unit" };
        w.push(format!(
            "the mesh is {:.4} m across in \"{unit}\": for a hydraulic structure that is implausibly small; is \"units\" really \"{unit}\"? (perhaps \"{likely}\")",
            extent
        ));
    }
}

/// The pressure field of one case, facet by facet, for pictures and finite-element
/// loads: every loaded or dry piece of the surface as clipped at the free surface and the
/// layer interfaces, and one row per facet. Mesh axes, metres, SI.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// Pieces in facet order (a facet cut by planes gives several).
    pub pieces: Vec<FieldPiece>,
    /// One row per facet, in file order within parts.
    pub facets: Vec<FacetRow>,
    /// Part names, indexed by `part` below.
    pub parts: Vec<String>,
}

/// A convex planar piece of one facet on which the pressure is linear.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldPiece {
    pub facet: usize,
    pub part: usize,
    /// Whether liquid is in contact (the piece is at or below the free surface of a liquid
    /// that reaches the facet); other pieces carry only gas pressure, or nothing when dry.
    pub wetted: bool,
    /// Vertices in the facet's stored winding, mesh axes, m.
    pub vertices: Vec<[f64; 3]>,
    /// Gauge pressure at each vertex, Pa (0 on a dry facet).
    pub pressure: Vec<f64>,
    /// Mean traction (force per area) on the piece, N/m², mesh axes.
    pub traction: [f64; 3],
    /// m².
    pub area: f64,
}

/// The load on one facet, for transfer to a finite-element model.
#[derive(Clone, Debug, PartialEq)]
pub struct FacetRow {
    pub part: usize,
    /// Index of the facet within its part (from 0).
    pub index: usize,
    /// m, mesh axes.
    pub centroid: [f64; 3],
    /// Unit normal pointing into the liquid (the stored normal for a dry facet).
    pub normal: [f64; 3],
    /// m².
    pub area: f64,
    /// |force| / area over the whole facet, Pa (0 when dry).
    pub mean_pressure: f64,
    /// N, mesh axes; the rows sum to the case's force.
    pub force: [f64; 3],
}

/// The pressure field of case `case` (an index into the sidecar's cases).
pub fn field(mesh: &Mesh, sidecar: &Sidecar, case: usize) -> Result<Field, ComputeError> {
    let (_, model) = compute_model("", mesh.clone(), sidecar)?;
    model.field(sidecar, case)
}

impl Model {
    /// The pressure field of case `case` (an index into the sidecar's cases); `sidecar`
    /// must be the one the model was computed with.
    pub fn field(&self, sidecar: &Sidecar, case: usize) -> Result<Field, ComputeError> {
        let prep = &self.prep;
        let Some(case) = sidecar.cases.get(case) else {
            return Ok(Field {
                pieces: Vec::new(),
                facets: Vec::new(),
                parts: Vec::new(),
            });
        };
        let profiles = profiles_of(sidecar, &case.name, &case.liquids, prep.centre.z)?;
        let out = |v: Vec3| prep.frame.vector_out(v);
        let mut pieces = Vec::new();
        let mut facets = Vec::with_capacity(prep.tris.len());
        for (pi, (part, (liquid, _))) in prep.parts.iter().zip(&prep.wet.part_setup).enumerate() {
            let profile = liquid.map(|i| &profiles[i]);
            let planes = hydro::part_planes(profile, None);
            for f in part.facets.clone() {
                let t = &prep.tris[f];
                let wet = prep.wet.wetting[f];
                let side = match wet {
                    Wetting::Front => 1.0,
                    Wetting::Back => -1.0,
                    Wetting::Dry => 0.0,
                };
                let prof = if side == 0.0 { None } else { profile };
                let a = 0.5 * (t[1] - t[0]).cross(&(t[2] - t[0]));
                let area = a.norm();
                let normal = if side == 0.0 { a } else { side * a };
                let loads = hydro::facet_loads(t, &planes, prof, wet, None, 0);
                let level = prof.map_or(f64::NEG_INFINITY, Profile::level);
                hydro::slab_pieces(t, &planes, |piece, _| {
                    let v = piece.vertices();
                    let pressure: Vec<f64> = v
                        .iter()
                        .map(|p| prof.map_or(0.0, |pr| pr.pressure(p.z)))
                        .collect();
                    let mut av = Vec3::zeros();
                    for k in 1..v.len() - 1 {
                        av += 0.5 * (v[k] - v[0]).cross(&(v[k + 1] - v[0]));
                    }
                    let pa = av.norm();
                    // The mean of a linear field over a convex polygon, by its fan triangles.
                    let mut mean = 0.0;
                    for k in 1..v.len() - 1 {
                        let ak = 0.5 * (v[k] - v[0]).cross(&(v[k + 1] - v[0])).norm();
                        mean += ak * (pressure[0] + pressure[k] + pressure[k + 1]) / 3.0;
                    }
                    let mean = if pa > 0.0 { mean / pa } else { 0.0 };
                    let n = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                    let zc = v.iter().map(|p| p.z).sum::<f64>() / v.len() as f64;
                    pieces.push(FieldPiece {
                        facet: f,
                        part: pi,
                        wetted: prof.is_some() && zc <= level,
                        vertices: v.iter().map(|p| out(p + prep.centre)).collect(),
                        pressure,
                        traction: out(-mean * n),
                        area: pa,
                    });
                });
                let n = normal.try_normalize(0.0).unwrap_or_else(Vec3::zeros);
                facets.push(FacetRow {
                    part: pi,
                    index: f - part.facets.start,
                    centroid: out((t[0] + t[1] + t[2]) / 3.0 + prep.centre),
                    normal: out(n),
                    area,
                    mean_pressure: if area > 0.0 {
                        // `hypot`: no overflow while the components are finite.
                        let f = loads.force;
                        f.x.hypot(f.y).hypot(f.z) / area
                    } else {
                        0.0
                    },
                    force: out(loads.force),
                });
            }
        }
        Ok(Field {
            pieces,
            facets,
            parts: prep.parts.iter().map(|p| p.name.clone()).collect(),
        })
    }
}

fn run(tris: &[Tri], parts: &[Part], wet: &Wet, profiles: &[Profile]) -> Vec<PartAccum> {
    let closed = wet.closed;
    let inputs: Vec<PartInput<'_>> = parts
        .iter()
        .zip(&wet.part_setup)
        .map(|(p, (liquid, _))| {
            let profile = liquid.map(|i| &profiles[i]);
            // Volumes are measured below the part's own liquid, or the first liquid's.
            let level = profile.unwrap_or(&profiles[0]).level();
            PartInput {
                facets: p.facets.clone(),
                profile,
                volume_level: closed.then_some(level),
            }
        })
        .collect();
    hydro::integrate(tris, &inputs, &wet.wetting, &wet.vol_sign)
}

/// The steps of a level sweep in one case: the parts the swept liquid does not reach
/// keep the case's sums (`accs`), the others go through [`hydro::sweep`] in one pass.
fn sweep_steps(
    prep: &Prepared,
    sidecar: &Sidecar,
    case: &Case,
    sw: &Sweep,
    accs: &[PartAccum],
) -> Result<Vec<SweepStep>, ComputeError> {
    let closed = prep.wet.closed;
    let mut fixed = PartAccum::default();
    let mut parts = Vec::new();
    for (i, (p, (liquid, _))) in prep.parts.iter().zip(&prep.wet.part_setup).enumerate() {
        let wet = *liquid == Some(sw.liquid);
        // Volumes are measured below the part's own liquid, or the first one (see `run`).
        let volume = closed && liquid.unwrap_or(0) == sw.liquid;
        if wet || volume {
            parts.push(hydro::SweepPart {
                facets: p.facets.clone(),
                wet,
                volume,
            });
        } else {
            fixed = fixed.merge(&accs[i]);
        }
    }
    let levels = sw.levels();
    let swept = hydro::SweptLiquid {
        liquid: &case.liquids[sw.liquid],
        g_m_s2: sidecar.gravity_m_s2,
        origin_z: prep.centre.z,
    };
    let sums = hydro::sweep(
        &prep.tris,
        &parts,
        &prep.wet.wetting,
        &prep.wet.vol_sign,
        &swept,
        &levels,
    )
    .map_err(|source| ComputeError::Liquid {
        case: case.name.clone(),
        liquid: sidecar.liquids[sw.liquid].name.clone(),
        source,
    })?;
    let loads: Vec<Loads> = sums
        .iter()
        .map(|acc| loads_of(prep, &fixed.merge(acc), closed, prep.mesh_plane.as_ref()))
        .collect();
    // A net uplift within round-off of the sweep's largest loads counts as none (at a level
    // through a body's base the sums cancel to a few ulps, which would give FS ≈ 1e16).
    let noise = 1e-12
        * loads
            .iter()
            .map(|l| l.uplift + l.downthrust)
            .fold(0.0, f64::max);
    Ok(levels
        .iter()
        .zip(loads)
        .map(|(&level, l)| SweepStep {
            level,
            force: l.force,
            moment: l.moment,
            uplift: l.uplift,
            downthrust: l.downthrust,
            wetted_area: l.wetted_area,
            submerged_volume: l.submerged_volume,
            flotation_factor: sidecar
                .flotation
                .as_ref()
                .map(|f| flotation_check(f, &l, noise).factor),
            axis_moments: l.axis_moments,
        })
        .collect())
}

/// The largest magnitude of one quantity over a sweep, with its sign, and the level.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct Extreme {
    /// The value at that level (signed; its magnitude is the largest), SI.
    pub value: f64,
    /// m; the lowest level where the magnitude comes within a relative 1e-9 of the
    /// largest (values equal in exact arithmetic differ by round-off).
    pub level: f64,
}

/// The governing (largest-magnitude) value of each headline quantity over a sweep
/// (`sweep_governing` in the result; force components in mesh axes, N; moments N·m;
/// volume m³). `submerged_volume` is absent for an open mesh.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Governing {
    /// The liquid whose level the sweep steps.
    pub liquid: String,
    pub force_x: Extreme,
    pub force_y: Extreme,
    pub force_z: Extreme,
    pub force_magnitude: Extreme,
    pub uplift: Extreme,
    pub downthrust: Extreme,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub submerged_volume: Option<Extreme>,
    pub axis_moments: std::collections::BTreeMap<String, Extreme>,
    /// With a flotation check: the *lowest* factor of safety over the levels with a net
    /// uplift, and its level (null when no level has one; absent without a check).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flotation_factor: Option<Option<Extreme>>,
}

/// The governing values of a sweep's steps; `extent_m` (the mesh's size) scales the
/// round-off of moments.
///
/// A quantity whose largest magnitude is round-off (at most 1e-12 of the largest
/// uplift + downthrust + |F| of the sweep, times `extent_m` for moments), such as the
/// horizontal force on a closed body, governs as 0 at the first level.
pub fn governing(liquid: &str, steps: &[SweepStep], extent_m: f64) -> Governing {
    let force_scale = steps
        .iter()
        .map(|s| s.uplift + s.downthrust + s.force.iter().map(|x| x.abs()).sum::<f64>())
        .fold(0.0, f64::max);
    let pick_above = |f: &dyn Fn(&SweepStep) -> f64, noise: f64| {
        let largest = steps.iter().map(|s| f(s).abs()).fold(0.0, f64::max);
        let first = steps.first().map_or(0.0, |s| s.level);
        if largest <= noise {
            return Extreme {
                value: 0.0,
                level: first,
            };
        }
        // Equal values (a plateau, as buoyancy once a body is under) differ by round-off:
        // the first level within 1e-9 of the largest governs, not the noisiest.
        steps
            .iter()
            .find(|s| f(s).abs() >= largest * (1.0 - 1e-9))
            .map_or(
                Extreme {
                    value: 0.0,
                    level: first,
                },
                |s| Extreme {
                    value: f(s),
                    level: s.level,
                },
            )
    };
    let pick = |f: &dyn Fn(&SweepStep) -> f64| pick_above(f, 1e-12 * force_scale);
    let pick_moment = |f: &dyn Fn(&SweepStep) -> f64| pick_above(f, 1e-12 * force_scale * extent_m);
    let axes = steps
        .first()
        .map(|s| s.axis_moments.keys().cloned().collect::<Vec<_>>())
        .unwrap_or_default();
    Governing {
        liquid: liquid.to_owned(),
        force_x: pick(&|s| s.force[0]),
        force_y: pick(&|s| s.force[1]),
        force_z: pick(&|s| s.force[2]),
        force_magnitude: pick(&|s| s.force.iter().map(|x| x * x).sum::<f64>().sqrt()),
        uplift: pick(&|s| s.uplift),
        downthrust: pick(&|s| s.downthrust),
        submerged_volume: steps
            .first()
            .and_then(|s| s.submerged_volume)
            .map(|_| pick_above(&|s| s.submerged_volume.unwrap_or(0.0), 0.0)),
        axis_moments: axes
            .into_iter()
            .map(|name| {
                let e = pick_moment(&|s| s.axis_moments.get(&name).map_or(0.0, |a| a.moment));
                (name, e)
            })
            .collect(),
        flotation_factor: steps.first().and_then(|s| s.flotation_factor).map(|_| {
            let factors = || {
                steps
                    .iter()
                    .filter_map(|s| Some((s.flotation_factor??, s.level)))
            };
            let lowest = factors().map(|(fs, _)| fs).reduce(f64::min)?;
            // As above: the first level within round-off of the lowest governs.
            factors()
                .find(|&(fs, _)| fs <= lowest * (1.0 + 1e-9))
                .map(|(value, level)| Extreme { value, level })
        }),
    }
}

/// The diagonal of the mesh's bounding box, m.
fn diagonal(prep: &Prepared) -> f64 {
    let (lo, hi) = prep.local_box;
    (hi - lo).norm()
}

fn total_of(accs: &[PartAccum]) -> PartAccum {
    accs.iter().fold(PartAccum::default(), |a, b| a.merge(b))
}

fn assemble(prep: &Prepared, accs: &[PartAccum]) -> (Loads, Vec<PartResult>) {
    let total = total_of(accs);
    let loads = loads_of(prep, &total, prep.wet.closed, prep.mesh_plane.as_ref());
    let parts = prep
        .parts
        .iter()
        .enumerate()
        .map(|(i, p)| PartResult {
            name: p.name.clone(),
            loads: loads_of(
                prep,
                &accs[i],
                prep.part_closed[i],
                prep.part_plane[i].as_ref(),
            ),
        })
        .collect();
    (loads, parts)
}

/// Turns local sums into the result fields, in mesh axes.
fn loads_of(
    prep: &Prepared,
    acc: &PartAccum,
    volumes: bool,
    plane: Option<&hydro::Plane>,
) -> Loads {
    let c = prep.centre;
    let o = prep.moment_about;
    // Moment about the requested point: M_O = M_c + (c − O) × F.
    let m_o = acc.moment + (c - o).cross(&acc.force);
    let line = hydro::line_of_action(acc.force, m_o, o, acc.abs_force);
    let out = |v: Vec3| prep.frame.vector_out(v);
    let centre_of_pressure = match (plane, &line) {
        (Some(pl), Some(l)) => {
            let shifted = hydro::Plane {
                point: pl.point + c,
                normal: pl.normal,
            };
            shifted.meet(l).map(out)
        }
        _ => None,
    };
    let (submerged_volume, centre_of_buoyancy) = if volumes {
        let v = acc.volume;
        let cob = (v.abs() > 0.0).then(|| out(c + acc.volume_moment / v));
        (Some(v), cob)
    } else {
        (None, None)
    };
    let axis_moments = prep
        .axes
        .iter()
        .map(|(name, p, d)| {
            let m_p = m_o + (o - p).cross(&acc.force);
            let miss = line.as_ref().map(|l| line_distance(l, *p, *d));
            (
                name.clone(),
                AxisMoment {
                    moment: m_p.dot(d),
                    miss_distance: miss,
                },
            )
        })
        .collect();
    Loads {
        force: out(acc.force),
        moment: out(m_o),
        moment_about: out(o),
        wetted_area: acc.wetted_area,
        uplift: acc.uplift,
        downthrust: acc.downthrust,
        submerged_volume,
        centre_of_buoyancy,
        line_of_action: line.map(|l| LineOut {
            point: out(l.point),
            direction: out(l.direction),
            couple: l.couple,
        }),
        centre_of_pressure,
        // `hypot`: no overflow while the components themselves are finite.
        horizontal_force: acc.force.x.hypot(acc.force.y),
        vertical_force: acc.force.z,
        max_pressure: if acc.max_pressure.is_finite() {
            acc.max_pressure
        } else {
            0.0
        },
        axis_moments,
    }
}

/// Shortest distance between the line of action and the axis through `p` along `d`.
fn line_distance(l: &LineOfAction, p: Vec3, d: Vec3) -> f64 {
    let w = p - l.point;
    let n = l.direction.cross(&d);
    let nn = n.norm();
    if nn < 1e-12 {
        w.cross(&l.direction).norm()
    } else {
        (w.dot(&n) / nn).abs()
    }
}

/// Refuses coordinates whose squares overflow f64 (beyond about 1e153 m): lengths, areas
/// and the weld tolerance would be infinite, and topology would report nonsense before
/// [`check_finite`] could see the loads. Smaller coordinates whose loads overflow are
/// caught by `check_finite`. `lo` and `hi` are the mesh's bounding box, in mesh units.
fn check_extent(lo: &[f64; 3], hi: &[f64; 3], metres: f64) -> Result<(), ComputeError> {
    let largest = lo.iter().chain(hi).fold(0.0f64, |m, c| m.max(c.abs())) * metres;
    // 16: the squared diagonal of a box whose corners reach ±largest on three axes is 12·largest².
    if (16.0 * largest * largest).is_finite() {
        Ok(())
    } else {
        Err(ComputeError::NonFinite {
            what: format!(
                "the mesh's size: a coordinate of {largest:e} m makes lengths and areas overflow f64"
            ),
        })
    }
}

fn check_finite(r: &MeshResult) -> Result<(), ComputeError> {
    // serde_json writes NaN and ±∞ as null, where they would hide among the real nulls.
    let bad = |x: f64| !x.is_finite();
    for c in &r.cases {
        let sets = std::iter::once(("the whole mesh", &c.loads))
            .chain(c.parts.iter().map(|p| (p.name.as_str(), &p.loads)));
        for (who, l) in sets {
            let scalars = [
                l.wetted_area,
                l.uplift,
                l.downthrust,
                l.max_pressure,
                l.horizontal_force,
                l.vertical_force,
            ];
            let optional = l
                .submerged_volume
                .into_iter()
                .chain(l.centre_of_buoyancy.into_iter().flatten())
                .chain(l.centre_of_pressure.into_iter().flatten())
                .chain(
                    l.line_of_action
                        .iter()
                        .flat_map(|a| a.point.into_iter().chain(a.direction).chain([a.couple])),
                )
                .chain(
                    l.axis_moments
                        .values()
                        .flat_map(|a| std::iter::once(a.moment).chain(a.miss_distance)),
                );
            if l.force
                .iter()
                .chain(&l.moment)
                .chain(&scalars)
                .copied()
                .chain(optional)
                .any(bad)
            {
                return Err(ComputeError::NonFinite {
                    what: format!("case \"{}\", {who}", c.name),
                });
            }
        }
        for step in c.sweep.iter().flatten() {
            let mut values = [step.level, step.uplift, step.downthrust, step.wetted_area]
                .into_iter()
                .chain(step.force)
                .chain(step.moment)
                .chain(step.submerged_volume)
                .chain(step.flotation_factor.flatten())
                .chain(
                    step.axis_moments
                        .values()
                        .flat_map(|a| std::iter::once(a.moment).chain(a.miss_distance)),
                );
            if values.any(bad) {
                return Err(ComputeError::NonFinite {
                    what: format!("case \"{}\", the sweep at level {}", c.name, step.level),
                });
            }
        }
        if let Some(f) = &c.flotation
            && [f.uplift, f.resisting].into_iter().chain(f.factor).any(bad)
        {
            return Err(ComputeError::NonFinite {
                what: format!("case \"{}\", the flotation check", c.name),
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mesh::Format;

    use crate::sidecar::parse_sidecar;
    use approx::assert_relative_eq;
    use std::path::Path;

    #[test]
    fn the_local_box_derived_from_the_mesh_box_is_that_of_the_facets() {
        // Off-centre, noisy coordinates in every up axis and unit: the box taken from the
        // mesh's box must equal, bit for bit, the box of the transformed facets.
        let tris = shapes::perturb(
            &shapes::torus([12.3, -4.56, 7.89], 3.0, 1.0, 20, 9),
            0.05,
            3,
        );
        for up in ["+x", "-x", "+y", "-y", "+z", "-z"] {
            for units in ["m", "mm", "ft"] {
                let side = parse_sidecar(
                    Path::new("t.json"),
                    &format!(
                        r#"{{"units": "{units}", "up": "{up}", "liquid": {{"level": 0, "density": 1000}}}}"#
                    ),
                )
                .expect("valid");
                let mesh = Mesh::from_parts(vec![("t", tris.clone())], Format::Obj);
                let (_, model) = compute_model("t.obj", mesh, &side).expect("computes");
                let prep = &model.prep;
                let facet_box = hydro::bounding_box(prep.tris.iter().flat_map(|t| t.iter()));
                assert_eq!(prep.local_box, facet_box, "up {up}, units {units}");
            }
        }
    }

    #[test]
    fn coordinates_whose_squares_overflow_are_refused_by_size() {
        let corner = |c: f64| ([0.0, 0.0, 0.0], [c, c, c]);
        let check = |c: f64, metres: f64| {
            let (lo, hi) = corner(c);
            check_extent(&lo, &hi, metres)
        };
        // 16 · (1e153)² = 1.6e307 is finite; 16 · (1e154)² is not.
        assert!(check(1e153, 1.0).is_ok());
        let err = check(1e154, 1.0).expect_err("refused");
        assert!(err.to_string().contains("1e154 m"), "{err}");
        // In metres after the unit: 1e155 mm is 1e152 m.
        assert!(check(1e155, 0.001).is_ok());
        // A negative corner counts as much as a positive one.
        assert!(check_extent(&[-1e154, 0.0, 0.0], &[0.0; 3], 1.0).is_err());
        // And through compute, which gets the box from the facets.
        let mesh = Mesh::from_parts(
            vec![(
                "p",
                vec![[[1e154, 0.0, 0.0], [0.0, 1e154, 0.0], [0.0, 0.0, 1e154]]],
            )],
            Format::Obj,
        );
        let side = parse_sidecar(
            Path::new("p.json"),
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0, "density": 1000}}"#,
        )
        .expect("valid");
        assert!(matches!(
            compute("p.obj", &mesh, &side),
            Err(ComputeError::NonFinite { .. })
        ));
    }

    const G: f64 = 9.80665;

    fn mesh(parts: Vec<(&str, Vec<shapes::Triangle>)>) -> Mesh {
        Mesh::from_parts(parts, Format::Obj)
    }

    fn side(json: &str) -> Sidecar {
        parse_sidecar(Path::new("t.json"), json).expect("valid sidecar")
    }

    fn block() -> Vec<shapes::Triangle> {
        shapes::box_solid([-1.0, -1.5, 0.0], [1.0, 1.5, 2.0], 3)
    }

    #[test]
    fn a_box_in_water_carries_its_buoyancy_through_its_centre_of_buoyancy() {
        // Archimedes: F = ρ g V_sub upward, through the centroid of the submerged box.
        let s = side(r#"{"units": "m", "liquid": {"level": 1.5, "density": 1025}}"#);
        let r = compute("b", &mesh(vec![("b", block())]), &s).expect("computes");
        let c = &r.cases[0].loads;
        let v = 2.0 * 3.0 * 1.5;
        assert_relative_eq!(c.force[2], 1025.0 * G * v, max_relative = 1e-13);
        assert_relative_eq!(c.force[0], 0.0, epsilon = 1e-8);
        assert_relative_eq!(c.submerged_volume.expect("closed"), v, max_relative = 1e-13);
        let cob = c.centre_of_buoyancy.expect("closed");
        assert_relative_eq!(cob[2], 0.75, epsilon = 1e-12);
        let line = c.line_of_action.expect("non-zero");
        assert_relative_eq!(line.point[0], 0.0, epsilon = 1e-12);
        assert_relative_eq!(line.point[1], 0.0, epsilon = 1e-12);
        // Uplift on the underside: ρ g h A = the whole buoyancy, walls add nothing vertical.
        assert_relative_eq!(c.uplift, 1025.0 * G * 1.5 * 6.0, max_relative = 1e-13);
        assert_relative_eq!(c.downthrust, 0.0, epsilon = 1e-9);
    }

    #[test]
    fn reversed_or_mixed_winding_gives_the_same_loads_after_repair() {
        let s = side(
            r#"{"units": "m", "moment_about": [0.3, 0.2, 0.1], "liquid": {"level": 1.2, "density": 1000}}"#,
        );
        let clean = compute("b", &mesh(vec![("b", block())]), &s).expect("computes");
        let reversed = compute(
            "b",
            &mesh(vec![("b", shapes::reverse_winding(&block()))]),
            &s,
        )
        .expect("computes");
        let mut half = block();
        for (i, t) in half.iter_mut().enumerate() {
            // A fixed pseudo-random half: the bits of a Weyl sequence.
            if (i as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 63 == 1 {
                t.swap(1, 2);
            }
        }
        let mixed = compute("b", &mesh(vec![("b", half)]), &s).expect("computes");
        for other in [&reversed, &mixed] {
            let (a, b) = (&clean.cases[0].loads, &other.cases[0].loads);
            for k in 0..3 {
                assert_relative_eq!(a.force[k], b.force[k], epsilon = 1e-9 * a.uplift);
                assert_relative_eq!(a.moment[k], b.moment[k], epsilon = 1e-9 * a.uplift);
            }
            assert_relative_eq!(a.uplift, b.uplift, max_relative = 1e-12);
            assert!(!other.warnings.is_empty(), "the repair is reported");
        }
    }

    #[test]
    fn huge_loads_stay_finite_or_are_refused_never_written_as_nulls() {
        // Found by fuzzing: a plate 10^78 ft tall, wetted to its top, carries about
        // 10^161 N, finite; its horizontal component was the norm of (Fx, Fy), whose
        // square overflowed, and non-finite values reached the result as nulls.
        let obj = "v 0 0 0\nv 1 0 0\nv 1 0 1e78\nv 0 0 1e78\nf 1 2 3 4\n";
        let mesh = crate::mesh::read_mesh(Path::new("tall.obj"), obj.as_bytes()).expect("reads");
        let json = |level: &str| {
            format!(
                r#"{{"units": "ft", "wet_side": "front", "liquid": {{"level": {level}, "density": 1000}}}}"#
            )
        };
        let s = side(&json("1e80"));
        let r = compute("tall.obj", &mesh, &s).expect("finite loads");
        let l = &r.cases[0].loads;
        assert!(l.force[1].abs() > 1e160 && l.force[0] == 0.0);
        assert_eq!(l.horizontal_force, l.force[1].abs());
        // The exports' per-facet mean pressure took the same norm.
        for row in field(&mesh, &s, 0).expect("a field").facets {
            assert!(
                row.mean_pressure.is_finite() && row.mean_pressure > 1e80,
                "{row:?}"
            );
        }
        // A level 10^300 ft up: pressures near 10^304 Pa times 10^76 m² overflow.
        match compute("tall.obj", &mesh, &side(&json("1e300"))) {
            Err(ComputeError::NonFinite { what }) => assert!(what.contains("case"), "{what}"),
            other => panic!("expected a refusal, got {other:?}"),
        }
    }

    #[test]
    fn the_clean_guess_holds_exactly_where_the_topology_confirms_it() {
        // (mesh, sidecar, whether the loads computed during the topology are kept)
        let mut void = shapes::box_solid([-0.5, -0.5, 0.5], [0.5, 0.5, 1.5], 1);
        void = shapes::reverse_winding(&void);
        let plate = shapes::rectangle([0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 0.0, 1.0], 3, 2);
        let mut one_flipped = block();
        one_flipped[5] = [one_flipped[5][0], one_flipped[5][2], one_flipped[5][1]];
        let water = r#""liquid": {"level": 1.0, "density": 1000}"#;
        let outside = format!(r#"{{"units": "m", {water}}}"#);
        let front = format!(r#"{{"units": "m", "wet_side": "front", {water}}}"#);
        let inside = format!(r#"{{"units": "m", "wet_side": "inside", {water}}}"#);
        let cases = [
            (vec![("b", block())], &outside, true),
            (vec![("b", block())], &inside, true),
            (
                vec![("b", shapes::reverse_winding(&block()))],
                &outside,
                false,
            ),
            (vec![("b", one_flipped)], &outside, false),
            (vec![("outer", block()), ("void", void)], &outside, false),
            (vec![("p", plate.clone())], &front, true),
            // A closed mesh with a side for open surfaces: guessed open, found closed.
            (vec![("b", block())], &front, false),
            (
                vec![
                    ("a", plate.clone()),
                    ("b", shapes::translate(&plate, [0.0, 3.0, 0.0])),
                ],
                &front,
                true,
            ),
        ];
        for (i, (parts, json, holds)) in cases.into_iter().enumerate() {
            let m = mesh(parts);
            let s = side(json);
            let tris: Vec<Tri> = m.facets.iter().map(|t| t.map(Vec3::from)).collect();
            let found = Wet::of(&m.parts, &s, &Topology::build(&tris)).expect("resolves");
            let guess = Wet::clean_guess(&m.parts, &s, tris.len()).expect("fits the guess");
            assert_eq!(guess == found, holds, "case {i}");
        }
    }

    #[test]
    fn a_sealed_cavity_is_dry_and_its_volume_belongs_to_the_body() {
        let mut inner = shapes::box_solid([-0.5, -0.5, 0.5], [0.5, 0.5, 1.5], 1);
        inner = shapes::reverse_winding(&inner); // as a CAD solid stores a void
        let s = side(r#"{"units": "m", "liquid": {"level": 5.0, "density": 1000}}"#);
        let r =
            compute("b", &mesh(vec![("outer", block()), ("void", inner)]), &s).expect("computes");
        let c = &r.cases[0];
        assert_relative_eq!(
            c.loads.submerged_volume.expect("closed"),
            12.0,
            max_relative = 1e-13
        );
        assert_relative_eq!(c.loads.force[2], 1000.0 * G * 12.0, max_relative = 1e-13);
        let void = &c.parts[1].loads;
        assert_eq!(void.force, [0.0; 3]);
        assert_eq!(void.submerged_volume, Some(0.0));
        assert_eq!(void.centre_of_buoyancy, None);
    }

    #[test]
    fn inside_loads_the_walls_of_a_tank_outward() {
        // A 2 × 3 tank filled to 1.2 m: the floor carries ρ g h A downward, the side walls
        // ρ g h²/2 per metre outward, and the net horizontal force is zero.
        let s = side(
            r#"{"units": "m", "wet_side": "inside", "liquid": {"level": 1.2, "density": 1000}}"#,
        );
        let r = compute("t", &mesh(vec![("t", block())]), &s).expect("computes");
        let l = &r.cases[0].loads;
        assert_relative_eq!(l.force[2], -1000.0 * G * 1.2 * 6.0, max_relative = 1e-13);
        assert_relative_eq!(l.downthrust, 1000.0 * G * 1.2 * 6.0, max_relative = 1e-13);
        assert_relative_eq!(
            l.submerged_volume.expect("closed"),
            7.2,
            max_relative = 1e-13
        );
        assert_relative_eq!(l.horizontal_force, 0.0, epsilon = 1e-8);
    }

    #[test]
    fn the_facet_rows_sum_to_the_case_force() {
        let s = side(r#"{"units": "m", "liquid": {"level": 1.3, "density": 1000}}"#);
        let m = mesh(vec![("b", shapes::perturb(&block(), 0.01, 7))]);
        let r = compute("b", &m, &s).expect("computes");
        let f = field(&m, &s, 0).expect("computes");
        let mut sum = [0.0; 3];
        for row in &f.facets {
            for (s, x) in sum.iter_mut().zip(row.force) {
                *s += x;
            }
        }
        let total = r.cases[0].loads.force;
        for k in 0..3 {
            assert_relative_eq!(sum[k], total[k], epsilon = 1e-9 * r.cases[0].loads.uplift);
        }
        // Pieces tile the surface: their areas add up to the facets'.
        let a1: f64 = f.pieces.iter().map(|p| p.area).sum();
        let a2: f64 = f.facets.iter().map(|p| p.area).sum();
        assert_relative_eq!(a1, a2, max_relative = 1e-12);
        let wet: f64 = f.pieces.iter().filter(|p| p.wetted).map(|p| p.area).sum();
        assert_relative_eq!(wet, r.cases[0].loads.wetted_area, max_relative = 1e-12);
    }

    #[test]
    fn an_open_plate_needs_a_wet_side_and_back_is_front_reversed() {
        let plate = shapes::rectangle([0.0, 0.0, -3.0], [2.0, 0.0, 0.0], [0.0, 0.0, 2.0], 2, 2);
        let m = mesh(vec![("p", plate.clone())]);
        let none = side(r#"{"units": "m", "liquid": {"level": 0.0, "density": 1000}}"#);
        assert!(matches!(
            compute("p", &m, &none),
            Err(ComputeError::OpenWithoutSide { .. })
        ));
        let out = side(
            r#"{"units": "m", "wet_side": "outside", "liquid": {"level": 0.0, "density": 1000}}"#,
        );
        assert!(matches!(
            compute("p", &m, &out),
            Err(ComputeError::OpenWithClosedSide { .. })
        ));
        let front = side(
            r#"{"units": "m", "wet_side": "front", "liquid": {"level": 0.0, "density": 1000}}"#,
        );
        let back = side(
            r#"{"units": "m", "wet_side": "back", "liquid": {"level": 0.0, "density": 1000}}"#,
        );
        let f = compute("p", &m, &front).expect("computes");
        let b = compute(
            "p",
            &mesh(vec![("p", shapes::reverse_winding(&plate))]),
            &back,
        )
        .expect("computes");
        assert_eq!(f.cases[0].loads.force, b.cases[0].loads.force);
        // Closed form: vertical plate 2 m wide from 1 m to 3 m deep, F = ρ g b (h2² − h1²)/2,
        // centre of pressure depth (h2³ − h1³)/(3 · (h2² − h1²)/2) = 2.1667 m.
        let l = &f.cases[0].loads;
        assert_relative_eq!(
            l.horizontal_force,
            1000.0 * G * 2.0 * 4.0,
            max_relative = 1e-14
        );
        let cp = l.centre_of_pressure.expect("planar");
        assert_relative_eq!(-cp[2], 26.0 / 12.0, max_relative = 1e-13);
        assert_relative_eq!(cp[0], 1.0, epsilon = 1e-12);
    }

    #[test]
    fn governing_values_take_the_largest_magnitude_and_ignore_round_off() {
        let step = |level: f64, fx: f64, fz: f64, m: f64| SweepStep {
            level,
            force: [fx, 1e-9 * level, fz],
            moment: [0.0; 3],
            uplift: fz.max(0.0),
            downthrust: (-fz).max(0.0),
            wetted_area: 0.0,
            submerged_volume: Some(fz / 1e4),
            flotation_factor: None,
            axis_moments: [(
                "hinge".to_owned(),
                AxisMoment {
                    moment: m,
                    miss_distance: None,
                },
            )]
            .into(),
        };
        // F_x peaks negative in the middle; F_z reaches a plateau (equal up to round-off)
        // at 2 m; F_y is round-off only.
        let steps = [
            step(1.0, -10.0, 5e4, 3.0),
            step(2.0, -30.0, 1e5, -7.0),
            step(3.0, -20.0, 1e5 * (1.0 + 1e-15), 6.0),
        ];
        let g = governing("river", &steps, 10.0);
        assert_eq!(g.liquid, "river");
        assert_eq!((g.force_x.value, g.force_x.level), (-30.0, 2.0));
        assert_eq!(g.force_z.level, 2.0);
        assert_eq!((g.force_y.value, g.force_y.level), (0.0, 1.0));
        assert_eq!(g.axis_moments["hinge"].value, -7.0);
        assert_eq!(g.submerged_volume.map(|v| v.level), Some(2.0));
        assert_eq!(g.downthrust.value, 0.0);
    }
}
