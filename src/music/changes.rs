//! Tempo changes: the local tempo of every bar (from its downbeat to the
//! next) against the tempo of the current stretch; where it moves by more
//! than 1 % for more than two bars in a row, a new stretch starts at the
//! first of those bars. Each stretch's tempo is the least-squares slope of
//! its beat times against the beat count (an ordinary linear regression).

/// A tempo change: from `bar` (bar 1 is the first downbeat) on, `bpm`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Change {
    /// The bar it starts, counted from bar 1 = `start_s`.
    pub bar: u32,
    /// Beats per minute from there.
    pub bpm: f64,
}

/// Moves of more than this fraction count as a change.
pub const THRESHOLD: f64 = 0.01;
/// Bars the move must last.
pub const BARS: usize = 3;

/// Beats per minute of consecutive beat times, by linear regression.
pub fn fit_bpm(times: &[f64]) -> Option<f64> {
    let n = times.len();
    if n < 2 {
        return None;
    }
    let mx = (n - 1) as f64 / 2.0;
    let my = times.iter().sum::<f64>() / n as f64;
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for (i, &t) in times.iter().enumerate() {
        let dx = i as f64 - mx;
        sxy += dx * (t - my);
        sxx += dx * dx;
    }
    let slope = sxy / sxx;
    (slope > 0.0).then(|| 60.0 / slope)
}

/// The tempo at bar 1 and the changes after it. `beats` are the beat times,
/// `first` the index of bar 1's downbeat, `per_bar` beats per bar.
pub fn find(beats: &[f64], first: usize, per_bar: usize) -> (f64, Vec<Change>) {
    let bars: Vec<f64> = (first..)
        .step_by(per_bar)
        .take_while(|&i| i + per_bar < beats.len())
        .map(|i| 60.0 * per_bar as f64 / (beats[i + per_bar] - beats[i]))
        .collect();
    // Stretches as (first beat index, bar number from 0).
    let mut stretches: Vec<(usize, usize)> = vec![(0, 0)];
    let mut k = 1;
    while k + BARS <= bars.len() {
        let s = stretches.last().map_or(0, |s| s.1);
        let mut reference: Vec<f64> = bars[s..k].to_vec();
        reference.sort_by(f64::total_cmp);
        let r = reference[reference.len() / 2];
        let moved: Vec<f64> = bars[k..k + BARS].iter().map(|b| b / r - 1.0).collect();
        let up = moved.iter().all(|&d| d > THRESHOLD);
        let down = moved.iter().all(|&d| d < -THRESHOLD);
        if up || down {
            stretches.push((first + k * per_bar, k));
            k += BARS;
        } else {
            k += 1;
        }
    }
    let mut bpms = Vec::new();
    for (j, &(from, _)) in stretches.iter().enumerate() {
        let to = stretches
            .get(j + 1)
            .map_or(beats.len(), |n| n.0 + 1)
            .min(beats.len());
        bpms.push(fit_bpm(&beats[from..to]).unwrap_or(0.0));
    }
    let changes = stretches
        .iter()
        .zip(&bpms)
        .skip(1)
        .map(|(&(_, bar), &bpm)| Change {
            bar: bar as u32 + 1,
            bpm,
        })
        .collect();
    (bpms[0], changes)
}
