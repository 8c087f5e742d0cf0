//! The physics and stage checks against outside references:
//! - Halliday, Resnick and Walker, Fundamentals of Physics (uniform circular
//!   motion; a ball whirled in a vertical circle on a string): tension
//!   m (w^2 r - g) at the top, m (w^2 r + g) at the bottom, slack at the
//!   top when w^2 r < g; centripetal force m w^2 r in a horizontal circle.
//! - Standard gravity g = 9.80665 m/s^2 (3rd CGPM, 1901).
//! - Euclidean geometry: the chord of angle d on a circle of radius r is
//!   2 r sin(d / 2); a point at clock 90 deg about c is c + r * right.
//! - Spin rates beyond about 3 head turns per second (common practice).

use crate::common;

use std::f64::consts::{PI, TAU};

use common::{check_show, close};
use glowscore::check::tension::G0;
use glowscore::check::{CheckReport, WarningKind};
use glowscore::num;

/// A one-prop show at `bpm` (4 beats a bar), with pattern keys as TOML lines.
fn one_prop(bpm: f64, tether: f64, mass: f64, pattern: &str, bars: u32) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = {bpm}
start_s = 0.5

[prop.p]
tether_m = {tether}
anchor_m = [0.0, 1.5, 0.0]
head_mass_kg = {mass}

[pattern.x]
{pattern}

[[section]]
bars = [1, {bars}]
p = "x"
"#
    )
}

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

#[test]
fn standard_gravity_is_the_cgpm_value() {
    // 3rd CGPM (1901): standard acceleration of gravity 980.665 cm/s^2.
    assert_eq!(G0, 9.80665);
}

#[test]
fn vertical_circle_has_textbook_tension_at_top_and_bottom() {
    // Halliday, Resnick and Walker, Fundamentals of Physics, vertical circle:
    // T_top = m (w^2 r - g), T_bottom = m (w^2 r + g). The hand is still
    // (hand radius 0), one head turn per beat at 120 bpm: w = 4 pi rad/s.
    // head_start_deg = 37 puts the top and bottom between the search's
    // samples, so this also checks the refinement (sampling alone is off
    // by about (2 pi / 64)^2 / 2 of the swing, half a percent).
    let (m, r) = (0.2, 0.5);
    let w = 4.0 * PI;
    for hand in ["hand_radius_m = 0", "hand = [{ radius_m = 0, turns = 1 }]"] {
        let pattern =
            format!("plane = \"wall\"\nbeats = 1\n{hand}\nhead_turns = 1\nhead_start_deg = 37");
        let rep = report(&one_prop(120.0, r, m, &pattern, 2));
        let p = &rep.props[0];
        close(p.min_tension_n, m * (w * w * r - G0), 1e-12, "T at the top");
        close(
            p.max_tension_n,
            m * (w * w * r + G0),
            1e-12,
            "T at the bottom",
        );
        close(
            p.min_tension_weights,
            (w * w * r - G0) / G0,
            1e-12,
            "in weights",
        );
        // The head reaches 12 o'clock when 37 + 360 u = 360: u = 323/360 beats
        // of 0.5 s, after bar 1 beat 1 at 0.5 s; 6 o'clock 180 deg earlier.
        let top = 0.5 + 0.5 * 323.0 / 360.0;
        close(
            p.min_tension_at.unwrap().time_s,
            top,
            1e-9,
            "time of the top",
        );
        close(
            p.max_tension_at.unwrap().time_s,
            top - 0.25,
            1e-9,
            "time of the bottom",
        );
        // Uniform circular motion: speed w r, acceleration w^2 r.
        close(p.max_speed_m_s, w * r, 1e-12, "speed");
        close(p.max_acc_g, w * w * r / G0, 1e-12, "acceleration in g");
        close(p.max_head_turns_per_s, 2.0, 1e-12, "head turns per second");
        close(
            p.max_hand_turns_per_s,
            0.0,
            0.0,
            "a still hand does not turn",
        );
        assert_eq!(count(&rep, WarningKind::Slack), 0);
    }
}

