//! A show and its song: `[show] music`, the check of the show's beat grid
//! against the song's beats and of its end against the song's, the song's
//! record in `report.json`, and `glowscore tempo` from the outside.
//!
//! The songs come from `glowscore::music::synth`, whose beat times are
//! computed by arithmetic from the tempo it is given, so the expected
//! offsets and bars below come from that arithmetic, not from the analysis.

use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::check::{CheckReport, CheckSettings, WarningKind};
use glowscore::music::synth::{SongSpec, song};
use glowscore::music::{BeatError, NoBeat, decode_file, hear};
use glowscore::prepared::Prepared;

fn dir(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("music-show")
        .join(format!("{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// 16-bit samples of `x` (full scale 32768), as both files store them.
fn quantise(x: f32) -> i16 {
    (x * 32768.0).round().clamp(-32768.0, 32767.0) as i16
}

/// Writes interleaved 16-bit `frames` (one slice per channel) as WAV.
fn write_wav(path: &Path, channels: &[Vec<i16>], rate: u32) {
    let spec = hound::WavSpec {
        channels: channels.len() as u16,
        sample_rate: rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(path, spec).unwrap();
    for i in 0..channels[0].len() {
        for c in channels {
            w.write_sample(c[i]).unwrap();
        }
    }
    w.finalize().unwrap();
}

/// Writes the same samples as FLAC with the flacenc crate (a general-purpose
/// FLAC encoder from crates.io). The samples must fill whole blocks of
/// [`FLAC_BLOCK`] frames: flacenc writes the last block's length as the
/// stream's minimum block size, which symphonia's reader refuses when it is
/// shorter than the others (the FLAC format leaves the last block out of
/// that minimum).
fn write_flac(path: &Path, channels: &[Vec<i16>], rate: u32) {
    assert_eq!(channels[0].len() % FLAC_BLOCK, 0, "whole blocks only");
    use flacenc::component::BitRepr;
    use flacenc::error::Verify;
    let n = channels[0].len();
    let interleaved: Vec<i32> = (0..n)
        .flat_map(|i| channels.iter().map(move |c| i32::from(c[i])))
        .collect();
    let config = flacenc::config::Encoder::default()
        .into_verified()
        .expect("the default configuration");
    let source =
        flacenc::source::MemSource::from_samples(&interleaved, channels.len(), 16, rate as usize);
    let stream =
        flacenc::encode_with_fixed_block_size(&config, source, FLAC_BLOCK).expect("encodes");
    let mut sink = flacenc::bitsink::ByteSink::new();
    stream.write(&mut sink).expect("writes");
    std::fs::write(path, sink.as_slice()).unwrap();
}

/// Frames per FLAC block (flacenc's default).
const FLAC_BLOCK: usize = 4096;

/// `x` padded with silence to whole FLAC blocks.
fn whole_blocks(mut x: Vec<i16>) -> Vec<i16> {
    x.resize(x.len().div_ceil(FLAC_BLOCK) * FLAC_BLOCK, 0);
    x
}

fn spec(bpm: f64, bars: u32) -> SongSpec {
    SongSpec {
        rate: 22_050,
        beats_per_bar: 4,
        bars,
        tempo: vec![(1, bpm)],
        start_s: 0.5,
        swing: 0.0,
        humanise_ms: 0.0,
        seed: 23,
    }
}

#[test]
fn the_same_song_as_wav_and_flac_decodes_to_the_same_samples() {
    // FLAC is lossless (RFC 9639, section 1): both files hold the same
    // 16-bit samples, so the decoded, mixed-down samples must be equal
    // bit for bit. Stereo, the right channel at half level, so that the
    // mix of two different channels is compared too.
    let d = dir("flac");
    let s = song(&spec(118.0, 4));
    let left = whole_blocks(s.samples.iter().map(|&x| quantise(x)).collect());
    let right = whole_blocks(s.samples.iter().map(|&x| quantise(0.5 * x)).collect());
    let frames = left.len();
    let chans = [left, right];
    write_wav(&d.join("song.wav"), &chans, s.rate);
    write_flac(&d.join("song.flac"), &chans, s.rate);
    let wav = decode_file(&d.join("song.wav")).expect("WAV decodes");
    let flac = decode_file(&d.join("song.flac")).expect("FLAC decodes");
    assert_eq!((wav.rate, wav.channels), (22_050, 2));
    assert_eq!((flac.rate, flac.channels), (22_050, 2));
    assert_eq!(wav.samples.len(), frames);
    assert!(wav.samples == flac.samples, "the decoded samples differ");
    // And not trivially: the song is not silent.
    assert!(wav.samples.iter().any(|&x| x.abs() > 0.1));
}

#[test]
fn silence_in_no_steady_beat_out() {
    let d = dir("silence");
    let zeros = whole_blocks(vec![0i16; 22_050 * 6]);
    write_wav(&d.join("quiet.wav"), std::slice::from_ref(&zeros), 22_050);
    write_flac(&d.join("quiet.flac"), &[zeros], 22_050);
    for name in ["quiet.wav", "quiet.flac"] {
        let heard = hear(&d.join(name), &Default::default()).expect("decodes");
        assert_eq!(
            heard.beats.as_ref().err(),
            Some(&BeatError::NoSteadyBeat(NoBeat::Silent)),
            "{name}"
        );
        let out = Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .arg("tempo")
            .arg(d.join(name))
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(1), "{name}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains(name) && err.contains("no steady beat") && err.contains("--bpm-range"),
            "{err}"
        );
    }
}

#[test]
fn tempo_prints_toml_to_paste_and_json_with_the_contract_fields() {
    let d = dir("tempo-cli");
    let s = song(&spec(104.0, 8));
    let path = d.join("groove.wav");
    write_wav(
        &path,
        &[s.samples.iter().map(|&x| quantise(x)).collect()],
        s.rate,
    );
    let run = |json: bool| {
        let mut c = Command::new(env!("CARGO_BIN_EXE_glowscore"));
        c.arg("tempo").arg(&path);
        if json {
            c.arg("--json");
        }
        let out = c.output().unwrap();
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8(out.stdout).unwrap()
    };
    let text = run(false);
    let doc: toml::Table = toml::from_str(&text).expect("the TOML block parses");
    let show = doc["show"].as_table().expect("a [show] table");
    assert_eq!(show["music"].as_str(), Some("groove.wav"));
    let bpm = show["bpm"]
        .as_float()
        .or(show["bpm"].as_integer().map(|i| i as f64));
    let bpm = bpm.expect("bpm is a number");
    // Within 0.3 % of the generator's 104 bpm.
    assert!((bpm / 104.0 - 1.0).abs() < 0.003, "bpm {bpm}");
    assert_eq!(show["beats_per_bar"].as_integer(), Some(4));
    assert!(text.contains("confidence"), "{text}");

    let v: serde_json::Value = serde_json::from_str(&run(true)).unwrap();
    for key in [
        "duration_s",
        "bpm",
        "beats_per_bar",
        "start_s",
        "beats",
        "downbeats",
        "tempo",
        "confidence",
    ] {
        assert!(!v[key].is_null(), "{key} missing: {v}");
    }
    let duration = s.samples.len() as f64 / f64::from(s.rate);
    assert!((v["duration_s"].as_f64().unwrap() - duration).abs() < 0.001);
    assert!((v["bpm"].as_f64().unwrap() / 104.0 - 1.0).abs() < 0.003);
    let beats = v["beats"].as_array().unwrap();
    assert!(beats.len() >= 30, "{} beats", beats.len());
    assert!(v["tempo"].as_array().unwrap().is_empty());
    let c = v["confidence"].as_f64().unwrap();
    assert!((0.0..=1.0).contains(&c), "{c}");
}

/// A one-prop show of `bars` bars at `bpm` from `start_s`, set to `music`.
fn show_text(music: &str, bpm: f64, start_s: f64, bars: u32) -> String {
    format!(
        r#"
[show]
title = "Harbour Test"
frame_rate = 100
bpm = {bpm}
beats_per_bar = 4
start_s = {start_s}
music = "{music}"

[prop.p]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]

[pattern.circle]
plane = "wall"
beats = 1
hand_radius_m = 0.1
head_turns = 1

[[section]]
bars = [1, {bars}]
p = "circle"
"#
    )
}

/// Writes the song of `sp` as WAV into `d` and returns its true beats and
/// its length in seconds.
fn song_file(d: &Path, sp: &SongSpec) -> (Vec<f64>, f64) {
    let s = song(sp);
    write_wav(
        &d.join("song.wav"),
        &[s.samples.iter().map(|&x| quantise(x)).collect()],
        s.rate,
    );
    (s.beats, s.samples.len() as f64 / f64::from(s.rate))
}

fn check_file(path: &Path) -> CheckReport {
    let show = glowscore::show::load(path).expect("the show is valid");
    let prepared = Prepared::new(show).expect("prepares");
    glowscore::check::check(&prepared, &CheckSettings::default()).expect("checks")
}

fn music_warnings(r: &CheckReport) -> Vec<&glowscore::check::Warning> {
    r.warnings
        .iter()
        .filter(|w| w.kind == WarningKind::Music)
        .collect()
}

#[test]
fn a_show_on_the_song_grid_gives_no_music_warning() {
    let d = dir("on-grid");
    let (_, duration) = song_file(&d, &spec(120.0, 16));
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 120.0, 0.5, 16)).unwrap();
    let r = check_file(&path);
    assert!(music_warnings(&r).is_empty(), "{:#?}", r.warnings);
    let m = r.music.as_ref().expect("music figures");
    assert_eq!(m.file, "song.wav");
    assert!((m.duration_s - duration).abs() < 1e-9);
    let off = m.max_offset_ms.expect("beats compared");
    // The analysis places a drum hit to a few milliseconds (the click track
    // to 2 ms, tests/suite/music.rs); here the worst beat is about 11 ms off.
    assert!(off < 20.0, "max offset {off} ms at {:?}", m.max_offset_at);
    // Every beat of the show's 16 bars lies within the song's beats.
    assert!(m.beats_compared >= 60, "{}", m.beats_compared);
}

