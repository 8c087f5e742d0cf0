//! `glowscore patterns`: the trade figures each prop of a show can play,
//! with their petals, stall points, reach and tether tension at the show's
//! tempo, each with the pattern table to paste.
//!
//! The figures are the reader's (`figure = ...`, docs/conventions.md,
//! "Figures"): extension, isolation, inspin flowers of 1 to 8 petals and
//! antispin flowers of 2 to 8, each antispin also as a stall (`stall = true`:
//! hand radius `tether_m * |head_turns|`; two petals make the straight line).
//! Petals and stalls are the trade's counts (common practice); reach and
//! tension are worked out from the motion: reach is the largest distance of
//! the head from the anchor in closed form, tension is the check's taut
//! tether model ([`crate::check::tension`]) sampled at 4096 points of one
//! hand revolution.

use std::io::Write;
use std::path::Path;

use super::Failure;
use crate::check::kin::Kin;
use crate::check::tension::tension_n;
use crate::geom::Vec3;
use crate::model::{Figure, Plane, Prop, stall_radius_m};
use crate::motion::{Curve, Rotor};

/// What to list.
#[derive(Clone, Debug)]
pub struct PatternOptions {
    /// Only this prop (default: every prop).
    pub prop: Option<String>,
    /// Only figures with this many petals.
    pub petals: Option<u32>,
    /// Only figures whose head stays within this distance of the anchor, metres.
    pub max_reach_m: Option<f64>,
    /// Only figures whose head stops (stall figures).
    pub stall: bool,
    /// The plane to spin in.
    pub plane: Plane,
    /// Beats per hand revolution (default: the show's beats per bar).
    pub beats: Option<f64>,
    /// Hand radius of the figures that are not stalls, metres.
    pub hand_radius_m: f64,
}

impl Default for PatternOptions {
    fn default() -> Self {
        PatternOptions {
            prop: None,
            petals: None,
            max_reach_m: None,
            stall: false,
            plane: Plane::Wall,
            beats: None,
            hand_radius_m: DEFAULT_HAND_RADIUS_M,
        }
    }
}

/// The hand radius listed for the figures that are not stalls, metres: a
/// small circle of the wrist (the README's example flower uses about this).
pub const DEFAULT_HAND_RADIUS_M: f64 = 0.15;

/// Samples of one hand revolution for the tension.
const SAMPLES: usize = 4096;

/// One figure as one prop would play it.
#[derive(Clone, Debug, PartialEq)]
pub struct Candidate {
    /// The figure.
    pub figure: Figure,
    /// `stall = true`.
    pub stall: bool,
    /// The hand's radius, metres.
    pub hand_radius_m: f64,
    /// Petals (tips per hand revolution; 0 for a circle).
    pub petals: u32,
    /// Points per hand revolution where the head stops.
    pub stalls: u32,
    /// The head's largest distance from the anchor, metres.
    pub reach_m: f64,
    /// Largest and smallest tether tension, newtons.
    pub max_tension_n: f64,
    /// The smallest (negative: the tether goes slack).
    pub min_tension_n: f64,
}

impl Candidate {
    /// A name for its pattern table.
    pub fn pattern_name(&self) -> String {
        match self.figure {
            Figure::Extension | Figure::Isolation => self.figure.name().to_string(),
            Figure::Inspin { petals } | Figure::Antispin { petals } => {
                let stall = if self.stall { "_stall" } else { "" };
                format!("{}_{petals}{stall}", self.figure.name())
            }
        }
    }

    /// The pattern table to paste: a `[pattern.NAME]` header and one key a
    /// line.
    pub fn table(&self, plane: Plane, beats: f64) -> Vec<String> {
        let mut lines = vec![
            format!("[pattern.{}]", self.pattern_name()),
            format!("plane = \"{}\"", plane.name()),
            format!("beats = {beats}"),
        ];
        if !self.stall {
            lines.push(format!("hand_radius_m = {}", self.hand_radius_m));
        }
        lines.push(format!("figure = \"{}\"", self.figure.name()));
        if self.figure.petals() > 0 {
            lines.push(format!("petals = {}", self.figure.petals()));
        }
        if self.stall {
            lines.push("stall = true".to_string());
        }
        lines
    }
}

/// The figures `prop` can play in `plane`, at `bpm` with `beats` beats per
/// hand revolution, unfiltered, in a fixed order.
pub fn candidates(prop: &Prop, plane: Plane, bpm: f64, beats: f64, hand_m: f64) -> Vec<Candidate> {
    let mut figures: Vec<(Figure, bool)> =
        vec![(Figure::Extension, false), (Figure::Isolation, false)];
    figures.extend((1..=8).map(|n| (Figure::Inspin { petals: n }, false)));
    for n in 2..=8 {
        figures.push((Figure::Antispin { petals: n }, false));
        figures.push((Figure::Antispin { petals: n }, true));
    }
    figures
        .into_iter()
        .map(|(figure, stall)| {
            let m = figure.head_turns();
            let hand_radius_m = if stall {
                stall_radius_m(prop.tether_m, m)
            } else {
                hand_m
            };
            let r = prop.tether_m;
            // The head's distance from the anchor is |R + r e^(i(m-1)u)|
            // (with the tether's start along the hand's radius, or against it
            // for an isolation): R + r at a tip unless the two turn together.
            let reach_m = match figure {
                Figure::Isolation => (hand_radius_m - r).abs(),
                _ => hand_radius_m + r,
            };
            let (min_tension_n, max_tension_n) =
                tension_range(prop, plane, figure, hand_radius_m, bpm, beats);
            Candidate {
                figure,
                stall,
                hand_radius_m,
                petals: figure.petals(),
                stalls: if stall { figure.petals() } else { 0 },
                reach_m,
                max_tension_n,
                min_tension_n,
            }
        })
        .collect()
}

