//! The validated, typed show: every later stage works on [`Show`] only.
//!
//! Units are in the names: metres (`_m`), seconds (`_s`), degrees (`_deg`),
//! beats, bars (numbered from 1), hertz (`_hz`). Names are resolved to
//! indices, ranges are checked, defaults are filled in.

use std::sync::Arc;

use crate::geom::Vec3;

use crate::diag::Source;
mod cost;
mod names;
mod tempo;
mod wire;

pub use crate::picture::{FixedTo, Picture, PicturePlacement};
pub use names::c_identifier;
pub use tempo::TempoMap;
pub use wire::WireOrder;

/// A whole show, ready to simulate.
#[derive(Clone, Debug)]
pub struct Show {
    /// Free-text title.
    pub title: String,
    /// LED frames per second in the props.
    pub frame_rate_hz: u32,
    /// Beats and bars against seconds.
    pub tempo: TempoMap,
    /// The show's song (`[show] music`), if it has one: its time 0 is the
    /// tables' time 0.
    pub music: Option<Music>,
    /// The props, in file order.
    pub props: Vec<Prop>,
    /// The named spin patterns, in file order.
    pub patterns: Vec<Pattern>,
    /// The sections, sorted by bar, never overlapping.
    pub sections: Vec<Section>,
    /// The colour cues, in file order (later ones win where they overlap).
    pub cues: Vec<Cue>,
    /// Warnings the show's author expects (`[[expected]]`), in file order.
    pub expected: Vec<Expected>,
    /// Bars whose first frame the binary forms mark, so that a player can
    /// re-align to an outside cue there (`resync_bars`), increasing.
    pub resync_bars: Vec<u32>,
    /// The show file, for diagnostics that point into it.
    pub source: Arc<Source>,
    /// The reader's warnings (old key values still read, and the like):
    /// the show is used, and every command prints them.
    pub notes: Vec<crate::diag::Diagnostic>,
}

/// The song a show is set to: a file beside the show, whose header the
/// reader has checked (the song is decoded and analysed later, by
/// [`crate::prepared::Prepared::song`], only by the commands that need it).
#[derive(Clone, Debug, PartialEq)]
pub struct Music {
    /// The file as the show names it.
    pub file: String,
    /// The file's path: `file` read from the show file's folder.
    pub path: std::path::PathBuf,
    /// Where the `music` key is written in the show file, bytes (to locate
    /// warnings).
    pub offset: usize,
}

/// What kind of prop it is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PropKind {
    /// A head on a flexible tether, held at the handle.
    Poi,
    /// A rigid rod held at a grip, turning as a whole: its head end traces
    /// the pattern's head path and its tail end the point opposite.
    Staff,
}

impl PropKind {
    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            PropKind::Poi => "poi",
            PropKind::Staff => "staff",
        }
    }
}

/// Which half of a prop, from the grip: toward the head end (the poi's
/// head, the staff end that traces the pattern) or toward the tail end
/// (a staff's other end).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum End {
    /// From the grip toward the head end.
    Head,
    /// From the grip toward the tail end (staffs only).
    Tail,
}

impl End {
    /// +1 for the head half, -1 for the tail half: the sign of distances
    /// along the prop's direction (grip to head end).
    pub fn sign(self) -> f64 {
        match self {
            End::Head => 1.0,
            End::Tail => -1.0,
        }
    }
}

/// LEDs evenly spaced along one half of a prop, numbered from the grip out.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strip {
    /// The half it runs along.
    pub end: End,
    /// Number of LEDs, at least 1.
    pub leds: u32,
    /// Distance of the LED nearest the grip from the grip, metres.
    pub from_m: f64,
    /// Distance of the LED furthest from the grip, metres (`>= from_m`).
    pub to_m: f64,
}

impl Strip {
    /// The distance between neighbouring LEDs, metres (`None` for a strip of
    /// one LED).
    pub fn pitch_m(&self) -> Option<f64> {
        (self.leds > 1).then(|| (self.to_m - self.from_m) / f64::from(self.leds - 1))
    }
}

/// Where one LED sits on its prop, and its place in its strip.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LedSpot {
    /// Signed distance from the grip along the prop's direction (grip to
    /// head end), metres: positive on the head half, negative on the tail half.
    pub along_m: f64,
    /// Index of its strip in [`Prop::strips`].
    pub strip: usize,
    /// Its place in the strip, 0 nearest the grip.
    pub index: u32,
    /// LEDs in the strip.
    pub count: u32,
}

