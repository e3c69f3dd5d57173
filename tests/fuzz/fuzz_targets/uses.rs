//! Fuzz target: the use types (`Drone`, `Balloon<8>`, `Walk`, one picked by the first
//! byte) fed arbitrary bytes decoded into settings and a stream of calls: barometer
//! samples, accelerometer samples, clock restarts, the use's own run-time calls, and
//! snapshots. Every number is either raw bits (so NaN, infinities, subnormals and
//! extremes all occur) or a plausible value near the previous one (so that deep states
//! such as balloon descent on the profile are reached).
//!
//! Time stamps are `u64` microseconds: a step forward from the last sample taken (up to
//! 655 s, beyond the drone's longest normal gap), a step back (up to 65 s), or raw bits
//! (any instant: huge jumps either way, the end of time).
//!
//! Checks, besides "never panics":
//! * an accepted sample gives finite outputs (height, raw height, speed, sigma >= 0,
//!   totals, tendency) stamped with its own time, and `last_output()` returns it;
//! * a repeated stamp is rejected (`REJECTED_TIME`); an accepted sample is flagged
//!   `CLOCK_FAULT` exactly when it steps back from the last sample taken, or forward by
//!   more than the settings' `max_gap_s`;
//! * a rejected sample, a refused accelerometer sample and a refused run-time setting
//!   leave the use type exactly as it was (the types derive `Clone + PartialEq`);
//! * a snapshot is `SNAPSHOT_LEN` bytes and restores to an equal value;
//! * restoring from a snapshot with fuzzed bytes written over it (with its checksum
//!   made right again, so that the fields' own checks are reached, or left wrong), or
//!   from raw fuzzed bytes, never panics; what it accepts snapshots to the same bytes
//!   again and takes further calls without panicking.
#![no_main]

use isohypse::datum::AltimeterSetting;
use isohypse::filter::VerticalKalmanConfig;
use isohypse::model::TemperatureModel;
use isohypse::time::{Duration, Instant};
use isohypse::uses::{Balloon, BalloonModel, BalloonSettings, Drone, DroneSettings, Flags};
use isohypse::uses::{Output, Sample, Use, Walk, WalkSettings};
use isohypse::{Error, Pressure};
use libfuzzer_sys::fuzz_target;

/// Profile capacity of the fuzzed balloon (small, so that the profile is thinned often).
const LEVELS: usize = 8;

/// The longest snapshot of the three.
const SNAPSHOT_MAX: usize = {
    let (d, b, w) = (
        Drone::SNAPSHOT_LEN,
        Balloon::<LEVELS>::SNAPSHOT_LEN,
        Walk::SNAPSHOT_LEN,
    );
    let m = if d > b { d } else { b };
    if m > w { m } else { w }
};

/// The snapshot's checksum: CRC-32 (ISO-HDLC) of every byte before it, little-endian
/// (the layout `isohypse::snapshot` documents).
const CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Reads numbers from the fuzzer's bytes; zeros once they run out.
struct Bytes<'a>(&'a [u8]);

impl<'a> Bytes<'a> {
    fn take<const N: usize>(&mut self) -> [u8; N] {
        let mut out = [0u8; N];
        let n = N.min(self.0.len());
        out[..n].copy_from_slice(&self.0[..n]);
        self.0 = &self.0[n..];
        out
    }
    fn slice(&mut self, n: usize) -> &'a [u8] {
        let (head, tail) = self.0.split_at(n.min(self.0.len()));
        self.0 = tail;
        head
    }
    fn u8(&mut self) -> u8 {
        self.take::<1>()[0]
    }
    fn i16(&mut self) -> i16 {
        i16::from_le_bytes(self.take())
    }
    fn u16(&mut self) -> u16 {
        u16::from_le_bytes(self.take())
    }
    fn f32(&mut self) -> f32 {
        f32::from_le_bytes(self.take())
    }
    fn u64(&mut self) -> u64 {
        u64::from_le_bytes(self.take())
    }
    fn is_empty(&self) -> bool {
        self.0.is_empty()
    }
}

/// `None` if not `present`; else raw bits (one in 65 536) or `plausible +- spread`.
fn optional(b: &mut Bytes, present: bool, plausible: f32, spread: f32) -> Option<f32> {
    if !present {
        return None;
    }
    let x = b.i16();
    if x == i16::MIN {
        Some(b.f32()) // raw bits
    } else {
        Some(plausible + spread * f32::from(x) / 32_767.0)
    }
}

