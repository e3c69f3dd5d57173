//! Layer temperature models, humidity and datums, checked against closed forms, an f64
//! numerical integration of the hydrostatic equation, published values and PsychroLib.
// Reference values keep their published digits.
#![allow(clippy::excessive_precision)]

use isohypse::datum::{self, AltimeterSetting, Calibration};
use isohypse::humidity::{self, MixingRatio};
use isohypse::hypsometric;
use isohypse::model::{
    AirSample, ColumnModel, InputUncertainty, Reference, TemperatureModel, TemperatureProfile,
};
use isohypse::{Error, Height, Pressure, RelativeHumidity, Temperature};

// U.S. Standard Atmosphere 1976, section 1.2: R* = 8314.32 J/(kmol K),
// M0 = 28.9644 kg/kmol, g0 = 9.80665 m/s^2, r0 = 6 356 766 m.
const R64: f64 = 8314.32 / 28.9644;
const G64: f64 = 9.80665;
const R0_64: f64 = 6_356_766.0;
// U.S. 1976 Table 4: (base geopotential m', base temperature K, lapse K/m'). The first
// row is not in Table 4 (which starts at 0 m'): it extends the sea-level layer down to
// -5 km at the same lapse rate, as the crate does (320.65 K = 288.15 K + 5 km x 6.5 K/km).
const US76_LAYERS: [(f64, f64, f64); 8] = [
    (-5000.0, 320.65, -0.0065),
    (0.0, 288.15, -0.0065),
    (11_000.0, 216.65, 0.0),
    (20_000.0, 216.65, 0.001),
    (32_000.0, 228.65, 0.0028),
    (47_000.0, 270.65, 0.0),
    (51_000.0, 270.65, -0.0028),
    (71_000.0, 214.65, -0.002),
];

/// Round-trip limit: 1 mm, the goal for the default `libm` backend; with the optional
/// `micromath` backend its published height accuracy applies (2 cm, as in
/// tests/common `height_limit`).
const ROUND_TRIP_M: f32 = if cfg!(all(feature = "micromath", not(feature = "libm"))) {
    0.02
} else {
    1e-3
};

fn pa(x: f32) -> Pressure {
    Pressure::from_pa(x).unwrap()
}
fn hpa(x: f32) -> Pressure {
    Pressure::from_hpa(x).unwrap()
}
fn m(x: f32) -> Height {
    Height::from_meters(x).unwrap()
}
fn k(x: f32) -> Temperature {
    Temperature::from_kelvin(x).unwrap()
}
fn geopotential64(z: f64) -> f64 {
    R0_64 * z / (R0_64 + z) // U.S. 1976 eq. 18
}
fn geometric64(h: f64) -> f64 {
    R0_64 * h / (R0_64 - h) // U.S. 1976 eq. 19
}
fn us76_temperature64(h: f64) -> f64 {
    let mut t = 0.0;
    for &(hb, tb, l) in US76_LAYERS.iter() {
        if h >= hb || hb == -5000.0 {
            t = tb + l * (h - hb);
        }
    }
    t
}

/// ln(p / p_ref) for a column temperature `t(H)` between geopotential heights `h0` and
/// `h1`, by composite Simpson integration of the hydrostatic equation
/// d ln p / dH = -g0 / (R Tv(H)) in f64 (U.S. 1976 eq. 33 before integration;
/// Wallace & Hobbs 2006 eq. 3.29). Independent of the closed forms under test.
fn log_ratio_numeric(t: &dyn Fn(f64) -> f64, factor: f64, h0: f64, h1: f64) -> f64 {
    let n = 20_000usize; // even
    let step = (h1 - h0) / n as f64;
    let f = |h: f64| -G64 / (R64 * factor * t(h));
    let mut sum = f(h0) + f(h1);
    for i in 1..n {
        let w = if i % 2 == 1 { 4.0 } else { 2.0 };
        sum += w * f(h0 + step * i as f64);
    }
    sum * step / 3.0
}

/// Checks a model against the numeric integral: for heights z above a reference,
/// pressure_at(z) must match the integral and height(p) must invert it.
fn check_against_numeric(
    model: &dyn ColumnModelDyn,
    reference: &Reference,
    air: &AirSample,
    t: &dyn Fn(f64) -> f64,
    heights: &[f32],
    tol_m: f64,
) {
    let factor = air.mixing_ratio.virtual_temperature_factor() as f64;
    let h_ref = geopotential64(reference.height.meters() as f64);
    for &z in heights {
        let h = geopotential64(z as f64);
        let s = log_ratio_numeric(t, factor, h_ref, h);
        let p_true = reference.pressure.pa() as f64 * s.exp();
        let p_model = model.pressure_at_dyn(reference, m(z), air) as f64;
        // Pressure error expressed as height: dz = (R Tv / g0) dp / p.
        let dz_from_p = R64 * factor * t(h) / G64 * (p_model - p_true) / p_true;
        assert!(
            dz_from_p.abs() < tol_m,
            "pressure_at({z}): {p_model} vs {p_true} ({dz_from_p} m)"
        );
        let z_model = model.height_dyn(reference, pa(p_true as f32), air) as f64;
        // f32 rounding of p_true itself contributes (R T / g0) * 2^-24.
        assert!(
            (z_model - z as f64).abs() < tol_m,
            "height({p_true}): {z_model} vs {z}"
        );
    }
}

