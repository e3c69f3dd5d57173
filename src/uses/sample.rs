//! What goes in: one [`Sample`] per barometer reading; what comes back flagged:
//! [`Flags`].

use crate::time::Instant;

/// One reading. Only time and pressure are required; every other channel is optional.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Sample {
    /// Time, s, strictly increasing between accepted samples (any origin).
    pub time: Instant,
    /// Static pressure, Pa.
    pub pressure_pa: f32,
    /// Air temperature, degC.
    pub temperature_c: Option<f32>,
    /// Relative humidity over water, %.
    pub humidity_pct: Option<f32>,
    /// Earth-frame vertical acceleration with gravity removed, m/s^2, measured at this
    /// sample's time (for accelerometer samples between pressure samples see
    /// `accelerometer` of the use types).
    pub accel_up_mps2: Option<f32>,
    /// A known geometric elevation of the device now (summit marker, map, trusted
    /// satellite fix), m.
    pub known_altitude_m: Option<f32>,
    /// Satellite (GNSS) altitude, geometric above mean sea level, m: fused with the
    /// barometric height by [`super::Balloon`] (see [`super::GnssSettings`]); the drone
    /// (heights above the take-off point) and the walk do not use it.
    pub gnss_altitude_m: Option<f32>,
    /// The receiver's 1-sigma vertical accuracy for `gnss_altitude_m`, m.
    pub gnss_accuracy_m: Option<f32>,
}

impl Sample {
    /// A sample with time and pressure only.
    pub const fn pressure(time: Instant, pressure_pa: f32) -> Self {
        Self {
            time,
            pressure_pa,
            temperature_c: None,
            humidity_pct: None,
            accel_up_mps2: None,
            known_altitude_m: None,
            gnss_altitude_m: None,
            gnss_accuracy_m: None,
        }
    }
}

/// Bit flags on an [`super::Output`]: what was rejected, held or assumed, and why.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Flags(pub u32);

impl Flags {
    /// Sample rejected: time not finite or not after the previous accepted sample.
    pub const REJECTED_TIME: Flags = Flags(1 << 0);
    /// Sample rejected: pressure not finite, not positive or outside the settings' range.
    pub const REJECTED_PRESSURE: Flags = Flags(1 << 1);
    /// Sample rejected: the height model could not place the pressure (beyond its range).
    pub const REJECTED_MODEL: Flags = Flags(1 << 2);
    /// The estimator's gate rejected the height as an outlier; the estimate was carried
    /// forward.
    pub const OUTLIER: Flags = Flags(1 << 3);
    /// The estimator re-acquired (reset its height to the measurement) after a dropout
    /// or a run of outliers.
    pub const REACQUIRED: Flags = Flags(1 << 4);
    /// A temperature was given but invalid, and ignored.
    pub const TEMPERATURE_IGNORED: Flags = Flags(1 << 5);
    /// No air temperature: the standard atmosphere's at this pressure, moved by the
    /// last measured temperature's departure from the standard, was taken (balloon).
    pub const TEMPERATURE_HELD: Flags = Flags(1 << 6);
    /// No air temperature yet: the standard atmosphere's at this pressure was taken.
    pub const TEMPERATURE_ASSUMED: Flags = Flags(1 << 7);
    /// A humidity was given but invalid, and ignored.
    pub const HUMIDITY_IGNORED: Flags = Flags(1 << 8);
    /// An acceleration was given but invalid, and ignored.
    pub const ACCEL_IGNORED: Flags = Flags(1 << 9);
    /// A known-elevation fix was taken.
    pub const FIX_APPLIED: Flags = Flags(1 << 10);
    /// A known-elevation fix was given but invalid, and ignored.
    pub const FIX_IGNORED: Flags = Flags(1 << 11);
    /// Height taken from the stored ascent profile (balloon descent).
    pub const ON_PROFILE: Flags = Flags(1 << 12);
    /// At rest: pressure change is attributed to weather (hike).
    pub const AT_REST: Flags = Flags(1 << 13);
    /// The 3-hour pressure fall reached the alert threshold (hike).
    pub const FALLING_PRESSURE: Flags = Flags(1 << 14);
    /// The ground reference is still being averaged.
    pub const GROUND_AVERAGING: Flags = Flags(1 << 15);
    /// The clock stepped back or jumped ahead by more than the settings' `max_gap_s`
    /// (a counter wrap, a restart, a glitched stamp): the sample was taken as the start
    /// of a new time base. The estimator re-acquired; stored profile, totals and datum
    /// were kept.
    pub const CLOCK_FAULT: Flags = Flags(1 << 16);
    /// A humidity between 100 and 110 % (real sensors read so in cloud) was taken as
    /// 100 %.
    pub const HUMIDITY_CLAMPED: Flags = Flags(1 << 17);

