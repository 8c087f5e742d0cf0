//! The tempo: autocorrelation of the onset envelope weighted by a
//! log-Gaussian prior over the beat period, as in D. P. W. Ellis, "Beat
//! Tracking by Dynamic Programming", Journal of New Music Research 36(1),
//! 2007, section 3.2: TPS(tau) = W(tau) sum_t O(t) O(t - tau), with
//! W(tau) = exp(-1/2 (log2(tau / tau0) / sigma)^2), tau0 = 0.5 s (120 bpm)
//! and sigma = 1.4 octaves (the paper's values, recalled from memory).

/// Centre of the tempo prior, seconds per beat.
pub const PRIOR_PERIOD_S: f64 = 0.5;
/// Width of the tempo prior, octaves.
pub const PRIOR_OCTAVES: f64 = 1.4;
/// Tempi searched without `--bpm-range`.
pub const DEFAULT_RANGE: (f64, f64) = (40.0, 240.0);

/// The tempo estimate: a beat period in frames and how clearly it stands out.
#[derive(Debug, Clone, Copy)]
pub struct Period {
    /// Frames per beat (fractional, by parabolic interpolation).
    pub frames: f64,
    /// Normalised autocorrelation at that lag, 0 to 1.
    pub strength: f64,
}

/// Autocorrelation of the mean-removed envelope at integer lags `lo..=hi`,
/// divided by its value at lag 0.
fn autocorrelation(env: &[f64], lo: usize, hi: usize) -> Vec<f64> {
    let r0: f64 = env.iter().map(|x| x * x).sum();
    (lo..=hi)
        .map(|lag| {
            if lag >= env.len() || r0 <= 0.0 {
                return 0.0;
            }
            let s: f64 = env[lag..].iter().zip(env).map(|(a, b)| a * b).sum();
            s / r0
        })
        .collect()
}

fn centred(env: &[f32]) -> Vec<f64> {
    let mean = env.iter().map(|&x| f64::from(x)).sum::<f64>() / env.len().max(1) as f64;
    env.iter().map(|&x| f64::from(x) - mean).collect()
}

/// Peak of `v` near index `i` by a parabola through three points (offset
/// in -0.5..0.5).
pub fn parabolic(v: &[f64], i: usize) -> f64 {
    if i == 0 || i + 1 >= v.len() {
        return 0.0;
    }
    let (a, b, c) = (v[i - 1], v[i], v[i + 1]);
    let d = a - 2.0 * b + c;
    if d >= 0.0 {
        return 0.0;
    }
    (0.5 * (a - c) / d).clamp(-0.5, 0.5)
}

/// The global tempo of `onset` (frames at `frame_rate`), searched within
/// `range` bpm.
pub fn global_period(onset: &[f32], frame_rate: f64, range: (f64, f64)) -> Period {
    let env = centred(onset);
    let lo = ((60.0 / range.1) * frame_rate).floor().max(2.0) as usize;
    let hi = ((60.0 / range.0) * frame_rate).ceil() as usize;
    let ac = autocorrelation(&env, lo, hi);
    let tau0 = PRIOR_PERIOD_S * frame_rate;
    let weighted: Vec<f64> = ac
        .iter()
        .enumerate()
        .map(|(k, &r)| {
            let tau = (lo + k) as f64;
            let z = libm::log2(tau / tau0) / PRIOR_OCTAVES;
            r.max(0.0) * crate::num::exp(-0.5 * z * z)
        })
        .collect();
    let mut best = 0;
    for (k, &w) in weighted.iter().enumerate() {
        if w > weighted[best] {
            best = k;
        }
    }
    let frames = (lo + best) as f64 + parabolic(&ac, best);
    Period {
        frames,
        strength: ac.get(best).copied().unwrap_or(0.0).clamp(0.0, 1.0),
    }
}

/// The local beat period at every frame: the autocorrelation peak of an
/// 8-second window within 25 % of the global period, every second,
/// interpolated linearly between.
pub fn local_periods(onset: &[f32], frame_rate: f64, global: f64) -> Vec<f64> {
    let n = onset.len();
    let step = frame_rate.round().max(1.0) as usize;
    let half = (4.0 * frame_rate) as usize;
    let lo = (global * 0.8).floor().max(2.0) as usize;
    let hi = (global * 1.25).ceil() as usize;
    let mut points: Vec<(usize, f64)> = Vec::new();
    let mut c = 0;
    while c < n {
        let a = c.saturating_sub(half);
        let b = (c + half).min(n);
        let env = centred(&onset[a..b]);
        let ac = autocorrelation(&env, lo, hi);
        let mut best = 0;
        for (k, &r) in ac.iter().enumerate() {
            if r > ac[best] {
                best = k;
            }
        }
        let p = if ac[best] > 0.05 {
            (lo + best) as f64 + parabolic(&ac, best)
        } else {
            global
        };
        points.push((c, p));
        c += step;
    }
    let mut out = vec![global; n];
    for w in points.windows(2) {
        let ((a, pa), (b, pb)) = (w[0], w[1]);
        for (i, o) in out.iter_mut().enumerate().take(b).skip(a) {
            *o = pa + (pb - pa) * (i - a) as f64 / (b - a) as f64;
        }
    }
    if let Some(&(a, pa)) = points.last() {
        out.iter_mut().skip(a).for_each(|o| *o = pa);
    }
    out
}
