//! The optional channels of a row: their columns, their checks, and the record of those
//! dropped from a row. A bad optional value drops that channel only; the row is kept
//! and its output flags say which channel was dropped.

use super::messages::number;

/// An optional input channel (column).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Channel {
    /// `temperature_c`: air temperature.
    Temperature,
    /// `humidity_pct`: relative humidity.
    Humidity,
    /// `accel_up_mps2`: earth-frame vertical acceleration, gravity removed.
    Accel,
    /// `known_altitude_m`: an exact known elevation.
    Fix,
    /// `sensor_temperature_c`: the barometer's own temperature (never air temperature).
    SensorTemperature,
    /// `gnss_altitude_m`: satellite altitude above mean sea level.
    GnssAltitude,
    /// `gnss_accuracy_m`: the satellite altitude's 1-sigma.
    GnssAccuracy,
}

/// Largest acceleration taken, m/s^2: 20 g (20 x 9.806 65 m/s^2, standard gravity), the
/// use types' own limit, so that every value passed on is one they take.
const MAX_ACCEL_MPS2: f32 = 20.0 * 9.806_65;

/// Range of a temperature, K: the library's range for air temperature (100..400 K).
const TEMPERATURE_RANGE_K: (f32, f32) = (100.0, 400.0);

/// 0 degC in kelvin (SI), added in `f32` as the library adds it.
const ZERO_CELSIUS_K: f32 = 273.15;

/// Largest 1-sigma taken for a satellite altitude, m (a receiver without a fix reports
/// a huge figure; 10 km says nothing about a height: choice of this tool).
const MAX_GNSS_ACCURACY_M: f32 = 10_000.0;

impl Channel {
    /// Every optional channel, in the order of [`super::row::COLUMNS`] after the two
    /// required columns.
    pub(crate) const ALL: [Channel; 7] = [
        Channel::Temperature,
        Channel::Humidity,
        Channel::Accel,
        Channel::Fix,
        Channel::SensorTemperature,
        Channel::GnssAltitude,
        Channel::GnssAccuracy,
    ];

    /// The column's name.
    pub(crate) const fn column(self) -> &'static str {
        match self {
            Channel::Temperature => "temperature_c",
            Channel::Humidity => "humidity_pct",
            Channel::Accel => "accel_up_mps2",
            Channel::Fix => "known_altitude_m",
            Channel::SensorTemperature => "sensor_temperature_c",
            Channel::GnssAltitude => "gnss_altitude_m",
            Channel::GnssAccuracy => "gnss_accuracy_m",
        }
    }

    /// The output flag of a dropped channel that the library does not read (the
    /// library's own `*_ignored` flags name the others).
    pub(crate) const fn tool_flag(self) -> Option<&'static str> {
        match self {
            Channel::SensorTemperature => Some("sensor_temperature_ignored"),
            Channel::GnssAltitude => Some("gnss_altitude_ignored"),
            Channel::GnssAccuracy => Some("gnss_accuracy_ignored"),
            _ => None,
        }
    }

    const fn bit(self) -> u8 {
        1 << self as u8
    }

    /// Why `v` is no value of this channel, if it is not. Humidity up to 110 % is a
    /// value (real sensors read so in cloud; the run takes it as 100 % and flags it).
    pub(crate) fn problem(self, v: f32) -> Option<String> {
        let (lo_k, hi_k) = TEMPERATURE_RANGE_K;
        let (ok, range) = match self {
            Channel::Temperature | Channel::SensorTemperature => (
                (lo_k..=hi_k).contains(&(v + ZERO_CELSIUS_K)),
                "outside 100..400 K",
            ),
            Channel::Humidity => ((0.0..=110.0).contains(&v), "outside 0..110 %"),
            Channel::Accel => (v.abs() <= MAX_ACCEL_MPS2, "beyond 20 g (196.133 m/s^2)"),
            Channel::Fix | Channel::GnssAltitude => {
                ((-5_000.0..90_000.0).contains(&v), "outside -5 km..90 km")
            }
            Channel::GnssAccuracy => (
                v > 0.0 && v <= MAX_GNSS_ACCURACY_M,
                "is not a 1-sigma above 0 and at most 10 km",
            ),
        };
        (!ok).then(|| format!("{} {} {range}", self.column(), number(v)))
    }
}

/// The channels dropped from a row.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub(crate) struct Dropped(u8);

impl Dropped {
    pub(crate) fn insert(&mut self, c: Channel) {
        self.0 |= c.bit();
    }

    pub(crate) const fn contains(self, c: Channel) -> bool {
        self.0 & c.bit() != 0
    }

    pub(crate) const fn is_empty(self) -> bool {
        self.0 == 0
    }

    /// The dropped channels.
    pub(crate) fn channels(self) -> impl Iterator<Item = Channel> {
        Channel::ALL.into_iter().filter(move |c| self.contains(*c))
    }

    /// The bits of the dropped channels that have a [`Channel::tool_flag`]; the
    /// counterpart of [`tool_flag_names`].
    pub(crate) fn tool_bits(self) -> u32 {
        self.channels()
            .filter(|c| c.tool_flag().is_some())
            .fold(0, |bits, c| bits | u32::from(c.bit()))
    }
}

/// The names of the tool's own flags in `bits` (from [`Dropped::tool_bits`]).
pub(crate) fn tool_flag_names(bits: u32) -> impl Iterator<Item = &'static str> {
    Channel::ALL
        .into_iter()
        .filter(move |c| bits & u32::from(c.bit()) != 0)
        .filter_map(Channel::tool_flag)
}
