//! Water vapour: saturation vapour pressure, mixing ratio, virtual temperature.
//!
//! Moist air is lighter than dry air at the same pressure and temperature. The
//! hypsometric equation stays exact for moist air if the temperature in it is replaced
//! by the *virtual temperature* `Tv`, the temperature dry air would need to have the
//! same density:
//!
//! ```text
//! Tv = T (1 + w / eps) / (1 + w)        w = eps e / (p - e)        e = RH es(T)
//! ```
//!
//! with `w` the mixing ratio (kg of vapour per kg of dry air), `e` the vapour pressure,
//! `p` the total pressure and `eps = Rd / Rv = Mw / Md = 0.622` (Wallace & Hobbs,
//! *Atmospheric Science: An Introductory Survey*, 2nd ed., 2006, eq. 3.14, 3.16 and
//! 3.59; the value 0.622 is theirs). At 30 degC and 80 % relative humidity near sea
//! level `Tv - T` is about 4 K, which changes a height above the reference by about
//! 1.3 %.
//!
//! Saturation vapour pressure uses the improved Magnus forms of Alduchov & Eskridge
//! (1996), *Improved Magnus form approximation of saturation vapor pressure*, Journal of
//! Applied Meteorology 35, 601-609 (their AERK form over water, AERKi over ice):
//!
//! ```text
//! over water: es = 610.94 Pa * exp(17.625 t / (t + 243.04 degC)),  t in degC, -40..50 degC
//! over ice:   ei = 611.21 Pa * exp(22.587 t / (t + 273.86 degC)),  t in degC, -80..0 degC
//! ```
//!
//! The authors give a relative error below about 0.4 % against the Wexler / Hyland-Wexler
//! formulations in those ranges (from memory). Outside them the functions still return
//! the smooth continuation of the formula (documented, not an error): at the temperatures
//! where it is used far outside, vapour is too scarce to matter for height.
//! A Magnus form is chosen over the Hyland-Wexler polynomials for its one `exp` per
//! call on a microcontroller. Hand-written rather than taken from a crate: each formula
//! is one line, must run on `f32` through the crate's maths backend and take the
//! crate's newtypes, and a dependency would add more code than it saves.
//!
//! Relative humidity is taken over liquid water at all temperatures, the WMO convention
//! for reported humidity (WMO-No. 8, *Guide to Instruments and Methods of Observation*,
//! Vol. I, chapter 4).
//!
//! ```
//! use isohypse::{humidity, Pressure, RelativeHumidity, Temperature};
//! let t = Temperature::from_celsius(30.0)?;
//! let p = Pressure::from_hpa(1000.0)?;
//! let tv = humidity::virtual_temperature(p, t, RelativeHumidity::from_percent(80.0)?)?;
//! assert!((tv.kelvin() - t.kelvin() - 3.9).abs() < 0.2);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::math;
use crate::units::{Pressure, RelativeHumidity, Temperature, ZERO_CELSIUS_K};

/// Ratio of the gas constants of dry air and water vapour, `eps = Rd / Rv = Mw / Md`
/// (Wallace & Hobbs 2006, eq. 3.14: 0.622).
pub const EPSILON: f32 = 0.622;

// Alduchov & Eskridge (1996) AERK (water) and AERKi (ice) coefficients.
const WATER_A_PA: f32 = 610.94;
const WATER_B: f32 = 17.625;
const WATER_C_DEGC: f32 = 243.04;
const ICE_A_PA: f32 = 611.21;
const ICE_B: f32 = 22.587;
const ICE_C_DEGC: f32 = 273.86;

