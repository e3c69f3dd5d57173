//! Physical quantities as newtypes.
//!
//! A value of these types that exists is usable: constructors reject NaN, infinities and
//! non-physical values with a typed [`Error`], so code further down never re-checks.
//! Each stores one `f32` in SI units (Pa, K, m, m/s) and converts on the way in and out.
//!
//! ```
//! use isohypse::{Height, Pressure, Temperature};
//! let p = Pressure::from_hpa(1013.25)?;
//! assert_eq!(p.pa(), 101_325.0);
//! let t = Temperature::from_celsius(15.0)?;
//! assert!((t.kelvin() - 288.15).abs() < 1e-4);
//! let h = Height::from_feet(1000.0)?;
//! assert!((h.meters() - 304.8).abs() < 1e-3);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;

/// Pascals in one hectopascal (= one millibar).
pub const PA_PER_HPA: f32 = 100.0;
/// Pascals in one inch of mercury (conventional, at 0 degC and standard gravity:
/// 3386.389 Pa; NIST Special Publication 811, 2008, appendix B.8).
pub const PA_PER_INHG: f32 = 3386.389;
/// Metres in one international foot (exact by definition, 1959 international yard and
/// pound agreement; NIST SP 811 appendix B.8).
pub const M_PER_FT: f32 = 0.3048;
/// 0 degC in kelvin (exact, SI definition: `t / degC = T / K - 273.15`; BIPM, *The
/// International System of Units*, 9th ed., 2019).
pub const ZERO_CELSIUS_K: f32 = 273.15;

const fn finite(x: f32) -> Result<f32, Error> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(Error::NotFinite)
    }
}

/// `x` if finite, else return `Err(Error::NotFinite)` (the `?` of a `const fn`).
macro_rules! try_finite {
    ($x:expr) => {
        match finite($x) {
            Ok(v) => v,
            Err(e) => return Err(e),
        }
    };
}

/// Absolute pressure, stored in pascals. Always finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pressure(f32);

impl Pressure {
    /// Standard sea-level pressure, 101 325 Pa (U.S. Standard Atmosphere 1976).
    pub const STANDARD_SEA_LEVEL: Pressure = Pressure(101_325.0);
    /// From pascals (a `const fn`: a setting can sit in a `const`).
    ///
    /// ```
    /// use isohypse::Pressure;
    /// const QNH: Pressure = match Pressure::from_hpa(1_021.0) {
    ///     Ok(p) => p,
    ///     Err(_) => Pressure::STANDARD_SEA_LEVEL,
    /// };
    /// assert_eq!(QNH.pa(), 102_100.0);
    /// ```
    ///
    /// Errors: [`Error::NotFinite`], [`Error::PressureNotPositive`].
    pub const fn from_pa(pa: f32) -> Result<Self, Error> {
        // Two comparisons on the accepted path (NaN fails both); the error is
        // classified only when the value is refused.
        if pa > 0.0 && pa <= f32::MAX {
            Ok(Self(pa))
        } else if pa.is_finite() {
            Err(Error::PressureNotPositive)
        } else {
            Err(Error::NotFinite)
        }
    }
    /// From hectopascals (millibars).
    pub const fn from_hpa(hpa: f32) -> Result<Self, Error> {
        Self::from_pa(try_finite!(hpa) * PA_PER_HPA)
    }
    /// From inches of mercury (conventional, 3386.389 Pa/inHg; NIST SP 811 appendix B.8).
    pub const fn from_inhg(inhg: f32) -> Result<Self, Error> {
        Self::from_pa(try_finite!(inhg) * PA_PER_INHG)
    }
    /// Pascals.
    pub const fn pa(self) -> f32 {
        self.0
    }
    /// Hectopascals.
    pub fn hpa(self) -> f32 {
        self.0 / PA_PER_HPA
    }
    /// Inches of mercury.
    pub fn inhg(self) -> f32 {
        self.0 / PA_PER_INHG
    }
}

