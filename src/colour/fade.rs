//! Crossfades interpolated in Oklab (B. Ottosson, 2020).

use palette::convert::FromColorUnclamped;
use palette::{FromColor, LinSrgb, Mix, Oklab, Srgb};

use super::transfer::to_linear;

/// Linear sRGB (channels 0..1) to Oklab (L 0..1, a, b), Ottosson's matrices, through palette.
///
/// palette is built without its `std` feature and with `libm`
/// (`Cargo.toml`), so its cube roots are libm's and the result is the same on
/// every machine; `tests/deterministic_maths.rs` fails if `std` comes back.
/// This is the one conversion the project uses (`cues` calls palette's
/// `Oklab::from_color` directly, the same code).
pub fn to_oklab(c: LinSrgb<f64>) -> Oklab<f64> {
    Oklab::from_color(c)
}

/// Oklab to linear sRGB (channels may leave 0..1 out of gamut), through palette.
///
/// The inverse uses only cubes and products. The published matrices carry 10
/// decimals: a round trip through [`to_oklab`] comes back within 5e-7 per
/// channel (white: 2.6e-7, measured).
pub fn from_oklab(c: Oklab<f64>) -> LinSrgb<f64> {
    LinSrgb::from_color_unclamped(c)
}

/// Crossfade from `a` to `b` (8-bit sRGB) at `t` (0..1, clamped), interpolated in Oklab; linear light out.
///
/// The two colours are decoded to linear light ([`to_linear`]), taken to Oklab,
/// mixed as `A + (B - A) t`, and brought back to linear light with every
/// channel clamped to 0..1 (the gamut of the LEDs). `t <= 0` (or NaN) returns
/// exactly `to_linear(a)` and `t >= 1` exactly `to_linear(b)`, without the
/// round trip through Oklab.
pub fn fade(a: Srgb<u8>, b: Srgb<u8>, t: f64) -> LinSrgb<f64> {
    let (la, lb) = (to_linear(a), to_linear(b));
    if t.is_nan() || t <= 0.0 {
        return la;
    }
    if t >= 1.0 {
        return lb;
    }
    let mixed = to_oklab(la).mix(to_oklab(lb), t);
    let c = from_oklab(mixed);
    LinSrgb::new(
        c.red.clamp(0.0, 1.0),
        c.green.clamp(0.0, 1.0),
        c.blue.clamp(0.0, 1.0),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::colour::{led_bytes, parse_colour};
    use crate::num;

    fn close(a: LinSrgb<f64>, b: LinSrgb<f64>, tol: f64) -> bool {
        (a.red - b.red).abs() < tol
            && (a.green - b.green).abs() < tol
            && (a.blue - b.blue).abs() < tol
    }

    #[test]
    fn endpoints_are_exact() {
        // Oklab fade: t = 0 is the first colour and t = 1 the second, exactly
        // (IEC 61966-2-1 decoding of each).
        let a = parse_colour("#ff2000").unwrap();
        let b = parse_colour("#0050ff").unwrap();
        assert_eq!(fade(a, b, 0.0), to_linear(a));
        assert_eq!(fade(a, b, 1.0), to_linear(b));
        assert_eq!(fade(a, b, -2.0), to_linear(a));
        assert_eq!(fade(a, b, 7.0), to_linear(b));
        assert_eq!(fade(a, b, f64::NAN), to_linear(a));
        assert_eq!(
            led_bytes(fade(a, b, 0.0), 1.0),
            led_bytes(to_linear(a), 1.0)
        );
    }

    #[test]
    fn black_to_white_midpoint_has_oklab_lightness_one_half() {
        // Oklab (B. Ottosson, 2020): black is L = 0, D65 white is L = 1, a = b = 0,
        // and grey at L has linear value L^3; so the midpoint is L = 0.5,
        // linear 0.125 in each channel.
        let black = Srgb::new(0u8, 0, 0);
        let white = Srgb::new(255u8, 255, 255);
        let w = to_oklab(to_linear(white));
        assert!((w.l - 1.0).abs() < 1e-6 && w.a.abs() < 1e-6 && w.b.abs() < 1e-6);
        let mid = fade(black, white, 0.5);
        let lab = to_oklab(mid);
        assert!((lab.l - 0.5).abs() < 1e-6, "{lab:?}");
        assert!(
            close(mid, LinSrgb::new(0.125, 0.125, 0.125), 1e-6),
            "{mid:?}"
        );
    }

    #[test]
    fn oklab_matches_ottosson_reference_values() {
        // Oklab (B. Ottosson, 2020) of pure sRGB red is L = 0.628, a = 0.225,
        // b = 0.126 (as in W3C CSS Color Module Level 4's oklab() examples;
        // from memory, 3 decimals).
        let red = to_oklab(LinSrgb::new(1.0, 0.0, 0.0));
        assert!((red.l - 0.628).abs() < 5e-4, "{red:?}");
        assert!((red.a - 0.225).abs() < 5e-4, "{red:?}");
        assert!((red.b - 0.126).abs() < 5e-4, "{red:?}");
    }

    /// Oklab from linear sRGB written out from B. Ottosson's 2020 article
    /// ("A perceptual color space for image processing": its linear sRGB to
    /// LMS matrix, cube root, LMS' to Lab matrix), with libm's cube root.
    fn ottosson(c: LinSrgb<f64>) -> [f64; 3] {
        let l = 0.412_221_470_8 * c.red + 0.536_332_536_3 * c.green + 0.051_445_992_9 * c.blue;
        let m = 0.211_903_498_2 * c.red + 0.680_699_545_1 * c.green + 0.107_396_956_6 * c.blue;
        let s = 0.088_302_461_9 * c.red + 0.281_718_837_6 * c.green + 0.629_978_700_5 * c.blue;
        let (l, m, s) = (num::cbrt(l), num::cbrt(m), num::cbrt(s));
        [
            0.210_454_255_3 * l + 0.793_617_785 * m - 0.004_072_046_8 * s,
            1.977_998_495_1 * l - 2.428_592_205 * m + 0.450_593_709_9 * s,
            0.025_904_037_1 * l + 0.782_771_766_2 * m - 0.808_675_766 * s,
        ]
    }

    #[test]
    fn oklab_agrees_with_ottossons_published_formula() {
        // The article's matrices written out above, against palette's
        // conversion: the same to 1e-12 (arithmetic order differs).
        for hex in [
            "#ff2000", "#0050ff", "#663399", "#ffffff", "#010203", "#7f7f00",
        ] {
            let lin = to_linear(parse_colour(hex).unwrap());
            let ours = to_oklab(lin);
            let want = ottosson(lin);
            assert!((ours.l - want[0]).abs() < 1e-12, "{hex}");
            assert!((ours.a - want[1]).abs() < 1e-12, "{hex}");
            assert!((ours.b - want[2]).abs() < 1e-12, "{hex}");
            let back = from_oklab(ours);
            assert!(close(back, lin, 5e-7), "{hex} round trip {back:?} {lin:?}");
        }
    }

    #[test]
    fn fades_stay_in_gamut_and_move_monotonically_in_lightness() {
        // Oklab L is linear in t along the fade (straight line in Oklab).
        let a = parse_colour("navy").unwrap();
        let b = parse_colour("yellow").unwrap();
        let mut last = -1.0;
        for i in 0..=100 {
            let c = fade(a, b, f64::from(i) / 100.0);
            for v in [c.red, c.green, c.blue] {
                assert!((0.0..=1.0).contains(&v), "{c:?}");
            }
            let l = to_oklab(c).l;
            assert!(l > last, "step {i}");
            last = l;
        }
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn every_fade_is_in_gamut(
            a in any::<[u8; 3]>(), b in any::<[u8; 3]>(), t in -1.0f64..2.0
        ) {
            // LED gamut: linear light 0..1 per channel (docs/conventions.md,
            // "Colour on the frames").
            let c = fade(Srgb::from(a), Srgb::from(b), t);
            for v in [c.red, c.green, c.blue] {
                prop_assert!((0.0..=1.0).contains(&v));
            }
        }

        #[test]
        fn fading_a_colour_to_itself_keeps_its_led_bytes_within_one(
            a in any::<[u8; 3]>(), t in 0.0f64..1.0
        ) {
            // Oklab round trip (B. Ottosson, 2020 matrices, 10 decimals) moves
            // linear light by under 5e-7: at most one LED step at a rounding edge.
            let c = Srgb::from(a);
            let direct = crate::colour::led_bytes(to_linear(c), 1.0);
            let faded = crate::colour::led_bytes(fade(c, c, t), 1.0);
            for (x, y) in direct.iter().zip(faded) {
                prop_assert!(x.abs_diff(y) <= 1);
            }
        }
    }
}
