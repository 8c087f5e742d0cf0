//! Writes the demo song `shows/tide-lamp-groove.wav`: eight bars of kick,
//! snare, hats and bass from glowscore's own test-song generator, 116 bpm
//! then 124 bpm from bar 5, mono 16-bit 22.05 kHz. Our own synthesis, under
//! the project's licence (MIT OR Apache-2.0).
//!
//!     cargo run --release --example demo_song

use glowscore::music::synth::{SongSpec, song};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let s = song(&SongSpec {
        rate: 22_050,
        beats_per_bar: 4,
        bars: 8,
        tempo: vec![(1, 116.0), (5, 124.0)],
        start_s: 0.5,
        swing: 0.0,
        humanise_ms: 2.0,
        seed: 2026,
    });
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: s.rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/tide-lamp-groove.wav");
    let mut w = hound::WavWriter::create(&path, spec)?;
    for x in &s.samples {
        w.write_sample((x * 32768.0).round().clamp(-32768.0, 32767.0) as i16)?;
    }
    w.finalize()?;
    println!("{}: {} samples", path.display(), s.samples.len());
    Ok(())
}
