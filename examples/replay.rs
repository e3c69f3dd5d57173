//! Replay a recorded log through the isohypse pipeline: output table, SVG plot and a
//! short summary.
//!
//! ```text
//! cargo run --release --example replay                      # the built-in demo logs
//! cargo run --release --example replay -- flight.csv --preset balloon \
//!     --latitude-deg 64.2 --start-altitude-m 310 --out flight.out.csv --plot flight.svg
//! ```
//!
//! Input: CSV with a header row, columns by name in any order (a name given twice is
//! refused), `#` lines are comments (also indented ones), blank lines are skipped:
//! `time_s` (required, strictly increasing), `pressure_pa` (required column; an empty
//! cell is allowed only in a row that carries `accel_up_mps2`: an accelerometer-only
//! row between barometer samples, used by the estimator and given no output row),
//! `temperature_c`, `humidity_pct`, `accel_up_mps2`, `known_altitude_m`. One line is one
//! row (`\n`, `\r\n` or `\r` ends it; a quoted field cannot span lines), and line
//! numbers in messages count every line of the file, comments and blank ones included.
//! Column names are matched exactly (case matters) after trimming blanks; other columns
//! are ignored. Blanks around a field are ignored; an empty cell in an optional column
//! means "no value" (not a bad row). Numbers: decimal point, optional sign and exponent
//! (`+1.01325e5`); `inf`, `nan` and values beyond the physical ranges reject the row.
//! Bytes that are not UTF-8 spoil only the rows they are in (a Latin-1 comment is fine).
//!
//! Output: `time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,
//! ascent_m,descent_m,flags`, one row per accepted barometer row. `NaN` in a numeric
//! column means "no value": the height, speed and sigma of a flagged row before the
//! first accepted sample (nothing to carry forward yet), and with `--filter off` the
//! vertical speed of a log with a single accepted row. With `--filter off` the vertical
//! speed is the height difference to the last accepted row over the time between them,
//! whatever its size; the first accepted row, which has no row before it, shows the
//! speed of the step after it.
//!
//! Exit codes: 0 success (rows may have been skipped: see the summary, which lists every
//! bad row); 1 bad command line or a file that cannot be read or written; 2 a bad row
//! with `--strict`; 3 no usable row at all (empty file, no data row, every row bad: the
//! error lists them; missing or repeated required column).

use std::collections::BTreeMap;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, ValueEnum};
use isohypse::pipeline::{
    Estimator, Flags, HeightModel, Output, Pipeline, Sample, Settings, Tracking,
};
use isohypse::time::Instant;

/// Replay a pressure log through the isohypse pipeline (the same per-sample pipeline
/// the firmware runs) and write the heights, an SVG plot and a summary.
#[derive(Parser, Debug)]
#[command(version, long_about = None, after_help = AFTER_HELP)]
pub(crate) struct Cli {
    /// Input CSV log. Without it the three built-in demo logs (balloon, drone, hike)
    /// are replayed and the files go to --out-dir.
    pub(crate) input: Option<PathBuf>,
    /// Output CSV (default: next to the input, `<input>.out.csv`).
    #[arg(long, value_name = "FILE")]
    pub(crate) out: Option<PathBuf>,
    /// SVG plot of raw and filtered height, vertical speed, phases and totals
    /// (default: `<input>.svg`).
    #[arg(long, value_name = "FILE.svg")]
    pub(crate) plot: Option<PathBuf>,
    /// Summary text file (default: `<input>.summary.txt`; always printed too).
    #[arg(long, value_name = "FILE")]
    pub(crate) summary: Option<PathBuf>,
    /// Directory for the demo run's files (no input given).
    #[arg(long, value_name = "DIR", default_value = "target/replay")]
    pub(crate) out_dir: PathBuf,
    /// Settings preset for the kind of device.
    #[arg(long, value_enum, default_value_t = PresetArg::Balloon)]
    pub(crate) preset: PresetArg,
    /// Height model: `standard` (U.S. 1976 pressure altitude plus datum), `sounding`
    /// (layer-by-layer hypsometric integration with each row's temperature and
    /// humidity), `mean` (two-point hypsometric method from the first row: the column
    /// at the mean of the first and the current temperature) or `offset` (standard
    /// atmosphere warmer or colder by --temperature-offset-k). Default: the preset's
    /// (balloon: sounding; drone, hike: standard).
    #[arg(long, value_enum)]
    pub(crate) model: Option<ModelArg>,
    /// Temperature offset from standard for `--model offset`, K (positive: warmer).
    #[arg(
        long,
        value_name = "K",
        allow_hyphen_values = true,
        default_value_t = 0.0,
        value_parser = finite_number
    )]
    pub(crate) temperature_offset_k: f32,
    /// `off`: pointwise conversion: no smoothing, no outlier rejection, no weather hold
    /// (hike totals then count every move beyond a 3 m band); `on`: the preset's
    /// estimator and trackers.
    #[arg(long, value_enum, default_value_t = FilterArg::On)]
    pub(crate) filter: FilterArg,
    /// Height of the first row, or of the ground reference averaged over the rows at
    /// rest before motion starts; sets the datum. Without it: the standard pressure
    /// altitude (drone preset with the filter on: 0, height above the take-off point).
    #[arg(long, value_name = "H", allow_hyphen_values = true, value_parser = finite_number)]
    pub(crate) start_altitude_m: Option<f32>,
    /// Latitude for gravity (sounding model, geometric heights). Without it: standard
    /// gravity 9.80665 m/s^2.
    #[arg(long, value_name = "D", allow_hyphen_values = true, value_parser = finite_number)]
    pub(crate) latitude_deg: Option<f32>,
    /// Stop at the first bad row with exit code 2 instead of skipping it.
    #[arg(long)]
    pub(crate) strict: bool,
    /// Print nothing but errors.
    #[arg(long)]
    pub(crate) quiet: bool,
}

