//! Real radiosonde soundings through the crate's layer-by-layer integration
//! (`isohypse::sounding::Sounding`), checked against
//! (a) a float64 integration of the same levels done here (goal: within 1 m to 30 km), and
//! (b) the geopotential heights the weather services reported at the standard levels.
//!
//! Data: `tests/reference/soundings/*.csv`, written by `tests/reference/gen_soundings.py`
//! from two PyPI source archives: SkewT 1.1.0 (`skewt/examples/*.txt`, University of
//! Wyoming upper-air listings) and siphon 0.11.0 (`tests/fixtures/*`, recorded responses
//! of the University of Wyoming archive, the Iowa Environmental Mesonet RAOB archive and
//! NOAA NCEI's IGRA2). Each file's header names the package, version, path inside the
//! archive, station, time and original provider; each check's message repeats them.
//!
//! How archive records are treated (general rules, the same for every file; the table
//! lists what each rule removed):
//! * A level without temperature (wind-only levels, standard levels below the ground
//!   extrapolated by the archive) is skipped: the integration runs over levels with a
//!   temperature only.
//! * The integration starts at the lowest level with a temperature and a reported height
//!   (the surface in these archives); a lower level with a temperature but no height is
//!   rejected ("cannot start there").
//! * A level whose pressure is not below the last accepted level's (a duplicate or
//!   out-of-order record) is rejected; the first of the two is kept.
//! * A temperature outside 100..400 K (the crate's air range) is rejected.
//! * A layer whose temperature falls faster than the autoconvective lapse rate
//!   `g0 / Rd` = 34.2 K/km rejects its upper level: beyond that rate air would be denser
//!   above than below (density `p / (Rd T)` with `dp/dz = -rho g0` is constant in height
//!   when `dT/dz = -g0 / Rd`), which no measured atmosphere keeps. Superadiabatic layers
//!   below that rate are real near a heated ground and are kept (counted in the table):
//!   the hypsometric equation holds for any temperature profile.
//! * Humidity: the relative humidity given, else the one from the dew point over water,
//!   `RH = es(Td) / es(T)` (WMO-No. 8 Vol. I ch. 4, from memory). 100..110 % (sensors in
//!   cloud) is taken as 100 % (the rule of the replay tool's file contract); beyond
//!   110 %, or no humidity at all, the level is taken as dry air (counted).
//! * A reported height that is not above the reported height of the level beneath is
//!   ignored for (b) (the level itself is kept).
//! * If the first standard level above the start disagrees with the integration by more
//!   than the margin of (b), the start record (surface pressure or height) is taken as
//!   inconsistent: it is rejected and the integration starts again, once, at that
//!   standard level (the hydrostatic consistency check of a layer, common practice in
//!   radiosonde quality control).
//!
//! `cargo test --test real_soundings -- --nocapture` prints the table.

mod common;

use std::fmt::Write as _;
use std::path::PathBuf;

use common::US76;
use isohypse::geopotential::Gravity;
use isohypse::sounding::Sounding;
use isohypse::{Error, Height, Pressure, RelativeHumidity, Temperature};

/// `Rd / g0` in f64, m/K: U.S. 1976 section 1.2 (R* = 8314.32 J/(kmol K),
/// M0 = 28.9644 kg/kmol, g0 = 9.806 65 m/s^2; `tests/common`), the constants the crate uses.
const R_OVER_G: f64 = US76.r / US76.g0;
/// `eps = Rd / Rv` (Wallace & Hobbs 2006 eq. 3.14), as in `isohypse::humidity`.
const EPSILON: f64 = 0.622;
/// Autoconvective lapse rate `g0 / Rd`, K/m (derived in the module documentation).
const AUTOCONVECTIVE_K_PER_M: f64 = 1.0 / R_OVER_G;
/// Dry adiabatic lapse rate `g0 / cp`, K/m (cp = 1004 J/(kg K); Wallace & Hobbs 2006
/// eq. 3.53, from memory): steeper layers are counted as superadiabatic.
const DRY_ADIABATIC_K_PER_M: f64 = US76.g0 / 1004.0;
const ZERO_CELSIUS_K: f64 = 273.15;

/// Goal (a): crate (f32) vs float64 integration of the same levels, to 30 km
/// (project design goal "sounding integration vs a float64 integration").
const GOAL_A_M: f64 = 1.0;
const GOAL_A_TOP_M: f64 = 30_000.0;

