//! Yes/no state packed into one byte.
//!
//! Written here rather than taken from a crate: the state types need five or fewer
//! flags each, `const` reads, `PartialEq` and `defmt::Format`, and the gain is the
//! bytes a `bool` per flag costs in padding (a `bool` takes a byte, and the padding
//! that rounds a struct up to its 8-byte alignment often takes more).

/// Up to eight flags in one byte; each flag is a mask with one bit set.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Bits(u8);

impl Bits {
    /// All flags clear.
    pub(crate) const NONE: Self = Self(0);

    /// Whether the flag `mask` is set.
    pub(crate) const fn get(self, mask: u8) -> bool {
        self.0 & mask != 0
    }

    /// Sets the flag `mask` to `on`.
    pub(crate) fn set(&mut self, mask: u8, on: bool) {
        if on {
            self.0 |= mask;
        } else {
            self.0 &= !mask;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Bits;

    #[test]
    fn flags_are_independent() {
        let mut b = Bits::NONE;
        b.set(1, true);
        b.set(4, true);
        assert!(b.get(1) && !b.get(2) && b.get(4));
        b.set(1, false);
        assert!(!b.get(1) && b.get(4));
        assert_eq!(b, Bits(4));
    }
}
