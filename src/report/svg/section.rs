//! The pressure diagram of one case as SVG (`results/<name>[.<case>].section.svg`, also
//! on the page beside the case's 3D view): each [`Section`] of the case drawn as a panel.
//!
//! Written by hand (no plotting library, no font library: text is
//! `font-family="sans-serif"` and the viewer supplies the font), with no `id`s, scripts,
//! links or styles, so several diagrams can sit inline on one page.
//!
//! # The file
//!
//! An `<svg>` 960 px wide holding a title line, then per section top to bottom:
//!
//! - the section's name;
//! - the drawing, to true scale (one scale for `s` and `z`): the mesh's cut outline in a
//!   neutral grey, the wetted runs over it in dark ink, the pressure as a pale filled band
//!   offset from each wetted segment along its normal on the liquid's side (its width is
//!   the pressure; the largest is a quarter of the drawing's larger extent), hatched
//!   square to the surface, with a small arrow where a value is written: the pressure
//!   acts against that normal, onto the surface;
//! - each free surface as a dashed line with a small downward triangle and its name and
//!   elevation (in the project datum when the sidecar gives one), layer interfaces as
//!   dotted lines; a scale bar of a round length;
//! - pressure values (in the unit of [`Units::pressure`]) at both ends of every wetted run
//!   and at its kinks (corners and layer interfaces; the largest and smallest value of a
//!   closed run without kinks), ends first; a value closer than [`LABEL_GAP`] px to one
//!   already written is left out;
//! - a caption: the plane (how it was chosen, a point, its normal and the direction of
//!   `s`, mesh axes), the units, and the caution that the pressure is hydrostatic only.

use std::fmt::Write;

use super::escape;
use crate::compute::{PlaneChoice, Run, Section};
use crate::report::units::{Units, num};

/// Width of the file, px.
pub const SECTION_WIDTH: f64 = 960.0;
/// A value whose text comes closer than half this to one already written is left out, px.
pub const LABEL_GAP: f64 = 18.0;

const TITLE_H: f64 = 40.0;
const NAME_H: f64 = 26.0;
const CAPTION_LINE: f64 = 16.0;
/// Spacing of the hatching along a wetted run, px.
const HATCH: f64 = 14.0;
/// Characters of a caption line (11.5 px sans-serif across the width, with margins).
const CAPTION_CHARS: usize = 140;
const LEFT: f64 = 90.0;
const RIGHT: f64 = 200.0;
const MAX_DRAWING_H: f64 = 520.0;
const MIN_DRAWING_H: f64 = 160.0;
/// The largest pressure is drawn this fraction of the drawing's larger extent.
const PRESSURE_SHARE: f64 = 0.25;

const INK: &str = "#1f2429";
const OUTLINE: &str = "#9aa1a8";
const MUTED: &str = "#5c636a";
const BAND: &str = "#d9e8f2";
const BAND_EDGE: &str = "#3b6e8f";
const WATER: &str = "#2a7ab0";

/// The SVG of one case's sections; `title` names the mesh and case.
pub fn section_svg(title: &str, sections: &[Section], u: &Units) -> Vec<u8> {
    let mut body = String::new();
    let mut y = TITLE_H;
    for (i, sec) in sections.iter().enumerate() {
        y = panel(&mut body, sec, i, y, u);
    }
    let mut s = String::with_capacity(body.len() + 512);
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{SECTION_WIDTH}\" height=\"{h:.0}\" viewBox=\"0 0 {SECTION_WIDTH} {h:.0}\" font-family=\"sans-serif\" font-size=\"12\" role=\"img\" aria-label=\"pressure diagram\">",
        h = y + 10.0
    );
    let _ = writeln!(
        s,
        "<rect x=\"0\" y=\"0\" width=\"{SECTION_WIDTH}\" height=\"{:.0}\" fill=\"#ffffff\"/>",
        y + 10.0
    );
    let _ = writeln!(
        s,
        "<text x=\"16\" y=\"26\" font-size=\"16\" font-weight=\"bold\" fill=\"{INK}\">{}</text>",
        escape(title)
    );
    s.push_str(&body);
    s.push_str("</svg>\n");
    s.into_bytes()
}

/// The name a section goes by in its panel.
fn section_name(sec: &Section, index: usize) -> String {
    match &sec.plane.choice {
        PlaneChoice::Named(n) => format!("Section \u{201c}{n}\u{201d}"),
        PlaneChoice::LongerExtent => "Section along the longer horizontal extent".to_owned(),
        _ if index == 0 => "Section through the resultant".to_owned(),
        _ => format!("Section {}", index + 1),
    }
}

