//! [`Balloon`]: a sounding integrated layer by layer from the launch, the burst, and
//! the descent on the profile stored on the way up.

use super::gnss::{GnssFix, GnssOffset};
use super::stages::{
    ASSUMED_TEMPERATURE_SIGMA_K, Carried, FlightTrack, Ground, Inputs, KalmanSample, Offset,
    TimeBase, change_at, check_common, estimate_sigma_m, fix_agrees, fix_target,
    ground_tolerance_m, kalman_sigma_m, kalman_step, pointwise_sigma_m, standard_datum_sigma_m,
    standard_height,
};
use super::{BalloonState, Flags, GnssSettings, Output, Sample, Use};
use crate::Error;
use crate::datum::AltimeterSetting;
use crate::filter::{VerticalKalman, VerticalKalmanConfig};
use crate::flight::{Phase, PhaseSettings};
use crate::geopotential::Gravity;
use crate::humidity::MixingRatio;
use crate::model::{AirSample, ColumnModel, Reference, TemperatureModel};
use crate::part::PartDescription;
use crate::sounding::{PendingStep, Sounding};
use crate::time::Instant;
use crate::units::{Height, Pressure, RelativeHumidity, Temperature};

/// Where a balloon's heights come from.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BalloonModel {
    /// Layer-by-layer integration of each sample's pressure, air temperature and
    /// humidity from the first sample ([`crate::sounding`]).
    Sounding {
        /// After the burst, take heights from the profile stored on the way up instead
        /// of integrating with the lagging temperature sensor.
        descent_on_profile: bool,
    },
    /// U.S. Standard Atmosphere 1976 pressure altitude (plus the launch datum).
    Standard,
    /// A layer temperature model ([`crate::model`]) between the first sample (the
    /// reference: its pressure, temperature and the launch altitude) and each sample,
    /// for example [`TemperatureModel::MeanOfEnds`].
    Column(TemperatureModel),
}

/// A balloon's settings. [`BalloonSettings::DEFAULT`] suits a radiosonde-style payload
/// sampling at 1 Hz to 40 km.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BalloonSettings {
    /// The height model.
    pub model: BalloonModel,
    /// The Kalman filter on the barometric height.
    pub kalman: VerticalKalmanConfig,
    /// Thresholds and debounce times of the states.
    pub states: PhaseSettings,
    /// Elevation of the launch site, m; `None`: heights start at the first sample's
    /// pressure altitude.
    pub launch_altitude_m: Option<f32>,
    /// Latitude for gravity, degrees; `None`: standard gravity 9.806 65 m/s^2.
    pub latitude_deg: Option<f32>,
    /// Samples at rest averaged into the launch reference (>= 1).
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
    /// Time constant with which a known-elevation fix moves the height, s.
    pub fix_time_constant_s: f32,
    /// Longest step between samples taken as a normal step, s.
    pub max_gap_s: f32,
    /// Hysteresis band of the ascent and descent totals, m.
    pub totals_band_m: f32,
    /// How satellite altitude, where samples carry one, is fused.
    pub gnss: GnssSettings,
}

impl BalloonSettings {
    /// The preset: sounding model with descent on the stored profile, a Kalman filter
    /// on the barometric height with wide dynamics for the burst.
    pub const DEFAULT: BalloonSettings = BalloonSettings {
        model: BalloonModel::Sounding {
            descent_on_profile: true,
        },
        kalman: VerticalKalmanConfig {
            baro_sigma_m: 0.5,
            // burst turns +5 m/s into -50 m/s within seconds
            baro_only_accel_density: 3.0,
            initial_speed_sigma_mps: 30.0,
            max_step_s: 30.0,
            accel_timeout_s: 0.5,
            baro_timeout_s: 60.0,
            reacquire_after: 5,
            // a burst is followed after a second of samples below the prediction (its
            // second sample at 1 Hz)
            follow_after_s: 1.0,
            ..VerticalKalmanConfig::DEFAULT
        },
        states: PhaseSettings::BALLOON,
        launch_altitude_m: None,
        latitude_deg: None,
        ground_samples: 10,
        min_pressure_pa: crate::atmosphere::US_1976.top_pressure_pa(),
        max_pressure_pa: 110_000.0,
        pressure_noise_pa: 2.0,
        temperature_uncertainty_k: 0.5,
        fix_time_constant_s: 10.0,
        // a tracker that sleeps between fixes still reports every few minutes
        max_gap_s: 600.0,
        // height noise reaches about 10 m (1-sigma) near 30 km
        totals_band_m: 30.0,
        gnss: GnssSettings::DEFAULT,
    };

