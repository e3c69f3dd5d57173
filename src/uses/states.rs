//! Each use's words for its states. The three share one state machine
//! ([`crate::flight`]: debounced thresholds on the vertical speed); each names its
//! states as its users speak of them.

use crate::flight::Phase;

/// A drone's state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DroneState {
    /// On the ground before take-off: the ground reference is averaged.
    #[default]
    OnGround,
    /// Climbing.
    Climbing,
    /// Holding its height (hover, level flight).
    Holding,
    /// Descending.
    Descending,
    /// At rest after a descent (it may take off again).
    Landed,
}

/// A balloon's state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BalloonState {
    /// Before launch.
    #[default]
    Ground,
    /// Rising.
    Ascent,
    /// Floating level.
    Float,
    /// The sudden turn to a fast fall (reported on the sample where it is confirmed;
    /// the next is in `Descent`).
    Burst,
    /// Falling.
    Descent,
    /// At rest after the descent.
    Landed,
}

/// A walker's state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WalkState {
    /// No climb or descent yet since the device started.
    #[default]
    NotStarted,
    /// Climbing.
    Climbing,
    /// Walking on the level.
    Level,
    /// Descending.
    Descending,
    /// Resting (no height change for the rest detector's time).
    Resting,
}

impl DroneState {
    /// The drone's word for a state of the shared machine.
    pub(crate) const fn from_phase(p: Phase) -> Self {
        match p {
            Phase::Ground => Self::OnGround,
            Phase::Ascent => Self::Climbing,
            Phase::Float => Self::Holding,
            Phase::Burst | Phase::Descent => Self::Descending,
            Phase::Landed => Self::Landed,
        }
    }

    /// Lower-case name, as the replay tool writes it.
    pub const fn name(self) -> &'static str {
        match self {
            Self::OnGround => "on_ground",
            Self::Climbing => "climbing",
            Self::Holding => "holding",
            Self::Descending => "descending",
            Self::Landed => "landed",
        }
    }
}

impl BalloonState {
    /// The balloon's word for a state of the shared machine.
    pub(crate) const fn from_phase(p: Phase) -> Self {
        match p {
            Phase::Ground => Self::Ground,
            Phase::Ascent => Self::Ascent,
            Phase::Float => Self::Float,
            Phase::Burst => Self::Burst,
            Phase::Descent => Self::Descent,
            Phase::Landed => Self::Landed,
        }
    }

    /// Lower-case name, as the replay tool writes it.
    pub const fn name(self) -> &'static str {
        match self {
            Self::Ground => "ground",
            Self::Ascent => "ascent",
            Self::Float => "float",
            Self::Burst => "burst",
            Self::Descent => "descent",
            Self::Landed => "landed",
        }
    }
}

impl WalkState {
    /// The walker's word for a state of the shared machine, with the rest detector's
    /// verdict (`resting`) taking precedence once the walk has started.
    pub(crate) const fn from_phase(p: Phase, resting: bool) -> Self {
        match p {
            Phase::Ground => Self::NotStarted,
            _ if resting => Self::Resting,
            Phase::Ascent => Self::Climbing,
            Phase::Burst | Phase::Descent => Self::Descending,
            Phase::Float | Phase::Landed => Self::Level,
        }
    }

    /// Lower-case name, as the replay tool writes it.
    pub const fn name(self) -> &'static str {
        match self {
            Self::NotStarted => "not_started",
            Self::Climbing => "climbing",
            Self::Level => "level",
            Self::Descending => "descending",
            Self::Resting => "resting",
        }
    }
}

impl From<Phase> for DroneState {
    fn from(p: Phase) -> Self {
        Self::from_phase(p)
    }
}

impl From<Phase> for BalloonState {
    fn from(p: Phase) -> Self {
        Self::from_phase(p)
    }
}

/// The walk's word for a state of the shared machine, without the rest detector's
/// verdict (a level stretch reads [`WalkState::Level`]).
impl From<Phase> for WalkState {
    fn from(p: Phase) -> Self {
        Self::from_phase(p, false)
    }
}
