//! Layer temperature models: how warm the air column is between a reference level and
//! the instrument, and so how far apart two pressures are in height.
//!
//! Every model here describes the column's temperature as a chain of segments, each
//! linear in geopotential height `H` (`T = Tb + L (H - Hb)`, possibly `L = 0`). On such
//! a segment the hypsometric equation `dH = -(R Tv / g0) d ln p` integrates in closed
//! form (U.S. Standard Atmosphere 1976, eq. 33a/33b; see [`crate::hypsometric`]):
//!
//! ```text
//! L != 0:  ln(p2 / p1) = -(g0 / (R f L)) ln(1 + L dH / T1)     dH = (T1 / L) expm1(-(R f L / g0) ln(p2 / p1))
//! L == 0:  ln(p2 / p1) = -g0 dH / (R f T1)                      dH = -(R f T1 / g0) ln(p2 / p1)
//! ```
//!
//! with `f = Tv / T` the virtual-temperature factor of the column's mixing ratio
//! ([`crate::humidity::MixingRatio::virtual_temperature_factor`]; 1 for dry air), R the
//! U.S. 1976 gas constant of dry air and g0 standard gravity. The mixing ratio is taken
//! as constant through the column, which is what an unsaturated, well-mixed layer
//! conserves (Wallace & Hobbs 2006, section 3.5): it keeps `Tv = f T` linear in `H`, so
//! the closed forms stay exact. Heights are therefore found by walking segment ends from
//! the reference and solving the last segment in closed form — exact, no stepping.
//! Near the reference the `ln_1p` / `exp_m1` forms keep f32 errors at fractions of a
//! millimetre.
//!
//! # The models
//!
//! | model | column temperature |
//! | --- | --- |
//! | [`TemperatureModel::Standard`] | U.S. 1976 at each height |
//! | [`TemperatureModel::StandardOffset`] | U.S. 1976 plus a constant (warm or cold day) |
//! | [`TemperatureModel::Isothermal`] | one constant temperature |
//! | [`TemperatureModel::ConstantLapse`] | linear from a temperature at the reference level |
//! | [`TemperatureModel::MeanOfEnds`] | mean of the temperatures measured at the reference and now |
//! | [`TemperatureProfile`] | user knots, piecewise linear; standard lapse rates beyond its ends |
//!
//! # Heights: which kind
//!
//! [`Reference::height`] and the heights returned by [`ColumnModel::height`] are
//! **geometric** metres above the same zero as the reference (usually mean sea level).
//! Internally the models work in geopotential metres and convert with the U.S. 1976
//! inverse-square law (`r0` = 6 356 766 m, [`crate::geopotential`]); gravity that varies
//! with latitude belongs to the layer-by-layer sounding, where it changes results by up to
//! 0.5 %.
//!
//! # Which temperature to use
//!
//! The height between two pressures scales with the *mean virtual temperature of the air
//! column* between them (3.5 % of the height per 10 K near the ground). That is not the
//! temperature of a pressure sensor's die: the die self-heats by a few kelvin when the
//! sensor converts quickly, sits next to a warm processor or battery, and lags the air
//! by tens of seconds to minutes. Feed the models an air temperature from a
//! ventilated, shaded probe, or use a model that needs none.
//!
//! * **Balloon**: the column is tens of kilometres deep and far from standard; use a
//!   [`TemperatureProfile`] filled from the ascent (shaded, ventilated probe, corrected
//!   for its lag), with standard lapse rates above the highest knot. Humidity matters in
//!   the warm lower layers (up to 1.5 % of height).
//! * **Drone**: columns of tens to hundreds of metres; the ground temperature at take-off
//!   (`Isothermal`, or `StandardOffset` with `delta` from that reading) is enough: a 5 K
//!   error over 100 m costs under 2 m. The die temperature of a sensor on a warm flight
//!   controller is the trap.
//! * **Hiking**: columns of hundreds of metres to a few kilometres under weather drift;
//!   `MeanOfEnds` with a wrist temperature is biased by body heat, so `StandardOffset`
//!   with a valley temperature, plus frequent recalibration at known elevations
//!   ([`crate::datum::Calibration`]), is the robust choice.
//!
//! ```
//! use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureModel};
//! use isohypse::{Height, Pressure};
//! let reference = Reference::new(Pressure::from_hpa(1013.25)?, Height::ZERO);
//! let warm = TemperatureModel::StandardOffset { delta_k: 10.0 };
//! let z = warm.height(&reference, Pressure::from_hpa(900.0)?, &AirSample::DRY)?;
//! // Standard pressure altitude of 900 hPa is 988.5 m geopotential; 10 K warmer stretches
//! // it by 10 / 288.15 = 3.5 %: 1 022.81 m', 1 022.97 m geometric (U.S. 1976 troposphere
//! // formula evaluated in f64 by hand, R* = 8.31432, M = 0.0289644, r0 = 6 356 766 m).
//! assert!((z.meters() - 1022.97).abs() < 0.1);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976, US_1976_EARTH_RADIUS_M, US_1976_GAS_CONSTANT};
use crate::geopotential;
use crate::humidity::MixingRatio;
use crate::math;
use crate::units::{Height, Pressure, Temperature};

