//! The song: decoding, onset envelope, tempo, beats, bars and tempo changes.
//!
//! Usable without the command line: [`decode::decode_file`] then
//! [`analyse`], or [`hear`] for both (with the file's size and CRC-32). The methods (see each file): log-compressed spectral flux on
//! a mel spectrogram (`onset`), Ellis 2007's tempo estimate (`tempo`) and
//! dynamic-programming beat tracker (`beats`) with parabolic sub-frame
//! interpolation, downbeats from the accent pattern (`bars`), tempo changes
//! from the bar-by-bar tempo (`changes`); `synth` makes test songs whose
//! beats are known.

pub mod bars;
pub mod beats;
pub mod changes;
pub mod decode;
pub mod error;
pub mod onset;
mod song;
pub mod synth;
pub mod tempo;

pub use changes::Change;
pub use decode::{Audio, Header, decode_file, probe_file};
pub use error::{BeatError, MusicError, NoBeat};
pub use song::{Song, hear};

/// Under this normalised autocorrelation at the beat period there is no
/// steady beat (our threshold: a drum pattern gives 0.3 or more, noise under 0.05).
pub const MIN_STRENGTH: f64 = 0.1;
/// Peaks under this (about -80 dBFS) are silence.
pub const SILENCE: f32 = 1e-4;

/// What the analysis may be told.
#[derive(Debug, Clone, Copy, Default)]
pub struct Options {
    /// Beats per bar, if known.
    pub beats_per_bar: Option<u32>,
    /// Tempi to search, bpm (low, high).
    pub bpm_range: Option<(f64, f64)>,
}

/// The song's beat grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    /// Length of the song, seconds.
    pub duration_s: f64,
    /// Tempo at bar 1.
    pub bpm: f64,
    /// Beats per bar.
    pub beats_per_bar: u32,
    /// Bar 1, beat 1, seconds.
    pub start_s: f64,
    /// Every beat, seconds, ascending.
    pub beats: Vec<f64>,
    /// Beat 1 of every bar, seconds.
    pub downbeats: Vec<f64>,
    /// Tempo changes after bar 1.
    pub tempo: Vec<Change>,
    /// 0 to 1.
    pub confidence: f64,
}

fn no_beat(why: NoBeat) -> BeatError {
    BeatError::NoSteadyBeat(why)
}

/// Moves a beat to the sharpest rise of the signal's energy within
/// `radius` s: the 1 ms block whose log energy rises most over the block
/// before (a fine energy-based onset detector, Bello et al. 2005, section
/// III-A), at the block's middle. The spectral flux places an onset to
/// within a hop; this places it to about a millisecond.
fn refine(samples: &[f32], rate: u32, t: f64, radius: f64) -> f64 {
    let block = (rate / 1000).max(1) as usize;
    let energy = |k: isize| -> f64 {
        if k < 0 {
            return 1e-12;
        }
        let a = k as usize * block;
        let e: f64 = samples
            .iter()
            .skip(a)
            .take(block)
            .map(|&x| f64::from(x) * f64::from(x))
            .sum();
        libm::log(1e-12 + e)
    };
    let centre = (t * f64::from(rate)) as isize / block as isize;
    let r = (radius * f64::from(rate)) as isize / block as isize + 1;
    let mut best = (f64::NEG_INFINITY, centre);
    let mut prev = energy(centre - r - 1);
    for k in centre - r..=centre + r {
        let e = energy(k);
        if k >= 0 && e - prev > best.0 {
            best = (e - prev, k);
        }
        prev = e;
    }
    (best.1 as f64 + 0.5) * block as f64 / f64::from(rate)
}

/// Finds the beat grid of `audio`.
pub fn analyse(audio: &Audio, opts: &Options) -> Result<Analysis, BeatError> {
    let range = opts.bpm_range.unwrap_or(tempo::DEFAULT_RANGE);
    if !(range.0.is_finite() && range.1.is_finite() && range.0 >= 10.0 && range.1 <= 1000.0)
        || range.0 >= range.1
    {
        return Err(BeatError::BpmRange {
            lo: range.0,
            hi: range.1,
        });
    }
    if let Some(n) = opts.beats_per_bar
        && !(1..=16).contains(&n)
    {
        return Err(BeatError::BeatsPerBar(n));
    }
    let duration_s = audio.duration_s();
    let peak = audio.samples.iter().fold(0f32, |m, &x| m.max(x.abs()));
    if peak < SILENCE {
        return Err(no_beat(NoBeat::Silent));
    }
    let env = onset::envelope(&audio.samples, audio.rate);
    let fr = env.frame_rate();
    if (env.onset.len() as f64) < 4.0 * 60.0 / range.0 * fr {
        return Err(no_beat(NoBeat::TooShort));
    }
    let global = tempo::global_period(&env.onset, fr, range);
    if global.strength < MIN_STRENGTH {
        return Err(no_beat(NoBeat::Weak {
            strength: global.strength,
        }));
    }
    let periods = tempo::local_periods(&env.onset, fr, global.frames);
    let mut frames = beats::track(&env.onset, &periods);
    beats::trim(&mut frames, &env.onset);
    if frames.len() < 4 {
        return Err(no_beat(NoBeat::FewBeats));
    }
    let (per_bar, first) = bars::meter(&frames, &env.onset, &env.low, opts.beats_per_bar);
    let hop_s = env.hop as f64 / f64::from(audio.rate);
    let beats: Vec<f64> = frames
        .iter()
        .map(|&f| refine(&audio.samples, audio.rate, env.time_of(f), hop_s))
        .collect();
    let downbeats: Vec<f64> = beats[first..]
        .iter()
        .step_by(per_bar as usize)
        .copied()
        .collect();
    let (bpm, tempo) = changes::find(&beats, first, per_bar as usize);
    if !(bpm.is_finite() && bpm > 0.0) {
        return Err(no_beat(NoBeat::NoAdvance));
    }
    Ok(Analysis {
        duration_s,
        bpm,
        beats_per_bar: per_bar,
        start_s: beats[first],
        beats,
        downbeats,
        tempo,
        confidence: global.strength,
    })
}
