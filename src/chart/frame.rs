//! The one way every chart is drawn: a titled plot with labelled axes, the
//! chart's items, and a legend under the plot (so it never covers a curve),
//! rendered by plotters' SVG backend into a string.
//!
//! Text is written as SVG `<text>` elements in the generic `sans-serif`
//! family: no font file is read (plotters is built without its `ttf`
//! feature, so its layout of labels is an estimate from the character
//! count, and the viewer picks the font).

use super::style::{Dash, Marker, SeriesStyle, BAND_GREY, GRID_GREY};
use crate::error::{Error, ErrorKind, Result};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Width of every chart, pixels.
pub const WIDTH: u32 = 640;
/// Height of the plot part of every chart (title, axes and plot), pixels;
/// the legend adds [`LEGEND_ROW`] per row under it.
pub const PLOT_HEIGHT: u32 = 440;
/// Height of one legend row, pixels.
pub const LEGEND_ROW: u32 = 24;

const FONT: &str = "sans-serif";

/// What a chart shows around its items.
pub(crate) struct Frame {
    /// Title, one line.
    pub title: String,
    /// Smaller lines under the title.
    pub subtitle: Vec<String>,
    /// The x axis' name with its unit.
    pub x_desc: String,
    /// The y axis' name with its unit.
    pub y_desc: String,
    /// x range shown, in the axis' unit.
    pub x: (f64, f64),
    /// y range shown, in the axis' unit.
    pub y: (f64, f64),
    /// Tick label of an x value.
    pub x_label: Box<dyn Fn(f64) -> String>,
    /// Number of x tick labels plotters aims for.
    pub x_ticks: usize,
    /// Tick label of a y value.
    pub y_label: Box<dyn Fn(f64) -> String>,
    /// Number of y tick labels plotters aims for.
    pub y_ticks: usize,
}

/// The default y tick labels: the value with at most two decimals.
pub(crate) fn plain_y() -> Box<dyn Fn(f64) -> String> {
    Box::new(|v| tick(v, 2))
}

/// One thing drawn in the plot, in the axes' units.
pub(crate) enum Item {
    /// A line through points; `None` breaks it (a gap). With `marker_every`
    /// = n > 0, the series' marker is drawn at every n-th point.
    Line {
        /// The points, with gaps.
        points: Vec<Option<(f64, f64)>>,
        /// Its look.
        style: SeriesStyle,
        /// Draw a marker every this many points (0: none).
        marker_every: usize,
    },
    /// Markers alone.
    Markers {
        /// Where.
        points: Vec<(f64, f64)>,
        /// Which shape.
        marker: Marker,
        /// Half-size, pixels.
        size: i32,
    },
    /// A grey band between two curves sampled at the same x.
    Band {
        /// (x, low, high).
        points: Vec<(f64, f64, f64)>,
    },
    /// A horizontal line across the plot.
    HLine {
        /// Where.
        y: f64,
        /// Its look.
        style: SeriesStyle,
    },
    /// A vertical line across the plot.
    VLine {
        /// Where.
        x: f64,
        /// Its look.
        style: SeriesStyle,
    },
}

/// What a legend entry shows beside its label.
pub(crate) enum Sample {
    /// A short line in the style, with its marker when `marker`.
    Line(SeriesStyle, bool),
    /// A marker alone.
    Marker(Marker),
    /// A swatch of the band's grey.
    Band,
}

/// One legend entry.
pub(crate) struct LegendEntry {
    /// The label.
    pub label: String,
    /// Its sample.
    pub sample: Sample,
}

/// A plotters failure as a library error. The SVG backend writes into a
/// string and cannot fail on its own; this is here for completeness.
fn drawing<E: std::fmt::Display>(e: E) -> Error {
    Error::msg(ErrorKind::Io, format!("drawing a chart: {e}"))
}