#[test]
fn tether_goes_slack_at_the_top_just_below_w2r_equals_g() {
    // Halliday, Resnick and Walker: the string stays taut at the top only
    // while w^2 r >= g. With r = 0.5 m the critical rate is
    // sqrt(g / r) / (2 pi) turns per second; one turn per beat.
    let (m, r) = (0.15, 0.5);
    let critical_bpm = 60.0 * (G0 / r).sqrt() / TAU;
    let pattern =
        "plane = \"wall\"\nbeats = 1\nhand_radius_m = 0\nhead_turns = 1\nhead_start_deg = 180";
    let below = report(&one_prop(0.99 * critical_bpm, r, m, pattern, 2));
    let above = report(&one_prop(1.01 * critical_bpm, r, m, pattern, 2));
    assert!(below.props[0].min_tension_n < 0.0);
    assert!(above.props[0].min_tension_n > 0.0);
    assert_eq!(count(&above, WarningKind::Slack), 0);
    // One slack stretch per turn: 8 turns, each centred on the top. Where
    // T = m (w^2 r - g cos theta) < 0, |theta| < acos(w^2 r / g): the stretch
    // lasts 2 acos(w^2 r / g) / w.
    let w = TAU * 0.99 * critical_bpm / 60.0;
    let slack: Vec<_> = below
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::Slack)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(slack.len(), 8);
    let want = 2.0 * (w * w * r / G0).acos() / w;
    for s in &slack {
        close(s.duration_s.unwrap(), want, 1e-9, "slack duration");
        close(
            s.value.unwrap(),
            m * (w * w * r - G0),
            1e-12,
            "worst tension",
        );
        assert_eq!(s.prop, "p");
    }
    close(below.props[0].slack_s, 8.0 * want, 1e-8, "total slack");
    // The first top is half a turn in (head_start_deg = 180).
    let period = 60.0 / (0.99 * critical_bpm);
    close(
        slack[0].at.time_s,
        0.5 + 0.5 * period - want / 2.0,
        1e-9,
        "start",
    );
}

#[test]
fn floor_circle_tension_is_the_centripetal_force_alone() {
    // Halliday, Resnick and Walker, uniform circular motion: the net inward
    // force is m w^2 r. The taut-tether model keeps the head in the floor
    // plane, so gravity is at right angles to the tether and drops out of
    // T = -m (a - g) . u: T = m w^2 r all the way round (a real head would
    // sag below the plane until the tether carried its weight too).
    let (m, r) = (0.12, 0.6);
    let pattern = "plane = \"floor\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let rep = report(&one_prop(90.0, r, m, pattern, 1));
    let w = TAU * 90.0 / 60.0 / 2.0;
    let p = &rep.props[0];
    close(p.min_tension_n, m * w * w * r, 1e-12, "min");
    close(p.max_tension_n, m * w * w * r, 1e-12, "max");
    // A constant figure is reported at its first instant.
    close(
        p.min_tension_at.unwrap().time_s,
        0.5,
        1e-12,
        "first instant",
    );
}

#[test]
fn a_resting_head_hangs_with_its_weight() {
    // Newton's second law at rest: T = m g. Bars 3-4 have no placement for
    // `p`, and the slow floor circle has less tension than the weight.
    let text = format!(
        "{}\n[[section]]\nbars = [3, 4]\n",
        one_prop(
            60.0,
            0.5,
            0.25,
            "plane = \"floor\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1",
            2
        )
    );
    let rep = report(&text);
    let p = &rep.props[0];
    close(p.max_tension_n, 0.25 * G0, 1e-12, "weight");
    close(p.max_tension_weights, 1.0, 1e-12, "one weight");
    // Bar 3 starts 8 beats (8 s) after 0.5 s.
    close(p.max_tension_at.unwrap().time_s, 8.5, 1e-12, "rest starts");
}

#[test]
fn a_tempo_change_inside_a_section_changes_the_tension() {
    // Same vertical circle as the textbook case, slack below the critical
    // tempo in bars 1-2 and taut above it from bar 3 (a [[tempo]] change).
    let r = 0.5;
    let critical_bpm = 60.0 * (G0 / r).sqrt() / TAU;
    let text = one_prop(
        0.9 * critical_bpm,
        r,
        0.1,
        "plane = \"wall\"\nbeats = 1\nhand_radius_m = 0\nhead_turns = 1\nhead_start_deg = 180",
        4,
    ) + &format!("\n[[tempo]]\nbar = 3\nbpm = {}\n", 1.1 * critical_bpm);
    let show = common::show(&text);
    let rep = check_show(&show).unwrap();
    let bar3 = show.tempo.time_at_bar(3);
    let slack: Vec<_> = rep
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::Slack)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(slack.len(), 8, "one per turn in bars 1-2 only");
    assert!(
        slack
            .iter()
            .all(|s| s.at.time_s + s.duration_s.unwrap() < bar3)
    );
    let w = TAU * 1.1 * critical_bpm / 60.0;
    close(
        rep.props[0].max_tension_n,
        0.1 * (w * w * r + G0),
        1e-12,
        "faster bottom",
    );
}

