//! The standard atmospheres checked against their published values, an independent
//! implementation from PyPI, and an f64 evaluation of the defining equations.
// Reference values keep their published digits.
#![allow(clippy::excessive_precision)]

mod common;

use common::{ICAO64, MICROMATH, US76, height_limit, read_csv};
use isohypse::atmosphere::{self, ICAO, US_1976};
use isohypse::geopotential::{self, Gravity};
use isohypse::hypsometric;
use isohypse::{Error, Height, Pressure, Temperature};

fn pa(x: f32) -> Pressure {
    Pressure::from_pa(x).unwrap()
}
fn m(x: f32) -> Height {
    Height::from_meters(x).unwrap()
}

#[test]
fn base_pressures_follow_from_constants() {
    // Our f32 tables against the f64 chain of the layer equations (U.S. 1976 eq. 33a/b).
    for (model, reference) in [(&US_1976, &US76), (&ICAO, &ICAO64)] {
        let bases = reference.bases();
        for (layer, base) in model.layers.iter().zip(bases.iter()) {
            assert_eq!(layer.base_geopotential_m as f64, base.0);
            assert!((layer.base_temperature_k as f64 - base.1).abs() < 1e-4);
            assert_eq!(layer.lapse_rate_k_per_m as f64, base.2 as f32 as f64);
            let rel = (layer.base_pressure_pa as f64 - base.3).abs() / base.3;
            assert!(rel < 1e-7, "{}: base {} rel {rel}", model.name, base.0);
        }
        let top = model.layers[8];
        assert_eq!(top.base_geopotential_m as f64, reference.top as f32 as f64);
        let (t, p) = reference.at_geopotential(reference.top);
        assert!((top.base_temperature_k as f64 - t).abs() < 1e-4);
        assert!(
            (top.base_pressure_pa as f64 - p).abs() / p < 1e-7,
            "{} top",
            model.name
        );
    }
    // Printed base pressures of U.S. Standard Atmosphere 1976 (Table 4 and part 4
    // tables; 7 significant digits, values from memory of the printed table).
    let printed = [
        (0.0, 101_325.0),
        (11_000.0, 22_632.06),
        (20_000.0, 5_474.889),
        (32_000.0, 868.0187),
        (47_000.0, 110.9063),
        (51_000.0, 66.93887),
        (71_000.0, 3.956420),
    ];
    for (h, p) in printed {
        let layer = US_1976
            .layers
            .iter()
            .find(|l| l.base_geopotential_m == h)
            .unwrap();
        let rel = (layer.base_pressure_pa as f64 - p).abs() / p;
        assert!(
            rel < 1e-6,
            "base {h}: {} vs printed {p}",
            layer.base_pressure_pa
        );
    }
}

#[test]
fn us1976_published_table_values() {
    // U.S. Standard Atmosphere 1976, part 4 tables at geometric heights: (z m, T K, p Pa,
    // rho kg/m^3), 5-6 significant digits as printed (values from memory of the table;
    // the fluids vectors below check the same heights independently).
    let rows: [(f32, f32, f32, f32); 9] = [
        (0.0, 288.150, 101_325.0, 1.2250),
        (5_000.0, 255.676, 54_048.0, 0.736_43),
        (10_000.0, 223.252, 26_500.0, 0.413_51),
        (20_000.0, 216.650, 5_529.3, 0.088_910),
        (30_000.0, 226.509, 1_197.0, 0.018_410),
        (40_000.0, 250.350, 287.14, 0.003_995_7),
        (50_000.0, 270.650, 79.779, 0.001_026_9),
        (70_000.0, 219.585, 5.220_9, 8.282_9e-5),
        // At 86 km the table prints kinetic temperature 186.87 K; the library returns
        // the molecular-scale temperature TM = 186.946 K, which equals kinetic
        // temperature below 80 km and differs by M/M0 = 0.999 579 at 86 km (Table 8).
        (86_000.0, 186.946, 0.373_38, 6.958e-6),
    ];
    for (z, t, p, rho) in rows {
        let s = US_1976.at_geometric(m(z)).unwrap();
        assert!((s.temperature.kelvin() - t).abs() < 0.01, "T at {z}");
        assert!(
            (s.pressure.pa() - p).abs() / p < 1e-4,
            "p at {z}: {}",
            s.pressure.pa()
        );
        assert!((s.density_kg_m3 - rho).abs() / rho < 2e-4, "rho at {z}");
    }
}

