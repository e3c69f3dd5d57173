//! The SVG plot of a run against time: the height with its +/- 2-sigma band, the height
//! from each sample alone, marks for outliers, known elevations and satellite
//! altitudes, rests shaded and state changes labelled above the data; below it the
//! vertical speed and the total ascent and descent. Drawn from the reduced data of
//! [`Envelope`], so its size does not grow with the log.

use std::ops::Range;
use std::path::Path;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::Failure;
use super::envelope::{
    ASCENT, BAND_HIGH, BAND_LOW, DESCENT, Envelope, FILTERED, FIX, GNSS, OUTLIER, RAW, SPEED,
};
use super::labels::{self, Placed};
use super::palette::{self as colour, Entry};
use super::scale::{Scale, number_label};
use super::summary::Event;

/// Size of the plot, px.
pub(crate) const WIDTH: u32 = 1100;
pub(crate) const HEIGHT: u32 = 820;
/// Left edge of the legend column, px: the data never reaches it.
pub(crate) const LEGEND_LEFT: u32 = 850;
/// Height of the header line and of the label lanes above the height panel, px.
const HEADER_PX: u32 = 30;
const LANE_PX: u32 = 18;
const LANES: usize = 3;
/// Top of the height panel's data, px: below the header and the label lanes.
pub(crate) const DATA_TOP_PX: u32 = HEADER_PX + LANE_PX * LANES as u32;
/// Font size of the state labels, px.
pub(crate) const LABEL_PX: f64 = 13.0;

type Svg<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// What the plot shows besides the data: its header line and units.
#[derive(Debug, Clone)]
pub(crate) struct Frame {
    pub(crate) header: String,
    pub(crate) scale: Scale,
}

/// Draw the plot of `envelope` with the state changes `events` and the rests `rests`
/// ((start s, end s), shaded) into `path`.
pub(crate) fn draw(
    path: &Path,
    frame: &Frame,
    envelope: &Envelope,
    events: &[Event],
    rests: &[(f64, f64)],
) -> Result<(), Failure> {
    let fail = |e: String| Failure::Io(format!("{}: plot: {e}", path.display()));
    let root = SVGBackend::new(path, (WIDTH, HEIGHT)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| fail(e.to_string()))?;
    header(&root, &frame.header).map_err(fail)?;
    match envelope.time_range() {
        Some((t0, t1)) => {
            let axes = Axes::new(frame.scale, t0, t1);
            let (main, legend) = root.split_horizontally(LEGEND_LEFT);
            let (_, rest) = main.split_vertically(DATA_TOP_PX);
            let (upper, lower) = rest.split_vertically(400);
            let legend_entries = height_panel(&root, &upper, &axes, envelope, (events, rests))?;
            let speed_entries = speed_panel(&lower, &axes, envelope).map_err(fail)?;
            colour::legend(&legend, &[legend_entries, speed_entries].concat()).map_err(fail)?;
        }
        None => {
            // Every sample was flagged (e.g. all pressures outside the model's range):
            // the output table still has its rows; the plot says why it is empty.
            root.draw(&Text::new(
                "no accepted sample to plot (see the flags in the output)",
                (40, 340),
                ("sans-serif", 20).into_font(),
            ))
            .map_err(|e| fail(e.to_string()))?;
        }
    }
    root.present().map_err(|e| fail(e.to_string()))
}

/// The header line: use, model, start altitude, latitude.
fn header(root: &Svg<'_>, text: &str) -> Result<(), String> {
    root.draw(&Text::new(
        text.to_string(),
        (12, 8),
        ("sans-serif", 14).into_font().color(&colour::INK),
    ))
    .map_err(|e| e.to_string())
}

/// The time axis in the scale's unit, from the first row.
#[derive(Debug, Clone, Copy)]
struct Axes {
    scale: Scale,
    t0: f64,
    span: f64,
}

