//! The part drivers on a mock I2C bus (embedded-hal-mock transaction scripts): the
//! register steps of each data sheet, a conversion that is not ready yet, then ready;
//! wrong parts, bad settings, bus errors and recovery; the async drivers on the same
//! scripts. Run with `--features embedded-hal` (async: `--all-features`).
//!
//! Register maps: Bosch BME280 data sheet BST-BME280-DS002 revision 1.6, sections 5.3
//! and 5.4 (id 0xD0, calibration 0x88 and 0xE1, ctrl_hum 0xF2, status 0xF3, ctrl_meas
//! 0xF4, config 0xF5, data 0xF7); ST LPS22HB data sheet DocID027083 revision 6 and
//! LPS22HH DocID030890 revision 2, section 9 (WHO_AM_I 0x0F, CTRL_REG1 0x10, CTRL_REG2
//! 0x11, RES_CONF 0x1A, STATUS 0x27, output 0x28..0x2C). Register contents other than
//! the BMP280 worked-example values (named where used) are invented.
#![cfg(feature = "embedded-hal")]

use embedded_hal::i2c::ErrorKind;
use embedded_hal_mock::eh1::i2c::{Mock, Transaction};
use isohypse::parts::PartError;
use isohypse::parts::bme280::{self, Bme280, Bme280Config, Calibration};
use isohypse::parts::lps22::{self, LowPass, Lps22, Lps22Config, OutputRate, PowerMode, Variant};

const BME: u8 = bme280::ADDRESS_SDO_LOW;
const LPS: u8 = lps22::ADDRESS_SA0_LOW;

/// Calibration block at 0x88 (26 bytes): the BMP280 data sheet's worked-example words
/// (section 3.12, from memory), reserved 0xA0, dig_H1 = 75 at 0xA1.
fn calib_tp() -> Vec<u8> {
    let words: [u16; 12] = [
        27504, 26435, 64536, 36477, 54851, 3024, 2855, 140, 65529, 15500, 50936, 6000,
    ];
    let mut bytes: Vec<u8> = words.iter().flat_map(|w| w.to_le_bytes()).collect();
    bytes.extend([0x00, 75]);
    bytes
}

/// Calibration block at 0xE1 (7 bytes): H2 = 362, H3 = 0, H4 = 313, H5 = 50, H6 = 30
/// (typical production words, from memory).
fn calib_h() -> Vec<u8> {
    vec![0x6A, 0x01, 0x00, 0x13, 0x29, 0x03, 0x1E]
}

/// Data block at 0xF7: the worked example's adc_P = 415148 and adc_T = 519888 (BMP280
/// data sheet section 3.12, from memory), adc_H = 30000 (invented).
const DATA: [u8; 8] = [0x65, 0x5A, 0xC0, 0x7E, 0xED, 0x00, 0x75, 0x30];

fn bme_probe() -> Vec<Transaction> {
    vec![
        Transaction::write_read(BME, vec![0xD0], vec![0x60]),
        Transaction::write_read(BME, vec![0x88], calib_tp()),
        Transaction::write_read(BME, vec![0xE1], calib_h()),
    ]
}

/// `ctrl_hum` x1, `config` filter off, `ctrl_meas` = osrs_t x1 (001) osrs_p x4 (011)
/// sleep (00) = 0b001_011_00.
fn bme_configure_default() -> Vec<Transaction> {
    vec![
        Transaction::write(BME, vec![0xF2, 0x01]),
        Transaction::write(BME, vec![0xF5, 0x00]),
        Transaction::write(BME, vec![0xF4, 0b0010_1100]),
    ]
}

/// An LPS22HB found, configured with `Lps22Config::DEFAULT` (one-shot, low-noise) and
/// started: identity, power-down, RES_CONF read and written, CTRL_REG2, CTRL_REG1,
/// ONE_SHOT.
fn lps_hb_default_started() -> Vec<Transaction> {
    vec![
        Transaction::write_read(LPS, vec![0x0F], vec![0xB1]),
        Transaction::write(LPS, vec![0x10, 0x00]),
        Transaction::write_read(LPS, vec![0x1A], vec![0x00]),
        Transaction::write(LPS, vec![0x1A, 0x00]),
        Transaction::write(LPS, vec![0x11, 0x10]),
        Transaction::write(LPS, vec![0x10, 0x02]),
        Transaction::write(LPS, vec![0x11, 0x11]),
    ]
}

