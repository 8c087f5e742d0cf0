//! Cue placement: colours onto frames, and how far off each change lands.
//!
//! A cue's range starts with its first colour; each event of its kind
//! inside the range (its first instant excluded) moves it to the next
//! colour, cycling. A frame shows the colour that holds at its midpoint, so
//! a change at time t starts on frame `ceil(t * rate - 1/2)` (see
//! [`frame_of`]). Where cues overlap, the later cue in the file wins; where
//! none covers a frame, the prop is dark. Crossfades (`fade_beats`) run in
//! Oklab from the colour shown at the event to the new one.

use palette::{FromColor, LinSrgb, Mix, Oklab, Srgb};
use rayon::prelude::*;

use crate::colour;
use crate::events::Event;
use crate::model::{Along, EventKind, FixedTo, LedSpot, Look, Painting, Show};
use crate::motion::{PropMotion, Span};
use crate::num;
use crate::picture::ToPixel;

/// The frame on which something happening at `t` seconds first shows, at
/// `rate` frames per second: `ceil(t * rate - 1/2)`, the frame whose start
/// is nearest `t` (the earlier one on an exact tie). Products within 1e-9
/// of a half-integer count as that half-integer, so rounding noise in beat
/// times never decides a frame. Times before 0 give frame 0.
pub fn frame_of(t: f64, rate: u32) -> u64 {
    let x = t * f64::from(rate) - 0.5;
    let snapped = if (x - x.round()).abs() < 1e-9 {
        x.round()
    } else {
        x.ceil()
    };
    if snapped <= 0.0 { 0 } else { snapped as u64 }
}

/// One colour change of a cue.
#[derive(Clone, Debug, PartialEq)]
pub struct Change {
    /// The first frame that shows it.
    pub frame: u64,
    /// The instant of the event (or of the cue's start), seconds.
    pub time_s: f64,
    /// The instant as a global beat.
    pub beat: f64,
    /// Index into the cue's colours.
    pub colour: usize,
    /// What was shown just before, at the grip end and the far end of each
    /// strip (the start of a crossfade), Oklab.
    from: [Oklab<f64>; 2],
    /// The colour index of the change before (a chase's crossfade starts
    /// from the bands it showed).
    before: usize,
}

impl Change {
    /// What was shown just before the change (the start of its crossfade),
    /// Oklab, at the grip end and the far end of each strip.
    pub fn from_colours(&self) -> [Oklab<f64>; 2] {
        self.from
    }
}

/// The stepped colours of a cue, ready to put on frames.
#[derive(Clone, Debug)]
struct Palette {
    fade_beats: f64,
    along: Along,
    /// Global beat where the cue starts (a chase's bands start there).
    start_beat: f64,
    colours: Vec<Oklab<f64>>,
    linear: Vec<LinSrgb<f64>>,
}

impl Palette {
    /// The colour after `c` in the cycle.
    fn next(&self, c: usize) -> usize {
        (c + 1) % self.colours.len()
    }

    /// The colours a change to colour `c` settles on, at the grip end and
    /// the far end of each strip.
    fn target(&self, c: usize) -> [Oklab<f64>; 2] {
        match self.along {
            Along::Gradient => [self.colours[c], self.colours[self.next(c)]],
            _ => [self.colours[c]; 2],
        }
    }

    /// The fraction of a crossfade done at `beat`, for a change at `from_beat`.
    fn fade_fraction(&self, from_beat: f64, beat: f64) -> f64 {
        if self.fade_beats > 0.0 {
            ((beat - from_beat) / self.fade_beats).max(0.0)
        } else {
            1.0
        }
    }

    /// The chase band an LED at place `index` of its strip is in at `beat`,
    /// taken round the cycle of colours (0 to the number of colours less 1).
    /// The band number is a whole float, so that bands of any width count
    /// without overflow.
    fn band(&self, index: u32, beat: f64) -> usize {
        match self.along {
            Along::Chase {
                leds_per_beat,
                width_leds,
            } => {
                let x = f64::from(index) - leds_per_beat * (beat - self.start_beat);
                let n = self.colours.len() as f64;
                // In 0..n (NaN, for an infinite band, casts to 0).
                (x / width_leds).floor().rem_euclid(n) as usize
            }
            _ => 0,
        }
    }

