//! Ascent and descent totals with a hysteresis band.
//!
//! # Method
//!
//! Heights are first rounded to whole centimetres and all bookkeeping is done in integer
//! centimetres, so totals over days or weeks do not drift: the counted total is exactly
//! the sum of differences of the rounded turning points, with no floating-point
//! accumulation at all (an `f32` running sum of metres would lose whole centimetres per
//! addition once it passes a few hundred kilometres; integers never do).
//!
//! The counter keeps the last turning point and the direction of the last confirmed move
//! (the classic hysteresis counter, common practice):
//!
//! * while rising, every new maximum adds its rise to the ascent at once, and the
//!   maximum becomes the reference;
//! * a fall from that reference by more than the band confirms a turn: the *full* fall
//!   from the turning point (not only the part beyond the band) is added to the descent
//!   and the direction changes;
//! * falling is the mirror image;
//! * before the first confirmed move the lowest and highest heights since the start are
//!   kept, and the first move is counted from whichever is farther.
//!
//! Consequences (tested in this module):
//!
//! * oscillations smaller than the band add nothing, whatever their number;
//! * a real climb larger than the band is counted completely;
//! * `ascent + descent` never exceeds the total variation of the (rounded) input, since
//!   the counted moves are differences between a subsequence of the inputs; a move in
//!   progress that has not yet exceeded the band is not counted;
//! * with noise bounded by `e` on the true height, each counted swing overcounts by at most
//!   `2 e`: smooth the height first (the hike tracker does), so that `e` is centimetres.
//!
//! Memory: 28 bytes. Time: O(1) per sample, integer arithmetic only.
//!
//! ```
//! use isohypse::{track::AscentTotals, Height};
//! let mut totals = AscentTotals::new(3.0)?;
//! for h in [100.0, 101.0, 99.5, 100.5, 120.0, 118.0, 121.0, 105.0] {
//!     totals.update(Height::from_meters(h)?);
//! }
//! // 99.5 -> 121.0 counted up (the small wiggles inside it add nothing), 121 -> 105 down.
//! assert_eq!(totals.ascent_m(), 21.5);
//! assert_eq!(totals.descent_m(), 16.0);
//! # Ok::<(), isohypse::Error>(())
//! ```

use crate::{Error, Height};

/// Direction of the last confirmed move of an [`AscentTotals`] counter.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Trend {
    /// No move larger than the band yet.
    Undecided,
    /// Last confirmed move was upwards.
    Rising,
    /// Last confirmed move was downwards.
    Falling,
}

/// Largest band accepted, m (a choice of this crate: beyond this the counter would ignore
/// whole hills).
pub const MAX_BAND_M: f32 = 100.0;

/// Heights are clamped to +-10 000 km before rounding so every centimetre difference fits
/// in an `i64` without overflow and in a `u32` total (a choice of this crate; no real
/// height comes near it).
const CLAMP_CM: f32 = 1.0e9;

/// Ascent and descent totals with a hysteresis band; see the [module docs](self).
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AscentTotals {
    band_cm: i32,
    /// Turning point or latest extreme in the current direction (cm).
    anchor_cm: i32,
    /// Lowest height since the start while [`Trend::Undecided`] (cm).
    low_cm: i32,
    /// Highest height since the start while [`Trend::Undecided`] (cm).
    high_cm: i32,
    trend: Trend,
    started: bool,
    ascent_cm: u32,
    descent_cm: u32,
}

/// Rounds metres to whole centimetres (half away from zero), clamped to +-1e9 cm.
/// Written by hand because `f32::round` is not in `core` on the supported Rust version.
fn to_cm(height_m: f32) -> i32 {
    let cm = (height_m * 100.0).clamp(-CLAMP_CM, CLAMP_CM);
    // `as` from f32 to i32 saturates and cannot panic; the clamp keeps it in range.
    if cm >= 0.0 {
        (cm + 0.5) as i32
    } else {
        (cm - 0.5) as i32
    }
}

fn add_cm(total: u32, delta: i64) -> u32 {
    total.saturating_add(u32::try_from(delta).unwrap_or(u32::MAX))
}

