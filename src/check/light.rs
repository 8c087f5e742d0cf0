//! The light checks of `glowscore check`: flash safety, LED current and
//! battery time, from the frame tables the props will show.
//!
//! # Flash safety
//!
//! Each prop is one light source: the mean linear light of its LEDs on the
//! frame (the LED bytes read as linear light, as [`crate::flash::led_light`] does;
//! on a plain head every LED shows the same colour, so it is that colour).
//! It goes to [`crate::flash::FlashAnalyser`], which counts general and red flashes
//! in every one-second window after the W3C WCAG 2.x definitions (see
//! [`crate::flash`] for what comes from WCAG and what is our reading). The
//! whole stage is a second kind of source: the mean, channel by channel, of
//! every prop's linear light on that frame. That is the light an eye gets
//! from the whole stage when every prop fills the same share of the view;
//! one prop flashing among two shows as a flash of half the size. The stage
//! is analysed only when there are at least two props (with one it is the
//! prop itself), and its warnings name the prop `(stage)`, a name no prop can
//! have. A `flash` warning marks every stretch where a one-second window holds
//! more than three general or three red flashes. The thresholds were written
//! for screens; here they are applied to props as a conservative guide, not
//! as a certification.
//!
//! # LED current and battery
//!
//! A frame's current is `channel_current_a x (sum of every byte of every
//! LED) / 255 + idle_current_a`, the bytes those of the table: each channel draws its
//! full-brightness current in proportion to its byte (the LEDs are driven by
//! PWM or a linear current set from the byte). Peak and mean are over every
//! frame of the show; battery time is `battery_mah / 1000 / mean current`,
//! hours, ignoring the battery's voltage sag and the driver's efficiency.
//! Frames above `max_current_a` give a `current` warning; stretches less than
//! a second apart are merged into one warning. With `brightness_limit = true`
//! the report gives the scale on the prop's brightness that would keep the
//! peak within `max_current_a`, allowing for rounding to bytes.
//!
//! Work: one pass over the frames, no allocation per frame.

use serde::Serialize;

use super::report::{PropFigures, Warning, WarningKind, When, r9};
use crate::cues::{self, Lights};
use crate::flash::{FlashAnalyser, FlashReport, MAX_FLASHES};
use crate::model::Show;
use crate::power::brightness_scale;
use crate::power::current_of_sum;

/// The prop name that stage-wide flash warnings carry.
pub const STAGE: &str = "(stage)";

/// Current stretches closer than this are one warning, seconds.
pub const CURRENT_MERGE_S: f64 = 1.0;

/// The most flashes in any one-second window of one light source.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct FlashFigures {
    /// Most general flashes in a one-second window (WCAG 2.x).
    pub max_general: usize,
    /// Start of the first such window, seconds from frame 0.
    #[serde(serialize_with = "r9")]
    pub max_general_at_s: f64,
    /// Most red flashes in a one-second window (WCAG 2.x).
    pub max_red: usize,
    /// Start of the first such window, seconds from frame 0.
    #[serde(serialize_with = "r9")]
    pub max_red_at_s: f64,
    /// Most flashes a one-second window may hold, general and red each (3).
    pub limit: usize,
    /// True when no window holds more than `limit` of either kind.
    pub passes: bool,
}

impl FlashFigures {
    fn of(r: &FlashReport) -> FlashFigures {
        FlashFigures {
            max_general: r.max_general.flashes,
            max_general_at_s: r.max_general.start_s,
            max_red: r.max_red.flashes,
            max_red_at_s: r.max_red.start_s,
            limit: MAX_FLASHES,
            passes: r.passes(),
        }
    }
}

/// The light figures of one prop over the whole show.
#[derive(Clone, Debug, PartialEq)]
pub struct PropLightFigures {
    /// Flash counts of the prop's LEDs.
    pub flash: FlashFigures,
    /// Highest current of any frame, amperes.
    pub peak_current_a: f64,
    /// Start of the first frame with that current.
    pub peak_current_at: Option<When>,
    /// Mean current over every frame, amperes.
    pub mean_current_a: f64,
    /// Battery time at the mean current, hours (with `battery_mah`).
    pub battery_hours: Option<f64>,
    /// Scale on brightness that keeps the peak within `max_current_a`, 0..=1
    /// (with `brightness_limit = true` and `max_current_a`).
    pub brightness_scale: Option<f64>,
}

