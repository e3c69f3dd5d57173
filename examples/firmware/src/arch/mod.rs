//! What differs between the cores: start-up (`entry`), output and exit (semihosting),
//! the panic handler, the instruction counter and `nop`. Everything else in the firmware
//! is shared.
//!
//! Each architecture module provides the same items:
//!
//! - `entry`: the attribute for the firmware's `main`;
//! - `hprintln!`: a line to the host's standard output over semihosting;
//! - `exit(ok)`: ends the run; QEMU exits with status 0 for `true`, 1 for `false`;
//! - `start_counter()`, `counter()`, `elapsed(start, end)`: the counter the firmware
//!   times with, and its unit (`COUNTER_UNIT`);
//! - `nop()`: one instruction, inlined, for the calibration.

#[cfg(target_arch = "arm")]
mod arm;
#[cfg(target_arch = "arm")]
pub use arm::*;

#[cfg(target_arch = "riscv32")]
mod riscv;
#[cfg(target_arch = "riscv32")]
pub use riscv::*;
