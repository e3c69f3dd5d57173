//! One type per use, each holding exactly its parts and speaking its own words:
//!
//! | type | for | height | state words |
//! | --- | --- | --- | --- |
//! | [`Drone`] | height hold | above the take-off point, barometer and accelerometer fused | on ground, climbing, holding, descending, landed |
//! | [`Balloon`] | payloads to 40 km | layer by layer from the launch, descent on the stored profile | ground, ascent, float, burst, descent, landed |
//! | [`Walk`] | wrist and hand-held devices | smoothed, held through weather at rest, calibrated by known elevations | not started, climbing, level, descending, resting |
//!
//! Each takes its settings by reference (`DroneSettings`, `BalloonSettings`,
//! `WalkSettings`, with `const` presets), so that on a device they stay in flash, and
//! one [`Sample`] per barometer reading:
//!
//! ```text
//! Sample -> time step -> input checks -> height model -> datum -> estimate
//!        -> trackers -> Output (+ flags)
//! ```
//!
//! A sample that fails a check leaves every state untouched and comes back as an
//! [`Output`] with the previous estimate and a rejection flag. Nothing here panics or
//! allocates. A clock that steps back or jumps ahead ([`Flags::CLOCK_FAULT`]) costs at
//! most the sample it happens on.
//!
//! [`Device`] switches between the three at run time (host tools).

mod balloon;
mod device;
mod drone;
mod gnss;
mod sample;
mod spike;
pub(crate) mod stages;
mod states;
mod walk;

pub use balloon::{Balloon, BalloonModel, BalloonSettings, LAUNCH_AGREES_M};
pub use device::{Device, State};
pub use drone::{Drone, DroneSettings};
pub use gnss::GnssSettings;
pub use sample::{Flags, Sample};
pub use stages::{
    FIX_AGREES_M, MAX_GAP_LIMIT_S, MAX_PRESSURE_NOISE_PA, MAX_TEMPERATURE_UNCERTAINTY_K,
    MAX_VERTICAL_SPEED_MPS,
};
pub use states::{BalloonState, DroneState, WalkState};
pub use walk::{Walk, WalkSettings};

use crate::time::Instant;

/// The speed uncertainty with which a stale height's 1-sigma grows while the barometer
/// is saturated ([`Flags::SATURATED`]), m/s, per use: the 1-sigma is
/// `sqrt(sigma^2 + ((|v| + s) dt)^2)` with the last vertical speed `v`, the time `dt`
/// since the last height taken and `s` from here. The figures are typical changes of
/// vertical speed (common practice, not from a source): a balloon's ascent rate varies
/// by 1-2 m/s about its 5 m/s, a drone's climb by a few m/s, a walker's vertical speed
/// stays within about 0.3 m/s (1 000 m an hour).
pub const STALE_SPEED_SIGMA_MPS: StaleSpeeds = StaleSpeeds {
    balloon: 2.0,
    drone: 3.0,
    walk: 0.3,
};

/// The speed uncertainty of a stale height, m/s, per use (see [`STALE_SPEED_SIGMA_MPS`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StaleSpeeds {
    /// For [`Balloon`].
    pub balloon: f32,
    /// For [`Drone`].
    pub drone: f32,
    /// For [`Walk`].
    pub walk: f32,
}

/// What a use says after each sample, with its own state words `S`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Output<S> {
    /// Time of the sample.
    pub time: Instant,
    /// Height, m (geometric; above mean sea level, or above the take-off point for a
    /// drone with a take-off altitude of 0).
    pub altitude_m: f32,
    /// Height from this sample alone (model and datum, before the estimator), m.
    pub raw_altitude_m: f32,
    /// Vertical speed, m/s, up positive.
    pub vertical_speed_mps: f32,
    /// 1-sigma of the height, m.
    pub altitude_sigma_m: f32,
    /// The state now.
    pub state: S,
    /// The state change this sample confirmed, if any.
    pub change: Option<Change<S>>,
    /// Total ascent, m.
    pub ascent_m: f32,
    /// Total descent, m.
    pub descent_m: f32,
    /// 3-hour pressure tendency, hPa, negative when falling (walk only).
    pub tendency_hpa: Option<f32>,
    /// What was rejected, held or assumed.
    pub flags: Flags,
}

/// A confirmed state change: the new state, and the time and height where its
/// condition started to hold.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Change<S> {
    /// The new state.
    pub state: S,
    /// When its condition started to hold.
    pub time: Instant,
    /// Height then, m.
    pub altitude_m: f32,
}

impl<S> Output<S> {
    /// The sample was used (not rejected).
    pub const fn accepted(&self) -> bool {
        !self.flags.rejected()
    }

    /// The same output with the state words mapped by `f`.
    pub fn map_state<T>(self, f: impl Fn(S) -> T) -> Output<T> {
        Output {
            time: self.time,
            altitude_m: self.altitude_m,
            raw_altitude_m: self.raw_altitude_m,
            vertical_speed_mps: self.vertical_speed_mps,
            altitude_sigma_m: self.altitude_sigma_m,
            state: f(self.state),
            change: self.change.map(|c| Change {
                state: f(c.state),
                time: c.time,
                altitude_m: c.altitude_m,
            }),
            ascent_m: self.ascent_m,
            descent_m: self.descent_m,
            tendency_hpa: self.tendency_hpa,
            flags: self.flags,
        }
    }
}

/// What the three use types have in common, for code that serves any of them (the
/// sensor drivers, a logger).
pub trait Use {
    /// The use's state words.
    type State: Copy;
    /// Process one barometer sample. Never fails: problems are reported in the
    /// output's flags, and a rejected sample leaves the state unchanged.
    fn process(&mut self, sample: &Sample) -> Output<Self::State>;
    /// An accelerometer sample between barometer samples (earth-frame vertical
    /// acceleration with gravity removed, m/s^2); ignored by uses without an
    /// accelerometer. Errors, state unchanged: [`crate::Error::TimeJump`] for a stamp
    /// further ahead than the longest gap, and the Kalman filter's own.
    fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), crate::Error>;
    /// The device's clock was restarted on purpose: the next sample starts a new time
    /// base without a clock-fault flag; the estimate re-acquires, totals, states,
    /// profile and datum are kept.
    fn restart_clock(&mut self);
}
