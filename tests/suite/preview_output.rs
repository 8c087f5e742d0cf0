//! The preview's output: sRGB encoding against IEC 61966-2-1, golden
//! pictures, and the command line.
//!
//! Golden pictures (tests/golden/*.png) were looked at by eye when blessed.
//! To rewrite them after a deliberate change, run the tests with
//! `GLOWSCORE_BLESS=1`: the run rewrites every golden and then fails, so it
//! cannot pass by accident. On a mismatch the actual picture and a diff
//! picture are written to the target directory and the first differing
//! pixel is named.

use crate::common;
use crate::common::cli;

use std::path::{Path, PathBuf};

use glowscore::geom::Vec3;
use glowscore::prepared::Prepared;
use glowscore::preview::tone::{encode_srgb8, shoulder};
use glowscore::preview::{self, Pinhole, PreviewOptions, Shutter, View};
use image::{Rgb, RgbImage};

/// IEC 61966-2-1 (sRGB) encoding, written out from the standard: V = 12.92 L
/// for L <= 0.0031308, else 1.055 L^(1/2.4) - 0.055.
fn iec_encode(l: f64) -> f64 {
    if l <= 0.003_130_8 {
        12.92 * l
    } else {
        1.055 * glowscore::num::pow(l, 1.0 / 2.4) - 0.055
    }
}

/// IEC 61966-2-1 decoding: L = V / 12.92 for V <= 0.04045, else
/// ((V + 0.055) / 1.055)^2.4.
fn iec_decode(v: f64) -> f64 {
    if v <= 0.040_45 {
        v / 12.92
    } else {
        glowscore::num::pow((v + 0.055) / 1.055, 2.4)
    }
}

#[test]
fn srgb_encoding_matches_iec_61966_2_1_reference_points() {
    // IEC 61966-2-1: black and white are fixed points.
    assert_eq!(encode_srgb8(0.0), 0);
    assert_eq!(encode_srgb8(1.0), 255);
    // The break point of the two pieces: L = 0.0031308 <-> V = 0.04045.
    assert!((iec_encode(0.003_130_8) - 0.040_45).abs() < 1e-6);
    assert_eq!(encode_srgb8(0.003_130_8), 10); // 0.04045 x 255 = 10.31
    // The linear toe, slope 12.92: L = 0.001 -> V = 0.01292 (3.29 / 255).
    assert_eq!(encode_srgb8(0.001), 3);
    // Mid-grey and half light on the power segment (from the formula:
    // 0.18 -> 0.46135, 0.5 -> 0.73536).
    assert_eq!(encode_srgb8(0.18), 118);
    assert_eq!(encode_srgb8(0.5), 188);
    // Every 8-bit code decoded by the standard's formula encodes back to itself.
    for b in 0..=255u8 {
        let l = iec_decode(f64::from(b) / 255.0) as f32;
        assert_eq!(encode_srgb8(l), b, "code {b} (linear {l})");
    }
    // And a dense sweep agrees with the formula correctly rounded (except
    // within a hair of a rounding boundary, where f32 input decides).
    for i in 0..=200_000 {
        let l = f64::from(i) / 200_000.0;
        let exact = iec_encode(l) * 255.0;
        if (exact - exact.floor() - 0.5).abs() < 1e-4 {
            continue;
        }
        assert_eq!(
            f64::from(encode_srgb8(l as f32)),
            exact.round(),
            "linear {l}"
        );
    }
    // Out-of-range values clamp instead of wrapping.
    assert_eq!(encode_srgb8(-0.5), 0);
    assert_eq!(encode_srgb8(7.0), 255);
    assert_eq!(encode_srgb8(shoulder(1000.0)), 255);
}

const FLOWER: &str = r##"
[show]
frame_rate = 500
bpm = 100
beats_per_bar = 4

[prop.left]
tether_m = 0.5
anchor_m = [-0.25, 1.4, 0.0]

[prop.right]
tether_m = 0.5
anchor_m = [0.25, 1.4, 0.0]
glow_sigma_mm = 20

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.15
head_turns = -3

