//! One call per sample: the composed pipeline and the three presets.
//!
//! ```text
//! Sample -> validation -> height model -> datum (start altitude, ground reference,
//!        known-elevation fixes) -> estimator (Kalman, gated) -> trackers (phases,
//!        totals, weather drift, tendency) -> Output (+ flags)
//! ```
//!
//! A sample that fails validation leaves every state untouched and comes back as an
//! [`Output`] with the previous estimate and a rejection flag. A sample the estimator
//! gates out as an outlier is also carried forward and flagged ([`Flags::OUTLIER`]).
//! Nothing here panics or allocates.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::pipeline::{Pipeline, Sample, Settings};
//! let mut drone = Pipeline::<2>::new(Settings::drone())?;
//! for k in 1..=200 {
//!     let t = Instant::from_millis(20 * k);
//!     let out = drone.process(&Sample::pressure(t, 98_000.0));
//!     assert!(out.accepted());
//! }
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976, US_1976_GAS_CONSTANT};
use crate::bits::Bits;
use crate::datum::AltimeterSetting;
use crate::filter::{
    GroundReference, GroundReferenceConfig, KalmanOutcome, Step, VerticalKalman,
    VerticalKalmanConfig, step_between,
};
use crate::flight::{Phase, PhaseCore, PhaseEvent, PhaseSettings};
use crate::geopotential::Gravity;
#[cfg(feature = "pipeline-column")]
use crate::humidity::MixingRatio;
#[cfg(feature = "pipeline-column")]
use crate::model::{AirSample, ColumnModel, Reference, TemperatureModel};
#[cfg(feature = "pipeline-sounding")]
use crate::sounding::{PendingStep, Sounding};
use crate::time::Instant;
use crate::track::AscentTotals;
#[cfg(feature = "pipeline-hike")]
use crate::track::HikeConfig;
#[cfg(feature = "pipeline-hike")]
use crate::track::hike::HikeState;
use crate::units::{Height, Pressure, RelativeHumidity, Temperature};
use core::borrow::Borrow;
use core::marker::PhantomData;

pub mod parts;
use parts::{Parts, Presence};

pub use crate::uses::{Flags, Sample};

/// What the pipeline says after each sample.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Output {
    /// Time of the sample, s.
    pub time: Instant,
    /// Height, m (geometric; above mean sea level, or above the ground reference when
    /// the start altitude is 0).
    pub altitude_m: f32,
    /// Height from this sample alone (model and datum, before the estimator), m.
    pub raw_altitude_m: f32,
    /// Vertical speed, m/s, up positive.
    pub vertical_speed_mps: f32,
    /// 1-sigma of the height, m.
    pub altitude_sigma_m: f32,
    /// Flight phase.
    pub phase: Phase,
    /// The phase change this sample confirmed, if any.
    pub event: Option<PhaseEvent>,
    /// Total ascent, m.
    pub ascent_m: f32,
    /// Total descent, m.
    pub descent_m: f32,
    /// 3-hour pressure tendency, hPa (hike preset), negative when falling.
    pub tendency_hpa: Option<f32>,
    /// What was rejected, held or assumed.
    pub flags: Flags,
}

impl Output {
    /// The sample was used (not rejected).
    pub const fn accepted(&self) -> bool {
        !self.flags.rejected()
    }
}

/// Where heights come from.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum HeightModel {
    /// U.S. Standard Atmosphere 1976 pressure altitude (plus the datum offset).
    Standard,
    /// Layer-by-layer integration of each sample's pressure, temperature and humidity
    /// from the first sample ([`crate::sounding`]).
    /// Feature `pipeline-sounding`.
    #[cfg(feature = "pipeline-sounding")]
    Sounding {
        /// After burst, take heights from the profile stored on the way up instead of
        /// integrating with the lagging temperature sensor.
        descent_on_profile: bool,
    },
    /// A layer temperature model ([`crate::model`]) between a reference level and the
    /// sample: the reference is the first accepted sample (its pressure, temperature,
    /// and the start altitude, or its standard pressure altitude without one); each
    /// sample's temperature and humidity go in as the current air. For example
    /// [`TemperatureModel::MeanOfEnds`], the two-point hypsometric method, or
    /// [`TemperatureModel::StandardOffset`] for a warm or cold day. Feature
    /// `pipeline-column`.
    #[cfg(feature = "pipeline-column")]
    Column(TemperatureModel),
}

/// How heights are smoothed and vertical speed is estimated.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Estimator {
    /// Pointwise conversion: no smoothing, no outlier rejection; vertical speed is the
    /// difference of consecutive heights.
    Off,
    /// Kalman filter over height, vertical speed and accelerometer bias, with innovation
    /// gating ([`crate::filter::VerticalKalman`]).
    Kalman(VerticalKalmanConfig),
}

/// Per-use tracker.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Tracking {
    /// Flight phases and plain ascent/descent totals with a hysteresis band, m.
    Flight {
        /// Phase thresholds.
        phases: PhaseSettings,
        /// Hysteresis band of the totals, m.
        totals_band_m: f32,
    },
    /// Walking: totals with weather-drift handling, fixes and tendency
    /// ([`crate::track::HikeTracker`]), plus phases. Feature `pipeline-hike`.
    #[cfg(feature = "pipeline-hike")]
    Hike {
        /// Hike tracker settings.
        hike: HikeConfig,
        /// Phase thresholds.
        phases: PhaseSettings,
    },
}

/// Pipeline settings. Presets: [`Settings::balloon`], [`Settings::drone`],
/// [`Settings::hike`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Settings {
    /// Height model.
    pub model: HeightModel,
    /// Estimator.
    pub estimator: Estimator,
    /// Tracker.
    pub tracking: Tracking,
    /// Geometric height of the ground reference (the mean of the samples at rest before
    /// motion starts), m. `None`: no datum shift (standard model: pressure altitude;
    /// sounding: starts at the first sample's pressure altitude).
    pub start_altitude_m: Option<f32>,
    /// Altimeter setting of the standard model: standard (pressure altitude), sea-level
    /// setting QNH, or field setting QFE ([`crate::datum`]). A start altitude, when
    /// given, then moves the datum to the ground reference.
    pub altimeter_setting: AltimeterSetting,
    /// Latitude for gravity (sounding model and geometric heights), degrees. `None`:
    /// standard gravity 9.806 65 m/s^2 with the U.S. 1976 inverse-square law.
    pub latitude_deg: Option<f32>,
    /// Samples averaged into the ground reference before motion (>= 1); more are
    /// averaged while the phase stays on the ground.
    pub ground_min_samples: u32,
    /// Accepted pressure range, Pa (inclusive).
    pub pressure_range_pa: (f32, f32),
    /// 1-sigma pressure noise of the sensor, Pa (for the height sigma).
    pub pressure_noise_pa: f32,
    /// 1-sigma uncertainty of the mean column temperature, K (for the height sigma).
    pub temperature_uncertainty_k: f32,
    /// Time constant with which a known-elevation fix moves the datum, s (0: at once).
    pub fix_time_constant_s: f32,
    /// With [`Estimator::Off`]: a model height further than this (m) from the median of
    /// the last five accepted heights is an outlier, carried forward and flagged; after
    /// five outliers in a row the next sample is taken (a real step). `None`: no gate.
    pub spike_gate_m: Option<f32>,
    /// Longest step between two samples taken as a normal step, s. A longer step
    /// forward or a step back (a counter wrap, a restart, a glitched stamp) is a clock
    /// fault: the sample starts a new time base, flagged [`Flags::CLOCK_FAULT`].
    pub max_gap_s: f32,
}

impl Settings {
    /// Balloon: sounding model with descent on the stored profile, Kalman filter on
    /// barometric height alone (1 Hz samples, wide dynamics for burst), flight phases.
    /// Feature `pipeline-sounding`.
    #[cfg(feature = "pipeline-sounding")]
    pub const fn balloon() -> Self {
        Self {
            model: HeightModel::Sounding {
                descent_on_profile: true,
            },
            estimator: Estimator::Kalman(VerticalKalmanConfig {
                baro_sigma_m: 0.5,
                // burst turns +5 m/s into -50 m/s within seconds
                baro_only_accel_density: 3.0,
                initial_speed_sigma_mps: 30.0,
                max_step_s: 30.0,
                accel_timeout_s: 0.5,
                baro_timeout_s: 60.0,
                reacquire_after: 5,
                ..VerticalKalmanConfig::DEFAULT
            }),
            tracking: Tracking::Flight {
                phases: PhaseSettings::BALLOON,
                // height noise reaches about 10 m (1-sigma) near 30 km
                totals_band_m: 30.0,
            },
            start_altitude_m: None,
            altimeter_setting: AltimeterSetting::Standard,
            latitude_deg: None,
            ground_min_samples: 10,
            pressure_range_pa: (US_1976.top_pressure_pa(), 110_000.0),
            pressure_noise_pa: 2.0,
            temperature_uncertainty_k: 0.5,
            fix_time_constant_s: 10.0,
            spike_gate_m: None,
            // a tracker that sleeps between fixes still reports every few minutes
            max_gap_s: 600.0,
        }
    }