fn script(parts: &[Vec<Transaction>]) -> Vec<Transaction> {
    parts.concat()
}

#[test]
fn bme280_probe_configure_start_not_ready_fetch() {
    let mut expected = script(&[bme_probe(), bme_configure_default()]);
    expected.extend([
        Transaction::write(BME, vec![0xF4, 0b0010_1101]), // forced mode starts
        Transaction::write_read(BME, vec![0xF3], vec![0x08, 0b0010_1101]), // measuring
        // measuring clear but the mode bits not yet back to sleep: still not done
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1101]),
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1100]), // done
        Transaction::write_read(BME, vec![0xF7], DATA.to_vec()),
    ]);
    let mut bus = Mock::new(&expected);
    let mut part = Bme280::new(&mut bus, BME);
    part.probe().unwrap();
    part.configure(Bme280Config::DEFAULT).unwrap();
    assert_eq!(
        part.description(),
        Some(bme280::describe(&Bme280Config::DEFAULT))
    );
    part.start().unwrap();
    assert_eq!(part.fetch(), Ok(None));
    assert_eq!(part.fetch(), Ok(None));
    let reading = part.fetch().unwrap().unwrap();
    // BMP280 data sheet section 3.12 (from memory): 25.08 degC, 100653 Pa (whole Pa)
    assert_eq!(reading.die_temperature_c, 25.08);
    assert_eq!(reading.pressure_pa.floor(), 100_653.0);
    // humidity: the compensation of the same raw word at the example's t_fine
    let cal = part.calibration().unwrap();
    let h = bme280::compensate_humidity(&cal, 30_000, 128_422).unwrap();
    assert_eq!(reading.humidity_pct, Some(h as f32 / 1024.0));
    assert!((54.0..56.0).contains(&reading.humidity_pct.unwrap()));
    // the conversion was consumed: another fetch needs another start
    assert_eq!(part.fetch(), Err(PartError::NotStarted));
    bus.done();
}

#[test]
fn bme280_calibration_is_read_as_the_data_sheet_maps_it() {
    let mut bus = Mock::new(&bme_probe());
    let mut part = Bme280::new(&mut bus, BME);
    part.probe().unwrap();
    let cal = part.calibration().unwrap();
    let expected = Calibration {
        t1: 27504,
        t2: 26435,
        t3: -1000,
        p1: 36477,
        p2: -10685,
        p3: 3024,
        p4: 2855,
        p5: 140,
        p6: -7,
        p7: 15500,
        p8: -14600,
        p9: 6000,
        h1: 75,
        h2: 362,
        h3: 0,
        h4: 313,
        h5: 50,
        h6: 30,
    };
    assert_eq!(cal, expected);
    bus.done();
}

#[test]
fn bme280_settings_reach_the_registers() {
    // indoor navigation: ctrl_hum x1; config filter 16 (100 in bits 4:2) = 0x10;
    // ctrl_meas osrs_t x2 (010) osrs_p x16 (101) = 0b010_101_00, forced = ...01;
    // humidity skipped: ctrl_hum 0.
    let mut expected = bme_probe();
    expected.extend([
        Transaction::write(BME, vec![0xF2, 0x01]),
        Transaction::write(BME, vec![0xF5, 0x10]),
        Transaction::write(BME, vec![0xF4, 0b0101_0100]),
        Transaction::write(BME, vec![0xF4, 0b0101_0101]),
        Transaction::write(BME, vec![0xF2, 0x00]),
        Transaction::write(BME, vec![0xF5, 0x00]),
        Transaction::write(BME, vec![0xF4, 0b0010_1100]),
        Transaction::write(BME, vec![0xF4, 0b0010_1101]),
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1100]),
        Transaction::write_read(BME, vec![0xF7], DATA.to_vec()),
    ]);
    let mut bus = Mock::new(&expected);
    let mut part = Bme280::new(&mut bus, BME);
    part.probe().unwrap();
    part.configure(Bme280Config::INDOOR_NAVIGATION).unwrap();
    part.start().unwrap();
    let no_humidity = Bme280Config {
        humidity: None,
        ..Bme280Config::DEFAULT
    };
    part.configure(no_humidity).unwrap();
    // a new setting forgets the conversion started before it
    assert_eq!(part.fetch(), Err(PartError::NotStarted));
    part.start().unwrap();
    assert_eq!(part.fetch().unwrap().unwrap().humidity_pct, None);
    bus.done();
}

