//! Balloon soundings: heights integrated layer by layer from measured pressure,
//! temperature and humidity, a fixed-capacity stored profile, and heights on that
//! profile for the descent.
//!
//! ## Integration on the way up
//!
//! Each new sample closes a layer between the previous pressure `p1` and the new one
//! `p2`. Its geopotential thickness comes from the hypsometric equation
//!
//! ```text
//! H2 - H1 = (Rd / g0) * Tv_mean * ln(p1 / p2),     Tv_mean = (Tv1 + Tv2) / 2
//! ```
//!
//! where `Tv` is the virtual temperature of each sample ([`crate::humidity`]). Taking the
//! mean of the two ends is exact when `Tv` varies linearly with `ln p` across the layer,
//! which a layer of a few metres to a few tens of metres is to well below the
//! millimetre (Wallace & Hobbs, *Atmospheric Science*, 2nd ed., 2006, eq. 3.29 and
//! section 3.2.2; the same layer-by-layer sum is how radiosonde heights are computed,
//! WMO-No. 8, *Guide to Instruments and Methods of Observation*, Vol. I, ch. 12).
//! Geopotential `H` is converted to geometric height with gravity for the launch
//! latitude ([`Gravity`]): between equator and pole this changes a height at 30 km by
//! about 0.5 %.
//!
//! The running sum uses Kahan compensation (Kahan 1965, "Further remarks on reducing
//! truncation errors", Communications of the ACM 8(1), 40), so thousands of small f32
//! layers add up without drift.
//!
//! ## The stored profile and the descent
//!
//! On the way up the sounding records levels `(p, H, Tv)` into a [`Profile`] whenever
//! `ln p` has fallen by the profile's step. When the profile is full it drops every
//! second level and doubles its step, so a whole flight always fits in `N` levels
//! ("thinning"; the first and the last levels are kept).
//!
//! After burst the temperature sensor lags behind the fast-falling payload, so its
//! readings describe air hundreds of metres higher. Heights on the way down are better
//! taken from the profile recorded on the way up: [`Profile::geopotential_at`]
//! interpolates between the two levels around `p`, with `Tv` linear in `ln p` and the
//! same hypsometric layer formula, so it reproduces the integrated heights exactly at the
//! levels. Beyond the ends of the profile the standard atmosphere's layer thickness is
//! used, scaled by the ratio of the measured to the standard temperature at the end
//! level (`dH = dH_std * Tv_end / T_std(p_end)`): continuous at the end, and it keeps the
//! observed warm or cold bias.
//!
//! ```
//! use isohypse::geopotential::Gravity;
//! use isohypse::sounding::Sounding;
//! use isohypse::{Height, Pressure, Temperature};
//! let mut s = Sounding::<64>::new(
//!     Height::from_meters(250.0)?,
//!     Gravity::at_latitude(62.0)?,
//!     Pressure::from_hpa(990.0)?,
//!     Temperature::from_celsius(12.0)?,
//!     None,
//! )?;
//! let step = s.update(Pressure::from_hpa(980.0)?, Some(Temperature::from_celsius(11.4)?), None)?;
//! // Hypsometric equation R Tv_mean / g0 ln(p1 / p2) in f64 by hand: 84.65 m'
//! // geopotential, 84.53 m geometric with the WGS-84 normal gravity at 62 N (dry air,
//! // R = 287.053 J/(kg K) as in U.S. 1976).
//! assert!((step.geometric.meters() - 250.0 - 84.53).abs() < 0.05);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::Error;
use crate::atmosphere::{STANDARD_GRAVITY, US_1976, US_1976_GAS_CONSTANT};
use crate::geopotential::Gravity;
use crate::humidity;
use crate::math;
use crate::units::{Height, Pressure, RelativeHumidity, Temperature};

/// `Rd / g0`, m/K: geopotential metres per kelvin per unit of `ln p`.
const R_OVER_G: f32 = US_1976_GAS_CONSTANT / STANDARD_GRAVITY;

/// One stored level of a sounding.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Level {
    /// Pressure, Pa.
    pub pressure_pa: f32,
    /// Geopotential height, m'.
    pub geopotential_m: f32,
    /// Virtual temperature, K.
    pub virtual_temperature_k: f32,
}

