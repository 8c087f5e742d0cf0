//! Long-exposure previews: the photo of a passage before anyone spins.
//!
//! The pipeline, one concept per file: [`trail`] (the light each LED gives
//! off, frame by frame, cut into points along its own path, and streamed in
//! chunks), [`camera`] (where each point lands and how large the glow looks
//! there), [`splat`] (the sensor: Gaussian glows summed in linear light, in
//! parallel and in a fixed order), [`tone`] (metering, highlight shoulder,
//! sRGB encoding), [`overlay`] (the scale bar) and [`png`] (the file).
//! [`choice`] picks each section preview's exposure and view for
//! [`write_previews`].
//!
//! Every LED is drawn where it is: at `hand + along_m * dir`, its signed
//! distance from the grip along the prop (a poi head's LEDs all at the
//! tether's end; a strip's spread along the tether or along a staff's two
//! halves). LEDs at the same place share one path and their light is added.
//! Painted pictures need nothing special here: each LED's bytes, frame by
//! frame, already hold the picture's colour where it is.
//!
//! Light is measured in LED-seconds: an LED at full power in one primary
//! for one second gives 1. The film holds that per pixel; the exposure gain
//! turns it into linear picture values.
//!
//! A picture is made in passes over the frames, none of which keeps the
//! points: a coarse one that finds where the light is (a running box and
//! sum; a second for a pinhole's nearest depth), one that counts the points
//! against [`trail::MAX_PIECES`], and the one that draws them chunk by chunk.

pub mod blur;
pub mod camera;
pub mod choice;
pub mod overlay;
pub mod png;
pub mod splat;
pub mod tone;
pub mod trail;

use std::path::{Path, PathBuf};

use crate::geom::Vec3;
use image::RgbImage;
use rayon::prelude::*;

pub use camera::{Camera, Pinhole, View};
pub use png::write_png_atomic;
pub use splat::Film;

use crate::colour;
use crate::cues::Lights;
use crate::model::{Prop, Show, Strip};
use crate::motion::PropMotion;
use crate::prepared::Prepared;

/// Largest picture side, pixels.
pub const MAX_SIDE: u32 = 16_384;
/// Largest picture area, pixels.
pub const MAX_PIXELS: u64 = 40_000_000;
/// Picture size when none is given, pixels.
pub const DEFAULT_SIZE: (u32, u32) = (1600, 1200);
/// Default vertical field of view of the pinhole camera, degrees.
pub const DEFAULT_FOV_DEG: f64 = 40.0;
/// Largest exposure compensation, stops either way.
pub const MAX_EV_STOPS: f64 = 40.0;
/// Default stage background, sRGB bytes: a dark, slightly blue stage.
pub const DEFAULT_BACKGROUND: [u8; 3] = [10, 10, 14];

/// Why a preview could not be made.
#[derive(Debug, thiserror::Error)]
pub enum PreviewError {
    /// An option does not fit the show (bars outside it, an empty exposure...).
    #[error("{0}")]
    Options(String),
    /// The picture or the exposure is larger than the renderer accepts.
    #[error("{0}")]
    TooLarge(String),
    /// Writing a file failed.
    #[error("cannot write `{}`: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        #[source]
        source: std::io::Error,
    },
    /// Encoding the PNG failed.
    #[error("cannot encode the PNG: {0}")]
    Encode(#[from] image::ImageError),
}

/// When the shutter is open. Left out: the whole show.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Shutter {
    /// First and last bar, inclusive (from 1): opens at the first, closes at
    /// the end of the last.
    pub bars: Option<(u32, u32)>,
    /// Opening time, seconds from frame 0 (not with `bars`).
    pub start_s: Option<f64>,
    /// Exposure time, seconds from the opening.
    pub exposure_s: Option<f64>,
}

/// How to take the picture.
#[derive(Clone, Debug, PartialEq)]
pub struct PreviewOptions {
    /// Width and height, pixels (`None`: [`DEFAULT_SIZE`], or 1600 wide at a
    /// given viewport's aspect).
    pub size: Option<(u32, u32)>,
    /// The orthographic view (ignored with `pinhole`).
    pub view: View,
    /// [X0, Y0, X1, Y1] in the view's screen coordinates, metres (`None`:
    /// fitted to the light with a margin).
    pub viewport: Option<[f64; 4]>,
    /// A perspective photo from this camera instead of an orthographic view.
    pub pinhole: Option<Pinhole>,
    /// When the shutter is open.
    pub shutter: Shutter,
    /// Exposure compensation from the automatic meter, stops (+1 doubles).
    pub ev_stops: f64,
    /// The stage behind the light, sRGB bytes.
    pub background: [u8; 3],
    /// Draws a scale bar in metres (orthographic views only).
    pub scale_bar: bool,
}