/// Standard isobaric surfaces of the TEMP code, hPa (WMO-No. 306 Manual on Codes,
/// FM 35 TEMP; list from memory).
const STANDARD_LEVELS_HPA: [f64; 21] = [
    1000.0, 925.0, 850.0, 700.0, 500.0, 400.0, 300.0, 250.0, 200.0, 150.0, 100.0, 70.0, 50.0, 30.0,
    20.0, 10.0, 7.0, 5.0, 3.0, 2.0, 1.0,
];
/// Margin of (b), part 1, the reported rounding: TEMP gives standard-level heights in
/// whole metres at 1000 to 700 hPa and in decametres from 500 hPa up, the station
/// elevation in whole metres and the surface pressure in whole hPa (WMO-No. 306 FM 35,
/// from memory). The surface pressure's 0.5 hPa moves every height above by
/// `Rd Tv0 / g0 * 0.5 / p0`, about 4 m.
const LOW_LEVEL_ROUNDING_M: f64 = 0.5;
const HIGH_LEVEL_ROUNDING_M: f64 = 5.0;
const START_HEIGHT_ROUNDING_M: f64 = 0.5;
const START_PRESSURE_ROUNDING_HPA: f64 = 0.5;
/// Margin of (b), part 2: a column-mean virtual temperature allowance, K. The services
/// integrate the full-resolution ascent; the archives keep the significant levels only,
/// chosen so that linear interpolation between them stays within 1 K of the measured
/// temperature in the lower troposphere and 2 K above (WMO-No. 306 FM 35, from memory).
/// Those deviations change sign along the profile; this test allows a column mean of a
/// quarter of the lower tolerance (a choice of this test), i.e. `Rd / g0 * 0.25 K *
/// ln(p_start / p)`: 10 m at 250 hPa and 34 m at 10 hPa from 1000 hPa.
const COLUMN_ALLOWANCE_K: f64 = 0.25;

/// One level of a reference file; `None` where the source has no value.
#[derive(Debug, Clone, Copy, Default)]
struct RawLevel {
    p_hpa: f64,
    height_m: Option<f64>,
    t_c: Option<f64>,
    td_c: Option<f64>,
    rh_pct: Option<f64>,
}

/// A reference file: its name, the header lines naming station, source and provider.
struct Record {
    name: String,
    station: String,
    source: String,
    provider: String,
    levels: Vec<RawLevel>,
}

/// One accepted level, as it goes into both integrations.
#[derive(Debug, Clone, Copy)]
struct Input {
    p_hpa: f64,
    t_k: f64,
    rh_pct: Option<f64>,
    reported_m: Option<f64>,
}

/// The accepted levels of a record, and what the rules removed.
#[derive(Debug, Default)]
struct Prepared {
    inputs: Vec<Input>,
    rejected: Vec<(f64, String)>,
    no_temperature: usize,
    humidity_dry: usize,
    humidity_clamped: usize,
    superadiabatic: usize,
}

fn soundings_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/reference/soundings")
}

fn load_all() -> Vec<Record> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(soundings_dir())
        .expect("tests/reference/soundings (run tests/reference/gen_soundings.py)")
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "csv"))
        .collect();
    paths.sort();
    paths.iter().map(|p| load(p)).collect()
}

fn load(path: &std::path::Path) -> Record {
    let text = std::fs::read_to_string(path).expect("reference file");
    let comment = |key: &str| {
        text.lines()
            .find_map(|l| l.strip_prefix("# ")?.strip_prefix(key))
            .map(str::to_string)
            .unwrap_or_else(|| panic!("{}: no '# {key}' line", path.display()))
    };
    let mut rows = text
        .lines()
        .filter(|l| !l.starts_with('#') && !l.is_empty());
    let header: Vec<&str> = rows.next().expect("header row").split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).expect(name);
    let cols = [
        col("pressure_hpa"),
        col("height_m"),
        col("temperature_c"),
        col("dewpoint_c"),
        col("rh_pct"),
    ];
    let levels = rows
        .map(|row| {
            let cells: Vec<&str> = row.split(',').collect();
            let v = |i: usize| -> Option<f64> {
                let c = cells[cols[i]].trim();
                (!c.is_empty()).then(|| c.parse().expect("number"))
            };
            RawLevel {
                p_hpa: v(0).expect("every level has a pressure"),
                height_m: v(1),
                t_c: v(2),
                td_c: v(3),
                rh_pct: v(4),
            }
        })
        .collect();
    Record {
        name: path.file_stem().unwrap().to_string_lossy().into_owned(),
        station: comment("station "),
        source: comment("source: "),
        provider: comment("original provider: "),
        levels,
    }
}

