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

/// Visits, in increasing order, the samples of `f` over `[a, b]` in `n`
/// equal steps and, next to every sample that is a local minimum of the
/// samples, the golden-section refined minimum: `visit(where, value)`.
/// Needs constant memory, however many samples.
pub fn for_each_point(
    f: &dyn Fn(f64) -> f64,
    a: f64,
    b: f64,
    n: usize,
    visit: &mut dyn FnMut(f64, f64),
) {
    let n = n.max(2);
    let h = (b - a) / n as f64;
    let x = |i: usize| if i == n { b } else { a + h * i as f64 };
    let mut pending: Vec<(f64, f64)> = Vec::with_capacity(4);
    let add = |p: (f64, f64), pending: &mut Vec<(f64, f64)>| {
        let at = pending.partition_point(|q| q.0 <= p.0);
        pending.insert(at, p);
    };
    let mut l = (x(0), f(x(0)));
    let mut m = (x(1), f(x(1)));
    visit(l.0, l.1);
    for i in 2..=n {
        let r = (x(i), f(x(i)));
        add(m, &mut pending);
        if m.1 <= l.1 && m.1 <= r.1 && (m.1 < l.1 || m.1 < r.1) {
            let g = golden_min(f, l.0, m.0, r.0);
            if g.1 < m.1 {
                add(g, &mut pending);
            }
        }
        // Later refined points lie beyond m: everything up to m is final.
        let done = pending.partition_point(|q| q.0 <= m.0);
        for q in pending.drain(..done) {
            visit(q.0, q.1);
        }
        l = m;
        m = r;
    }
    for q in pending.drain(..) {
        visit(q.0, q.1);
    }
    visit(m.0, m.1);
}

/// A stretch where a function is negative, and its lowest point there.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Dip {
    /// Where it starts (the refined crossing, or the start of the points).
    pub start: f64,
    /// Where it ends.
    pub end: f64,
    /// Lowest value among the points inside.
    pub worst: f64,
    /// Where that is.
    pub worst_at: f64,
}

/// Finds the stretches where `f < 0` from points of `f` pushed in
/// increasing order (as from [`for_each_point`]); each crossing between two
/// points is refined by Brent's method to [`TOL`].
pub struct DipFinder<'f> {
    f: &'f dyn Fn(f64) -> f64,
    prev: Option<(f64, f64)>,
    open: Option<Dip>,
    dips: Vec<Dip>,
}

impl<'f> DipFinder<'f> {
    /// A finder for `f`, before any point.
    pub fn new(f: &'f dyn Fn(f64) -> f64) -> Self {
        DipFinder {
            f,
            prev: None,
            open: None,
            dips: Vec::new(),
        }
    }

    /// Takes the next point (`x` not below the previous one).
    pub fn push(&mut self, x: f64, v: f64) {
        let f = self.f;
        match (self.prev, &mut self.open) {
            (None, _) if v < 0.0 => {
                self.open = Some(Dip {
                    start: x,
                    end: x,
                    worst: v,
                    worst_at: x,
                });
            }
            (Some((xa, va)), None) if v < 0.0 => {
                let start = if va == 0.0 {
                    xa
                } else {
                    num::brent(f, xa, x, TOL).unwrap_or(xa)
                };
                self.open = Some(Dip {
                    start,
                    end: x,
                    worst: v,
                    worst_at: x,
                });
            }
            (Some(_), Some(d)) if v < 0.0 => {
                d.end = x;
                if v < d.worst {
                    d.worst = v;
                    d.worst_at = x;
                }
            }
            (Some((xa, _)), Some(d)) => {
                d.end = num::brent(f, xa, x, TOL).unwrap_or(x);
                self.dips.push(*d);
                self.open = None;
            }
            _ => {}
        }
        self.prev = Some((x, v));
    }

    /// The stretches found, in order (one still open ends at the last point).
    pub fn finish(mut self) -> Vec<Dip> {
        if let Some(d) = self.open.take() {
            self.dips.push(d);
        }
        self.dips
    }
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

    fn dips(f: &dyn Fn(f64) -> f64, a: f64, b: f64, n: usize) -> Vec<Dip> {
        let mut finder = DipFinder::new(f);
        let mut last = f64::NEG_INFINITY;
        for_each_point(f, a, b, n, &mut |x, v| {
            assert!(x >= last, "points in order");
            last = x;
            finder.push(x, v);
        });
        finder.finish()
    }

    #[test]
    fn a_dip_between_samples_makes_a_stretch() {
        // f = (x - 0.5)^2 - 1e-4 is negative on (0.49, 0.51), between the
        // samples 0.4 and 0.6 of a 5-step grid.
        let f = |x: f64| (x - 0.5) * (x - 0.5) - 1e-4;
        let s = dips(&f, 0.0, 1.0, 5);
        assert_eq!(s.len(), 1);
        assert!((s[0].start - 0.49).abs() < 1e-12 && (s[0].end - 0.51).abs() < 1e-12);
        assert!((s[0].worst + 1e-4).abs() < 1e-15 && (s[0].worst_at - 0.5).abs() < 1e-7);
        // cos(2 pi x) < 0 on (0.25, 0.75) and (1.25, 1.75): a stretch may
        // start at the interval's start.
        let g = |x: f64| num::cos(std::f64::consts::TAU * x);
        assert_eq!(dips(&g, 0.3, 1.2, 50).len(), 1);
        let s = dips(&g, 0.3, 2.0, 50);
        assert_eq!(s.len(), 2);
        assert!((s[0].start - 0.3).abs() < 1e-15 && (s[0].end - 0.75).abs() < 1e-12);
        assert!((s[1].start - 1.25).abs() < 1e-12 && (s[1].end - 1.75).abs() < 1e-12);
        assert!((s[1].worst + 1.0).abs() < 1e-15);
    }

    #[test]
    fn equal_neighbour_minima_stay_in_order() {
        // Samples at 0, 1, 2, 3, 4; those at 1 and 2 are equal and both
        // local minima of the samples. Two dips (minima at 0.8 and 2.2):
        let f = |x: f64| ((x - 1.5).abs() - 0.7).powi(2) - 1e-6;
        let s = dips(&f, 0.0, 4.0, 4);
        assert_eq!(s.len(), 2, "{s:?}");
        assert!((s[0].worst_at - 0.8).abs() < 1e-7 && (s[1].worst_at - 2.2).abs() < 1e-7);
        // One dip between them (minimum at 1.5), refined from both sides.
        let g = |x: f64| (x - 1.5) * (x - 1.5) - 1e-6;
        let s = dips(&g, 0.0, 4.0, 4);
        assert_eq!(s.len(), 1, "{s:?}");
        assert!((s[0].start - 1.499).abs() < 1e-12 && (s[0].end - 1.501).abs() < 1e-12);
    }
}
