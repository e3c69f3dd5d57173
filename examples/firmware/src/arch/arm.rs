//! Cortex-M: cortex-m-rt start-up, cortex-m-semihosting output and exit, the
//! panic-semihosting handler, and SysTick as the counter.
//!
//! SysTick is a 24-bit down counter clocked from the core clock (CLKSOURCE = 1). Under
//! QEMU with `-icount shift=0` every instruction advances virtual time by 1 ns, so one
//! tick is (1 / core clock) / 1 ns instructions: 40 on `mps2-an386` (25 MHz), 62.5 on
//! `microbit` (16 MHz), 50 on `mps2-an505` (20 MHz).

use cortex_m::peripheral::{Peripherals, SYST, syst::SystClkSource};
use cortex_m_semihosting::debug;
use panic_semihosting as _;

pub use cortex_m_rt::entry;
pub use cortex_m_semihosting::hprintln;

/// What one count of [`counter`] is, for the firmware's output.
pub const COUNTER_UNIT: &str = "SysTick tick";

/// SysTick is a 24-bit down counter.
const SYSTICK_MASK: u32 = 0x00FF_FFFF;

/// Ends the run over semihosting: QEMU exits with status 0 (`ok`) or 1.
pub fn exit(ok: bool) -> ! {
    debug::exit(if ok {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    #[allow(clippy::empty_loop)]
    loop {}
}

/// Starts SysTick from the core clock, free running over its whole 24-bit range.
/// False when the core peripherals were already taken.
pub fn start_counter() -> bool {
    let Some(mut peripherals) = Peripherals::take() else {
        return false;
    };
    let syst = &mut peripherals.SYST;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(SYSTICK_MASK);
    syst.clear_current();
    syst.enable_counter();
    true
}

/// The counter now.
#[inline(always)]
pub fn counter() -> u32 {
    SYST::get_current()
}

/// Counts from `start` to `end` (SysTick counts down and wraps at 24 bits).
#[inline(always)]
pub fn elapsed(start: u32, end: u32) -> u32 {
    start.wrapping_sub(end) & SYSTICK_MASK
}

/// One `nop` instruction, inlined.
#[inline(always)]
pub fn nop() {
    cortex_m::asm::nop();
}
