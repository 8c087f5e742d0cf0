//! Motion: where every hand and head is at any time, in closed form.
//!
//! For each prop, [`PropMotion`] is a list of [`Span`]s, one per section in
//! which the prop plays a pattern. A span maps the beats elapsed since its
//! section started to pattern phase, and phase to hand and head positions
//! through the sums of rotating terms in [`curve`]. Outside every span the
//! prop rests: hand at the anchor, head hanging straight down.

pub mod curve;
pub mod join;

use std::f64::consts::{PI, TAU};

use crate::geom::Vec3;

pub use curve::{Curve, Jet, Rotor};

use crate::model::{Join, Plane, Prop, Show, TempoMap};
use crate::num;

/// One prop playing one pattern through one section.
#[derive(Clone, Debug)]
pub struct Span {
    /// Index into [`Show::sections`].
    pub section: usize,
    /// Index into [`Show::patterns`].
    pub pattern: usize,
    /// Global beat where the section starts (0 = bar 1 beat 1).
    pub start_beat: f64,
    /// Global beat where the section ends.
    pub end_beat: f64,
    /// Seconds where the section starts.
    pub start_s: f64,
    /// Seconds where the section ends.
    pub end_s: f64,
    /// The plane of the pattern.
    pub plane: Plane,
    /// True where the placement mirrors the clock.
    pub mirror: bool,
    anchor: Vec3,
    up: Vec3,
    right: Vec3,
    /// Pattern phase per beat (signed: negative when reversed).
    phase_per_beat: f64,
    delay_beats: f64,
    /// The hand's path in the plane.
    pub hand: Curve,
    /// The head's path in the plane (hand plus tether).
    pub head: Curve,
    /// The tether (or rod) term: grip to head end.
    tether: Rotor,
    /// The start angles solved for a continuous join (`join = "continue"`),
    /// in place of the pattern's; `None` where the section restarts.
    pub fit: Option<join::Fit>,
}

impl Span {
    /// Beats in the section.
    pub fn beats(&self) -> f64 {
        self.end_beat - self.start_beat
    }

    /// Pattern phase (hand revolutions) at `s` beats into the section.
    pub fn phase(&self, s: f64) -> f64 {
        (s - self.delay_beats) * self.phase_per_beat
    }

    /// The delay of the placement, beats: phase 0 falls this many beats
    /// into the section.
    pub fn delay_beats(&self) -> f64 {
        self.delay_beats
    }

    /// The tether (or rod) term: the prop's direction from the grip turns
    /// with it (its radius is the tether or rod length).
    pub fn tether(&self) -> Rotor {
        self.tether
    }

    /// d(phase)/d(beat), revolutions per beat (negative when reversed).
    pub fn phase_per_beat(&self) -> f64 {
        self.phase_per_beat
    }

    /// Head position and derivatives against beats `s` into the section,
    /// in the plane's own (mirrored) coordinates: metres, m/beat, m/beat^2.
    pub fn head_jet(&self, s: f64) -> Jet {
        scale_jet(self.head.jet(self.phase(s)), self.phase_per_beat)
    }

    /// Hand position and derivatives against beats into the section.
    pub fn hand_jet(&self, s: f64) -> Jet {
        scale_jet(self.hand.jet(self.phase(s)), self.phase_per_beat)
    }

    /// A point of the plane's own coordinates in stage coordinates, metres.
    pub fn to_stage(&self, p: [f64; 2]) -> Vec3 {
        self.anchor + self.to_stage_dir(p)
    }

    /// A direction of the plane's own coordinates in stage coordinates.
    pub fn to_stage_dir(&self, p: [f64; 2]) -> Vec3 {
        self.up * p[0] + self.right * p[1]
    }

    /// The anchor, stage coordinates, metres.
    pub fn anchor(&self) -> Vec3 {
        self.anchor
    }

    /// Unit vector of the prop's direction (grip to head end) at `s` beats
    /// into the section, in the plane's own (mirrored) coordinates.
    pub fn direction(&self, s: f64) -> [f64; 2] {
        let u = self.phase(s);
        let (sn, cs) = num::sin_cos(self.tether.start_rad + TAU * self.tether.turns * u);
        [cs, sn]
    }

