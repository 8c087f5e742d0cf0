//! Picture coverage (`check::coverage`): how much of a painting cue's
//! picture the prop's LEDs pass, against outside references:
//! - Plane geometry: the distance from a point p to a circle of centre o and
//!   radius rho is | |p - o| - rho |; a texel counts when some LED, at some
//!   frame's midpoint, is within one texel width of it. With the LED's
//!   places on its circle a chord c apart (c = 2 rho sin(theta / 2) for a
//!   turn of theta per frame), every texel within sqrt(w^2 - (c/2)^2) of the
//!   circle is within w of a place, and none further than w is. The area of
//!   a disc is pi r^2.
//! - Rigid-body kinematics: a point turning with the picture at the same
//!   rate about the same centre stays still relative to it.
//! - Uniform circular motion: speed w r (Halliday, Resnick and Walker).
//! - The 90 % limit is our own choice (`MIN_COVERED_FRACTION`).

use crate::common;

use std::f64::consts::{PI, TAU};
use std::sync::Arc;

use common::check_show;
use glowscore::check::coverage::{MIN_COVERED_FRACTION, PaintingCoverage};
use glowscore::check::{CheckError, CheckReport, WarningKind};
use glowscore::commands::Failure;
use glowscore::model::{FixedTo, Look, Painting, Picture, PicturePlacement, Show};
use glowscore::prepared::PrepareError;

/// A `n` x `n` picture, opaque white where `keep(i, j)` holds (texel
/// column i, row j), transparent elsewhere.
fn picture(n: u32, keep: impl Fn(u32, u32) -> bool) -> Picture {
    let mut rgba = Vec::new();
    for j in 0..n {
        for i in 0..n {
            let a = if keep(i, j) { 255 } else { 0 };
            rgba.extend_from_slice(&[255, 255, 255, a]);
        }
    }
    Picture::from_srgba8(n, n, &rgba).unwrap()
}

/// A disc filling the picture: texels whose centre lies within n/2 of the
/// picture's centre.
fn disc(n: u32) -> Picture {
    let c = f64::from(n) / 2.0;
    picture(n, |i, j| {
        let (x, y) = (f64::from(i) + 0.5 - c, f64::from(j) + 0.5 - c);
        x * x + y * y <= c * c
    })
}

fn placement(centre: [f64; 2], width: f64, fixed_to: FixedTo) -> PicturePlacement {
    PicturePlacement {
        centre_m: centre,
        width_m: width,
        height_m: width,
        rotation_deg: 0.0,
        fixed_to,
    }
}

/// `text` with its first cue made to paint `pic` at `place`.
fn painted(text: &str, pic: Picture, place: PicturePlacement) -> Show {
    let mut show = common::show(text);
    show.cues[0].look = Look::Image(Painting {
        file: "test.png".into(),
        picture: Arc::new(pic),
        placement: place,
    });
    show
}

/// One prop `p` (its keys given) at (0, 1.5, 0) playing pattern `x` (keys
/// given) in bars 1-2 at 120 bpm, with a cue on `p` over `cue_bars`.
fn show_text(prop: &str, pattern: &str, cue_bars: &str) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = 120

[prop.p]
anchor_m = [0.0, 1.5, 0.0]
{prop}

[pattern.x]
{pattern}

[[section]]
bars = [1, 2]
p = "x"

[[cue]]
prop = "p"
bars = {cue_bars}
at = "beat"
colours = ["white"]
"#
    )
}

fn check(show: &Show) -> CheckReport {
    check_show(show).expect("within the budget")
}

fn coverage_warnings(r: &CheckReport) -> Vec<glowscore::check::Warning> {
    r.warnings
        .iter()
        .filter(|w| w.kind == WarningKind::Coverage)
        .flat_map(|w| w.instances())
        .collect::<Vec<_>>()
}

