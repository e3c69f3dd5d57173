//! Bosch BME280: pressure, temperature and humidity over I2C, in forced mode (one
//! conversion per [`Bme280::start`], the part sleeps between them).
//!
//! Source: Bosch Sensortec, *BME280 Combined humidity and pressure sensor*, data sheet
//! BST-BME280-DS002, revision 1.6 (September 2018), cited below as "DS" with its
//! section. The compensation is the data sheet's integer code (section 4.2.3: 32-bit
//! temperature and humidity, 64-bit pressure), with every step checked so that no
//! register content can make it panic; where the data sheet's arithmetic would leave
//! its integer range the sample is refused ([`PartError::Compensation`]).
//!
//! Sections 3.4, 4.2.2, 4.2.3, 5.4.3, 5.4.5, 8 and 9.1 and Table 16 were checked
//! against a copy of the data sheet's text while writing this driver; the other section
//! and table numbers, and the values marked so, are from memory.
//!
//! Register map used (DS section 5.3, memory map): `id` 0xD0 (value 0x60), calibration
//! `calib00..25` 0xA1..0x88 and `calib26..41` 0xE1..0xF0, `ctrl_hum` 0xF2, `status`
//! 0xF3, `ctrl_meas` 0xF4, `config` 0xF5, data 0xF7..0xFE.

use embedded_hal::i2c::I2c;

use super::{PartDescription, PartError, PartReading, i16_le, u16_le};

/// I2C address with SDO to GND (DS section 6, I2C interface).
pub const ADDRESS_SDO_LOW: u8 = 0x76;
/// I2C address with SDO to VDDIO (DS section 6, I2C interface).
pub const ADDRESS_SDO_HIGH: u8 = 0x77;
/// Chip identity register and its value (DS section 5.4.1).
pub const REG_ID: u8 = 0xD0;
/// The BME280's identity.
pub const CHIP_ID: u8 = 0x60;
/// First calibration block, `calib00` (DS Table 16): 26 bytes 0x88..0xA1.
pub const REG_CALIB_TP: u8 = 0x88;
/// Second calibration block, `calib26` (DS Table 16): 7 bytes 0xE1..0xE7.
pub const REG_CALIB_H: u8 = 0xE1;
/// Humidity oversampling (DS section 5.4.3); takes effect at the next `ctrl_meas` write.
pub const REG_CTRL_HUM: u8 = 0xF2;
/// Status: bit 3 `measuring`, bit 0 `im_update` (DS section 5.4.4).
pub const REG_STATUS: u8 = 0xF3;
/// Temperature and pressure oversampling, mode (DS section 5.4.5).
pub const REG_CTRL_MEAS: u8 = 0xF4;
/// Standby time, IIR filter, 3-wire SPI (DS section 5.4.6).
pub const REG_CONFIG: u8 = 0xF5;
/// First data register, `press_msb` (DS sections 5.4.7 to 5.4.9): 8 bytes to 0xFE.
pub const REG_DATA: u8 = 0xF7;

/// `ctrl_meas` mode bits: sleep (DS section 5.4.5).
const MODE_SLEEP: u8 = 0b00;
/// `ctrl_meas` mode bits: forced, one conversion then back to sleep.
const MODE_FORCED: u8 = 0b01;
/// `status` bit: a conversion is running.
const STATUS_MEASURING: u8 = 1 << 3;

/// Oversampling of one channel (DS sections 5.4.3 and 5.4.5; the register code is the
/// discriminant).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Oversampling {
    /// One sample.
    X1 = 1,
    /// Two samples.
    X2 = 2,
    /// Four samples.
    X4 = 3,
    /// Eight samples.
    X8 = 4,
    /// Sixteen samples.
    X16 = 5,
}

impl Oversampling {
    /// The register code.
    pub const fn code(self) -> u8 {
        self as u8
    }
    /// The number of samples averaged.
    pub const fn factor(self) -> u32 {
        match self {
            Self::X1 => 1,
            Self::X2 => 2,
            Self::X4 => 4,
            Self::X8 => 8,
            Self::X16 => 16,
        }
    }
}

/// Coefficient of the part's IIR filter on pressure and temperature (DS section 3.4.4,
/// Table 6; the register code is the discriminant).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum IirFilter {
    /// No filter.
    Off = 0,
    /// Coefficient 2.
    C2 = 1,
    /// Coefficient 4.
    C4 = 2,
    /// Coefficient 8.
    C8 = 3,
    /// Coefficient 16.
    C16 = 4,
}