impl Default for PreviewOptions {
    fn default() -> Self {
        PreviewOptions {
            size: None,
            view: View::Front,
            viewport: None,
            pinhole: None,
            shutter: Shutter::default(),
            ev_stops: 0.0,
            background: DEFAULT_BACKGROUND,
            scale_bar: false,
        }
    }
}

/// An exposed, undeveloped picture.
#[derive(Clone, Debug)]
pub struct Photo {
    /// The light on the sensor.
    pub film: Film,
    /// The camera it was taken with (with the fitted viewport, if any).
    pub camera: Camera,
    /// Shutter open and close, seconds from frame 0.
    pub window_s: (f64, f64),
    /// Exposure gain from the meter: picture value per LED-second.
    pub gain: f32,
    /// Points of light the trails were cut into.
    pub pieces: usize,
}

/// The shutter's open and close times for `shutter` in `show`, seconds.
pub fn window(show: &Show, shutter: &Shutter) -> Result<(f64, f64), PreviewError> {
    let last_bar = show.sections.iter().map(|s| s.last_bar).max().unwrap_or(0);
    let err = |m: String| Err(PreviewError::Options(m));
    if shutter.bars.is_some() && shutter.start_s.is_some() {
        return err("give the opening as --bars or as --start-s, not both".into());
    }
    if let Some((a, b)) = shutter.bars
        && !(1 <= a && a <= b && b <= last_bar)
    {
        return err(format!(
            "--bars {a}-{b} is outside the show, which has bars 1 to {last_bar}"
        ));
    }
    let end_s = show.end_s();
    let start = match (shutter.start_s, shutter.bars) {
        (Some(s), _) => s,
        (None, Some((a, _))) => show.tempo.time_at_bar(a),
        (None, None) => 0.0,
    };
    if !(start.is_finite() && start >= 0.0 && start < end_s) {
        return err(format!(
            "the shutter opens at {start} s, outside the show (0 to {end_s} s)"
        ));
    }
    let end = match (shutter.exposure_s, shutter.bars) {
        (Some(e), _) if e.is_finite() && e > 0.0 => start + e,
        (Some(e), _) => return err(format!("--exposure-s must be more than 0, got {e}")),
        (None, Some((_, b))) => show.tempo.time_at_bar(b + 1),
        (None, None) => end_s,
    };
    Ok((start, end.min(end_s)))
}

fn check_size(w: u32, h: u32) -> Result<(), PreviewError> {
    if w == 0 || h == 0 || w > MAX_SIDE || h > MAX_SIDE {
        return Err(PreviewError::TooLarge(format!(
            "a picture of {w}x{h} pixels: each side must be 1 to {MAX_SIDE}"
        )));
    }
    if u64::from(w) * u64::from(h) > MAX_PIXELS {
        return Err(PreviewError::TooLarge(format!(
            "a picture of {w}x{h} pixels is larger than {MAX_PIXELS} pixels"
        )));
    }
    Ok(())
}

/// Points of light turned into glows and added at a time.
const KERNEL_CHUNK: usize = 1 << 15;

/// Spacing of the coarse pass that finds where the light is, metres.
const SCOUT_SPACING_M: f64 = 0.02;

/// Glow of a prop whose LEDs sit at its ends (a poi head), when the show
/// gives none: standard deviation, millimetres (a diffused ball of about
/// 50 mm photographed a few metres away).
pub const HEAD_GLOW_SIGMA_MM: f64 = 12.0;

/// Limits of the glow picked from a strip's LED pitch, millimetres: no
/// smaller than a small LED package, no larger than a head's glow.
pub const STRIP_GLOW_SIGMA_MM: (f64, f64) = (2.0, 12.0);

/// The standard deviation of the glow of each of `prop`'s LEDs, metres: its
/// `glow_sigma_mm` when given. Otherwise, when it has a strip of LEDs spread
/// along it, half the spacing of neighbouring LEDs (the closest-spaced
/// strip), kept within [`STRIP_GLOW_SIGMA_MM`]: Gaussians of standard
/// deviation d / 2 set d apart add up to a line that is even to about 1.4 %
/// (by the Poisson summation formula the ripple is 2 exp(-pi^2 / 2)), so a
/// lit strip reads as one band and a painted picture has no gaps between
/// the LEDs' tracks. Otherwise (a head) [`HEAD_GLOW_SIGMA_MM`].
pub fn glow_sigma_m(prop: &Prop) -> f64 {
    if let Some(mm) = prop.glow_sigma_mm {
        return mm / 1000.0;
    }
    let pitch_m = prop
        .strips
        .iter()
        .filter_map(Strip::pitch_m)
        .filter(|&p| p > 0.0)
        .fold(f64::INFINITY, f64::min);
    if pitch_m.is_finite() {
        let (lo, hi) = STRIP_GLOW_SIGMA_MM;
        (0.5 * pitch_m * 1000.0).clamp(lo, hi) / 1000.0
    } else {
        HEAD_GLOW_SIGMA_MM / 1000.0
    }
}

