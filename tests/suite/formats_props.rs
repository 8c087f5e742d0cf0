//! Property tests: the compact encoder is lossless on any frames, resync marks (version 2)
//! read back as written, and the reader never panics.

use glowscore::model::WireOrder;
use glowscore::output::{
    CompactTableWriter, FrameWriter, FullTableWriter, Mark, TableSpec, read_table,
};
use proptest::prelude::*;

/// A stretch of frames: a hold, a ramp by the documented fade rule, or noise.
#[derive(Clone, Debug)]
enum Piece {
    Hold(Vec<[u8; 3]>, usize),
    Ramp(Vec<[u8; 3]>, Vec<[i8; 3]>, usize),
    Noise(Vec<Vec<[u8; 3]>>),
}

fn piece(leds: usize) -> impl Strategy<Value = Piece> {
    let colours = prop::collection::vec(any::<[u8; 3]>(), leds);
    prop_oneof![
        (colours.clone(), 1usize..40).prop_map(|(c, n)| Piece::Hold(c, n)),
        (
            colours.clone(),
            prop::collection::vec(any::<[i8; 3]>(), leds),
            2usize..40
        )
            .prop_map(|(c, s, n)| Piece::Ramp(c, s, n)),
        prop::collection::vec(colours, 1..8).prop_map(Piece::Noise),
    ]
}

fn frames_of(pieces: &[Piece]) -> Vec<Vec<[u8; 3]>> {
    let mut out = Vec::new();
    for p in pieces {
        match p {
            Piece::Hold(c, n) => out.extend(std::iter::repeat_n(c.clone(), *n)),
            Piece::Ramp(c, s, n) => {
                for j in 0..*n as i64 {
                    // Step s/8 byte a frame by the rule (a*2^16 + step*j + 2^15) >> 16, clamped
                    // to the byte range (a clamped ramp is no longer exact: the encoder must cope).
                    let f = c
                        .iter()
                        .zip(s)
                        .map(|(a, s)| {
                            [0, 1, 2].map(|k| {
                                let step = i64::from(s[k]) << 13;
                                let v = ((i64::from(a[k]) << 16) + step * j + (1 << 15)) >> 16;
                                v.clamp(0, 255) as u8
                            })
                        })
                        .collect();
                    out.push(f);
                }
            }
            Piece::Noise(fs) => out.extend(fs.iter().cloned()),
        }
    }
    out
}

fn order() -> impl Strategy<Value = WireOrder> {
    (0usize..8).prop_map(|i| WireOrder::from_name(WireOrder::names()[i]).unwrap())
}

fn encode<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) {
    for f in frames {
        w.push_frame(f).unwrap();
    }
    w.finish().unwrap();
}

/// Valid resync marks for `frames` frames from arbitrary picks: frames
/// sorted (repeats allowed), bars increasing by 1 to 4.
fn marks_of(picks: &[(prop::sample::Index, u8)], frames: usize) -> Vec<Mark> {
    if frames == 0 {
        return Vec::new();
    }
    let mut at: Vec<u32> = picks.iter().map(|(i, _)| i.index(frames) as u32).collect();
    at.sort_unstable();
    let mut bar = 0;
    at.iter()
        .zip(picks)
        .map(|(&frame, (_, gap))| {
            bar += 1 + u32::from(gap % 4);
            Mark { frame, bar }
        })
        .collect()
}

fn marks() -> impl Strategy<Value = Vec<(prop::sample::Index, u8)>> {
    prop::collection::vec((any::<prop::sample::Index>(), any::<u8>()), 0..5)
}

fn case() -> impl Strategy<Value = (usize, WireOrder, Vec<Piece>)> {
    (1usize..5, order()).prop_flat_map(|(leds, o)| {
        (
            Just(leds),
            Just(o),
            prop::collection::vec(piece(leds), 0..12),
        )
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn compact_and_full_decode_to_the_frames_pushed((leds, order, pieces) in case(), picks in marks()) {
        let frames = frames_of(&pieces);
        let marks = marks_of(&picks, frames.len());
        let spec = TableSpec { frame_rate_hz: 100, leds: leds as u32, order, frame_count: frames.len() as u32 };
        let fs = spec.frame_size() as usize;
        let want: Vec<u8> = frames.iter().flat_map(|f| {
            let mut w = vec![0u8; fs];
            order.encode_frame(f, &mut w);
            w
        }).collect();
        let mut full = Vec::new();
        encode(FullTableWriter::with_marks(&mut full, spec, &marks).unwrap(), &frames);
        let mut compact = Vec::new();
        encode(CompactTableWriter::with_marks(&mut compact, spec, &marks).unwrap(), &frames);
        for bytes in [&full, &compact] {
            let view = read_table(bytes).unwrap();
            prop_assert_eq!(view.version(), if marks.is_empty() { 1 } else { 2 });
            prop_assert_eq!(view.marks().collect::<Vec<_>>(), marks.clone());
            let mut got = vec![0u8; want.len()];
            for (k, chunk) in got.chunks_mut(fs.max(1)).enumerate() {
                view.frame(k as u32, chunk).unwrap();
            }
            prop_assert_eq!(&got, &want);
        }
        // Never much larger than full: at worst every literal run costs one index entry.
        prop_assert!(compact.len() <= full.len() + 12 * (1 + frames.len() / 2));
    }

    #[test]
    fn the_reader_never_panics_on_resealed_garbage(
        (leds, order, pieces) in case(),
        edits in prop::collection::vec((any::<prop::sample::Index>(), any::<u8>()), 1..6),
        picks in marks(),
    ) {
        let frames = frames_of(&pieces);
        let marks = marks_of(&picks, frames.len());
        let spec = TableSpec { frame_rate_hz: 100, leds: leds as u32, order, frame_count: frames.len() as u32 };
        let mut bytes = Vec::new();
        encode(CompactTableWriter::with_marks(&mut bytes, spec, &marks).unwrap(), &frames);
        let n = bytes.len();
        for (at, v) in edits {
            let i = at.index(n - 4);
            bytes[i] = v;
        }
        let crc = crc32fast::hash(&bytes[..n - 4]);
        bytes[n - 4..].copy_from_slice(&crc.to_le_bytes());
        // Whatever it says, it must say it without panicking; an accepted table reads fully.
        if let Ok(view) = read_table(&bytes) {
            let read: Vec<Mark> = view.marks().collect();
            prop_assert_eq!(read.len() as u32, view.mark_count());
            prop_assert!(read.iter().all(|m| m.frame < view.spec().frame_count && m.bar > 0));
            let mut buf = vec![0u8; view.frame_size()];
            for k in 0..view.spec().frame_count {
                prop_assert!(view.frame(k, &mut buf).is_ok());
            }
        }
    }
}
