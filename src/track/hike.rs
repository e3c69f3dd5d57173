//! The walking-device tracker: height, ascent/descent totals, weather drift at rest,
//! known-elevation fixes and the 3-hour pressure tendency, one sample at a time.
//!
//! # Method
//!
//! Each sample (time in seconds, pressure) goes through these steps; the first three can
//! reject it, and a rejected sample leaves the whole tracker unchanged.
//!
//! 1. **Validation.** Time finite and strictly after the previous accepted sample;
//!    pressure inside [`HikeConfig::min_pressure_pa`]..=[`HikeConfig::max_pressure_pa`].
//! 2. **Standard height.** `h = ` U.S. 1976 pressure altitude of the pressure
//!    ([`crate::atmosphere::pressure_altitude`]). Callers with their own height model
//!    and filter use [`HikeTracker::update_pressure_altitude`] instead.
//! 3. **Smoothing.** A one-pole low-pass `s += k (h - s)`, `k = dt / (tau + dt)` (the
//!    backward-Euler form of `tau ds/dt = h - s`, no exponential per sample), with
//!    `tau =` [`HikeConfig::smoothing_time_constant_s`]. Default 2 s: at 1 Hz, `k = 1/3`
//!    and the noise standard deviation shrinks by `sqrt(k / (2 - k)) = 0.45` (2 Pa, about
//!    0.17 m, becomes 0.08 m; the stationary variance of `s += k (h - s)` fed white noise
//!    is `k / (2 - k)` of the input's, a geometric series, common practice); the lag on
//!    a 0.15 m/s climb is `v tau = 0.3 m`, and a sharp turn at the top of a climb loses
//!    `v tau ln 2 = 0.2 m` of the peak (the smoother's output meets the falling input
//!    `tau ln 2` after the turn). Longer time constants cut the noise further but lose
//!    more at every turn and deliver more of the lag into the first minute of a rest (5 s
//!    gave up to 1.3 m of growth in a rest on the synthetic days, over the 1 m goal). Set 0 when the input is already filtered. Written here
//!    rather than taken from `crate::filter` so the tracker stands alone: it is three
//!    lines.
//! 4. **Rest and weather.** The rest detector ([`crate::track::rest`]) decides whether the
//!    smoothed height stands still. The *tracked height* is `s + w`, with a weather offset
//!    `w`. While resting the tracked height is held at its value when rest began, so all
//!    pressure change during rest is attributed to weather, and the rest detector learns
//!    the weather rate `b` (m/s of apparent height) with a level-and-slope tracker. When a
//!    detected rest ends, `w = hold - L` with `L` the weather level predicted for that
//!    sample, so the metres climbed while the detector was deciding are kept. When a
//!    declared rest ends, `w = hold - s`. While moving, the weather is extrapolated:
//!    `w -= b dt`, with `b` fading with a 3-hour time constant
//!    ([`RestConfig::weather_rate_memory_s`]).
//! 5. **Totals.** The tracked height feeds the hysteresis counter
//!    ([`crate::track::totals`], default band 3 m).
//! 6. **Known elevation.** The *displayed height* is `tracked + f`. A fix
//!    ([`HikeTracker::fix_elevation`]) sets a target `f* = known - tracked` and `f` slews to
//!    it as a one-pole with [`HikeConfig::fix_time_constant_s`] (default 30 s); since `f`
//!    is not part of the tracked height, a fix never adds to the totals.
//!    [`HikeTracker::set_elevation`] applies it at once (start of a walk).
//! 7. **Tendency.** Every 10 minutes the smoothed pressure is reduced to sea level with the
//!    displayed height through the standard atmosphere,
//!    `p_sl = p0 * p_std(s) / p_std(displayed)` (`p_std` = U.S. 1976
//!    [`crate::atmosphere::StandardAtmosphere::pressure_at`], `p0` = 101 325 Pa), and
//!    stored for the 3-hour tendency ([`crate::track::tendency`]). With no fix, the
//!    absolute value is only as good as the starting datum; the *change* is what counts.
//!
//! # Default hysteresis band: 3 m
//!
//! The band must exceed what the tracked height does when the walker does not move: the
//! smoothed sensor noise (peak to peak about 0.3 m for 2 Pa at 1 Hz), pressure gusts of
//! wind and of a body moving the device (a few pascals to tens of pascals, so up to about
//! 2 m, common practice), and a minute of weather drift before rest is detected (0.2 m
//! in a 1 hPa/h front). 3 m covers this and is smaller than any terrain feature a hiker
//! cares to count (choice of this crate). A band does not bias the totals of real moves:
//! the full move is counted from the turning point; only true oscillations smaller than
//! the band, and the last unfinished move, go uncounted.
//!
//! # Limits (defaults)
//!
//! * Weather change while walking is removed only as far as it continues at the rate
//!   learnt at the last rest. The rest goes into the height, about 8.3 m/hPa near sea
//!   level (10 m/hPa at 2 km), and into the totals on climbs and descents. On the
//!   synthetic days of `tests/hike_day.rs` (3 hPa over 7-9 h, 20 days) the end-of-day
//!   height error is 16-23 m with the weather held at rest only and at most 10 m with
//!   the extrapolation, and the worst total-ascent error 2.0 % and 1.1 %. A front that
//!   starts, stops or turns while walking is not followed until the next rest.
//!   Known-elevation fixes remove the error from the displayed height (not from totals
//!   already counted).
//! * From pressure alone a slow climb and a weather change look the same: at rest, a
//!   height change up to 20 m/h is taken for weather, a faster one for movement
//!   ([`RestConfig::max_weather_rate_m_per_h`]; measured numbers in
//!   [`crate::track::rest`]).
//! * Heights are standard pressure altitudes unless the caller supplies better ones: air
//!   warmer than standard by 10 K makes real height differences about 3.5 % larger than
//!   the pressure-altitude differences (thickness is proportional to the mean
//!   temperature, hypsometric equation), and the totals scale with them. Feed
//!   temperature-corrected heights through [`HikeTracker::update_pressure_altitude`] to
//!   avoid it (the tendency reduction still uses the standard atmosphere).
//! * Spikes are not removed here: put the median filter of `crate::filter` in front.
//!
//! # Time and precision
//!
//! Time is `f64` seconds from any origin: at 1e9 s (32 years) its resolution is still
//! 0.1 microsecond. Per sample only one step between two `f64` times is formed;
//! intervals are then `f32`. Heights are `f32` metres (resolution 0.5 mm at 5 km); totals
//! are integer centimetres and cannot drift.
//!
//! # Memory and time
//!
//! [`HikeTracker`] is 216 bytes on a 64-bit host: its settings (48), the pressure
//! altitudes of its pressure limits (8), the time of the last sample (8) and the state
//! proper (152: totals 28, rest detector 52, tendency ring 44 with its countdown, seven
//! heights). The state proper keeps no settings and no clock: the walk use type
//! holds it alone, reads the settings from its store (in flash with settings fixed at
//! compile time) and passes the step from its own clock. The test `state_sizes` prints
//! every part. O(1) per sample, no heap. Per sample: one pressure-altitude evaluation
//! (one power or logarithm), plus two standard-atmosphere pressures every 10 minutes for
//! the tendency.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::{track::{HikeConfig, HikeTracker}, atmosphere::US_1976, Height, Pressure};
//! let mut tracker = HikeTracker::new(HikeConfig::default())?;
//! for second in 0..600 {
//!     // Climb 0.2 m/s from 500 m for 5 minutes, then stand still.
//!     let z = 500.0 + 0.2 * (second.min(300) as f32);
//!     let p = US_1976.pressure_at(Height::from_meters(z)?)?;
//!     let report = tracker.update(Instant::from_secs(second), p)?;
//!     if second == 599 {
//!         assert!((report.ascent_m - 60.0).abs() < 1.0);
//!         assert!(report.resting);
//!     }
//! }
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::atmosphere::{SEA_LEVEL_PRESSURE_PA, US_1976};
use crate::time::Instant;
use crate::track::rest::{RestConfig, RestDetector, RestEvent, RestState};
use crate::track::tendency::{PressureTendency, TendencyConfig, TendencyRing};
use crate::track::totals::AscentTotals;
use crate::{Error, Height, Pressure};

