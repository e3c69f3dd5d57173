//! Standard atmospheres: U.S. Standard Atmosphere 1976 to 86 km, and the ICAO / ISO 2533
//! constant set.
//!
//! A standard atmosphere is a stack of layers in geopotential height `H`, each with a
//! linear temperature `T(H) = Tb + L (H - Hb)`. Pressure follows from hydrostatic balance
//! and the ideal gas law (the hypsometric equation, see [`crate::hypsometric`]):
//!
//! * `L != 0`: `p = pb (T / Tb)^(-g0 / (R L))`
//! * `L == 0`: `p = pb exp(-g0 (H - Hb) / (R Tb))`
//!
//! Sources: *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562, U.S. Government Printing
//! Office, 1976: equations 23 and 33a/33b, constants in section 1.2 and Table 4
//! (layer bases and lapse rates). ISO 2533:1975 *Standard Atmosphere* and ICAO Doc 7488/3
//! *Manual of the ICAO Standard Atmosphere* (1993) use the same layers to 80 km
//! geopotential with the specific gas constant given directly as 287.052 87 J/(kg K).
//!
//! The base pressures in the tables below are not typed in from a printed table: they
//! were computed in f64 from the defining constants, and the test
//! `base_pressures_follow_from_constants` recomputes them from the layer equations and
//! checks them against the printed values of the standard.
//!
//! The models run from -5 004 m geopotential (just below -5 km geometric, where the
//! U.S. 1976 tables start; sea-level pressure above 1013.25 hPa and sites below sea level
//! give negative pressure altitudes) to their tops: 84 852.05 m geopotential = 86 km geometric for
//! U.S. 1976, and 80 km geopotential for ICAO.
//!
//! ```
//! use isohypse::{atmosphere, Pressure};
//! // Pressure altitude (geometric, U.S. 1976) of a 700 hPa reading:
//! let h = atmosphere::pressure_altitude(Pressure::from_hpa(700.0)?)?;
//! assert!((h.meters() - 3013.0).abs() < 2.0);
//! # Ok::<(), isohypse::Error>(())
//! ```

// Constants keep the digits of their sources, beyond what f32 holds.
#![allow(clippy::excessive_precision)]

use crate::Error;
use crate::hypsometric;
use crate::math;
use crate::units::{Height, Pressure, Temperature};

/// One layer of a standard atmosphere: its base, and the lapse rate up to the next base.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Layer {
    /// Geopotential height of the layer base, m'.
    pub base_geopotential_m: f32,
    /// Temperature at the base, K.
    pub base_temperature_k: f32,
    /// Temperature gradient dT/dH, K per geopotential metre (negative in the troposphere).
    pub lapse_rate_k_per_m: f32,
    /// Pressure at the base, Pa.
    pub base_pressure_pa: f32,
    /// `1 / pb`, 1/Pa (derived, so the inverse needs no division by the base).
    inverse_base_pressure: f32,
    /// Exponent `-R L / g0` of the constant-lapse inverse (0 for isothermal layers).
    exponent: f32,
    /// `Tb / L` for constant-lapse layers, `-R Tb / g0` for isothermal ones, m'.
    height_scale_m: f32,
}

/// Temperature, pressure and density at one height.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AtmosphereState {
    /// Air temperature.
    pub temperature: Temperature,
    /// Air pressure.
    pub pressure: Pressure,
    /// Air density, kg/m^3.
    pub density_kg_m3: f32,
}

/// A standard atmosphere: constants and layer table.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StandardAtmosphere {
    /// Short name of the standard.
    pub name: &'static str,
    /// Specific gas constant of dry air R = R* / M0, J/(kg K).
    pub gas_constant: f32,
    /// Standard acceleration of gravity g0, m/s^2 (defines geopotential metres).
    pub standard_gravity: f32,
    /// Effective Earth radius r0 used to convert geopotential to geometric height, m.
    pub earth_radius_m: f32,
    /// Layers from the bottom; the last entry only marks the top of the model
    /// (its lapse rate is not used).
    pub layers: [Layer; 9],
}

/// Number of usable layers (the last table row is the top).
const LAYER_COUNT: usize = 8;

