//! Geometric and geopotential height, and normal gravity.
//!
//! Geopotential height `H` measures the work done lifting a unit mass against gravity,
//! divided by standard gravity `g0`: `g0 dH = g(z) dz`. The layered models and the
//! hypsometric equation work in `H`; people want geometric height `z`.
//!
//! * Standard atmospheres use inverse-square gravity with an effective radius `r0`
//!   (6 356 766 m in U.S. 1976): `H = r0 z / (r0 + z)`, `z = r0 H / (r0 - H)`
//!   (U.S. Standard Atmosphere 1976, eq. 18 and 19).
//! * For a real place, [`Gravity::at_latitude`] uses WGS-84 normal gravity on the
//!   ellipsoid (Somigliana's formula) and its second-order decrease with height
//!   (NIMA TR8350.2, *Department of Defense World Geodetic System 1984*, 3rd ed., 2000,
//!   eq. 4-1 and 4-3). Gravity differs by about 0.5 % between equator and pole, and so
//!   does every height integrated from pressure.

// Constants keep the digits of their sources, beyond what f32 holds.
#![allow(clippy::excessive_precision)]

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976_EARTH_RADIUS_M};
use crate::math;
use crate::units::Height;

/// Geopotential height (m') from geometric height `z` with effective Earth radius `r0`:
/// `H = r0 z / (r0 + z)` (U.S. 1976 eq. 18). Written as `z - z^2 / (r0 + z)` so the
/// small correction carries the rounding, not the whole height. Heights in m, `r0` in m.
///
/// ```
/// use isohypse::{geopotential::geopotential_from_geometric, Height};
/// // The U.S. 1976 tropopause: 11 000 m' geopotential is 11 019.07 m geometric
/// // (eq. 18 with r0 = 6 356 766 m, evaluated in f64).
/// let h = geopotential_from_geometric(Height::from_meters(11_019.07)?, 6_356_766.0)?;
/// assert!((h.meters() - 11_000.0).abs() < 0.01);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn geopotential_from_geometric(z: Height, r0: f32) -> Result<Height, Error> {
    let zm = z.meters();
    let denom = r0 + zm;
    if denom <= 0.0 {
        return Err(Error::BelowModelBottom);
    }
    Height::from_meters(zm - zm * zm / denom)
}

/// Geometric height (m) from geopotential height `h` with effective Earth radius `r0`:
/// `z = r0 H / (r0 - H)` (U.S. 1976 eq. 19), written as `H + H^2 / (r0 - H)`. Heights
/// in m' and m, `r0` in m.
///
/// ```
/// use isohypse::{geopotential::geometric_from_geopotential, Height};
/// // The top of U.S. 1976: 84 852.05 m' is 86 km geometric (the standard's own pair).
/// let z = geometric_from_geopotential(Height::from_meters(84_852.05)?, 6_356_766.0)?;
/// assert!((z.meters() - 86_000.0).abs() < 0.02);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[inline]
pub fn geometric_from_geopotential(h: Height, r0: f32) -> Result<Height, Error> {
    let hm = h.meters();
    let denom = r0 - hm;
    if denom <= 0.0 {
        return Err(Error::AboveModelTop);
    }
    Height::from_meters(hm + hm * hm / denom)
}

/// WGS-84 equatorial normal gravity gamma_e, m/s^2 (TR8350.2 table 3.4).
pub const WGS84_EQUATORIAL_GRAVITY: f32 = 9.780_325_3;
/// WGS-84 normal gravity constant k (TR8350.2 table 3.4).
const WGS84_K: f32 = 0.001_931_852_6;
/// WGS-84 first eccentricity squared (TR8350.2 table 3.3).
const WGS84_E2: f32 = 0.006_694_380;
/// WGS-84 semi-major axis a, m (TR8350.2 table 3.1).
const WGS84_A: f32 = 6_378_137.0;
/// WGS-84 flattening f = 1 / 298.257 223 563 (TR8350.2 table 3.1).
const WGS84_F: f32 = 1.0 / 298.257_23;
/// WGS-84 m = omega^2 a^2 b / GM (TR8350.2 table 3.4).
const WGS84_M: f32 = 0.003_449_786_5;