    /// The path of the point `along_m` metres from the grip along the prop's
    /// direction (negative: toward a staff's tail end), as a sum of rotating
    /// terms in phase: the hand's terms plus a term of radius `|along_m|`.
    pub fn point_curve(&self, along_m: f64) -> Curve {
        let flip = if along_m < 0.0 { PI } else { 0.0 };
        let term = Rotor {
            radius_m: along_m.abs(),
            turns: self.tether.turns,
            start_rad: self.tether.start_rad + flip,
        };
        Curve::new(self.hand.rotors().iter().copied().chain([term]))
    }

    /// A point of the plane's own coordinates as `[right, up]` on the plane's
    /// unmirrored clock, metres from the anchor (where pictures are placed).
    pub fn unmirrored(&self, p: [f64; 2]) -> [f64; 2] {
        if self.mirror {
            [-p[1], p[0]]
        } else {
            [p[1], p[0]]
        }
    }
}

fn scale_jet(j: Jet, k: f64) -> Jet {
    Jet {
        p: j.p,
        d1: [j.d1[0] * k, j.d1[1] * k],
        d2: [j.d2[0] * k * k, j.d2[1] * k * k],
    }
}

/// Where a prop's hand and head are, and how they move, at one instant.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct State {
    /// Hand position, stage coordinates, metres.
    pub hand_m: Vec3,
    /// Hand velocity, m/s.
    pub hand_vel: Vec3,
    /// Hand acceleration, m/s^2.
    pub hand_acc: Vec3,
    /// Head position, stage coordinates, metres.
    pub head_m: Vec3,
    /// Head velocity, m/s.
    pub head_vel: Vec3,
    /// Head acceleration, m/s^2.
    pub head_acc: Vec3,
    /// Unit vector from the grip toward the head end, stage coordinates.
    pub dir: Vec3,
    /// Index into [`PropMotion::spans`], or `None` while resting.
    pub span: Option<usize>,
}

/// The whole motion of one prop through the show.
#[derive(Clone, Debug)]
pub struct PropMotion {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// The sections the prop plays in, in time order.
    pub spans: Vec<Span>,
    anchor: Vec3,
    tether_m: f64,
}

impl PropMotion {
    /// The motion of prop `prop` of `show`.
    pub fn new(show: &Show, prop: usize) -> Self {
        let p = &show.props[prop];
        let mut spans: Vec<Span> = Vec::new();
        for (i, sec) in show.sections.iter().enumerate() {
            let Some(pl) = sec.placements.get(prop).copied().flatten() else {
                continue;
            };
            let pat = &show.patterns[pl.pattern];
            let start_beat = show.tempo.beat_of_bar(sec.first_bar);
            let end_beat = show.tempo.beat_of_bar(sec.last_bar + 1);
            let hand_rotors: Vec<Rotor> = pat
                .hand_for(p)
                .iter()
                .map(|t| Rotor {
                    radius_m: t.radius_m,
                    turns: t.turns,
                    start_rad: num::rad(t.start_deg),
                })
                .collect();
            let tether = Rotor {
                radius_m: p.tether_m,
                turns: pat.head_turns,
                start_rad: num::rad(pat.head_start_deg),
            };
            let right = if pl.mirror {
                -pat.plane.right()
            } else {
                pat.plane.right()
            };
            let dir = if pat.reverse { -1.0 } else { 1.0 };
            let span = Span {
                section: i,
                pattern: pl.pattern,
                start_beat,
                end_beat,
                start_s: show.tempo.time_at_beat(start_beat),
                end_s: show.tempo.time_at_beat(end_beat),
                plane: pat.plane,
                mirror: pl.mirror,
                anchor: p.anchor_m,
                up: pat.plane.up(),
                right,
                phase_per_beat: dir / pat.beats,
                delay_beats: pl.delay_beats,
                hand: Curve::new(hand_rotors.iter().copied()),
                head: Curve::new(hand_rotors.iter().copied().chain([tether])),
                tether,
                fit: None,
            };
            let span = if sec.join == Join::Continue {
                let before = before_beat(&spans, p, start_beat);
                let fit = join::solve(&span, &before);
                span.with_fit(&fit)
            } else {
                span
            };
            spans.push(span);
        }
        PropMotion {
            prop,
            spans,
            anchor: p.anchor_m,
            tether_m: p.tether_m,
        }
    }

