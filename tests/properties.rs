//! Property tests (proptest): round trips, monotonicity, boundedness and "a rejected
//! sample changes nothing", over randomly drawn inputs.
//!
//! Case counts are modest so that the whole file runs in well under 30 s in a debug
//! build; they are set per block with `cases(n)`. `PROPTEST_CASES=n` in the
//! environment does not override them (explicit configs win); edit the block to run
//! more. A failing case is shrunk and printed by proptest (no persistence files); to
//! replay one, copy the printed values into a unit test.
//!
//! Tolerances are stated beside each check with their basis. The accuracy goals of the
//! crate (design notes: f32 pressure -> height within 1 cm to 51 km and 5 cm to 86 km
//! against an exact reference) apply to *one* conversion; a round trip goes through two
//! f32 conversions, so its budget is the sum of the two.

use isohypse::atmosphere::{ICAO, StandardAtmosphere, US_1976};
use isohypse::datum::{AltimeterSetting, Calibration};
use isohypse::filter::{AlphaBeta, Median, MovingAverage, OnePole, VerticalKalman};
use isohypse::filter::{KalmanOutcome, VerticalKalmanConfig};
use isohypse::flight::PhaseSettings;
use isohypse::model::{AirSample, ColumnModel, Reference, TemperatureModel};
use isohypse::time::Instant;
use isohypse::track::{AscentTotals, HikeConfig};
use isohypse::uses::{
    Balloon, BalloonModel, BalloonSettings, Drone, DroneSettings, Flags, Output, Sample, Use, Walk,
    WalkSettings,
};
use proptest::prelude::*;
use std::fmt::Debug;
mod common;
use common::{at, h, k, pa, secs};

/// Proptest settings: `n` cases, no failure-persistence files (a failing case is printed
/// with its inputs instead), and a fixed seed so that CI runs are repeatable. Set
/// `ISOHYPSE_PROPTEST_RANDOM=1` to draw fresh inputs (exploration; the fuzz targets
/// explore too).
fn cases(n: u32) -> ProptestConfig {
    let rng_seed = if std::env::var_os("ISOHYPSE_PROPTEST_RANDOM").is_some() {
        proptest::test_runner::RngSeed::Random
    } else {
        proptest::test_runner::RngSeed::Fixed(0x1505_0417)
    };
    ProptestConfig {
        cases: n,
        failure_persistence: None,
        rng_seed,
        ..ProptestConfig::default()
    }
}

/// Round-trip budget for one standard atmosphere: twice the per-conversion goal
/// (1 cm to 51 km, 5 cm above; design notes), because both directions round in f32.
fn standard_round_trip_limit_m(z: f32) -> f32 {
    if z <= 51_000.0 { 0.02 } else { 0.10 }
}

/// Geometric top of a standard atmosphere (geopotential top converted with its r0).
fn geometric_top(atm: &StandardAtmosphere) -> f32 {
    let h = atm.top_geopotential_m() as f64;
    let r0 = atm.earth_radius_m as f64;
    (r0 * h / (r0 - h)) as f32
}

// ---------------------------------------------------------------------------------
// Standard atmospheres: height -> pressure -> height, monotonicity.
// ---------------------------------------------------------------------------------

fn standard_round_trip(atm: &StandardAtmosphere, z: f32) -> Result<(), TestCaseError> {
    let p = atm.pressure_at(h(z)).unwrap();
    let back = atm.pressure_altitude(p).unwrap().meters();
    let limit = standard_round_trip_limit_m(z);
    prop_assert!(
        (back - z).abs() <= limit,
        "{}: z {z} m -> p {} Pa -> {back} m (limit {limit} m)",
        atm.name,
        p.pa()
    );
    Ok(())
}

proptest! {
    #![proptest_config(cases(2048))]

    /// US 1976, -5 km .. 86 km geometric (the table's range, U.S. Standard Atmosphere
    /// 1976 section 1.3).
    #[test]
    fn us1976_height_pressure_round_trip(z in -4_990.0f32..85_990.0) {
        standard_round_trip(&US_1976, z)?;
    }

    /// ICAO / ISO 2533, -5 km .. 80 km geopotential (ICAO Doc 7488/3).
    #[test]
    fn icao_height_pressure_round_trip(frac in 0.0f32..1.0) {
        let top = geometric_top(&ICAO) - 10.0;
        let z = -4_990.0 + frac * (top + 4_990.0);
        standard_round_trip(&ICAO, z)?;
    }

    /// Pressure -> height -> pressure, relative error: the height budget above divided by
    /// the scale height (>= 5.4 km in both standards; RT/g at 186.9 K), i.e.
    /// <= 0.1 m / 5 400 m = 1.9e-5 relative; checked at 2e-5.
    #[test]
    fn standard_pressure_height_round_trip(ln_p in (0.374f32).ln()..(177_000.0f32).ln(), icao in any::<bool>()) {
        let atm = if icao { &ICAO } else { &US_1976 };
        let p = ln_p.exp().max(atm.top_pressure_pa());
        let z = atm.pressure_altitude(pa(p)).unwrap();
        let back = atm.pressure_at(z).unwrap().pa();
        prop_assert!(((back - p) / p).abs() <= 2.0e-5, "{}: {p} Pa -> {} m -> {back} Pa", atm.name, z.meters());
    }

    /// Higher pressure, lower height (hydrostatic balance; non-strict for pressures one
    /// f32 step apart, strict once they differ by 1e-4 relative).
    #[test]
    fn standard_monotone(a in 0.374f32..177_000.0, b in 0.374f32..177_000.0, icao in any::<bool>()) {
        let atm = if icao { &ICAO } else { &US_1976 };
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        let lo = lo.max(atm.top_pressure_pa());
        let hi = hi.max(atm.top_pressure_pa());
        let z_lo = atm.pressure_altitude(pa(lo)).unwrap().meters();
        let z_hi = atm.pressure_altitude(pa(hi)).unwrap().meters();
        prop_assert!(z_hi <= z_lo, "{}: p {lo} -> {z_lo} m, p {hi} -> {z_hi} m", atm.name);
        if hi > lo * 1.0001 {
            prop_assert!(z_hi < z_lo);
        }
    }
}

