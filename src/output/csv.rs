//! The CSV table (`docs/conventions.md`, "CSV table"): `frame,time_s,r0,g0,b0,r1,...`,
//! one row per frame.
//!
//! Always linear-light R, G, B per LED (the wire order does not apply), decimal
//! bytes, `time_s` the frame's start time `k / frame_rate` in seconds with six
//! decimals, rounded to the nearest microsecond (exact ties upward), computed in
//! integers. Lines end with `\n`. Layout: `firmware-formats/csv.md`.

use std::fmt::Write as _;
use std::io::Write;

use super::spec::{Sink, TableSpec};
use super::{FrameWriter, OutputError, WriteStats, check_complete, check_frame};

/// Streams the CSV table.
pub struct CsvWriter<W: Write> {
    sink: Sink<W>,
    spec: TableSpec,
    pushed: u32,
    /// The text of the row being written.
    row: Vec<u8>,
}

/// The start time of frame `k` at `rate` Hz, in seconds with six decimals (`"0.002000"`).
pub(crate) fn frame_time_text(k: u32, rate: u32) -> String {
    let rate = u64::from(rate.max(1));
    // Nearest microsecond, exact ties upward: floor((2 * k * 10^6 + rate) / (2 * rate)).
    let micros = (2 * u64::from(k) * 1_000_000 + rate) / (2 * rate);
    format!("{}.{:06}", micros / 1_000_000, micros % 1_000_000)
}

impl<W: Write> CsvWriter<W> {
    /// Validates `spec` and writes the header line.
    pub fn new(out: W, spec: TableSpec) -> Result<Self, OutputError> {
        spec.validate()?;
        let mut sink = Sink::new(out);
        let mut head = String::from("frame,time_s");
        for i in 0..spec.leds {
            // Writing to a String cannot fail.
            let _ = write!(head, ",r{i},g{i},b{i}");
        }
        head.push('\n');
        sink.put(head.as_bytes())?;
        Ok(CsvWriter {
            sink,
            spec,
            pushed: 0,
            row: Vec::new(),
        })
    }

    /// Like [`FrameWriter::finish`], and also hands back the output.
    pub fn finish_into_inner(self) -> Result<(W, WriteStats), OutputError> {
        check_complete(&self.spec, self.pushed)?;
        let (out, bytes) = self.sink.finish_plain()?;
        Ok((
            out,
            WriteStats {
                bytes_written: bytes,
                frames: self.pushed,
                table_bytes: None,
                crc32: None,
                segments: None,
            },
        ))
    }
}

/// `,d`, `,dd` or `,ddd` for every byte value (the first `len` bytes of the entry).
const DECIMAL: [([u8; 4], u8); 256] = {
    let mut t = [([0u8; 4], 0u8); 256];
    let mut b = 0;
    while b < 256 {
        let (h, d, u) = ((b / 100) as u8, (b / 10 % 10) as u8, (b % 10) as u8);
        t[b] = if b >= 100 {
            ([b',', b'0' + h, b'0' + d, b'0' + u], 4)
        } else if b >= 10 {
            ([b',', b'0' + d, b'0' + u, 0], 3)
        } else {
            ([b',', b'0' + u, 0, 0], 2)
        };
        b += 1;
    }
    t
};

impl<W: Write> FrameWriter for CsvWriter<W> {
    fn push_frame(&mut self, frame: &[[u8; 3]]) -> Result<(), OutputError> {
        let k = check_frame(&self.spec, self.pushed, frame)?;
        let row = &mut self.row;
        row.clear();
        row.extend_from_slice(k.to_string().as_bytes());
        row.push(b',');
        row.extend_from_slice(frame_time_text(k, self.spec.frame_rate_hz).as_bytes());
        for led in frame {
            for &v in led {
                let (text, len) = &DECIMAL[usize::from(v)];
                row.extend_from_slice(&text[..usize::from(*len)]);
            }
        }
        row.push(b'\n');
        self.sink.put(row)?;
        self.pushed += 1;
        Ok(())
    }

    fn finish(self) -> Result<WriteStats, OutputError> {
        self.finish_into_inner().map(|(_, s)| s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frame_times_are_k_over_rate_to_the_microsecond() {
        assert_eq!(frame_time_text(0, 500), "0.000000");
        assert_eq!(frame_time_text(1, 500), "0.002000");
        assert_eq!(frame_time_text(119_999, 500), "239.998000");
        // 1/3 s = 0.333333.. rounds down, 2/3 s = 0.666666.. rounds up.
        assert_eq!(frame_time_text(1, 3), "0.333333");
        assert_eq!(frame_time_text(2, 3), "0.666667");
        // 1 / 2_000_000 s = 0.5 us exactly: ties go up.
        assert_eq!(frame_time_text(1, 2_000_000), "0.000001");
        // Largest inputs do not overflow: (2^32 - 1) / 1 s.
        assert_eq!(frame_time_text(u32::MAX, 1), "4294967295.000000");
    }
}
