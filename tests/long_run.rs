//! Long runs: no drift of totals or heights over a week at rest, and no growth of error
//! over a three-hour balloon flight at 10 Hz (f32 accumulation over 10^5..10^6 samples).
//!
//! Both run at full length in the ordinary debug build (`cargo test --test long_run
//! -- --nocapture` prints the figures); together they take a few seconds, so nothing is
//! shortened or ignored.
//!
//! Pseudo-random noise from SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable
//! pseudorandom number generators", OOPSLA) with fixed seeds, Gaussian by the Box-Muller
//! transform (Box & Muller 1958): every run sees the same numbers.

use isohypse::atmosphere::US_1976;
use isohypse::uses::{Balloon, BalloonSettings, BalloonState, Sample, Walk, WalkSettings};
use isohypse::{Height, Pressure};
mod common;
use common::p_at;
#[allow(unused_imports)]
use common::{at, secs};

struct Noise(u64);

impl Noise {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in (0, 1].
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 1.0) / (1u64 << 53) as f64
    }
    /// Standard normal (Box-Muller, one of the pair).
    fn gaussian(&mut self) -> f64 {
        let (u1, u2) = (self.uniform(), self.uniform());
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

/// A week at 1 Hz, device at rest at 300 m, no weather change, 1.5 Pa (1-sigma) white
/// pressure noise (a typical MEMS barometer in its low-noise mode; common practice).
///
/// Bounds, with their reasons:
/// * ascent and descent each <= the hysteresis band (3 m, the walk preset's tracker): the
///   totals count a move only once it exceeds the band, and at rest there is no move.
///   The smoothed height noise is about 0.06 m (1-sigma: 1.5 Pa x 0.085 m/Pa through the
///   hike smoother's 2 s time constant at 1 Hz, gain k = dt / (tau + dt) = 1/3, which
///   passes sqrt(k / (2 - k)) = 0.45 of white noise), so the band is 50 sigma away and the expected count
///   is exactly 0; the band is the bound because that is what the design promises.
/// * the displayed height stays within the rest detector's exit band (2 m) of the truth:
///   a larger apparent move would end the rest.
#[test]
fn week_at_rest_hike_totals_do_not_drift() {
    let seconds: u64 = 7 * 86_400;
    let band = WalkSettings::DEFAULT.tracker.hysteresis_band_m;
    let exit_band = WalkSettings::DEFAULT.tracker.rest.exit_band_m;
    let mut walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
    let mut noise = Noise(0x15_0A_11_CE);
    let p_true = p_at(300.0) as f64;
    let (mut worst, mut sum_sq, mut n) = (0.0f32, 0.0f64, 0u64);
    let mut last = None;
    for s in 0..seconds {
        let p = (p_true + 1.5 * noise.gaussian()) as f32;
        let out = walk.process(&Sample::pressure(at(s as f64), p));
        assert!(out.accepted(), "{s}: {out:?}");
        assert!(
            out.altitude_m.is_finite() && out.vertical_speed_mps.is_finite(),
            "{s}: {out:?}"
        );
        let e = out.altitude_m - 300.0;
        worst = worst.max(e.abs());
        sum_sq += (e as f64) * (e as f64);
        n += 1;
        last = Some(out);
    }
    let last = last.unwrap();
    println!(
        "hike at rest, {} days at 1 Hz ({} samples): ascent {} m, descent {} m, \
         height error max {worst:.3} m, rms {:.3} m, state {}",
        seconds / 86_400,
        n,
        last.ascent_m,
        last.descent_m,
        (sum_sq / n as f64).sqrt(),
        last.state.name()
    );
    assert!(
        last.ascent_m <= band,
        "ascent {} m > band {band} m",
        last.ascent_m
    );
    assert!(
        last.descent_m <= band,
        "descent {} m > band {band} m",
        last.descent_m
    );
    assert!(worst <= exit_band, "height error {worst} m > {exit_band} m");
}

/// Same week, with the pressure changing as slow fronts do: 3 hPa up over half a day,
/// 3 hPa down over the next half (a triangle of +-1.5 hPa around the mean, starting at its
/// low; the design's hike scenario uses 3 hPa of drift). Totals must still not grow: at
/// most the band over the whole week (the rest detector attributes slow change to
/// weather; its limit is 20 m/h, and this is about 1 m/h). The displayed height is held
/// at rest: it stays within the rest detector's exit band (2 m) of the first one.
#[test]
fn week_at_rest_hike_with_weather_drift() {
    let seconds: u64 = 7 * 86_400;
    let band = WalkSettings::DEFAULT.tracker.hysteresis_band_m;
    let mut walk = Walk::new(&WalkSettings::DEFAULT).unwrap();
    let mut noise = Noise(0xD81F7);
    let p_mean = p_at(300.0) as f64;
    let exit_band = WalkSettings::DEFAULT.tracker.rest.exit_band_m;
    let mut last = None;
    let mut worst_speed = 0.0f32;
    let (mut first, mut worst_move) = (None, 0.0f32);
    for s in 0..seconds {
        let day_phase = (s % 86_400) as f64 / 86_400.0;
        // triangle wave: -150 Pa .. +150 Pa over a day
        let weather = 150.0 * (1.0 - 4.0 * (day_phase - 0.5).abs()).clamp(-1.0, 1.0);
        let p = (p_mean + weather + 1.5 * noise.gaussian()) as f32;
        let out = walk.process(&Sample::pressure(at(s as f64), p));
        assert!(out.accepted() && out.altitude_m.is_finite(), "{s}: {out:?}");
        worst_speed = worst_speed.max(out.vertical_speed_mps.abs());
        let h0 = *first.get_or_insert(out.altitude_m);
        worst_move = worst_move.max((out.altitude_m - h0).abs());
        last = Some(out);
    }
    let last = last.unwrap();
    println!(
        "hike at rest with +-1.5 hPa/day weather, {} days: ascent {} m, descent {} m, \
         height moved at most {worst_move:.3} m from the first, max |speed| {worst_speed:.4} m/s",
        seconds / 86_400,
        last.ascent_m,
        last.descent_m,
    );
    assert!(
        worst_move <= exit_band,
        "height moved {worst_move} m at rest"
    );
    assert!(last.ascent_m <= band, "ascent {} m", last.ascent_m);
    assert!(last.descent_m <= band, "descent {} m", last.descent_m);
}

/// Balloon timeline, s: 5 minutes on the ground before launch (the ground reference is
/// the mean of the samples at rest), 5 m/s up to 30 300 m, 20 minutes of float, 10 m/s
/// down, landed to the end of the three hours.
const T_LAUNCH: f64 = 300.0;
const T_TOP: f64 = T_LAUNCH + 6_000.0;
const T_FLOAT_END: f64 = T_TOP + 1_200.0;
const T_LANDING: f64 = T_FLOAT_END + 3_000.0;

/// The balloon preset, launched at 300 m.
const LAUNCH_AT_300_M: BalloonSettings = BalloonSettings {
    launch_altitude_m: Some(300.0),
    ..BalloonSettings::DEFAULT
};

/// Three hours of balloon flight through the balloon preset, standard atmosphere
/// (temperature sensor reads the U.S. 1976 temperature at the true height, dry air),
/// launch at 300 m (timeline above); 2 Pa (1-sigma) white pressure noise.
///
/// Bounds (design notes' balloon goals, which are set for a harder, non-standard
/// atmosphere with a lagging sensor, so they bound this easier case too):
/// * ascent: |error| <= 0.1 % of the height above 1 km, <= 1 m below: printed here,
///   asserted in `balloon_ascent_within_goal` (before the ground reference took only
///   samples at rest, it failed by up to 0.34 m in the first 1.3 km);
/// * float at the top (30.3 km): <= 0.1 % (the design goal "within 0.1 % at the top");
/// * descent above 5 km: <= 0.3 % of the height; below 5 km and landed: <= 0.3 % of the
///   height or 5 m, whichever is larger;
/// * no growth: landed, after 10^5 samples of f32 sums, the error is at most 5 m (the
///   height returns to the launch elevation).
#[test]
fn three_hour_balloon_flight_error_does_not_grow() {
    let rate_hz: f64 = 10.0;
    let duration_s = 3.0 * 3_600.0;
    let mut balloon = Balloon::<256>::new(&LAUNCH_AT_300_M).unwrap();
    let mut noise = Noise(0xBA11_0014);
    let truth = |t: f64| -> f64 {
        if t < T_LAUNCH {
            300.0
        } else if t < T_TOP {
            300.0 + 5.0 * (t - T_LAUNCH)
        } else if t < T_FLOAT_END {
            30_300.0
        } else {
            (30_300.0 - 10.0 * (t - T_FLOAT_END)).max(300.0)
        }
    };
    let samples = (duration_s * rate_hz) as u64;
    let mut worst = [0.0f64; 4]; // ascent, float, descent, landed: worst |error| / bound
    let mut worst_m = [0.0f64; 4];
    let mut worst_at = [(0.0f64, 0.0f64); 4]; // (time, true height) of the worst ratio
    let mut states_seen = Vec::new();
    for i in 0..samples {
        let t = i as f64 / rate_hz;
        let z = truth(t);
        let state = US_1976
            .at_geometric(Height::from_meters(z as f32).unwrap())
            .unwrap();
        let p = state.pressure.pa() as f64 + 2.0 * noise.gaussian();
        let sample = Sample {
            time: at(t),
            pressure_pa: Pressure::from_pa(p as f32).unwrap().pa(),
            temperature_c: Some(state.temperature.celsius()),
            humidity_pct: Some(0.0),
            ..Sample::default()
        };
        let out = balloon.process(&sample);
        assert!(out.accepted(), "t {t}: {out:?}");
        assert!(
            out.altitude_m.is_finite()
                && out.vertical_speed_mps.is_finite()
                && out.altitude_sigma_m.is_finite(),
            "t {t}: {out:?}"
        );
        if states_seen.last() != Some(&out.state) {
            states_seen.push(out.state);
        }
        let err = (out.altitude_m as f64 - z).abs();
        let (k, bound) = if t < T_TOP {
            // scored in `balloon_ascent_within_goal`; here only
            // reported, with the 0.1 % / 1 m bound
            (0, if z > 1_000.0 { 0.001 * z } else { 1.0 })
        } else if t < T_FLOAT_END {
            (1, 0.001 * z)
        } else if z > 300.0 {
            (
                2,
                if z > 5_000.0 {
                    0.003 * z
                } else {
                    (0.003 * z).max(5.0)
                },
            )
        } else {
            (3, 5.0)
        };
        // the estimator needs a few samples after each turn of the truth (burst turns
        // +5 m/s into -10 m/s): 60 s after each turn are not scored
        let turns = [T_LAUNCH, T_TOP, T_FLOAT_END, T_LANDING];
        let settling = turns.iter().any(|&turn| (turn..turn + 60.0).contains(&t));
        if !settling {
            if err / bound > worst[k] {
                worst[k] = err / bound;
                worst_at[k] = (t, z);
            }
            worst_m[k] = worst_m[k].max(err);
        }
    }
    let names = ["ascent", "float", "descent", "landed"];
    for k in 0..4 {
        println!(
            "balloon {rate_hz} Hz, 3 h ({samples} samples): {:8} max |error| {:7.2} m; \
             worst error/bound {:.2} at t {:.0} s, height {:.0} m",
            names[k], worst_m[k], worst[k], worst_at[k].0, worst_at[k].1
        );
    }
    let names_seen: Vec<_> = states_seen.iter().map(|s| s.name()).collect();
    println!("balloon: states {names_seen:?}");
    for k in 1..4 {
        assert!(
            worst[k] <= 1.0,
            "{}: error {} m exceeds its bound",
            names[k],
            worst_m[k]
        );
    }
    assert!(
        states_seen.contains(&BalloonState::Ascent) && states_seen.contains(&BalloonState::Descent)
    );
}

/// Regression test for a finding, fixed (the ground reference now takes samples at rest
/// only): in the first kilometre or so of the ascent the balloon
/// preset read 0.7..1.3 m low (worst 1.34 m at 835 m and 1.13 m at 1044 m, 10 Hz, 2 Pa
/// noise), above the 0.1 % / 1 m bound stated (before measuring) for the ascent. The
/// ground reference kept averaging while the state was still `BalloonState::Ground`, i.e.
/// also over the first seconds of the climb until the state machine confirmed the ascent
/// (1 m/s held for 10 s), which raised the ground mean and lowered every later height by about a metre.
#[test]
fn balloon_ascent_within_goal() {
    let mut balloon = Balloon::<256>::new(&LAUNCH_AT_300_M).unwrap();
    let mut noise = Noise(0xBA11_0014);
    let mut worst = (0.0f64, 0.0f64, 0.0f64);
    for i in 0..(T_TOP * 10.0) as u64 {
        let t = i as f64 / 10.0;
        let z = if t < T_LAUNCH {
            300.0
        } else {
            300.0 + 5.0 * (t - T_LAUNCH)
        };
        let state = US_1976
            .at_geometric(Height::from_meters(z as f32).unwrap())
            .unwrap();
        let p = state.pressure.pa() as f64 + 2.0 * noise.gaussian();
        let out = balloon.process(&Sample {
            time: at(t),
            pressure_pa: p as f32,
            temperature_c: Some(state.temperature.celsius()),
            humidity_pct: Some(0.0),
            ..Sample::default()
        });
        let err = (out.altitude_m as f64 - z).abs();
        let bound = if z > 1_000.0 { 0.001 * z } else { 1.0 };
        if t > T_LAUNCH + 60.0 && err / bound > worst.0 {
            worst = (err / bound, err, z);
        }
    }
    assert!(worst.0 <= 1.0, "error {:.2} m at {:.0} m", worst.1, worst.2);
}
