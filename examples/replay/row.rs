//! One input row: the header's column lookup, the cells read as numbers, the checks
//! that reject a row whole (each with the reason counted in the summary and a message)
//! and those that drop one optional channel ([`super::channels`]).

use super::Failure;
use super::channels::{Channel, Dropped};
use super::lines::{Fields, Line, MAX_LINE_BYTES, split_fields, trim};
use super::messages::{echo, number, start};

/// The columns read, by name: the two required ones, then the optional channels in the
/// order of [`Channel::ALL`].
pub(crate) const COLUMNS: [&str; 9] = [
    "time_s",
    "pressure_pa",
    Channel::ALL[0].column(),
    Channel::ALL[1].column(),
    Channel::ALL[2].column(),
    Channel::ALL[3].column(),
    Channel::ALL[4].column(),
    Channel::ALL[5].column(),
    Channel::ALL[6].column(),
];

/// A parsed input row. A dropped optional channel reads `None` and is in `dropped`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Row {
    /// Line of the input file the row came from.
    #[allow(dead_code)] // for the tests' look at a row
    pub(crate) line: u64,
    pub(crate) time_s: f64,
    pub(crate) pressure_pa: Option<f32>,
    /// Air temperature, degC.
    pub(crate) temperature_c: Option<f32>,
    /// Relative humidity, % (up to 110: the run takes more than 100 as 100).
    pub(crate) humidity_pct: Option<f32>,
    pub(crate) accel_up_mps2: Option<f32>,
    pub(crate) known_altitude_m: Option<f32>,
    /// The barometer's own temperature, degC: checked, never used as air temperature.
    pub(crate) sensor_temperature_c: Option<f32>,
    /// Satellite altitude, m above mean sea level (fused by the balloon preset).
    pub(crate) gnss_altitude_m: Option<f32>,
    /// The satellite altitude's 1-sigma, m.
    pub(crate) gnss_accuracy_m: Option<f32>,
    /// The optional channels dropped for a bad value.
    pub(crate) dropped: Dropped,
}

impl Row {
    /// The value of an optional channel.
    pub(crate) fn get(&self, c: Channel) -> Option<f32> {
        match c {
            Channel::Temperature => self.temperature_c,
            Channel::Humidity => self.humidity_pct,
            Channel::Accel => self.accel_up_mps2,
            Channel::Fix => self.known_altitude_m,
            Channel::SensorTemperature => self.sensor_temperature_c,
            Channel::GnssAltitude => self.gnss_altitude_m,
            Channel::GnssAccuracy => self.gnss_accuracy_m,
        }
    }

    fn slot(&mut self, c: Channel) -> &mut Option<f32> {
        match c {
            Channel::Temperature => &mut self.temperature_c,
            Channel::Humidity => &mut self.humidity_pct,
            Channel::Accel => &mut self.accel_up_mps2,
            Channel::Fix => &mut self.known_altitude_m,
            Channel::SensorTemperature => &mut self.sensor_temperature_c,
            Channel::GnssAltitude => &mut self.gnss_altitude_m,
            Channel::GnssAccuracy => &mut self.gnss_accuracy_m,
        }
    }
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
    index: [Option<usize>; COLUMNS.len()],
    width: usize,
}

impl Header {
    /// The header has the column of channel `c`.
    pub(crate) fn has(&self, c: Channel) -> bool {
        let name = c.column();
        COLUMNS
            .iter()
            .zip(&self.index)
            .any(|(column, idx)| *column == name && idx.is_some())
    }

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
        let mut index = [None; COLUMNS.len()];
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
/// of the last accepted row, which this row's time must be after. A bad optional
/// value drops its channel only: the row records it in [`Row::dropped`] and `dropped`
/// receives the problems (cleared first; filled only for a row that is returned).
/// Without `describe` the texts are not written (a run that lists no more messages
/// does not spend its time writing them).
pub(crate) fn parse(
    line: &Line<'_>,
    header: &Header,
    fields: &mut Fields,
    last_time: Option<f64>,
    describe: bool,
    dropped: &mut Vec<String>,
) -> Result<Row, Rejection> {
    dropped.clear();
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
    let cell_text = |i: usize| {
        let k = header.index.get(i).copied().flatten()?;
        fields.get(text, k)
    };
    let mut row = required(line.number, &cell_text).map_err(rejection("unparsable value"))?;
    optional(&mut row, &cell_text, describe, dropped);
    if row.pressure_pa.is_none()
        && row.accel_up_mps2.is_none()
        && !row.dropped.contains(Channel::Accel)
    {
        return Err(rejection("missing pressure")("pressure_pa is empty".into()));
    }
    if let Some(problem) = physical(&row) {
        dropped.clear();
        return Err(rejection("non-physical value")(problem));
    }
    if let Some(t) = last_time.filter(|t| row.time_s <= *t) {
        dropped.clear();
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

/// The row's required cells as numbers, its optional channels empty.
fn required<'a>(line: u64, cell_text: &impl Fn(usize) -> Option<&'a str>) -> Result<Row, String> {
    let time_s = cell(cell_text(0), "time_s")?.ok_or("time_s is empty")?;
    let pressure_pa = cell(cell_text(1), "pressure_pa")?.map(|v| v as f32);
    Ok(Row {
        line,
        time_s,
        pressure_pa,
        temperature_c: None,
        humidity_pct: None,
        accel_up_mps2: None,
        known_altitude_m: None,
        sensor_temperature_c: None,
        gnss_altitude_m: None,
        gnss_accuracy_m: None,
        dropped: Dropped::default(),
    })
}

/// Read the optional channels into `row`: an unparsable, infinite or NaN cell, or a
/// value out of the channel's range, drops the channel (recorded in `row.dropped`, its
/// problem pushed to `dropped` when `describe`).
fn optional<'a>(
    row: &mut Row,
    cell_text: &impl Fn(usize) -> Option<&'a str>,
    describe: bool,
    dropped: &mut Vec<String>,
) {
    for (i, channel) in (2..).zip(Channel::ALL) {
        // an absent column or an empty cell: no value
        let Some(text) = cell_text(i).filter(|t| !t.is_empty()) else {
            continue;
        };
        let problem = match cell(Some(text), channel.column()) {
            Ok(Some(v)) => match channel.problem(v as f32) {
                None => {
                    *row.slot(channel) = Some(v as f32);
                    continue;
                }
                Some(problem) => problem,
            },
            Ok(None) => continue,
            Err(problem) => problem,
        };
        row.dropped.insert(channel);
        if describe {
            dropped.push(problem);
        }
    }
}

/// Check a row's required values for physical sense. Returns the problem, if any.
pub(crate) fn physical(row: &Row) -> Option<String> {
    if let Some(p) = row.pressure_pa {
        if p <= 0.0 {
            return Some(format!("pressure_pa must be positive, got {}", number(p)));
        }
        if p > 200_000.0 {
            return Some(format!("pressure_pa {} is above 2000 hPa", number(p)));
        }
    }
    None
}
