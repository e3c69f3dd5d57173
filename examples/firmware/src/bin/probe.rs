//! Flash probe: a `Drone` and nothing else.
//!
//! The flash the library takes is this ELF minus the same ELF built with feature
//! `probe-empty` (the same loop over the same samples, no `Drone`): see `src/probe.rs`,
//! the loop the three probes share.
//!
//! The drone's settings are a `static` (`DroneSettings::DEFAULT`), borrowed by the
//! `Drone` as on a device. With feature `probe-reuse` they turn on the Kalman filter's
//! gain reuse (`VerticalKalmanConfig::with_gain_reuse`), to measure what that code
//! costs.
//!
//! The samples are a 50 Hz drone hop at an invented field (pressure falling about 12 Pa
//! per metre), as in the measuring firmware; they only need to be plausible.

#![no_std]
#![no_main]
#![deny(unsafe_code)]

use core::hint::black_box;

/// Start-up, exit and the panic handler of each core (shared with the measuring firmware).
#[path = "../arch/mod.rs"]
#[allow(dead_code, unused_imports)]
mod arch;
/// The loop the probes share.
#[path = "../probe.rs"]
mod probe;

use arch::entry;

use isohypse::time::Instant;
use isohypse::uses::Sample;
#[cfg(not(feature = "probe-empty"))]
use isohypse::uses::{Drone, DroneSettings, DroneState, Output};

/// The drone's settings, in flash.
#[cfg(not(any(feature = "probe-empty", feature = "probe-reuse")))]
static SETTINGS: DroneSettings = DroneSettings::DEFAULT;
/// The drone's settings, in flash, with the Kalman filter reusing a settled covariance.
#[cfg(all(feature = "probe-reuse", not(feature = "probe-empty")))]
static SETTINGS: DroneSettings = DroneSettings {
    kalman: isohypse::filter::VerticalKalmanConfig::DEFAULT.with_gain_reuse(),
    ..DroneSettings::DEFAULT
};

const N: usize = 8;
/// Time stamps, us (50 Hz), as a device's microsecond timer gives them.
static TIME_US: [u64; N] = [0, 20_000, 40_000, 60_000, 80_000, 100_000, 120_000, 140_000];
/// Station pressure, Pa.
static PRESSURE_PA: [f32; N] = [
    98_210.0, 98_209.2, 98_210.5, 98_208.9, 98_207.0, 98_204.1, 98_200.3, 98_195.8,
];
/// Vertical acceleration, gravity removed, up positive, m/s^2.
static ACCEL_MPS2: [f32; N] = [0.02, -0.01, 0.03, 0.6, 1.2, 1.4, 1.3, 1.1];

/// Sample `i`: pressure and vertical acceleration, read through `black_box`.
fn sample(i: usize) -> Sample {
    let mut sample = Sample::pressure(
        Instant::from_micros(black_box(TIME_US[i])),
        black_box(PRESSURE_PA[i]),
    );
    sample.accel_up_mps2 = Some(black_box(ACCEL_MPS2[i]));
    sample
}

/// `Drone::process`, never inlined, so that its code shows under a library symbol in
/// `elf_sizes.py --symbols` (names with `lib_process` count as the library's).
#[cfg(not(feature = "probe-empty"))]
#[inline(never)]
fn lib_process_probe(drone: &mut Drone<'static>, sample: &Sample) -> Output<DroneState> {
    drone.process(sample)
}

#[entry]
fn main() -> ! {
    #[cfg(not(feature = "probe-empty"))]
    let Ok(mut drone) = Drone::new(&SETTINGS) else {
        arch::exit(false)
    };
    #[cfg(not(feature = "probe-empty"))]
    let process = |sample: &Sample| {
        black_box(lib_process_probe(&mut drone, sample));
    };
    #[cfg(feature = "probe-empty")]
    let process = |_: &Sample| {};
    probe::run(N, sample, process)
}
