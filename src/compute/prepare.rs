//! Everything about a mesh that does not change between its cases: the facets moved into
//! the internal frame about a local origin, their bounding box, the topology, the planes
//! of the parts, and the warnings about the mesh's health and its probable unit.
//!
//! It integrates nothing itself; while the topology is being built it lets the cases be
//! computed on the guess that the mesh is clean ([`Wet::clean_guess`]), and keeps those
//! loads only when the topology confirms the guess.

use super::ComputeError;
use super::cases::{integration, profiles_of};
use super::finite::check_extent;
use super::plausible;
use super::wet::Wet;
use std::sync::OnceLock;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

use crate::hydro::{
    self, Extremes, Frame, Integration, PartAccum, PointMap, Profile, Topology, Tri, Tris, Vec3,
    WetSide,
};
use crate::mesh::{Coords, Format, Mesh, Part, STALE_NORMAL_DEG, widen};
use crate::sidecar::{Sidecar, quoted_list};

/// Everything about the mesh that does not change between cases.
pub(super) struct Prepared {
    /// The mesh's parts (facet ranges into `tris`) and format.
    pub(super) parts: Vec<Part>,
    pub(super) format: Format,
    /// OBJ: the file's vertex numbers of every facet's corners ([`Mesh::vertex_ids`]).
    pub(super) vertex_ids: Option<Vec<[u32; 3]>>,
    pub(super) frame: Frame,
    /// Local origin (bounding-box centre), internal frame.
    pub(super) centre: Vec3,
    pub(super) tris: Local,
    /// Bounding box of `tris`.
    pub(super) local_box: (Vec3, Vec3),
    pub(super) topology: Topology,
    /// Which side of every part and facet is wet.
    pub(super) wet: Wet,
    /// Per part: closed by itself (volumes reported).
    pub(super) part_closed: Vec<bool>,
    /// Per part and for the whole mesh: the plane, when planar (internal, local).
    pub(super) part_plane: Vec<Option<hydro::Plane>>,
    pub(super) mesh_plane: Option<hydro::Plane>,
    pub(super) moment_about: Vec3,
    pub(super) axes: Vec<(String, Vec3, Vec3)>,
}

/// A mesh's facets as read, each mapped into the internal frame about the local origin
/// when it is read: `frame.point_in(p) − centre` with `p` widened to f64 (through
/// [`Frame::point_map`], the same bits), as mapping every facet once into f64 storage
/// gave.
pub(super) struct Local {
    facets: Coords,
    map: PointMap,
    centre: Vec3,
}

impl Local {
    fn new(facets: Coords, frame: Frame, centre: Vec3) -> Local {
        Local {
            facets,
            map: frame.point_map(),
            centre,
        }
    }
}

impl Tris for Local {
    fn count(&self) -> usize {
        self.facets.len()
    }

    #[inline]
    fn tri(&self, i: usize) -> Tri {
        // Written out rather than through array `map`, which costs copies here.
        let (m, c) = (&self.map, &self.centre);
        match &self.facets {
            Coords::Single(f) => {
                let t = &f[i];
                [
                    m.apply(widen(t[0]), c),
                    m.apply(widen(t[1]), c),
                    m.apply(widen(t[2]), c),
                ]
            }
            Coords::Double(f) => {
                let t = &f[i];
                [m.apply(t[0], c), m.apply(t[1], c), m.apply(t[2], c)]
            }
        }
    }

    #[inline]
    fn corner(&self, i: usize, k: usize) -> Vec3 {
        let p = match &self.facets {
            Coords::Single(f) => widen(f[i][k]),
            Coords::Double(f) => f[i][k],
        };
        self.map.apply(p, &self.centre)
    }
}

/// What [`prepare`] finds for the cases before their loop: each case's liquid profiles
/// (or the error to report when the case comes), and the loads of the cases it could
/// compute while the topology was being built (see [`Wet::clean_guess`]).
pub(super) struct Early {
    pub(super) profiles: Vec<Result<Vec<Profile>, ComputeError>>,
    pub(super) accs: Vec<Option<Vec<PartAccum>>>,
}

