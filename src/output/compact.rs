//! The compact binary table (`GSTC`): segments of literal frames, holds and exact linear fades.
//!
//! Layout and the fade rule: `firmware-formats/compact-table.md`. In short,
//! channel `c` of frame `j` (counted from 0 inside a fade) is
//! `(a_c * 65536 + s_c * j + 32768) >> 16`, where `a_c` is the byte of the fade's
//! first frame and `s_c` a signed 32-bit step in 1/65536ths of a byte per frame.
//!
//! The encoder is greedy and linear-time: from the first frame not yet stored it
//! extends one candidate segment frame by frame. For every channel it keeps the
//! closed interval of steps `s` that reproduce every frame so far, byte for
//! byte; the interval only shrinks, so the candidate ends at the first frame that
//! empties one (a hold is the case where `s = 0` stays inside every interval).
//! Only the few frames of a candidate too short to pay for its index entry are
//! buffered, so memory is a few frames plus the index (12 bytes a segment).

use std::io::Write;

use super::marks::{Mark, check_marks};
use super::spec::{MAGIC_COMPACT, Sink, TableSpec};
use super::{FrameWriter, OutputError, SegmentStats, WriteStats, check_complete, check_frame};

/// Fractional bits of a fade step: steps are in units of 2^-16 of a byte per frame.
pub const FADE_FRACTION_BITS: u32 = 16;
/// Bytes of one segment index entry.
pub(crate) const INDEX_ENTRY_LEN: usize = 12;

const ONE: i64 = 1 << FADE_FRACTION_BITS;
const HALF: i64 = ONE / 2;
/// Index bytes a short segment costs: its own entry and the entry that resumes the literal run.
const SEGMENT_OVERHEAD: u64 = 2 * INDEX_ENTRY_LEN as u64;

/// How a compact segment stores its frames.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SegmentKind {
    /// Every frame stored as it is (`frames * frame_size` data bytes).
    Literal,
    /// One frame stored, repeated for the whole segment (`frame_size` data bytes).
    Hold,
    /// First frame and one signed 32-bit step per channel (`5 * frame_size` data bytes).
    Fade,
}

impl SegmentKind {
    /// The kind's code in an index entry (0, 1, 2).
    pub fn code(self) -> u8 {
        match self {
            SegmentKind::Literal => 0,
            SegmentKind::Hold => 1,
            SegmentKind::Fade => 2,
        }
    }

    /// The kind with index code `code`, if any.
    pub fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(SegmentKind::Literal),
            1 => Some(SegmentKind::Hold),
            2 => Some(SegmentKind::Fade),
            _ => None,
        }
    }

    /// Data bytes of a segment of this kind holding `frames` frames of `frame_size` bytes.
    pub fn data_len(self, frames: u64, frame_size: u64) -> u64 {
        match self {
            SegmentKind::Literal => frames * frame_size,
            SegmentKind::Hold => frame_size,
            SegmentKind::Fade => 5 * frame_size,
        }
    }
}

/// Floor of `a / b` for `b > 0`.
fn floor_div(a: i64, b: i64) -> i64 {
    a.div_euclid(b)
}

/// Ceiling of `a / b` for `b > 0`.
fn ceil_div(a: i64, b: i64) -> i64 {
    -(-a).div_euclid(b)
}

/// Value of a fade channel at frame `j`: `(a * 65536 + s * j + 32768) >> 16` (may leave 0..=255).
pub(crate) fn fade_value(a: u8, s: i32, j: u64) -> i64 {
    // |s * j| < 2^31 * 2^32 = 2^63: no overflow for any u32 j.
    (i64::from(a) * ONE + i64::from(s) * j as i64 + HALF) >> FADE_FRACTION_BITS
}

/// The step written for a fade channel whose valid steps are `lo..=hi` (non-empty, within i32):
/// the one divisible by the highest power of two, nearest zero among those, so that an exact
/// ramp of `d` bytes a frame is stored as `d * 65536` and a constant channel as 0.
fn simplest_step(lo: i64, hi: i64) -> i32 {
    for bit in (0..=31).rev() {
        let m = 1i64 << bit;
        // Multiples of m in [lo, hi]: from ceil(lo / m) to floor(hi / m).
        let first = ceil_div(lo, m);
        let last = floor_div(hi, m);
        if first <= last {
            return (0i64.clamp(first, last) * m) as i32;
        }
    }
    // Unreachable for lo <= hi (every integer is a multiple of 1); keep a valid value anyway.
    lo as i32
}

