//! Flight phases: on the ground, ascent, float, burst, descent, landed.
//!
//! A debounced state machine on height and vertical speed. A phase changes only when
//! the condition for the next phase has held for its debounce time, so a gust, a bounce
//! or a noisy speed estimate does not flip phases. Events (launch, float, burst,
//! descent, landing) are kept with their time and height in a small fixed ring, and the
//! apex (highest height and its time) is tracked.
//!
//! The same machine serves the three users: a balloon goes through every phase; a drone
//! hop shows ground, ascent, float (hover), descent, landed; a walk shows ascent,
//! float (level walking or rest) and descent.
//!
//! Thresholds are common practice for balloon telemetry, not taken from a standard:
//! ascent above +1 m/s, descent below -1 m/s, burst a fall faster than 5 m/s reached
//! within seconds of rising or floating (a parachute descent starts at tens of m/s at
//! 30 km), rest below 0.5 m/s.
//!
//! ```
//! use isohypse::flight::{FlightPhases, Phase, PhaseSettings};
//! use isohypse::time::Instant;
//! let mut phases = FlightPhases::new(PhaseSettings::BALLOON)?;
//! for s in 0..30 {
//!     let t = Instant::from_secs(s);
//!     phases.update(t, 5.0 * s as f32, 5.0)?; // rising at 5 m/s
//! }
//! assert_eq!(phases.phase(), Phase::Ascent);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::filter;
use crate::time::Instant;
use core::borrow::Borrow;

/// The phase of a flight.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Phase {
    /// Before launch / take-off: not yet seen climbing.
    #[default]
    Ground,
    /// Climbing.
    Ascent,
    /// Level: balloon float, drone hover, level walking or rest.
    Float,
    /// The sudden turn from rising or floating to fast descent (reported on the sample
    /// where it is detected; the next sample is in [`Phase::Descent`]).
    Burst,
    /// Descending.
    Descent,
    /// At rest after a descent.
    Landed,
}

impl Phase {
    /// Lower-case name, as the replay tool writes it.
    pub const fn name(self) -> &'static str {
        match self {
            Phase::Ground => "ground",
            Phase::Ascent => "ascent",
            Phase::Float => "float",
            Phase::Burst => "burst",
            Phase::Descent => "descent",
            Phase::Landed => "landed",
        }
    }
}

/// A phase change, with the time and height where its condition started to hold.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhaseEvent {
    /// Phase entered.
    pub phase: Phase,
    /// Time the condition started to hold (the debounce start), s: the confirming
    /// sample's time minus the summed steps since then.
    pub time: Instant,
    /// Height at that time, m.
    pub height_m: f32,
}

/// Thresholds and debounce times of [`FlightPhases`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhaseSettings {
    /// Vertical speed above which the vehicle climbs, m/s (> 0).
    pub ascent_mps: f32,
    /// Vertical speed below minus this value means descending, m/s (> 0).
    pub descent_mps: f32,
    /// A fall faster than this from ascent or float is a burst, m/s (> `descent_mps`).
    pub burst_mps: f32,
    /// Below this speed (absolute) the vehicle is level or at rest, m/s (> 0).
    pub rest_mps: f32,
    /// Time a climb or descent must hold, s.
    pub debounce_s: f32,
    /// Time a fast fall must hold to be a burst, s.
    pub burst_debounce_s: f32,
    /// Time a level flight must hold to be float, s.
    pub float_debounce_s: f32,
    /// Time at rest after descent to be landed, s.
    pub landed_debounce_s: f32,
    /// Start in flight, not on the ground: the tracker begins level ([`Phase::Float`]:
    /// a balloon's float, a drone's holding, a walk's level) and moves on with the
    /// motion, with no ground phase; a use type then takes no ground or launch
    /// reference (heights start as its altimeter setting gives them). For a device
    /// switched on in the air or already on the trail. Without it, a tracker that
    /// starts on the ground still turns to ascent or descent on its own when the first
    /// samples move.
    pub start_in_flight: bool,
}

