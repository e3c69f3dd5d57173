//! Flash probe: a `Balloon<64>` and nothing else.
//!
//! The flash the library takes is this ELF minus the same ELF built with feature
//! `probe-empty` (the same loop over the same samples, no `Balloon`): see
//! `src/probe.rs`, the loop the three probes share.
//!
//! The balloon's settings are a `static` (`BalloonSettings::DEFAULT`), borrowed by the
//! `Balloon` as on a device; its stored profile holds 64 levels.
//!
//! The samples are the first seconds of an invented 1 Hz ascent: pressure falling
//! 60 Pa per second from 97 000 Pa (about 5 m/s), air temperature falling slowly,
//! humidity near 60 %. They only need to be plausible.

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
use isohypse::uses::{Balloon, BalloonSettings, BalloonState, Output};

/// The balloon's settings, in flash.
#[cfg(not(feature = "probe-empty"))]
static SETTINGS: BalloonSettings = BalloonSettings::DEFAULT;

const N: usize = 8;
/// Time stamps, us (1 Hz), as a device's microsecond timer gives them.
static TIME_US: [u64; N] = [
    0, 1_000_000, 2_000_000, 3_000_000, 4_000_000, 5_000_000, 6_000_000, 7_000_000,
];
/// Static pressure, Pa.
static PRESSURE_PA: [f32; N] = [
    97_000.0, 96_941.3, 96_879.2, 96_820.6, 96_760.1, 96_699.4, 96_641.0, 96_579.8,
];
/// Air temperature, degC.
static TEMPERATURE_C: [f32; N] = [18.40, 18.38, 18.33, 18.31, 18.27, 18.22, 18.20, 18.16];
/// Relative humidity, %.
static HUMIDITY_PCT: [f32; N] = [60.2, 60.1, 60.1, 59.9, 59.8, 59.8, 59.6, 59.5];

/// Sample `i`: pressure, air temperature and humidity, read through `black_box`.
fn sample(i: usize) -> Sample {
    let mut sample = Sample::pressure(
        Instant::from_micros(black_box(TIME_US[i])),
        black_box(PRESSURE_PA[i]),
    );
    sample.temperature_c = Some(black_box(TEMPERATURE_C[i]));
    sample.humidity_pct = Some(black_box(HUMIDITY_PCT[i]));
    sample
}

/// `Balloon::<64>::process`, never inlined, so that its code shows under a library
/// symbol in `elf_sizes.py --symbols` (names with `lib_process` count as the library's).
#[cfg(not(feature = "probe-empty"))]
#[inline(never)]
fn lib_process_probe(balloon: &mut Balloon<'static, 64>, sample: &Sample) -> Output<BalloonState> {
    balloon.process(sample)
}

#[entry]
fn main() -> ! {
    #[cfg(not(feature = "probe-empty"))]
    let Ok(mut balloon) = Balloon::<64>::new(&SETTINGS) else {
        arch::exit(false)
    };
    #[cfg(not(feature = "probe-empty"))]
    let process = |sample: &Sample| {
        black_box(lib_process_probe(&mut balloon, sample));
    };
    #[cfg(feature = "probe-empty")]
    let process = |_: &Sample| {};
    probe::run(N, sample, process)
}
