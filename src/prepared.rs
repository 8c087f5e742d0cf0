//! The prepared show: a validated show made ready for every command, once.
//!
//! [`Prepared::new`] takes a [`Show`] from the reader and does, exactly once
//! and in this order, everything every command needs: it refuses a show
//! whose frames would be too many to read ([`MAX_LED_FRAMES`]), simulates
//! every prop ([`crate::motion::simulate`]), finds every event
//! ([`crate::events::find_events`]), places every cue on frames
//! ([`crate::cues::place`]) and applies every adjustment of the frame colours
//! (today: the brightness limit of props with `brightness_limit = true`).
//! `compile`, `check`, `preview` and `events` all work on the one value, so a
//! show has one set of frames whichever command reads it; the frames are
//! reached only through [`Prepared::for_each_block`] and
//! [`Prepared::fill_frame`].
//!
//! The show's song (`[show] music`) is heard, decoded and analysed, on first
//! use of [`Prepared::song`] and then kept: `check` and `compile` need it,
//! `events` and `preview` do not, and none hears it twice.

use std::sync::OnceLock;

use crate::cues::{self, Lights};
use crate::events::{Event, find_events};
use crate::model::Show;
use crate::motion::{PropMotion, simulate};
use crate::music::{self, MusicError, Song};
use crate::power;

/// The most LED-frames (frames times LEDs, every prop together) a show may
/// have: about ten seconds of frame work in release, and more than the
/// tables `compile` may write (2 GiB of them, 7.2e8 LED-frames).
pub const MAX_LED_FRAMES: f64 = 1e9;

/// The most bytes of frames [`Prepared::keep_frames`] keeps in memory
/// (three per LED-frame, every prop together): 512 MiB, a four-minute
/// 144-LED staff at 1000 frames/s five times over.
pub const MAX_KEPT_BYTES: u64 = 512 << 20;

/// Why a show could not be prepared.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum PrepareError {
    /// The show has more than [`MAX_LED_FRAMES`] LED-frames.
    #[error(
        "the show has {led_frames:.3e} LED-frames (frames times LEDs, every prop together), more than the limit of {MAX_LED_FRAMES:.0e}; they come from {drivers}: lower `show.frame_rate`, shorten the show or use fewer LEDs"
    )]
    TooManyFrames {
        /// Frames times LEDs, every prop together.
        led_frames: f64,
        /// The keys that set them, with their lines.
        drivers: String,
    },
}

/// A show ready to use: its motion, its events and its frame colours, each
/// made once (see the module documentation).
#[derive(Clone, Debug)]
pub struct Prepared {
    show: Show,
    motions: Vec<PropMotion>,
    events: Vec<Event>,
    lights: Lights,
    /// Per prop, the scale applied to its brightness by `brightness_limit`
    /// (`None` where the prop has no limit).
    brightness_scales: Vec<Option<f64>>,
    /// The song, once heard.
    song: OnceLock<Result<Song, MusicError>>,
}

impl Prepared {
    /// Prepares `show` (see the module documentation).
    pub fn new(show: Show) -> Result<Prepared, PrepareError> {
        let leds: f64 = show.props.iter().map(|p| f64::from(p.leds)).sum();
        let led_frames = show.frame_count() as f64 * leds;
        if led_frames.is_nan() || led_frames > MAX_LED_FRAMES {
            return Err(PrepareError::TooManyFrames {
                led_frames,
                drivers: show.frame_cost_drivers(),
            });
        }
        let motions = simulate(&show);
        let events = find_events(&show, &motions);
        let mut lights = cues::place(&show, &motions, &events);
        let brightness_scales = limit_brightness(&show, &mut lights);
        Ok(Prepared {
            show,
            motions,
            events,
            lights,
            brightness_scales,
            song: OnceLock::new(),
        })
    }

    /// The validated show.
    pub fn show(&self) -> &Show {
        &self.show
    }

    /// Every prop's motion, in prop order.
    pub fn motions(&self) -> &[PropMotion] {
        &self.motions
    }

    /// Every event of the show, sorted by time.
    pub fn events(&self) -> &[Event] {
        &self.events
    }

    /// Every prop's colours on frames (already dimmed where limited), and
    /// the landing of every event-driven colour change.
    pub fn lights(&self) -> &Lights {
        &self.lights
    }

    /// The scale `brightness_limit` applied to prop `prop`'s brightness
    /// (1 when it needed none), or `None` for a prop without the limit.
    pub fn brightness_scale(&self, prop: usize) -> Option<f64> {
        self.brightness_scales.get(prop).copied().flatten()
    }

