//! The async variant of [`crate::sensor`] (feature `embedded-hal-async`), for firmware
//! built on an async executor: the same [`Reading`], the same error handling, an
//! [`embedded_hal_async::delay::DelayNs`] to pace the loop.
//!
//! A failed read is counted and returned as [`DriverError::Sensor`]; the use type is not
//! touched by it.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::uses::{Drone, DroneSettings, Walk, WalkSettings};
//! use isohypse::sensor::Reading;
//! use isohypse::sensor_async::{AsyncBarometricSensor, AsyncSensorDriver};
//!
//! struct Steady; // an invented sensor for the example
//! impl AsyncBarometricSensor for Steady {
//!     type Error = ();
//!     async fn read(&mut self) -> Result<Reading, ()> {
//!         Ok(Reading { pressure_pa: 95_000.0, sensor_temperature_c: Some(12.0), air_temperature_c: None, humidity_pct: None })
//!     }
//! }
//! struct NoWait;
//! impl embedded_hal_async::delay::DelayNs for NoWait {
//!     async fn delay_ns(&mut self, _ns: u32) {}
//! }
//! # fn block_on<F: core::future::Future>(f: F) -> F::Output {
//! #     let mut f = core::pin::pin!(f);
//! #     let mut cx = core::task::Context::from_waker(core::task::Waker::noop());
//! #     loop {
//! #         if let core::task::Poll::Ready(v) = f.as_mut().poll(&mut cx) { return v; }
//! #     }
//! # }
//! let walk = Walk::new(&WalkSettings::DEFAULT)?;
//! let mut driver = AsyncSensorDriver::new(Steady, NoWait, walk);
//! // the executor's clock on a device; here one that steps a second a reading
//! let mut s = 0;
//! let mut clock = || {
//!     s += 1;
//!     Instant::from_secs(s)
//! };
//! let summary = block_on(driver.run_for(10, 1000, &mut clock, |_, _| {}));
//! assert_eq!(summary.accepted, 10);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::time::{Clock, Instant};
use embedded_hal_async::delay::DelayNs;

use crate::sensor::{DriverError, Reading, RunSummary, feed};
use crate::uses::{Output, Use};

/// Anything that yields pressure and temperature (and optionally humidity),
/// asynchronously. The async counterpart of [`crate::sensor::BarometricSensor`].
// `async fn` in a public trait: the futures' auto traits (Send) cannot be named by
// callers; this is the form embedded-hal-async itself uses for single-threaded
// executors.
#[allow(async_fn_in_trait)]
pub trait AsyncBarometricSensor {
    /// The sensor's own error type (a bus error, a device fault...).
    type Error;
    /// Take one reading now.
    async fn read(&mut self) -> Result<Reading, Self::Error>;
}

/// Drives an [`AsyncBarometricSensor`] through a use type ([`crate::uses`]) at a chosen rate.
/// Same behaviour as [`crate::sensor::SensorDriver`], awaiting the read and the delay.
#[derive(Debug)]
pub struct AsyncSensorDriver<S, D, U> {
    sensor: S,
    delay: D,
    device: U,
    last_time: Option<Instant>,
    read_errors: u32,
}

/// Formats the use type and the driver's counters.
#[cfg(feature = "defmt")]
impl<S, D, U: defmt::Format> defmt::Format for AsyncSensorDriver<S, D, U> {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(
            f,
            "AsyncSensorDriver {{ device: {}, last_time: {}, read_errors: {} }}",
            self.device,
            self.last_time,
            self.read_errors
        );
    }
}

impl<S: AsyncBarometricSensor, D: DelayNs, U: Use> AsyncSensorDriver<S, D, U> {
    /// A driver for `sensor`, pacing with `delay`, feeding `device` (any use type).
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
    /// (s). `Err`: the read failed and the use type was not touched.
    pub async fn step(&mut self, time: Instant) -> Result<Output<U::State>, DriverError<S::Error>> {
        self.last_time = Some(time);
        let read = self.sensor.read().await;
        feed(&mut self.device, &mut self.read_errors, time, read)
    }

    /// Take `samples` readings `period_ms` apart (see
    /// [`crate::sensor::SensorDriver::run_for`]: each reading stamped with
    /// `clock.now()`), awaiting the delay after each.
    pub async fn run_for<C, F>(
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
            let result = self.step(time).await;
            summary.count(&result);
            each(time, result);
            self.delay.delay_ms(period_ms).await;
        }
        summary
    }

    /// The use type it feeds.
    pub fn device(&self) -> &U {
        &self.device
    }

    /// The use type, e.g. to feed accelerometer samples between readings.
    pub fn device_mut(&mut self) -> &mut U {
        &mut self.device
    }

    /// Failed reads since the driver was made.
    pub const fn read_errors(&self) -> u32 {
        self.read_errors
    }

    /// Take the parts back.
    pub fn release(self) -> (S, D, U) {
        (self.sensor, self.delay, self.device)
    }
}
