//! Tables that pass the CRC but break a rule, and extensions a version 1 decoder skips.

use super::*;

// ---------------------------------------------------------------------------
// Tables that pass the CRC but break a rule (a buggy writer, not a damaged file)

/// Recomputes the trailer CRC after an edit.
fn reseal(bytes: &mut [u8]) {
    let n = bytes.len();
    let crc = crc32fast::hash(&bytes[..n - 4]);
    bytes[n - 4..].copy_from_slice(&crc.to_le_bytes());
}

fn put_u32(bytes: &mut [u8], at: usize, v: u32) {
    bytes[at..at + 4].copy_from_slice(&v.to_le_bytes());
}

/// The Rust reader's verdict and the C decoder's message on `bytes`.
fn verdicts(bytes: &[u8], dir: &Path, tag: &str) -> (Result<(), ReadError>, String) {
    let file = dir.join(format!("{}.bin", tag.replace(' ', "_")));
    std::fs::write(&file, bytes).unwrap();
    let (code, _, err) = run_c(common::decoder(), &["info", path_str(&file)]);
    let c = if code == 0 {
        "ok".to_string()
    } else {
        err.trim().to_string()
    };
    (read_table(bytes).map(|_| ()), c)
}

#[test]
fn resealed_tables_that_break_a_rule_are_refused_by_both_decoders() {
    // A compact table with a hold, a fade and literal frames (as in the segment test).
    let mut frames = vec![vec![[7u8, 7, 7]; 2]; 50];
    for j in 0..40u8 {
        frames.push(vec![[j * 5, 200 - j * 5, 9], [1, 2, 3]]);
    }
    let mut rng = Rng(5);
    for _ in 0..5 {
        frames.push(vec![rng.colour(), rng.colour()]);
    }
    let spec = spec(2, WireOrder::Rgb, frames.len());
    let (good, _) = table(TableForm::Compact, spec, &frames);
    let view = read_table(&good).unwrap();
    assert_eq!(view.segment_count(), 3);
    let n = good.len();
    let index = n - 12 - 3 * 12;
    let data = 36;
    let dir = tmp_dir("resealed");
    type Edit = Box<dyn Fn(&mut Vec<u8>)>;
    let cases: Vec<(&str, Edit, &str)> = vec![
        (
            "version 3",
            Box::new(|b| b[4] = 3),
            "error: unsupported version",
        ),
        (
            "header_len 35",
            Box::new(|b| b[6] = 35),
            "error: bad header",
        ),
        (
            "required flag",
            Box::new(|b| b[8] = 1),
            "error: unknown required flags",
        ),
        (
            "zero rate",
            Box::new(|b| put_u32(b, 12, 0)),
            "error: bad header",
        ),
        (
            "zero LEDs",
            Box::new(|b| put_u32(b, 16, 0)),
            "error: bad header",
        ),
        (
            "reserved byte",
            Box::new(|b| b[26] = 1),
            "error: bad header",
        ),
        (
            "unknown order",
            Box::new(|b| b[28] = b'X'),
            "error: bad header",
        ),
        (
            "bytes per LED",
            Box::new(|b| b[24] = 4),
            "error: bad header",
        ),
        (
            "frame size",
            Box::new(|b| put_u32(b, 32, 7)),
            "error: bad header",
        ),
        (
            "more frames",
            Box::new(|b| put_u32(b, 20, 96)),
            "error: bad segment index",
        ),
        (
            "fewer frames",
            Box::new(move |b| put_u32(b, 20, 50)),
            "error: bad segment index",
        ),
        (
            "kind 3",
            Box::new(move |b| b[index + 8] = 3),
            "error: bad segment index",
        ),
        (
            "reserved in entry",
            Box::new(move |b| b[index + 12 + 10] = 1),
            "error: bad segment index",
        ),
        (
            "first not 0",
            Box::new(move |b| put_u32(b, index, 1)),
            "error: bad segment index",
        ),
        (
            "not increasing",
            Box::new(move |b| put_u32(b, index + 12, 0)),
            "error: bad segment index",
        ),
        (
            "gap in data",
            Box::new(move |b| put_u32(b, index + 16, 7)),
            "error: bad segment index",
        ),
        (
            "hold as literal",
            Box::new(move |b| b[index + 8] = 0),
            "error: bad segment index",
        ),
        // Fade step of +200 bytes a frame: the last frame leaves 0..255.
        (
            "fade overflows",
            Box::new(move |b| put_u32(b, data + 6 + 6, 200 << 16)),
            "error: bad segment index",
        ),
        (
            "fade underflows",
            Box::new(move |b| put_u32(b, data + 6 + 6, (-(200i32 << 16)) as u32)),
            "error: bad segment index",
        ),
        // Version 2 needs room in the header for its mark count.
        (
            "version 2 without marks",
            Box::new(|b| b[4] = 2),
            "error: bad header",
        ),
        (
            "magic",
            Box::new(|b| b[3] = b'X'),
            "error: not a glowscore table",
        ),
    ];
    for (tag, edit, c_msg) in &cases {
        let mut bad = good.clone();
        edit(&mut bad);
        reseal(&mut bad);
        let (rust, c) = verdicts(&bad, &dir, tag);
        assert!(rust.is_err(), "{tag}: Rust accepted");
        assert_eq!(c, *c_msg, "{tag}: C decoder");
    }
    // Segment counts that do not fit the length are a length error, not a crash.
    let mut bad = good.clone();
    put_u32(&mut bad, n - 8, 4);
    reseal(&mut bad);
    let (rust, c) = verdicts(&bad, &dir, "segment count");
    assert!(matches!(rust, Err(ReadError::Length { .. })));
    assert_eq!(c, "error: length mismatch");
    // A full table claiming segments, or the wrong data length, is refused.
    let (full, _) = table(TableForm::Full, spec, &frames);
    let mut bad = full.clone();
    put_u32(&mut bad, 20, frames.len() as u32 - 1);
    reseal(&mut bad);
    let (rust, c) = verdicts(&bad, &dir, "full frames");
    assert!(rust.is_err());
    assert_eq!(c, "error: bad header");
}

#[test]
fn extensions_a_version_1_decoder_must_skip_are_skipped() {
    // full-table.md: bytes 36..header_len are skipped; unknown optional flags (16..31) ignored.
    let frames: Vec<_> = ShowGen::run_heavy(3, 300, 61).collect();
    let spec = spec(3, WireOrder::Gbr, frames.len());
    let want = wire_all(WireOrder::Gbr, &frames);
    let dir = tmp_dir("extensions");
    for form in [TableForm::Full, TableForm::Compact] {
        let (good, _) = table(form, spec, &frames);
        let mut ext = good[..36].to_vec();
        ext.extend_from_slice(&[0xAB; 8]);
        ext.extend_from_slice(&good[36..]);
        ext[6] = 44;
        ext[10] = 0x01; // flag bit 16, optional
        reseal(&mut ext);
        assert_same_frames(&rust_decode_all(&ext), &want, 9, "extended header, Rust");
        assert_same_frames(
            &c_decode_all(&ext, &dir, &format!("{form:?}")),
            &want,
            9,
            "extended header, C",
        );
    }
}
