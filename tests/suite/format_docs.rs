//! The worked examples in firmware-formats/*.md are what the writers produce, byte for byte,
//! and the firmware snippet in c-header.md compiles against the reference decoder.

use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::model::WireOrder;
use glowscore::output::{
    CHeaderWriter, CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, TableForm,
    TableSpec, read_table,
};

fn doc(name: &str) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("firmware-formats")
        .join(name);
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The body of the first fenced block tagged `lang` after the heading `after`.
fn block(text: &str, after: &str, lang: &str) -> String {
    let start = text
        .find(after)
        .unwrap_or_else(|| panic!("no heading {after:?}"));
    let rest = &text[start..];
    let fence = format!("```{lang}\n");
    let open = rest
        .find(&fence)
        .unwrap_or_else(|| panic!("no ```{lang} block"))
        + fence.len();
    let close = rest[open..].find("```").expect("closing fence");
    rest[open..open + close].to_string()
}

/// The text with every run of white space made one space, for checking wrapped prose.
fn flat(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Bytes of a hexdump block: each line an offset, then hex pairs.
fn hexdump_bytes(dump: &str) -> Vec<u8> {
    let mut bytes = Vec::new();
    for line in dump.lines() {
        let mut words = line.split_whitespace();
        let offset = usize::from_str_radix(words.next().expect("offset"), 16).unwrap();
        assert_eq!(offset, bytes.len(), "offset column of {line:?}");
        bytes.extend(words.map(|w| u8::from_str_radix(w, 16).unwrap()));
    }
    bytes
}

fn write<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) {
    for f in frames {
        w.push_frame(f).unwrap();
    }
    w.finish().unwrap();
}

/// The three frames of the full-table, CSV and C-header examples.
fn small_example() -> (TableSpec, Vec<Vec<[u8; 3]>>) {
    let spec = TableSpec {
        frame_rate_hz: 25,
        leds: 2,
        order: WireOrder::Grb,
        frame_count: 3,
    };
    let frames = vec![
        vec![[255, 0, 0], [0, 0, 255]],
        vec![[128, 64, 0], [0, 0, 255]],
        vec![[0, 0, 0], [0, 0, 0]],
    ];
    (spec, frames)
}

#[test]
fn full_table_example_matches_the_document() {
    let (spec, frames) = small_example();
    let mut out = Vec::new();
    write(FullTableWriter::new(&mut out, spec).unwrap(), &frames);
    let text = doc("full-table.md");
    assert_eq!(
        hexdump_bytes(&block(&text, "## Worked example", "hexdump")),
        out
    );
    // The CRC the prose names.
    assert!(flat(&text).contains("CRC-32 `0x91168F29` of the first 62 bytes"));
    assert_eq!(crc32fast::hash(&out[..62]), 0x9116_8F29);
}

#[test]
fn full_table_example_with_marks_matches_the_document() {
    // The same frames with one resync mark, bar 1 on frame 1: version 2.
    let (spec, frames) = small_example();
    let mut out = Vec::new();
    let marks = [glowscore::output::Mark { frame: 1, bar: 1 }];
    write(
        FullTableWriter::with_marks(&mut out, spec, &marks).unwrap(),
        &frames,
    );
    let text = doc("full-table.md");
    let dump = hexdump_bytes(&block(&text, "## Worked example with marks", "hexdump"));
    assert_eq!(
        dump.iter()
            .map(|b| format!("{b:02x}"))
            .collect::<Vec<_>>()
            .join(" "),
        out.iter()
            .map(|b| format!("{b:02x}"))
            .collect::<Vec<_>>()
            .join(" ")
    );
    let crc = crc32fast::hash(&out[..out.len() - 4]);
    assert!(
        flat(&text).contains(&format!("CRC-32 `0x{crc:08X}`")),
        "the prose names CRC-32 0x{crc:08X}"
    );
    let view = read_table(&out).unwrap();
    assert_eq!(view.marks().collect::<Vec<_>>(), marks);
}

#[test]
fn compact_table_example_matches_the_document() {
    // Frames as the document's table describes them, computed here from its formulas.
    let mut frames = vec![vec![[1, 2, 3], [4, 5, 6]], vec![[9, 8, 7], [6, 5, 4]]];
    frames.extend(std::iter::repeat_n(vec![[255, 0, 0], [0, 0, 255]], 6));
    for j in 0u8..10 {
        // 255 - j/2 rounded half up: 255, 255, 254, 254, ...
        let blue = 255 - j / 2;
        frames.push(vec![[10 * j, 200 - 20 * j, 20], [100, 5 * j, blue]]);
    }
    let spec = TableSpec {
        frame_rate_hz: 25,
        leds: 2,
        order: WireOrder::Rgb,
        frame_count: 18,
    };
    let mut out = Vec::new();
    write(CompactTableWriter::new(&mut out, spec).unwrap(), &frames);
    let text = doc("compact-table.md");
    assert_eq!(
        hexdump_bytes(&block(&text, "## Worked example", "hexdump")),
        out
    );
    let prose = flat(&text);
    assert!(prose.contains("The table is 132 bytes"));
    assert!(prose.contains("CRC-32 `0xFAD81C35`"));
    assert_eq!(crc32fast::hash(&out[..out.len() - 4]), 0xFAD8_1C35);
    // The frame read step by step in the document.
    let view = read_table(&out).unwrap();
    let mut f = [0u8; 6];
    view.frame(13, &mut f).unwrap();
    assert_eq!(f, [0x32, 0x64, 0x14, 0x64, 0x19, 0xfd]);
    assert!(prose.contains("The whole frame is `32 64 14 64 19 fd`"));
}

#[test]
fn csv_example_matches_the_document() {
    let (spec, frames) = small_example();
    let mut out = Vec::new();
    write(CsvWriter::new(&mut out, spec).unwrap(), &frames);
    let text = doc("csv.md");
    assert_eq!(
        block(&text, "## Example", "csv"),
        String::from_utf8(out).unwrap()
    );
}

fn c_header_text(name: &str) -> String {
    let (spec, frames) = small_example();
    let mut out = Vec::new();
    write(
        CHeaderWriter::new(&mut out, spec, name, TableForm::Full).unwrap(),
        &frames,
    );
    String::from_utf8(out).unwrap()
}

#[test]
fn c_header_example_matches_the_document() {
    let text = doc("c-header.md");
    assert_eq!(
        block(&text, "## Worked example", "c"),
        c_header_text("demo")
    );
}

#[test]
fn c_header_player_snippet_compiles() {
    // The "Playing it" snippet, compiled with the header of a prop named `left`.
    let dir: PathBuf = Path::new(env!("CARGO_TARGET_TMPDIR")).join("format_docs");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("left.h"), c_header_text("left")).unwrap();
    let snippet = block(&doc("c-header.md"), "## Playing it", "c");
    let src = dir.join("player.c");
    std::fs::write(&src, snippet).unwrap();
    let fw = Path::new(env!("CARGO_MANIFEST_DIR")).join("firmware-formats");
    let status = Command::new("cc")
        .args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-c"])
        .arg("-I")
        .arg(&fw)
        .arg("-I")
        .arg(&dir)
        .arg("-o")
        .arg(dir.join("player.o"))
        .arg(&src)
        .status()
        .expect("run the system C compiler `cc`");
    assert!(status.success(), "the c-header.md snippet does not compile");
}
