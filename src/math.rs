//! The maths backend.
//!
//! All transcendental functions in the crate go through this module, so the backend is
//! chosen in one place:
//!
//! * feature `libm` (default): the `libm` crate, a port of musl's C maths library,
//!   correctly rounded or within 1 ulp for the functions used here;
//! * feature `micromath`: the `micromath` crate's fast approximations, smaller and faster
//!   but less accurate (README publishes the height error it causes). When both
//!   features are on, `micromath` wins: enabling it is taken as an explicit choice.
//!
//! Functions are called through the crates' own paths (`libm::logf(x)`,
//! `micromath::F32Ext::ln(x)`), never as methods like `x.ln()`: in host tests a method
//! call silently resolves to `std` and would test the wrong code.

// Not every function is used by every build of the crate.
#![allow(dead_code)]

#[cfg(not(any(feature = "libm", feature = "micromath")))]
compile_error!("isohypse needs a maths backend: enable feature `libm` (default) or `micromath`");

#[cfg(feature = "micromath")]
use micromath::F32Ext as M;

/// Natural logarithm.
#[inline]
pub(crate) fn ln(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        M::ln(x)
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::logf(x)
    }
}

/// e^x.
#[inline]
pub(crate) fn exp(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        M::exp(x)
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::expf(x)
    }
}

/// ln(1 + x), accurate for small x.
///
/// `micromath` has no `ln_1p`; written here as a short series for |x| < 1e-3
/// (truncation error below 1e-13 relative) and `ln(1 + x)` beyond.
#[inline]
pub(crate) fn ln_1p(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        if x.abs() < 1.0e-3 {
            x * (1.0 - x * (0.5 - x * (1.0 / 3.0 - x * 0.25)))
        } else {
            M::ln(1.0 + x)
        }
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::log1pf(x)
    }
}

/// e^x - 1, accurate for small x.
///
/// `micromath` has no `exp_m1`; written here as a short series for |x| < 1e-3 and
/// `exp(x) - 1` beyond.
#[inline]
pub(crate) fn exp_m1(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        if x.abs() < 1.0e-3 {
            x * (1.0 + x * (0.5 + x * (1.0 / 6.0 + x * (1.0 / 24.0))))
        } else {
            M::exp(x) - 1.0
        }
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::expm1f(x)
    }
}

/// Square root.
#[inline]
pub(crate) fn sqrt(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        M::sqrt(x)
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::sqrtf(x)
    }
}

/// x^y for x > 0.
#[inline]
pub(crate) fn powf(x: f32, y: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        M::powf(x, y)
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::powf(x, y)
    }
}

/// sin(x), x in radians.
#[inline]
pub(crate) fn sin(x: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        M::sin(x)
    }
    #[cfg(all(feature = "libm", not(feature = "micromath")))]
    {
        libm::sinf(x)
    }
}