const AFTER_HELP: &str = "\
Input columns: time_s (required), pressure_pa (required; empty only in an
accelerometer-only row), temperature_c, humidity_pct, accel_up_mps2, known_altitude_m.
Names match exactly (case matters); other columns are ignored. Lines starting with #
(after any blanks) are comments; blank lines are skipped. Blanks around fields are
ignored; an empty optional cell means no value. Numbers like 95000, +1.01325e5; inf and
nan are refused.
Output columns: time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,
ascent_m,descent_m,flags. NaN means no value: a flagged row before the first accepted
one has no height, speed or sigma. With --filter off the speed is the difference to the
previous accepted row (the first accepted row shows the step after it).
A bad row (wrong field count, unparsable or non-physical value, time not after the
previous row) is reported with its line number and skipped, or stops the run with
--strict (exit 2); line numbers count every line of the file. The first 20 messages
are printed, the summary file lists them all. Exit codes: 0 ok, 1 usage or I/O error,
2 bad row with --strict, 3 no usable row (the error lists the bad rows) or a missing
or repeated column name.
Not certified for aviation, navigation or life-safety use (see SAFETY.md).";

/// A numeric option value: a finite number that fits an `f32` (without this check
/// `1e40` would become infinity and be reported as `inf`, not as what was typed).
pub(crate) fn finite_number(text: &str) -> Result<f32, String> {
    // parsed and checked as a cell is, then narrowed
    let v = cell(Some(text), "the value")?.ok_or_else(|| "no value given".to_string())?;
    let f = v as f32;
    if f.is_finite() {
        Ok(f)
    } else {
        Err(format!(
            "'{text}' is not a finite number within +-3.4e38 (NaN and infinities are refused)"
        ))
    }
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum PresetArg {
    Balloon,
    Drone,
    Hike,
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ModelArg {
    /// U.S. 1976 pressure altitude plus the datum.
    Standard,
    /// Layer-by-layer integration with each row's temperature and humidity.
    Sounding,
    /// Two-point hypsometric method: the column at the mean of the first row's and the
    /// current row's temperature.
    Mean,
    /// The standard atmosphere offset by --temperature-offset-k (a warm or cold day).
    Offset,
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum FilterArg {
    On,
    Off,
}

/// Profile capacity of the host pipeline (balloon descent profile).
pub(crate) const PROFILE_LEVELS: usize = 512;

/// A parsed input row.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Row {
    /// Line of the input file the row came from.
    #[allow(dead_code)]
    pub(crate) line: u64,
    pub(crate) time_s: f64,
    pub(crate) pressure_pa: Option<f32>,
    pub(crate) temperature_c: Option<f32>,
    pub(crate) humidity_pct: Option<f32>,
    pub(crate) accel_up_mps2: Option<f32>,
    pub(crate) known_altitude_m: Option<f32>,
}

/// Why a run failed.
#[derive(Debug)]
pub(crate) enum Failure {
    Usage(String),
    Io(String),
    StrictRow(String),
    NoRows(String),
}

impl Failure {
    pub(crate) fn code(&self) -> u8 {
        match self {
            Failure::Usage(_) | Failure::Io(_) => 1,
            Failure::StrictRow(_) => 2,
            Failure::NoRows(_) => 3,
        }
    }
    pub(crate) fn message(&self) -> &str {
        match self {
            Failure::Usage(m) | Failure::Io(m) | Failure::StrictRow(m) | Failure::NoRows(m) => m,
        }
    }
}

/// What one replay produced.
#[derive(Debug, Default)]
pub(crate) struct Replay {
    pub(crate) outputs: Vec<(Row, Output)>,
    pub(crate) accel_rows: usize,
    pub(crate) rejected: BTreeMap<String, usize>,
    pub(crate) messages: Vec<String>,
    pub(crate) flag_counts: BTreeMap<&'static str, usize>,
    pub(crate) events: Vec<(String, f64, f32)>,
}

const COLUMNS: [&str; 6] = [
    "time_s",
    "pressure_pa",
    "temperature_c",
    "humidity_pct",
    "accel_up_mps2",
    "known_altitude_m",
];

pub(crate) fn settings_for(cli: &Cli) -> Result<Settings, Failure> {
    // The preset is valid; each option is checked as it is applied, so that a value out
    // of range is reported with the option that gave it.
    let check = |s: &Settings, option: String| {
        s.validate()
            .map_err(|e| Failure::Usage(format!("{option}: {e}")))
    };
    let mut s = match cli.preset {
        PresetArg::Balloon => Settings::balloon(),
        PresetArg::Drone => Settings::drone(),
        PresetArg::Hike => Settings::hike(),
    };
    match cli.model {
        Some(ModelArg::Standard) => s.model = HeightModel::Standard,
        Some(ModelArg::Sounding) => {
            s.model = HeightModel::Sounding {
                descent_on_profile: true,
            }
        }
        Some(ModelArg::Mean) => {
            s.model = HeightModel::Column(isohypse::model::TemperatureModel::MeanOfEnds)
        }
        Some(ModelArg::Offset) => {
            s.model = HeightModel::Column(isohypse::model::TemperatureModel::StandardOffset {
                delta_k: cli.temperature_offset_k,
            });
            check(
                &s,
                format!("--temperature-offset-k {}", cli.temperature_offset_k),
            )?;
        }
        None => {}
    }
    if cli.filter == FilterArg::Off {
        // pointwise conversion: no estimator, no spike gate, and for the hike preset
        // no smoothing or weather hold either (plain totals)
        s.estimator = Estimator::Off;
        s.spike_gate_m = None;
        // and no datum but the one given: without `--start-altitude-m` each row's
        // height is its pressure altitude, whatever the preset (the drone preset's
        // height above the take-off point needs `--start-altitude-m 0`)
        s.start_altitude_m = None;
        if let isohypse::pipeline::Tracking::Hike { phases, .. } = s.tracking {
            s.tracking = isohypse::pipeline::Tracking::Flight {
                phases,
                totals_band_m: 3.0,
            };
        }
    }
    check(&s, "the chosen --preset, --model and --filter".into())?;
    if let Some(h) = cli.start_altitude_m {
        s.start_altitude_m = Some(h);
        check(&s, format!("--start-altitude-m {h}"))?;
    }
    s.latitude_deg = cli.latitude_deg;
    if let Some(d) = cli.latitude_deg {
        check(&s, format!("--latitude-deg {d}"))?;
    }
    // The replay accepts every physical pressure; the presets' narrower ranges are
    // for firmware plausibility checks.
    s.pressure_range_pa = (
        isohypse::atmosphere::US_1976.top_pressure_pa(),
        isohypse::atmosphere::US_1976.bottom_pressure_pa(),
    );
    s.validate()
        .map_err(|e| Failure::Usage(format!("invalid settings: {e}")))?;
    Ok(s)
}

/// Parse an optional numeric cell; `Err` names the problem.
pub(crate) fn cell(text: Option<&str>, name: &str) -> Result<Option<f64>, String> {
    match text.map(str::trim) {
        None | Some("") => Ok(None),
        Some(t) => match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(format!("{name} is not finite: '{t}'")),
            Err(_) => Err(format!("{name} is not a number: '{t}'")),
        },
    }
}

/// Check a row's values for physical sense. Returns the problem, if any.
pub(crate) fn physical(row: &Row) -> Option<String> {
    if let Some(p) = row.pressure_pa {
        if p <= 0.0 {
            return Some(format!("pressure_pa must be positive, got {p}"));
        }
        if p > 200_000.0 {
            return Some(format!("pressure_pa {p} is above 2000 hPa"));
        }
    }
    if let Some(t) = row.temperature_c {
        if !(-173.15..=126.85).contains(&t) {
            return Some(format!("temperature_c {t} outside 100..400 K"));
        }
    }
    if let Some(h) = row.humidity_pct {
        if !(0.0..=100.0).contains(&h) {
            return Some(format!("humidity_pct {h} outside 0..100"));
        }
    }
    if let Some(a) = row.accel_up_mps2 {
        if a.abs() > 200.0 {
            return Some(format!("accel_up_mps2 {a} beyond 200 m/s^2"));
        }
    }
    if let Some(h) = row.known_altitude_m {
        if !(-5_000.0..=90_000.0).contains(&h) {
            return Some(format!("known_altitude_m {h} outside -5 km..90 km"));
        }
    }
    None
}

// Lines and fields are split here rather than by a CSV crate: the contract is one row
// per line with messages that name the line, and a general CSV reader counts lines its
// own way around comments and CRLF endings, and lets an unclosed quote run on over the
// rows after it (both seen with the `csv` crate this tool used before).

/// The lines of the file with their numbers (from 1): a line ends at `\n`, `\r\n` or a
/// lone `\r`; a UTF-8 byte order mark at the start is dropped. Every line is counted,
/// comments and blank ones included, so that messages point at the right line.
pub(crate) fn numbered_lines(text: &str) -> impl Iterator<Item = (u64, &str)> {
    let mut rest = Some(text.strip_prefix('\u{feff}').unwrap_or(text));
    let mut number = 0u64;
    std::iter::from_fn(move || {
        let t = rest?;
        number += 1;
        match t.find(['\n', '\r']) {
            Some(i) => {
                let next = if t[i..].starts_with("\r\n") {
                    i + 2
                } else {
                    i + 1
                };
                rest = t.get(next..);
                Some((number, t.get(..i).unwrap_or("")))
            }
            None => {
                rest = None;
                Some((number, t))
            }
        }
    })
}

/// A line that holds no row: blank, or a comment (`#` after any blanks).
pub(crate) fn is_comment_or_blank(line: &str) -> bool {
    let t = line.trim();
    t.is_empty() || t.starts_with('#')
}

/// Split one line into its fields, trimmed. Quoting as in RFC 4180 (`"a, b"`, `""` for a
/// quote inside), but within the line: a quoted field that is not closed on its line is
/// an error, so that it cannot swallow the rows after it.
pub(crate) fn split_fields(line: &str) -> Result<Vec<String>, String> {
    let mut fields = Vec::new();
    let mut chars = line.chars().peekable();
    loop {
        let mut field = String::new();
        while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
            chars.next();
        }
        if chars.peek() == Some(&'"') {
            chars.next();
            let mut closed = false;
            while let Some(c) = chars.next() {
                if c != '"' {
                    field.push(c);
                } else if chars.peek() == Some(&'"') {
                    chars.next();
                    field.push('"');
                } else {
                    closed = true;
                    break;
                }
            }
            if !closed {
                return Err(format!(
                    "field {} opens a quote that is not closed on this line",
                    fields.len() + 1
                ));
            }
        }
        let mut more = false;
        for c in chars.by_ref() {
            if c == ',' {
                more = true;
                break;
            }
            field.push(c);
        }
        fields.push(field.trim().to_string());
        if !more {
            return Ok(fields);
        }
    }
}

