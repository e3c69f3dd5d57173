//! A plot's data reduced to what a screen can show, in bounded memory whatever the
//! length of the log: the time axis is cut into [`BUCKETS`] equal spans (more than the
//! plot has pixel columns), and each span keeps, per series, its first, lowest, highest
//! and last point. Drawn in time order, these give the same pixels as every point would
//! (the lines between columns run from one span's last point to the next one's first),
//! so a single-sample spike stays visible. The time range is not known ahead (the log
//! is read once, and may come from a pipe): the spans start 1 us wide and double,
//! merging in pairs, whenever a point falls past the last one, so at least half of them
//! are in use at the end.

use super::engine::Point;

/// Spans on the time axis.
pub(crate) const BUCKETS: usize = 2048;

/// Width of a span at the start, s.
const FIRST_WIDTH_S: f64 = 1e-6;

/// The reduced points of one series in one span: (time s, value).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Span {
    first: (f64, f64),
    low: (f64, f64),
    high: (f64, f64),
    last: (f64, f64),
}

impl Span {
    fn new(point: (f64, f64)) -> Self {
        Self {
            first: point,
            low: point,
            high: point,
            last: point,
        }
    }

    /// This span followed by `later` (a later point or span).
    fn then(self, later: Span) -> Self {
        Self {
            first: self.first,
            low: if later.low.1 < self.low.1 {
                later.low
            } else {
                self.low
            },
            high: if later.high.1 > self.high.1 {
                later.high
            } else {
                self.high
            },
            last: later.last,
        }
    }

    /// The points to draw, in time order, without repeats.
    pub(crate) fn points(&self) -> impl Iterator<Item = (f64, f64)> {
        let mut middle = [self.low, self.high];
        if middle[1].0 < middle[0].0 {
            middle.swap(0, 1);
        }
        let all = [self.first, middle[0], middle[1], self.last];
        let mut previous: Option<(f64, f64)> = None;
        all.into_iter().filter(move |p| {
            let new = previous != Some(*p);
            previous = Some(*p);
            new
        })
    }

    /// Lowest and highest value.
    pub(crate) fn range(&self) -> (f64, f64) {
        (self.low.1, self.high.1)
    }
}

/// The series drawn: raw height, filtered height, the filtered height plus and minus two
/// 1-sigmas, vertical speed, total ascent, total descent.
pub(crate) const SERIES: usize = 7;
pub(crate) const RAW: usize = 0;
pub(crate) const FILTERED: usize = 1;
pub(crate) const BAND_HIGH: usize = 2;
pub(crate) const BAND_LOW: usize = 3;
pub(crate) const SPEED: usize = 4;
pub(crate) const ASCENT: usize = 5;
pub(crate) const DESCENT: usize = 6;

/// The marks drawn: samples gated as outliers (at their own height), known elevations
/// applied, satellite altitudes (at the satellite altitude). One of each per span at
/// most: the first.
pub(crate) const MARKS: usize = 3;
pub(crate) const OUTLIER: usize = 0;
pub(crate) const FIX: usize = 1;
pub(crate) const GNSS: usize = 2;

/// A mark: (time s, height m).
pub(crate) type Mark = (f64, f64);

/// The reduced plot data.
#[derive(Debug, Clone)]
pub(crate) struct Envelope {
    start_s: Option<f64>,
    last_s: f64,
    width_s: f64,
    /// Per span, per series.
    spans: Vec<[Option<Span>; SERIES]>,
    /// Per span, per kind of mark.
    marks: Vec<[Option<Mark>; MARKS]>,
}

impl Default for Envelope {
    fn default() -> Self {
        Self {
            start_s: None,
            last_s: 0.0,
            width_s: FIRST_WIDTH_S,
            spans: vec![[None; SERIES]; BUCKETS],
            marks: vec![[None; MARKS]; BUCKETS],
        }
    }
}

/// The values of the series of `p`, in the order of [`SERIES`].
fn values(p: &Point) -> [f32; SERIES] {
    let two_sigma = 2.0 * p.altitude_sigma_m;
    [
        p.raw_altitude_m,
        p.altitude_m,
        p.altitude_m + two_sigma,
        p.altitude_m - two_sigma,
        p.vertical_speed_mps,
        p.ascent_m,
        p.descent_m,
    ]
}

