//! Runs isohypse on a Cortex-M or RISC-V core under QEMU and measures it.
//!
//! 1. Computes the library's standard pressure -> height conversion and the one-line
//!    sea-level power formula for the demo samples, and compares both with the values
//!    `build.rs` computed on the host from the same source and maths backend (within
//!    1 mm). Any difference fails the run (semihosting exit with failure).
//! 2. Counts instructions per call for each row of a table of (name, inputs, closure).
//!    QEMU runs with `-icount shift=0`: every guest instruction advances virtual time
//!    by exactly 1 ns. The counter (`arch`: SysTick, clocked from the core clock, on
//!    Cortex-M; the `mcycle` CSR, which QEMU derives from virtual time, on RISC-V)
//!    counts virtual time. The firmware calibrates instructions per count with a
//!    closure of exactly 1000 `nop` instructions, and subtracts the loop and call
//!    overhead measured with an identity closure, so a row's figure is the instructions
//!    its closure adds per call.
//!
//! Output goes to the host over semihosting; `run.sh` collects the tables. What differs
//! between the cores is in `arch`.

#![no_std]
#![no_main]
#![deny(unsafe_code)]

mod arch;
#[cfg_attr(
    any(feature = "drone-only", feature = "baseline-only"),
    allow(dead_code, unused_imports)
)]
mod demo;
mod flights;
mod formulas;

/// Demo samples and host-computed results (see `build.rs`).
mod samples {
    include!(concat!(env!("OUT_DIR"), "/samples.rs"));
}

use core::hint::black_box;

use arch::{entry, hprintln};

use formulas::SAMPLE_COUNT;
use samples::{HOST_BASELINE_M, HOST_LIBRARY_M, PRESSURES_PA, TROPOSPHERE_PA};

/// Every row runs over all samples this many times (600 calls), so that the counter's
/// resolution (at most 62.5 instructions) is about 0.1 instruction per call or less.
const REPEATS: usize = 20;
/// Largest accepted difference between the firmware's and the host's result, m.
const TOLERANCE_M: f32 = 0.001;

#[cfg(feature = "micromath")]
const BACKEND: &str = "micromath";
#[cfg(not(feature = "micromath"))]
const BACKEND: &str = "libm";

/// The library calls. With feature `baseline-only` they are replaced by stand-ins with no
/// library code, so the ELF size difference is the library's share of the firmware.
#[cfg(not(feature = "baseline-only"))]
mod library {
    /// Whether this build contains the library.
    pub const LINKED: bool = true;

    /// `isohypse::atmosphere::pressure_altitude` (geometric metres, U.S. 1976).
    pub fn pressure_altitude(p_pa: f32) -> f32 {
        crate::formulas::library_pressure_altitude(p_pa)
    }

    /// Geopotential height only (no conversion to geometric height).
    #[cfg_attr(not(feature = "breakdown"), allow(dead_code))]
    pub fn geopotential_height(p_pa: f32) -> f32 {
        match isohypse::Pressure::from_pa(p_pa)
            .and_then(|p| isohypse::atmosphere::US_1976.geopotential_height(p))
        {
            Ok(h) => h.meters(),
            Err(_) => f32::NAN,
        }
    }
}

#[cfg(feature = "baseline-only")]
#[allow(dead_code)]
mod library {
    pub const LINKED: bool = false;
    pub fn pressure_altitude(p_pa: f32) -> f32 {
        core::hint::black_box(p_pa)
    }
    pub fn geopotential_height(p_pa: f32) -> f32 {
        core::hint::black_box(p_pa)
    }
}

/// One measured row: a name, the inputs it is called with, the code per call, and the
/// index of the row its ratio is taken against. Rows may keep state between calls
/// (`FnMut`), e.g. a filter step.
struct Row<'a> {
    name: &'a str,
    inputs: &'a [f32; SAMPLE_COUNT],
    body: &'a mut dyn FnMut(f32) -> f32,
    versus: usize,
    /// Whether the row calls the library (shown as not linked in a `baseline-only` build).
    library: bool,
}

