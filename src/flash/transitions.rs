//! Transition detectors: hysteresis from the last extreme ("zig-zag").
//!
//! A detector follows one signal frame by frame. It knows the direction of
//! the last confirmed transition and the extreme reached since (the highest
//! value after a rise, the lowest after a fall). A new, opposing transition is
//! confirmed on the frame where the signal has moved back from that extreme by
//! the threshold. Moving further the same way only pushes the extreme on, so a
//! slow fade is one transition however long it takes, and wobble smaller than
//! the threshold never confirms anything. Before the first transition the
//! detector keeps the lowest and highest values seen and accepts either
//! direction. Each step is O(1) and allocates nothing.

use super::{DARK_LUMINANCE_LIMIT, GENERAL_LUMINANCE_CHANGE, RED_CHANGE};

/// Slack on the "10 % or more" comparison, so that a change of exactly 0.1
/// computed with rounding noise still counts (the conservative side).
const GENERAL_SLACK: f64 = 1e-12;

/// Direction of the last confirmed transition.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Trend {
    /// No transition yet: `lo` and `hi` hold the range seen so far.
    Unknown,
    /// Last transition was an increase; `extreme` is the maximum since.
    Rising,
    /// Last transition was a decrease; `extreme` is the minimum since.
    Falling,
}

/// General-flash transitions of relative luminance (0..1), WCAG 2.x thresholds.
#[derive(Clone, Debug)]
pub(super) struct LuminanceTransitions {
    trend: Trend,
    lo: f64,
    hi: f64,
    extreme: f64,
}

impl LuminanceTransitions {
    pub(super) fn new() -> Self {
        Self {
            trend: Trend::Unknown,
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
            extreme: 0.0,
        }
    }

    /// Feeds one frame's relative luminance; true if a transition is confirmed on it.
    ///
    /// A change counts when it is at least [`GENERAL_LUMINANCE_CHANGE`] and the
    /// darker of its two ends is below [`DARK_LUMINANCE_LIMIT`].
    pub(super) fn step(&mut self, y: f64) -> bool {
        let step = GENERAL_LUMINANCE_CHANGE - GENERAL_SLACK;
        let dark = |v: f64| v < DARK_LUMINANCE_LIMIT;
        match self.trend {
            Trend::Unknown => {
                self.lo = self.lo.min(y);
                self.hi = self.hi.max(y);
                if y - self.lo >= step && dark(self.lo) {
                    self.confirm(Trend::Rising, y)
                } else if self.hi - y >= step && dark(y) {
                    self.confirm(Trend::Falling, y)
                } else {
                    false
                }
            }
            Trend::Rising => {
                if y > self.extreme {
                    self.extreme = y;
                    false
                } else if self.extreme - y >= step && dark(y) {
                    self.confirm(Trend::Falling, y)
                } else {
                    false
                }
            }
            Trend::Falling => {
                if y < self.extreme {
                    self.extreme = y;
                    false
                } else if y - self.extreme >= step && dark(self.extreme) {
                    self.confirm(Trend::Rising, y)
                } else {
                    false
                }
            }
        }
    }

    fn confirm(&mut self, trend: Trend, y: f64) -> bool {
        self.trend = trend;
        self.extreme = y;
        true
    }
}

/// Red-flash transitions of `(R - G - B) x 320` (negatives as 0), with the saturated-red condition.
#[derive(Clone, Debug)]
pub(super) struct RedTransitions {
    trend: Trend,
    lo: f64,
    hi: f64,
    extreme: f64,
    /// A saturated red was shown since the last confirmed transition (inclusive).
    red_this_leg: bool,
    /// A saturated red was shown between the two transitions before.
    red_last_leg: bool,
}

impl RedTransitions {
    pub(super) fn new() -> Self {
        Self {
            trend: Trend::Unknown,
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
            extreme: 0.0,
            red_this_leg: false,
            red_last_leg: false,
        }
    }

