//! ST LPS22HB and LPS22HH: low-power pressure and temperature over I2C, one-shot or at
//! a continuous output data rate. The variant is recognised by its identity at
//! [`Lps22::probe`].
//!
//! Sources: STMicroelectronics, *LPS22HB MEMS nano pressure sensor: 260-1260 hPa
//! absolute digital output barometer*, data sheet DocID027083, revision 6 (June 2017),
//! cited as "HB"; *LPS22HH High-performance MEMS nano pressure sensor*, data sheet
//! DocID030890, revision 2 (February 2019), cited as "HH". Sections name the register
//! descriptions (HB and HH section 9) by register. The first-page figures (range, HH
//! noise) were checked against a copy of the data sheets' text; table numbers and the
//! values marked so are from memory (the register addresses and bits agree with
//! public register headers of these parts).
//!
//! The parts compensate inside: the output is pressure in two's complement at
//! 4096 LSB/hPa and temperature at 100 LSB/degC (HB Table 3, HH Table 2, pressure and
//! temperature sensitivity). Register map used, the same on both variants for what this
//! driver touches: `WHO_AM_I` 0x0F (0xB1 HB, 0xB3 HH), `CTRL_REG1` 0x10, `CTRL_REG2`
//! 0x11, `RES_CONF` 0x1A (HB only), `STATUS` 0x27, `PRESS_OUT_XL..H` 0x28..0x2A,
//! `TEMP_OUT_L..H` 0x2B..0x2C.

use embedded_hal::i2c::I2c;

use super::{PartDescription, PartError, PartReading};

/// I2C address with SA0 to GND.
pub const ADDRESS_SA0_LOW: u8 = 0x5C;
/// I2C address with SA0 to the supply.
pub const ADDRESS_SA0_HIGH: u8 = 0x5D;
/// Identity register (`WHO_AM_I`).
pub const REG_WHO_AM_I: u8 = 0x0F;
/// The LPS22HB's identity.
pub const WHO_AM_I_HB: u8 = 0xB1;
/// The LPS22HH's identity.
pub const WHO_AM_I_HH: u8 = 0xB3;
/// `CTRL_REG1`: `ODR[6:4] EN_LPFP[3] LPFP_CFG[2] BDU[1] SIM[0]`.
pub const REG_CTRL_REG1: u8 = 0x10;
/// `CTRL_REG2`: `IF_ADD_INC[4]`, HH `LOW_NOISE_EN[1]`, `ONE_SHOT[0]`.
pub const REG_CTRL_REG2: u8 = 0x11;
/// HB `RES_CONF`: `LC_EN[0]` (low-current mode); bit 1 must keep its content.
pub const REG_RES_CONF: u8 = 0x1A;
/// `STATUS`: `T_DA[1]`, `P_DA[0]`.
pub const REG_STATUS: u8 = 0x27;
/// `PRESS_OUT_XL`, the first of the five output bytes.
pub const REG_PRESS_OUT_XL: u8 = 0x28;

const CTRL1_EN_LPFP: u8 = 1 << 3;
const CTRL1_LPFP_CFG: u8 = 1 << 2;
const CTRL1_BDU: u8 = 1 << 1;
const CTRL2_IF_ADD_INC: u8 = 1 << 4;
const CTRL2_HH_LOW_NOISE: u8 = 1 << 1;
const CTRL2_ONE_SHOT: u8 = 1 << 0;
const RES_CONF_LC_EN: u8 = 1 << 0;
const STATUS_P_T_DA: u8 = 0b11;

/// Which part answered the identity.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Variant {
    /// LPS22HB (up to 75 Hz).
    Hb,
    /// LPS22HH (up to 200 Hz; low-noise mode up to 75 Hz).
    Hh,
}

impl Variant {
    /// The variant of an identity value, `None` for any other.
    pub const fn from_who_am_i(id: u8) -> Option<Self> {
        match id {
            WHO_AM_I_HB => Some(Self::Hb),
            WHO_AM_I_HH => Some(Self::Hh),
            _ => None,
        }
    }
}