#[test]
fn a_show_one_percent_fast_warns_at_the_bar_where_it_strays() {
    // The song's beat k is at 0.5 + 0.5 k s; the show's at 0.5 + k 60 /
    // 121.2 s: the show runs ahead by k (0.5 - 60 / 121.2) s = 4.95 k ms,
    // past 30 ms from beat k = 7 (34.7 ms; beat 6 is 29.7 ms): global beat 7
    // is bar 2, beat 4.
    let d = dir("fast");
    song_file(&d, &spec(120.0, 16));
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 121.2, 0.5, 12)).unwrap();
    let r = check_file(&path);
    let w = music_warnings(&r);
    assert_eq!(w.len(), 1, "{w:#?}");
    let w = w[0];
    assert_eq!(w.at.bar, 2, "{}", w.message);
    assert_eq!(w.prop, "(stage)");
    let v = w.value.expect("the offset");
    // Early (negative), by a little over 30 ms.
    assert!(v < -30.0 && v > -41.0, "{v} ms: {}", w.message);
    assert!(
        w.message.contains("glowscore tempo song.wav"),
        "{}",
        w.message
    );
    // The `music` key's line (8) is pointed at.
    assert_eq!(w.line, Some(8));
    // The largest offset is at the show's last beat, 47, by arithmetic
    // 4.95 ms x 47 = 232.7 ms (within the analysis' few milliseconds).
    let m = r.music.as_ref().unwrap();
    let worst = m.max_offset_ms.unwrap();
    let truth = 47.0 * (0.5 - 60.0 / 121.2) * 1000.0;
    assert!((worst - truth).abs() < 8.0, "{worst} vs {truth}");
}

