//! The page in a real browser: `wetload watch --once` on a copy of the demo folder, then
//! headless Chromium reads the overview's forces from the page's DOM and compares them
//! with the result documents, and a screenshot shows that every 3D view in it drew a
//! pressure field in the colours of the scale.
//!
//! Chromium is required: a missing browser fails the test (install Debian's `chromium`;
//! `.ci/run` does). Runs as root and with no display (`--headless --no-sandbox`).

use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

use assert_cmd::cargo::cargo_bin_cmd;

fn chromium() -> PathBuf {
    for name in ["chromium", "chromium-browser", "google-chrome"] {
        if let Ok(out) = Command::new("sh")
            .args(["-c", &format!("command -v {name}")])
            .output()
            && out.status.success()
        {
            let p = String::from_utf8_lossy(&out.stdout).trim().to_owned();
            if !p.is_empty() {
                return PathBuf::from(p);
            }
        }
    }
    panic!(
        "the page test needs headless Chromium and none was found: install it \
         (`apt-get install -y chromium` on Debian; `.ci/run` does this)"
    );
}

fn browser(args: &[&str], page: &Path) -> Vec<u8> {
    let out = Command::new(chromium())
        .args([
            "--headless",
            "--disable-gpu",
            "--no-sandbox",
            "--hide-scrollbars",
            "--window-size=1200,5000",
        ])
        .args(args)
        .arg(format!("file://{}", page.display()))
        .output()
        .expect("chromium starts");
    assert!(
        out.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

fn copy_dir(from: &Path, to: &Path) {
    fs::create_dir_all(to).expect("mkdir");
    for e in fs::read_dir(from).expect("demo folder") {
        let e = e.expect("entry");
        let p = e.path();
        if p.is_file() {
            fs::copy(&p, to.join(e.file_name())).expect("copy");
        }
    }
}

/// The value of attribute `name` in the tag starting at `tag`.
fn attr<'a>(tag: &'a str, name: &str) -> Option<&'a str> {
    let end = tag.find('>')?;
    let tag = &tag[..end];
    let key = format!(" {name}=\"");
    let i = tag.find(&key)? + key.len();
    let j = tag[i..].find('"')?;
    Some(&tag[i..i + j])
}

/// `&amp;` and friends back to text (the page escapes names).
fn unescape(s: &str) -> String {
    s.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&#39;", "'")
        .replace("&amp;", "&")
}

