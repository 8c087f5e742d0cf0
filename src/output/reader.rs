//! Reader of both binary forms: validates header, length, CRC-32, index and
//! resync marks, then reads any frame.
//!
//! It follows `firmware-formats/full-table.md` and `compact-table.md` step by
//! step, as the C reference decoder does, reads versions 1 and 2, and never
//! allocates.

use super::compact::{INDEX_ENTRY_LEN, SegmentKind, fade_value};
use super::error::ReadError;
use super::marks::{MARK_LEN, MARKS_AT, Mark};
use super::spec::{
    FORMAT_VERSION, HEADER_LEN, MAGIC_COMPACT, MAGIC_FULL, REQUIRED_FLAGS_MASK, TRAILER_LEN,
    TableForm, TableSpec,
};
use crate::model::WireOrder;

/// A validated binary table borrowed from its bytes; frames are read on demand, in wire order.
#[derive(Clone, Copy, Debug)]
pub struct TableView<'a> {
    form: TableForm,
    spec: TableSpec,
    frame_size: usize,
    data: &'a [u8],
    index: &'a [u8],
    segment_count: u32,
    crc32: u32,
    version: u16,
    /// The resync marks, `MARK_LEN` bytes each (empty in version 1).
    marks: &'a [u8],
}

fn u16_at(b: &[u8], at: usize) -> u16 {
    u16::from_le_bytes([b[at], b[at + 1]])
}

fn u32_at(b: &[u8], at: usize) -> u32 {
    u32::from_le_bytes([b[at], b[at + 1], b[at + 2], b[at + 3]])
}

/// Validates `bytes` as a full (`GSTF`) or compact (`GSTC`) table, CRC-32 included.
pub fn read_table(bytes: &[u8]) -> Result<TableView<'_>, ReadError> {
    let len = bytes.len();
    if len < HEADER_LEN + TRAILER_LEN {
        return Err(ReadError::TooShort(len));
    }
    let magic = [bytes[0], bytes[1], bytes[2], bytes[3]];
    let form = match magic {
        MAGIC_FULL => TableForm::Full,
        MAGIC_COMPACT => TableForm::Compact,
        _ => return Err(ReadError::BadMagic(magic)),
    };
    let version = u16_at(bytes, 4);
    if !(1..=FORMAT_VERSION).contains(&version) {
        return Err(ReadError::Version(version));
    }
    let header_len = usize::from(u16_at(bytes, 6));
    if header_len < HEADER_LEN {
        return Err(ReadError::BadHeader("header_len"));
    }
    if header_len + TRAILER_LEN > len {
        return Err(ReadError::TooShort(len));
    }
    let flags = u32_at(bytes, 8);
    if flags & REQUIRED_FLAGS_MASK != 0 {
        return Err(ReadError::UnknownFlags(flags & REQUIRED_FLAGS_MASK));
    }
    let frame_rate_hz = u32_at(bytes, 12);
    if frame_rate_hz == 0 {
        return Err(ReadError::BadHeader("frame_rate_hz"));
    }
    let leds = u32_at(bytes, 16);
    if leds == 0 {
        return Err(ReadError::BadHeader("led_count"));
    }
    let frame_count = u32_at(bytes, 20);
    let bpl = bytes[24];
    if bytes[25..28] != [0, 0, 0] {
        return Err(ReadError::BadHeader("reserved"));
    }
    let order = WireOrder::from_letters([bytes[28], bytes[29], bytes[30], bytes[31]])
        .ok_or(ReadError::BadHeader("channel_order"))?;
    if usize::from(bpl) != order.bytes_per_led() {
        return Err(ReadError::BadHeader("bytes_per_led"));
    }
    let frame_size = u64::from(u32_at(bytes, 32));
    if frame_size != u64::from(leds) * u64::from(bpl) {
        return Err(ReadError::BadHeader("frame_size"));
    }

    let t = len - TRAILER_LEN;
    let data_len = u64::from(u32_at(bytes, t));
    let segment_count = u32_at(bytes, t + 4);
    let stored = u32_at(bytes, t + 8);
    let expected = header_len as u64
        + data_len
        + INDEX_ENTRY_LEN as u64 * u64::from(segment_count)
        + TRAILER_LEN as u64;
    if expected != len as u64 {
        return Err(ReadError::Length {
            expected,
            actual: len as u64,
        });
    }
    let computed = crc32fast::hash(&bytes[..len - 4]);
    if computed != stored {
        return Err(ReadError::Crc { stored, computed });
    }
    let marks = if version >= 2 {
        read_marks(&bytes[..header_len], frame_count)?
    } else {
        &[]
    };

    let data_end = header_len + data_len as usize;
    let view = TableView {
        form,
        spec: TableSpec {
            frame_rate_hz,
            leds,
            order,
            frame_count,
        },
        frame_size: frame_size as usize,
        data: &bytes[header_len..data_end],
        index: &bytes[data_end..t],
        segment_count,
        crc32: stored,
        version,
        marks,
    };
    match form {
        TableForm::Full => {
            if segment_count != 0 {
                return Err(ReadError::BadHeader("segment_count"));
            }
            if data_len != frame_size * u64::from(frame_count) {
                return Err(ReadError::BadHeader("data_len"));
            }
        }
        // `form` came from a table magic above.
        TableForm::Compact | TableForm::Program => view.check_index()?,
    }
    Ok(view)
}