// ---------------------------------------------------------------------------------
// Temperature models: round trips, monotonicity, warmer column = more height.
// ---------------------------------------------------------------------------------

/// A reference level between 1050 and 500 hPa at its U.S. 1976 height, with a
/// measured temperature there.
fn reference_strategy() -> impl Strategy<Value = Reference> {
    (50_000.0f32..105_000.0, 230.0f32..320.0).prop_map(|(p, t)| {
        let z = US_1976.pressure_altitude(pa(p)).unwrap();
        Reference::new(pa(p), z).with_temperature(k(t))
    })
}

fn model_strategy() -> impl Strategy<Value = TemperatureModel> {
    prop_oneof![
        Just(TemperatureModel::Standard),
        (-40.0f32..40.0).prop_map(|d| TemperatureModel::standard_offset(d).unwrap()),
        (200.0f32..330.0).prop_map(|t| TemperatureModel::Isothermal {
            temperature_k: k(t).kelvin()
        }),
        (230.0f32..320.0, 1.0e-4f32..0.0098, any::<bool>()).prop_map(|(t, l, neg)| {
            TemperatureModel::constant_lapse(k(t), if neg { -l } else { l }).unwrap()
        }),
        Just(TemperatureModel::MeanOfEnds),
    ]
}

/// Round-trip budget for a model over a column of depth `dz` from the reference: two f32
/// conversions each within 1 cm (the design goal near the ground) plus f32 resolution of
/// the heights themselves (|z| <= 10 km: 1 ulp = 1 mm).
fn model_round_trip_limit_m(_dz: f32) -> f32 {
    0.02
}

proptest! {
    #![proptest_config(cases(1024))]

    /// height(pressure_at(z)) == z for every model, within +-4 km of the reference.
    #[test]
    fn model_height_pressure_round_trip(
        model in model_strategy(),
        reference in reference_strategy(),
        dz in -4_000.0f32..4_000.0,
        t_now in 230.0f32..320.0,
    ) {
        let air = AirSample::at(k(t_now));
        let z = reference.height.meters() + dz;
        let p = model.pressure_at(&reference, h(z), &air).unwrap();
        let back = model.height(&reference, p, &air).unwrap().meters();
        let limit = model_round_trip_limit_m(dz);
        prop_assert!((back - z).abs() <= limit, "{model:?}: z {z} -> p {} -> {back}", p.pa());
    }

    /// Higher pressure, lower height, for every model.
    #[test]
    fn model_monotone(
        model in model_strategy(),
        reference in reference_strategy(),
        a in 0.6f32..1.4,
        b in 0.6f32..1.4,
        t_now in 230.0f32..320.0,
    ) {
        let air = AirSample::at(k(t_now));
        let p0 = reference.pressure.pa();
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        let z_lo = model.height(&reference, pa(p0 * lo), &air).unwrap().meters();
        let z_hi = model.height(&reference, pa(p0 * hi), &air).unwrap().meters();
        prop_assert!(z_hi <= z_lo, "{model:?}: {lo} -> {z_lo}, {hi} -> {z_hi}");
        if hi > lo * 1.0001 {
            prop_assert!(z_hi < z_lo);
        }
    }

    /// A warmer column puts a pressure farther from the reference: the hypsometric
    /// thickness is proportional to the mean virtual temperature (Wallace & Hobbs 2006,
    /// eq. 3.29). Checked for StandardOffset and Isothermal (one temperature parameter).
    #[test]
    fn warmer_column_gives_more_height(
        reference in reference_strategy(),
        ratio in 0.5f32..1.5,
        cold in -40.0f32..39.0,
        warmer_by in 1.0f32..40.0,
        isothermal in any::<bool>(),
    ) {
        let warm = (cold + warmer_by).min(40.0);
        let (m_cold, m_warm) = if isothermal {
            (
                TemperatureModel::Isothermal { temperature_k: k(270.0 + cold).kelvin() },
                TemperatureModel::Isothermal { temperature_k: k(270.0 + warm).kelvin() },
            )
        } else {
            (
                TemperatureModel::standard_offset(cold).unwrap(),
                TemperatureModel::standard_offset(warm).unwrap(),
            )
        };
        let p = pa(reference.pressure.pa() * ratio);
        let z_ref = reference.height.meters();
        let d_cold = m_cold.height(&reference, p, &AirSample::DRY).unwrap().meters() - z_ref;
        let d_warm = m_warm.height(&reference, p, &AirSample::DRY).unwrap().meters() - z_ref;
        // both on the same side of the reference, the warm one at least as far out
        // (1 mm slack: f32 resolution of heights below 10 km)
        prop_assert!(d_cold * d_warm >= 0.0);
        prop_assert!(d_warm.abs() + 1.0e-3 >= d_cold.abs(), "cold {d_cold} m, warm {d_warm} m");
        if (ratio - 1.0).abs() > 0.01 {
            prop_assert!(d_warm.abs() > d_cold.abs());
        }
    }
}

