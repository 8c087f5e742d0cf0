//! The sensor for orthographic views, by deposit and blur.
//!
//! In an orthographic view every point of light of one prop has the same
//! glow on the picture (its width in pixels does not depend on depth). So
//! rather than spreading each point into its own kernel, each point's light
//! is put on the 3 x 3 pixels around it (quadratic B-spline weights, which
//! sum to 1), and the film of each glow width is then blurred once with a
//! Gaussian, separably. The result is the same glow: the deposit adds a
//! spread of variance 1/4 pixel^2 per axis and the blur's pixel-integrated
//! taps a box of variance 1/12, so the blur's own standard deviation is
//! chosen so that the variance, sigma^2 + 1/12, is that of the exact kernel of
//! [`super::splat::kernel`] (a Gaussian integrated over the pixel). The
//! light is conserved: the films are padded by the blur's reach so that a
//! point just outside the picture still lends it its glow, and cropped
//! after the blur. The cost is nine additions per point plus one blur per
//! glow width, whatever the number of points.
//!
//! Points are deposited in the order they come and the blur sums in one
//! fixed order, so the picture does not depend on the number of threads.

use rayon::prelude::*;

use super::splat::{self, Film, KERNEL_SIGMAS};

/// The most distinct glow widths one exposure deposits separately.
pub const MAX_GROUPS: usize = 16;

/// A padded film of one glow width, before its blur.
struct Group {
    /// Glow standard deviations, pixels (with the minimum blur added).
    sigma: (f64, f64),
    /// Standard deviations of the blur, pixels.
    blur: (f64, f64),
    /// Padding on each side, pixels.
    pad: (usize, usize),
    width: usize,
    height: usize,
    planes: [Vec<f32>; 3],
    /// The padded pixels that hold light: columns and rows, inclusive
    /// (empty while `lo > hi`); and which primaries have any.
    lo: (usize, usize),
    hi: (usize, usize),
    lit: [bool; 3],
}

/// Deposits for a picture of `width` x `height` pixels.
pub struct Deposits {
    width: u32,
    height: u32,
    groups: Vec<Group>,
}

impl Deposits {
    /// No light yet on a picture of `width` x `height` pixels.
    pub fn new(width: u32, height: u32) -> Self {
        Deposits {
            width,
            height,
            groups: Vec::new(),
        }
    }

    /// The group for glow standard deviations `sx`, `sy` (pixels, before
    /// the minimum blur); `None` when there are already [`MAX_GROUPS`].
    pub fn group(&mut self, sx: f64, sy: f64) -> Option<usize> {
        let s = |v: f64| (v * v + splat::MIN_BLUR_PX * splat::MIN_BLUR_PX).sqrt();
        let sigma = (s(sx), s(sy));
        if let Some(i) = self.groups.iter().position(|g| g.sigma == sigma) {
            return Some(i);
        }
        if self.groups.len() >= MAX_GROUPS {
            return None;
        }
        // The blur's variance: sigma^2 + 1/12 (the exact kernel) less the
        // deposit's spline (1/4) and the taps' box (1/12); sigma is at
        // least the minimum blur, 0.5, so this is never negative.
        let b = |v: f64| (v * v - 0.25).max(0.0).sqrt();
        let blur = (b(sigma.0), b(sigma.1));
        let reach = |v: f64| (KERNEL_SIGMAS * v).ceil() as usize + 2;
        let pad = (reach(blur.0), reach(blur.1));
        let width = self.width as usize + 2 * pad.0;
        let height = self.height as usize + 2 * pad.1;
        let n = width * height;
        self.groups.push(Group {
            sigma,
            blur,
            pad,
            width,
            height,
            planes: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
            lo: (usize::MAX, usize::MAX),
            hi: (0, 0),
            lit: [false; 3],
        });
        Some(self.groups.len() - 1)
    }

