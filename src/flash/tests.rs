//! Flash analysis against the W3C WCAG 2.x general and red flash thresholds.

use std::time::Instant;

use palette::LinSrgb;

use super::*;
use crate::colour::{LUMINANCE_COEFFICIENTS, relative_luminance};

const BLACK: [f64; 3] = [0.0, 0.0, 0.0];
const WHITE: [f64; 3] = [1.0, 1.0, 1.0];

/// A square wave at `rate` frames/s: `half` frames of `off`, then `half` of `on`, repeated.
fn strobe(frames: usize, half: usize, off: [f64; 3], on: [f64; 3]) -> Vec<[f64; 3]> {
    (0..frames)
        .map(|i| if (i / half) % 2 == 1 { on } else { off })
        .collect()
}

fn report(frames: &[[f64; 3]], rate: f64) -> FlashReport {
    analyse(frames.iter().copied(), rate).unwrap()
}

#[test]
fn white_strobe_at_two_per_second_passes() {
    // W3C WCAG 2.2, 2.3.1: no more than three flashes in any one-second period.
    // 600 frames/s, 150 frames black then 150 white: 2 flashes per second.
    let r = report(&strobe(6000, 150, BLACK, WHITE), 600.0);
    assert_eq!(r.max_general.flashes, 2);
    assert_eq!(r.max_red.flashes, 0, "white is not a saturated red");
    assert!(r.passes());
    assert!(r.windows.is_empty());
    // 10 s of 2 Hz: 40 edges less the one at frame 0 that is not a change.
    assert_eq!(r.general_transitions, 39);
}

#[test]
fn white_strobe_at_five_per_second_warns() {
    // W3C WCAG 2.2, 2.3.1: five flashes in a second is over the limit of three.
    let r = report(&strobe(6000, 60, BLACK, WHITE), 600.0);
    assert_eq!(r.max_general.flashes, 5);
    assert!(!r.passes());
    assert_eq!(r.windows.len(), 1, "{:?}", r.windows);
    let w = r.windows[0];
    // First edge at frame 60 (0.1 s), last at frame 5940; the window ends with
    // that frame.
    assert_eq!(w.start_s, 0.1);
    assert_eq!(w.end_s, 5941.0 / 600.0);
    assert_eq!((w.general, w.red), (5, 0));
    assert_eq!(r.max_general.start_s, 0.1);
}

#[test]
fn three_per_second_is_allowed_and_four_is_not() {
    // W3C WCAG 2.x: "no more than three general flashes ... within any
    // one-second period": three passes, four fails.
    let three = report(&strobe(6000, 100, BLACK, WHITE), 600.0);
    assert_eq!(three.max_general.flashes, 3);
    assert!(three.passes());
    let four = report(&strobe(6000, 75, BLACK, WHITE), 600.0);
    assert_eq!(four.max_general.flashes, 4);
    assert!(!four.passes());
}

#[test]
fn dim_flicker_under_ten_percent_never_warns() {
    // W3C WCAG 2.x general flash: changes below 10 % of the maximum relative
    // luminance are not transitions, however fast. Grey 0.30 <-> 0.39 linear
    // changes luminance by 0.09, every frame, for a minute at 1000 frames/s.
    let a = [0.30; 3];
    let b = [0.39; 3];
    let r = report(&strobe(60_000, 1, a, b), 1000.0);
    assert_eq!(r.general_transitions, 0);
    assert_eq!(r.max_general.flashes, 0);
    assert!(r.passes());

    // Deterministic noise of +-0.045 around mid grey: also never a transition.
    let mut seed: u32 = 12345;
    let noisy: Vec<[f64; 3]> = (0..60_000)
        .map(|_| {
            // Numerical Recipes LCG (a = 1664525, c = 1013904223).
            seed = seed.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            let v = 0.5 + 0.09 * (f64::from(seed >> 8) / f64::from(1u32 << 24) - 0.5);
            [v; 3]
        })
        .collect();
    assert_eq!(report(&noisy, 1000.0).general_transitions, 0);
}

