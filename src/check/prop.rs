//! One pass over one prop's whole show: tension, speed, acceleration,
//! spin rates, reach and swept space, with slack and spin-rate warnings.
//! Every end of the prop is scanned: a poi's head, a staff's head end and
//! tail end (the figures are the worst over the ends; see [`scan_prop`]).
//!
//! Each smooth piece (one pattern at one tempo) is sampled at
//! `samples_per_turn` samples per turn of the head path's fastest relative
//! rotation (64 by default), and every extremum is refined by Brent's method
//! on the analytic time derivative to 1e-12 beats, so the reported figures
//! are exact to rounding wherever the extremum is bracketed by the samples.
//! Two extrema closer together than one sample step could share a bracket
//! and hide each other; the samples themselves still bound the figure.

use crate::geom::Vec3;

use super::CheckSettings;
use super::kin::{
    Kin, Piece, end_curves, pieces, sample_count, samples_needed, span_detail_per_beat,
};
use super::reach::{Bounds, anchor_distance_sq, centre_distance_sq};
use super::report::{EndFigures, PropFigures, Warning, WarningKind, When};
use super::search::{
    DipFinder, Extremes, Quantity, Stretch, for_each_point, merge_touching, scan_extremes,
};
use super::spin::{hand_turns_per_s, head_turns_per_s};
use super::tension::{G0, tension_n};
use crate::model::{PropKind, Show};
use crate::motion::{PropMotion, Span};

const Q_TENSION: usize = 0;
const Q_SPEED: usize = 1;
const Q_ACC: usize = 2;
const Q_ANCHOR: usize = 3;
const Q_CENTRE: usize = 4;
const Q_HEAD: usize = 5;
const Q_HAND: usize = 8;
const N_Q: usize = 11;

/// Sample intervals of a search over `piece` of `span` (a float, for budgets).
pub fn piece_samples(span: &Span, piece: &Piece, settings: &CheckSettings) -> f64 {
    samples_needed(
        piece.end_beat - piece.start_beat,
        span_detail_per_beat(span),
        settings.samples_per_turn,
    )
}

/// What one prop's pass finds.
#[derive(Clone, Debug, PartialEq)]
pub struct PropScan {
    /// The prop's figures (`peak_current_a` left empty).
    pub figures: PropFigures,
    /// Box swept by the hand, stage coordinates, metres.
    pub hands: Bounds,
    /// Box swept by the head's surface (centre grown by the head radius).
    pub heads: Bounds,
    /// Slack and spin-rate warnings, in time order per kind.
    pub warnings: Vec<Warning>,
}

