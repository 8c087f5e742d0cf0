//! Helpers shared by the integration tests.
#![allow(dead_code)]

use glowscore::model::Show;

/// A show from TOML text; panics with the diagnostics if it is invalid.
#[track_caller]
pub fn show(text: &str) -> Show {
    match glowscore::show::parse("test.toml", text.to_string()) {
        Ok(s) => s,
        Err(d) => panic!("show did not parse:\n{d}"),
    }
}

/// A one-prop show playing one pattern for `bars` bars of 4 beats at 60 bpm
/// (one beat per second), with the pattern's keys given as TOML lines.
pub fn one_pattern(tether_m: f64, pattern: &str, bars: u32, delay_beats: f64) -> Show {
    show(&format!(
        r#"
[show]
frame_rate = 1000
bpm = 60
beats_per_bar = 4

[prop.p]
tether_m = {tether_m}
anchor_m = [0.0, 1.5, 0.0]

[pattern.x]
{pattern}

[[section]]
bars = [1, {bars}]
p = {{ pattern = "x", delay_beats = {delay_beats} }}
"#
    ))
}
