//! The per-sample pipeline on the two demo flights (see `demo.rs`): the check against
//! the host's outputs and the per-sample rows (one Kalman step, one sounding step, the
//! full pipeline per preset).
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
    use cortex_m_semihosting::hprintln;
    use isohypse::filter::{VerticalKalman, VerticalKalmanConfig};
    use isohypse::geopotential::Gravity;
    use isohypse::pipeline::{Output, Sample};
    use isohypse::sounding::Sounding;
    use isohypse::{Height, Pressure, RelativeHumidity, Temperature};

    use core::hint::black_box;

    use crate::Timing;
    use crate::demo::{self, DEMO_COUNT, DronePipeline, DroneReusePipeline, HostOutput};
    #[cfg(not(feature = "drone-only"))]
    use crate::demo::{BalloonPipeline, HikePipeline};
    use crate::samples::{
        BALLOON_HOST, BALLOON_HUMIDITY_PCT, BALLOON_PRESSURE_PA, BALLOON_TEMPERATURE_C,
        DRONE_ACCEL_MPS2, DRONE_HOST, DRONE_PRESSURE_PA, DRONE_REUSE_HOST,
    };

    /// 1-sigma height noise given to the Kalman row's corrections, m: the drone's 1.5 Pa
    /// pressure noise times `R T / (g p)`, about 0.085 m/Pa near the demo field.
    const KALMAN_ROW_SIGMA_M: f32 = 0.125;

    /// Accelerometer period at the design notes' drone rate (200 Hz), s.
    const ACCEL_PERIOD_S: f64 = 0.005;

    /// `Pipeline::process` of the drone preset, never inlined into the harness, so that
    /// the pipeline's code shows under a library symbol in the ELF (`elf_sizes.py
    /// --symbols`) and its calls can be profiled (`profile.py`).
    #[inline(never)]
    fn lib_process_drone(pipeline: &mut DronePipeline, sample: &Sample) -> Output {
        pipeline.process(sample)
    }

    /// The drone preset with gain reuse, never inlined (see [`lib_process_drone`]).
    #[inline(never)]
    fn lib_process_drone_reuse(pipeline: &mut DroneReusePipeline, sample: &Sample) -> Output {
        pipeline.process(sample)
    }

    /// The balloon preset's `Pipeline::process`, never inlined (see
    /// [`lib_process_drone`]).
    #[cfg(not(feature = "drone-only"))]
    #[inline(never)]
    fn lib_process_balloon(pipeline: &mut BalloonPipeline, sample: &Sample) -> Output {
        pipeline.process(sample)
    }

    /// The hike preset's `Pipeline::process`, never inlined (see [`lib_process_drone`]).
    #[cfg(not(feature = "drone-only"))]
    #[inline(never)]
    fn lib_process_hike(pipeline: &mut HikePipeline, sample: &Sample) -> Output {
        pipeline.process(sample)
    }

    fn at(values: &[f32; DEMO_COUNT], i: usize) -> f32 {
        values.get(i).copied().unwrap_or(f32::NAN)
    }

    fn drone_sample(i: usize) -> Sample {
        demo::drone_sample(i, at(&DRONE_PRESSURE_PA, i), at(&DRONE_ACCEL_MPS2, i))
    }

    /// The drone warm-up (see [`demo::drone_warm_up`]) through `process`, the measured
    /// entry of the pipeline's type.
    fn warm_up<P>(pipeline: &mut P, process: fn(&mut P, &Sample) -> Output) {
        demo::drone_warm_up(&DRONE_PRESSURE_PA, &DRONE_ACCEL_MPS2, |s| {
            process(pipeline, s);
        });
    }

    /// The inputs of a drone row alone (see [`Timing::per_call`]).
    fn drone_inputs(i: usize) -> f32 {
        black_box(&drone_sample(i)).pressure_pa
    }

    /// Checks a drone pipeline (`built`, run through `process`) on the hop after the
    /// warm-up against the host's outputs `host`.
    fn check_drone<P>(
        name: &str,
        host: &[HostOutput; DEMO_COUNT],
        built: Result<P, isohypse::Error>,
        process: fn(&mut P, &Sample) -> Output,
    ) -> bool {
        let Ok(mut p) = built else {
            return false;
        };
        warm_up(&mut p, process);
        compare(name, host, |i| process(&mut p, &drone_sample(i)))
    }

    fn balloon_sample(i: usize) -> Sample {
        demo::balloon_sample(
            i,
            at(&BALLOON_PRESSURE_PA, i),
            at(&BALLOON_TEMPERATURE_C, i),
            at(&BALLOON_HUMIDITY_PCT, i),
        )
    }

    /// Runs `process` over the flight and compares every output with the host's.
    fn compare(
        name: &str,
        host: &[HostOutput; DEMO_COUNT],
        mut process: impl FnMut(usize) -> Output,
    ) -> bool {
        hprintln!("");
        hprintln!("{}: every 20th output on the target", name);
        hprintln!("| t (s) | altitude (m) | vertical speed (m/s) | sigma (m) | phase | flags |");
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
                    "| {:.2} | {:.3} | {:.3} | {:.3} | {} | 0x{:x} |",
                    out.time_s as f32,
                    out.altitude_m,
                    out.vertical_speed_mps,
                    out.altitude_sigma_m,
                    out.phase.name(),
                    out.flags.0
                );
            }
            let mut sample_ok = target.flags == h.flags && target.phase == h.phase;
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
                    "mismatch: {} sample {}: flags 0x{:x} / host 0x{:x}, phase {} / host {}",
                    name,
                    i,
                    target.flags,
                    h.flags,
                    target.phase.name(),
                    h.phase.name()
                );
            }
            ok &= sample_ok;
        }
        hprintln!(
            "check {}: {} samples, {} values, {} bit-identical to host, worst |diff| {:e}, \
             flags and phase {}; highest altitude {:.3} m",
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

    /// Checks both presets on their demo flights against the host's outputs (1 mm or
    /// 1 mm/s; flags and phase identical).
    pub fn check() -> bool {
        let drone_ok = check_drone(
            "drone pipeline (Pipeline<2>, 50 Hz hop)",
            &DRONE_HOST,
            demo::drone_pipeline(),
            lib_process_drone,
        );
        let drone_reuse_ok = check_drone(
            "drone pipeline with gain reuse (settled after the warm-up)",
            &DRONE_REUSE_HOST,
            demo::drone_reuse_pipeline(),
            lib_process_drone_reuse,
        );
        #[cfg(not(feature = "drone-only"))]
        let balloon_ok = match demo::balloon_pipeline() {
            Ok(mut p) => compare(
                "balloon pipeline (Pipeline<64>, 1 Hz ascent)",
                &BALLOON_HOST,
                |i| lib_process_balloon(&mut p, &balloon_sample(i)),
            ),
            Err(_) => false,
        };
        #[cfg(feature = "drone-only")]
        let balloon_ok = {
            // keep the balloon's demo data in flash, as in the other builds
            core::hint::black_box(&BALLOON_HOST);
            core::hint::black_box((
                &BALLOON_PRESSURE_PA,
                &BALLOON_TEMPERATURE_C,
                &BALLOON_HUMIDITY_PCT,
            ));
            hprintln!("check balloon pipeline: left out (drone-only build)");
            true
        };
        drone_ok && drone_reuse_ok && balloon_ok
    }

    /// Only the drone pipeline is linked: nothing measured.
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
            Ok(mut hike),
            Ok(mut drone_no_accel),
            Ok(mut drone_fresh),
            Ok(mut drone_reuse),
            Ok(mut drone_multi),
        ) = (
            demo::drone_pipeline(),
            demo::balloon_pipeline(),
            demo::hike_pipeline(),
            demo::drone_pipeline(),
            demo::drone_pipeline(),
            demo::drone_reuse_pipeline(),
            demo::drone_pipeline(),
        )
        else {
            hprintln!("error: a preset failed to build");
            return;
        };
        // the drone rows run after the warm-up, as the check does (the p-only row's
        // warm-up has no accelerometer samples either); `drone_fresh` starts cold
        warm_up(&mut drone, lib_process_drone);
        warm_up(&mut drone_reuse, lib_process_drone_reuse);
        warm_up(&mut drone_multi, lib_process_drone);
        demo::drone_warm_up(&DRONE_PRESSURE_PA, &DRONE_ACCEL_MPS2, |s| {
            let mut s = *s;
            s.accel_up_mps2 = None;
            lib_process_drone(&mut drone_no_accel, &s);
        });
        let config = VerticalKalmanConfig::default(); // the drone preset's
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
            let t = demo::drone_time_s(i);
            let _ = kalman.predict(t, at(&DRONE_ACCEL_MPS2, i));
            if let Ok(h) = Height::from_meters(raw(i)) {
                let _ = kalman.correct_with_sigma(t, h, KALMAN_ROW_SIGMA_M);
            }
            kalman.estimate().map_or(0.0, |e| e.height.meters())
        };
        let mut kalman_baro_step = |i: usize| {
            if let Ok(h) = Height::from_meters(raw(i)) {
                let _ = kalman_baro.correct(demo::drone_time_s(i), h);
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
            |i: usize| lib_process_drone_reuse(&mut drone_reuse, &drone_sample(i)).altitude_m;
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
                let t = s.time_s + k as f64 * ACCEL_PERIOD_S;
                let _ = drone_multi.accelerometer(black_box(t), black_box(a));
            }
            h
        };
        let mut drone_multi_inputs = |i: usize| {
            let s = drone_sample(i);
            for k in 1..4 {
                black_box((
                    s.time_s + k as f64 * ACCEL_PERIOD_S,
                    at(&DRONE_ACCEL_MPS2, i),
                ));
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
        // hike: the drone hop's pressures at 1 Hz (a walker stepping up a 3 m bank)
        let mut hike_step = |i: usize| {
            let s = Sample::pressure(demo::balloon_time_s(i), at(&DRONE_PRESSURE_PA, i));
            lib_process_hike(&mut hike, &s).altitude_m
        };

        // The inputs of each row alone, passed through `black_box`.
        let mut kalman_inputs = |i: usize| {
            black_box(demo::drone_time_s(i));
            at(&DRONE_ACCEL_MPS2, i) + raw(i)
        };
        let mut kalman_baro_inputs = |i: usize| {
            black_box(demo::drone_time_s(i));
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
        let mut hike_inputs = |i: usize| {
            let s = Sample::pressure(demo::balloon_time_s(i), at(&DRONE_PRESSURE_PA, i));
            black_box(&s).pressure_pa
        };

        let rows: [FlightRow; 10] = [
            (
                "VerticalKalman::predict + correct_with_sigma (drone config, 50 Hz hop)",
                &mut kalman_step,
                &mut kalman_inputs,
                DEMO_COUNT,
            ),
            (
                "VerticalKalman::correct (barometer only, drone config)",
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
                "Pipeline::<2>::process, drone preset (p + accel, 50 Hz hop after 40 s at rest)",
                &mut drone_step,
                &mut drone_hop_inputs,
                DEMO_COUNT,
            ),
            (
                "Pipeline::<2>::process, drone preset with gain reuse (p + accel, 50 Hz hop after 40 s at rest: covariance settled)",
                &mut drone_reuse_step,
                &mut drone_reuse_inputs,
                DEMO_COUNT,
            ),
            (
                "Pipeline::<2>::process, drone preset (p + accel, first 4 s from start)",
                &mut drone_fresh_step,
                &mut drone_fresh_inputs,
                DEMO_COUNT,
            ),
            (
                "one 20 ms cycle at the design's rates, drone preset: process (p + accel) then 3 x Pipeline::accelerometer (200 Hz accelerometer, 50 Hz barometer; per cycle)",
                &mut drone_multi_step,
                &mut drone_multi_inputs,
                DEMO_COUNT,
            ),
            (
                "Pipeline::<2>::process, drone preset (p only, after 40 s at rest)",
                &mut drone_no_accel_step,
                &mut drone_no_accel_inputs,
                DEMO_COUNT,
            ),
            (
                "Pipeline::<64>::process, balloon preset (p, T, RH, 1 Hz ascent)",
                &mut balloon_step,
                &mut balloon_inputs,
                DEMO_COUNT,
            ),
            (
                "Pipeline::<2>::process, hike preset (p only, 1 Hz)",
                &mut hike_step,
                &mut hike_inputs,
                DEMO_COUNT,
            ),
        ];
        hprintln!("");
        hprintln!(
            "per-sample instructions per call (one pass over a demo flight, state kept \
             between calls, loop overhead and forming the inputs subtracted), {}",
            env!("FIRMWARE_TARGET")
        );
        hprintln!("| row | calls | instructions per call | ratio vs baseline |");
        hprintln!("| --- | ---: | ---: | ---: |");
        for (name, body, inputs, calls) in rows {
            let n = timing.per_call(body, inputs, calls);
            hprintln!(
                "| {} | {} | {:.1} | {:.2} |",
                name,
                calls,
                n,
                n / timing.baseline
            );
        }
    }
}

#[cfg(feature = "baseline-only")]
mod without_library {
    use core::hint::black_box;

    use cortex_m_semihosting::hprintln;

    use crate::Timing;
    use crate::samples::{
        BALLOON_HOST, BALLOON_HUMIDITY_PCT, BALLOON_PRESSURE_PA, BALLOON_TEMPERATURE_C,
        DRONE_ACCEL_MPS2, DRONE_HOST, DRONE_PRESSURE_PA, DRONE_REUSE_HOST,
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
        hprintln!("check pipelines: not linked (baseline-only build)");
        false
    }

    /// Nothing to measure without the library.
    pub fn measure(_timing: &Timing) {}
}
