//! Section previews a person can read, by the rule of
//! docs/conventions.md, "Section previews": a section whose colours move round the figure is exposed for
//! one figure, so its hues stay apart instead of washing into one blend; a
//! wheel-plane section is drawn from the side; compile's summary and
//! `report.json` say what was chosen; the pictures are the same bytes every
//! time.

use crate::common;
use crate::common::cli;

use glowscore::prepared::Prepared;
use glowscore::preview::choice::Exposure;
use glowscore::preview::{self, PreviewOptions, Shutter, View};
use image::RgbImage;

/// A show of one prop `prop` (its TOML lines after `kind`) playing one
/// two-beat pattern in `plane` (a hand circle of 0.1 m, the tether turning
/// with it: an extension) through bars 1-4 at 120 bpm, with `cue` (its
/// TOML lines) over the same bars.
fn show_text(prop: &str, plane: &str, cue: &str) -> String {
    format!(
        "[show]\ntitle = \"readable\"\nframe_rate = 200\nbpm = 120\nbeats_per_bar = 4\n\n\
         [prop.p]\nkind = \"poi\"\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\n{prop}\n\n\
         [pattern.a]\nplane = \"{plane}\"\nbeats = 2\nhand_radius_m = 0.1\nfigure = \"extension\"\n\n\
         [[section]]\nbars = [1, 4]\np = \"a\"\n\n\
         [[cue]]\nprop = \"p\"\nbars = [1, 4]\n{cue}\n"
    )
}

/// A chase of red, lime and blue bands, two LEDs wide, running out along a
/// twelve-LED strip at three LEDs a beat and moved on by one colour every
/// beat: after one figure (two beats) the colours stand two places on, so
/// a second figure would paint other colours over the first's.
const CHASE: (&str, &str) = (
    "strip = { leds = 12, from_m = 0.1, to_m = 0.5 }",
    "at = \"beat\"\nalong = \"chase\"\nchase_leds_per_beat = 3\nchase_width_leds = 2\n\
     colours = [\"red\", \"lime\", \"blue\"]",
);

/// The hues (degrees) of the chase's colours.
const RGB_HUES: [f64; 3] = [0.0, 120.0, 240.0];

fn small() -> PreviewOptions {
    PreviewOptions {
        size: Some((240, 180)),
        ..PreviewOptions::default()
    }
}

/// Hue (degrees) and saturation of an sRGB pixel by the hexcone model
/// (A. R. Smith, "Color gamut transform pairs", SIGGRAPH 1978).
fn hue_saturation(p: [u8; 3]) -> (f64, f64) {
    let [r, g, b] = p.map(f64::from);
    let max = r.max(g).max(b);
    let min = r.min(g).min(b);
    let d = max - min;
    if max <= 0.0 || d <= 0.0 {
        return (0.0, 0.0);
    }
    let h = if max == r {
        60.0 * ((g - b) / d)
    } else if max == g {
        60.0 * ((b - r) / d + 2.0)
    } else {
        60.0 * ((r - g) / d + 4.0)
    };
    (h.rem_euclid(360.0), d / max)
}

/// Of the lit pixels (brightest channel at least 80 of 255), the share
/// whose hue is within 30 degrees of each of `hues` with a saturation of at
/// least 0.5, and the mean saturation of all lit pixels.
fn hue_shares(img: &RgbImage, hues: &[f64]) -> (Vec<f64>, f64) {
    let mut counts = vec![0usize; hues.len()];
    let (mut lit, mut sat) = (0usize, 0.0);
    for p in img.pixels() {
        if p.0.iter().copied().max().unwrap_or(0) < 80 {
            continue;
        }
        lit += 1;
        let (h, s) = hue_saturation(p.0);
        sat += s;
        if s < 0.5 {
            continue;
        }
        for (c, &want) in counts.iter_mut().zip(hues) {
            let off = (h - want).rem_euclid(360.0);
            if off.min(360.0 - off) <= 30.0 {
                *c += 1;
            }
        }
    }
    assert!(lit > 100, "only {lit} lit pixels");
    let shares = counts.iter().map(|&c| c as f64 / lit as f64).collect();
    (shares, sat / lit as f64)
}

