//! Sliding one-second windows over the transitions, and the report.

use std::collections::VecDeque;

use palette::LinSrgb;
use serde::Serialize;

use super::transitions::{LuminanceTransitions, RedTransitions};
use super::{MAX_FLASHES, WINDOW_S, is_saturated_red, red_quantity};
use crate::colour::relative_luminance;

/// Why a flash analysis could not start.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum FlashError {
    /// The frame rate was zero, negative, NaN or infinite.
    #[error("frame rate {0} Hz is not a positive finite number")]
    BadFrameRate(f64),
}

/// Flashes in the one-second window that ends at a frame (start in seconds).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct WindowCount {
    /// Start of the window, seconds from frame 0 (0 for the first second).
    pub start_s: f64,
    /// General flashes in the window: general transitions / 2, rounded down.
    pub general: usize,
    /// Red flashes in the window: red transitions / 2, rounded down.
    pub red: usize,
}

/// The most flashes found in any one-second window, and where (seconds).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Peak {
    /// Flashes in the window.
    pub flashes: usize,
    /// Start of the first such window, seconds: the frame of its first counted
    /// transition (0 when there are no flashes).
    pub start_s: f64,
}

/// A stretch of the show, in seconds, where some one-second window has more than three flashes.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct FlashWindow {
    /// Start of the first counted transition, seconds.
    pub start_s: f64,
    /// End of the frame of the last counted transition, seconds.
    pub end_s: f64,
    /// Most general flashes in a one-second window inside this stretch.
    pub general: usize,
    /// Most red flashes in a one-second window inside this stretch.
    pub red: usize,
}

/// Result of a flash analysis of one light source (times in seconds).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FlashReport {
    /// Frames per second of the input, Hz.
    pub frame_rate_hz: f64,
    /// Number of frames analysed.
    pub frames: usize,
    /// Length of the input, seconds (frames / frame rate).
    pub duration_s: f64,
    /// Frames in one window: those whose start times lie within one second.
    pub window_frames: usize,
    /// General-flash transitions in the whole input.
    pub general_transitions: usize,
    /// Red-flash transitions in the whole input.
    pub red_transitions: usize,
    /// Most general flashes in any one-second window.
    pub max_general: Peak,
    /// Most red flashes in any one-second window.
    pub max_red: Peak,
    /// Stretches where either count exceeds three, merged where they overlap, in time order.
    pub windows: Vec<FlashWindow>,
}

impl FlashReport {
    /// True if no one-second window has more than three general or three red flashes.
    pub fn passes(&self) -> bool {
        self.windows.is_empty()
    }
}

/// Stretches (in frames) where a count went over the limit, merged as they come.
#[derive(Clone, Debug, Default)]
struct Stretches {
    done: Vec<(usize, usize, usize)>,
    open: Option<(usize, usize, usize)>,
}

impl Stretches {
    /// Adds frames `first..=last` with `flashes`; starts never decrease between calls.
    fn add(&mut self, first: usize, last: usize, flashes: usize) {
        match &mut self.open {
            Some((_, end, most)) if first <= *end + 1 => {
                *end = (*end).max(last);
                *most = (*most).max(flashes);
            }
            open => {
                if let Some(s) = open.take() {
                    self.done.push(s);
                }
                *open = Some((first, last, flashes));
            }
        }
    }

    fn finish(mut self) -> Vec<(usize, usize, usize)> {
        if let Some(s) = self.open.take() {
            self.done.push(s);
        }
        self.done
    }
}

/// One count (general or red): the transitions inside the current window.
#[derive(Clone, Debug)]
struct Counter {
    /// Frame numbers of the transitions in the window, oldest first.
    inside: VecDeque<usize>,
    total: usize,
    peak: (usize, usize),
    over: Stretches,
}

impl Counter {
    fn new(capacity: usize) -> Self {
        Self {
            inside: VecDeque::with_capacity(capacity),
            total: 0,
            peak: (0, 0),
            over: Stretches::default(),
        }
    }

    /// Records a transition at `frame` if `hit`, drops those before `first`, returns the flashes.
    fn step(&mut self, frame: usize, hit: bool, first: usize) -> usize {
        if hit {
            self.inside.push_back(frame);
            self.total += 1;
        }
        while self.inside.front().is_some_and(|&f| f < first) {
            self.inside.pop_front();
        }
        let flashes = self.inside.len() / 2;
        if let (Some(&front), Some(&back)) = (self.inside.front(), self.inside.back()) {
            if flashes > self.peak.0 {
                self.peak = (flashes, front);
            }
            if flashes > MAX_FLASHES {
                self.over.add(front, back, flashes);
            }
        }
        flashes
    }
}

