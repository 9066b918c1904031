//! The progress bar: drawn on stderr only when it is a terminal, never with `--json`, and
//! never in a pipe, so scripts and files see exactly what they saw before the bar existed.
//!
//! The terminal cases run the binary under a pseudo-terminal made by `script` (util-linux,
//! Debian's bsdutils; `.ci/run` installs it). A machine without it fails these tests: they
//! never skip. `WETLOAD_PROGRESS_DELAY_MS=0` makes the bar appear at once, so no test
//! depends on how long the work takes.

use std::process::{Command, Stdio};

use super::*;

/// Levels of the sweep of [`write_long_job`].
const LEVELS: usize = 401;

/// What the bar says of that sweep, after the count of levels done (`sweep 40/401 levels`);
/// the summary says `401 levels from …`, without the slash.
const LABEL: &str = "/401 levels";

/// A torus of 40,000 facets, half under water, with a sweep of [`LEVELS`] levels: long
/// enough that a bar drawn at once is seen several times before the work ends.
fn write_long_job(f: &Folder, stem: &str) {
    let tris = shapes::torus([0.0; 3], 3.0, 1.0, 200, 100);
    f.write(&format!("{stem}.stl"), binary_stl(&tris));
    f.write(
        &format!("{stem}.json"),
        r#"{"units": "m", "liquid": {"level": 0.0, "density": 1000},
            "sweep": {"from": -1.0, "to": 1.0, "step": 0.005}}"#,
    );
}

/// What a bar leaves in a stream: its label of the sweep, a bar glyph, or a terminal
/// control sequence (indicatif moves the cursor and clears lines with them). `None` when
/// there is none of these.
fn bar_trace(text: &str) -> Option<&'static str> {
    [
        ("the sweep's label", LABEL),
        ("a bar glyph", "█"),
        ("a control sequence", "\x1b["),
    ]
    .into_iter()
    .find(|(_, needle)| text.contains(needle))
    .map(|(what, _)| what)
}

