//! Helpers shared by the integration tests: an f64 evaluation of the standard
//! atmospheres straight from their defining constants, and a reader for the reference
//! vector files.
#![allow(dead_code, clippy::needless_range_loop)]

/// Constants of a standard atmosphere in f64, from the defining documents.
pub struct Reference64 {
    /// Specific gas constant, J/(kg K).
    pub r: f64,
    pub g0: f64,
    pub r0: f64,
    /// (base geopotential m', lapse K/m') from U.S. 1976 Table 4; same in ISO 2533.
    pub layers: [(f64, f64); 8],
    pub top: f64,
}

const LAYERS: [(f64, f64); 8] = [
    (-5004.0, -0.0065),
    (0.0, -0.0065),
    (11_000.0, 0.0),
    (20_000.0, 0.001),
    (32_000.0, 0.0028),
    (47_000.0, 0.0),
    (51_000.0, -0.0028),
    (71_000.0, -0.002),
];

/// U.S. Standard Atmosphere 1976: R* = 8314.32 J/(kmol K), M0 = 28.9644 kg/kmol,
/// g0 = 9.80665 m/s^2, r0 = 6 356 766 m (section 1.2 of the standard).
pub const US76: Reference64 = Reference64 {
    r: 8314.32 / 28.9644,
    g0: 9.80665,
    r0: 6_356_766.0,
    layers: LAYERS,
    top: 84_852.05,
};

/// ISO 2533:1975 / ICAO Doc 7488/3: R = 287.05287 J/(kg K) given directly.
pub const ICAO64: Reference64 = Reference64 {
    r: 287.05287,
    g0: 9.80665,
    r0: 6_356_766.0,
    layers: LAYERS,
    top: 80_000.0,
};

impl Reference64 {
    /// (base H, base T, lapse, base p) for each layer, chained from sea level.
    pub fn bases(&self) -> [(f64, f64, f64, f64); 8] {
        let mut out = [(0.0, 0.0, 0.0, 0.0); 8];
        // Sea level: 288.15 K, 101325 Pa. Layer 0 is the extension below sea level.
        let (t0, p0) = (288.15, 101_325.0);
        let l = -0.0065;
        let hb = self.layers[0].0;
        let tb = t0 + l * hb;
        let pb = p0 * (tb / t0).powf(-self.g0 / (self.r * l));
        out[0] = (hb, tb, l, pb);
        let (mut t, mut p) = (t0, p0);
        for i in 1..8 {
            let (h, lapse) = self.layers[i];
            out[i] = (h, t, lapse, p);
            let top = if i + 1 < 8 {
                self.layers[i + 1].0
            } else {
                self.top
            };
            let dh = top - h;
            if lapse == 0.0 {
                p *= (-self.g0 * dh / (self.r * t)).exp();
            } else {
                let tn = t + lapse * dh;
                p *= (tn / t).powf(-self.g0 / (self.r * lapse));
                t = tn;
            }
        }
        out
    }

    /// (T, p) at geopotential height h.
    pub fn at_geopotential(&self, h: f64) -> (f64, f64) {
        let bases = self.bases();
        let mut idx = 0;
        for (i, b) in bases.iter().enumerate() {
            if h >= b.0 {
                idx = i;
            }
        }
        let (hb, tb, l, pb) = bases[idx];
        let dh = h - hb;
        if l == 0.0 {
            (tb, pb * (-self.g0 * dh / (self.r * tb)).exp())
        } else {
            let t = tb + l * dh;
            (t, pb * (t / tb).powf(-self.g0 / (self.r * l)))
        }
    }

    /// Geopotential height of pressure p (inverse, f64).
    pub fn geopotential_of(&self, p: f64) -> f64 {
        let bases = self.bases();
        let mut idx = 0;
        for (i, b) in bases.iter().enumerate() {
            if p <= b.3 {
                idx = i;
            }
        }
        let (hb, tb, l, pb) = bases[idx];
        if l == 0.0 {
            hb + self.r * tb / self.g0 * (pb / p).ln()
        } else {
            hb + tb / l * ((p / pb).powf(-self.r * l / self.g0) - 1.0)
        }
    }

    pub fn geometric_of_geopotential(&self, h: f64) -> f64 {
        self.r0 * h / (self.r0 - h)
    }

    pub fn geopotential_of_geometric(&self, z: f64) -> f64 {
        self.r0 * z / (self.r0 + z)
    }

    /// Pressure altitude (geometric) of p.
    pub fn pressure_altitude(&self, p: f64) -> f64 {
        self.geometric_of_geopotential(self.geopotential_of(p))
    }
}

/// Rows of a reference CSV (header row names the columns; `#` lines are comments).
pub fn read_csv(text: &str) -> (Vec<String>, Vec<Vec<f64>>) {
    let mut header = Vec::new();
    let mut rows = Vec::new();
    for line in text.lines() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if header.is_empty() {
            header = line.split(',').map(|s| s.trim().to_string()).collect();
            continue;
        }
        rows.push(
            line.split(',')
                .map(|s| s.trim().parse::<f64>().expect("number"))
                .collect(),
        );
    }
    (header, rows)
}

/// True when the crate is built with the `micromath` backend, whose functions are less
/// precise: tests then apply the limits README publishes for that backend.
pub const MICROMATH: bool = cfg!(all(feature = "micromath", not(feature = "libm")));

/// Height limit for a check: the design goal for the default `libm` backend
/// (1 cm to 51 km, 5 cm above), and the measured-and-published limit for `micromath`
/// (2 cm everywhere; README accuracy table).
pub fn height_limit(z_m: f64) -> f64 {
    if MICROMATH {
        0.02_f64.max(if z_m <= 51_000.0 { 0.01 } else { 0.05 })
    } else if z_m <= 51_000.0 {
        0.01
    } else {
        0.05
    }
}

/// Shorthands for the newtypes in tests (values known to be valid).
pub fn h(m: f32) -> isohypse::Height {
    isohypse::Height::from_meters(m).unwrap()
}
pub fn pa(p: f32) -> isohypse::Pressure {
    isohypse::Pressure::from_pa(p).unwrap()
}
pub fn k(t: f32) -> isohypse::Temperature {
    isohypse::Temperature::from_kelvin(t).unwrap()
}
/// Pressure of the U.S. 1976 atmosphere at geometric height `z`, Pa.
pub fn p_at(z: f32) -> f32 {
    isohypse::atmosphere::US_1976
        .pressure_at(h(z))
        .unwrap()
        .pa()
}

/// [`p_at`] for a height given in f64 (the scenarios' heights), Pa.
pub fn pressure_at(z: f64) -> f32 {
    p_at(z as f32)
}

/// Air temperature of the U.S. 1976 atmosphere at geometric height `z`, degC.
pub fn air_c(z: f64) -> f32 {
    isohypse::atmosphere::US_1976
        .temperature_at(h(z as f32))
        .unwrap()
        .celsius()
}

/// The instant `s` seconds after the epoch, rounded to the microsecond (tests keep
/// their scenarios in seconds; the library takes integer time).
pub fn at(s: f64) -> isohypse::time::Instant {
    isohypse::time::Instant::from_micros((s * 1.0e6).round() as u64)
}

/// Seconds since the epoch of an instant.
pub fn secs(t: isohypse::time::Instant) -> f64 {
    t.as_micros() as f64 * 1.0e-6
}
