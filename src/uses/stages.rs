//! The stages every use type runs a sample through, in this order: the time step
//! ([`TimeBase`]), the input checks ([`Inputs`]), the height (a model), the datum
//! ([`Offset`], [`Ground`]), the estimate ([`kalman_step`] or the walk's smoothing),
//! the trackers ([`FlightTrack`]), and the commit. Each stage reads the state and
//! proposes its change; the use type applies the changes only once every stage that
//! can refuse the sample has accepted it, so a refused sample changes nothing.

use core::borrow::Borrow;

use super::{Change, Flags, Output, Sample};
use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976, US_1976_GAS_CONSTANT};
use crate::datum::AltimeterSetting;
use crate::filter::{
    GroundReference, GroundReferenceConfig, KalmanOutcome, Step, VerticalKalman,
    VerticalKalmanConfig, step_between,
};
use crate::flight::{Phase, PhaseCore, PhaseSettings};
use crate::time::Instant;
use crate::track::AscentTotals;
use crate::units::{Height, Pressure, RelativeHumidity, Temperature};

/// Largest accepted `pressure_noise_pa` of the settings, Pa (10 hPa: beyond any working
/// barometer; larger values would overflow the height sigma).
pub const MAX_PRESSURE_NOISE_PA: f32 = 1_000.0;
/// Largest accepted `temperature_uncertainty_k` of the settings, K.
pub const MAX_TEMPERATURE_UNCERTAINTY_K: f32 = 100.0;
/// Largest accepted `max_gap_s` of the settings, s (a week).
pub const MAX_GAP_LIMIT_S: f32 = 604_800.0;

/// The checks every use's settings share. Errors: [`Error::InvalidSetting`].
pub(crate) fn check_common(
    min_pressure_pa: f32,
    max_pressure_pa: f32,
    pressure_noise_pa: f32,
    temperature_uncertainty_k: f32,
    fix_time_constant_s: f32,
    max_gap_s: f32,
) -> Result<(), Error> {
    let ok = min_pressure_pa.is_finite()
        && max_pressure_pa.is_finite()
        && min_pressure_pa > 0.0
        && min_pressure_pa < max_pressure_pa
        && (0.0..=MAX_PRESSURE_NOISE_PA).contains(&pressure_noise_pa)
        && (0.0..=MAX_TEMPERATURE_UNCERTAINTY_K).contains(&temperature_uncertainty_k)
        && fix_time_constant_s.is_finite()
        && fix_time_constant_s >= 0.0
        && max_gap_s.is_finite()
        && max_gap_s > 0.0
        && max_gap_s <= MAX_GAP_LIMIT_S;
    if ok {
        Ok(())
    } else {
        Err(Error::InvalidSetting)
    }
}

/// The time of the last sample taken.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct TimeBase {
    /// The last sample's time; [`NO_TIME`] before any (an `Option` would take 16
    /// bytes with its tag; the sentinel is 584 542 years after any epoch).
    last: Instant,
}

/// The time base's "no sample yet".
const NO_TIME: Instant = Instant::from_micros(u64::MAX);

impl Default for TimeBase {
    fn default() -> Self {
        Self { last: NO_TIME }
    }
}

/// What the clock did between the last sample taken and this one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct TimeStep {
    /// Seconds since the last sample taken; `None` for the first sample and after a
    /// clock fault (a new time base).
    pub dt: Option<f32>,
    /// The clock stepped back or jumped beyond the longest gap.
    pub fault: bool,
}

impl TimeStep {
    /// The step, 0 where there is none.
    pub fn dt_or_zero(&self) -> f32 {
        self.dt.unwrap_or(0.0)
    }
}

impl TimeBase {
    /// The step to `t`. A repeated stamp is refused ([`Flags::REJECTED_TIME`]); a step
    /// back or beyond `max_gap_s` is a clock fault that starts a new time base.
    pub fn step(&self, t: Instant, max_gap_s: f32) -> Result<TimeStep, Flags> {
        match self.last().map(|last| step_between(last, t)) {
            None => Ok(TimeStep {
                dt: None,
                fault: false,
            }),
            Some(Step::Later(dt)) if dt <= max_gap_s => Ok(TimeStep {
                dt: Some(dt),
                fault: false,
            }),
            Some(Step::Same) => Err(Flags::REJECTED_TIME),
            Some(_) => Ok(TimeStep {
                dt: None,
                fault: true,
            }),
        }
    }

