//! Fuzz target: the host replay tool's CSV reader and its run of the use types.
//!
//! `examples/replay.rs` is compiled in as a module (its `replay(text, settings, strict)`
//! is `pub(crate)`), so this exercises the very code the tool runs: header lookup by
//! name, comments, field counts, number parsing, physical checks, the optional channels
//! dropped for a bad value, time order, and every accepted row through the use type's
//! `process` (or, with `--filter off`, the tool's pointwise conversion).
//!
//! Input: the first byte picks the preset, `--filter off` and `--strict`; the rest is
//! the file (bytes that are not UTF-8 are replaced, as a lossy read would).
//!
//! Checks, besides "never panics": every output row's numbers are finite (a rejected
//! sample carries the previous, finite, estimate forward) except the NaN the tool
//! prints for "no value" (height, speed and sigma of a row before the first accepted
//! one; a pointwise speed without a step), never infinite; and every rejected row has a
//! message naming its line or is counted among those left off (unless the run stopped
//! with `--strict`); at most 100 messages are kept, each cut short. Optional channels:
//! every value passed on is within its channel's range; a row with a dropped channel
//! carries the library's flag for it (temperature, humidity, acceleration, fix) and has
//! a warning (kept or counted; a `--strict` run that goes on has none); a humidity over
//! 100 % in a sample that was not rejected is flagged `humidity_clamped`; warnings are
//! bounded as messages are.
#![no_main]

#[allow(dead_code, unused_imports)]
#[path = "../../../examples/replay.rs"]
mod replay;

use isohypse::uses::Flags;
use replay::channels::Channel;
use replay::{PresetArg, Settings};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Some((&choice, rest)) = data.split_first() else {
        return;
    };
    let mut settings = Settings::preset(match choice % 3 {
        0 => PresetArg::Balloon,
        1 => PresetArg::Drone,
        _ => PresetArg::Hike,
    });
    settings.pointwise = choice & 0x04 != 0;
    let strict = choice & 0x08 != 0;
    let text = String::from_utf8_lossy(rest);
    match replay::replay(&text, settings, strict) {
        Ok(run) => {
            let mut estimate = false;
            let mut with_dropped = 0;
            for (row, o) in &run.outputs {
                assert!(row.time_s.is_finite());
                check_channels(row, o);
                with_dropped += usize::from(!row.dropped.is_empty());
                estimate |= o.accepted() && !o.flags.contains(Flags::OUTLIER);
                assert_eq!(
                    estimate,
                    o.altitude_m.is_finite()
                        && o.raw_altitude_m.is_finite()
                        && o.altitude_sigma_m.is_finite(),
                    "height and sigma are numbers exactly once an estimate exists: {o:?} for row {row:?}"
                );
                assert!(
                    !o.vertical_speed_mps.is_infinite()
                        && o.ascent_m.is_finite()
                        && o.descent_m.is_finite(),
                    "non-finite output {o:?} for row {row:?}"
                );
            }
            let rejected: usize = run.rejected.values().sum();
            assert_eq!(
                rejected,
                run.messages.len() + run.messages_left_off,
                "a rejected row without a message"
            );
            assert!(run.messages.len() <= 100, "the kept messages are bounded");
            assert!(
                run.messages.iter().all(|m| m.len() < 1000),
                "a message echoes its cell cut short"
            );
            assert!(run.messages.iter().all(|m| m.starts_with("line ")));
            let warnings = run.warnings.len() + run.warnings_left_off;
            assert!(warnings >= with_dropped, "a dropped channel without a warning");
            assert!(!strict || warnings == 0, "--strict went on past a bad value");
            assert!(run.warnings.len() <= 100, "the kept warnings are bounded");
            assert!(
                run.warnings
                    .iter()
                    .all(|m| m.starts_with("line ") && m.len() < 7 * 1000),
                "a warning names its line and its (at most 7) cells cut short"
            );
        }
        Err(failure) => {
            assert!(!failure.message().is_empty());
            let _ = failure.code();
        }
    }
});

/// The optional channels of an output row: the values passed on are valid, the dropped
/// ones flagged, humidity over 100 % flagged as clamped.
fn check_channels(row: &replay::row::Row, o: &replay::Output) {
    for c in Channel::ALL {
        if let Some(v) = row.get(c) {
            assert!(c.problem(v).is_none(), "{c:?} {v} passed on");
            assert!(!row.dropped.contains(c), "{c:?} both kept and dropped");
        }
    }
    for (c, flag) in [
        (Channel::Temperature, Flags::TEMPERATURE_IGNORED),
        (Channel::Humidity, Flags::HUMIDITY_IGNORED),
        (Channel::Accel, Flags::ACCEL_IGNORED),
        (Channel::Fix, Flags::FIX_IGNORED),
    ] {
        if row.dropped.contains(c) {
            assert!(o.flags.contains(flag), "{c:?} dropped, not flagged: {o:?}");
        }
    }
    if row.humidity_pct.is_some_and(|h| h > 100.0) && !o.flags.rejected() {
        assert!(o.flags.contains(Flags::HUMIDITY_CLAMPED), "{o:?} for {row:?}");
    }
}
