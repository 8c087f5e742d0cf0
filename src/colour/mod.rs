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

/// sRGB bytes to linear light (temporary minimal version).
pub fn to_linear(c: Srgb<u8>) -> palette::LinSrgb<f64> {
    c.into_format::<f64>().into_linear()
}

/// Linear light times brightness, rounded to bytes (temporary minimal version).
pub fn led_bytes(c: palette::LinSrgb<f64>, brightness: f64) -> [u8; 3] {
    let q = |v: f64| (v.clamp(0.0, 1.0) * brightness * 255.0).round() as u8;
    [q(c.red), q(c.green), q(c.blue)]
}
