//! An async part as one reading (feature `embedded-hal-async`): start a conversion,
//! await the part's longest conversion time on a timer, fetch. With it the async
//! drivers of [`super::asynch`] feed the
//! [`AsyncSensorDriver`](crate::sensor_async::AsyncSensorDriver); the executor runs
//! other tasks while the part converts.

use embedded_hal_async::delay::DelayNs;
use embedded_hal_async::i2c::I2c;

use super::asynch::{Bme280Async, Lps22Async};
use super::{PartDescription, PartError, PartReading};
use crate::sensor::Reading;
use crate::sensor_async::AsyncBarometricSensor;

/// Fetches tried, one millisecond apart, after the longest conversion time before a
/// reading counts as lost ([`PartError::NotReady`]).
const EXTRA_FETCHES: u32 = 100;

/// The start / fetch steps of an async part (implemented by the drivers of
/// [`super::asynch`]).
#[allow(async_fn_in_trait)]
pub trait AsyncPart {
    /// The bus's error.
    type BusError;
    /// Begin one conversion.
    async fn start(&mut self) -> Result<(), PartError<Self::BusError>>;
    /// The conversion's reading once done, `None` before.
    async fn fetch(&mut self) -> Result<Option<PartReading>, PartError<Self::BusError>>;
    /// The part at its setting (`None` before it is configured).
    fn description(&self) -> Option<PartDescription>;
}

impl<I: I2c> AsyncPart for Bme280Async<I> {
    type BusError = I::Error;
    async fn start(&mut self) -> Result<(), PartError<I::Error>> {
        Bme280Async::start(self).await
    }
    async fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I::Error>> {
        Bme280Async::fetch(self).await
    }
    fn description(&self) -> Option<PartDescription> {
        Bme280Async::description(self)
    }
}

impl<I: I2c> AsyncPart for Lps22Async<I> {
    type BusError = I::Error;
    async fn start(&mut self) -> Result<(), PartError<I::Error>> {
        Lps22Async::start(self).await
    }
    async fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I::Error>> {
        Lps22Async::fetch(self).await
    }
    fn description(&self) -> Option<PartDescription> {
        Lps22Async::description(self)
    }
}

/// A probed and configured async part with the timer it waits on, read as one
/// [`Reading`] per call.
#[derive(Debug)]
pub struct Paced<P, D> {
    part: P,
    delay: D,
}

impl<P: AsyncPart, D: DelayNs> Paced<P, D> {
    /// The part (probed and configured) and the timer to await its conversions on.
    pub const fn new(part: P, delay: D) -> Self {
        Self { part, delay }
    }

    /// The part and the timer back.
    pub fn release(self) -> (P, D) {
        (self.part, self.delay)
    }
}

impl<P: AsyncPart, D: DelayNs> AsyncBarometricSensor for Paced<P, D> {
    type Error = PartError<P::BusError>;

    /// Start, await the longest conversion time of the part's setting, fetch (then up
    /// to 100 more, a millisecond apart). Errors: the part's, and
    /// [`PartError::NotReady`] when the conversion never came.
    async fn read(&mut self) -> Result<Reading, Self::Error> {
        let description = self.part.description().ok_or(PartError::NotProbed)?;
        self.part.start().await?;
        self.delay.delay_us(description.conversion_time_us).await;
        for _ in 0..=EXTRA_FETCHES {
            if let Some(r) = self.part.fetch().await? {
                return Ok(r.to_reading());
            }
            self.delay.delay_ms(1).await;
        }
        Err(PartError::NotReady)
    }
}
