//! Kalman filter over height, vertical speed and accelerometer bias.

use super::Step;
use crate::bits::Bits;
use crate::math;
use crate::time::Instant;
use crate::{Error, Height, VerticalSpeed};
use core::borrow::Borrow;

/// Masks of [`VerticalKalman`]'s yes/no state.
const BARO_AT_CORE: u8 = 1;
const ACCEL_AT_CORE: u8 = 2;
const INITIALIZED: u8 = 4;
const DISTURBED: u8 = 8;
const REACQUIRE_PENDING: u8 = 16;
/// The covariance has settled: the next barometer sample may reuse it (see
/// [`VerticalKalmanConfig::gain_reuse_tolerance`]).
const SETTLED: u8 = 32;
/// The last barometer sample was rejected above the prediction (below when clear).
const REJECTED_ABOVE: u8 = 64;
/// The cycle in [`Reuse`] applied an accelerometer sample taken with the barometer
/// sample (clear: the constant-velocity model).
const REUSE_WITH_ACCEL: u8 = 64;
/// `run` flag: the current run of rejections has samples on both sides of the
/// prediction.
const RUN_MIXED: u8 = 1;
/// `run` flag: the filter followed a run of rejections on one side while an
/// accelerometer sample drove its prediction, so the accelerometer is not trusted until
/// it reads within [`ACCEL_QUIET_MPS2`] of its bias again.
const ACCEL_SUSPECT: u8 = 2;

/// How close to its bias (m/s^2) an accelerometer reading must be for the filter to
/// trust the accelerometer again after it drove the prediction away from the
/// barometer (a shock on the sensor). About 0.2 g: a vehicle at rest, hovering or
/// moving steadily reads within it (common practice for multirotors and walkers; not
/// from a source), an impact or vibration burst reads far beyond.
pub const ACCEL_QUIET_MPS2: f32 = 2.0;

/// Largest relative change from one full cycle to the next of each entry of the
/// predicted covariance column `P[., h]` (which sets the gain), under which the filter
/// counts as settled: `|dP_ih| <= 1e-6 |P_ih|`. About 8 `f32` rounding steps. The
/// Riccati recursion of the default drone settings at 50 Hz gets this far about 30 s
/// after the first sample and is then within about 1e-4 of its fixed point (both
/// simulated in double precision; choice of this crate).
const SETTLE_CHANGE: f32 = 1.0e-6;

/// Settings of a [`VerticalKalman`]. All fields are in SI units; [`Default`] gives
/// values for a small multirotor with a MEMS barometer and accelerometer.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VerticalKalmanConfig {
    /// 1-sigma noise of one barometric height sample, m (1e-4 to 1e4).
    pub baro_sigma_m: f32,
    /// Accelerometer white-noise density, m/s^2/sqrt(Hz) (>= 0): the square root of the
    /// two-sided power spectral density `q_a` of the acceleration noise. For white noise
    /// of standard deviation `sigma` per sample at rate `fs`, held over each step, the
    /// equivalent density is `sigma / sqrt(fs)` (common practice). At most 100.
    pub accel_noise_density: f32,
    /// Accelerometer bias random walk, m/s^2/sqrt(s) (>= 0): the bias drifts by this much
    /// (1-sigma) over one second. At most 10.
    pub bias_random_walk: f32,
    /// White-acceleration density of the constant-velocity model used when no
    /// accelerometer sample is fresh (baro-only operation), m/s^2/sqrt(Hz) (> 0). Sets
    /// how quickly the filter believes the vertical speed can change. At most 1 000.
    pub baro_only_accel_density: f32,
    /// 1-sigma of the vertical speed at start and after re-acquisition, m/s (> 0, at
    /// most [`MAX_SPEED_MPS`]).
    pub initial_speed_sigma_mps: f32,
    /// 1-sigma of the accelerometer bias at start, m/s^2 (> 0, at most 100).
    pub initial_bias_sigma_mps2: f32,
    /// Innovation gate on the normalised innovation squared `y^2 / S` (> 0, at most
    /// 10 000). 10.83 is
    /// the chi-square value for 1 degree of freedom at 99.9 % (NIST/SEMATECH
    /// e-Handbook of Statistical Methods, critical values of the chi-square
    /// distribution, upper tail 0.001, 1 degree of freedom: 10.828; section 1.3.6.7.4,
    /// section number from memory).
    pub gate_nis: f32,
    /// Consecutive gate rejections after which the filter re-acquires: height reset to
    /// the measurement (>= 1). A real, sudden change is then followed within this many
    /// samples instead of being rejected for ever.
    pub reacquire_after: u16,
    /// How long a run of rejections, all on the same side of the prediction, must last
    /// before the filter takes it for a change of motion it did not predict (a burst,
    /// a hard climb, a drop, or a prediction run away on an accelerometer shock) and
    /// starts again from the run: height from its last sample, speed from its first and
    /// last, s (> 0, at most an hour; at least two samples either way). Rejections on both sides
    /// (spikes, noise) wait for `reacquire_after` instead.
    pub follow_after_s: f32,
    /// Longest step integrated in one prediction, s (> 0). A longer gap is a dropout:
    /// the state is propagated over at most this step and the next barometer sample
    /// re-acquires. Must exceed the slowest normal sample interval; at most an hour.
    pub max_step_s: f32,
    /// An accelerometer sample older than this (s, > 0, at most an hour) is not used; predictions fall
    /// back to the constant-velocity model.
    pub accel_timeout_s: f32,
    /// If no barometer sample was accepted for this long (s, > 0, at most a day), the next one
    /// re-acquires.
    pub baro_timeout_s: f32,
    /// Factor (1 to 100) on `baro_sigma_m` while the user flags a disturbance
    /// ([`VerticalKalman::set_baro_disturbed`]: propeller wash, ground effect).
    pub disturbed_sigma_scale: f32,
    /// Largest accepted magnitude of vertical acceleration, m/s^2 (> 0, at most
    /// 1 000). Larger samples
    /// are refused with [`Error::SampleOutOfRange`].
    pub max_accel_mps2: f32,
    /// Lowest accepted barometric height, m (-10 km or above). Lower samples are refused with
    /// [`Error::BelowModelBottom`].
    pub min_height_m: f32,
    /// Highest accepted barometric height, m (100 km or below). Higher samples are refused with
    /// [`Error::AboveModelTop`].
    pub max_height_m: f32,
    /// Relative tolerance (0 to 0.1) under which a settled covariance is reused instead
    /// of being propagated and updated again; 0 turns reuse off.
    ///
    /// With a fixed sample step and noise, the covariance of a Kalman filter converges
    /// to the fixed point of its Riccati recursion, and the gain with it (the
    /// steady-state filter; Simon, *Optimal State Estimation*, 2006, sec. 7.3, from
    /// memory). Once the predicted covariance column that sets the gain, `P[., h]`,
    /// changes by no more than 1e-6 (relative) from one full cycle (propagate, then
    /// correct) to the next, and while later barometer samples come at a
    /// step and with a variance within this tolerance of that cycle's, each in the
    /// same mode (an accelerometer sample with every barometer sample, or none), the
    /// filter moves only the mean: `h, v` predicted as usual, then
    /// `x += P_prior[., h] (z - h) / (P_prior[h, h] + R)` with that cycle's predicted
    /// covariance and this sample's `R`. The covariance (and so the reported sigma)
    /// stays at the settled value. Anything else (an outlier, a re-acquisition, a
    /// separate [`VerticalKalman::predict`], a step or noise outside the tolerance)
    /// takes the full cycle, which must settle again before reuse resumes.
    ///
    /// The gain error is at most about this tolerance (relative), and a Kalman gain
    /// near its optimum costs only second-order error variance: 0.01 keeps the
    /// estimate's error variance within about 1e-4 of the full filter's (common
    /// practice for steady-state gains). Off in [`Self::DEFAULT`]: the code costs
    /// about 1.1 KB of flash on the Cortex-M4F (measured, flash probe), and the
    /// reuse only pays where an accelerometer sample comes with each barometer
    /// sample or none do. [`Self::with_gain_reuse`] turns it on at 0.01.
    pub gain_reuse_tolerance: f32,
}