/// Streaming flash analysis: feed one linear-light colour per frame, then [`FlashAnalyser::finish`].
///
/// O(1) amortised work per frame. Memory is the transitions of one window
/// (at most one per frame), reserved up front up to 1024 and grown by doubling
/// beyond that, so frames do not allocate; only a new over-limit stretch does.
#[derive(Clone, Debug)]
pub struct FlashAnalyser {
    rate: f64,
    window: usize,
    frame: usize,
    luminance: LuminanceTransitions,
    red: RedTransitions,
    general_count: Counter,
    red_count: Counter,
}

impl FlashAnalyser {
    /// A new analysis of frames sampled at `frame_rate_hz` (Hz, positive and finite).
    pub fn new(frame_rate_hz: f64) -> Result<Self, FlashError> {
        if !(frame_rate_hz.is_finite() && frame_rate_hz > 0.0) {
            return Err(FlashError::BadFrameRate(frame_rate_hz));
        }
        // Frames k..k+n-1 start within [k/rate, k/rate + 1 s): n = ceil(rate * 1 s).
        // The small slack keeps 1000.0000000001 from becoming 1001.
        let window = ((frame_rate_hz * WINDOW_S - 1e-9).ceil() as usize).max(1);
        let capacity = window.min(1024) + 1;
        Ok(Self {
            rate: frame_rate_hz,
            window,
            frame: 0,
            luminance: LuminanceTransitions::new(),
            red: RedTransitions::new(),
            general_count: Counter::new(capacity),
            red_count: Counter::new(capacity),
        })
    }

    /// Feeds the next frame (linear-light sRGB, channels 0..1; NaN as 0, others clamped).
    ///
    /// Returns the flashes in the one-second window that ends with this frame.
    pub fn push(&mut self, colour: impl Into<LinSrgb<f64>>) -> WindowCount {
        let c = colour.into();
        let clean = |v: f64| if v.is_nan() { 0.0 } else { v.clamp(0.0, 1.0) };
        let c = LinSrgb::new(clean(c.red), clean(c.green), clean(c.blue));
        let frame = self.frame;
        self.frame += 1;
        let first = (frame + 1).saturating_sub(self.window);
        let general_hit = self.luminance.step(relative_luminance(c));
        let red_hit = self.red.step(red_quantity(c), is_saturated_red(c));
        WindowCount {
            start_s: first as f64 / self.rate,
            general: self.general_count.step(frame, general_hit, first),
            red: self.red_count.step(frame, red_hit, first),
        }
    }

    /// Ends the analysis and returns the report.
    pub fn finish(self) -> FlashReport {
        let rate = self.rate;
        let seconds = |frame: usize| frame as f64 / rate;
        let peak = |c: &Counter| Peak {
            flashes: c.peak.0,
            start_s: seconds(c.peak.1),
        };
        let (max_general, max_red) = (peak(&self.general_count), peak(&self.red_count));
        let (general_transitions, red_transitions) =
            (self.general_count.total, self.red_count.total);

        // Both lists are in order of start; merge them into one.
        let mut all: Vec<(usize, usize, usize, usize)> = Vec::new();
        all.extend(
            self.general_count
                .over
                .finish()
                .into_iter()
                .map(|(a, b, n)| (a, b, n, 0)),
        );
        all.extend(
            self.red_count
                .over
                .finish()
                .into_iter()
                .map(|(a, b, n)| (a, b, 0, n)),
        );
        all.sort_unstable();
        let mut merged: Vec<(usize, usize, usize, usize)> = Vec::with_capacity(all.len());
        for s in all {
            match merged.last_mut() {
                Some(m) if s.0 <= m.1 + 1 => {
                    m.1 = m.1.max(s.1);
                    m.2 = m.2.max(s.2);
                    m.3 = m.3.max(s.3);
                }
                _ => merged.push(s),
            }
        }
        let windows = merged
            .into_iter()
            .map(|(a, b, general, red)| FlashWindow {
                start_s: seconds(a),
                end_s: seconds(b + 1),
                general,
                red,
            })
            .collect();

        FlashReport {
            frame_rate_hz: rate,
            frames: self.frame,
            duration_s: seconds(self.frame),
            window_frames: self.window,
            general_transitions,
            red_transitions,
            max_general,
            max_red,
            windows,
        }
    }
}

/// Analyses a whole sequence of linear-light frames (channels 0..1) sampled at `frame_rate_hz` (Hz).
pub fn analyse<C: Into<LinSrgb<f64>>>(
    frames: impl IntoIterator<Item = C>,
    frame_rate_hz: f64,
) -> Result<FlashReport, FlashError> {
    let mut a = FlashAnalyser::new(frame_rate_hz)?;
    for c in frames {
        a.push(c);
    }
    Ok(a.finish())
}