/// Object-safe shim so one checker serves every model type.
trait ColumnModelDyn {
    fn pressure_at_dyn(&self, r: &Reference, z: Height, air: &AirSample) -> f32;
    fn height_dyn(&self, r: &Reference, p: Pressure, air: &AirSample) -> f32;
}
impl<M: ColumnModel> ColumnModelDyn for M {
    fn pressure_at_dyn(&self, r: &Reference, z: Height, air: &AirSample) -> f32 {
        self.pressure_at(r, z, air).unwrap().pa()
    }
    fn height_dyn(&self, r: &Reference, p: Pressure, air: &AirSample) -> f32 {
        self.height(r, p, air).unwrap().meters()
    }
}

#[test]
fn standard_model_is_us1976_pressure_altitude() {
    // Source: U.S. Standard Atmosphere 1976 (via crate::atmosphere, itself checked
    // against the standard's printed tables in tests/atmosphere.rs).
    let r = Reference::new(hpa(1013.25), Height::ZERO);
    for p in [1080.0, 1013.25, 1000.0, 700.0, 300.0, 54.7, 5.0, 0.5] {
        let z = TemperatureModel::Standard
            .height(&r, hpa(p), &AirSample::DRY)
            .unwrap()
            .meters();
        let z_std = isohypse::atmosphere::pressure_altitude(hpa(p))
            .unwrap()
            .meters();
        assert!(
            (z - z_std).abs() < 0.01 + 1e-6 * z_std.abs(),
            "{p}: {z} {z_std}"
        );
    }
    // From a reference that sits on the standard (U.S. 1976 pressure at 1500 m):
    // same answer anywhere in the column.
    let p1500 = isohypse::atmosphere::US_1976
        .pressure_at(m(1500.0))
        .unwrap();
    let r = Reference::new(p1500, m(1500.0));
    let z = TemperatureModel::Standard
        .height(&r, hpa(500.0), &AirSample::DRY)
        .unwrap();
    let z_std = isohypse::atmosphere::pressure_altitude(hpa(500.0)).unwrap();
    assert!((z.meters() - z_std.meters()).abs() < 0.01);
}

#[test]
fn standard_offset_matches_numeric_integration() {
    // Warm and cold days through the tropopause, from a reference off the standard.
    // Source: numeric integration of the hydrostatic equation in f64 (see helper).
    for delta in [-20.0_f32, 15.0] {
        let model = TemperatureModel::standard_offset(delta).unwrap();
        let reference = Reference::new(hpa(990.0), m(250.0));
        let t = move |h: f64| us76_temperature64(h) + delta as f64;
        check_against_numeric(
            &model,
            &reference,
            &AirSample::DRY,
            &t,
            &[-400.0, 250.5, 1000.0, 9000.0, 11_500.0, 25_000.0],
            0.005 + 0.0, // 5 mm; f32 pressure near 1000 hPa resolves 0.06 mm
        );
    }
}

#[test]
fn isothermal_model_matches_closed_form() {
    // Source: isothermal hypsometric equation dH = (R T / g0) ln(p1 / p2)
    // (Wallace & Hobbs 2006 eq. 3.29; U.S. 1976 eq. 33b), evaluated in f64.
    let t = 250.0_f64;
    let model = TemperatureModel::Isothermal {
        temperature_k: (k(250.0)).kelvin(),
    };
    let reference = Reference::new(hpa(1000.0), m(100.0));
    for p in [1050.0_f64, 999.0, 900.0, 500.0, 100.0] {
        let h = geopotential64(100.0) + R64 * t / G64 * (1000.0 / p).ln();
        let z = geometric64(h);
        let zm = model
            .height(&reference, hpa(p as f32), &AirSample::DRY)
            .unwrap()
            .meters() as f64;
        assert!((zm - z).abs() < 0.003 + 2e-7 * z.abs(), "{p}: {zm} {z}");
    }
    // Wallace & Hobbs (2006), exercise on the 1000 hPa height: sea-level pressure
    // 1014 hPa, scale height R Tv / g0 = 8 km -> 1000 hPa surface at 111 m (from
    // memory; 8000 ln(1014/1000) = 111.2 m).
    let tv = 8000.0 * 9.80665 / 287.05307_f32;
    let model = TemperatureModel::Isothermal {
        temperature_k: k(tv).kelvin(),
    };
    let z = model
        .height(
            &Reference::new(hpa(1014.0), Height::ZERO),
            hpa(1000.0),
            &AirSample::DRY,
        )
        .unwrap();
    assert!((z.meters() - 111.2).abs() < 0.1, "{z:?}");
}

#[test]
fn constant_lapse_matches_closed_form() {
    // Source: constant-lapse hypsometric closed form
    // H = Hb + (Tb / L) ((p / pb)^(-R L / g0) - 1) (U.S. 1976 eq. 33a solved for H), f64.
    let (tb, l) = (300.0_f64, -0.0080_f64);
    let model = TemperatureModel::constant_lapse(k(300.0), -0.0080).unwrap();
    let reference = Reference::new(hpa(1005.0), m(-20.0));
    let hb = geopotential64(-20.0);
    for p in [1040.0_f64, 1004.9, 800.0, 400.0, 200.0] {
        let h = hb + tb / l * ((p / 1005.0).powf(-R64 * l / G64) - 1.0);
        let z = geometric64(h);
        let zm = model
            .height(&reference, hpa(p as f32), &AirSample::DRY)
            .unwrap()
            .meters() as f64;
        assert!((zm - z).abs() < 0.003 + 2e-7 * z.abs(), "{p}: {zm} {z}");
        // And through the crate's own hypsometric closed form (geopotential, above base).
        let dh = hypsometric::constant_lapse_height(hpa(1005.0), k(300.0), -0.008, hpa(p as f32))
            .unwrap()
            .meters() as f64;
        assert!((dh - (h - hb)).abs() < 0.003 + 2e-7 * h.abs());
    }
}