/// `wetload ARGS...` run in the folder under a pseudo-terminal (stdin, stdout and stderr
/// all the terminal), with `env` set; returns what the terminal received.
fn on_terminal(f: &Folder, args: &[&str], env: &[(&str, &str)]) -> String {
    let quote = |s: &str| format!("'{}'", s.replace('\'', r"'\''"));
    let mut line = quote(env!("CARGO_BIN_EXE_wetload"));
    for a in args {
        line.push(' ');
        line.push_str(&quote(a));
    }
    let mut cmd = Command::new("script");
    cmd.args(["-qec", &line, "/dev/null"])
        .current_dir(f.root())
        .stdin(Stdio::null())
        .env_remove("WETLOAD_PROGRESS")
        .env_remove("WETLOAD_PROGRESS_DELAY_MS")
        .env("TERM", "xterm");
    for (k, v) in env {
        cmd.env(k, v);
    }
    let out = cmd.output().unwrap_or_else(|e| {
        panic!("cannot run `script` (util-linux; Debian's bsdutils, which .ci/run installs): {e}")
    });
    let text = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(
        out.status.success(),
        "{line} under script: {:?}\n{text}\n{}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    text
}

#[test]
fn a_piped_stderr_gets_no_bar_only_what_it_got_before() {
    let f = Folder::new();
    write_long_job(&f, "long");
    // A mesh without its sidecar: its error is the one line stderr had before the bar.
    f.write("lost.stl", binary_stl(&box_tris()));
    for json in [false, true] {
        let mut cmd = f.wetload();
        cmd.args(["calc", "long.stl", "lost.stl"])
            .env("WETLOAD_PROGRESS_DELAY_MS", "0")
            .env_remove("WETLOAD_PROGRESS");
        if json {
            cmd.arg("--json");
        }
        let run = Run::from(cmd.output());
        run.expect_code(1);
        assert_eq!(
            bar_trace(&run.stderr),
            None,
            "--json {json}:\n{}",
            run.stderr
        );
        assert!(!run.stderr.contains('\r'), "--json {json}:\n{}", run.stderr);
        let lines: Vec<&str> = run.stderr.lines().collect();
        assert_eq!(lines.len(), 1, "--json {json}:\n{}", run.stderr);
        assert!(
            lines[0].starts_with("error: ") && lines[0].contains("lost.stl"),
            "{}",
            lines[0]
        );
        // And stdout is untouched too: the document, or the summary with its sweep.
        assert_eq!(bar_trace(&run.stdout), None);
        if json {
            let doc = run.stdout_json();
            let docs = doc.as_array().expect("two meshes asked: an array");
            assert_eq!(
                docs[0]["cases"][0]["sweep"].as_array().map(Vec::len),
                Some(LEVELS)
            );
        }
    }
}

#[test]
fn on_a_terminal_the_bar_shows_the_sweep_and_is_gone_before_the_summary() {
    let f = Folder::new();
    write_long_job(&f, "long");
    let screen = on_terminal(
        &f,
        &["calc", "long.stl"],
        &[("WETLOAD_PROGRESS_DELAY_MS", "0")],
    );
    assert!(
        screen.contains("long.stl · sweep ") && screen.contains(LABEL),
        "no bar with the mesh and the sweep's levels:\n{screen}"
    );
    // The summary (stdout) comes after the bar's last drawing and is whole: its first line
    // is not preceded on its line by the bar.
    let last_bar = screen.rfind(LABEL).expect("drawn");
    let summary = screen
        .find("long.stl · binary STL")
        .expect("the summary's first line");
    assert!(
        summary > last_bar,
        "the summary came before the bar ended:\n{screen}"
    );
    // On the terminal, the line the summary starts on begins after the last return.
    let line_start = screen[..summary].rfind(['\r', '\n']).map_or(0, |i| i + 1);
    assert_eq!(
        bar_trace(&screen[line_start..summary].replace("\x1b[2K", "")),
        None,
        "the summary's line starts with the bar's remains: {:?}",
        &screen[line_start..summary]
    );
    // The result is the one computed without a terminal.
    let with_bar = f.result("long");
    fs::remove_dir_all(f.path("results")).expect("removable");
    f.calc(&["long.stl"]).expect_code(0);
    assert_eq!(with_bar, f.result("long"));
}

#[test]
fn on_a_terminal_json_output_or_the_switch_or_a_short_job_draw_no_bar() {
    let f = Folder::new();
    write_long_job(&f, "long");
    let now = ("WETLOAD_PROGRESS_DELAY_MS", "0");
    let json = on_terminal(&f, &["calc", "long.stl", "--json"], &[now]);
    assert_eq!(bar_trace(&json), None, "--json:\n{json}");
    let doc: serde_json::Value = serde_json::from_str(json.trim()).expect("only the document");
    assert_eq!(
        doc["cases"][0]["sweep"].as_array().map(Vec::len),
        Some(LEVELS)
    );

    let off = on_terminal(
        &f,
        &["calc", "long.stl"],
        &[now, ("WETLOAD_PROGRESS", "off")],
    );
    assert_eq!(bar_trace(&off), None, "switched off:\n{off}");

    // Work that ends before the delay draws nothing (an hour: this work never lasts it).
    let short = on_terminal(
        &f,
        &["calc", "long.stl"],
        &[("WETLOAD_PROGRESS_DELAY_MS", "3600000")],
    );
    assert_eq!(bar_trace(&short), None, "short:\n{short}");
    // The control run: the same terminal shows the bar when it is due.
    let due = on_terminal(&f, &["calc", "long.stl"], &[now]);
    assert_eq!(bar_trace(&due), Some("the sweep's label"), "{due}");
}

#[test]
fn in_watch_the_bar_of_a_recomputation_is_cleared_before_the_watcher_says_its_block() {
    let f = Folder::new();
    write_long_job(&f, "long");
    let screen = on_terminal(
        &f,
        &["watch", "--once", "."],
        &[("WETLOAD_PROGRESS_DELAY_MS", "0")],
    );
    assert!(
        screen.contains(LABEL),
        "no bar with the sweep's levels:\n{screen}"
    );
    let last_bar = screen.rfind(LABEL).expect("drawn");
    let block = screen
        .find(" long.stl · iteration 1")
        .unwrap_or_else(|| panic!("no watcher's block:\n{screen}"));
    assert!(
        block > last_bar,
        "the block came before the bar ended:\n{screen}"
    );
    // The block's line (its clock first) holds nothing of the bar.
    let line_start = screen[..block].rfind(['\r', '\n']).map_or(0, |i| i + 1);
    let clock = screen[line_start..block].replace("\x1b[2K", "");
    assert!(
        clock.len() == 8 && clock.chars().all(|c| c.is_ascii_digit() || c == ':'),
        "the block's line begins with {clock:?}"
    );
}
