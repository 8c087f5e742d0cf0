//! The physics and stage checks of `glowscore check`.
//!
//! For every prop over the whole show (bar 1 beat 1 to the end of the last
//! section, rest included): tether tension with the taut-tether model
//! ([`tension`]) and where the tether goes slack, head speed and
//! acceleration, spin rates against common practice ([`spin`]), reach and
//! the stage space the show sweeps ([`reach`]); for every pair of props the
//! closest approach of heads and tethers ([`collision`]); at every section
//! boundary, heads that jump ([`jumps`]). From the frame tables: flash
//! counts after W3C WCAG 2.x per prop and for the whole stage, LED current
//! and battery time ([`light`]), and how far each cue's colour changes land
//! from their events ([`landing`]). For every cue that paints a picture,
//! how much of it the LEDs pass ([`coverage`]). For a show with `music`,
//! its beat grid against the song's beats and its end against the song's
//! ([`music`]). [`report`] holds the result.
//!
//! Staffs: a staff is a rigid rod held at the grip, with two ends (the head
//! end, which traces the pattern's head path, and the tail end opposite).
//! Speed, acceleration, reach, distance from the centre line and the swept
//! box scan both ends and report the worst; the "tension" of a staff is the
//! axial force the rod carries at each end's weight, `T = -m (a - g) . u`
//! with u the unit vector from the grip to that end (negative: the rod
//! pushes, which a rod can), and a staff never warns of slack; a staff's
//! collision capsule is the whole rod, tail end to head end; jumps look at
//! both ends and name the one that jumps furthest.
//!
//! Accuracy: smooth quantities are sampled at 64 samples per turn of the
//! fastest relative rotation and their extremes refined by Brent's method on
//! the analytic derivative to 1e-12 beats; distances between props are
//! refined by golden-section search to 1e-12 beats (see [`search`]).

mod cautions;
pub mod collision;
pub mod coverage;
pub mod hardware;
pub mod jumps;
pub mod kin;
pub mod landing;
pub mod light;
pub mod music;
mod overlap;
pub mod prop;
pub mod reach;
pub mod report;
pub mod search;
pub mod spin;
pub mod tension;
mod text;
mod warnings;

pub use report::{CheckReport, EndFigures, PairFigures, PropFigures, Warning, WarningKind, When};

use rayon::prelude::*;

use crate::model::Show;
use crate::motion::PropMotion;
use crate::output::FrameWriter;
use crate::prepared::Prepared;

/// The limits and search density the checks use.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CheckSettings {
    /// Hand or tether spin rates above this warn, turns per second.
    pub spin_limit_turns_per_s: f64,
    /// Head jumps at a section boundary longer than this warn, metres.
    pub jump_limit_m: f64,
    /// Clear space added around the swept rectangle, metres.
    pub clear_margin_m: f64,
    /// Samples per turn of the fastest relative rotation in a search.
    pub samples_per_turn: f64,
    /// A cue whose colour changes land further than this from their events
    /// warns, millimetres of head travel.
    pub tolerance_mm: f64,
}

impl CheckSettings {
    /// The jump that warns, metres: `jump_limit_m`, and never less than the
    /// landing tolerance (a head that jumps less than a colour change may
    /// land off is not worth a warning of its own).
    pub fn jump_limit(&self) -> f64 {
        self.jump_limit_m.max(self.tolerance_mm / 1000.0)
    }
}

impl Default for CheckSettings {
    fn default() -> Self {
        CheckSettings {
            spin_limit_turns_per_s: spin::COMMON_SPIN_LIMIT_TURNS_PER_S,
            jump_limit_m: 0.01,
            clear_margin_m: reach::CLEAR_MARGIN_M,
            samples_per_turn: 64.0,
            tolerance_mm: landing::DEFAULT_TOLERANCE_MM,
        }
    }
}

/// The most sample intervals one check may take: about half a minute of
/// work on one core in release (the four-minute bench show takes under a
/// million).
pub const MAX_SAMPLES: f64 = 2e8;

