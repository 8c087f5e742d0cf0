//! The check report: per-prop figures, pair figures, stage space and
//! warnings, written as one JSON object or as readable text.
//!
//! The report is built to grow: other checks add fields to [`PropFigures`]
//! (such as `peak_current_a`), kinds to [`WarningKind`] and warnings to
//! [`CheckReport::warnings`]; [`CheckReport::finish`] sorts the warnings.

use std::fmt;
use std::io::{self, Write};

use serde::Serialize;
use serde::ser::{SerializeMap, Serializer};

use super::coverage::PaintingCoverage;
use super::landing::{CueLanding, LandingSummary};
use super::light::FlashFigures;
use super::music::MusicFigures;
use crate::model::Show;
use crate::num::round_to;

/// What a warning is about.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum WarningKind {
    /// The tether tension drops below zero: the tether goes slack.
    Slack,
    /// A hand or head turns faster than people commonly sustain.
    SpinRate,
    /// Two props come closer than the sum of their head radii.
    Collision,
    /// A section boundary moves a head discontinuously.
    Jump,
    /// More than three general or red flashes in a one-second window (W3C WCAG 2.x).
    Flash,
    /// A prop's LEDs draw more current than its `max_current_a`.
    Current,
    /// A cue's colour changes land further from their events than the tolerance.
    Landing,
    /// The show's frame rate is above what the prop's LED line can refresh.
    Refresh,
    /// No table form fits the prop's declared table memory.
    Memory,
    /// The prop's clock drifts off the music by more than the show allows.
    Drift,
    /// A painting cue's LEDs pass too little of its picture.
    Coverage,
    /// A later cue on the same prop hides some of a cue's frames.
    Overlap,
    /// The show's beats stray from its song's, or the show outlasts the song.
    Music,
}

impl WarningKind {
    /// The name used in JSON and text.
    pub fn name(self) -> &'static str {
        match self {
            WarningKind::Slack => "slack",
            WarningKind::SpinRate => "spin_rate",
            WarningKind::Collision => "collision",
            WarningKind::Jump => "jump",
            WarningKind::Flash => "flash",
            WarningKind::Current => "current",
            WarningKind::Landing => "landing",
            WarningKind::Refresh => "refresh",
            WarningKind::Memory => "memory",
            WarningKind::Drift => "drift",
            WarningKind::Coverage => "coverage",
            WarningKind::Overlap => "overlap",
            WarningKind::Music => "music",
        }
    }
}

pub(crate) fn r9<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_f64(round_to(*x, 9))
}

fn r9_pair<S: Serializer>(x: &[f64; 2], s: S) -> Result<S::Ok, S::Error> {
    [round_to(x[0], 9), round_to(x[1], 9)].serialize(s)
}

pub(crate) fn r9_opt<S: Serializer>(x: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match x {
        Some(x) => s.serialize_f64(round_to(*x, 9)),
        None => s.serialize_none(),
    }
}

/// An instant of the show: seconds from frame 0, bar and beat (from 1).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct When {
    /// Seconds from frame 0.
    #[serde(serialize_with = "r9")]
    pub time_s: f64,
    /// Bar, from 1.
    pub bar: i64,
    /// Beat within the bar, from 1, fractional.
    #[serde(serialize_with = "r9")]
    pub beat: f64,
}

impl When {
    /// The instant at global beat `beat` (0 = bar 1 beat 1) of `show`.
    pub fn at_beat(show: &Show, beat: f64) -> When {
        let (bar, within) = show.tempo.bar_beat(beat);
        When {
            time_s: show.tempo.time_at_beat(beat),
            bar,
            beat: within,
        }
    }
}

impl fmt::Display for When {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "bar {} beat {:.3} ({:.3} s)",
            self.bar, self.beat, self.time_s
        )
    }
}

