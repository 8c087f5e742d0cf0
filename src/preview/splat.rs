//! The sensor: points of light spread into a soft glow and summed in
//! linear light, as a camera's pixels integrate the light that falls on them.
//!
//! Each point is a round Gaussian glow (the LED's diffuser and the lens
//! blur) integrated exactly over each pixel's square (differences of the
//! normal distribution function per axis, so the drawing is anti-aliased
//! and the weights telescope). The weights are normalised to sum to 1 over
//! the kernel's window of +-[`KERNEL_SIGMAS`] standard deviations, so a glow
//! that lies wholly inside the picture adds exactly its light to it.
//!
//! The picture is cut into bands of rows that are summed in parallel; each
//! band adds its points in one fixed order, so the result does not depend
//! on the number of threads.

use std::sync::atomic::{AtomicU64, Ordering};

use rayon::prelude::*;

/// Half-width of a glow kernel, in standard deviations.
pub const KERNEL_SIGMAS: f64 = 4.0;
/// Blur always added to a glow (in quadrature), pixels: the lens and the
/// anti-aliasing filter, so that even a tiny glow is drawn smoothly.
pub const MIN_BLUR_PX: f64 = 0.5;
/// Rows per band of parallel work.
pub const BAND_ROWS: u32 = 16;

/// Linear light on the sensor, per pixel and primary, before exposure.
#[derive(Clone, Debug, PartialEq)]
pub struct Film {
    /// Width, pixels.
    pub width: u32,
    /// Height, pixels.
    pub height: u32,
    /// Three planes (linear sRGB red, green, blue), row-major, row 0 at the
    /// top; values in LED-seconds per pixel.
    pub planes: [Vec<f32>; 3],
}

impl Film {
    /// A dark film of `width` x `height` pixels.
    pub fn new(width: u32, height: u32) -> Self {
        let n = width as usize * height as usize;
        Film {
            width,
            height,
            planes: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
        }
    }

    /// Linear light of pixel (column `x`, row `y`), LED-seconds per primary.
    pub fn pixel(&self, x: u32, y: u32) -> [f32; 3] {
        let i = y as usize * self.width as usize + x as usize;
        [self.planes[0][i], self.planes[1][i], self.planes[2][i]]
    }

    /// Total light of each primary over the picture, LED-seconds (summed in f64).
    pub fn sum(&self) -> [f64; 3] {
        [0, 1, 2].map(|c| self.planes[c].iter().map(|&v| f64::from(v)).sum())
    }

    /// Adds the light of `other` (a film of the same size), pixel by pixel.
    pub fn add(&mut self, other: &Film) {
        assert_eq!((self.width, self.height), (other.width, other.height));
        for (mine, theirs) in self.planes.iter_mut().zip(&other.planes) {
            mine.par_iter_mut()
                .zip(theirs.par_iter())
                .for_each(|(a, &b)| *a += b);
        }
    }

    /// The largest value of any primary in any pixel, LED-seconds.
    pub fn max(&self) -> f32 {
        self.planes
            .iter()
            .map(|p| p.par_iter().copied().reduce(|| 0.0, f32::max))
            .fold(0.0, f32::max)
    }
}

/// One glow ready to be added: separable pixel weights and its light.
#[derive(Clone, Debug, PartialEq)]
pub struct Kernel {
    /// First column it touches (inside the picture).
    pub x0: u32,
    /// Weights of columns x0, x0 + 1, ...
    pub wx: Vec<f32>,
    /// First row it touches (inside the picture).
    pub y0: u32,
    /// Weights of rows y0, y0 + 1, ...
    pub wy: Vec<f32>,
    /// Light per primary, LED-seconds.
    pub energy: [f32; 3],
}

/// Standard normal distribution function (via libm's erf).
fn phi_exact(x: f64) -> f64 {
    0.5 * (1.0 + crate::num::erf(x * std::f64::consts::FRAC_1_SQRT_2))
}

/// Where [`phi`]'s table ends: beyond +-8 the function is 0 or 1 to within
/// 1e-15.
const PHI_REACH: f64 = 8.0;
/// Table entries per unit of x.
const PHI_STEPS: f64 = 1024.0;

