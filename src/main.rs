//! The `wetload` binary: parse the command line, run, map errors to the exit status.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = wetload::cli::Cli::parse();
    wetload::run(cli)
}
