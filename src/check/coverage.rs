//! Picture coverage: how much of each painting cue's picture the prop's
//! LEDs actually pass.
//!
//! A painting cue shows, on every LED and every frame, the picture's colour
//! where the LED is at the frame's midpoint ([`crate::cues`]). The picture
//! appears in the light only where the LEDs take their colours from it: a
//! visible texel (alpha above 0) counts as *covered* when some LED of the
//! prop, at the midpoint of some frame while the cue paints, is within one
//! texel width of its centre, measured in the plane (texel width =
//! `width_m / picture width`). So more LEDs, a higher frame rate and a slower
//! tempo all cover more: an LED that crosses more than a texel per frame
//! leaves texels between its frames unshown. The cue paints during its bars,
//! less the bars where a later cue on the same prop overrides it and the
//! stretches where the prop rests (a resting prop is in no plane and paints
//! nothing).
//!
//! Each LED is placed in the picture's own frame with
//! [`crate::cues::picture_map`], exactly as the frames are painted. The figure
//! `max_frame_travel_texels` reports how far an LED moves across the picture
//! between one frame's midpoint and the next.
//!
//! The work is `LED-frames x texels tested per LED`, and a pass over the
//! picture's texels for each painting cue to count them; a show that would
//! need more than [`MAX_TEXEL_TESTS`] tests in all is refused before any is
//! done. The frames
//! run in parallel chunks that mark a shared bit set; the result (a union)
//! does not depend on the order.

use std::sync::atomic::{AtomicU64, Ordering};

use rayon::prelude::*;
use serde::Serialize;

use super::kin::pieces;
use super::report::{Warning, WarningKind, When, r9, r9_opt};
use crate::cues::{frame_of, picture_map};
use crate::model::{Painting, Prop, Show, Strip};
use crate::motion::{PropMotion, Span};

/// A painting whose LEDs pass less than this fraction of its visible
/// texels warns: our own choice, not a standard.
pub const MIN_COVERED_FRACTION: f64 = 0.9;

/// The most texel tests the coverage pass may make over a whole show:
/// about 20 s of work on two cores in release (a one-minute 144-LED staff
/// painting a 256-texel-wide picture 1.6 m wide needs about 4.4e8, half a
/// second; 1024 texels wide, 1.8e9 and 2 to 4 s). Counting a picture's
/// texels afterwards is one test a texel (about 5 ns each, on one core).
pub const MAX_TEXEL_TESTS: f64 = 1e10;

/// Frames in one parallel chunk of a stretch.
const CHUNK_STEPS: usize = 512;

/// The coverage figures of one painting cue.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PaintingCoverage {
    /// Index into the show's cues, from 0 in file order.
    pub cue: usize,
    /// The prop's name.
    pub prop: String,
    /// The picture file as the show names it.
    pub file: String,
    /// First and last bar of the cue, inclusive.
    pub bars: [u32; 2],
    /// Visible texels of the picture (alpha above 0).
    pub texels: usize,
    /// Visible texels that some LED is within one texel width of, at the
    /// midpoint of some frame (where it takes its colour).
    pub covered_texels: usize,
    /// `covered_texels / texels` (null for a picture with no visible texel).
    #[serde(serialize_with = "r9_opt")]
    pub covered_fraction: Option<f64>,
    /// Texel width in the plane, metres: the distance that counts as passing.
    #[serde(serialize_with = "r9")]
    pub texel_m: f64,
    /// Seconds during which the cue paints (the prop moves and no later cue
    /// overrides it).
    #[serde(serialize_with = "r9")]
    pub painting_s: f64,
    /// Farthest an LED moves across the picture from one frame's midpoint to
    /// the next, in texel widths (null when the cue never paints). Above 1,
    /// texels along the LEDs' paths can fall between frames.
    #[serde(serialize_with = "r9_opt")]
    pub max_frame_travel_texels: Option<f64>,
}

/// Why the coverage pass refuses a show.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TooMuchPainting {
    /// The cue that needs the most work, index from 0.
    pub cue: usize,
    /// Texel tests needed over the whole show.
    pub tests: f64,
}

/// One stretch of a cue's painting: a span at one tempo.
#[derive(Clone, Copy, Debug)]
struct Stretch {
    span: usize,
    /// Global beats.
    start: f64,
    end: f64,
    /// The first frame whose midpoint is in the stretch.
    first_frame: u64,
    /// Frames whose midpoints are in the stretch.
    steps: usize,
}