#[test]
fn bme280_refuses_other_parts_and_blank_calibration() {
    // a BMP280 (id 0x58, no humidity) is refused after the identity read alone
    let mut bus = Mock::new(&[Transaction::write_read(BME, vec![0xD0], vec![0x58])]);
    let mut part = Bme280::new(&mut bus, BME);
    assert_eq!(part.probe(), Err(PartError::WrongChip { found: 0x58 }));
    assert_eq!(
        part.configure(Bme280Config::DEFAULT),
        Err(PartError::NotProbed)
    );
    assert_eq!(part.start(), Err(PartError::NotProbed));
    bus.done();
    // an all-zero calibration (blank or misread memory)
    let mut bus = Mock::new(&[
        Transaction::write_read(BME, vec![0xD0], vec![0x60]),
        Transaction::write_read(BME, vec![0x88], vec![0; 26]),
        Transaction::write_read(BME, vec![0xE1], vec![0; 7]),
    ]);
    let mut part = Bme280::new(&mut bus, BME);
    assert_eq!(part.probe(), Err(PartError::BadCalibration));
    assert_eq!(part.calibration(), None);
    bus.done();
}

#[test]
fn bme280_bus_error_then_recovery() {
    let mut expected = script(&[bme_probe(), bme_configure_default()]);
    expected.extend([
        Transaction::write(BME, vec![0xF4, 0b0010_1101]),
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0x00]).with_error(ErrorKind::Other),
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1100]),
        Transaction::write_read(BME, vec![0xF7], DATA.to_vec()).with_error(ErrorKind::Other),
        Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1100]),
        Transaction::write_read(BME, vec![0xF7], DATA.to_vec()),
    ]);
    let mut bus = Mock::new(&expected);
    let mut part = Bme280::new(&mut bus, BME);
    part.probe().unwrap();
    part.configure(Bme280Config::DEFAULT).unwrap();
    part.start().unwrap();
    assert_eq!(part.fetch(), Err(PartError::Bus(ErrorKind::Other)));
    assert_eq!(part.fetch(), Err(PartError::Bus(ErrorKind::Other)));
    assert_eq!(part.fetch().unwrap().unwrap().die_temperature_c, 25.08);
    bus.done();
}

#[test]
fn lps22hb_one_shot_low_current() {
    let expected = [
        Transaction::write_read(LPS, vec![0x0F], vec![0xB1]),
        Transaction::write(LPS, vec![0x10, 0x00]), // power-down first
        // RES_CONF: the reserved bit 1 read as set is written back with LC_EN
        Transaction::write_read(LPS, vec![0x1A], vec![0b10]),
        Transaction::write(LPS, vec![0x1A, 0b11]),
        Transaction::write(LPS, vec![0x11, 0x10]), // IF_ADD_INC
        Transaction::write(LPS, vec![0x10, 0b0000_1010]), // one-shot, LPF ODR/9, BDU
        Transaction::write(LPS, vec![0x11, 0x11]), // ONE_SHOT
        Transaction::write_read(LPS, vec![0x27], vec![0x00]),
        Transaction::write_read(LPS, vec![0x27], vec![0x01]), // pressure only: not yet
        Transaction::write_read(LPS, vec![0x27], vec![0x03]),
        // 0x3F8000 / 4096 = 1016 hPa; 0xFC18 = -1000 = -10.00 degC
        Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x80, 0x3F, 0x18, 0xFC]),
    ];
    let mut bus = Mock::new(&expected);
    let mut part = Lps22::new(&mut bus, LPS);
    assert_eq!(part.probe(), Ok(Variant::Hb));
    let config = Lps22Config {
        rate: OutputRate::OneShot,
        low_pass: LowPass::OdrOver9,
        power: PowerMode::LowCurrent,
    };
    part.configure(config).unwrap();
    assert_eq!(
        part.description(),
        Some(lps22::describe(Variant::Hb, &config))
    );
    part.start().unwrap();
    assert_eq!(part.fetch(), Ok(None));
    assert_eq!(part.fetch(), Ok(None));
    let reading = part.fetch().unwrap().unwrap();
    assert_eq!(reading.pressure_pa, 101_600.0);
    assert_eq!(reading.die_temperature_c, -10.0);
    assert_eq!(reading.humidity_pct, None);
    assert_eq!(part.fetch(), Err(PartError::NotStarted));
    bus.done();
}

