//! Datums: what a height is measured from.
//!
//! * **Standard setting** (1013.25 hPa): pressure altitude, the height at which the
//!   standard atmosphere has the measured pressure; flight levels are pressure altitude
//!   in hundreds of feet.
//! * **Sea-level setting (QNH)**: an altimeter set to QNH reads the field elevation on
//!   the ground. The altimeter scale is the standard atmosphere shifted in height so
//!   that it reads zero at the setting pressure:
//!   `H = H_std(p) - H_std(QNH)` (geopotential), which in the troposphere is
//!   `H = (T0 / L) ((QNH / p0)^n - (p / p0)^n)`, `n = R L / g0 = 0.190 263`,
//!   `T0 = 288.15 K`, `L = 0.0065 K/m'`, `p0 = 1013.25 hPa` (ICAO Doc 7488/3 and
//!   U.S. Standard Atmosphere 1976 troposphere; definition of QNH in ICAO Doc 8168
//!   PANS-OPS, from memory; the U.S. National Weather Service altimeter-setting
//!   equation has the same form, from memory). Here the whole U.S. 1976 table is used,
//!   so the shift also holds above 11 km.
//! * **Field setting (QFE)**: the same shift with the pressure at the field: reads zero
//!   on the ground.
//! * **A setting solved from a known elevation**: for the standard shift,
//!   [`AltimeterSetting::sea_level_from_elevation`]; for any temperature model,
//!   [`Calibration`], which keeps the reference and blends later fixes.
//! * **Density altitude**: [`density_altitude`].
//!
//! Heights returned here are geometric metres: the geopotential shift above is converted
//! with the U.S. 1976 law `z = r0 H / (r0 - H)`. An aircraft altimeter's dial shows the
//! geopotential number (ICAO calibration), which is lower by `H^2 / r0`: 1.4 m at 3 km.
//! For QFE the conversion takes the field as the zero of `z`; the error of that,
//! `2 z_field H / r0`, is 0.3 m for a 1 km climb above a field at 1 km.
//!
//! Standard and sea-level settings take no temperature: they are what an altimeter
//! reads, not the true height. In air colder than standard they read too high (see the
//! temperature-error test in `tests/models.rs`); for true height use a
//! [`crate::model::ColumnModel`] with a measured column temperature.
//!
//! ```
//! use isohypse::datum::AltimeterSetting;
//! use isohypse::{Height, Pressure};
//! // On a field at 350 m, the barometer reads 972 hPa: solve QNH, then read it back.
//! let p = Pressure::from_hpa(972.0)?;
//! let setting = AltimeterSetting::sea_level_from_elevation(p, Height::from_meters(350.0)?)?;
//! assert!((setting.height(p)?.meters() - 350.0).abs() < 1e-3);
//! assert!(setting.setting_pressure()?.is_some());
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976, US_1976_EARTH_RADIUS_M, US_1976_GAS_CONSTANT};
use crate::geopotential;
use crate::humidity;
use crate::math;
use crate::model::{AirSample, ColumnModel, Reference};
use crate::units::{Height, M_PER_FT, Pressure, RelativeHumidity, Temperature};

const R0: f32 = US_1976_EARTH_RADIUS_M;

/// Pressure altitude: geometric height (m) at which the U.S. 1976 standard atmosphere
/// has pressure `p` (same as [`crate::atmosphere::pressure_altitude`]).
pub fn pressure_altitude(p: Pressure) -> Result<Height, Error> {
    US_1976.pressure_altitude(p)
}

/// Flight level: pressure altitude in hundreds of feet, from the *geopotential* height
/// of `p` in the standard atmosphere, as aircraft altimeters are calibrated (ICAO Doc
/// 7488 tabulates altitude in geopotential units; ICAO Annex 2 defines flight levels as
/// surfaces of constant pressure related to 1013.25 hPa; from memory). Not rounded:
/// FL 100 is `100.0`.
///
/// ```
/// use isohypse::{datum::flight_level, Pressure};
/// // 696.8 hPa is FL100 (ICAO standard atmosphere tables, from memory).
/// assert!((flight_level(Pressure::from_hpa(696.82)?)? - 100.0).abs() < 0.05);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn flight_level(p: Pressure) -> Result<f32, Error> {
    let h = US_1976.geopotential_height(p)?;
    Ok(h.meters() / M_PER_FT / 100.0)
}

/// An altimeter setting: the standard atmosphere shifted in height so that it reads zero
/// at the setting pressure (see the module docs for equation and sources).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AltimeterSetting {
    /// 1013.25 hPa: heights are pressure altitudes.
    #[default]
    Standard,
    /// QNH: reads the elevation above mean sea level on the ground.
    SeaLevel {
        /// The sea-level setting, Pa.
        qnh_pa: f32,
    },
    /// QFE: reads zero at the field.
    Field {
        /// Pressure at the field, Pa.
        qfe_pa: f32,
    },
}

