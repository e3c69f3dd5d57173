//! The composed pipeline: presets, rejection without state change, run-time settings,
//! state sizes.

use isohypse::atmosphere;
use isohypse::flight::Phase;
use isohypse::pipeline::parts::{self, Parts, Presence};
use isohypse::pipeline::{
    Estimator, Fixed, FixedSettings, Flags, HeightModel, Pipeline, Sample, Settings,
};
use isohypse::{Error, Pressure};
mod common;
use common::p_at;
#[allow(unused_imports)]
use common::{at, secs};
use isohypse::time::Instant;

#[test]
fn pipeline_state_sizes() {
    use core::mem::size_of;
    let rows = [
        (
            "Pipeline<2> (drone, hike presets; settings owned)",
            size_of::<Pipeline<2>>(),
        ),
        (
            "Pipeline<2, &'static Settings> (drone, hike; settings in flash)",
            size_of::<Pipeline<2, &'static Settings>>(),
        ),
        (
            "Pipeline<2, Fixed<P>>, drone (parts::Drone; settings fixed at compile time)",
            size_of::<Pipeline<2, Fixed<DroneFixed>>>(),
        ),
        (
            "Pipeline<2, Fixed<P>>, hike (parts::Hike)",
            size_of::<Pipeline<2, Fixed<HikeFixed>>>(),
        ),
        (
            "Pipeline<64, Fixed<P>>, balloon (parts::Balloon, 64 levels)",
            size_of::<Pipeline<64, Fixed<BalloonFixed>>>(),
        ),
        (
            "Pipeline<64> (balloon, 64 levels)",
            size_of::<Pipeline<64>>(),
        ),
        (
            "Pipeline<256> (balloon, 256 levels)",
            size_of::<Pipeline<256>>(),
        ),
        ("Settings", size_of::<Settings>()),
        (
            "filter::VerticalKalman",
            size_of::<isohypse::filter::VerticalKalman>(),
        ),
        (
            "flight::FlightPhases",
            size_of::<isohypse::flight::FlightPhases>(),
        ),
        (
            "track::HikeTracker",
            size_of::<isohypse::track::HikeTracker>(),
        ),
        (
            "sounding::Sounding<2>",
            size_of::<isohypse::sounding::Sounding<2>>(),
        ),
        (
            "sounding::Profile<256>",
            size_of::<isohypse::sounding::Profile<256>>(),
        ),
    ];
    println!("| state (host, {}-bit) | bytes |", usize::BITS);
    println!("| --- | --- |");
    for (name, size) in rows {
        println!("| {name} | {size} |");
    }
    // Borrowed settings keep at least the settings and the Kalman and phase settings
    // out of the state.
    assert!(
        size_of::<Pipeline<2, &'static Settings>>() + size_of::<Settings>()
            - 3 * size_of::<usize>()
            <= size_of::<Pipeline<2>>()
    );
    // Settings fixed at compile time take no room at all, not even a reference.
    assert!(
        size_of::<Pipeline<2, Fixed<DroneFixed>>>() + size_of::<usize>()
            <= size_of::<Pipeline<2, &'static Settings>>()
    );
    // The design notes' goal, pipeline state <= 256 bytes, for the drone and hike presets
    // with their own layouts (the firmware prints the Cortex-M figures, the same here).
    assert!(size_of::<Pipeline<2, Fixed<DroneFixed>>>() <= 256);
    assert!(size_of::<Pipeline<2, Fixed<HikeFixed>>>() <= 256);
    // The balloon pipeline grows by 12 bytes per profile level.
    assert_eq!(
        size_of::<Pipeline<256>>() - size_of::<Pipeline<64>>(),
        12 * (256 - 64)
    );
}

#[test]
fn pointwise_standard_is_pressure_altitude() {
    // Design notes (replay file contract): with the standard model, no filter and no start altitude the
    // output is the standard pressure altitude of each row.
    let mut s = Settings::balloon();
    s.model = HeightModel::Standard;
    s.estimator = Estimator::Off;
    let mut pipe = Pipeline::<2>::new(s).unwrap();
    for (i, p) in [101_325.0f32, 90_000.0, 50_000.0, 1_000.0, 10.0]
        .iter()
        .enumerate()
    {
        let out = pipe.process(&Sample::pressure(at(i as f64), *p));
        assert!(out.accepted());
        let expect = atmosphere::pressure_altitude(Pressure::from_pa(*p).unwrap()).unwrap();
        assert_eq!(out.altitude_m, expect.meters());
    }
}

