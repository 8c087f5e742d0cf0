//! Resync marks in the version-2 header of both tables (`full-table.md`,
//! "Resync marks"): written, read back by the Rust reader and the C decoder
//! alike, version 1 still read, and marks that break a rule refused by both.

use super::*;

fn marks() -> Vec<Mark> {
    [(0, 1), (40, 3), (40, 4), (199, 9)]
        .map(|(frame, bar)| Mark { frame, bar })
        .to_vec()
}

/// The C decoder's `marks` output for `bytes`: exit code, stdout, stderr.
fn c_marks(bytes: &[u8], dir: &Path, tag: &str) -> (i32, String, String) {
    let file = dir.join(format!("{tag}.bin"));
    std::fs::write(&file, bytes).unwrap();
    run_c(common::decoder(), &["marks", path_str(&file)])
}

fn as_text(marks: &[Mark]) -> String {
    marks
        .iter()
        .map(|m| format!("{} {}\n", m.frame, m.bar))
        .collect()
}

#[test]
fn marks_round_trip_through_both_decoders_and_leave_the_frames_alone() {
    let frames: Vec<_> = ShowGen::run_heavy(5, 200, 71).collect();
    let spec = spec(5, WireOrder::Grb, frames.len());
    let want = wire_all(WireOrder::Grb, &frames);
    let dir = tmp_dir("marks");
    for form in [TableForm::Full, TableForm::Compact] {
        let (plain, _) = table(form, spec, &frames);
        let (marked, stats) = table_with_marks(form, spec, &marks(), &frames);
        // The header grows by the count and 8 bytes a mark; the rest is as in version 1.
        assert_eq!(marked.len(), plain.len() + 4 + 8 * 4, "{form:?}");
        assert_eq!(&marked[..4], &plain[..4]);
        assert_eq!(u16::from_le_bytes([marked[4], marked[5]]), 2);
        assert_eq!(u16::from_le_bytes([marked[6], marked[7]]), 40 + 32);
        assert_eq!(&marked[8..36], &plain[8..36]);
        assert_eq!(&marked[72..marked.len() - 4], &plain[36..plain.len() - 4]);
        let view = read_table(&marked).unwrap();
        assert_eq!(view.version(), 2);
        assert_eq!(Some(view.crc32()), stats.crc32);
        assert_eq!(view.marks().collect::<Vec<_>>(), marks());
        assert_same_frames(&rust_decode_all(&marked), &want, 15, "marked, Rust");
        let tag = format!("{form:?}-marked");
        assert_same_frames(&c_decode_all(&marked, &dir, &tag), &want, 15, "marked, C");
        let (code, out, err) = c_marks(&marked, &dir, &tag);
        assert_eq!(code, 0, "{err}");
        assert_eq!(out, as_text(&marks()));
        // Without marks the table is version 1, as before, and has none.
        let view = read_table(&plain).unwrap();
        assert_eq!((view.version(), view.mark_count()), (1, 0));
        let (code, out, _) = c_marks(&plain, &dir, &format!("{form:?}-plain"));
        assert_eq!((code, out.as_str()), (0, ""));
    }
}