/// The settings of a BME280. Temperature and pressure are always measured (the
/// pressure compensation needs the temperature); humidity can be skipped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Bme280Config {
    /// Temperature oversampling.
    pub temperature: Oversampling,
    /// Pressure oversampling.
    pub pressure: Oversampling,
    /// Humidity oversampling, `None` to skip humidity.
    pub humidity: Option<Oversampling>,
    /// IIR filter.
    pub filter: IirFilter,
}

impl Bme280Config {
    /// Temperature x1, pressure x4, humidity x1, no filter: the oversampling of the
    /// measurement-time example of DS section 9.1, with humidity added.
    pub const DEFAULT: Self = Self {
        temperature: Oversampling::X1,
        pressure: Oversampling::X4,
        humidity: Some(Oversampling::X1),
        filter: IirFilter::Off,
    };
    /// "Weather monitoring" (DS section 3.5.1): x1 everywhere, no filter; lowest power.
    /// (The BMP280 data sheet, BST-BMP280-DS001 revision 1.23, Table 7, has the same
    /// pressure, temperature and filter settings for this use.)
    pub const WEATHER: Self = Self {
        temperature: Oversampling::X1,
        pressure: Oversampling::X1,
        humidity: Some(Oversampling::X1),
        filter: IirFilter::Off,
    };
    /// "Indoor navigation" (DS section 3.5.3): pressure x16, temperature x2, humidity x1,
    /// filter 16; lowest noise. (Section number and humidity setting from memory; the
    /// BMP280 data sheet's Table 7 has the same pressure, temperature and filter
    /// settings for indoor navigation.)
    pub const INDOOR_NAVIGATION: Self = Self {
        temperature: Oversampling::X2,
        pressure: Oversampling::X16,
        humidity: Some(Oversampling::X1),
        filter: IirFilter::C16,
    };

    /// `ctrl_meas` for this setting and a mode: `osrs_t[7:5] osrs_p[4:2] mode[1:0]`.
    const fn ctrl_meas(&self, mode: u8) -> u8 {
        (self.temperature.code() << 5) | (self.pressure.code() << 2) | mode
    }
    /// `ctrl_hum`: `osrs_h[2:0]`, 0 to skip.
    const fn ctrl_hum(&self) -> u8 {
        match self.humidity {
            Some(h) => h.code(),
            None => 0,
        }
    }
    /// `config`: `t_sb[7:5]` (unused in forced mode) `filter[4:2]`, 3-wire SPI off.
    const fn config(&self) -> u8 {
        (self.filter as u8) << 2
    }
}

