//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

fn h(m: f32) -> Height {
    Height::from_meters(m).unwrap()
}

#[test]
fn single_sample_is_not_a_reference() {
    let mut g = GroundReference::new(GroundReferenceConfig::default()).unwrap();
    g.push(at(0.0), h(250.0)).unwrap();
    assert!(!g.is_ready());
    let before = g;
    assert_eq!(g.arm(), Err(Error::NotEnoughData));
    assert_eq!(g.height_above(h(260.0)), Err(Error::NotEnoughData));
    assert_eq!(g, before);
    assert_eq!(
        GroundReference::new(GroundReferenceConfig {
            min_samples: 1,
            min_duration_s: 0.0
        }),
        Err(Error::InvalidSetting)
    );
}

#[test]
fn needs_both_count_and_duration() {
    let cfg = GroundReferenceConfig {
        min_samples: 10,
        min_duration_s: 2.0,
    };
    let mut g = GroundReference::new(cfg).unwrap();
    // 20 samples in 0.19 s: enough samples, not enough time.
    for k in 0..20 {
        g.push(at(k as f64 * 0.01), h(100.0)).unwrap();
    }
    assert!(!g.is_ready());
    g.push(at(2.5), h(100.0)).unwrap();
    assert!(g.is_ready());
}

#[test]
fn averages_alternating_noise_and_rezeroes() {
    // Mean of +-0.2 m around 431.7 m is 431.7 m (definition of the mean).
    let mut g = GroundReference::new(GroundReferenceConfig::default()).unwrap();
    for k in 0..100 {
        let noise = if k % 2 == 0 { 0.2 } else { -0.2 };
        g.push(at(k as f64 * 0.02), h(431.7 + noise)).unwrap();
    }
    let r = g.arm().unwrap();
    assert!((r.meters() - 431.7).abs() < 1e-4);
    // Samples after arming are ignored.
    assert!(!g.push(at(3.0), h(500.0)).unwrap());
    assert_eq!(g.reference(), Some(r));
    assert!((g.height_above(h(441.7)).unwrap().meters() - 10.0).abs() < 1e-4);
    g.rezero();
    assert!(!g.is_armed());
    assert_eq!(g.sample_count(), 0);
    assert_eq!(g.reference(), None);
}

#[test]
fn bad_time_leaves_state_unchanged() {
    let mut g = GroundReference::new(GroundReferenceConfig::default()).unwrap();
    g.push(at(1.0), h(1.0)).unwrap();
    let before = g;
    assert_eq!(g.push(at(1.0), h(1.0)), Err(Error::NotIncreasing));
    assert_eq!(g, before);
}
