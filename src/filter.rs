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
//! | [`VerticalKalman`] | height, vertical speed, accelerometer bias | O(1) | 128 bytes (64-bit host) |
//! | [`GroundReference`] | mean height at rest before take-off | O(1) | 40 bytes |
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

/// `now` relative to `last`: the step is the `f64` difference narrowed to `f32` (full
/// resolution of the step), then compared in `f32`. On a single-precision FPU every
/// `f64` operation is a library call (a subtraction about 70 instructions, a comparison
/// 20-40), so the common case (two time stamps with the same exponent) is done on the
/// bits ([`same_binade_step`], same result) and the rest with one subtraction and one
/// narrowing (measured, README).
// Not inlined: it is called from every component's time check, and inlined copies of
// the bit path cost flash (448 bytes in the drone firmware, measured) for a few
// instructions of call overhead.
#[inline(never)]
pub(crate) fn step_between(last: f64, now: f64) -> Step {
    if now.to_bits() == last.to_bits() {
        return Step::Same;
    }
    let dt = match same_binade_step(last, now) {
        Some(dt) => dt,
        None => {
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
            // A positive step below the smallest `f32` (1.4e-45 s) narrows to 0: still
            // later.
            d as f32
        }
    };
    // Capped by comparing the bits (positive floats order as their bit patterns): an
    // `f32` comparison here would be folded by the compiler into an `f64` one, a
    // library call on a single-precision FPU, and `f32::min` is one on ARMv7E-M.
    Step::Later(if dt.to_bits() > MAX_STEP_S.to_bits() {
        MAX_STEP_S
    } else {
        dt
    })
}

/// Fraction bits of an `f64`.
const F64_FRACTION: u64 = (1 << 52) - 1;

