//! Line charts as SVG: the load history of a mesh across design iterations
//! (`results/<stem>.history.svg`), the loads against the level of a sweep
//! (`results/<stem>[.<case>].sweep.svg`) and a floating case's righting-lever curve (on
//! the page); and, drawn by hand in `svg/section.rs`, a case's pressure diagram
//! (`results/<stem>[.<case>].section.svg`).
//!
//! Owns the chart model ([`Chart`], [`Panel`], [`Series`]), its building from the change
//! log and from sweeps, and the rendering into bytes with plotters' SVG backend (no font
//! library: text is written as `font-family="sans-serif"` and the viewer supplies the
//! font). It reads and writes no file.
//!
//! # What a chart looks like
//!
//! A title line, then panels stacked top to bottom, each 960 × 300 px: a plot with its
//! axis descriptions (quantity and unit on y, `iteration` or the level on x) and a legend
//! to its right, outside the data. Every quantity is drawn in its one unit of
//! [`crate::report::units`] (kN and kN·m, or kip and kip·ft), as on the page's tables;
//! series that are zero throughout are left out, and a panel without series too.
//! Every series has its own colour, dash pattern (solid, dashed, dotted) and marker
//! (hollow circle, filled triangle, hollow square, cross, filled circle, hollow diamond),
//! so the chart reads in black and white. Markers sit on at most 12 points per series.
//! Vertical dashed grey lines mark points of interest (the baseline of a history, the
//! case's own level on a sweep).

use std::fmt::Write;

use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use serde_json::Value;

use crate::compute::SweepStep;

mod section;
mod stability;
use crate::report::units::{Unit, Units};
pub use section::{LABEL_GAP, SECTION_WIDTH, section_svg};
pub use stability::stability_chart;

/// One line of a chart: a label and its points (x, y in the units its panel names).
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    pub label: String,
    pub points: Vec<(f64, f64)>,
}

/// One plot of a chart.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    pub title: String,
    /// The description of the x axis, with its unit.
    pub x_label: String,
    /// The description of the y axis, with its unit (`force (kN)`).
    pub y_label: String,
    /// Points in the units the axes name.
    pub series: Vec<Series>,
    /// Vertical marker lines: x and a short label.
    pub marks: Vec<(f64, String)>,
    /// Shaded areas under the first series between two x values, with a short label.
    pub areas: Vec<(f64, f64, String)>,
    /// x takes whole numbers only (iterations): ticks are labelled as integers.
    pub integer_x: bool,
    /// The y range includes 0.
    pub include_zero: bool,
    /// Values with |y| at or below this are round-off and drawn as 0: without it, a
    /// moment that is zero up to 1e-10 N·m would fill the panel with noise.
    pub noise: f64,
}

/// A chart: a title and panels stacked vertically.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    pub title: String,
    pub panels: Vec<Panel>,
}

impl Chart {
    /// The number of series over all panels.
    pub fn series_count(&self) -> usize {
        self.panels.iter().map(|p| p.series.len()).sum()
    }
}

/// One step of a sweep as the charts need it (SI units, mesh axes).
#[derive(Clone, Debug, PartialEq)]
pub struct SweepPoint {
    /// m.
    pub level: f64,
    /// N.
    pub force: [f64; 3],
    /// N·m about `moment_about`.
    pub moment: [f64; 3],
    /// N ≥ 0.
    pub uplift: f64,
    /// N·m about each named axis, in name order.
    pub axis_moments: Vec<(String, f64)>,
    /// The factor of safety against flotation at this level (with a check and a net
    /// uplift).
    pub flotation_factor: Option<f64>,
}

/// What a sweep chart marks besides its series (levels in m, the mesh's own elevations).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SweepMarks {
    /// The case's own level of the swept liquid.
    pub case_level: Option<f64>,
    /// With a flotation check: the required factor, drawn as a line on the factor's panel.
    pub required_factor: Option<f64>,
    /// Where the factor falls to the required one.
    pub limit_level: Option<f64>,
}

impl SweepPoint {
    /// From a computed step.
    pub fn from_step(s: &SweepStep) -> SweepPoint {
        SweepPoint {
            level: s.level,
            force: s.force,
            moment: s.moment,
            uplift: s.uplift,
            axis_moments: s
                .axis_moments
                .iter()
                .map(|(k, a)| (k.clone(), a.moment))
                .collect(),
            flotation_factor: s.flotation_factor.flatten(),
        }
    }

    /// From a step of a result document's `sweep` as read back from JSON; `None` when a
    /// field is missing or not a number.
    pub fn from_json(v: &Value) -> Option<SweepPoint> {
        let axis_moments = match v.get("axis_moments") {
            Some(Value::Object(m)) => m
                .iter()
                .map(|(k, a)| Some((k.clone(), a.get("moment")?.as_f64()?)))
                .collect::<Option<Vec<_>>>()?,
            _ => Vec::new(),
        };
        Some(SweepPoint {
            level: v.get("level")?.as_f64()?,
            force: vec3(v.get("force")?)?,
            moment: vec3(v.get("moment")?)?,
            uplift: v.get("uplift")?.as_f64()?,
            axis_moments,
            flotation_factor: v.get("flotation_factor").and_then(Value::as_f64),
        })
    }
}

fn vec3(v: &Value) -> Option<[f64; 3]> {
    let a = v.as_array()?;
    if a.len() != 3 {
        return None;
    }
    Some([a[0].as_f64()?, a[1].as_f64()?, a[2].as_f64()?])
}

