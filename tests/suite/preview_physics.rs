//! The long-exposure renderer against the physics of photography and
//! handbook geometry. Each check names its source.

use crate::common;

use glowscore::geom::{Mat3, Vec3};
use glowscore::preview::{self, Film, Pinhole, PreviewOptions, Shutter, View};
use proptest::prelude::*;

use common::{emitted, setup, shoot};

/// A one-prop show: `prop` and `pattern` are extra TOML lines of those tables.
fn one_prop(bpm: f64, rate: u32, prop: &str, pattern: &str, bars: u32, colour: &str) -> String {
    format!(
        r##"
[show]
frame_rate = {rate}
bpm = {bpm}
beats_per_bar = 4

[prop.p]
anchor_m = [0.0, 1.5, 0.0]
{prop}

[pattern.x]
{pattern}

[[section]]
bars = [1, {bars}]
p = "x"

[[cue]]
prop = "p"
bars = [1, {bars}]
at = "beat"
colours = [{colour}]
"##
    )
}

fn ortho(viewport: [f64; 4], w: u32, h: u32, shutter: Shutter) -> PreviewOptions {
    PreviewOptions {
        size: Some((w, h)),
        viewport: Some(viewport),
        shutter,
        ..PreviewOptions::default()
    }
}

fn assert_close(got: [f64; 3], want: [f64; 3], rel: f64, what: &str) {
    for c in 0..3 {
        let tol = rel * want[c].abs().max(1e-12);
        assert!(
            (got[c] - want[c]).abs() <= tol,
            "{what}: primary {c}: {} vs {} (rel {:e})",
            got[c],
            want[c],
            (got[c] - want[c]).abs() / want[c].abs().max(1e-12)
        );
    }
}

const BIG_VIEW: [f64; 4] = [-2.0, -0.5, 2.0, 3.5];

proptest! {
    #![proptest_config(ProptestConfig { cases: 16, ..ProptestConfig::default() })]

    /// Physics of exposure (radiant exposure is irradiance x time; a sensor
    /// adds up the energy that falls on it): with the whole glow inside the
    /// picture, the film holds exactly the light given off while the shutter
    /// is open, sum over frames of LED power x frame time, for any path; and
    /// times the exposure gain after metering.
    #[test]
    fn film_holds_all_the_light_given_off(
        hand in 0.001f64..0.4, // the reader refuses sizes under a millimetre
        tether in 0.2f64..0.7,
        turns in -4i32..=4,
        bpm in 40.0f64..200.0,
        rate in prop::sample::select(vec![50u32, 100, 240, 500, 1000]),
        leds in 1u32..=3,
        brightness in 0.2f64..=1.0,
        rgb in prop::array::uniform3(0u8..=255),
        open in 0.0f64..1.0,
        length in 0.05f64..3.0,
        glow in 2.0f64..30.0,
    ) {
        let colour = format!("\"#{:02x}{:02x}{:02x}\", \"#ff8000\"", rgb[0], rgb[1], rgb[2]);
        let prop = format!(
            "tether_m = {tether}\nleds = {leds}\nbrightness = {brightness}\nglow_sigma_mm = {glow}"
        );
        let pattern = format!(
            "plane = \"wall\"\nbeats = 4\nhand_radius_m = {hand}\nhead_turns = {turns}"
        );
        let s = setup(&one_prop(bpm, rate, &prop, &pattern, 2, &colour));
        let shutter = Shutter { start_s: Some(open), exposure_s: Some(length), bars: None };
        let photo = shoot(&s, &ortho(BIG_VIEW, 200, 200, shutter));
        let want = emitted(&s, photo.window_s);
        assert_close(photo.film.sum(), want, 0.005, "film vs emitted");
        let g = f64::from(photo.gain);
        let exposed = photo.film.sum().map(|v| v * g);
        assert_close(exposed, want.map(|v| v * g), 0.005, "exposed vs emitted x gain");
    }
}

