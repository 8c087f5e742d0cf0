//! Jumps: section boundaries that move a head discontinuously.
//!
//! Each section restarts its patterns' phase, so the head's position just
//! before a boundary (the end of the section before, or rest) can differ from
//! the one just after (the start of the next, or rest). Every boundary
//! strictly inside the show is checked (bar 1 beat 1 and the end are not: the
//! performer picks the props up where the show starts them). A prop not
//! placed in a section rests: hand at the anchor, head hanging straight down.

use nalgebra::Vector3;

use super::kin::show_end_beat;
use super::report::{Warning, WarningKind, When};
use crate::model::Show;
use crate::motion::PropMotion;

/// Hand and head position just before (`after = false`) or just after the
/// global beat `beat`, with the name of what the prop does there.
fn side(
    show: &Show,
    motion: &PropMotion,
    beat: f64,
    after: bool,
) -> (Vector3<f64>, Vector3<f64>, String) {
    let span = motion.spans.iter().find(|s| {
        if after {
            s.start_beat == beat
        } else {
            s.end_beat == beat
        }
    });
    match span {
        Some(s) => {
            let x = if after { 0.0 } else { s.beats() };
            let u = s.phase(x);
            let name = format!("`{}`", show.patterns[s.pattern].name);
            (
                s.to_stage(s.hand.point(u)),
                s.to_stage(s.head.point(u)),
                name,
            )
        }
        None => {
            let p = &show.props[motion.prop];
            let head = p.anchor_m - Vector3::new(0.0, p.tether_m, 0.0);
            (p.anchor_m, head, "rest".to_string())
        }
    }
}

/// Every boundary where `motion`'s head moves more than `limit_m` metres at
/// once, as `jump` warnings.
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
        let (hand0, head0, from) = side(show, motion, b, false);
        let (hand1, head1, to) = side(show, motion, b, true);
        let d = (head1 - head0).norm();
        if d > limit_m {
            let at = When::at_beat(show, b);
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
                    "{name}: the head jumps {d:.3} m at the start of bar {} (from {from} to {to}; the hand jumps {:.3} m)",
                    at.bar,
                    (hand1 - hand0).norm()
                ),
            });
        }
    }
    out
}
