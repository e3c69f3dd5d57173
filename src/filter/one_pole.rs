//! First-order low-pass smoother with a cut-off in hertz and any time step.

use super::step_s;
use crate::Error;
use crate::math;
use crate::time::Instant;

/// First-order (one-pole) low-pass filter, exact for any time step.
///
/// Equation: `y_k = y_(k-1) + alpha (x_k - y_(k-1))` with
/// `alpha = 1 - exp(-2 pi fc dt)`, `fc` the cut-off frequency (Hz), `dt` the time since
/// the previous sample (s). This is the exact discretisation of
/// `tau dy/dt = x - y`, `tau = 1 / (2 pi fc)`, with the input held over the step
/// (zero-order hold; e.g. Franklin, Powell & Workman, *Digital Control of Dynamic
/// Systems*, 3rd ed., 1998, ch. 6, from memory). Its step response at the sample times is
/// `1 - exp(-t / tau)` whatever the steps, the first-order step response in any control
/// textbook (e.g. Ogata, *Modern Control Engineering*, 5th ed., sec. 5-3, from memory).
/// `1 - exp(-x)` is computed as `-expm1(-x)`, accurate for short steps.
///
/// The first sample initialises the output. After a long gap `alpha` tends to 1, so the
/// output jumps to the new input: the old value is no longer relevant.
///
/// * Time per sample: O(1), one `exp`.
/// * State: 24 bytes (`f64` time, two `f32`, one flag, padded).
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::filter::OnePole;
/// let mut lp = OnePole::new(1.0)?; // 1 Hz cut-off
/// lp.update(Instant::ZERO, 0.0)?;
/// let y = lp.update(Instant::from_millis(100), 1.0)?;
/// assert!((y - (1.0 - (-0.2f32 * core::f32::consts::PI).exp())).abs() < 1e-6);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OnePole {
    cutoff_hz: f32,
    output: f32,
    last_time: Instant,
    started: bool,
}

impl OnePole {
    /// A filter with cut-off `cutoff_hz` (Hz, finite and > 0).
    ///
    /// Errors: [`Error::InvalidSetting`].
    pub fn new(cutoff_hz: f32) -> Result<Self, Error> {
        Self::check_cutoff(cutoff_hz)?;
        Ok(Self {
            cutoff_hz,
            output: 0.0,
            last_time: Instant::ZERO,
            started: false,
        })
    }

    fn check_cutoff(cutoff_hz: f32) -> Result<(), Error> {
        if cutoff_hz.is_finite() && cutoff_hz > 0.0 {
            Ok(())
        } else {
            Err(Error::InvalidSetting)
        }
    }

    /// Feeds sample `x` taken at `time` (seconds, `f64`) and returns the output.
    ///
    /// Errors: [`Error::NotFinite`] (NaN or infinite `x` or time),
    /// [`Error::NotIncreasing`] (time not after the previous sample). The filter is
    /// unchanged on error.
    pub fn update(&mut self, time: Instant, x: f32) -> Result<f32, Error> {
        if !x.is_finite() {
            return Err(Error::NotFinite);
        }
        if !self.started {
            self.output = x;
            self.last_time = time;
            self.started = true;
            return Ok(x);
        }
        let dt = step_s(self.last_time, time)?;
        let y = self.output + self.alpha(dt) * (x - self.output);
        if !y.is_finite() {
            return Err(Error::NotFinite);
        }
        self.output = y;
        self.last_time = time;
        Ok(y)
    }

    /// `alpha = 1 - exp(-2 pi fc dt)` for a step `dt` (s).
    pub fn alpha(&self, dt: f32) -> f32 {
        -math::exp_m1(-2.0 * core::f32::consts::PI * self.cutoff_hz * dt)
    }

    /// Output, or `None` before the first sample.
    pub fn value(&self) -> Option<f32> {
        self.started.then_some(self.output)
    }

    /// Cut-off frequency, Hz.
    pub const fn cutoff_hz(&self) -> f32 {
        self.cutoff_hz
    }

    /// Time constant `tau = 1 / (2 pi fc)`, s.
    pub fn time_constant_s(&self) -> f32 {
        1.0 / (2.0 * core::f32::consts::PI * self.cutoff_hz)
    }

    /// Changes the cut-off; the output is kept. Errors: [`Error::InvalidSetting`]
    /// (the old cut-off is kept).
    pub fn set_cutoff_hz(&mut self, cutoff_hz: f32) -> Result<(), Error> {
        Self::check_cutoff(cutoff_hz)?;
        self.cutoff_hz = cutoff_hz;
        Ok(())
    }

    /// Forgets the output; the next sample initialises it again.
    pub fn reset(&mut self) {
        self.started = false;
        self.output = 0.0;
        self.last_time = Instant::ZERO;
    }
}

/// Gain `dt / (tau + dt)` of the first-order lag `tau dy/dt = x - y` over a step of
/// `dt` seconds, in its backward-Euler form (`y_k = y_(k-1) + (dt / tau) (x_k - y_k)`
/// solved for `y_k`; common practice): in [0, 1] for every step, 0 for a step of 0 (or
/// NaN), 1 for `tau <= 0` and for steps of 1e30 s and more (where `f32` would give inf
/// / inf). The one lag gain of the trackers and use types (datum slewing, the walk's
/// smoothing and speed): it needs no `exp`, and over the steps they take (much shorter
/// than `tau`) it is within `(dt / tau)^2 / 2` of the exact gain [`OnePole`] uses.
pub(crate) fn lag_gain(dt: f32, tau: f32) -> f32 {
    if dt.is_nan() || dt <= 0.0 {
        return 0.0;
    }
    if tau <= 0.0 || dt >= 1.0e30 {
        return 1.0;
    }
    dt / (tau + dt)
}

#[cfg(test)]
mod tests;