#[test]
fn mean_of_ends_is_the_hypsometric_mean_layer_method() {
    // Source: hypsometric equation with the layer mean temperature taken as the mean of
    // its ends (Wallace & Hobbs 2006 eq. 3.29; two-point use, common practice), and the
    // crate's hypsometric::thickness for the same mean.
    let reference = Reference::new(hpa(1002.0), m(420.0)).with_temperature(k(293.0));
    let air = AirSample::at(k(281.0));
    let p = hpa(905.0);
    let z = TemperatureModel::MeanOfEnds
        .height(&reference, p, &air)
        .unwrap()
        .meters() as f64;
    let h = geopotential64(420.0) + R64 * 287.0 / G64 * (1002.0_f64 / 905.0).ln();
    assert!((z - geometric64(h)).abs() < 0.003, "{z}");
    let dh = hypsometric::thickness(hpa(1002.0), p, k(287.0))
        .unwrap()
        .meters() as f64;
    assert!((dh - (h - geopotential64(420.0))).abs() < 0.003);
    // Without either end temperature: a typed error.
    assert_eq!(
        TemperatureModel::MeanOfEnds.height(&reference, p, &AirSample::DRY),
        Err(Error::NotEnoughData)
    );
    assert_eq!(
        TemperatureModel::MeanOfEnds.height(&Reference::new(hpa(1002.0), m(420.0)), p, &air),
        Err(Error::NotEnoughData)
    );
}

#[test]
fn profile_matches_numeric_integration() {
    // A warm, inverted low layer, then a steep lapse, standard lapse rates beyond the
    // ends (shifted to meet the end knots). Source: numeric integration (see helper).
    let knots = [
        (200.0_f32, 295.0_f32),
        (800.0, 299.0),
        (3000.0, 283.0),
        (9000.0, 240.0),
    ];
    let profile = TemperatureProfile::<8>::from_knots(&knots.map(|(z, t)| (m(z), k(t)))).unwrap();
    let kh: Vec<(f64, f64)> = knots
        .iter()
        .map(|&(z, t)| (geopotential64(z as f64), t as f64))
        .collect();
    let (h_first, t_first) = kh[0];
    let (h_last, t_last) = kh[kh.len() - 1];
    let t = move |h: f64| {
        if h <= h_first {
            us76_temperature64(h) + t_first - us76_temperature64(h_first)
        } else if h >= h_last {
            us76_temperature64(h) + t_last - us76_temperature64(h_last)
        } else {
            let i = kh.iter().rposition(|&(hk, _)| hk <= h).unwrap();
            let (h0, t0) = kh[i];
            let (h1, t1) = kh[i + 1];
            t0 + (t1 - t0) * (h - h0) / (h1 - h0)
        }
    };
    let reference = Reference::new(hpa(1000.0), m(500.0));
    let air = AirSample::DRY.with_mixing_ratio(MixingRatio::from_kg_per_kg(0.012).unwrap());
    check_against_numeric(
        &profile,
        &reference,
        &air,
        &t,
        &[
            -300.0, 200.0, 499.0, 800.0, 2000.0, 3000.0, 9000.0, 13_000.0, 30_000.0,
        ],
        0.005,
    );
    // One knot on the standard temperature (288.15 K at 0 m, U.S. 1976 Table 4): the
    // profile is the standard model (reference: the crate's Standard model, checked
    // against the standard in tests/atmosphere.rs).
    let one = TemperatureProfile::<1>::from_knots(&[(m(0.0), k(288.15))]).unwrap();
    let r = Reference::new(hpa(1013.25), Height::ZERO);
    let a = one.height(&r, hpa(250.0), &AirSample::DRY).unwrap();
    let b = TemperatureModel::Standard
        .height(&r, hpa(250.0), &AirSample::DRY)
        .unwrap();
    assert!((a.meters() - b.meters()).abs() < 0.01);
}