// ---------------------------------------------------------------------------------
// Datums: QNH, QFE, calibration.
// ---------------------------------------------------------------------------------

proptest! {
    #![proptest_config(cases(1024))]

    /// QNH solved from a known elevation reads that elevation at the same pressure
    /// (ICAO Doc 8168 definition of QNH: the altimeter reads aerodrome elevation on the
    /// ground; from memory). Budget: two standard conversions, 2 cm.
    #[test]
    fn qnh_round_trip(p in 60_000.0f32..108_000.0, elevation in -400.0f32..4_500.0) {
        let Ok(setting) = AltimeterSetting::sea_level_from_elevation(pa(p), h(elevation)) else {
            // Some drawn pairs are not air (1078 hPa at 4.5 km): the implied sea-level
            // pressure lies below the model's bottom (-5 004 m'), a typed error.
            let implied = US_1976.geopotential_height(pa(p)).unwrap().meters() - elevation;
            prop_assert!(implied < -4_990.0, "{p} Pa at {elevation} m refused");
            return Ok(());
        };
        let read = setting.height(pa(p)).unwrap().meters();
        prop_assert!((read - elevation).abs() <= 0.02, "{p} Pa at {elevation} m reads {read} m");
        // and the setting itself reads zero
        let qnh = setting.setting_pressure().unwrap().unwrap();
        prop_assert!(setting.height(qnh).unwrap().meters().abs() <= 0.01);
    }

    /// QFE reads zero at the field, and the height of any other pressure is the
    /// difference of the two pressure altitudes' geopotential heights (same standard,
    /// shifted; ICAO definition of QFE, from memory); monotone in pressure.
    #[test]
    fn qfe_zero_and_monotone(qfe in 60_000.0f32..108_000.0, a in 0.8f32..1.05, b in 0.8f32..1.05) {
        let setting = AltimeterSetting::field_from_reading(pa(qfe));
        prop_assert!(setting.height(pa(qfe)).unwrap().meters().abs() <= 0.01);
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        let z_lo = setting.height(pa(qfe * lo)).unwrap().meters();
        let z_hi = setting.height(pa(qfe * hi)).unwrap().meters();
        prop_assert!(z_hi <= z_lo);
        // a pressure below the field setting is above the field, and vice versa
        prop_assert!((lo - 1.0) * z_lo <= 1.0e-3);
    }

    /// QNH: monotone, and a higher setting reads higher at the same pressure.
    #[test]
    fn qnh_monotone(qnh in 95_000.0f32..105_000.0, d in 1.0f32..1_000.0, p in 60_000.0f32..105_000.0) {
        let low = AltimeterSetting::SeaLevel { qnh_pa: (pa(qnh)).pa() };
        let high = AltimeterSetting::SeaLevel { qnh_pa: (pa(qnh + d)).pa() };
        prop_assert!(high.height(pa(p)).unwrap().meters() > low.height(pa(p)).unwrap().meters());
    }

    /// Calibration: the first fix is taken fully (the height at that pressure reads the
    /// known elevation); a second fix moves the height at its pressure from the
    /// prediction towards the known value, never past it (a scalar Kalman update with a
    /// gain in [0, 1]; module docs of `datum::Calibration`). The model round trip budget
    /// applies (2 cm).
    #[test]
    fn calibration_round_trip_and_blend(
        model in model_strategy(),
        p1 in 70_000.0f32..105_000.0,
        known1 in -300.0f32..3_000.0,
        p2_ratio in 0.9f32..1.1,
        known2_offset in -50.0f32..50.0,
        sigma1 in 0.1f32..20.0,
        sigma2 in 0.1f32..20.0,
        t in 250.0f32..310.0,
        drift in 0.0f32..10.0,
        hours in 0.0f32..5.0,
    ) {
        let air = AirSample::at(k(t));
        let mut cal = Calibration::new(model, drift).unwrap();
        cal.fix(pa(p1), h(known1), sigma1, &air).unwrap();
        let read = cal.height(pa(p1), &air).unwrap().meters();
        prop_assert!((read - known1).abs() <= 0.02, "{model:?}: reads {read}, known {known1}");
        cal.elapse(hours * 3600.0).unwrap();
        let p2 = pa(p1 * p2_ratio);
        let predicted = cal.height(p2, &air).unwrap().meters();
        let known2 = predicted + known2_offset;
        cal.fix(p2, h(known2), sigma2, &air).unwrap();
        let after = cal.height(p2, &air).unwrap().meters();
        let (lo, hi) = if predicted < known2 { (predicted, known2) } else { (known2, predicted) };
        prop_assert!(after >= lo - 0.02 && after <= hi + 0.02, "pred {predicted}, known {known2}, after {after}");
        prop_assert!(cal.sigma_m().unwrap().is_finite());
    }
}

// ---------------------------------------------------------------------------------
// Filters: bounded input, bounded output.
// ---------------------------------------------------------------------------------

/// Inputs `c + B u`, u in [-1, 1].
fn bounded_inputs(n: std::ops::Range<usize>) -> impl Strategy<Value = (f32, f32, Vec<f32>)> {
    (
        -10_000.0f32..10_000.0,
        0.0f32..500.0,
        prop::collection::vec(-1.0f32..=1.0, n),
    )
}

