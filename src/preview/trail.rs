//! The light the LEDs give off while the shutter is open, as points along
//! their paths, produced in chunks.
//!
//! Every LED sits at a signed distance from the grip along the prop's
//! direction (`model::LedSpot::along_m`) and traces its own path: the hand's
//! path plus that distance along the prop. LEDs at the same distance (all
//! the LEDs of a plain poi head) trace the same path and are drawn as one
//! [`Spot`] carrying their summed light.
//!
//! An LED holds its colour for a whole frame while the prop moves on, so
//! the light of a frame is spread along the stretch of path the spot covers
//! in it. Each spot's emission is cut into runs of constant LED bytes
//! (frames of the same bytes are merged; section boundaries and PWM edges
//! cut them), and each run is cut again into equal steps of time short
//! enough that the spot moves less than a given spacing in one step (the
//! speed bound is that of the spot's own path). Each step becomes a point
//! of light at the spot's position at the step's middle instant, carrying
//! colour x time: a slow spot gets more steps per metre, so the light per
//! unit length is proportional to the time spent there.
//! Runs shorter than a step (a spot whose colour changes every frame) are
//! pooled, back to back, into one point until the spot would move half a
//! spacing: their light summed, at the middle of their time.
//!
//! Nothing holds all the points: frames are computed in blocks, runs are
//! closed as the frames go by, and points are handed on in chunks, in one
//! fixed order (prop by prop; within a prop, runs in the order they end,
//! spots of the same frame in spot order; steps in time order). [`count`]
//! walks the same way without making points, so the point budget is
//! checked before any picture is made.

use std::collections::HashMap;
use std::f64::consts::TAU;

use crate::geom::Vec3;
use rayon::prelude::*;

use super::PreviewError;
use crate::cues::Lights;
use crate::model::TempoMap;
use crate::model::{Prop, Show};
use crate::motion::{Curve, PropMotion, Span};

/// The most points of light one picture may be made of (they are streamed,
/// so this bounds the time, not the memory).
pub const MAX_PIECES: u64 = 60_000_000;
/// The most frames one exposure may span.
pub const MAX_FRAMES: u64 = 50_000_000;
/// The most LED-frames (frames x LEDs, all props together) one exposure may
/// span: a four-minute show of 144 LEDs at 1000 frames/s is 35 million.
pub const MAX_LED_FRAMES: u64 = 250_000_000;
/// How far, in point spacings, a spot may move within the short segments
/// pooled into one point: half a spacing (three quarters of a glow width)
/// widens the finest detail a painting or a chase draws along the path by
/// about 2 % (a box of that length adds its variance, length^2 / 12, to the
/// glow's).
const POOL_SPACINGS: f64 = 0.5;
/// Frames computed at a time (in parallel) while walking the trails.
const BLOCK_FRAMES: u64 = 1024;

/// A point of light: where, and how much of each primary.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Piece {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// Signed distance from the grip of the LEDs it comes from, metres.
    pub along_m: f64,
    /// Their position at the middle of the piece, stage coordinates, metres.
    pub pos: Vec3,
    /// Light given off, linear sRGB primaries, in LED-seconds (an LED at full
    /// power in one primary for one second gives 1).
    pub energy: [f64; 3],
}

/// LEDs that sit at the same place on a prop: they trace one path.
#[derive(Clone, Debug, PartialEq)]
pub struct Spot {
    /// Signed distance from the grip along the prop's direction, metres.
    pub along_m: f64,
    /// The LEDs there, indices in table order.
    pub leds: Vec<usize>,
}

/// The prop's LEDs grouped by where they sit, in the order of each group's
/// first LED.
pub fn spots(prop: &Prop) -> Vec<Spot> {
    let mut out: Vec<Spot> = Vec::new();
    let mut index: HashMap<u64, usize> = HashMap::new();
    for (i, s) in prop.led_spots().iter().enumerate() {
        // + 0.0 folds -0.0 (the grip, counted on the tail half) into 0.0.
        let along = s.along_m + 0.0;
        let k = *index.entry(along.to_bits()).or_insert_with(|| {
            out.push(Spot {
                along_m: along,
                leds: Vec::new(),
            });
            out.len() - 1
        });
        out[k].leds.push(i);
    }
    out
}

