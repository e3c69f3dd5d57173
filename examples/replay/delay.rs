//! Pointwise (`--filter off`), the first taken row has no step behind it: it shows the
//! speed of the step after it (a forward difference at the start of a differenced
//! series, as at the ends of any numerical derivative; common practice), and so do the
//! flagged rows between it and the next taken row, which carried its speed forward.
//! That speed is known one taken row later, so those rows are held until then: in a
//! clean log one row; at most [`Delay::HOLD`] rows (a first row followed by more
//! flagged rows than that keeps NaN), so memory stays bounded.

use super::engine::Output;

use super::Failure;
use super::engine::{height_and_speed, set_speed};
use super::row::Row;

/// Where the rows go once their speed is settled.
pub(crate) type Emit<'a> = dyn FnMut(Row, Output) -> Result<(), Failure> + 'a;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum State {
    /// No taken row yet (rows show NaN and pass through).
    Before,
    /// The first taken row and the rows after it are held.
    Holding,
    /// Every row passes through.
    Done,
}

/// The delay buffer.
#[derive(Debug)]
pub(crate) struct Delay {
    state: State,
    held: Vec<(Row, Output)>,
}

impl Delay {
    /// Rows held at most.
    pub(crate) const HOLD: usize = 4096;

    /// A buffer for a pointwise run; otherwise one that passes every row through.
    pub(crate) fn new(pointwise: bool) -> Self {
        Self {
            state: if pointwise {
                State::Before
            } else {
                State::Done
            },
            held: Vec::new(),
        }
    }

    /// Take the next row; pass on what is settled.
    pub(crate) fn push(&mut self, row: Row, o: Output, emit: &mut Emit<'_>) -> Result<(), Failure> {
        let (height, speed) = height_and_speed(&o);
        match self.state {
            State::Done => emit(row, o),
            State::Before if !height.is_finite() => emit(row, o),
            State::Before if speed.is_finite() => {
                self.state = State::Done;
                emit(row, o)
            }
            State::Before | State::Holding => {
                self.state = State::Holding;
                self.held.push((row, o));
                if speed.is_finite() {
                    for (_, held) in &mut self.held {
                        if height_and_speed(held).1.is_nan() {
                            set_speed(held, speed);
                        }
                    }
                }
                if speed.is_finite() || self.held.len() >= Self::HOLD {
                    self.finish(emit)?;
                }
                Ok(())
            }
        }
    }

    /// Pass on every held row as it is (the end of the log, or the buffer full).
    pub(crate) fn finish(&mut self, emit: &mut Emit<'_>) -> Result<(), Failure> {
        if self.state == State::Holding {
            self.state = State::Done;
        }
        for (row, o) in self.held.drain(..) {
            emit(row, o)?;
        }
        Ok(())
    }
}