const R: f32 = US_1976_GAS_CONSTANT;
const G0: f32 = STANDARD_GRAVITY;
const R0: f32 = US_1976_EARTH_RADIUS_M;

/// The level heights are measured from: a pressure at a known geometric height, and
/// optionally the air temperature measured there (needed by
/// [`TemperatureModel::MeanOfEnds`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reference {
    /// Pressure at the reference level.
    pub pressure: Pressure,
    /// Geometric height of the reference level (m above the zero of your choice,
    /// usually mean sea level).
    pub height: Height,
    /// Air temperature measured at the reference level, if any.
    pub temperature: Option<Temperature>,
}

impl Reference {
    /// A reference without a temperature.
    pub const fn new(pressure: Pressure, height: Height) -> Self {
        Self {
            pressure,
            height,
            temperature: None,
        }
    }

    /// The same reference with the temperature measured there.
    pub const fn with_temperature(self, temperature: Temperature) -> Self {
        Self {
            temperature: Some(temperature),
            ..self
        }
    }
}

/// What is measured about the air at the current sample: its temperature (used by
/// [`TemperatureModel::MeanOfEnds`]) and the mixing ratio taken for the whole column
/// (dry by default).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AirSample {
    /// Air temperature at the instrument, if measured.
    pub temperature: Option<Temperature>,
    /// Mixing ratio assumed through the column.
    pub mixing_ratio: MixingRatio,
}

impl AirSample {
    /// Dry air, no temperature.
    pub const DRY: AirSample = AirSample {
        temperature: None,
        mixing_ratio: MixingRatio::DRY,
    };

    /// Dry air at a measured temperature.
    pub const fn at(temperature: Temperature) -> Self {
        Self {
            temperature: Some(temperature),
            mixing_ratio: MixingRatio::DRY,
        }
    }

    /// The same sample with a column mixing ratio (see
    /// [`MixingRatio::from_relative_humidity`]).
    pub const fn with_mixing_ratio(self, mixing_ratio: MixingRatio) -> Self {
        Self {
            mixing_ratio,
            ..self
        }
    }
}

/// One linear piece of a column temperature, as seen from a geopotential height `h`
/// looking up or down: `T(H) = temperature_k + lapse_rate_k_per_m (H - h)` until
/// `end_geopotential_m` (which may be infinite).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Segment {
    /// Temperature at the height asked about, K (dry-air temperature, not virtual).
    pub temperature_k: f32,
    /// dT/dH on this piece, K per geopotential metre.
    pub lapse_rate_k_per_m: f32,
    /// Where the piece ends in the direction asked, m' (`f32::INFINITY` upward or
    /// `f32::NEG_INFINITY` downward when it never ends).
    pub end_geopotential_m: f32,
}

/// Where the column is anchored: the reference, its geopotential height, and the
/// current air sample. Passed to [`ColumnModel::segment`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Anchor {
    /// The reference level.
    pub reference: Reference,
    /// Geopotential height of the reference level, m'.
    pub reference_geopotential_m: f32,
    /// The current air sample.
    pub air: AirSample,
}

/// 1-sigma noise and uncertainty of the inputs, for [`ColumnModel::height_sigma`].
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InputUncertainty {
    /// 1-sigma noise of the current pressure reading, Pa.
    pub pressure_pa: f32,
    /// 1-sigma uncertainty of the reference pressure, Pa (0 for a reference taken as
    /// exact).
    pub reference_pressure_pa: f32,
    /// 1-sigma uncertainty of the column temperature, K: how far the true column may sit
    /// from the model, as one offset applied to the whole column.
    pub temperature_k: f32,
}

