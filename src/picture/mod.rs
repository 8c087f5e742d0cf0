//! Pictures painted by the spin: PNG and JPEG decoded into linear light,
//! placed in a plane of motion, and sampled bilinearly.
//!
//! A picture is stored as premultiplied linear light: each texel's sRGB
//! channels are decoded with the IEC 61966-2-1 transfer function and
//! multiplied by its alpha, so that sampling between a lit and a transparent
//! texel fades the light rather than the colour. Outside the picture
//! everything is transparent (dark LEDs).
//!
//! Coordinates: a picture of `width` x `height` texels covers continuous
//! pixel coordinates x in [0, width) (left to right) and y in [0, height)
//! (top to bottom); texel (i, j) is the square [i, i + 1) x [j, j + 1), its
//! centre at (i + 0.5, j + 0.5). In the plane, the picture is placed by
//! [`PicturePlacement`]: points are `[right, up]` in metres from the prop's
//! anchor, along the plane's own (unmirrored) `right` and `up` vectors.

use std::path::Path;

use crate::num;

/// The largest picture read, texels.
pub const MAX_PIXELS: u64 = 4_194_304;
/// The longest side of a picture read, texels.
pub const MAX_SIDE: u32 = 8192;
/// The largest picture file read, bytes.
pub const MAX_FILE_BYTES: u64 = 64 << 20;
/// Most memory the decoder may allocate, bytes.
const MAX_DECODE_ALLOC: u64 = 256 << 20;

/// A decoded picture: premultiplied linear-light RGB and alpha per texel.
#[derive(Clone, Debug, PartialEq)]
pub struct Picture {
    width: u32,
    height: u32,
    /// Row-major from the top row: linear R, G, B (each times alpha), alpha.
    texels: Vec<[f32; 4]>,
}

impl Picture {
    /// Reads a PNG or JPEG file; the error says what is wrong, in words.
    pub fn load(path: &Path) -> Result<Picture, String> {
        let meta = std::fs::metadata(path).map_err(|e| format!("cannot read the picture: {e}"))?;
        if !meta.is_file() {
            // A folder has nothing to read, and a pipe or device would keep
            // the reader waiting.
            return Err("the picture's path is not a file".into());
        }
        if meta.len() > MAX_FILE_BYTES {
            return Err(format!(
                "the picture file is {} bytes; files larger than {MAX_FILE_BYTES} bytes are refused",
                meta.len()
            ));
        }
        let mut reader = image::ImageReader::open(path)
            .and_then(|r| r.with_guessed_format())
            .map_err(|e| format!("cannot read the picture: {e}"))?;
        let mut limits = image::Limits::default();
        limits.max_image_width = Some(MAX_SIDE);
        limits.max_image_height = Some(MAX_SIDE);
        limits.max_alloc = Some(MAX_DECODE_ALLOC);
        reader.limits(limits);
        let img = reader
            .decode()
            .map_err(|e| format!("cannot decode the picture (PNG or JPEG): {e}"))?;
        let (w, h) = (img.width(), img.height());
        if w == 0 || h == 0 {
            return Err("the picture has no texels".into());
        }
        if u64::from(w) * u64::from(h) > MAX_PIXELS {
            return Err(format!(
                "the picture is {w}x{h} texels, more than the {MAX_PIXELS} glowscore paints; scale it down"
            ));
        }
        let sixteen = matches!(
            img.color(),
            image::ColorType::L16
                | image::ColorType::La16
                | image::ColorType::Rgb16
                | image::ColorType::Rgba16
        );
        let pic = if sixteen {
            let buf = img.to_rgba16();
            let lut: Vec<f32> = (0..=65535u32)
                .map(|v| crate::colour::srgb_to_linear(f64::from(v) / 65535.0) as f32)
                .collect();
            Picture::from_fn(w, h, |i| {
                let p = &buf.as_raw()[4 * i..4 * i + 4];
                let a = f32::from(p[3]) / 65535.0;
                [
                    lut[usize::from(p[0])] * a,
                    lut[usize::from(p[1])] * a,
                    lut[usize::from(p[2])] * a,
                    a,
                ]
            })
        } else {
            Picture::from_srgba8(w, h, img.to_rgba8().as_raw())
                .ok_or_else(|| "the picture's texels do not match its size".to_string())?
        };
        Ok(pic)
    }

