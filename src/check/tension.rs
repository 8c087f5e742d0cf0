//! Tether tension with the taut-tether model, and the stretches where the
//! tether would go slack.
//!
//! The head (mass m) moves on a prescribed path; the tether pulls it toward
//! the hand along u, the unit vector from hand to head. Newton's second law
//! along u gives the pull needed: T = -m (a - g) . u, with a the head's
//! acceleration and g = (0, -9.80665, 0) m/s^2. A negative T means the
//! prescribed path needs the tether to push: a real tether goes slack there
//! and the head leaves the path.

use crate::geom::Vec3;

use super::kin::Kin;

/// Standard acceleration of gravity, m/s^2 (3rd CGPM, 1901).
pub const G0: f64 = 9.806_65;

/// Gravity as a vector, stage coordinates (y up), m/s^2.
pub fn gravity() -> Vec3 {
    Vec3::new(0.0, -G0, 0.0)
}

/// Tether tension (N) of a head of `mass_kg` in state `k`, and its time
/// derivative (N/s). Zero when hand and head coincide (no direction).
pub fn tension_n(mass_kg: f64, k: &Kin) -> (f64, f64) {
    let q = k.head[0] - k.hand[0];
    let qd = k.head[1] - k.hand[1];
    let len = q.norm();
    if len == 0.0 || !len.is_finite() {
        return (0.0, 0.0);
    }
    let u = q / len;
    let ud = (qd - u * u.dot(&qd)) / len;
    let f = k.head[2] - gravity();
    let t = -mass_kg * f.dot(&u);
    let dt = -mass_kg * (k.head[3].dot(&u) + f.dot(&ud));
    (t, dt)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::kin::Kin;
    use crate::motion::{Curve, Rotor};

    #[test]
    fn hanging_head_pulls_its_weight() {
        // A head at rest under the hand: T = m g (Newton's second law).
        let k = Kin::resting_end(Vec3::new(0.0, 1.5, 0.0), 0.6);
        let (t, dt) = tension_n(0.2, &k);
        assert!((t - 0.2 * G0).abs() < 1e-15 && dt == 0.0);
    }

    #[test]
    fn derivative_matches_finite_differences() {
        // An antispin flower in the wall plane; jets against time at 2 rev/s.
        let head = Curve::new([
            Rotor {
                radius_m: 0.15,
                turns: 1.0,
                start_rad: 0.3,
            },
            Rotor {
                radius_m: 0.5,
                turns: -3.0,
                start_rad: 1.1,
            },
        ]);
        let hand = Curve::new([Rotor {
            radius_m: 0.15,
            turns: 1.0,
            start_rad: 0.3,
        }]);
        let rate = 2.0;
        let kin = |t: f64| {
            let st = |j: [[f64; 2]; 4]| {
                let mut o = [Vec3::zeros(); 4];
                let mut k = 1.0;
                for n in 0..4 {
                    o[n] = Vec3::new(j[n][1], j[n][0], 0.0) * k;
                    k *= rate;
                }
                o
            };
            Kin {
                hand: st(crate::check::kin::jet3(&hand, rate * t)),
                head: st(crate::check::kin::jet3(&head, rate * t)),
            }
        };
        let h = 1e-7;
        for &t in &[0.0, 0.11, 0.37] {
            let (_, d) = tension_n(0.15, &kin(t));
            let fd = (tension_n(0.15, &kin(t + h)).0 - tension_n(0.15, &kin(t - h)).0) / (2.0 * h);
            assert!((fd - d).abs() < 1e-5 * d.abs().max(1.0), "{fd} vs {d}");
        }
    }
}
