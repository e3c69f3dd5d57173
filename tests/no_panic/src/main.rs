//! Link-time proof that isohypse's core conversion, filter and per-use functions contain
//! no reachable panic: every wrapper below is `#[no_panic]` (the `no-panic` crate), which
//! makes the link fail if the optimised code of the wrapper, with everything inlined into
//! it, still references the panic machinery.
//!
//! Build with `.ci/no_panic.sh` (`cargo build --release` in this directory); a debug build
//! proves nothing and fails spuriously, since unoptimised code keeps every bounds check.
//! `main` calls each wrapper once with opaque (`black_box`) inputs so that all of them are
//! linked.
//!
//! A function that cannot be proven is left out with a comment giving the reason, never
//! silently dropped.

use std::hint::black_box;

use isohypse::atmosphere::{self, AtmosphereState, US_1976};
use isohypse::datum::AltimeterSetting;
use isohypse::filter::GroundReference;
use isohypse::filter::{
    AlphaBeta, KalmanOutcome, Median, MovingAverage, OnePole, VerticalKalman, VerticalKalmanConfig,
};
use isohypse::flight::{FlightPhases, PhaseSettings};
use isohypse::geopotential::Gravity;
use isohypse::hypsometric;
use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureModel};
use isohypse::sounding::{Level, Profile, Sounding};
use isohypse::time::{Duration, Instant, WrappingTicks};
use isohypse::track::{AscentTotals, PressureTendency};
use isohypse::uses::{Balloon, BalloonSettings, BalloonState, Drone, DroneSettings, DroneState};
use isohypse::uses::{Output, Sample, Walk, WalkSettings, WalkState};
use isohypse::{Error, Height, Pressure, Temperature};
use no_panic::no_panic;

#[no_panic]
fn pressure_altitude(p: Pressure) -> Result<Height, Error> {
    atmosphere::pressure_altitude(p)
}

#[no_panic]
fn at_geopotential(h: Height) -> Result<AtmosphereState, Error> {
    US_1976.at_geopotential(h)
}

#[no_panic]
fn thickness(p_lower: Pressure, p_upper: Pressure, tv: Temperature) -> Result<Height, Error> {
    hypsometric::thickness(p_lower, p_upper, tv)
}

#[no_panic]
fn pressure_from_pa(x: f32) -> Result<Pressure, Error> {
    Pressure::from_pa(x)
}

#[no_panic]
fn qnh_height(setting: &AltimeterSetting, p: Pressure) -> Result<Height, Error> {
    setting.height(p)
}

#[no_panic]
fn model_height(
    model: &TemperatureModel,
    reference: &Reference,
    p: Pressure,
    air: &AirSample,
) -> Result<Height, Error> {
    model.height(reference, p, air)
}

#[no_panic]
fn moving_average_push(m: &mut MovingAverage<8>, x: f32) -> Result<f32, Error> {
    m.push(x)
}

#[no_panic]
fn one_pole_update(f: &mut OnePole, t: Instant, x: f32) -> Result<f32, Error> {
    f.update(t, x)
}

#[no_panic]
fn alpha_beta_update(f: &mut AlphaBeta, t: Instant, h: Height) -> Result<(), Error> {
    f.update(t, h)
}

#[no_panic]
fn kalman_predict(k: &mut VerticalKalman, t: Instant, a: f32) -> Result<(), Error> {
    k.predict(t, a)
}

#[no_panic]
fn kalman_correct(k: &mut VerticalKalman, t: Instant, h: Height) -> Result<KalmanOutcome, Error> {
    k.correct(t, h)
}

#[no_panic]
fn totals_update(t: &mut AscentTotals, h: Height) {
    t.update(h)
}

#[no_panic]
fn sounding_update(s: &mut Sounding<64>, p: Pressure, t: Option<Temperature>) -> bool {
    s.update(p, t, None).is_ok()
}

#[no_panic]
fn profile_record(s: &mut Profile<64>, level: Level) -> Result<bool, Error> {
    s.record(level)
}

#[no_panic]
fn profile_height(s: &Profile<64>, p: Pressure) -> Result<Height, Error> {
    s.geopotential_at(p)
}

#[no_panic]
fn flight_phases_update(f: &mut FlightPhases, t: Instant, h: f32, v: f32) -> bool {
    f.update(t, h, v).is_ok()
}

#[no_panic]
fn ground_reference_push(g: &mut GroundReference, t: Instant, h: Height) -> Result<bool, Error> {
    g.push(t, h)
}

#[no_panic]
fn tendency_update(td: &mut PressureTendency, t: Instant, p: Pressure) -> Result<(), Error> {
    td.update(t, p)
}

#[no_panic]
fn drone_new(settings: &DroneSettings) -> Result<Drone<'_>, Error> {
    Drone::new(settings)
}

