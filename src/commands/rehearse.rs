//! `glowscore rehearse SHOW --out practice.wav [--prop P] [--song SONG]`: a
//! practice track: the song (`--song`, else the show's `music`, if any)
//! mixed with a click on every beat of the show's tempo map (higher and
//! louder on each downbeat) and a short tone at every colour change of one
//! prop.
//!
//! Levels (peak, full scale 1.0): song x 0.5, click 0.25 (downbeat 0.35),
//! cue tone 0.15. Their sum is at most 1.0, so the track never clips.

use std::path::{Path, PathBuf};

use super::Failure;
use crate::num;

/// Why a practice track could not be made.
#[derive(Debug, thiserror::Error)]
pub enum RehearseError {
    /// `--prop` names no prop of the show.
    #[error("{}: no prop {name:?} (the props are {})", show.display(), props.join(", "))]
    NoProp {
        /// The show file.
        show: PathBuf,
        /// The name given.
        name: String,
        /// The show's props.
        props: Vec<String>,
    },
    /// The track would be longer than the longest song read.
    #[error("{}: the practice track would last over 30 minutes", show.display())]
    TooLong {
        /// The show file.
        show: PathBuf,
    },
    /// The WAV file could not be written.
    #[error("{}: cannot write: {source}", file.display())]
    Write {
        /// The track's file.
        file: PathBuf,
        /// The cause.
        #[source]
        source: hound::Error,
    },
}

/// Song level.
pub const SONG_GAIN: f32 = 0.5;
/// Click level, ordinary beat and downbeat.
pub const CLICK_GAIN: (f64, f64) = (0.25, 0.35);
/// Colour-change tone level.
pub const TONE_GAIN: f64 = 0.15;
/// Rate of the track without a song, Hz.
pub const RATE: u32 = 44_100;

fn blip(rate: u32, freq: f64, gain: f64, len_s: f64, decay_s: f64) -> Vec<f32> {
    let n = (len_s * f64::from(rate)) as usize;
    (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            (gain * num::sin(2.0 * std::f64::consts::PI * freq * t) * num::exp(-t / decay_s)) as f32
        })
        .collect()
}

fn add(out: &mut [f32], rate: u32, t: f64, sound: &[f32]) {
    if t < 0.0 {
        return;
    }
    let start = (t * f64::from(rate)).round() as usize;
    for (o, s) in out.iter_mut().skip(start).zip(sound) {
        *o += s;
    }
}

/// Writes the practice track for `show_path` to `out`.
pub fn run(
    show_path: &Path,
    out: &Path,
    prop: Option<&str>,
    song: Option<&Path>,
) -> Result<(), Failure> {
    let prepared = super::prepare(show_path)?;
    let show = prepared.show();
    let p = match prop {
        None => 0,
        Some(name) => show
            .props
            .iter()
            .position(|p| p.name == name)
            .ok_or_else(|| RehearseError::NoProp {
                show: show_path.to_path_buf(),
                name: name.to_string(),
                props: show.props.iter().map(|p| p.name.clone()).collect(),
            })?,
    };
    let song = song.or(show.music.as_ref().map(|m| m.path.as_path()));
    let audio = song.map(crate::music::decode_file).transpose()?;
    let rate = audio.as_ref().map_or(RATE, |a| a.rate);
    let end = show
        .end_s()
        .max(audio.as_ref().map_or(0.0, |a| a.duration_s()))
        + 0.5;
    if !(end.is_finite() && end <= crate::music::decode::MAX_SECONDS) {
        return Err(RehearseError::TooLong {
            show: show_path.to_path_buf(),
        }
        .into());
    }
    let mut track = vec![0f32; (end * f64::from(rate)) as usize];
    if let Some(a) = &audio {
        for (o, s) in track.iter_mut().zip(&a.samples) {
            *o = s * SONG_GAIN;
        }
    }
    let tempo = &show.tempo;
    let per_bar = f64::from(tempo.beats_per_bar());
    let low = blip(rate, 1000.0, CLICK_GAIN.0, 0.03, 0.006);
    let high = blip(rate, 1600.0, CLICK_GAIN.1, 0.03, 0.006);
    // Beats before bar 1 too, down to time 0.
    let mut beat = tempo.beat_of_bar(1);
    while beat > 0.0 && tempo.time_at_beat(beat - 1.0) >= 0.0 {
        beat -= 1.0;
    }
    loop {
        let t = tempo.time_at_beat(beat);
        if !(t.is_finite() && t < show.end_s()) {
            break;
        }
        let downbeat = (beat - tempo.beat_of_bar(1)).rem_euclid(per_bar) < 1e-9;
        add(&mut track, rate, t, if downbeat { &high } else { &low });
        beat += 1.0;
    }
    let tone = blip(rate, 660.0, TONE_GAIN, 0.08, 0.03);
    let lights = &prepared.lights().props[p];
    for track_of in &lights.tracks {
        // Only the changes that play: a later cue may hide an earlier one.
        for c in track_of
            .changes
            .iter()
            .filter(|c| lights.plays(track_of.cue, c.frame))
        {
            add(&mut track, rate, c.time_s, &tone);
        }
    }
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let fail = |source: hound::Error| {
        Failure::from(RehearseError::Write {
            file: out.to_path_buf(),
            source,
        })
    };
    let mut w = hound::WavWriter::create(out, spec).map_err(fail)?;
    for x in &track {
        let q = (f64::from(*x) * 32767.0).round().clamp(-32768.0, 32767.0) as i16;
        w.write_sample(q).map_err(fail)?;
    }
    w.finalize().map_err(fail)
}