#[test]
fn icao_published_values() {
    // ICAO Doc 7488/3 (1993) table at geopotential heights (values from memory of the
    // table): 1000 m -> 898.746 hPa, 281.65 K; 5000 m -> 540.199 hPa (printed 540.20),
    // 255.65 K; 11 000 m -> 226.32 hPa, 216.65 K.
    for (h, p_hpa, t) in [
        (1_000.0, 898.746, 281.65),
        (5_000.0, 540.20, 255.65),
        (11_000.0, 226.32, 216.65),
    ] {
        let s = ICAO.at_geopotential(m(h)).unwrap();
        assert!((s.pressure.hpa() - p_hpa).abs() < 0.01, "ICAO p at {h}");
        assert!((s.temperature.kelvin() - t).abs() < 1e-3);
    }
    // The two constant sets differ by 1e-6 to 9e-6 in relative pressure above sea level
    // (design notes; follows from M0 = 28.9644 vs 28.964420).
    let mut max_rel = 0.0f64;
    for k in 1..=80 {
        let h = k as f64 * 1000.0;
        let (_, pu) = US76.at_geopotential(h);
        let (_, pi) = ICAO64.at_geopotential(h);
        let rel = (pu - pi).abs() / pu;
        max_rel = max_rel.max(rel);
        assert!(rel > 1e-8 && rel < 1e-5, "h {h}: rel {rel}");
        // our f32 ICAO agrees with its own f64 reference
        let ours = ICAO.at_geopotential(m(h as f32)).unwrap().pressure.pa() as f64;
        assert!((ours - pi).abs() / pi < 1e-6, "ICAO f32 at {h}");
    }
    println!("ICAO vs U.S. 1976 max relative pressure difference to 80 km: {max_rel:.2e}");
}

#[test]
fn agrees_with_fluids_reference_vectors() {
    // Vectors from fluids 1.3.1 (PyPI), fluids.atmosphere.ATMOSPHERE_1976: see
    // tests/reference/gen_us1976.py.
    let (header, rows) = read_csv(include_str!("reference/us1976_fluids.csv"));
    assert_eq!(
        header,
        [
            "geometric_m",
            "geopotential_m",
            "temperature_k",
            "pressure_pa",
            "density_kg_m3"
        ]
    );
    assert!(rows.len() > 300);
    let mut worst_inverse = 0.0f64;
    for r in &rows {
        let (z, h, t, p, rho) = (r[0], r[1], r[2], r[3], r[4]);
        let ours_h = geopotential::geopotential_from_geometric(m(z as f32), 6_356_766.0)
            .unwrap()
            .meters() as f64;
        // within one f32 step of the value (0.008 m near 65 km)
        let step = (h as f32).abs().max(1.0) * f32::EPSILON;
        assert!(
            (ours_h - h).abs() <= step as f64,
            "H at {z}: {ours_h} vs {h}"
        );
        let s = US_1976.at_geometric(m(z as f32)).unwrap();
        // fluids holds T constant above 84 852 m' (where U.S. 1976 ends); 86 km
        // geometric lies 0.046 m' above that, so compare temperature below it only.
        if h <= 84_852.0 {
            assert!((s.temperature.kelvin() as f64 - t).abs() < 1e-4, "T at {z}");
        }
        assert!((s.pressure.pa() as f64 - p).abs() / p < 2e-6, "p at {z}");
        assert!(
            (s.density_kg_m3 as f64 - rho).abs() / rho < 3e-6,
            "rho at {z}"
        );
        // Inverse: pressure altitude of the (f32-rounded) reference pressure.
        let p32 = p as f32;
        let z_expect = US76.pressure_altitude(p32 as f64);
        let ours = atmosphere::pressure_altitude(pa(p32)).unwrap().meters() as f64;
        let err = (ours - z_expect).abs();
        assert!(err <= height_limit(z), "inverse at {z}: err {err} m");
        let z_f64 = US76.pressure_altitude(p);
        assert!(
            (z_f64 - z).abs() < 1e-6,
            "f64 ref vs fluids at {z}: {z_f64}"
        );
        worst_inverse = worst_inverse.max(err);
        // Height and temperature from one inversion: the same height, and the
        // reference temperature (its lapse rate of at most 4 K/km times the inverse
        // error above, plus f32 rounding).
        let (h2, t2) = US_1976.pressure_altitude_with_temperature(pa(p32)).unwrap();
        assert_eq!(h2.meters() as f64, ours, "same height at {z}");
        if h <= 84_852.0 {
            let t_limit = 1e-4 + 0.004 * height_limit(z);
            assert!(
                (t2.kelvin() as f64 - t).abs() < t_limit,
                "T from p at {z}: {} vs {t}",
                t2.kelvin()
            );
        }
    }
    println!(
        "fluids vectors: {} rows, worst inverse error {worst_inverse:.4} m",
        rows.len()
    );
}