impl Default for VerticalKalmanConfig {
    /// [`VerticalKalmanConfig::DEFAULT`].
    fn default() -> Self {
        Self::DEFAULT
    }
}

impl VerticalKalmanConfig {
    /// Barometer 0.15 m (about 1.8 Pa near sea level), accelerometer 0.005 m/s^2/sqrt(Hz)
    /// with a 0.001 m/s^2/sqrt(s) bias walk, 16 g limit, gate 10.83, re-acquire after
    /// 10 rejections, dropout beyond 0.5 s, heights -5 km to 86 km (the U.S. 1976
    /// range), disturbance factor 4, no reuse of a settled covariance (choices of this
    /// crate; see [`Self::gain_reuse_tolerance`] and [`Self::with_gain_reuse`]).
    pub const DEFAULT: Self = Self {
        baro_sigma_m: 0.15,
        accel_noise_density: 0.005,
        bias_random_walk: 0.001,
        baro_only_accel_density: 0.5,
        initial_speed_sigma_mps: 0.5,
        initial_bias_sigma_mps2: 0.3,
        gate_nis: 10.83,
        reacquire_after: 10,
        follow_after_s: 0.1,
        max_step_s: 0.5,
        accel_timeout_s: 0.1,
        baro_timeout_s: 1.0,
        disturbed_sigma_scale: 4.0,
        max_accel_mps2: 16.0 * crate::atmosphere::STANDARD_GRAVITY,
        min_height_m: -5_000.0,
        max_height_m: 86_000.0,
        gain_reuse_tolerance: 0.0,
    };

    /// These settings with a settled covariance reused within 1 % (see
    /// [`Self::gain_reuse_tolerance`]): fewer instructions per barometer sample once
    /// settled (on the Cortex-M4F the drone preset's sample falls by about a fifth),
    /// for about 1.1 KB more flash (flash probe).
    ///
    /// ```
    /// use isohypse::filter::VerticalKalmanConfig;
    /// let c = VerticalKalmanConfig::DEFAULT.with_gain_reuse();
    /// assert_eq!(c.gain_reuse_tolerance, 0.01);
    /// assert!(c.validate().is_ok());
    /// ```
    pub const fn with_gain_reuse(self) -> Self {
        Self {
            gain_reuse_tolerance: 0.01,
            ..self
        }
    }

    /// Checks every field against its documented range.
    ///
    /// Errors: [`Error::InvalidSetting`].
    pub fn validate(&self) -> Result<(), Error> {
        use math::{finite_non_negative as non_neg, finite_positive as pos};
        // Upper limits keep every product of the filter finite in f32 and its output
        // physical (checked by tests/settings_limits.rs and the property tests).
        let within = |x: f32, lo: f32, hi: f32| x >= lo && x <= hi;
        let ok = pos(self.baro_sigma_m)
            && within(self.baro_sigma_m, 1.0e-4, 1.0e4)
            && non_neg(self.accel_noise_density)
            && self.accel_noise_density <= 100.0
            && non_neg(self.bias_random_walk)
            && self.bias_random_walk <= 10.0
            && pos(self.baro_only_accel_density)
            && self.baro_only_accel_density <= 1_000.0
            && pos(self.initial_speed_sigma_mps)
            && self.initial_speed_sigma_mps <= MAX_SPEED_MPS
            && pos(self.initial_bias_sigma_mps2)
            && self.initial_bias_sigma_mps2 <= 100.0
            && pos(self.gate_nis)
            && self.gate_nis <= 1.0e4
            && self.reacquire_after >= 1
            && pos(self.follow_after_s)
            && self.follow_after_s <= 3_600.0
            && pos(self.max_step_s)
            && self.max_step_s <= 3_600.0
            && pos(self.accel_timeout_s)
            && self.accel_timeout_s <= 3_600.0
            && pos(self.baro_timeout_s)
            && self.baro_timeout_s <= 86_400.0
            && within(self.disturbed_sigma_scale, 1.0, 100.0)
            && pos(self.max_accel_mps2)
            && self.max_accel_mps2 <= 1_000.0
            && within(self.min_height_m, -10_000.0, 100_000.0)
            && within(self.max_height_m, -10_000.0, 100_000.0)
            && self.min_height_m < self.max_height_m
            && non_neg(self.gain_reuse_tolerance)
            && self.gain_reuse_tolerance <= 0.1;
        if ok {
            Ok(())
        } else {
            Err(Error::InvalidSetting)
        }
    }
}

/// What a barometer sample did to a [`VerticalKalman`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum KalmanOutcome {
    /// First sample: the state was initialised from it.
    Initialized,
    /// Passed the gate and was used. `nis` is the normalised innovation squared.
    Accepted {
        /// Normalised innovation squared `y^2 / S`.
        nis: f32,
    },
    /// Failed the gate (an outlier): the state was predicted to the sample's time but
    /// not corrected. Counted in [`VerticalKalman::rejected_count`].
    Rejected {
        /// Normalised innovation squared `y^2 / S`.
        nis: f32,
    },
    /// Re-acquired: height reset to this sample, after a dropout, a barometer timeout or
    /// [`VerticalKalmanConfig::reacquire_after`] consecutive rejections.
    Reacquired,
}

/// The estimate of a [`VerticalKalman`] at the time of its latest sample.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VerticalEstimate {
    /// Time of the estimate, s.
    pub time: Instant,
    /// Height, m (same reference as the barometric heights fed in).
    pub height: Height,
    /// Vertical speed, positive up.
    pub vertical_speed: VerticalSpeed,
    /// Estimated accelerometer bias, m/s^2 (measured minus true acceleration).
    pub accel_bias_mps2: f32,
    /// 1-sigma of the height, m.
    pub height_sigma_m: f32,
    /// 1-sigma of the vertical speed, m/s.
    pub speed_sigma_mps: f32,
}

/// Symmetric 3 x 3 covariance over (height, speed, bias), stored as its six distinct
/// entries so that it is symmetric by construction.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Covariance {
    hh: f32,
    hv: f32,
    hb: f32,
    vv: f32,
    vb: f32,
    bb: f32,
}

/// The numeric state: mean and covariance.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Core {
    h: f32,
    v: f32,
    b: f32,
    p: Covariance,
}

impl Core {
    fn is_finite(&self) -> bool {
        let p = &self.p;
        // x * 0 is 0 for every finite x and NaN for an infinity or a NaN, and a NaN
        // makes the whole sum NaN: one comparison instead of nine bit tests.
        let zero = (self.h * 0.0 + self.v * 0.0 + self.b * 0.0)
            + (p.hh * 0.0 + p.hv * 0.0 + p.hb * 0.0)
            + (p.vv * 0.0 + p.vb * 0.0 + p.bb * 0.0);
        zero == 0.0
    }
}

/// The latest full cycle that ended in an accepted correction, kept so that a settled
/// filter can reuse it (see [`VerticalKalmanConfig::gain_reuse_tolerance`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Reuse {
    /// Predicted covariance column `P[., h]` (hh, hv, hb) before that correction.
    prior_hh: f32,
    prior_hv: f32,
    prior_hb: f32,
    /// Step of that cycle, s (0: it was not one step from a correction).
    dt: f32,
    /// Barometer variance of that correction, m^2; 0 when the filter's latest event
    /// was not an accepted correction (nothing to compare a new cycle with).
    r: f32,
}

