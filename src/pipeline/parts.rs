//! Which optional parts a [`Pipeline`](super::Pipeline) holds: its state layout.
//!
//! A pipeline with owned or borrowed settings holds every part ([`Every`]), because
//! its settings may ask for any of them. A pipeline whose settings are fixed at compile
//! time ([`Fixed`](super::Fixed)) holds only the parts its [`FixedSettings::Parts`]
//! names, and an omitted part takes no RAM at all: its slot has a type with no value, so
//! the enum variant or `Option` that would hold it needs no room (and its code is never
//! reached). [`Pipeline::new`](super::Pipeline::new) refuses settings that need an
//! omitted part ([`Error::InvalidSetting`](crate::Error::InvalidSetting)).
//!
//! | part | needed by | layouts holding it |
//! | --- | --- | --- |
//! | [`Parts::Kalman`] | [`Estimator::Kalman`](super::Estimator::Kalman) | [`Every`], [`Drone`], [`Balloon`] |
//! | [`Parts::Ground`] | a start altitude ([`Settings::start_altitude_m`](super::Settings::start_altitude_m), also set at run time) | [`Every`], [`Drone`], [`Balloon`] |
//! | [`Parts::Model`] | the sounding and column height models | [`Every`], [`Balloon`] |
//! | [`Parts::Hike`] | [`Tracking::Hike`](super::Tracking::Hike) | [`Every`], [`Hike`] |
//!
//! ```
//! use isohypse::pipeline::{parts, Fixed, FixedSettings, Pipeline, Settings};
//! struct Walk;
//! impl FixedSettings for Walk {
//!     const SETTINGS: Settings = Settings::hike();
//!     type Parts = parts::Hike;
//! }
//! let lean = core::mem::size_of::<Pipeline<2, Fixed<Walk>>>();
//! let every = core::mem::size_of::<Pipeline<2>>();
//! assert!(lean < every);
//!
//! // The drone's settings need the Kalman filter, which the hike layout omits.
//! struct Wrong;
//! impl FixedSettings for Wrong {
//!     const SETTINGS: Settings = Settings::drone();
//!     type Parts = parts::Hike;
//! }
//! assert!(Pipeline::<2, Fixed<Wrong>>::new(Fixed::new()).is_err());
//! ```
//!
//! [`FixedSettings::Parts`]: super::FixedSettings::Parts

/// What every part (and its slot) can do, so that the pipeline holding it can be
/// copied, compared and printed: `Clone + Debug + PartialEq` (and `defmt::Format` with
/// the `defmt` feature). Implemented for every such type.
#[cfg(not(feature = "defmt"))]
pub trait Holdable: Clone + core::fmt::Debug + PartialEq {}
#[cfg(not(feature = "defmt"))]
impl<T: Clone + core::fmt::Debug + PartialEq> Holdable for T {}
/// What every part (and its slot) can do, so that the pipeline holding it can be
/// copied, compared and printed: `Clone + Debug + PartialEq + defmt::Format`.
/// Implemented for every such type.
#[cfg(feature = "defmt")]
pub trait Holdable: Clone + core::fmt::Debug + PartialEq + defmt::Format {}
#[cfg(feature = "defmt")]
impl<T: Clone + core::fmt::Debug + PartialEq + defmt::Format> Holdable for T {}

/// Whether a part is held: [`Present`] or [`Omitted`].
pub trait Presence: Holdable {
    /// What holds a part `T`: the `T` itself, or for an omitted part [`Absent`], a
    /// type with no value.
    type Slot<T: Holdable>: Holdable;
    /// Whether the part is held.
    const HELD: bool;
    /// `value` in its slot, or `None` when the part is omitted.
    fn hold<T: Holdable>(value: T) -> Option<Self::Slot<T>>;
    /// The part in a slot.
    fn get<T: Holdable>(slot: &Self::Slot<T>) -> &T;
    /// The part in a slot, to change.
    fn get_mut<T: Holdable>(slot: &mut Self::Slot<T>) -> &mut T;
    /// What holds a part `T` that is always there when held: the `T` itself, or for an
    /// omitted part `()`. Unlike `Option<Slot<T>>`, the compiler sees that a held part
    /// is always there.
    type Field<T: Holdable>: Holdable;
    /// `value` in its field (dropped when the part is omitted).
    fn field<T: Holdable>(value: T) -> Self::Field<T>;
    /// The part in a field, `None` when it is omitted.
    fn field_ref<T: Holdable>(field: &Self::Field<T>) -> Option<&T>;
    /// The part in a field, to change; `None` when it is omitted.
    fn field_mut<T: Holdable>(field: &mut Self::Field<T>) -> Option<&mut T>;
}

