//! Physical invariances: the loads on a structure do not depend on the unit its mesh is
//! drawn in, on which axis points up, on its heading, on how finely its flat facets are
//! split, on where it stands (levels moving with it), or on the winding of a closed mesh.
//!
//! Each check builds the same physical case twice and compares every result field. The
//! results are vectors in mesh axes, so the first case's vectors are carried into the
//! second's axes with the same proper rigid map (rotation `R`, translation `t`, in metres)
//! that moved the mesh: forces and moments by `R`, points by `R p + t`.
//!
//! Tolerances, relative to the scale of each quantity (force: max(|F|, uplift +
//! downthrust); moment: that × the scene's size; points: the size):
//! * 1e-12 for maps that only permute axes, reverse winding or split facets, and for
//!   millimetres and an arbitrary heading (a rounding of every coordinate);
//! * 1e-11 when the mesh is moved 5 km away, where each coordinate carries an absolute
//!   rounding of about 5000 m × 2⁻⁵³ ≈ 6e-13 m.

use shapes::{self, Triangle};
use wetload::compute::{Loads, MeshResult};

use crate::support::*;

/// A proper rigid map in metres: `p ↦ R p + t`.
#[derive(Clone, Copy, Debug)]
struct Rigid {
    r: [[f64; 3]; 3],
    t: V3,
}

impl Rigid {
    const IDENTITY: Rigid = Rigid {
        r: [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        t: [0.0; 3],
    };

    fn vector(&self, v: V3) -> V3 {
        self.r.map(|row| dot(row, v))
    }

    fn point(&self, p: V3) -> V3 {
        add(self.vector(p), self.t)
    }

    /// This map followed by `next`.
    fn then(self, next: Rigid) -> Rigid {
        let cols = [0, 1, 2].map(|j| next.vector([self.r[0][j], self.r[1][j], self.r[2][j]]));
        Rigid {
            r: [0, 1, 2].map(|i| [cols[0][i], cols[1][i], cols[2][i]]),
            t: next.point(self.t),
        }
    }

    /// Rotation by `a` radians about the vertical `z`.
    fn heading(a: f64) -> Rigid {
        let (s, c) = a.sin_cos();
        Rigid {
            r: [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]],
            t: [0.0; 3],
        }
    }

    /// `(x, y, z) ↦ (x, z, −y)`: what pointed up along +z now points along +y.
    const Y_UP: Rigid = Rigid {
        r: [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0], [0.0, -1.0, 0.0]],
        t: [0.0; 3],
    };

    /// `(x, y, z) ↦ (x, −y, −z)`: what pointed up now points along −z.
    const NEG_Z_UP: Rigid = Rigid {
        r: [[1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]],
        t: [0.0; 3],
    };

    fn shift(t: V3) -> Rigid {
        Rigid {
            t,
            ..Rigid::IDENTITY
        }
    }
}

/// How the second case is drawn: the rigid map in metres, the file unit, the up axis,
/// and how far the levels move up (the translation's elevation component).
struct Drawing {
    name: &'static str,
    map: Rigid,
    units: &'static str,
    metres_per_unit: f64,
    up: &'static str,
    dz: f64,
    tol: f64,
}

impl Drawing {
    fn tris(&self, tris: &[Triangle]) -> Vec<Triangle> {
        let k = 1.0 / self.metres_per_unit;
        tris.iter()
            .map(|t| t.map(|p| mul(self.map.point(p), k)))
            .collect()
    }
}

/// The scene as built: metres, +z up, where it was made.
fn plain() -> Drawing {
    Drawing {
        name: "as built",
        map: Rigid::IDENTITY,
        units: "m",
        metres_per_unit: 1.0,
        up: "+z",
        dz: 0.0,
        tol: 1e-12,
    }
}

fn drawings() -> Vec<Drawing> {
    let plain = plain();
    let far = [5000.0, -3000.0, 5000.0];
    vec![
        Drawing {
            name: "millimetres",
            units: "mm",
            metres_per_unit: 1e-3,
            ..plain
        },
        Drawing {
            name: "+y up",
            map: Rigid::Y_UP,
            up: "+y",
            ..plain
        },
        Drawing {
            name: "-z up",
            map: Rigid::NEG_Z_UP,
            up: "-z",
            ..plain
        },
        Drawing {
            name: "heading 0.7 rad",
            map: Rigid::heading(0.7),
            ..plain
        },
        Drawing {
            name: "5 km away",
            map: Rigid::shift(far),
            dz: far[2],
            tol: 1e-11,
            ..plain
        },
        Drawing {
            name: "all at once (heading, 5 km, +y up, mm)",
            map: Rigid::heading(-2.1)
                .then(Rigid::shift(far))
                .then(Rigid::Y_UP),
            units: "mm",
            metres_per_unit: 1e-3,
            up: "+y",
            dz: far[2],
            tol: 1e-11,
        },
    ]
}