/// Upper bound of the speed of a point following `path` in `span`, m/s: the
/// sum of the rotating terms' speeds at the fastest tempo of the span.
pub fn speed_bound(path: &Curve, span: &Span, tempo: &TempoMap) -> f64 {
    let per_rev: f64 = path
        .rotors()
        .iter()
        .map(|r| r.radius_m * TAU * r.turns.abs())
        .sum();
    let mut bpm = tempo.bpm_at_beat(span.start_beat);
    for (beat, b) in tempo.changes() {
        if beat > span.start_beat && beat < span.end_beat {
            bpm = bpm.max(b);
        }
    }
    per_rev * span.phase_per_beat().abs() * bpm / 60.0
}

fn too_many() -> PreviewError {
    PreviewError::TooLarge(format!(
        "the picture would need more than {MAX_PIECES} points of light; \
         shorten the exposure, lower --size or raise the props' glow_sigma_mm"
    ))
}

/// Frames `k0 .. k1` of the show that overlap the exposure [t0, t1).
fn frame_range(show: &Show, t0: f64, t1: f64) -> (u64, u64) {
    let rate = f64::from(show.frame_rate_hz);
    let k0 = (t0 * rate).floor().max(0.0) as u64;
    let k1 = (t1 * rate).ceil().max(0.0) as u64;
    (k0, k1.max(k0))
}

/// Refuses an exposure that spans too many frames (per prop) or LED-frames
/// (all props), before any of them is computed.
pub fn check_frames(show: &Show, t0: f64, t1: f64) -> Result<(), PreviewError> {
    let (k0, k1) = frame_range(show, t0, t1);
    let frames = k1 - k0;
    if frames > MAX_FRAMES {
        return Err(PreviewError::TooLarge(format!(
            "the exposure spans {frames} frames; at most {MAX_FRAMES} are rendered: \
             shorten the exposure (--bars, --exposure-s)"
        )));
    }
    let leds: u64 = show.props.iter().map(|p| u64::from(p.leds)).sum();
    let led_frames = frames.saturating_mul(leds);
    if led_frames > MAX_LED_FRAMES {
        return Err(PreviewError::TooLarge(format!(
            "the exposure spans {frames} frames of {leds} LEDs in all ({led_frames} LED-frames); \
             at most {MAX_LED_FRAMES} are rendered: shorten the exposure (--bars, --exposure-s)"
        )));
    }
    Ok(())
}

/// What ends a spot's run of frames.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Runs {
    /// Any change of its LEDs' bytes: the light as it is.
    Bytes,
    /// Only a change between dark and lit: where the light goes, each run
    /// carrying its first frame's colour (for framing, not for drawing).
    Lit,
}

/// A stretch of one spot's emission of constant light, to be cut into
/// `steps` points of equal time.
#[derive(Clone, Copy, Debug)]
struct Segment {
    prop: usize,
    along_m: f64,
    a: f64,
    b: f64,
    steps: u64,
    /// Light per second, linear primaries, LED units.
    level: [f64; 3],
}

/// One spot as the walk sees it.
struct SpotInfo {
    along_m: f64,
    leds: Vec<usize>,
}

/// The span whose speed bound is cached, and the bound, m/s.
type SpeedCache = Option<(usize, f64)>;

/// Short segments of one spot pooled into one point: consecutive, in one
/// span, together shorter than one step.
#[derive(Clone, Copy, Debug)]
struct Pool {
    /// The span they are in (`None` at rest).
    span: Option<usize>,
    a: f64,
    b: f64,
    /// Light given off, LED-seconds per primary.
    energy: [f64; 3],
}