/// A model of the column temperature that can turn pressure into height and back.
///
/// Implementors provide [`Self::segment`]; the closed-form integration of the
/// hypsometric equation over the chain of segments is shared by every model.
pub trait ColumnModel {
    /// The linear piece of the column temperature at geopotential height `h` (m'),
    /// looking upward (`upward = true`) or downward. At a breakpoint, the piece on the
    /// side looked at is returned. Errors when `h` lies outside the model or the model
    /// lacks data it needs.
    fn segment(&self, anchor: &Anchor, h: f32, upward: bool) -> Result<Segment, Error>;

    /// Upper bound on segments crossed by one conversion (a guard against endless
    /// walks; the U.S. 1976 table has 8 layers).
    fn max_segments(&self) -> usize {
        32
    }

    /// Geometric height (m, same zero as `reference.height`) at which the column has
    /// pressure `p`, integrating the hypsometric equation from the reference through
    /// the model's temperature (closed form per segment, see the module docs).
    ///
    /// Errors: [`Error::AboveModelTop`] / [`Error::BelowModelBottom`] outside the
    /// model, [`Error::NotEnoughData`] when the model needs a temperature it was not
    /// given, [`Error::ZeroLapseRate`], [`Error::TemperatureNotPositive`],
    /// [`Error::NotFinite`].
    fn height(&self, reference: &Reference, p: Pressure, air: &AirSample) -> Result<Height, Error> {
        let anchor = anchor(reference, air)?;
        let h = geopotential_of_pressure(self, &anchor, p.pa())?;
        geopotential::geometric_from_geopotential(Height::from_meters(h)?, R0)
    }

    /// Pressure at geometric height `z` given the reference: the inverse of
    /// [`Self::height`]. Same errors.
    fn pressure_at(
        &self,
        reference: &Reference,
        z: Height,
        air: &AirSample,
    ) -> Result<Pressure, Error> {
        let anchor = anchor(reference, air)?;
        let h = geopotential::geopotential_from_geometric(z, R0)?.meters();
        Pressure::from_pa(pressure_of_geopotential(self, &anchor, h)?)
    }

    /// The model's (dry-air) column temperature at geometric height `z`.
    fn temperature_at(
        &self,
        reference: &Reference,
        z: Height,
        air: &AirSample,
    ) -> Result<Temperature, Error> {
        let anchor = anchor(reference, air)?;
        let h = geopotential::geopotential_from_geometric(z, R0)?.meters();
        let seg = match self.segment(&anchor, h, true) {
            Ok(seg) => seg,
            Err(_) => self.segment(&anchor, h, false)?,
        };
        Temperature::from_kelvin(seg.temperature_k)
    }

    /// 1-sigma uncertainty (m) of [`Self::height`] from the stated input uncertainties,
    /// by first-order propagation (independent inputs). The height `H` of `p` solves
    /// `integral from H_ref to H of g0 / (R f (T(H') + d)) dH' = ln(p_ref / p)`, with `d`
    /// a uniform offset of the column temperature; differentiating:
    ///
    /// ```text
    /// sigma_z = (dz/dH) sqrt((dH/dp sp)^2 + (dH/dp_ref sp_ref)^2 + (dH/dd sT)^2)
    /// dH/dp     = -R f T(H) / (g0 p)          (hydrostatic: dp/dH = -g0 p / (R Tv))
    /// dH/dp_ref =  R f T(H) / (g0 p_ref)
    /// dH/dd     =  T(H) * integral from H_ref to H of dH' / T(H')^2
    /// dz/dH     =  ((r0 + z) / r0)^2          (U.S. 1976 eq. 19 differentiated)
    /// ```
    ///
    /// The temperature term is integrated exactly per linear segment
    /// (`integral dH / T^2 = dH / (T1 T2)`); for an isothermal column it reduces to
    /// `(R f / g0) ln(p_ref / p)`. Only the linearisation is approximate; the Monte Carlo
    /// test in `tests/models.rs` checks it. The combination in quadrature is the law of
    /// propagation of uncertainty for independent inputs (JCGM 100:2008, *Guide to the
    /// expression of uncertainty in measurement*, eq. 10, number from memory).
    ///
    /// Errors: [`Error::InvalidSetting`] for negative or non-finite uncertainties, and
    /// those of [`Self::height`].
    fn height_sigma(
        &self,
        reference: &Reference,
        p: Pressure,
        air: &AirSample,
        uncertainty: &InputUncertainty,
    ) -> Result<Height, Error> {
        let u = uncertainty;
        for s in [u.pressure_pa, u.reference_pressure_pa, u.temperature_k] {
            if !s.is_finite() || s < 0.0 {
                return Err(Error::InvalidSetting);
            }
        }
        let z = self.height(reference, p, air)?;
        let f = air.mixing_ratio.virtual_temperature_factor();
        let tv = f * self.temperature_at(reference, z, air)?.kelvin();
        let d_p = -R * tv / (G0 * p.pa());
        let d_pref = R * tv / (G0 * reference.pressure.pa());
        let anchor = anchor(reference, air)?;
        let h = geopotential::geopotential_from_geometric(z, R0)?.meters();
        let d_t = temperature_sensitivity(self, &anchor, h)?;
        let dz_dh = {
            let q = (R0 + z.meters()) / R0;
            q * q
        };
        let a = d_p * u.pressure_pa;
        let b = d_pref * u.reference_pressure_pa;
        let c = d_t * u.temperature_k;
        Height::from_meters(dz_dh * math::sqrt(a * a + b * b + c * c))
    }
}

