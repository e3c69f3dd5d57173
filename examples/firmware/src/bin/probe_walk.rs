//! Flash probe: a `Walk` and nothing else.
//!
//! The flash the library takes is this ELF minus the same ELF built with feature
//! `probe-empty` (the same loop over the same samples, no `Walk`): see `src/probe.rs`,
//! the loop the three probes share.
//!
//! The walk's settings are a `static` (`WalkSettings::DEFAULT`), borrowed by the `Walk`
//! as on a device.
//!
//! The samples are eight seconds of an invented walk uphill at 1 Hz, pressure only
//! (falling about 1 Pa per second, 2 Pa noise). They only need to be plausible.

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
use isohypse::uses::{Output, Walk, WalkSettings, WalkState};

/// The walk's settings, in flash.
#[cfg(not(feature = "probe-empty"))]
static SETTINGS: WalkSettings = WalkSettings::DEFAULT;

const N: usize = 8;
/// Time stamps, us (1 Hz), as a device's microsecond timer gives them.
static TIME_US: [u64; N] = [
    0, 1_000_000, 2_000_000, 3_000_000, 4_000_000, 5_000_000, 6_000_000, 7_000_000,
];
/// Station pressure, Pa.
static PRESSURE_PA: [f32; N] = [
    95_000.0, 94_997.1, 94_998.4, 94_995.2, 94_993.9, 94_994.6, 94_991.0, 94_990.3,
];

/// Sample `i`: pressure only, read through `black_box`.
fn sample(i: usize) -> Sample {
    Sample::pressure(
        Instant::from_micros(black_box(TIME_US[i])),
        black_box(PRESSURE_PA[i]),
    )
}

/// `Walk::process`, never inlined, so that its code shows under a library symbol in
/// `elf_sizes.py --symbols` (names with `lib_process` count as the library's).
#[cfg(not(feature = "probe-empty"))]
#[inline(never)]
fn lib_process_probe(walk: &mut Walk<'static>, sample: &Sample) -> Output<WalkState> {
    walk.process(sample)
}

#[entry]
fn main() -> ! {
    #[cfg(not(feature = "probe-empty"))]
    let Ok(mut walk) = Walk::new(&SETTINGS) else {
        arch::exit(false)
    };
    #[cfg(not(feature = "probe-empty"))]
    let process = |sample: &Sample| {
        black_box(lib_process_probe(&mut walk, sample));
    };
    #[cfg(feature = "probe-empty")]
    let process = |_: &Sample| {};
    probe::run(N, sample, process)
}
