//! The full binary table (`GSTF`): header, every frame in wire order, trailer with CRC-32.
//!
//! Layout: `firmware-formats/full-table.md`.

use std::io::Write;

use super::marks::{Mark, check_marks};
use super::spec::{MAGIC_FULL, Sink, TableSpec};
use super::{FrameWriter, OutputError, WriteStats, check_complete, check_frame};

/// Streams a full binary table: every frame stored, `frame_size` bytes each.
pub struct FullTableWriter<W: Write> {
    sink: Sink<W>,
    spec: TableSpec,
    pushed: u32,
    wire: Vec<u8>,
}

impl<W: Write> FullTableWriter<W> {
    /// Validates `spec` and writes the header to `out`.
    pub fn new(out: W, spec: TableSpec) -> Result<Self, OutputError> {
        Self::with_marks(out, spec, &[])
    }

    /// Validates `spec` and the resync marks `marks` and writes the header
    /// (version 2, holding the marks, unless there are none) to `out`.
    pub fn with_marks(out: W, spec: TableSpec, marks: &[Mark]) -> Result<Self, OutputError> {
        spec.validate()?;
        check_marks(marks, spec.frame_count)?;
        let mut sink = Sink::new(out);
        sink.put(&spec.header_with_marks(MAGIC_FULL, marks))?;
        Ok(FullTableWriter {
            sink,
            spec,
            pushed: 0,
            wire: vec![0; spec.frame_size() as usize],
        })
    }

    /// Like [`FrameWriter::finish`], and also hands back the output.
    pub fn finish_into_inner(self) -> Result<(W, WriteStats), OutputError> {
        check_complete(&self.spec, self.pushed)?;
        let mut sink = self.sink;
        let data_len = self.spec.frame_size() * u64::from(self.spec.frame_count);
        // validate() bounds data_len by u32::MAX.
        sink.put(&(data_len as u32).to_le_bytes())?;
        sink.put(&0u32.to_le_bytes())?;
        let (out, bytes, crc) = sink.finish_with_crc()?;
        Ok((
            out,
            WriteStats {
                bytes_written: bytes,
                frames: self.pushed,
                table_bytes: Some(bytes),
                crc32: Some(crc),
                segments: None,
            },
        ))
    }
}

impl<W: Write> FrameWriter for FullTableWriter<W> {
    fn push_frame(&mut self, frame: &[[u8; 3]]) -> Result<(), OutputError> {
        check_frame(&self.spec, self.pushed, frame)?;
        self.spec.order.encode_frame(frame, &mut self.wire);
        self.sink.put(&self.wire)?;
        self.pushed += 1;
        Ok(())
    }

    fn finish(self) -> Result<WriteStats, OutputError> {
        self.finish_into_inner().map(|(_, s)| s)
    }
}
