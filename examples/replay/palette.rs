//! The plots' colours and their legend, drawn in a column of its own beside the data.
//!
//! The palette is our own, built on the common practice for readers with a colour-vision
//! deficiency: the estimate and the raw height are a dark blue and an orange (a pair
//! that stays apart for red-green and blue-yellow deficiencies), marks differ in shape
//! as well as colour, and no two lines rely on red against green.

use plotters::coord::Shift;
use plotters::prelude::*;

pub(crate) const INK: RGBColor = RGBColor(30, 30, 30);
pub(crate) const GRID: RGBColor = RGBColor(228, 228, 228);
/// The estimate and its band.
pub(crate) const HEIGHT: RGBColor = RGBColor(25, 70, 150);
pub(crate) const BAND: RGBAColor = RGBAColor(25, 70, 150, 0.18);
/// Each sample's own height, thin on top.
pub(crate) const RAW: RGBColor = RGBColor(225, 120, 20);
pub(crate) const OUTLIER: RGBColor = RGBColor(190, 40, 40);
pub(crate) const FIX: RGBColor = RGBColor(20, 20, 20);
pub(crate) const GNSS: RGBColor = RGBColor(120, 60, 160);
pub(crate) const REST: RGBAColor = RGBAColor(110, 160, 110, 0.22);
pub(crate) const STATE: RGBColor = RGBColor(120, 120, 120);
pub(crate) const STATE_TEXT: RGBColor = RGBColor(60, 60, 60);
pub(crate) const SPEED: RGBColor = RGBColor(0, 120, 130);
pub(crate) const ASCENT: RGBColor = RGBColor(150, 95, 10);
pub(crate) const DESCENT: RGBColor = RGBColor(120, 60, 160);

/// How a legend entry is drawn.
#[derive(Debug, Clone, Copy)]
enum Swatch {
    Line(RGBColor, u32),
    Fill(RGBAColor),
    Cross(RGBColor),
    Triangle(RGBColor),
    Circle(RGBColor),
}

/// One entry of a legend.
#[derive(Debug, Clone)]
pub(crate) struct Entry {
    text: String,
    swatch: Swatch,
}

impl Entry {
    pub(crate) fn line(text: &str, c: RGBColor, width: u32) -> Self {
        Self::new(text, Swatch::Line(c, width))
    }
    pub(crate) fn fill(text: &str, c: RGBAColor) -> Self {
        Self::new(text, Swatch::Fill(c))
    }
    pub(crate) fn cross(text: &str, c: RGBColor) -> Self {
        Self::new(text, Swatch::Cross(c))
    }
    pub(crate) fn triangle(text: &str, c: RGBColor) -> Self {
        Self::new(text, Swatch::Triangle(c))
    }
    pub(crate) fn circle(text: &str, c: RGBColor) -> Self {
        Self::new(text, Swatch::Circle(c))
    }
    fn new(text: &str, swatch: Swatch) -> Self {
        Self {
            text: text.to_string(),
            swatch,
        }
    }
}

/// Font size of the legend, px.
pub(crate) const LEGEND_PX: f64 = 12.0;
/// Row height of the legend, px.
const ROW_PX: i32 = 20;

/// Draw `entries` top-down in `area` (a column beside the data).
pub(crate) fn legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[Entry],
) -> Result<(), String> {
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    let (x0, y0) = (8, 80);
    for (k, entry) in (0i32..).zip(entries) {
        let y = y0 + k * ROW_PX;
        let mid = y + 7;
        match entry.swatch {
            Swatch::Line(c, w) => area
                .draw(&PathElement::new(
                    [(x0, mid), (x0 + 22, mid)],
                    c.stroke_width(w),
                ))
                .map_err(e)?,
            Swatch::Fill(c) => area
                .draw(&Rectangle::new(
                    [(x0, y + 1), (x0 + 22, y + 13)],
                    c.filled(),
                ))
                .map_err(e)?,
            Swatch::Cross(c) => area
                .draw(&Cross::new((x0 + 11, mid), 4, c.stroke_width(2)))
                .map_err(e)?,
            Swatch::Triangle(c) => area
                .draw(&TriangleMarker::new((x0 + 11, mid), 6, c.filled()))
                .map_err(e)?,
            Swatch::Circle(c) => area
                .draw(&Circle::new((x0 + 11, mid), 3, c.stroke_width(1)))
                .map_err(e)?,
        }
        area.draw(&Text::new(
            entry.text.clone(),
            (x0 + 30, y),
            ("sans-serif", LEGEND_PX).into_font().color(&INK),
        ))
        .map_err(e)?;
    }
    Ok(())
}
