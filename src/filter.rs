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
//! | [`VerticalKalman`] | height, vertical speed, accelerometer bias | O(1) | 136 bytes (64-bit host) |
//! | [`GroundReference`] | mean height at rest before take-off | O(1) | 48 bytes (64-bit host) |
//!
//! # Time stamps
//!
//! Filters that need a time step take the sample time as `f64` seconds since any epoch
//! the caller likes (boot, GPS time, ...). The step `dt` is formed in `f64` and only then
//! narrowed to `f32`, so time resolution does not decay over long runs: an `f64` holds
//! a time of one year (3.2e7 s) to about 4 ns, whereas an `f32` clock would step in
//! 2 s units by then (choice of this crate). On a single-precision FPU `f64` arithmetic
//! is done in software, so each call does one `f64` subtraction and narrows the step to
//! `f32`; comparisons and ages are `f32`. Times must be finite and strictly increasing per input
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

/// Where a time stamp lies relative to an earlier one (both `f64` seconds).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Step {
    /// Before it.
    Earlier,
    /// The same time.
    Same,
    /// After it, by this many seconds (capped at 1e30 s so that an absurd gap cannot
    /// become an infinite `f32`; 0 for steps below the smallest `f32`, 1.4e-45 s).
    Later(f32),
}

/// Largest step [`step_between`] reports, s.
const MAX_STEP_S: f32 = 1.0e30;

/// `now` relative to `last` with a single `f64` subtraction: the step is narrowed to
/// `f32` after the subtraction (full resolution of the step) and then compared in
/// `f32`. On a single-precision FPU every `f64` operation is a library call (a
/// subtraction about 70 instructions, a comparison 20-40), so the time arithmetic is
/// kept to this one subtraction and one narrowing per call (measured, README).
#[inline]
pub(crate) fn step_between(last: f64, now: f64) -> Step {
    if now.to_bits() == last.to_bits() {
        return Step::Same;
    }
    let d = now - last;
    if d.is_sign_negative() {
        // also -0.0: `now` is then `-0.0` and `last` `+0.0`, the same time
        return if d.to_bits() << 1 == 0 {
            Step::Same
        } else {
            Step::Earlier
        };
    }
    if d.to_bits() == 0 {
        return Step::Same;
    }
    // A positive step below the smallest `f32` (1.4e-45 s) narrows to 0: still later.
    // Capped by comparing the bits (positive floats order as their bit patterns): an
    // `f32` comparison here would be folded by the compiler into an `f64` one, a
    // library call on a single-precision FPU, and `f32::min` is one on ARMv7E-M.
    let dt = d as f32;
    Step::Later(if dt.to_bits() > MAX_STEP_S.to_bits() {
        MAX_STEP_S
    } else {
        dt
    })
}

/// `t` is finite, tested on its bits (no `f64` library call).
#[inline]
pub(crate) const fn finite_time(t: f64) -> bool {
    (t.to_bits() >> 52) & 0x7ff != 0x7ff
}

/// Time step in seconds from `last` to `now`, both `f64` seconds.
///
/// Errors: [`Error::NotFinite`] if `now` is not finite, [`Error::NotIncreasing`] if
/// `now` is not after `last`.
pub(crate) fn step_s(last: f64, now: f64) -> Result<f32, Error> {
    if !finite_time(now) {
        return Err(Error::NotFinite);
    }
    match step_between(last, now) {
        Step::Later(dt) => Ok(dt),
        _ => Err(Error::NotIncreasing),
    }
}

/// Validates a time stamp on its own (finite).
pub(crate) fn check_time(now: f64) -> Result<f64, Error> {
    if finite_time(now) {
        Ok(now)
    } else {
        Err(Error::NotFinite)
    }
}