/// Saturation vapour pressure over plane liquid water (also supercooled), Pa:
/// `es = 610.94 exp(17.625 t / (t + 243.04))`, `t` in degC (Alduchov & Eskridge 1996,
/// AERK; stated range -40..50 degC).
///
/// ```
/// use isohypse::{humidity::saturation_vapour_pressure_water, Temperature};
/// // 20 degC: 23.39 hPa (2.339 kPa) in the IAPWS steam tables, 23.37 hPa (Goff-Gratch)
/// // in the WMO / Smithsonian tables (both from memory); the Magnus form is within its
/// // stated 0.4 % of either (it gives 23.33 hPa).
/// let es = saturation_vapour_pressure_water(Temperature::from_celsius(20.0)?);
/// assert!((es / 2339.0 - 1.0).abs() < 0.004);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn saturation_vapour_pressure_water(t: Temperature) -> f32 {
    let c = t.celsius();
    WATER_A_PA * math::exp(WATER_B * c / (c + WATER_C_DEGC))
}

/// Saturation vapour pressure over plane ice, Pa:
/// `ei = 611.21 exp(22.587 t / (t + 273.86))`, `t` in degC (Alduchov & Eskridge 1996,
/// AERKi; stated range -80..0 degC).
///
/// ```
/// use isohypse::{humidity::saturation_vapour_pressure_ice, Temperature};
/// // -20 degC over ice: 1.032 hPa in the Smithsonian Meteorological Tables (from
/// // memory); the Magnus form is within its stated 0.4 % (it gives 1.031 hPa).
/// let ei = saturation_vapour_pressure_ice(Temperature::from_celsius(-20.0)?);
/// assert!((ei / 103.2 - 1.0).abs() < 0.004);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn saturation_vapour_pressure_ice(t: Temperature) -> f32 {
    let c = t.celsius();
    ICE_A_PA * math::exp(ICE_B * c / (c + ICE_C_DEGC))
}

/// Vapour pressure `e = RH es(T)`, Pa, with `es` over water: the definition of relative
/// humidity with respect to water (WMO-No. 8, Vol. I, chapter 4; `RH` as a fraction).
pub fn vapour_pressure(t: Temperature, rh: RelativeHumidity) -> f32 {
    rh.fraction() * saturation_vapour_pressure_water(t)
}

/// Mixing ratio: mass of water vapour per mass of dry air, kg/kg. Always finite and
/// within `0..=1` (1 would be as much vapour as dry air, far beyond any weather).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MixingRatio(f32);

impl MixingRatio {
    /// Dry air.
    pub const DRY: MixingRatio = MixingRatio(0.0);

    /// From kg of vapour per kg of dry air. Errors: [`Error::NotFinite`],
    /// [`Error::HumidityOutOfRange`] outside `0..=1`.
    pub fn from_kg_per_kg(w: f32) -> Result<Self, Error> {
        if !w.is_finite() {
            return Err(Error::NotFinite);
        }
        if (0.0..=1.0).contains(&w) {
            Ok(Self(w))
        } else {
            Err(Error::HumidityOutOfRange)
        }
    }

    /// From vapour pressure `e` (Pa) and total pressure `p`: `w = eps e / (p - e)`
    /// (Wallace & Hobbs 2006, eq. 3.59 with `eps` = [`EPSILON`]; pressures in Pa).
    ///
    /// ```
    /// use isohypse::{humidity::MixingRatio, Pressure};
    /// // e = 2000 Pa at p = 1000 hPa: w = 0.622 * 2000 / 98 000 = 0.012 694 kg/kg
    /// // (the equation evaluated by hand).
    /// let w = MixingRatio::from_vapour_pressure(Pressure::from_hpa(1000.0)?, 2000.0)?;
    /// assert!((w.kg_per_kg() - 0.012_694).abs() < 1e-6);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    ///
    /// Errors: [`Error::NotFinite`]; [`Error::HumidityOutOfRange`] for negative `e` or
    /// `e` so close to `p` that `w` leaves `0..=1` (no dry air left: boiling, not weather).
    pub fn from_vapour_pressure(p: Pressure, e_pa: f32) -> Result<Self, Error> {
        if !e_pa.is_finite() {
            return Err(Error::NotFinite);
        }
        if e_pa < 0.0 {
            return Err(Error::HumidityOutOfRange);
        }
        let dry = p.pa() - e_pa;
        if dry <= 0.0 {
            return Err(Error::HumidityOutOfRange);
        }
        Self::from_kg_per_kg(EPSILON * e_pa / dry)
    }