/// Read and validate the log; run every accepted row through the pipeline.
pub(crate) fn replay(text: &str, settings: Settings, strict: bool) -> Result<Replay, Failure> {
    let mut pipeline = Pipeline::<PROFILE_LEVELS>::new(settings)
        .map_err(|e| Failure::Usage(format!("invalid settings: {e}")))?;
    let mut lines = numbered_lines(text).filter(|(_, l)| !is_comment_or_blank(l));
    let Some((header_line, header)) = lines.next() else {
        return Err(Failure::NoRows("empty file: no header row".into()));
    };
    let headers = split_fields(header).map_err(|e| {
        Failure::NoRows(format!(
            "line {header_line}: cannot read the header row: {e}"
        ))
    })?;
    for name in COLUMNS {
        if headers.iter().filter(|h| *h == name).count() > 1 {
            return Err(Failure::NoRows(format!(
                "line {header_line}: column '{name}' appears more than once in the header"
            )));
        }
    }
    let index: Vec<Option<usize>> = COLUMNS
        .iter()
        .map(|c| headers.iter().position(|h| h == *c))
        .collect();
    for (required, idx) in COLUMNS.iter().zip(&index).take(2) {
        if idx.is_none() {
            return Err(Failure::NoRows(format!(
                "line {header_line}: missing required column '{required}' (header: {})",
                headers.join(",")
            )));
        }
    }
    let width = headers.len();
    let mut out = Replay::default();
    let mut last_time: Option<f64> = None;
    // The library takes integer microseconds from an epoch: the first row's time.
    let mut epoch: Option<f64> = None;
    // What the output shows (see `shown`): the pointwise speed is the tool's own
    // difference, and rows before the first estimate show NaN.
    let pointwise = matches!(settings.estimator, Estimator::Off)
        && matches!(settings.tracking, Tracking::Flight { .. });
    let mut shown = Shown::default();
    let mut data_rows = 0usize;
    let reject = |out: &mut Replay, line: u64, reason: &str, detail: String| {
        let message = format!("line {line}: {detail}");
        *out.rejected.entry(reason.to_string()).or_default() += 1;
        if strict {
            return Err(Failure::StrictRow(message));
        }
        out.messages.push(message);
        Ok(())
    };
    for (line, text) in lines {
        data_rows += 1;
        let record = match split_fields(text) {
            Ok(r) => r,
            Err(problem) => {
                reject(&mut out, line, "unterminated quote", problem)?;
                continue;
            }
        };
        if record.len() != width {
            reject(
                &mut out,
                line,
                "wrong number of fields",
                format!("{} fields, the header has {width}", record.len()),
            )?;
            continue;
        }
        let get = |i: usize| {
            index
                .get(i)
                .copied()
                .flatten()
                .and_then(|k| record.get(k))
                .map(String::as_str)
        };
        let parsed = (|| -> Result<Row, String> {
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
        })();
        let row = match parsed {
            Ok(r) => r,
            Err(problem) => {
                reject(&mut out, line, "unparsable value", problem)?;
                continue;
            }
        };
        if row.pressure_pa.is_none() && row.accel_up_mps2.is_none() {
            reject(
                &mut out,
                line,
                "missing pressure",
                "pressure_pa is empty".into(),
            )?;
            continue;
        }
        if let Some(problem) = physical(&row) {
            reject(&mut out, line, "non-physical value", problem)?;
            continue;
        }
        if let Some(t) = last_time {
            if row.time_s <= t {
                reject(
                    &mut out,
                    line,
                    "time not increasing",
                    format!("time_s {} is not after the previous row's {t}", row.time_s),
                )?;
                continue;
            }
        }
        last_time = Some(row.time_s);
        let t0 = *epoch.get_or_insert(row.time_s);
        let instant = Instant::from_micros(((row.time_s - t0) * 1.0e6).round() as u64);
        match row.pressure_pa {
            None => {
                // accelerometer-only row
                if let Some(a) = row.accel_up_mps2 {
                    if pipeline.accelerometer(instant, a).is_err() {
                        *out.flag_counts.entry("accel_ignored").or_default() += 1;
                    }
                }
                if row.known_altitude_m.is_some() {
                    // a fix needs the pressure of its own row; counted, not silently lost
                    *out.flag_counts.entry("fix_ignored").or_default() += 1;
                }
                out.accel_rows += 1;
            }
            Some(p) => {
                let sample = Sample {
                    time: instant,
                    pressure_pa: p,
                    temperature_c: row.temperature_c,
                    humidity_pct: row.humidity_pct,
                    accel_up_mps2: row.accel_up_mps2,
                    known_altitude_m: row.known_altitude_m,
                };
                let o = shown.output(pipeline.process(&sample), row.time_s, pointwise);
                for name in o.flags.names() {
                    *out.flag_counts.entry(name).or_default() += 1;
                }
                if let Some(e) = o.event {
                    out.events.push((
                        e.phase.name().to_string(),
                        t0 + e.time.as_micros() as f64 * 1.0e-6,
                        e.height_m,
                    ));
                }
                out.outputs.push((row, o));
            }
        }
    }
    if out.outputs.is_empty() {
        let rejected: usize = out.rejected.values().sum();
        let mut message = if data_rows == 0 {
            format!("no data row after the header (line {header_line})")
        } else if rejected == 0 {
            format!(
                "no row with a pressure ({} accelerometer-only rows)",
                out.accel_rows
            )
        } else {
            format!(
                "no usable row: {rejected} of {data_rows} data rows rejected, {} accelerometer-only",
                out.accel_rows
            )
        };
        // the bad rows are listed here: no summary file is written for such a run
        for m in out.messages.iter().take(20) {
            message.push_str(&format!("\n  {m}"));
        }
        if out.messages.len() > 20 {
            message.push_str(&format!("\n  ... {} more", out.messages.len() - 20));
        }
        return Err(Failure::NoRows(message));
    }
    if pointwise {
        forward_difference_at_start(&mut out.outputs);
    }
    Ok(out)
}