    /// Colour index `c` moved on by `band` bands (from [`Palette::band`]),
    /// cycling.
    fn shift(&self, c: usize, band: usize) -> usize {
        (c + band) % self.colours.len()
    }
}

/// What a track shows.
#[derive(Clone, Debug)]
enum Drawn {
    /// Stepped colours.
    Steps(Palette),
    /// A painted picture.
    Image(Painting),
}

/// A cue placed on frames: its frame range and its changes.
#[derive(Clone, Debug)]
pub struct CueTrack {
    /// Index into [`Show::cues`].
    pub cue: usize,
    /// First frame covered.
    pub first_frame: u64,
    /// One past the last frame covered.
    pub end_frame: u64,
    /// The cue's start (colour 0) and every event-driven change, in order.
    pub changes: Vec<Change>,
    look: Drawn,
}

/// Linear light of an Oklab colour, clamped to the LEDs' gamut (0..1).
fn clamped_linear(c: Oklab<f64>) -> LinSrgb<f64> {
    let lin = LinSrgb::from_color(c);
    LinSrgb::new(
        lin.red.clamp(0.0, 1.0),
        lin.green.clamp(0.0, 1.0),
        lin.blue.clamp(0.0, 1.0),
    )
}

impl CueTrack {
    /// The colours at global beat `beat` after change `i`, Oklab, at the
    /// grip end and the far end of each strip.
    fn ends_after(&self, p: &Palette, i: usize, beat: f64) -> [Oklab<f64>; 2] {
        let c = &self.changes[i];
        let to = p.target(c.colour);
        let frac = p.fade_fraction(c.beat, beat);
        if frac >= 1.0 {
            to
        } else {
            [c.from[0].mix(to[0], frac), c.from[1].mix(to[1], frac)]
        }
    }

    /// Index of the change frame `k` shows.
    fn change_at(&self, k: u64) -> usize {
        self.changes
            .partition_point(|c| c.frame <= k)
            .saturating_sub(1)
    }

    /// True while change `i` is still fading in at `beat`.
    fn fading(&self, p: &Palette, i: usize, beat: f64) -> bool {
        let c = &self.changes[i];
        p.fade_beats > 0.0 && beat < c.beat + p.fade_beats
    }

    /// Linear-light colour, for every LED, of frame `k` of a solid cue
    /// (which must be in the track's range), whose midpoint is at global
    /// beat `mid_beat`.
    fn solid(&self, p: &Palette, k: u64, mid_beat: f64) -> LinSrgb<f64> {
        let i = self.change_at(k);
        let c = &self.changes[i];
        if self.fading(p, i, mid_beat) && c.from[0] != p.colours[c.colour] {
            clamped_linear(self.ends_after(p, i, mid_beat)[0])
        } else {
            p.linear[c.colour]
        }
    }
}

/// Where a colour change landed, and how far that is from the event.
#[derive(Clone, Debug, PartialEq)]
pub struct Landing {
    /// Index into [`Show::cues`].
    pub cue: usize,
    /// Index into [`Show::props`].
    pub prop: usize,
    /// The event's instant, seconds.
    pub event_s: f64,
    /// The frame the change starts on.
    pub frame: u64,
    /// Frame start minus event time, milliseconds (signed).
    pub error_ms: f64,
    /// Distance the head travels between the event and the frame start, mm.
    pub error_mm: f64,
    /// Angle the tether turns in that time, degrees.
    pub error_deg: f64,
    /// Head speed at the event, m/s.
    pub speed_m_s: f64,
}

