//! Unit tests of the parent module.

use super::*;

/// The use types take U.S. 1976 layer temperatures unchecked (`from_valid_kelvin`):
/// over the model's whole pressure range (geometric sweep, 2 000 points, both ends
/// included) every one passes `Temperature::from_kelvin`, between 186.8 K (the
/// 84.852 km' top of the table, U.S. Standard Atmosphere 1976, Table 4: 186.946 K,
/// value from memory) and 320.7 K (-5 km' at -6.5 K/km from 288.15 K).
#[test]
fn standard_layer_temperatures_stay_in_the_air_range() {
    let (top, bottom) = (US_1976.top_pressure_pa(), US_1976.bottom_pressure_pa());
    let (mut lo, mut hi) = (f32::MAX, f32::MIN);
    for i in 0..=2000 {
        let f = i as f32 / 2000.0;
        let pa = (top * (bottom / top).powf(f)).clamp(top, bottom);
        let p = Pressure::from_pa(pa).unwrap();
        let (_, t) = US_1976.pressure_altitude_with_kelvin(p).unwrap();
        assert!(Temperature::from_kelvin(t).is_ok(), "{pa} Pa: {t} K");
        lo = lo.min(t);
        hi = hi.max(t);
    }
    assert!(
        (186.8..187.0).contains(&lo) && (320.6..320.7).contains(&hi),
        "{lo} {hi}"
    );
}

/// The argument `-(R L / g0) ln(p / pb)` of the layer inverse stays within the
/// series range of `math::small_exp_m1` (|y| <= 0.35) over every layer of both
/// standards, from the layer's base to the next base (and the model's top): the
/// fallback is never taken for a pressure the model accepts.
#[test]
fn layer_inverse_stays_in_the_series_range() {
    for standard in [US_1976, ICAO] {
        for pair in standard.layers.windows(2) {
            let [layer, next] = pair else { continue };
            // the range check lets pressures 1e-6 beyond the top through
            let top = next.base_pressure_pa * (1.0 - 1.0e-6);
            let y = layer.exponent * (top / layer.base_pressure_pa).ln();
            assert!(
                y.abs() <= 0.3,
                "{} layer at {} m': {y}",
                standard.name,
                layer.base_geopotential_m
            );
        }
        // below the bottom base: only the 1e-6 margin
        let bottom = standard.layers[0];
        let y = bottom.exponent * (1.0 + 1.0e-6f32).ln();
        assert!(y.abs() <= 1.0e-6);
    }
}