pub(super) fn prepare(
    mesh: Mesh,
    sidecar: &Sidecar,
    warnings: &mut Vec<String>,
) -> Result<(Prepared, Early), ComputeError> {
    for (name, _) in &sidecar.parts.named {
        if !mesh.parts.iter().any(|p| &p.name == name) {
            return Err(ComputeError::UnknownPart {
                name: name.clone(),
                parts: quoted_list(mesh.parts.iter().map(|p| p.name.as_str())),
            });
        }
    }
    let frame = Frame {
        scale_m: sidecar.units.metres(),
        up: sidecar.up,
    };
    // Stored normals play no part in the loads, but their disagreement with the winding
    // (judged as the file was read) is reported.
    let stale = mesh.stale_normals(0..mesh.facets.len());
    let Mesh {
        facets,
        parts,
        format,
        normal_stale,
        vertex_ids,
        extremes,
    } = mesh;
    drop(normal_stale); // counted above; not kept through the topology
    // Min and max are exact, so this parallel pass gives the same bits on any thread count.
    // Per part, then for the whole mesh: the box, and six vertices that prove most solids
    // non-planar without another pass over their facets.
    // A binary STL's reader found them as it converted the facets.
    let part_extremes: Vec<Extremes> = match (extremes, &parts[..]) {
        (Some(e), [_]) => {
            debug_assert_eq!(e, facets.extremes(0..facets.len()), "as the reader found");
            vec![e]
        }
        _ => parts
            .iter()
            .map(|p| facets.extremes(p.facets.clone()))
            .collect(),
    };
    let whole = part_extremes
        .iter()
        .fold(Extremes::none(), |a, b| Extremes::join(a, *b));
    let (lo, hi): ([f64; 3], [f64; 3]) = (whole.lo.into(), whole.hi.into());
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
    // Into the internal frame about the local origin as each facet is read: the facets
    // stay as the file gave them (f32 from a binary STL: half the memory of f64).
    let tris = Local::new(facets, frame, centre);
    // The box of `tris`, from the mesh's box: each internal coordinate is one mesh
    // coordinate times ±1 and the (positive) scale, less the centre, and each of those steps
    // keeps the order of values under rounding, so the corners map to corners exactly.
    let local = |e: &Extremes| {
        let (a, b) = (
            frame.point_in(e.lo.into()) - centre,
            frame.point_in(e.hi.into()) - centre,
        );
        Extremes {
            lo: a.inf(&b),
            hi: a.sup(&b),
            at: e.at.map(|p| frame.point_in(p.into()) - centre),
        }
    };
    let whole = local(&whole);
    let local_box = (whole.lo, whole.hi);
    let profiles: Vec<_> = sidecar
        .cases
        .iter()
        .map(|c| profiles_of(sidecar, &c.name, &c.liquids, centre.z))
        .collect();
    // The topology is mostly one thread's work. Meanwhile the other thread finds the
    // planes of the parts, which need only the facets, then computes the cases on the guess
    // that the mesh is clean, a chunk at a time, giving way to the topology's own parallel
    // steps whenever they wait (see [`Filler`]); the guess is kept only if the topology
    // confirms it exactly.
    let guessed = Wet::clean_guess(&parts, sidecar, tris.count());
    // Floating cases are integrated on their solved free surface later.
    let work: Vec<Option<Integration<'_, Local>>> = match &guessed {
        Some(wet) => profiles
            .iter()
            .zip(&sidecar.cases)
            .map(|(p, c)| match (p, &c.floating) {
                (Ok(p), None) => Some(integration(&tris, &parts, wet, p)),
                _ => None,
            })
            .collect(),
        None => Vec::new(),
    };
    let filler = Filler::new(&work);
    let (topology, (part_plane, mesh_plane)) = rayon::join(
        || {
            let topology = Topology::build_in_box(&tris, local_box);
            filler.stop();
            topology
        },
        || {
            let part_plane: Vec<Option<hydro::Plane>> = parts
                .iter()
                .zip(&part_extremes)
                .map(|(p, e)| {
                    let facets = p.facets.clone().map(|f| tris.tri(f));
                    hydro::plane_of_given(facets, &local(e))
                })
                .collect();
            let mesh_plane = match &part_plane[..] {
                [one] if parts.len() == 1 => *one,
                _ => hydro::plane_of_given((0..tris.count()).map(|f| tris.tri(f)), &whole),
            };
            filler.fill();
            (part_plane, mesh_plane)
        },
    );
    // The guess is kept when the topology gives it: seen at once from the shells, else
    // by building the wetting and comparing.
    let found = match &guessed {
        Some(guess) if guess.is_given_by(&topology) => None,
        _ => Some(Wet::of(&parts, sidecar, &topology)?),
    };
    let kept = found
        .as_ref()
        .is_none_or(|wet| guessed.as_ref() == Some(wet));
    let accs = if kept {
        filler.finish()
    } else {
        vec![None; sidecar.cases.len()]
    };
    drop(filler);
    drop(work);
    let wet = found
        .or(guessed)
        .expect("the wetting is built unless the guess is given");
    let closed = wet.closed;

    let part_closed: Vec<bool> = parts
        .iter()
        .map(|p| closed && topology.closed_within(p.facets.clone()))
        .collect();
    describe_topology(&topology, &wet.part_setup, closed, warnings);
    units_hint(sidecar, &lo, &hi, warnings);
    let mut used = vec![false; sidecar.liquids.len()];
    for (liquid, _) in &wet.part_setup {
        if let Some(i) = liquid {
            used[*i] = true;
        }
    }
    let z_range = (local_box.0.z + centre.z, local_box.1.z + centre.z);
    plausible::warnings(sidecar, &used, z_range, warnings);

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
        vertex_ids,
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