/// A tick label: the value with at most `decimals` decimals, trailing zeros dropped.
pub(crate) fn tick(v: f64, decimals: usize) -> String {
    let s = crate::output::fixed(v, decimals);
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A range that holds every value with a margin, snapped outwards to
/// multiples of `unit`; at least `unit` wide.
pub(crate) fn padded_range(values: impl IntoIterator<Item = f64>, unit: f64) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() || !hi.is_finite() {
        return (0.0, unit);
    }
    let pad = (hi - lo) * 0.05;
    // A margin does not take a range of non-negative values below zero.
    let floor = if lo >= 0.0 { 0.0 } else { f64::NEG_INFINITY };
    let (lo, hi) = ((lo - pad).max(floor), hi + pad);
    let lo = (lo / unit).floor() * unit;
    let mut hi = (hi / unit).ceil() * unit;
    if hi - lo < unit {
        hi = lo + unit;
    }
    (lo, hi)
}

fn shape(style: &SeriesStyle) -> ShapeStyle {
    BLACK.stroke_width(style.width)
}

/// Legend entries laid out in rows across the chart's width.
fn legend_rows(legend: &[LegendEntry]) -> Vec<Vec<(i32, &LegendEntry)>> {
    let mut rows: Vec<Vec<(i32, &LegendEntry)>> = Vec::new();
    let mut x = 0;
    let max = WIDTH as i32 - 20;
    for e in legend {
        // Sample, gap, label (about 8 pixels a character), spacing.
        let w = 36 + 8 * e.label.chars().count() as i32 + 24;
        if rows.is_empty() || (x + w > max && x > 0) {
            rows.push(Vec::new());
            x = 0;
        }
        if let Some(r) = rows.last_mut() {
            r.push((x, e));
        }
        x += w;
    }
    rows
}

/// Draws `marker` centred at pixel `at`, half-size `r`.
fn draw_marker(
    area: &DrawingArea<SVGBackend, Shift>,
    marker: Marker,
    at: (i32, i32),
    r: i32,
) -> Result<()> {
    let (x, y) = at;
    let line = BLACK.stroke_width(1);
    let fill = WHITE.filled();
    let solid = BLACK.filled();
    let out = match marker {
        Marker::Disc => area.draw(&Circle::new(at, r, solid)),
        Marker::Circle => area
            .draw(&Circle::new(at, r, fill))
            .and_then(|_| area.draw(&Circle::new(at, r, line))),
        Marker::Square => area
            .draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], fill))
            .and_then(|_| area.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], line))),
        Marker::Block => area.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], solid)),
        Marker::Triangle => {
            let p = vec![(x, y - r - 1), (x + r + 1, y + r), (x - r - 1, y + r)];
            let mut closed = p.clone();
            closed.push(p[0]);
            area.draw(&Polygon::new(p, fill))
                .and_then(|_| area.draw(&PathElement::new(closed, line)))
        }
        Marker::Diamond => {
            let p = vec![
                (x, y - r - 1),
                (x + r + 1, y),
                (x, y + r + 1),
                (x - r - 1, y),
            ];
            let mut closed = p.clone();
            closed.push(p[0]);
            area.draw(&Polygon::new(p, fill))
                .and_then(|_| area.draw(&PathElement::new(closed, line)))
        }
        Marker::Cross => area
            .draw(&PathElement::new(
                vec![(x - r, y - r), (x + r, y + r)],
                BLACK.stroke_width(2),
            ))
            .and_then(|_| {
                area.draw(&PathElement::new(
                    vec![(x - r, y + r), (x + r, y - r)],
                    BLACK.stroke_width(2),
                ))
            }),
        Marker::Plus => area
            .draw(&PathElement::new(
                vec![(x - r - 1, y), (x + r + 1, y)],
                BLACK.stroke_width(2),
            ))
            .and_then(|_| {
                area.draw(&PathElement::new(
                    vec![(x, y - r - 1), (x, y + r + 1)],
                    BLACK.stroke_width(2),
                ))
            }),
    };
    out.map_err(drawing)
}