impl AltimeterSetting {
    /// The setting pressure; `None` for [`AltimeterSetting::Standard`], whose setting
    /// is 1013.25 hPa by definition.
    ///
    /// Errors: those of [`Pressure::from_pa`] for a setting that is not a pressure.
    pub fn setting_pressure(&self) -> Result<Option<Pressure>, Error> {
        match *self {
            AltimeterSetting::Standard => Ok(None),
            AltimeterSetting::SeaLevel { qnh_pa: pa } | AltimeterSetting::Field { qfe_pa: pa } => {
                Pressure::from_pa(pa).map(Some)
            }
        }
    }

    /// Geometric height (m) the setting gives for pressure `p`:
    /// `z = geometric(H_std(p) - H_std(setting))`, with `H_std` the U.S. 1976
    /// geopotential height of a pressure (eq. 33a/33b solved for H) and `geometric` its
    /// eq. 19 (see the module docs for the troposphere closed form and its sources).
    ///
    /// Errors: [`Error::AboveModelTop`] / [`Error::BelowModelBottom`] outside the U.S.
    /// 1976 table; those of [`Pressure::from_pa`] for a setting that is not a pressure.
    pub fn height(&self, p: Pressure) -> Result<Height, Error> {
        let h = US_1976.geopotential_height(p)?.meters();
        let h0 = match self.setting_pressure()? {
            None => 0.0,
            Some(setting) => US_1976.geopotential_height(setting)?.meters(),
        };
        geopotential::geometric_from_geopotential(Height::from_meters(h - h0)?, R0)
    }

    /// The sea-level setting (QNH) that makes pressure `p` read `elevation` (geometric,
    /// above mean sea level): `H_std(QNH) = H_std(p) - H(elevation)`, so
    /// `QNH = p_std(H_std(p) - H(elevation))`. Closed form, no iteration. `H(elevation)`
    /// from U.S. 1976 eq. 18, `H_std` and `p_std` from eq. 33a/33b (QNH as the setting
    /// that reads the field elevation on the ground: ICAO Doc 8168, from memory).
    ///
    /// Errors: the U.S. 1976 range errors ([`Error::BelowModelBottom`],
    /// [`Error::AboveModelTop`]) for `p` or the implied sea-level pressure.
    pub fn sea_level_from_elevation(p: Pressure, elevation: Height) -> Result<Self, Error> {
        let h_elev = geopotential::geopotential_from_geometric(elevation, R0)?.meters();
        let h = US_1976.geopotential_height(p)?.meters() - h_elev;
        let qnh = US_1976.at_geopotential(Height::from_meters(h)?)?.pressure;
        Ok(AltimeterSetting::SeaLevel { qnh_pa: qnh.pa() })
    }

    /// The field setting (QFE) from a reading taken on the ground: `QFE = p` (QFE is the
    /// pressure at the field, with which the altimeter reads zero on the ground; ICAO
    /// definition, from memory).
    pub const fn field_from_reading(p: Pressure) -> Self {
        AltimeterSetting::Field { qfe_pa: p.pa() }
    }
}

