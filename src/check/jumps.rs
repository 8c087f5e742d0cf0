//! Jumps: section boundaries that move a head discontinuously.
//!
//! Each section restarts its patterns' phase, so the head's position just
//! before a boundary (the end of the section before, or rest) can differ from
//! the one just after (the start of the next, or rest). Every boundary
//! strictly inside the show is checked (bar 1 beat 1 and the end are not: the
//! performer picks the props up where the show starts them). A prop not
//! placed in a section rests: hand at the anchor, head hanging straight down
//! (a staff's tail end straight up). Every end of the prop is checked (a
//! poi's head, a staff's head end and tail end); the warning gives the end
//! that jumps furthest, by name.

use crate::geom::Vec3;

use super::kin::{end_curves, end_name, show_end_beat};
use super::report::{Warning, WarningKind, When};
use crate::model::Show;
use crate::motion::PropMotion;

/// Hand position and the position of every end of the prop (the order of
/// [`crate::model::Prop::ends_m`]: head end first) just before (`after =
/// false`) or just after the global beat `beat`, with the name of what the
/// prop does there.
fn side(show: &Show, motion: &PropMotion, beat: f64, after: bool) -> (Vec3, Vec<Vec3>, String) {
    let span = motion.spans.iter().find(|s| {
        if after {
            s.start_beat == beat
        } else {
            s.end_beat == beat
        }
    });
    let p = &show.props[motion.prop];
    let ends_m = p.ends_m();
    match span {
        Some(s) => {
            let x = if after { 0.0 } else { s.beats() };
            let u = s.phase(x);
            let name = format!("`{}`", show.patterns[s.pattern].name);
            let ends = end_curves(s, &ends_m)
                .iter()
                .map(|c| s.to_stage(c.point(u)))
                .collect();
            (s.to_stage(s.hand.point(u)), ends, name)
        }
        None => {
            let ends = ends_m
                .iter()
                .map(|&along| motion.rest_point(along))
                .collect();
            (p.anchor_m, ends, "rest".to_string())
        }
    }
}

/// Every boundary where one of `motion`'s ends moves more than `limit_m`
/// metres at once, as `jump` warnings (one per boundary, for the end that
/// jumps furthest).
pub fn jumps(show: &Show, motion: &PropMotion, limit_m: f64) -> Vec<Warning> {
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
    let mut out = Vec::new();
    for b in cuts {
        let (hand0, ends0, from) = side(show, motion, b, false);
        let (hand1, ends1, to) = side(show, motion, b, true);
        let moves: Vec<f64> = ends0
            .iter()
            .zip(&ends1)
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
        if d > limit_m {
            let at = When::at_beat(show, b);
            let what = end_name(moves.len(), worst);
            let mut also = String::new();
            for (i, m) in moves.iter().enumerate() {
                if i != worst {
                    also.push_str(&format!(
                        "the {} jumps {m:.3} m, ",
                        end_name(moves.len(), i)
                    ));
                }
            }
            out.push(Warning {
                kind: WarningKind::Jump,
                count: 1,
                bars: [0, 0],
                line: None,
                cue: None,
            each: Vec::new(),
            expected: None,
                prop: name.clone(),
                other_prop: None,
                at,
                duration_s: None,
                value: Some(d),
                limit: Some(limit_m),
                unit: Some("m"),
                message: format!(
                    "{name}: the {what} jumps {d:.3} m at the start of bar {} (from {from} to {to}; {also}the hand jumps {:.3} m)",
                    at.bar,
                    (hand1 - hand0).norm()
                ),
            });
        }
    }
    out
}