impl Reuse {
    const NONE: Self = Self {
        prior_hh: 0.0,
        prior_hv: 0.0,
        prior_hb: 0.0,
        dt: 0.0,
        r: 0.0,
    };
}

/// A full cycle as it starts: the previous cycle's predicted column (hh, hv, hb), the
/// step (s) and whether an accelerometer sample comes with the barometer sample (see
/// [`VerticalKalman::cycle_start`]).
type CycleStart = ((f32, f32, f32), f32, bool);

/// Height and speed `(h, v)` moved over a step `dt` (s; `dt2 = dt * dt`) at the
/// bias-corrected acceleration `a` (0 in the constant-velocity model):
/// `h + v dt + a dt^2 / 2`, `v + a dt` (the mean rows of `F`, see [`VerticalKalman`]).
/// One function for the full cycle and the reuse of a settled covariance, so that both
/// move the mean the same way.
fn mean_step(h: f32, v: f32, a: f32, dt: f32, dt2: f32) -> (f32, f32) {
    (h + v * dt + 0.5 * a * dt2, v + a * dt)
}

/// Whether `x` is within the relative tolerance `tol` of `reference` (> 0).
fn near(x: f32, reference: f32, tol: f32) -> bool {
    let d = x - reference;
    // (a comparison pair, not `abs`: NaN fails both)
    d <= tol * reference && -d <= tol * reference
}

/// Whether no entry of the predicted column moved from `a` to `b` by more than
/// [`SETTLE_CHANGE`] of itself (squared, so no absolute values; an entry of exactly 0
/// must stay 0).
fn settled(a: (f32, f32, f32), b: (f32, f32, f32)) -> bool {
    let c2 = SETTLE_CHANGE * SETTLE_CHANGE;
    let within = |old: f32, new: f32| {
        let d = new - old;
        d * d <= c2 * (new * new)
    };
    within(a.0, b.0) && within(a.1, b.1) && within(a.2, b.2)
}

/// Largest variances kept (m^2, (m/s)^2, (m/s^2)^2). Beyond them the covariance is
/// reset to a diagonal at these limits and the next barometer sample re-acquires.
/// They only matter after very long gaps (choice of this crate).
const MAX_VAR_HEIGHT: f32 = 1.0e8;

/// Largest vertical speed the filter holds, m/s: a speed beyond it (a restart from two
/// readings a millisecond apart, an accelerometer stuck at full scale) is held at it.
/// Falls from the stratosphere on record reach about 380 m/s (from memory); nothing
/// this crate tracks goes faster vertically (choice of this crate).
pub const MAX_SPEED_MPS: f32 = 500.0;

/// `v` held within [`MAX_SPEED_MPS`] (comparisons: `f32::clamp` carries an assertion,
/// a panic path the link-time check would have to see through; a NaN passes through
/// to the finiteness checks).
#[allow(clippy::manual_clamp)]
pub(crate) fn limit_speed(v: f32) -> f32 {
    if v > MAX_SPEED_MPS {
        MAX_SPEED_MPS
    } else if v < -MAX_SPEED_MPS {
        -MAX_SPEED_MPS
    } else {
        v
    }
}
const MAX_VAR_SPEED: f32 = 1.0e4;
const MAX_VAR_BIAS: f32 = 1.0e2;

/// Kalman filter for height hold: height, vertical speed and accelerometer bias from a
/// barometer and an earth-frame vertical accelerometer arriving asynchronously.
///
/// # Model
///
/// State `x = [h, v, b]` (m, m/s, m/s^2); the accelerometer reads
/// `a_m = a + b + w_a` (gravity already removed, positive up) and the bias walks,
/// `db/dt = w_b`. Prediction over a step `dt` with the latest accelerometer sample:
///
/// ```text
/// h += v dt + (a_m - b) dt^2 / 2        F = | 1  dt  -dt^2/2 |
/// v += (a_m - b) dt                         | 0  1   -dt     |
/// P  = F P F^T + Q                          | 0  0    1      |
/// ```
///
/// with `Q` the exact discretisation of the continuous white noises (Bar-Shalom, Li &
/// Kirubarajan, *Estimation with Applications to Tracking and Navigation*, 2001,
/// sec. 6.2.2, from memory; bias terms by the same integral
/// `Q = int_0^dt Phi(s) G q G^T Phi(s)^T ds`):
/// acceleration noise `q_a = density^2` adds `q_a [dt^3/3, dt^2/2; dt^2/2, dt]` to the
/// (h, v) block; bias walk `q_b` adds `dt^5/20, dt^4/8, -dt^3/6, dt^3/3, -dt^2/2, dt` to
/// (hh, hv, hb, vv, vb, bb).
///
/// Without a fresh accelerometer sample (baro-only, or an accelerometer dropout) the
/// prediction is the constant-velocity model: `a = 0`, no bias coupling,
/// `q_a = baro_only_accel_density^2`, the bias held with its walk.
///
/// Correction with barometric height `z`, `H = [1 0 0]`, `R = sigma^2` (times
/// `disturbed_sigma_scale^2` while disturbed): innovation `y = z - h`,
/// `S = P_hh + R`, `K = P H^T / S`, and the Joseph form
/// `P = (I - K H) P (I - K H)^T + K R K^T` (Bucy & Joseph 1968, *Filtering for
/// Stochastic Processes with Applications to Guidance*; see also Bar-Shalom et al. 2001,
/// sec. 5.2.3, from memory), which stays positive semi-definite under rounding; only the
/// six distinct entries are stored, so `P` is symmetric by construction. All in `f32`.
///
/// # Gating and re-acquisition
///
/// A sample with `y^2 / S > gate_nis` is rejected and counted. After `reacquire_after`
/// consecutive rejections, after a gap longer than `max_step_s`, or when no sample has
/// been accepted for `baro_timeout_s`, the next sample re-acquires: `h = z`,
/// `P_hh = R`, height cross-covariances zero, speed variance at least its initial value.
///
/// # Time
///
/// Time stamps are `f64` seconds (see the [module docs](super)). Each stream must be
/// strictly increasing, and samples must be fed in time order: a sample older than the
/// latest one of either stream is refused ([`Error::NotIncreasing`]); equal times of the
/// two streams are fine. Heights are `f32` metres: resolution 61 um at 500 m, 4 mm at
/// 30 km.
///
/// # Cost
///
/// O(1) per sample, no `exp` or `sqrt` (only in [`Self::estimate`]). State: see
/// `size_of::<VerticalKalman>()` (printed by the drone-hop test: 168 bytes on a 64-bit
/// host, of which 64 are the configuration).
///
/// ```
/// use isohypse::time::Instant;
/// use isohypse::{filter::{KalmanOutcome, VerticalKalman, VerticalKalmanConfig}, Height};
/// let mut kf = VerticalKalman::new(VerticalKalmanConfig::default())?;
/// assert_eq!(kf.correct(Instant::ZERO, Height::from_meters(120.0)?)?, KalmanOutcome::Initialized);
/// for k in 1..=100 {
///     let t = Instant::from_micros(k * 5_000);
///     kf.predict(t, 0.0)?; // at rest: zero vertical acceleration
///     if k % 4 == 0 {
///         kf.correct(t, Height::from_meters(120.0)?)?;
///     }
/// }
/// let e = kf.estimate().unwrap();
/// assert!((e.height.meters() - 120.0).abs() < 0.01);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VerticalKalman<C = VerticalKalmanConfig> {
    /// The settings, owned or borrowed (`&'static VerticalKalmanConfig` keeps them out
    /// of the state, in flash).
    config: C,
    core: Core,
    /// Time of `core`, s, once initialised; before that, the time of the latest
    /// accelerometer sample (if `accel_age_s` is finite).
    time: Instant,
    /// Latest accelerometer sample, m/s^2.
    accel_mps2: f32,
    /// Age of the latest accelerometer sample at `time`, s; infinite before the first.
    /// Ages are `f32` so that only one step between `f64` times is formed per call.
    accel_age_s: f32,
    /// Age of the latest accepted barometer sample at `time`, s.
    accepted_age_s: f32,
    /// Yes/no state, one bit each (see the `*_AT_CORE`, `INITIALIZED`, ... masks): the
    /// latest barometer / accelerometer sample is at `time`, initialised, barometer
    /// disturbed, re-acquisition pending. (Whether the accelerometer sample is at
    /// `time` is a flag, not `accel_age_s == 0`: a step below the smallest normal
    /// `f32`, 1.2e-38 s, is later but adds 0 to the age.)
    bits: Bits,
    /// The current run of rejections has samples on both sides of the prediction
    /// ([`RUN_MIXED`]); the accelerometer is not trusted ([`ACCEL_SUSPECT`]). A byte of
    /// its own: `bits` is full; it fills what would be padding.
    run: Bits,
    consecutive_rejections: u16,
    /// The first rejected barometer height of the current run, m, and `accepted_age_s`
    /// at it (valid while `consecutive_rejections` > 0): the age grows with every step
    /// until a sample is taken, so its growth since is the run's duration.
    run_start_m: f32,
    run_start_age_s: f32,
    rejected: u32,
    reacquisitions: u32,
    /// The latest accepted full cycle, for reuse once settled (flag `SETTLED`).
    reuse: Reuse,
}