[pattern.wheel]
plane = "wheel"
beats = 2
hand_radius_m = 0.2
head_turns = 1

[pattern.floor]
plane = "floor"
beats = 4
hand_radius_m = 0.3
head_turns = 2
head_start_deg = 180

[[section]]
bars = [1, 2]
left = "flower"
right = { pattern = "flower", mirror = true }

[[section]]
bars = [3, 4]
left = "wheel"
right = "floor"

[[cue]]
prop = "left"
bars = [1, 4]
at = "tip"
colours = ["#ff2000", "#ffd000", "#20ff40", "#0050ff"]

[[cue]]
prop = "right"
bars = [1, 4]
at = "beat"
colours = ["deepskyblue", "#ff40a0"]
fade_beats = 0.5
"##;

fn golden_path(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/golden")
        .join(format!("{name}.png"))
}

/// Compares `img` with the golden picture `name`, or rewrites it when
/// `GLOWSCORE_BLESS=1` (and then fails).
fn check_golden(name: &str, img: &RgbImage) {
    let path = golden_path(name);
    if std::env::var("GLOWSCORE_BLESS").as_deref() == Ok("1") {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        preview::write_png_atomic(&path, img).unwrap();
        panic!(
            "blessed {}: look at it, then run again without GLOWSCORE_BLESS",
            path.display()
        );
    }
    let golden = match image::open(&path) {
        Ok(g) => g.to_rgb8(),
        Err(e) => panic!(
            "cannot read {} ({e}); write it with GLOWSCORE_BLESS=1",
            path.display()
        ),
    };
    assert_eq!(
        golden.dimensions(),
        img.dimensions(),
        "{name}: size differs from the golden"
    );
    let first = img
        .enumerate_pixels()
        .find(|(x, y, p)| golden.get_pixel(*x, *y) != *p);
    if let Some((x, y, p)) = first {
        let out = Path::new(env!("CARGO_TARGET_TMPDIR")).join("golden");
        std::fs::create_dir_all(&out).unwrap();
        let diff = RgbImage::from_fn(img.width(), img.height(), |i, j| {
            let (a, b) = (img.get_pixel(i, j).0, golden.get_pixel(i, j).0);
            Rgb([0, 1, 2].map(|c| (a[c].abs_diff(b[c]) as u16 * 8).min(255) as u8))
        });
        let actual = out.join(format!("{name}-actual.png"));
        let diff_path = out.join(format!("{name}-diff.png"));
        preview::write_png_atomic(&actual, img).unwrap();
        preview::write_png_atomic(&diff_path, &diff).unwrap();
        panic!(
            "{name}: pixel ({x}, {y}) is {:?}, the golden has {:?}; actual picture {}, diff (x8) {}",
            p.0,
            golden.get_pixel(x, y).0,
            actual.display(),
            diff_path.display()
        );
    }
}

fn render(opts: &PreviewOptions) -> RgbImage {
    let prepared = Prepared::new(common::show(FLOWER)).unwrap();
    preview::render(&prepared, opts).expect("renders")
}

fn small(view: View, bars: (u32, u32)) -> PreviewOptions {
    PreviewOptions {
        size: Some((160, 120)),
        view,
        shutter: Shutter {
            bars: Some(bars),
            ..Shutter::default()
        },
        ..PreviewOptions::default()
    }
}

#[test]
fn golden_flowers_front() {
    check_golden("flowers-front", &render(&small(View::Front, (1, 2))));
}

#[test]
fn golden_wheel_and_floor_side_with_scale_bar() {
    let mut o = small(View::Side, (3, 4));
    o.scale_bar = true;
    check_golden("wheel-floor-side", &render(&o));
}

#[test]
fn golden_wheel_and_floor_top() {
    check_golden("wheel-floor-top", &render(&small(View::Top, (3, 4))));
}

#[test]
fn golden_whole_show_from_a_seat() {
    let o = PreviewOptions {
        size: Some((160, 120)),
        pinhole: Some(Pinhole {
            eye_m: Vec3::new(2.5, 1.7, 5.0),
            look_at_m: None,
            fov_deg: 35.0,
        }),
        ..PreviewOptions::default()
    };
    check_golden("whole-show-seat", &render(&o));
}

