//! Satellite (GNSS) altitude fused with the barometric height: a barometric offset
//! estimated by a one-state Kalman filter whose offset wanders as a slow random walk,
//! with a gate against the jumps real receivers make and a plausibility check for the
//! values they give before a lock.
//!
//! The barometric height is smooth and precise over seconds but carries the column's
//! and the datum's error, which changes slowly with height and weather; the satellite
//! altitude is noisy and jumps (tens to hundreds of metres for tens of seconds in real
//! receivers) but has no drift. The offset `b = gnss - baro` is that slow error: the
//! output is `baro + b`, with `var = var_baro + P_b`. (Complementary fusion of a
//! drifting and a noisy sensor through a random-walk bias state; Brown and Hwang,
//! *Introduction to Random Signals and Applied Kalman Filtering*, 4th ed., 2012,
//! ch. 8, from memory.)

use super::Flags;
use crate::Error;

/// How satellite altitude is weighed against the barometric height.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GnssSettings {
    /// 1-sigma vertical accuracy taken when the receiver gives none, m.
    pub default_accuracy_m: f32,
    /// Random walk of the barometric offset in time, m per square-root second: how
    /// fast the weather's error may change.
    pub offset_walk_m_per_sqrt_s: f32,
    /// Random walk of the barometric offset with the height travelled, m per
    /// square-root kilometre: how fast the column's error may change on the way up or
    /// down.
    pub offset_walk_m_per_sqrt_km: f32,
    /// Gate: a satellite altitude further than this many sigmas from the fused height
    /// is refused.
    pub gate_sigmas: f32,
    /// Refusals on one side lasting this long mean the offset really moved: the
    /// offset starts again from the satellite altitude, s.
    pub follow_after_s: f32,
    /// Before any offset: the largest accepted distance between a satellite altitude
    /// and the barometric height, m, plus [`Self::first_fix_share`] of the height.
    pub first_fix_m: f32,
    /// The share of the barometric height added to [`Self::first_fix_m`].
    pub first_fix_share: f32,
}

impl GnssSettings {
    /// The preset: receivers without an accuracy are taken at 15 m (1-sigma); the
    /// offset wanders by 0.1 m/sqrt(s) (6 m over an hour at rest) and 5 m/sqrt(km) of
    /// height travelled (a column 1 K off moves heights by about 4 m per km); jumps beyond 4 sigma are refused unless they last
    /// two minutes; a first fix must lie within 500 m plus 10 % of the height of the
    /// barometric one (a receiver before its lock reports 0 m). Choices of this crate.
    pub const DEFAULT: GnssSettings = GnssSettings {
        default_accuracy_m: 15.0,
        offset_walk_m_per_sqrt_s: 0.1,
        offset_walk_m_per_sqrt_km: 5.0,
        gate_sigmas: 4.0,
        follow_after_s: 120.0,
        first_fix_m: 500.0,
        first_fix_share: 0.1,
    };

    /// Checks every field. Errors: [`Error::InvalidSetting`].
    pub fn validate(&self) -> Result<(), Error> {
        let positive = |x: f32, max: f32| x.is_finite() && x > 0.0 && x <= max;
        let ok = positive(self.default_accuracy_m, 10_000.0)
            && positive(self.offset_walk_m_per_sqrt_s, 100.0)
            && positive(self.offset_walk_m_per_sqrt_km, 1_000.0)
            && positive(self.gate_sigmas, 100.0)
            && positive(self.follow_after_s, 86_400.0)
            && positive(self.first_fix_m, 100_000.0)
            && self.first_fix_share.is_finite()
            && (0.0..=1.0).contains(&self.first_fix_share);
        if ok {
            Ok(())
        } else {
            Err(Error::InvalidSetting)
        }
    }
}

/// A satellite altitude from a sample, checked: geometric altitude and 1-sigma, m.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct GnssFix {
    pub altitude_m: f32,
    pub sigma_m: f32,
}

