//! Unit tests of the parent module.

use super::*;

fn pa(x: f32) -> Pressure {
    Pressure::from_pa(x).unwrap()
}

#[test]
fn isothermal_column_matches_closed_form() {
    // Isothermal air: H = (Rd T / g0) ln(p0 / p) (U.S. 1976 eq. 33b).
    let t = Temperature::from_kelvin(250.0).unwrap();
    let mut s =
        Sounding::<32>::new(Height::ZERO, Gravity::Standard, pa(100_000.0), t, None).unwrap();
    let mut p = 100_000.0f32;
    let mut last = None;
    while p > 20_000.0 {
        p *= 0.999;
        last = Some(s.update(pa(p), Some(t), None).unwrap());
    }
    let exact = (R_OVER_G as f64) * 250.0 * (100_000.0f64 / p as f64).ln();
    let got = last.unwrap().geopotential.meters() as f64;
    assert!((got - exact).abs() < 0.05, "{got} vs {exact}");
    // the profile thinned to fit and still reproduces the column
    assert!(s.profile().len() <= 32);
    let on_profile = s.profile().geopotential_at(pa(50_000.0)).unwrap().meters() as f64;
    let exact_mid = (R_OVER_G as f64) * 250.0 * 2.0f64.ln();
    assert!((on_profile - exact_mid).abs() < 0.05);
}

#[test]
fn profile_rejects_bad_levels_unchanged() {
    let mut prof = Profile::<2>::new(0.01).unwrap();
    let a = Level {
        pressure_pa: 1000.0,
        geopotential_m: 0.0,
        virtual_temperature_k: 280.0,
    };
    let b = Level {
        pressure_pa: 900.0,
        geopotential_m: 800.0,
        virtual_temperature_k: 275.0,
    };
    let c = Level {
        pressure_pa: 800.0,
        geopotential_m: 1700.0,
        virtual_temperature_k: 270.0,
    };
    prof.push(a).unwrap();
    let before = prof.clone();
    assert_eq!(prof.push(a), Err(Error::NotIncreasing));
    assert_eq!(prof, before);
    prof.push(b).unwrap();
    let before = prof.clone();
    assert_eq!(prof.push(c), Err(Error::CapacityFull));
    assert_eq!(prof, before);
    assert_eq!(Profile::<1>::new(0.01), Err(Error::InvalidSetting));
    assert_eq!(Profile::<8>::new(0.0), Err(Error::InvalidSetting));
    let nan = Level {
        pressure_pa: f32::NAN,
        ..c
    };
    let mut prof = Profile::<8>::new(0.01).unwrap();
    assert_eq!(prof.push(nan), Err(Error::NotFinite));
    assert!(prof.is_empty());
    assert_eq!(prof.geopotential_at(pa(500.0)), Err(Error::NotEnoughData));
}

#[test]
fn bad_update_leaves_state_unchanged() {
    let t = Temperature::from_kelvin(280.0).unwrap();
    let mut s =
        Sounding::<8>::new(Height::ZERO, Gravity::Standard, pa(100_000.0), t, None).unwrap();
    s.update(pa(99_000.0), Some(t), None).unwrap();
    let before = s.clone();
    // a pressure far outside the geopotential range of the gravity model
    assert!(s.update(pa(1.0e-30), Some(t), None).is_err());
    assert_eq!(s, before);
}
