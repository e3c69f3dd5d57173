//! The loop of the flash probes (`src/bin/probe.rs`: a `Drone`; `probe_balloon.rs`: a
//! `Balloon<64>`; `probe_walk.rs`: a `Walk`), shared by all three.
//!
//! Each probe runs one use type over eight samples and exits with success; it checks
//! nothing, prints nothing and times nothing. The flash the library takes in a firmware
//! is the probe's ELF minus the same ELF built with feature `probe-empty`: the same loop
//! over the same samples, formed the same way, with the use type and its call left out.
//! Unlike the measuring firmware (`main.rs`), nothing of a harness is in the difference,
//! so it is the library's code, constants and the maths and soft-float routines it pulls
//! in. `run.sh` builds both (the library with `default-features = false, features =
//! ["libm"]`) and prints the difference (`elf_sizes.py`).

use core::hint::black_box;

use isohypse::uses::Sample;

/// Forms sample `i` with `sample` for `i` in `0..count`, passes it through `black_box`
/// (so that it is formed whether or not a library call reads it) and hands it to
/// `process`, then exits with success. In a probe `process` calls the use type; in its
/// `probe-empty` build it does nothing.
pub fn run(count: usize, sample: impl Fn(usize) -> Sample, mut process: impl FnMut(&Sample)) -> ! {
    for i in 0..count {
        process(black_box(&sample(i)));
    }
    crate::arch::exit(true)
}