/// Draws a polyline in pixels in the series' pattern.
fn draw_path(
    area: &DrawingArea<SVGBackend, Shift>,
    pixels: Vec<(i32, i32)>,
    style: &SeriesStyle,
) -> Result<()> {
    if pixels.len() < 2 {
        return Ok(());
    }
    match style.dash {
        Dash::Solid => area.draw(&PathElement::new(pixels, shape(style))),
        Dash::Dashed { on, off } => area.draw(&DashedPathElement::new(
            pixels,
            on as i32,
            off as i32,
            shape(style),
        )),
    }
    .map_err(drawing)
}

fn check_finite(items: &[Item], frame: &Frame) -> Result<()> {
    let bad = |what: &str| {
        Err(Error::msg(
            ErrorKind::InvalidInput,
            format!("chart \"{}\": {what} is not a finite number", frame.title),
        ))
    };
    let ok = |v: f64| v.is_finite();
    if ![frame.x.0, frame.x.1, frame.y.0, frame.y.1]
        .into_iter()
        .all(ok)
        || frame.x.1 <= frame.x.0
        || frame.y.1 <= frame.y.0
    {
        return bad("an axis range");
    }
    for item in items {
        let fine = match item {
            Item::Line { points, .. } => points.iter().flatten().all(|&(x, y)| ok(x) && ok(y)),
            Item::Markers { points, .. } => points.iter().all(|&(x, y)| ok(x) && ok(y)),
            Item::Band { points } => points.iter().all(|&(x, a, b)| ok(x) && ok(a) && ok(b)),
            Item::HLine { y, .. } => ok(*y),
            Item::VLine { x, .. } => ok(*x),
        };
        if !fine {
            return bad("a data point");
        }
    }
    Ok(())
}