/// Specific gas constant of dry air in U.S. 1976: R* / M0 = 8 314.32 / 28.964 4
/// = 287.053 07 J/(kg K) (U.S. Standard Atmosphere 1976, section 1.2.4 and Table 2).
pub const US_1976_GAS_CONSTANT: f32 = 287.053_07;
/// Standard acceleration of gravity, m/s^2 (exact; 3rd CGPM 1901; U.S. 1976 and ISO 2533).
pub const STANDARD_GRAVITY: f32 = 9.806_65;
/// Effective Earth radius of U.S. 1976 for the geopotential conversion, m (section 1.2.2).
pub const US_1976_EARTH_RADIUS_M: f32 = 6_356_766.0;
/// Sea-level standard pressure, Pa (U.S. 1976 and ISO 2533).
pub const SEA_LEVEL_PRESSURE_PA: f32 = 101_325.0;
/// Sea-level standard temperature, K (U.S. 1976 and ISO 2533).
pub const SEA_LEVEL_TEMPERATURE_K: f32 = 288.15;

/// A layer of U.S. 1976 (R = 287.053 07) or ICAO (R = 287.052 87), with its derived
/// constants computed at compile time: the exponent `-R L / g0` and height scale
/// `Tb / L` of U.S. 1976 eq. 33a solved for H, or the scale `-R Tb / g0` of eq. 33b
/// solved for H when `L = 0` (see [`StandardAtmosphere::geopotential_height`]).
const fn layer_with(r: f32, h: f32, t: f32, l: f32, p: f32) -> Layer {
    let isothermal = l == 0.0;
    Layer {
        base_geopotential_m: h,
        base_temperature_k: t,
        lapse_rate_k_per_m: l,
        base_pressure_pa: p,
        inverse_base_pressure: 1.0 / p,
        exponent: if isothermal {
            0.0
        } else {
            -r * l / STANDARD_GRAVITY
        },
        height_scale_m: if isothermal {
            -r * t / STANDARD_GRAVITY
        } else {
            t / l
        },
    }
}

const fn layer(h: f32, t: f32, l: f32, p: f32) -> Layer {
    layer_with(US_1976_GAS_CONSTANT, h, t, l, p)
}

const ICAO_GAS_CONSTANT: f32 = 287.052_87;

const fn icao_layer(h: f32, t: f32, l: f32, p: f32) -> Layer {
    layer_with(ICAO_GAS_CONSTANT, h, t, l, p)
}

/// U.S. Standard Atmosphere 1976, -5 km to 86 km geometric (-5 004 m' to 84 852.05 m') (the default everywhere).
///
/// Base pressures (computed in f64 from the constants; printed values of the standard in
/// Table 4 and the tables of part 4: 101 325, 22 632.06, 5 474.889, 868.018 7,
/// 110.906 3, 66.938 87, 3.956 420, 0.373 383 6 Pa).
pub const US_1976: StandardAtmosphere = StandardAtmosphere {
    name: "U.S. Standard Atmosphere 1976",
    gas_constant: US_1976_GAS_CONSTANT,
    standard_gravity: STANDARD_GRAVITY,
    earth_radius_m: US_1976_EARTH_RADIUS_M,
    layers: [
        layer(-5_004.0, 320.676, -0.0065, 177_762.72),
        layer(0.0, 288.15, -0.0065, 101_325.0),
        layer(11_000.0, 216.65, 0.0, 22_632.064),
        layer(20_000.0, 216.65, 0.001, 5_474.888_7),
        layer(32_000.0, 228.65, 0.0028, 868.018_7),
        layer(47_000.0, 270.65, 0.0, 110.906_306),
        layer(51_000.0, 270.65, -0.0028, 66.938_873),
        layer(71_000.0, 214.65, -0.002, 3.956_420_4),
        // top: 86 km geometric = 84 852.05 m' geopotential with r0 = 6 356 766 m
        layer(84_852.05, 186.945_9, 0.0, 0.373_380_18),
    ],
};

/// ICAO Standard Atmosphere (ICAO Doc 7488/3, 1993; the same model as ISO 2533:1975 with
/// its addenda), -5 km to 80 km geopotential (from -5 004 m'; which document first
/// carried which part of that range is from memory). Same layers as U.S. 1976 below 80 km; R = 287.052 87 J/(kg K) given
/// directly, so pressures differ from U.S. 1976 by 1e-6 to 9e-6 relative.
pub const ICAO: StandardAtmosphere = StandardAtmosphere {
    name: "ICAO Standard Atmosphere / ISO 2533",
    gas_constant: ICAO_GAS_CONSTANT,
    standard_gravity: STANDARD_GRAVITY,
    earth_radius_m: US_1976_EARTH_RADIUS_M,
    layers: [
        icao_layer(-5_004.0, 320.676, -0.0065, 177_762.78),
        icao_layer(0.0, 288.15, -0.0065, 101_325.0),
        icao_layer(11_000.0, 216.65, 0.0, 22_632.04),
        icao_layer(20_000.0, 216.65, 0.001, 5_474.877_4),
        icao_layer(32_000.0, 228.65, 0.0028, 868.015_8),
        icao_layer(47_000.0, 270.65, 0.0, 110.905_77),
        icao_layer(51_000.0, 270.65, -0.0028, 66.938_53),
        icao_layer(71_000.0, 214.65, -0.002, 3.956_392_2),
        // top: 80 km geopotential
        icao_layer(80_000.0, 196.65, 0.0, 0.886_272_24),
    ],
};

