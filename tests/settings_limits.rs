//! Settings at the edges of what validation accepts still give physical output, and
//! the values beyond them are refused: the cases that once passed validation and gave
//! an infinite 1-sigma (a disturbance scale of `f32::MAX`), 500 km heights (a
//! barometer sigma of 1e-45 m) or 2.2e29 m/s (a longest step of `f32::MAX` with a
//! 1e30 s gap). The scenarios are our own, in the U.S. 1976 standard atmosphere.

mod common;
use common::at;
use isohypse::Height;
use isohypse::atmosphere::US_1976;
use isohypse::filter::VerticalKalmanConfig;
use isohypse::uses::{
    Balloon, BalloonSettings, Drone, DroneSettings, MAX_GAP_LIMIT_S, MAX_VERTICAL_SPEED_MPS,
    Output, Sample,
};

fn p(z: f32) -> f32 {
    US_1976
        .pressure_at(Height::from_meters(z).unwrap())
        .unwrap()
        .pa()
}

fn physical<S: std::fmt::Debug>(o: &Output<S>) {
    let h = o.altitude_m;
    assert!(
        h.is_finite() && (-10_000.0..=100_000.0).contains(&h),
        "{o:?}"
    );
    let sigma = o.altitude_sigma_m;
    assert!(sigma.is_finite() && sigma <= 110_000.0, "{o:?}");
    assert!(
        o.vertical_speed_mps.abs() <= MAX_VERTICAL_SPEED_MPS,
        "{o:?}"
    );
}

fn drone(kalman: VerticalKalmanConfig, max_gap_s: f32) -> DroneSettings {
    DroneSettings {
        kalman,
        max_gap_s,
        ..DroneSettings::DEFAULT
    }
}

#[test]
fn the_disturbance_scale_is_bounded() {
    let with = |scale| VerticalKalmanConfig {
        disturbed_sigma_scale: scale,
        ..VerticalKalmanConfig::DEFAULT
    };
    assert!(drone(with(f32::MAX), 1.0).validate().is_err());
    assert!(drone(with(100.1), 1.0).validate().is_err());
    let s = drone(with(100.0), 1.0);
    let mut d = Drone::new(&s).unwrap();
    d.set_baro_disturbed(true);
    for k in 0..200u32 {
        let z = 100.0 + (k % 7) as f32;
        physical(&d.process(&Sample::pressure(at(f64::from(k) * 0.02), p(z))));
    }
}

#[test]
fn the_barometer_sigma_is_bounded() {
    let with = |sigma| BalloonSettings {
        kalman: VerticalKalmanConfig {
            baro_sigma_m: sigma,
            ..BalloonSettings::DEFAULT.kalman
        },
        ..BalloonSettings::DEFAULT
    };
    assert!(with(1.0e-45).validate().is_err());
    assert!(with(0.9e-4).validate().is_err());
    // the smallest accepted, with no pressure noise either, and a spike every 13 s
    let s = BalloonSettings {
        pressure_noise_pa: 0.0,
        ..with(1.0e-4)
    };
    let mut b = Balloon::<16>::new(&s).unwrap();
    for k in 0..3_000u32 {
        let z = 300.0 + 5.0 * k as f32 + if k % 13 == 0 { 40.0 } else { 0.0 };
        physical(&b.process(&Sample::pressure(at(f64::from(k)), p(z))));
    }
}

#[test]
fn the_longest_step_and_gap_are_bounded() {
    let with = |step| VerticalKalmanConfig {
        max_step_s: step,
        ..VerticalKalmanConfig::DEFAULT
    };
    assert!(drone(with(f32::MAX), 1.0).validate().is_err());
    assert!(drone(with(1.0), 1.0e30).validate().is_err());
    // the longest accepted step and gap, with a full-scale accelerometer between
    let s = drone(with(3_600.0), MAX_GAP_LIMIT_S);
    let mut d = Drone::new(&s).unwrap();
    physical(&d.process(&Sample::pressure(at(0.0), p(100.0))));
    d.accelerometer(at(0.5), 150.0).unwrap();
    physical(&d.process(&Sample::pressure(at(3_000.0), p(120.0))));
    physical(&d.process(&Sample::pressure(at(3_001.0), p(130.0))));
}