/// ln(p / p_ref): `ln_1p` near the reference (no cancellation in `ln` of a ratio near
/// 1), `ln` of the ratio far from it (where `p - p_ref` would lose `p`'s digits). An
/// identity; the split is common practice in floating point.
pub(crate) fn log_ratio(p: f32, p_ref: f32) -> f32 {
    let d = p - p_ref;
    if d.abs() < 0.5 * p_ref {
        math::ln_1p(d / p_ref)
    } else {
        math::ln(p / p_ref)
    }
}

fn anchor(reference: &Reference, air: &AirSample) -> Result<Anchor, Error> {
    let h = geopotential::geopotential_from_geometric(reference.height, R0)?;
    Ok(Anchor {
        reference: *reference,
        reference_geopotential_m: h.meters(),
        air: *air,
    })
}

fn out_of_range(upward: bool) -> Error {
    if upward {
        Error::AboveModelTop
    } else {
        Error::BelowModelBottom
    }
}

fn check_segment(seg: Segment) -> Result<Segment, Error> {
    if !seg.temperature_k.is_finite() || !seg.lapse_rate_k_per_m.is_finite() {
        return Err(Error::NotFinite);
    }
    if seg.temperature_k <= 0.0 {
        return Err(Error::TemperatureNotPositive);
    }
    if seg.end_geopotential_m.is_nan() {
        return Err(Error::NotFinite);
    }
    Ok(seg)
}

/// ln(p2 / p1) across `dh` (m') from the start of a segment, virtual factor `f`:
/// `-(g0 / (R f L)) ln_1p(L dh / T1)`, or `-g0 dh / (R f T1)` for `L = 0` (U.S. 1976
/// eq. 33a/33b with `Tv = f T`; see the module docs).
fn log_pressure_change(seg: &Segment, dh: f32, f: f32, upward: bool) -> Result<f32, Error> {
    let t = f * seg.temperature_k;
    let l = f * seg.lapse_rate_k_per_m;
    let s = if l == 0.0 {
        -G0 * dh / (R * t)
    } else {
        let x = l * dh / t;
        if x <= -1.0 {
            // The temperature would reach absolute zero inside the span.
            return Err(out_of_range(upward));
        }
        -(G0 / (R * l)) * math::ln_1p(x)
    };
    if s.is_finite() {
        Ok(s)
    } else {
        Err(out_of_range(upward))
    }
}

/// Height change (m') on a segment for a log pressure change `s = ln(p2 / p1)`:
/// `(T1 / L) expm1(-(R f L / g0) s)`, or `-(R f T1 / g0) s` for `L = 0` (U.S. 1976
/// eq. 33a/33b solved for H, with `Tv = f T`; see the module docs).
fn height_change(seg: &Segment, s: f32, f: f32) -> f32 {
    let t = f * seg.temperature_k;
    let l = f * seg.lapse_rate_k_per_m;
    if l == 0.0 {
        -(R * t / G0) * s
    } else {
        (t / l) * math::exp_m1(-(R * l / G0) * s)
    }
}

