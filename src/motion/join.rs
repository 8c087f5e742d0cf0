//! Continuous joins (`[[section]] join = "continue"`): the start angles that
//! carry a prop on from where the section before left it.
//!
//! A span's free choices at its start are two angles: a turn of its whole
//! hand path about the anchor (every hand term's start angle moves by the
//! same amount) and the tether's start angle. They are solved in closed form,
//! in order (docs/conventions.md, "Joins"):
//!
//! 1. the hand: the turn that brings the hand's start point nearest to where
//!    the hand was, that is toward the projection of the old hand position
//!    onto the new plane (a circle's nearest point to a point is along the
//!    projection). With the same plane and the same hand radius the hand
//!    lands exactly where it was.
//! 2. the tether: pointing from the new hand toward the projection of where
//!    the head was, which puts the head at the point of its circle (radius
//!    `tether_m` about the new hand, in the new plane) nearest the old head.
//!    When the hand landed exactly and the plane is the same, the head does too.
//!
//! Where the hand's old place projects onto the anchor (it was still at the
//! anchor, or the plane turned a right angle about it) every turn is as
//! near: the hand is turned toward the head's old place instead.

use std::f64::consts::TAU;

use crate::geom::Vec3;
use crate::num;

use super::{Curve, Rotor, Span};

/// Where a prop was just before a join, stage coordinates, metres.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Before {
    /// The hand.
    pub hand_m: Vec3,
    /// The head end (a poi's head, a staff's head end).
    pub head_m: Vec3,
}

/// The start angles a join solves for.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fit {
    /// Turn of the whole hand path about the anchor, radians (added to every
    /// hand term's start angle).
    pub turn_rad: f64,
    /// The tether's clock angle at phase 0, radians.
    pub tether_start_rad: f64,
}

/// Below this a distance in the plane has no direction, metres.
const NO_DIRECTION_M: f64 = 1e-12;

fn clock_angle(v: [f64; 2]) -> f64 {
    num::atan2(v[1], v[0])
}

fn rotate(v: [f64; 2], a: f64) -> [f64; 2] {
    let (s, c) = num::sin_cos(a);
    [c * v[0] - s * v[1], s * v[0] + c * v[1]]
}

/// The start angles that carry `span` on from `before` (see the module's
/// text). `span`'s own angles are the pattern's; the fit replaces them.
pub fn solve(span: &Span, before: &Before) -> Fit {
    let u0 = span.phase(0.0);
    let p = span.hand.point(u0);
    let q = span.in_plane(before.hand_m - span.anchor());
    let w = span.in_plane(before.head_m - span.anchor());
    let turn_rad = if p[0].hypot(p[1]) <= NO_DIRECTION_M {
        0.0
    } else if q[0].hypot(q[1]) > NO_DIRECTION_M {
        clock_angle(q) - clock_angle(p)
    } else if w[0].hypot(w[1]) > NO_DIRECTION_M {
        clock_angle(w) - clock_angle(p)
    } else {
        0.0
    };
    let hand = rotate(p, turn_rad);
    let d = [w[0] - hand[0], w[1] - hand[1]];
    let angle = if d[0].hypot(d[1]) > NO_DIRECTION_M {
        clock_angle(d)
    } else {
        // No nearer direction: keep the pattern's own, turned with the hand.
        span.tether.start_rad + TAU * span.tether.turns * u0 + turn_rad
    };
    Fit {
        turn_rad,
        tether_start_rad: angle - TAU * span.tether.turns * u0,
    }
}

impl Span {
    /// A point or direction of stage coordinates in the plane's own
    /// (mirrored) coordinates, `[up, right]`: its projection onto the plane.
    pub fn in_plane(&self, v: Vec3) -> [f64; 2] {
        [v.dot(&self.up), v.dot(&self.right)]
    }

    /// This span with the start angles of `fit` in place of its own.
    pub fn with_fit(&self, fit: &Fit) -> Span {
        let hand = Curve::new(self.hand.rotors().iter().map(|r| Rotor {
            start_rad: r.start_rad + fit.turn_rad,
            ..*r
        }));
        let tether = Rotor {
            start_rad: fit.tether_start_rad,
            ..self.tether
        };
        let head = Curve::new(hand.rotors().iter().copied().chain([tether]));
        Span {
            hand,
            head,
            tether,
            fit: Some(*fit),
            ..self.clone()
        }
    }

    /// The tether's clock angle at phase 0, radians (after any join's fit).
    pub fn tether_start_rad(&self) -> f64 {
        self.tether.start_rad
    }
}