/// Saturation vapour pressure over water, Pa, in f64: Alduchov & Eskridge (1996) AERK,
/// the form `isohypse::humidity` uses (`t` in degC).
fn es64(t_c: f64) -> f64 {
    610.94 * (17.625 * t_c / (t_c + 243.04)).exp()
}

/// Virtual temperature in f64: `Tv = T (1 + w / eps) / (1 + w)`, `w = eps e / (p - e)`,
/// `e = RH es(T)` (Wallace & Hobbs 2006 eq. 3.16 and 3.59).
fn virtual_k64(p_hpa: f64, t_k: f64, rh_pct: Option<f64>) -> f64 {
    match rh_pct {
        None => t_k,
        Some(rh) => {
            let e = rh / 100.0 * es64(t_k - ZERO_CELSIUS_K);
            let w = EPSILON * e / (p_hpa * 100.0 - e);
            t_k * (1.0 + w / EPSILON) / (1.0 + w)
        }
    }
}

/// Hypsometric layer thickness in f64, m': `Rd / g0 * (Tv1 + Tv2) / 2 * ln(p1 / p2)`
/// (Wallace & Hobbs 2006 eq. 3.29, the layer mean of Tv taken as the mean of its ends, as
/// the crate does).
fn layer64(lower: &Input, upper: &Input) -> f64 {
    let tv1 = virtual_k64(lower.p_hpa, lower.t_k, lower.rh_pct);
    let tv2 = virtual_k64(upper.p_hpa, upper.t_k, upper.rh_pct);
    R_OVER_G * 0.5 * (tv1 + tv2) * (lower.p_hpa / upper.p_hpa).ln()
}

/// What the humidity rule did with a level.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Humidity {
    AsGiven,
    Clamped,
    Dry,
}

/// Relative humidity for a level (see the module rules), and what was done to it.
fn humidity(level: &RawLevel, t_c: f64) -> (Option<f64>, Humidity) {
    let rh = level
        .rh_pct
        .or_else(|| level.td_c.map(|td| 100.0 * es64(td) / es64(t_c)));
    match rh {
        Some(rh) if (0.0..=100.0).contains(&rh) => (Some(rh), Humidity::AsGiven),
        Some(rh) if rh > 100.0 && rh <= 110.0 => (Some(100.0), Humidity::Clamped),
        _ => (None, Humidity::Dry),
    }
}

/// Applies the record rules of the module documentation to the levels, bottom up.
fn prepare(levels: &[RawLevel]) -> Prepared {
    let mut out = Prepared::default();
    for level in levels {
        let Some(t_c) = level.t_c else {
            out.no_temperature += 1;
            continue;
        };
        let t_k = t_c + ZERO_CELSIUS_K;
        if !(100.0..=400.0).contains(&t_k) {
            out.rejected.push((
                level.p_hpa,
                format!("temperature {t_c} degC outside 100..400 K"),
            ));
            continue;
        }
        let mut input = Input {
            p_hpa: level.p_hpa,
            t_k,
            rh_pct: None,
            reported_m: level.height_m,
        };
        if let Some(reason) = reject_against_last(&out, &input) {
            out.rejected.push((level.p_hpa, reason));
            continue;
        }
        let (rh_pct, humidity_rule) = humidity(level, t_c);
        input.rh_pct = rh_pct;
        if let Some(last) = out.inputs.last() {
            let lapse = (last.t_k - input.t_k) / layer64(last, &input);
            if lapse > AUTOCONVECTIVE_K_PER_M {
                let reason = format!("lapse {:.1} K/km beyond autoconvective", lapse * 1e3);
                out.rejected.push((level.p_hpa, reason));
                continue;
            }
            out.superadiabatic += usize::from(lapse > DRY_ADIABATIC_K_PER_M);
            input.reported_m = reported_above(&input, &mut out);
        }
        out.humidity_clamped += usize::from(humidity_rule == Humidity::Clamped);
        out.humidity_dry += usize::from(humidity_rule == Humidity::Dry);
        out.inputs.push(input);
    }
    out
}

