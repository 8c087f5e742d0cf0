//! Events: tips, inner points, stalls, clock angles, beats and bars.
//!
//! Geometric events are functions of pattern phase, so they are found per
//! span on the beat axis, then mapped to time through the tempo map. Each is
//! a sign change of an analytic derivative: d|p|^2/ds for tips and inner
//! points, d|v|^2/ds for stalls, the cross product of the head's direction
//! with the target ray for angles. Sign changes are bracketed by sampling
//! (64 samples per turn of the fastest relative rotation) and refined by
//! Brent's method. Events at a section boundary are not reported.

mod scan;

use crate::geom::Vec3;

pub use scan::sign_changes;

use crate::model::{EventKind, Show};
use crate::motion::{PropMotion, Span};
use crate::num;

/// Samples per turn of the fastest relative rotation in a span.
pub const SAMPLES_PER_TURN: f64 = 64.0;
/// A stall is a speed minimum below this fraction of the section's mean speed.
pub const STALL_FRACTION: f64 = 0.10;
/// Events closer than this to a section boundary, in beats, are not reported.
const BOUNDARY_BEATS: f64 = 1e-9;
/// Width in beats to which every root is refined.
const ROOT_TOL_BEATS: f64 = 1e-12;

/// One event of one prop.
#[derive(Clone, Debug, PartialEq)]
pub struct Event {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// What happened.
    pub kind: EventKind,
    /// Global beat (0 = bar 1 beat 1), fractional.
    pub beat: f64,
    /// Seconds from frame 0.
    pub time_s: f64,
    /// Head position, stage coordinates, metres.
    pub position_m: Vec3,
    /// Head speed, m/s.
    pub speed_m_s: f64,
    /// With [`EventKind::Angle`]: the clock angle passed, degrees.
    pub angle_deg: Option<f64>,
}

/// Path length, duration and mean head speed of a span.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SpanStats {
    /// Length of the head's path, metres.
    pub path_length_m: f64,
    /// Duration, seconds.
    pub duration_s: f64,
    /// path length / duration, m/s.
    pub mean_speed_m_s: f64,
}

/// Every event of every prop in `show`, sorted by time (then prop, kind).
pub fn find_events(show: &Show, motions: &[PropMotion]) -> Vec<Event> {
    let mut all = Vec::new();
    for m in motions {
        let angles = cue_angles(show, m.prop);
        for i in 0..m.spans.len() {
            all.extend(span_events(show, m, i, &angles));
        }
        all.extend(beat_events(show, m, EventKind::Beat));
        all.extend(beat_events(show, m, EventKind::Bar));
    }
    sort_events(&mut all);
    all
}

/// Sorts events by time, then prop, kind and angle.
pub fn sort_events(events: &mut [Event]) {
    events.sort_by(|a, b| {
        a.time_s
            .total_cmp(&b.time_s)
            .then(a.prop.cmp(&b.prop))
            .then(a.kind.cmp(&b.kind))
            .then(
                a.angle_deg
                    .unwrap_or(0.0)
                    .total_cmp(&b.angle_deg.unwrap_or(0.0)),
            )
    });
}

/// The distinct clock angles that cues of prop `prop` are anchored to.
pub fn cue_angles(show: &Show, prop: usize) -> Vec<f64> {
    let mut angles: Vec<f64> = show
        .cues
        .iter()
        .filter(|c| c.prop == prop)
        .filter_map(|c| c.steps())
        .filter(|s| s.at == EventKind::Angle)
        .filter_map(|s| s.angle_deg)
        .collect();
    angles.sort_by(f64::total_cmp);
    angles.dedup();
    angles
}

/// Number of sample intervals for a span's sign-change search.
fn sample_count(span: &Span) -> usize {
    let turns = span.beats() * span.phase_per_beat().abs() * span.head.finest_turns();
    ((turns * SAMPLES_PER_TURN).ceil() as usize).max(16)
}

fn dot(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}

/// Beats into the span of every strict local minimum of head speed.
fn speed_minima(span: &Span, n: usize) -> Vec<f64> {
    if span.head.has_constant_speed() {
        return Vec::new();
    }
    let f = |s: f64| {
        let j = span.head_jet(s);
        dot(j.d1, j.d2)
    };
    sign_changes(f, 0.0, span.beats(), n, ROOT_TOL_BEATS)
        .into_iter()
        .filter(|r| r.rising)
        .map(|r| r.at)
        .collect()
}

