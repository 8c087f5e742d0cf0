//! The light part of `glowscore check` against outside references:
//! - W3C WCAG 2.x (2.0, 2.1, 2.2), success criterion 2.3.1 and the
//!   definition of "general flash and red flash thresholds": no more than
//!   three general and three red flashes in any one-second period; a general
//!   flash is a pair of opposing changes of relative luminance of 10 % or
//!   more; the red rule counts transitions involving a saturated red (the
//!   saturated-red and red-quantity figures of WCAG 2.2 are from memory, see
//!   `src/flash`).
//! - Relative luminance 0.2126 R + 0.7152 G + 0.0722 B on linear light
//!   (ITU-R BT.709 primaries, as WCAG 2.x defines relative luminance).
//! - IEC 61966-2-1 (sRGB): the transfer function that turns the cue colours
//!   into linear LED bytes.
//! - LED current: 20 mA per channel at full brightness for small addressable
//!   RGB LEDs (from memory); a channel at byte b
//!   draws b / 255 of its full current (common practice for PWM-driven LEDs).
//! - Uniform circular motion (Halliday, Resnick and Walker, Fundamentals of
//!   Physics): speed 2 pi r / T, arc travelled v dt.

use crate::common;

use std::f64::consts::PI;

use common::{check_show, close};
use glowscore::check::{CheckReport, WarningKind};
use glowscore::colour::LUMINANCE_COEFFICIENTS;
use glowscore::power::{brightness_scale, frame_current_a};

/// A one-prop show: a slow, taut wall circle for `bars` bars at `bpm`,
/// `frame_rate` Hz, with extra prop keys and cue lines.
fn one_prop(frame_rate: u32, bpm: f64, bars: u32, prop_keys: &str, cues: &str) -> String {
    format!(
        r#"
[show]
title = "Light Bench"
frame_rate = {frame_rate}
bpm = {bpm}
beats_per_bar = 4

[prop.p]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]
{prop_keys}

[pattern.slow]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 4

[[section]]
bars = [1, {bars}]
p = "slow"

{cues}
"#
    )
}

/// A cue on prop `p` stepping on every beat of bars 1..=`bars` through `colours`.
fn beat_cue(bars: u32, colours: &str) -> String {
    format!("[[cue]]\nprop = \"p\"\nbars = [1, {bars}]\nat = \"beat\"\ncolours = [{colours}]\n")
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
fn white_strobe_two_per_second_passes_five_per_second_warns() {
    // W3C WCAG 2.x, 2.3.1: no more than three flashes in any one-second
    // period. One flash is a pair of opposing changes, so a colour change on
    // every beat flashes bpm / 120 times a second: 240 bpm is 2 per second,
    // 600 bpm is 5 per second.
    let white_black = beat_cue(8, "\"white\", \"black\"");
    let two = report(&one_prop(1000, 240.0, 8, "", &white_black));
    let f = two.props[0].flash.expect("flash figures");
    assert_eq!(f.max_general, 2);
    assert_eq!(f.max_red, 0, "white is not a saturated red");
    assert!(f.passes);
    assert_eq!(count(&two, WarningKind::Flash), 0);

    let five = report(&one_prop(1000, 600.0, 8, "", &white_black));
    let f = five.props[0].flash.unwrap();
    assert_eq!(f.max_general, 5);
    assert!(!f.passes);
    let w: Vec<_> = five
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::Flash)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>();
    assert_eq!(w.len(), 1, "one stretch: {w:?}");
    assert_eq!(w[0].prop, "p");
    // The first change (white to black) is at beat 2, 0.1 s at 600 bpm.
    close(w[0].at.time_s, 0.1, 1e-9, "flash warning starts");
    assert_eq!(w[0].value, Some(5.0));
    assert_eq!(w[0].limit, Some(3.0));
    assert!(
        w[0].message.contains("written for screens"),
        "{}",
        w[0].message
    );
    // With a single prop there is no separate stage analysis.
    assert!(five.stage_flash.is_none());
}

