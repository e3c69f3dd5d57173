//! A barometer part as a use type sees it: its pressure range, resolution, noise and
//! conversion time ([`PartDescription`]), and the noise a use type takes from it.

/// What a part can do at one setting: the numbers a use type needs to set its
/// pressure range and noise, and a loop its pacing.
///
/// The drivers of [`crate::parts`] (feature `embedded-hal`) give one for any of their
/// settings with a `const fn describe`, with the datasheet sections in that function's
/// docs; for another part, fill one in from its datasheet. Each use type's settings
/// take their pressure range and noise from it (`with_part`).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartDescription {
    /// The part's name, e.g. `"BME280"`.
    pub name: &'static str,
    /// Lowest pressure of the specified operating range, Pa.
    pub pressure_min_pa: f32,
    /// Highest pressure of the specified operating range, Pa.
    pub pressure_max_pa: f32,
    /// Pressure resolution at this setting (one step of the output), Pa.
    pub resolution_pa: f32,
    /// Typical RMS pressure noise at this setting, Pa; `None` where the datasheet gives
    /// no figure for this setting.
    pub noise_rms_pa: Option<f32>,
    /// Longest time from `start` until `fetch` can return the reading, microseconds.
    pub conversion_time_us: u32,
    /// Whether the part measures relative humidity.
    pub has_humidity: bool,
}

impl PartDescription {
    /// The pressure noise a use type takes from the part, Pa: the datasheet's RMS noise
    /// where it gives one, else the output step's quantisation noise, `resolution /
    /// sqrt(12)` (the standard deviation of a uniform error over one step; common
    /// practice).
    pub const fn noise_pa(&self) -> f32 {
        match self.noise_rms_pa {
            Some(n) => n,
            None => self.resolution_pa * ONE_OVER_SQRT_12,
        }
    }
}

/// 1 / sqrt(12).
const ONE_OVER_SQRT_12: f32 = 0.288_675_13;

#[cfg(test)]
mod tests;
