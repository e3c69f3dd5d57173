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
//! | [`GroundReference`] | mean height at rest before take-off | O(1) | 48 bytes (64-bit host) |
//!
//! # Time stamps
//!
//! Filters that need a time step take the sample time as `f64` seconds since any epoch
//! the caller likes (boot, GPS time, ...). The step `dt` is formed in `f64` and only then
//! narrowed to `f32`, so time resolution does not decay over long runs: an `f64` holds
//! a time of one year (3.2e7 s) to about 4 ns, whereas an `f32` clock would step in
//! 2 s units by then (choice of this crate). One `f64` subtraction per sample is cheap
//! even with soft-float `f64`. Times must be finite and strictly increasing per input
//! stream ([`crate::Error::NotFinite`], [`crate::Error::NotIncreasing`]).
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
mod kalman;
mod median;
mod moving_average;
mod one_pole;

pub use alpha_beta::AlphaBeta;
pub use ground::{GroundReference, GroundReferenceConfig};
pub use kalman::{KalmanOutcome, VerticalEstimate, VerticalKalman, VerticalKalmanConfig};
pub use median::Median;
pub use moving_average::MovingAverage;
pub use one_pole::OnePole;

use crate::Error;

/// Time step in seconds from `last` to `now`, both `f64` seconds.
///
/// Errors: [`Error::NotFinite`] if `now` is not finite, [`Error::NotIncreasing`] if
/// `now <= last`.
fn step_s(last: f64, now: f64) -> Result<f32, Error> {
    if !now.is_finite() {
        return Err(Error::NotFinite);
    }
    if now <= last {
        return Err(Error::NotIncreasing);
    }
    // Narrowing after the subtraction keeps full resolution of the step.
    // Capped so that an absurd gap cannot become an infinite `f32`.
    Ok((now - last).min(1.0e30) as f32)
}

/// Validates a time stamp on its own (finite).
fn check_time(now: f64) -> Result<f64, Error> {
    if now.is_finite() {
        Ok(now)
    } else {
        Err(Error::NotFinite)
    }
}
