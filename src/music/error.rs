//! Why a song could not be read or heard: typed errors, each naming the file.
//!
//! [`MusicError`] is what reading a song file gives ([`super::decode_file`],
//! [`super::probe_file`], [`super::hear`]); [`BeatError`] is what the
//! analysis of decoded samples gives ([`super::analyse`]), which knows no
//! file: [`MusicError::Beat`] adds it.

use std::fmt;
use std::path::PathBuf;
use std::sync::Arc;

use symphonia::core::errors::Error as DecodeError;

use super::decode::{MAX_SECONDS, RATE_RANGE};

/// Why a song file could not be read (every variant names the file).
///
/// The sources are behind `Arc` so that the error can be kept and cloned
/// with the prepared show that heard the song.
#[derive(Clone, Debug, thiserror::Error)]
pub enum MusicError {
    /// The file could not be read or opened.
    #[error("{}: cannot read the song: {source}", file.display())]
    Read {
        /// The song file.
        file: PathBuf,
        /// The cause.
        #[source]
        source: Arc<std::io::Error>,
    },
    /// The path is a folder or some other thing that is not a file.
    #[error("{}: the song is not a file", file.display())]
    NotAFile {
        /// The path.
        file: PathBuf,
    },
    /// The file is larger than [`super::decode::MAX_BYTES`].
    #[error("{}: the song is {bytes} bytes, over the limit of 1 GiB", file.display())]
    TooBig {
        /// The song file.
        file: PathBuf,
        /// Its size.
        bytes: u64,
    },
    /// No reader recognises the file.
    #[error(
        "{}: not a song glowscore can read (WAV, FLAC, Ogg Vorbis or MP3): {source}",
        file.display()
    )]
    NotAudio {
        /// The file.
        file: PathBuf,
        /// What the container reader said.
        #[source]
        source: Arc<DecodeError>,
    },
    /// The container holds no audio track.
    #[error("{}: the file has no audio track", file.display())]
    NoAudioTrack {
        /// The file.
        file: PathBuf,
    },
    /// The audio track's codec is not one glowscore decodes.
    #[error("{}: the audio track's codec is not one glowscore reads", file.display())]
    Codec {
        /// The file.
        file: PathBuf,
    },
    /// The header gives no sample rate.
    #[error("{}: the header gives no sample rate", file.display())]
    NoSampleRate {
        /// The file.
        file: PathBuf,
    },
    /// The sample rate is outside [`RATE_RANGE`].
    #[error(
        "{}: sample rate {rate} Hz is outside {}..{} Hz",
        file.display(),
        RATE_RANGE.0,
        RATE_RANGE.1
    )]
    SampleRate {
        /// The file.
        file: PathBuf,
        /// Its sample rate, hertz.
        rate: u32,
    },
    /// The song is longer than [`MAX_SECONDS`] (as its header says, or as
    /// far as it was decoded).
    #[error(
        "{}: the song lasts {}, over the limit of {} minutes",
        file.display(),
        match seconds { Some(s) => format!("{s:.0} s"), None => "too long".to_string() },
        MAX_SECONDS / 60.0
    )]
    TooLong {
        /// The file.
        file: PathBuf,
        /// Its length from the header, seconds, when the header gives it.
        seconds: Option<f64>,
    },
    /// No decoder could be made for the track.
    #[error("{}: cannot decode the audio: {source}", file.display())]
    Decoder {
        /// The file.
        file: PathBuf,
        /// The decoder's reason.
        #[source]
        source: Arc<DecodeError>,
    },
    /// A packet could not be read or decoded.
    #[error("{}: the song is damaged or truncated: {source}", file.display())]
    Damaged {
        /// The file.
        file: PathBuf,
        /// The reader's or decoder's reason.
        #[source]
        source: Arc<DecodeError>,
    },
    /// The file holds fewer frames than its header promises.
    #[error(
        "{}: the song is truncated: the header promises {promised} frames, the file holds {found}",
        file.display()
    )]
    Truncated {
        /// The file.
        file: PathBuf,
        /// Frames the header promises.
        promised: u64,
        /// Frames decoded.
        found: u64,
    },
    /// A decoded packet has no channels.
    #[error("{}: the audio has no channels", file.display())]
    NoChannels {
        /// The file.
        file: PathBuf,
    },
    /// The file decodes to no samples at all.
    #[error("{}: the song holds no audio samples", file.display())]
    Empty {
        /// The file.
        file: PathBuf,
    },
    /// A decoded sample is infinite or not a number.
    #[error("{}: the song holds samples that are not numbers", file.display())]
    NotNumbers {
        /// The file.
        file: PathBuf,
    },
    /// The song decodes but its beat could not be found.
    #[error("{}: {source}", file.display())]
    Beat {
        /// The file.
        file: PathBuf,
        /// Why.
        #[source]
        source: BeatError,
    },
}