#[test]
fn the_page_in_a_browser_shows_the_forces_of_the_results_and_draws_every_view() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let folder = tmp.path().join("meshes-copy");
    copy_dir(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("meshes"),
        &folder,
    );
    let out = cargo_bin_cmd!("wetload")
        .args(["watch", "--once"])
        .arg(&folder)
        .output()
        .expect("wetload runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let results = folder.join("results");
    let page = results.join("report.html");

    // The DOM after the script ran: the overview's |F| cells and the canvases.
    let dom = String::from_utf8(browser(&["--dump-dom"], &page)).expect("utf-8");
    let mut checked = 0;
    for (i, _) in dom.match_indices("<tr data-mesh=\"") {
        let row = &dom[i..];
        let mesh = unescape(attr(row, "data-mesh").expect("mesh"));
        let case = unescape(attr(row, "data-case").expect("case"));
        let cell = &row[row.find("<td data-force=").expect("force cell")..];
        let unit = attr(cell, "data-force").expect("unit");
        let text = &cell[cell.find('>').expect(">") + 1..cell.find("</td>").expect("</td>")];
        let shown: f64 = text.trim().parse().expect("a number");
        // The expected value: |F| of the case in the result document, in the page's unit.
        let stem = mesh.rsplit_once('.').map_or(mesh.as_str(), |(s, _)| s);
        let doc: serde_json::Value =
            serde_json::from_slice(&fs::read(results.join(format!("{stem}.json"))).expect("json"))
                .expect("result json");
        let c = doc["cases"]
            .as_array()
            .expect("cases")
            .iter()
            .find(|c| c["name"] == case.as_str())
            .expect("case in result");
        let f: Vec<f64> = c["force"]
            .as_array()
            .expect("force")
            .iter()
            .map(|x| x.as_f64().expect("number"))
            .collect();
        let norm = (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt();
        assert_eq!(unit, "kN", "the demo page is in SI");
        // Shown with two decimals: within half the last digit.
        assert!(
            (shown - norm / 1000.0).abs() <= 0.005 + 1e-9,
            "{mesh} {case}: page {shown} kN, result {norm} N"
        );
        checked += 1;
    }
    let cases_in_results: usize = fs::read_dir(&results)
        .expect("results")
        .filter_map(|e| e.ok())
        .filter(|e| {
            let n = e.file_name().to_string_lossy().into_owned();
            n.ends_with(".json") && !n.ends_with(".view.json")
        })
        .map(|e| {
            let d: serde_json::Value =
                serde_json::from_slice(&fs::read(e.path()).expect("read")).expect("json");
            d["cases"].as_array().map_or(0, Vec::len)
        })
        .sum();
    assert!(checked > 0 && checked == cases_in_results, "{checked} rows");

    // Every canvas drew all its triangles, and says where it is.
    let mut rects = Vec::new();
    for (i, _) in dom.match_indices("<canvas class=\"v3d\"") {
        let tag = &dom[i..];
        assert_eq!(attr(tag, "data-error"), None, "script error");
        let n = attr(tag, "data-triangles").expect("triangles");
        assert_eq!(attr(tag, "data-drawn"), Some(n), "drew every triangle");
        let r: Vec<u32> = attr(tag, "data-rect")
            .expect("rect")
            .split(',')
            .map(|x| x.parse().expect("number"))
            .collect();
        rects.push(r);
    }
    assert_eq!(rects.len(), checked, "one view per case");

    // The screenshot: in each view inside the window, pixels of the scale's colours.
    let shot = tmp.path().join("page.png");
    browser(&[&format!("--screenshot={}", shot.display())], &page);
    let decoder = png::Decoder::new(fs::File::open(&shot).expect("png"));
    let mut reader = decoder.read_info().expect("png header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("png frame");
    let ch = info.color_type.samples();
    let px = |x: u32, y: u32| {
        let o = (y as usize * info.width as usize + x as usize) * ch;
        [buf[o], buf[o + 1], buf[o + 2]]
    };
    // The scale's ends, from the page itself (the stops are in the script).
    let stops: Vec<[u8; 3]> = {
        let s = &dom[dom.find("var S=[[").expect("stops") + 7..];
        let s = &s[..s.find("]];").expect("end") + 1];
        s.split("],[")
            .map(|t| {
                let v: Vec<u8> = t
                    .trim_matches(['[', ']'])
                    .split(',')
                    .map(|x| x.parse().expect("byte"))
                    .collect();
                [v[0], v[1], v[2]]
            })
            .collect()
    };
    assert_eq!(stops.len(), 17);
    // A pixel is on the scale when it is within 3 of a colour between two neighbouring
    // stops (linear interpolation, sampled finely).
    let mut scale = Vec::new();
    for w in stops.windows(2) {
        for k in 0..=32 {
            let u = f64::from(k) / 32.0;
            scale.push(
                [0, 1, 2]
                    .map(|i| f64::from(w[0][i]) + (f64::from(w[1][i]) - f64::from(w[0][i])) * u),
            );
        }
    }
    let on_scale = |c: [u8; 3]| {
        scale
            .iter()
            .position(|s| (0..3).all(|i| (f64::from(c[i]) - s[i]).abs() <= 3.0))
    };
    let mut views_seen = 0;
    for r in &rects {
        let (x0, y0, w, h) = (r[0], r[1], r[2], r[3]);
        if y0 + h > info.height || x0 + w > info.width {
            continue;
        }
        let mut hits = 0;
        let mut bands = std::collections::BTreeSet::new();
        for y in (y0..y0 + h).step_by(2) {
            for x in (x0..x0 + w).step_by(2) {
                if let Some(k) = on_scale(px(x, y)) {
                    hits += 1;
                    bands.insert(k / 33);
                }
            }
        }
        // A field, not a flat fill: a good share of the view in at least three bands of
        // the scale.
        assert!(hits > 500, "view at {r:?}: {hits} pixels on the scale");
        assert!(bands.len() >= 3, "view at {r:?}: bands {bands:?}");
        views_seen += 1;
    }
    assert!(views_seen >= 1, "no view inside the screenshot: {rects:?}");
}