/// A fixed-capacity profile of levels with strictly falling pressure, recorded on the
/// way up. 12 bytes per level plus 8: `Profile<256>` is about 3 KiB.
///
/// Time per call: [`Profile::push`] O(1); [`Profile::record`] O(1), or O(N) on the
/// rare call that thins a full profile; [`Profile::geopotential_at`] O(log N) (binary
/// search) plus two logarithms.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Profile<const N: usize> {
    levels: heapless::Vec<Level, N>,
    step_ln_p: f32,
}

impl<const N: usize> Profile<N> {
    /// An empty profile recording a level each time `ln p` falls by `step_ln_p`
    /// (0.005 is about 40 m near the ground and 30 m at 30 km). Errors:
    /// [`Error::InvalidSetting`] unless `0 < step_ln_p <= 1` and `N >= 2`.
    pub fn new(step_ln_p: f32) -> Result<Self, Error> {
        if !(step_ln_p > 0.0 && step_ln_p <= 1.0) || N < 2 {
            return Err(Error::InvalidSetting);
        }
        Ok(Self {
            levels: heapless::Vec::new(),
            step_ln_p,
        })
    }

    /// The stored levels, from the bottom.
    pub fn levels(&self) -> &[Level] {
        &self.levels
    }

    /// Number of stored levels.
    pub fn len(&self) -> usize {
        self.levels.len()
    }

    /// True when no level is stored.
    pub fn is_empty(&self) -> bool {
        self.levels.is_empty()
    }

    /// Current recording step in `ln p` (doubles each time the profile thins).
    pub fn step_ln_p(&self) -> f32 {
        self.step_ln_p
    }

    /// Forget every level (the step stays as it is).
    pub fn clear(&mut self) {
        self.levels.clear();
    }

    /// Append a level above the last one. Errors, with the profile unchanged:
    /// [`Error::CapacityFull`] when `N` levels are stored, [`Error::NotIncreasing`] when
    /// the pressure is not below the last level's, [`Error::NotFinite`] /
    /// [`Error::PressureNotPositive`] / [`Error::TemperatureNotPositive`] for bad values.
    pub fn push(&mut self, level: Level) -> Result<(), Error> {
        if !(level.pressure_pa.is_finite()
            && level.geopotential_m.is_finite()
            && level.virtual_temperature_k.is_finite())
        {
            return Err(Error::NotFinite);
        }
        if level.pressure_pa <= 0.0 {
            return Err(Error::PressureNotPositive);
        }
        if level.virtual_temperature_k <= 0.0 {
            return Err(Error::TemperatureNotPositive);
        }
        if let Some(last) = self.levels.last() {
            if level.pressure_pa >= last.pressure_pa || level.geopotential_m <= last.geopotential_m
            {
                return Err(Error::NotIncreasing);
            }
        }
        self.levels.push(level).map_err(|_| Error::CapacityFull)
    }

    /// Record `level` if `ln p` has fallen by at least the step since the last stored
    /// level (returns `Ok(true)` when stored). A full profile is thinned first: every
    /// second level is dropped (the first and the last are kept) and the step doubles.
    pub fn record(&mut self, level: Level) -> Result<bool, Error> {
        let due = match self.levels.last() {
            None => true,
            Some(last) => {
                level.pressure_pa < last.pressure_pa
                    && math::ln(last.pressure_pa / level.pressure_pa) >= self.step_ln_p
            }
        };
        if !due {
            return Ok(false);
        }
        if self.levels.is_full() {
            self.thin();
        }
        self.push(level).map(|()| true)
    }

    /// Drop every second level, keeping the first and the last, and double the step.
    fn thin(&mut self) {
        let len = self.levels.len();
        if len < 3 {
            return;
        }
        let mut kept: heapless::Vec<Level, N> = heapless::Vec::new();
        for (i, level) in self.levels.iter().enumerate() {
            if i % 2 == 0 || i + 1 == len {
                // cannot fail: kept never holds more than the original
                let _ = kept.push(*level);
            }
        }
        self.levels = kept;
        self.step_ln_p *= 2.0;
    }