    /// These settings with the pressure range and noise of the barometer `part`
    /// ([`PartDescription::noise_pa`]); every other field as it was.
    ///
    /// ```
    /// use isohypse::part::PartDescription;
    /// use isohypse::uses::BalloonSettings;
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
    /// static SETTINGS: BalloonSettings = BalloonSettings::DEFAULT.with_part(&PART);
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
        let launch_ok = self
            .launch_altitude_m
            .is_none_or(|h| h.is_finite() && h.abs() < 90_000.0);
        if self.ground_samples < 1 || !launch_ok {
            return Err(Error::InvalidSetting);
        }
        self.gravity()?;
        if let BalloonModel::Column(model) = self.model {
            // the model's own parameters: it must place a plain standard-day sample
            let reference = Reference::new(Pressure::from_pa(101_325.0)?, Height::ZERO)
                .with_temperature(Temperature::from_kelvin(288.15)?);
            let air = AirSample::at(Temperature::from_kelvin(282.0)?);
            model
                .height(&reference, Pressure::from_pa(95_000.0)?, &air)
                .map_err(|_| Error::InvalidSetting)?;
        }
        self.kalman.validate()?;
        self.gnss.validate()?;
        self.states.validate()
    }

    /// Gravity at the latitude, or standard.
    fn gravity(&self) -> Result<Gravity, Error> {
        match self.latitude_deg {
            Some(lat) => Gravity::at_latitude(lat),
            None => Ok(Gravity::Standard),
        }
    }
}

/// The height model's state.
#[derive(Debug, Clone, PartialEq)]
#[allow(clippy::large_enum_variant)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
enum ModelState<const N: usize> {
    /// Before the first sample (and always for the standard model).
    Empty,
    Sounding(Sounding<N>),
    Column(Reference),
}

/// What a sample does to the height model's state, applied only when it is taken. An
/// out-parameter, not part of a result: returned by value the sounding inside would be
/// copied on every sample.
#[allow(clippy::large_enum_variant)]
enum ModelChange<const N: usize> {
    Keep,
    Start(ModelState<N>),
    Step(PendingStep, bool),
}

/// The Kalman filter's height variance, m^2 (0 before an estimate).
fn kalman_var(k: &VerticalKalman<&VerticalKalmanConfig>) -> f32 {
    k.height_speed_variance().map_or(0.0, |(_, _, var)| var)
}

/// How far the first sample's pressure altitude may lie from the launch altitude of
/// the settings for the balloon to be at the launch site, m. Weather moves the pressure
/// altitude of a site by a few hundred metres (sea-level pressures on record span about
/// 870-1084 hPa, from memory: -250 m to +1 300 m at the extremes; within 1 km in all
/// but the deepest storms); further off, the balloon is in the air (a power-on in
/// flight) and its heights start at the pressure altitude (choice of this crate).
pub const LAUNCH_AGREES_M: f32 = 1_000.0;

/// Fewest profile levels a [`Balloon`] can keep (a compile-time check on `N`).
pub const MIN_PROFILE_LEVELS: usize = 8;

