//! The onset-strength envelope: log-compressed spectral flux on a mel
//! spectrogram.
//!
//! Method: short-time Fourier transform with a Hann window, magnitudes pooled
//! into 40 triangular mel bands (the mel scale m = 2595 log10(1 + f / 700),
//! O'Shaughnessy 1987), compressed as ln(1 + 1000 X) and differenced frame to
//! frame, keeping increases only (half-wave rectified spectral flux; Bello et
//! al., "A Tutorial on Onset Detection in Music Signals", IEEE TSAP 2005, and
//! Ellis 2007, section 3.1). The bands under 200 Hz give a second, low-band
//! flux, the kick and bass accent used to find the downbeats.

use realfft::RealFftPlanner;

use crate::num;

/// Mel bands of the spectrogram.
pub const BANDS: usize = 40;
/// Lowest and highest band edges, Hz.
const F_LO: f64 = 30.0;
const F_HI: f64 = 8000.0;
/// Bands whose centre is under this are the low band, Hz.
const LOW_BAND_HZ: f64 = 200.0;
/// Compression constant of ln(1 + C X).
const COMPRESSION: f32 = 1000.0;

/// The onset envelopes of a song, one value per hop.
#[derive(Debug, Clone)]
pub struct Envelope {
    /// Spectral flux over all bands, one value per frame.
    pub onset: Vec<f32>,
    /// Spectral flux over the bands under 200 Hz.
    pub low: Vec<f32>,
    /// Samples between frames.
    pub hop: usize,
    /// Samples per second of the song.
    pub rate: u32,
}

impl Envelope {
    /// Frames per second.
    pub fn frame_rate(&self) -> f64 {
        f64::from(self.rate) / self.hop as f64
    }

    /// Time of frame `i` (fractional), seconds. Frame `i` compares the window
    /// ending at sample `(i + 1) hop` with the one ending a hop earlier, so a
    /// sharp onset shows in the frame whose window end passes it: the time is
    /// the middle of that last hop.
    pub fn time_of(&self, i: f64) -> f64 {
        (i + 0.5) * self.hop as f64 / f64::from(self.rate)
    }
}

fn mel(f: f64) -> f64 {
    2595.0 * libm::log10(1.0 + f / 700.0)
}

fn mel_inv(m: f64) -> f64 {
    700.0 * (num::pow(10.0, m / 2595.0) - 1.0)
}

/// One triangular band: its first FFT bin and weights.
struct Band {
    first: usize,
    weights: Vec<f32>,
    low: bool,
}

fn bands(n_fft: usize, rate: u32) -> Vec<Band> {
    let nyquist = f64::from(rate) / 2.0;
    let hi = F_HI.min(nyquist * 0.95);
    let (m_lo, m_hi) = (mel(F_LO), mel(hi));
    let edges: Vec<f64> = (0..BANDS + 2)
        .map(|i| mel_inv(m_lo + (m_hi - m_lo) * i as f64 / (BANDS + 1) as f64))
        .collect();
    let bin_hz = f64::from(rate) / n_fft as f64;
    (0..BANDS)
        .map(|b| {
            let (l, c, r) = (edges[b], edges[b + 1], edges[b + 2]);
            let first = (l / bin_hz).floor().max(0.0) as usize;
            let last = ((r / bin_hz).ceil() as usize).min(n_fft / 2);
            let mut weights: Vec<f32> = (first..=last)
                .map(|k| {
                    let f = k as f64 * bin_hz;
                    let w = if f <= c {
                        (f - l) / (c - l)
                    } else {
                        (r - f) / (r - c)
                    };
                    w.max(0.0) as f32
                })
                .collect();
            // A band narrower than a bin still takes its nearest bin.
            if weights.iter().all(|w| *w == 0.0) {
                let k = ((c / bin_hz).round() as usize).clamp(first, last);
                weights[k - first] = 1.0;
            }
            let sum: f32 = weights.iter().sum();
            weights.iter_mut().for_each(|w| *w /= sum);
            Band {
                first,
                weights,
                low: c < LOW_BAND_HZ,
            }
        })
        .collect()
}

/// The FFT size for a sample rate: the power of two nearest 23 ms.
pub fn fft_size(rate: u32) -> usize {
    let target = 0.023 * f64::from(rate);
    let e = libm::log2(target).round().clamp(7.0, 14.0) as u32;
    1usize << e
}

/// Computes the onset envelopes of `samples` at `rate`.
pub fn envelope(samples: &[f32], rate: u32) -> Envelope {
    let n = fft_size(rate);
    let hop = n / 4;
    let window: Vec<f32> = (0..n)
        .map(|i| {
            let s = num::sin(std::f64::consts::PI * (i as f64 + 0.5) / n as f64);
            (s * s) as f32
        })
        .collect();
    let wsum: f32 = window.iter().sum();
    let bands = bands(n, rate);
    let mut planner = RealFftPlanner::<f32>::new();
    let fft = planner.plan_fft_forward(n);
    let mut input = fft.make_input_vec();
    let mut spectrum = fft.make_output_vec();
    let mut scratch = fft.make_scratch_vec();
    let mut mags = vec![0f32; n / 2 + 1];
    // The first window ends one hop into the song: pad n - hop zeros before it.
    let pad = n - hop;
    let frames = samples.len().div_ceil(hop);
    let mut onset = Vec::with_capacity(frames);
    let mut low = Vec::with_capacity(frames);
    let mut prev = vec![0f32; BANDS];
    let mut cur = vec![0f32; BANDS];
    for f in 0..frames {
        let start = (f * hop) as isize - pad as isize;
        for (i, x) in input.iter_mut().enumerate() {
            let j = start + i as isize;
            *x = if j >= 0 && (j as usize) < samples.len() {
                samples[j as usize] * window[i]
            } else {
                0.0
            };
        }
        // The lengths are the planner's own, so this cannot fail.
        let _ = fft.process_with_scratch(&mut input, &mut spectrum, &mut scratch);
        for (m, c) in mags.iter_mut().zip(&spectrum) {
            *m = c.norm() * 2.0 / wsum;
        }
        let (mut all, mut lo) = (0f32, 0f32);
        for (b, band) in bands.iter().enumerate() {
            let e: f32 = band
                .weights
                .iter()
                .zip(&mags[band.first..])
                .map(|(w, m)| w * m)
                .sum();
            let l = libm::log1pf(COMPRESSION * e);
            cur[b] = l;
            let d = (l - prev[b]).max(0.0);
            all += d;
            if band.low {
                lo += d;
            }
        }
        std::mem::swap(&mut prev, &mut cur);
        onset.push(all);
        low.push(lo);
    }
    Envelope {
        onset,
        low,
        hop,
        rate,
    }
}