/// Draws one section from `top`; returns the `y` below it.
fn panel(s: &mut String, sec: &Section, index: usize, top: f64, u: &Units) -> f64 {
    let _ = writeln!(
        s,
        "<text x=\"16\" y=\"{:.1}\" font-size=\"14\" font-weight=\"bold\" fill=\"{INK}\">{}</text>",
        top + 18.0,
        escape(&section_name(sec, index))
    );
    let top = top + NAME_H;
    let pmax = sec.max_pressure();
    let drawn = if sec.outline.is_empty() {
        let _ = writeln!(
            s,
            "<text x=\"{LEFT}\" y=\"{:.1}\" fill=\"{MUTED}\">The plane does not cut the mesh.</text>",
            top + 20.0
        );
        top + 36.0
    } else {
        drawing(s, sec, top, pmax, u)
    };
    caption(s, sec, drawn + 8.0, pmax, u)
}

/// Maps `(s, z)` in metres to px.
struct View {
    s0: f64,
    z1: f64,
    px_per_m: f64,
    x0: f64,
    y0: f64,
}

impl View {
    fn px(&self, p: [f64; 2]) -> (f64, f64) {
        (
            self.x0 + (p[0] - self.s0) * self.px_per_m,
            self.y0 + (self.z1 - p[1]) * self.px_per_m,
        )
    }
}

/// One segment's part of the pressure band, `(s, z)` in m: its two ends on the surface,
/// then the outer edge from the second end back to the first.
type Quad = ([f64; 2], [f64; 2], [f64; 2], [f64; 2]);

/// The band of each segment of `run`, `k` m per Pa.
fn band(run: &Run, k: f64) -> Vec<Quad> {
    let n = run.points.len();
    run.normals
        .iter()
        .enumerate()
        .map(|(i, nrm)| {
            let a = &run.points[i];
            let b = &run.points[(i + 1) % n];
            let off = |p: [f64; 2], pr: f64| [p[0] + nrm[0] * pr * k, p[1] + nrm[1] * pr * k];
            (
                a.at,
                b.at,
                off(b.at, b.pressure_pa),
                off(a.at, a.pressure_pa),
            )
        })
        .collect()
}