#[test]
fn a_show_longer_than_its_song_warns_where_the_song_ends() {
    // 12 bars of song (beats from 0.5 s to 24 s, then 2 s of tail: 26 s);
    // the show plays 16 bars at the same tempo: it ends at 0.5 + 32 = 32.5 s.
    let d = dir("long");
    let (_, duration) = song_file(&d, &spec(120.0, 12));
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 120.0, 0.5, 16)).unwrap();
    let r = check_file(&path);
    let w = music_warnings(&r);
    assert_eq!(w.len(), 1, "{w:#?}");
    let past = w[0].value.expect("seconds past the end");
    assert!((past - (32.5 - duration)).abs() < 1e-6, "{past}");
    assert!((w[0].at.time_s - duration).abs() < 1e-6);
    // Bars of 2 s from 0.5 s: the song's end falls in bar 13.
    let bar = ((duration - 0.5) / 2.0).floor() as i64 + 1;
    assert_eq!(w[0].at.bar, bar);
    assert_eq!(bar, 13);
    assert!(
        w[0].message.contains("past the end of the song"),
        "{}",
        w[0].message
    );
}

#[test]
fn compile_records_the_song_by_name_length_and_checksum() {
    let d = dir("compile");
    let (_, duration) = song_file(&d, &spec(120.0, 4));
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 120.0, 0.5, 4)).unwrap();
    let out = d.join("out");
    let status = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["compile", path.to_str().unwrap(), "--no-previews", "--out"])
        .arg(&out)
        .status()
        .unwrap();
    assert!(status.success());
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let m = &report["compile"]["music"];
    assert_eq!(m["file"], "song.wav");
    let bytes = std::fs::read(d.join("song.wav")).unwrap();
    // The CRC-32 of the file, from the crc32fast crate (IEEE 802.3).
    assert_eq!(
        m["crc32"].as_str().unwrap(),
        format!("{:08x}", crc32fast::hash(&bytes))
    );
    assert_eq!(m["bytes"].as_u64(), Some(bytes.len() as u64));
    assert!((m["duration_s"].as_f64().unwrap() - duration).abs() < 1e-6);
    // The song itself is not copied.
    for e in std::fs::read_dir(&out).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.ends_with(".wav"), "{name}");
    }
    // The check's figures are in the report too.
    assert!(
        report["music"]["max_offset_ms"].is_f64(),
        "{}",
        report["music"]
    );
}

