//! One computation: a read mesh and a validated sidecar in, the result document out.
//!
//! Pure (no files, clock or environment): it maps units and the up axis into the core's
//! frame, works out topology and which side of every facet the liquid is on, integrates
//! every case (and sweep step), and maps the sums back to mesh axes as the result fields
//! pinned by CONTRACT.md. The document's layout is specified on [`MeshResult`].
//!
//! This file holds the entry points ([`compute`], [`compute_model`], [`Model`]) and their
//! errors, and runs the steps in order; each step lives in a file of its own:
//!
//! - `result.rs`: the types of the result document, as serialized.
//! - `prepare.rs`: what does not change between cases: the internal frame, the bounding
//!   box, the topology, the planes of the parts, and the mesh-health warnings.
//! - `wet.rs`: which side of every part and facet the liquid is on, and the guess of it
//!   made before the topology is known.
//! - `cases.rs`: the integration of one case and its sums turned into result fields.
//! - `sweep.rs`: the steps of a level sweep and the governing value of each quantity.
//! - `flotation.rs`: the flotation check of a case or a sweep step.
//! - `field.rs`: the per-facet pressure field that the exports write.
//! - `section.rs`: vertical sections through that field, for the pressure diagram.
//! - `finite.rs`: the refusal of coordinates and results that overflow f64.

mod cases;
mod field;
mod finite;
mod floating;
mod flotation;
mod plausible;
mod prepare;
mod result;
mod section;
mod surface;
mod sweep;
mod wet;

pub use field::{FacetRow, Field, FieldPiece, NodalLoad, field};
pub use floating::{FLOATING_CAUTION, FloatingResult};
pub use result::{
    AxisMoment, CaseResult, DatumEcho, FlotationCheck, Inputs, LineOut, LiquidEcho, Loads,
    MeshResult, PartInputs, PartResult, PresetEcho, SweepStep,
};
pub use section::{
    CORNER_DEG, HORIZONTAL_REL, Level, PlaneChoice, Run, RunPoint, Section, SectionPlane, sections,
};
pub use sweep::{Extreme, FlotationLimit, Governing, governing};

use thiserror::Error;

use crate::hydro::{LiquidError, Progress, Quiet, Stage, Tally, Tris, Vec3, WetSide};
use crate::mesh::Mesh;
use crate::sidecar::{AUTO_FIELD_EXPORT_FACETS, FieldExports, Sidecar, UnassignedPart};
use cases::{assemble, echo, run};
use finite::check_finite;
use flotation::flotation_check;
use prepare::{Prepared, prepare};
use surface::Surface;
use sweep::{diagonal, flotation_limit, sweep_steps};

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
    #[error(
        "parts.\"{name}\" names no part of the mesh (its parts are {parts}): correct the name, or use \"*\" for every part not named"
    )]
    UnknownPart { name: String, parts: String },
    #[error("case \"{case}\", liquid \"{liquid}\": {source}")]
    Liquid {
        case: String,
        liquid: String,
        source: LiquidError,
    },
    #[error("the mesh has no facets")]
    Empty,
    #[error("floating: {message}")]
    Floating { message: String },
    #[error(
        "the mesh has {facets} facets, more than the {} the topology can number",
        crate::limits::FACETS_CEILING
    )]
    TooManyFacets { facets: usize },
    #[error("a result came out non-finite ({what}); check the mesh coordinates and sidecar values")]
    NonFinite { what: String },
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
    /// Per case: the solved free surface of a floating case (`None`: the given levels).
    surfaces: Vec<Option<Surface>>,
}

impl Model {
    /// Number of facets.
    pub fn facets(&self) -> usize {
        self.prep.tris.count()
    }
}

/// [`compute`] on a mesh given up to it, returning the [`Model`] beside the result. The
/// mesh's facet storage is reused for the internal frame, so no second copy is made.
pub fn compute_model(
    mesh_name: &str,
    mesh: Mesh,
    sidecar: &Sidecar,
) -> Result<(MeshResult, Model), ComputeError> {
    compute_model_with(mesh_name, mesh, sidecar, &Quiet)
}

