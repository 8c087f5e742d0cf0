//! Staffs as rigid bodies, and the check's figures for them, against
//! outside references:
//! - Rigid-body kinematics: a rigid body keeps the distance between any two
//!   of its points; a point of a rod lies on the segment between its ends,
//!   dividing it in the ratio of its distances from them; the relative
//!   velocity of two points of a rigid body is at right angles to the line
//!   joining them (the body only turns about it).
//! - Halliday, Resnick and Walker, Fundamentals of Physics (uniform circular
//!   motion; a ball whirled in a vertical circle): the inward force needed
//!   is m (v^2 / r - g) at the top and m (v^2 / r + g) at the bottom; a
//!   string goes slack at the top when v^2 / r < g (a rod does not: it
//!   pushes). Speed of uniform circular motion v = w r.
//! - Standard gravity g = 9.80665 m/s^2 (3rd CGPM, 1901).
//! - Plane geometry: the chord of angle d on a circle of radius r is
//!   2 r sin(d / 2); Newton's second law at rest: the support carries the
//!   weight m g.
//! - C. Ericson, Real-Time Collision Detection (2005), 5.1.9: the distance
//!   between two segments that cross is 0.

use crate::common;

use std::f64::consts::{PI, TAU};

use common::{check_show, close};
use glowscore::check::kin::{Kin, end_curves};
use glowscore::check::tension::G0;
use glowscore::check::{CheckReport, WarningKind};
use glowscore::model::Show;
use glowscore::motion::PropMotion;

fn report(text: &str) -> CheckReport {
    check_show(&common::show(text)).expect("within the budget")
}

fn count(r: &CheckReport, kind: WarningKind) -> usize {
    r.warnings
        .iter()
        .filter(|w| w.kind == kind)
        .map(|w| w.count)
        .sum()
}

/// The patterns the rigid-body test runs, as TOML keys (plane added later):
/// an antispin flower, an inspin, an extension, an isolation, a two-term
/// hand path with antispin, a reversed flower and a still hand.
const PATTERNS: [&str; 7] = [
    "beats = 4\nhand_radius_m = 0.18\nhead_turns = -3\nhead_start_deg = 11",
    "beats = 4\nhand_radius_m = 0.15\nhead_turns = 2\nhand_start_deg = 40",
    "beats = 2\nhand_radius_m = 0.2\nhead_turns = 1\nhand_start_deg = 30\nhead_start_deg = 30",
    "beats = 2\nhand_radius_m = 0.25\nhead_turns = 1\nhead_start_deg = 180",
    "beats = 4\nhand = [{ radius_m = 0.2, turns = 1 }, { radius_m = 0.06, turns = -2, start_deg = 30 }]\nhead_turns = -1",
    "beats = 4\nhand_radius_m = 0.1\nhead_turns = -4\nreverse = true",
    "beats = 1\nhand_radius_m = 0\nhead_turns = 1\nhead_start_deg = 75",
];

/// A one-staff show playing every pattern of [`PATTERNS`] in every plane,
/// one bar each, alternately mirrored and delayed; the staff's halves are
/// `tether` and `tail` metres, with a strip of 9 LEDs on each half.
fn tour(tether: f64, tail: f64) -> Show {
    let mut s = format!(
        r#"
[show]
frame_rate = 500
bpm = 96

[prop.s]
kind = "staff"
tether_m = {tether}
tail_m = {tail}
anchor_m = [0.2, 1.4, -0.1]
strip = {{ leds = 9, from_m = 0.04, to_m = {to} }}
"#,
        to = 0.9 * tether.min(tail)
    );
    let mut bar = 1;
    for (i, p) in PATTERNS.iter().enumerate() {
        for plane in ["wall", "wheel", "floor"] {
            s.push_str(&format!(
                "\n[pattern.p{i}_{plane}]\nplane = \"{plane}\"\n{p}\n"
            ));
        }
    }
    for i in 0..PATTERNS.len() {
        for (k, plane) in ["wall", "wheel", "floor"].iter().enumerate() {
            let mirror = (i + k) % 2 == 1;
            let delay = if k == 2 { 0.75 } else { 0.0 };
            s.push_str(&format!(
                "\n[[section]]\nbars = [{bar}, {bar}]\ns = {{ pattern = \"p{i}_{plane}\", mirror = {mirror}, delay_beats = {delay} }}\n"
            ));
            bar += 1;
        }
    }
    common::show(&s)
}

