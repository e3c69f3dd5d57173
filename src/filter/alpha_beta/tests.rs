//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

fn h(m: f32) -> Height {
    Height::from_meters(m).unwrap()
}

#[test]
fn tracks_ramp_with_zero_steady_state_error() {
    // Zero steady-state error for constant velocity (common practice).
    let mut ab = AlphaBeta::new(0.4, 0.08, 1.0).unwrap();
    let rate = -3.0f32;
    // Irregular steps around 50 Hz.
    let steps = [0.02, 0.019, 0.021, 0.02, 0.018, 0.022];
    let mut t = 0.0f64;
    for k in 0..2000 {
        t += steps[k % steps.len()];
        ab.update(at(t), h(300.0 + rate * t as f32)).unwrap();
    }
    let truth = 300.0 + rate * t as f32;
    assert!((ab.height().unwrap().meters() - truth).abs() < 2e-4);
    assert!((ab.vertical_speed().unwrap().mps() - rate).abs() < 2e-3);
}

#[test]
fn critically_damped_gains() {
    // theta = 0.8: alpha = 1 - theta^2 = 0.36, beta = (1 - theta)^2 = 0.04 (Brookner
    // 1998, ch. 1, fading-memory g-h gains, from memory).
    let ab = AlphaBeta::critically_damped(0.8, 1.0).unwrap();
    assert!((ab.alpha - 0.36).abs() < 1e-6);
    assert!((ab.beta - 0.04).abs() < 1e-6);
    assert_eq!(
        AlphaBeta::critically_damped(1.0, 1.0),
        Err(Error::InvalidSetting)
    );
}

#[test]
fn rejects_bad_settings() {
    assert_eq!(AlphaBeta::new(0.0, 0.1, 1.0), Err(Error::InvalidSetting));
    // beta = 3 = 4 - 2 alpha: on the edge of the stability region (Jury test,
    // common practice), refused.
    assert_eq!(AlphaBeta::new(0.5, 3.0, 1.0), Err(Error::InvalidSetting));
    assert_eq!(AlphaBeta::new(0.5, 0.1, 0.0), Err(Error::InvalidSetting));
    assert_eq!(
        AlphaBeta::new(f32::NAN, 0.1, 1.0),
        Err(Error::InvalidSetting)
    );
}

#[test]
fn dropout_restarts_at_measurement() {
    let mut ab = AlphaBeta::new(0.5, 0.1, 0.5).unwrap();
    for k in 0..100 {
        let t = k as f64 * 0.02;
        ab.update(at(t), h(10.0 * t as f32)).unwrap();
    }
    // 30 s gap: restart at the sample instead of extrapolating 10 m/s.
    ab.update(at(32.0), h(25.0)).unwrap();
    assert_eq!(ab.height().unwrap().meters(), 25.0);
    assert_eq!(ab.vertical_speed().unwrap().mps(), 0.0);
}

#[test]
fn bad_time_leaves_state_unchanged() {
    let mut ab = AlphaBeta::new(0.5, 0.1, 1.0).unwrap();
    assert_eq!(ab.height(), None);
    ab.update(at(0.0), h(1.0)).unwrap();
    ab.update(at(0.1), h(1.2)).unwrap();
    let before = ab;
    assert_eq!(ab.update(at(0.1), h(1.3)), Err(Error::NotIncreasing));
    assert_eq!(ab.update(at(-5.0), h(1.3)), Err(Error::NotIncreasing));
    assert_eq!(ab, before);
}