/// The colours of one prop's LEDs, frame by frame.
#[derive(Clone, Debug)]
pub struct PropLights {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// LEDs on the prop.
    pub leds: u32,
    /// Scale on linear values, 0..=1.
    pub brightness: f64,
    /// The prop's cues in file order (later wins).
    pub tracks: Vec<CueTrack>,
    /// Where each LED sits (table order).
    spots: Vec<LedSpot>,
    /// The prop's motion: where each LED is, for paintings.
    motion: PropMotion,
    /// Every frame, once made by [`PropLights::keep`].
    kept: Kept,
}

/// A prop's frames kept in memory: every frame's LED bytes, one frame after
/// the other, set once.
#[derive(Clone, Default)]
struct Kept(std::sync::OnceLock<Vec<[u8; 3]>>);

impl std::fmt::Debug for Kept {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.0.get() {
            Some(v) => write!(f, "Kept({} LED-frames)", v.len()),
            None => f.write_str("Kept(none)"),
        }
    }
}

impl PropLights {
    /// The track that decides frame `k`, if any.
    fn track_at(&self, k: u64) -> Option<&CueTrack> {
        self.tracks
            .iter()
            .rev()
            .find(|t| t.first_frame <= k && k < t.end_frame)
    }

    /// Whether cue `cue` decides frame `k` (it covers it and no later cue on
    /// the prop does).
    pub fn plays(&self, cue: usize, k: u64) -> bool {
        self.track_at(k).is_some_and(|t| t.cue == cue)
    }

    /// The cues whose frames later cues on the prop hide, in file order:
    /// each with the frames hidden, the first hidden stretch (first frame,
    /// one past the last) and the cue that decides its first frame.
    pub fn hidden(&self) -> Vec<Hidden> {
        // From the last cue back, the frames of the later cues as disjoint
        // stretches (start -> end): each cue is hidden where they cover it.
        let mut later: std::collections::BTreeMap<u64, u64> = std::collections::BTreeMap::new();
        let mut out = Vec::new();
        for t in self.tracks.iter().rev() {
            let (a, b) = (t.first_frame, t.end_frame);
            if a >= b {
                continue;
            }
            let mut frames = 0;
            let mut first: Option<(u64, u64)> = None;
            // Stretches that start before b and end after a.
            let start = later.range(..a).next_back().map_or(a, |(&s, _)| s);
            let mut merged = (a, b);
            let touching: Vec<(u64, u64)> = later
                .range(start..b)
                .map(|(&s, &e)| (s, e))
                .filter(|&(_, e)| e >= a)
                .collect();
            for &(s, e) in &touching {
                let (x, y) = (s.max(a), e.min(b));
                if y > x {
                    frames += y - x;
                    if first.is_none_or(|f| x < f.0) {
                        first = Some((x, y));
                    }
                }
                merged = (merged.0.min(s), merged.1.max(e));
                later.remove(&s);
            }
            later.insert(merged.0, merged.1);
            if let Some((x, y)) = first {
                out.push(Hidden {
                    cue: t.cue,
                    by: self.track_at(x).map_or(t.cue, |w| w.cue),
                    frames,
                    of_frames: b - a,
                    first: (x, y),
                });
            }
        }
        out.reverse();
        out
    }

    /// Makes frames `0 .. frames` once (in parallel) and keeps them, so
    /// that [`PropLights::fill_frame`] copies them from then on instead of
    /// computing them again. The frames are the same either way; keep them
    /// only after every adjustment of the prop's colours (its brightness).
    /// A second call does nothing.
    pub fn keep(&self, show: &Show, frames: u64) {
        let leds = self.leds as usize;
        self.kept.0.get_or_init(|| {
            let mut all = vec![[0u8; 3]; frames as usize * leds];
            if leds > 0 {
                all.par_chunks_mut(leds)
                    .with_min_len(64)
                    .enumerate()
                    .for_each(|(k, frame)| self.make_frame(show, k as u64, frame));
            }
            all
        });
    }