/// Pressure -> height error of the f32 library against the f64 evaluation of the same
/// standard, swept over every f32 step of a dense log-spaced pressure grid.
#[test]
fn accuracy_sweep_against_f64() {
    let p_hi = US_1976.bottom_pressure_pa() as f64;
    let p_lo = US_1976.top_pressure_pa() as f64;
    let n = 400_000;
    // bands by geometric height, km
    let bands: [(f64, f64); 9] = [
        (-5.0, 0.0),
        (0.0, 11.0),
        (11.0, 20.0),
        (20.0, 32.0),
        (32.0, 47.0),
        (47.0, 51.0),
        (51.0, 71.0),
        (71.0, 86.0),
        (0.0, 86.0),
    ];
    let mut worst = [0.0f64; 9];
    let mut worst_300_1100 = 0.0f64;
    for i in 0..=n {
        let f = i as f64 / n as f64;
        let p = (p_hi.ln() + f * (p_lo.ln() - p_hi.ln())).exp() as f32;
        if (p as f64) > p_hi || (p as f64) < p_lo {
            continue;
        }
        let ours = atmosphere::pressure_altitude(pa(p)).unwrap().meters() as f64;
        let exact = US76.pressure_altitude(p as f64);
        let err = (ours - exact).abs();
        let zk = exact / 1000.0;
        for (b, (lo, hi)) in bands.iter().enumerate() {
            if zk >= *lo && zk <= *hi {
                worst[b] = worst[b].max(err);
            }
        }
        if (30_000.0..=110_000.0).contains(&p) {
            worst_300_1100 = worst_300_1100.max(err);
        }
    }
    let backend = if cfg!(all(feature = "micromath", not(feature = "libm"))) {
        "micromath"
    } else {
        "libm"
    };
    println!("pressure -> height, f32 ({backend}) vs f64 U.S. 1976, worst |error| by band:");
    println!("| band (km) | worst error (m) |");
    println!("| --- | --- |");
    for (b, (lo, hi)) in bands.iter().enumerate() {
        println!("| {lo} to {hi} | {:.4} |", worst[b]);
    }
    println!("| 300-1100 hPa | {worst_300_1100:.4} |");
    if cfg!(all(feature = "micromath", not(feature = "libm"))) {
        // Goal for the fast backend (design notes): <= 0.5 m in 300-1100 hPa.
        assert!(
            worst_300_1100 <= 0.5,
            "micromath 300-1100 hPa: {worst_300_1100}"
        );
    } else {
        // Goals: <= 1 cm to 51 km, <= 5 cm to 86 km.
        for (b, (_, hi)) in bands.iter().enumerate() {
            let limit = if *hi <= 51.0 { 0.01 } else { 0.05 };
            assert!(worst[b] <= limit, "band {b}: {} m", worst[b]);
        }
    }
}

#[test]
fn forward_accuracy_sweep_against_f64() {
    // Height -> pressure, relative error, every 10 m from -5 km to 86 km.
    let mut worst = 0.0f64;
    let mut z = -5000.0f32;
    while z <= 86_000.0 {
        let ours = US_1976.pressure_at(m(z)).unwrap().pa() as f64;
        let (_, exact) = US76.at_geopotential(US76.geopotential_of_geometric(z as f64));
        worst = worst.max((ours - exact).abs() / exact);
        z += 10.0;
    }
    println!("height -> pressure worst relative error: {worst:.2e}");
    let limit = if cfg!(all(feature = "micromath", not(feature = "libm"))) {
        1e-3
    } else {
        2e-6
    };
    assert!(worst < limit);
}

