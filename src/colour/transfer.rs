//! The sRGB transfer function (IEC 61966-2-1), LED bytes and relative luminance.

use palette::{LinSrgb, Srgb};

use crate::num;

/// Encoded sRGB value (0..1) at and below which decoding is linear (IEC 61966-2-1).
const DECODE_THRESHOLD: f64 = 0.04045;
/// Linear value (0..1) at and below which encoding is linear (IEC 61966-2-1).
const ENCODE_THRESHOLD: f64 = 0.0031308;

/// Decodes one sRGB channel (encoded, 0..1) to linear light (0..1), IEC 61966-2-1.
///
/// `v / 12.92` up to 0.04045, `((v + 0.055) / 1.055)^2.4` above. Values outside
/// 0..1 follow the same pieces; NaN stays NaN.
pub fn srgb_to_linear(v: f64) -> f64 {
    if v <= DECODE_THRESHOLD {
        v / 12.92
    } else {
        num::pow((v + 0.055) / 1.055, 2.4)
    }
}

/// Encodes one linear-light channel (0..1) to sRGB (encoded, 0..1), IEC 61966-2-1.
///
/// `12.92 l` up to 0.0031308, `1.055 l^(1/2.4) - 0.055` above. Negative input
/// takes the linear piece; NaN stays NaN.
pub fn linear_to_srgb(l: f64) -> f64 {
    if l <= ENCODE_THRESHOLD {
        12.92 * l
    } else {
        1.055 * num::pow(l, 1.0 / 2.4) - 0.055
    }
}

/// Decodes an 8-bit sRGB colour to linear light (channels 0..1, `f64`), through palette.
///
/// palette 0.7 decodes `u8` to `f64` with a precomputed table of the
/// IEC 61966-2-1 curve: no `pow` at run time, the same bytes everywhere. The
/// table holds single-precision accuracy: it is within 1.4e-8 of
/// [`srgb_to_linear`] (worst at byte 143, measured), exact on the linear
/// segment, 0 maps to exactly 0.0 and 255 to exactly 1.0. That is far below
/// one LED step (1/255); at brightness 1 the LED bytes of both paths agree for
/// all 256 codes (tested).
pub fn to_linear(c: Srgb<u8>) -> LinSrgb<f64> {
    c.into_linear()
}

/// LED bytes of a linear-light colour (channels 0..1) times `brightness` (a factor, 1 = full).
///
/// Each channel is `round(255 * clamp(channel * brightness, 0, 1))`, halves away
/// from zero; a NaN channel or brightness gives 0. So with brightness 1, black,
/// white and the pure primaries (channels 0 or 1) pass unchanged.
pub fn led_bytes(c: LinSrgb<f64>, brightness: f64) -> [u8; 3] {
    let byte = |v: f64| {
        let x = v * brightness;
        if x.is_nan() {
            return 0;
        }
        // In 0.0..=255.0 after the clamp, so the casts neither wrap nor
        // saturate. Rounding half away from zero, as `f64::round` does, but
        // without a call into the maths library: `v - trunc(v)` is exact.
        let v = x.clamp(0.0, 1.0) * 255.0;
        let t = v as u8;
        if v - f64::from(t) >= 0.5 { t + 1 } else { t }
    };
    [byte(c.red), byte(c.green), byte(c.blue)]
}

/// Weights of linear R, G, B in relative luminance (ITU-R BT.709; W3C WCAG 2.x).
pub const LUMINANCE_COEFFICIENTS: [f64; 3] = [0.2126, 0.7152, 0.0722];

/// Relative luminance (0..1, white = 1) of a linear-light sRGB colour (ITU-R BT.709, WCAG 2.x).
pub fn relative_luminance(c: LinSrgb<f64>) -> f64 {
    let [kr, kg, kb] = LUMINANCE_COEFFICIENTS;
    kr * c.red + kg * c.green + kb * c.blue
}

#[cfg(test)]
mod tests {
    use super::*;

    fn byte_to_unit(b: u8) -> f64 {
        f64::from(b) / 255.0
    }

    #[test]
    fn decode_threshold_is_0_04045() {
        // IEC 61966-2-1: linear segment up to 0.04045, where both pieces meet
        // (0.04045 / 12.92 = 0.0031308...).
        let t = 0.04045;
        let linear_piece = t / 12.92;
        let power_piece = num::pow((t + 0.055) / 1.055, 2.4);
        assert_eq!(srgb_to_linear(t), linear_piece);
        assert!((linear_piece - power_piece).abs() < 1e-7, "pieces meet");
        assert_eq!(srgb_to_linear(0.04), 0.04 / 12.92);
        assert_eq!(srgb_to_linear(0.05), num::pow((0.05 + 0.055) / 1.055, 2.4));
    }

    #[test]
    fn encode_threshold_is_0_0031308() {
        // IEC 61966-2-1, inverse: linear segment up to 0.0031308.
        let t = 0.0031308;
        assert_eq!(linear_to_srgb(t), 12.92 * t);
        assert!((12.92 * t - (1.055 * num::pow(t, 1.0 / 2.4) - 0.055)).abs() < 1e-7);
        assert_eq!(linear_to_srgb(0.003), 12.92 * 0.003);
        assert_eq!(
            linear_to_srgb(0.0032),
            1.055 * num::pow(0.0032, 1.0 / 2.4) - 0.055
        );
    }

