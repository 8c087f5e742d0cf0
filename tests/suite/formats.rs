//! Frame-table formats end to end: every writer on deterministic show-like frames, the Rust
//! reader, and the C99 reference decoder compiled with the system compiler.

use crate::common;

use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::model::WireOrder;
use glowscore::output::{
    CHeaderWriter, CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, OutputError,
    ReadError, SegmentKind, TableForm, TableSpec, WriteStats, read_table,
};

// ---------------------------------------------------------------------------
// Deterministic frames

/// SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom number generators", 2014).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    fn byte(&mut self) -> u8 {
        self.next() as u8
    }
    fn colour(&mut self) -> [u8; 3] {
        [self.byte(), self.byte(), self.byte()]
    }
}

/// The fade rule of firmware-formats/compact-table.md, written out again independently:
/// value = (a * 2^16 + s * j + 2^15) >> 16, with s a signed step in 1/65536 byte per frame.
fn doc_fade(a: u8, s: i64, j: i64) -> u8 {
    let v = (i64::from(a) << 16) + s * j + (1 << 15);
    u8::try_from(v >> 16).expect("test fades stay in range")
}

/// One piece of a generated show.
enum Piece {
    /// The same frame for `n` frames.
    Hold(Vec<[u8; 3]>, usize),
    /// Exact fade by the documented rule: start colours and steps per RGB channel.
    Fade(Vec<[u8; 3]>, Vec<[i64; 3]>, usize),
    /// A fade rounded from floating point, as a cue engine might make it (not exact in general).
    Lerp(Vec<[u8; 3]>, Vec<[u8; 3]>, usize),
    /// Random bytes every frame.
    Noise(usize),
    /// Two frames alternating every frame (a strobe).
    Strobe(Vec<[u8; 3]>, Vec<[u8; 3]>, usize),
}

/// Streams show-like frames without holding them: holds, exact fades, rounded fades, noise, strobes.
struct ShowGen {
    rng: Rng,
    leds: usize,
    left: usize,
    piece: Option<Piece>,
    j: usize,
    /// Relative weights of hold, fade, lerp, noise, strobe.
    weights: [u64; 5],
}

impl ShowGen {
    fn new(leds: usize, frames: usize, seed: u64, weights: [u64; 5]) -> Self {
        ShowGen {
            rng: Rng(seed),
            leds,
            left: frames,
            piece: None,
            j: 0,
            weights,
        }
    }

    /// Mostly holds and fades, a little noise: what a show of cues looks like.
    fn run_heavy(leds: usize, frames: usize, seed: u64) -> Self {
        Self::new(leds, frames, seed, [40, 25, 15, 5, 5])
    }

    fn colours(&mut self) -> Vec<[u8; 3]> {
        // Half the time every LED shows one colour, as a single-colour cue does.
        if self.rng.below(2) == 0 {
            let c = self.rng.colour();
            vec![c; self.leds]
        } else {
            (0..self.leds).map(|_| self.rng.colour()).collect()
        }
    }

    fn new_piece(&mut self) -> Piece {
        let total: u64 = self.weights.iter().sum();
        let mut pick = self.rng.below(total);
        let mut kind = 0;
        while pick >= self.weights[kind] {
            pick -= self.weights[kind];
            kind += 1;
        }
        match kind {
            0 => {
                let n = 1 + self.rng.below(600) as usize;
                Piece::Hold(self.colours(), n)
            }
            1 => {
                let n = 2 + self.rng.below(400) as usize;
                let a = self.colours();
                let b = self.colours();
                let steps = a
                    .iter()
                    .zip(&b)
                    .map(|(a, b)| {
                        let mut s = [0i64; 3];
                        for c in 0..3 {
                            // Truncated toward zero: the end lands between a and b.
                            s[c] = ((i64::from(b[c]) - i64::from(a[c])) << 16) / (n as i64 - 1);
                        }
                        s
                    })
                    .collect();
                Piece::Fade(a, steps, n)
            }
            2 => {
                let n = 2 + self.rng.below(300) as usize;
                Piece::Lerp(self.colours(), self.colours(), n)
            }
            3 => Piece::Noise(1 + self.rng.below(60) as usize),
            _ => {
                let n = 2 + self.rng.below(40) as usize;
                Piece::Strobe(self.colours(), self.colours(), n)
            }
        }
    }
}