#[test]
fn rejected_samples_change_nothing() {
    for settings in [Settings::balloon(), Settings::drone(), Settings::hike()] {
        let mut pipe = Pipeline::<16>::new(settings).unwrap();
        for i in 0..100 {
            let mut s = Sample::pressure(at(i as f64 * 0.1), p_at(200.0 + 0.01 * i as f32));
            s.temperature_c = Some(15.0);
            pipe.process(&s);
        }
        let before = pipe.clone();
        let bad = [
            Sample::pressure(at(9.9), 98_000.0),       // time repeats
            Sample::pressure(at(20.0), f32::NAN),      // pressure NaN
            Sample::pressure(at(20.0), -1.0),          // negative pressure
            Sample::pressure(at(20.0), 0.0),           // zero pressure
            Sample::pressure(at(20.0), 130_000.0),     // above 1200 hPa
            Sample::pressure(at(20.0), f32::INFINITY), // infinite pressure
        ];
        for s in bad {
            let out = pipe.process(&s);
            assert!(out.flags.rejected(), "{s:?} -> {:?}", out.flags);
            assert_eq!(pipe, before, "state changed by {s:?}");
        }
    }
}

#[test]
fn invalid_optional_channels_are_flagged_and_ignored() {
    let mut pipe = Pipeline::<16>::new(Settings::balloon()).unwrap();
    let mut s = Sample::pressure(at(0.0), 95_000.0);
    s.temperature_c = Some(-300.0);
    s.humidity_pct = Some(130.0);
    s.accel_up_mps2 = Some(f32::NAN);
    s.known_altitude_m = Some(f32::INFINITY);
    let out = pipe.process(&s);
    assert!(out.accepted());
    for f in [
        Flags::TEMPERATURE_IGNORED,
        Flags::HUMIDITY_IGNORED,
        Flags::ACCEL_IGNORED,
        Flags::FIX_IGNORED,
        Flags::TEMPERATURE_ASSUMED,
    ] {
        assert!(out.flags.contains(f), "{:?} lacks {f:?}", out.flags);
    }
    let names: Vec<&str> = out.flags.names().collect();
    assert!(names.contains(&"temperature_ignored"));
}

#[test]
fn invalid_settings_are_refused_and_old_ones_kept() {
    let mut bad = Settings::drone();
    bad.pressure_range_pa = (100.0, 50.0);
    assert_eq!(Pipeline::<2>::new(bad).err(), Some(Error::InvalidSetting));
    let mut bad = Settings::balloon();
    bad.latitude_deg = Some(120.0);
    assert!(Pipeline::<2>::new(bad).is_err());
    let mut pipe = Pipeline::<2>::new(Settings::drone()).unwrap();
    pipe.process(&Sample::pressure(at(0.0), 98_000.0));
    let before = pipe.clone();
    assert_eq!(
        pipe.set_start_altitude(Some(f32::NAN)),
        Err(Error::InvalidSetting)
    );
    assert_eq!(pipe, before);
    // a valid change takes effect without resetting the estimator
    pipe.set_start_altitude(Some(120.0)).unwrap();
    assert_eq!(pipe.settings().start_altitude_m, Some(120.0));
}

#[test]
fn drone_ground_reference_zeroes_height() {
    // 2 s at rest at 50 Hz with a pressure offset from standard: the height above the
    // ground reference starts near 0, whatever the site's pressure.
    let mut pipe = Pipeline::<2>::new(Settings::drone()).unwrap();
    let ground = p_at(437.0);
    let mut last = None;
    for i in 0..100 {
        last = Some(pipe.process(&Sample::pressure(at(i as f64 * 0.02), ground)));
    }
    let out = last.unwrap();
    assert_eq!(out.phase, Phase::Ground);
    assert!(out.altitude_m.abs() < 0.01, "{}", out.altitude_m);
}

