//! Clock faults, one table for every use type: each fault on a climbing `Drone`,
//! `Balloon<64>` and `Walk` with their presets. A fault must cost at most the sample it
//! happens on: that sample and every later one is taken, the fault is flagged with its
//! cause, the estimate re-acquires near the truth, and the totals, the state and the
//! balloon's stored profile are kept.
//!
//! The truth is a steady climb in the U.S. Standard Atmosphere 1976 (the library's own
//! `atmosphere::US_1976`, itself checked against the standard's tables in
//! tests/atmosphere.rs); the scenarios are our own.

mod common;

use common::{air_c, pressure_at};
use isohypse::Error;
use isohypse::time::{Instant, WrappingTicks};
use isohypse::uses::{
    Balloon, BalloonSettings, Drone, DroneSettings, Flags, Output, Sample, Use, Walk, WalkSettings,
};
use std::fmt::Debug;

/// The use types of the table.
#[derive(Clone, Copy)]
enum Kind {
    Drone,
    Balloon,
    Walk,
}

/// A use: its type, its preset's longest gap, sample period, climb rate and how close
/// the estimate must be to the truth 5 s (drone) or 20 samples (balloon, walk) after a
/// fault.
struct Case {
    name: &'static str,
    kind: Kind,
    max_gap_s: f32,
    period_ms: u64,
    climb_mps: f64,
    settle_samples: u64,
    tolerance_m: f32,
}

fn cases() -> [Case; 3] {
    [
        Case {
            name: "drone",
            kind: Kind::Drone,
            max_gap_s: DroneSettings::DEFAULT.max_gap_s,
            period_ms: 20,
            climb_mps: 1.0,
            settle_samples: 250,
            tolerance_m: 0.5,
        },
        Case {
            name: "balloon",
            kind: Kind::Balloon,
            max_gap_s: BalloonSettings::DEFAULT.max_gap_s,
            period_ms: 1_000,
            climb_mps: 5.0,
            settle_samples: 20,
            tolerance_m: 3.0,
        },
        Case {
            name: "walk",
            kind: Kind::Walk,
            max_gap_s: WalkSettings::DEFAULT.max_gap_s,
            period_ms: 1_000,
            climb_mps: 0.3,
            settle_samples: 20,
            tolerance_m: 3.0,
        },
    ]
}

/// What the clock does to the sample times, by sample index `k` (the device's own
/// clock; the truth moves on regardless).
#[derive(Clone, Copy, Debug)]
enum Fault {
    /// The clock steps back to 0 after a restart (brown-out with the state kept).
    Restart,
    /// A `u32` millisecond counter fed raw, starting 10 s before its wrap.
    CounterWrap,
    /// One stamp 4 294 967.296 s ahead (a glitched upper word), then normal stamps.
    FutureGlitch,
    /// The clock stops for one sample (a repeated stamp).
    Repeat,
    /// The device sleeps for longer than the use's longest gap.
    LongSleep,
}

const FAULT_AT: u64 = 600;
const SAMPLES: u64 = 1_000;

/// Device time of sample `k` for the fault, ms.
fn device_ms(fault: Fault, u: &Case, k: u64) -> u64 {
    let normal = 1_000_000 + k * u.period_ms;
    match fault {
        Fault::Restart if k >= FAULT_AT => (k - FAULT_AT) * u.period_ms,
        Fault::CounterWrap => {
            // the counter reads 0 at the fault sample
            let start = (1u64 << 32) - FAULT_AT * u.period_ms;
            (start + k * u.period_ms) & u64::from(u32::MAX)
        }
        Fault::FutureGlitch if k == FAULT_AT => normal + 4_294_967_296,
        Fault::Repeat if k == FAULT_AT => 1_000_000 + (k - 1) * u.period_ms,
        Fault::LongSleep if k >= FAULT_AT => normal + (u.max_gap_s as u64 + 60) * 1_000,
        _ => normal,
    }
}

struct Run<S> {
    outputs: Vec<Output<S>>,
    truth: Vec<f64>,
}