/// Relative slack for f32 rounding on values of magnitude `m`: a few ulps.
fn ulps(m: f32) -> f32 {
    4.0 * f32::EPSILON * m.abs().max(1.0)
}

/// l1 gain of the alpha-beta filter's height output, computed in f64: with `u = v dt`
/// the recursion is `x' = A x + b z`, `A = [[1-a, 1-a], [-b, 1-b]]`, `b = [a, b]`, started
/// at `x0 = [z0, 0]`, so `|h_k - c| <= (sup_k |e1 A^k e1| + sum_m |e1 A^m b|) * B` for
/// inputs within `c +- B` (the filter passes a constant exactly: DC gain 1). Returns
/// `None` if the series has not converged (poles too close to the unit circle).
fn alpha_beta_gain(alpha: f64, beta: f64) -> Option<f64> {
    let a = [[1.0 - alpha, 1.0 - alpha], [-beta, 1.0 - beta]];
    let mul = |x: [f64; 2]| {
        [
            a[0][0] * x[0] + a[0][1] * x[1],
            a[1][0] * x[0] + a[1][1] * x[1],
        ]
    };
    let (mut free, mut forced): ([f64; 2], [f64; 2]) = ([1.0, 0.0], [alpha, beta]);
    let (mut sup_free, mut sum_forced) = (1.0f64, 0.0f64);
    for _ in 0..1_000_000 {
        sum_forced += forced[0].abs();
        sup_free = sup_free.max(free[0].abs());
        free = mul(free);
        forced = mul(forced);
        if forced[0].abs() + forced[1].abs() + free[0].abs() + free[1].abs() < 1.0e-14 {
            return Some(sup_free + sum_forced);
        }
    }
    None
}

proptest! {
    #![proptest_config(cases(512))]

    /// The median of a window is one of (or the mean of two of) its values, so it lies
    /// within the range of the inputs (definition of the median).
    #[test]
    fn median_within_input_range((c, b, u) in bounded_inputs(1..200)) {
        let mut m5 = Median::<5>::new();
        let mut m4 = Median::<4>::new();
        let (mut lo, mut hi) = (f32::INFINITY, f32::NEG_INFINITY);
        for x in u.iter().map(|u| c + b * u) {
            lo = lo.min(x);
            hi = hi.max(x);
            for y in [m5.push(x).unwrap(), m4.push(x).unwrap()] {
                prop_assert!(y.is_finite() && y >= lo && y <= hi, "{y} outside [{lo}, {hi}]");
            }
        }
    }

    /// A mean of the inputs lies within their range, up to f32 rounding of the
    /// compensated sum (a few ulps of the magnitude).
    #[test]
    fn moving_average_within_input_range((c, b, u) in bounded_inputs(1..300)) {
        let mut avg = MovingAverage::<8>::new();
        let (mut lo, mut hi) = (f32::INFINITY, f32::NEG_INFINITY);
        for x in u.iter().map(|u| c + b * u) {
            lo = lo.min(x);
            hi = hi.max(x);
            let y = avg.push(x).unwrap();
            let tol = ulps(c.abs() + b);
            prop_assert!(y.is_finite() && y >= lo - tol && y <= hi + tol, "{y} outside [{lo}, {hi}]");
        }
    }

    /// The one-pole output is a convex combination of the previous output and the input
    /// (alpha in [0, 1]), so it stays within the input range, whatever the time steps.
    #[test]
    fn one_pole_within_input_range(
        (c, b, u) in bounded_inputs(1..300),
        cutoff in 0.001f32..100.0,
        steps in prop::collection::vec(1.0e-4f64..1_000.0, 300),
    ) {
        let mut lp = OnePole::new(cutoff).unwrap();
        let (mut lo, mut hi) = (f32::INFINITY, f32::NEG_INFINITY);
        let mut t = 0.0f64;
        for (x, dt) in u.iter().map(|u| c + b * u).zip(&steps) {
            t += dt;
            lo = lo.min(x);
            hi = hi.max(x);
            let y = lp.update(at(t), x).unwrap();
            let tol = ulps(c.abs() + b);
            prop_assert!(y.is_finite() && y >= lo - tol && y <= hi + tol, "{y} outside [{lo}, {hi}]");
        }
    }

    /// Alpha-beta at a fixed rate: |h - c| <= G B with G the filter's l1 gain computed
    /// above (BIBO bound of a stable linear recursion), plus f32 rounding.
    #[test]
    fn alpha_beta_bounded(
        (c, b, u) in bounded_inputs(1..400),
        alpha in 0.05f32..1.0,
        beta_frac in 0.01f32..0.5,
        rate_hz in prop::sample::select(vec![1.0f64, 10.0, 50.0]),
    ) {
        let beta = beta_frac * (4.0 - 2.0 * alpha);
        let mut ab = AlphaBeta::new(alpha, beta, 10.0).unwrap();
        let gain = alpha_beta_gain(alpha as f64, beta as f64);
        prop_assume!(gain.is_some());
        let gain = gain.unwrap() as f32;
        for (i, x) in u.iter().map(|u| c + b * u).enumerate() {
            ab.update(at(i as f64 / rate_hz), h(x)).unwrap();
            let y = ab.height().unwrap().meters();
            // rounding: relative 1e-5 of the magnitude per unit of gain (f32 recursion)
            let tol = gain * (b + 1.0e-5 * (c.abs() + b)) + ulps(c);
            prop_assert!((y - c).abs() <= tol, "alpha {alpha} beta {beta}: |{y} - {c}| > {tol} (G {gain})");
            prop_assert!(ab.vertical_speed().unwrap().mps().is_finite());
        }
    }

    /// Kalman filter (default drone settings, 50 Hz barometer, optional accelerometer
    /// within +-2 m/s^2): height and speed stay finite and the height within
    /// c +- (3 B + 1 m). The constant 3 is this test's choice, not a derived gain (the
    /// filter is time varying and gated): it asserts that the estimate does not diverge
    /// or run away from bounded measurements.
    #[test]
    fn kalman_bounded(
        (c, b, u) in bounded_inputs(1..400),
        accel in prop::collection::vec(prop::option::of(-2.0f32..2.0), 400),
    ) {
        let mut kf = VerticalKalman::new(VerticalKalmanConfig::default()).unwrap();
        let c = c.clamp(-4_000.0, 80_000.0);
        for (i, (x, a)) in u.iter().map(|u| c + b * u).zip(&accel).enumerate() {
            let t = i as f64 * 0.02;
            if let Some(a) = a {
                kf.predict(at(t - 0.01), *a).unwrap();
            }
            let outcome = kf.correct(at(t), h(x)).unwrap();
            if i == 0 {
                prop_assert_eq!(outcome, KalmanOutcome::Initialized);
            }
            let e = kf.estimate().unwrap();
            prop_assert!(e.vertical_speed.mps().is_finite() && e.height_sigma_m.is_finite());
            let dev = (e.height.meters() - c).abs();
            prop_assert!(dev <= 3.0 * b + 1.0, "|{} - {c}| > 3 * {b} + 1", e.height.meters());
        }
    }
}