impl Default for Bme280Config {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// Longest measurement time of one forced conversion, microseconds (DS section 9.1):
///
/// t_max = 1.25 ms + 2.3 ms * T_os + (2.3 ms * P_os + 0.575 ms) + (2.3 ms * H_os + 0.575 ms),
///
/// each bracket only when that channel is measured (T_os etc. the oversampling factors).
pub const fn max_measurement_time_us(config: &Bme280Config) -> u32 {
    let humidity = match config.humidity {
        Some(h) => 2_300 * h.factor() + 575,
        None => 0,
    };
    1_250 + 2_300 * config.temperature.factor() + 2_300 * config.pressure.factor() + 575 + humidity
}

/// Typical measurement time of one forced conversion, microseconds (DS section 9.1):
///
/// t_typ = 1 ms + 2 ms * T_os + (2 ms * P_os + 0.5 ms) + (2 ms * H_os + 0.5 ms).
pub const fn typical_measurement_time_us(config: &Bme280Config) -> u32 {
    let humidity = match config.humidity {
        Some(h) => 2_000 * h.factor() + 500,
        None => 0,
    };
    1_000 + 2_000 * config.temperature.factor() + 2_000 * config.pressure.factor() + 500 + humidity
}

/// The part at a setting.
///
/// - Range 300 to 1100 hPa: the operating range of DS Table 1.
/// - Resolution: 20 bit (0.16 Pa) with the IIR filter on (DS section 3.4.2), otherwise
///   16 + (osrs_p - 1) bit: 2.62, 1.31, 0.66, 0.33, 0.16 Pa for x1 to x16 (the Pa values
///   are those of the same pressure element in the BMP280 data sheet,
///   BST-BMP280-DS001, revision 1.23, Table 4).
/// - RMS noise: the data sheet gives it only at the highest oversampling (x16): 1.3 Pa at
///   full bandwidth (filter off) and 0.2 Pa at reduced bandwidth (taken here as filter
///   16), DS Table 1 (both values from memory); `None` elsewhere.
/// - Conversion time: [`max_measurement_time_us`].
pub const fn describe(config: &Bme280Config) -> PartDescription {
    let resolution_pa = match (config.filter, config.pressure) {
        (IirFilter::Off, Oversampling::X1) => 2.62,
        (IirFilter::Off, Oversampling::X2) => 1.31,
        (IirFilter::Off, Oversampling::X4) => 0.66,
        (IirFilter::Off, Oversampling::X8) => 0.33,
        _ => 0.16,
    };
    let noise_rms_pa = match (config.pressure, config.filter) {
        (Oversampling::X16, IirFilter::Off) => Some(1.3),
        (Oversampling::X16, IirFilter::C16) => Some(0.2),
        _ => None,
    };
    PartDescription {
        name: "BME280",
        pressure_min_pa: 30_000.0,
        pressure_max_pa: 110_000.0,
        resolution_pa,
        noise_rms_pa,
        conversion_time_us: max_measurement_time_us(config),
        has_humidity: true,
    }
}

/// The part at [`Bme280Config::DEFAULT`].
pub const DESCRIPTION: PartDescription = describe(&Bme280Config::DEFAULT);

/// The trimming words of one part (DS section 4.2.2, Table 16), `dig_T1` as `t1` etc.
#[allow(missing_docs)]
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Calibration {
    pub t1: u16,
    pub t2: i16,
    pub t3: i16,
    pub p1: u16,
    pub p2: i16,
    pub p3: i16,
    pub p4: i16,
    pub p5: i16,
    pub p6: i16,
    pub p7: i16,
    pub p8: i16,
    pub p9: i16,
    pub h1: u8,
    pub h2: i16,
    pub h3: u8,
    pub h4: i16,
    pub h5: i16,
    pub h6: i8,
}

impl Calibration {
    /// The words from the two register blocks as read: `tp` from 0x88 (26 bytes, to
    /// 0xA1), `h` from 0xE1 (7 bytes, to 0xE7), DS Table 16. Words are least significant
    /// byte first; `dig_H4` is 0xE4 (bits 11:4) with 0xE5 bits 3:0, `dig_H5` 0xE6
    /// (bits 11:4) with 0xE5 bits 7:4, both 12-bit signed.
    pub const fn from_registers(tp: &[u8; 26], h: &[u8; 7]) -> Self {
        let [
            t1l,
            t1h,
            t2l,
            t2h,
            t3l,
            t3h,
            p1l,
            p1h,
            p2l,
            p2h,
            p3l,
            p3h,
            p4l,
            p4h,
            p5l,
            p5h,
            p6l,
            p6h,
            p7l,
            p7h,
            p8l,
            p8h,
            p9l,
            p9h,
            _reserved,
            h1,
        ] = *tp;
        let [h2l, h2h, h3, e4, e5, e6, h6] = *h;
        Self {
            t1: u16_le(t1l, t1h),
            t2: i16_le(t2l, t2h),
            t3: i16_le(t3l, t3h),
            p1: u16_le(p1l, p1h),
            p2: i16_le(p2l, p2h),
            p3: i16_le(p3l, p3h),
            p4: i16_le(p4l, p4h),
            p5: i16_le(p5l, p5h),
            p6: i16_le(p6l, p6h),
            p7: i16_le(p7l, p7h),
            p8: i16_le(p8l, p8h),
            p9: i16_le(p9l, p9h),
            h1,
            h2: i16_le(h2l, h2h),
            h3,
            // the high byte is signed: shift it up as i16 to keep the sign
            h4: ((e4 as i8 as i16) << 4) | (e5 & 0x0F) as i16,
            h5: ((e6 as i8 as i16) << 4) | (e5 >> 4) as i16,
            h6: h6 as i8,
        }
    }

