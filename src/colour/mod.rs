//! Colours for LED props: parsing, the sRGB transfer, Oklab fades and LED bytes.
//!
//! Colour spaces used here, and where each value lives:
//!
//! - **sRGB, 8-bit** ([`Srgb<u8>`]): what a show file names (`#rrggbb` or a
//!   CSS colour name). These are *encoded* (non-linear) values.
//! - **linear sRGB** ([`LinSrgb<f64>`], channels 0..1): light intensity,
//!   proportional to LED drive. Produced by [`to_linear`] (IEC 61966-2-1
//!   decoding). Fades end here, brightness scales here, and [`led_bytes`]
//!   turns it into the bytes of the frame tables.
//! - **Oklab** (B. Ottosson, 2020): the space in which [`fade`] interpolates,
//!   so that a crossfade looks even to the eye.
//!
//! [`Srgb<u8>`]: palette::Srgb
//! [`LinSrgb<f64>`]: palette::LinSrgb

mod fade;
mod parse;
mod transfer;

pub use fade::{fade, from_oklab, to_oklab};
pub use parse::{ColourError, css_names, parse_colour};
pub use transfer::{
    LUMINANCE_COEFFICIENTS, led_bytes, linear_to_srgb, relative_luminance, srgb_to_linear,
    to_linear,
};