// ---------------------------------------------------------------------------------
// Ascent totals.
// ---------------------------------------------------------------------------------

fn cm(m: f32) -> i64 {
    let x = (m * 100.0) as f64;
    if x >= 0.0 {
        (x + 0.5) as i64
    } else {
        (x - 0.5) as i64
    }
}

proptest! {
    #![proptest_config(cases(512))]

    /// Fed the truth itself: counted ascent <= the truth's upward variation + band, and
    /// ascent + descent <= the total variation of the centimetre-rounded input (the
    /// counted moves are differences between a subsequence of the inputs; module docs
    /// of `track::totals`).
    #[test]
    fn totals_never_exceed_total_variation(
        start in -400.0f32..5_000.0,
        steps in prop::collection::vec(-20.0f32..20.0, 1..500),
        band in 0.05f32..20.0,
    ) {
        let mut totals = AscentTotals::new(band).unwrap();
        let mut z = start;
        totals.update(h(z));
        let (mut up, mut tv, mut prev) = (0.0f64, 0i64, cm(z));
        for s in steps {
            let next = z + s;
            up += (next - z).max(0.0) as f64;
            z = next;
            totals.update(h(z));
            tv += (cm(z) - prev).abs();
            prev = cm(z);
        }
        prop_assert!(i64::from(totals.ascent_cm()) + i64::from(totals.descent_cm()) <= tv);
        prop_assert!(totals.ascent_m() as f64 <= up + band as f64 + 0.01, "ascent {} > {up} + {band}", totals.ascent_m());
    }

    /// Truth made of monotone legs each longer than twice the band, measured with noise
    /// bounded by e <= band / 4: noise alone cannot confirm a turn (2 e < band), so at
    /// most one counted up-swing per up-leg (plus the first move), each overcounting by
    /// at most 2 e: ascent <= upward variation of the truth + (legs_up + 1) 2 e.
    #[test]
    fn totals_with_bounded_noise(
        legs in prop::collection::vec((any::<bool>(), 1.0f32..10.0, 10usize..60), 1..12),
        band in 0.5f32..10.0,
        noise in prop::collection::vec(-1.0f32..=1.0, 800),
    ) {
        let e = band / 4.0;
        let mut totals = AscentTotals::new(band).unwrap();
        let mut truth = 1_000.0f32;
        let (mut up, mut legs_up) = (0.0f64, 0u32);
        let mut noise = noise.into_iter().cycle();
        totals.update(h(truth + e * noise.next().unwrap()));
        for (rising, length_in_bands, n) in legs {
            let length = (2.0 + length_in_bands) * band;
            let step = length / n as f32 * if rising { 1.0 } else { -1.0 };
            if rising { legs_up += 1; }
            for _ in 0..n {
                truth += step;
                if rising { up += step as f64; }
                totals.update(h(truth + e * noise.next().unwrap()));
            }
        }
        let bound = up + f64::from(legs_up + 1) * 2.0 * e as f64 + 0.02;
        prop_assert!(totals.ascent_m() as f64 <= bound, "ascent {} > {bound}", totals.ascent_m());
    }
}

// ---------------------------------------------------------------------------------
// The use types, with random valid settings: no NaN or infinity out of valid input;
// rejected samples and refused accelerometer samples change nothing; clock faults are
// flagged exactly where the clock steps back or jumps beyond the longest gap.
// ---------------------------------------------------------------------------------

#[derive(Debug, Clone)]
struct Step {
    dt: f64,
    /// relative pressure change
    dp: f32,
    temperature_c: Option<f32>,
    humidity_pct: Option<f32>,
    accel: Option<f32>,
    fix: Option<f32>,
    /// An accelerometer sample before this one: (its stamp as a fraction of the step,
    /// from before the last sample to beyond this one; its value, some beyond 16 g).
    between: Option<(f64, f32)>,
    /// Make this sample invalid, or its clock faulty, in one of several ways (0 = valid).
    poison: u8,
}

