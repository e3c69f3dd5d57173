//! The replay tool's contact with the isohypse library, all in this file: the run's
//! settings from the command line, the use type (or, with `--filter off`, the lower
//! layers' pointwise conversion) run on each row, and its output read into the tool's
//! own [`Point`]. The rest of the tool works on [`Row`] and [`Point`] only (and passes
//! the library's `Output` through, untouched, to the tests' collector).

use isohypse::atmosphere::US_1976;
use isohypse::flight::{FlightPhases, Phase, PhaseSettings};
use isohypse::geopotential::Gravity;
use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureModel};
use isohypse::sounding::Sounding;
use isohypse::time::Instant;
use isohypse::track::AscentTotals;
use isohypse::uses::{
    Balloon, BalloonModel, BalloonSettings, BalloonState, Device, Drone, DroneSettings, DroneState,
    Flags, Sample, State, Use, Walk, WalkSettings, WalkState,
};
use isohypse::{Height, Pressure, RelativeHumidity, Temperature};

use super::Failure;
use super::channels::{Channel, Dropped, tool_flag_names};
use super::row::{Header, Row};
use super::{Cli, FilterArg, ModelArg, PresetArg};

/// Profile capacity of the host balloon (its descent profile).
pub(crate) const PROFILE_LEVELS: usize = 512;

/// An output of the run, in the words of its use.
pub(crate) type Output = isohypse::uses::Output<State>;

/// The settings of one run: the use, its model, filtering and datum.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Settings {
    pub(crate) preset: PresetArg,
    /// `None`: the use's own (sounding for the balloon, standard for the others).
    pub(crate) model: Option<ModelArg>,
    /// The temperature offset of `ModelArg::Offset`, K.
    pub(crate) temperature_offset_k: f32,
    /// `--filter off`: pointwise heights from the lower layers, no estimator.
    pub(crate) pointwise: bool,
    pub(crate) start_altitude_m: Option<f32>,
    pub(crate) latitude_deg: Option<f32>,
    /// No `--preset` was given: the preset is inferred from the log's columns
    /// ([`Settings::infer`]) once its header is read.
    pub(crate) inferred: bool,
}

impl Settings {
    /// A use's settings with the filter on and nothing else given (the tests build
    /// their runs from it).
    #[allow(dead_code)]
    pub(crate) const fn preset(preset: PresetArg) -> Self {
        Self {
            preset,
            model: None,
            temperature_offset_k: 0.0,
            pointwise: false,
            start_altitude_m: None,
            latitude_deg: None,
            inferred: false,
        }
    }

    /// The preset for a log with the columns of `header` when none was given: a model
    /// only the balloon takes means the balloon; an accelerometer column, the drone;
    /// humidity or satellite altitude, the balloon; anything else, the walk. The
    /// settings are unchanged when a preset was given.
    pub(crate) fn infer(self, header: &Header) -> Self {
        if !self.inferred {
            return self;
        }
        let balloon_model = !self.pointwise
            && matches!(
                self.model,
                Some(ModelArg::Sounding | ModelArg::Mean | ModelArg::Offset)
            );
        let preset = if balloon_model {
            PresetArg::Balloon
        } else if header.has(Channel::Accel) {
            PresetArg::Drone
        } else if header.has(Channel::Humidity) || header.has(Channel::GnssAltitude) {
            PresetArg::Balloon
        } else {
            PresetArg::Hike
        };
        Self { preset, ..self }
    }

    /// The model in use.
    fn model(&self) -> ModelArg {
        match (self.model, self.preset) {
            (Some(m), _) => m,
            (None, PresetArg::Balloon) => ModelArg::Sounding,
            (None, _) => ModelArg::Standard,
        }
    }

    /// The balloon's model for the model argument.
    fn balloon_model(&self) -> BalloonModel {
        match self.model() {
            ModelArg::Standard => BalloonModel::Standard,
            ModelArg::Sounding => BalloonModel::Sounding {
                descent_on_profile: true,
            },
            ModelArg::Mean => BalloonModel::Column(TemperatureModel::MeanOfEnds),
            ModelArg::Offset => BalloonModel::Column(TemperatureModel::StandardOffset {
                delta_k: self.temperature_offset_k,
            }),
        }
    }

