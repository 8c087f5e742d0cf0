//! Bracketing and refining the sign changes of a smooth function.

use crate::num;

/// A root of a sampled function, where it changes sign.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SignChange {
    /// Where the function crosses zero.
    pub at: f64,
    /// True for a crossing from negative to positive.
    pub rising: bool,
}

/// Every sign change of `f` on `[a, b]`, found by sampling `n` equal
/// intervals and refining each bracket with Brent's method to `tol`.
/// A sample exactly at zero counts as a crossing only where the samples on
/// either side of it (or of a run of zeros) have opposite signs; a touch
/// without crossing is not a sign change. Crossings are in increasing order.
pub fn sign_changes(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize, tol: f64) -> Vec<SignChange> {
    let n = n.max(1);
    let x = |i: usize| {
        if i == n {
            b
        } else {
            a + (b - a) * (i as f64) / (n as f64)
        }
    };
    let mut out = Vec::new();
    // The last sample with a nonzero value, and the first zero after it.
    let mut last: Option<(usize, f64)> = None;
    let mut zero_run: Option<usize> = None;
    for i in 0..=n {
        let xi = x(i);
        let v = f(xi);
        if v == 0.0 {
            zero_run.get_or_insert(i);
            continue;
        }
        if let Some((j, u)) = last
            && u.signum() != v.signum()
        {
            let at = match zero_run {
                Some(z) => 0.5 * (x(z) + x(i - 1)),
                None => num::brent(&f, x(j), xi, tol).unwrap_or(0.5 * (x(j) + xi)),
            };
            out.push(SignChange {
                at,
                rising: v > 0.0,
            });
        }
        last = Some((i, v));
        zero_run = None;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_every_root_of_a_sine_in_order() {
        let r = sign_changes(|x| crate::num::sin(3.0 * x), 0.1, 10.0, 200, 1e-14);
        let expect: Vec<f64> = (1..10)
            .map(|k| k as f64 * std::f64::consts::PI / 3.0)
            .collect();
        assert_eq!(r.len(), expect.len());
        for (k, (got, want)) in r.iter().zip(&expect).enumerate() {
            assert!((got.at - want).abs() < 1e-12);
            assert_eq!(got.rising, k % 2 == 1);
        }
    }

    #[test]
    fn a_touch_is_not_a_crossing_and_exact_zeros_are_kept() {
        assert!(sign_changes(|x| x * x, -1.0, 1.0, 10, 1e-12).is_empty());
        let r = sign_changes(|x| x, -1.0, 1.0, 10, 1e-12);
        assert_eq!(
            r,
            vec![SignChange {
                at: 0.0,
                rising: true
            }]
        );
        // Nothing is reported where the function starts or ends at zero.
        assert!(sign_changes(|x| x, 0.0, 1.0, 10, 1e-12).is_empty());
    }
}
