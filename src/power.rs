//! The LED current model: what a frame of LED bytes draws from the battery.
//!
//! A frame's current is `channel_current_a x (sum of every byte of every
//! LED) / 255 + idle_current_a`: each channel draws its full-brightness
//! current in proportion to its byte (LEDs driven by PWM or by a linear
//! current set from the byte). The check reports it (`check::light`) and the
//! prepared show uses it to dim props with `brightness_limit = true`.

/// Current of one frame of a prop whose `leds` LEDs all show `bytes`,
/// amperes: `leds x (r + g + b) / 255 x channel + idle`.
pub fn frame_current_a(bytes: [u8; 3], leds: u32, channel_a: f64, idle_a: f64) -> f64 {
    let sum = u32::from(bytes[0]) + u32::from(bytes[1]) + u32::from(bytes[2]);
    current_of_sum(u64::from(leds) * u64::from(sum), channel_a, idle_a)
}

/// Current of a frame whose LED bytes add up to `byte_sum` (every channel of
/// every LED), amperes.
pub fn current_of_sum(byte_sum: u64, channel_a: f64, idle_a: f64) -> f64 {
    byte_sum as f64 / 255.0 * channel_a + idle_a
}

/// The brightness scale (0..=1) that keeps a prop's peak current within
/// `max_a`, amperes, given its peak current `peak_a` with the current tables.
///
/// The LED part `peak_a - idle` is scaled; half a byte per channel of every
/// LED is kept in hand for rounding the scaled values to bytes. 1 when the
/// peak is already within the limit; 0 when even dark LEDs exceed it.
pub fn brightness_scale(peak_a: f64, max_a: f64, leds: u32, channel_a: f64, idle_a: f64) -> f64 {
    if peak_a <= max_a {
        return 1.0;
    }
    let led_peak = peak_a - idle_a;
    let rounding = f64::from(leds) * 3.0 * channel_a * 0.5 / 255.0;
    let room = max_a - idle_a - rounding;
    if led_peak <= 0.0 || room <= 0.0 {
        return 0.0;
    }
    (room / led_peak).clamp(0.0, 1.0)
}
