//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

fn h(m: f32) -> Height {
    Height::from_meters(m).unwrap()
}

/// A filter at rest at 100 m after 2 s of clean samples (accel 200 Hz, baro 50 Hz).
fn settled() -> (VerticalKalman, f64) {
    let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
    kf.correct(at(0.0), h(100.0)).unwrap();
    let mut t = 0.0;
    for k in 1..=400 {
        t = k as f64 * 0.005;
        kf.predict(at(t), 0.0).unwrap();
        if k % 4 == 0 {
            kf.correct(at(t), h(100.0)).unwrap();
        }
    }
    (kf, t)
}

#[test]
fn bad_input_leaves_state_unchanged() {
    let (mut kf, t) = settled();
    let before = kf;
    assert_eq!(kf.predict(at(t + 0.005), f32::NAN), Err(Error::NotFinite));
    assert_eq!(
        kf.predict(at(t + 0.005), 1.0e3),
        Err(Error::SampleOutOfRange)
    );
    assert_eq!(kf.predict(at(t), 0.0), Err(Error::NotIncreasing));
    assert_eq!(kf.predict(at(t - 1.0), 0.0), Err(Error::NotIncreasing));
    assert_eq!(kf.correct(at(t), h(100.0)), Err(Error::NotIncreasing));
    assert_eq!(kf.correct(at(t - 0.5), h(100.0)), Err(Error::NotIncreasing));
    assert_eq!(
        kf.correct(at(t + 0.02), h(-6000.0)),
        Err(Error::BelowModelBottom)
    );
    assert_eq!(
        kf.correct(at(t + 0.02), h(90_000.0)),
        Err(Error::AboveModelTop)
    );
    assert_eq!(kf, before);
    // Before initialisation too.
    let mut fresh = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
    fresh.predict(at(1.0), 0.0).unwrap();
    let before = fresh;
    assert_eq!(fresh.correct(at(0.5), h(1.0)), Err(Error::NotIncreasing));
    assert_eq!(fresh.predict(at(1.0), 0.0), Err(Error::NotIncreasing));
    assert_eq!(fresh, before);
    assert_eq!(fresh.estimate(), None);
}

#[test]
fn rejects_bad_settings() {
    let d = VerticalKalmanConfig::default();
    for c in [
        VerticalKalmanConfig {
            reacquire_after: 0,
            ..d
        },
        VerticalKalmanConfig {
            baro_sigma_m: f32::NAN,
            ..d
        },
        VerticalKalmanConfig {
            disturbed_sigma_scale: 0.5,
            ..d
        },
        VerticalKalmanConfig {
            min_height_m: 10.0,
            max_height_m: 0.0,
            ..d
        },
    ] {
        assert_eq!(VerticalKalman::new(c), Err(Error::InvalidSetting));
    }
}

#[test]
fn gate_counts_outliers_and_keeps_estimate() {
    let (mut kf, mut t) = settled();
    let mut rejected = 0;
    for k in 1..=200 {
        t += 0.005;
        kf.predict(at(t), 0.0).unwrap();
        if k % 4 == 0 {
            // Every 10th baro sample is a 3 m spike.
            let z = if k % 40 == 0 { 103.0 } else { 100.0 };
            if let KalmanOutcome::Rejected { nis } = kf.correct(at(t), h(z)).unwrap() {
                assert!(nis > 10.83);
                rejected += 1;
            }
        }
    }
    assert_eq!(rejected, 5);
    assert_eq!(kf.rejected_count(), 5);
    let e = kf.estimate().unwrap();
    assert!((e.height.meters() - 100.0).abs() < 1e-3);
    assert!(e.vertical_speed.mps().abs() < 1e-3);
}