/// Thermodynamic temperature, stored in kelvin. Always finite and within
/// [`Temperature::AIR_RANGE_K`].
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Temperature(f32);

impl Temperature {
    /// Range accepted for air temperature, K. The coldest air in the atmosphere up to
    /// 86 km is near the mesopause (about 187 K in US 1976); the hottest surface air on
    /// record is below 330 K. 100..=400 K leaves room for sensors and warm electronics
    /// and rejects garbage readings (choice of this crate).
    pub const AIR_RANGE_K: (f32, f32) = (100.0, 400.0);
    /// Inside the crate only, for temperatures within [`Self::AIR_RANGE_K`] by
    /// construction (the caller states why at the call site); skips the checks on hot
    /// paths.
    pub(crate) const fn from_valid_kelvin(k: f32) -> Self {
        Self(k)
    }

    /// From kelvin. Errors: [`Error::NotFinite`], [`Error::TemperatureNotPositive`]
    /// (at or below 0 K), [`Error::TemperatureOutOfRange`] (outside
    /// [`Self::AIR_RANGE_K`]).
    pub const fn from_kelvin(k: f32) -> Result<Self, Error> {
        let k = try_finite!(k);
        if k <= 0.0 {
            Err(Error::TemperatureNotPositive)
        } else if k < Self::AIR_RANGE_K.0 || k > Self::AIR_RANGE_K.1 {
            Err(Error::TemperatureOutOfRange)
        } else {
            Ok(Self(k))
        }
    }
    /// From degrees Celsius: `T = t + 273.15` (SI definition, see [`ZERO_CELSIUS_K`]).
    pub const fn from_celsius(c: f32) -> Result<Self, Error> {
        Self::from_kelvin(try_finite!(c) + ZERO_CELSIUS_K)
    }
    /// Kelvin.
    pub const fn kelvin(self) -> f32 {
        self.0
    }
    /// Degrees Celsius.
    pub fn celsius(self) -> f32 {
        self.0 - ZERO_CELSIUS_K
    }
}

/// A height or altitude, stored in metres. Always finite. Whether it is geometric or
/// geopotential, and above what, is said by the function that returns it.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Height(f32);

impl Height {
    /// Zero height.
    pub const ZERO: Height = Height(0.0);
    /// From metres. Errors: [`Error::NotFinite`].
    pub const fn from_meters(m: f32) -> Result<Self, Error> {
        Ok(Self(try_finite!(m)))
    }
    /// From international feet: 1 ft = 0.3048 m exactly (see [`M_PER_FT`]).
    pub const fn from_feet(ft: f32) -> Result<Self, Error> {
        Self::from_meters(try_finite!(ft) * M_PER_FT)
    }
    /// Metres.
    pub const fn meters(self) -> f32 {
        self.0
    }
    /// International feet.
    pub fn feet(self) -> f32 {
        self.0 / M_PER_FT
    }
    /// Inside the crate only, for results that are finite by construction (the caller
    /// states why at the call site); skips the check on hot paths.
    pub(crate) const fn from_finite_meters(m: f32) -> Self {
        Self(m)
    }
}

/// Vertical speed, stored in metres per second, positive up. Always finite.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VerticalSpeed(f32);

impl VerticalSpeed {
    /// Zero vertical speed.
    pub const ZERO: VerticalSpeed = VerticalSpeed(0.0);
    /// From metres per second. Errors: [`Error::NotFinite`].
    pub const fn from_mps(v: f32) -> Result<Self, Error> {
        Ok(Self(try_finite!(v)))
    }
    /// From feet per minute: `v = fpm * 0.3048 / 60` m/s (see [`M_PER_FT`]).
    pub const fn from_fpm(fpm: f32) -> Result<Self, Error> {
        Self::from_mps(try_finite!(fpm) * M_PER_FT / 60.0)
    }
    /// Metres per second.
    pub const fn mps(self) -> f32 {
        self.0
    }
    /// Feet per minute.
    pub fn fpm(self) -> f32 {
        self.0 * 60.0 / M_PER_FT
    }
}

