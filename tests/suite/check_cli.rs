//! `glowscore check` from the outside: exit status, the JSON fields that
//! docs/conventions.md ("Check JSON") fixes, the text report's
//! cautions, and byte-for-byte repeatable output.

use crate::common::cli;
use std::path::PathBuf;
use std::process::Output;

fn write(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("glowscore-check-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn run(args: &[&str]) -> Output {
    cli().args(args).output().unwrap()
}

/// A fast, taut wall circle: no warnings. With `slow`, the head goes slack.
fn show(slow: bool) -> String {
    let bpm = if slow { 30 } else { 120 };
    format!(
        r#"
[show]
title = "Lamp Test"
frame_rate = 500
bpm = {bpm}

[prop.left]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]

[pattern.circle]
plane = "wall"
beats = 1
hand_radius_m = 0.1
head_turns = 1

[[section]]
bars = [1, 2]
left = "circle"
"#
    )
}

#[test]
fn json_has_the_documented_fields() {
    let path = write("taut.toml", &show(false));
    let out = run(&["check", path.to_str().unwrap(), "--json"]);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["valid"], true);
    let left = &v["props"]["left"];
    for key in ["max_speed_m_s", "min_tension_n", "max_tension_n", "reach_m"] {
        assert!(left[key].is_f64(), "{key}: {}", left[key]);
    }
    // The show has no cue, so the LEDs stay dark: only the idle current
    // (default 0.05 A, an assumption) is drawn.
    assert_eq!(left["peak_current_a"], 0.05, "filled by the light checks");
    assert_eq!(v["warnings"], serde_json::json!([]));
    // Geometry: hand 0.1 m plus tether 0.5 m.
    assert_eq!(left["reach_m"], 0.6);
}

#[test]
fn warnings_exit_0_unless_denied() {
    let path = write("slack.toml", &show(true));
    let p = path.to_str().unwrap();
    let out = run(&["check", p, "--json"]);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let w = &v["warnings"][0];
    assert_eq!(w["kind"], "slack");
    assert_eq!(w["prop"], "left");
    assert!(w["time_s"].is_f64() && w["bar"].is_i64() && w["message"].is_string());
    let denied = run(&["check", p, "--deny-warnings"]);
    assert_eq!(denied.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&denied.stderr).contains("--deny-warnings"));
    // The report is still printed.
    assert!(String::from_utf8_lossy(&denied.stdout).contains("slack"));
    let text = run(&["check", p]);
    assert_eq!(text.status.code(), Some(0));
    let t = String::from_utf8(text.stdout).unwrap();
    for needle in [
        "Cautions",
        "between about 3 and 60",
        "photosensitive epilepsy",
        "Lithium batteries burn",
        "get hot",
        "data sheets",
        "clear space",
        "this project's own choice",
        "rated well above",
    ] {
        assert!(t.contains(needle), "{needle} missing from:\n{t}");
    }
}

#[test]
fn an_invalid_show_exits_1_naming_the_key() {
    let path = write(
        "bad.toml",
        &show(false).replace("tether_m = 0.5", "tether_m = -1"),
    );
    let p = path.to_str().unwrap();
    let out = run(&["check", p, "--json"]);
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["valid"], false);
    assert_eq!(v["errors"][0]["key"], "prop.left.tether_m");
    assert!(String::from_utf8_lossy(&out.stderr).contains("prop.left.tether_m"));
    let out = run(&["check", p]);
    assert_eq!(out.status.code(), Some(1));
    let bad_key = write(
        "badkey.toml",
        &show(false).replace("tether_m", "head_radius_m = 2\ntether_m"),
    );
    let out = run(&["check", bad_key.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("prop.left.head_radius_m"));
}

#[test]
fn output_is_repeatable_byte_for_byte() {
    let path = write("demo.toml", &show(true));
    let p = path.to_str().unwrap();
    for args in [vec!["check", p, "--json"], vec!["check", p]] {
        assert_eq!(run(&args).stdout, run(&args).stdout);
    }
}

#[test]
fn a_show_too_fast_to_check_fails_instead_of_hanging() {
    // 64 head turns per beat (the fastest a pattern may be) for 400 000
    // beats: over the sample budget.
    let text = show(false)
        .replace("beats = 1\n", "beats = 0.015625\n")
        .replace("bars = [1, 2]", "bars = [1, 100000]");
    let path = write("too-fast.toml", &text);
    let out = run(&["check", path.to_str().unwrap(), "--json"]);
    assert_eq!(out.status.code(), Some(1));
    // The show reader refuses it first, before any simulation.
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("turns of spin in all, more than"), "{err}");
}

#[test]
fn tolerance_option_sets_the_landing_limit() {
    let show = concat!(env!("CARGO_MANIFEST_DIR"), "/shows/moth-garden.toml");
    let landing = |args: &[&str]| {
        let out = run(&[&["check", show, "--json"], args].concat());
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let n = v["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|w| w["kind"] == "landing")
            .count();
        (v["landing"]["tolerance_mm"].as_f64().unwrap(), n)
    };
    // The demo's worst change lands under 4 mm off at 500 frames/s.
    assert_eq!(landing(&[]), (10.0, 0));
    let (tol, n) = landing(&["--tolerance-mm", "2"]);
    assert_eq!(tol, 2.0);
    assert!(n > 0);
    assert_eq!(
        run(&["check", show, "--tolerance-mm", "-1"]).status.code(),
        Some(1)
    );
}