#[test]
fn profile_bad_input_is_typed_and_leaves_it_unchanged() {
    let r = Reference::new(hpa(1000.0), Height::ZERO);
    let empty = TemperatureProfile::<3>::new();
    assert_eq!(
        empty.height(&r, hpa(900.0), &AirSample::DRY),
        Err(Error::NotEnoughData)
    );
    assert_eq!(
        TemperatureProfile::<3>::from_knots(&[]).map(|p| p.len()),
        Err(Error::NotEnoughData)
    );
    assert_eq!(
        TemperatureProfile::<3>::from_knots(&[(m(100.0), k(280.0)), (m(50.0), k(281.0))])
            .map(|p| p.len()),
        Err(Error::NotIncreasing)
    );
    let mut p = TemperatureProfile::<2>::new();
    p.push(m(0.0), k(288.0)).unwrap();
    p.push(m(1000.0), k(282.0)).unwrap();
    let before = p.clone();
    assert_eq!(p.push(m(2000.0), k(275.0)), Err(Error::CapacityFull));
    assert_eq!(p.push(m(1000.0), k(275.0)), Err(Error::NotIncreasing));
    assert_eq!(p.push(m(1e6), k(275.0)), Err(Error::AboveModelTop));
    assert_eq!(p, before);
    assert_eq!(p.capacity(), 2);
    // Equal heights count as not increasing too.
    let mut q = TemperatureProfile::<4>::new();
    q.push(m(10.0), k(280.0)).unwrap();
    assert_eq!(q.push(m(10.0), k(280.0)), Err(Error::NotIncreasing));
    assert_eq!(q.len(), 1);
}

#[test]
fn zero_and_bad_lapse_rates_are_typed_errors() {
    assert_eq!(
        TemperatureModel::constant_lapse(k(280.0), 0.0),
        Err(Error::ZeroLapseRate)
    );
    assert_eq!(
        TemperatureModel::constant_lapse(k(280.0), f32::NAN),
        Err(Error::NotFinite)
    );
    // Built directly, bypassing the constructor: still a typed error at use.
    let direct = TemperatureModel::ConstantLapse {
        reference_temperature_k: k(280.0).kelvin(),
        lapse_rate_k_per_m: 0.0,
    };
    let r = Reference::new(hpa(1000.0), Height::ZERO);
    assert_eq!(
        direct.height(&r, hpa(900.0), &AirSample::DRY),
        Err(Error::ZeroLapseRate)
    );
    assert_eq!(
        direct.pressure_at(&r, m(10.0), &AirSample::DRY),
        Err(Error::ZeroLapseRate)
    );
    assert_eq!(
        TemperatureModel::standard_offset(f32::INFINITY),
        Err(Error::NotFinite)
    );
    // A lapse so steep the temperature reaches 0 K inside the column: a typed error.
    let steep = TemperatureModel::constant_lapse(k(200.0), 0.1).unwrap();
    assert!(steep.pressure_at(&r, m(-3000.0), &AirSample::DRY).is_err());
}

#[test]
fn humid_column_is_taller_by_the_virtual_temperature() {
    // Source: hypsometric equation with virtual temperature (Wallace & Hobbs 2006
    // eq. 3.29, Tv from eq. 3.16): an isothermal humid column at T has the height of a
    // dry column at Tv = f T.
    let p_ref = hpa(1000.0);
    let t = Temperature::from_celsius(30.0).unwrap();
    let rh = RelativeHumidity::from_percent(80.0).unwrap();
    let w = humidity::mixing_ratio(p_ref, t, rh).unwrap();
    let tv = humidity::virtual_temperature(p_ref, t, rh).unwrap();
    let r = Reference::new(p_ref, Height::ZERO);
    let humid = TemperatureModel::Isothermal {
        temperature_k: t.kelvin(),
    }
    .height(&r, hpa(900.0), &AirSample::DRY.with_mixing_ratio(w))
    .unwrap();
    let dry_tv = TemperatureModel::Isothermal {
        temperature_k: tv.kelvin(),
    }
    .height(&r, hpa(900.0), &AirSample::DRY)
    .unwrap();
    assert!((humid.meters() - dry_tv.meters()).abs() < 0.005);
    let dry = TemperatureModel::Isothermal {
        temperature_k: t.kelvin(),
    }
    .height(&r, hpa(900.0), &AirSample::DRY)
    .unwrap();
    // Isothermal height is proportional to the column temperature: the humid column is
    // taller by Tv / T - 1 (1.30 % at 30 degC, 80 %, 1000 hPa: Wallace & Hobbs 2006
    // eq. 3.16 and 3.59 with the AERK es, 42.37 hPa, evaluated by hand).
    let gain = humid.meters() / dry.meters() - 1.0;
    let expected = w.virtual_temperature_factor() - 1.0;
    assert!((gain - expected).abs() < 1e-4, "{gain} {expected}");
    assert!((0.012..0.014).contains(&gain), "{gain}");
}

/// Parsed rows of tests/reference/humidity_psychrolib.csv.
fn psychrolib_rows() -> Vec<(String, f32, f32, f32, f64)> {
    let text = include_str!("reference/humidity_psychrolib.csv");
    let mut rows = Vec::new();
    let mut lines = text.lines().filter(|l| !l.starts_with('#'));
    assert_eq!(lines.next(), Some("kind,t_c,p_pa,rh_pct,value"));
    for line in lines {
        let f: Vec<&str> = line.split(',').collect();
        let num = |s: &str| {
            if s.is_empty() {
                f32::NAN
            } else {
                s.parse::<f32>().unwrap()
            }
        };
        rows.push((
            f[0].to_string(),
            num(f[1]),
            num(f[2]),
            num(f[3]),
            f[4].parse::<f64>().unwrap(),
        ));
    }
    rows
}