/// The reason a level cannot follow the accepted ones, if any.
fn reject_against_last(out: &Prepared, input: &Input) -> Option<String> {
    match out.inputs.last() {
        None if input.reported_m.is_none() => {
            Some("no reported height: cannot start the integration there".into())
        }
        Some(last) if input.p_hpa >= last.p_hpa => Some(format!(
            "pressure not below the level beneath ({} hPa): duplicate or out of order",
            last.p_hpa
        )),
        _ => None,
    }
}

/// The level's reported height if it lies above the last reported height beneath it.
fn reported_above(input: &Input, out: &mut Prepared) -> Option<f64> {
    let below = out.inputs.iter().rev().find_map(|x| x.reported_m);
    let h = input.reported_m?;
    match below {
        Some(b) if h <= b => {
            out.rejected.push((
                input.p_hpa,
                format!("reported height {h} m not above {b} m: ignored"),
            ));
            None
        }
        _ => Some(h),
    }
}

/// Float64 integration of the accepted levels from the start's reported height, m'.
fn integrate64(inputs: &[Input]) -> Vec<f64> {
    let mut h = inputs[0].reported_m.expect("the start has a height");
    let mut out = vec![h];
    for pair in inputs.windows(2) {
        h += layer64(&pair[0], &pair[1]);
        out.push(h);
    }
    out
}

fn crate_rh(rh_pct: Option<f64>) -> Result<Option<RelativeHumidity>, Error> {
    rh_pct
        .map(|rh| RelativeHumidity::from_percent(rh as f32))
        .transpose()
}

/// The crate's integration of the same levels (f32): `Sounding::new` at the start, then
/// `Sounding::update` per level; geopotential heights, m'. Standard gravity: the
/// reported heights are geopotential, so the launch is given as the geometric height of
/// the start's geopotential height and the steps are read as geopotential.
fn integrate_crate(inputs: &[Input]) -> Result<Vec<f64>, Error> {
    let pressure = |x: &Input| Pressure::from_pa((x.p_hpa * 100.0) as f32);
    let temperature = |x: &Input| Temperature::from_kelvin(x.t_k as f32);
    let start = &inputs[0];
    let gravity = Gravity::Standard;
    let h0 = Height::from_meters(start.reported_m.expect("the start has a height") as f32)?;
    let mut sounding = Sounding::<64>::new(
        gravity.geometric(h0)?,
        gravity,
        pressure(start)?,
        temperature(start)?,
        crate_rh(start.rh_pct)?,
    )?;
    let mut out = vec![f64::from(sounding.geopotential().meters())];
    for x in &inputs[1..] {
        let step = sounding.update(pressure(x)?, Some(temperature(x)?), crate_rh(x.rh_pct)?)?;
        out.push(f64::from(step.geopotential.meters()));
    }
    Ok(out)
}

/// Margin of (b) at pressure `p_hpa` for an integration from `start` (module constants):
/// the reported values' rounding and the column allowance.
fn margin_m(start: &Input, p_hpa: f64) -> f64 {
    let column = R_OVER_G * COLUMN_ALLOWANCE_K * (start.p_hpa / p_hpa).ln();
    rounding_m(start, p_hpa) + column
}

/// What the reported values' rounding alone can put between a reported height at
/// `p_hpa` and an exact integration from `start`, m: the level's rounding, the start
/// height's and the start pressure's (`Rd Tv0 / g0 * 0.5 hPa / p0`).
fn rounding_m(start: &Input, p_hpa: f64) -> f64 {
    let level_rounding = if p_hpa > 500.0 {
        LOW_LEVEL_ROUNDING_M
    } else {
        HIGH_LEVEL_ROUNDING_M
    };
    let tv0 = virtual_k64(start.p_hpa, start.t_k, start.rh_pct);
    let start_pressure = R_OVER_G * tv0 * START_PRESSURE_ROUNDING_HPA / start.p_hpa;
    START_HEIGHT_ROUNDING_M + level_rounding + start_pressure
}

/// One comparison of (b): pressure, reported height, integrated height, margin.
#[derive(Debug, Clone, Copy)]
struct Comparison {
    p_hpa: f64,
    reported_m: f64,
    integrated_m: f64,
    margin_m: f64,
}

impl Comparison {
    fn difference(&self) -> f64 {
        self.integrated_m - self.reported_m
    }
    fn passes(&self) -> bool {
        self.difference().abs() <= self.margin_m
    }
}