impl Default for StandardAtmosphere {
    fn default() -> Self {
        US_1976
    }
}

impl StandardAtmosphere {
    /// Lowest geopotential height of the model, m'.
    pub fn bottom_geopotential_m(&self) -> f32 {
        self.layers[0].base_geopotential_m
    }

    /// Highest geopotential height of the model, m'.
    pub fn top_geopotential_m(&self) -> f32 {
        self.layers[LAYER_COUNT].base_geopotential_m
    }

    /// Highest pressure of the model (at its bottom), Pa.
    pub fn bottom_pressure_pa(&self) -> f32 {
        self.layers[0].base_pressure_pa
    }

    /// Lowest pressure of the model (at its top), Pa.
    pub const fn top_pressure_pa(&self) -> f32 {
        self.layers[LAYER_COUNT].base_pressure_pa
    }

    /// The layer holding geopotential height `h` (m'), or an error outside the model.
    fn layer_for_geopotential(&self, h: f32) -> Result<&Layer, Error> {
        if !h.is_finite() {
            return Err(Error::NotFinite);
        }
        if h < self.bottom_geopotential_m() {
            return Err(Error::BelowModelBottom);
        }
        if h > self.top_geopotential_m() {
            return Err(Error::AboveModelTop);
        }
        // The first layer whose upper boundary is at or above h. Found by a linear scan
        // from the bottom: most readings are in the two lowest layers.
        let mut chosen = &self.layers[0];
        for pair in self.layers.windows(2) {
            if let [lower, upper] = pair {
                chosen = lower;
                if h <= upper.base_geopotential_m {
                    break;
                }
            }
        }
        Ok(chosen)
    }

    /// The layer holding pressure `p_pa`, or an error outside the model.
    ///
    /// Pressures within 1e-6 relative of the model's ends are accepted, so that the
    /// forward function's f32 rounding at the very ends always inverts.
    #[inline]
    fn layer_for_pressure(&self, p_pa: f32) -> Result<&Layer, Error> {
        // Fast path: the troposphere above sea level, where most readings fall.
        let (sea_level, tropopause) = (&self.layers[1], &self.layers[2]);
        if p_pa <= sea_level.base_pressure_pa && p_pa >= tropopause.base_pressure_pa {
            return Ok(sea_level);
        }
        if p_pa > self.bottom_pressure_pa() * (1.0 + 1.0e-6) {
            return Err(Error::BelowModelBottom);
        }
        if p_pa < self.top_pressure_pa() * (1.0 - 1.0e-6) {
            return Err(Error::AboveModelTop);
        }
        let mut chosen = &self.layers[0];
        for pair in self.layers.windows(2) {
            if let [lower, upper] = pair {
                chosen = lower;
                if p_pa >= upper.base_pressure_pa {
                    break;
                }
            }
        }
        Ok(chosen)
    }