impl PhaseSettings {
    /// Balloon flights (common practice values, see the module documentation).
    pub const BALLOON: PhaseSettings = PhaseSettings {
        ascent_mps: 1.0,
        descent_mps: 1.0,
        burst_mps: 5.0,
        rest_mps: 0.5,
        debounce_s: 10.0,
        burst_debounce_s: 3.0,
        float_debounce_s: 60.0,
        landed_debounce_s: 30.0,
        start_in_flight: false,
    };
    /// Small drones: faster reactions, no burst in practice (set very high; values a
    /// choice of this crate).
    pub const DRONE: PhaseSettings = PhaseSettings {
        ascent_mps: 0.3,
        descent_mps: 0.3,
        burst_mps: 50.0,
        rest_mps: 0.15,
        debounce_s: 0.5,
        burst_debounce_s: 0.5,
        float_debounce_s: 1.0,
        landed_debounce_s: 2.0,
        start_in_flight: false,
    };
    /// Walking: slow vertical speeds (a steep trail climbs 0.1-0.3 m/s; common
    /// practice, thresholds a choice of this crate).
    pub const HIKE: PhaseSettings = PhaseSettings {
        ascent_mps: 0.05,
        descent_mps: 0.05,
        burst_mps: 50.0,
        rest_mps: 0.02,
        debounce_s: 60.0,
        burst_debounce_s: 60.0,
        float_debounce_s: 120.0,
        landed_debounce_s: 600.0,
        start_in_flight: false,
    };

    /// Check the documented ranges.
    ///
    /// A `const fn` written out field by field: with settings fixed at compile time the
    /// compiler folds it away (the version over arrays with `Iterator::all` stayed in
    /// the drone firmware as a 214-byte function, measured with the flash probe).
    #[inline]
    pub const fn validate(&self) -> Result<(), Error> {
        use crate::math::{finite_non_negative as time, finite_positive as positive};
        let ok = positive(self.ascent_mps)
            && positive(self.descent_mps)
            && positive(self.burst_mps)
            && positive(self.rest_mps)
            && time(self.debounce_s)
            && time(self.burst_debounce_s)
            && time(self.float_debounce_s)
            && time(self.landed_debounce_s)
            && self.burst_mps > self.descent_mps
            && self.rest_mps <= self.ascent_mps
            && self.rest_mps <= self.descent_mps;
        if ok {
            Ok(())
        } else {
            Err(Error::InvalidSetting)
        }
    }
}

/// The phase state machine. State: 88 bytes with owned settings on 32-bit Arm
/// (`size_of`, printed by the firmware): the clock-free core, the time of the last
/// sample, and the times of the apex and of the last event as `f64`. A use type keeps
/// only the core (24 bytes with settings fixed at compile time). O(1) per sample.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FlightPhases<S = PhaseSettings> {
    settings: S,
    core: PhaseCore,
    /// Time of the latest sample, s, if `has_time` (8 bytes and a flag, not the 16 of an
    /// `Option`).
    last_time: Instant,
    /// Time of the apex, s (valid while the core has an apex).
    apex_time: Instant,
    /// Start time of the most recent phase change, s (valid while the core has one).
    event_time: Instant,
    has_time: bool,
}

/// The phase state machine without a clock or settings: what the use types keep (they
/// have the time of their last sample, and the settings in their own). Each step is
/// given the settings and the time since the previous sample; the most recent event
/// keeps the hold it was confirmed with, so that its start time is the confirming
/// sample's time minus that hold (the same arithmetic as [`FlightPhases`]). 24 bytes
/// on 32-bit Arm. Crate-internal.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct PhaseCore {
    /// Height (m) of the apex; minus infinity before there is one (sample heights are
    /// finite).
    apex_m: f32,
    /// The phase the samples argue for, the height where they started to, and how long
    /// (s) they have held. The hold is summed in `f32` steps so that a sample needs no
    /// `f64` arithmetic beyond forming its step; the start time is the latest sample's
    /// time minus the hold, so it is not kept (the state is kept as flat fields rather
    /// than an `Option` of a tuple: smaller on 32-bit Arm).
    candidate: Option<Phase>,
    candidate_m: f32,
    held_s: f32,
    /// The most recent phase change: phase, height (m) and the hold (s) at the sample
    /// that confirmed it.
    event_phase: Option<Phase>,
    event_m: f32,
    event_held_s: f32,
    /// Current phase.
    phase: Phase,
}