/// The same light spread along a path four times as long: the same total
/// (conservation of energy), while the brightest pixel gets dimmer.
#[test]
fn longer_path_spreads_the_same_light() {
    let run = |hand: f64| {
        let pattern =
            format!("plane = \"wall\"\nbeats = 4\nhand_radius_m = {hand}\nhead_turns = 1");
        let s = setup(&one_prop(
            90.0,
            500,
            "tether_m = 0.1",
            &pattern,
            2,
            "\"#ffa040\", \"#4080ff\"",
        ));
        let photo = shoot(&s, &ortho(BIG_VIEW, 240, 240, Shutter::default()));
        (
            photo.film.sum(),
            photo.film.max(),
            emitted(&s, photo.window_s),
        )
    };
    let (short, short_max, want) = run(0.1);
    let (long, long_max, _) = run(0.7);
    assert_close(short, want, 0.005, "short path");
    assert_close(long, short, 0.005, "long path vs short path");
    assert!(long_max < 0.5 * short_max, "{long_max} vs {short_max}");
}

/// A frame's light is spread along the path it covers (an LED holds its
/// colour for the whole frame; common practice): a head at 6 m/s on 100
/// frames/s moves 60 mm, five glow widths, per frame, yet the light per
/// degree of a circle is even to 1 %, with no dot per frame (6-degree
/// bins: 52 mm of arc, less than one frame's travel).
#[test]
fn fast_head_on_few_frames_leaves_a_smooth_trail() {
    // Circle of 0.5 m at 6 m/s: one revolution (one bar of 4 beats) in
    // pi / 6 s, so 4 beats x 60 / (pi / 6) bpm.
    let bpm = 4.0 * 60.0 * 6.0 / std::f64::consts::PI;
    let pattern = "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1";
    let s = setup(&one_prop(
        bpm,
        100,
        "tether_m = 0.5",
        pattern,
        1,
        "\"white\"",
    ));
    let view = [-0.7, 0.8, 0.7, 2.2];
    let n = 1400u32;
    let photo = shoot(
        &s,
        &ortho(
            view,
            n,
            n,
            Shutter {
                bars: Some((1, 1)),
                ..Shutter::default()
            },
        ),
    );
    let mut bins = [0.0f64; 60];
    for y in 0..n {
        for x in 0..n {
            let v = f64::from(photo.film.pixel(x, y)[0]);
            if v == 0.0 {
                continue;
            }
            let px = -0.7 + (f64::from(x) + 0.5) * 1.4 / f64::from(n);
            let py = 2.2 - (f64::from(y) + 0.5) * 1.4 / f64::from(n) - 1.5;
            let a = glowscore::num::atan2(px, py).rem_euclid(std::f64::consts::TAU);
            let b = ((a / std::f64::consts::TAU * 60.0) as usize).min(59);
            bins[b] += v;
        }
    }
    // The first and last 6 degrees hold the ends of the exposure (and the
    // cue's last frame is dark from 0.52 s): leave them out.
    let inner = &bins[1..59];
    let max = inner.iter().copied().fold(0.0, f64::max);
    let min = inner.iter().copied().fold(f64::INFINITY, f64::min);
    assert!(
        max / min < 1.01,
        "light per 6 degrees varies from {min} to {max}"
    );
}

/// Light per unit length across a straight-ish stretch of trail: the sum of
/// the film along a cut across it, divided by the pixel's size along the cut.
fn cut_column(film: &Film, x: u32, rows: std::ops::Range<u32>) -> f64 {
    rows.map(|y| f64::from(film.pixel(x, y)[0])).sum()
}

fn cut_row(film: &Film, y: u32, cols: std::ops::Range<u32>) -> f64 {
    cols.map(|x| f64::from(film.pixel(x, y)[0])).sum()
}

