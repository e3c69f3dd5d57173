//! Unit tests of the parent module.

#[allow(unused_imports)]
use crate::time::{Instant, at};
extern crate std;
use super::*;
use crate::track::{AscentTotals, PressureTendency, RestConfig};

fn p_at(z: f32) -> Pressure {
    US_1976
        .pressure_at(Height::from_meters(z).unwrap())
        .unwrap()
}

#[test]
fn state_sizes() {
    // Printed for the README and design table (cargo test -- --nocapture).
    let sizes = [
        ("HikeTracker", core::mem::size_of::<HikeTracker>()),
        ("HikeState", core::mem::size_of::<HikeState>()),
        ("HikeConfig", core::mem::size_of::<HikeConfig>()),
        ("AscentTotals", core::mem::size_of::<AscentTotals>()),
        ("PressureTendency", core::mem::size_of::<PressureTendency>()),
        (
            "TendencyRing",
            core::mem::size_of::<crate::track::tendency::TendencyRing>(),
        ),
        ("RestDetector", core::mem::size_of::<RestDetector>()),
        ("RestConfig", core::mem::size_of::<RestConfig>()),
        ("HikeReport", core::mem::size_of::<HikeReport>()),
    ];
    for (name, size) in sizes {
        std::println!("size_of::<{name}>() = {size} bytes");
    }
    // Fixed size, no heap; at most the 256 bytes the design notes allow for the whole
    // walk's state (the hike tracker alone must not use them all up).
    assert!(core::mem::size_of::<HikeTracker>() <= 256);
}

#[test]
fn bad_samples_leave_state_unchanged() {
    let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
    for i in 0..100 {
        t.update(at(f64::from(i)), p_at(800.0 + i as f32 * 0.1))
            .unwrap();
    }
    let before = t.clone();
    assert_eq!(t.update(at(99.0), p_at(800.0)), Err(Error::NotIncreasing));
    assert_eq!(t.update(at(50.0), p_at(800.0)), Err(Error::NotIncreasing));
    let too_low = Pressure::from_pa(20_000.0).unwrap();
    assert_eq!(t.update(at(100.0), too_low), Err(Error::AboveModelTop));
    let too_high = Pressure::from_pa(120_000.0).unwrap();
    assert_eq!(t.update(at(100.0), too_high), Err(Error::BelowModelBottom));
    let height_too_high = Height::from_meters(20_000.0).unwrap();
    assert_eq!(
        t.update_pressure_altitude(at(100.0), height_too_high),
        Err(Error::AboveModelTop)
    );
    assert_eq!(t, before);
    // and it goes on normally
    assert!(t.update(at(100.0), p_at(810.0)).is_ok());
}

#[test]
fn fixes_before_first_sample_are_refused() {
    let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
    let before = t.clone();
    assert_eq!(
        t.fix_elevation(Height::from_meters(100.0).unwrap()),
        Err(Error::NotEnoughData)
    );
    assert_eq!(
        t.set_elevation(Height::from_meters(100.0).unwrap()),
        Err(Error::NotEnoughData)
    );
    assert_eq!(t, before);
}

#[test]
fn config_validation() {
    let d = HikeConfig::default();
    assert!(d.validate().is_ok());
    let cases = [
        (
            HikeConfig {
                hysteresis_band_m: 0.0,
                ..d
            },
            Error::InvalidSetting,
        ),
        (
            HikeConfig {
                smoothing_time_constant_s: f32::NAN,
                ..d
            },
            Error::NotFinite,
        ),
        (
            HikeConfig {
                min_pressure_pa: 120_000.0,
                ..d
            },
            Error::InvalidSetting,
        ),
        (
            HikeConfig {
                max_pressure_pa: 200_000.0,
                ..d
            },
            Error::InvalidSetting,
        ),
        (
            HikeConfig {
                rest: RestConfig {
                    entry_window_s: -1.0,
                    ..d.rest
                },
                ..d
            },
            Error::InvalidSetting,
        ),
    ];
    for (config, error) in cases {
        assert_eq!(HikeTracker::new(config), Err(error));
    }
    // The settings come back as given (band in whole centimetres).
    let c = HikeConfig {
        hysteresis_band_m: 2.5,
        smoothing_time_constant_s: 4.0,
        ..d
    };
    assert_eq!(HikeTracker::new(c).unwrap().config(), c);
}

