//! Ground reference: the mean height at rest before take-off.

use super::step_s;
use crate::time::Instant;
use crate::{Error, Height};

/// When a [`GroundReference`] has seen enough samples to be trusted.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GroundReferenceConfig {
    /// Fewest samples averaged before the reference is ready (>= 2). A single sample
    /// carries the full sensor noise and is never a reference.
    pub min_samples: u32,
    /// Shortest span of time, first to last sample, before the reference is ready
    /// (s, >= 0).
    pub min_duration_s: f32,
}

impl Default for GroundReferenceConfig {
    /// 50 samples over at least 1 s: with 0.125 m baro noise (1.5 Pa) the mean is good
    /// to about 0.125 / sqrt(50) = 1.8 cm (1-sigma) (choice of this crate).
    fn default() -> Self {
        Self {
            min_samples: 50,
            min_duration_s: 1.0,
        }
    }
}

/// The ground reference: averages the heights measured at rest before take-off and
/// reports heights above it.
///
/// Use: while the vehicle sits on the ground, feed every height sample with
/// [`Self::push`]; at take-off call [`Self::arm`], which fixes the reference (and fails
/// with [`Error::NotEnoughData`] until the configured number of samples and time span
/// have been seen); then [`Self::height_above`] reports heights above the ground.
/// [`Self::rezero`] starts a new average (for example after landing somewhere else).
///
/// The mean is `h_ref = h_first + sum(h_i - h_first) / n`, the sum compensated
/// (Neumaier 1974, *Zeitschrift fur Angewandte Mathematik und Mechanik* 54, 39-51) so
/// that a long wait does not lose precision. Its 1-sigma scatter is `sigma / sqrt(n)`
/// for independent samples (standard error of the mean; common practice).
///
/// * Time per sample: O(1).
/// * State: 40 bytes (an `f64` time, five `f32`, two counts, a flag).
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::{filter::{GroundReference, GroundReferenceConfig}, Height};
/// let mut g = GroundReference::new(GroundReferenceConfig { min_samples: 3, min_duration_s: 0.0 })?;
/// for (ms, h) in [(0, 120.1), (100, 119.9), (200, 120.0)] {
///     let t = Instant::from_millis(ms);
///     g.push(t, Height::from_meters(h)?)?;
/// }
/// g.arm()?;
/// let above = g.height_above(Height::from_meters(130.0)?)?;
/// assert!((above.meters() - 10.0).abs() < 1e-4);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GroundReference {
    config: GroundReferenceConfig,
    /// Time of the latest sample, s.
    last_time: Instant,
    /// Time from the first sample to the latest, s, summed in `f32` steps (no `f64`
    /// time kept for it, no `f64` comparison per sample).
    span_s: f32,
    /// The mean is `anchor_m + (sum + comp) / count`; once armed, `anchor_m` is the
    /// fixed reference and `sum` and `comp` are zero (so the mean stays the same, and
    /// the reference needs no field of its own: 40 bytes, not 48).
    anchor_m: f32,
    sum: f32,
    comp: f32,
    count: u32,
    /// Fixed by [`Self::arm`].
    armed: bool,
}

impl GroundReference {
    /// A reference that collects samples until armed.
    ///
    /// Errors: [`Error::InvalidSetting`] for `min_samples < 2` or a negative or
    /// non-finite `min_duration_s`.
    pub fn new(config: GroundReferenceConfig) -> Result<Self, Error> {
        if config.min_samples < 2
            || !config.min_duration_s.is_finite()
            || config.min_duration_s < 0.0
        {
            return Err(Error::InvalidSetting);
        }
        Ok(Self::empty(config))
    }

    /// An empty reference for a snapshot to load into.
    pub(crate) const fn blank() -> Self {
        Self::empty(GroundReferenceConfig {
            min_samples: 2,
            min_duration_s: 0.0,
        })
    }

    /// A reference with no sample (configuration already checked).
    const fn empty(config: GroundReferenceConfig) -> Self {
        Self {
            config,
            last_time: Instant::ZERO,
            span_s: 0.0,
            anchor_m: 0.0,
            sum: 0.0,
            comp: 0.0,
            count: 0,
            armed: false,
        }
    }

