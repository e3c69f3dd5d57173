//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

fn hpa(x: f32) -> Pressure {
    Pressure::from_hpa(x).unwrap()
}

#[test]
fn needs_three_hours() {
    let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
    for s in 0..(3 * 3600) {
        t.update(at(f64::from(s)), hpa(1000.0 - s as f32 / 3600.0))
            .unwrap();
    }
    // Last stored value is at 10 800 - 600 s: only 18 slots so far.
    assert_eq!(t.tendency_hpa(), None);
    t.update(at(10_800.0), hpa(997.0)).unwrap();
    let change = t.tendency_hpa().unwrap();
    assert!((change + 3.0).abs() < 1e-3, "{change}");
    // Exactly 3 hPa: "3 hPa or more" raises the alert.
    assert!(t.falling_alert());
}

#[test]
fn small_fall_no_alert_rise_no_alert() {
    for rate in [-0.9f32, 0.0, 2.0] {
        let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
        for minute in 0..=200 {
            t.update(
                at(f64::from(minute) * 60.0),
                hpa(1010.0 + rate * minute as f32 / 60.0),
            )
            .unwrap();
        }
        let change = t.tendency_hpa().unwrap();
        assert!((change - 3.0 * rate).abs() < 0.01, "{rate}: {change}");
        assert!(!t.falling_alert());
    }
}

#[test]
fn marks_stay_on_the_ten_minute_grid_at_50_hz() {
    // Steps of 0.02 s (not exact in binary, 2000 units of the countdown): each
    // stored value must fall on the first call at or after each 10-minute mark. A steep fall (3 Pa/s) makes every stored
    // value differ from the one before, so a store shows as a new latest value.
    let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
    let mut stores = 0;
    let mut last_latest = None;
    for i in 0..(3 * 3600 * 50 + 10) {
        let time = f64::from(i) * 0.02;
        t.update(at(time), hpa(1010.0 - 0.03 * time as f32))
            .unwrap();
        let latest = t.latest_hpa();
        if latest != last_latest {
            // k-th store at the k-th mark (the first call is a store at 0)
            let mark = f64::from(stores) * 600.0;
            assert!(
                time >= mark - 1e-9 && time < mark + 0.02,
                "store {stores} at {time} s, mark {mark} s"
            );
            stores += 1;
            last_latest = latest;
        }
    }
    assert_eq!(stores, 19);
    // 3 Pa/s over 3 h: -324 hPa, to the 0.02 hPa steps
    let change = t.tendency_hpa().unwrap();
    assert!((change + 324.0).abs() < 0.05, "{change}");
}

#[test]
fn bad_time_leaves_state_unchanged() {
    let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
    t.update(at(100.0), hpa(1000.0)).unwrap();
    let before = t.clone();
    assert_eq!(t.update(at(100.0), hpa(990.0)), Err(Error::NotIncreasing));
    assert_eq!(t.update(at(50.0), hpa(990.0)), Err(Error::NotIncreasing));
    assert_eq!(t, before);
}

#[test]
fn gaps_leave_holes_and_long_gaps_empty_the_ring() {
    let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
    t.update(at(0.0), hpa(1000.0)).unwrap();
    // 3 h later: the value 3 h ago exists, but the gap made the 10-minute slots empty.
    t.update(at(10_800.0), hpa(998.0)).unwrap();
    assert_eq!(t.tendency_hpa(), Some(-2.0));
    // A gap of a day: nothing left.
    t.update(at(10_800.0 + 86_400.0), hpa(990.0)).unwrap();
    assert_eq!(t.tendency_hpa(), None);
    assert_eq!(t.latest_hpa(), Some(990.0));
}

#[test]
fn values_outside_the_stored_range_are_missing() {
    let mut t = PressureTendency::new(TendencyConfig::default()).unwrap();
    t.update(at(0.0), hpa(499.0)).unwrap();
    assert_eq!(t.latest_hpa(), None);
    t.update(at(600.0), hpa(500.0)).unwrap();
    assert_eq!(t.latest_hpa(), Some(500.0));
    t.update(at(1200.0), hpa(1811.0)).unwrap();
    assert_eq!(t.latest_hpa(), None);
    t.update(at(1800.0), hpa(1013.25)).unwrap();
    // 1013.25 hPa lies half-way between steps: stored within half a step (1 Pa,
    // 0.01 hPa), plus the f32 rounding of the hPa value (about 6e-5 hPa).
    assert!((t.latest_hpa().unwrap() - 1013.25).abs() <= 0.01 + 1e-4);
}

#[test]
fn config_validation() {
    let bad = TendencyConfig {
        falling_alert_hpa: -1.0,
    };
    assert_eq!(PressureTendency::new(bad), Err(Error::InvalidSetting));
}