    /// Drone: standard model, height above the ground reference taken at arming, Kalman
    /// filter with accelerometer and gating, phases tuned for hops.
    pub const fn drone() -> Self {
        Self {
            model: HeightModel::Standard,
            estimator: Estimator::Kalman(VerticalKalmanConfig::DEFAULT),
            tracking: Tracking::Flight {
                phases: PhaseSettings::DRONE,
                totals_band_m: 0.5,
            },
            start_altitude_m: Some(0.0),
            altimeter_setting: AltimeterSetting::Standard,
            latitude_deg: None,
            ground_min_samples: 50,
            pressure_range_pa: (30_000.0, 110_000.0),
            pressure_noise_pa: 1.5,
            temperature_uncertainty_k: 2.0,
            fix_time_constant_s: 2.0,
            spike_gate_m: None,
            // a drone samples at 50 Hz; ten seconds without one is a fault, not a flight
            max_gap_s: 10.0,
        }
    }

    /// Hike: standard model, the hike tracker (smoothing, totals with hysteresis,
    /// weather drift at rest, fixes, tendency), no Kalman filter (the tracker smooths).
    #[cfg(feature = "pipeline-hike")]
    pub const fn hike() -> Self {
        Self {
            model: HeightModel::Standard,
            estimator: Estimator::Off,
            tracking: Tracking::Hike {
                hike: HikeConfig::DEFAULT,
                phases: PhaseSettings::HIKE,
            },
            start_altitude_m: None,
            altimeter_setting: AltimeterSetting::Standard,
            latitude_deg: None,
            ground_min_samples: 1,
            pressure_range_pa: (25_000.0, 110_000.0),
            pressure_noise_pa: 2.0,
            temperature_uncertainty_k: 5.0,
            fix_time_constant_s: 30.0,
            // walking moves a few metres between samples; a spike moves tens to hundreds
            spike_gate_m: Some(15.0),
            // a walker may switch the device off for a few hours
            max_gap_s: 21_600.0,
        }
    }

    /// Check every field against its documented range. Errors: [`Error::InvalidSetting`]
    /// (and the nested settings' own checks).
    pub fn validate(&self) -> Result<(), Error> {
        let (lo, hi) = self.pressure_range_pa;
        let ok = lo.is_finite()
            && hi.is_finite()
            && lo > 0.0
            && lo < hi
            && self.ground_min_samples >= 1
            && (0.0..=MAX_PRESSURE_NOISE_PA).contains(&self.pressure_noise_pa)
            && (0.0..=MAX_TEMPERATURE_UNCERTAINTY_K).contains(&self.temperature_uncertainty_k)
            && self.spike_gate_m.is_none_or(|g| g.is_finite() && g > 0.0)
            && self.max_gap_s.is_finite()
            && self.max_gap_s > 0.0
            && self.max_gap_s <= MAX_GAP_LIMIT_S
            && self.fix_time_constant_s.is_finite()
            && self.fix_time_constant_s >= 0.0
            && self
                .start_altitude_m
                .is_none_or(|h| h.is_finite() && h.abs() < 90_000.0);
        if !ok {
            return Err(Error::InvalidSetting);
        }
        if let Some(lat) = self.latitude_deg {
            Gravity::at_latitude(lat)?;
        }
        if let AltimeterSetting::SeaLevel { qnh } = self.altimeter_setting {
            // Sea-level pressures on record stay within about 870-1084 hPa (from
            // memory); 850-1100 hPa leaves a margin and refuses typing errors.
            if !(85_000.0..=110_000.0).contains(&qnh.pa()) {
                return Err(Error::InvalidSetting);
            }
        }
        if let Some(p) = self.altimeter_setting.setting_pressure() {
            // the setting must lie inside the standard atmosphere
            self.altimeter_setting.height(p)?;
        }
        if let Estimator::Kalman(k) = self.estimator {
            k.validate()?;
        }
        #[cfg(feature = "pipeline-column")]
        if let HeightModel::Column(model) = self.model {
            // the model's own parameters: it must place a plain standard-day sample
            let reference = Reference::new(Pressure::from_pa(101_325.0)?, Height::ZERO)
                .with_temperature(Temperature::from_kelvin(288.15)?);
            let air = AirSample::at(Temperature::from_kelvin(282.0)?);
            model
                .height(&reference, Pressure::from_pa(95_000.0)?, &air)
                .map_err(|_| Error::InvalidSetting)?;
        }
        match self.tracking {
            Tracking::Flight {
                phases,
                totals_band_m,
            } => {
                phases.validate()?;
                AscentTotals::new(totals_band_m)?;
            }
            #[cfg(feature = "pipeline-hike")]
            Tracking::Hike { hike, phases } => {
                phases.validate()?;
                hike.validate()?;
            }
        }
        Ok(())
    }

