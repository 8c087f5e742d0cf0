//! Collisions: the closest approach of two props while both play a pattern.
//!
//! Each prop is modelled as a capsule swept by a ball of the head's radius:
//! for a poi, around the segment from hand to head centre (the tether); for
//! a staff, around the whole rod, from the tail end to the head end. Two
//! props touch where their segments come closer than the sum of their head
//! radii; the heads themselves meet where the head centres do (both ends of
//! a staff count as heads). Within a section both props'
//! positions are sums of rotating terms of the same beat variable, so the
//! distances are sampled on the beat axis (64 samples per turn of the
//! fastest term, doubled for relative motion) and every sampled minimum is
//! refined by golden-section search to 1e-12 beats. Props at rest are not
//! checked (`docs/conventions.md`, "Check JSON": only while both move).

use crate::geom::Vec3;

use super::CheckSettings;
use super::kin::{sample_count, samples_needed};
use super::report::{PairFigures, Warning, WarningKind, When};
use super::search::{DipFinder, Extremes, Stretch, for_each_point, merge_touching};
use crate::model::{PropKind, Show};
use crate::motion::{Curve, PropMotion, Span};

/// Shortest distance between the segments `p1`-`q1` and `p2`-`q2`, metres
/// (C. Ericson, Real-Time Collision Detection, 2005, section 5.1.9).
pub fn segment_distance(p1: Vec3, q1: Vec3, p2: Vec3, q2: Vec3) -> f64 {
    let (d1, d2, r) = (q1 - p1, q2 - p2, p1 - p2);
    let (a, e, f) = (d1.dot(&d1), d2.dot(&d2), d2.dot(&r));
    let tiny = 1e-24;
    let (s, t);
    if a <= tiny && e <= tiny {
        return r.norm();
    }
    if a <= tiny {
        s = 0.0;
        t = (f / e).clamp(0.0, 1.0);
    } else {
        let c = d1.dot(&r);
        if e <= tiny {
            t = 0.0;
            s = (-c / a).clamp(0.0, 1.0);
        } else {
            let b = d1.dot(&d2);
            let denom = a * e - b * b;
            let s0 = if denom > 0.0 {
                ((b * f - c * e) / denom).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let t0 = (b * s0 + f) / e;
            if t0 < 0.0 {
                t = 0.0;
                s = (-c / a).clamp(0.0, 1.0);
            } else if t0 > 1.0 {
                t = 1.0;
                s = ((b - c) / a).clamp(0.0, 1.0);
            } else {
                s = s0;
                t = t0;
            }
        }
    }
    ((p1 + d1 * s) - (p2 + d2 * t)).norm()
}

/// A prop's capsule and heads, stage coordinates, at one instant.
struct Pose {
    /// Where the capsule's segment starts: a poi's hand, a staff's tail end.
    start: Vec3,
    /// The head (end) centre, where the segment ends.
    head: Vec3,
    /// True when `start` is a staff's tail end, a head too.
    start_is_head: bool,
}

impl Pose {
    /// The head centres: the head, and a staff's tail end.
    fn heads(&self) -> impl Iterator<Item = Vec3> + '_ {
        std::iter::once(self.head).chain(self.start_is_head.then_some(self.start))
    }
}

/// The pose `s` beats into `span`; `tail` is a staff's tail-end path (none
/// for a poi).
fn pose(span: &Span, tail: Option<&Curve>, s: f64) -> Pose {
    let u = span.phase(s);
    let start = match tail {
        Some(c) => c.point(u),
        None => span.hand.point(u),
    };
    Pose {
        start: span.to_stage(start),
        head: span.to_stage(span.head.point(u)),
        start_is_head: tail.is_some(),
    }
}

/// A staff's tail-end path in `span` (none for a poi).
fn tail_curve(show: &Show, motion: &PropMotion, span: &Span) -> Option<Curve> {
    let p = &show.props[motion.prop];
    (p.kind == PropKind::Staff).then(|| span.point_curve(-p.tail_m))
}

