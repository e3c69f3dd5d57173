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
//! | [`VerticalKalman`] | height, vertical speed, accelerometer bias | O(1) | 152 bytes (64-bit host) |
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
    /// become an infinite `f32`; 0 for steps below the smallest normal `f32`, 1.2e-38 s).
    Later(f32),
}

/// Largest step [`step_between`] reports, s.
const MAX_STEP_S: f32 = 1.0e30;

/// `now` relative to `last`: the step is the exact difference rounded once to `f32`
/// (full resolution of the step), then compared in `f32`. On a single-precision FPU
/// every `f64` operation is a library call (a subtraction about 70 instructions, a
/// comparison 20-40, and 1.7 KB of flash for the routines), so the difference is formed
/// on the integers of [`crate::timebits`] instead; no `f64` routine is linked.
///
/// Rounded once, the step can differ from `(now - last) as f32`, which rounds twice
/// (to `f64`, then to `f32`), in its last bit, and only when the `f64` difference is
/// inexact (the time stamps lie in different binades and differ in more than 53 bits)
/// and falls exactly halfway between two `f32`s; it is then the nearer of the two.
/// Steps below the smallest normal `f32` (1.2e-38 s) read as 0, still later.
// Not inlined: it is called from every component's time check, and inlined copies cost
// flash for a few instructions of call overhead.
#[inline(never)]
pub(crate) fn step_between(last: f64, now: f64) -> Step {
    if let Some(step) = crate::timebits::near_step(last, now) {
        return step;
    }
    match crate::timebits::difference(now, last) {
        None => Step::Same,
        Some(d) if d.negative => Step::Earlier,
        Some(d) => {
            let dt = d.magnitude_f32();
            // Capped by comparing the bits (positive floats order as their bit
            // patterns): `f32::min` is a library call on ARMv7E-M.
            Step::Later(if dt.to_bits() > MAX_STEP_S.to_bits() {
                MAX_STEP_S
            } else {
                dt
            })
        }
    }
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

#[cfg(test)]
mod tests {
    use super::{Step, step_between};

    /// The step of two time stamps close enough for `f64` to subtract them exactly
    /// (Sterbenz's lemma: `y/2 <= x <= 2y` gives an exact `x - y`; Sterbenz 1974,
    /// *Floating-Point Computation*, from memory): then rounding once is the hardware's
    /// `(now - last) as f32`.
    fn check(last: f64, now: f64) {
        let want = if now > last {
            Step::Later(((now - last) as f32).min(1.0e30))
        } else if now == last {
            Step::Same
        } else {
            Step::Earlier
        };
        assert_eq!(step_between(last, now), want, "{last:e} -> {now:e}");
    }

    #[test]
    fn step_equals_the_f64_subtraction_of_near_times() {
        // 50 Hz at an hour, a day and a year (common sample times), across binades
        for t0 in [3_600.0f64, 86_400.0, 31_557_600.0, 0.5, 0.02] {
            let mut t = t0;
            for _ in 0..10_000 {
                check(t, t + 0.02);
                check(t + 0.02, t);
                t += 0.02;
            }
        }
        check(1.0, 1.0);
        check(-0.0, 0.0);
        check(0.0, -0.0);
        check(1.0, f64::from_bits(1.0f64.to_bits() + 1));
        check(-1.0, -0.75);
    }

    #[test]
    fn step_is_capped_and_small_steps_are_later() {
        assert_eq!(step_between(0.0, 1.0e300), Step::Later(1.0e30));
        assert_eq!(step_between(-1.0e300, 1.0e300), Step::Later(1.0e30));
        assert_eq!(step_between(0.0, 1.0e-300), Step::Later(0.0));
        assert_eq!(step_between(1.0e-300, 0.0), Step::Earlier);
        assert_eq!(step_between(-1.0, 1.0), Step::Later(2.0));
    }
}