/// Checks the rigid-body relations of prop 0 of `show` at 200 instants of
/// every span: the ends the check scans are `tether + tail` apart, the grip
/// (the hand) divides them `tether : tail` from the head end, every LED
/// lies on the rod `along_m` from the grip, and the ends' relative velocity
/// is at right angles to the rod.
fn assert_rigid(show: &Show) {
    let prop = &show.props[0];
    let (r, t) = (prop.tether_m, prop.tail_m);
    let len = r + t;
    let motion = PropMotion::new(show, 0);
    assert_eq!(motion.spans.len(), 3 * PATTERNS.len());
    let spots = prop.led_spots();
    assert_eq!(spots.len(), 18);
    for span in &motion.spans {
        let ends = end_curves(span, &prop.ends_m());
        assert_eq!(ends.len(), 2);
        let leds: Vec<_> = spots.iter().map(|p| span.point_curve(p.along_m)).collect();
        for i in 0..200 {
            let s = span.beats() * f64::from(i) / 199.0;
            let u = span.phase(s);
            let grip = span.to_stage(span.hand.point(u));
            let head = span.to_stage(ends[0].point(u));
            let tail = span.to_stage(ends[1].point(u));
            // The head end is the pattern's head path.
            assert!((head - span.to_stage(span.head.point(u))).norm() < 1e-12);
            close((head - tail).norm(), len, 1e-12, "ends apart");
            let divides = (head * t + tail * r) / len;
            assert!((grip - divides).norm() < 1e-12, "grip {grip} vs {divides}");
            let axis = (head - tail) / len;
            // The motion's direction is the rod's (inside the span: its end
            // belongs to the next section).
            if s < span.beats() - 1e-9 {
                let st = motion.state_at_beat(&show.tempo, span.start_beat + s);
                assert!((st.dir - axis).norm() < 1e-9, "direction");
            }
            for (spot, c) in spots.iter().zip(&leds) {
                let p = span.to_stage(c.point(u));
                let on_rod = grip + axis * spot.along_m;
                assert!((p - on_rod).norm() < 1e-12, "LED at {}", spot.along_m);
                // Between the ends: its distances to them add up to the length.
                close(
                    (p - head).norm() + (p - tail).norm(),
                    len,
                    1e-12,
                    "LED on the segment",
                );
            }
            let kh = Kin::moving_end(span, &ends[0], 1.6, s);
            let kt = Kin::moving_end(span, &ends[1], 1.6, s);
            let rel = kh.head[1] - kt.head[1];
            let scale = rel.norm().max(1.0) * len;
            assert!(
                rel.dot(&(kh.head[0] - kt.head[0])).abs() < 1e-12 * scale,
                "relative velocity along the rod"
            );
            assert!((kh.hand[0] - grip).norm() < 1e-12);
        }
    }
}

#[test]
fn a_centred_staff_keeps_its_ends_two_halves_apart_with_the_grip_between() {
    // Rigid-body kinematics: both ends 2 x 0.6 m apart, the grip their midpoint.
    let show = tour(0.6, 0.6);
    assert_eq!(show.props[0].ends_m(), vec![0.6, -0.6]);
    assert_rigid(&show);
}

#[test]
fn an_offset_grip_divides_the_staff_in_the_ratio_of_its_halves() {
    // Rigid-body kinematics: ends 0.75 + 0.3 m apart, grip 0.75 m from the
    // head end and 0.3 m from the tail end.
    let show = tour(0.75, 0.3);
    assert_rigid(&show);
    let show = tour(0.35, 0.8);
    assert_rigid(&show);
}

