//! Decoding a song (WAV, FLAC, Ogg Vorbis, MP3) to mono samples at its own rate.
//!
//! The container and codec work is symphonia's; this file checks the limits
//! from the header before decoding, mixes every channel to mono (the plain
//! mean of the channels) and refuses files that are not audio or that end
//! before their header says they should.

use std::fs::File;
use std::path::Path;

use symphonia::core::codecs::audio::AudioDecoderOptions;
use symphonia::core::errors::Error as DecodeError;
use symphonia::core::formats::probe::Hint;
use symphonia::core::formats::{FormatOptions, TrackType};
use symphonia::core::io::MediaSourceStream;
use symphonia::core::meta::MetadataOptions;

/// The longest song read: 30 minutes.
pub const MAX_SECONDS: f64 = 1800.0;
/// The largest song file read: 1 GiB.
pub const MAX_BYTES: u64 = 1 << 30;
/// Sample rates accepted, Hz.
pub const RATE_RANGE: (u32, u32) = (8_000, 384_000);

/// A decoded song: mono samples in [-1, 1] at the file's own rate.
#[derive(Debug, Clone)]
pub struct Audio {
    /// Samples per second.
    pub rate: u32,
    /// Channels in the file (mixed to mono here).
    pub channels: usize,
    /// The mean of the channels, one sample per frame.
    pub samples: Vec<f32>,
}

impl Audio {
    /// Length in seconds.
    pub fn duration_s(&self) -> f64 {
        self.samples.len() as f64 / f64::from(self.rate)
    }
}

/// Decodes the song at `path`. Every error names the file.
pub fn decode_file(path: &Path) -> Result<Audio, String> {
    let name = path.display();
    let meta = std::fs::metadata(path).map_err(|e| format!("{name}: cannot read the song: {e}"))?;
    if !meta.is_file() {
        return Err(format!("{name}: the song is not a file"));
    }
    if meta.len() > MAX_BYTES {
        return Err(format!(
            "{name}: the song is {} bytes, over the limit of 1 GiB",
            meta.len()
        ));
    }
    let file = File::open(path).map_err(|e| format!("{name}: cannot open the song: {e}"))?;
    let mss = MediaSourceStream::new(Box::new(file), Default::default());
    let mut hint = Hint::new();
    if let Some(ext) = path.extension().and_then(|e| e.to_str()) {
        hint.with_extension(ext);
    }
    let mut format = symphonia::default::get_probe()
        .probe(
            &hint,
            mss,
            FormatOptions::default(),
            MetadataOptions::default(),
        )
        .map_err(|e| {
            format!("{name}: not a song glowscore can read (WAV, FLAC, Ogg Vorbis or MP3): {e}")
        })?;
    let track = format
        .default_track(TrackType::Audio)
        .ok_or_else(|| format!("{name}: the file has no audio track"))?;
    let track_id = track.id;
    let expected_frames = track.num_frames;
    let params = track
        .codec_params
        .as_ref()
        .and_then(|p| p.audio())
        .ok_or_else(|| format!("{name}: the audio track's codec is not one glowscore reads"))?
        .clone();
    let rate = params
        .sample_rate
        .ok_or_else(|| format!("{name}: the header gives no sample rate"))?;
    if !(RATE_RANGE.0..=RATE_RANGE.1).contains(&rate) {
        return Err(format!(
            "{name}: sample rate {rate} Hz is outside {}..{} Hz",
            RATE_RANGE.0, RATE_RANGE.1
        ));
    }
    let max_frames = (MAX_SECONDS * f64::from(rate)) as u64;
    if let Some(n) = expected_frames
        && n > max_frames
    {
        return Err(format!(
            "{name}: the song lasts {:.0} s, over the limit of 30 minutes",
            n as f64 / f64::from(rate)
        ));
    }
    let mut decoder = symphonia::default::get_codecs()
        .make_audio_decoder(&params, &AudioDecoderOptions::default())
        .map_err(|e| format!("{name}: cannot decode the audio: {e}"))?;

    let capacity = expected_frames.unwrap_or(0).min(max_frames) as usize;
    let mut samples: Vec<f32> = Vec::with_capacity(capacity);
    let mut buf: Vec<f32> = Vec::new();
    let mut channels = params.channels.as_ref().map_or(0, |c| c.count());
    loop {
        let packet = match format.next_packet() {
            Ok(Some(p)) => p,
            Ok(None) => break,
            Err(DecodeError::IoError(e)) if e.kind() == std::io::ErrorKind::UnexpectedEof => {
                break;
            }
            Err(e) => return Err(format!("{name}: the song is damaged or truncated: {e}")),
        };
        if packet.track_id != track_id {
            continue;
        }
        let decoded = decoder
            .decode(&packet)
            .map_err(|e| format!("{name}: the song is damaged or truncated: {e}"))?;
        let ch = decoded.spec().channels().count();
        if ch == 0 {
            return Err(format!("{name}: the audio has no channels"));
        }
        channels = ch;
        decoded.copy_to_vec_interleaved::<f32>(&mut buf);
        let scale = 1.0 / ch as f32;
        samples.extend(buf.chunks_exact(ch).map(|f| f.iter().sum::<f32>() * scale));
        if samples.len() as u64 > max_frames {
            return Err(format!(
                "{name}: the song lasts over the limit of 30 minutes"
            ));
        }
    }
    if let Some(n) = expected_frames
        && (samples.len() as u64) < n
    {
        return Err(format!(
            "{name}: the song is truncated: the header promises {n} frames, the file holds {}",
            samples.len()
        ));
    }
    if samples.is_empty() {
        return Err(format!("{name}: the song holds no audio samples"));
    }
    if samples.iter().any(|s| !s.is_finite()) {
        return Err(format!(
            "{name}: the song holds samples that are not numbers"
        ));
    }
    Ok(Audio {
        rate,
        channels,
        samples,
    })
}