    /// Geopotential height (m') of pressure `p` on this profile.
    ///
    /// Inside the profile: between the levels `i` and `i + 1` around `p`, with `Tv`
    /// linear in `ln p`,
    /// `H = H_i + (Rd / g0) * (Tv_i + Tv(p)) / 2 * ln(p_i / p)` (the hypsometric
    /// equation, Wallace & Hobbs 2006 eq. 3.29, with the layer mean of `Tv` taken as the
    /// mean of its ends, exact for `Tv` linear in `ln p`; `H` in m', `Tv` in K).
    /// Beyond either end: the standard atmosphere's thickness from the end level,
    /// scaled by `Tv_end / T_std(p_end)` (see the module documentation; a choice of this
    /// crate, resting on thickness being proportional to the mean `Tv`).
    ///
    /// Errors: [`Error::NotEnoughData`] with fewer than 2 levels; the standard
    /// atmosphere's range errors beyond the ends.
    pub fn geopotential_at(&self, p: Pressure) -> Result<Height, Error> {
        let pa = p.pa();
        let levels = self.levels.as_slice();
        let (first, last) = match (levels.first(), levels.last()) {
            (Some(f), Some(l)) if levels.len() >= 2 => (f, l),
            _ => return Err(Error::NotEnoughData),
        };
        if pa >= first.pressure_pa {
            return standard_continuation(first, p);
        }
        if pa <= last.pressure_pa {
            return standard_continuation(last, p);
        }
        // First index whose pressure is below p (levels fall in pressure).
        let upper = levels.partition_point(|l| l.pressure_pa >= pa);
        let (lo, hi) = match (levels.get(upper.wrapping_sub(1)), levels.get(upper)) {
            (Some(lo), Some(hi)) => (lo, hi),
            _ => return Err(Error::NotEnoughData),
        };
        let ln_lo_p = math::ln(lo.pressure_pa / pa);
        let ln_lo_hi = math::ln(lo.pressure_pa / hi.pressure_pa);
        let f = if ln_lo_hi > 0.0 {
            ln_lo_p / ln_lo_hi
        } else {
            0.0
        };
        let tv =
            lo.virtual_temperature_k + f * (hi.virtual_temperature_k - lo.virtual_temperature_k);
        Height::from_meters(
            lo.geopotential_m + R_OVER_G * 0.5 * (lo.virtual_temperature_k + tv) * ln_lo_p,
        )
    }
}

/// Height of `p` continued from an end level with the standard atmosphere's shape,
/// scaled by the ratio of the level's virtual temperature to the standard temperature:
/// `H = H_end + (H_std(p) - H_std(p_end)) Tv_end / T_std(p_end)` (choice of this crate;
/// `H_std` from U.S. 1976 eq. 33a/33b solved for H).
fn standard_continuation(end: &Level, p: Pressure) -> Result<Height, Error> {
    let end_p = Pressure::from_pa(end.pressure_pa)?;
    let h_end_std = US_1976.geopotential_height(end_p)?;
    let h_std = US_1976.geopotential_height(p)?;
    let t_std = US_1976.at_geopotential(h_end_std)?.temperature.kelvin();
    let scale = end.virtual_temperature_k / t_std;
    Height::from_meters(end.geopotential_m + (h_std.meters() - h_end_std.meters()) * scale)
}

/// The result of one sounding step.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SoundingStep {
    /// Geopotential height of the new sample, m'.
    pub geopotential: Height,
    /// Geometric height of the new sample (for the sounding's gravity), m.
    pub geometric: Height,
    /// Virtual temperature used for the new sample.
    pub virtual_temperature: Temperature,
    /// The sample had no usable temperature and the last one was held.
    pub temperature_held: bool,
}

/// A sounding step computed by [`Sounding::prepare`] and not yet applied.
// `repr(C)`: the `f32`s first in declared order, the flags last. In the layout the
// compiler chose, the balloon moved each pending step with two unaligned 15-byte
// `memcpy` calls, about 160 instructions per balloon sample on the Cortex-M4F (measured
// with the firmware's profile).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PendingStep {
    /// The step as [`Sounding::update`] returns it.
    pub step: SoundingStep,
    pressure_pa: f32,
    compensation_m: f32,
    temperature: Temperature,
    rising: bool,
}