/// The standard normal distribution function from a table of
/// [`phi_exact`] at steps of 1/1024, interpolated linearly: the error is at
/// most h^2 / 8 times the largest |phi''| (0.242), under 3e-8, below the
/// 32-bit floats the weights are kept in. The table is made once, by the
/// same libm as everything else, so pictures stay the same on every machine.
#[cfg(test)]
fn phi(x: f64) -> f64 {
    phi_in(phi_table(), x)
}

fn phi_table() -> &'static [f64] {
    static TABLE: std::sync::OnceLock<Vec<f64>> = std::sync::OnceLock::new();
    TABLE.get_or_init(|| {
        let n = (2.0 * PHI_REACH * PHI_STEPS) as usize;
        (0..=n)
            .map(|i| phi_exact(i as f64 / PHI_STEPS - PHI_REACH))
            .collect()
    })
}

/// [`phi`] with its table at hand.
#[inline]
fn phi_in(table: &[f64], x: f64) -> f64 {
    let u = (x + PHI_REACH) * PHI_STEPS;
    if u.is_nan() || u <= 0.0 {
        return 0.0;
    }
    // In range after the test above; `as` truncates toward zero = floor.
    let i = u as usize;
    if i + 1 >= table.len() {
        return 1.0;
    }
    let f = u - i as f64;
    table[i] + f * (table[i + 1] - table[i])
}

/// The weights of a Gaussian of standard deviation `sigma_px` centred at
/// `c` (pixel units) over pixels [i, i + 1), normalised over the kernel's
/// window, then clipped to pixels 0..n. `None` when none of it lands on
/// the picture.
pub fn axis_weights(c: f64, sigma_px: f64, n: u32) -> Option<(u32, Vec<f32>)> {
    let reach = KERNEL_SIGMAS * sigma_px;
    if !(c + reach >= 0.0 && c - reach < f64::from(n)) {
        return None;
    }
    let lo = (c - reach).floor();
    let hi = (c + reach).ceil() - 1.0;
    let first = lo.max(0.0);
    let last = hi.min(f64::from(n) - 1.0);
    let table = phi_table();
    let phi = |x: f64| phi_in(table, x);
    let total = phi((hi + 1.0 - c) / sigma_px) - phi((lo - c) / sigma_px);
    if total.is_nan() || total <= 0.0 || last < first {
        return None;
    }
    let mut w = Vec::with_capacity((last - first) as usize + 1);
    let inv_sigma = 1.0 / sigma_px;
    let inv_total = 1.0 / total;
    let mut prev = phi((first - c) * inv_sigma);
    let mut i = first;
    while i <= last {
        let next = phi((i + 1.0 - c) * inv_sigma);
        w.push(((next - prev) * inv_total) as f32);
        prev = next;
        i += 1.0;
    }
    Some((first as u32, w))
}

/// The kernel of a glow at pixel coordinates (`px`, `py`) with standard
/// deviations `sx`, `sy` in pixels (before [`MIN_BLUR_PX`] is added),
/// carrying `energy`; `None` when it misses the picture.
pub fn kernel(
    px: f64,
    py: f64,
    sx: f64,
    sy: f64,
    energy: [f32; 3],
    width: u32,
    height: u32,
) -> Option<Kernel> {
    let sx = (sx * sx + MIN_BLUR_PX * MIN_BLUR_PX).sqrt();
    let sy = (sy * sy + MIN_BLUR_PX * MIN_BLUR_PX).sqrt();
    if !(px.is_finite() && py.is_finite()) {
        return None;
    }
    let (x0, wx) = axis_weights(px, sx, width)?;
    let (y0, wy) = axis_weights(py, sy, height)?;
    Some(Kernel {
        x0,
        wx,
        y0,
        wy,
        energy,
    })
}

