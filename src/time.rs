//! Integer time as firmware keeps it: [`Instant`] (microseconds since any epoch the
//! firmware chooses, usually boot), [`Duration`], and [`WrappingTicks`] to extend a
//! wrapping `u32` tick counter (a millisecond `SysTick` count, an RTC) into instants.
//!
//! Differences are taken in integers; only the step handed to the maths is turned into
//! `f32` seconds ([`Duration::as_secs_f32`]). A `u64` of microseconds lasts 584 542
//! years, so an [`Instant`] itself never wraps; a 32-bit counter does, and
//! [`WrappingTicks`] counts its wraps. Feeding the raw counter without it is also safe:
//! the use types see the wrap as a clock fault, flag it and carry on (see
//! [`crate::uses::Flags::CLOCK_FAULT`]).
//!
//! ```
//! use isohypse::time::{Duration, Instant, WrappingTicks};
//! // a 1 kHz counter that wraps after 49.7 days
//! let mut clock = WrappingTicks::<1_000>::new();
//! let a = clock.instant(u32::MAX - 9); // 10 ms before the wrap
//! let b = clock.instant(10); // 10 ms after it
//! assert_eq!(b.checked_duration_since(a), Some(Duration::from_millis(20)));
//! assert_eq!(Instant::from_millis(1_500).as_micros(), 1_500_000);
//! ```
//!
//! Written here rather than taken from a crate: the time crates for embedded Rust
//! either need a global time driver or carry the tick rate as type parameters through
//! every signature; the library needs one 8-byte point in time and its differences.

/// A point in time: whole microseconds since an epoch of the caller's choosing.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Instant {
    micros: u64,
}

/// A span of time: whole microseconds, never negative.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Duration {
    micros: u64,
}

impl Instant {
    /// The epoch.
    pub const ZERO: Instant = Instant { micros: 0 };

    /// The instant `micros` microseconds after the epoch.
    pub const fn from_micros(micros: u64) -> Self {
        Self { micros }
    }

    /// The instant `millis` milliseconds after the epoch.
    pub const fn from_millis(millis: u64) -> Self {
        Self::from_micros(millis.saturating_mul(1_000))
    }

    /// The instant `secs` seconds after the epoch.
    pub const fn from_secs(secs: u64) -> Self {
        Self::from_micros(secs.saturating_mul(1_000_000))
    }

    /// Microseconds since the epoch.
    pub const fn as_micros(self) -> u64 {
        self.micros
    }

    /// Milliseconds since the epoch (rounded down).
    pub const fn as_millis(self) -> u64 {
        self.micros / 1_000
    }

    /// The time from `earlier` to `self`; `None` if `earlier` is later.
    pub const fn checked_duration_since(self, earlier: Instant) -> Option<Duration> {
        match self.micros.checked_sub(earlier.micros) {
            Some(micros) => Some(Duration { micros }),
            None => None,
        }
    }

    /// `self + d`, `None` past the end of time.
    pub const fn checked_add(self, d: Duration) -> Option<Instant> {
        match self.micros.checked_add(d.micros) {
            Some(micros) => Some(Instant { micros }),
            None => None,
        }
    }

    /// `self - d`, the epoch at the most.
    pub const fn saturating_sub(self, d: Duration) -> Instant {
        Instant {
            micros: self.micros.saturating_sub(d.micros),
        }
    }
}

impl Duration {
    /// No time.
    pub const ZERO: Duration = Duration { micros: 0 };

    /// `micros` microseconds.
    pub const fn from_micros(micros: u64) -> Self {
        Self { micros }
    }

    /// `millis` milliseconds.
    pub const fn from_millis(millis: u64) -> Self {
        Self::from_micros(millis.saturating_mul(1_000))
    }

    /// `secs` seconds.
    pub const fn from_secs(secs: u64) -> Self {
        Self::from_micros(secs.saturating_mul(1_000_000))
    }

    /// The span in microseconds.
    pub const fn as_micros(self) -> u64 {
        self.micros
    }