/// Layer-by-layer integration of a sounding from a known launch elevation, recording a
/// [`Profile`] of `N` levels on the way up.
///
/// State: 36 bytes plus the profile (12 bytes per level + 8). Time per sample: one
/// logarithm for the layer, one more when a profile level is due, and the
/// geopotential-to-geometric conversion (three Newton steps for a latitude).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Sounding<const N: usize> {
    gravity: Gravity,
    geopotential_m: f32,
    compensation_m: f32,
    last_pressure_pa: f32,
    last_virtual_temperature_k: f32,
    last_temperature: Temperature,
    recording: bool,
    profile: Profile<N>,
}

/// Default profile step in `ln p` (about 40 m of height near the ground).
pub const DEFAULT_PROFILE_STEP_LN_P: f32 = 0.005;

impl<const N: usize> Sounding<N> {
    /// Start at the launch: geometric elevation `launch`, gravity model, and the first
    /// sample's pressure, temperature and optional humidity.
    pub fn new(
        launch: Height,
        gravity: Gravity,
        p: Pressure,
        t: Temperature,
        rh: Option<RelativeHumidity>,
    ) -> Result<Self, Error> {
        let tv = virtual_k(p, t, rh)?;
        let h0 = gravity.geopotential(launch)?;
        let mut profile = Profile::new(DEFAULT_PROFILE_STEP_LN_P)?;
        profile.push(Level {
            pressure_pa: p.pa(),
            geopotential_m: h0.meters(),
            virtual_temperature_k: tv,
        })?;
        Ok(Self {
            gravity,
            geopotential_m: h0.meters(),
            compensation_m: 0.0,
            last_pressure_pa: p.pa(),
            last_virtual_temperature_k: tv,
            last_temperature: t,
            recording: true,
            profile,
        })
    }

    /// Add the layer up (or down) to the new sample at pressure `p`:
    /// `H2 = H1 + (Rd / g0) (Tv1 + Tv2) / 2 ln(p1 / p2)` (the hypsometric equation,
    /// Wallace & Hobbs 2006 eq. 3.29; module docs), then the geometric height from the
    /// sounding's [`Gravity`]. Without a temperature the last one is held (and the step
    /// says so). Errors leave the sounding unchanged: those of the inputs, and
    /// [`Error::AboveModelTop`] / [`Error::BelowModelBottom`] when the sum would leave
    /// -5 km..86 km.
    pub fn update(
        &mut self,
        p: Pressure,
        t: Option<Temperature>,
        rh: Option<RelativeHumidity>,
    ) -> Result<SoundingStep, Error> {
        let pending = self.prepare(p, t, rh)?;
        Ok(self.commit(pending))
    }

    /// The step [`Self::update`] would take, without taking it: the sounding is not
    /// changed. Apply it with [`Self::commit`]. The balloon uses the pair so that a
    /// sample refused further down changes nothing, without copying the profile.
    pub fn prepare(
        &self,
        p: Pressure,
        t: Option<Temperature>,
        rh: Option<RelativeHumidity>,
    ) -> Result<PendingStep, Error> {
        let (t, held) = match t {
            Some(t) => (t, false),
            None => (self.last_temperature, true),
        };
        let tv = virtual_k(p, t, rh)?;
        let ln_ratio = math::ln_1p((self.last_pressure_pa - p.pa()) / p.pa());
        let dh = R_OVER_G * 0.5 * (self.last_virtual_temperature_k + tv) * ln_ratio;
        // Kahan-compensated sum of the layer thicknesses.
        let y = dh - self.compensation_m;
        let sum = self.geopotential_m + y;
        let compensation = (sum - self.geopotential_m) - y;
        // The hypsometric sum is meaningful in the well-mixed atmosphere only: keep it
        // within the standard atmosphere's range.
        if sum > US_1976.top_geopotential_m() {
            return Err(Error::AboveModelTop);
        }
        if sum < US_1976.bottom_geopotential_m() {
            return Err(Error::BelowModelBottom);
        }
        let geopotential = Height::from_meters(sum)?;
        let geometric = self.gravity.geometric(geopotential)?;
        let virtual_temperature = Temperature::from_kelvin(tv)?;
        Ok(PendingStep {
            step: SoundingStep {
                geopotential,
                geometric,
                virtual_temperature,
                temperature_held: held,
            },
            pressure_pa: p.pa(),
            compensation_m: compensation,
            temperature: t,
            rising: dh > 0.0,
        })
    }

