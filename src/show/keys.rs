//! The keys each table accepts, the named choices of the keys that take a
//! name, and the range of every number key.
//!
//! The ranges are physically sensible limits, the same for every command:
//! a value outside them is refused where it is written. README's key
//! reference lists them.

use crate::model::{End, FixedTo, Join, LedDriver, Plane, PropKind};

use super::reader::Bounds;

pub(super) const TOP_KEYS: &[&str] = &[
    "show", "tempo", "prop", "pattern", "section", "cue", "expected",
];
pub(super) const SHOW_KEYS: &[&str] = &[
    "title",
    "frame_rate",
    "bpm",
    "beats_per_bar",
    "start_s",
    "resync_bars",
    "music",
];
pub(super) const TEMPO_KEYS: &[&str] = &["bar", "bpm"];
pub(super) const PROP_KEYS: &[&str] = &[
    "kind",
    "tether_m",
    "tail_m",
    "anchor_m",
    "leds",
    "strip",
    "head_mass_kg",
    "head_radius_m",
    "brightness",
    "wire_order",
    // Long-exposure previews:
    "glow_sigma_mm",
    "pwm_hz",
    // LED current and battery (check):
    "channel_current_a",
    "idle_current_a",
    "battery_mah",
    "max_current_a",
    "brightness_limit",
    // Hardware limits:
    "led_driver",
    "driver_clock_hz",
    "leds_per_line",
    "table_memory_kb",
    "clock_ppm",
];
pub(super) const PATTERN_KEYS: &[&str] = &[
    "plane",
    "beats",
    "hand_radius_m",
    "hand",
    "head_turns",
    "hand_start_deg",
    "head_start_deg",
    "reverse",
    // A trade figure instead of `head_turns`:
    "figure",
    "petals",
    "stall",
];
/// The keys of a `[[section]]` besides the prop names.
pub(super) const SECTION_KEYS: &[&str] = &["bars", "join"];
pub(super) const TERM_KEYS: &[&str] = &["radius_m", "turns", "start_deg"];
pub(super) const PLACEMENT_KEYS: &[&str] = &["pattern", "mirror", "delay_beats"];
pub(super) const STRIP_KEYS: &[&str] = &["leds", "from_m", "to_m", "end"];
pub(super) const CUE_KEYS: &[&str] = &[
    "prop",
    "bars",
    "at",
    "angle_deg",
    "colours",
    "fade_beats",
    "along",
    "chase_leds_per_beat",
    "chase_width_leds",
    // Painting a picture:
    "image",
    "image_centre_m",
    "image_width_m",
    "image_height_m",
    "image_rotation_deg",
    "image_fixed_to",
];
/// Cue keys that go with stepped colours, not with `image`.
pub(super) const STEP_KEYS: &[&str] = &[
    "at",
    "angle_deg",
    "colours",
    "fade_beats",
    "along",
    "chase_leds_per_beat",
    "chase_width_leds",
];
/// Cue keys that go with `image` only.
pub(super) const IMAGE_KEYS: &[&str] = &[
    "image_centre_m",
    "image_width_m",
    "image_height_m",
    "image_rotation_deg",
    "image_fixed_to",
];
pub(super) const PLANES: &[(&str, Plane)] = &[
    ("wall", Plane::Wall),
    ("wheel", Plane::Wheel),
    ("floor", Plane::Floor),
];
pub(super) const KINDS: &[(&str, PropKind)] = &[("poi", PropKind::Poi), ("staff", PropKind::Staff)];
/// Strip ends: the ends a strip lies along (`both` on a staff is two strips).
pub(super) const ENDS: &[(&str, &[End])] = &[
    ("head", &[End::Head]),
    ("tail", &[End::Tail]),
    ("both", &[End::Head, End::Tail]),
];
pub(super) const FIXED_TO: &[(&str, FixedTo)] =
    &[("stage", FixedTo::Stage), ("hand", FixedTo::Hand)];
/// The trade's figures (`figure = ...`); petals are read after.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(super) enum FigureName {
    Extension,
    Isolation,
    Inspin,
    Antispin,
}
pub(super) const FIGURES: &[(&str, FigureName)] = &[
    ("extension", FigureName::Extension),
    ("isolation", FigureName::Isolation),
    ("inspin", FigureName::Inspin),
    ("antispin", FigureName::Antispin),
];
/// Section joins.
pub(super) const JOINS: &[(&str, Join)] =
    &[("restart", Join::Restart), ("continue", Join::Continue)];
/// The most petals a figure may ask for (its `head_turns` stays within
/// [`TURNS`]).
pub(super) const MAX_PETALS: i64 = 63;
/// Ways to spread colour along a strip (a chase reads its keys after).
#[derive(Clone, Copy, PartialEq, Eq)]
pub(super) enum Spread {
    Solid,
    Gradient,
    Chase,
}
pub(super) const ALONGS: &[(&str, Spread)] = &[
    ("solid", Spread::Solid),
    ("gradient", Spread::Gradient),
    ("chase", Spread::Chase),
];
/// LED drivers; the clock of `data_clock` is filled in from `driver_clock_hz`.
pub(super) const LED_DRIVERS: &[(&str, LedDriver)] = &[
    ("data_only", LedDriver::DataOnly),
    ("data_clock", LedDriver::DataClock { clock_hz: 0.0 }),
];
/// Old names of LED drivers, still read, each with a deprecation warning:
/// (old name, new name).
pub(super) const OLD_LED_DRIVERS: &[(&str, &str)] =
    &[("one_wire", "data_only"), ("clocked", "data_clock")];