#[no_panic]
fn drone_process(d: &mut Drone<'_>, s: &Sample) -> Output<DroneState> {
    d.process(s)
}

#[no_panic]
fn drone_accelerometer(d: &mut Drone<'_>, t: Instant, a: f32) -> Result<(), Error> {
    d.accelerometer(t, a)
}

#[no_panic]
fn drone_snapshot(d: &Drone<'_>, out: &mut [u8]) -> Result<usize, Error> {
    d.snapshot(out)
}

#[no_panic]
fn drone_restore<'a>(settings: &'a DroneSettings, bytes: &[u8]) -> Result<Drone<'a>, Error> {
    Drone::restore(settings, bytes)
}

/// The balloon with 64 stored levels, as the firmware measures it.
type Balloon64<'a> = Balloon<'a, 64>;

#[no_panic]
fn balloon_new(settings: &BalloonSettings) -> Result<Balloon64<'_>, Error> {
    Balloon::new(settings)
}

#[no_panic]
fn balloon_process(b: &mut Balloon64<'_>, s: &Sample) -> Output<BalloonState> {
    b.process(s)
}

#[no_panic]
fn balloon_snapshot(b: &Balloon64<'_>, out: &mut [u8]) -> Result<usize, Error> {
    b.snapshot(out)
}

#[no_panic]
fn balloon_restore<'a>(
    settings: &'a BalloonSettings,
    bytes: &[u8],
) -> Result<Balloon64<'a>, Error> {
    Balloon::restore(settings, bytes)
}

#[no_panic]
fn walk_new(settings: &WalkSettings) -> Result<Walk<'_>, Error> {
    Walk::new(settings)
}

#[no_panic]
fn walk_process(w: &mut Walk<'_>, s: &Sample) -> Output<WalkState> {
    w.process(s)
}

#[no_panic]
fn walk_snapshot(w: &Walk<'_>, out: &mut [u8]) -> Result<usize, Error> {
    w.snapshot(out)
}

#[no_panic]
fn walk_restore<'a>(settings: &'a WalkSettings, bytes: &[u8]) -> Result<Walk<'a>, Error> {
    Walk::restore(settings, bytes)
}

#[no_panic]
fn wrapping_ticks_instant(clock: &mut WrappingTicks<32_768>, ticks: u32) -> Instant {
    clock.instant(ticks)
}

#[no_panic]
fn duration_between(later: Instant, earlier: Instant) -> Option<f32> {
    later
        .checked_duration_since(earlier)
        .map(Duration::as_secs_f32)
}

#[no_panic]
fn duration_from_secs(secs: f32) -> Option<Duration> {
    Duration::from_secs_f32(secs)
}

#[no_panic]
fn median_push(m: &mut Median<5>, x: f32) -> Result<f32, Error> {
    m.push(x)
}

