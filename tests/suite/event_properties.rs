//! Property tests: whatever the pattern, every reported tip is a local
//! maximum of the head's distance from the anchor, every inner point a local
//! minimum, and every stall a local minimum of speed below the threshold.

use crate::common;

use glowscore::events::{STALL_FRACTION, find_events, span_stats};
use glowscore::model::EventKind;
use glowscore::motion::simulate;
use proptest::prelude::*;

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn tips_inner_points_and_stalls_are_true_extrema(
        hand in 0.001f64..0.6, // the reader refuses sizes under a millimetre
        tether in 0.2f64..0.8,
        turns in -6i32..=6,
        head_start in 0.0f64..360.0,
        hand_start in 0.0f64..360.0,
        delay in 0.0f64..4.0,
        reverse: bool,
    ) {
        let pattern = format!(
            "plane = \"wall\"\nbeats = 4\nhand_radius_m = {hand}\nhand_start_deg = {hand_start}\n\
             head_turns = {turns}\nhead_start_deg = {head_start}\nreverse = {reverse}"
        );
        let show = common::one_pattern(tether, &pattern, 2, delay);
        let motions = simulate(&show);
        let m = &motions[0];
        let events = find_events(&show, &motions);
        let mean = span_stats(m, 0).mean_speed_m_s;
        // Probe a hair either side, in beats (1 beat = 1 s here).
        let h = 1e-4;
        for e in events.iter().filter(|e| matches!(e.kind, EventKind::Tip | EventKind::Inner | EventKind::Stall)) {
            let at = |b: f64| m.state_at_beat(&show.tempo, b);
            let dist = |b: f64| (at(b).head_m - glowscore::geom::Vec3::new(0.0, 1.5, 0.0)).norm();
            let speed = |b: f64| at(b).head_vel.norm();
            let tol = 1e-12;
            match e.kind {
                EventKind::Tip => {
                    prop_assert!(dist(e.beat - h) <= dist(e.beat) + tol && dist(e.beat + h) <= dist(e.beat) + tol);
                }
                EventKind::Inner => {
                    prop_assert!(dist(e.beat - h) + tol >= dist(e.beat) && dist(e.beat + h) + tol >= dist(e.beat));
                }
                _ => {
                    prop_assert!(speed(e.beat - h) + tol >= speed(e.beat) && speed(e.beat + h) + tol >= speed(e.beat));
                    prop_assert!(e.speed_m_s < STALL_FRACTION * mean);
                }
            }
            prop_assert!(e.beat > 0.0 && e.beat < 8.0, "inside the section");
        }
    }
}