// Ranges of the number keys.

/// Tempo, beats per minute (`bpm`, `tempo.bpm`).
pub(super) const BPM: Bounds = Bounds::at_least(1.0).at_most(1000.0);
/// Time of bar 1, seconds.
pub(super) const START_S: Bounds = Bounds::at_least(0.0).at_most(3600.0);
/// A prop's tether or tail length, metres: a millimetre to 10 m.
pub(super) const LENGTH_M: Bounds = Bounds::at_least(0.001).at_most(10.0);
/// A head's mass, kilograms: a gram to 20 kg.
pub(super) const HEAD_MASS_KG: Bounds = Bounds::at_least(0.001).at_most(20.0);
/// A head's radius, metres: a millimetre to 1 m.
pub(super) const HEAD_RADIUS_M: Bounds = Bounds::at_least(0.001).at_most(1.0);
/// A fraction from 0 to 1 (`brightness`).
pub(super) const FRACTION: Bounds = Bounds::at_least(0.0).at_most(1.0);
/// The glow of an LED in previews, millimetres: a hundredth of a millimetre
/// (a point) to half a metre.
pub(super) const GLOW_SIGMA_MM: Bounds = Bounds::at_least(0.01).at_most(500.0);
/// The LED driver's PWM rate, hertz: 0 (steady light) or 1 Hz to 1 MHz.
pub(super) const PWM_HZ: Bounds = Bounds::at_least(1.0).at_most(1e6).or_zero();
/// Current of one LED channel at full brightness, amperes.
pub(super) const CHANNEL_CURRENT_A: Bounds = Bounds::at_least(0.0).at_most(10.0);
/// Current of a dark prop, amperes.
pub(super) const IDLE_CURRENT_A: Bounds = Bounds::at_least(0.0).at_most(100.0);
/// Battery capacity, milliampere-hours: 1 mAh to 10 000 Ah.
pub(super) const BATTERY_MAH: Bounds = Bounds::at_least(1.0).at_most(1e7);
/// The most current a prop may draw, amperes: a milliampere to 1000 A.
pub(super) const MAX_CURRENT_A: Bounds = Bounds::at_least(0.001).at_most(1000.0);
/// The clock of a data-and-clock LED line, hertz: 1 kHz to 1 GHz.
pub(super) const DRIVER_CLOCK_HZ: Bounds = Bounds::at_least(1e3).at_most(1e9);
/// Memory for the frame table, kilobytes: a byte (0.001 kB) and up.
pub(super) const TABLE_MEMORY_KB: Bounds = Bounds::at_least(0.001).at_most(1e9);
/// Clock tolerance, parts per million.
pub(super) const CLOCK_PPM: Bounds = Bounds::at_least(0.0).at_most(1e6);
/// A place along a prop from the grip, metres (`from_m`, `to_m` of a strip).
pub(super) const STRIP_M: Bounds = Bounds::at_least(0.0).at_most(10.0);
/// Beats per hand revolution: a sixty-fourth of a beat to 10 000 beats.
pub(super) const BEATS: Bounds = Bounds::at_least(1.0 / 64.0).at_most(10_000.0);
/// A hand circle's radius, metres: 0 (no circle) or a millimetre to 10 m.
pub(super) const RADIUS_M: Bounds = Bounds::at_least(0.001).at_most(10.0).or_zero();
/// Turns per hand revolution (`head_turns`, a hand term's `turns`).
pub(super) const TURNS: Bounds = Bounds::within(64.0);
/// An angle, degrees (starts, `angle_deg`, a picture's rotation).
pub(super) const ANGLE_DEG: Bounds = Bounds::within(36_000.0);
/// A placement's delay, beats.
pub(super) const DELAY_BEATS: Bounds = Bounds::within(10_000.0);
/// A crossfade, beats: 0 (a cut) or a thousandth of a beat to 10 000.
pub(super) const FADE_BEATS: Bounds = Bounds::at_least(0.001).at_most(10_000.0).or_zero();
/// A chase's speed, LEDs per beat.
pub(super) const CHASE_LEDS_PER_BEAT: Bounds = Bounds::within(10_000.0);
/// A chase's band, LEDs: a hundredth of an LED to the most LEDs on a prop.
pub(super) const CHASE_WIDTH_LEDS: Bounds = Bounds::at_least(0.01).at_most(super::MAX_LEDS as f64);
/// A picture's width or height, metres: a millimetre to 100 m.
pub(super) const IMAGE_SIZE_M: Bounds = Bounds::at_least(0.001).at_most(100.0);