/// A balloon: heights integrated layer by layer from the launch with each sample's air
/// temperature and humidity, the profile of the ascent stored in `N` levels (thinned
/// to fit a whole flight), the burst, and the descent on the stored profile; states
/// ground, ascent, float, burst, descent, landed.
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::uses::{Balloon, BalloonSettings, Sample};
/// const FIELD: BalloonSettings = BalloonSettings {
///     launch_altitude_m: Some(310.0),
///     latitude_deg: Some(64.2),
///     ..BalloonSettings::DEFAULT
/// };
/// let mut balloon = Balloon::<256>::new(&FIELD)?;
/// let out = balloon.process(&Sample {
///     time: Instant::ZERO,
///     pressure_pa: 97_300.0,
///     temperature_c: Some(24.5),
///     humidity_pct: Some(70.0),
///     ..Sample::default()
/// });
/// assert!((out.altitude_m - 310.0).abs() < 0.5);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Balloon<'a, const N: usize> {
    settings: &'a BalloonSettings,
    kalman: VerticalKalman<&'a VerticalKalmanConfig>,
    ground: Option<Ground>,
    offset: Offset,
    track: FlightTrack,
    time: TimeBase,
    model: ModelState<N>,
    /// The last measured air temperature's departure from the standard atmosphere's
    /// at its pressure, K (what a sample without air temperature assumes).
    temperature_departure_k: Option<f32>,
    /// 1-sigma of the datum, m: 0 from a launch altitude; the pressure altitude's error
    /// without one (see [`standard_datum_sigma_m`]).
    datum_sigma_m: f32,
    gnss: GnssOffset,
    last: Carried,
}

impl<'a, const N: usize> Balloon<'a, N> {
    const CAPACITY_OK: () = assert!(
        N >= MIN_PROFILE_LEVELS,
        "a balloon's profile needs at least MIN_PROFILE_LEVELS (8) levels"
    );

    /// A balloon with `settings` (validated). Errors: as [`BalloonSettings::validate`].
    pub fn new(settings: &'a BalloonSettings) -> Result<Self, Error> {
        let () = Self::CAPACITY_OK;
        settings.validate()?;
        let ground = match settings.launch_altitude_m {
            Some(h) => Some(Ground::new(h, settings.ground_samples)?),
            None => None,
        };
        Ok(Self {
            settings,
            kalman: VerticalKalman::new(&settings.kalman)?,
            ground,
            offset: Offset::default(),
            track: FlightTrack::new(&settings.states, settings.totals_band_m)?,
            time: TimeBase::default(),
            model: ModelState::Empty,
            temperature_departure_k: None,
            datum_sigma_m: 0.0,
            gnss: GnssOffset::default(),
            last: Carried::default(),
        })
    }

