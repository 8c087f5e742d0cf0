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

use crate::colour;
use crate::events::Event;
use crate::model::{EventKind, Show};
use crate::motion::PropMotion;
use crate::num;

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
    /// The colour shown just before (the start of a crossfade), Oklab.
    from: Oklab<f64>,
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
    fade_beats: f64,
    colours: Vec<Oklab<f64>>,
    linear: Vec<LinSrgb<f64>>,
}

impl CueTrack {
    /// The colour at global beat `beat` after change `i`, in Oklab.
    fn oklab_after(&self, i: usize, beat: f64) -> Oklab<f64> {
        let c = &self.changes[i];
        let to = self.colours[c.colour];
        let frac = if self.fade_beats > 0.0 {
            (beat - c.beat) / self.fade_beats
        } else {
            1.0
        };
        if frac >= 1.0 {
            to
        } else {
            c.from.mix(to, frac.max(0.0))
        }
    }

    /// Linear-light colour of frame `k` (which must be in the track's range),
    /// whose midpoint is at global beat `mid_beat`.
    pub fn colour_at(&self, k: u64, mid_beat: f64) -> LinSrgb<f64> {
        let i = self
            .changes
            .partition_point(|c| c.frame <= k)
            .saturating_sub(1);
        let c = &self.changes[i];
        let faded = self.fade_beats > 0.0
            && mid_beat < c.beat + self.fade_beats
            && c.from != self.colours[c.colour];
        if faded {
            let lin = LinSrgb::from_color(self.oklab_after(i, mid_beat));
            LinSrgb::new(
                lin.red.clamp(0.0, 1.0),
                lin.green.clamp(0.0, 1.0),
                lin.blue.clamp(0.0, 1.0),
            )
        } else {
            self.linear[c.colour]
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

/// The colours of one prop, frame by frame.
#[derive(Clone, Debug)]
pub struct PropLights {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// LEDs on the prop (all show the cue's colour).
    pub leds: u32,
    /// Scale on linear values, 0..=1.
    pub brightness: f64,
    /// The prop's cues in file order (later wins).
    pub tracks: Vec<CueTrack>,
}

impl PropLights {
    /// Linear-light colour of frame `k`, or `None` where no cue covers it.
    pub fn colour(&self, show: &Show, k: u64) -> Option<LinSrgb<f64>> {
        let track = self
            .tracks
            .iter()
            .rev()
            .find(|t| t.first_frame <= k && k < t.end_frame)?;
        let mid = (k as f64 + 0.5) / f64::from(show.frame_rate_hz);
        Some(track.colour_at(k, show.tempo.beat_at_time(mid)))
    }

    /// The LED bytes (linear light x brightness) of frame `k`, one RGB
    /// triple for the whole head.
    pub fn bytes(&self, show: &Show, k: u64) -> [u8; 3] {
        match self.colour(show, k) {
            Some(c) => colour::led_bytes(c, self.brightness),
            None => [0, 0, 0],
        }
    }

    /// Fills `out` (one triple per LED) with the bytes of frame `k`.
    pub fn fill_frame(&self, show: &Show, k: u64, out: &mut [[u8; 3]]) {
        out.fill(self.bytes(show, k));
    }
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
        })
        .collect();
    let mut landings = Vec::new();
    for (ci, cue) in show.cues.iter().enumerate() {
        let start = show.tempo.beat_of_bar(cue.first_bar);
        let end = show.tempo.beat_of_bar(cue.last_bar + 1);
        let colours: Vec<Oklab<f64>> = cue
            .colours
            .iter()
            .map(|c| Oklab::from_color(colour::to_linear(Srgb::new(c[0], c[1], c[2]))))
            .collect();
        let linear: Vec<LinSrgb<f64>> = cue
            .colours
            .iter()
            .map(|c| colour::to_linear(Srgb::new(c[0], c[1], c[2])))
            .collect();
        let t0 = show.tempo.time_at_beat(start);
        let mut track = CueTrack {
            cue: ci,
            first_frame: frame_of(t0, rate),
            end_frame: frame_of(show.tempo.time_at_beat(end), rate),
            changes: vec![Change {
                frame: frame_of(t0, rate),
                time_s: t0,
                beat: start,
                colour: 0,
                from: colours[0],
            }],
            fade_beats: cue.fade_beats,
            colours,
            linear,
        };
        let hits = events.iter().filter(|e| {
            e.prop == cue.prop
                && e.kind == cue.at
                && e.beat > start
                && e.beat < end
                && (cue.at != EventKind::Angle || e.angle_deg == cue.angle_deg)
        });
        for e in hits {
            let last = track.changes.len() - 1;
            let from = track.oklab_after(last, e.beat);
            let next = (track.changes[last].colour + 1) % cue.colours.len();
            let frame = frame_of(e.time_s, rate);
            track.changes.push(Change {
                frame,
                time_s: e.time_s,
                beat: e.beat,
                colour: next,
                from,
            });
            landings.push(landing(show, &motions[cue.prop], ci, e, frame));
        }
        props[cue.prop].tracks.push(track);
    }
    Lights { props, landings }
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
