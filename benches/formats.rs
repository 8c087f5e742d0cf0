//! Encoding speed of the table writers on a show-like stream (72 LEDs, 500 Hz).
//!
//! Needs in Cargo.toml: `[[bench]] name = "formats"` with `harness = false`.

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use glowscore::model::WireOrder;
use glowscore::output::{CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, TableSpec};
use std::hint::black_box;
use std::io::sink;

/// 10 s of frames: 1 s fades between colours (exact ramps) and holds, every LED alike.
fn frames(leds: usize) -> Vec<Vec<[u8; 3]>> {
    let mut out = Vec::new();
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let mut colour = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        [state as u8, (state >> 8) as u8, (state >> 16) as u8]
    };
    while out.len() < 5000 {
        let (a, b) = (colour(), colour());
        for j in 0..250i32 {
            let c = [0, 1, 2]
                .map(|k| (i32::from(a[k]) + (i32::from(b[k]) - i32::from(a[k])) * j / 249) as u8);
            out.push(vec![c; leds]);
        }
        out.extend(std::iter::repeat_n(vec![b; leds], 250));
    }
    out
}

fn run<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) -> u64 {
    for f in frames {
        w.push_frame(f).unwrap();
    }
    w.finish().unwrap().bytes_written
}

fn bench(c: &mut Criterion) {
    let frames = frames(72);
    let spec = TableSpec {
        frame_rate_hz: 500,
        leds: 72,
        order: WireOrder::Grb,
        frame_count: frames.len() as u32,
    };
    let mut g = c.benchmark_group("write 5000 frames x 72 LEDs");
    g.throughput(Throughput::Elements(frames.len() as u64));
    g.bench_function("full", |b| {
        b.iter(|| {
            run(
                FullTableWriter::new(sink(), spec).unwrap(),
                black_box(&frames),
            )
        })
    });
    g.bench_function("compact", |b| {
        b.iter(|| {
            run(
                CompactTableWriter::new(sink(), spec).unwrap(),
                black_box(&frames),
            )
        })
    });
    g.bench_function("csv", |b| {
        b.iter(|| run(CsvWriter::new(sink(), spec).unwrap(), black_box(&frames)))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