    /// The settings.
    pub fn settings(&self) -> &'a BalloonSettings {
        self.settings
    }

    /// The state now.
    pub fn state(&self) -> BalloonState {
        BalloonState::from_phase(self.track.phase())
    }

    /// The sounding (sounding model), once started.
    pub fn sounding(&self) -> Option<&Sounding<N>> {
        match &self.model {
            ModelState::Sounding(s) => Some(s),
            _ => None,
        }
    }

    /// The highest height taken since launch (seen in ascent or float), m.
    pub fn apex_m(&self) -> Option<f32> {
        self.track.phases.apex_m()
    }

    /// Barometer samples the Kalman gate refused as outliers.
    pub fn outlier_count(&self) -> u32 {
        self.kalman.rejected_count()
    }

    /// The last output (a zeroed one before any sample).
    pub fn last_output(&self) -> Output<BalloonState> {
        let time = self.time.last().unwrap_or(Instant::ZERO);
        let mut out = self.carry(time, self.last.flags());
        if self.last.changed() {
            out.change = change_at(&self.track.phases, time, BalloonState::from_phase);
        }
        out
    }

    /// The output for a sample whose pressure was refused: carried over; for a
    /// pressure below the settings' range (a balloon above the barometer's range) with
    /// a satellite altitude above the last height (less the first-fix tolerance of
    /// [`GnssSettings`]), that altitude with the receiver's 1-sigma
    /// ([`Flags::ON_GNSS`]). Nothing is changed.
    fn carry_on_gnss(&self, sample: &Sample, flags: Flags) -> Output<BalloonState> {
        let mut flags = flags;
        let mut out = self.carry(sample.time, flags);
        let g = &self.settings.gnss;
        let fix = GnssFix::check(
            sample.gnss_altitude_m,
            sample.gnss_accuracy_m,
            g,
            &mut flags,
        );
        let above_range = sample.pressure_pa <= self.settings.min_pressure_pa;
        let last_m = self.last.altitude_m;
        let floor_m = last_m - g.first_fix_m - g.first_fix_share * last_m.abs();
        match fix {
            Some(fix) if above_range && self.time.last().is_some() && fix.altitude_m >= floor_m => {
                out.altitude_m = fix.altitude_m;
                out.altitude_sigma_m = fix.sigma_m;
                flags.set(Flags::ON_GNSS);
            }
            Some(_) => flags.set(Flags::GNSS_REJECTED),
            None => {}
        }
        out.flags = flags;
        out
    }

    fn carry(&self, time: Instant, flags: Flags) -> Output<BalloonState> {
        let totals = (self.track.totals.ascent_m(), self.track.totals.descent_m());
        let mut out = self.last.output(time, self.state(), totals, flags);
        if flags.contains(Flags::SATURATED) {
            let speed = super::STALE_SPEED_SIGMA_MPS.balloon;
            out.altitude_sigma_m = self.last.stale_sigma_m(self.time.last(), time, speed);
        }
        out
    }

    /// Process one barometer sample. Never fails: problems are reported in
    /// [`Output::flags`], and a rejected sample leaves the balloon unchanged.
    pub fn process(&mut self, sample: &Sample) -> Output<BalloonState> {
        let s = self.settings;
        let time = match self.time.step(sample.time, s.max_gap_s) {
            Ok(step) => step,
            Err(flags) => return self.carry(sample.time, flags),
        };
        let inputs = match Inputs::check(sample, s.min_pressure_pa, s.max_pressure_pa) {
            Ok(inputs) => inputs,
            Err(flags) => return self.carry_on_gnss(sample, flags),
        };
        let mut flags = inputs.flags;
        let fix = GnssFix::check(
            sample.gnss_altitude_m,
            sample.gnss_accuracy_m,
            &s.gnss,
            &mut flags,
        );
        if time.fault {
            flags.set(Flags::CLOCK_FAULT);
        }
        let mut change = ModelChange::Keep;
        let (p, t, rh) = (inputs.pressure, inputs.temperature, inputs.humidity);
        let Ok(in_air) = self.starts_in_air(p) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        let ground = if in_air { None } else { self.ground.as_ref() };
        let launch_m = ground.map(|g| g.start_m);
        let Ok((model_m, column_k, t_std)) =
            self.model_height(p, (t, rh), launch_m, &mut flags, &mut change)
        else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        if in_air {
            flags.set(Flags::STARTED_IN_AIR);
        }
        let on_ground = self.track.phase() == Phase::Ground;
        let mut datum = ground.map(|g| g.propose(self.offset, model_m, on_ground, &mut flags));
        let mut offset = datum.map_or(self.offset, |d| d.offset);
        let last_m = self.time.last().map(|_| self.last.altitude_m);
        let current_m = last_m.unwrap_or(model_m + offset.offset_m);
        if inputs.fix_m.is_some_and(|fix| !fix_agrees(fix, current_m)) {
            flags.set(Flags::FIX_IGNORED);
        }
        if let Some(fix) = inputs.fix_m.filter(|&fix| fix_agrees(fix, current_m)) {
            offset.target_m = fix_target(offset, fix, last_m, model_m);
            if let Some(d) = datum.as_mut() {
                d.frozen = true;
            }
            flags.set(Flags::FIX_APPLIED);
        }
        let offset = offset.slewed(time.dt, s.fix_time_constant_s);
        let raw_m = model_m + offset.offset_m;
        let Ok(raw) = Height::from_meters(raw_m) else {
            return self.carry(sample.time, Flags::REJECTED_MODEL);
        };
        let baro = KalmanSample {
            t: sample.time,
            raw,
            sigma_m: kalman_sigma_m(s.pressure_noise_pa, p, column_k),
            accel_mps2: inputs.accel_mps2,
        };
        let estimate = kalman_step(&mut self.kalman, &baro, &time, &mut flags);
        // nothing below refuses the sample
        if in_air {
            self.ground = None;
        }
        if self.ground.is_none() && self.time.last().is_none() && self.last == Carried::default() {
            self.datum_sigma_m = standard_datum_sigma_m(p, model_m, column_k);
        }
        let (h, v, sigma_m) = match estimate {
            Err(()) => return self.carry(sample.time, Flags::REJECTED_MODEL),
            Ok(Some((h, v, var))) => {
                let above = h - self.datum_reference_m();
                let var = var + self.datum_sigma_m * self.datum_sigma_m;
                let dk = self.column_sigma_k(flags);
                (h, v, estimate_sigma_m(var, above, dk, column_k))
            }
            Ok(None) => {
                let above = raw_m - self.datum_reference_m();
                let (noise, dk) = (s.pressure_noise_pa, self.column_sigma_k(flags));
                let sigma = pointwise_sigma_m(noise, dk, p, column_k, above);
                let var = sigma * sigma + self.datum_sigma_m * self.datum_sigma_m;
                (raw_m, 0.0, crate::math::sigma_from_variance(var))
            }
        };
        let agrees = |g: &Ground| g.agrees(model_m, ground_tolerance_m(baro.sigma_m));
        let at_rest = datum.is_some_and(|d| d.averaging)
            && self.ground.as_ref().is_some_and(agrees)
            && v.abs() < s.states.rest_mps
            && !flags.contains(Flags::OUTLIER)
            && !flags.contains(Flags::REACQUIRED);
        let measured = !flags.contains(Flags::OUTLIER);
        let changed = self
            .track
            .step(&s.states, time.dt_or_zero(), (h, v), measured);
        // a sample the filter gated out does not become a level of the sounding: the
        // next one is integrated from the last level taken
        if !flags.contains(Flags::OUTLIER) {
            self.commit_model(&mut change);
        }
        // the satellite offset: from the fused height once the launch datum is set
        let datum_set = self.ground.as_ref().is_none_or(|g| g.frozen) || !on_ground;
        let baro_var = kalman_var(&self.kalman);
        let dh_m = h - (self.last.altitude_m - self.gnss.offset_m);
        let gnss = if datum_set {
            self.gnss.step(
                &s.gnss,
                (time.dt_or_zero(), dh_m),
                fix,
                (h, baro_var),
                &mut flags,
            )
        } else {
            self.gnss
        };
        let (h_out, raw_out, sigma_out) = if gnss.is_held() {
            let var = baro_var + gnss.variance_m2;
            let sigma = crate::math::sigma_from_variance(var);
            (h + gnss.offset_m, raw_m + gnss.offset_m, sigma)
        } else {
            (h, raw_m, sigma_m)
        };
        self.gnss = gnss;
        let mut offset = offset;
        if let (Some(g), Some(mut d)) = (self.ground.as_mut(), datum) {
            d.offset = offset;
            let dt = time.dt_or_zero();
            g.commit(&mut d, at_rest.then_some(model_m), dt, sample.time);
            offset = d.offset;
        }
        self.offset = offset;
        self.time.commit(sample.time);
        if let Some(t) = t {
            self.temperature_departure_k = Some(t.kelvin() - t_std.kelvin());
        }
        self.last = Carried::new(h_out, raw_out, v, sigma_out, flags, changed);
        let mut out = self.carry(sample.time, flags);
        if changed {
            out.change = change_at(&self.track.phases, sample.time, BalloonState::from_phase);
        }
        out
    }

    /// The height the column's temperature error grows from: the launch altitude, or
    /// without one the sea level of the pressure altitude, m.
    fn datum_reference_m(&self) -> f32 {
        self.ground.as_ref().map_or(0.0, |g| g.start_m)
    }

    /// Whether this sample is the first of a balloon already in the air: the settings
    /// say so (`states.start_in_flight`), or the launch reference has taken nothing yet
    /// and the pressure altitude lies more than [`LAUNCH_AGREES_M`] from the launch
    /// altitude of the settings. Errors: those of
    /// the standard atmosphere for a pressure beyond it.
    fn starts_in_air(&self, p: Pressure) -> Result<bool, Error> {
        match &self.ground {
            Some(_) if self.settings.states.start_in_flight => Ok(true),
            Some(g) if !g.frozen && g.reference.sample_count() == 0 => {
                let (std_m, _) = standard_height(p, AltimeterSetting::Standard)?;
                Ok((std_m - g.start_m).abs() > LAUNCH_AGREES_M)
            }
            _ => Ok(false),
        }
    }

    /// The column temperature's 1-sigma for a sample flagged `flags`: the settings'
    /// for a measured column; the spread of real columns about the standard once a
    /// temperature was assumed or held (the error of those layers stays in the
    /// height), K.
    fn column_sigma_k(&self, flags: Flags) -> f32 {
        let assumed = self.temperature_departure_k.is_none()
            || flags.contains(Flags::TEMPERATURE_HELD)
            || flags.contains(Flags::TEMPERATURE_ASSUMED);
        let dk = self.settings.temperature_uncertainty_k;
        if assumed && dk < ASSUMED_TEMPERATURE_SIGMA_K {
            ASSUMED_TEMPERATURE_SIGMA_K
        } else {
            dk
        }
    }

    /// Applies the model's change. By reference: moved by value, the change (which can
    /// hold a whole sounding) would be copied on every sample.
    fn commit_model(&mut self, change: &mut ModelChange<N>) {
        match change {
            ModelChange::Keep => {}
            ModelChange::Start(_) => {
                if let ModelChange::Start(state) = core::mem::replace(change, ModelChange::Keep) {
                    self.model = state;
                }
            }
            ModelChange::Step(pending, descending) => {
                if let ModelState::Sounding(s) = &mut self.model {
                    if *descending {
                        s.set_recording(false);
                    }
                    s.commit(*pending);
                }
            }
        }
    }

    /// Height of the sample from the model (before the datum), m, the column
    /// temperature used, K, and the standard atmosphere's temperature at the sample's
    /// pressure. The model's new state goes to `change`.
    fn model_height(
        &self,
        p: Pressure,
        (t, rh): (Option<Temperature>, Option<RelativeHumidity>),
        launch: Option<f32>,
        flags: &mut Flags,
        change: &mut ModelChange<N>,
    ) -> Result<(f32, f32, Temperature), Error> {
        let (std_m, t_std) = standard_height(p, AltimeterSetting::Standard)?;
        let air = (t, rh, launch);
        let (h, column_k) = self.model_height_at(p, air, (std_m, t_std), flags, change)?;
        Ok((h, column_k, t_std))
    }

    /// [`Self::model_height`] given the pressure altitude `std_m` and the standard
    /// temperature `t_std` at the sample's pressure.
    #[allow(clippy::type_complexity)]
    fn model_height_at(
        &self,
        p: Pressure,
        (t, rh, launch): (Option<Temperature>, Option<RelativeHumidity>, Option<f32>),
        (std_m, t_std): (f32, Temperature),
        flags: &mut Flags,
        change: &mut ModelChange<N>,
    ) -> Result<(f32, f32), Error> {
        // the launch altitude is the datum's; the models start there, so their heights
        // are reported relative to it
        let start_offset = launch.unwrap_or(0.0);
        let base = match launch {
            Some(h) => Height::from_meters(h)?,
            None => Height::from_meters(std_m)?,
        };
        match self.settings.model {
            BalloonModel::Standard => Ok((std_m, t.unwrap_or(t_std).kelvin())),
            BalloonModel::Column(model) => {
                let t = self.temperature_or_standard(t, t_std, flags);
                let mixing_ratio = match rh {
                    Some(rh) => MixingRatio::from_relative_humidity(p, t, rh)?,
                    None => MixingRatio::DRY,
                };
                let air = AirSample {
                    temperature: Some(t),
                    mixing_ratio,
                };
                match &self.model {
                    ModelState::Column(reference) => {
                        let h = model.height(reference, p, &air)?;
                        Ok((h.meters() - start_offset, t.kelvin()))
                    }
                    _ => {
                        let reference = Reference::new(p, base).with_temperature(t);
                        // checks the model can place this sample before keeping it
                        model.height(&reference, p, &air)?;
                        *change = ModelChange::Start(ModelState::Column(reference));
                        Ok((base.meters() - start_offset, t.kelvin()))
                    }
                }
            }
            BalloonModel::Sounding { descent_on_profile } => {
                let t = self.temperature_or_standard(t, t_std, flags);
                let ModelState::Sounding(s) = &self.model else {
                    let gravity = self.settings.gravity()?;
                    let start = Sounding::new(base, gravity, p, t, rh)?;
                    *change = ModelChange::Start(ModelState::Sounding(start));
                    return Ok((base.meters() - start_offset, t.kelvin()));
                };
                let descending = matches!(
                    self.track.phase(),
                    Phase::Burst | Phase::Descent | Phase::Landed
                );
                // prepared now, applied when the whole sample is taken
                let pending = s.prepare(p, Some(t), rh)?;
                let h = pending.step.geometric.meters();
                *change = ModelChange::Step(pending, descending);
                if descending && descent_on_profile {
                    if let Ok(h) = s.height_on_profile(p) {
                        flags.set(Flags::ON_PROFILE);
                        return Ok((h.meters() - start_offset, t.kelvin()));
                    }
                }
                Ok((h - start_offset, t.kelvin()))
            }
        }
    }

    /// The sample's air temperature; without one, the standard atmosphere's at the
    /// sample's pressure `standard`, moved by the last measured temperature's departure
    /// from the standard ([`Flags::TEMPERATURE_HELD`]), or unmoved before any
    /// ([`Flags::TEMPERATURE_ASSUMED`]). A column without readings then follows the
    /// standard lapse rates (U.S. Standard Atmosphere 1976, Table 4) instead of holding
    /// one temperature from the ground to 30 km.
    fn temperature_or_standard(
        &self,
        t: Option<Temperature>,
        standard: Temperature,
        flags: &mut Flags,
    ) -> Temperature {
        match (t, self.temperature_departure_k) {
            (Some(t), _) => t,
            (None, Some(departure_k)) => {
                flags.set(Flags::TEMPERATURE_HELD);
                // a departure that would leave the air range falls back to the standard
                Temperature::from_kelvin(standard.kelvin() + departure_k).unwrap_or(standard)
            }
            (None, None) => {
                flags.set(Flags::TEMPERATURE_ASSUMED);
                standard
            }
        }
    }

    /// An accelerometer sample between barometer samples (m/s^2, up, gravity
    /// removed). Errors, state unchanged: [`Error::TimeJump`] and those of
    /// [`VerticalKalman::predict`].
    pub fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        self.time.check_ahead(time, self.settings.max_gap_s)?;
        self.kalman.predict(time, accel_up_mps2)
    }

    /// The clock was restarted on purpose: the next sample starts a new time base
    /// without a clock-fault flag. The estimate re-acquires; the profile, totals, state
    /// and datum are kept.
    pub fn restart_clock(&mut self) {
        self.time.forget();
        self.kalman.reset();
    }
}

