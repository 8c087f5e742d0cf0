//! The C99 header: a binary form (full, compact or program) as a `static const uint8_t` array
//! plus macros.
//!
//! Layout of the text: `firmware-formats/c-header.md`. The table bytes are
//! streamed as hex, twelve to a line; the size macro follows the array, so the
//! compact form needs no second pass. [`c_header_bytes`] gives the text's
//! length from the table's, before anything is written.

use std::io::{self, BufWriter, Write};

use super::compact::CompactTableWriter;
use super::full::FullTableWriter;
use super::marks::Mark;
use super::spec::{TableForm, TableSpec};
use super::{FrameWriter, OutputError, WriteStats};

/// Table bytes per line of hex text.
const BYTES_PER_LINE: usize = 12;
/// Characters of a whole line: four spaces, `0xhh,`, then ` 0xhh,` for
/// each further byte, and the line feed.
const LINE_LEN: usize = 4 + 5 + 6 * (BYTES_PER_LINE - 1) + 1;

pub use crate::model::c_identifier;

/// `" 0xhh,"` for every byte value: the text of one byte after the first on a line.
const HEX_ITEM: [[u8; 6]; 256] = {
    const DIGITS: &[u8; 16] = b"0123456789abcdef";
    let mut t = [[0u8; 6]; 256];
    let mut b = 0;
    while b < 256 {
        t[b] = [b' ', b'0', b'x', DIGITS[b >> 4], DIGITS[b & 15], b','];
        b += 1;
    }
    t
};

/// Turns bytes into C hex literals (`0x47,`), twelve to an indented line, and counts the text.
struct HexWriter<W: Write> {
    out: BufWriter<W>,
    col: usize,
    text_bytes: u64,
    /// The text of the bytes of one `write` call, before it is passed on.
    line: Vec<u8>,
}

impl<W: Write> HexWriter<W> {
    fn new(out: W) -> Self {
        HexWriter {
            out: BufWriter::with_capacity(256 * 1024, out),
            col: 0,
            text_bytes: 0,
            line: Vec::new(),
        }
    }

    /// Writes plain text (outside the array).
    fn text(&mut self, s: &str) -> io::Result<()> {
        self.out.write_all(s.as_bytes())?;
        self.text_bytes += s.len() as u64;
        Ok(())
    }

    /// Ends a partly filled line of hex.
    fn end_line(&mut self) -> io::Result<()> {
        if self.col != 0 {
            self.col = 0;
            self.text("\n")?;
        }
        Ok(())
    }
}

impl<W: Write> Write for HexWriter<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        let text = &mut self.line;
        text.clear();
        text.reserve(buf.len() * 6 + buf.len() / BYTES_PER_LINE * 4 + 8);
        let mut rest = buf;
        // Whole lines at once, where a line starts.
        while self.col == 0 && rest.len() >= BYTES_PER_LINE {
            let (line, tail) = rest.split_at(BYTES_PER_LINE);
            let mut out = [0u8; LINE_LEN];
            out[..4].copy_from_slice(b"    ");
            out[4..9].copy_from_slice(&HEX_ITEM[usize::from(line[0])][1..]);
            for (k, &b) in line.iter().enumerate().skip(1) {
                let at = 9 + 6 * (k - 1);
                out[at..at + 6].copy_from_slice(&HEX_ITEM[usize::from(b)]);
            }
            out[LINE_LEN - 1] = b'\n';
            text.extend_from_slice(&out);
            rest = tail;
        }
        for &b in rest {
            let item = &HEX_ITEM[usize::from(b)];
            if self.col == 0 {
                // The first byte of a line: four spaces of indent instead of one.
                text.extend_from_slice(b"    ");
                text.extend_from_slice(&item[1..]);
            } else {
                text.extend_from_slice(item);
            }
            self.col += 1;
            if self.col == BYTES_PER_LINE {
                self.col = 0;
                text.push(b'\n');
            }
        }
        self.out.write_all(text)?;
        self.text_bytes += text.len() as u64;
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        self.out.flush()
    }
}

/// The text of a C header around a binary table: the opening text (comment,
/// guard, macros, array start) when it is made, then the table's bytes as hex
/// as they are written to it, then the closing text at [`CHeaderText::finish`].
///
/// [`CHeaderWriter`] encodes a table into one; a caller that writes the same
/// table to a file as well can tee the encoder's bytes into one instead and
/// encode the table once.
pub struct CHeaderText<W: Write> {
    hex: HexWriter<W>,
    macro_prefix: String,
    table_bytes: u64,
}

