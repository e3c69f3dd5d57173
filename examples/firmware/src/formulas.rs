//! The functions the firmware measures and checks, shared word for word with `build.rs`,
//! which runs them on the host to make the reference table.
//!
//! The maths backend follows the firmware's features the same way the library does:
//! `libm` by default, `micromath` with the `micromath` feature.

/// Number of demo pressures in each sample set (see `build.rs`).
pub const SAMPLE_COUNT: usize = 30;

/// x^y in the maths backend the library is built with.
#[inline]
pub fn backend_powf(x: f32, y: f32) -> f32 {
    #[cfg(feature = "micromath")]
    {
        micromath::F32Ext::powf(x, y)
    }
    #[cfg(not(feature = "micromath"))]
    {
        libm::powf(x, y)
    }
}

/// The one-line sea-level power formula, the speed baseline:
/// `h = 44 330.77 m * (1 - (p / 101 325 Pa)^0.190 263)` (the U.S. 1976 troposphere,
/// `(T0 / L) (1 - (p / p0)^(R L / g0))`, with its constants folded; common practice).
#[inline]
pub fn sea_level_power_formula(p_pa: f32) -> f32 {
    44_330.77 * (1.0 - backend_powf(p_pa / 101_325.0, 0.190_263))
}

/// The library's standard pressure -> height conversion, NaN for a rejected reading.
#[inline]
#[cfg_attr(feature = "baseline-only", allow(dead_code))]
pub fn library_pressure_altitude(p_pa: f32) -> f32 {
    match isohypse::Pressure::from_pa(p_pa).and_then(isohypse::atmosphere::pressure_altitude) {
        Ok(h) => h.meters(),
        Err(_) => f32::NAN,
    }
}