    /// The show's song, heard on the first call (decoded, its beat grid
    /// found, its file's CRC-32 taken) and kept for later calls; `None` for
    /// a show without `music`. Safe to call from several threads: the song
    /// is heard once.
    pub fn song(&self) -> Option<Result<&Song, &MusicError>> {
        let m = self.show.music.as_ref()?;
        let heard = self
            .song
            .get_or_init(|| music::hear(&m.path, &music::Options::default()));
        Some(heard.as_ref())
    }

    /// Frames in every table of the show.
    pub fn frame_count(&self) -> u64 {
        self.show.frame_count()
    }

    /// Prop `prop`'s LED bytes on frame `k` (red, green, blue; wire order is
    /// the output's business) into `out`, one entry per LED.
    pub fn fill_frame(&self, prop: usize, k: u64, out: &mut [[u8; 3]]) {
        self.lights.props[prop].fill_frame(&self.show, k, out);
    }

    /// Makes every frame of every prop once and keeps it in memory, when
    /// they take at most [`MAX_KEPT_BYTES`]: from then on
    /// [`Prepared::fill_frame`] and [`Prepared::for_each_block`] copy the
    /// kept frames instead of computing them again (the frames are the
    /// same either way). `compile` keeps them for its previews, which read
    /// every frame again after the tables. Returns whether they are kept.
    pub fn keep_frames(&self) -> bool {
        let frames = self.frame_count();
        let bytes: u64 = self
            .lights
            .props
            .iter()
            .map(|pl| frames.saturating_mul(3 * u64::from(pl.leds)))
            .fold(0, u64::saturating_add);
        if bytes > MAX_KEPT_BYTES {
            return false;
        }
        for pl in &self.lights.props {
            pl.keep(&self.show, frames);
        }
        true
    }

    /// Hands every frame of every prop, in order and in blocks, to
    /// `f(k0, n, blocks)`: `blocks[p]` holds frames `k0 .. k0 + n` of prop
    /// `p`, one after the other. The next block is made while `f` works on
    /// the current one; stops at the first error `f` returns.
    pub fn for_each_block<E: Send>(
        &self,
        f: impl FnMut(u64, usize, &[Vec<[u8; 3]>]) -> Result<(), E> + Send,
    ) -> Result<(), E> {
        cues::for_each_block(&self.show, &self.lights, self.frame_count(), f)
    }
}

/// Dims every prop with `brightness_limit = true` and a `max_current_a` so
/// that its peak current stays within the limit (one pass over the frames,
/// made only when such a prop exists); returns the scale applied per prop.
fn limit_brightness(show: &Show, lights: &mut Lights) -> Vec<Option<f64>> {
    let limited = |p: &crate::model::Prop| p.brightness_limit && p.max_current_a.is_some();
    let mut scales: Vec<Option<f64>> = show
        .props
        .iter()
        .map(|p| limited(p).then_some(1.0))
        .collect();
    if !show.props.iter().any(limited) {
        return scales;
    }
    // The brightest frame of each prop: the largest sum of its bytes.
    let mut peak_sum = vec![0u64; show.props.len()];
    let result: Result<(), std::convert::Infallible> =
        cues::for_each_block(show, lights, show.frame_count(), |_, n, blocks| {
            for ((peak, block), pl) in peak_sum.iter_mut().zip(blocks).zip(&lights.props) {
                let leds = pl.leds as usize;
                if leds == 0 {
                    continue;
                }
                for frame in block[..n * leds].chunks(leds) {
                    let sum: u64 = frame
                        .iter()
                        .map(|px| u64::from(px[0]) + u64::from(px[1]) + u64::from(px[2]))
                        .sum();
                    *peak = (*peak).max(sum);
                }
            }
            Ok(())
        });
    let Ok(()) = result;
    for ((prop, pl), (scale, &sum)) in show
        .props
        .iter()
        .zip(lights.props.iter_mut())
        .zip(scales.iter_mut().zip(&peak_sum))
    {
        let (Some(s), Some(max)) = (
            scale.as_mut(),
            prop.max_current_a.filter(|_| prop.brightness_limit),
        ) else {
            continue;
        };
        let (channel, idle) = (prop.channel_current_a, prop.idle_current_a);
        let peak_a = if show.frame_count() == 0 {
            idle
        } else {
            power::current_of_sum(sum, channel, idle)
        };
        *s = power::brightness_scale(peak_a, max, prop.leds, channel, idle);
        if *s < 1.0 {
            pl.brightness *= *s;
        }
    }
    scales
}