/// What the coarse pass learns of the light: the box it fills on the
/// view's screen and the sum of its positions, in the order they come.
#[derive(Clone, Debug)]
struct Cloud {
    view: View,
    lo: [f64; 2],
    hi: [f64; 2],
    sum: Vec3,
    n: usize,
}

impl Cloud {
    fn new(view: View) -> Self {
        Cloud {
            view,
            lo: [0.0; 2],
            hi: [0.0; 2],
            sum: Vec3::zeros(),
            n: 0,
        }
    }

    fn add(&mut self, p: &Vec3) {
        let q = self.view.screen(p);
        if self.n == 0 {
            (self.lo, self.hi) = (q, q);
        } else {
            self.lo = [self.lo[0].min(q[0]), self.lo[1].min(q[1])];
            self.hi = [self.hi[0].max(q[0]), self.hi[1].max(q[1])];
        }
        self.sum += p;
        self.n += 1;
    }

    /// The bounding box on the screen, or `None` when empty.
    fn screen_box(&self) -> Option<([f64; 2], [f64; 2])> {
        (self.n > 0).then_some((self.lo, self.hi))
    }

    /// Adds the points of `other` (seen in the same view).
    fn merge(&mut self, other: &Cloud) {
        if other.n == 0 {
            return;
        }
        if self.n == 0 {
            (self.lo, self.hi) = (other.lo, other.hi);
        } else {
            self.lo = [self.lo[0].min(other.lo[0]), self.lo[1].min(other.lo[1])];
            self.hi = [self.hi[0].max(other.hi[0]), self.hi[1].max(other.hi[1])];
        }
        self.sum += other.sum;
        self.n += other.n;
    }

    /// The mean position (the origin when empty).
    fn centre(&self) -> Vec3 {
        self.sum / self.n.max(1) as f64
    }
}

/// Where the lit LEDs go in the exposure (coarsely), or, when nothing is
/// lit, where each prop's ends are halfway through it.
fn scout(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    view: View,
    (t0, t1): (f64, f64),
) -> Result<Cloud, PreviewError> {
    let lit = scout_lit(show, motions, lights, view, (t0, t1))?;
    Ok(lit_or_ends(show, motions, lit, (t0, t1)))
}

/// Where the lit LEDs go in the exposure (coarsely), seen in `view`.
fn scout_lit(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    view: View,
    (t0, t1): (f64, f64),
) -> Result<Cloud, PreviewError> {
    let mut lit = Cloud::new(view);
    scout_points(show, motions, lights, (t0, t1), &mut |p| lit.add(p))?;
    Ok(lit)
}

/// `lit`, or where each prop's ends are halfway through `(t0, t1)` when
/// nothing is lit.
fn lit_or_ends(show: &Show, motions: &[PropMotion], lit: Cloud, (t0, t1): (f64, f64)) -> Cloud {
    if lit.n > 0 {
        return lit;
    }
    let mut all = Cloud::new(lit.view);
    for m in motions {
        let st = m.state_at(&show.tempo, 0.5 * (t0 + t1));
        all.add(&st.head_m);
        let prop = &show.props[m.prop];
        for &end in prop.ends_m().iter().skip(1) {
            all.add(&(st.hand_m + st.dir * end));
        }
    }
    all
}

/// Every point of light of the window `(t0, t1)` at the coarse spacing of
/// the scout passes ([`SCOUT_SPACING_M`]), handed to `f` in order.
fn scout_points(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    (t0, t1): (f64, f64),
    f: &mut dyn FnMut(&Vec3),
) -> Result<(), PreviewError> {
    // Only where the light goes matters: runs end where a spot goes dark
    // or lit, not at every change of colour.
    trail::for_each_chunk_of(
        show,
        motions,
        lights,
        (t0, t1),
        &|_| SCOUT_SPACING_M,
        trail::Runs::Lit,
        (KERNEL_CHUNK, trail::MAX_PIECES),
        &mut |chunk| {
            chunk.iter().for_each(|p| f(&p.pos));
            Ok(())
        },
    )
    .map(|_| ())
}

/// The nearest depth in front of `cam` of the lit LEDs (coarsely), metres,
/// or infinity when nothing lit is in front.
fn nearest_depth(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    cam: &Camera,
    (t0, t1): (f64, f64),
) -> Result<f64, PreviewError> {
    let mut near = f64::INFINITY;
    scout_points(show, motions, lights, (t0, t1), &mut |p| {
        if let Some(z) = cam.depth(p).filter(|&z| z >= camera::NEAR_M) {
            near = near.min(z);
        }
    })?;
    Ok(near)
}

