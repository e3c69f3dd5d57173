//! Snapshot and resume: each use type interrupted at 1 000 random points, its snapshot
//! restored into a fresh value and run on, gives outputs bit-identical to the
//! uninterrupted run; a corrupted, truncated, wrong-version or wrong-kind snapshot is
//! a typed error. The flights are scenarios of our own in the U.S. Standard
//! Atmosphere 1976 (the library's `atmosphere::US_1976`), with noise, spikes, fixes and
//! a clock fault, so that every part of the state is exercised.

use isohypse::atmosphere::US_1976;
use isohypse::time::Instant;
use isohypse::uses::{
    Balloon, BalloonSettings, Drone, DroneSettings, Output, Sample, Use, Walk, WalkSettings,
};
use isohypse::{Error, Height};

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants: common
/// practice) for noise and the interruption points.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        self.0 >> 33
    }
    /// Uniform in [-1, 1).
    fn unit(&mut self) -> f32 {
        (self.next() as f64 / (1u64 << 30) as f64 - 1.0) as f32
    }
}

fn pressure_at(z: f32) -> f32 {
    US_1976
        .pressure_at(Height::from_meters(z).unwrap())
        .unwrap()
        .pa()
}

/// Height of a flight at sample `k`: on the ground, up at `rate` m/s, level, down at
/// twice the rate, landed.
fn profile(k: usize, n: usize, rate: f32, period_s: f32) -> f32 {
    let t = k as f32 * period_s;
    let (t1, t2, t3) = (
        n as f32 * 0.1 * period_s,
        n as f32 * 0.45 * period_s,
        n as f32 * 0.55 * period_s,
    );
    let top = (t2 - t1) * rate;
    if t < t1 {
        0.0
    } else if t < t2 {
        (t - t1) * rate
    } else if t < t3 {
        top
    } else {
        (top - (t - t3) * 2.0 * rate).max(0.0)
    }
}

/// Samples of a flight from 300 m: noise, a spike every 173 samples, a known
/// elevation once, and the clock stepping back once (a restart).
fn flight(n: usize, period_ms: u64, rate: f32, accel: bool, air: bool, seed: u64) -> Vec<Sample> {
    let mut rng = Lcg(seed);
    let period_s = period_ms as f32 / 1_000.0;
    (0..n)
        .map(|k| {
            let z = 300.0 + profile(k, n, rate, period_s);
            let clock_k = if k >= n * 3 / 4 {
                k - n * 3 / 4
            } else {
                k + 1_000
            };
            let mut s = Sample::pressure(
                Instant::from_millis(clock_k as u64 * period_ms),
                pressure_at(z) + 1.5 * rng.unit(),
            );
            if k % 173 == 50 {
                s.pressure_pa += 400.0;
            }
            if accel {
                s.accel_up_mps2 = Some(0.05 * rng.unit());
            }
            if air {
                s.temperature_c = Some(15.0 - 0.0065 * z + 0.2 * rng.unit());
                s.humidity_pct = Some(60.0 + 10.0 * rng.unit());
            }
            if k == n / 5 {
                s.known_altitude_m = Some(z);
            }
            s
        })
        .collect()
}

/// The outputs' bits, for exact comparison (NaN-safe).
fn bits<S: std::fmt::Debug>(o: &Output<S>) -> String {
    format!(
        "{:?} {:x} {:x} {:x} {:x} {:x} {:x} {:?} {:?} {:?}",
        o.time,
        o.altitude_m.to_bits(),
        o.raw_altitude_m.to_bits(),
        o.vertical_speed_mps.to_bits(),
        o.altitude_sigma_m.to_bits(),
        o.ascent_m.to_bits(),
        o.descent_m.to_bits(),
        o.state,
        o.change,
        (o.flags, o.tendency_hpa.map(f32::to_bits)),
    )
}

/// Runs `samples` through `fresh()`, interrupting at `points` random places: each
/// time the snapshot is restored (`restore`) and the run goes on from the restored
/// value, so that a resumed value is resumed again. Every output must equal the
/// uninterrupted run's.
fn check_resume<U: Use>(
    samples: &[Sample],
    fresh: impl Fn() -> U,
    snapshot: impl Fn(&U, &mut [u8]) -> usize,
    restore: impl Fn(&[u8]) -> U,
    points: usize,
    seed: u64,
) where
    U::State: std::fmt::Debug,
{
    let mut reference = fresh();
    let want: Vec<String> = samples
        .iter()
        .map(|s| bits(&reference.process(s)))
        .collect();
    let mut rng = Lcg(seed);
    let mut cuts: Vec<usize> = (0..points)
        .map(|_| rng.next() as usize % samples.len())
        .collect();
    cuts.sort_unstable();
    let mut u = fresh();
    let mut buf = vec![0u8; 1 << 16];
    let mut next_cut = cuts.iter().peekable();
    for (k, s) in samples.iter().enumerate() {
        while next_cut.next_if(|&&c| c == k).is_some() {
            let len = snapshot(&u, &mut buf);
            u = restore(&buf[..len]);
        }
        assert_eq!(bits(&u.process(s)), want[k], "sample {k}");
    }
}

#[test]
fn a_drone_resumes_bit_for_bit() {
    let samples = flight(4_000, 20, 2.0, true, false, 1);
    const S: DroneSettings = DroneSettings::DEFAULT;
    check_resume(
        &samples,
        || Drone::new(&S).unwrap(),
        |d, b| d.snapshot(b).unwrap(),
        |b| Drone::restore(&S, b).unwrap(),
        1_000,
        11,
    );
}