    /// Checks the combination. Errors: a message naming what is wrong.
    fn check(&self) -> Result<(), String> {
        let standard_only = matches!(self.preset, PresetArg::Drone | PresetArg::Hike);
        if !self.pointwise && standard_only && self.model() != ModelArg::Standard {
            return Err(format!(
                "--model {} is for the balloon; the drone and the walk use the standard \
                 atmosphere (or --filter off for a pointwise conversion with any model)",
                model_name(self.model())
            ));
        }
        let start_ok = self.start_altitude_m.is_none_or(|h| h.abs() < 90_000.0);
        if !start_ok {
            return Err("the start altitude must lie within 90 km".into());
        }
        if let Some(lat) = self.latitude_deg {
            Gravity::at_latitude(lat).map_err(|e| e.to_string())?;
        }
        if self.model() == ModelArg::Offset {
            BalloonSettings {
                model: self.balloon_model(),
                ..BalloonSettings::DEFAULT
            }
            .validate()
            .map_err(|e| e.to_string())?;
        }
        Ok(())
    }
}

fn model_name(m: ModelArg) -> &'static str {
    match m {
        ModelArg::Standard => "standard",
        ModelArg::Sounding => "sounding",
        ModelArg::Mean => "mean",
        ModelArg::Offset => "offset",
    }
}

pub(crate) fn settings_for(cli: &Cli) -> Result<Settings, Failure> {
    let s = Settings {
        // without --preset: the balloon (which takes every model) until the header
        // is read and the preset inferred from its columns
        preset: cli.preset.unwrap_or(PresetArg::Balloon),
        inferred: cli.preset.is_none(),
        model: cli.model,
        temperature_offset_k: cli.temperature_offset_k,
        pointwise: cli.filter == FilterArg::Off,
        start_altitude_m: cli.start_altitude_m,
        latitude_deg: cli.latitude_deg,
    };
    // each option checked as it is applied, so that a value out of range is reported
    // with the option that gave it
    let named = |option: String, s: &Settings| {
        s.check()
            .map_err(|e| Failure::Usage(format!("{option}: {e}")))
    };
    if cli.model == Some(ModelArg::Offset) {
        let k = cli.temperature_offset_k;
        named(format!("--temperature-offset-k {k}"), &s)?;
    }
    if let Some(h) = cli.start_altitude_m {
        named(format!("--start-altitude-m {h}"), &s)?;
    }
    if let Some(d) = cli.latitude_deg {
        named(format!("--latitude-deg {d}"), &s)?;
    }
    named("the chosen --preset, --model and --filter".into(), &s)?;
    Ok(s)
}

/// The settings as the summary's second line states them, in plain words.
pub(crate) fn settings_line(s: &Settings) -> String {
    let model = match s.model() {
        ModelArg::Standard => "standard atmosphere".to_string(),
        ModelArg::Sounding => "sounding (layer by layer from the first row)".to_string(),
        ModelArg::Mean => "column at the mean of the first and current temperature".into(),
        ModelArg::Offset => format!("standard atmosphere {:+} K", s.temperature_offset_k),
    };
    let inferred = if s.inferred {
        " (inferred from the log's columns; choose with --preset)"
    } else {
        ""
    };
    format!(
        "use: {}{inferred}; model: {model}; filter: {}; start altitude: {}; latitude: {}",
        preset_name(s.preset),
        if s.pointwise { "off (pointwise)" } else { "on" },
        s.start_altitude_m
            .map_or("none (pressure altitude)".to_string(), |h| format!("{h} m")),
        s.latitude_deg
            .map_or("none (standard gravity)".to_string(), |d| format!(
                "{d} deg"
            )),
    )
}

/// The plots' header line: log, use, model, start altitude, latitude.
pub(crate) fn plot_header(name: &str, s: &Settings) -> String {
    let model = match s.model() {
        ModelArg::Standard => "standard atmosphere".to_string(),
        ModelArg::Sounding => "sounding".to_string(),
        ModelArg::Mean => "column at the mean temperature".to_string(),
        ModelArg::Offset => format!("standard atmosphere {:+} K", s.temperature_offset_k),
    };
    let filter = if s.pointwise { ", filter off" } else { "" };
    let start = s
        .start_altitude_m
        .map_or("pressure altitude".to_string(), |h| {
            format!(
                "start altitude {} m",
                super::scale::number_label(f64::from(h))
            )
        });
    let latitude = s.latitude_deg.map_or("standard gravity".to_string(), |d| {
        format!("latitude {d} deg")
    });
    format!(
        "log '{name}', {}; model: {model}{filter}; {start}; {latitude}",
        preset_name(s.preset)
    )
}

