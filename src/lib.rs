//! # isohypse
//!
//! Height from pressure and temperature on microcontrollers: `#![no_std]`, no heap, no
//! panics.
//!
//! The crate is built in layers; each uses only those above it in this list.
//!
//! 1. **Units, errors, maths** — [`units`] ([`Pressure`], [`Temperature`], [`Height`],
//!    [`VerticalSpeed`], [`RelativeHumidity`]: a value that exists is finite and
//!    physical), [`Error`], and the maths backend (`libm` by default, `micromath` as an
//!    option).
//! 2. **Physics** — [`atmosphere`] (U.S. Standard Atmosphere 1976 to 86 km and the ICAO /
//!    ISO 2533 constant set, forward and inverse), [`geopotential`] (geometric <->
//!    geopotential height, WGS-84 normal gravity), [`hypsometric`] (layer thickness and
//!    its closed forms), [`humidity`] (saturation vapour pressure, mixing ratio, virtual
//!    temperature), [`model`] (layer temperature models: pressure <-> height from a
//!    reference).
//! 3. **Datums** — [`datum`] (pressure altitude, QNH, QFE, density altitude, calibration
//!    from known elevations).
//! 6. **Trackers** — [`track`] (walking devices: ascent/descent totals with hysteresis,
//!    weather drift at rest, known-elevation fixes, 3-hour pressure tendency).
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
pub mod datum;
pub mod error;
pub mod flight;
pub mod geopotential;
pub mod humidity;
pub mod hypsometric;
mod math;
pub mod model;
pub mod sounding;
pub mod track;
pub mod units;

pub use error::Error;
pub use units::{Height, Pressure, RelativeHumidity, Temperature, VerticalSpeed};
