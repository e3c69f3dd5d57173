//! TE Connectivity MS5607, MS5611 and MS5637 through the maintained `ms56xx` crate
//! (version 0.1.1, embedded-hal 1.0 and embedded-hal-async 1.0; feature `ms56xx`): an
//! adapter that makes its driver a [`BarometricSensor`] (and, with
//! `embedded-hal-async`, a `sensor_async::AsyncBarometricSensor`) for the
//! [`crate::sensor::SensorDriver`], and a [`PartDescription`] of the MS5611 for the use
//! types' settings.
//!
//! The crate's `measure` starts both conversions (pressure D1, temperature D2) and waits
//! for each with the delay it is given, so one reading takes two conversion times
//! ([`describe_ms5611`]); in an async executor the wait yields to other tasks. Its
//! temperature is the die's, passed on as `sensor_temperature_c`, never as the air's.
//!
//! Source for the figures: TE Connectivity (Measurement Specialties), *MS5611-01BA03
//! Barometric Pressure Sensor, with stainless steel cap*, data sheet, revision 0.1.2
//! (2017), operating range and the table of resolution (RMS) and conversion time per
//! oversampling ratio; the values below are from memory of that table and agree with the
//! waits the `ms56xx` crate uses.

use ::ms56xx::{Ms56xx, Ms56xxInterface, OversamplingType, SensorVariant};

use super::PartDescription;
use crate::sensor::{BarometricSensor, Reading};

/// An `ms56xx` driver (initialised with its `init_blocking` or `init`), the
/// oversampling ratio of every reading and the delay it waits with.
pub struct Ms56xxSensor<I, V: SensorVariant, D> {
    part: Ms56xx<I, V>,
    oversampling: V::Oversampling,
    delay: D,
}

impl<I, V: SensorVariant, D> Ms56xxSensor<I, V, D> {
    /// The adapter of `part`, reading at `oversampling` and waiting with `delay`.
    pub fn new(part: Ms56xx<I, V>, oversampling: V::Oversampling, delay: D) -> Self {
        Self {
            part,
            oversampling,
            delay,
        }
    }

    /// The driver and the delay back.
    pub fn release(self) -> (Ms56xx<I, V>, D) {
        (self.part, self.delay)
    }
}

/// A reading of the crate (pressure in mbar = hPa, die temperature in degC) as the
/// sensor layer's [`Reading`].
fn reading(m: ::ms56xx::Measurement) -> Reading {
    Reading {
        pressure_pa: m.pressure_mbar * 100.0,
        sensor_temperature_c: Some(m.temperature_c),
        air_temperature_c: None,
        humidity_pct: None,
    }
}

impl<I, V, D> BarometricSensor for Ms56xxSensor<I, V, D>
where
    I: Ms56xxInterface,
    V: SensorVariant,
    D: embedded_hal::delay::DelayNs,
{
    type Error = ::ms56xx::Error<I::Error>;

    /// One reading: both conversions, each waited for with the delay.
    fn read(&mut self) -> Result<Reading, Self::Error> {
        let m = self
            .part
            .measure_blocking(self.oversampling, &mut self.delay)?;
        Ok(reading(m))
    }
}

#[cfg(feature = "embedded-hal-async")]
impl<I, V, D> crate::sensor_async::AsyncBarometricSensor for Ms56xxSensor<I, V, D>
where
    I: ::ms56xx::Ms56xxInterfaceAsync,
    V: SensorVariant,
    D: embedded_hal_async::delay::DelayNs,
{
    type Error = ::ms56xx::Error<I::Error>;

    /// One reading: both conversions, each awaited with the delay.
    async fn read(&mut self) -> Result<Reading, Self::Error> {
        let m = self
            .part
            .measure(self.oversampling, &mut self.delay)
            .await?;
        Ok(reading(m))
    }
}

/// The MS5611 at `oversampling`.
///
/// - Range 10 to 1200 mbar (operating range).
/// - Resolution (RMS) 0.065, 0.042, 0.027, 0.018 and 0.012 mbar at oversampling 256,
///   512, 1024, 2048 and 4096: taken as the RMS noise, and as the step.
/// - Conversion time: twice the ratio's wait (pressure, then temperature), from the
///   crate's [`OversamplingType::delay_us`] (0.60 to 9.04 ms each, the data sheet's
///   maxima).
pub fn describe_ms5611(oversampling: ::ms56xx::OversamplingStandard) -> PartDescription {
    use ::ms56xx::OversamplingStandard as Osr;
    let rms_mbar = match oversampling {
        Osr::Osr256 => 0.065,
        Osr::Osr512 => 0.042,
        Osr::Osr1024 => 0.027,
        Osr::Osr2048 => 0.018,
        Osr::Osr4096 => 0.012,
    };
    PartDescription {
        name: "MS5611",
        pressure_min_pa: 1_000.0,
        pressure_max_pa: 120_000.0,
        resolution_pa: rms_mbar * 100.0,
        noise_rms_pa: Some(rms_mbar * 100.0),
        conversion_time_us: 2 * oversampling.delay_us(),
        has_humidity: false,
    }
}