/// Output data rate, `CTRL_REG1` `ODR[2:0]` (the code is the discriminant).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum OutputRate {
    /// Power-down; one conversion for each `start` (`ONE_SHOT`).
    OneShot = 0,
    /// 1 Hz continuous.
    Hz1 = 1,
    /// 10 Hz continuous.
    Hz10 = 2,
    /// 25 Hz continuous.
    Hz25 = 3,
    /// 50 Hz continuous.
    Hz50 = 4,
    /// 75 Hz continuous.
    Hz75 = 5,
    /// 100 Hz continuous, LPS22HH only, low-current mode only.
    Hz100 = 6,
    /// 200 Hz continuous, LPS22HH only, low-current mode only.
    Hz200 = 7,
}

impl OutputRate {
    /// One output period, microseconds rounded up (`None` for one-shot).
    pub const fn period_us(self) -> Option<u32> {
        match self {
            Self::OneShot => None,
            Self::Hz1 => Some(1_000_000),
            Self::Hz10 => Some(100_000),
            Self::Hz25 => Some(40_000),
            Self::Hz50 => Some(20_000),
            Self::Hz75 => Some(13_334),
            Self::Hz100 => Some(10_000),
            Self::Hz200 => Some(5_000),
        }
    }
}

/// The part's own low-pass filter on pressure, `CTRL_REG1` `EN_LPFP` and `LPFP_CFG`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum LowPass {
    /// No filter (bandwidth ODR/2).
    Off,
    /// Bandwidth ODR/9.
    OdrOver9,
    /// Bandwidth ODR/20.
    OdrOver20,
}

/// Low-noise or low-current conversion (HB `RES_CONF` `LC_EN`; HH `CTRL_REG2`
/// `LOW_NOISE_EN`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PowerMode {
    /// Lower noise, more current.
    LowNoise,
    /// Less current, more noise.
    LowCurrent,
}

/// The settings of an LPS22.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Lps22Config {
    /// Output data rate, or one-shot.
    pub rate: OutputRate,
    /// The part's low-pass filter.
    pub low_pass: LowPass,
    /// Low-noise or low-current.
    pub power: PowerMode,
}

impl Lps22Config {
    /// One-shot, no filter, low noise.
    pub const DEFAULT: Self = Self {
        rate: OutputRate::OneShot,
        low_pass: LowPass::Off,
        power: PowerMode::LowNoise,
    };

    /// Whether the variant has this setting: the HB ends at 75 Hz; the HH's low-noise
    /// mode is not allowed at 100 and 200 Hz (HH, `CTRL_REG2` `LOW_NOISE_EN`).
    pub const fn allowed(&self, variant: Variant) -> bool {
        let fast = matches!(self.rate, OutputRate::Hz100 | OutputRate::Hz200);
        match variant {
            Variant::Hb => !fast,
            Variant::Hh => !(fast && matches!(self.power, PowerMode::LowNoise)),
        }
    }

    /// `CTRL_REG1`: the rate, the filter, block data update on.
    const fn ctrl_reg1(&self) -> u8 {
        let filter = match self.low_pass {
            LowPass::Off => 0,
            LowPass::OdrOver9 => CTRL1_EN_LPFP,
            LowPass::OdrOver20 => CTRL1_EN_LPFP | CTRL1_LPFP_CFG,
        };
        ((self.rate as u8) << 4) | filter | CTRL1_BDU
    }

    /// `CTRL_REG2` without `ONE_SHOT`: address increment on, HH low-noise bit.
    const fn ctrl_reg2(&self, variant: Variant) -> u8 {
        match (variant, self.power) {
            (Variant::Hh, PowerMode::LowNoise) => CTRL2_IF_ADD_INC | CTRL2_HH_LOW_NOISE,
            _ => CTRL2_IF_ADD_INC,
        }
    }
}