/// Settings of [`HikeTracker`]. `Default` gives the values documented on each field.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HikeConfig {
    /// Time constant of the internal height smoother, s; 0 turns it off. Default 2 s
    /// (see the [module docs](self), step 3).
    pub smoothing_time_constant_s: f32,
    /// Hysteresis band of the totals, m. Default 3 m (see the [module docs](self)).
    pub hysteresis_band_m: f32,
    /// Time constant with which a known-elevation fix is slewed in, s; 0 applies it at the
    /// next sample. Default 30 s.
    pub fix_time_constant_s: f32,
    /// Lowest pressure accepted, Pa. Default 25 000 Pa (about 10.4 km pressure altitude,
    /// above the highest summits: about 330 hPa on the highest one, from memory).
    pub min_pressure_pa: f32,
    /// Highest pressure accepted, Pa. Default 110 000 Pa (above the highest sea-level
    /// pressure on record, about 1084 hPa, plus the deepest dry land depression, about
    /// 430 m below sea level, from memory).
    pub max_pressure_pa: f32,
    /// Rest detection.
    pub rest: RestConfig,
    /// Pressure tendency and alert.
    pub tendency: TendencyConfig,
}

impl Default for HikeConfig {
    fn default() -> Self {
        Self::DEFAULT
    }
}