/// Dwell time (radiant exposure H = E t, ISO 12232 / any photography text):
/// a head on the same circle at half the speed, over one revolution, leaves
/// twice the light per unit length; and the light per metre is power / speed.
#[test]
fn half_speed_leaves_twice_the_light_per_unit_length() {
    // A head on a circle of 0.5 m (no hand circle, tether turning once per bar).
    let pattern = "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1";
    let view = [-0.8, 0.7, 0.8, 2.3];
    let per_m = |bpm: f64, rate: u32| {
        let s = setup(&one_prop(
            bpm,
            rate,
            "tether_m = 0.5\nglow_sigma_mm = 6",
            pattern,
            1,
            "\"#ff0000\"",
        ));
        let photo = shoot(
            &s,
            &ortho(
                view,
                320,
                320,
                Shutter {
                    bars: Some((1, 1)),
                    ..Shutter::default()
                },
            ),
        );
        let px_m = 1.6 / 320.0;
        // Cuts across the trail at 3, 6 and 9 o'clock (away from 12, where
        // the revolution starts and ends).
        let right = cut_row(&photo.film, 160, 240..300) / px_m;
        let bottom = cut_column(&photo.film, 160, 240..310) / px_m;
        let left = cut_row(&photo.film, 160, 20..80) / px_m;
        [right, bottom, left]
    };
    let fast = per_m(60.0, 1000);
    let slow = per_m(30.0, 100);
    let speed = std::f64::consts::TAU * 0.5 / 4.0; // m/s at 60 bpm
    for i in 0..3 {
        let ratio = slow[i] / fast[i];
        assert!((ratio - 2.0).abs() < 0.04, "cut {i}: ratio {ratio}");
        // Full red (1.0) for 1/speed seconds per metre.
        let want = 1.0 / speed;
        assert!(
            (fast[i] - want).abs() / want < 0.02,
            "cut {i}: {} LED-s/m vs {want}",
            fast[i]
        );
    }
}

/// Dwell along one path: an antispin two-petal curve with hand R and tether
/// r is an ellipse of semi-axes r + R (vertical) and r - R; its speed at the
/// ends of the long axis is (r - R) w and at the ends of the short axis
/// (r + R) w (CRC Standard Mathematical Tables, ellipse x = a cos t,
/// y = b sin t), so the light per unit length there differs by (r + R)/(r - R).
#[test]
fn slow_parts_of_a_path_glow_brighter_in_proportion() {
    let pattern = "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = -1";
    let s = setup(&one_prop(
        60.0,
        500,
        "tether_m = 0.4\nglow_sigma_mm = 6",
        pattern,
        1,
        "\"#ff0000\"",
    ));
    let view = [-0.8, 0.7, 0.8, 2.3];
    let photo = shoot(
        &s,
        &ortho(
            view,
            320,
            320,
            Shutter {
                bars: Some((1, 1)),
                ..Shutter::default()
            },
        ),
    );
    // Long axis ends at y = 1.5 +- 0.5 (rows 50 and 250), short axis ends at
    // x = +-0.3 (columns 100 and 220); cut across the trail at each.
    let bottom = cut_column(&photo.film, 160, 220..280);
    let right = cut_row(&photo.film, 160, 190..250);
    let left = cut_row(&photo.film, 160, 70..130);
    let want = 0.5 / 0.3;
    for (name, slow, fast) in [
        ("bottom/right", bottom, right),
        ("bottom/left", bottom, left),
    ] {
        let ratio = slow / fast;
        assert!(
            (ratio - want).abs() / want < 0.02,
            "{name}: {ratio} vs {want}"
        );
    }
}

/// The brightest local maxima of a film (sum of primaries), at least
/// `apart` pixels from each other.
fn brightest(film: &Film, n: usize, apart: i64) -> Vec<(i64, i64)> {
    let mut found: Vec<(i64, i64)> = Vec::new();
    while found.len() < n {
        let mut best = (-1.0f32, 0, 0);
        for y in 0..film.height {
            for x in 0..film.width {
                let (xi, yi) = (i64::from(x), i64::from(y));
                if found
                    .iter()
                    .any(|&(fx, fy)| (fx - xi).abs() <= apart && (fy - yi).abs() <= apart)
                {
                    continue;
                }
                let v: f32 = film.pixel(x, y).iter().sum();
                if v > best.0 {
                    best = (v, xi, yi);
                }
            }
        }
        found.push((best.1, best.2));
    }
    found
}

