//! The C99 header: a binary table (full or compact) as a `static const uint8_t` array plus macros.
//!
//! Layout of the text: `firmware-formats/c-header.md`. The table bytes are
//! streamed as hex, twelve to a line; the size macro follows the array, so the
//! compact form needs no second pass.

use std::io::{self, BufWriter, Write};

use super::compact::CompactTableWriter;
use super::full::FullTableWriter;
use super::spec::{TableForm, TableSpec};
use super::{FrameWriter, OutputError, WriteStats};

/// Table bytes per line of hex text.
const BYTES_PER_LINE: usize = 12;
/// Characters of a whole line: four spaces, `0xhh,`, then ` 0xhh,` for
/// each further byte, and the line feed.
const LINE_LEN: usize = 4 + 5 + 6 * (BYTES_PER_LINE - 1) + 1;

/// The C identifier of a table's array for a caller-given name (`"left hand"` -> `"left_hand_table"`).
///
/// ASCII letters are lower-cased and digits kept; every other run of characters
/// becomes one `_`; `_` at either end is dropped (leading underscores are
/// reserved in C); an empty result becomes `glowscore`, one starting with a digit
/// gets `prop_` in front; `_table` is appended, so no C keyword can result.
/// Macros use the upper-case form (`LEFT_HAND_TABLE_SIZE`).
pub fn c_identifier(name: &str) -> String {
    let mut base = String::new();
    for ch in name.chars() {
        if ch.is_ascii_alphanumeric() {
            base.push(ch.to_ascii_lowercase());
        } else if !base.ends_with('_') {
            base.push('_');
        }
    }
    let base = base.trim_matches('_');
    let base = if base.is_empty() { "glowscore" } else { base };
    let prefix = if base.starts_with(|c: char| c.is_ascii_digit()) {
        "prop_"
    } else {
        ""
    };
    format!("{prefix}{base}_table")
}

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

impl<W: Write> CHeaderText<W> {
    /// Validates `spec` and writes the opening text for the array of table
    /// `name` in form `form`.
    pub fn new(out: W, spec: TableSpec, name: &str, form: TableForm) -> Result<Self, OutputError> {
        spec.validate()?;
        let ident = c_identifier(name);
        let m = ident.to_ascii_uppercase();
        let (form_name, compact) = match form {
            TableForm::Full => ("full", 0),
            TableForm::Compact => ("compact", 1),
        };
        let mut hex = HexWriter::new(out);
        hex.text(&format!(
            "/* {ident}: glowscore frame table, {form_name} form: {rate} Hz, {leds} LEDs, \
             {frames} frames, wire order {order}.\n \
             * Generated by glowscore; do not edit. Byte layout: firmware-formats/{form_name}-table.md. */\n\
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
        ))?;
        Ok(CHeaderText {
            hex,
            macro_prefix: m,
            table_bytes: 0,
        })
    }

    /// Writes the closing text (with the size macro: the bytes written to
    /// it), flushes, and hands back the output and the characters of text.
    pub fn finish(mut self) -> Result<(W, u64), OutputError> {
        let m = &self.macro_prefix;
        let size = self.table_bytes;
        self.hex.end_line()?;
        self.hex.text(&format!(
            "}};\n\n#define {m}_SIZE {size}u\n\n#endif /* {m}_H */\n"
        ))?;
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

/// Streams a C99 header embedding a full or compact binary table.
pub struct CHeaderWriter<W: Write> {
    inner: Inner<W>,
}

impl<W: Write> CHeaderWriter<W> {
    /// Validates `spec`, writes the opening text (guard, macros, array start) for table `name`.
    pub fn new(out: W, spec: TableSpec, name: &str, form: TableForm) -> Result<Self, OutputError> {
        let text = CHeaderText::new(out, spec, name, form)?;
        let inner = match form {
            TableForm::Full => Inner::Full(FullTableWriter::new(text, spec)?),
            TableForm::Compact => Inner::Compact(Box::new(CompactTableWriter::new(text, spec)?)),
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