/// One warning: what, which prop, when, and a sentence saying it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Warning {
    /// What it is about.
    pub kind: WarningKind,
    /// The prop concerned (the first of two, for a collision).
    pub prop: String,
    /// The second prop, for a collision.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub other_prop: Option<String>,
    /// Where it starts.
    #[serde(flatten)]
    pub at: When,
    /// How long it lasts, seconds (none for an instant).
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub duration_s: Option<f64>,
    /// The figure at fault, in `unit` (the worst value over the stretch).
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub value: Option<f64>,
    /// The limit it is compared with, in `unit`.
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub limit: Option<f64>,
    /// Unit of `value` and `limit` (`N`, `m`, `turns/s`, ...).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit: Option<&'static str>,
    /// A readable sentence.
    pub message: String,
    /// How many times it happened in the stretch (repeats are grouped).
    pub count: usize,
    /// First and last bar of the stretch.
    pub bars: [i64; 2],
    /// The line of the show file behind it (the section, cue or prop).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub line: Option<usize>,
    /// The cue it is about, index from 0 in file order, where it is one
    /// cue's.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cue: Option<usize>,
    /// Why the show expects it (its `[[expected]]` entry), when it does: an
    /// expected warning is reported all the same, and `--deny-warnings`
    /// passes over it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub expected: Option<String>,
    /// Each time it happened, when it happened more than once.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub each: Vec<Instance>,
}

/// One time a grouped warning happened.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Instance {
    /// Where it starts.
    #[serde(flatten)]
    pub at: When,
    /// How long it lasts, seconds (none for an instant).
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub duration_s: Option<f64>,
    /// The figure at fault, in the warning's unit.
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub value: Option<f64>,
}

impl Warning {
    /// The fields the checks leave to [`CheckReport::finish`] (it groups,
    /// locates and matches the warnings): for `..Warning::UNGATHERED` at the
    /// end of a warning the checks make.
    pub(crate) const UNGATHERED: Warning = Warning {
        kind: WarningKind::Slack,
        prop: String::new(),
        other_prop: None,
        at: When {
            time_s: 0.0,
            bar: 0,
            beat: 0.0,
        },
        duration_s: None,
        value: None,
        limit: None,
        unit: None,
        message: String::new(),
        count: 1,
        bars: [0, 0],
        line: None,
        cue: None,
        expected: None,
        each: Vec::new(),
    };

    /// Every time it happened, each as a warning of its own (itself, when it
    /// happened once).
    pub fn instances(&self) -> Vec<Warning> {
        if self.each.is_empty() {
            return vec![self.clone()];
        }
        self.each
            .iter()
            .map(|i| Warning {
                at: i.at,
                duration_s: i.duration_s,
                value: i.value,
                count: 1,
                bars: [i.at.bar, i.at.bar],
                each: Vec::new(),
                expected: None,
                ..self.clone()
            })
            .collect()
    }

    pub(crate) fn instance(&self) -> Instance {
        Instance {
            at: self.at,
            duration_s: self.duration_s,
            value: self.value,
        }
    }
}

