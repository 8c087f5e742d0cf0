//! Marks drawn over the developed picture: a scale bar in metres.

use image::{Rgb, RgbImage};

/// Colour of the scale bar and its label, sRGB bytes.
pub const MARK_COLOUR: [u8; 3] = [200, 200, 200];

/// Bar lengths offered, metres, with their labels.
const LENGTHS: [(f64, &str); 10] = [
    (0.01, "1 cm"),
    (0.02, "2 cm"),
    (0.05, "5 cm"),
    (0.1, "10 cm"),
    (0.2, "20 cm"),
    (0.5, "50 cm"),
    (1.0, "1 m"),
    (2.0, "2 m"),
    (5.0, "5 m"),
    (10.0, "10 m"),
];

/// A small bitmap font: glyph rows, top first, one bit per column (most
/// significant of `width` bits on the left), 5 rows high.
fn glyph(c: char) -> (u32, [u8; 5]) {
    match c {
        '0' => (3, [0b111, 0b101, 0b101, 0b101, 0b111]),
        '1' => (3, [0b010, 0b110, 0b010, 0b010, 0b111]),
        '2' => (3, [0b111, 0b001, 0b111, 0b100, 0b111]),
        '5' => (3, [0b111, 0b100, 0b111, 0b001, 0b111]),
        'c' => (3, [0b000, 0b000, 0b111, 0b100, 0b111]),
        'm' => (5, [0b00000, 0b00000, 0b11110, 0b10101, 0b10101]),
        _ => (2, [0; 5]),
    }
}

fn fill(img: &mut RgbImage, x0: i64, y0: i64, w: i64, h: i64) {
    let (iw, ih) = (i64::from(img.width()), i64::from(img.height()));
    for y in y0.max(0)..(y0 + h).min(ih) {
        for x in x0.max(0)..(x0 + w).min(iw) {
            img.put_pixel(x as u32, y as u32, Rgb(MARK_COLOUR));
        }
    }
}

/// The bar length (metres) and label for a picture `width_m` metres wide:
/// the longest offered length up to a quarter of the width.
pub fn bar_length(width_m: f64) -> (f64, &'static str) {
    LENGTHS
        .iter()
        .rev()
        .find(|(l, _)| *l <= 0.25 * width_m)
        .copied()
        .unwrap_or(LENGTHS[0])
}

/// Draws a scale bar at the bottom left of `img`, for a picture
/// `pixels_per_m` pixels per metre across (orthographic views).
pub fn scale_bar(img: &mut RgbImage, pixels_per_m: f64) {
    let (w, h) = (i64::from(img.width()), i64::from(img.height()));
    let (len_m, label) = bar_length(w as f64 / pixels_per_m);
    let len = (len_m * pixels_per_m).round() as i64;
    let unit = (h / 240).max(1);
    let margin = (w.min(h) / 30).max(4);
    let thick = unit * 2;
    let y = h - margin - thick;
    let x = margin;
    fill(img, x, y, len, thick);
    fill(img, x, y - 3 * unit, unit, thick + 3 * unit);
    fill(img, x + len - unit, y - 3 * unit, unit, thick + 3 * unit);
    // The label, above the bar's left end.
    let mut cx = x;
    let top = y - 4 * unit - 5 * unit;
    for c in label.chars() {
        let (gw, rows) = glyph(c);
        for (r, bits) in rows.iter().enumerate() {
            for col in 0..gw {
                if bits >> (gw - 1 - col) & 1 == 1 {
                    fill(
                        img,
                        cx + i64::from(col) * unit,
                        top + r as i64 * unit,
                        unit,
                        unit,
                    );
                }
            }
        }
        cx += (i64::from(gw) + 1) * unit;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bar_is_a_round_length_up_to_a_quarter_of_the_width() {
        assert_eq!(bar_length(3.6).0, 0.5);
        assert_eq!(bar_length(4.0).0, 1.0);
        assert_eq!(bar_length(0.1).0, 0.02);
    }

    #[test]
    fn bar_is_drawn_at_its_length_in_pixels() {
        let mut img = RgbImage::new(400, 300);
        // 100 px per metre: 4 m wide, so a 1 m bar of 100 px.
        scale_bar(&mut img, 100.0);
        // Margin 10 px, 2 px thick: the bar's rows are 288 and 289.
        let lit: Vec<u32> = (0..400)
            .filter(|&x| img.get_pixel(x, 288).0 == MARK_COLOUR)
            .collect();
        assert_eq!(lit.first(), Some(&10));
        assert_eq!(lit.last(), Some(&109));
    }
}