impl HikeConfig {
    /// The defaults (the same as [`Default::default`]).
    pub const DEFAULT: Self = Self {
        smoothing_time_constant_s: 2.0,
        hysteresis_band_m: 3.0,
        fix_time_constant_s: 30.0,
        min_pressure_pa: 25_000.0,
        max_pressure_pa: 110_000.0,
        rest: RestConfig::DEFAULT,
        tendency: TendencyConfig::DEFAULT,
    };

    /// Checks every field: finite; time constants 0..=1 day; band as
    /// [`AscentTotals::new`]; pressure limits within the U.S. 1976 model
    /// (0.3734 Pa..=177 687 Pa) and `min < max`.
    ///
    /// Errors: [`Error::NotFinite`], [`Error::InvalidSetting`].
    pub fn validate(&self) -> Result<(), Error> {
        self.rest.validate()?;
        self.tendency.validate()?;
        AscentTotals::new(self.hysteresis_band_m)?;
        for tau in [self.smoothing_time_constant_s, self.fix_time_constant_s] {
            if !tau.is_finite() {
                return Err(Error::NotFinite);
            }
            if !(0.0..=86_400.0).contains(&tau) {
                return Err(Error::InvalidSetting);
            }
        }
        if !self.min_pressure_pa.is_finite() || !self.max_pressure_pa.is_finite() {
            return Err(Error::NotFinite);
        }
        if self.min_pressure_pa < US_1976.top_pressure_pa()
            || self.max_pressure_pa > US_1976.bottom_pressure_pa()
            || self.min_pressure_pa >= self.max_pressure_pa
        {
            return Err(Error::InvalidSetting);
        }
        Ok(())
    }
}

/// What the tracker says after each accepted sample.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HikeReport {
    /// Displayed height, m: smoothed, weather-held at rest, re-anchored by fixes.
    pub height: Height,
    /// Total ascent, m (whole centimetres).
    pub ascent_m: f32,
    /// Total descent, m (whole centimetres).
    pub descent_m: f32,
    /// True while at rest (detected or declared).
    pub resting: bool,
    /// Rest-corrected sea-level pressure of the last 10-minute mark, hPa.
    pub sea_level_pressure_hpa: Option<f32>,
    /// Change of that pressure over the last 3 hours, hPa (negative: falling).
    pub tendency_hpa: Option<f32>,
    /// The 3-hour fall reached [`TendencyConfig::falling_alert_hpa`].
    pub falling_pressure_alert: bool,
}

/// The walking-device tracker; see the [module docs](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HikeTracker {
    config: HikeConfig,
    /// Pressure altitudes of the pressure limits: (lowest, highest) accepted, m.
    height_limits_m: (f32, f32),
    /// Time of the last accepted sample, s (valid once started).
    last_time: Instant,
    state: HikeState,
}