/// Pointwise, the first taken row has no step behind it: once the run is over it shows
/// the speed of the step after it (a forward difference at the start of a differenced
/// series, as at the ends of any numerical derivative; common practice), and so do the
/// flagged rows that carried its speed forward. A log with one taken row keeps NaN.
fn forward_difference_at_start(outputs: &mut [(Row, Output)]) {
    let Some(first) = outputs.iter().position(|(_, o)| o.altitude_m.is_finite()) else {
        return;
    };
    let rest = outputs.get_mut(first..).unwrap_or_default();
    let Some(speed) = rest
        .iter()
        .map(|(_, o)| o.vertical_speed_mps)
        .find(|v| v.is_finite())
    else {
        return;
    };
    for (_, o) in rest
        .iter_mut()
        .take_while(|(_, o)| o.vertical_speed_mps.is_nan())
    {
        o.vertical_speed_mps = speed;
    }
}

/// What the output table shows of the pipeline's outputs. Two departures from the raw
/// [`Output`], both so that no number is printed that was not measured or estimated:
///
/// - Before the first accepted sample there is no estimate to carry forward: a flagged
///   row there shows NaN for the height (and raw height), vertical speed and sigma,
///   instead of the pipeline's zeroed output, which would read as a height of 0 m.
/// - Pointwise (`--filter off`), the vertical speed of a taken sample is the difference
///   of its height and the last taken sample's over their time step, computed here in
///   f64. The pipeline's own difference refuses steps faster than 10 km/s or shorter
///   than 1 ms and then repeats the last speed, which would print a stale value as if
///   it were this step's. The first taken sample has no step: NaN here, replaced by the
///   next step's speed once the run is over ([`forward_difference_at_start`]). A
///   flagged sample carries the last shown values forward, as the pipeline does.
#[derive(Debug, Default)]
pub(crate) struct Shown {
    /// The last taken sample (not rejected, not held back as an outlier): time and
    /// height, and the speed shown for it.
    last: Option<(f64, f32, f32)>,
}