/// The camera for `opts`, fitted where needed to `cloud` (the lit points,
/// or the props' ends when nothing is lit).
fn make_camera(
    show: &Show,
    opts: &PreviewOptions,
    cloud: Option<&Cloud>,
) -> Result<Camera, PreviewError> {
    if let Some(ph) = opts.pinhole {
        if opts.viewport.is_some() || opts.scale_bar {
            return Err(PreviewError::Options(
                "--viewport and --scale-bar are for orthographic views, not with --camera".into(),
            ));
        }
        let (w, h) = opts.size.unwrap_or(DEFAULT_SIZE);
        check_size(w, h)?;
        let target = ph
            .look_at_m
            .unwrap_or_else(|| cloud.map_or_else(Vec3::zeros, Cloud::centre));
        return Camera::pinhole(ph.eye_m, target, ph.fov_deg, w, h).ok_or_else(|| {
            PreviewError::Options(format!(
                "the camera at {:?} cannot look at {:?} with a field of view of {} degrees \
                 (the eye must not be at the target; the field of view is between 0 and 180)",
                ph.eye_m.to_array(),
                target.to_array(),
                ph.fov_deg
            ))
        });
    }
    if let Some(v) = opts.viewport {
        if !(v.iter().all(|x| x.is_finite()) && v[2] > v[0] && v[3] > v[1]) {
            return Err(PreviewError::Options(format!(
                "--viewport {},{},{},{}: X1 must be greater than X0 and Y1 than Y0",
                v[0], v[1], v[2], v[3]
            )));
        }
        let (w, h) = opts.size.unwrap_or_else(|| {
            let h = (1600.0 * (v[3] - v[1]) / (v[2] - v[0])).round();
            (1600, h.clamp(1.0, f64::from(MAX_SIDE)) as u32)
        });
        check_size(w, h)?;
        return Ok(Camera::ortho(opts.view, v, w, h));
    }
    let (w, h) = opts.size.unwrap_or(DEFAULT_SIZE);
    check_size(w, h)?;
    let glow_m = show.props.iter().map(glow_sigma_m).fold(0.0, f64::max);
    let (lo, hi) = cloud
        .and_then(Cloud::screen_box)
        .unwrap_or(([-1.0, 0.0], [1.0, 2.0]));
    let extent = (hi[0] - lo[0]).max(hi[1] - lo[1]);
    let margin = 4.0 * glow_m + 0.08 * extent + 0.05;
    Ok(Camera::ortho(
        opts.view,
        camera::fit_viewport(lo, hi, margin, w, h),
        w,
        h,
    ))
}

/// Exposes the film: every LED's light in the shutter window of `opts`,
/// seen by its camera. `progress(done, total)` is called as the work goes.
///
/// The points of light are counted first (refused beyond
/// [`trail::MAX_PIECES`]), then made, turned into glows and added to the
/// film chunk by chunk, in one fixed order: the memory does not grow with
/// the exposure, and the picture does not depend on the number of threads.
pub fn shoot(
    prepared: &Prepared,
    opts: &PreviewOptions,
    progress: &(dyn Fn(u64, u64) + Sync),
) -> Result<Photo, PreviewError> {
    let show = prepared.show();
    let (t0, t1) = window(show, &opts.shutter)?;
    let setup = Setup::new(prepared, opts, (t0, t1))?;
    let total = trail::count(
        show,
        prepared.motions(),
        prepared.lights(),
        t0,
        t1,
        &|p| setup.spacing_m(p),
        trail::MAX_PIECES,
    )?;
    let mut film = Film::new(setup.cam.width, setup.cam.height);
    let made = setup.expose(prepared, (t0, t1), trail::MAX_PIECES, &mut film, &|d| {
        progress(d, total.max(1))
    })?;
    let gain = tone::metered_gain(film.max(), opts.ev_stops);
    Ok(Photo {
        film,
        camera: setup.cam,
        window_s: (t0, t1),
        gain,
        pieces: made as usize,
    })
}

/// Points of light closer than this many glow widths (standard deviations,
/// with the blur) along a path: Gaussians set 1.5 standard deviations apart
/// add up to a line even to about 0.03 % (by the Poisson summation formula
/// the ripple is 2 exp(-2 pi^2 / 1.5^2)), far below what 8 bits show.
pub const PIECE_SPACING_SIGMAS: f64 = 1.5;

/// A camera made for an exposure, and the spacing of its points of light.
#[derive(Clone)]
struct Setup {
    cam: Camera,
    /// Each prop's glow, metres.
    glows: Vec<f64>,
    /// One pixel, metres, at the finest scale of the picture.
    px_m: f64,
    /// Whether an orthographic picture is drawn by deposit and blur
    /// (module `blur`) rather than a kernel per point.
    deposit: bool,
}

impl Setup {
    /// Checks the options and the window `(t0, t1)`, scouts the light where
    /// the camera must be fitted to it and makes the camera.
    fn new(
        prepared: &Prepared,
        opts: &PreviewOptions,
        window: (f64, f64),
    ) -> Result<Setup, PreviewError> {
        Setup::with_cloud(prepared, opts, window, None)
    }