/// An altimeter setting: standard, or a QNH / QFE near 1000 hPa or from raw bits (an
/// unusable pressure gives the standard setting; an absurd usable one is refused by
/// the use type).
fn altimeter(b: &mut Bytes) -> AltimeterSetting {
    let kind = b.u8();
    let pa = optional(b, kind & 0x04 != 0, 100_000.0, 20_000.0).unwrap_or(101_325.0);
    match (kind & 3, Pressure::from_pa(pa)) {
        (1, Ok(qnh)) => AltimeterSetting::SeaLevel { qnh_pa: qnh.pa() },
        (2, Ok(qfe)) => AltimeterSetting::Field { qfe_pa: qfe.pa() },
        _ => AltimeterSetting::Standard,
    }
}

/// The common settings (pressure range, noise, temperature uncertainty, fix time
/// constant, longest gap), each raw or plausible.
struct Common {
    min_pressure_pa: f32,
    max_pressure_pa: f32,
    pressure_noise_pa: f32,
    temperature_uncertainty_k: f32,
    fix_time_constant_s: f32,
    max_gap_s: f32,
}

impl Common {
    fn read(b: &mut Bytes) -> Self {
        Self {
            min_pressure_pa: b.f32(),
            max_pressure_pa: b.f32(),
            pressure_noise_pa: b.f32(),
            temperature_uncertainty_k: b.f32(),
            fix_time_constant_s: b.f32(),
            // 0 to 600 s, or raw bits (NaN, negative, beyond the limit: refused by `new`)
            max_gap_s: optional(b, true, 300.0, 300.0).unwrap_or(0.0),
        }
    }
}

/// The Kalman filter's settings: `base`, with gain reuse on or a raw tolerance and a
/// raw barometer sigma.
fn kalman(b: &mut Bytes, base: VerticalKalmanConfig) -> VerticalKalmanConfig {
    match b.u8() % 4 {
        0 => base,
        1 => base.with_gain_reuse(),
        2 => VerticalKalmanConfig {
            gain_reuse_tolerance: b.f32(),
            ..base
        },
        _ => VerticalKalmanConfig {
            baro_sigma_m: b.f32(),
            ..base
        },
    }
}

fn drone_settings(choice: u8, b: &mut Bytes) -> DroneSettings {
    let mut s = DroneSettings::DEFAULT;
    if choice & 0x04 != 0 {
        s.takeoff_altitude_m = b.f32();
        s.altimeter_setting = altimeter(b);
    }
    if choice & 0x08 != 0 {
        s.kalman = kalman(b, s.kalman);
    }
    if choice & 0x10 != 0 {
        s.ground_samples = u32::from(b.u16());
        s.totals_band_m = b.f32();
    }
    if choice & 0x80 != 0 {
        let c = Common::read(b);
        s.min_pressure_pa = c.min_pressure_pa;
        s.max_pressure_pa = c.max_pressure_pa;
        s.pressure_noise_pa = c.pressure_noise_pa;
        s.temperature_uncertainty_k = c.temperature_uncertainty_k;
        s.fix_time_constant_s = c.fix_time_constant_s;
        s.max_gap_s = c.max_gap_s;
    }
    s
}

fn balloon_settings(choice: u8, b: &mut Bytes) -> BalloonSettings {
    let mut s = BalloonSettings::DEFAULT;
    if choice & 0x04 != 0 {
        s.launch_altitude_m = if b.u8() & 1 == 0 { None } else { Some(b.f32()) };
        s.latitude_deg = if b.u8() & 1 == 0 { None } else { Some(b.f32()) };
    }
    if choice & 0x08 != 0 {
        s.model = match b.u8() % 4 {
            0 => BalloonModel::Standard,
            1 => BalloonModel::Sounding {
                descent_on_profile: b.u8() & 1 == 1,
            },
            2 => BalloonModel::Column(TemperatureModel::MeanOfEnds),
            _ => BalloonModel::Column(TemperatureModel::StandardOffset { delta_k: b.f32() }),
        };
    }
    if choice & 0x10 != 0 {
        s.kalman = kalman(b, s.kalman);
        s.ground_samples = u32::from(b.u16());
        s.totals_band_m = b.f32();
    }
    if choice & 0x80 != 0 {
        let c = Common::read(b);
        s.min_pressure_pa = c.min_pressure_pa;
        s.max_pressure_pa = c.max_pressure_pa;
        s.pressure_noise_pa = c.pressure_noise_pa;
        s.temperature_uncertainty_k = c.temperature_uncertainty_k;
        s.fix_time_constant_s = c.fix_time_constant_s;
        s.max_gap_s = c.max_gap_s;
    }
    s
}

