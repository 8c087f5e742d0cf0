//! Facts of the trade about antispin flowers (common practice, no source),
//! and the tempo map.

use crate::common;

use glowscore::events::{find_events, span_stats};
use glowscore::model::EventKind;
use glowscore::motion::simulate;

fn flower(hand: f64, tether: f64, turns: i32, cycles: u32) -> glowscore::model::Show {
    let pattern =
        format!("plane = \"wall\"\nbeats = 4\nhand_radius_m = {hand}\nhead_turns = {turns}");
    common::one_pattern(tether, &pattern, cycles, 0.05)
}

fn count(show: &glowscore::model::Show, kind: EventKind) -> Vec<glowscore::events::Event> {
    find_events(show, &simulate(show))
        .into_iter()
        .filter(|e| e.kind == kind)
        .collect()
}

#[test]
fn antispin_flower_has_one_minus_m_petals_per_hand_turn() {
    // Common practice: an antispin flower with head turns m < 0 has |m - 1| petals.
    for m in -6..=-1 {
        let show = flower(0.12, 0.5, m, 3);
        let tips = count(&show, EventKind::Tip);
        assert_eq!(tips.len(), 3 * (1 - m) as usize, "m = {m}");
    }
}

#[test]
fn head_stops_dead_exactly_when_hand_radius_is_tether_times_m() {
    // Common practice: the head stops dead at the tips when R = r |m|.
    let r = 0.4;
    for m in [-2, -3, -4] {
        let exact = r * f64::from(-m);
        let stalls = count(&flower(exact, r, m, 1), EventKind::Stall);
        assert_eq!(
            stalls.len(),
            (1 - m) as usize,
            "m = {m}: one zero point per petal"
        );
        assert!(stalls.iter().all(|s| s.speed_m_s < 1e-9));
        for off in [0.9, 1.1] {
            let show = flower(exact * off, r, m, 1);
            let motions = simulate(&show);
            let span = &motions[0].spans[0];
            let min = (0..4000)
                .map(|i| {
                    let d = span.head_jet(4.0 * i as f64 / 4000.0).d1;
                    d[0].hypot(d[1])
                })
                .fold(f64::INFINITY, f64::min);
            assert!(
                min > 0.01,
                "m = {m}, R off by {off}: head still moves (min {min} m/beat)"
            );
        }
    }
}

#[test]
fn hand_radius_equal_to_tether_with_m_minus_one_is_a_line_four_tethers_long() {
    // Common practice: R = r with m = -1 traces a straight line through the
    // centre, four tethers long; one hand turn goes there and back.
    let r = 0.5;
    let show = flower(r, r, -1, 1);
    let motions = simulate(&show);
    let span = &motions[0].spans[0];
    let pts: Vec<[f64; 2]> = (0..=400)
        .map(|i| span.head_jet(4.0 * i as f64 / 400.0).p)
        .collect();
    // All on one line through the centre (the clock's 12-6 line here).
    assert!(
        pts.iter().all(|p| p[1].abs() < 1e-12),
        "on the vertical line"
    );
    let lo = pts.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min);
    let hi = pts.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max);
    assert!((hi - lo - 4.0 * r).abs() < 1e-9, "extent {}", hi - lo);
    let len = span_stats(&motions[0], 0).path_length_m;
    assert!(
        (len - 8.0 * r).abs() / (8.0 * r) < 1e-9,
        "there and back: {len}"
    );
    // It passes through the centre: an inner point at distance 0.
    let inner = count(&show, EventKind::Inner);
    assert_eq!(inner.len(), 2);
    for e in inner {
        assert!((e.position_m - glowscore::geom::Vec3::new(0.0, 1.5, 0.0)).norm() < 1e-9);
    }
}

#[test]
fn isolation_has_no_tips_and_no_stalls() {
    // Constant distance and constant speed: no extrema at all.
    let pattern =
        "plane = \"wheel\"\nbeats = 4\nhand_radius_m = 0.2\nhead_turns = 1\nhead_start_deg = 180";
    let show = common::one_pattern(0.6, pattern, 2, 0.0);
    for k in [EventKind::Tip, EventKind::Inner, EventKind::Stall] {
        assert!(count(&show, k).is_empty(), "{k:?}");
    }
}

#[test]
fn tempo_change_moves_every_later_beat_by_the_exact_amount() {
    let base = |tempo: &str| {
        common::show(&format!(
            "[show]\nframe_rate = 100\nbpm = 100\nbeats_per_bar = 4\nstart_s = 0.25\n{tempo}\n\
             [prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\n\
             [pattern.x]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = -3\n\
             [[section]]\nbars = [1, 8]\np = \"x\"\n"
        ))
    };
    let flat = count(&base(""), EventKind::Beat);
    let changed = count(&base("[[tempo]]\nbar = 5\nbpm = 120"), EventKind::Beat);
    assert_eq!(flat.len(), 32);
    assert_eq!(changed.len(), 32);
    for (k, (a, b)) in flat.iter().zip(&changed).enumerate() {
        // Beat k (0-based) starts at 0.25 + 0.6 k s; from beat 16 on, each
        // beat takes 0.5 s instead of 0.6 s.
        let expect_shift = if k >= 16 {
            (k - 16) as f64 * (0.5 - 0.6)
        } else {
            0.0
        };
        assert!(
            (b.time_s - a.time_s - expect_shift).abs() < 1e-12,
            "beat {k}"
        );
        assert!((a.time_s - (0.25 + 0.6 * k as f64)).abs() < 1e-12);
    }
}

#[test]
fn mirrored_placements_read_clock_angles_on_the_mirrored_clock() {
    // docs/conventions.md, "Motion": mirror reverses the plane's clock (right -> -right),
    // and angle events of that placement are read on the mirrored clock.
    let text = |mirror: bool| {
        format!(
            "[show]\nframe_rate = 100\nbpm = 60\n\
             [prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\n\
             [pattern.x]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.2\nhead_turns = 1\n\
             [[section]]\nbars = [1, 1]\np = {{ pattern = \"x\", mirror = {mirror} }}\n\
             [[cue]]\nprop = \"p\"\nbars = [1, 1]\nat = \"angle\"\nangle_deg = 90\ncolours = [\"red\", \"blue\"]\n"
        )
    };
    for (mirror, side) in [(false, 1.0), (true, -1.0)] {
        let show = common::show(&text(mirror));
        let angles = count(&show, EventKind::Angle);
        assert_eq!(angles.len(), 1, "one pass of 3 o'clock per turn");
        let e = &angles[0];
        // An extension: hand and head at the same clock angle, 0.7 m out;
        // 90 deg is reached after a quarter turn, one beat in.
        assert!((e.time_s - 1.0).abs() < 1e-6, "{}", e.time_s);
        assert!(
            (e.position_m.x - side * 0.7).abs() < 1e-9,
            "mirror {mirror}: x = {}",
            e.position_m.x
        );
        assert!((e.position_m.y - 1.5).abs() < 1e-9);
    }
}
