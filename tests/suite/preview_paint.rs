//! Previews of LED strips, staffs and painted pictures, against plane
//! geometry and the physics of exposure. Each check names its source.
//!
//! The pictures painted here are drawn in code (discs of one colour on a
//! transparent ground) and written to the test's temporary folder.

use crate::common;

use std::path::{Path, PathBuf};

use glowscore::preview::{self, Film, Photo, PreviewError, PreviewOptions, trail};
use image::{Rgba, RgbaImage};

use common::{emitted, setup, shoot};

/// An orthographic front view of `viewport` at `px_per_m`, shutter open
/// through the whole show.
fn ortho(viewport: [f64; 4], px_per_m: f64) -> PreviewOptions {
    let w = ((viewport[2] - viewport[0]) * px_per_m).round() as u32;
    let h = ((viewport[3] - viewport[1]) * px_per_m).round() as u32;
    PreviewOptions {
        size: Some((w, h)),
        viewport: Some(viewport),
        ..PreviewOptions::default()
    }
}

/// A disc of one colour on a transparent ground.
struct Disc {
    /// Centre, metres from the picture's centre: right, up.
    centre: [f64; 2],
    radius_m: f64,
    rgb: [u8; 3],
}

/// Writes a square picture `side_m` metres wide, one texel per millimetre,
/// holding `discs` (a texel is a disc's when its centre is inside), and
/// returns its absolute path.
fn disc_picture(name: &str, side_m: f64, discs: &[Disc]) -> PathBuf {
    let n = (side_m * 1000.0).round() as u32;
    let img = RgbaImage::from_fn(n, n, |i, j| {
        let x = (f64::from(i) + 0.5) / 1000.0 - 0.5 * side_m;
        let y = 0.5 * side_m - (f64::from(j) + 0.5) / 1000.0;
        for d in discs {
            if (x - d.centre[0]).hypot(y - d.centre[1]) < d.radius_m {
                return Rgba([d.rgb[0], d.rgb[1], d.rgb[2], 255]);
            }
        }
        Rgba([0, 0, 0, 0])
    });
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("preview_paint");
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join(format!("{name}.png"));
    img.save(&path).expect("writes the picture");
    path
}

/// A 0.32 m square picture of a red disc above a blue one, each of 6 cm
/// radius, centred 8 cm above and below the middle.
fn red_over_blue(name: &str) -> PathBuf {
    disc_picture(
        name,
        0.32,
        &[
            Disc {
                centre: [0.0, 0.08],
                radius_m: 0.06,
                rgb: [255, 0, 0],
            },
            Disc {
                centre: [0.0, -0.08],
                radius_m: 0.06,
                rgb: [0, 0, 255],
            },
        ],
    )
}

/// The anchor of every prop in these shows, stage metres (x, y).
const ANCHOR: [f64; 2] = [0.0, 1.5];

/// A one-prop show of two bars of 4 beats at 60 bpm, 1000 frames/s: `prop`
/// and `pattern` are extra TOML lines of those tables, `cue` the lines of
/// the one cue over both bars.
fn show_text(prop: &str, pattern: &str, cue: &str) -> String {
    format!(
        r##"
[show]
frame_rate = 1000
bpm = 60
beats_per_bar = 4

[prop.p]
anchor_m = [{}, {}, 0.0]
{prop}

[pattern.x]
plane = "wall"
beats = 4
{pattern}

[[section]]
bars = [1, 2]
p = "x"

[[cue]]
prop = "p"
bars = [1, 2]
{cue}
"##,
        ANCHOR[0], ANCHOR[1]
    )
}

/// A poi with a strip of 36 LEDs along its tether, 0.12 m to 0.58 m from the grip.
const POI_STRIP: &str =
    "tether_m = 0.6\nstrip = { leds = 36, from_m = 0.12, to_m = 0.58 }\nhead_mass_kg = 0.1";
