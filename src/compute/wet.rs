//! Which side of every part and facet the liquid is on: the wet side each part states (or
//! the default), read against the shells, their nesting and the flips the topology found.
//!
//! It neither builds the topology nor integrates; the result, [`Wet`], is all the
//! integration needs to know of the topology. A guess of it for a clean mesh can be made
//! before the topology is known ([`Wet::clean_guess`]).

use super::ComputeError;
use crate::hydro::{NO_SHELL, Topology, WetSide, Wetting};
use crate::mesh::Part;
use crate::sidecar::Sidecar;

/// Which side of every part and facet is wet: all the integration needs to know of the
/// topology. Equal values give the same loads, bit for bit.
#[derive(Debug, PartialEq)]
pub(super) struct Wet {
    /// Every shell closed: volumes are measured.
    pub(super) closed: bool,
    /// Per part: liquid index (None = dry) and resolved wet side.
    pub(super) part_setup: Vec<(Option<usize>, WetSide)>,
    pub(super) wetting: Vec<Wetting>,
    /// +1 or −1 for a facet that bounds the measured volume (by its winding), else 0.
    pub(super) vol_sign: Vec<i8>,
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
    pub(super) fn of(
        parts: &[Part],
        sidecar: &Sidecar,
        topology: &Topology,
    ) -> Result<Wet, ComputeError> {
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
    pub(super) fn clean_guess(parts: &[Part], sidecar: &Sidecar, facets: usize) -> Option<Wet> {
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

    /// Whether `topology` gives exactly this clean guess, decided from its shells alone
    /// (no wetting built). A closed guess: the mesh is closed, with no degenerate facet,
    /// and its every shell is enclosed by none, encloses none and is read as stored; then
    /// [`Wet::of`] places every facet as the guess does. An open guess (every part states
    /// a front or back): the mesh is not closed; then every facet is wet on its part's
    /// stated side and none bounds a volume, whatever its shell, as in the guess.
    pub(super) fn is_given_by(&self, topology: &Topology) -> bool {
        if !self.closed {
            return !topology.closed();
        }
        topology.closed()
            && topology.degenerate_facets == 0
            && topology
                .shells
                .iter()
                .all(|s| s.depth == 0 && s.children == 0 && s.flipped_facets == 0)
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::tests::{block, mesh, side};
    use crate::hydro::{Tri, Vec3};

    #[test]
    fn the_clean_guess_holds_exactly_where_the_topology_confirms_it() {
        // (mesh, sidecar, whether the loads computed during the topology are kept)
        let mut void = shapes::box_solid([-0.5, -0.5, 0.5], [0.5, 0.5, 1.5], 1);
        void = shapes::reverse_winding(&void);
        let plate = shapes::rectangle([0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 0.0, 1.0], 3, 2);
        let mut plate_one_flipped = plate.clone();
        plate_one_flipped[2].swap(1, 2);
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
            // An open surface with a facet stored reversed: its stated side is wet as
            // stored, whatever the flood fill reads.
            (vec![("p", plate_one_flipped)], &front, true),
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
            let topology = Topology::build(&tris);
            let found = Wet::of(&m.parts, &s, &topology).expect("resolves");
            let guess = Wet::clean_guess(&m.parts, &s, tris.len()).expect("fits the guess");
            assert_eq!(guess == found, holds, "case {i}");
            // The shortcut from the shells: never where the wetting differs, and for every
            // clean mesh here, closed or open.
            let short = guess.is_given_by(&topology);
            assert!(!short || guess == found, "case {i}");
            assert_eq!(short, holds, "case {i}");
        }
    }
}
