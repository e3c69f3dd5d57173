//! A balloon's second figure: air temperature, humidity and ascent rate against height
//! on the way up, as a sounding is read. Gathered into height bins of fixed width, so
//! its memory does not grow with the log.

use std::path::Path;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::Failure;
use super::engine::Point;
use super::palette as colour;
use super::scale::number_label;

/// Height bins: [`BIN_M`] wide from [`LOWEST_M`] up.
const BIN_M: f64 = 100.0;
const LOWEST_M: f64 = -1_000.0;
const BINS: usize = 900;

/// The quantities drawn: air temperature (degC), relative humidity (%), ascent rate (m/s).
const QUANTITIES: usize = 3;

/// Sums per height bin of the rows on the way up (before any state of the fall).
#[derive(Debug, Clone)]
pub(crate) struct Profile {
    sums: Vec<[(f64, u32); QUANTITIES]>,
    falling: bool,
}

impl Default for Profile {
    fn default() -> Self {
        Self {
            sums: vec![[(0.0, 0); QUANTITIES]; BINS],
            falling: false,
        }
    }
}

impl Profile {
    /// Add an output row; from the first state of the fall on, rows are not added.
    pub(crate) fn add(&mut self, p: &Point) {
        self.falling |= matches!(p.phase, "burst" | "descent" | "landed");
        if self.falling || !p.accepted || !p.altitude_m.is_finite() {
            return;
        }
        let bin = ((f64::from(p.altitude_m) - LOWEST_M) / BIN_M).floor();
        if !(0.0..BINS as f64).contains(&bin) {
            return;
        }
        let values = [p.temperature_c, p.humidity_pct, Some(p.vertical_speed_mps)];
        if let Some(sums) = self.sums.get_mut(bin as usize) {
            for (sum, v) in sums.iter_mut().zip(values) {
                if let Some(v) = v.filter(|v| v.is_finite()) {
                    sum.0 += f64::from(v);
                    sum.1 += 1;
                }
            }
        }
    }

    /// (value, height km) of quantity `q`: the mean of each bin with data, at its middle.
    fn points(&self, q: usize) -> Vec<(f64, f64)> {
        (0..)
            .zip(&self.sums)
            .filter_map(|(k, sums): (u32, _)| {
                let (sum, n) = sums.get(q).copied()?;
                let middle_km = (LOWEST_M + (f64::from(k) + 0.5) * BIN_M) / 1000.0;
                (n > 0).then(|| (sum / f64::from(n), middle_km))
            })
            .collect()
    }
}

/// Draw the profile into `path`, with `header` on top.
pub(crate) fn draw(path: &Path, header: &str, profile: &Profile) -> Result<(), Failure> {
    let fail = |e: String| Failure::Io(format!("{}: plot: {e}", path.display()));
    let root = SVGBackend::new(path, (1100, 700)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| fail(e.to_string()))?;
    root.draw(&Text::new(
        format!("{header}; on the way up"),
        (12, 8),
        ("sans-serif", 14).into_font().color(&colour::INK),
    ))
    .map_err(|e| fail(e.to_string()))?;
    let (_, body) = root.split_vertically(30);
    let panels = body.split_evenly((1, QUANTITIES));
    let all: Vec<Vec<(f64, f64)>> = (0..QUANTITIES).map(|q| profile.points(q)).collect();
    let heights = all
        .iter()
        .flatten()
        .map(|p| p.1)
        .fold(None, |r: Option<(f64, f64)>, h| {
            Some(r.map_or((h, h), |(a, b)| (a.min(h), b.max(h))))
        });
    let (lo, hi) = heights.map_or((0.0, 1.0), |(a, b)| (a - 0.2, b + 0.2));
    let titles = [
        "air temperature (degC)",
        "relative humidity (%)",
        "ascent rate (m/s)",
    ];
    let colours = [colour::RAW, colour::GNSS, colour::SPEED];
    for (((panel, points), title), c) in panels.iter().zip(&all).zip(titles).zip(colours) {
        panel_of(panel, points, title, c, lo..hi).map_err(fail)?;
    }
    root.present().map_err(|e| fail(e.to_string()))
}

fn panel_of<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    points: &[(f64, f64)],
    title: &str,
    c: RGBColor,
    heights: std::ops::Range<f64>,
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    let values = points.iter().map(|p| p.0);
    let lo = values.clone().fold(f64::INFINITY, f64::min);
    let hi = values.fold(f64::NEG_INFINITY, f64::max);
    let x = if lo <= hi {
        let pad = ((hi - lo) * 0.05).max(0.5);
        (lo - pad)..(hi + pad)
    } else {
        0.0..1.0
    };
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(60)
        .build_cartesian_2d(x, heights)
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc(title)
        .y_desc("height (km)")
        .x_labels(5)
        .x_label_formatter(&|v| number_label(*v))
        .y_label_formatter(&|v| number_label(*v))
        .bold_line_style(colour::GRID)
        .light_line_style(TRANSPARENT)
        .draw()
        .map_err(e)?;
    if points.is_empty() {
        let (xs, ys) = (chart.x_range(), chart.y_range());
        let at = (
            xs.start + (xs.end - xs.start) * 0.05,
            (ys.start + ys.end) / 2.0,
        );
        chart
            .draw_series([Text::new("no data", at, ("sans-serif", 13).into_font())])
            .map_err(e)?;
        return Ok(());
    }
    chart
        .draw_series(LineSeries::new(points.iter().copied(), c.stroke_width(2)))
        .map_err(e)?;
    Ok(())
}