    /// Fills `out` (one R, G, B triple per LED, table order) with the LED
    /// bytes of frame `k`: linear light times the prop's brightness.
    pub fn fill_frame(&self, show: &Show, k: u64, out: &mut [[u8; 3]]) {
        if let Some(kept) = self.kept.0.get() {
            let leds = self.leds as usize;
            let at = k as usize * leds;
            if let Some(frame) = kept.get(at..at + leds) {
                out.copy_from_slice(frame);
                return;
            }
        }
        self.make_frame(show, k, out);
    }

    /// Computes frame `k` into `out` (see [`PropLights::fill_frame`]).
    fn make_frame(&self, show: &Show, k: u64, out: &mut [[u8; 3]]) {
        let Some(track) = self.track_at(k) else {
            out.fill([0, 0, 0]);
            return;
        };
        let mid = (k as f64 + 0.5) / f64::from(show.frame_rate_hz);
        let beat = show.tempo.beat_at_time(mid);
        let b = self.brightness;
        match &track.look {
            Drawn::Steps(p) => match p.along {
                Along::Solid => out.fill(colour::led_bytes(track.solid(p, k, beat), b)),
                Along::Gradient => {
                    let i = track.change_at(k);
                    let c = &track.changes[i];
                    let fading = track.fading(p, i, beat);
                    let ends = track.ends_after(p, i, beat);
                    let settled = [p.linear[c.colour], p.linear[p.next(c.colour)]];
                    for (o, spot) in out.iter_mut().zip(&self.spots) {
                        let f = spot.fraction();
                        let lin = match (fading, f) {
                            (false, 0.0) => settled[0],
                            (false, 1.0) => settled[1],
                            _ => clamped_linear(ends[0].mix(ends[1], f)),
                        };
                        *o = colour::led_bytes(lin, b);
                    }
                }
                Along::Chase { .. } => {
                    let i = track.change_at(k);
                    let c = &track.changes[i];
                    let fading = track.fading(p, i, beat);
                    let frac = p.fade_fraction(c.beat, beat);
                    for (o, spot) in out.iter_mut().zip(&self.spots) {
                        let band = p.band(spot.index, beat);
                        let now = p.shift(c.colour, band);
                        let was = p.shift(c.before, band);
                        let lin = if fading && was != now {
                            clamped_linear(p.colours[was].mix(p.colours[now], frac))
                        } else {
                            p.linear[now]
                        };
                        *o = colour::led_bytes(lin, b);
                    }
                }
            },
            Drawn::Image(painting) => self.paint(painting, beat, out),
        }
    }

    /// Each LED's colour from `painting` where it is at global beat `beat`
    /// (dark while the prop rests: it is in no plane).
    fn paint(&self, painting: &Painting, beat: f64, out: &mut [[u8; 3]]) {
        let Some(i) = self.motion.span_at_beat(beat) else {
            out.fill([0, 0, 0]);
            return;
        };
        let span = &self.motion.spans[i];
        let s = beat - span.start_beat;
        let hand = span.hand.point(span.phase(s));
        let dir = span.direction(s);
        let pic = &painting.picture;
        let map = picture_map(painting, span, s);
        for (o, spot) in out.iter_mut().zip(&self.spots) {
            let a = spot.along_m;
            let p = [hand[0] + a * dir[0], hand[1] + a * dir[1]];
            let [x, y] = map.apply(span.unmirrored(p));
            let t = pic.sample(x, y);
            let lin = LinSrgb::new(f64::from(t[0]), f64::from(t[1]), f64::from(t[2]));
            *o = colour::led_bytes(lin, self.brightness);
        }
    }
}

/// A cue that later cues on the same prop hide, in part or whole.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Hidden {
    /// The hidden cue, index in file order.
    pub cue: usize,
    /// The cue that decides the first hidden frame.
    pub by: usize,
    /// Frames of it that do not play.
    pub frames: u64,
    /// Frames it covers.
    pub of_frames: u64,
    /// The first hidden stretch: first frame, one past the last.
    pub first: (u64, u64),
}

/// Every prop's colours, and the landing of every event-driven change.
#[derive(Clone, Debug)]
pub struct Lights {
    /// Per prop, in prop order.
    pub props: Vec<PropLights>,
    /// Every event-driven colour change, by cue then time.
    pub landings: Vec<Landing>,
}

