//! [`Drone`]: height above the take-off point for height hold, the barometer fused
//! with the accelerometer.

use super::stages::{
    Carried, FlightTrack, Ground, Inputs, KalmanSample, Offset, TimeBase, altimeter_change_m,
    change_at, check_altimeter, check_common, estimate_sigma_m, fix_agrees, fix_target,
    ground_tolerance_m, kalman_sigma_m, kalman_step, pointwise_sigma_m, standard_height,
};
use super::{DroneState, Flags, Output, Sample, Use};
use crate::Error;
use crate::datum::AltimeterSetting;
use crate::filter::{VerticalKalman, VerticalKalmanConfig};
use crate::flight::{Phase, PhaseSettings};
use crate::part::PartDescription;
use crate::time::Instant;
use crate::units::Height;

/// A drone's settings. [`DroneSettings::DEFAULT`] suits a multicopter with a barometer
/// at 50 Hz and an accelerometer at 200 Hz; change fields in a `const` of your own.
///
/// ```
/// use isohypse::uses::DroneSettings;
/// const MINE: DroneSettings = DroneSettings {
///     pressure_noise_pa: 2.5, // a noisier barometer
///     ..DroneSettings::DEFAULT
/// };
/// assert!(MINE.validate().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DroneSettings {
    /// The Kalman filter over height, vertical speed and accelerometer bias.
    pub kalman: VerticalKalmanConfig,
    /// Thresholds and debounce times of the states.
    pub states: PhaseSettings,
    /// Altimeter setting of the standard atmosphere (pressure altitude by default).
    pub altimeter_setting: AltimeterSetting,
    /// Height reported at the take-off point, m (0: heights above it; a surveyed
    /// elevation: heights above mean sea level).
    pub takeoff_altitude_m: f32,
    /// Samples at rest averaged into the take-off reference (>= 1).
    pub ground_samples: u32,
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
    /// Time constant with which a known-elevation fix or a new altimeter setting moves
    /// the height, s (0: at once).
    pub fix_time_constant_s: f32,
    /// Longest step between samples taken as a normal step, s; beyond it (or a step
    /// back) the sample starts a new time base ([`Flags::CLOCK_FAULT`]).
    pub max_gap_s: f32,
    /// Hysteresis band of the ascent and descent totals, m.
    pub totals_band_m: f32,
}

impl DroneSettings {
    /// The preset: 1.5 Pa barometer noise, 50 samples of take-off reference, heights
    /// above the take-off point.
    pub const DEFAULT: DroneSettings = DroneSettings {
        kalman: VerticalKalmanConfig::DEFAULT,
        states: PhaseSettings::DRONE,
        altimeter_setting: AltimeterSetting::Standard,
        takeoff_altitude_m: 0.0,
        ground_samples: 50,
        min_pressure_pa: 30_000.0,
        max_pressure_pa: 110_000.0,
        pressure_noise_pa: 1.5,
        temperature_uncertainty_k: 2.0,
        fix_time_constant_s: 2.0,
        // a drone samples at 50 Hz; ten seconds without one is a fault, not a flight
        max_gap_s: 10.0,
        totals_band_m: 0.5,
    };

    /// These settings with the pressure range and noise of the barometer `part`
    /// ([`PartDescription::noise_pa`]); every other field as it was.
    ///
    /// ```
    /// use isohypse::part::PartDescription;
    /// use isohypse::uses::DroneSettings;
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
    /// static SETTINGS: DroneSettings = DroneSettings::DEFAULT.with_part(&PART);
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
        if self.ground_samples < 1
            || !self.takeoff_altitude_m.is_finite()
            || self.takeoff_altitude_m.abs() >= 90_000.0
        {
            return Err(Error::InvalidSetting);
        }
        check_altimeter(self.altimeter_setting)?;
        self.kalman.validate()?;
        self.states.validate()
    }
}

/// A drone: height above the take-off point (averaged at rest before take-off) and
/// vertical speed from the barometer and the accelerometer, outliers gated out; states
/// on ground, climbing, holding, descending, landed.
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::uses::{Drone, DroneSettings, DroneState, Sample};
/// let mut drone = Drone::new(&DroneSettings::DEFAULT)?;
/// for k in 0..100u64 {
///     let mut sample = Sample::pressure(Instant::from_millis(20 * k), 97_700.0);
///     sample.accel_up_mps2 = Some(0.0);
///     let out = drone.process(&sample);
///     assert!(out.accepted() && out.altitude_m.abs() < 0.1);
///     assert_eq!(out.state, DroneState::OnGround);
/// }
/// // accelerometer samples between barometer samples
/// drone.accelerometer(Instant::from_millis(1_985), 0.02)?;
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Drone<'a> {
    settings: &'a DroneSettings,
    kalman: VerticalKalman<&'a VerticalKalmanConfig>,
    ground: Ground,
    offset: Offset,
    track: FlightTrack,
    time: TimeBase,
    altimeter_setting: AltimeterSetting,
    last_pressure_pa: f32,
    last: Carried,
}