/// Handbook geometry (CRC Standard Mathematical Tables and Formulae,
/// hypocycloid x = (a - b) cos t + b cos((a - b)t/b), y = (a - b) sin t -
/// b sin((a - b)t/b): its n = a/b cusps lie on the fixed circle of radius
/// a at t = 2 pi k / n). A hand of radius (n - 1) r with head turns
/// -(n - 1) traces it with b = r; the head stops at the cusps, so with a
/// fixed viewport the brightest pixels are the cusps, within one pixel.
fn check_cusps(n: u32) {
    let r = 0.2;
    let pattern = format!(
        "plane = \"wall\"\nbeats = 4\nhand_radius_m = {}\nhead_turns = -{}",
        f64::from(n - 1) * r,
        n - 1
    );
    let text = format!(
        r##"
[show]
frame_rate = 1000
bpm = 60
[prop.p]
tether_m = {r}
anchor_m = [0.0, 1.5, 0.0]
glow_sigma_mm = 3
[pattern.x]
{pattern}
[[section]]
bars = [1, 2]
p = {{ pattern = "x", delay_beats = 0.1 }}
[[cue]]
prop = "p"
bars = [1, 2]
at = "bar"
colours = ["white"]
"##
    );
    let s = setup(&text);
    let view = [-1.0, 0.5, 1.0, 2.5];
    let (w, h) = (400u32, 400u32);
    let photo = shoot(
        &s,
        &ortho(
            view,
            w,
            h,
            Shutter {
                bars: Some((1, 1)),
                ..Shutter::default()
            },
        ),
    );
    let a = f64::from(n) * r;
    let cusps: Vec<(f64, f64)> = (0..n)
        .map(|k| {
            // Clock angle t: x = a sin t (right), y = a cos t (up), wall plane.
            let t = std::f64::consts::TAU * f64::from(k) / f64::from(n);
            let (x, y) = (a * glowscore::num::sin(t), 1.5 + a * glowscore::num::cos(t));
            // docs/conventions.md, "Viewport": column i covers x = X0 + (i + 0.5)(X1 - X0)/W.
            let i = (x - view[0]) / (view[2] - view[0]) * f64::from(w) - 0.5;
            let j = (view[3] - y) / (view[3] - view[1]) * f64::from(h) - 0.5;
            (i, j)
        })
        .collect();
    let found = brightest(&photo.film, n as usize, 10);
    for (fx, fy) in found {
        let near = cusps
            .iter()
            .map(|&(i, j)| (fx as f64 - i).abs().max((fy as f64 - j).abs()))
            .fold(f64::INFINITY, f64::min);
        assert!(
            near <= 1.0,
            "n = {n}: bright pixel ({fx}, {fy}) is {near} px from the nearest cusp {cusps:?}"
        );
    }
}

#[test]
fn deltoid_cusps_are_the_brightest_pixels() {
    check_cusps(3);
}

#[test]
fn astroid_cusps_are_the_brightest_pixels() {
    check_cusps(4);
}

/// Pinhole projection (R. Hartley and A. Zisserman, Multiple View Geometry,
/// 2nd ed., sections 2.2 and 8.1): a plane maps to the picture by the
/// homography H = K R [u1 u2 (c - C)], and a conic C in the plane maps to
/// H^-T C H^-1. A wheel-plane circle photographed from a seat off to the
/// side is that ellipse: every bright pixel lies on it.
#[test]
fn wheel_circle_from_a_seat_is_the_projected_ellipse() {
    let pattern = "plane = \"wheel\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1";
    let s = setup(&one_prop(
        60.0,
        1000,
        "tether_m = 0.5\nglow_sigma_mm = 2",
        pattern,
        1,
        "\"white\"",
    ));
    let eye = Vec3::new(3.0, 1.7, 4.0);
    let target = Vec3::new(0.0, 1.5, 0.0);
    let (w, h, fov) = (320u32, 240u32, 20.0f64);
    let opts = PreviewOptions {
        size: Some((w, h)),
        pinhole: Some(Pinhole {
            eye_m: eye,
            look_at_m: Some(target),
            fov_deg: fov,
        }),
        ..PreviewOptions::default()
    };
    let photo = shoot(&s, &opts);
    // Camera frame: forward to the target, right = forward x (+y), up = right x forward.
    let fwd = (target - eye).normalize();
    let right = fwd.cross(&Vec3::y()).normalize();
    let up = right.cross(&fwd);
    let half = glowscore::num::rad(fov) / 2.0;
    let f = f64::from(h) / 2.0 * glowscore::num::cos(half) / glowscore::num::sin(half);
    // Picture rows grow downwards: v = h/2 - f y / z.
    let k = Mat3::new(
        f,
        0.0,
        f64::from(w) / 2.0,
        0.0,
        -f,
        f64::from(h) / 2.0,
        0.0,
        0.0,
        1.0,
    );
    let rot = Mat3::from_rows(&[right, up, fwd]);
    // Wheel plane: up = +y, right = +z; centre the anchor, radius the tether.
    let (u1, u2) = (Vec3::y(), Vec3::z());
    let hom = k * rot * Mat3::from_columns(&[u1, u2, target - eye]);
    let circle = Mat3::from_diagonal(&Vec3::new(1.0, 1.0, -0.25));
    let hinv = hom.try_inverse().expect("the plane is seen edge-off");
    let conic = hinv.transpose() * circle * hinv;
    let max = photo.film.max();
    let mut bright = 0;
    for y in 0..h {
        for x in 0..w {
            if photo.film.pixel(x, y)[0] < 0.5 * max {
                continue;
            }
            bright += 1;
            let p = Vec3::new(f64::from(x) + 0.5, f64::from(y) + 0.5, 1.0);
            let q = p.dot(&(conic * p));
            let g = conic * p;
            let dist = q.abs() / (2.0 * g.x.hypot(g.y));
            assert!(dist < 1.5, "pixel ({x}, {y}) is {dist} px off the ellipse");
        }
    }
    assert!(bright > 150, "only {bright} bright pixels");
}