    /// The span in seconds as an `f32`.
    ///
    /// Spans up to 4 295 s (a `u32` of microseconds) are rounded once: the FPU's
    /// `u32` conversion (one instruction on a Cortex-M4F), exact below 2^24 us
    /// (16.8 s) and rounded once above, then a division by 10^6, exact in `f32`.
    /// Longer spans are formed from the two 32-bit halves of the count (within two
    /// units in the last place), so that no 64-bit floating-point routine is linked.
    pub fn as_secs_f32(self) -> f32 {
        match u32::try_from(self.micros) {
            Ok(small) => small as f32 / 1.0e6,
            Err(_) => {
                let high = (self.micros >> 32) as u32;
                let low = self.micros as u32;
                (high as f32 * 4_294_967_296.0 + low as f32) / 1.0e6
            }
        }
    }

    /// The span `secs` seconds, rounded to the microsecond; `None` for a negative,
    /// non-finite or too large value (beyond 4 294 967 295 s, 136 years). Whole
    /// seconds and the fraction are converted apart, through `u32`, so that no 64-bit
    /// floating-point routine is linked.
    pub fn from_secs_f32(secs: f32) -> Option<Self> {
        // 4.294 967e9 is the largest f32 below 2^32
        if !(0.0..=4.294_967e9).contains(&secs) {
            return None;
        }
        let whole = secs as u32;
        // the fraction is exact in f32 (Sterbenz); adding a half and truncating rounds
        // it to the nearest microsecond
        let fraction_us = ((secs - whole as f32) * 1.0e6 + 0.5) as u32;
        Some(Self::from_micros(
            u64::from(whole) * 1_000_000 + u64::from(fraction_us),
        ))
    }
}

/// Where firmware reads the time: a monotonic timer, an RTC, an executor's clock.
/// Any `FnMut() -> Instant` closure is a clock.
pub trait Clock {
    /// The instant now.
    fn now(&mut self) -> Instant;
}

impl<F: FnMut() -> Instant> Clock for F {
    fn now(&mut self) -> Instant {
        self()
    }
}

/// Extends a wrapping `u32` counter of ticks at `HZ` ticks per second into
/// [`Instant`]s. Call [`Self::instant`] at least once per wrap of the counter (49.7 days
/// for a 1 kHz counter, 71.6 minutes for a 1 MHz one): each call that sees the raw count
/// below the previous one counts a wrap. State: 16 bytes.
///
/// `HZ` must be between 1 and 1 000 000 (checked when the program is compiled).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WrappingTicks<const HZ: u32> {
    wraps: u32,
    last: u32,
}

impl<const HZ: u32> WrappingTicks<HZ> {
    const RATE_OK: () = assert!(HZ >= 1 && HZ <= 1_000_000, "HZ must be 1..=1_000_000");

    /// A clock whose counter has not been read yet (the first reading is taken as it is).
    pub const fn new() -> Self {
        let () = Self::RATE_OK;
        Self { wraps: 0, last: 0 }
    }

    /// The instant of the raw counter value `ticks` (monotonic across wraps).
    pub fn instant(&mut self, ticks: u32) -> Instant {
        if ticks < self.last {
            self.wraps = self.wraps.wrapping_add(1);
        }
        self.last = ticks;
        let total = (u64::from(self.wraps) << 32) | u64::from(ticks);
        // ticks * 10^6 / HZ without overflow: whole seconds and the remainder apart
        let hz = u64::from(HZ);
        let micros = (total / hz)
            .saturating_mul(1_000_000)
            .saturating_add((total % hz) * 1_000_000 / hz);
        Instant::from_micros(micros)
    }
}

/// Test helper: the instant `s` seconds after the epoch (rounded to the microsecond).
#[cfg(test)]
pub(crate) fn at(s: f64) -> Instant {
    Instant::from_micros((s * 1.0e6).round() as u64)
}

crate::snapshot::snap_fields!(Instant { micros });

#[cfg(test)]
mod tests;
