//! Which exposure and which view each section's preview gets, so that the
//! figure reads (docs/conventions.md, "Section previews").
//!
//! A long exposure of a whole section washes colours that move round the
//! figure (a chase, colours stepping on events that do not fall in the same
//! places every figure) into one blend. So a section's preview is exposed
//! for its first full figure: the time the props' paths take to close
//! (every prop placed in the section; the longest, capped by the section),
//! and extended by whole figures only while each further figure shows the
//! same colours at the same places as the first. A static colour, colours
//! that step in step with the figure, or a picture painted in the plane
//! repeat every figure and take the whole section.
//!
//! The view follows the planes of the section's patterns: wall plane from
//! the front, wheel plane from the side, floor plane from the top; props in
//! several planes: the plane most props use, front on a tie.
//!
//! [`choose`] is a pure function of the prepared show and the section.

use super::View;
use crate::cues::frame_of;
use crate::model::Plane;
use crate::motion::Span;
use crate::prepared::Prepared;

/// Most pattern cycles a figure may take to close: a path that needs more
/// (turns that are not a ratio of small whole numbers) counts as not
/// closing, and its section is exposed whole.
pub const MAX_FIGURE_CYCLES: u32 = 16;

/// Moments of a figure at which a later figure's colours are compared with
/// the first's, per prop.
pub const REPEAT_SAMPLES: usize = 128;

/// Largest difference in any channel of an LED's bytes that still counts
/// as the same colour (a crossfade or a picture's edge met one frame
/// earlier or later moves a little).
pub const COLOUR_TOLERANCE: u8 = 24;

/// Largest share of (moment, LED) pairs whose colour may differ for a later
/// figure to count as repeating the first: steps met one frame apart and a
/// picture's edges crossed a few millimetres apart stay well under it, a
/// colour moved on by a figure is over it nearly everywhere.
pub const MISMATCH_SHARE: f64 = 0.125;

/// Beats within which two beat positions count as the same.
const BEAT_EPS: f64 = 1e-6;

/// How long a section's preview is exposed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Exposure {
    /// Whole figures from the section's start, `count` of `figure_beats`
    /// beats each (`covers_section`: they fill the section).
    Figures {
        /// Figures in the exposure, 1 or more.
        count: u32,
        /// Beats one figure takes to close.
        figure_beats: f64,
        /// Whether the figures fill the whole section.
        covers_section: bool,
    },
    /// The whole section, which is shorter than one figure of
    /// `figure_beats` beats.
    PartFigure {
        /// Beats one figure takes to close.
        figure_beats: f64,
    },
    /// The whole section: no prop moves through a closed figure in it
    /// (all rest, or a path does not close within [`MAX_FIGURE_CYCLES`]).
    NoFigure,
}

/// What a section's preview shows: when and from where.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Choice {
    /// Index into the show's sections.
    pub section: usize,
    /// Global beats where the exposure opens and closes.
    pub beats: (f64, f64),
    /// Seconds from frame 0 where it opens and closes (clipped to the show).
    pub window_s: (f64, f64),
    /// How long, in figures.
    pub exposure: Exposure,
    /// The orthographic view.
    pub view: View,
}

impl Choice {
    /// Whether the exposure is the whole section.
    pub fn whole_section(&self) -> bool {
        match self.exposure {
            Exposure::Figures { covers_section, .. } => covers_section,
            Exposure::PartFigure { .. } | Exposure::NoFigure => true,
        }
    }

    /// The exposure in words: `one figure (2 beats)`, `the whole section
    /// (4 figures of 4 beats)`, ...
    pub fn exposure_words(&self) -> String {
        let beats = |b: f64| {
            let r = crate::num::round_to(b, 3);
            format!("{r} beat{}", if r == 1.0 { "" } else { "s" })
        };
        match self.exposure {
            Exposure::Figures {
                count,
                figure_beats,
                covers_section: true,
            } => format!(
                "the whole section ({count} figure{} of {})",
                if count == 1 { "" } else { "s" },
                beats(figure_beats)
            ),
            Exposure::Figures {
                count: 1,
                figure_beats,
                ..
            } => format!("one figure ({})", beats(figure_beats)),
            Exposure::Figures {
                count,
                figure_beats,
                ..
            } => format!("{count} figures of {}", beats(figure_beats)),
            Exposure::PartFigure { figure_beats } => {
                format!(
                    "the whole section (less than one figure of {})",
                    beats(figure_beats)
                )
            }
            Exposure::NoFigure => "the whole section (no closed figure)".into(),
        }
    }
}