#[test]
fn marks_that_break_a_rule_are_refused_by_both_decoders_and_by_the_writers() {
    let frames: Vec<_> = ShowGen::run_heavy(2, 200, 72).collect();
    let spec = spec(2, WireOrder::Rgb, frames.len());
    let dir = tmp_dir("marks_rules");
    let (good, _) = table_with_marks(TableForm::Compact, spec, &marks(), &frames);
    let put = |b: &mut Vec<u8>, at: usize, v: u32| b[at..at + 4].copy_from_slice(&v.to_le_bytes());
    let reseal = |b: &mut Vec<u8>| {
        let n = b.len();
        let crc = crc32fast::hash(&b[..n - 4]);
        b[n - 4..].copy_from_slice(&crc.to_le_bytes());
    };
    // Mark i sits at 40 + 8 i: frame, then bar.
    let cases: [(&str, usize, u32); 5] = [
        ("frame past the end", 40 + 24, 200),
        ("bar 0", 40 + 4, 0),
        ("bars not increasing", 40 + 8 + 8 + 4, 3),
        ("frames decreasing", 40 + 8 + 8, 39),
        ("more marks than the header holds", 36, 5),
    ];
    for (tag, at, v) in cases {
        let mut bad = good.clone();
        put(&mut bad, at, v);
        reseal(&mut bad);
        assert!(
            matches!(read_table(&bad), Err(ReadError::BadMarks(_))),
            "{tag}: Rust {:?}",
            read_table(&bad).map(|_| ())
        );
        let (code, _, err) = c_marks(&bad, &dir, &tag.replace(' ', "_"));
        assert_eq!((code, err.trim()), (1, "error: bad resync marks"), "{tag}");
    }
    // A version-2 header too short to hold the count is a header error.
    let mut bad = good[..36].to_vec();
    bad.extend_from_slice(&good[72..]);
    bad[6] = 36;
    reseal(&mut bad);
    assert!(matches!(read_table(&bad), Err(ReadError::BadHeader(_))));
    // A version this decoder does not know is refused.
    let mut bad = good.clone();
    bad[4] = 3;
    reseal(&mut bad);
    assert!(matches!(read_table(&bad), Err(ReadError::Version(3))));
    let (code, _, err) = c_marks(&bad, &dir, "version_3");
    assert_eq!((code, err.trim()), (1, "error: unsupported version"));
    // The writers refuse marks they could not store.
    for bad in [
        vec![Mark { frame: 200, bar: 1 }],
        vec![Mark { frame: 3, bar: 0 }],
        vec![Mark { frame: 5, bar: 2 }, Mark { frame: 4, bar: 3 }],
        vec![Mark { frame: 5, bar: 2 }, Mark { frame: 6, bar: 2 }],
    ] {
        assert!(FullTableWriter::with_marks(Vec::new(), spec, &bad).is_err());
        assert!(CompactTableWriter::with_marks(Vec::new(), spec, &bad).is_err());
    }
    let many: Vec<Mark> = (0..8187)
        .map(|i| Mark {
            frame: 0,
            bar: i + 1,
        })
        .collect();
    let spec_long = TableSpec {
        frame_count: 10,
        ..spec
    };
    assert!(FullTableWriter::with_marks(Vec::new(), spec_long, &many).is_err());
    assert!(FullTableWriter::with_marks(Vec::new(), spec_long, &many[..8186]).is_ok());
}

#[test]
fn a_version_2_table_relabelled_version_1_plays_the_same_frames() {
    // full-table.md, "Versions and readers": apart from the header a
    // version-2 table is laid out as version 1, and a version-1 reader skips
    // header bytes 36 .. header_len. So the same bytes, relabelled version 1
    // (and resealed), decode to the same frames, without marks.
    let frames: Vec<_> = ShowGen::run_heavy(4, 150, 73).collect();
    let spec = spec(4, WireOrder::Rgbw, frames.len());
    let want = wire_all(WireOrder::Rgbw, &frames);
    let dir = tmp_dir("marks_v1");
    let marks = vec![Mark { frame: 7, bar: 2 }, Mark { frame: 90, bar: 5 }];
    for form in [TableForm::Full, TableForm::Compact] {
        let (mut bytes, _) = table_with_marks(form, spec, &marks, &frames);
        bytes[4] = 1;
        let n = bytes.len();
        let crc = crc32fast::hash(&bytes[..n - 4]);
        bytes[n - 4..].copy_from_slice(&crc.to_le_bytes());
        let view = read_table(&bytes).unwrap();
        assert_eq!((view.version(), view.mark_count()), (1, 0));
        assert_same_frames(&rust_decode_all(&bytes), &want, 16, "relabelled, Rust");
        let tag = format!("{form:?}-relabelled");
        assert_same_frames(
            &c_decode_all(&bytes, &dir, &tag),
            &want,
            16,
            "relabelled, C",
        );
    }
}