    /// Temperature, pressure and density at geopotential height `h` (m').
    ///
    /// Equations (`Hb`, `Tb`, `pb`, `L` of the layer holding `H`; heights in m', `T`
    /// in K, `p` in Pa, `R` in J/(kg K), `g0` in m/s^2): `T = Tb + L (H - Hb)`; pressure
    /// `p = pb (1 + L (H - Hb) / Tb)^(-g0 / (R L))`, or `p = pb exp(-g0 (H - Hb) / (R Tb))`
    /// for `L = 0`; density `rho = p / (R T)` (U.S. 1976 equations 23, 33a, 33b, 42).
    ///
    /// ```
    /// use isohypse::{atmosphere::US_1976, Height};
    /// // Tropopause, 11 000 m': 216.65 K and 22 632.06 Pa (U.S. Standard Atmosphere 1976,
    /// // Table 4 and its part 4 tables; printed values, from memory).
    /// let s = US_1976.at_geopotential(Height::from_meters(11_000.0)?)?;
    /// assert!((s.temperature.kelvin() - 216.65).abs() < 1e-3);
    /// assert!((s.pressure.pa() / 22_632.06 - 1.0).abs() < 1e-6);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    ///
    /// Errors: [`Error::BelowModelBottom`], [`Error::AboveModelTop`].
    pub fn at_geopotential(&self, h: Height) -> Result<AtmosphereState, Error> {
        let hm = h.meters();
        let layer = self.layer_for_geopotential(hm)?;
        let dh = hm - layer.base_geopotential_m;
        let t = layer.base_temperature_k + layer.lapse_rate_k_per_m * dh;
        let p = if layer.lapse_rate_k_per_m == 0.0 {
            hypsometric::pressure_at_isothermal_height(
                layer.base_pressure_pa,
                layer.base_temperature_k,
                dh,
                self.gas_constant,
                self.standard_gravity,
            )
        } else {
            hypsometric::pressure_at_lapse_height(
                layer.base_pressure_pa,
                layer.base_temperature_k,
                layer.lapse_rate_k_per_m,
                dh,
                self.gas_constant,
                self.standard_gravity,
            )
        };
        let temperature = Temperature::from_kelvin(t)?;
        let pressure = Pressure::from_pa(p)?;
        Ok(AtmosphereState {
            temperature,
            pressure,
            density_kg_m3: p / (self.gas_constant * t),
        })
    }

    /// Temperature, pressure and density at geometric height `z` (m above mean sea
    /// level), converted to geopotential with this standard's Earth radius:
    /// `H = r0 z / (r0 + z)` (U.S. 1976 eq. 18), then [`Self::at_geopotential`].
    pub fn at_geometric(&self, z: Height) -> Result<AtmosphereState, Error> {
        let h = crate::geopotential::geopotential_from_geometric(z, self.earth_radius_m)?;
        self.at_geopotential(h)
    }

    /// Geopotential height (m') at which this standard has pressure `p`: the inverse of
    /// [`Self::at_geopotential`], solved in closed form per layer (U.S. 1976 eq. 33a and
    /// 33b solved for H): `H = Hb + (Tb / L) exp_m1(-(R L / g0) ln(p / pb))`, or
    /// `H = Hb - (R Tb / g0) ln(p / pb)` for `L = 0`, with `Tb / L`, `R L / g0` and
    /// `1 / pb` precomputed per layer.
    ///
    /// Errors: [`Error::BelowModelBottom`] for pressure above the model's bottom pressure,
    /// [`Error::AboveModelTop`] for pressure below its top pressure.
    #[inline]
    pub fn geopotential_height(&self, p: Pressure) -> Result<Height, Error> {
        Ok(Height::from_finite_meters(self.geopotential_m(p)?))
    }

    /// [`Self::geopotential_height`] in metres. The result is finite: `p` is positive
    /// and inside the model's pressure range, so the ratio to the layer base lies in
    /// (0.05, 1.8) and every term is bounded.
    #[inline]
    fn geopotential_m(&self, p: Pressure) -> Result<f32, Error> {
        Ok(self.geopotential_in_layer(p)?.0)
    }

    /// [`Self::geopotential_m`] and the layer it lies in. Kept out of line: a firmware
    /// that converts several pressures (a use type with an altimeter setting does three)
    /// would otherwise carry a copy per call site (about 300 bytes of flash in the drone
    /// firmware, measured), for a call of a few instructions.
    #[inline(never)]
    fn geopotential_in_layer(&self, p: Pressure) -> Result<(f32, &Layer), Error> {
        let pa = p.pa();
        let layer = self.layer_for_pressure(pa)?;
        // ln(p / pb) as ln of the ratio: its absolute error is about one f32 step
        // (6e-8), 0.5 mm of height; the cancellation near the base is handled by
        // exp_m1 below, not here. Constants per layer are precomputed.
        let log_ratio = math::small_ln(pa * layer.inverse_base_pressure);
        let dh = if layer.exponent == 0.0 {
            layer.height_scale_m * log_ratio
        } else {
            layer.height_scale_m * math::small_exp_m1(layer.exponent * log_ratio)
        };
        Ok((layer.base_geopotential_m + dh, layer))
    }