    /// From pressure, temperature and relative humidity (over water):
    /// `w = eps e / (p - e)` (Wallace & Hobbs 2006, eq. 3.59), `e = RH es(T)` with `es`
    /// from [`saturation_vapour_pressure_water`] (Alduchov & Eskridge 1996, AERK).
    /// Errors: as [`Self::from_vapour_pressure`].
    pub fn from_relative_humidity(
        p: Pressure,
        t: Temperature,
        rh: RelativeHumidity,
    ) -> Result<Self, Error> {
        Self::from_vapour_pressure(p, vapour_pressure(t, rh))
    }

    /// kg of vapour per kg of dry air.
    pub const fn kg_per_kg(self) -> f32 {
        self.0
    }

    /// Specific humidity `q = w / (1 + w)`: kg of vapour per kg of moist air
    /// (Wallace & Hobbs 2006, eq. 3.57).
    pub fn specific_humidity(self) -> f32 {
        self.0 / (1.0 + self.0)
    }

    /// Ratio of virtual to actual temperature, `Tv / T = (1 + w / eps) / (1 + w)`
    /// (Wallace & Hobbs 2006, eq. 3.16 written with the mixing ratio). 1 for dry air.
    pub fn virtual_temperature_factor(self) -> f32 {
        (1.0 + self.0 / EPSILON) / (1.0 + self.0)
    }
}

/// Mixing ratio `w = eps e / (p - e)` with `e = RH es(T)` over water, kg/kg (Wallace &
/// Hobbs 2006, eq. 3.59; `es` from Alduchov & Eskridge 1996, AERK).
/// See [`MixingRatio::from_relative_humidity`].
pub fn mixing_ratio(
    p: Pressure,
    t: Temperature,
    rh: RelativeHumidity,
) -> Result<MixingRatio, Error> {
    MixingRatio::from_relative_humidity(p, t, rh)
}

/// Virtual temperature `Tv = T (1 + w / eps) / (1 + w)`, `w` from `p`, `T` and `RH`
/// (Wallace & Hobbs 2006, eq. 3.16 and 3.59; `eps` = [`EPSILON`]).
///
/// Errors: those of [`MixingRatio::from_relative_humidity`], and
/// [`Error::TemperatureOutOfRange`] if `Tv` leaves the crate's air range.
pub fn virtual_temperature(
    p: Pressure,
    t: Temperature,
    rh: RelativeHumidity,
) -> Result<Temperature, Error> {
    let w = mixing_ratio(p, t, rh)?;
    Temperature::from_kelvin(t.kelvin() * w.virtual_temperature_factor())
}

/// Dew point over water: the temperature at which `es(Td) = RH es(T)`, from the
/// inverse of the AERK Magnus form (Alduchov & Eskridge 1996):
/// `x = ln(RH) + b t / (c + t)`, `td = c x / (b - x)` (degC, b = 17.625, c = 243.04).
///
/// Errors: [`Error::HumidityOutOfRange`] for `RH = 0` (no dew point exists), and the
/// [`Temperature`] range errors for results outside the crate's air range.
///
/// ```
/// use isohypse::{humidity::dew_point, RelativeHumidity, Temperature};
/// // 25 degC at 60 %: dew point 16.7 degC (psychrometric tables, from memory).
/// let td = dew_point(Temperature::from_celsius(25.0)?, RelativeHumidity::from_percent(60.0)?)?;
/// assert!((td.celsius() - 16.7).abs() < 0.1);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn dew_point(t: Temperature, rh: RelativeHumidity) -> Result<Temperature, Error> {
    let f = rh.fraction();
    if f <= 0.0 {
        return Err(Error::HumidityOutOfRange);
    }
    let c = t.celsius();
    let x = math::ln(f) + WATER_B * c / (c + WATER_C_DEGC);
    let td = WATER_C_DEGC * x / (WATER_B - x);
    Temperature::from_kelvin(td + ZERO_CELSIUS_K)
}

#[cfg(test)]
mod tests;
