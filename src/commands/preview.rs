//! `glowscore preview`: a long-exposure picture of a passage, as a PNG.

use std::io::{IsTerminal, Write};
use std::path::Path;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use super::Failure;
use crate::preview::{self, PreviewOptions};

/// A progress bar on stderr, shown only when stderr is a terminal and the
/// render has taken more than a second.
struct Progress {
    bar: Option<ProgressBar>,
    start: Instant,
}

impl Progress {
    fn new() -> Self {
        let bar = std::io::stderr().is_terminal().then(|| {
            let b = ProgressBar::with_draw_target(Some(1), ProgressDrawTarget::hidden());
            if let Ok(style) = ProgressStyle::with_template("rendering {bar:40} {percent:>3}%") {
                b.set_style(style);
            }
            b
        });
        Progress {
            bar,
            start: Instant::now(),
        }
    }

    fn update(&self, done: u64, total: u64) {
        if let Some(b) = &self.bar {
            if b.is_hidden() && self.start.elapsed() > Duration::from_secs(1) {
                b.set_draw_target(ProgressDrawTarget::stderr());
            }
            b.set_length(total);
            b.set_position(done);
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}

/// Renders the preview of the show at `show` with `opts` and writes it to
/// `out_png` (atomically); a line about it goes to `log`.
pub fn run(
    show: &Path,
    out_png: &Path,
    opts: &PreviewOptions,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    let prepared = super::prepare(show)?;
    let progress = Progress::new();
    let photo = preview::shoot(&prepared, opts, &|d, t| progress.update(d, t));
    progress.finish();
    let photo = photo?;
    let img = preview::develop(&photo, opts);
    preview::write_png_atomic(out_png, &img)?;
    let (t0, t1) = photo.window_s;
    writeln!(
        log,
        "{}: {}x{} pixels, shutter {t0:.3} s to {t1:.3} s, gain {:.4e} per LED-second",
        out_png.display(),
        img.width(),
        img.height(),
        photo.gain
    )
    .map_err(Failure::output("the summary"))
}
