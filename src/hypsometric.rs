//! The hypsometric equation and its closed forms.
//!
//! Hydrostatic balance `dp/dz = -rho g` with the ideal gas law `p = rho R Tv` gives the
//! thickness of a layer between pressures `p1` (lower) and `p2` (upper):
//!
//! ```text
//! H2 - H1 = (R * Tv_mean / g0) * ln(p1 / p2)
//! ```
//!
//! with `H` geopotential heights, `R` the specific gas constant of dry air, `g0` standard
//! gravity and `Tv_mean` the ln(p)-weighted mean virtual temperature of the layer
//! (Wallace & Hobbs, *Atmospheric Science: An Introductory Survey*, 2nd ed., 2006,
//! eq. 3.29; U.S. Standard Atmosphere 1976, eq. 33a/33b for the closed forms).
//!
//! Closed forms used by the layered models:
//!
//! * isothermal layer (`T = Tb`): `H = Hb + (R Tb / g0) ln(pb / p)`
//! * constant lapse (`T = Tb + L (H - Hb)`, `L != 0`):
//!   `H = Hb + (Tb / L) ((p / pb)^(-R L / g0) - 1)`
//!
//! They are evaluated as `ln_1p((p - pb) / pb)` and `exp_m1(...)`: near the base
//! pressure the naive forms lose most of their f32 digits to cancellation, these keep
//! the error at millimetres (measured by the accuracy sweep in `tests/`).

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976_GAS_CONSTANT};
use crate::math;
use crate::units::{Height, Pressure, Temperature};

/// ln(p / pb) computed as ln_1p((p - pb) / pb), precise when p is near pb (an identity;
/// using `ln_1p` near 1 is common practice in floating point).
#[inline]
fn ln_ratio(p: f32, pb: f32) -> f32 {
    math::ln_1p((p - pb) / pb)
}

/// Height above the base (m') of pressure `p` in an isothermal layer at `tb` kelvin
/// with base pressure `pb`: `(R Tb / g) ln(pb / p)` (U.S. 1976 eq. 33b solved for H;
/// pressures in Pa, `tb` in K, `r` in J/(kg K), `g` in m/s^2).
#[inline]
pub(crate) fn isothermal_layer_height(pb: f32, tb: f32, p: f32, r: f32, g: f32) -> f32 {
    -(r * tb / g) * ln_ratio(p, pb)
}

/// Height above the base (m') of pressure `p` in a layer with lapse rate `l` (K/m',
/// non-zero): `(Tb / L) ((p / pb)^(-R L / g) - 1)` (U.S. 1976 eq. 33a solved for H;
/// units as [`isothermal_layer_height`]).
#[inline]
pub(crate) fn lapse_layer_height(pb: f32, tb: f32, l: f32, p: f32, r: f32, g: f32) -> f32 {
    (tb / l) * math::exp_m1(-(r * l / g) * ln_ratio(p, pb))
}

/// Pressure at height `dh` (m') above the base of an isothermal layer:
/// `pb exp(-g dh / (R Tb))` (U.S. 1976 eq. 33b; `pb` in Pa, `tb` in K).
#[inline]
pub(crate) fn pressure_at_isothermal_height(pb: f32, tb: f32, dh: f32, r: f32, g: f32) -> f32 {
    pb * math::exp(-g * dh / (r * tb))
}

/// Pressure at height `dh` (m') above the base of a constant-lapse layer:
/// `pb (1 + L dh / Tb)^(-g / (R L))` (U.S. 1976 eq. 33a; `l` in K/m').
#[inline]
pub(crate) fn pressure_at_lapse_height(pb: f32, tb: f32, l: f32, dh: f32, r: f32, g: f32) -> f32 {
    pb * math::exp(-(g / (r * l)) * math::ln_1p(l * dh / tb))
}

/// Geopotential thickness (m') of the layer between `p_lower` and `p_upper` with mean
/// virtual temperature `mean_virtual_temperature`:
/// `dH = (R Tv / g0) ln(p_lower / p_upper)`, R = 287.053 07 J/(kg K) (dry air, U.S. 1976),
/// g0 = 9.806 65 m/s^2. Negative when `p_upper > p_lower`.
///
/// Source: the hypsometric equation, Wallace & Hobbs (2006) eq. 3.29.
///
/// ```
/// use isohypse::{hypsometric::thickness, Pressure, Temperature};
/// // 1000-500 hPa with a mean virtual temperature of 266 K is about 5.4 km thick.
/// let dz = thickness(Pressure::from_hpa(1000.0)?, Pressure::from_hpa(500.0)?,
///                    Temperature::from_kelvin(266.0)?)?;
/// assert!((dz.meters() - 5400.0).abs() < 20.0);
/// # Ok::<(), isohypse::Error>(())
/// ```
///
/// Errors: [`Error::NotFinite`] only for pressure ratios beyond f32 range.
pub fn thickness(
    p_lower: Pressure,
    p_upper: Pressure,
    mean_virtual_temperature: Temperature,
) -> Result<Height, Error> {
    let dz = -(US_1976_GAS_CONSTANT * mean_virtual_temperature.kelvin() / STANDARD_GRAVITY)
        * ln_ratio(p_upper.pa(), p_lower.pa());
    Height::from_meters(dz)
}

