//! The adapter for the `ms56xx` crate (0.1.1) on a mock I2C bus: reset, PROM, the two
//! conversions at oversampling 4096, and the compensated reading as the sensor layer's
//! `Reading`, against the worked example of the TE Connectivity MS5611-01BA03 data
//! sheet (pressure and temperature calculation, typical values: C1..C6 = 40127, 36924,
//! 23317, 23282, 33464, 28312, D1 = 9085466, D2 = 8569150 give TEMP = 2007 (20.07 degC)
//! and P = 100009 (1000.09 mbar); from memory of the data sheet). Commands: reset 0x1E,
//! PROM read 0xA0 + 2 i, convert D1 0x40 | osr, convert D2 0x50 | osr (4096: 0x08), ADC
//! read 0x00 (the data sheet's command table). Run with `--features ms56xx`.
#![cfg(feature = "ms56xx")]

use embedded_hal_mock::eh1::delay::NoopDelay;
use embedded_hal_mock::eh1::i2c::{Mock, Transaction};
use isohypse::parts::ms56xx::{Ms56xxSensor, describe_ms5611};
use isohypse::sensor::BarometricSensor;
use isohypse::uses::BalloonSettings;
use ms56xx::{Ms56xx, Ms5611, OversamplingStandard};

const ADDRESS: u8 = 0x77;

/// The 4-bit CRC of the PROM words with the CRC nibble cleared (TE application note
/// AN520, "C-code example for MS56xx": polynomial 0x3000 over the 16 bytes, result in
/// the top nibble; from memory), placed in the low nibble of word 7.
fn with_crc(mut prom: [u16; 8]) -> [u16; 8] {
    prom[7] &= 0xFF00;
    let mut rem: u16 = 0;
    for cnt in 0..16 {
        let word = prom[cnt / 2];
        rem ^= if cnt % 2 == 0 { word >> 8 } else { word & 0xFF };
        for _ in 0..8 {
            rem = if rem & 0x8000 != 0 {
                (rem << 1) ^ 0x3000
            } else {
                rem << 1
            };
        }
    }
    prom[7] |= (rem >> 12) & 0xF;
    prom
}

#[test]
fn the_adapter_reads_the_data_sheet_example() {
    let prom = with_crc([0, 40127, 36924, 23317, 23282, 33464, 28312, 0]);
    let adc = |v: u32| vec![(v >> 16) as u8, (v >> 8) as u8, v as u8];
    let mut script = vec![Transaction::write(ADDRESS, vec![0x1E])];
    for (i, word) in prom.iter().enumerate() {
        script.push(Transaction::write_read(
            ADDRESS,
            vec![0xA0 + 2 * i as u8],
            word.to_be_bytes().to_vec(),
        ));
    }
    script.extend([
        Transaction::write(ADDRESS, vec![0x48]),
        Transaction::write_read(ADDRESS, vec![0x00], adc(9_085_466)),
        Transaction::write(ADDRESS, vec![0x58]),
        Transaction::write_read(ADDRESS, vec![0x00], adc(8_569_150)),
    ]);
    let mut bus = Mock::new(&script);
    let mut part: Ms56xx<_, Ms5611> = Ms56xx::new_i2c(bus.clone(), false);
    part.init_blocking(&mut NoopDelay::new()).unwrap();
    let mut sensor = Ms56xxSensor::new(part, OversamplingStandard::Osr4096, NoopDelay::new());
    let reading = sensor.read().unwrap();
    bus.done();
    // 1000.09 mbar = 100 009 Pa; 20.07 degC, the die's, not the air's
    assert!(
        (reading.pressure_pa - 100_009.0).abs() < 0.01,
        "{reading:?}"
    );
    assert_eq!(reading.sensor_temperature_c, Some(20.07));
    assert_eq!(reading.air_temperature_c, None);
    assert_eq!(reading.humidity_pct, None);
}

#[test]
fn a_balloon_takes_its_range_and_noise_from_the_ms5611() {
    let part = describe_ms5611(OversamplingStandard::Osr4096);
    let settings = BalloonSettings::DEFAULT.with_part(&part);
    // 10 mbar to 1200 mbar, 0.012 mbar RMS at oversampling 4096 (data sheet table)
    assert_eq!(
        (settings.min_pressure_pa, settings.max_pressure_pa),
        (1_000.0, 120_000.0)
    );
    assert!((settings.pressure_noise_pa - 1.2).abs() < 1e-5);
    assert_eq!(part.conversion_time_us, 2 * 9_040);
    assert!(settings.validate().is_ok());
}
