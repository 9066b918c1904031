//! The two refusals of numbers that overflow: coordinates whose squares are not finite,
//! before any topology is built, and results that came out non-finite, before they are
//! written (serde_json would write them as null).
//!
//! It checks and reports; it does not rescale or clamp anything.

use super::{ComputeError, MeshResult};

/// Refuses coordinates whose squares overflow f64 (beyond about 1e153 m): lengths, areas
/// and the weld tolerance would be infinite, and topology would report nonsense before
/// [`check_finite`] could see the loads. Smaller coordinates whose loads overflow are
/// caught by `check_finite`. `lo` and `hi` are the mesh's bounding box, in mesh units.
pub(super) fn check_extent(lo: &[f64; 3], hi: &[f64; 3], metres: f64) -> Result<(), ComputeError> {
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

pub(super) fn check_finite(r: &MeshResult) -> Result<(), ComputeError> {
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
    use crate::compute::tests::side;
    use crate::compute::{compute, field};
    use crate::mesh::{Format, Mesh};
    use crate::sidecar::parse_sidecar;
    use std::path::Path;

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
}
