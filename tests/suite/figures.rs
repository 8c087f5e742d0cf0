//! Figures by their trade names and continuous joins, against the trade's
//! rules (common practice), the CRC Standard Mathematical Tables (the
//! deltoid and the astroid as hypocycloids) and an independent geometric
//! computation of the smallest jump.

use crate::common;

use glowscore::check::CheckReport;
use glowscore::events::find_events;
use glowscore::geom::Vec3;
use glowscore::model::{EventKind, Show};
use glowscore::motion::{PropMotion, simulate};
use glowscore::num::{cos, pow, sin};

/// A one-prop show (tether 0.5 m, 60 bpm, 4 beats per bar, 4 beats per
/// hand revolution) playing the pattern given by `keys` for `bars` bars.
fn show_of(keys: &str, bars: u32) -> Show {
    common::one_pattern(
        0.5,
        &format!("plane = \"wall\"\nbeats = 4\n{keys}"),
        bars,
        0.05,
    )
}

fn events(show: &Show, kind: EventKind) -> Vec<glowscore::events::Event> {
    find_events(show, &simulate(show))
        .into_iter()
        .filter(|e| e.kind == kind)
        .collect()
}

/// The head's position in the plane's own coordinates at phase `u` of the
/// only span.
fn head_at(show: &Show, u: f64) -> [f64; 2] {
    let m = simulate(show);
    m[0].spans[0].head.point(u)
}

#[test]
fn figures_are_their_raw_keys() {
    // Common practice: extension m = 1 (tether along the arm), isolation
    // m = 1 with the tether opposite, inspin N petals m = N + 1, antispin
    // N petals m = 1 - N.
    let cases = [
        (
            "figure = \"extension\"",
            "head_turns = 1\nhead_start_deg = 30",
        ),
        (
            "figure = \"isolation\"",
            "head_turns = 1\nhead_start_deg = 210",
        ),
        (
            "figure = \"inspin\"\npetals = 3",
            "head_turns = 4\nhead_start_deg = 30",
        ),
        (
            "figure = \"antispin\"\npetals = 4",
            "head_turns = -3\nhead_start_deg = 30",
        ),
        (
            "figure = \"antispin\"\npetals = 2",
            "head_turns = -1\nhead_start_deg = 30",
        ),
    ];
    for (figure, raw) in cases {
        let a = show_of(
            &format!("hand_radius_m = 0.15\nhand_start_deg = 30\n{figure}"),
            1,
        );
        let b = show_of(
            &format!("hand_radius_m = 0.15\nhand_start_deg = 30\n{raw}"),
            1,
        );
        let (pa, pb) = (&a.patterns[0], &b.patterns[0]);
        assert_eq!(pa.head_turns, pb.head_turns, "{figure}");
        assert_eq!(pa.head_start_deg, pb.head_start_deg, "{figure}");
        for i in 0..50 {
            let u = i as f64 / 37.0;
            assert_eq!(head_at(&a, u), head_at(&b, u), "{figure} at u = {u}");
        }
    }
}

#[test]
fn stall_sets_the_hand_radius_from_the_prop_that_plays_it() {
    // Common practice: R = tether_m * |head_turns|.
    for (petals, tether) in [(2u32, 0.5), (3, 0.4), (4, 0.3), (5, 0.25)] {
        let s = common::one_pattern(
            tether,
            &format!(
                "plane = \"wall\"\nbeats = 4\nfigure = \"antispin\"\npetals = {petals}\nstall = true"
            ),
            1,
            0.0,
        );
        let m = simulate(&s);
        let hand = m[0].spans[0].hand.rotors();
        assert_eq!(hand.len(), 1);
        let want = tether * f64::from(petals - 1);
        assert!((hand[0].radius_m - want).abs() < 1e-15, "petals {petals}");
    }
}