    /// [`Setup::new`], with the light of the window already scouted in
    /// `opts.view` when `scouted` is given.
    fn with_cloud(
        prepared: &Prepared,
        opts: &PreviewOptions,
        (t0, t1): (f64, f64),
        scouted: Option<Cloud>,
    ) -> Result<Setup, PreviewError> {
        let (show, motions, lights) = (prepared.show(), prepared.motions(), prepared.lights());
        if !(opts.ev_stops.is_finite() && opts.ev_stops.abs() <= MAX_EV_STOPS) {
            return Err(PreviewError::Options(format!(
                "--ev must be between -{MAX_EV_STOPS} and {MAX_EV_STOPS} stops, got {}",
                opts.ev_stops
            )));
        }
        trail::check_frames(show, t0, t1)?;
        let needs_scout = opts.viewport.is_none() || opts.pinhole.is_some();
        let cloud = if needs_scout {
            match scouted {
                Some(c) => Some(c),
                None => Some(scout(show, motions, lights, opts.view, (t0, t1))?),
            }
        } else {
            None
        };
        let cam = make_camera(show, opts, cloud.as_ref())?;
        // The nearest lit depth sets the finest pixel scale of a pinhole photo.
        let near = if opts.pinhole.is_some() {
            nearest_depth(show, motions, lights, &cam, (t0, t1))?
        } else {
            f64::INFINITY
        };
        let (sx, sy) = cam.pixels_per_m(if near.is_finite() { near } else { 1.0 });
        Ok(Setup {
            cam,
            glows: show.props.iter().map(glow_sigma_m).collect(),
            px_m: 1.0 / sx.max(sy),
            deposit: false,
        }
        .with_sensor_for(show, (t0, t1)))
    }

    /// Chooses the sensor for the window `(t0, t1)` from what the show
    /// says before any point is made (a point per frame per place of LEDs),
    /// so that every command draws the same window the same way.
    fn with_sensor_for(mut self, show: &Show, (t0, t1): (f64, f64)) -> Setup {
        let frames = ((t1 - t0).max(0.0) * f64::from(show.frame_rate_hz)).ceil();
        let spots: usize = show.props.iter().map(|p| trail::spots(p).len()).sum();
        self.deposit = self.deposit_pays((frames * spots as f64) as u64);
        self
    }

    /// Whether deposit and blur costs less than a kernel per point for
    /// `points` points: a kernel adds about (8 sigma)^2 pixels per point,
    /// the blur about 16 sigma per pixel of the picture (at the widest glow).
    fn deposit_pays(&self, points: u64) -> bool {
        let glow = self.glows.iter().copied().fold(0.0, f64::max);
        let sigma = (glow / self.px_m).hypot(splat::MIN_BLUR_PX);
        let side = 2.0 * splat::KERNEL_SIGMAS * sigma + 1.0;
        let pixels = f64::from(self.cam.width) * f64::from(self.cam.height);
        points as f64 * side * side > pixels * 2.0 * side
    }

    /// The largest distance an LED of prop `p` moves within one point of
    /// light, metres.
    fn spacing_m(&self, p: usize) -> f64 {
        let g = self.glows[p];
        let blur = splat::MIN_BLUR_PX * self.px_m;
        PIECE_SPACING_SIGMAS * (g * g + blur * blur).sqrt()
    }

    /// Adds the light of the window `(t0, t1)` to `film` (made for this
    /// camera), refusing more than `limit` points; `progress(points)` as it
    /// goes. Returns the number of points made.
    fn expose(
        &self,
        prepared: &Prepared,
        (t0, t1): (f64, f64),
        limit: u64,
        film: &mut Film,
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<u64, PreviewError> {
        let mut target = Target::new(self.clone(), std::mem::replace(film, Film::new(0, 0)));
        let made = expose_all(prepared, (t0, t1), limit, &mut [&mut target], progress);
        *film = target.into_film();
        made
    }
}

/// A film being exposed through one camera: the glows of each chunk of
/// points go onto it as they come (deposits are blurred onto it once, when
/// it is taken out with [`Target::into_film`]).
struct Target {
    setup: Setup,
    film: Film,
    /// Orthographic views deposit each point and blur once per glow width
    /// (module `blur`); a pinhole's glows change with depth, so each point
    /// gets its own kernel.
    deposits: Option<blur::Deposits>,
    /// Per prop, its glow group in `deposits`, once known.
    groups: Vec<Option<usize>>,
}

impl Target {
    fn new(setup: Setup, film: Film) -> Self {
        let cam = &setup.cam;
        let deposits = cam
            .viewport()
            .filter(|_| setup.deposit)
            .map(|_| blur::Deposits::new(cam.width, cam.height));
        Target {
            groups: vec![None; setup.glows.len()],
            setup,
            film,
            deposits,
        }
    }