/// The physics figures of one prop over the whole show (bar 1 beat 1 to the
/// end of the last section, rest included).
///
/// A staff has two ends (head end and tail end); its speed, acceleration,
/// tension, reach and swept figures are the worst over both ends, and
/// [`PropFigures::ends`] lists each end's own. For a staff, "tension" is
/// the axial force the rod carries at an end's weight, `T = -m (a - g) . u`
/// with u the unit vector from the grip to that end: positive when the rod
/// pulls the end toward the grip, negative when it pushes (a rod can; a
/// staff never goes slack).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PropFigures {
    /// The prop's name (the key of the JSON map).
    #[serde(skip)]
    pub name: String,
    /// `poi` or `staff`.
    pub kind: &'static str,
    /// Highest head speed (a staff: of either end), m/s.
    #[serde(serialize_with = "r9")]
    pub max_speed_m_s: f64,
    /// Where the head is fastest.
    pub max_speed_at: Option<When>,
    /// Highest head acceleration (motion only, without gravity), in units of
    /// standard gravity g = 9.80665 m/s^2.
    #[serde(serialize_with = "r9")]
    pub max_acc_g: f64,
    /// Where the head's acceleration is highest.
    pub max_acc_at: Option<When>,
    /// Lowest tether tension, newtons (negative: the tether would push).
    #[serde(serialize_with = "r9")]
    pub min_tension_n: f64,
    /// Lowest tension in units of the head's weight (m g).
    #[serde(serialize_with = "r9")]
    pub min_tension_weights: f64,
    /// Where the tension is lowest.
    pub min_tension_at: Option<When>,
    /// Highest tether tension, newtons.
    #[serde(serialize_with = "r9")]
    pub max_tension_n: f64,
    /// Highest tension in units of the head's weight (m g).
    #[serde(serialize_with = "r9")]
    pub max_tension_weights: f64,
    /// Where the tension is highest.
    pub max_tension_at: Option<When>,
    /// Total time the tether is slack, seconds.
    #[serde(serialize_with = "r9")]
    pub slack_s: f64,
    /// Highest rate of the hand's fastest circular term, turns per second.
    #[serde(serialize_with = "r9")]
    pub max_hand_turns_per_s: f64,
    /// Highest rate at which the tether turns, turns per second.
    #[serde(serialize_with = "r9")]
    pub max_head_turns_per_s: f64,
    /// Farthest the head centre gets from the anchor, metres.
    #[serde(serialize_with = "r9")]
    pub reach_m: f64,
    /// Where the head is farthest from the anchor.
    pub reach_at: Option<When>,
    /// Farthest the head centre gets from the performer's centre line
    /// (horizontal distance), metres.
    #[serde(serialize_with = "r9")]
    pub reach_from_centre_m: f64,
    /// Where the head is farthest from the centre line.
    pub reach_from_centre_at: Option<When>,
    /// A staff's figures per end, head end first (empty for a poi, and then
    /// left out of the JSON).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub ends: Vec<EndFigures>,
    /// Every section boundary inside the show: the jump and the kink there.
    pub joins: Vec<super::jumps::JoinFigures>,
    /// Peak LED current, amperes (filled by the light checks; null until then).
    #[serde(serialize_with = "r9_opt")]
    pub peak_current_a: Option<f64>,
    /// Start of the first frame with the peak current.
    pub peak_current_at: Option<When>,
    /// Mean LED current over every frame, amperes.
    #[serde(serialize_with = "r9_opt")]
    pub mean_current_a: Option<f64>,
    /// Battery time at the mean current, hours (null without `battery_mah`).
    #[serde(serialize_with = "r9_opt")]
    pub battery_hours: Option<f64>,
    /// Scale on brightness that keeps the peak within `max_current_a`, 0..=1
    /// (with `brightness_limit = true`; null otherwise).
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub brightness_scale: Option<f64>,
    /// Flash counts of the prop's LEDs (W3C WCAG 2.x, as a guide for props).
    pub flash: Option<FlashFigures>,
    /// Refresh limit, table sizes against memory, clock drift.
    pub hardware: Option<super::hardware::HardwareFigures>,
}

/// The figures of one end of a staff over the whole show.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct EndFigures {
    /// `head` (the end that traces the pattern's head path) or `tail`.
    pub end: &'static str,
    /// Signed distance of the end from the grip along the prop's direction
    /// (grip to head end), metres: `tether_m` or `-tail_m`.
    #[serde(serialize_with = "r9")]
    pub along_m: f64,
    /// Highest speed of the end, m/s.
    #[serde(serialize_with = "r9")]
    pub max_speed_m_s: f64,
    /// Where it is fastest.
    pub max_speed_at: Option<When>,
    /// Highest acceleration of the end (motion only), in units of g.
    #[serde(serialize_with = "r9")]
    pub max_acc_g: f64,
    /// Where its acceleration is highest.
    pub max_acc_at: Option<When>,
    /// Lowest axial force the rod carries at the end's weight, newtons
    /// (negative: the rod pushes the end away from the grip).
    #[serde(serialize_with = "r9")]
    pub min_tension_n: f64,
    /// Where that is.
    pub min_tension_at: Option<When>,
    /// Highest axial force, newtons.
    #[serde(serialize_with = "r9")]
    pub max_tension_n: f64,
    /// Where that is.
    pub max_tension_at: Option<When>,
    /// Farthest the end's centre gets from the anchor, metres.
    #[serde(serialize_with = "r9")]
    pub reach_m: f64,
    /// Where that is.
    pub reach_at: Option<When>,
}

