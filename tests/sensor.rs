//! The `embedded-hal` sensor adapter with a mock I2C bus: good reads, bus errors and
//! recovery, device faults, pacing, and the die temperature kept out of the height model.
//! The I2C device is the made-up
//! `isohypse::sensor::ExampleBarometer` (invented register map); all values are invented
//! demo data. Run with `--features embedded-hal` (or `--all-features`).
#![cfg(feature = "embedded-hal")]

mod common;
#[allow(unused_imports)]
use common::{at, secs};
use embedded_hal::i2c::ErrorKind;
use embedded_hal_mock::eh1::delay::{CheckedDelay, NoopDelay, Transaction as DelayTransaction};
use embedded_hal_mock::eh1::i2c::{Mock as I2cMock, Transaction};
use isohypse::sensor::{
    BarometricSensor, DriverError, ExampleBarometer, ExampleBarometerError, Reading, SensorDriver,
};
use isohypse::uses::{
    Balloon, BalloonSettings, Drone, DroneSettings, Flags, Sample, Walk, WalkSettings,
};

type Device<'a> = ExampleBarometer<&'a mut I2cMock>;
const ADDRESS: u8 = Device::DEFAULT_ADDRESS;
const DATA: u8 = Device::REGISTER_DATA;

/// A data block of the invented device: ready (+ humidity fitted when given).
fn block(pressure_pa: f32, temperature_c: f32, humidity_pct: Option<f32>) -> Vec<u8> {
    let p = (pressure_pa * 16.0).round() as u32;
    let t = (temperature_c * 100.0).round() as i16;
    let h = humidity_pct.map_or(0, |h| (h * 100.0).round() as u16);
    let status = Device::STATUS_READY | humidity_pct.map_or(0, |_| Device::STATUS_HUMIDITY);
    let [_, p2, p1, p0] = p.to_be_bytes();
    let [t1, t0] = t.to_be_bytes();
    let [h1, h0] = h.to_be_bytes();
    vec![status, p2, p1, p0, t1, t0, h1, h0]
}

fn read(block: Vec<u8>) -> Transaction {
    Transaction::write_read(ADDRESS, vec![DATA], block)
}

#[test]
fn decodes_the_invented_register_map() {
    // 97 700 Pa = 1 563 200 counts of 1/16 Pa = 0x17DA40; 21.50 degC = 2150 = 0x0866;
    // 45.00 % = 4500 = 0x1194 (invented values, exact in the device's units).
    let bytes = [0x03, 0x17, 0xDA, 0x40, 0x08, 0x66, 0x11, 0x94];
    assert_eq!(block(97_700.0, 21.5, Some(45.0)), bytes.to_vec());
    let r = Device::decode(bytes).unwrap();
    assert_eq!(r.pressure_pa, 97_700.0);
    // the device's temperature is its die's, not the air's
    assert_eq!(r.sensor_temperature_c, Some(21.5));
    assert_eq!(r.air_temperature_c, None);
    assert_eq!(r.humidity_pct, Some(45.0));
    // Below freezing: -12.34 degC = -1234 = 0xFB2E (two's complement); no humidity.
    let r = Device::decode([0x01, 0x17, 0xDA, 0x41, 0xFB, 0x2E, 0, 0]).unwrap();
    assert_eq!(r.pressure_pa, 97_700.0 + 1.0 / 16.0); // one count more
    assert_eq!(r.sensor_temperature_c, Some(-12.34));
    assert_eq!(r.air_temperature_c, None);
    assert_eq!(r.humidity_pct, None);
}

#[test]
fn probe_checks_the_identity() {
    let mut i2c = I2cMock::new(&[
        Transaction::write_read(
            ADDRESS,
            vec![Device::REGISTER_IDENTITY],
            vec![Device::IDENTITY],
        ),
        Transaction::write_read(ADDRESS, vec![Device::REGISTER_IDENTITY], vec![0x55]),
        Transaction::write_read(ADDRESS, vec![Device::REGISTER_IDENTITY], vec![0])
            .with_error(ErrorKind::Other),
    ]);
    let mut dev = ExampleBarometer::new(&mut i2c, ADDRESS);
    assert_eq!(dev.probe(), Ok(()));
    assert_eq!(dev.probe(), Err(ExampleBarometerError::WrongIdentity(0x55)));
    assert_eq!(
        dev.probe(),
        Err(ExampleBarometerError::Bus(ErrorKind::Other))
    );
    i2c.done();
}