impl Shown {
    pub(crate) fn output(&mut self, mut o: Output, time_s: f64, pointwise: bool) -> Output {
        let taken = o.accepted() && !o.flags.contains(Flags::OUTLIER);
        match (taken, self.last) {
            (false, None) => {
                // no estimate exists yet
                o.altitude_m = f32::NAN;
                o.raw_altitude_m = f32::NAN;
                o.vertical_speed_mps = f32::NAN;
                o.altitude_sigma_m = f32::NAN;
            }
            (false, Some((_, _, speed))) => {
                if pointwise {
                    o.vertical_speed_mps = speed;
                }
            }
            (true, last) => {
                if pointwise {
                    o.vertical_speed_mps = match last {
                        Some((t0, h0, _)) => {
                            let v = (f64::from(o.altitude_m) - f64::from(h0)) / (time_s - t0);
                            let v = v as f32;
                            if v.is_finite() { v } else { f32::NAN }
                        }
                        None => f32::NAN,
                    };
                }
                self.last = Some((time_s, o.altitude_m, o.vertical_speed_mps));
            }
        }
        o
    }
}

pub(crate) fn write_output(path: &Path, replay: &Replay) -> Result<(), Failure> {
    let io = |e: std::io::Error| Failure::Io(format!("{}: {e}", path.display()));
    let mut f = std::io::BufWriter::new(fs::File::create(path).map_err(io)?);
    writeln!(
        f,
        "time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,ascent_m,descent_m,flags"
    )
    .map_err(io)?;
    for (row, o) in &replay.outputs {
        let flags: Vec<&str> = o.flags.names().collect();
        writeln!(
            f,
            "{},{},{:.3},{:.3},{:.3},{},{:.2},{:.2},{}",
            row.time_s,
            row.pressure_pa.unwrap_or(f32::NAN),
            o.altitude_m,
            o.vertical_speed_mps,
            o.altitude_sigma_m,
            o.phase.name(),
            o.ascent_m,
            o.descent_m,
            flags.join("|")
        )
        .map_err(io)?;
    }
    f.flush().map_err(io)
}