    /// Whether an accelerometer stamp `t` is within `max_gap_s` of the last sample
    /// taken. Errors: [`Error::TimeJump`].
    pub fn check_ahead(&self, t: Instant, max_gap_s: f32) -> Result<(), Error> {
        match self.last().map(|last| step_between(last, t)) {
            Some(Step::Later(dt)) if dt > max_gap_s => Err(Error::TimeJump),
            _ => Ok(()),
        }
    }

    /// The last sample taken.
    pub fn last(&self) -> Option<Instant> {
        (self.last != NO_TIME).then_some(self.last)
    }

    /// Takes `t` as the last sample's time (a sample at the very end of time leaves
    /// the next one without a step, as a first one).
    pub fn commit(&mut self, t: Instant) {
        self.last = t;
    }

    /// Forgets the time base (a known clock restart).
    pub fn forget(&mut self) {
        self.last = NO_TIME;
    }
}

/// The sample's channels, checked: the required pressure, and the optional channels
/// that passed (the others are flagged and dropped).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Inputs {
    pub pressure: Pressure,
    pub temperature: Option<Temperature>,
    pub humidity: Option<RelativeHumidity>,
    pub accel_mps2: Option<f32>,
    pub fix_m: Option<f32>,
    pub flags: Flags,
}

/// Largest accepted acceleration, m/s^2 (20 g).
const MAX_ACCEL_MPS2: f32 = 20.0 * STANDARD_GRAVITY;

impl Inputs {
    /// Checks `sample` against the barometer's range (Pa; a reading at either end is
    /// saturated). Errors: [`Flags::REJECTED_PRESSURE`], with [`Flags::SATURATED`] for
    /// a valid pressure at or beyond the range.
    pub fn check(sample: &Sample, min_pa: f32, max_pa: f32) -> Result<Inputs, Flags> {
        let pressure = match Pressure::from_pa(sample.pressure_pa) {
            Ok(p) if p.pa() > min_pa && p.pa() < max_pa => p,
            Ok(_) => return Err(Flags(Flags::REJECTED_PRESSURE.0 | Flags::SATURATED.0)),
            Err(_) => return Err(Flags::REJECTED_PRESSURE),
        };
        let mut flags = Flags::default();
        let temperature = optional(
            sample.temperature_c.map(Temperature::from_celsius),
            Flags::TEMPERATURE_IGNORED,
            &mut flags,
        );
        // Humidity sensors read up to about 110 % in cloud (supersaturation is a
        // fraction of a percent in real air: the excess is the sensor's; common
        // practice): taken as 100 %, flagged.
        let humidity_pct = match sample.humidity_pct {
            Some(h) if h > 100.0 && h <= 110.0 => {
                flags.set(Flags::HUMIDITY_CLAMPED);
                Some(100.0)
            }
            other => other,
        };
        let humidity = optional(
            humidity_pct.map(RelativeHumidity::from_percent),
            Flags::HUMIDITY_IGNORED,
            &mut flags,
        );
        let accel = sample.accel_up_mps2.map(|a| {
            if a.is_finite() && a.abs() <= MAX_ACCEL_MPS2 {
                Ok(a)
            } else {
                Err(Error::SampleOutOfRange)
            }
        });
        let accel_mps2 = optional(accel, Flags::ACCEL_IGNORED, &mut flags);
        let fix = sample.known_altitude_m.map(|h| {
            if h.is_finite() && h.abs() < 90_000.0 {
                Ok(h)
            } else {
                Err(Error::SampleOutOfRange)
            }
        });
        let fix_m = optional(fix, Flags::FIX_IGNORED, &mut flags);
        Ok(Inputs {
            pressure,
            temperature,
            humidity,
            accel_mps2,
            fix_m,
            flags,
        })
    }
}

/// An optional channel: the value if valid; an invalid one is dropped and flagged.
fn optional<T>(value: Option<Result<T, Error>>, flag: Flags, flags: &mut Flags) -> Option<T> {
    match value {
        Some(Ok(v)) => Some(v),
        Some(Err(_)) => {
            flags.set(flag);
            None
        }
        None => None,
    }
}

/// The datum offset added to the model height, m, and the target it slews to (a fix,
/// a new altimeter setting, the ground reference).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Offset {
    pub offset_m: f32,
    pub target_m: f32,
}