/// The use's name in the summary.
pub(crate) fn preset_name(p: PresetArg) -> &'static str {
    match p {
        PresetArg::Balloon => "balloon",
        PresetArg::Drone => "drone",
        PresetArg::Hike => "walk (hike preset)",
    }
}

/// The Kalman filter's dropout step, s, if the run has a Kalman filter.
pub(crate) fn dropout_step_s(s: &Settings) -> Option<f32> {
    match (s.pointwise, s.preset) {
        (true, _) | (false, PresetArg::Hike) => None,
        (false, PresetArg::Drone) => Some(DroneSettings::DEFAULT.kalman.max_step_s),
        (false, PresetArg::Balloon) => Some(BalloonSettings::DEFAULT.kalman.max_step_s),
    }
}

/// What the tool reads of one output row: plain numbers and names.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Point {
    pub(crate) time_s: f64,
    pub(crate) altitude_m: f32,
    pub(crate) raw_altitude_m: f32,
    pub(crate) vertical_speed_mps: f32,
    pub(crate) altitude_sigma_m: f32,
    pub(crate) phase: &'static str,
    /// The state change this row confirmed: (state, time s, height m).
    pub(crate) event: Option<(&'static str, f64, f32)>,
    pub(crate) ascent_m: f32,
    pub(crate) descent_m: f32,
    pub(crate) tendency_hpa: Option<f32>,
    /// The flag bits: the library's (low 32 bits) and the tool's own for dropped
    /// channels the library does not read (high 32 bits); [`flag_names`] names them.
    pub(crate) flags: u64,
    /// The sample was used (not rejected; an outlier is used, with its estimate held).
    pub(crate) accepted: bool,
    /// The row's satellite altitude, air temperature and humidity, for the plots.
    pub(crate) gnss_altitude_m: Option<f32>,
    pub(crate) temperature_c: Option<f32>,
    pub(crate) humidity_pct: Option<f32>,
}

/// Seconds of an instant of the run after its epoch.
fn seconds(t: Instant) -> f64 {
    t.as_micros() as f64 * 1.0e-6
}

/// The tool's view of the output of `row`. The library's instants count microseconds
/// from the run's first row ([`Engine::instant`]); the row gives the epoch back.
pub(crate) fn point(o: &Output, row: &Row) -> Point {
    let epoch_s = row.time_s - seconds(o.time);
    Point {
        time_s: row.time_s,
        altitude_m: o.altitude_m,
        raw_altitude_m: o.raw_altitude_m,
        vertical_speed_mps: o.vertical_speed_mps,
        altitude_sigma_m: o.altitude_sigma_m,
        phase: o.state.name(),
        event: o
            .change
            .map(|c| (c.state.name(), epoch_s + seconds(c.time), c.altitude_m)),
        ascent_m: o.ascent_m,
        descent_m: o.descent_m,
        tendency_hpa: o.tendency_hpa,
        flags: u64::from(o.flags.0) | dropped_flags(row.dropped),
        accepted: o.accepted(),
        gnss_altitude_m: row.get(Channel::GnssAltitude),
        temperature_c: row.get(Channel::Temperature),
        humidity_pct: row.get(Channel::Humidity),
    }
}

/// The names of the flag bits `flags` of a [`Point`] (as in the output's `flags`
/// column): the library's, then the tool's own.
pub(crate) fn flag_names(flags: u64) -> impl Iterator<Item = &'static str> {
    let library = (flags & u64::from(u32::MAX)) as u32;
    Flags(library)
        .names()
        .chain(tool_flag_names((flags >> 32) as u32))
}

/// The library's flag for a dropped channel it reads.
fn library_flag(c: Channel) -> Option<Flags> {
    match c {
        Channel::Temperature => Some(Flags::TEMPERATURE_IGNORED),
        Channel::Humidity => Some(Flags::HUMIDITY_IGNORED),
        Channel::Accel => Some(Flags::ACCEL_IGNORED),
        Channel::Fix => Some(Flags::FIX_IGNORED),
        Channel::SensorTemperature | Channel::GnssAltitude | Channel::GnssAccuracy => None,
    }
}

