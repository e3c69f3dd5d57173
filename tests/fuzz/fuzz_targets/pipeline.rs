//! Fuzz target: the per-sample pipeline fed arbitrary bytes decoded into settings and a
//! stream of samples (every field either raw bits, so NaN, infinities, subnormals and
//! extremes all occur, or a plausible value near the previous one, so that deep states
//! such as balloon descent on the profile are reached).
//!
//! Checks, besides "never panics":
//! * an accepted sample gives finite outputs (height, raw height, speed, sigma >= 0,
//!   totals, tendency);
//! * a rejected sample, a refused accelerometer sample and a refused datum change leave
//!   the pipeline exactly as it was (`Pipeline` derives `Clone + PartialEq`).
#![no_main]

use isohypse::model::TemperatureModel;
use isohypse::pipeline::{Estimator, HeightModel, Pipeline, Sample, Settings};
use libfuzzer_sys::fuzz_target;

/// Reads numbers from the fuzzer's bytes; zeros once they run out.
struct Bytes<'a>(&'a [u8]);

impl Bytes<'_> {
    fn take<const N: usize>(&mut self) -> [u8; N] {
        let mut out = [0u8; N];
        let n = N.min(self.0.len());
        out[..n].copy_from_slice(&self.0[..n]);
        self.0 = &self.0[n..];
        out
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
    fn f64(&mut self) -> f64 {
        f64::from_le_bytes(self.take())
    }
    fn is_empty(&self) -> bool {
        self.0.is_empty()
    }
}

fn settings(b: &mut Bytes) -> Settings {
    let choice = b.u8();
    let mut s = match choice % 3 {
        0 => Settings::balloon(),
        1 => Settings::drone(),
        _ => Settings::hike(),
    };
    // Overrides, each chosen by one bit; raw float bits on purpose.
    if choice & 0x04 != 0 {
        s.start_altitude_m = if b.u8() & 1 == 0 { None } else { Some(b.f32()) };
    }
    if choice & 0x08 != 0 {
        s.latitude_deg = if b.u8() & 1 == 0 { None } else { Some(b.f32()) };
    }
    if choice & 0x10 != 0 {
        s.model = match b.u8() % 4 {
            0 => HeightModel::Standard,
            1 => HeightModel::Sounding {
                descent_on_profile: b.u8() & 1 == 1,
            },
            2 => HeightModel::Column(TemperatureModel::MeanOfEnds),
            _ => HeightModel::Column(TemperatureModel::StandardOffset { delta_k: b.f32() }),
        };
    }
    if choice & 0x20 != 0 {
        s.estimator = Estimator::Off;
    }
    if choice & 0x40 != 0 {
        s.pressure_range_pa = (b.f32(), b.f32());
        s.ground_min_samples = u32::from(b.u16());
    }
    if choice & 0x80 != 0 {
        s.pressure_noise_pa = b.f32();
        s.temperature_uncertainty_k = b.f32();
        s.fix_time_constant_s = b.f32();
    }
    s
}

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

fuzz_target!(|data: &[u8]| {
    let mut b = Bytes(data);
    let s = settings(&mut b);
    let Ok(mut pipe) = Pipeline::<8>::new(s) else {
        return;
    };
    let mut t = 0.0f64;
    let mut p = 95_000.0f32;
    while !b.is_empty() {
        let op = b.u8();
        match op >> 5 {
            // 0..=4: a barometer sample
            0..=4 => {}
            5 => {
                let a = optional(&mut b, true, 0.0, 60.0).unwrap_or(0.0);
                let at = t + f64::from(b.u16()) / 1_000.0;
                let before = pipe.clone();
                if pipe.accelerometer(at, a).is_err() {
                    assert!(
                        pipe == before,
                        "refused accelerometer sample changed the state"
                    );
                }
                continue;
            }
            6 => {
                let h = optional(&mut b, op & 1 == 1, 500.0, 100_000.0);
                let before = pipe.clone();
                if pipe.set_start_altitude(h).is_err() {
                    assert!(pipe == before, "refused start altitude changed the state");
                }
                continue;
            }
            _ => {
                match op & 3 {
                    0 => pipe.rezero(),
                    1 => pipe.set_baro_disturbed(true),
                    _ => pipe.set_baro_disturbed(false),
                }
                continue;
            }
        }
        let time_s = if op & 0x01 != 0 {
            b.f64()
        } else {
            t + f64::from(b.u16()) / 100.0
        };
        let pressure_pa = if op & 0x02 != 0 {
            b.f32()
        } else {
            p * (1.0 + f32::from(b.i16()) / 100_000.0)
        };
        let flags = b.u8();
        let sample = Sample {
            time_s,
            pressure_pa,
            temperature_c: optional(&mut b, flags & 0x01 != 0, 0.0, 90.0),
            humidity_pct: optional(&mut b, flags & 0x02 != 0, 50.0, 60.0),
            accel_up_mps2: optional(&mut b, flags & 0x04 != 0, 0.0, 30.0),
            known_altitude_m: optional(&mut b, flags & 0x08 != 0, 500.0, 10_000.0),
        };
        let before = pipe.clone();
        let out = pipe.process(&sample);
        if out.flags.rejected() {
            assert!(
                pipe == before,
                "rejected sample {sample:?} changed the state"
            );
        } else {
            assert!(
                out.time_s.is_finite()
                    && out.altitude_m.is_finite()
                    && out.raw_altitude_m.is_finite()
                    && out.vertical_speed_mps.is_finite()
                    && out.altitude_sigma_m.is_finite()
                    && out.altitude_sigma_m >= 0.0
                    && out.ascent_m.is_finite()
                    && out.descent_m.is_finite()
                    && out.tendency_hpa.is_none_or(f32::is_finite),
                "non-finite output {out:?} for accepted sample {sample:?}"
            );
            t = sample.time_s;
            p = sample.pressure_pa;
        }
    }
});