/// Why a show could not be checked.
#[derive(Clone, Debug, thiserror::Error)]
pub enum CheckError {
    /// The searches would need more than [`MAX_SAMPLES`] samples (or a
    /// pattern turns so fast that the count is not finite).
    #[error(
        "checking this show would take {samples:.3e} samples, more than the limit of {MAX_SAMPLES:.0e}; most are for {at}: the show is too long or its patterns turn too fast (check the sections' bars and the patterns' `beats` and turns)"
    )]
    TooMuchWork {
        /// Sample intervals needed.
        samples: f64,
        /// The section that needs the most, located: `section[i].bars`
        /// (bars A-B) at `FILE:LINE`.
        at: String,
    },
    /// The picture coverage would need more than
    /// [`coverage::MAX_TEXEL_TESTS`] texel tests.
    #[error(
        "checking how much of the pictures the LEDs reach would take {tests:.3e} texel tests, more than the limit of {max:.0e} (cue {cue}, `cue[{cue}]` at {at}, needs the most): use fewer LEDs, a lower frame rate or shorter painting cues",
        max = coverage::MAX_TEXEL_TESTS
    )]
    TooMuchPainting {
        /// The cue that needs the most, index from 0 in file order.
        cue: usize,
        /// Texel tests needed over the show.
        tests: f64,
        /// Where that cue is: `FILE:LINE`.
        at: String,
    },
    /// The show's song could not be read or decoded.
    #[error("{0}")]
    Music(#[from] crate::music::MusicError),
}

/// Checks the prepared show: physics, stage, light, hardware, landing,
/// picture coverage and the song, with `settings`; refuses a show whose checks would need
/// more than [`MAX_SAMPLES`] samples or [`coverage::MAX_TEXEL_TESTS`]
/// texel tests, before any of the work. The frames are read while the
/// motion is checked and the song is heard.
pub fn check(prepared: &Prepared, settings: &CheckSettings) -> Result<CheckReport, CheckError> {
    within_budget(prepared, settings)?;
    let ((frames, motion), music) = rayon::join(
        || {
            rayon::join(
                || frame_figures(prepared),
                || motion_figures(prepared, settings),
            )
        },
        || music::scan(prepared),
    );
    Ok(report_of(prepared, motion?, frames, music?, settings))
}

/// Sample intervals the checks of `show` need, over all searches.
/// The samples the checks need: in all, and per section.
fn samples_needed(
    show: &Show,
    motions: &[PropMotion],
    settings: &CheckSettings,
) -> (f64, Vec<f64>) {
    let mut total = 0.0;
    let mut per_section = vec![0.0; show.sections.len()];
    for m in motions {
        let p = &show.props[m.prop];
        // The extremes pass for every end, and a poi's slack pass.
        let passes = p.ends_m().len() + usize::from(p.kind == crate::model::PropKind::Poi);
        for piece in kin::pieces(show, m) {
            if let Some(i) = piece.span {
                let n = passes as f64 * prop::piece_samples(&m.spans[i], &piece, settings);
                total += n;
                if let Some(s) = per_section.get_mut(m.spans[i].section) {
                    *s += n;
                }
            }
        }
    }
    for (i, a) in motions.iter().enumerate() {
        for b in &motions[i + 1..] {
            for sa in &a.spans {
                if let Some(sb) = b.spans.iter().find(|s| s.section == sa.section) {
                    let n = 2.0 * collision::section_samples(sa, sb, settings);
                    total += n;
                    if let Some(s) = per_section.get_mut(sa.section) {
                        *s += n;
                    }
                }
            }
        }
    }
    (total, per_section)
}

