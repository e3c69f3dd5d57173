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
mod tests {
    use super::*;

    #[test]
    fn removes_single_spike() {
        // Edge-preserving, spike-removing property of the running median (common
        // practice).
        let mut m = Median::<5>::new();
        let input = [
            1.0, 1.0, 1.0, 1.0, 1.0, 40.0, 1.0, 1.0, 1.0, -40.0, 1.0, 1.0,
        ];
        for x in input {
            assert_eq!(m.push(x).unwrap(), 1.0);
        }
    }

    #[test]
    fn two_adjacent_spikes_removed_by_window_5() {
        let mut m = Median::<5>::new();
        for x in [2.0, 2.0, 2.0, 9.0, 9.0, 2.0, 2.0, 2.0] {
            assert_eq!(m.push(x).unwrap(), 2.0);
        }
    }

    #[test]
    fn step_passes_delayed_by_half_window() {
        let mut m = Median::<5>::new();
        let mut out = [0.0f32; 12];
        for (i, o) in out.iter_mut().enumerate() {
            *o = m.push(if i < 6 { 0.0 } else { 3.0 }).unwrap();
        }
        // Step at sample 6 appears at sample 6 + (5 - 1) / 2 = 8.
        assert_eq!(&out[..8], &[0.0; 8]);
        assert_eq!(&out[8..], &[3.0; 4]);
    }

    #[test]
    fn matches_sorting_reference_on_varied_input() {
        // Reference: sort the last N values (definition of the median).
        let mut m = Median::<4>::new();
        let mut hist = [0.0f32; 500];
        let mut s: u32 = 12345;
        for i in 0..500 {
            s ^= s << 13;
            s ^= s >> 17;
            s ^= s << 5;
            let x = (s % 1000) as f32 / 10.0 - 50.0;
            hist[i] = x;
            let y = m.push(x).unwrap();
            let start = (i + 1).saturating_sub(4);
            let mut w = [0.0f32; 4];
            let n = i + 1 - start;
            w[..n].copy_from_slice(&hist[start..=i]);
            let w = &mut w[..n];
            w.sort_unstable_by(|a, b| a.partial_cmp(b).unwrap());
            let r = if n % 2 == 1 {
                w[n / 2]
            } else {
                w[n / 2 - 1] + 0.5 * (w[n / 2] - w[n / 2 - 1])
            };
            assert_eq!(y, r);
        }
    }

    #[test]
    fn rejects_non_finite_and_keeps_state() {
        let mut m = Median::<3>::new();
        m.push(1.0).unwrap();
        m.push(2.0).unwrap();
        let before = m;
        assert_eq!(m.push(f32::NAN), Err(Error::NotFinite));
        assert_eq!(m.push(f32::INFINITY), Err(Error::NotFinite));
        assert_eq!(m, before);
    }

    #[test]
    fn empty_and_clear() {
        let mut m = Median::<3>::default();
        assert_eq!(m.value(), None);
        assert!(m.is_empty());
        m.push(5.0).unwrap();
        assert_eq!(m.value(), Some(5.0));
        m.clear();
        assert!(m.is_empty());
    }

    /// The median of the last `N` values by sorting a copy of them (the definition).
    fn brute_median<const N: usize>(history: &[f32]) -> f32 {
        let start = history.len().saturating_sub(N);
        let mut w: heapless::Vec<f32, N> = heapless::Vec::new();
        for &x in &history[start..] {
            w.push(x).unwrap();
        }
        w.sort_unstable_by(|a, b| a.partial_cmp(b).unwrap());
        let n = w.len();
        if n % 2 == 1 {
            w[n / 2]
        } else {
            w[n / 2 - 1] + 0.5 * (w[n / 2] - w[n / 2 - 1])
        }
    }

    #[test]
    fn equals_the_sorted_window_with_repeats() {
        // small integers so that repeated values (the removal's search) are frequent
        let mut x: u32 = 12345;
        let mut history: heapless::Vec<f32, 512> = heapless::Vec::new();
        let mut m5 = Median::<5>::new();
        let mut m4 = Median::<4>::new();
        let mut m1 = Median::<1>::new();
        for _ in 0..500 {
            x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345); // LCG (ANSI C example)
            let v = ((x >> 16) % 7) as f32 - 3.0;
            history.push(v).unwrap();
            assert_eq!(m5.push(v).unwrap(), brute_median::<5>(&history));
            assert_eq!(m4.push(v).unwrap(), brute_median::<4>(&history));
            assert_eq!(m1.push(v).unwrap(), v);
        }
    }

    #[test]
    fn cleared_filter_equals_a_new_one_with_the_same_samples() {
        let mut used = Median::<5>::new();
        for x in [40.0, 41.0, 39.0, 90.0, 42.0, 43.0, 38.0] {
            used.push(x).unwrap();
        }
        used.clear();
        assert!(used.is_empty());
        assert_eq!(used.value(), None);
        assert_eq!(used, Median::<5>::new());
        let mut fresh = Median::<5>::new();
        for x in [7.0, 5.0, 6.0] {
            assert_eq!(used.push(x).unwrap(), fresh.push(x).unwrap());
        }
        assert_eq!(used, fresh);
        // the same samples in another order are another state
        let mut other = Median::<5>::new();
        for x in [5.0, 7.0, 6.0] {
            other.push(x).unwrap();
        }
        assert_ne!(used, other);
        // and after the ring wraps, the stale storage never shows
        for x in [1.0, 2.0, 3.0, 4.0, 5.0, 6.0] {
            assert_eq!(used.push(x).unwrap(), fresh.push(x).unwrap());
        }
        assert_eq!(used, fresh);
    }
}