/// A closed body in a stratified liquid under gas pressure, partly submerged.
struct Closed;
/// An open radial-gate skin plate, liquid on its convex side.
struct Open;

trait Scene {
    fn tris(&self) -> Vec<Triangle>;
    fn json(&self, d: &Drawing) -> String;
    /// The scene's size, m (for tolerances on points and moments).
    fn size(&self) -> f64;
}

impl Scene for Closed {
    fn tris(&self) -> Vec<Triangle> {
        let torus = shapes::torus([0.0; 3], 1.6, 0.5, 36, 18);
        shapes::perturb(
            &shapes::translate(&rotate_about_x(&torus, 0.45), [0.3, -0.2, 0.1]),
            0.005,
            9,
        )
    }

    fn json(&self, d: &Drawing) -> String {
        let m = &d.map;
        format!(
            r#"{{"units": "{units}", "up": "{up}", "wet_side": "outside",
                "liquid": {{"level": {level:?}, "surface_pressure": 1500,
                            "layers": [{{"density": 880, "down_to": {down:?}}}, {{"density": 1025}}]}},
                "moment_about": {about:?},
                "axes": {{"a": {{"point": {ap:?}, "direction": {ad:?}}}}}}}"#,
            units = d.units,
            up = d.up,
            level = 0.35 + d.dz,
            down = -0.1 + d.dz,
            about = m.point([0.9, -0.3, 0.2]),
            ap = m.point([0.1, 0.4, -0.5]),
            ad = m.vector([0.3, 1.0, 0.2]),
        )
    }

    fn size(&self) -> f64 {
        5.0
    }
}

impl Scene for Open {
    fn tris(&self) -> Vec<Triangle> {
        shapes::cylinder_patch(
            [0.0, 0.0, 6.0],
            [0.0, 1.0, 0.0],
            10.0,
            -0.7,
            0.4,
            [-1.0, 0.2, 0.0],
            3.0,
            24,
            3,
        )
    }

    fn json(&self, d: &Drawing) -> String {
        let m = &d.map;
        format!(
            r#"{{"units": "{units}", "up": "{up}", "wet_side": "front",
                "liquid": {{"level": {level:?}, "density": 1000, "surface_pressure": 800}},
                "moment_about": {about:?},
                "axes": {{"trunnion": {{"point": {ap:?}, "direction": {ad:?}}}}}}}"#,
            units = d.units,
            up = d.up,
            level = 8.0 + d.dz,
            about = m.point([2.0, 1.0, 3.0]),
            ap = m.point([0.0, 0.0, 6.0]),
            ad = m.vector([0.0, 1.0, 0.0]),
        )
    }

    fn size(&self) -> f64 {
        12.0
    }
}

