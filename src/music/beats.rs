//! The beat tracker of Ellis 2007 ("Beat Tracking by Dynamic Programming",
//! section 3.3): the best beat sequence maximises the onset strength at the
//! beats plus alpha times F(dt, tau) = -(ln(dt / tau))^2 for each interval,
//! found by dynamic programming, C*(t) = O(t) + max over the previous beat
//! tp in [t - 2 tau, t - tau / 2] of (alpha F(t - tp, tau) + C*(tp)), then
//! traced back from the best end. Here tau is the local period at t. Each
//! beat is then moved to the onset peak within a few frames and placed
//! between frames by parabolic interpolation.

use super::tempo::parabolic;

/// Weight of the tempo-consistency term against the onset strength
/// (the paper's "tightness"; our choice).
pub const ALPHA: f64 = 100.0;

/// Beat frames (fractional) of `onset`, with `period` frames per beat at each frame.
pub fn track(onset: &[f32], period: &[f64]) -> Vec<f64> {
    let n = onset.len();
    if n < 4 {
        return Vec::new();
    }
    let mean = onset.iter().map(|&x| f64::from(x)).sum::<f64>() / n as f64;
    let var = onset
        .iter()
        .map(|&x| (f64::from(x) - mean).powi(2))
        .sum::<f64>()
        / n as f64;
    let sd = var.sqrt().max(1e-12);
    let o: Vec<f64> = onset.iter().map(|&x| f64::from(x) / sd).collect();
    let mut score = vec![0f64; n];
    let mut back = vec![usize::MAX; n];
    for t in 0..n {
        let tau = period[t];
        let a = t as f64 - 2.0 * tau;
        let b = t as f64 - tau / 2.0;
        let mut best = 0.0;
        let mut arg = usize::MAX;
        if b >= 0.0 {
            let from = a.max(0.0).ceil() as usize;
            let to = b.floor() as usize;
            for (tp, &s) in score.iter().enumerate().take(to + 1).skip(from) {
                let l = libm::log((t - tp) as f64 / tau);
                let v = s - ALPHA * l * l;
                if arg == usize::MAX || v > best {
                    best = v;
                    arg = tp;
                }
            }
        }
        if arg == usize::MAX || best < 0.0 {
            // Starting afresh is better than a poor predecessor.
            score[t] = o[t];
        } else {
            score[t] = o[t] + best;
            back[t] = arg;
        }
    }
    // The end: the best score in the last period.
    let last_tau = period[n - 1].ceil() as usize;
    let mut end = n - 1;
    for t in n.saturating_sub(last_tau)..n {
        if score[t] > score[end] {
            end = t;
        }
    }
    let mut beats = vec![end];
    while back[*beats.last().unwrap_or(&0)] != usize::MAX {
        let b = back[*beats.last().unwrap_or(&0)];
        beats.push(b);
    }
    beats.reverse();
    let ov: Vec<f64> = onset.iter().map(|&x| f64::from(x)).collect();
    beats
        .into_iter()
        .map(|b| {
            let a = b.saturating_sub(3);
            let z = (b + 3).min(n - 1);
            let mut m = b;
            for i in a..=z {
                if ov[i] > ov[m] {
                    m = i;
                }
            }
            m as f64 + parabolic(&ov, m)
        })
        .collect()
}

/// Drops the beats at either end whose onset is under a tenth of the
/// median at the beats (a tracker runs on through a silent intro or tail).
pub fn trim(beats: &mut Vec<f64>, onset: &[f32]) {
    let at = |b: f64| {
        let i = b.round() as usize;
        let a = i.saturating_sub(2);
        let z = (i + 2).min(onset.len() - 1);
        onset[a..=z].iter().fold(0f32, |m, &x| m.max(x))
    };
    let mut s: Vec<f32> = beats.iter().map(|&b| at(b)).collect();
    if s.is_empty() {
        return;
    }
    s.sort_by(f32::total_cmp);
    let floor = s[s.len() / 2] * 0.1;
    while beats.first().is_some_and(|&b| at(b) < floor) {
        beats.remove(0);
    }
    while beats.last().is_some_and(|&b| at(b) < floor) {
        beats.pop();
    }
}
