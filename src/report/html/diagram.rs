//! A case's pressure diagram on the page: the `.section.svg` file as written by
//! [`crate::report::svg::section_svg`], set inline beside the 3D view.
//!
//! The file is read back from `results/`, so it is checked before it goes into the page:
//! only the elements and attributes that writer uses are let through (no script, no
//! link, no style, no event handler), and text holds no markup. A file that fails the check
//! is left out with a note, as a view file that cannot be read is.

/// Elements the section writer uses.
const ELEMENTS: &[&str] = &["svg", "rect", "text", "line", "polyline", "polygon"];

/// Attributes the section writer uses.
const ATTRIBUTES: &[&str] = &[
    "xmlns",
    "width",
    "height",
    "viewBox",
    "font-family",
    "font-size",
    "font-weight",
    "role",
    "aria-label",
    "x",
    "y",
    "x1",
    "y1",
    "x2",
    "y2",
    "points",
    "fill",
    "stroke",
    "stroke-width",
    "stroke-dasharray",
    "stroke-linejoin",
    "text-anchor",
    "paint-order",
];

/// The diagram of one case (`svg`: the file's text, `None` when it could not be read),
/// with the file's name in the caption.
pub(super) fn diagram_block(s: &mut String, svg: Option<&str>, file: &str) {
    let Some(svg) = svg else {
        return;
    };
    match checked(svg) {
        Some(svg) => {
            s.push_str("<figure class=\"diagram\">");
            s.push_str(svg);
            s.push_str(&format!(
                "<figcaption>Pressure diagram in a vertical section (also <code>{}</code>).</figcaption></figure>\n",
                super::format::esc(file)
            ));
        }
        None => s.push_str(
            "<p class=\"muted\">Pressure diagram: the file cannot be read; compute the mesh again.</p>\n",
        ),
    }
}

/// `svg` trimmed, when it is one `<svg>` element made of the section writer's elements
/// and attributes only.
fn checked(svg: &str) -> Option<&str> {
    let svg = svg.trim();
    if !svg.starts_with("<svg ") || !svg.ends_with("</svg>") {
        return None;
    }
    let mut rest = svg;
    while let Some(open) = rest.find('<') {
        // Text between tags: no markup, and only the entities the writer's escape makes.
        if !text_ok(&rest[..open]) {
            return None;
        }
        let close = rest[open..].find('>')? + open;
        tag_ok(&rest[open + 1..close])?;
        rest = &rest[close + 1..];
    }
    text_ok(rest).then_some(svg)
}

fn text_ok(text: &str) -> bool {
    let mut parts = text.split('&');
    parts.next();
    !text.contains('>')
        && parts.all(|p| {
            ["amp;", "lt;", "gt;", "quot;"]
                .iter()
                .any(|e| p.starts_with(e))
        })
}

/// One tag's inside (between `<` and `>`): a known element with known attributes whose
/// values are quoted text.
fn tag_ok(tag: &str) -> Option<()> {
    let tag = tag.strip_suffix('/').unwrap_or(tag);
    let (closing, tag) = match tag.strip_prefix('/') {
        Some(t) => (true, t),
        None => (false, tag),
    };
    let name_end = tag.find(' ').unwrap_or(tag.len());
    if !ELEMENTS.contains(&&tag[..name_end]) {
        return None;
    }
    let mut rest = tag[name_end..].trim_start();
    if closing {
        return rest.is_empty().then_some(());
    }
    while !rest.is_empty() {
        let eq = rest.find("=\"")?;
        if !ATTRIBUTES.contains(&&rest[..eq]) {
            return None;
        }
        let value_end = rest[eq + 2..].find('"')? + eq + 2;
        if !text_ok(&rest[eq + 2..value_end]) {
            return None;
        }
        rest = rest[value_end + 1..].trim_start();
    }
    Some(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_section_writers_files_pass() {
        use crate::compute::{Level, PlaneChoice, Run, RunPoint, Section, SectionPlane};
        use crate::report::units::{UnitSystem, Units};
        let point = |z: f64, p: f64, kink: bool| RunPoint {
            at: [0.0, z],
            pressure_pa: p,
            kink,
        };
        let sec = Section {
            plane: SectionPlane {
                choice: PlaneChoice::Named("<a> & \"b\"".into()),
                point: [0.0; 3],
                normal: [0.0, 1.0, 0.0],
                along: [1.0, 0.0, 0.0],
                up: [0.0, 0.0, 1.0],
            },
            outline: vec![vec![[0.0, 1.0], [0.0, -2.0], [1.0, -2.0]]],
            runs: vec![Run {
                points: vec![
                    point(0.0, 0.0, false),
                    point(-2.0, 2e4, true),
                    point(-2.0, 2e4, false),
                ],
                normals: vec![[-1.0, 0.0], [0.0, 1.0]],
                closed: false,
            }],
            levels: vec![Level {
                liquid: "</text><script>".into(),
                z: 0.0,
                interfaces: vec![-1.0],
            }],
        };
        let svg = crate::report::svg::section_svg("m & <n>", &[sec], &Units::of(UnitSystem::Us));
        let text = String::from_utf8(svg).expect("utf-8");
        assert!(checked(&text).is_some(), "{text}");
        let mut page = String::new();
        diagram_block(&mut page, Some(&text), "m.section.svg");
        assert!(page.contains("<figure class=\"diagram\"><svg "));
        diagram_block(
            &mut page,
            Some("<svg x=\"1\"><script>1</script></svg>"),
            "x",
        );
        assert!(page.contains("the file cannot be read"));
    }

    #[test]
    fn only_the_writers_own_markup_is_let_through() {
        let good = "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"960\"><text x=\"1\" y=\"2\" fill=\"#000\">a &lt;b&gt; &amp; &quot;c&quot;</text><line x1=\"0\" y1=\"0\" x2=\"1\" y2=\"1\"/></svg>\n";
        assert_eq!(checked(good), Some(good.trim()));
        for bad in [
            "<svg width=\"1\"><script>alert(1)</script></svg>",
            "<svg width=\"1\"><text onclick=\"x()\">a</text></svg>",
            "<svg width=\"1\"><a href=\"http://example.com\">a</a></svg>",
            "<svg width=\"1\"><text x=\"1\">&#60;script</text></svg>",
            "<svg width=\"1\"><text x=\"1\" style=\"a\">a</text></svg>",
            "<svg width=\"1\"><text x=\"1\">a</text>",
            "<html><svg width=\"1\"></svg>",
            "<svg width=\"1\"><text x=\"1 y=2\">a</text></svg><svg width=\"1\"></svg>x",
        ] {
            assert_eq!(checked(bad), None, "{bad}");
        }
    }
}