/// The model's state in a snapshot: a tag, then a sounding's or a reference's bytes
/// (the sounding's size: the larger).
impl<const N: usize> crate::snapshot::Snap for ModelState<N> {
    const LEN: usize = 1 + <Sounding<N> as crate::snapshot::Snap>::LEN;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        use crate::snapshot::Snap;
        let written = match self {
            ModelState::Empty => {
                0u8.save(w);
                0
            }
            ModelState::Sounding(s) => {
                1u8.save(w);
                s.save(w);
                <Sounding<N> as Snap>::LEN
            }
            ModelState::Column(r) => {
                2u8.save(w);
                r.save(w);
                <Reference as Snap>::LEN
            }
        };
        for _ in written..<Sounding<N> as Snap>::LEN {
            w.bytes(&[0]);
        }
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), Error> {
        use crate::snapshot::Snap;
        let mut tag = 0u8;
        tag.load(r)?;
        let read = match tag {
            0 => {
                *self = ModelState::Empty;
                0
            }
            1 => {
                let mut s = Sounding::new(
                    Height::ZERO,
                    Gravity::Standard,
                    Pressure::from_pa(101_325.0)?,
                    Temperature::from_kelvin(288.15)?,
                    None,
                )?;
                s.load(r)?;
                *self = ModelState::Sounding(s);
                <Sounding<N> as Snap>::LEN
            }
            2 => {
                let mut reference = Reference::new(Pressure::from_pa(101_325.0)?, Height::ZERO);
                reference.load(r)?;
                *self = ModelState::Column(reference);
                <Reference as Snap>::LEN
            }
            _ => return Err(Error::SnapshotCorrupt),
        };
        for _ in read..<Sounding<N> as Snap>::LEN {
            r.bytes::<1>()?;
        }
        Ok(())
    }
}

