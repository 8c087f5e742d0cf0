//! Head paths that are handbook curves, checked against the published
//! values: CRC Standard Mathematical Tables and Formulae (D. Zwillinger, ed.),
//! section on plane curves: deltoid, astroid, cardioid and nephroid cusp
//! counts, arc lengths and areas.

use crate::common;

use std::f64::consts::PI;

use glowscore::events::{find_events, span_stats};
use glowscore::model::EventKind;
use glowscore::motion::{PropMotion, simulate};
use glowscore::num;

struct Curve {
    name: &'static str,
    hand: f64,
    turns: i32,
    head_start_deg: f64,
    cusps: usize,
    length: f64,
    area: f64,
}

/// Signed area enclosed by the head path over the span, by Gauss-Legendre
/// quadrature of (x y' - y x') / 2.
fn area(m: &PropMotion) -> f64 {
    let span = &m.spans[0];
    let n = 2000;
    let b = span.beats();
    (0..n)
        .map(|i| {
            let (a0, a1) = (b * i as f64 / n as f64, b * (i + 1) as f64 / n as f64);
            num::gauss8(a0, a1, |s| {
                let j = span.head_jet(s);
                0.5 * (j.p[0] * j.d1[1] - j.p[1] * j.d1[0])
            })
        })
        .sum()
}

fn check(c: &Curve) {
    let r = 0.2;
    // One bar of 4 beats is one hand turn; a small delay keeps every cusp
    // off the section boundary, where no event is reported.
    let pattern = format!(
        "plane = \"wall\"\nbeats = 4\nhand_radius_m = {}\nhead_turns = {}\nhead_start_deg = {}",
        c.hand * r,
        c.turns,
        c.head_start_deg
    );
    let show = common::one_pattern(r, &pattern, 1, 0.1);
    let motions = simulate(&show);
    let events = find_events(&show, &motions);
    let stalls: Vec<_> = events
        .iter()
        .filter(|e| e.kind == EventKind::Stall)
        .collect();
    assert_eq!(stalls.len(), c.cusps, "{}: cusps found as stalls", c.name);
    for s in &stalls {
        assert!(
            s.speed_m_s < 1e-9,
            "{}: a cusp is a zero point, speed {}",
            c.name,
            s.speed_m_s
        );
    }
    let stats = span_stats(&motions[0], 0);
    let rel = (stats.path_length_m - c.length * r).abs() / (c.length * r);
    assert!(
        rel < 1e-6,
        "{}: arc length {} vs {} (rel {rel:e})",
        c.name,
        stats.path_length_m,
        c.length * r
    );
    let a = area(&motions[0]).abs();
    let want = c.area * r * r;
    assert!(
        (a - want).abs() / want < 1e-6,
        "{}: area {a} vs {want}",
        c.name
    );
}

#[test]
fn deltoid_has_three_cusps_length_16r_area_2pi_r2() {
    // CRC tables: deltoid (tricuspoid), rolling radius r: L = 16r, A = 2 pi r^2.
    check(&Curve {
        name: "deltoid",
        hand: 2.0,
        turns: -2,
        head_start_deg: 0.0,
        cusps: 3,
        length: 16.0,
        area: 2.0 * PI,
    });
}

#[test]
fn astroid_has_four_cusps_length_24r_area_6pi_r2() {
    // CRC tables: astroid with a = 4r: L = 6a = 24r, A = 3 pi a^2 / 8 = 6 pi r^2.
    check(&Curve {
        name: "astroid",
        hand: 3.0,
        turns: -3,
        head_start_deg: 0.0,
        cusps: 4,
        length: 24.0,
        area: 6.0 * PI,
    });
}

#[test]
fn cardioid_has_one_cusp_length_16r_area_6pi_r2() {
    // CRC tables: cardioid, rolling radius r: L = 16r, A = 6 pi r^2.
    check(&Curve {
        name: "cardioid",
        hand: 2.0,
        turns: 2,
        head_start_deg: 180.0,
        cusps: 1,
        length: 16.0,
        area: 6.0 * PI,
    });
}

#[test]
fn nephroid_has_two_cusps_length_24r_area_12pi_r2() {
    // CRC tables: nephroid, rolling radius r: L = 24r, A = 12 pi r^2.
    check(&Curve {
        name: "nephroid",
        hand: 3.0,
        turns: 3,
        head_start_deg: 180.0,
        cusps: 2,
        length: 24.0,
        area: 12.0 * PI,
    });
}
