//! Finding extremes and sign stretches of smooth functions of one variable.
//!
//! Every search samples its interval in equal steps (the caller picks the
//! step, fine enough to bracket every extremum of interest), then refines:
//! extrema of smooth quantities by Brent's root finder on the analytic
//! derivative (R. P. Brent, Algorithms for Minimization without Derivatives,
//! 1973, ch. 4), minima of functions without a derivative by golden-section
//! search (J. Kiefer, 1953; W. H. Press et al., Numerical Recipes, 3rd ed.,
//! section 10.2), and sign changes by Brent's root finder again.

use crate::num;

/// Width in the search variable (beats) to which every point is refined.
pub const TOL: f64 = 1e-12;
/// Relative difference below which two extreme values count as equal.
pub const TIE: f64 = 1e-12;

/// The smallest and largest value seen of one quantity, with where they are.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Extremes {
    /// (value, where), the first one seen on ties.
    pub min: Option<(f64, f64)>,
    /// (value, where), the first one seen on ties.
    pub max: Option<(f64, f64)>,
}

impl Extremes {
    /// Takes `value` at `x` into account. A value within [`TIE`] (relative)
    /// of the best so far is a tie and keeps the earlier point, so that a
    /// constant or periodic quantity reports its first extreme, not the one
    /// that rounding noise favours.
    pub fn offer(&mut self, value: f64, x: f64) {
        if !value.is_finite() {
            return;
        }
        let margin = |m: f64| TIE * m.abs().max(value.abs()).max(f64::MIN_POSITIVE);
        if self.min.is_none_or(|m| value < m.0 - margin(m.0)) {
            self.min = Some((value, x));
        }
        if self.max.is_none_or(|m| value > m.0 + margin(m.0)) {
            self.max = Some((value, x));
        }
    }

    /// Takes the extremes of `other` into account (ties keep `self`'s).
    pub fn merge(&mut self, other: &Extremes) {
        if let Some((v, x)) = other.min {
            self.offer(v, x);
        }
        if let Some((v, x)) = other.max {
            self.offer(v, x);
        }
    }
}

/// A quantity of a sampled state: its value and its derivative against the
/// state's time variable.
pub type Quantity<'a, K> = &'a dyn Fn(&K) -> (f64, f64);