#[test]
fn humidity_matches_psychrolib() {
    // Reference: PsychroLib 2.5.0 (ASHRAE Handbook - Fundamentals 2017 ch. 1,
    // Hyland & Wexler 1983), vectors from tests/reference/gen_humidity.py.
    // Tolerance: Alduchov & Eskridge (1996) give their Magnus forms as within about
    // 0.4 % of the Wexler / Hyland-Wexler values over -40..50 degC (water) and
    // -80..0 degC (ice) (from memory); f32 adds < 1e-6.
    let mut worst = [0.0_f64; 4];
    let mut counts = [0usize; 4];
    for (kind, t_c, p, rh, value) in psychrolib_rows() {
        let t = Temperature::from_celsius(t_c).unwrap();
        match kind.as_str() {
            "es_water" => {
                let e = humidity::saturation_vapour_pressure_water(t) as f64;
                let rel = (e / value - 1.0).abs();
                assert!(rel < 0.004, "water {t_c}: {e} vs {value}");
                worst[0] = worst[0].max(rel);
                counts[0] += 1;
            }
            "es_ice" => {
                let e = humidity::saturation_vapour_pressure_ice(t) as f64;
                let rel = (e / value - 1.0).abs();
                assert!(rel < 0.004, "ice {t_c}: {e} vs {value}");
                worst[1] = worst[1].max(rel);
                counts[1] += 1;
            }
            "mixing_ratio" => {
                let rh = RelativeHumidity::from_percent(rh).unwrap();
                let w = humidity::mixing_ratio(pa(p), t, rh).unwrap().kg_per_kg() as f64;
                // w = eps e / (p - e): the es error is amplified by p / (p - e) (< 1.2
                // here) and eps differs (0.622 vs PsychroLib's 0.621945: 0.009 %).
                let rel = (w / value - 1.0).abs();
                assert!(
                    rel < 0.004 * 1.2 + 1e-4,
                    "w {t_c} {p} {rh:?}: {w} vs {value}"
                );
                worst[2] = worst[2].max(rel);
                counts[2] += 1;
            }
            "virtual_temperature_k" => {
                let rh = RelativeHumidity::from_percent(rh).unwrap();
                let tv = humidity::virtual_temperature(pa(p), t, rh)
                    .unwrap()
                    .kelvin() as f64;
                // Tv - T is proportional to w: allow the mixing-ratio tolerance on the
                // increment, plus f32 rounding of T (3e-5 K).
                let inc = value - t.kelvin() as f64;
                let err = (tv - value).abs();
                assert!(err < 0.005 * inc + 1e-4, "Tv {t_c} {p}: {tv} vs {value}");
                worst[3] = worst[3].max(err);
                counts[3] += 1;
            }
            other => panic!("unknown kind {other}"),
        }
    }
    assert_eq!(counts, [50, 41, 60, 60]);
    println!(
        "psychrolib: es water worst {:.3} %, es ice worst {:.3} %, w worst {:.3} %, Tv worst {:.4} K",
        worst[0] * 100.0,
        worst[1] * 100.0,
        worst[2] * 100.0,
        worst[3]
    );
}

#[test]
fn saturation_vapour_pressure_table_values() {
    // WMO / Smithsonian Meteorological Tables (Goff-Gratch), values from memory:
    // over water 10 degC 12.27 hPa, 20 degC 23.37 hPa, 30 degC 42.43 hPa;
    // over ice -10 degC 2.599 hPa, -30 degC 0.3801 hPa.
    // Tolerance 0.4 %: the stated accuracy of the Magnus forms (Alduchov & Eskridge 1996).
    for (c, hpa_value, ice) in [
        (10.0_f32, 12.27_f32, false),
        (20.0, 23.37, false),
        (30.0, 42.43, false),
        (-10.0, 2.599, true),
        (-30.0, 0.3801, true),
    ] {
        let t = Temperature::from_celsius(c).unwrap();
        let e = if ice {
            humidity::saturation_vapour_pressure_ice(t)
        } else {
            humidity::saturation_vapour_pressure_water(t)
        };
        assert!((e / (100.0 * hpa_value) - 1.0).abs() < 0.004, "{c}: {e}");
    }
}

#[test]
fn cold_air_makes_a_qnh_altimeter_read_high() {
    // Common practice (aviation cold-temperature rule): an altimeter set to local QNH
    // over-reads by roughly 4 % of the height above the station per 10 degC below
    // standard; pure hypsometric scaling gives about 10 K / T_mean = 3.5-3.7 %.
    // Truth: U.S. 1976 temperature minus 10 K (StandardOffset), with sea-level pressure
    // equal to QNH; the altimeter: QNH setting (standard atmosphere shifted).
    let qnh = hpa(1013.25);
    let truth = TemperatureModel::standard_offset(-10.0).unwrap();
    let r = Reference::new(qnh, Height::ZERO);
    let setting = AltimeterSetting::SeaLevel { qnh_pa: qnh.pa() };
    for z_true in [500.0_f32, 1500.0, 3000.0] {
        let p = truth.pressure_at(&r, m(z_true), &AirSample::DRY).unwrap();
        let shown = setting.height(p).unwrap().meters();
        let pct = (shown - z_true) / z_true * 100.0;
        println!("ISA-10: true {z_true} m, altimeter shows {shown:.1} m: reads high by {pct:.2} %");
        assert!(shown > z_true, "must read high in cold air");
        assert!((3.3..4.3).contains(&pct), "{pct}");
    }
    // And with a non-standard QNH (1030 hPa) at a field 600 m up: same size of error.
    let field = m(600.0);
    let p_field = truth
        .pressure_at(
            &Reference::new(hpa(1030.0), Height::ZERO),
            field,
            &AirSample::DRY,
        )
        .unwrap();
    let setting = AltimeterSetting::sea_level_from_elevation(p_field, field).unwrap();
    let r = Reference::new(p_field, field);
    let p = truth.pressure_at(&r, m(2600.0), &AirSample::DRY).unwrap();
    let shown = setting.height(p).unwrap().meters();
    let pct = (shown - 2600.0) / 2000.0 * 100.0;
    println!("ISA-10, QNH 1030, field 600 m: reads high by {pct:.2} % of height above field");
    assert!((3.3..4.3).contains(&pct), "{pct}");
}

