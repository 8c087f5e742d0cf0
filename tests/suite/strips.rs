//! LED strips and staffs on the frames: where each LED sits, gradients and
//! chases along a strip, and pictures painted by each LED's position,
//! checked against frames worked out by hand.

use crate::common;

use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::colour::{fade, led_bytes, parse_colour};
use glowscore::cues::{self, PropLights};
use glowscore::events::find_events;
use glowscore::model::Show;
use glowscore::motion::simulate;

const RED: [u8; 3] = [255, 0, 0];
const LIME: [u8; 3] = [0, 255, 0];
const BLUE: [u8; 3] = [0, 0, 255];

/// The placed lights of `show`.
fn lights(show: &Show) -> cues::Lights {
    let motions = simulate(show);
    let events = find_events(show, &motions);
    cues::place(show, &motions, &events)
}

/// Frame `k` of one prop's lights.
fn frame(show: &Show, pl: &PropLights, k: u64) -> Vec<[u8; 3]> {
    let mut f = vec![[0u8; 3]; pl.leds as usize];
    pl.fill_frame(show, k, &mut f);
    f
}

/// A folder of its own under the test target's temporary folder.
fn tmp(name: &str) -> PathBuf {
    common::scratch("strips", name)
}

/// A show at 60 bpm (one beat a second), 4 beats a bar, `rate` frames a
/// second, with one prop `p` (its keys given) playing pattern `x` (its keys
/// given) for `bars` bars, and the cues given.
fn show(rate: u32, prop: &str, pattern: &str, bars: u32, cues: &str) -> Show {
    common::show(&format!(
        r#"
[show]
frame_rate = {rate}
bpm = 60
beats_per_bar = 4

[prop.p]
anchor_m = [0.0, 1.5, 0.0]
{prop}

[pattern.x]
plane = "wall"
{pattern}

[[section]]
bars = [1, {bars}]
p = "x"

{cues}
"#
    ))
}

#[test]
fn leds_are_numbered_from_the_grip_out_head_half_first() {
    // docs/conventions.md, "Motion": LED 0 nearest the grip; a staff's `end = "both"`
    // strip is the head half's LEDs, then the tail half's.
    let s = show(
        100,
        "kind = \"staff\"\ntether_m = 0.6\nstrip = { leds = 4, from_m = 0.15, to_m = 0.6 }",
        "beats = 4\nhand_radius_m = 0.0\nhead_turns = 1",
        1,
        "",
    );
    let p = &s.props[0];
    assert_eq!(p.leds, 8);
    let along: Vec<f64> = p.led_spots().iter().map(|l| l.along_m).collect();
    let want = [0.15, 0.3, 0.45, 0.6, -0.15, -0.3, -0.45, -0.6];
    for (got, want) in along.iter().zip(want) {
        assert!((got - want).abs() < 1e-15, "{along:?}");
    }
    // A staff without a strip has `leds` at each end.
    let s = show(
        100,
        "kind = \"staff\"\ntether_m = 0.6\ntail_m = 0.4\nleds = 3",
        "beats = 4\nhand_radius_m = 0.0\nhead_turns = 1",
        1,
        "",
    );
    let along: Vec<f64> = s.props[0].led_spots().iter().map(|l| l.along_m).collect();
    assert_eq!(along, [0.6, 0.6, 0.6, -0.4, -0.4, -0.4]);
}

#[test]
fn a_gradient_runs_from_the_current_colour_to_the_next_in_oklab() {
    // Five LEDs: LED k shows the Oklab fade (B. Ottosson, 2020) from red to
    // blue at k/4; the ends are the colours themselves (IEC 61966-2-1 passes
    // pure primaries unchanged). At the next bar the cycle moves on: blue at
    // the grip, red at the tip.
    let s = show(
        100,
        "tether_m = 0.6\nstrip = { leds = 5, from_m = 0.2, to_m = 0.6 }",
        "beats = 4\nhand_radius_m = 0.1\nhead_turns = -3",
        2,
        "[[cue]]\nprop = \"p\"\nbars = [1, 2]\nat = \"bar\"\nalong = \"gradient\"\ncolours = [\"red\", \"blue\"]",
    );
    let l = lights(&s);
    let pl = &l.props[0];
    let (red, blue) = (parse_colour("red").unwrap(), parse_colour("blue").unwrap());
    let f = frame(&s, pl, 150);
    assert_eq!(f[0], RED);
    assert_eq!(f[4], BLUE);
    for (k, led) in f.iter().enumerate().take(4).skip(1) {
        assert_eq!(
            *led,
            led_bytes(fade(red, blue, k as f64 / 4.0), 1.0),
            "LED {k}"
        );
    }
    // Bar 2 starts at 4 s: frame 400 on.
    let f = frame(&s, pl, 450);
    assert_eq!(f[0], BLUE);
    assert_eq!(f[4], RED);
    assert_eq!(f[2], led_bytes(fade(blue, red, 0.5), 1.0));
}