#[test]
fn slow_fade_is_one_transition() {
    // W3C WCAG 2.x: a flash is a *pair* of opposing changes; a fade from black
    // to white over 2 s is a single increase (our reading: measured between
    // extremes, with hysteresis), so it is no flash at all.
    let up: Vec<[f64; 3]> = (0..=1000).map(|i| [f64::from(i) / 1000.0; 3]).collect();
    let r = report(&up, 500.0);
    assert_eq!(r.general_transitions, 1);
    assert_eq!(r.max_general.flashes, 0);

    // Up and back down over 4 s: two opposing changes, but more than a
    // second apart (confirmed at 0.2 s and 2.4 s), so no window holds a flash.
    let mut up_down = up.clone();
    up_down.extend(up.iter().rev());
    let r = report(&up_down, 500.0);
    assert_eq!(r.general_transitions, 2);
    assert_eq!(r.max_general.flashes, 0);
    // The same shape in 0.8 s is one flash.
    let quick: Vec<[f64; 3]> = (0..=200)
        .chain((0..200).rev())
        .map(|i| [f64::from(i) / 200.0; 3])
        .collect();
    let r = report(&quick, 500.0);
    assert_eq!(r.general_transitions, 2);
    assert_eq!(r.max_general.flashes, 1);

    // A fade with a wobble of +-0.04 riding on it is still one transition.
    let wobbly: Vec<[f64; 3]> = (0..=1000)
        .map(|i| {
            let wobble = if i % 2 == 0 { 0.04 } else { -0.04 };
            [(f64::from(i) / 1000.0 * 0.9 + 0.05 + wobble).clamp(0.0, 1.0); 3]
        })
        .collect();
    assert_eq!(report(&wobbly, 500.0).general_transitions, 1);
}

#[test]
fn changes_between_bright_states_are_not_general_flashes() {
    // W3C WCAG 2.x: a general flash needs "the relative luminance of the darker
    // image" below 0.80; white <-> 0.85 grey at 5 Hz does not count.
    let r = report(&strobe(6000, 60, [0.85; 3], WHITE), 600.0);
    assert_eq!(r.general_transitions, 0);
    assert!(r.passes());
}

#[test]
fn red_rule_catches_a_red_strobe_the_general_rule_passes() {
    // Does the red rule ever catch what the general rule alone lets through?
    // Yes. For pure red (R, 0, 0), linear: relative luminance is 0.2126 R
    // (W3C WCAG 2.x), under the 0.1 step while R < 0.4704; the red quantity is
    // (R - G - B) x 320 = 320 R (WCAG 2.2, from memory), over the 20 step once
    // R > 0.0625. So a strobe between black and (0.3, 0, 0) changes luminance
    // by only 0.0638 but the red quantity by 96, and (0.3, 0, 0) is a
    // saturated red (R / (R + G + B) = 1 >= 0.8).
    let dim_red = [0.3, 0.0, 0.0];
    assert!(relative_luminance(LinSrgb::from(dim_red)) < GENERAL_LUMINANCE_CHANGE);
    assert!(red_quantity(LinSrgb::from(dim_red)) > RED_CHANGE);
    let r = report(&strobe(6000, 60, BLACK, dim_red), 600.0);
    assert_eq!(r.max_general.flashes, 0, "below the general threshold");
    assert_eq!(r.max_red.flashes, 5, "caught by the red rule");
    assert!(!r.passes());
    assert_eq!((r.windows[0].general, r.windows[0].red), (0, 5));

    // The same strobe at 2 Hz is within the red limit too.
    assert!(report(&strobe(6000, 150, BLACK, dim_red), 600.0).passes());

    // Below 0.0625 neither rule sees it (red quantity 19.2 <= 20).
    let r = report(&strobe(6000, 60, BLACK, [0.06, 0.0, 0.0]), 600.0);
    assert_eq!((r.general_transitions, r.red_transitions), (0, 0));

    // Full red at 5 Hz breaks both (luminance step 0.2126, red step 320).
    let r = report(&strobe(6000, 60, BLACK, [1.0, 0.0, 0.0]), 600.0);
    assert_eq!((r.max_general.flashes, r.max_red.flashes), (5, 5));
}

#[test]
fn unsaturated_orange_is_not_a_red_flash() {
    // WCAG 2.2 (from memory): only a saturated red, R / (R + G + B) >= 0.8,
    // makes red flashes. Linear (0.2, 0.06, 0) has ratio 0.77 and red quantity
    // 44.8 (> 20), and luminance 0.0854 (< 0.1): neither rule applies.
    let orange = [0.2, 0.06, 0.0];
    assert!(!is_saturated_red(LinSrgb::from(orange)));
    assert!((red_quantity(LinSrgb::from(orange)) - 44.8).abs() < 1e-9);
    let r = report(&strobe(6000, 60, BLACK, orange), 600.0);
    assert_eq!((r.max_general.flashes, r.max_red.flashes), (0, 0));
    assert!(r.passes());
}