#[test]
fn sounding_preset_starts_at_start_altitude() {
    let mut s = Settings::balloon();
    s.start_altitude_m = Some(310.0);
    s.latitude_deg = Some(64.2);
    let mut pipe = Pipeline::<64>::new(s).unwrap();
    let mut out = None;
    for i in 0..30 {
        let mut sample = Sample::pressure(at(i as f64), 97_000.0);
        sample.temperature_c = Some(20.0);
        sample.humidity_pct = Some(60.0);
        out = Some(pipe.process(&sample));
    }
    let out = out.unwrap();
    assert!((out.altitude_m - 310.0).abs() < 0.05, "{}", out.altitude_m);
    assert!(pipe.sounding().is_some());
}

#[test]
fn sea_level_setting_and_run_time_change() {
    use isohypse::datum::AltimeterSetting;
    // QNH 1013.25 hPa gives the pressure altitude; a QNH 10 hPa higher reads about
    // 83 m higher near sea level (common practice: about 8.3 m per hPa).
    let mut s = Settings::drone();
    s.start_altitude_m = None;
    s.estimator = Estimator::Off;
    s.altimeter_setting = AltimeterSetting::SeaLevel {
        qnh: Pressure::from_hpa(1023.25).unwrap(),
    };
    let mut pipe = Pipeline::<2>::new(s).unwrap();
    let p = p_at(300.0);
    let out = pipe.process(&Sample::pressure(at(0.0), p));
    assert!(
        (out.altitude_m - 300.0 - 83.0).abs() < 2.0,
        "{}",
        out.altitude_m
    );
    // New QNH at run time: no jump, the height slews to the new setting.
    let before = out.altitude_m;
    pipe.set_altimeter_setting(AltimeterSetting::Standard)
        .unwrap();
    let next = pipe.process(&Sample::pressure(at(0.02), p));
    assert!(
        (next.altitude_m - before).abs() < 1.0,
        "jumped to {}",
        next.altitude_m
    );
    let mut last = next;
    for i in 2..2000 {
        last = pipe.process(&Sample::pressure(at(i as f64 * 0.02), p));
    }
    assert!(
        (last.altitude_m - 300.0).abs() < 0.05,
        "{}",
        last.altitude_m
    );
    // An invalid setting is refused and the old one kept.
    let kept = pipe.clone();
    assert!(
        pipe.set_altimeter_setting(AltimeterSetting::SeaLevel {
            qnh: Pressure::from_pa(1.0).unwrap()
        })
        .is_err()
    );
    assert_eq!(pipe, kept);
}

#[test]
fn huge_time_gaps_keep_outputs_finite() {
    // Regression test for a fuzzer find: with the hike preset a gap of 1e77 s made the
    // vertical-speed smoother compute inf / inf (NaN); the datum slew had the same form.
    // Gaps now reach 584 542 years at the most (the whole range of an instant).
    for settings in [Settings::balloon(), Settings::drone(), Settings::hike()] {
        let mut pipe = Pipeline::<8>::new(settings).unwrap();
        pipe.process(&Sample::pressure(at(0.0), 95_000.0));
        for t in [10_000_000_000_000_000, u64::MAX / 2, u64::MAX] {
            let out = pipe.process(&Sample::pressure(Instant::from_micros(t), 95_000.0));
            assert!(out.accepted(), "{out:?}");
            assert!(
                out.altitude_m.is_finite()
                    && out.vertical_speed_mps.is_finite()
                    && out.altitude_sigma_m.is_finite(),
                "{out:?}"
            );
        }
    }
}

#[test]
fn tiny_time_steps_keep_hike_speed_finite() {
    // Regression test for a fuzzer find: the hike preset's speed smoother divided a
    // height change by a step of 5e-166 s and turned the f64 quotient into an f32
    // infinity. The smallest step is now one microsecond.
    let mut pipe = Pipeline::<2>::new(Settings::hike()).unwrap();
    let mut first = Sample::pressure(Instant::from_micros(0), 71_072.34);
    first.known_altitude_m = Some(-7_000.0 + 100.0);
    pipe.process(&first);
    for t in [1, 2, 3] {
        let out = pipe.process(&Sample::pressure(Instant::from_micros(t), 71_072.34));
        assert!(
            out.accepted() && out.vertical_speed_mps.is_finite(),
            "{out:?}"
        );
    }
}