#[test]
fn a_chase_moves_bands_of_colour_along_the_strip() {
    // Bands 2 LEDs wide moving 2 LEDs a beat away from the grip: at beat b
    // LED i is in band floor((i - 2 b) / 2) and shows colour (band mod 3).
    // Frame 25 at 100 frames/s has its midpoint at 0.255 s = 0.255 beats:
    // x_i = i - 0.51, so the bands are -1, 0, 0, 1, 1, 2, 2, 3 (worked by hand).
    let s = show(
        100,
        "tether_m = 0.6\nstrip = { leds = 8, from_m = 0.1, to_m = 0.6 }",
        "beats = 4\nhand_radius_m = 0.1\nhead_turns = -3",
        1,
        "[[cue]]\nprop = \"p\"\nbars = [1, 1]\nat = \"bar\"\nalong = \"chase\"\nchase_leds_per_beat = 2\nchase_width_leds = 2\ncolours = [\"red\", \"lime\", \"blue\"]",
    );
    let l = lights(&s);
    let pl = &l.props[0];
    assert_eq!(
        frame(&s, pl, 25),
        [BLUE, RED, RED, LIME, LIME, BLUE, BLUE, RED]
    );
    // One beat later every band has moved 2 LEDs out: the colours shift by one.
    assert_eq!(
        frame(&s, pl, 125),
        [LIME, BLUE, BLUE, RED, RED, LIME, LIME, BLUE]
    );
    // Every frame follows the rule.
    let colours = [RED, LIME, BLUE];
    for k in 0..400u64 {
        let beat = (k as f64 + 0.5) / 100.0;
        let f = frame(&s, pl, k);
        for (i, led) in f.iter().enumerate() {
            let band = ((i as f64 - 2.0 * beat) / 2.0).floor() as i64;
            assert_eq!(
                *led,
                colours[band.rem_euclid(3) as usize],
                "frame {k} LED {i}"
            );
        }
    }
}

#[test]
fn a_chase_of_the_narrowest_bands_shows_its_colours_without_overflowing() {
    // The narrowest band the reader accepts, a hundredth of an LED: every
    // LED still shows one of the cue's colours, the band it is in taken
    // round the cycle. (Narrower ones, down to 1e-300 LEDs, are refused
    // where they are written: see tests/bad/.)
    let cue = "[[cue]]\nprop = \"p\"\nbars = [1, 1]\nat = \"beat\"\nalong = \"chase\"\n\
               chase_leds_per_beat = 3\nchase_width_leds = 0.01\ncolours = [\"red\", \"blue\"]";
    let s = show(
        100,
        "tether_m = 0.5\nstrip = { leds = 8, from_m = 0.1, to_m = 0.5 }",
        "beats = 4\nhand_radius_m = 0.1\nhead_turns = 1",
        1,
        cue,
    );
    let l = lights(&s);
    for k in 0..400 {
        for led in frame(&s, &l.props[0], k) {
            assert!(led == RED || led == BLUE, "frame {k}: {led:?}");
        }
    }
}

/// A 4 x 4 picture: the top two rows red, the bottom two blue.
fn red_over_blue(dir: &Path) -> PathBuf {
    let mut img = image::RgbaImage::new(4, 4);
    for (_, y, px) in img.enumerate_pixels_mut() {
        *px = if y < 2 {
            image::Rgba([255, 0, 0, 255])
        } else {
            image::Rgba([0, 0, 255, 255])
        };
    }
    let path = dir.join("red-over-blue.png");
    img.save(&path).unwrap();
    path
}

fn painting_show(picture: &Path, extra: &str) -> Show {
    // A staff turning about a still hand (a plain wheel in the wall plane),
    // one turn every 4 beats, from 12 o'clock; 3 LEDs at 0.3, 0.4 and 0.5 m
    // on each half. The picture is 2 m square, centred on the anchor.
    show(
        100,
        "kind = \"staff\"\ntether_m = 0.5\nstrip = { leds = 3, from_m = 0.3, to_m = 0.5 }",
        "beats = 4\nhand_radius_m = 0.0\nhead_turns = 1",
        1,
        &format!(
            "[[cue]]\nprop = \"p\"\nbars = [1, 1]\nimage = \"{}\"\nimage_width_m = 2.0\n{extra}",
            picture.display()
        ),
    )
}

#[test]
fn each_led_paints_the_picture_where_it_is() {
    // Texel rows of a 2 m tall, 4-texel picture are 0.5 m; row centres at
    // +0.75 and +0.25 m are red, -0.25 and -0.75 m blue. An LED at height
    // y >= 0.25 m samples pure red and y <= -0.25 m pure blue (bilinear
    // sampling between texel centres).
    let dir = tmp("paint");
    let s = painting_show(&red_over_blue(&dir), "");
    let l = lights(&s);
    let pl = &l.props[0];
    // Frame 0: the rod points to 12 o'clock (0.45 degrees past): the head
    // half is up in the red, the tail half down in the blue.
    assert_eq!(frame(&s, pl, 0), [RED, RED, RED, BLUE, BLUE, BLUE]);
    // Frame 199: half a turn on (179.55 degrees): the other way round.
    assert_eq!(frame(&s, pl, 199), [BLUE, BLUE, BLUE, RED, RED, RED]);
}