/// The pass over `motion` (one prop of `show`); `centre` is the centre line.
///
/// Every end of the prop is scanned ([`crate::model::Prop::ends_m`]): a
/// poi's head, or a staff's head end and tail end. The figures report the
/// worst over the ends; a staff's figures also list each end's own. For a
/// staff the "tension" is the axial force the rod carries at each end's
/// weight (negative: the rod pushes), which a rod can do: a staff is never
/// slack.
pub fn scan_prop(
    show: &Show,
    motion: &PropMotion,
    settings: &CheckSettings,
    centre: [f64; 2],
) -> PropScan {
    let prop = &show.props[motion.prop];
    let staff = prop.kind == PropKind::Staff;
    let ends = prop.ends_m();
    let mass = prop.head_mass_kg;
    let anchor = prop.anchor_m;
    let q_tension = |k: &Kin| tension_n(mass, k);
    let q_speed = |k: &Kin| (k.head[1].norm_squared(), 2.0 * k.head[1].dot(&k.head[2]));
    let q_acc = |k: &Kin| (k.head[2].norm_squared(), 2.0 * k.head[2].dot(&k.head[3]));
    let q_anchor = |k: &Kin| anchor_distance_sq(anchor, k);
    let q_centre = |k: &Kin| centre_distance_sq(centre, k);
    let head_x = |k: &Kin| (k.head[0].x, k.head[1].x);
    let head_y = |k: &Kin| (k.head[0].y, k.head[1].y);
    let head_z = |k: &Kin| (k.head[0].z, k.head[1].z);
    let hand_x = |k: &Kin| (k.hand[0].x, k.hand[1].x);
    let hand_y = |k: &Kin| (k.hand[0].y, k.hand[1].y);
    let hand_z = |k: &Kin| (k.hand[0].z, k.hand[1].z);
    let quantities: [Quantity<'_, Kin>; N_Q] = [
        &q_tension, &q_speed, &q_acc, &q_anchor, &q_centre, &head_x, &head_y, &head_z, &hand_x,
        &hand_y, &hand_z,
    ];

    // Extremes per end, in the order of `ends`.
    let mut per_end = vec![[Extremes::default(); N_Q]; ends.len()];
    let mut slack: Vec<Stretch<(f64, f64)>> = Vec::new();
    let mut fast_hand: Vec<Stretch<f64>> = Vec::new();
    let mut fast_head: Vec<Stretch<f64>> = Vec::new();
    let (mut hand_rate, mut head_rate) = (0.0f64, 0.0f64);

    for piece in pieces(show, motion) {
        let (a, b) = (piece.start_beat, piece.end_beat);
        let Some(i) = piece.span else {
            for (total, &along) in per_end.iter_mut().zip(&ends) {
                let k = Kin::resting_end(anchor, along);
                for (q, e) in quantities.iter().zip(total.iter_mut()) {
                    e.offer(q(&k).0, a);
                }
            }
            continue;
        };
        let span = &motion.spans[i];
        let bps = piece.beats_per_s;
        let n = sample_count(piece_samples(span, &piece, settings));
        for (total, curve) in per_end.iter_mut().zip(end_curves(span, &ends)) {
            let eval = |x: f64| Kin::moving_end(span, &curve, bps, x - span.start_beat);
            let mut ext = [Extremes::default(); N_Q];
            scan_extremes(eval, a, b, n, 1.0 / bps, &quantities, &mut ext);
            // A rod pushes as well as pulls: only a poi's tether goes slack.
            if !staff && ext[Q_TENSION].min.is_some_and(|m| m.0 < 0.0) {
                let f = |x: f64| tension_n(mass, &eval(x)).0;
                let mut finder = DipFinder::new(&f);
                for_each_point(&f, a, b, n, &mut |x, v| finder.push(x, v));
                slack.extend(finder.finish().into_iter().map(|d| Stretch {
                    start: d.start,
                    end: d.end,
                    figure: (d.worst, d.worst_at),
                }));
            }
            for (e, x) in total.iter_mut().zip(&ext) {
                e.merge(x);
            }
        }
        let (rh, rt) = (
            hand_turns_per_s(span, bps),
            head_turns_per_s(show, span, bps),
        );
        hand_rate = hand_rate.max(rh);
        head_rate = head_rate.max(rt);
        let stretch = |r| Stretch {
            start: a,
            end: b,
            figure: r,
        };
        if rh > settings.spin_limit_turns_per_s {
            fast_hand.push(stretch(rh));
        }
        if rt > settings.spin_limit_turns_per_s {
            fast_head.push(stretch(rt));
        }
    }
    // The worst over the ends (ties keep the head end's).
    let mut total = per_end[0];
    for other in &per_end[1..] {
        for (e, x) in total.iter_mut().zip(other) {
            e.merge(x);
        }
    }

    let name = &prop.name;
    let when = |x: Option<(f64, f64)>| x.map(|(_, b)| When::at_beat(show, b));
    let seconds = |s: f64, e: f64| show.tempo.time_at_beat(e) - show.tempo.time_at_beat(s);
    let weight = mass * G0;
    let mut warnings = Vec::new();
    let slack = merge_touching(slack, |p, q| if q.0 < p.0 { q } else { p });
    let mut slack_s = 0.0;
    for s in &slack {
        let dur = seconds(s.start, s.end);
        slack_s += dur;
        let (t, at) = s.figure;
        warnings.push(Warning {
            kind: WarningKind::Slack,
            prop: name.clone(),
            other_prop: None,
            at: When::at_beat(show, s.start),
            duration_s: Some(dur),
            value: Some(t),
            limit: Some(0.0),
            unit: Some("N"),
            message: format!(
                "{name}: the tether goes slack for {dur:.3} s; the tension the path needs falls to {t:.3} N ({:.2} x the head's weight) at {}",
                t / weight,
                When::at_beat(show, at)
            ),
            ..Warning::UNGATHERED
        });
    }
    let turning = if staff { "staff" } else { "tether" };
    for (what, list) in [("hand", fast_hand), (turning, fast_head)] {
        for s in merge_touching(list, f64::max) {
            let dur = seconds(s.start, s.end);
            warnings.push(Warning {
                kind: WarningKind::SpinRate,
                prop: name.clone(),
                other_prop: None,
                at: When::at_beat(show, s.start),
                duration_s: Some(dur),
                value: Some(s.figure),
                limit: Some(settings.spin_limit_turns_per_s),
                unit: Some("turns/s"),
                message: format!(
                    "{name}: the {what} turns {:.2} times per second for {dur:.3} s, beyond the {} turns/s people commonly sustain",
                    s.figure, settings.spin_limit_turns_per_s
                ),
                ..Warning::UNGATHERED
            });
        }
    }

    let max = |q: usize| total[q].max.map_or(0.0, |m| m.0);
    let min = |q: usize| total[q].min.map_or(0.0, |m| m.0);
    let r = prop.head_radius_m;
    let axis = |first: usize| {
        let lo = Vec3::new(min(first), min(first + 1), min(first + 2));
        let hi = Vec3::new(max(first), max(first + 1), max(first + 2));
        (lo, hi)
    };
    let (head_lo, head_hi) = axis(Q_HEAD);
    let (hand_lo, hand_hi) = axis(Q_HAND);
    let mut heads = Bounds::default();
    heads.include(head_lo.add_scalar(-r), head_hi.add_scalar(r));
    let mut hands = Bounds::default();
    hands.include(hand_lo, hand_hi);

    let end_figures = if staff {
        per_end
            .iter()
            .zip(&ends)
            .enumerate()
            .map(|(i, (x, &along))| {
                let max = |q: usize| x[q].max.map_or(0.0, |m| m.0);
                let min = |q: usize| x[q].min.map_or(0.0, |m| m.0);
                EndFigures {
                    end: if i == 0 { "head" } else { "tail" },
                    along_m: along,
                    max_speed_m_s: max(Q_SPEED).sqrt(),
                    max_speed_at: when(x[Q_SPEED].max),
                    max_acc_g: max(Q_ACC).sqrt() / G0,
                    max_acc_at: when(x[Q_ACC].max),
                    min_tension_n: min(Q_TENSION),
                    min_tension_at: when(x[Q_TENSION].min),
                    max_tension_n: max(Q_TENSION),
                    max_tension_at: when(x[Q_TENSION].max),
                    reach_m: max(Q_ANCHOR).sqrt(),
                    reach_at: when(x[Q_ANCHOR].max),
                }
            })
            .collect()
    } else {
        Vec::new()
    };

    let figures = PropFigures {
        name: name.clone(),
        kind: prop.kind.name(),
        max_speed_m_s: max(Q_SPEED).sqrt(),
        max_speed_at: when(total[Q_SPEED].max),
        max_acc_g: max(Q_ACC).sqrt() / G0,
        max_acc_at: when(total[Q_ACC].max),
        min_tension_n: min(Q_TENSION),
        min_tension_weights: min(Q_TENSION) / weight,
        min_tension_at: when(total[Q_TENSION].min),
        max_tension_n: max(Q_TENSION),
        max_tension_weights: max(Q_TENSION) / weight,
        max_tension_at: when(total[Q_TENSION].max),
        slack_s,
        max_hand_turns_per_s: hand_rate,
        max_head_turns_per_s: head_rate,
        reach_m: max(Q_ANCHOR).sqrt(),
        reach_at: when(total[Q_ANCHOR].max),
        reach_from_centre_m: max(Q_CENTRE).sqrt(),
        reach_from_centre_at: when(total[Q_CENTRE].max),
        ends: end_figures,
        joins: Vec::new(),
        peak_current_a: None,
        peak_current_at: None,
        mean_current_a: None,
        battery_hours: None,
        brightness_scale: None,
        hardware: None,
        flash: None,
    };
    PropScan {
        figures,
        hands,
        heads,
        warnings,
    }
}
