//! The validated, typed show: every later stage works on [`Show`] only.
//!
//! Units are in the names: metres (`_m`), seconds (`_s`), degrees (`_deg`),
//! beats, bars (numbered from 1), hertz (`_hz`). Names are resolved to
//! indices, ranges are checked, defaults are filled in.

use std::sync::Arc;

use nalgebra::Vector3;

use crate::diag::Source;
use crate::motion::TempoMap;

/// A whole show, ready to simulate.
#[derive(Clone, Debug)]
pub struct Show {
    /// Free-text title.
    pub title: String,
    /// LED frames per second in the props.
    pub frame_rate_hz: u32,
    /// Beats and bars against seconds.
    pub tempo: TempoMap,
    /// The props, in file order.
    pub props: Vec<Prop>,
    /// The named spin patterns, in file order.
    pub patterns: Vec<Pattern>,
    /// The sections, sorted by bar, never overlapping.
    pub sections: Vec<Section>,
    /// The colour cues, in file order (later ones win where they overlap).
    pub cues: Vec<Cue>,
    /// The show file, for diagnostics that point into it.
    pub source: Arc<Source>,
}

/// What kind of prop it is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PropKind {
    /// A head on a flexible tether, held at the handle.
    Poi,
}

impl PropKind {
    /// The name used in show files.
    pub fn name(self) -> &'static str {
        match self {
            PropKind::Poi => "poi",
        }
    }
}

/// One prop: a head on a tether, swung from a hand.
#[derive(Clone, Debug)]
pub struct Prop {
    /// Its name, the key of its `[prop.NAME]` table.
    pub name: String,
    /// Poi (for now).
    pub kind: PropKind,
    /// Handle to head centre, metres.
    pub tether_m: f64,
    /// Centre of the hand's path, stage coordinates, metres.
    pub anchor_m: Vector3<f64>,
    /// Number of LEDs in the head.
    pub leds: u32,
    /// Mass of the head, kilograms (physics checks).
    pub head_mass_kg: f64,
    /// Radius of the head, metres (collision checks; default 0.05).
    pub head_radius_m: f64,
    /// Scale applied to linear LED values, 0..=1.
    pub brightness: f64,
    /// Byte order of each LED's channels in the binary tables and C header.
    pub wire_order: crate::output::WireOrder,
    // Long-exposure previews (`preview`):
    /// Standard deviation of the head's glow (diffuser and lens blur), millimetres.
    pub glow_sigma_mm: f64,
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

/// The family of LED driver on a prop's data line.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LedDriver {
    /// One data wire at 800 kbit/s, 1.25 us per bit, then a latch gap.
    OneWire,
    /// A data and a clock wire, at `clock_hz` bits per second.
    Clocked {
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
    pub fn up(self) -> Vector3<f64> {
        match self {
            Plane::Wall | Plane::Wheel => Vector3::new(0.0, 1.0, 0.0),
            Plane::Floor => Vector3::new(0.0, 0.0, -1.0),
        }
    }

    /// Unit vector of clock angle 90 (3 o'clock), stage coordinates.
    pub fn right(self) -> Vector3<f64> {
        match self {
            Plane::Wall | Plane::Floor => Vector3::new(1.0, 0.0, 0.0),
            Plane::Wheel => Vector3::new(0.0, 0.0, 1.0),
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
    /// First bar, inclusive, from 1.
    pub first_bar: u32,
    /// Last bar, inclusive.
    pub last_bar: u32,
    /// Per prop (index as in [`Show::props`]): what it plays, if anything.
    pub placements: Vec<Option<Placement>>,
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

/// A colour cue: colours that step on every event of one kind.
#[derive(Clone, Debug)]
pub struct Cue {
    /// Index into [`Show::props`].
    pub prop: usize,
    /// First bar, inclusive.
    pub first_bar: u32,
    /// Last bar, inclusive.
    pub last_bar: u32,
    /// The event kind that moves it to the next colour.
    pub at: EventKind,
    /// With `at = angle`: the clock angle, degrees in [0, 360).
    pub angle_deg: Option<f64>,
    /// The colours, sRGB bytes, cycled in order.
    pub colours: Vec<[u8; 3]>,
    /// Crossfade length in beats (0 is a hard cut).
    pub fade_beats: f64,
}

impl Show {
    /// The index of the prop with that name.
    pub fn prop_index(&self, name: &str) -> Option<usize> {
        self.props.iter().position(|p| p.name == name)
    }

    /// Time at which the last section ends, seconds.
    pub fn end_s(&self) -> f64 {
        let last = self.sections.iter().map(|s| s.last_bar).max().unwrap_or(0);
        self.tempo.time_at_bar(last + 1)
    }

    /// Number of frames in the show: round(end_s * frame_rate).
    pub fn frame_count(&self) -> u64 {
        (self.end_s() * f64::from(self.frame_rate_hz)).round() as u64
    }
}
