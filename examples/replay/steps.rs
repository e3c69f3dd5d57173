//! The median time step between output rows, in bounded memory: a histogram of the
//! steps on a logarithmic scale, each bin keeping the first step that fell in it.

use std::collections::BTreeMap;

/// The steps seen so far.
#[derive(Debug, Default, Clone)]
pub(crate) struct Steps {
    last_time: Option<f64>,
    count: u64,
    /// Bin -> (steps in it, the first step that fell in it).
    bins: BTreeMap<i32, (u64, f64)>,
    /// The last step's bin: a log at a steady rate stays in it, counted here without a
    /// logarithm or a look-up per row.
    current: Option<Current>,
}

#[derive(Debug, Clone, Copy)]
struct Current {
    bin: i32,
    /// Steps (s) certainly in this bin: a little inside its edges.
    low: f64,
    high: f64,
    /// Steps of this bin not yet added to `bins`.
    pending: u64,
}

impl Steps {
    /// Relative width of a bin: steps within 0.1 % of each other share one.
    const RATIO: f64 = 1.001;
    /// Steps below this (s) share the lowest bin, above [`Steps::LONGEST`] the highest:
    /// at most ln(1e15) / ln(1.001), about 34 600, bins.
    const SHORTEST: f64 = 1e-6;
    const LONGEST: f64 = 1e9;

    /// The next row's time (times increase).
    pub(crate) fn add(&mut self, time_s: f64) {
        let Some(t0) = self.last_time.replace(time_s) else {
            return;
        };
        let step = time_s - t0;
        self.count += 1;
        if let Some(c) = self.current.as_mut() {
            if (c.low..c.high).contains(&step) {
                c.pending += 1;
                return;
            }
        }
        self.settle();
        let bin = Self::bin(step);
        self.bins.entry(bin).or_insert((0, step));
        let edge = |k: f64| ((f64::from(bin) + k) * Self::RATIO.ln()).exp();
        self.current = Some(Current {
            bin,
            low: edge(-0.49).max(Self::SHORTEST),
            high: edge(0.49).min(Self::LONGEST),
            pending: 1,
        });
    }

    /// The bin of `step`.
    fn bin(step: f64) -> i32 {
        let clamped = if step.is_nan() {
            Self::LONGEST
        } else {
            step.clamp(Self::SHORTEST, Self::LONGEST)
        };
        (clamped.ln() / Self::RATIO.ln()).round() as i32
    }

    /// Add the current bin's pending steps to the histogram.
    fn settle(&mut self) {
        if let Some(c) = self.current.take() {
            if let Some(entry) = self.bins.get_mut(&c.bin) {
                entry.0 += c.pending;
            }
        }
    }

    /// The median step (the upper one of an even count), s: a step of the bin that
    /// holds it, within 0.1 % of the exact median; exact when the bin holds one
    /// distinct step, as in a log at a steady rate. `None` before two rows.
    pub(crate) fn median(&self) -> Option<f64> {
        let rank = self.count / 2;
        let mut below = 0u64;
        for (bin, (n, step)) in &self.bins {
            below += n;
            if let Some(c) = self.current.filter(|c| c.bin == *bin) {
                below += c.pending;
            }
            if below > rank {
                return Some(*step);
            }
        }
        None
    }
}
