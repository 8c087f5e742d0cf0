//! The compact table: holds and fades as segments, sizes, limits, fades through sRGB.

use super::*;

// ---------------------------------------------------------------------------
// Compact table

#[test]
fn compact_stores_holds_and_exact_fades_as_segments() {
    // 300 frames held, a 200-frame exact fade by the documented rule, 50 frames of noise.
    let leds = 4;
    let mut rng = Rng(99);
    let hold: Vec<[u8; 3]> = (0..leds).map(|_| rng.colour()).collect();
    let start: Vec<[u8; 3]> = vec![[10, 200, 0], [255, 0, 40], [0, 0, 0], [128, 128, 128]];
    let steps: Vec<[i64; 3]> = vec![
        [65536, -49152, 1000],
        [-80000, 30000, 65536 / 3],
        [0, 0, 65536],
        [-20000, 20000, 0],
    ];
    let mut frames = vec![hold.clone(); 300];
    for j in 0..200 {
        frames.push(
            start
                .iter()
                .zip(&steps)
                .map(|(a, s)| [0, 1, 2].map(|c| doc_fade(a[c], s[c], j)))
                .collect(),
        );
    }
    for _ in 0..50 {
        frames.push((0..leds).map(|_| rng.colour()).collect());
    }
    let spec = spec(leds as u32, WireOrder::Rgb, frames.len());
    let (bytes, stats) = table(TableForm::Compact, spec, &frames);
    let seg = stats.segments.unwrap();
    assert_eq!((seg.hold_segments, seg.hold_frames), (1, 300));
    assert_eq!((seg.fade_segments, seg.fade_frames), (1, 200));
    assert_eq!((seg.literal_segments, seg.literal_frames), (1, 50));
    let view = read_table(&bytes).unwrap();
    assert_eq!(view.segment(0), Some((0, 300, SegmentKind::Hold)));
    assert_eq!(view.segment(1), Some((300, 200, SegmentKind::Fade)));
    assert_eq!(view.segment(2), Some((500, 50, SegmentKind::Literal)));
    assert_eq!(view.segment(3), None);
    // header 36 + hold 12 + fade 5*12 + literal 50*12 + index 3*12 + trailer 12
    assert_eq!(bytes.len(), 36 + 12 + 60 + 600 + 36 + 12);
    assert_same_frames(
        &rust_decode_all(&bytes),
        &wire_all(WireOrder::Rgb, &frames),
        12,
        "compact",
    );
}

#[test]
fn compact_is_smaller_than_full_on_run_heavy_input() {
    let cases = [
        ("1 LED grb", 1u32, WireOrder::Grb, 20_000usize),
        ("8 LEDs rgbw", 8, WireOrder::Rgbw, 20_000),
        ("72 LEDs grb", 72, WireOrder::Grb, 20_000),
    ];
    for (name, leds, order, n) in cases {
        let frames: Vec<_> = ShowGen::run_heavy(leds as usize, n, 5).collect();
        let spec = spec(leds, order, n);
        let (full, _) = table(TableForm::Full, spec, &frames);
        let (compact, stats) = table(TableForm::Compact, spec, &frames);
        let seg = stats.segments.unwrap();
        println!(
            "{name}, {n} frames: full {} bytes, compact {} bytes ({:.1} %); segments: \
             {} literal ({} frames), {} hold ({} frames), {} fade ({} frames)",
            full.len(),
            compact.len(),
            100.0 * compact.len() as f64 / full.len() as f64,
            seg.literal_segments,
            seg.literal_frames,
            seg.hold_segments,
            seg.hold_frames,
            seg.fade_segments,
            seg.fade_frames
        );
        // White extraction (w = min(r, g, b)) bends fades on the wire, so RGBW compresses less.
        assert!(
            compact.len() * 2 < full.len(),
            "{name}: compact not half of full"
        );
        assert_eq!(
            seg.literal_frames + seg.hold_frames + seg.fade_frames,
            n as u32
        );
    }
}