/// The marks of `p`, in the order of [`MARKS`].
fn marks(p: &Point) -> [Option<f32>; MARKS] {
    let flag = |f: isohypse::uses::Flags| p.flags & u64::from(f.0) != 0;
    [
        flag(isohypse::uses::Flags::OUTLIER).then_some(p.raw_altitude_m),
        flag(isohypse::uses::Flags::FIX_APPLIED).then_some(p.altitude_m),
        p.gnss_altitude_m,
    ]
}

impl Envelope {
    /// Add an output row; rows whose sample was not used are not drawn, nor a value
    /// that is not a number.
    pub(crate) fn add(&mut self, p: &Point) {
        if !p.accepted {
            return;
        }
        let start = *self.start_s.get_or_insert(p.time_s);
        self.last_s = p.time_s;
        let offset = p.time_s - start;
        while offset >= self.width_s * BUCKETS as f64 && self.width_s.is_finite() {
            self.widen();
        }
        let i = ((offset / self.width_s) as usize).min(BUCKETS - 1);
        if let Some(slots) = self.spans.get_mut(i) {
            for (slot, v) in slots.iter_mut().zip(values(p)) {
                if v.is_finite() {
                    let new = Span::new((p.time_s, f64::from(v)));
                    *slot = Some(slot.map_or(new, |s| s.then(new)));
                }
            }
        }
        if let Some(slots) = self.marks.get_mut(i) {
            for (slot, v) in slots.iter_mut().zip(marks(p)) {
                if let Some(v) = v.filter(|v| v.is_finite()) {
                    slot.get_or_insert((p.time_s, f64::from(v)));
                }
            }
        }
    }

    /// Double the width of the spans, merging them in pairs.
    fn widen(&mut self) {
        self.width_s *= 2.0;
        halve(&mut self.spans, |a, b| match (a, b) {
            (Some(x), Some(y)) => Some(x.then(y)),
            (x, y) => x.or(y),
        });
        // a mark keeps the first of the pair's
        halve(&mut self.marks, Option::or);
    }

    /// The marks of kind `m` in time order.
    pub(crate) fn marks(&self, m: usize) -> impl Iterator<Item = Mark> + '_ {
        self.marks.iter().filter_map(move |slots| *slots.get(m)?)
    }

    /// The spans of series `s` in time order.
    pub(crate) fn series(&self, s: usize) -> impl Iterator<Item = &Span> + '_ {
        self.spans
            .iter()
            .filter_map(move |slots| slots.get(s)?.as_ref())
    }

    /// The points of series `s` to draw, in time order.
    pub(crate) fn points(&self, s: usize) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.series(s).flat_map(Span::points)
    }

    /// Lowest and highest value of series `s`, if it has any.
    pub(crate) fn range(&self, s: usize) -> Option<(f64, f64)> {
        self.series(s)
            .map(Span::range)
            .reduce(|(a, b), (c, d)| (a.min(c), b.max(d)))
    }

    /// First and last time drawn, s.
    pub(crate) fn time_range(&self) -> Option<(f64, f64)> {
        Some((self.start_s?, self.last_s))
    }
}

/// Merges the slots of `buckets` in pairs into the first half (slot `i` from `2 i` and
/// `2 i + 1`, each entry by `merge(earlier, later)`) and empties the second half.
fn halve<T: Copy, const K: usize>(
    buckets: &mut [[Option<T>; K]],
    merge: impl Fn(Option<T>, Option<T>) -> Option<T>,
) {
    let n = buckets.len();
    for i in 0..n {
        let merged = if i < n / 2 {
            let pair = |k: usize| buckets.get(k).copied().unwrap_or([None; K]);
            let (a, b) = (pair(2 * i), pair(2 * i + 1));
            std::array::from_fn(|s| merge(a[s], b[s]))
        } else {
            [None; K]
        };
        if let Some(slot) = buckets.get_mut(i) {
            *slot = merged;
        }
    }
}
