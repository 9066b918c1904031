//! wetload: exact hydrostatic loads on CAD surface meshes.
//!
//! The data walks one way: command line → pipeline → { mesh readers, sidecar } → the pure
//! core in [`hydro`] → report writers. See DEVELOPERS.md for the architecture map.

pub mod bar;
pub mod check;
pub mod cli;
pub mod compute;
pub mod history;
pub mod hydro;
pub mod init;
pub mod limits;
pub mod mesh;
pub mod pipeline;
pub mod report;
pub mod results;
pub mod sidecar;
pub mod watch;

use std::io::Write;
use std::process::ExitCode;

use crate::cli::{CalcArgs, CheckArgs, Cli, Command, CompareArgs, HistoryArgs, WatchArgs};
use crate::report::summary::{self, SummaryOptions};

/// Runs a parsed command line; returns the exit status (0 success, 1 an input could not
/// be computed). Usage errors (status 2) are handled by the argument parser.
pub fn run(cli: Cli) -> ExitCode {
    // A limit that cannot be read is a usage error, reported before any work.
    if let Err(e) = limits::Limits::from_env().and_then(|_| limits::snapshot_cap()) {
        eprintln!("error: {e}");
        return ExitCode::from(2);
    }
    match cli.command {
        Command::Calc(args) => calc(&args),
        Command::Watch(args) => watch(&args),
        Command::Check(args) => check_meshes(&args),
        Command::History(args) => history_of(&args),
        Command::Compare(args) => compare(&args),
        Command::Init(args) => init::run(&args.mesh, args.units.as_deref()),
    }
}

/// Prints `text` on stdout; a closed pipe is not an error worth a message.
fn print(text: &str) {
    let _ = std::io::stdout().write_all(text.as_bytes());
}

fn history_of(args: &HistoryArgs) -> ExitCode {
    let h = history::History::read(&args.mesh);
    if let Some([n, dir]) = args.extract.as_deref() {
        return match history::extract(&h, n, std::path::Path::new(dir)) {
            Ok([mesh, side]) => {
                print(&format!(
                    "wrote {} and {} (iteration {n} of {}, exactly as computed)\n",
                    mesh.display(),
                    side.display(),
                    args.mesh.display()
                ));
                ExitCode::SUCCESS
            }
            Err(e) => {
                eprintln!("error: {e}");
                ExitCode::from(1)
            }
        };
    }
    if h.lines.is_empty() {
        let e = history::HistoryError::Empty {
            mesh: args.mesh.clone(),
            log: h.layout.change_log(),
        };
        if args.json {
            print("[]\n");
            return ExitCode::SUCCESS;
        }
        eprintln!("error: {e}");
        return ExitCode::from(1);
    }
    if args.json {
        let v = history::to_json(&h);
        print(&format!(
            "{}\n",
            serde_json::to_string_pretty(&v).expect("JSON values always serialize")
        ));
    } else {
        print(&history::render(&h, args.units.system()));
    }
    ExitCode::SUCCESS
}

fn compare(args: &CompareArgs) -> ExitCode {
    let h = history::History::read(&args.mesh);
    match history::compare::compare(&h, &args.from, &args.to) {
        Ok(doc) if args.json => {
            print(&format!(
                "{}\n",
                serde_json::to_string_pretty(&doc).expect("JSON values always serialize")
            ));
            ExitCode::SUCCESS
        }
        Ok(doc) => {
            print(&history::compare::render(&doc, args.units.system()));
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(1)
        }
    }
}