impl Iterator for ShowGen {
    type Item = Vec<[u8; 3]>;

    fn next(&mut self) -> Option<Vec<[u8; 3]>> {
        if self.left == 0 {
            return None;
        }
        self.left -= 1;
        let done = match &self.piece {
            None => true,
            Some(Piece::Hold(_, n) | Piece::Fade(_, _, n) | Piece::Lerp(_, _, n)) => self.j >= *n,
            Some(Piece::Noise(n) | Piece::Strobe(_, _, n)) => self.j >= *n,
        };
        if done {
            self.piece = Some(self.new_piece());
            self.j = 0;
        }
        let j = self.j;
        self.j += 1;
        let leds = self.leds;
        let frame = match self.piece.as_ref().expect("set above") {
            Piece::Hold(c, _) => c.clone(),
            Piece::Fade(a, s, _) => a
                .iter()
                .zip(s)
                .map(|(a, s)| {
                    let mut out = [0u8; 3];
                    for c in 0..3 {
                        out[c] = doc_fade(a[c], s[c], j as i64);
                    }
                    out
                })
                .collect(),
            Piece::Lerp(a, b, n) => {
                let t = j as f64 / (*n as f64 - 1.0);
                a.iter()
                    .zip(b)
                    .map(|(a, b)| {
                        let mut out = [0u8; 3];
                        for c in 0..3 {
                            let v = f64::from(a[c]) + (f64::from(b[c]) - f64::from(a[c])) * t;
                            out[c] = v.round() as u8;
                        }
                        out
                    })
                    .collect()
            }
            Piece::Noise(_) => (0..leds).map(|_| self.rng.colour()).collect(),
            Piece::Strobe(a, b, _) => {
                if j.is_multiple_of(2) {
                    a.clone()
                } else {
                    b.clone()
                }
            }
        };
        Some(frame)
    }
}

fn spec(leds: u32, order: WireOrder, frames: usize) -> TableSpec {
    TableSpec {
        frame_rate_hz: 500,
        leds,
        order,
        frame_count: frames as u32,
    }
}

fn wire_frame(order: WireOrder, frame: &[[u8; 3]]) -> Vec<u8> {
    let mut out = vec![0u8; frame.len() * order.bytes_per_led()];
    order.encode_frame(frame, &mut out);
    out
}

fn wire_all(order: WireOrder, frames: &[Vec<[u8; 3]>]) -> Vec<u8> {
    frames.iter().flat_map(|f| wire_frame(order, f)).collect()
}

fn push_all<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) -> WriteStats {
    for f in frames {
        w.push_frame(f).expect("push");
    }
    w.finish().expect("finish")
}

fn table(form: TableForm, spec: TableSpec, frames: &[Vec<[u8; 3]>]) -> (Vec<u8>, WriteStats) {
    let mut out = Vec::new();
    let stats = match form {
        TableForm::Full => push_all(FullTableWriter::new(&mut out, spec).unwrap(), frames),
        TableForm::Compact => push_all(CompactTableWriter::new(&mut out, spec).unwrap(), frames),
    };
    assert_eq!(stats.bytes_written, out.len() as u64);
    assert_eq!(stats.table_bytes, Some(out.len() as u64));
    (out, stats)
}

/// Compares decoded bytes with the expected wire bytes; names the first differing frame and byte.
#[track_caller]
fn assert_same_frames(got: &[u8], want: &[u8], frame_size: usize, what: &str) {
    if let Some(i) = got.iter().zip(want).position(|(a, b)| a != b) {
        panic!(
            "{what}: frame {} byte {} is {:#04x}, pushed {:#04x}",
            i / frame_size,
            i % frame_size,
            got[i],
            want[i]
        );
    }
    assert_eq!(got.len(), want.len(), "{what}: decoded length");
}