/// One segment index entry, as written after the data area.
#[derive(Clone, Copy)]
struct Entry {
    first_frame: u32,
    data_offset: u32,
    kind: SegmentKind,
}

/// Streams a compact binary table: literal runs, holds and exact linear fades, with a segment index.
pub struct CompactTableWriter<W: Write> {
    sink: Sink<W>,
    spec: TableSpec,
    fs: usize,
    pushed: u32,
    /// Frames already stored in segments.
    emitted: u32,
    data_len: u64,
    index: Vec<Entry>,
    literal_open: bool,
    stats: SegmentStats,
    /// Shortest hold worth its own segment.
    hold_min: u32,
    /// Shortest fade worth its own segment; shorter candidates are buffered.
    fade_min: u32,
    cand_len: u32,
    /// Frames at the start of the candidate equal to its first frame.
    cand_hold: u32,
    cand_first: Vec<u8>,
    lo: Vec<i64>,
    hi: Vec<i64>,
    next_lo: Vec<i64>,
    next_hi: Vec<i64>,
    /// The candidate's frames while it is shorter than `fade_min`.
    cand_buf: Vec<u8>,
    /// Frames pushed but not yet given to the candidate.
    pending: Vec<u8>,
    wire: Vec<u8>,
}

impl<W: Write> CompactTableWriter<W> {
    /// Validates `spec` and writes the header to `out`.
    pub fn new(out: W, spec: TableSpec) -> Result<Self, OutputError> {
        Self::with_marks(out, spec, &[])
    }

    /// Validates `spec` and the resync marks `marks` and writes the header
    /// (version 2, holding the marks, unless there are none) to `out`.
    pub fn with_marks(out: W, spec: TableSpec, marks: &[Mark]) -> Result<Self, OutputError> {
        spec.validate()?;
        check_marks(marks, spec.frame_count)?;
        let fs = spec.frame_size() as usize;
        let fs64 = spec.frame_size();
        // Smallest h with (h - 1) * fs > overhead, and smallest n with (n - 5) * fs > overhead.
        let hold_min = (SEGMENT_OVERHEAD / fs64 + 2) as u32;
        let fade_min = (SEGMENT_OVERHEAD / fs64 + 6) as u32;
        let mut sink = Sink::new(out);
        sink.put(&spec.header_with_marks(MAGIC_COMPACT, marks))?;
        Ok(CompactTableWriter {
            sink,
            spec,
            fs,
            pushed: 0,
            emitted: 0,
            data_len: 0,
            index: Vec::new(),
            literal_open: false,
            stats: SegmentStats::default(),
            hold_min,
            fade_min,
            cand_len: 0,
            cand_hold: 0,
            cand_first: vec![0; fs],
            lo: vec![0; fs],
            hi: vec![0; fs],
            next_lo: vec![0; fs],
            next_hi: vec![0; fs],
            cand_buf: Vec::with_capacity(fs * fade_min as usize),
            pending: Vec::with_capacity(fs * (fade_min as usize + 1)),
            wire: vec![0; fs],
        })
    }

    /// Like [`FrameWriter::finish`], and also hands back the output.
    pub fn finish_into_inner(mut self) -> Result<(W, WriteStats), OutputError> {
        check_complete(&self.spec, self.pushed)?;
        self.drain(true)?;
        let mut sink = self.sink;
        for e in &self.index {
            let mut b = [0u8; INDEX_ENTRY_LEN];
            b[0..4].copy_from_slice(&e.first_frame.to_le_bytes());
            b[4..8].copy_from_slice(&e.data_offset.to_le_bytes());
            b[8] = e.kind.code();
            sink.put(&b)?;
        }
        // data_len <= the full table's data (every segment costs at most its frames), so u32.
        sink.put(&(self.data_len as u32).to_le_bytes())?;
        sink.put(&(self.index.len() as u32).to_le_bytes())?;
        let (out, bytes, crc) = sink.finish_with_crc()?;
        Ok((
            out,
            WriteStats {
                bytes_written: bytes,
                frames: self.pushed,
                table_bytes: Some(bytes),
                crc32: Some(crc),
                segments: Some(self.stats),
            },
        ))
    }