#[test]
fn an_accelerometer_that_drove_the_prediction_away_is_left_out_until_quiet() {
    // At rest at 100 m, the accelerometer reads -100 m/s^2 for 0.3 s (a shock on
    // the sensor): the prediction falls away from the barometer, the filter follows
    // the barometer, and the shock's remaining samples are not integrated; the
    // first quiet sample is used again.
    let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
    kf.correct(at(0.0), h(100.0)).unwrap();
    let mut t = 0.0;
    let mut worst_after = 0.0f32;
    let mut followed_at = None;
    for k in 1..=600 {
        t = k as f64 * 0.005;
        let shock = (2.0..2.3).contains(&t);
        kf.predict(at(t), if shock { -100.0 } else { 0.0 }).unwrap();
        if k % 4 == 0 {
            let o = kf.correct(at(t), h(100.0)).unwrap();
            if o == KalmanOutcome::Reacquired && followed_at.is_none() {
                followed_at = Some(t);
            }
        }
        if followed_at.is_some() {
            let v = kf.estimate().unwrap().vertical_speed.mps();
            worst_after = worst_after.max(v.abs());
        }
    }
    let followed_at = followed_at.expect("followed the barometer");
    assert!(followed_at < 2.3, "followed at {followed_at}");
    // without the rule the rest of the shock adds up to 10 m/s again
    assert!(
        worst_after < 2.0,
        "speed after following: {worst_after} m/s"
    );
    assert!(
        !kf.run.get(ACCEL_SUSPECT),
        "trusted again once quiet (t {t})"
    );
    let e = kf.estimate().unwrap();
    assert!((e.height.meters() - 100.0).abs() < 0.1 && e.vertical_speed.mps().abs() < 0.1);
}

#[test]
fn follows_a_change_after_a_run_on_the_same_side() {
    // The vehicle drops at 100 m/s^2 (10 g) and the accelerometer, saturated or
    // misaligned, reports nothing: a run of rejections below the prediction.
    let drop = |s: f64| 100.0 - 50.0 * s * s;
    for (follow_after_s, n) in [(0.01f32, 2usize), (0.09, 6)] {
        let config = VerticalKalmanConfig {
            follow_after_s,
            ..VerticalKalmanConfig::default()
        };
        let mut kf = VerticalKalman::new(config).unwrap();
        kf.correct(at(0.0), h(100.0)).unwrap();
        let mut t = 0.0;
        for k in 1..=400 {
            t = k as f64 * 0.005;
            kf.predict(at(t), 0.0).unwrap();
            if k % 4 == 0 {
                kf.correct(at(t), h(100.0)).unwrap();
            }
        }
        let mut outcomes = Vec::new();
        let mut k = 0;
        while !outcomes.contains(&KalmanOutcome::Reacquired) && k < 40 {
            k += 1;
            t += 0.02;
            kf.predict(at(t), 0.0).unwrap();
            let z = drop(0.02 * f64::from(k)) as f32;
            outcomes.push(kf.correct(at(t), h(z)).unwrap());
        }
        let first = outcomes
            .iter()
            .position(|o| matches!(o, KalmanOutcome::Rejected { .. }))
            .unwrap();
        assert_eq!(outcomes.len(), first + n, "{follow_after_s}: {outcomes:?}");
        // the speed is the run's mean: the fall's speed at its middle
        let e = kf.estimate().unwrap();
        let middle = 0.02 * (f64::from(k) - (n as f64 - 1.0) / 2.0);
        let truth_v = -100.0 * middle;
        let v = f64::from(e.vertical_speed.mps());
        assert!(
            (v - truth_v).abs() < 1.0,
            "{follow_after_s}: {v} vs {truth_v}"
        );
        assert!((f64::from(e.height.meters()) - drop(0.02 * f64::from(k))).abs() < 0.01);
    }
}

#[test]
fn spikes_on_alternate_sides_reacquire_after_the_configured_count() {
    let (mut kf, mut t) = settled();
    let n = kf.config().reacquire_after;
    let mut outcomes = [KalmanOutcome::Initialized; 16];
    for (k, o) in outcomes.iter_mut().enumerate() {
        t += 0.02;
        kf.predict(at(t), 0.0).unwrap();
        let z = if k % 2 == 0 { 120.0 } else { 80.0 };
        *o = kf.correct(at(t), h(z)).unwrap();
    }
    for o in &outcomes[..usize::from(n) - 1] {
        assert!(matches!(o, KalmanOutcome::Rejected { .. }), "{outcomes:?}");
    }
    assert_eq!(outcomes[usize::from(n) - 1], KalmanOutcome::Reacquired);
}