fn rust_decode_all(bytes: &[u8]) -> Vec<u8> {
    let view = read_table(bytes).expect("valid table");
    let fs = view.frame_size();
    let mut out = vec![0u8; fs * view.spec().frame_count as usize];
    for (k, chunk) in out.chunks_mut(fs).enumerate() {
        view.frame(k as u32, chunk).expect("frame");
    }
    out
}

// ---------------------------------------------------------------------------
// The C decoder

fn tmp_dir(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("formats")
        .join(name);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

/// Runs the C decoder; returns (exit code, stdout, stderr).
fn run_c(exe: &Path, args: &[&str]) -> (i32, String, String) {
    let out = Command::new(exe)
        .args(args)
        .output()
        .expect("run test_decode");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn path_str(p: &Path) -> &str {
    p.to_str().expect("utf-8 temp path")
}

/// Writes `bytes` to a file, decodes every frame with the C decoder, returns the frames.
fn c_decode_all(bytes: &[u8], dir: &Path, name: &str) -> Vec<u8> {
    let file = dir.join(format!("{name}.bin"));
    let dump = dir.join(format!("{name}.dump"));
    std::fs::write(&file, bytes).unwrap();
    let (code, _, err) = run_c(
        common::decoder(),
        &["dump", path_str(&file), path_str(&dump)],
    );
    assert_eq!(code, 0, "C decoder refused {name}: {err}");
    std::fs::read(&dump).unwrap()
}

// ---------------------------------------------------------------------------
// CRC

#[test]
fn crc32_check_value_of_123456789() {
    // CRC-32 (IEEE 802.3 polynomial, reflected, init and xorout 0xFFFFFFFF): check value
    // 0xCBF43926 for "123456789" (R. Williams, "A Painless Guide to CRC Error Detection
    // Algorithms", 1993, the CRC-32 model).
    assert_eq!(crc32fast::hash(b"123456789"), 0xCBF4_3926);
    let dir = tmp_dir("crc");
    let file = dir.join("check.txt");
    std::fs::write(&file, b"123456789").unwrap();
    let (code, out, _) = run_c(common::decoder(), &["crc", path_str(&file)]);
    assert_eq!(code, 0);
    assert_eq!(out.trim(), "cbf43926");
}

// ---------------------------------------------------------------------------
// Binary tables, Rust reader and C decoder

/// Every frame of both binary forms decodes, in Rust and in C, to the bytes pushed.
fn round_trip(name: &str, leds: u32, order: WireOrder, frames: usize, seed: u64) {
    let frames: Vec<_> = ShowGen::run_heavy(leds as usize, frames, seed).collect();
    let spec = spec(leds, order, frames.len());
    let want = wire_all(order, &frames);
    let fs = spec.frame_size() as usize;
    let dir = tmp_dir(name);
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, stats) = table(form, spec, &frames);
        let view = read_table(&bytes).expect("Rust reader accepts");
        assert_eq!(view.form(), form);
        assert_eq!(view.spec(), spec);
        assert_eq!(Some(view.crc32()), stats.crc32);
        assert_same_frames(
            &rust_decode_all(&bytes),
            &want,
            fs,
            &format!("{name} {form:?} Rust"),
        );
        let tag = format!("{form:?}");
        assert_same_frames(
            &c_decode_all(&bytes, &dir, &tag),
            &want,
            fs,
            &format!("{name} {form:?} C"),
        );
        // The C decoder reports the header figures.
        let file = dir.join(format!("{tag}.bin"));
        let (code, info, _) = run_c(common::decoder(), &["info", path_str(&file)]);
        assert_eq!(code, 0);
        let form_name = if form == TableForm::Full {
            "full"
        } else {
            "compact"
        };
        let letters = String::from_utf8(order.letters().to_vec()).unwrap();
        let want_info = format!(
            "form={form_name} frame_rate_hz=500 leds={leds} frames={} bytes_per_led={} order={} \
             frame_size={fs} segments={} crc32={:08x}",
            frames.len(),
            order.bytes_per_led(),
            letters.trim_end_matches('\0'),
            view.segment_count(),
            stats.crc32.unwrap()
        );
        assert_eq!(info.trim(), want_info);
        // Random access: single frames read by index agree too.
        let mut rng = Rng(seed ^ 0x5eed);
        for _ in 0..5 {
            let k = rng.below(frames.len() as u64) as usize;
            let (code, hex, _) = run_c(
                common::decoder(),
                &["frame", path_str(&file), &k.to_string()],
            );
            assert_eq!(code, 0);
            let want_hex: String = want[k * fs..(k + 1) * fs]
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect();
            assert_eq!(hex.trim(), want_hex, "{name} {form:?} frame {k}");
        }
        let (code, _, err) = run_c(
            common::decoder(),
            &["frame", path_str(&file), &frames.len().to_string()],
        );
        assert_eq!((code, err.trim()), (1, "error: frame out of range"));
    }
}

