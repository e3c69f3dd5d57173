//! Satellite altitude fused with the barometric height, on a falling sonde of our own:
//! dropped at 14 km into a column 12 K warmer than the standard, switched on in the
//! air (so its heights start at the pressure altitude, about 400 m off), with a
//! satellite receiver that reports 0 m before its lock, jumps by 150 m for 40 s, drops
//! out for three minutes and is fed every 30 s. The design notes' goal: the median
//! distance to the satellite altitudes held out (those not fed) within 5 m. Printed
//! with `cargo test --test gnss -- --nocapture`.
//!
//! The truth: hydrostatic balance `d ln p / dz = -g0 / (R T)` integrated in f64 on
//! 1 m steps, `T = T_US1976(z) + 12 K`, sea-level pressure 1 020 hPa, R = 287.053 J/(kg K)
//! and g0 = 9.806 65 m/s^2 (U.S. Standard Atmosphere 1976); heights here are
//! geopotential and the receiver's geometric ones are taken as equal (31 m apart at
//! 14 km: the offset state absorbs it like any other slow error).

use isohypse::atmosphere::US_1976;
use isohypse::time::Instant;
use isohypse::uses::{Balloon, BalloonModel, BalloonSettings, Flags, Sample};
use isohypse::{Height, Pressure};

const R: f64 = 287.053;
const G0: f64 = 9.806_65;

/// ln p on 1 m steps from 0 to 15 km in the warm column.
fn column() -> Vec<f64> {
    let t = |z: f64| {
        let std = US_1976
            .temperature_at(Height::from_meters(z as f32).unwrap())
            .unwrap()
            .kelvin() as f64;
        std + 12.0
    };
    let mut ln_p = vec![(102_000.0f64).ln()];
    for i in 0..15_000 {
        let z = i as f64;
        // midpoint rule on a smooth piece (the kink at 11 km sits on a whole metre)
        let next = ln_p[i] - G0 / (R * t(z + 0.5));
        ln_p.push(next);
    }
    ln_p
}

fn pressure(ln_p: &[f64], z: f64) -> f64 {
    let i = (z.floor() as usize).min(ln_p.len() - 2);
    let f = z - i as f64;
    (ln_p[i] * (1.0 - f) + ln_p[i + 1] * f).exp()
}

