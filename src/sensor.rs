//! Sensor adapter (feature `embedded-hal`): any barometric sensor, driven through the
//! use type ([`crate::uses`]) at a chosen rate.
//!
//! - [`BarometricSensor`]: our own small trait for anything that yields pressure and
//!   temperature (and optionally humidity). Implement it for your part's driver.
//! - [`SensorDriver`]: reads the sensor, feeds the use type, and paces the loop with an
//!   [`embedded_hal::delay::DelayNs`].
//! - [`ExampleBarometer`]: a tiny implementation over [`embedded_hal::i2c::I2c`] for a
//!   **made-up device** (invented register map, see its docs), used by the tests with a
//!   mock bus and as a template for a real driver. It is not a real part.
//!
//! A failed read is a typed error ([`DriverError::Sensor`], the sensor's own error
//! passed through) and feeds nothing to the use type, so its state is exactly as before.
//! A read that succeeds but carries a non-physical value is fed as usual and comes back
//! as a flagged, rejected [`Output`] (see [`crate::uses::Flags`]). Nothing panics.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::uses::{Drone, DroneSettings, Walk, WalkSettings};
//! use isohypse::sensor::{BarometricSensor, Reading, SensorDriver};
//!
//! /// A stand-in sensor for the example: a steady 977 hPa, 18 degC.
//! struct Steady;
//! impl BarometricSensor for Steady {
//!     type Error = core::convert::Infallible;
//!     fn read(&mut self) -> Result<Reading, Self::Error> {
//!         Ok(Reading { pressure_pa: 97_700.0, sensor_temperature_c: Some(18.0), air_temperature_c: None, humidity_pct: None })
//!     }
//! }
//! /// A delay that returns at once (use your HAL's timer on a device).
//! struct NoWait;
//! impl embedded_hal::delay::DelayNs for NoWait {
//!     fn delay_ns(&mut self, _ns: u32) {}
//! }
//!
//! let drone = Drone::new(&DroneSettings::DEFAULT)?;
//! let mut driver = SensorDriver::new(Steady, NoWait, drone);
//! // the clock: a monotonic timer on a device; here one that steps 20 ms a reading
//! let mut ms = 0;
//! let mut clock = || {
//!     ms += 20;
//!     Instant::from_millis(ms)
//! };
//! let summary = driver.run_for(100, 20, &mut clock, |_time, result| {
//!     if let Ok(out) = result {
//!         assert!(out.altitude_m.abs() < 0.1);
//!     }
//! });
//! assert_eq!(summary.accepted, 100);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::time::{Clock, Instant};
use embedded_hal::delay::DelayNs;
use embedded_hal::i2c::I2c;

use crate::Error;
use crate::uses::{Output, Sample, Use};

/// One reading of a barometric sensor.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reading {
    /// Static pressure, Pa.
    pub pressure_pa: f32,
    /// The barometer's own (die) temperature, degC, if the part reports one. It is
    /// not the air's: a barometer sits in a warm box and heats itself, so the height
    /// models never use it.
    pub sensor_temperature_c: Option<f32>,
    /// Air temperature, degC, from a probe outside the box, if the device has one.
    pub air_temperature_c: Option<f32>,
    /// Relative humidity over water, % (`None` if the part has no humidity channel).
    pub humidity_pct: Option<f32>,
}

impl Reading {
    /// The sample of this reading, taken at `time`: the air temperature goes in, the
    /// sensor's own does not.
    pub const fn to_sample(&self, time: Instant) -> Sample {
        Sample {
            time,
            pressure_pa: self.pressure_pa,
            temperature_c: self.air_temperature_c,
            humidity_pct: self.humidity_pct,
            accel_up_mps2: None,
            known_altitude_m: None,
            gnss_altitude_m: None,
            gnss_accuracy_m: None,
        }
    }
}

/// Anything that yields pressure and temperature (and optionally humidity).
///
/// `read` takes one reading now. It should not block for long: the [`SensorDriver`]
/// paces the loop. Errors are the implementation's own type (a bus error, a device
/// fault) and are passed through to the caller untouched.
pub trait BarometricSensor {
    /// What a failed read reports.
    type Error;

    /// Take one reading.
    fn read(&mut self) -> Result<Reading, Self::Error>;
}

impl<T: BarometricSensor + ?Sized> BarometricSensor for &mut T {
    type Error = T::Error;

    fn read(&mut self) -> Result<Reading, Self::Error> {
        T::read(self)
    }
}

/// Why [`SensorDriver::step`] produced no output.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DriverError<E> {
    /// The sensor's read failed (its own error, e.g. the bus error). Nothing was fed to
    /// the use type: its state is exactly as before.
    Sensor(E),
}

impl<E> From<DriverError<E>> for Error {
    /// Every driver error is [`Error::SensorRead`] in the crate's error enum (the
    /// sensor's own error is dropped; match on [`DriverError`] to keep it).
    fn from(_: DriverError<E>) -> Self {
        Error::SensorRead
    }
}