    /// Apply a step made by [`Self::prepare`] on this sounding (in its current state).
    pub fn commit(&mut self, pending: PendingStep) -> SoundingStep {
        let step = pending.step;
        let sum = step.geopotential.meters();
        let tv = step.virtual_temperature.kelvin();
        if self.recording && pending.rising {
            let level = Level {
                pressure_pa: pending.pressure_pa,
                geopotential_m: sum,
                virtual_temperature_k: tv,
            };
            // A level that does not fit the profile's order is simply not stored.
            let _ = self.profile.record(level);
        }
        self.geopotential_m = sum;
        self.compensation_m = pending.compensation_m;
        self.last_pressure_pa = pending.pressure_pa;
        self.last_virtual_temperature_k = tv;
        self.last_temperature = pending.temperature;
        step
    }

    /// Stop (or resume) recording profile levels, e.g. at burst.
    pub fn set_recording(&mut self, on: bool) {
        self.recording = on;
    }

    /// The profile recorded so far.
    pub fn profile(&self) -> &Profile<N> {
        &self.profile
    }

    /// The gravity model in use.
    pub fn gravity(&self) -> Gravity {
        self.gravity
    }

    /// Current integrated geopotential height, m'.
    pub fn geopotential(&self) -> Height {
        Height::from_meters(self.geopotential_m).unwrap_or(Height::ZERO)
    }

    /// Geometric height of pressure `p` on the recorded profile (see
    /// [`Profile::geopotential_at`]).
    pub fn height_on_profile(&self, p: Pressure) -> Result<Height, Error> {
        let h = self.profile.geopotential_at(p)?;
        self.gravity.geometric(h)
    }
}

/// Virtual temperature in kelvin ([`humidity::virtual_temperature`], Wallace & Hobbs 2006
/// eq. 3.16 and 3.59); dry air (`Tv = T`) when humidity is missing.
fn virtual_k(p: Pressure, t: Temperature, rh: Option<RelativeHumidity>) -> Result<f32, Error> {
    match rh {
        Some(rh) => Ok(humidity::virtual_temperature(p, t, rh)?.kelvin()),
        None => Ok(t.kelvin()),
    }
}

crate::snapshot::snap_fields!(Level {
    pressure_pa,
    geopotential_m,
    virtual_temperature_k
});

/// The stored levels: their count, then `N` levels (zeros past the count).
impl<const N: usize> crate::snapshot::Snap for Profile<N> {
    const LEN: usize = 2 + N * <Level as crate::snapshot::Snap>::LEN + 4;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        (self.levels.len() as u16).save(w);
        let blank = Level {
            pressure_pa: 0.0,
            geopotential_m: 0.0,
            virtual_temperature_k: 0.0,
        };
        for i in 0..N {
            self.levels.get(i).unwrap_or(&blank).save(w);
        }
        self.step_ln_p.save(w);
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), Error> {
        let mut count = 0u16;
        count.load(r)?;
        self.levels.clear();
        for i in 0..N {
            let mut level = Level {
                pressure_pa: 0.0,
                geopotential_m: 0.0,
                virtual_temperature_k: 0.0,
            };
            level.load(r)?;
            if i < usize::from(count) {
                self.levels
                    .push(level)
                    .map_err(|_| Error::SnapshotCorrupt)?;
            }
        }
        if usize::from(count) > N {
            return Err(Error::SnapshotCorrupt);
        }
        self.step_ln_p.load(r)
    }
}

crate::snapshot::snap_fields!(impl[const N: usize] Sounding<N> {
    gravity,
    geopotential_m,
    compensation_m,
    last_pressure_pa,
    last_virtual_temperature_k,
    last_temperature,
    recording,
    profile,
});

#[cfg(test)]
mod tests;
