//! Joins: every section boundary, how far each prop jumps there and how
//! sharply its speed changes.
//!
//! A section that restarts (`join = "restart"`, the default) starts its
//! patterns at their own start angles, so the head's position just before a
//! boundary (the end of the section before, or rest) can differ from the one
//! just after. A section that continues (`join = "continue"`) has its start
//! angles solved so that nothing jumps where the figures allow it
//! (`motion::join`); what remains is reported the same way. Every boundary
//! strictly inside the show is a join (bar 1 beat 1 and the end are not: the
//! performer picks the props up where the show starts them). A prop not
//! placed in a section rests: hand at the anchor, head hanging straight down
//! (a staff's tail end straight up). Every end of the prop is measured (a
//! poi's head, a staff's head end and tail end); the figures and the warning
//! give the end that jumps furthest, by name.
//!
//! The kink is the change of the head end's velocity across the join, m/s:
//! zero only where the head carries on at the same speed in the same direction.

use serde::Serialize;

use crate::geom::Vec3;

use super::kin::{Kin, end_curves, end_name, show_end_beat};
use super::report::{Warning, WarningKind, When, r9};
use crate::model::{Join, Show};
use crate::motion::{PropMotion, Span, join};
use crate::num;

/// One join of one prop: a section boundary inside the show.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct JoinFigures {
    /// Where it is: the first bar of the section after it.
    pub at: When,
    /// `restart` or `continue`: the `join` of the section that starts there
    /// (`restart` where no section starts, the prop coming to rest).
    pub join: &'static str,
    /// The pattern the prop plays before (null: it rests).
    pub from: Option<String>,
    /// The pattern it plays after (null: it rests).
    pub to: Option<String>,
    /// The jump of the end that jumps furthest, millimetres.
    #[serde(serialize_with = "r9")]
    pub jump_mm: f64,
    /// Which end that is (`head`, `head end`, `tail end`).
    pub end: &'static str,
    /// The hand's jump, millimetres.
    #[serde(serialize_with = "r9")]
    pub hand_jump_mm: f64,
    /// The head end's speed just before, m/s.
    #[serde(serialize_with = "r9")]
    pub speed_before_m_s: f64,
    /// The head end's speed just after, m/s.
    #[serde(serialize_with = "r9")]
    pub speed_after_m_s: f64,
    /// The change of the head end's velocity across the join, m/s.
    #[serde(serialize_with = "r9")]
    pub kink_m_s: f64,
}

/// One side of a join.
struct Side {
    hand: Vec3,
    ends: Vec<Vec3>,
    /// The head end's velocity, m/s.
    velocity: Vec3,
    /// The pattern's name, `None` at rest.
    pattern: Option<String>,
    /// The span, if the prop plays.
    span: Option<usize>,
}

/// Tempo just before global beat `beat` (the tempo of the piece that ends
/// there), beats per second.
fn beats_per_s_before(show: &Show, beat: f64) -> f64 {
    let bpm = show
        .tempo
        .changes()
        .filter(|c| c.0 < beat)
        .last()
        .map_or_else(|| show.tempo.bpm_at_beat(0.0), |c| c.1);
    bpm / 60.0
}

/// The ends' positions of `span` at `s` beats into it, stage coordinates.
fn ends_at(show: &Show, motion: &PropMotion, span: &Span, s: f64) -> Vec<Vec3> {
    let ends_m = show.props[motion.prop].ends_m();
    let u = span.phase(s);
    end_curves(span, &ends_m)
        .iter()
        .map(|c| span.to_stage(c.point(u)))
        .collect()
}

/// Hand, ends and head-end velocity just before (`after = false`) or just
/// after global beat `beat`.
fn side(show: &Show, motion: &PropMotion, beat: f64, after: bool) -> Side {
    let found = motion.spans.iter().position(|s| {
        if after {
            s.start_beat == beat
        } else {
            s.end_beat == beat
        }
    });
    let p = &show.props[motion.prop];
    match found {
        Some(i) => {
            let s = &motion.spans[i];
            let x = if after { 0.0 } else { s.beats() };
            let bps = if after {
                show.tempo.bpm_at_beat(beat) / 60.0
            } else {
                beats_per_s_before(show, beat)
            };
            let k = Kin::moving_end(s, &s.head, bps, x);
            Side {
                hand: s.to_stage(s.hand.point(s.phase(x))),
                ends: ends_at(show, motion, s, x),
                velocity: k.head[1],
                pattern: Some(show.patterns[s.pattern].name.clone()),
                span: Some(i),
            }
        }
        None => Side {
            hand: p.anchor_m,
            ends: p
                .ends_m()
                .iter()
                .map(|&along| motion.rest_point(along))
                .collect(),
            velocity: Vec3::zeros(),
            pattern: None,
            span: None,
        },
    }
}