#[test]
fn disturbance_widens_gate() {
    let (mut kf, t) = settled();
    let mut quiet = kf;
    kf.set_baro_disturbed(true);
    assert!(kf.is_baro_disturbed());
    // 0.8 m off: an outlier for 0.15 m noise, acceptable for 0.6 m noise.
    assert!(matches!(
        quiet.correct(at(t + 0.02), h(100.8)).unwrap(),
        KalmanOutcome::Rejected { .. }
    ));
    assert!(matches!(
        kf.correct(at(t + 0.02), h(100.8)).unwrap(),
        KalmanOutcome::Accepted { .. }
    ));
}

#[test]
fn baro_only_tracks_constant_climb() {
    // No accelerometer: constant-velocity model; a constant climb is tracked with
    // no steady-state error (common practice for this model).
    let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
    let mut t = 0.0f64;
    for k in 0..1000 {
        t = k as f64 * 0.02;
        kf.correct(at(t), h(50.0 + 1.5 * t as f32)).unwrap();
    }
    let e = kf.estimate().unwrap();
    assert!((e.height.meters() - (50.0 + 1.5 * t as f32)).abs() < 1e-3);
    assert!((e.vertical_speed.mps() - 1.5).abs() < 1e-3);
}

#[test]
fn dropout_reacquires_at_measurement() {
    let (mut kf, t) = settled();
    // 1000 s of silence, then the vehicle is 37 m higher.
    let t2 = t + 1000.0;
    kf.predict(at(t2), 0.0).unwrap();
    assert_eq!(
        kf.correct(at(t2), h(137.0)).unwrap(),
        KalmanOutcome::Reacquired
    );
    let e = kf.estimate().unwrap();
    assert_eq!(e.height.meters(), 137.0);
    assert!(e.height_sigma_m < 0.2);
}

#[test]
fn covariance_stays_symmetric_positive() {
    let (kf, _) = settled();
    let p = kf.core.p;
    // Leading principal minors positive (Sylvester's criterion).
    let m1 = p.hh as f64;
    let m2 = (p.hh * p.vv - p.hv * p.hv) as f64;
    let m3 = p.hh as f64 * (p.vv as f64 * p.bb as f64 - (p.vb * p.vb) as f64)
        - p.hv as f64 * (p.hv as f64 * p.bb as f64 - (p.vb * p.hb) as f64)
        + p.hb as f64 * (p.hv as f64 * p.vb as f64 - (p.vv * p.hb) as f64);
    assert!(m1 > 0.0 && m2 > 0.0 && m3 > 0.0, "{p:?}");
}

// ---------------------------------------------------------- settled covariance

extern crate std;
use std::{println, vec::Vec};

/// Deterministic noise for the tests below: uniform in [-1, 1) from a 64-bit
/// linear congruential generator (Knuth's MMIX constants, from memory; any
/// full-period generator would do).
struct Noise(u64);

impl Noise {
    fn next(&mut self) -> f32 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.0 >> 40) as f32 / (1u64 << 23) as f32) - 1.0
    }
}

/// Time (s), true height, measured height (m), measured acceleration (m/s^2).
type HopSample = (f64, f32, f32, f32);

