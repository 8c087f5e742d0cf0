//! The song analysis against songs whose beats are known.
//!
//! The songs come from `glowscore::music::synth`, which places every hit on a
//! beat grid it computes from the tempo map by arithmetic, so the expected
//! values do not come from the analysis. Scoring: beat F-measure with a
//! +-70 ms window (Dixon, "Evaluation of the Audio Beat Tracking System
//! BeatRoot", JNMR 2007; the MIREX audio beat-tracking task).

use glowscore::music::synth::{SongSpec, click_track, song};
use glowscore::music::{Audio, BeatError, MusicError, Options, analyse, decode_file};

/// F-measure of `found` against `truth` with a +-`window` s tolerance, each
/// true beat matched at most once (Dixon 2007).
fn f_measure(found: &[f64], truth: &[f64], window: f64) -> f64 {
    let mut used = vec![false; truth.len()];
    let mut hits = 0;
    for &b in found {
        if let Some(j) = (0..truth.len()).find(|&j| !used[j] && (truth[j] - b).abs() <= window) {
            used[j] = true;
            hits += 1;
        }
    }
    if hits == 0 {
        return 0.0;
    }
    let p = hits as f64 / found.len() as f64;
    let r = hits as f64 / truth.len() as f64;
    2.0 * p * r / (p + r)
}

fn audio(samples: Vec<f32>, rate: u32) -> Audio {
    Audio {
        rate,
        channels: 1,
        samples,
    }
}

fn spec(bpm: f64) -> SongSpec {
    SongSpec {
        rate: 22_050,
        beats_per_bar: 4,
        bars: 12,
        tempo: vec![(1, bpm)],
        start_s: 0.4,
        swing: 0.0,
        humanise_ms: 0.0,
        seed: 7,
    }
}

#[test]
fn steady_song_beats_tempo_and_bar_one() {
    let s = song(&spec(112.0));
    let a = analyse(&audio(s.samples, s.rate), &Options::default()).expect("a steady beat");
    let f = f_measure(&a.beats, &s.beats, 0.070);
    assert!(f >= 0.95, "F-measure {f}");
    // Tempo within 0.3 % of the generator's 112 bpm.
    assert!((a.bpm / 112.0 - 1.0).abs() < 0.003, "bpm {}", a.bpm);
    assert_eq!(a.beats_per_bar, 4);
    assert!(
        (a.start_s - s.downbeats[0]).abs() < 0.040,
        "bar 1 at {}",
        a.start_s
    );
    assert!(a.tempo.is_empty(), "{:?}", a.tempo);
}

#[test]
fn swung_humanised_song() {
    let mut sp = spec(96.0);
    sp.swing = 1.0 / 6.0;
    sp.humanise_ms = 4.0;
    sp.seed = 11;
    let s = song(&sp);
    let a = analyse(&audio(s.samples, s.rate), &Options::default()).expect("a steady beat");
    let f = f_measure(&a.beats, &s.beats, 0.070);
    assert!(f >= 0.95, "F-measure {f}");
    assert!((a.bpm / 96.0 - 1.0).abs() < 0.003, "bpm {}", a.bpm);
    assert!(
        (a.start_s - s.downbeats[0]).abs() < 0.040,
        "bar 1 at {}",
        a.start_s
    );
}

#[test]
fn three_beats_to_the_bar() {
    let mut sp = spec(126.0);
    sp.beats_per_bar = 3;
    sp.bars = 14;
    let s = song(&sp);
    let a = analyse(&audio(s.samples, s.rate), &Options::default()).expect("a steady beat");
    assert_eq!(a.beats_per_bar, 3);
    assert!(
        (a.start_s - s.downbeats[0]).abs() < 0.040,
        "bar 1 at {}",
        a.start_s
    );
}

#[test]
fn tempo_change_found_within_a_bar() {
    let mut sp = spec(100.0);
    sp.bars = 16;
    sp.tempo = vec![(1, 100.0), (9, 112.0)];
    let s = song(&sp);
    let a = analyse(&audio(s.samples, s.rate), &Options::default()).expect("a steady beat");
    let f = f_measure(&a.beats, &s.beats, 0.070);
    assert!(f >= 0.95, "F-measure {f}");
    assert!((a.bpm / 100.0 - 1.0).abs() < 0.003, "bpm {}", a.bpm);
    assert_eq!(a.tempo.len(), 1, "{:?}", a.tempo);
    assert!(a.tempo[0].bar.abs_diff(9) <= 1, "{:?}", a.tempo);
    assert!(
        (a.tempo[0].bpm / 112.0 - 1.0).abs() < 0.003,
        "{:?}",
        a.tempo
    );
}

#[test]
fn click_track_beats_within_two_ms() {
    // 120 bpm from 0.25 s: the clicks are at 0.25 + k / 2 s, by arithmetic.
    let (samples, truth) = click_track(44_100, 120.0, 0.25, 24);
    let a = analyse(&audio(samples, 44_100), &Options::default()).expect("a steady beat");
    assert_eq!(a.beats.len(), truth.len(), "{:?}", a.beats);
    for (b, t) in a.beats.iter().zip(&truth) {
        assert!((b - t).abs() < 0.002, "beat {b} vs {t}");
    }
}