fn run<U: Use>(p: &mut U, u: &Case, fault: Fault) -> Run<U::State> {
    let (mut outputs, mut truth) = (Vec::new(), Vec::new());
    for k in 0..SAMPLES {
        // on the ground for 200 samples, then climbing
        let climb_s = (k.saturating_sub(200) * u.period_ms) as f64 / 1_000.0;
        let z = 300.0 + u.climb_mps * climb_s;
        let t = Instant::from_millis(device_ms(fault, u, k));
        let mut s = Sample::pressure(t, pressure_at(z));
        s.temperature_c = Some(air_c(z));
        outputs.push(p.process(&s));
        truth.push(z);
    }
    Run { outputs, truth }
}

/// Runs the fault on a fresh use of the case's type with its preset, and checks it.
fn run_and_check(u: &Case, fault: Fault) -> Result<String, String> {
    match u.kind {
        Kind::Drone => {
            let mut drone = Drone::new(&DroneSettings::DEFAULT).unwrap();
            check(u, fault, &run(&mut drone, u, fault))
        }
        Kind::Balloon => {
            let mut balloon = Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap();
            check(u, fault, &run(&mut balloon, u, fault))
        }
        Kind::Walk => {
            let mut walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
            check(u, fault, &run(&mut walk, u, fault))
        }
    }
}

/// The checks every fault must pass for every use; `Err` names what failed.
fn check<S: PartialEq + Debug>(u: &Case, fault: Fault, r: &Run<S>) -> Result<String, String> {
    let at = FAULT_AT as usize;
    let before = &r.outputs[at - 1];
    let fault_out = &r.outputs[at];
    // 1. the cause is flagged on the fault sample
    let want = match fault {
        Fault::Repeat => Flags::REJECTED_TIME,
        _ => Flags::CLOCK_FAULT,
    };
    if !fault_out.flags.contains(want) {
        return Err(format!("fault sample flags {:?}", fault_out.flags));
    }
    // 2. every later sample is taken; the glitch costs one more fault flag at most
    let later = &r.outputs[at + 1..];
    if let Some((i, o)) = later.iter().enumerate().find(|(_, o)| !o.accepted()) {
        return Err(format!(
            "sample {} after the fault refused: {:?}",
            i + 1,
            o.flags
        ));
    }
    let faults = later
        .iter()
        .filter(|o| o.flags.contains(Flags::CLOCK_FAULT))
        .count();
    let allowed = usize::from(matches!(fault, Fault::FutureGlitch));
    if faults > allowed {
        return Err(format!("{faults} later samples flagged clock_fault"));
    }
    // 3. the totals and the state are kept across the fault
    if fault_out.ascent_m + 0.01 < before.ascent_m {
        return Err(format!(
            "ascent fell from {} to {} m",
            before.ascent_m, fault_out.ascent_m
        ));
    }
    if fault_out.state != before.state {
        return Err(format!("state {:?} -> {:?}", before.state, fault_out.state));
    }
    // 4. the estimate follows the truth once settled: its change since the last
    //    sample before the fault (the drone reports height above its take-off point)
    let settled = at + u.settle_samples as usize;
    let error = (r.outputs[settled].altitude_m - before.altitude_m)
        - (r.truth[settled] - r.truth[at - 1]) as f32;
    if error.abs() > u.tolerance_m {
        return Err(format!(
            "error {error:.2} m {} samples after",
            u.settle_samples
        ));
    }
    Ok(format!(
        "flags {:?}, error after settling {error:+.2} m, ascent {:.1} m",
        fault_out.flags.names().collect::<Vec<_>>(),
        r.outputs[SAMPLES as usize - 1].ascent_m
    ))
}

