//! Speed of `glowscore check` on a four-minute, two-prop show: 100 bars of
//! 4 beats at 100 bpm (with a lift to 110 bpm), a new pattern every 4 bars.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::check::{CheckSettings, check};
use glowscore::prepared::Prepared;

/// The show text: patterns cycle through antispin flowers, extensions, a
/// stall line, a wheel isolation, an inspin and a two-term hand path.
fn four_minute_show() -> String {
    let mut s = String::from(
        r#"
[show]
title = "Bench Garden"
frame_rate = 500
bpm = 100

[[tempo]]
bar = 41
bpm = 110

[[tempo]]
bar = 43
bpm = 96

[prop.left]
tether_m = 0.55
anchor_m = [-0.3, 1.35, 0.0]
head_mass_kg = 0.14

[prop.right]
tether_m = 0.55
anchor_m = [0.3, 1.35, 0.0]
head_mass_kg = 0.14

[pattern.four_petal]
plane = "wall"
beats = 4
hand_radius_m = 0.18
head_turns = -3

[pattern.extension]
plane = "wall"
beats = 2
hand_radius_m = 0.2
head_turns = 1

[pattern.stall_line]
plane = "wall"
beats = 8
hand_radius_m = 0.55
head_turns = -1

[pattern.wheel_iso]
plane = "wheel"
beats = 4
hand_radius_m = 0.25
head_turns = 1
head_start_deg = 180

[pattern.inspin]
plane = "floor"
beats = 4
hand_radius_m = 0.2
head_turns = 4

[pattern.hybrid]
plane = "wall"
beats = 8
hand = [{ radius_m = 0.15, turns = 1 }, { radius_m = 0.05, turns = -2 }]
head_turns = -4
"#,
    );
    let names = [
        "four_petal",
        "extension",
        "stall_line",
        "wheel_iso",
        "inspin",
        "hybrid",
    ];
    for k in 0..25 {
        let (a, b) = (names[k % names.len()], names[(k + 2) % names.len()]);
        s.push_str(&format!(
            "\n[[section]]\nbars = [{}, {}]\nleft = \"{a}\"\nright = {{ pattern = \"{b}\", mirror = true, delay_beats = 0.5 }}\n",
            4 * k + 1,
            4 * k + 4
        ));
    }
    s
}

fn bench(c: &mut Criterion) {
    let show = glowscore::show::parse("bench.toml", four_minute_show()).expect("valid show");
    let settings = CheckSettings::default();
    assert!(show.end_s() > 235.0, "about four minutes: {}", show.end_s());
    let prepared = Prepared::new(show).expect("prepares");
    c.bench_function("check a 4-minute two-prop show", |b| {
        b.iter(|| check(black_box(&prepared), &settings))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