    /// The first sample's pressure altitude lay more than
    /// [`super::balloon::LAUNCH_AGREES_M`] from the launch altitude of the settings: a
    /// start in mid-air; heights start at the pressure altitude (balloon).
    pub const STARTED_IN_AIR: Flags = Flags(1 << 18);

    /// A satellite altitude was taken into the barometric offset (balloon).
    pub const GNSS_APPLIED: Flags = Flags(1 << 19);
    /// A satellite altitude was refused: too far from the fused height (a receiver's
    /// jump) or, before any, from the barometric height (a receiver before its lock).
    pub const GNSS_REJECTED: Flags = Flags(1 << 20);
    /// A satellite altitude was given but invalid (not finite, beyond -1 to 90 km), and
    /// ignored.
    pub const GNSS_IGNORED: Flags = Flags(1 << 21);
    /// The pressure was outside the settings' range; the height is the satellite
    /// altitude of the sample, with the receiver's accuracy as its 1-sigma (balloon).
    /// Nothing else changed.
    pub const ON_GNSS: Flags = Flags(1 << 22);

    /// The pressure was at or beyond the barometer's range (the settings'
    /// `min_pressure_pa` / `max_pressure_pa`, set from a part with `with_part`): the
    /// reading only says that the true pressure lies beyond it. The sample was refused
    /// ([`Flags::REJECTED_PRESSURE`] too); the height is the last one, stale, with a
    /// 1-sigma that grows with the time since it was measured (see
    /// [`super::STALE_SPEED_SIGMA_MPS`]), or the sample's satellite altitude where the
    /// balloon has one ([`Flags::ON_GNSS`]).
    pub const SATURATED: Flags = Flags(1 << 23);

    const NAMES: [(Flags, &'static str); 24] = [
        (Flags::REJECTED_TIME, "rejected_time"),
        (Flags::REJECTED_PRESSURE, "rejected_pressure"),
        (Flags::REJECTED_MODEL, "rejected_model"),
        (Flags::OUTLIER, "outlier"),
        (Flags::REACQUIRED, "reacquired"),
        (Flags::TEMPERATURE_IGNORED, "temperature_ignored"),
        (Flags::TEMPERATURE_HELD, "temperature_held"),
        (Flags::TEMPERATURE_ASSUMED, "temperature_assumed"),
        (Flags::HUMIDITY_IGNORED, "humidity_ignored"),
        (Flags::ACCEL_IGNORED, "accel_ignored"),
        (Flags::FIX_APPLIED, "fix_applied"),
        (Flags::FIX_IGNORED, "fix_ignored"),
        (Flags::ON_PROFILE, "on_profile"),
        (Flags::AT_REST, "at_rest"),
        (Flags::FALLING_PRESSURE, "falling_pressure"),
        (Flags::GROUND_AVERAGING, "ground_averaging"),
        (Flags::CLOCK_FAULT, "clock_fault"),
        (Flags::HUMIDITY_CLAMPED, "humidity_clamped"),
        (Flags::STARTED_IN_AIR, "started_in_air"),
        (Flags::GNSS_APPLIED, "gnss_applied"),
        (Flags::GNSS_REJECTED, "gnss_rejected"),
        (Flags::GNSS_IGNORED, "gnss_ignored"),
        (Flags::ON_GNSS, "on_gnss"),
        (Flags::SATURATED, "saturated"),
    ];

    /// True if every bit of `other` is set.
    pub const fn contains(self, other: Flags) -> bool {
        self.0 & other.0 == other.0
    }

    /// True if any rejection bit is set (the sample changed nothing).
    pub const fn rejected(self) -> bool {
        self.0 & (Self::REJECTED_TIME.0 | Self::REJECTED_PRESSURE.0 | Self::REJECTED_MODEL.0) != 0
    }

    /// Sets every bit of `other`.
    pub fn insert(&mut self, other: Flags) {
        self.0 |= other.0;
    }

    pub(crate) fn set(&mut self, other: Flags) {
        self.0 |= other.0;
    }

    /// Names of the set flags, e.g. for a log line (`outlier`, `temperature_held`...).
    pub fn names(self) -> impl Iterator<Item = &'static str> {
        Self::NAMES
            .into_iter()
            .filter(move |(f, _)| self.contains(*f))
            .map(|(_, n)| n)
    }
}

impl crate::snapshot::Snap for Flags {
    const LEN: usize = 4;
    fn save(&self, w: &mut crate::snapshot::Writer<'_>) {
        crate::snapshot::Snap::save(&self.0, w);
    }
    fn load(&mut self, r: &mut crate::snapshot::Reader<'_>) -> Result<(), crate::Error> {
        crate::snapshot::Snap::load(&mut self.0, r)
    }
}