    /// Feeds pending frames to the candidate; with `last`, stores everything left.
    fn drain(&mut self, last: bool) -> Result<(), OutputError> {
        let mut pending = std::mem::take(&mut self.pending);
        let fs = self.fs;
        let mut pos = 0;
        loop {
            let from = if pos + fs <= pending.len() {
                let frame = &pending[pos..pos + fs];
                if self.cand_len == 0 {
                    self.start(frame);
                    pos += fs;
                    continue;
                } else if self.try_extend(frame) {
                    pos += fs;
                    continue;
                }
                self.resolve()?
            } else if last && self.cand_len > 0 {
                self.resolve()?
            } else {
                break;
            };
            // The candidate's frames after the stored prefix are fed again,
            // ahead of the pending ones: in the room the consumed frames
            // left, when there is enough (the usual case), else in a new queue.
            let back = &self.cand_buf[from..];
            if !back.is_empty() {
                if pos >= back.len() {
                    pending[pos - back.len()..pos].copy_from_slice(back);
                    pos -= back.len();
                } else {
                    let mut next = Vec::with_capacity(back.len() + pending.len() - pos);
                    next.extend_from_slice(back);
                    next.extend_from_slice(&pending[pos..]);
                    pending = next;
                    pos = 0;
                }
            }
            self.cand_buf.clear();
        }
        pending.drain(..pos);
        self.pending = pending;
        Ok(())
    }

    /// Starts a candidate segment at `frame`.
    fn start(&mut self, frame: &[u8]) {
        self.cand_first.copy_from_slice(frame);
        self.cand_len = 1;
        self.cand_hold = 1;
        self.lo.fill(i64::from(i32::MIN));
        self.hi.fill(i64::from(i32::MAX));
        self.cand_buf.clear();
        self.cand_buf.extend_from_slice(frame);
    }

    /// Adds `frame` to the candidate if some step per channel still reproduces every frame.
    fn try_extend(&mut self, frame: &[u8]) -> bool {
        let j = i64::from(self.cand_len);
        for (c, (&now, &first)) in frame.iter().zip(&self.cand_first).enumerate() {
            let v = i64::from(now) - i64::from(first);
            // floor((s*j + HALF) / ONE) == v  <=>  v*ONE - HALF <= s*j <= v*ONE + HALF - 1
            let (lo, hi) = if j == 1 {
                // The second frame: no division needed.
                (v * ONE - HALF, v * ONE + HALF - 1)
            } else {
                (
                    ceil_div(v * ONE - HALF, j),
                    floor_div(v * ONE + HALF - 1, j),
                )
            };
            let lo = self.lo[c].max(lo);
            let hi = self.hi[c].min(hi);
            if lo > hi {
                return false;
            }
            self.next_lo[c] = lo;
            self.next_hi[c] = hi;
        }
        std::mem::swap(&mut self.lo, &mut self.next_lo);
        std::mem::swap(&mut self.hi, &mut self.next_hi);
        if self.cand_hold == self.cand_len && frame == self.cand_first.as_slice() {
            self.cand_hold += 1;
        }
        self.cand_len += 1;
        if self.cand_len < self.fade_min {
            self.cand_buf.extend_from_slice(frame);
        } else if self.cand_len == self.fade_min {
            self.cand_buf.clear();
        }
        true
    }

    /// Stores a prefix of the candidate; returns the offset in `cand_buf` of
    /// its remaining buffered frames, which must be fed again (the caller
    /// then clears `cand_buf`).
    fn resolve(&mut self) -> Result<usize, OutputError> {
        let fs = self.fs;
        let len = self.cand_len;
        let hold = self.cand_hold;
        let from = if len >= self.fade_min {
            if hold == len {
                self.emit_hold(len)?;
            } else {
                self.emit_fade(len)?;
            }
            // `try_extend` emptied the buffer at `fade_min` frames.
            self.cand_buf.len()
        } else if hold >= self.hold_min {
            self.emit_hold(hold)?;
            hold as usize * fs
        } else {
            self.open_literal();
            self.sink.put(&self.cand_buf[..fs])?;
            self.data_len += fs as u64;
            self.emitted += 1;
            self.stats.literal_frames += 1;
            fs
        };
        self.cand_len = 0;
        self.cand_hold = 0;
        Ok(from)
    }

