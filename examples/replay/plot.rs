//! The SVG plot: raw and filtered height with the phase changes, vertical speed and
//! total ascent, drawn from the reduced data of [`Envelope`].

use std::ops::Range;
use std::path::Path;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::Failure;
use super::envelope::Envelope;
use super::summary::Event;

/// Series of the envelope.
const RAW: usize = 0;
const FILTERED: usize = 1;
const SPEED: usize = 2;
const ASCENT: usize = 3;

type Svg<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// Draw the plot of `envelope` with the phase changes `events` into `path`.
pub(crate) fn draw(
    path: &Path,
    title: &str,
    envelope: &Envelope,
    events: &[Event],
) -> Result<(), Failure> {
    let fail = |e: String| Failure::Io(format!("{}: plot: {e}", path.display()));
    let root = SVGBackend::new(path, (1000, 700)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| fail(e.to_string()))?;
    match envelope.time_range() {
        Some((t0, t1)) => {
            let t1 = if t1 > t0 { t1 } else { t0 + 1.0 };
            let (upper, lower) = root.split_vertically(430);
            height_panel(&upper, title, envelope, events, t0..t1).map_err(fail)?;
            speed_panel(&lower, envelope, t0..t1).map_err(fail)?;
        }
        None => {
            // Every sample was flagged (e.g. all pressures outside the model's range):
            // the output table still has its rows; the plot says why it is empty.
            root.draw(&Text::new(
                format!("{title}: no accepted sample to plot (see the flags in the output)"),
                (40, 340),
                ("sans-serif", 20).into_font(),
            ))
            .map_err(|e| fail(e.to_string()))?;
        }
    }
    root.present().map_err(|e| fail(e.to_string()))
}

/// A value range with 5 % (at least 0.5) padding on each side; `fallback` without data.
fn padded(range: Option<(f64, f64)>, fallback: Range<f64>) -> Range<f64> {
    match range {
        Some((lo, hi)) if lo <= hi => {
            let pad = ((hi - lo) * 0.05).max(0.5);
            (lo - pad)..(hi + pad)
        }
        _ => fallback,
    }
}

fn height_panel(
    area: &Svg<'_>,
    title: &str,
    envelope: &Envelope,
    events: &[Event],
    time: Range<f64>,
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<_>| e.to_string();
    let both = [envelope.range(RAW), envelope.range(FILTERED)]
        .into_iter()
        .flatten()
        .reduce(|(a, b), (c, d)| (a.min(c), b.max(d)));
    let mut chart = ChartBuilder::on(area)
        .caption(format!("{title}: height"), ("sans-serif", 20))
        .margin(10)
        .x_label_area_size(35)
        .y_label_area_size(70)
        .build_cartesian_2d(time, padded(both, -1.0..1.0))
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc("height (m)")
        .draw()
        .map_err(e)?;
    let grey = RGBColor(170, 170, 170);
    chart
        .draw_series(LineSeries::new(envelope.points(RAW), grey))
        .map_err(e)?
        .label("raw (this sample alone)")
        .legend(move |(x, y)| PathElement::new([(x, y), (x + 20, y)], grey));
    chart
        .draw_series(LineSeries::new(
            envelope.points(FILTERED),
            BLUE.stroke_width(2),
        ))
        .map_err(e)?
        .label("filtered")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], BLUE));
    let (h_lo, h_hi) = (chart.y_range().start, chart.y_range().end);
    for (k, (phase, t, _)) in events.iter().enumerate() {
        // stagger the labels so that close events stay readable
        let label_y = h_hi - (h_hi - h_lo) * (0.04 + 0.05 * (k % 3) as f64);
        chart
            .draw_series(LineSeries::new([(*t, h_lo), (*t, h_hi)], RED.mix(0.6)))
            .map_err(e)?;
        chart
            .draw_series([Text::new(
                phase.clone(),
                (*t, label_y),
                ("sans-serif", 13).into_font().color(&RED),
            )])
            .map_err(e)?;
    }
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .draw()
        .map_err(e)
}

fn speed_panel(area: &Svg<'_>, envelope: &Envelope, time: Range<f64>) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<_>| e.to_string();
    let mut chart = ChartBuilder::on(area)
        .caption("vertical speed and total ascent", ("sans-serif", 18))
        .margin(10)
        .x_label_area_size(35)
        .y_label_area_size(70)
        .right_y_label_area_size(70)
        .build_cartesian_2d(time.clone(), padded(envelope.range(SPEED), -1.0..1.0))
        .map_err(e)?
        .set_secondary_coord(time, padded(envelope.range(ASCENT), -0.5..0.5));
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc("vertical speed (m/s)")
        .draw()
        .map_err(e)?;
    chart
        .configure_secondary_axes()
        .y_desc("total ascent (m)")
        .draw()
        .map_err(e)?;
    chart
        .draw_series(LineSeries::new(
            envelope.points(SPEED),
            GREEN.stroke_width(2),
        ))
        .map_err(e)?
        .label("vertical speed")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], GREEN));
    chart
        .draw_secondary_series(LineSeries::new(envelope.points(ASCENT), MAGENTA))
        .map_err(e)?
        .label("total ascent")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], MAGENTA));
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .draw()
        .map_err(e)
}

/// Plot the collected rows of a run (the tests' [`super::stream::Replay`]) as the tool
/// plots them.
#[allow(dead_code)] // the tool itself streams
pub(crate) fn write_plot(
    path: &Path,
    title: &str,
    replay: &super::stream::Replay,
) -> Result<(), Failure> {
    let mut envelope = Envelope::default();
    for (row, o) in &replay.outputs {
        envelope.add(&super::engine::point(o, row));
    }
    draw(path, title, &envelope, &replay.events)
}