/// The drawing of a section from `top`; returns the `y` below it.
fn drawing(s: &mut String, sec: &Section, top: f64, pmax: f64, u: &Units) -> f64 {
    let pts = sec.outline.iter().flatten();
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in pts {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let extent = (hi[0] - lo[0]).max(hi[1] - lo[1]).max(1e-9);
    let k = if pmax > 0.0 {
        PRESSURE_SHARE * extent / pmax
    } else {
        0.0
    };
    let bands: Vec<Vec<_>> = sec.runs.iter().map(|r| band(r, k)).collect();
    for q in bands.iter().flatten() {
        for p in [q.2, q.3] {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
    }
    // Free surfaces near the mesh are drawn (and widen the range); far ones are named in
    // the caption only.
    let (zlo, zhi) = (lo[1] - extent, hi[1] + extent);
    let near = |z: f64| z >= zlo && z <= zhi;
    for l in sec.levels.iter().filter(|l| near(l.z)) {
        lo[1] = lo[1].min(l.z);
        hi[1] = hi[1].max(l.z);
    }
    let (w, h) = ((hi[0] - lo[0]).max(1e-9), (hi[1] - lo[1]).max(1e-9));
    let avail = SECTION_WIDTH - LEFT - RIGHT;
    let px_per_m = (avail / w).min(MAX_DRAWING_H / h);
    let height = (h * px_per_m).max(MIN_DRAWING_H);
    let v = View {
        s0: lo[0],
        z1: hi[1],
        px_per_m,
        x0: LEFT + (avail - w * px_per_m) / 2.0,
        y0: top + 20.0 + (height - h * px_per_m) / 2.0,
    };
    let (left, right) = (LEFT - 40.0, SECTION_WIDTH - RIGHT + 40.0);

    // Levels and interfaces first, under everything else.
    for l in sec.levels.iter().filter(|l| near(l.z)) {
        let (_, y) = v.px([0.0, l.z]);
        let _ = writeln!(
            s,
            "<line x1=\"{left:.1}\" y1=\"{y:.1}\" x2=\"{right:.1}\" y2=\"{y:.1}\" stroke=\"{WATER}\" stroke-width=\"1\" stroke-dasharray=\"8 4\"/>"
        );
        let tx = right - 18.0;
        let _ = writeln!(
            s,
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {tx:.1},{y:.1}\" fill=\"none\" stroke=\"{WATER}\" stroke-width=\"1.2\"/>",
            tx - 6.0,
            y - 10.0,
            tx + 6.0,
            y - 10.0
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" fill=\"{WATER}\">{} {} {}</text>",
            right + 4.0,
            y + 4.0,
            escape(&l.liquid),
            u.elevation(l.z),
            u.length.name
        );
        for z in l.interfaces.iter().filter(|z| near(**z)) {
            let (_, y) = v.px([0.0, *z]);
            let _ = writeln!(
                s,
                "<line x1=\"{left:.1}\" y1=\"{y:.1}\" x2=\"{right:.1}\" y2=\"{y:.1}\" stroke=\"{WATER}\" stroke-width=\"0.8\" stroke-dasharray=\"2 3\"/>"
            );
            let _ = writeln!(
                s,
                "<text x=\"{:.1}\" y=\"{:.1}\" fill=\"{WATER}\" font-size=\"11\">interface {} {}</text>",
                right + 4.0,
                y + 4.0,
                u.elevation(*z),
                u.length.name
            );
        }
    }

    // The pressure band: filled quads, hatching, the outer edge.
    for q in bands.iter().flatten() {
        let c: Vec<(f64, f64)> = [q.0, q.1, q.2, q.3].iter().map(|p| v.px(*p)).collect();
        let _ = writeln!(
            s,
            "<polygon points=\"{}\" fill=\"{BAND}\" stroke=\"{BAND}\" stroke-width=\"0.6\"/>",
            points(&c)
        );
    }
    // Where two segments meet at an angle their bands part: the wedge between them is
    // filled and its edge drawn, so the band stays whole round a bend.
    let mut joints = Vec::new();
    for (run, quads) in sec.runs.iter().zip(&bands) {
        let n = quads.len();
        let pairs = if run.closed { n } else { n.saturating_sub(1) };
        for i in 0..pairs {
            let (a, b) = (&quads[i], &quads[(i + 1) % n]);
            joints.push([v.px(a.1), v.px(a.2), v.px(b.3)]);
        }
    }
    for j in &joints {
        let _ = writeln!(
            s,
            "<polygon points=\"{}\" fill=\"{BAND}\" stroke=\"{BAND}\" stroke-width=\"0.6\"/>",
            points(j)
        );
    }
    // Hatching square to the surface every HATCH px along each run.
    for quads in &bands {
        let mut walked = 0.0;
        let mut next = HATCH / 2.0;
        for q in quads {
            let (a, b) = (v.px(q.0), v.px(q.1));
            let len = (b.0 - a.0).hypot(b.1 - a.1);
            while next <= walked + len && len > 0.0 {
                let t = (next - walked) / len;
                let on = lerp(a, b, t);
                let off = lerp(v.px(q.3), v.px(q.2), t);
                let _ = writeln!(
                    s,
                    "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{BAND_EDGE}\" stroke-width=\"0.5\"/>",
                    on.0, on.1, off.0, off.1
                );
                next += HATCH;
            }
            walked += len;
        }
    }
    for q in bands.iter().flatten() {
        let (c, d) = (v.px(q.3), v.px(q.2));
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{BAND_EDGE}\" stroke-width=\"1.2\"/>",
            c.0, c.1, d.0, d.1
        );
    }
    for j in &joints {
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{BAND_EDGE}\" stroke-width=\"1.2\"/>",
            j[1].0, j[1].1, j[2].0, j[2].1
        );
    }

    // The outline, then the wetted runs over it.
    for line in &sec.outline {
        let c: Vec<(f64, f64)> = line.iter().map(|p| v.px(*p)).collect();
        let _ = writeln!(
            s,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"{OUTLINE}\" stroke-width=\"1.5\" stroke-linejoin=\"round\"/>",
            points(&c)
        );
    }
    for run in &sec.runs {
        let mut c: Vec<(f64, f64)> = run.points.iter().map(|p| v.px(p.at)).collect();
        if run.closed
            && let Some(first) = c.first().copied()
        {
            c.push(first);
        }
        let _ = writeln!(
            s,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"{INK}\" stroke-width=\"2.2\" stroke-linejoin=\"round\"/>",
            points(&c)
        );
    }

    labels(s, sec, &v, k, u);
    scale_bar(s, &v, top + 20.0 + height, u);
    top + 20.0 + height + 30.0
}