/// Relative humidity over liquid water, stored in percent, always within 0..=100.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RelativeHumidity(f32);

impl RelativeHumidity {
    /// Dry air.
    pub const DRY: RelativeHumidity = RelativeHumidity(0.0);
    /// From percent. Errors: [`Error::NotFinite`], [`Error::HumidityOutOfRange`].
    pub const fn from_percent(pct: f32) -> Result<Self, Error> {
        let pct = try_finite!(pct);
        if pct >= 0.0 && pct <= 100.0 {
            Ok(Self(pct))
        } else {
            Err(Error::HumidityOutOfRange)
        }
    }
    /// Percent.
    pub const fn percent(self) -> f32 {
        self.0
    }
    /// Fraction 0..=1.
    pub fn fraction(self) -> f32 {
        self.0 / 100.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constructors_reject_bad_values() {
        assert_eq!(Pressure::from_pa(0.0), Err(Error::PressureNotPositive));
        assert_eq!(Pressure::from_hpa(f32::INFINITY), Err(Error::NotFinite));
        assert_eq!(Pressure::from_inhg(f32::NAN), Err(Error::NotFinite));
        assert_eq!(
            Temperature::from_kelvin(-1.0),
            Err(Error::TemperatureNotPositive)
        );
        assert_eq!(
            Temperature::from_kelvin(0.0),
            Err(Error::TemperatureNotPositive)
        );
        assert_eq!(
            Temperature::from_celsius(200.0),
            Err(Error::TemperatureOutOfRange)
        );
        assert_eq!(Height::from_meters(f32::NAN), Err(Error::NotFinite));
        assert_eq!(
            VerticalSpeed::from_fpm(f32::NEG_INFINITY),
            Err(Error::NotFinite)
        );
        assert_eq!(
            RelativeHumidity::from_percent(100.5),
            Err(Error::HumidityOutOfRange)
        );
        assert_eq!(
            RelativeHumidity::from_percent(-0.1),
            Err(Error::HumidityOutOfRange)
        );
    }

    #[test]
    fn unit_conversions() {
        // 29.92 inHg is the standard altimeter setting in inches (common practice);
        // 29.921 3 inHg = 1013.25 hPa with the conventional inHg (NIST SP 811).
        let p = Pressure::from_inhg(29.9213).unwrap();
        assert!((p.hpa() - 1013.25).abs() < 0.01);
        // 304.8 m = 1000 ft (exact from the 1959 definition of the foot).
        assert!((Height::from_meters(304.8).unwrap().feet() - 1000.0).abs() < 1e-3);
        // 1000 ft/min = 5.08 m/s (exact from the foot definition).
        assert!((VerticalSpeed::from_fpm(1000.0).unwrap().mps() - 5.08).abs() < 1e-5);
        // 273.15 K = 0 degC (SI definition of the degree Celsius).
        assert!((Temperature::from_kelvin(273.15).unwrap().celsius()).abs() < 1e-5);
    }
}

/// Snapshots hold the values; loading checks them as the constructors do.
mod snap {
    use super::{Height, Pressure, Temperature};
    use crate::Error;
    use crate::snapshot::{Reader, Snap, Writer};

    macro_rules! snap_unit {
        ($ty:ty, $get:ident, $make:path) => {
            impl Snap for $ty {
                const LEN: usize = 4;
                fn save(&self, w: &mut Writer<'_>) {
                    self.$get().save(w);
                }
                fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error> {
                    let mut v = 0.0f32;
                    v.load(r)?;
                    *self = $make(v).map_err(|_| Error::SnapshotCorrupt)?;
                    Ok(())
                }
            }
        };
    }
    snap_unit!(Pressure, pa, Pressure::from_pa);
    snap_unit!(Temperature, kelvin, Temperature::from_kelvin);
    snap_unit!(Height, meters, Height::from_meters);
}

impl crate::snapshot::Blank for Temperature {
    fn blank() -> Self {
        Temperature::from_valid_kelvin(288.15)
    }
}
