//! What a run adds up to, gathered row by row in bounded memory, and the summary text.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use super::engine::Settings;

use super::channels::Channel;
use super::engine::{Point, dropout_step_s, flag_names, settings_line};
use super::messages::Messages;
use super::row::Row;
use super::scale::clock;
use super::steps::Steps;
use super::story::{self, Story};

/// A phase change: (phase, time s, height m).
pub(crate) type Event = (String, f64, f32);

/// Totals of a run.
#[derive(Debug, Default, Clone)]
pub(crate) struct Stats {
    /// The settings of the run (the preset inferred where none was given).
    pub(crate) settings: Option<Settings>,
    /// Data rows read (not comments, blank lines or the header).
    pub(crate) data_rows: usize,
    /// Output rows (rows with a pressure).
    pub(crate) rows: usize,
    pub(crate) accel_rows: usize,
    /// Rejected rows by reason.
    pub(crate) rejected: BTreeMap<&'static str, usize>,
    pub(crate) messages: Messages,
    /// Warnings about kept rows with a dropped channel.
    pub(crate) warnings: Messages,
    /// Kept rows with a dropped channel.
    pub(crate) rows_with_dropped: usize,
    /// Kept rows with a satellite altitude, and with a barometer temperature.
    pub(crate) gnss_rows: usize,
    pub(crate) sensor_temperature_rows: usize,
    /// Output rows with each flag bit set: the library's bits 0..32, then the tool's
    /// own (see [`Point::flags`]).
    flag_bits: [[usize; 32]; 2],
    /// Flags of accelerometer-only rows (no output row), by name.
    other_flags: BTreeMap<&'static str, usize>,
    /// The first [`Stats::EVENTS`] phase changes.
    pub(crate) events: Vec<Event>,
    pub(crate) events_left_off: usize,
    /// The highest accepted height: (time s, height m).
    top: Option<(f64, f32)>,
    /// The last output row.
    last: Option<Point>,
    steps: Steps,
    pub(crate) story: Story,
}

impl Stats {
    /// Phase changes kept for the summary and the plot.
    pub(crate) const EVENTS: usize = 100;

    /// Count one output row.
    pub(crate) fn add(&mut self, p: &Point) {
        self.rows += 1;
        let mut bits = p.flags;
        while bits != 0 {
            let bit = bits.trailing_zeros() as usize;
            let slot = self
                .flag_bits
                .get_mut(bit / 32)
                .and_then(|b| b.get_mut(bit % 32));
            if let Some(n) = slot {
                *n += 1;
            }
            bits &= bits - 1;
        }
        if let Some((phase, t, h)) = p.event {
            if self.events.len() < Self::EVENTS {
                self.events.push((phase.to_string(), t, h));
            } else {
                self.events_left_off += 1;
            }
        }
        // the last of equal tops, as a maximum search over the whole log would give
        if p.accepted
            && self
                .top
                .is_none_or(|(_, h)| p.altitude_m.total_cmp(&h).is_ge())
        {
            self.top = Some((p.time_s, p.altitude_m));
        }
        self.last = Some(*p);
        self.steps.add(p.time_s);
        self.story.add(p);
    }

    /// Count a kept row's channels that the run does not use, and its dropped ones.
    pub(crate) fn count_channels(&mut self, row: &Row) {
        self.rows_with_dropped += usize::from(!row.dropped.is_empty());
        self.gnss_rows += usize::from(row.get(Channel::GnssAltitude).is_some());
        self.sensor_temperature_rows += usize::from(row.get(Channel::SensorTemperature).is_some());
    }

    /// Count a flag of a row without output (an accelerometer-only row).
    pub(crate) fn count_flag(&mut self, name: &'static str) {
        *self.other_flags.entry(name).or_default() += 1;
    }

    /// Rows with each flag, by the flag's name (as in the output's `flags` column).
    pub(crate) fn flag_counts(&self) -> BTreeMap<&'static str, usize> {
        let mut counts = self.other_flags.clone();
        for (bit, n) in (0..64).zip(self.flag_bits.into_iter().flatten()) {
            for name in flag_names(1 << bit).filter(|_| n > 0) {
                *counts.entry(name).or_default() += n;
            }
        }
        counts
    }

    /// Rows rejected in all.
    pub(crate) fn rejected_rows(&self) -> usize {
        self.rejected.values().sum()
    }
}