#[test]
fn saturation_boundary_is_r_over_sum_of_0_8() {
    // WCAG 2.2 (from memory): R / (R + G + B) >= 0.8 is saturated red.
    assert!(is_saturated_red(LinSrgb::new(0.8, 0.2, 0.0)));
    assert!(!is_saturated_red(LinSrgb::new(0.79, 0.21, 0.0)));
    assert!(!is_saturated_red(LinSrgb::new(0.0, 0.0, 0.0)));
    // Negative R - G - B counts as 0.
    assert_eq!(red_quantity(LinSrgb::new(0.1, 0.5, 0.5)), 0.0);
}

#[test]
fn luminance_coefficients_decide_the_general_step() {
    // W3C WCAG 2.x relative luminance, 0.2126 R + 0.7152 G + 0.0722 B
    // (ITU-R BT.709): green 0.14 is a 0.100 step, green 0.139 a 0.0994 step.
    assert_eq!(LUMINANCE_COEFFICIENTS, [0.2126, 0.7152, 0.0722]);
    let r = report(&strobe(6000, 60, BLACK, [0.0, 0.14, 0.0]), 600.0);
    assert_eq!(r.max_general.flashes, 5);
    let r = report(&strobe(6000, 60, BLACK, [0.0, 0.139, 0.0]), 600.0);
    assert_eq!(r.max_general.flashes, 0);
    // Full blue against black changes luminance by 0.0722 only: by the WCAG
    // definitions it is no general flash (and blue is not red).
    let r = report(&strobe(6000, 60, BLACK, [0.0, 0.0, 1.0]), 600.0);
    assert_eq!((r.general_transitions, r.red_transitions), (0, 0));
}

#[test]
fn windows_merge_only_where_they_overlap() {
    // WCAG 2.x counts per one-second period. Two 5 Hz bursts 3 s apart are
    // two stretches. With 0.3 s more dark between them (0.4 s between edges),
    // a second across the gap holds 7 transitions, 3 flashes: still two. With
    // 0.1 s more (0.2 s between edges) it holds 9, 4 flashes: one stretch.
    let burst = strobe(1200, 60, BLACK, WHITE); // 2 s of 5 Hz at 600 frames/s
    let mut far = burst.clone();
    far.extend(std::iter::repeat_n(BLACK, 1800));
    far.extend(&burst);
    let r = report(&far, 600.0);
    assert_eq!(r.windows.len(), 2, "{:?}", r.windows);
    assert!(r.windows[0].end_s < r.windows[1].start_s);
    assert_eq!(r.windows[1].start_s, (1200.0 + 1800.0 + 60.0) / 600.0);

    let gap = |frames: usize| {
        let mut v = burst.clone();
        v.extend(std::iter::repeat_n(BLACK, frames));
        v.extend(&burst);
        report(&v, 600.0).windows
    };
    assert_eq!(gap(180).len(), 2, "{:?}", gap(180));
    let one = gap(60);
    assert_eq!(one.len(), 1, "{one:?}");
    assert_eq!(one[0].start_s, 0.1);
    assert_eq!(one[0].end_s, (1200.0 + 60.0 + 1200.0 - 60.0 + 1.0) / 600.0);
}

#[test]
fn peak_reports_where_its_window_starts() {
    // Dark for 2 s, then 1 s of a 4 Hz strobe (WCAG 2.x: over three).
    let mut frames = vec![BLACK; 1200];
    frames.extend(strobe(600, 75, WHITE, BLACK));
    frames.extend(vec![BLACK; 600]);
    let r = report(&frames, 600.0);
    assert_eq!(r.max_general.flashes, 4);
    assert_eq!(r.max_general.start_s, 2.0);
    assert_eq!(r.windows.len(), 1);
    assert_eq!(r.windows[0].start_s, 2.0);
}