/// WGS-84 normal gravity on the ellipsoid at geodetic latitude `latitude_deg`
/// (Somigliana's closed formula, TR8350.2 eq. 4-1):
/// `gamma = gamma_e (1 + k sin^2 phi) / sqrt(1 - e^2 sin^2 phi)`.
///
/// Errors: [`Error::NotFinite`], [`Error::InvalidSetting`] outside -90..=90 degrees.
///
/// ```
/// use isohypse::geopotential::normal_gravity;
/// assert!((normal_gravity(0.0)? - 9.780_325).abs() < 1e-5);
/// assert!((normal_gravity(90.0)? - 9.832_185).abs() < 1e-5);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn normal_gravity(latitude_deg: f32) -> Result<f32, Error> {
    let s2 = sin_squared_latitude(latitude_deg)?;
    Ok(WGS84_EQUATORIAL_GRAVITY * (1.0 + WGS84_K * s2) / math::sqrt(1.0 - WGS84_E2 * s2))
}

fn sin_squared_latitude(latitude_deg: f32) -> Result<f32, Error> {
    if !latitude_deg.is_finite() {
        return Err(Error::NotFinite);
    }
    if !(-90.0..=90.0).contains(&latitude_deg) {
        return Err(Error::InvalidSetting);
    }
    let s = math::sin(latitude_deg.to_radians());
    Ok(s * s)
}

/// How gravity varies with height: the standard atmosphere's inverse-square law, or
/// WGS-84 normal gravity for a latitude.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Gravity {
    #[default]
    /// U.S. 1976: `g(z) = g0 (r0 / (r0 + z))^2`, r0 = 6 356 766 m, g0 = 9.806 65 m/s^2
    /// (U.S. Standard Atmosphere 1976, eq. 17, number from memory; the law that eq. 18
    /// integrates).
    Standard,
    /// WGS-84 normal gravity at a latitude and its decrease with height above the
    /// ellipsoid (TR8350.2 eq. 4-3):
    /// `g(z) = gamma (1 - c1 z + c2 z^2)`, `c1 = 2 (1 + f + m - 2 f sin^2 phi) / a`,
    /// `c2 = 3 / a^2`.
    Latitude {
        /// Normal gravity on the ellipsoid, m/s^2.
        surface_gravity: f32,
        /// Linear coefficient c1, 1/m.
        c1: f32,
        /// Quadratic coefficient c2, 1/m^2.
        c2: f32,
    },
}

impl Gravity {
    /// WGS-84 normal gravity at geodetic latitude `latitude_deg` (degrees): `gamma` from
    /// [`normal_gravity`] (TR8350.2 eq. 4-1), `c1 = 2 (1 + f + m - 2 f sin^2 phi) / a`,
    /// `c2 = 3 / a^2` (eq. 4-3; `a`, `f` from table 3.1, `m` from table 3.4).
    ///
    /// Errors: as [`normal_gravity`].
    pub fn at_latitude(latitude_deg: f32) -> Result<Self, Error> {
        let s2 = sin_squared_latitude(latitude_deg)?;
        let surface_gravity = normal_gravity(latitude_deg)?;
        Ok(Gravity::Latitude {
            surface_gravity,
            c1: 2.0 * (1.0 + WGS84_F + WGS84_M - 2.0 * WGS84_F * s2) / WGS84_A,
            c2: 3.0 / (WGS84_A * WGS84_A),
        })
    }