/// An isolation: the hand on a circle of 0.10 m, the tether opposite it.
const ISOLATION: &str =
    "hand_radius_m = 0.10\nhead_turns = 1\nhand_start_deg = 0\nhead_start_deg = 180";
/// A four-petal antispin flower.
const FLOWER: &str = "hand_radius_m = 0.15\nhead_turns = -3";
/// Every LED white throughout.
const WHITE: &str = "at = \"bar\"\ncolours = [\"white\"]";

fn image_cue(path: &Path, side_m: f64, centre: [f64; 2], rotation_deg: f64) -> String {
    format!(
        "image = '{}'\nimage_width_m = {side_m}\nimage_centre_m = [{}, {}]\nimage_rotation_deg = {rotation_deg}",
        path.display(),
        centre[0],
        centre[1]
    )
}

/// The stage point (x, y) at the centre of pixel (i, j) of an orthographic
/// front view (docs/conventions.md, "Viewport": x = X0 + (i + 0.5)(X1 - X0)/W,
/// y = Y1 - (j + 0.5)(Y1 - Y0)/H).
fn stage_xy(opts: &PreviewOptions, film: &Film, i: u32, j: u32) -> [f64; 2] {
    let v = opts.viewport.expect("a fixed viewport");
    [
        v[0] + (f64::from(i) + 0.5) * (v[2] - v[0]) / f64::from(film.width),
        v[3] - (f64::from(j) + 0.5) * (v[3] - v[1]) / f64::from(film.height),
    ]
}

/// Area of one pixel, square metres.
fn pixel_area(opts: &PreviewOptions, film: &Film) -> f64 {
    let v = opts.viewport.expect("a fixed viewport");
    (v[2] - v[0]) / f64::from(film.width) * (v[3] - v[1]) / f64::from(film.height)
}

/// Area and centroid (stage x, y) of the pixels where `bright` holds.
fn region(
    opts: &PreviewOptions,
    film: &Film,
    bright: impl Fn(u32, u32) -> bool,
) -> (f64, [f64; 2]) {
    let (mut n, mut sx, mut sy) = (0u64, 0.0, 0.0);
    for j in 0..film.height {
        for i in 0..film.width {
            if bright(i, j) {
                let [x, y] = stage_xy(opts, film, i, j);
                n += 1;
                sx += x;
                sy += y;
            }
        }
    }
    let c = if n > 0 {
        [sx / n as f64, sy / n as f64]
    } else {
        [f64::NAN; 2]
    };
    (n as f64 * pixel_area(opts, film), c)
}

