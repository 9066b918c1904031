//! Writes the demo scenario, the invented "Kestrel Creek" irrigation headworks, into a
//! folder: six meshes, a sidecar `<stem>.json` beside each, and a README.
//!
//! `cargo run --example demo_meshes -- meshes/` regenerates `meshes/` byte for byte: the
//! shapes come from `shapes`, which uses no randomness, and the sidecars are
//! written as fixed text. Every value is invented for the demo.
//!
//! It does not compute loads; the README lists closed-form values to compare against.

use std::fs;
use std::path::Path;
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use shapes::encode::{obj, stl_ascii, stl_binary};
use shapes::{Triangle, box_solid, cylinder_patch, rectangle, rectangular_tube, scale};

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [dir] = args.as_slice() else {
        eprintln!("usage: cargo run --example demo_meshes -- DIR   (for example meshes/)");
        return ExitCode::from(2);
    };
    match write_all(Path::new(dir)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

fn write_all(dir: &Path) -> Result<()> {
    fs::create_dir_all(dir).with_context(|| format!("cannot create folder {}", dir.display()))?;
    let files = [
        radial_gate()?,
        wet_well()?,
        pontoon()?,
        culvert()?,
        stoplog()?,
        caisson()?,
        vec![("README.md", README.as_bytes().to_vec())],
    ];
    for (name, bytes) in files.into_iter().flatten() {
        if name.ends_with(".json") {
            // A sidecar must be valid JSON; catch a typo here rather than in the demo.
            serde_json::from_slice::<serde_json::Value>(&bytes)
                .with_context(|| format!("{name} is not valid JSON"))?;
        }
        let path = dir.join(name);
        fs::write(&path, &bytes).with_context(|| format!("cannot write {}", path.display()))?;
    }
    Ok(())
}

type Files = Vec<(&'static str, Vec<u8>)>;

/// Σ (b − a) × (c − a) / 2 over the facets: the vector area, along the right-hand normals.
fn vector_area(tris: &[Triangle]) -> [f64; 3] {
    let mut sum = [0.0; 3];
    for [a, b, c] in tris {
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        sum[0] += 0.5 * (u[1] * v[2] - u[2] * v[1]);
        sum[1] += 0.5 * (u[2] * v[0] - u[0] * v[2]);
        sum[2] += 0.5 * (u[0] * v[1] - u[1] * v[0]);
    }
    sum
}

/// The intake's radial gate: the curved skin plate only (an open surface), in millimetres.
///
/// Flow runs along +x, so upstream is −x. The trunnion axis runs along +y through
/// (0, y, 4.5 m); the skin is the arc of radius 6 m on the upstream side, from the sill
/// (z = 0) to z = 6 m (1 m above the design headwater of 5 m), 4 m wide (y from −2 to 2).
fn radial_gate() -> Result<Files> {
    let radius: f64 = 6.0;
    let trunnion_z = 4.5;
    let top_z = 6.0;
    // Angles about +y measured from −x (pointing upstream from the trunnion): with
    // ê₁ = −x and ê₂ = ŷ × ê₁ = +z, a vertex at angle θ has z = 4.5 + 6 sin θ.
    let angle_sill = (-trunnion_z / radius).asin();
    let angle_top = ((top_z - trunnion_z) / radius).asin();
    let skin_m = cylinder_patch(
        [0.0, -2.0, trunnion_z],
        [0.0, 1.0, 0.0],
        radius,
        angle_sill,
        angle_top,
        [-1.0, 0.0, 0.0],
        4.0,
        32,
        4,
    );
    // cylinder_patch winds its facets so that the right-hand normals point away from the
    // axis, i.e. out of the convex face, which is the upstream face (−x). The water is on
    // that face, so the wet side is "front". Derived from the winding rather than assumed:
    let upstream_area = -vector_area(&skin_m)[0];
    let wet_side = if upstream_area > 0.0 { "front" } else { "back" };
    if wet_side != "front" {
        bail!("the gate skin's normals do not point upstream; the winding changed");
    }
    let skin_mm = scale(&skin_m, 1000.0);
    let stl = stl_binary(
        &skin_mm,
        "Kestrel Creek headworks, radial gate skin plate, mm, +z up (demo)",
    );
    let json = format!(
        r#"{{
  "units": "mm",
  "up": "+z",
  "wet_side": "{wet_side}",
  "liquid": {{ "level": 5.0, "density": 1000 }},
  "moment_about": [0.0, 0.0, 4.5],
  "axes": {{
    "trunnion": {{ "point": [0.0, 0.0, 4.5], "direction": [0.0, 1.0, 0.0] }}
  }},
  "cases": [
    {{ "name": "normal", "level": 5.0 }},
    {{ "name": "flood", "level": 5.8 }}
  ],
  "sweep": {{ "liquid": "liquid", "from": 0.5, "to": 6.0, "step": 0.5 }}
}}
"#
    );
    Ok(vec![
        ("radial_gate.stl", stl),
        ("radial_gate.json", json.into_bytes()),
    ])
}