#[test]
fn one_led_grb_round_trips_through_both_decoders() {
    round_trip("one_led_grb", 1, WireOrder::Grb, 5000, 1);
}

#[test]
fn seventy_two_leds_rgb_round_trip_through_both_decoders() {
    round_trip("seventy_two_rgb", 72, WireOrder::Rgb, 3000, 2);
}

#[test]
fn four_byte_rgbw_round_trips_through_both_decoders() {
    round_trip("rgbw", 8, WireOrder::Rgbw, 3000, 3);
    round_trip("grbw", 1, WireOrder::Grbw, 2000, 4);
}

#[test]
fn every_wire_order_round_trips_in_rust() {
    for (i, name) in WireOrder::names().iter().enumerate() {
        let order = WireOrder::from_name(name).unwrap();
        let frames: Vec<_> = ShowGen::run_heavy(3, 700, 10 + i as u64).collect();
        let spec = spec(3, order, frames.len());
        let want = wire_all(order, &frames);
        for form in [TableForm::Full, TableForm::Compact] {
            let (bytes, _) = table(form, spec, &frames);
            assert_same_frames(
                &rust_decode_all(&bytes),
                &want,
                spec.frame_size() as usize,
                name,
            );
        }
    }
}

#[test]
fn full_table_is_header_frames_trailer() {
    // Layout of firmware-formats/full-table.md: 36-byte header, frames, 12-byte trailer.
    let frames: Vec<_> = ShowGen::run_heavy(5, 40, 7).collect();
    let spec = spec(5, WireOrder::Bgr, frames.len());
    let (bytes, stats) = table(TableForm::Full, spec, &frames);
    let data = wire_all(WireOrder::Bgr, &frames);
    assert_eq!(bytes.len(), 36 + data.len() + 12);
    assert_eq!(&bytes[..36], &spec.header(*b"GSTF"));
    assert_eq!(&bytes[36..36 + data.len()], &data[..]);
    let t = &bytes[36 + data.len()..];
    assert_eq!(
        u32::from_le_bytes(t[0..4].try_into().unwrap()) as usize,
        data.len()
    );
    assert_eq!(u32::from_le_bytes(t[4..8].try_into().unwrap()), 0);
    let crc = u32::from_le_bytes(t[8..12].try_into().unwrap());
    assert_eq!(crc, crc32fast::hash(&bytes[..bytes.len() - 4]));
    assert_eq!(stats.crc32, Some(crc));
    assert_eq!(stats.frames, 40);
}