impl LedSpot {
    /// Its place in the strip as a fraction: 0 for the LED nearest the grip,
    /// 1 for the furthest (0 in a strip of one).
    pub fn fraction(&self) -> f64 {
        if self.count > 1 {
            f64::from(self.index) / f64::from(self.count - 1)
        } else {
            0.0
        }
    }
}

/// One prop: a head on a tether (poi) or a rod (staff), turned by a hand.
#[derive(Clone, Debug)]
pub struct Prop {
    /// Its name, the key of its `[prop.NAME]` table.
    pub name: String,
    /// Where its table starts in the show file, bytes (to locate warnings).
    pub offset: usize,
    /// Poi or staff.
    pub kind: PropKind,
    /// Grip (handle) to the head end's centre, metres: the poi's tether, or
    /// the staff's head half.
    pub tether_m: f64,
    /// Grip to the tail end, metres: the staff's other half (0 for a poi).
    pub tail_m: f64,
    /// Centre of the hand's path, stage coordinates, metres.
    pub anchor_m: Vec3,
    /// Number of LEDs on the prop, all strips together.
    pub leds: u32,
    /// The LEDs, strip by strip in table order (never empty). A poi without
    /// a strip has one strip of its `leds` at the head; a staff without one
    /// has `leds` at each end.
    pub strips: Vec<Strip>,
    /// Mass of the head (for a staff, of each end), kilograms (physics checks).
    pub head_mass_kg: f64,
    /// Radius of the head, metres (collision checks; default 0.05).
    pub head_radius_m: f64,
    /// Scale applied to linear LED values, 0..=1.
    pub brightness: f64,
    /// Byte order of each LED's channels in the binary tables and C header.
    pub wire_order: WireOrder,
    // Long-exposure previews (`preview`):
    /// Standard deviation of each LED's glow (diffuser and lens blur),
    /// millimetres, as given; `None`: the preview picks one
    /// (`preview::glow_sigma_m`: 12 mm for a head, from the LED pitch for a strip).
    pub glow_sigma_mm: Option<f64>,
    /// PWM frequency of the LED driver, hertz; 0 for a constant-current driver.
    pub pwm_hz: f64,
    // LED current and battery (`check`):
    /// Current of one LED channel at full brightness (byte 255), amperes.
    pub channel_current_a: f64,
    /// Current the prop draws with every LED dark (controller, radio), amperes.
    pub idle_current_a: f64,
    /// Battery capacity, milliampere-hours, if given.
    pub battery_mah: Option<f64>,
    /// Most current the prop's supply should deliver, amperes, if given.
    pub max_current_a: Option<f64>,
    /// Report the brightness scale that keeps the peak current under `max_current_a`.
    pub brightness_limit: bool,
    // What the prop's hardware can play (`check`, hardware figures):
    /// The LED driver family and its line rate.
    pub led_driver: LedDriver,
    /// LEDs on one data line (the longest line, if there are several).
    pub leds_per_line: u32,
    /// Memory free for frame tables, kilobytes (1 kB = 1024 bytes); `None`: not checked.
    pub table_memory_kb: Option<f64>,
    /// Tolerance of the prop's clock, parts per million.
    pub clock_ppm: f64,
}

impl Prop {
    /// Every LED's place, in table order (LED 0 first).
    pub fn led_spots(&self) -> Vec<LedSpot> {
        let mut out = Vec::with_capacity(self.leds as usize);
        for (si, s) in self.strips.iter().enumerate() {
            for i in 0..s.leds {
                let f = if s.leds > 1 {
                    f64::from(i) / f64::from(s.leds - 1)
                } else {
                    0.5
                };
                let d = if s.leds > 1 {
                    s.from_m + (s.to_m - s.from_m) * f
                } else {
                    0.5 * (s.from_m + s.to_m)
                };
                out.push(LedSpot {
                    along_m: s.end.sign() * d,
                    strip: si,
                    index: i,
                    count: s.leds,
                });
            }
        }
        out
    }

    /// The signed distances of the prop's ends from the grip along its
    /// direction, metres: the head end first, then a staff's tail end.
    pub fn ends_m(&self) -> Vec<f64> {
        match self.kind {
            PropKind::Poi => vec![self.tether_m],
            PropKind::Staff => vec![self.tether_m, -self.tail_m],
        }
    }
}

