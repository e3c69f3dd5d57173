//! Bad inputs, one table: every layer is fed values it must refuse or flag, and the state
//! after a refused input is compared with a clone taken before it (all state types derive
//! `Clone + PartialEq`). Inputs that are accepted but flagged (a stuck sensor, a huge gap,
//! a spike, a clock fault) are checked against their documented behaviour: no NaN,
//! bounded output, recovery.
//!
//! `cargo test --test bad_inputs -- --nocapture` prints the table (case, layer, expected,
//! observed) as markdown, ready for DEVELOPERS.md.
//!
//! Physical limits used (choices of the crate, documented on each item): temperature
//! 100..=400 K (`Temperature::AIR_RANGE_K`), humidity 0..=100 %, the use presets' pressure
//! ranges (`min_pressure_pa`..=`max_pressure_pa`, at most 110 000 Pa, i.e. 1100 hPa),
//! Kalman height range -5 km..86 km and acceleration limit 16 g
//! (`VerticalKalmanConfig::DEFAULT`), longest gaps between samples (`max_gap_s`: drone
//! 10 s, balloon 600 s, walk 6 h).

use std::fmt::Debug;

use isohypse::atmosphere::US_1976;
use isohypse::datum::Calibration;
use isohypse::filter::{
    AlphaBeta, KalmanOutcome, Median, MovingAverage, OnePole, VerticalKalman, VerticalKalmanConfig,
};
use isohypse::flight::{FlightPhases, PhaseSettings};
use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureModel, TemperatureProfile};
use isohypse::sounding::{Level, Profile};
use isohypse::time::{Instant, WrappingTicks};
use isohypse::track::{AscentTotals, HikeConfig, HikeTracker};
use isohypse::uses::{
    Balloon, BalloonSettings, Drone, DroneSettings, DroneState, Flags, Output, Sample, Use, Walk,
    WalkSettings,
};
use isohypse::{Error, Height, Pressure, RelativeHumidity, Temperature};
mod common;
use common::{at, h, k, p_at, pa, secs};

/// Outcome of one case: whether it matched, and what was observed.
type Observed = (bool, String);

/// A constructor or pure function must return `Err(expected)`.
fn err_is<T: Debug>(r: Result<T, Error>, expected: Error) -> Observed {
    let ok = matches!(&r, Err(e) if *e == expected);
    (ok, format!("{r:?}"))
}

/// A method on `state` must return `Err(expected)` and leave `state` equal to before.
fn refused<S: Clone + PartialEq, T: Debug>(
    state: &mut S,
    expected: Error,
    f: impl FnOnce(&mut S) -> Result<T, Error>,
) -> Observed {
    let before = state.clone();
    let r = f(state);
    let unchanged = *state == before;
    let ok = matches!(&r, Err(e) if *e == expected) && unchanged;
    let state = if unchanged { "unchanged" } else { "CHANGED" };
    (ok, format!("{r:?}; state {state}"))
}

fn flag_names(f: Flags) -> String {
    let v: Vec<&str> = f.names().collect();
    if v.is_empty() {
        "none".into()
    } else {
        v.join("|")
    }
}

fn finite<S>(o: &Output<S>) -> bool {
    o.altitude_m.is_finite()
        && o.raw_altitude_m.is_finite()
        && o.vertical_speed_mps.is_finite()
        && o.altitude_sigma_m.is_finite()
        && o.ascent_m.is_finite()
        && o.descent_m.is_finite()
}

/// `use_` after `n` valid samples at `rate_hz` at height `z`.
fn warmed<U: Use>(mut use_: U, z: f32, n: usize, rate_hz: f64) -> U {
    for i in 0..n {
        let out = use_.process(&Sample::pressure(at(i as f64 / rate_hz), p_at(z)));
        assert!(out.accepted());
    }
    use_
}

/// A drone (preset) after `n` samples at 50 Hz at height `z`.
fn drone(z: f32, n: usize) -> Drone<'static> {
    warmed(Drone::new(&DroneSettings::DEFAULT).unwrap(), z, n, 50.0)
}

/// A walk (preset) after `n` samples at 1 Hz at height `z`.
fn walk(z: f32, n: usize) -> Walk<'static> {
    warmed(Walk::new(&WalkSettings::DEFAULT).unwrap(), z, n, 1.0)
}

/// A balloon (preset, `N` profile levels) after `n` samples at 1 Hz at height `z`.
fn balloon<const N: usize>(z: f32, n: usize) -> Balloon<'static, N> {
    warmed(
        Balloon::<N>::new(&BalloonSettings::DEFAULT).unwrap(),
        z,
        n,
        1.0,
    )
}

/// A drone that took off from 300 m (ground reference frozen), climbed 10 m at 1 m/s
/// and has hovered for 10 s at 310 m, at 50 Hz.
fn drone_hovering() -> Drone<'static> {
    let mut p = drone(300.0, 100);
    for i in 0..500 {
        let z = 300.0 + (i as f32 * 0.02).min(10.0);
        let t = 2.0 + i as f64 * 0.02;
        assert!(p.process(&Sample::pressure(at(t), p_at(z))).accepted());
    }
    assert_ne!(p.state(), DroneState::OnGround);
    assert!(
        (p.last_output().altitude_m - 10.0).abs() < 0.2,
        "{:?}",
        p.last_output()
    );
    p
}

/// The use must reject `sample` with `flag` and stay exactly as it was; the output must
/// carry the previous (finite) estimate.
fn use_rejects<U: Use + Clone + PartialEq>(u: &mut U, sample: Sample, flag: Flags) -> Observed {
    let before = u.clone();
    let out = u.process(&sample);
    let unchanged = *u == before;
    let ok = out.flags == flag && unchanged && finite(&out);
    let state = if unchanged { "unchanged" } else { "CHANGED" };
    (
        ok,
        format!("flags {}; state {state}", flag_names(out.flags)),
    )
}

/// The use must accept `sample` with `flags` (the channel ignored) and finite output.
fn use_flags<U: Use>(u: &mut U, sample: Sample, flags: Flags) -> Observed {
    let out = u.process(&sample);
    let ok = out.accepted() && out.flags.contains(flags) && finite(&out);
    (
        ok,
        format!(
            "accepted={} flags {}",
            out.accepted(),
            flag_names(out.flags)
        ),
    )
}