impl Offset {
    /// The offset after a step of `dt` seconds toward `target_m` with time constant
    /// `tau_s` (at once without a step).
    pub fn slewed(self, dt: Option<f32>, tau_s: f32) -> Offset {
        let offset_m = match dt {
            Some(dt) => {
                self.offset_m + crate::filter::lag_gain(dt, tau_s) * (self.target_m - self.offset_m)
            }
            None => self.target_m,
        };
        Offset { offset_m, ..self }
    }
}

/// The ground reference: the mean height at rest before motion, tied to a start
/// altitude (m) so that heights start there.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Ground {
    pub reference: GroundReference,
    pub start_m: f32,
    /// Motion started (or a fix came): the reference no longer moves.
    pub frozen: bool,
}

/// What the datum stage proposes for one sample.
#[derive(Debug, Clone, Copy)]
pub(crate) struct DatumStep {
    pub offset: Offset,
    pub frozen: bool,
    /// The ground reference is still averaging: a sample at rest joins it at the commit.
    pub averaging: bool,
}

impl Ground {
    /// A reference that averages `samples` (>= 1) samples at rest before it is ready.
    pub fn new(start_m: f32, samples: u32) -> Result<Ground, Error> {
        Ok(Ground {
            reference: GroundReference::new(GroundReferenceConfig {
                min_samples: samples.max(2),
                min_duration_s: 0.0,
            })?,
            start_m,
            frozen: false,
        })
    }

    /// The datum for a sample at model height `model_m`: averaging on the ground,
    /// frozen once moving; a fix `fix_m` moves the target so that the estimate
    /// `estimate_m` (the last output, without its offset) reads the fix.
    pub fn propose(
        &self,
        offset: Offset,
        model_m: f32,
        on_ground: bool,
        flags: &mut Flags,
    ) -> DatumStep {
        let mut offset = offset;
        let averaging = !self.frozen && on_ground;
        if averaging {
            if self.reference.sample_count() == 0 {
                // provisional until samples at rest are averaged
                offset.target_m = self.start_m - model_m;
                offset.offset_m = offset.target_m;
            }
            if !self.reference.is_ready() {
                flags.set(Flags::GROUND_AVERAGING);
            }
        }
        DatumStep {
            offset,
            frozen: self.frozen || !on_ground,
            averaging,
        }
    }

    /// Takes a sample at rest `model_m` (m) into the average, `dt` seconds after the
    /// last one, and moves the datum so that the mean reads the start altitude.
    pub fn commit(&mut self, step: &mut DatumStep, sample_m: Option<f32>, dt: f32, t: Instant) {
        if let Some(m) = sample_m {
            let h = Height::from_meters(m).unwrap_or(Height::ZERO);
            self.reference.push_after(dt, t, h);
            let mean = self
                .reference
                .mean()
                .or_else(|_| self.reference.running_mean());
            if let Ok(mean) = mean {
                step.offset.target_m = self.start_m - mean.meters();
                step.offset.offset_m = step.offset.target_m;
            }
        }
        self.frozen = step.frozen;
    }

    /// Whether a sample at model height `model_m` (m) agrees with the samples averaged
    /// so far: within `tolerance_m` of their mean (any sample agrees with none). A
    /// device that already climbs or falls at start (a sonde released at once, a
    /// power-on in flight) then averages nothing but its first sample.
    pub fn agrees(&self, model_m: f32, tolerance_m: f32) -> bool {
        match self.reference.running_mean() {
            Ok(mean) => (model_m - mean.meters()).abs() <= tolerance_m,
            Err(_) => true,
        }
    }

    /// Starts a new average (re-arming on the ground).
    pub fn rezero(&mut self) {
        self.reference.rezero();
        self.frozen = false;
    }
}

/// A fix of the known elevation `fix_m`: the new offset target so that the current
/// estimate (`last_m`, the last output's height, or the model height `model_m` before
/// any) reads the fix.
pub(crate) fn fix_target(offset: Offset, fix_m: f32, last_m: Option<f32>, model_m: f32) -> f32 {
    let current = match last_m {
        Some(h) => h - offset.offset_m,
        None => model_m,
    };
    fix_m - current
}