/// The family of LED driver on a prop's data line.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LedDriver {
    /// A data line alone (the bits timed by pulse width) at 800 kbit/s,
    /// 1.25 us per bit, then a latch gap (`data_only` in a show).
    DataOnly,
    /// A data line beside a clock line, at `clock_hz` bits per second
    /// (`data_clock` in a show).
    DataClock {
        /// The data clock, hertz.
        clock_hz: f64,
    },
}

/// A plane of motion: the two unit vectors of its clock.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Plane {
    /// Facing the audience: up = +y, right = +x.
    Wall,
    /// Side-on: up = +y, right = +z (forward, toward the audience).
    Wheel,
    /// Horizontal: up = -z (upstage), right = +x.
    Floor,
}

impl Plane {
    /// Unit vector of clock angle 0 (12 o'clock), stage coordinates.
    pub fn up(self) -> Vec3 {
        match self {
            Plane::Wall | Plane::Wheel => Vec3::new(0.0, 1.0, 0.0),
            Plane::Floor => Vec3::new(0.0, 0.0, -1.0),
        }
    }

    /// Unit vector of clock angle 90 (3 o'clock), stage coordinates.
    pub fn right(self) -> Vec3 {
        match self {
            Plane::Wall | Plane::Floor => Vec3::new(1.0, 0.0, 0.0),
            Plane::Wheel => Vec3::new(0.0, 0.0, 1.0),
        }
    }

    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            Plane::Wall => "wall",
            Plane::Wheel => "wheel",
            Plane::Floor => "floor",
        }
    }
}

/// One circular term of a hand path: a point turning on a circle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Term {
    /// Radius of the circle, metres.
    pub radius_m: f64,
    /// Turns per pattern cycle (signed; positive is clockwise on the clock).
    pub turns: f64,
    /// Clock angle at the start of the cycle, degrees.
    pub start_deg: f64,
}

/// A named spin pattern: a hand path plus the tether's turning.
#[derive(Clone, Debug)]
pub struct Pattern {
    /// Its name, the key of its `[pattern.NAME]` table.
    pub name: String,
    /// The plane it is spun in.
    pub plane: Plane,
    /// Beats per hand revolution (one pattern cycle).
    pub beats: f64,
    /// The hand path, a sum of circular terms (one term for a plain circle).
    pub hand: Vec<Term>,
    /// Tether turns per pattern cycle: negative antispin, positive inspin.
    pub head_turns: f64,
    /// Clock angle of the tether (hand to head) at the start, degrees.
    pub head_start_deg: f64,
    /// Runs the whole pattern backwards.
    pub reverse: bool,
    /// The trade figure it was written as (`figure = ...`), if any.
    pub figure: Option<Figure>,
    /// A stall (`stall = true` on an antispin): the hand circle's radius is
    /// `tether_m * |head_turns|` of the prop that plays it, so `hand` holds
    /// one term whose radius [`Pattern::hand_for`] fills in.
    pub stall: bool,
}

/// The trade's figures (`figure = ...`), each a rule for `head_turns` and
/// `head_start_deg` (common practice; see docs/conventions.md, "Figures").
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Figure {
    /// The head straight out along the arm: one tether turn per hand turn,
    /// the tether along the hand's radius.
    Extension,
    /// One tether turn per hand turn, the tether pointing back across the
    /// hand's circle (head opposite the hand).
    Isolation,
    /// An inspin flower: `head_turns = petals + 1`.
    Inspin {
        /// Petals, 1 or more.
        petals: u32,
    },
    /// An antispin flower: `head_turns = 1 - petals`.
    Antispin {
        /// Petals, 2 or more.
        petals: u32,
    },
}

impl Figure {
    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            Figure::Extension => "extension",
            Figure::Isolation => "isolation",
            Figure::Inspin { .. } => "inspin",
            Figure::Antispin { .. } => "antispin",
        }
    }

    /// Tether turns per hand revolution (common practice: an inspin flower of
    /// N petals turns the tether N + 1 times per hand revolution, an antispin
    /// flower 1 - N times; a petal is one tip of the head's distance).
    pub fn head_turns(self) -> f64 {
        match self {
            Figure::Extension | Figure::Isolation => 1.0,
            Figure::Inspin { petals } => f64::from(petals) + 1.0,
            Figure::Antispin { petals } => 1.0 - f64::from(petals),
        }
    }

    /// The tether's start angle relative to the hand's (degrees): 0 (head out
    /// along the arm, at a tip) except for an isolation, 180.
    pub fn head_offset_deg(self) -> f64 {
        match self {
            Figure::Isolation => 180.0,
            _ => 0.0,
        }
    }

    /// Petals of the head's path (tips per hand revolution): 0 for an
    /// extension or isolation, whose distance from the anchor never changes.
    pub fn petals(self) -> u32 {
        match self {
            Figure::Extension | Figure::Isolation => 0,
            Figure::Inspin { petals } | Figure::Antispin { petals } => petals,
        }
    }
}