    /// Whether the words can be used: `dig_T1` and `dig_P1` are divisors or scale
    /// factors that no trimmed part has at zero (an all-zero block is a blank or
    /// misread memory).
    pub const fn is_plausible(&self) -> bool {
        self.t1 != 0 && self.p1 != 0
    }
}

/// The raw 20-bit pressure and temperature and 16-bit humidity from the 8 data bytes
/// at 0xF7 (DS sections 5.4.7 to 5.4.9: `msb[19:12] lsb[11:4] xlsb[7:4]`).
pub const fn raw_values(data: &[u8; 8]) -> (i32, i32, i32) {
    let [pm, pl, px, tm, tl, tx, hm, hl] = *data;
    let p = ((pm as i32) << 12) | ((pl as i32) << 4) | ((px as i32) >> 4);
    let t = ((tm as i32) << 12) | ((tl as i32) << 4) | ((tx as i32) >> 4);
    let h = ((hm as i32) << 8) | hl as i32;
    (p, t, h)
}

/// Temperature compensation, DS section 4.2.3 (`BME280_compensate_T_int32`):
///
/// var1 = ((adc_T/8 - 2 dig_T1) dig_T2) / 2^11;
/// var2 = (((adc_T/16 - dig_T1)^2 / 2^12) dig_T3) / 2^14;
/// t_fine = var1 + var2; T = (5 t_fine + 128) / 2^8
///
/// (divisions by powers of two are arithmetic right shifts, as in the data sheet).
/// Returns `(t_fine, T)` with T in 0.01 degC, or `None` where a 32-bit step overflows.
pub fn compensate_temperature(cal: &Calibration, adc_t: i32) -> Option<(i32, i32)> {
    let t1 = i32::from(cal.t1);
    let var1 = (adc_t >> 3)
        .checked_sub(t1 * 2)?
        .checked_mul(i32::from(cal.t2))?
        >> 11;
    let d = (adc_t >> 4).checked_sub(t1)?;
    let var2 = (d.checked_mul(d)? >> 12).checked_mul(i32::from(cal.t3))? >> 14;
    let t_fine = var1.checked_add(var2)?;
    let t = t_fine.checked_mul(5)?.checked_add(128)? >> 8;
    Some((t_fine, t))
}

/// Pressure compensation, DS section 4.2.3 (`BME280_compensate_P_int64`), in 64-bit
/// integers; the result is pressure in Pa as Q24.8 (value / 256 = Pa):
///
/// v1 = t_fine - 128000; v2 = v1^2 P6 + v1 P5 2^17 + P4 2^35;
/// v1 = (v1^2 P3) / 2^8 + v1 P2 2^12; v1 = ((2^47 + v1) P1) / 2^33;
/// p = ((2^20 - adc_P) 2^31 - v2) 3125 / v1;
/// p = (p + (P9 (p/2^13)^2) / 2^25 + (P8 p) / 2^19) / 2^8 + P7 2^4.
///
/// `None` where v1 is zero (the data sheet returns 0 there) or a step overflows.
pub fn compensate_pressure(cal: &Calibration, adc_p: i32, t_fine: i32) -> Option<u32> {
    let (p1, p2, p3) = (i64::from(cal.p1), i64::from(cal.p2), i64::from(cal.p3));
    let (p4, p5, p6) = (i64::from(cal.p4), i64::from(cal.p5), i64::from(cal.p6));
    let (p7, p8, p9) = (i64::from(cal.p7), i64::from(cal.p8), i64::from(cal.p9));
    let v1 = i64::from(t_fine).checked_sub(128_000)?;
    let v2 = v1.checked_mul(v1)?.checked_mul(p6)?;
    let v2 = v2.checked_add(v1.checked_mul(p5)?.checked_mul(1 << 17)?)?;
    let v2 = v2.checked_add(p4.checked_mul(1 << 35)?)?;
    let v1 = (v1.checked_mul(v1)?.checked_mul(p3)? >> 8)
        .checked_add(v1.checked_mul(p2)?.checked_mul(1 << 12)?)?;
    let v1 = (1_i64 << 47).checked_add(v1)?.checked_mul(p1)? >> 33;
    if v1 == 0 {
        return None;
    }
    let p = (1_048_576 - i64::from(adc_p)).checked_mul(1 << 31)?;
    let p = p.checked_sub(v2)?.checked_mul(3125)?.checked_div(v1)?;
    let v1 = p9.checked_mul(p >> 13)?.checked_mul(p >> 13)? >> 25;
    let v2 = p8.checked_mul(p)? >> 19;
    let p = (p.checked_add(v1)?.checked_add(v2)? >> 8).checked_add(p7.checked_mul(16)?)?;
    u32::try_from(p).ok()
}

/// Humidity compensation, DS section 4.2.3 (`bme280_compensate_H_int32`), 32-bit; the
/// result is relative humidity in % as Q22.10 (value / 1024 = %), clamped by the data
/// sheet's code to 0..100 %:
///
/// x = t_fine - 76800;
/// x = ((adc_H 2^14 - H4 2^20 - H5 x + 2^14) / 2^15)
///     * ((((x H6 / 2^10) (x H3 / 2^11 + 2^15) / 2^10 + 2^21) H2 + 2^13) / 2^14);
/// x = x - ((x/2^15)^2 / 2^7) H1 / 2^4; x = clamp(x, 0, 419430400); H = x / 2^12.
///
/// `None` where a 32-bit step overflows.
pub fn compensate_humidity(cal: &Calibration, adc_h: i32, t_fine: i32) -> Option<u32> {
    let x = t_fine.checked_sub(76_800)?;
    let a = adc_h
        .checked_mul(1 << 14)?
        .checked_sub(i32::from(cal.h4).checked_mul(1 << 20)?)?
        .checked_sub(i32::from(cal.h5).checked_mul(x)?)?
        .checked_add(16_384)?
        >> 15;
    let b = x.checked_mul(i32::from(cal.h6))? >> 10;
    let c = (x.checked_mul(i32::from(cal.h3))? >> 11).checked_add(32_768)?;
    let d = (b.checked_mul(c)? >> 10).checked_add(2_097_152)?;
    let e = d.checked_mul(i32::from(cal.h2))?.checked_add(8_192)? >> 14;
    let x = a.checked_mul(e)?;
    let s = x >> 15;
    let f = (s.checked_mul(s)? >> 7).checked_mul(i32::from(cal.h1))? >> 4;
    let x = x.checked_sub(f)?.clamp(0, 419_430_400);
    u32::try_from(x >> 12).ok()
}

/// The reading of the 8 data bytes with a part's calibration and setting.
pub fn compensate(cal: &Calibration, config: &Bme280Config, data: &[u8; 8]) -> Option<PartReading> {
    let (adc_p, adc_t, adc_h) = raw_values(data);
    let (t_fine, t) = compensate_temperature(cal, adc_t)?;
    let p = compensate_pressure(cal, adc_p, t_fine)?;
    let humidity_pct = match config.humidity {
        Some(_) => Some(q_to_f32(compensate_humidity(cal, adc_h, t_fine)?, 10)),
        None => None,
    };
    Some(PartReading {
        pressure_pa: q_to_f32(p, 8),
        die_temperature_c: t as f32 / 100.0,
        humidity_pct,
    })
}

/// A fixed-point value with `bits` fraction bits as f32 (integer and fraction parts
/// converted apart, so no bit of a 24-bit integer part is lost before the sum).
fn q_to_f32(value: u32, bits: u32) -> f32 {
    let fraction = value & ((1 << bits) - 1);
    (value >> bits) as f32 + fraction as f32 / (1_u32 << bits) as f32
}

/// The bus-independent state of a driver: calibration, setting, a pending conversion.
/// Shared by the blocking [`Bme280`] and the async driver.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct State {
    pub(crate) calibration: Option<Calibration>,
    pub(crate) config: Option<Bme280Config>,
    pub(crate) pending: bool,
}