/// Counts of one [`SensorDriver::run_for`] call.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RunSummary {
    /// Samples the use type accepted (possibly with flags such as an outlier).
    pub accepted: u32,
    /// Readings the use type rejected (non-physical values, flagged in the output).
    pub rejected: u32,
    /// Failed reads ([`DriverError::Sensor`]).
    pub read_errors: u32,
}

impl RunSummary {
    /// Count one step's result (shared by the blocking and the async driver).
    pub(crate) fn count<S, E>(&mut self, result: &Result<Output<S>, DriverError<E>>) {
        match result {
            Ok(out) if out.accepted() => self.accepted += 1,
            Ok(_) => self.rejected += 1,
            Err(_) => self.read_errors += 1,
        }
    }
}

/// Feed the result of one read to the use type as taken at `time`: a reading is
/// processed; a failed read is counted in `read_errors` and leaves the use type alone.
/// Shared by the blocking and the async driver.
pub(crate) fn feed<E, U: Use>(
    device: &mut U,
    read_errors: &mut u32,
    time: Instant,
    read: Result<Reading, E>,
) -> Result<Output<U::State>, DriverError<E>> {
    match read {
        Ok(reading) => Ok(device.process(&reading.to_sample(time))),
        Err(e) => {
            *read_errors = read_errors.saturating_add(1);
            Err(DriverError::Sensor(e))
        }
    }
}

/// Drives a [`BarometricSensor`] through a use type ([`crate::uses`]) at a chosen rate.
///
/// The driver keeps the time of the last reading it took; [`Self::run_for`] continues
/// from there, one period per reading. Time per call: one sensor read plus one
/// one `process` call. Memory: the sensor, the delay and the use type.
#[derive(Debug)]
pub struct SensorDriver<S, D, U> {
    sensor: S,
    delay: D,
    device: U,
    last_time: Option<Instant>,
    read_errors: u32,
}

/// Formats the use type and the driver's counters (the sensor and the delay are left
/// out: they need not implement `defmt::Format`).
#[cfg(feature = "defmt")]
impl<S, D, U: defmt::Format> defmt::Format for SensorDriver<S, D, U> {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(
            f,
            "SensorDriver {{ device: {}, last_time: {}, read_errors: {} }}",
            self.device,
            self.last_time,
            self.read_errors
        );
    }
}

impl<S: BarometricSensor, D: DelayNs, U: Use> SensorDriver<S, D, U> {
    /// A driver for `sensor`, pacing with `delay`, feeding `device` (a
    /// [`crate::uses::Drone`], [`crate::uses::Balloon`], [`crate::uses::Walk`] or
    /// [`crate::uses::Device`]).
    pub const fn new(sensor: S, delay: D, device: U) -> Self {
        Self {
            sensor,
            delay,
            device,
            last_time: None,
            read_errors: 0,
        }
    }

    /// Read the sensor once and feed the reading to the use type as taken at `time`
    /// (s). `Ok`: the use type's output, which may be flagged or rejected (see
    /// [`Output::accepted`]). `Err`: the read failed and the use type was not touched.
    pub fn step(&mut self, time: Instant) -> Result<Output<U::State>, DriverError<S::Error>> {
        self.last_time = Some(time);
        let read = self.sensor.read();
        feed(&mut self.device, &mut self.read_errors, time, read)
    }

    /// Take `samples` readings `period_ms` apart: each one is stamped with
    /// `clock.now()` just before the read, [`Self::step`]ped, handed to `each` with its
    /// time, and followed by `delay.delay_ms(period_ms)`. The time the read and the
    /// use type take adds to the delay (the stamps stay true: they come from the
    /// clock); for an exact rate, call [`Self::step`] from a timer instead. Failed reads
    /// are counted and the loop goes on.
    pub fn run_for<C, F>(
        &mut self,
        samples: u32,
        period_ms: u32,
        clock: &mut C,
        mut each: F,
    ) -> RunSummary
    where
        C: Clock,
        F: FnMut(Instant, Result<Output<U::State>, DriverError<S::Error>>),
    {
        let mut summary = RunSummary::default();
        for _ in 0..samples {
            let time = clock.now();
            let result = self.step(time);
            summary.count(&result);
            each(time, result);
            self.delay.delay_ms(period_ms);
        }
        summary
    }

    /// The use type it feeds.
    pub fn device(&self) -> &U {
        &self.device
    }

    /// The use type, e.g. to feed accelerometer samples between readings or to
    /// re-zero.
    pub fn device_mut(&mut self) -> &mut U {
        &mut self.device
    }

    /// The sensor, e.g. to reconfigure it.
    pub fn sensor_mut(&mut self) -> &mut S {
        &mut self.sensor
    }

    /// Failed reads since the driver was made.
    pub const fn read_errors(&self) -> u32 {
        self.read_errors
    }