#[test]
fn lps22hh_low_noise_one_shot_and_continuous() {
    let expected = [
        Transaction::write_read(LPS, vec![0x0F], vec![0xB3]),
        Transaction::write(LPS, vec![0x10, 0x00]),
        Transaction::write(LPS, vec![0x11, 0x12]), // IF_ADD_INC, LOW_NOISE_EN
        Transaction::write(LPS, vec![0x10, 0x02]),
        Transaction::write(LPS, vec![0x11, 0x13]), // ONE_SHOT kept with LOW_NOISE_EN
        Transaction::write_read(LPS, vec![0x27], vec![0x03]),
        Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x80, 0x3F, 0xD2, 0x04]),
        // 75 Hz continuous, low-noise: no ONE_SHOT write at start
        Transaction::write(LPS, vec![0x10, 0x00]),
        Transaction::write(LPS, vec![0x11, 0x12]),
        Transaction::write(LPS, vec![0x10, 0b0101_0010]),
        Transaction::write_read(LPS, vec![0x27], vec![0x02]),
        Transaction::write_read(LPS, vec![0x27], vec![0x33]), // with overrun bits
        Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x00, 0x40, 0x00, 0x00]),
    ];
    let mut bus = Mock::new(&expected);
    let mut part = Lps22::new(&mut bus, LPS);
    assert_eq!(part.probe(), Ok(Variant::Hh));
    part.configure(Lps22Config::DEFAULT).unwrap();
    part.start().unwrap();
    let r = part.fetch().unwrap().unwrap();
    assert_eq!((r.pressure_pa, r.die_temperature_c), (101_600.0, 12.34));
    let continuous = Lps22Config {
        rate: OutputRate::Hz75,
        ..Lps22Config::DEFAULT
    };
    part.configure(continuous).unwrap();
    part.start().unwrap();
    assert_eq!(part.fetch(), Ok(None));
    // 0x400000 = 4 194 304 LSB = 1024 hPa
    assert_eq!(part.fetch().unwrap().unwrap().pressure_pa, 102_400.0);
    bus.done();
}

#[test]
fn lps22_refusals_and_recovery() {
    // another ST part's identity (0xBD), settings a variant lacks, calls out of order
    let mut bus = Mock::new(&[
        Transaction::write_read(LPS, vec![0x0F], vec![0xBD]),
        Transaction::write_read(LPS, vec![0x0F], vec![0xB1]),
        Transaction::write_read(LPS, vec![0x0F], vec![0xB3]),
        Transaction::write(LPS, vec![0x10, 0x00]).with_error(ErrorKind::Other),
        Transaction::write(LPS, vec![0x10, 0x00]),
        Transaction::write(LPS, vec![0x11, 0x10]),
        Transaction::write(LPS, vec![0x10, 0x72]), // 200 Hz, low-current, BDU
    ]);
    let mut part = Lps22::new(&mut bus, LPS);
    assert_eq!(part.probe(), Err(PartError::WrongChip { found: 0xBD }));
    assert_eq!(part.start(), Err(PartError::NotProbed));
    assert_eq!(part.probe(), Ok(Variant::Hb));
    let fast = Lps22Config {
        rate: OutputRate::Hz200,
        power: PowerMode::LowCurrent,
        ..Lps22Config::DEFAULT
    };
    assert_eq!(part.configure(fast), Err(PartError::InvalidConfig)); // HB ends at 75 Hz
    assert_eq!(part.probe(), Ok(Variant::Hh));
    let noisy_fast = Lps22Config {
        power: PowerMode::LowNoise,
        ..fast
    };
    assert_eq!(part.configure(noisy_fast), Err(PartError::InvalidConfig));
    assert_eq!(part.fetch(), Err(PartError::NotStarted));
    assert_eq!(part.configure(fast), Err(PartError::Bus(ErrorKind::Other)));
    assert_eq!(part.description(), None);
    part.configure(fast).unwrap();
    assert_eq!(
        part.description().map(|d| d.conversion_time_us),
        Some(5_000)
    );
    bus.done();
}

#[cfg(feature = "embedded-hal-async")]
mod asynchronous {
    use super::*;
    use core::future::Future;
    use core::pin::pin;
    use core::task::{Context, Poll, Waker};
    use embedded_hal::i2c::{ErrorType, I2c as _, Operation};
    use isohypse::parts::asynch::{Bme280Async, Lps22Async};