#[test]
fn a_resting_staff_hangs_head_end_down_and_its_ends_carry_their_weights() {
    // Newton's second law at rest: the rod holds the lower end up by pulling
    // (T = +m g toward the grip) and the upper end by pushing (T = -m g).
    // The staff rests in bars 1-2 (only `q` plays): head end 0.5 m below the
    // anchor, tail end 0.4 m above.
    let text = r#"
[show]
frame_rate = 500
bpm = 60

[prop.s]
kind = "staff"
tether_m = 0.5
tail_m = 0.4
anchor_m = [0.0, 1.5, 0.0]
head_mass_kg = 0.2

[prop.q]
tether_m = 0.5
anchor_m = [3.0, 1.5, 0.0]

[pattern.slow]
plane = "floor"
beats = 4
hand_radius_m = 0
head_turns = 1

[[section]]
bars = [1, 2]
q = "slow"
"#;
    let rep = report(text);
    let p = &rep.props[0];
    assert_eq!(p.kind, "staff");
    close(p.max_tension_n, 0.2 * G0, 1e-12, "lower end pulled");
    close(p.min_tension_n, -0.2 * G0, 1e-12, "upper end pushed");
    close(p.min_tension_weights, -1.0, 1e-12, "one weight");
    close(p.ends[0].min_tension_n, 0.2 * G0, 1e-12, "head end");
    close(p.ends[1].max_tension_n, -0.2 * G0, 1e-12, "tail end");
    close(p.reach_m, 0.5, 1e-12, "the longer half");
    let st = rep.stage.as_ref().unwrap();
    close(
        st.highest_head_m,
        1.5 + 0.4 + 0.05,
        1e-12,
        "tail end on top",
    );
    assert_eq!(count(&rep, WarningKind::Slack), 0);
}

/// A one-prop show at `bpm`, one pattern for `bars` bars, with the prop's
/// extra keys (`kind`, `tail_m`) given.
fn one_prop(bpm: f64, keys: &str, pattern: &str, bars: u32) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = {bpm}
start_s = 0.5

[prop.p]
anchor_m = [0.0, 1.5, 0.0]
head_mass_kg = 0.2
{keys}

[pattern.x]
plane = "wall"
{pattern}

[[section]]
bars = [1, {bars}]
p = "x"
"#
    )
}

#[test]
fn a_staff_extension_has_the_textbook_vertical_circle_force_at_each_end() {
    // An extension (hand and rod turn together, hand_start = head_start),
    // hand radius 0.1 m, halves of 0.5 m: the head end circles at
    // 0.1 + 0.5 = 0.6 m from the anchor, the tail end at 0.5 - 0.1 = 0.4 m on
    // the opposite side, both at w = 2 pi x 30 / 60 rad/s (one turn per beat
    // at 30 bpm). Halliday, Resnick and Walker: the inward force at the top
    // and bottom of a vertical circle is m (w^2 r - g) and m (w^2 r + g).
    // Starting at 37 deg puts the top and bottom between the samples.
    let m = 0.2;
    let w = TAU * 30.0 / 60.0;
    let pattern =
        "beats = 1\nhand_radius_m = 0.1\nhead_turns = 1\nhand_start_deg = 37\nhead_start_deg = 37";
    let rep = report(&one_prop(
        30.0,
        "kind = \"staff\"\ntether_m = 0.5\ntail_m = 0.5",
        pattern,
        2,
    ));
    let p = &rep.props[0];
    let (head, tail) = (&p.ends[0], &p.ends[1]);
    assert_eq!((head.end, tail.end), ("head", "tail"));
    close(head.along_m, 0.5, 0.0, "head end along");
    close(tail.along_m, -0.5, 0.0, "tail end along");
    close(
        head.min_tension_n,
        m * (w * w * 0.6 - G0),
        1e-12,
        "head end at the top",
    );
    close(
        head.max_tension_n,
        m * (w * w * 0.6 + G0),
        1e-12,
        "head end at the bottom",
    );
    close(
        tail.min_tension_n,
        m * (w * w * 0.4 - G0),
        1e-12,
        "tail end at the top",
    );
    close(
        tail.max_tension_n,
        m * (w * w * 0.4 + G0),
        1e-12,
        "tail end at the bottom",
    );
    // The figures are the worst of both ends.
    close(
        p.max_tension_n,
        head.max_tension_n,
        0.0,
        "max over the ends",
    );
    close(
        p.min_tension_n,
        tail.min_tension_n,
        0.0,
        "min over the ends",
    );
    // The head end is at 12 o'clock when 37 + 360 u = 360: u = 323/360 of a
    // beat of 2 s after bar 1 beat 1 at 0.5 s; at 6 o'clock half a turn
    // earlier. The tail end is at its top when the head end is at its bottom.
    let top = 0.5 + 2.0 * 323.0 / 360.0;
    close(
        head.min_tension_at.unwrap().time_s,
        top,
        1e-9,
        "head end top",
    );
    close(
        head.max_tension_at.unwrap().time_s,
        top - 1.0,
        1e-9,
        "head end bottom",
    );
    close(
        tail.min_tension_at.unwrap().time_s,
        top - 1.0,
        1e-9,
        "tail end top",
    );
    // Uniform circular motion: v = w r; reach is the head end's 0.6 m.
    close(head.max_speed_m_s, w * 0.6, 1e-12, "head end speed");
    close(tail.max_speed_m_s, w * 0.4, 1e-12, "tail end speed");
    close(p.max_speed_m_s, w * 0.6, 1e-12, "fastest end");
    close(p.reach_m, 0.6, 1e-12, "reach");
    close(tail.reach_m, 0.4, 1e-12, "tail end reach");
    // w^2 r < g at the top: a string would go slack there, a rod pushes.
    assert!(w * w * 0.6 < G0 && p.min_tension_n < 0.0);
    assert_eq!(count(&rep, WarningKind::Slack), 0);
    assert_eq!(p.slack_s, 0.0);
    // A poi on the same hand circle with a 0.5 m tether follows the head
    // end's path, and its tether is slack around the top of every turn, where
    // w^2 r < g cos(theta): |theta| < acos(w^2 r / g) = 52.9 deg. The 8 turns
    // start and end at 37 deg, inside such a stretch: 7 whole stretches and
    // two cut by the section's ends.
    let poi = report(&one_prop(30.0, "tether_m = 0.5", pattern, 2));
    assert_eq!(count(&poi, WarningKind::Slack), 9, "one per top");
    close(
        poi.props[0].min_tension_n,
        m * (w * w * 0.6 - G0),
        1e-12,
        "the poi's head has the head end's path",
    );
    assert!(poi.props[0].ends.is_empty());
    assert_eq!(poi.props[0].kind, "poi");
}