/// The buried pump-station wet well: a closed box 3.0 m (x) × 2.5 m (z) in plan and 5.0 m
/// tall, with +y up, split into three groups that close the box only together.
fn wet_well() -> Result<Files> {
    let (height, base) = (5.0, 0.0);
    let shell = box_solid([0.0, base, 0.0], [3.0, height, 2.5], 4);
    let all_at = |t: &Triangle, y: f64| t.iter().all(|p| p[1] == y);
    let base_slab: Vec<Triangle> = shell.iter().copied().filter(|t| all_at(t, base)).collect();
    let roof: Vec<Triangle> = shell
        .iter()
        .copied()
        .filter(|t| all_at(t, height))
        .collect();
    let walls: Vec<Triangle> = shell
        .iter()
        .copied()
        .filter(|t| !all_at(t, base) && !all_at(t, height))
        .collect();
    let text = obj(&[
        ("walls", &walls),
        ("base_slab", &base_slab),
        ("roof", &roof),
    ]);
    // Resisting loads (N), invented: see README.md for how they were made up.
    let json = r#"{
  "units": "m",
  "up": "+y",
  "wet_side": "outside",
  "liquid": { "level": 3.5, "density": 1000 },
  "moment_about": [1.5, 0.0, 1.25],
  "flotation": {
    "resisting": { "structure": 424000, "soil_above": 81000 },
    "factor_preset": "usace-em-1110-2-2100-usual"
  },
  "sweep": { "liquid": "liquid", "from": 0.5, "to": 5.0, "step": 0.5 }
}
"#;
    Ok(vec![
        ("wet_well.obj", text.into_bytes()),
        ("wet_well.json", json.as_bytes().to_vec()),
    ])
}

/// The service pontoon: an 8 × 3 × 1.2 m hull with a 2.4 × 2.0 × 1.0 m deckhouse standing
/// on its deck, two closed shells in one ASCII STL. No deckhouse vertex coincides with a
/// hull vertex, so the two shells share no edge.
fn pontoon() -> Result<Files> {
    let hull = box_solid([-4.0, -1.5, 0.0], [4.0, 1.5, 1.2], 4);
    let deckhouse = box_solid([-3.0, -1.0, 1.2], [-0.6, 1.0, 2.2], 1);
    let text = stl_ascii(&[("hull", &hull), ("deckhouse", &deckhouse)]);
    let json = r#"{
  "units": "m",
  "up": "+z",
  "wet_side": "outside",
  "liquid": { "level": 0.45, "density": 1025 },
  "moment_about": [0.0, 0.0, 0.0],
  "sweep": { "liquid": "liquid", "from": 0.125, "to": 1.0, "step": 0.125 }
}
"#;
    Ok(vec![
        ("pontoon.stl", text.into_bytes()),
        ("pontoon.json", json.as_bytes().to_vec()),
    ])
}