impl<C: Borrow<VerticalKalmanConfig> + Copy> VerticalKalman<C> {
    /// A filter waiting for its first barometer sample. `config` is owned
    /// (`VerticalKalmanConfig`) or borrowed (`&VerticalKalmanConfig`, for example from a
    /// `static`: the settings then stay out of the filter's state).
    ///
    /// Errors: [`Error::InvalidSetting`] (see [`VerticalKalmanConfig::validate`]).
    pub fn new(config: C) -> Result<Self, Error> {
        config.borrow().validate()?;
        Ok(Self {
            config,
            core: Core {
                h: 0.0,
                v: 0.0,
                b: 0.0,
                p: Covariance {
                    hh: 0.0,
                    hv: 0.0,
                    hb: 0.0,
                    vv: 0.0,
                    vb: 0.0,
                    bb: 0.0,
                },
            },
            time: Instant::ZERO,
            accel_mps2: 0.0,
            accel_age_s: f32::INFINITY,
            accepted_age_s: 0.0,
            bits: Bits::NONE,
            run: Bits::NONE,
            consecutive_rejections: 0,
            run_start_m: 0.0,
            run_start_age_s: 0.0,
            rejected: 0,
            reacquisitions: 0,
            reuse: Reuse::NONE,
        })
    }

    /// The settings in use.
    pub fn config(&self) -> &VerticalKalmanConfig {
        self.config.borrow()
    }

    /// Prediction with an accelerometer sample: earth-frame vertical acceleration
    /// `accel_up_mps2` (m/s^2, gravity removed, positive up) taken at `time` (s).
    /// The sample is taken as the mean acceleration over the step since the previous
    /// sample of either stream, and is held for the prediction to the next barometer
    /// sample. Before the first barometer sample it is only remembered.
    ///
    /// Errors, state unchanged: [`Error::NotFinite`] (value or time),
    /// [`Error::SampleOutOfRange`] (|a| above `max_accel_mps2`), [`Error::NotIncreasing`]
    /// (time not after the previous accelerometer sample, or before the latest
    /// barometer sample).
    pub fn predict(&mut self, time: Instant, accel_up_mps2: f32) -> Result<(), Error> {
        let t = time;
        self.predict_step(t, self.step_to(t), accel_up_mps2)
    }

    /// [`Self::predict`] with the step from the filter's time to `t` already formed
    /// (`step_between(self.time, t)`; anything when the filter has no time yet), so
    /// that a caller which has it does not form the step a second time. `t` is
    /// finite.
    pub(crate) fn predict_step(
        &mut self,
        t: Instant,
        step: Step,
        accel_up_mps2: f32,
    ) -> Result<(), Error> {
        self.accel_ok(accel_up_mps2)?;
        let dt = match step {
            _ if !self.has_time() => 0.0,
            Step::Later(dt) => dt,
            // equal times of the two streams are fine, not two accelerometer samples
            Step::Same if !self.bits.get(ACCEL_AT_CORE) => 0.0,
            Step::Same | Step::Earlier => return Err(Error::NotIncreasing),
        };
        if !self.bits.get(INITIALIZED) {
            // before the first barometer sample the accelerometer is only remembered
            self.time = t;
            self.hold_accel_at_core(accel_up_mps2);
            return Ok(());
        }
        // an accelerometer not trusted since a shock is left out until it is quiet
        let trusted = self.trusted(accel_up_mps2);
        let (mut core, dropout) = self.propagate(dt, trusted.then_some(accel_up_mps2));
        core.v = limit_speed(core.v);
        if !core.is_finite() {
            return Err(Error::NotFinite);
        }
        self.core = core;
        self.run.set(ACCEL_SUSPECT, !trusted);
        if dropout {
            self.bits.set(REACQUIRE_PENDING, true);
        }
        if self.reuse_on() {
            // a prediction on its own: the latest event is no longer a correction
            self.reuse.r = 0.0;
            self.bits.set(SETTLED, false);
        }
        self.time = t;
        if trusted {
            self.hold_accel_at_core(accel_up_mps2);
        } else {
            self.accel_age_s += dt;
        }
        self.accepted_age_s += dt;
        if matches!(step, Step::Later(_)) {
            self.bits.set(BARO_AT_CORE, false);
        }
        Ok(())
    }

    /// Keeps `accel_up_mps2` (m/s^2) as the latest accelerometer sample, taken at the
    /// filter's time (age 0). One commit for every path that applies one.
    fn hold_accel_at_core(&mut self, accel_up_mps2: f32) {
        self.accel_mps2 = accel_up_mps2;
        self.accel_age_s = 0.0;
        self.bits.set(ACCEL_AT_CORE, true);
    }

    /// Whether the accelerometer reading `a` (m/s^2) is used: always, unless the
    /// filter distrusts the accelerometer since a shock ([`ACCEL_SUSPECT`]) and `a`
    /// lies further than [`ACCEL_QUIET_MPS2`] from the bias estimate.
    fn trusted(&self, a: f32) -> bool {
        !self.run.get(ACCEL_SUSPECT) || (a - self.core.b).abs() <= ACCEL_QUIET_MPS2
    }

    /// Refusals of an accelerometer sample's value (its time is checked with the step).
    fn accel_ok(&self, accel_up_mps2: f32) -> Result<(), Error> {
        if !accel_up_mps2.is_finite() {
            Err(Error::NotFinite)
        } else if accel_up_mps2.abs() > self.config().max_accel_mps2 {
            Err(Error::SampleOutOfRange)
        } else {
            Ok(())
        }
    }

    /// Correction with a barometric height `height` (m, any fixed reference, e.g.
    /// pressure altitude) taken at `time` (s). The state is first predicted to
    /// `time` with the latest accelerometer sample if it is fresh, else with the
    /// constant-velocity model.
    ///
    /// Errors, state unchanged: [`Error::NotFinite`] (time),
    /// [`Error::BelowModelBottom`] / [`Error::AboveModelTop`] (height outside
    /// `min_height_m..=max_height_m`), [`Error::NotIncreasing`] (time not after the
    /// previous barometer sample, or before the latest accelerometer sample).
    pub fn correct(&mut self, time: Instant, height: Height) -> Result<KalmanOutcome, Error> {
        let t = time;
        let r = self.sample_variance(self.config().baro_sigma_m)?;
        self.correct_with_variance(t, self.step_to(t), height, r)
    }