    /// Gravity at geometric height `z` (m), m/s^2: `g0 (r0 / (r0 + z))^2` for
    /// [`Gravity::Standard`] (U.S. 1976 eq. 17, number from memory),
    /// `gamma (1 - c1 z + c2 z^2)` for [`Gravity::Latitude`] (TR8350.2 eq. 4-3).
    ///
    /// ```
    /// use isohypse::{geopotential::Gravity, Height};
    /// // Near the ground gravity falls by about 3.086e-6 s^-2 per metre (the free-air
    /// // gradient, 0.3086 mGal/m; common practice).
    /// let g = Gravity::at_latitude(45.0)?;
    /// let drop = g.at_height(Height::ZERO) - g.at_height(Height::from_meters(1000.0)?);
    /// assert!((drop / 1000.0 - 3.086e-6).abs() < 0.03e-6);
    /// # Ok::<(), isohypse::Error>(())
    /// ```
    pub fn at_height(&self, z: Height) -> f32 {
        let zm = z.meters();
        match *self {
            Gravity::Standard => {
                let q = US_1976_EARTH_RADIUS_M / (US_1976_EARTH_RADIUS_M + zm);
                STANDARD_GRAVITY * q * q
            }
            Gravity::Latitude {
                surface_gravity,
                c1,
                c2,
            } => surface_gravity * (1.0 - c1 * zm + c2 * zm * zm),
        }
    }

    /// Geopotential height (m', `Phi / g0`) of geometric height `z`: the integral of
    /// `g(z) dz / g0` (definition of geopotential height; Wallace & Hobbs 2006,
    /// section 3.2.1, section number from memory). For [`Gravity::Standard`]:
    /// `H = r0 z / (r0 + z)` (U.S. 1976 eq. 18). For [`Gravity::Latitude`]:
    /// `H = (gamma / g0) (z - c1 z^2 / 2 + c2 z^3 / 3)` (TR8350.2 eq. 4-3 integrated).
    pub fn geopotential(&self, z: Height) -> Result<Height, Error> {
        match *self {
            Gravity::Standard => geopotential_from_geometric(z, US_1976_EARTH_RADIUS_M),
            Gravity::Latitude {
                surface_gravity,
                c1,
                c2,
            } => {
                let zm = z.meters();
                let poly = zm * (1.0 - zm * (0.5 * c1 - zm * c2 / 3.0));
                Height::from_meters(surface_gravity / STANDARD_GRAVITY * poly)
            }
        }
    }

    /// Geometric height (m) of geopotential height `h` (m'): the inverse of
    /// [`Self::geopotential`]. For [`Gravity::Standard`]: `z = r0 H / (r0 - H)` (U.S.
    /// 1976 eq. 19). For [`Gravity::Latitude`] solved by Newton's method from
    /// `z0 = H g0 / gamma` (three steps reach f32 precision below 100 km; the
    /// derivative `dH/dz = g(z) / g0` is the gravity itself; common practice).
    pub fn geometric(&self, h: Height) -> Result<Height, Error> {
        match *self {
            Gravity::Standard => geometric_from_geopotential(h, US_1976_EARTH_RADIUS_M),
            Gravity::Latitude {
                surface_gravity, ..
            } => {
                let target = h.meters();
                let mut z = target * STANDARD_GRAVITY / surface_gravity;
                for _ in 0..3 {
                    let zh = Height::from_meters(z)?;
                    let residual = self.geopotential(zh)?.meters() - target;
                    let slope = self.at_height(zh) / STANDARD_GRAVITY;
                    if slope <= 0.0 {
                        return Err(Error::AboveModelTop);
                    }
                    z -= residual / slope;
                }
                Height::from_meters(z)
            }
        }
    }
}

/// Gravity in a snapshot: a tag, then the three coefficients (zeros for standard).
impl crate::snapshot::Snap for Gravity {
    const LEN: usize = 1 + 12;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        let (tag, g, c1, c2) = match *self {
            Gravity::Standard => (0u8, 0.0, 0.0, 0.0),
            Gravity::Latitude {
                surface_gravity,
                c1,
                c2,
            } => (1, surface_gravity, c1, c2),
        };
        tag.save(w);
        [g, c1, c2].save(w);
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), Error> {
        let (mut tag, mut v) = (0u8, [0.0f32; 3]);
        tag.load(r)?;
        v.load(r)?;
        *self = match (tag, v) {
            (0, _) => Gravity::Standard,
            (1, [g, c1, c2]) if g.is_finite() && g > 9.0 && g < 10.0 => Gravity::Latitude {
                surface_gravity: g,
                c1,
                c2,
            },
            _ => return Err(Error::SnapshotCorrupt),
        };
        Ok(())
    }
}