/// How far a known elevation may lie from the current height and still be taken, m,
/// plus a tenth of the height: beyond, it is a typing error or a receiver's 0 m before
/// its lock, not a correction (a height off by more than this is beyond what weather
/// and the column do to a barometric height; choice of this crate).
pub const FIX_AGREES_M: f32 = 500.0;

/// Whether a known elevation `fix_m` agrees with the current height `current_m`
/// (within [`FIX_AGREES_M`] plus a tenth of the height).
pub(crate) fn fix_agrees(fix_m: f32, current_m: f32) -> bool {
    (fix_m - current_m).abs() <= FIX_AGREES_M + 0.1 * current_m.abs()
}

/// What the Kalman stage takes of a sample.
#[derive(Debug, Clone, Copy)]
pub(crate) struct KalmanSample {
    /// Its time.
    pub t: Instant,
    /// The barometric height (model and datum).
    pub raw: Height,
    /// The height's 1-sigma, m.
    pub sigma_m: f32,
    /// The accelerometer sample taken with it, m/s^2.
    pub accel_mps2: Option<f32>,
}

/// The Kalman stage: the barometric height `raw` with 1-sigma `sigma_m` and the
/// accelerometer sample, at `t`. After a clock fault, or with the filter's clock ahead
/// of `t` (an accelerometer stamp later than this sample), the filter starts again
/// from this sample. Returns height, speed and height variance (`None` before the
/// filter holds an estimate); `Err` if the filter refused the sample (state unchanged).
pub(crate) fn kalman_step<C: Borrow<VerticalKalmanConfig> + Copy>(
    k: &mut VerticalKalman<C>,
    sample: &KalmanSample,
    time: &TimeStep,
    flags: &mut Flags,
) -> Result<Option<(f32, f32, f32)>, ()> {
    let KalmanSample {
        t,
        raw,
        sigma_m,
        accel_mps2,
    } = *sample;
    if time.fault || k.time().is_some_and(|filter_t| filter_t > t) {
        // in place: the restart refuses before it changes anything
        k.restart(t, raw, sigma_m).map_err(|_| ())?;
        flags.set(Flags::REACQUIRED);
        return Ok(k.height_speed_variance());
    }
    let (predicted, corrected) = k.predict_and_correct(t, accel_mps2, raw, sigma_m);
    if predicted.is_err() {
        flags.set(Flags::ACCEL_IGNORED);
    }
    let rejected = match corrected {
        Ok(KalmanOutcome::Rejected { .. }) => true,
        Ok(KalmanOutcome::Reacquired) => {
            flags.set(Flags::REACQUIRED);
            false
        }
        Ok(_) => false,
        Err(_) => return Err(()),
    };
    let estimate = k.height_speed_variance();
    if !rejected {
        return Ok(estimate);
    }
    flags.set(Flags::OUTLIER);
    // The gate cannot tell a bad reading from a prediction gone wrong (a shock on the
    // accelerometer, a change of motion): until they agree again the 1-sigma covers
    // the distance between them, half of it on each side (choice of this crate).
    Ok(estimate.map(|(h, v, var)| {
        let half = 0.5 * (raw.meters() - h);
        (h, v, if half * half > var { half * half } else { var })
    }))
}

/// The flight trackers: the state machine and the ascent and descent totals.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct FlightTrack {
    pub phases: PhaseCore,
    pub totals: AscentTotals,
}

impl FlightTrack {
    /// Trackers with the thresholds `phases` and the totals' band `band_m`.
    pub fn new(phases: &PhaseSettings, band_m: f32) -> Result<Self, Error> {
        Ok(Self {
            phases: PhaseCore::new(phases)?,
            totals: AscentTotals::new(band_m)?,
        })
    }

    /// One sample taken: `dt` seconds after the last, height `h_m`, speed `v_mps`;
    /// `measured`: the height follows a barometer sample the estimator took (not a
    /// prediction carried over a gated one, which the totals do not count). Returns
    /// whether a state change was confirmed. It cannot fail on finite input; if it
    /// did, the state machine would keep its state (it is atomic on error).
    pub fn step(
        &mut self,
        s: &PhaseSettings,
        dt: f32,
        (h_m, v_mps): (f32, f32),
        measured: bool,
    ) -> bool {
        let before = self.phases.phase();
        let event = matches!(self.phases.step(s, dt, h_m, v_mps), Ok(step) if step.event);
        // The totals count the flight: from the take-off (the height where the climb
        // began, then this sample) until the landing; on the ground an accelerometer
        // shock or a gust moves nothing.
        let flying = |p: Phase| !matches!(p, Phase::Ground | Phase::Landed);
        if measured && flying(self.phases.phase()) {
            if !flying(before) {
                if let Some(start) = self.phases.event_height_m() {
                    self.totals.update(Height::from_finite_meters(start));
                }
            }
            if let Ok(h) = Height::from_meters(h_m) {
                self.totals.update(h);
            }
        }
        event
    }

