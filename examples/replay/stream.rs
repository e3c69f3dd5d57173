//! The run: lines read, rows checked, each accepted row through the pipeline and on to
//! the writers, one at a time. What is kept across rows is bounded (the last row's
//! state, the plot's reduced data, the first messages and counts), so memory does not
//! grow with the log.

use std::collections::BTreeMap;
use std::io::BufRead;

use super::engine::{Output, Settings};

use super::Failure;
use super::delay::Delay;
use super::engine::{Engine, Point, UseSettings, dropped_flags, flag_names, point};
use super::lines::{Fields, Lines, is_comment_or_blank};
use super::progress::Progress;
use super::row::{Header, Row, parse};
use super::summary::{Event, Stats};

/// Where each output row goes (with the tool's view of it).
pub(crate) type Sink<'a> = dyn FnMut(&Row, &Output, &Point) -> Result<(), Failure> + 'a;

/// Data rows between two updates of the progress indicator.
const PROGRESS_EVERY: usize = 1 << 14;

/// Read `input` and run every accepted row through the pipeline; each output row goes
/// to `sink`. With `strict`, the first bad row stops the run.
pub(crate) fn stream(
    input: impl BufRead,
    settings: Settings,
    strict: bool,
    progress: &mut Progress,
    sink: &mut Sink<'_>,
) -> Result<Stats, Failure> {
    let mut lines = Lines::new(input);
    let header = read_header(&mut lines)?;
    let settings = settings.infer(&header);
    let use_settings = UseSettings::new(&settings);
    let mut engine = Engine::new(settings, &use_settings)?;
    let mut stats = Stats::default();
    stats.settings = Some(settings);
    let mut delay = Delay::new(engine.pointwise());
    let mut fields = Fields::default();
    let mut dropped = Vec::new();
    let mut last_time = None;
    let mut emit = |row: Row, o: Output, stats: &mut Stats| {
        let p = point(&o, &row);
        stats.add(&p);
        sink(&row, &o, &p)
    };
    loop {
        if stats.data_rows % PROGRESS_EVERY == 0 {
            progress.update(lines.position(), stats.data_rows);
        }
        let Some(line) = lines.next_line().map_err(read_failure)? else {
            break;
        };
        if is_comment_or_blank(&line.text) {
            continue;
        }
        stats.data_rows += 1;
        let describe = strict || stats.messages.wants_more() || stats.warnings.wants_more();
        let row = match parse(
            &line,
            &header,
            &mut fields,
            last_time,
            describe,
            &mut dropped,
        ) {
            Ok(row) => row,
            Err(r) => {
                *stats.rejected.entry(r.reason).or_default() += 1;
                if strict {
                    return Err(Failure::StrictRow(format!(
                        "line {}: {}",
                        line.number, r.detail
                    )));
                }
                stats
                    .messages
                    .push_with(|| format!("line {}: {}", line.number, r.detail));
                continue;
            }
        };
        if !row.dropped.is_empty() {
            warn(line.number, &dropped, strict, &mut stats)?;
        }
        stats.count_channels(&row);
        last_time = Some(row.time_s);
        match row.pressure_pa {
            None => accelerometer_row(&mut engine, &row, &mut stats),
            Some(p) => {
                let o = engine.barometer(&row, p);
                delay.push(row, o, &mut |r, o| emit(r, o, &mut stats))?;
            }
        }
    }
    delay.finish(&mut |r, o| emit(r, o, &mut stats))?;
    if stats.rows == 0 {
        return Err(no_rows(&stats, header.line));
    }
    Ok(stats)
}

/// A kept row with dropped channels (their `problems`): a warning, or with `strict`
/// the end of the run.
fn warn(line: u64, problems: &[String], strict: bool, stats: &mut Stats) -> Result<(), Failure> {
    if strict {
        return Err(Failure::StrictRow(format!(
            "line {line}: {} (a bad optional value: without --strict the channel is dropped \
             and the row kept)",
            problems.join("; ")
        )));
    }
    stats.warnings.push_with(|| {
        format!(
            "line {line}: {} (dropped; the row is kept)",
            problems.join("; ")
        )
    });
    Ok(())
}