/// Refuses a show whose checks would need more than [`MAX_SAMPLES`] samples,
/// or whose picture coverage would need more than
/// [`coverage::MAX_TEXEL_TESTS`] texel tests.
pub(crate) fn within_budget(
    prepared: &Prepared,
    settings: &CheckSettings,
) -> Result<(), CheckError> {
    let (show, motions) = (prepared.show(), prepared.motions());
    let (samples, per_section) = samples_needed(show, motions, settings);
    if samples.is_nan() || samples > MAX_SAMPLES {
        let most =
            (0..per_section.len()).max_by(|&a, &b| per_section[a].total_cmp(&per_section[b]));
        let at = most.map_or_else(
            || "the show".to_string(),
            |i| {
                let s = &show.sections[i];
                crate::diag::escape(&format!(
                    "`section[{i}].bars` (bars {}-{}) at {}:{}",
                    s.first_bar,
                    s.last_bar,
                    show.source.name,
                    show.source.line_col(s.offset).0
                ))
            },
        );
        return Err(CheckError::TooMuchWork { samples, at });
    }
    coverage::within_budget(show, motions).map_err(|e| painting_error(show, e))
}

fn painting_error(show: &Show, e: coverage::TooMuchPainting) -> CheckError {
    let line = show
        .cues
        .get(e.cue)
        .map_or(0, |c| show.source.line_col(c.offset).0);
    CheckError::TooMuchPainting {
        cue: e.cue,
        tests: e.tests,
        at: crate::diag::escape(&format!("{}:{line}", show.source.name)),
    }
}

/// What the checks read off the frame tables.
#[derive(Clone, Debug)]
pub(crate) struct FrameFigures {
    /// Flash, current and battery figures.
    pub light: light::LightScan,
    /// Size of each prop's compact table, bytes, in prop order (`None`
    /// where it could not be encoded).
    pub compact_table_bytes: Vec<Option<u64>>,
}

/// One pass over every frame of every prop: the light figures and the size
/// of each compact table.
fn frame_figures(prepared: &Prepared) -> FrameFigures {
    let (show, lights) = (prepared.show(), prepared.lights());
    let mut tally = light::LightTally::new(show);
    let mut counters: Vec<_> = (0..show.props.len())
        .map(|i| hardware::compact_counter(show, i))
        .collect();
    let result: Result<(), std::convert::Infallible> = prepared.for_each_block(|_, n, blocks| {
        rayon::join(
            || {
                if let Some(t) = tally.as_mut() {
                    t.push_block(show, lights, n, blocks);
                }
            },
            || {
                counters
                    .par_iter_mut()
                    .zip(blocks)
                    .zip(&lights.props)
                    .for_each(|((c, block), pl)| {
                        let leds = pl.leds as usize;
                        for frame in block[..n * leds].chunks(leds) {
                            if c.as_mut().is_some_and(|w| w.push_frame(frame).is_err()) {
                                *c = None;
                            }
                        }
                    });
            },
        );
        Ok(())
    });
    let Ok(()) = result;
    FrameFigures {
        light: tally.map_or_else(light::LightScan::default, |t| t.finish(show)),
        compact_table_bytes: counters
            .into_iter()
            .map(|c| c.and_then(|w| w.finish().ok()).map(|s| s.bytes_written))
            .collect(),
    }
}

/// The figures that come from the motion alone, before any frame is read:
/// each prop's physics and reach, the pairs' closest approaches, jumps and
/// picture coverage (see [`motion_figures`]).
#[derive(Clone, Debug)]
pub(crate) struct MotionFigures {
    /// Whether any prop moves at all (the stage figures need one).
    any: bool,
    centre: [f64; 2],
    props: Vec<PropFigures>,
    pairs: Vec<PairFigures>,
    hands: reach::Bounds,
    heads: reach::Bounds,
    /// Collision, slack, spin-rate and jump warnings.
    warnings: Vec<Warning>,
    paintings: Vec<coverage::PaintingCoverage>,
    coverage_warnings: Vec<Warning>,
}