    #[test]
    fn byte_128_is_0_2158605_linear() {
        // IEC 61966-2-1 formula: ((128/255 + 0.055) / 1.055)^2.4 = 0.2158605
        // (7 decimals; the commonly tabulated value, from memory).
        assert!((srgb_to_linear(byte_to_unit(128)) - 0.215_860_5).abs() < 5e-8);
        assert!((to_linear(Srgb::new(128, 128, 128)).red - 0.215_860_5).abs() < 5e-8);
    }

    #[test]
    fn ends_of_the_curve_are_exact() {
        // IEC 61966-2-1 maps 0 to 0 and 1 to 1.
        assert_eq!(srgb_to_linear(0.0), 0.0);
        assert_eq!(srgb_to_linear(1.0), 1.0);
        assert_eq!(linear_to_srgb(0.0), 0.0);
        assert!((linear_to_srgb(1.0) - 1.0).abs() < 1e-15);
    }

    #[test]
    fn every_byte_survives_decode_then_encode() {
        // IEC 61966-2-1 encode is the inverse of decode: all 256 8-bit codes
        // come back after decode -> encode -> round.
        for b in 0..=255u8 {
            let back = linear_to_srgb(srgb_to_linear(byte_to_unit(b))) * 255.0;
            assert_eq!(back.round() as u8, b, "byte {b}");
            assert!((back - f64::from(b)).abs() < 1e-9, "byte {b}: {back}");
        }
    }

    #[test]
    fn palette_table_agrees_with_the_formula_for_every_byte() {
        // Both implement IEC 61966-2-1; palette through a lookup table held to
        // single precision (so 2e-8, not 1e-15).
        for b in 0..=255u8 {
            let p = to_linear(Srgb::new(b, b, b));
            let f = srgb_to_linear(byte_to_unit(b));
            assert!((p.red - f).abs() < 2e-8, "byte {b}: {} vs {f}", p.red);
            let exact = LinSrgb::new(f, f, f);
            assert_eq!(led_bytes(p, 1.0), led_bytes(exact, 1.0), "byte {b}");
            assert_eq!(p.red, p.green);
            assert_eq!(p.green, p.blue);
        }
    }

    #[test]
    fn black_white_and_primaries_pass_unchanged() {
        // docs/conventions.md, "Colour on the frames": black, white and the pure
        // primaries pass unchanged (IEC 61966-2-1 fixes 0 and 1).
        let cases = [
            [0, 0, 0],
            [255, 255, 255],
            [255, 0, 0],
            [0, 255, 0],
            [0, 0, 255],
            [255, 255, 0],
            [0, 255, 255],
            [255, 0, 255],
        ];
        for [r, g, b] in cases {
            assert_eq!(led_bytes(to_linear(Srgb::new(r, g, b)), 1.0), [r, g, b]);
        }
    }

    #[test]
    fn led_bytes_round_as_the_standard_library_does_at_every_half() {
        // Reference: Rust's `f64::round` (half away from zero), at every
        // half-byte and the doubles either side of it.
        for k in 0..=255u32 {
            let half = (f64::from(k) + 0.5) / 255.0;
            for bits in [half.to_bits() - 1, half.to_bits(), half.to_bits() + 1] {
                let x = f64::from_bits(bits);
                let want = (x.clamp(0.0, 1.0) * 255.0).round() as u8;
                assert_eq!(led_bytes(LinSrgb::new(x, x, x), 1.0), [want; 3], "{x}");
            }
        }
    }

    #[test]
    fn led_bytes_are_linear_light_times_brightness() {
        // IEC 61966-2-1: byte 128 is 0.2158605 linear; 0.2158605 * 255 = 55.04.
        let grey = to_linear(Srgb::new(128, 128, 128));
        assert_eq!(led_bytes(grey, 1.0), [55, 55, 55]);
        // Half brightness of white: 127.5 rounds half away from zero.
        let white = to_linear(Srgb::new(255, 255, 255));
        assert_eq!(led_bytes(white, 0.5), [128, 128, 128]);
        assert_eq!(led_bytes(white, 0.25), [64, 64, 64]);
        assert_eq!(led_bytes(white, 0.0), [0, 0, 0]);
        // Out-of-range and NaN inputs clamp instead of wrapping.
        assert_eq!(led_bytes(white, 3.0), [255, 255, 255]);
        assert_eq!(led_bytes(white, -1.0), [0, 0, 0]);
        assert_eq!(led_bytes(white, f64::NAN), [0, 0, 0]);
        assert_eq!(
            led_bytes(LinSrgb::new(f64::NAN, 2.0, -0.5), 1.0),
            [0, 255, 0]
        );
    }

    #[test]
    fn luminance_coefficients_sum_to_one() {
        // ITU-R BT.709 / W3C WCAG 2.x relative luminance: white has luminance 1.
        let sum: f64 = LUMINANCE_COEFFICIENTS.iter().sum();
        assert!((sum - 1.0).abs() < 1e-15, "{sum}");
        let white = to_linear(Srgb::new(255, 255, 255));
        assert!((relative_luminance(white) - 1.0).abs() < 1e-15);
        assert_eq!(relative_luminance(LinSrgb::new(0.0, 0.0, 0.0)), 0.0);
        assert_eq!(relative_luminance(LinSrgb::new(1.0, 0.0, 0.0)), 0.2126);
        assert_eq!(relative_luminance(LinSrgb::new(0.0, 1.0, 0.0)), 0.7152);
        assert_eq!(relative_luminance(LinSrgb::new(0.0, 0.0, 1.0)), 0.0722);
    }
}