impl<'a> Drone<'a> {
    /// A drone with `settings` (validated; keep them in a `static` or `const` on a
    /// device). Errors: as [`DroneSettings::validate`].
    pub fn new(settings: &'a DroneSettings) -> Result<Self, Error> {
        settings.validate()?;
        Ok(Self {
            settings,
            kalman: VerticalKalman::new(&settings.kalman)?,
            ground: Ground::new(settings.takeoff_altitude_m, settings.ground_samples)?,
            offset: Offset::default(),
            track: FlightTrack::new(&settings.states, settings.totals_band_m)?,
            time: TimeBase::default(),
            altimeter_setting: settings.altimeter_setting,
            last_pressure_pa: 0.0,
            last: Carried::default(),
        })
    }

    /// The settings.
    pub fn settings(&self) -> &'a DroneSettings {
        self.settings
    }

    /// The state now.
    pub fn state(&self) -> DroneState {
        DroneState::from_phase(self.track.phase())
    }

    /// The last output (a zeroed one before any sample).
    pub fn last_output(&self) -> Output<DroneState> {
        let time = self.time.last().unwrap_or(Instant::ZERO);
        let mut out = self.carry(time, self.last.flags());
        if self.last.changed() {
            out.change = change_at(&self.track.phases, time, DroneState::from_phase);
        }
        out
    }

    /// Barometer samples the Kalman gate refused as outliers.
    pub fn outlier_count(&self) -> u32 {
        self.kalman.rejected_count()
    }

    /// Whether the Kalman filter has settled and reuses its covariance.
    pub fn estimator_settled(&self) -> bool {
        self.kalman.is_settled()
    }

    /// The highest height since take-off, m.
    pub fn apex_m(&self) -> Option<f32> {
        self.track.phases.apex_m()
    }

    /// Re-zero: the next samples at rest become the new take-off reference.
    pub fn rezero(&mut self) {
        self.ground.rezero();
    }

    /// A new take-off altitude at run time (m): the reference is averaged anew.
    /// Errors, state unchanged: [`Error::InvalidSetting`] for a non-finite or absurd
    /// height.
    pub fn set_takeoff_altitude_m(&mut self, altitude_m: f32) -> Result<(), Error> {
        if !altitude_m.is_finite() || altitude_m.abs() >= 90_000.0 {
            return Err(Error::InvalidSetting);
        }
        self.ground.start_m = altitude_m;
        self.ground.rezero();
        Ok(())
    }

    /// A new altimeter setting at run time (a new QNH, a field's QFE): the height moves
    /// to it through `fix_time_constant_s` instead of jumping. Errors, state unchanged:
    /// as [`DroneSettings::validate`] for the setting.
    pub fn set_altimeter_setting(&mut self, setting: AltimeterSetting) -> Result<(), Error> {
        check_altimeter(setting)?;
        let change = altimeter_change_m(self.last_pressure_pa, self.altimeter_setting, setting)?;
        self.offset.offset_m -= change;
        if !self.ground.frozen {
            // the reference averaged heights of the old setting: take it anew
            self.ground.reference.rezero();
        }
        self.altimeter_setting = setting;
        Ok(())
    }

    /// Propeller wash, ground effect: the Kalman filter trusts the barometer less while
    /// set.
    pub fn set_baro_disturbed(&mut self, disturbed: bool) {
        self.kalman.set_baro_disturbed(disturbed);
    }

    fn carry(&self, time: Instant, flags: Flags) -> Output<DroneState> {
        let totals = (self.track.totals.ascent_m(), self.track.totals.descent_m());
        let mut out = self.last.output(time, self.state(), totals, flags);
        if flags.contains(Flags::SATURATED) {
            let speed = super::STALE_SPEED_SIGMA_MPS.drone;
            out.altitude_sigma_m = self.last.stale_sigma_m(self.time.last(), time, speed);
        }
        out
    }

    /// Process one barometer sample (with an accelerometer sample taken at the same
    /// time, if any). Never fails: problems are reported in [`Output::flags`], and a
    /// rejected sample leaves the drone unchanged.
    pub fn process(&mut self, sample: &Sample) -> Output<DroneState> {
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
        let Ok((model_m, t_std)) = standard_height(inputs.pressure, self.altimeter_setting) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        let column_k = inputs.temperature.unwrap_or(t_std).kelvin();
        let on_ground = self.track.phase() == Phase::Ground;
        let mut datum = self
            .ground
            .propose(self.offset, model_m, on_ground, &mut flags);
        let last_m = self.time.last().map(|_| self.last.altitude_m);
        let current_m = last_m.unwrap_or(model_m + datum.offset.offset_m);
        if inputs.fix_m.is_some_and(|fix| !fix_agrees(fix, current_m)) {
            flags.set(Flags::FIX_IGNORED);
        }
        if let Some(fix) = inputs.fix_m.filter(|&fix| fix_agrees(fix, current_m)) {
            datum.offset.target_m = fix_target(datum.offset, fix, last_m, model_m);
            datum.frozen = true;
            flags.set(Flags::FIX_APPLIED);
        }
        datum.offset = datum.offset.slewed(time.dt, s.fix_time_constant_s);
        let raw_m = model_m + datum.offset.offset_m;
        let Ok(raw) = Height::from_meters(raw_m) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        let baro = KalmanSample {
            t: sample.time,
            raw,
            sigma_m: kalman_sigma_m(s.pressure_noise_pa, inputs.pressure, column_k),
            accel_mps2: inputs.accel_mps2,
        };
        let estimate = kalman_step(&mut self.kalman, &baro, &time, &mut flags);
        // nothing below refuses the sample
        let (h, v, sigma_m) = match estimate {
            Err(()) => return self.carry(sample.time, Flags::REJECTED_MODEL),
            Ok(Some((h, v, var))) => {
                // the datum's own error: the mean of the samples at rest
                let datum = self.ground.reference.mean_sigma_m(baro.sigma_m);
                let above = h - self.ground.start_m;
                let var = var + datum * datum;
                let dk = s.temperature_uncertainty_k;
                (h, v, estimate_sigma_m(var, above, dk, column_k))
            }
            Ok(None) => {
                let above = raw_m - self.ground.start_m;
                let (noise, dk) = (s.pressure_noise_pa, s.temperature_uncertainty_k);
                let sigma = pointwise_sigma_m(noise, dk, inputs.pressure, column_k, above);
                (raw_m, 0.0, sigma)
            }
        };
        // the reference takes samples the filter accepted, at rest only
        let at_rest = datum.averaging
            && v.abs() < s.states.rest_mps
            && self
                .ground
                .agrees(model_m, ground_tolerance_m(baro.sigma_m))
            && !flags.contains(Flags::OUTLIER)
            && !flags.contains(Flags::REACQUIRED);
        let measured = !flags.contains(Flags::OUTLIER);
        let changed = self
            .track
            .step(&s.states, time.dt_or_zero(), (h, v), measured);
        let dt = time.dt_or_zero();
        self.ground
            .commit(&mut datum, at_rest.then_some(model_m), dt, sample.time);
        self.offset = datum.offset;
        self.time.commit(sample.time);
        self.last_pressure_pa = inputs.pressure.pa();
        self.last = Carried::new(h, raw_m, v, sigma_m, flags, changed);
        let mut out = self.carry(sample.time, flags);
        if changed {
            out.change = change_at(&self.track.phases, sample.time, DroneState::from_phase);
        }
        out
    }

    /// An accelerometer sample between barometer samples (earth-frame vertical
    /// acceleration with gravity removed, m/s^2). Errors, state unchanged:
    /// [`Error::TimeJump`] for a stamp further ahead of the last sample than
    /// `max_gap_s`, and those of [`VerticalKalman::predict`].
    pub fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        self.time.check_ahead(time, self.settings.max_gap_s)?;
        self.kalman.predict(time, accel_up_mps2)
    }

    /// The clock was restarted on purpose: the next sample starts a new time base
    /// without a clock-fault flag. The estimate re-acquires; totals, state and datum
    /// are kept.
    pub fn restart_clock(&mut self) {
        self.time.forget();
        self.kalman.reset();
    }
}