#[test]
fn a_flipped_bit_is_refused_by_both_decoders() {
    let frames: Vec<_> = ShowGen::run_heavy(72, 600, 21).collect();
    let spec = spec(72, WireOrder::Grb, frames.len());
    let dir = tmp_dir("flipped");
    for form in [TableForm::Full, TableForm::Compact] {
        let (mut bytes, _) = table(form, spec, &frames);
        // One bit in the middle of the payload (frame data), then one in the header.
        let mid = 36 + (bytes.len() - 48) / 2;
        for (at, bit) in [(mid, 3u8), (13, 0u8)] {
            bytes[at] ^= 1 << bit;
            let rust = read_table(&bytes).unwrap_err();
            assert!(
                matches!(rust, ReadError::Crc { .. }),
                "{form:?} byte {at}: {rust}"
            );
            let file = dir.join(format!("{form:?}-{at}.bin"));
            std::fs::write(&file, &bytes).unwrap();
            let (code, _, err) = run_c(common::decoder(), &["info", path_str(&file)]);
            assert_eq!(
                (code, err.trim()),
                (1, "error: CRC mismatch"),
                "{form:?} byte {at}"
            );
            bytes[at] ^= 1 << bit;
        }
        assert!(read_table(&bytes).is_ok());
    }
}

#[test]
fn every_single_byte_error_is_refused() {
    // A CRC of degree 32 detects every error burst of 32 bits or fewer (W. W. Peterson and
    // D. T. Brown, "Cyclic Codes for Error Detection", Proc. IRE, 1961); a changed byte is one.
    let frames: Vec<_> = ShowGen::run_heavy(2, 120, 33).collect();
    let spec = spec(2, WireOrder::Rgbw, frames.len());
    let dir = tmp_dir("single_byte");
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, _) = table(form, spec, &frames);
        for at in 0..bytes.len() {
            for delta in [1u8, 0x80, 0xff] {
                let mut bad = bytes.clone();
                bad[at] ^= delta;
                assert!(
                    read_table(&bad).is_err(),
                    "{form:?}: byte {at} ^ {delta:#x} accepted"
                );
            }
        }
        // The C decoder on a sample of positions, header, data, index and trailer alike.
        for at in (0..bytes.len()).step_by(bytes.len() / 12) {
            let mut bad = bytes.clone();
            bad[at] ^= 0x10;
            let file = dir.join(format!("{form:?}-{at}.bin"));
            std::fs::write(&file, &bad).unwrap();
            let (code, _, _) = run_c(common::decoder(), &["info", path_str(&file)]);
            assert_eq!(code, 1, "{form:?}: C accepted byte {at} changed");
        }
        // Truncation and extension are refused as well.
        assert!(read_table(&bytes[..bytes.len() - 1]).is_err());
        let mut longer = bytes.clone();
        longer.push(0);
        assert!(read_table(&longer).is_err());
        assert!(read_table(&bytes[..20]).is_err());
        assert!(read_table(&[]).is_err());
    }
}

#[test]
fn zero_frame_tables_are_valid_and_empty() {
    let spec = spec(4, WireOrder::Grb, 0);
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, stats) = table(form, spec, &[]);
        assert_eq!(bytes.len(), 48);
        assert_eq!(stats.frames, 0);
        let view = read_table(&bytes).unwrap();
        let mut buf = [0u8; 12];
        assert!(matches!(
            view.frame(0, &mut buf),
            Err(ReadError::FrameOutOfRange { frame: 0, count: 0 })
        ));
        let dir = tmp_dir("zero_frames");
        assert!(c_decode_all(&bytes, &dir, &format!("{form:?}")).is_empty());
    }
}

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

// ---------------------------------------------------------------------------
// Streaming

/// Shares its count with the test while a writer owns it.
struct SharedCounter(std::rc::Rc<std::cell::Cell<u64>>);

