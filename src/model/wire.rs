//! Byte order of one LED on the wire: the eight channel orders a pixel chip may expect.

use std::fmt;

/// Order of the colour channels of one LED as sent to the chip (linear-light bytes).
///
/// The 3-byte orders permute R, G and B. The 4-byte orders add a white channel:
/// `w = min(r, g, b)` is taken out of the three colours (`r - w`, `g - w`, `b - w`),
/// a common practice for RGBW chips whose white LED is as bright as the colours together.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum WireOrder {
    /// Red, green, blue.
    Rgb,
    /// Red, blue, green.
    Rbg,
    /// Green, red, blue.
    Grb,
    /// Green, blue, red.
    Gbr,
    /// Blue, red, green.
    Brg,
    /// Blue, green, red.
    Bgr,
    /// Red, green, blue, white (white extracted as the minimum of the three).
    Rgbw,
    /// Green, red, blue, white (white extracted as the minimum of the three).
    Grbw,
}

/// Every order with its lower-case name, in the order `names()` lists them.
const ALL: [(WireOrder, &str); 8] = [
    (WireOrder::Rgb, "rgb"),
    (WireOrder::Rbg, "rbg"),
    (WireOrder::Grb, "grb"),
    (WireOrder::Gbr, "gbr"),
    (WireOrder::Brg, "brg"),
    (WireOrder::Bgr, "bgr"),
    (WireOrder::Rgbw, "rgbw"),
    (WireOrder::Grbw, "grbw"),
];

/// The lower-case names of every order, as `from_name` accepts them.
const NAMES: [&str; 8] = ["rgb", "rbg", "grb", "gbr", "brg", "bgr", "rgbw", "grbw"];

impl WireOrder {
    /// Parses a lower-case order name (`"grb"`, `"rgbw"`, ...); `None` for anything else.
    pub fn from_name(name: &str) -> Option<Self> {
        ALL.iter().find(|(_, n)| *n == name).map(|(o, _)| *o)
    }

    /// All accepted names, lower case, 3-byte orders first.
    pub fn names() -> &'static [&'static str] {
        &NAMES
    }

    /// The lower-case name of this order (`"grb"`).
    pub fn name(&self) -> &'static str {
        ALL.iter()
            .find(|(o, _)| o == self)
            .map_or("rgb", |(_, n)| *n)
    }

    /// Bytes one LED takes on the wire: 3, or 4 with a white channel.
    pub fn bytes_per_led(&self) -> usize {
        match self {
            WireOrder::Rgbw | WireOrder::Grbw => 4,
            _ => 3,
        }
    }

    /// The channel letters as stored in a binary table header: upper-case ASCII, zero-padded to 4.
    pub fn letters(&self) -> [u8; 4] {
        let mut out = [0u8; 4];
        for (o, c) in out.iter_mut().zip(self.name().bytes()) {
            *o = c.to_ascii_uppercase();
        }
        out
    }

    /// The order whose header letters are `letters` (`b"GRB\0"`); `None` if no order matches.
    pub fn from_letters(letters: [u8; 4]) -> Option<Self> {
        ALL.iter().map(|(o, _)| *o).find(|o| o.letters() == letters)
    }

    /// Encodes one linear-light `[r, g, b]` into wire bytes: writes the first
    /// `bytes_per_led()` bytes of `out` (a shorter `out` receives only what fits).
    pub fn encode(&self, rgb: [u8; 3], out: &mut [u8]) {
        let [r, g, b] = rgb;
        let w = r.min(g).min(b);
        let bytes: [u8; 4] = match self {
            WireOrder::Rgb => [r, g, b, 0],
            WireOrder::Rbg => [r, b, g, 0],
            WireOrder::Grb => [g, r, b, 0],
            WireOrder::Gbr => [g, b, r, 0],
            WireOrder::Brg => [b, r, g, 0],
            WireOrder::Bgr => [b, g, r, 0],
            WireOrder::Rgbw => [r - w, g - w, b - w, w],
            WireOrder::Grbw => [g - w, r - w, b - w, w],
        };
        let n = self.bytes_per_led();
        for (o, v) in out.iter_mut().zip(&bytes[..n]) {
            *o = *v;
        }
    }

    /// Encodes a whole frame of `[r, g, b]` LEDs into `out`, LED 0 first
    /// (`out` must hold `frame.len() * bytes_per_led()` bytes; extra LEDs are dropped).
    pub fn encode_frame(&self, frame: &[[u8; 3]], out: &mut [u8]) {
        let n = self.bytes_per_led();
        for (rgb, chunk) in frame.iter().zip(out.chunks_mut(n)) {
            self.encode(*rgb, chunk);
        }
    }
}

impl fmt::Display for WireOrder {
    /// Writes the lower-case name.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_name_round_trips() {
        for name in WireOrder::names() {
            let o = WireOrder::from_name(name).expect("listed name parses");
            assert_eq!(o.name(), *name);
            assert_eq!(o.to_string(), *name);
            assert_eq!(o.bytes_per_led(), name.len());
            assert_eq!(WireOrder::from_letters(o.letters()), Some(o));
        }
    }

    #[test]
    fn unknown_and_upper_case_names_are_rejected() {
        for bad in ["", "RGB", "rgbx", "wrgb", "rg", "bgrw", "rgb "] {
            assert_eq!(WireOrder::from_name(bad), None, "{bad:?}");
        }
        assert_eq!(WireOrder::from_letters(*b"RGBX"), None);
        assert_eq!(WireOrder::from_letters(*b"RGB "), None);
    }

    #[test]
    fn permutations_put_each_channel_where_the_name_says() {
        // Distinct channel values make the permutation visible.
        let rgb = [10, 20, 30];
        for name in ["rgb", "rbg", "grb", "gbr", "brg", "bgr"] {
            let o = WireOrder::from_name(name).unwrap();
            let mut out = [0u8; 3];
            o.encode(rgb, &mut out);
            let want: Vec<u8> = name
                .bytes()
                .map(|c| match c {
                    b'r' => 10,
                    b'g' => 20,
                    _ => 30,
                })
                .collect();
            assert_eq!(out.to_vec(), want, "{name}");
        }
    }

    #[test]
    fn white_is_the_minimum_and_is_taken_out_of_the_colours() {
        let mut out = [0u8; 4];
        WireOrder::Rgbw.encode([200, 120, 50], &mut out);
        assert_eq!(out, [150, 70, 0, 50]);
        WireOrder::Grbw.encode([200, 120, 50], &mut out);
        assert_eq!(out, [70, 150, 0, 50]);
        // Pure white becomes the white channel alone; a primary has no white.
        WireOrder::Rgbw.encode([255, 255, 255], &mut out);
        assert_eq!(out, [0, 0, 0, 255]);
        WireOrder::Grbw.encode([0, 255, 0], &mut out);
        assert_eq!(out, [255, 0, 0, 0]);
    }

    #[test]
    fn short_output_buffers_do_not_panic() {
        let mut out = [0u8; 2];
        WireOrder::Grbw.encode([1, 2, 3], &mut out);
        assert_eq!(out, [1, 0]);
        let mut none: [u8; 0] = [];
        WireOrder::Rgb.encode([1, 2, 3], &mut none);
    }
}