    /// Adds `energy` at pixel coordinates (`px`, `py`) (pixel i covers
    /// [i, i + 1)) to group `g`: spread over the 3 x 3 pixels around it by
    /// the quadratic B-spline, whose weights sum to 1 with a centroid at the
    /// point and a variance of 1/4 pixel^2 per axis wherever the point
    /// falls, and which keeps a row of points from beating against the
    /// pixel grid (its spectrum falls as the cube of frequency).
    pub fn deposit(&mut self, g: usize, px: f64, py: f64, energy: [f32; 3]) {
        let grp = &mut self.groups[g];
        // Padded pixel-centre coordinates.
        let u = px - 0.5 + grp.pad.0 as f64;
        let v = py - 0.5 + grp.pad.1 as f64;
        if !(u >= 1.0 && v >= 1.0) {
            return;
        }
        let (i, j) = (u.round(), v.round());
        let spline = |t: f64| {
            [
                (0.5 * (0.5 - t) * (0.5 - t)) as f32,
                (0.75 - t * t) as f32,
                (0.5 * (0.5 + t) * (0.5 + t)) as f32,
            ]
        };
        let (wx, wy) = (spline(u - i), spline(v - j));
        let (i, j) = (i as usize - 1, j as usize - 1);
        if i + 2 >= grp.width || j + 2 >= grp.height {
            return;
        }
        grp.lo = (grp.lo.0.min(i), grp.lo.1.min(j));
        grp.hi = (grp.hi.0.max(i + 2), grp.hi.1.max(j + 2));
        let w = grp.width;
        for ((plane, &e), lit) in grp.planes.iter_mut().zip(&energy).zip(&mut grp.lit) {
            if e != 0.0 {
                *lit = true;
                for (dy, &ay) in wy.iter().enumerate() {
                    let row = (j + dy) * w + i;
                    let ey = e * ay;
                    for (dx, &ax) in wx.iter().enumerate() {
                        plane[row + dx] += ey * ax;
                    }
                }
            }
        }
    }

    /// Blurs every group and adds it, cropped, to `film` (of this size).
    /// Only the pixels that the light reaches are blurred.
    pub fn develop_into(self, film: &mut Film) {
        let (w, h) = (self.width as usize, self.height as usize);
        for grp in self.groups {
            if grp.lo.0 > grp.hi.0 {
                continue;
            }
            let tx = taps(grp.blur.0);
            let ty = taps(grp.blur.1);
            let (rx, ry) = (tx.len() / 2, ty.len() / 2);
            let gw = grp.width;
            // Picture columns and rows the light reaches (padded x = x + pad).
            let cols = grp.lo.0.saturating_sub(grp.pad.0 + rx)
                ..(grp.hi.0 + rx + 1).saturating_sub(grp.pad.0).min(w);
            let out_rows = grp.lo.1.saturating_sub(grp.pad.1 + ry)
                ..(grp.hi.1 + ry + 1).saturating_sub(grp.pad.1).min(h);
            if cols.is_empty() || out_rows.is_empty() {
                continue;
            }
            // Padded rows the blur down reads.
            let rows = out_rows.start + grp.pad.1 - ry..out_rows.end + grp.pad.1 + ry;
            let cw = cols.len();
            for (c, plane) in grp.planes.into_iter().enumerate() {
                if !grp.lit[c] {
                    continue;
                }
                // Across, tap by tap (each tap one pass along the row).
                let mut across = vec![0.0f32; rows.len() * cw];
                across
                    .par_chunks_mut(cw)
                    .zip(rows.clone().into_par_iter())
                    .for_each(|(out, y)| {
                        // Padded column of picture column cols.start, less rx.
                        let from = y * gw + cols.start + grp.pad.0 - rx;
                        for (k, &t) in tx.iter().enumerate() {
                            let src = &plane[from + k..from + k + cw];
                            for (o, &s) in out.iter_mut().zip(src) {
                                *o += t * s;
                            }
                        }
                    });
                // Down, into the film.
                film.planes[c]
                    .par_chunks_mut(w)
                    .enumerate()
                    .filter(|(y, _)| out_rows.contains(y))
                    .for_each(|(y, out)| {
                        let out = &mut out[cols.clone()];
                        let top = y - out_rows.start;
                        for (k, &t) in ty.iter().enumerate() {
                            let row = top + k;
                            let src = &across[row * cw..(row + 1) * cw];
                            for (o, &s) in out.iter_mut().zip(src) {
                                *o += t * s;
                            }
                        }
                    });
            }
        }
    }
}