fn walk_settings(choice: u8, b: &mut Bytes) -> WalkSettings {
    let mut s = WalkSettings::DEFAULT;
    if choice & 0x04 != 0 {
        s.start_altitude_m = if b.u8() & 1 == 0 { None } else { Some(b.f32()) };
        s.altimeter_setting = altimeter(b);
    }
    if choice & 0x08 != 0 {
        s.spike_gate_m = b.f32();
        s.speed_time_constant_s = b.f32();
    }
    if choice & 0x10 != 0 {
        s.tracker.smoothing_time_constant_s = b.f32();
        s.tracker.hysteresis_band_m = b.f32();
    }
    if choice & 0x80 != 0 {
        let c = Common::read(b);
        s.min_pressure_pa = c.min_pressure_pa;
        s.max_pressure_pa = c.max_pressure_pa;
        s.pressure_noise_pa = c.pressure_noise_pa;
        s.temperature_uncertainty_k = c.temperature_uncertainty_k;
        s.fix_time_constant_s = c.fix_time_constant_s;
        s.max_gap_s = c.max_gap_s;
    }
    s
}

/// What the loop needs of a use type besides [`Use`].
trait Fuzzed: Use<State: core::fmt::Debug + PartialEq> + Clone + PartialEq + core::fmt::Debug {
    const SNAPSHOT_LEN: usize;
    fn max_gap_s(&self) -> f32;
    fn last(&self) -> Output<Self::State>;
    fn snapshot_into(&self, out: &mut [u8]) -> Result<usize, Error>;
    /// A value restored from `bytes` with this one's settings.
    fn restored(&self, bytes: &[u8]) -> Result<Self, Error>;
    /// The use's own calls at run time (chosen by `op`); a refused one must leave the
    /// state as it was.
    fn special(&mut self, op: u8, b: &mut Bytes);
}

impl Fuzzed for Drone<'_> {
    const SNAPSHOT_LEN: usize = Drone::SNAPSHOT_LEN;
    fn max_gap_s(&self) -> f32 {
        self.settings().max_gap_s
    }
    fn last(&self) -> Output<Self::State> {
        self.last_output()
    }
    fn snapshot_into(&self, out: &mut [u8]) -> Result<usize, Error> {
        self.snapshot(out)
    }
    fn restored(&self, bytes: &[u8]) -> Result<Self, Error> {
        Drone::restore(self.settings(), bytes)
    }
    fn special(&mut self, op: u8, b: &mut Bytes) {
        let before = self.clone();
        match op % 5 {
            0 => self.rezero(),
            1 => self.set_baro_disturbed(op & 0x08 != 0),
            2 => {
                let h = optional(b, true, 500.0, 100_000.0).unwrap_or(0.0);
                if self.set_takeoff_altitude_m(h).is_err() {
                    assert!(
                        *self == before,
                        "refused take-off altitude changed the state"
                    );
                }
            }
            3 => {
                if self.set_altimeter_setting(altimeter(b)).is_err() {
                    assert!(
                        *self == before,
                        "refused altimeter setting changed the state"
                    );
                }
            }
            _ => {
                let _ = (self.state(), self.apex_m(), self.outlier_count());
                let _ = self.estimator_settled();
            }
        }
    }
}

impl Fuzzed for Balloon<'_, LEVELS> {
    const SNAPSHOT_LEN: usize = Balloon::<LEVELS>::SNAPSHOT_LEN;
    fn max_gap_s(&self) -> f32 {
        self.settings().max_gap_s
    }
    fn last(&self) -> Output<Self::State> {
        self.last_output()
    }
    fn snapshot_into(&self, out: &mut [u8]) -> Result<usize, Error> {
        self.snapshot(out)
    }
    fn restored(&self, bytes: &[u8]) -> Result<Self, Error> {
        Balloon::restore(self.settings(), bytes)
    }
    fn special(&mut self, _op: u8, _b: &mut Bytes) {
        let _ = (self.state(), self.apex_m(), self.outlier_count());
        if let Some(sounding) = self.sounding() {
            let _ = (sounding.profile().len(), sounding.geopotential());
        }
    }
}