impl Default for Lps22Config {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// The part at a setting.
///
/// - Range 260 to 1260 hPa (HB and HH, first page).
/// - Resolution: one output step, 1/4096 hPa = 0.0244 Pa (HB Table 3, HH Table 2).
/// - RMS noise, low-noise mode: HH 0.65 Pa (HH first page, "low pressure sensor
///   noise"); HB 0.0075 hPa = 0.75 Pa (HB Table 3, from memory). `None` in low-current
///   mode, whose figure is not taken here.
/// - Conversion time: neither data sheet gives the duration of one conversion. In
///   one-shot mode this is the period at the variant's highest rate in that power mode
///   (75 Hz: 13 334 us; HH low-current 200 Hz: 5 000 us), an upper bound since the part
///   completes one conversion per period there; in continuous mode the output period.
pub const fn describe(variant: Variant, config: &Lps22Config) -> PartDescription {
    let low_noise = matches!(config.power, PowerMode::LowNoise);
    let (name, noise_rms_pa, fastest) = match variant {
        Variant::Hb => ("LPS22HB", if low_noise { Some(0.75) } else { None }, 13_334),
        Variant::Hh if low_noise => ("LPS22HH", Some(0.65), 13_334),
        Variant::Hh => ("LPS22HH", None, 5_000),
    };
    let conversion_time_us = match config.rate.period_us() {
        Some(period) => period,
        None => fastest,
    };
    PartDescription {
        name,
        pressure_min_pa: 26_000.0,
        pressure_max_pa: 126_000.0,
        resolution_pa: 100.0 / 4096.0,
        noise_rms_pa,
        conversion_time_us,
        has_humidity: false,
    }
}

/// The reading of the five output bytes from 0x28 (`PRESS_OUT_XL, _L, _H, TEMP_OUT_L,
/// _H`): pressure = 24-bit two's complement / 4096 hPa, temperature = 16-bit two's
/// complement / 100 degC (HB Table 3, HH Table 2, and the output register sections).
pub fn convert(data: &[u8; 5]) -> PartReading {
    let [xl, l, h, tl, th] = *data;
    let raw_p = i32::from_le_bytes([0, xl, l, h]) >> 8; // sign-extends bit 23
    let raw_t = i16::from_le_bytes([tl, th]);
    PartReading {
        // raw * 100 / 4096 = raw * 25 / 1024; |raw| < 2^23 so the product fits
        pressure_pa: (raw_p * 25) as f32 / 1024.0,
        die_temperature_c: f32::from(raw_t) / 100.0,
        humidity_pct: None,
    }
}

/// The bus-independent state of a driver, shared by the blocking [`Lps22`] and the
/// async driver.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct State {
    pub(crate) variant: Option<Variant>,
    pub(crate) config: Option<Lps22Config>,
    pub(crate) pending: bool,
}

/// The register steps of a configuration, in order; `ResConf` is a read-modify-write of
/// `LC_EN` that keeps the other bits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Step {
    Write([u8; 2]),
    ResConf { low_current: bool },
}

impl State {
    pub(crate) const NEW: Self = Self {
        variant: None,
        config: None,
        pending: false,
    };

    /// Keeps the variant of the identity read.
    pub(crate) fn probed<E>(&mut self, id: u8) -> Result<Variant, PartError<E>> {
        let variant = Variant::from_who_am_i(id).ok_or(PartError::WrongChip { found: id })?;
        *self = Self {
            variant: Some(variant),
            config: None,
            pending: false,
        };
        Ok(variant)
    }

    /// The steps of a setting: power down, set the power mode, then the rate.
    pub(crate) fn configure_steps<E>(
        &self,
        config: &Lps22Config,
    ) -> Result<[Step; 3], PartError<E>> {
        let variant = self.variant.ok_or(PartError::NotProbed)?;
        if !config.allowed(variant) {
            return Err(PartError::InvalidConfig);
        }
        let power = match variant {
            Variant::Hb => Step::ResConf {
                low_current: matches!(config.power, PowerMode::LowCurrent),
            },
            Variant::Hh => Step::Write([REG_CTRL_REG2, config.ctrl_reg2(variant)]),
        };
        Ok([
            Step::Write([REG_CTRL_REG1, 0]),
            power,
            Step::Write([REG_CTRL_REG1, config.ctrl_reg1()]),
        ])
    }

    /// The `CTRL_REG2` value for the HB (written after `RES_CONF`): address increment.
    pub(crate) const HB_CTRL_REG2: [u8; 2] = [REG_CTRL_REG2, CTRL2_IF_ADD_INC];

    /// The write that starts a conversion (`ONE_SHOT`), `None` in continuous mode.
    pub(crate) fn start_write<E>(&self) -> Result<Option<[u8; 2]>, PartError<E>> {
        let (Some(variant), Some(config)) = (self.variant, self.config) else {
            return Err(PartError::NotProbed);
        };
        Ok(match config.rate {
            OutputRate::OneShot => {
                Some([REG_CTRL_REG2, config.ctrl_reg2(variant) | CTRL2_ONE_SHOT])
            }
            _ => None,
        })
    }