/// Bounds on the visible texels of `pic` (placed at `place`, not turning)
/// that LEDs circling the anchor at the radii `radii`, turning `turn_rad`
/// radians a frame, come within `w` of at some frame's midpoint, by plane
/// geometry: (count within 0.999 sqrt(w^2 - (c/2)^2) of some circle, with c
/// that circle's chord per frame; count within 1.001 w of some circle).
fn ring_bounds(
    pic: &Picture,
    place: &PicturePlacement,
    radii: &[f64],
    w: f64,
    turn_rad: f64,
) -> (usize, usize) {
    let (nw, nh) = (pic.width(), pic.height());
    let (mut lo, mut hi) = (0, 0);
    for j in 0..nh {
        for i in 0..nw {
            if pic.texel(i, j)[3] == 0.0 {
                continue;
            }
            let x =
                place.centre_m[0] + ((f64::from(i) + 0.5) / f64::from(nw) - 0.5) * place.width_m;
            let y =
                place.centre_m[1] + (0.5 - (f64::from(j) + 0.5) / f64::from(nh)) * place.height_m;
            let near = radii.iter().any(|r| {
                let c = 2.0 * r * glowscore::num::sin(turn_rad / 2.0);
                let sure = (w * w - c * c / 4.0).max(0.0).sqrt();
                ((x * x + y * y).sqrt() - r).abs() <= 0.999 * sure
            });
            let d = radii
                .iter()
                .map(|r| ((x * x + y * y).sqrt() - r).abs())
                .fold(f64::INFINITY, f64::min);
            lo += usize::from(near);
            hi += usize::from(d <= 1.001 * w);
        }
    }
    (lo, hi)
}

fn only(r: &CheckReport) -> &PaintingCoverage {
    assert_eq!(r.paintings.len(), 1);
    &r.paintings[0]
}

#[test]
fn a_disc_inside_the_reach_of_an_isolation_is_covered() {
    // An isolation (head_turns 1, rod opposite the hand) with a hand circle
    // of 0.1 m: the LED a metres from the grip circles the anchor at radius
    // |0.1 - a|. A strip of 60 LEDs from 0.02 to 0.5 m covers radii 0 to
    // 0.4 m, 8.1 mm apart; a disc of 0.3 m radius in 128 texels of 4.7 mm
    // lies well inside, and every ring is within a texel of the next.
    let prop = "tether_m = 0.5\nstrip = { leds = 60, from_m = 0.02, to_m = 0.5 }";
    let pattern =
        "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0.1\nhead_turns = 1\nhead_start_deg = 180";
    let place = placement([0.0, 0.0], 0.6, FixedTo::Stage);
    let show = painted(&show_text(prop, pattern, "[1, 2]"), disc(128), place);
    let rep = check(&show);
    let c = only(&rep);
    assert_eq!(c.texels, disc(128).visible_texels());
    let f = c.covered_fraction.unwrap();
    assert!(f > 0.99, "covered {f}");
    let radii: Vec<f64> = show.props[0]
        .led_spots()
        .iter()
        .map(|s| (0.1 - s.along_m).abs())
        .collect();
    let (lo, hi) = ring_bounds(&disc(128), &place, &radii, c.texel_m, TAU / 500.0);
    assert!(
        lo <= c.covered_texels && c.covered_texels <= hi,
        "{lo} <= {} <= {hi}",
        c.covered_texels
    );
    assert!(coverage_warnings(&rep).is_empty());
    assert!((c.painting_s - 4.0).abs() < 1e-12, "two bars at 120 bpm");
}

#[test]
fn sparse_leds_cover_only_rings_around_their_circles() {
    // Five LEDs 0.1 m apart leave gaps between their rings: each covers the
    // texels within one texel width of its circle (plane geometry), far less
    // than the disc; the advice names the gaps between the LEDs' places.
    let prop = "tether_m = 0.5\nstrip = { leds = 5, from_m = 0.1, to_m = 0.5 }";
    let pattern = "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let place = placement([0.0, 0.0], 1.0, FixedTo::Stage);
    let show = painted(&show_text(prop, pattern, "[1, 2]"), disc(100), place);
    let rep = check(&show);
    let c = only(&rep);
    let radii = [0.1, 0.2, 0.3, 0.4, 0.5];
    let (lo, hi) = ring_bounds(&disc(100), &place, &radii, c.texel_m, TAU / 500.0);
    assert!(
        lo <= c.covered_texels && c.covered_texels <= hi,
        "{lo} <= {} <= {hi}",
        c.covered_texels
    );
    // Each ring is about 2 pi rho x 2 w in area: 2 pi (1.5 m) 2 (0.01 m)
    // against the disc's pi 0.5^2 (the outer ring half outside the disc).
    let w = 0.01;
    let want = (2.0 * PI * (0.1 + 0.2 + 0.3 + 0.4 + 0.25) * 2.0 * w) / (PI * 0.25);
    let f = c.covered_fraction.unwrap();
    assert!((f - want).abs() < 0.02, "{f} vs {want}");
    let warns = coverage_warnings(&rep);
    assert_eq!(warns.len(), 1);
    assert!(
        warns[0]
            .message
            .contains("between the places where the LEDs take their colours"),
        "{}",
        warns[0].message
    );
    assert!(
        warns[0].message.contains("more LEDs"),
        "{}",
        warns[0].message
    );
}