#[test]
fn dim_flicker_under_ten_percent_never_warns() {
    // W3C WCAG 2.x general flash: changes of relative luminance below 10 %
    // are not flashes, however fast. sRGB grey 128 and 140 are linear 0.216
    // and 0.262 (IEC 61966-2-1): a step of 0.047 in luminance, at 10 changes
    // per second.
    let text = one_prop(1000, 600.0, 8, "", &beat_cue(8, "\"#808080\", \"#8c8c8c\""));
    let r = report(&text);
    let f = r.props[0].flash.unwrap();
    assert_eq!((f.max_general, f.max_red), (0, 0));
    assert!(f.passes);
    assert_eq!(count(&r, WarningKind::Flash), 0);
}

#[test]
fn red_rule_catches_a_dim_red_strobe_the_general_rule_passes() {
    // W3C WCAG 2.x: a red flash is a pair of opposing transitions involving
    // a saturated red. sRGB #960000 is linear red 0.305 (IEC 61966-2-1): its
    // relative luminance 0.2126 x 0.305 = 0.065 is under the 10 % general
    // step, but its red quantity (R - G - B) x 320 = 98 is far over the red
    // step of 20 (WCAG 2.2, from memory). At 5 per second only the red rule
    // sees it.
    let text = one_prop(1000, 600.0, 8, "", &beat_cue(8, "\"#960000\", \"black\""));
    let r = report(&text);
    let f = r.props[0].flash.unwrap();
    assert_eq!(f.max_general, 0, "the general rule alone passes it");
    assert_eq!(f.max_red, 5, "the red rule catches it");
    assert!(!f.passes);
    assert_eq!(count(&r, WarningKind::Flash), 1);
}

#[test]
fn luminance_coefficients_are_bt709() {
    // ITU-R BT.709 / W3C WCAG 2.x relative luminance: 0.2126, 0.7152, 0.0722.
    assert_eq!(LUMINANCE_COEFFICIENTS, [0.2126, 0.7152, 0.0722]);
    // So a full blue strobe changes luminance by only 0.0722 < 0.1 (and blue
    // is no red): no flash; a full green strobe (0.7152) flashes.
    let blue = report(&one_prop(
        1000,
        600.0,
        4,
        "",
        &beat_cue(4, "\"blue\", \"black\""),
    ));
    let f = blue.props[0].flash.unwrap();
    assert_eq!((f.max_general, f.max_red), (0, 0));
    let green = report(&one_prop(
        1000,
        600.0,
        4,
        "",
        &beat_cue(4, "\"lime\", \"black\""),
    ));
    assert_eq!(green.props[0].flash.unwrap().max_general, 5);
}

/// Two props, each with a white/black beat cue at 600 bpm; `b_colours`
/// gives the second prop's order.
fn two_strobes(b_colours: &str) -> String {
    format!(
        r#"
[show]
frame_rate = 1000
bpm = 600

[prop.a]
tether_m = 0.5
anchor_m = [-0.5, 1.5, 0.0]

[prop.b]
tether_m = 0.5
anchor_m = [0.5, 1.5, 0.0]

[pattern.slow]
plane = "wall"
beats = 4
hand_radius_m = 0
head_turns = 4

[[section]]
bars = [1, 8]
a = "slow"
b = "slow"

[[cue]]
prop = "a"
bars = [1, 8]
at = "beat"
colours = ["white", "black"]

[[cue]]
prop = "b"
bars = [1, 8]
at = "beat"
colours = [{b_colours}]
"#
    )
}