/// Counts (`arch::counter`) taken by `REPEATS` passes of `body` over `inputs`.
///
/// Never inlined, and `body` goes through `black_box`, so that every row runs the very
/// same loop with an indirect call: otherwise the optimiser may specialise the loop for
/// one closure (e.g. the identity) and the overhead subtracted would not be the same.
#[inline(never)]
fn ticks(body: &mut dyn FnMut(f32) -> f32, inputs: &[f32; SAMPLE_COUNT]) -> u32 {
    let body = black_box(body);
    let start = arch::counter();
    for _ in 0..REPEATS {
        for &x in inputs {
            black_box(body(black_box(x)));
        }
    }
    let end = arch::counter();
    arch::elapsed(start, end)
}

macro_rules! nop10 {
    () => {
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
        arch::nop();
    };
}
macro_rules! nop100 {
    () => {
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
        nop10!();
    };
}
/// Instructions in the calibration closure besides those of the identity closure.
const CALIBRATION_NOPS: u32 = 1000;

#[entry]
fn main() -> ! {
    arch::exit(run())
}

fn run() -> bool {
    if !arch::start_counter() {
        hprintln!("error: the counter could not be started");
        return false;
    }

    hprintln!(
        "isohypse firmware on {} [{}], maths backend {}, opt-level {}",
        env!("FIRMWARE_BOARD"),
        env!("FIRMWARE_TARGET"),
        BACKEND,
        env!("FIRMWARE_OPT_LEVEL")
    );

    let checked = check();
    let flights_checked = flights::check();
    sizes();
    let (measured, timing) = measure();
    flights::measure(&timing);
    checked && flights_checked && measured
}

/// Whether a difference is within `TOLERANCE_M`; NaN is not.
fn within_tolerance(difference_m: f32) -> bool {
    libm::fabsf(difference_m) <= TOLERANCE_M
}

/// Compares the firmware's results with the host's; prints the table and returns
/// whether every sample agrees within `TOLERANCE_M`.
fn check() -> bool {
    hprintln!("");
    hprintln!("check: firmware vs host (build.rs), same code and backend, tolerance 1 mm");
    hprintln!(
        "| p (hPa) | library (m) | host (m) | diff (m) | baseline (m) | host (m) | diff (m) |"
    );
    hprintln!("| ---: | ---: | ---: | ---: | ---: | ---: | ---: |");
    let mut ok = true;
    let mut library_exact = 0;
    let mut baseline_exact = 0;
    let mut library_worst = 0.0_f32;
    let mut baseline_worst = 0.0_f32;
    for ((&p, &host_lib), &host_base) in PRESSURES_PA
        .iter()
        .zip(HOST_LIBRARY_M.iter())
        .zip(HOST_BASELINE_M.iter())
    {
        let lib = library::pressure_altitude(black_box(p));
        let base = formulas::sea_level_power_formula(black_box(p));
        let d_lib = lib - host_lib;
        let d_base = base - host_base;
        hprintln!(
            "| {:.1} | {:.3} | {:.3} | {:.1e} | {:.3} | {:.3} | {:.1e} |",
            p / 100.0,
            lib,
            host_lib,
            d_lib,
            base,
            host_base,
            d_base
        );
        if library::LINKED && !within_tolerance(d_lib) {
            ok = false;
        }
        if !within_tolerance(d_base) {
            ok = false;
        }
        library_exact += usize::from(lib.to_bits() == host_lib.to_bits());
        baseline_exact += usize::from(base.to_bits() == host_base.to_bits());
        library_worst = library_worst.max(libm::fabsf(d_lib));
        baseline_worst = baseline_worst.max(libm::fabsf(d_base));
    }
    if library::LINKED {
        hprintln!(
            "check library : {} samples, {} bit-identical to host, worst |diff| {:e} m",
            SAMPLE_COUNT,
            library_exact,
            library_worst
        );
    } else {
        hprintln!("check library : not linked (baseline-only build)");
    }
    hprintln!(
        "check baseline: {} samples, {} bit-identical to host, worst |diff| {:e} m",
        SAMPLE_COUNT,
        baseline_exact,
        baseline_worst
    );
    let ok = ok && library::LINKED;
    hprintln!("check: {}", if ok { "PASS" } else { "FAIL" });
    ok
}