    /// A picture from 8-bit sRGB texels with straight alpha (R, G, B, A,
    /// row-major from the top); `None` when `rgba` is not `4 * width * height`
    /// bytes or a side is 0.
    pub fn from_srgba8(width: u32, height: u32, rgba: &[u8]) -> Option<Picture> {
        let n = width as usize * height as usize;
        if n == 0 || rgba.len() != 4 * n {
            return None;
        }
        let lut: Vec<f32> = (0..=255u8)
            .map(|v| crate::colour::srgb_to_linear(f64::from(v) / 255.0) as f32)
            .collect();
        Some(Picture::from_fn(width, height, |i| {
            let p = &rgba[4 * i..4 * i + 4];
            let a = f32::from(p[3]) / 255.0;
            [
                lut[usize::from(p[0])] * a,
                lut[usize::from(p[1])] * a,
                lut[usize::from(p[2])] * a,
                a,
            ]
        }))
    }

    fn from_fn(width: u32, height: u32, f: impl Fn(usize) -> [f32; 4]) -> Picture {
        let n = width as usize * height as usize;
        Picture {
            width,
            height,
            texels: (0..n).map(f).collect(),
        }
    }

    /// Width, texels.
    pub fn width(&self) -> u32 {
        self.width
    }

    /// Height, texels.
    pub fn height(&self) -> u32 {
        self.height
    }

    /// Texel (`x`, `y`): premultiplied linear R, G, B and alpha.
    pub fn texel(&self, x: u32, y: u32) -> [f32; 4] {
        self.texels[y as usize * self.width as usize + x as usize]
    }

    /// Texels that are not wholly transparent: the ones a painting must reach.
    pub fn visible_texels(&self) -> usize {
        self.texels.iter().filter(|t| t[3] > 0.0).count()
    }

    fn get(&self, x: i64, y: i64) -> [f32; 4] {
        if x < 0 || y < 0 || x >= i64::from(self.width) || y >= i64::from(self.height) {
            [0.0; 4]
        } else {
            self.texels[y as usize * self.width as usize + x as usize]
        }
    }

    /// Bilinear sample at continuous pixel coordinates (`x`, `y`):
    /// premultiplied linear R, G, B and alpha; transparent outside, fading over
    /// the half texel at the border.
    pub fn sample(&self, x: f64, y: f64) -> [f32; 4] {
        let (xs, ys) = (x - 0.5, y - 0.5);
        if !(xs > -1.0 && ys > -1.0 && xs < f64::from(self.width) && ys < f64::from(self.height)) {
            return [0.0; 4];
        }
        let (x0, y0) = (xs.floor(), ys.floor());
        let (fx, fy) = ((xs - x0) as f32, (ys - y0) as f32);
        let (i, j) = (x0 as i64, y0 as i64);
        let (a, b) = (self.get(i, j), self.get(i + 1, j));
        let (c, d) = (self.get(i, j + 1), self.get(i + 1, j + 1));
        let mut out = [0.0f32; 4];
        for k in 0..4 {
            let top = a[k] + (b[k] - a[k]) * fx;
            let bottom = c[k] + (d[k] - c[k]) * fx;
            out[k] = top + (bottom - top) * fy;
        }
        out
    }
}

/// What a picture is fixed to while the prop spins.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FixedTo {
    /// It stays put (upright in the photo), whatever the pattern.
    Stage,
    /// It turns about the anchor with the hand, its place turning with it:
    /// one clockwise turn on the plane's clock per hand revolution (the
    /// other way where the pattern runs reversed or is placed mirrored).
    Hand,
}

impl FixedTo {
    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            FixedTo::Stage => "stage",
            FixedTo::Hand => "hand",
        }
    }
}

/// Where a picture sits in the plane of motion.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PicturePlacement {
    /// Centre of the picture, `[right, up]` metres from the prop's anchor.
    pub centre_m: [f64; 2],
    /// Width, metres.
    pub width_m: f64,
    /// Height, metres (the picture's aspect unless given).
    pub height_m: f64,
    /// Clockwise turn of the picture on the plane's clock, degrees.
    pub rotation_deg: f64,
    /// Whether it stays put or turns with the hand.
    pub fixed_to: FixedTo,
}