fn median(mut v: Vec<f64>) -> f64 {
    assert!(!v.is_empty(), "no samples");
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Plane geometry (the area of a disc is pi r^2) and dwell time: in an
/// isolation every strip LED runs round the anchor on a circle of radius
/// |d - R| at the hand's angular rate w, so it moves at w rho and leaves
/// light per unit length proportional to 1 / rho (radiant exposure is
/// irradiance x time); the tracks are evenly spaced in rho, so the light
/// per unit area falls as 1 / rho. Multiplied by rho, the exposure of a
/// painted white disc is flat inside it: "bright" is more than half the
/// level just inside its edge (15 to 30 mm in, beyond two glow widths).
/// That bright area is the disc's, pi r^2, within 5 %; and the flat level
/// holds across the disc: within 5 % between the parts of it more than r/3
/// nearer to and farther from the anchor than its centre, where the
/// uncorrected light differs by more than half.
#[test]
fn isolation_paints_a_disc_of_its_area() {
    let r = 0.10;
    let pic = disc_picture(
        "white-disc",
        0.3,
        &[Disc {
            centre: [0.0, 0.0],
            radius_m: r,
            rgb: [255, 255, 255],
        }],
    );
    let centre = [0.22, 0.05];
    let s = setup(&show_text(
        POI_STRIP,
        ISOLATION,
        &image_cue(&pic, 0.3, centre, 0.0),
    ));
    let opts = ortho([-0.05, 1.2, 0.55, 1.9], 1000.0);
    let photo = shoot(&s, &opts);
    let film = &photo.film;
    let disc_c = [ANCHOR[0] + centre[0], ANCHOR[1] + centre[1]];
    let rho = |i: u32, j: u32| {
        let [x, y] = stage_xy(&opts, film, i, j);
        (x - ANCHOR[0]).hypot(y - ANCHOR[1])
    };
    let from_edge = |i: u32, j: u32| {
        let [x, y] = stage_xy(&opts, film, i, j);
        r - (x - disc_c[0]).hypot(y - disc_c[1])
    };
    let flat = |i: u32, j: u32| f64::from(film.pixel(i, j)[0]) * rho(i, j);
    let mut rim = Vec::new();
    let (mut near, mut far) = (Vec::new(), Vec::new());
    let rho_c = (disc_c[0] - ANCHOR[0]).hypot(disc_c[1] - ANCHOR[1]);
    for j in 0..film.height {
        for i in 0..film.width {
            let e = from_edge(i, j);
            if (0.015..=0.030).contains(&e) {
                rim.push(flat(i, j));
            }
            if e > 0.02 {
                let d = rho(i, j) - rho_c;
                if d < -r / 3.0 {
                    near.push((flat(i, j), f64::from(film.pixel(i, j)[0])));
                } else if d > r / 3.0 {
                    far.push((flat(i, j), f64::from(film.pixel(i, j)[0])));
                }
            }
        }
    }
    let level = median(rim);
    let (area, _) = region(&opts, film, |i, j| flat(i, j) > 0.5 * level);
    let want = std::f64::consts::PI * r * r;
    eprintln!("isolation disc: area {area} vs {want}");
    assert!(
        (area - want).abs() / want < 0.05,
        "bright area {area} m^2 vs pi r^2 = {want} m^2"
    );
    let m = |v: &Vec<(f64, f64)>, k: usize| {
        median(v.iter().map(|p| if k == 0 { p.0 } else { p.1 }).collect())
    };
    let (near_flat, far_flat) = (m(&near, 0), m(&far, 0));
    let (near_raw, far_raw) = (m(&near, 1), m(&far, 1));
    eprintln!("flat near {near_flat} far {far_flat}; raw near {near_raw} far {far_raw}");
    assert!(
        (near_flat / far_flat - 1.0).abs() < 0.05,
        "light x rho: {near_flat} near the anchor, {far_flat} far from it"
    );
    assert!(near_raw / far_raw > 1.5, "{near_raw} vs {far_raw}");
}

/// Painted and lit-throughout exposures of the same prop, strip and motion,
/// in the same view: the first divided by the second is, at each point, the
/// share of the light passing there that the picture let through, whatever
/// the density of the tracks (exposures add linearly: radiant exposure is
/// the integral of irradiance over time). "Bright" in a primary is a share
/// of more than a half.
struct Painted {
    opts: PreviewOptions,
    paint: Photo,
    lit: Photo,
}

impl Painted {
    fn new(pattern: &str, cue: &str, viewport: [f64; 4]) -> Self {
        let opts = ortho(viewport, 1000.0);
        let paint = shoot(&setup(&show_text(POI_STRIP, pattern, cue)), &opts);
        let lit = shoot(&setup(&show_text(POI_STRIP, pattern, WHITE)), &opts);
        Painted { opts, paint, lit }
    }

    fn share(&self, c: usize, i: u32, j: u32) -> f64 {
        let all = f64::from(self.lit.film.pixel(i, j)[c]);
        if all > 0.0 {
            f64::from(self.paint.film.pixel(i, j)[c]) / all
        } else {
            0.0
        }
    }

    /// Area and centroid of the pixels bright in primary `c`.
    fn bright(&self, c: usize) -> (f64, [f64; 2]) {
        region(&self.opts, &self.paint.film, |i, j| {
            self.share(c, i, j) > 0.5
        })
    }

    /// The smallest lit-throughout light in the disc of `radius` about
    /// stage point `centre`: more than 0 when the strip reaches all of it.
    fn least_light_in(&self, centre: [f64; 2], radius: f64) -> f32 {
        let film = &self.lit.film;
        let mut least = f32::INFINITY;
        for j in 0..film.height {
            for i in 0..film.width {
                let [x, y] = stage_xy(&self.opts, film, i, j);
                if (x - centre[0]).hypot(y - centre[1]) < radius {
                    least = least.min(film.pixel(i, j)[0]);
                }
            }
        }
        least
    }
}

/// Plane geometry (a disc's area is pi r^2 and its centroid is its centre)
/// and the placement of pictures (a picture fixed to the stage stays where
/// it is put, whatever the pattern; common practice for painted spinning):
/// a white disc painted by a four-petal antispin flower, whose strip LEDs
/// trace petal curves of every size and speed, covers pi r^2 within 5 %
/// and its centroid is within 2 mm (a third of the glow's standard
/// deviation) of where it was placed.
#[test]
fn antispin_flower_keeps_a_painted_disc_where_it_was_placed() {
    let r = 0.08;
    let pic = disc_picture(
        "white-disc-small",
        0.2,
        &[Disc {
            centre: [0.0, 0.0],
            radius_m: r,
            rgb: [255, 255, 255],
        }],
    );
    let centre = [-0.12, 0.27];
    let p = Painted::new(
        FLOWER,
        &image_cue(&pic, 0.2, centre, 0.0),
        [-0.8, 0.7, 0.8, 2.3],
    );
    let placed = [ANCHOR[0] + centre[0], ANCHOR[1] + centre[1]];
    assert!(
        p.least_light_in(placed, r + 0.02) > 0.0,
        "the strip does not reach all of the disc"
    );
    let (area, c) = p.bright(0);
    let want = std::f64::consts::PI * r * r;
    eprintln!("flower disc: area {area} vs {want}, centroid {c:?} vs {placed:?}");
    assert!(
        (area - want).abs() / want < 0.05,
        "bright area {area} m^2 vs pi r^2 = {want} m^2"
    );
    let off = (c[0] - placed[0]).hypot(c[1] - placed[1]);
    assert!(off < 0.002, "centroid {c:?} is {off} m from {placed:?}");
}

/// Clock angle (degrees clockwise from straight up, as docs/conventions.md reads
/// angles in the wall plane seen from the front) of the way from `a` to `b`.
fn clock_deg(a: [f64; 2], b: [f64; 2]) -> f64 {
    glowscore::num::atan2(b[0] - a[0], b[1] - a[1]).to_degrees()
}

/// Orientation of a painted picture (common practice for painted spinning:
/// a picture fixed to the stage is seen upright, and turned by its
/// rotation, clockwise on the plane's clock): a red disc above a blue one,
/// painted by an antispin flower, comes out with the red centroid straight
/// above the blue one within 2 degrees; placed with image_rotation_deg = 30
/// the way from blue to red points 30 degrees clockwise from up, within 2
/// degrees.
#[test]
fn antispin_flower_paints_a_picture_upright_and_turned_as_placed() {
    let pic = red_over_blue("red-over-blue");
    let centre = [0.05, 0.3];
    let placed = [ANCHOR[0] + centre[0], ANCHOR[1] + centre[1]];
    for turn in [0.0, 30.0] {
        let p = Painted::new(
            FLOWER,
            &image_cue(&pic, 0.32, centre, turn),
            [-0.8, 0.7, 0.8, 2.3],
        );
        assert!(
            p.least_light_in(placed, 0.16) > 0.0,
            "the strip does not reach the picture"
        );
        let (_, red) = p.bright(0);
        let (_, blue) = p.bright(2);
        let angle = clock_deg(blue, red);
        eprintln!("turn {turn}: red {red:?} blue {blue:?} angle {angle}");
        assert!(
            (angle - turn).abs() < 2.0,
            "turned {turn} degrees: blue to red points {angle} degrees from up"
        );
    }
}

/// A staff with `leds` LEDs on each half, `from_m` to `to_m` from the grip.
fn staff(leds: u32, from_m: f64, to_m: f64) -> String {
    format!(
        "kind = \"staff\"\ntether_m = 0.6\ntail_m = 0.6\nhead_mass_kg = 0.1\n\
         strip = {{ leds = {leds}, from_m = {from_m}, to_m = {to_m}, end = \"both\" }}"
    )
}

/// Euclid (the sum of two collinear vectors; a point at a fixed distance
/// from a centre lies on a circle): every strip LED d metres from the grip
/// along the prop (d < 0 on a staff's tail half), on a hand circle of
/// radius R, is at hand + d dir. In an extension dir points away from the
/// anchor, so the LED runs on a circle of radius |R + d|; in an isolation
/// towards it, |R - d|. Every point of light of every LED lies on its
/// circle to 1e-9 m, in the wall plane, and the points go all the way
/// round, no further apart along it than the spacing asked for.
#[test]
fn strip_leds_trace_circles_of_the_summed_radius() {
    const SPACING_M: f64 = 0.01;
    let hand = 0.15;
    for (name, pattern, sign) in [
        ("extension", "hand_radius_m = 0.15\nhead_turns = 1", 1.0),
        (
            "isolation",
            "hand_radius_m = 0.15\nhead_turns = 1\nhead_start_deg = 180",
            -1.0,
        ),
    ] {
        let s = setup(&show_text(&staff(5, 0.1, 0.5), pattern, WHITE));
        let prop = &s.show.props[0];
        let end = s.show.end_s();
        let pieces = trail::pieces(&s.show, &s.motions, &s.lights, 0.0, end, &|_| SPACING_M)
            .expect("a small exposure");
        let mut distances: Vec<f64> = prop.led_spots().iter().map(|l| l.along_m).collect();
        distances.sort_by(f64::total_cmp);
        for d in &distances {
            let mine: Vec<_> = pieces.iter().filter(|p| p.along_m == *d).collect();
            assert!(!mine.is_empty(), "{name}: no light from the LED at {d} m");
            let want = (hand + sign * d).abs();
            let mut angles = Vec::new();
            for p in &mine {
                let (x, y) = (p.pos.x - ANCHOR[0], p.pos.y - ANCHOR[1]);
                let rho = x.hypot(y);
                assert!(
                    (rho - want).abs() < 1e-9 && p.pos.z == 0.0,
                    "{name}: LED at {d} m is {rho} m from the anchor, not {want} m"
                );
                angles.push(clock_deg([0.0, 0.0], [x, y]).rem_euclid(360.0));
            }
            angles.sort_by(f64::total_cmp);
            let gap = angles
                .windows(2)
                .map(|w| w[1] - w[0])
                .chain([angles[0] + 360.0 - angles[angles.len() - 1]])
                .fold(0.0, f64::max);
            let arc = gap.to_radians() * want;
            assert!(
                arc <= SPACING_M * (1.0 + 1e-9),
                "{name}: LED at {d} m leaves a gap of {arc} m between points"
            );
        }
        let seen: std::collections::BTreeSet<u64> =
            pieces.iter().map(|p| p.along_m.to_bits()).collect();
        assert_eq!(seen.len(), 10, "{name}: ten LED places on the staff");
    }
}

/// Conservation of energy (a sensor adds up the energy that falls on it;
/// radiant exposure is irradiance x time): with every glow inside the
/// picture, the film holds the light of every LED, summed over LEDs and
/// frames as power x time, within 0.5 %, for strips whose LEDs differ
/// (a chase on a staff, a gradient with a PWM driver, a painting, three
/// differently coloured LEDs sharing one head).
#[test]
fn film_holds_the_light_of_every_led() {
    let pic = red_over_blue("red-over-blue-energy");
    let chase = "at = \"beat\"\ncolours = [\"#ff2000\", \"#20ff80\", \"#3040ff\"]\n\
                 along = \"chase\"\nchase_leds_per_beat = 3\nchase_width_leds = 2";
    let gradient = "at = \"beat\"\ncolours = [\"#ff8000\", \"#2040ff\"]\nalong = \"gradient\"\nfade_beats = 0.5";
    let cases = [
        (
            "chase on a staff",
            staff(24, 0.05, 0.6),
            FLOWER.to_string(),
            chase.to_string(),
        ),
        (
            "gradient with PWM",
            format!("{POI_STRIP}\npwm_hz = 300\nbrightness = 0.7"),
            ISOLATION.to_string(),
            gradient.to_string(),
        ),
        (
            "painting",
            POI_STRIP.to_string(),
            FLOWER.to_string(),
            image_cue(&pic, 0.32, [0.05, 0.3], 20.0),
        ),
        (
            "three LEDs in one head",
            "tether_m = 0.5\nleds = 3".to_string(),
            FLOWER.to_string(),
            gradient.to_string(),
        ),
    ];
    for (name, prop, pattern, cue) in cases {
        let s = setup(&show_text(&prop, &pattern, &cue));
        let photo = shoot(&s, &ortho([-1.2, 0.3, 1.2, 2.7], 150.0));
        let want = emitted(&s, photo.window_s);
        let got = photo.film.sum();
        eprintln!("{name}: {got:?} vs {want:?}, {} points", photo.pieces);
        for c in 0..3 {
            assert!(
                (got[c] - want[c]).abs() <= 0.005 * want[c].max(1e-12),
                "{name}: primary {c}: film {} vs emitted {}",
                got[c],
                want[c]
            );
        }
        assert!(want.iter().sum::<f64>() > 0.1, "{name}: the LEDs are dark");
    }
}

/// Fourier analysis (the Poisson summation formula): Gaussians of standard
/// deviation s set d apart add up to a constant plus a ripple of relative
/// amplitude 2 exp(-2 pi^2 s^2 / d^2), 1.4 % for s = d / 2 and more than
/// 100 % for s = 2 mm, d = 13 mm. A lit strip in an isolation lays its
/// tracks d = 13.1 mm apart in radius (the LED pitch); with the default
/// glow (half the pitch) the light x radius (flat by dwell time, as in the
/// disc check above), averaged round each 1 mm ring, varies by less than
/// 3.5 % peak to peak across the band (2.9 % by the formula, plus the
/// pixels); with a 2 mm glow the tracks show as rings (more than 50 %).
#[test]
fn default_strip_glow_draws_a_lit_strip_as_an_even_band() {
    let pitch: f64 = (0.58 - 0.12) / 35.0;
    let ripple = |prop: &str| {
        let s = setup(&show_text(prop, ISOLATION, WHITE));
        let glow = preview::glow_sigma_m(&s.show.props[0]);
        let opts = ortho([-0.55, 0.95, 0.55, 2.05], 1000.0);
        let photo = shoot(&s, &opts);
        let film = &photo.film;
        let mut bins = vec![(0.0f64, 0u32); 600];
        for j in 0..film.height {
            for i in 0..film.width {
                let [x, y] = stage_xy(&opts, film, i, j);
                let rho = (x - ANCHOR[0]).hypot(y - ANCHOR[1]);
                let b = (rho * 1000.0) as usize;
                if b < bins.len() {
                    bins[b].0 += f64::from(film.pixel(i, j)[0]) * rho;
                    bins[b].1 += 1;
                }
            }
        }
        // From 0.1 m out (nearer the centre the rings are so tight that
        // light x radius is no longer flat across one glow) to the second
        // track from the outer end, 0.48 m - d.
        let lo = 100;
        let hi = ((0.48 - pitch) * 1000.0).floor() as usize;
        let means: Vec<f64> = bins[lo..hi]
            .iter()
            .map(|&(s, n)| s / f64::from(n))
            .collect();
        let max = means.iter().copied().fold(0.0, f64::max);
        let min = means.iter().copied().fold(f64::INFINITY, f64::min);
        (glow, max / min - 1.0)
    };
    let (glow, even) = ripple(POI_STRIP);
    eprintln!("default glow {glow} m: ripple {even}");
    assert!(
        (glow - 0.5 * pitch).abs() < 1e-12,
        "the default glow {glow} m is not half the pitch {pitch} m"
    );
    assert!(even < 0.035, "ripple {even} with the default glow");
    let (_, rings) = ripple(&format!("{POI_STRIP}\nglow_sigma_mm = 2"));
    eprintln!("2 mm glow: ripple {rings}");
    assert!(rings > 0.5, "ripple {rings} with a 2 mm glow");
}

/// The work is refused before it starts when it is too large: an exposure
/// of more LED-frames than the renderer walks, and one that would need more
/// points of light than the budget (here a 16000 x 2000 picture whose film
/// alone would take 384 MB).
#[test]
fn oversized_exposures_are_refused_before_the_work() {
    let big = "tether_m = 0.6\nstrip = { leds = 4000, from_m = 0.1, to_m = 0.58 }";
    // 50 bars at 60 bpm and 1000 frames/s of 4000 LEDs: 8e8 LED-frames,
    // fewer than a prepared show may have, more than the renderer walks.
    let text = show_text(big, ISOLATION, WHITE).replace("bars = [1, 2]", "bars = [1, 50]");
    let s = setup(&text);
    let err = preview::shoot(
        &s.prepared,
        &ortho([-1.0, 0.5, 1.0, 2.5], 100.0),
        &|_, _| {},
    )
    .expect_err("too many LED-frames");
    assert!(
        matches!(&err, PreviewError::TooLarge(m) if m.contains("LED-frames")),
        "{err}"
    );
    let fast = ISOLATION.replace("head_turns", "beats = 1\nhead_turns");
    let text = show_text(&format!("{POI_STRIP}\nglow_sigma_mm = 0.01"), &fast, WHITE)
        .replace("beats = 4\n", "")
        .replace("bars = [1, 2]", "bars = [1, 10]");
    let s = setup(&text);
    let opts = PreviewOptions {
        size: Some((16_000, 2_000)),
        viewport: Some([-0.5, 1.0, 0.5, 1.0625]),
        ..PreviewOptions::default()
    };
    let err = preview::shoot(&s.prepared, &opts, &|_, _| {}).expect_err("too many points");
    assert!(
        matches!(&err, PreviewError::TooLarge(m) if m.contains("points of light")),
        "{err}"
    );
}

/// Deterministic output: a staff painting a picture gives the same picture,
/// byte for byte, on 1 or 3 threads (points are made, turned into glows and
/// added in one fixed order).
#[test]
fn strip_painting_does_not_depend_on_the_thread_count() {
    let pic = red_over_blue("red-over-blue-threads");
    let s = setup(&show_text(
        &staff(24, 0.05, 0.6),
        FLOWER,
        &image_cue(&pic, 0.32, [0.05, 0.3], 0.0),
    ));
    let opts = PreviewOptions {
        size: Some((320, 240)),
        ..PreviewOptions::default()
    };
    let on = |n: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
            .install(|| preview::render(&s.prepared, &opts).unwrap())
    };
    let (a, b) = (on(1), on(3));
    assert_eq!(a.as_raw(), b.as_raw());
    assert!(a.as_raw().iter().any(|&v| v > 100), "the picture is dark");
}
