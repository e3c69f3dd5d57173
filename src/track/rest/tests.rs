//! Unit tests of the parent module.

use super::*;

const C: RestConfig = RestConfig::DEFAULT;

#[test]
fn config_validation() {
    assert_eq!(RestConfig::default().validate(), Ok(()));
    let mut c = RestConfig {
        exit_band_m: f32::NAN,
        ..RestConfig::default()
    };
    assert_eq!(c.validate(), Err(Error::NotFinite));
    c.exit_band_m = 0.0;
    assert_eq!(c.validate(), Err(Error::InvalidSetting));
}

#[test]
fn enters_after_window_and_leaves_on_climb() {
    let mut d = RestDetector::new();
    d.start(100.0);
    let mut entered_at = None;
    for i in 1..=300 {
        // still, with a weather drift of 0.14 m/min (about 1 hPa/h)
        let h = 100.0 + 0.14 / 60.0 * i as f32;
        if d.update(&C, 1.0, h) == RestEvent::Entered {
            entered_at = Some(i);
        }
    }
    assert_eq!(entered_at, Some(60));
    assert_eq!(d.state(), RestState::Resting);
    // climb at 5 m/min: leaves within one minute
    let mut left = None;
    for i in 301..=400 {
        let h = 100.7 + 5.0 / 60.0 * (i - 300) as f32;
        if let RestEvent::Left { level_m } = d.update(&C, 1.0, h) {
            left = Some((i, level_m));
            break;
        }
    }
    let (i, level) = left.unwrap();
    assert!(i - 300 <= 60, "left after {} s", i - 300);
    // Level where the weather alone would be: 100 + 0.14 m/min * elapsed.
    let weather_level = 100.0 + 0.14 / 60.0 * i as f32;
    assert!(
        (level - weather_level).abs() < 0.3,
        "level {level} vs {weather_level}"
    );
    assert_eq!(d.state(), RestState::Moving);
}

#[test]
fn slope_steeper_than_weather_never_enters_rest() {
    // 30 m/h: within the 1 m spread of a 60 s window, but steeper than 20 m/h.
    let mut d = RestDetector::new();
    d.start(0.0);
    for i in 1..=3600 {
        let h = 30.0 / 3600.0 * i as f32;
        assert_eq!(d.update(&C, 1.0, h), RestEvent::Unchanged, "at {i} s");
    }
    // 10 m/h is taken for weather.
    let mut d = RestDetector::new();
    d.start(0.0);
    let entered =
        (1..=120).any(|i| d.update(&C, 1.0, 10.0 / 3600.0 * i as f32) == RestEvent::Entered);
    assert!(entered);
}

#[test]
fn declared_rest_has_no_automatic_exit() {
    let mut d = RestDetector::new();
    d.start(0.0);
    d.declare(0.0);
    for i in 1..100 {
        assert_eq!(d.update(&C, 1.0, i as f32), RestEvent::Unchanged);
    }
    d.release(99.0);
    assert_eq!(d.state(), RestState::Resting);
}