    /// Whether `fetch` may read: a conversion was started.
    pub(crate) fn check_pending<E>(&self) -> Result<(), PartError<E>> {
        if self.pending {
            Ok(())
        } else {
            Err(PartError::NotStarted)
        }
    }
}

/// `RES_CONF` with `LC_EN` set or cleared, the other bits as read.
pub(crate) const fn res_conf(read: u8, low_current: bool) -> u8 {
    if low_current {
        read | RES_CONF_LC_EN
    } else {
        read & !RES_CONF_LC_EN
    }
}

/// Whether new pressure and temperature are both available (`STATUS` `P_DA`, `T_DA`).
pub(crate) const fn data_ready(status: u8) -> bool {
    status & STATUS_P_T_DA == STATUS_P_T_DA
}

/// An LPS22HB or LPS22HH on a blocking I2C bus.
///
/// `probe`, `configure`, then `start` and `fetch` for each reading: `fetch` returns
/// `Ok(None)` until new data are there. In continuous mode `start` only arms `fetch`,
/// which then returns the newest output.
#[derive(Debug)]
pub struct Lps22<I2C> {
    i2c: I2C,
    address: u8,
    state: State,
}

impl<I2C: I2c> Lps22<I2C> {
    /// A driver for the part at `address` ([`ADDRESS_SA0_LOW`] or [`ADDRESS_SA0_HIGH`]).
    /// Nothing is sent on the bus.
    pub const fn new(i2c: I2C, address: u8) -> Self {
        Self {
            i2c,
            address,
            state: State::NEW,
        }
    }

    /// Reads the identity and returns the variant.
    pub fn probe(&mut self) -> Result<Variant, PartError<I2C::Error>> {
        let mut id = [0];
        self.read(REG_WHO_AM_I, &mut id)?;
        let [id] = id;
        self.state.probed(id)
    }

    /// Writes a setting (power-down first, so mode bits change while idle).
    pub fn configure(&mut self, config: Lps22Config) -> Result<(), PartError<I2C::Error>> {
        for step in self.state.configure_steps(&config)? {
            match step {
                Step::Write(bytes) => self.write(bytes)?,
                Step::ResConf { low_current } => {
                    let mut read = [0];
                    self.read(REG_RES_CONF, &mut read)?;
                    let [read] = read;
                    self.write([REG_RES_CONF, res_conf(read, low_current)])?;
                    self.write(State::HB_CTRL_REG2)?;
                }
            }
        }
        self.state.config = Some(config);
        self.state.pending = false;
        Ok(())
    }

    /// Starts one conversion (one-shot), or arms `fetch` (continuous).
    pub fn start(&mut self) -> Result<(), PartError<I2C::Error>> {
        if let Some(bytes) = self.state.start_write()? {
            self.write(bytes)?;
        }
        self.state.pending = true;
        Ok(())
    }

    /// The reading, or `Ok(None)` while no new data are there. After a bus error the
    /// conversion is still pending and `fetch` can be called again.
    pub fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I2C::Error>> {
        self.state.check_pending()?;
        let mut status = [0];
        self.read(REG_STATUS, &mut status)?;
        let [status] = status;
        if !data_ready(status) {
            return Ok(None);
        }
        let mut data = [0; 5];
        self.read(REG_PRESS_OUT_XL, &mut data)?;
        self.state.pending = false;
        Ok(Some(convert(&data)))
    }

    /// The variant found by [`Self::probe`].
    pub const fn variant(&self) -> Option<Variant> {
        self.state.variant
    }

    /// The part at the setting written by [`Self::configure`].
    pub const fn description(&self) -> Option<PartDescription> {
        match (self.state.variant, self.state.config) {
            (Some(variant), Some(config)) => Some(describe(variant, &config)),
            _ => None,
        }
    }

    /// Gives the bus back.
    pub fn release(self) -> I2C {
        self.i2c
    }

    fn read(&mut self, register: u8, buffer: &mut [u8]) -> Result<(), PartError<I2C::Error>> {
        self.i2c
            .write_read(self.address, &[register], buffer)
            .map_err(PartError::Bus)
    }

    fn write(&mut self, bytes: [u8; 2]) -> Result<(), PartError<I2C::Error>> {
        self.i2c.write(self.address, &bytes).map_err(PartError::Bus)
    }
}

#[cfg(test)]
mod tests;