/// An affine map from plane points `[right, up]` (metres from the anchor)
/// to continuous pixel coordinates: `x = a q_r + b q_u + c`, `y = d q_r + e q_u + f`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ToPixel {
    m: [f64; 6],
}

impl ToPixel {
    /// The six coefficients `[a, b, c, d, e, f]` of
    /// `x = a q_r + b q_u + c`, `y = d q_r + e q_u + f`.
    pub fn coefficients(&self) -> [f64; 6] {
        self.m
    }

    /// Pixel coordinates of plane point `q` = `[right, up]`, metres.
    pub fn apply(&self, q: [f64; 2]) -> [f64; 2] {
        let m = &self.m;
        [
            m[0] * q[0] + m[1] * q[1] + m[2],
            m[3] * q[0] + m[4] * q[1] + m[5],
        ]
    }

    /// The map of the same picture turned `turn_deg` clockwise about the
    /// anchor (the origin of plane points), its place turning with it.
    pub fn turned_about_anchor(&self, turn_deg: f64) -> ToPixel {
        // The turned picture shows at q what the unturned one shows at q
        // turned back (counter-clockwise): (r cos - u sin, r sin + u cos).
        let (s, c) = num::sin_cos(num::rad(turn_deg));
        let m = &self.m;
        ToPixel {
            m: [
                m[0] * c + m[1] * s,
                m[1] * c - m[0] * s,
                m[2],
                m[3] * c + m[4] * s,
                m[4] * c - m[3] * s,
                m[5],
            ],
        }
    }
}

impl PicturePlacement {
    /// The map from plane points to pixels of `pic`, with the picture turned
    /// a further `turn_deg` clockwise about its centre. (The hand's turn of a
    /// picture [`FixedTo::Hand`] is about the anchor:
    /// [`ToPixel::turned_about_anchor`].)
    pub fn to_pixel(&self, pic: &Picture, turn_deg: f64) -> ToPixel {
        // A picture point (x right, y up from its centre, metres) turned
        // clockwise by theta sits at centre + (x cos + y sin, -x sin + y cos);
        // the inverse turns back: x = r cos - u sin, y = r sin + u cos, with
        // (r, u) the point relative to the centre.
        let (s, c) = num::sin_cos(num::rad(self.rotation_deg + turn_deg));
        let kx = f64::from(pic.width) / self.width_m;
        let ky = f64::from(pic.height) / self.height_m;
        let [cr, cu] = self.centre_m;
        // x_px = (x / W + 1/2) w ; y_px = (1/2 - y / H) h
        let (a, b) = (c * kx, -s * kx);
        let (d, e) = (-s * ky, -c * ky);
        ToPixel {
            m: [
                a,
                b,
                0.5 * f64::from(pic.width) - a * cr - b * cu,
                d,
                e,
                0.5 * f64::from(pic.height) - d * cr - e * cu,
            ],
        }
    }

