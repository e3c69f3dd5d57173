//! [`Device`]: the three use types behind one value, for host tools that choose the
//! use at run time (the replay tool).

use super::{Balloon, BalloonState, Drone, DroneState, Output, Sample, Use, Walk, WalkState};
use crate::Error;
use crate::time::Instant;

/// Any use's state words.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum State {
    /// A drone's.
    Drone(DroneState),
    /// A balloon's.
    Balloon(BalloonState),
    /// A walk's.
    Walk(WalkState),
}

impl State {
    /// Lower-case name, as the replay tool writes it.
    pub const fn name(self) -> &'static str {
        match self {
            State::Drone(s) => s.name(),
            State::Balloon(s) => s.name(),
            State::Walk(s) => s.name(),
        }
    }
}

/// One of the three use types, chosen at run time; `N` is the balloon's profile
/// capacity.
#[derive(Debug, Clone, PartialEq)]
#[allow(clippy::large_enum_variant)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Device<'a, const N: usize> {
    /// A drone.
    Drone(Drone<'a>),
    /// A balloon.
    Balloon(Balloon<'a, N>),
    /// A walk.
    Walk(Walk<'a>),
}

impl<const N: usize> Device<'_, N> {
    /// The last output.
    pub fn last_output(&self) -> Output<State> {
        match self {
            Device::Drone(d) => d.last_output().map_state(State::Drone),
            Device::Balloon(b) => b.last_output().map_state(State::Balloon),
            Device::Walk(w) => w.last_output().map_state(State::Walk),
        }
    }

    /// Samples the estimator held back as outliers.
    pub fn outlier_count(&self) -> u32 {
        match self {
            Device::Drone(d) => d.outlier_count(),
            Device::Balloon(b) => b.outlier_count(),
            Device::Walk(w) => w.outlier_count(),
        }
    }

    /// The highest height, m.
    pub fn apex_m(&self) -> Option<f32> {
        match self {
            Device::Drone(d) => d.apex_m(),
            Device::Balloon(b) => b.apex_m(),
            Device::Walk(w) => w.apex_m(),
        }
    }
}

impl<const N: usize> Use for Device<'_, N> {
    type State = State;
    fn process(&mut self, sample: &Sample) -> Output<State> {
        match self {
            Device::Drone(d) => d.process(sample).map_state(State::Drone),
            Device::Balloon(b) => b.process(sample).map_state(State::Balloon),
            Device::Walk(w) => w.process(sample).map_state(State::Walk),
        }
    }
    fn accelerometer(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        match self {
            Device::Drone(d) => d.accelerometer(time, accel_up_mps2),
            Device::Balloon(b) => b.accelerometer(time, accel_up_mps2),
            Device::Walk(w) => Use::accelerometer(w, time, accel_up_mps2),
        }
    }
    fn restart_clock(&mut self) {
        match self {
            Device::Drone(d) => d.restart_clock(),
            Device::Balloon(b) => b.restart_clock(),
            Device::Walk(w) => w.restart_clock(),
        }
    }
}