/// The text before the array's bytes, and the macros' prefix.
fn opening_text(spec: &TableSpec, name: &str, form: TableForm) -> (String, String) {
    let ident = c_identifier(name);
    let m = ident.to_ascii_uppercase();
    let (what, doc, compact, program) = match form {
        TableForm::Full => ("frame table, full form", "full-table.md", 0, 0),
        TableForm::Compact => ("frame table, compact form", "compact-table.md", 1, 0),
        TableForm::Program => ("program form", "program-form.md", 0, 1),
    };
    let text = format!(
        "/* {ident}: glowscore {what}: {rate} Hz, {leds} LEDs, \
             {frames} frames, wire order {order}.\n \
             * Generated by glowscore; do not edit. Byte layout: firmware-formats/{doc}. */\n\
             #ifndef {m}_H\n\
             #define {m}_H\n\
             \n\
             #include <stdint.h>\n\
             \n\
             #define {m}_FRAME_RATE_HZ {rate}u\n\
             #define {m}_LED_COUNT {leds}u\n\
             #define {m}_FRAME_COUNT {frames}u\n\
             #define {m}_BYTES_PER_LED {bpl}u\n\
             #define {m}_WIRE_ORDER \"{order}\"\n\
             #define {m}_IS_COMPACT {compact}\n\
             #define {m}_IS_PROGRAM {program}\n\
             \n\
             /* Define {m}_STORAGE before the #include to give the array an attribute (a section, say). */\n\
             #ifndef {m}_STORAGE\n\
             #define {m}_STORAGE\n\
             #endif\n\
             \n\
             static const uint8_t {ident}[] {m}_STORAGE = {{\n",
        rate = spec.frame_rate_hz,
        leds = spec.leds,
        frames = spec.frame_count,
        bpl = spec.order.bytes_per_led(),
        order = spec.order.name(),
    );
    (text, m)
}

/// The text after the array's bytes (and the line feed that ends them).
fn closing_text(m: &str, size: u64) -> String {
    format!("}};\n\n#define {m}_SIZE {size}u\n\n#endif /* {m}_H */\n")
}

/// Characters of the hex text of `n` table bytes: 76 a line of twelve,
/// `6 r + 4` for a last line of `r`.
fn hex_text_bytes(n: u64) -> u64 {
    let (lines, rest) = (n / BYTES_PER_LINE as u64, n % BYTES_PER_LINE as u64);
    lines * LINE_LEN as u64 + if rest == 0 { 0 } else { 6 * rest + 4 }
}

/// The exact length of the C header of a table of `table_bytes` bytes
/// described by `spec`, for prop `name` in form `form`: what
/// [`CHeaderText`] writes around those bytes.
pub fn c_header_bytes(spec: &TableSpec, name: &str, form: TableForm, table_bytes: u64) -> u64 {
    let (open, m) = opening_text(spec, name, form);
    open.len() as u64 + hex_text_bytes(table_bytes) + closing_text(&m, table_bytes).len() as u64
}

impl<W: Write> CHeaderText<W> {
    /// Validates `spec` and writes the opening text for the array of table
    /// `name` in form `form`.
    pub fn new(out: W, spec: TableSpec, name: &str, form: TableForm) -> Result<Self, OutputError> {
        spec.validate()?;
        let (open, m) = opening_text(&spec, name, form);
        let mut hex = HexWriter::new(out);
        hex.text(&open)?;
        Ok(CHeaderText {
            hex,
            macro_prefix: m,
            table_bytes: 0,
        })
    }

    /// Writes the closing text (with the size macro: the bytes written to
    /// it), flushes, and hands back the output and the characters of text.
    pub fn finish(mut self) -> Result<(W, u64), OutputError> {
        let size = self.table_bytes;
        self.hex.end_line()?;
        self.hex.text(&closing_text(&self.macro_prefix, size))?;
        let text_bytes = self.hex.text_bytes;
        let out = self.hex.out.into_inner().map_err(|e| e.into_error())?;
        Ok((out, text_bytes))
    }
}

impl<W: Write> Write for CHeaderText<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        let n = self.hex.write(buf)?;
        self.table_bytes += n as u64;
        Ok(n)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.hex.flush()
    }
}

enum Inner<W: Write> {
    Full(FullTableWriter<CHeaderText<W>>),
    Compact(Box<CompactTableWriter<CHeaderText<W>>>),
}

/// Streams a C99 header embedding a full or compact binary table made from
/// frames. (The program form is made from the show: its bytes are written
/// into a [`CHeaderText`].)
pub struct CHeaderWriter<W: Write> {
    inner: Inner<W>,
}

