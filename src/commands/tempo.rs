//! `glowscore tempo SONG`: the song's beat grid as TOML to paste into a
//! show, or as JSON (fields as README.md's "Music" section lists them).

use std::io::Write;
use std::path::Path;

use serde_json::json;

use super::Failure;
use crate::music::{self, Analysis, BeatError, MusicError, Options};

fn r3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

fn r2(x: f64) -> f64 {
    (x * 100.0).round() / 100.0
}

/// Parses `--bpm-range LO-HI`.
pub fn parse_range(s: &str) -> Result<(f64, f64), Failure> {
    let bad = || Failure::Option(format!("--bpm-range must be LO-HI, like 80-160, got {s:?}"));
    let (a, b) = s.split_once('-').ok_or_else(bad)?;
    let lo: f64 = a.trim().parse().map_err(|_| bad())?;
    let hi: f64 = b.trim().parse().map_err(|_| bad())?;
    Ok((lo, hi))
}

/// The TOML block for a show.
pub fn toml_block(song: &Path, a: &Analysis) -> String {
    let name = song.file_name().map_or_else(
        || song.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    let mut s = format!(
        "# glowscore tempo: {} beats, confidence {:.2} (0 to 1)\n[show]\nmusic = {}\nbpm = {}\nbeats_per_bar = {}\nstart_s = {}\n",
        a.beats.len(),
        a.confidence,
        toml::Value::String(name),
        r2(a.bpm),
        a.beats_per_bar,
        r3(a.start_s)
    );
    for c in &a.tempo {
        s.push_str(&format!(
            "\n[[tempo]]\nbar = {}\nbpm = {}\n",
            c.bar,
            r2(c.bpm)
        ));
    }
    s
}

/// The JSON object.
pub fn json_value(a: &Analysis) -> serde_json::Value {
    json!({
        "duration_s": r3(a.duration_s),
        "bpm": r2(a.bpm),
        "beats_per_bar": a.beats_per_bar,
        "start_s": r3(a.start_s),
        "beats": a.beats.iter().map(|&b| r3(b)).collect::<Vec<_>>(),
        "downbeats": a.downbeats.iter().map(|&b| r3(b)).collect::<Vec<_>>(),
        "tempo": a.tempo.iter().map(|c| json!({"bar": c.bar, "bpm": r2(c.bpm)})).collect::<Vec<_>>(),
        "confidence": r2(a.confidence),
    })
}

/// Runs the command.
pub fn run(song: &Path, json: bool, opts: &Options, out: &mut dyn Write) -> Result<(), Failure> {
    let audio = music::decode_file(song)?;
    let a = music::analyse(&audio, opts).map_err(|e| match e {
        BeatError::NoSteadyBeat(_) => Failure::Music(MusicError::Beat {
            file: song.to_path_buf(),
            source: e,
        }),
        BeatError::BpmRange { .. } | BeatError::BeatsPerBar(_) => Failure::Option(e.to_string()),
    })?;
    let io = Failure::output("the tempo");
    if json {
        serde_json::to_writer_pretty(&mut *out, &json_value(&a)).map_err(|e| io(e.into()))?;
        writeln!(out).map_err(io)
    } else {
        out.write_all(toml_block(song, &a).as_bytes()).map_err(io)
    }
}