#[test]
fn a_long_tail_sets_the_reach_speed_and_swept_box() {
    // An extension with hand radius 0.1 m, head half 0.3 m, tail half 0.9 m:
    // the head end circles at 0.4 m, the tail end at 0.8 m (plane geometry),
    // both at w = pi rad/s (one turn per 2 beats at 60 bpm); v = w r.
    let w = PI;
    let pattern = "beats = 2\nhand_radius_m = 0.1\nhead_turns = 1";
    let rep = report(&one_prop(
        60.0,
        "kind = \"staff\"\ntether_m = 0.3\ntail_m = 0.9",
        pattern,
        1,
    ));
    let p = &rep.props[0];
    close(p.reach_m, 0.8, 1e-12, "tail end reach");
    close(p.ends[0].reach_m, 0.4, 1e-12, "head end reach");
    close(p.max_speed_m_s, w * 0.8, 1e-12, "tail end speed");
    close(
        p.max_acc_g,
        w * w * 0.8 / G0,
        1e-12,
        "tail end acceleration",
    );
    close(p.reach_from_centre_m, 0.8, 1e-12, "from the centre line");
    let st = rep.stage.as_ref().unwrap();
    close(st.swept_m.x_min_m, -0.85, 1e-12, "left edge");
    close(st.swept_m.x_max_m, 0.85, 1e-12, "right edge");
    close(st.highest_head_m, 1.5 + 0.85, 1e-12, "top");
    close(st.lowest_head_m, 1.5 - 0.85, 1e-12, "bottom");
    // The same pattern on a poi reaches only its head's 0.4 m.
    let poi = report(&one_prop(60.0, "tether_m = 0.3", pattern, 1));
    close(poi.props[0].reach_m, 0.4, 1e-12, "poi reach");
}