/// The taps of a Gaussian blur of standard deviation `sigma` pixels,
/// integrated over each pixel and normalised over +-[`KERNEL_SIGMAS`]; an
/// odd count, centred.
fn taps(sigma: f64) -> Vec<f32> {
    if sigma <= 0.0 {
        return vec![1.0];
    }
    let r = (KERNEL_SIGMAS * sigma).ceil() as usize + 1;
    // Centre 0 over pixel [-0.5, 0.5): axis_weights with the centre at a
    // pixel's middle.
    let n = 2 * r + 1;
    let (first, w) = splat::axis_weights(r as f64 + 0.5, sigma, n as u32)
        .expect("a centred kernel lands on its own window");
    let mut out = vec![0.0f32; n];
    out[first as usize..first as usize + w.len()].copy_from_slice(&w);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The deposit-and-blur glow against the exact kernel of
    /// `splat::kernel` (a Gaussian integrated over each pixel): same light,
    /// same place, same width.
    #[test]
    fn a_deposited_glow_matches_the_exact_kernel() {
        for &(px, py, s) in &[(40.3, 31.7, 3.0), (20.5, 20.5, 1.0), (55.9, 12.2, 0.2)] {
            let mut d = Deposits::new(80, 60);
            let g = d.group(s, s).unwrap();
            d.deposit(g, px, py, [1.0, 0.5, 0.0]);
            let mut film = Film::new(80, 60);
            d.develop_into(&mut film);
            let exact = splat::accumulate(
                80,
                60,
                &[splat::kernel(px, py, s, s, [1.0, 0.5, 0.0], 80, 60).unwrap()],
                &|_, _| {},
            );
            let sum = film.sum();
            assert!(
                (sum[0] - 1.0).abs() < 1e-5 && (sum[1] - 0.5).abs() < 1e-5,
                "{sum:?}"
            );
            let moments = |f: &Film| {
                let (mut m, mut mx, mut my, mut vx) = (0.0, 0.0, 0.0, 0.0);
                for y in 0..60 {
                    for x in 0..80 {
                        let v = f64::from(f.pixel(x, y)[0]);
                        let (cx, cy) = (f64::from(x) + 0.5, f64::from(y) + 0.5);
                        m += v;
                        mx += v * cx;
                        my += v * cy;
                        vx += v * cx * cx;
                    }
                }
                let (mx, my) = (mx / m, my / m);
                (mx, my, vx / m - mx * mx)
            };
            let (ax, ay, av) = moments(&film);
            let (bx, by, bv) = moments(&exact);
            // The exact kernel, cut at 4 sigma on whole pixels, is itself off
            // centre by up to about 1e-3 px for the smallest glows.
            assert!(
                (ax - bx).abs() < 2e-3 && (ay - by).abs() < 2e-3,
                "{ax},{ay} vs {bx},{by}"
            );
            // Under a pixel wide the blur's taps are too few to add their box's
            // full 1/12, so the smallest glows come out up to about 0.12 px^2
            // narrower; wider ones match to 2 %.
            let slack = if s < 1.0 { 0.15 } else { 1e-3 };
            assert!((av - bv).abs() < 0.02 * bv + slack, "variance {av} vs {bv}");
            let peak = |f: &Film| f.planes[0].iter().copied().fold(0.0, f32::max);
            let (pa, pb) = (peak(&film), peak(&exact));
            let tol = if s < 1.0 { 0.5 } else { 0.1 };
            assert!((pa - pb).abs() < tol * pb, "peak {pa} vs {pb}");
        }
    }

    #[test]
    fn light_just_outside_the_picture_still_glows_into_it() {
        let mut d = Deposits::new(50, 50);
        let g = d.group(3.0, 3.0).unwrap();
        d.deposit(g, -2.0, 25.0, [1.0, 0.0, 0.0]);
        let mut film = Film::new(50, 50);
        d.develop_into(&mut film);
        let exact = splat::accumulate(
            50,
            50,
            &[splat::kernel(-2.0, 25.0, 3.0, 3.0, [1.0, 0.0, 0.0], 50, 50).unwrap()],
            &|_, _| {},
        );
        let (a, b) = (film.sum()[0], exact.sum()[0]);
        assert!(a > 0.1 && (a - b).abs() < 0.02, "{a} vs {b}");
    }
}
