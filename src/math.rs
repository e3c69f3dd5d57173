//! The maths backend.
//!
//! All transcendental functions in the crate go through this module, so the backend is
//! chosen in one place:
//!
//! * feature `libm` (default): the `libm` crate, a port of musl's C maths library,
//!   correctly rounded or within 1 ulp for the functions used here;
//! * feature `micromath`: the `micromath` crate's fast approximations, smaller and faster
//!   but less accurate (README publishes the height error it causes). When both
//!   features are on, `libm` wins: features are additive in Cargo, and a dependency
//!   that turns on `micromath` must not silently lower the precision of an application
//!   that kept the default. Choose micromath with
//!   `default-features = false, features = ["micromath"]`.
//!
//! Functions are called through the crates' own paths (`libm::logf(x)`,
//! `micromath::F32Ext::ln(x)`), never as methods like `x.ln()`: in host tests a method
//! call silently resolves to `std` and would test the wrong code.

#[cfg(not(any(feature = "libm", feature = "micromath")))]
compile_error!("isohypse needs a maths backend: enable feature `libm` (default) or `micromath`");

#[cfg(all(feature = "micromath", not(feature = "libm")))]
use micromath::F32Ext as M;

/// A setting that must be finite and above zero (for `validate` methods; `const` so
/// that settings fixed at compile time fold their checks away).
#[inline]
pub(crate) const fn finite_positive(x: f32) -> bool {
    x.is_finite() && x > 0.0
}

/// A setting that must be finite and not negative (see [`finite_positive`]).
#[inline]
pub(crate) const fn finite_non_negative(x: f32) -> bool {
    x.is_finite() && x >= 0.0
}

/// Natural logarithm.
#[inline]
pub(crate) fn ln(x: f32) -> f32 {
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        small_ln(x)
    }
    #[cfg(feature = "libm")]
    {
        libm::logf(x)
    }
}

/// e^x.
#[inline]
pub(crate) fn exp(x: f32) -> f32 {
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        small_exp(x)
    }
    #[cfg(feature = "libm")]
    {
        libm::expf(x)
    }
}

/// ln(1 + x), accurate for small x.
///
/// `micromath` has no `ln_1p`; written here as a short series for |x| < 1e-3,
/// `ln(1 + x) = x - x^2/2 + x^3/3 - x^4/4 + ...` (Abramowitz & Stegun, *Handbook of
/// Mathematical Functions*, 1964, 4.1.24, number from memory; truncation error below
/// 1e-13 relative) and `ln(1 + x)` beyond.
#[inline]
pub(crate) fn ln_1p(x: f32) -> f32 {
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        if x.abs() < 1.0e-3 {
            x * (1.0 - x * (0.5 - x * (1.0 / 3.0 - x * 0.25)))
        } else {
            let u = 1.0 + x;
            // ln(u) corrected for the rounding of 1 + x (Goldberg 1991, "What every
            // computer scientist should know about floating-point arithmetic", thm. 4).
            small_ln(u) - ((u - 1.0) - x) / u
        }
    }
    #[cfg(feature = "libm")]
    {
        libm::log1pf(x)
    }
}

/// e^x - 1, accurate for small x.
///
/// `micromath` has no `exp_m1`; written here as a Taylor series for |x| < 0.05,
/// `e^x - 1 = x + x^2/2! + ... + x^6/6!` (Abramowitz & Stegun 4.2.1; truncation below
/// 2e-13 relative) and `exp(x) - 1` beyond.
#[inline]
pub(crate) fn exp_m1(x: f32) -> f32 {
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        if x.abs() < 0.05 {
            x * (1.0
                + x * (0.5
                    + x * (1.0 / 6.0 + x * (1.0 / 24.0 + x * (1.0 / 120.0 + x * (1.0 / 720.0))))))
        } else {
            small_exp(x) - 1.0
        }
    }
    #[cfg(feature = "libm")]
    {
        libm::expm1f(x)
    }
}

/// Square root.
///
/// micromath 2.1's `sqrt` is off by up to 6 % (measured against f64); the `micromath`
/// backend takes it as the first guess and refines it with two Newton steps
/// `y = (y + x / y) / 2` (Newton's method on `y^2 - x`, Heron's rule; common practice),
/// each of which squares the relative error (6e-2 -> 2e-3 -> 2e-6), then one more for
/// the last bits.
#[inline]
pub(crate) fn sqrt(x: f32) -> f32 {
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        if x > 0.0 && x.is_finite() {
            let mut y = M::sqrt(x);
            for _ in 0..3 {
                y = 0.5 * (y + x / y);
            }
            y
        } else {
            M::sqrt(x)
        }
    }
    #[cfg(feature = "libm")]
    {
        libm::sqrtf(x)
    }
}

