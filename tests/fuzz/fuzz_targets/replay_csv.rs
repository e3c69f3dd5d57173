//! Fuzz target: the host replay tool's CSV reader and its run of the use types.
//!
//! `examples/replay.rs` is compiled in as a module (its `replay(text, settings, strict)`
//! is `pub(crate)`), so this exercises the very code the tool runs: header lookup by
//! name, comments, field counts, number parsing, physical checks, time order, and every
//! accepted row through the use type's `process` (or, with `--filter off`, the tool's
//! pointwise conversion).
//!
//! Input: the first byte picks the preset, `--filter off` and `--strict`; the rest is
//! the file (bytes that are not UTF-8 are replaced, as a lossy read would).
//!
//! Checks, besides "never panics": every output row's numbers are finite (a rejected
//! sample carries the previous, finite, estimate forward) except the NaN the tool
//! prints for "no value" (height, speed and sigma of a row before the first accepted
//! one; a pointwise speed without a step), never infinite; and every rejected row has a
//! message naming its line or is counted among those left off (unless the run stopped
//! with `--strict`); at most 100 messages are kept, each cut short.
#![no_main]

#[allow(dead_code, unused_imports)]
#[path = "../../../examples/replay.rs"]
mod replay;

use isohypse::uses::Flags;
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
            for (row, o) in &run.outputs {
                assert!(row.time_s.is_finite());
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
        }
        Err(failure) => {
            assert!(!failure.message().is_empty());
            let _ = failure.code();
        }
    }
});
