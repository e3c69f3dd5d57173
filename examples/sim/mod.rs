//! Demo-data simulator: three invented recordings with their truth.
//!
//! Host-side (std) scenario generator shared by `examples/simulate.rs`, the replay tool
//! and the integration tests. Everything here is invented demo data: the sites, the
//! weather and the flights are made up; no real place, person or product is meant.
//! Random numbers come from xorshift64* (Marsaglia 2003, "Xorshift RNGs", Journal of
//! Statistical Software 8(14); the `*` output multiplier from Vigna 2016) turned into
//! normal deviates with the Box-Muller transform (Box & Muller 1958, Annals of
//! Mathematical Statistics 29), each scenario with its own fixed seed, so every run
//! gives byte-identical files. The truth is computed in f64 here, independently of the
//! library's f32 code.
//!
//! # balloon: "Harrowmere Field", 64.2 N, 310 m
//!
//! *Atmosphere* (warm, humid, strongly non-standard). Temperature piecewise linear in
//! geometric height `z`: 26 degC (299.15 K) at the ground (310 m), 296.75 K at 600 m,
//! a low inversion to 299.65 K at 900 m, 7 K/km to a cold tropopause of 208.65 K at
//! 13 900 m, isothermal to 20 000 m, warming 1.8 K/km above (236.55 K at 35 500 m).
//! Relative humidity (over water) piecewise linear: 75 % at the ground, 72 % at 600 m,
//! 50 % at 900 m, 55 % at 3 km, 30 % at 8 km, 6 % at 13.9 km, 3 % at 20 km, 2 % at
//! 35.5 km. Ground pressure 990.00 hPa. Pressure is integrated in f64 with classical
//! Runge-Kutta on 1 m steps: `dp/dz = -p g(lat, z) / (Rd Tv)`, `Rd = 287.053 07 J/(kg K)`
//! (U.S. Standard Atmosphere 1976, R* / M0), WGS-84 normal gravity on the ellipsoid
//! (Somigliana, NIMA TR8350.2 3rd ed. eq. 4-1) with its second-order decrease with height
//! (eq. 4-3), `Tv = T (1 + w / eps) / (1 + w)`, `w = eps e / (p - e)`, `e = RH es(T)`,
//! `eps = 0.622` (Wallace & Hobbs 2006, eq. 3.16 and 3.59), `es` over water from the
//! Magnus form of Alduchov & Eskridge (1996): `es = 610.94 Pa exp(17.625 t / (t + 243.04))`,
//! `t` in degC.
//!
//! *Flight.* 120 s on the ground; ascent at `5.0 + 0.25 sin(2 pi t / 900 s) +
//! 0.15 sin(2 pi t / 137 s)` m/s (plus 0.2 m/s per 10 km of height, the slow speed-up
//! of a rising balloon) to a burst at 33 000 m; descent under a parachute at
//! `v = -5.5 m/s sqrt(rho_sl / rho(z))`, `rho_sl = 1.225 kg/m^3` (U.S. 1976 sea-level
//! density), `rho = p / (Rd Tv)`; landing back at 310 m; 120 s on the ground. Motion and
//! sensors are integrated on 0.05 s sub-steps; samples every 2 s.
//!
//! *Sensors.* Pressure: Gaussian noise 1.5 Pa, written to 0.01 Pa, and three one-sample
//! spikes (+300 Pa, -300 Pa, +300 Pa) at t = 700 s, 3 000 s and 8 000 s. Temperature:
//! first-order lag `dTs/dt = (T - Ts) / tau` with `tau = 6 s sqrt(rho_ground / rho)`
//! (6 s at the ground, about 60 s at 33 km: the sensor exchanges heat more slowly as the
//! air thins), plus 0.1 K Gaussian noise, written to 0.01 degC; a 60 s gap with no
//! temperature (empty cells) from t = 2 400 s to 2 458 s during the ascent. Humidity: true
//! relative humidity plus 2 %-points Gaussian noise, clipped to 0..100 %, written to
//! 0.1 %. No accelerometer, no elevation fixes. Truth: every 10 s (every 5th row) and the last row.
//!
//! # drone: "Brackenlow Yard", 47.5 N, 180 m
//!
//! *Atmosphere.* U.S. Standard Atmosphere 1976 troposphere (computed here in f64) with the
//! whole column scaled by 1 016.0 / 1 013.25 (sea-level pressure 1 016.0 hPa; scaling
//! keeps it hydrostatic). Temperature channel 15 degC +- 0.05 K noise.
//!
//! *Motion.* 5 s at rest on the ground (the ground reference), climb 10 m in 4 s with a
//! cosine-shaped vertical speed `v = (H / T) (1 - cos(2 pi tau / T))` (peak 5 m/s), hover
//! 6 s, descend 10 m in 5 s the same way, land at t = 20 s, rest 3 s (23 s in all).
//!
//! *Sensors.* Accelerometer (earth-frame vertical, gravity removed) at 200 Hz: truth plus
//! a constant 0.1 m/s^2 bias plus 0.05 m/s^2 Gaussian noise, written to 0.001 m/s^2; one
//! row per accelerometer sample. Barometer at 50 Hz (every 4th row): 1.5 Pa Gaussian
//! noise, and on 1 % of the samples (drawn) a +-30 Pa spike; rows without a barometer
//! sample leave `pressure_pa` and `temperature_c` empty. Truth: every barometer row
//! (50 Hz).
//!
//! # hike: ridge walk from "Caddenholt Gap", 46.8 N, 652 m
//!
//! *Motion.* 5 min standing at the start (652 m); up to 1 190 m (85 min); a 25 min rest;
//! down 50 m and up to the summit marker at 1 705 m (12 + 95 min); a 40 min lunch rest at
//! the top; down to 1 290 m (75 min); a 30 min rest; up 40 m (10 min) and down to the end
//! at 700 m (100 min); 3 min standing. 8 h in all. Within each walking leg the pace varies
//! smoothly, `z = z0 + dz (u + 0.3 sin(2 pi k u) / (2 pi k))`, so height changes
//! monotonically along a leg (truth ascent 1 143 m, descent 1 095 m).
//!
//! *Atmosphere.* U.S. Standard Atmosphere 1976 troposphere (computed here in f64) with the
//! whole column scaled by `p_sl(t) / 101 325 Pa` (scaling keeps it hydrostatic), where
//! the sea-level pressure falls smoothly through the day as a front arrives:
//! `p_sl(t) = 1 016.0 hPa - 1.625 hPa (1 + tanh((t - 4.5 h) / 1.2 h))`, a 3.24 hPa fall
//! over the 8 h at sea level and 3.0 hPa at the start site (652 m). The temperature
//! channel (not used for the pressure) is `14 degC + 5 K sin(pi t / 9 h)
//! - 6.5 K/km (z - 652 m)` plus 0.1 K noise.
//!
//! *Sensors.* Pressure with 2 Pa Gaussian noise, written to 0.01 Pa; samples every 5 s.
//! Known-elevation fixes (`known_altitude_m` = true height) on the row at the summit
//! marker (arrival at the top) and on the last row. No humidity, no accelerometer.
//! Truth: every 30 s (every 6th row).