    /// Pressure altitude: the geometric height (m) at which this standard has pressure
    /// `p`. Independent of latitude by definition (the standard's own Earth radius).
    /// [`Self::geopotential_height`], then `z = r0 H / (r0 - H)` (U.S. 1976 eq. 19).
    ///
    /// ```
    /// use isohypse::{atmosphere::US_1976, Pressure};
    /// // 500 hPa lies at 5 574 m' geopotential in the standard (ICAO Doc 7488/3 tables,
    /// // from memory; the equations in f64 give 5 574.44 m'), 5 579.3 m geometric.
    /// let h = US_1976.geopotential_height(Pressure::from_hpa(500.0)?)?;
    /// assert!((h.meters() - 5_574.4).abs() < 0.5);
    /// let z = US_1976.pressure_altitude(Pressure::from_hpa(500.0)?)?;
    /// assert!((z.meters() - 5_579.3).abs() < 0.5);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    #[inline]
    pub fn pressure_altitude(&self, p: Pressure) -> Result<Height, Error> {
        let h = self.geopotential_m(p)?;
        Ok(self.geometric_of(h))
    }

    /// [`Self::pressure_altitude`] and this standard's temperature at that level, from
    /// one inversion: `T = Tb + L (H - Hb)` in the layer found for `p` (U.S. 1976
    /// eq. 23), without the forward pressure that [`Self::temperature_at`] also
    /// computes.
    ///
    /// ```
    /// use isohypse::{atmosphere::US_1976, Pressure};
    /// let (h, t) = US_1976.pressure_altitude_with_temperature(Pressure::from_pa(22_632.06)?)?;
    /// assert!((h.meters() - 11_019.1).abs() < 0.5); // tropopause, 11 km' geopotential
    /// assert!((t.kelvin() - 216.65).abs() < 1e-3);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    ///
    /// Errors: as [`Self::pressure_altitude`].
    #[inline]
    pub fn pressure_altitude_with_temperature(
        &self,
        p: Pressure,
    ) -> Result<(Height, Temperature), Error> {
        let (h, t) = self.pressure_altitude_with_kelvin(p)?;
        Ok((h, Temperature::from_kelvin(t)?))
    }

    /// [`Self::pressure_altitude_with_temperature`] with the temperature in kelvin,
    /// unchecked (a model with user-given layers may leave the range of
    /// [`Temperature`]).
    #[inline]
    pub(crate) fn pressure_altitude_with_kelvin(
        &self,
        p: Pressure,
    ) -> Result<(Height, f32), Error> {
        let (h, layer) = self.geopotential_in_layer(p)?;
        let t =
            layer.base_temperature_k + layer.lapse_rate_k_per_m * (h - layer.base_geopotential_m);
        Ok((self.geometric_of(h), t))
    }

    /// Geometric height of geopotential `h` (m') from this model's inverse: U.S. 1976
    /// eq. 19 as `H + H^2 / (r0 - H)`; `H` is at most the model top (about 85 km, far
    /// below r0), so the result is finite.
    #[inline]
    fn geometric_of(&self, h: f32) -> Height {
        Height::from_finite_meters(h + h * h / (self.earth_radius_m - h))
    }

    /// Pressure of this standard at geometric height `z` (U.S. 1976 eq. 18, then
    /// eq. 33a/33b; see [`Self::at_geopotential`]).
    ///
    /// ```
    /// use isohypse::{atmosphere::US_1976, Height};
    /// // 5 km geometric: 54 048 Pa (U.S. Standard Atmosphere 1976, part 4 tables,
    /// // from memory; the same row is checked in tests/atmosphere.rs).
    /// let p = US_1976.pressure_at(Height::from_meters(5_000.0)?)?;
    /// assert!((p.pa() / 54_048.0 - 1.0).abs() < 1e-4);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    pub fn pressure_at(&self, z: Height) -> Result<Pressure, Error> {
        Ok(self.at_geometric(z)?.pressure)
    }

    /// Temperature of this standard at geometric height `z` (U.S. 1976 eq. 18, then
    /// `T = Tb + L (H - Hb)`, eq. 23).
    pub fn temperature_at(&self, z: Height) -> Result<Temperature, Error> {
        Ok(self.at_geometric(z)?.temperature)
    }
}

/// Pressure altitude in the U.S. Standard Atmosphere 1976: the geometric height at which
/// the standard has pressure `p`. The everyday "standard pressure to height" call.
///
/// ```
/// use isohypse::{atmosphere::pressure_altitude, Pressure};
/// let h = pressure_altitude(Pressure::from_pa(101_325.0)?)?;
/// assert!(h.meters().abs() < 1e-3);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[inline]
pub fn pressure_altitude(p: Pressure) -> Result<Height, Error> {
    US_1976.pressure_altitude(p)
}

#[cfg(test)]
mod tests;