#[test]
fn spin_rates_beyond_common_practice_warn() {
    // Common practice: about 2.5 to 3 head turns per second sustained.
    let pattern = "plane = \"wall\"\nbeats = 1\nhand_radius_m = 0.1\nhead_turns = 1";
    let fast = report(&one_prop(240.0, 0.5, 0.15, pattern, 2));
    let usual = report(&one_prop(150.0, 0.5, 0.15, pattern, 2));
    close(fast.props[0].max_head_turns_per_s, 4.0, 1e-12, "240 bpm");
    close(fast.props[0].max_hand_turns_per_s, 4.0, 1e-12, "hand too");
    let w: Vec<_> = fast
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::SpinRate)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(w.len(), 2, "one for the hand, one for the tether");
    close(w[0].duration_s.unwrap(), 2.0, 1e-12, "two bars at 240 bpm");
    assert_eq!(count(&usual, WarningKind::SpinRate), 0);
    close(usual.props[0].max_head_turns_per_s, 2.5, 1e-12, "150 bpm");
}

/// Two fixed-hand wall circles of radius 0.5 m, anchors at x = -d and +d,
/// the right one mirrored; both start at 12 o'clock.
fn pair(d: f64, extra_prop_keys: &str) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = 60

[prop.a]
tether_m = 0.5
anchor_m = [{a}, 1.5, 0.0]
{extra_prop_keys}

[prop.b]
tether_m = 0.5
anchor_m = [{d}, 1.5, 0.0]
{extra_prop_keys}

[pattern.circle]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 1

[[section]]
bars = [1, 2]
a = "circle"
b = {{ pattern = "circle", mirror = true }}
"#,
        a = -d
    )
}

#[test]
fn heads_crossing_a_known_point_collide_there() {
    // Geometry: at clock 90 deg the head of `a` is at -0.5 + 0.5 = 0 m, and
    // the mirrored `b` is at 0.5 - 0.5 = 0 m: both at (0, 1.5, 0), one beat
    // (1 s) in, then once every 4 s.
    let rep = report(&pair(0.5, ""));
    let pf = &rep.pairs[0];
    assert_eq!(pf.props, ["a".to_string(), "b".to_string()]);
    close(pf.contact_m, 0.1, 1e-15, "default radii 0.05 m");
    assert!(pf.min_head_distance_m.unwrap() < 1e-12);
    let t = pf.min_head_distance_at.unwrap().time_s;
    assert!((t - 1.0).abs() < 1e-6 || (t - 5.0).abs() < 1e-6, "{t}");
    let hits: Vec<_> = rep
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::Collision)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(hits.len(), 2, "one per turn");
    for (h, when) in hits.iter().zip([1.0, 5.0]) {
        assert_eq!((h.prop.as_str(), h.other_prop.as_deref()), ("a", Some("b")));
        let (s, e) = (h.at.time_s, h.at.time_s + h.duration_s.unwrap());
        assert!(s < when && when < e, "contact [{s}, {e}] holds {when}");
        assert!(h.message.contains("heads meet"), "{}", h.message);
    }
}

#[test]
fn heads_passing_at_a_known_distance_collide_only_if_larger() {
    // Geometry: anchors 1.2 m apart, heads 0.5 m out: closest 0.2 m apart
    // at clock 90 deg (1 s), where the tethers lie on one line 0.2 m apart.
    let rep = report(&pair(0.6, ""));
    let pf = &rep.pairs[0];
    close(pf.min_head_distance_m.unwrap(), 0.2, 1e-12, "heads");
    close(pf.min_tether_distance_m.unwrap(), 0.2, 1e-12, "tethers");
    close(pf.min_head_distance_at.unwrap().time_s, 1.0, 1e-6, "when");
    assert_eq!(count(&rep, WarningKind::Collision), 0);
    // Heads 0.24 m across (radius 0.12) touch at 0.24 m: contact.
    let rep = report(&pair(0.6, "head_radius_m = 0.12"));
    assert_eq!(count(&rep, WarningKind::Collision), 2);
    // Contact while 1.2 - sin(theta) < 0.24 (distance of the head centres,
    // on one horizontal line, theta from 12 o'clock), which the tethers
    // share: |theta - 90 deg| < acos(0.96), at 90 deg per second.
    let half = num::deg(0.96f64.acos()) / 90.0;
    let w = rep
        .warnings
        .iter()
        .find(|x| x.kind == WarningKind::Collision)
        .unwrap()
        .instances()[0]
        .clone();
    close(w.at.time_s, 1.0 - half, 1e-9, "contact starts");
    close(w.duration_s.unwrap(), 2.0 * half, 1e-9, "contact lasts");
}

