//! Per-use trackers for walking devices: ascent and descent totals, weather drift at rest,
//! known-elevation fixes and the 3-hour pressure tendency.
//!
//! * [`totals`]: [`AscentTotals`], a hysteresis counter in integer centimetres.
//! * [`rest`]: when the height stands still, pressure change is weather ([`RestConfig`],
//!   [`RestState`]).
//! * [`tendency`]: [`PressureTendency`], 3-hour change of the rest-corrected sea-level
//!   pressure in a fixed ring, with a falling-pressure alert.
//! * [`hike`]: [`HikeTracker`] wires them for one barometer sample at a time.
//!
//! Every tracker here has fixed memory (sizes in each module), is O(1) per sample, and
//! leaves its state exactly as it was when it rejects a sample.
//!
//! Uses only layers 1-2 (units, errors, maths, atmosphere): it does not depend on the
//! filters or datums, so it can run on raw pressure or on the output of any filter.

pub mod hike;
pub mod rest;
pub mod tendency;
pub mod totals;

pub use hike::{HikeConfig, HikeReport, HikeTracker};
pub use rest::{RestConfig, RestState};
pub use tendency::{PressureTendency, TendencyConfig};
pub use totals::{AscentTotals, Trend};