impl Pattern {
    /// The hand path when `prop` plays it: `hand`, with a stall's radius
    /// filled in as `tether_m * |head_turns|` (the hand's and the tether's
    /// speeds cancel at the tips: the head stops there, common practice).
    pub fn hand_for(&self, prop: &Prop) -> Vec<Term> {
        let mut hand = self.hand.clone();
        if self.stall {
            for t in &mut hand {
                t.radius_m = stall_radius_m(prop.tether_m, self.head_turns);
            }
        }
        hand
    }
}

/// The hand radius at which a head on a tether of `tether_m` metres turning
/// `head_turns` times per hand revolution stops at its tips:
/// `tether_m * |head_turns|` (common practice).
pub fn stall_radius_m(tether_m: f64, head_turns: f64) -> f64 {
    tether_m * head_turns.abs()
}

/// A pattern placed on a prop in a section.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Placement {
    /// Index into [`Show::patterns`].
    pub pattern: usize,
    /// Reverses the sense of the plane's clock (`right` -> `-right`).
    pub mirror: bool,
    /// Beats by which the pattern's phase lags the section start.
    pub delay_beats: f64,
}

/// A run of bars in which each prop plays one pattern (or rests).
#[derive(Clone, Debug)]
pub struct Section {
    /// Where its table starts in the show file, bytes (to locate warnings).
    pub offset: usize,
    /// First bar, inclusive, from 1.
    pub first_bar: u32,
    /// Last bar, inclusive.
    pub last_bar: u32,
    /// Per prop (index as in [`Show::props`]): what it plays, if anything.
    pub placements: Vec<Option<Placement>>,
    /// How its props start: restarted or carried on from the section before.
    pub join: Join,
}

/// How a section's props start (`[[section]] join = ...`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Join {
    /// Every pattern starts at its own start angles (`restart`, the default).
    #[default]
    Restart,
    /// Every prop starts where the section before left it (`continue`): the
    /// start angles are solved so that hand and head do not jump
    /// (`motion::join`).
    Continue,
}

impl Join {
    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            Join::Restart => "restart",
            Join::Continue => "continue",
        }
    }
}

/// The kinds of event a cue can be anchored to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum EventKind {
    /// Local maximum of the head's distance from the anchor.
    Tip,
    /// Local minimum of the head's distance from the anchor.
    Inner,
    /// Local minimum of head speed below 10 % of the section's mean speed.
    Stall,
    /// The head's clock angle about the anchor passes a given angle.
    Angle,
    /// The start of every beat.
    Beat,
    /// The start of every bar.
    Bar,
}

impl EventKind {
    /// Every kind, in report order.
    pub const ALL: [EventKind; 6] = [
        EventKind::Tip,
        EventKind::Inner,
        EventKind::Stall,
        EventKind::Angle,
        EventKind::Beat,
        EventKind::Bar,
    ];

    /// The name used in show files and JSON.
    pub fn name(self) -> &'static str {
        match self {
            EventKind::Tip => "tip",
            EventKind::Inner => "inner",
            EventKind::Stall => "stall",
            EventKind::Angle => "angle",
            EventKind::Beat => "beat",
            EventKind::Bar => "bar",
        }
    }

    /// The kind with that name.
    pub fn from_name(name: &str) -> Option<EventKind> {
        EventKind::ALL.into_iter().find(|k| k.name() == name)
    }
}

/// How a cue's colours spread over a prop's LEDs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Along {
    /// Every LED shows the cue's current colour.
    Solid,
    /// Each strip runs from the current colour (at the LED nearest the grip)
    /// to the next colour of the cycle (at its far LED), mixed in Oklab.
    Gradient,
    /// Bands of the colours, `width_leds` LEDs each, in cycle order from the
    /// current colour, moving along each strip.
    Chase {
        /// Speed of the bands, LEDs per beat: positive away from the grip.
        leds_per_beat: f64,
        /// Width of one band, LEDs (more than 0).
        width_leds: f64,
    },
}

