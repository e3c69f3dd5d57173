//! The plot's units for each use (km and h:mm for a balloon, m and h:mm for a walk, m
//! and s for a drone) and tick labels without spurious decimals or "-0".

use super::PresetArg;

/// How the axes of a plot are shown.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Scale {
    /// Metres per unit of height on the axes.
    pub(crate) height_per_unit_m: f64,
    /// Unit name of height.
    pub(crate) height_unit: &'static str,
    /// Seconds per unit of the time axis (3600: hours, drawn as h:mm).
    pub(crate) time_per_unit_s: f64,
}

impl Scale {
    /// The scale of a use.
    pub(crate) const fn of(preset: PresetArg) -> Self {
        match preset {
            PresetArg::Balloon => Self {
                height_per_unit_m: 1000.0,
                height_unit: "km",
                time_per_unit_s: 3600.0,
            },
            PresetArg::Hike => Self {
                height_per_unit_m: 1.0,
                height_unit: "m",
                time_per_unit_s: 3600.0,
            },
            PresetArg::Drone => Self {
                height_per_unit_m: 1.0,
                height_unit: "m",
                time_per_unit_s: 1.0,
            },
        }
    }

    /// The time axis' title.
    pub(crate) fn time_title(&self) -> &'static str {
        if self.in_hours() {
            "time since the first row (h:mm)"
        } else {
            "time since the first row (s)"
        }
    }

    fn in_hours(&self) -> bool {
        self.time_per_unit_s >= 3600.0
    }

    /// A time tick's label: h:mm for hours, else a number.
    pub(crate) fn time_label(&self, units: f64) -> String {
        if !self.in_hours() || units.abs() >= 1.0e5 {
            return number_label(units);
        }
        let minutes = (units * 60.0).round();
        if !minutes.is_finite() {
            return String::new();
        }
        let sign = if minutes < 0.0 { "-" } else { "" };
        let m = minutes.abs() as u64;
        format!("{sign}{}:{:02}", m / 60, m % 60)
    }
}

/// A tick label: the shortest of 0 to 6 decimals that shows the value to a millionth
/// (ticks are round numbers, so this is their own length; a narrow range in km keeps
/// its ticks apart),
/// "0" for anything that rounds to zero (never "-0"); scientific notation from a
/// million on.
pub(crate) fn number_label(v: f64) -> String {
    if !v.is_finite() {
        return String::new();
    }
    if v.abs() >= 1.0e6 {
        return format!("{v:.2e}");
    }
    let text = format!("{v:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" || text.is_empty() {
        "0".to_string()
    } else {
        text.to_string()
    }
}

/// Elapsed time of `t` s since `t0` s, h:mm:ss (the summary's times); beyond 100 000
/// hours (a time column that is not seconds since a start), seconds in scientific
/// notation.
pub(crate) fn clock(t: f64, t0: f64) -> String {
    let s = (t - t0).round();
    if !s.is_finite() {
        return "?".to_string();
    }
    if s.abs() >= 3.6e8 {
        return format!("{s:.3e} s after the first row");
    }
    let sign = if s < 0.0 { "-" } else { "" };
    let s = s.abs() as u64;
    format!("{sign}{}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
}