/// Deterministic normal deviates (64-bit LCG, Knuth's MMIX constants, and Box-Muller:
/// common practice).
struct Noise(u64);
impl Noise {
    fn uniform(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.0 >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn gauss(&mut self) -> f64 {
        let (a, b) = (self.uniform(), self.uniform());
        (-2.0 * a.ln()).sqrt() * (2.0 * std::f64::consts::PI * b).cos()
    }
}

struct Fall {
    /// Median |height - held-out satellite altitude|, m.
    median_held_out_m: f64,
    /// Median |height - truth|, m.
    median_truth_m: f64,
    /// Share of samples with |error| <= 2 sigma and <= 3 sigma.
    coverage: (f64, f64),
    flags: Flags,
}

/// The fall, with satellite altitude fed every `every_s` seconds (`None`: never).
fn fall(every_s: Option<u64>) -> Fall {
    let ln_p = column();
    let settings = BalloonSettings {
        model: BalloonModel::Sounding {
            descent_on_profile: false,
        },
        ..BalloonSettings::DEFAULT
    };
    let mut b = Balloon::<64>::new(&settings).unwrap();
    let mut noise = Noise(7);
    let (mut z, mut t) = (14_000.0f64, 0u64);
    let (mut held_out, mut truth_err, mut in2, mut in3, mut n) =
        (Vec::new(), Vec::new(), 0usize, 0usize, 0usize);
    let mut all_flags = Flags::default();
    while z > 200.0 {
        let receiver = z + 4.0 * noise.gauss();
        let t_k = 12.0
            + US_1976
                .temperature_at(Height::from_meters(z as f32).unwrap())
                .unwrap()
                .kelvin() as f64;
        let mut sample = Sample::pressure(
            Instant::from_secs(t),
            (pressure(&ln_p, z) + 2.0 * noise.gauss()) as f32,
        );
        sample.temperature_c = Some((t_k - 273.15 + 0.2 * noise.gauss()) as f32);
        let fed = every_s.is_some_and(|e| t % e == 0) && !(600..780).contains(&t);
        if fed {
            // 0 m before the lock; a 150 m jump for 40 s
            let reported = if t < 120 {
                0.0
            } else if (900..940).contains(&t) {
                receiver + 150.0
            } else {
                receiver
            };
            sample.gnss_altitude_m = Some(reported as f32);
            sample.gnss_accuracy_m = Some(5.0);
        }
        let out = b.process(&sample);
        all_flags.insert(out.flags);
        assert!(!out.flags.rejected(), "{t}: {:?}", out.flags);
        if t >= 300 {
            let err = f64::from(out.altitude_m) - z;
            let sigma = f64::from(out.altitude_sigma_m);
            n += 1;
            in2 += usize::from(err.abs() <= 2.0 * sigma);
            in3 += usize::from(err.abs() <= 3.0 * sigma);
            truth_err.push(err.abs());
            if !fed {
                held_out.push((f64::from(out.altitude_m) - receiver).abs());
            }
        }
        // falling under a parachute: faster in thin air
        let rho_ratio = pressure(&ln_p, z) / pressure(&ln_p, 0.0);
        z -= 6.0 / rho_ratio.sqrt();
        t += 1;
    }
    let median = |v: &mut Vec<f64>| {
        v.sort_by(f64::total_cmp);
        v[v.len() / 2]
    };
    Fall {
        median_held_out_m: median(&mut held_out),
        median_truth_m: median(&mut truth_err),
        coverage: (in2 as f64 / n as f64, in3 as f64 / n as f64),
        flags: all_flags,
    }
}

#[test]
fn satellite_altitude_every_30_s_keeps_a_fall_within_5_m() {
    let baro = fall(None);
    let fused = fall(Some(30));
    for (name, f) in [
        ("barometer alone", &baro),
        ("with satellite altitude", &fused),
    ] {
        println!(
            "14 km fall, {name}: median {:.1} m from held-out satellite altitudes, {:.1} m from truth; within 2 sigma {:.1} %, 3 sigma {:.1} %",
            f.median_held_out_m,
            f.median_truth_m,
            f.coverage.0 * 100.0,
            f.coverage.1 * 100.0
        );
    }
    // the column is warm: the barometer alone is hundreds of metres off
    assert!(baro.median_truth_m > 100.0, "{}", baro.median_truth_m);
    assert!(
        fused.median_held_out_m <= 5.0,
        "{}",
        fused.median_held_out_m
    );
    assert!(fused.flags.contains(Flags::GNSS_APPLIED));
    // the 0 m before the lock and the jump were refused
    assert!(fused.flags.contains(Flags::GNSS_REJECTED));
    for f in [&baro, &fused] {
        assert!(
            f.coverage.0 >= 0.90 && f.coverage.1 >= 0.99,
            "{:?}",
            f.coverage
        );
    }
}

/// Above the barometer's range (a part that ends at 10 hPa, about 31 km) the height
/// follows the satellite altitude with its accuracy as the 1-sigma, and nothing else
/// changes; a receiver's wild value there is refused.
#[test]
fn above_the_barometer_range_the_height_is_the_satellite_altitude() {
    let settings = BalloonSettings {
        min_pressure_pa: 1_000.0,
        launch_altitude_m: Some(300.0),
        ..BalloonSettings::DEFAULT
    };
    let mut b = Balloon::<64>::new(&settings).unwrap();
    let p_at = |z: f32| {
        US_1976
            .pressure_at(Height::from_meters(z).unwrap())
            .unwrap()
            .pa()
    };
    let mut z = 300.0f32;
    for k in 0..7_000u64 {
        z = if k < 60 {
            300.0
        } else {
            300.0 + 5.0 * (k - 60) as f32
        };
        let mut s = Sample::pressure(Instant::from_secs(k), p_at(z).max(1_000.0));
        if k % 30 == 0 {
            s.gnss_altitude_m = Some(z);
            s.gnss_accuracy_m = Some(5.0);
        }
        if s.pressure_pa <= 1_000.0 {
            s.pressure_pa = 999.0; // the part reads below its range: refused
        }
        let before = b.clone();
        let out = b.process(&s);
        if out.flags.contains(Flags::REJECTED_PRESSURE) {
            assert_eq!(b, before, "{k}: a refused pressure changed the state");
            if s.gnss_altitude_m.is_some() {
                assert!(out.flags.contains(Flags::ON_GNSS), "{k}: {:?}", out.flags);
                assert_eq!(out.altitude_m, z);
                assert_eq!(out.altitude_sigma_m, 5.0);
            }
        }
    }
    assert!(z > 31_000.0, "the flight went above the range: {z}");
    // a wild satellite altitude above the range is refused
    let mut s = Sample::pressure(Instant::from_secs(7_000), 999.0);
    s.gnss_altitude_m = Some(0.0);
    let out = b.process(&s);
    assert!(!out.flags.contains(Flags::ON_GNSS));
    assert!(out.flags.contains(Flags::GNSS_REJECTED));
    let _ = Pressure::from_pa(1.0);
}