impl Pool {
    /// The pooled light as one segment of one step: the mean level over
    /// the pool's time, so its energy is the sum of the parts'.
    fn segment(&self, prop: usize, along_m: f64) -> Segment {
        let t = self.b - self.a;
        Segment {
            prop,
            along_m,
            a: self.a,
            b: self.b,
            steps: 1,
            level: self.energy.map(|e| e / t),
        }
    }
}

/// What the segments of one spot carry from one run to the next.
#[derive(Default)]
struct SpotState {
    speed: SpeedCache,
    pool: Option<Pool>,
}

/// What the walk keeps of one spot.
struct SpotWalk {
    info: SpotInfo,
    /// The run being built: its start and end, seconds.
    open: Option<(f64, f64)>,
    state: SpotState,
}

/// Walks every prop's emission in the exposure [t0, t1) and hands each
/// [`Segment`] to `sink`, in the fixed order of the module docs.
#[allow(clippy::too_many_arguments)]
fn walk(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: &dyn Fn(usize) -> f64,
    runs: Runs,
    sink: &mut dyn FnMut(&Segment) -> Result<(), PreviewError>,
) -> Result<(), PreviewError> {
    check_frames(show, t0, t1)?;
    for (p, motion) in motions.iter().enumerate() {
        walk_prop(show, motion, lights, (t0, t1), spacing_m(p), runs, sink)?;
    }
    Ok(())
}

fn walk_prop(
    show: &Show,
    motion: &PropMotion,
    lights: &Lights,
    (t0, t1): (f64, f64),
    spacing_m: f64,
    runs: Runs,
    sink: &mut dyn FnMut(&Segment) -> Result<(), PreviewError>,
) -> Result<(), PreviewError> {
    let p = motion.prop;
    let prop = &show.props[p];
    let Some(pl) = lights.props.get(p) else {
        return Ok(());
    };
    let leds = pl.leds as usize;
    if leds == 0 {
        return Ok(());
    }
    let rate = f64::from(show.frame_rate_hz);
    let (k0, k1) = frame_range(show, t0, t1);
    let mut spots: Vec<SpotWalk> = spots(prop)
        .into_iter()
        .map(|s| SpotWalk {
            info: SpotInfo {
                along_m: s.along_m,
                leds: s.leds,
            },
            open: None,
            state: SpotState::default(),
        })
        .collect();
    let cutter = Cutter {
        show,
        motion,
        prop,
        bounds: motion
            .spans
            .iter()
            .flat_map(|s| [s.start_s, s.end_s])
            .collect(),
        spacing_m,
    };
    let mut run_bytes = vec![[0u8; 3]; leds];
    let mut block: Vec<[u8; 3]> = Vec::new();
    let mut duties: Vec<f64> = Vec::new();
    let mut kb = k0;
    while kb < k1 {
        let n = BLOCK_FRAMES.min(k1 - kb) as usize;
        block.resize(n * leds, [0, 0, 0]);
        block
            .par_chunks_mut(leds)
            .with_min_len(16)
            .enumerate()
            .for_each(|(j, frame)| pl.fill_frame(show, kb + j as u64, frame));
        for (j, frame) in block.chunks(leds).enumerate() {
            let k = kb + j as u64;
            let a = (k as f64 / rate).max(t0);
            let b = ((k + 1) as f64 / rate).min(t1);
            if b <= a {
                continue;
            }
            for spot in &mut spots {
                let same = matches!(spot.open, Some((_, end)) if end == a)
                    && match runs {
                        Runs::Bytes => spot.info.leds.iter().all(|&l| frame[l] == run_bytes[l]),
                        Runs::Lit => spot
                            .info
                            .leds
                            .iter()
                            .all(|&l| (frame[l] == [0; 3]) == (run_bytes[l] == [0; 3])),
                    };
                if same {
                    if let Some(run) = spot.open.as_mut() {
                        run.1 = b;
                    }
                    continue;
                }
                if let Some((ra, rb)) = spot.open {
                    let s = &mut spot.state;
                    cutter.close(&spot.info, s, ra, rb, &run_bytes, &mut duties, sink)?;
                }
                spot.open = Some((a, b));
                for &l in &spot.info.leds {
                    run_bytes[l] = frame[l];
                }
            }
        }
        kb += n as u64;
    }
    for spot in &mut spots {
        if let Some((ra, rb)) = spot.open.take() {
            let s = &mut spot.state;
            cutter.close(&spot.info, s, ra, rb, &run_bytes, &mut duties, sink)?;
        }
        if let Some(pool) = spot.state.pool.take() {
            sink(&pool.segment(p, spot.info.along_m))?;
        }
    }
    Ok(())
}

