//! wetload: exact hydrostatic loads on CAD surface meshes.
//!
//! The data walks one way: command line → pipeline → { mesh readers, sidecar } → the pure
//! core in [`hydro`] → report writers. See DEVELOPERS.md for the architecture map.

pub mod cli;
pub mod compute;
pub mod hydro;
pub mod mesh;
pub mod pipeline;
pub mod report;
pub mod shapes;
pub mod sidecar;
pub mod watch;

use std::io::Write;
use std::process::ExitCode;

use crate::cli::{CalcArgs, Cli, Command, WatchArgs};
use crate::report::summary::{self, SummaryOptions};

/// Runs a parsed command line; returns the exit status (0 success, 1 an input could not
/// be computed). Usage errors (status 2) are handled by the argument parser.
pub fn run(cli: Cli) -> ExitCode {
    match cli.command {
        Command::Calc(args) => calc(&args),
        Command::Watch(args) => watch(&args),
    }
}

fn watch(args: &WatchArgs) -> ExitCode {
    let mut opts = watch::WatchOptions::new(args.dir.clone());
    opts.once = args.once;
    opts.debounce = std::time::Duration::from_millis(args.debounce_ms);
    opts.poll = args.poll_ms.map(std::time::Duration::from_millis);
    opts.verbose = args.verbose;
    let stop = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    let flag = stop.clone();
    if let Err(e) =
        ctrlc::set_handler(move || flag.store(true, std::sync::atomic::Ordering::SeqCst))
    {
        eprintln!("note: Ctrl-C handler not installed ({e}); stop with a signal");
    }
    match watch::run(&opts, stop, Box::new(std::io::stdout())) {
        Ok(outcome) => {
            if !args.once {
                println!("stopped");
            }
            println!("\n{}", summary::caution_text(compute::CAUTION));
            if outcome.failures > 0 {
                ExitCode::from(1)
            } else {
                ExitCode::SUCCESS
            }
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(1)
        }
    }
}

fn calc(args: &CalcArgs) -> ExitCode {
    let mut results = Vec::new();
    let mut failed = false;
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    for mesh in &args.meshes {
        match pipeline::calc_file(mesh) {
            Ok(r) => {
                if !args.json {
                    let opts = SummaryOptions { no_caution: true };
                    if !results.is_empty() {
                        let _ = writeln!(out);
                    }
                    // A closed pipe (e.g. `| head`) is not an error worth a message.
                    let _ = out.write_all(summary::render(&r, opts).as_bytes());
                }
                results.push(r);
            }
            Err(e) => {
                failed = true;
                eprintln!("error: {e}");
            }
        }
    }
    if args.json {
        let bytes = match results.as_slice() {
            [one] if args.meshes.len() == 1 => report::json::render(one),
            many => report::json::render_many(many),
        };
        let _ = out.write_all(&bytes);
    } else if let Some(r) = results.first() {
        let _ = writeln!(out, "\n{}", summary::caution_text(r.caution));
    }
    let _ = out.flush();
    if failed {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}
