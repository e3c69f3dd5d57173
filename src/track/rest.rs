//! Rest detection: is the height standing still, so that pressure change is weather?
//!
//! # Method
//!
//! The detector watches the smoothed height (before any weather correction) and knows
//! three states:
//!
//! * **Moving.** A window opens at some sample and keeps the lowest and highest height
//!   since, and the sums for a least-squares straight line through its heights. When the
//!   spread exceeds [`RestConfig::entry_band_m`], the window restarts at the current
//!   sample. When a window has lasted [`RestConfig::entry_window_s`], the device is
//!   declared at rest if the slope of that line is no steeper than the largest weather
//!   rate [`RestConfig::max_weather_rate_m_per_h`]; otherwise the window restarts.
//! * **Resting (detected).** A level-and-slope tracker follows the height: a critically
//!   damped second-order loop (the alpha-beta form of a type-2 tracking loop, natural
//!   frequency `1 / T` with `T =` [`RestConfig::trend_time_constant_s`]):
//!   `pred = L + b dt`, `e = h - pred`, `L = pred + (2 dt / T) e`, `b += (dt / T^2) e`.
//!   For small `dt` these gains give the continuous loop the characteristic polynomial
//!   `s^2 + (2 / T) s + 1 / T^2 = (s + 1 / T)^2`: damping ratio 1, natural frequency
//!   `1 / T` (the standard second-order loop form `s^2 + 2 zeta wn s + wn^2`; common
//!   practice).
//!   It follows a steady weather drift with no lag; its slope `b` is the weather rate.
//!   Both the slope and the speed at which the level may move are limited to the largest
//!   weather rate, so a faster change cannot be absorbed: its departure from the
//!   prediction grows, and when it exceeds [`RestConfig::exit_band_m`] the rest ends. The
//!   departure is handed back as real movement (so the first metres of a climb are not
//!   lost), and the weather rate is taken from the last sample that was still within a
//!   quarter of the exit band (so the start of the climb does not leak into it).
//! * **Resting (declared by the user).** The same tracker runs, with no automatic exit;
//!   the user ends it.
//!
//! While moving, the last weather rate is kept and fades with time constant
//! [`RestConfig::weather_rate_memory_s`]; the hike tracker uses it to extrapolate the
//! weather drift through the walk (see [`crate::track::hike`]).
//!
//! Horizontal walking on the flat counts as "at rest" here: only vertical rest matters for
//! weather attribution, and on the flat all pressure change is indeed weather.
//!
//! # Limits (numbers for the defaults, measured in `tests/hike_day.rs`)
//!
//! From pressure alone a slow climb and a weather change look the same; the largest
//! weather rate (20 m/h of apparent height: 2.4 hPa/h at sea level, 2.2 hPa/h at 1000 m,
//! 2.0 hPa/h at 2000 m, with 1 hPa = 1 / (rho g) = 8.3, 9.2 and 10.1 m from the
//! U.S. 1976 densities 1.225, 1.112 and 1.007 kg/m^3, from memory) is where this
//! detector draws the line.
//!
//! * A real climb that starts from rest at 20 m/h or less is taken for weather and lost
//!   (test `slow_climbs_after_a_rest`: of 100 m, 0 m counted at 10 and 20 m/h, 25 m at
//!   25 m/h, 85 m at 30 m/h, 97.7 m at 40 m/h, 98.6 m at 60 m/h, 99.7 m at 90 m/h).
//! * A weather change faster than 20 m/h ends the rest and goes into the height and the
//!   totals (test `steady_pressure_falls_at_rest`, 3 hours still at 1000 m: totals 0 m
//!   for falls up to 2.0 hPa/h, 12 m at 2.5 hPa/h, 50 m at 3 hPa/h, 111 m at 4 hPa/h).
//!   Synoptic falls are mostly slower (3 hPa in 3 h is the usual "rapid fall" mark); a
//!   squall line, or a door or vehicle window closing, can be faster.
//! * The weather rate learnt at rest is extrapolated through the walk; a front that
//!   changes speed while walking leaves an error (the synthetic days measure it).
//!
//! Memory: 76 bytes with its configuration. Time: O(1) per sample.

use crate::Error;

/// Settings of the rest detector; see the [module docs](self) for the method.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RestConfig {
    /// How long the height must stay within [`Self::entry_band_m`] before rest is
    /// declared, s. Default 60 s: longer than a pause at a gate, short against a
    /// 20-minute rest (choice of this crate; the weather drift and smoothed noise counted
    /// before rest is declared grow with it).
    pub entry_window_s: f32,
    /// Largest spread (highest minus lowest smoothed height) in the entry window, m.
    /// Default 1.0 m: about twice the peak-to-peak of the smoothed height at 2 Pa noise
    /// (about 0.4 m), plus a minute of a strong front (0.2 m) (choice of this crate).
    pub entry_band_m: f32,
    /// Departure from the predicted level that ends a detected rest, m. Default 2.0 m.
    pub exit_band_m: f32,
    /// Time constant `T` of the level-and-slope tracker at rest, s. Default 300 s: the
    /// slope settles within about 15 minutes, well inside a 20-minute rest (choice of this
    /// crate).
    pub trend_time_constant_s: f32,
    /// Largest weather rate believed, m of apparent height per hour: slower height changes
    /// at rest are weather, faster ones movement. Default 20 m/h (2.4 hPa/h at sea level,
    /// 2.0 hPa/h at 2000 m): twice the usual "rapid fall" of 3 hPa in 3 h (choice of this
    /// crate; see the limits in the [module docs](self)).
    pub max_weather_rate_m_per_h: f32,
    /// Time constant with which the weather rate learnt at rest fades while moving, s.
    /// Default 10 800 s (3 h, the tendency period: a rate older than that says little).
    pub weather_rate_memory_s: f32,
}

