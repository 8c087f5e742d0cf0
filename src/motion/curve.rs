//! Sums of rotating terms: the closed form of every hand and head path.
//!
//! A [`Curve`] is a point in a plane's own coordinates (along `up`, along
//! `right`, metres) as a function of pattern phase u (hand revolutions):
//! `p(u) = sum_k a_k (cos(phi_k + 2 pi f_k u), sin(phi_k + 2 pi f_k u))`.
//! Its derivatives in u are closed form too.

use std::f64::consts::TAU;

use crate::num;

/// One rotating term: radius, turns per unit phase, starting angle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rotor {
    /// Radius, metres (not negative).
    pub radius_m: f64,
    /// Turns per unit of phase (signed; positive turns clockwise on the clock).
    pub turns: f64,
    /// Clock angle at phase 0, radians.
    pub start_rad: f64,
}

/// A point, velocity and acceleration in a plane, against phase u.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Jet {
    /// Position (up, right), metres.
    pub p: [f64; 2],
    /// dp/du, metres per revolution.
    pub d1: [f64; 2],
    /// d2p/du2.
    pub d2: [f64; 2],
}

/// A sum of rotating terms, with terms of equal frequency merged.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Curve {
    rotors: Vec<Rotor>,
}

impl Curve {
    /// The sum of `rotors`. Terms turning at the same rate are added into one
    /// (so an isolation whose hand and head cancel is exactly still), and
    /// terms that cancel to nothing are dropped.
    pub fn new(rotors: impl IntoIterator<Item = Rotor>) -> Self {
        let all: Vec<Rotor> = rotors.into_iter().collect();
        let scale: f64 = all.iter().map(|r| r.radius_m.abs()).sum();
        let mut merged: Vec<(f64, f64, f64)> = Vec::new(); // (turns, re, im)
        for r in &all {
            let (s, c) = num::sin_cos(r.start_rad);
            match merged.iter_mut().find(|m| m.0 == r.turns) {
                Some(m) => {
                    m.1 += r.radius_m * c;
                    m.2 += r.radius_m * s;
                }
                None => merged.push((r.turns, r.radius_m * c, r.radius_m * s)),
            }
        }
        let rotors = merged
            .into_iter()
            .filter_map(|(turns, re, im)| {
                let radius_m = re.hypot(im);
                (radius_m > 1e-12 * scale).then(|| Rotor {
                    radius_m,
                    turns,
                    start_rad: num::atan2(im, re),
                })
            })
            .collect();
        Curve { rotors }
    }

    /// The merged terms.
    pub fn rotors(&self) -> &[Rotor] {
        &self.rotors
    }

    /// Position at phase `u`.
    pub fn point(&self, u: f64) -> [f64; 2] {
        self.jet(u).p
    }

    /// Position and first two derivatives at phase `u`.
    pub fn jet(&self, u: f64) -> Jet {
        let [p, d1, d2, _] = self.derivatives(u);
        Jet { p, d1, d2 }
    }

    /// Position and its first three derivatives at phase `u`
    /// (metres per revolution^n, n = 0..=3).
    pub fn derivatives(&self, u: f64) -> [[f64; 2]; 4] {
        let mut j = [[0.0; 2]; 4];
        for r in &self.rotors {
            let w = TAU * r.turns;
            let (s, c) = num::sin_cos(r.start_rad + w * u);
            let a = r.radius_m;
            let (a1, a2, a3) = (a * w, a * w * w, a * w * w * w);
            j[0][0] += a * c;
            j[0][1] += a * s;
            j[1][0] -= a1 * s;
            j[1][1] += a1 * c;
            j[2][0] -= a2 * c;
            j[2][1] -= a2 * s;
            j[3][0] += a3 * s;
            j[3][1] -= a3 * c;
        }
        j
    }

    /// True when the distance from the origin never changes (at most one term).
    pub fn has_constant_distance(&self) -> bool {
        self.rotors.len() <= 1
    }

    /// True when the speed never changes (at most one moving term).
    pub fn has_constant_speed(&self) -> bool {
        self.rotors.iter().filter(|r| r.turns != 0.0).count() <= 1
    }

    /// Highest rate, turns per unit phase, in any product of two terms or a
    /// term alone: the finest detail a sampled search must resolve.
    pub fn finest_turns(&self) -> f64 {
        let mut f: f64 = 1.0;
        for a in &self.rotors {
            f = f.max(a.turns.abs());
            for b in &self.rotors {
                f = f.max((a.turns - b.turns).abs());
            }
        }
        f
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derivatives_match_finite_differences() {
        let c = Curve::new([
            Rotor {
                radius_m: 0.3,
                turns: 1.0,
                start_rad: 0.2,
            },
            Rotor {
                radius_m: 0.1,
                turns: -3.0,
                start_rad: 1.0,
            },
        ]);
        let h = 1e-6;
        for &u in &[0.0, 0.13, 0.77] {
            let j = c.jet(u);
            let (a, b) = (c.jet(u - h), c.jet(u + h));
            for k in 0..2 {
                assert!(((b.p[k] - a.p[k]) / (2.0 * h) - j.d1[k]).abs() < 1e-6);
                assert!(((b.d1[k] - a.d1[k]) / (2.0 * h) - j.d2[k]).abs() < 1e-4);
                assert!(((b.d2[k] - a.d2[k]) / (2.0 * h) - c.derivatives(u)[3][k]).abs() < 1e-2);
            }
        }
    }

    #[test]
    fn cancelling_terms_merge_to_nothing() {
        let c = Curve::new([
            Rotor {
                radius_m: 0.5,
                turns: 1.0,
                start_rad: 0.0,
            },
            Rotor {
                radius_m: 0.5,
                turns: 1.0,
                start_rad: std::f64::consts::PI,
            },
        ]);
        assert!(c.rotors().is_empty());
        assert_eq!(c.point(0.3), [0.0, 0.0]);
    }
}