pub(crate) fn summary_text(name: &str, settings: &Settings, replay: &Replay) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    let accepted: Vec<&(Row, Output)> = replay
        .outputs
        .iter()
        .filter(|(_, o)| o.accepted())
        .collect();
    let _ = writeln!(s, "== {name} ==");
    let _ = writeln!(
        s,
        "model: {:?}; estimator: {}; start altitude: {}; latitude: {}",
        settings.model,
        match settings.estimator {
            Estimator::Off => "off",
            Estimator::Kalman(_) => "kalman",
        },
        settings
            .start_altitude_m
            .map_or("none (pressure altitude)".to_string(), |h| format!("{h} m")),
        settings
            .latitude_deg
            .map_or("none (standard gravity)".to_string(), |d| format!(
                "{d} deg"
            )),
    );
    let _ = writeln!(
        s,
        "rows: {} barometer rows in output, {} accelerometer-only rows, {} rejected",
        replay.outputs.len(),
        replay.accel_rows,
        replay.rejected.values().sum::<usize>()
    );
    for (reason, n) in &replay.rejected {
        let _ = writeln!(s, "  rejected ({reason}): {n}");
    }
    if let Some((row, top)) = accepted
        .iter()
        .max_by(|a, b| a.1.altitude_m.total_cmp(&b.1.altitude_m))
    {
        let _ = writeln!(s, "top: {:.1} m at t = {:.1} s", top.altitude_m, row.time_s);
    }
    if let Some((_, last)) = replay.outputs.last() {
        let _ = writeln!(
            s,
            "totals: ascent {:.1} m, descent {:.1} m; final height {}; final phase {}",
            last.ascent_m,
            last.descent_m,
            if last.altitude_m.is_finite() {
                format!("{:.1} m", last.altitude_m)
            } else {
                "none (no accepted sample)".to_string()
            },
            last.phase.name()
        );
        if let Some(t) = last.tendency_hpa {
            let _ = writeln!(s, "3-hour pressure tendency: {t:+.2} hPa");
        }
    }
    if replay.events.is_empty() {
        let _ = writeln!(s, "phases: no phase change");
    } else {
        let _ = writeln!(s, "phases:");
        for (phase, t, h) in &replay.events {
            let _ = writeln!(s, "  {phase:<8} from t = {t:.1} s at {h:.1} m");
        }
    }
    if let Some(note) = slow_log_note(settings, replay) {
        let _ = writeln!(s, "{note}");
    }
    if !replay.flag_counts.is_empty() {
        let list: Vec<String> = replay
            .flag_counts
            .iter()
            .map(|(k, v)| format!("{k} {v}"))
            .collect();
        let _ = writeln!(s, "flags: {}", list.join(", "));
    }
    s
}

/// A note for a log whose barometer rows are further apart than the Kalman filter's
/// dropout step (`VerticalKalmanConfig::max_step_s`: 0.5 s in the drone preset): each
/// such step is a dropout, so (nearly) every sample re-acquires at its own measurement,
/// and the height is unfiltered and the speed meaningless. The preset is the user's
/// choice, so the run goes on; the note says why the output looks so. `None` when the
/// median step is within the dropout step or there is no Kalman filter.
pub(crate) fn slow_log_note(settings: &Settings, replay: &Replay) -> Option<String> {
    let Estimator::Kalman(config) = settings.estimator else {
        return None;
    };
    let mut steps: Vec<f64> = replay
        .outputs
        .windows(2)
        .map(|w| w[1].0.time_s - w[0].0.time_s)
        .collect();
    if steps.is_empty() {
        return None;
    }
    steps.sort_by(f64::total_cmp);
    let median = steps[steps.len() / 2];
    (median > f64::from(config.max_step_s)).then(|| {
        format!(
            "note: the median step between barometer rows is {median:.3} s, longer than this \
             preset's dropout step ({} s): the filter re-acquires at nearly every sample, so \
             heights are unfiltered and speeds not estimated; a preset for slower logs \
             (--preset balloon or hike) suits this log",
            config.max_step_s
        )
    })
}

