//! The command line: subcommands and their options (help text comes from these docs).

use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// Exact hydrostatic loads on CAD surface meshes (STL/OBJ) with a JSON sidecar each.
#[derive(Debug, Parser)]
#[command(name = "wetload", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Compute the loads of one or more meshes once, write `results/<stem>.json` beside
    /// each, and print a summary.
    Calc(CalcArgs),
    /// Compute every mesh in a folder, then recompute whenever a mesh or its sidecar is
    /// saved, until interrupted (Ctrl-C). Results and the change log go to DIR/results/.
    Watch(WatchArgs),
    /// Report the health of meshes: shells, open and non-manifold edges, winding,
    /// degenerate and duplicate facets, stale STL normals; with a sidecar beside a mesh,
    /// whether calc accepts the pair. Exit status 0 when every mesh is usable as it is,
    /// 1 when one is unusable, needs the repairs calc would make, or is refused with its
    /// sidecar (say an open mesh without wet_side front/back).
    Check(CheckArgs),
    /// List a mesh's design iterations from the change log of its results folder: number,
    /// time, what changed (mesh, sidecar or both), and per case |F|, |M| and uplift with
    /// their change. `--extract N DIR` writes iteration N's exact mesh and sidecar out.
    History(HistoryArgs),
    /// Put two iterations of a mesh side by side: every headline load per case with its
    /// change and percentage, and the geometry (facets, area, volume, bounding box, per
    /// part) of each iteration's mesh.
    Compare(CompareArgs),
    /// Write a starter sidecar `<stem>.json` for a mesh, from what the mesh shows (closed or
    /// open, extent, parts), and say what each value is and what to edit. Never
    /// overwrites a sidecar; needs --units (without it, says what the extent suggests).
    Init(InitArgs),
}

#[derive(Debug, clap::Args)]
pub struct HistoryArgs {
    /// The mesh file (its results folder holds the change log and the snapshots).
    #[arg(value_name = "MESH")]
    pub mesh: PathBuf,
    /// Print the history as JSON: an array, oldest first, one entry per log line.
    #[arg(long)]
    pub json: bool,
    /// Write iteration N's exact mesh and sidecar into DIR under their original names
    /// (N: a number, `baseline`, `previous` or `latest`). Never overwrites a file.
    #[arg(long, num_args = 2, value_names = ["N", "DIR"])]
    pub extract: Option<Vec<String>>,
    /// Units of the listing: `si` or `us`. The JSON is SI either way.
    #[arg(long, value_enum, ignore_case = true, default_value_t = Units::Si)]
    pub units: Units,
}

#[derive(Debug, clap::Args)]
pub struct CompareArgs {
    /// The mesh file.
    #[arg(value_name = "MESH")]
    pub mesh: PathBuf,
    /// The earlier iteration: a number, `baseline`, `previous` or `latest`.
    #[arg(value_name = "A")]
    pub from: String,
    /// The later iteration: a number, `baseline`, `previous` or `latest`.
    #[arg(value_name = "B")]
    pub to: String,
    /// Print the comparison as JSON.
    #[arg(long)]
    pub json: bool,
    /// Units of the table: `si` or `us`. The JSON is SI either way.
    #[arg(long, value_enum, ignore_case = true, default_value_t = Units::Si)]
    pub units: Units,
}

#[derive(Debug, clap::Args)]
pub struct InitArgs {
    /// The mesh file; the sidecar is written beside it as `<stem>.json`.
    #[arg(value_name = "MESH")]
    pub mesh: PathBuf,
    /// Length unit of the mesh's coordinates: m, cm, mm, in or ft. Required to write
    /// anything: without it, wetload says which unit the extent suggests, and why.
    #[arg(long, value_name = "U")]
    pub units: Option<String>,
}

#[derive(Debug, clap::Args)]
pub struct CheckArgs {
    /// Mesh files (.stl or .obj). A sidecar beside one, if present, gives its units and
    /// is judged with it.
    #[arg(required = true, value_name = "MESH")]
    pub meshes: Vec<PathBuf>,
    /// Print the reports as JSON (an array for several meshes).
    #[arg(long)]
    pub json: bool,
}

/// Unit system of the terminal output and the page (result files are SI either way).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Units {
    /// kN, kN·m, m, m², m³, kPa, kg/m³, m/s².
    Si,
    /// kip, kip·ft, ft, ft², ft³, psi, lb/ft³, ft/s².
    Us,
}

impl Units {
    /// The presentation's unit system.
    pub fn system(self) -> crate::report::units::UnitSystem {
        match self {
            Units::Si => crate::report::units::UnitSystem::Si,
            Units::Us => crate::report::units::UnitSystem::Us,
        }
    }
}

#[derive(Debug, clap::Args)]
pub struct WatchArgs {
    /// The folder the CAD tool exports meshes into.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Compute everything once and exit (status 1 if any mesh failed).
    #[arg(long)]
    pub once: bool,
    /// Quiet time after the last file event before a mesh is computed, in ms. Raise it
    /// (1000–2000) for exporters that write large files in bursts.
    #[arg(long, value_name = "MS", default_value_t = 500)]
    pub debounce_ms: u64,
    /// Poll the folder every MS milliseconds instead of using file-system events (for
    /// network drives, which deliver no events).
    #[arg(long, value_name = "MS")]
    pub poll_ms: Option<u64>,
    /// Show every force and moment component and every warning.
    #[arg(long, short)]
    pub verbose: bool,
    /// Units of the terminal lines: `si` (kN, kN·m, m, kPa) or `us` (kip, kip·ft, ft, psi),
    /// in any case. The result files are SI either way.
    #[arg(long, value_enum, ignore_case = true, default_value_t = Units::Si)]
    pub units: Units,
}

#[derive(Debug, clap::Args)]
pub struct CalcArgs {
    /// Mesh files (.stl or .obj); each needs a sidecar `<stem>.json` beside it.
    #[arg(required = true, value_name = "MESH")]
    pub meshes: Vec<PathBuf>,
    /// Print the result documents as JSON instead of the summary (an array for several
    /// meshes). The result files are written either way.
    #[arg(long)]
    pub json: bool,
    /// Units of the summary: `si` (kN, kN·m, m, kPa) or `us` (kip, kip·ft, ft, psi), in
    /// any case. The result files are SI either way.
    #[arg(long, value_enum, ignore_case = true, default_value_t = Units::Si)]
    pub units: Units,
}