impl Axes {
    fn new(scale: Scale, t0: f64, t1: f64) -> Self {
        let span = ((t1 - t0) / scale.time_per_unit_s).max(1e-6);
        Self { scale, t0, span }
    }
    fn time(&self) -> Range<f64> {
        0.0..self.span
    }
    /// A (time s, height m) point in the axes' units.
    fn at(&self, (t, h): (f64, f64)) -> (f64, f64) {
        (
            (t - self.t0) / self.scale.time_per_unit_s,
            h / self.scale.height_per_unit_m,
        )
    }
    fn x(&self, t: f64) -> f64 {
        (t - self.t0) / self.scale.time_per_unit_s
    }
    fn height_title(&self) -> String {
        format!("height ({})", self.scale.height_unit)
    }
}

/// A value range with 5 % (at least `min_pad`) padding on each side; `fallback`
/// without data.
fn padded(range: Option<(f64, f64)>, min_pad: f64, fallback: Range<f64>) -> Range<f64> {
    match range {
        Some((lo, hi)) if lo <= hi => {
            let pad = ((hi - lo) * 0.05).max(min_pad);
            (lo - pad)..(hi + pad)
        }
        _ => fallback,
    }
}

/// The lowest and highest of several series.
fn joint_range(envelope: &Envelope, series: &[usize]) -> Option<(f64, f64)> {
    series
        .iter()
        .filter_map(|s| envelope.range(*s))
        .reduce(|(a, b), (c, d)| (a.min(c), b.max(d)))
}

fn height_panel(
    root: &Svg<'_>,
    area: &Svg<'_>,
    axes: &Axes,
    envelope: &Envelope,
    (events, rests): (&[Event], &[(f64, f64)]),
) -> Result<Vec<Entry>, Failure> {
    let fail = |e: String| Failure::Io(format!("plot: {e}"));
    let e = |e: DrawingAreaErrorKind<_>| e.to_string();
    let unit = axes.scale.height_per_unit_m;
    let range = joint_range(envelope, &[RAW, FILTERED]).map(|(a, b)| (a / unit, b / unit));
    let mut chart = ChartBuilder::on(area)
        .margin_left(10)
        // and the width of the speed panel's right axis, so that the time axes align
        .margin_right(10 + 70)
        .x_label_area_size(40)
        .y_label_area_size(70)
        .build_cartesian_2d(axes.time(), padded(range, 0.5 / unit, -1.0..1.0))
        .map_err(|x| fail(e(x)))?;
    chart
        .configure_mesh()
        .x_desc(axes.scale.time_title())
        .y_desc(axes.height_title())
        .x_label_formatter(&|v| axes.scale.time_label(*v))
        .y_label_formatter(&|v| number_label(*v))
        .bold_line_style(colour::GRID)
        .light_line_style(TRANSPARENT)
        .draw()
        .map_err(|x| fail(e(x)))?;
    let (y_lo, y_hi) = (chart.y_range().start, chart.y_range().end);
    let mut entries = Vec::new();
    // rests first, under everything else
    for (a, b) in rests {
        chart
            .draw_series([Rectangle::new(
                [(axes.x(*a), y_lo), (axes.x(*b), y_hi)],
                colour::REST.filled(),
            )])
            .map_err(|x| fail(e(x)))?;
    }
    if !rests.is_empty() {
        entries.push(Entry::fill("resting", colour::REST));
    }
    draw_band(&mut chart, axes, envelope).map_err(|x| fail(e(x)))?;
    entries.push(Entry::fill("height +/- 2 sigma", colour::BAND));
    chart
        .draw_series(LineSeries::new(
            envelope.points(FILTERED).map(|p| axes.at(p)),
            colour::HEIGHT.stroke_width(2),
        ))
        .map_err(|x| fail(e(x)))?;
    entries.push(Entry::line("height (estimate)", colour::HEIGHT, 2));
    chart
        .draw_series(LineSeries::new(
            envelope.points(RAW).map(|p| axes.at(p)),
            colour::RAW.stroke_width(1),
        ))
        .map_err(|x| fail(e(x)))?;
    entries.push(Entry::line("height, each sample alone", colour::RAW, 1));
    entries.extend(draw_marks(&mut chart, axes, envelope).map_err(|x| fail(e(x)))?);
    let lines = state_lines(&mut chart, axes, events, (y_lo, y_hi)).map_err(|x| fail(e(x)))?;
    if !lines.is_empty() {
        entries.push(Entry::line("state change", colour::STATE, 1));
    }
    let plot = chart.plotting_area().get_pixel_range();
    label_states(root, &lines, &plot).map_err(fail)?;
    Ok(entries)
}