const COMPONENTS: [&str; 3] = ["x", "y", "z"];

/// The loads of one case against the swept level, in the units of `u` (levels in its
/// datum): a force panel (Fx, Fy, Fz, uplift) and a moment panel (the moments about the
/// named axes, or the moment components when the sidecar names no axis). `swept` names the
/// swept liquid; the case's own level of it is marked. With a flotation check a third
/// panel draws the factor of safety against level (values above four times the required
/// one left out, as the factor grows without bound as the uplift vanishes), the required
/// factor as a line, and the level where the factor falls to it. Series that are zero at
/// every level, and a panel left without series, are not drawn.
pub fn sweep_chart(
    mesh: &str,
    case: &str,
    swept: Option<&str>,
    steps: &[SweepPoint],
    marks: &SweepMarks,
    u: &Units,
) -> Chart {
    let lu = u.length.name;
    let x_label = match swept {
        Some(l) => format!("level of {l} ({lu})"),
        None => format!("swept level ({lu})"),
    };
    let x = |level: f64| (level + u.elevation_origin_m) * u.length.factor;
    let mut forces: Vec<Series> = (0..3)
        .map(|k| Series {
            label: format!("F{}", COMPONENTS[k]),
            points: steps.iter().map(|s| (x(s.level), s.force[k])).collect(),
        })
        .collect();
    forces.push(Series {
        label: "uplift".to_owned(),
        points: steps.iter().map(|s| (x(s.level), s.uplift)).collect(),
    });
    let moments = moment_series(
        steps
            .iter()
            .map(|s| (x(s.level), s.moment, s.axis_moments.as_slice())),
    );
    let noise = noise_of(&forces);
    let mut level_marks: Vec<(f64, String)> = marks
        .case_level
        .map(|z| vec![(x(z), "case level".to_owned())])
        .unwrap_or_default();
    let panel = |title: &str, unit: Unit, quantity: &str, series, marks: &Vec<(f64, String)>| {
        Panel {
            title: title.to_owned(),
            x_label: x_label.clone(),
            y_label: format!("{quantity} ({})", unit.name),
            series,
            marks: marks.clone(),
            areas: Vec::new(),
            integer_x: false,
            include_zero: true,
            noise,
        }
        .in_unit(unit)
    };
    let mut panels = vec![
        panel(
            "Force of the liquid",
            u.force,
            "force",
            forces,
            &level_marks,
        ),
        panel(moments.0, u.moment, "moment", moments.1, &level_marks),
    ];
    if let Some(required) = marks.required_factor {
        let cap = 4.0 * required;
        let fs: Vec<(f64, f64)> = steps
            .iter()
            .filter_map(|s| Some((x(s.level), s.flotation_factor.filter(|f| *f <= cap)?)))
            .collect();
        let ends = [
            x(steps.first().map_or(0.0, |s| s.level)),
            x(steps.last().map_or(0.0, |s| s.level)),
        ];
        if let Some(z) = marks.limit_level {
            level_marks.push((x(z), "FS = required".to_owned()));
        }
        panels.push(Panel {
            title: "Safety against flotation".to_owned(),
            x_label: x_label.clone(),
            y_label: "factor of safety".to_owned(),
            series: vec![
                Series {
                    label: "FS".to_owned(),
                    points: fs,
                },
                Series {
                    label: format!("required {required:.2}"),
                    points: ends.iter().map(|&e| (e, required)).collect(),
                },
            ],
            marks: level_marks,
            areas: Vec::new(),
            integer_x: false,
            include_zero: true,
            noise: 0.0,
        });
    }
    Chart {
        title: format!("{mesh} · {case} · loads against level"),
        panels: panels
            .into_iter()
            .filter(|p| !p.series.is_empty())
            .collect(),
    }
}

impl Panel {
    /// The panel with its y values (SI) in `unit`, and without the series that are zero
    /// (at or below the noise) everywhere.
    fn in_unit(mut self, unit: Unit) -> Panel {
        let noise = self.noise;
        self.series.retain(|s| {
            s.points
                .iter()
                .any(|p| p.1.is_finite() && p.1.abs() > noise)
        });
        for s in &mut self.series {
            for p in &mut s.points {
                p.1 *= unit.factor;
            }
        }
        self.noise *= unit.factor;
        self
    }
}

/// The round-off level of a chart's forces and moments: 1e-9 of its largest force, in N
/// (and, for moments, in N·m: 1e-9 × the force × 1 m, far below any lever arm of a
/// structure and far above the round-off of the sums).
fn noise_of(forces: &[Series]) -> f64 {
    1e-9 * forces
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.1.abs()))
        .filter(|y| y.is_finite())
        .fold(0.0, f64::max)
}

/// Moment series: about each named axis when there are any, else the components.
fn moment_series<'a>(
    rows: impl Iterator<Item = (f64, [f64; 3], &'a [(String, f64)])> + Clone,
) -> (&'static str, Vec<Series>) {
    let mut names: Vec<&str> = Vec::new();
    for (_, _, axes) in rows.clone() {
        for (n, _) in axes {
            if !names.contains(&n.as_str()) {
                names.push(n);
            }
        }
    }
    if names.is_empty() {
        let series = (0..3)
            .map(|k| Series {
                label: format!("M{}", COMPONENTS[k]),
                points: rows.clone().map(|(x, m, _)| (x, m[k])).collect(),
            })
            .collect();
        ("Moment about the moments' reference point", series)
    } else {
        let series = names
            .iter()
            .map(|n| Series {
                label: format!("about {n}"),
                points: rows
                    .clone()
                    .filter_map(|(x, _, axes)| {
                        axes.iter().find(|(a, _)| a == n).map(|(_, m)| (x, *m))
                    })
                    .collect(),
            })
            .collect();
        ("Moment about the named axes", series)
    }
}