/// The checks that need only the motion (the compile runs them while it
/// writes the tables), for a show already within the budget
/// ([`within_budget`]; the coverage pass still refuses its own part, which it
/// plans anyway).
pub(crate) fn motion_figures(
    prepared: &Prepared,
    settings: &CheckSettings,
) -> Result<MotionFigures, CheckError> {
    let (show, motions) = (prepared.show(), prepared.motions());
    let centre = reach::centre_line(show);
    let (scans, painted) = rayon::join(
        || -> Vec<prop::PropScan> {
            motions
                .par_iter()
                .map(|m| prop::scan_prop(show, m, settings, centre))
                .collect()
        },
        || coverage::scan(show, motions),
    );
    let (paintings, coverage_warnings) = painted.map_err(|e| painting_error(show, e))?;
    let mut pairs = Vec::new();
    let mut warnings = Vec::new();
    for (i, a) in motions.iter().enumerate() {
        for b in &motions[i + 1..] {
            let p = collision::scan_pair(show, a, b, settings);
            pairs.push(p.figures);
            warnings.extend(p.warnings);
        }
    }
    let mut hands = reach::Bounds::default();
    let mut heads = reach::Bounds::default();
    let mut props = Vec::new();
    for s in scans {
        hands.merge(&s.hands);
        heads.merge(&s.heads);
        warnings.extend(s.warnings);
        props.push(s.figures);
    }
    for (m, figures) in motions.iter().zip(&mut props) {
        let (joins, w) = jumps::joins(show, m, settings.jump_limit());
        figures.joins = joins;
        warnings.extend(w);
    }
    Ok(MotionFigures {
        any: !motions.is_empty(),
        centre,
        props,
        pairs,
        hands,
        heads,
        warnings,
        paintings,
        coverage_warnings,
    })
}

/// The whole report from the motion's figures and the frames' figures.
pub(crate) fn report_of(
    prepared: &Prepared,
    motion: MotionFigures,
    frames: FrameFigures,
    music: Option<music::MusicScan>,
    settings: &CheckSettings,
) -> CheckReport {
    let MotionFigures {
        any,
        centre,
        mut props,
        pairs,
        hands,
        heads,
        mut warnings,
        paintings,
        coverage_warnings,
    } = motion;
    let (show, lights) = (prepared.show(), prepared.lights());
    let light_scan = frames.light;
    for (pl, figures) in lights.props.iter().zip(&light_scan.props) {
        let name = &show.props[pl.prop].name;
        if let Some(p) = props.iter_mut().find(|p| &p.name == name) {
            figures.fill(p);
            // The scale the prepared show applied (the frames read here are
            // already dimmed, so they would call for none).
            p.brightness_scale = prepared.brightness_scale(pl.prop);
        }
    }
    warnings.extend(light_scan.warnings);
    let program_bytes = hardware::program_bytes(prepared);
    let (hardware, hardware_warnings) = hardware::scan(
        show,
        lights,
        &frames.compact_table_bytes,
        &program_bytes,
        settings.tolerance_mm,
    );
    for (prop, h) in show.props.iter().zip(hardware) {
        if let Some(p) = props.iter_mut().find(|p| p.name == prop.name) {
            p.hardware = Some(h);
        }
    }
    warnings.extend(hardware_warnings);
    // Only the changes that play count: a later cue may hide an earlier one.
    let playing: Vec<_> = lights
        .landings
        .iter()
        .filter(|l| lights.props[l.prop].plays(l.cue, l.frame))
        .cloned()
        .collect();
    let (cue_landings, landing_summary, landing_warnings) =
        landing::scan(show, &playing, settings.tolerance_mm);
    warnings.extend(overlap::scan(show, lights));
    warnings.extend(landing_warnings);
    warnings.extend(coverage_warnings);
    let music = music.map(|m| {
        warnings.extend(m.warnings);
        m.figures
    });
    let mut report = CheckReport {
        valid: true,
        title: show.title.clone(),
        duration_s: show.end_s(),
        props,
        pairs,
        stage: any.then(|| reach::stage(centre, &hands, &heads, settings.clear_margin_m)),
        limits: Some(report::Limits {
            spin_rate_turns_per_s: settings.spin_limit_turns_per_s,
            jump_m: settings.jump_limit(),
            gravity_m_s2: tension::G0,
        }),
        stage_flash: light_scan.stage_flash,
        cues: cue_landings,
        landing: Some(landing_summary),
        paintings,
        music,
        warnings,
        errors: Vec::new(),
        cautions: Vec::new(),
    };
    report.finish(show);
    report.cautions = cautions::cautions(show, &report.props);
    report
}
