//! Benchmark: decode and analyse a four-minute 44.1 kHz stereo song (a
//! synthetic song written as 16-bit WAV into the target folder first).

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::music::synth::{SongSpec, song};
use glowscore::music::{Options, analyse, decode_file};

fn bench(c: &mut Criterion) {
    let s = song(&SongSpec {
        rate: 44_100,
        beats_per_bar: 4,
        bars: 120,
        tempo: vec![(1, 120.0), (61, 126.0)],
        start_s: 0.5,
        swing: 0.0,
        humanise_ms: 3.0,
        seed: 5,
    });
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/bench-song.wav");
    let spec = hound::WavSpec {
        channels: 2,
        sample_rate: 44_100,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(&path, spec).expect("wav");
    for x in &s.samples {
        let q = (x * 32768.0).round().clamp(-32768.0, 32767.0) as i16;
        w.write_sample(q).expect("sample");
        w.write_sample(q).expect("sample");
    }
    w.finalize().expect("finalize");
    eprintln!(
        "{}: {:.0} s",
        path.display(),
        s.samples.len() as f64 / 44_100.0
    );
    c.bench_function("music_decode_and_analyse_four_minutes", |b| {
        b.iter(|| {
            let a = decode_file(&path).expect("decodes");
            analyse(&a, &Options::default()).expect("beats").beats.len()
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