    /// Adds the glows of `chunk`; `progress(d, bands)` while a chunk of
    /// kernels is added.
    fn take(&mut self, chunk: &[trail::Piece], progress: &(dyn Fn(u64, u64) + Sync)) {
        let (cam, glows) = (&self.setup.cam, &self.setup.glows);
        let (w, h) = (cam.width, cam.height);
        if let Some(dep) = self.deposits.as_mut() {
            let seen: Vec<Option<(usize, camera::Projected)>> = chunk
                .par_iter()
                .map(|p| cam.project(&p.pos).map(|q| (p.prop, q)))
                .collect();
            let mut rest = Vec::new();
            for ((prop, q), piece) in seen
                .into_iter()
                .zip(chunk)
                .filter_map(|(s, p)| s.map(|s| (s, p)))
            {
                let g = glows[prop];
                let e = piece.energy.map(|v| (v * q.gain) as f32);
                let group = match self.groups[prop] {
                    Some(i) => Some(i),
                    None => {
                        let i = dep.group(g * q.scale_x, g * q.scale_y);
                        self.groups[prop] = i;
                        i
                    }
                };
                match group {
                    Some(i) => dep.deposit(i, q.px, q.py, e),
                    None => rest.extend(splat::kernel(
                        q.px,
                        q.py,
                        g * q.scale_x,
                        g * q.scale_y,
                        e,
                        w,
                        h,
                    )),
                }
            }
            splat::accumulate_into(&mut self.film, &rest, &|_, _| {});
            return;
        }
        let kernels: Vec<splat::Kernel> = chunk
            .par_iter()
            .filter_map(|p| {
                let q = cam.project(&p.pos)?;
                let g = glows[p.prop];
                let e = p.energy.map(|v| (v * q.gain) as f32);
                splat::kernel(q.px, q.py, g * q.scale_x, g * q.scale_y, e, w, h)
            })
            .collect();
        splat::accumulate_into(&mut self.film, &kernels, progress);
    }

    /// The film, with what was deposited blurred onto it.
    fn into_film(mut self) -> Film {
        if let Some(dep) = self.deposits.take() {
            dep.develop_into(&mut self.film);
        }
        self.film
    }
}

/// Adds the light of the window `(t0, t1)` to every target's film, refusing
/// more than `limit` points; `progress(points)` as it goes. The points of
/// light are made once, at the finest spacing any target needs, and each
/// chunk goes onto the targets in their order. Returns the number of
/// points made.
fn expose_all(
    prepared: &Prepared,
    (t0, t1): (f64, f64),
    limit: u64,
    targets: &mut [&mut Target],
    progress: &(dyn Fn(u64) + Sync),
) -> Result<u64, PreviewError> {
    let (show, motions, lights) = (prepared.show(), prepared.motions(), prepared.lights());
    let props = show.props.len();
    let spacings: Vec<f64> = (0..props)
        .map(|p| {
            targets
                .iter()
                .map(|t| t.setup.spacing_m(p))
                .fold(f64::INFINITY, f64::min)
        })
        .collect();
    let spacing = |p: usize| spacings[p];
    let mut done: u64 = 0;
    let made = trail::for_each_chunk(
        show,
        motions,
        lights,
        t0,
        t1,
        &spacing,
        KERNEL_CHUNK,
        limit,
        &mut |chunk| {
            let n = chunk.len() as u64;
            for t in targets.iter_mut() {
                t.take(chunk, &|d, bands| progress(done + n * d / bands.max(1)));
            }
            done += n;
            progress(done);
            Ok(())
        },
    )?;
    Ok(made)
}

/// Develops `photo` into the 8-bit sRGB picture (with the scale bar if asked).
pub fn develop(photo: &Photo, opts: &PreviewOptions) -> RgbImage {
    let bg = opts.background;
    let lin = colour::to_linear(palette::Srgb::new(bg[0], bg[1], bg[2]));
    let bg = [lin.red as f32, lin.green as f32, lin.blue as f32];
    let mut img = tone::develop(&photo.film, photo.gain, bg);
    if opts.scale_bar && photo.camera.viewport().is_some() {
        // Orthographic: one scale across the whole picture.
        overlay::scale_bar(&mut img, photo.camera.pixels_per_m(1.0).0);
    }
    img
}

/// Renders the long-exposure picture of `opts`: 8-bit sRGB.
pub fn render(prepared: &Prepared, opts: &PreviewOptions) -> Result<RgbImage, PreviewError> {
    let photo = shoot(prepared, opts, &|_, _| {})?;
    Ok(develop(&photo, opts))
}

/// File name of the preview of bars `a`-`b` written by [`write_previews`].
pub fn section_file_name(a: u32, b: u32) -> String {
    format!("preview-bars-{a}-{b}.png")
}

/// File name of the whole-show preview written by [`write_previews`].
pub const SHOW_FILE_NAME: &str = "preview.png";

/// A section preview whose own framing, fitted to its light, is at least
/// this share as wide as the whole show's may be drawn in the whole show's
/// framing (and share its exposure): its figure is then drawn at least this
/// share as large as on its own.
pub const SHARED_FRAMING: f64 = 0.6;

/// A picture [`write_previews`] wrote, and what it shows.
#[derive(Clone, Debug, PartialEq)]
pub struct Written {
    /// The file.
    pub path: PathBuf,
    /// The section's choice ([`choice::choose`]); `None` for the whole show.
    pub choice: Option<choice::Choice>,
    /// The orthographic view it was drawn from (`None`: the pinhole camera
    /// the options gave).
    pub view: Option<View>,
    /// Whether its light was exposed with the whole show's and it is framed
    /// like the whole show (otherwise it was exposed and framed on its own).
    pub shared: bool,
}

impl Written {
    /// The file's name.
    pub fn file_name(&self) -> String {
        self.path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default()
    }