fn step_strategy() -> impl Strategy<Value = Step> {
    (
        prop_oneof![4 => 1.0e-3f64..2.0, 1 => 2.0f64..5_000.0],
        prop_oneof![6 => -0.002f32..0.002, 1 => -0.2f32..0.2],
        prop::option::of(-80.0f32..50.0),
        prop::option::of(0.0f32..=100.0),
        prop::option::of(-50.0f32..50.0),
        prop::option::weighted(0.05, -400.0f32..9_000.0),
        prop::option::weighted(0.2, (-0.5f64..1.5, -300.0f32..300.0)),
        prop_oneof![8 => Just(0u8), 1 => 1u8..12],
    )
        .prop_map(|(dt, dp, t, rh, a, fix, between, poison)| Step {
            dt,
            dp,
            temperature_c: t,
            humidity_pct: rh,
            accel: a,
            fix,
            between,
            poison,
        })
}

fn output_finite<S>(o: &Output<S>) -> bool {
    secs(o.time).is_finite()
        && o.altitude_m.is_finite()
        && o.raw_altitude_m.is_finite()
        && o.vertical_speed_mps.is_finite()
        && o.altitude_sigma_m.is_finite()
        && o.altitude_sigma_m >= 0.0
        && o.ascent_m.is_finite()
        && o.descent_m.is_finite()
        && o.tendency_hpa.is_none_or(f32::is_finite)
}

/// Heights within the standard atmosphere's range and the known elevations' (-10 to
/// 100 km, with room for a datum), speeds and 1-sigmas within physical limits: no
/// balloon, drone or walker moves vertically faster than sound at sea level (340 m/s;
/// common practice), and no 1-sigma exceeds the whole range.
fn output_physical<S>(o: &Output<S>) -> bool {
    let height = |h: f32| (-10_000.0..=100_000.0).contains(&h);
    height(o.altitude_m)
        && height(o.raw_altitude_m)
        && o.vertical_speed_mps.abs() <= isohypse::uses::MAX_VERTICAL_SPEED_MPS
        && o.altitude_sigma_m <= 110_000.0
}

/// What every use's settings share, as the run needs them.
struct Limits {
    min_pressure_pa: f32,
    max_pressure_pa: f32,
    max_gap_s: f32,
}

/// `Limits` of each use's settings.
macro_rules! limits_from {
    ($($settings:ty),*) => {$(
        impl From<&$settings> for Limits {
            fn from(s: &$settings) -> Self {
                Limits {
                    min_pressure_pa: s.min_pressure_pa,
                    max_pressure_pa: s.max_pressure_pa,
                    max_gap_s: s.max_gap_s,
                }
            }
        }
    )*};
}
limits_from!(DroneSettings, BalloonSettings, WalkSettings);

/// Runs `steps` through `use_` from the pressure `p0`, checking each output. A clock
/// fault is a step back or beyond `max_gap_s` after an accepted sample (not after a
/// restart of the clock); a rejected sample, and a refused accelerometer sample, must
/// leave the use equal to its clone from before.
fn run_use<U>(mut use_: U, limits: &Limits, p0: f32, steps: &[Step]) -> Result<(), TestCaseError>
where
    U: Use + Clone + PartialEq + Debug,
    U::State: Debug,
{
    let (lo, hi) = (limits.min_pressure_pa, limits.max_pressure_pa);
    // after 2^32 ms (49.7 days) of uptime, so that a wrapped 32-bit counter can fall back
    let mut t = 5.0e6f64;
    let mut p = p0.clamp(lo, hi);
    // time of the last sample taken, if the clock still knows it
    let mut last: Option<f64> = None;
    for (i, s) in steps.iter().enumerate() {
        if let Some((frac, a)) = s.between {
            let before = use_.clone();
            if use_.accelerometer(at(t + frac * s.dt), a).is_err() {
                prop_assert!(
                    use_ == before,
                    "step {i}: refused accelerometer sample changed the state"
                );
            }
        }
        let mut sample = Sample {
            time: at(t + s.dt),
            pressure_pa: (p * (1.0 + s.dp)).clamp(lo, hi),
            temperature_c: s.temperature_c,
            humidity_pct: s.humidity_pct,
            accel_up_mps2: s.accel,
            known_altitude_m: s.fix,
            // a satellite altitude near the fix, or wild where the fix is
            gnss_altitude_m: s.fix.map(|h| h * 1.01 + 30.0),
            gnss_accuracy_m: s.fix.map(|h| h.abs() * 1e-3),
        };
        match s.poison {
            1 => sample.pressure_pa = f32::NAN,
            // a glitched stamp far ahead, and a step back (a restart): clock faults,
            // taken as a new time base and flagged
            2 => sample.time = at(t + 1.0e6),
            3 => sample.time = at(t), // repeated time
            4 => sample.time = at(t - 1.0),
            5 => sample.pressure_pa = -sample.pressure_pa,
            6 => sample.pressure_pa = hi * 1.5,
            7 => sample.pressure_pa = f32::INFINITY,
            8 => sample.temperature_c = Some(f32::NAN), // optional channel: flagged only
            9 => sample.known_altitude_m = Some(f32::INFINITY),
            // a raw 1 kHz u32 counter that wrapped: the stamp falls back by 2^32 ms (to
            // the start of time at the most)
            10 => {
                sample.time = Instant::from_millis(sample.time.as_millis().saturating_sub(1 << 32))
            }
            // the clock restarted on purpose and said so: a stamp back without a fault
            11 => {
                use_.restart_clock();
                last = None;
                sample.time = at(t - 5.0);
            }
            _ => {}
        }
        // a repeated time is only wrong after a sample taken
        let repeated = last.is_some_and(|last| sample.time == at(last));
        // a pressure at an end of the range is saturated: refused, flagged so
        let at_end = sample.pressure_pa <= lo || sample.pressure_pa >= hi;
        let invalid = matches!(s.poison, 1 | 5..=7) || repeated || at_end;
        // a step back, or forward beyond the settings' longest gap, starts a new time base
        let clock_fault = last.is_some_and(|last| {
            !repeated
                && sample
                    .time
                    .checked_duration_since(at(last))
                    .is_none_or(|d| d.as_secs_f32() > limits.max_gap_s)
        });
        let before = use_.clone();
        let out = use_.process(&sample);
        if out.flags.rejected() {
            prop_assert!(
                use_ == before,
                "step {i}: rejected sample {sample:?} changed the state"
            );
            prop_assert!(out.altitude_m.is_finite() && out.vertical_speed_mps.is_finite());
            // a valid sample may only be refused by the model (a height it cannot
            // place), never by the input checks
            if !invalid {
                prop_assert!(
                    !out.flags.contains(Flags::REJECTED_TIME)
                        && !out.flags.contains(Flags::REJECTED_PRESSURE),
                    "step {i}: valid sample {sample:?} rejected: {:?}",
                    out.flags
                );
            }
        } else {
            prop_assert!(!invalid, "step {i}: invalid sample {sample:?} accepted");
            prop_assert_eq!(
                out.flags.contains(Flags::CLOCK_FAULT),
                clock_fault,
                "step {}: {:?} after {:?}",
                i,
                sample.time,
                last
            );
            prop_assert!(
                output_finite(&out),
                "step {i}: non-finite output {out:?} for {sample:?}"
            );
            prop_assert!(
                output_physical(&out),
                "step {i}: output beyond the physical limits {out:?} for {sample:?}"
            );
            t = secs(sample.time);
            last = Some(t);
            p = sample.pressure_pa;
        }
    }
    Ok(())
}

