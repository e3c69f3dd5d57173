//! Three-hour pressure tendency of the sea-level pressure, and a falling-pressure alert.
//!
//! # Definition
//!
//! The pressure tendency is the change of pressure over the three hours before an
//! observation: WMO-No. 8, *Guide to Instruments and Methods of Observation*, Part I,
//! chapter 3 (measurement of atmospheric pressure) (from memory); also the *Glossary of
//! Meteorology*, American Meteorological Society, entry "pressure tendency" ("the
//! character and amount of atmospheric pressure change during a specified period of time,
//! often a three-hour period preceding an observation"; wording quoted from memory). Only
//! the amount is computed here;
//! the characteristic (the shape of the change, WMO-No. 306 *Manual on Codes*, code table
//! 0200) is not.
//!
//! A walking device's station pressure changes with its height, so the value tracked is the
//! *sea-level pressure corrected for rest*: the hike tracker reduces its smoothed pressure
//! to sea level through the standard atmosphere with the displayed height, which it holds
//! while at rest (see [`crate::track::hike`]). While walking, the tracker carries on the
//! weather rate learnt at the last rest; any other pressure change while walking goes into
//! the height, so the tendency sees the weather of rest periods, that extrapolation, and
//! known-elevation fixes: it misses a fall that begins or speeds up while walking.
//!
//! # Falling-pressure alert
//!
//! [`TendencyConfig::falling_alert_hpa`] defaults to 3 hPa in 3 hours. This is common
//! practice, not a standard: forecasters' and mariners' rules of thumb treat a fall of
//! about 1 hPa per hour (3 hPa in 3 h) or more as a rapid fall that signals a front or a
//! deepening low and stronger wind within hours (from memory). The threshold is a setting.
//!
//! # Memory and time
//!
//! One value every [`SLOT_SECONDS`] (10 minutes) in a fixed ring of [`SLOTS`] = 19 values
//! (0, 10, ..., 180 minutes ago), each stored as a `u16` count of [`STEP_PA`] = 2 Pa
//! above [`FLOOR_PA`] = 50 000 Pa (so 500 hPa to 1810.68 hPa; a sea-level pressure
//! outside is stored as missing). The 0.02 hPa step rounds each value by at most
//! 0.01 hPa, so a 3-hour difference by at most 0.02 hPa, below the 0.1 hPa to which the
//! tendency is reported in synoptic practice (from memory). A plain array is used rather
//! than `heapless::Deque`: the ring never grows or shrinks, it is always full after
//! three hours, and a `u16` with a "missing" marker is a quarter of an `Option<f32>`.
//! 44 bytes for the ring and its countdown, 56 with the settings and the clock of a
//! stand-alone [`PressureTendency`].
//! O(1) per call: a gap of k slots writes k markers, bounded by [`SLOTS`].
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::{track::{PressureTendency, TendencyConfig}, Pressure};
//! let mut tendency = PressureTendency::new(TendencyConfig::default())?;
//! // A barometer at rest on a table, pressure falling 1.2 hPa per hour, one reading a minute.
//! for minute in 0..=180 {
//!     let p = Pressure::from_hpa(1012.0 - 1.2 * minute as f32 / 60.0)?;
//!     tendency.update(Instant::from_secs(minute * 60), p)?;
//! }
//! let change = tendency.tendency_hpa().unwrap();
//! assert!((change + 3.6).abs() < 0.01);
//! assert!(tendency.falling_alert());
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::time::Instant;
use crate::{Error, Pressure};

/// Seconds between stored values (10 minutes).
pub const SLOT_SECONDS: f64 = 600.0;
/// Stored values: now and every 10 minutes back to 3 hours.
pub const SLOTS: usize = 19;
/// Marker for a slot with no value (device off, or no valid reduction).
const MISSING: u16 = u16::MAX;
/// Pressure of the stored value 0, Pa.
pub const FLOOR_PA: f32 = 50_000.0;
/// Step of the stored values, Pa.
pub const STEP_PA: f32 = 2.0;

/// Settings of the tendency tracker.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TendencyConfig {
    /// Alert when the 3-hour tendency is this many hPa or more *downwards*, hPa (> 0).
    /// Default 3.0 hPa (common practice, see the [module docs](self)).
    pub falling_alert_hpa: f32,
}

impl Default for TendencyConfig {
    fn default() -> Self {
        Self::DEFAULT
    }
}

impl TendencyConfig {
    /// The defaults (the same as [`Default::default`]).
    pub const DEFAULT: Self = Self {
        falling_alert_hpa: 3.0,
    };

    /// Checks the threshold is finite and in 0 < x <= 100 hPa.
    ///
    /// Errors: [`Error::NotFinite`], [`Error::InvalidSetting`].
    pub fn validate(&self) -> Result<(), Error> {
        if !self.falling_alert_hpa.is_finite() {
            return Err(Error::NotFinite);
        }
        if self.falling_alert_hpa <= 0.0 || self.falling_alert_hpa > 100.0 {
            return Err(Error::InvalidSetting);
        }
        Ok(())
    }
}