/// The load history of the mesh named `mesh` (its file name, as in the change log) from
/// the log's lines: per case, a force panel (Fx, Fy, Fz, vertical, uplift) and a moment
/// panel (axis moments, or components), against the iteration; the first `computed` line
/// is marked as the baseline. `None` when the log has no `computed` line for the mesh.
///
/// `up` is the mesh's up axis as the result echoes it (`"+z"`, `"-y"` …): the component
/// along it is shown as the vertical force (`vertical (+ up)`), the others as they are;
/// without it every component is shown, and the vertical force beside them. Series that
/// are zero at every iteration, and a panel left without series, are not drawn. Values in
/// the units of `u`.
pub fn history_chart(mesh: &str, lines: &[Value], up: Option<&str>, u: &Units) -> Option<Chart> {
    let computed: Vec<(f64, &Value)> = lines
        .iter()
        .filter(|l| l["mesh"] == mesh && l["event"] == "computed")
        .enumerate()
        .map(|(i, l)| {
            let it = l["iteration"].as_f64().unwrap_or((i + 1) as f64);
            (it, l)
        })
        .collect();
    let (baseline, _) = *computed.first()?;
    let mut names: Vec<&str> = Vec::new();
    for (_, l) in &computed {
        for c in l["cases"].as_array().into_iter().flatten() {
            if let Some(n) = c["name"].as_str()
                && !names.contains(&n)
            {
                names.push(n);
            }
        }
    }
    let mut panels = Vec::new();
    for name in names {
        struct Row {
            x: f64,
            force: [f64; 3],
            moment: [f64; 3],
            vertical: f64,
            uplift: f64,
            axes: Vec<(String, f64)>,
        }
        let rows: Vec<Row> = computed
            .iter()
            .filter_map(|(x, l)| {
                let c = l["cases"].as_array()?.iter().find(|c| c["name"] == name)?;
                Some(Row {
                    x: *x,
                    force: vec3(&c["force"])?,
                    moment: vec3(&c["moment"])?,
                    vertical: c["vertical_force"].as_f64()?,
                    uplift: c["uplift"].as_f64()?,
                    axes: c["axis_moments"]
                        .as_object()
                        .map(|m| {
                            m.iter()
                                .filter_map(|(k, v)| Some((k.clone(), v.as_f64()?)))
                                .collect()
                        })
                        .unwrap_or_default(),
                })
            })
            .collect();
        if rows.is_empty() {
            continue;
        }
        // The up axis's component is the vertical force: shown once, as such.
        let vertical_is = up
            .and_then(crate::hydro::UpAxis::from_keyword)
            .map(crate::hydro::UpAxis::index);
        let mut forces: Vec<Series> = (0..3)
            .filter(|&k| vertical_is != Some(k))
            .map(|k| Series {
                label: format!("F{}", COMPONENTS[k]),
                points: rows.iter().map(|r| (r.x, r.force[k])).collect(),
            })
            .collect();
        forces.push(Series {
            label: "vertical (+ up)".to_owned(),
            points: rows.iter().map(|r| (r.x, r.vertical)).collect(),
        });
        forces.push(Series {
            label: "uplift".to_owned(),
            points: rows.iter().map(|r| (r.x, r.uplift)).collect(),
        });
        let (moment_title, moments) =
            moment_series(rows.iter().map(|r| (r.x, r.moment, r.axes.as_slice())));
        let marks = vec![(baseline, "baseline".to_owned())];
        let noise = noise_of(&forces);
        panels.push(
            Panel {
                title: format!("Case {name}: force of the liquid"),
                x_label: "iteration".to_owned(),
                y_label: format!("force ({})", u.force.name),
                series: forces,
                marks: marks.clone(),
                areas: Vec::new(),
                integer_x: true,
                include_zero: false,
                noise,
            }
            .in_unit(u.force),
        );
        panels.push(
            Panel {
                title: format!("Case {name}: {}", moment_title.to_lowercase()),
                x_label: "iteration".to_owned(),
                y_label: format!("moment ({})", u.moment.name),
                series: moments,
                marks,
                areas: Vec::new(),
                integer_x: true,
                include_zero: false,
                noise,
            }
            .in_unit(u.moment),
        );
        panels.retain(|p| !p.series.is_empty());
    }
    Some(Chart {
        title: format!("{mesh} · load history across saves"),
        panels,
    })
}

/// Width of a chart, px.
pub const WIDTH: u32 = 960;
const TITLE_H: u32 = 40;
const PANEL_H: u32 = 300;
const LEGEND_W: u32 = 210;
/// Markers per series at most.
const MARKERS: usize = 12;

const FONT: &str = "sans-serif";
const INK: RGBColor = RGBColor(0x22, 0x26, 0x2b);
const GRID: RGBColor = RGBColor(0xe4, 0xe7, 0xea);
const GRID_BOLD: RGBColor = RGBColor(0xc8, 0xcd, 0xd2);
const MARK: RGBColor = RGBColor(0x8a, 0x90, 0x96);
/// Fills of areas under a curve: two pale tints of the palette's first colour.
const SHADE: RGBColor = RGBColor(0xd6, 0xe2, 0xf0);
const SHADE_ALT: RGBColor = RGBColor(0xf0, 0xdc, 0xcc);