/// [`compute_model`], telling `progress` how far it has got: the topology, then per case
/// its integration, its floating body's heel angles, its sweep's levels and its flotation
/// limit's halvings (see [`Stage`]). The results are the same bits with any sink.
pub fn compute_model_with(
    mesh_name: &str,
    mesh: Mesh,
    sidecar: &Sidecar,
    progress: &dyn Progress,
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
    progress.report(Stage::Topology, 0, 1);
    let (prep, early) = prepare(mesh, sidecar, &mut warnings)?;
    progress.report(Stage::Topology, 1, 1);
    let facets = prep.tris.count();
    if sidecar.field_exports == FieldExports::Auto && !sidecar.field_exports.writes(facets) {
        warnings.push(format!(
            "per-facet exports (.vtp, .csv) not written: the mesh has {facets} facets, over the {AUTO_FIELD_EXPORT_FACETS} for which \"field_exports\": \"auto\" writes them; set \"field_exports\": \"always\" in the sidecar to write them (about 550 bytes of text a facet)"
        ));
    }

    let mut cases = Vec::with_capacity(sidecar.cases.len());
    let mut surfaces = Vec::with_capacity(sidecar.cases.len());
    let ahead = early.profiles.into_iter().zip(early.accs);
    for (k, (case, (profiles, ahead))) in sidecar.cases.iter().zip(ahead).enumerate() {
        let profiles = profiles?;
        // Case `no` of `of`, as the stages count them.
        let (no, of) = (k + 1, sidecar.cases.len());
        progress.report(
            Stage::Case {
                case: no,
                cases: of,
            },
            0,
            1,
        );
        // A floating case is solved first: its loads are integrated on the solved free
        // surface (surface.rs), not at the liquid's given level.
        let (floating, surface) = match &case.floating {
            None => (None, None),
            Some(f) => {
                let density = case.liquids[f.liquid]
                    .layers
                    .first()
                    .map_or(0.0, |l| l.density_kg_m3);
                let tally = Tally::new(
                    progress,
                    Stage::Curve {
                        case: no,
                        cases: of,
                    },
                );
                let (result, surface, found) =
                    floating::floating(&prep, sidecar, &case.name, f, density, &tally)?;
                warnings.extend(found);
                (Some(result), Some(surface))
            }
        };
        let accs = match (&surface, ahead) {
            (Some(s), _) => {
                let tris = s.tris(&prep.tris);
                let levelled = s.profiles(sidecar, &case.name, &case.liquids, prep.centre)?;
                run(&tris, &prep.parts, &prep.wet, &levelled)
                    .into_iter()
                    .map(|a| s.accum_back(a))
                    .collect()
            }
            (None, Some(accs)) => accs,
            (None, None) => run(&prep.tris, &prep.parts, &prep.wet, &profiles),
        };
        let up = surface.as_ref().map_or(Vec3::z(), |s| s.normal);
        let (loads, parts) = assemble(&prep, &accs, up);
        let sweep = match (&sidecar.sweep, &surface) {
            (None, _) => None,
            (Some(_), Some(_)) => {
                warnings.push(format!(
                    "case \"{}\" floats: its level sweep is not computed (the free surface is the solved one)",
                    case.name
                ));
                None
            }
            (Some(sw), None) => {
                let tally = Tally::new(
                    progress,
                    Stage::Sweep {
                        case: no,
                        cases: of,
                    },
                );
                Some(sweep_steps(&prep, sidecar, case, sw, &accs, &tally)?)
            }
        };
        let mut sweep_governing = sweep
            .as_deref()
            .zip(sidecar.sweep.as_ref())
            .map(|(steps, sw)| governing(&sidecar.liquids[sw.liquid].name, steps, diagonal(&prep)));
        if let (Some(g), Some(steps), Some(sw)) =
            (&mut sweep_governing, sweep.as_deref(), &sidecar.sweep)
            && sidecar.flotation.is_some()
        {
            let tally = Tally::new(
                progress,
                Stage::FlotationLimit {
                    case: no,
                    cases: of,
                },
            );
            let limit = flotation_limit(&prep, sidecar, case, sw, &accs, steps, &tally)?;
            g.flotation_limit = Some(limit);
        }
        let flotation = sidecar
            .flotation
            .as_ref()
            .map(|f| flotation_check(f, &loads, 1e-12 * (loads.uplift + loads.downthrust)));
        let liquids = match &surface {
            Some(s) => s.liquids(&case.liquids),
            None => case.liquids.clone(),
        };
        surfaces.push(surface);
        cases.push(CaseResult {
            name: case.name.clone(),
            floating,
            liquids: sidecar
                .liquids
                .iter()
                .zip(&liquids)
                .map(|(n, l)| echo(&n.name, l))
                .collect(),
            loads,
            parts,
            sweep,
            sweep_governing,
            flotation,
        });
        progress.report(
            Stage::Case {
                case: no,
                cases: of,
            },
            1,
            1,
        );
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
        project: None,
        schema: SCHEMA,
        mesh: mesh_name.to_owned(),
        inputs: Inputs {
            format: prep.format.as_str(),
            units: sidecar.units.as_str(),
            up: sidecar.up.as_str(),
            gravity: sidecar.gravity_m_s2,
            wet_side: sidecar.wet_side.map(WetSide::as_str),
            closed: prep.wet.closed,
            facets: prep.tris.count(),
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
            sidecar_units: sidecar.sidecar_units.as_str(),
            datum: sidecar.datum.as_ref().map(|d| DatumEcho {
                name: d.name.clone(),
                mesh_origin_elevation: d.mesh_origin_elevation_m,
            }),
        },
        cases,
        warnings,
        caution: CAUTION,
    };
    check_finite(&result)?;
    Ok((result, Model { prep, surfaces }))
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::mesh::Format;

    use crate::sidecar::parse_sidecar;
    use approx::assert_relative_eq;
    use std::path::Path;

    const G: f64 = 9.80665;

    pub(super) fn mesh(parts: Vec<(&str, Vec<shapes::Triangle>)>) -> Mesh {
        Mesh::from_parts(parts, Format::Obj)
    }

    pub(super) fn side(json: &str) -> Sidecar {
        parse_sidecar(Path::new("t.json"), json).expect("valid sidecar")
    }

    pub(super) fn block() -> Vec<shapes::Triangle> {
        shapes::box_solid([-1.0, -1.5, 0.0], [1.0, 1.5, 2.0], 3)
    }

    /// A box 20 × 6 × 3 m of 150 t floating freely in sea water (1025 kg/m³), G on the
    /// centre line 1.8 m up, judged by a criteria preset: the writers' floating case.
    pub(crate) fn floating_box() -> MeshResult {
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 1);
        let s = side(
            r#"{"units": "m", "liquid": {"density": 1025},
                "floating": {"mass": 150000, "centre_of_gravity": [0, 0, 1.8],
                             "criteria": "imo-2008-is-code-general"}}"#,
        );
        compute("b.obj", &mesh(vec![("b", hull)]), &s).expect("computes")
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

    /// The result as JSON text: every number in its shortest round-trip form, so equal
    /// texts are equal bits (and -0 differs from 0).
    fn bits(r: &MeshResult) -> String {
        serde_json::to_string(r).expect("serializes")
    }

    /// Computes with a recording sink, on `threads` threads.
    fn recorded(
        m: &Mesh,
        s: &Sidecar,
        threads: usize,
    ) -> (MeshResult, crate::hydro::progress::tests::Recorder) {
        let sink = crate::hydro::progress::tests::Recorder::default();
        let r = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("a pool")
            .install(|| compute_model_with("p", m.clone(), s, &sink))
            .expect("computes")
            .0;
        (r, sink)
    }

    #[test]
    fn progress_counts_every_level_of_a_sweep_and_changes_no_bit() {
        use crate::hydro::progress::tests::assert_counts_up_to;
        // The box of tests/reference/sweep.rs: the flotation limit lies between 2.0 and 2.5 m.
        let m = mesh(vec![("b", shapes::box_solid([0.0; 3], [2.0, 3.0, 4.0], 6))]);
        let s = side(
            r#"{"units": "m", "liquid": {"level": 1.0, "density": 1000},
                "flotation": {"resisting": {"structure": 200000}, "required_factor": 1.5},
                "sweep": {"from": 0.0, "to": 4.0, "step": 0.05},
                "cases": [{"name": "a"}, {"name": "b", "density": 1025}]}"#,
        );
        let quiet = compute("p", &m, &s).expect("computes");
        let levels = quiet.cases[0].sweep.as_ref().expect("a sweep").len() as u64;
        assert_eq!(levels, 81);
        for threads in [1, 2] {
            let (r, sink) = recorded(&m, &s, threads);
            assert_eq!(bits(&r), bits(&quiet), "{threads} thread(s)");
            assert_eq!(sink.of(Stage::Topology), vec![(0, 1), (1, 1)]);
            for case in [1, 2] {
                let cases = 2;
                assert_eq!(sink.of(Stage::Case { case, cases }), vec![(0, 1), (1, 1)]);
                assert_counts_up_to(&sink.of(Stage::Sweep { case, cases }), levels);
                // The bisection stops early (1e-12 of the bracket) and is then finished.
                assert_counts_up_to(&sink.of(Stage::FlotationLimit { case, cases }), 80);
            }
            // Stages come in order: the topology, then each case's integration, sweep and
            // limit before the next case begins.
            let order: Vec<Stage> = sink
                .0
                .lock()
                .expect("not poisoned")
                .iter()
                .map(|r| r.0)
                .collect();
            let mut firsts = order.clone();
            firsts.dedup();
            assert_eq!(
                firsts,
                vec![
                    Stage::Topology,
                    Stage::Case { case: 1, cases: 2 },
                    Stage::Sweep { case: 1, cases: 2 },
                    Stage::FlotationLimit { case: 1, cases: 2 },
                    Stage::Case { case: 1, cases: 2 },
                    Stage::Case { case: 2, cases: 2 },
                    Stage::Sweep { case: 2, cases: 2 },
                    Stage::FlotationLimit { case: 2, cases: 2 },
                    Stage::Case { case: 2, cases: 2 },
                ]
            );
        }
    }

    #[test]
    fn progress_counts_every_heel_angle_of_a_stability_curve_and_changes_no_bit() {
        use crate::hydro::progress::tests::assert_counts_up_to;
        let hull = shapes::box_solid([-10.0, -3.0, 0.0], [10.0, 3.0, 3.0], 2);
        let m = mesh(vec![("b", hull)]);
        // The 0°…90° grid and two listed angles, one of them on the grid: 91 + 1 + 1.
        let s = side(
            r#"{"units": "m", "liquid": {"level": 1.0, "density": 1025},
                "floating": {"mass": 150000, "centre_of_gravity": [0, 0, 1.8],
                             "heel_angles": [12.5, 30, -7]}}"#,
        );
        let quiet = compute("p", &m, &s).expect("computes");
        assert!(quiet.cases[0].floating.is_some());
        for threads in [1, 2] {
            let (r, sink) = recorded(&m, &s, threads);
            assert_eq!(bits(&r), bits(&quiet), "{threads} thread(s)");
            assert_counts_up_to(&sink.of(Stage::Curve { case: 1, cases: 1 }), 93);
            assert_eq!(
                sink.of(Stage::Case { case: 1, cases: 1 }),
                vec![(0, 1), (1, 1)]
            );
        }
    }
}