crate::snapshot::snap_fields!(impl['a, const N: usize] Balloon<'a, N> {
    kalman,
    ground,
    offset,
    track,
    time,
    model,
    temperature_departure_k,
    datum_sigma_m,
    gnss,
    last,
});

impl<'a, const N: usize> Balloon<'a, N> {
    /// Bytes of this balloon's snapshot ([`Self::snapshot`]): a fixed part and 12 per
    /// profile level.
    pub const SNAPSHOT_LEN: usize =
        crate::snapshot::FRAME_LEN + <Balloon<'static, N> as crate::snapshot::Snap>::LEN;

    /// Writes the whole state, the stored profile included, into `out` (at least
    /// [`Self::SNAPSHOT_LEN`] bytes; versioned and checksummed, see
    /// [`crate::snapshot`]) and returns the bytes written. Errors:
    /// [`Error::CapacityFull`] if `out` is too short.
    pub fn snapshot(&self, out: &mut [u8]) -> Result<usize, Error> {
        crate::snapshot::write(self, 2, N as u16, out)
    }

    /// A balloon with `settings` (the ones the snapshot was taken with) in the state of
    /// `snapshot`. Errors: those of [`Self::new`], [`Error::SnapshotCorrupt`],
    /// [`Error::SnapshotVersion`], [`Error::SnapshotMismatch`] (another use or another
    /// capacity `N`).
    pub fn restore(settings: &'a BalloonSettings, snapshot: &[u8]) -> Result<Self, Error> {
        let mut balloon = Self::new(settings)?;
        crate::snapshot::read(&mut balloon, 2, N as u16, snapshot)?;
        Ok(balloon)
    }
}

impl<const N: usize> Use for Balloon<'_, N> {
    type State = BalloonState;
    fn process(&mut self, sample: &Sample) -> Output<BalloonState> {
        Balloon::process(self, sample)
    }
    fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        Balloon::accelerometer(self, time, accel_up_mps2)
    }
    fn restart_clock(&mut self) {
        Balloon::restart_clock(self)
    }
}
