//! Benchmarks: decode and analyse a four-minute 44.1 kHz stereo song (a
//! synthetic song written as 16-bit WAV into the target folder first), and
//! check a four-minute two-poi show set to that song (`music`): the check
//! with the song heard once, beside the motion and frame checks.

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::check::{CheckSettings, check};
use glowscore::music::synth::{SongSpec, song};
use glowscore::music::{Options, analyse, decode_file};
use glowscore::prepared::Prepared;

/// A two-poi show on the bench song's grid: 120 bpm from 0.5 s, 126 from
/// bar 61, 120 bars, at 500 frames/s.
const SHOW: &str = r#"
[show]
title = "Bench Song Check"
frame_rate = 500
bpm = 120
beats_per_bar = 4
start_s = 0.5
music = "bench-song.wav"

[[tempo]]
bar = 61
bpm = 126

[prop.left]
tether_m = 0.55
anchor_m = [-0.30, 1.35, 0.12]
leds = 1

[prop.right]
tether_m = 0.55
anchor_m = [0.30, 1.35, -0.12]
leds = 1

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.18
head_turns = -3

[[section]]
bars = [1, 120]
left = "flower"
right = { pattern = "flower", mirror = true }

[[cue]]
prop = "left"
bars = [1, 120]
at = "tip"
colours = ["red", "blue"]
"#;

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
    let show_path = path.with_file_name("bench-song-show.toml");
    std::fs::write(&show_path, SHOW).expect("show");
    let show = glowscore::show::load(&show_path).expect("a valid show");
    let mut group = c.benchmark_group("music_check");
    group.sample_size(10);
    group.bench_function("check_four_minute_show_with_its_song", |b| {
        b.iter(|| {
            // A new preparation each time, so that the song is heard again.
            let prepared = Prepared::new(show.clone()).expect("prepares");
            let r = check(&prepared, &CheckSettings::default()).expect("checks");
            assert!(r.music.is_some());
            r.warnings.len()
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
