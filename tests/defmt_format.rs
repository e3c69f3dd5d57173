//! Feature `defmt`: every public type implements `defmt::Format`, and formatting goes
//! through a global logger. The logger here is a stub for this test only: it records the
//! bytes it is given (defmt hands the logger the raw, unencoded frame: the interned
//! format string's index, then the arguments in little-endian binary). `defmt::println!`
//! is used because it is not filtered by log level (`DEFMT_LOG`). Run with
//! `--features defmt` (or `--all-features`).
#![cfg(feature = "defmt")]

mod common;
#[allow(unused_imports)]
use common::{at, secs};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};

use isohypse::uses::{Drone, DroneSettings, DroneState, Output, Sample};
use isohypse::{Height, Pressure};

/// Bytes written since the last `take()`, and whether the logger is acquired.
static BYTES: Mutex<Vec<u8>> = Mutex::new(Vec::new());
static ACQUIRED: AtomicBool = AtomicBool::new(false);
/// defmt's logger is global; the tests that log take this lock.
static SERIAL: Mutex<()> = Mutex::new(());

#[defmt::global_logger]
struct RecordingLogger;

// SAFETY: the logger records into a Mutex-protected buffer and tracks acquire/release;
// defmt calls acquire before write and release after, from one thread at a time here
// (the tests that log hold `SERIAL`).
unsafe impl defmt::Logger for RecordingLogger {
    fn acquire() {
        assert!(
            !ACQUIRED.swap(true, Ordering::SeqCst),
            "logger acquired twice"
        );
    }
    unsafe fn flush() {}
    unsafe fn release() {
        assert!(
            ACQUIRED.swap(false, Ordering::SeqCst),
            "released without acquire"
        );
    }
    unsafe fn write(bytes: &[u8]) {
        BYTES.lock().unwrap().extend_from_slice(bytes);
    }
}

defmt::timestamp!("{=u32}", 0);

fn take() -> Vec<u8> {
    std::mem::take(&mut *BYTES.lock().unwrap())
}

fn contains(haystack: &[u8], needle: &[u8]) -> bool {
    haystack.windows(needle.len()).any(|w| w == needle)
}

/// Compile-time check: `T` implements `defmt::Format`.
fn is_format<T: defmt::Format + ?Sized>() {}

#[test]
fn every_public_type_implements_format() {
    use isohypse::{atmosphere, datum, error, filter, flight, geopotential, humidity, model};
    use isohypse::{sounding, time, track, units, uses};
    // units, error
    is_format::<units::Pressure>();
    is_format::<units::Temperature>();
    is_format::<units::Height>();
    is_format::<units::VerticalSpeed>();
    is_format::<units::RelativeHumidity>();
    is_format::<error::Error>();
    // physics
    is_format::<atmosphere::Layer>();
    is_format::<atmosphere::AtmosphereState>();
    is_format::<atmosphere::StandardAtmosphere>();
    is_format::<geopotential::Gravity>();
    is_format::<humidity::MixingRatio>();
    is_format::<model::Reference>();
    is_format::<model::AirSample>();
    is_format::<model::Segment>();
    is_format::<model::Anchor>();
    is_format::<model::InputUncertainty>();
    is_format::<model::TemperatureModel>();
    is_format::<model::ProfileKnot>();
    is_format::<model::TemperatureProfile<8>>();
    // datum
    is_format::<datum::AltimeterSetting>();
    is_format::<datum::Calibration<model::TemperatureModel>>();
    // sounding
    is_format::<sounding::Level>();
    is_format::<sounding::Profile<8>>();
    is_format::<sounding::SoundingStep>();
    is_format::<sounding::Sounding<8>>();
    is_format::<sounding::PendingStep>();
    // filters
    is_format::<filter::AlphaBeta>();
    is_format::<filter::GroundReference>();
    is_format::<filter::GroundReferenceConfig>();
    is_format::<filter::KalmanOutcome>();
    is_format::<filter::VerticalEstimate>();
    is_format::<filter::VerticalKalman>();
    is_format::<filter::VerticalKalmanConfig>();
    is_format::<filter::Median<5>>();
    is_format::<filter::MovingAverage<4>>();
    is_format::<filter::OnePole>();
    // trackers
    is_format::<flight::Phase>();
    is_format::<flight::PhaseEvent>();
    is_format::<flight::PhaseSettings>();
    is_format::<flight::FlightPhases>();
    is_format::<track::HikeConfig>();
    is_format::<track::HikeReport>();
    is_format::<track::HikeTracker>();
    is_format::<track::RestConfig>();
    is_format::<track::RestState>();
    is_format::<track::PressureTendency>();
    is_format::<track::TendencyConfig>();
    is_format::<track::AscentTotals>();
    is_format::<track::Trend>();
    // time
    is_format::<time::Instant>();
    is_format::<time::Duration>();
    is_format::<time::WrappingTicks<1_000>>();
    // the use types
    is_format::<uses::Sample>();
    is_format::<uses::Flags>();
    is_format::<uses::Output<uses::DroneState>>();
    is_format::<uses::Output<uses::BalloonState>>();
    is_format::<uses::Output<uses::WalkState>>();
    is_format::<uses::Output<uses::State>>();
    is_format::<uses::Change<uses::DroneState>>();
    is_format::<uses::DroneState>();
    is_format::<uses::BalloonState>();
    is_format::<uses::WalkState>();
    is_format::<uses::State>();
    is_format::<uses::DroneSettings>();
    is_format::<uses::BalloonSettings>();
    is_format::<uses::BalloonModel>();
    is_format::<uses::WalkSettings>();
    is_format::<uses::Drone<'static>>();
    is_format::<uses::Balloon<'static, 8>>();
    is_format::<uses::Walk<'static>>();
    #[cfg(feature = "embedded-hal")]
    {
        use isohypse::sensor;
        is_format::<sensor::Reading>();
        is_format::<sensor::DriverError<u8>>();
        is_format::<sensor::RunSummary>();
        is_format::<sensor::SensorDriver<(), (), uses::Drone<'static>>>();
        is_format::<sensor::ExampleBarometer<()>>();
        is_format::<sensor::ExampleBarometerError<u8>>();
    }
    #[cfg(feature = "embedded-hal-async")]
    {
        is_format::<isohypse::sensor_async::AsyncSensorDriver<(), (), uses::Walk<'static>>>();
    }
}

