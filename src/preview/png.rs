//! PNG output: 8-bit RGB via the image crate, written atomically.

use std::fs::{self, File};
use std::io::{BufWriter, Write};
use std::path::Path;

use image::codecs::png::{CompressionType, FilterType, PngEncoder};
use image::{ExtendedColorType, ImageEncoder, RgbImage};

use super::PreviewError;

/// Encodes `img` (8-bit sRGB) as a PNG into `out`.
pub fn encode_png(img: &RgbImage, out: &mut dyn Write) -> Result<(), PreviewError> {
    let enc = PngEncoder::new_with_quality(out, CompressionType::Fast, FilterType::Adaptive);
    enc.write_image(
        img.as_raw(),
        img.width(),
        img.height(),
        ExtendedColorType::Rgb8,
    )
    .map_err(PreviewError::from)
}

/// Writes `img` as a PNG to `path`: first to a temporary file in the same
/// directory, then renamed over `path`, so a failure never leaves a
/// half-written picture (and an earlier one stays as it was).
pub fn write_png_atomic(path: &Path, img: &RgbImage) -> Result<(), PreviewError> {
    write_atomic(path, &mut |w| encode_png(img, w))
}

/// Writes what `encode` writes to `path` atomically: into a temporary file
/// beside it, flushed to the disk, then renamed over `path`; the temporary
/// file is removed on failure.
pub fn write_atomic(
    path: &Path,
    encode: &mut dyn FnMut(&mut dyn Write) -> Result<(), PreviewError>,
) -> Result<(), PreviewError> {
    let io = |source: std::io::Error| PreviewError::Io {
        path: path.to_path_buf(),
        source,
    };
    let name = path
        .file_name()
        .ok_or_else(|| io(std::io::Error::other("not a file name")))?
        .to_string_lossy()
        .into_owned();
    let tmp = path.with_file_name(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let file = File::create(&tmp).map_err(io)?;
        let mut w = BufWriter::new(file);
        encode(&mut w)?;
        let file = w.into_inner().map_err(|e| io(e.into_error()))?;
        file.sync_all().map_err(io)?;
        fs::rename(&tmp, path).map_err(io)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}
