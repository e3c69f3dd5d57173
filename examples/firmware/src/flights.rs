//! The use types on the demo flights (see `demo.rs`): the check against the host's
//! outputs and the per-sample rows (one Kalman step, one sounding step, one sample
//! through `Drone`, `Balloon` and `Walk`).
//!
//! With feature `baseline-only` the library calls are left out, but the demo data stay
//! in flash (read through `black_box`), so that the ELF size difference is the library's
//! code and constants only.

#[cfg(not(feature = "baseline-only"))]
pub use with_library::{check, measure};
#[cfg(feature = "baseline-only")]
pub use without_library::{check, measure};

#[cfg(not(feature = "baseline-only"))]
#[cfg_attr(feature = "drone-only", allow(unused_imports, dead_code))]
mod with_library {
    use crate::arch::hprintln;
    use isohypse::filter::VerticalKalman;
    use isohypse::geopotential::Gravity;
    use isohypse::sounding::Sounding;
    use isohypse::time::Instant;
    #[cfg(not(feature = "drone-only"))]
    use isohypse::uses::{BalloonState, Walk, WalkState};
    use isohypse::uses::{Drone, DroneState, Output, Sample};
    use isohypse::{Height, Pressure, RelativeHumidity, Temperature};

    use core::hint::black_box;

    use crate::Timing;
    #[cfg(not(feature = "drone-only"))]
    use crate::demo::DemoBalloon;
    use crate::demo::{self, DEMO_COUNT, HostOutput, StateName};
    use crate::samples::{
        BALLOON_HOST, BALLOON_HUMIDITY_PCT, BALLOON_PRESSURE_PA, BALLOON_TEMPERATURE_C,
        DRONE_ACCEL_MPS2, DRONE_HOST, DRONE_PRESSURE_PA, DRONE_REUSE_HOST, WALK_HOST,
    };

    /// 1-sigma height noise given to the Kalman row's corrections, m: the drone's 1.5 Pa
    /// pressure noise times `R T / (g p)`, about 0.085 m/Pa near the demo field.
    const KALMAN_ROW_SIGMA_M: f32 = 0.125;

    /// Accelerometer period at the design notes' drone rate (200 Hz), us.
    const ACCEL_PERIOD_US: u64 = 5_000;

    /// The instant `k` accelerometer periods after `t`.
    fn accel_time(t: Instant, k: u64) -> Instant {
        Instant::from_micros(t.as_micros() + k * ACCEL_PERIOD_US)
    }

    /// `Drone::process`, never inlined into the harness, so that its code shows under a
    /// library symbol in the ELF (`elf_sizes.py --symbols`) and its calls can be
    /// profiled (`profile.py`). One wrapper serves both drone settings: the settings
    /// are data, the code is the same.
    #[inline(never)]
    fn lib_process_drone(drone: &mut Drone<'static>, sample: &Sample) -> Output<DroneState> {
        drone.process(sample)
    }

    /// `Balloon::<64>::process`, never inlined (see [`lib_process_drone`]).
    #[cfg(not(feature = "drone-only"))]
    #[inline(never)]
    fn lib_process_balloon(balloon: &mut DemoBalloon, sample: &Sample) -> Output<BalloonState> {
        balloon.process(sample)
    }

    /// `Walk::process`, never inlined (see [`lib_process_drone`]).
    #[cfg(not(feature = "drone-only"))]
    #[inline(never)]
    fn lib_process_walk(walk: &mut Walk<'static>, sample: &Sample) -> Output<WalkState> {
        walk.process(sample)
    }

    fn at(values: &[f32; DEMO_COUNT], i: usize) -> f32 {
        values.get(i).copied().unwrap_or(f32::NAN)
    }

    fn drone_sample(i: usize) -> Sample {
        demo::drone_sample(i, at(&DRONE_PRESSURE_PA, i), at(&DRONE_ACCEL_MPS2, i))
    }

    /// The drone warm-up (see [`demo::drone_warm_up`]) through the measured wrapper.
    fn warm_up(drone: &mut Drone<'static>) {
        demo::drone_warm_up(&DRONE_PRESSURE_PA, &DRONE_ACCEL_MPS2, |s| {
            lib_process_drone(drone, s);
        });
    }

