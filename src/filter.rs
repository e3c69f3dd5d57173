//! Fixed-size, allocation-free filters and the vertical-motion estimator.
//!
//! Every type here has a state of fixed size (stated in its documentation, checked by
//! `size_of` in the tests), uses no heap and does a bounded amount of work per sample.
//!
//! | type | job | time per sample | state |
//! | --- | --- | --- | --- |
//! | [`Median`] | spike rejection over the last `N` samples | O(N) | `8 N + 16` bytes (64-bit host) |
//! | [`MovingAverage`] | mean of the last `N` samples | O(1) | `4 N + 36` bytes, padded to 8 (64-bit host) |
//! | [`OnePole`] | first-order low-pass, cut-off in Hz, any time step | O(1) | 24 bytes |
//! | [`AlphaBeta`] | height and vertical speed, fixed gains | O(1) | 32 bytes |
//! | [`VerticalKalman`] | height, vertical speed, accelerometer bias | O(1) | 168 bytes (64-bit host) |
//! | [`GroundReference`] | mean height at rest before take-off | O(1) | 40 bytes |
//!
//! # Time stamps
//!
//! Filters that need a time step take the sample time as `f64` seconds since any epoch
//! the caller likes (boot, GPS time, ...). The step `dt` is the exact difference of the
//! two `f64` times rounded once to `f32`, so time resolution does not decay over long
//! runs: an `f64` holds a time of one year (3.2e7 s) to about 4 ns, whereas an `f32`
//! clock would step in 2 s units by then (choice of this crate). A single-precision FPU
//! has no `f64` arithmetic, so the step is formed on the integers of the two bit
//! patterns, once per call; comparisons and ages are `f32`. Times must be finite and
//! strictly increasing per input stream ([`crate::Error::NotFinite`], [`crate::Error::NotIncreasing`]).
//!
//! # Bad samples
//!
//! A sample that is NaN, infinite, outside the range a filter accepts, or out of time
//! order is refused with a typed [`crate::Error`] and leaves the filter exactly as it was
//! (all state types derive `Clone` and `PartialEq` so this can be tested). A valid sample
//! that the innovation gate of [`VerticalKalman`] judges an outlier is *not* an error: it
//! is reported in [`KalmanOutcome`] and counted.

mod alpha_beta;
mod ground;
pub(crate) mod kalman;
pub(crate) mod median;
mod moving_average;
mod one_pole;

pub use alpha_beta::AlphaBeta;
pub use ground::{GroundReference, GroundReferenceConfig};
pub use kalman::{
    ACCEL_QUIET_MPS2, KalmanOutcome, MAX_SPEED_MPS, VerticalEstimate, VerticalKalman,
    VerticalKalmanConfig,
};
pub use median::Median;
pub use moving_average::MovingAverage;
pub use one_pole::OnePole;
pub(crate) use one_pole::lag_gain;

use crate::Error;
use crate::time::{Duration, Instant};

/// Where a time stamp lies relative to an earlier one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Step {
    /// Before it.
    Earlier,
    /// The same time.
    Same,
    /// After it, by this many seconds.
    Later(f32),
}

/// `now` relative to `last`: the integer difference, turned into `f32` seconds once.
#[inline]
pub(crate) fn step_between(last: Instant, now: Instant) -> Step {
    match now.checked_duration_since(last) {
        None => Step::Earlier,
        Some(d) if d == Duration::ZERO => Step::Same,
        Some(d) => Step::Later(d.as_secs_f32()),
    }
}

/// Time step in seconds from `last` to `now`.
///
/// Errors: [`Error::NotIncreasing`] if `now` is not after `last`.
pub(crate) fn step_s(last: Instant, now: Instant) -> Result<f32, Error> {
    match step_between(last, now) {
        Step::Later(dt) => Ok(dt),
        _ => Err(Error::NotIncreasing),
    }
}

#[cfg(test)]
mod tests;