#[test]
fn a_balloon_resumes_bit_for_bit() {
    let samples = flight(4_000, 1_000, 5.0, false, true, 2);
    const S: BalloonSettings = BalloonSettings {
        launch_altitude_m: Some(300.0),
        latitude_deg: Some(64.2),
        ..BalloonSettings::DEFAULT
    };
    check_resume(
        &samples,
        || Balloon::<64>::new(&S).unwrap(),
        |b, out| b.snapshot(out).unwrap(),
        |bytes| Balloon::<64>::restore(&S, bytes).unwrap(),
        1_000,
        12,
    );
}

#[test]
fn a_walk_resumes_bit_for_bit() {
    let samples = flight(6_000, 1_000, 0.3, false, false, 3);
    const S: WalkSettings = WalkSettings::DEFAULT;
    check_resume(
        &samples,
        || Walk::new(&S).unwrap(),
        |w, b| w.snapshot(b).unwrap(),
        |b| Walk::restore(&S, b).unwrap(),
        1_000,
        13,
    );
}

#[test]
fn snapshot_sizes_are_fixed_and_checked() {
    println!("| snapshot | bytes |\n| --- | ---: |");
    println!("| Drone | {} |", Drone::SNAPSHOT_LEN);
    println!("| Walk | {} |", Walk::SNAPSHOT_LEN);
    println!("| Balloon<64> | {} |", Balloon::<'static, 64>::SNAPSHOT_LEN);
    // the balloon's grows by one level's 12 bytes per unit of capacity
    assert_eq!(
        Balloon::<'static, 128>::SNAPSHOT_LEN - Balloon::<'static, 64>::SNAPSHOT_LEN,
        12 * 64
    );
    let d = Drone::new(&DroneSettings::DEFAULT).unwrap();
    let mut small = [0u8; 16];
    assert_eq!(d.snapshot(&mut small), Err(Error::CapacityFull));
    let mut exact = [0u8; Drone::SNAPSHOT_LEN];
    assert_eq!(d.snapshot(&mut exact), Ok(Drone::SNAPSHOT_LEN));
}

#[test]
fn bad_snapshots_are_typed_errors() {
    const D: DroneSettings = DroneSettings::DEFAULT;
    const W: WalkSettings = WalkSettings::DEFAULT;
    const B: BalloonSettings = BalloonSettings::DEFAULT;
    let mut drone = Drone::new(&D).unwrap();
    for s in flight(500, 20, 2.0, true, false, 4) {
        drone.process(&s);
    }
    let mut good = [0u8; Drone::SNAPSHOT_LEN];
    drone.snapshot(&mut good).unwrap();
    assert_eq!(Drone::restore(&D, &good).unwrap(), drone);
    // every single-bit flip anywhere is caught (by the checksum or the header checks)
    for byte in 0..good.len() {
        for bit in 0..8 {
            let mut bad = good;
            bad[byte] ^= 1 << bit;
            let err = Drone::restore(&D, &bad).unwrap_err();
            assert!(
                matches!(
                    err,
                    Error::SnapshotCorrupt | Error::SnapshotVersion | Error::SnapshotMismatch
                ),
                "byte {byte} bit {bit}: {err:?}"
            );
        }
    }
    // truncated at every length
    for len in 0..good.len() {
        assert_eq!(
            Drone::restore(&D, &good[..len]).unwrap_err(),
            Error::SnapshotCorrupt
        );
    }
    // another version (checksum made valid again) and another kind
    let resealed = |mut b: Vec<u8>| {
        let n = b.len() - 4;
        let crc = crc32(&b[..n]);
        b[n..].copy_from_slice(&crc.to_le_bytes());
        b
    };
    let mut v = good.to_vec();
    v[2] = 99;
    assert_eq!(
        Drone::restore(&D, &resealed(v)).unwrap_err(),
        Error::SnapshotVersion
    );
    assert_eq!(
        Walk::restore(&W, &good).unwrap_err(),
        Error::SnapshotCorrupt
    );
    let mut as_walk = good.to_vec();
    as_walk[3] = 3;
    let as_walk = resealed(as_walk);
    assert!(Walk::restore(&W, &as_walk).is_err());
    // a balloon snapshot of another capacity
    let balloon = Balloon::<64>::new(&B).unwrap();
    let mut b = vec![0u8; Balloon::<'static, 64>::SNAPSHOT_LEN];
    balloon.snapshot(&mut b).unwrap();
    assert!(Balloon::<32>::restore(&B, &b).is_err());
    // a checksum-valid snapshot holding a pressure no unit accepts
    let mut w = Walk::new(&W).unwrap();
    w.set_altimeter_setting(isohypse::datum::AltimeterSetting::SeaLevel {
        qnh_pa: (isohypse::Pressure::from_hpa(1_013.0).unwrap()).pa(),
    })
    .unwrap();
    let mut ws = vec![0u8; Walk::SNAPSHOT_LEN];
    w.snapshot(&mut ws).unwrap();
    let nan = f32::NAN.to_le_bytes();
    let qnh = 101_300.0f32.to_le_bytes();
    let at = ws.windows(4).position(|x| x == qnh).unwrap();
    ws[at..at + 4].copy_from_slice(&nan);
    assert_eq!(
        Walk::restore(&W, &resealed(ws)).unwrap_err(),
        Error::SnapshotCorrupt
    );
}

/// CRC-32/ISO-HDLC, bit by bit (the reflected polynomial 0xEDB88320; the check value
/// of "123456789" is 0xCBF43926, from the catalogue of parametrised CRC algorithms,
/// from memory, and asserted below).
fn crc32(data: &[u8]) -> u32 {
    let mut crc = !0u32;
    for &b in data {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc = if crc & 1 != 0 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

#[test]
fn the_test_crc_is_the_standard_one() {
    assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
}