    /// The filter has a time: it is initialised, or has remembered an accelerometer
    /// sample.
    fn has_time(&self) -> bool {
        self.bits.get(INITIALIZED) || self.accel_age_s.is_finite()
    }

    /// The step from the filter's time to `t` (`Later(0)` before it has a time).
    fn step_to(&self, t: Instant) -> Step {
        if self.has_time() {
            super::step_between(self.time, t)
        } else {
            Step::Later(0.0)
        }
    }

    /// Like [`Self::correct`], with this sample's own 1-sigma height noise `sigma_m`
    /// (m, > 0) in place of [`VerticalKalmanConfig::baro_sigma_m`]; the disturbance
    /// factor still applies. Barometric height noise grows as pressure falls
    /// (`sigma_h = (R T / (g p)) sigma_p`, hypsometric equation): a balloon at 30 km
    /// sees about 80 times the height noise it saw on the ground for the same sensor.
    ///
    /// Errors: [`Error::InvalidSetting`] for a `sigma_m` that is not finite and positive;
    /// otherwise as [`Self::correct`]. The state is unchanged on error.
    pub fn correct_with_sigma(
        &mut self,
        time: Instant,
        height: Height,
        sigma_m: f32,
    ) -> Result<KalmanOutcome, Error> {
        let t = time;
        self.correct_step(t, self.step_to(t), height, sigma_m)
    }

    /// [`Self::correct_with_sigma`] with the step from the filter's time to `t` already
    /// formed (see [`Self::predict_step`]). `t` is finite.
    pub(crate) fn correct_step(
        &mut self,
        t: Instant,
        step: Step,
        height: Height,
        sigma_m: f32,
    ) -> Result<KalmanOutcome, Error> {
        let r = self.sample_variance(sigma_m)?;
        self.correct_with_variance(t, step, height, r)
    }

    /// Variance of a barometer sample with 1-sigma `sigma_m` (m), the disturbance factor
    /// applied while disturbed. Errors: [`Error::InvalidSetting`] for a `sigma_m` that is
    /// not finite and positive.
    fn sample_variance(&self, sigma_m: f32) -> Result<f32, Error> {
        // two comparisons, which NaN fails (`is_finite` costs about 15 instructions
        // more on the Cortex-M4F, measured)
        if !(sigma_m > 0.0 && sigma_m <= f32::MAX) {
            return Err(Error::InvalidSetting);
        }
        let sigma = if self.bits.get(DISTURBED) {
            sigma_m * self.config().disturbed_sigma_scale
        } else {
            sigma_m
        };
        Ok(sigma * sigma)
    }

    /// Refusals of a barometer sample with height `z` at `step` from the filter's time,
    /// the same as [`Self::correct`] gives, checked before anything changes.
    fn check_correct(&self, step: Step, z: f32) -> Result<(), Error> {
        if z < self.config().min_height_m {
            return Err(Error::BelowModelBottom);
        }
        if z > self.config().max_height_m {
            return Err(Error::AboveModelTop);
        }
        let time_ok = match step {
            // before the first barometer sample only an accelerometer sample orders it
            Step::Earlier => !self.bits.get(INITIALIZED) && !self.accel_age_s.is_finite(),
            Step::Later(_) => true,
            Step::Same => !self.bits.get(INITIALIZED) || !self.bits.get(BARO_AT_CORE),
        };
        if time_ok {
            Ok(())
        } else {
            Err(Error::NotIncreasing)
        }
    }

    /// An accelerometer sample `accel_up_mps2` (m/s^2, if any) and a barometer height
    /// `height` with 1-sigma `sigma_m` (m), both taken at `time`, applied as one: when
    /// the barometer sample is refused, the accelerometer sample is not applied either
    /// (and the filter is unchanged). A refused accelerometer sample alone does not
    /// stop the barometer sample; its error is the first result. The second is that of
    /// [`Self::correct_with_sigma`].
    pub fn predict_and_correct(
        &mut self,
        time: Instant,
        accel_up_mps2: Option<f32>,
        height: Height,
        sigma_m: f32,
    ) -> (Result<(), Error>, Result<KalmanOutcome, Error>) {
        let step = self.step_to(time);
        self.predict_correct(time, step, accel_up_mps2, height, sigma_m)
    }

    /// Starts the filter again from the barometer height `height` with 1-sigma
    /// `sigma_m` taken at `time`, whatever its time was (after a clock fault, or a
    /// stamp out of order): height at the sample, speed and bias forgotten, covariance
    /// as at the first sample. The settings and the disturbance flag are kept, and the
    /// counts of rejections and re-acquisitions go on. Errors, filter unchanged: those
    /// of [`Self::correct_with_sigma`] for the height and sigma.
    pub fn restart(
        &mut self,
        time: Instant,
        height: Height,
        sigma_m: f32,
    ) -> Result<KalmanOutcome, Error> {
        self.sample_variance(sigma_m)?;
        let z = height.meters();
        if z < self.config().min_height_m {
            return Err(Error::BelowModelBottom);
        }
        if z > self.config().max_height_m {
            return Err(Error::AboveModelTop);
        }
        let (rejected, reacquisitions) = (self.rejected, self.reacquisitions);
        self.reset();
        self.rejected = rejected;
        self.reacquisitions = reacquisitions.saturating_add(1);
        self.predict_and_correct(time, None, height, sigma_m).1
    }

    /// The time of the filter's state: its latest barometer or accelerometer sample,
    /// `None` before any.
    pub fn time(&self) -> Option<Instant> {
        self.has_time().then_some(self.time)
    }

    /// An accelerometer sample (if any) and a barometer sample taken at the same time
    /// `t`, `step` from the filter's time (see [`Self::predict_step`]), applied as one:
    /// when the barometer sample is refused, the accelerometer sample is not applied
    /// either. A refused accelerometer sample alone does not stop the barometer sample;
    /// its error is the first result.
    fn predict_correct(
        &mut self,
        t: Instant,
        step: Step,
        accel_up_mps2: Option<f32>,
        height: Height,
        sigma_m: f32,
    ) -> (Result<(), Error>, Result<KalmanOutcome, Error>) {
        let z = height.meters();
        let r = match self.sample_variance(sigma_m) {
            Ok(r) => r,
            Err(e) => return (Ok(()), Err(e)),
        };
        if let Err(e) = self.check_correct(step, z) {
            return (Ok(()), Err(e));
        }
        if let Some(outcome) = self.reuse_settled(t, step, accel_up_mps2, z, r) {
            return (Ok(()), Ok(outcome));
        }
        let cycle = self.cycle_start(step, accel_up_mps2.is_some());
        // An initialised filter at a later time takes an accelerometer sample that
        // `predict` would take in the same pass as the barometer sample: the same
        // arithmetic as `predict_step` then `apply_correct`, without committing the
        // prediction in between, so that a refused barometer sample leaves the
        // accelerometer sample unapplied too. Otherwise (a refused accelerometer
        // sample, the first samples, equal times) the two steps.
        let mut step = step;
        let (predicted, at_t) = match accel_up_mps2 {
            Some(a) if matches!(step, Step::Later(_)) && self.bits.get(INITIALIZED) => {
                let checked = self.accel_ok(a);
                (checked, checked.is_ok().then_some(a))
            }
            // An initialised filter refuses an accelerometer sample at its own time:
            // that time's accelerometer sample is at the core (a barometer sample at
            // that time is refused by `check_correct` above).
            Some(a) if self.bits.get(INITIALIZED) => {
                (self.accel_ok(a).and(Err(Error::NotIncreasing)), None)
            }
            Some(a) => {
                let r = self.predict_step(t, step, a);
                if r.is_ok() {
                    step = Step::Same;
                }
                (r, None)
            }
            None => (Ok(()), None),
        };
        // Checked above (after a prediction to `t` the step is `Same` with no barometer
        // sample at `t`, which the check allows too).
        let outcome = self.apply_correct(t, step, z, r, at_t);
        // a refused accelerometer sample leaves a cycle that reuse does not repeat
        let cycle = cycle.filter(|_| predicted.is_ok());
        self.end_cycle(cycle, &outcome, r);
        (predicted, outcome)
    }