    /// Gravity for the sounding: at the latitude, or standard ([`Self::validate`] has
    /// checked the latitude).
    #[cfg_attr(not(feature = "pipeline-sounding"), allow(dead_code))]
    fn gravity(&self) -> Result<Gravity, Error> {
        match self.latitude_deg {
            Some(lat) => Gravity::at_latitude(lat),
            None => Ok(Gravity::Standard),
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
#[allow(clippy::large_enum_variant)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
enum TrackState<H: Presence> {
    /// The totals (and the layout's hike presence, which names the other variant's
    /// slot; a marker, so that builds without the hike tracker use it too).
    Flight(AscentTotals, PhantomData<H>),
    #[cfg(feature = "pipeline-hike")]
    /// The hike tracker (in its slot: a layout without it has no such variant). The
    /// smoothed vertical speed of its height is the last output's.
    Hike(H::Slot<HikeState>),
}

/// The estimator's state: the two estimators are never used together, so their states
/// share one place.
#[derive(Debug, Clone, PartialEq)]
#[allow(clippy::large_enum_variant)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
enum EstimatorState<P: Presence, K: parts::Holdable> {
    /// Pointwise heights behind the median spike gate.
    Pointwise(SpikeGate),
    /// The Kalman filter (in its slot: a layout without it has no such variant).
    Kalman(P::Slot<VerticalKalman<K>>),
}

/// Where a [`Pipeline`] keeps its [`Settings`]: in its own state ([`Settings`], the
/// default; 216 bytes with every pipeline option on a 64-bit host), borrowed
/// (`&Settings`, for example `&'static Settings` from a `static` in flash: then only a
/// reference and the run-time changes, the start altitude and the altimeter setting,
/// are in the state, and the Kalman filter and the phase tracker borrow their settings
/// from it too), or fixed at compile time ([`Fixed`]: nothing in the state, and the
/// code of unused options left out).
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::pipeline::{Pipeline, Sample, Settings};
/// static DRONE: Settings = Settings::drone();
/// let mut pipe = Pipeline::<2, &'static Settings>::new(&DRONE)?;
/// let out = pipe.process(&Sample::pressure(Instant::ZERO, 98_000.0));
/// assert!(out.accepted());
/// # Ok::<(), isohypse::Error>(())
/// ```
pub trait SettingsStore {
    /// How the Kalman filter holds its settings (owned or borrowed).
    type Kalman: Borrow<VerticalKalmanConfig> + Copy + parts::Holdable;
    /// How the phase tracker holds its settings (owned or borrowed).
    type Phases: Borrow<PhaseSettings>;
    /// The optional parts the pipeline holds ([`parts::Every`] unless the settings
    /// are fixed at compile time).
    type Parts: Parts;
    /// The settings.
    fn settings(&self) -> &Settings;
    /// The Kalman filter's settings, if the estimator is [`Estimator::Kalman`].
    fn kalman(&self) -> Option<Self::Kalman>;
    /// The phase tracker's settings.
    fn phases(&self) -> Self::Phases;
}

impl SettingsStore for Settings {
    type Kalman = VerticalKalmanConfig;
    type Phases = PhaseSettings;
    type Parts = parts::Every;
    fn settings(&self) -> &Settings {
        self
    }
    fn kalman(&self) -> Option<VerticalKalmanConfig> {
        // the borrowed store's answer, copied
        SettingsStore::kalman(&self).copied()
    }
    fn phases(&self) -> PhaseSettings {
        *SettingsStore::phases(&self)
    }
}

impl<'a> SettingsStore for &'a Settings {
    type Kalman = &'a VerticalKalmanConfig;
    type Phases = &'a PhaseSettings;
    type Parts = parts::Every;
    fn settings(&self) -> &Settings {
        self
    }
    fn kalman(&self) -> Option<&'a VerticalKalmanConfig> {
        // (a match here: the same match in a helper on `Estimator` made the compiler
        // stop inlining the settings check into `Pipeline::new`, 796 more bytes of
        // flash in the drone firmware, measured)
        let s: &'a Settings = self;
        match &s.estimator {
            Estimator::Kalman(k) => Some(k),
            Estimator::Off => None,
        }
    }
    fn phases(&self) -> &'a PhaseSettings {
        let s: &'a Settings = self;
        s.tracking.phases()
    }
}

/// Settings fixed at compile time, for the [`Fixed`] store.
pub trait FixedSettings {
    /// The settings (validated by [`Pipeline::new`] like any others).
    const SETTINGS: Settings;
    /// The parts the pipeline holds ([`parts`]): [`parts::Every`], a preset's layout
    /// ([`parts::Drone`], [`parts::Balloon`], [`parts::Hike`]) or one's own. An omitted
    /// part takes no RAM; settings that need it are refused.
    type Parts: Parts;
}

/// A [`SettingsStore`] for settings fixed at compile time ([`FixedSettings`]). It takes
/// no RAM (the Kalman filter and the phase tracker hold the same empty handle), and the
/// compiler, which sees the settings as constants, leaves out the code of the options
/// they do not use: with the drone preset, the spike gate of the pointwise path, the
/// altimeter-free branches and the hike tracker's hooks (measured in the firmware's
/// flash probe, README). The settings cannot change at run time; the run-time changes
/// (start altitude, altimeter setting, fixes) work as with any store.
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::pipeline::{parts, Fixed, FixedSettings, Pipeline, Sample, Settings};
/// struct Drone;
/// impl FixedSettings for Drone {
///     const SETTINGS: Settings = Settings::drone();
///     // only the parts the drone needs: no hike tracker, no sounding in RAM
///     type Parts = parts::Drone;
/// }
/// let mut pipe = Pipeline::<2, Fixed<Drone>>::new(Fixed::new())?;
/// let out = pipe.process(&Sample::pressure(Instant::ZERO, 98_000.0));
/// assert!(out.accepted());
/// # Ok::<(), isohypse::Error>(())
/// ```
pub struct Fixed<T>(core::marker::PhantomData<T>);

impl<T> Fixed<T> {
    /// The store (it holds nothing).
    pub const fn new() -> Self {
        Self(core::marker::PhantomData)
    }
}

// Written out rather than derived: derives would require `T` itself to be `Clone`,
// `Debug`, ... although nothing of `T` is stored.
impl<T> Default for Fixed<T> {
    fn default() -> Self {
        Self::new()
    }
}
impl<T> Clone for Fixed<T> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<T> Copy for Fixed<T> {}
impl<T> PartialEq for Fixed<T> {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}
impl<T> core::fmt::Debug for Fixed<T> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str("Fixed")
    }
}
#[cfg(feature = "defmt")]
impl<T> defmt::Format for Fixed<T> {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "Fixed")
    }
}

impl<T: FixedSettings> Fixed<T> {
    /// The settings, as a constant of the program.
    const fn fixed() -> &'static Settings {
        const { &T::SETTINGS }
    }
}

impl<T: FixedSettings> SettingsStore for Fixed<T> {
    type Kalman = Self;
    type Phases = Self;
    type Parts = T::Parts;
    fn settings(&self) -> &Settings {
        Self::fixed()
    }
    fn kalman(&self) -> Option<Self> {
        matches!(Self::fixed().estimator, Estimator::Kalman(_)).then_some(*self)
    }
    fn phases(&self) -> Self {
        *self
    }
}

impl<T: FixedSettings> Borrow<VerticalKalmanConfig> for Fixed<T> {
    /// The Kalman settings ([`VerticalKalmanConfig::DEFAULT`] when the estimator is
    /// off: then no filter asks).
    fn borrow(&self) -> &VerticalKalmanConfig {
        match &Self::fixed().estimator {
            Estimator::Kalman(k) => k,
            Estimator::Off => const { &VerticalKalmanConfig::DEFAULT },
        }
    }
}

impl<T: FixedSettings> Borrow<PhaseSettings> for Fixed<T> {
    fn borrow(&self) -> &PhaseSettings {
        Self::fixed().tracking.phases()
    }
}

impl Tracking {
    /// The hike tracker's settings ([`HikeConfig::DEFAULT`] when tracking a flight: then
    /// no hike tracker asks).
    #[cfg(feature = "pipeline-hike")]
    pub const fn hike(&self) -> &HikeConfig {
        match self {
            Tracking::Hike { hike, .. } => hike,
            Tracking::Flight { .. } => const { &HikeConfig::DEFAULT },
        }
    }

    /// The phase thresholds.
    pub const fn phases(&self) -> &PhaseSettings {
        match self {
            Tracking::Flight { phases, .. } => phases,
            #[cfg(feature = "pipeline-hike")]
            Tracking::Hike { phases, .. } => phases,
        }
    }
}

/// The presence of each optional part in a store's layout.
type KalmanOf<S> = <<S as SettingsStore>::Parts as Parts>::Kalman;
type GroundOf<S> = <<S as SettingsStore>::Parts as Parts>::Ground;
#[cfg_attr(
    not(any(feature = "pipeline-sounding", feature = "pipeline-column")),
    allow(dead_code)
)]
type ModelOf<S> = <<S as SettingsStore>::Parts as Parts>::Model;
#[cfg(feature = "pipeline-hike")]
type HikeOf<S> = <<S as SettingsStore>::Parts as Parts>::Hike;

/// Masks of [`Pipeline`]'s yes/no state.
const GROUND_FROZEN: u8 = 1;
const HAS_TIME: u8 = 2;
const LAST_EVENT: u8 = 4;
const LAST_CLOCK_FAULT: u8 = 8;

/// The ground part of a [`Pipeline`]: the ground reference and the start altitude it
/// ties to it (the run-time value: [`Pipeline::set_start_altitude`]). A layout without
/// the ground reference keeps neither (it refuses a start altitude).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Datum {
    reference: GroundReference,
    start_altitude_m: Option<f32>,
}

/// What [`Pipeline`] keeps of its last output to carry it forward (the phase, totals
/// and tendency are read from the trackers; the flags are kept beside it, in 16 bits).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Carried {
    altitude_m: f32,
    raw_altitude_m: f32,
    vertical_speed_mps: f32,
    altitude_sigma_m: f32,
}

/// The composed per-sample pipeline; `N` is the capacity of the balloon's stored
/// profile (use 2 for the other presets: the profile is then unused and small); `S`
/// is where the settings are kept ([`SettingsStore`]: owned by default, or a
/// `&'static Settings` to keep them out of RAM).
///
/// State size: printed by the test `pipeline_state_sizes` and in README.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pipeline<const N: usize, S: SettingsStore = Settings> {
    store: S,
    /// The run-time changes of the settings ([`Self::set_start_altitude`],
    /// [`Self::set_altimeter_setting`]); everything else is read from `store`.
    altimeter_setting: AltimeterSetting,
    #[cfg(feature = "pipeline-sounding")]
    sounding: Option<<<S::Parts as Parts>::Model as Presence>::Slot<Sounding<N>>>,
    #[cfg(feature = "pipeline-column")]
    column_reference: Option<<<S::Parts as Parts>::Model as Presence>::Slot<Reference>>,
    estimator: EstimatorState<<S::Parts as Parts>::Kalman, S::Kalman>,
    /// The ground reference (`()` in a layout without it).
    ground: <<S::Parts as Parts>::Ground as Presence>::Field<Datum>,
    phases: PhaseCore<S::Phases>,
    track: TrackState<<S::Parts as Parts>::Hike>,
    /// Datum offset added to the model height, m, and its target (fixes slew to it).
    offset_m: f32,
    offset_target_m: f32,
    /// Time of the last sample taken, s, if `HAS_TIME` is set (8 bytes and a bit, not
    /// the 16 of an `Option`).
    last_time: Instant,
    #[cfg(any(feature = "pipeline-sounding", feature = "pipeline-column"))]
    last_temperature: Option<<<S::Parts as Parts>::Model as Presence>::Slot<Temperature>>,
    last_pressure_pa: f32,
    last: Carried,
    /// The last output's flags (every flag is below bit 16, checked at compile time):
    /// beside `bits`, they fill what would be padding.
    last_flags: u16,
    /// Yes/no state: `GROUND_FROZEN` (the height of the ground reference is fixed),
    /// `HAS_TIME`, `LAST_EVENT` (the last sample confirmed the phase tracker's last
    /// event). One byte for the three.
    bits: Bits,
}