impl GnssFix {
    /// The sample's satellite altitude `altitude_m` with its accuracy `accuracy_m`
    /// (the settings' default without one, or with one that is not finite and
    /// positive); `None` without a value, or for one that is not finite or outside
    /// -1 000 to 90 000 m ([`Flags::GNSS_IGNORED`]).
    pub fn check(
        altitude_m: Option<f32>,
        accuracy_m: Option<f32>,
        s: &GnssSettings,
        flags: &mut Flags,
    ) -> Option<GnssFix> {
        let altitude_m = altitude_m?;
        if !(altitude_m.is_finite() && (-1_000.0..=90_000.0).contains(&altitude_m)) {
            flags.set(Flags::GNSS_IGNORED);
            return None;
        }
        let sigma_m = match accuracy_m {
            Some(a) if a.is_finite() && a > 0.0 && a <= 10_000.0 => a,
            _ => s.default_accuracy_m,
        };
        Some(GnssFix {
            altitude_m,
            sigma_m,
        })
    }
}

/// The barometric offset's estimate.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct GnssOffset {
    /// Satellite minus barometric height, m.
    pub offset_m: f32,
    /// Its variance, m^2; 0 before the first fix taken.
    pub variance_m2: f32,
    /// Seconds the refusals on one side have lasted (0: none); the sign says the side.
    pub run_s: f32,
}

impl GnssOffset {
    /// Whether an offset is held.
    pub fn is_held(&self) -> bool {
        self.variance_m2 > 0.0
    }

    /// The offset after a step of `dt` s over which the height changed by `dh_m`, and
    /// the fix `fix` (if any) against the barometric height `baro_m` with variance
    /// `baro_var_m2`. Flags the fix taken
    /// ([`Flags::GNSS_APPLIED`]) or refused ([`Flags::GNSS_REJECTED`]).
    pub fn step(
        &self,
        s: &GnssSettings,
        (dt, dh_m): (f32, f32),
        fix: Option<GnssFix>,
        (baro_m, baro_var_m2): (f32, f32),
        flags: &mut Flags,
    ) -> GnssOffset {
        let mut next = *self;
        if next.is_held() {
            let q_t = s.offset_walk_m_per_sqrt_s * s.offset_walk_m_per_sqrt_s;
            let q_h = s.offset_walk_m_per_sqrt_km * s.offset_walk_m_per_sqrt_km * 1.0e-3;
            next.variance_m2 += q_t * dt + q_h * dh_m.abs();
        }
        let Some(fix) = fix else { return next };
        let r = fix.sigma_m * fix.sigma_m;
        if !next.is_held() {
            let limit = s.first_fix_m + s.first_fix_share * baro_m.abs();
            if (fix.altitude_m - baro_m).abs() > limit {
                flags.set(Flags::GNSS_REJECTED);
                return next;
            }
            flags.set(Flags::GNSS_APPLIED);
            return GnssOffset {
                offset_m: fix.altitude_m - baro_m,
                variance_m2: r,
                run_s: 0.0,
            };
        }
        let innovation = fix.altitude_m - (baro_m + next.offset_m);
        let s_var = next.variance_m2 + r + baro_var_m2;
        let gate = s.gate_sigmas * s.gate_sigmas * s_var;
        if innovation * innovation <= gate {
            let gain = next.variance_m2 / (next.variance_m2 + r);
            flags.set(Flags::GNSS_APPLIED);
            return GnssOffset {
                offset_m: next.offset_m + gain * innovation,
                variance_m2: (1.0 - gain) * next.variance_m2,
                run_s: 0.0,
            };
        }
        flags.set(Flags::GNSS_REJECTED);
        // a run of refusals on one side: its length grows with the steps between them
        let same_side = next.run_s != 0.0 && (next.run_s > 0.0) == (innovation > 0.0);
        let run = if same_side {
            next.run_s.abs() + dt
        } else {
            f32::MIN_POSITIVE
        };
        if run >= s.follow_after_s {
            flags.set(Flags::GNSS_APPLIED);
            return GnssOffset {
                offset_m: fix.altitude_m - baro_m,
                variance_m2: r,
                run_s: 0.0,
            };
        }
        next.run_s = if innovation > 0.0 { run } else { -run };
        next
    }
}

crate::snapshot::snap_fields!(GnssOffset {
    offset_m,
    variance_m2,
    run_s
});