#[test]
fn compact_never_grows_much_past_full_on_noise() {
    // Pure noise: one literal segment; the overhead is one index entry.
    let frames: Vec<_> = ShowGen::new(6, 3000, 8, [0, 0, 0, 1, 0]).collect();
    let spec = spec(6, WireOrder::Rgb, frames.len());
    let (full, _) = table(TableForm::Full, spec, &frames);
    let (compact, stats) = table(TableForm::Compact, spec, &frames);
    let seg = stats.segments.unwrap();
    assert!(compact.len() <= full.len() + 12 * seg.total_segments() as usize);
    assert!(seg.literal_frames > 2900);
}

#[test]
fn compact_encoding_is_deterministic() {
    let frames: Vec<_> = ShowGen::run_heavy(10, 4000, 77).collect();
    let spec = spec(10, WireOrder::Grb, frames.len());
    let (a, _) = table(TableForm::Compact, spec, &frames);
    let (b, _) = table(TableForm::Compact, spec, &frames);
    assert_eq!(a, b);
}

#[test]
fn compact_fade_at_the_limits_of_the_byte_range() {
    // 0 -> 255 in 3 frames and back, single frames everywhere, 1 LED: the edges of the rule.
    let mut frames = Vec::new();
    for k in 0..400u32 {
        let v = match k % 40 {
            0..=2 => [0, 128, 255][(k % 40) as usize],
            3..=20 => 255 - (k % 40 - 3) as u8 * 15,
            _ => (k % 7) as u8,
        };
        frames.push(vec![[v, 255 - v, v / 2]]);
    }
    let spec = spec(1, WireOrder::Rgb, frames.len());
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, _) = table(form, spec, &frames);
        assert_same_frames(
            &rust_decode_all(&bytes),
            &wire_all(WireOrder::Rgb, &frames),
            3,
            "edges",
        );
        let dir = tmp_dir("fade_limits");
        assert_same_frames(
            &c_decode_all(&bytes, &dir, &format!("{form:?}")),
            &wire_all(WireOrder::Rgb, &frames),
            3,
            "edges C",
        );
    }
}

/// sRGB byte to linear light 0..=1 (IEC 61966-2-1 decoding function).
fn srgb_to_linear(v: f64) -> f64 {
    if v <= 0.04045 {
        v / 12.92
    } else {
        glowscore::num::pow((v + 0.055) / 1.055, 2.4)
    }
}

#[test]
fn compact_on_fades_through_the_srgb_curve() {
    // Cue-like input: 1 s crossfades at 500 Hz between random colours, interpolated in sRGB
    // and sent as linear light (IEC 61966-2-1), each followed by a 2 s hold. On the wire such
    // a fade is a curve, stored as a chain of exact linear pieces.
    let mut rng = Rng(2024);
    for leds in [1usize, 72] {
        let mut frames = Vec::new();
        let mut from = rng.colour();
        for _ in 0..20 {
            let to = rng.colour();
            for j in 0..500 {
                let t = f64::from(j) / 499.0;
                let c = [0, 1, 2].map(|k| {
                    let s =
                        (f64::from(from[k]) + (f64::from(to[k]) - f64::from(from[k])) * t) / 255.0;
                    (srgb_to_linear(s) * 255.0).round() as u8
                });
                frames.push(vec![c; leds]);
            }
            frames.extend(std::iter::repeat_n(frames.last().unwrap().clone(), 1000));
            from = to;
        }
        let spec = spec(leds as u32, WireOrder::Grb, frames.len());
        let (full, _) = table(TableForm::Full, spec, &frames);
        let (compact, stats) = table(TableForm::Compact, spec, &frames);
        let seg = stats.segments.unwrap();
        println!(
            "sRGB-curve fades, {leds} LED(s), {} frames: full {} bytes, compact {} bytes ({:.1} %); \
             {} fade segments ({} frames), {} literal frames",
            frames.len(),
            full.len(),
            compact.len(),
            100.0 * compact.len() as f64 / full.len() as f64,
            seg.fade_segments,
            seg.fade_frames,
            seg.literal_frames
        );
        assert!(compact.len() * 4 < full.len());
        assert_same_frames(
            &rust_decode_all(&compact),
            &wire_all(WireOrder::Grb, &frames),
            leds * 3,
            "curve",
        );
    }
}