/// Our palette: dark enough to read as distinct greys when printed in black and white.
const PALETTE: [RGBColor; 6] = [
    RGBColor(0x1d, 0x4e, 0x89), // deep blue
    RGBColor(0xb0, 0x4a, 0x1c), // rust
    RGBColor(0x2f, 0x6b, 0x3a), // pine
    RGBColor(0x6a, 0x3d, 0x8f), // plum
    RGBColor(0x7a, 0x6a, 0x12), // ochre
    RGBColor(0x0f, 0x6e, 0x74), // teal
];

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Dash {
    Solid,
    Dashed,
    Dotted,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Marker {
    Circle,
    Triangle,
    Square,
    Cross,
    Disc,
    Diamond,
}

fn look(i: usize) -> (RGBColor, Dash, Marker) {
    const DASHES: [Dash; 3] = [Dash::Solid, Dash::Dashed, Dash::Dotted];
    const MARKS: [Marker; 6] = [
        Marker::Circle,
        Marker::Triangle,
        Marker::Square,
        Marker::Cross,
        Marker::Disc,
        Marker::Diamond,
    ];
    (PALETTE[i % 6], DASHES[i % 3], MARKS[i % 6])
}

/// Renders a chart as a standalone SVG document (UTF-8 bytes).
///
/// Never fails: should plotters refuse to draw, the result is a small SVG that says so.
pub fn render(chart: &Chart) -> Vec<u8> {
    let mut buf = String::new();
    match draw(chart, &mut buf) {
        Ok(()) => buf.into_bytes(),
        Err(e) => {
            let mut s = String::new();
            let _ = writeln!(
                s,
                "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{WIDTH}\" height=\"60\"><text x=\"10\" y=\"30\" font-family=\"{FONT}\">{}: the chart could not be drawn ({})</text></svg>",
                escape(&chart.title),
                escape(&e)
            );
            s.into_bytes()
        }
    }
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn draw(chart: &Chart, buf: &mut String) -> Result<(), String> {
    let n = chart.panels.len().max(1) as u32;
    let height = TITLE_H + PANEL_H * n;
    let root = SVGBackend::with_string(buf, (WIDTH, height)).into_drawing_area();
    let e = |e: DrawingAreaErrorKind<std::io::Error>| e.to_string();
    root.fill(&WHITE).map_err(e)?;
    let (top, rest) = root.split_vertically(TITLE_H);
    top.draw_text(
        &chart.title,
        &(FONT, 22).into_font().style(FontStyle::Bold).color(&INK),
        (16, 12),
    )
    .map_err(e)?;
    if chart.panels.is_empty() {
        rest.draw_text(
            "nothing to draw yet",
            &(FONT, 16).into_font().color(&MARK),
            (16, 20),
        )
        .map_err(e)?;
    }
    let areas = rest.split_evenly((chart.panels.len().max(1), 1));
    for (area, panel) in areas.iter().zip(&chart.panels) {
        draw_panel(&root, area, panel)?;
    }
    root.present().map_err(e)?;
    Ok(())
}

/// A padded range around `lo..hi`.
fn padded(lo: f64, hi: f64, frac: f64, min_pad: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    if hi - lo <= 1e-12 * lo.abs().max(hi.abs()) {
        let pad = (0.05 * lo.abs()).max(min_pad);
        return (lo - pad, hi + pad);
    }
    let pad = frac * (hi - lo);
    (lo - pad, hi + pad)
}

/// Decimals for tick labels over a span (about five ticks).
fn decimals(span: f64) -> usize {
    if !(span.is_finite() && span > 0.0) {
        return 0;
    }
    (-(span / 5.0).log10().floor()).clamp(0.0, 6.0) as usize
}

fn draw_panel(
    root: &DrawingArea<SVGBackend<'_>, Shift>,
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    panel: &Panel,
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<std::io::Error>| e.to_string();
    let (plot, legend) = area.split_horizontally(WIDTH - LEGEND_W);

    let finite = |p: &&(f64, f64)| p.0.is_finite() && p.1.is_finite();
    let clean = |&(x, y): &(f64, f64)| (x, if y.abs() <= panel.noise { 0.0 } else { y });
    let all = || {
        panel
            .series
            .iter()
            .flat_map(|s| s.points.iter().filter(finite).map(clean))
    };
    // Values are in the unit the panel names: one unit per quantity, as on every table.
    let scale = 1.0;
    let unit = panel.y_label.clone();
    let (mut ylo, mut yhi) = all().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
        (a.min(p.1 / scale), b.max(p.1 / scale))
    });
    if panel.include_zero || ylo > yhi {
        ylo = ylo.min(0.0);
        yhi = yhi.max(0.0);
    }
    let (y0, y1) = padded(ylo, yhi, 0.08, 1.0);
    let (xlo, xhi) = all()
        .map(|p| p.0)
        .chain(panel.marks.iter().map(|m| m.0))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    let (x0, x1) = if panel.integer_x {
        let (a, b) = if xlo > xhi { (1.0, 1.0) } else { (xlo, xhi) };
        (a - 0.4, b + 0.4)
    } else if xlo > xhi {
        (0.0, 1.0)
    } else {
        padded(xlo, xhi, 0.0, 0.5)
    };

    let mut cc = ChartBuilder::on(&plot)
        .caption(&panel.title, (FONT, 18).into_font().color(&INK))
        .margin_left(10)
        .margin_right(16)
        .margin_top(6)
        .margin_bottom(6)
        .x_label_area_size(42)
        .y_label_area_size(78)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(e)?;
    let ydec = decimals(y1 - y0);
    let xdec = decimals(x1 - x0);
    let integer_x = panel.integer_x;
    let xfmt = move |x: &f64| {
        if integer_x {
            if (x - x.round()).abs() < 1e-9 {
                format!("{:.0}", x.round())
            } else {
                String::new()
            }
        } else {
            format!("{x:.xdec$}")
        }
    };
    let yfmt = move |y: &f64| {
        let s = format!("{y:.ydec$}");
        // No "-0.0" on the zero line.
        match s.strip_prefix('-') {
            Some(r) if r.chars().all(|c| c == '0' || c == '.') => r.to_owned(),
            _ => s,
        }
    };
    let span_x = (xhi - xlo).max(0.0);
    let x_ticks = if integer_x {
        (span_x as usize + 1).clamp(2, 12)
    } else {
        8
    };
    cc.configure_mesh()
        .x_desc(panel.x_label.as_str())
        .y_desc(unit.as_str())
        .x_labels(x_ticks)
        .y_labels(7)
        .x_label_formatter(&xfmt)
        .y_label_formatter(&yfmt)
        .max_light_lines(1)
        .light_line_style(GRID)
        .bold_line_style(GRID_BOLD)
        .axis_style(INK)
        .label_style((FONT, 14).into_font().color(&INK))
        .axis_desc_style((FONT, 16).into_font().color(&INK))
        .draw()
        .map_err(e)?;

    // The zero line, when it is inside the plot.
    if y0 < 0.0 && y1 > 0.0 {
        cc.draw_series(LineSeries::new([(x0, 0.0), (x1, 0.0)], INK.stroke_width(1)))
            .map_err(e)?;
    }
    for (x, label) in &panel.marks {
        cc.draw_series(DashedLineSeries::new(
            [(*x, y0), (*x, y1)],
            5,
            4,
            MARK.stroke_width(1),
        ))
        .map_err(e)?;
        let (px, py) = cc.backend_coord(&(*x, y1));
        root.draw(&Text::new(
            label.clone(),
            (px + 4, py + 4),
            (FONT, 14).into_font().color(&MARK),
        ))
        .map_err(e)?;
    }

    // Shaded areas under the first series, each between its two x values.
    if let Some(first) = panel.series.first() {
        for (k, (a, b, label)) in panel.areas.iter().enumerate() {
            let mut poly: Vec<(f64, f64)> = vec![(*a, 0.0)];
            poly.extend(
                first
                    .points
                    .iter()
                    .filter(finite)
                    .filter(|p| p.0 >= *a && p.0 <= *b)
                    .map(clean),
            );
            poly.push((*b, 0.0));
            let shade = if k % 2 == 0 { SHADE } else { SHADE_ALT };
            cc.draw_series(std::iter::once(Polygon::new(poly, shade.filled())))
                .map_err(e)?;
            let (px, py) = cc.backend_coord(&(0.5 * (a + b), 0.0));
            root.draw(&Text::new(
                label.clone(),
                (px - 24, py - 18),
                (FONT, 13).into_font().color(&MARK),
            ))
            .map_err(e)?;
        }
    }
    for (i, s) in panel.series.iter().enumerate() {
        let (colour, dash, marker) = look(i);
        let pts: Vec<(f64, f64)> = s
            .points
            .iter()
            .filter(finite)
            .map(clean)
            .map(|(x, y)| (x, y / scale))
            .collect();
        let style = colour.stroke_width(2);
        match dash {
            Dash::Solid => cc
                .draw_series(LineSeries::new(pts.iter().copied(), style))
                .map(|_| ()),
            Dash::Dashed => cc
                .draw_series(DashedLineSeries::new(pts.iter().copied(), 9, 5, style))
                .map(|_| ()),
            Dash::Dotted => cc
                .draw_series(DashedLineSeries::new(pts.iter().copied(), 2, 4, style))
                .map(|_| ()),
        }
        .map_err(e)?;
        // Markers on a subset, offset per series so that coinciding series stay apart.
        let stride = pts.len().div_ceil(MARKERS).max(1);
        for (j, p) in pts.iter().enumerate() {
            if j % stride == i % stride || (j + 1 == pts.len() && pts.len() <= MARKERS) {
                draw_marker(root, marker, cc.backend_coord(p), colour)?;
            }
        }
    }

    // Legend, outside the data: a line sample with its marker, then the label.
    let (lx, ly) = legend.get_base_pixel();
    for (i, s) in panel.series.iter().enumerate() {
        let (colour, dash, marker) = look(i);
        let y = ly + 44 + 22 * i as i32;
        let line = [(lx + 4, y), (lx + 40, y)];
        let style = colour.stroke_width(2);
        match dash {
            Dash::Solid => root.draw(&PathElement::new(line, style)),
            Dash::Dashed => root.draw(&DashedPathElement::new(line, 9, 5, style)),
            Dash::Dotted => root.draw(&DashedPathElement::new(line, 2, 4, style)),
        }
        .map_err(e)?;
        draw_marker(root, marker, (lx + 22, y), colour)?;
        let label: String = if s.label.chars().count() > 22 {
            s.label.chars().take(21).chain(['…']).collect()
        } else {
            s.label.clone()
        };
        root.draw(&Text::new(
            label,
            (lx + 48, y - 8),
            (FONT, 16).into_font().color(&INK),
        ))
        .map_err(e)?;
    }
    Ok(())
}

