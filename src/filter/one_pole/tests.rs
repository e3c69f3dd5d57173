//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

#[test]
fn step_response_matches_closed_form_with_irregular_steps() {
    // First-order step response y(t) = 1 - exp(-t / tau) (Ogata, Modern Control
    // Engineering, sec. 5-3, from memory), evaluated in f64 as the reference.
    let fc = 2.0f32;
    let tau = 1.0 / (2.0 * core::f64::consts::PI * fc as f64);
    let mut lp = OnePole::new(fc).unwrap();
    assert_eq!(lp.update(at(10.0), 0.0).unwrap(), 0.0);
    let mut t = 10.0f64;
    let steps = [
        0.001, 0.02, 0.005, 0.013, 0.05, 0.0007, 0.1, 0.03, 0.2, 0.011,
    ];
    for k in 0..60 {
        t += steps[k % steps.len()];
        let y = lp.update(at(t), 1.0).unwrap() as f64;
        let reference = 1.0 - (-(t - 10.0) / tau).exp();
        assert!((y - reference).abs() < 2e-6, "t {t}: {y} vs {reference}");
    }
}

#[test]
fn time_constant_is_one_over_two_pi_fc() {
    let lp = OnePole::new(0.5).unwrap();
    assert!((lp.time_constant_s() - 1.0 / core::f32::consts::PI).abs() < 1e-6);
}

#[test]
fn long_gap_jumps_to_input() {
    let mut lp = OnePole::new(1.0).unwrap();
    lp.update(at(0.0), 5.0).unwrap();
    assert_eq!(lp.update(at(1.0e9), -3.0).unwrap(), -3.0);
}

#[test]
fn bad_input_leaves_state_unchanged() {
    let mut lp = OnePole::new(1.0).unwrap();
    assert_eq!(OnePole::new(0.0), Err(Error::InvalidSetting));
    assert_eq!(OnePole::new(f32::NAN), Err(Error::InvalidSetting));
    lp.update(at(1.0), 1.0).unwrap();
    lp.update(at(1.5), 2.0).unwrap();
    let before = lp;
    assert_eq!(lp.update(at(1.5), 3.0), Err(Error::NotIncreasing));
    assert_eq!(lp.update(at(1.2), 3.0), Err(Error::NotIncreasing));
    assert_eq!(lp.update(at(2.0), f32::NAN), Err(Error::NotFinite));
    assert_eq!(lp.set_cutoff_hz(-1.0), Err(Error::InvalidSetting));
    assert_eq!(lp, before);
}