/// The points of a run that get a value, in the order they are tried: ends, then kinks;
/// for a closed run without kinks, its largest and smallest value.
fn labelled(run: &Run) -> Vec<usize> {
    let n = run.points.len();
    let mut out = Vec::new();
    if n == 0 {
        return out;
    }
    if !run.closed {
        out.push(0);
        out.push(n - 1);
    }
    out.extend((0..n).filter(|&i| run.points[i].kink));
    if run.closed && out.is_empty() {
        let by = |a: &usize, b: &usize| {
            run.points[*a]
                .pressure_pa
                .total_cmp(&run.points[*b].pressure_pa)
        };
        out.extend((0..n).max_by(by));
        out.extend((0..n).min_by(by));
    }
    out.dedup();
    out
}

/// Pressure values at the labelled points, with an arrow onto the surface.
fn labels(s: &mut String, sec: &Section, v: &View, k: f64, u: &Units) {
    let mut placed: Vec<[f64; 4]> = Vec::new();
    for run in &sec.runs {
        let n = run.points.len();
        for i in labelled(run) {
            let p = &run.points[i];
            // The normal at a point: the mean of its segments' (one at an end).
            let before = if run.closed || i > 0 {
                run.normals.get((i + n - 1) % n.max(1))
            } else {
                None
            };
            let after = run.normals.get(i);
            let nrm = match (before, after) {
                // A corner: the value is written at the end of the segment before it.
                (Some(a), Some(b)) if a[0] * b[0] + a[1] * b[1] < 0.7 => *a,
                (Some(a), Some(b)) => {
                    let m = [a[0] + b[0], a[1] + b[1]];
                    let l = m[0].hypot(m[1]);
                    if l > 1e-9 { [m[0] / l, m[1] / l] } else { *b }
                }
                (Some(a), None) => *a,
                (None, Some(b)) => *b,
                (None, None) => [0.0, 1.0],
            };
            let on = v.px(p.at);
            let tip = v.px([
                p.at[0] + nrm[0] * p.pressure_pa * k,
                p.at[1] + nrm[1] * p.pressure_pa * k,
            ]);
            // Screen direction of the normal (y down).
            let (dx, dy) = (nrm[0], -nrm[1]);
            let at = (tip.0 + dx * 8.0, tip.1 + dy * 8.0 + 4.0);
            let text = u.pressure.with_name(p.pressure_pa);
            // The text's box, from a generous width per character of a 12 px sans-serif.
            let w = 7.0 * text.chars().count() as f64;
            let (anchor, x0) = if dx > 0.3 {
                ("start", at.0)
            } else if dx < -0.3 {
                ("end", at.0 - w)
            } else {
                ("middle", at.0 - w / 2.0)
            };
            let bx = [x0, at.1 - 12.0, x0 + w, at.1 + 2.0];
            let gap = LABEL_GAP / 2.0;
            if placed.iter().any(|q: &[f64; 4]| {
                bx[0] < q[2] + gap && q[0] < bx[2] + gap && bx[1] < q[3] + gap && q[1] < bx[3] + gap
            }) {
                continue;
            }
            placed.push(bx);
            if (tip.0 - on.0).hypot(tip.1 - on.1) > 6.0 {
                arrow(s, tip, on);
            }
            let _ = writeln!(
                s,
                "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"{anchor}\" fill=\"{INK}\" stroke=\"#ffffff\" stroke-width=\"3\" paint-order=\"stroke\">{}</text>",
                at.0,
                at.1,
                escape(&text)
            );
        }
    }
}

/// A thin arrow from `from` to `to`, its head at `to`.
fn arrow(s: &mut String, from: (f64, f64), to: (f64, f64)) {
    let (dx, dy) = (to.0 - from.0, to.1 - from.1);
    let l = dx.hypot(dy);
    let (ux, uy) = (dx / l, dy / l);
    let back = (to.0 - ux * 7.0, to.1 - uy * 7.0);
    let _ = writeln!(
        s,
        "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{INK}\" stroke-width=\"1\"/>",
        from.0, from.1, back.0, back.1
    );
    let _ = writeln!(
        s,
        "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"{INK}\"/>",
        to.0,
        to.1,
        back.0 - uy * 3.0,
        back.1 + ux * 3.0,
        back.0 + uy * 3.0,
        back.1 - ux * 3.0
    );
}