/// The box (width, height, pixels) of the pixels brighter than 60 of 255.
fn lit_box(img: &RgbImage) -> (u32, u32) {
    let (mut lo, mut hi) = ([u32::MAX; 2], [0u32; 2]);
    for (x, y, p) in img.enumerate_pixels() {
        if p.0.iter().copied().max().unwrap_or(0) >= 60 {
            lo = [lo[0].min(x), lo[1].min(y)];
            hi = [hi[0].max(x), hi[1].max(y)];
        }
    }
    assert!(hi[0] >= lo[0], "nothing lit");
    (hi[0] - lo[0] + 1, hi[1] - lo[1] + 1)
}

/// The previews of `text` written into scratch folder `name`: the files
/// with what they show, and the section's picture.
fn section_preview(text: &str, name: &str) -> (Vec<preview::Written>, RgbImage) {
    let prepared = Prepared::new(common::show(text)).unwrap();
    let dir = common::scratch("previews_readable", name);
    let files = preview::write_previews(&prepared, &dir, &small()).unwrap();
    let names: Vec<String> = files.iter().map(|f| f.file_name()).collect();
    assert_eq!(names, ["preview.png", "preview-bars-1-4.png"]);
    let img = image::open(&files[1].path).unwrap().to_rgb8();
    (files, img)
}

/// The picture of the whole of bars 1-4, as every section preview was
/// exposed before the choice: the wash.
fn whole_section(text: &str) -> RgbImage {
    let prepared = Prepared::new(common::show(text)).unwrap();
    let opts = PreviewOptions {
        shutter: Shutter {
            bars: Some((1, 4)),
            ..Shutter::default()
        },
        ..small()
    };
    preview::render(&prepared, &opts).unwrap()
}

#[test]
fn a_chase_section_keeps_its_hues_apart() {
    let text = show_text(CHASE.0, "wall", CHASE.1);
    let (files, img) = section_preview(&text, "chase");
    let c = files[1].choice.expect("a section's choice");
    assert_eq!(
        c.exposure,
        Exposure::Figures {
            count: 1,
            figure_beats: 2.0,
            covers_section: false
        }
    );
    let (shares, sat) = hue_shares(&img, &RGB_HUES);
    for (share, hue) in shares.iter().zip(RGB_HUES) {
        assert!(
            *share >= 0.12,
            "hue {hue}: only {share:.3} of the lit pixels ({shares:?})"
        );
    }
    assert!(
        shares.iter().sum::<f64>() >= 0.6,
        "most lit pixels carry one of the cue's hues: {shares:?}"
    );
    assert!(sat >= 0.6, "mean saturation {sat:.3}");
    // The same section exposed whole washes the hues into one blend: the
    // test tells the two apart.
    let (shares, sat) = hue_shares(&whole_section(&text), &RGB_HUES);
    assert!(sat < 0.4, "the whole section: mean saturation {sat:.3}");
    assert!(shares.iter().sum::<f64>() < 0.3, "{shares:?}");
}

#[test]
fn colours_stepping_past_the_figure_show_one_figure() {
    // One LED, three colours on the beats of a two-beat circle: the first
    // figure is half red, half lime; later figures would lay blue and the
    // others over both halves.
    let text = show_text(
        "leds = 1",
        "wall",
        "at = \"beat\"\ncolours = [\"red\", \"lime\", \"blue\"]",
    );
    let (_, img) = section_preview(&text, "steps");
    let (shares, sat) = hue_shares(&img, &RGB_HUES);
    assert!(shares[0] >= 0.3 && shares[1] >= 0.3, "{shares:?}");
    assert!(
        shares[2] <= 0.05,
        "blue plays only from the third beat: {shares:?}"
    );
    assert!(sat >= 0.7, "mean saturation {sat:.3}");
    let (_, sat) = hue_shares(&whole_section(&text), &RGB_HUES);
    assert!(sat < 0.4, "the whole section: mean saturation {sat:.3}");
}

#[test]
fn a_still_colour_takes_the_whole_section_with_the_show() {
    let text = show_text("leds = 1", "wall", "colours = [\"gold\"]\nat = \"beat\"");
    let (files, img) = section_preview(&text, "still");
    let c = files[1].choice.expect("a section's choice");
    assert!(c.whole_section(), "{c:?}");
    assert_eq!(files[1].view, Some(View::Front));
    assert!(files[1].shared, "exposed with the whole show");
    // The section is the whole show: the same picture.
    let show = image::open(&files[0].path).unwrap().to_rgb8();
    assert_eq!(show, img);
}