impl<W: Write> CHeaderWriter<W> {
    /// Validates `spec`, writes the opening text (guard, macros, array start) for table `name`.
    pub fn new(out: W, spec: TableSpec, name: &str, form: TableForm) -> Result<Self, OutputError> {
        Self::with_marks(out, spec, name, form, &[])
    }

    /// [`CHeaderWriter::new`] for a table with resync marks `marks`.
    pub fn with_marks(
        out: W,
        spec: TableSpec,
        name: &str,
        form: TableForm,
        marks: &[Mark],
    ) -> Result<Self, OutputError> {
        if form == TableForm::Program {
            return Err(OutputError::BadSpec(
                "the program form is made from the show, not from frames".into(),
            ));
        }
        let text = CHeaderText::new(out, spec, name, form)?;
        let inner = match form {
            TableForm::Full => Inner::Full(FullTableWriter::with_marks(text, spec, marks)?),
            _ => Inner::Compact(Box::new(CompactTableWriter::with_marks(text, spec, marks)?)),
        };
        Ok(CHeaderWriter { inner })
    }

    /// Like [`FrameWriter::finish`], and also hands back the output.
    pub fn finish_into_inner(self) -> Result<(W, WriteStats), OutputError> {
        let (text, table) = match self.inner {
            Inner::Full(w) => w.finish_into_inner()?,
            Inner::Compact(w) => w.finish_into_inner()?,
        };
        let (out, text_bytes) = text.finish()?;
        Ok((
            out,
            WriteStats {
                bytes_written: text_bytes,
                table_bytes: Some(table.bytes_written),
                ..table
            },
        ))
    }
}

impl<W: Write> FrameWriter for CHeaderWriter<W> {
    fn push_frame(&mut self, frame: &[[u8; 3]]) -> Result<(), OutputError> {
        match &mut self.inner {
            Inner::Full(w) => w.push_frame(frame),
            Inner::Compact(w) => w.push_frame(frame),
        }
    }

    fn finish(self) -> Result<WriteStats, OutputError> {
        self.finish_into_inner().map(|(_, s)| s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_become_valid_c_identifiers() {
        // C99 6.4.2.1: letters, digits and underscores, not starting with a digit;
        // 7.1.3: leading underscores are reserved.
        let cases = [
            ("left", "left_table"),
            ("Left Hand", "left_hand_table"),
            ("staff-2", "staff_2_table"),
            ("2nd", "prop_2nd_table"),
            ("__x__", "x_table"),
            ("", "glowscore_table"),
            ("***", "glowscore_table"),
            ("int", "int_table"),
            ("café*/", "caf_table"),
            ("a  b", "a_b_table"),
        ];
        for (name, want) in cases {
            let got = c_identifier(name);
            assert_eq!(got, want, "{name:?}");
            assert!(got.bytes().all(|b| b.is_ascii_alphanumeric() || b == b'_'));
            assert!(!got.starts_with(|c: char| c.is_ascii_digit() || c == '_'));
        }
    }

    #[test]
    fn the_counted_length_is_the_written_length() {
        let spec = TableSpec {
            frame_rate_hz: 500,
            leds: 3,
            order: crate::model::WireOrder::Grb,
            frame_count: 4,
        };
        for form in [TableForm::Full, TableForm::Compact, TableForm::Program] {
            for n in [0u64, 1, 11, 12, 13, 24, 100, 1001] {
                let mut text = CHeaderText::new(Vec::new(), spec, "Left Hand", form).unwrap();
                text.write_all(&vec![0xa5; n as usize]).unwrap();
                let (out, len) = text.finish().unwrap();
                assert_eq!(out.len() as u64, len);
                assert_eq!(
                    c_header_bytes(&spec, "Left Hand", form, n),
                    len,
                    "{form:?} {n}"
                );
            }
        }
    }

    #[test]
    fn hex_lines_hold_twelve_bytes() {
        let mut hex = HexWriter::new(Vec::new());
        hex.write_all(&(0u8..14).collect::<Vec<_>>()).unwrap();
        hex.end_line().unwrap();
        let n = hex.text_bytes;
        let text = String::from_utf8(hex.out.into_inner().unwrap()).unwrap();
        assert_eq!(text.len() as u64, n);
        assert_eq!(
            text,
            "    0x00, 0x01, 0x02, 0x03, 0x04, 0x05, 0x06, 0x07, 0x08, 0x09, 0x0a, 0x0b,\n    0x0c, 0x0d,\n"
        );
    }
}