/// What a painting cue needs: its stretches and the work they take.
#[derive(Clone, Debug)]
struct Plan {
    cue: usize,
    motion: usize,
    stretches: Vec<Stretch>,
    tests: f64,
}

/// Half-open intervals of `[a, b)` not covered by `cuts`.
fn subtract(a: f64, b: f64, cuts: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut cuts: Vec<(f64, f64)> = cuts.to_vec();
    cuts.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut out = Vec::new();
    let mut at = a;
    for (c0, c1) in cuts {
        if c1 <= at || c0 >= b {
            continue;
        }
        if c0 > at {
            out.push((at, c0));
        }
        at = at.max(c1);
    }
    if at < b {
        out.push((at, b));
    }
    out
}

/// The beat range of cue `ci`, global beats.
fn cue_beats(show: &Show, ci: usize) -> (f64, f64) {
    let c = &show.cues[ci];
    (
        show.tempo.beat_of_bar(c.first_bar),
        show.tempo.beat_of_bar(c.last_bar + 1),
    )
}

/// Columns times rows of texels tested around one LED's place (a texel
/// width each side).
fn tests_per_point(painting: &Painting) -> f64 {
    let pic = &painting.picture;
    let sx = painting.placement.width_m / f64::from(pic.width());
    let sy = painting.placement.height_m / f64::from(pic.height());
    let cols = 3.0;
    let rows = (2.0 * sx / sy).ceil() + 1.0;
    cols * rows
}

/// The plans of every painting cue of `show`.
fn plans(show: &Show, motions: &[PropMotion]) -> Vec<Plan> {
    let mut out = Vec::new();
    for (ci, cue) in show.cues.iter().enumerate() {
        let Some(painting) = cue.painting() else {
            continue;
        };
        let Some(mi) = motions.iter().position(|m| m.prop == cue.prop) else {
            continue;
        };
        let motion = &motions[mi];
        let prop = &show.props[cue.prop];
        let (a, b) = cue_beats(show, ci);
        let later: Vec<(f64, f64)> = show
            .cues
            .iter()
            .enumerate()
            .skip(ci + 1)
            .filter(|(_, c)| c.prop == cue.prop)
            .map(|(j, _)| cue_beats(show, j))
            .collect();
        let shown = subtract(a, b, &later);
        let spots = prop.led_spots();
        let per_point = tests_per_point(painting);
        let rate = show.frame_rate_hz;
        let mut stretches = Vec::new();
        // One test for every texel of the picture, counted afterwards.
        let pic = &painting.picture;
        let mut tests = f64::from(pic.width()) * f64::from(pic.height());
        for piece in pieces(show, motion) {
            let Some(si) = piece.span else {
                continue;
            };
            for &(x0, x1) in &shown {
                let (s0, s1) = (x0.max(piece.start_beat), x1.min(piece.end_beat));
                if s1 <= s0 {
                    continue;
                }
                let first = frame_of(show.tempo.time_at_beat(s0), rate);
                let end = frame_of(show.tempo.time_at_beat(s1), rate);
                let n = end.saturating_sub(first);
                tests += n as f64 * spots.len() as f64 * per_point;
                stretches.push(Stretch {
                    span: si,
                    start: s0,
                    end: s1,
                    first_frame: first,
                    steps: usize::try_from(n).unwrap_or(usize::MAX),
                });
            }
        }
        out.push(Plan {
            cue: ci,
            motion: mi,
            stretches,
            tests,
        });
    }
    out
}

/// Texel tests the coverage pass of `show` needs (a float, for budgets).
pub fn tests_needed(show: &Show, motions: &[PropMotion]) -> f64 {
    plans(show, motions).iter().map(|p| p.tests).sum()
}

/// Refuses a show whose coverage pass would make more than
/// [`MAX_TEXEL_TESTS`] texel tests.
pub fn within_budget(show: &Show, motions: &[PropMotion]) -> Result<(), TooMuchPainting> {
    budget(&plans(show, motions))
}

