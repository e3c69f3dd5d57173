//! Running median over the last `N` samples: removes isolated spikes.

use crate::Error;

/// Running median of the last `N` samples (a spike filter).
///
/// A spike shorter than half the window (at most `(N - 1) / 2` consecutive bad
/// samples) never reaches the output, while a step in the input passes through
/// unchanged in shape, delayed by `(N - 1) / 2` samples (common practice; the median
/// filter's edge-preserving property, Tukey 1977, *Exploratory Data Analysis*, from
/// memory). With an even `N` the output is the mean of the two middle values.
///
/// * Time per sample: one insertion sort of a copy of the window:
///   at most `N (N - 1) / 2` compare-exchanges, ten for `N = 5`. Meant for the short
///   windows of spike removal.
/// * State: one `[f32; N]` ring and two `usize` indices: `4 N + 2 * size_of::<usize>()`
///   bytes rounded up to a whole number of `usize` (`4 N + 8` on a 32-bit
///   microcontroller).
///
/// Hand-written rather than built on `heapless::HistoryBuf`: plain arrays keep the
/// state `Copy` and comparable with `PartialEq` (two filters are equal when they hold
/// the same samples in the same order, whatever their storage holds beyond them), and
/// the median itself is the crate's one function, which the walk's spike gate
/// uses too.
///
/// ```
/// use isohypse::filter::Median;
/// let mut m = Median::<3>::new();
/// for x in [10.0, 10.0, 95.0, 10.0, 10.0] {
///     let y = m.push(x)?;
///     assert_eq!(y, 10.0); // the spike at 95 never appears
/// }
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Median<const N: usize> {
    /// Samples in arrival order (ring buffer).
    window: [f32; N],
    /// Next write position in `window`.
    head: usize,
    /// Number of samples held (at most `N`).
    len: usize,
}

impl<const N: usize> Default for Median<N> {
    fn default() -> Self {
        Self::new()
    }
}

/// Median of the first `len` values of `values` (a copy, sorted in place by
/// insertion), the mean of the middle two for an even count; `None` for `len == 0`
/// (or `len > N`). The crate's one median.
pub(crate) fn median_of<const N: usize>(mut values: [f32; N], len: usize) -> Option<f32> {
    let held = values.get_mut(..len)?;
    for i in 1..held.len() {
        let mut j = i;
        while let Some([a, b]) = held.get_mut(j.wrapping_sub(1)..=j) {
            if *b >= *a {
                break;
            }
            core::mem::swap(a, b);
            j -= 1;
        }
    }
    let n = held.len();
    let upper = *held.get(n / 2)?;
    if n % 2 == 1 {
        Some(upper)
    } else {
        let lower = *held.get(n / 2 - 1)?;
        Some(lower + 0.5 * (upper - lower))
    }
}

impl<const N: usize> Median<N> {
    /// An empty filter. `N` must be at least 1 (checked at compile time).
    pub const fn new() -> Self {
        const { assert!(N > 0, "Median<N> needs N >= 1") };
        Self {
            window: [0.0; N],
            head: 0,
            len: 0,
        }
    }

    /// Adds a sample and returns the median of the samples held (fewer than `N` at the
    /// start).
    ///
    /// Errors: [`Error::NotFinite`] for NaN or infinite input; the filter is unchanged.
    pub fn push(&mut self, x: f32) -> Result<f32, Error> {
        if !x.is_finite() {
            return Err(Error::NotFinite);
        }
        if let Some(slot) = self.window.get_mut(self.head) {
            *slot = x;
        }
        self.head = if self.head + 1 >= N { 0 } else { self.head + 1 };
        if self.len < N {
            self.len += 1;
        }
        Ok(self.value().unwrap_or(x))
    }

    /// Median of the samples held, or `None` when empty. (The ring's first `len`
    /// slots hold exactly the samples held: it fills from slot 0 and then overwrites.)
    pub fn value(&self) -> Option<f32> {
        median_of(self.window, self.len)
    }

    /// Number of samples held (at most `N`).
    pub const fn len(&self) -> usize {
        self.len
    }

    /// Whether no sample is held.
    pub const fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Whether the window is full.
    pub const fn is_full(&self) -> bool {
        self.len == N
    }

    /// Forgets all samples. Only the counts are reset: the values beyond them are
    /// never read again.
    pub fn clear(&mut self) {
        self.head = 0;
        self.len = 0;
    }

    /// The `k`-th sample held, oldest first (`k < len`).
    fn held(&self, k: usize) -> Option<f32> {
        let i = (self.head + N - self.len + k) % N;
        self.window.get(i).copied()
    }
}

impl<const N: usize> PartialEq for Median<N> {
    /// The same samples held, in the same order of arrival; storage beyond them is
    /// not compared.
    fn eq(&self, other: &Self) -> bool {
        self.len == other.len && (0..self.len).all(|k| self.held(k) == other.held(k))
    }
}

#[cfg(test)]
mod tests;