    /// The inputs of a drone row alone (see [`Timing::per_call`]).
    fn drone_inputs(i: usize) -> f32 {
        black_box(&drone_sample(i)).pressure_pa
    }

    /// Checks a drone (`built`) on the hop after the warm-up against the host's outputs
    /// `host`.
    fn check_drone(
        name: &str,
        host: &[HostOutput; DEMO_COUNT],
        built: Result<Drone<'static>, isohypse::Error>,
    ) -> bool {
        let Ok(mut p) = built else {
            return false;
        };
        warm_up(&mut p);
        compare(name, host, |i| lib_process_drone(&mut p, &drone_sample(i)))
    }

    fn balloon_sample(i: usize) -> Sample {
        demo::balloon_sample(
            i,
            at(&BALLOON_PRESSURE_PA, i),
            at(&BALLOON_TEMPERATURE_C, i),
            at(&BALLOON_HUMIDITY_PCT, i),
        )
    }

    /// Walk sample `i`: the drone hop's pressure `i` at 1 Hz.
    #[cfg(not(feature = "drone-only"))]
    fn walk_sample(i: usize) -> Sample {
        demo::walk_sample(i, at(&DRONE_PRESSURE_PA, i))
    }

    /// Runs `process` over the flight and compares every output with the host's.
    fn compare<S: StateName>(
        name: &str,
        host: &[HostOutput; DEMO_COUNT],
        mut process: impl FnMut(usize) -> Output<S>,
    ) -> bool {
        hprintln!("");
        hprintln!("{}: every 20th output on the target", name);
        hprintln!("| t (ms) | altitude (m) | vertical speed (m/s) | sigma (m) | state | flags |");
        hprintln!("| ---: | ---: | ---: | ---: | --- | ---: |");
        let (mut ok, mut exact, mut values, mut worst) = (true, 0, 0, 0.0_f32);
        let mut first_bad: Option<usize> = None;
        let mut top = f32::NEG_INFINITY;
        for (i, h) in host.iter().enumerate() {
            let out = process(i);
            let target = HostOutput::of(&out);
            top = top.max(out.altitude_m);
            if i % 20 == 0 || i + 1 == DEMO_COUNT {
                hprintln!(
                    "| {} | {:.3} | {:.3} | {:.3} | {} | 0x{:x} |",
                    out.time.as_millis(),
                    out.altitude_m,
                    out.vertical_speed_mps,
                    out.altitude_sigma_m,
                    out.state.state_name(),
                    out.flags.0
                );
            }
            let mut sample_ok = target.flags == h.flags && target.state == h.state;
            for ((field, a), (_, b)) in target.values().iter().zip(h.values().iter()) {
                let d = libm::fabsf(a - b);
                values += 1;
                exact += usize::from(a.to_bits() == b.to_bits());
                if !crate::within_tolerance(d) {
                    sample_ok = false;
                    hprintln!(
                        "mismatch: {} sample {} {}: target {} host {}",
                        name,
                        i,
                        field,
                        a,
                        b
                    );
                } else {
                    worst = worst.max(d);
                }
            }
            if !sample_ok && first_bad.is_none() {
                first_bad = Some(i);
                hprintln!(
                    "mismatch: {} sample {}: flags 0x{:x} / host 0x{:x}, state {} / host {}",
                    name,
                    i,
                    target.flags,
                    h.flags,
                    target.state,
                    h.state
                );
            }
            ok &= sample_ok;
        }
        hprintln!(
            "check {}: {} samples, {} values, {} bit-identical to host, worst |diff| {:e}, \
             flags and state {}; highest altitude {:.3} m",
            name,
            DEMO_COUNT,
            values,
            exact,
            worst,
            if first_bad.is_none() {
                "identical"
            } else {
                "DIFFER"
            },
            top
        );
        hprintln!("check {}: {}", name, if ok { "PASS" } else { "FAIL" });
        ok
    }