/// Cuts the runs of one prop into segments.
struct Cutter<'a> {
    show: &'a Show,
    motion: &'a PropMotion,
    prop: &'a Prop,
    /// Section starts and ends, seconds, in time order.
    bounds: Vec<f64>,
    spacing_m: f64,
}

impl Cutter<'_> {
    /// Cuts the run [a, b) of `spot` (whose LEDs show `bytes`) at section
    /// boundaries and PWM edges and hands the lit pieces to `sink`.
    #[allow(clippy::too_many_arguments)]
    fn close(
        &self,
        spot: &SpotInfo,
        state: &mut SpotState,
        a: f64,
        b: f64,
        bytes: &[[u8; 3]],
        duties: &mut Vec<f64>,
        sink: &mut dyn FnMut(&Segment) -> Result<(), PreviewError>,
    ) -> Result<(), PreviewError> {
        let lit = || spot.leds.iter().map(|&l| bytes[l]);
        if lit().all(|c| c == [0, 0, 0]) {
            return Ok(());
        }
        let first = bytes[spot.leds[0]];
        let uniform = lit().all(|c| c == first);
        let n = spot.leds.len() as f64;
        let duty = |c: [u8; 3]| c.map(|v| f64::from(v) / 255.0);
        let pwm = self.prop.pwm_hz > 0.0 && lit().flatten().any(|v| v > 0 && v < 255);
        // Light per second outside PWM: the LEDs' duties summed (n times the
        // one duty when they all show the same bytes).
        let steady = if uniform {
            duty(first).map(|d| d * n)
        } else {
            lit()
                .map(duty)
                .fold([0.0; 3], |s, d| [s[0] + d[0], s[1] + d[1], s[2] + d[2]])
        };
        duties.clear();
        if pwm {
            duties.extend(
                lit()
                    .flatten()
                    .filter(|&v| v > 0 && v < 255)
                    .map(|v| f64::from(v) / 255.0),
            );
            duties.sort_by(f64::total_cmp);
            duties.dedup();
        }
        let period = if pwm { 1.0 / self.prop.pwm_hz } else { 0.0 };
        let level_at = |mid: f64| {
            if pwm {
                let phase = mid / period - (mid / period).floor();
                let mut on = [0.0; 3];
                for c in lit() {
                    for (o, d) in on.iter_mut().zip(duty(c)) {
                        if phase < d {
                            *o += 1.0;
                        }
                    }
                }
                on
            } else {
                steady
            }
        };
        // The cut instants in increasing order: section boundaries inside
        // the run, merged with PWM period starts and duty ends.
        let mut bi = self.bounds.partition_point(|&t| t <= a);
        let mut prev = a;
        let mut cut = |t: f64| -> Result<(), PreviewError> {
            if t <= prev {
                return Ok(());
            }
            let (sa, sb) = (prev, t);
            prev = t;
            let level = level_at(0.5 * (sa + sb));
            self.segment(spot, state, sa, sb, level, sink)
        };
        let mut to = |t: f64| -> Result<(), PreviewError> {
            while bi < self.bounds.len() && self.bounds[bi] < t.min(b) {
                cut(self.bounds[bi])?;
                bi += 1;
            }
            if t < b { cut(t) } else { Ok(()) }
        };
        if pwm {
            let mut k = (a / period).floor();
            let k_end = (b / period).ceil();
            while k <= k_end {
                let start = k * period;
                to(start)?;
                for &d in duties.iter() {
                    to(start + d * period)?;
                }
                k += 1.0;
            }
        }
        to(b)?;
        cut(b)
    }

    /// Hands the segment [a, b) of `spot` at `level` to `sink`, with its
    /// number of steps from the speed bound of the spot's path. A segment
    /// shorter than one step is pooled with the spot's next ones (in the
    /// same span, back to back) until together they would move the spot
    /// further than the spacing: one point then carries their summed light
    /// at the middle of their time, as a step of a longer run would. So a
    /// spot whose colour changes every frame (a painting, a fast chase)
    /// makes a point per spacing, not a point per frame.
    #[allow(clippy::too_many_arguments)]
    fn segment(
        &self,
        spot: &SpotInfo,
        state: &mut SpotState,
        a: f64,
        b: f64,
        level: [f64; 3],
        sink: &mut dyn FnMut(&Segment) -> Result<(), PreviewError>,
    ) -> Result<(), PreviewError> {
        if level == [0.0; 3] {
            return Ok(());
        }
        let tempo = &self.show.tempo;
        let mid = 0.5 * (a + b);
        let span = self.motion.span_at_beat(tempo.beat_at_time(mid));
        let vmax = match span {
            Some(i) => match state.speed {
                Some((j, v)) if j == i => v,
                _ => {
                    let sp = &self.motion.spans[i];
                    let v = speed_bound(&sp.point_curve(spot.along_m), sp, tempo);
                    state.speed = Some((i, v));
                    v
                }
            },
            None => 0.0,
        };
        let prop = self.motion.prop;
        let pool_m = POOL_SPACINGS * self.spacing_m;
        let short = (b - a) * vmax <= pool_m;
        if short {
            let energy = level.map(|l| l * (b - a));
            match state.pool.as_mut() {
                Some(pool) if pool.b == a && pool.span == span && (b - pool.a) * vmax <= pool_m => {
                    pool.b = b;
                    for (e, add) in pool.energy.iter_mut().zip(energy) {
                        *e += add;
                    }
                    return Ok(());
                }
                _ => {}
            }
            if let Some(pool) = state.pool.replace(Pool { span, a, b, energy }) {
                sink(&pool.segment(prop, spot.along_m))?;
            }
            return Ok(());
        }
        if let Some(pool) = state.pool.take() {
            sink(&pool.segment(prop, spot.along_m))?;
        }
        let steps = ((b - a) * vmax / self.spacing_m).ceil().max(1.0);
        sink(&Segment {
            prop,
            along_m: spot.along_m,
            a,
            b,
            // Saturates for absurd counts, which the budget then refuses.
            steps: steps as u64,
            level,
        })
    }
}