impl<const N: usize, S: SettingsStore> Pipeline<N, S> {
    /// A pipeline with `settings` (validated): owned ([`Settings`]) or borrowed
    /// (`&Settings`, see [`SettingsStore`]). Errors: [`Error::InvalidSetting`] and the
    /// nested settings' errors.
    pub fn new(settings: S) -> Result<Self, Error> {
        let s = settings.settings();
        s.validate()?;
        let estimator = match settings.kalman() {
            None => EstimatorState::Pointwise(SpikeGate::new()),
            Some(k) => EstimatorState::Kalman(
                KalmanOf::<S>::hold(VerticalKalman::new(k)?).ok_or(Error::InvalidSetting)?,
            ),
        };
        let phases = PhaseCore::new(settings.phases())?;
        let track = match s.tracking {
            Tracking::Flight { totals_band_m, .. } => {
                TrackState::Flight(AscentTotals::new(totals_band_m)?, PhantomData)
            }
            #[cfg(feature = "pipeline-hike")]
            Tracking::Hike { hike, .. } => TrackState::Hike(
                HikeOf::<S>::hold(HikeState::new(&hike)?).ok_or(Error::InvalidSetting)?,
            ),
        };
        let ground = GroundOf::<S>::field(Datum {
            reference: GroundReference::new(GroundReferenceConfig {
                min_samples: s.ground_min_samples.max(2),
                min_duration_s: 0.0,
            })?,
            start_altitude_m: s.start_altitude_m,
        });
        // the parts these settings need must be in the layout
        if (s.start_altitude_m.is_some() && !GroundOf::<S>::HELD)
            || (!ModelOf::<S>::HELD && !matches!(s.model, HeightModel::Standard))
        {
            return Err(Error::InvalidSetting);
        }
        let altimeter_setting = s.altimeter_setting;
        Ok(Self {
            store: settings,
            altimeter_setting,
            #[cfg(feature = "pipeline-sounding")]
            sounding: None,
            #[cfg(feature = "pipeline-column")]
            column_reference: None,
            estimator,
            ground,
            phases,
            track,
            offset_m: 0.0,
            offset_target_m: 0.0,
            last_time: Instant::ZERO,
            #[cfg(any(feature = "pipeline-sounding", feature = "pipeline-column"))]
            last_temperature: None,
            last_pressure_pa: 0.0,
            last: Carried::default(),
            last_flags: 0,
            bits: Bits::NONE,
        })
    }

    /// The settings in use (with the run-time changes).
    pub fn settings(&self) -> Settings {
        let mut s = *self.store.settings();
        s.start_altitude_m = self.start_altitude();
        s.altimeter_setting = self.altimeter_setting;
        s
    }

    /// The last output (of the last sample taken; a zeroed output before any).
    pub fn last_output(&self) -> Output {
        let mut out = self.carry(self.last_time().unwrap_or(Instant::ZERO), self.last_flags());
        if self.bits.get(LAST_EVENT) {
            out.event = self.phases.event_confirmed_at(self.last_time);
        }
        out
    }

    /// The start altitude in use (run-time value), m; always `None` in a layout without
    /// the ground reference.
    fn start_altitude(&self) -> Option<f32> {
        GroundOf::<S>::field_ref(&self.ground).and_then(|g| g.start_altitude_m)
    }

    /// The last output's flags.
    fn last_flags(&self) -> Flags {
        let mut flags = Flags(u32::from(self.last_flags));
        if self.bits.get(LAST_CLOCK_FAULT) {
            flags.set(Flags::CLOCK_FAULT);
        }
        flags
    }

    /// Keeps `flags` as the last output's: bits 0 to 15 in `last_flags`, the clock
    /// fault in `bits` (so that the state stays within 256 bytes).
    fn set_last_flags(&mut self, flags: Flags) {
        self.last_flags = flags.0 as u16;
        self.bits
            .set(LAST_CLOCK_FAULT, flags.contains(Flags::CLOCK_FAULT));
    }

    /// Time of the last sample taken, s.
    fn last_time(&self) -> Option<Instant> {
        // A flag, not a test of the time against a sentinel: the compiler turns a bit
        // test against an infinity into an `f64` comparison, a library call on the
        // Cortex-M4F (56 instructions a call, measured).
        self.bits.get(HAS_TIME).then_some(self.last_time)
    }

    /// The last output carried forward to `time` with `flags` (a rejected sample, or
    /// an outlier the spike gate held back).
    fn carry(&self, time: Instant, flags: Flags) -> Output {
        let (ascent_m, descent_m, tendency_hpa) = match &self.track {
            TrackState::Flight(totals, _) => (totals.ascent_m(), totals.descent_m(), None),
            #[cfg(feature = "pipeline-hike")]
            TrackState::Hike(part) => {
                let hike = HikeOf::<S>::get(part);
                (
                    hike.totals().ascent_m(),
                    hike.totals().descent_m(),
                    hike.tendency_hpa(),
                )
            }
        };
        Output {
            time,
            altitude_m: self.last.altitude_m,
            raw_altitude_m: self.last.raw_altitude_m,
            vertical_speed_mps: self.last.vertical_speed_mps,
            altitude_sigma_m: self.last.altitude_sigma_m,
            phase: self.phases.phase(),
            event: None,
            ascent_m,
            descent_m,
            tendency_hpa,
            flags,
        }
    }

    /// The sounding (balloon model), once started.
    #[cfg(feature = "pipeline-sounding")]
    pub fn sounding(&self) -> Option<&Sounding<N>> {
        self.sounding.as_ref().map(ModelOf::<S>::get)
    }

    /// The current flight phase.
    pub fn phase(&self) -> Phase {
        self.phases.phase()
    }

    /// The phase thresholds in use.
    pub fn phase_settings(&self) -> &PhaseSettings {
        self.phases.settings()
    }

    /// The highest output height since launch (seen in ascent or float), m.
    pub fn apex_m(&self) -> Option<f32> {
        self.phases.apex_m()
    }

    /// Number of barometer samples the estimator rejected as outliers.
    pub fn outlier_count(&self) -> u32 {
        match &self.estimator {
            EstimatorState::Pointwise(gate) => gate.outliers,
            EstimatorState::Kalman(k) => KalmanOf::<S>::get(k).rejected_count(),
        }
    }

    /// Whether the Kalman filter has settled and reuses its covariance (see
    /// [`VerticalKalmanConfig::gain_reuse_tolerance`]); `false` without one.
    pub fn estimator_settled(&self) -> bool {
        match &self.estimator {
            EstimatorState::Pointwise(_) => false,
            EstimatorState::Kalman(k) => KalmanOf::<S>::get(k).is_settled(),
        }
    }

    /// Set a new sea-level-referenced start altitude at run time (the datum). The
    /// estimator, phases and totals keep their state; the height moves to the new datum
    /// through [`Settings::fix_time_constant_s`]. Errors: [`Error::InvalidSetting`].
    pub fn set_start_altitude(&mut self, start_altitude_m: Option<f32>) -> Result<(), Error> {
        let mut s = self.settings();
        s.start_altitude_m = start_altitude_m;
        s.validate()?;
        if start_altitude_m.is_some() && !GroundOf::<S>::HELD {
            // a layout without the ground reference (parts::Hike)
            return Err(Error::InvalidSetting);
        }
        self.bits.set(GROUND_FROZEN, false);
        if let Some(g) = GroundOf::<S>::field_mut(&mut self.ground) {
            g.start_altitude_m = start_altitude_m;
            g.reference.rezero();
        }
        Ok(())
    }

    /// A new altimeter setting at run time (a new QNH from the weather service, a
    /// field's QFE). The estimator, phases and totals keep their state: the height
    /// moves to the new setting smoothly through [`Settings::fix_time_constant_s`]
    /// instead of jumping. Errors, settings unchanged: [`Error::InvalidSetting`] and the
    /// standard atmosphere's range errors for a setting outside it.
    pub fn set_altimeter_setting(&mut self, setting: AltimeterSetting) -> Result<(), Error> {
        let mut s = self.settings();
        s.altimeter_setting = setting;
        s.validate()?;
        // Height difference the new setting makes at the last pressure; the datum
        // offset absorbs it now and slews back to its target.
        if let (HeightModel::Standard, Some(p)) = (
            self.store.settings().model,
            Pressure::from_pa(self.last_pressure_pa).ok(),
        ) {
            let old = self.altimeter_setting.height(p)?;
            let new = setting.height(p)?;
            self.offset_m -= new.meters() - old.meters();
        }
        if self.start_altitude().is_some() && !self.bits.get(GROUND_FROZEN) {
            // the ground reference averaged heights of the old setting: take it anew
            if let Some(g) = GroundOf::<S>::field_mut(&mut self.ground) {
                g.reference.rezero();
            }
        }
        self.altimeter_setting = setting;
        Ok(())
    }