impl Default for RestConfig {
    fn default() -> Self {
        Self::DEFAULT
    }
}

impl RestConfig {
    /// The defaults (the same as [`Default::default`]).
    pub const DEFAULT: Self = Self {
        entry_window_s: 60.0,
        entry_band_m: 1.0,
        exit_band_m: 2.0,
        trend_time_constant_s: 300.0,
        max_weather_rate_m_per_h: 20.0,
        weather_rate_memory_s: 10_800.0,
    };

    /// Checks every field is finite and inside its range (all > 0; windows and time
    /// constants <= 1 day; bands <= 100 m; weather rate <= 1000 m/h).
    ///
    /// Errors: [`Error::NotFinite`], [`Error::InvalidSetting`].
    pub fn validate(&self) -> Result<(), Error> {
        let fields = [
            (self.entry_window_s, 86_400.0),
            (self.entry_band_m, 100.0),
            (self.exit_band_m, 100.0),
            (self.trend_time_constant_s, 86_400.0),
            (self.max_weather_rate_m_per_h, 1_000.0),
            (self.weather_rate_memory_s, 86_400.0),
        ];
        for (value, max) in fields {
            if !value.is_finite() {
                return Err(Error::NotFinite);
            }
            if value <= 0.0 || value > max {
                return Err(Error::InvalidSetting);
            }
        }
        Ok(())
    }
}

/// Whether the device is at rest, and why.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RestState {
    /// Height is changing (or rest is not yet confirmed).
    Moving,
    /// Rest detected from the height.
    Resting,
    /// Rest declared by the user; pressure change is weather until the user ends it.
    DeclaredRest,
}

/// What happened at one sample.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum RestEvent {
    /// No change of state.
    Unchanged,
    /// Rest has just been detected.
    Entered,
    /// Detected rest has ended; `level_m` is the weather level predicted for this
    /// sample, the height beyond it is real movement.
    Left { level_m: f32 },
}

/// The detector state machine (crate-internal: the hike tracker validates time and
/// height before calling it). It keeps no settings: each call that needs them is given
/// the validated [`RestConfig`], so that a use type with settings in flash holds none in
/// RAM.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct RestDetector {
    state: RestState,
    /// Entry window: time since its start (s), its first, lowest and highest height (m).
    window_elapsed_s: f32,
    window_origin_m: f32,
    window_low_m: f32,
    window_high_m: f32,
    /// Least-squares sums over the window, x = time since the window start (s),
    /// y = height minus the window's first height (m): n, sum x, sum y, sum x^2, sum x y.
    sums: [f32; 5],
    /// Level of the weather tracker, m.
    level_m: f32,
    /// Weather rate, m/s of apparent height (positive: pressure falling).
    rate_mps: f32,
    /// The weather rate at the last sample that stayed close to the prediction (within a
    /// quarter of the exit band): the rate before a departure began to pull it.
    settled_rate_mps: f32,
}

impl RestDetector {
    /// A detector in the moving state; the settings come with each call (validated by
    /// the caller).
    pub(crate) const fn new() -> Self {
        Self {
            state: RestState::Moving,
            window_elapsed_s: 0.0,
            window_origin_m: 0.0,
            window_low_m: 0.0,
            window_high_m: 0.0,
            sums: [0.0; 5],
            level_m: 0.0,
            rate_mps: 0.0,
            settled_rate_mps: 0.0,
        }
    }

    pub(crate) fn state(&self) -> RestState {
        self.state
    }

    /// Weather rate now, m/s of apparent height (learnt at rest, fading while moving).
    pub(crate) fn weather_rate_mps(&self) -> f32 {
        self.rate_mps
    }

    fn max_rate_mps(c: &RestConfig) -> f32 {
        c.max_weather_rate_m_per_h / 3600.0
    }