/// Colours that step on every event of one kind.
#[derive(Clone, Debug)]
pub struct Steps {
    /// The event kind that moves it to the next colour.
    pub at: EventKind,
    /// With `at = angle`: the clock angle, degrees in [0, 360).
    pub angle_deg: Option<f64>,
    /// The colours, sRGB bytes, cycled in order.
    pub colours: Vec<[u8; 3]>,
    /// Crossfade length in beats (0 is a hard cut).
    pub fade_beats: f64,
    /// How the colours spread over the LEDs.
    pub along: Along,
}

/// A picture painted by a prop's LEDs: each LED, on each frame, shows the
/// picture's colour where it is in the plane.
#[derive(Clone, Debug)]
pub struct Painting {
    /// The file as the show names it.
    pub file: String,
    /// The decoded picture.
    pub picture: Arc<Picture>,
    /// Where it is placed in the plane, and whether it turns with the hand.
    pub placement: PicturePlacement,
}

/// What a cue shows.
#[derive(Clone, Debug)]
pub enum Look {
    /// Colours stepped by events.
    Steps(Steps),
    /// A painted picture.
    Image(Painting),
}

/// A colour cue on one prop over a range of bars.
#[derive(Clone, Debug)]
pub struct Cue {
    /// Where its table starts in the show file, bytes (to locate warnings).
    pub offset: usize,
    /// Index into [`Show::props`].
    pub prop: usize,
    /// First bar, inclusive.
    pub first_bar: u32,
    /// Last bar, inclusive.
    pub last_bar: u32,
    /// What it shows.
    pub look: Look,
}

impl Cue {
    /// Its event-stepped colours, unless it paints a picture.
    pub fn steps(&self) -> Option<&Steps> {
        match &self.look {
            Look::Steps(s) => Some(s),
            Look::Image(_) => None,
        }
    }

    /// Its picture, if it paints one.
    pub fn painting(&self) -> Option<&Painting> {
        match &self.look {
            Look::Image(p) => Some(p),
            Look::Steps(_) => None,
        }
    }

    /// What drives it, for reports: the event kind's name, or `image`.
    pub fn at_name(&self) -> &'static str {
        match &self.look {
            Look::Steps(s) => s.at.name(),
            Look::Image(_) => "image",
        }
    }
}

/// Most bars `resync_bars` may name: the marks of that many fill a table
/// header (`firmware-formats/full-table.md`, "Resync marks").
pub const MAX_RESYNC_BARS: usize = 8186;

/// The names of the check's warning kinds, as `[[expected]]` gives them.
pub const WARNING_KINDS: &[&str] = &[
    "slack",
    "spin_rate",
    "collision",
    "jump",
    "flash",
    "current",
    "landing",
    "refresh",
    "memory",
    "drift",
    "coverage",
    "overlap",
    "music",
];

/// A warning the show's author knows of and means (`[[expected]]`).
#[derive(Clone, Debug, PartialEq)]
pub struct Expected {
    /// Where its table starts in the show file, bytes.
    pub offset: usize,
    /// The warning kind, one of [`WARNING_KINDS`].
    pub kind: &'static str,
    /// The prop it is about (`(stage)` for the whole stage); any when `None`.
    pub prop: Option<String>,
    /// First and last bar it may fall in, inclusive; anywhere when `None`.
    pub bars: Option<(u32, u32)>,
    /// Why it is expected, in the author's words.
    pub why: String,
}

impl Show {
    /// The index of the prop with that name.
    pub fn prop_index(&self, name: &str) -> Option<usize> {
        self.props.iter().position(|p| p.name == name)
    }

    /// Time at which the last section ends, seconds: the show's length,
    /// from time 0 (frame 0, before bar 1 when `start_s` > 0) to the end of
    /// the last section. Every command reports this one figure
    /// (docs/conventions.md, "Colour on the frames").
    pub fn end_s(&self) -> f64 {
        let last = self.sections.iter().map(|s| s.last_bar).max().unwrap_or(0);
        self.tempo.time_at_bar(last + 1)
    }

    /// Number of frames in the show: round(end_s * frame_rate).
    pub fn frame_count(&self) -> u64 {
        (self.end_s() * f64::from(self.frame_rate_hz)).round() as u64
    }
}
