//! Decoding a song (WAV, FLAC, Ogg Vorbis, MP3) to mono samples at its own rate.
//!
//! The container and codec work is symphonia's; this file checks the limits
//! from the header before decoding, mixes every channel to mono (the plain
//! mean of the channels) and refuses files that are not audio or that end
//! before their header says they should. [`probe_file`] reads the header
//! alone (the show reader uses it to refuse a bad `music` file where the key
//! is written, without decoding the song).

use std::fs::File;
use std::path::Path;
use std::sync::Arc;

use symphonia::core::codecs::audio::AudioDecoderOptions;
use symphonia::core::errors::Error as DecodeError;
use symphonia::core::formats::probe::Hint;
use symphonia::core::formats::{FormatOptions, TrackType};
use symphonia::core::io::MediaSourceStream;
use symphonia::core::meta::MetadataOptions;

use super::MusicError;

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

/// What a song's header says, read without decoding it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Header {
    /// Samples per second.
    pub rate: u32,
    /// Channels, when the header gives them.
    pub channels: Option<usize>,
    /// Length in seconds, when the header gives it.
    pub duration_s: Option<f64>,
}

/// An opened song: its container reader, the audio track and its header.
struct Opened {
    format: Box<dyn symphonia::core::formats::FormatReader>,
    track_id: u32,
    frames: Option<u64>,
    params: symphonia::core::codecs::audio::AudioCodecParameters,
    header: Header,
}

/// Opens the song at `path` and checks its size, container, track and the
/// limits its header gives.
fn open(path: &Path) -> Result<Opened, MusicError> {
    let file = || path.to_path_buf();
    let meta = std::fs::metadata(path).map_err(MusicError::read(path))?;
    if !meta.is_file() {
        return Err(MusicError::NotAFile { file: file() });
    }
    if meta.len() > MAX_BYTES {
        return Err(MusicError::TooBig {
            file: file(),
            bytes: meta.len(),
        });
    }
    let handle = File::open(path).map_err(MusicError::read(path))?;
    let mss = MediaSourceStream::new(Box::new(handle), Default::default());
    let mut hint = Hint::new();
    if let Some(ext) = path.extension().and_then(|e| e.to_str()) {
        hint.with_extension(ext);
    }
    let format = symphonia::default::get_probe()
        .probe(
            &hint,
            mss,
            FormatOptions::default(),
            MetadataOptions::default(),
        )
        .map_err(|e| MusicError::NotAudio {
            file: file(),
            source: Arc::new(e),
        })?;
    let track = format
        .default_track(TrackType::Audio)
        .ok_or_else(|| MusicError::NoAudioTrack { file: file() })?;
    let track_id = track.id;
    let frames = track.num_frames;
    let params = track
        .codec_params
        .as_ref()
        .and_then(|p| p.audio())
        .ok_or_else(|| MusicError::Codec { file: file() })?
        .clone();
    let rate = params
        .sample_rate
        .ok_or_else(|| MusicError::NoSampleRate { file: file() })?;
    if !(RATE_RANGE.0..=RATE_RANGE.1).contains(&rate) {
        return Err(MusicError::SampleRate { file: file(), rate });
    }
    let duration_s = frames.map(|n| n as f64 / f64::from(rate));
    if let Some(s) = duration_s
        && s > MAX_SECONDS
    {
        return Err(MusicError::TooLong {
            file: file(),
            seconds: Some(s),
        });
    }
    let channels = params.channels.as_ref().map(|c| c.count());
    Ok(Opened {
        format,
        track_id,
        frames,
        params,
        header: Header {
            rate,
            channels,
            duration_s,
        },
    })
}

/// Reads the header of the song at `path` and checks it against the
/// limits, without decoding the audio. Every error names the file.
pub fn probe_file(path: &Path) -> Result<Header, MusicError> {
    open(path).map(|o| o.header)
}

/// Decodes the song at `path`. Every error names the file.
pub fn decode_file(path: &Path) -> Result<Audio, MusicError> {
    let file = || path.to_path_buf();
    let Opened {
        mut format,
        track_id,
        frames: expected_frames,
        params,
        header,
    } = open(path)?;
    let rate = header.rate;
    let max_frames = (MAX_SECONDS * f64::from(rate)) as u64;
    let mut decoder = symphonia::default::get_codecs()
        .make_audio_decoder(&params, &AudioDecoderOptions::default())
        .map_err(|e| MusicError::Decoder {
            file: file(),
            source: Arc::new(e),
        })?;
    let damaged = |e| MusicError::Damaged {
        file: file(),
        source: Arc::new(e),
    };

    let capacity = expected_frames.unwrap_or(0).min(max_frames) as usize;
    let mut samples: Vec<f32> = Vec::with_capacity(capacity);
    let mut buf: Vec<f32> = Vec::new();
    let mut channels = header.channels.unwrap_or(0);
    loop {
        let packet = match format.next_packet() {
            Ok(Some(p)) => p,
            Ok(None) => break,
            Err(DecodeError::IoError(e)) if e.kind() == std::io::ErrorKind::UnexpectedEof => {
                break;
            }
            Err(e) => return Err(damaged(e)),
        };
        if packet.track_id != track_id {
            continue;
        }
        let decoded = decoder.decode(&packet).map_err(damaged)?;
        let ch = decoded.spec().channels().count();
        if ch == 0 {
            return Err(MusicError::NoChannels { file: file() });
        }
        channels = ch;
        decoded.copy_to_vec_interleaved::<f32>(&mut buf);
        let scale = 1.0 / ch as f32;
        samples.extend(buf.chunks_exact(ch).map(|f| f.iter().sum::<f32>() * scale));
        if samples.len() as u64 > max_frames {
            return Err(MusicError::TooLong {
                file: file(),
                seconds: None,
            });
        }
    }
    if let Some(n) = expected_frames
        && (samples.len() as u64) < n
    {
        return Err(MusicError::Truncated {
            file: file(),
            promised: n,
            found: samples.len() as u64,
        });
    }
    if samples.is_empty() {
        return Err(MusicError::Empty { file: file() });
    }
    if samples.iter().any(|s| !s.is_finite()) {
        return Err(MusicError::NotNumbers { file: file() });
    }
    Ok(Audio {
        rate,
        channels,
        samples,
    })
}