/// PWM dimming (common practice: a PWM driver runs the LED at full current
/// for the duty fraction of each period): a 20 Hz driver at duty 55/255 on
/// a head at 0.785 m/s leaves 80 dashes per 4 s revolution, with the same
/// average light as a constant-current driver.
#[test]
fn pwm_driver_dashes_the_trail() {
    let pattern = "plane = \"wall\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1";
    let view = [-0.7, 0.8, 0.7, 2.2];
    let run = |pwm: &str| {
        let s = setup(&one_prop(
            60.0,
            500,
            &format!("tether_m = 0.5\nglow_sigma_mm = 1.5\n{pwm}"),
            pattern,
            1,
            "\"#808080\"",
        ));
        let photo = shoot(
            &s,
            &ortho(
                view,
                560,
                560,
                Shutter {
                    bars: Some((1, 1)),
                    ..Shutter::default()
                },
            ),
        );
        let want = emitted(&s, photo.window_s);
        (photo, want)
    };
    // Samples of the film along the circle (nearest pixel).
    let along = |film: &Film| -> Vec<f32> {
        (0..8000)
            .map(|i| {
                let t = std::f64::consts::TAU * (f64::from(i) + 0.5) / 8000.0;
                let (x, y) = (
                    0.5 * glowscore::num::sin(t),
                    1.5 + 0.5 * glowscore::num::cos(t),
                );
                let px = ((x + 0.7) / 1.4 * 560.0).floor() as u32;
                let py = ((2.2 - y) / 1.4 * 560.0).floor() as u32;
                film.pixel(px, py)[0]
            })
            .collect()
    };
    let (steady, want) = run("");
    let s = along(&steady.film);
    let smax = s.iter().copied().fold(0.0, f32::max);
    assert!(
        s.iter().all(|&v| v > 0.2 * smax),
        "the steady trail has gaps"
    );
    let (dashed, _) = run("pwm_hz = 20");
    assert_close(dashed.film.sum(), want, 0.01, "PWM average light");
    let d = along(&dashed.film);
    let dmax = d.iter().copied().fold(0.0, f32::max);
    // Count dashes with hysteresis: on above half the peak, off below a tenth.
    let mut on = d[d.len() - 1] > 0.5 * dmax;
    let mut rises = 0;
    for &v in &d {
        if !on && v > 0.5 * dmax {
            on = true;
            rises += 1;
        } else if on && v < 0.1 * dmax {
            on = false;
        }
    }
    assert!((79..=81).contains(&rises), "{rises} dashes");
}

/// Deterministic output: the same picture, byte for byte, on 1 or 3 threads.
#[test]
fn picture_does_not_depend_on_the_thread_count() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/shows/moth-garden.toml"
    ))
    .unwrap();
    let s = setup(&text);
    let opts = PreviewOptions {
        size: Some((320, 240)),
        view: View::Front,
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