    /// The span playing at global beat `beat` (sections are half-open:
    /// a boundary belongs to the section that starts there).
    pub fn span_at_beat(&self, beat: f64) -> Option<usize> {
        let i = self.spans.partition_point(|s| s.start_beat <= beat);
        let i = i.checked_sub(1)?;
        (beat < self.spans[i].end_beat).then_some(i)
    }

    /// Where the point `along_m` metres from the grip along the prop (a
    /// staff's tail half negative) is while the prop rests: the hand at the
    /// anchor and the prop pointing straight down from it.
    pub fn rest_point(&self, along_m: f64) -> Vec3 {
        self.anchor - Vec3::new(0.0, along_m, 0.0)
    }

    /// Where the prop is just before global beat `beat`: at the end of the
    /// span that ends there, or at rest.
    pub fn before(&self, show: &Show, beat: f64) -> join::Before {
        let i = self.spans.partition_point(|s| s.end_beat <= beat);
        before_beat(&self.spans[..i], &show.props[self.prop], beat)
    }

    /// The state at `t` seconds from frame 0.
    pub fn state_at(&self, tempo: &TempoMap, t: f64) -> State {
        let beat = tempo.beat_at_time(t);
        self.state_at_beat(tempo, beat)
    }

    /// The state at global beat `beat`.
    pub fn state_at_beat(&self, tempo: &TempoMap, beat: f64) -> State {
        match self.span_at_beat(beat) {
            Some(i) => {
                let span = &self.spans[i];
                let s = beat - span.start_beat;
                let beats_per_s = tempo.bpm_at_beat(beat) / 60.0;
                let hand = span.hand_jet(s);
                let head = span.head_jet(s);
                let k2 = beats_per_s * beats_per_s;
                State {
                    hand_m: span.to_stage(hand.p),
                    hand_vel: span.to_stage_dir(hand.d1) * beats_per_s,
                    hand_acc: span.to_stage_dir(hand.d2) * k2,
                    head_m: span.to_stage(head.p),
                    head_vel: span.to_stage_dir(head.d1) * beats_per_s,
                    head_acc: span.to_stage_dir(head.d2) * k2,
                    dir: span.to_stage_dir(span.direction(s)),
                    span: Some(i),
                }
            }
            None => State {
                hand_m: self.anchor,
                hand_vel: Vec3::zeros(),
                hand_acc: Vec3::zeros(),
                head_m: self.rest_point(self.tether_m),
                head_vel: Vec3::zeros(),
                head_acc: Vec3::zeros(),
                dir: Vec3::new(0.0, -1.0, 0.0),
                span: None,
            },
        }
    }
}

/// Where the prop of `spans` (all before `beat`) is just before global beat
/// `beat`: the end of the span that ends there, or at rest.
fn before_beat(spans: &[Span], prop: &Prop, beat: f64) -> join::Before {
    match spans.last().filter(|s| s.end_beat == beat) {
        Some(s) => {
            let u = s.phase(s.beats());
            join::Before {
                hand_m: s.to_stage(s.hand.point(u)),
                head_m: s.to_stage(s.head.point(u)),
            }
        }
        None => join::Before {
            hand_m: prop.anchor_m,
            head_m: prop.anchor_m - Vec3::new(0.0, prop.tether_m, 0.0),
        },
    }
}

/// The motion of every prop of a show, in prop order.
pub fn simulate(show: &Show) -> Vec<PropMotion> {
    (0..show.props.len())
        .map(|i| PropMotion::new(show, i))
        .collect()
}