/// Places every cue of `show` on frames, using `events` (from
/// [`crate::events::find_events`]) and the props' motions.
pub fn place(show: &Show, motions: &[PropMotion], events: &[Event]) -> Lights {
    let rate = show.frame_rate_hz;
    let mut props: Vec<PropLights> = show
        .props
        .iter()
        .enumerate()
        .map(|(i, p)| PropLights {
            prop: i,
            leds: p.leds,
            brightness: p.brightness,
            tracks: Vec::new(),
            spots: p.led_spots(),
            motion: motions[i].clone(),
            kept: Kept::default(),
        })
        .collect();
    let mut landings = Vec::new();
    for (ci, cue) in show.cues.iter().enumerate() {
        let start = show.tempo.beat_of_bar(cue.first_bar);
        let end = show.tempo.beat_of_bar(cue.last_bar + 1);
        let t0 = show.tempo.time_at_beat(start);
        let first = Change {
            frame: frame_of(t0, rate),
            time_s: t0,
            beat: start,
            colour: 0,
            from: [Oklab::new(0.0, 0.0, 0.0); 2],
            before: 0,
        };
        let mut track = CueTrack {
            cue: ci,
            first_frame: frame_of(t0, rate),
            end_frame: frame_of(show.tempo.time_at_beat(end), rate),
            changes: vec![first],
            look: match &cue.look {
                Look::Image(p) => Drawn::Image(p.clone()),
                Look::Steps(st) => Drawn::Steps(Palette {
                    fade_beats: st.fade_beats,
                    along: st.along,
                    start_beat: start,
                    colours: st
                        .colours
                        .iter()
                        .map(|c| Oklab::from_color(colour::to_linear(Srgb::new(c[0], c[1], c[2]))))
                        .collect(),
                    linear: st
                        .colours
                        .iter()
                        .map(|c| colour::to_linear(Srgb::new(c[0], c[1], c[2])))
                        .collect(),
                }),
            },
        };
        if let (Drawn::Steps(p), Some(st)) = (&track.look, cue.steps()) {
            let p = p.clone();
            track.changes[0].from = p.target(0);
            let hits = events.iter().filter(|e| {
                e.prop == cue.prop
                    && e.kind == st.at
                    && e.beat > start
                    && e.beat < end
                    && (st.at != EventKind::Angle || e.angle_deg == st.angle_deg)
            });
            for e in hits {
                let last = track.changes.len() - 1;
                let from = track.ends_after(&p, last, e.beat);
                let before = track.changes[last].colour;
                let frame = frame_of(e.time_s, rate);
                track.changes.push(Change {
                    frame,
                    time_s: e.time_s,
                    beat: e.beat,
                    colour: p.next(before),
                    from,
                    before,
                });
                landings.push(landing(show, &motions[cue.prop], ci, e, frame));
            }
        }
        props[cue.prop].tracks.push(track);
    }
    Lights { props, landings }
}

/// The map from plane points (`[right, up]` on the plane's unmirrored
/// clock, metres from the anchor) to pixels of `painting`'s picture, `s`
/// beats into `span`: for a picture fixed to the hand, turned `360 x phase`
/// degrees clockwise about the anchor, the centre of the hand's turn (the
/// other way for a mirrored placement, whose hand turns the other way on
/// the unmirrored clock). The frames and the coverage check both place the
/// LEDs with it.
pub fn picture_map(painting: &Painting, span: &Span, s: f64) -> ToPixel {
    let map = painting.placement.to_pixel(&painting.picture, 0.0);
    match painting.placement.fixed_to {
        FixedTo::Stage => map,
        FixedTo::Hand => {
            let sense = if span.mirror { -1.0 } else { 1.0 };
            map.turned_about_anchor(360.0 * span.phase(s) * sense)
        }
    }
}

/// Frames of every prop computed at a time by [`for_each_block`].
pub const BLOCK_FRAMES: u64 = 1024;