/// What one step of [`PhaseCore`] changed besides its phase.
pub(crate) struct PhaseStep {
    /// This sample confirmed a phase change ([`PhaseCore::event_confirmed_at`] with its
    /// time gives it).
    pub(crate) event: bool,
    /// This sample is the new apex.
    pub(crate) apex: bool,
}

impl PhaseCore {
    /// A tracker on the ground for `settings`. Errors: [`Error::InvalidSetting`].
    pub(crate) fn new(settings: &PhaseSettings) -> Result<Self, Error> {
        settings.validate()?;
        Ok(Self {
            apex_m: f32::NEG_INFINITY,
            candidate: None,
            candidate_m: 0.0,
            held_s: 0.0,
            event_phase: None,
            event_m: 0.0,
            event_held_s: 0.0,
            phase: if settings.start_in_flight {
                Phase::Float
            } else {
                Phase::Ground
            },
        })
    }

    /// Current phase.
    pub(crate) fn phase(&self) -> Phase {
        self.phase
    }

    /// Height (m) where the most recent phase change's condition started to hold.
    pub(crate) fn event_height_m(&self) -> Option<f32> {
        self.event_phase.map(|_| self.event_m)
    }

    /// Height of the apex, m, once there is one.
    pub(crate) fn apex_m(&self) -> Option<f32> {
        (self.apex_m > f32::NEG_INFINITY).then_some(self.apex_m)
    }

    /// The most recent phase change, its start time formed from `time`, the time of
    /// the sample that confirmed it (minus the hold then).
    pub(crate) fn event_confirmed_at(&self, time: Instant) -> Option<PhaseEvent> {
        self.event_phase.map(|phase| PhaseEvent {
            phase,
            time: time.saturating_sub(
                crate::time::Duration::from_secs_f32(self.event_held_s)
                    .unwrap_or(crate::time::Duration::ZERO),
            ),
            height_m: self.event_m,
        })
    }

    /// One sample `dt` seconds (>= 0, finite; anything for the first sample) after the
    /// previous one: height (m) and vertical speed (m/s, up positive). Errors, with the
    /// state unchanged: [`Error::NotFinite`].
    pub(crate) fn step(
        &mut self,
        s: &PhaseSettings,
        dt: f32,
        height_m: f32,
        speed_mps: f32,
    ) -> Result<PhaseStep, Error> {
        if !(height_m.is_finite() && speed_mps.is_finite()) {
            return Err(Error::NotFinite);
        }
        if self.phase == Phase::Burst {
            self.phase = Phase::Descent;
        }
        // The phase this sample argues for, and how long it must hold.
        let wanted: Option<(Phase, f32)> = match self.phase {
            Phase::Ground | Phase::Landed => {
                if speed_mps > s.ascent_mps {
                    Some((Phase::Ascent, s.debounce_s))
                } else if self.phase == Phase::Ground && speed_mps < -s.descent_mps {
                    // a device that starts in the air, falling (a sonde dropped from
                    // an aircraft, a power-on in flight): no launch was seen
                    Some((Phase::Descent, s.debounce_s))
                } else {
                    None
                }
            }
            Phase::Ascent | Phase::Float => {
                if speed_mps < -s.burst_mps {
                    Some((Phase::Burst, s.burst_debounce_s))
                } else if speed_mps < -s.descent_mps {
                    Some((Phase::Descent, s.debounce_s))
                } else if self.phase == Phase::Ascent && speed_mps.abs() < s.rest_mps {
                    Some((Phase::Float, s.float_debounce_s))
                } else if self.phase == Phase::Float && speed_mps > s.ascent_mps {
                    Some((Phase::Ascent, s.debounce_s))
                } else {
                    None
                }
            }
            Phase::Descent | Phase::Burst => {
                if speed_mps.abs() < s.rest_mps {
                    Some((Phase::Landed, s.landed_debounce_s))
                } else if speed_mps > s.ascent_mps {
                    Some((Phase::Ascent, s.debounce_s))
                } else {
                    None
                }
            }
        };
        let mut event = false;
        match wanted {
            None => self.clear_candidate(),
            Some((next, hold)) => {
                let held = match self.candidate {
                    // a burst candidate also counts toward a plain descent and back
                    Some(c)
                        if c == next
                            || (matches!(c, Phase::Burst | Phase::Descent)
                                && matches!(next, Phase::Burst | Phase::Descent)) =>
                    {
                        self.held_s + dt
                    }
                    _ => {
                        self.candidate_m = height_m;
                        0.0
                    }
                };
                self.candidate = Some(next);
                self.held_s = held;
                if held >= hold {
                    let height = self.candidate_m;
                    self.phase = next;
                    self.clear_candidate();
                    self.event_phase = Some(next);
                    self.event_m = height;
                    self.event_held_s = held;
                    event = true;
                }
            }
        }
        let apex = matches!(self.phase, Phase::Ascent | Phase::Float) && height_m > self.apex_m;
        if apex {
            self.apex_m = height_m;
        }
        Ok(PhaseStep { event, apex })
    }