/// Renders the chart: an SVG document (with a `<title>` for screen readers).
pub(crate) fn render(frame: &Frame, items: &[Item], legend: &[LegendEntry]) -> Result<String> {
    check_finite(items, frame)?;
    let rows = legend_rows(legend);
    let legend_h = if rows.is_empty() {
        0
    } else {
        8 + LEGEND_ROW * rows.len() as u32
    };
    let height = PLOT_HEIGHT + legend_h;
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let (top, _) = root.split_vertically(PLOT_HEIGHT);
        let mut plot = top
            .titled(&frame.title, (FONT, 21).into_font().color(&BLACK))
            .map_err(drawing)?;
        for sub in &frame.subtitle {
            plot = plot
                .titled(sub, (FONT, 17).into_font().color(&BLACK))
                .map_err(drawing)?;
        }
        let mut chart = ChartBuilder::on(&plot)
            .margin_left(8)
            .margin_right(22)
            .margin_top(6)
            .margin_bottom(4)
            .x_label_area_size(52)
            .y_label_area_size(76)
            .build_cartesian_2d(frame.x.0..frame.x.1, frame.y.0..frame.y.1)
            .map_err(drawing)?;
        let grid = RGBColor(GRID_GREY, GRID_GREY, GRID_GREY);
        let x_label = |v: &f64| (frame.x_label)(*v);
        let y_label = |v: &f64| (frame.y_label)(*v);
        chart
            .configure_mesh()
            .x_desc(frame.x_desc.as_str())
            .y_desc(frame.y_desc.as_str())
            .x_labels(frame.x_ticks)
            .y_labels(frame.y_ticks)
            .x_label_formatter(&x_label)
            .y_label_formatter(&y_label)
            .bold_line_style(grid.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(BLACK.stroke_width(1))
            .label_style((FONT, 16).into_font().color(&BLACK))
            .axis_desc_style((FONT, 18).into_font().color(&BLACK))
            .draw()
            .map_err(drawing)?;
        let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
        let (x0, x1) = frame.x;
        let (y0, y1) = frame.y;
        // Bands first, so lines and markers lie on top of them.
        for item in items {
            if let Item::Band { points } = item {
                let mut poly: Vec<(i32, i32)> =
                    points.iter().map(|&(x, _, hi)| px(x, hi)).collect();
                poly.extend(points.iter().rev().map(|&(x, lo, _)| px(x, lo)));
                let grey = RGBColor(BAND_GREY, BAND_GREY, BAND_GREY);
                root.draw(&Polygon::new(poly, grey.filled()))
                    .map_err(drawing)?;
                let edge = SeriesStyle {
                    dash: Dash::Solid,
                    width: 1,
                    marker: Marker::Disc,
                };
                let grey_edge = |pts: Vec<(i32, i32)>| {
                    root.draw(&PathElement::new(
                        pts,
                        RGBColor(150, 150, 150).stroke_width(edge.width),
                    ))
                    .map_err(drawing)
                };
                grey_edge(points.iter().map(|&(x, _, hi)| px(x, hi)).collect())?;
                grey_edge(points.iter().map(|&(x, lo, _)| px(x, lo)).collect())?;
            }
        }
        for item in items {
            match item {
                Item::Band { .. } => {}
                Item::HLine { y, style } => draw_path(&root, vec![px(x0, *y), px(x1, *y)], style)?,
                Item::VLine { x, style } => draw_path(&root, vec![px(*x, y0), px(*x, y1)], style)?,
                Item::Line {
                    points,
                    style,
                    marker_every,
                } => {
                    // A point with a gap on both sides has no line: it gets
                    // its marker, so it is not lost.
                    let flush = |run: Vec<(i32, i32)>| -> Result<()> {
                        if let [single] = run[..] {
                            draw_marker(&root, style.marker, single, 3)
                        } else {
                            draw_path(&root, run, style)
                        }
                    };
                    let mut run = Vec::new();
                    for p in points {
                        match p {
                            Some((x, y)) => run.push(px(*x, *y)),
                            None => flush(std::mem::take(&mut run))?,
                        }
                    }
                    flush(run)?;
                    if *marker_every > 0 {
                        for (i, p) in points.iter().enumerate() {
                            if let (Some((x, y)), true) = (p, i % marker_every == 0) {
                                draw_marker(&root, style.marker, px(*x, *y), 4)?;
                            }
                        }
                    }
                }
                Item::Markers {
                    points,
                    marker,
                    size,
                } => {
                    for &(x, y) in points {
                        draw_marker(&root, *marker, px(x, y), *size)?;
                    }
                }
            }
        }
        for (r, row) in rows.iter().enumerate() {
            let y = (PLOT_HEIGHT + 4 + LEGEND_ROW * r as u32 + LEGEND_ROW / 2) as i32;
            for &(x, e) in row {
                let x = x + 14;
                match &e.sample {
                    Sample::Line(style, marker) => {
                        draw_path(&root, vec![(x, y), (x + 28, y)], style)?;
                        if *marker {
                            draw_marker(&root, style.marker, (x + 14, y), 4)?;
                        }
                    }
                    Sample::Marker(m) => draw_marker(&root, *m, (x + 14, y), 5)?,
                    Sample::Band => {
                        let grey = RGBColor(BAND_GREY, BAND_GREY, BAND_GREY);
                        root.draw(&Rectangle::new(
                            [(x, y - 6), (x + 28, y + 6)],
                            grey.filled(),
                        ))
                        .map_err(drawing)?;
                    }
                }
                let style = (FONT, 17)
                    .into_font()
                    .color(&BLACK)
                    .pos(Pos::new(HPos::Left, VPos::Center));
                root.draw(&Text::new(e.label.clone(), (x + 38, y), style))
                    .map_err(drawing)?;
            }
        }
        root.present().map_err(drawing)?;
    }
    Ok(with_title(&buf, &frame.title))
}

/// Inserts `<title>` (escaped) as the SVG's first child.
fn with_title(svg: &str, title: &str) -> String {
    let escaped = super::escape(title);
    match svg.find('>') {
        Some(i) => format!("{}>\n<title>{escaped}</title>{}", &svg[..i], &svg[i + 1..]),
        None => svg.to_string(),
    }
}