#[test]
fn the_event_finder_counts_the_trade_petals() {
    // Common practice: an inspin flower of N petals and an antispin flower
    // of N petals both have N tips per hand revolution.
    for n in 1..=6u32 {
        let s = show_of(
            &format!("hand_radius_m = 0.12\nfigure = \"inspin\"\npetals = {n}"),
            3,
        );
        assert_eq!(
            events(&s, EventKind::Tip).len(),
            3 * n as usize,
            "inspin {n}"
        );
    }
    for n in 2..=7u32 {
        let s = show_of(
            &format!("hand_radius_m = 0.12\nfigure = \"antispin\"\npetals = {n}"),
            3,
        );
        assert_eq!(
            events(&s, EventKind::Tip).len(),
            3 * n as usize,
            "antispin {n}"
        );
        assert!(
            events(&s, EventKind::Stall).is_empty(),
            "antispin {n} never stops"
        );
    }
    // Extension and isolation: the distance never changes, no extrema.
    for f in ["extension", "isolation"] {
        let s = show_of(&format!("hand_radius_m = 0.12\nfigure = \"{f}\""), 2);
        assert!(events(&s, EventKind::Tip).is_empty(), "{f}");
        assert!(events(&s, EventKind::Inner).is_empty(), "{f}");
    }
}

#[test]
fn stall_figures_stop_at_every_tip() {
    // Common practice: with R = r |m| the head stops dead at each tip, at
    // R + r from the anchor (the cusps of a hypocycloid).
    let r = 0.5;
    for n in 2..=6u32 {
        let s = show_of(
            &format!("figure = \"antispin\"\npetals = {n}\nstall = true"),
            2,
        );
        let stalls = events(&s, EventKind::Stall);
        assert_eq!(stalls.len(), 2 * n as usize, "antispin {n} stall");
        let anchor = s.props[0].anchor_m;
        let reach = r * f64::from(n - 1) + r;
        for e in &stalls {
            assert!(e.speed_m_s < 1e-6, "antispin {n}: speed {}", e.speed_m_s);
            let d = (e.position_m - anchor).norm();
            assert!(
                (d - reach).abs() < 1e-6,
                "antispin {n}: stall at {d} m, tip at {reach}"
            );
        }
        // The stalls are the tips.
        let tips = events(&s, EventKind::Tip);
        assert_eq!(tips.len(), stalls.len());
        for (a, b) in tips.iter().zip(&stalls) {
            assert!((a.beat - b.beat).abs() < 1e-6);
        }
    }
}

#[test]
fn three_petal_stall_is_the_deltoid_and_four_the_astroid() {
    // CRC Standard Mathematical Tables, hypocycloids: the deltoid
    // x = 2b cos t + b cos 2t, y = 2b sin t - b sin 2t (three cusps; length
    // 16 b) and the astroid x = a cos^3 t, y = a sin^3 t (four cusps;
    // x^(2/3) + y^(2/3) = a^(2/3); length 6 a).
    let b = 0.5;
    let deltoid = show_of("figure = \"antispin\"\npetals = 3\nstall = true", 1);
    let astroid = show_of("figure = \"antispin\"\npetals = 4\nstall = true", 1);
    let a = 4.0 * b;
    let n = 2000;
    let (mut len_d, mut len_a) = (0.0, 0.0);
    let mut last: Option<([f64; 2], [f64; 2])> = None;
    for i in 0..=n {
        let u = i as f64 / n as f64;
        let t = std::f64::consts::TAU * u;
        let pd = head_at(&deltoid, u);
        let want = [
            2.0 * b * cos(t) + b * cos(2.0 * t),
            2.0 * b * sin(t) - b * sin(2.0 * t),
        ];
        assert!(
            (pd[0] - want[0]).abs() < 1e-12 && (pd[1] - want[1]).abs() < 1e-12,
            "deltoid at {u}"
        );
        let pa = head_at(&astroid, u);
        let want = [a * cos(t).powi(3), a * sin(t).powi(3)];
        assert!(
            (pa[0] - want[0]).abs() < 1e-12 && (pa[1] - want[1]).abs() < 1e-12,
            "astroid at {u}"
        );
        let implicit = pow(pa[0].abs(), 2.0 / 3.0) + pow(pa[1].abs(), 2.0 / 3.0);
        assert!(
            (implicit - pow(a, 2.0 / 3.0)).abs() < 1e-9,
            "astroid equation at {u}"
        );
        if let Some((qd, qa)) = last {
            len_d += (pd[0] - qd[0]).hypot(pd[1] - qd[1]);
            len_a += (pa[0] - qa[0]).hypot(pa[1] - qa[1]);
        }
        last = Some((pd, pa));
    }
    assert!((len_d - 16.0 * b).abs() < 1e-4, "deltoid length {len_d}");
    assert!((len_a - 6.0 * a).abs() < 1e-4, "astroid length {len_a}");
}

