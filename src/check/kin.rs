//! Kinematics for the checks: hand and prop-end position, velocity,
//! acceleration and jerk in stage coordinates against time, and the show cut
//! into pieces on which each prop's motion is smooth (one pattern, one
//! tempo) or at rest.
//!
//! A poi has one end, its head. A staff is a rigid rod held at the grip
//! (the hand) and has two: the head end, `tether_m` along the prop's
//! direction, which traces the pattern's head path, and the tail end,
//! `tail_m` the other way ([`crate::model::Prop::ends_m`]). The checks scan
//! every end with the same [`Kin`]: its `head` is the end being scanned.

use crate::geom::Vec3;

use crate::model::Show;
use crate::motion::{Curve, PropMotion, Span};

/// Position (m) and its first three time derivatives (m/s, m/s^2, m/s^3)
/// of a prop's hand and of one end of the prop, stage coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Kin {
    /// Hand: position, velocity, acceleration, jerk.
    pub hand: [Vec3; 4],
    /// The end scanned (a poi's head; a staff's head end or tail end):
    /// position, velocity, acceleration, jerk.
    pub head: [Vec3; 4],
}

/// Position and first three derivatives against phase u of a sum of rotating
/// terms, in the plane's own coordinates (metres per revolution^n).
pub fn jet3(curve: &Curve, u: f64) -> [[f64; 2]; 4] {
    curve.derivatives(u)
}

fn to_stage(span: &Span, j: [[f64; 2]; 4], rate: f64) -> [Vec3; 4] {
    let mut k = 1.0;
    let mut out = [
        span.to_stage(j[0]),
        Vec3::zeros(),
        Vec3::zeros(),
        Vec3::zeros(),
    ];
    for n in 1..4 {
        k *= rate;
        out[n] = span.to_stage_dir(j[n]) * k;
    }
    out
}

impl Kin {
    /// The state `s` beats into `span`, at a tempo of `beats_per_s`, with
    /// `end` (one of [`end_curves`]: `span.head` for the head end) as the
    /// end scanned.
    pub fn moving_end(span: &Span, end: &Curve, beats_per_s: f64, s: f64) -> Kin {
        let u = span.phase(s);
        let rate = span.phase_per_beat() * beats_per_s;
        Kin {
            hand: to_stage(span, jet3(&span.hand, u), rate),
            head: to_stage(span, jet3(end, u), rate),
        }
    }

    /// A prop at rest (hand still at `anchor`), scanning the end `along_m`
    /// metres from the grip along the prop's direction, which points straight
    /// down: the head end hangs below the anchor, a staff's tail end
    /// (`along_m < 0`) stands above it.
    pub fn resting_end(anchor: Vec3, along_m: f64) -> Kin {
        let z = Vec3::zeros();
        Kin {
            hand: [anchor, z, z, z],
            head: [anchor - Vec3::new(0.0, along_m, 0.0), z, z, z],
        }
    }
}

/// The paths of the prop's ends in `span`, in the order of `ends_m` (from
/// [`crate::model::Prop::ends_m`]: the head end first): the head end is the
/// span's own head path, any other end the point that far along the prop's
/// direction ([`Span::point_curve`]).
pub fn end_curves(span: &Span, ends_m: &[f64]) -> Vec<Curve> {
    ends_m
        .iter()
        .enumerate()
        .map(|(i, &along)| {
            if i == 0 {
                span.head.clone()
            } else {
                span.point_curve(along)
            }
        })
        .collect()
}

/// Where an end is called in messages: `head` for a poi's only end, `head
/// end` and `tail end` for a staff's.
pub fn end_name(ends: usize, i: usize) -> &'static str {
    match (ends, i) {
        (1, _) => "head",
        (_, 0) => "head end",
        _ => "tail end",
    }
}

/// A stretch of the show on which one prop's motion is smooth: one span at
/// one tempo, or at rest.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Piece {
    /// Global beat where it starts (0 = bar 1 beat 1).
    pub start_beat: f64,
    /// Global beat where it ends.
    pub end_beat: f64,
    /// Index into [`PropMotion::spans`], or `None` at rest.
    pub span: Option<usize>,
    /// Tempo on the piece, beats per second.
    pub beats_per_s: f64,
}

/// Global beat where the show ends (the end of the last section).
pub fn show_end_beat(show: &Show) -> f64 {
    let last = show.sections.iter().map(|s| s.last_bar).max().unwrap_or(0);
    show.tempo.beat_of_bar(last + 1)
}

/// The pieces of `motion` from bar 1 beat 1 to the end of the show, in
/// order, covering it without gaps: spans split at tempo changes, rest between.
pub fn pieces(show: &Show, motion: &PropMotion) -> Vec<Piece> {
    let end = show_end_beat(show);
    let changes: Vec<f64> = show.tempo.changes().map(|c| c.0).collect();
    let rest = |a: f64, b: f64| Piece {
        start_beat: a,
        end_beat: b,
        span: None,
        beats_per_s: show.tempo.bpm_at_beat(a) / 60.0,
    };
    let mut out = Vec::new();
    let mut cursor = 0.0;
    for (i, span) in motion.spans.iter().enumerate() {
        if span.start_beat > cursor {
            out.push(rest(cursor, span.start_beat));
        }
        let mut cuts = vec![span.start_beat];
        cuts.extend(
            changes
                .iter()
                .copied()
                .filter(|&b| b > span.start_beat && b < span.end_beat),
        );
        cuts.push(span.end_beat);
        for w in cuts.windows(2) {
            out.push(Piece {
                start_beat: w[0],
                end_beat: w[1],
                span: Some(i),
                beats_per_s: show.tempo.bpm_at_beat(w[0]) / 60.0,
            });
        }
        cursor = span.end_beat;
    }
    if end > cursor {
        out.push(rest(cursor, end));
    }
    out
}

/// Sample intervals for a search over `beats` beats of a curve whose finest
/// detail turns `turns_per_beat` times per beat, at `per_turn` samples per
/// turn (at least 16), as a float so that budgets can see huge counts.
pub fn samples_needed(beats: f64, turns_per_beat: f64, per_turn: f64) -> f64 {
    (beats * turns_per_beat.max(1.0) * per_turn)
        .ceil()
        .max(16.0)
}

/// A count from [`samples_needed`] as an integer (16 if it is not finite;
/// callers check the budget first).
pub fn sample_count(samples: f64) -> usize {
    if samples.is_finite() && samples < 1e15 {
        samples as usize
    } else {
        16
    }
}

/// Turns per beat of the finest detail of a span's head path (pairs of terms).
pub fn span_detail_per_beat(span: &Span) -> f64 {
    span.head.finest_turns() * span.phase_per_beat().abs()
}