// Constants keep the digits of their sources; not every program uses every item.
#![allow(clippy::excessive_precision, dead_code)]

use std::fmt::Write as _;
use std::io::Write as _;
use std::path::Path;

/// One input row of the file contract (`None` = empty cell, not measured).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Row {
    /// Time since the start of the recording, s.
    pub time_s: f64,
    /// Static pressure, Pa.
    pub pressure_pa: Option<f64>,
    /// Air temperature as the sensor reads it, degC.
    pub temperature_c: Option<f64>,
    /// Relative humidity over water, %.
    pub humidity_pct: Option<f64>,
    /// Earth-frame vertical acceleration with gravity removed, m/s^2 (up positive).
    pub accel_up_mps2: Option<f64>,
    /// Known elevation fix (geometric height), m.
    pub known_altitude_m: Option<f64>,
}

/// The true state at one time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Truth {
    /// Time, s (the same clock as the rows).
    pub time_s: f64,
    /// True geometric height, m.
    pub altitude_m: f64,
    /// True vertical speed, m/s (up positive).
    pub vertical_speed_mps: f64,
}

/// Figures of the true motion, computed on the fine simulation steps.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TruthSummary {
    /// Highest true height, m.
    pub top_altitude_m: f64,
    /// First time the highest height is reached, s.
    pub top_time_s: f64,
    /// Sum of all true height gains, m.
    pub total_ascent_m: f64,
    /// Sum of all true height losses (positive), m.
    pub total_descent_m: f64,
    /// Balloon burst time, s.
    pub burst_time_s: Option<f64>,
    /// Touchdown time at the end of the motion, s.
    pub landing_time_s: Option<f64>,
}

/// One invented recording with its truth.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Short name (`balloon`, `drone`, `hike`): also the file stem.
    pub name: &'static str,
    /// Several lines describing the invented site, atmosphere, motion and sensors.
    pub description: &'static str,
    /// Geodetic latitude of the site, degrees.
    pub latitude_deg: f64,
    /// True geometric height of the first row, m.
    pub start_altitude_m: f64,
    /// The input rows.
    pub rows: Vec<Row>,
    /// The truth (decimated; the description says how).
    pub truth: Vec<Truth>,
    /// Figures of the true motion.
    pub summary: TruthSummary,
}

// ------------------------------------------------------------------ random numbers

/// xorshift64* (Marsaglia 2003; multiplier from Vigna 2016) with Box-Muller normals.
struct Rng(u64);

