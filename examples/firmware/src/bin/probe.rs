//! Flash probe: the drone pipeline and nothing else.
//!
//! The flash the library takes in a firmware is this ELF minus the same ELF built with
//! feature `probe-empty`, which runs the same loop over the same samples with the
//! pipeline call left out (the samples still go through `black_box`). No checks, no
//! printing, no timing: unlike the measuring firmware (`main.rs`), nothing of a harness
//! is in the difference, so it is the library's code, constants and the maths and
//! soft-float routines it pulls in. `run.sh` builds both and prints the difference
//! (`elf_sizes.py`). The run only exits with success (it checks nothing).
//!
//! The drone preset's settings are fixed at compile time (`Pipeline<2, Fixed<Drone>>`,
//! the way the measuring firmware builds it); with feature `probe-borrowed` they are a
//! `static` borrowed at run time (`Pipeline<2, &'static Settings>`), for which the
//! compiler must keep the code of every option, since it cannot see which are used.
//! With feature `probe-reuse` the fixed settings turn on the Kalman filter's gain
//! reuse (`VerticalKalmanConfig::with_gain_reuse`), to measure what that code costs.
//!
//! The samples are a 50 Hz drone hop at an invented field (pressure falling about 12 Pa
//! per metre), as in the measuring firmware; they only need to be plausible.

#![no_std]
#![no_main]
#![deny(unsafe_code)]

use core::hint::black_box;

use cortex_m_rt::entry;
use cortex_m_semihosting::debug;
use panic_semihosting as _;

use isohypse::pipeline::Sample;
#[cfg(not(feature = "probe-empty"))]
use isohypse::pipeline::{Pipeline, Settings};

/// The drone preset, fixed at compile time.
#[cfg(not(any(feature = "probe-empty", feature = "probe-borrowed")))]
struct Drone;
#[cfg(not(any(feature = "probe-empty", feature = "probe-borrowed")))]
impl isohypse::pipeline::FixedSettings for Drone {
    #[cfg(not(feature = "probe-reuse"))]
    const SETTINGS: Settings = Settings::drone();
    /// With feature `probe-reuse`: the Kalman filter reuses a settled covariance.
    #[cfg(feature = "probe-reuse")]
    const SETTINGS: Settings = {
        let mut s = Settings::drone();
        s.estimator = isohypse::pipeline::Estimator::Kalman(
            isohypse::filter::VerticalKalmanConfig::DEFAULT.with_gain_reuse(),
        );
        s
    };
    type Parts = isohypse::pipeline::parts::Drone;
}
#[cfg(not(any(feature = "probe-empty", feature = "probe-borrowed")))]
type Store = isohypse::pipeline::Fixed<Drone>;
#[cfg(not(any(feature = "probe-empty", feature = "probe-borrowed")))]
const STORE: Store = isohypse::pipeline::Fixed::new();

/// The drone preset in flash, borrowed at run time.
#[cfg(all(feature = "probe-borrowed", not(feature = "probe-empty")))]
static DRONE: Settings = Settings::drone();
#[cfg(all(feature = "probe-borrowed", not(feature = "probe-empty")))]
type Store = &'static Settings;
#[cfg(all(feature = "probe-borrowed", not(feature = "probe-empty")))]
const STORE: Store = &DRONE;

const N: usize = 8;
/// Time stamps, s (50 Hz).
static TIME_S: [f64; N] = [0.0, 0.02, 0.04, 0.06, 0.08, 0.10, 0.12, 0.14];
/// Station pressure, Pa.
static PRESSURE_PA: [f32; N] = [
    98_210.0, 98_209.2, 98_210.5, 98_208.9, 98_207.0, 98_204.1, 98_200.3, 98_195.8,
];
/// Vertical acceleration, gravity removed, up positive, m/s^2.
static ACCEL_MPS2: [f32; N] = [0.02, -0.01, 0.03, 0.6, 1.2, 1.4, 1.3, 1.1];

/// `Pipeline::process`, never inlined, so that its code shows under a library symbol in
/// `elf_sizes.py --symbols` (names with `lib_process` count as the library's).
#[cfg(not(feature = "probe-empty"))]
#[inline(never)]
fn lib_process_probe(
    pipeline: &mut Pipeline<2, Store>,
    sample: &Sample,
) -> isohypse::pipeline::Output {
    pipeline.process(sample)
}

#[entry]
fn main() -> ! {
    #[cfg(not(feature = "probe-empty"))]
    let Ok(mut pipeline) = Pipeline::<2, Store>::new(STORE) else {
        debug::exit(debug::EXIT_FAILURE);
        #[allow(clippy::empty_loop)]
        loop {}
    };
    for i in 0..N {
        let mut sample = Sample::pressure(black_box(TIME_S[i]), black_box(PRESSURE_PA[i]));
        sample.accel_up_mps2 = Some(black_box(ACCEL_MPS2[i]));
        #[cfg(not(feature = "probe-empty"))]
        black_box(lib_process_probe(&mut pipeline, &sample));
        #[cfg(feature = "probe-empty")]
        black_box(sample);
    }
    debug::exit(debug::EXIT_SUCCESS);
    #[allow(clippy::empty_loop)]
    loop {}
}