    /// The state now.
    pub fn phase(&self) -> Phase {
        self.phases.phase()
    }
}

/// Largest vertical speed a use reports, m/s (the Kalman filter's
/// [`crate::filter::MAX_SPEED_MPS`]): an estimate beyond it is held at it.
pub const MAX_VERTICAL_SPEED_MPS: f32 = crate::filter::MAX_SPEED_MPS;

/// What a use keeps of its last output to carry it forward on a refused sample.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Carried {
    pub altitude_m: f32,
    pub raw_altitude_m: f32,
    pub vertical_speed_mps: f32,
    pub altitude_sigma_m: f32,
    /// The last output's flags, and in bit 31 ([`CHANGED`]) whether the last sample
    /// confirmed a state change (one word for both: the state stays within 256 bytes).
    pub flags: Flags,
}

/// The bit of [`Carried::flags`] that says the last sample confirmed a change (no
/// output flag uses it).
const CHANGED: u32 = 1 << 31;

impl Carried {
    /// The last values: the output's `h`, `raw`, `v` (held within
    /// [`MAX_VERTICAL_SPEED_MPS`]), `sigma`, its flags, and whether it confirmed a
    /// state change.
    pub fn new(h: f32, raw: f32, v: f32, sigma: f32, flags: Flags, changed: bool) -> Self {
        let changed = if changed { CHANGED } else { 0 };
        let v = crate::filter::kalman::limit_speed(v);
        Carried {
            altitude_m: h,
            raw_altitude_m: raw,
            vertical_speed_mps: v,
            altitude_sigma_m: sigma,
            flags: Flags(flags.0 | changed),
        }
    }

    /// The last output's flags.
    pub fn flags(&self) -> Flags {
        Flags(self.flags.0 & !CHANGED)
    }

    /// Whether the last sample confirmed a state change.
    pub fn changed(&self) -> bool {
        self.flags.0 & CHANGED != 0
    }

    /// Keeps `flags` as the last output's, which confirmed no change (a sample held
    /// back).
    pub fn set_flags(&mut self, flags: Flags) {
        self.flags = flags;
    }

    /// The 1-sigma of the carried height at `now` when it was measured at `since`
    /// (`None`: no time to go by): the carried 1-sigma and the distance the height can
    /// have gone since, at the carried speed plus `speed_sigma_mps`, added in
    /// quadrature: `sqrt(sigma^2 + ((|v| + speed_sigma) dt)^2)`, m.
    pub fn stale_sigma_m(&self, since: Option<Instant>, now: Instant, speed_sigma_mps: f32) -> f32 {
        let dt = match since.map(|s| step_between(s, now)) {
            Some(Step::Later(dt)) => dt,
            _ => 0.0,
        };
        let drift = (self.vertical_speed_mps.abs() + speed_sigma_mps) * dt;
        let sigma = self.altitude_sigma_m;
        crate::math::sigma_from_variance(sigma * sigma + drift * drift)
    }

    /// The carried values as an output at `time` with `flags`.
    pub fn output<S>(
        &self,
        time: Instant,
        state: S,
        totals: (f32, f32),
        flags: Flags,
    ) -> Output<S> {
        Output {
            time,
            altitude_m: self.altitude_m,
            raw_altitude_m: self.raw_altitude_m,
            vertical_speed_mps: self.vertical_speed_mps,
            altitude_sigma_m: self.altitude_sigma_m,
            state,
            change: None,
            ascent_m: totals.0,
            descent_m: totals.1,
            tendency_hpa: None,
            flags,
        }
    }
}

/// The state change the phase core confirmed, as of `time`, in the use's words.
pub(crate) fn change_at<S>(
    phases: &PhaseCore,
    time: Instant,
    words: fn(Phase) -> S,
) -> Option<Change<S>> {
    phases.event_confirmed_at(time).map(|e| Change {
        state: words(e.phase),
        time: e.time,
        altitude_m: e.height_m,
    })
}