fn budget(plans: &[Plan]) -> Result<(), TooMuchPainting> {
    let tests: f64 = plans.iter().map(|p| p.tests).sum();
    if tests.is_nan() || tests > MAX_TEXEL_TESTS {
        let cue = plans
            .iter()
            .max_by(|a, b| a.tests.total_cmp(&b.tests))
            .map_or(0, |p| p.cue);
        return Err(TooMuchPainting { cue, tests });
    }
    Ok(())
}

/// The picture's texel grid in its own frame, metres: texel (i, j) has its
/// centre at `((i + 0.5) sx, (j + 0.5) sy)` (x right, y down).
struct Grid<'a> {
    w: usize,
    h: usize,
    sx: f64,
    sy: f64,
    /// Distance that counts as passing, m.
    reach: f64,
    /// Its square, m^2.
    reach2: f64,
    /// One bit per texel, row-major.
    bits: &'a [AtomicU64],
}

/// The largest integer not above `x` (for |x| well within i64), without a
/// call into the maths library.
fn floor_i64(x: f64) -> i64 {
    let t = x as i64;
    if (t as f64) > x { t - 1 } else { t }
}

impl Grid<'_> {
    /// Marks every texel whose centre lies within the passing distance of
    /// the point `p`, in continuous pixel coordinates (texel (i, j) has its
    /// centre at (i + 0.5, j + 0.5)).
    fn mark(&self, p: [f64; 2]) {
        // Texel i has its centre at i + 0.5: those within r (rx texels) of
        // x have x - rx - 0.5 <= i <= x + rx - 0.5.
        let range = |x: f64, rx: f64, n: usize| -> Option<(usize, usize)> {
            let lo = x - rx - 0.5;
            let hi = x + rx - 0.5;
            if !(hi >= 0.0 && lo <= n as f64 - 1.0) {
                return None;
            }
            let i0 = (-floor_i64(-lo)).max(0);
            let i1 = floor_i64(hi).min(n as i64 - 1);
            (i0 <= i1).then_some((i0 as usize, i1 as usize))
        };
        let Some((i0, i1)) = range(p[0], self.reach / self.sx, self.w) else {
            return;
        };
        let Some((j0, j1)) = range(p[1], self.reach / self.sy, self.h) else {
            return;
        };
        for j in j0..=j1 {
            let ey = (j as f64 + 0.5 - p[1]) * self.sy;
            for i in i0..=i1 {
                let k = j * self.w + i;
                let (word, bit) = (k / 64, 1u64 << (k % 64));
                if self.bits[word].load(Ordering::Relaxed) & bit != 0 {
                    continue;
                }
                let ex = (i as f64 + 0.5 - p[0]) * self.sx;
                if ex * ex + ey * ey <= self.reach2 {
                    self.bits[word].fetch_or(bit, Ordering::Relaxed);
                }
            }
        }
    }
}

/// What one chunk of frames found: the farthest an LED moved from one
/// frame's midpoint to the next (metres, in the picture's frame) and the
/// farthest an LED got from the anchor (metres).
#[derive(Clone, Copy, Default)]
struct ChunkFigures {
    chord_m: f64,
    far_m: f64,
}

/// Marks the texels within a texel width of the LEDs at `along` metres from
/// the grip at the midpoints of frames `i0..i1` of `stretch` (of `span`),
/// and measures the LEDs' travel from each frame to the next, from the frame
/// before `i0` (the previous chunk's last) on.
fn run_chunk(
    show: &Show,
    span: &Span,
    painting: &Painting,
    along: &[f64],
    stretch: &Stretch,
    (i0, i1): (usize, usize),
    grid: &Grid<'_>,
) -> ChunkFigures {
    let rate = f64::from(show.frame_rate_hz);
    let mut prev: Vec<[f64; 2]> = Vec::with_capacity(along.len());
    let mut now: Vec<[f64; 2]> = Vec::with_capacity(along.len());
    let (mut chord2, mut far2) = (0.0f64, 0.0f64);
    let from = i0.saturating_sub(1);
    for i in from..i1 {
        let k = stretch.first_frame + i as u64;
        let x = show.tempo.beat_at_time((k as f64 + 0.5) / rate);
        let s = x - span.start_beat;
        let hand = span.hand.point(span.phase(s));
        let dir = span.direction(s);
        let map = picture_map(painting, span, s);
        now.clear();
        for &a in along {
            let p = [hand[0] + a * dir[0], hand[1] + a * dir[1]];
            if i >= i0 {
                far2 = far2.max(p[0] * p[0] + p[1] * p[1]);
            }
            now.push(map.apply(span.unmirrored(p)));
        }
        if i >= i0 {
            for q in &now {
                grid.mark(*q);
            }
        }
        if i > from {
            for (p, q) in prev.iter().zip(&now) {
                let (dx, dy) = ((q[0] - p[0]) * grid.sx, (q[1] - p[1]) * grid.sy);
                chord2 = chord2.max(dx * dx + dy * dy);
            }
        }
        std::mem::swap(&mut prev, &mut now);
    }
    ChunkFigures {
        chord_m: chord2.sqrt(),
        far_m: far2.sqrt(),
    }
}

