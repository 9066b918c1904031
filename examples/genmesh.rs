//! Writes a large test mesh and its sidecar, for benchmarks and profiling.
//!
//! `cargo run --release --example genmesh -- OUT.stl --facets N [--open] [--seed S]`
//! writes `OUT.stl` (binary STL) and `OUT.json` (its sidecar) beside it:
//!
//! * by default a closed torus (major radius 3 m, minor radius 1 m, axis `+z` through the
//!   origin), wound outward;
//! * with `--open` an open surface: a cylinder patch of radius 6 m and width 4 m (axis
//!   along `+y` through the origin, a quarter turn of arc centred on `−x`), its
//!   right-hand-rule normals pointing away from the axis.
//!
//! Either has about N facets (the nearest grid the shape allows), every vertex moved by a
//! seeded pseudo-random offset of at most a tenth of the shortest grid edge
//! ([`shapes::perturb`]: shared vertices move alike, so the torus stays closed).
//! The sidecar puts the free surface at `z = 0` through the middle of the shape, so it is
//! partly submerged: units m, density 1000 kg/m³, and `wet_side` front for the open one.
//! The output depends only on the arguments, byte for byte.
//!
//! The meshes are for measuring, not for checking loads, and are never committed.
//! `benches/calc.rs` builds its meshes with [`generate`] from this file.

use std::f64::consts::{FRAC_PI_4, PI};
use std::fs;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use clap::Parser;
use shapes::encode::stl_binary;
use shapes::{cylinder_patch, perturb, torus};

/// Write a perturbed test mesh of about N facets as binary STL, with its sidecar.
#[derive(Parser)]
struct Args {
    /// The STL file to write; the sidecar goes beside it as `<stem>.json`.
    out: PathBuf,
    /// About how many facets to write (at least 18).
    #[arg(long)]
    facets: usize,
    /// Write an open surface (a cylinder patch) instead of a closed torus.
    #[arg(long)]
    open: bool,
    /// Seed of the vertex perturbation; the same seed gives the same bytes.
    #[arg(long, default_value_t = 1)]
    seed: u64,
}

/// A generated mesh: the binary STL bytes, the sidecar text and the facet count.
pub struct Generated {
    pub stl: Vec<u8>,
    pub sidecar: String,
    pub facets: usize,
}

/// Torus radii, m.
const MAJOR: f64 = 3.0;
const MINOR: f64 = 1.0;
/// Cylinder patch radius and width, m.
const RADIUS: f64 = 6.0;
const WIDTH: f64 = 4.0;
/// Largest vertex offset as a fraction of the shortest grid edge: small enough that no
/// facet folds over, large enough that no two facets are coplanar by construction.
const NOISE: f64 = 0.1;

/// The closed torus (`open == false`) or the open cylinder patch of about `facets` facets,
/// perturbed with `seed`, and its sidecar (free surface at `z = 0`).
pub fn generate(facets: usize, open: bool, seed: u64) -> Generated {
    let half = facets.max(18) / 2; // quads
    let (tris, shape) = if open {
        // Cells about square: n_arc / n_width ≈ arc length / width.
        let arc = RADIUS * PI / 2.0;
        let n_width = ((half as f64 * WIDTH / arc).sqrt().round() as usize).max(1);
        let n_arc = (half as f64 / n_width as f64).round().max(1.0) as usize;
        let edge = (2.0 * RADIUS * (PI / 4.0 / n_arc as f64).sin()).min(WIDTH / n_width as f64);
        // Axis +y, reference −x: ê₂ = ŷ × (−x̂) = +z, so the arc spans z = ±6 sin 45°.
        let patch = cylinder_patch(
            [0.0, -WIDTH / 2.0, 0.0],
            [0.0, 1.0, 0.0],
            RADIUS,
            -FRAC_PI_4,
            FRAC_PI_4,
            [-1.0, 0.0, 0.0],
            WIDTH,
            n_arc,
            n_width,
        );
        (perturb(&patch, NOISE * edge, seed), "cylinder patch")
    } else {
        // Cells about square at the tube's centre line: n_major / n_minor ≈ MAJOR / MINOR.
        let n_minor = ((half as f64 * MINOR / MAJOR).sqrt().round() as usize).max(3);
        let n_major = ((half as f64 / n_minor as f64).round() as usize).max(3);
        let inner = 2.0 * (MAJOR - MINOR) * (PI / n_major as f64).sin();
        let edge = inner.min(2.0 * MINOR * (PI / n_minor as f64).sin());
        let ring = torus([0.0; 3], MAJOR, MINOR, n_major, n_minor);
        (perturb(&ring, NOISE * edge, seed), "torus")
    };
    let header = format!("wetload genmesh: perturbed {shape}, seed {seed}");
    let wet_side = if open {
        "\n  \"wet_side\": \"front\","
    } else {
        ""
    };
    let sidecar = format!(
        "{{\n  \"units\": \"m\",{wet_side}\n  \"liquid\": {{\"level\": 0.0, \"density\": 1000}}\n}}\n"
    );
    Generated {
        stl: stl_binary(&tris, &header),
        sidecar,
        facets: tris.len(),
    }
}

fn main() -> ExitCode {
    let args = Args::parse();
    match write(&args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

fn write(args: &Args) -> Result<()> {
    if args.out.extension().is_none_or(|e| e == "json") {
        bail!(
            "{}: give the STL's name with its extension, e.g. big.stl (the sidecar takes <stem>.json)",
            args.out.display()
        );
    }
    let g = generate(args.facets, args.open, args.seed);
    let side = wetload::pipeline::sidecar_path(&args.out);
    fs::write(&args.out, &g.stl).with_context(|| format!("cannot write {}", args.out.display()))?;
    fs::write(&side, &g.sidecar).with_context(|| format!("cannot write {}", side.display()))?;
    println!(
        "wrote {} ({} facets, {} bytes) and {}",
        args.out.display(),
        g.facets,
        g.stl.len(),
        side.display()
    );
    Ok(())
}
