//! A barometer at the end of its range: a balloon whose part reads down to 10 hPa
//! climbs to 33 km, above the range from about 31 km. Readings clamped at the part's
//! limit are flagged saturated and refused, the height is held stale with a 1-sigma
//! that grows with time and covers the real error, no false float is reported, the
//! satellite altitude takes over where the sample has one, and the height picks up
//! again when the pressure comes back into range. The scenario is our own, flown in the
//! U.S. Standard Atmosphere 1976 (the library's `atmosphere::US_1976`, checked against
//! the standard's tables in tests/atmosphere.rs); 10 hPa is the lower end of many
//! barometer parts' range (for example the BME280 datasheet, Bosch BST-BME280-DS002,
//! table 2: 300-1100 hPa; the LPS22HB datasheet, ST DocID027083, table 3: 260-1260 hPa;
//! parts for balloons read to 10 hPa: common practice).

mod common;

use common::{air_c, pressure_at};
use isohypse::part::PartDescription;
use isohypse::time::Instant;
use isohypse::uses::{
    Balloon, BalloonSettings, BalloonState, Flags, STALE_SPEED_SIGMA_MPS, Sample,
};

/// A part read to 10 hPa with 2 Pa steps (values made up for the scenario).
const PART: PartDescription = PartDescription {
    name: "scenario part",
    pressure_min_pa: 1_000.0,
    pressure_max_pa: 110_000.0,
    resolution_pa: 2.0,
    noise_rms_pa: Some(1.0),
    conversion_time_us: 20_000,
    has_humidity: false,
};

const SETTINGS: BalloonSettings = BalloonSettings {
    launch_altitude_m: Some(300.0),
    ..BalloonSettings::DEFAULT
}
.with_part(&PART);

/// 60 s on the ground at 300 m, up at 5 m/s to 33 km, then down at 20 m/s.
fn height_at(t: f64) -> f64 {
    let top_t = 60.0 + (33_000.0 - 300.0) / 5.0;
    if t < 60.0 {
        300.0
    } else if t < top_t {
        300.0 + 5.0 * (t - 60.0)
    } else {
        (33_000.0 - 20.0 * (t - top_t)).max(300.0)
    }
}

/// The sample at `t` s, the pressure clamped at the part's limit as the part gives it;
/// with a satellite altitude every 30 s when `gnss`.
fn sample(t: u64, gnss: bool) -> Sample {
    let z = height_at(t as f64);
    let p = pressure_at(z).max(PART.pressure_min_pa);
    let mut s = Sample::pressure(Instant::from_secs(t), p);
    s.temperature_c = Some(air_c(z));
    if gnss && t % 30 == 0 {
        s.gnss_altitude_m = Some(z as f32);
        s.gnss_accuracy_m = Some(5.0);
    }
    s
}

#[test]
fn a_saturated_barometer_holds_a_stale_height_with_a_growing_sigma() {
    let mut b = Balloon::<256>::new(&SETTINGS).unwrap();
    let end = 60 + (32_700 / 5) + 1_700;
    let (mut saturated, mut covered, mut float) = (0u32, 0u32, false);
    let mut last_sigma = 0.0f32;
    let mut back_in_range = None;
    for t in 0..end {
        let s = sample(t, false);
        let z = height_at(t as f64);
        let before = b.clone();
        let o = b.process(&s);
        float |= o.state == BalloonState::Float;
        if s.pressure_pa <= PART.pressure_min_pa {
            saturated += 1;
            assert!(
                o.flags.contains(Flags::SATURATED) && o.flags.rejected(),
                "t {t}: {:?}",
                o.flags
            );
            assert!(b == before, "t {t}: a saturated sample changed the state");
            assert!(o.altitude_sigma_m >= last_sigma, "t {t}: the sigma shrank");
            last_sigma = o.altitude_sigma_m;
            covered += u32::from(
                (f64::from(o.altitude_m) - z).abs() <= 2.0 * f64::from(o.altitude_sigma_m),
            );
        } else if saturated > 0 && back_in_range.is_none() {
            back_in_range = Some(t);
        }
        if back_in_range.is_some_and(|b| t >= b + 30) && z > 5_000.0 {
            // back in range: measured again, within 0.5 % of the height
            assert!(!o.flags.contains(Flags::SATURATED));
            let err = (f64::from(o.altitude_m) - z).abs();
            assert!(err < 0.005 * z, "t {t}: {err:.1} m off at {z:.0} m");
        }
    }
    println!(
        "saturated samples {saturated}, 2-sigma covers {covered}; stale sigma at the end {last_sigma:.0} m \
         (speed uncertainty {} m/s)",
        STALE_SPEED_SIGMA_MPS.balloon
    );
    // 33 km is above 10 hPa (31.2 km in U.S. 1976) for a few hundred seconds each way
    assert!(saturated > 300, "{saturated}");
    assert_eq!(
        covered, saturated,
        "the stale sigma must cover the real error"
    );
    assert!(!float, "no float while the barometer is saturated");
}

#[test]
fn above_the_range_the_satellite_altitude_takes_over() {
    let mut b = Balloon::<256>::new(&SETTINGS).unwrap();
    let end = 60 + (32_700 / 5) + 1_700;
    let mut on_gnss = 0;
    for t in 0..end {
        let s = sample(t, true);
        let o = b.process(&s);
        if s.pressure_pa <= PART.pressure_min_pa && s.gnss_altitude_m.is_some() {
            assert!(
                o.flags.contains(Flags::ON_GNSS) && o.flags.contains(Flags::SATURATED),
                "t {t}: {:?}",
                o.flags
            );
            let z = height_at(t as f64) as f32;
            assert!(
                (o.altitude_m - z).abs() < 1.0,
                "t {t}: {} vs {z}",
                o.altitude_m
            );
            assert_eq!(o.altitude_sigma_m, 5.0);
            on_gnss += 1;
        }
    }
    assert!(on_gnss > 10, "{on_gnss}");
}

#[test]
fn settings_take_the_range_and_noise_of_a_part() {
    assert_eq!(SETTINGS.min_pressure_pa, 1_000.0);
    assert_eq!(SETTINGS.max_pressure_pa, 110_000.0);
    assert_eq!(SETTINGS.pressure_noise_pa, 1.0);
    assert!(SETTINGS.validate().is_ok());
}