    /// Time of the last reading taken (or attempted), s.
    pub const fn last_time(&self) -> Option<Instant> {
        self.last_time
    }

    /// Take the parts back.
    pub fn release(self) -> (S, D, U) {
        (self.sensor, self.delay, self.device)
    }
}

/// A tiny driver for a **made-up** I2C barometer, for tests and as a template. The
/// device and its register map are invented for this crate; they describe no real part.
///
/// Register map of the invented device (7-bit address [`Self::DEFAULT_ADDRESS`]):
///
/// | register | bytes | content |
/// | --- | --- | --- |
/// | `0x0F` | 1 | identity, reads [`Self::IDENTITY`] |
/// | `0x20` | 8 | data block: status, pressure (3), temperature (2), humidity (2) |
///
/// Data block, big-endian:
/// - status: bit 0 new data ready, bit 1 humidity channel fitted, bit 7 device fault;
/// - pressure: unsigned 24 bits, 1/16 Pa per count;
/// - temperature: signed 16 bits, 1/100 degC per count;
/// - humidity: unsigned 16 bits, 1/100 % per count (only with status bit 1).
///
/// One reading is one I2C write-read: the register address `0x20`, then 8 bytes.
#[derive(Debug)]
pub struct ExampleBarometer<I> {
    i2c: I,
    address: u8,
}

/// Formats the device address (the bus is left out).
#[cfg(feature = "defmt")]
impl<I> defmt::Format for ExampleBarometer<I> {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "ExampleBarometer {{ address: {=u8:#x} }}", self.address);
    }
}

/// Errors of [`ExampleBarometer`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExampleBarometerError<E> {
    /// The bus transfer failed (the bus's own error).
    Bus(E),
    /// The device reported a fault (status bit 7).
    Fault,
    /// No new data since the last read (status bit 0 clear).
    NotReady,
    /// The identity register did not read [`ExampleBarometer::IDENTITY`].
    WrongIdentity(u8),
}

impl<I: I2c> ExampleBarometer<I> {
    /// The invented device's 7-bit address.
    pub const DEFAULT_ADDRESS: u8 = 0x2E;
    /// What the invented device's identity register reads.
    pub const IDENTITY: u8 = 0xA7;
    /// Identity register.
    pub const REGISTER_IDENTITY: u8 = 0x0F;
    /// First register of the data block.
    pub const REGISTER_DATA: u8 = 0x20;
    /// Status bit: new data ready.
    pub const STATUS_READY: u8 = 1 << 0;
    /// Status bit: humidity channel fitted.
    pub const STATUS_HUMIDITY: u8 = 1 << 1;
    /// Status bit: device fault.
    pub const STATUS_FAULT: u8 = 1 << 7;

    /// A driver on bus `i2c` at 7-bit `address`.
    pub const fn new(i2c: I, address: u8) -> Self {
        Self { i2c, address }
    }

    /// Check the identity register.
    pub fn probe(&mut self) -> Result<(), ExampleBarometerError<I::Error>> {
        let mut id = [0u8; 1];
        self.i2c
            .write_read(self.address, &[Self::REGISTER_IDENTITY], &mut id)
            .map_err(ExampleBarometerError::Bus)?;
        match id {
            [Self::IDENTITY] => Ok(()),
            [other] => Err(ExampleBarometerError::WrongIdentity(other)),
        }
    }

    /// Decode a data block (see the register map).
    pub fn decode(block: [u8; 8]) -> Result<Reading, ExampleBarometerError<I::Error>> {
        let [status, p2, p1, p0, t1, t0, h1, h0] = block;
        if status & Self::STATUS_FAULT != 0 {
            return Err(ExampleBarometerError::Fault);
        }
        if status & Self::STATUS_READY == 0 {
            return Err(ExampleBarometerError::NotReady);
        }
        let counts = u32::from_be_bytes([0, p2, p1, p0]);
        // 24-bit counts are exact in f32; the division by 16 is exact too.
        let pressure_pa = counts as f32 / 16.0;
        let temperature_c = f32::from(i16::from_be_bytes([t1, t0])) / 100.0;
        let humidity_pct = (status & Self::STATUS_HUMIDITY != 0)
            .then(|| f32::from(u16::from_be_bytes([h1, h0])) / 100.0);
        Ok(Reading {
            pressure_pa,
            sensor_temperature_c: Some(temperature_c),
            air_temperature_c: None,
            humidity_pct,
        })
    }

    /// Take the bus back.
    pub fn release(self) -> I {
        self.i2c
    }
}

impl<I: I2c> BarometricSensor for ExampleBarometer<I> {
    type Error = ExampleBarometerError<I::Error>;

    fn read(&mut self) -> Result<Reading, Self::Error> {
        let mut block = [0u8; 8];
        self.i2c
            .write_read(self.address, &[Self::REGISTER_DATA], &mut block)
            .map_err(ExampleBarometerError::Bus)?;
        Self::decode(block)
    }
}