/// A value from `range`, or now and then one at the edges of `f32` (tiny, huge,
/// zero, negative): settings the validation must refuse, or that must still give
/// physical output when it passes them.
fn wide(range: std::ops::Range<f32>) -> impl Strategy<Value = f32> {
    prop_oneof![
        12 => range,
        1 => prop::sample::select(vec![
            0.0f32,
            1.0e-45,
            1.0e-30,
            1.0e-6,
            1.0e6,
            1.0e30,
            f32::MAX,
            -1.0,
        ]),
    ]
}

/// Random Kalman settings (the validate check filters the few invalid ones).
fn kalman_strategy() -> impl Strategy<Value = VerticalKalmanConfig> {
    (
        (
            wide(0.02..3.0),
            wide(0.0..0.05),
            wide(0.0..0.01),
            wide(0.1..5.0),
        ),
        (wide(0.1..40.0), wide(0.05..1.0), wide(2.0..30.0), 1u16..20),
        (
            wide(0.05..40.0),
            wide(0.02..1.0),
            wide(0.2..120.0),
            any::<bool>(),
        ),
        (wide(0.05..5.0), wide(1.0..10.0)),
    )
        .prop_map(|(a, b, c, d)| VerticalKalmanConfig {
            baro_sigma_m: a.0,
            accel_noise_density: a.1,
            bias_random_walk: a.2,
            baro_only_accel_density: a.3,
            initial_speed_sigma_mps: b.0,
            initial_bias_sigma_mps2: b.1,
            gate_nis: b.2,
            reacquire_after: b.3,
            max_step_s: c.0,
            accel_timeout_s: c.1,
            baro_timeout_s: c.2,
            gain_reuse_tolerance: if c.3 { 0.01 } else { 0.0 },
            follow_after_s: d.0,
            disturbed_sigma_scale: d.1,
            ..VerticalKalmanConfig::DEFAULT
        })
        .prop_filter("valid Kalman settings", |k| k.validate().is_ok())
}

/// Random state thresholds (rest below the climb and descent speeds, burst above the
/// descent speed).
fn states_strategy() -> impl Strategy<Value = PhaseSettings> {
    (
        (0.02f32..3.0, 0.02f32..3.0, 0.1f32..60.0, 0.05f32..1.0),
        (0.0f32..60.0, 0.0f32..10.0, 0.0f32..300.0, 0.0f32..900.0),
    )
        .prop_map(|(a, b)| PhaseSettings {
            ascent_mps: a.0,
            descent_mps: a.1,
            burst_mps: a.1 + a.2,
            rest_mps: a.3 * a.0.min(a.1),
            debounce_s: b.0,
            burst_debounce_s: b.1,
            float_debounce_s: b.2,
            landed_debounce_s: b.3,
            start_in_flight: b.3 > 450.0,
        })
        .prop_filter("valid state thresholds", |s| s.validate().is_ok())
}

fn altimeter_strategy() -> impl Strategy<Value = AltimeterSetting> {
    prop_oneof![
        Just(AltimeterSetting::Standard),
        (95_000.0f32..105_000.0).prop_map(|q| AltimeterSetting::SeaLevel {
            qnh_pa: (pa(q)).pa()
        }),
        (60_000.0f32..105_000.0).prop_map(|q| AltimeterSetting::Field {
            qfe_pa: (pa(q)).pa()
        }),
    ]
}