impl PropLightFigures {
    /// Copies the figures into the prop's report entry.
    pub fn fill(&self, p: &mut PropFigures) {
        p.peak_current_a = Some(self.peak_current_a);
        p.peak_current_at = self.peak_current_at;
        p.mean_current_a = Some(self.mean_current_a);
        p.battery_hours = self.battery_hours;
        p.brightness_scale = self.brightness_scale;
        p.flash = Some(self.flash);
    }
}

/// Everything the light checks found (nothing, by default: a show without
/// frames).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LightScan {
    /// Per prop, in prop order.
    pub props: Vec<PropLightFigures>,
    /// The whole stage's flash counts (two props or more).
    pub stage_flash: Option<FlashFigures>,
    /// Flash and current warnings, unsorted.
    pub warnings: Vec<Warning>,
}

/// A stretch of frames over the current limit: first frame, one past the
/// last, highest current.
#[derive(Clone, Copy, Debug)]
struct Over {
    first: u64,
    end: u64,
    peak_a: f64,
}

/// One prop's running figures.
#[derive(Clone, Debug)]
struct PropTally {
    analyser: FlashAnalyser,
    peak: (f64, u64),
    sum: f64,
    over: Vec<Over>,
}

/// The flash and current figures, gathered one frame at a time (so that the
/// compile can gather them while it writes the tables).
#[derive(Clone, Debug)]
pub struct LightTally {
    rate: f64,
    merge_frames: u64,
    props: Vec<PropTally>,
    stage: Option<FlashAnalyser>,
    /// Frames taken so far.
    frames: u64,
}

impl LightTally {
    /// An empty tally for the props of `show`; `None` for a show whose frame
    /// rate is 0 (only a hand-built one: it has no frames).
    pub fn new(show: &Show) -> Option<LightTally> {
        let rate = f64::from(show.frame_rate_hz);
        let fresh = FlashAnalyser::new(rate).ok()?;
        let n = show.props.len();
        Some(LightTally {
            rate,
            merge_frames: (CURRENT_MERGE_S * rate).ceil() as u64,
            props: (0..n)
                .map(|_| PropTally {
                    analyser: fresh.clone(),
                    peak: (f64::NEG_INFINITY, 0),
                    sum: 0.0,
                    over: Vec::new(),
                })
                .collect(),
            stage: (n >= 2).then_some(fresh),
            frames: 0,
        })
    }

    /// Takes the next frame: `frames[i]` holds prop `i`'s LED bytes.
    ///
    /// A prop is one light source: the mean linear light of its LEDs (all of
    /// them the same colour on a plain head). Its current is the sum over
    /// every channel of every LED.
    pub fn push(&mut self, show: &Show, frames: &[&[[u8; 3]]]) {
        let k = self.frames;
        self.frames += 1;
        let mut mean = [0.0f64; 3];
        for ((t, prop), frame) in self.props.iter_mut().zip(&show.props).zip(frames) {
            let mut sum = [0u64; 3];
            for px in *frame {
                for c in 0..3 {
                    sum[c] += u64::from(px[c]);
                }
            }
            let scale = 255.0 * frame.len().max(1) as f64;
            let light = palette::LinSrgb::new(
                sum[0] as f64 / scale,
                sum[1] as f64 / scale,
                sum[2] as f64 / scale,
            );
            t.analyser.push(light);
            mean[0] += light.red;
            mean[1] += light.green;
            mean[2] += light.blue;
            let a = current_of_sum(
                sum[0] + sum[1] + sum[2],
                prop.channel_current_a,
                prop.idle_current_a,
            );
            t.sum += a;
            if a > t.peak.0 {
                t.peak = (a, k);
            }
            if prop.max_current_a.is_some_and(|max| a > max) {
                match t.over.last_mut() {
                    Some(o) if k <= o.end + self.merge_frames => {
                        o.end = k + 1;
                        o.peak_a = o.peak_a.max(a);
                    }
                    _ => t.over.push(Over {
                        first: k,
                        end: k + 1,
                        peak_a: a,
                    }),
                }
            }
        }
        if let Some(s) = self.stage.as_mut() {
            let d = self.props.len() as f64;
            s.push(palette::LinSrgb::new(mean[0] / d, mean[1] / d, mean[2] / d));
        }
    }

