//! [`Walk`]: a hand-held or wrist device's height, climb and descent totals that ignore
//! noise and weather drift, known-elevation fixes and the pressure tendency.

use super::spike::SpikeGate;
use super::stages::{
    Carried, Inputs, Offset, TimeBase, altimeter_change_m, change_at, check_altimeter,
    check_common, difference_speed, fix_agrees, pointwise_sigma_m, standard_height,
};
use super::{Flags, Output, Sample, Use, WalkState};
use crate::Error;
use crate::datum::AltimeterSetting;
use crate::flight::{PhaseCore, PhaseSettings};
use crate::part::PartDescription;
use crate::time::Instant;
use crate::track::HikeConfig;
use crate::track::hike::HikeState;
use crate::units::Height;

/// A walking device's settings. [`WalkSettings::DEFAULT`] suits a barometer read once a
/// second.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WalkSettings {
    /// The tracker: smoothing, totals' band, rest detection, fixes, tendency.
    pub tracker: HikeConfig,
    /// Thresholds and debounce times of the states.
    pub states: PhaseSettings,
    /// Altimeter setting of the standard atmosphere (pressure altitude by default).
    pub altimeter_setting: AltimeterSetting,
    /// Known elevation of the start, m (a trailhead sign), taken as a fix on the first
    /// sample; `None`: the first sample's height as the altimeter setting gives it.
    pub start_altitude_m: Option<f32>,
    /// Lowest pressure the barometer reads, Pa: a reading at or below it is
    /// saturated ([`Flags::SATURATED`]); [`Self::with_part`] sets it from the part.
    pub min_pressure_pa: f32,
    /// Highest pressure the barometer reads, Pa: a reading at or above it is
    /// saturated.
    pub max_pressure_pa: f32,
    /// 1-sigma pressure noise of the barometer, Pa.
    pub pressure_noise_pa: f32,
    /// 1-sigma uncertainty of the column temperature, K.
    pub temperature_uncertainty_k: f32,
    /// Time constant with which a new altimeter setting moves the height, s.
    pub fix_time_constant_s: f32,
    /// Longest step between samples taken as a normal step, s.
    pub max_gap_s: f32,
    /// A height further than this from the median of the last five taken is an
    /// outlier, held back (after five in a row the next is taken: a real step), m.
    pub spike_gate_m: f32,
    /// Time constant of the vertical-speed smoother, s.
    pub speed_time_constant_s: f32,
}

impl WalkSettings {
    /// The preset.
    pub const DEFAULT: WalkSettings = WalkSettings {
        tracker: HikeConfig::DEFAULT,
        states: PhaseSettings::HIKE,
        altimeter_setting: AltimeterSetting::Standard,
        start_altitude_m: None,
        min_pressure_pa: 25_000.0,
        max_pressure_pa: 110_000.0,
        pressure_noise_pa: 2.0,
        temperature_uncertainty_k: 5.0,
        fix_time_constant_s: 30.0,
        // a walker may switch the device off for a few hours
        max_gap_s: 21_600.0,
        // walking moves a few metres between samples; a spike moves tens to hundreds
        spike_gate_m: 15.0,
        // the raw difference of 2 Pa noise at 1 Hz is 0.2 m/s
        speed_time_constant_s: 30.0,
    };

    /// These settings with the pressure range and noise of the barometer `part`
    /// ([`PartDescription::noise_pa`]); every other field as it was.
    ///
    /// ```
    /// use isohypse::part::PartDescription;
    /// use isohypse::uses::WalkSettings;
    ///
    /// // a part read to 10 hPa, 0.02 hPa steps, no noise figure (values made up)
    /// const PART: PartDescription = PartDescription {
    ///     name: "example",
    ///     pressure_min_pa: 1_000.0,
    ///     pressure_max_pa: 120_000.0,
    ///     resolution_pa: 2.0,
    ///     noise_rms_pa: None,
    ///     conversion_time_us: 10_000,
    ///     has_humidity: false,
    /// };
    /// static SETTINGS: WalkSettings = WalkSettings::DEFAULT.with_part(&PART);
    /// assert_eq!(SETTINGS.min_pressure_pa, 1_000.0);
    /// assert!((SETTINGS.pressure_noise_pa - 2.0 / 12f32.sqrt()).abs() < 1e-6);
    /// ```
    pub const fn with_part(self, part: &PartDescription) -> Self {
        Self {
            min_pressure_pa: part.pressure_min_pa,
            max_pressure_pa: part.pressure_max_pa,
            pressure_noise_pa: part.noise_pa(),
            ..self
        }
    }