fn check_meshes(args: &CheckArgs) -> ExitCode {
    let mut reports = Vec::new();
    let mut ok = true;
    for path in &args.meshes {
        let mesh = pipeline::read_mesh_file(path);
        let mesh = match mesh {
            Ok(m) => m,
            Err(e) => {
                ok = false;
                eprintln!("error: {e}");
                continue;
            }
        };
        let side = pipeline::sidecar_path(path);
        let name = path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        // The mesh with its sidecar, as calc would take them: a sidecar that does not
        // parse, or a pair calc refuses (an open mesh without wet_side front/back), fails.
        let judged = side.exists().then(|| {
            let parsed = limits::read_capped(&side, limits::MAX_SIDECAR_BYTES)
                .map_err(|e| format!("cannot read {}: {e:?}", side.display()))
                .and_then(|b| {
                    String::from_utf8(b).map_err(|_| format!("{}: not UTF-8 text", side.display()))
                })
                .and_then(|t| sidecar::parse_sidecar(&side, &t).map_err(|e| e.to_string()));
            let verdict = parsed.as_ref().map_err(Clone::clone).and_then(|sc| {
                compute::compute(&name, &mesh, sc)
                    .map(|_| ())
                    .map_err(|e| format!("{} (with {}): {e}", path.display(), side.display()))
            });
            (parsed.ok().map(|s| s.units.metres()), verdict)
        });
        let scale = judged.as_ref().and_then(|j| j.0);
        let mut h = check::check(&name, &mesh, scale);
        if let Some((_, verdict)) = judged {
            h.with_sidecar = Some(check::SidecarVerdict {
                sidecar: side.display().to_string(),
                accepted: verdict.is_ok(),
                reason: verdict.err(),
            });
        }
        ok &= h.usable_as_is && h.with_sidecar.as_ref().is_none_or(|v| v.accepted);
        // The holes as a file that opens over the mesh in CAD or a viewer; an old one
        // goes when the mesh has none.
        let edges_path = results::Layout::of_mesh(path, mesh::is_mesh_path).edges(path);
        let written = match check::edges_obj(&h) {
            Some(obj) => results::write_atomic(&edges_path, obj.as_bytes()).map(|()| true),
            None => results::remove_if_present(&edges_path).map(|()| false),
        };
        if !args.json {
            // A closed pipe is not an error worth a panic.
            let mut text = check::render(&h);
            match &written {
                Ok(true) => text.push_str(&format!(
                    "  the edges are in {} (OBJ lines, mesh axes and units)\n",
                    edges_path.display()
                )),
                Ok(false) => {}
                Err(e) => text.push_str(&format!("  note: {e}\n")),
            }
            let _ = std::io::stdout().write_all(text.as_bytes());
        }
        reports.push(h);
    }
    if args.json {
        let text = if reports.len() == 1 && args.meshes.len() == 1 {
            serde_json::to_string_pretty(&reports[0])
        } else {
            serde_json::to_string_pretty(&reports)
        };
        let text = text.expect("plain structs with string keys always serialize");
        let _ = writeln!(std::io::stdout(), "{text}");
    }
    if ok {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}

fn watch(args: &WatchArgs) -> ExitCode {
    let mut opts = watch::WatchOptions::new(args.dir.clone());
    opts.once = args.once;
    opts.debounce = std::time::Duration::from_millis(args.debounce_ms);
    opts.poll = args.poll_ms.map(std::time::Duration::from_millis);
    opts.verbose = args.verbose;
    opts.units = args.units.system();
    opts.progress = bar::Settings::from_env(false);
    let stop = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    let flag = stop.clone();
    if let Err(e) =
        ctrlc::set_handler(move || flag.store(true, std::sync::atomic::Ordering::SeqCst))
    {
        eprintln!("note: Ctrl-C handler not installed ({e}); stop with a signal");
    }
    match watch::run(&opts, stop, Box::new(std::io::stdout())) {
        Ok(outcome) => {
            // A closed pipe (e.g. `| head`) is not an error worth a panic.
            let mut out = std::io::stdout().lock();
            if !args.once {
                let _ = writeln!(out, "stopped");
            }
            let _ = writeln!(out, "\n{}", summary::caution_text(compute::CAUTION));
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
    let progress = bar::Settings::from_env(args.json);
    for mesh in &args.meshes {
        let name = mesh
            .file_name()
            .unwrap_or(mesh.as_os_str())
            .to_string_lossy();
        let bar = bar::Bar::start(progress, &name);
        // On a thread of the pool: the calculation's joins and parallel loops (a few
        // hundred for a large mesh, a pair a block as a binary STL is read) then share the
        // work between the pool's threads without waking this one each time (6 ms less
        // for 1.3 M facets, 0.7 ms for 100 k).
        let logged = rayon::scope(|_| pipeline::calc_logged_with(mesh, args.units.system(), &bar));
        // Cleared before anything else is printed.
        drop(bar);
        match logged {
            Ok(logged) => {
                for note in &logged.notes {
                    eprintln!("note: {note}");
                }
                let r = logged.result;
                if !args.json {
                    let opts = SummaryOptions {
                        no_caution: true,
                        units: args.units.system(),
                    };
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
        // One mesh: its document, or nothing when it failed (the error is on stderr).
        // Several: an array of the documents that were computed.
        let bytes = match results.as_slice() {
            [one] if args.meshes.len() == 1 => report::json::render(one),
            [] if args.meshes.len() == 1 => Vec::new(),
            many => report::json::render_many(many),
        };
        let _ = out.write_all(&bytes);
    } else if let Some(r) = results.first() {
        let _ = writeln!(out, "\n{}", summary::caution_text(r.caution));
        // A floating case's own caution, once.
        if let Some(f) = results
            .iter()
            .flat_map(|r| &r.cases)
            .find_map(|c| c.floating.as_ref())
        {
            let _ = writeln!(out, "{}", summary::caution_text(f.caution));
        }
    }
    let _ = out.flush();
    if failed {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// The rules of the house (DEVELOPERS.md, "Architecture"), checked on the source itself.
#[cfg(test)]
mod house {
    use std::collections::{BTreeMap, BTreeSet};
    use std::path::{Path, PathBuf};

    /// Every `.rs` file under `src/`.
    fn sources() -> Vec<PathBuf> {
        fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
            for e in std::fs::read_dir(dir).expect("src/ is readable") {
                let p = e.expect("an entry").path();
                if p.is_dir() {
                    walk(&p, out);
                } else if p.extension().is_some_and(|x| x == "rs") {
                    out.push(p);
                }
            }
        }
        let mut out = Vec::new();
        walk(&Path::new(env!("CARGO_MANIFEST_DIR")).join("src"), &mut out);
        out.sort();
        out
    }

    /// The text of a file before its `#[cfg(test)]` module.
    fn product_part(path: &Path) -> String {
        let text = std::fs::read_to_string(path).expect("a source file");
        match text.find("#[cfg(test)]") {
            Some(i) => text[..i].to_owned(),
            None => text,
        }
    }

    #[test]
    fn no_source_file_is_over_900_lines_before_its_tests() {
        for path in sources() {
            let lines = product_part(&path).lines().count();
            assert!(
                lines <= 900,
                "{} has {lines} lines before its tests",
                path.display()
            );
        }
    }

    #[test]
    fn the_top_level_modules_import_each_other_in_one_direction() {
        let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
        let mut uses: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
        for path in sources() {
            let rel = path.strip_prefix(&src).expect("under src/");
            let top = rel
                .components()
                .next()
                .map(|c| {
                    c.as_os_str()
                        .to_string_lossy()
                        .trim_end_matches(".rs")
                        .to_owned()
                })
                .expect("a name");
            if top == "lib" || top == "main" {
                continue;
            }
            let text: String = product_part(&path)
                .lines()
                .map(|l| l.split("//").next().unwrap_or(""))
                .collect::<Vec<_>>()
                .join("\n");
            let entry = uses.entry(top.clone()).or_default();
            for (i, _) in text.match_indices("crate::") {
                let rest = &text[i + "crate::".len()..];
                if let Some(group) = rest.strip_prefix('{') {
                    let group = &group[..group.find('}').unwrap_or(group.len())];
                    for item in group.split(',') {
                        let name: String = item
                            .trim()
                            .chars()
                            .take_while(|c| c.is_alphanumeric() || *c == '_')
                            .collect();
                        if !name.is_empty() && name != top && name != "self" {
                            entry.insert(name);
                        }
                    }
                } else {
                    let name: String = rest
                        .chars()
                        .take_while(|c| c.is_alphanumeric() || *c == '_')
                        .collect();
                    if !name.is_empty() && name != top {
                        entry.insert(name);
                    }
                }
            }
        }
        // Whether `to` can be reached from `from` along the imports.
        let reaches = |from: &str, to: &str| {
            let mut seen = BTreeSet::new();
            let mut stack = vec![from.to_owned()];
            while let Some(m) = stack.pop() {
                for n in uses.get(&m).into_iter().flatten() {
                    if n == to {
                        return true;
                    }
                    if seen.insert(n.clone()) {
                        stack.push(n.clone());
                    }
                }
            }
            false
        };
        for (m, used) in &uses {
            for u in used {
                assert!(
                    !reaches(u, m),
                    "{m} imports {u}, and {u} leads back to {m}: {uses:?}"
                );
            }
        }
        // The pure core stands alone, and the results room knows nothing of the rest.
        assert!(
            uses["hydro"].is_empty(),
            "hydro imports {:?}",
            uses["hydro"]
        );
        assert!(
            uses["results"].is_empty(),
            "results imports {:?}",
            uses["results"]
        );
    }
}