#[test]
fn good_reads_give_the_same_outputs_as_the_use_fed_directly() {
    let readings = [
        (97_700.0, 21.5, Some(45.0)),
        (97_698.5, 21.5, Some(45.0)),
        (97_701.0, 21.4, Some(45.5)),
    ];
    let mut i2c = I2cMock::new(
        &readings
            .iter()
            .map(|&(p, t, h)| read(block(p, t, h)))
            .collect::<Vec<_>>(),
    );
    let mut driver = SensorDriver::new(
        ExampleBarometer::new(&mut i2c, ADDRESS),
        NoopDelay::new(),
        Drone::new(&DroneSettings::DEFAULT).unwrap(),
    );
    let mut reference = Drone::new(&DroneSettings::DEFAULT).unwrap();
    let mut seen = Vec::new();
    // a clock that reads 7 ms, then 27 ms, 47 ms: the stamps come from it
    let mut ms = 7u64;
    let mut clock = || {
        ms += 20;
        isohypse::time::Instant::from_millis(ms - 20)
    };
    let summary = driver.run_for(3, 20, &mut clock, |t, r| seen.push((t, r)));
    assert_eq!(summary.accepted, 3);
    assert_eq!((summary.rejected, summary.read_errors), (0, 0));
    for (i, ((t, result), &(p, _die_c, h))) in seen.into_iter().zip(readings.iter()).enumerate() {
        assert_eq!(
            t.as_millis(),
            7 + 20 * i as u64,
            "each reading stamped by the clock"
        );
        // the invented device's temperature is its die's: it does not reach the sample
        let expected = reference.process(&Sample {
            time: t,
            pressure_pa: p,
            temperature_c: None,
            humidity_pct: h,
            ..Sample::default()
        });
        assert_eq!(result.unwrap(), expected);
    }
    assert_eq!(driver.device(), &reference);
    assert_eq!(
        driver.last_time(),
        Some(isohypse::time::Instant::from_millis(47))
    );
    driver.release(); // the bus and the sensor back
    i2c.done();
}

#[test]
fn bus_error_is_typed_leaves_the_use_unchanged_and_recovers() {
    let mut i2c = I2cMock::new(&[
        read(block(97_700.0, 21.5, None)),
        read(vec![0; 8]).with_error(ErrorKind::Other),
        read(block(97_699.0, 21.5, None)),
    ]);
    let mut driver = SensorDriver::new(
        ExampleBarometer::new(&mut i2c, ADDRESS),
        NoopDelay::new(),
        Drone::new(&DroneSettings::DEFAULT).unwrap(),
    );
    let first = driver.step(at(0.0)).unwrap();
    assert!(first.accepted());
    let before = driver.device().clone();

    let failed = driver.step(at(0.02));
    assert_eq!(
        failed,
        Err(DriverError::Sensor(ExampleBarometerError::Bus(
            ErrorKind::Other
        )))
    );
    assert_eq!(
        driver.device(),
        &before,
        "a failed read must not touch the state"
    );
    assert_eq!(driver.read_errors(), 1);
    assert_eq!(
        isohypse::Error::from(failed.unwrap_err()),
        isohypse::Error::SensorRead
    );

    // Recovery: the next read goes on as if the failed one had never happened.
    // (the device's 21.5 degC is its die's and does not reach the sample)
    let mut reference = before.clone();
    let expected = reference.process(&Sample::pressure(at(0.04), 97_699.0));
    let after = driver.step(at(0.04)).unwrap();
    assert!(after.accepted());
    assert_eq!(after, expected);
    assert_eq!(driver.device(), &reference);
    driver.release(); // the bus and the sensor back
    i2c.done();
}

#[test]
fn device_fault_and_stale_data_are_typed_errors() {
    let mut i2c = I2cMock::new(&[
        read(vec![
            Device::STATUS_FAULT | Device::STATUS_READY,
            0,
            0,
            0,
            0,
            0,
            0,
            0,
        ]),
        read(vec![0; 8]),
    ]);
    let mut dev = ExampleBarometer::new(&mut i2c, ADDRESS);
    assert_eq!(dev.read(), Err(ExampleBarometerError::Fault));
    assert_eq!(dev.read(), Err(ExampleBarometerError::NotReady));
    i2c.done();
}

#[test]
fn non_physical_reading_is_a_flagged_rejected_sample_not_an_error() {
    // The device says "ready" but reads 0 Pa: the walk rejects and flags it.
    let mut i2c = I2cMock::new(&[
        read(block(97_700.0, 20.0, None)),
        read(block(0.0, 20.0, None)),
    ]);
    let mut driver = SensorDriver::new(
        ExampleBarometer::new(&mut i2c, ADDRESS),
        NoopDelay::new(),
        Walk::new(&WalkSettings::DEFAULT).unwrap(),
    );
    let mut outs = Vec::new();
    let summary = driver.run_for(2, 1000, &mut second_ticks(), |_, r| outs.push(r.unwrap()));
    assert_eq!(
        (summary.accepted, summary.rejected, summary.read_errors),
        (1, 1, 0)
    );
    assert!(outs[1].flags.contains(Flags::REJECTED_PRESSURE));
    assert_eq!(driver.device().last_output(), outs[0]);
    driver.release(); // the bus and the sensor back
    i2c.done();
}

