//! Unit tests of the parent module.

use super::*;
#[allow(unused_imports)]
use crate::time::{Instant, at};

/// Feed a speed profile at 1 Hz, integrating height; collect events.
fn run(
    phases: &mut FlightPhases,
    t0: f64,
    seconds: u32,
    speed: f32,
    h: &mut f32,
    events: &mut heapless::Vec<Phase, 8>,
) -> f64 {
    let mut t = t0;
    for _ in 0..seconds {
        t += 1.0;
        *h += speed;
        if let Some(e) = phases.update(at(t), *h, speed).unwrap() {
            events.push(e.phase).unwrap();
        }
    }
    t
}

#[test]
fn balloon_goes_through_every_phase() {
    let mut p = FlightPhases::new(PhaseSettings::BALLOON).unwrap();
    let mut h = 100.0;
    let mut ev = heapless::Vec::new();
    let mut t = run(&mut p, 0.0, 60, 0.0, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Ground);
    t = run(&mut p, t, 600, 5.0, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Ascent);
    t = run(&mut p, t, 120, 0.1, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Float);
    // burst: fast fall
    t = run(&mut p, t, 4, -30.0, &mut h, &mut ev);
    assert!(ev.contains(&Phase::Burst));
    t = run(&mut p, t, 300, -8.0, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Descent);
    run(&mut p, t, 60, 0.0, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Landed);
    let apex = p.apex().unwrap();
    assert!((apex.1 - (100.0 + 3000.0 + 12.0)).abs() < 1.0);
    assert_eq!(
        ev.as_slice(),
        [Phase::Ascent, Phase::Float, Phase::Burst, Phase::Landed]
    );
}

#[test]
fn short_gust_does_not_change_phase() {
    let mut p = FlightPhases::new(PhaseSettings::BALLOON).unwrap();
    let mut h = 0.0;
    let mut ev = heapless::Vec::new();
    let t = run(&mut p, 0.0, 5, 3.0, &mut h, &mut ev); // 5 s < 10 s debounce
    run(&mut p, t, 30, 0.0, &mut h, &mut ev);
    assert_eq!(p.phase(), Phase::Ground);
    assert!(ev.is_empty());
    assert_eq!(p.last_event(), None);
}

#[test]
fn bad_input_leaves_state_unchanged() {
    let mut p = FlightPhases::new(PhaseSettings::BALLOON).unwrap();
    p.update(at(1.0), 0.0, 2.0).unwrap();
    let before = p.clone();
    assert_eq!(p.update(at(1.0), 0.0, 2.0), Err(Error::NotIncreasing));
    assert_eq!(p.update(at(0.5), 0.0, 2.0), Err(Error::NotIncreasing));
    assert_eq!(p.update(at(2.0), f32::NAN, 2.0), Err(Error::NotFinite));
    assert_eq!(p, before);
    let mut bad = PhaseSettings::BALLOON;
    bad.burst_mps = 0.5;
    assert_eq!(p.set_settings(bad), Err(Error::InvalidSetting));
    assert_eq!(p, before);
}