/// Geopotential height (m') of pressure `p_pa` under `model` from the anchor: the
/// segments' [`log_pressure_change`] summed until the last one holds `ln(p / p_ref)`,
/// which [`height_change`] solves (module docs).
fn geopotential_of_pressure<M: ColumnModel + ?Sized>(
    model: &M,
    anchor: &Anchor,
    p_pa: f32,
) -> Result<f32, Error> {
    let p_ref = anchor.reference.pressure.pa();
    let f = anchor.air.mixing_ratio.virtual_temperature_factor();
    let target = log_ratio(p_pa, p_ref);
    if !target.is_finite() {
        return Err(Error::NotFinite);
    }
    let mut h = anchor.reference_geopotential_m;
    let upward = target <= 0.0;
    if target == 0.0 {
        check_segment(model.segment(anchor, h, upward)?)?;
        return Ok(h);
    }
    let mut reached = 0.0_f32;
    for _ in 0..model.max_segments() {
        let seg = check_segment(model.segment(anchor, h, upward)?)?;
        let remaining = target - reached;
        if seg.end_geopotential_m.is_finite() {
            let span = seg.end_geopotential_m - h;
            let full = log_pressure_change(&seg, span, f, upward)?;
            let inside = if upward {
                remaining >= full
            } else {
                remaining <= full
            };
            if !inside {
                reached += full;
                h = seg.end_geopotential_m;
                continue;
            }
        }
        let dh = height_change(&seg, remaining, f);
        let result = h + dh;
        return if result.is_finite() {
            Ok(result)
        } else {
            Err(out_of_range(upward))
        };
    }
    Err(out_of_range(upward))
}

/// Walks the model's segments from the anchor to geopotential `target` (m'), calling
/// `visit(segment, dh)` for each piece crossed (`dh` signed, from the segment's start).
/// The segment at the reference is always fetched, so a model lacking data fails even
/// for `target` at the reference.
fn walk<M: ColumnModel + ?Sized>(
    model: &M,
    anchor: &Anchor,
    target: f32,
    mut visit: impl FnMut(&Segment, f32) -> Result<(), Error>,
) -> Result<(), Error> {
    let mut h = anchor.reference_geopotential_m;
    let upward = target >= h;
    check_segment(model.segment(anchor, h, upward)?)?;
    for _ in 0..model.max_segments() {
        if h == target {
            return Ok(());
        }
        let seg = check_segment(model.segment(anchor, h, upward)?)?;
        let next = if upward {
            seg.end_geopotential_m.min(target)
        } else {
            seg.end_geopotential_m.max(target)
        };
        visit(&seg, next - h)?;
        h = next;
    }
    if h == target {
        Ok(())
    } else {
        Err(out_of_range(upward))
    }
}

/// Pressure (Pa) at geopotential height `target` (m') under `model` from the anchor:
/// `p = p_ref exp(sum of the segments' ln(p2 / p1))` (module docs).
fn pressure_of_geopotential<M: ColumnModel + ?Sized>(
    model: &M,
    anchor: &Anchor,
    target: f32,
) -> Result<f32, Error> {
    let p_ref = anchor.reference.pressure.pa();
    let f = anchor.air.mixing_ratio.virtual_temperature_factor();
    let upward = target > anchor.reference_geopotential_m;
    let mut s = 0.0_f32;
    walk(model, anchor, target, |seg, dh| {
        s += log_pressure_change(seg, dh, f, upward)?;
        Ok(())
    })?;
    // exp_m1 keeps precision near the reference; far from it, exp avoids the
    // cancellation of p_ref + p_ref * (e^s - 1).
    let p = if s.abs() < 0.5 {
        p_ref + p_ref * math::exp_m1(s)
    } else {
        p_ref * math::exp(s)
    };
    if p.is_finite() && p > 0.0 {
        Ok(p)
    } else {
        Err(out_of_range(upward))
    }
}

/// `T(H) * integral of dH' / T(H')^2` from the reference to `target`: the derivative of
/// the height of a fixed pressure with respect to a uniform temperature offset.
/// On a linear piece `integral dH / T^2 = dH / (T1 T2)` (exact, also for `L = 0`).
fn temperature_sensitivity<M: ColumnModel + ?Sized>(
    model: &M,
    anchor: &Anchor,
    target: f32,
) -> Result<f32, Error> {
    let mut integral = 0.0_f32;
    let mut t_end = 0.0_f32;
    walk(model, anchor, target, |seg, dh| {
        let t2 = seg.temperature_k + seg.lapse_rate_k_per_m * dh;
        if t2 <= 0.0 {
            return Err(Error::TemperatureNotPositive);
        }
        integral += dh / (seg.temperature_k * t2);
        t_end = t2;
        Ok(())
    })?;
    Ok(t_end * integral)
}