/// The closest approach of two props while both play a pattern.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PairFigures {
    /// The two props' names, in file order.
    pub props: [String; 2],
    /// Contact distance: the sum of the two head radii, metres.
    #[serde(serialize_with = "r9")]
    pub contact_m: f64,
    /// Closest distance between the head centres (a staff's head end and
    /// tail end both count as heads), metres (null if the two never move at
    /// the same time).
    #[serde(serialize_with = "r9_opt")]
    pub min_head_distance_m: Option<f64>,
    /// Where the heads are closest.
    pub min_head_distance_at: Option<When>,
    /// Closest distance between the props as segments: a poi's tether from
    /// hand to head centre, a staff's whole rod from tail end to head end,
    /// metres.
    #[serde(serialize_with = "r9_opt")]
    pub min_tether_distance_m: Option<f64>,
    /// Where the tethers are closest.
    pub min_tether_distance_at: Option<When>,
}

/// A rectangle on the stage floor, metres (x to the audience's right, z
/// toward the audience).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Rect {
    /// Left edge (as the audience sees it), metres.
    #[serde(serialize_with = "r9")]
    pub x_min_m: f64,
    /// Right edge, metres.
    #[serde(serialize_with = "r9")]
    pub x_max_m: f64,
    /// Back edge (upstage), metres.
    #[serde(serialize_with = "r9")]
    pub z_min_m: f64,
    /// Front edge (toward the audience), metres.
    #[serde(serialize_with = "r9")]
    pub z_max_m: f64,
    /// x extent, metres.
    #[serde(serialize_with = "r9")]
    pub width_m: f64,
    /// z extent, metres.
    #[serde(serialize_with = "r9")]
    pub depth_m: f64,
}

impl Rect {
    /// The rectangle spanning x in `[x0, x1]` and z in `[z0, z1]`, metres.
    pub fn new(x0: f64, x1: f64, z0: f64, z1: f64) -> Rect {
        Rect {
            x_min_m: x0,
            x_max_m: x1,
            z_min_m: z0,
            z_max_m: z1,
            width_m: x1 - x0,
            depth_m: z1 - z0,
        }
    }

    /// This rectangle grown by `m` metres on every side.
    pub fn grown(&self, m: f64) -> Rect {
        Rect::new(
            self.x_min_m - m,
            self.x_max_m + m,
            self.z_min_m - m,
            self.z_max_m + m,
        )
    }
}

/// The space the show needs on stage.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Stage {
    /// The performer's centre line: the vertical through (x, z), metres,
    /// the mean of the props' anchors.
    #[serde(serialize_with = "r9_pair")]
    pub centre_line_m: [f64; 2],
    /// Floor rectangle swept by every hand and head (heads with their radius).
    pub swept_m: Rect,
    /// `swept_m` grown by `margin_m` on every side: the clear space to keep.
    pub clear_space_m: Rect,
    /// Margin added around the swept rectangle, metres.
    #[serde(serialize_with = "r9")]
    pub margin_m: f64,
    /// Lowest point of any head surface (stage y), metres.
    #[serde(serialize_with = "r9")]
    pub lowest_head_m: f64,
    /// Highest point of any head surface (y), metres.
    #[serde(serialize_with = "r9")]
    pub highest_head_m: f64,
}

/// The limits the checks used.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Limits {
    /// Spin rates above this warn, turns per second.
    #[serde(serialize_with = "r9")]
    pub spin_rate_turns_per_s: f64,
    /// Head jumps longer than this warn, metres.
    #[serde(serialize_with = "r9")]
    pub jump_m: f64,
    /// Standard gravity used, m/s^2.
    #[serde(serialize_with = "r9")]
    pub gravity_m_s2: f64,
}

/// An error that made the show invalid, for the JSON report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ErrorEntry {
    /// What is wrong.
    pub message: String,
    /// The key path at fault (`prop.left.tether_m`), if known.
    pub key: Option<String>,
    /// Line in the show file, from 1, if known.
    pub line: Option<usize>,
    /// Column in the show file, from 1, if known.
    pub column: Option<usize>,
}