/// Compares every field of `b` (drawn by `d`) with `a` carried through `d.map`.
fn same(label: &str, a: &Loads, b: &Loads, map: &Rigid, tol: f64, size: f64) {
    let fs = norm(a.force).max(a.uplift + a.downthrust);
    let ms = fs * size;
    let v = |x: V3| map.vector(x);
    let p = |x: V3| map.point(x);
    abs3(&format!("{label}: force"), b.force, v(a.force), tol * fs);
    abs3(&format!("{label}: moment"), b.moment, v(a.moment), tol * ms);
    rel(
        &format!("{label}: wetted area"),
        b.wetted_area,
        a.wetted_area,
        tol,
    );
    abs(&format!("{label}: uplift"), b.uplift, a.uplift, tol * fs);
    abs(
        &format!("{label}: downthrust"),
        b.downthrust,
        a.downthrust,
        tol * fs,
    );
    rel(
        &format!("{label}: max pressure"),
        b.max_pressure,
        a.max_pressure,
        tol,
    );
    match (a.submerged_volume, b.submerged_volume) {
        (Some(va), Some(vb)) => rel(&format!("{label}: submerged volume"), vb, va, tol),
        (None, None) => {}
        other => panic!("{label}: submerged volume {other:?}"),
    }
    match (a.centre_of_buoyancy, b.centre_of_buoyancy) {
        (Some(ca), Some(cb)) => abs3(
            &format!("{label}: centre of buoyancy"),
            cb,
            p(ca),
            tol * size,
        ),
        (None, None) => {}
        other => panic!("{label}: centre of buoyancy {other:?}"),
    }
    match (a.line_of_action, b.line_of_action) {
        (Some(la), Some(lb)) => {
            abs3(
                &format!("{label}: line point"),
                lb.point,
                p(la.point),
                tol * size,
            );
            abs3(
                &format!("{label}: line direction"),
                lb.direction,
                v(la.direction),
                tol,
            );
            abs(
                &format!("{label}: line couple"),
                lb.couple,
                la.couple,
                tol * ms,
            );
        }
        (None, None) => {}
        other => panic!("{label}: line of action {other:?}"),
    }
    match (a.centre_of_pressure, b.centre_of_pressure) {
        (Some(ca), Some(cb)) => abs3(
            &format!("{label}: centre of pressure"),
            cb,
            p(ca),
            tol * size,
        ),
        (None, None) => {}
        other => panic!("{label}: centre of pressure {other:?}"),
    }
    assert_eq!(a.axis_moments.len(), b.axis_moments.len(), "{label}: axes");
    for (name, ma) in &a.axis_moments {
        let mb = &b.axis_moments[name];
        abs(
            &format!("{label}: axis {name} moment"),
            mb.moment,
            ma.moment,
            tol * ms,
        );
        let (da, db) = (
            ma.miss_distance.expect("force"),
            mb.miss_distance.expect("force"),
        );
        abs(
            &format!("{label}: axis {name} miss distance"),
            db,
            da,
            tol * size,
        );
    }
}

fn base(scene: &dyn Scene) -> MeshResult {
    run(&single(scene.tris()), &scene.json(&plain()))
}

fn every_drawing(scene_name: &str, scene: &dyn Scene) {
    let a = base(scene);
    let la = loads(&a);
    assert!(
        norm(la.force) > 0.0 && la.wetted_area > 0.0,
        "a loaded base case"
    );
    for d in drawings() {
        let b = run(&single(d.tris(&scene.tris())), &scene.json(&d));
        same(
            &format!("{scene_name}, {}", d.name),
            la,
            loads(&b),
            &d.map,
            d.tol,
            scene.size(),
        );
    }
    // Every facet split into 4 at its edge midpoints: the same surface.
    let split = run(
        &single(shapes::split_each(&scene.tris())),
        &scene.json(&plain()),
    );
    same(
        &format!("{scene_name}, facets split in 4"),
        la,
        loads(&split),
        &Rigid::IDENTITY,
        1e-12,
        scene.size(),
    );
}

#[test]
fn closed_body_in_layers_is_invariant() {
    every_drawing("closed", &Closed);
}

#[test]
fn open_gate_is_invariant() {
    every_drawing("open", &Open);
}

/// A closed mesh wound inside out is repaired: with "outside" the loads are unchanged.
#[test]
fn reversed_closed_mesh_gives_the_same_loads() {
    let plain = plain();
    let a = run(&single(Closed.tris()), &Closed.json(&plain));
    let b = run(
        &single(shapes::reverse_winding(&Closed.tris())),
        &Closed.json(&plain),
    );
    same(
        "closed, every facet reversed",
        loads(&a),
        loads(&b),
        &Rigid::IDENTITY,
        1e-12,
        Closed.size(),
    );
}

/// An open surface: reversing every facet and saying "front" is saying "back".
#[test]
fn reversed_open_surface_front_equals_back() {
    let plain = plain();
    let back = Open.json(&plain).replace("\"front\"", "\"back\"");
    let a = run(&single(Open.tris()), &back);
    let b = run(
        &single(shapes::reverse_winding(&Open.tris())),
        &Open.json(&plain),
    );
    same(
        "open, reversed + front vs back",
        loads(&a),
        loads(&b),
        &Rigid::IDENTITY,
        1e-12,
        Open.size(),
    );
    // And the two sides are really different loads: front pushes the other way.
    let front = run(&single(Open.tris()), &Open.json(&plain));
    assert!(
        dot(loads(&front).force, loads(&a).force) < 0.0,
        "front and back load the gate in opposite senses"
    );
}