    /// What it shows, in words: `the whole show, front view` or `bars 9-10:
    /// one figure (8 beats), side view, framed on its own`.
    pub fn words(&self, show: &Show) -> String {
        let view = match self.view {
            Some(v) => format!("{} view", v.name()),
            None => "the camera given".into(),
        };
        let Some(c) = &self.choice else {
            return format!("the whole show, {view}");
        };
        let framing = if self.shared {
            "framed with the whole show"
        } else {
            "framed on its own"
        };
        format!(
            "{}: {}, {view}, {framing}",
            beats_words(show, c.beats),
            c.exposure_words()
        )
    }
}

/// Global beats `(b0, b1)` from a bar's start in words: `bars 9-10`,
/// `bar 3`, or `2 beats from bar 9` when they are not whole bars.
fn beats_words(show: &Show, (b0, b1): (f64, f64)) -> String {
    let bpb = f64::from(show.tempo.beats_per_bar());
    let first = show.tempo.bar_beat(b0).0;
    let bars = (b1 - b0) / bpb;
    if (bars - bars.round()).abs() < 1e-6 && bars.round() >= 1.0 {
        let last = first + bars.round() as i64 - 1;
        if last == first {
            format!("bar {first}")
        } else {
            format!("bars {first}-{last}")
        }
    } else {
        let beats = crate::num::round_to(b1 - b0, 3);
        format!(
            "{beats} beat{} from bar {first}",
            if beats == 1.0 { "" } else { "s" }
        )
    }
}

/// How a section's preview is exposed.
enum Plan {
    /// With the whole show's film, in its framing.
    Shared,
    /// On its own, with its own camera.
    Own(Box<Setup>),
}

/// Renders the whole show ([`SHOW_FILE_NAME`]) and each section
/// ([`section_file_name`]) into `dir`. Everything is rendered before
/// anything is written; each file is written atomically. The shutter of
/// `opts` is ignored. Returns the files written, show first, with what
/// each shows.
///
/// The whole show is drawn in `opts`'s view over the whole show. Each
/// section is exposed and viewed as [`choice::choose`] picks (its view
/// only when `opts` fixes neither the viewport nor the camera), framed to
/// its own light. A section exposed whole, in the whole show's view, whose
/// own framing is close to the whole show's ([`SHARED_FRAMING`]) shares
/// the whole show's exposure: its light is exposed once, onto its own
/// film, which is then added to the whole show's film (with the light
/// between and around such sections), so no point of light is made or
/// drawn twice. Any other section's window is exposed through both cameras
/// at once: its points of light are made once (at the finer spacing of the
/// two) and drawn onto its own film and the whole show's. Each picture is
/// metered on its own.
pub fn write_previews(
    prepared: &Prepared,
    dir: &Path,
    opts: &PreviewOptions,
) -> Result<Vec<Written>, PreviewError> {
    let show = prepared.show();
    let (motions, lights) = (prepared.motions(), prepared.lights());
    let mut whole = opts.clone();
    whole.shutter = Shutter::default();
    let (t0, t1) = window(show, &whole.shutter)?;
    let fixed = opts.viewport.is_some() || opts.pinhole.is_some();
    let mut choices: Vec<choice::Choice> = (0..show.sections.len())
        .map(|i| choice::choose(prepared, i))
        .collect();
    choices.sort_by(|x, y| x.window_s.0.total_cmp(&y.window_s.0));
    let clip = |c: &choice::Choice| {
        let a = c.window_s.0.max(t0);
        (a, c.window_s.1.min(t1).max(a))
    };
    // The light is scouted window by window in the whole show's view (each
    // section's window and the stretches between), so that a section seen
    // in that view is framed without a second scout.
    let mut scouted: Vec<Option<Cloud>> = vec![None; choices.len()];
    let setup = if fixed {
        Setup::new(prepared, &whole, (t0, t1))?
    } else {
        let mut all = Cloud::new(whole.view);
        let mut covered = t0;
        for (c, slot) in choices.iter().zip(scouted.iter_mut()) {
            let (a, b) = clip(c);
            if a > covered {
                all.merge(&scout_lit(show, motions, lights, whole.view, (covered, a))?);
            }
            let (a, b) = (a.max(covered), b.max(covered));
            let lit = scout_lit(show, motions, lights, whole.view, (a, b))?;
            all.merge(&lit);
            *slot = Some(lit_or_ends(show, motions, lit, (a, b)));
            covered = covered.max(b);
        }
        if t1 > covered {
            all.merge(&scout_lit(
                show,
                motions,
                lights,
                whole.view,
                (covered, t1),
            )?);
        }
        let all = lit_or_ends(show, motions, all, (t0, t1));
        Setup::with_cloud(prepared, &whole, (t0, t1), Some(all))?
    };
    let (w, h) = (setup.cam.width, setup.cam.height);
    let width_of = |cam: &Camera| cam.viewport().map_or(0.0, |(_, v)| v[2] - v[0]);
    // Each section's plan, in time order.
    let mut plans = Vec::new();
    for (c, cloud) in choices.into_iter().zip(scouted) {
        let mut own = whole.clone();
        if !fixed {
            own.view = c.view;
        }
        let (a, b) = clip(&c);
        let same_view = own.view == whole.view;
        let plan = if fixed && same_view && c.whole_section() {
            Plan::Shared
        } else {
            let cloud = cloud.filter(|_| same_view);
            let s = Setup::with_cloud(prepared, &own, (a, b), cloud)?;
            let close = width_of(&s.cam) >= SHARED_FRAMING * width_of(&setup.cam);
            if same_view && c.whole_section() && close {
                Plan::Shared
            } else {
                Plan::Own(Box::new(s))
            }
        };
        let view = (opts.pinhole.is_none()).then_some(own.view);
        plans.push((c, (a, b), plan, view));
    }
    // The whole show's film, exposed window by window in time order and
    // developed once at the end.
    let mut show_target = Target::new(setup.clone(), Film::new(w, h));
    let mut budget = trail::MAX_PIECES;
    let mut made: u64 = 0;
    let mut pictures = Vec::new();
    let mut covered = t0;
    let mut expose = |targets: &mut [&mut Target], window, budget: &mut u64| {
        let n = expose_all(prepared, window, *budget, targets, &|_| {})?;
        *budget -= n;
        made += n;
        Ok::<u64, PreviewError>(n)
    };
    for (c, (a, b), plan, view) in plans {
        let sec = &show.sections[c.section];
        let written = Written {
            path: dir.join(section_file_name(sec.first_bar, sec.last_bar)),
            choice: Some(c),
            view,
            shared: matches!(plan, Plan::Shared),
        };
        if a > covered {
            expose(&mut [&mut show_target], (covered, a), &mut budget)?;
        }
        let a = a.max(covered);
        let b = b.max(a);
        let photo = match plan {
            Plan::Own(s) => {
                // Made once, onto the whole show's film and its own.
                let (cam, (cw, ch)) = (s.cam, (s.cam.width, s.cam.height));
                let mut own = Target::new(*s, Film::new(cw, ch));
                let n = expose(&mut [&mut show_target, &mut own], (a, b), &mut budget)?;
                let own = own.into_film();
                Photo {
                    gain: tone::metered_gain(own.max(), whole.ev_stops),
                    film: own,
                    camera: cam,
                    window_s: (a, b),
                    pieces: n as usize,
                }
            }
            Plan::Shared => {
                let mut own = Target::new(setup.clone(), Film::new(w, h));
                let n = expose(&mut [&mut own], (a, b), &mut budget)?;
                let own = own.into_film();
                show_target.film.add(&own);
                Photo {
                    gain: tone::metered_gain(own.max(), whole.ev_stops),
                    film: own,
                    camera: setup.cam,
                    window_s: (a, b),
                    pieces: n as usize,
                }
            }
        };
        covered = covered.max(b);
        pictures.push((written, develop(&photo, &whole)));
    }
    if t1 > covered {
        expose(&mut [&mut show_target], (covered, t1), &mut budget)?;
    }
    let film = show_target.into_film();
    let photo = Photo {
        gain: tone::metered_gain(film.max(), whole.ev_stops),
        film,
        camera: setup.cam,
        window_s: (t0, t1),
        pieces: made as usize,
    };
    let show_file = Written {
        path: dir.join(SHOW_FILE_NAME),
        choice: None,
        view: opts.pinhole.is_none().then_some(whole.view),
        shared: true,
    };
    pictures.insert(0, (show_file, develop(&photo, &whole)));
    let mut written = Vec::new();
    for (file, img) in pictures {
        write_png_atomic(&file.path, &img)?;
        written.push(file);
    }
    Ok(written)
}