#[test]
fn stage_flash_is_the_mean_of_the_props() {
    // Our choice, documented in src/check/light.rs: the stage is the mean of
    // the props' linear light. In step, the stage flashes as each prop does
    // (luminance 0 <-> 1); in antiphase, the mean holds at 0.5 and the stage
    // does not flash at all, though each prop still warns (WCAG 2.x counts).
    let same = report(&two_strobes("\"white\", \"black\""));
    let s = same.stage_flash.expect("two props have a stage figure");
    assert_eq!(s.max_general, 5);
    assert!(
        same.warnings
            .iter()
            .any(|w| w.kind == WarningKind::Flash && w.prop == glowscore::check::light::STAGE)
    );
    let anti = report(&two_strobes("\"black\", \"white\""));
    let s = anti.stage_flash.unwrap();
    assert_eq!((s.max_general, s.max_red), (0, 0));
    assert_eq!(anti.props[0].flash.unwrap().max_general, 5);
    assert_eq!(anti.props[1].flash.unwrap().max_general, 5);
    assert_eq!(
        count(&anti, WarningKind::Flash),
        2,
        "a and b, not the stage"
    );
}

#[test]
fn all_white_draws_leds_times_three_channels() {
    // Per-channel current at full brightness 20 mA (from memory, the
    // default): N LEDs all white draw N x 3 x 0.020 A, plus the idle current
    // (default 0.05 A, an assumption).
    let leds = 12.0;
    let text = one_prop(500, 120.0, 2, "leds = 12", &beat_cue(2, "\"white\""));
    let r = report(&text);
    let p = &r.props[0];
    let want = leds * 3.0 * 0.020 + 0.05;
    close(p.peak_current_a.unwrap(), want, 1e-12, "peak");
    close(p.mean_current_a.unwrap(), want, 1e-12, "mean");
    assert!(p.battery_hours.is_none(), "no battery_mah given");

    // With the keys given: 8 LEDs at 15 mA a channel, 0.1 A idle, a
    // 2000 mAh battery: hours = 2000 / 1000 / mean.
    let keys = "leds = 8\nchannel_current_a = 0.015\nidle_current_a = 0.1\nbattery_mah = 2000";
    let r = report(&one_prop(500, 120.0, 2, keys, &beat_cue(2, "\"white\"")));
    let p = &r.props[0];
    let want = 8.0 * 3.0 * 0.015 + 0.1;
    close(p.peak_current_a.unwrap(), want, 1e-12, "peak with keys");
    close(p.battery_hours.unwrap(), 2.0 / want, 1e-9, "battery hours");
}

#[test]
fn half_white_half_dark_has_half_the_led_current_on_average() {
    // A white/black beat cue shows white on half the frames (IEC 61966-2-1:
    // white and black pass unchanged, 255 and 0): the mean LED current is
    // half the all-white figure, the peak the whole of it.
    let text = one_prop(
        500,
        120.0,
        2,
        "leds = 4",
        &beat_cue(2, "\"white\", \"black\""),
    );
    let p = &report(&text).props[0];
    close(
        p.peak_current_a.unwrap(),
        4.0 * 3.0 * 0.02 + 0.05,
        1e-12,
        "peak",
    );
    close(
        p.mean_current_a.unwrap(),
        4.0 * 3.0 * 0.02 / 2.0 + 0.05,
        1e-12,
        "mean",
    );
}

#[test]
fn pure_red_draws_one_channel() {
    // A pure primary passes unchanged (IEC 61966-2-1 maps 0 and 1 to
    // themselves): red is (255, 0, 0), one channel of three.
    assert_eq!(frame_current_a([255, 0, 0], 10, 0.02, 0.0), 10.0 * 0.02);
    assert_eq!(frame_current_a([0, 0, 0], 10, 0.02, 0.05), 0.05);
    let text = one_prop(500, 120.0, 2, "leds = 10", &beat_cue(2, "\"red\""));
    let p = &report(&text).props[0];
    close(
        p.peak_current_a.unwrap(),
        10.0 * 0.02 + 0.05,
        1e-12,
        "red peak",
    );
}

