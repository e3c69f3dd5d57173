//! Mean of the last `N` samples with a sum that does not drift.

use crate::Error;

/// Moving (boxcar) average of the last `N` samples.
///
/// A plain running sum (`sum += new - old`) in `f32` accumulates rounding error without
/// bound over a long run. Here three measures keep it exact enough forever:
///
/// 1. samples are stored as deviations from the first sample (`offset`), so a constant
///    input gives deviations of exactly zero and the output equals the input exactly;
/// 2. the running sum is compensated (Neumaier's improved Kahan summation: Neumaier
///    1974, *Zeitschrift fur Angewandte Mathematik und Mechanik* 54, 39-51);
/// 3. a second, fresh sum collects only the samples added since the ring last wrapped;
///    when it wraps, that fresh sum is exactly the sum of the window and replaces the
///    running one, so no error survives more than `N` samples. This is the "periodic
///    re-summation" done in O(1) per sample instead of an O(N) pass.
///
/// * Time per sample: O(1).
/// * State: `[f32; N]`, five `f32` and two `usize`: `4 N + 20 + 2 * size_of::<usize>()`
///   bytes, rounded up to the `usize` alignment (`4 N + 36` rounded up to a multiple of
///   8 on a 64-bit host; `4 N + 28` on a 32-bit microcontroller).
///
/// ```
/// use isohypse::filter::MovingAverage;
/// let mut avg = MovingAverage::<4>::new();
/// for x in [1.0, 2.0, 3.0, 4.0] {
///     avg.push(x)?;
/// }
/// assert_eq!(avg.value(), Some(2.5));
/// assert_eq!(avg.push(5.0)?, 3.5);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MovingAverage<const N: usize> {
    /// Deviations from `offset`, arrival order (ring buffer).
    window: [f32; N],
    /// The first sample; all values are stored relative to it.
    offset: f32,
    /// Running compensated sum of the window: `sum + comp`.
    sum: f32,
    comp: f32,
    /// Compensated sum of the samples written since the ring last wrapped.
    fresh_sum: f32,
    fresh_comp: f32,
    /// Next write position.
    head: usize,
    /// Samples held (at most `N`).
    len: usize,
}

impl<const N: usize> Default for MovingAverage<N> {
    fn default() -> Self {
        Self::new()
    }
}

/// One step of Neumaier's compensated summation: returns the new `(sum, comp)`.
/// `t = sum + x`; the rounding error of that addition, `(sum - t) + x` when
/// `|sum| >= |x|` else `(x - t) + sum`, is added to `comp` (Neumaier 1974, see the type
/// docs).
fn neumaier(sum: f32, comp: f32, x: f32) -> (f32, f32) {
    let t = sum + x;
    let c = if sum.abs() >= x.abs() {
        (sum - t) + x
    } else {
        (x - t) + sum
    };
    (t, comp + c)
}

impl<const N: usize> MovingAverage<N> {
    /// An empty filter. `N` must be at least 1 (checked at compile time).
    pub const fn new() -> Self {
        const { assert!(N > 0, "MovingAverage<N> needs N >= 1") };
        Self {
            window: [0.0; N],
            offset: 0.0,
            sum: 0.0,
            comp: 0.0,
            fresh_sum: 0.0,
            fresh_comp: 0.0,
            head: 0,
            len: 0,
        }
    }

    /// Adds a sample and returns the mean of the samples held (fewer than `N` at the
    /// start).
    ///
    /// Errors: [`Error::NotFinite`] for NaN or infinite input, or input so far from the
    /// first sample that the difference overflows; the filter is unchanged.
    pub fn push(&mut self, x: f32) -> Result<f32, Error> {
        if !x.is_finite() {
            return Err(Error::NotFinite);
        }
        let offset = if self.len == 0 { x } else { self.offset };
        let d = x - offset;
        if !d.is_finite() {
            return Err(Error::NotFinite);
        }
        let (mut sum, mut comp) = (self.sum, self.comp);
        let mut len = self.len;
        if len == N {
            let old = self.window.get(self.head).copied().unwrap_or(0.0);
            (sum, comp) = neumaier(sum, comp, -old);
            len -= 1;
        }
        (sum, comp) = neumaier(sum, comp, d);
        let (mut fresh_sum, mut fresh_comp) = neumaier(self.fresh_sum, self.fresh_comp, d);
        let mut head = self.head + 1;
        if head >= N {
            // The window now holds exactly the samples summed in `fresh`.
            head = 0;
            sum = fresh_sum;
            comp = fresh_comp;
            fresh_sum = 0.0;
            fresh_comp = 0.0;
        }
        if let Some(slot) = self.window.get_mut(self.head) {
            *slot = d;
        }
        self.offset = offset;
        self.sum = sum;
        self.comp = comp;
        self.fresh_sum = fresh_sum;
        self.fresh_comp = fresh_comp;
        self.head = head;
        self.len = len + 1;
        Ok(self.value().unwrap_or(x))
    }

    /// Mean of the samples held, or `None` when empty.
    pub fn value(&self) -> Option<f32> {
        if self.len == 0 {
            None
        } else {
            Some(self.offset + (self.sum + self.comp) / self.len as f32)
        }
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

    /// Forgets all samples.
    pub fn clear(&mut self) {
        *self = Self::new();
    }
}

#[cfg(test)]
mod tests;