#[test]
fn set_elevation_moves_height_not_totals() {
    let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
    t.update(at(0.0), p_at(500.0)).unwrap();
    t.set_elevation(Height::from_meters(700.0).unwrap())
        .unwrap();
    let r = t.update(at(1.0), p_at(500.0)).unwrap();
    assert!((r.height.meters() - 700.0).abs() < 0.01);
    assert_eq!(r.ascent_m, 0.0);
    // A slewed fix of -40 m while climbing: height follows, totals count only the
    // climb (0.1 m/s for 600 s = 60 m).
    let mut last = r;
    for i in 2..=601 {
        let z = 500.0 + 0.1 * (i - 1) as f32;
        if i == 100 {
            let shown = last.height.meters();
            t.fix_elevation(Height::from_meters(shown - 40.0).unwrap())
                .unwrap();
        }
        last = t.update(at(f64::from(i)), p_at(z)).unwrap();
    }
    // Truth at the end 560 m, displayed = 560 + 200 - 40 minus smoothing lag (0.2 m).
    assert!(
        (last.height.meters() - 720.0).abs() < 0.5,
        "{}",
        last.height.meters()
    );
    assert!((last.ascent_m - 60.0).abs() < 0.5, "{}", last.ascent_m);
    assert_eq!(last.descent_m, 0.0);
}

#[test]
fn declared_rest_holds_height_and_totals() {
    let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
    t.update(at(0.0), p_at(1000.0)).unwrap();
    t.declare_rest();
    // Weather: station pressure falls 1.5 hPa per hour throughout.
    let weather = |time: f32| -150.0 * time / 3600.0;
    let p0 = p_at(1000.0).pa();
    let mut r = t.update(at(1.0), p_at(1000.0)).unwrap();
    for i in 2..7200 {
        let p = Pressure::from_pa(p0 + weather(i as f32)).unwrap();
        r = t.update(at(f64::from(i)), p).unwrap();
        assert!(r.resting);
    }
    assert!((r.height.meters() - 1000.0).abs() < 0.01);
    assert_eq!(r.ascent_m + r.descent_m, 0.0);
    // About 27 m of weather drift attributed: 300 Pa / (rho g), rho = 1.112 kg/m^3 at
    // 1000 m (U.S. 1976 tables, from memory), g = 9.807 m/s^2.
    assert!(
        (t.weather_drift_m() - 27.5).abs() < 1.0,
        "{}",
        t.weather_drift_m()
    );
    t.end_declared_rest();
    // Still not moving: stays at rest, height held.
    for i in 7200..7300 {
        let p = Pressure::from_pa(p0 + weather(i as f32)).unwrap();
        let r = t.update(at(f64::from(i)), p).unwrap();
        assert!(r.resting);
        assert!((r.height.meters() - 1000.0).abs() < 0.1);
    }
    // Then a real climb of 50 m at 0.2 m/s while the weather goes on falling: the
    // climb is counted, the weather rate learnt at rest is taken out.
    for i in 1..=250 {
        let time = 7300.0 + i as f32;
        let z = 1000.0 + 0.2 * i as f32;
        let p = Pressure::from_pa(p_at(z).pa() + weather(time)).unwrap();
        r = t.update(at(f64::from(time)), p).unwrap();
    }
    assert!(!r.resting);
    assert!((r.ascent_m - 50.0).abs() < 1.0, "{}", r.ascent_m);
    assert!(
        (r.height.meters() - 1050.0).abs() < 1.0,
        "{}",
        r.height.meters()
    );
}