    /// Checks every field against its documented range. Errors:
    /// [`Error::InvalidSetting`] and the nested settings' errors.
    pub fn validate(&self) -> Result<(), Error> {
        check_common(
            self.min_pressure_pa,
            self.max_pressure_pa,
            self.pressure_noise_pa,
            self.temperature_uncertainty_k,
            self.fix_time_constant_s,
            self.max_gap_s,
        )?;
        let start_ok = self
            .start_altitude_m
            .is_none_or(|h| h.is_finite() && h.abs() < 90_000.0);
        let gate_ok = self.spike_gate_m.is_finite() && self.spike_gate_m > 0.0;
        let speed_ok = self.speed_time_constant_s.is_finite() && self.speed_time_constant_s >= 0.0;
        if !(start_ok && gate_ok && speed_ok) {
            return Err(Error::InvalidSetting);
        }
        check_altimeter(self.altimeter_setting)?;
        self.tracker.validate()?;
        self.states.validate()
    }
}

/// A walking device: smoothed height, ascent and descent totals that ignore noise and
/// weather drift at rest, known-elevation fixes, the 3-hour pressure tendency and its
/// falling-pressure alert; states not started, climbing, level, descending, resting.
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::uses::{Sample, Walk, WalkSettings};
/// let mut walk = Walk::new(&WalkSettings::DEFAULT)?;
/// let out = walk.process(&Sample {
///     time: Instant::ZERO,
///     pressure_pa: 93_500.0,
///     known_altitude_m: Some(652.0), // the trailhead sign
///     ..Sample::default()
/// });
/// assert!((out.altitude_m - 652.0).abs() < 0.5);
/// println!("ascent {} m, descent {} m", out.ascent_m, out.descent_m);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Walk<'a> {
    settings: &'a WalkSettings,
    hike: HikeState,
    gate: SpikeGate,
    phases: PhaseCore,
    /// Offset of the height after a change of the altimeter setting, m; it slews back
    /// to 0 (the walk's own fixes live in its tracker).
    offset_m: f32,
    time: TimeBase,
    altimeter_setting: AltimeterSetting,
    last_pressure_pa: f32,
    last: Carried,
}

impl<'a> Walk<'a> {
    /// A walk with `settings` (validated). Errors: as [`WalkSettings::validate`].
    pub fn new(settings: &'a WalkSettings) -> Result<Self, Error> {
        settings.validate()?;
        Ok(Self {
            settings,
            hike: HikeState::new(&settings.tracker)?,
            gate: SpikeGate::new(),
            phases: PhaseCore::new(&settings.states)?,
            offset_m: 0.0,
            time: TimeBase::default(),
            altimeter_setting: settings.altimeter_setting,
            last_pressure_pa: 0.0,
            last: Carried::default(),
        })
    }