#[test]
fn a_picture_much_larger_than_the_reach_is_covered_in_proportion_and_warns() {
    // A centred staff (halves 0.5 m, 40 LEDs on each from the grip to the
    // end, 12.8 mm apart) spun on a still hand sweeps a disc of 0.5 m; the
    // opaque 2 m square (200 texels of 10 mm) is covered about as far as a
    // texel beyond it: pi (0.51)^2 / 4 = 20.4 %.
    let prop = "kind = \"staff\"\ntether_m = 0.5\ntail_m = 0.5\nstrip = { leds = 40, from_m = 0.0, to_m = 0.5 }";
    let pattern = "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let place = placement([0.0, 0.0], 2.0, FixedTo::Stage);
    let full = || picture(200, |_, _| true);
    let show = painted(&show_text(prop, pattern, "[1, 2]"), full(), place);
    let rep = check(&show);
    let c = only(&rep);
    assert_eq!(c.texels, 40_000);
    let f = c.covered_fraction.unwrap();
    let want = PI * 0.51 * 0.51 / 4.0;
    assert!((f - want).abs() < 0.005, "{f} vs {want}");
    let radii: Vec<f64> = show.props[0]
        .led_spots()
        .iter()
        .map(|s| s.along_m.abs())
        .collect();
    let (lo, hi) = ring_bounds(&full(), &place, &radii, c.texel_m, TAU / 500.0);
    assert!(
        lo <= c.covered_texels && c.covered_texels <= hi,
        "{lo} <= {} <= {hi}",
        c.covered_texels
    );
    let warns = coverage_warnings(&rep);
    assert_eq!(warns.len(), 1);
    let w = &warns[0];
    assert_eq!(w.prop, "p");
    assert_eq!(w.unit, Some("%"));
    assert!((w.value.unwrap() - 100.0 * f).abs() < 1e-9);
    assert_eq!(w.limit, Some(100.0 * MIN_COVERED_FRACTION));
    assert!(w.message.contains("smaller picture"), "{}", w.message);
    // Uniform circular motion: the ends move w r = 2 pi (1 turn/s) 0.5 m =
    // 3.14 m/s, 6.28 mm per 2 ms frame at 500 frames/s: 0.628 texels.
    let travel = c.max_frame_travel_texels.unwrap();
    let want = TAU * 0.5 / 500.0 / 0.01;
    assert!((travel - want).abs() < 1e-3 * want, "{travel} vs {want}");
}

#[test]
fn a_picture_beside_the_prop_is_not_covered() {
    // Plane geometry: the LEDs stay within 0.5 m of the anchor; a picture
    // 0.5 m wide centred 2 m to the right lies 1.75 m away at the nearest.
    let prop = "tether_m = 0.5\nstrip = { leds = 30, from_m = 0.05, to_m = 0.5 }";
    let pattern = "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0.15\nhead_turns = -3";
    let place = placement([2.0, 0.0], 0.5, FixedTo::Stage);
    let show = painted(&show_text(prop, pattern, "[1, 2]"), disc(64), place);
    let rep = check(&show);
    let c = only(&rep);
    assert_eq!(c.covered_texels, 0);
    assert_eq!(c.covered_fraction, Some(0.0));
    let warns = coverage_warnings(&rep);
    assert_eq!(warns.len(), 1);
    assert!(warns[0].message.contains("beyond"), "{}", warns[0].message);
}

