//! Benchmark-style integration test of the walking-device tracker on synthetic days.
//!
//! Invented demo data: routes, rests and weather are generated here from fixed seeds
//! (xorshift64, Marsaglia 2003, "Xorshift RNGs", J. Stat. Softw. 8(14); normal deviates
//! by the Box-Muller transform, Box and Muller 1958, Ann. Math. Stat. 29(2)).
//! True height -> pressure with the U.S. Standard Atmosphere 1976 (`US_1976.pressure_at`),
//! then a smooth weather change (a front, tanh-shaped, 3 hPa over the day) and 2 Pa of
//! Gaussian sensor noise are added; samples at 1 Hz.
//!
//! Goals (design notes, "day hike with 3 hPa weather drift"): total ascent within 2 % of
//! truth; during any rest of 20 min or more the totals grow by at most 1 m.
//! Not timed; figures are printed (`cargo test --test hike_day -- --nocapture`).
//!
//! Table columns: true and tracked ascent and descent (m), ascent error (%), the naive sum
//! of positive changes of the raw pressure altitude (m), the largest growth of
//! ascent + descent during one rest (m), the displayed height error at the end of the day
//! (m), and for comparison the ascent error and end error with the weather held at rest
//! but not extrapolated while walking.

mod common;
#[allow(unused_imports)]
use common::{at, secs};
use isohypse::atmosphere::US_1976;
use isohypse::track::{HikeConfig, HikeTracker};
use isohypse::{Height, Pressure};

struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    /// Uniform in (0, 1].
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 1.0) / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }
    /// Standard normal deviate (Box-Muller, one of the pair).
    fn normal(&mut self) -> f64 {
        let u1 = self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

/// One piece of a route.
#[derive(Clone, Copy)]
enum Leg {
    /// Walk changing height by `dz` metres (0 for a flat walk) at a rate drawn per piece.
    Walk { dz: f64 },
    /// Flat walk of the given minutes.
    Flat { minutes: f64 },
    /// Rest of 20-45 minutes (drawn).
    Rest,
}

#[derive(Clone, Copy, Debug)]
enum Shape {
    SingleSummit,
    TwoSummits,
    RollingRidge,
    ValleyFirst,
}

impl Shape {
    fn start_m(self) -> f64 {
        match self {
            Shape::SingleSummit => 600.0,
            Shape::TwoSummits => 800.0,
            Shape::RollingRidge => 1000.0,
            Shape::ValleyFirst => 2000.0,
        }
    }
    fn legs(self, rng: &mut Rng) -> Vec<Leg> {
        use Leg::*;
        match self {
            Shape::SingleSummit => vec![
                Flat { minutes: 10.0 },
                Walk { dz: 500.0 },
                Rest,
                Walk { dz: 350.0 },
                Flat { minutes: 8.0 },
                Walk { dz: 400.0 },
                Rest,
                Walk { dz: -700.0 },
                Rest,
                Walk { dz: -550.0 },
                Flat { minutes: 10.0 },
            ],
            Shape::TwoSummits => vec![
                Walk { dz: 900.0 },
                Rest,
                Walk { dz: -400.0 },
                Flat { minutes: 15.0 },
                Rest,
                Walk { dz: 600.0 },
                Rest,
                Walk { dz: -1100.0 },
            ],
            Shape::RollingRidge => {
                let mut legs = vec![Walk { dz: 520.0 }, Rest];
                for i in 0..14 {
                    let a = rng.range(20.0, 80.0);
                    legs.push(Walk { dz: -a });
                    legs.push(Walk {
                        dz: a + rng.range(-10.0, 10.0),
                    });
                    if i == 6 {
                        legs.push(Rest);
                    }
                }
                legs.push(Rest);
                legs.push(Walk { dz: -520.0 });
                legs
            }
            Shape::ValleyFirst => vec![
                Walk { dz: -900.0 },
                Rest,
                Flat { minutes: 20.0 },
                Walk { dz: 600.0 },
                Rest,
                Walk { dz: 500.0 },
                Rest,
                Walk { dz: -250.0 },
            ],
        }
    }
}

struct Day {
    /// True geometric height at each second, m.
    truth: Vec<f64>,
    /// Rests as (first second, last second).
    rests: Vec<(usize, usize)>,
    /// Weather change at each second, Pa.
    weather: Vec<f64>,
}

/// Time course of the weather change over the day.
#[derive(Clone, Copy, Debug)]
enum Front {
    /// tanh step centred at mid-day, time scale 1.5 h.
    Midday,
    /// tanh step centred at one third of the day, time scale 1 h.
    Early,
    /// Steady change from start to end.
    Linear,
}

/// Builds a day: legs at realistic hiking rates (climb 4-9 m/min, descent 6-12 m/min,
/// each climb split in 2-5 pieces of different rate), rests of 20-45 min, then a weather
/// change of `front_pa` over the day with the time course `front`.
fn make_day(shape: Shape, seed: u64, front_pa: f64, front: Front) -> Day {
    let mut rng = Rng(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1);
    let legs = shape.legs(&mut rng);
    let mut truth = Vec::new();
    let mut rests = Vec::new();
    let mut z = shape.start_m();
    truth.push(z);
    // 5 minutes standing at the trailhead first.
    for _ in 0..300 {
        truth.push(z);
    }
    for leg in legs {
        match leg {
            Leg::Rest => {
                let seconds = (rng.range(20.0, 45.0) * 60.0) as usize;
                let first = truth.len();
                for _ in 0..seconds {
                    truth.push(z);
                }
                rests.push((first - 1, truth.len() - 1));
            }
            Leg::Flat { minutes } => {
                for _ in 0..(minutes * 60.0) as usize {
                    truth.push(z);
                }
            }
            Leg::Walk { dz } => {
                let pieces = if dz.abs() > 150.0 {
                    2 + (rng.next_u64() % 4) as usize
                } else {
                    1
                };
                for _ in 0..pieces {
                    let piece = dz / pieces as f64;
                    let rate_m_per_min = if piece > 0.0 {
                        rng.range(4.0, 9.0)
                    } else {
                        rng.range(6.0, 12.0)
                    };
                    let seconds = ((piece.abs() / rate_m_per_min) * 60.0).round().max(1.0) as usize;
                    let step = piece / seconds as f64;
                    for _ in 0..seconds {
                        z += step;
                        truth.push(z);
                    }
                }
            }
        }
    }
    // 5 minutes standing at the end.
    for _ in 0..300 {
        truth.push(z);
    }
    let n = truth.len() as f64;
    let weather = (0..truth.len())
        .map(|i| {
            let t = i as f64;
            let fraction = match front {
                Front::Midday => 0.5 * (1.0 + ((t - n / 2.0) / 5400.0).tanh()),
                Front::Early => 0.5 * (1.0 + ((t - n / 3.0) / 3600.0).tanh()),
                Front::Linear => t / n,
            };
            front_pa * fraction
        })
        .collect();
    Day {
        truth,
        rests,
        weather,
    }
}

fn positive_and_negative_variation(h: &[f64]) -> (f64, f64) {
    let mut up = 0.0;
    let mut down = 0.0;
    for w in h.windows(2) {
        let d = w[1] - w[0];
        if d > 0.0 {
            up += d;
        } else {
            down -= d;
        }
    }
    (up, down)
}

struct Outcome {
    true_ascent: f64,
    true_descent: f64,
    ascent: f64,
    descent: f64,
    naive_ascent: f64,
    worst_rest_growth: f64,
    rests: usize,
    hours: f64,
    final_height_error: f64,
}

fn pressure_of(day: &Day, i: usize, noise_pa: f64, rng: &mut Rng) -> Pressure {
    let z = Height::from_meters(day.truth[i] as f32).unwrap();
    let p = US_1976.pressure_at(z).unwrap().pa() as f64;
    Pressure::from_pa((p + day.weather[i] + noise_pa * rng.normal()) as f32).unwrap()
}

/// Runs the tracker over a day; `fixes` are (second, known true height) calls.
fn run(day: &Day, seed: u64, fixes: &[usize]) -> Outcome {
    run_with(day, seed, fixes, HikeConfig::default())
}

fn run_with(day: &Day, seed: u64, fixes: &[usize], config: HikeConfig) -> Outcome {
    let mut tracker = HikeTracker::new(config).unwrap();
    let mut rng = Rng(seed ^ 0xD1B5_4A32_D192_ED03);
    let mut totals_at = Vec::with_capacity(day.truth.len());
    let mut naive_ascent = 0.0;
    let mut previous_raw: Option<f64> = None;
    let mut last_height = 0.0;
    for i in 0..day.truth.len() {
        let p = pressure_of(day, i, 2.0, &mut rng);
        let raw = US_1976.pressure_altitude(p).unwrap().meters() as f64;
        if let Some(prev) = previous_raw {
            naive_ascent += (raw - prev).max(0.0);
        }
        previous_raw = Some(raw);
        let report = tracker.update(at(i as f64), p).unwrap();
        if fixes.contains(&i) {
            tracker
                .fix_elevation(Height::from_meters(day.truth[i] as f32).unwrap())
                .unwrap();
        }
        totals_at.push(report.ascent_m as f64 + report.descent_m as f64);
        last_height = report.height.meters() as f64;
    }
    let (true_ascent, true_descent) = positive_and_negative_variation(&day.truth);
    let worst_rest_growth = day
        .rests
        .iter()
        .map(|&(a, b)| totals_at[b] - totals_at[a])
        .fold(0.0, f64::max);
    Outcome {
        true_ascent,
        true_descent,
        ascent: tracker.totals().ascent_m() as f64,
        descent: tracker.totals().descent_m() as f64,
        naive_ascent,
        worst_rest_growth,
        rests: day.rests.len(),
        hours: day.truth.len() as f64 / 3600.0,
        final_height_error: last_height - day.truth[day.truth.len() - 1],
    }
}

const SHAPES: [Shape; 4] = [
    Shape::SingleSummit,
    Shape::TwoSummits,
    Shape::RollingRidge,
    Shape::ValleyFirst,
];
/// Seeds, weather change over the day (Pa) and its time course: four falling fronts and
/// one rising. (The defaults of the tracker were chosen looking at the first four cases;
/// seed 55 and the early and linear fronts of seeds 22 and 33 were added afterwards as a
/// check on other data.)
const CASES: [(u64, f64, Front); 5] = [
    (11, -300.0, Front::Midday),
    (22, -300.0, Front::Linear),
    (33, -300.0, Front::Early),
    (44, 300.0, Front::Midday),
    (55, -300.0, Front::Midday),
];

#[test]
fn hike_day_goals() {
    println!(
        "{:<13} {:>4} {:>6} {:>7} {:>5} {:>8} {:>8} {:>6} {:>8} {:>8} {:>9} {:>8} {:>7} {:>7} {:>7}",
        "route",
        "seed",
        "hPa",
        "front",
        "hours",
        "true up",
        "tracked",
        "err %",
        "true dn",
        "tracked",
        "naive up",
        "rest max",
        "end err",
        "held %",
        "held end"
    );
    let mut failures = Vec::new();
    let mut worst_error_pct: f64 = 0.0;
    let mut worst_rest: f64 = 0.0;
    for shape in SHAPES {
        for (seed, front, course) in CASES {
            let day = make_day(shape, seed, front, course);
            assert!(day.rests.len() >= 2);
            let o = run(&day, seed, &[]);
            // Comparison only (not a goal): weather held at rest but not extrapolated
            // while walking (the learnt rate fades within seconds).
            let mut held_only = HikeConfig::default();
            held_only.rest.weather_rate_memory_s = 1.0;
            let h = run_with(&day, seed, &[], held_only);
            let held_err_pct = 100.0 * (h.ascent - h.true_ascent) / h.true_ascent;
            assert!(o.true_ascent >= 1000.0, "route must have 1000+ m ascent");
            let err_pct = 100.0 * (o.ascent - o.true_ascent) / o.true_ascent;
            println!(
                "{:<13} {:>4} {:>+6.1} {:>7} {:>5.1} {:>8.1} {:>8.1} {:>+6.2} {:>8.1} {:>8.1} {:>9.1} {:>8.2} {:>+7.2} {:>+7.2} {:>+7.2}",
                format!("{shape:?}"),
                seed,
                front / 100.0,
                format!("{course:?}"),
                o.hours,
                o.true_ascent,
                o.ascent,
                err_pct,
                o.true_descent,
                o.descent,
                o.naive_ascent,
                o.worst_rest_growth,
                o.final_height_error,
                held_err_pct,
                h.final_height_error
            );
            worst_error_pct = worst_error_pct.max(err_pct.abs());
            worst_rest = worst_rest.max(o.worst_rest_growth);
            // Goal (design notes): total ascent within 2 % of truth.
            if err_pct.abs() > 2.0 {
                failures.push(format!("{shape:?}/{seed}: ascent error {err_pct:.2} %"));
            }
            // Goal (design notes): totals grow <= 1 m during any rest of 20 min or more.
            if o.worst_rest_growth > 1.0 {
                failures.push(format!(
                    "{shape:?}/{seed}: totals grew {:.2} m in a rest",
                    o.worst_rest_growth
                ));
            }
            assert!(o.rests >= 2);
        }
    }
    println!(
        "worst |ascent error| {worst_error_pct:.2} %, worst growth in a rest {worst_rest:.2} m"
    );
    assert!(failures.is_empty(), "goals missed: {failures:#?}");
}

/// Without weather, the totals never exceed the truth's variation plus the band
/// (3 m default), on every route and seed.
#[test]
fn calm_day_totals_bounded_by_truth_plus_band() {
    let band = HikeConfig::default().hysteresis_band_m as f64;
    for shape in SHAPES {
        for (seed, _, _) in CASES {
            let day = make_day(shape, seed, 0.0, Front::Midday);
            let o = run(&day, seed, &[]);
            println!(
                "{shape:?}/{seed}: up {:.2} of {:.2}, down {:.2} of {:.2}",
                o.ascent, o.true_ascent, o.descent, o.true_descent
            );
            assert!(o.ascent <= o.true_ascent + band, "{shape:?}/{seed}");
            assert!(o.descent <= o.true_descent + band, "{shape:?}/{seed}");
        }
    }
}

/// Known-elevation fixes re-anchor the displayed height but leave the totals exactly as
/// in the same run without fixes.
#[test]
fn fixes_reanchor_height_without_touching_totals() {
    for shape in SHAPES {
        let seed = 11;
        let day = make_day(shape, seed, -300.0, Front::Midday);
        // A fix in the middle of every rest, and one at the very end.
        let mut fixes: Vec<usize> = day.rests.iter().map(|&(a, b)| (a + b) / 2).collect();
        let last = day.truth.len() - 200;
        fixes.push(last);
        let plain = run(&day, seed, &[]);
        let fixed = run(&day, seed, &fixes);
        println!(
            "{shape:?}: final height error without fixes {:+.2} m, with fixes {:+.2} m",
            plain.final_height_error, fixed.final_height_error
        );
        assert_eq!(plain.ascent, fixed.ascent);
        assert_eq!(plain.descent, fixed.descent);
        // 199 s after the last fix (about 6.6 time constants of 30 s): within 0.3 m of
        // truth, noise and smoothing included.
        assert!(
            fixed.final_height_error.abs() < 0.3,
            "{}",
            fixed.final_height_error
        );
    }
}

/// A night on a table: 10 h at rest with a 6 hPa fall over 4 h in the middle. The totals
/// stay at zero, the height stays put, and the falling-pressure alert is raised.
#[test]
fn night_at_rest_attributes_weather_and_raises_alert() {
    let mut tracker = HikeTracker::new(HikeConfig::default()).unwrap();
    let mut rng = Rng(99);
    let z = Height::from_meters(1500.0).unwrap();
    let base = US_1976.pressure_at(z).unwrap().pa() as f64;
    let mut max_tendency: f64 = 0.0;
    let mut alert_seen = false;
    let mut first_height = None;
    let mut worst_height_change: f64 = 0.0;
    for i in 0..36_000 {
        let t = i as f64;
        // -600 Pa over the night, fastest 1.5 hPa/h.
        let front = -300.0 * (1.0 + ((t - 18_000.0) / 7200.0).tanh());
        let p = Pressure::from_pa((base + front + 2.0 * rng.normal()) as f32).unwrap();
        let r = tracker.update(at(t), p).unwrap();
        if i == 200 {
            first_height = Some(r.height.meters() as f64);
        }
        if let Some(h0) = first_height {
            worst_height_change = worst_height_change.max((r.height.meters() as f64 - h0).abs());
        }
        if let Some(td) = r.tendency_hpa {
            max_tendency = max_tendency.min(td as f64);
        }
        alert_seen |= r.falling_pressure_alert;
        assert_eq!(r.ascent_m + r.descent_m, 0.0, "totals grew at {t} s");
    }
    println!(
        "night: strongest 3-h fall {max_tendency:.2} hPa, height change {worst_height_change:.3} m, weather drift {:.1} m",
        tracker.weather_drift_m()
    );
    // Truth: the strongest 3-hour fall of the station pressure, 300 (1 + tanh(t / 2 h)),
    // is 600 tanh(0.75) = 381 Pa, centred on the front. Reduced to sea level through the
    // standard atmosphere at the held height (1500 m), station changes scale by
    // p0 / p_std(1500 m). The 10-minute slots may miss the centre by up to 5 minutes,
    // which changes the 3-hour difference by far less than 0.01 hPa.
    let expected_hpa = -600.0 * 0.75f64.tanh() * 101_325.0 / base / 100.0;
    println!("night: expected strongest fall {expected_hpa:.3} hPa");
    assert!(
        (max_tendency - expected_hpa).abs() < 0.05,
        "{max_tendency} vs {expected_hpa}"
    );
    assert!(alert_seen);
    assert!(worst_height_change < 0.5, "{worst_height_change}");
}

/// The limit of rest detection, measured: after a 30-minute rest, a steady climb of
/// 100 m at various slow rates (no weather, 2 Pa noise). Printed; the assertion checks
/// the documented bound: climbs of twice the largest weather rate (2 x 20 m/h) or more
/// are counted within 3 m. Slower ones are partly or wholly taken for weather.
#[test]
fn slow_climbs_after_a_rest() {
    println!("{:>10} {:>10} {:>10}", "rate m/h", "counted m", "of m");
    for rate in [10.0f64, 20.0, 25.0, 30.0, 40.0, 60.0, 90.0, 120.0, 300.0] {
        let mut tracker = HikeTracker::new(HikeConfig::default()).unwrap();
        let mut rng = Rng(5);
        let climb_s = (100.0 / rate * 3600.0) as usize;
        let mut last = None;
        for i in 0..(1800 + climb_s + 600) {
            let z = 1000.0 + (i.saturating_sub(1800).min(climb_s) as f64) * rate / 3600.0;
            let p = US_1976
                .pressure_at(Height::from_meters(z as f32).unwrap())
                .unwrap()
                .pa() as f64;
            let p = Pressure::from_pa((p + 2.0 * rng.normal()) as f32).unwrap();
            last = Some(tracker.update(at(i as f64), p).unwrap());
        }
        let r = last.unwrap();
        println!("{rate:>10.0} {:>10.1} {:>10.1}", r.ascent_m, 100.0);
        if rate >= 40.0 {
            assert!(
                (r.ascent_m as f64 - 100.0).abs() < 3.0,
                "{rate}: {}",
                r.ascent_m
            );
        }
    }
}

/// The other side of the same limit: a device left still (rest detected, not declared) at
/// 1000 m for 3 hours while the pressure falls steadily at various rates. Printed; the
/// assertion checks the documented bound: falls up to the largest weather rate (20 m/h of
/// apparent height; 2 hPa/h is 18.3 m/h at 1000 m, with 9.17 m/hPa from the U.S. 1976
/// density 1.112 kg/m^3 there, from memory) add at most 1 m to the totals.
#[test]
fn steady_pressure_falls_at_rest() {
    println!("{:>10} {:>12} {:>12}", "hPa/h", "totals m", "drift m");
    for rate_hpa_per_h in [0.5f64, 1.0, 1.5, 2.0, 2.5, 3.0, 4.0] {
        let mut tracker = HikeTracker::new(HikeConfig::default()).unwrap();
        let mut rng = Rng(8);
        let base = US_1976
            .pressure_at(Height::from_meters(1000.0).unwrap())
            .unwrap()
            .pa() as f64;
        let mut last = None;
        for i in 0..10_800 {
            let p = base - rate_hpa_per_h * 100.0 * i as f64 / 3600.0 + 2.0 * rng.normal();
            last = Some(
                tracker
                    .update(at(i as f64), Pressure::from_pa(p as f32).unwrap())
                    .unwrap(),
            );
        }
        let r = last.unwrap();
        let totals = r.ascent_m + r.descent_m;
        println!(
            "{rate_hpa_per_h:>10.1} {totals:>12.2} {:>12.2}",
            tracker.weather_drift_m()
        );
        if rate_hpa_per_h <= 2.0 {
            assert!(totals <= 1.0, "{rate_hpa_per_h} hPa/h: totals {totals}");
        }
    }
}