/// A bar of a round length (1, 2 or 5 × 10ⁿ in the length unit) under the drawing.
fn scale_bar(s: &mut String, v: &View, y: f64, u: &Units) {
    let per_unit = v.px_per_m / u.length.factor;
    let target = 120.0 / per_unit;
    if !(target.is_finite() && target > 0.0) {
        return;
    }
    let mag = 10f64.powf(target.log10().floor());
    let len = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .rfind(|l| *l <= target)
        .unwrap_or(mag);
    let w = len * per_unit;
    let (x, y) = (LEFT, y + 14.0);
    let _ = writeln!(
        s,
        "<polyline points=\"{x:.1},{:.1} {x:.1},{y:.1} {:.1},{y:.1} {:.1},{:.1}\" fill=\"none\" stroke=\"{MUTED}\" stroke-width=\"1\"/>",
        y - 4.0,
        x + w,
        x + w,
        y - 4.0
    );
    let decimals = if len >= 1.0 {
        0
    } else {
        (-len.log10()).ceil() as usize
    };
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" fill=\"{MUTED}\" font-size=\"11\">{} {}</text>",
        x + w + 6.0,
        y + 4.0,
        num(len, decimals),
        u.length.name
    );
}

/// The caption from `top`; returns the `y` below it.
fn caption(s: &mut String, sec: &Section, top: f64, pmax: f64, u: &Units) -> f64 {
    let p = &sec.plane;
    let dir = |d: [f64; 3]| format!("({}, {}, {})", num(d[0], 3), num(d[1], 3), num(d[2], 3));
    let how = match &p.choice {
        PlaneChoice::Resultant => {
            "Vertical plane through the line of action of the resultant, holding its horizontal part".to_owned()
        }
        PlaneChoice::LongerExtent => "The horizontal force is negligible: vertical plane through the line of action (or the mesh's centre) along the mesh's longer horizontal extent".to_owned(),
        PlaneChoice::Named(n) => format!("Vertical plane \u{201c}{n}\u{201d} from the sidecar's sections"),
    };
    let mut lines = vec![
        format!(
            "{how}: through {} {}, normal {}; s runs along {}, z along {} (mesh axes).",
            u.point(p.point),
            u.length.name,
            dir(p.normal),
            dir(p.along),
            dir(p.up)
        ),
        format!(
            "Gauge pressure in {}, drawn square to the wetted surface on the liquid\u{2019}s side, acting onto it (largest {}); lengths in {}, to scale.",
            u.pressure.name,
            u.pressure.with_name(pmax),
            u.length.name
        ),
    ];
    if sec.runs.is_empty() && !sec.outline.is_empty() {
        lines.push("No wetted surface in this plane.".to_owned());
    }
    lines.push(
        "Hydrostatic pressure only: no waves, flow, impact or other dynamic effect.".to_owned(),
    );
    let mut y = top;
    for l in lines.iter().flat_map(|l| wrap(l, CAPTION_CHARS)) {
        y += CAPTION_LINE;
        let _ = writeln!(
            s,
            "<text x=\"16\" y=\"{y:.1}\" fill=\"{MUTED}\" font-size=\"11.5\">{}</text>",
            escape(&l)
        );
    }
    y + 14.0
}

/// `text` cut at spaces into lines of at most `width` characters (a longer word alone).
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split(' ') {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    lines.push(line);
    lines
}

fn lerp(a: (f64, f64), b: (f64, f64), t: f64) -> (f64, f64) {
    (a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t)
}