/// The access-road culvert barrel: 6 m long along x, outer 2.4 m wide × 2.0 m high, bore
/// 2.0 × 1.6 m (0.2 m walls and slabs), invert of the outer slab at z = 0. One closed shell
/// with a through-hole; the flood water fills the bore too, which "outside" expresses.
fn culvert() -> Result<Files> {
    let barrel = rectangular_tube(
        0.0,
        6.0,
        [-1.2, 0.0],
        [1.2, 2.0],
        [-1.0, 0.2],
        [1.0, 1.8],
        6,
    );
    let text = obj(&[("barrel", &barrel)]);
    let json = r#"{
  "units": "m",
  "up": "+z",
  "wet_side": "outside",
  "liquid": { "level": 3.0, "density": 1000 },
  "moment_about": [3.0, 0.0, 0.0],
  "cases": [
    { "name": "flood", "level": 3.0 },
    { "name": "low", "level": 1.0 }
  ]
}
"#;
    Ok(vec![
        ("culvert.obj", text.into_bytes()),
        ("culvert.json", json.as_bytes().to_vec()),
    ])
}

/// The outlet stoplog: a 0.3 m thick panel across the 3.0 m outlet channel, 2.5 m high,
/// with headwater on its upstream face and tailwater on its downstream face. Only the two
/// wetted faces are modelled (two open rectangles, one group each), each wound so that
/// its right-hand normals point out of the panel into its own water: both are "front".
fn stoplog() -> Result<Files> {
    let upstream = rectangle([0.0, -1.5, 0.0], [0.0, 0.0, 2.5], [0.0, 3.0, 0.0], 10, 12);
    let downstream = rectangle([0.3, -1.5, 0.0], [0.0, 3.0, 0.0], [0.0, 0.0, 2.5], 12, 10);
    if vector_area(&upstream)[0] >= 0.0 || vector_area(&downstream)[0] <= 0.0 {
        bail!("the stoplog faces' normals do not point out of the panel; the winding changed");
    }
    let text = obj(&[
        ("upstream_face", &upstream),
        ("downstream_face", &downstream),
    ]);
    let json = r#"{
  "units": "m",
  "up": "+z",
  "liquids": {
    "headwater": { "level": 2.2, "density": 1000 },
    "tailwater": { "level": 0.8, "density": 1000 }
  },
  "parts": {
    "upstream_face": { "liquid": "headwater", "wet_side": "front" },
    "downstream_face": { "liquid": "tailwater", "wet_side": "front" }
  },
  "moment_about": [0.3, 0.0, 0.0],
  "axes": {
    "sill_edge": { "point": [0.3, 0.0, 0.0], "direction": [0.0, 1.0, 0.0] }
  },
  "cases": [
    { "name": "normal" },
    { "name": "reverse", "liquids": { "headwater": { "level": 0.5 }, "tailwater": { "level": 1.2 } } }
  ],
  "sweep": { "liquid": "headwater", "from": 0.0, "to": 2.5, "step": 0.25 }
}
"#;
    Ok(vec![
        ("stoplog.obj", text.into_bytes()),
        ("stoplog.json", json.as_bytes().to_vec()),
    ])
}

/// The intake caisson: a closed precast box 10 × 6 × 5 m, floated out and towed to the
/// intake before it is sunk onto its bed. It floats freely: no level is given.
fn caisson() -> Result<Files> {
    let shell = box_solid([-5.0, -3.0, 0.0], [5.0, 3.0, 5.0], 4);
    let text = obj(&[("caisson", &shell)]);
    let json = r#"{
  "units": "m",
  "up": "+z",
  "wet_side": "outside",
  "liquid": { "density": 1000 },
  "moment_about": [0.0, 0.0, 0.0],
  "floating": {
    "mass": 150000,
    "centre_of_gravity": [0.0, 0.05, 1.9],
    "criteria": "imo-2008-is-code-general",
    "free_surface_moments": { "ballast_cell": { "moment_m4": 21.33, "density": 1000 } }
  },
  "cases": [
    { "name": "float_out" },
    { "name": "ballasted", "floating": { "mass": 200000, "centre_of_gravity": [0.0, 0.05, 1.6] } }
  ]
}
"#;
    Ok(vec![
        ("caisson.obj", text.into_bytes()),
        ("caisson.json", json.as_bytes().to_vec()),
    ])
}