    /// The settings.
    pub fn settings(&self) -> &'a WalkSettings {
        self.settings
    }

    /// The state now.
    pub fn state(&self) -> WalkState {
        let resting = self.last.flags().contains(Flags::AT_REST);
        WalkState::from_phase(self.phases.phase(), resting)
    }

    /// Samples the spike gate held back.
    pub fn outlier_count(&self) -> u32 {
        self.gate.outliers
    }

    /// The highest height of the walk, m.
    pub fn apex_m(&self) -> Option<f32> {
        self.phases.apex_m()
    }

    /// The last output (a zeroed one before any sample).
    pub fn last_output(&self) -> Output<WalkState> {
        let time = self.time.last().unwrap_or(Instant::ZERO);
        let mut out = self.carry(time, self.last.flags());
        if self.last.changed() {
            out.change = change_at(&self.phases, time, walk_words);
        }
        out
    }

    /// A new altimeter setting at run time (a new QNH): the height moves to it through
    /// `fix_time_constant_s`. Errors, state unchanged: as [`WalkSettings::validate`].
    pub fn set_altimeter_setting(&mut self, setting: AltimeterSetting) -> Result<(), Error> {
        check_altimeter(setting)?;
        let change = altimeter_change_m(self.last_pressure_pa, self.altimeter_setting, setting)?;
        self.offset_m -= change;
        self.altimeter_setting = setting;
        Ok(())
    }

    fn carry(&self, time: Instant, flags: Flags) -> Output<WalkState> {
        let totals = (
            self.hike.totals().ascent_m(),
            self.hike.totals().descent_m(),
        );
        let mut out = self.last.output(time, self.state(), totals, flags);
        out.tendency_hpa = self.hike.tendency_hpa();
        if flags.contains(Flags::SATURATED) {
            let speed = super::STALE_SPEED_SIGMA_MPS.walk;
            out.altitude_sigma_m = self.last.stale_sigma_m(self.time.last(), time, speed);
        }
        out
    }

    /// Process one barometer sample. Never fails: problems are reported in
    /// [`Output::flags`], and a rejected sample leaves the walk unchanged.
    pub fn process(&mut self, sample: &Sample) -> Output<WalkState> {
        let s = self.settings;
        let time = match self.time.step(sample.time, s.max_gap_s) {
            Ok(step) => step,
            Err(flags) => return self.carry(sample.time, flags),
        };
        let inputs = match Inputs::check(sample, s.min_pressure_pa, s.max_pressure_pa) {
            Ok(inputs) => inputs,
            Err(flags) => return self.carry(sample.time, flags),
        };
        let mut flags = inputs.flags;
        if time.fault {
            flags.set(Flags::CLOCK_FAULT);
        }
        let p = inputs.pressure;
        let Ok((model_m, t_std)) = standard_height(p, self.altimeter_setting) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        let column_k = inputs.temperature.unwrap_or(t_std).kelvin();
        let offset = Offset {
            offset_m: self.offset_m,
            target_m: 0.0,
        }
        .slewed(time.dt, s.fix_time_constant_s);
        let raw_m = model_m + offset.offset_m;
        if Height::from_meters(raw_m).is_err() || HikeState::check_pressure(&s.tracker, p).is_err()
        {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        }
        // seconds the gate held back since the last sample taken (the trackers see
        // only the samples taken)
        let held_back_s = if self.gate.age_s.is_finite() {
            self.gate.age_s
        } else {
            0.0
        };
        // after a clock fault the heights behind the gate are of another time
        let mut gate = if time.fault {
            SpikeGate::new()
        } else {
            self.gate
        };
        let gap = time.dt_or_zero();
        if !time.fault && gate.is_spike(gap, model_m, s.spike_gate_m) {
            return self.hold_back(sample.time, gap, flags);
        }
        gate.accept(gap, model_m);
        // nothing below refuses the sample
        let first = !self.hike.started();
        // after a clock fault the time elapsed is unknown: the tracker takes it as the
        // longest gap (it follows the new height and lets stale tendency values go)
        let since = if time.fault {
            s.max_gap_s
        } else {
            gap + held_back_s
        };
        let mut r = self.hike.step(&s.tracker, since, raw_m);
        let current_m = if first { raw_m } else { self.last.altitude_m };
        if inputs.fix_m.is_some_and(|fix| !fix_agrees(fix, current_m)) {
            flags.set(Flags::FIX_IGNORED);
        }
        let fix = inputs
            .fix_m
            .filter(|&fix| fix_agrees(fix, current_m))
            .or(if first { s.start_altitude_m } else { None });
        if let Some(h) = fix.and_then(|k| Height::from_meters(k).ok()) {
            // the first fix of a walk applies at once, later ones slew
            if first {
                if self.hike.set_elevation(h).is_ok() {
                    r.height = h;
                }
            } else {
                let _ = self.hike.fix_elevation(h);
            }
            flags.set(Flags::FIX_APPLIED);
        }
        if r.resting {
            flags.set(Flags::AT_REST);
        }
        if r.falling_pressure_alert {
            flags.set(Flags::FALLING_PRESSURE);
        }
        let h = r.height.meters();
        // vertical speed of the tracked height, smoothed; its state is the last
        // output's speed (0 before the first)
        let mut v = self.last.vertical_speed_mps;
        if let Some(dt) = time.dt {
            if let Some(raw_v) = difference_speed(h - self.last.altitude_m, dt) {
                v += crate::filter::lag_gain(dt, s.speed_time_constant_s) * (raw_v - v);
            }
        }
        let (noise, dk) = (s.pressure_noise_pa, s.temperature_uncertainty_k);
        let sigma_m = pointwise_sigma_m(noise, dk, p, column_k, raw_m);
        let changed =
            matches!(self.phases.step(&s.states, gap + held_back_s, h, v), Ok(x) if x.event);
        self.gate = gate;
        self.offset_m = offset.offset_m;
        self.time.commit(sample.time);
        self.last_pressure_pa = p.pa();
        self.last = Carried::new(h, raw_m, v, sigma_m, flags, changed);
        let mut out = self.carry(sample.time, flags);
        out.tendency_hpa = r.tendency_hpa;
        if changed {
            out.change = change_at(&self.phases, sample.time, walk_words);
        }
        out
    }

    /// A spike held back: the estimate carried forward and flagged; its time counts as
    /// the last one (the gate counts toward taking a real step).
    fn hold_back(&mut self, time: Instant, gap: f32, flags: Flags) -> Output<WalkState> {
        // the rest verdict stands until a sample is taken
        let resting = self.last.flags().0 & Flags::AT_REST.0;
        let flags = Flags(flags.0 | Flags::OUTLIER.0 | resting);
        self.gate.hold(gap);
        let out = self.carry(time, flags);
        self.time.commit(time);
        self.last.set_flags(flags);
        out
    }

    /// The clock was restarted on purpose: the next sample starts a new time base
    /// without a clock-fault flag; totals, state and the tendency ring are kept.
    pub fn restart_clock(&mut self) {
        self.time.forget();
    }
}