/// The LED bytes of frames `k0 .. k0 + n` of every prop: `out[p]` holds
/// them one frame after the other (`leds` triples each), computed in parallel.
fn fill_block(show: &Show, lights: &Lights, k0: u64, n: usize, out: &mut [Vec<[u8; 3]>]) {
    out.par_iter_mut().zip(&lights.props).for_each(|(buf, pl)| {
        let leds = pl.leds as usize;
        buf.resize(n * leds, [0, 0, 0]);
        buf.par_chunks_mut(leds)
            .with_min_len(16)
            .enumerate()
            .for_each(|(j, frame)| pl.fill_frame(show, k0 + j as u64, frame));
    });
}

/// Computes frames `0 .. frames` of every prop in blocks of
/// [`BLOCK_FRAMES`] and hands each block, in order, to `f(k0, n, blocks)`:
/// `blocks[p]` holds frames `k0 .. k0 + n` of prop `p`, one after the other.
/// The next block is computed while `f` works on the current one. Stops at
/// the first error `f` returns.
pub fn for_each_block<E: Send>(
    show: &Show,
    lights: &Lights,
    frames: u64,
    mut f: impl FnMut(u64, usize, &[Vec<[u8; 3]>]) -> Result<(), E> + Send,
) -> Result<(), E> {
    let props = lights.props.len();
    let count = |k0: u64| BLOCK_FRAMES.min(frames - k0) as usize;
    let mut cur: Vec<Vec<[u8; 3]>> = vec![Vec::new(); props];
    let mut next: Vec<Vec<[u8; 3]>> = vec![Vec::new(); props];
    if frames == 0 {
        return Ok(());
    }
    fill_block(show, lights, 0, count(0), &mut cur);
    let mut k0 = 0;
    while k0 < frames {
        let k1 = k0 + count(k0) as u64;
        let (_, done) = rayon::join(
            || {
                if k1 < frames {
                    fill_block(show, lights, k1, count(k1), &mut next);
                }
            },
            || f(k0, count(k0), &cur),
        );
        done?;
        std::mem::swap(&mut cur, &mut next);
        k0 = k1;
    }
    Ok(())
}

/// How far off a change for event `e` lands when it starts on `frame`.
fn landing(show: &Show, motion: &PropMotion, cue: usize, e: &Event, frame: u64) -> Landing {
    let frame_s = frame as f64 / f64::from(show.frame_rate_hz);
    let (a, b) = if frame_s < e.time_s {
        (frame_s, e.time_s)
    } else {
        (e.time_s, frame_s)
    };
    let travelled = if b > a {
        num::gauss8(a, b, |t| motion.state_at(&show.tempo, t).head_vel.norm())
    } else {
        0.0
    };
    let turned_beats = (show.tempo.beat_at_time(b) - show.tempo.beat_at_time(a)).abs();
    let deg_per_beat = match motion.span_at_beat(e.beat) {
        Some(i) => {
            let span = &motion.spans[i];
            360.0 * (show.patterns[span.pattern].head_turns * span.phase_per_beat()).abs()
        }
        None => 0.0,
    };
    Landing {
        cue,
        prop: e.prop,
        event_s: e.time_s,
        frame,
        error_ms: (frame_s - e.time_s) * 1000.0,
        error_mm: travelled * 1000.0,
        error_deg: turned_beats * deg_per_beat,
        speed_m_s: e.speed_m_s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frame_of_picks_the_nearest_frame_start_and_the_earlier_on_ties() {
        assert_eq!(frame_of(0.0, 100), 0);
        assert_eq!(frame_of(0.0149, 100), 1);
        assert_eq!(frame_of(0.0151, 100), 2);
        // Exact tie at 1.5 frames: the earlier frame.
        assert_eq!(frame_of(0.015, 100), 1);
        // 1.1 s at 500 Hz is 550.0000000000001 in floating point: frame 550.
        assert_eq!(frame_of(1.1, 500), 550);
        assert_eq!(frame_of(-1.0, 500), 0);
    }
}