    /// The blocking mock seen through the async I2C trait (each transfer completes at
    /// once), so the async drivers run on the same transaction scripts.
    struct AsyncBus<'a>(&'a mut Mock);

    impl ErrorType for AsyncBus<'_> {
        type Error = ErrorKind;
    }

    impl embedded_hal_async::i2c::I2c for AsyncBus<'_> {
        async fn read(&mut self, address: u8, read: &mut [u8]) -> Result<(), ErrorKind> {
            self.0.read(address, read)
        }
        async fn write(&mut self, address: u8, write: &[u8]) -> Result<(), ErrorKind> {
            self.0.write(address, write)
        }
        async fn write_read(&mut self, a: u8, w: &[u8], r: &mut [u8]) -> Result<(), ErrorKind> {
            self.0.write_read(a, w, r)
        }
        async fn transaction(&mut self, a: u8, ops: &mut [Operation<'_>]) -> Result<(), ErrorKind> {
            self.0.transaction(a, ops)
        }
    }

    /// Runs a future that never waits on anything external to completion.
    fn block_on<F: Future>(f: F) -> F::Output {
        let mut f = pin!(f);
        let mut cx = Context::from_waker(Waker::noop());
        loop {
            if let Poll::Ready(v) = f.as_mut().poll(&mut cx) {
                return v;
            }
        }
    }

    #[test]
    fn bme280_async_same_script() {
        let mut expected = script(&[bme_probe(), bme_configure_default()]);
        expected.extend([
            Transaction::write(BME, vec![0xF4, 0b0010_1101]),
            Transaction::write_read(BME, vec![0xF3], vec![0x08, 0b0010_1101]),
            Transaction::write_read(BME, vec![0xF3], vec![0x00, 0b0010_1100]),
            Transaction::write_read(BME, vec![0xF7], DATA.to_vec()),
        ]);
        let mut bus = Mock::new(&expected);
        let mut part = Bme280Async::new(AsyncBus(&mut bus), BME);
        block_on(async {
            part.probe().await.unwrap();
            part.configure(Bme280Config::DEFAULT).await.unwrap();
            part.start().await.unwrap();
            assert_eq!(part.fetch().await, Ok(None));
            let r = part.fetch().await.unwrap().unwrap();
            assert_eq!(r.die_temperature_c, 25.08);
            assert_eq!(r.pressure_pa.floor(), 100_653.0);
            assert_eq!(part.fetch().await, Err(PartError::NotStarted));
        });
        part.release();
        bus.done();
    }

    /// An async timer that counts what it was asked to wait, in microseconds.
    struct Waits(u64);
    impl embedded_hal_async::delay::DelayNs for Waits {
        async fn delay_ns(&mut self, ns: u32) {
            self.0 += u64::from(ns / 1_000);
        }
    }

    #[test]
    fn a_paced_part_is_one_reading_per_call() {
        // `parts::paced::Paced`: start, the part's longest conversion time awaited on
        // the timer (one-shot low-noise LPS22HB: 13 334 us, `lps22::describe`), then a
        // fetch that finds it not done yet, a millisecond, the fetch that has it.
        use isohypse::parts::paced::Paced;
        use isohypse::sensor_async::AsyncBarometricSensor;
        let expected = script(&[
            lps_hb_default_started(),
            vec![
                Transaction::write_read(LPS, vec![0x27], vec![0x00]),
                Transaction::write_read(LPS, vec![0x27], vec![0x03]),
                Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x80, 0x3F, 0xD2, 0x04]),
            ],
        ]);
        let mut bus = Mock::new(&expected);
        let mut part = Lps22Async::new(AsyncBus(&mut bus), LPS);
        let (reading, waited) = block_on(async {
            part.probe().await.unwrap();
            part.configure(Lps22Config::DEFAULT).await.unwrap();
            let conversion = part.description().unwrap().conversion_time_us;
            let mut paced = Paced::new(part, Waits(0));
            let reading = paced.read().await.unwrap();
            let (part, waits) = paced.release();
            part.release();
            (reading, (waits.0, conversion))
        });
        bus.done();
        assert_eq!(reading.pressure_pa, 101_600.0);
        assert_eq!(reading.sensor_temperature_c, Some(12.34));
        assert_eq!(reading.air_temperature_c, None);
        assert_eq!(waited.0, u64::from(waited.1) + 1_000);
    }

    #[test]
    fn a_conversion_that_never_comes_is_not_ready() {
        use isohypse::parts::paced::Paced;
        use isohypse::sensor_async::AsyncBarometricSensor;
        let mut expected = lps_hb_default_started();
        // a status that never says ready: the first fetch and 100 more
        expected.extend((0..101).map(|_| Transaction::write_read(LPS, vec![0x27], vec![0x00])));
        let mut bus = Mock::new(&expected);
        let mut part = Lps22Async::new(AsyncBus(&mut bus), LPS);
        let result = block_on(async {
            part.probe().await.unwrap();
            part.configure(Lps22Config::DEFAULT).await.unwrap();
            let mut paced = Paced::new(part, Waits(0));
            let result = paced.read().await;
            paced.release().0.release();
            result
        });
        bus.done();
        assert_eq!(result, Err(PartError::NotReady));
    }

    #[test]
    fn lps22hb_async_same_script() {
        let expected = script(&[
            lps_hb_default_started(),
            vec![
                Transaction::write_read(LPS, vec![0x27], vec![0x00]),
                Transaction::write_read(LPS, vec![0x27], vec![0x03]),
                Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x80, 0x3F, 0xD2, 0x04]),
            ],
        ]);
        let mut bus = Mock::new(&expected);
        let mut part = Lps22Async::new(AsyncBus(&mut bus), LPS);
        block_on(async {
            assert_eq!(part.probe().await, Ok(Variant::Hb));
            part.configure(Lps22Config::DEFAULT).await.unwrap();
            part.start().await.unwrap();
            assert_eq!(part.fetch().await, Ok(None));
            let r = part.fetch().await.unwrap().unwrap();
            assert_eq!((r.pressure_pa, r.die_temperature_c), (101_600.0, 12.34));
        });
        part.release();
        bus.done();
    }
}

