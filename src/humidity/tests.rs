//! Unit tests of the parent module.

use super::*;

fn tc(c: f32) -> Temperature {
    Temperature::from_celsius(c).unwrap()
}

#[test]
fn saturation_at_triple_point_and_boiling() {
    // 0 degC: 611.2 Pa over water and ice (triple point 611.657 Pa at 0.01 degC;
    // IAPWS, from memory). The formulas' own constants give 610.94 / 611.21 at 0 degC.
    assert!((saturation_vapour_pressure_water(tc(0.0)) - 610.94).abs() < 0.05);
    assert!((saturation_vapour_pressure_ice(tc(0.0)) - 611.21).abs() < 0.05);
    // 30 degC: 42.43 hPa (WMO-No. 8 / Smithsonian tables, from memory); Magnus
    // within 0.4 % (Alduchov & Eskridge 1996 stated accuracy).
    let e30 = saturation_vapour_pressure_water(tc(30.0));
    assert!((e30 / 4243.0 - 1.0).abs() < 0.004, "{e30}");
    // -20 degC over ice: 1.032 hPa (Smithsonian tables, from memory).
    let ei = saturation_vapour_pressure_ice(tc(-20.0));
    assert!((ei / 103.2 - 1.0).abs() < 0.004, "{ei}");
    // Below 0 degC, ice saturates at lower pressure than supercooled water
    // (physics of the triple point; Wallace & Hobbs 2006 fig. 3.9).
    assert!(ei < saturation_vapour_pressure_water(tc(-20.0)));
}

#[test]
fn mixing_ratio_and_virtual_temperature_closed_form() {
    // Wallace & Hobbs (2006) eq. 3.59 / 3.16 evaluated in f64 (Python):
    // e = 2000 Pa, p = 100000 Pa: w = 0.622*2000/98000 = 0.012693878;
    // Tv/T = (1 + w/0.622)/(1 + w) = 1.0076176; q = w/(1+w) = 0.01253476.
    let p = Pressure::from_pa(100_000.0).unwrap();
    let w = MixingRatio::from_vapour_pressure(p, 2000.0).unwrap();
    assert!((w.kg_per_kg() - 0.012_693_878).abs() < 1e-7);
    assert!((w.virtual_temperature_factor() - 1.007_617_6).abs() < 1e-6);
    assert!((w.specific_humidity() - 0.012_534_77).abs() < 1e-7);
    assert_eq!(MixingRatio::DRY.virtual_temperature_factor(), 1.0);
}

#[test]
fn bad_humidity_inputs_are_typed_errors() {
    let p = Pressure::from_pa(1000.0).unwrap();
    assert_eq!(
        MixingRatio::from_vapour_pressure(p, -1.0),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(
        MixingRatio::from_vapour_pressure(p, 1000.0),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(
        MixingRatio::from_vapour_pressure(p, f32::NAN),
        Err(Error::NotFinite)
    );
    assert_eq!(
        MixingRatio::from_kg_per_kg(-0.001),
        Err(Error::HumidityOutOfRange)
    );
    // 60 degC saturated air at 100 hPa: e = 199 hPa > p (steam tables, from memory;
    // the AERK form, used here beyond its stated range, gives 200 hPa).
    let hot = Temperature::from_celsius(60.0).unwrap();
    assert_eq!(
        mixing_ratio(
            Pressure::from_hpa(100.0).unwrap(),
            hot,
            RelativeHumidity::from_percent(100.0).unwrap()
        ),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(
        dew_point(hot, RelativeHumidity::DRY),
        Err(Error::HumidityOutOfRange)
    );
}

#[test]
fn dew_point_inverts_saturation() {
    // Definition: es(Td) = RH es(T) (WMO-No. 8, chapter 4).
    let t = tc(25.0);
    let rh = RelativeHumidity::from_percent(60.0).unwrap();
    let td = dew_point(t, rh).unwrap();
    let lhs = saturation_vapour_pressure_water(td);
    assert!((lhs / vapour_pressure(t, rh) - 1.0).abs() < 1e-4);
    // 25 degC, 60 %: dew point 16.7 degC (psychrometric tables, from memory).
    assert!((td.celsius() - 16.7).abs() < 0.2, "{}", td.celsius());
    let sat = dew_point(t, RelativeHumidity::from_percent(100.0).unwrap()).unwrap();
    assert!((sat.kelvin() - t.kelvin()).abs() < 1e-3);
}