#[test]
fn two_petal_stall_is_the_straight_line() {
    // Common practice: antispin of two petals at R = r runs back and forth
    // on a straight line four tethers long (CRC: the hypocycloid of two
    // cusps degenerates to a diameter of the fixed circle).
    let s = show_of(
        "figure = \"antispin\"\npetals = 2\nstall = true\nhand_start_deg = 40",
        1,
    );
    let dir = [cos(40f64.to_radians()), sin(40f64.to_radians())];
    let mut far: f64 = 0.0;
    for i in 0..=500 {
        let p = head_at(&s, i as f64 / 500.0);
        let across = p[0] * dir[1] - p[1] * dir[0];
        assert!(across.abs() < 1e-12, "off the line by {across}");
        far = far.max((p[0] * dir[0] + p[1] * dir[1]).abs());
    }
    assert!((far - 2.0 * 0.5).abs() < 1e-12, "half-length {far}");
}

/// The trade figures as pattern keys with one hand radius (no stall).
const FIGURES: [&str; 5] = [
    "figure = \"extension\"",
    "figure = \"isolation\"",
    "figure = \"inspin\"\npetals = 3",
    "figure = \"antispin\"\npetals = 4",
    "figure = \"antispin\"\npetals = 2",
];

/// Two sections of two bars, the second `join = "continue"`: pattern `a`
/// then pattern `b` (keys without `plane`).
fn joined(a: &str, plane_a: &str, b: &str, plane_b: &str, delay_b: f64) -> Show {
    common::show(&format!(
        r#"
[show]
frame_rate = 500
bpm = 96
beats_per_bar = 4

[prop.p]
tether_m = 0.55
anchor_m = [0.2, 1.5, -0.3]

[pattern.a]
plane = "{plane_a}"
beats = 4
{a}

[pattern.b]
plane = "{plane_b}"
beats = 2
hand_start_deg = 123
{b}

[[section]]
bars = [1, 2]
p = "a"

[[section]]
bars = [3, 5]
join = "continue"
p = {{ pattern = "b", delay_beats = {delay_b} }}
"#
    ))
}

/// Hand and head just before and just after the join at bar 3.
fn across(m: &PropMotion) -> ([Vec3; 2], [Vec3; 2]) {
    let (s0, s1) = (&m.spans[0], &m.spans[1]);
    let u0 = s0.phase(s0.beats());
    let u1 = s1.phase(0.0);
    (
        [
            s0.to_stage(s0.hand.point(u0)),
            s0.to_stage(s0.head.point(u0)),
        ],
        [
            s1.to_stage(s1.hand.point(u1)),
            s1.to_stage(s1.head.point(u1)),
        ],
    )
}

fn report(show: &Show) -> CheckReport {
    common::check_show(show).expect("checks")
}

#[test]
fn joins_between_any_two_figures_in_one_plane_are_exact() {
    for plane in ["wall", "wheel", "floor"] {
        for a in FIGURES {
            for b in FIGURES {
                for delay in [0.0, 0.7] {
                    let s = joined(
                        &format!("hand_radius_m = 0.15\nhand_start_deg = 10\n{a}"),
                        plane,
                        &format!("hand_radius_m = 0.15\n{b}"),
                        plane,
                        delay,
                    );
                    let m = simulate(&s);
                    let (x0, x1) = across(&m[0]);
                    let what = format!("{plane}: {a} -> {b}, delay {delay}");
                    assert!((x1[0] - x0[0]).norm() < 1e-9, "{what}: hand");
                    assert!((x1[1] - x0[1]).norm() < 1e-9, "{what}: head");
                    let j = &report(&s).props[0].joins;
                    assert_eq!(j.len(), 1);
                    assert!(j[0].jump_mm < 1e-6, "{what}: reported {} mm", j[0].jump_mm);
                    assert_eq!(j[0].join, "continue");
                }
            }
        }
    }
}