/// (time s, raw height m, filtered height m, vertical speed m/s, total ascent m)
pub(crate) type PlotPoint = (f64, f64, f64, f64, f64);

pub(crate) fn write_plot(path: &Path, title: &str, replay: &Replay) -> Result<(), Failure> {
    use plotters::prelude::*;
    let fail = |e: String| Failure::Io(format!("{}: plot: {e}", path.display()));
    let pts: Vec<PlotPoint> = replay
        .outputs
        .iter()
        .filter(|(_, o)| o.accepted())
        .map(|(r, o)| {
            (
                r.time_s,
                o.raw_altitude_m as f64,
                o.altitude_m as f64,
                o.vertical_speed_mps as f64,
                o.ascent_m as f64,
            )
        })
        .collect();
    if pts.is_empty() {
        // Every sample was flagged (e.g. all pressures outside the model's range): the
        // output table still has its rows; the plot says why it is empty.
        let root = SVGBackend::new(path, (1000, 700)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| fail(e.to_string()))?;
        root.draw(&Text::new(
            format!("{title}: no accepted sample to plot (see the flags in the output)"),
            (40, 340),
            ("sans-serif", 20).into_font(),
        ))
        .map_err(|e| fail(e.to_string()))?;
        root.present().map_err(|e| fail(e.to_string()))?;
        return Ok(());
    }
    let (t0, t1) = pts
        .iter()
        .fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let t1 = if t1 > t0 { t1 } else { t0 + 1.0 };
    let range = |f: &dyn Fn(&PlotPoint) -> f64| {
        let (lo, hi) = pts
            .iter()
            .fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(f(p)), b.max(f(p))));
        let pad = ((hi - lo) * 0.05).max(0.5);
        (lo - pad)..(hi + pad)
    };
    let h_lo_range = range(&|p| p.1.min(p.2));
    let h_hi_range = range(&|p| p.1.max(p.2));
    let h_range = h_lo_range.start..h_hi_range.end;
    // the vertical speed may be NaN (pointwise: the first row has no step)
    let v_range = {
        let (lo, hi) = pts
            .iter()
            .map(|p| p.3)
            .filter(|v| v.is_finite())
            .fold((f64::MAX, f64::MIN), |(a, b), v| (a.min(v), b.max(v)));
        if lo <= hi {
            let pad = ((hi - lo) * 0.05).max(0.5);
            (lo - pad)..(hi + pad)
        } else {
            -1.0..1.0
        }
    };
    let root = SVGBackend::new(path, (1000, 700)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| fail(e.to_string()))?;
    let (upper, lower) = root.split_vertically(430);
    let mut chart = ChartBuilder::on(&upper)
        .caption(format!("{title}: height"), ("sans-serif", 20))
        .margin(10)
        .x_label_area_size(35)
        .y_label_area_size(70)
        .build_cartesian_2d(t0..t1, h_range)
        .map_err(|e| fail(e.to_string()))?;
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc("height (m)")
        .draw()
        .map_err(|e| fail(e.to_string()))?;
    chart
        .draw_series(LineSeries::new(
            pts.iter().map(|p| (p.0, p.1)),
            RGBColor(170, 170, 170),
        ))
        .map_err(|e| fail(e.to_string()))?
        .label("raw (this sample alone)")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], RGBColor(170, 170, 170)));
    chart
        .draw_series(LineSeries::new(
            pts.iter().map(|p| (p.0, p.2)),
            BLUE.stroke_width(2),
        ))
        .map_err(|e| fail(e.to_string()))?
        .label("filtered")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], BLUE));
    let (h_lo, h_hi) = (chart.y_range().start, chart.y_range().end);
    for (k, (phase, t, _)) in replay.events.iter().enumerate() {
        // stagger the labels so that close events stay readable
        let label_y = h_hi - (h_hi - h_lo) * (0.04 + 0.05 * (k % 3) as f64);
        chart
            .draw_series(LineSeries::new([(*t, h_lo), (*t, h_hi)], RED.mix(0.6)))
            .map_err(|e| fail(e.to_string()))?;
        chart
            .draw_series([Text::new(
                phase.clone(),
                (*t, label_y),
                ("sans-serif", 13).into_font().color(&RED),
            )])
            .map_err(|e| fail(e.to_string()))?;
    }
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .draw()
        .map_err(|e| fail(e.to_string()))?;
    let mut vchart = ChartBuilder::on(&lower)
        .caption("vertical speed and total ascent", ("sans-serif", 18))
        .margin(10)
        .x_label_area_size(35)
        .y_label_area_size(70)
        .right_y_label_area_size(70)
        .build_cartesian_2d(t0..t1, v_range)
        .map_err(|e| fail(e.to_string()))?
        .set_secondary_coord(t0..t1, range(&|p| p.4));
    vchart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc("vertical speed (m/s)")
        .draw()
        .map_err(|e| fail(e.to_string()))?;
    vchart
        .configure_secondary_axes()
        .y_desc("total ascent (m)")
        .draw()
        .map_err(|e| fail(e.to_string()))?;
    vchart
        .draw_series(LineSeries::new(
            pts.iter().filter(|p| p.3.is_finite()).map(|p| (p.0, p.3)),
            GREEN.stroke_width(2),
        ))
        .map_err(|e| fail(e.to_string()))?
        .label("vertical speed")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], GREEN));
    vchart
        .draw_secondary_series(LineSeries::new(pts.iter().map(|p| (p.0, p.4)), MAGENTA))
        .map_err(|e| fail(e.to_string()))?
        .label("total ascent")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 20, y)], MAGENTA));
    vchart
        .configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .draw()
        .map_err(|e| fail(e.to_string()))?;
    root.present().map_err(|e| fail(e.to_string()))?;
    Ok(())
}

