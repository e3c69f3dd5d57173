//! # isohypse
//!
//! Height from pressure and temperature on microcontrollers: `#![no_std]`, no heap, no
//! panics.
//!
//! ## Height in five lines
//!
//! Make a pipeline from a preset, feed it each reading, read the result. The same
//! pipeline runs in the host replay tool (`examples/replay.rs`) and on the device.
//!
//! A drone: height above the take-off point and vertical speed, barometer fused with the
//! accelerometer, outliers gated out.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::pipeline::{Pipeline, Sample, Settings};
//! let mut drone = Pipeline::<2>::new(Settings::drone())?;
//! let mut sample = Sample::pressure(Instant::ZERO, 97_700.0);
//! sample.accel_up_mps2 = Some(0.0);
//! let out = drone.process(&sample);
//! assert!(out.accepted() && out.altitude_m.abs() < 0.1);
//! drone.accelerometer(Instant::from_micros(5_000), 0.02)?; // IMU samples between barometer samples
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! On a device, keep the settings out of RAM. Fixed at compile time (a type with the
//! settings as a constant, [`pipeline::Fixed`]), they take no RAM at all and the
//! compiler leaves out the code of the options they do not use; they also name the parts
//! the pipeline holds ([`pipeline::parts`]), so an unused part takes no RAM. The drone
//! pipeline is then 240 bytes of state and 7 988 bytes of flash on a Cortex-M4F, the
//! hike pipeline 256 bytes (measured with the firmware; README). Borrowed from a
//! `static` (`&'static Settings`), they can be chosen at run time, for a reference and
//! every part in RAM and more flash (9 844 bytes). See [`pipeline::SettingsStore`].
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::pipeline::{parts, Fixed, FixedSettings, Pipeline, Sample, Settings};
//! struct Drone;
//! impl FixedSettings for Drone {
//!     const SETTINGS: Settings = Settings::drone();
//!     type Parts = parts::Drone;
//! }
//! let mut drone = Pipeline::<2, Fixed<Drone>>::new(Fixed::new())?;
//! assert!(drone.process(&Sample::pressure(Instant::ZERO, 97_700.0)).accepted());
//!
//! static HIKE: Settings = Settings::hike();
//! let mut hike = Pipeline::<2, &'static Settings>::new(&HIKE)?;
//! assert!(hike.process(&Sample::pressure(Instant::ZERO, 97_700.0)).accepted());
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! A balloon: layer-by-layer sounding from the launch elevation with the launch latitude's
//! gravity, flight phases, descent on the profile stored on the way up (here 256 levels).
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::pipeline::{Pipeline, Sample, Settings};
//! let mut settings = Settings::balloon();
//! settings.start_altitude_m = Some(310.0);
//! settings.latitude_deg = Some(64.2);
//! let mut balloon = Pipeline::<256>::new(settings)?;
//! let out = balloon.process(&Sample {
//!     time: Instant::ZERO,
//!     pressure_pa: 97_300.0,
//!     temperature_c: Some(24.5),
//!     humidity_pct: Some(70.0),
//!     ..Sample::default()
//! });
//! assert!((out.altitude_m - 310.0).abs() < 0.5);
//! # Ok::<(), isohypse::Error>(())
//! ```
//!
//! A walking device: smoothed height, ascent and descent totals that ignore noise and
//! weather drift at rest, known-elevation fixes, the 3-hour pressure tendency.
//!
//! ```
//! use isohypse::time::Instant;
//! use isohypse::pipeline::{Pipeline, Sample, Settings};
//! let mut hike = Pipeline::<2>::new(Settings::hike())?;
//! let out = hike.process(&Sample {
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
//! ## Where things live
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
//! 4. **Soundings** — [`sounding`] (layer-by-layer integration of a balloon ascent, the
//!    stored profile, heights on it for the descent).
//! 5. **Filters** — [`filter`] (median, moving average, one-pole, alpha-beta, a Kalman
//!    filter for height, vertical speed and accelerometer bias, ground reference).
//! 6. **Trackers** — [`flight`] (flight phases: ground, ascent, float, burst, descent,
//!    landed) and [`track`] (walking devices: ascent/descent totals with hysteresis,
//!    weather drift at rest, known-elevation fixes, 3-hour pressure tendency).
//! 7. **Pipeline** — [`pipeline`] (one call per sample, presets for balloon, drone and
//!    hike), and the optional `embedded-hal` sensor adapter (`sensor`, and `sensor_async`
//!    with `embedded-hal-async`) and `defmt` formatting.
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
#[cfg(feature = "embedded-hal")]
pub mod parts;
pub mod pipeline;
#[cfg(feature = "embedded-hal")]
#[cfg_attr(docsrs, doc(cfg(feature = "embedded-hal")))]
pub mod sensor;
#[cfg(feature = "embedded-hal-async")]
#[cfg_attr(docsrs, doc(cfg(feature = "embedded-hal-async")))]
pub mod sensor_async;
pub(crate) mod snapshot;
pub mod sounding;
pub mod time;
pub mod track;
pub mod units;
pub mod uses;

pub use error::Error;
pub use units::{Height, Pressure, RelativeHumidity, Temperature, VerticalSpeed};
