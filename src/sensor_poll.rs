//! A sensor loop that never waits (feature `embedded-hal`): start a conversion, fetch it
//! when the part has it, feed the use type, and start the next one when its time comes.
//!
//! - [`ConvertingSensor`]: a part that converts on its own after a start (the drivers
//!   of [`crate::parts`] implement it).
//! - [`PollingDriver`]: called from the firmware's main loop (or a timer tick) with the
//!   time now; each call does at most one bus step and returns at once, so the loop
//!   can do other work while the part converts. A reading is stamped with the time of
//!   the call that fetched it.
//!
//! ```
//! use isohypse::sensor::Reading;
//! use isohypse::sensor_poll::{ConvertingSensor, PollingDriver};
//! use isohypse::time::Instant;
//! use isohypse::uses::{Walk, WalkSettings};
//!
//! /// A stand-in part: a conversion is ready on the second fetch after its start.
//! struct Part { fetches: u8 }
//! impl ConvertingSensor for Part {
//!     type Error = core::convert::Infallible;
//!     fn start(&mut self) -> Result<(), Self::Error> {
//!         self.fetches = 0;
//!         Ok(())
//!     }
//!     fn fetch(&mut self) -> Result<Option<Reading>, Self::Error> {
//!         self.fetches += 1;
//!         Ok((self.fetches >= 2).then_some(Reading { pressure_pa: 95_000.0, ..Reading::default() }))
//!     }
//! }
//!
//! let walk = Walk::new(&WalkSettings::DEFAULT)?;
//! let mut driver = PollingDriver::new(Part { fetches: 0 }, walk, 1_000_000); // 1 s period
//! let mut outputs = 0;
//! for ms in (0..10_000u64).step_by(100) {
//!     // the main loop: poll, then other work
//!     if let Ok(Some(_out)) = driver.poll(Instant::from_millis(ms)) {
//!         outputs += 1;
//!     }
//! }
//! assert_eq!(outputs, 10);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::sensor::{DriverError, Reading};
use crate::time::Instant;
use crate::uses::{Output, Use};

/// A part that converts on its own once started: `start` begins one conversion and
/// returns at once; `fetch` returns `Ok(None)` until the conversion is done, then the
/// reading. Neither waits.
pub trait ConvertingSensor {
    /// What a failed bus step reports.
    type Error;
    /// Begin one conversion.
    fn start(&mut self) -> Result<(), Self::Error>;
    /// The conversion's reading once it is done, `None` before.
    fn fetch(&mut self) -> Result<Option<Reading>, Self::Error>;
}

impl<T: ConvertingSensor + ?Sized> ConvertingSensor for &mut T {
    type Error = T::Error;
    fn start(&mut self) -> Result<(), Self::Error> {
        T::start(self)
    }
    fn fetch(&mut self) -> Result<Option<Reading>, Self::Error> {
        T::fetch(self)
    }
}

/// Drives a [`ConvertingSensor`] through a use type, one conversion per period, without
/// waiting (see the [module docs](self)).
#[derive(Debug)]
pub struct PollingDriver<S, U> {
    sensor: S,
    device: U,
    period_us: u64,
    /// When the next conversion is due; `None`: at the next call.
    next_start: Option<Instant>,
    /// A conversion was started and not yet fetched.
    converting: bool,
    bus_errors: u32,
}

impl<S: ConvertingSensor, U: Use> PollingDriver<S, U> {
    /// A driver that starts a conversion every `period_us` microseconds (at least the
    /// part's conversion time; a fetch that finds nothing is simply tried again at the
    /// next call).
    pub const fn new(sensor: S, device: U, period_us: u64) -> Self {
        Self {
            sensor,
            device,
            period_us,
            next_start: None,
            converting: false,
            bus_errors: 0,
        }
    }

    /// One step of the loop at `now`: fetch a conversion under way (feeding its reading,
    /// stamped `now`, to the use type), or start the next one when it is due. Returns
    /// the use type's output when a reading was fed, `Ok(None)` otherwise.
    ///
    /// Errors: [`DriverError::Sensor`] for a failed bus step; nothing is fed, the
    /// conversion is abandoned and started again at the next call.
    pub fn poll(
        &mut self,
        now: Instant,
    ) -> Result<Option<Output<U::State>>, DriverError<S::Error>> {
        if self.converting {
            return match self.sensor.fetch() {
                Ok(Some(reading)) => {
                    self.converting = false;
                    Ok(Some(self.device.process(&reading.to_sample(now))))
                }
                Ok(None) => Ok(None),
                Err(e) => Err(self.failed(e)),
            };
        }
        let due = self.next_start.is_none_or(|t| now >= t);
        if !due {
            return Ok(None);
        }
        self.sensor.start().map_err(|e| self.failed(e))?;
        self.converting = true;
        // the next start one period after this one (or after now, when the loop fell
        // behind by more than a period: no burst of catch-up conversions)
        let late_us = |t: &Instant| now.as_micros().saturating_sub(t.as_micros());
        let base = self.next_start.filter(|t| late_us(t) < self.period_us);
        let from = base.unwrap_or(now).as_micros();
        self.next_start = Some(Instant::from_micros(from.saturating_add(self.period_us)));
        Ok(None)
    }

    fn failed(&mut self, e: S::Error) -> DriverError<S::Error> {
        self.converting = false;
        self.next_start = None;
        self.bus_errors = self.bus_errors.saturating_add(1);
        DriverError::Sensor(e)
    }

    /// The use type.
    pub fn device(&self) -> &U {
        &self.device
    }

    /// The use type, to change its settings or take a snapshot.
    pub fn device_mut(&mut self) -> &mut U {
        &mut self.device
    }

    /// Failed bus steps so far.
    pub const fn bus_errors(&self) -> u32 {
        self.bus_errors
    }

    /// The sensor and the use type back.
    pub fn release(self) -> (S, U) {
        (self.sensor, self.device)
    }
}

impl<I: embedded_hal::i2c::I2c> ConvertingSensor for crate::parts::bme280::Bme280<I> {
    type Error = crate::parts::PartError<I::Error>;
    fn start(&mut self) -> Result<(), Self::Error> {
        crate::parts::bme280::Bme280::start(self)
    }
    fn fetch(&mut self) -> Result<Option<Reading>, Self::Error> {
        crate::parts::bme280::Bme280::fetch(self).map(|r| r.map(|r| r.to_reading()))
    }
}

impl<I: embedded_hal::i2c::I2c> ConvertingSensor for crate::parts::lps22::Lps22<I> {
    type Error = crate::parts::PartError<I::Error>;
    fn start(&mut self) -> Result<(), Self::Error> {
        crate::parts::lps22::Lps22::start(self)
    }
    fn fetch(&mut self) -> Result<Option<Reading>, Self::Error> {
        crate::parts::lps22::Lps22::fetch(self).map(|r| r.map(|r| r.to_reading()))
    }
}