impl Rng {
    fn new(seed: u64) -> Self {
        Rng(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1)
    }
    fn next_u64(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in (0, 1).
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    /// Standard normal deviate (Box-Muller, cosine branch).
    fn gauss(&mut self) -> f64 {
        let u1 = self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

// ------------------------------------------------------------------ physics (f64)

/// Rd = R* / M0 = 8 314.32 / 28.964 4 J/(kg K) (U.S. Standard Atmosphere 1976, sec. 1.2).
const RD: f64 = 287.053_07;
/// eps = Rd / Rv (Wallace & Hobbs 2006, eq. 3.14).
const EPS: f64 = 0.622;
/// Standard gravity, m/s^2 (U.S. 1976).
const G0: f64 = 9.806_65;
/// U.S. 1976 effective Earth radius for geopotential height, m (sec. 1.2.2).
const R0_US1976: f64 = 6_356_766.0;
/// U.S. 1976 sea-level density, kg/m^3 (Table I of the standard, from memory).
const SEA_LEVEL_DENSITY: f64 = 1.225;

// WGS-84 (NIMA TR8350.2, 3rd ed., 2000); digits of the tables from memory.
/// Equatorial normal gravity gamma_e, m/s^2 (table 3.4).
const GAMMA_E: f64 = 9.780_325_335_9;
/// Normal gravity constant k (table 3.4).
const K_NORMAL: f64 = 0.001_931_852_652_41;
/// First eccentricity squared (table 3.3).
const E2: f64 = 0.006_694_379_990_14;
/// Semi-major axis, m (table 3.1).
const A_M: f64 = 6_378_137.0;
/// Flattening 1 / 298.257 223 563 (table 3.1).
const FLATTENING: f64 = 1.0 / 298.257_223_563;
/// m = omega^2 a^2 b / GM (table 3.4).
const M_RATIO: f64 = 0.003_449_786_506_84;

/// WGS-84 normal gravity (m/s^2) at geodetic latitude `lat_deg` and height `z` (m) above
/// the ellipsoid: TR8350.2 eq. 4-1 (Somigliana)
/// `gamma = gamma_e (1 + k sin^2 phi) / sqrt(1 - e^2 sin^2 phi)` and eq. 4-3
/// `g(z) = gamma (1 - 2/a (1 + f + m - 2 f sin^2 phi) z + 3 z^2 / a^2)`.
pub fn gravity(lat_deg: f64, z: f64) -> f64 {
    let s2 = lat_deg.to_radians().sin().powi(2);
    let gamma = GAMMA_E * (1.0 + K_NORMAL * s2) / (1.0 - E2 * s2).sqrt();
    gamma
        * (1.0 - 2.0 / A_M * (1.0 + FLATTENING + M_RATIO - 2.0 * FLATTENING * s2) * z
            + 3.0 * z * z / (A_M * A_M))
}

/// Virtual temperature (K) from T (K), RH (% over water) and p (Pa):
/// `Tv = T (1 + w / eps) / (1 + w)`, `w = eps e / (p - e)`, `e = RH es(T)`
/// (Wallace & Hobbs 2006, eq. 3.16 and 3.59), `es = 610.94 exp(17.625 t / (t + 243.04))`
/// Pa, `t` in degC (Alduchov & Eskridge 1996, AERK).
pub fn virtual_temperature(t_k: f64, rh_pct: f64, p_pa: f64) -> f64 {
    let c = t_k - 273.15;
    let es = 610.94 * (17.625 * c / (c + 243.04)).exp();
    let e = rh_pct / 100.0 * es;
    let w = EPS * e / (p_pa - e);
    t_k * (1.0 + w / EPS) / (1.0 + w)
}

/// U.S. Standard Atmosphere 1976 pressure (Pa) at geometric height `z` (m), troposphere
/// only (below 11 km geopotential): `H = r0 z / (r0 + z)` (eq. 18),
/// `p = 101 325 (1 - 0.0065 H / 288.15)^(g0 / (Rd 0.0065))` (eq. 33a).
pub fn standard_troposphere_pressure(z: f64) -> f64 {
    let h = R0_US1976 * z / (R0_US1976 + z);
    let lapse = 0.0065;
    101_325.0 * (1.0 - lapse * h / 288.15).powf(G0 / (RD * lapse))
}

/// Linear interpolation in a table of `(x, y)` nodes, clamped at both ends.
fn piecewise(nodes: &[(f64, f64)], x: f64) -> f64 {
    let (first, last) = (nodes[0], nodes[nodes.len() - 1]);
    if x <= first.0 {
        return first.1;
    }
    for pair in nodes.windows(2) {
        let ((x0, y0), (x1, y1)) = (pair[0], pair[1]);
        if x <= x1 {
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0);
        }
    }
    last.1
}

/// Cosine velocity profile: height gained after `tau` of a move of `dz` over `dur`,
/// `v = (dz / dur) (1 - cos(2 pi tau / dur))`. Returns (height change, speed, accel).
fn cosine_move(dz: f64, dur: f64, tau: f64) -> (f64, f64, f64) {
    let tau = tau.clamp(0.0, dur);
    let w = 2.0 * std::f64::consts::PI / dur;
    let rate = dz / dur;
    (
        rate * (tau - (w * tau).sin() / w),
        rate * (1.0 - (w * tau).cos()),
        rate * w * (w * tau).sin(),
    )
}

/// Sums of the positive and negative increments of a height series.
fn climb_totals(z: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut up, mut down) = (0.0, 0.0);
    let mut prev: Option<f64> = None;
    for zi in z {
        if let Some(p) = prev {
            let d = zi - p;
            if d > 0.0 {
                up += d;
            } else {
                down -= d;
            }
        }
        prev = Some(zi);
    }
    (up, down)
}

// ------------------------------------------------------------------ balloon

const BALLOON_LAT_DEG: f64 = 64.2;
const BALLOON_GROUND_M: f64 = 310.0;
const BALLOON_GROUND_PA: f64 = 99_000.0;
const BALLOON_BURST_M: f64 = 33_000.0;
const BALLOON_TOP_TABLE_M: f64 = 35_500.0;

/// Temperature nodes (geometric height m, K).
const BALLOON_T: [(f64, f64); 6] = [
    (310.0, 299.15),
    (600.0, 296.75),
    (900.0, 299.65),
    (13_900.0, 208.65),
    (20_000.0, 208.65),
    (35_500.0, 236.55),
];

/// Relative-humidity nodes (geometric height m, %).
const BALLOON_RH: [(f64, f64); 8] = [
    (310.0, 75.0),
    (600.0, 72.0),
    (900.0, 50.0),
    (3_000.0, 55.0),
    (8_000.0, 30.0),
    (13_900.0, 6.0),
    (20_000.0, 3.0),
    (35_500.0, 2.0),
];

/// The balloon column: ln p on every whole metre from the ground up.
struct Column {
    ln_p: Vec<f64>,
}

impl Column {
    fn build() -> Self {
        let slope = |z: f64, y: f64| -> f64 {
            let t = piecewise(&BALLOON_T, z);
            let rh = piecewise(&BALLOON_RH, z);
            -gravity(BALLOON_LAT_DEG, z) / (RD * virtual_temperature(t, rh, y.exp()))
        };
        let steps = (BALLOON_TOP_TABLE_M - BALLOON_GROUND_M) as usize;
        let mut ln_p = Vec::with_capacity(steps + 1);
        let mut y = BALLOON_GROUND_PA.ln();
        ln_p.push(y);
        for i in 0..steps {
            // Every node sits on a whole metre, so each step sees one smooth piece.
            let z = BALLOON_GROUND_M + i as f64;
            let k1 = slope(z, y);
            let k2 = slope(z + 0.5, y + 0.5 * k1);
            let k3 = slope(z + 0.5, y + 0.5 * k2);
            let k4 = slope(z + 1.0, y + k3);
            y += (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0;
            ln_p.push(y);
        }
        Column { ln_p }
    }

    /// True pressure (Pa) at geometric height `z`: ln p linear between whole metres.
    fn pressure(&self, z: f64) -> f64 {
        let x = (z - BALLOON_GROUND_M).clamp(0.0, (self.ln_p.len() - 1) as f64);
        let i = (x.floor() as usize).min(self.ln_p.len() - 2);
        let f = x - i as f64;
        (self.ln_p[i] + f * (self.ln_p[i + 1] - self.ln_p[i])).exp()
    }

    /// True air density (kg/m^3) at `z`: `rho = p / (Rd Tv)`.
    fn density(&self, z: f64) -> f64 {
        let p = self.pressure(z);
        let tv = virtual_temperature(piecewise(&BALLOON_T, z), piecewise(&BALLOON_RH, z), p);
        p / (RD * tv)
    }
}

const BALLOON_DESCRIPTION: &str = "\
Invented launch site 'Harrowmere Field', 64.2 N, 310 m (geometric, above the ellipsoid).
Atmosphere (invented, warm and humid): 26 degC and RH 75 % at the ground, 990.00 hPa;
  T piecewise linear: 299.15 K at 310 m, 296.75 K at 600 m, inversion to 299.65 K at 900 m,
  7 K/km to a 208.65 K tropopause at 13.9 km, isothermal to 20 km, +1.8 K/km above;
  RH 75/72/50/55/30/6/3/2 % at 0.31/0.6/0.9/3/8/13.9/20/35.5 km.
  Pressure: f64 hydrostatic integration dp/dz = -p g(lat,z)/(Rd Tv), Rd = 287.05307,
  WGS-84 normal gravity (TR8350.2 eq. 4-1, 4-3), Tv with eps = 0.622 and the
  Alduchov-Eskridge 1996 Magnus form.
Flight: 120 s on the ground, ascent ~5 m/s to burst at 33000 m, parachute descent
  v = -5.5 m/s sqrt(1.225 / rho), landing at 310 m, 120 s on the ground. Samples every 2 s.
Sensors: pressure noise 1.5 Pa (1 sigma), 0.01 Pa resolution, one-sample spikes +300/-300/+300 Pa
  at t = 700/3000/8000 s; temperature first-order lag tau = 6 s sqrt(rho_ground/rho) plus
  0.1 K noise, no temperature from t = 2400 s to 2458 s; humidity +-2 %-points noise,
  clipped 0..100.
Truth file: every 10 s and the last row.";

/// Balloon flight to 33 km in a warm, humid, non-standard atmosphere at 64.2 N (see the
/// module documentation).
pub fn balloon() -> Scenario {
    const DT: f64 = 0.05;
    const SUB: usize = 40; // 2 s samples
    const TRUTH_EVERY: usize = 5; // 10 s truth
    const GROUND_S: f64 = 120.0;
    const V_SEA_LEVEL: f64 = 5.5;
    let column = Column::build();
    let rho_ground = column.density(BALLOON_GROUND_M);
    let mut rng = Rng::new(0xBA11_0001);

    // Trajectory on the fine grid: (z, v) at t = k DT.
    let mut z = BALLOON_GROUND_M;
    let mut zs: Vec<(f64, f64)> = Vec::new();
    let mut burst_time = None;
    let mut landing_time = None;
    let mut k = 0usize;
    let ascent_speed = |t: f64, z: f64| {
        let tau = t - GROUND_S;
        5.0 + 0.25 * (2.0 * std::f64::consts::PI * tau / 900.0).sin()
            + 0.15 * (2.0 * std::f64::consts::PI * tau / 137.0).sin()
            + 0.2 * (z - BALLOON_GROUND_M) / 10_000.0
    };
    let descent_speed = |z: f64| -V_SEA_LEVEL * (SEA_LEVEL_DENSITY / column.density(z)).sqrt();
    loop {
        let t = k as f64 * DT;
        let v = match (burst_time, landing_time) {
            _ if t < GROUND_S => 0.0,
            (None, _) => ascent_speed(t, z),
            (Some(_), None) => descent_speed(z),
            (Some(_), Some(_)) => 0.0,
        };
        zs.push((z, v));
        if let Some(tl) = landing_time {
            if t >= tl + GROUND_S {
                break;
            }
        }
        k += 1;
        // Midpoint (RK2) step of the height.
        let z_next = match (burst_time, landing_time) {
            _ if t < GROUND_S => z,
            (None, _) => {
                let zm = z + 0.5 * DT * ascent_speed(t, z);
                z + DT * ascent_speed(t + 0.5 * DT, zm)
            }
            (Some(_), None) => {
                let zm = z + 0.5 * DT * descent_speed(z);
                z + DT * descent_speed(zm)
            }
            (Some(_), Some(_)) => z,
        };
        if burst_time.is_none() && t >= GROUND_S && z_next >= BALLOON_BURST_M {
            // Burst inside this step: stop at the burst height, record the time.
            let f = (BALLOON_BURST_M - z) / (z_next - z);
            burst_time = Some(t + f * DT);
            z = BALLOON_BURST_M;
        } else if burst_time.is_some() && landing_time.is_none() && z_next <= BALLOON_GROUND_M {
            let f = (z - BALLOON_GROUND_M) / (z - z_next);
            landing_time = Some(t + f * DT);
            z = BALLOON_GROUND_M;
        } else {
            z = z_next;
        }
    }
    // A step that bursts or lands ends exactly on the burst / ground height; the next
    // entry's speed already follows the new phase.

    // Sensors on the fine grid; samples every SUB steps.
    let t_ground = piecewise(&BALLOON_T, BALLOON_GROUND_M);
    let mut sensor_t = t_ground;
    let spikes = [(700.0, 300.0), (3_000.0, -300.0), (8_000.0, 300.0)];
    let mut rows = Vec::new();
    let mut truth = Vec::new();
    for (k, &(z, v)) in zs.iter().enumerate() {
        if k > 0 {
            let air = piecewise(&BALLOON_T, z);
            let tau = 6.0 * (rho_ground / column.density(z)).sqrt();
            sensor_t += (air - sensor_t) * (1.0 - (-DT / tau).exp());
        }
        if k % SUB != 0 {
            continue;
        }
        let sample = k / SUB;
        // Sample times exactly on the 2 s grid.
        let t = sample as f64 * 2.0;
        let mut p = column.pressure(z) + 1.5 * rng.gauss();
        for &(ts, dp) in &spikes {
            if t == ts {
                p += dp;
            }
        }
        let temp_noise = 0.1 * rng.gauss();
        let temperature_c = if (2_400.0..2_460.0).contains(&t) {
            None
        } else {
            Some(sensor_t - 273.15 + temp_noise)
        };
        let rh = (piecewise(&BALLOON_RH, z) + 2.0 * rng.gauss()).clamp(0.0, 100.0);
        rows.push(Row {
            time_s: t,
            pressure_pa: Some(p),
            temperature_c,
            humidity_pct: Some(rh),
            accel_up_mps2: None,
            known_altitude_m: None,
        });
        if sample % TRUTH_EVERY == 0 || k + SUB >= zs.len() {
            truth.push(Truth {
                time_s: t,
                altitude_m: z,
                vertical_speed_mps: v,
            });
        }
    }
    let (top_k, top) =
        zs.iter().enumerate().fold(
            (0, f64::MIN),
            |acc, (k, &(z, _))| {
                if z > acc.1 { (k, z) } else { acc }
            },
        );
    let (up, down) = climb_totals(zs.iter().map(|&(z, _)| z));
    Scenario {
        name: "balloon",
        description: BALLOON_DESCRIPTION,
        latitude_deg: BALLOON_LAT_DEG,
        start_altitude_m: BALLOON_GROUND_M,
        rows,
        truth,
        summary: TruthSummary {
            top_altitude_m: top,
            top_time_s: burst_time.unwrap_or(top_k as f64 * DT),
            total_ascent_m: up,
            total_descent_m: down,
            burst_time_s: burst_time,
            landing_time_s: landing_time,
        },
    }
}

// ------------------------------------------------------------------ drone

const DRONE_LAT_DEG: f64 = 47.5;
const DRONE_GROUND_M: f64 = 180.0;
const DRONE_SEA_LEVEL_PA: f64 = 101_600.0;

const DRONE_DESCRIPTION: &str = "\
Invented yard 'Brackenlow Yard', 47.5 N, 180 m.
Atmosphere: U.S. Standard Atmosphere 1976 troposphere (f64) with the whole column scaled by
  1016.0/1013.25 (sea-level pressure 1016.0 hPa); temperature channel 15 degC +- 0.05 K noise.
Motion: 5 s at rest (ground reference), climb 10 m in 4 s with a cosine-shaped vertical speed
  (peak 5 m/s), hover 6 s, descend 10 m in 5 s the same way, land at t = 20 s, rest 3 s.
Sensors: accelerometer (earth-frame vertical, gravity removed) at 200 Hz, one row per sample,
  0.05 m/s^2 noise and a constant +0.1 m/s^2 bias; barometer at 50 Hz (every 4th row) with
  1.5 Pa noise and +-30 Pa spikes on 1 % of its samples; rows without a barometer sample leave
  pressure_pa and temperature_c empty.
Truth file: every barometer row (50 Hz).";

/// True height above the ground (m), vertical speed and acceleration of the drone hop.
fn drone_motion(t: f64) -> (f64, f64, f64) {
    const CLIMB: (f64, f64) = (5.0, 4.0); // start, duration
    const DESCEND: (f64, f64) = (15.0, 5.0);
    const HEIGHT: f64 = 10.0;
    if t < CLIMB.0 {
        (0.0, 0.0, 0.0)
    } else if t < CLIMB.0 + CLIMB.1 {
        cosine_move(HEIGHT, CLIMB.1, t - CLIMB.0)
    } else if t < DESCEND.0 {
        (HEIGHT, 0.0, 0.0)
    } else if t < DESCEND.0 + DESCEND.1 {
        let (dz, v, a) = cosine_move(-HEIGHT, DESCEND.1, t - DESCEND.0);
        (HEIGHT + dz, v, a)
    } else {
        (0.0, 0.0, 0.0)
    }
}

/// Drone hop of 10 m at a yard at 180 m (see the module documentation).
pub fn drone() -> Scenario {
    const RATE_HZ: usize = 200;
    const BARO_EVERY: usize = 4;
    const DURATION_S: usize = 23;
    let scale = DRONE_SEA_LEVEL_PA / 101_325.0;
    let mut rng = Rng::new(0xD20E_0002);
    let mut rows = Vec::new();
    let mut truth = Vec::new();
    let mut heights = Vec::new();
    for k in 0..=DURATION_S * RATE_HZ {
        let t = k as f64 / RATE_HZ as f64;
        let (dz, v, a) = drone_motion(t);
        let z = DRONE_GROUND_M + dz;
        heights.push(z);
        let accel = a + 0.1 + 0.05 * rng.gauss();
        let (pressure_pa, temperature_c) = if k % BARO_EVERY == 0 {
            let mut p = standard_troposphere_pressure(z) * scale + 1.5 * rng.gauss();
            if rng.uniform() < 0.01 {
                p += if rng.uniform() < 0.5 { 30.0 } else { -30.0 };
            }
            let temp = 15.0 + 0.05 * rng.gauss();
            truth.push(Truth {
                time_s: t,
                altitude_m: z,
                vertical_speed_mps: v,
            });
            (Some(p), Some(temp))
        } else {
            (None, None)
        };
        rows.push(Row {
            time_s: t,
            pressure_pa,
            temperature_c,
            humidity_pct: None,
            accel_up_mps2: Some(accel),
            known_altitude_m: None,
        });
    }
    let (up, down) = climb_totals(heights.iter().copied());
    Scenario {
        name: "drone",
        description: DRONE_DESCRIPTION,
        latitude_deg: DRONE_LAT_DEG,
        start_altitude_m: DRONE_GROUND_M,
        rows,
        truth,
        summary: TruthSummary {
            top_altitude_m: DRONE_GROUND_M + 10.0,
            top_time_s: 9.0,
            total_ascent_m: up,
            total_descent_m: down,
            burst_time_s: None,
            landing_time_s: Some(20.0),
        },
    }
}

// ------------------------------------------------------------------ hike

const HIKE_LAT_DEG: f64 = 46.8;
const HIKE_START_M: f64 = 652.0;
const HIKE_SUMMIT_M: f64 = 1_705.0;

/// Legs of the walk: (minutes, height change m). Zero change = standing or resting.
const HIKE_LEGS: [(f64, f64); 12] = [
    (5.0, 0.0),    // standing at the start
    (85.0, 538.0), // up to 1190 m
    (25.0, 0.0),   // rest
    (12.0, -50.0), // down to 1140 m
    (95.0, 565.0), // up to the summit marker, 1705 m
    (40.0, 0.0),   // lunch rest at the top
    (75.0, -415.0),
    (30.0, 0.0), // rest at 1290 m
    (10.0, 40.0),
    (100.0, -630.0), // down to 700 m
    (3.0, 0.0),      // standing at the end
    (0.0, 0.0),      // (end marker)
];

const HIKE_DESCRIPTION: &str = "\
Invented ridge walk from 'Caddenholt Gap', 46.8 N, start 652 m, summit marker 1705 m, end 700 m.
Motion: 5 min standing, up 538 m (85 min), rest 25 min, down 50 m (12 min), up 565 m to the
  summit marker (95 min), lunch rest 40 min at the top, down 415 m (75 min), rest 30 min, up 40 m
  (10 min), down 630 m (100 min), 3 min standing; pace varies smoothly, height monotonic per leg.
Atmosphere: U.S. Standard Atmosphere 1976 troposphere (f64) with the whole column scaled by
  p_sl(t)/101325, p_sl(t) = 1016.0 hPa - 1.625 hPa (1 + tanh((t - 4.5 h)/1.2 h)): a smooth
  fall through the day, 3.0 hPa at the start site (652 m) over the 8 h.
  Temperature channel 14 degC + 5 K sin(pi t / 9 h) - 6.5 K/km (z - 652 m) (not used for the
  pressure) plus 0.1 K noise.
Sensors: pressure noise 2 Pa, 0.01 Pa resolution; samples every 5 s; known_altitude_m fixes
  (true height) at the summit marker and on the last row.
Truth file: every 30 s.";

/// True height (m) and vertical speed (m/s) of the hike at time `t` (s).
fn hike_motion(t: f64) -> (f64, f64) {
    let mut start = 0.0;
    let mut z = HIKE_START_M;
    for (i, &(minutes, dz)) in HIKE_LEGS.iter().enumerate() {
        let dur = minutes * 60.0;
        if dur > 0.0 && t < start + dur {
            if dz == 0.0 {
                return (z, 0.0);
            }
            // Monotonic pace variation: g(u) = u + a sin(2 pi k u) / (2 pi k), a < 1.
            let u = (t - start) / dur;
            let wiggles = 2.0 + (i % 3) as f64;
            let w = 2.0 * std::f64::consts::PI * wiggles;
            let g = u + 0.3 * (w * u).sin() / w;
            let dg = 1.0 + 0.3 * (w * u).cos();
            return (z + dz * g, dz * dg / dur);
        }
        start += dur;
        z += dz;
    }
    (z, 0.0)
}

fn hike_duration_s() -> f64 {
    HIKE_LEGS.iter().map(|&(m, _)| m * 60.0).sum()
}

/// Time (s) of arrival at the summit marker (end of the fifth leg).
fn hike_summit_time_s() -> f64 {
    HIKE_LEGS.iter().take(5).map(|&(m, _)| m * 60.0).sum()
}

/// Sea-level pressure (Pa) of the hike's weather at time `t` (s): a smooth tanh fall
/// (3.24 hPa at sea level over the 8 h, 3.0 hPa at the start site).
fn hike_sea_level_pa(t: f64) -> f64 {
    101_600.0 - 162.5 * (1.0 + ((t - 4.5 * 3600.0) / (1.2 * 3600.0)).tanh())
}

/// Day hike with 1 143 m of ascent and a 3 hPa weather change (see the module
/// documentation).
pub fn hike() -> Scenario {
    const STEP_S: usize = 5;
    const TRUTH_EVERY: usize = 6;
    let mut rng = Rng::new(0x41CE_0003);
    let end = hike_duration_s().round() as usize;
    let summit_t = hike_summit_time_s().round() as usize;
    let mut rows = Vec::new();
    let mut truth = Vec::new();
    for (n, ts) in (0..=end).step_by(STEP_S).enumerate() {
        let t = ts as f64;
        let (z, v) = hike_motion(t);
        let p =
            standard_troposphere_pressure(z) * hike_sea_level_pa(t) / 101_325.0 + 2.0 * rng.gauss();
        let temp = 14.0 + 5.0 * (std::f64::consts::PI * t / (9.0 * 3600.0)).sin()
            - 0.0065 * (z - HIKE_START_M)
            + 0.1 * rng.gauss();
        let known = if ts == summit_t || ts == end {
            Some(z)
        } else {
            None
        };
        rows.push(Row {
            time_s: t,
            pressure_pa: Some(p),
            temperature_c: Some(temp),
            humidity_pct: None,
            accel_up_mps2: None,
            known_altitude_m: known,
        });
        if n % TRUTH_EVERY == 0 || ts == end {
            truth.push(Truth {
                time_s: t,
                altitude_m: z,
                vertical_speed_mps: v,
            });
        }
    }
    // Totals on a 1 s grid (heights are monotonic within each leg, so this is exact).
    let (up, down) = climb_totals((0..=end).map(|s| hike_motion(s as f64).0));
    Scenario {
        name: "hike",
        description: HIKE_DESCRIPTION,
        latitude_deg: HIKE_LAT_DEG,
        start_altitude_m: HIKE_START_M,
        rows,
        truth,
        summary: TruthSummary {
            top_altitude_m: HIKE_SUMMIT_M,
            top_time_s: hike_summit_time_s(),
            total_ascent_m: up,
            total_descent_m: down,
            burst_time_s: None,
            landing_time_s: None,
        },
    }
}

// ------------------------------------------------------------------ CSV

/// `x` with `decimals` digits after the point; `-0.00` is written `0.00`.
fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Time with up to 3 decimals, trailing zeros dropped (`120`, `0.005`).
fn time_text(t: f64) -> String {
    let s = fixed(t, 3);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s.is_empty() {
        "0".to_string()
    } else {
        s.to_string()
    }
}

fn cell(out: &mut String, v: Option<f64>, decimals: usize) {
    out.push(',');
    if let Some(x) = v {
        out.push_str(&fixed(x, decimals));
    }
}

fn header_comments(s: &Scenario, what: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "# isohypse demo recording '{}' ({what}); invented data, made by examples/simulate.rs",
        s.name
    );
    let _ = writeln!(
        out,
        "# latitude_deg={} start_altitude_m={}",
        s.latitude_deg, s.start_altitude_m
    );
    for line in s.description.lines() {
        let _ = writeln!(out, "# {line}");
    }
    out
}

/// Writes the input CSV of the replay tool's file contract: `#` comment lines describing
/// the scenario, the header `time_s,pressure_pa,temperature_c,humidity_pct,accel_up_mps2,
/// known_altitude_m`, one line per row, empty cells for channels not measured.
pub fn write_csv(s: &Scenario, path: &Path) -> std::io::Result<()> {
    let mut out = header_comments(s, "sensor input");
    out.push_str("time_s,pressure_pa,temperature_c,humidity_pct,accel_up_mps2,known_altitude_m\n");
    for r in &s.rows {
        out.push_str(&time_text(r.time_s));
        cell(&mut out, r.pressure_pa, 2);
        cell(&mut out, r.temperature_c, 2);
        cell(&mut out, r.humidity_pct, 1);
        cell(&mut out, r.accel_up_mps2, 3);
        cell(&mut out, r.known_altitude_m, 2);
        out.push('\n');
    }
    std::fs::File::create(path)?.write_all(out.as_bytes())
}

/// Writes the truth CSV: `time_s,altitude_m,vertical_speed_mps` (height to 1 mm, speed
/// to 1 mm/s), after `#` comment lines with the scenario and its truth summary.
pub fn write_truth_csv(s: &Scenario, path: &Path) -> std::io::Result<()> {
    let mut out = header_comments(s, "truth");
    let m = &s.summary;
    let opt = |v: Option<f64>| v.map_or("-".to_string(), |x| fixed(x, 2));
    let _ = writeln!(
        out,
        "# summary: top {} m at {} s, ascent {} m, descent {} m, burst {} s, landing {} s",
        fixed(m.top_altitude_m, 3),
        fixed(m.top_time_s, 2),
        fixed(m.total_ascent_m, 3),
        fixed(m.total_descent_m, 3),
        opt(m.burst_time_s),
        opt(m.landing_time_s)
    );
    out.push_str("time_s,altitude_m,vertical_speed_mps\n");
    for t in &s.truth {
        let _ = writeln!(
            out,
            "{},{},{}",
            time_text(t.time_s),
            fixed(t.altitude_m, 3),
            fixed(t.vertical_speed_mps, 3)
        );
    }
    std::fs::File::create(path)?.write_all(out.as_bytes())
}