type Chart<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// The +/- 2-sigma band as one polygon: the upper edge forward, the lower back.
fn draw_band(
    chart: &mut Chart<'_, '_>,
    axes: &Axes,
    envelope: &Envelope,
) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    let mut outline: Vec<(f64, f64)> = envelope.points(BAND_HIGH).map(|p| axes.at(p)).collect();
    let lower: Vec<(f64, f64)> = envelope.points(BAND_LOW).map(|p| axes.at(p)).collect();
    outline.extend(lower.into_iter().rev());
    if outline.len() > 2 {
        chart.draw_series([Polygon::new(outline, colour::BAND.filled())])?;
    }
    Ok(())
}

/// The marks of outliers, known elevations and satellite altitudes; their legend
/// entries where there are any.
fn draw_marks(
    chart: &mut Chart<'_, '_>,
    axes: &Axes,
    envelope: &Envelope,
) -> Result<Vec<Entry>, DrawingAreaErrorKind<std::io::Error>> {
    let mut entries = Vec::new();
    let outliers: Vec<(f64, f64)> = envelope.marks(OUTLIER).map(|p| axes.at(p)).collect();
    if !outliers.is_empty() {
        chart.draw_series(
            outliers
                .iter()
                .map(|p| Cross::new(*p, 4, colour::OUTLIER.stroke_width(2))),
        )?;
        entries.push(Entry::cross("outlier (not used)", colour::OUTLIER));
    }
    let fixes: Vec<(f64, f64)> = envelope.marks(FIX).map(|p| axes.at(p)).collect();
    if !fixes.is_empty() {
        chart.draw_series(
            fixes
                .iter()
                .map(|p| TriangleMarker::new(*p, 6, colour::FIX.filled())),
        )?;
        entries.push(Entry::triangle("known elevation applied", colour::FIX));
    }
    let gnss: Vec<(f64, f64)> = envelope.marks(GNSS).map(|p| axes.at(p)).collect();
    if !gnss.is_empty() {
        chart.draw_series(
            gnss.iter()
                .map(|p| Circle::new(*p, 3, colour::GNSS.stroke_width(1))),
        )?;
        entries.push(Entry::circle("satellite altitude", colour::GNSS));
    }
    Ok(entries)
}

/// A vertical line at each state change; returns (line x px, state) for the labels.
fn state_lines(
    chart: &mut Chart<'_, '_>,
    axes: &Axes,
    events: &[Event],
    (y_lo, y_hi): (f64, f64),
) -> Result<Vec<(f64, String)>, DrawingAreaErrorKind<std::io::Error>> {
    let mut lines = Vec::new();
    for (state, t, _) in events {
        let x = axes.x(*t);
        chart.draw_series(LineSeries::new(
            [(x, y_lo), (x, y_hi)],
            colour::STATE.stroke_width(1),
        ))?;
        let px = chart.backend_coord(&(x, y_hi)).0;
        lines.push((f64::from(px), state.replace('_', " ")));
    }
    Ok(lines)
}

