//! Limits and the file system: size and facet caps (set low through the environment so
//! the files stay small), things that are not regular files, results that cannot or must
//! not be written.

use std::process::Command;

use crate::*;

#[test]
fn a_mesh_larger_than_the_file_size_cap_is_refused_unread() {
    let f = Folder::new();
    let bytes = binary_stl(&box_tris()); // 684 bytes
    f.write("tank.stl", &bytes);
    f.write("tank.json", SIDECAR);
    let err = refused_env(
        &f,
        "tank.stl",
        "tank.stl",
        &["684 bytes", "600 bytes", "WETLOAD_MAX_FILE_SIZE"],
        &[("WETLOAD_MAX_FILE_SIZE", "600")],
    );
    assert!(!err.contains("facet"), "{err}");
    // At the cap it is read.
    let run = f.calc_env(&["tank.stl"], &[("WETLOAD_MAX_FILE_SIZE", "684")]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
}

#[test]
fn a_mesh_with_more_facets_than_the_cap_is_refused() {
    for (ext, bytes) in [
        ("stl", binary_stl(&box_tris())),
        ("stl", ascii_stl("hull", &box_tris()).into_bytes()),
        ("obj", obj("hull", &box_tris()).into_bytes()),
    ] {
        let f = Folder::new();
        let mesh = format!("tank.{ext}");
        f.write(&mesh, &bytes);
        f.write("tank.json", SIDECAR);
        refused_env(
            &f,
            &mesh,
            &mesh,
            &["more than", "11", "WETLOAD_MAX_FACETS"],
            &[("WETLOAD_MAX_FACETS", "11")],
        );
        let run = f.calc_env(&[&mesh], &[("WETLOAD_MAX_FACETS", "12")]);
        assert_eq!(run.code, Some(0), "{ext}: {}", run.stderr);
    }
}

#[test]
fn an_unreadable_limit_is_a_usage_error() {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", SIDECAR);
    for (var, value) in [
        ("WETLOAD_MAX_FILE_SIZE", "lots"),
        ("WETLOAD_MAX_FILE_SIZE", "0"),
        ("WETLOAD_MAX_FILE_SIZE", "1.5G"),
        ("WETLOAD_MAX_FACETS", "-1"),
        ("WETLOAD_MAX_FACETS", "1e6"),
    ] {
        let run = f.calc_env(&["tank.stl"], &[(var, value)]);
        assert_eq!(run.code, Some(2), "{var}={value}: {}", run.stderr);
        assert!(run.stderr.contains(var), "{}", run.stderr);
        assert!(f.results_listing().is_empty());
    }
}

fn mkfifo(path: &Path) -> bool {
    Command::new("mkfifo")
        .arg(path)
        .status()
        .is_ok_and(|s| s.success())
}

#[test]
fn a_fifo_is_refused_not_opened() {
    // Opening a FIFO for reading blocks until a writer comes; a mesh or sidecar that is
    // one must be refused from its metadata (the run's time limit catches a hang).
    let f = Folder::new();
    f.write("tank.json", SIDECAR);
    if !mkfifo(&f.path("tank.stl")) {
        eprintln!("skipped: mkfifo is not available");
        return;
    }
    refused(&f, "tank.stl", "tank.stl", &["regular file"]);
    let g = Folder::new();
    g.write("tank.stl", binary_stl(&box_tris()));
    assert!(mkfifo(&g.path("tank.json")));
    refused(&g, "tank.stl", "tank.json", &["regular file"]);
}

#[test]
fn a_folder_named_like_a_mesh_or_sidecar() {
    let f = Folder::new();
    std::fs::create_dir(f.path("tank.stl")).expect("mkdir");
    f.write("tank.json", SIDECAR);
    refused(&f, "tank.stl", "tank.stl", &["folder"]);
    let g = Folder::new();
    g.write("tank.stl", binary_stl(&box_tris()));
    std::fs::create_dir(g.path("tank.json")).expect("mkdir");
    refused(&g, "tank.stl", "tank.json", &["folder"]);
}

#[test]
fn results_are_not_written_through_a_link() {
    let target = tempfile::tempdir().expect("temp dir");
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", SIDECAR);
    std::os::unix::fs::symlink(target.path(), f.path("results")).expect("symlink");
    let run = f.calc_env(&["tank.stl"], &[]);
    assert_eq!(run.code, Some(1), "{}", run.stderr);
    assert!(
        run.stderr.contains("symbolic link") && run.stderr.contains("tank.json"),
        "{}",
        run.stderr
    );
    assert!(!run.stderr.contains("panicked"));
    assert_eq!(
        std::fs::read_dir(target.path()).expect("target").count(),
        0,
        "something was written through the link"
    );
}

#[test]
fn a_results_path_that_is_a_file() {
    let f = Folder::new();
    f.write("tank.stl", binary_stl(&box_tris()));
    f.write("tank.json", SIDECAR);
    f.write("results", b"not a folder");
    let run = f.calc_env(&["tank.stl"], &[]);
    assert_eq!(run.code, Some(1), "{}", run.stderr);
    assert!(
        run.stderr.contains("cannot write") && run.stderr.contains("results"),
        "{}",
        run.stderr
    );
    assert_eq!(
        std::fs::read(f.path("results")).expect("still the file"),
        b"not a folder"
    );
}

#[test]
fn names_from_files_never_leave_results() {
    // Case names and part names that look like paths: the files written are all inside
    // results/, and nothing appears beside it or above it.
    let f = Folder::new();
    let tris = box_tris();
    f.write(
        "tank.obj",
        encode::obj(&[("../../escape", &tris[..6]), ("/etc/passwd", &tris[6..])]),
    );
    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -0.5, "density": 1000},
            "cases": [{"name": "../../up"}, {"name": ".hidden"}, {"name": "C:evil*?<>|"}]}"#,
    );
    let run = f.calc_env(&["tank.obj"], &[]);
    // A case name with a slash is refused (it would become part of a file name).
    assert_eq!(run.code, Some(1), "{}", run.stderr);
    assert!(run.stderr.contains("tank.json") && run.stderr.contains("../../up"));
    f.write(
        "tank.json",
        r#"{"units": "m", "liquid": {"level": -0.5, "density": 1000},
            "cases": [{"name": ".."}, {"name": ".hidden"}, {"name": "C:evil*?<>|"}]}"#,
    );
    let run = f.calc_env(&["tank.obj"], &[]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let mut top: Vec<String> = std::fs::read_dir(f.root())
        .expect("folder")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    top.sort();
    assert_eq!(top, ["results", "tank.json", "tank.obj"]);
    for name in f.results_listing() {
        // The snapshot store is wetload's own folder, named by no input; inside it only
        // content hashes name files.
        if name == ".snapshots" {
            for sub in std::fs::read_dir(f.path("results").join(&name)).expect("store") {
                let sub = sub.expect("entry");
                for blob in std::fs::read_dir(sub.path()).expect("sub folder") {
                    let blob = blob
                        .expect("entry")
                        .file_name()
                        .to_string_lossy()
                        .into_owned();
                    assert!(
                        blob.len() == 64 && blob.bytes().all(|b| b.is_ascii_hexdigit()),
                        "{blob}"
                    );
                }
            }
            continue;
        }
        assert!(!name.starts_with('.'), "{name}");
        assert!(
            !name.contains(['/', '\\', ':', '*', '?', '<', '>', '|']),
            "{name}"
        );
        let p = f.path("results").join(&name);
        assert!(p.is_file(), "{name} is not a plain file in results/");
    }
    let parent_entries = std::fs::read_dir(f.root().parent().expect("parent"))
        .expect("parent")
        .filter_map(Result::ok)
        .filter(|e| e.file_name().to_string_lossy().contains("escape"))
        .count();
    assert_eq!(parent_entries, 0);
}