#[test]
fn run_for_paces_with_the_delay_and_goes_on_after_errors() {
    let mut i2c = I2cMock::new(&[
        read(block(97_700.0, 20.0, None)),
        read(vec![0; 8]).with_error(ErrorKind::Bus),
        read(block(97_700.0, 20.0, None)),
        read(block(97_700.0, 20.0, None)),
    ]);
    let delays = [
        DelayTransaction::delay_ms(50),
        DelayTransaction::delay_ms(50),
        DelayTransaction::delay_ms(50),
        DelayTransaction::delay_ms(50),
    ];
    let mut delay = CheckedDelay::new(&delays);
    let mut driver = SensorDriver::new(
        ExampleBarometer::new(&mut i2c, ADDRESS),
        &mut delay,
        Drone::new(&DroneSettings::DEFAULT).unwrap(),
    );
    let mut times = Vec::new();
    let mut ms = 0u64;
    let mut clock = || {
        ms += 50;
        isohypse::time::Instant::from_millis(ms - 50)
    };
    let first = driver.run_for(2, 50, &mut clock, |t, _| times.push(t.as_millis()));
    let second = driver.run_for(2, 50, &mut clock, |t, _| times.push(t.as_millis()));
    assert_eq!((first.accepted, first.read_errors), (1, 1));
    assert_eq!((second.accepted, second.read_errors), (2, 0));
    assert_eq!(
        times,
        vec![0, 50, 100, 150],
        "each reading stamped by the clock, ms"
    );
    driver.release(); // the bus and the sensor back
    delay.done();
    i2c.done();
}

#[test]
fn any_sensor_works_through_a_mutable_reference() {
    struct Fixed(u32);
    impl BarometricSensor for Fixed {
        type Error = ();
        fn read(&mut self) -> Result<Reading, ()> {
            self.0 += 1;
            Ok(Reading {
                pressure_pa: 101_325.0,
                ..Reading::default()
            })
        }
    }
    let mut sensor = Fixed(0);
    let mut driver = SensorDriver::new(
        &mut sensor,
        NoopDelay::new(),
        Walk::new(&WalkSettings::DEFAULT).unwrap(),
    );
    let summary = driver.run_for(5, 1000, &mut second_ticks(), |_, _| {});
    assert_eq!(summary.accepted, 5);
    driver.release(); // the bus and the sensor back
    assert_eq!(sensor.0, 5);
}

/// The barometer's own (die) temperature never reaches the height model: a balloon fed
/// readings with a warm, constant die temperature (35 degC, a sensor in a sunlit box;
/// invented) and no air temperature gives exactly the heights of one fed pressure alone.
/// A third balloon, fed the same 35 degC as its air temperature, shows that the check
/// would see a leak: its heights differ by far more than any rounding.
#[test]
fn the_die_temperature_never_reaches_the_height_model() {
    /// Ground for 60 s at 300 m, then 5 m/s up (the U.S. 1976 pressure at each height).
    fn pressure(k: u64) -> f32 {
        common::p_at(300.0 + 5.0 * k.saturating_sub(60) as f32)
    }
    struct WarmBox(u64);
    impl BarometricSensor for WarmBox {
        type Error = ();
        fn read(&mut self) -> Result<Reading, ()> {
            let r = Reading {
                pressure_pa: pressure(self.0),
                sensor_temperature_c: Some(35.0),
                air_temperature_c: None,
                humidity_pct: None,
            };
            self.0 += 1;
            Ok(r)
        }
    }
    const N: u64 = 2_000;
    let mut driver = SensorDriver::new(
        WarmBox(0),
        NoopDelay::new(),
        Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap(),
    );
    let mut plain = Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap();
    let mut leaked = Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap();
    let (mut k, mut widest) = (0u64, 0.0f32);
    let summary = driver.run_for(N as u32, 1000, &mut second_ticks(), |t, r| {
        let out = r.unwrap();
        let expected = plain.process(&Sample::pressure(t, pressure(k)));
        assert_eq!(out, expected, "sample {k}");
        assert_eq!(out.altitude_m.to_bits(), expected.altitude_m.to_bits());
        let warm = leaked.process(&Sample {
            temperature_c: Some(35.0),
            ..Sample::pressure(t, pressure(k))
        });
        widest = widest.max((warm.altitude_m - out.altitude_m).abs());
        k += 1;
    });
    assert_eq!(summary.accepted, N as u32);
    assert_eq!(driver.device(), &plain);
    let top = driver.device().last_output().altitude_m;
    println!(
        "die temperature: top {top:.1} m either way; 35 degC as air would move it {widest:.1} m"
    );
    // 9.7 km above the launch, a column at 35 degC (308 K) instead of the standard's
    // (about 255 K on average) is some 21 % warmer: about 2 km higher (hypsometric
    // equation, heights scale with the mean column temperature); 100 m is far below that
    // and far above rounding
    assert!(top > 9_000.0, "{top}");
    assert!(widest > 100.0, "{widest}");
}

/// A clock for the tests: 0 s, 1 s, 2 s... at each reading.
fn second_ticks() -> impl FnMut() -> isohypse::time::Instant {
    let mut s = 0u64;
    move || {
        s += 1;
        isohypse::time::Instant::from_secs(s - 1)
    }
}