/// (b) at every accepted standard level above the start that has a reported height.
fn standard_level_comparisons(inputs: &[Input], heights: &[f64]) -> Vec<Comparison> {
    let start = &inputs[0];
    inputs
        .iter()
        .zip(heights)
        .skip(1)
        .filter(|(x, _)| STANDARD_LEVELS_HPA.contains(&x.p_hpa))
        .filter_map(|(x, h)| {
            Some(Comparison {
                p_hpa: x.p_hpa,
                reported_m: x.reported_m?,
                integrated_m: *h,
                margin_m: margin_m(start, x.p_hpa),
            })
        })
        .collect()
}

/// Everything measured on one record.
struct Analysis {
    record: Record,
    prepared: Prepared,
    heights64: Vec<f64>,
    heights32: Vec<f64>,
    comparisons: Vec<Comparison>,
}

fn analyze(record: Record) -> Analysis {
    let context = format!("{} ({}; {})", record.name, record.source, record.provider);
    let mut prepared = prepare(&record.levels);
    assert!(
        prepared.inputs.len() >= 2,
        "{context}: fewer than 2 usable levels"
    );
    let mut heights32 = integrate_crate(&prepared.inputs)
        .unwrap_or_else(|e| panic!("{context}: the crate's integration failed: {e:?}"));
    let mut comparisons = standard_level_comparisons(&prepared.inputs, &heights32);
    // The start record's consistency check (module documentation, last rule).
    if let Some(first) = comparisons.first().copied().filter(|c| !c.passes()) {
        let start = prepared.inputs[0];
        let reason = format!(
            "start {} hPa / {} m inconsistent with {} hPa ({:+.1} m, margin {:.1} m): restart there",
            start.p_hpa,
            start.reported_m.unwrap_or(f64::NAN),
            first.p_hpa,
            first.difference(),
            first.margin_m
        );
        prepared.rejected.push((start.p_hpa, reason));
        let at = prepared
            .inputs
            .iter()
            .position(|x| x.p_hpa == first.p_hpa)
            .expect("level");
        prepared.inputs.drain(..at);
        heights32 = integrate_crate(&prepared.inputs)
            .unwrap_or_else(|e| panic!("{context}: the crate's integration failed: {e:?}"));
        comparisons = standard_level_comparisons(&prepared.inputs, &heights32);
    }
    let heights64 = integrate64(&prepared.inputs);
    Analysis {
        record,
        prepared,
        heights64,
        heights32,
        comparisons,
    }
}

impl Analysis {
    fn context(&self) -> String {
        let r = &self.record;
        format!(
            "{}: {} ({}; original provider: {})",
            r.name, r.station, r.source, r.provider
        )
    }

    /// Worst |crate - f64| (m) at levels up to `GOAL_A_TOP_M`, and above it (f64 heights).
    fn worst_a(&self) -> (f64, f64) {
        let mut below = 0.0f64;
        let mut above = 0.0f64;
        for (h64, h32) in self.heights64.iter().zip(&self.heights32) {
            let d = (h32 - h64).abs();
            if *h64 <= GOAL_A_TOP_M {
                below = below.max(d);
            } else {
                above = above.max(d);
            }
        }
        (below, above)
    }

    /// The comparison of (b) using the largest part of its margin.
    fn worst_b(&self) -> Option<Comparison> {
        self.comparisons.iter().copied().max_by(|a, b| {
            (a.difference().abs() / a.margin_m).total_cmp(&(b.difference().abs() / b.margin_m))
        })
    }
}

fn analyses() -> Vec<Analysis> {
    load_all().into_iter().map(analyze).collect()
}