#[test]
fn every_clock_fault_costs_at_most_one_sample_for_every_use() {
    let faults = [
        Fault::Restart,
        Fault::CounterWrap,
        Fault::FutureGlitch,
        Fault::Repeat,
        Fault::LongSleep,
    ];
    let mut failures = Vec::new();
    println!("| use | fault | result |\n| --- | --- | --- |");
    for u in cases() {
        for fault in faults {
            match run_and_check(&u, fault) {
                Ok(line) => println!("| {} | {fault:?} | ok: {line} |", u.name),
                Err(e) => {
                    println!("| {} | {fault:?} | FAILED: {e} |", u.name);
                    failures.push(format!("{} / {fault:?}: {e}", u.name));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

#[test]
fn balloon_profile_kept_across_a_restart() {
    let u = &cases()[1];
    let mut p = Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap();
    let mut levels_before = 0;
    for k in 0..SAMPLES {
        let z = 300.0 + 5.0 * k as f64;
        let t = Instant::from_millis(device_ms(Fault::Restart, u, k));
        let mut s = Sample::pressure(t, pressure_at(z));
        s.temperature_c = Some(15.0 - 0.0065 * (z as f32 - 300.0));
        let out = p.process(&s);
        assert!(out.accepted(), "{k}: {:?}", out.flags);
        let levels = p.sounding().map_or(0, |s| s.profile().len());
        if k == FAULT_AT - 1 {
            levels_before = levels;
        }
        if k >= FAULT_AT {
            assert!(levels >= levels_before, "profile lost levels at {k}");
        }
    }
    assert!(levels_before > 2);
}

#[test]
fn a_glitched_accelerometer_stamp_is_refused_and_changes_nothing() {
    let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
    for k in 0..100u64 {
        assert!(
            p.process(&Sample::pressure(Instant::from_millis(k * 20), 97_000.0))
                .accepted()
        );
    }
    let before = p.clone();
    let glitch = Instant::from_secs(1_000_000_000);
    assert_eq!(p.accelerometer(glitch, 0.0), Err(Error::TimeJump));
    assert_eq!(p, before);
    let next = p.process(&Sample::pressure(Instant::from_millis(2_000), 97_000.0));
    assert!(next.accepted() && !next.flags.contains(Flags::CLOCK_FAULT));
}

#[test]
fn an_accelerometer_stamp_ahead_of_the_next_barometer_sample_restarts_the_filter() {
    let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
    for k in 0..100u64 {
        p.process(&Sample::pressure(Instant::from_millis(k * 20), 97_000.0));
    }
    // an accelerometer stamp 5 s ahead (within the longest gap), then the barometer
    // goes on at its own time: the filter starts again from the barometer sample
    p.accelerometer(Instant::from_millis(7_000), 0.0).unwrap();
    let out = p.process(&Sample::pressure(Instant::from_millis(2_000), 97_000.0));
    assert!(
        out.accepted() && out.flags.contains(Flags::REACQUIRED),
        "{out:?}"
    );
    let out = p.process(&Sample::pressure(Instant::from_millis(2_020), 97_000.0));
    assert!(out.accepted(), "{out:?}");
}

#[test]
fn a_known_restart_resumes_without_a_fault() {
    let mut p = Walk::new(&WalkSettings::DEFAULT).unwrap();
    for k in 0..100u64 {
        p.process(&Sample::pressure(Instant::from_secs(5_000 + k), 90_000.0));
    }
    let ascent = p.last_output().ascent_m;
    p.restart_clock();
    let out = p.process(&Sample::pressure(Instant::ZERO, 90_000.0));
    assert!(
        out.accepted() && !out.flags.contains(Flags::CLOCK_FAULT),
        "{out:?}"
    );
    assert_eq!(out.ascent_m, ascent);
}

#[test]
fn a_wrapping_counter_through_wrapping_ticks_never_faults() {
    let mut clock = WrappingTicks::<1_000>::new();
    let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
    let mut raw = u32::MAX - 5_000;
    for _ in 0..1_000 {
        let out = p.process(&Sample::pressure(clock.instant(raw), 97_000.0));
        assert!(out.accepted() && !out.flags.contains(Flags::CLOCK_FAULT));
        raw = raw.wrapping_add(20);
    }
}
