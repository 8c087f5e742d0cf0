//! Spin rates: how many turns per second the hand and the tether make.
//!
//! On a piece of the show (one pattern at one tempo) both rates are
//! constant: the hand's fastest circular term turns `|turns| / beats` times
//! per beat, and the tether `|head_turns| / beats` times per beat, both
//! relative to the stage.

use crate::model::Show;
use crate::motion::Span;

/// Sustained spin rate people commonly reach with poi, turns per second:
/// about 2.5 to 3 head turns per second (common practice). Faster warns.
pub const COMMON_SPIN_LIMIT_TURNS_PER_S: f64 = 3.0;

/// Turns per second of the hand's fastest circular term (0 for a still hand).
pub fn hand_turns_per_s(span: &Span, beats_per_s: f64) -> f64 {
    let per_cycle = span
        .hand
        .rotors()
        .iter()
        .map(|r| r.turns.abs())
        .fold(0.0, f64::max);
    per_cycle * span.phase_per_beat().abs() * beats_per_s
}

/// Turns per second of the tether (hand to head) relative to the stage.
pub fn head_turns_per_s(show: &Show, span: &Span, beats_per_s: f64) -> f64 {
    show.patterns[span.pattern].head_turns.abs() * span.phase_per_beat().abs() * beats_per_s
}