#[test]
fn column_models_through_the_pipeline() {
    use isohypse::geopotential::{geometric_from_geopotential, geopotential_from_geometric};
    use isohypse::model::TemperatureModel;
    // Two-point hypsometric method (mean of the end temperatures): from a reference at
    // 500 m, 950 hPa, 15 degC to 900 hPa at 10 degC,
    // dH = (R / g0) * (T1 + T2) / 2 * ln(p1 / p2) (hypsometric equation, Wallace & Hobbs
    // 2006 eq. 3.29 with the layer mean taken as the mean of its ends).
    let mut s = Settings::hike();
    s.model = HeightModel::Column(TemperatureModel::MeanOfEnds);
    s.estimator = Estimator::Off;
    s.tracking = isohypse::pipeline::Tracking::Flight {
        phases: isohypse::flight::PhaseSettings::HIKE,
        totals_band_m: 3.0,
    };
    s.spike_gate_m = None;
    s.start_altitude_m = Some(500.0);
    let mut pipe = Pipeline::<2>::new(s).unwrap();
    let mut first = Sample::pressure(at(0.0), 95_000.0);
    first.temperature_c = Some(15.0);
    let out0 = pipe.process(&first);
    assert!((out0.altitude_m - 500.0).abs() < 1e-3, "{out0:?}");
    let mut second = Sample::pressure(at(1.0), 90_000.0);
    second.temperature_c = Some(10.0);
    let out = pipe.process(&second);
    // R = 287.053 07 J/(kg K), g0 = 9.806 65 m/s^2, r0 = 6 356 766 m: U.S. Standard
    // Atmosphere 1976, section 1.2 (R = R* / M0 = 8314.32 / 28.9644); eq. 18/19 below.
    let dh = 287.053_07f64 / 9.806_65 * (288.15 + 283.15) / 2.0 * (95_000.0f64 / 90_000.0).ln();
    let h_ref =
        geopotential_from_geometric(isohypse::Height::from_meters(500.0).unwrap(), 6_356_766.0)
            .unwrap()
            .meters() as f64;
    let expect = geometric_from_geopotential(
        isohypse::Height::from_meters((h_ref + dh) as f32).unwrap(),
        6_356_766.0,
    )
    .unwrap()
    .meters();
    assert!(
        (out.altitude_m - expect).abs() < 0.02,
        "{} vs {expect}",
        out.altitude_m
    );

    // A warm day (+10 K) puts the same pressure step higher than the standard model
    // (common practice: thickness grows with temperature).
    let height_for = |model: HeightModel| {
        let mut s = Settings::drone();
        s.model = model;
        s.estimator = Estimator::Off;
        s.start_altitude_m = None;
        let mut pipe = Pipeline::<2>::new(s).unwrap();
        pipe.process(&Sample::pressure(at(0.0), 100_000.0));
        pipe.process(&Sample::pressure(at(1.0), 80_000.0))
            .altitude_m
    };
    let warm = height_for(HeightModel::Column(TemperatureModel::StandardOffset {
        delta_k: 10.0,
    }));
    let standard = height_for(HeightModel::Standard);
    assert!(warm > standard + 50.0, "{warm} vs {standard}");

    // A model that cannot place anything is refused with the settings.
    let mut bad = Settings::drone();
    bad.model = HeightModel::Column(TemperatureModel::ConstantLapse {
        reference_temperature: isohypse::Temperature::from_kelvin(280.0).unwrap(),
        lapse_rate_k_per_m: 0.0,
    });
    assert_eq!(Pipeline::<2>::new(bad).err(), Some(Error::InvalidSetting));
}

/// Samples of a demo log (empty fields are absent channels).
fn demo_samples(text: &str) -> Vec<Sample> {
    let mut header: Vec<&str> = Vec::new();
    let mut out = Vec::new();
    for line in text.lines().map(str::trim) {
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if header.is_empty() {
            header = line.split(',').collect();
            continue;
        }
        let mut s = Sample::default();
        for (name, field) in header.iter().zip(line.split(',')) {
            let v: Option<f64> = field.trim().parse().ok();
            match (*name, v) {
                ("time_s", Some(v)) => s.time = at(v),
                ("pressure_pa", Some(v)) => s.pressure_pa = v as f32,
                ("temperature_c", v) => s.temperature_c = v.map(|v| v as f32),
                ("humidity_pct", v) => s.humidity_pct = v.map(|v| v as f32),
                ("accel_up_mps2", v) => s.accel_up_mps2 = v.map(|v| v as f32),
                ("known_altitude_m", v) => s.known_altitude_m = v.map(|v| v as f32),
                _ => {}
            }
        }
        out.push(s);
    }
    out
}

