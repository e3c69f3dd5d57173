//! The one error type of the crate.
//!
//! Every fallible operation returns [`Error`]. Variants say *what* was wrong so that
//! firmware can react (skip the sample, keep the old setting, report a flag) without
//! parsing text.

/// What was wrong with an input, a setting or a request.
///
/// ```
/// use isohypse::{Error, Pressure};
/// assert_eq!(Pressure::from_pa(f32::NAN), Err(Error::NotFinite));
/// assert_eq!(Pressure::from_pa(-3.0), Err(Error::PressureNotPositive));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error {
    /// A number was NaN or infinite.
    NotFinite,
    /// A pressure was zero or negative.
    PressureNotPositive,
    /// A temperature was at or below absolute zero.
    TemperatureNotPositive,
    /// A temperature was finite and positive but outside the range the crate accepts
    /// for air (see [`crate::units::Temperature::AIR_RANGE_K`]).
    TemperatureOutOfRange,
    /// A height or pressure lies above the top of the model in use.
    AboveModelTop,
    /// A height or pressure lies below the bottom of the model in use.
    BelowModelBottom,
    /// Relative humidity outside 0..=100 %.
    HumidityOutOfRange,
    /// A lapse rate of zero where a constant-lapse form was asked for
    /// (use the isothermal form instead).
    ZeroLapseRate,
    /// A fixed-capacity buffer is full; the value was not stored.
    CapacityFull,
    /// Values that must be strictly increasing (profile knots, sample times) were not.
    NotIncreasing,
    /// An operation needs at least one stored value (or more) and had fewer.
    NotEnoughData,
    /// A setting was outside its documented range; the previous setting is kept.
    InvalidSetting,
    /// A sensor or bus read failed; the sample was not taken.
    SensorRead,
    /// A sample was finite but outside the range the receiving filter accepts as
    /// physical (for example an acceleration beyond the configured limit).
    SampleOutOfRange,
    /// A time stamp lay further ahead of the latest one than the settings' longest gap
    /// (a glitched clock); the sample was not taken.
    TimeJump,
    /// A snapshot was truncated, failed its checksum or held a value no field accepts.
    SnapshotCorrupt,
    /// A snapshot of another format version.
    SnapshotVersion,
    /// A snapshot of another use type or profile capacity.
    SnapshotMismatch,
}

impl core::fmt::Display for Error {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let text = match self {
            Error::NotFinite => "value is NaN or infinite",
            Error::TimeJump => "time stamp too far ahead of the latest one",
            Error::SnapshotCorrupt => "snapshot truncated, corrupted or out of range",
            Error::SnapshotVersion => "snapshot of another format version",
            Error::SnapshotMismatch => "snapshot of another use type or capacity",
            Error::PressureNotPositive => "pressure is zero or negative",
            Error::TemperatureNotPositive => "temperature is at or below absolute zero",
            Error::TemperatureOutOfRange => "temperature outside the accepted range for air",
            Error::AboveModelTop => "above the top of the model",
            Error::BelowModelBottom => "below the bottom of the model",
            Error::HumidityOutOfRange => "relative humidity outside 0..=100 %",
            Error::ZeroLapseRate => "lapse rate is zero where a constant-lapse form is needed",
            Error::CapacityFull => "fixed-capacity buffer is full",
            Error::NotIncreasing => "values are not strictly increasing",
            Error::NotEnoughData => "not enough stored data",
            Error::InvalidSetting => "setting outside its documented range",
            Error::SensorRead => "sensor read failed",
            Error::SampleOutOfRange => "sample outside the accepted physical range",
        };
        f.write_str(text)
    }
}

impl core::error::Error for Error {}