/// The view that shows a pattern's plane face on.
pub fn view_of(plane: Plane) -> View {
    match plane {
        Plane::Wall => View::Front,
        Plane::Wheel => View::Side,
        Plane::Floor => View::Top,
    }
}

/// Beats a span's paths take to close: the fewest pattern cycles after
/// which every rotating term (the hand's and the tether's) has made whole
/// turns, or `None` beyond [`MAX_FIGURE_CYCLES`] (or a span that does not
/// move).
pub fn figure_beats(span: &Span) -> Option<f64> {
    let rate = span.phase_per_beat().abs();
    if !(rate > 0.0 && rate.is_finite()) {
        return None;
    }
    let turns: Vec<f64> = span
        .hand
        .rotors()
        .iter()
        .map(|r| r.turns)
        .chain([span.tether().turns])
        .collect();
    let whole = |x: f64| (x - x.round()).abs() < 1e-9 * x.abs().max(1.0);
    (1..=MAX_FIGURE_CYCLES)
        .find(|&k| turns.iter().all(|&t| whole(f64::from(k) * t)))
        .map(|k| f64::from(k) / rate)
}

/// The view for section `section` of `prepared`: the plane most of its
/// placed props use, front on a tie (and when none is placed).
pub fn section_view(prepared: &Prepared, section: usize) -> View {
    let mut counts = [0usize; 3];
    for span in spans_of(prepared, section) {
        counts[match span.plane {
            Plane::Wall => 0,
            Plane::Wheel => 1,
            Plane::Floor => 2,
        }] += 1;
    }
    let most = counts.iter().copied().max().unwrap_or(0);
    let winners: Vec<usize> = (0..3).filter(|&i| counts[i] == most).collect();
    match winners.as_slice() {
        [1] => View::Side,
        [2] => View::Top,
        _ => View::Front,
    }
}

/// The spans (one per placed prop) of section `section`.
fn spans_of(prepared: &Prepared, section: usize) -> impl Iterator<Item = &Span> {
    prepared
        .motions()
        .iter()
        .filter_map(move |m| m.spans.iter().find(|s| s.section == section))
}

/// Whether the `k`-th figure after the first (of `figure` beats, the first
/// opening at global beat `b0`) shows the colours of the first at the same
/// moments of the figure, for every prop (see [`MISMATCH_SHARE`]).
fn figure_repeats(prepared: &Prepared, b0: f64, figure: f64, k: u32) -> bool {
    let show = prepared.show();
    let last = prepared.frame_count().saturating_sub(1);
    let frame_at =
        |beat: f64| frame_of(show.tempo.time_at_beat(beat), show.frame_rate_hz).min(last);
    let (mut pairs, mut differ) = (0u64, 0u64);
    for (p, prop) in show.props.iter().enumerate() {
        let leds = prop.leds as usize;
        if leds == 0 {
            continue;
        }
        let (mut first, mut later) = (vec![[0u8; 3]; leds], vec![[0u8; 3]; leds]);
        for j in 0..REPEAT_SAMPLES {
            let b = b0 + (j as f64 + 0.5) / REPEAT_SAMPLES as f64 * figure;
            prepared.fill_frame(p, frame_at(b), &mut first);
            prepared.fill_frame(p, frame_at(b + f64::from(k) * figure), &mut later);
            for (x, y) in first.iter().zip(&later) {
                pairs += 1;
                if x.iter()
                    .zip(y)
                    .any(|(a, b)| a.abs_diff(*b) > COLOUR_TOLERANCE)
                {
                    differ += 1;
                }
            }
        }
    }
    differ as f64 <= MISMATCH_SHARE * pairs as f64
}