    /// The figures and warnings of every frame taken.
    pub fn finish(self, show: &Show) -> LightScan {
        let rate = self.rate;
        let frames = self.frames;
        let when = |t: f64| When::at_beat(show, show.tempo.beat_at_time(t));
        let mut warnings = Vec::new();
        let mut props = Vec::with_capacity(self.props.len());
        for (t, prop) in self.props.into_iter().zip(&show.props) {
            let report = t.analyser.finish();
            flash_warnings(&report, &prop.name, &when, &mut warnings);
            let idle = prop.idle_current_a;
            let (peak_a, peak_k) = if frames == 0 { (idle, 0) } else { t.peak };
            let mean_a = if frames == 0 {
                idle
            } else {
                t.sum / frames as f64
            };
            if let Some(max) = prop.max_current_a {
                for o in &t.over {
                    let start = o.first as f64 / rate;
                    warnings.push(Warning {
                        kind: WarningKind::Current,
                        count: 1,
                        bars: [0, 0],
                        line: None,
                        cue: None,
            each: Vec::new(),
            expected: None,
                        prop: prop.name.clone(),
                        other_prop: None,
                        at: when(start),
                        duration_s: Some((o.end - o.first) as f64 / rate),
                        value: Some(o.peak_a),
                        limit: Some(max),
                        unit: Some("A"),
                        message: format!(
                            "{} draws up to {:.3} A from its LEDs, more than its max_current_a of {:.3} A",
                            prop.name, o.peak_a, max
                        ),
                    });
                }
            }
            props.push(PropLightFigures {
                flash: FlashFigures::of(&report),
                peak_current_a: peak_a,
                peak_current_at: (frames > 0).then(|| when(peak_k as f64 / rate)),
                mean_current_a: mean_a,
                battery_hours: prop
                    .battery_mah
                    .filter(|_| mean_a > 0.0)
                    .map(|mah| mah / 1000.0 / mean_a),
                brightness_scale: match (prop.brightness_limit, prop.max_current_a) {
                    (true, Some(max)) => Some(brightness_scale(
                        peak_a,
                        max,
                        prop.leds,
                        prop.channel_current_a,
                        idle,
                    )),
                    _ => None,
                },
            });
        }
        let stage_flash = self.stage.map(|s| {
            let report = s.finish();
            flash_warnings(&report, STAGE, &when, &mut warnings);
            FlashFigures::of(&report)
        });
        LightScan {
            props,
            stage_flash,
            warnings,
        }
    }
}

/// Runs the flash and current checks over every frame of `lights`.
pub fn scan(show: &Show, lights: &Lights) -> LightScan {
    let Some(mut tally) = LightTally::new(show) else {
        return LightScan::default();
    };
    let result: Result<(), std::convert::Infallible> =
        cues::for_each_block(show, lights, show.frame_count(), |_, n, blocks| {
            tally.push_block(show, lights, n, blocks);
            Ok(())
        });
    let Ok(()) = result;
    tally.finish(show)
}

impl LightTally {
    /// Takes `n` frames at once: `blocks[i]` holds them for prop `i`, one
    /// after the other (as [`cues::for_each_block`] hands them over).
    pub fn push_block(&mut self, show: &Show, lights: &Lights, n: usize, blocks: &[Vec<[u8; 3]>]) {
        let mut frame: Vec<&[[u8; 3]]> = Vec::with_capacity(blocks.len());
        for j in 0..n {
            frame.clear();
            for (b, pl) in blocks.iter().zip(&lights.props) {
                let leds = pl.leds as usize;
                frame.push(&b[j * leds..(j + 1) * leds]);
            }
            self.push(show, &frame);
        }
    }
}

/// One `flash` warning per over-limit stretch of `report`, for source `name`.
fn flash_warnings(
    report: &FlashReport,
    name: &str,
    when: &dyn Fn(f64) -> When,
    out: &mut Vec<Warning>,
) {
    let source = if name == STAGE {
        "the whole stage".to_string()
    } else {
        name.to_string()
    };
    for w in &report.windows {
        out.push(Warning {
            kind: WarningKind::Flash,
            count: 1,
            bars: [0, 0],
            line: None,
            cue: None,
            each: Vec::new(),
            expected: None,
            prop: name.to_string(),
            other_prop: None,
            at: when(w.start_s),
            duration_s: Some(w.end_s - w.start_s),
            value: Some(w.general.max(w.red) as f64),
            limit: Some(MAX_FLASHES as f64),
            unit: Some("flashes/s"),
            message: format!(
                "{source} flashes {} times (general) and {} times (red) in one second, more than {MAX_FLASHES} \
                 (W3C WCAG 2.x thresholds, written for screens, applied here as a conservative guide)",
                w.general, w.red
            ),
        });
    }
}