#[test]
fn mirrored_reversed_and_staff_joins_are_exact() {
    let s = common::show(
        r#"
[show]
frame_rate = 500
bpm = 120
beats_per_bar = 4

[prop.s]
kind = "staff"
tether_m = 0.6
tail_m = 0.6
anchor_m = [0, 1.4, 0]

[pattern.a]
plane = "wheel"
beats = 4
hand_radius_m = 0.2
figure = "antispin"
petals = 3

[pattern.b]
plane = "wheel"
beats = 3
hand_radius_m = 0.2
figure = "inspin"
petals = 2
reverse = true

[[section]]
bars = [1, 2]
s = "a"

[[section]]
bars = [3, 3]
join = "continue"
s = { pattern = "b", mirror = true, delay_beats = 0.4 }
"#,
    );
    let r = report(&s);
    let j = &r.props[0].joins[0];
    assert!(j.jump_mm < 1e-6, "{} mm ({})", j.jump_mm, j.end);
    assert!(j.hand_jump_mm < 1e-6);
}

/// Closest point to `target` on the circle of radius `radius` about
/// `centre` in the plane spanned by `up` and `right`, by sampling the circle
/// at 3600 points and refining the best by golden-section search: an
/// independent computation (no projection formula).
fn closest_on_circle(centre: Vec3, radius: f64, up: Vec3, right: Vec3, target: Vec3) -> Vec3 {
    let at = |a: f64| centre + (up * cos(a) + right * sin(a)) * radius;
    let dist = |a: f64| (at(a) - target).norm();
    let n = 3600;
    let step = std::f64::consts::TAU / n as f64;
    let best = (0..n)
        .map(|i| i as f64 * step)
        .min_by(|a, b| dist(*a).total_cmp(&dist(*b)))
        .unwrap();
    let (mut lo, mut hi) = (best - step, best + step);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..200 {
        let c = hi - g * (hi - lo);
        let d = lo + g * (hi - lo);
        if dist(c) < dist(d) {
            hi = d;
        } else {
            lo = c;
        }
    }
    at(0.5 * (lo + hi))
}

#[test]
fn joins_that_cannot_be_exact_leave_the_jump_between_the_start_circles() {
    // Plane changes and different hand radii: the hand starts at the point of
    // its new circle nearest where it was, the head at the point of its own
    // start circle (the tether about that hand point, in the new plane)
    // nearest where it was. The check's reported jump is that distance.
    let planes = ["wall", "wheel", "floor"];
    let mut cases = 0;
    for pa in planes {
        for pb in planes {
            for (ra, rb) in [(0.15, 0.15), (0.15, 0.3), (0.25, 0.1)] {
                if pa == pb && ra == rb {
                    continue;
                }
                for (a, b) in [
                    (FIGURES[3], FIGURES[2]),
                    (FIGURES[0], FIGURES[4]),
                    (FIGURES[1], FIGURES[3]),
                ] {
                    let s = joined(
                        &format!("hand_radius_m = {ra}\nhand_start_deg = 35\n{a}"),
                        pa,
                        &format!("hand_radius_m = {rb}\n{b}"),
                        pb,
                        0.3,
                    );
                    let m = simulate(&s);
                    let (x0, x1) = across(&m[0]);
                    let plane = s.patterns[1].plane;
                    let anchor = s.props[0].anchor_m;
                    let hand = closest_on_circle(anchor, rb, plane.up(), plane.right(), x0[0]);
                    let head = closest_on_circle(hand, 0.55, plane.up(), plane.right(), x0[1]);
                    let what = format!("{pa} R {ra} -> {pb} R {rb}: {a} -> {b}");
                    assert!((x1[0] - hand).norm() < 1e-7, "{what}: hand");
                    let want_mm = (head - x0[1]).norm() * 1000.0;
                    let j = &report(&s).props[0].joins[0];
                    assert!(
                        (j.jump_mm - want_mm).abs() < 1e-4,
                        "{what}: reported {} mm, the circles give {want_mm} mm",
                        j.jump_mm
                    );
                    assert!(
                        ((j.hand_jump_mm / 1000.0) - (hand - x0[0]).norm()).abs() < 1e-7,
                        "{what}: hand jump"
                    );
                    cases += 1;
                }
            }
        }
    }
    assert!(cases > 20);
}