#[test]
fn common_practice_facts() {
    // Common practice: 850 hPa lies near 1.5 km and 700 hPa near 3 km in a standard
    // atmosphere.
    let h850 = atmosphere::pressure_altitude(Pressure::from_hpa(850.0).unwrap()).unwrap();
    let h700 = atmosphere::pressure_altitude(Pressure::from_hpa(700.0).unwrap()).unwrap();
    assert!((h850.meters() - 1500.0).abs() < 60.0, "{h850:?}");
    assert!((h700.meters() - 3000.0).abs() < 60.0, "{h700:?}");
    // Common practice: about 8.3 m per hPa near sea level.
    let a = atmosphere::pressure_altitude(Pressure::from_hpa(1013.25).unwrap()).unwrap();
    let b = atmosphere::pressure_altitude(Pressure::from_hpa(1012.25).unwrap()).unwrap();
    let per_hpa = b.meters() - a.meters();
    assert!((per_hpa - 8.3).abs() < 0.1, "{per_hpa} m/hPa");
    // Common practice: a 1000-500 hPa thickness of 5400 m means a mean virtual
    // temperature near 266 K.
    let tv = hypsometric::mean_virtual_temperature(
        Pressure::from_hpa(1000.0).unwrap(),
        Pressure::from_hpa(500.0).unwrap(),
        m(5400.0),
    )
    .unwrap();
    assert!((tv.kelvin() - 266.0).abs() < 1.0, "{tv:?}");
    // Common practice: a warmer layer is thicker than a colder one between the same
    // pressures.
    let p1 = Pressure::from_hpa(1000.0).unwrap();
    let p2 = Pressure::from_hpa(500.0).unwrap();
    let warm = hypsometric::thickness(p1, p2, Temperature::from_kelvin(280.0).unwrap()).unwrap();
    let cold = hypsometric::thickness(p1, p2, Temperature::from_kelvin(250.0).unwrap()).unwrap();
    assert!(warm.meters() > cold.meters());
    // Thickness and its inverse agree (self-consistency of Wallace & Hobbs 2006
    // eq. 3.29 and its solutions for Tv and p; no external value).
    let back = hypsometric::mean_virtual_temperature(p1, p2, warm).unwrap();
    assert!((back.kelvin() - 280.0).abs() < 1e-3);
    let top =
        hypsometric::pressure_above(p1, warm, Temperature::from_kelvin(280.0).unwrap()).unwrap();
    assert!((top.pa() - p2.pa()).abs() < 0.05);
}

#[test]
fn closed_forms_agree_with_standard_layers() {
    // The constant-lapse closed form over the troposphere reproduces the standard
    // (U.S. 1976 eq. 33a): from sea level to 500 hPa.
    let dh = hypsometric::constant_lapse_height(
        pa(101_325.0),
        Temperature::from_kelvin(288.15).unwrap(),
        -0.0065,
        Pressure::from_hpa(500.0).unwrap(),
    )
    .unwrap();
    let exact = US76.geopotential_of(50_000.0);
    assert!((dh.meters() as f64 - exact).abs() < 0.01);
    // Isothermal closed form in the 11-20 km layer (eq. 33b).
    let dh = hypsometric::isothermal_height(
        pa(22_632.064),
        Temperature::from_kelvin(216.65).unwrap(),
        pa(10_000.0),
    )
    .unwrap();
    assert!((dh.meters() as f64 + 11_000.0 - US76.geopotential_of(10_000.0)).abs() < 0.01);
    // Zero lapse rate in the lapse form is refused.
    assert_eq!(
        hypsometric::constant_lapse_height(
            pa(101_325.0),
            Temperature::from_kelvin(288.15).unwrap(),
            0.0,
            pa(90_000.0)
        ),
        Err(Error::ZeroLapseRate)
    );
}

#[test]
fn round_trips_and_monotonicity() {
    // height -> pressure -> height over the whole range of both standards.
    for model in [&US_1976, &ICAO] {
        let top_z = if model.name.starts_with("ICAO") {
            80_900.0
        } else {
            86_000.0
        };
        let mut z = -5000.0f32;
        let mut last_p = f32::INFINITY;
        while z <= top_z {
            let p = model
                .pressure_at(m(z))
                .unwrap_or_else(|e| panic!("{} at {z}: {e:?}", model.name));
            assert!(p.pa() < last_p, "pressure must fall with height at {z}");
            last_p = p.pa();
            let back = model
                .pressure_altitude(p)
                .unwrap_or_else(|e| panic!("{} inverse at {z} {p:?}: {e:?}", model.name))
                .meters();
            let limit = height_limit(z as f64) as f32;
            assert!(
                (back - z).abs() <= limit,
                "{} round trip at {z}: {back}",
                model.name
            );
            z += 7.0;
        }
    }
    // higher pressure, lower height: every adjacent f32 pair in a range near sea level
    let mut p = 95_000.0f32;
    let mut last = f32::INFINITY;
    while p < 105_000.0 {
        let h = atmosphere::pressure_altitude(pa(p)).unwrap().meters();
        assert!(h <= last);
        last = h;
        p = f32::from_bits(p.to_bits() + 1);
    }
}

