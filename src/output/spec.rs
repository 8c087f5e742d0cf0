//! What every table shares: its description, the binary header and trailer, and the byte sink.
//!
//! The byte layout is documented in `firmware-formats/full-table.md`; the
//! constants here are the single source of it in Rust.

use std::io::{BufWriter, Write};

use super::error::OutputError;
use super::marks::{MARK_LEN, MARKS_AT, Mark};
use crate::model::WireOrder;

/// Magic of a full binary table: every frame stored.
pub const MAGIC_FULL: [u8; 4] = *b"GSTF";
/// Magic of a compact binary table: segments of literal frames, holds and fades.
pub const MAGIC_COMPACT: [u8; 4] = *b"GSTC";
/// The newest format version, which the readers accept with version 1:
/// version 2 adds resync marks to the header. A table without marks is
/// written as version 1, byte for byte as before.
pub const FORMAT_VERSION: u16 = 2;
/// Header length written by version 1, bytes (readers accept longer headers and skip the rest).
pub const HEADER_LEN: usize = 36;
/// Trailer length, bytes: data length, segment count, CRC-32.
pub const TRAILER_LEN: usize = 12;
/// Flag bits 0..=15 must be understood by a reader; none is defined in version 1.
pub const REQUIRED_FLAGS_MASK: u32 = 0x0000_ffff;

/// Description of a table, known before the first frame: rate, size and wire order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TableSpec {
    /// Frames per second the prop plays the table at (Hz), at least 1.
    pub frame_rate_hz: u32,
    /// LEDs per frame, at least 1.
    pub leds: u32,
    /// Byte order of each LED on the wire (binary forms only; CSV is always R,G,B).
    pub order: WireOrder,
    /// Number of frames that will be pushed.
    pub frame_count: u32,
}

/// Which binary form a table (or a C header's embedded table) takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TableForm {
    /// Every frame stored in full (`GSTF`).
    Full,
    /// Runs and linear fades stored as segments, with an index (`GSTC`).
    Compact,
    /// The show as a program the player evaluates (`GSPR`), made from the
    /// prepared show, not from frames (`output::program`).
    Program,
}

impl TableForm {
    /// Its name: `full`, `compact`, `program`.
    pub fn name(self) -> &'static str {
        match self {
            TableForm::Full => "full",
            TableForm::Compact => "compact",
            TableForm::Program => "program",
        }
    }
}

/// Bytes of a table header holding `marks` resync marks: 36 (version 1)
/// without marks, `40 + 8 * marks` (version 2) with them.
pub fn header_len(marks: usize) -> usize {
    if marks == 0 {
        HEADER_LEN
    } else {
        MARKS_AT + MARK_LEN * marks
    }
}

impl TableSpec {
    /// Bytes of one frame on the wire: `leds * bytes_per_led`.
    pub fn frame_size(&self) -> u64 {
        u64::from(self.leds) * self.order.bytes_per_led() as u64
    }

    /// Checks that the table can be stored: rate and LEDs non-zero, every size within `u32`.
    pub fn validate(&self) -> Result<(), OutputError> {
        if self.frame_rate_hz == 0 {
            return Err(OutputError::BadSpec(
                "frame rate must be at least 1 Hz".into(),
            ));
        }
        if self.leds == 0 {
            return Err(OutputError::BadSpec(
                "a table needs at least one LED".into(),
            ));
        }
        if self.frame_size() > u64::from(u32::MAX) {
            return Err(OutputError::BadSpec(format!(
                "{} LEDs make a frame larger than 4 GiB",
                self.leds
            )));
        }
        let full = self.frame_size() * u64::from(self.frame_count);
        if full > u64::from(u32::MAX) {
            return Err(OutputError::BadSpec(format!(
                "{} frames of {} bytes do not fit in a table (4 GiB at most)",
                self.frame_count,
                self.frame_size()
            )));
        }
        Ok(())
    }

    /// The version-1 header (36 bytes, little-endian) with the given magic.
    pub fn header(&self, magic: [u8; 4]) -> [u8; HEADER_LEN] {
        let mut h = [0u8; HEADER_LEN];
        h[0..4].copy_from_slice(&magic);
        h[4..6].copy_from_slice(&1u16.to_le_bytes());
        h[6..8].copy_from_slice(&(HEADER_LEN as u16).to_le_bytes());
        // 8..12 flags: none in version 1.
        h[12..16].copy_from_slice(&self.frame_rate_hz.to_le_bytes());
        h[16..20].copy_from_slice(&self.leds.to_le_bytes());
        h[20..24].copy_from_slice(&self.frame_count.to_le_bytes());
        h[24] = self.order.bytes_per_led() as u8;
        // 25..28 reserved, zero.
        h[28..32].copy_from_slice(&self.order.letters());
        // validate() keeps frame_size within u32; saturate for an unvalidated spec.
        let fs = u32::try_from(self.frame_size()).unwrap_or(u32::MAX);
        h[32..36].copy_from_slice(&fs.to_le_bytes());
        h
    }

