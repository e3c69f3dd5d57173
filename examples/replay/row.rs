//! One input row: the header's column lookup, the cells read as numbers, the checks
//! that reject a row whole (each with the reason counted in the summary and a message).

use super::Failure;
use super::lines::{Fields, Line, MAX_LINE_BYTES, split_fields, trim};
use super::messages::{echo, number, start};

/// The columns read, by name; the first two are required.
pub(crate) const COLUMNS: [&str; 6] = [
    "time_s",
    "pressure_pa",
    "temperature_c",
    "humidity_pct",
    "accel_up_mps2",
    "known_altitude_m",
];

/// A parsed input row.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Row {
    /// Line of the input file the row came from.
    #[allow(dead_code)] // for the tests' look at a row
    pub(crate) line: u64,
    pub(crate) time_s: f64,
    pub(crate) pressure_pa: Option<f32>,
    pub(crate) temperature_c: Option<f32>,
    pub(crate) humidity_pct: Option<f32>,
    pub(crate) accel_up_mps2: Option<f32>,
    pub(crate) known_altitude_m: Option<f32>,
}

/// Why a row was rejected: the reason counted in the summary and the message's text.
#[derive(Debug)]
pub(crate) struct Rejection {
    pub(crate) reason: &'static str,
    pub(crate) detail: String,
}

fn rejection(reason: &'static str) -> impl Fn(String) -> Rejection {
    move |detail| Rejection { reason, detail }
}

/// Where each column of [`COLUMNS`] is in a row, from the header row.
#[derive(Debug)]
pub(crate) struct Header {
    /// Line of the header row.
    pub(crate) line: u64,
    index: [Option<usize>; 6],
    width: usize,
}

impl Header {
    /// Read the header row; fails (exit code 3) on a missing or repeated column.
    pub(crate) fn read(line: &Line<'_>) -> Result<Self, Failure> {
        let n = line.number;
        if line.too_long() {
            return Err(Failure::NoRows(format!(
                "line {n}: the header row is {} bytes long, more than the {MAX_LINE_BYTES} a row may have; it starts {}",
                line.bytes,
                start(&line.text)
            )));
        }
        let names = split_fields(&line.text)
            .map_err(|e| Failure::NoRows(format!("line {n}: cannot read the header row: {e}")))?;
        let mut index = [None; 6];
        for (slot, name) in index.iter_mut().zip(COLUMNS) {
            if names.iter().filter(|h| *h == name).count() > 1 {
                return Err(Failure::NoRows(format!(
                    "line {n}: column '{name}' appears more than once in the header"
                )));
            }
            *slot = names.iter().position(|h| h == name);
        }
        for (required, idx) in COLUMNS.iter().zip(&index).take(2) {
            if idx.is_none() {
                return Err(Failure::NoRows(format!(
                    "line {n}: missing required column '{required}' (header: {})",
                    echo(&names.join(","))
                )));
            }
        }
        Ok(Self {
            line: n,
            index,
            width: names.len(),
        })
    }
}

/// Parse an optional numeric cell; `Err` names the problem.
pub(crate) fn cell(text: Option<&str>, name: &str) -> Result<Option<f64>, String> {
    match text.map(trim) {
        None | Some("") => Ok(None),
        Some(t) => match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(format!("{name} is not finite: {}", echo(t))),
            Err(_) => Err(format!("{name} is not a number: {}", echo(t))),
        },
    }
}

/// Read one data line into a row, or say why it is rejected. `last_time` is the time
/// of the last accepted row, which this row's time must be after. Without `describe`
/// the commonest rejections come without their text (a run that lists no more
/// messages does not spend its time writing them).
pub(crate) fn parse(
    line: &Line<'_>,
    header: &Header,
    fields: &mut Fields,
    last_time: Option<f64>,
    describe: bool,
) -> Result<Row, Rejection> {
    let reject = |reason, detail: &dyn Fn() -> String| Rejection {
        reason,
        detail: if describe { detail() } else { String::new() },
    };
    if line.too_long() {
        return Err(reject("line too long", &|| {
            format!(
                "{} bytes, more than the {MAX_LINE_BYTES} a row may have; it starts {}",
                line.bytes,
                start(&line.text)
            )
        }));
    }
    let text: &str = &line.text;
    fields
        .split(text)
        .map_err(rejection("unterminated quote"))?;
    if fields.len() != header.width {
        return Err(reject("wrong number of fields", &|| {
            format!("{} fields, the header has {}", fields.len(), header.width)
        }));
    }
    let row = cells(line.number, text, header, fields).map_err(rejection("unparsable value"))?;
    if row.pressure_pa.is_none() && row.accel_up_mps2.is_none() {
        return Err(rejection("missing pressure")("pressure_pa is empty".into()));
    }
    if let Some(problem) = physical(&row) {
        return Err(rejection("non-physical value")(problem));
    }
    if let Some(t) = last_time.filter(|t| row.time_s <= *t) {
        return Err(reject("time not increasing", &|| {
            format!(
                "time_s {} is not after the previous row's {}",
                number(row.time_s),
                number(t)
            )
        }));
    }
    Ok(row)
}

/// The row's cells as numbers.
fn cells(line: u64, text: &str, header: &Header, fields: &Fields) -> Result<Row, String> {
    let get = |i: usize| {
        header
            .index
            .get(i)
            .copied()
            .flatten()
            .and_then(|k| fields.get(text, k))
    };
    let time_s = cell(get(0), "time_s")?.ok_or("time_s is empty")?;
    let f = |i: usize| -> Result<Option<f32>, String> {
        Ok(cell(get(i), COLUMNS.get(i).copied().unwrap_or("?"))?.map(|v| v as f32))
    };
    Ok(Row {
        line,
        time_s,
        pressure_pa: f(1)?,
        temperature_c: f(2)?,
        humidity_pct: f(3)?,
        accel_up_mps2: f(4)?,
        known_altitude_m: f(5)?,
    })
}

/// Check a row's values for physical sense. Returns the problem, if any.
pub(crate) fn physical(row: &Row) -> Option<String> {
    if let Some(p) = row.pressure_pa {
        if p <= 0.0 {
            return Some(format!("pressure_pa must be positive, got {}", number(p)));
        }
        if p > 200_000.0 {
            return Some(format!("pressure_pa {} is above 2000 hPa", number(p)));
        }
    }
    if let Some(t) = row.temperature_c {
        if !(-173.15..=126.85).contains(&t) {
            return Some(format!("temperature_c {} outside 100..400 K", number(t)));
        }
    }
    if let Some(h) = row.humidity_pct {
        if !(0.0..=100.0).contains(&h) {
            return Some(format!("humidity_pct {} outside 0..100", number(h)));
        }
    }
    if let Some(a) = row.accel_up_mps2 {
        if a.abs() > 200.0 {
            return Some(format!("accel_up_mps2 {} beyond 200 m/s^2", number(a)));
        }
    }
    if let Some(h) = row.known_altitude_m {
        if !(-5_000.0..=90_000.0).contains(&h) {
            return Some(format!(
                "known_altitude_m {} outside -5 km..90 km",
                number(h)
            ));
        }
    }
    None
}