#[test]
fn a_picture_turning_with_the_hand_sees_a_still_led() {
    // Rigid-body kinematics: a single LED at the head of a plain circle
    // (still hand, one rod turn per hand revolution) and a picture fixed to
    // the hand (one clockwise turn per revolution, counter-clockwise when
    // reversed or mirrored, as the LED) turn together about the anchor: the
    // LED stays at one point of the picture. With a 0.25 m tether on a
    // 1 m, 8-texel picture that point is a texel corner, within one texel
    // of exactly the 4 texels around it (the next ones are 1.58 texels off).
    // Fixed to the stage instead, the LED's circle of 2 texels covers the
    // texels whose centres lie 1 to 3 texels from the anchor (plane
    // geometry): 28 of 64.
    let prop = "tether_m = 0.25";
    for reverse in [false, true] {
        for start in [0, 90, 225] {
            let pattern = format!(
                "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1\nhead_start_deg = {start}\nreverse = {reverse}"
            );
            for mirror in [false, true] {
                let mut text = show_text(prop, &pattern, "[1, 2]");
                if mirror {
                    text = text.replace("p = \"x\"", "p = { pattern = \"x\", mirror = true }");
                }
                let full = || picture(8, |_, _| true);
                let hand = placement([0.0, 0.0], 1.0, FixedTo::Hand);
                let rep = check(&painted(&text, full(), hand));
                let c = only(&rep);
                let what = format!("reverse {reverse}, start {start}, mirror {mirror}");
                if start == 225 {
                    // At 225 deg the point is not a corner: 0.25 m at 225 deg
                    // is (-1.41, -1.41) texels from the centre, which lies
                    // within one texel of 3 texel centres.
                    assert_eq!(c.covered_texels, 3, "{what}");
                } else {
                    assert_eq!(c.covered_texels, 4, "{what}");
                }
                let stage = placement([0.0, 0.0], 1.0, FixedTo::Stage);
                let rep = check(&painted(&text, full(), stage));
                let (lo, hi) = ring_bounds(&full(), &stage, &[0.25], 0.125, TAU / 500.0);
                assert_eq!((lo, hi), (28, 28));
                assert_eq!(only(&rep).covered_texels, 28, "{what}");
            }
        }
    }
}

#[test]
fn a_resting_prop_or_an_overriding_cue_paints_nothing() {
    // The prop plays in bars 1-2 only: a cue over bars 3-4 finds it resting.
    let prop = "tether_m = 0.5\nstrip = { leds = 30, from_m = 0.05, to_m = 0.5 }";
    let pattern = "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let place = placement([0.0, 0.0], 1.0, FixedTo::Stage);
    let text = show_text(prop, pattern, "[3, 4]") + "\n[[section]]\nbars = [3, 4]\n";
    let rep = check(&painted(&text, disc(64), place));
    let c = only(&rep);
    assert_eq!((c.covered_texels, c.painting_s), (0, 0.0));
    assert_eq!(c.max_frame_travel_texels, None);
    let warns = coverage_warnings(&rep);
    assert_eq!(warns.len(), 1);
    assert!(warns[0].message.contains("rests"), "{}", warns[0].message);
    // A later cue on the same prop over bar 2 leaves the painting bar 1
    // (2 s); over bars 1-2, nothing.
    let later = "\n[[cue]]\nprop = \"p\"\nbars = [2, 2]\nat = \"beat\"\ncolours = [\"red\"]\n";
    let rep = check(&painted(
        &(show_text(prop, pattern, "[1, 2]") + later),
        disc(64),
        place,
    ));
    assert!((only(&rep).painting_s - 2.0).abs() < 1e-12);
    assert!(only(&rep).covered_fraction.unwrap() > 0.9);
    let all = later.replace("[2, 2]", "[1, 2]");
    let rep = check(&painted(
        &(show_text(prop, pattern, "[1, 2]") + &all),
        disc(64),
        place,
    ));
    assert_eq!(only(&rep).painting_s, 0.0);
    assert_eq!(only(&rep).covered_texels, 0);
}

