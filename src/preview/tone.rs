//! Developing the film: exposure, a highlight shoulder, sRGB encoding.
//!
//! The exposed value of a pixel is `gain x film + background` in linear
//! light. Values up to [`KNEE`] pass unchanged; above it a smooth shoulder
//! `k + (1 - k)(1 - exp(-(v - k)/(1 - k)))` rolls highlights off towards
//! white instead of clipping them hard (per primary, so an over-exposed
//! orange drifts towards yellow and white, as it does on a real sensor).
//! The result is encoded to 8-bit sRGB (IEC 61966-2-1), correctly rounded:
//! palette's fast table encoder is off by one code in places (linear 0.5244
//! is code 191.56 by the standard's formula; it gives 191), so the codes
//! come from a table of the standard's rounding thresholds instead, built
//! once with libm.

use std::sync::OnceLock;

use image::RgbImage;
use rayon::prelude::*;

use super::splat::Film;
use crate::num;

/// Linear value where the highlight shoulder begins.
pub const KNEE: f32 = 0.6;
/// The exposed linear value the automatic meter gives the brightest pixel:
/// through the shoulder it comes out at about 0.967 (sRGB byte 251), just
/// below clipping.
pub const METER_TARGET: f32 = 1.6;

/// The highlight shoulder: linear in, linear out, never above 1.
pub fn shoulder(v: f32) -> f32 {
    if v <= KNEE {
        return v.max(0.0);
    }
    let s = 1.0 - KNEE;
    KNEE + s * (1.0 - num::exp(-f64::from((v - KNEE) / s)) as f32)
}

/// IEC 61966-2-1 decoding of an sRGB value in [0, 1] to linear light.
pub fn srgb_decode(v: f64) -> f64 {
    if v <= 0.040_45 {
        v / 12.92
    } else {
        num::pow((v + 0.055) / 1.055, 2.4)
    }
}

/// Cells per unit of linear light in the encoder's first-guess grid.
const GRID: usize = 4096;

struct Encoder {
    /// `thr[b]`: the smallest f32 whose code is `b` (`thr[0]` unused).
    thr: [f32; 256],
    /// Code of `i / GRID`, a first guess for values in that cell.
    grid: Vec<u8>,
}

fn encoder() -> &'static Encoder {
    static ENC: OnceLock<Encoder> = OnceLock::new();
    ENC.get_or_init(|| {
        let mut thr = [0.0f32; 256];
        for (b, t) in thr.iter_mut().enumerate().skip(1) {
            // Code b starts where the encoded value reaches (b - 1/2) / 255.
            let exact = srgb_decode((b as f64 - 0.5) / 255.0);
            let mut f = exact as f32;
            if f64::from(f) < exact {
                f = f32::from_bits(f.to_bits() + 1);
            }
            *t = f;
        }
        let slow = |v: f32| thr.iter().skip(1).take_while(|&&t| v >= t).count() as u8;
        let grid = (0..=GRID).map(|i| slow(i as f32 / GRID as f32)).collect();
        Encoder { thr, grid }
    })
}

/// 8-bit sRGB code of a linear value (IEC 61966-2-1 transfer function,
/// correctly rounded; values outside [0, 1] clamp).
pub fn encode_srgb8(v: f32) -> u8 {
    let enc = encoder();
    let v = if v.is_nan() { 0.0 } else { v.clamp(0.0, 1.0) };
    let mut b = enc.grid[(v * GRID as f32) as usize];
    while b < 255 && v >= enc.thr[b as usize + 1] {
        b += 1;
    }
    b
}

/// Gain (exposed linear value per LED-second) from the automatic meter:
/// the brightest primary of the brightest pixel, `max_value` LED-seconds,
/// goes to [`METER_TARGET`], then `ev_stops` more stops (+1 doubles).
/// A dark film gets gain 2^ev.
pub fn metered_gain(max_value: f32, ev_stops: f64) -> f32 {
    let stops = num::pow(2.0, ev_stops) as f32;
    if max_value > 0.0 {
        METER_TARGET / max_value * stops
    } else {
        stops
    }
}

/// Develops `film` with `gain` (per LED-second) over the linear sRGB
/// `background` into an 8-bit sRGB picture.
pub fn develop(film: &Film, gain: f32, background: [f32; 3]) -> RgbImage {
    let (w, h) = (film.width as usize, film.height as usize);
    let mut buf = vec![0u8; w * h * 3];
    buf.par_chunks_mut(w * 3).enumerate().for_each(|(y, row)| {
        let base = y * w;
        for (x, px) in row.chunks_exact_mut(3).enumerate() {
            for c in 0..3 {
                let v = gain * film.planes[c][base + x] + background[c];
                px[c] = encode_srgb8(shoulder(v));
            }
        }
    });
    RgbImage::from_raw(film.width, film.height, buf).expect("buffer has w x h x 3 bytes")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shoulder_is_continuous_monotonic_and_below_one() {
        assert_eq!(shoulder(0.3), 0.3);
        assert!((shoulder(KNEE + 1e-4) - KNEE).abs() < 2e-4);
        let mut prev = 0.0;
        for i in 0..400 {
            let v = shoulder(i as f32 * 0.05);
            assert!(v >= prev && v <= 1.0);
            prev = v;
        }
        assert!(encode_srgb8(shoulder(METER_TARGET)) < 255);
    }

    #[test]
    fn meter_puts_the_brightest_pixel_at_the_target() {
        let g = metered_gain(0.02, 0.0);
        assert!((g * 0.02 - METER_TARGET).abs() < 1e-6);
        assert!((metered_gain(0.02, 1.0) / g - 2.0).abs() < 1e-6);
    }
}