/// Square root for 1-sigma values from variances: 0 for a variance that is not
/// positive (rounding can leave a tiny negative one), else `sqrt(var)` to within one
/// unit in the last place for normal numbers.
///
/// Written here instead of calling [`sqrt`]: libm's `sqrtf` computes the root bit by
/// bit in integer arithmetic (152 instructions per call on the Cortex-M4F, measured),
/// and the FPU's square-root instruction is not reachable from stable `no_std` Rust
/// without `unsafe`. A first guess from the exponent bits (halving the biased
/// exponent; relative error below 7 %) and three Newton steps `y = (y + x / y) / 2`,
/// each of which squares the relative error (7e-2 -> 3e-3 -> 4e-6 -> rounding), cost
/// about 15 instructions there (common practice for fast square roots).
#[inline]
pub(crate) fn sigma_from_variance(var: f32) -> f32 {
    if var.is_nan() || var <= 0.0 {
        return 0.0;
    }
    if var == f32::INFINITY {
        return var;
    }
    let mut y = f32::from_bits((var.to_bits() >> 1) + 0x1fc0_0000);
    for _ in 0..3 {
        y = 0.5 * (y + var / y);
    }
    y
}

/// sin(x), x in radians: `x` reduced to [-pi/2, pi/2] and the Taylor series to x^13
/// (truncation below 6e-8; Abramowitz & Stegun 4.3.65), for both backends.
///
/// Written here rather than taken from a backend: micromath 2.1's `sin` is off by up
/// to 1.1e-3 (measured against f64), 5e-5 of gravity, and libm's `sinf` brings an f64
/// range reduction for any argument with its soft-float routines (6.6 KB of flash on
/// the Cortex-M4F, measured in the balloon's flash probe) where the crate only ever
/// takes the sine of a latitude.
#[inline]
pub(crate) fn sin(x: f32) -> f32 {
    use core::f32::consts::{FRAC_PI_2, PI, TAU};
    if !x.is_finite() {
        return f32::NAN;
    }
    // reduce to [-pi, pi], then fold into [-pi/2, pi/2] with sin(pi - x) = sin(x)
    let turns = x / TAU;
    let whole = (if turns >= 0.0 {
        turns + 0.5
    } else {
        turns - 0.5
    }) as i64 as f32;
    let mut r = x - whole * TAU;
    if r > FRAC_PI_2 {
        r = PI - r;
    } else if r < -FRAC_PI_2 {
        r = -PI - r;
    }
    let r2 = r * r;
    r * (1.0
        - r2 / 6.0
            * (1.0
                - r2 / 20.0
                    * (1.0
                        - r2 / 42.0 * (1.0 - r2 / 72.0 * (1.0 - r2 / 110.0 * (1.0 - r2 / 156.0))))))
}

/// Natural logarithm written here, used by both backends where speed matters (the
/// standard atmosphere's inverse) and as the `micromath` backend's `ln`.
///
/// Why hand-written: micromath 2.1's `ln` is off by up to 0.08 absolute for some
/// arguments below 1 (measured against f64: ln(0.9) gave -0.1823 instead of -0.1054), far
/// too much for altitude; and libm's general-purpose `logf` costs about 55 instructions
/// on a Cortex-M4F where this needs about 20 (QEMU counts, examples/firmware), which the
/// speed goal of the standard conversion needs. Accuracy: within a few f32 steps of the
/// true value (checked against f64 over every exponent in the unit tests below).
///
/// `x = m 2^e` with `m` in [sqrt(1/2), sqrt(2)), then
/// `ln x = e ln 2 + 2 atanh(s)`, `s = (m - 1) / (m + 1)`,
/// `2 atanh(s) = 2 (s + s^3/3 + s^5/5 + s^7/7 + s^9/9)` (|s| <= 0.1716, so the first
/// omitted term is below 3e-9; the series of `ln x` in `(x - 1) / (x + 1)`, Abramowitz &
/// Stegun 4.1.27, number from memory). Only safe bit manipulation (`to_bits`/`from_bits`).
/// Subnormal and non-positive inputs are not expected (callers pass pressures and ratios
/// of valid pressures); they return a finite but meaningless value rather than panic.
pub(crate) fn small_ln(x: f32) -> f32 {
    const LN_2: f32 = core::f32::consts::LN_2;
    const SQRT_2: f32 = core::f32::consts::SQRT_2;
    let bits = x.to_bits();
    let mut e = ((bits >> 23) & 0xff) as i32 - 127;
    let mut m = f32::from_bits((bits & 0x007f_ffff) | 0x3f80_0000);
    if m > SQRT_2 {
        m *= 0.5;
        e += 1;
    }
    let s = (m - 1.0) / (m + 1.0);
    let s2 = s * s;
    let series = s * (2.0 + s2 * (2.0 / 3.0 + s2 * (0.4 + s2 * (2.0 / 7.0 + s2 * (2.0 / 9.0)))));
    e as f32 * LN_2 + series
}