#[test]
fn the_polling_driver_never_waits_and_feeds_a_walk() {
    // The LPS22HB one-shot script above, driven by `sensor_poll::PollingDriver` from a
    // loop that calls it every 10 ms: the start, two fetches that find the conversion
    // not done (each call returns at once with nothing), the fetch that feeds the walk,
    // then nothing until the next start is due one period (1 s) after the first.
    use isohypse::sensor_poll::PollingDriver;
    use isohypse::time::Instant;
    use isohypse::uses::{Walk, WalkSettings};
    let expected = [
        Transaction::write_read(LPS, vec![0x0F], vec![0xB1]),
        Transaction::write(LPS, vec![0x10, 0x00]),
        Transaction::write_read(LPS, vec![0x1A], vec![0b10]),
        Transaction::write(LPS, vec![0x1A, 0b11]),
        Transaction::write(LPS, vec![0x11, 0x10]),
        Transaction::write(LPS, vec![0x10, 0b0000_1010]),
        Transaction::write(LPS, vec![0x11, 0x11]), // start at t = 0
        Transaction::write_read(LPS, vec![0x27], vec![0x00]), // 10 ms: not yet
        Transaction::write_read(LPS, vec![0x27], vec![0x01]), // 20 ms: not yet
        Transaction::write_read(LPS, vec![0x27], vec![0x03]), // 30 ms: ready
        Transaction::write_read(LPS, vec![0x28], vec![0x00, 0x80, 0x3F, 0x18, 0xFC]),
        Transaction::write(LPS, vec![0x11, 0x11]), // the next start at t = 1 s
    ];
    let mut bus = Mock::new(&expected);
    let mut part = Lps22::new(&mut bus, LPS);
    part.probe().unwrap();
    part.configure(Lps22Config {
        rate: OutputRate::OneShot,
        low_pass: LowPass::OdrOver9,
        power: PowerMode::LowCurrent,
    })
    .unwrap();
    let walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
    let mut driver = PollingDriver::new(part, walk, 1_000_000);
    let mut fed = Vec::new();
    for ms in (0..=1_000u64).step_by(10) {
        if let Some(out) = driver.poll(Instant::from_millis(ms)).unwrap() {
            fed.push((ms, out));
        }
    }
    assert_eq!(fed.len(), 1);
    let (ms, out) = fed[0];
    assert_eq!(ms, 30, "fed when fetched");
    assert_eq!(out.time, Instant::from_millis(30));
    // 1016 hPa through the walk's standard atmosphere: a little below sea level
    assert!(
        out.altitude_m < 0.0 && out.altitude_m > -50.0,
        "{}",
        out.altitude_m
    );
    assert_eq!(driver.bus_errors(), 0);
    let _ = driver.release();
    bus.done();
}