/// Random settings shared by the three: pressure range, noise, temperature
/// uncertainty, fix time constant, longest gap (`gap` its range).
fn common_strategy(
    gap: std::ops::Range<f32>,
) -> impl Strategy<Value = (f32, f32, f32, f32, f32, f32)> {
    (
        1_000.0f32..60_000.0,
        100_000.0f32..110_000.0,
        wide(0.0..20.0),
        wide(0.0..10.0),
        wide(0.0..120.0),
        gap,
    )
}

fn drone_settings() -> impl Strategy<Value = DroneSettings> {
    (
        kalman_strategy(),
        states_strategy(),
        altimeter_strategy(),
        (-400.0f32..4_000.0, 1u32..100, 0.05f32..30.0),
        common_strategy(0.05..30.0),
    )
        .prop_map(
            |(kalman, states, altimeter_setting, own, c)| DroneSettings {
                kalman,
                states,
                altimeter_setting,
                takeoff_altitude_m: own.0,
                ground_samples: own.1,
                totals_band_m: own.2,
                min_pressure_pa: c.0,
                max_pressure_pa: c.1,
                pressure_noise_pa: c.2,
                temperature_uncertainty_k: c.3,
                fix_time_constant_s: c.4,
                max_gap_s: c.5,
            },
        )
        .prop_filter("valid drone settings", |s| s.validate().is_ok())
}

fn balloon_model_strategy() -> impl Strategy<Value = BalloonModel> {
    prop_oneof![
        any::<bool>().prop_map(|descent_on_profile| BalloonModel::Sounding { descent_on_profile }),
        Just(BalloonModel::Standard),
        model_strategy().prop_map(BalloonModel::Column),
    ]
}

fn balloon_settings() -> impl Strategy<Value = BalloonSettings> {
    (
        balloon_model_strategy(),
        kalman_strategy(),
        states_strategy(),
        (
            prop::option::of(-300.0f32..4_000.0),
            prop::option::of(-90.0f32..=90.0),
            1u32..30,
            0.05f32..60.0,
        ),
        common_strategy(0.5..3_000.0),
    )
        .prop_map(|(model, kalman, states, own, c)| BalloonSettings {
            model,
            kalman,
            states,
            launch_altitude_m: own.0,
            latitude_deg: own.1,
            ground_samples: own.2,
            totals_band_m: own.3,
            // the balloon's range may reach the top of the standard atmosphere
            min_pressure_pa: c.0 / 1_000.0,
            max_pressure_pa: c.1,
            pressure_noise_pa: c.2,
            temperature_uncertainty_k: c.3,
            fix_time_constant_s: c.4,
            max_gap_s: c.5,
            gnss: isohypse::uses::GnssSettings::DEFAULT,
        })
        .prop_filter("valid balloon settings", |s| s.validate().is_ok())
}

fn walk_settings() -> impl Strategy<Value = WalkSettings> {
    (
        (0.0f32..10.0, 0.5f32..10.0, 0.0f32..120.0),
        states_strategy(),
        altimeter_strategy(),
        (
            prop::option::of(-300.0f32..4_000.0),
            1.0f32..100.0,
            0.0f32..120.0,
        ),
        common_strategy(0.5..30_000.0),
    )
        .prop_map(
            |(tracker, states, altimeter_setting, own, c)| WalkSettings {
                tracker: HikeConfig {
                    smoothing_time_constant_s: tracker.0,
                    hysteresis_band_m: tracker.1,
                    fix_time_constant_s: tracker.2,
                    ..HikeConfig::DEFAULT
                },
                states,
                altimeter_setting,
                start_altitude_m: own.0,
                spike_gate_m: own.1,
                speed_time_constant_s: own.2,
                min_pressure_pa: c.0,
                max_pressure_pa: c.1,
                pressure_noise_pa: c.2,
                temperature_uncertainty_k: c.3,
                fix_time_constant_s: c.4,
                max_gap_s: c.5,
            },
        )
        .prop_filter("valid walk settings", |s| s.validate().is_ok())
}

proptest! {
    #![proptest_config(cases(192))]

    #[test]
    fn drone_finite_and_rejections_inert(p0 in 70_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..300)) {
        let s = DroneSettings::DEFAULT;
        run_use(Drone::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }

    #[test]
    fn walk_finite_and_rejections_inert(p0 in 50_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..300)) {
        let s = WalkSettings::DEFAULT;
        run_use(Walk::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }

    #[test]
    fn balloon_finite_and_rejections_inert(p0 in 60_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..300), lat in prop::option::of(-90.0f32..=90.0), start in prop::option::of(-300.0f32..4_000.0)) {
        let s = BalloonSettings { latitude_deg: lat, launch_altitude_m: start, ..BalloonSettings::DEFAULT };
        run_use(Balloon::<16>::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }
}

proptest! {
    #![proptest_config(cases(128))]

    /// Random valid drone settings: `Drone::new` takes every settings value its
    /// `validate` passes, and the properties above hold with them.
    #[test]
    fn drone_random_settings(s in drone_settings(), p0 in 70_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..200)) {
        run_use(Drone::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }

    #[test]
    fn walk_random_settings(s in walk_settings(), p0 in 50_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..200)) {
        run_use(Walk::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }

    #[test]
    fn balloon_random_settings(s in balloon_settings(), p0 in 60_000.0f32..105_000.0, steps in prop::collection::vec(step_strategy(), 1..200)) {
        run_use(Balloon::<16>::new(&s).unwrap(), &Limits::from(&s), p0, &steps)?;
    }
}
