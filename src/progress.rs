//! The progress bar of `build` on standard error: cells written, cells per
//! second and the time left, drawn by `indicatif`. It appears only once a
//! build has run for about a second (`STILLPOINT_PROGRESS_DELAY`, in
//! seconds, changes that for tests), and never when standard error is not
//! a terminal or with `--quiet`.
//!
//! Owns: the bar and when it shows. Does not own: what is built (it is
//! fed [`Progress`] reports by [`crate::pipeline::Built::write_hdf5_reporting`]).

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressState, ProgressStyle};

use crate::pipeline::Progress;

/// The delay before the bar shows, unless the environment sets it.
const DELAY: Duration = Duration::from_secs(1);

/// A progress bar that may never show.
pub struct Bar {
    bar: Option<ProgressBar>,
    started: Instant,
    delay: Duration,
    shown: std::sync::atomic::AtomicBool,
}

impl Bar {
    /// A bar for `total` cells; silent when `quiet` or when standard error
    /// is not a terminal.
    pub fn new(total: usize, quiet: bool) -> Bar {
        Bar::labelled(total, quiet, "")
    }

    /// [`Bar::new`] with `label` before the figures (for instance
    /// "arrays: " while the CSV, .npy or raw outputs are sampled).
    pub fn labelled(total: usize, quiet: bool, label: &str) -> Bar {
        let delay = std::env::var("STILLPOINT_PROGRESS_DELAY")
            .ok()
            .and_then(|s| s.parse::<f64>().ok())
            .filter(|s| s.is_finite() && *s >= 0.0)
            .map_or(DELAY, Duration::from_secs_f64);
        let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
            let style = ProgressStyle::with_template(
                "{prefix}{percent:>3}% of {human_len} cells, {rate}, {left} {wide_bar}",
            )
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .with_key("rate", |s: &ProgressState, w: &mut dyn std::fmt::Write| {
                let _ = write!(w, "{:.2e} cells/s", s.per_sec());
            })
            .with_key("left", |s: &ProgressState, w: &mut dyn std::fmt::Write| {
                let _ = write!(w, "about {} left", indicatif::HumanDuration(s.eta()));
            });
            let b = ProgressBar::with_draw_target(Some(total as u64), ProgressDrawTarget::hidden());
            b.set_style(style);
            b.set_prefix(label.to_string());
            b
        });
        Bar {
            bar,
            started: Instant::now(),
            delay,
            shown: std::sync::atomic::AtomicBool::new(false),
        }
    }

    /// Record a report; the bar shows from the first report after the
    /// delay.
    pub fn update(&self, p: Progress) {
        let Some(b) = &self.bar else { return };
        b.set_position(p.cells as u64);
        if !self.shown.load(std::sync::atomic::Ordering::Relaxed)
            && self.started.elapsed() >= self.delay
            && p.cells < p.total
        {
            self.shown.store(true, std::sync::atomic::Ordering::Relaxed);
            b.set_draw_target(ProgressDrawTarget::stderr());
        }
    }

    /// Remove the bar from the screen.
    pub fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}