    /// No candidate (its height and hold zeroed, so that equal histories give equal
    /// states).
    fn clear_candidate(&mut self) {
        self.candidate = None;
        self.candidate_m = 0.0;
        self.held_s = 0.0;
    }
}

impl<S: Borrow<PhaseSettings>> FlightPhases<S> {
    /// A tracker on the ground. `settings` is owned (`PhaseSettings`) or borrowed
    /// (`&PhaseSettings`, for example from a `static`: the settings then stay out of the
    /// tracker's state). Errors: [`Error::InvalidSetting`].
    pub fn new(settings: S) -> Result<Self, Error> {
        Ok(Self {
            core: PhaseCore::new(settings.borrow())?,
            settings,
            last_time: Instant::ZERO,
            apex_time: Instant::ZERO,
            event_time: Instant::ZERO,
            has_time: false,
        })
    }

    /// Current phase.
    pub fn phase(&self) -> Phase {
        self.core.phase()
    }

    /// Settings in use.
    pub fn settings(&self) -> &PhaseSettings {
        self.settings.borrow()
    }

    /// Replace the settings (validated first; the phase is kept).
    pub fn set_settings(&mut self, settings: S) -> Result<(), Error> {
        settings.borrow().validate()?;
        self.settings = settings;
        Ok(())
    }

    /// Highest height seen since launch and its time, `(time, height_m)`.
    pub fn apex(&self) -> Option<(Instant, f32)> {
        self.core.apex_m().map(|h| (self.apex_time, h))
    }

    /// The most recent phase change.
    pub fn last_event(&self) -> Option<PhaseEvent> {
        self.core.event_phase.map(|phase| PhaseEvent {
            phase,
            time: self.event_time,
            height_m: self.core.event_m,
        })
    }

    /// Feed one sample: time (s, strictly increasing), height (m) and vertical speed
    /// (m/s, up positive). Returns the phase change this sample confirmed, if any
    /// (the current phase is [`Self::phase`]). Errors, with the state unchanged:
    /// [`Error::NotFinite`], [`Error::NotIncreasing`] for time.
    pub fn update(
        &mut self,
        time: Instant,
        height_m: f32,
        speed_mps: f32,
    ) -> Result<Option<PhaseEvent>, Error> {
        let dt = if self.has_time {
            filter::step_s(self.last_time, time)?
        } else {
            0.0
        };
        let step = self
            .core
            .step(self.settings.borrow(), dt, height_m, speed_mps)?;
        self.last_time = time;
        self.has_time = true;
        if step.apex {
            self.apex_time = time;
        }
        let event = if step.event {
            self.core.event_confirmed_at(time)
        } else {
            None
        };
        if let Some(e) = &event {
            self.event_time = e.time;
        }
        Ok(event)
    }
}

crate::snapshot::snap_enum!(Phase {
    Phase::Ground,
    Phase::Ascent,
    Phase::Float,
    Phase::Burst,
    Phase::Descent,
    Phase::Landed,
});
// the settings are not state: a snapshot is restored with the same settings
crate::snapshot::snap_fields!(PhaseCore {
    apex_m,
    candidate,
    candidate_m,
    held_s,
    event_phase,
    event_m,
    event_held_s,
    phase,
});

#[cfg(test)]
mod tests;