#[test]
fn current_limit_warns_and_the_brightness_scale_keeps_the_peak_under_it() {
    // 20 LEDs all white: 20 x 3 x 0.020 + 0.05 = 1.25 A, over a 1 A limit.
    let over = report(&one_prop(
        500,
        120.0,
        2,
        "leds = 20\nmax_current_a = 1.0",
        &beat_cue(2, "\"white\""),
    ));
    assert_eq!(count(&over, WarningKind::Current), 1);
    let w = over
        .warnings
        .iter()
        .find(|w| w.kind == WarningKind::Current)
        .unwrap();
    close(w.value.unwrap(), 1.25, 1e-12, "warning value");
    assert_eq!(w.limit, Some(1.0));
    // With brightness_limit the prepared show is dimmed before anything reads
    // its frames: the check sees the dimmed frames (no warning, the peak
    // within the limit) and reports the scale it applied.
    let keys = "leds = 20\nmax_current_a = 1.0\nbrightness_limit = true";
    let r = report(&one_prop(500, 120.0, 2, keys, &beat_cue(2, "\"white\"")));
    assert_eq!(count(&r, WarningKind::Current), 0);
    assert!(r.props[0].peak_current_a.unwrap() <= 1.0);
    let k = r.props[0].brightness_scale.expect("brightness_limit is on");
    assert!(k > 0.0 && k < 1.0);
    // Applying the scale as the prop's brightness and rounding to bytes (as
    // the tables do) keeps the peak within the limit.
    let byte = (k * 255.0).round() as u8;
    let scaled = frame_current_a([byte; 3], 20, 0.02, 0.05);
    assert!(scaled <= 1.0, "scaled peak {scaled} A");
    // And it is not needlessly low: within one byte step of the limit.
    let next = frame_current_a([byte + 1; 3], 20, 0.02, 0.05);
    assert!(next > 1.0 - 20.0 * 3.0 * 0.02 / 255.0, "{next}");

    // Re-checking the show at that brightness gives no current warning.
    let keys = format!("leds = 20\nmax_current_a = 1.0\nbrightness = {k}");
    let again = report(&one_prop(500, 120.0, 2, &keys, &beat_cue(2, "\"white\"")));
    assert_eq!(count(&again, WarningKind::Current), 0);
    assert!(again.props[0].peak_current_a.unwrap() <= 1.0);
    // Without brightness_limit no scale is reported.
    assert!(again.props[0].brightness_scale.is_none());

    assert_eq!(brightness_scale(0.5, 1.0, 20, 0.02, 0.05), 1.0);
    assert_eq!(brightness_scale(1.25, 0.04, 20, 0.02, 0.05), 0.0);
}

/// A one-prop show of a pure wall circle of radius 0.5 m, one turn per beat
/// at 60 bpm, with a cue stepping at clock angle 45 deg.
fn circle_with_angle_cue(frame_rate: u32) -> String {
    format!(
        r#"
[show]
frame_rate = {frame_rate}
bpm = 60

[prop.p]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]

[pattern.circle]
plane = "wall"
beats = 1
hand_radius_m = 0
head_turns = 1

[[section]]
bars = [1, 2]
p = "circle"

[[cue]]
prop = "p"
bars = [1, 2]
at = "angle"
angle_deg = 45
colours = ["red", "blue"]
"#
    )
}