#[test]
fn qnh_qfe_and_flight_levels() {
    // QNH round trip: solved from a known elevation, the altimeter reads that elevation
    // back (definition of QNH, ICAO Doc 8168; from memory) within 1 mm.
    let mut worst = 0.0_f32;
    for (p, elev) in [
        (972.0_f32, 350.0_f32),
        (1021.0, -28.0),
        (845.0, 1600.0),
        (700.0, 3100.0),
    ] {
        let s = AltimeterSetting::sea_level_from_elevation(hpa(p), m(elev)).unwrap();
        let back = s.height(hpa(p)).unwrap().meters();
        worst = worst.max((back - elev).abs());
        assert!((back - elev).abs() < ROUND_TRIP_M, "{p} {elev}: {back}");
    }
    println!("QNH round trip: worst {:.3} mm", worst * 1000.0);
    // Troposphere closed form of the shifted standard (ICAO / U.S. 1976 troposphere;
    // NWS altimeter-setting form, from memory): H = (T0/L)((QNH/p0)^n - (p/p0)^n).
    let (t0, l, p0) = (288.15_f64, 0.0065_f64, 1013.25_f64);
    let n = R64 * l / G64;
    let (qnh, p) = (1002.0_f64, 880.0_f64);
    let h = t0 / l * ((qnh / p0).powf(n) - (p / p0).powf(n));
    let s = AltimeterSetting::SeaLevel {
        qnh_pa: (hpa(qnh as f32)).pa(),
    };
    let z = s.height(hpa(p as f32)).unwrap().meters() as f64;
    assert!((z - geometric64(h)).abs() < 0.01, "{z} {}", geometric64(h));
    // QFE: zero on the field, and the same shift above it.
    let f = AltimeterSetting::field_from_reading(hpa(930.0));
    assert!(f.height(hpa(930.0)).unwrap().meters().abs() < 1e-4);
    // Flight levels from ICAO standard atmosphere pressures (ICAO Doc 7488 tables,
    // from memory: FL100 696.8 hPa, FL180 506.0 hPa, FL300 300.9 hPa, FL390 196.8 hPa).
    for (p, fl, tol) in [
        (1013.25_f32, 0.0_f32, 0.01_f32),
        (696.8, 100.0, 0.05),
        (506.0, 180.0, 0.05),
        (300.9, 300.0, 0.05),
        (196.8, 390.0, 0.1),
    ] {
        let got = datum::flight_level(hpa(p)).unwrap();
        assert!((got - fl).abs() < tol, "{p}: FL {got}");
    }
}

#[test]
fn density_altitude_closed_form_and_rules() {
    // Standard air has density altitude = pressure altitude (definition; U.S. 1976).
    for z in [0.0_f32, 1000.0, 5000.0, 15_000.0, 30_000.0] {
        let s = isohypse::atmosphere::US_1976.at_geometric(m(z)).unwrap();
        let da = datum::density_altitude(s.pressure, s.temperature, RelativeHumidity::DRY)
            .unwrap()
            .meters();
        assert!((da - z).abs() < 0.05 + 2e-6 * z, "{z}: {da}");
    }
    // Troposphere closed form in f64 (U.S. 1976 eq. 33a with rho = p / (R T)):
    // H = (T0 / L) (1 - (rho / rho0)^(1 / (g0 / (R L) - 1))).
    let (t0, l) = (288.15_f64, 0.0065_f64);
    let rho0 = 101_325.0 / (R64 * t0);
    for (p, c) in [(1013.25_f64, 35.0_f64), (850.0, 20.0), (950.0, -5.0)] {
        let rho = p * 100.0 / (R64 * (c + 273.15));
        let h = t0 / l * (1.0 - (rho / rho0).powf(1.0 / (G64 / (R64 * l) - 1.0)));
        let da = datum::density_altitude(
            hpa(p as f32),
            Temperature::from_celsius(c as f32).unwrap(),
            RelativeHumidity::DRY,
        )
        .unwrap()
        .meters() as f64;
        assert!(
            (da - geometric64(h)).abs() < 0.1,
            "{p} {c}: {da} vs {}",
            geometric64(h)
        );
    }
    // Common practice: about 120 ft of density altitude per degC above standard near
    // sea level. 35 degC at 1013.25 hPa is ISA+20: expect ~2400 ft (rule), 2275 ft exact.
    let da = datum::density_altitude(
        hpa(1013.25),
        Temperature::from_celsius(35.0).unwrap(),
        RelativeHumidity::DRY,
    )
    .unwrap();
    assert!((2100.0..2500.0).contains(&da.feet()), "{}", da.feet());
    // Humidity lowers density, raising density altitude (FAA-H-8083-25, from memory).
    let humid = datum::density_altitude(
        hpa(1013.25),
        Temperature::from_celsius(35.0).unwrap(),
        RelativeHumidity::from_percent(80.0).unwrap(),
    )
    .unwrap();
    assert!(humid.meters() > da.meters() + 100.0, "{humid:?} {da:?}");
    // Out of range: typed errors.
    assert_eq!(
        datum::density_altitude(pa(200_000.0), k(250.0), RelativeHumidity::DRY),
        Err(Error::BelowModelBottom)
    );
}

