//! RISC-V (rv32imc): riscv-rt start-up, riscv-semihosting output and exit, a panic
//! handler that prints over semihosting and exits with failure, and the `mcycle` CSR as
//! the counter.
//!
//! QEMU's `virt` board has no cycle model: with `-icount shift=0` its `mcycle` CSR reads
//! the virtual clock in nanoseconds, which advances by exactly 1 ns per instruction, so
//! one count is one instruction (without `-icount` it reads the host's clock, and the
//! calibration fails). The firmware reads the low 32 bits; the longest timed loop is far
//! below 2^32 instructions.

pub use riscv_rt::entry;
pub use riscv_semihosting::hprintln;

use riscv_semihosting::debug;

/// What one count of [`counter`] is, for the firmware's output.
pub const COUNTER_UNIT: &str = "mcycle count";

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

/// Prints the panic message over semihosting and exits with failure.
#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    hprintln!("{}", info);
    exit(false)
}

/// `mcycle` counts from reset in machine mode; nothing to start.
pub fn start_counter() -> bool {
    true
}

/// The counter now (the low 32 bits of `mcycle`).
#[inline(always)]
pub fn counter() -> u32 {
    riscv::register::mcycle::read() as u32
}

/// Counts from `start` to `end` (`mcycle` counts up; its low half wraps at 32 bits).
#[inline(always)]
pub fn elapsed(start: u32, end: u32) -> u32 {
    end.wrapping_sub(start)
}

/// One `nop` instruction, inlined.
#[inline(always)]
pub fn nop() {
    riscv::asm::nop();
}