    /// The plane point `[right, up]` (metres from the anchor) of continuous
    /// pixel coordinates `px` of `pic`, turned `turn_deg` further clockwise.
    pub fn to_plane(&self, pic: &Picture, px: [f64; 2], turn_deg: f64) -> [f64; 2] {
        let (s, c) = num::sin_cos(num::rad(self.rotation_deg + turn_deg));
        let x = (px[0] / f64::from(pic.width) - 0.5) * self.width_m;
        let y = (0.5 - px[1] / f64::from(pic.height)) * self.height_m;
        [
            self.centre_m[0] + x * c + y * s,
            self.centre_m[1] - x * s + y * c,
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn checker() -> Picture {
        // 2 x 2: white, red / transparent, blue at half alpha.
        Picture::from_srgba8(
            2,
            2,
            &[
                255, 255, 255, 255, 255, 0, 0, 255, 0, 0, 0, 0, 0, 0, 255, 128,
            ],
        )
        .unwrap()
    }

    #[test]
    fn texels_are_premultiplied_linear_light() {
        let p = checker();
        assert_eq!(p.texel(0, 0), [1.0, 1.0, 1.0, 1.0]);
        assert_eq!(p.texel(1, 0), [1.0, 0.0, 0.0, 1.0]);
        assert_eq!(p.texel(0, 1), [0.0; 4]);
        let b = p.texel(1, 1);
        assert!((b[2] - 128.0 / 255.0).abs() < 1e-6 && (b[3] - 128.0 / 255.0).abs() < 1e-6);
        assert_eq!(p.visible_texels(), 3);
        // IEC 61966-2-1: sRGB 128/255 decodes to 0.2158605 (linear).
        let grey = Picture::from_srgba8(1, 1, &[128, 128, 128, 255]).unwrap();
        assert!((grey.texel(0, 0)[0] - 0.215_860_5).abs() < 1e-6);
    }

    #[test]
    fn bilinear_sampling_hits_texel_centres_and_blends_between() {
        let p = checker();
        assert_eq!(p.sample(0.5, 0.5), [1.0, 1.0, 1.0, 1.0]);
        assert_eq!(p.sample(1.5, 0.5), [1.0, 0.0, 0.0, 1.0]);
        let mid = p.sample(1.0, 0.5);
        assert_eq!(mid, [1.0, 0.5, 0.5, 1.0]);
        // Outside: transparent; at the outer edge, half of the border texel.
        assert_eq!(p.sample(-1.0, 0.5), [0.0; 4]);
        assert_eq!(p.sample(0.0, 0.5)[3], 0.5);
        assert_eq!(p.sample(5.0, 5.0), [0.0; 4]);
        assert_eq!(p.sample(f64::NAN, 0.5), [0.0; 4]);
    }

    #[test]
    fn placement_maps_corners_and_inverts() {
        let p = checker();
        let pl = PicturePlacement {
            centre_m: [0.1, 0.2],
            width_m: 0.4,
            height_m: 0.2,
            rotation_deg: 0.0,
            fixed_to: FixedTo::Stage,
        };
        let m = pl.to_pixel(&p, 0.0);
        // The top-left corner of the picture is at centre + (-W/2, +H/2).
        let tl = m.apply([0.1 - 0.2, 0.2 + 0.1]);
        assert!(tl[0].abs() < 1e-12 && tl[1].abs() < 1e-12, "{tl:?}");
        let br = m.apply([0.3, 0.1]);
        assert!((br[0] - 2.0).abs() < 1e-12 && (br[1] - 2.0).abs() < 1e-12);
        // Turned 90 degrees clockwise, the picture's top points to 3 o'clock.
        let m = pl.to_pixel(&p, 90.0);
        let top_mid = m.apply([0.1 + 0.1, 0.2]);
        assert!((top_mid[0] - 1.0).abs() < 1e-12 && top_mid[1].abs() < 1e-12);
        for turn in [0.0, 33.0, -170.0] {
            let m = pl.to_pixel(&p, turn);
            for q in [[0.0, 0.0], [0.25, -0.3], [-1.0, 2.0]] {
                let back = pl.to_plane(&p, m.apply(q), turn);
                assert!((back[0] - q[0]).abs() < 1e-12 && (back[1] - q[1]).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn a_turn_about_the_anchor_carries_the_picture_round_it() {
        // Plane geometry: turned theta clockwise about the anchor, the
        // picture shows at q turned (r cos + u sin, -r sin + u cos) what it
        // showed at q; its centre, 0.22 m from the anchor, stays 0.22 m away.
        let p = checker();
        let pl = PicturePlacement {
            centre_m: [0.1, 0.2],
            width_m: 0.4,
            height_m: 0.2,
            rotation_deg: 30.0,
            fixed_to: FixedTo::Hand,
        };
        let still = pl.to_pixel(&p, 0.0);
        for turn in [90.0, 33.0, -170.0] {
            let m = still.turned_about_anchor(turn);
            let (s, c) = num::sin_cos(num::rad(turn));
            for q in [[0.1, 0.2], [0.25, -0.3], [-1.0, 2.0]] {
                let turned = [q[0] * c + q[1] * s, -q[0] * s + q[1] * c];
                let (a, b) = (m.apply(turned), still.apply(q));
                assert!((a[0] - b[0]).abs() < 1e-12 && (a[1] - b[1]).abs() < 1e-12);
            }
        }
        // A quarter turn takes the centre from (0.1, 0.2) to (0.2, -0.1).
        let m = still.turned_about_anchor(90.0);
        let centre = m.apply([0.2, -0.1]);
        assert!((centre[0] - 1.0).abs() < 1e-12 && (centre[1] - 1.0).abs() < 1e-12);
    }
}