#[test]
fn a_music_file_that_is_missing_or_not_audio_is_an_error_at_the_key() {
    let d = dir("bad-file");
    std::fs::write(d.join("notes.ogg"), "a shopping list, not a song").unwrap();
    for (file, says) in [
        ("missing.ogg", "cannot read the song"),
        ("notes.ogg", "not a song glowscore can read"),
    ] {
        let path = d.join("show.toml");
        std::fs::write(&path, show_text(file, 120.0, 0.5, 2)).unwrap();
        let err = glowscore::show::load(&path).unwrap_err();
        let d0 = &err.0[0];
        assert_eq!(d0.key.as_deref(), Some("show.music"));
        let (_, line, col) = d0.location().unwrap();
        assert_eq!((line, col), (8, 9), "{err}");
        assert!(
            d0.message.contains(file) && d0.message.contains(says),
            "{err}"
        );
    }
}

#[test]
fn a_song_without_a_steady_beat_is_a_warning_not_a_failure() {
    let d = dir("no-beat");
    write_wav(&d.join("song.wav"), &[vec![0i16; 22_050 * 12]], 22_050);
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 120.0, 0.5, 4)).unwrap();
    let r = check_file(&path);
    let w = music_warnings(&r);
    assert_eq!(w.len(), 1, "{w:#?}");
    assert!(w[0].message.contains("no steady beat"), "{}", w[0].message);
    assert_eq!(r.music.as_ref().unwrap().max_offset_ms, None);
}

#[test]
fn rehearse_plays_the_shows_own_song_without_song_given() {
    // shows/tide-lamp-groove.toml names its song with `music`: without
    // `--song` the practice track is the one made with `--song` naming that
    // file, byte for byte, and it lasts the song (18.03 s, longer than the
    // show's 16.5 s) plus half a second.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let d = dir("rehearse");
    let show = root.join("shows/tide-lamp-groove.toml");
    let song_path = root.join("shows/tide-lamp-groove.wav");
    let (own, given) = (d.join("own.wav"), d.join("given.wav"));
    glowscore::commands::rehearse::run(&show, &own, Some("left"), None).expect("writes");
    glowscore::commands::rehearse::run(&show, &given, Some("left"), Some(&song_path))
        .expect("writes");
    assert!(std::fs::read(&own).unwrap() == std::fs::read(&given).unwrap());
    let track = decode_file(&own).unwrap();
    let song = decode_file(&song_path).unwrap();
    assert_eq!(track.rate, song.rate);
    assert!(song.duration_s() > 18.0);
    assert!((track.duration_s() - (song.duration_s() + 0.5)).abs() < 1e-3);
}

#[test]
fn a_song_that_is_truncated_after_its_header_fails_the_check_naming_it() {
    // The header is whole (the reader accepts the key), the samples stop
    // halfway: the check decodes the song and fails, exit status 1, with
    // the file's name; with --json the report says why.
    let d = dir("truncated");
    song_file(&d, &spec(120.0, 4));
    let bytes = std::fs::read(d.join("song.wav")).unwrap();
    std::fs::write(d.join("song.wav"), &bytes[..bytes.len() / 2]).unwrap();
    let path = d.join("show.toml");
    std::fs::write(&path, show_text("song.wav", 120.0, 0.5, 2)).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["check", path.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("song.wav") && err.contains("truncated"),
        "{err}"
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["valid"], false);
    let msg = v["errors"][0]["message"].as_str().unwrap();
    assert!(msg.contains("truncated"), "{msg}");
}