const README: &str = "\
# Kestrel Creek headworks: demo meshes

Demo only. Kestrel Creek is an invented small irrigation headworks; every dimension,
level and weight below is made up to show what wetload does. None of it is a design.

Regenerate this folder byte for byte with `cargo run --example demo_meshes -- meshes/`.
Each mesh has its sidecar `<stem>.json` beside it. Flow runs along +x (upstream is −x).
Water is fresh (1000 kg/m³) except at the pontoon (sea water, 1025 kg/m³); g is the
default 9.80665 m/s².

| file | what | format, units, up |
|---|---|---|
| `radial_gate.stl` | skin plate of the intake's radial gate (open surface) | binary STL, mm, +z |
| `wet_well.obj` | buried pump-station wet well (closed box in 3 groups) | OBJ, m, +y |
| `pontoon.stl` | service pontoon: `hull` and `deckhouse`, two closed shells | ASCII STL, m, +z |
| `culvert.obj` | access-road box culvert barrel (closed shell with a through-hole) | OBJ, m, +z |
| `stoplog.obj` | outlet stoplog: `upstream_face` and `downstream_face`, two open faces | OBJ, m, +z |
| `caisson.obj` | intake caisson floating freely for its tow (closed box) | OBJ, m, +z |

## radial_gate

Radius 6.0 m, 4.0 m wide (y from −2 to 2), trunnion axis along y through x = 0,
z = 4.5 m. The skin runs from the sill (z = 0) to z = 6.0 m, 1 m above the design
headwater, in 32 × 4 cells. The water is on the convex, upstream face; the facets'
right-hand normals point away from the trunnion axis, out of that face, so
`wet_side` is `front`. Cases `normal` (headwater 5.0 m) and `flood` (5.8 m); the sweep
steps the headwater from 0.5 to 6.0 m.

Closed-form checks (depth H of water over the sill, width w = 4 m):

- horizontal force F_x = ½ρgH²w = 490 332.5 N (normal), 659 791.4 N (flood), downstream
  (+x). This holds for the facets too: it depends only on the heights they span.
- vertical force on the smooth arc, upward: 288 233.8 N (normal), 349 706.2 N (flood);
  the faceted skin is slightly different (its chords cut inside the arc).
- on the smooth arc every pressure passes through the trunnion axis, so the moment about
  `trunnion` is zero; the facets leave a small residue.

## wet_well

Outer plan 3.0 m (x) × 2.5 m (z), 5.0 m tall (y from 0 to 5), empty. Groups `walls`,
`base_slab` and `roof` close the box only together. Groundwater stands 3.5 m above the
base. Flotation resisting loads, invented:

- `structure` 424 000 N: 17.664 m³ of concrete (0.3 m walls, 0.4 m base slab, 0.25 m
  roof) at 24 kN/m³ is 423 936 N, rounded.
- `soil_above` 81 000 N: 0.6 m of cover over the 3.0 × 2.5 m roof at 18 kN/m³.
- `factor_preset` `usace-em-1110-2-2100-usual`: a required factor of 1.3 (from
  `config/flotation.json`, where its source is given; the value is from memory).

Closed-form check: net uplift ρg · 3.0 · 2.5 · 3.5 = 257 424.6 N (the walls are vertical,
so it is all on the base), factor 505 000 / 257 424.6 = 1.96, which passes 1.3. The sweep
raises the groundwater from 0.5 m to the top of the well, 5.0 m: the factor
505 000 / (ρg · 7.5 · H) falls to its lowest, 1.373, with the water at the top.

## pontoon

Hull 8 × 3 × 1.2 m (x from −4 to 4, y from −1.5 to 1.5, keel at z = 0); deckhouse
2.4 × 2.0 × 1.0 m standing on the deck (x from −3.0 to −0.6, y from −1 to 1). Sea water
0.45 m above the keel; the sweep steps the level from 0.125 to 1.0 m.