#[test]
fn a_jump_names_the_end_that_jumps_furthest() {
    // A still hand, halves 0.3 m (head) and 0.9 m (tail); the rod turns from
    // 12 to 3 o'clock at bar 2: chords 2 r sin(45 deg) = r sqrt 2 for each end.
    let text = r#"
[show]
frame_rate = 500
bpm = 60

[prop.s]
kind = "staff"
tether_m = 0.3
tail_m = 0.9
anchor_m = [0.0, 1.5, 0.0]

[pattern.a]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 1

[pattern.b]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 1
head_start_deg = 90

[[section]]
bars = [1, 1]
s = "a"

[[section]]
bars = [2, 2]
s = "b"
"#;
    let rep = report(text);
    let jumps: Vec<_> = rep
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::Jump)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(jumps.len(), 1);
    close(
        jumps[0].value.unwrap(),
        0.9 * 2f64.sqrt(),
        1e-12,
        "tail chord",
    );
    let msg = &jumps[0].message;
    assert!(msg.contains("the tail end jumps 1272.8 mm"), "{msg}");
    assert!(msg.contains("the head end jumps 424.3 mm"), "{msg}");
}

/// Two props with halves of 0.5 m, both plain spins starting at 12 o'clock:
/// `a` in the wall plane at (-0.3, 1.5, 0), `b` in the wheel plane at
/// (0, 1.5, 0.2); `kind` is their prop kind line.
fn crossing(kind: &str) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = 60

[prop.a]
{kind}
tether_m = 0.5
anchor_m = [-0.3, 1.5, 0.0]

[prop.b]
{kind}
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.2]

[pattern.wall]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 1

[pattern.wheel]
plane = "wheel"
beats = 4
hand_radius_m = 0
head_turns = 1

[[section]]
bars = [1, 1]
a = "wall"
b = "wheel"
"#
    )
}

#[test]
fn staff_rods_that_cross_at_mid_length_collide_where_poi_would_not() {
    // One beat in (1 s), both rods are horizontal: `a` runs along x from
    // -0.8 to 0.2 m at y = 1.5, z = 0, and `b` along z from -0.3 (tail end)
    // to 0.7 m at x = 0, y = 1.5: the segments cross at (0, 1.5, 0), 0.3 m
    // from a's grip toward its head and 0.2 m from b's grip toward its tail
    // (Ericson: crossing segments are 0 apart). Poi tethers stop at the
    // grip: b's stays at z >= 0.2 while it is on a's side, so they come no
    // closer than 0.2 m, at that same instant.
    let staff = report(&crossing("kind = \"staff\""));
    let pf = &staff.pairs[0];
    assert!(pf.min_tether_distance_m.unwrap() < 1e-9);
    let t = pf.min_tether_distance_at.unwrap().time_s;
    assert!((t - 1.0).abs() < 1e-6 || (t - 3.0).abs() < 1e-6, "{t}");
    let hits: Vec<_> = staff
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::Collision)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert!(!hits.is_empty());
    assert!(
        hits[0].message.contains("a's staff and b's staff"),
        "{}",
        hits[0].message
    );
    // The ends themselves stay apart: a's head end reaches (0.2, 1.5, 0),
    // b's ends are 0.5 m from (0, 1.5, 0.2) in the x = 0 plane.
    assert!(pf.min_head_distance_m.unwrap() > 0.1);

    let poi = report(&crossing(""));
    let pf = &poi.pairs[0];
    close(pf.min_tether_distance_m.unwrap(), 0.2, 1e-9, "poi tethers");
    close(pf.min_tether_distance_at.unwrap().time_s, 1.0, 1e-6, "when");
    assert_eq!(count(&poi, WarningKind::Collision), 0);
}

#[test]
fn the_json_report_names_the_kind_and_lists_a_staffs_ends() {
    let rep = report(&one_prop(
        60.0,
        "kind = \"staff\"\ntether_m = 0.3\ntail_m = 0.9",
        "beats = 2\nhand_radius_m = 0.1\nhead_turns = 1",
        1,
    ));
    let v = serde_json::to_value(&rep).unwrap();
    let p = &v["props"]["p"];
    assert_eq!(p["kind"], "staff");
    assert_eq!(p["ends"][0]["end"], "head");
    assert_eq!(p["ends"][1]["end"], "tail");
    assert_eq!(p["ends"][1]["along_m"], -0.9);
    assert!(p["ends"][1]["max_tension_n"].is_number());
    let poi = report(&one_prop(
        60.0,
        "tether_m = 0.3",
        "beats = 2\nhand_radius_m = 0.1\nhead_turns = 1",
        1,
    ));
    let v = serde_json::to_value(&poi).unwrap();
    assert_eq!(v["props"]["p"]["kind"], "poi");
    assert!(v["props"]["p"].get("ends").is_none());
}