crate::snapshot::snap_fields!(impl['a] Walk<'a> {
    hike,
    gate,
    phases,
    offset_m,
    time,
    altimeter_setting,
    last_pressure_pa,
    last,
});

impl<'a> Walk<'a> {
    /// Bytes of a walk's snapshot ([`Self::snapshot`]).
    pub const SNAPSHOT_LEN: usize =
        crate::snapshot::FRAME_LEN + <Walk<'static> as crate::snapshot::Snap>::LEN;

    /// Writes the whole state into `out` (at least [`Self::SNAPSHOT_LEN`] bytes;
    /// versioned and checksummed, see [`crate::snapshot`]) and returns the bytes
    /// written. Errors: [`Error::CapacityFull`] if `out` is too short.
    pub fn snapshot(&self, out: &mut [u8]) -> Result<usize, Error> {
        crate::snapshot::write(self, 3, 0, out)
    }

    /// A walk with `settings` (the ones the snapshot was taken with) in the state of
    /// `snapshot`. Errors: those of [`Self::new`], [`Error::SnapshotCorrupt`],
    /// [`Error::SnapshotVersion`], [`Error::SnapshotMismatch`].
    pub fn restore(settings: &'a WalkSettings, snapshot: &[u8]) -> Result<Self, Error> {
        let mut walk = Self::new(settings)?;
        crate::snapshot::read(&mut walk, 3, 0, snapshot)?;
        Ok(walk)
    }
}

/// The walk's words for a confirmed change (the rest detector's verdict is the
/// output's state, not the change's).
fn walk_words(p: crate::flight::Phase) -> WalkState {
    WalkState::from_phase(p, false)
}

impl Use for Walk<'_> {
    type State = WalkState;
    fn process(&mut self, sample: &Sample) -> Output<WalkState> {
        Walk::process(self, sample)
    }
    /// A walk has no accelerometer: the sample is ignored.
    fn accelerometer(&mut self, _time: Instant, _accel_up_mps2: f32) -> Result<(), Error> {
        Ok(())
    }
    fn restart_clock(&mut self) {
        Walk::restart_clock(self)
    }
}

// The design's goal for a walk's state on 32-bit cores, checked by every such build.
#[cfg(target_pointer_width = "32")]
const _: () = assert!(core::mem::size_of::<Walk<'static>>() <= 256);