#[test]
fn landing_error_on_a_circle_is_speed_times_the_frame_offset() {
    // Uniform circular motion: v = 2 pi r / T = pi m/s (r = 0.5 m, T = 1 s).
    // The head passes 45 deg at 0.125 s after each beat; at 50 Hz the
    // nearest frame starts at 0.12 s, 5 ms early: 5 ms x pi m/s = 15.7 mm,
    // and 1.8 deg of the turn, over the 10 mm tolerance.
    let r = report(&circle_with_angle_cue(50));
    assert_eq!(r.cues.len(), 1);
    let c = &r.cues[0];
    assert_eq!((c.prop.as_str(), c.at, c.bars), ("p", "angle", [1, 2]));
    // 8 turns in 2 bars of 4 beats: 8 passes of 45 deg, all inside the range.
    assert_eq!(c.changes, 8, "{c:?}");
    close(c.worst_ms.unwrap(), 5.0, 1e-6, "worst ms");
    close(c.mean_ms.unwrap(), 5.0, 1e-6, "mean ms");
    close(c.worst_mm.unwrap(), PI * 5.0, 1e-3, "worst mm");
    close(c.worst_deg.unwrap(), 1.8, 1e-4, "worst deg");
    // Worst case half a frame: ceil(1000 pi / (2 x 10)) = ceil(157.08) = 158 Hz.
    assert_eq!(c.needed_frame_rate_hz, Some(158));
    let l = r.landing.as_ref().unwrap();
    assert_eq!(l.tolerance_mm, 10.0);
    assert_eq!(l.needed_frame_rate_hz, Some(158));
    assert_eq!(count(&r, WarningKind::Landing), 1);

    // At the needed rate every change lands within the tolerance.
    let r = report(&circle_with_angle_cue(158));
    assert!(r.cues[0].worst_mm.unwrap() <= 10.0, "{:?}", r.cues[0]);
    assert_eq!(count(&r, WarningKind::Landing), 0);
}

#[test]
fn landing_json_has_the_cue_fields() {
    let r = report(&circle_with_angle_cue(50));
    let v = serde_json::to_value(&r).unwrap();
    let c = &v["cues"][0];
    for key in [
        "cue",
        "prop",
        "at",
        "bars",
        "changes",
        "worst_ms",
        "mean_ms",
        "worst_mm",
        "mean_mm",
        "worst_deg",
        "needed_frame_rate_hz",
    ] {
        assert!(!c[key].is_null(), "{key} in {c}");
    }
    assert_eq!(c["bars"], serde_json::json!([1, 2]));
    for key in ["tolerance_mm", "worst_mm", "needed_frame_rate_hz"] {
        assert!(!v["landing"][key].is_null(), "landing.{key}");
    }
    let p = &v["props"]["p"];
    for key in ["peak_current_a", "mean_current_a", "flash"] {
        assert!(!p[key].is_null(), "props.p.{key}");
    }
    assert!(p["battery_hours"].is_null());
}

#[test]
fn bad_light_keys_are_errors_with_the_key_path() {
    for (keys, path) in [
        ("channel_current_a = -0.02", "prop.p.channel_current_a"),
        ("battery_mah = 0", "prop.p.battery_mah"),
        ("max_current_a = \"lots\"", "prop.p.max_current_a"),
        ("brightness_limit = 1", "prop.p.brightness_limit"),
    ] {
        let text = one_prop(500, 120.0, 2, keys, "");
        let err = glowscore::show::parse("t.toml", text).expect_err(keys);
        let msg = err.to_string();
        assert!(msg.contains(path), "{keys}: {msg}");
    }
}

#[test]
fn check_command_json_lists_flash_warnings() {
    // W3C WCAG 2.x: 5 flashes a second is over the limit; the warning is in
    // the warning list (docs/conventions.md, "Check JSON") with kind "flash",
    // and the run still succeeds (exit 0: warnings allowed).
    let dir = std::env::temp_dir().join(format!("glowscore-light-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("strobe.toml");
    let white_black = beat_cue(8, "\"white\", \"black\"");
    std::fs::write(&path, one_prop(1000, 600.0, 8, "", &white_black)).unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["check", path.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let flashes: Vec<_> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|w| w["kind"] == "flash")
        .collect();
    assert_eq!(flashes.len(), 1);
    assert_eq!(flashes[0]["prop"], "p");
    assert!(flashes[0]["time_s"].is_f64() && flashes[0]["bar"].is_i64());
    assert_eq!(v["props"]["p"]["flash"]["max_general"], 5);
}