/// A 90 s synthetic hop at 50 Hz (invented test data): at rest at 100 m for 40 s,
/// then 1 m/s^2 for 2 s, 2 m/s for 3 s, -1 m/s^2 for 2 s, level 10 m higher. Per
/// sample: time, true height, measured height (uniform noise of 0.25 m
/// half-width, 0.14 m sigma) and measured acceleration (0.05 m/s^2 half-width
/// plus a 0.02 m/s^2 bias).
fn hop(seed: u64) -> Vec<HopSample> {
    let mut noise = Noise(seed);
    let (mut z, mut v) = (100.0f64, 0.0f64);
    let dt = 0.02;
    (0..4500)
        .map(|k| {
            let t = k as f64 * dt;
            let a = if (40.0..42.0).contains(&t) {
                1.0
            } else if (45.0..47.0).contains(&t) {
                -1.0
            } else {
                0.0
            };
            if k > 0 {
                z += v * dt + 0.5 * a * dt * dt;
                v += a * dt;
            }
            let zm = z as f32 + 0.25 * noise.next();
            let am = a as f32 + 0.05 * noise.next() + 0.02;
            (t, z as f32, zm, am)
        })
        .collect()
}

fn config(tolerance: f32) -> VerticalKalmanConfig {
    VerticalKalmanConfig {
        baro_sigma_m: 0.14,
        gain_reuse_tolerance: tolerance,
        ..VerticalKalmanConfig::default()
    }
}

/// One sample of each kind, accelerometer with barometer, through the use types'
/// entry point.
fn both(kf: &mut VerticalKalman, t: f64, a: Option<f32>, z: f32) -> KalmanOutcome {
    let t = at(t);
    let step = kf.step_to(t);
    let (_, outcome) = kf.predict_correct(t, step, a, h(z), 0.14);
    outcome.unwrap()
}

#[test]
fn settled_covariance_is_reused_and_tracks_like_the_full_filter() {
    for with_accel in [true, false] {
        let mut full = VerticalKalman::new(config(0.0)).unwrap();
        let mut reuse = VerticalKalman::new(config(0.01)).unwrap();
        let (mut reused, mut first_reuse) = (0, None);
        let (mut dh, mut dv, mut ds) = (0.0f32, 0.0f32, 0.0f32);
        for (t, _, zm, am) in hop(7) {
            let a = with_accel.then_some(am);
            both(&mut full, t, a, zm);
            let was_settled = reuse.bits.get(SETTLED);
            let before = reuse.core.p;
            both(&mut reuse, t, a, zm);
            assert!(!full.bits.get(SETTLED));
            if was_settled && reuse.bits.get(SETTLED) {
                // the covariance did not move: the sample took the reuse path
                assert_eq!(reuse.core.p, before);
                reused += 1;
                first_reuse.get_or_insert(t);
            }
            let (e, f) = (reuse.estimate().unwrap(), full.estimate().unwrap());
            dh = dh.max((e.height.meters() - f.height.meters()).abs());
            dv = dv.max((e.vertical_speed.mps() - f.vertical_speed.mps()).abs());
            ds = ds.max((e.height_sigma_m / f.height_sigma_m - 1.0).abs());
        }
        println!(
            "accel {with_accel}: {reused} of 4500 samples reused, first at {first_reuse:?} s; \
             largest difference from the full filter: height {dh:e} m, speed {dv:e} m/s, \
             height sigma {ds:e} (relative)"
        );
        // Settles during the 40 s at rest (about 30 s of convergence, see
        // SETTLE_CHANGE) and reuses most samples of the 90 s.
        assert!(first_reuse.is_some_and(|t| t < 40.0), "{first_reuse:?}");
        assert!(reused > 2000, "{reused}");
        // The reused gain differs from the full filter's by at most the settle
        // change and the 1 % tolerance (the hop moves the variance by about
        // 0.3 %): the estimates agree to well under the 5 cm and 10 cm/s
        // budgets of the drone-hop goal.
        assert!(dh < 1.0e-3, "{dh}");
        assert!(dv < 1.0e-3, "{dv}");
        assert!(ds < 1.0e-3, "{ds}");
    }
}

