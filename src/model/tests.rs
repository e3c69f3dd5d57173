//! Unit tests of the parent module.

use super::*;

fn hpa(x: f32) -> Pressure {
    Pressure::from_hpa(x).unwrap()
}

#[test]
fn standard_from_sea_level_is_pressure_altitude() {
    // U.S. 1976 by construction: same layers, same closed forms. Reference: the
    // crate's pressure altitude, checked against the standard in tests/atmosphere.rs.
    let r = Reference::new(hpa(1013.25), Height::ZERO);
    for p in [1050.0, 1013.0, 850.0, 500.0, 226.0, 100.0, 10.0, 1.0] {
        let a = TemperatureModel::Standard
            .height(&r, hpa(p), &AirSample::DRY)
            .unwrap();
        let b = crate::atmosphere::pressure_altitude(hpa(p)).unwrap();
        assert!(
            (a.meters() - b.meters()).abs() < 0.02 + 2e-6 * b.meters().abs(),
            "{p}"
        );
    }
}

#[test]
fn forward_and_inverse_agree() {
    // Self-consistency (height of the model's own pressure), no external value.
    let r = Reference::new(hpa(950.0), Height::from_meters(600.0).unwrap());
    let m = TemperatureModel::StandardOffset { delta_k: -12.0 };
    for z in [-300.0, 600.0, 601.0, 5000.0, 15000.0, 40000.0] {
        let zh = Height::from_meters(z).unwrap();
        let p = m.pressure_at(&r, zh, &AirSample::DRY).unwrap();
        let back = m.height(&r, p, &AirSample::DRY).unwrap();
        assert!(
            (back.meters() - z).abs() < 0.01 + 1e-6 * z.abs(),
            "{z} {back:?}"
        );
    }
}