/// The part is held.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Present {}

/// The part is left out: it takes no RAM and its settings are refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Omitted {}

/// The slot of an omitted part: no value of this type can exist, so an enum variant or
/// an `Option` holding it takes no room.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Absent {}

/// `defmt::Format` for types with no value (written out: there is nothing to print).
macro_rules! format_no_value {
    ($($t:ty),*) => {$(
        #[cfg(feature = "defmt")]
        impl defmt::Format for $t {
            fn format(&self, _: defmt::Formatter<'_>) {
                match *self {}
            }
        }
    )*};
}
format_no_value!(Absent, Present, Omitted, Every, Drone, Balloon, Hike);

impl Presence for Present {
    type Slot<T: Holdable> = T;
    const HELD: bool = true;
    fn hold<T: Holdable>(value: T) -> Option<T> {
        Some(value)
    }
    fn get<T: Holdable>(slot: &T) -> &T {
        slot
    }
    fn get_mut<T: Holdable>(slot: &mut T) -> &mut T {
        slot
    }
    type Field<T: Holdable> = T;
    fn field<T: Holdable>(value: T) -> T {
        value
    }
    fn field_ref<T: Holdable>(field: &T) -> Option<&T> {
        Some(field)
    }
    fn field_mut<T: Holdable>(field: &mut T) -> Option<&mut T> {
        Some(field)
    }
}

impl Presence for Omitted {
    type Slot<T: Holdable> = Absent;
    const HELD: bool = false;
    fn hold<T: Holdable>(_: T) -> Option<Absent> {
        None
    }
    fn get<T: Holdable>(slot: &Absent) -> &T {
        match *slot {}
    }
    fn get_mut<T: Holdable>(slot: &mut Absent) -> &mut T {
        match *slot {}
    }
    type Field<T: Holdable> = ();
    fn field<T: Holdable>(_: T) {}
    fn field_ref<T: Holdable>(_: &()) -> Option<&T> {
        None
    }
    fn field_mut<T: Holdable>(_: &mut ()) -> Option<&mut T> {
        None
    }
}

/// The optional parts of a pipeline (see the [module docs](self) for which settings
/// need which).
pub trait Parts: Holdable {
    /// The Kalman filter.
    type Kalman: Presence;
    /// The ground reference, averaged at rest below a start altitude.
    type Ground: Presence;
    /// The state of the temperature-aware height models: the sounding, the column
    /// reference and the last temperature held.
    type Model: Presence;
    /// The hike tracker.
    type Hike: Presence;
}

/// Every part (the layout of owned and borrowed settings).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Every {}
impl Parts for Every {
    type Kalman = Present;
    type Ground = Present;
    type Model = Present;
    type Hike = Present;
}

/// The parts of the drone preset: Kalman filter and ground reference, standard model.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Drone {}
impl Parts for Drone {
    type Kalman = Present;
    type Ground = Present;
    type Model = Omitted;
    type Hike = Omitted;
}

/// The parts of the balloon preset: Kalman filter, ground reference and the height
/// models' state (sounding and stored profile).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Balloon {}
impl Parts for Balloon {
    type Kalman = Present;
    type Ground = Present;
    type Model = Present;
    type Hike = Omitted;
}

/// The parts of the hike preset: the hike tracker alone (standard model, the pointwise
/// path with its spike gate; elevation comes from fixes, not a start altitude).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hike {}
impl Parts for Hike {
    type Kalman = Omitted;
    type Ground = Omitted;
    type Model = Omitted;
    type Hike = Present;
}