/// The state labels in the lanes above the height panel, each joined to its line.
fn label_states(
    root: &Svg<'_>,
    lines: &[(f64, String)],
    plot: &(Range<i32>, Range<i32>),
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<_>| e.to_string();
    let (xs, ys) = plot;
    let (placed, _) = labels::place(
        lines,
        f64::from(xs.start),
        f64::from(xs.end),
        LANES,
        LABEL_PX,
    );
    let top = ys.start;
    for Placed {
        left_px,
        lane,
        text,
    } in placed
    {
        // lane 0 just above the data, the others further up
        let bottom = top - 2 - (LANE_PX as i32) * lane as i32;
        let y = bottom - LABEL_PX as i32;
        let x = left_px.round() as i32;
        root.draw(&Text::new(
            text,
            (x, y),
            ("sans-serif", LABEL_PX)
                .into_font()
                .color(&colour::STATE_TEXT),
        ))
        .map_err(e)?;
    }
    Ok(())
}

fn speed_panel(area: &Svg<'_>, axes: &Axes, envelope: &Envelope) -> Result<Vec<Entry>, String> {
    let e = |e: DrawingAreaErrorKind<_>| e.to_string();
    let unit = axes.scale.height_per_unit_m;
    let totals = joint_range(envelope, &[ASCENT, DESCENT]).map(|(a, b)| (a / unit, b / unit));
    let mut chart = ChartBuilder::on(area)
        .margin_left(10)
        .margin_right(10)
        .margin_top(14)
        .x_label_area_size(40)
        .y_label_area_size(70)
        .right_y_label_area_size(70)
        .build_cartesian_2d(axes.time(), padded(envelope.range(SPEED), 0.5, -1.0..1.0))
        .map_err(e)?
        .set_secondary_coord(axes.time(), padded(totals, 0.5 / unit, -0.5..0.5));
    chart
        .configure_mesh()
        .x_desc(axes.scale.time_title())
        .y_desc("vertical speed (m/s)")
        .x_label_formatter(&|v| axes.scale.time_label(*v))
        .y_label_formatter(&|v| number_label(*v))
        .bold_line_style(colour::GRID)
        .light_line_style(TRANSPARENT)
        .draw()
        .map_err(e)?;
    chart
        .configure_secondary_axes()
        .y_desc(format!(
            "total ascent and descent ({})",
            axes.scale.height_unit
        ))
        .y_label_formatter(&|v| number_label(*v))
        .draw()
        .map_err(e)?;
    let scaled = |s: usize| envelope.points(s).map(move |p| axes.at(p));
    chart
        .draw_series(LineSeries::new(
            envelope.points(SPEED).map(|p| (axes.x(p.0), p.1)),
            colour::SPEED.stroke_width(2),
        ))
        .map_err(e)?;
    chart
        .draw_secondary_series(LineSeries::new(
            scaled(ASCENT),
            colour::ASCENT.stroke_width(2),
        ))
        .map_err(e)?;
    chart
        .draw_secondary_series(LineSeries::new(
            scaled(DESCENT),
            colour::DESCENT.stroke_width(2),
        ))
        .map_err(e)?;
    Ok(vec![
        Entry::line("vertical speed (left axis)", colour::SPEED, 2),
        Entry::line("total ascent (right axis)", colour::ASCENT, 2),
        Entry::line("total descent (right axis)", colour::DESCENT, 2),
    ])
}

/// Plot the collected rows of a run (the tests' [`super::stream::Replay`]) as the tool
/// plots them.
#[allow(dead_code)] // the tool itself streams
pub(crate) fn write_plot(
    path: &Path,
    frame: &Frame,
    replay: &super::stream::Replay,
) -> Result<(), Failure> {
    let mut envelope = Envelope::default();
    let mut story = super::story::Story::default();
    for (row, o) in &replay.outputs {
        let p = super::engine::point(o, row);
        envelope.add(&p);
        story.add(&p);
    }
    draw(path, frame, &envelope, &replay.events, &story.rest_spans)
}