/// Run one log and write its files; returns the summary text.
pub(crate) fn run_one(
    name: &str,
    text: &str,
    cli: &Cli,
    out: &Path,
    plot: &Path,
    summary: &Path,
) -> Result<String, Failure> {
    let settings = settings_for(cli)?;
    let result = replay(text, settings, cli.strict)?;
    if !cli.quiet {
        for m in result.messages.iter().take(20) {
            eprintln!("{name}: {m}");
        }
        if result.messages.len() > 20 {
            eprintln!(
                "{name}: ... {} more bad rows (all are listed in {})",
                result.messages.len() - 20,
                summary.display()
            );
        }
    }
    write_output(out, &result)?;
    write_plot(plot, name, &result)?;
    let mut text = summary_text(name, &settings, &result);
    text.push_str(&format!(
        "files: {} {} {}\n",
        out.display(),
        plot.display(),
        summary.display()
    ));
    // The file gets every bad row's message (the terminal only the first 20).
    let mut file_text = text.clone();
    if !result.messages.is_empty() {
        file_text.push_str("bad rows:\n");
        for m in &result.messages {
            file_text.push_str(&format!("  {m}\n"));
        }
    }
    fs::write(summary, &file_text)
        .map_err(|e| Failure::Io(format!("{}: {e}", summary.display())))?;
    Ok(text)
}

/// The built-in demo logs with the settings their scenario calls for (the invented
/// sites of examples/sim: the balloon field at 64.2 N, 310 m; the drone yard; the ridge
/// walk starting at 652 m).
/// (name, log text, preset, latitude, start altitude)
pub(crate) type Demo = (
    &'static str,
    &'static str,
    PresetArg,
    Option<f32>,
    Option<f32>,
);

pub(crate) const DEMOS: [Demo; 3] = [
    (
        "balloon",
        include_str!("data/balloon.csv"),
        PresetArg::Balloon,
        Some(64.2),
        Some(310.0),
    ),
    (
        "drone",
        include_str!("data/drone.csv"),
        PresetArg::Drone,
        None,
        Some(0.0),
    ),
    (
        "hike",
        include_str!("data/hike.csv"),
        PresetArg::Hike,
        None,
        None,
    ),
];

pub(crate) fn run(cli: &Cli) -> Result<(), Failure> {
    match &cli.input {
        Some(input) => {
            // Bytes that are not UTF-8 (a comment written in Latin-1, a corrupt block)
            // become U+FFFD: they spoil only the rows they are in, which are then
            // rejected by line like any other unreadable row.
            let bytes =
                fs::read(input).map_err(|e| Failure::Io(format!("{}: {e}", input.display())))?;
            let text = String::from_utf8_lossy(&bytes);
            let with = |ext: &str| PathBuf::from(format!("{}.{ext}", input.display()));
            let out = cli.out.clone().unwrap_or_else(|| with("out.csv"));
            let plot = cli.plot.clone().unwrap_or_else(|| with("svg"));
            let summary = cli.summary.clone().unwrap_or_else(|| with("summary.txt"));
            let name = input
                .file_stem()
                .map_or("log".to_string(), |s| s.to_string_lossy().into_owned());
            let text = run_one(&name, &text, cli, &out, &plot, &summary)?;
            if !cli.quiet {
                print!("{text}");
            }
        }
        None => {
            fs::create_dir_all(&cli.out_dir)
                .map_err(|e| Failure::Io(format!("{}: {e}", cli.out_dir.display())))?;
            for (name, text, preset, lat, start) in DEMOS {
                let demo_cli = Cli {
                    preset,
                    latitude_deg: cli.latitude_deg.or(lat),
                    start_altitude_m: cli.start_altitude_m.or(start),
                    input: None,
                    out: None,
                    plot: None,
                    summary: None,
                    out_dir: cli.out_dir.clone(),
                    model: cli.model,
                    temperature_offset_k: cli.temperature_offset_k,
                    filter: cli.filter,
                    strict: cli.strict,
                    quiet: cli.quiet,
                };
                let dir = &cli.out_dir;
                let text = run_one(
                    name,
                    text,
                    &demo_cli,
                    &dir.join(format!("{name}.out.csv")),
                    &dir.join(format!("{name}.svg")),
                    &dir.join(format!("{name}.summary.txt")),
                )?;
                if !cli.quiet {
                    println!("{text}");
                }
            }
            if !cli.quiet {
                println!(
                    "demo run done: output CSV, SVG plot and summary of each log are in {}",
                    cli.out_dir.display()
                );
            }
        }
    }
    Ok(())
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 1 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    match run(&cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            eprintln!("error: {}", f.message());
            ExitCode::from(f.code())
        }
    }
}