/// `(now - last) as f32` computed on the bits, for the common case of two positive
/// normal time stamps with the same exponent and `now > last` (`None` otherwise: the
/// caller subtracts in `f64`). Same result, bit for bit, without the `f64` library
/// calls of a single-precision FPU (subtraction and narrowing: about 160 instructions a
/// drone sample on the Cortex-M4F; the drone pipeline went from 1 353 to 1 273
/// instructions a sample, measured under QEMU).
///
/// Why it is exact: two `f64`s with the same exponent `e` differ by
/// `(m_now - m_last) 2^(e - 1075)` with `m` the 52 fraction bits (the hidden bits
/// cancel), an integer below `2^52` times a power of two, which `f64` holds exactly
/// (Sterbenz's lemma: `y/2 <= x <= 2y` gives an exact `x - y`; Sterbenz 1974,
/// *Floating-Point Computation*, from memory). Narrowing that exact difference to `f32`
/// rounds once, to nearest with ties to even (IEEE 754-2019, sec. 4.3.1, from memory),
/// which is what is done here on the integer; results that would be subnormal or out of
/// `f32` range go back to the caller. Written here because no crate offers the narrowed
/// difference without the `f64` arithmetic.
#[inline]
fn same_binade_step(last: f64, now: f64) -> Option<f32> {
    let (a, b) = (now.to_bits(), last.to_bits());
    // sign and biased exponent together: equal, positive (sign 0) and normal
    let e = (a >> 52) as u32;
    if e != (b >> 52) as u32 || e == 0 || e >= 0x7ff {
        return None;
    }
    // both fractions are below 2^52: a positive difference is `now > last`
    let d = (a & F64_FRACTION).wrapping_sub(b & F64_FRACTION);
    if (d as i64) <= 0 {
        return None;
    }
    // Narrow d (< 2^52) to 32 bits for the FPU's one-instruction, round-to-nearest-even
    // conversion: shift right by s and keep any bit shifted out as a "sticky" lowest
    // bit. The narrowed value has 32 significant bits, so the sticky bit lies below the
    // rounding bit of a 24-bit significand and the rounding is the same as d's.
    let (hi, lo) = ((d >> 32) as u32, d as u32);
    let s = 32 - hi.leading_zeros(); // 0 when hi is 0, else 1..=20
    let narrow = if s == 0 {
        lo
    } else {
        let sticky = u32::from(lo << (32 - s) != 0);
        (hi << (32 - s)) | (lo >> s) | sticky
    };
    // value = narrow 2^scale; the product by a power of two is exact while the result
    // is a normal f32 (the rounded significand may carry one place up: hence 126)
    let scale = s as i32 + e as i32 - 1075;
    let top = 31 - narrow.leading_zeros() as i32;
    if !(-126..=127).contains(&scale) || !(-126..=126).contains(&(top + scale)) {
        return None;
    }
    Some(narrow as f32 * f32::from_bits(((scale + 127) as u32) << 23))
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
    use super::{F64_FRACTION, Step, same_binade_step, step_between};

    /// The reference: the `f64` subtraction narrowed to `f32` (IEEE 754 rounding, done
    /// by the host's hardware).
    fn reference(last: f64, now: f64) -> f32 {
        (now - last) as f32
    }

    fn check(last: f64, now: f64) {
        if let Some(dt) = same_binade_step(last, now) {
            assert_eq!(
                dt.to_bits(),
                reference(last, now).to_bits(),
                "last {last:e} now {now:e}"
            );
        }
        // whichever path it takes, the step is the narrowed difference
        if now > last {
            let want = reference(last, now).min(1.0e30);
            assert_eq!(step_between(last, now), Step::Later(want));
        }
    }

    #[test]
    fn bit_step_equals_the_f64_subtraction() {
        // xorshift64 (Marsaglia 2003): deterministic pairs, no dependency
        let mut x: u64 = 0x2545_f491_4f6c_dd1d;
        let mut next = move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        let mut taken = 0u32;
        for i in 0..400_000u32 {
            let r = next();
            // exponents around the seconds a device counts (2^-4 .. 2^40 s) and all over
            let exp = if i % 4 == 0 {
                (r >> 52) & 0x7ff
            } else {
                1019 + (r >> 58) % 44
            };
            let last_bits = (exp << 52) | (r & F64_FRACTION);
            // steps of every size within the binade, with low bits that make ties
            let step_bits = match i % 3 {
                0 => next() & ((1u64 << (next() % 53)) - 1),
                1 => (next() % 1024) << (next() % 40),
                _ => next() & F64_FRACTION,
            };
            let now_bits =
                (exp << 52) | ((last_bits & F64_FRACTION).wrapping_add(step_bits) & F64_FRACTION);
            let (last, now) = (f64::from_bits(last_bits), f64::from_bits(now_bits));
            if same_binade_step(last, now).is_some() {
                taken += 1;
            }
            check(last, now);
            check(now, last);
        }
        // most pairs take the bit path (the test is not vacuous)
        assert!(taken > 200_000, "{taken}");
    }

    #[test]
    fn bit_step_edges() {
        // 50 Hz at an hour, a day and a year (common sample times)
        for t0 in [3_600.0f64, 86_400.0, 31_557_600.0] {
            let mut t = t0;
            for _ in 0..1000 {
                check(t, t + 0.02);
                t += 0.02;
            }
        }
        // steps of 2^29 + ..: 30 bits, so the lowest 6 are rounded away and a tie is
        // 2^5. A tie next to an even significand stays, next to an odd one rounds up;
        // all ones rounds up into the next power of two.
        let base = 1.0f64;
        for d in [
            (1u64 << 29) + (1 << 5),
            (1u64 << 29) + (1 << 6) + (1 << 5),
            (1u64 << 30) - 1,
        ] {
            let now = f64::from_bits(base.to_bits() + d);
            assert!(same_binade_step(base, now).is_some());
            check(base, now);
        }
        // binade boundaries and special values take the f64 path
        assert_eq!(same_binade_step(1.0, 2.0), None);
        assert_eq!(same_binade_step(1.5, 2.5), None);
        assert_eq!(same_binade_step(2.0, 1.5), None);
        assert_eq!(same_binade_step(-1.5, -1.25), None);
        assert_eq!(same_binade_step(0.0, 1.0e-310), None);
        assert_eq!(same_binade_step(f64::INFINITY, f64::INFINITY), None);
        assert_eq!(same_binade_step(1.25, 1.25), None);
        // a step beyond the f32 range goes back to the f64 path
        let huge = 1.0e300f64;
        assert!(same_binade_step(huge, huge + huge * 1.0e-15).is_none());
        check(huge, f64::from_bits(huge.to_bits() + 1));
        check(1.0, f64::from_bits(1.0f64.to_bits() + 1));
    }
}