/// Fastest rotation of any term of a span's hand or head, turns per beat.
fn fastest_per_beat(span: &Span) -> f64 {
    let f = span
        .hand
        .rotors()
        .iter()
        .chain(span.head.rotors())
        .map(|r| r.turns.abs())
        .fold(0.0, f64::max);
    f * span.phase_per_beat().abs()
}

/// Sample intervals of a search over the section that spans `sa` and `sb`
/// share (a float, for budgets): twice the fastest term, for relative motion.
pub fn section_samples(sa: &Span, sb: &Span, settings: &CheckSettings) -> f64 {
    let rate = 2.0 * fastest_per_beat(sa).max(fastest_per_beat(sb));
    samples_needed(sa.beats(), rate, settings.samples_per_turn)
}

/// What a pair's pass finds.
#[derive(Clone, Debug, PartialEq)]
pub struct PairScan {
    /// The pair's closest approaches.
    pub figures: PairFigures,
    /// One collision warning per stretch of contact.
    pub warnings: Vec<Warning>,
}

/// The closest approach of props `a` and `b` (`a` before `b` in the file)
/// over every section in which both play a pattern.
pub fn scan_pair(
    show: &Show,
    a: &PropMotion,
    b: &PropMotion,
    settings: &CheckSettings,
) -> PairScan {
    let (pa, pb) = (&show.props[a.prop], &show.props[b.prop]);
    let contact = pa.head_radius_m + pb.head_radius_m;
    let mut heads = Extremes::default();
    let mut tethers = Extremes::default();
    // (start, end) in global beats; figure (closest tethers, closest heads).
    let mut touching: Vec<Stretch<(f64, f64)>> = Vec::new();
    for sa in &a.spans {
        let Some(sb) = b.spans.iter().find(|s| s.section == sa.section) else {
            continue;
        };
        let (x0, x1) = (sa.start_beat, sa.end_beat);
        let (ca, cb) = (tail_curve(show, a, sa), tail_curve(show, b, sb));
        let at = |x: f64| (pose(sa, ca.as_ref(), x - x0), pose(sb, cb.as_ref(), x - x0));
        let head_d = |x: f64| {
            let (pa, pb) = at(x);
            pa.heads()
                .flat_map(|ha| pb.heads().map(move |hb| (ha - hb).norm()))
                .fold(f64::INFINITY, f64::min)
        };
        let gap = |x: f64| {
            let (pa, pb) = at(x);
            segment_distance(pa.start, pa.head, pb.start, pb.head) - contact
        };
        let n = sample_count(section_samples(sa, sb, settings));
        let mut finder = DipFinder::new(&gap);
        for_each_point(&gap, x0, x1, n, &mut |x, v| {
            tethers.offer(v + contact, x);
            finder.push(x, v);
        });
        let dips = finder.finish();
        // The closest heads inside each stretch of contact.
        let mut head_min: Vec<f64> = dips.iter().map(|d| head_d(d.start)).collect();
        let mut k = 0;
        for_each_point(&head_d, x0, x1, n, &mut |x, v| {
            heads.offer(v, x);
            while k < dips.len() && dips[k].end < x {
                k += 1;
            }
            if k < dips.len() && dips[k].start <= x {
                head_min[k] = head_min[k].min(v);
            }
        });
        touching.extend(dips.iter().zip(head_min).map(|(d, h)| Stretch {
            start: d.start,
            end: d.end,
            figure: (d.worst + contact, h),
        }));
    }
    let when = |x: Option<(f64, f64)>| x.map(|(_, b)| When::at_beat(show, b));
    let (na, nb) = (&pa.name, &pb.name);
    let bodies = match (pa.kind, pb.kind) {
        (PropKind::Poi, PropKind::Poi) => "the tethers".to_string(),
        (ka, kb) => {
            let word = |k: PropKind| match k {
                PropKind::Poi => "tether",
                PropKind::Staff => "staff",
            };
            format!("{na}'s {} and {nb}'s {}", word(ka), word(kb))
        }
    };
    let warnings = merge_touching(touching, |p, q| (p.0.min(q.0), p.1.min(q.1)))
        .into_iter()
        .map(|s| {
            let dur = show.tempo.time_at_beat(s.end) - show.tempo.time_at_beat(s.start);
            let (t, h) = s.figure;
            let (value, message) = if h < contact {
                (
                    h,
                    format!(
                        "{na} and {nb}: the heads meet for {dur:.3} s (centres {h:.3} m apart at the closest, contact at {contact:.3} m)"
                    ),
                )
            } else {
                (
                    t,
                    format!(
                        "{na} and {nb}: {bodies} come within {t:.3} m for {dur:.3} s (contact at {contact:.3} m)"
                    ),
                )
            };
            Warning {
                kind: WarningKind::Collision,
                count: 1,
                bars: [0, 0],
                line: None,
                cue: None,
            each: Vec::new(),
            expected: None,
                prop: na.clone(),
                other_prop: Some(nb.clone()),
                at: When::at_beat(show, s.start),
                duration_s: Some(dur),
                value: Some(value),
                limit: Some(contact),
                unit: Some("m"),
                message,
            }
        })
        .collect();
    PairScan {
        figures: PairFigures {
            props: [na.clone(), nb.clone()],
            contact_m: contact,
            min_head_distance_m: heads.min.map(|m| m.0),
            min_head_distance_at: when(heads.min),
            min_tether_distance_m: tethers.min.map(|m| m.0),
            min_tether_distance_at: when(tethers.min),
        },
        warnings,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64, y: f64, z: f64) -> Vec3 {
        Vec3::new(x, y, z)
    }

    #[test]
    fn segment_distance_of_known_configurations() {
        // Skew lines: the x axis and a parallel to z at height 1 over x = 0.5.
        let d = segment_distance(
            v(0., 0., 0.),
            v(1., 0., 0.),
            v(0.5, 1., -1.),
            v(0.5, 1., 1.),
        );
        assert!((d - 1.0).abs() < 1e-15);
        // Crossing segments in one plane touch.
        let d = segment_distance(v(-1., 0., 0.), v(1., 0., 0.), v(0., -1., 0.), v(0., 1., 0.));
        assert_eq!(d, 0.0);
        // Closest points at the ends: (1,0,0) to (2,1,0) is sqrt 2.
        let d = segment_distance(v(0., 0., 0.), v(1., 0., 0.), v(2., 1., 0.), v(3., 1., 0.));
        assert!((d - 2f64.sqrt()).abs() < 1e-15);
        // Parallel, overlapping: 0.3 apart. Degenerate: point to segment.
        let d = segment_distance(
            v(0., 0., 0.),
            v(1., 0., 0.),
            v(0.5, 0.3, 0.),
            v(2., 0.3, 0.),
        );
        assert!((d - 0.3).abs() < 1e-15);
        let d = segment_distance(v(0., 2., 0.), v(0., 2., 0.), v(-1., 0., 0.), v(1., 0., 0.));
        assert!((d - 2.0).abs() < 1e-15);
    }

    #[test]
    fn segment_distance_is_the_minimum_over_both_segments() {
        // Against a brute-force grid over both segment parameters.
        let cases = [
            [
                v(0.1, 0.2, 0.3),
                v(1.0, -0.4, 0.2),
                v(0.5, 0.9, -0.3),
                v(-0.2, 0.1, 0.8),
            ],
            [
                v(0., 0., 0.),
                v(0.3, 1.0, 0.),
                v(0.2, 0.5, 0.1),
                v(0.8, 0.4, -0.6),
            ],
        ];
        for [p1, q1, p2, q2] in cases {
            let d = segment_distance(p1, q1, p2, q2);
            let mut best = f64::INFINITY;
            for i in 0..=400 {
                for j in 0..=400 {
                    let (s, t) = (i as f64 / 400.0, j as f64 / 400.0);
                    best = best.min(((p1 + (q1 - p1) * s) - (p2 + (q2 - p2) * t)).norm());
                }
            }
            assert!(d <= best + 1e-12 && best - d < 1e-4, "{d} vs {best}");
        }
    }
}