/// The U.S. 1976 segment at geopotential `h` looking up or down, shifted by `delta_k`:
/// `T = Tb + L (h - Hb) + delta_k` with the layers of Table 4 (U.S. 1976 eq. 23).
pub(crate) fn standard_segment(h: f32, upward: bool, delta_k: f32) -> Result<Segment, Error> {
    if !h.is_finite() || !delta_k.is_finite() {
        return Err(Error::NotFinite);
    }
    if h < US_1976.bottom_geopotential_m() {
        return Err(Error::BelowModelBottom);
    }
    if h > US_1976.top_geopotential_m() {
        return Err(Error::AboveModelTop);
    }
    for pair in US_1976.layers.windows(2) {
        if let [lower, upper] = pair {
            let inside = if upward {
                lower.base_geopotential_m <= h && h < upper.base_geopotential_m
            } else {
                lower.base_geopotential_m < h && h <= upper.base_geopotential_m
            };
            if inside {
                let t = lower.base_temperature_k
                    + lower.lapse_rate_k_per_m * (h - lower.base_geopotential_m)
                    + delta_k;
                return Ok(Segment {
                    temperature_k: t,
                    lapse_rate_k_per_m: lower.lapse_rate_k_per_m,
                    end_geopotential_m: if upward {
                        upper.base_geopotential_m
                    } else {
                        lower.base_geopotential_m
                    },
                });
            }
        }
    }
    Err(out_of_range(upward))
}

/// U.S. 1976 temperature (K) at geopotential `h` (eq. 23).
fn standard_temperature(h: f32) -> Result<f32, Error> {
    match standard_segment(h, true, 0.0) {
        Ok(seg) => Ok(seg.temperature_k),
        Err(_) => Ok(standard_segment(h, false, 0.0)?.temperature_k),
    }
}

/// Column temperature models that need no stored data. See the module docs for the
/// table and for which to choose.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TemperatureModel {
    /// U.S. Standard Atmosphere 1976 temperature at each height (absolute: the
    /// reference height places the column in the standard). With a reference at
    /// 1013.25 hPa and 0 m this is pressure altitude.
    #[default]
    Standard,
    /// Standard temperature plus a constant: `T(H) = T_1976(H) + delta_k` (a warm or
    /// cold day). Integrated exactly layer by layer.
    StandardOffset {
        /// Offset from the standard, K (positive: warmer than standard).
        delta_k: f32,
    },
    /// One temperature through the column: `T(H) = temperature_k`. A temperature
    /// outside [`Temperature`]'s range is a typed error at use
    /// ([`Error::TemperatureOutOfRange`] and the others of [`Temperature::from_kelvin`]).
    Isothermal {
        /// Column temperature, K.
        temperature_k: f32,
    },
    /// Linear from the reference level: `T(H) = reference_temperature_k +
    /// lapse_rate_k_per_m (H - H_ref)` (negative lapse rate: colder aloft; U.S. 1976
    /// troposphere: -0.0065 K/m'). A zero lapse rate is rejected with
    /// [`Error::ZeroLapseRate`]: use [`TemperatureModel::Isothermal`].
    ConstantLapse {
        /// Temperature at the reference level, K.
        reference_temperature_k: f32,
        /// dT/dH, K per geopotential metre, non-zero.
        lapse_rate_k_per_m: f32,
    },
    /// The hypsometric mean-layer method for two points: the column is isothermal at
    /// the mean of the temperature measured at the reference
    /// ([`Reference::temperature`]) and the one measured now
    /// ([`AirSample::temperature`]); [`Error::NotEnoughData`] if either is missing
    /// (Wallace & Hobbs 2006, eq. 3.29 with the layer mean taken as the mean of its
    /// ends, common practice for thin layers).
    MeanOfEnds,
}

impl TemperatureModel {
    /// A validated [`TemperatureModel::ConstantLapse`]. Errors: [`Error::NotFinite`],
    /// [`Error::ZeroLapseRate`].
    pub fn constant_lapse(
        reference_temperature: Temperature,
        lapse_rate_k_per_m: f32,
    ) -> Result<Self, Error> {
        if !lapse_rate_k_per_m.is_finite() {
            return Err(Error::NotFinite);
        }
        if lapse_rate_k_per_m == 0.0 {
            return Err(Error::ZeroLapseRate);
        }
        Ok(Self::ConstantLapse {
            reference_temperature_k: reference_temperature.kelvin(),
            lapse_rate_k_per_m,
        })
    }

