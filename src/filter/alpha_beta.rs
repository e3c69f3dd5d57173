//! Alpha-beta (g-h) filter for height and vertical speed.

use super::step_s;
use crate::time::Instant;
use crate::{Error, Height, VerticalSpeed};

/// Alpha-beta filter: fixed-gain tracker of height and vertical speed from height
/// samples at any time step.
///
/// Equations, per sample at step `dt` (s) with measured height `z` (m):
///
/// ```text
/// predicted  h- = h + v dt
/// residual   r  = z - h-
/// update     h  = h- + alpha r
///            v  = v + (beta / dt) r
/// ```
///
/// (Brookner, *Tracking and Kalman Filtering Made Easy*, 1998, ch. 1, the g-h filter,
/// from memory.) It follows a constant vertical speed with zero steady-state error
/// (common practice; a ramp is the model it is built on). The gains are per sample, so
/// irregular steps are fine as long as they stay near the rate the gains were chosen
/// for. Stable for `0 < alpha < 2`, `0 < beta < 4 - 2 alpha` (Jury test of the error
/// recursion, common practice); this type accepts `0 < alpha <= 1`, which is the useful
/// part of that region for smoothing.
///
/// A gap longer than `max_gap_s` (a dropout) restarts the filter at the next sample:
/// height from the sample, speed zero. Extrapolating an old speed over a long gap could
/// put the estimate far beyond the truth; restarting cannot.
///
/// * Time per sample: O(1).
/// * State: 32 bytes (`f64` time, five `f32`, one flag, padded).
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::{filter::AlphaBeta, Height};
/// let mut ab = AlphaBeta::new(0.5, 0.1, 1.0)?;
/// for k in 0..200 {
///     let t = Instant::from_millis(k * 20);
///     ab.update(t, Height::from_meters(100.0 + 2.0 * 0.02 * k as f32)?)?;
/// }
/// assert!((ab.vertical_speed().unwrap().mps() - 2.0).abs() < 1e-3);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AlphaBeta {
    alpha: f32,
    beta: f32,
    max_gap_s: f32,
    height_m: f32,
    speed_mps: f32,
    last_time: Instant,
    started: bool,
}

impl AlphaBeta {
    /// A filter with gains `alpha` (0 < alpha <= 1), `beta` (0 < beta < 4 - 2 alpha) and
    /// dropout limit `max_gap_s` (s, > 0).
    ///
    /// Errors: [`Error::InvalidSetting`].
    pub fn new(alpha: f32, beta: f32, max_gap_s: f32) -> Result<Self, Error> {
        let ok = alpha.is_finite()
            && beta.is_finite()
            && max_gap_s.is_finite()
            && alpha > 0.0
            && alpha <= 1.0
            && beta > 0.0
            && beta < 4.0 - 2.0 * alpha
            && max_gap_s > 0.0;
        if !ok {
            return Err(Error::InvalidSetting);
        }
        Ok(Self {
            alpha,
            beta,
            max_gap_s,
            height_m: 0.0,
            speed_mps: 0.0,
            last_time: Instant::ZERO,
            started: false,
        })
    }

    /// Gains of the critically damped filter for a discount factor `theta` in (0, 1):
    /// `alpha = 1 - theta^2`, `beta = (1 - theta)^2` (fading-memory polynomial filter,
    /// Brookner 1998, ch. 1, from memory). Larger `theta` smooths more.
    ///
    /// Errors: [`Error::InvalidSetting`].
    pub fn critically_damped(theta: f32, max_gap_s: f32) -> Result<Self, Error> {
        if !(theta.is_finite() && theta > 0.0 && theta < 1.0) {
            return Err(Error::InvalidSetting);
        }
        Self::new(
            1.0 - theta * theta,
            (1.0 - theta) * (1.0 - theta),
            max_gap_s,
        )
    }

    /// Feeds a height sample taken at `time` (s).
    ///
    /// Errors: [`Error::NotFinite`] (time), [`Error::NotIncreasing`] (time not after
    /// the previous sample). The filter is unchanged on error.
    pub fn update(&mut self, time: Instant, height: Height) -> Result<(), Error> {
        let z = height.meters();
        if !self.started {
            self.restart(time, z);
            return Ok(());
        }
        let dt = step_s(self.last_time, time)?;
        if dt > self.max_gap_s {
            self.restart(time, z);
            return Ok(());
        }
        let predicted = self.height_m + self.speed_mps * dt;
        let residual = z - predicted;
        let h = predicted + self.alpha * residual;
        let v = self.speed_mps + self.beta / dt * residual;
        if !(h.is_finite() && v.is_finite()) {
            return Err(Error::NotFinite);
        }
        self.height_m = h;
        self.speed_mps = v;
        self.last_time = time;
        Ok(())
    }

    fn restart(&mut self, time: Instant, z: f32) {
        self.height_m = z;
        self.speed_mps = 0.0;
        self.last_time = time;
        self.started = true;
    }

    /// Height estimate, `None` before the first sample.
    pub fn height(&self) -> Option<Height> {
        if self.started {
            Height::from_meters(self.height_m).ok()
        } else {
            None
        }
    }

    /// Vertical speed estimate (positive up), `None` before the first sample.
    pub fn vertical_speed(&self) -> Option<VerticalSpeed> {
        if self.started {
            VerticalSpeed::from_mps(self.speed_mps).ok()
        } else {
            None
        }
    }

    /// Forgets the estimate; the next sample restarts the filter.
    pub fn reset(&mut self) {
        self.started = false;
        self.height_m = 0.0;
        self.speed_mps = 0.0;
        self.last_time = Instant::ZERO;
    }
}

#[cfg(test)]
mod tests;