    /// Whether a settled covariance may be reused (a tolerance above 0). With settings
    /// fixed at compile time and reuse off, the code that keeps [`Reuse`] is left out.
    #[inline(always)]
    fn reuse_on(&self) -> bool {
        self.config().gain_reuse_tolerance > 0.0
    }

    /// What [`Self::end_cycle`] needs to know about a full cycle from before it: the
    /// previous cycle's predicted column, its step and whether it applies an accelerometer
    /// sample taken with the barometer sample (`with_accel`) or the constant-velocity
    /// model. `None` when the cycle is not one reuse could repeat: the latest event was
    /// not an accepted correction, the step is not later, or (without an
    /// accelerometer sample) a held accelerometer sample is still fresh.
    #[inline(always)]
    fn cycle_start(&self, step: Step, with_accel: bool) -> Option<CycleStart> {
        let Step::Later(dt) = step else {
            return None;
        };
        let cfg = self.config();
        let fresh_held = self.accel_age_s + dt <= cfg.accel_timeout_s;
        let repeatable = self.reuse_on() && self.reuse.r > 0.0;
        let r = &self.reuse;
        let prior = (r.prior_hh, r.prior_hv, r.prior_hb);
        (repeatable && (with_accel || !fresh_held)).then_some((prior, dt, with_accel))
    }

    /// After a full cycle that started as `cycle` (see [`Self::cycle_start`]) and ended
    /// in `outcome` with barometer variance `r`: records it for reuse, and marks the
    /// filter settled when its predicted column moved by no more than
    /// [`SETTLE_CHANGE`] from the previous cycle's.
    /// On an error the state is as before the cycle and nothing is recorded.
    #[inline(always)]
    fn end_cycle(
        &mut self,
        cycle: Option<CycleStart>,
        outcome: &Result<KalmanOutcome, Error>,
        r: f32,
    ) {
        if !self.reuse_on() {
            return;
        }
        match outcome {
            Ok(KalmanOutcome::Accepted { .. }) => {
                let (settle, dt, with_accel) = match cycle {
                    Some((before, dt, with_accel)) => {
                        let r = &self.reuse;
                        let now = (r.prior_hh, r.prior_hv, r.prior_hb);
                        (settled(before, now), dt, with_accel)
                    }
                    None => (false, 0.0, false),
                };
                self.reuse.dt = dt;
                self.reuse.r = r;
                self.bits.set(REUSE_WITH_ACCEL, with_accel);
                self.bits.set(SETTLED, settle);
            }
            Ok(_) => {
                self.reuse.r = 0.0;
                self.bits.set(SETTLED, false);
            }
            Err(_) => {}
        }
    }

    /// The barometer sample `z` (variance `r`, at `step` from the filter's time, with
    /// the accelerometer sample `accel` taken with it, if any), applied with the
    /// settled covariance: the mean predicted and corrected, the covariance kept (see
    /// [`VerticalKalmanConfig::gain_reuse_tolerance`]). `None`, state unchanged, when
    /// reuse does not apply and the sample needs the full cycle: not settled, the step
    /// or the variance outside the tolerance, another mode, an accelerometer sample
    /// the full cycle would refuse, a pending re-acquisition, a dropout or barometer
    /// timeout, a sample outside the gate, or a result that is not finite.
    /// [`Self::check_correct`] has passed.
    #[inline(always)]
    fn reuse_settled(
        &mut self,
        t: Instant,
        step: Step,
        accel: Option<f32>,
        z: f32,
        r: f32,
    ) -> Option<KalmanOutcome> {
        let Step::Later(dt) = step else {
            return None;
        };
        let cfg = self.config();
        let tol = cfg.gain_reuse_tolerance;
        // the full cycle's way out: first and cheap (and left out of the code with
        // reuse off in settings fixed at compile time)
        if !(self.reuse_on() && self.bits.get(SETTLED)) {
            return None;
        }
        let reuse = self.reuse;
        let with_accel = self.bits.get(REUSE_WITH_ACCEL);
        let mode_ok = match accel {
            // NaN fails the comparison
            Some(a) => with_accel && a.abs() <= cfg.max_accel_mps2,
            None => !with_accel && self.accel_age_s + dt > cfg.accel_timeout_s,
        };
        let accepted_age = self.accepted_age_s + dt;
        if !(mode_ok
            && near(dt, reuse.dt, tol)
            && near(r, reuse.r, tol)
            && dt <= cfg.max_step_s
            && accepted_age <= cfg.baro_timeout_s
            && !self.bits.get(REACQUIRE_PENDING)
            && !self.run.get(ACCEL_SUSPECT))
        {
            return None;
        }
        // The mean predicted as the full cycle predicts it (`propagate`).
        let Core { h, v, b, p } = self.core;
        let a = accel.map_or(0.0, |u| u - b);
        let (h1, v1) = mean_step(h, v, a, dt, dt * dt);
        let y = z - h1;
        let s = reuse.prior_hh + r;
        let nis = y * y / s;
        // Written so that a NaN (impossible: S >= R > 0) would count as outside.
        let inside_gate = nis <= cfg.gate_nis;
        if !inside_gate {
            return None;
        }
        let g = y / s;
        let core = Core {
            h: h1 + reuse.prior_hh * g,
            v: v1 + reuse.prior_hv * g,
            b: b + reuse.prior_hb * g,
            p,
        };
        if !core.is_finite() {
            return None;
        }
        // Commit: as the full cycle commits an accepted sample.
        self.core = core;
        self.time = t;
        self.bits.set(BARO_AT_CORE, true);
        match accel {
            Some(a) => self.hold_accel_at_core(a),
            None => {
                self.accel_age_s += dt;
                self.bits.set(ACCEL_AT_CORE, false);
            }
        }
        self.accepted_age_s = 0.0;
        self.consecutive_rejections = 0;
        Some(KalmanOutcome::Accepted { nis })
    }

    fn correct_with_variance(
        &mut self,
        t: Instant,
        step: Step,
        height: Height,
        r: f32,
    ) -> Result<KalmanOutcome, Error> {
        let z = height.meters();
        self.check_correct(step, z)?;
        if let Some(outcome) = self.reuse_settled(t, step, None, z, r) {
            return Ok(outcome);
        }
        let cycle = self.cycle_start(step, false);
        let outcome = self.apply_correct(t, step, z, r, None);
        self.end_cycle(cycle, &outcome, r);
        outcome
    }