#[test]
fn bad_input_gives_typed_errors() {
    assert_eq!(Pressure::from_pa(f32::NAN), Err(Error::NotFinite));
    assert_eq!(Pressure::from_pa(0.0), Err(Error::PressureNotPositive));
    assert_eq!(Pressure::from_pa(-5.0), Err(Error::PressureNotPositive));
    // Pressure above the model's bottom (about 1777.6 hPa at -5 km; the crate's own
    // table, computed from the U.S. 1976 constants and checked above).
    assert_eq!(
        atmosphere::pressure_altitude(Pressure::from_hpa(1800.0).unwrap()),
        Err(Error::BelowModelBottom)
    );
    // Pressure below the model's top (0.3734 Pa at 86 km; U.S. Standard Atmosphere 1976,
    // part 4 tables: 0.373 38 Pa, from memory).
    assert_eq!(
        atmosphere::pressure_altitude(pa(0.3)),
        Err(Error::AboveModelTop)
    );
    assert_eq!(US_1976.at_geometric(m(86_100.0)), Err(Error::AboveModelTop));
    assert_eq!(
        US_1976.at_geometric(m(-5_100.0)),
        Err(Error::BelowModelBottom)
    );
    assert_eq!(ICAO.at_geopotential(m(80_001.0)), Err(Error::AboveModelTop));
    assert_eq!(Height::from_meters(f32::INFINITY), Err(Error::NotFinite));
    assert!(geopotential::normal_gravity(f32::NAN).is_err());
    assert_eq!(
        geopotential::normal_gravity(91.0),
        Err(Error::InvalidSetting)
    );
    // The edges themselves are inside.
    assert!(US_1976.at_geometric(m(86_000.0)).is_ok());
    assert!(US_1976.at_geometric(m(-5_000.0)).is_ok());
    assert!(atmosphere::pressure_altitude(pa(US_1976.top_pressure_pa())).is_ok());
    assert!(atmosphere::pressure_altitude(pa(US_1976.bottom_pressure_pa())).is_ok());
}

#[test]
fn gravity_and_geopotential() {
    // WGS-84 normal gravity (NIMA TR8350.2, 3rd ed., table 3.4): equator 9.780 325 335 9,
    // pole 9.832 184 937 8 m/s^2; 45 degrees: 9.806 197 8 (Somigliana's closed form,
    // TR8350.2 eq. 4-1, evaluated in f64 by hand with those constants and e^2 =
    // 0.006 694 379 990 13, k = 0.001 931 852 652 41).
    // micromath's sine and square root are approximations: 1e-5 relative allowed there.
    let tol = if MICROMATH { 1e-4 } else { 2e-6 };
    assert!((geopotential::normal_gravity(0.0).unwrap() - 9.780_325_3).abs() < tol);
    assert!((geopotential::normal_gravity(90.0).unwrap() - 9.832_185).abs() < tol);
    assert!((geopotential::normal_gravity(-90.0).unwrap() - 9.832_185).abs() < tol);
    assert!((geopotential::normal_gravity(45.0).unwrap() - 9.806_197_8).abs() < tol);
    // U.S. 1976 eq. 18/19 round trip, and H < z above sea level.
    for z in [0.0f32, 1_000.0, 11_019.0, 32_000.0, 86_000.0] {
        let h = geopotential::geopotential_from_geometric(m(z), 6_356_766.0).unwrap();
        let back = geopotential::geometric_from_geopotential(h, 6_356_766.0).unwrap();
        assert!((back.meters() - z).abs() < 0.004, "{z}");
        let exact = US76.geopotential_of_geometric(z as f64);
        assert!((h.meters() as f64 - exact).abs() < 0.004);
    }
    // Latitude gravity: round trip, and stronger gravity (pole) packs the same
    // geopotential into less geometric height (about 0.5 % less than at the equator).
    let pole = Gravity::at_latitude(80.0).unwrap();
    let equator = Gravity::at_latitude(0.0).unwrap();
    for z in [0.0f32, 500.0, 12_000.0, 35_000.0] {
        for g in [pole, equator, Gravity::Standard] {
            let h = g.geopotential(m(z)).unwrap();
            let back = g.geometric(h).unwrap().meters();
            assert!((back - z).abs() < 0.005, "{g:?} {z}: {back}");
        }
    }
    let h = m(30_000.0);
    let zp = pole.geometric(h).unwrap().meters();
    let ze = equator.geometric(h).unwrap().meters();
    let ratio = ze / zp - 1.0;
    assert!(zp < ze);
    assert!(ratio > 0.004 && ratio < 0.006, "{ratio}");
    // Gravity falls with height: about 3.1e-6 /m near the surface (common practice:
    // free-air gradient 0.3086 mGal/m).
    let g0 = equator.at_height(Height::ZERO);
    let g1 = equator.at_height(m(1000.0));
    assert!(((g0 - g1) / 1000.0 - 3.086e-6).abs() < 0.02e-6);
}