fn points(c: &[(f64, f64)]) -> String {
    let mut out = String::with_capacity(c.len() * 14);
    for (i, (x, y)) in c.iter().enumerate() {
        if i > 0 {
            out.push(' ');
        }
        let _ = write!(out, "{x:.1},{y:.1}");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::{compute, field, sections};
    use crate::mesh::{Format, Mesh};
    use crate::report::units::UnitSystem;
    use crate::sidecar::parse_sidecar;

    /// The sections of a 2 m wide, 3 m high wall (plane x = 0, front +x wetted) under a
    /// free surface at its top, with two layers.
    fn wall_sections(extra: &str) -> Vec<Section> {
        let tris = shapes::rectangle([0.0, 0.0, -3.0], [0.0, 2.0, 0.0], [0.0, 0.0, 3.0], 2, 3);
        let m = Mesh::from_parts(vec![("wall", tris)], Format::Obj);
        let text = format!(
            r#"{{"units": "m", "wet_side": "front", "liquid": {{"level": 0.0,
                "layers": [{{"density": 880, "down_to": -1.2}}, {{"density": 1000}}]}}{extra}}}"#
        );
        let s = parse_sidecar(std::path::Path::new("w.json"), &text).expect("valid");
        let r = compute("w", &m, &s).expect("computes");
        let f = field(&m, &s, 0).expect("computes");
        sections(&f, &r.inputs, &r.cases[0], &s.sections)
    }

    fn text_of(svg: &[u8]) -> String {
        String::from_utf8(svg.to_vec()).expect("utf-8")
    }

    #[test]
    fn the_diagram_writes_the_values_at_the_ends_and_the_interface() {
        let g = 9.80665;
        let si = Units::of(UnitSystem::Si);
        let svg = text_of(&section_svg(
            "wall.obj · case default",
            &wall_sections(""),
            &si,
        ));
        // Closed forms: ρ1 g h1 at the interface, ρ1 g h1 + ρ2 g h2 at the base, 0 at the
        // free surface.
        let interface = 880.0 * g * 1.2;
        let base = interface + 1000.0 * g * 1.8;
        for p in [0.0, interface, base] {
            let label = format!(">{}</text>", si.pressure.with_name(p));
            assert!(svg.contains(&label), "{label} missing");
        }
        assert!(svg.contains("Hydrostatic pressure only"));
        assert!(svg.contains("Section through the resultant"));
        assert!(svg.contains("liquid 0.000 m"));
        assert!(svg.contains("interface -1.200 m"));
        assert_eq!(svg.matches("<svg").count(), 1);
        assert!(!svg.contains(" id=") && !svg.contains("<script"));

        let us = Units::of(UnitSystem::Us);
        let svg = text_of(&section_svg("wall.obj", &wall_sections(""), &us));
        // 1 psi = 6894.757 Pa (exact definitions of the pound-force and the inch).
        let label = format!(
            "{} psi",
            crate::report::units::num(base / 6_894.757_293_168, 3)
        );
        assert!(svg.contains(&label), "{label} missing");
        assert!(!svg.contains("kPa"));
        assert!(svg.contains("lengths in ft"));
    }

    #[test]
    fn named_sections_get_panels_and_user_names_are_escaped() {
        let sections = wall_sections(
            r#", "sections": {"<edge> & co": {"point": [0, 0.5, 0], "normal": [0, 1, 0]},
                              "off": {"point": [0, 9, 0], "normal": [0, 1, 0]}}"#,
        );
        let svg = text_of(&section_svg("a <b>", &sections, &Units::of(UnitSystem::Si)));
        assert!(svg.contains("a &lt;b&gt;"));
        assert!(svg.contains("Section \u{201c}&lt;edge&gt; &amp; co\u{201d}"));
        assert!(svg.contains("The plane does not cut the mesh."));
        assert_eq!(svg.matches("Hydrostatic pressure only").count(), 3);
    }

    #[test]
    fn labels_closer_than_the_gap_are_left_out() {
        use crate::compute::{Level, PlaneChoice, Run, RunPoint, SectionPlane};
        // A run of many short steps with a kink at each: only some values fit.
        let points: Vec<RunPoint> = (0..40)
            .map(|i| RunPoint {
                at: [0.0, -(i as f64) * 0.01],
                pressure_pa: 1000.0 + i as f64,
                kink: true,
            })
            .collect();
        let sec = Section {
            plane: SectionPlane {
                choice: PlaneChoice::Resultant,
                point: [0.0; 3],
                normal: [0.0, 1.0, 0.0],
                along: [1.0, 0.0, 0.0],
                up: [0.0, 0.0, 1.0],
            },
            outline: vec![vec![[0.0, 0.0], [0.0, -0.39]]],
            runs: vec![Run {
                normals: vec![[1.0, 0.0]; 39],
                points,
                closed: false,
            }],
            levels: vec![Level {
                liquid: "w".into(),
                z: 0.0,
                interfaces: Vec::new(),
            }],
        };
        let svg = text_of(&section_svg("t", &[sec], &Units::of(UnitSystem::Si)));
        let labels = svg.matches(" kPa</text>").count();
        // The drawing is at most MAX_DRAWING_H px high; labels need LABEL_GAP each.
        assert!((2..40).contains(&labels), "{labels}");
        // Both ends are written, the first tried.
        assert!(svg.contains(">1.00 kPa</text>") && svg.contains(">1.04 kPa</text>"));
    }
}
