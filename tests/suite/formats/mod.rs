//! Frame-table formats end to end: every writer on deterministic show-like frames, the Rust
//! reader, and the C99 reference decoder compiled with the system compiler. The shared
//! frame generators and decoders are here; each table form's tests are in their own file.

mod compact;
mod full;
mod marks;
mod rules;
mod streaming;
mod text;

use crate::common;

use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::model::WireOrder;
use glowscore::output::{
    CHeaderWriter, CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, Mark, OutputError,
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
    table_with_marks(form, spec, &[], frames)
}

/// [`table`] with resync marks in its header (version 2 when there are any).
fn table_with_marks(
    form: TableForm,
    spec: TableSpec,
    marks: &[Mark],
    frames: &[Vec<[u8; 3]>],
) -> (Vec<u8>, WriteStats) {
    let mut out = Vec::new();
    let stats = match form {
        TableForm::Full => push_all(
            FullTableWriter::with_marks(&mut out, spec, marks).unwrap(),
            frames,
        ),
        TableForm::Compact => push_all(
            CompactTableWriter::with_marks(&mut out, spec, marks).unwrap(),
            frames,
        ),
        TableForm::Program => panic!("the program form is made from a show, not from frames"),
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