    /// Checks the drone (twice: as shipped and with gain reuse), the balloon and the
    /// walk on their demo flights against the host's outputs (1 mm or 1 mm/s; flags
    /// and state identical).
    pub fn check() -> bool {
        let drone_ok = check_drone(
            "drone (Drone, DroneSettings::DEFAULT, 50 Hz hop)",
            &DRONE_HOST,
            demo::drone(),
        );
        let drone_reuse_ok = check_drone(
            "drone with gain reuse (settled after the warm-up)",
            &DRONE_REUSE_HOST,
            demo::drone_reuse(),
        );
        #[cfg(not(feature = "drone-only"))]
        let others_ok = {
            let balloon_ok = match demo::balloon() {
                Ok(mut b) => compare("balloon (Balloon<64>, 1 Hz ascent)", &BALLOON_HOST, |i| {
                    lib_process_balloon(&mut b, &balloon_sample(i))
                }),
                Err(_) => false,
            };
            let walk_ok = match demo::walk() {
                Ok(mut w) => compare(
                    "walk (Walk, the hop's pressures at 1 Hz)",
                    &WALK_HOST,
                    |i| lib_process_walk(&mut w, &walk_sample(i)),
                ),
                Err(_) => false,
            };
            balloon_ok && walk_ok
        };
        #[cfg(feature = "drone-only")]
        let others_ok = {
            // keep the balloon's and the walk's demo data in flash, as in the other builds
            core::hint::black_box((&BALLOON_HOST, &WALK_HOST));
            core::hint::black_box((
                &BALLOON_PRESSURE_PA,
                &BALLOON_TEMPERATURE_C,
                &BALLOON_HUMIDITY_PCT,
            ));
            hprintln!("check balloon and walk: left out (drone-only build)");
            true
        };
        drone_ok && drone_reuse_ok && others_ok
    }

    /// Only the drone is linked: nothing measured.
    #[cfg(feature = "drone-only")]
    pub fn measure(_timing: &Timing) {
        hprintln!("per-sample rows: left out (drone-only build)");
    }

