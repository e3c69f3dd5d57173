//! The async sensor driver (feature `embedded-hal-async`): good reads go through the
//! use type, a failed read is counted and leaves it as it was, reading recovers.
#![cfg(feature = "embedded-hal-async")]

mod common;
#[allow(unused_imports)]
use common::{at, secs};
use core::future::Future;
use core::pin::pin;
use core::task::{Context, Poll, Waker};

use isohypse::sensor::{DriverError, Reading};
use isohypse::sensor_async::{AsyncBarometricSensor, AsyncSensorDriver};
use isohypse::uses::{Walk, WalkSettings};

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

/// An invented test sensor: a script of readings and failures.
struct Scripted {
    script: Vec<Result<Reading, &'static str>>,
    next: usize,
}

impl AsyncBarometricSensor for Scripted {
    type Error = &'static str;
    async fn read(&mut self) -> Result<Reading, Self::Error> {
        let r = self.script[self.next % self.script.len()];
        self.next += 1;
        r
    }
}

/// Counts the requested delay instead of waiting.
struct CountingDelay(u64);

impl embedded_hal_async::delay::DelayNs for CountingDelay {
    async fn delay_ns(&mut self, ns: u32) {
        self.0 += u64::from(ns);
    }
}

fn reading(p: f32) -> Result<Reading, &'static str> {
    Ok(Reading {
        pressure_pa: p,
        sensor_temperature_c: None,
        air_temperature_c: Some(10.0),
        humidity_pct: None,
    })
}

#[test]
fn good_reads_bus_error_and_recovery() {
    let script = vec![
        reading(95_000.0),
        reading(95_001.0),
        Err("bus"),
        reading(95_002.0),
    ];
    let walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
    let mut driver = AsyncSensorDriver::new(Scripted { script, next: 0 }, CountingDelay(0), walk);
    // two good reads
    for t in [0.0, 1.0] {
        let out = block_on(driver.step(at(t))).unwrap();
        assert!(out.accepted());
    }
    // a failed read: typed error, counted, walk unchanged
    let before = driver.device().clone();
    let err = block_on(driver.step(at(2.0))).unwrap_err();
    assert!(matches!(err, DriverError::Sensor("bus")));
    assert_eq!(driver.read_errors(), 1);
    assert_eq!(driver.device(), &before);
    // recovery
    let out = block_on(driver.step(at(3.0))).unwrap();
    assert!(out.accepted());
}

#[test]
fn run_for_paces_with_the_delay() {
    let script = vec![reading(95_000.0), Err("bus"), reading(94_999.0)];
    let walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
    let mut driver = AsyncSensorDriver::new(Scripted { script, next: 0 }, CountingDelay(0), walk);
    let mut times = Vec::new();
    let mut ms = 0u64;
    let mut clock = || {
        ms += 500;
        isohypse::time::Instant::from_millis(ms - 500)
    };
    let summary = block_on(driver.run_for(9, 500, &mut clock, |t, _| times.push(t.as_millis())));
    assert_eq!(summary.accepted, 6);
    assert_eq!(summary.read_errors, 3);
    assert_eq!(
        times,
        [0, 500, 1_000, 1_500, 2_000, 2_500, 3_000, 3_500, 4_000]
    );
    let (_, delay, _) = driver.release();
    assert_eq!(delay.0, 9 * 500 * 1_000_000);
}