/// Mean virtual temperature of a layer from its thickness: the inverse of [`thickness`],
/// `Tv = g0 dH / (R ln(p_lower / p_upper))` (Wallace & Hobbs 2006 eq. 3.29 solved for
/// Tv; `dH` in m', R and g0 as in [`thickness`]).
///
/// ```
/// use isohypse::{hypsometric::mean_virtual_temperature, Height, Pressure};
/// // A 1000-500 hPa thickness of 5 400 m' means Tv = 5400 g0 / (R ln 2) = 266.15 K
/// // (the equation evaluated by hand).
/// let tv = mean_virtual_temperature(Pressure::from_hpa(1000.0)?, Pressure::from_hpa(500.0)?,
///                                   Height::from_meters(5400.0)?)?;
/// assert!((tv.kelvin() - 266.15).abs() < 0.01);
/// # Ok::<(), isohypse::Error>(())
/// ```
///
/// Errors: [`Error::NotEnoughData`] when the two pressures are equal (no layer),
/// [`Error::TemperatureNotPositive`] / [`Error::TemperatureOutOfRange`] when the
/// thickness and pressures are inconsistent with air.
pub fn mean_virtual_temperature(
    p_lower: Pressure,
    p_upper: Pressure,
    thickness: Height,
) -> Result<Temperature, Error> {
    let log_ratio = -ln_ratio(p_upper.pa(), p_lower.pa());
    if log_ratio == 0.0 {
        return Err(Error::NotEnoughData);
    }
    Temperature::from_kelvin(
        STANDARD_GRAVITY * thickness.meters() / (US_1976_GAS_CONSTANT * log_ratio),
    )
}

/// Pressure at the top of a layer of geopotential thickness `thickness` above
/// `p_lower` with mean virtual temperature `Tv`: `p_upper = p_lower exp(-g0 dH / (R Tv))`
/// (Wallace & Hobbs 2006 eq. 3.29 solved for `p_upper`; the isothermal form of U.S. 1976
/// eq. 33b). `dH` in m', R and g0 as in [`thickness`].
///
/// Errors: [`Error::PressureNotPositive`] when the result underflows to zero,
/// [`Error::NotFinite`] when it overflows.
pub fn pressure_above(
    p_lower: Pressure,
    thickness: Height,
    mean_virtual_temperature: Temperature,
) -> Result<Pressure, Error> {
    Pressure::from_pa(pressure_at_isothermal_height(
        p_lower.pa(),
        mean_virtual_temperature.kelvin(),
        thickness.meters(),
        US_1976_GAS_CONSTANT,
        STANDARD_GRAVITY,
    ))
}

/// Height (m', above the base) of pressure `p` in a constant-lapse layer with base
/// pressure `p_base`, base temperature `t_base` and lapse rate `lapse_k_per_m`
/// (dT/dH, negative when temperature falls with height):
/// `dH = (Tb / L) ((p / pb)^(-R L / g0) - 1)` (U.S. 1976 eq. 33a, solved for H;
/// `lapse_k_per_m` in K per geopotential metre).
///
/// ```
/// use isohypse::{hypsometric::constant_lapse_height, Pressure, Temperature};
/// // The standard troposphere from sea level puts 500 hPa at 5 574 m' (ICAO Doc 7488/3
/// // tables, from memory; the equation in f64 gives 5 574.44 m').
/// let dh = constant_lapse_height(Pressure::from_pa(101_325.0)?,
///                                Temperature::from_kelvin(288.15)?, -0.0065,
///                                Pressure::from_hpa(500.0)?)?;
/// assert!((dh.meters() - 5_574.44).abs() < 0.05);
/// # Ok::<(), isohypse::Error>(())
/// ```
///
/// Errors: [`Error::ZeroLapseRate`] for `L == 0` (use [`isothermal_height`]),
/// [`Error::NotFinite`] for a non-finite lapse rate or a result that is not finite
/// (pressure beyond the top of the layer's temperature profile).
pub fn constant_lapse_height(
    p_base: Pressure,
    t_base: Temperature,
    lapse_k_per_m: f32,
    p: Pressure,
) -> Result<Height, Error> {
    if !lapse_k_per_m.is_finite() {
        return Err(Error::NotFinite);
    }
    if lapse_k_per_m == 0.0 {
        return Err(Error::ZeroLapseRate);
    }
    Height::from_meters(lapse_layer_height(
        p_base.pa(),
        t_base.kelvin(),
        lapse_k_per_m,
        p.pa(),
        US_1976_GAS_CONSTANT,
        STANDARD_GRAVITY,
    ))
}

/// Height (m', above the base) of pressure `p` in an isothermal layer at `t` with base
/// pressure `p_base`: `dH = (R T / g0) ln(pb / p)` (U.S. 1976 eq. 33b, solved for H).
///
/// ```
/// use isohypse::{hypsometric::isothermal_height, Pressure, Temperature};
/// // In the standard's isothermal layer (216.65 K from 11 000 m', 22 632.06 Pa),
/// // 100 hPa lies 5 179.7 m' higher: at 16 180 m' (ICAO Doc 7488/3 tables, from memory).
/// let dh = isothermal_height(Pressure::from_pa(22_632.06)?,
///                            Temperature::from_kelvin(216.65)?, Pressure::from_hpa(100.0)?)?;
/// assert!((dh.meters() - 5_179.7).abs() < 0.05);
/// # Ok::<(), isohypse::Error>(())
/// ```
///
/// Errors: [`Error::NotFinite`] only for pressure ratios beyond f32 range.
pub fn isothermal_height(p_base: Pressure, t: Temperature, p: Pressure) -> Result<Height, Error> {
    Height::from_meters(isothermal_layer_height(
        p_base.pa(),
        t.kelvin(),
        p.pa(),
        US_1976_GAS_CONSTANT,
        STANDARD_GRAVITY,
    ))
}