impl Write for SharedCounter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.0.set(self.0.get() + buf.len() as u64);
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn four_minute_show_at_500_hz_with_72_leds_streams() {
    // 240 s * 500 Hz = 120 000 frames of 216 bytes: 25.9 MB that no writer may hold.
    let leds = 72u32;
    let n = 120_000usize;
    let spec = spec(leds, WireOrder::Grb, n);
    let fs = spec.frame_size();
    let slack = 2 * 64 * 1024 + 40 * fs;
    let full_count = std::rc::Rc::new(std::cell::Cell::new(0u64));
    let compact_count = std::rc::Rc::new(std::cell::Cell::new(0u64));
    let mut full = FullTableWriter::new(SharedCounter(full_count.clone()), spec).unwrap();
    let mut compact = CompactTableWriter::new(SharedCounter(compact_count.clone()), spec).unwrap();
    // Noise (incompressible) between run-heavy stretches.
    let mut show = ShowGen::new(leds as usize, n, 240, [20, 10, 5, 20, 5]);
    for k in 0..n {
        let f = show.next().unwrap();
        full.push_frame(&f).unwrap();
        compact.push_frame(&f).unwrap();
        if k % 5000 == 4999 {
            let pushed = (k as u64 + 1) * fs;
            assert!(
                full_count.get() + slack >= pushed,
                "full writer holds {} bytes after frame {k}",
                pushed - full_count.get()
            );
        }
    }
    let sf = full.finish().unwrap();
    let sc = compact.finish().unwrap();
    assert_eq!(sf.bytes_written, 36 + 120_000 * 216 + 12);
    assert_eq!(sf.bytes_written, full_count.get());
    assert_eq!(sc.bytes_written, compact_count.get());
    let seg = sc.segments.unwrap();
    println!(
        "4-minute show, 72 LEDs grb: full {} bytes, compact {} bytes, {} segments",
        sf.bytes_written,
        sc.bytes_written,
        seg.total_segments()
    );
    assert!(sc.bytes_written < sf.bytes_written);
}

#[test]
fn writers_pass_incompressible_data_on_at_once() {
    // Noise cannot be compressed, so a writer that streams must have passed on all but its
    // buffers (64 KiB each) and a few frames by the time each frame is pushed.
    let leds = 72u32;
    let n = 20_000usize;
    let spec = spec(leds, WireOrder::Rgb, n);
    let fs = spec.frame_size();
    let counts: Vec<_> = (0..3)
        .map(|_| std::rc::Rc::new(std::cell::Cell::new(0u64)))
        .collect();
    let mut compact = CompactTableWriter::new(SharedCounter(counts[0].clone()), spec).unwrap();
    let mut header = CHeaderWriter::new(
        SharedCounter(counts[1].clone()),
        spec,
        "noise",
        TableForm::Compact,
    )
    .unwrap();
    let mut csv = CsvWriter::new(SharedCounter(counts[2].clone()), spec).unwrap();
    let slack = 2 * 64 * 1024 + 40 * fs;
    for (k, f) in ShowGen::new(leds as usize, n, 4, [0, 0, 0, 1, 0]).enumerate() {
        compact.push_frame(&f).unwrap();
        header.push_frame(&f).unwrap();
        csv.push_frame(&f).unwrap();
        let pushed = (k as u64 + 1) * fs;
        // Binary: one byte per byte; hex text: at least five characters per byte; CSV: at
        // least two characters (digit and comma) per byte.
        for (count, per_byte, what) in [
            (&counts[0], 1, "compact"),
            (&counts[1], 5, "C header"),
            (&counts[2], 2, "CSV"),
        ] {
            assert!(
                count.get() + per_byte * slack >= per_byte * pushed,
                "{what} writer holds back {} bytes after frame {k}",
                per_byte * pushed - count.get()
            );
        }
    }
    assert_eq!(compact.finish().unwrap().bytes_written, counts[0].get());
    assert_eq!(header.finish().unwrap().bytes_written, counts[1].get());
    assert_eq!(csv.finish().unwrap().bytes_written, counts[2].get());
}

// ---------------------------------------------------------------------------
// Errors, not panics