/// Adds every kernel to `film`, in order; `progress(done, total)` is
/// called as bands of rows are finished (from any thread).
pub fn accumulate_into(film: &mut Film, kernels: &[Kernel], progress: &(dyn Fn(u64, u64) + Sync)) {
    let (width, height) = (film.width, film.height);
    let bands = height.div_ceil(BAND_ROWS).max(1) as usize;
    let mut lists: Vec<Vec<u32>> = vec![Vec::new(); bands];
    for (k, kern) in kernels.iter().enumerate() {
        let b0 = (kern.y0 / BAND_ROWS) as usize;
        let b1 = ((kern.y0 + kern.wy.len() as u32 - 1) / BAND_ROWS) as usize;
        for list in &mut lists[b0..=b1.min(bands - 1)] {
            list.push(k as u32);
        }
    }
    let w = width as usize;
    let band_len = BAND_ROWS as usize * w;
    let done = AtomicU64::new(0);
    let [r, g, b] = &mut film.planes;
    r.par_chunks_mut(band_len)
        .zip(g.par_chunks_mut(band_len))
        .zip(b.par_chunks_mut(band_len))
        .zip(lists.par_iter())
        .enumerate()
        .for_each(|(band, (((r, g), b), list))| {
            let top = band as u32 * BAND_ROWS;
            let rows = (r.len() / w) as u32;
            let planes: [&mut [f32]; 3] = [r, g, b];
            add_band(planes, w, top, rows, kernels, list);
            let n = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress(n, bands as u64);
        });
}

/// A film of `width` x `height` pixels exposed to every kernel, in order.
pub fn accumulate(
    width: u32,
    height: u32,
    kernels: &[Kernel],
    progress: &(dyn Fn(u64, u64) + Sync),
) -> Film {
    let mut film = Film::new(width, height);
    accumulate_into(&mut film, kernels, progress);
    film
}

fn add_band(
    mut planes: [&mut [f32]; 3],
    w: usize,
    top: u32,
    rows: u32,
    kernels: &[Kernel],
    list: &[u32],
) {
    for &k in list {
        let kern = &kernels[k as usize];
        let ky1 = kern.y0 + kern.wy.len() as u32;
        let y_start = kern.y0.max(top);
        let y_end = ky1.min(top + rows);
        let x0 = kern.x0 as usize;
        let nx = kern.wx.len();
        for y in y_start..y_end {
            let wy = kern.wy[(y - kern.y0) as usize];
            let row = (y - top) as usize * w + x0;
            for (plane, &e) in planes.iter_mut().zip(&kern.energy) {
                let a = wy * e;
                if a == 0.0 {
                    continue;
                }
                let dst = &mut plane[row..row + nx];
                for (d, &wx) in dst.iter_mut().zip(&kern.wx) {
                    *d += a * wx;
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_tabulated_normal_distribution_matches_erf() {
        // Reference: the normal distribution function through libm's erf.
        let mut worst: f64 = 0.0;
        for i in -90_000..=90_000 {
            let x = f64::from(i) * 1e-4 + 0.3e-5;
            worst = worst.max((phi(x) - phi_exact(x)).abs());
        }
        assert!(worst < 3e-8, "{worst}");
        assert_eq!(phi(-100.0), 0.0);
        assert_eq!(phi(100.0), 1.0);
        assert_eq!(phi(f64::NAN), 0.0);
    }

    #[test]
    fn weights_of_a_glow_inside_sum_to_one_and_are_symmetric() {
        let (x0, w) = axis_weights(50.0, 3.0, 100).unwrap();
        let s: f64 = w.iter().map(|&v| f64::from(v)).sum();
        assert!((s - 1.0).abs() < 1e-6, "{s}");
        // Centred on a pixel boundary: mirror-symmetric about it.
        let n = w.len();
        for i in 0..n / 2 {
            assert!((w[i] - w[n - 1 - i]).abs() < 1e-7);
        }
        assert_eq!(x0 as usize + n / 2, 50);
    }

    #[test]
    fn glows_off_the_picture_are_dropped_and_clipped_ones_lose_light() {
        assert!(axis_weights(-20.0, 2.0, 100).is_none());
        let (x0, w) = axis_weights(0.0, 2.0, 100).unwrap();
        assert_eq!(x0, 0);
        let s: f32 = w.iter().sum();
        assert!((s - 0.5).abs() < 1e-5, "{s}");
    }

    #[test]
    fn bands_do_not_change_the_sum() {
        let k: Vec<Kernel> = (0..40)
            .filter_map(|i| {
                let t = f64::from(i) * 0.7;
                kernel(
                    30.0 + 3.0 * t,
                    20.0 + 2.0 * t,
                    2.5,
                    2.5,
                    [1.0, 0.5, 0.25],
                    120,
                    90,
                )
            })
            .collect();
        let f = accumulate(120, 90, &k, &|_, _| {});
        let s = f.sum();
        assert!(
            (s[0] - 40.0).abs() < 1e-3 && (s[2] - 10.0).abs() < 1e-3,
            "{s:?}"
        );
    }
}
