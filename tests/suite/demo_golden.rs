//! Golden outputs of every demo show: the frame tables (CSV, full and
//! compact binary) and the `check` text, compared with `tests/golden/demos/`.
//!
//! The check text is kept whole (a mismatch names the first differing line).
//! The tables are large, so each is kept as its size and the CRC-32 of every
//! block of 1024 frames (a mismatch names the first differing block of
//! frames); the CRC is IEEE 802.3's, checked against its published check
//! value 0xCBF43926 elsewhere in the suite. `GLOWSCORE_BLESS=1` rewrites
//! them all and then fails, so a blessed run cannot pass by accident. A
//! golden file that no demo has fails the suite (orphans).

use std::path::{Path, PathBuf};
use std::process::Command;

/// Frames per CRC block of a table.
const BLOCK_FRAMES: usize = 1024;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn golden_dir() -> PathBuf {
    root().join("tests/golden/demos")
}

fn demos() -> Vec<PathBuf> {
    let mut shows: Vec<PathBuf> = std::fs::read_dir(root().join("shows"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    shows.sort();
    shows
}

/// The size and per-block CRCs of a table: `rows` splits it into frames
/// (CSV lines after the header, or fixed-size binary records after the
/// start of the file).
fn digest(name: &str, bytes: &[u8], frames: &[&[u8]]) -> String {
    let mut out = format!("{name} {} bytes\n", bytes.len());
    for (i, block) in frames.chunks(BLOCK_FRAMES).enumerate() {
        let mut h = crc32fast::Hasher::new();
        for f in block {
            h.update(f);
        }
        out += &format!("  frames {}.. {:08x}\n", i * BLOCK_FRAMES, h.finalize());
    }
    out
}

fn table_digests(out: &Path, prop: &str, leds: usize, bytes_per_led: usize) -> String {
    let csv = std::fs::read(out.join(format!("{prop}.csv"))).unwrap();
    let rows: Vec<&[u8]> = csv.split(|&b| b == b'\n').skip(1).collect();
    let mut text = digest(&format!("{prop}.csv"), &csv, &rows);
    // The full table's frames: fixed-size records (the header and trailer
    // ride with the first and last blocks' neighbours: the size line
    // catches any change to them, the blocks any change to a frame).
    let full = std::fs::read(out.join(format!("{prop}.full.bin"))).unwrap();
    let frame_len = (leds * bytes_per_led).max(1);
    let frames: Vec<&[u8]> = full.chunks(frame_len).collect();
    text += &digest(&format!("{prop}.full.bin"), &full, &frames);
    let compact = std::fs::read(out.join(format!("{prop}.compact.bin"))).unwrap();
    let pieces: Vec<&[u8]> = compact.chunks(frame_len).collect();
    text += &digest(&format!("{prop}.compact.bin"), &compact, &pieces);
    text
}

/// Compares `actual` with the golden file `name` (or rewrites it when
/// blessing); returns a message on a mismatch.
fn compare(name: &str, actual: &str, what: &str) -> Option<String> {
    let path = golden_dir().join(name);
    if std::env::var("GLOWSCORE_BLESS").as_deref() == Ok("1") {
        std::fs::create_dir_all(golden_dir()).unwrap();
        std::fs::write(&path, actual).unwrap();
        return Some(format!("blessed {}", path.display()));
    }
    let golden = std::fs::read_to_string(&path).unwrap_or_default();
    if golden == actual {
        return None;
    }
    let (line, a, g) = actual
        .lines()
        .zip(golden.lines().chain(std::iter::repeat("")))
        .enumerate()
        .find(|(_, (a, g))| a != g)
        .map(|(i, (a, g))| (i + 1, a.to_string(), g.to_string()))
        .unwrap_or((
            golden.lines().count() + 1,
            String::new(),
            "(more lines)".into(),
        ));
    Some(format!(
        "{}: {what} differs from the golden at line {line}:\n  now:    {a}\n  golden: {g}\n(bless with GLOWSCORE_BLESS=1 after checking the change)",
        path.display()
    ))
}

#[test]
fn every_demo_compiles_and_checks_as_its_golden_files_say() {
    let mut failures = Vec::new();
    let mut expected_files = Vec::new();
    for show in demos() {
        let stem = show.file_stem().unwrap().to_string_lossy().into_owned();
        let out =
            std::env::temp_dir().join(format!("glowscore-golden-{}-{stem}", std::process::id()));
        let _ = std::fs::remove_dir_all(&out);
        let compiled = Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .args([
                "compile",
                show.to_str().unwrap(),
                "--out",
                out.to_str().unwrap(),
                "--no-previews",
            ])
            .output()
            .unwrap();
        assert!(
            compiled.status.success(),
            "{}",
            String::from_utf8_lossy(&compiled.stderr)
        );
        let prepared =
            glowscore::prepared::Prepared::new(glowscore::show::load(&show).unwrap()).unwrap();
        let mut tables = String::new();
        for p in &prepared.show().props {
            tables += &table_digests(&out, &p.name, p.leds as usize, p.wire_order.bytes_per_led());
        }
        let checked = Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .args(["check", show.to_str().unwrap()])
            .output()
            .unwrap();
        let text = String::from_utf8(checked.stdout).unwrap();
        for (name, actual, what) in [
            (format!("{stem}.tables.txt"), tables, "the tables"),
            (format!("{stem}.check.txt"), text, "the check text"),
        ] {
            failures.extend(compare(&name, &actual, what));
            expected_files.push(name);
        }
        let _ = std::fs::remove_dir_all(&out);
    }
    // Orphans: every golden file belongs to a demo.
    for entry in std::fs::read_dir(golden_dir()).into_iter().flatten() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        if !expected_files.contains(&name) {
            failures.push(format!(
                "tests/golden/demos/{name} belongs to no demo show: remove it"
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