/// Ring of sea-level pressures every 10 minutes and the 3-hour tendency; see the
/// [module docs](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PressureTendency {
    config: TendencyConfig,
    /// Time of the last accepted call, s (valid once the ring has started).
    last_time: Instant,
    ring: TendencyRing,
}

/// The ring and its schedule, without settings or clock: the part of
/// [`PressureTendency`] that the hike tracker keeps (the walk that holds it has its
/// own clock and settings). Crate-internal.
///
/// The schedule is a countdown to the next 10-minute mark in whole units of 10 us (an
/// `i32`, half the bytes of an `f64` time), moved on by the step of each call. Integer
/// arithmetic, so nothing builds up: each step is rounded once to 10 us, and steps that
/// are whole multiples of 10 us (every common sampling rate: 1, 10, 25, 50, 100, 200,
/// 400 Hz) are exact. (An `f32` countdown was tried first: at 50 Hz its rounding
/// moved the third mark by 0.12 s, and the error grows with the rate.)
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct TendencyRing {
    /// Steps of [`STEP_PA`] above [`FLOOR_PA`], or [`MISSING`].
    ring: [u16; SLOTS],
    /// Index of the newest value.
    newest: u8,
    /// Number of slots written since the start or the last reset (saturates at SLOTS);
    /// 0 only before the first value (so it also says whether the ring has started).
    filled: u8,
    /// Time from the last call to the next 10-minute mark, units of [`UNIT_S`]
    /// (<= 0: due).
    due_in: i32,
}

/// Nearest step, or [`MISSING`] outside the stored range.
fn to_steps(p: Pressure) -> u16 {
    let steps = (p.pa() - FLOOR_PA) / STEP_PA + 0.5;
    if steps >= 0.0 && steps < f32::from(MISSING) {
        // In range and finite: `as` truncates the +0.5-shifted value, i.e. rounds.
        steps as u16
    } else {
        MISSING
    }
}

fn steps_to_hpa(steps: u16) -> f32 {
    (FLOOR_PA + STEP_PA * f32::from(steps)) / 100.0
}

/// The countdown's unit, s (10 us).
const UNIT_S: f32 = 1.0e-5;
/// Units of the countdown per slot.
const SLOT_UNITS: i32 = 60_000_000;
/// Steps of this many seconds or more empty the ring whatever the countdown (19 slots
/// are 11 400 s); below it, a step in units fits an `i32` (2e9 < 2^31 - 1).
const LONG_STEP_S: f32 = 20_000.0;

impl TendencyRing {
    /// An empty ring.
    pub(crate) const fn new() -> Self {
        Self {
            ring: [MISSING; SLOTS],
            newest: 0,
            filled: 0,
            due_in: 0,
        }
    }

    /// Whether a value has been stored since the start or the last reset.
    pub(crate) const fn started(&self) -> bool {
        self.filled > 0
    }

    /// A step of `dt_s` seconds (> 0) in units of the countdown, rounded to nearest;
    /// `i32::MAX` for long steps (they empty the ring).
    fn units(dt_s: f32) -> i32 {
        if dt_s < LONG_STEP_S {
            // below 2e9: the conversion cannot saturate; `as` truncates the +0.5
            (dt_s / UNIT_S + 0.5) as i32
        } else {
            i32::MAX
        }
    }

    /// True if a 10-minute mark is reached after a step of `dt_s` from the last call
    /// (always before the first value): what [`Self::tick`] would answer.
    pub(crate) fn is_due(&self, dt_s: f32) -> bool {
        !self.started() || self.due_in.saturating_sub(Self::units(dt_s)) <= 0
    }

    /// Moves the schedule on by a step of `dt_s` seconds (> 0; anything before the first
    /// value) since the last call, and tells whether a value is due: then the caller
    /// passes it to [`Self::store`] (computing it only then) before the next tick.
    pub(crate) fn tick(&mut self, dt_s: f32) -> bool {
        if !self.started() {
            return true;
        }
        // due_in <= SLOT_UNITS before: no overflow (saturating all the same)
        self.due_in = self.due_in.saturating_sub(Self::units(dt_s));
        self.due_in <= 0
    }

    /// Stores the value due after [`Self::tick`] said so (a missing value for `None`),
    /// with the slots skipped since the last mark left empty.
    pub(crate) fn store(&mut self, sea_level: Option<Pressure>) {
        let value = sea_level.map_or(MISSING, to_steps);
        if !self.started() {
            self.push(value);
            self.due_in = SLOT_UNITS;
            return;
        }
        // Whole slots skipped between the due mark and now.
        let skipped = self.due_in.unsigned_abs() / SLOT_UNITS.unsigned_abs();
        if skipped >= SLOTS as u32 {
            self.ring = [MISSING; SLOTS];
            self.filled = 0;
            self.push(value);
            self.due_in = SLOT_UNITS;
            return;
        }
        for _ in 0..skipped {
            self.push(MISSING);
        }
        self.push(value);
        // skipped < 19 and -due_in < (skipped + 1) slots: the sum is in (0, SLOT_UNITS]
        self.due_in += (skipped as i32 + 1) * SLOT_UNITS;
    }