/// e^x for the `micromath` backend, written here because micromath 2.1's `exp` is off by
/// up to 2e-3 relative for some arguments (measured against f64 through the pressure of
/// the standard atmosphere), about 20 m of height; also the fallback of
/// [`small_exp_m1`] with either backend.
///
/// `x = k ln 2 + r` with `|r| <= ln(2)/2` (ln 2 split in a high and a low part so `r` is
/// exact to f32: the Cody-Waite reduction, Cody & Waite, *Software Manual for the
/// Elementary Functions*, 1980), `e^x = 2^k e^r`, `e^r` by its Taylor series to r^7
/// (Abramowitz & Stegun 4.2.1; truncation below 2e-8 relative). Inputs are clamped to
/// [-87, 88], the normal range of f32.
fn small_exp(x: f32) -> f32 {
    const LN_2_HI: f32 = 0.693_145_75;
    const LN_2_LO: f32 = 1.428_606_8e-6;
    let x = x.clamp(-87.0, 88.0);
    let t = x * core::f32::consts::LOG2_E;
    let k = (if t >= 0.0 { t + 0.5 } else { t - 0.5 }) as i32;
    let kf = k as f32;
    let r = (x - kf * LN_2_HI) - kf * LN_2_LO;
    let p = 1.0
        + r * (1.0
            + r * (0.5
                + r * (1.0 / 6.0
                    + r * (1.0 / 24.0
                        + r * (1.0 / 120.0 + r * (1.0 / 720.0 + r * (1.0 / 5040.0)))))));
    // 2^k as f32 bits; k is within -126..=127 after the clamp.
    let scale = f32::from_bits(((k + 127).clamp(1, 254) as u32) << 23);
    p * scale
}

/// `x.min(cap)` for a `cap` that is not NaN (a NaN `x` gives `cap`, as `f32::min` does),
/// as a comparison: on ARMv7E-M `f32::min` is a call to `fminf` (the firmware carried
/// `fminf` and `fmaxf` for the Kalman filter's covariance limits, 72 bytes, measured).
#[inline]
pub(crate) fn at_most(x: f32, cap: f32) -> f32 {
    if x <= cap { x } else { cap }
}

/// `x.max(floor)` for a `floor` that is not NaN (a NaN `x` gives `floor`), as a
/// comparison; see [`at_most`].
#[inline]
pub(crate) fn at_least(x: f32, floor: f32) -> f32 {
    if x >= floor { x } else { floor }
}

/// e^y - 1 for |y| <= 0.35 by its Taylor series to y^8 (truncation below 3e-10 relative,
/// Abramowitz & Stegun 4.2.1), and as `e^y - 1` beyond ([`large_exp_m1`]). The layer
/// closed forms of the standard atmospheres need only |y| <= 0.3 (`R L / g0` times
/// `ln(p / pb)` within a layer, checked for every layer of both standards in
/// `atmosphere`'s tests). Written by hand for speed, like [`small_ln`]: about 17
/// instructions on a Cortex-M4F against about 48 for libm's `expm1f`.
#[inline]
pub(crate) fn small_exp_m1(y: f32) -> f32 {
    if y.abs() <= 0.35 {
        exp_m1_series(y)
    } else {
        large_exp_m1(y)
    }
}

/// The Taylor series of e^y - 1 to y^8 (for |y| <= 0.35).
#[inline]
fn exp_m1_series(y: f32) -> f32 {
    y * (1.0
        + y * (1.0 / 2.0
            + y * (1.0 / 6.0
                + y * (1.0 / 24.0
                    + y * (1.0 / 120.0
                        + y * (1.0 / 720.0 + y * (1.0 / 5040.0 + y * (1.0 / 40320.0))))))))
}

/// e^y - 1 for |y| > 0.35 as `e^y - 1` with [`small_exp`]: beyond 0.35 the subtraction
/// loses at most a factor 3.4 in relative accuracy (`e^y / (e^y - 1)` at y = 0.35; 2.4
/// at y = -0.35), so the result stays within a few `f32` steps (checked against `f64` in
/// the tests: within 1e-6 relative for |y| <= 20). The fallback of [`small_exp_m1`],
/// which the standard atmospheres never reach: written here so that the firmware does
/// not link libm's `expm1f` for a path it does not take (556 bytes of flash on the
/// Cortex-M4F, measured).
#[inline(never)]
#[cold]
fn large_exp_m1(y: f32) -> f32 {
    small_exp(y) - 1.0
}

#[cfg(test)]
mod tests;
