//! The light a head gives off while the shutter is open, as short pieces of
//! its path.
//!
//! An LED holds its colour for a whole frame while the head moves on, so
//! the light of a frame is spread along the stretch of path the head covers
//! in it. The emission is cut into pieces of constant colour (frames of the
//! same colour are merged; section boundaries and PWM edges cut them), and
//! each piece is cut again into equal steps of time short enough that the
//! head moves less than a given spacing in one step. Each step becomes a
//! point of light at the head's position at the step's middle instant,
//! carrying colour x time: a slow head gets more steps per metre, so the
//! light per unit length is proportional to the time spent there.

use std::f64::consts::TAU;

use nalgebra::Vector3;

use super::PreviewError;
use crate::cues::Lights;
use crate::model::Show;
use crate::motion::{PropMotion, Span, TempoMap};

/// The most points of light one picture may be made of.
pub const MAX_PIECES: usize = 8_000_000;
/// The most LED frames one exposure may span, per prop.
pub const MAX_FRAMES: u64 = 50_000_000;

/// A point of light: where, and how much of each primary.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Piece {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// Head position at the middle of the piece, stage coordinates, metres.
    pub pos: Vector3<f64>,
    /// Light given off, linear sRGB primaries, in LED-seconds (a head at full
    /// power in one primary for one second gives 1 per LED).
    pub energy: [f64; 3],
}

/// Upper bound of the head's speed in a span, m/s (sum of the rotating
/// terms' speeds at the fastest tempo of the span).
pub fn speed_bound(span: &Span, tempo: &TempoMap) -> f64 {
    let per_rev: f64 = span
        .head
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

/// One stretch of time in which a prop's LEDs emit a constant amount.
struct Run {
    a: f64,
    b: f64,
    bytes: [u8; 3],
}

/// The runs of constant LED bytes of prop `p` in [t0, t1), dark ones left out.
fn runs(
    show: &Show,
    lights: &Lights,
    p: usize,
    t0: f64,
    t1: f64,
) -> Result<Vec<Run>, PreviewError> {
    let rate = f64::from(show.frame_rate_hz);
    let k0 = (t0 * rate).floor().max(0.0) as u64;
    let k1 = (t1 * rate).ceil().max(0.0) as u64;
    if k1.saturating_sub(k0) > MAX_FRAMES {
        return Err(PreviewError::TooLarge(format!(
            "the exposure spans {} frames of prop `{}`; at most {MAX_FRAMES} are rendered",
            k1 - k0,
            show.props[p].name
        )));
    }
    let Some(pl) = lights.props.get(p) else {
        return Ok(Vec::new());
    };
    let mut out: Vec<Run> = Vec::new();
    let mut frame = vec![[0u8; 3]; pl.leds as usize];
    for k in k0..k1 {
        let a = (k as f64 / rate).max(t0);
        let b = ((k + 1) as f64 / rate).min(t1);
        if b <= a {
            continue;
        }
        pl.fill_frame(show, k, &mut frame);
        let bytes = frame[0];
        match out.last_mut() {
            Some(last) if last.bytes == bytes && last.b == a => last.b = b,
            _ => out.push(Run { a, b, bytes }),
        }
    }
    out.retain(|r| r.bytes != [0, 0, 0]);
    Ok(out)
}

/// Every point of light of every prop in the exposure [t0, t1) seconds, in
/// prop order then time order. `spacing_m(p)` is the largest distance the
/// head of prop `p` may move within one point's time, metres.
pub fn pieces(
    show: &Show,
    motions: &[PropMotion],
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: &dyn Fn(usize) -> f64,
) -> Result<Vec<Piece>, PreviewError> {
    let mut out = Vec::new();
    for (p, motion) in motions.iter().enumerate() {
        prop_pieces(show, motion, lights, t0, t1, spacing_m(p), &mut out)?;
    }
    Ok(out)
}

fn too_many() -> PreviewError {
    PreviewError::TooLarge(format!(
        "the picture would need more than {MAX_PIECES} points of light; \
         shorten the exposure, lower --size or raise the props' glow_sigma_mm"
    ))
}

fn prop_pieces(
    show: &Show,
    motion: &PropMotion,
    lights: &Lights,
    t0: f64,
    t1: f64,
    spacing_m: f64,
    out: &mut Vec<Piece>,
) -> Result<(), PreviewError> {
    let p = motion.prop;
    let prop = &show.props[p];
    let leds = f64::from(prop.leds);
    let bounds: Vec<f64> = motion
        .spans
        .iter()
        .flat_map(|s| [s.start_s, s.end_s])
        .collect();
    let speeds: Vec<f64> = motion
        .spans
        .iter()
        .map(|s| speed_bound(s, &show.tempo))
        .collect();
    let mut cuts: Vec<f64> = Vec::new();
    for run in runs(show, lights, p, t0, t1)? {
        // Cut at section boundaries (the head's path restarts there) and at
        // the LED driver's PWM edges.
        cuts.clear();
        cuts.push(run.a);
        cuts.extend(bounds.iter().copied().filter(|&t| t > run.a && t < run.b));
        let duty = run.bytes.map(|b| f64::from(b) / 255.0);
        let pwm = prop.pwm_hz > 0.0 && duty.iter().any(|&d| d > 0.0 && d < 1.0);
        if pwm {
            let period = 1.0 / prop.pwm_hz;
            let n0 = (run.a / period).floor();
            let n1 = (run.b / period).ceil();
            if (n1 - n0) * 4.0 + out.len() as f64 > MAX_PIECES as f64 {
                return Err(too_many());
            }
            let mut n = n0;
            while n <= n1 {
                let start = n * period;
                cuts.push(start);
                for d in duty {
                    if d > 0.0 && d < 1.0 {
                        cuts.push(start + d * period);
                    }
                }
                n += 1.0;
            }
            cuts.retain(|&t| t >= run.a && t < run.b);
        }
        cuts.push(run.b);
        cuts.sort_by(f64::total_cmp);
        cuts.dedup();
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            if b <= a {
                continue;
            }
            let mid = 0.5 * (a + b);
            let level = if pwm {
                let period = 1.0 / prop.pwm_hz;
                let phase = mid / period - (mid / period).floor();
                duty.map(|d| if phase < d { leds } else { 0.0 })
            } else {
                duty.map(|d| d * leds)
            };
            if level == [0.0; 3] {
                continue;
            }
            let span = motion.span_at_beat(show.tempo.beat_at_time(mid));
            let vmax = span.map_or(0.0, |i| speeds[i]);
            let steps = if vmax > 0.0 {
                ((b - a) * vmax / spacing_m).ceil().max(1.0)
            } else {
                1.0
            };
            if steps + out.len() as f64 > MAX_PIECES as f64 {
                return Err(too_many());
            }
            let n = steps as u64;
            let dt = (b - a) / steps;
            for i in 0..n {
                let t = a + (i as f64 + 0.5) * dt;
                let pos = motion.state_at(&show.tempo, t).head_m;
                out.push(Piece {
                    prop: p,
                    pos,
                    energy: level.map(|l| l * dt),
                });
            }
        }
    }
    Ok(())
}