impl AscentTotals {
    /// A counter with hysteresis band `band_m` metres (0 < band <= [`MAX_BAND_M`]).
    ///
    /// Errors: [`Error::NotFinite`], [`Error::InvalidSetting`].
    pub fn new(band_m: f32) -> Result<Self, Error> {
        if !band_m.is_finite() {
            return Err(Error::NotFinite);
        }
        if band_m <= 0.0 || band_m > MAX_BAND_M {
            return Err(Error::InvalidSetting);
        }
        Ok(Self {
            band_cm: to_cm(band_m).max(1),
            anchor_cm: 0,
            low_cm: 0,
            high_cm: 0,
            trend: Trend::Undecided,
            started: false,
            ascent_cm: 0,
            descent_cm: 0,
        })
    }

    /// Feeds one height. A [`Height`] is always finite, so this cannot fail.
    pub fn update(&mut self, height: Height) {
        let h = to_cm(height.meters());
        if !self.started {
            self.started = true;
            self.anchor_cm = h;
            self.low_cm = h;
            self.high_cm = h;
            return;
        }
        let band = i64::from(self.band_cm);
        let hh = i64::from(h);
        match self.trend {
            Trend::Undecided => {
                self.low_cm = self.low_cm.min(h);
                self.high_cm = self.high_cm.max(h);
                let rise = hh - i64::from(self.low_cm);
                let fall = i64::from(self.high_cm) - hh;
                if rise > band && rise >= fall {
                    self.ascent_cm = add_cm(self.ascent_cm, rise);
                    self.trend = Trend::Rising;
                    self.anchor_cm = h;
                } else if fall > band {
                    self.descent_cm = add_cm(self.descent_cm, fall);
                    self.trend = Trend::Falling;
                    self.anchor_cm = h;
                }
            }
            Trend::Rising => {
                let d = hh - i64::from(self.anchor_cm);
                if d > 0 {
                    self.ascent_cm = add_cm(self.ascent_cm, d);
                    self.anchor_cm = h;
                } else if -d > band {
                    self.descent_cm = add_cm(self.descent_cm, -d);
                    self.anchor_cm = h;
                    self.trend = Trend::Falling;
                }
            }
            Trend::Falling => {
                let d = i64::from(self.anchor_cm) - hh;
                if d > 0 {
                    self.descent_cm = add_cm(self.descent_cm, d);
                    self.anchor_cm = h;
                } else if -d > band {
                    self.ascent_cm = add_cm(self.ascent_cm, -d);
                    self.anchor_cm = h;
                    self.trend = Trend::Rising;
                }
            }
        }
    }

    /// Total ascent, whole centimetres (saturates at `u32::MAX`, 42 949 km).
    pub const fn ascent_cm(&self) -> u32 {
        self.ascent_cm
    }

    /// Total descent, whole centimetres (saturates at `u32::MAX`).
    pub const fn descent_cm(&self) -> u32 {
        self.descent_cm
    }

    /// Total ascent, m (exact to the centimetre below 167 km; `f32` beyond).
    pub fn ascent_m(&self) -> f32 {
        self.ascent_cm as f32 / 100.0
    }

    /// Total descent, m.
    pub fn descent_m(&self) -> f32 {
        self.descent_cm as f32 / 100.0
    }

    /// Direction of the last confirmed move.
    pub const fn trend(&self) -> Trend {
        self.trend
    }

    /// The hysteresis band, m.
    pub fn band_m(&self) -> f32 {
        self.band_cm as f32 / 100.0
    }

    /// Sets totals to zero and forgets the turning point; keeps the band.
    pub fn reset(&mut self) {
        self.started = false;
        self.trend = Trend::Undecided;
        self.ascent_cm = 0;
        self.descent_cm = 0;
    }
}

crate::snapshot::snap_enum!(Trend {
    Trend::Undecided,
    Trend::Rising,
    Trend::Falling
});
crate::snapshot::snap_fields!(AscentTotals {
    band_cm,
    anchor_cm,
    low_cm,
    high_cm,
    trend,
    started,
    ascent_cm,
    descent_cm
});

#[cfg(test)]
mod tests;