#[test]
fn calibration_round_trips_and_blends() {
    // Set from a known elevation, read the same elevation back within 1 mm, for every
    // model (definition of a setting from a known elevation).
    let air = AirSample::at(Temperature::from_celsius(12.0).unwrap());
    let profile =
        TemperatureProfile::<4>::from_knots(&[(m(0.0), k(290.0)), (m(3000.0), k(272.0))]).unwrap();
    let p = hpa(903.7);
    let elev = m(987.65);
    macro_rules! round_trip {
        ($model:expr) => {{
            let mut cal = Calibration::new($model, 3.0).unwrap();
            assert_eq!(cal.height(p, &air), Err(Error::NotEnoughData));
            cal.fix(p, elev, 2.0, &air).unwrap();
            let back = cal.height(p, &air).unwrap().meters();
            assert!((back - elev.meters()).abs() < ROUND_TRIP_M, "{back}");
        }};
    }
    round_trip!(TemperatureModel::Standard);
    round_trip!(TemperatureModel::standard_offset(-7.0).unwrap());
    round_trip!(TemperatureModel::Isothermal {
        temperature_k: (k(280.0)).kelvin(),
    });
    round_trip!(TemperatureModel::constant_lapse(k(285.0), -0.0065).unwrap());
    round_trip!(TemperatureModel::MeanOfEnds);
    round_trip!(profile.clone());

    // Blending (scalar Kalman update, see datum::Calibration docs): prior sigma 2 m,
    // aged by 1 h at 3 m/sqrt(h) -> variance 4 + 9 = 13 m^2; new fix sigma 3 m
    // (variance 9) -> K = 13 / 22; the jump is K times the disagreement.
    let model = TemperatureModel::standard_offset(-7.0).unwrap();
    let mut cal = Calibration::new(model, 3.0).unwrap();
    cal.fix(p, elev, 2.0, &air).unwrap();
    cal.elapse(3600.0).unwrap();
    let p2 = hpa(899.0);
    let predicted = cal.height(p2, &air).unwrap().meters();
    let known = predicted + 10.0;
    let jump = cal.fix(p2, m(known), 3.0, &air).unwrap().meters();
    let gain = 13.0 / 22.0;
    assert!((jump - 10.0 * gain).abs() < 1e-3, "{jump}");
    assert!((cal.height(p2, &air).unwrap().meters() - (predicted + jump)).abs() < 1e-3);
    let var = cal.variance_m2().unwrap();
    assert!((var - 13.0 * 9.0 / 22.0).abs() < 1e-4, "{var}");
    assert!(cal.sigma_m().unwrap() > 0.0);

    // Bad input: typed error, state unchanged.
    let before = cal.clone();
    assert_eq!(cal.fix(p2, m(0.0), 0.0, &air), Err(Error::InvalidSetting));
    assert_eq!(
        cal.fix(p2, m(0.0), f32::NAN, &air),
        Err(Error::InvalidSetting)
    );
    assert_eq!(cal.elapse(-1.0), Err(Error::InvalidSetting));
    assert_eq!(cal, before);
    // A MeanOfEnds calibration fixed without a temperature cannot compute: rejected.
    let mut moe = Calibration::new(TemperatureModel::MeanOfEnds, 3.0).unwrap();
    assert_eq!(
        moe.fix(p, elev, 1.0, &AirSample::DRY),
        Err(Error::NotEnoughData)
    );
    assert_eq!(moe.reference(), None);
    assert_eq!(
        Calibration::new(TemperatureModel::Standard, -1.0).map(|_| ()),
        Err(Error::InvalidSetting)
    );
}

