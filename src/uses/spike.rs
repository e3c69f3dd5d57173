//! The walk's spike gate: a height far from the median of the last five taken is held
//! back as an outlier.

/// Median spike gate of the walk: the last five accepted model heights.
///
/// Its own ring of five with byte-sized indices rather than a
/// [`crate::filter::Median`] (whose `usize` indices would take the walk's state past
/// 256 bytes), with the median from the same function,
/// `crate::filter::median::median_of`.
#[derive(Debug, Clone, Copy)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct SpikeGate {
    /// The last accepted model heights, m: the first `len` entries (a ring written at
    /// `next` once full; the order does not matter for a median). Entries beyond `len`
    /// are stale and not compared.
    recent: [f32; 5],
    next: u8,
    len: u8,
    consecutive: u8,
    /// Outliers held back since start.
    pub(crate) outliers: u32,
    /// Seconds since the last accepted sample, summed from the walk's `f32` steps
    /// (infinite before the first): no `f64` time arithmetic per sample.
    pub(crate) age_s: f32,
}

impl PartialEq for SpikeGate {
    /// The same heights held in the same slots, and the same counts and age.
    fn eq(&self, other: &Self) -> bool {
        let held = usize::from(self.len);
        self.len == other.len
            && self.next == other.next
            && self.recent.get(..held) == other.recent.get(..held)
            && self.consecutive == other.consecutive
            && self.outliers == other.outliers
            && self.age_s == other.age_s
    }
}

/// After this long without an accepted sample (s) the spike window is stale: the next
/// sample is taken and starts it anew (after a gap the device may be anywhere).
const SPIKE_STALE_S: f32 = 120.0;

/// Outliers in a row after which the spike gate takes the next sample.
const SPIKE_REACQUIRE: u8 = 5;

impl SpikeGate {
    pub(crate) const fn new() -> Self {
        Self {
            recent: [0.0; 5],
            next: 0,
            len: 0,
            consecutive: 0,
            outliers: 0,
            age_s: f32::INFINITY,
        }
    }

    /// Median of the heights held (the mean of the middle two for an even count), or
    /// `None` before any.
    fn median(&self) -> Option<f32> {
        crate::filter::median::median_of(self.recent, usize::from(self.len))
    }

    /// Whether a sample `dt` seconds after the last one taken, at height `h`, is a
    /// spike.
    pub(crate) fn is_spike(&self, dt: f32, h: f32, gate: f32) -> bool {
        self.consecutive < SPIKE_REACQUIRE
            && self.age_s + dt <= SPIKE_STALE_S
            && self
                .median()
                .is_some_and(|median| (h - median).abs() > gate)
    }

    /// A spike held back `dt` seconds after the last sample taken.
    pub(crate) fn hold(&mut self, dt: f32) {
        self.consecutive = self.consecutive.saturating_add(1);
        self.outliers = self.outliers.saturating_add(1);
        self.age_s += dt;
    }

    /// A sample taken `dt` seconds after the last one, at height `h`.
    pub(crate) fn accept(&mut self, dt: f32, h: f32) {
        if self.consecutive >= SPIKE_REACQUIRE || self.age_s + dt > SPIKE_STALE_S {
            // a real step, or a long gap: start the window anew at the new level
            // (the counts only: zeroing the heights pulled in a `memclr` routine, 174
            // bytes of flash, measured)
            self.next = 0;
            self.len = 0;
        }
        self.consecutive = 0;
        self.age_s = 0.0;
        if !h.is_finite() {
            return;
        }
        if let Some(slot) = self.recent.get_mut(usize::from(self.next)) {
            *slot = h;
        }
        self.next = if self.next >= 4 { 0 } else { self.next + 1 };
        self.len = if self.len >= 5 { 5 } else { self.len + 1 };
    }
}

crate::snapshot::snap_fields!(SpikeGate {
    recent,
    next,
    len,
    consecutive,
    outliers,
    age_s
});