#[test]
fn restart_joins_warn_with_the_line_to_paste() {
    // The same two figures restarted: the head jumps, the warning names
    // `join = "continue"` and the start angles, and pasting those angles
    // removes the jump.
    let text = |angles: &str, join: &str| {
        format!(
            r#"
[show]
frame_rate = 500
bpm = 100
beats_per_bar = 4

[prop.p]
tether_m = 0.5
anchor_m = [0, 1.5, 0]

[pattern.a]
plane = "wall"
beats = 4
hand_radius_m = 0.15
figure = "antispin"
petals = 4

[pattern.b]
plane = "wall"
beats = 4
hand_radius_m = 0.15
figure = "inspin"
petals = 3
{angles}

[[section]]
bars = [1, 1]
p = "a"

[[section]]
bars = [2, 3]
{join}
p = {{ pattern = "b", delay_beats = 0.5 }}
"#
        )
    };
    let s = common::show(&text("", ""));
    let r = report(&s);
    let w: Vec<_> = r
        .warnings
        .iter()
        .filter(|w| w.kind.name() == "jump")
        .collect();
    assert_eq!(w.len(), 1, "{:?}", r.warnings);
    let msg = &w[0].message;
    assert!(msg.contains("join = \"continue\""), "{msg}");
    let start = msg.find("`hand_start_deg = ").expect("angles to paste") + 1;
    let end = start + msg[start..].find('`').unwrap();
    let paste = msg[start..end].replace(", ", "\n");
    let fixed = common::show(&text(&paste, ""));
    let j = &report(&fixed).props[0].joins[0];
    assert!(j.jump_mm < 0.01, "pasted angles leave {} mm", j.jump_mm);
    let continued = common::show(&text("", "join = \"continue\""));
    let r = report(&continued);
    assert!(r.props[0].joins[0].jump_mm < 1e-6);
    assert!(r.warnings.iter().all(|w| w.kind.name() != "jump"));
}

#[test]
fn every_listed_figure_pasted_plays_its_petals_and_stalls() {
    // `glowscore patterns`: each line's table, pasted into a show, gives a
    // pattern whose tips and stalls (found by the event finder) are the
    // petals and stalls listed, and whose reach is the one listed.
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moth-garden.toml");
    let opts = glowscore::commands::patterns::PatternOptions {
        prop: Some("left".to_string()),
        ..Default::default()
    };
    let mut out = Vec::new();
    glowscore::commands::patterns::run(&path, &opts, &mut out).expect("lists");
    let text = String::from_utf8(out).unwrap();
    let mut seen = 0;
    // Each figure: a summary line, then its table indented, then a blank line.
    for block in text.split("\n\n").skip(1) {
        let mut lines = block.lines();
        let line = lines.next().unwrap();
        let num = |key: &str| -> f64 {
            let at = line.find(key).unwrap_or_else(|| panic!("{key} in {line}")) + key.len();
            line[at..]
                .split_whitespace()
                .next()
                .unwrap()
                .parse()
                .unwrap()
        };
        let (petals, stalls, reach) = (num("petals "), num("stalls "), num("reach "));
        let table: Vec<&str> = lines.map(str::trim).collect();
        let name = table[0]
            .trim_start_matches("[pattern.")
            .trim_end_matches(']');
        let table = table.join("\n");
        let s = common::show(&format!(
            "[show]\nframe_rate = 500\nbpm = 60\nbeats_per_bar = 4\n\n[prop.left]\ntether_m = 0.55\nanchor_m = [0, 1.5, 0]\n\n{table}\n\n[[section]]\nbars = [1, 2]\nleft = {{ pattern = \"{name}\", delay_beats = 0.05 }}\n"
        ));
        // Two bars of 4 beats: two hand revolutions.
        assert_eq!(
            events(&s, EventKind::Tip).len() as f64,
            2.0 * petals,
            "{line}"
        );
        assert_eq!(
            events(&s, EventKind::Stall).len() as f64,
            2.0 * stalls,
            "{line}"
        );
        let m = simulate(&s);
        let far = (0..4000)
            .map(|i| {
                let p = m[0].spans[0].head.point(i as f64 / 4000.0);
                p[0].hypot(p[1])
            })
            .fold(0.0, f64::max);
        assert!((far - reach).abs() < 1e-3, "{line}: reach {far}");
        seen += 1;
    }
    assert_eq!(seen, 24, "every figure listed:\n{text}");
}

