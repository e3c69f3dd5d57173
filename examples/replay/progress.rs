//! A progress indicator on stderr for long logs: drawn (by `indicatif`) only when stderr
//! is a terminal, the run was not asked to be `--quiet`, the input's size is known (a
//! file) and reading it has taken more than [`Progress::DELAY`]; a short log shows none.

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// The progress of one run.
pub(crate) struct Progress {
    bar: Option<ProgressBar>,
    started: Instant,
    drawn: bool,
}

/// Whether a run shows progress at all: not with `--quiet`, and only to a terminal
/// (a redirected stderr, a log file or a pipe, gets no progress lines).
pub(crate) fn wanted(quiet: bool, terminal: bool) -> bool {
    !quiet && terminal
}

impl Progress {
    /// Reading time after which the indicator appears.
    pub(crate) const DELAY: Duration = Duration::from_secs(1);

    /// No indicator.
    pub(crate) fn none() -> Self {
        Self {
            bar: None,
            started: Instant::now(),
            drawn: false,
        }
    }

    /// An indicator for reading `total_bytes`, if [`wanted`].
    pub(crate) fn new(total_bytes: Option<u64>, quiet: bool) -> Self {
        let mut progress = Self::none();
        if let Some(total) = total_bytes.filter(|_| wanted(quiet, std::io::stderr().is_terminal()))
        {
            let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
            if let Ok(style) = ProgressStyle::with_template(
                "replay [{bar:25}] {percent:>3}% of {total_bytes}, {msg}, {eta} left",
            ) {
                bar.set_style(style.progress_chars("=> "));
            }
            progress.bar = Some(bar);
        }
        progress
    }

    /// `position` bytes read, `rows` data rows.
    pub(crate) fn update(&mut self, position: u64, rows: usize) {
        let Some(bar) = &self.bar else {
            return;
        };
        if !self.drawn {
            if self.started.elapsed() < Self::DELAY {
                return;
            }
            bar.set_draw_target(ProgressDrawTarget::stderr());
            self.drawn = true;
        }
        bar.set_message(format!("{rows} rows"));
        bar.set_position(position);
    }

    /// Remove the indicator from the terminal.
    pub(crate) fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}