impl State {
    pub(crate) const NEW: Self = Self {
        calibration: None,
        config: None,
        pending: false,
    };

    /// Checks the identity, then keeps the calibration read from the two blocks.
    pub(crate) fn probed<E>(
        &mut self,
        id: u8,
        tp: &[u8; 26],
        h: &[u8; 7],
    ) -> Result<(), PartError<E>> {
        if id != CHIP_ID {
            return Err(PartError::WrongChip { found: id });
        }
        let calibration = Calibration::from_registers(tp, h);
        if !calibration.is_plausible() {
            return Err(PartError::BadCalibration);
        }
        *self = Self {
            calibration: Some(calibration),
            config: None,
            pending: false,
        };
        Ok(())
    }

    /// The three register writes of a setting, in order: `ctrl_hum`, `config`, then
    /// `ctrl_meas` in sleep mode (which makes `ctrl_hum` take effect, DS section 5.4.3).
    pub(crate) fn configure_writes<E>(
        &self,
        config: &Bme280Config,
    ) -> Result<[[u8; 2]; 3], PartError<E>> {
        if self.calibration.is_none() {
            return Err(PartError::NotProbed);
        }
        Ok([
            [REG_CTRL_HUM, config.ctrl_hum()],
            [REG_CONFIG, config.config()],
            [REG_CTRL_MEAS, config.ctrl_meas(MODE_SLEEP)],
        ])
    }

    /// The `ctrl_meas` write that starts one forced conversion (DS section 3.3.3).
    pub(crate) fn start_write<E>(&self) -> Result<[u8; 2], PartError<E>> {
        match self.config {
            Some(config) => Ok([REG_CTRL_MEAS, config.ctrl_meas(MODE_FORCED)]),
            None => Err(PartError::NotProbed),
        }
    }

