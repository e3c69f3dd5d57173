//! Unit tests of the parent module.

use super::{Step, step_between};
use crate::time::Instant;

#[test]
fn steps_are_integer_differences() {
    let t = |us| Instant::from_micros(us);
    assert_eq!(step_between(t(1_000), t(21_000)), Step::Later(0.02));
    assert_eq!(step_between(t(21_000), t(1_000)), Step::Earlier);
    assert_eq!(step_between(t(5), t(5)), Step::Same);
    // a year of 50 Hz samples: the step keeps its full resolution
    let year = 31_557_600_000_000;
    assert_eq!(step_between(t(year), t(year + 20_000)), Step::Later(0.02));
}