impl Fuzzed for Walk<'_> {
    const SNAPSHOT_LEN: usize = Walk::SNAPSHOT_LEN;
    fn max_gap_s(&self) -> f32 {
        self.settings().max_gap_s
    }
    fn last(&self) -> Output<Self::State> {
        self.last_output()
    }
    fn snapshot_into(&self, out: &mut [u8]) -> Result<usize, Error> {
        self.snapshot(out)
    }
    fn restored(&self, bytes: &[u8]) -> Result<Self, Error> {
        Walk::restore(self.settings(), bytes)
    }
    fn special(&mut self, op: u8, b: &mut Bytes) {
        if op & 1 == 0 {
            let before = self.clone();
            if self.set_altimeter_setting(altimeter(b)).is_err() {
                assert!(
                    *self == before,
                    "refused altimeter setting changed the state"
                );
            }
        } else {
            let _ = (self.state(), self.apex_m(), self.outlier_count());
        }
    }
}

/// The fuzzer's view of the clock: the last sample taken and where the next stamp
/// starts from.
struct Clock {
    /// Microseconds of the last sample taken (`None`: none yet, the clock restarted, or
    /// a sample at the very end of time, after which the next one has no step).
    last: Option<u64>,

    /// Base of the next relative stamp, us.
    t: u64,
    /// Pressure of the last sample taken, Pa.
    p: f32,
}

/// One barometer sample, its stamp and channels decoded from `op` and the bytes.
fn sample<U: Fuzzed>(u: &mut U, clock: &mut Clock, op: u8, b: &mut Bytes) {
    let micros = if op & 0x01 != 0 {
        b.u64()
    } else if op & 0x04 != 0 {
        clock.t.saturating_sub(u64::from(b.u16()) * 1_000)
    } else {
        clock.t.saturating_add(u64::from(b.u16()) * 10_000)
    };
    let pressure_pa = if op & 0x02 != 0 {
        b.f32()
    } else {
        clock.p * (1.0 + f32::from(b.i16()) / 100_000.0)
    };
    let flags = b.u8();
    let sample = Sample {
        time: Instant::from_micros(micros),
        pressure_pa,
        temperature_c: optional(b, flags & 0x01 != 0, 0.0, 90.0),
        humidity_pct: optional(b, flags & 0x02 != 0, 50.0, 60.0),
        accel_up_mps2: optional(b, flags & 0x04 != 0, 0.0, 30.0),
        known_altitude_m: optional(b, flags & 0x08 != 0, 500.0, 10_000.0),
        gnss_altitude_m: optional(b, flags & 0x10 != 0, 500.0, 40_000.0),
        gnss_accuracy_m: optional(b, flags & 0x20 != 0, 5.0, 100.0),
    };
    let before = u.clone();
    let out = u.process(&sample);
    assert_eq!(out.time, sample.time, "output stamped with another time");
    if clock.last == Some(micros) {
        assert!(
            out.flags.contains(Flags::REJECTED_TIME),
            "repeated time stamp taken: {out:?}"
        );
    }
    if out.flags.rejected() {
        assert!(*u == before, "rejected sample {sample:?} changed the state");
        return;
    }
    // the library's own conversion of the step, as it compares it
    let fault = clock.last.is_some_and(|l| {
        micros < l || Duration::from_micros(micros - l).as_secs_f32() > before.max_gap_s()
    });
    assert_eq!(
        out.flags.contains(Flags::CLOCK_FAULT),
        fault,
        "clock fault flag wrong after {:?} us for {sample:?}: {out:?}",
        clock.last
    );
    assert!(
        out.altitude_m.is_finite()
            && out.raw_altitude_m.is_finite()
            && out.vertical_speed_mps.is_finite()
            && out.altitude_sigma_m.is_finite()
            && out.altitude_sigma_m >= 0.0
            && out.ascent_m.is_finite()
            && out.descent_m.is_finite()
            && out.tendency_hpa.is_none_or(f32::is_finite),
        "non-finite output {out:?} for accepted sample {sample:?}"
    );
    // the end of time is the "no sample yet" of the time base: it reads back as 0
    if micros != u64::MAX {
        assert_eq!(u.last(), out, "last_output() differs from the output");
    }
    clock.last = (micros != u64::MAX).then_some(micros);
    clock.t = micros;
    clock.p = sample.pressure_pa;
}