/// The summary: settings, row counts, top, totals, phases, notes and flag counts (the
/// bad rows' messages are added by the caller).
pub(crate) fn summary_text(name: &str, settings: &Settings, stats: &Stats) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "== {name} ==");
    let _ = writeln!(s, "{}", settings_line(settings));
    let _ = writeln!(
        s,
        "rows: {} barometer rows in output, {} accelerometer-only rows, {} rejected",
        stats.rows,
        stats.accel_rows,
        stats.rejected_rows()
    );
    for (reason, n) in &stats.rejected {
        let _ = writeln!(s, "  rejected ({reason}): {n}");
    }
    if stats.rows_with_dropped > 0 {
        let _ = writeln!(
            s,
            "rows with a bad optional value: {} (the channel dropped and flagged, the row kept)",
            stats.rows_with_dropped
        );
    }
    if stats.gnss_rows > 0 {
        let used = if settings.pointwise {
            "not used with --filter off"
        } else if matches!(settings.preset, super::PresetArg::Balloon) {
            "fused with the barometric height"
        } else {
            "not used by this preset (balloon only)"
        };
        let _ = writeln!(
            s,
            "gnss_altitude_m present: {used} ({} rows)",
            stats.gnss_rows
        );
    }
    if stats.sensor_temperature_rows > 0 {
        let _ = writeln!(
            s,
            "sensor_temperature_c present: not used as air temperature ({} rows)",
            stats.sensor_temperature_rows
        );
    }
    let totals_of = stats.last.map(|l| (l.ascent_m, l.descent_m));
    s.push_str(&story::lines(
        settings.preset,
        &stats.story,
        &stats.events,
        stats.top,
        totals_of,
    ));
    if let Some(last) = &stats.last {
        totals(&mut s, last);
    }
    phases(&mut s, stats);
    if let Some(note) = slow_log_note(settings, stats) {
        let _ = writeln!(s, "{note}");
    }
    let flag_counts = stats.flag_counts();
    if !flag_counts.is_empty() {
        let list: Vec<String> = flag_counts
            .iter()
            .map(|(k, v)| format!("{k} {v}"))
            .collect();
        let _ = writeln!(s, "flags: {}", list.join(", "));
    }
    s
}

fn totals(s: &mut String, last: &Point) {
    let _ = writeln!(
        s,
        "at the end: ascent {:.1} m, descent {:.1} m in all; height {}; state {}",
        last.ascent_m,
        last.descent_m,
        if last.altitude_m.is_finite() {
            format!("{:.1} m", last.altitude_m)
        } else {
            "none (no accepted sample)".to_string()
        },
        last.phase
    );
    if let Some(t) = last.tendency_hpa {
        let _ = writeln!(s, "3-hour pressure tendency: {t:+.2} hPa");
    }
}

fn phases(s: &mut String, stats: &Stats) {
    if stats.events.is_empty() {
        let _ = writeln!(s, "states: no change");
        return;
    }
    let _ = writeln!(s, "states (times after the first row, h:mm:ss):");
    let t0 = stats.story.first_s.unwrap_or(0.0);
    for (phase, t, h) in &stats.events {
        let _ = writeln!(s, "  {:<11} from {} at {h:.1} m", phase, clock(*t, t0));
    }
    if stats.events_left_off > 0 {
        let _ = writeln!(s, "  ... {} more state changes", stats.events_left_off);
    }
}

/// A note for a log whose barometer rows are further apart than the Kalman filter's
/// dropout step (`VerticalKalmanConfig::max_step_s`: 0.5 s in the drone preset): each
/// such step is a dropout, so (nearly) every sample re-acquires at its own measurement,
/// and the height is unfiltered and the speed meaningless. The preset is the user's
/// choice, so the run goes on; the note says why the output looks so. `None` when the
/// median step is within the dropout step or there is no Kalman filter.
pub(crate) fn slow_log_note(settings: &Settings, stats: &Stats) -> Option<String> {
    let max_step_s = dropout_step_s(settings)?;
    let median = stats.steps.median()?;
    (median > f64::from(max_step_s)).then(|| {
        format!(
            "note: the median step between barometer rows is {} s, longer than this \
             preset's dropout step ({max_step_s} s): the filter re-acquires at nearly every \
             sample, so heights are unfiltered and speeds not estimated; a preset for slower \
             logs (--preset balloon or hike) suits this log",
            seconds_text(median)
        )
    })
}

/// A duration in seconds for a message: three decimals, or scientific notation beyond a
/// million seconds (a time column that is not seconds).
fn seconds_text(s: f64) -> String {
    if s.abs() < 1.0e6 {
        format!("{s:.3}")
    } else {
        format!("{s:.3e}")
    }
}