#[test]
fn formatting_writes_the_values_through_the_logger() {
    let _serial = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    take();

    // A unit: its f32 travels as its little-endian bytes.
    let h = Height::from_meters(123.25).unwrap();
    defmt::println!("{}", h);
    let frame = take();
    assert!(!ACQUIRED.load(Ordering::SeqCst), "released after the frame");
    assert!(
        contains(&frame, &123.25_f32.to_le_bytes()),
        "frame {frame:02x?} carries the height's bits"
    );

    // Two different pressures give two different frames.
    defmt::println!("{}", Pressure::from_hpa(1013.25).unwrap());
    let a = take();
    defmt::println!("{}", Pressure::from_hpa(850.0).unwrap());
    let b = take();
    assert_ne!(a, b);
    assert!(contains(&a, &101_325.0_f32.to_le_bytes()));
    assert!(contains(&b, &85_000.0_f32.to_le_bytes()));
}

#[test]
fn use_output_and_state_format() {
    let _serial = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    take();
    let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
    let out: Output<DroneState> = p.process(&Sample::pressure(at(0.0), 97_700.0));
    defmt::println!("{}", out);
    let frame = take();
    assert!(out.altitude_sigma_m > 0.0);
    assert!(contains(&frame, &out.altitude_sigma_m.to_le_bytes()));
    assert!(contains(&frame, &out.flags.0.to_le_bytes()));

    // The whole drone (settings, filters, trackers) formats too.
    defmt::println!("{}", p);
    let state = take();
    assert!(
        state.len() > frame.len(),
        "the state carries more than one output"
    );
    // ... including the last output it keeps
    assert!(contains(&state, &out.altitude_sigma_m.to_le_bytes()));
    // The drone preset's pressure range travels with the settings.
    assert!(contains(&state, &30_000.0_f32.to_le_bytes()));
    assert!(contains(&state, &110_000.0_f32.to_le_bytes()));
}

#[cfg(feature = "embedded-hal")]
#[test]
fn sensor_types_format() {
    use isohypse::sensor::{DriverError, Reading};
    let _serial = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    take();
    let r = Reading {
        pressure_pa: 95_432.5,
        sensor_temperature_c: Some(31.25),
        air_temperature_c: Some(-3.5),
        humidity_pct: None,
    };
    defmt::println!("{}", r);
    let frame = take();
    assert!(contains(&frame, &95_432.5_f32.to_le_bytes()));
    assert!(contains(&frame, &31.25_f32.to_le_bytes()));
    assert!(contains(&frame, &(-3.5_f32).to_le_bytes()));
    defmt::println!("{}", DriverError::Sensor(0xA5_u8));
    assert!(contains(&take(), &[0xA5]));
}