#[test]
fn wrong_frames_are_errors() {
    let spec = spec(3, WireOrder::Grb, 2);
    let good = vec![[1u8, 2, 3]; 3];
    let short = vec![[1u8, 2, 3]; 2];
    let mut out = Vec::new();
    let mut w = CompactTableWriter::new(&mut out, spec).unwrap();
    assert!(matches!(
        w.push_frame(&short),
        Err(OutputError::WrongLedCount {
            frame: 0,
            expected: 3,
            got: 2
        })
    ));
    w.push_frame(&good).unwrap();
    assert!(matches!(
        w.finish(),
        Err(OutputError::MissingFrames {
            expected: 2,
            got: 1
        })
    ));
    let mut out = Vec::new();
    let mut w = FullTableWriter::new(&mut out, spec).unwrap();
    w.push_frame(&good).unwrap();
    w.push_frame(&good).unwrap();
    assert!(matches!(
        w.push_frame(&good),
        Err(OutputError::TooManyFrames { expected: 2 })
    ));
    let mut out = Vec::new();
    let mut w = CsvWriter::new(&mut out, spec).unwrap();
    assert!(w.push_frame(&[]).is_err());
    let bad = TableSpec {
        frame_rate_hz: 0,
        ..spec
    };
    assert!(FullTableWriter::new(Vec::new(), bad).is_err());
    assert!(CompactTableWriter::new(Vec::new(), bad).is_err());
    assert!(CsvWriter::new(Vec::new(), bad).is_err());
    assert!(CHeaderWriter::new(Vec::new(), bad, "x", TableForm::Full).is_err());
}

/// Fails every write after `limit` bytes.
struct Failing(usize);