    /// Whether `fetch` may read: a conversion was started.
    pub(crate) fn check_pending<E>(&self) -> Result<(), PartError<E>> {
        if self.pending {
            Ok(())
        } else {
            Err(PartError::NotStarted)
        }
    }

    /// The reading of the data bytes; the conversion is no longer pending.
    pub(crate) fn finish<E>(&mut self, data: &[u8; 8]) -> Result<PartReading, PartError<E>> {
        let (Some(cal), Some(config)) = (self.calibration, self.config) else {
            return Err(PartError::NotProbed);
        };
        self.pending = false;
        compensate(&cal, &config, data).ok_or(PartError::Compensation)
    }
}

/// Whether a forced conversion is done, from `status` and `ctrl_meas` read together:
/// `measuring` is clear and the mode bits are back to sleep (DS sections 3.3.3, 5.4.4).
pub(crate) const fn conversion_done(status_and_ctrl: [u8; 2]) -> bool {
    let [status, ctrl_meas] = status_and_ctrl;
    status & STATUS_MEASURING == 0 && ctrl_meas & 0b11 == MODE_SLEEP
}

/// A BME280 on a blocking I2C bus.
///
/// `probe`, `configure`, then `start` and `fetch` for each reading: `fetch` returns
/// `Ok(None)` until the conversion is done (at most
/// [`PartDescription::conversion_time_us`] of [`describe`] after `start`).
#[derive(Debug)]
pub struct Bme280<I2C> {
    i2c: I2C,
    address: u8,
    state: State,
}

impl<I2C: I2c> Bme280<I2C> {
    /// A driver for the part at `address` ([`ADDRESS_SDO_LOW`] or [`ADDRESS_SDO_HIGH`]).
    /// Nothing is sent on the bus.
    pub const fn new(i2c: I2C, address: u8) -> Self {
        Self {
            i2c,
            address,
            state: State::NEW,
        }
    }

    /// Reads the identity (must be 0x60) and the calibration words. Call it after the
    /// part's start-up time (2 ms, DS Table 1), when the calibration has been copied.
    pub fn probe(&mut self) -> Result<(), PartError<I2C::Error>> {
        let mut id = [0];
        let mut tp = [0; 26];
        let mut h = [0; 7];
        self.read(REG_ID, &mut id)?;
        let [id] = id;
        if id != CHIP_ID {
            return Err(PartError::WrongChip { found: id });
        }
        self.read(REG_CALIB_TP, &mut tp)?;
        self.read(REG_CALIB_H, &mut h)?;
        self.state.probed(id, &tp, &h)
    }

    /// Writes a setting; the part stays asleep until [`Self::start`].
    pub fn configure(&mut self, config: Bme280Config) -> Result<(), PartError<I2C::Error>> {
        for write in self.state.configure_writes(&config)? {
            self.i2c
                .write(self.address, &write)
                .map_err(PartError::Bus)?;
        }
        self.state.config = Some(config);
        self.state.pending = false;
        Ok(())
    }

    /// Starts one forced conversion.
    pub fn start(&mut self) -> Result<(), PartError<I2C::Error>> {
        let write = self.state.start_write()?;
        self.i2c
            .write(self.address, &write)
            .map_err(PartError::Bus)?;
        self.state.pending = true;
        Ok(())
    }

    /// The reading, or `Ok(None)` while the conversion is running. After a bus error
    /// the conversion is still pending and `fetch` can be called again.
    pub fn fetch(&mut self) -> Result<Option<PartReading>, PartError<I2C::Error>> {
        self.state.check_pending()?;
        let mut status = [0; 2];
        self.read(REG_STATUS, &mut status)?;
        if !conversion_done(status) {
            return Ok(None);
        }
        let mut data = [0; 8];
        self.read(REG_DATA, &mut data)?;
        self.state.finish(&data).map(Some)
    }

    /// The calibration words read by [`Self::probe`].
    pub const fn calibration(&self) -> Option<Calibration> {
        self.state.calibration
    }

    /// The setting written by [`Self::configure`].
    pub const fn config(&self) -> Option<Bme280Config> {
        self.state.config
    }

    /// The part at the setting written by [`Self::configure`].
    pub const fn description(&self) -> Option<PartDescription> {
        match self.state.config {
            Some(config) => Some(describe(&config)),
            None => None,
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
}

#[cfg(test)]
mod tests;