#[test]
fn absurd_work_is_refused_before_it_starts() {
    // 4000 LEDs painting for 64 bars at 500 frames/s (2.6e8 LED-frames) a
    // picture of 1 x 4096 texels squeezed into a 1 m square: each LED's place
    // is within a texel width of 8193 rows of texels, 6e12 tests in all, far
    // beyond the budget; the check refuses instead of running for hours.
    let prop = "tether_m = 0.5\nstrip = { leds = 4000, from_m = 0.05, to_m = 0.5 }";
    let pattern = "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let text = show_text(prop, pattern, "[1, 64]").replace("bars = [1, 2]", "bars = [1, 64]");
    let pic = Picture::from_srgba8(1, 4096, &[255u8; 4 * 4096]).unwrap();
    let show = painted(&text, pic, placement([0.0, 0.0], 1.0, FixedTo::Stage));
    let started = std::time::Instant::now();
    match check_show(&show) {
        Err(Failure::Check(CheckError::TooMuchPainting { cue, tests, .. })) => {
            assert_eq!(cue, 0);
            assert!(tests > glowscore::check::coverage::MAX_TEXEL_TESTS);
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    let err = check_show(&show).unwrap_err().to_string();
    assert!(err.contains("texel tests"), "{err}");
    // At 100000 frames/s the same show has 5e10 LED-frames to read for the
    // light figures alone: refused for that, before anything else.
    let fast = text.replace("frame_rate = 500", "frame_rate = 100000");
    match check_show(&common::show(&fast)) {
        Err(Failure::Prepare(PrepareError::TooManyFrames { led_frames, .. })) => {
            assert!((led_frames - 4000.0 * 100_000.0 * 128.0).abs() < 1.0);
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    eprintln!("refused in {:?}", started.elapsed());
}

#[test]
fn check_json_lists_each_painting_and_is_repeatable() {
    // The same check from the command line, with the picture in a PNG file
    // beside the show: the `paintings` entry and a `coverage` warning (a
    // disc of 1 m radius against a poi reaching 0.5 m: about a quarter),
    // byte for byte the same on a second run.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("coverage-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let n = 64u32;
    let c = f64::from(n) / 2.0;
    let img = image::RgbaImage::from_fn(n, n, |i, j| {
        let (x, y) = (f64::from(i) + 0.5 - c, f64::from(j) + 0.5 - c);
        image::Rgba([200, 40, 10, if x * x + y * y <= c * c { 255 } else { 0 }])
    });
    img.save(dir.join("round.png")).unwrap();
    let text = show_text(
        "tether_m = 0.5\nstrip = { leds = 40, from_m = 0.02, to_m = 0.5 }",
        "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1",
        "[1, 2]",
    )
    .replace(
        "at = \"beat\"\ncolours = [\"white\"]",
        "image = \"round.png\"\nimage_width_m = 2.0",
    );
    let path = dir.join("show.toml");
    std::fs::write(&path, text).unwrap();
    let run = || {
        std::process::Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .args(["check", path.to_str().unwrap(), "--json"])
            .output()
            .unwrap()
    };
    let out = run();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(out.stdout, run().stdout, "repeatable");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let p = &v["paintings"][0];
    assert_eq!(p["cue"], 0);
    assert_eq!(p["prop"], "p");
    assert_eq!(p["file"], "round.png");
    assert_eq!(p["bars"], serde_json::json!([1, 2]));
    assert_eq!(p["texels"], disc(n).visible_texels());
    let f = p["covered_fraction"].as_f64().unwrap();
    // Plane geometry: the LEDs sweep a disc of 0.5 m (plus a texel of
    // 31 mm) inside the picture's disc of 1 m: about (0.53 / 1)^2.
    assert!((f - 0.531 * 0.531).abs() < 0.03, "{f}");
    assert!((p["texel_m"].as_f64().unwrap() - 2.0 / 64.0).abs() < 1e-12);
    let kinds: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["kind"].as_str().unwrap())
        .collect();
    assert!(kinds.contains(&"coverage"), "{kinds:?}");
}

#[test]
fn a_mirrored_placement_paints_the_mirror_image() {
    // Plane geometry: a mirrored placement reflects the path left-right on
    // the plane's clock; reflecting the picture and its place too maps every
    // texel centre onto its reflection at the same distance from the path,
    // so the same texels count. A three-petal antispin flower (hand 0.15 m,
    // rod 0.5 m, head_turns -2, head_start 270) has its tips at 3, 7 and 11
    // o'clock (0.65 m out) and an inner point at 9 o'clock (0.35 m): a small
    // picture at the 3 o'clock tip is reached, its mirror image at 9 o'clock
    // is reached only by the mirrored placement.
    let prop = "tether_m = 0.5\nstrip = { leds = 8, from_m = 0.3, to_m = 0.5 }";
    let pattern =
        "plane = \"wheel\"\nbeats = 4\nhand_radius_m = 0.15\nhead_turns = -2\nhead_start_deg = 270";
    let keep = |i: u32, j: u32| i < 10 || j < 4;
    let shape = || picture(16, keep);
    let flipped = || picture(16, |i, j| keep(15 - i, j));
    let text = show_text(prop, pattern, "[1, 2]");
    let mirrored = text.replace("p = \"x\"", "p = { pattern = \"x\", mirror = true }");
    let right = placement([0.6, 0.0], 0.16, FixedTo::Stage);
    let left = placement([-0.6, 0.0], 0.16, FixedTo::Stage);
    let plain = only(&check(&painted(&text, shape(), right))).covered_texels;
    let image = only(&check(&painted(&mirrored, flipped(), left))).covered_texels;
    assert!(plain > 20, "the tip reaches the picture: {plain}");
    assert_eq!(plain, image);
    // Left as it was, the picture at 3 o'clock now faces an inner point.
    let missed = only(&check(&painted(&mirrored, shape(), right))).covered_texels;
    assert!(missed < plain / 2, "{missed} vs {plain}");
}

#[test]
fn a_low_frame_rate_leaves_texels_between_frames() {
    // The isolation of the first test, painted at 25 frames/s instead of
    // 500: the LED 0.4 m out moves 2 pi 0.4 / 25 = 0.10 m a frame (uniform
    // circular motion), about 21 texels of 4.7 mm, so most texels along its
    // circle never have an LED over them at a frame's midpoint.
    let prop = "tether_m = 0.5\nstrip = { leds = 60, from_m = 0.02, to_m = 0.5 }";
    let pattern =
        "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0.1\nhead_turns = 1\nhead_start_deg = 180";
    let place = placement([0.0, 0.0], 0.6, FixedTo::Stage);
    let text = show_text(prop, pattern, "[1, 2]").replace("frame_rate = 500", "frame_rate = 25");
    let rep = check(&painted(&text, disc(128), place));
    let c = only(&rep);
    let f = c.covered_fraction.unwrap();
    assert!(f < 0.6, "covered {f}");
    let travel = c.max_frame_travel_texels.unwrap();
    let want = 2.0 * 0.4 * glowscore::num::sin(PI / 25.0) / c.texel_m;
    assert!((travel - want).abs() < 0.05 * want, "{travel} vs {want}");
    let warns = coverage_warnings(&rep);
    assert_eq!(warns.len(), 1);
    assert!(
        warns[0]
            .message
            .contains("a higher frame rate or a slower tempo"),
        "{}",
        warns[0].message
    );
}

#[test]
fn counting_the_texels_of_many_hidden_paintings_is_work_too() {
    // 2400 painting cues of a 2048 x 2048 picture, each hidden by the next
    // (the later cue wins), so no LED-frame paints but the last's: every
    // cue's texels are still counted for the report, 2400 x 4.2e6 = 1.0e10
    // texel visits, beyond the budget. Refused before any is made.
    let prop = "tether_m = 0.5";
    let pattern = "plane = \"wall\"\nbeats = 2\nhand_radius_m = 0\nhead_turns = 1";
    let text = show_text(prop, pattern, "[1, 2]");
    let pic = Picture::from_srgba8(2048, 2048, &vec![255u8; 4 * 2048 * 2048]).unwrap();
    let mut show = painted(&text, pic, placement([0.0, 0.0], 1.0, FixedTo::Stage));
    let cue = show.cues[0].clone();
    show.cues.extend(std::iter::repeat_n(cue, 2399));
    let motions = glowscore::motion::simulate(&show);
    let tests = glowscore::check::coverage::tests_needed(&show, &motions);
    assert!(tests >= 2400.0 * 2048.0 * 2048.0, "{tests:e}");
    match check_show(&show) {
        Err(Failure::Check(CheckError::TooMuchPainting { tests, .. })) => {
            assert!(tests > glowscore::check::coverage::MAX_TEXEL_TESTS);
        }
        other => panic!("expected a refusal, got {:?}", other.map(|_| ())),
    }
}