/// What the per-sample rows need from the calibration in `measure()`.
pub struct Timing {
    /// Instructions per count of the counter (calibrated).
    pub instructions_per_tick: f32,
    /// Instructions per call of the baseline formula (row 0).
    pub baseline: f32,
}

impl Timing {
    /// Instructions per call that `body` adds over `calls` calls of the demo loop, and
    /// the instructions per call of `inputs` alone (both net of the loop).
    ///
    /// The first is `body`'s ticks minus those of `inputs`, times instructions per
    /// tick. `inputs` forms the same inputs as `body` (the `Sample` read from the demo
    /// tables, its integer time stamp `i * period` in microseconds, or the time and
    /// height) and passes them through `black_box` without calling the library, so that
    /// what is left is the library's cost, as for the baseline row (whose pressures come
    /// from a table). What is subtracted is the harness's own work, which a device
    /// does differently (it reads a timer and its sensors): a 64-bit integer product
    /// for the stamp (a few instructions on the Cortex-M4F, a runtime call on the
    /// Cortex-M0) and copying the table values into the sample. The second figure
    /// shows how much that is.
    pub fn per_call(
        &self,
        body: &mut dyn FnMut(usize) -> f32,
        inputs: &mut dyn FnMut(usize) -> f32,
        calls: usize,
    ) -> (f32, f32) {
        let loop_only = demo_ticks(&mut |_| 0.0, calls);
        let empty = demo_ticks(inputs, calls);
        let full = demo_ticks(body, calls);
        let per_call = |ticks: f32| ticks * self.instructions_per_tick / calls as f32;
        (
            per_call(full as f32 - empty as f32),
            per_call(empty as f32 - loop_only as f32),
        )
    }
}

/// Counts taken by `calls` calls of `body(i)`, `i` = 0, 1, ... (one pass over a
/// demo flight, in order: the rows keep state between calls). Never inlined, `body`
/// behind `black_box`, as in `ticks`.
#[inline(never)]
fn demo_ticks(body: &mut dyn FnMut(usize) -> f32, calls: usize) -> u32 {
    let body = black_box(body);
    let start = arch::counter();
    for i in 0..calls {
        black_box(body(black_box(i)));
    }
    let end = arch::counter();
    arch::elapsed(start, end)
}