#[test]
fn streaming_counts_each_window() {
    // The window ending at each frame covers the last second (WCAG 2.x: "any
    // one-second period").
    let mut a = FlashAnalyser::new(10.0).unwrap();
    let seq = [
        BLACK, WHITE, BLACK, WHITE, BLACK, BLACK, BLACK, BLACK, BLACK, BLACK, BLACK, BLACK,
    ];
    let counts: Vec<WindowCount> = seq.iter().map(|&c| a.push(c)).collect();
    assert_eq!(counts[3].general, 1, "three transitions: one flash");
    assert_eq!(counts[4].general, 2);
    assert_eq!(counts[4].start_s, 0.0);
    // Frame 11's window is frames 2..=11: the first transition (frame 1) is out.
    assert_eq!(counts[11].start_s, 0.2);
    assert_eq!(counts[11].general, 1);
    let r = a.finish();
    assert_eq!(r.frames, 12);
    assert_eq!(r.window_frames, 10);
    assert_eq!(r.duration_s, 1.2);
}

#[test]
fn window_length_follows_the_frame_rate() {
    // One second of frame start times: ceil(rate) frames.
    let n = |rate: f64| FlashAnalyser::new(rate).unwrap().finish().window_frames;
    assert_eq!(n(1000.0), 1000);
    assert_eq!(n(29.97), 30);
    assert_eq!(n(0.5), 1);
}

#[test]
fn bad_input_is_an_error_or_cleaned_not_a_panic() {
    for rate in [0.0, -5.0, f64::NAN, f64::INFINITY] {
        assert!(matches!(
            FlashAnalyser::new(rate),
            Err(FlashError::BadFrameRate(_))
        ));
    }
    let msg = FlashAnalyser::new(0.0).unwrap_err().to_string();
    assert_eq!(msg, "frame rate 0 Hz is not a positive finite number");
    let odd = [[f64::NAN, 2.0, -1.0], [f64::INFINITY, 0.0, 0.0], BLACK];
    let r = report(&odd, 100.0);
    assert_eq!(r.frames, 3);
    assert!(analyse(Vec::<[f64; 3]>::new(), 100.0).unwrap().passes());
}

#[test]
fn led_bytes_are_read_as_linear_light() {
    // docs/conventions.md, "Colour on the frames": table values are linear light scaled to 0..255.
    assert_eq!(led_light([255, 0, 51]), LinSrgb::new(1.0, 0.0, 0.2));
}

#[test]
fn four_minute_show_at_1000_hz_takes_milliseconds() {
    // 240 s x 1000 frames/s of a 5 Hz white strobe (WCAG 2.x: 5 flashes a second).
    let frames = 240_000;
    let start = Instant::now();
    let mut a = FlashAnalyser::new(1000.0).unwrap();
    for i in 0..frames {
        a.push(if (i / 100) % 2 == 1 { WHITE } else { BLACK });
    }
    let r = a.finish();
    let took = start.elapsed();
    assert_eq!(r.max_general.flashes, 5);
    assert_eq!(r.windows.len(), 1);
    assert_eq!(r.general_transitions, 2399);
    // Generous bound: a few milliseconds expected; far below what per-frame
    // rescans of the window (240 000 x 1000 steps) would cost.
    assert!(took.as_millis() < 250, "{took:?}");
}

mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn flicker_narrower_than_ten_percent_is_never_a_transition(
            base in 0.0f64..0.9, levels in proptest::collection::vec(0.0f64..0.099, 1..400)
        ) {
            // W3C WCAG 2.x general flash: changes under 10 % of the maximum
            // relative luminance are no transitions; with hysteresis this holds
            // for any sequence confined to a band narrower than 0.1.
            let frames: Vec<[f64; 3]> = levels.iter().map(|d| [base + d; 3]).collect();
            prop_assert_eq!(report(&frames, 100.0).general_transitions, 0);
        }

        #[test]
        fn counts_never_exceed_what_the_frames_allow(
            frames in proptest::collection::vec(any::<[u8; 3]>(), 0..300)
        ) {
            // At most one transition per frame; flashes are transitions / 2.
            let light: Vec<LinSrgb<f64>> = frames.iter().map(|&b| led_light(b)).collect();
            let r = analyse(light, 50.0).unwrap();
            prop_assert!(r.general_transitions <= r.frames);
            prop_assert!(r.red_transitions <= r.frames);
            prop_assert!(2 * r.max_general.flashes <= r.window_frames);
            prop_assert_eq!(r.passes(), r.max_general.flashes <= 3 && r.max_red.flashes <= 3);
            for w in &r.windows {
                prop_assert!(w.start_s < w.end_s && w.end_s <= r.duration_s);
            }
        }
    }
}