/// The marks of a version-2 header `header` (`header_len` bytes), checked:
/// they fit the header, frames below `frame_count` and not decreasing, bars
/// from 1 and increasing.
fn read_marks(header: &[u8], frame_count: u32) -> Result<&[u8], ReadError> {
    if header.len() < MARKS_AT {
        return Err(ReadError::BadHeader("header_len"));
    }
    let count = u64::from(u32_at(header, HEADER_LEN));
    let end = MARKS_AT as u64 + count * MARK_LEN as u64;
    if end > header.len() as u64 {
        return Err(ReadError::BadMarks("more marks than the header holds"));
    }
    let marks = &header[MARKS_AT..end as usize];
    let mut prev: Option<(u32, u32)> = None;
    for m in marks.chunks_exact(MARK_LEN) {
        let (frame, bar) = (u32_at(m, 0), u32_at(m, 4));
        if frame >= frame_count {
            return Err(ReadError::BadMarks("a mark past the last frame"));
        }
        if bar == 0 {
            return Err(ReadError::BadMarks("a mark of bar 0"));
        }
        if prev.is_some_and(|(f, b)| frame < f || bar <= b) {
            return Err(ReadError::BadMarks("marks out of order"));
        }
        prev = Some((frame, bar));
    }
    Ok(marks)
}

/// One decoded index entry.
struct Seg {
    first: u32,
    offset: u32,
    kind: SegmentKind,
}

impl<'a> TableView<'a> {
    /// Full or compact.
    pub fn form(&self) -> TableForm {
        self.form
    }

    /// The format version: 1, or 2 for a table with resync marks.
    pub fn version(&self) -> u16 {
        self.version
    }

    /// Resync marks in the header (0 in version 1).
    pub fn mark_count(&self) -> u32 {
        (self.marks.len() / MARK_LEN) as u32
    }

    /// Resync mark `i`: the first frame of a marked bar, and the bar.
    pub fn mark(&self, i: u32) -> Option<Mark> {
        let at = (i as usize).checked_mul(MARK_LEN)?;
        let m = self.marks.get(at..at + MARK_LEN)?;
        Some(Mark {
            frame: u32_at(m, 0),
            bar: u32_at(m, 4),
        })
    }

