//! The drivers of [`crate::parts`] over [`embedded_hal_async::i2c::I2c`] (feature
//! `embedded-hal-async`): the same register steps, state and compensation as the
//! blocking [`Bme280`](super::bme280::Bme280) and [`Lps22`](super::lps22::Lps22), with
//! each bus transfer awaited. Nothing waits inside: `fetch` returns `Ok(None)` until the
//! conversion is done, and the caller awaits its own timer in between.

use embedded_hal_async::i2c::I2c;

use super::bme280::{self, Bme280Config, Calibration};
use super::lps22::{self, Lps22Config, Step, Variant};
use super::{PartDescription, PartError, PartReading};

/// A BME280 on an async I2C bus; see [`bme280::Bme280`] for the steps.
#[derive(Debug)]
pub struct Bme280Async<I2C> {
    i2c: I2C,
    address: u8,
    state: bme280::State,
}

impl<I2C: I2c> Bme280Async<I2C> {
    /// A driver for the part at `address`. Nothing is sent on the bus.
    pub const fn new(i2c: I2C, address: u8) -> Self {
        Self {
            i2c,
            address,
            state: bme280::State::NEW,
        }
    }

    /// Reads the identity (must be 0x60) and the calibration words.
    pub async fn probe(&mut self) -> Result<(), PartError<I2C::Error>> {
        let mut id = [0];
        let mut tp = [0; 26];
        let mut h = [0; 7];
        self.read(bme280::REG_ID, &mut id).await?;
        let [id] = id;
        if id != bme280::CHIP_ID {
            return Err(PartError::WrongChip { found: id });
        }
        self.read(bme280::REG_CALIB_TP, &mut tp).await?;
        self.read(bme280::REG_CALIB_H, &mut h).await?;
        self.state.probed(id, &tp, &h)
    }

    /// Writes a setting; the part stays asleep until [`Self::start`].
    pub async fn configure(&mut self, config: Bme280Config) -> Result<(), PartError<I2C::Error>> {
        for write in self.state.configure_writes(&config)? {
            self.i2c
                .write(self.address, &write)
                .await
                .map_err(PartError::Bus)?;
        }
        self.state.config = Some(config);
        self.state.pending = false;
        Ok(())
    }

    /// Starts one forced conversion.
    pub async fn start(&mut self) -> Result<(), PartError<I2C::Error>> {
        let write = self.state.start_write()?;
        self.i2c
            .write(self.address, &write)
            .await
            .map_err(PartError::Bus)?;
        self.state.pending = true;
        Ok(())
    }

    /// The reading, or `Ok(None)` while the conversion is running.
    pub async fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I2C::Error>> {
        self.state.check_pending()?;
        let mut status = [0; 2];
        self.read(bme280::REG_STATUS, &mut status).await?;
        if !bme280::conversion_done(status) {
            return Ok(None);
        }
        let mut data = [0; 8];
        self.read(bme280::REG_DATA, &mut data).await?;
        self.state.finish(&data).map(Some)
    }

    /// The calibration words read by [`Self::probe`].
    pub const fn calibration(&self) -> Option<Calibration> {
        self.state.calibration
    }

    /// The part at the setting written by [`Self::configure`].
    pub const fn description(&self) -> Option<PartDescription> {
        match self.state.config {
            Some(config) => Some(bme280::describe(&config)),
            None => None,
        }
    }

    /// Gives the bus back.
    pub fn release(self) -> I2C {
        self.i2c
    }

    async fn read(&mut self, register: u8, buffer: &mut [u8]) -> Result<(), PartError<I2C::Error>> {
        self.i2c
            .write_read(self.address, &[register], buffer)
            .await
            .map_err(PartError::Bus)
    }
}

/// An LPS22HB or LPS22HH on an async I2C bus; see [`lps22::Lps22`] for the steps.
#[derive(Debug)]
pub struct Lps22Async<I2C> {
    i2c: I2C,
    address: u8,
    state: lps22::State,
}

impl<I2C: I2c> Lps22Async<I2C> {
    /// A driver for the part at `address`. Nothing is sent on the bus.
    pub const fn new(i2c: I2C, address: u8) -> Self {
        Self {
            i2c,
            address,
            state: lps22::State::NEW,
        }
    }

    /// Reads the identity and returns the variant.
    pub async fn probe(&mut self) -> Result<Variant, PartError<I2C::Error>> {
        let mut id = [0];
        self.read(lps22::REG_WHO_AM_I, &mut id).await?;
        let [id] = id;
        self.state.probed(id)
    }

    /// Writes a setting (power-down first).
    pub async fn configure(&mut self, config: Lps22Config) -> Result<(), PartError<I2C::Error>> {
        for step in self.state.configure_steps(&config)? {
            match step {
                Step::Write(bytes) => self.write(bytes).await?,
                Step::ResConf { low_current } => {
                    let mut read = [0];
                    self.read(lps22::REG_RES_CONF, &mut read).await?;
                    let [read] = read;
                    self.write([lps22::REG_RES_CONF, lps22::res_conf(read, low_current)])
                        .await?;
                    self.write(lps22::State::HB_CTRL_REG2).await?;
                }
            }
        }
        self.state.config = Some(config);
        self.state.pending = false;
        Ok(())
    }

    /// Starts one conversion (one-shot), or arms `fetch` (continuous).
    pub async fn start(&mut self) -> Result<(), PartError<I2C::Error>> {
        if let Some(bytes) = self.state.start_write()? {
            self.write(bytes).await?;
        }
        self.state.pending = true;
        Ok(())
    }

    /// The reading, or `Ok(None)` while no new data are there.
    pub async fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I2C::Error>> {
        self.state.check_pending()?;
        let mut status = [0];
        self.read(lps22::REG_STATUS, &mut status).await?;
        let [status] = status;
        if !lps22::data_ready(status) {
            return Ok(None);
        }
        let mut data = [0; 5];
        self.read(lps22::REG_PRESS_OUT_XL, &mut data).await?;
        self.state.pending = false;
        Ok(Some(lps22::convert(&data)))
    }

    /// The part at the setting written by [`Self::configure`].
    pub const fn description(&self) -> Option<PartDescription> {
        match (self.state.variant, self.state.config) {
            (Some(variant), Some(config)) => Some(lps22::describe(variant, &config)),
            _ => None,
        }
    }

    /// Gives the bus back.
    pub fn release(self) -> I2C {
        self.i2c
    }

    async fn read(&mut self, register: u8, buffer: &mut [u8]) -> Result<(), PartError<I2C::Error>> {
        self.i2c
            .write_read(self.address, &[register], buffer)
            .await
            .map_err(PartError::Bus)
    }

    async fn write(&mut self, bytes: [u8; 2]) -> Result<(), PartError<I2C::Error>> {
        self.i2c
            .write(self.address, &bytes)
            .await
            .map_err(PartError::Bus)
    }
}
