//! # isohypse
//!
//! Height from pressure and temperature on microcontrollers: `#![no_std]`, no heap, no
//! panics.
//!
//! ## One type per use
//!
//! | you build | type | it returns each sample |
//! | --- | --- | --- |
//! | a balloon payload | [`uses::Balloon`] | height to 40 km integrated layer by layer, ascent rate, burst, descent on the stored profile |
//! | a drone's height hold | [`uses::Drone`] | height above take-off and vertical speed, barometer and accelerometer fused |
//! | a hiking device | [`uses::Walk`] | smoothed height, climb and descent totals, rests, pressure tendency |
//!
//! Each borrows its settings (`const` presets you can change field by field, kept in
//! flash on a device), takes one [`uses::Sample`] per barometer reading stamped with an
//! integer [`time::Instant`], and speaks its own words for its states. Time as firmware
//! keeps it: a wrapping `u32` tick counter goes through [`time::WrappingTicks`]; a clock
//! that steps back or jumps costs at most one sample.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::uses::{Drone, DroneSettings, Sample};
//! static SETTINGS: DroneSettings = DroneSettings::DEFAULT;
//! let mut drone = Drone::new(&SETTINGS)?;
//! for k in 0..50u64 {
//!     let mut sample = Sample::pressure(Instant::from_millis(20 * k), 97_700.0);
//!     sample.accel_up_mps2 = Some(0.0);
//!     let out = drone.process(&sample);
//!     assert!(out.accepted() && out.altitude_m.abs() < 0.1);
//! }
//! // accelerometer samples between barometer samples
//! drone.accelerometer(Instant::from_millis(985), 0.02)?;
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! A balloon: layer-by-layer sounding from the launch elevation with the launch
//! latitude's gravity, its states, and the descent on the profile stored on the way up
//! (here 256 levels, checked at compile time to be at least 8).
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::uses::{Balloon, BalloonSettings, Sample};
//! const FIELD: BalloonSettings = BalloonSettings {
//!     launch_altitude_m: Some(310.0),
//!     latitude_deg: Some(64.2),
//!     ..BalloonSettings::DEFAULT
//! };
//! let mut balloon = Balloon::<256>::new(&FIELD)?;
//! let out = balloon.process(&Sample {
//!     time: Instant::ZERO,
//!     pressure_pa: 97_300.0,
//!     temperature_c: Some(24.5), // the air's, from a probe outside the box
//!     humidity_pct: Some(70.0),
//!     ..Sample::default()
//! });
//! assert!((out.altitude_m - 310.0).abs() < 0.5);
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! A walking device: smoothed height, climb and descent totals that ignore noise and
//! weather drift at rest, known-elevation fixes, the 3-hour pressure tendency.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::uses::{Sample, Walk, WalkSettings};
//! let mut walk = Walk::new(&WalkSettings::DEFAULT)?;
//! let out = walk.process(&Sample {
//!     time: Instant::ZERO,
//!     pressure_pa: 93_500.0,
//!     known_altitude_m: Some(652.0), // the trailhead sign
//!     ..Sample::default()
//! });
//! assert!((out.altitude_m - 652.0).abs() < 0.5);
//! println!("ascent {} m, descent {} m", out.ascent_m, out.descent_m);
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! Each use type writes its whole state into a fixed-size byte array and restores it
//! (`snapshot`, `restore`), so that firmware can carry on after a brown-out.
//!
//! ## Where things live
//!
//! The crate is built in layers; each uses only those above it in this list.
//!
//! 1. **Units, errors, maths, time** — [`units`] ([`Pressure`], [`Temperature`],
//!    [`Height`], [`VerticalSpeed`], [`RelativeHumidity`]: a value that exists is
//!    finite and physical), [`Error`], the maths backend (`libm` by default,
//!    `micromath` as an option), and [`time`] (integer instants and durations).
//! 2. **Physics** — [`atmosphere`] (U.S. Standard Atmosphere 1976 to 86 km and the ICAO /
//!    ISO 2533 constant set, forward and inverse), [`geopotential`] (geometric <->
//!    geopotential height, WGS-84 normal gravity), [`hypsometric`] (layer thickness and
//!    its closed forms), [`humidity`] (saturation vapour pressure, mixing ratio, virtual
//!    temperature), [`model`] (layer temperature models: pressure <-> height from a
//!    reference).
//! 3. **Datums** — [`datum`] (pressure altitude, QNH, QFE, density altitude, calibration
//!    from known elevations).
//! 4. **Soundings** — [`sounding`] (layer-by-layer integration of a balloon ascent, the
//!    stored profile, heights on it for the descent).
//! 5. **Filters** — [`filter`] (median, moving average, one-pole, alpha-beta, a Kalman
//!    filter for height, vertical speed and accelerometer bias, ground reference).
//! 6. **Trackers** — [`flight`] (the state machine: ground, ascent, float, burst,
//!    descent, landed) and [`track`] (walking devices: ascent/descent totals with
//!    hysteresis, weather drift at rest, known-elevation fixes, 3-hour pressure
//!    tendency).
//! 7. **Uses** — [`uses`] (one type per use: [`uses::Drone`], [`uses::Balloon`],
//!    [`uses::Walk`], and [`uses::Device`] to choose at run time), the optional
//!    `embedded-hal` sensor drivers (`sensor`, `sensor_async` with
//!    `embedded-hal-async`, and drivers for real parts in `parts`) and `defmt`
//!    formatting.
//!
//! Every formula's documentation gives the equation and its published source.
//!
//! ```
//! use isohypse::{atmosphere, Pressure};
//! let p = Pressure::from_hpa(850.0)?;
//! let h = atmosphere::pressure_altitude(p)?; // geometric metres, U.S. 1976
//! assert!((h.meters() - 1457.0).abs() < 2.0);
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! Not certified for aviation, navigation or life-safety use: see `SAFETY.md`.

#![no_std]
#![cfg_attr(docsrs, feature(doc_cfg))]
#![forbid(unsafe_code)]
#![warn(missing_docs)]
#![deny(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing,
    clippy::unreachable,
    clippy::todo,
    clippy::unimplemented
)]

pub mod atmosphere;
mod bits;
pub mod datum;
pub mod error;
pub mod filter;
pub mod flight;
pub mod geopotential;
pub mod humidity;
pub mod hypsometric;
mod math;
pub mod model;
pub mod part;
#[cfg(feature = "embedded-hal")]
pub mod parts;
#[cfg(feature = "embedded-hal")]
#[cfg_attr(docsrs, doc(cfg(feature = "embedded-hal")))]
pub mod sensor;
#[cfg(feature = "embedded-hal-async")]
#[cfg_attr(docsrs, doc(cfg(feature = "embedded-hal-async")))]
pub mod sensor_async;
#[cfg(feature = "embedded-hal")]
#[cfg_attr(docsrs, doc(cfg(feature = "embedded-hal")))]
pub mod sensor_poll;
pub mod snapshot;
pub mod sounding;
pub mod time;
pub mod track;
pub mod units;
pub mod uses;

pub use error::Error;
pub use units::{Height, Pressure, RelativeHumidity, Temperature, VerticalSpeed};

/// The README's Rust examples, compiled and run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
pub struct ReadmeExamples;