Closed-form check: displaced volume 8 × 3 × 0.45 = 10.8 m³, buoyancy ρgV = 108 559.6 N
upward, centre of buoyancy (0, 0, 0.225).

## culvert

Barrel 6 m long (x from 0 to 6), outer 2.4 m wide × 2.0 m high (outer invert at z = 0),
bore 2.0 × 1.6 m, so walls and slabs are 0.2 m thick. One closed shell with a hole
through it: the water is outside, around the barrel and through its bore. Cases `flood`
(level 3.0 m) and `low` (1.0 m).

Closed-form checks: flood, submerged volume (2.4 · 2.0 − 2.0 · 1.6) · 6 = 9.6 m³,
buoyancy 94 143.8 N upward; low, (2.4 · 1.0 − 2.0 · 0.8) · 6 = 4.8 m³, 47 071.9 N.

## stoplog

A panel 0.3 m thick (x from 0 to 0.3) across the 3.0 m outlet channel (y from −1.5 to
1.5), 2.5 m high from the sill (z = 0). Only its two wetted faces are modelled, one group
each, wound so that their normals point out of the panel: headwater on
`upstream_face` (x = 0), tailwater on `downstream_face` (x = 0.3), both `front`. The axis
`sill_edge` runs along y through the downstream bottom edge (x = 0.3, z = 0). Cases
`normal` (headwater 2.2 m, tailwater 0.8 m) and `reverse` (0.5 m and 1.2 m: the water
is higher downstream); the sweep steps the headwater from 0 to 2.5 m.

Closed-form checks, width w = 3 m, depths H₁ (headwater) and H₂ (tailwater):

- net F_x = ½ρgw(H₁² − H₂²): 61 781.9 N downstream (normal), −17 504.9 N (reverse);
  per face ½ρgwH₁² = 71 196.3 N and ½ρgwH₂² = 9 414.4 N (normal).
- moment about `sill_edge` = ρgw(H₁³ − H₂³)/6: 49 700.1 N·m (normal, tipping the panel
  downstream), −7 860.0 N·m (reverse); the resultant acts (H₁³ − H₂³)/(3(H₁² − H₂²)) =
  0.804 m above the sill (normal), and, being horizontal, misses the axis by that much.
- sweep: the largest net F_x is at the top level, 2.5 m: 82 523.0 N, with 74 104.0 N·m
  about `sill_edge`.

## caisson

A closed precast box 10 × 6 × 5 m (x from −5 to 5, y from −3 to 3, keel at z = 0),
floated out of its casting basin and towed to the intake in the reservoir's fresh water.
It floats freely: the sidecar gives its mass and centre of gravity, not a level. The
centre of gravity is 0.05 m off the centre line (towards +y), so it lists a little. Case
`float_out`: 150 t, G at z = 1.9 m, with a slack ballast cell (4 × 4 m free surface,
i = 4 · 4³ / 12 = 21.33 m⁴ of fresh water); case `ballasted`: 200 t, G at z = 1.6 m.
The criteria set `imo-2008-is-code-general` is evaluated as numbers only (it is written
for ships; no compliance is implied).

Closed-form checks (box, ρ = 1000 kg/m³, L = 10 m, B = 6 m):

- displacement m/ρ: 150 m³ and 200 m³; the water's force is m g (1 470 997.5 N and
  1 961 330.0 N) along the free surface's normal, through G.
- upright draft T = m/(ρLB) = 2.5 m and 3.333 m; GM_T = T/2 + B²/(12T) − KG = 0.550 m
  and 0.967 m, less ρ i / m = 0.142 m for the slack cell (float_out).
- list: the wall-sided formula tan φ (GM_T + ½ BM_T tan² φ) = 0.05 m (valid while
  neither the deck edge nor the bilge crosses the surface, tan φ < 2.5/3) gives 5.15°
  (float_out) and 2.96° (ballasted), towards +y (negative heel about +x).
";
