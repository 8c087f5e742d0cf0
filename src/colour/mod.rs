//! Colours: parsing, sRGB transfer, LED bytes and fades (in progress).

use palette::Srgb;

/// Parses `#rrggbb` or a CSS colour name (temporary minimal version).
pub fn parse_colour(s: &str) -> Result<Srgb<u8>, String> {
    if let Some(hex) = s.strip_prefix('#')
        && hex.len() == 6
        && let Ok(v) = u32::from_str_radix(hex, 16)
    {
        return Ok(Srgb::new((v >> 16) as u8, (v >> 8) as u8, v as u8));
    }
    palette::named::from_str(&s.to_ascii_lowercase()).ok_or_else(|| format!("unknown colour `{s}`"))
}