/// The coverage of every painting cue of `show` (in cue order), with a
/// `coverage` warning for each below [`MIN_COVERED_FRACTION`]; refuses a
/// show over the budget ([`within_budget`]) before doing any work.
pub fn scan(
    show: &Show,
    motions: &[PropMotion],
) -> Result<(Vec<PaintingCoverage>, Vec<Warning>), TooMuchPainting> {
    let plans = plans(show, motions);
    budget(&plans)?;
    let mut figures = Vec::new();
    let mut warnings = Vec::new();
    for plan in plans {
        let cue = &show.cues[plan.cue];
        let Some(painting) = cue.painting() else {
            continue;
        };
        let motion = &motions[plan.motion];
        let prop = &show.props[cue.prop];
        let pic = &painting.picture;
        let (w, h) = (pic.width() as usize, pic.height() as usize);
        let sx = painting.placement.width_m / w as f64;
        let sy = painting.placement.height_m / h as f64;
        let bits: Vec<AtomicU64> = (0..(w * h).div_ceil(64))
            .map(|_| AtomicU64::new(0))
            .collect();
        let grid = Grid {
            w,
            h,
            sx,
            sy,
            reach: sx,
            reach2: sx * sx,
            bits: &bits,
        };
        let along: Vec<f64> = prop.led_spots().iter().map(|s| s.along_m).collect();
        let jobs: Vec<(usize, usize, usize)> = plan
            .stretches
            .iter()
            .enumerate()
            .flat_map(|(k, st)| {
                let chunks = st.steps.div_ceil(CHUNK_STEPS).max(1);
                (0..chunks)
                    .map(move |c| (k, c * CHUNK_STEPS, ((c + 1) * CHUNK_STEPS).min(st.steps)))
            })
            .collect();
        let found: Vec<(usize, ChunkFigures)> = jobs
            .par_iter()
            .map(|&(k, i0, i1)| {
                let st = &plan.stretches[k];
                let span = &motion.spans[st.span];
                (
                    k,
                    run_chunk(show, span, painting, &along, st, (i0, i1), &grid),
                )
            })
            .collect();
        let mut travel: Option<f64> = None;
        let mut far_m = 0.0f64;
        for (_, f) in &found {
            travel = Some(travel.map_or(f.chord_m, |t: f64| t.max(f.chord_m)));
            far_m = far_m.max(f.far_m);
        }
        let mut texels = 0usize;
        let mut covered = 0usize;
        let mut beyond = 0usize;
        // A texel's distance from the anchor: the picture is turned and
        // moved as a whole, so it is the distance in the picture's own
        // frame from the anchor's place there (pixel steps times sx, sy).
        let anchor = painting.placement.to_pixel(pic, 0.0).apply([0.0, 0.0]);
        let reach2 = (far_m + sx) * (far_m + sx);
        for j in 0..h {
            for i in 0..w {
                if pic.texel(i as u32, j as u32)[3] <= 0.0 {
                    continue;
                }
                texels += 1;
                let k = j * w + i;
                if bits[k / 64].load(Ordering::Relaxed) & (1u64 << (k % 64)) != 0 {
                    covered += 1;
                } else {
                    let dx = (i as f64 + 0.5 - anchor[0]) * sx;
                    let dy = (j as f64 + 0.5 - anchor[1]) * sy;
                    if dx * dx + dy * dy > reach2 {
                        beyond += 1;
                    }
                }
            }
        }
        let painting_s: f64 = plan
            .stretches
            .iter()
            .map(|s| show.tempo.time_at_beat(s.end) - show.tempo.time_at_beat(s.start))
            .sum();
        let fraction = (texels > 0).then(|| covered as f64 / texels as f64);
        let travel_texels = travel.map(|t| t / sx);
        let entry = PaintingCoverage {
            cue: plan.cue,
            prop: prop.name.clone(),
            file: painting.file.clone(),
            bars: [cue.first_bar, cue.last_bar],
            texels,
            covered_texels: covered,
            covered_fraction: fraction,
            texel_m: sx,
            painting_s,
            max_frame_travel_texels: travel_texels,
        };
        if let Some(f) = fraction.filter(|&f| f < MIN_COVERED_FRACTION) {
            warnings.push(warning(show, &entry, f, beyond, far_m, prop));
        }
        figures.push(entry);
    }
    Ok((figures, warnings))
}

