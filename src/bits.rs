//! Yes/no state packed into one byte.
//!
//! Written here rather than taken from a crate: the state types need seven or fewer
//! flags each, `const` reads, `PartialEq` and `defmt::Format`, and the gain is the
//! bytes a `bool` per flag costs in padding (a `bool` takes a byte, and the padding
//! that rounds a struct up to its 8-byte alignment often takes more).

use core::num::NonZeroU8;

/// The highest bit, always set: the byte is never zero, so an enum holding the state
/// can keep its variant tag in that value (a "niche") instead of in extra bytes. The
/// use types' estimator state (a Kalman filter or a spike gate) needed 8 more bytes
/// without it once the Kalman settings took no room (measured, `size_of`).
const ALWAYS: u8 = 0x80;

/// Up to seven flags in one byte; each flag is a mask with one bit set, below 0x80.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Bits(NonZeroU8);

impl Bits {
    /// All flags clear.
    pub(crate) const NONE: Self = Self(NonZeroU8::MIN.saturating_add(ALWAYS - 1));

    /// Whether the flag `mask` is set.
    pub(crate) const fn get(self, mask: u8) -> bool {
        self.0.get() & mask & !ALWAYS != 0
    }

    /// Sets the flag `mask` to `on`.
    pub(crate) fn set(&mut self, mask: u8, on: bool) {
        let v = self.0.get();
        let v = if on { v | mask } else { v & !mask };
        // the sentinel bit keeps the value nonzero
        self.0 = NonZeroU8::MIN.saturating_add((v | ALWAYS) - 1);
    }
}

impl Default for Bits {
    fn default() -> Self {
        Self::NONE
    }
}

impl crate::snapshot::Snap for Bits {
    const LEN: usize = 1;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        w.bytes(&[self.0.get()]);
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), crate::Error> {
        let [b] = r.bytes::<1>()?;
        self.0 = NonZeroU8::new(b).ok_or(crate::Error::SnapshotCorrupt)?;
        Ok(())
    }
}

#[cfg(test)]
mod tests;