#[test]
fn borrowed_settings_give_the_same_outputs() {
    // The same generic code with the settings owned or borrowed from a `static`: every
    // output of the three demo logs is identical, also across run-time changes (a new
    // altimeter setting, a re-zero, a disturbance flag). Checked against the crate itself
    // (the borrowed form is a storage choice, not new maths).
    static PRESETS: std::sync::OnceLock<[Settings; 3]> = std::sync::OnceLock::new();
    let presets =
        PRESETS.get_or_init(|| [Settings::drone(), Settings::hike(), Settings::balloon()]);
    let logs = [
        include_str!("../examples/data/drone.csv"),
        include_str!("../examples/data/hike.csv"),
        include_str!("../examples/data/balloon.csv"),
    ];
    for (settings, log) in presets.iter().zip(logs) {
        let samples = demo_samples(log);
        assert!(samples.len() > 100);
        let mut owned = Pipeline::<64>::new(*settings).unwrap();
        let mut borrowed = Pipeline::<64, &Settings>::new(settings).unwrap();
        assert_eq!(owned.settings(), borrowed.settings());
        for (i, s) in samples.iter().enumerate() {
            if i == samples.len() / 3 {
                let qnh = isohypse::datum::AltimeterSetting::SeaLevel {
                    qnh: Pressure::from_pa(100_500.0).unwrap(),
                };
                owned.set_altimeter_setting(qnh).unwrap();
                borrowed.set_altimeter_setting(qnh).unwrap();
                owned.set_baro_disturbed(true);
                borrowed.set_baro_disturbed(true);
            }
            if i == samples.len() / 2 {
                owned.rezero();
                borrowed.rezero();
                owned.set_baro_disturbed(false);
                borrowed.set_baro_disturbed(false);
            }
            if s.pressure_pa == 0.0 {
                // an accelerometer-only row (the drone log's 200 Hz channel)
                let accel = s.accel_up_mps2.unwrap();
                assert_eq!(
                    owned.accelerometer(at(secs(s.time)), accel),
                    borrowed.accelerometer(at(secs(s.time)), accel)
                );
                continue;
            }
            let a = owned.process(s);
            let b = borrowed.process(s);
            assert_eq!(a, b, "sample {i}");
            assert!(a.accepted(), "sample {i}: {a:?}");
            assert_eq!(owned.last_output(), a, "sample {i}");
        }
        assert_eq!(owned.settings(), borrowed.settings());
        assert_eq!(owned.outlier_count(), borrowed.outlier_count());
    }
}

struct DroneFixed;
impl FixedSettings for DroneFixed {
    const SETTINGS: Settings = Settings::drone();
    type Parts = parts::Drone;
}
struct HikeFixed;
impl FixedSettings for HikeFixed {
    const SETTINGS: Settings = Settings::hike();
    type Parts = parts::Hike;
}
struct BalloonFixed;
impl FixedSettings for BalloonFixed {
    const SETTINGS: Settings = Settings::balloon();
    type Parts = parts::Balloon;
}

/// The same samples through a pipeline with owned settings and one with the same settings
/// fixed at compile time: the outputs agree bit for bit (the store changes where the
/// settings live, not what is computed).
fn same_outputs<const N: usize, T: FixedSettings>(samples: &[Sample]) {
    let mut owned = Pipeline::<N>::new(T::SETTINGS).unwrap();
    let mut fixed = Pipeline::<N, Fixed<T>>::new(Fixed::new()).unwrap();
    assert_eq!(fixed.settings(), T::SETTINGS);
    for s in samples {
        let (a, b) = (owned.process(s), fixed.process(s));
        assert_eq!(a.altitude_m.to_bits(), b.altitude_m.to_bits());
        assert_eq!(
            a.vertical_speed_mps.to_bits(),
            b.vertical_speed_mps.to_bits()
        );
        assert_eq!(a.altitude_sigma_m.to_bits(), b.altitude_sigma_m.to_bits());
        assert_eq!(a, b);
    }
    // run-time changes work as with any store, except a start altitude in a layout
    // without the ground reference: refused, nothing changed
    if <<T::Parts as Parts>::Ground as Presence>::HELD {
        owned.set_start_altitude(Some(250.0)).unwrap();
        fixed.set_start_altitude(Some(250.0)).unwrap();
    } else {
        let before = fixed.clone();
        assert_eq!(
            fixed.set_start_altitude(Some(250.0)),
            Err(Error::InvalidSetting)
        );
        assert_eq!(fixed, before);
    }
    let last = samples.last().unwrap();
    let next = Sample::pressure(at(secs(last.time) + 1.0), last.pressure_pa);
    assert_eq!(owned.process(&next), fixed.process(&next));
}