fn main() {
    // main itself is not checked: it may unwrap.
    let sea_level = Pressure::from_pa(atmosphere::SEA_LEVEL_PRESSURE_PA).unwrap();
    let p = pressure_from_pa(black_box(85_000.0)).unwrap_or(sea_level);
    let h = Height::from_meters(black_box(1_200.0)).unwrap_or(Height::ZERO);
    let t = Temperature::from_kelvin(black_box(270.0)).ok();
    println!("{:?}", pressure_altitude(black_box(p)));
    println!("{:?}", at_geopotential(black_box(h)));
    if let Some(t) = t {
        println!(
            "{:?}",
            thickness(black_box(sea_level), black_box(p), black_box(t))
        );
    }
    let qnh = AltimeterSetting::SeaLevel { qnh_pa: (sea_level).pa() };
    println!("{:?}", qnh_height(black_box(&qnh), black_box(p)));
    let reference = Reference::new(sea_level, Height::ZERO);
    let model = black_box(TemperatureModel::StandardOffset { delta_k: 5.0 });
    println!(
        "{:?}",
        model_height(
            black_box(&model),
            black_box(&reference),
            black_box(p),
            black_box(&AirSample::DRY)
        )
    );

    let mut avg = MovingAverage::<8>::new();
    println!(
        "{:?}",
        moving_average_push(black_box(&mut avg), black_box(3.0))
    );
    if let Ok(mut lp) = OnePole::new(black_box(1.0)) {
        println!(
            "{:?}",
            one_pole_update(
                black_box(&mut lp),
                black_box(Instant::from_millis(500)),
                black_box(2.0)
            )
        );
    }
    if let Ok(mut ab) = AlphaBeta::new(0.5, 0.1, 1.0) {
        println!(
            "{:?}",
            alpha_beta_update(black_box(&mut ab), black_box(Instant::from_millis(500)), h)
        );
    }
    if let Ok(mut kf) = VerticalKalman::new(VerticalKalmanConfig::default()) {
        println!(
            "{:?}",
            kalman_correct(black_box(&mut kf), black_box(Instant::ZERO), h)
        );
        println!(
            "{:?}",
            kalman_predict(
                black_box(&mut kf),
                black_box(Instant::from_millis(10)),
                black_box(0.1)
            )
        );
    }
    if let Ok(mut totals) = AscentTotals::new(3.0) {
        totals_update(black_box(&mut totals), black_box(h));
        println!("{}", totals.ascent_m());
    }

    if let Some(t) = t {
        if let Ok(mut sounding) =
            Sounding::<64>::new(Height::ZERO, Gravity::Standard, sea_level, t, None)
        {
            println!(
                "{}",
                sounding_update(black_box(&mut sounding), black_box(p), black_box(Some(t)))
            );
        }
    }
    if let Ok(mut profile) = Profile::<64>::new(0.005) {
        let level = Level {
            pressure_pa: black_box(90_000.0),
            geopotential_m: black_box(1_000.0),
            virtual_temperature_k: black_box(280.0),
        };
        println!("{:?}", profile_record(black_box(&mut profile), level));
        println!("{:?}", profile_height(black_box(&profile), black_box(p)));
    }
    if let Ok(mut phases) = FlightPhases::new(PhaseSettings::BALLOON) {
        println!(
            "{}",
            flight_phases_update(
                black_box(&mut phases),
                black_box(Instant::from_secs(1)),
                2.0,
                3.0
            )
        );
    }
    if let Ok(mut ground) = GroundReference::new(Default::default()) {
        println!(
            "{:?}",
            ground_reference_push(black_box(&mut ground), black_box(Instant::from_secs(1)), h)
        );
    }
    if let Ok(mut tendency) = PressureTendency::new(Default::default()) {
        println!(
            "{:?}",
            tendency_update(
                black_box(&mut tendency),
                black_box(Instant::from_secs(1)),
                p
            )
        );
    }
    use_types();
    let mut clock = WrappingTicks::<32_768>::new();
    println!(
        "{:?}",
        wrapping_ticks_instant(black_box(&mut clock), black_box(u32::MAX))
    );
    println!(
        "{:?}",
        duration_between(
            black_box(Instant::from_micros(u64::MAX)),
            black_box(Instant::from_secs(1))
        )
    );
    println!("{:?}", duration_from_secs(black_box(0.02)));
    let mut median = Median::<5>::new();
    println!("{:?}", median_push(black_box(&mut median), black_box(1.0)));
}

/// Calls the use types' wrappers: each use's presets through `new`, one sample, an
/// accelerometer sample for the drone, and a snapshot restored.
fn use_types() {
    let sample = Sample {
        accel_up_mps2: Some(black_box(0.1)),
        ..Sample::pressure(black_box(Instant::from_secs(1)), black_box(95_000.0))
    };
    let drone_settings = black_box(&DroneSettings::DEFAULT);
    if let Ok(mut drone) = drone_new(drone_settings) {
        println!(
            "{:?}",
            drone_process(black_box(&mut drone), black_box(&sample))
        );
        let t = black_box(Instant::from_micros(1_005_000));
        println!(
            "{:?}",
            drone_accelerometer(black_box(&mut drone), t, black_box(0.2))
        );
        let mut buf = [0u8; Drone::SNAPSHOT_LEN];
        println!(
            "{:?}",
            drone_snapshot(black_box(&drone), black_box(&mut buf))
        );
        println!(
            "{:?}",
            drone_restore(drone_settings, black_box(&buf)).map(|d| d == drone)
        );
    }
    let balloon_settings = black_box(&BalloonSettings::DEFAULT);
    if let Ok(mut balloon) = balloon_new(balloon_settings) {
        println!(
            "{:?}",
            balloon_process(black_box(&mut balloon), black_box(&sample))
        );
        let mut buf = [0u8; Balloon64::SNAPSHOT_LEN];
        println!(
            "{:?}",
            balloon_snapshot(black_box(&balloon), black_box(&mut buf))
        );
        let back = balloon_restore(balloon_settings, black_box(&buf));
        println!("{:?}", back.map(|b| b == balloon));
    }
    let walk_settings = black_box(&WalkSettings::DEFAULT);
    if let Ok(mut walk) = walk_new(walk_settings) {
        println!(
            "{:?}",
            walk_process(black_box(&mut walk), black_box(&sample))
        );
        let mut buf = [0u8; Walk::SNAPSHOT_LEN];
        println!("{:?}", walk_snapshot(black_box(&walk), black_box(&mut buf)));
        println!(
            "{:?}",
            walk_restore(walk_settings, black_box(&buf)).map(|w| w == walk)
        );
    }
}
