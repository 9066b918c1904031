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
    /// Compute the loads of one or more meshes once, write results/<stem>.json beside
    /// each, and print a summary.
    Calc(CalcArgs),
}

#[derive(Debug, clap::Args)]
pub struct CalcArgs {
    /// Mesh files (.stl or .obj); each needs a sidecar <stem>.json beside it.
    #[arg(required = true, value_name = "MESH")]
    pub meshes: Vec<PathBuf>,
    /// Print the result documents as JSON instead of the summary (an array for several
    /// meshes). The result files are written either way.
    #[arg(long)]
    pub json: bool,
}