/// A snapshot and its restore; then, by `op`, a restore from the snapshot with fuzzed
/// bytes written over it, or from raw fuzzed bytes (see [`exercise`]).
fn snapshot<U: Fuzzed>(u: &U, clock: &Clock, op: u8, b: &mut Bytes) {
    let mut buf = [0u8; SNAPSHOT_MAX];
    let len = u
        .snapshot_into(&mut buf)
        .expect("a buffer of SNAPSHOT_LEN holds it");
    assert_eq!(len, U::SNAPSHOT_LEN, "snapshot length");
    assert_eq!(
        u.snapshot_into(&mut buf[..len - 1]),
        Err(Error::CapacityFull),
        "a short buffer takes no snapshot"
    );
    let back = u.restored(&buf[..len]).expect("a fresh snapshot restores");
    assert_eq!(back, *u, "restored value differs");
    let restored = match op & 3 {
        0 => return,
        1 | 2 => {
            for _ in 0..=(b.u8() & 7) {
                let at = usize::from(b.u16()) % len;
                buf[at] = b.u8();
            }
            if op & 3 == 1 {
                let crc = CRC.checksum(&buf[..len - 4]).to_le_bytes();
                buf[len - 4..len].copy_from_slice(&crc);
            }
            u.restored(&buf[..len])
        }
        _ => {
            let n = usize::from(b.u16()) % (SNAPSHOT_MAX + 8);
            u.restored(b.slice(n))
        }
    };
    if let Ok(r) = restored {
        exercise(r, clock, b);
    }
}

/// What a restore from fuzzed bytes accepted: its snapshot round-trips byte for byte,
/// and it takes a barometer sample, an accelerometer sample and a clock restart
/// without panicking. Its outputs are not checked: the snapshot format checks the
/// values that have a unit, and a plain number (a filter's state, a height) holds
/// whatever bits a checksum-valid snapshot gives it, NaN included (so `==` does not
/// hold either).
fn exercise<U: Fuzzed>(mut r: U, clock: &Clock, b: &mut Bytes) {
    let mut first = [0u8; SNAPSHOT_MAX];
    let n = r
        .snapshot_into(&mut first)
        .expect("snapshot of a restored value");
    let again = r.restored(&first[..n]).expect("restore of that snapshot");
    let mut second = [0u8; SNAPSHOT_MAX];
    let m = again
        .snapshot_into(&mut second)
        .expect("snapshot of the restore");
    assert_eq!(first[..n], second[..m], "round trip of an accepted restore");
    let t = clock.t.saturating_add(u64::from(b.u16()) * 10_000);
    let mut sample = Sample::pressure(Instant::from_micros(t), clock.p);
    sample.accel_up_mps2 = Some(0.1);
    let _ = r.process(&sample);
    let _ = r.accelerometer(Instant::from_micros(t.saturating_add(5_000)), 0.2);
    r.restart_clock();
    let _ = r.process(&sample);
    let _ = r.last();
}

/// Runs the stream of calls on `u`.
fn run<U: Fuzzed>(mut u: U, b: &mut Bytes) {
    let mut clock = Clock {
        last: None,
        t: 0,
        p: 95_000.0,
    };
    while !b.is_empty() {
        let op = b.u8();
        match op >> 5 {
            0..=3 => sample(&mut u, &mut clock, op, b),
            4 => {
                let a = optional(b, true, 0.0, 60.0).unwrap_or(0.0);
                let at = if op & 0x01 != 0 {
                    Instant::from_micros(b.u64())
                } else {
                    Instant::from_micros(clock.t.saturating_add(u64::from(b.u16()) * 1_000))
                };
                let before = u.clone();
                if u.accelerometer(at, a).is_err() {
                    assert!(
                        u == before,
                        "refused accelerometer sample changed the state"
                    );
                }
            }
            5 => snapshot(&u, &clock, op, b),
            6 => {
                u.restart_clock();
                clock.last = None;
            }
            _ => u.special(op, b),
        }
    }
}

fuzz_target!(|data: &[u8]| {
    let mut b = Bytes(data);
    let choice = b.u8();
    match choice % 3 {
        0 => {
            let s = balloon_settings(choice, &mut b);
            if let Ok(u) = Balloon::<LEVELS>::new(&s) {
                run(u, &mut b);
            }
        }
        1 => {
            let s = drone_settings(choice, &mut b);
            if let Ok(u) = Drone::new(&s) {
                run(u, &mut b);
            }
        }
        _ => {
            let s = walk_settings(choice, &mut b);
            if let Ok(u) = Walk::new(&s) {
                run(u, &mut b);
            }
        }
    }
});