/// The exposure and view of section `section`'s preview (the rule in the
/// module's documentation).
pub fn choose(prepared: &Prepared, section: usize) -> Choice {
    let show = prepared.show();
    let sec = &show.sections[section];
    let (b0, b1) = (
        show.tempo.beat_of_bar(sec.first_bar),
        show.tempo.beat_of_bar(sec.last_bar + 1),
    );
    let length = b1 - b0;
    // The longest figure of the placed props; a prop whose path does not
    // close makes the section's figure the whole section.
    let mut figure: Option<f64> = None;
    let mut closes = true;
    for span in spans_of(prepared, section) {
        match figure_beats(span) {
            Some(f) => figure = Some(figure.map_or(f, |g: f64| g.max(f))),
            None if span.phase_per_beat() != 0.0 => closes = false,
            None => {}
        }
    }
    let (exposure, end) = match figure.filter(|_| closes) {
        None => (Exposure::NoFigure, b1),
        Some(f) if f > length + BEAT_EPS => (Exposure::PartFigure { figure_beats: f }, b1),
        Some(f) => {
            let most = ((length + BEAT_EPS) / f).floor().max(1.0) as u32;
            let mut count = 1;
            while count < most && figure_repeats(prepared, b0, f, count) {
                count += 1;
            }
            let end = b0 + f64::from(count) * f;
            let covers_section = (b1 - end).abs() <= BEAT_EPS;
            let exposure = Exposure::Figures {
                count,
                figure_beats: f,
                covers_section,
            };
            (exposure, if covers_section { b1 } else { end })
        }
    };
    let end_s = show.end_s();
    let window_s = (
        show.tempo.time_at_beat(b0).min(end_s),
        show.tempo.time_at_beat(end).min(end_s),
    );
    Choice {
        section,
        beats: (b0, end),
        window_s,
        exposure,
        view: section_view(prepared, section),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn prepared(text: &str) -> Prepared {
        let show =
            crate::show::parse("choice.toml", text.to_string()).unwrap_or_else(|d| panic!("{d:?}"));
        Prepared::new(show).expect("prepared")
    }

    /// A show of one poi in `plane`: a pattern of 2 beats, `head_turns`
    /// turns, one section of bars 1-4 and `cue` (a TOML cue table body).
    fn one_poi(plane: &str, head_turns: &str, cue: &str) -> String {
        format!(
            "[show]\ntitle = \"t\"\nframe_rate = 200\nbpm = 120\nbeats_per_bar = 4\n\n\
             [prop.p]\nkind = \"poi\"\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\nleds = 1\n\n\
             [pattern.a]\nplane = \"{plane}\"\nbeats = 2\nhand_radius_m = 0.1\nhead_turns = {head_turns}\n\n\
             [[section]]\nbars = [1, 4]\np = \"a\"\n\n[[cue]]\nprop = \"p\"\nbars = [1, 4]\n{cue}\n"
        )
    }

    #[test]
    fn a_static_colour_takes_the_whole_section() {
        let p = prepared(&one_poi("wall", "-3", "colours = [\"red\"]\nat = \"beat\""));
        let c = choose(&p, 0);
        // 16 beats of 2-beat figures (one hand turn, -3 tether turns: whole).
        assert_eq!(
            c.exposure,
            Exposure::Figures {
                count: 8,
                figure_beats: 2.0,
                covers_section: true
            }
        );
        assert!(c.whole_section());
        assert_eq!(c.view, View::Front);
        assert_eq!(c.beats, (0.0, 16.0));
        assert_eq!(c.window_s, (0.0, 8.0));
    }

    #[test]
    fn colours_moving_on_each_figure_take_one_figure() {
        // Three colours stepping on each beat: the second figure starts on
        // the third colour, so it would paint over the first's.
        let cue = "at = \"beat\"\ncolours = [\"red\", \"lime\", \"blue\"]";
        let c = choose(&prepared(&one_poi("wall", "1", cue)), 0);
        assert_eq!(
            c.exposure,
            Exposure::Figures {
                count: 1,
                figure_beats: 2.0,
                covers_section: false
            }
        );
        assert_eq!(c.beats, (0.0, 2.0));
        assert_eq!(c.exposure_words(), "one figure (2 beats)");
    }

    #[test]
    fn colours_in_step_with_the_figure_repeat() {
        // Two colours on each beat of a two-beat figure: every figure alike.
        let cue = "at = \"beat\"\ncolours = [\"red\", \"lime\"]";
        let c = choose(&prepared(&one_poi("wall", "1", cue)), 0);
        assert!(c.whole_section(), "{c:?}");
        assert_eq!(
            c.exposure_words(),
            "the whole section (8 figures of 2 beats)"
        );
    }

    #[test]
    fn a_figure_closes_after_whole_turns_of_every_term() {
        // Half a tether turn per hand turn: the path closes after 2 cycles.
        let c = choose(
            &prepared(&one_poi(
                "wall",
                "0.5",
                "colours = [\"red\"]\nat = \"beat\"",
            )),
            0,
        );
        assert_eq!(
            c.exposure,
            Exposure::Figures {
                count: 4,
                figure_beats: 4.0,
                covers_section: true
            }
        );
        // A ratio that needs more than 16 cycles counts as not closing.
        let c = choose(
            &prepared(&one_poi(
                "wall",
                "0.03",
                "colours = [\"red\"]\nat = \"beat\"",
            )),
            0,
        );
        assert_eq!(c.exposure, Exposure::NoFigure);
        assert_eq!(c.beats, (0.0, 16.0));
    }

    #[test]
    fn a_figure_longer_than_the_section_takes_the_section() {
        // 1/8 tether turn per hand cycle: 8 cycles of 2 beats, 16 beats;
        // with 1/16 the figure needs 32 beats, longer than the section.
        let c = choose(
            &prepared(&one_poi(
                "wall",
                "0.0625",
                "colours = [\"red\"]\nat = \"beat\"",
            )),
            0,
        );
        assert_eq!(c.exposure, Exposure::PartFigure { figure_beats: 32.0 });
        assert!(c.whole_section());
    }

    #[test]
    fn the_view_follows_the_plane() {
        for (plane, view) in [
            ("wall", View::Front),
            ("wheel", View::Side),
            ("floor", View::Top),
        ] {
            let c = choose(
                &prepared(&one_poi(plane, "1", "colours = [\"red\"]\nat = \"beat\"")),
                0,
            );
            assert_eq!(c.view, view, "{plane}");
        }
    }

    #[test]
    fn the_plane_most_props_use_and_front_on_a_tie() {
        let show = |planes: [&str; 3], placed: usize| {
            let mut s = String::from(
                "[show]\ntitle = \"t\"\nframe_rate = 100\nbpm = 120\nbeats_per_bar = 4\n\n",
            );
            for (i, plane) in planes.iter().enumerate() {
                s += &format!(
                    "[prop.p{i}]\nkind = \"poi\"\ntether_m = 0.5\nanchor_m = [{}.0, 1.4, 0.0]\nleds = 1\n\n",
                    2 * i
                );
                s += &format!(
                    "[pattern.a{i}]\nplane = \"{}\"\nbeats = 2\nhand_radius_m = 0.1\nhead_turns = 1\n\n",
                    plane
                );
            }
            s += "[[section]]\nbars = [1, 2]\n";
            for i in 0..placed {
                s += &format!("p{i} = \"a{i}\"\n");
            }
            s
        };
        let view = |planes, placed| section_view(&prepared(&show(planes, placed)), 0);
        assert_eq!(view(["wheel", "wheel", "wall"], 3), View::Side);
        assert_eq!(view(["floor", "wall", "floor"], 3), View::Top);
        assert_eq!(view(["wheel", "floor", "wall"], 3), View::Front);
        assert_eq!(view(["wheel", "floor", "wall"], 2), View::Front);
        assert_eq!(view(["wheel", "floor", "wall"], 1), View::Side);
        assert_eq!(view(["wheel", "floor", "wall"], 0), View::Front);
    }
}