/// Extremes of several smooth quantities of a state `eval(x)` over `[a, b]`.
///
/// Samples `n` equal steps; every sample is a candidate, and wherever a
/// quantity's derivative changes sign between two samples, the root of the
/// derivative is refined by Brent's method to [`TOL`] and its value is a
/// candidate too. `dx_scale` converts the quantities' derivatives to
/// derivatives against x; a bracket is refined only where the value inside
/// could beat the best found so far (by at most twice the step times the
/// larger end slope, a generous bound for a quantity smooth on the step).
pub fn scan_extremes<K>(
    eval: impl Fn(f64) -> K,
    a: f64,
    b: f64,
    n: usize,
    dx_scale: f64,
    quantities: &[Quantity<'_, K>],
    out: &mut [Extremes],
) {
    let n = n.max(1);
    let h = (b - a) / n as f64;
    let mut prev: Vec<(f64, f64, f64)> = Vec::with_capacity(quantities.len());
    for i in 0..=n {
        let x = if i == n { b } else { a + h * i as f64 };
        let state = eval(x);
        for (q, (quantity, ext)) in quantities.iter().zip(out.iter_mut()).enumerate() {
            let (v, d) = quantity(&state);
            ext.offer(v, x);
            if i == 0 {
                prev.push((x, v, d));
                continue;
            }
            let (x0, v0, d0) = prev[q];
            prev[q] = (x, v, d);
            if d0 * d >= 0.0 || (d0 * d).is_nan() {
                continue;
            }
            let bound = 2.0 * h * d0.abs().max(d.abs()) * dx_scale.abs();
            let worth = if d0 < 0.0 {
                ext.min.is_none_or(|m| v0.min(v) - bound < m.0)
            } else {
                ext.max.is_none_or(|m| v0.max(v) + bound > m.0)
            };
            if worth && let Some(r) = num::brent(|t| quantity(&eval(t)).1, x0, x, TOL) {
                ext.offer(quantity(&eval(r)).0, r);
            }
        }
    }
}

/// Minimum of `f` on `[a, c]` by golden-section search, starting from an
/// interior point `b` with `f(b)` not above `f(a)` and `f(c)`; refined to
/// [`TOL`]. Returns (where, value).
pub fn golden_min(f: impl Fn(f64) -> f64, a: f64, b: f64, c: f64) -> (f64, f64) {
    const R: f64 = 0.618_033_988_749_894_9; // (sqrt 5 - 1) / 2
    let (mut a, mut c) = (a, c);
    let (mut x, mut fx) = (b, f(b));
    for _ in 0..200 {
        if c - a <= TOL {
            break;
        }
        // Probe the larger side of the current best point.
        let y = if c - x > x - a {
            x + (1.0 - R) * (c - x)
        } else {
            x - (1.0 - R) * (x - a)
        };
        let fy = f(y);
        if fy < fx {
            if y > x {
                a = x;
            } else {
                c = x;
            }
            x = y;
            fx = fy;
        } else if y > x {
            c = y;
        } else {
            a = y;
        }
    }
    (x, fx)
}

/// Samples of `f` over `[a, b]` in `n` equal steps, plus the golden-section
/// refined minimum next to every sample that is a local minimum of the
/// samples: (where, value), sorted by where.
pub fn samples_with_minima(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> Vec<(f64, f64)> {
    let n = n.max(2);
    let h = (b - a) / n as f64;
    let mut pts: Vec<(f64, f64)> = (0..=n)
        .map(|i| {
            let x = if i == n { b } else { a + h * i as f64 };
            (x, f(x))
        })
        .collect();
    let mut extra = Vec::new();
    for i in 1..n {
        let (l, m, r) = (pts[i - 1], pts[i], pts[i + 1]);
        if m.1 <= l.1 && m.1 <= r.1 && (m.1 < l.1 || m.1 < r.1) {
            let (x, v) = golden_min(&f, l.0, m.0, r.0);
            if v < m.1 {
                extra.push((x, v));
            }
        }
    }
    pts.extend(extra);
    pts.sort_by(|p, q| p.0.total_cmp(&q.0));
    pts
}

/// The stretches where `f < 0`, as (start, end), found between the points
/// `pts` (sorted samples of `f`, as from [`samples_with_minima`]); each
/// crossing is refined by Brent's method to [`TOL`].
pub fn negative_stretches(f: impl Fn(f64) -> f64, pts: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let Some(&(x0, v0)) = pts.first() else {
        return out;
    };
    let mut start = (v0 < 0.0).then_some(x0);
    for w in pts.windows(2) {
        let ((xa, va), (xb, vb)) = (w[0], w[1]);
        match start {
            None if vb < 0.0 && va >= 0.0 => {
                let x = if va == 0.0 {
                    xa
                } else {
                    num::brent(&f, xa, xb, TOL).unwrap_or(xa)
                };
                start = Some(x);
            }
            Some(s) if vb >= 0.0 => {
                let x = num::brent(&f, xa, xb, TOL).unwrap_or(xb);
                out.push((s, x));
                start = None;
            }
            _ => {}
        }
    }
    if let (Some(s), Some(&(xl, _))) = (start, pts.last()) {
        out.push((s, xl));
    }
    out
}

/// A stretch of the search variable with a figure attached to it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stretch<T> {
    /// Where it starts.
    pub start: f64,
    /// Where it ends.
    pub end: f64,
    /// What it carries (the worst value over it, say).
    pub figure: T,
}

/// Sorts `stretches` by start and joins those that touch or overlap,
/// combining their figures with `join`.
pub fn merge_touching<T: Copy>(
    mut stretches: Vec<Stretch<T>>,
    join: impl Fn(T, T) -> T,
) -> Vec<Stretch<T>> {
    stretches.sort_by(|a, b| a.start.total_cmp(&b.start));
    let mut out: Vec<Stretch<T>> = Vec::with_capacity(stretches.len());
    for s in stretches {
        match out.last_mut() {
            Some(last) if s.start <= last.end => {
                last.end = last.end.max(s.end);
                last.figure = join(last.figure, s.figure);
            }
            _ => out.push(s),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn brent_on_the_derivative_finds_extremes_between_samples() {
        // f = cos(x) on [0.3, 10]: minimum -1 at pi, maximum 1 at 2 pi,
        // both between samples of a coarse grid.
        let q = |x: &f64| (num::cos(*x), -num::sin(*x));
        let mut out = [Extremes::default()];
        scan_extremes(|x| x, 0.3, 10.0, 7, 1.0, &[&q], &mut out);
        let (vmin, xmin) = out[0].min.unwrap();
        let (vmax, xmax) = out[0].max.unwrap();
        assert!((vmin + 1.0).abs() < 1e-15 && (xmin - std::f64::consts::PI).abs() < 1e-11);
        assert!((vmax - 1.0).abs() < 1e-15 && (xmax - std::f64::consts::TAU).abs() < 1e-11);
    }

    #[test]
    fn golden_section_finds_a_parabola_vertex() {
        let (x, v) = golden_min(|x| (x - 0.3) * (x - 0.3) + 2.0, 0.0, 0.5, 1.0);
        assert!((x - 0.3).abs() < 1e-7, "{x}");
        assert!((v - 2.0).abs() < 1e-14);
        // A kink (no derivative) is found too.
        let (x, _) = golden_min(|x: f64| (x - 0.7).abs(), 0.0, 0.5, 1.0);
        assert!((x - 0.7).abs() < 1e-11, "{x}");
    }

    #[test]
    fn a_dip_between_samples_makes_a_stretch() {
        // f = (x - 0.5)^2 - 1e-4 is negative on (0.49, 0.51), between the
        // samples 0.4 and 0.6 of a 5-step grid.
        let f = |x: f64| (x - 0.5) * (x - 0.5) - 1e-4;
        let pts = samples_with_minima(f, 0.0, 1.0, 5);
        let s = negative_stretches(f, &pts);
        assert_eq!(s.len(), 1);
        assert!(
            (s[0].0 - 0.49).abs() < 1e-12 && (s[0].1 - 0.51).abs() < 1e-12,
            "{s:?}"
        );
        // cos(2 pi x) < 0 on (0.25, 0.75) and (1.25, 1.75): a stretch may
        // start at the interval's start.
        let g = |x: f64| num::cos(std::f64::consts::TAU * x);
        let s = negative_stretches(g, &samples_with_minima(g, 0.3, 1.2, 50));
        assert_eq!(s.len(), 1);
        let s = negative_stretches(g, &samples_with_minima(g, 0.3, 2.0, 50));
        assert_eq!(s.len(), 2);
        assert!((s[0].0 - 0.3).abs() < 1e-15 && (s[0].1 - 0.75).abs() < 1e-12);
        assert!((s[1].0 - 1.25).abs() < 1e-12 && (s[1].1 - 1.75).abs() < 1e-12);
    }
}
