//! Unit tests of the parent module.

use super::*;

#[test]
fn qnh_standard_reads_pressure_altitude() {
    // With QNH = 1013.25 hPa the shift is zero (ICAO Doc 7488 definition; the
    // reference is the crate's pressure altitude, checked in tests/atmosphere.rs).
    let qnh = AltimeterSetting::SeaLevel { qnh_pa: 101_325.0 };
    let p = Pressure::from_hpa(800.0).unwrap();
    let a = qnh.height(p).unwrap().meters();
    let b = pressure_altitude(p).unwrap().meters();
    assert!((a - b).abs() < 1e-3);
    assert_eq!(AltimeterSetting::Standard.setting_pressure(), Ok(None));
}

#[test]
fn qfe_reads_zero_on_the_field() {
    // QFE reads zero on the field (ICAO definition of QFE, from memory).
    let p = Pressure::from_hpa(912.3).unwrap();
    let s = AltimeterSetting::field_from_reading(p);
    assert!(s.height(p).unwrap().meters().abs() < 1e-4);
}