    /// A validated [`TemperatureModel::StandardOffset`]. Errors: [`Error::NotFinite`],
    /// [`Error::TemperatureOutOfRange`] beyond +-100 K.
    pub fn standard_offset(delta_k: f32) -> Result<Self, Error> {
        if !delta_k.is_finite() {
            return Err(Error::NotFinite);
        }
        if delta_k.abs() > 100.0 {
            return Err(Error::TemperatureOutOfRange);
        }
        Ok(Self::StandardOffset { delta_k })
    }
}

impl ColumnModel for TemperatureModel {
    fn segment(&self, anchor: &Anchor, h: f32, upward: bool) -> Result<Segment, Error> {
        let endless = if upward {
            f32::INFINITY
        } else {
            f32::NEG_INFINITY
        };
        match *self {
            TemperatureModel::Standard => standard_segment(h, upward, 0.0),
            TemperatureModel::StandardOffset { delta_k } => standard_segment(h, upward, delta_k),
            TemperatureModel::Isothermal { temperature_k } => Ok(Segment {
                temperature_k: Temperature::from_kelvin(temperature_k)?.kelvin(),
                lapse_rate_k_per_m: 0.0,
                end_geopotential_m: endless,
            }),
            TemperatureModel::ConstantLapse {
                reference_temperature_k,
                lapse_rate_k_per_m,
            } => {
                let reference_temperature = Temperature::from_kelvin(reference_temperature_k)?;
                if !lapse_rate_k_per_m.is_finite() {
                    return Err(Error::NotFinite);
                }
                if lapse_rate_k_per_m == 0.0 {
                    return Err(Error::ZeroLapseRate);
                }
                Ok(Segment {
                    temperature_k: reference_temperature.kelvin()
                        + lapse_rate_k_per_m * (h - anchor.reference_geopotential_m),
                    lapse_rate_k_per_m,
                    end_geopotential_m: endless,
                })
            }
            TemperatureModel::MeanOfEnds => {
                let (Some(t_ref), Some(t_now)) =
                    (anchor.reference.temperature, anchor.air.temperature)
                else {
                    return Err(Error::NotEnoughData);
                };
                Ok(Segment {
                    temperature_k: 0.5 * (t_ref.kelvin() + t_now.kelvin()),
                    lapse_rate_k_per_m: 0.0,
                    end_geopotential_m: endless,
                })
            }
        }
    }
}

/// One knot of a [`TemperatureProfile`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ProfileKnot {
    /// Geopotential height of the knot, m' (converted from the geometric height given
    /// to [`TemperatureProfile::push`]).
    pub geopotential_m: f32,
    /// Air temperature at the knot.
    pub temperature: Temperature,
}

/// A measured temperature profile: up to `N` knots (height, temperature), strictly
/// increasing in height, piecewise linear in geopotential height between knots.
/// Below the lowest and above the highest knot the temperature follows the U.S. 1976
/// lapse rates, shifted to meet the end knot (no jump in temperature; the standard's
/// layer structure, such as the tropopause, is kept).
///
/// Memory: `N` knots of 8 bytes plus a length. Time per conversion: one pass over the
/// knots per segment crossed.
///
/// ```
/// use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureProfile};
/// use isohypse::{Error, Height, Pressure, Temperature};
/// let mut profile = TemperatureProfile::<4>::new();
/// profile.push(Height::from_meters(0.0)?, Temperature::from_celsius(25.0)?)?;
/// profile.push(Height::from_meters(2000.0)?, Temperature::from_celsius(12.0)?)?;
/// // Not above the last knot: rejected, profile unchanged.
/// assert_eq!(profile.push(Height::from_meters(1500.0)?, Temperature::from_celsius(15.0)?),
///            Err(Error::NotIncreasing));
/// assert_eq!(profile.len(), 2);
/// let reference = Reference::new(Pressure::from_hpa(1010.0)?, Height::ZERO);
/// let z = profile.height(&reference, Pressure::from_hpa(850.0)?, &AirSample::DRY)?;
/// assert!(z.meters() > 1457.0); // warmer than standard: higher than pressure altitude
/// # Ok::<(), isohypse::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TemperatureProfile<const N: usize> {
    knots: heapless::Vec<ProfileKnot, N>,
}

impl<const N: usize> TemperatureProfile<N> {
    /// An empty profile.
    pub const fn new() -> Self {
        Self {
            knots: heapless::Vec::new(),
        }
    }

