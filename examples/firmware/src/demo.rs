//! The per-sample pipeline runs that the firmware checks and measures, shared word for
//! word with `build.rs`, which runs them on the host to make the reference outputs.
//!
//! Two invented demo flights (demo data only, made up for this firmware):
//!
//! - a drone hop: `DEMO_COUNT` samples at 50 Hz (4 s), pressure and vertical
//!   acceleration, the drone preset (`Pipeline<2, Fixed<DronePreset>>`), after a
//!   warm-up of 40 s at rest (`drone_warm_up`);
//! - the first minutes of a balloon ascent: `DEMO_COUNT` samples at 1 Hz, pressure,
//!   temperature and humidity, the balloon preset with a small stored profile
//!   (`Pipeline<PROFILE_LEVELS, Fixed<BalloonPreset>>`), launch elevation and latitude
//!   set.
//!
//! `build.rs` makes the samples (f64 maths on the host) and stores them as f32 bit
//! patterns; both sides then build the same `Sample`s with the functions below and run
//! the same library code.

use isohypse::Error;
use isohypse::filter::VerticalKalmanConfig;
use isohypse::flight::Phase;
use isohypse::pipeline::{
    Estimator, Fixed, FixedSettings, Output, Pipeline, Sample, Settings, parts,
};

/// Samples in each demo flight.
pub const DEMO_COUNT: usize = 200;
/// Capacity of the balloon's stored profile.
pub const PROFILE_LEVELS: usize = 64;
/// Drone sample period, s (50 Hz).
pub const DRONE_PERIOD_S: f64 = 0.02;
/// Balloon sample period, s (1 Hz).
pub const BALLOON_PERIOD_S: f64 = 1.0;
/// Balloon launch elevation, m (invented).
pub const LAUNCH_ELEVATION_M: f32 = 310.0;
/// Balloon launch latitude, degrees (invented).
pub const LAUNCH_LATITUDE_DEG: f32 = 64.2;

/// Time of drone sample `i`, s.
pub fn drone_time_s(i: usize) -> f64 {
    i as f64 * DRONE_PERIOD_S
}

/// Time of balloon sample `i`, s.
pub fn balloon_time_s(i: usize) -> f64 {
    i as f64 * BALLOON_PERIOD_S
}

/// Samples at rest fed to the drone pipeline before the hop (40 s at 50 Hz): long
/// enough for its Kalman covariance to settle (about 30 s with the drone preset), so
/// that the checked and measured hop runs as a drone in flight does, on the settled
/// covariance.
pub const DRONE_WARM_UP: usize = 2_000;
/// The warm-up repeats the hop's first this many samples (the first second, at rest
/// before the hop starts at 1.2 s).
pub const DRONE_REST_SAMPLES: usize = 50;

/// Drone hop sample `i` (after the warm-up): pressure and vertical acceleration.
pub fn drone_sample(i: usize, pressure_pa: f32, accel_up_mps2: f32) -> Sample {
    drone_sample_at(DRONE_WARM_UP + i, pressure_pa, accel_up_mps2)
}

/// Drone sample number `n` counted from the start of the warm-up.
fn drone_sample_at(n: usize, pressure_pa: f32, accel_up_mps2: f32) -> Sample {
    let mut s = Sample::pressure(drone_time_s(n), pressure_pa);
    s.accel_up_mps2 = Some(accel_up_mps2);
    s
}

/// Feeds the drone warm-up to `process`: `DRONE_WARM_UP` samples at rest, the first
/// `DRONE_REST_SAMPLES` of the hop's `pressures` and `accels` over and over.
pub fn drone_warm_up(pressures: &[f32], accels: &[f32], mut process: impl FnMut(&Sample)) {
    for n in 0..DRONE_WARM_UP {
        let k = n % DRONE_REST_SAMPLES;
        let p = pressures.get(k).copied().unwrap_or(f32::NAN);
        let a = accels.get(k).copied().unwrap_or(f32::NAN);
        process(&drone_sample_at(n, p, a));
    }
}

/// Balloon sample: pressure, temperature and humidity.
pub fn balloon_sample(i: usize, pressure_pa: f32, temperature_c: f32, humidity_pct: f32) -> Sample {
    Sample {
        time_s: balloon_time_s(i),
        pressure_pa,
        temperature_c: Some(temperature_c),
        humidity_pct: Some(humidity_pct),
        ..Sample::default()
    }
}

/// The pipelines' settings are fixed at compile time (`Pipeline<N, Fixed<P>>`): they
/// take no RAM, and the compiler drops the code of the options a preset leaves unused.
/// A preset as a type: its settings as a constant.
pub struct DronePreset;