/// The flag bits of a row's dropped channels, as in [`Point::flags`]: the library's
/// `*_IGNORED` flags, and the tool's own for the channels the library does not read.
pub(crate) fn dropped_flags(d: Dropped) -> u64 {
    if d.is_empty() {
        return 0;
    }
    let library = d
        .channels()
        .filter_map(library_flag)
        .fold(0, |bits, f| bits | f.0);
    u64::from(library) | (u64::from(d.tool_bits()) << 32)
}

/// How the run estimates: a use type, or the pointwise conversion.
enum Estimation<'s> {
    Filtered(Box<Device<'s, PROFILE_LEVELS>>),
    Pointwise(Box<Pointwise>),
}

/// The settings of the run's use type, held by the caller for the run (the use type
/// borrows them, as firmware borrows a `static`).
pub(crate) enum UseSettings {
    Drone(DroneSettings),
    Balloon(BalloonSettings),
    Walk(WalkSettings),
}

impl UseSettings {
    /// The use's settings for the run. The replay accepts every physical pressure; the
    /// uses' narrower ranges are for firmware plausibility checks.
    pub(crate) fn new(s: &Settings) -> Self {
        let (lo, hi) = (US_1976.top_pressure_pa(), US_1976.bottom_pressure_pa());
        match s.preset {
            PresetArg::Drone => UseSettings::Drone(DroneSettings {
                takeoff_altitude_m: s.start_altitude_m.unwrap_or(0.0),
                min_pressure_pa: lo,
                max_pressure_pa: hi,
                ..DroneSettings::DEFAULT
            }),
            PresetArg::Balloon => UseSettings::Balloon(BalloonSettings {
                model: s.balloon_model(),
                launch_altitude_m: s.start_altitude_m,
                latitude_deg: s.latitude_deg,
                min_pressure_pa: lo,
                max_pressure_pa: hi,
                ..BalloonSettings::DEFAULT
            }),
            PresetArg::Hike => UseSettings::Walk(WalkSettings {
                start_altitude_m: s.start_altitude_m,
                min_pressure_pa: lo,
                max_pressure_pa: hi,
                ..WalkSettings::DEFAULT
            }),
        }
    }
}

/// The use type (or pointwise conversion) for one run, and what the output table shows
/// of it ([`Shown`]).
pub(crate) struct Engine<'s> {
    estimation: Estimation<'s>,
    shown: Shown,
    /// The first row's time, s: instants count microseconds from it.
    epoch_s: Option<f64>,
}

impl<'s> Engine<'s> {
    /// The engine of a run with `s`, its use type borrowing `use_settings` (made by
    /// [`UseSettings::new`] from the same `s`).
    pub(crate) fn new(s: Settings, use_settings: &'s UseSettings) -> Result<Self, Failure> {
        s.check()
            .map_err(|e| Failure::Usage(format!("invalid settings: {e}")))?;
        let estimation = if s.pointwise {
            Estimation::Pointwise(Box::new(Pointwise::new(&s)?))
        } else {
            Estimation::Filtered(Box::new(device(use_settings)?))
        };
        Ok(Self {
            estimation,
            shown: Shown::default(),
            epoch_s: None,
        })
    }

    /// Pointwise conversion (`--filter off`): the speed is the tool's own difference.
    pub(crate) fn pointwise(&self) -> bool {
        matches!(self.estimation, Estimation::Pointwise(_))
    }

    /// The instant of a row: microseconds after the first row (rows are strictly
    /// increasing, so never before it; two rows less than half a microsecond apart
    /// share an instant and the second is refused as a repeated time).
    fn instant(&mut self, time_s: f64) -> Instant {
        let epoch = *self.epoch_s.get_or_insert(time_s);
        Instant::from_micros(((time_s - epoch) * 1.0e6).round().max(0.0) as u64)
    }