#[test]
fn fixed_settings_give_the_same_outputs() {
    // invented samples: a climb of about 40 m with a spike and an accelerometer channel
    let samples: Vec<Sample> = (0..300)
        .map(|i| {
            let t = f64::from(i) * 0.1;
            let h = if i < 100 {
                0.0
            } else {
                (f64::from(i) - 100.0) * 0.2
            };
            let mut s = Sample::pressure(at(t), p_at(h as f32));
            if i == 150 {
                s.pressure_pa -= 400.0;
            }
            s.accel_up_mps2 = Some(if (95..105).contains(&i) { 0.5 } else { 0.0 });
            s.temperature_c = Some(18.0);
            s
        })
        .collect();
    same_outputs::<2, DroneFixed>(&samples);
    same_outputs::<2, HikeFixed>(&samples);
    same_outputs::<64, BalloonFixed>(&samples);
}

/// Settings whose needs a layout omits.
struct DroneInHikeParts;
impl FixedSettings for DroneInHikeParts {
    const SETTINGS: Settings = Settings::drone();
    type Parts = parts::Hike;
}
struct HikeInDroneParts;
impl FixedSettings for HikeInDroneParts {
    const SETTINGS: Settings = Settings::hike();
    type Parts = parts::Drone;
}
struct BalloonInDroneParts;
impl FixedSettings for BalloonInDroneParts {
    const SETTINGS: Settings = Settings::balloon();
    type Parts = parts::Drone;
}
struct HikeWithStart;
impl FixedSettings for HikeWithStart {
    const SETTINGS: Settings = {
        let mut s = Settings::hike();
        s.start_altitude_m = Some(800.0);
        s
    };
    type Parts = parts::Hike;
}
struct HikeInEvery;
impl FixedSettings for HikeInEvery {
    const SETTINGS: Settings = HikeWithStart::SETTINGS;
    type Parts = parts::Every;
}

#[test]
fn layouts_refuse_settings_that_need_an_omitted_part() {
    // the Kalman filter, the hike tracker, the sounding, the ground reference
    assert_eq!(
        Pipeline::<2, Fixed<DroneInHikeParts>>::new(Fixed::new()).err(),
        Some(Error::InvalidSetting)
    );
    assert_eq!(
        Pipeline::<2, Fixed<HikeInDroneParts>>::new(Fixed::new()).err(),
        Some(Error::InvalidSetting)
    );
    assert_eq!(
        Pipeline::<2, Fixed<BalloonInDroneParts>>::new(Fixed::new()).err(),
        Some(Error::InvalidSetting)
    );
    assert_eq!(
        Pipeline::<2, Fixed<HikeWithStart>>::new(Fixed::new()).err(),
        Some(Error::InvalidSetting)
    );
    // the same settings in a layout with every part are taken
    assert!(Pipeline::<2, Fixed<HikeInEvery>>::new(Fixed::new()).is_ok());
}

