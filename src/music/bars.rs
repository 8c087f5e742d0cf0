//! The bar: beats per bar and the downbeats from the accent pattern.
//!
//! Each beat's accent is its onset strength plus its low-band (under 200 Hz:
//! kick and bass) flux, each z-scored over the song. For every meter (3 or 4,
//! or the one given) and every phase, the contrast is the mean accent of the
//! beats at that phase less the mean of the others; the meter and phase of
//! the largest contrast win (an accent-pattern method in the spirit of
//! Goto and Muraoka's bar-line detection, 1999; our own formulation).

/// Accent of the beat at fractional frame `b`: the largest value of `env`
/// within two frames.
fn peak(env: &[f32], b: f64) -> f64 {
    let i = b.round().max(0.0) as usize;
    let a = i.saturating_sub(2);
    let z = (i + 2).min(env.len().saturating_sub(1));
    f64::from(env[a..=z].iter().fold(0f32, |m, &x| m.max(x)))
}

fn zscore(v: &mut [f64]) {
    let n = v.len().max(1) as f64;
    let mean = v.iter().sum::<f64>() / n;
    let sd = (v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n)
        .sqrt()
        .max(1e-12);
    v.iter_mut().for_each(|x| *x = (*x - mean) / sd);
}

/// Beats per bar and the index of the first downbeat among `beats`.
pub fn meter(beats: &[f64], onset: &[f32], low: &[f32], given: Option<u32>) -> (u32, usize) {
    let mut a: Vec<f64> = beats.iter().map(|&b| peak(onset, b)).collect();
    let mut l: Vec<f64> = beats.iter().map(|&b| peak(low, b)).collect();
    zscore(&mut a);
    zscore(&mut l);
    let accent: Vec<f64> = a.iter().zip(&l).map(|(x, y)| x + y).collect();
    let candidates: Vec<u32> = match given {
        Some(n) => vec![n],
        None => vec![4, 3],
    };
    let mut best = (f64::NEG_INFINITY, 4, 0);
    for &m in &candidates {
        for phase in 0..m as usize {
            let (mut on, mut non, mut off, mut noff) = (0.0, 0, 0.0, 0);
            for (i, &x) in accent.iter().enumerate() {
                if i % m as usize == phase {
                    on += x;
                    non += 1;
                } else {
                    off += x;
                    noff += 1;
                }
            }
            if non == 0 || noff == 0 {
                continue;
            }
            let c = on / non as f64 - off / noff as f64;
            if c > best.0 {
                best = (c, m, phase);
            }
        }
    }
    (best.1, best.2)
}