#[test]
fn bad_humidity_is_rejected() {
    // Relative humidity outside 0..=100 % cannot be built (units.rs); mixing ratios
    // outside 0..=1 neither.
    assert_eq!(
        RelativeHumidity::from_percent(-5.0),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(
        RelativeHumidity::from_percent(100.1),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(
        MixingRatio::from_kg_per_kg(-0.01),
        Err(Error::HumidityOutOfRange)
    );
    assert_eq!(MixingRatio::from_kg_per_kg(f32::NAN), Err(Error::NotFinite));
    // Saturated hot air at low pressure has no dry air left: typed error.
    assert_eq!(
        humidity::virtual_temperature(
            hpa(150.0),
            Temperature::from_celsius(60.0).unwrap(),
            RelativeHumidity::from_percent(100.0).unwrap()
        ),
        Err(Error::HumidityOutOfRange)
    );
}

/// xorshift64* (Vigna 2016, "An experimental exploration of Marsaglia's xorshift
/// generators, scrambled", ACM TOMS 42) with the Box-Muller transform (Box & Muller 1958,
/// Ann. Math. Stat. 29): a small deterministic normal generator.
struct Normal {
    state: u64,
    spare: Option<f64>,
}
impl Normal {
    fn new(seed: u64) -> Self {
        Self {
            state: seed,
            spare: None,
        }
    }
    fn uniform(&mut self) -> f64 {
        self.state ^= self.state >> 12;
        self.state ^= self.state << 25;
        self.state ^= self.state >> 27;
        let x = self.state.wrapping_mul(0x2545_F491_4F6C_DD1D);
        ((x >> 11) as f64 + 0.5) / (1u64 << 53) as f64 // in (0, 1)
    }
    fn sample(&mut self) -> f64 {
        if let Some(s) = self.spare.take() {
            return s;
        }
        let (u1, u2) = (self.uniform(), self.uniform());
        let r = (-2.0 * u1.ln()).sqrt();
        let a = 2.0 * std::f64::consts::PI * u2;
        self.spare = Some(r * a.sin());
        r * a.cos()
    }
}

#[test]
fn first_order_sigma_matches_monte_carlo() {
    // First-order propagation (ColumnModel::height_sigma) against a Monte Carlo run:
    // perturb the reading, the reference pressure and the column temperature (one
    // offset for the whole column) by normal draws with the stated sigmas, recompute the
    // height, take the sample standard deviation.
    // N = 40 000 draws: the relative standard error of a sample standard deviation is
    // 1 / sqrt(2 (N - 1)) = 0.35 % (large-sample result for normal data; common
    // practice); we allow 2 % (over 5 standard errors plus the
    // second-order terms the linearisation drops, which are below 0.5 % here).
    const N: usize = 40_000;
    let mut rng = Normal::new(0x1505_4F5E_0000_0001);
    let u = InputUncertainty {
        pressure_pa: 12.0,
        reference_pressure_pa: 6.0,
        temperature_k: 3.0,
    };
    let air = AirSample::at(k(268.0));
    let reference = Reference::new(hpa(1008.0), m(150.0)).with_temperature(k(286.0));
    let p = hpa(720.0); // about 2.9 km above the reference
    type Build = fn(f32) -> TemperatureModel;
    let cases: [(&str, Build); 3] = [
        ("standard offset", |d| TemperatureModel::StandardOffset {
            delta_k: -4.0 + d,
        }),
        ("isothermal", |d| TemperatureModel::Isothermal {
            temperature_k: (k(276.0 + d)).kelvin(),
        }),
        ("constant lapse", |d| TemperatureModel::ConstantLapse {
            reference_temperature_k: k(286.0 + d).kelvin(),
            lapse_rate_k_per_m: -0.0062,
        }),
    ];
    for (name, build) in cases {
        let sigma = build(0.0)
            .height_sigma(&reference, p, &air, &u)
            .unwrap()
            .meters() as f64;
        let (mut sum, mut sum2) = (0.0_f64, 0.0_f64);
        for _ in 0..N {
            let dp = rng.sample() * u.pressure_pa as f64;
            let dpr = rng.sample() * u.reference_pressure_pa as f64;
            let dt = rng.sample() * u.temperature_k as f64;
            let r = Reference::new(pa(reference.pressure.pa() + dpr as f32), reference.height);
            let z = build(dt as f32)
                .height(&r, pa(p.pa() + dp as f32), &air)
                .unwrap()
                .meters() as f64;
            sum += z;
            sum2 += z * z;
        }
        let mean = sum / N as f64;
        let sd = ((sum2 / N as f64 - mean * mean) * N as f64 / (N - 1) as f64).sqrt();
        let rel = sd / sigma - 1.0;
        println!(
            "{name}: first-order sigma {sigma:.3} m, Monte Carlo {sd:.3} m ({:+.2} %)",
            rel * 100.0
        );
        assert!(rel.abs() < 0.02, "{name}: {sigma} vs {sd}");
    }
    // MeanOfEnds: the offset applies to both measured ends.
    let sigma = TemperatureModel::MeanOfEnds
        .height_sigma(&reference, p, &air, &u)
        .unwrap()
        .meters() as f64;
    let (mut sum, mut sum2) = (0.0_f64, 0.0_f64);
    for _ in 0..N {
        let dp = rng.sample() * u.pressure_pa as f64;
        let dpr = rng.sample() * u.reference_pressure_pa as f64;
        let dt = (rng.sample() * u.temperature_k as f64) as f32;
        let r = Reference::new(pa(reference.pressure.pa() + dpr as f32), reference.height)
            .with_temperature(k(286.0 + dt));
        let z = TemperatureModel::MeanOfEnds
            .height(&r, pa(p.pa() + dp as f32), &AirSample::at(k(268.0 + dt)))
            .unwrap()
            .meters() as f64;
        sum += z;
        sum2 += z * z;
    }
    let mean = sum / N as f64;
    let sd = ((sum2 / N as f64 - mean * mean) * N as f64 / (N - 1) as f64).sqrt();
    println!("mean of ends: first-order sigma {sigma:.3} m, Monte Carlo {sd:.3} m");
    assert!((sd / sigma - 1.0).abs() < 0.02, "{sigma} vs {sd}");
    // Bad uncertainty: typed error.
    let bad = InputUncertainty {
        pressure_pa: -1.0,
        ..u
    };
    assert_eq!(
        TemperatureModel::Standard.height_sigma(&reference, p, &air, &bad),
        Err(Error::InvalidSetting)
    );
}
