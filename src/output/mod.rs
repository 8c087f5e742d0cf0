//! Frame-table formats: CSV, the full and compact binary tables, the program
//! form, the C header, and the resync marks the binary forms carry.
//!
//! Every writer takes frames one at a time, each a slice of linear-light
//! `[r, g, b]` bytes per LED (LED 0 first, already gamma-decoded and scaled by
//! the caller), and streams them to any [`std::io::Write`]: none holds more
//! than a small buffer and the current segment, so a long show never sits in
//! memory. The caller states the table's size in a [`TableSpec`] before the
//! first frame; a writer refuses more or fewer frames than announced.
//!
//! The binary layouts are specified in `firmware-formats/` (one document per
//! format), with a reference decoder in C99. [`read_table`] is the Rust reader
//! of both binary forms, for tests and tooling.

mod c_header;
mod compact;
mod csv;
mod error;
pub mod files;
mod full;
pub mod marks;
pub mod program;
mod reader;
mod spec;

pub use c_header::{CHeaderText, CHeaderWriter, c_header_bytes, c_identifier};
pub use compact::{CompactTableWriter, FADE_FRACTION_BITS, SegmentKind};
pub use csv::CsvWriter;
pub use error::{OutputError, ReadError};
pub use files::FORMATS;
pub use full::FullTableWriter;
pub use marks::{Mark, resync_marks};
pub use reader::{TableView, read_table};
pub use spec::{
    FORMAT_VERSION, HEADER_LEN, MAGIC_COMPACT, MAGIC_FULL, REQUIRED_FLAGS_MASK, TRAILER_LEN,
    TableForm, TableSpec, header_len,
};

/// A streaming writer of one table: push every frame, then finish.
pub trait FrameWriter {
    /// Adds the next frame: one linear-light `[r, g, b]` per LED, LED 0 first.
    fn push_frame(&mut self, frame: &[[u8; 3]]) -> Result<(), OutputError>;
    /// Completes the table (index, trailer, closing text), flushes and reports sizes.
    fn finish(self) -> Result<WriteStats, OutputError>
    where
        Self: Sized;
}

/// What a writer produced.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct WriteStats {
    /// Bytes written to the output (for a C header: characters of text).
    pub bytes_written: u64,
    /// Frames written.
    pub frames: u32,
    /// Size of the binary table in bytes (the whole output for binary forms,
    /// the embedded array for a C header, `None` for CSV).
    pub table_bytes: Option<u64>,
    /// CRC-32 stored in the binary table's trailer (`None` for CSV).
    pub crc32: Option<u32>,
    /// How a compact table divided its frames (`None` for the other forms).
    pub segments: Option<SegmentStats>,
}

/// How a compact table's frames were stored: segments and frames of each kind.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct SegmentStats {
    /// Literal segments (frames stored as they are).
    pub literal_segments: u32,
    /// Frames inside literal segments.
    pub literal_frames: u32,
    /// Hold segments (one frame repeated).
    pub hold_segments: u32,
    /// Frames inside hold segments.
    pub hold_frames: u32,
    /// Fade segments (every channel a linear ramp).
    pub fade_segments: u32,
    /// Frames inside fade segments.
    pub fade_frames: u32,
}

impl SegmentStats {
    /// Segments of every kind together.
    pub fn total_segments(&self) -> u32 {
        self.literal_segments + self.hold_segments + self.fade_segments
    }
}

/// Checks a pushed frame's LED count and the frame budget; returns the frame's index.
pub(crate) fn check_frame(
    spec: &TableSpec,
    pushed: u32,
    frame: &[[u8; 3]],
) -> Result<u32, OutputError> {
    if pushed >= spec.frame_count {
        return Err(OutputError::TooManyFrames {
            expected: spec.frame_count,
        });
    }
    if frame.len() as u64 != u64::from(spec.leds) {
        return Err(OutputError::WrongLedCount {
            frame: pushed,
            expected: spec.leds,
            got: frame.len(),
        });
    }
    Ok(pushed)
}

/// Checks at `finish` that every announced frame was pushed.
pub(crate) fn check_complete(spec: &TableSpec, pushed: u32) -> Result<(), OutputError> {
    if pushed != spec.frame_count {
        return Err(OutputError::MissingFrames {
            expected: spec.frame_count,
            got: pushed,
        });
    }
    Ok(())
}