#[test]
fn a_picture_fixed_to_the_hand_turns_with_it() {
    // Turning with the hand (one turn per hand revolution) as the rod does
    // (head_turns = 1): each LED keeps its place in the picture, so the head
    // half shows red and the tail half blue on every frame, mirrored or not.
    let dir = tmp("paint-hand");
    let pic = red_over_blue(&dir);
    for mirror in [false, true] {
        let mut s = painting_show(&pic, "image_fixed_to = \"hand\"");
        s.sections[0].placements[0].as_mut().unwrap().mirror = mirror;
        let l = lights(&s);
        for k in 0..400 {
            assert_eq!(
                frame(&s, &l.props[0], k),
                [RED, RED, RED, BLUE, BLUE, BLUE],
                "frame {k}, mirror {mirror}"
            );
        }
    }
}

#[test]
fn a_picture_fixed_to_the_hand_away_from_the_anchor_turns_about_the_anchor() {
    // Rigid-body kinematics: a picture fixed to the hand turns with it
    // about the anchor, the centre the hand turns about, and carries its
    // place with it. Centred 0.25 m above the anchor, the 2 m picture's red
    // rows have their centres at 1.0 and 0.5 m, its blue ones at 0.0 and
    // -0.5 m: at 12 o'clock the head-end LED (0.5 m) samples pure red, the
    // ones at 0.4 and 0.3 m a blend, the tail half pure blue. As the rod
    // turns with the hand, each LED keeps its place in the picture, so every
    // frame shows what the first does, mirrored or not.
    let dir = tmp("paint-hand-offset");
    let pic = red_over_blue(&dir);
    for mirror in [false, true] {
        let mut s = painting_show(
            &pic,
            "image_fixed_to = \"hand\"\nimage_centre_m = [0.0, 0.25]",
        );
        s.sections[0].placements[0].as_mut().unwrap().mirror = mirror;
        let l = lights(&s);
        let first = frame(&s, &l.props[0], 0);
        assert_eq!(first[2], RED, "mirror {mirror}");
        assert_eq!(&first[3..], [BLUE; 3], "mirror {mirror}");
        assert!(first[0] != RED && first[0] != BLUE, "{first:?}");
        for k in 1..400 {
            assert_eq!(
                frame(&s, &l.props[0], k),
                first,
                "frame {k}, mirror {mirror}"
            );
        }
    }
}

#[test]
fn seventy_two_led_tables_decode_byte_for_byte_in_c() {
    // A 72-LED strip painting, then a gradient and a chase: the reference C
    // decoder (C99, firmware-formats/) reproduces the CSV's bytes from both
    // binary forms.
    let dir = tmp("seventy-two");
    let pic = red_over_blue(&dir);
    let text = format!(
        r#"
[show]
frame_rate = 200
bpm = 120
beats_per_bar = 4

[prop.p]
tether_m = 0.6
anchor_m = [0.0, 1.5, 0.0]
strip = {{ leds = 72, from_m = 0.05, to_m = 0.6 }}
wire_order = "grb"

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.15
head_turns = -3

[[section]]
bars = [1, 3]
p = "flower"

[[cue]]
prop = "p"
bars = [1, 1]
image = "{}"
image_width_m = 1.2

[[cue]]
prop = "p"
bars = [2, 2]
at = "tip"
along = "gradient"
colours = ["gold", "teal", "crimson"]
fade_beats = 0.25

[[cue]]
prop = "p"
bars = [3, 3]
at = "beat"
along = "chase"
chase_leds_per_beat = 12
colours = ["white", "navy"]
"#,
        pic.display()
    );
    let show = dir.join("show.toml");
    std::fs::write(&show, text).unwrap();
    let out = dir.join("out");
    let run = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["compile", "--no-previews", "--out"])
        .arg(&out)
        .arg(&show)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let csv = std::fs::read_to_string(out.join("p.csv")).unwrap();
    let mut lines = csv.lines();
    assert!(lines.next().unwrap().ends_with(",r71,g71,b71"));
    let mut expect = Vec::new();
    for line in lines {
        let cells: Vec<u8> = line
            .split(',')
            .skip(2)
            .map(|c| c.parse().unwrap())
            .collect();
        assert_eq!(cells.len(), 72 * 3);
        for rgb in cells.chunks(3) {
            expect.extend([rgb[1], rgb[0], rgb[2]]); // GRB on the wire
        }
    }
    assert_eq!(
        expect.len(),
        3 * 4 * 100 * 72 * 3,
        "3 bars of 2 s at 200 frames/s"
    );
    for form in ["full", "compact"] {
        let dump = out.join(format!("p.{form}.dump"));
        let st = Command::new(common::decoder())
            .arg("dump")
            .arg(out.join(format!("p.{form}.bin")))
            .arg(&dump)
            .status()
            .unwrap();
        assert!(st.success(), "{form} refused");
        let got = std::fs::read(&dump).unwrap();
        assert_eq!(got.len(), expect.len(), "{form}");
        if let Some(i) = got.iter().zip(&expect).position(|(a, b)| a != b) {
            panic!("{form}: first difference at byte {i}");
        }
    }
}