    /// A barometer height `z` with variance `r` at `step` from the filter's time, after
    /// [`Self::check_correct`] passed. `accel_at_t`: an accelerometer sample taken at
    /// `t` that [`Self::accel_ok`] passed, applied as [`Self::predict_step`] would apply
    /// it first (only for an initialised filter and a later `t`; `None` otherwise).
    /// Error, state unchanged: [`Error::NotFinite`].
    fn apply_correct(
        &mut self,
        t: Instant,
        step: Step,
        z: f32,
        r: f32,
        accel_at_t: Option<f32>,
    ) -> Result<KalmanOutcome, Error> {
        if !self.bits.get(INITIALIZED) {
            // ordered by `check_correct`; the accelerometer sample's age moves on
            let age = match step {
                Step::Later(dt) => self.accel_age_s + dt,
                _ => self.accel_age_s,
            };
            let c = self.config();
            self.core = Core {
                h: z,
                v: 0.0,
                b: 0.0,
                p: Covariance {
                    hh: r,
                    hv: 0.0,
                    hb: 0.0,
                    vv: c.initial_speed_sigma_mps * c.initial_speed_sigma_mps,
                    vb: 0.0,
                    bb: c.initial_bias_sigma_mps2 * c.initial_bias_sigma_mps2,
                },
            };
            self.time = t;
            self.accel_age_s = age;
            self.bits.set(BARO_AT_CORE, true);
            if matches!(step, Step::Later(_)) {
                self.bits.set(ACCEL_AT_CORE, false);
            }
            self.accepted_age_s = 0.0;
            self.bits.set(INITIALIZED, true);
            return Ok(KalmanOutcome::Initialized);
        }
        let dt = match step {
            Step::Later(dt) => dt,
            // `Same`: after an accelerometer sample at this time (checked above)
            Step::Same | Step::Earlier => 0.0,
        };
        let (accel_age, accel) = match accel_at_t {
            Some(a) => (0.0, Some(a)),
            None => {
                let age = self.accel_age_s + dt;
                (
                    age,
                    (age <= self.config().accel_timeout_s).then_some(self.accel_mps2),
                )
            }
        };
        // an accelerometer not trusted since a shock is left out until it is quiet
        let accel = accel.filter(|a| self.trusted(*a));
        let mut suspect = self.run.get(ACCEL_SUSPECT) && accel.is_none();
        // A step of 0 (an accelerometer sample at this time was just applied) leaves
        // mean and covariance as they are; an accelerometer sample at `t` is applied
        // over any later step, as `predict_step` applies it.
        let (mut core, dropout) = if dt > 0.0 || accel_at_t.is_some() {
            self.propagate(dt, accel)
        } else {
            (self.core, false)
        };
        let accepted_age = self.accepted_age_s + dt;
        let stale = accepted_age > self.config().baro_timeout_s;
        // a prediction that left the heights the filter takes is no estimate: start
        // again from the measurement (written so that a NaN counts as outside)
        let c = self.config();
        let inside = core.h >= c.min_height_m && core.h <= c.max_height_m;
        let mut reacquire = self.bits.get(REACQUIRE_PENDING) || dropout || stale || !inside;

        let y = z - core.h;
        let s = core.p.hh + r;
        let nis = y * y / s;
        let mut outcome = KalmanOutcome::Accepted { nis };
        // predicted covariance column of an accepted sample, kept for reuse
        let mut prior = (0.0, 0.0, 0.0);
        let mut consecutive = self.consecutive_rejections;
        let mut rejected = self.rejected;
        // Written so that a NaN (impossible: S >= R > 0) would count as outside.
        let inside_gate = nis <= self.config().gate_nis;
        // A run of rejections all on the same side of the prediction lasting
        // `follow_after_s` is a change of motion the prediction missed: the filter
        // follows it (see `VerticalKalmanConfig::follow_after_s`).
        let mut same_side_run = false;
        let mut mixed = false;
        if !reacquire && !inside_gate {
            rejected = rejected.saturating_add(1);
            consecutive = consecutive.saturating_add(1);
            outcome = KalmanOutcome::Rejected { nis };
            let same_side = consecutive < 2
                || ((y > 0.0) == self.bits.get(REJECTED_ABOVE) && !self.run.get(RUN_MIXED));
            let span = accepted_age - self.run_start_age_s;
            same_side_run = same_side && consecutive >= 2;
            let motion_change = same_side_run && span >= self.config().follow_after_s;
            mixed = !same_side;
            if consecutive >= self.config().reacquire_after || motion_change {
                reacquire = true;
            }
        }
        // a run on one side, followed or long enough to re-acquire, starts again from
        // the run; anything else from the last sample with the predicted speed
        let span = accepted_age - self.run_start_age_s;
        if reacquire && same_side_run && span > 0.0 {
            core = self.two_point_start(&core, z, r, span);
            outcome = KalmanOutcome::Reacquired;
            suspect |= accel.is_some();
        } else if reacquire {
            core.h = z;
            core.p.hh = r;
            core.p.hv = 0.0;
            core.p.hb = 0.0;
            let v0 = self.config().initial_speed_sigma_mps;
            core.p.vv = math::at_least(core.p.vv, v0 * v0);
            outcome = KalmanOutcome::Reacquired;
        } else if let KalmanOutcome::Accepted { .. } = outcome {
            prior = (core.p.hh, core.p.hv, core.p.hb);
            core = Self::update(core, y, r);
        }
        core.v = limit_speed(core.v);
        if !core.is_finite() {
            return Err(Error::NotFinite);
        }
        // Commit.
        self.core = core;
        self.time = t;
        self.bits.set(BARO_AT_CORE, true);
        match accel_at_t {
            Some(a) => self.hold_accel_at_core(a),
            None if matches!(step, Step::Later(_)) => self.bits.set(ACCEL_AT_CORE, false),
            None => {}
        }
        self.accel_age_s = accel_age;
        self.rejected = rejected;
        self.run.set(ACCEL_SUSPECT, suspect);
        match outcome {
            KalmanOutcome::Rejected { .. } => {
                self.consecutive_rejections = consecutive;
                self.accepted_age_s = accepted_age;
                if consecutive == 1 {
                    self.run_start_m = z;
                    self.run_start_age_s = accepted_age;
                }
                self.bits.set(REJECTED_ABOVE, y > 0.0);
                self.run.set(RUN_MIXED, mixed);
            }
            KalmanOutcome::Reacquired => {
                self.consecutive_rejections = 0;
                self.run.set(RUN_MIXED, false);
                self.bits.set(REACQUIRE_PENDING, false);
                self.reacquisitions = self.reacquisitions.saturating_add(1);
                self.accepted_age_s = 0.0;
            }
            _ => {
                self.consecutive_rejections = 0;
                self.run.set(RUN_MIXED, false);
                self.accepted_age_s = 0.0;
                if self.reuse_on() {
                    (
                        self.reuse.prior_hh,
                        self.reuse.prior_hv,
                        self.reuse.prior_hb,
                    ) = prior;
                }
            }
        }
        Ok(outcome)
    }

    /// The state started again from two barometer heights `dt` seconds apart: the
    /// first of the run of rejections and `z` (variance `r` each). Height `z`, speed their difference over
    /// `dt`, with the covariance of that difference: `P_hh = r`, `P_hv = r / dt`,
    /// `P_vv = 2 r / dt^2` (the two-point start of a constant-velocity filter; Bar-Shalom,
    /// Li and Kirubarajan, *Estimation with Applications to Tracking and Navigation*,
    /// 2001, sec. 5.5.3, from memory). The accelerometer bias of the `predicted` state
    /// is kept, its variance raised back to the initial one and its correlations
    /// dropped.
    fn two_point_start(&self, predicted: &Core, z: f32, r: f32, dt: f32) -> Core {
        let c = self.config();
        let b0 = c.initial_bias_sigma_mps2 * c.initial_bias_sigma_mps2;
        Core {
            h: z,
            v: (z - self.run_start_m) / dt,
            b: predicted.b,
            p: Covariance {
                hh: r,
                hv: r / dt,
                hb: 0.0,
                vv: 2.0 * r / (dt * dt),
                vb: 0.0,
                bb: math::at_least(predicted.p.bb, b0),
            },
        }
    }

