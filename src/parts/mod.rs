//! Drivers of our own for real barometer parts (feature `embedded-hal`), with the
//! datasheet's compensation maths and a description of each part.
//!
//! - [`bme280`]: Bosch BME280 (pressure, temperature, humidity), forced mode.
//! - [`lps22`]: ST LPS22HB and LPS22HH (pressure, temperature), one-shot or continuous.
//! - `ms56xx` (feature `ms56xx`): an adapter for the maintained `ms56xx` crate's
//!   MS5607 / MS5611 / MS5637 driver, and the MS5611's description.
//! - [`asynch`] (feature `embedded-hal-async`): the same drivers over
//!   [`embedded_hal_async::i2c::I2c`].
//!
//! Every driver has the same four steps over [`embedded_hal::i2c::I2c`]: `probe` (chip
//! identity, and the calibration words where the part has them), `configure`
//! (oversampling or output data rate), `start` (begin a conversion) and `fetch`
//! (`Ok(None)` while the conversion is not done, then one [`PartReading`]). Nothing
//! waits inside a driver: the caller paces itself, for example by the conversion time
//! in the part's [`PartDescription`].
//!
//! The temperature these parts give is the temperature of their own die, which in a
//! warm enclosure is not the air's: it is named so in [`PartReading`].
//!
//! Why hand-written: the BME280 has an embedded-hal 1.0 crate (`bme280` 0.5.1), but its
//! measurement call waits inside with a delay provider, which a loop that must not
//! block cannot use; the LPS22HB's crate (`lps22hb` 0.1.0) is on embedded-hal 0.2. The
//! LPS22HH has ST's own embedded-hal 1.0 crate (`lps22hh-rs` 2.1.0); the driver here
//! covers it too because the two variants share every register it uses. Both drivers
//! are small, start-then-fetch, and never panic. The MS5607 / MS5611 / MS5637 have a
//! maintained embedded-hal 1.0 crate (`ms56xx` 0.1.1), fed through the adapter of
//! feature `ms56xx`. The BMP390's crate (`bmp390` 0.4.0) has no adapter here: it
//! depends on `uom` and on `defmt` 0.3 whatever its features (this crate's `defmt`
//! feature is 1.x), which every user of the adapter would build.
//!
//! ```
//! use embedded_hal_mock::eh1::i2c::{Mock, Transaction};
//! use isohypse::parts::lps22::{Lps22, Lps22Config};
//!
//! // An LPS22HB on a mock bus: identity, configuration, one conversion.
//! let mut bus = Mock::new(&[
//!     Transaction::write_read(0x5C, vec![0x0F], vec![0xB1]), // WHO_AM_I
//!     Transaction::write(0x5C, vec![0x10, 0x00]),            // CTRL_REG1: power-down
//!     Transaction::write_read(0x5C, vec![0x1A], vec![0x00]), // RES_CONF
//!     Transaction::write(0x5C, vec![0x1A, 0x00]),            // low-noise
//!     Transaction::write(0x5C, vec![0x11, 0x10]),            // CTRL_REG2
//!     Transaction::write(0x5C, vec![0x10, 0x02]),            // CTRL_REG1: one-shot, BDU
//!     Transaction::write(0x5C, vec![0x11, 0x11]),            // ONE_SHOT
//!     Transaction::write_read(0x5C, vec![0x27], vec![0x03]), // STATUS: P_DA, T_DA
//!     Transaction::write_read(0x5C, vec![0x28], vec![0x00, 0x80, 0x3F, 0xD2, 0x04]),
//! ]);
//! let mut part = Lps22::new(&mut bus, 0x5C);
//! part.probe()?;
//! part.configure(Lps22Config::default())?;
//! part.start()?;
//! let reading = part.fetch()?.expect("ready");
//! assert_eq!(reading.pressure_pa, 101_600.0); // 0x3F8000 / 4096 hPa
//! assert_eq!(reading.die_temperature_c, 12.34);
//! bus.done();
//! # Ok::<(), isohypse::parts::PartError<embedded_hal::i2c::ErrorKind>>(())
//! ```

#[cfg(feature = "embedded-hal-async")]
pub mod asynch;
pub mod bme280;
pub mod lps22;
#[cfg(feature = "ms56xx")]
#[cfg_attr(docsrs, doc(cfg(feature = "ms56xx")))]
pub mod ms56xx;
#[cfg(feature = "embedded-hal-async")]
pub mod paced;

pub use crate::part::PartDescription;

/// One reading of a part, compensated.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartReading {
    /// Static pressure, Pa.
    pub pressure_pa: f32,
    /// The temperature of the sensor's own die, degC: not the air's temperature.
    pub die_temperature_c: f32,
    /// Relative humidity over water, % (`None` for a part without humidity or with the
    /// humidity channel switched off).
    pub humidity_pct: Option<f32>,
}

impl PartReading {
    /// The reading as the sensor layer takes it: the die temperature goes to
    /// `sensor_temperature_c`, never to the air's.
    pub const fn to_reading(&self) -> crate::sensor::Reading {
        crate::sensor::Reading {
            pressure_pa: self.pressure_pa,
            sensor_temperature_c: Some(self.die_temperature_c),
            air_temperature_c: None,
            humidity_pct: self.humidity_pct,
        }
    }
}

/// Why a driver call failed. After an error the driver's own state is as it was before
/// the call: a bus error in `fetch` leaves the conversion pending, so `fetch` can be
/// called again. The exception is [`PartError::Compensation`], after which the
/// conversion is forgotten (start another). A `configure` that fails part-way may have
/// written some registers: configure again before starting.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PartError<E> {
    /// The bus failed (the I2C implementation's own error).
    Bus(E),
    /// The identity register did not hold this part's value.
    WrongChip {
        /// The value read.
        found: u8,
    },
    /// A call came before `probe` (or `configure`) succeeded.
    NotProbed,
    /// `fetch` was called with no conversion started.
    NotStarted,
    /// The settings are not allowed on this part (for example an output data rate the
    /// variant does not have).
    InvalidConfig,
    /// The calibration words read from the part cannot be used (for example a zero
    /// divisor: a blank or misread memory).
    BadCalibration,
    /// The compensation refused this sample: an intermediate value left the range the
    /// datasheet's arithmetic allows (only possible with corrupt data).
    Compensation,
    /// A conversion was still not done well after the part's longest conversion time
    /// (`paced::Paced`).
    NotReady,
}

/// Two bytes, least significant first, as an unsigned word.
pub(crate) const fn u16_le(low: u8, high: u8) -> u16 {
    u16::from_le_bytes([low, high])
}

/// Two bytes, least significant first, as a signed word.
pub(crate) const fn i16_le(low: u8, high: u8) -> i16 {
    i16::from_le_bytes([low, high])
}