    /// Adds a height measured at rest at `time` (s). Ignored (returns `Ok(false)`)
    /// once armed; `Ok(true)` when the sample was averaged.
    ///
    /// Errors: [`Error::NotFinite`], [`Error::NotIncreasing`] (time); the state is
    /// unchanged.
    pub fn push(&mut self, time: Instant, height: Height) -> Result<bool, Error> {
        let dt = if self.count == 0 {
            0.0
        } else {
            step_s(self.last_time, time)?
        };
        Ok(self.push_after(dt, time, height))
    }

    /// [`Self::push`] with the step since the previous sample given (`dt`, s; the
    /// use type's own, 0 after a clock fault), so that it never refuses.
    pub(crate) fn push_after(&mut self, dt: f32, time: Instant, height: Height) -> bool {
        let z = height.meters();
        if self.armed {
            return false;
        }
        if self.count == 0 {
            self.anchor_m = z;
        }
        let d = z - self.anchor_m;
        let t = self.sum + d;
        let c = if self.sum.abs() >= d.abs() {
            (self.sum - t) + d
        } else {
            (d - t) + self.sum
        };
        self.sum = t;
        self.comp += c;
        self.count = self.count.saturating_add(1);
        self.span_s += dt;
        self.last_time = time;
        true
    }

    /// Whether enough samples over a long enough span have been averaged.
    pub fn is_ready(&self) -> bool {
        self.count >= self.config.min_samples && self.span_s >= self.config.min_duration_s
    }

    /// Mean of the samples averaged so far.
    ///
    /// Errors: [`Error::NotEnoughData`] until [`Self::is_ready`].
    pub fn mean(&self) -> Result<Height, Error> {
        if !self.is_ready() {
            return Err(Error::NotEnoughData);
        }
        self.running_mean()
    }

    /// Mean of the samples averaged so far, before the reference is ready (a
    /// provisional zero); `Err(NotEnoughData)` with no sample.
    pub fn running_mean(&self) -> Result<Height, Error> {
        if self.count == 0 {
            return Err(Error::NotEnoughData);
        }
        Height::from_meters(self.anchor_m + (self.sum + self.comp) / self.count as f32)
    }

    /// 1-sigma of the mean of the samples averaged so far, each with 1-sigma
    /// `sample_sigma_m` (independent: `sigma / sqrt(n)`), m; 0 with no sample.
    pub fn mean_sigma_m(&self, sample_sigma_m: f32) -> f32 {
        if self.count == 0 {
            return 0.0;
        }
        let var = sample_sigma_m * sample_sigma_m / self.count as f32;
        crate::math::sigma_from_variance(var)
    }

    /// Fixes the reference at the current mean (call at take-off) and returns it.
    /// Calling it again while armed returns the fixed reference.
    ///
    /// Errors: [`Error::NotEnoughData`] until [`Self::is_ready`]; the state is
    /// unchanged.
    pub fn arm(&mut self) -> Result<Height, Error> {
        if self.armed {
            return Height::from_meters(self.anchor_m);
        }
        let r = self.mean()?;
        self.anchor_m = r.meters();
        self.sum = 0.0;
        self.comp = 0.0;
        self.armed = true;
        Ok(r)
    }

    /// The fixed reference, `None` until armed.
    pub fn reference(&self) -> Option<Height> {
        if self.armed {
            Height::from_meters(self.anchor_m).ok()
        } else {
            None
        }
    }

    /// Whether the reference is fixed.
    pub const fn is_armed(&self) -> bool {
        self.armed
    }

    /// Number of samples averaged.
    pub const fn sample_count(&self) -> u32 {
        self.count
    }

    /// Height above the reference: `height - h_ref`. Uses the fixed reference when
    /// armed, else the running mean once ready.
    ///
    /// Errors: [`Error::NotEnoughData`] before the reference is ready.
    pub fn height_above(&self, height: Height) -> Result<Height, Error> {
        let r = if self.armed {
            self.anchor_m
        } else {
            self.mean()?.meters()
        };
        Height::from_meters(height.meters() - r)
    }

    /// Forgets the samples and the fixed reference and starts collecting again.
    pub fn rezero(&mut self) {
        *self = Self::empty(self.config);
    }
}

crate::snapshot::snap_fields!(GroundReferenceConfig {
    min_samples,
    min_duration_s
});
crate::snapshot::snap_fields!(GroundReference {
    config,
    last_time,
    span_s,
    anchor_m,
    sum,
    comp,
    count,
    armed
});

#[cfg(test)]
mod tests;
