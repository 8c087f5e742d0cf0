//! Portable floating-point helpers.
//!
//! Every transcendental function goes through `libm`, so that frame tables
//! and event times are the same on every machine, bit for bit. `clippy.toml`
//! forbids the platform versions (`f64::sin` and friends).

/// Sine of `x` radians (libm).
#[inline]
pub fn sin(x: f64) -> f64 {
    libm::sin(x)
}

/// Cosine of `x` radians (libm).
#[inline]
pub fn cos(x: f64) -> f64 {
    libm::cos(x)
}

/// Sine and cosine of `x` radians together (libm).
#[inline]
pub fn sin_cos(x: f64) -> (f64, f64) {
    libm::sincos(x)
}

/// Four-quadrant arc tangent of `y / x`, radians (libm).
#[inline]
pub fn atan2(y: f64, x: f64) -> f64 {
    libm::atan2(y, x)
}

/// `x` raised to `y` (libm).
#[inline]
pub fn pow(x: f64, y: f64) -> f64 {
    libm::pow(x, y)
}

/// `e` raised to `x` (libm).
#[inline]
pub fn exp(x: f64) -> f64 {
    libm::exp(x)
}

/// Real cube root of `x`, negative for negative `x` (libm).
#[inline]
pub fn cbrt(x: f64) -> f64 {
    libm::cbrt(x)
}

/// Error function of `x` (libm).
#[inline]
pub fn erf(x: f64) -> f64 {
    libm::erf(x)
}

/// Degrees to radians.
#[inline]
pub fn rad(deg: f64) -> f64 {
    deg * (std::f64::consts::PI / 180.0)
}

/// Radians to degrees.
#[inline]
pub fn deg(rad: f64) -> f64 {
    rad * (180.0 / std::f64::consts::PI)
}

/// Nodes and weights of 8-point Gauss-Legendre quadrature on [-1, 1]
/// (Abramowitz and Stegun, Handbook of Mathematical Functions, table 25.4).
const GAUSS8: [(f64, f64); 8] = [
    (-0.960_289_856_497_536_3, 0.101_228_536_290_376_26),
    (-0.796_666_477_413_626_7, 0.222_381_034_453_374_47),
    (-0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (-0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_47),
    (0.960_289_856_497_536_3, 0.101_228_536_290_376_26),
];

/// Integral of `f` over `[a, b]` by 8-point Gauss-Legendre quadrature.
/// Exact for polynomials up to degree 15; split the interval at kinks.
pub fn gauss8(a: f64, b: f64, mut f: impl FnMut(f64) -> f64) -> f64 {
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    GAUSS8
        .iter()
        .map(|&(x, w)| w * f(mid + half * x))
        .sum::<f64>()
        * half
}

/// Root of `f` in `[a, b]` by Brent's method (R. P. Brent, Algorithms for
/// Minimization without Derivatives, 1973, ch. 4). `f(a)` and `f(b)` must
/// differ in sign or one be zero; returns `None` otherwise. Stops when the
/// bracket is narrower than `tol`.
pub fn brent(mut f: impl FnMut(f64) -> f64, a: f64, b: f64, tol: f64) -> Option<f64> {
    let (mut a, mut b) = (a, b);
    let (mut fa, mut fb) = (f(a), f(b));
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa.signum() == fb.signum() || !fa.is_finite() || !fb.is_finite() {
        return None;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..200 {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * tol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * xm * q - (tol1 * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b);
    }
    Some(b)
}

/// Rounds to `digits` decimal places, for stable, readable JSON.
pub fn round_to(x: f64, digits: i32) -> f64 {
    let k = 10f64.powi(digits);
    let r = (x * k).round() / k;
    if r == 0.0 { 0.0 } else { r }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss8_is_exact_for_degree_15() {
        // Integral of x^15 + x^14 over [0, 1] is 1/16 + 1/15.
        let v = gauss8(0.0, 1.0, |x| x.powi(15) + x.powi(14));
        assert!((v - (1.0 / 16.0 + 1.0 / 15.0)).abs() < 1e-14, "{v}");
    }

    #[test]
    #[allow(clippy::disallowed_methods)] // the standard library's cube root is the reference
    fn brent_finds_cube_root_of_two() {
        let r = brent(|x| x * x * x - 2.0, 0.0, 2.0, 1e-14).unwrap();
        assert!((r - 2f64.cbrt()).abs() < 1e-13);
        assert!(brent(|x| x * x + 1.0, -1.0, 1.0, 1e-12).is_none());
    }
}
