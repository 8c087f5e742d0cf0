//! Reach and stage space: how far the heads get from their anchors and from
//! the performer's centre line, and the floor rectangle the show sweeps.
//!
//! The centre line is the vertical through the mean of the props' anchors
//! (x and z). The swept rectangle covers every hand and every head (grown by
//! the head radius) over the show, rest included; the clear space adds a
//! margin on every side.

use crate::geom::Vec3;

use super::kin::Kin;
use super::report::{Rect, Stage};
use crate::model::Show;

/// Margin added around the swept rectangle for the clear space, metres: our
/// own choice (a step and an arm's length of slack for the performer), not a
/// standard; venues set their own distances.
pub const CLEAR_MARGIN_M: f64 = 0.5;

/// The performer's centre line: mean x and z of the props' anchors, metres.
pub fn centre_line(show: &Show) -> [f64; 2] {
    let n = show.props.len().max(1) as f64;
    let sx: f64 = show.props.iter().map(|p| p.anchor_m.x).sum();
    let sz: f64 = show.props.iter().map(|p| p.anchor_m.z).sum();
    [sx / n, sz / n]
}

/// Squared distance of the head from `anchor` (m^2), and its time derivative.
pub fn anchor_distance_sq(anchor: Vec3, k: &Kin) -> (f64, f64) {
    let d = k.head[0] - anchor;
    (d.norm_squared(), 2.0 * d.dot(&k.head[1]))
}

/// Squared horizontal distance of the head from the vertical line through
/// `centre` = (x, z) (m^2), and its time derivative.
pub fn centre_distance_sq(centre: [f64; 2], k: &Kin) -> (f64, f64) {
    let (dx, dz) = (k.head[0].x - centre[0], k.head[0].z - centre[1]);
    (
        dx * dx + dz * dz,
        2.0 * (dx * k.head[1].x + dz * k.head[1].z),
    )
}

/// A box in stage coordinates, metres, grown point by point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    /// Smallest x, y, z seen.
    pub min: Vec3,
    /// Largest x, y, z seen.
    pub max: Vec3,
}

impl Default for Bounds {
    fn default() -> Self {
        Bounds {
            min: Vec3::repeat(f64::INFINITY),
            max: Vec3::repeat(f64::NEG_INFINITY),
        }
    }
}

impl Bounds {
    /// Grows the box to hold `lo` and `hi` (per coordinate).
    pub fn include(&mut self, lo: Vec3, hi: Vec3) {
        self.min = self.min.inf(&lo);
        self.max = self.max.sup(&hi);
    }

    /// Grows the box to hold `other`.
    pub fn merge(&mut self, other: &Bounds) {
        self.include(other.min, other.max);
    }
}

/// The stage space for the boxes swept by hands (`hands`) and head surfaces
/// (`heads`), with `margin_m` of clear space around.
pub fn stage(centre: [f64; 2], hands: &Bounds, heads: &Bounds, margin_m: f64) -> Stage {
    let mut all = *hands;
    all.merge(heads);
    let swept = Rect::new(all.min.x, all.max.x, all.min.z, all.max.z);
    Stage {
        centre_line_m: centre,
        swept_m: swept,
        clear_space_m: swept.grown(margin_m),
        margin_m,
        lowest_head_m: heads.min.y,
        highest_head_m: heads.max.y,
    }
}