fn table(all: &[Analysis]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "| sounding | levels used / in file | skipped: no T / rejected / humidity dry, clamped | superadiabatic layers | start hPa, m' | top hPa, m' | (a) worst abs(crate - f64) to 30 km / above, m | (b) levels | (b) worst crate - reported, m (hPa) | margin there, m |"
    );
    let _ = writeln!(
        s,
        "| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |"
    );
    for a in all {
        let p = &a.prepared;
        let (start, top) = (p.inputs[0], p.inputs[p.inputs.len() - 1]);
        let (wa, wa_above) = a.worst_a();
        let (wb, wb_margin) = match a.worst_b() {
            Some(c) => (
                format!("{:+.1} ({})", c.difference(), c.p_hpa),
                format!("{:.1}", c.margin_m),
            ),
            None => ("-".into(), "-".into()),
        };
        let _ = writeln!(
            s,
            "| {} | {} / {} | {} / {} / {}, {} | {} | {}, {:.0} | {}, {:.0} | {:.4} / {:.4} | {} | {} | {} |",
            a.record.name,
            p.inputs.len(),
            a.record.levels.len(),
            p.no_temperature,
            p.rejected.len(),
            p.humidity_dry,
            p.humidity_clamped,
            p.superadiabatic,
            start.p_hpa,
            a.heights64[0],
            top.p_hpa,
            a.heights64[a.heights64.len() - 1],
            wa,
            wa_above,
            a.comparisons.len(),
            wb,
            wb_margin
        );
    }
    for a in all {
        for (p, reason) in &a.prepared.rejected {
            let _ = writeln!(s, "rejected: {} at {p} hPa: {reason}", a.record.name);
        }
    }
    for a in all {
        let _ = writeln!(s, "source: {}", a.context());
    }
    s
}

#[test]
fn reference_soundings_are_there_and_reach_high() {
    let all = analyses();
    let high = all
        .iter()
        .filter(|a| a.heights64.last().is_some_and(|h| *h >= 30_000.0))
        .count();
    let levels: usize = all.iter().map(|a| a.prepared.inputs.len()).sum();
    println!(
        "{} soundings, {levels} levels integrated, {high} reaching 30 km",
        all.len()
    );
    // The task for this data set: 5-20 soundings, several reaching 30 km.
    assert!((5..=20).contains(&all.len()), "{} soundings", all.len());
    assert!(high >= 3, "only {high} soundings reach 30 km");
}