/// Where the LEDs `along_m` from the grip of `motion`'s prop are at `t`
/// seconds, stage coordinates.
fn position(show: &Show, motion: &PropMotion, along_m: f64, t: f64) -> Vec3 {
    let beat = show.tempo.beat_at_time(t);
    match motion.span_at_beat(beat) {
        Some(i) => {
            let span = &motion.spans[i];
            let s = beat - span.start_beat;
            let h = span.hand.point(span.phase(s));
            let d = span.direction(s);
            span.to_stage([h[0] + along_m * d[0], h[1] + along_m * d[1]])
        }
        None => motion.rest_point(along_m),
    }
}

/// The number of points of light of the exposure [t0, t1) with the
/// spacings `spacing_m(p)` (see [`for_each_chunk`]), without making them;
/// an error as soon as it passes `limit`.
pub fn count(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: &dyn Fn(usize) -> f64,
    limit: u64,
) -> Result<u64, PreviewError> {
    let mut total: u64 = 0;
    walk(
        show,
        motions,
        lights,
        t0,
        t1,
        spacing_m,
        Runs::Bytes,
        &mut |s| {
            total = total.saturating_add(s.steps);
            if total > limit {
                return Err(too_many());
            }
            Ok(())
        },
    )?;
    Ok(total)
}