/// Density altitude: the geometric height (m) at which the U.S. 1976 standard atmosphere
/// has the same air density as the measured air.
///
/// Density of moist air `rho = p / (R Tv)` with the virtual temperature `Tv` from
/// [`humidity::virtual_temperature`] (Wallace & Hobbs 2006, eq. 3.16); inverted per
/// standard layer from the layer-base density `rho_b = p_b / (R T_b)`:
///
/// ```text
/// L != 0:  rho = rho_b (1 + L dH / T_b)^(-(g0 / (R L)) - 1)  =>  dH = (T_b / L) expm1(ln(rho / rho_b) / (-(g0 / (R L)) - 1))
/// L == 0:  rho = rho_b exp(-g0 dH / (R T_b))               =>  dH = -(R T_b / g0) ln(rho / rho_b)
/// ```
///
/// (U.S. Standard Atmosphere 1976, eq. 33a/33b and 42; the definition of density
/// altitude as in the FAA *Pilot's Handbook of Aeronautical Knowledge*, FAA-H-8083-25,
/// chapter on aircraft performance, from memory.) Pass [`RelativeHumidity::DRY`] for
/// the dry-air figure aviation charts use; humidity raises density altitude.
///
/// Errors: those of [`humidity::virtual_temperature`]; [`Error::BelowModelBottom`] /
/// [`Error::AboveModelTop`] for densities outside the U.S. 1976 table.
///
/// ```
/// use isohypse::{datum::density_altitude, Pressure, RelativeHumidity, Temperature};
/// // Sea-level pressure on a 35 degC day: density altitude near 690 m (2 270 ft).
/// let da = density_altitude(Pressure::from_hpa(1013.25)?, Temperature::from_celsius(35.0)?,
///                           RelativeHumidity::DRY)?;
/// assert!((da.meters() - 693.0).abs() < 3.0);
/// # Ok::<(), isohypse::Error>(())
/// ```
pub fn density_altitude(
    p: Pressure,
    t: Temperature,
    humidity: RelativeHumidity,
) -> Result<Height, Error> {
    const R: f32 = US_1976_GAS_CONSTANT;
    const G0: f32 = STANDARD_GRAVITY;
    let tv = humidity::virtual_temperature(p, t, humidity)?;
    let rho = p.pa() / (R * tv.kelvin());
    let density = |l: &crate::atmosphere::Layer| l.base_pressure_pa / (R * l.base_temperature_k);
    let (Some(first), Some(top)) = (US_1976.layers.first(), US_1976.layers.last()) else {
        return Err(Error::NotEnoughData);
    };
    if rho > density(first) {
        return Err(Error::BelowModelBottom);
    }
    if rho < density(top) {
        return Err(Error::AboveModelTop);
    }
    for pair in US_1976.layers.windows(2) {
        if let [lower, upper] = pair {
            let rho_b = density(lower);
            if rho <= rho_b && rho >= density(upper) {
                let ln_ratio = math::ln_1p((rho - rho_b) / rho_b);
                let tb = lower.base_temperature_k;
                let l = lower.lapse_rate_k_per_m;
                let dh = if l == 0.0 {
                    -(R * tb / G0) * ln_ratio
                } else {
                    (tb / l) * math::exp_m1(ln_ratio / (-(G0 / (R * l)) - 1.0))
                };
                let h = Height::from_meters(lower.base_geopotential_m + dh)?;
                return geopotential::geometric_from_geopotential(h, R0);
            }
        }
    }
    Err(Error::AboveModelTop)
}

/// A reference solved from known elevations for any temperature model, kept and refined.
///
/// **Method.** The first fix is taken fully: the reference becomes (pressure now, known
/// elevation, temperature now). A later fix is blended with what the stored reference
/// predicts, by a scalar Kalman update in height (weights from the uncertainties):
///
/// ```text
/// z_pred = model height of p_now from the stored reference
/// K      = var / (var + sigma_fix^2)
/// z_new  = z_pred + K (z_known - z_pred)       var <- (1 - K) var
/// reference <- (p_now, z_new, temperature now)
/// ```
///
/// so the displayed height jumps by `K (z_known - z_pred)` and no more. Between fixes
/// the reference ages: [`Calibration::elapse`] grows `var` by `drift^2 dt`, a random
/// walk for weather drift (about 1 hPa in 3 h on an ordinary day, i.e. roughly 8 m,
/// common practice), so an old calibration yields to a new fix and a fresh one resists a
/// sloppy fix. A fix that fails validation leaves the calibration unchanged.
///
/// ```
/// use isohypse::datum::Calibration;
/// use isohypse::model::{AirSample, TemperatureModel};
/// use isohypse::{Height, Pressure};
/// let mut cal = Calibration::new(TemperatureModel::Standard, 3.0)?;
/// let p = Pressure::from_hpa(950.0)?;
/// cal.fix(p, Height::from_meters(540.0)?, 1.0, &AirSample::DRY)?;
/// assert!((cal.height(p, &AirSample::DRY)?.meters() - 540.0).abs() < 1e-3);
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Calibration<M> {
    model: M,
    reference: Option<Reference>,
    variance_m2: f32,
    drift_m2_per_s: f32,
}

impl<M: ColumnModel> Calibration<M> {
    /// A calibration with no fix yet. `drift_m_per_sqrt_hour`: 1-sigma growth of the
    /// reference's height uncertainty per square-root hour (weather drift); 0 for none.
    ///
    /// Errors: [`Error::InvalidSetting`] for a negative or non-finite drift.
    pub fn new(model: M, drift_m_per_sqrt_hour: f32) -> Result<Self, Error> {
        if !drift_m_per_sqrt_hour.is_finite() || drift_m_per_sqrt_hour < 0.0 {
            return Err(Error::InvalidSetting);
        }
        Ok(Self {
            model,
            reference: None,
            variance_m2: 0.0,
            drift_m2_per_s: drift_m_per_sqrt_hour * drift_m_per_sqrt_hour / 3600.0,
        })
    }