#[test]
fn silence_and_noise_have_no_steady_beat() {
    let silent = audio(vec![0.0; 22_050 * 8], 22_050);
    assert!(matches!(
        analyse(&silent, &Options::default()),
        Err(BeatError::NoSteadyBeat(_))
    ));
    // White noise from a linear congruential generator (Knuth, TAOCP vol. 2).
    let mut x: u64 = 1;
    let noise: Vec<f32> = (0..22_050 * 8)
        .map(|_| {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((x >> 40) as f32 / (1u64 << 24) as f32 - 0.5) * 0.5
        })
        .collect();
    let r = analyse(&audio(noise, 22_050), &Options::default());
    assert!(matches!(r, Err(BeatError::NoSteadyBeat(_))), "{r:?}");
}

fn write_wav(path: &std::path::Path, samples: &[f32], rate: u32, channels: u16) {
    let spec = hound::WavSpec {
        channels,
        sample_rate: rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(path, spec).expect("wav");
    for &s in samples {
        for _ in 0..channels {
            w.write_sample((s * 32768.0).round().clamp(-32768.0, 32767.0) as i16)
                .expect("sample");
        }
    }
    w.finalize().expect("finalize");
}

#[test]
fn wav_decodes_and_bad_files_are_refused() {
    let dir = std::env::temp_dir().join(format!("glowscore-music-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let s = song(&spec(120.0));
    let wav = dir.join("song.wav");
    write_wav(&wav, &s.samples, s.rate, 2);
    let a = decode_file(&wav).expect("decodes");
    assert_eq!(a.rate, 22_050);
    assert_eq!(a.channels, 2);
    assert_eq!(a.samples.len(), s.samples.len());
    // 16-bit PCM read back as q / 32768: every sample within half a step of the original.
    for (x, y) in a.samples.iter().zip(&s.samples) {
        assert!((x - y).abs() <= 0.5 / 32768.0 + 1e-7, "{x} vs {y}");
    }
    // Truncated: the header promises more than the file holds.
    let bytes = std::fs::read(&wav).unwrap();
    let cut = dir.join("cut.wav");
    std::fs::write(&cut, &bytes[..bytes.len() / 2]).unwrap();
    let e = decode_file(&cut).expect_err("truncated");
    assert!(matches!(e, MusicError::Truncated { .. }), "{e:?}");
    let e = e.to_string();
    assert!(e.contains("cut.wav") && e.contains("truncated"), "{e}");
    // Not audio at all.
    let text = dir.join("notes.wav");
    std::fs::write(&text, "just some words, not a song").unwrap();
    let e = decode_file(&text).expect_err("not audio");
    assert!(matches!(e, MusicError::NotAudio { .. }), "{e:?}");
    assert_eq!(e.file(), text.as_path());
    assert!(e.to_string().contains("notes.wav"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn rehearsal_track_keeps_its_levels() {
    let dir = std::env::temp_dir().join(format!("glowscore-rehearse-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let show = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moth-garden.toml");
    let song = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/tide-lamp-groove.wav");
    let out = dir.join("practice.wav");
    glowscore::commands::rehearse::run(&show, &out, Some("left"), Some(&song)).expect("writes");
    let a = decode_file(&out).expect("reads back");
    let peak = a.samples.iter().fold(0f32, |m, &x| m.max(x.abs()));
    // The documented levels add to at most 1.0 of full scale: no clipping.
    assert!(peak > 0.2 && peak < 1.0, "peak {peak}");
    // The clicks follow the show's tempo map: 96 bpm at bar 1 (moth-garden.toml).
    let t = analyse(&a, &Options::default()).expect("a beat");
    assert!(
        (t.bpm / 96.0 - 1.0).abs() < 0.01
            || t.tempo.iter().any(|c| (c.bpm / 96.0 - 1.0).abs() < 0.01),
        "{:?} {:?}",
        t.bpm,
        t.tempo
    );
    let e =
        glowscore::commands::rehearse::run(&show, &out, Some("nobody"), None).expect_err("no prop");
    assert!(e.to_string().contains("nobody"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// The fixtures' song: four bars at 120 bpm from 0.5 s, 16 kHz mono, as
/// `examples/fixture_song.rs` writes it (the same numbers).
fn fixture_spec() -> SongSpec {
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

#[test]
fn ogg_vorbis_and_mp3_fixtures_decode_and_keep_their_beat() {
    // tests/fixtures/music/: the fixture song encoded by oggenc and lame
    // (see the README there). Both codecs are lossy, so the samples are
    // not compared; the length (10 s: the generator's last beat at 8 s plus
    // its 2 s tail) and the beats are.
    let truth = song(&fixture_spec());
    let length = truth.samples.len() as f64 / 16_000.0;
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/music");
    for (name, rate) in [("fixture-song.ogg", 16_000), ("fixture-song.mp3", 32_000)] {
        let a = decode_file(&dir.join(name)).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!((a.rate, a.channels), (rate, 1), "{name}");
        // Within 5 ms of the true length: the MP3 encoder's delay and
        // padding (over 1500 samples) are trimmed by its gapless header.
        assert!(
            (a.duration_s() - length).abs() < 0.005,
            "{name}: {} s",
            a.duration_s()
        );
        let r = analyse(&a, &Options::default()).unwrap_or_else(|e| panic!("{name}: {e}"));
        let f = f_measure(&r.beats, &truth.beats, 0.070);
        assert!(f >= 0.95, "{name}: F-measure {f}");
        assert!((r.bpm / 120.0 - 1.0).abs() < 0.003, "{name}: bpm {}", r.bpm);
        assert!(
            (r.start_s - 0.5).abs() < 0.040,
            "{name}: bar 1 at {}",
            r.start_s
        );
    }
}