    /// The device's clock was restarted on purpose (after a brown-out with the state
    /// kept, or a new epoch): the next sample starts a new time base without a
    /// [`Flags::CLOCK_FAULT`]. The estimator re-acquires from it; the stored profile,
    /// totals, phase and datum are kept.
    pub fn restart_clock(&mut self) {
        self.bits.set(HAS_TIME, false);
        if let EstimatorState::Kalman(k) = &mut self.estimator {
            KalmanOf::<S>::get_mut(k).reset();
        }
    }

    /// Re-zero: the next samples at rest become the new ground reference (drone
    /// re-arming).
    pub fn rezero(&mut self) {
        if let Some(g) = GroundOf::<S>::field_mut(&mut self.ground) {
            g.reference.rezero();
        }
        self.bits.set(GROUND_FROZEN, false);
    }

    /// Flag a barometer disturbance (propeller wash, ground effect): the Kalman filter
    /// trusts the barometer less while set.
    pub fn set_baro_disturbed(&mut self, disturbed: bool) {
        if let EstimatorState::Kalman(k) = &mut self.estimator {
            KalmanOf::<S>::get_mut(k).set_baro_disturbed(disturbed);
        }
    }

    /// An accelerometer sample between pressure samples (earth-frame vertical
    /// acceleration with gravity removed, m/s^2). Errors, state unchanged: those of
    /// [`VerticalKalman::predict`]; `Ok` and ignored without a Kalman estimator.
    pub fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        if let Some(last) = self.last_time() {
            if let Step::Later(dt) = step_between(last, time) {
                if dt > self.store.settings().max_gap_s {
                    return Err(Error::TimeJump);
                }
            }
        }
        match &mut self.estimator {
            EstimatorState::Kalman(k) => KalmanOf::<S>::get_mut(k).predict(time, accel_up_mps2),
            EstimatorState::Pointwise(_) => Ok(()),
        }
    }

    /// Process one sample. Never fails: problems are reported in [`Output::flags`], and
    /// a rejected sample leaves the whole pipeline unchanged.
    pub fn process(&mut self, sample: &Sample) -> Output {
        let mut flags = Flags::default();
        // 1. Validation of the required channels. The step from the last sample is
        //    formed once and reused below.
        let step = self.last_time().map(|last| step_between(last, sample.time));
        // A repeated stamp is a duplicate and refused; a step back or a jump beyond
        // the longest gap starts a new time base (`clock_fault`, no step: `dt` None).
        let (dt, clock_fault) = match step {
            None => (None, false),
            Some(Step::Later(dt)) if dt <= self.store.settings().max_gap_s => (Some(dt), false),
            Some(Step::Same) => return self.carry(sample.time, Flags::REJECTED_TIME),
            Some(_) => (None, true),
        };
        if clock_fault {
            flags.set(Flags::CLOCK_FAULT);
        }
        let (lo, hi) = self.store.settings().pressure_range_pa;
        let pressure = match Pressure::from_pa(sample.pressure_pa) {
            Ok(p) if p.pa() >= lo && p.pa() <= hi => p,
            _ => return self.carry(sample.time, Flags::REJECTED_PRESSURE),
        };
        // Optional channels: an invalid value is ignored and flagged.
        let temperature = match sample.temperature_c.map(Temperature::from_celsius) {
            Some(Ok(t)) => Some(t),
            Some(Err(_)) => {
                flags.set(Flags::TEMPERATURE_IGNORED);
                None
            }
            None => None,
        };
        let humidity = match sample.humidity_pct.map(RelativeHumidity::from_percent) {
            Some(Ok(h)) => Some(h),
            Some(Err(_)) => {
                flags.set(Flags::HUMIDITY_IGNORED);
                None
            }
            None => None,
        };
        let accel = match sample.accel_up_mps2 {
            Some(a) if a.is_finite() && a.abs() <= 20.0 * STANDARD_GRAVITY => Some(a),
            Some(_) => {
                flags.set(Flags::ACCEL_IGNORED);
                None
            }
            None => None,
        };
        let fix = match sample.known_altitude_m {
            Some(h) if h.is_finite() && h.abs() < 90_000.0 => Some(h),
            Some(_) => {
                flags.set(Flags::FIX_IGNORED);
                None
            }
            None => None,
        };

        // 2. Height model, computed on copies so that a failure changes nothing.
        // What the model prepares for its own state (a new sounding level, the column
        // reference), applied only when the whole sample is accepted. An out-parameter,
        // not part of the result: returned by value the sounding inside would be copied
        // on every sample (about 240 instructions on the Cortex-M4F, measured).
        let mut model_change = ModelChange::Keep;
        let model = self.model_height(
            pressure,
            temperature,
            humidity,
            &mut flags,
            &mut model_change,
        );
        let Ok((model_m, column_t)) = model else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };

        // 3. Datum: the ground reference averaged so far (this sample joins it below,
        //    once the estimator has accepted it and the vehicle is at rest), then fixes.
        // (read here; the sample joins it at the commit, step 6)
        let mut ground_frozen = self.bits.get(GROUND_FROZEN);
        let mut offset_target = self.offset_target_m;
        let mut offset = self.offset_m;
        let start_altitude = self.start_altitude();
        let averaging =
            start_altitude.is_some() && !ground_frozen && self.phases.phase() == Phase::Ground;
        if let (Some(start), true, Some(ground)) = (
            start_altitude,
            averaging,
            GroundOf::<S>::field_ref(&self.ground).map(|g| &g.reference),
        ) {
            if ground.sample_count() == 0 {
                // provisional until samples at rest are averaged
                offset_target = start - model_m;
                offset = offset_target;
            }
            if !ground.is_ready() {
                flags.set(Flags::GROUND_AVERAGING);
            }
        } else if start_altitude.is_some() && !ground_frozen {
            // motion started: the reference is fixed from now on
            ground_frozen = true;
        }
        if let Some(known) = fix {
            if !self.is_hike() {
                // the estimate (not the single sample) is what the fix corrects
                let current = if self.last_time().is_some() {
                    self.last.altitude_m - offset
                } else {
                    model_m
                };
                offset_target = known - current;
                ground_frozen = true;
            }
            flags.set(Flags::FIX_APPLIED);
        }
        match dt {
            Some(dt) => {
                offset += slew_gain(dt, self.store.settings().fix_time_constant_s)
                    * (offset_target - offset)
            }
            None => offset = offset_target,
        }
        let raw_m = model_m + offset;
        let Ok(raw) = Height::from_meters(raw_m) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };

        // 4. Estimator (with its outlier gate), or the pointwise height behind a median
        //    spike gate.
        // The hike tracker is the last step that can refuse the sample; ask it now,
        // before the estimator changes.
        #[cfg(feature = "pipeline-hike")]
        if let TrackState::Hike(_) = &self.track {
            if HikeState::check_pressure(self.store.settings().tracking.hike(), pressure).is_err() {
                return self.carry(sample.time, Flags::REJECTED_MODEL);
            }
        }
        // the spike gate's new state, committed with the rest
        let mut new_spikes = None;
        let known_step = if clock_fault {
            None
        } else {
            self.last_time().zip(step)
        };
        // `held_back_s`: seconds covered by samples the spike gate held back since the
        // last sample taken (the phase and hike trackers see only the samples that
        // are taken): the gate's age, which sums the same steps from the same start;
        // 0 without the gate. Read in the arm that knows the estimator, before any
        // change (the gate's new state is committed at step 6).
        let (height_m, speed_mps, sigma_m, held_back_s) = match &mut self.estimator {
            EstimatorState::Pointwise(gate_state) => {
                let held_back_s = if gate_state.age_s.is_finite() {
                    gate_state.age_s
                } else {
                    0.0
                };
                if let Some(gate) = self.store.settings().spike_gate_m {
                    // after a clock fault the heights behind the gate are of another
                    // time: it starts again from this sample
                    let mut spikes = if clock_fault {
                        SpikeGate::new()
                    } else {
                        *gate_state
                    };
                    let gap = dt.unwrap_or(0.0);
                    if !clock_fault && spikes.is_spike(gap, model_m, gate) {
                        // carried forward; the gate counts toward re-acquiring
                        gate_state.hold(gap);
                        let flags = Flags(flags.0 | Flags::OUTLIER.0);
                        let out = self.carry(sample.time, flags);
                        // taken (flagged), so its time counts as the last one
                        self.last_time = sample.time;
                        self.bits.set(HAS_TIME, true);
                        self.set_last_flags(flags);
                        self.bits.set(LAST_EVENT, false);
                        return out;
                    }
                    spikes.accept(gap, model_m);
                    new_spikes = Some(spikes);
                }
                let speed = match dt {
                    Some(dt)
                        if !self.last_flags().rejected()
                            && !self.last_flags().contains(Flags::OUTLIER) =>
                    {
                        difference_speed(raw_m - self.last.raw_altitude_m, dt)
                            .unwrap_or(self.last.vertical_speed_mps)
                    }
                    _ => self.last.vertical_speed_mps,
                };
                (
                    raw_m,
                    speed,
                    self.model_sigma(pressure, column_t, raw_m),
                    held_back_s,
                )
            }
            EstimatorState::Kalman(slot) => {
                let held = KalmanOf::<S>::get_mut(slot);
                // After a clock fault, or with the filter's clock ahead of this sample,
                // the filter starts again from this sample (its time base is gone): on
                // a copy, committed only if the sample is taken.
                let mut fresh = None;
                if clock_fault || held.is_ahead_of(sample.time) {
                    let mut k = *held;
                    k.reset();
                    fresh = Some(k);
                    flags.set(Flags::REACQUIRED);
                }
                let k = match fresh.as_mut() {
                    Some(k) => k,
                    None => &mut *held,
                };
                // Height noise of this sample from the sensor's pressure noise.
                let sigma = pressure_sigma_m(self.store.settings(), pressure, column_t);
                let sigma = if sigma > 1.0e-3 { sigma } else { 1.0e-3 };
                let sigma = eight_bit_sigma(sigma);
                // In place: the filter takes the accelerometer and barometer samples
                // as one and changes nothing when it refuses the barometer sample, and
                // nothing after this step can refuse the sample.
                let step_k = k.step_reusing(sample.time, known_step);
                let (predicted, corrected) =
                    k.predict_correct(sample.time, step_k, accel, raw, sigma);
                if predicted.is_err() {
                    flags.set(Flags::ACCEL_IGNORED);
                }
                match corrected {
                    Ok(KalmanOutcome::Rejected { .. }) => flags.set(Flags::OUTLIER),
                    Ok(KalmanOutcome::Reacquired) => flags.set(Flags::REACQUIRED),
                    Ok(_) => {}
                    Err(_) => return self.carry(sample.time, Flags::REJECTED_MODEL),
                }
                let estimate = k.height_speed_variance();
                if let Some(k) = fresh {
                    *held = k;
                }
                match estimate {
                    Some((h, v, var_h)) => (h, v, crate::math::sigma_from_variance(var_h), 0.0),
                    None => (raw_m, 0.0, self.model_sigma(pressure, column_t, raw_m), 0.0),
                }
            }
        };
        // The ground reference takes samples the estimator accepted, at rest only: a
        // spike or the first seconds of a climb must not move the zero. Pushed at the
        // commit (step 6): nothing between here and there reads the reference or the
        // offset, and a sample refused before then must not reach it.
        let ground_sample = (averaging
            && speed_mps.abs() < self.phases.settings().rest_mps
            && !flags.contains(Flags::OUTLIER)
            && !flags.contains(Flags::REACQUIRED))
        .then_some(model_m);

        // 5. Trackers, updated in place: the hike tracker's update is the last step that
        //    can refuse the sample, and it leaves the tracker unchanged when it does;
        //    nothing after it can fail.
        #[cfg(feature = "pipeline-hike")]
        let first_sample = self.last_time().is_none();
        let (out_height, speed_mps, ascent, descent, tendency) = match &mut self.track {
            TrackState::Flight(totals, _) => {
                totals.update(Height::from_meters(height_m).unwrap_or(raw));
                (
                    height_m,
                    speed_mps,
                    totals.ascent_m(),
                    totals.descent_m(),
                    None,
                )
            }
            #[cfg(feature = "pipeline-hike")]
            TrackState::Hike(part) => {
                let hike = HikeOf::<S>::get_mut(part);
                let config = self.store.settings().tracking.hike();
                // it sees only the samples that are taken (like the phase tracker)
                // after a clock fault the time elapsed is unknown: the tracker takes
                // it as the longest gap (it follows the new height and lets stale
                // tendency values go)
                let since = if clock_fault {
                    self.store.settings().max_gap_s
                } else {
                    dt.unwrap_or(0.0) + held_back_s
                };
                let mut r = hike.step(config, since, raw_m);
                if let Some(h) = fix.and_then(|k| Height::from_meters(k).ok()) {
                    // the first fix of a walk applies at once, later ones slew
                    let applied = if first_sample {
                        hike.set_elevation(h)
                    } else {
                        hike.fix_elevation(h)
                    };
                    if applied.is_ok() && first_sample {
                        r.height = h;
                    }
                }
                if r.resting {
                    flags.set(Flags::AT_REST);
                }
                if r.falling_pressure_alert {
                    flags.set(Flags::FALLING_PRESSURE);
                }
                let h = r.height.meters();
                // vertical speed of the tracked height, smoothed (the raw
                // difference of 2 Pa noise at 1 Hz is 0.2 m/s); the smoother's
                // state is the last output's speed (only a taken sample
                // changes it, and it is 0 before the first)
                let mut hike_speed = self.last.vertical_speed_mps;
                if let Some(dt) = dt {
                    if let Some(v) = difference_speed(h - self.last.altitude_m, dt) {
                        let k = slew_gain(dt, HIKE_SPEED_TIME_CONSTANT_S);
                        hike_speed += k * (v - hike_speed);
                    }
                }
                (h, hike_speed, r.ascent_m, r.descent_m, r.tendency_hpa)
            }
        };

        // Time is validated and heights are finite here, so this cannot fail; if it
        // did, the phase tracker would keep its state (it is atomic on error).
        let event = match self
            .phases
            .step(dt.unwrap_or(0.0) + held_back_s, out_height, speed_mps)
        {
            Ok(step) if step.event => self.phases.event_confirmed_at(sample.time),
            _ => None,
        };

        // 6. Commit.
        self.last_pressure_pa = pressure.pa();
        match model_change {
            ModelChange::Keep => {}
            #[cfg(feature = "pipeline-column")]
            ModelChange::ColumnStart(reference) => {
                self.column_reference = ModelOf::<S>::hold(reference)
            }
            #[cfg(feature = "pipeline-sounding")]
            ModelChange::SoundingStart(s) => self.sounding = ModelOf::<S>::hold(s),
            #[cfg(feature = "pipeline-sounding")]
            ModelChange::SoundingStep(pending, descending) => {
                if let Some(s) = self.sounding.as_mut().map(ModelOf::<S>::get_mut) {
                    if descending {
                        s.set_recording(false);
                    }
                    s.commit(pending);
                }
            }
        }
        if let (Some(start), Some(m), Some(ground)) = (
            start_altitude,
            ground_sample,
            GroundOf::<S>::field_mut(&mut self.ground).map(|g| &mut g.reference),
        ) {
            let _ = ground.push_after(dt.unwrap_or(0.0), sample.time, height_or_zero(m));
            if let Ok(mean) = ground.mean().or_else(|_| ground.running_mean()) {
                offset_target = start - mean.meters();
                offset = offset_target;
            }
        }
        self.bits.set(GROUND_FROZEN, ground_frozen);
        self.offset_m = offset;
        self.offset_target_m = offset_target;
        if let (Some(spikes), EstimatorState::Pointwise(gate_state)) =
            (new_spikes, &mut self.estimator)
        {
            *gate_state = spikes;
        }
        self.last_time = sample.time;
        self.bits.set(HAS_TIME, true);
        #[cfg(any(feature = "pipeline-sounding", feature = "pipeline-column"))]
        if let Some(t) = temperature {
            self.last_temperature = ModelOf::<S>::hold(t);
        }
        self.last = Carried {
            altitude_m: out_height,
            raw_altitude_m: raw_m,
            vertical_speed_mps: speed_mps,
            altitude_sigma_m: sigma_m,
        };
        self.set_last_flags(flags);
        self.bits.set(LAST_EVENT, event.is_some());
        Output {
            time: sample.time,
            altitude_m: out_height,
            raw_altitude_m: raw_m,
            vertical_speed_mps: speed_mps,
            altitude_sigma_m: sigma_m,
            phase: self.phases.phase(),
            event,
            ascent_m: ascent,
            descent_m: descent,
            tendency_hpa: tendency,
            flags,
        }
    }

    /// Height of the sample from the model (before the datum), m, and the column
    /// temperature used, K.
    #[cfg_attr(
        not(any(feature = "pipeline-sounding", feature = "pipeline-column")),
        allow(unused_variables)
    )]
    fn model_height(
        &self,
        p: Pressure,
        t: Option<Temperature>,
        rh: Option<RelativeHumidity>,
        flags: &mut Flags,
        change: &mut ModelChange<N>,
    ) -> Result<(f32, f32), Error> {
        let (std_height, t_std) = US_1976.pressure_altitude_with_kelvin(p)?;
        // U.S. 1976 layer temperatures run from 186.946 K (84.852 km') to 320.65 K
        // (-5 km'), inside `Temperature::AIR_RANGE_K` (U.S. Standard Atmosphere 1976,
        // Table 4, and the -6.5 K/km lapse rate below sea level; checked over the whole
        // range by `atmosphere::tests::standard_layer_temperatures_stay_in_the_air_range`)
        let t_std = Temperature::from_valid_kelvin(t_std);
        match self.store.settings().model {
            HeightModel::Standard => {
                let t_std = t_std.kelvin();
                let h = match self.altimeter_setting {
                    AltimeterSetting::Standard => std_height,
                    setting => setting.height(p)?,
                };
                Ok((h.meters(), t.map_or(t_std, |t| t.kelvin())))
            }
            #[cfg(feature = "pipeline-column")]
            HeightModel::Column(model) => {
                let t = Some(self.temperature_or_held(t, t_std, flags));
                let air = AirSample {
                    temperature: t,
                    mixing_ratio: match (t, rh) {
                        (Some(t), Some(rh)) => MixingRatio::from_relative_humidity(p, t, rh)?,
                        _ => MixingRatio::DRY,
                    },
                };
                let column_t = t.map_or(t_std.kelvin(), |t| t.kelvin());
                match self.column_reference.as_ref().map(ModelOf::<S>::get) {
                    None => {
                        let base = match self.start_altitude() {
                            Some(h) => Height::from_meters(h)?,
                            None => std_height,
                        };
                        let mut reference = Reference::new(p, base);
                        if let Some(t) = t {
                            reference = reference.with_temperature(t);
                        }
                        // checks the model can place this sample before keeping it
                        model.height(&reference, p, &air)?;
                        *change = ModelChange::ColumnStart(reference);
                        Ok((base.meters() - self.start_offset(), column_t))
                    }
                    Some(reference) => {
                        let h = model.height(reference, p, &air)?;
                        Ok((h.meters() - self.start_offset(), column_t))
                    }
                }
            }
            #[cfg(feature = "pipeline-sounding")]
            HeightModel::Sounding { descent_on_profile } => {
                let t = self.temperature_or_held(t, t_std, flags);
                match self.sounding.as_ref().map(ModelOf::<S>::get) {
                    None => {
                        let base = match self.start_altitude() {
                            Some(h) => Height::from_meters(h)?,
                            None => std_height,
                        };
                        let start =
                            Sounding::new(base, self.store.settings().gravity()?, p, t, rh)?;
                        // the datum offset is applied later: report model height
                        // relative to the start altitude's frame
                        *change = ModelChange::SoundingStart(start);
                        Ok((base.meters() - self.start_offset(), t.kelvin()))
                    }
                    Some(s) => {
                        let descending = matches!(
                            self.phases.phase(),
                            Phase::Burst | Phase::Descent | Phase::Landed
                        );
                        // prepared now, applied when the whole sample is accepted
                        let pending = s.prepare(p, Some(t), rh)?;
                        let h = pending.step.geometric.meters();
                        *change = ModelChange::SoundingStep(pending, descending);
                        if descending && descent_on_profile {
                            if let Ok(h) = s.height_on_profile(p) {
                                flags.set(Flags::ON_PROFILE);
                                return Ok((h.meters() - self.start_offset(), t.kelvin()));
                            }
                        }
                        Ok((h - self.start_offset(), t.kelvin()))
                    }
                }
            }
        }
    }

    /// [`model_sigma`] with this pipeline's settings and start altitude.
    fn model_sigma(&self, p: Pressure, column_t: f32, height_m: f32) -> f32 {
        model_sigma(
            self.store.settings(),
            self.start_altitude(),
            p,
            column_t,
            height_m,
        )
    }

    /// Whether the hike tracker is in use.
    fn is_hike(&self) -> bool {
        match self.track {
            TrackState::Flight(..) => false,
            #[cfg(feature = "pipeline-hike")]
            TrackState::Hike(..) => true,
        }
    }

    /// The sample's temperature; without one the last one held, or before any the
    /// standard atmosphere's at the pressure altitude (flagged either way).
    #[cfg(any(feature = "pipeline-sounding", feature = "pipeline-column"))]
    fn temperature_or_held(
        &self,
        t: Option<Temperature>,
        standard: Temperature,
        flags: &mut Flags,
    ) -> Temperature {
        match (t, self.last_temperature.as_ref().map(ModelOf::<S>::get)) {
            (Some(t), _) => t,
            (None, Some(held)) => {
                flags.set(Flags::TEMPERATURE_HELD);
                *held
            }
            (None, None) => {
                flags.set(Flags::TEMPERATURE_ASSUMED);
                standard
            }
        }
    }

    /// The sounding already starts at the start altitude, so the ground-reference
    /// offset must not add it again: report its heights relative to zero.
    #[cfg(any(feature = "pipeline-sounding", feature = "pipeline-column"))]
    fn start_offset(&self) -> f32 {
        match self.store.settings().model {
            HeightModel::Standard => 0.0,
            // the sounding and the column models
            _ => self.start_altitude().unwrap_or(0.0),
        }
    }
}