/// The `coverage` warning of `entry` (covered fraction `f`), with advice
/// fitting what was found: `beyond` uncovered texels lie beyond the `far_m`
/// metres the LEDs reach from the anchor; the rest lie between the LEDs'
/// paths.
fn warning(
    show: &Show,
    entry: &PaintingCoverage,
    f: f64,
    beyond: usize,
    far_m: f64,
    prop: &Prop,
) -> Warning {
    let cue = &show.cues[entry.cue];
    let start = show.tempo.beat_of_bar(cue.first_bar);
    let end = show.tempo.beat_of_bar(cue.last_bar + 1);
    let dur = show.tempo.time_at_beat(end) - show.tempo.time_at_beat(start);
    let name = &entry.prop;
    let texel_mm = entry.texel_m * 1000.0;
    let mut advice: Vec<String> = Vec::new();
    if entry.painting_s <= 0.0 {
        advice.push(
            "the prop rests (or later cues override this one) throughout: place a pattern in these bars"
                .into(),
        );
    } else {
        let missed = entry.texels - entry.covered_texels;
        if beyond > 0 {
            advice.push(format!(
                "{beyond} of the {missed} missed texels lie beyond the {far_m:.3} m the LEDs reach from the anchor: use a smaller picture or one nearer the anchor, or a longer strip"
            ));
        }
        if missed > beyond {
            // The widest spacing of neighbouring LEDs on a strip.
            let gap = prop
                .strips
                .iter()
                .filter_map(Strip::pitch_m)
                .reduce(f64::max);
            let spacing = match gap {
                Some(g) => format!("LEDs up to {:.1} mm apart on a strip", g * 1000.0),
                None => format!("{} LED(s) at fixed points", prop.leds),
            };
            advice.push(format!(
                "{} lie between the places where the LEDs take their colours ({spacing}, texels {texel_mm:.1} mm): use more LEDs on the strip, or a larger picture",
                missed - beyond
            ));
            if let Some(t) = entry.max_frame_travel_texels.filter(|&t| t > 1.0) {
                advice.push(format!(
                    "the LEDs cross up to {t:.1} texels from one frame to the next: a higher frame rate or a slower tempo shows more of them"
                ));
            }
        }
    }
    Warning {
        kind: WarningKind::Coverage,
        count: 1,
        bars: [0, 0],
        line: None,
        cue: None,
        each: Vec::new(),
        expected: None,
        prop: name.clone(),
        other_prop: None,
        at: When::at_beat(show, start),
        duration_s: Some(dur),
        value: Some(100.0 * f),
        limit: Some(100.0 * MIN_COVERED_FRACTION),
        unit: Some("%"),
        message: format!(
            "{name}: cue {} paints `{}` in bars {}-{}, but its LEDs come within a texel ({texel_mm:.1} mm) of only {:.1} % of its {} visible texels on the frames; {}",
            entry.cue,
            entry.file,
            cue.first_bar,
            cue.last_bar,
            100.0 * f,
            entry.texels,
            advice.join("; ")
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn subtracting_intervals_leaves_the_uncovered_pieces() {
        assert_eq!(subtract(0.0, 10.0, &[]), vec![(0.0, 10.0)]);
        assert_eq!(
            subtract(0.0, 10.0, &[(8.0, 12.0), (2.0, 3.0), (2.5, 4.0)]),
            vec![(0.0, 2.0), (4.0, 8.0)]
        );
        assert_eq!(subtract(0.0, 10.0, &[(-1.0, 11.0)]), vec![]);
        assert_eq!(
            subtract(4.0, 8.0, &[(0.0, 4.0), (8.0, 9.0)]),
            vec![(4.0, 8.0)]
        );
    }

    #[test]
    fn a_point_marks_the_texels_within_one_texel_of_it() {
        // A 10 x 10 grid of 1 m texels: a point marks exactly the texels
        // whose centres lie within 1 m of it (plane geometry: Euclidean
        // distance), at the picture's edges and beyond them too.
        for p in [[4.2, 5.7], [0.1, 0.1], [9.9, 0.0], [-0.8, 5.0], [5.0, 5.0]] {
            let bits: Vec<AtomicU64> = (0..2).map(|_| AtomicU64::new(0)).collect();
            let g = Grid {
                w: 10,
                h: 10,
                sx: 1.0,
                sy: 1.0,
                reach: 1.0,
                reach2: 1.0,
                bits: &bits,
            };
            g.mark(p);
            for j in 0..10 {
                for i in 0..10 {
                    let (cx, cy) = (i as f64 + 0.5, j as f64 + 0.5);
                    let d2 = (cx - p[0]) * (cx - p[0]) + (cy - p[1]) * (cy - p[1]);
                    let k = j * 10 + i;
                    let set = bits[k / 64].load(Ordering::Relaxed) & (1 << (k % 64)) != 0;
                    assert_eq!(set, d2 <= 1.0, "texel ({i}, {j}) for {p:?}");
                }
            }
        }
    }

    #[test]
    fn a_chunk_measures_the_travel_from_the_frame_before_it() {
        // An LED 0.5 m out on a plain circle, one turn in 4 beats at 60 bpm
        // and 100 frames/s, moves 2 x 0.5 sin(pi / 400) m between frames'
        // midpoints (uniform circular motion): so does it between the last
        // frame of one chunk and the first of the next.
        let text = "[show]\nframe_rate = 100\nbpm = 60\nbeats_per_bar = 4\n\
                    [prop.p]\ntether_m = 0.5\nanchor_m = [0.0, 1.5, 0.0]\n\
                    [pattern.x]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0\nhead_turns = 1\n\
                    [[section]]\nbars = [1, 1]\np = \"x\"\n";
        let mut show = crate::show::parse("circle.toml", text.to_string()).unwrap();
        let picture = crate::picture::Picture::from_srgba8(1, 1, &[255; 4]).unwrap();
        let painting = Painting {
            file: "white.png".into(),
            picture: std::sync::Arc::new(picture),
            placement: crate::picture::PicturePlacement {
                centre_m: [0.0, 0.0],
                width_m: 2.0,
                height_m: 2.0,
                rotation_deg: 0.0,
                fixed_to: crate::picture::FixedTo::Stage,
            },
        };
        show.cues.push(crate::model::Cue {
            offset: 0,
            prop: 0,
            first_bar: 1,
            last_bar: 1,
            look: crate::model::Look::Image(painting.clone()),
        });
        let motions = crate::motion::simulate(&show);
        let plan = &plans(&show, &motions)[0];
        let stretch = &plan.stretches[0];
        let span = &motions[0].spans[stretch.span];
        let bits = [AtomicU64::new(0)];
        let grid = Grid {
            w: 1,
            h: 1,
            sx: 2.0,
            sy: 2.0,
            reach: 2.0,
            reach2: 4.0,
            bits: &bits,
        };
        let run = |i0, i1| run_chunk(&show, span, &painting, &[0.5], stretch, (i0, i1), &grid);
        let want = 2.0 * 0.5 * crate::num::sin(std::f64::consts::PI / 400.0);
        for (i0, i1) in [(0, 2), (1, 2), (200, 201)] {
            let chord = run(i0, i1).chord_m;
            assert!(
                (chord - want).abs() < 1e-12,
                "{i0}..{i1}: {chord} vs {want}"
            );
        }
        assert_eq!(run(0, 1).chord_m, 0.0);
    }

    #[test]
    fn floor_matches_the_maths_library() {
        for x in [
            0.0,
            -0.0,
            0.5,
            -0.5,
            1.0,
            -1.0,
            2.999,
            -2.999,
            1e6 + 0.5,
            -1e6 - 0.5,
        ] {
            assert_eq!(floor_i64(x), x.floor() as i64, "{x}");
        }
    }
}