/// A point before its position is known.
#[derive(Clone, Copy)]
struct Step {
    prop: usize,
    along_m: f64,
    t: f64,
    energy: [f64; 3],
}

/// Every point of light of every prop in the exposure [t0, t1) seconds,
/// handed to `f` in chunks of at most `chunk` points, in the module's fixed
/// order. `spacing_m(p)` is the largest distance an LED of prop `p` may
/// move within one point's time, metres. Stops with an error when more than
/// `limit` points would be made (before making them) or when `f` fails.
/// Returns the number of points made.
#[allow(clippy::too_many_arguments)]
pub fn for_each_chunk(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: &dyn Fn(usize) -> f64,
    chunk: usize,
    limit: u64,
    f: &mut dyn FnMut(&[Piece]) -> Result<(), PreviewError>,
) -> Result<u64, PreviewError> {
    for_each_chunk_of(
        show,
        motions,
        lights,
        (t0, t1),
        spacing_m,
        Runs::Bytes,
        (chunk, limit),
        f,
    )
}

/// [`for_each_chunk`] with the runs ended by `runs`: [`Runs::Lit`] makes
/// the points of where the light goes, not of its colours, with far fewer
/// runs where the colours change every frame (a painting).
#[allow(clippy::too_many_arguments)]
pub fn for_each_chunk_of(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    (t0, t1): (f64, f64),
    spacing_m: &dyn Fn(usize) -> f64,
    runs: Runs,
    (chunk, limit): (usize, u64),
    f: &mut dyn FnMut(&[Piece]) -> Result<(), PreviewError>,
) -> Result<u64, PreviewError> {
    let chunk = chunk.max(1);
    let mut steps: Vec<Step> = Vec::with_capacity(chunk);
    let mut pieces: Vec<Piece> = Vec::with_capacity(chunk);
    let mut total: u64 = 0;
    let mut flush = |steps: &mut Vec<Step>| -> Result<(), PreviewError> {
        steps
            .par_iter()
            .map(|s| Piece {
                prop: s.prop,
                along_m: s.along_m,
                pos: position(show, &motions[s.prop], s.along_m, s.t),
                energy: s.energy,
            })
            .collect_into_vec(&mut pieces);
        steps.clear();
        f(&pieces)
    };
    walk(show, motions, lights, t0, t1, spacing_m, runs, &mut |s| {
        total = total.saturating_add(s.steps);
        if total > limit {
            return Err(too_many());
        }
        let dt = (s.b - s.a) / s.steps as f64;
        let energy = s.level.map(|l| l * dt);
        for i in 0..s.steps {
            steps.push(Step {
                prop: s.prop,
                along_m: s.along_m,
                t: s.a + (i as f64 + 0.5) * dt,
                energy,
            });
            if steps.len() == chunk {
                flush(&mut steps)?;
            }
        }
        Ok(())
    })?;
    if !steps.is_empty() {
        flush(&mut steps)?;
    }
    Ok(total)
}

/// Every point of light of the exposure, collected (for small exposures
/// and tests; the renderer streams them with [`for_each_chunk`]).
pub fn pieces(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: &dyn Fn(usize) -> f64,
) -> Result<Vec<Piece>, PreviewError> {
    let n = count(show, motions, lights, t0, t1, spacing_m, MAX_PIECES)?;
    let mut out = Vec::with_capacity(n as usize);
    for_each_chunk(
        show,
        motions,
        lights,
        t0,
        t1,
        spacing_m,
        1 << 15,
        MAX_PIECES,
        &mut |c| {
            out.extend_from_slice(c);
            Ok(())
        },
    )?;
    Ok(out)
}