/// What the tracker keeps besides its settings and its clock: the part a
/// [`crate::uses::Walk`] holds (it has the settings in its own, often in flash,
/// and its own clock). Crate-internal; every call that needs settings is given the
/// validated [`HikeConfig`], and every step the time since the previous sample.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct HikeState {
    /// Smoothed height before weather correction, m.
    smoothed_m: f32,
    /// Weather offset, m: set at the end of a rest, extrapolated while moving.
    weather_offset_m: f32,
    /// Compensation term of the Kahan sum of `weather_offset_m`, m.
    offset_carry_m: f32,
    /// Tracked height held during rest, m.
    hold_m: f32,
    /// Last tracked height (smoothed + weather, or hold), m.
    tracked_m: f32,
    /// Known-elevation offset now, and its target, m.
    fix_offset_m: f32,
    fix_target_m: f32,
    totals: AscentTotals,
    rest: RestDetector,
    tendency: TendencyRing,
}

impl HikeTracker {
    /// A tracker with the given settings. Errors: as [`HikeConfig::validate`].
    pub fn new(config: HikeConfig) -> Result<Self, Error> {
        let state = HikeState::new(&config)?;
        let lowest = US_1976.pressure_altitude(Pressure::from_pa(config.max_pressure_pa)?)?;
        let highest = US_1976.pressure_altitude(Pressure::from_pa(config.min_pressure_pa)?)?;
        Ok(Self {
            config,
            height_limits_m: (lowest.meters(), highest.meters()),
            last_time: Instant::ZERO,
            state,
        })
    }

    /// One barometer sample: time in seconds (any origin, strictly increasing) and the
    /// pressure.
    ///
    /// Errors (tracker unchanged): [`Error::NotFinite`] (time NaN or infinite),
    /// [`Error::NotIncreasing`] (time not after the previous accepted sample),
    /// [`Error::AboveModelTop`] (pressure below [`HikeConfig::min_pressure_pa`]),
    /// [`Error::BelowModelBottom`] (pressure above [`HikeConfig::max_pressure_pa`]).
    pub fn update(&mut self, time: Instant, pressure: Pressure) -> Result<HikeReport, Error> {
        self.check_time(time)?;
        HikeState::check_pressure(&self.config, pressure)?;
        let h = US_1976.pressure_altitude(pressure)?;
        Ok(self.step(time, h.meters()))
    }

    /// One sample given as a height the caller has already computed (and possibly
    /// filtered): the U.S. 1976 pressure altitude, or a temperature-corrected height
    /// from another model. Same rules as [`Self::update`]; the height must lie within the
    /// pressure altitudes of the configured pressure limits.
    pub fn update_pressure_altitude(
        &mut self,
        time: Instant,
        height: Height,
    ) -> Result<HikeReport, Error> {
        self.check_time(time)?;
        let h = height.meters();
        if h < self.height_limits_m.0 {
            return Err(Error::BelowModelBottom);
        }
        if h > self.height_limits_m.1 {
            return Err(Error::AboveModelTop);
        }
        Ok(self.step(time, h))
    }

    fn check_time(&self, time: Instant) -> Result<(), Error> {
        if self.state.started() && time <= self.last_time {
            return Err(Error::NotIncreasing);
        }
        Ok(())
    }

    /// The infallible part of a sample: inputs validated.
    fn step(&mut self, time: Instant, h: f32) -> HikeReport {
        // Interval in f32 (validated > 0; unused for the first sample).
        let dt = crate::filter::step_s(self.last_time, time).unwrap_or(0.0);
        self.last_time = time;
        self.state.step(&self.config, dt, h)
    }

    /// A known elevation of the device now (summit marker, map, trusted satellite fix):
    /// the displayed height slews to it with [`HikeConfig::fix_time_constant_s`]. Totals
    /// are not touched. Errors: [`Error::NotEnoughData`] before the first sample.
    pub fn fix_elevation(&mut self, elevation: Height) -> Result<(), Error> {
        self.state.fix_elevation(elevation)
    }

    /// Like [`Self::fix_elevation`] but applied at once (e.g. the start of a walk at a
    /// known trailhead). Errors: [`Error::NotEnoughData`] before the first sample.
    pub fn set_elevation(&mut self, elevation: Height) -> Result<(), Error> {
        self.state.set_elevation(elevation)
    }

    /// The user says the device is at rest (on a table, in a hut): from now on all
    /// pressure change is weather, until [`Self::end_declared_rest`].
    pub fn declare_rest(&mut self) {
        self.state.declare_rest();
    }