    /// Appends an index entry for a segment starting at the next frame.
    fn open_segment(&mut self, kind: SegmentKind) {
        self.index.push(Entry {
            first_frame: self.emitted,
            data_offset: self.data_len as u32,
            kind,
        });
    }

    /// Opens a literal segment for the next frame, unless one is open.
    fn open_literal(&mut self) {
        if !self.literal_open {
            self.open_segment(SegmentKind::Literal);
            self.literal_open = true;
            self.stats.literal_segments += 1;
        }
    }

    fn emit_hold(&mut self, frames: u32) -> Result<(), OutputError> {
        self.open_segment(SegmentKind::Hold);
        self.literal_open = false;
        self.sink.put(&self.cand_first)?;
        self.data_len += self.fs as u64;
        self.emitted += frames;
        self.stats.hold_segments += 1;
        self.stats.hold_frames += frames;
        Ok(())
    }

    fn emit_fade(&mut self, frames: u32) -> Result<(), OutputError> {
        self.open_segment(SegmentKind::Fade);
        self.literal_open = false;
        self.sink.put(&self.cand_first)?;
        for c in 0..self.fs {
            let s = simplest_step(self.lo[c], self.hi[c]);
            self.sink.put(&s.to_le_bytes())?;
        }
        self.data_len += 5 * self.fs as u64;
        self.emitted += frames;
        self.stats.fade_segments += 1;
        self.stats.fade_frames += frames;
        Ok(())
    }
}

impl<W: Write> FrameWriter for CompactTableWriter<W> {
    fn push_frame(&mut self, frame: &[[u8; 3]]) -> Result<(), OutputError> {
        check_frame(&self.spec, self.pushed, frame)?;
        self.spec.order.encode_frame(frame, &mut self.wire);
        self.pending.extend_from_slice(&self.wire);
        self.pushed += 1;
        self.drain(false)
    }

    fn finish(self) -> Result<WriteStats, OutputError> {
        self.finish_into_inner().map(|(_, s)| s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn floor_and_ceil_division_round_toward_minus_and_plus_infinity() {
        assert_eq!(floor_div(7, 2), 3);
        assert_eq!(floor_div(-7, 2), -4);
        assert_eq!(ceil_div(7, 2), 4);
        assert_eq!(ceil_div(-7, 2), -3);
        assert_eq!(ceil_div(-8, 2), -4);
    }

    #[test]
    fn fade_rule_rounds_half_up_and_hits_both_ends() {
        // Step 0.5 byte/frame from 10: 10, 10.5 -> 11, 11, 11.5 -> 12.
        let s = (ONE / 2) as i32;
        let v: Vec<i64> = (0..5).map(|j| fade_value(10, s, j)).collect();
        assert_eq!(v, [10, 11, 11, 12, 12]);
        // Step -0.5: 10, 9.5 -> 10 (ties go up), 9, 8.5 -> 9.
        let v: Vec<i64> = (0..4).map(|j| fade_value(10, -s, j)).collect();
        assert_eq!(v, [10, 10, 9, 9]);
        assert_eq!(fade_value(0, 255 * ONE as i32, 1), 255);
        assert_eq!(fade_value(255, -255 * ONE as i32, 1), 0);
    }

    #[test]
    fn simplest_step_prefers_round_binary_values() {
        assert_eq!(simplest_step(-5, 7), 0);
        assert_eq!(simplest_step(651_720, 659_000), 655_360); // 10 bytes a frame
        assert_eq!(simplest_step(-40_000, -30_000), -32_768); // -0.5 byte a frame
        assert_eq!(simplest_step(3, 3), 3);
        assert_eq!(simplest_step(5, 7), 6);
        assert_eq!(simplest_step(-7, -5), -6);
        let (lo, hi) = (i64::from(i32::MIN), i64::from(i32::MAX));
        assert_eq!(simplest_step(lo, hi), 0);
        assert_eq!(simplest_step(lo, lo), i32::MIN);
        assert_eq!(simplest_step(hi, hi), i32::MAX);
    }

    #[test]
    fn index_codes_round_trip() {
        for k in [SegmentKind::Literal, SegmentKind::Hold, SegmentKind::Fade] {
            assert_eq!(SegmentKind::from_code(k.code()), Some(k));
        }
        assert_eq!(SegmentKind::from_code(3), None);
    }
}