/// (a) Crate (f32) vs float64 integration of the same accepted levels, goal 1 m to 30 km.
#[test]
fn crate_integration_matches_a_float64_integration_within_1_m_to_30_km() {
    let all = analyses();
    let mut failures = Vec::new();
    println!("(a) worst abs(crate f32 - f64) per sounding, to 30 km (above 30 km):");
    for a in &all {
        let (below, above) = a.worst_a();
        println!("  {:42} {below:.4} m ({above:.4} m)", a.record.name);
        if below > GOAL_A_M {
            failures.push(format!("{}: {below:.3} m > {GOAL_A_M} m", a.context()));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// (b) Crate integration vs the heights the weather service reported at the standard
/// levels, within the reported rounding plus the stated margin (module constants).
#[test]
fn integration_matches_reported_standard_level_heights() {
    let all = analyses();
    println!("{}", table(&all));
    let mut failures = Vec::new();
    for a in &all {
        if a.comparisons.len() < 3 {
            failures.push(format!(
                "{}: only {} standard levels",
                a.context(),
                a.comparisons.len()
            ));
        }
        for c in a.comparisons.iter().filter(|c| !c.passes()) {
            failures.push(format!(
                "{}: at {} hPa integrated {:.1} m', reported {} m', difference {:+.1} m > margin {:.1} m",
                a.context(),
                c.p_hpa,
                c.integrated_m,
                c.reported_m,
                c.difference(),
                c.margin_m
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The record rules of the module documentation, on made-up levels (not data).
#[test]
fn record_rules_reject_what_they_say() {
    let level = |p_hpa, height_m, t_c, rh_pct| RawLevel {
        p_hpa,
        height_m,
        t_c,
        td_c: None,
        rh_pct,
    };
    let levels = [
        level(1010.0, None, Some(20.0), None), // no height: cannot start
        level(1005.0, Some(40.0), Some(20.0), Some(50.0)), // start
        level(1000.0, Some(80.0), None, None), // no temperature: skipped
        level(1000.0, Some(83.0), Some(19.8), Some(105.0)), // clamped to 100 %
        level(1000.0, Some(84.0), Some(19.8), None), // duplicate pressure
        level(990.0, Some(170.0), Some(19.2), Some(120.0)), // humidity dropped
        level(985.0, Some(160.0), Some(18.9), None), // height not above: ignored
        level(980.0, Some(250.0), Some(14.0), None), // 4.9 K in ~43 m: autoconvective
        level(975.0, Some(295.0), Some(17.0), None), // 1.9 K in ~86 m: superadiabatic
    ];
    let p = prepare(&levels);
    let used: Vec<f64> = p.inputs.iter().map(|x| x.p_hpa).collect();
    assert_eq!(used, [1005.0, 1000.0, 990.0, 985.0, 975.0]);
    let rejected: Vec<f64> = p.rejected.iter().map(|r| r.0).collect();
    assert_eq!(rejected, [1010.0, 1000.0, 985.0, 980.0], "{:?}", p.rejected);
    assert_eq!(p.no_temperature, 1);
    assert_eq!((p.humidity_clamped, p.humidity_dry), (1, 3));
    assert_eq!(p.inputs[1].rh_pct, Some(100.0));
    assert_eq!(p.inputs[3].reported_m, None);
    assert_eq!(p.superadiabatic, 1);
}

#[test]
fn the_balloons_one_sigma_covers_the_reported_heights() {
    // Goal (design notes): |error| <= 2 sigma in at least 90 % of samples and <= 3
    // sigma in at least 99 %. Each sounding's accepted levels are fed to a `Balloon`
    // (pressure, air temperature, humidity), launched at the start's reported height,
    // climbing at 5 m/s between the levels (the times from the float64 integration's
    // heights; a common ascent rate of radiosondes, common practice); its height is
    // compared with the reported height of every level that has one (geopotential
    // metres at standard gravity, read as geometric with the same gravity as the
    // balloon). The reported values are rounded (module constants: the level's height,
    // the start's height and pressure); what that rounding can put between the report
    // and the truth is the reference's, taken off the error before the comparison
    // (`rounding_m`, the margin of (b) without its column allowance).
    use isohypse::time::Instant;
    use isohypse::uses::{Balloon, BalloonSettings, Sample};
    let mut lines = String::new();
    let (mut n, mut in2, mut in3, mut raw3) = (0usize, 0usize, 0usize, 0usize);
    for a in analyses() {
        let inputs = &a.prepared.inputs;
        let gravity = Gravity::Standard;
        let geometric = |h: f64| {
            let h = Height::from_meters(h as f32).expect("height");
            f64::from(gravity.geometric(h).expect("geometric").meters())
        };
        let launch = geometric(inputs[0].reported_m.expect("the start has a height"));
        let settings = BalloonSettings {
            launch_altitude_m: Some(launch as f32),
            ..BalloonSettings::DEFAULT
        };
        let mut balloon = Balloon::<256>::new(&settings).expect("settings");
        let (mut k2, mut k3, mut count) = (0usize, 0usize, 0usize);
        for (input, h64) in inputs.iter().zip(&a.heights64) {
            let t_s = (h64 - a.heights64[0]) / 5.0;
            let mut sample = Sample::pressure(
                Instant::from_micros((t_s * 1e6).round() as u64),
                (input.p_hpa * 100.0) as f32,
            );
            sample.temperature_c = Some((input.t_k - ZERO_CELSIUS_K) as f32);
            sample.humidity_pct = input.rh_pct.map(|rh| rh as f32);
            let out = balloon.process(&sample);
            let Some(reported) = input.reported_m else {
                continue;
            };
            if out.flags.rejected() {
                continue;
            }
            let raw_err = (f64::from(out.altitude_m) - geometric(reported)).abs();
            let err = (raw_err - rounding_m(&inputs[0], input.p_hpa)).max(0.0);
            let sigma = f64::from(out.altitude_sigma_m);
            raw3 += usize::from(raw_err <= 3.0 * sigma);
            count += 1;
            k2 += usize::from(err <= 2.0 * sigma);
            k3 += usize::from(err <= 3.0 * sigma);
        }
        let _ = writeln!(
            lines,
            "{:40} {count:4} levels: within 2 sigma {:5.1} %, within 3 sigma {:5.1} %",
            a.record.name,
            100.0 * k2 as f64 / count.max(1) as f64,
            100.0 * k3 as f64 / count.max(1) as f64
        );
        n += count;
        in2 += k2;
        in3 += k3;
    }
    let (share2, share3) = (in2 as f64 / n as f64, in3 as f64 / n as f64);
    println!(
        "{lines}all {n} levels with a reported height: within 2 sigma {:.1} %, within 3 sigma {:.1} % \
         (with the reports' rounding left in the error: {:.1} % within 3 sigma)",
        share2 * 100.0,
        share3 * 100.0,
        100.0 * raw3 as f64 / n as f64
    );
    assert!(n > 200, "{n} levels");
    assert!(
        share2 >= 0.90 && share3 >= 0.99,
        "{share2} {share3}\n{lines}"
    );
}
