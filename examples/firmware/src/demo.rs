//! The per-sample runs of the use types that the firmware checks and measures, shared
//! word for word with `build.rs`, which runs them on the host to make the reference
//! outputs.
//!
//! Two invented demo flights (demo data only, made up for this firmware):
//!
//! - a drone hop: `DEMO_COUNT` samples at 50 Hz (4 s), pressure and vertical
//!   acceleration, through a [`Drone`] with [`DroneSettings::DEFAULT`] (and with the
//!   Kalman filter's gain reuse on, [`DRONE_REUSE`]), after a warm-up of 40 s at rest
//!   (`drone_warm_up`); the same pressures at 1 Hz through a [`Walk`] with
//!   [`WalkSettings::DEFAULT`] (a walker stepping up a 3 m bank);
//! - the first minutes of a balloon ascent: `DEMO_COUNT` samples at 1 Hz, pressure,
//!   temperature and humidity, through a [`Balloon`] with a `PROFILE_LEVELS`-level
//!   stored profile and [`BalloonSettings::DEFAULT`] with launch elevation and latitude
//!   set ([`BALLOON`]).
//!
//! The settings are `static`s: each use type borrows them, so on the device they stay
//! in flash. `build.rs` makes the samples (f64 maths on the host) and stores them as
//! f32 bit patterns; both sides then build the same `Sample`s with the functions below
//! (time stamps in integer microseconds, as a device's timer gives them) and run the
//! same library code.

use isohypse::Error;
use isohypse::filter::VerticalKalmanConfig;
use isohypse::time::Instant;
use isohypse::uses::{Balloon, BalloonSettings, BalloonState, Drone, DroneSettings, DroneState};
use isohypse::uses::{Output, Sample, Walk, WalkSettings, WalkState};

/// Samples in each demo flight.
pub const DEMO_COUNT: usize = 200;
/// Capacity of the balloon's stored profile.
pub const PROFILE_LEVELS: usize = 64;
/// Drone sample period, us (50 Hz).
pub const DRONE_PERIOD_US: u64 = 20_000;
/// Balloon sample period, us (1 Hz).
pub const BALLOON_PERIOD_US: u64 = 1_000_000;
/// Balloon launch elevation, m (invented).
pub const LAUNCH_ELEVATION_M: f32 = 310.0;
/// Balloon launch latitude, degrees (invented).
pub const LAUNCH_LATITUDE_DEG: f32 = 64.2;

/// Time of drone sample `i`.
pub fn drone_time(i: usize) -> Instant {
    Instant::from_micros(i as u64 * DRONE_PERIOD_US)
}

/// Time of balloon sample `i`.
pub fn balloon_time(i: usize) -> Instant {
    Instant::from_micros(i as u64 * BALLOON_PERIOD_US)
}

/// Samples at rest fed to the drone before the hop (40 s at 50 Hz): long
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
    let mut s = Sample::pressure(drone_time(n), pressure_pa);
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
        time: balloon_time(i),
        pressure_pa,
        temperature_c: Some(temperature_c),
        humidity_pct: Some(humidity_pct),
        ..Sample::default()
    }
}

/// The drone's settings: the preset as shipped (heights above the ground reference
/// taken at rest).
pub static DRONE: DroneSettings = DroneSettings::DEFAULT;

/// The drone's settings with the Kalman filter reusing a settled covariance
/// (`VerticalKalmanConfig::with_gain_reuse`).
pub static DRONE_REUSE: DroneSettings = DroneSettings {
    kalman: VerticalKalmanConfig::DEFAULT.with_gain_reuse(),
    ..DroneSettings::DEFAULT
};

/// The drone.
pub fn drone() -> Result<Drone<'static>, Error> {
    Drone::new(&DRONE)
}

/// The drone with gain reuse.
pub fn drone_reuse() -> Result<Drone<'static>, Error> {
    Drone::new(&DRONE_REUSE)
}

/// The balloon's settings: the preset with the launch elevation and latitude set.
#[cfg(any(not(feature = "drone-only"), not(target_os = "none")))]
pub static BALLOON: BalloonSettings = BalloonSettings {
    launch_altitude_m: Some(LAUNCH_ELEVATION_M),
    latitude_deg: Some(LAUNCH_LATITUDE_DEG),
    ..BalloonSettings::DEFAULT
};

/// The balloon's type, with a `PROFILE_LEVELS`-level stored profile.
pub type DemoBalloon = Balloon<'static, PROFILE_LEVELS>;

/// The balloon.
#[cfg(any(not(feature = "drone-only"), not(target_os = "none")))]
pub fn balloon() -> Result<DemoBalloon, Error> {
    Balloon::new(&BALLOON)
}

/// The walk's settings: the preset as shipped.
#[cfg(any(not(feature = "drone-only"), not(target_os = "none")))]
pub static WALK: WalkSettings = WalkSettings::DEFAULT;

/// The walk.
#[cfg(any(not(feature = "drone-only"), not(target_os = "none")))]
pub fn walk() -> Result<Walk<'static>, Error> {
    Walk::new(&WALK)
}

/// Walk sample `i`: the drone hop's pressure `i` at 1 Hz.
pub fn walk_sample(i: usize, pressure_pa: f32) -> Sample {
    Sample::pressure(balloon_time(i), pressure_pa)
}

/// A use type's state words by name, so that one check serves all three.
pub trait StateName: Copy {
    /// The lower-case name (the library's `name()`).
    fn state_name(self) -> &'static str;
}

impl StateName for DroneState {
    fn state_name(self) -> &'static str {
        self.name()
    }
}

impl StateName for BalloonState {
    fn state_name(self) -> &'static str {
        self.name()
    }
}

impl StateName for WalkState {
    fn state_name(self) -> &'static str {
        self.name()
    }
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
    /// [`Output::state`], by name.
    pub state: &'static str,
}

impl HostOutput {
    /// The fields of `out` that are compared.
    #[cfg_attr(target_os = "none", allow(dead_code))]
    pub fn of<S: StateName>(out: &Output<S>) -> Self {
        Self {
            altitude_m: out.altitude_m,
            raw_altitude_m: out.raw_altitude_m,
            vertical_speed_mps: out.vertical_speed_mps,
            altitude_sigma_m: out.altitude_sigma_m,
            ascent_m: out.ascent_m,
            descent_m: out.descent_m,
            flags: out.flags.0,
            state: out.state.state_name(),
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
