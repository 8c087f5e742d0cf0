//! Synthetic test songs with known beats: kick, snare, hats and bass on a
//! tempo map, with swing and humanised timing. The generator places every
//! hit itself and returns the beat times it used, so tests compare the
//! analysis with a truth that does not come from the analysis.

use crate::num;

/// What to play.
#[derive(Debug, Clone)]
pub struct SongSpec {
    /// Samples per second.
    pub rate: u32,
    /// Beats per bar (3 or 4).
    pub beats_per_bar: u32,
    /// Bars to play.
    pub bars: u32,
    /// Tempo map: (bar from which it holds, bpm); the first entry is bar 1.
    pub tempo: Vec<(u32, f64)>,
    /// Time of bar 1, beat 1, seconds.
    pub start_s: f64,
    /// Off-beat eighths delayed by this fraction of a beat (0 straight, 1/6 triplet swing).
    pub swing: f64,
    /// Each hit moved by up to this many ms either way (uniform).
    pub humanise_ms: f64,
    /// Seed of the noise and the timing.
    pub seed: u64,
}

/// A generated song and its truth.
#[derive(Debug, Clone)]
pub struct Song {
    /// Mono samples.
    pub samples: Vec<f32>,
    /// Samples per second.
    pub rate: u32,
    /// Every beat's intended time, seconds.
    pub beats: Vec<f64>,
    /// Beat 1 of every bar, seconds.
    pub downbeats: Vec<f64>,
}

/// xorshift64* (Vigna 2016): deterministic noise for the tests.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let x = self.0.wrapping_mul(0x2545_f491_4f6c_dd1d);
        (x >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
    }
}

fn add(out: &mut [f32], rate: u32, t: f64, sound: &[f32]) {
    let start = (t * f64::from(rate)).round();
    if start < 0.0 {
        return;
    }
    let start = start as usize;
    for (o, s) in out.iter_mut().skip(start).zip(sound) {
        *o += s;
    }
}

fn kick(rate: u32, gain: f64) -> Vec<f32> {
    let n = (0.35 * f64::from(rate)) as usize;
    let mut phase = 0.0;
    (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            let f = 45.0 + 75.0 * num::exp(-t / 0.03);
            phase += 2.0 * std::f64::consts::PI * f / f64::from(rate);
            (gain * num::sin(phase) * num::exp(-t / 0.12)) as f32
        })
        .collect()
}

fn snare(rate: u32, gain: f64, rng: &mut Rng) -> Vec<f32> {
    let n = (0.2 * f64::from(rate)) as usize;
    (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            let tone = num::sin(2.0 * std::f64::consts::PI * 190.0 * t) * num::exp(-t / 0.04);
            (gain * (0.6 * rng.next() * num::exp(-t / 0.05) + 0.4 * tone)) as f32
        })
        .collect()
}

fn hat(rate: u32, gain: f64, rng: &mut Rng) -> Vec<f32> {
    let n = (0.06 * f64::from(rate)) as usize;
    let mut last = 0.0;
    (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            let x = rng.next();
            let hp = x - last;
            last = x;
            (gain * 0.5 * hp * num::exp(-t / 0.015)) as f32
        })
        .collect()
}

fn bass(rate: u32, gain: f64, freq: f64, len_s: f64) -> Vec<f32> {
    let n = (len_s * f64::from(rate)) as usize;
    (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            let attack = (t / 0.005).min(1.0);
            (gain * attack * num::sin(2.0 * std::f64::consts::PI * freq * t) * num::exp(-t / 0.6))
                as f32
        })
        .collect()
}

/// The beat times of `spec` (intended, before humanising).
pub fn beat_grid(spec: &SongSpec) -> Vec<f64> {
    let mut t = spec.start_s;
    let mut out = Vec::new();
    for bar in 1..=spec.bars {
        let bpm = spec
            .tempo
            .iter()
            .rev()
            .find(|(b, _)| *b <= bar)
            .map_or(120.0, |x| x.1);
        for _ in 0..spec.beats_per_bar {
            out.push(t);
            t += 60.0 / bpm;
        }
    }
    out
}

/// Plays `spec`: kick on beat 1 (and softer on 3 in four), snare on the
/// other strong beats, hats on every eighth, a bass note from each downbeat.
pub fn song(spec: &SongSpec) -> Song {
    let mut rng = Rng(spec.seed.max(1));
    let beats = beat_grid(spec);
    let per = spec.beats_per_bar as usize;
    let end = beats.last().copied().unwrap_or(0.0) + 2.0;
    let mut out = vec![0f32; (end * f64::from(spec.rate)) as usize];
    let notes = [55.0, 43.65, 65.41, 49.0];
    let k1 = kick(spec.rate, 0.5);
    let k3 = kick(spec.rate, 0.3);
    for (i, &t) in beats.iter().enumerate() {
        let len = beats.get(i + 1).map_or(0.5, |n| n - t);
        let mut jitter = || spec.humanise_ms * 1e-3 * rng.next();
        let pos = i % per;
        let tj = t + jitter();
        if pos == 0 {
            add(&mut out, spec.rate, tj, &k1);
            let b = bass(spec.rate, 0.2, notes[(i / per) % 4], len * per as f64);
            add(&mut out, spec.rate, tj, &b);
        } else if per == 4 && pos == 2 {
            add(&mut out, spec.rate, tj, &k3);
        } else {
            let s = snare(spec.rate, 0.25, &mut rng);
            add(&mut out, spec.rate, tj, &s);
        }
        let h = hat(spec.rate, 0.15, &mut rng);
        add(
            &mut out,
            spec.rate,
            t + spec.humanise_ms * 1e-3 * rng.next(),
            &h,
        );
        let off = t + len * (0.5 + spec.swing) + spec.humanise_ms * 1e-3 * rng.next();
        let h = hat(spec.rate, 0.08, &mut rng);
        add(&mut out, spec.rate, off, &h);
    }
    let downbeats = beats.iter().step_by(per).copied().collect();
    Song {
        samples: out,
        rate: spec.rate,
        beats,
        downbeats,
    }
}

/// A click at every beat of `bpm` from `start_s` (a 2 kHz blip of 20 ms),
/// `count` clicks; returns the samples and the exact click times.
pub fn click_track(rate: u32, bpm: f64, start_s: f64, count: usize) -> (Vec<f32>, Vec<f64>) {
    let times: Vec<f64> = (0..count)
        .map(|i| start_s + i as f64 * 60.0 / bpm)
        .collect();
    let end = times.last().copied().unwrap_or(0.0) + 1.0;
    let mut out = vec![0f32; (end * f64::from(rate)) as usize];
    let n = (0.02 * f64::from(rate)) as usize;
    let blip: Vec<f32> = (0..n)
        .map(|i| {
            let t = i as f64 / f64::from(rate);
            (0.5 * num::sin(2.0 * std::f64::consts::PI * 2000.0 * t) * num::exp(-t / 0.004)) as f32
        })
        .collect();
    for &t in &times {
        add(&mut out, rate, t, &blip);
    }
    (out, times)
}