#[test]
fn props_that_never_move_together_are_not_compared() {
    // docs/conventions.md, "Check JSON": collisions only while both props move.
    let text = pair(0.5, "").replace("b = { pattern = \"circle\", mirror = true }", "");
    let rep = report(&text);
    assert_eq!(rep.pairs[0].min_head_distance_m, None);
    assert_eq!(count(&rep, WarningKind::Collision), 0);
}

/// Prop `p` plays pattern `a` in bars 1-2 and `b` in bars 3-4 (tether
/// 0.5 m, pattern keys given); with `rest`, `p` rests in bars 5-6 while `q`
/// plays `a`, and plays `b` again in bars 7-8.
fn two_sections(a: &str, b: &str, rest: bool) -> String {
    let mut s = format!(
        r#"
[show]
frame_rate = 500
bpm = 60

[prop.p]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]

[prop.q]
tether_m = 0.5
anchor_m = [3.0, 1.5, 0.0]

[pattern.a]
plane = "wall"
beats = 4
head_turns = 1
{a}

[pattern.b]
plane = "wall"
beats = 4
head_turns = 1
{b}

[[section]]
bars = [1, 2]
p = "a"

[[section]]
bars = [3, 4]
p = "b"
"#
    );
    if rest {
        s.push_str(
            "\n[[section]]\nbars = [5, 6]\nq = \"a\"\n\n[[section]]\nbars = [7, 8]\np = \"b\"\n",
        );
    }
    s
}

#[test]
fn a_section_change_with_a_known_offset_jumps_by_the_chord() {
    // Geometry: moving the head from 12 to 3 o'clock on a circle of 0.5 m
    // jumps the chord 2 r sin(45 deg) = r sqrt 2. Each pattern turns a whole
    // number of times per section, so it ends where it started.
    let rep = report(&two_sections(
        "hand_radius_m = 0",
        "hand_radius_m = 0\nhead_start_deg = 90",
        true,
    ));
    let jumps: Vec<_> = rep
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::Jump && x.prop == "p")
        .collect();
    // Bar 3: a -> b, r sqrt 2. Bar 5: b (3 o'clock) -> rest (6 o'clock),
    // r sqrt 2 again. Bar 7: rest -> b, r sqrt 2. No jump at bar 1 (the
    // show's start) nor at the end.
    assert_eq!(jumps.len(), 3, "{jumps:?}");
    for (j, bar) in jumps.iter().zip([3, 5, 7]) {
        assert_eq!(j.prop, "p");
        assert_eq!((j.at.bar, j.at.beat), (bar, 1.0));
        close(j.at.time_s, (bar - 1) as f64 * 4.0, 1e-12, "at the bar");
        close(j.value.unwrap(), 0.5 * 2f64.sqrt(), 1e-12, "chord");
    }
    assert!(jumps[1].message.contains("to rest"), "{}", jumps[1].message);
    // `q` rests, plays `a` in bars 5-6 (top), rests: jumps of 2 r each way.
    let q: Vec<_> = rep
        .warnings
        .iter()
        .filter(|x| x.kind == WarningKind::Jump && x.prop == "q")
        .collect();
    assert_eq!(q.len(), 2);
    close(q[0].value.unwrap(), 1.0, 1e-12, "rest to the top");
}

#[test]
fn jumps_under_one_centimetre_do_not_warn() {
    // Extensions whose hand circles differ by 9 mm and by 11 mm in radius:
    // the head moves by that much at the change (both start at 12 o'clock).
    let small = report(&two_sections(
        "hand_radius_m = 0.2",
        "hand_radius_m = 0.209",
        false,
    ));
    assert_eq!(count(&small, WarningKind::Jump), 0);
    let big = report(&two_sections(
        "hand_radius_m = 0.2",
        "hand_radius_m = 0.211",
        false,
    ));
    assert_eq!(count(&big, WarningKind::Jump), 1);
    let j = big
        .warnings
        .iter()
        .find(|x| x.kind == WarningKind::Jump)
        .unwrap();
    close(j.value.unwrap(), 0.011, 1e-12, "11 mm");
}