/// 1-sigma height noise from the pressure noise: `(R T / (g0 p)) sigma_p`
/// (hypsometric equation differentiated in `p`).
fn pressure_sigma_m(run: &Settings, p: Pressure, column_t: f32) -> f32 {
    US_1976_GAS_CONSTANT * column_t / STANDARD_GRAVITY * run.pressure_noise_pa / p.pa()
}

/// `sigma` (finite, > 0) rounded to 8 significant bits (to nearest; within 0.4 %).
/// The height noise of a sample follows its own pressure, whose noise moves it by
/// about 3e-5 from one sample to the next; rounded, it repeats exactly while the
/// height stays within tens of metres, and the Kalman covariance can settle (see
/// `VerticalKalmanConfig::gain_reuse_tolerance`). A noise figure is not known to
/// 0.4 % anyway (choice of this crate).
fn eight_bit_sigma(sigma: f32) -> f32 {
    f32::from_bits((sigma.to_bits() + 0x8000) & 0xFFFF_0000)
}

/// First-order 1-sigma of a pointwise height: pressure noise through the scale
/// height, and the column temperature uncertainty scaling the height above the
/// datum reference (hypsometric equation: dz = (R T / g) dp / p, and
/// dz / z = dT / T). The two add in quadrature.
fn model_sigma(
    run: &Settings,
    start_altitude_m: Option<f32>,
    p: Pressure,
    column_t: f32,
    height_m: f32,
) -> f32 {
    let from_pressure = pressure_sigma_m(run, p, column_t);
    let reference = start_altitude_m.unwrap_or(0.0);
    let from_temperature = (height_m - reference).abs() * run.temperature_uncertainty_k / column_t;
    crate::math::sigma_from_variance(
        from_pressure * from_pressure + from_temperature * from_temperature,
    )
}