#[test]
fn golden_fixed_viewport_half_a_bar_two_stops_over() {
    let o = PreviewOptions {
        size: Some((160, 120)),
        viewport: Some([-1.2, 0.6, 1.2, 2.4]),
        shutter: Shutter {
            start_s: Some(0.6),
            exposure_s: Some(1.2),
            bars: None,
        },
        ev_stops: 2.0,
        ..PreviewOptions::default()
    };
    check_golden("viewport-half-bar-ev2", &render(&o));
}

fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join("preview-cli");
    std::fs::create_dir_all(&d).unwrap();
    d.join(name)
}

fn moth() -> String {
    format!("{}/shows/moth-garden.toml", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn cli_accepts_values_that_begin_with_a_minus() {
    let out = tmp("minus.png");
    let st = cli()
        .args(["preview", &moth(), "--out"])
        .arg(&out)
        .args([
            "--viewport",
            "-1.8,0.4,1.8,2.4",
            "--size",
            "180x100",
            "--bars",
            "5-8",
            "--ev",
            "-1",
            "--camera",
            "-3,1.6,5",
            "--look-at",
            "0,1.35,0",
        ])
        .output()
        .unwrap();
    // The viewport is for orthographic views: with --camera it is refused as
    // a failed run (1), after parsing every value that starts with '-'.
    assert_eq!(st.status.code(), Some(1), "{st:?}");
    let st = cli()
        .args(["preview", &moth(), "--out"])
        .arg(&out)
        .args([
            "--viewport",
            "-1.8,0.4,1.8,2.4",
            "--size",
            "180x100",
            "--bars",
            "5-8",
            "--ev",
            "-1",
            "--scale-bar",
        ])
        .output()
        .unwrap();
    assert!(st.status.success(), "{st:?}");
    let img = image::open(&out).unwrap().to_rgb8();
    assert_eq!(img.dimensions(), (180, 100));
}

#[test]
fn cli_usage_errors_exit_2_and_failures_leave_the_old_picture() {
    let out = tmp("keep.png");
    std::fs::write(&out, b"earlier picture").unwrap();
    for bad in [
        vec!["--size", "0x10"],
        vec!["--viewport", "1,2,3"],
        vec!["--view", "back"],
        vec!["--bars", "4-2"],
        vec!["--look-at", "0,1,0"],
    ] {
        let st = cli()
            .args(["preview", &moth(), "--out"])
            .arg(&out)
            .args(&bad)
            .output()
            .unwrap();
        assert_eq!(st.status.code(), Some(2), "{bad:?}: {st:?}");
    }
    for bad in [
        vec!["--bars", "13-20"],
        vec!["--start-s", "100"],
        vec!["--exposure-s", "0"],
    ] {
        let st = cli()
            .args(["preview", &moth(), "--out"])
            .arg(&out)
            .args(&bad)
            .output()
            .unwrap();
        assert_eq!(st.status.code(), Some(1), "{bad:?}: {st:?}");
        assert!(!String::from_utf8_lossy(&st.stderr).is_empty());
    }
    assert_eq!(std::fs::read(&out).unwrap(), b"earlier picture");
}

#[test]
fn previews_for_compile_one_per_section_and_one_of_the_show() {
    let prepared = Prepared::new(common::show(FLOWER)).unwrap();
    let dir = tmp("compile");
    std::fs::create_dir_all(&dir).unwrap();
    let opts = PreviewOptions {
        size: Some((120, 90)),
        ..PreviewOptions::default()
    };
    let files = preview::write_previews(&prepared, &dir, &opts).unwrap();
    let names: Vec<String> = files.iter().map(|f| f.file_name()).collect();
    assert_eq!(
        names,
        [
            "preview.png",
            "preview-bars-1-2.png",
            "preview-bars-3-4.png"
        ]
    );
    for f in &files {
        assert_eq!(
            image::open(&f.path).unwrap().to_rgb8().dimensions(),
            (120, 90)
        );
    }
    // No temporary files are left behind.
    let left: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(left.is_empty());
}
