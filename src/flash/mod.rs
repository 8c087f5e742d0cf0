//! Flash-safety analysis after W3C WCAG 2.x (general and red flash thresholds).
//!
//! The input is one light source seen over time: one linear-light sRGB colour
//! (channels 0..1) per frame at a fixed frame rate. The caller decides what
//! the source is (one LED, a prop's LEDs averaged, the whole stage). The
//! output is a [`FlashReport`]: the most general and red flashes in any
//! one-second window, where those windows start, and the stretches of the
//! show where a window holds more than three.
//!
//! # What comes from WCAG
//!
//! From the text of WCAG 2.0, 2.1 and 2.2 (success criterion 2.3.1 "Three
//! Flashes or Below Threshold", the definitions of "general flash and red
//! flash thresholds" and of "relative luminance"):
//!
//! - Flashing is below the threshold when there are no more than three
//!   general flashes and no more than three red flashes within any one-second
//!   period ([`MAX_FLASHES`]); WCAG also lets flashing over a small enough
//!   area pass (see the last point of our reading).
//! - A *general flash* is a pair of opposing changes in relative luminance of
//!   10 % or more of the maximum relative luminance (1.0)
//!   ([`GENERAL_LUMINANCE_CHANGE`]) where the relative luminance of the darker
//!   image is below 0.80 ([`DARK_LUMINANCE_LIMIT`]); a pair of opposing changes
//!   is an increase followed by a decrease, or a decrease followed by an
//!   increase.
//! - A *red flash* is any pair of opposing transitions involving a saturated red.
//! - Relative luminance is `0.2126 R + 0.7152 G + 0.0722 B` on linear sRGB
//!   ([`crate::colour::relative_luminance`]).
//!
//! Recalled from memory, not checked against the text here (the WCAG 2.2
//! wording of the red rule): a saturated red is a colour with
//! `R / (R + G + B) >= 0.8` ([`RED_SATURATION`]), and a red transition is a
//! change of `(R - G - B) x 320` ([`RED_SCALE`]) by more than 20
//! ([`RED_CHANGE`]), negative values of `R - G - B` being set to 0, with R, G, B
//! the linear values of the relative-luminance definition.
//!
//! # What is our reading
//!
//! - **Transitions** are measured between extremes, not frame to frame: a
//!   transition is confirmed on the first frame where the signal has moved
//!   the threshold away from the last extreme (see `transitions.rs`). A slow
//!   fade is one transition; flicker smaller than the threshold never counts,
//!   however long it goes on.
//! - **Counting**: flashes in a window = transitions confirmed in it / 2,
//!   rounded down. A transition belongs to the frame that confirms it.
//! - **Windows** are the frames whose start times lie within one second:
//!   `ceil(frame_rate)` frames. Every window is examined (one ending at each
//!   frame; those at the start are shorter).
//! - **Saturated red involved**: a red transition counts when a saturated-red
//!   frame was shown during it or during the transition before it, so that
//!   the pair it forms with its neighbour involves a saturated red. Black
//!   (R + G + B = 0) is not a saturated red.
//! - **Screens versus props**: the thresholds were written for screens, and
//!   WCAG exempts flashes smaller than a given area of the visual field
//!   (0.006 steradians). A prop's LEDs are small but bright and move about
//!   the field of view, so no area exemption is applied: the thresholds serve
//!   as a conservative guide for props, not a certification.
//!
//! The analysis is streaming ([`FlashAnalyser`]): O(1) amortised work per
//! frame and no allocation per frame, so a four-minute show at 1000 frames/s
//! is analysed in milliseconds.

mod analyser;
mod transitions;

use palette::LinSrgb;

pub use analyser::{
    FlashAnalyser, FlashError, FlashReport, FlashWindow, Peak, WindowCount, analyse,
};

/// Most flashes allowed in any one-second period, general and red each (WCAG 2.x).
pub const MAX_FLASHES: usize = 3;
/// Length of the sliding window, seconds (WCAG 2.x: "any one-second period").
pub const WINDOW_S: f64 = 1.0;
/// Smallest relative-luminance change (0..1) that is a general-flash transition (WCAG 2.x: 10 %).
pub const GENERAL_LUMINANCE_CHANGE: f64 = 0.1;
/// The darker end of a general-flash transition must be below this relative luminance (WCAG 2.x).
pub const DARK_LUMINANCE_LIMIT: f64 = 0.8;
/// A saturated red has `R / (R + G + B)` at least this, linear sRGB (WCAG 2.2, from memory).
pub const RED_SATURATION: f64 = 0.8;
/// Scale of the red quantity `(R - G - B) x 320`, linear sRGB (WCAG 2.2, from memory).
pub const RED_SCALE: f64 = 320.0;
/// A red transition changes the red quantity by more than this (WCAG 2.2, from memory).
pub const RED_CHANGE: f64 = 20.0;

/// The red quantity `max(0, R - G - B) x 320` of a linear-light sRGB colour (WCAG 2.2, from memory).
pub fn red_quantity(c: LinSrgb<f64>) -> f64 {
    (c.red - c.green - c.blue).max(0.0) * RED_SCALE
}

/// True if a linear-light sRGB colour is a saturated red: `R / (R + G + B) >= 0.8` (WCAG 2.2, from memory).
pub fn is_saturated_red(c: LinSrgb<f64>) -> bool {
    let sum = c.red + c.green + c.blue;
    sum > 0.0 && c.red >= RED_SATURATION * sum
}

/// The linear light (channels 0..1) of LED table bytes, which are already linear: byte / 255.
///
/// The frame tables hold linear light scaled to 0..255 (`docs/conventions.md`,
/// "Colour on the frames"), so they must not be decoded with the sRGB curve again.
pub fn led_light(bytes: [u8; 3]) -> LinSrgb<f64> {
    let f = |b: u8| f64::from(b) / 255.0;
    LinSrgb::new(f(bytes[0]), f(bytes[1]), f(bytes[2]))
}

#[cfg(test)]
mod tests;