impl Write for Failing {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if buf.len() > self.0 {
            return Err(io::Error::other("disk full"));
        }
        self.0 -= buf.len();
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn write_failures_are_reported() {
    // The output refuses bytes after a limit: some push, or finish, must return the error.
    let frames: Vec<_> = ShowGen::run_heavy(72, 2000, 3).collect();
    let spec = spec(72, WireOrder::Grb, frames.len());
    fn fails<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) -> bool {
        for f in frames {
            if let Err(e) = w.push_frame(f) {
                return matches!(e, OutputError::Io(_));
            }
        }
        matches!(w.finish(), Err(OutputError::Io(_)))
    }
    for limit in [0, 10, 1000] {
        assert!(fails(
            FullTableWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        assert!(fails(
            CompactTableWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        assert!(fails(
            CsvWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        let h = CHeaderWriter::new(Failing(limit), spec, "x", TableForm::Full).unwrap();
        assert!(fails(h, &frames));
    }
}

// ---------------------------------------------------------------------------
// CSV

#[test]
fn csv_has_the_documented_header_and_one_row_per_frame() {
    // docs/conventions.md, "CSV table": header frame,time_s,r0,g0,b0,r1,...; time_s = frame start.
    let spec = TableSpec {
        frame_rate_hz: 3,
        leds: 2,
        order: WireOrder::Grbw,
        frame_count: 4,
    };
    let frames = vec![
        vec![[255, 0, 0], [0, 0, 0]],
        vec![[1, 2, 3], [4, 5, 6]],
        vec![[255, 255, 255], [10, 20, 30]],
        vec![[0, 0, 0], [0, 128, 255]],
    ];
    let mut out = Vec::new();
    let stats = push_all(CsvWriter::new(&mut out, spec).unwrap(), &frames);
    let text = String::from_utf8(out).unwrap();
    // Times: k / 3 s to six decimals; channels always R,G,B whatever the wire order.
    assert_eq!(
        text,
        "frame,time_s,r0,g0,b0,r1,g1,b1\n\
         0,0.000000,255,0,0,0,0,0\n\
         1,0.333333,1,2,3,4,5,6\n\
         2,0.666667,255,255,255,10,20,30\n\
         3,1.000000,0,0,0,0,128,255\n"
    );
    assert_eq!(stats.bytes_written, text.len() as u64);
    assert_eq!(stats.frames, 4);
    assert_eq!(stats.table_bytes, None);
}

#[test]
fn csv_rows_parse_back_to_the_frames() {
    let frames: Vec<_> = ShowGen::run_heavy(5, 1500, 12).collect();
    let spec = spec(5, WireOrder::Rgb, frames.len());
    let mut out = Vec::new();
    push_all(CsvWriter::new(&mut out, spec).unwrap(), &frames);
    let text = String::from_utf8(out).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next().unwrap().split(',').count(), 2 + 15);
    for (k, (line, frame)) in lines.zip(&frames).enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells[0], k.to_string());
        let t: f64 = cells[1].parse().unwrap();
        assert!((t - k as f64 / 500.0).abs() < 5e-7, "frame {k} time {t}");
        let bytes: Vec<u8> = cells[2..].iter().map(|c| c.parse().unwrap()).collect();
        assert_eq!(bytes, frame.concat(), "frame {k}");
    }
}

// ---------------------------------------------------------------------------
// C header

#[test]
fn c_header_compiles_and_embeds_a_decodable_table() {
    let dir = tmp_dir("c_header");
    let frames: Vec<_> = ShowGen::run_heavy(6, 900, 50).collect();
    let spec = spec(6, WireOrder::Grbw, frames.len());
    let want = wire_all(WireOrder::Grbw, &frames);
    for (form, name, ident, macro_) in [
        (TableForm::Full, "left", "left_table", "LEFT_TABLE"),
        (
            TableForm::Compact,
            "Right Staff #2",
            "right_staff_2_table",
            "RIGHT_STAFF_2_TABLE",
        ),
    ] {
        let mut text = Vec::new();
        let stats = push_all(
            CHeaderWriter::new(&mut text, spec, name, form).unwrap(),
            &frames,
        );
        assert_eq!(stats.bytes_written, text.len() as u64);
        let (binary, bstats) = table(form, spec, &frames);
        assert_eq!(stats.table_bytes, Some(binary.len() as u64));
        assert_eq!(stats.crc32, bstats.crc32);
        let text = String::from_utf8(text).unwrap();
        assert!(text.contains(&format!("#ifndef {macro_}_H\n#define {macro_}_H\n")));
        assert!(text.contains(&format!(
            "static const uint8_t {ident}[] {macro_}_STORAGE = {{"
        )));
        assert!(text.contains(&format!("#define {macro_}_SIZE {}u\n", binary.len())));
        assert!(text.ends_with(&format!("#endif /* {macro_}_H */\n")));
        // The hex is exactly the binary table.
        let hex: Vec<u8> = text
            .lines()
            .filter(|l| l.starts_with("    0x"))
            .flat_map(|l| l.split(','))
            .filter_map(|t| t.trim().strip_prefix("0x"))
            .map(|h| u8::from_str_radix(h, 16).unwrap())
            .collect();
        assert_eq!(hex, binary);
        // Compile it into the C decoder's driver and decode it from the array.
        let header = dir.join(format!("{ident}.h"));
        std::fs::write(&header, &text).unwrap();
        let exe = dir.join(format!("embed_{ident}"));
        common::build_decoder(
            &exe,
            &[
                &format!("-DEMBED_HEADER=\"{}\"", path_str(&header)),
                &format!("-DEMBED_NAME={ident}"),
                &format!("-DEMBED_MACRO={macro_}"),
            ],
        );
        let dump = dir.join(format!("{ident}.dump"));
        let (code, info, err) = run_c(&exe, &["embedded", path_str(&dump)]);
        assert_eq!(code, 0, "{err}");
        assert!(info.contains("wire_order=grbw"), "{info}");
        assert_same_frames(&std::fs::read(&dump).unwrap(), &want, 24, "embedded");
    }
}

#[test]
fn c_header_text_is_deterministic_and_guarded() {
    let frames: Vec<_> = ShowGen::run_heavy(2, 50, 9).collect();
    let spec = spec(2, WireOrder::Rgb, frames.len());
    let make = || {
        let mut text = Vec::new();
        push_all(
            CHeaderWriter::new(&mut text, spec, "9 lives", TableForm::Compact).unwrap(),
            &frames,
        );
        String::from_utf8(text).unwrap()
    };
    let a = make();
    assert_eq!(a, make());
    assert!(a.contains("#ifndef PROP_9_LIVES_TABLE_H"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_IS_COMPACT 1\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_FRAME_COUNT 50u\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_FRAME_RATE_HZ 500u\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_LED_COUNT 2u\n"));
    assert!(a.is_ascii());
}

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
            "version 2",
            Box::new(|b| b[4] = 2),
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