crate::snapshot::snap_fields!(impl['a] Drone<'a> {
    kalman,
    ground,
    offset,
    track,
    time,
    altimeter_setting,
    last_pressure_pa,
    last,
});

impl<'a> Drone<'a> {
    /// Bytes of a drone's snapshot ([`Self::snapshot`]).
    pub const SNAPSHOT_LEN: usize =
        crate::snapshot::FRAME_LEN + <Drone<'static> as crate::snapshot::Snap>::LEN;

    /// Writes the whole state into `out` (at least [`Self::SNAPSHOT_LEN`] bytes;
    /// versioned and checksummed, see [`crate::snapshot`]) and returns the bytes
    /// written. Keep it in retained RAM or flash; [`Self::restore`] continues from it.
    /// Errors: [`Error::CapacityFull`] if `out` is too short.
    pub fn snapshot(&self, out: &mut [u8]) -> Result<usize, Error> {
        crate::snapshot::write(self, 1, 0, out)
    }

    /// A drone with `settings` (the ones the snapshot was taken with) in the state of
    /// `snapshot`: its outputs continue bit for bit as the snapshotted drone's would.
    /// Errors: those of [`Self::new`], [`Error::SnapshotCorrupt`],
    /// [`Error::SnapshotVersion`], [`Error::SnapshotMismatch`].
    pub fn restore(settings: &'a DroneSettings, snapshot: &[u8]) -> Result<Self, Error> {
        let mut drone = Self::new(settings)?;
        crate::snapshot::read(&mut drone, 1, 0, snapshot)?;
        Ok(drone)
    }
}

impl Use for Drone<'_> {
    type State = DroneState;
    fn process(&mut self, sample: &Sample) -> Output<DroneState> {
        Drone::process(self, sample)
    }
    fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        Drone::accelerometer(self, time, accel_up_mps2)
    }
    fn restart_clock(&mut self) {
        Drone::restart_clock(self)
    }
}

// The design's goal for a drone's state on 32-bit cores, checked by every such build.
#[cfg(target_pointer_width = "32")]
const _: () = assert!(core::mem::size_of::<Drone<'static>>() <= 256);