    /// The header of a table with resync marks `marks`: the version-1
    /// header when there are none, else version 2 (`header_len(marks)`
    /// bytes: the version-1 fields, the mark count, then each mark's frame
    /// and bar). The caller checks the marks (`marks::check_marks`).
    pub fn header_with_marks(&self, magic: [u8; 4], marks: &[Mark]) -> Vec<u8> {
        let mut h = self.header(magic).to_vec();
        if marks.is_empty() {
            return h;
        }
        h[4..6].copy_from_slice(&FORMAT_VERSION.to_le_bytes());
        // check_marks keeps the length within u16.
        let len = u16::try_from(header_len(marks.len())).unwrap_or(u16::MAX);
        h[6..8].copy_from_slice(&len.to_le_bytes());
        h.extend_from_slice(&(marks.len() as u32).to_le_bytes());
        for m in marks {
            h.extend_from_slice(&m.frame.to_le_bytes());
            h.extend_from_slice(&m.bar.to_le_bytes());
        }
        h
    }
}

/// A buffered output that counts the bytes it passes on and keeps a running CRC-32.
pub(crate) struct Sink<W: Write> {
    out: BufWriter<W>,
    count: u64,
    crc: crc32fast::Hasher,
}

impl<W: Write> Sink<W> {
    /// Wraps `out` in a 64 KiB buffer.
    pub(crate) fn new(out: W) -> Self {
        Sink {
            out: BufWriter::with_capacity(64 * 1024, out),
            count: 0,
            crc: crc32fast::Hasher::new(),
        }
    }

    /// Writes `bytes` and adds them to the CRC.
    pub(crate) fn put(&mut self, bytes: &[u8]) -> Result<(), OutputError> {
        self.out.write_all(bytes)?;
        self.crc.update(bytes);
        self.count += bytes.len() as u64;
        Ok(())
    }

    /// Writes the CRC-32 of everything written so far (little-endian), flushes, returns the output.
    pub(crate) fn finish_with_crc(mut self) -> Result<(W, u64, u32), OutputError> {
        let crc = self.crc.clone().finalize();
        self.out.write_all(&crc.to_le_bytes())?;
        self.count += 4;
        let out = self.out.into_inner().map_err(|e| e.into_error())?;
        Ok((out, self.count, crc))
    }

    /// Flushes and returns the output without a CRC.
    pub(crate) fn finish_plain(self) -> Result<(W, u64), OutputError> {
        let count = self.count;
        let out = self.out.into_inner().map_err(|e| e.into_error())?;
        Ok((out, count))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec() -> TableSpec {
        TableSpec {
            frame_rate_hz: 500,
            leds: 72,
            order: WireOrder::Grb,
            frame_count: 120_000,
        }
    }

    #[test]
    fn header_fields_sit_at_their_documented_offsets() {
        let h = spec().header(MAGIC_FULL);
        assert_eq!(&h[0..4], b"GSTF");
        assert_eq!(u16::from_le_bytes([h[4], h[5]]), 1);
        assert_eq!(u16::from_le_bytes([h[6], h[7]]), 36);
        assert_eq!(&h[8..12], &[0, 0, 0, 0]);
        assert_eq!(u32::from_le_bytes(h[12..16].try_into().unwrap()), 500);
        assert_eq!(u32::from_le_bytes(h[16..20].try_into().unwrap()), 72);
        assert_eq!(u32::from_le_bytes(h[20..24].try_into().unwrap()), 120_000);
        assert_eq!(h[24], 3);
        assert_eq!(&h[25..28], &[0, 0, 0]);
        assert_eq!(&h[28..32], b"GRB\0");
        assert_eq!(u32::from_le_bytes(h[32..36].try_into().unwrap()), 216);
    }

    #[test]
    fn specs_that_cannot_be_stored_are_errors() {
        let ok = spec();
        assert!(ok.validate().is_ok());
        assert!(
            TableSpec {
                frame_rate_hz: 0,
                ..ok
            }
            .validate()
            .is_err()
        );
        assert!(TableSpec { leds: 0, ..ok }.validate().is_err());
        let huge = TableSpec {
            leds: 1 << 20,
            order: WireOrder::Rgbw,
            frame_count: 1 << 12,
            ..ok
        };
        assert!(huge.validate().is_err());
        // A show of zero frames is storable.
        assert!(
            TableSpec {
                frame_count: 0,
                ..ok
            }
            .validate()
            .is_ok()
        );
    }
}
