//! What each state of a run adds up to (time spent, mean speed, mean height), gathered
//! row by row in bounded memory, and the use's own lines of the summary: a balloon's
//! burst and rates, a walk's climb, descent, rests and pressure alert, a drone's
//! take-off, hover and highest point.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use super::PresetArg;
use super::engine::Point;
use super::scale::clock;

/// Totals of the rows in one state.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct InState {
    /// Time spent, s (each row counts the step since the row before it).
    pub(crate) seconds: f64,
    speed_s: f64,
    height_s: f64,
}

impl InState {
    /// Mean vertical speed, m/s.
    pub(crate) fn mean_speed(&self) -> Option<f64> {
        (self.seconds > 0.0).then(|| self.speed_s / self.seconds)
    }
    /// Mean height, m.
    pub(crate) fn mean_height(&self) -> Option<f64> {
        (self.seconds > 0.0).then(|| self.height_s / self.seconds)
    }
}

/// The run's story: time in each state, the first row's time, the highest point, the
/// falling-pressure alert.
#[derive(Debug, Clone, Default)]
pub(crate) struct Story {
    pub(crate) first_s: Option<f64>,
    last: Option<(f64, &'static str)>,
    pub(crate) states: BTreeMap<&'static str, InState>,
    /// Rows with the falling-pressure alert, and the first one's time.
    pub(crate) alert: Option<(f64, usize)>,
    /// Rests: how many, and the first [`Story::SPANS`] as (start s, end s).
    pub(crate) rests: usize,
    pub(crate) rest_spans: Vec<(f64, f64)>,
}

/// The state whose spans are counted and shaded: the walk's rests.
const RESTING: &str = "resting";

impl Story {
    /// Rest spans kept for the plot.
    pub(crate) const SPANS: usize = 500;

    /// Add an output row.
    pub(crate) fn add(&mut self, p: &Point) {
        self.first_s.get_or_insert(p.time_s);
        self.add_rest(p);
        if let Some((t, state)) = self.last {
            let dt = p.time_s - t;
            let usable = p.accepted
                && dt.is_finite()
                && p.vertical_speed_mps.is_finite()
                && p.altitude_m.is_finite();
            if usable {
                let s = self.states.entry(state).or_default();
                s.seconds += dt;
                s.speed_s += dt * f64::from(p.vertical_speed_mps);
                s.height_s += dt * f64::from(p.altitude_m);
            }
        }
        self.last = Some((p.time_s, p.phase));
        if p.flags & u64::from(isohypse::uses::Flags::FALLING_PRESSURE.0) != 0 {
            let (t, n) = self.alert.get_or_insert((p.time_s, 0));
            *t = t.min(p.time_s);
            *n += 1;
        }
    }

    /// Count a rest when `p` starts one; extend the one under way.
    fn add_rest(&mut self, p: &Point) {
        let was = self.last.map(|l| l.1);
        if p.phase == RESTING && was != Some(RESTING) {
            self.rests += 1;
            if self.rest_spans.len() < Self::SPANS {
                self.rest_spans.push((p.time_s, p.time_s));
            }
        }
        if p.phase == RESTING && self.rests <= Self::SPANS {
            if let Some(span) = self.rest_spans.last_mut() {
                span.1 = p.time_s;
            }
        }
    }

    fn state(&self, name: &str) -> InState {
        self.states.get(name).copied().unwrap_or_default()
    }

    fn at(&self, t: f64) -> String {
        clock(t, self.first_s.unwrap_or(t))
    }
}

/// The first change into `state` among `events`: (time s, height m).
fn first_change(events: &[super::summary::Event], state: &str) -> Option<(f64, f32)> {
    events
        .iter()
        .find(|(name, _, _)| name == state)
        .map(|(_, t, h)| (*t, *h))
}

/// The use's own lines of the summary.
pub(crate) fn lines(
    preset: PresetArg,
    story: &Story,
    events: &[super::summary::Event],
    top: Option<(f64, f32)>,
    totals: Option<(f32, f32)>,
) -> String {
    let mut s = String::new();
    if let Some((t, h)) = top {
        let _ = writeln!(s, "highest point: {h:.1} m at {}", story.at(t));
    }
    match preset {
        PresetArg::Balloon => balloon(&mut s, story, events),
        PresetArg::Hike => walk(&mut s, story, totals),
        PresetArg::Drone => drone(&mut s, story, events),
    }
    s
}

fn rate(s: &mut String, what: &str, state: InState) {
    if let Some(v) = state.mean_speed() {
        let _ = writeln!(
            s,
            "{what}: {v:+.1} m/s on average over {}",
            clock(state.seconds, 0.0)
        );
    }
}

fn balloon(s: &mut String, story: &Story, events: &[super::summary::Event]) {
    match first_change(events, "burst") {
        Some((t, h)) => {
            let _ = writeln!(s, "burst: at {h:.1} m, {}", story.at(t));
        }
        None => {
            let _ = writeln!(s, "burst: none seen");
        }
    }
    rate(s, "ascent rate", story.state("ascent"));
    rate(s, "descent rate", story.state("descent"));
    if let Some((t, h)) = first_change(events, "landed") {
        let _ = writeln!(s, "landed: at {h:.1} m, {}", story.at(t));
    }
}

fn walk(s: &mut String, story: &Story, totals: Option<(f32, f32)>) {
    if let Some((up, down)) = totals {
        let _ = writeln!(s, "total climb: {up:.1} m; total descent: {down:.1} m");
    }
    let resting = story.state(RESTING);
    let _ = writeln!(
        s,
        "rests: {}, {} in all",
        story.rests,
        clock(resting.seconds, 0.0)
    );
    match story.alert {
        Some((t, _)) => {
            let _ = writeln!(
                s,
                "falling-pressure alert: from {} (the 3-hour fall reached the alert threshold)",
                story.at(t)
            );
        }
        None => {
            let _ = writeln!(s, "falling-pressure alert: none");
        }
    }
}

fn drone(s: &mut String, story: &Story, events: &[super::summary::Event]) {
    match first_change(events, "climbing") {
        Some((t, h)) => {
            let _ = writeln!(s, "take-off: at {h:.1} m, {}", story.at(t));
        }
        None => {
            let _ = writeln!(s, "take-off: none seen");
        }
    }
    let holding = story.state("holding");
    if let Some(h) = holding.mean_height() {
        let _ = writeln!(
            s,
            "hover height: {h:.1} m on average over {} holding",
            clock(holding.seconds, 0.0)
        );
    }
}