#[test]
fn reach_and_stage_space_of_known_circles() {
    // Geometry: an extension (hand radius 0.2, tether 0.5) reaches 0.7 m
    // from its anchor; anchors at x = -0.3 and +0.3 put the centre line at
    // x = 0, 1.0 m from the farthest head; a wheel circle of 0.7 m spans
    // z = -0.7 to 0.7. Heads add their radius (0.05 m by default).
    let text = r#"
[show]
frame_rate = 500
bpm = 60

[prop.left]
tether_m = 0.5
anchor_m = [-0.3, 1.5, 0.0]

[prop.right]
tether_m = 0.5
anchor_m = [0.3, 1.5, 0.0]

[pattern.ext]
plane = "wall"
beats = 4
hand_radius_m = 0.2
head_turns = 1

[pattern.wheel]
plane = "wheel"
beats = 4
hand_radius_m = 0.2
head_turns = 1

[[section]]
bars = [1, 2]
left = "ext"
right = { pattern = "ext", mirror = true }

[[section]]
bars = [3, 4]
right = "wheel"
"#;
    let rep = report(text);
    for p in &rep.props {
        close(p.reach_m, 0.7, 1e-12, "reach");
        close(p.reach_from_centre_m, 1.0, 1e-12, "from the centre line");
    }
    let st = rep.stage.as_ref().unwrap();
    assert_eq!(st.centre_line_m, [0.0, 0.0]);
    close(st.swept_m.x_min_m, -1.05, 1e-12, "left edge");
    close(st.swept_m.x_max_m, 1.05, 1e-12, "right edge");
    close(st.swept_m.z_min_m, -0.75, 1e-12, "back edge");
    close(st.swept_m.z_max_m, 0.75, 1e-12, "front edge");
    close(st.clear_space_m.width_m, 2.1 + 1.0, 1e-12, "clear width");
    close(st.clear_space_m.depth_m, 1.5 + 1.0, 1e-12, "clear depth");
    close(
        st.highest_head_m,
        1.5 + 0.7 + 0.05,
        1e-12,
        "top of the head",
    );
    // `left` rests in bars 3-4: hanging 0.5 m under its anchor.
    close(
        st.lowest_head_m,
        1.5 - 0.7 - 0.05,
        1e-12,
        "bottom of the head",
    );
}

#[test]
fn refined_extremes_bound_a_dense_sampling_of_the_motion_model() {
    // Consistency with the project's motion model (PropMotion::state_at):
    // tension, speed and reach of an antispin flower sampled every 0.1 ms
    // never beat the refined extremes, and come within 1e-6 of them.
    let text = one_prop(
        100.0,
        0.55,
        0.14,
        "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0.18\nhead_turns = -3\nhead_start_deg = 11",
        1,
    );
    let show = common::show(&text);
    let rep = check_show(&show).unwrap();
    let m = glowscore::motion::PropMotion::new(&show, 0);
    let (t0, t1) = (show.tempo.start_s(), show.end_s());
    let (mut tmin, mut tmax, mut vmax, mut rmax) =
        (f64::INFINITY, f64::NEG_INFINITY, 0.0f64, 0.0f64);
    let n = ((t1 - t0) / 1e-4) as usize;
    for i in 0..n {
        let st = m.state_at(&show.tempo, t0 + (t1 - t0) * i as f64 / n as f64);
        let q = st.head_m - st.hand_m;
        let u = q / q.norm();
        let g = glowscore::geom::Vec3::new(0.0, -G0, 0.0);
        let t = -0.14 * (st.head_acc - g).dot(&u);
        tmin = tmin.min(t);
        tmax = tmax.max(t);
        vmax = vmax.max(st.head_vel.norm());
        rmax = rmax.max((st.head_m - show.props[0].anchor_m).norm());
    }
    let p = &rep.props[0];
    for (refined, sampled, low) in [
        (p.min_tension_n, tmin, true),
        (p.max_tension_n, tmax, false),
        (p.max_speed_m_s, vmax, false),
        (p.reach_m, rmax, false),
    ] {
        let beats = if low {
            refined <= sampled
        } else {
            refined >= sampled
        };
        assert!(
            beats && (refined - sampled).abs() < 1e-6,
            "{refined} vs {sampled}"
        );
    }
}