impl FixedSettings for DronePreset {
    /// The drone preset as shipped (height above the ground reference taken at rest).
    const SETTINGS: Settings = Settings::drone();
    type Parts = parts::Drone;
}

/// The drone pipeline's type.
pub type DronePipeline = Pipeline<2, Fixed<DronePreset>>;

/// The drone pipeline.
pub fn drone_pipeline() -> Result<DronePipeline, Error> {
    Pipeline::new(Fixed::new())
}

/// The drone preset with its Kalman filter reusing a settled covariance
/// (`VerticalKalmanConfig::with_gain_reuse`).
pub struct DroneReusePreset;

impl FixedSettings for DroneReusePreset {
    const SETTINGS: Settings = {
        let mut s = Settings::drone();
        s.estimator = Estimator::Kalman(VerticalKalmanConfig::DEFAULT.with_gain_reuse());
        s
    };
    type Parts = parts::Drone;
}

/// The drone pipeline with gain reuse.
pub type DroneReusePipeline = Pipeline<2, Fixed<DroneReusePreset>>;

/// The drone pipeline with gain reuse.
pub fn drone_reuse_pipeline() -> Result<DroneReusePipeline, Error> {
    Pipeline::new(Fixed::new())
}

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The balloon preset with the launch elevation and latitude set.
pub struct BalloonPreset;

#[cfg(any(feature = "presets", not(target_os = "none")))]
impl FixedSettings for BalloonPreset {
    const SETTINGS: Settings = {
        let mut s = Settings::balloon();
        s.start_altitude_m = Some(LAUNCH_ELEVATION_M);
        s.latitude_deg = Some(LAUNCH_LATITUDE_DEG);
        s
    };
    type Parts = parts::Balloon;
}

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The balloon pipeline's type, with a `PROFILE_LEVELS`-level stored profile.
pub type BalloonPipeline = Pipeline<PROFILE_LEVELS, Fixed<BalloonPreset>>;

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The balloon pipeline.
pub fn balloon_pipeline() -> Result<BalloonPipeline, Error> {
    Pipeline::new(Fixed::new())
}

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The hike preset.
pub struct HikePreset;

#[cfg(any(feature = "presets", not(target_os = "none")))]
impl FixedSettings for HikePreset {
    const SETTINGS: Settings = Settings::hike();
    type Parts = parts::Hike;
}

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The hike pipeline's type.
pub type HikePipeline = Pipeline<2, Fixed<HikePreset>>;

#[cfg(any(feature = "presets", not(target_os = "none")))]
/// The hike pipeline (measured only: instruction count, no reference outputs).
#[cfg_attr(not(target_os = "none"), allow(dead_code))]
pub fn hike_pipeline() -> Result<HikePipeline, Error> {
    Pipeline::new(Fixed::new())
}

/// What the host computed for one sample, as compared on the target.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HostOutput {
    /// [`Output::altitude_m`].
    pub altitude_m: f32,
    /// [`Output::raw_altitude_m`].
    pub raw_altitude_m: f32,
    /// [`Output::vertical_speed_mps`].
    pub vertical_speed_mps: f32,
    /// [`Output::altitude_sigma_m`].
    pub altitude_sigma_m: f32,
    /// [`Output::ascent_m`].
    pub ascent_m: f32,
    /// [`Output::descent_m`].
    pub descent_m: f32,
    /// [`Output::flags`] bits.
    pub flags: u32,
    /// [`Output::phase`].
    pub phase: Phase,
}

impl HostOutput {
    /// The fields of `out` that are compared.
    #[cfg_attr(target_os = "none", allow(dead_code))]
    pub fn of(out: &Output) -> Self {
        Self {
            altitude_m: out.altitude_m,
            raw_altitude_m: out.raw_altitude_m,
            vertical_speed_mps: out.vertical_speed_mps,
            altitude_sigma_m: out.altitude_sigma_m,
            ascent_m: out.ascent_m,
            descent_m: out.descent_m,
            flags: out.flags.0,
            phase: out.phase,
        }
    }

    /// The compared real fields, in a fixed order, with their names.
    #[cfg_attr(not(target_os = "none"), allow(dead_code))]
    pub fn values(&self) -> [(&'static str, f32); 6] {
        [
            ("altitude_m", self.altitude_m),
            ("raw_altitude_m", self.raw_altitude_m),
            ("vertical_speed_mps", self.vertical_speed_mps),
            ("altitude_sigma_m", self.altitude_sigma_m),
            ("ascent_m", self.ascent_m),
            ("descent_m", self.descent_m),
        ]
    }
}
