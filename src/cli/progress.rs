//! A one-line progress bar on stderr for long reads. It is drawn only when stderr is a terminal
//! (so `--json` output, pipes and CI logs never see it), plain when NO_COLOR is set, redrawn at
//! most ten times a second, not at all for reads that end within a quarter of a second, and
//! erased when the read ends.

use std::io::{IsTerminal, Stderr, Write};
use std::time::{Duration, Instant};

/// Shortest time between two redraws.
const REDRAW: Duration = Duration::from_millis(100);
/// Reads that end sooner than this never show a bar.
const DELAY: Duration = Duration::from_millis(250);
/// Cells of the bar itself.
const WIDTH: usize = 30;

/// A progress bar that writes to `W` (stderr unless a test gives another writer).
#[derive(Debug)]
pub struct ProgressBar<W: Write = Stderr> {
    out: W,
    label: String,
    enabled: bool,
    color: bool,
    started: Instant,
    last: Option<Instant>,
    drawn: bool,
}

impl ProgressBar<Stderr> {
    /// A bar labelled `label` on stderr; inert unless stderr is a terminal. Colour follows the
    /// NO_COLOR convention (any non-empty value turns it off).
    pub fn new(label: &str) -> Self {
        let err = std::io::stderr();
        let enabled = err.is_terminal();
        let color = std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
        ProgressBar::to_writer(err, label, enabled, color)
    }
}

impl<W: Write> ProgressBar<W> {
    /// A bar on any writer: drawn only when `enabled`, coloured when `color`.
    pub fn to_writer(out: W, label: &str, enabled: bool, color: bool) -> Self {
        ProgressBar {
            out,
            label: label.to_owned(),
            enabled,
            color,
            started: Instant::now(),
            last: None,
            drawn: false,
        }
    }

    /// Reports `done` of `total` bytes; redraws if the last redraw is old enough.
    pub fn update(&mut self, done: u64, total: u64) {
        self.update_at(done, total, Instant::now());
    }

    /// [`update`](Self::update) at a given time (so the throttling can be tested).
    pub fn update_at(&mut self, done: u64, total: u64, now: Instant) {
        if !self.enabled || now.duration_since(self.started) < DELAY {
            return;
        }
        if let Some(last) = self.last
            && now.duration_since(last) < REDRAW
        {
            return;
        }
        self.last = Some(now);
        let line = render(&self.label, done, total, WIDTH, self.color);
        // A progress bar must never fail a read: a closed stderr only loses the bar.
        let _ = write!(self.out, "\r{line}\x1b[K");
        let _ = self.out.flush();
        self.drawn = true;
    }

    /// Erases the bar, if one was drawn. Also done on drop.
    pub fn finish(&mut self) {
        if self.drawn {
            let _ = write!(self.out, "\r\x1b[2K");
            let _ = self.out.flush();
            self.drawn = false;
        }
    }

    /// The writer, for tests.
    pub fn writer(&self) -> &W {
        &self.out
    }
}

impl<W: Write> Drop for ProgressBar<W> {
    fn drop(&mut self) {
        self.finish();
    }
}

/// The bar's text for `done` of `total` bytes: `label [#####-----]  50%  1.2 / 2.4 MB`, with
/// `width` cells of bar; the filled part is cyan when `color`. A zero total reads as complete.
pub fn render(label: &str, done: u64, total: u64, width: usize, color: bool) -> String {
    let fraction = if total == 0 {
        1.0
    } else {
        (done.min(total) as f64) / (total as f64)
    };
    let filled = ((fraction * width as f64).floor() as usize).min(width);
    let percent = (fraction * 100.0).floor() as u64;
    let bar_done = "#".repeat(filled);
    let bar_left = "-".repeat(width - filled);
    let bar = if color {
        format!("\x1b[36m{bar_done}\x1b[0m{bar_left}")
    } else {
        format!("{bar_done}{bar_left}")
    };
    format!(
        "{label} [{bar}] {percent:>3}%  {} / {} MB",
        megabytes(done),
        megabytes(total)
    )
}

/// Bytes in megabytes (10^6) with one decimal.
fn megabytes(bytes: u64) -> String {
    format!("{:.1}", bytes as f64 / 1e6)
}