    /// A per-sample row: name, the code per call (gets the sample index), the same
    /// inputs formed without the library call (see [`Timing::per_call`]), and the number
    /// of calls.
    type FlightRow<'a> = (
        &'a str,
        &'a mut dyn FnMut(usize) -> f32,
        &'a mut dyn FnMut(usize) -> f32,
        usize,
    );

    /// Prints instructions per call of the per-sample rows, ratio against the baseline
    /// formula.
    #[cfg(not(feature = "drone-only"))]
    pub fn measure(timing: &Timing) {
        let (
            Ok(mut drone),
            Ok(mut balloon),
            Ok(mut walk),
            Ok(mut drone_no_accel),
            Ok(mut drone_fresh),
            Ok(mut drone_reuse),
            Ok(mut drone_multi),
        ) = (
            demo::drone(),
            demo::balloon(),
            demo::walk(),
            demo::drone(),
            demo::drone(),
            demo::drone_reuse(),
            demo::drone(),
        )
        else {
            hprintln!("error: a use type failed to build");
            return;
        };
        // the drone rows run after the warm-up, as the check does (the p-only row's
        // warm-up has no accelerometer samples either); `drone_fresh` starts cold
        warm_up(&mut drone);
        warm_up(&mut drone_reuse);
        warm_up(&mut drone_multi);
        demo::drone_warm_up(&DRONE_PRESSURE_PA, &DRONE_ACCEL_MPS2, |s| {
            let mut s = *s;
            s.accel_up_mps2 = None;
            lib_process_drone(&mut drone_no_accel, &s);
        });
        // the drone's own filter configuration, borrowed as `Drone` borrows it
        let config = &demo::DRONE.kalman;
        let (Ok(mut kalman), Ok(mut kalman_baro)) =
            (VerticalKalman::new(config), VerticalKalman::new(config))
        else {
            hprintln!("error: Kalman filter failed to build");
            return;
        };
        let first = balloon_sample(0);
        let Ok(mut sounding) = (|| {
            Sounding::<{ demo::PROFILE_LEVELS }>::new(
                Height::from_meters(demo::LAUNCH_ELEVATION_M)?,
                Gravity::at_latitude(demo::LAUNCH_LATITUDE_DEG)?,
                Pressure::from_pa(first.pressure_pa)?,
                Temperature::from_celsius(first.temperature_c.unwrap_or(15.0))?,
                Some(RelativeHumidity::from_percent(
                    first.humidity_pct.unwrap_or(0.0),
                )?),
            )
        })() else {
            hprintln!("error: sounding failed to start");
            return;
        };

        let raw = |i: usize| {
            DRONE_HOST
                .get(i)
                .map_or(f32::NAN, |h: &HostOutput| h.raw_altitude_m)
        };
        let mut kalman_step = |i: usize| {
            let t = demo::drone_time(i);
            let _ = kalman.predict(t, at(&DRONE_ACCEL_MPS2, i));
            if let Ok(h) = Height::from_meters(raw(i)) {
                let _ = kalman.correct_with_sigma(t, h, KALMAN_ROW_SIGMA_M);
            }
            kalman.estimate().map_or(0.0, |e| e.height.meters())
        };
        let mut kalman_baro_step = |i: usize| {
            if let Ok(h) = Height::from_meters(raw(i)) {
                let _ = kalman_baro.correct(demo::drone_time(i), h);
            }
            kalman_baro.estimate().map_or(0.0, |e| e.height.meters())
        };
        let mut sounding_step = |i: usize| {
            let s = balloon_sample(i + 1);
            let step = (|| {
                sounding.update(
                    Pressure::from_pa(s.pressure_pa)?,
                    Some(Temperature::from_celsius(
                        s.temperature_c.unwrap_or(f32::NAN),
                    )?),
                    Some(RelativeHumidity::from_percent(
                        s.humidity_pct.unwrap_or(f32::NAN),
                    )?),
                )
            })();
            step.map_or(f32::NAN, |s| s.geometric.meters())
        };
        let mut drone_step = |i: usize| lib_process_drone(&mut drone, &drone_sample(i)).altitude_m;
        let mut drone_reuse_step =
            |i: usize| lib_process_drone(&mut drone_reuse, &drone_sample(i)).altitude_m;
        let mut drone_reuse_inputs = drone_inputs;
        let mut drone_fresh_step =
            |i: usize| lib_process_drone(&mut drone_fresh, &drone_sample(i)).altitude_m;
        // The design's drone rates: the accelerometer at 200 Hz, the barometer at 50 Hz.
        // One 20 ms cycle is a barometer sample with the accelerometer sample of its
        // instant, then three accelerometer samples 5, 10 and 15 ms later (the demo's
        // 50 Hz accelerometer value repeated: the count does not depend on the value).
        let mut drone_multi_step = |i: usize| {
            let s = drone_sample(i);
            let a = at(&DRONE_ACCEL_MPS2, i);
            let h = lib_process_drone(&mut drone_multi, &s).altitude_m;
            for k in 1..4 {
                let t = accel_time(s.time, k);
                let _ = drone_multi.accelerometer(black_box(t), black_box(a));
            }
            h
        };
        let mut drone_multi_inputs = |i: usize| {
            let s = drone_sample(i);
            for k in 1..4 {
                black_box((accel_time(s.time, k), at(&DRONE_ACCEL_MPS2, i)));
            }
            black_box(&s).pressure_pa
        };
        let mut drone_no_accel_step = |i: usize| {
            let mut s = drone_sample(i);
            s.accel_up_mps2 = None;
            lib_process_drone(&mut drone_no_accel, &s).altitude_m
        };
        let mut balloon_step =
            |i: usize| lib_process_balloon(&mut balloon, &balloon_sample(i)).altitude_m;
        let mut walk_step = |i: usize| lib_process_walk(&mut walk, &walk_sample(i)).altitude_m;

        // The inputs of each row alone, passed through `black_box`.
        let mut kalman_inputs = |i: usize| {
            black_box(demo::drone_time(i));
            at(&DRONE_ACCEL_MPS2, i) + raw(i)
        };
        let mut kalman_baro_inputs = |i: usize| {
            black_box(demo::drone_time(i));
            raw(i)
        };
        let mut sounding_inputs = |i: usize| black_box(&balloon_sample(i + 1)).pressure_pa;
        let mut drone_hop_inputs = drone_inputs;
        let mut drone_fresh_inputs = drone_inputs;
        let mut drone_no_accel_inputs = |i: usize| {
            let mut s = drone_sample(i);
            s.accel_up_mps2 = None;
            black_box(&s).pressure_pa
        };
        let mut balloon_inputs = |i: usize| black_box(&balloon_sample(i)).pressure_pa;
        let mut walk_inputs = |i: usize| black_box(&walk_sample(i)).pressure_pa;

        let rows: [FlightRow; 10] = [
            (
                "VerticalKalman::predict + correct_with_sigma (the drone's config, borrowed; 50 Hz hop)",
                &mut kalman_step,
                &mut kalman_inputs,
                DEMO_COUNT,
            ),
            (
                "VerticalKalman::correct (barometer only, the drone's config)",
                &mut kalman_baro_step,
                &mut kalman_baro_inputs,
                DEMO_COUNT,
            ),
            (
                "Sounding::<64>::update (p, T, RH; balloon ascent)",
                &mut sounding_step,
                &mut sounding_inputs,
                DEMO_COUNT - 1,
            ),
            (
                "Drone::process (p + accel, 50 Hz hop after 40 s at rest)",
                &mut drone_step,
                &mut drone_hop_inputs,
                DEMO_COUNT,
            ),
            (
                "Drone::process, gain reuse on (p + accel, 50 Hz hop after 40 s at rest: covariance settled)",
                &mut drone_reuse_step,
                &mut drone_reuse_inputs,
                DEMO_COUNT,
            ),
            (
                "Drone::process (p + accel, first 4 s from start)",
                &mut drone_fresh_step,
                &mut drone_fresh_inputs,
                DEMO_COUNT,
            ),
            (
                "one 20 ms cycle at the design's rates: Drone::process (p + accel) then 3 x Drone::accelerometer (200 Hz accelerometer, 50 Hz barometer; per cycle)",
                &mut drone_multi_step,
                &mut drone_multi_inputs,
                DEMO_COUNT,
            ),
            (
                "Drone::process (p only, after 40 s at rest)",
                &mut drone_no_accel_step,
                &mut drone_no_accel_inputs,
                DEMO_COUNT,
            ),
            (
                "Balloon::<64>::process (p, T, RH, 1 Hz ascent)",
                &mut balloon_step,
                &mut balloon_inputs,
                DEMO_COUNT,
            ),
            (
                "Walk::process (p only, 1 Hz)",
                &mut walk_step,
                &mut walk_inputs,
                DEMO_COUNT,
            ),
        ];
        hprintln!("");
        hprintln!(
            "per-sample instructions per call (one pass over a demo flight, state kept \
             between calls, loop overhead and forming the inputs subtracted; the last \
             column is what forming the inputs took, subtracted), {}",
            env!("FIRMWARE_TARGET")
        );
        hprintln!(
            "| row | calls | instructions per call | ratio vs baseline | inputs (subtracted) |"
        );
        hprintln!("| --- | ---: | ---: | ---: | ---: |");
        for (name, body, inputs, calls) in rows {
            let (n, formed) = timing.per_call(body, inputs, calls);
            hprintln!(
                "| {} | {} | {:.1} | {:.2} | {:.1} |",
                name,
                calls,
                n,
                n / timing.baseline,
                formed
            );
        }
    }
}

#[cfg(feature = "baseline-only")]
mod without_library {
    use core::hint::black_box;

    use crate::arch::hprintln;

    use crate::Timing;
    use crate::samples::{
        BALLOON_HOST, BALLOON_HUMIDITY_PCT, BALLOON_PRESSURE_PA, BALLOON_TEMPERATURE_C,
        DRONE_ACCEL_MPS2, DRONE_HOST, DRONE_PRESSURE_PA, DRONE_REUSE_HOST, WALK_HOST,
    };

    /// Keeps the demo data in flash as in the full build; checks nothing.
    pub fn check() -> bool {
        black_box(&DRONE_PRESSURE_PA);
        black_box(&DRONE_ACCEL_MPS2);
        black_box(&DRONE_HOST);
        black_box(&DRONE_REUSE_HOST);
        black_box(&BALLOON_PRESSURE_PA);
        black_box(&BALLOON_TEMPERATURE_C);
        black_box(&BALLOON_HUMIDITY_PCT);
        black_box(&BALLOON_HOST);
        black_box(&WALK_HOST);
        hprintln!("check use types: not linked (baseline-only build)");
        false
    }

    /// Nothing to measure without the library.
    pub fn measure(_timing: &Timing) {}
}