    fn push(&mut self, value: u16) {
        let next = (usize::from(self.newest) + 1) % SLOTS;
        if let Some(slot) = self.ring.get_mut(next) {
            *slot = value;
        }
        self.newest = next as u8;
        if usize::from(self.filled) < SLOTS {
            self.filled += 1;
        }
    }

    fn ago(&self, slots_back: usize) -> Option<u16> {
        if slots_back >= usize::from(self.filled) {
            return None;
        }
        let index = (usize::from(self.newest) + SLOTS - slots_back) % SLOTS;
        match self.ring.get(index) {
            Some(&v) if v != MISSING => Some(v),
            _ => None,
        }
    }

    /// See [`PressureTendency::latest_hpa`].
    pub(crate) fn latest_hpa(&self) -> Option<f32> {
        self.ago(0).map(steps_to_hpa)
    }

    /// See [`PressureTendency::tendency_hpa`].
    pub(crate) fn tendency_hpa(&self) -> Option<f32> {
        let now = self.ago(0)?;
        let before = self.ago(SLOTS - 1)?;
        // Exact integer difference, then one conversion.
        Some((i32::from(now) - i32::from(before)) as f32 * STEP_PA / 100.0)
    }

    /// See [`PressureTendency::falling_alert`].
    pub(crate) fn falling_alert(&self, config: &TendencyConfig) -> bool {
        self.tendency_hpa()
            .is_some_and(|t| t <= -config.falling_alert_hpa)
    }
}

impl PressureTendency {
    /// An empty tracker. Errors: as [`TendencyConfig::validate`].
    pub fn new(config: TendencyConfig) -> Result<Self, Error> {
        config.validate()?;
        Ok(Self::from_ring(config, Instant::ZERO, TendencyRing::new()))
    }

    /// A tracker around a ring (its last call at `last_time`) and checked settings.
    pub(crate) const fn from_ring(
        config: TendencyConfig,
        last_time: Instant,
        ring: TendencyRing,
    ) -> Self {
        Self {
            config,
            last_time,
            ring,
        }
    }

    /// The step from the last call to `time`, s (0 before the first call).
    fn step_to(&self, time: Instant) -> f32 {
        if self.ring.started() {
            crate::filter::step_s(self.last_time, time).unwrap_or(0.0)
        } else {
            0.0
        }
    }

    /// True if a call to [`Self::update`] at `time` would store a value: lets a caller
    /// skip computing the sea-level pressure (two power functions) on the other samples.
    pub fn is_due(&self, time: Instant) -> bool {
        self.ring.is_due(self.step_to(time))
    }

    /// Offers the sea-level pressure at `time` (seconds, any origin, strictly
    /// increasing from call to call). The value is stored if a 10-minute mark has been
    /// reached since the last stored value, and otherwise ignored. A gap longer than a
    /// slot leaves the skipped slots empty; a gap of three hours or more empties the ring.
    ///
    /// Errors (state unchanged): [`Error::NotFinite`] for a NaN or infinite time,
    /// [`Error::NotIncreasing`] for a time not after the previous call.
    pub fn update(&mut self, time: Instant, sea_level: Pressure) -> Result<(), Error> {
        if self.ring.started() && time <= self.last_time {
            return Err(Error::NotIncreasing);
        }
        if self.ring.tick(self.step_to(time)) {
            self.ring.store(Some(sea_level));
        }
        self.last_time = time;
        Ok(())
    }

    /// Newest stored sea-level pressure, hPa.
    pub fn latest_hpa(&self) -> Option<f32> {
        self.ring.latest_hpa()
    }

    /// Change of the stored sea-level pressure over the last 3 hours (newest value minus
    /// the value 18 slots earlier), hPa; negative is falling (the amount of the 3-hour
    /// pressure tendency, WMO-No. 8 Part I ch. 3, from memory; see the
    /// [module docs](self)). `None` until three hours are stored, or if either end is
    /// missing.
    pub fn tendency_hpa(&self) -> Option<f32> {
        self.ring.tendency_hpa()
    }

    /// True when the 3-hour tendency is a fall of [`TendencyConfig::falling_alert_hpa`] or
    /// more.
    pub fn falling_alert(&self) -> bool {
        self.ring.falling_alert(&self.config)
    }

    /// The settings.
    pub fn config(&self) -> TendencyConfig {
        self.config
    }

    /// Forgets every stored value; keeps the settings.
    pub fn reset(&mut self) {
        self.ring = TendencyRing::new();
    }
}

crate::snapshot::snap_fields!(TendencyRing {
    ring,
    newest,
    filled,
    due_in
});

#[cfg(test)]
mod tests;