    /// Run a row with a pressure; the output as the table shows it.
    pub(crate) fn barometer(&mut self, row: &Row, pressure_pa: f32) -> Output {
        let sample = Sample {
            time: self.instant(row.time_s),
            pressure_pa,
            temperature_c: row.temperature_c,
            humidity_pct: row.humidity_pct,
            accel_up_mps2: row.accel_up_mps2,
            known_altitude_m: row.known_altitude_m,
            gnss_altitude_m: row.gnss_altitude_m,
            gnss_accuracy_m: row.gnss_accuracy_m,
        };
        let o = match &mut self.estimation {
            Estimation::Filtered(d) => d.process(&sample),
            Estimation::Pointwise(p) => p.process(&sample),
        };
        let mut o = o;
        // a channel the tool dropped is flagged as the library flags one it drops
        o.flags.insert(Flags(
            (dropped_flags(row.dropped) & u64::from(u32::MAX)) as u32,
        ));
        let pointwise = self.pointwise();
        self.shown.output(o, row.time_s, pointwise)
    }

    /// Run an accelerometer-only row; `false` if the estimator did not take it.
    pub(crate) fn accelerometer(&mut self, time_s: f64, accel_up_mps2: f32) -> bool {
        let t = self.instant(time_s);
        match &mut self.estimation {
            Estimation::Filtered(d) => d.accelerometer(t, accel_up_mps2).is_ok(),
            Estimation::Pointwise(_) => true,
        }
    }
}

/// The use type for the settings.
fn device(s: &UseSettings) -> Result<Device<'_, PROFILE_LEVELS>, Failure> {
    let usage = |e: isohypse::Error| Failure::Usage(format!("invalid settings: {e}"));
    Ok(match s {
        UseSettings::Drone(d) => Device::Drone(Drone::new(d).map_err(usage)?),
        UseSettings::Balloon(b) => Device::Balloon(Balloon::new(b).map_err(usage)?),
        UseSettings::Walk(w) => Device::Walk(Walk::new(w).map_err(usage)?),
    })
}

/// `--filter off`: each row's height from the model alone (the library's lower layers:
/// the standard atmosphere, the sounding, the layer temperature models), with the
/// datum at the first row when a start altitude is given; states and totals from the
/// state machine and the totals counter of the use.
struct Pointwise {
    preset: PresetArg,
    model: ModelArg,
    offset_k: f32,
    start_altitude_m: Option<f32>,
    gravity: Gravity,
    phases: FlightPhases<PhaseSettings>,
    totals: AscentTotals,
    sounding: Option<Sounding<PROFILE_LEVELS>>,
    reference: Option<Reference>,
    /// Datum offset (start altitude minus the first row's model height), m.
    offset_m: Option<f32>,
    last_temperature: Option<Temperature>,
    /// Last taken height (m) and time, and the speed derived.
    last: Option<(f32, Instant, f32)>,
    last_output: Option<Output>,
    /// The use's pressure noise (Pa) and column temperature uncertainty (K), for the
    /// height's 1-sigma, and the column temperature of the last row, K.
    noise_pa: f32,
    uncertainty_k: f32,
    column_k: f32,
}

impl Pointwise {
    fn new(s: &Settings) -> Result<Self, Failure> {
        let (phases, band, noise_pa, uncertainty_k) = match s.preset {
            PresetArg::Drone => {
                let d = DroneSettings::DEFAULT;
                let (n, k) = (d.pressure_noise_pa, d.temperature_uncertainty_k);
                (d.states, d.totals_band_m, n, k)
            }
            PresetArg::Balloon => {
                let b = BalloonSettings::DEFAULT;
                let (n, k) = (b.pressure_noise_pa, b.temperature_uncertainty_k);
                (b.states, b.totals_band_m, n, k)
            }
            PresetArg::Hike => {
                let w = WalkSettings::DEFAULT;
                let (n, k) = (w.pressure_noise_pa, w.temperature_uncertainty_k);
                // the walk's totals without its tracker: a plain 3 m band
                (w.states, 3.0, n, k)
            }
        };
        let usage = |e: isohypse::Error| Failure::Usage(format!("invalid settings: {e}"));
        Ok(Self {
            preset: s.preset,
            model: s.model(),
            offset_k: s.temperature_offset_k,
            start_altitude_m: s.start_altitude_m,
            gravity: s
                .latitude_deg
                .and_then(|l| Gravity::at_latitude(l).ok())
                .unwrap_or(Gravity::Standard),
            phases: FlightPhases::new(phases).map_err(usage)?,
            totals: AscentTotals::new(band).map_err(usage)?,
            noise_pa,
            uncertainty_k,
            column_k: 288.15,
            sounding: None,
            reference: None,
            offset_m: None,
            last_temperature: None,
            last: None,
            last_output: None,
        })
    }