/// Largest accepted [`Settings::pressure_noise_pa`], Pa (10 hPa: beyond any working
/// barometer; larger values would overflow the height sigma).
pub const MAX_PRESSURE_NOISE_PA: f32 = 1_000.0;

/// Largest [`Settings::max_gap_s`], s (a week).
pub const MAX_GAP_LIMIT_S: f32 = 604_800.0;
/// Largest accepted [`Settings::temperature_uncertainty_k`], K.
pub const MAX_TEMPERATURE_UNCERTAINTY_K: f32 = 100.0;

/// What a sample does to the height model's state, applied only when the sample is
/// accepted.
#[allow(clippy::large_enum_variant)]
enum ModelChange<const N: usize> {
    Keep,
    #[cfg(feature = "pipeline-column")]
    ColumnStart(Reference),
    #[cfg(feature = "pipeline-sounding")]
    SoundingStart(Sounding<N>),
    #[cfg(feature = "pipeline-sounding")]
    SoundingStep(PendingStep, bool),
}

/// Median spike gate of the pointwise path: the last five accepted model heights.
///
/// Its own ring of five rather than [`crate::filter::Median`]: the general filter keeps
/// a sorted copy beside its ring (48 bytes on Cortex-M for five samples) to answer in
/// O(N) for any `N`; for five values, sorting a copy when asked costs at most ten
/// compare-exchanges and the gate needs 20 bytes (measured in the hike pipeline's state,
/// README).
#[derive(Debug, Clone, Copy)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct SpikeGate {
    /// The last accepted model heights, m: the first `len` entries (a ring written at
    /// `next` once full; the order does not matter for a median). Entries beyond `len`
    /// are stale and not compared.
    recent: [f32; 5],
    next: u8,
    len: u8,
    consecutive: u8,
    /// Outliers held back since start.
    outliers: u32,
    /// Seconds since the last accepted sample, summed from the pipeline's `f32` steps
    /// (infinite before the first): no `f64` time arithmetic per sample.
    age_s: f32,
}