    /// Ends a declared rest. Automatic detection goes on from "resting", so the height
    /// stays held until the device actually moves.
    pub fn end_declared_rest(&mut self) {
        self.state.end_declared_rest();
    }

    /// Sets the totals to zero (a new walk); height, weather and tendency are kept.
    pub fn reset_totals(&mut self) {
        self.state.totals.reset();
    }

    /// Current rest state.
    pub fn rest_state(&self) -> RestState {
        self.state.rest.state()
    }

    /// The totals counter.
    pub fn totals(&self) -> &AscentTotals {
        &self.state.totals
    }

    /// The tendency tracker, as of the last sample (a copy: the tracker keeps its ring,
    /// not a [`PressureTendency`] with its own settings and clock).
    pub fn tendency(&self) -> PressureTendency {
        PressureTendency::from_ring(
            self.config.tendency,
            self.last_time,
            self.state.tendency.clone(),
        )
    }

    /// Weather drift attributed so far, m: how far weather has moved the standard
    /// pressure altitude during rests since the start (positive: pressure has fallen,
    /// so the uncorrected height would read too high).
    pub fn weather_drift_m(&self) -> f32 {
        self.state.weather_drift_m()
    }

    /// The settings.
    pub fn config(&self) -> HikeConfig {
        self.config
    }
}

impl HikeState {
    /// A state before the first sample. Errors: as [`HikeConfig::validate`].
    pub(crate) fn new(config: &HikeConfig) -> Result<Self, Error> {
        config.validate()?;
        Ok(Self {
            smoothed_m: 0.0,
            weather_offset_m: 0.0,
            offset_carry_m: 0.0,
            hold_m: 0.0,
            tracked_m: 0.0,
            fix_offset_m: 0.0,
            fix_target_m: 0.0,
            totals: AscentTotals::new(config.hysteresis_band_m)?,
            rest: RestDetector::new(),
            tendency: TendencyRing::new(),
        })
    }

    /// Whether a sample has been taken: the tendency ring stores a value at the first
    /// sample and is never emptied here (a long gap empties it and stores the new
    /// value), so it says so without a flag of its own.
    pub(crate) fn started(&self) -> bool {
        self.tendency.started()
    }

    /// The pressure limits of `c`: [`Error::AboveModelTop`] below
    /// [`HikeConfig::min_pressure_pa`], [`Error::BelowModelBottom`] above
    /// [`HikeConfig::max_pressure_pa`].
    pub(crate) fn check_pressure(c: &HikeConfig, pressure: Pressure) -> Result<(), Error> {
        let pa = pressure.pa();
        if pa < c.min_pressure_pa {
            return Err(Error::AboveModelTop);
        }
        if pa > c.max_pressure_pa {
            return Err(Error::BelowModelBottom);
        }
        Ok(())
    }

    /// The infallible part of a sample: inputs validated; `dt` is the time since the
    /// previous sample of this state (s, > 0 and finite; unused for the first).
    pub(crate) fn step(&mut self, c: &HikeConfig, dt: f32, h: f32) -> HikeReport {
        // Capped at 1e7 s (116 days) so that it stays finite whatever the time stamps (a
        // comparison, not `f32::min`: that is a library call on ARMv7E-M).
        let dt = if dt < 1.0e7 { dt } else { 1.0e7 };
        if !self.started() {
            self.smoothed_m = h;
            self.tracked_m = h;
            self.hold_m = h;
            self.rest.start(h);
        } else {
            self.smoothed_m +=
                crate::filter::lag_gain(dt, c.smoothing_time_constant_s) * (h - self.smoothed_m);
            match self.rest.update(&c.rest, dt, self.smoothed_m) {
                RestEvent::Entered => self.hold_m = self.tracked_m,
                RestEvent::Left { level_m } => {
                    self.weather_offset_m = self.hold_m - level_m;
                    self.offset_carry_m = 0.0;
                }
                RestEvent::Unchanged => {
                    if self.rest.state() == RestState::Moving {
                        // Extrapolate the weather learnt at the last rest: an open-loop
                        // sum of small steps, so compensated (Kahan) summation keeps f32
                        // rounding from building up over a long walk.
                        let step = -self.rest.weather_rate_mps() * dt - self.offset_carry_m;
                        let sum = self.weather_offset_m + step;
                        self.offset_carry_m = (sum - self.weather_offset_m) - step;
                        self.weather_offset_m = sum;
                    }
                }
            }
            self.tracked_m = match self.rest.state() {
                RestState::Moving => self.smoothed_m + self.weather_offset_m,
                RestState::Resting | RestState::DeclaredRest => self.hold_m,
            };
            self.fix_offset_m += crate::filter::lag_gain(dt, c.fix_time_constant_s)
                * (self.fix_target_m - self.fix_offset_m);
        }
        let tracked = Height::from_meters(self.tracked_m).unwrap_or(Height::ZERO);
        self.totals.update(tracked);
        let displayed_m = self.tracked_m + self.fix_offset_m;
        if self.tendency.tick(dt) {
            let sea_level = self.sea_level_pressure(displayed_m);
            self.tendency.store(sea_level);
        }
        HikeReport {
            height: Height::from_meters(displayed_m).unwrap_or(Height::ZERO),
            ascent_m: self.totals.ascent_m(),
            descent_m: self.totals.descent_m(),
            resting: self.rest.state() != RestState::Moving,
            sea_level_pressure_hpa: self.tendency.latest_hpa(),
            tendency_hpa: self.tendency.tendency_hpa(),
            falling_pressure_alert: self.tendency.falling_alert(&c.tendency),
        }
    }