    /// One step of the level-and-slope tracker; returns the departure from the
    /// prediction.
    fn track(&mut self, c: &RestConfig, dt_s: f32, height_m: f32) -> f32 {
        let t = c.trend_time_constant_s;
        let max_rate = Self::max_rate_mps(c);
        let predicted = self.level_m + self.rate_mps * dt_s;
        let departure = height_m - predicted;
        // The level moves no faster than the largest weather rate: a faster climb cannot
        // be absorbed, its departure grows until the rest ends.
        let step = predicted + (2.0 * dt_s / t).min(1.0) * departure - self.level_m;
        // max/min rather than clamp: clamp asserts min <= max, which the no-panic check
        // cannot rule out for run-time bounds (they are ordered: max_rate >= 0)
        let limit = max_rate * dt_s;
        self.level_m += step.max(-limit).min(limit);
        self.rate_mps = (self.rate_mps + (dt_s / (t * t)).min(1.0 / t) * departure)
            .max(-max_rate)
            .min(max_rate);
        if departure.abs() < 0.25 * c.exit_band_m {
            self.settled_rate_mps = self.rate_mps;
        }
        departure
    }

    /// Starts the entry window at this sample.
    pub(crate) fn start(&mut self, height_m: f32) {
        self.window_elapsed_s = 0.0;
        self.window_origin_m = height_m;
        self.window_low_m = height_m;
        self.window_high_m = height_m;
        // the first point: x = 0, y = 0
        self.sums = [1.0, 0.0, 0.0, 0.0, 0.0];
    }

    /// Adds a point to the window's least-squares sums.
    fn add_point(&mut self, height_m: f32) {
        let x = self.window_elapsed_s;
        let y = height_m - self.window_origin_m;
        let [n, sx, sy, sxx, sxy] = self.sums;
        self.sums = [n + 1.0, sx + x, sy + y, sxx + x * x, sxy + x * y];
    }

    /// Least-squares slope of the window, m/s: `(n Sxy - Sx Sy) / (n Sxx - Sx^2)`
    /// (ordinary least squares for a straight line, any statistics text). `None` with
    /// fewer than two distinct times.
    fn window_slope(&self) -> Option<f32> {
        let [n, sx, sy, sxx, sxy] = self.sums;
        let denominator = n * sxx - sx * sx;
        if denominator > 0.0 {
            Some((n * sxy - sx * sy) / denominator)
        } else {
            None
        }
    }

    fn begin_rest(&mut self, height_m: f32) {
        self.level_m = height_m;
        self.settled_rate_mps = self.rate_mps;
    }

    /// User declares rest from now on.
    pub(crate) fn declare(&mut self, height_m: f32) {
        if self.state == RestState::Moving {
            self.begin_rest(height_m);
        }
        self.state = RestState::DeclaredRest;
    }

    /// User ends a declared rest: detection continues from a detected rest that begins
    /// now, with the weather rate kept (if the device still does not move, it stays at
    /// rest).
    pub(crate) fn release(&mut self, height_m: f32) {
        if self.state == RestState::DeclaredRest {
            self.state = RestState::Resting;
            self.begin_rest(height_m);
        }
    }

    /// One sample: the settings, time since the previous sample (s, > 0) and the
    /// smoothed height before weather correction (m).
    pub(crate) fn update(&mut self, c: &RestConfig, dt_s: f32, height_m: f32) -> RestEvent {
        match self.state {
            RestState::DeclaredRest => {
                self.track(c, dt_s, height_m);
                RestEvent::Unchanged
            }
            RestState::Resting => {
                let level_before = self.level_m;
                let rate_before = self.rate_mps;
                let departure = self.track(c, dt_s, height_m);
                if departure.abs() > c.exit_band_m {
                    // The departure is movement: undo this step's update of the level, and
                    // keep the weather rate from before the departure began to pull it.
                    self.level_m = level_before + rate_before * dt_s;
                    self.rate_mps = self.settled_rate_mps;
                    self.state = RestState::Moving;
                    self.start(height_m);
                    RestEvent::Left {
                        level_m: self.level_m,
                    }
                } else {
                    RestEvent::Unchanged
                }
            }
            RestState::Moving => {
                let memory = c.weather_rate_memory_s;
                self.rate_mps *= memory / (memory + dt_s);
                self.window_elapsed_s += dt_s;
                self.window_low_m = self.window_low_m.min(height_m);
                self.window_high_m = self.window_high_m.max(height_m);
                self.add_point(height_m);
                if self.window_high_m - self.window_low_m > c.entry_band_m {
                    self.start(height_m);
                    RestEvent::Unchanged
                } else if self.window_elapsed_s >= c.entry_window_s {
                    let slow = self
                        .window_slope()
                        .is_some_and(|v| v.abs() <= Self::max_rate_mps(c));
                    if slow {
                        self.state = RestState::Resting;
                        self.begin_rest(height_m);
                        RestEvent::Entered
                    } else {
                        self.start(height_m);
                        RestEvent::Unchanged
                    }
                } else {
                    RestEvent::Unchanged
                }
            }
        }
    }
}

crate::snapshot::snap_enum!(RestState {
    RestState::Moving,
    RestState::Resting,
    RestState::DeclaredRest
});
crate::snapshot::snap_fields!(RestDetector {
    state,
    window_elapsed_s,
    window_origin_m,
    window_low_m,
    window_high_m,
    sums,
    level_m,
    rate_mps,
    settled_rate_mps,
});

#[cfg(test)]
mod tests;
