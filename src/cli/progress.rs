//! Progress bars on standard error for work that takes longer than about a second:
//! hidden until then, never drawn when standard error is not a terminal or with
//! `--quiet`.

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Work shorter than this shows no bar.
const SHOW_AFTER: Duration = Duration::from_secs(1);

/// A progress bar that appears only for long work.
pub struct Progress {
    bar: Option<ProgressBar>,
    started: Instant,
    shown: std::cell::Cell<bool>,
}

impl Progress {
    /// A bar over `total` steps named `what`; none when quiet or not on a terminal.
    pub fn new(total: u64, what: &str, quiet: bool) -> Progress {
        let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
            let b = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
            b.set_style(
                ProgressStyle::with_template("{msg:>20} [{bar:40}] {pos}/{len} ({eta} left)")
                    .unwrap_or_else(|_| ProgressStyle::default_bar())
                    .progress_chars("=> "),
            );
            b.set_message(what.to_string());
            b
        });
        Progress {
            bar,
            started: Instant::now(),
            shown: std::cell::Cell::new(false),
        }
    }

    /// Steps done so far.
    pub fn set(&self, done: u64) {
        let Some(b) = &self.bar else { return };
        if !self.shown.get() && self.started.elapsed() >= SHOW_AFTER {
            b.set_draw_target(ProgressDrawTarget::stderr());
            self.shown.set(true);
        }
        b.set_position(done);
    }

    /// Remove the bar from the terminal.
    pub fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}