    /// `p0 * p_std(s) / p_std(displayed)`: the smoothed pressure reduced to sea level
    /// through the U.S. 1976 atmosphere (module docs, step 7; `p_std` from eq. 18 and
    /// 33a/33b, `p0` = 101 325 Pa; the ratio form is a choice of this crate). `None` if
    /// either height is outside the model.
    fn sea_level_pressure(&self, displayed_m: f32) -> Option<Pressure> {
        let here = US_1976
            .pressure_at(Height::from_meters(self.smoothed_m).ok()?)
            .ok()?;
        let standard = US_1976
            .pressure_at(Height::from_meters(displayed_m).ok()?)
            .ok()?;
        Pressure::from_pa(SEA_LEVEL_PRESSURE_PA * (here.pa() / standard.pa())).ok()
    }

    /// See [`HikeTracker::fix_elevation`].
    pub(crate) fn fix_elevation(&mut self, elevation: Height) -> Result<(), Error> {
        if !self.started() {
            return Err(Error::NotEnoughData);
        }
        self.fix_target_m = elevation.meters() - self.tracked_m;
        Ok(())
    }

    /// See [`HikeTracker::set_elevation`].
    pub(crate) fn set_elevation(&mut self, elevation: Height) -> Result<(), Error> {
        self.fix_elevation(elevation)?;
        self.fix_offset_m = self.fix_target_m;
        Ok(())
    }

    /// See [`HikeTracker::declare_rest`].
    fn declare_rest(&mut self) {
        if self.rest.state() == RestState::Moving {
            self.hold_m = self.tracked_m;
        }
        self.rest.declare(self.smoothed_m);
    }

    /// See [`HikeTracker::end_declared_rest`].
    fn end_declared_rest(&mut self) {
        if self.rest.state() == RestState::DeclaredRest {
            self.weather_offset_m = self.hold_m - self.smoothed_m;
            self.offset_carry_m = 0.0;
            self.rest.release(self.smoothed_m);
        }
    }

    /// The totals counter.
    pub(crate) fn totals(&self) -> &AscentTotals {
        &self.totals
    }

    /// The 3-hour tendency, hPa (see [`PressureTendency::tendency_hpa`]).
    pub(crate) fn tendency_hpa(&self) -> Option<f32> {
        self.tendency.tendency_hpa()
    }

    /// See [`HikeTracker::weather_drift_m`].
    fn weather_drift_m(&self) -> f32 {
        match self.rest.state() {
            RestState::Moving => -self.weather_offset_m,
            RestState::Resting | RestState::DeclaredRest => self.smoothed_m - self.hold_m,
        }
    }
}

crate::snapshot::snap_fields!(HikeState {
    smoothed_m,
    weather_offset_m,
    offset_carry_m,
    hold_m,
    tracked_m,
    fix_offset_m,
    fix_target_m,
    totals,
    rest,
    tendency,
});

#[cfg(test)]
mod tests;