/// Chunks of several integrations ([`Integration`]) done as filler work: one thread takes
/// them one at a time while another builds the topology, running first any of the
/// topology's parallel work that waits for a thread (so the guess fills the stretches where
/// the topology has one thread's work only, and never holds it up); [`Filler::finish`]
/// shares what is left among all threads. Each chunk is kept in its own slot and the
/// chunks are folded in order, so the results do not depend on who computed what.
struct Filler<'w, 'a, T: ?Sized> {
    work: &'w [Option<Integration<'a, T>>],
    /// Every chunk to compute: (integration, chunk), integration by integration in order.
    jobs: Vec<(usize, usize)>,
    /// The next job to take.
    next: AtomicUsize,
    stop: AtomicBool,
    done: Vec<OnceLock<PartAccum>>,
}

impl<'w, 'a, T: Tris + ?Sized> Filler<'w, 'a, T> {
    fn new(work: &'w [Option<Integration<'a, T>>]) -> Self {
        let jobs: Vec<(usize, usize)> = work
            .iter()
            .enumerate()
            .flat_map(|(w, i)| (0..i.as_ref().map_or(0, Integration::chunks)).map(move |c| (w, c)))
            .collect();
        Filler {
            work,
            done: (0..jobs.len()).map(|_| OnceLock::new()).collect(),
            jobs,
            next: AtomicUsize::new(0),
            stop: AtomicBool::new(false),
        }
    }

    /// Ends [`Filler::fill`] after the chunk it is on.
    fn stop(&self) {
        self.stop.store(true, Ordering::Release);
    }

    /// Takes chunks until stopped or none is left, first running any work of the thread
    /// pool that waits for a thread.
    fn fill(&self) {
        while !self.stop.load(Ordering::Acquire) {
            if rayon::yield_now() == Some(rayon::Yield::Executed) {
                continue;
            }
            let j = self.next.fetch_add(1, Ordering::Relaxed);
            if j >= self.jobs.len() {
                return;
            }
            self.compute(j);
        }
    }

    fn compute(&self, j: usize) {
        let (w, c) = self.jobs[j];
        if let Some(work) = &self.work[w] {
            // Each job is taken once, so its slot is empty.
            let _ = self.done[j].set(work.chunk(c));
        }
    }

    /// The chunks not taken yet, on all threads; then each integration's result (`None`
    /// where there was none to do).
    fn finish(&self) -> Vec<Option<Vec<PartAccum>>> {
        use rayon::prelude::*;
        let from = self.next.load(Ordering::Acquire).min(self.jobs.len());
        (from..self.jobs.len())
            .into_par_iter()
            .for_each(|j| self.compute(j));
        let mut at = 0;
        self.work
            .iter()
            .map(|work| {
                work.as_ref().map(|work| {
                    let n = work.chunks();
                    let partials: Vec<PartAccum> = self.done[at..at + n]
                        .iter()
                        .map(|d| *d.get().expect("every chunk is computed before the fold"))
                        .collect();
                    at += n;
                    work.fold(&partials)
                })
            })
            .collect()
    }
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
        // The side is always stated for an open mesh (it is refused otherwise) and the
        // result echoes it per part: no reminder here, only what needs attention.
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::compute_model;
    use crate::mesh::Format;
    use crate::sidecar::parse_sidecar;
    use std::path::Path;

    #[test]
    fn the_guess_computed_as_filler_work_gives_the_bits_of_the_plain_integration() {
        // Two closed parts of many chunks each and three cases (one floating, which the
        // guess leaves alone): the loads the filler computed beside the topology, however
        // the chunks were shared between 1, 2 or 3 threads, must be exactly those of
        // integrating the cases afterwards.
        let m = Mesh::from_parts(
            vec![
                ("a", shapes::box_solid([0.0; 3], [2.0, 3.0, 4.0], 30)),
                ("b", shapes::torus([6.0, 0.0, 1.0], 2.0, 0.5, 90, 40)),
            ],
            Format::Obj,
        );
        let side = parse_sidecar(
            Path::new("t.json"),
            r#"{"units": "m", "liquid": {"level": 1.5, "density": 1000},
                "cases": [{"name": "low"}, {"name": "high", "level": 3.25},
                          {"name": "afloat",
                           "floating": {"mass": 5000, "centre_of_gravity": [1, 1.5, 0.5]}}]}"#,
        )
        .expect("valid");
        assert!(m.facets.len() > 4 * hydro::CHUNK);
        for threads in [1, 2, 3] {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("a pool");
            let (prep, early) = pool
                .install(|| prepare(m.clone(), &side, &mut Vec::new()))
                .expect("prepares");
            assert!(early.accs[2].is_none(), "a floating case is not guessed");
            for k in 0..2 {
                let profiles = early.profiles[k].as_ref().expect("profiles");
                let plain = super::super::cases::run(&prep.tris, &prep.parts, &prep.wet, profiles);
                let guessed = early.accs[k].as_ref().expect("the clean guess holds");
                assert_eq!(
                    format!("{guessed:?}"),
                    format!("{plain:?}"),
                    "{threads} threads"
                );
            }
        }
    }

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
                let facet_box =
                    hydro::bounding_box((0..prep.tris.count()).flat_map(|f| prep.tris.tri(f)));
                assert_eq!(prep.local_box, facet_box, "up {up}, units {units}");
            }
        }
    }

    #[test]
    fn f32_facets_kept_as_read_give_the_bits_of_f64_storage() {
        // A binary STL's coordinates are kept as f32 and widened where a facet is read;
        // the loads must be exactly those of the same values held in f64 (the storage
        // every facet had before), for every frame, with cases and a sweep.
        let wide = shapes::perturb(
            &shapes::torus([12.3, -4.56, 7.89], 3.0, 1.0, 40, 16),
            0.05,
            5,
        );
        let single: Vec<crate::mesh::SingleFacet> = wide
            .iter()
            .map(|t| t.map(|p| p.map(|c| c as f32)))
            .collect();
        let double: Vec<crate::mesh::Facet> =
            single.iter().map(|t| t.map(|p| p.map(f64::from))).collect();
        for up in ["+y", "-z"] {
            let side = parse_sidecar(
                Path::new("t.json"),
                &format!(
                    r#"{{"units": "ft", "up": "{up}",
                        "liquids": {{"w": {{"level": 8.1, "density": 1000}}}},
                        "cases": [{{"name": "a"}}, {{"name": "b", "level": 7.0}}],
                        "sweep": {{"liquid": "w", "from": 6, "to": 9, "step": 0.5}}}}"#
                ),
            )
            .expect("valid");
            let f64_mesh = Mesh::from_parts(vec![("t", double.clone())], Format::StlBinary);
            let mut f32_mesh = f64_mesh.clone();
            f32_mesh.facets = Coords::Single(single.clone());
            assert_ne!(f32_mesh.facets, f64_mesh.facets, "two storages");
            let (a, _) = compute_model("t.stl", f32_mesh, &side).expect("computes");
            let (b, _) = compute_model("t.stl", f64_mesh, &side).expect("computes");
            assert!(
                a.cases
                    .iter()
                    .all(|c| c.loads.force.iter().any(|&f| f != 0.0))
            );
            assert_eq!(a, b, "up {up}");
        }
    }
}