/// Length of the head's path over `[0, beats]` of the span, metres, by
/// Gauss-Legendre quadrature split at the speed minima (where a zero point
/// puts a kink in the speed).
fn path_length(span: &Span, n: usize, minima: &[f64]) -> f64 {
    let total = span.beats();
    let mut cuts: Vec<f64> = (0..=n).map(|i| total * i as f64 / n as f64).collect();
    cuts.extend(minima.iter().copied());
    cuts.sort_by(f64::total_cmp);
    cuts.windows(2)
        .map(|w| {
            num::gauss8(w[0], w[1], |s| {
                let d = span.head_jet(s).d1;
                d[0].hypot(d[1])
            })
        })
        .sum()
}

/// Path length, duration and mean speed of span `i` of `motion`.
pub fn span_stats(motion: &PropMotion, i: usize) -> SpanStats {
    let span = &motion.spans[i];
    let n = sample_count(span);
    let minima = speed_minima(span, n);
    stats_from(span, n, &minima)
}

fn stats_from(span: &Span, n: usize, minima: &[f64]) -> SpanStats {
    let path_length_m = path_length(span, n, minima);
    let duration_s = span.end_s - span.start_s;
    SpanStats {
        path_length_m,
        duration_s,
        mean_speed_m_s: path_length_m / duration_s,
    }
}

/// The geometric events (tips, inner points, stalls, and angles in
/// `angles_deg`) of span `i` of `motion`, in no particular order.
pub fn span_events(show: &Show, motion: &PropMotion, i: usize, angles_deg: &[f64]) -> Vec<Event> {
    let span = &motion.spans[i];
    let n = sample_count(span);
    let total = span.beats();
    let inside = |s: f64| s > BOUNDARY_BEATS && s < total - BOUNDARY_BEATS;
    let make = |s: f64, kind: EventKind, angle_deg: Option<f64>| {
        event_at(show, motion, span.start_beat + s, kind, angle_deg)
    };
    let mut out = Vec::new();

    if !span.head.has_constant_distance() {
        let f = |s: f64| {
            let j = span.head_jet(s);
            dot(j.p, j.d1)
        };
        for r in sign_changes(f, 0.0, total, n, ROOT_TOL_BEATS) {
            if inside(r.at) {
                let kind = if r.rising {
                    EventKind::Inner
                } else {
                    EventKind::Tip
                };
                out.push(make(r.at, kind, None));
            }
        }
    }

    let minima = speed_minima(span, n);
    if !minima.is_empty() {
        let stats = stats_from(span, n, &minima);
        let limit = STALL_FRACTION * stats.mean_speed_m_s;
        for &s in minima.iter().filter(|&&s| inside(s)) {
            let e = make(s, EventKind::Stall, None);
            if e.speed_m_s < limit {
                out.push(e);
            }
        }
    }

    for &angle in angles_deg {
        let (sa, ca) = num::sin_cos(num::rad(angle));
        let f = |s: f64| {
            let p = span.head_jet(s).p;
            p[1] * ca - p[0] * sa
        };
        for r in sign_changes(f, 0.0, total, n, ROOT_TOL_BEATS) {
            let p = span.head_jet(r.at).p;
            let along = p[0] * ca + p[1] * sa;
            let scale = span.head.rotors().iter().map(|t| t.radius_m).sum::<f64>();
            if inside(r.at) && along > 1e-9 * scale {
                out.push(make(r.at, EventKind::Angle, Some(angle)));
            }
        }
    }
    out
}

/// Every beat (or bar) start of the show as an event of `motion`'s prop,
/// from bar 1 beat 1 (included) to the end of the last section (excluded).
pub fn beat_events(show: &Show, motion: &PropMotion, kind: EventKind) -> Vec<Event> {
    let step = match kind {
        EventKind::Bar => f64::from(show.tempo.beats_per_bar()),
        _ => 1.0,
    };
    let last_bar = show.sections.iter().map(|s| s.last_bar).max().unwrap_or(0);
    let end = show.tempo.beat_of_bar(last_bar + 1);
    let count = (end / step).ceil() as u64;
    (0..count)
        .map(|k| event_at(show, motion, k as f64 * step, kind, None))
        .collect()
}

/// The event of `kind` at global beat `beat`, with the head's position and speed.
fn event_at(
    show: &Show,
    motion: &PropMotion,
    beat: f64,
    kind: EventKind,
    angle_deg: Option<f64>,
) -> Event {
    let state = motion.state_at_beat(&show.tempo, beat);
    Event {
        prop: motion.prop,
        kind,
        beat,
        time_s: show.tempo.time_at_beat(beat),
        position_m: state.head_m,
        speed_m_s: state.head_vel.norm(),
        angle_deg,
    }
}

/// The clock angle of a stage point about a span's anchor, in the span's
/// (possibly mirrored) plane, degrees in [0, 360).
pub fn clock_angle_deg(p_plane: [f64; 2]) -> f64 {
    let a = num::deg(num::atan2(p_plane[1], p_plane[0]));
    if a < 0.0 { a + 360.0 } else { a }
}