impl MusicError {
    /// An I/O failure on `file`.
    pub(crate) fn read(file: &std::path::Path) -> impl Fn(std::io::Error) -> MusicError + '_ {
        move |e| MusicError::Read {
            file: file.to_path_buf(),
            source: Arc::new(e),
        }
    }

    /// The file the error is about.
    pub fn file(&self) -> &std::path::Path {
        match self {
            MusicError::Read { file, .. }
            | MusicError::NotAFile { file }
            | MusicError::TooBig { file, .. }
            | MusicError::NotAudio { file, .. }
            | MusicError::NoAudioTrack { file }
            | MusicError::Codec { file }
            | MusicError::NoSampleRate { file }
            | MusicError::SampleRate { file, .. }
            | MusicError::TooLong { file, .. }
            | MusicError::Decoder { file, .. }
            | MusicError::Damaged { file, .. }
            | MusicError::Truncated { file, .. }
            | MusicError::NoChannels { file }
            | MusicError::Empty { file }
            | MusicError::NotNumbers { file }
            | MusicError::Beat { file, .. } => file,
        }
    }
}

/// Why the analysis of decoded samples found no beat grid.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BeatError {
    /// No steady beat was found.
    #[error(
        "no steady beat: {0}; try --bpm-range LO-HI, or set bpm and start_s in the show by hand"
    )]
    NoSteadyBeat(NoBeat),
    /// `--bpm-range` is not `LO-HI` with 10 <= LO < HI <= 1000.
    #[error("--bpm-range must be LO-HI with 10 <= LO < HI <= 1000, got {lo}-{hi}")]
    BpmRange {
        /// The low end given.
        lo: f64,
        /// The high end given.
        hi: f64,
    },
    /// `--beats-per-bar` is outside 1 to 16.
    #[error("--beats-per-bar must be 1 to 16, got {0}")]
    BeatsPerBar(u32),
}

/// Why there is no steady beat.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum NoBeat {
    /// Every sample is under [`super::SILENCE`].
    Silent,
    /// Too short for four beats at the slowest tempo searched.
    TooShort,
    /// The onsets repeat too weakly at any beat period.
    Weak {
        /// The normalised autocorrelation found.
        strength: f64,
    },
    /// The tracker found fewer than four beats.
    FewBeats,
    /// The beats found do not advance in time.
    NoAdvance,
}

impl fmt::Display for NoBeat {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NoBeat::Silent => f.write_str("the song is silent"),
            NoBeat::TooShort => {
                f.write_str("the song is too short for four beats at the slowest tempo")
            }
            NoBeat::Weak { strength } => write!(
                f,
                "the onsets repeat too weakly (strength {strength:.2} under {})",
                super::MIN_STRENGTH
            ),
            NoBeat::FewBeats => f.write_str("fewer than four beats were found"),
            NoBeat::NoAdvance => f.write_str("the beats found do not advance"),
        }
    }
}