impl PartialEq for SpikeGate {
    /// The same heights held in the same slots, and the same counts and age.
    fn eq(&self, other: &Self) -> bool {
        let held = usize::from(self.len);
        self.len == other.len
            && self.next == other.next
            && self.recent.get(..held) == other.recent.get(..held)
            && self.consecutive == other.consecutive
            && self.outliers == other.outliers
            && self.age_s == other.age_s
    }
}

/// After this long without an accepted sample (s) the spike window is stale: the next
/// sample is taken and starts it anew (after a gap the device may be anywhere).
const SPIKE_STALE_S: f32 = 120.0;

/// Outliers in a row after which the spike gate takes the next sample.
const SPIKE_REACQUIRE: u8 = 5;

impl SpikeGate {
    fn new() -> Self {
        Self {
            recent: [0.0; 5],
            next: 0,
            len: 0,
            consecutive: 0,
            outliers: 0,
            age_s: f32::INFINITY,
        }
    }

    /// Median of the heights held (the mean of the middle two for an even count), or
    /// `None` before any.
    fn median(&self) -> Option<f32> {
        let n = usize::from(self.len);
        if n == 0 {
            return None;
        }
        // Insertion sort of a copy of the (at most five) heights held: at most ten
        // compare-exchanges, in less flash than a sorting network (measured in the
        // borrowed-settings flash probe).
        let mut v = self.recent;
        for i in 1..n {
            let mut j = i;
            while let Some([a, b]) = v.get_mut(j.wrapping_sub(1)..=j) {
                if *b >= *a {
                    break;
                }
                core::mem::swap(a, b);
                j -= 1;
            }
        }
        let upper = *v.get(n / 2)?;
        if n % 2 == 1 {
            Some(upper)
        } else {
            let lower = *v.get(n / 2 - 1)?;
            Some(lower + 0.5 * (upper - lower))
        }
    }

    /// Whether a sample `dt` seconds after the last one taken, at height `h`, is a
    /// spike.
    fn is_spike(&self, dt: f32, h: f32, gate: f32) -> bool {
        self.consecutive < SPIKE_REACQUIRE
            && self.age_s + dt <= SPIKE_STALE_S
            && self
                .median()
                .is_some_and(|median| (h - median).abs() > gate)
    }

    /// A spike held back `dt` seconds after the last sample taken.
    fn hold(&mut self, dt: f32) {
        self.consecutive = self.consecutive.saturating_add(1);
        self.outliers = self.outliers.saturating_add(1);
        self.age_s += dt;
    }

    /// A sample taken `dt` seconds after the last one, at height `h`.
    fn accept(&mut self, dt: f32, h: f32) {
        if self.consecutive >= SPIKE_REACQUIRE || self.age_s + dt > SPIKE_STALE_S {
            // a real step, or a long gap: start the window anew at the new level
            // (the counts only: zeroing the heights pulled in a `memclr` routine, 174
            // bytes of flash, measured)
            self.next = 0;
            self.len = 0;
        }
        self.consecutive = 0;
        self.age_s = 0.0;
        if !h.is_finite() {
            return;
        }
        if let Some(slot) = self.recent.get_mut(usize::from(self.next)) {
            *slot = h;
        }
        self.next = if self.next >= 4 { 0 } else { self.next + 1 };
        self.len = if self.len >= 5 { 5 } else { self.len + 1 };
    }
}

/// Gain `dt / (tau + dt)` of a first-order lag over a step of `dt` seconds (backward
/// Euler form of `tau dx/dt = target - x`): in [0, 1] for every step, 1 for steps of
/// 1e30 s and more (where f32 would give inf / inf).
fn slew_gain(dt: f32, tau: f32) -> f32 {
    if dt.is_nan() || dt <= 0.0 {
        return 0.0;
    }
    if tau <= 0.0 || dt >= 1.0e30 {
        return 1.0;
    }
    dt / (tau + dt)
}

/// Speed from a height change over a step of `dt` seconds; `None` for steps shorter than
/// [`MIN_SPEED_STEP_S`] (too short to divide by), non-finite results, or speeds above
/// [`MAX_SPEED_MPS`].
fn difference_speed(dh: f32, dt: f32) -> Option<f32> {
    if dt.is_nan() || dt < MIN_SPEED_STEP_S {
        return None;
    }
    let v = dh / dt;
    (v.is_finite() && v.abs() < MAX_SPEED_MPS).then_some(v)
}

/// Shortest step a pointwise speed is computed over, s.
const MIN_SPEED_STEP_S: f32 = 1.0e-3;

/// Fastest vertical speed a pointwise difference may report, m/s; a faster one comes
/// from a time step too short to divide by and is replaced by the last speed.
const MAX_SPEED_MPS: f32 = 1.0e4;

/// Time constant of the hike preset's vertical-speed smoother, s.
#[cfg(feature = "pipeline-hike")]
const HIKE_SPEED_TIME_CONSTANT_S: f32 = 30.0;

fn height_or_zero(m: f32) -> Height {
    Height::from_meters(m).unwrap_or(Height::ZERO)
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use std::vec::Vec;

    /// Median by sorting a copy (the reference; mean of the middle two for an even
    /// count, as `filter::Median`).
    fn sorted_median(values: &[f32]) -> Option<f32> {
        let mut v = values.to_vec();
        v.sort_by(f32::total_cmp);
        let n = v.len();
        if n == 0 {
            return None;
        }
        let upper = v[n / 2];
        if n % 2 == 1 {
            Some(upper)
        } else {
            let lower = v[n / 2 - 1];
            Some(lower + 0.5 * (upper - lower))
        }
    }

    #[test]
    fn spike_gate_median_is_the_median_of_the_last_five() {
        // every 0/1 input of each length sorts right (0-1 principle for the network),
        // then a long pseudo-random run with repeats through the ring
        for len in 0..=5u8 {
            for bits in 0..32u32 {
                let mut gate = SpikeGate::new();
                let values: Vec<f32> = (0..len).map(|k| ((bits >> k) & 1) as f32).collect();
                for &v in &values {
                    gate.accept(0.0, v);
                }
                assert_eq!(gate.median(), sorted_median(&values), "{values:?}");
            }
        }
        let mut gate = SpikeGate::new();
        let mut history = Vec::new();
        let mut x = 12_345u32;
        for _ in 0..2_000 {
            x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
            let v = ((x >> 16) % 50) as f32 * 0.25 - 3.0;
            gate.accept(0.1, v);
            history.push(v);
            let tail = &history[history.len().saturating_sub(5)..];
            assert_eq!(gate.median(), sorted_median(tail));
            // the general filter gives the same value
            let mut general = crate::filter::Median::<5>::new();
            for &t in tail {
                general.push(t).unwrap();
            }
            assert_eq!(gate.median(), general.value());
        }
    }

    #[test]
    fn spike_gate_restart_forgets_the_window() {
        let mut gate = SpikeGate::new();
        for v in [1.0, 2.0, 3.0] {
            gate.accept(1.0, v);
        }
        // a long gap: the window starts anew, and equals a new gate given one sample
        gate.accept(SPIKE_STALE_S + 1.0, 50.0);
        let mut fresh = SpikeGate::new();
        fresh.accept(0.0, 50.0);
        assert_eq!(gate, fresh);
        assert_eq!(gate.median(), Some(50.0));
        // a non-finite height is not held
        gate.accept(1.0, f32::NAN);
        assert_eq!(gate.median(), Some(50.0));
    }
}