#[test]
fn lean_layouts_are_smaller_and_compute_the_same() {
    use core::mem::size_of;
    struct DroneEvery;
    impl FixedSettings for DroneEvery {
        const SETTINGS: Settings = Settings::drone();
        type Parts = parts::Every;
    }
    struct HikeEvery;
    impl FixedSettings for HikeEvery {
        const SETTINGS: Settings = Settings::hike();
        type Parts = parts::Every;
    }
    let drone = size_of::<Pipeline<2, Fixed<DroneFixed>>>();
    let hike = size_of::<Pipeline<2, Fixed<HikeFixed>>>();
    let every = size_of::<Pipeline<2, Fixed<DroneEvery>>>();
    println!(
        "Pipeline<2, Fixed<P>>: drone parts {drone} B, hike parts {hike} B, every part {every} B (host)"
    );
    // an omitted part takes no room: the hike layout holds neither the Kalman filter
    // nor the ground reference nor the sounding
    assert!(
        hike + size_of::<isohypse::filter::GroundReference>()
            + size_of::<isohypse::sounding::Sounding<2>>()
            <= every
    );
    assert!(drone + size_of::<isohypse::track::HikeTracker>() <= every);
    // and the outputs are those of the layout with every part, bit for bit
    let samples: Vec<Sample> = (0..400)
        .map(|i| {
            let t = f64::from(i);
            let h = 300.0 + if i < 200 { f64::from(i) * 0.3 } else { 60.0 };
            let mut s = Sample::pressure(at(t), p_at(h as f32));
            if i == 250 {
                s.known_altitude_m = Some(371.0);
            }
            s
        })
        .collect();
    let mut lean = Pipeline::<2, Fixed<HikeFixed>>::new(Fixed::new()).unwrap();
    let mut full = Pipeline::<2, Fixed<HikeEvery>>::new(Fixed::new()).unwrap();
    let mut lean_drone = Pipeline::<2, Fixed<DroneFixed>>::new(Fixed::new()).unwrap();
    let mut full_drone = Pipeline::<2, Fixed<DroneEvery>>::new(Fixed::new()).unwrap();
    for s in &samples {
        assert_eq!(lean.process(s), full.process(s));
        assert_eq!(lean_drone.process(s), full_drone.process(s));
    }
    assert_eq!(lean.last_output(), full.last_output());
}

#[test]
fn drone_settles_and_matches_the_full_filter() {
    // Invented samples: 70 s at 50 Hz, an accelerometer sample with every pressure
    // sample; at rest 40 s on a field at 200 m, then a 12 m hop. Pressure noise: a
    // deterministic triangle sequence of +-1.5 Pa (no randomness needed here).
    let samples: Vec<Sample> = (0..3500)
        .map(|i| {
            let t = f64::from(i) * 0.02;
            let (z, a) = match t {
                t if t < 40.0 => (0.0, 0.0),
                t if t < 42.0 => (0.5 * 1.5 * (t - 40.0).powi(2), 1.5),
                t if t < 44.0 => (3.0 + 3.0 * (t - 42.0), 0.0),
                t if t < 46.0 => (9.0 + 3.0 * (t - 44.0) - 0.75 * (t - 44.0).powi(2), -1.5),
                _ => (12.0, 0.0),
            };
            let noise = f64::from((i * 7) % 13) / 4.0 - 1.5;
            let mut s = Sample::pressure(at(t), p_at(200.0 + z as f32) + noise as f32);
            s.accel_up_mps2 = Some(a as f32);
            s
        })
        .collect();
    let mut reuse_settings = Settings::drone();
    if let Estimator::Kalman(k) = &mut reuse_settings.estimator {
        *k = k.with_gain_reuse();
    }
    let mut reuse = Pipeline::<2>::new(reuse_settings).unwrap();
    let mut full = Pipeline::<2>::new(Settings::drone()).unwrap();
    let (mut settled, mut first) = (0, None);
    let (mut dh, mut dv) = (0.0f32, 0.0f32);
    for s in &samples {
        let (a, b) = (reuse.process(s), full.process(s));
        assert!(!full.estimator_settled());
        if reuse.estimator_settled() {
            settled += 1;
            first.get_or_insert(secs(s.time));
        }
        assert_eq!(a.flags, b.flags);
        dh = dh.max((a.altitude_m - b.altitude_m).abs());
        dv = dv.max((a.vertical_speed_mps - b.vertical_speed_mps).abs());
    }
    println!(
        "drone preset: settled on {settled} of 3500 samples, first at {first:?} s; \
         largest difference from the full filter: height {dh:e} m, speed {dv:e} m/s"
    );
    // The covariance settles during the rest (about 30 s, see the filter's docs).
    assert!(first.is_some_and(|t| t < 40.0), "{first:?}");
    assert!(settled > 1000, "{settled}");
    // Far inside the drone-hop budget (5 cm, 10 cm/s): the reused gain is within
    // the 1 % tolerance of the full filter's.
    assert!(dh < 1.0e-3, "{dh}");
    assert!(dv < 1.0e-3, "{dv}");
}