    /// The use's word for a state of the shared machine.
    fn words(&self, p: Phase) -> State {
        match self.preset {
            PresetArg::Drone => State::Drone(DroneState::from(p)),
            PresetArg::Balloon => State::Balloon(BalloonState::from(p)),
            PresetArg::Hike => State::Walk(WalkState::from(p)),
        }
    }

    /// The model height of the sample (before the datum), m.
    fn height(&mut self, s: &Sample, flags: &mut Flags) -> Result<f32, isohypse::Error> {
        let p = Pressure::from_pa(s.pressure_pa)?;
        let rh = humidity(s.humidity_pct, flags);
        let std = isohypse::atmosphere::pressure_altitude(p)?;
        let t_std = US_1976.temperature_at(std)?;
        if self.model == ModelArg::Standard {
            let air = s
                .temperature_c
                .and_then(|c| Temperature::from_celsius(c).ok());
            self.column_k = air.unwrap_or(t_std).kelvin();
            return Ok(std.meters());
        }
        let t = match (
            s.temperature_c.map(Temperature::from_celsius),
            self.last_temperature,
        ) {
            (Some(Ok(t)), _) => t,
            (Some(Err(_)), held) | (None, held) => {
                if s.temperature_c.is_some() {
                    flags.insert(Flags::TEMPERATURE_IGNORED);
                }
                match held {
                    Some(h) => {
                        flags.insert(Flags::TEMPERATURE_HELD);
                        h
                    }
                    None => {
                        flags.insert(Flags::TEMPERATURE_ASSUMED);
                        t_std
                    }
                }
            }
        };
        let base = match self.start_altitude_m {
            Some(h) => Height::from_meters(h)?,
            None => std,
        };
        let h = match self.model {
            ModelArg::Sounding => match &mut self.sounding {
                Some(sounding) => sounding.update(p, Some(t), rh)?.geometric,
                None => {
                    self.sounding = Some(Sounding::new(base, self.gravity, p, t, rh)?);
                    base
                }
            },
            _ => {
                let model = match self.model {
                    ModelArg::Mean => TemperatureModel::MeanOfEnds,
                    _ => TemperatureModel::StandardOffset {
                        delta_k: self.offset_k,
                    },
                };
                let reference = *self
                    .reference
                    .get_or_insert(Reference::new(p, base).with_temperature(t));
                let mixing = match rh {
                    Some(rh) => isohypse::humidity::MixingRatio::from_relative_humidity(p, t, rh)?,
                    None => isohypse::humidity::MixingRatio::DRY,
                };
                let air = AirSample {
                    temperature: Some(t),
                    mixing_ratio: mixing,
                };
                model.height(&reference, p, &air)?
            }
        };
        self.last_temperature = Some(t);
        self.column_k = t.kelvin();
        Ok(h.meters())
    }

    /// First-order 1-sigma of a pointwise height `h_m` at `pressure_pa`: the pressure
    /// noise through the scale height, `(R T / (g0 p)) sigma_p`, and the column
    /// temperature uncertainty scaling the height above the datum, `|h| dT / T`, in
    /// quadrature (hypsometric equation differentiated; R = 287.053 J/(kg K), g0 =
    /// 9.806 65 m/s^2, U.S. Standard Atmosphere 1976).
    fn sigma_m(&self, pressure_pa: f32, h_m: f32) -> f32 {
        let t = self.column_k;
        let from_pressure = 287.053 * t / 9.806_65 * self.noise_pa / pressure_pa;
        let above = h_m - self.start_altitude_m.unwrap_or(0.0);
        let from_temperature = above.abs() * self.uncertainty_k / t;
        from_pressure.hypot(from_temperature)
    }