/// How far a sample at rest may lie from the ground reference's mean and still join
/// it, m: five times the sample's own 1-sigma `sigma_m`, at least 0.5 m (a sample
/// further off is a climb that has begun, or a gust; choice of this crate).
pub(crate) fn ground_tolerance_m(sigma_m: f32) -> f32 {
    let t = 5.0 * sigma_m;
    if t > 0.5 { t } else { 0.5 }
}

/// 1-sigma height noise from the pressure noise `noise_pa` at `p` in a column at
/// `column_k`: `sigma_z = (R T / (g0 p)) sigma_p` (hypsometric equation differentiated
/// in `p`; R = 287.053 J/(kg K) and g0 = 9.806 65 m/s^2 from U.S. Standard Atmosphere
/// 1976), m.
pub(crate) fn pressure_sigma_m(noise_pa: f32, p: Pressure, column_k: f32) -> f32 {
    US_1976_GAS_CONSTANT * column_k / STANDARD_GRAVITY * noise_pa / p.pa()
}

/// The Kalman filter's sample sigma: [`pressure_sigma_m`] at least 1 mm, rounded to 8
/// significant bits (to nearest; within 0.4 %). The height noise of a sample follows
/// its own pressure, whose noise moves it by about 3e-5 from one sample to the next;
/// rounded, it repeats exactly while the height stays within tens of metres, and the
/// Kalman covariance can settle (see `VerticalKalmanConfig::gain_reuse_tolerance`). A
/// noise figure is not known to 0.4 % anyway (choice of this crate).
pub(crate) fn kalman_sigma_m(noise_pa: f32, p: Pressure, column_k: f32) -> f32 {
    let sigma = pressure_sigma_m(noise_pa, p, column_k);
    let sigma = if sigma > 1.0e-3 { sigma } else { 1.0e-3 };
    f32::from_bits((sigma.to_bits() + 0x8000) & 0xFFFF_0000)
}

/// First-order 1-sigma of a pointwise height `height_m` above the datum reference
/// `reference_m`: pressure noise through the scale height, and the column temperature
/// uncertainty `uncertainty_k` scaling the height above the reference (hypsometric
/// equation: dz = (R T / g) dp / p, and dz / z = dT / T), in quadrature, m.
pub(crate) fn pointwise_sigma_m(
    noise_pa: f32,
    uncertainty_k: f32,
    p: Pressure,
    column_k: f32,
    height_above_reference_m: f32,
) -> f32 {
    let from_pressure = pressure_sigma_m(noise_pa, p, column_k);
    let from_temperature = height_above_reference_m.abs() * uncertainty_k / column_k;
    crate::math::sigma_from_variance(
        from_pressure * from_pressure + from_temperature * from_temperature,
    )
}

/// Spread of real columns' mean temperature about the standard atmosphere's, K: what
/// a height from an assumed (not measured) temperature must allow for. Mid-latitude
/// columns depart from U.S. 1976 by about 10 K over the seasons (the U.S. Standard
/// Atmosphere Supplements 1966 tables span roughly this; from memory).
pub(crate) const ASSUMED_TEMPERATURE_SIGMA_K: f32 = 10.0;

/// Spread of the sea-level pressure about 1013.25 hPa, Pa: about 10 hPa (1-sigma) at
/// mid-latitudes (from memory).
pub(crate) const SEA_LEVEL_PRESSURE_SIGMA_PA: f32 = 1_000.0;

/// 1-sigma of a pressure altitude `height_m` (at pressure `p`, column `column_k`)
/// taken as a geometric height, m: the sea-level pressure's spread through the scale
/// height (over the standard sea-level pressure 101 325 Pa), and a column
/// [`ASSUMED_TEMPERATURE_SIGMA_K`] off the standard below it, in
/// quadrature (hypsometric equation: dz = (R T / g) dp / p, dz / z = dT / T).
pub(crate) fn standard_datum_sigma_m(p: Pressure, height_m: f32, column_k: f32) -> f32 {
    let from_weather =
        pressure_sigma_m(SEA_LEVEL_PRESSURE_SIGMA_PA, p, column_k) * (p.pa() / 101_325.0);
    let from_column = height_m * ASSUMED_TEMPERATURE_SIGMA_K / column_k;
    crate::math::sigma_from_variance(from_weather * from_weather + from_column * from_column)
}