struct Case {
    name: &'static str,
    layer: &'static str,
    expected: &'static str,
    run: fn() -> Observed,
}

fn cases() -> Vec<Case> {
    vec![
        // ---- units ----------------------------------------------------------------
        Case {
            name: "pressure NaN",
            layer: "units",
            expected: "Err(NotFinite)",
            run: || err_is(Pressure::from_pa(f32::NAN), Error::NotFinite),
        },
        Case {
            name: "pressure +inf",
            layer: "units",
            expected: "Err(NotFinite)",
            run: || err_is(Pressure::from_pa(f32::INFINITY), Error::NotFinite),
        },
        Case {
            name: "pressure -inf hPa",
            layer: "units",
            expected: "Err(NotFinite)",
            run: || err_is(Pressure::from_hpa(f32::NEG_INFINITY), Error::NotFinite),
        },
        Case {
            name: "pressure 0 Pa",
            layer: "units",
            expected: "Err(PressureNotPositive)",
            run: || err_is(Pressure::from_pa(0.0), Error::PressureNotPositive),
        },
        Case {
            name: "pressure -500 Pa",
            layer: "units",
            expected: "Err(PressureNotPositive)",
            run: || err_is(Pressure::from_pa(-500.0), Error::PressureNotPositive),
        },
        Case {
            name: "temperature -5 K (below 0 K)",
            layer: "units",
            expected: "Err(TemperatureNotPositive)",
            run: || {
                err_is(
                    Temperature::from_kelvin(-5.0),
                    Error::TemperatureNotPositive,
                )
            },
        },
        Case {
            name: "temperature 450 K (above 400 K)",
            layer: "units",
            expected: "Err(TemperatureOutOfRange)",
            run: || {
                err_is(
                    Temperature::from_kelvin(450.0),
                    Error::TemperatureOutOfRange,
                )
            },
        },
        Case {
            name: "temperature -280 degC (below 0 K)",
            layer: "units",
            expected: "Err(TemperatureNotPositive)",
            run: || {
                err_is(
                    Temperature::from_celsius(-280.0),
                    Error::TemperatureNotPositive,
                )
            },
        },
        Case {
            name: "humidity 100.5 %",
            layer: "units",
            expected: "Err(HumidityOutOfRange)",
            run: || {
                err_is(
                    RelativeHumidity::from_percent(100.5),
                    Error::HumidityOutOfRange,
                )
            },
        },
        Case {
            name: "humidity -1 %",
            layer: "units",
            expected: "Err(HumidityOutOfRange)",
            run: || {
                err_is(
                    RelativeHumidity::from_percent(-1.0),
                    Error::HumidityOutOfRange,
                )
            },
        },
        // ---- physics ----------------------------------------------------------------
        Case {
            name: "pressure 2000 hPa (below -5 km)",
            layer: "atmosphere",
            expected: "Err(BelowModelBottom)",
            run: || {
                err_is(
                    US_1976.pressure_altitude(pa(200_000.0)),
                    Error::BelowModelBottom,
                )
            },
        },
        Case {
            name: "pressure 0.1 Pa (above 86 km)",
            layer: "atmosphere",
            expected: "Err(AboveModelTop)",
            run: || err_is(US_1976.pressure_altitude(pa(0.1)), Error::AboveModelTop),
        },
        Case {
            name: "height 90 km geopotential",
            layer: "atmosphere",
            expected: "Err(AboveModelTop)",
            run: || err_is(US_1976.at_geopotential(h(90_000.0)), Error::AboveModelTop),
        },
        Case {
            name: "constant-lapse model, lapse 0",
            layer: "model",
            expected: "Err(ZeroLapseRate)",
            run: || {
                err_is(
                    TemperatureModel::constant_lapse(k(288.0), 0.0),
                    Error::ZeroLapseRate,
                )
            },
        },
        Case {
            name: "standard offset +150 K",
            layer: "model",
            expected: "Err(TemperatureOutOfRange)",
            run: || {
                err_is(
                    TemperatureModel::standard_offset(150.0),
                    Error::TemperatureOutOfRange,
                )
            },
        },
        Case {
            name: "mean-of-ends without temperatures",
            layer: "model",
            expected: "Err(NotEnoughData)",
            run: || {
                let r = Reference::new(pa(101_325.0), Height::ZERO);
                err_is(
                    TemperatureModel::MeanOfEnds.height(&r, pa(90_000.0), &AirSample::DRY),
                    Error::NotEnoughData,
                )
            },
        },
        Case {
            name: "temperature profile: 3rd knot in capacity 2",
            layer: "model",
            expected: "Err(CapacityFull), unchanged",
            run: || {
                let mut prof = TemperatureProfile::<2>::new();
                prof.push(h(0.0), k(288.0)).unwrap();
                prof.push(h(1_000.0), k(282.0)).unwrap();
                refused(&mut prof, Error::CapacityFull, |p| {
                    p.push(h(2_000.0), k(275.0))
                })
            },
        },
        Case {
            name: "temperature profile: knot not above the last",
            layer: "model",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut prof = TemperatureProfile::<4>::new();
                prof.push(h(1_000.0), k(282.0)).unwrap();
                refused(&mut prof, Error::NotIncreasing, |p| {
                    p.push(h(1_000.0), k(280.0))
                })
            },
        },
        // ---- datum ------------------------------------------------------------------
        Case {
            name: "calibration fix with sigma 0",
            layer: "datum",
            expected: "Err(InvalidSetting), unchanged",
            run: || {
                let mut cal = Calibration::new(TemperatureModel::Standard, 3.0).unwrap();
                cal.fix(pa(95_000.0), h(540.0), 1.0, &AirSample::DRY)
                    .unwrap();
                refused(&mut cal, Error::InvalidSetting, |c| {
                    c.fix(pa(94_000.0), h(620.0), 0.0, &AirSample::DRY)
                })
            },
        },
        Case {
            name: "calibration ages by -1 s",
            layer: "datum",
            expected: "Err(InvalidSetting), unchanged",
            run: || {
                let mut cal = Calibration::new(TemperatureModel::Standard, 3.0).unwrap();
                cal.fix(pa(95_000.0), h(540.0), 1.0, &AirSample::DRY)
                    .unwrap();
                refused(&mut cal, Error::InvalidSetting, |c| c.elapse(-1.0))
            },
        },
        Case {
            name: "calibration fix at 2000 hPa",
            layer: "datum",
            expected: "Err(BelowModelBottom), unchanged",
            run: || {
                let mut cal = Calibration::new(TemperatureModel::Standard, 3.0).unwrap();
                cal.fix(pa(95_000.0), h(540.0), 1.0, &AirSample::DRY)
                    .unwrap();
                refused(&mut cal, Error::BelowModelBottom, |c| {
                    c.fix(pa(200_000.0), h(540.0), 1.0, &AirSample::DRY)
                })
            },
        },
        // ---- filters ----------------------------------------------------------------
        Case {
            name: "median: NaN sample",
            layer: "filter",
            expected: "Err(NotFinite), unchanged",
            run: || {
                let mut m = Median::<5>::new();
                m.push(1.0).unwrap();
                m.push(2.0).unwrap();
                refused(&mut m, Error::NotFinite, |m| m.push(f32::NAN))
            },
        },
        Case {
            name: "moving average: +inf sample",
            layer: "filter",
            expected: "Err(NotFinite), unchanged",
            run: || {
                let mut m = MovingAverage::<4>::new();
                m.push(1.0).unwrap();
                refused(&mut m, Error::NotFinite, |m| m.push(f32::INFINITY))
            },
        },
        Case {
            name: "moving average: difference overflows f32",
            layer: "filter",
            expected: "Err(NotFinite), unchanged",
            run: || {
                let mut m = MovingAverage::<4>::new();
                m.push(-3.0e38).unwrap();
                refused(&mut m, Error::NotFinite, |m| m.push(3.0e38))
            },
        },
        Case {
            name: "one-pole: time going backwards",
            layer: "filter",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut f = OnePole::new(1.0).unwrap();
                f.update(at(10.0), 1.0).unwrap();
                refused(&mut f, Error::NotIncreasing, |f| f.update(at(9.0), 2.0))
            },
        },
        Case {
            name: "one-pole: time repeating",
            layer: "filter",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut f = OnePole::new(1.0).unwrap();
                f.update(at(10.0), 1.0).unwrap();
                refused(&mut f, Error::NotIncreasing, |f| f.update(at(10.0), 2.0))
            },
        },
        Case {
            name: "one-pole: cut-off 0 Hz",
            layer: "filter",
            expected: "Err(InvalidSetting)",
            run: || err_is(OnePole::new(0.0), Error::InvalidSetting),
        },
        Case {
            name: "alpha-beta: alpha 1.5",
            layer: "filter",
            expected: "Err(InvalidSetting)",
            run: || err_is(AlphaBeta::new(1.5, 0.1, 1.0), Error::InvalidSetting),
        },
        Case {
            name: "alpha-beta: repeated time",
            layer: "filter",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut f = AlphaBeta::new(0.5, 0.1, 1.0).unwrap();
                f.update(at(0.0), h(10.0)).unwrap();
                refused(&mut f, Error::NotIncreasing, |f| f.update(at(0.0), h(11.0)))
            },
        },
        Case {
            name: "Kalman: acceleration 1000 m/s^2 (> 16 g)",
            layer: "filter",
            expected: "Err(SampleOutOfRange), unchanged",
            run: || {
                let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
                kf.correct(at(0.0), h(100.0)).unwrap();
                refused(&mut kf, Error::SampleOutOfRange, |kf| {
                    kf.predict(at(0.01), 1_000.0)
                })
            },
        },
        Case {
            name: "Kalman: barometric height 100 km",
            layer: "filter",
            expected: "Err(AboveModelTop), unchanged",
            run: || {
                let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
                kf.correct(at(0.0), h(100.0)).unwrap();
                refused(&mut kf, Error::AboveModelTop, |kf| {
                    kf.correct(at(0.02), h(100_000.0))
                })
            },
        },
        Case {
            name: "Kalman: gate 0 in settings",
            layer: "filter",
            expected: "Err(InvalidSetting)",
            run: || {
                let cfg = VerticalKalmanConfig {
                    gate_nis: 0.0,
                    ..VerticalKalmanConfig::default()
                };
                err_is(VerticalKalman::new(cfg), Error::InvalidSetting)
            },
        },
        Case {
            name: "Kalman: one spike of +800 m (about 100 hPa)",
            layer: "filter",
            expected: "Rejected (outlier), estimate kept within 0.05 m",
            run: || {
                let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
                for i in 0..100 {
                    kf.correct(at(i as f64 * 0.02), h(300.0)).unwrap();
                }
                let before = kf.estimate().unwrap().height.meters();
                let r = kf.correct(at(2.0), h(1_100.0)).unwrap();
                let after = kf.estimate().unwrap().height.meters();
                let ok = matches!(r, KalmanOutcome::Rejected { .. })
                    && (after - before).abs() < 0.05
                    && kf.rejected_count() == 1;
                (ok, format!("{r:?}; height {before:.3} -> {after:.3} m"))
            },
        },
        // ---- sounding ---------------------------------------------------------------
        Case {
            name: "profile overflow: push into a full profile",
            layer: "sounding",
            expected: "Err(CapacityFull), unchanged",
            run: || {
                let mut prof = Profile::<2>::new(0.005).unwrap();
                for (i, p) in [90_000.0, 80_000.0].into_iter().enumerate() {
                    prof.push(Level {
                        pressure_pa: p,
                        geopotential_m: 1_000.0 * i as f32,
                        virtual_temperature_k: 280.0,
                    })
                    .unwrap();
                }
                refused(&mut prof, Error::CapacityFull, |prof| {
                    prof.push(Level {
                        pressure_pa: 70_000.0,
                        geopotential_m: 3_000.0,
                        virtual_temperature_k: 270.0,
                    })
                })
            },
        },
        Case {
            name: "profile: level with NaN temperature",
            layer: "sounding",
            expected: "Err(NotFinite), unchanged",
            run: || {
                let mut prof = Profile::<4>::new(0.005).unwrap();
                refused(&mut prof, Error::NotFinite, |prof| {
                    prof.push(Level {
                        pressure_pa: 70_000.0,
                        geopotential_m: 3_000.0,
                        virtual_temperature_k: f32::NAN,
                    })
                })
            },
        },
        // ---- trackers ---------------------------------------------------------------
        Case {
            name: "totals: band 0 m",
            layer: "track",
            expected: "Err(InvalidSetting)",
            run: || err_is(AscentTotals::new(0.0), Error::InvalidSetting),
        },
        Case {
            name: "totals: capacity (+-10 000 km swings)",
            layer: "track",
            expected: "saturates at u32::MAX cm, no panic",
            run: || {
                let mut t = AscentTotals::new(3.0).unwrap();
                for i in 0..10 {
                    t.update(h(if i % 2 == 0 { -1.0e8 } else { 1.0e8 }));
                }
                let ok = t.ascent_cm() == u32::MAX && t.descent_cm() == u32::MAX;
                (
                    ok,
                    format!("ascent {} cm, descent {} cm", t.ascent_cm(), t.descent_cm()),
                )
            },
        },
        Case {
            name: "hike tracker: time repeating",
            layer: "track",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
                t.update(at(5.0), pa(95_000.0)).unwrap();
                refused(&mut t, Error::NotIncreasing, |t| {
                    t.update(at(5.0), pa(94_990.0))
                })
            },
        },
        Case {
            name: "hike tracker: 200 hPa (above its range)",
            layer: "track",
            expected: "Err(AboveModelTop), unchanged",
            run: || {
                let mut t = HikeTracker::new(HikeConfig::default()).unwrap();
                t.update(at(5.0), pa(95_000.0)).unwrap();
                refused(&mut t, Error::AboveModelTop, |t| {
                    t.update(at(6.0), pa(20_000.0))
                })
            },
        },
        Case {
            name: "flight phases: NaN speed",
            layer: "flight",
            expected: "Err(NotFinite), unchanged",
            run: || {
                let mut f = FlightPhases::new(PhaseSettings::BALLOON).unwrap();
                f.update(at(0.0), 100.0, 0.0).unwrap();
                refused(&mut f, Error::NotFinite, |f| {
                    f.update(at(1.0), 100.0, f32::NAN)
                })
            },
        },
        // ---- uses: rejected samples ------------------------------------------------
        Case {
            name: "drone: pressure NaN",
            layer: "uses",
            expected: "rejected_pressure, unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(2.0), f32::NAN),
                    Flags::REJECTED_PRESSURE,
                )
            },
        },
        Case {
            name: "drone: pressure -inf",
            layer: "uses",
            expected: "rejected_pressure, unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(2.0), f32::NEG_INFINITY),
                    Flags::REJECTED_PRESSURE,
                )
            },
        },
        Case {
            name: "walk: pressure 0",
            layer: "uses",
            expected: "rejected_pressure, unchanged",
            run: || {
                let mut p = walk(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(100.0), 0.0),
                    Flags::REJECTED_PRESSURE,
                )
            },
        },
        Case {
            name: "walk: pressure -95 000 Pa",
            layer: "uses",
            expected: "rejected_pressure, unchanged",
            run: || {
                let mut p = walk(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(100.0), -95_000.0),
                    Flags::REJECTED_PRESSURE,
                )
            },
        },
        Case {
            name: "balloon: pressure 1250 hPa (> 1100 hPa)",
            layer: "uses",
            expected: "rejected_pressure and saturated (beyond the range), unchanged",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(30.0), 125_000.0),
                    Flags(Flags::REJECTED_PRESSURE.0 | Flags::SATURATED.0),
                )
            },
        },
        Case {
            name: "walk: time repeating",
            layer: "uses",
            expected: "rejected_time, unchanged",
            run: || {
                let mut p = walk(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(59.0), p_at(300.0)),
                    Flags::REJECTED_TIME,
                )
            },
        },
        Case {
            name: "drone: time repeating",
            layer: "uses",
            expected: "rejected_time, unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                use_rejects(
                    &mut p,
                    Sample::pressure(at(59.0 / 50.0), p_at(301.0)),
                    Flags::REJECTED_TIME,
                )
            },
        },
        Case {
            name: "drone: accelerometer before the last barometer sample",
            layer: "uses",
            expected: "Err(NotIncreasing), unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                refused(&mut p, Error::NotIncreasing, |p| {
                    p.accelerometer(at(0.5), 0.1)
                })
            },
        },
        // ---- uses: clock faults ----------------------------------------------------
        Case {
            name: "drone: time going backwards (clock restarted)",
            layer: "uses",
            expected: "accepted as a new time base: clock_fault, reacquired at the sample (within 0.5 m), finite",
            run: || {
                let mut p = drone(300.0, 60);
                let out = p.process(&Sample::pressure(at(0.5), p_at(305.0)));
                let ok = out.accepted()
                    && out.flags.contains(Flags::CLOCK_FAULT)
                    && out.flags.contains(Flags::REACQUIRED)
                    && (out.altitude_m - out.raw_altitude_m).abs() < 0.5
                    && finite(&out);
                (
                    ok,
                    format!(
                        "flags {}; height {:.2} m",
                        flag_names(out.flags),
                        out.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "walk: time going backwards (clock restarted)",
            layer: "uses",
            expected: "accepted as a new time base: clock_fault, height within 1 m of the new pressure altitude, totals kept, finite",
            run: || {
                let mut p = walk(300.0, 600);
                let before = p.last_output();
                let out = p.process(&Sample::pressure(at(10.0), p_at(305.0)));
                let ok = out.accepted()
                    && out.flags.contains(Flags::CLOCK_FAULT)
                    && (out.altitude_m - 305.0).abs() < 1.0
                    && out.ascent_m >= before.ascent_m
                    && out.descent_m >= before.descent_m
                    && finite(&out);
                (
                    ok,
                    format!(
                        "flags {}; height {:.2} m",
                        flag_names(out.flags),
                        out.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "balloon (in ascent): time going backwards (clock restarted)",
            layer: "uses",
            expected: "accepted as a new time base: clock_fault, reacquired, state and stored profile kept, finite",
            run: || {
                let mut p = Balloon::<64>::new(&BalloonSettings::DEFAULT).unwrap();
                // 5 m/s up from 300 m for 10 minutes, at 1 Hz
                for i in 0..600 {
                    let z = 300.0 + 5.0 * i as f32;
                    assert!(
                        p.process(&Sample::pressure(at(i as f64), p_at(z)))
                            .accepted()
                    );
                }
                let (state, levels) = (p.state(), p.sounding().map_or(0, |s| s.profile().len()));
                let out = p.process(&Sample::pressure(at(3.0), p_at(3_305.0)));
                let after = p.sounding().map_or(0, |s| s.profile().len());
                let ok = out.accepted()
                    && out.flags.contains(Flags::CLOCK_FAULT)
                    && out.flags.contains(Flags::REACQUIRED)
                    && out.state == state
                    && after >= levels
                    && levels >= 2
                    && (out.altitude_m - 3_305.0).abs() < 5.0
                    && finite(&out);
                (
                    ok,
                    format!(
                        "flags {}; {} -> {}, {levels} -> {after} levels; height {:.1} m",
                        flag_names(out.flags),
                        state.name(),
                        out.state.name(),
                        out.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "balloon: glitched stamp far ahead, then normal stamps",
            layer: "uses",
            expected: "the glitch and the next sample flagged clock_fault; every sample accepted",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                let glitch = p.process(&Sample::pressure(at(20.0 + 4_294_967.296), p_at(300.0)));
                let back = p.process(&Sample::pressure(at(21.0), p_at(305.0)));
                let next = p.process(&Sample::pressure(at(22.0), p_at(310.0)));
                let ok = glitch.accepted()
                    && glitch.flags.contains(Flags::CLOCK_FAULT)
                    && back.accepted()
                    && back.flags.contains(Flags::CLOCK_FAULT)
                    && next.accepted()
                    && !next.flags.contains(Flags::CLOCK_FAULT);
                (
                    ok,
                    format!(
                        "flags {} / {} / {}",
                        flag_names(glitch.flags),
                        flag_names(back.flags),
                        flag_names(next.flags)
                    ),
                )
            },
        },
        Case {
            name: "drone: raw u32 millisecond counter wraps (no WrappingTicks)",
            layer: "uses",
            expected: "the wrapped sample flagged clock_fault and accepted; the next one normal",
            run: || {
                let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
                let mut all_ok = true;
                // 2 s at 50 Hz up to the wrap, fed the raw counter as milliseconds
                for i in 0..100u32 {
                    let raw = u32::MAX - 2_000 + 20 * i;
                    let s = Sample::pressure(Instant::from_millis(raw.into()), p_at(300.0));
                    all_ok &= p.process(&s).accepted();
                }
                let raw = (u32::MAX - 2_000 + 2_000).wrapping_add(20);
                let wrapped = p.process(&Sample::pressure(
                    Instant::from_millis(raw.into()),
                    p_at(300.0),
                ));
                let next = p.process(&Sample::pressure(
                    Instant::from_millis(u64::from(raw) + 20),
                    p_at(300.0),
                ));
                let ok = all_ok
                    && wrapped.accepted()
                    && wrapped.flags.contains(Flags::CLOCK_FAULT)
                    && next.accepted()
                    && !next.flags.contains(Flags::CLOCK_FAULT)
                    && next.altitude_m.abs() < 0.5
                    && finite(&next);
                (
                    ok,
                    format!(
                        "flags {} then {}; height {:.3} m",
                        flag_names(wrapped.flags),
                        flag_names(next.flags),
                        next.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "drone: the same counter through WrappingTicks",
            layer: "uses",
            expected: "no clock_fault across the wrap, every sample accepted",
            run: || {
                let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
                let mut clock = WrappingTicks::<1_000>::new();
                let (mut faults, mut all_ok) = (0, true);
                for i in 0..200u32 {
                    let raw = (u32::MAX - 2_000).wrapping_add(20 * i);
                    let out = p.process(&Sample::pressure(clock.instant(raw), p_at(300.0)));
                    all_ok &= out.accepted() && finite(&out);
                    faults += u32::from(out.flags.contains(Flags::CLOCK_FAULT));
                }
                (all_ok && faults == 0, format!("{faults} clock faults"))
            },
        },
        Case {
            name: "drone: restart_clock, then a stamp back",
            layer: "uses",
            expected: "accepted without clock_fault (the filter starts anew: no reacquired flag either), height of the sample (within 0.5 m), state kept",
            run: || {
                let mut p = drone_hovering();
                let state = p.state();
                p.restart_clock();
                let out = p.process(&Sample::pressure(at(0.0), p_at(310.0)));
                let ok = out.accepted()
                    && !out.flags.contains(Flags::CLOCK_FAULT)
                    && (out.altitude_m - out.raw_altitude_m).abs() < 0.5
                    && (out.altitude_m - 10.0).abs() < 0.5
                    && out.state == state
                    && finite(&out);
                (
                    ok,
                    format!(
                        "flags {}; height {:.2} m",
                        flag_names(out.flags),
                        out.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "drone: accelerometer stamp beyond the longest gap (10 s)",
            layer: "uses",
            expected: "Err(TimeJump), unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                refused(&mut p, Error::TimeJump, |p| {
                    p.accelerometer(at(60.0 / 50.0 + 11.0), 0.1)
                })
            },
        },
        Case {
            name: "balloon: accelerometer stamp beyond the longest gap (600 s)",
            layer: "uses",
            expected: "Err(TimeJump), unchanged",
            run: || {
                let mut p = balloon::<8>(300.0, 20);
                refused(&mut p, Error::TimeJump, |p| {
                    p.accelerometer(at(20.0 + 601.0), 0.1)
                })
            },
        },
        // ---- uses: optional channels, ignored and flagged --------------------------
        Case {
            name: "balloon: temperature -300 degC",
            layer: "uses",
            expected: "accepted, temperature_ignored",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                let s = Sample {
                    temperature_c: Some(-300.0),
                    ..Sample::pressure(at(20.0), p_at(301.0))
                };
                use_flags(&mut p, s, Flags::TEMPERATURE_IGNORED)
            },
        },
        Case {
            name: "balloon: temperature +150 degC (> 400 K)",
            layer: "uses",
            expected: "accepted, temperature_ignored",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                let s = Sample {
                    temperature_c: Some(150.0),
                    ..Sample::pressure(at(20.0), p_at(301.0))
                };
                use_flags(&mut p, s, Flags::TEMPERATURE_IGNORED)
            },
        },
        Case {
            name: "balloon: humidity 130 %",
            layer: "uses",
            expected: "accepted, humidity_ignored",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                let s = Sample {
                    temperature_c: Some(15.0),
                    humidity_pct: Some(130.0),
                    ..Sample::pressure(at(20.0), p_at(301.0))
                };
                use_flags(&mut p, s, Flags::HUMIDITY_IGNORED)
            },
        },
        Case {
            name: "balloon: humidity -5 %",
            layer: "uses",
            expected: "accepted, humidity_ignored",
            run: || {
                let mut p = balloon::<64>(300.0, 20);
                let s = Sample {
                    humidity_pct: Some(-5.0),
                    ..Sample::pressure(at(20.0), p_at(301.0))
                };
                use_flags(&mut p, s, Flags::HUMIDITY_IGNORED)
            },
        },
        Case {
            name: "drone: acceleration NaN",
            layer: "uses",
            expected: "accepted, accel_ignored",
            run: || {
                let mut p = drone(300.0, 60);
                let s = Sample {
                    accel_up_mps2: Some(f32::NAN),
                    ..Sample::pressure(at(1.2), p_at(300.0))
                };
                use_flags(&mut p, s, Flags::ACCEL_IGNORED)
            },
        },
        Case {
            name: "walk: known altitude +inf",
            layer: "uses",
            expected: "accepted, fix_ignored",
            run: || {
                let mut p = walk(300.0, 60);
                let s = Sample {
                    known_altitude_m: Some(f32::INFINITY),
                    ..Sample::pressure(at(60.0), p_at(300.0))
                };
                use_flags(&mut p, s, Flags::FIX_IGNORED)
            },
        },
        // ---- uses: settings out of range -------------------------------------------
        Case {
            name: "drone settings: pressure range inverted",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = DroneSettings {
                    min_pressure_pa: 110_000.0,
                    max_pressure_pa: 30_000.0,
                    ..DroneSettings::DEFAULT
                };
                err_is(Drone::new(&s), Error::InvalidSetting)
            },
        },
        Case {
            name: "drone settings: ground_samples 0",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = DroneSettings {
                    ground_samples: 0,
                    ..DroneSettings::DEFAULT
                };
                err_is(Drone::new(&s), Error::InvalidSetting)
            },
        },
        Case {
            name: "balloon settings: latitude 95 deg",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = BalloonSettings {
                    latitude_deg: Some(95.0),
                    ..BalloonSettings::DEFAULT
                };
                err_is(Balloon::<8>::new(&s), Error::InvalidSetting)
            },
        },
        Case {
            name: "drone: take-off altitude NaN at run time",
            layer: "uses",
            expected: "Err(InvalidSetting), unchanged",
            run: || {
                let mut p = drone(300.0, 60);
                refused(&mut p, Error::InvalidSetting, |p| {
                    p.set_takeoff_altitude_m(f32::NAN)
                })
            },
        },
        Case {
            name: "drone settings: Kalman max step -1 s",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = DroneSettings {
                    kalman: VerticalKalmanConfig {
                        max_step_s: -1.0,
                        ..VerticalKalmanConfig::DEFAULT
                    },
                    ..DroneSettings::DEFAULT
                };
                err_is(Drone::new(&s), Error::InvalidSetting)
            },
        },
        Case {
            name: "walk settings: longest gap 0 s",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = WalkSettings {
                    max_gap_s: 0.0,
                    ..WalkSettings::DEFAULT
                };
                err_is(Walk::new(&s), Error::InvalidSetting)
            },
        },
        Case {
            name: "balloon settings: longest gap 8 days (> 1 week)",
            layer: "uses",
            expected: "Err(InvalidSetting)",
            run: || {
                let s = BalloonSettings {
                    max_gap_s: 8.0 * 86_400.0,
                    ..BalloonSettings::DEFAULT
                };
                err_is(Balloon::<8>::new(&s), Error::InvalidSetting)
            },
        },
        // ---- uses: accepted but flagged (documented behaviour) ---------------------
        Case {
            name: "drone (in flight): one spike of +100 hPa",
            layer: "uses",
            expected: "outlier flagged, height kept within 0.1 m, next sample normal",
            run: || {
                let mut p = drone_hovering();
                let before = p.last_output().altitude_m;
                let t = secs(p.last_output().time);
                let spike = p.process(&Sample::pressure(at(t + 0.02), p_at(310.0) + 10_000.0));
                let next = p.process(&Sample::pressure(at(t + 0.04), p_at(310.0)));
                let ok = spike.accepted()
                    && spike.flags.contains(Flags::OUTLIER)
                    && (spike.altitude_m - before).abs() < 0.1
                    && !next.flags.contains(Flags::OUTLIER)
                    && (next.altitude_m - before).abs() < 0.1
                    && finite(&spike)
                    && finite(&next);
                (
                    ok,
                    format!(
                        "flags {} then {}; height {before:.3} -> {:.3} -> {:.3} m",
                        flag_names(spike.flags),
                        flag_names(next.flags),
                        spike.altitude_m,
                        next.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "drone: huge time gap (1e6 s)",
            layer: "uses",
            expected: "accepted as a clock fault, reacquired at the new height (within 0.5 m), finite",
            run: || {
                let mut p = drone(300.0, 100);
                let out = p.process(&Sample::pressure(at(1.0e6), p_at(350.0)));
                let ok = out.accepted()
                    && out.flags.contains(Flags::CLOCK_FAULT)
                    && out.flags.contains(Flags::REACQUIRED)
                    && (out.altitude_m - out.raw_altitude_m).abs() < 0.5
                    && finite(&out);
                (
                    ok,
                    format!(
                        "flags {}; height {:.2} m, raw {:.2} m",
                        flag_names(out.flags),
                        out.altitude_m,
                        out.raw_altitude_m
                    ),
                )
            },
        },
        Case {
            name: "walk: huge time gap (30 days)",
            layer: "uses",
            expected: "accepted as a clock fault, finite, height within 1 m of the new pressure altitude",
            run: || {
                let mut p = walk(300.0, 120);
                let out = p.process(&Sample::pressure(at(30.0 * 86_400.0), p_at(800.0)));
                let ok = out.accepted()
                    && out.flags.contains(Flags::CLOCK_FAULT)
                    && finite(&out)
                    && (out.altitude_m - 800.0).abs() < 1.0;
                (
                    ok,
                    format!(
                        "flags {}; height {:.2} m",
                        flag_names(out.flags),
                        out.altitude_m
                    ),
                )
            },
        },
        Case {
            name: "drone: stuck sensor, one value for 10 000 samples",
            layer: "uses",
            expected: "accepted, finite, height constant within 0.01 m, sigma bounded",
            run: || {
                let mut p = drone(300.0, 100);
                let first = p.last_output().altitude_m;
                let (mut worst, mut max_sigma, mut all_ok) = (0.0f32, 0.0f32, true);
                for i in 100..10_100 {
                    let out = p.process(&Sample::pressure(at(i as f64 / 50.0), p_at(300.0)));
                    all_ok &= out.accepted() && finite(&out);
                    worst = worst.max((out.altitude_m - first).abs());
                    max_sigma = max_sigma.max(out.altitude_sigma_m);
                }
                let ok = all_ok && worst < 0.01 && max_sigma < 1.0;
                (
                    ok,
                    format!("max drift {worst:.4} m, max sigma {max_sigma:.3} m"),
                )
            },
        },
        Case {
            name: "walk: stuck sensor for 6 h",
            layer: "uses",
            expected: "accepted, finite, totals 0, resting",
            run: || {
                let mut p = walk(300.0, 10);
                let mut out = p.last_output();
                let mut all_ok = true;
                for i in 10..21_600 {
                    out = p.process(&Sample::pressure(at(i as f64), p_at(300.0)));
                    all_ok &= out.accepted() && finite(&out);
                }
                let ok = all_ok
                    && out.ascent_m == 0.0
                    && out.descent_m == 0.0
                    && out.flags.contains(Flags::AT_REST);
                (
                    ok,
                    format!(
                        "ascent {} m, descent {} m, flags {}, state {}",
                        out.ascent_m,
                        out.descent_m,
                        flag_names(out.flags),
                        out.state.name()
                    ),
                )
            },
        },
        Case {
            name: "balloon: profile overflow (capacity 8, ascent to 30 km)",
            layer: "uses",
            expected: "profile thinned (<= 8 levels), outputs finite, descent on profile",
            run: || {
                let mut p = Balloon::<8>::new(&BalloonSettings::DEFAULT).unwrap();
                let mut all_ok = true;
                let mut t = 0.0;
                let mut last = Output::default();
                // 5 m/s up to 30 km, then 20 m/s down to 5 km
                let mut z = 100.0f32;
                while z < 30_000.0 {
                    last = p.process(&Sample::pressure(at(t), p_at(z)));
                    all_ok &= last.accepted() && finite(&last);
                    t += 1.0;
                    z += 5.0;
                }
                let mut on_profile = false;
                while z > 5_000.0 {
                    last = p.process(&Sample::pressure(at(t), p_at(z)));
                    all_ok &= last.accepted() && finite(&last);
                    on_profile |= last.flags.contains(Flags::ON_PROFILE);
                    t += 1.0;
                    z -= 20.0;
                }
                let levels = p.sounding().map_or(0, |s| s.profile().len());
                let ok = all_ok && (2..=8).contains(&levels) && on_profile;
                (
                    ok,
                    format!(
                        "{levels} levels, on_profile seen: {on_profile}, last height {:.0} m",
                        last.altitude_m
                    ),
                )
            },
        },
    ]
}

#[test]
fn bad_input_table() {
    let cases = cases();
    let mut failures = Vec::new();
    println!("| # | case | layer | expected | observed | result |");
    println!("| --- | --- | --- | --- | --- | --- |");
    for (i, c) in cases.iter().enumerate() {
        let (ok, observed) = (c.run)();
        println!(
            "| {} | {} | {} | {} | {} | {} |",
            i + 1,
            c.name,
            c.layer,
            c.expected,
            observed.replace('|', "\\|"),
            if ok { "ok" } else { "FAIL" }
        );
        if !ok {
            failures.push(format!(
                "{}: expected {}, observed {observed}",
                c.name, c.expected
            ));
        }
    }
    assert!(cases.len() >= 30);
    assert!(
        failures.is_empty(),
        "failed cases:\n{}",
        failures.join("\n")
    );
}

/// `use_` after a first sample and two more 1 us and 2 us after it, the last 10 hPa
/// lower: the vertical speed of both stays finite.
fn speed_finite_after_tiny_steps<U: Use>(mut use_: U) -> Result<(), String> {
    use_.process(&Sample::pressure(at(0.0), 95_000.0));
    let same = use_.process(&Sample::pressure(Instant::from_micros(1), 95_000.0));
    let moved = use_.process(&Sample::pressure(Instant::from_micros(2), 94_000.0));
    let ok = same.accepted()
        && same.vertical_speed_mps.is_finite()
        && moved.vertical_speed_mps.is_finite();
    let message = format!(
        "speeds {} m/s ({}), {} m/s ({})",
        same.vertical_speed_mps,
        flag_names(same.flags),
        moved.vertical_speed_mps,
        flag_names(moved.flags)
    );
    if ok { Ok(()) } else { Err(message) }
}

/// Regression test, fixed bug (found by these tests in the engine that preceded the use
/// types; its pointwise branch, without an estimator): the vertical speed was
/// `(raw - last_raw) / (dt as f32)` with `dt` narrowed from f64 to f32 *before* the
/// division. Two strictly increasing f64 times whose difference is below the smallest
/// f32 subnormal (1.4e-45 s) gave `0 / 0 = NaN`; a difference below about 1e-38 s gave
/// an infinite speed, then carried into every later rejected sample's output. Found by
/// the `pipeline` fuzz target. (Moved: there is no estimator-off option any more; the
/// same steps, now the smallest ones, 1 us, go through each use type's own speed: the
/// drone's and balloon's Kalman filter, the walk's smoothed difference.)
#[test]
fn speed_finite_for_tiny_time_steps() {
    speed_finite_after_tiny_steps(Drone::new(&DroneSettings::DEFAULT).unwrap()).unwrap();
    speed_finite_after_tiny_steps(Balloon::<8>::new(&BalloonSettings::DEFAULT).unwrap()).unwrap();
    speed_finite_after_tiny_steps(Walk::new(&WalkSettings::DEFAULT).unwrap()).unwrap();
}

/// Regression test, fixed bug (found by these tests; the datum step of the engine that
/// preceded the use types): while the drone was on the ground, every sample's model
/// height was averaged into the ground reference *before* the Kalman gate decides
/// whether the sample is an outlier. One +100 hPa spike (-815 m) among 100 samples at
/// 300 m moves the mean by about 8 m: the next 9 normal samples are then gated out as
/// outliers, the 10th re-acquires at +7.5 m, and the height creeps back only as more
/// samples are averaged (still +5 m one second later). A gated-out sample should not
/// reach the ground reference.
#[test]
fn drone_spike_on_ground_leaves_zero_alone() {
    let mut p = drone(300.0, 100);
    let spike = p.process(&Sample::pressure(at(2.0), p_at(300.0) + 10_000.0));
    assert!(spike.flags.contains(Flags::OUTLIER));
    let next = p.process(&Sample::pressure(at(2.02), p_at(300.0)));
    assert!(!next.flags.contains(Flags::OUTLIER), "{next:?}"); // outlier before the fix
    for i in 2..60 {
        let o = p.process(&Sample::pressure(at(2.0 + i as f64 * 0.02), p_at(300.0)));
        assert!(o.altitude_m.abs() < 0.1, "{i}: {o:?}"); // +7.5 m before the fix
    }
}

/// Regression test, fixed gap: the walk has a spike gate (the design's data flow has
/// "validation -> spike filter -> height"). Without it one +100 hPa spike at rest at
/// 300 m moved the displayed height by -274 m and added 274.45 m to *both* totals.
#[test]
fn walk_single_spike_does_not_reach_totals() {
    let mut p = walk(300.0, 600);
    let spike = p.process(&Sample::pressure(at(600.0), p_at(300.0) + 10_000.0));
    assert!(finite(&spike));
    let mut last = spike;
    for i in 601..1_200 {
        last = p.process(&Sample::pressure(at(i as f64), p_at(300.0)));
    }
    assert!(finite(&last) && (last.altitude_m - 300.0).abs() < 0.5);
    assert!(last.ascent_m <= 3.0 && last.descent_m <= 3.0, "{last:?}"); // 274.45 m before the fix
}

/// Two samples through `use_` (if the settings were taken): accepted, finite output.
fn two_samples_finite<U: Use>(made: Result<U, Error>) {
    match made {
        Err(e) => assert_eq!(e, Error::InvalidSetting),
        Ok(mut u) => {
            u.process(&Sample::pressure(at(0.0), 95_000.0));
            let out = u.process(&Sample::pressure(at(1.0), 90_000.0));
            assert!(out.accepted() && finite(&out), "{:?}", out.flags); // sigma inf before the fix
        }
    }
}

/// Regression test, fixed bug (found by these tests; the engine's settings check and
/// height sigma): `pressure_noise_pa` and `temperature_uncertainty_k` were only checked
/// to be finite and not negative. Large values passed and made `altitude_sigma_m`
/// infinite for valid samples (the two terms are squared, so a pressure noise of 1e30 Pa
/// already overflows; with the drone preset at 1e38 Pa every sample was refused as
/// `rejected_model` because the Kalman filter refuses an infinite sigma). Found by the
/// `pipeline` fuzz target. Either bound the settings (typed `InvalidSetting`) or keep
/// the sigma finite. (The engine's test ran the hike preset; here the walk, and the
/// drone and balloon too.)
#[test]
fn huge_noise_settings_are_refused_or_harmless() {
    for (noise, uncertainty) in [(1.0e30f32, 5.0f32), (2.0, 1.0e38)] {
        let walk = WalkSettings {
            pressure_noise_pa: noise,
            temperature_uncertainty_k: uncertainty,
            ..WalkSettings::DEFAULT
        };
        two_samples_finite(Walk::new(&walk));
        let drone = DroneSettings {
            pressure_noise_pa: noise,
            temperature_uncertainty_k: uncertainty,
            ..DroneSettings::DEFAULT
        };
        two_samples_finite(Drone::new(&drone));
        let balloon = BalloonSettings {
            pressure_noise_pa: noise,
            temperature_uncertainty_k: uncertainty,
            ..BalloonSettings::DEFAULT
        };
        two_samples_finite(Balloon::<8>::new(&balloon));
    }
}

/// Regression test, fixed bug (found by the `pipeline` fuzz target after the Kalman filter
/// moved to `f32` steps; src/filter/kalman.rs, `predict_step`): a sample less than
/// 1.4e-45 s after the previous one (its step narrows to 0 in `f32`) with an
/// accelerometer reading. The prediction treated the zero step as "same time", so the
/// barometer sample at that time looked like a second one at the filter's time and was
/// refused after the prediction had been applied: the sample came back rejected with the
/// state changed. Such a step is strictly later and must be taken.
#[test]
fn kalman_takes_accelerometer_and_baro_after_sub_f32_step() {
    let mut p = Drone::new(&DroneSettings::DEFAULT).unwrap();
    assert!(p.process(&Sample::pressure(at(0.0), 95_000.0)).accepted());
    let mut s = Sample::pressure(Instant::from_micros(1), 95_007.6);
    s.accel_up_mps2 = Some(0.0);
    let before = p.clone();
    let out = p.process(&s);
    if out.flags.rejected() {
        assert!(p == before, "rejected sample changed the state");
    }
    assert!(out.accepted(), "{out:?}"); // rejected (state changed) before the fix
    assert!(!out.flags.contains(Flags::ACCEL_IGNORED), "{out:?}");
}
