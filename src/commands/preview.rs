//! `glowscore preview`: a long-exposure picture of a passage, as a PNG or a JPEG.

use std::fs;
use std::io::{IsTerminal, Write};
use std::path::Path;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use image::codecs::jpeg::JpegEncoder;
use image::{ExtendedColorType, ImageEncoder, RgbImage};

use super::Failure;
use crate::preview::{self, PreviewError, PreviewOptions};

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

/// The picture formats `preview --out` writes, chosen by the file's
/// extension (in any case).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PictureFormat {
    /// `.png`: lossless, 8-bit RGB.
    Png,
    /// `.jpg` or `.jpeg`: baseline JPEG at [`JPEG_QUALITY`].
    Jpeg,
}

/// The quality of the JPEGs `preview` writes (1 to 100).
pub const JPEG_QUALITY: u8 = 92;

impl PictureFormat {
    /// The format of a file named `path`, or a message naming the
    /// extensions accepted.
    pub fn of(path: &Path) -> Result<PictureFormat, Failure> {
        let ext = path
            .extension()
            .map(|e| e.to_string_lossy().to_ascii_lowercase());
        match ext.as_deref() {
            Some("png") => Ok(PictureFormat::Png),
            Some("jpg" | "jpeg") => Ok(PictureFormat::Jpeg),
            _ => Err(Failure::Option(format!(
                "--out `{}`: the picture's name must end in .png, .jpg or .jpeg",
                crate::diag::escape(&path.display().to_string())
            ))),
        }
    }
}

/// Writes `img` to `path` in `format`: first to a temporary file beside
/// it, then renamed over `path`, so that a failure never leaves half a
/// picture (an earlier one stays as it was). The folder is made if missing.
pub fn write_picture(path: &Path, img: &RgbImage, format: PictureFormat) -> Result<(), Failure> {
    let io = |source: std::io::Error| PreviewError::Io {
        path: path.to_path_buf(),
        source,
    };
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        fs::create_dir_all(dir).map_err(io)?;
    }
    if format == PictureFormat::Png {
        return Ok(preview::write_png_atomic(path, img)?);
    }
    Ok(preview::png::write_atomic(path, &mut |w| {
        JpegEncoder::new_with_quality(w, JPEG_QUALITY)
            .write_image(
                img.as_raw(),
                img.width(),
                img.height(),
                ExtendedColorType::Rgb8,
            )
            .map_err(PreviewError::from)
    })?)
}

/// Renders the preview of the show at `show` with `opts` and writes it to
/// `out` (a PNG or a JPEG, by its extension; atomically, making its folder
/// if missing); a line about it goes to `log`.
pub fn run(
    show: &Path,
    out: &Path,
    opts: &PreviewOptions,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    let format = PictureFormat::of(out)?;
    let prepared = super::prepare(show)?;
    let progress = Progress::new();
    let photo = preview::shoot(&prepared, opts, &|d, t| progress.update(d, t));
    progress.finish();
    let photo = photo?;
    let img = preview::develop(&photo, opts);
    write_picture(out, &img, format)?;
    let (t0, t1) = photo.window_s;
    writeln!(
        log,
        "{}: {}x{} pixels, shutter {t0:.3} s to {t1:.3} s, gain {:.4e} per LED-second",
        crate::diag::escape(&out.display().to_string()),
        img.width(),
        img.height(),
        photo.gain
    )
    .map_err(Failure::output("the summary"))
}