/// The 1-sigma of an estimate: the filter's variance `variance_m2` (noise and motion)
/// and, in quadrature, the column temperature's part: a column `uncertainty_k` off at
/// `column_k` scales the height `above_m` above the datum's reference by
/// `uncertainty_k / column_k` (hypsometric equation: dz / z = dT / T), m.
pub(crate) fn estimate_sigma_m(
    variance_m2: f32,
    above_m: f32,
    uncertainty_k: f32,
    column_k: f32,
) -> f32 {
    let column = above_m * uncertainty_k / column_k;
    crate::math::sigma_from_variance(variance_m2 + column * column)
}

/// Speed from a height change `dh` (m) over a step of `dt` seconds; `None` for steps
/// shorter than 1 ms (too short to divide by), non-finite results, or speeds above
/// 10 km/s.
pub(crate) fn difference_speed(dh: f32, dt: f32) -> Option<f32> {
    if dt.is_nan() || dt < 1.0e-3 {
        return None;
    }
    let v = dh / dt;
    (v.is_finite() && v.abs() < 1.0e4).then_some(v)
}

/// The height of `p` on the standard atmosphere with the altimeter setting `setting`
/// (pressure altitude, or the QNH / QFE height of [`crate::datum`]), m, and the
/// standard temperature at that pressure, K.
pub(crate) fn standard_height(
    p: Pressure,
    setting: AltimeterSetting,
) -> Result<(f32, Temperature), Error> {
    let (pressure_altitude, t_std) = US_1976.pressure_altitude_with_kelvin(p)?;
    // U.S. 1976 layer temperatures run from 186.946 K (84.852 km') to 320.65 K
    // (-5 km'), inside `Temperature::AIR_RANGE_K` (U.S. Standard Atmosphere 1976,
    // Table 4, and the -6.5 K/km lapse rate below sea level; checked over the whole
    // range by `atmosphere::tests::standard_layer_temperatures_stay_in_the_air_range`)
    let t_std = Temperature::from_valid_kelvin(t_std);
    let h = match setting {
        AltimeterSetting::Standard => pressure_altitude,
        setting => setting.height(p)?,
    };
    Ok((h.meters(), t_std))
}

/// Checks an altimeter setting. Errors: [`Error::InvalidSetting`] for a QNH outside
/// 850-1100 hPa, and the standard atmosphere's range errors for a setting outside it.
pub(crate) fn check_altimeter(setting: AltimeterSetting) -> Result<(), Error> {
    if let AltimeterSetting::SeaLevel { qnh_pa } = setting {
        // Sea-level pressures on record stay within about 870-1084 hPa (from memory);
        // 850-1100 hPa leaves a margin and refuses typing errors (and NaN).
        if !(85_000.0..=110_000.0).contains(&qnh_pa) {
            return Err(Error::InvalidSetting);
        }
    }
    let pressure = setting
        .setting_pressure()
        .map_err(|_| Error::InvalidSetting)?;
    if let Some(p) = pressure {
        // the setting must lie inside the standard atmosphere
        setting.height(p)?;
    }
    Ok(())
}

/// The change of the datum offset that keeps the height at the last pressure
/// `last_pa` when the altimeter setting changes from `old` to `new`, m (0 before any
/// pressure).
pub(crate) fn altimeter_change_m(
    last_pa: f32,
    old: AltimeterSetting,
    new: AltimeterSetting,
) -> Result<f32, Error> {
    match Pressure::from_pa(last_pa) {
        Ok(p) => Ok(new.height(p)?.meters() - old.height(p)?.meters()),
        Err(_) => Ok(0.0),
    }
}

crate::snapshot::snap_fields!(TimeBase { last });
crate::snapshot::snap_fields!(Offset { offset_m, target_m });
crate::snapshot::snap_fields!(Ground {
    reference,
    start_m,
    frozen
});
crate::snapshot::snap_fields!(Carried {
    altitude_m,
    raw_altitude_m,
    vertical_speed_mps,
    altitude_sigma_m,
    flags,
});
crate::snapshot::snap_fields!(FlightTrack { phases, totals });

impl crate::snapshot::Blank for Ground {
    /// An empty reference (loading fills it).
    fn blank() -> Self {
        Ground {
            reference: GroundReference::blank(),
            start_m: 0.0,
            frozen: false,
        }
    }
}