    /// Every resync mark, in bar order.
    pub fn marks(&self) -> impl Iterator<Item = Mark> + '_ {
        (0..self.mark_count()).filter_map(|i| self.mark(i))
    }

    /// Frame rate (Hz), LED count, wire order and frame count from the header.
    pub fn spec(&self) -> TableSpec {
        self.spec
    }

    /// Bytes of one frame in wire order.
    pub fn frame_size(&self) -> usize {
        self.frame_size
    }

    /// Segments in a compact table's index (0 for a full table).
    pub fn segment_count(&self) -> u32 {
        self.segment_count
    }

    /// The CRC-32 stored in (and checked against) the trailer.
    pub fn crc32(&self) -> u32 {
        self.crc32
    }

    /// Segment `i` of a compact table: its first frame, its number of frames and its kind.
    pub fn segment(&self, i: u32) -> Option<(u32, u32, SegmentKind)> {
        if i >= self.segment_count {
            return None;
        }
        let s = self.entry(i)?;
        Some((s.first, self.segment_end(i) - s.first, s.kind))
    }

    fn entry(&self, i: u32) -> Option<Seg> {
        let at = i as usize * INDEX_ENTRY_LEN;
        let e = self.index.get(at..at + INDEX_ENTRY_LEN)?;
        Some(Seg {
            first: u32_at(e, 0),
            offset: u32_at(e, 4),
            kind: SegmentKind::from_code(e[8])?,
        })
    }

    /// First frame after segment `i`.
    fn segment_end(&self, i: u32) -> u32 {
        if i + 1 < self.segment_count {
            u32_at(self.index, (i as usize + 1) * INDEX_ENTRY_LEN)
        } else {
            self.spec.frame_count
        }
    }

    /// Checks the compact index: starts at frame 0, increases, data contiguous, fades in range.
    fn check_index(&self) -> Result<(), ReadError> {
        let count = self.spec.frame_count;
        if (self.segment_count == 0) != (count == 0) {
            return Err(ReadError::BadIndex(
                "segment count does not fit the frame count",
            ));
        }
        let fs = self.frame_size as u64;
        let mut offset = 0u64;
        let mut prev: Option<u32> = None;
        for i in 0..self.segment_count {
            let at = i as usize * INDEX_ENTRY_LEN;
            let e = &self.index[at..at + INDEX_ENTRY_LEN];
            let first = u32_at(e, 0);
            let kind = SegmentKind::from_code(e[8]).ok_or(ReadError::BadIndex("unknown kind"))?;
            if e[9..12] != [0, 0, 0] {
                return Err(ReadError::BadIndex("reserved bytes not zero"));
            }
            match prev {
                None if first != 0 => return Err(ReadError::BadIndex("does not start at frame 0")),
                Some(p) if first <= p => return Err(ReadError::BadIndex("frames not increasing")),
                _ => {}
            }
            if first >= count {
                return Err(ReadError::BadIndex("segment starts past the last frame"));
            }
            if u64::from(u32_at(e, 4)) != offset {
                return Err(ReadError::BadIndex("data not contiguous"));
            }
            prev = Some(first);
            let end = self.segment_end(i);
            if end <= first {
                return Err(ReadError::BadIndex("frames not increasing"));
            }
            let frames = end - first;
            let size = kind.data_len(u64::from(frames), fs);
            if offset + size > self.data.len() as u64 {
                return Err(ReadError::BadIndex("segment data past the data area"));
            }
            if kind == SegmentKind::Fade {
                // The rule is monotone in j: both ends in 0..=255 keeps every frame there.
                let d = &self.data[offset as usize..(offset + size) as usize];
                let (start, steps) = d.split_at(self.frame_size);
                for (c, a) in start.iter().enumerate() {
                    let s = u32_at(steps, 4 * c) as i32;
                    let end = fade_value(*a, s, u64::from(frames - 1));
                    if !(0..=255).contains(&end) {
                        return Err(ReadError::BadIndex("fade leaves 0..=255"));
                    }
                }
            }
            offset += size;
        }
        if offset != self.data.len() as u64 {
            return Err(ReadError::BadIndex(
                "data length does not match the segments",
            ));
        }
        Ok(())
    }

    /// Writes frame `k` in wire order into `out[..frame_size()]`.
    pub fn frame(&self, k: u32, out: &mut [u8]) -> Result<(), ReadError> {
        if k >= self.spec.frame_count {
            return Err(ReadError::FrameOutOfRange {
                frame: k,
                count: self.spec.frame_count,
            });
        }
        let fs = self.frame_size;
        let Some(out) = out.get_mut(..fs) else {
            return Err(ReadError::BufferTooSmall {
                need: fs,
                got: out.len(),
            });
        };
        if self.form == TableForm::Full {
            let at = k as usize * fs;
            out.copy_from_slice(&self.data[at..at + fs]);
            return Ok(());
        }
        // Last segment whose first frame is <= k (entry 0 starts at frame 0).
        let (mut lo, mut hi) = (0u32, self.segment_count);
        while hi - lo > 1 {
            let mid = lo + (hi - lo) / 2;
            match self.entry(mid) {
                Some(s) if s.first <= k => lo = mid,
                _ => hi = mid,
            }
        }
        let seg = self.entry(lo).ok_or(ReadError::BadIndex("unknown kind"))?;
        let j = (k - seg.first) as usize;
        let at = seg.offset as usize;
        match seg.kind {
            SegmentKind::Literal => out.copy_from_slice(&self.data[at + j * fs..at + (j + 1) * fs]),
            SegmentKind::Hold => out.copy_from_slice(&self.data[at..at + fs]),
            SegmentKind::Fade => {
                let start = &self.data[at..at + fs];
                let steps = &self.data[at + fs..at + 5 * fs];
                for (c, o) in out.iter_mut().enumerate() {
                    let s = u32_at(steps, 4 * c) as i32;
                    // check_index keeps every value of a fade within 0..=255.
                    *o = fade_value(start[c], s, j as u64).clamp(0, 255) as u8;
                }
            }
        }
        Ok(())
    }
}