    /// Applies a known-elevation fix: pressure `p` read at geometric elevation `known`
    /// with 1-sigma uncertainty `sigma_m` (> 0), and the air sample now. Returns the
    /// change of the height read at `p` caused by this fix (the jump a display sees):
    /// `K (z_known - z_pred)` with `K = var / (var + sigma_m^2)`, and `var <- (1 - K) var`
    /// (the scalar Kalman measurement update; e.g. Simon, *Optimal State Estimation*,
    /// 2006, ch. 5, chapter from memory).
    ///
    /// Errors (calibration unchanged): [`Error::InvalidSetting`] for `sigma_m` not finite
    /// and positive; any error of the model's height at `p`.
    pub fn fix(
        &mut self,
        p: Pressure,
        known: Height,
        sigma_m: f32,
        air: &AirSample,
    ) -> Result<Height, Error> {
        if !sigma_m.is_finite() || sigma_m <= 0.0 {
            return Err(Error::InvalidSetting);
        }
        let fix_var = sigma_m * sigma_m;
        let (z_new, var_new, jump) = match self.reference {
            None => (known.meters(), fix_var, 0.0),
            Some(reference) => {
                let z_pred = self.model.height(&reference, p, air)?.meters();
                let k = self.variance_m2 / (self.variance_m2 + fix_var);
                let step = k * (known.meters() - z_pred);
                (z_pred + step, (1.0 - k) * self.variance_m2, step)
            }
        };
        let new_reference = Reference {
            pressure: p,
            height: Height::from_meters(z_new)?,
            temperature: air.temperature,
        };
        // Check that the model can use the new reference before committing.
        self.model.height(&new_reference, p, air)?;
        let jump = Height::from_meters(jump)?;
        if !var_new.is_finite() {
            return Err(Error::NotFinite);
        }
        self.reference = Some(new_reference);
        self.variance_m2 = var_new;
        Ok(jump)
    }

    /// Ages the calibration by `dt_s` seconds: `var += drift^2 dt` (variance of a random
    /// walk grows linearly with time; common practice).
    /// Errors (unchanged): [`Error::InvalidSetting`] for negative or non-finite `dt_s`.
    pub fn elapse(&mut self, dt_s: f32) -> Result<(), Error> {
        if !dt_s.is_finite() || dt_s < 0.0 {
            return Err(Error::InvalidSetting);
        }
        let v = self.variance_m2 + self.drift_m2_per_s * dt_s;
        if !v.is_finite() {
            return Err(Error::InvalidSetting);
        }
        self.variance_m2 = v;
        Ok(())
    }

    /// Geometric height of pressure `p` from the calibrated reference.
    /// Errors: [`Error::NotEnoughData`] before the first fix; the model's errors.
    pub fn height(&self, p: Pressure, air: &AirSample) -> Result<Height, Error> {
        let reference = self.reference.ok_or(Error::NotEnoughData)?;
        self.model.height(&reference, p, air)
    }

    /// The current reference, if calibrated.
    pub fn reference(&self) -> Option<Reference> {
        self.reference
    }

    /// 1-sigma uncertainty of the reference height (m), if calibrated.
    pub fn sigma_m(&self) -> Option<f32> {
        self.reference.map(|_| math::sqrt(self.variance_m2))
    }

    /// Variance of the reference height (m^2), if calibrated.
    pub fn variance_m2(&self) -> Option<f32> {
        self.reference.map(|_| self.variance_m2)
    }

    /// The temperature model.
    pub fn model(&self) -> &M {
        &self.model
    }
}

/// An altimeter setting in a snapshot: a tag, then the setting pressure (0 for
/// standard).
impl crate::snapshot::Snap for AltimeterSetting {
    const LEN: usize = 1 + 4;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        let (tag, pa) = match *self {
            AltimeterSetting::Standard => (0u8, 0.0),
            AltimeterSetting::SeaLevel { qnh_pa } => (1, qnh_pa),
            AltimeterSetting::Field { qfe_pa } => (2, qfe_pa),
        };
        tag.save(w);
        pa.save(w);
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), Error> {
        let (mut tag, mut pa) = (0u8, 0.0f32);
        tag.load(r)?;
        pa.load(r)?;
        let p = || {
            Pressure::from_pa(pa)
                .map(|p| p.pa())
                .map_err(|_| Error::SnapshotCorrupt)
        };
        *self = match tag {
            0 => AltimeterSetting::Standard,
            1 => AltimeterSetting::SeaLevel { qnh_pa: p()? },
            2 => AltimeterSetting::Field { qfe_pa: p()? },
            _ => return Err(Error::SnapshotCorrupt),
        };
        Ok(())
    }
}

#[cfg(test)]
mod tests;