fn read_failure(e: std::io::Error) -> Failure {
    Failure::Io(format!("reading the log: {e}"))
}

/// The first line that is not a comment or blank.
fn read_header(lines: &mut Lines<impl BufRead>) -> Result<Header, Failure> {
    while let Some(line) = lines.next_line().map_err(read_failure)? {
        if !is_comment_or_blank(&line.text) {
            return Header::read(&line);
        }
    }
    Err(Failure::NoRows("empty file: no header row".into()))
}

/// An accelerometer-only row: to the estimator, no output row. Its dropped channels
/// are counted under their flags' names, as an output row's would be.
fn accelerometer_row(engine: &mut Engine, row: &Row, stats: &mut Stats) {
    for name in flag_names(dropped_flags(row.dropped)) {
        stats.count_flag(name);
    }
    if let Some(a) = row.accel_up_mps2 {
        if !engine.accelerometer(row.time_s, a) {
            stats.count_flag("accel_ignored");
        }
    }
    if row.known_altitude_m.is_some() {
        // a fix needs the pressure of its own row; counted, not silently lost
        stats.count_flag("fix_ignored");
    }
    stats.accel_rows += 1;
}

/// Why a run gave no output row, with its first bad rows (no summary file is written
/// for such a run).
fn no_rows(stats: &Stats, header_line: u64) -> Failure {
    let rejected = stats.rejected_rows();
    let mut message = if stats.data_rows == 0 {
        format!("no data row after the header (line {header_line})")
    } else if rejected == 0 {
        format!(
            "no row with a pressure ({} accelerometer-only rows)",
            stats.accel_rows
        )
    } else {
        format!(
            "no usable row: {rejected} of {} data rows rejected, {} accelerometer-only",
            stats.data_rows, stats.accel_rows
        )
    };
    let list = stats.messages.lines(20, "  ", "bad rows", "");
    if !list.is_empty() {
        message.push('\n');
        message.push_str(list.trim_end());
    }
    Failure::NoRows(message)
}

/// A run kept whole in memory, for tests and the fuzz target: every output row with the
/// pipeline's own output, and the run's counts.
#[allow(dead_code)] // the tool itself streams
#[derive(Debug, Default)]
pub(crate) struct Replay {
    pub(crate) outputs: Vec<(Row, Output)>,
    pub(crate) accel_rows: usize,
    pub(crate) rejected: BTreeMap<&'static str, usize>,
    /// The first [`super::messages::Messages::LIMIT`] messages about bad rows.
    pub(crate) messages: Vec<String>,
    /// Messages about bad rows beyond those kept.
    pub(crate) messages_left_off: usize,
    /// The first [`super::messages::Messages::LIMIT`] warnings about dropped channels.
    pub(crate) warnings: Vec<String>,
    /// Warnings beyond those kept.
    pub(crate) warnings_left_off: usize,
    pub(crate) flag_counts: BTreeMap<&'static str, usize>,
    pub(crate) events: Vec<Event>,
}

/// Run the log `text` and keep every output row.
#[allow(dead_code)] // the tool itself streams
pub(crate) fn replay(text: &str, settings: Settings, strict: bool) -> Result<Replay, Failure> {
    let mut outputs = Vec::new();
    let stats = stream(
        text.as_bytes(),
        settings,
        strict,
        &mut Progress::none(),
        &mut |row, o, _| {
            outputs.push((*row, *o));
            Ok(())
        },
    )?;
    let flag_counts = stats.flag_counts();
    let (messages, messages_left_off) = stats.messages.into_parts();
    let (warnings, warnings_left_off) = stats.warnings.into_parts();
    Ok(Replay {
        outputs,
        accel_rows: stats.accel_rows,
        rejected: stats.rejected,
        messages,
        messages_left_off,
        warnings,
        warnings_left_off,
        flag_counts,
        events: stats.events,
    })
}