    fn process(&mut self, s: &Sample) -> Output {
        let mut flags = Flags::default();
        let repeated = self.last.is_some_and(|(_, t, _)| s.time <= t);
        // the physical range the filtered run accepts too: the standard atmosphere's
        let (lo, hi) = (US_1976.top_pressure_pa(), US_1976.bottom_pressure_pa());
        let in_range = s.pressure_pa >= lo && s.pressure_pa <= hi;
        let model = if repeated || !in_range {
            Err(isohypse::Error::NotIncreasing)
        } else {
            self.height(s, &mut flags)
        };
        let Ok(model_m) = model else {
            let mut o = self.last_output.unwrap_or(Output {
                time: s.time,
                altitude_m: 0.0,
                raw_altitude_m: 0.0,
                vertical_speed_mps: 0.0,
                altitude_sigma_m: 0.0,
                state: self.words(Phase::Ground),
                change: None,
                ascent_m: 0.0,
                descent_m: 0.0,
                tendency_hpa: None,
                flags: Flags::default(),
            });
            o.time = s.time;
            o.change = None;
            o.flags = if repeated {
                Flags::REJECTED_TIME
            } else if !in_range {
                Flags::REJECTED_PRESSURE
            } else {
                Flags::REJECTED_MODEL
            };
            return o;
        };
        let offset = *self
            .offset_m
            .get_or_insert(self.start_altitude_m.map_or(0.0, |h| h - model_m));
        let h = model_m + offset;
        let v = match self.last {
            Some((h0, t0, v0)) => {
                let dt = s
                    .time
                    .checked_duration_since(t0)
                    .map_or(0.0, |d| d.as_secs_f32());
                let v = (h - h0) / dt;
                if v.is_finite() { v } else { v0 }
            }
            None => 0.0,
        };
        self.last = Some((h, s.time, v));
        if let Ok(height) = Height::from_meters(h) {
            self.totals.update(height);
        }
        let change =
            self.phases
                .update(s.time, h, v)
                .ok()
                .flatten()
                .map(|e| isohypse::uses::Change {
                    state: self.words(e.phase),
                    time: e.time,
                    altitude_m: e.height_m,
                });
        let o = Output {
            time: s.time,
            altitude_m: h,
            raw_altitude_m: h,
            vertical_speed_mps: v,
            altitude_sigma_m: self.sigma_m(s.pressure_pa, h),
            state: self.words(self.phases.phase()),
            change,
            ascent_m: self.totals.ascent_m(),
            descent_m: self.totals.descent_m(),
            tendency_hpa: None,
            flags,
        };
        self.last_output = Some(o);
        o
    }
}

/// A sample's humidity as the use types take it: above 100 and up to 110 % as 100 %
/// (flagged `HUMIDITY_CLAMPED`; real sensors read so in cloud), any other value outside
/// 0..100 % dropped (flagged `HUMIDITY_IGNORED`).
fn humidity(pct: Option<f32>, flags: &mut Flags) -> Option<RelativeHumidity> {
    let pct = match pct {
        Some(h) if h > 100.0 && h <= 110.0 => {
            flags.insert(Flags::HUMIDITY_CLAMPED);
            Some(100.0)
        }
        other => other,
    };
    match pct.map(RelativeHumidity::from_percent) {
        Some(Ok(rh)) => Some(rh),
        Some(Err(_)) => {
            flags.insert(Flags::HUMIDITY_IGNORED);
            None
        }
        None => None,
    }
}

/// What the output table shows of the outputs. Two departures from the raw [`Output`],
/// both so that no number is printed that was not measured or estimated:
///
/// - Before the first accepted sample there is no estimate to carry forward: a flagged
///   row there shows NaN for the height (and raw height), vertical speed and sigma,
///   instead of a zeroed output, which would read as a height of 0 m.
/// - Pointwise (`--filter off`), the vertical speed of a taken sample is the difference
///   of its height and the last taken sample's over their time step, computed here in
///   f64. The first taken sample has no step: NaN here, replaced by the next step's
///   speed by the stream's delay buffer ([`super::delay`]). A flagged sample carries
///   the last shown values forward.
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

/// The height and vertical speed of an output, for the delay buffer: (height m, speed
/// m/s).
pub(crate) fn height_and_speed(o: &Output) -> (f32, f32) {
    (o.altitude_m, o.vertical_speed_mps)
}

/// Show `speed` as the vertical speed of an output (the delay buffer's forward
/// difference).
pub(crate) fn set_speed(o: &mut Output, speed: f32) {
    o.vertical_speed_mps = speed;
}