/// Everything `glowscore check` reports about a show.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckReport {
    /// True when the show file is valid (the figures are computed only then).
    pub valid: bool,
    /// The show's title.
    pub title: String,
    /// The show's length, seconds: from time 0 (frame 0) to the end of
    /// the last section ([`crate::model::Show::end_s`]), the same figure
    /// `compile` gives.
    #[serde(serialize_with = "r9")]
    pub duration_s: f64,
    /// Per prop, in file order (a JSON object keyed by prop name).
    #[serde(serialize_with = "props_as_map")]
    pub props: Vec<PropFigures>,
    /// Every pair of props, in file order.
    pub pairs: Vec<PairFigures>,
    /// The space the show needs (none for an invalid show).
    pub stage: Option<Stage>,
    /// The limits used.
    pub limits: Option<Limits>,
    /// Flash counts of the whole stage: the mean of every prop's linear
    /// light (null with fewer than two props).
    pub stage_flash: Option<FlashFigures>,
    /// Landing figures per cue, in file order.
    pub cues: Vec<CueLanding>,
    /// Landing figures of the whole show.
    pub landing: Option<LandingSummary>,
    /// How much of its picture each painting cue's LEDs pass, in cue order.
    pub paintings: Vec<PaintingCoverage>,
    /// The show against its song (left out of the JSON for a show without
    /// `music`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub music: Option<MusicFigures>,
    /// Every warning, sorted by time, then kind, then prop.
    pub warnings: Vec<Warning>,
    /// Why the show is invalid (empty when valid).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub errors: Vec<ErrorEntry>,
    /// The usual safety cautions, one sentence each.
    pub cautions: Vec<String>,
}

fn props_as_map<S: Serializer>(props: &[PropFigures], s: S) -> Result<S::Ok, S::Error> {
    let mut m = s.serialize_map(Some(props.len()))?;
    for p in props {
        m.serialize_entry(&p.name, p)?;
    }
    m.end()
}

impl CheckReport {
    /// The warnings the show does not expect.
    pub fn unexpected_warnings(&self) -> usize {
        self.warnings
            .iter()
            .filter(|w| w.expected.is_none())
            .count()
    }

    /// The report of an invalid show: `valid = false` and its errors.
    pub fn invalid(diags: &crate::diag::Diagnostics) -> CheckReport {
        let errors: Vec<ErrorEntry> = diags
            .0
            .iter()
            .map(|d| {
                let loc = d.location();
                ErrorEntry {
                    message: d.message.clone(),
                    key: d.key.clone(),
                    line: loc.as_ref().map(|l| l.1),
                    column: loc.as_ref().map(|l| l.2),
                }
            })
            .collect();
        CheckReport::with_errors(errors)
    }

    /// The report of a valid show refused as too much work: `valid = false`
    /// and the reason as its one error.
    pub fn refused(message: String) -> CheckReport {
        CheckReport::with_errors(vec![ErrorEntry {
            message,
            key: None,
            line: None,
            column: None,
        }])
    }

    fn with_errors(errors: Vec<ErrorEntry>) -> CheckReport {
        CheckReport {
            valid: false,
            title: String::new(),
            duration_s: 0.0,
            props: Vec::new(),
            pairs: Vec::new(),
            stage: None,
            limits: None,
            stage_flash: None,
            cues: Vec::new(),
            landing: None,
            paintings: Vec::new(),
            music: None,
            warnings: Vec::new(),
            errors,
            cautions: Vec::new(),
        }
    }

    /// The figures of the prop called `name`, to fill in or read.
    pub fn prop_mut(&mut self, name: &str) -> Option<&mut PropFigures> {
        self.props.iter_mut().find(|p| p.name == name)
    }

    /// Groups repeated warnings, locates them in the show file and sorts
    /// them by time, then kind, then prop (call after adding).
    pub(crate) fn finish(&mut self, show: &Show) {
        let mut raw = std::mem::take(&mut self.warnings);
        for w in &mut raw {
            if w.bars == [0, 0] {
                w.bars = [w.at.bar, w.at.bar];
            }
        }
        self.warnings = super::warnings::gather(show, raw);
    }

    /// Writes the report as pretty JSON and a newline.
    pub fn write_json(&self, out: &mut dyn Write) -> io::Result<()> {
        serde_json::to_writer_pretty(&mut *out, self)?;
        writeln!(out)
    }
}