    /// Feeds one frame's red quantity `q` and whether it is a saturated red;
    /// true if a red transition is confirmed on it and counts.
    ///
    /// A change of `q` by more than [`RED_CHANGE`] from the last extreme is a
    /// transition. It counts when a saturated red was shown during it or during
    /// the transition before (so that the pair of opposing transitions it
    /// forms with its neighbour involves a saturated red).
    pub(super) fn step(&mut self, q: f64, saturated: bool) -> bool {
        self.red_this_leg |= saturated;
        let confirmed = match self.trend {
            Trend::Unknown => {
                self.lo = self.lo.min(q);
                self.hi = self.hi.max(q);
                if q - self.lo > RED_CHANGE {
                    Some(Trend::Rising)
                } else if self.hi - q > RED_CHANGE {
                    Some(Trend::Falling)
                } else {
                    None
                }
            }
            Trend::Rising => {
                if q > self.extreme {
                    self.extreme = q;
                    None
                } else if self.extreme - q > RED_CHANGE {
                    Some(Trend::Falling)
                } else {
                    None
                }
            }
            Trend::Falling => {
                if q < self.extreme {
                    self.extreme = q;
                    None
                } else if q - self.extreme > RED_CHANGE {
                    Some(Trend::Rising)
                } else {
                    None
                }
            }
        };
        let Some(trend) = confirmed else {
            return false;
        };
        self.trend = trend;
        self.extreme = q;
        let counts = self.red_this_leg || self.red_last_leg;
        self.red_last_leg = self.red_this_leg;
        // The confirming frame ends this leg and starts the next one.
        self.red_this_leg = saturated;
        counts
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn count(d: &mut LuminanceTransitions, ys: impl IntoIterator<Item = f64>) -> usize {
        ys.into_iter().filter(|&y| d.step(y)).count()
    }

    #[test]
    fn a_square_wave_confirms_every_edge() {
        // WCAG 2.x general flash: each black/white change is a transition.
        let mut d = LuminanceTransitions::new();
        let n = count(&mut d, [0.0, 0.0, 1.0, 1.0, 0.0, 0.0, 1.0]);
        assert_eq!(n, 3);
    }

    #[test]
    fn ten_percent_counts_and_just_under_does_not() {
        // WCAG 2.x: "changes in relative luminance of 10% or more".
        let mut d = LuminanceTransitions::new();
        assert_eq!(count(&mut d, [0.2, 0.3, 0.2, 0.3]), 3);
        let mut d = LuminanceTransitions::new();
        assert_eq!(count(&mut d, [0.2, 0.2999, 0.2, 0.2999]), 0);
    }

    #[test]
    fn changes_among_bright_states_do_not_count() {
        // WCAG 2.x: only where "the relative luminance of the darker image is
        // below 0.80".
        let mut d = LuminanceTransitions::new();
        assert_eq!(count(&mut d, [0.85, 1.0, 0.85, 1.0, 0.85]), 0);
        // 0.79 is below 0.80, so 0.79 <-> 0.95 counts.
        let mut d = LuminanceTransitions::new();
        assert_eq!(count(&mut d, [0.79, 0.95, 0.79, 0.95]), 3);
    }

    #[test]
    fn a_stepped_fade_is_one_transition() {
        // Hysteresis: 1000 steps of 0.001 add up to one increase (our reading
        // of "a pair of opposing changes": a change is measured between
        // extremes, not frame to frame).
        let mut d = LuminanceTransitions::new();
        assert_eq!(count(&mut d, (0..=1000).map(|i| f64::from(i) / 1000.0)), 1);
        assert_eq!(
            count(&mut d, (0..=1000).rev().map(|i| f64::from(i) / 1000.0)),
            1
        );
    }

    #[test]
    fn red_needs_a_saturated_red_nearby() {
        // WCAG 2.2 red flash (from memory): transitions of (R - G - B) x 320
        // by more than 20, involving a saturated red.
        let mut d = RedTransitions::new();
        let steps = [(0.0, false), (96.0, true), (0.0, false), (96.0, true)];
        assert_eq!(steps.iter().filter(|&&(q, s)| d.step(q, s)).count(), 3);
        let mut d = RedTransitions::new();
        let steps = [(0.0, false), (44.8, false), (0.0, false), (44.8, false)];
        assert_eq!(steps.iter().filter(|&&(q, s)| d.step(q, s)).count(), 0);
        // Exactly 20 is not "more than 20".
        let mut d = RedTransitions::new();
        let steps = [(0.0, false), (20.0, true), (0.0, false), (20.0, true)];
        assert_eq!(steps.iter().filter(|&&(q, s)| d.step(q, s)).count(), 0);
    }

    #[test]
    fn red_transition_next_to_a_saturated_one_counts() {
        // "Any pair of opposing transitions involving a saturated red": a drop
        // from an orange (not saturated) counts when the rise before it came
        // from a saturated red.
        let mut d = RedTransitions::new();
        // saturated red (q 320) -> black -> orange (q 224, not saturated) -> black
        let steps = [
            (320.0, true),
            (0.0, false),
            (224.0, false),
            (0.0, false),
            (224.0, false),
            (0.0, false),
        ];
        let counted: Vec<bool> = steps.iter().map(|&(q, s)| d.step(q, s)).collect();
        // Frame 1: fall from the saturated red, counts. Frame 2: rise, its
        // previous leg held the red, counts. Frame 3: neither leg red.
        assert_eq!(counted, [false, true, true, false, false, false]);
    }
}