/// A settled filter after 60 s of the hop with an accelerometer sample taken with
/// each barometer sample; returns the next sample index.
fn settled_with_accel() -> (VerticalKalman, Vec<HopSample>, usize) {
    let samples = hop(11);
    let mut kf = VerticalKalman::new(config(0.01)).unwrap();
    for &(t, _, zm, am) in &samples[..3000] {
        both(&mut kf, t, Some(am), zm);
    }
    assert!(kf.bits.get(SETTLED));
    (kf, samples, 3000)
}

#[test]
fn refused_sample_leaves_a_settled_filter_unchanged() {
    let (mut kf, samples, i) = settled_with_accel();
    let (t, _, zm, am) = samples[i];
    let before = kf;
    let step = kf.step_to(at(t));
    // too high, a time not after the last, an unusable sigma
    let (_, r) = kf.predict_correct(at(t), step, Some(am), h(90_000.0), 0.14);
    assert_eq!(r, Err(Error::AboveModelTop));
    let last = samples[i - 1].0;
    let (_, r) = kf.predict_correct(at(last), kf.step_to(at(last)), Some(am), h(zm), 0.14);
    assert_eq!(r, Err(Error::NotIncreasing));
    let (_, r) = kf.predict_correct(at(t), step, Some(am), h(zm), f32::NAN);
    assert_eq!(r, Err(Error::InvalidSetting));
    assert_eq!(kf, before);
    // and the next good sample still takes the reuse path
    both(&mut kf, t, Some(am), zm);
    assert!(kf.bits.get(SETTLED));
    assert_eq!(kf.core.p, before.core.p);
}

#[test]
fn outlier_or_lone_prediction_ends_reuse_until_settled_again() {
    let (mut kf, samples, i) = settled_with_accel();
    let (t, _, zm, am) = samples[i];
    let p = kf.core.p;
    // an outlier takes the full cycle: rejected, the covariance grows
    assert!(matches!(
        both(&mut kf, t, Some(am), zm + 50.0),
        KalmanOutcome::Rejected { .. }
    ));
    assert!(!kf.bits.get(SETTLED));
    assert!(kf.core.p.hh > p.hh);
    // the next samples take full cycles until the covariance settles again
    let (t1, _, z1, a1) = samples[i + 1];
    both(&mut kf, t1, Some(a1), z1);
    assert!(!kf.bits.get(SETTLED));
    let mut again = None;
    for &(t, _, zm, am) in &samples[i + 2..] {
        both(&mut kf, t, Some(am), zm);
        if kf.bits.get(SETTLED) {
            again = Some(t - t1);
            break;
        }
    }
    println!("settled again {again:?} s after the outlier");
    assert!(again.is_some());

    // an accelerometer sample on its own (the 200 Hz pattern) ends reuse too
    let (mut kf, samples, i) = settled_with_accel();
    let (t, _, zm, am) = samples[i];
    kf.predict(at(t - 0.01), am).unwrap();
    assert!(!kf.bits.get(SETTLED));
    let p = kf.core.p;
    both(&mut kf, t, Some(am), zm);
    assert!(!kf.bits.get(SETTLED));
    assert_ne!(kf.core.p, p);
}

#[test]
fn reuse_needs_the_same_step_noise_and_mode() {
    let (kf, samples, i) = settled_with_accel();
    let (t, _, zm, am) = samples[i];
    // each of these takes the full cycle: the covariance moves
    let cases: [(&str, f64, Option<f32>, f32); 4] = [
        ("step 2 % longer", t + 0.0004, Some(am), 0.14),
        ("variance 2 % larger", t, Some(am), 0.14 * 1.01),
        ("no accelerometer sample", t, None, 0.14),
        ("accelerometer sample out of range", t, Some(1.0e6), 0.14),
    ];
    for (name, t, a, sigma) in cases {
        let mut k = kf;
        let (_, r) = k.predict_correct(at(t), k.step_to(at(t)), a, h(zm), sigma);
        assert!(matches!(r, Ok(KalmanOutcome::Accepted { .. })), "{name}");
        assert_ne!(k.core.p, kf.core.p, "{name}");
    }
    // within the tolerance it is reused
    let mut k = kf;
    let t = t + 0.0001;
    let (_, r) = k.predict_correct(at(t), k.step_to(at(t)), Some(am), h(zm), 0.14 * 1.004);
    assert!(matches!(r, Ok(KalmanOutcome::Accepted { .. })));
    assert_eq!(k.core.p, kf.core.p);
    assert!(k.bits.get(SETTLED));
}