#[test]
fn a_continued_stall_still_stops_at_its_tips() {
    // Carrying the angles on turns and time-shifts a flower (m != 1) but
    // keeps its shape: the stall figure still stops dead at R + r.
    let s = joined(
        "hand_radius_m = 1.1\nfigure = \"inspin\"\npetals = 2",
        "wall",
        "figure = \"antispin\"\npetals = 3\nstall = true",
        "wall",
        0.2,
    );
    let r = report(&s);
    assert!(
        r.props[0].joins[0].jump_mm < 1e-6,
        "{:?}",
        r.props[0].joins[0]
    );
    let stalls: Vec<_> = events(&s, EventKind::Stall)
        .into_iter()
        .filter(|e| e.beat > 8.0)
        .collect();
    // Bars 3-5 at 2 beats a hand revolution: 6 revolutions, 3 stalls each
    // (one may fall on the end of the section, which has no events).
    assert!(stalls.len() >= 17, "{} stalls", stalls.len());
    let anchor = s.props[0].anchor_m;
    for e in &stalls {
        assert!(e.speed_m_s < 1e-6);
        assert!(((e.position_m - anchor).norm() - 3.0 * 0.55).abs() < 1e-6);
    }
}

#[test]
fn continuing_from_rest_turns_the_hand_toward_the_hanging_head() {
    // Rest before the section: hand at the anchor, head hanging straight
    // down. Every hand angle is as near; the hand goes toward the head
    // (6 o'clock) and the tether points down from it: the head jumps R.
    let s = common::show(
        r#"
[show]
frame_rate = 500
bpm = 100
beats_per_bar = 4

[prop.p]
tether_m = 0.5
anchor_m = [0, 1.5, 0]

[prop.q]
tether_m = 0.5
anchor_m = [2, 1.5, 0]

[pattern.f]
plane = "wall"
beats = 4
hand_radius_m = 0.15
figure = "antispin"
petals = 4

[[section]]
bars = [1, 1]
q = "f"

[[section]]
bars = [2, 3]
join = "continue"
p = "f"
"#,
    );
    let m = simulate(&s);
    let span = &m[0].spans[0];
    let u = span.phase(0.0);
    let hand = span.to_stage(span.hand.point(u));
    let head = span.to_stage(span.head.point(u));
    let anchor = s.props[0].anchor_m;
    assert!((hand - (anchor - Vec3::new(0.0, 0.15, 0.0))).norm() < 1e-12);
    assert!((head - (anchor - Vec3::new(0.0, 0.65, 0.0))).norm() < 1e-12);
    let j = &report(&s).props[0].joins[0];
    assert!((j.jump_mm - 150.0).abs() < 1e-6, "{} mm", j.jump_mm);
    assert_eq!(j.from, None);
    assert_eq!(j.to.as_deref(), Some("f"));
}

#[test]
fn the_listing_filters_by_petals_reach_and_stall() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moth-garden.toml");
    let list = |opts: glowscore::commands::patterns::PatternOptions| {
        let mut out = Vec::new();
        glowscore::commands::patterns::run(&path, &opts, &mut out).expect("lists");
        let text = String::from_utf8(out).unwrap();
        text.lines()
            .filter(|l| l.trim_start().starts_with("[pattern."))
            .map(|l| l.trim().to_string())
            .collect::<Vec<_>>()
    };
    let base = glowscore::commands::patterns::PatternOptions {
        prop: Some("left".to_string()),
        ..Default::default()
    };
    let four = list(glowscore::commands::patterns::PatternOptions {
        petals: Some(4),
        ..base.clone()
    });
    assert_eq!(
        four,
        [
            "[pattern.inspin_4]",
            "[pattern.antispin_4]",
            "[pattern.antispin_4_stall]"
        ]
    );
    let stalls = list(glowscore::commands::patterns::PatternOptions {
        stall: true,
        // Tether 0.55: a stall of N petals reaches 0.55 N.
        max_reach_m: Some(1.7),
        ..base.clone()
    });
    assert_eq!(
        stalls,
        ["[pattern.antispin_2_stall]", "[pattern.antispin_3_stall]"]
    );
    assert!(
        list(glowscore::commands::patterns::PatternOptions {
            max_reach_m: Some(0.3),
            ..base
        })
        .is_empty()
    );
}