/// Every join of `motion`'s prop, and a `jump` warning at each where an end
/// moves more than `limit_m` metres at once.
pub fn joins(show: &Show, motion: &PropMotion, limit_m: f64) -> (Vec<JoinFigures>, Vec<Warning>) {
    let end = show_end_beat(show);
    let mut cuts: Vec<f64> = show
        .sections
        .iter()
        .flat_map(|s| {
            [
                show.tempo.beat_of_bar(s.first_bar),
                show.tempo.beat_of_bar(s.last_bar + 1),
            ]
        })
        .filter(|&b| b > 0.0 && b < end)
        .collect();
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let name = &show.props[motion.prop].name;
    let mut figures = Vec::new();
    let mut out = Vec::new();
    for b in cuts {
        let before = side(show, motion, b, false);
        let after = side(show, motion, b, true);
        let section = show
            .sections
            .iter()
            .find(|s| show.tempo.beat_of_bar(s.first_bar) == b);
        let how = section.map_or(Join::Restart, |s| s.join);
        let moves: Vec<f64> = before
            .ends
            .iter()
            .zip(&after.ends)
            .map(|(e0, e1)| (e1 - e0).norm())
            .collect();
        // The furthest jump; the head end's on a tie.
        let (worst, d) =
            moves
                .iter()
                .copied()
                .enumerate()
                .fold((0, f64::NEG_INFINITY), |best, (i, d)| {
                    if d > best.1 { (i, d) } else { best }
                });
        let at = When::at_beat(show, b);
        let what = end_name(moves.len(), worst);
        let hand_jump = (after.hand - before.hand).norm();
        figures.push(JoinFigures {
            at,
            join: how.name(),
            from: before.pattern.clone(),
            to: after.pattern.clone(),
            jump_mm: d * 1000.0,
            end: what,
            hand_jump_mm: hand_jump * 1000.0,
            speed_before_m_s: before.velocity.norm(),
            speed_after_m_s: after.velocity.norm(),
            kink_m_s: (after.velocity - before.velocity).norm(),
        });
        if d <= limit_m {
            continue;
        }
        let mut also = String::new();
        for (i, m) in moves.iter().enumerate() {
            if i != worst {
                also.push_str(&format!(
                    "the {} jumps {:.1} mm, ",
                    end_name(moves.len(), i),
                    m * 1000.0
                ));
            }
        }
        let advice = advice(show, motion, b, &after, how, limit_m);
        out.push(Warning {
            kind: WarningKind::Jump,
            prop: name.clone(),
            other_prop: None,
            at,
            duration_s: None,
            value: Some(d),
            limit: Some(limit_m),
            unit: Some("m"),
            message: format!(
                "{name}: the {what} jumps {:.1} mm at the start of bar {} (from {} to {}; {also}the hand jumps {:.1} mm){advice}",
                d * 1000.0,
                at.bar,
                playing(&before.pattern),
                playing(&after.pattern),
                hand_jump * 1000.0
            ),
            ..Warning::UNGATHERED
        });
    }
    (figures, out)
}

/// What would remove a jump, as text to paste: `join = "continue"` on a
/// section that restarts (or the start angles that would do the same), and
/// for a section that continues, why the figures leave a jump.
fn advice(
    show: &Show,
    motion: &PropMotion,
    beat: f64,
    after: &Side,
    how: Join,
    limit_m: f64,
) -> String {
    let Some(i) = after.span else {
        return "; the prop comes to rest here".to_string();
    };
    let span = &motion.spans[i];
    let before = motion.before(show, beat);
    let fitted = span.with_fit(&join::solve(span, &before));
    let ends = ends_at(show, motion, &fitted, 0.0);
    let old = side(show, motion, beat, false).ends;
    let left = ends
        .iter()
        .zip(&old)
        .map(|(a, b)| (a - b).norm())
        .fold(0.0, f64::max);
    if how == Join::Continue {
        return "; the least these figures allow from where the section before left it (the plane or the hand's radius changes): give the patterns the same plane and hand radius to remove it".to_string();
    }
    let pat = &show.patterns[span.pattern];
    let angles = match pat.hand.as_slice() {
        [term] if term.turns == 1.0 => {
            let turn = num::deg(fitted.fit.map_or(0.0, |f| f.turn_rad));
            let hand = clock_deg(term.start_deg + turn);
            let head = clock_deg(num::deg(fitted.tether_start_rad()));
            format!(
                ", or give `{}` (here and wherever it restarts) `hand_start_deg = {hand:.3}, head_start_deg = {head:.3}`",
                pat.name
            )
        }
        _ => String::new(),
    };
    if left <= limit_m {
        format!(
            "; write `join = \"continue\"` in the section of bar {}{angles}",
            show.tempo.bar_beat(beat).0
        )
    } else {
        format!(
            "; `join = \"continue\"` in the section of bar {} would leave {:.1} mm (the plane or the hand's radius changes)",
            show.tempo.bar_beat(beat).0,
            left * 1000.0
        )
    }
}

/// An angle in degrees as printed to paste: in [0, 360) to the printed
/// thousandth (a hair below 360 prints as 0).
fn clock_deg(deg: f64) -> f64 {
    let x = deg.rem_euclid(360.0);
    if x >= 359.9995 { 0.0 } else { x }
}

/// What a prop plays, for messages: a pattern's name in backquotes, or `rest`.
pub fn playing(pattern: &Option<String>) -> String {
    match pattern {
        Some(name) => format!("`{name}`"),
        None => "rest".to_string(),
    }
}