    /// Mean and covariance propagated over `dt` (s); also whether `dt` was a dropout.
    /// The caller checks the result is finite. (Not a `Result`: returned in one, the
    /// 36-byte state lands at an odd offset and is copied byte by byte on Cortex-M,
    /// 400 instructions per call, measured.)
    fn propagate(&self, dt_full: f32, accel: Option<f32>) -> (Core, bool) {
        let cfg = self.config();
        let dropout = dt_full > cfg.max_step_s;
        // (a comparison, not `f32::min`: that is a library call on ARMv7E-M)
        let dt = if dropout { cfg.max_step_s } else { dt_full };
        let Core { h, v, b, p } = self.core;
        let dt2 = dt * dt;
        let dt3 = dt2 * dt;
        let qb = cfg.bias_random_walk * cfg.bias_random_walk;
        // c, d: the bias entries of F; zero in the constant-velocity model.
        let (a, c, d, qa) = match accel {
            Some(u) => (
                u - b,
                -0.5 * dt2,
                -dt,
                cfg.accel_noise_density * cfg.accel_noise_density,
            ),
            None => (
                0.0,
                0.0,
                0.0,
                cfg.baro_only_accel_density * cfg.baro_only_accel_density,
            ),
        };
        let (h1, v1) = mean_step(h, v, a, dt, dt2);
        // F P, rows 0 and 1 (row 2 is P's row 2).
        let fp00 = p.hh + dt * p.hv + c * p.hb;
        let fp01 = p.hv + dt * p.vv + c * p.vb;
        let fp02 = p.hb + dt * p.vb + c * p.bb;
        let fp11 = p.vv + d * p.vb;
        let fp12 = p.vb + d * p.bb;
        // (F P) F^T.
        let mut q = Covariance {
            hh: fp00 + dt * fp01 + c * fp02,
            hv: fp01 + d * fp02,
            hb: fp02,
            vv: fp11 + d * fp12,
            vb: fp12,
            bb: p.bb,
        };
        q.hh += qa * dt3 / 3.0;
        q.hv += qa * dt2 / 2.0;
        q.vv += qa * dt;
        q.bb += qb * dt;
        if accel.is_some() {
            q.hh += qb * dt3 * dt2 / 20.0;
            q.hv += qb * dt2 * dt2 / 8.0;
            q.hb -= qb * dt3 / 6.0;
            q.vv += qb * dt3 / 3.0;
            q.vb -= qb * dt2 / 2.0;
        }
        let mut core = Core {
            h: h1,
            v: v1,
            b,
            p: q,
        };
        let mut saturated = false;
        if !(core.p.hh <= MAX_VAR_HEIGHT && core.p.vv <= MAX_VAR_SPEED && core.p.bb <= MAX_VAR_BIAS)
        {
            // Only after extremely long gaps: keep a valid diagonal covariance.
            core.p = Covariance {
                hh: math::at_most(core.p.hh, MAX_VAR_HEIGHT),
                hv: 0.0,
                hb: 0.0,
                vv: math::at_most(core.p.vv, MAX_VAR_SPEED),
                vb: 0.0,
                bb: math::at_most(core.p.bb, MAX_VAR_BIAS),
            };
            saturated = true;
        }
        (core, dropout || saturated)
    }

    /// Joseph-form scalar update with `H = [1 0 0]`: `P' = A P A^T + r K K^T`,
    /// `A = I - K H`.
    fn update(core: Core, y: f32, r: f32) -> Core {
        let p = core.p;
        let s = p.hh + r;
        let k0 = p.hh / s;
        let k1 = p.hv / s;
        let k2 = p.hb / s;
        // M = A P, rows i: P_i. - K_i P_0.
        let m00 = p.hh - k0 * p.hh;
        let m01 = p.hv - k0 * p.hv;
        let m02 = p.hb - k0 * p.hb;
        let m10 = p.hv - k1 * p.hh;
        let m11 = p.vv - k1 * p.hv;
        let m12 = p.vb - k1 * p.hb;
        let m20 = p.hb - k2 * p.hh;
        let m22 = p.bb - k2 * p.hb;
        // P'_ij = M_ij - M_i0 K_j + r K_i K_j.
        Core {
            h: core.h + k0 * y,
            v: core.v + k1 * y,
            b: core.b + k2 * y,
            p: Covariance {
                hh: m00 - m00 * k0 + r * k0 * k0,
                hv: m01 - m00 * k1 + r * k0 * k1,
                hb: m02 - m00 * k2 + r * k0 * k2,
                vv: m11 - m10 * k1 + r * k1 * k1,
                vb: m12 - m10 * k2 + r * k1 * k2,
                bb: m22 - m20 * k2 + r * k2 * k2,
            },
        }
    }

    /// Flags (or clears) a disturbance of the barometer, such as propeller wash or
    /// ground effect near take-off and landing: while set, the barometer noise is
    /// `disturbed_sigma_scale` times larger, so the filter leans on the accelerometer
    /// and gates less.
    pub fn set_baro_disturbed(&mut self, disturbed: bool) {
        self.bits.set(DISTURBED, disturbed);
    }

    /// Whether a barometer disturbance is flagged.
    pub const fn is_baro_disturbed(&self) -> bool {
        self.bits.get(DISTURBED)
    }

    /// The estimate at the latest sample, `None` before the first barometer sample.
    pub fn estimate(&self) -> Option<VerticalEstimate> {
        if !self.bits.get(INITIALIZED) {
            return None;
        }
        let c = &self.core;
        Some(VerticalEstimate {
            time: self.time,
            height: Height::from_meters(c.h).ok()?,
            vertical_speed: VerticalSpeed::from_mps(c.v).ok()?,
            accel_bias_mps2: c.b,
            height_sigma_m: crate::math::sqrt(math::at_least(c.p.hh, 0.0)),
            speed_sigma_mps: crate::math::sqrt(math::at_least(c.p.vv, 0.0)),
        })
    }

    /// Height (m), vertical speed (m/s) and height variance (m^2) at the latest sample,
    /// `None` before the first barometer sample: [`Self::estimate`] without its two
    /// square roots.
    pub fn height_speed_variance(&self) -> Option<(f32, f32, f32)> {
        self.bits
            .get(INITIALIZED)
            .then_some((self.core.h, self.core.v, self.core.p.hh))
    }

    /// Whether the covariance has settled and the next barometer sample may reuse it
    /// (see [`VerticalKalmanConfig::gain_reuse_tolerance`]).
    pub const fn is_settled(&self) -> bool {
        self.bits.get(SETTLED)
    }

    /// Barometer samples rejected by the gate since start.
    pub const fn rejected_count(&self) -> u32 {
        self.rejected
    }

    /// Current run of consecutive gate rejections.
    pub const fn consecutive_rejections(&self) -> u16 {
        self.consecutive_rejections
    }

    /// Re-acquisitions since start (dropouts, timeouts, runs of rejections).
    pub const fn reacquisition_count(&self) -> u32 {
        self.reacquisitions
    }

    /// Forgets the estimate (keeps the settings and the disturbance flag); the next
    /// barometer sample initialises again.
    pub fn reset(&mut self) {
        let disturbed = self.bits.get(DISTURBED);
        if let Ok(fresh) = Self::new(self.config) {
            *self = fresh;
        }
        self.bits.set(DISTURBED, disturbed);
    }
}

crate::snapshot::snap_fields!(Covariance {
    hh,
    hv,
    hb,
    vv,
    vb,
    bb
});
crate::snapshot::snap_fields!(Core { h, v, b, p });
crate::snapshot::snap_fields!(Reuse {
    prior_hh,
    prior_hv,
    prior_hb,
    dt,
    r
});
// the settings are not state: a snapshot is restored with the same settings
crate::snapshot::snap_fields!(impl[C] VerticalKalman<C> {
    core,
    time,
    accel_mps2,
    accel_age_s,
    accepted_age_s,
    bits,
    run,
    consecutive_rejections,
    run_start_m,
    run_start_age_s,
    rejected,
    reacquisitions,
    reuse,
});

#[cfg(test)]
mod tests;