    /// Adds a knot at geometric height `z` above mean sea level.
    ///
    /// Errors (the profile is left unchanged; the caller still holds its values):
    /// [`Error::CapacityFull`] when `N` knots are stored, [`Error::NotIncreasing`] when
    /// `z` is not above the last knot, [`Error::BelowModelBottom`] /
    /// [`Error::AboveModelTop`] outside the U.S. 1976 range the ends rely on.
    pub fn push(&mut self, z: Height, temperature: Temperature) -> Result<(), Error> {
        let h = geopotential::geopotential_from_geometric(z, R0)?.meters();
        if h < US_1976.bottom_geopotential_m() {
            return Err(Error::BelowModelBottom);
        }
        if h > US_1976.top_geopotential_m() {
            return Err(Error::AboveModelTop);
        }
        if let Some(last) = self.knots.last() {
            if h <= last.geopotential_m {
                return Err(Error::NotIncreasing);
            }
        }
        self.knots
            .push(ProfileKnot {
                geopotential_m: h,
                temperature,
            })
            .map_err(|_| Error::CapacityFull)
    }

    /// A profile from `(geometric height, temperature)` pairs, all validated as by
    /// [`Self::push`]. Errors as `push`, plus [`Error::NotEnoughData`] for an empty
    /// slice.
    pub fn from_knots(knots: &[(Height, Temperature)]) -> Result<Self, Error> {
        if knots.is_empty() {
            return Err(Error::NotEnoughData);
        }
        let mut profile = Self::new();
        for &(z, t) in knots {
            profile.push(z, t)?;
        }
        Ok(profile)
    }

    /// The stored knots, lowest first.
    pub fn knots(&self) -> &[ProfileKnot] {
        &self.knots
    }

    /// Number of stored knots.
    pub fn len(&self) -> usize {
        self.knots.len()
    }

    /// True when no knot is stored (conversions then fail with
    /// [`Error::NotEnoughData`]).
    pub fn is_empty(&self) -> bool {
        self.knots.is_empty()
    }

    /// Removes all knots.
    pub fn clear(&mut self) {
        self.knots.clear();
    }

    /// Capacity `N`.
    pub const fn capacity(&self) -> usize {
        N
    }
}

impl<const N: usize> ColumnModel for TemperatureProfile<N> {
    fn max_segments(&self) -> usize {
        N.saturating_add(32)
    }

    fn segment(&self, _anchor: &Anchor, h: f32, upward: bool) -> Result<Segment, Error> {
        let (Some(first), Some(last)) = (self.knots.first(), self.knots.last()) else {
            return Err(Error::NotEnoughData);
        };
        let below = h < first.geopotential_m || (h == first.geopotential_m && !upward);
        if below {
            let delta = first.temperature.kelvin() - standard_temperature(first.geopotential_m)?;
            let mut seg = standard_segment(h, upward, delta)?;
            if upward {
                seg.end_geopotential_m = seg.end_geopotential_m.min(first.geopotential_m);
            }
            return Ok(seg);
        }
        let above = h > last.geopotential_m || (h == last.geopotential_m && upward);
        if above {
            let delta = last.temperature.kelvin() - standard_temperature(last.geopotential_m)?;
            let mut seg = standard_segment(h, upward, delta)?;
            if !upward {
                seg.end_geopotential_m = seg.end_geopotential_m.max(last.geopotential_m);
            }
            return Ok(seg);
        }
        for pair in self.knots.windows(2) {
            if let [a, b] = pair {
                let inside = if upward {
                    a.geopotential_m <= h && h < b.geopotential_m
                } else {
                    a.geopotential_m < h && h <= b.geopotential_m
                };
                if inside {
                    let lapse = (b.temperature.kelvin() - a.temperature.kelvin())
                        / (b.geopotential_m - a.geopotential_m);
                    return Ok(Segment {
                        temperature_k: a.temperature.kelvin() + lapse * (h - a.geopotential_m),
                        lapse_rate_k_per_m: lapse,
                        end_geopotential_m: if upward {
                            b.geopotential_m
                        } else {
                            a.geopotential_m
                        },
                    });
                }
            }
        }
        // Only reachable for a NaN height, which the walk never produces.
        Err(Error::NotFinite)
    }
}

crate::snapshot::snap_fields!(Reference {
    pressure,
    height,
    temperature
});

#[cfg(test)]
mod tests;