/// Smallest and largest tether tension over one hand revolution, newtons.
fn tension_range(
    prop: &Prop,
    plane: Plane,
    figure: Figure,
    hand_m: f64,
    bpm: f64,
    beats: f64,
) -> (f64, f64) {
    let hand_rotor = Rotor {
        radius_m: hand_m,
        turns: 1.0,
        start_rad: 0.0,
    };
    let tether = Rotor {
        radius_m: prop.tether_m,
        turns: figure.head_turns(),
        start_rad: crate::num::rad(figure.head_offset_deg()),
    };
    let hand = Curve::new([hand_rotor]);
    let head = Curve::new([hand_rotor, tether]);
    // Hand revolutions per second.
    let rate = bpm / 60.0 / beats;
    let stage = |j: [[f64; 2]; 4]| {
        let mut o = [Vec3::zeros(); 4];
        let mut k = 1.0;
        for n in 0..4 {
            o[n] = (plane.up() * j[n][0] + plane.right() * j[n][1]) * k;
            k *= rate;
        }
        o
    };
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for i in 0..SAMPLES {
        let u = i as f64 / SAMPLES as f64;
        let k = Kin {
            hand: stage(hand.derivatives(u)),
            head: stage(head.derivatives(u)),
        };
        let (t, _) = tension_n(prop.head_mass_kg, &k);
        lo = lo.min(t);
        hi = hi.max(t);
    }
    (lo, hi)
}

/// Lists the figures of the show at `path` (see the module's text).
pub fn run(path: &Path, opts: &PatternOptions, out: &mut dyn Write) -> Result<(), Failure> {
    if let Some(b) = opts.beats
        && !(1.0 / 64.0..=10_000.0).contains(&b)
    {
        return Err(Failure::Option(format!(
            "--beats {b}: beats per hand revolution must be 1/64 to 10000"
        )));
    }
    if !(0.0..=10.0).contains(&opts.hand_radius_m) {
        return Err(Failure::Option(format!(
            "--hand-radius {}: must be 0 to 10 m",
            opts.hand_radius_m
        )));
    }
    if opts.max_reach_m.is_some_and(|m| !m.is_finite()) {
        return Err(Failure::Option(
            "--max-reach: must be a number of metres".to_string(),
        ));
    }
    let prepared = super::prepare(path)?;
    let show = prepared.show();
    if let Some(p) = &opts.prop
        && show.prop_index(p).is_none()
    {
        let names: Vec<&str> = show.props.iter().map(|p| p.name.as_str()).collect();
        return Err(Failure::Option(format!(
            "--prop `{}`: the show has no such prop (it has {})",
            crate::diag::escape(p),
            names.join(", ")
        )));
    }
    let bpm = show.tempo.bpm_at_beat(0.0);
    let beats = opts
        .beats
        .unwrap_or_else(|| f64::from(show.tempo.beats_per_bar()));
    let w = Failure::output("the figures");
    for prop in &show.props {
        if opts.prop.as_ref().is_some_and(|p| *p != prop.name) {
            continue;
        }
        writeln!(
            out,
            "{}: tether {} m, head {} kg; {} plane, {beats} beats per hand revolution at {bpm} bpm",
            prop.name,
            prop.tether_m,
            prop.head_mass_kg,
            opts.plane.name()
        )
        .map_err(&w)?;
        let list: Vec<Candidate> = candidates(prop, opts.plane, bpm, beats, opts.hand_radius_m)
            .into_iter()
            .filter(|c| opts.petals.is_none_or(|n| c.petals == n))
            .filter(|c| opts.max_reach_m.is_none_or(|m| c.reach_m <= m))
            .filter(|c| !opts.stall || c.stalls > 0)
            .collect();
        if list.is_empty() {
            writeln!(out, "  no figure passes the filters").map_err(&w)?;
        }
        for c in &list {
            let what = match (c.figure, c.stall) {
                (Figure::Antispin { petals: 2 }, true) => "antispin, straight line".to_string(),
                (_, true) => format!("{}, stall", c.figure.name()),
                _ => c.figure.name().to_string(),
            };
            let slack = if c.min_tension_n < 0.0 { " slack" } else { "" };
            writeln!(
                out,
                "\n  {what:<24} petals {:>2}  stalls {:>2}  reach {:.3} m  peak tension {:>7.2} N{slack}",
                c.petals, c.stalls, c.reach_m, c.max_tension_n,
            )
            .map_err(&w)?;
            for line in c.table(opts.plane, beats) {
                writeln!(out, "      {line}").map_err(&w)?;
            }
        }
    }
    Ok(())
}
