//! Writes the short song that the Ogg Vorbis and MP3 test fixtures in
//! `tests/fixtures/music/` were encoded from: four bars of glowscore's own
//! test-song generator at 120 bpm from 0.5 s, mono 16-bit 16 kHz WAV. Our own
//! synthesis, under the project's licence (MIT OR Apache-2.0). See
//! `tests/fixtures/music/README.md` for the encoders' command lines.
//!
//!     cargo run --example fixture_song -- target/fixture-song.wav

use glowscore::music::synth::{SongSpec, song};

/// The song the fixtures hold (the tests read the same numbers).
pub fn spec() -> SongSpec {
    SongSpec {
        rate: 16_000,
        beats_per_bar: 4,
        bars: 4,
        tempo: vec![(1, 120.0)],
        start_s: 0.5,
        swing: 0.0,
        humanise_ms: 0.0,
        seed: 41,
    }
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "target/fixture-song.wav".into());
    let s = song(&spec());
    let wav = hound::WavSpec {
        channels: 1,
        sample_rate: s.rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(&out, wav)?;
    for x in &s.samples {
        w.write_sample((x * 32768.0).round().clamp(-32768.0, 32767.0) as i16)?;
    }
    w.finalize()?;
    println!(
        "{out}: {} samples ({:.3} s)",
        s.samples.len(),
        s.samples.len() as f64 / f64::from(s.rate)
    );
    Ok(())
}