fn draw_marker(
    root: &DrawingArea<SVGBackend<'_>, Shift>,
    marker: Marker,
    (x, y): (i32, i32),
    colour: RGBColor,
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<std::io::Error>| e.to_string();
    let hollow = ShapeStyle::from(&WHITE).filled();
    let edge = colour.stroke_width(2);
    match marker {
        Marker::Circle => {
            root.draw(&Circle::new((x, y), 4, hollow)).map_err(e)?;
            root.draw(&Circle::new((x, y), 4, edge)).map_err(e)
        }
        Marker::Disc => root
            .draw(&Circle::new((x, y), 4, colour.filled()))
            .map_err(e),
        Marker::Triangle => root
            .draw(&Polygon::new(
                vec![(x, y - 5), (x + 5, y + 4), (x - 5, y + 4)],
                colour.filled(),
            ))
            .map_err(e),
        Marker::Square => {
            let r = [(x - 4, y - 4), (x + 4, y + 4)];
            root.draw(&Rectangle::new(r, hollow)).map_err(e)?;
            root.draw(&Rectangle::new(r, edge)).map_err(e)
        }
        Marker::Cross => {
            root.draw(&PathElement::new([(x - 4, y - 4), (x + 4, y + 4)], edge))
                .map_err(e)?;
            root.draw(&PathElement::new([(x - 4, y + 4), (x + 4, y - 4)], edge))
                .map_err(e)
        }
        Marker::Diamond => {
            let d = vec![(x, y - 5), (x + 5, y), (x, y + 5), (x - 5, y)];
            root.draw(&Polygon::new(d.clone(), hollow)).map_err(e)?;
            let mut outline = d;
            outline.push((x, y - 5));
            root.draw(&PathElement::new(outline, edge)).map_err(e)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    /// Whether the SVG has a text element reading exactly `text` (plotters writes the
    /// text on a line of its own).
    fn has_text(svg: &str, text: &str) -> bool {
        svg.contains(&format!(">\n{text}\n</text>"))
    }

    #[test]
    fn the_stability_chart_draws_the_curve_its_tangent_criteria_areas_and_angles() {
        let fl = json!({
            "righting_lever": [{"heel": 0.0, "gz": 0.0}, {"heel": 30.0, "gz": 0.3},
                               {"heel": 60.0, "gz": 0.1}, {"heel": 80.0, "gz": -0.2}],
            "equilibrium": {"metacentric_height": {"transverse": 0.8}},
            "stability": {"max_gz": 0.31, "angle_of_max_gz": 33.0, "vanishing_angle": 70.5},
            "free_surface_rise": 0.05,
            "criteria": {"checks": [
                {"what": "GZ at a heel of 30 degrees or more (m)", "required": 0.2, "actual": 0.31}
            ]}
        });
        let u = Units::of(crate::report::units::UnitSystem::Si);
        let c = stability_chart("p.stl", "tow", &fl, &u).expect("a chart");
        let p = &c.panels[0];
        let labels: Vec<&str> = p.series.iter().map(|s| s.label.as_str()).collect();
        assert_eq!(
            labels,
            [
                "GZ",
                "GZ less free surface",
                "GM_T · φ at upright",
                "least GZ from 30° (0.200 m)"
            ]
        );
        // The corrected curve: GZ − rise · sin φ, so 0.3 − 0.05 · ½ at 30°.
        assert!((p.series[1].points[1].1 - (0.3 - 0.025)).abs() < 1e-12);
        // The tangent reaches GM_T at one radian.
        assert_eq!(p.series[2].points[1], (1.0f64.to_degrees(), 0.8));
        assert_eq!(p.areas.len(), 2);
        assert_eq!(
            p.marks.iter().map(|m| m.0).collect::<Vec<_>>(),
            [33.0, 70.5]
        );
        let svg = String::from_utf8(render(&c)).expect("utf-8");
        assert!(
            has_text(&svg, "max GZ") && has_text(&svg, "vanishing"),
            "{svg}"
        );
        // In US units the levers are in feet.
        let us = stability_chart(
            "p.stl",
            "tow",
            &fl,
            &Units::of(crate::report::units::UnitSystem::Us),
        )
        .expect("a chart");
        assert!((us.panels[0].series[0].points[1].1 - 0.3 / 0.3048).abs() < 1e-12);
        // A sinking body has no chart.
        assert!(
            stability_chart(
                "p.stl",
                "tow",
                &json!({"righting_lever": [], "equilibrium": null}),
                &u
            )
            .is_none()
        );
    }

    fn line(iteration: u64, fz: f64, axes: Value) -> Value {
        json!({
            "time": "2026-01-01T00:00:00Z", "mesh": "gate.stl", "event": "computed",
            "iteration": iteration,
            "cases": [{
                "name": "normal", "force": [1000.0 * iteration as f64, 0.0, fz],
                "moment": [0.0, 5.0e4, 0.0], "vertical_force": fz, "uplift": fz.max(0.0),
                "axis_moments": axes,
            }],
        })
    }

    #[test]
    fn the_history_has_a_panel_pair_per_case_and_marks_the_baseline() {
        let lines = vec![
            json!({"time": "t", "mesh": "other.stl", "event": "computed", "iteration": 1,
                   "cases": [{"name": "x", "force": [1.0, 2.0, 3.0], "moment": [0.0, 0.0, 0.0],
                              "vertical_force": 3.0, "uplift": 3.0, "axis_moments": {}}]}),
            line(1, 2.0e5, json!({"trunnion": -1.0e5})),
            json!({"time": "t", "mesh": "gate.stl", "event": "failed", "error": "bad"}),
            line(2, 2.5e5, json!({"trunnion": -1.2e5})),
            line(3, 2.4e5, json!({"trunnion": -1.1e5})),
        ];
        let si = Units::of(crate::report::units::UnitSystem::Si);
        let chart = history_chart("gate.stl", &lines, Some("+z"), &si).expect("computed lines");
        assert_eq!(chart.panels.len(), 2);
        // Up is +z here, so Fz is the vertical force, labelled so; Fy is zero throughout
        // and left out: Fx, vertical, uplift, and one axis moment.
        let labels: Vec<&str> = chart.panels[0]
            .series
            .iter()
            .map(|s| s.label.as_str())
            .collect();
        assert_eq!(labels, ["Fx", "vertical (+ up)", "uplift"]);
        assert_eq!(chart.panels[1].series.len(), 1);
        assert_eq!(chart.series_count(), 4);
        assert_eq!(chart.panels[0].series[0].points.len(), 3);
        assert_eq!(chart.panels[0].marks, vec![(1.0, "baseline".to_owned())]);

        let svg = String::from_utf8(render(&chart)).expect("utf-8");
        assert!(svg.starts_with("<svg"), "{}", &svg[..80]);
        assert!(svg.trim_end().ends_with("</svg>"));
        for label in [
            "iteration",
            "force (kN)",
            "moment (kN·m)",
            "vertical (+ up)",
            "about trunnion",
            "baseline",
        ] {
            assert!(has_text(&svg, label), "missing {label}");
        }
        // One legend label per series, each exactly once.
        for s in chart.panels.iter().flat_map(|p| &p.series) {
            let n = svg.matches(&format!(">\n{}\n</text>", s.label)).count();
            assert_eq!(n, 1, "{}", s.label);
        }
        assert!(history_chart("missing.stl", &lines, Some("+z"), &si).is_none());
        // In US units, the axes say so: 1000 N = 0.2248 kip.
        let us = Units::of(crate::report::units::UnitSystem::Us);
        let chart = history_chart("gate.stl", &lines, Some("+z"), &us).expect("lines");
        assert_eq!(chart.panels[0].y_label, "force (kip)");
        assert!(
            (chart.panels[0].series[0].points[0].1 - 1000.0 / 4_448.221_615_260_5).abs() < 1e-12
        );
    }

    #[test]
    fn a_plate_on_a_y_up_mesh_is_never_labelled_vertical_by_accident() {
        // Up is +y; the gate carries Fx only (Fy = vertical = 0, Fz = 0): no component is
        // called vertical because it happens to equal the vertical force, and the zero
        // series are not drawn.
        let mut l = line(1, 0.0, json!({}));
        l["cases"][0]["uplift"] = json!(0.0);
        let si = Units::of(crate::report::units::UnitSystem::Si);
        let chart = history_chart("gate.stl", &[l.clone()], Some("+y"), &si).expect("one line");
        let labels: Vec<&str> = chart.panels[0]
            .series
            .iter()
            .map(|s| s.label.as_str())
            .collect();
        assert_eq!(labels, ["Fx"]);
        // Up unknown: every non-zero component as it is.
        let chart = history_chart("gate.stl", &[l], None, &si).expect("one line");
        let labels: Vec<&str> = chart.panels[0]
            .series
            .iter()
            .map(|s| s.label.as_str())
            .collect();
        assert_eq!(labels, ["Fx"]);
        // The moment panel never shows a sidecar key's raw name.
        assert_eq!(
            chart.panels[1].title,
            "Case normal: moment about the moments' reference point"
        );
    }

    #[test]
    fn a_vertical_force_along_a_negative_axis_is_shown_as_vertical() {
        // Up is −z: vertical = −Fz, shown once as the vertical force.
        let mut l = line(1, 3.0e5, json!({}));
        l["cases"][0]["vertical_force"] = json!(-3.0e5);
        let si = Units::of(crate::report::units::UnitSystem::Si);
        let chart = history_chart("gate.stl", &[l], Some("-z"), &si).expect("one line");
        let labels: Vec<&str> = chart.panels[0]
            .series
            .iter()
            .map(|s| s.label.as_str())
            .collect();
        assert_eq!(labels, ["Fx", "vertical (+ up)", "uplift"]);
        // Without axes, the moment components that are not zero (My only here).
        assert_eq!(chart.panels[1].series.len(), 1);
        let svg = String::from_utf8(render(&chart)).expect("utf-8");
        assert!(has_text(&svg, "My") && has_text(&svg, "vertical (+ up)"));
    }

    #[test]
    fn a_sweep_chart_draws_forces_and_axis_moments_against_level() {
        let steps: Vec<SweepPoint> = (0..=8)
            .map(|i| {
                let h = 0.5 * i as f64;
                // Closed form, a vertical wall 1 m wide: F = ρ g h² / 2.
                let f = 1000.0 * 9.80665 * h * h / 2.0;
                SweepPoint {
                    level: h,
                    force: [f, 0.0, 0.0],
                    moment: [0.0, f * h / 3.0, 0.0],
                    uplift: 0.0,
                    axis_moments: vec![("hinge".to_owned(), f * h / 3.0)],
                    flotation_factor: None,
                }
            })
            .collect();
        let si = Units::of(crate::report::units::UnitSystem::Si);
        let at3 = SweepMarks {
            case_level: Some(3.0),
            ..SweepMarks::default()
        };
        let chart = sweep_chart("wall.stl", "normal", Some("headwater"), &steps, &at3, &si);
        // Fx and the hinge moment; Fy, Fz and the uplift are zero throughout.
        assert_eq!(chart.series_count(), 2);
        assert_eq!(chart.panels[0].marks, vec![(3.0, "case level".to_owned())]);
        let svg = String::from_utf8(render(&chart)).expect("utf-8");
        for label in [
            "level of headwater (m)",
            "force (kN)",
            "moment (kN·m)",
            "about hinge",
            "case level",
        ] {
            assert!(has_text(&svg, label), "missing {label}");
        }
        assert!(!has_text(&svg, "uplift"));
        // Levels in a datum and in feet: the mesh origin at 100 m; 3 m → 103 m = 337.93 ft.
        let us = Units::of(crate::report::units::UnitSystem::Us).with_datum(100.0);
        let chart = sweep_chart("wall.stl", "normal", None, &steps, &at3, &us);
        assert!((chart.panels[0].marks[0].0 - 103.0 / 0.3048).abs() < 1e-9);
        assert_eq!(chart.panels[0].x_label, "swept level (ft)");
        // Round trip through the result document's JSON.
        let v = json!({"level": 2.0, "force": [1.0, 2.0, 3.0], "moment": [4.0, 5.0, 6.0],
                       "uplift": 7.0, "downthrust": 0.0, "wetted_area": 1.0,
                       "submerged_volume": null,
                       "axis_moments": {"hinge": {"moment": 8.0, "miss_distance": null}}});
        let p = SweepPoint::from_json(&v).expect("complete");
        assert_eq!(p.axis_moments, vec![("hinge".to_owned(), 8.0)]);
        assert_eq!(p.force, [1.0, 2.0, 3.0]);
        assert!(SweepPoint::from_json(&json!({"level": 1.0})).is_none());
    }

    #[test]
    fn the_flotation_factor_is_drawn_against_level_with_the_required_line() {
        // FS = R / (ρ g A z) for an empty box of base A: 4 / z here, infinite at z = 0.
        let steps: Vec<SweepPoint> = (0..=8)
            .map(|i| {
                let z = 0.5 * i as f64;
                SweepPoint {
                    level: z,
                    force: [0.0, 0.0, 1.0e4 * z],
                    moment: [0.0; 3],
                    uplift: 1.0e4 * z,
                    axis_moments: Vec::new(),
                    flotation_factor: (z > 0.0).then(|| 4.0 / z),
                }
            })
            .collect();
        let marks = SweepMarks {
            case_level: Some(1.0),
            required_factor: Some(1.5),
            limit_level: Some(8.0 / 3.0),
        };
        let si = Units::of(crate::report::units::UnitSystem::Si);
        let chart = sweep_chart("box.stl", "empty", None, &steps, &marks, &si);
        let fs = chart
            .panels
            .iter()
            .find(|p| p.title == "Safety against flotation")
            .expect("a factor panel");
        // 4 / 0.5 = 8 > 4 × 1.5 is left out: the factor runs to infinity as U → 0.
        assert_eq!(fs.series[0].points.first(), Some(&(1.0, 4.0)));
        assert_eq!(fs.series[1].label, "required 1.50");
        assert_eq!(fs.series[1].points, vec![(0.0, 1.5), (4.0, 1.5)]);
        assert!(fs.marks.contains(&(8.0 / 3.0, "FS = required".to_owned())));
        let svg = String::from_utf8(render(&chart)).expect("utf-8");
        assert!(has_text(&svg, "factor of safety") && has_text(&svg, "FS = required"));
    }

    #[test]
    fn user_names_are_escaped_and_round_off_is_drawn_as_zero() {
        let chart = Chart {
            title: "<script>".to_owned(),
            panels: vec![Panel {
                title: "a & b".to_owned(),
                x_label: "level (m)".to_owned(),
                y_label: "force (kN)".to_owned(),
                series: vec![Series {
                    label: "</text>".to_owned(),
                    points: vec![(0.0, 2.0e4), (1.0, f64::NAN), (2.0, 3.0e4)],
                }],
                marks: Vec::new(),
                areas: Vec::new(),
                integer_x: false,
                include_zero: true,
                noise: 0.0,
            }],
        };
        let svg = String::from_utf8(render(&chart)).expect("utf-8");
        assert!(!svg.contains("<script>") && !svg.contains("a & b"));
        assert!(has_text(&svg, "&lt;/text&gt;"));
        assert!(has_text(&svg, "force (kN)"));
        // Round-off below the noise level is drawn as zero, not blown up to fill a panel.
        let mut quiet = chart.clone();
        quiet.panels[0].series[0].points = vec![(0.0, 3e-10), (10.0, -2e-10), (20.0, 1e-10)];
        quiet.panels[0].noise = 1e-3;
        let svg = String::from_utf8(render(&quiet)).expect("utf-8");
        assert!(has_text(&svg, "1.0"));
        quiet.panels[0].noise = 0.0;
        let svg = String::from_utf8(render(&quiet)).expect("utf-8");
        assert!(!has_text(&svg, "1.0"));
    }
}