#[test]
fn reuse_off_never_settles() {
    let mut kf = VerticalKalman::new(config(0.0)).unwrap();
    for (t, _, zm, am) in hop(3) {
        both(&mut kf, t, Some(am), zm);
        assert!(!kf.bits.get(SETTLED));
    }
    let bad = VerticalKalmanConfig {
        gain_reuse_tolerance: 0.2,
        ..VerticalKalmanConfig::default()
    };
    assert_eq!(VerticalKalman::new(bad), Err(Error::InvalidSetting));
}

/// Bit patterns of everything a filter holds (the struct's `PartialEq` would take
/// `0.0 == -0.0`).
fn bits_of(kf: &VerticalKalman) -> Vec<u64> {
    let c = kf.core;
    let p = c.p;
    let mut v: Vec<u64> = [c.h, c.v, c.b, p.hh, p.hv, p.hb, p.vv, p.vb, p.bb]
        .iter()
        .chain(&[kf.accel_mps2, kf.accel_age_s, kf.accepted_age_s])
        .map(|x| u64::from(x.to_bits()))
        .collect();
    v.extend([
        kf.time.as_micros(),
        (0..7).map(|i| u64::from(kf.bits.get(1 << i)) << i).sum(),
        u64::from(kf.consecutive_rejections),
        u64::from(kf.rejected),
        u64::from(kf.reacquisitions),
    ]);
    v
}

#[test]
fn one_pass_cycle_is_bit_identical_to_predict_then_correct() {
    // The use types' entry point applies an accelerometer sample and a barometer
    // sample taken together in one pass; the public `predict` then
    // `correct_with_sigma` apply them in two. Both must leave the same bits, on a
    // hop with outliers (every 97th sample 5 m off), a dropout (1 s gap), a burst
    // of outliers long enough to re-acquire, refused accelerometer samples (NaN,
    // 30 g, a second one at the same time) and samples without one.
    let mut one = VerticalKalman::new(config(0.0)).unwrap();
    let mut two = one;
    let (mut outliers, mut reacquired, mut same_time) = (0, 0, 0);
    for (k, (t, _, zm, am)) in hop(11).into_iter().enumerate() {
        if (1500..1550).contains(&k) {
            continue; // dropout
        }
        let z = if k % 97 == 0 || (3000..3015).contains(&k) {
            zm + 5.0
        } else {
            zm
        };
        let a = match k % 50 {
            13 => Some(f32::NAN),
            29 => Some(30.0 * crate::atmosphere::STANDARD_GRAVITY),
            41 => None,
            _ => Some(am),
        };
        if k % 50 == 7 {
            // an accelerometer sample at this time already applied on its own
            assert_eq!(one.predict(at(t), am), two.predict(at(t), am));
        }
        let (p1, c1) = one.predict_correct(at(t), one.step_to(at(t)), a, h(z), 0.14);
        let p2 = match a {
            Some(a) => two.predict(at(t), a),
            None => Ok(()),
        };
        let c2 = two.correct_with_sigma(at(t), h(z), 0.14);
        assert_eq!((p1, c1), (p2, c2), "sample {k}");
        assert_eq!(bits_of(&one), bits_of(&two), "sample {k}");
        if p1 == Err(Error::NotIncreasing) {
            same_time += 1;
        }
        match c1 {
            Ok(KalmanOutcome::Rejected { .. }) => outliers += 1,
            Ok(KalmanOutcome::Reacquired) => reacquired += 1,
            _ => {}
        }
    }
    // the cases above were reached
    assert!(
        outliers > 30 && reacquired >= 2 && same_time > 50,
        "{outliers} {reacquired} {same_time}"
    );
}