/// `size_of` of every state type on this target, and the snapshot lengths.
fn sizes() {
    use core::mem::size_of;
    use isohypse::filter::{VerticalKalman, VerticalKalmanConfig};
    use isohypse::uses::{self, BalloonState, Drone, DroneState, Walk, WalkState};
    use isohypse::{flight, sounding, track};
    type Balloon64 = uses::Balloon<'static, { demo::PROFILE_LEVELS }>;
    hprintln!("");
    hprintln!(
        "state sizes on {} (size_of, and snapshot lengths; bytes)",
        env!("FIRMWARE_TARGET")
    );
    hprintln!("| type | bytes |");
    hprintln!("| --- | ---: |");
    let row = |name: &str, bytes: usize| hprintln!("| {} | {} |", name, bytes);
    row("Drone (settings borrowed)", size_of::<Drone<'static>>());
    row("Walk (settings borrowed)", size_of::<Walk<'static>>());
    row(
        "Balloon<64> (settings borrowed, 64 stored levels)",
        size_of::<Balloon64>(),
    );
    row("Output<DroneState>", size_of::<uses::Output<DroneState>>());
    row(
        "Output<BalloonState>",
        size_of::<uses::Output<BalloonState>>(),
    );
    row("Output<WalkState>", size_of::<uses::Output<WalkState>>());
    row(
        "DroneSettings (in flash, borrowed)",
        size_of::<uses::DroneSettings>(),
    );
    row(
        "BalloonSettings (in flash, borrowed)",
        size_of::<uses::BalloonSettings>(),
    );
    row(
        "WalkSettings (in flash, borrowed)",
        size_of::<uses::WalkSettings>(),
    );
    row(
        "VerticalKalman<&'static VerticalKalmanConfig> (as a Drone holds it)",
        size_of::<VerticalKalman<&'static VerticalKalmanConfig>>(),
    );
    row(
        "VerticalKalman (configuration owned)",
        size_of::<VerticalKalman>(),
    );
    row("FlightPhases", size_of::<flight::FlightPhases>());
    row("HikeTracker", size_of::<track::HikeTracker>());
    row(
        "Sounding<64>",
        size_of::<sounding::Sounding<{ demo::PROFILE_LEVELS }>>(),
    );
    row("snapshot: Drone::SNAPSHOT_LEN", Drone::SNAPSHOT_LEN);
    row("snapshot: Walk::SNAPSHOT_LEN", Walk::SNAPSHOT_LEN);
    row(
        "snapshot: Balloon::<64>::SNAPSHOT_LEN",
        Balloon64::SNAPSHOT_LEN,
    );
    let goal = |name: &str, bytes: usize| {
        hprintln!(
            "goal: state <= 256 bytes (design notes): {} {} bytes, {}",
            name,
            bytes,
            if bytes <= 256 { "met" } else { "not met" }
        )
    };
    goal("Drone", size_of::<Drone<'static>>());
    goal("Walk", size_of::<Walk<'static>>());
}

/// Runs every row, prints instructions per call and the ratio to its reference row.
/// Returns false when the timer does not count as QEMU's `-icount shift=0` promises (then
/// the figures would mean nothing), and the calibration for the per-sample rows.
fn measure() -> (bool, Timing) {
    let pressures = &PRESSURES_PA;

    // Fixed rows: overhead and calibration.
    let mut identity = |x: f32| x;
    let mut nops = |x: f32| {
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        nop100!();
        x
    };
    let empty = ticks(&mut identity, pressures);
    let calibration = ticks(&mut nops, pressures);
    let calls = (REPEATS * SAMPLE_COUNT) as u32;
    let per_tick = calibration.saturating_sub(empty);
    if per_tick == 0 {
        hprintln!(
            "error: the {} counter does not count; cannot measure",
            arch::COUNTER_UNIT
        );
        let timing = Timing {
            instructions_per_tick: f32::NAN,
            baseline: f32::NAN,
        };
        return (false, timing);
    }
    // instructions per call = CALIBRATION_NOPS * (row - empty) / (calibration - empty)
    let per_call =
        |t: u32| -> f32 { (t as f32 - empty as f32) * CALIBRATION_NOPS as f32 / per_tick as f32 };
    let instructions_per_tick = (calls * CALIBRATION_NOPS) as f32 / per_tick as f32;
    hprintln!("");
    hprintln!(
        "calibration: {} calls x {} nop = {} counts -> {:.3} instructions per {} \
         (expected {}: 1 ns per instruction, {})",
        calls,
        CALIBRATION_NOPS,
        per_tick,
        instructions_per_tick,
        arch::COUNTER_UNIT,
        samples::NOMINAL_INSTRUCTIONS_PER_TICK,
        env!("FIRMWARE_CLOCK")
    );
    // One count either way over the calibration run is at most 1/9600; 0.1 % means the
    // clock or the instruction counting is not what the figures assume.
    let nominal = samples::NOMINAL_INSTRUCTIONS_PER_TICK;
    let calibrated = libm::fabsf(instructions_per_tick - nominal) <= 1.0e-3 * nominal;
    if !calibrated {
        hprintln!(
            "error: calibration differs from the expected value by more than 0.1 %; is QEMU run with -icount shift=0?"
        );
    }
    hprintln!(
        "loop + call overhead (subtracted from every row): {:.1} instructions per call",
        empty as f32 * CALIBRATION_NOPS as f32 / per_tick as f32
    );

    // The measured rows.
    let mut baseline = |p: f32| formulas::sea_level_power_formula(p);
    let mut pressure_altitude = |p: f32| library::pressure_altitude(p);
    let mut baseline_troposphere = |p: f32| formulas::sea_level_power_formula(p);
    let mut pressure_altitude_troposphere = |p: f32| library::pressure_altitude(p);

    #[cfg(feature = "breakdown")]
    let inputs = breakdown::Inputs::new();
    #[cfg(feature = "breakdown")]
    let mut geopotential = |p: f32| library::geopotential_height(p);
    #[cfg(all(feature = "breakdown", not(feature = "micromath")))]
    let (mut log1pf, mut expm1f) = (|x: f32| libm::log1pf(x), |x: f32| libm::expm1f(x));
    #[cfg(all(feature = "breakdown", not(feature = "micromath")))]
    let (mut ln, mut exp) = (|x: f32| libm::logf(x), |x: f32| libm::expf(x));
    #[cfg(all(feature = "breakdown", feature = "micromath"))]
    let (mut ln, mut exp) = (
        |x: f32| micromath::F32Ext::ln(x),
        |x: f32| micromath::F32Ext::exp(x),
    );
    #[cfg(feature = "breakdown")]
    let mut powf = |x: f32| formulas::backend_powf(x, breakdown::EXPONENT);

    // Each row's ratio is taken against the row at index `versus`. Rows of one call
    // over 30 inputs go here; calls into the library go through `mod library` so that a
    // `baseline-only` build leaves them out. Rows that keep state over a demo flight
    // (Kalman, sounding, the use types) are in `flights.rs`.
    let rows: &mut [Row] = &mut [
        Row {
            name: "baseline: 44330.77 * (1 - powf(p / 101325, 0.190263))",
            inputs: pressures,
            body: &mut baseline,
            versus: 0,
            library: false,
        },
        Row {
            name: "atmosphere::pressure_altitude(Pressure::from_pa(p)?)",
            inputs: pressures,
            body: &mut pressure_altitude,
            versus: 0,
            library: true,
        },
        Row {
            name: "baseline, troposphere samples (1050-230 hPa)",
            inputs: &TROPOSPHERE_PA,
            body: &mut baseline_troposphere,
            versus: 2,
            library: false,
        },
        Row {
            name: "pressure_altitude, troposphere samples (1050-230 hPa)",
            inputs: &TROPOSPHERE_PA,
            body: &mut pressure_altitude_troposphere,
            versus: 2,
            library: true,
        },
        #[cfg(feature = "breakdown")]
        Row {
            name: "  part: US_1976.geopotential_height (no geometric step)",
            inputs: pressures,
            body: &mut geopotential,
            versus: 0,
            library: true,
        },
        #[cfg(all(feature = "breakdown", not(feature = "micromath")))]
        Row {
            name: "  maths: libm::log1pf(p / p0 - 1)",
            inputs: &inputs.offsets,
            body: &mut log1pf,
            versus: 0,
            library: false,
        },
        #[cfg(all(feature = "breakdown", not(feature = "micromath")))]
        Row {
            name: "  maths: libm::expm1f(0.190263 * ln(p / p0))",
            inputs: &inputs.exponents,
            body: &mut expm1f,
            versus: 0,
            library: false,
        },
        #[cfg(feature = "breakdown")]
        Row {
            name: breakdown::LN_NAME,
            inputs: &inputs.ratios,
            body: &mut ln,
            versus: 0,
            library: false,
        },
        #[cfg(feature = "breakdown")]
        Row {
            name: breakdown::EXP_NAME,
            inputs: &inputs.exponents,
            body: &mut exp,
            versus: 0,
            library: false,
        },
        #[cfg(feature = "breakdown")]
        Row {
            name: breakdown::POWF_NAME,
            inputs: &inputs.ratios,
            body: &mut powf,
            versus: 0,
            library: false,
        },
    ];

    hprintln!("");
    hprintln!(
        "instructions per call ({} calls per row, overhead subtracted), {} [{}]",
        calls,
        env!("FIRMWARE_TARGET"),
        BACKEND
    );
    hprintln!("| row | instructions per call | ratio | vs row |");
    hprintln!("| --- | ---: | ---: | ---: |");
    let mut counts = [0.0_f32; 16];
    for (i, row) in rows.iter_mut().enumerate() {
        let n = per_call(ticks(row.body, row.inputs));
        if let Some(slot) = counts.get_mut(i) {
            *slot = n;
        }
        let reference = counts.get(row.versus).copied().unwrap_or(f32::NAN);
        if row.library && !library::LINKED {
            hprintln!("| {} | (not linked) | | |", row.name);
        } else {
            hprintln!(
                "| {} | {:.1} | {:.2} | {} |",
                row.name,
                n,
                n / reference,
                row.versus
            );
        }
    }
    let timing = Timing {
        instructions_per_tick,
        baseline: counts.first().copied().unwrap_or(f32::NAN),
    };
    (calibrated, timing)
}

/// Rows that show where the time goes: the maths functions alone, with the arguments
/// they get inside the formulas. Left out with `--no-default-features` (the size builds),
/// so that the ELF difference holds only what the library itself pulls in.
#[cfg(feature = "breakdown")]
mod breakdown {
    use super::SAMPLE_COUNT;

    const P0: f32 = 101_325.0;
    /// The exponent of the baseline formula.
    pub const EXPONENT: f32 = 0.190_263;

    /// Row names of the maths backend in use.
    #[cfg(not(feature = "micromath"))]
    pub const LN_NAME: &str = "  maths: libm::logf(p / p0)";
    #[cfg(not(feature = "micromath"))]
    pub const EXP_NAME: &str = "  maths: libm::expf(0.190263 * ln(p / p0))";
    #[cfg(not(feature = "micromath"))]
    pub const POWF_NAME: &str = "  maths: libm::powf(p / p0, 0.190263)";
    #[cfg(feature = "micromath")]
    pub const LN_NAME: &str = "  maths: micromath crate ln(p / p0)";
    #[cfg(feature = "micromath")]
    pub const EXP_NAME: &str = "  maths: micromath crate exp(0.190263 * ln(p / p0))";
    #[cfg(feature = "micromath")]
    pub const POWF_NAME: &str = "  maths: micromath crate powf(p / p0, 0.190263)";

    /// Arguments, computed before timing.
    pub struct Inputs {
        /// p / p0.
        pub ratios: [f32; SAMPLE_COUNT],
        /// p / p0 - 1.
        #[cfg_attr(feature = "micromath", allow(dead_code))]
        pub offsets: [f32; SAMPLE_COUNT],
        /// 0.190263 ln(p / p0).
        pub exponents: [f32; SAMPLE_COUNT],
    }

    impl Inputs {
        pub fn new() -> Self {
            let ratios: [f32; SAMPLE_COUNT] =
                core::array::from_fn(|i| super::PRESSURES_PA.get(i).copied().unwrap_or(P0) / P0);
            Self {
                ratios,
                offsets: ratios.map(|r| r - 1.0),
                exponents: ratios.map(|r| EXPONENT * libm::logf(r)),
            }
        }
    }
}