#[test]
fn a_wheel_plane_section_is_drawn_from_the_side() {
    let text = show_text(
        "leds = 1",
        "wheel",
        "colours = [\"deepskyblue\"]\nat = \"beat\"",
    );
    let (files, img) = section_preview(&text, "wheel");
    assert_eq!(files[1].view, Some(View::Side));
    assert!(!files[1].shared, "framed on its own");
    assert_eq!(
        files[0].view,
        Some(View::Front),
        "the whole show stays front"
    );
    // The extension's circle (0.6 m across), seen face on: a round figure.
    let (w, h) = lit_box(&img);
    let aspect = f64::from(w) / f64::from(h);
    assert!((0.85..=1.18).contains(&aspect), "lit box {w}x{h}");
    // From the front the same light is a thin upright line.
    let front = image::open(&files[0].path).unwrap().to_rgb8();
    let (w, h) = lit_box(&front);
    assert!(f64::from(w) < 0.25 * f64::from(h), "front: lit box {w}x{h}");
}

#[test]
fn the_summary_and_the_report_say_what_was_chosen() {
    let dir = common::scratch("previews_readable", "compile");
    let show = dir.join("chase.toml");
    std::fs::write(&show, show_text(CHASE.0, "wheel", CHASE.1)).unwrap();
    let out = dir.join("out");
    let st = cli()
        .arg("compile")
        .arg(&show)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(st.status.success(), "{st:?}");
    let text = String::from_utf8(st.stdout).unwrap();
    assert!(
        text.contains("  previews: preview.png (the whole show, front view)\n"),
        "{text}"
    );
    assert!(
        text.contains(
            "            preview-bars-1-4.png (2 beats from bar 1: one figure (2 beats), \
             side view, framed on its own)\n"
        ),
        "{text}"
    );
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let compile = &report["compile"];
    assert_eq!(
        compile["previews"],
        serde_json::json!(["preview.png", "preview-bars-1-4.png"])
    );
    let choices = compile["preview_choices"].as_array().expect("a list");
    assert_eq!(choices.len(), 2);
    let show_choice = &choices[0];
    assert_eq!(show_choice["file"], "preview.png");
    assert_eq!(show_choice["bars"], serde_json::Value::Null);
    assert_eq!(show_choice["view"], "front");
    assert_eq!(show_choice["exposure"], "show");
    let sec = &choices[1];
    assert_eq!(sec["file"], "preview-bars-1-4.png");
    assert_eq!(sec["bars"], serde_json::json!([1, 4]));
    assert_eq!(sec["view"], "side");
    assert_eq!(sec["exposure"], "figures");
    assert_eq!(sec["figures"], 1);
    assert_eq!(sec["figure_beats"], 2.0);
    // Two beats at 120 bpm from frame 0.
    assert_eq!(sec["window_s"], serde_json::json!([0.0, 1.0]));
    assert_eq!(sec["framing"], "own");
    assert_eq!(
        sec["words"],
        "2 beats from bar 1: one figure (2 beats), side view, framed on its own"
    );
}

#[test]
fn the_choice_and_the_pictures_are_the_same_every_time() {
    let text = show_text(CHASE.0, "wheel", CHASE.1);
    let prepared = Prepared::new(common::show(&text)).unwrap();
    let mut runs = Vec::new();
    for run in ["first", "second"] {
        let dir = common::scratch("previews_readable", run);
        let files = preview::write_previews(&prepared, &dir, &small()).unwrap();
        let bytes: Vec<(String, Vec<u8>)> = files
            .iter()
            .map(|f| (f.file_name(), std::fs::read(&f.path).unwrap()))
            .collect();
        let choices: Vec<_> = files.iter().map(|f| (f.choice, f.view, f.shared)).collect();
        runs.push((bytes, choices));
    }
    assert_eq!(runs[0], runs[1]);
    // A show read again from its text chooses the same.
    let again = Prepared::new(common::show(&text)).unwrap();
    let c = |p: &Prepared| preview::choice::choose(p, 0);
    assert_eq!(c(&prepared), c(&again));
}
